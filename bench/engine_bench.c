/*
 * engine_bench.c - what each analysis costs against one probability pass.
 *
 *   engine-bench MODEL.xml [REPEATS]
 *
 * Loads and prepares the model's first hazard, then times (REPEATS
 * repeats, warm buffers): one probability pass; the same pass keeping
 * each node's P(hi) - P(lo), as prepare runs it; all Birnbaum values (the
 * top-down pass alone from those differences, and with its own bottom-up
 * pass); the Fussell-Vesely pass over the cut set family; everything
 * analyze does per event; building the cut-set family (from the network,
 * as analyze does, and from the BDD); and the ten most probable cut sets.
 * Ratios to the probability pass timed in the same repeat are printed
 * (median and quartiles), since absolute times depend on the machine and
 * a shared host's speed drifts.  The heap is set up as the command-line
 * tool sets it, so arrays sit in memory as they do when analyze runs.
 */
#define _POSIX_C_SOURCE 200809L
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#ifdef __GLIBC__
#include <malloc.h>
#endif

#include "layerwise/alloc.h"
#include "layerwise/analysis.h"
#include "layerwise/bdd.h"

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

static double median(double *v, int n)
{
    qsort(v, (size_t)n, sizeof *v, cmp_double);
    return v[n / 2];
}

int main(int argc, char **argv)
{
    if (argc < 2) {
        fprintf(stderr, "usage: engine-bench MODEL.xml [REPEATS]\n");
        return 2;
    }
    int reps = argc > 2 ? atoi(argv[2]) : 11;
    if (reps < 1 || reps > 1000)
        reps = 11;
#ifdef __GLIBC__
    /* the heap settings of the command-line tool (cli/main.c), so arrays
     * are placed as they are when analyze runs */
    mallopt(M_MMAP_THRESHOLD, 32 << 20);
    mallopt(M_TRIM_THRESHOLD, 1 << 30);
#endif
    lw_error err = LW_ERROR_INIT;
    lw_model *m = NULL;
    double t0 = now();
    if (lw_model_load_file(argv[1], NULL, &m, &err) != LW_OK) {
        fprintf(stderr, "cannot load %s\n", argv[1]);
        return 1;
    }
    double t_load = now() - t0;
    lw_options opt;
    lw_options_init(&opt);
    lw_prepared *p = NULL;
    t0 = now();
    if (lw_prepare(m, LW_NONE, 0, &opt, &p, &err) != LW_OK) {
        fprintf(stderr, "cannot prepare\n");
        return 1;
    }
    double t_prepare = now() - t0;
    const lw_diagram *d = p->diagram;
    double *w = malloc(d->n * sizeof *w), *r = malloc(d->n * sizeof *r);
    double *df = malloc(d->n * sizeof *df);
    double *b = malloc((d->nlevels + 1) * sizeof *b);
    double *fv = malloc((d->nlevels + 1) * sizeof *fv);
    double sink = 0;

    lw_cut_family *f = NULL;
    t0 = now();
    if (lw_cut_family_new(d, p->q, 0, &f, &err) != LW_OK) {
        fprintf(stderr, "cut sets failed\n");
        return 1;
    }
    double t_fam_bdd = now() - t0;
    lw_cut_family_free(f);
    f = NULL;
    t0 = now();     /* what analyze does: from the network */
    if (lw_prepared_cut_family(p, &opt, &f, &err) != LW_OK) {
        fprintf(stderr, "cut sets failed\n");
        return 1;
    }
    double t_fam = now() - t0;

    /* Each repeat times one probability pass and, right after it, each
     * other pass; a ratio is taken within the repeat, so a host that
     * speeds up or slows down between repeats moves both sides. */
    enum { PROB, DIFF, GIVEN, BOTH, FV, IMP, NT };
    double *t = malloc((size_t)reps * NT * sizeof *t);
    double *ratio = malloc((size_t)reps * NT * sizeof *ratio);
    if (!w || !r || !df || !b || !fv || !t || !ratio) {
        fprintf(stderr, "out of memory\n");
        return 1;
    }
    for (int i = 0; i < reps; i++) {
        double tt[NT];
        t0 = now();
        sink += lw_diagram_prob(d, p->q, w);
        tt[PROB] = now() - t0;
        t0 = now();
        sink += lw_diagram_prob_diff(d, p->q, w, df);
        tt[DIFF] = now() - t0;
        t0 = now();
        lw_diagram_birnbaum_given(d, p->q, df, b, r);
        tt[GIVEN] = now() - t0;
        tt[BOTH] = tt[DIFF] + tt[GIVEN];
        t0 = now();
        lw_cut_family_fussell_vesely(f, fv, &err);
        tt[FV] = now() - t0;
        t0 = now();
        /* as analyze.c does, from the differences prepare kept */
        lw_diagram_birnbaum_given(d, p->q, p->node_diff, b, r);
        lw_cut_family_fussell_vesely(f, fv, &err);
        double P = p->probability, invP = 1.0 / P;
        for (uint32_t l = 0; l < p->hazard_levels; l++) {
            double q = p->q[l], pt = P + (1 - q) * b[l], pf = P - q * b[l];
            sink += b[l] * q * invP + pt * invP + (pf > 0 ? P / pf : 0) +
                    fv[l];
        }
        /* and what keeping the differences added to the probability pass */
        tt[IMP] = now() - t0 + (tt[DIFF] - tt[PROB]);
        for (int k = 0; k < NT; k++) {
            t[k * reps + i] = tt[k];
            /* a pass below the clock's resolution counts as 1 ns */
            double base = tt[PROB] > 1e-9 ? tt[PROB] : 1e-9;
            ratio[k * reps + i] = tt[k] / base;
        }
    }
    double med[NT], q1[NT], q3[NT], tm[NT];
    for (int k = 0; k < NT; k++) {
        double *x = ratio + k * reps;
        qsort(x, (size_t)reps, sizeof *x, cmp_double);
        q1[k] = x[reps / 4];
        q3[k] = x[(3 * reps) / 4];
        med[k] = median(x, reps);
        tm[k] = median(t + k * reps, reps);
    }
    lw_level_set *sets = NULL;
    size_t ns = 0;
    bool more = false;
    t0 = now();
    lw_cut_family_top(f, 10, 0, 0, &sets, &ns, &more, &err);
    double t_top = now() - t0;

    printf("model            %s\n", argv[1]);
    printf("events/levels    %u   BDD nodes %u   cut-set ZBDD nodes %zu   "
           "cut sets %.6g\n", p->nlevels, d->n, lw_cut_family_nodes(f),
           lw_cut_family_count(f));
    printf("load             %9.4f s\n", t_load);
    printf("prepare          %9.4f s  (compile, order, build, freeze)\n",
           t_prepare);
    printf("(times: medians of %d repeats; ratios: median [quartiles] of "
           "the ratio to the probability pass timed in the same repeat)\n",
           reps);
    printf("probability pass %9.6f s  1.00x\n", tm[PROB]);
    printf("  keeping P(hi)-P(lo) %9.6f s  %.2fx [%.2f-%.2f]  (as prepare "
           "does)\n", tm[DIFF], med[DIFF], q1[DIFF], q3[DIFF]);
    printf("all Birnbaum     %9.6f s  %.2fx [%.2f-%.2f]  (the top-down pass "
           "from the differences)\n", tm[GIVEN], med[GIVEN], q1[GIVEN],
           q3[GIVEN]);
    printf("  with its own bottom-up pass %9.6f s  %.2fx [%.2f-%.2f]  (the "
           "two rows above)\n",
           tm[BOTH], med[BOTH], q1[BOTH], q3[BOTH]);
    printf("Fussell-Vesely   %9.6f s  %.2fx [%.2f-%.2f]\n", tm[FV], med[FV],
           q1[FV], q3[FV]);
    printf("all importances  %9.6f s  %.2fx [%.2f-%.2f]  (Birnbaum, "
           "criticality, RAW, RRW, FV as analyze does, plus what keeping the "
           "differences added to the probability pass)\n", tm[IMP], med[IMP],
           q1[IMP], q3[IMP]);
    printf("cut-set family   %9.4f s  %.1fx  (from the network; from the "
           "BDD %.4f s)\n", t_fam, t_fam / tm[PROB], t_fam_bdd);
    printf("top 10 cut sets  %9.6f s\n", t_top);
    if (sink == 12345.678)
        printf("\n");
    lw_level_sets_free(sets, ns);
    lw_cut_family_free(f);
    lw_prepared_free(p);
    lw_model_free(m);
    free(w);
    free(r);
    free(df);
    free(ratio);
    free(b);
    free(fv);
    free(t);
    return 0;
}
