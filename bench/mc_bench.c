/*
 * mc-bench: Monte Carlo throughput of layerwise uncertainty.
 *
 *   mc-bench [--samples N] [--ef EF] MODEL.xml ...
 *
 * For each model (first hazard): the time of one probability pass over the
 * frozen diagram, of one pass plus the derivation of the variable
 * probabilities, and the samples per second of the Monte Carlo with 1 and
 * 2 threads, so that the per-sample cost can be read against one pass.
 * --ef EF gives every point-valued error and safeguard a lognormal with
 * that error factor first (a generated network has points only).
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <time.h>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "analysis/mc_engine.h"
#include "layerwise/alloc.h"
#include "layerwise/uncertainty.h"

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

/* CPU time of the whole process (all threads), seconds. */
static double cpu_now(void)
{
    struct rusage ru;
    getrusage(RUSAGE_SELF, &ru);
    return (double)ru.ru_utime.tv_sec + 1e-6 * (double)ru.ru_utime.tv_usec +
           (double)ru.ru_stime.tv_sec + 1e-6 * (double)ru.ru_stime.tv_usec;
}

static volatile double sink;

static int bench(const char *path, size_t samples, double ef)
{
    lw_error err = LW_ERROR_INIT;
    lw_model *m = NULL;
    double t0 = now();
    if (lw_model_load_file(path, NULL, &m, &err) != LW_OK) {
        fprintf(stderr, "mc-bench: %s: cannot load\n", path);
        lw_error_clear(&err);
        return 1;
    }
    double t_load = now() - t0;
    size_t made = 0;
    if (ef > 1) {
        for (size_t i = 0; i < m->nnodes; i++) {
            lw_node *n = &m->nodes[i];
            if ((n->kind == LW_NODE_ERROR || n->kind == LW_NODE_SAFEGUARD) &&
                n->dist.kind == LW_DIST_POINT && n->dist.p > 0 &&
                n->dist.p < 1) {
                n->dist.kind = LW_DIST_LOGNORMAL;
                n->dist.ef = ef;
                made++;
            }
        }
    }
    lw_prepared *p = NULL;
    t0 = now();
    if (lw_prepare(m, LW_NONE, 0, NULL, &p, &err) != LW_OK) {
        fprintf(stderr, "mc-bench: %s: cannot prepare\n", path);
        lw_error_clear(&err);
        lw_model_free(m);
        return 1;
    }
    double t_prep = now() - t0;
    /* one probability pass */
    double *work = lw_malloc(((size_t)p->diagram->n + 2) * sizeof *work);
    double *ep = lw_malloc((m->nnodes + 1) * sizeof *ep);
    double *vp = lw_malloc((p->net->nvars + 1) * sizeof *vp);
    double *q = lw_malloc((p->nlevels + 1) * sizeof *q);
    memcpy(q, p->q, p->nlevels * sizeof *q);
    /* single-threaded timings in CPU time: comparable with the Monte
     * Carlo's CPU time per sample even on a busy machine */
    size_t reps = 0;
    t0 = cpu_now();
    double t_pass;
    do {
        for (int k = 0; k < 50; k++)
            sink = lw_diagram_prob(p->diagram, p->q, work);
        reps += 50;
        t_pass = cpu_now() - t0;
    } while (t_pass < 0.5);
    t_pass /= (double)reps;
    /* one pass plus the variable probabilities from event probabilities */
    lw_network_event_probs(p->net, ep);
    reps = 0;
    t0 = cpu_now();
    double t_derive;
    do {
        for (int k = 0; k < 20; k++) {
            lw_network_var_probs(p->net, ep, vp);
            const uint32_t *lv = p->diagram->level_var;
            for (uint32_t l = 0; l < p->hazard_levels; l++)
                q[l] = vp[lv[l]];
            sink = lw_diagram_prob(p->diagram, q, work);
        }
        reps += 20;
        t_derive = cpu_now() - t0;
    } while (t_derive < 0.5);
    t_derive /= (double)reps;

    printf("%s\n", path);
    printf("  events %zu (%zu made lognormal EF %g), variables %zu, "
           "diagram nodes %u\n", m->nnodes, made, ef, p->net->nvars,
           p->diagram->n);
    printf("  load %.3f s, compile + BDD %.3f s, P = %.6e\n", t_load, t_prep,
           p->probability);
    printf("  one probability pass              %10.2f us cpu\n",
           1e6 * t_pass);
    printf("  derive variable p's + one pass    %10.2f us cpu\n",
           1e6 * t_derive);
    double per1 = 0;
    for (int threads = 1; threads <= 2; threads++) {
        lw_mc_options mc;
        lw_mc_options_init(&mc);
        mc.samples = samples;
        mc.seed = 1;
        mc.threads = threads;
        double *out = NULL;
        size_t nunc = 0;
        t0 = now();
        double c0 = cpu_now();
        if (lw_mc_sample(m, &p, 1, &mc, &out, &nunc, &err) != LW_OK) {
            fprintf(stderr, "mc-bench: sampling failed\n");
            lw_error_clear(&err);
            break;
        }
        double t = now() - t0;
        double cpu = cpu_now() - c0;
        double per = t / (double)samples;
        if (threads == 1)
            per1 = per;
        printf("  Monte Carlo, %d thread%s: %zu samples (%zu uncertain "
               "events) in %.3f s = %.0f samples/s", threads,
               threads == 1 ? " " : "s", samples, nunc, t,
               (double)samples / t);
        if (threads == 2)
            printf(", speed-up %.2fx", per1 / per);
        printf("\n      cpu %.3f s (%.2f cores busy on average); cpu per "
               "sample %.2f us = %.2f passes\n", cpu, cpu / t,
               1e6 * cpu / (double)samples,
               cpu / (double)samples / t_pass);
        lw_free(out);
    }
    lw_free(work);
    lw_free(ep);
    lw_free(vp);
    lw_free(q);
    lw_prepared_free(p);
    lw_model_free(m);
    return 0;
}

/* The speed-up the machine itself gives two threads right now: the same
 * OpenMP loop of pure arithmetic (no memory traffic) with 1 and 2
 * threads.  On a busy or shared machine this is well below 2, and the
 * Monte Carlo speed-up should be read against it. */
static double spin(long n)
{
    double x = 1.0;
    for (long i = 0; i < n; i++)
        x = x * 1.0000001 + 1e-9;
    return x;
}

static void calibrate(void)
{
#ifdef _OPENMP
    double t[2];
    for (int threads = 1; threads <= 2; threads++) {
        double t0 = now();
#pragma omp parallel for schedule(dynamic) num_threads(threads)
        for (int b = 0; b < 64; b++)
            sink = spin(4000000);
        t[threads - 1] = now() - t0;
    }
    printf("machine: the same pure-arithmetic loop runs %.2fx faster on 2 "
           "threads than on 1 (the ceiling for the figures below)\n",
           t[0] / t[1]);
#else
    printf("machine: built without OpenMP: one thread only\n");
#endif
}

int main(int argc, char **argv)
{
    size_t samples = 20000;
    double ef = 0;
    int rc = 0, any = 0;
    for (int i = 1; i < argc; i++) {
        if (!strcmp(argv[i], "--samples") && i + 1 < argc) {
            samples = (size_t)strtoull(argv[++i], NULL, 10);
        } else if (!strcmp(argv[i], "--ef") && i + 1 < argc) {
            ef = strtod(argv[++i], NULL);
        } else if (!strcmp(argv[i], "--help") || argv[i][0] == '-') {
            fprintf(stderr, "usage: mc-bench [--samples N] [--ef EF] "
                    "MODEL.xml ...\n");
            return 2;
        } else {
            if (!any)
                calibrate();
            rc |= bench(argv[i], samples, ef);
            any = 1;
        }
    }
    if (!any) {
        fprintf(stderr, "usage: mc-bench [--samples N] [--ef EF] "
                "MODEL.xml ...\n");
        return 2;
    }
    return rc;
}
