/*
 * mc_engine.c - Monte Carlo sampling of P(hazard) over prepared BDDs.
 *
 * Each sample: draw one deviate per uncertain event of the model (in model
 * order), turn the deviates into event probabilities with each network's
 * own distribution, derive the variable probabilities with
 * lw_network_var_probs, and make one bottom-up pass over the frozen
 * diagram.  Samples are grouped in blocks of LW_MC_BLOCK; block b has its
 * own GSL mt19937 generator seeded from (seed, b), every result is stored
 * by sample index, and all memory is taken before the parallel loop, so
 * the output does not depend on the number of threads.
 */
#include "analysis/mc_engine.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "layerwise/alloc.h"

void lw_mc_options_init(lw_mc_options *o)
{
    memset(o, 0, sizeof *o);
    o->samples = LW_MC_DEFAULT_SAMPLES;
    o->seed = 1;
    o->threads = 1;
    o->max_samples = LW_MC_DEFAULT_MAX_SAMPLES;
}

void lw_lognormal_params(double mean, double ef, double *mu, double *sigma)
{
    /* EF = exp(z95 * sigma); mean = exp(mu + sigma^2 / 2) */
    double s = ef > 1.0 ? log(ef) / LW_Z95 : 0.0;
    *sigma = s;
    *mu = mean > 0 ? log(mean) - 0.5 * s * s : -INFINITY;
}

lw_status lw_mc_resolve(const lw_mc_options *mc, lw_mc_options *o,
                        lw_error *err)
{
    lw_mc_options_init(o);
    if (mc) {
        *o = *mc;
        if (o->samples == 0)
            o->samples = LW_MC_DEFAULT_SAMPLES;
        if (o->max_samples == 0)
            o->max_samples = LW_MC_DEFAULT_MAX_SAMPLES;
        if (o->threads <= 0)
            o->threads = 1;
    }
    if (o->samples > o->max_samples)
        return lw_error_set(err, LW_ELIMIT, NULL, 0,
                            "%zu samples is above the limit of %zu; ask for "
                            "fewer samples (10,000 to 200,000 are usually "
                            "plenty)", o->samples, o->max_samples);
    if (o->samples < 2)
        return lw_error_set(err, LW_EUSAGE, NULL, 0,
                            "Monte Carlo needs at least 2 samples");
    if (o->threads > 256)
        o->threads = 256;
    return LW_OK;
}

uint64_t lw_mc_block_seed(uint64_t seed, uint64_t b)
{
    uint64_t z = seed + (b + 1) * UINT64_C(0x9E3779B97F4A7C15);
    z = (z ^ (z >> 30)) * UINT64_C(0xBF58476D1CE4E5B9);
    z = (z ^ (z >> 27)) * UINT64_C(0x94D049BB133111EB);
    return z ^ (z >> 31);
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

double *lw_mc_sorted(const double *x, size_t n)
{
    double *s = lw_malloc((n + 1) * sizeof *s);
    if (!s)
        return NULL;
    memcpy(s, x, n * sizeof *s);
    qsort(s, n, sizeof *s, cmp_double);
    return s;
}

/* The quantile of GSL's gsl_stats_quantile_from_sorted_data (index
 * f (n - 1), linear between neighbours), written as x[i] + d (x[i+1] -
 * x[i]) and kept between the neighbours: GSL's (1 - d) x[i] + d x[i+1]
 * can land one unit in the last place outside them when they are equal,
 * which put a 5th percentile above the median. */
double lw_mc_quantile(const double *sorted, size_t n, double f)
{
    if (n == 0)
        return 0.0;
    double index = f * (double)(n - 1);
    size_t i = (size_t)index;
    if (i >= n - 1)
        return sorted[n - 1];
    double lo = sorted[i], hi = sorted[i + 1];
    double r = lo + (index - (double)i) * (hi - lo);
    return r < lo ? lo : (r > hi ? hi : r);
}

double lw_beta_quantile(double f, double a, double b)
{
    /* bisection on GSL's regularized incomplete beta: gsl_cdf_beta_Pinv
     * fails to converge for some shapes (e.g. 0.975 of Beta(12.5, 388.5))
     * and GSL's default error handler would then abort the process */
    if (f <= 0)
        return 0.0;
    if (f >= 1)
        return 1.0;
    double lo = 0.0, hi = 1.0;
    for (int it = 0; it < 2000; it++) {
        double mid = 0.5 * (lo + hi);
        if (mid <= lo || mid >= hi)
            break;
        if (gsl_cdf_beta_P(mid, a, b) < f)
            lo = mid;
        else
            hi = mid;
    }
    return 0.5 * (lo + hi);
}

void lw_observed_fill(const lw_model *m, size_t node, lw_observed_info *o)
{
    const lw_dist *d = &m->nodes[node].dist;
    memset(o, 0, sizeof *o);
    o->node = node;
    /* the definitions of layerwise/estimate.h, with robust quantiles */
    double x = d->count, n = d->of;
    lw_estimate *e = &o->est;
    e->count = x;
    e->of = n;
    e->mle = n > 0 ? x / n : 0.0;
    e->mean = (x + 0.5) / (n + 1.0);
    e->ci_lo = x <= 0 ? 0.0 : lw_beta_quantile(0.025, x, n - x + 1.0);
    e->ci_hi = x >= n ? 1.0 : lw_beta_quantile(0.975, x + 1.0, n - x);
    e->zero = x <= 0;
    e->rule_of_three = n > 0 ? 3.0 / n : 1.0;
    double a = x + 0.5, b = n - x + 0.5;
    o->jeffreys_lo = lw_beta_quantile(0.025, a, b);
    o->jeffreys_hi = lw_beta_quantile(0.975, a, b);
}

lw_status lw_observed_list(const lw_prepared *p, lw_observed_info **out,
                           size_t *n, lw_error *err)
{
    const lw_model *m = p->model;
    const lw_network *net = p->net;
    const uint32_t *vl = lw_builder_var_level(p->builder);
    *out = NULL;
    *n = 0;
    size_t cnt = 0;
    for (size_t e = 0; e < m->nnodes; e++) {
        uint32_t v = net->event_var[e];
        if (v == LW_NO_GATE || net->dist[e].kind != LW_DIST_OBSERVED)
            continue;
        if (vl[v] == UINT32_MAX || vl[v] >= p->hazard_levels)
            continue;
        cnt++;
    }
    if (!cnt)
        return LW_OK;
    lw_observed_info *o = lw_calloc(cnt, sizeof *o);
    if (!o)
        return lw_error_oom(err);
    size_t k = 0;
    for (size_t e = 0; e < m->nnodes; e++) {
        uint32_t v = net->event_var[e];
        if (v == LW_NO_GATE || net->dist[e].kind != LW_DIST_OBSERVED)
            continue;
        if (vl[v] == UINT32_MAX || vl[v] >= p->hazard_levels)
            continue;
        lw_observed_fill(m, e, &o[k++]);
    }
    *out = o;
    *n = cnt;
    return LW_OK;
}

/* ---- the sampler ------------------------------------------------------ */

enum { HOW_FIXED, HOW_LOGN, HOW_VALUE };

typedef struct net_plan {
    const lw_prepared *p;
    unsigned char *how;     /* per uncertain event */
    double *mu, *sigma;     /* lognormal parameters (HOW_LOGN) */
    double *ep0;            /* point event probabilities */
} net_plan;

typedef struct thread_buf {
    gsl_rng *rng;
    void *arena;            /* every buffer below, one allocation with a
                               cache line of padding at each end, so
                               threads never share a line */
    double *dev;            /* deviates of one sample */
    double **ep, **vp, **q, **work;     /* per network */
} thread_buf;

/* What is drawn for one uncertain event, packed for the inner loop. */
typedef struct udraw {
    int kind;               /* the model's lw_dist_kind */
    double a, b;            /* beta shapes, or uniform bounds */
} udraw;

typedef struct plan {
    const lw_model *m;
    size_t nunc;
    size_t *unc;            /* uncertain event nodes, model order */
    udraw *ud;              /* per uncertain event */
    size_t nnets;
    net_plan *nets;
    size_t samples;
    uint64_t seed;
    double **out;
} plan;

static bool dist_uncertain(const lw_dist *d)
{
    return d->kind == LW_DIST_LOGNORMAL || d->kind == LW_DIST_BETA ||
           d->kind == LW_DIST_UNIFORM || d->kind == LW_DIST_OBSERVED;
}

/* The underlying deviate of an event, by the model's distribution: a
 * standard normal z for a lognormal (the value is exp(mu + sigma z), the
 * same law as gsl_ran_lognormal, with z kept so that paired networks can
 * share it), else the value itself. */
static double draw(gsl_rng *r, const udraw *d)
{
    switch (d->kind) {
    case LW_DIST_LOGNORMAL:
        return gsl_ran_gaussian_ziggurat(r, 1.0);
    case LW_DIST_BETA:
    case LW_DIST_OBSERVED:
        return gsl_ran_beta(r, d->a, d->b);
    case LW_DIST_UNIFORM:
        return gsl_ran_flat(r, d->a, d->b);
    default:
        return 0.0;
    }
}

static void run_block(const plan *P, thread_buf *tb, size_t b)
{
    size_t first = b * LW_MC_BLOCK;
    size_t last = first + LW_MC_BLOCK;
    if (last > P->samples)
        last = P->samples;
    uint64_t s = lw_mc_block_seed(P->seed, b);
    gsl_rng_set(tb->rng, (unsigned long)((s ^ (s >> 32)) & 0xffffffffu));
    for (size_t i = first; i < last; i++) {
        for (size_t k = 0; k < P->nunc; k++)
            tb->dev[k] = draw(tb->rng, &P->ud[k]);
        for (size_t n = 0; n < P->nnets; n++) {
            const net_plan *np = &P->nets[n];
            const lw_prepared *p = np->p;
            double *ep = tb->ep[n], *vp = tb->vp[n], *q = tb->q[n];
            for (size_t k = 0; k < P->nunc; k++) {
                switch (np->how[k]) {
                case HOW_LOGN: {
                    double x = exp(np->mu[k] + np->sigma[k] * tb->dev[k]);
                    ep[P->unc[k]] = x < 1.0 ? x : 1.0;
                    break;
                }
                case HOW_VALUE:
                    ep[P->unc[k]] = tb->dev[k];
                    break;
                default:
                    break;
                }
            }
            lw_network_var_probs(p->net, ep, vp);
            const uint32_t *lv = p->diagram->level_var;
            for (uint32_t l = 0; l < p->hazard_levels; l++)
                q[l] = vp[lv[l]];
            P->out[n][i] = lw_diagram_prob(p->diagram, q, tb->work[n]);
        }
    }
}

static void thread_buf_free(thread_buf *tb, size_t nnets)
{
    (void)nnets;
    if (tb->rng)
        gsl_rng_free(tb->rng);
    lw_free(tb->arena);
}

/* Doubles rounded up to whole 64-byte lines. */
static size_t line_doubles(size_t n)
{
    return (n + 7) / 8 * 8;
}

static int thread_buf_init(thread_buf *tb, const plan *P)
{
    memset(tb, 0, sizeof *tb);
    tb->rng = gsl_rng_alloc(gsl_rng_mt19937);
    if (!tb->rng)
        return 0;
    size_t nn = P->m->nnodes + 1;
    size_t total = line_doubles(P->nunc + 1);
    for (size_t n = 0; n < P->nnets; n++) {
        const lw_prepared *p = P->nets[n].p;
        total += line_doubles(nn) + line_doubles(p->net->nvars + 1) +
                 line_doubles(p->nlevels + 1) +
                 line_doubles((size_t)p->diagram->n + 2);
    }
    size_t ptrs = line_doubles(4 * P->nnets);     /* the pointer arrays */
    total += ptrs + 3 * 8;                        /* padding + alignment */
    tb->arena = lw_malloc(total * sizeof(double));
    if (!tb->arena)
        return 0;
    uintptr_t at = (uintptr_t)tb->arena + 8 * sizeof(double);
    at = (at + 63) & ~(uintptr_t)63;
    double *cur = (double *)at;
    double **pa = (double **)cur;
    cur += ptrs;
    tb->ep = pa;
    tb->vp = pa + P->nnets;
    tb->q = pa + 2 * P->nnets;
    tb->work = pa + 3 * P->nnets;
    tb->dev = cur;
    cur += line_doubles(P->nunc + 1);
    for (size_t n = 0; n < P->nnets; n++) {
        const lw_prepared *p = P->nets[n].p;
        tb->ep[n] = cur;
        cur += line_doubles(nn);
        tb->vp[n] = cur;
        cur += line_doubles(p->net->nvars + 1);
        tb->q[n] = cur;
        cur += line_doubles(p->nlevels + 1);
        tb->work[n] = cur;
        cur += line_doubles((size_t)p->diagram->n + 2);
        memcpy(tb->ep[n], P->nets[n].ep0, P->m->nnodes * sizeof(double));
        memcpy(tb->q[n], p->q, p->nlevels * sizeof(double));
    }
    return 1;
}

static void plan_free(plan *P)
{
    for (size_t n = 0; P->nets && n < P->nnets; n++) {
        lw_free(P->nets[n].how);
        lw_free(P->nets[n].mu);
        lw_free(P->nets[n].sigma);
        lw_free(P->nets[n].ep0);
    }
    lw_free(P->nets);
    lw_free(P->unc);
    lw_free(P->ud);
}

static int net_plan_init(net_plan *np, const plan *P, const lw_prepared *p)
{
    const lw_model *m = P->m;
    const lw_network *net = p->net;
    np->p = p;
    np->how = lw_calloc(P->nunc + 1, 1);
    np->mu = lw_calloc(P->nunc + 1, sizeof *np->mu);
    np->sigma = lw_calloc(P->nunc + 1, sizeof *np->sigma);
    np->ep0 = lw_malloc((m->nnodes + 1) * sizeof *np->ep0);
    if (!np->how || !np->mu || !np->sigma || !np->ep0)
        return 0;
    lw_network_event_probs(net, np->ep0);
    for (size_t k = 0; k < P->nunc; k++) {
        size_t e = P->unc[k];
        const lw_dist *md = &m->nodes[e].dist, *d = &net->dist[e];
        np->how[k] = HOW_FIXED;
        if (m->nodes[e].kind == LW_NODE_SAFEGUARD && !net->present[e])
            continue;       /* absent: misses with certainty */
        if (d->kind != md->kind)
            continue;       /* a variant's `set p` made it a point */
        if (d->kind == LW_DIST_LOGNORMAL) {
            if (d->p <= 0 || d->ef <= 1.0)
                continue;   /* degenerate: the point itself */
            lw_lognormal_params(d->p, d->ef, &np->mu[k], &np->sigma[k]);
            np->how[k] = HOW_LOGN;
        } else {
            np->how[k] = HOW_VALUE;
        }
    }
    return 1;
}

lw_status lw_mc_sample(const lw_model *m, lw_prepared *const *nets,
                       size_t nnets, const lw_mc_options *mc_in,
                       double **out, size_t *nuncertain, lw_error *err)
{
    lw_mc_options mc;
    lw_status st = lw_mc_resolve(mc_in, &mc, err);
    if (st != LW_OK)
        return st;
    for (size_t n = 0; n < nnets; n++)
        out[n] = NULL;
    plan P;
    memset(&P, 0, sizeof P);
    P.m = m;
    P.samples = mc.samples;
    P.seed = mc.seed;
    P.out = out;
    P.nnets = nnets;
    int threads = mc.threads;
#ifndef _OPENMP
    threads = 1;
#endif
    size_t nblocks = (mc.samples + LW_MC_BLOCK - 1) / LW_MC_BLOCK;
    if ((size_t)threads > nblocks)
        threads = (int)nblocks;
    thread_buf *tb = NULL;
    int ok = 1;
    P.unc = lw_malloc((m->nnodes + 1) * sizeof *P.unc);
    P.ud = lw_malloc((m->nnodes + 1) * sizeof *P.ud);
    P.nets = lw_calloc(nnets + 1, sizeof *P.nets);
    tb = lw_calloc((size_t)threads, sizeof *tb);
    if (!P.unc || !P.ud || !P.nets || !tb) {
        ok = 0;
        goto done;
    }
    for (size_t e = 0; e < m->nnodes; e++) {
        const lw_node *nd = &m->nodes[e];
        if ((nd->kind == LW_NODE_ERROR || nd->kind == LW_NODE_SAFEGUARD) &&
            dist_uncertain(&nd->dist)) {
            const lw_dist *d = &nd->dist;
            udraw *u = &P.ud[P.nunc];
            u->kind = (int)d->kind;
            u->a = u->b = 0;
            if (d->kind == LW_DIST_BETA) {
                u->a = d->a;
                u->b = d->b;
            } else if (d->kind == LW_DIST_OBSERVED) {
                u->a = d->count + 0.5;
                u->b = d->of - d->count + 0.5;
            } else if (d->kind == LW_DIST_UNIFORM) {
                u->a = d->low;
                u->b = d->high;
            }
            P.unc[P.nunc++] = e;
        }
    }
    *nuncertain = P.nunc;
    for (size_t n = 0; n < nnets && ok; n++)
        ok = net_plan_init(&P.nets[n], &P, nets[n]);
    for (size_t n = 0; n < nnets && ok; n++) {
        out[n] = lw_malloc(mc.samples * sizeof **out);
        ok = out[n] != NULL;
    }
    for (int t = 0; t < threads && ok; t++)
        ok = thread_buf_init(&tb[t], &P);
    if (!ok)
        goto done;
#ifdef _OPENMP
    if (threads > 1) {
        long nb = (long)nblocks;
#pragma omp parallel for schedule(dynamic) num_threads(threads)
        for (long b = 0; b < nb; b++)
            run_block(&P, &tb[omp_get_thread_num()], (size_t)b);
    } else
#endif
    {
        for (size_t b = 0; b < nblocks; b++)
            run_block(&P, &tb[0], b);
    }
done:
    for (int t = 0; tb && t < threads; t++)
        thread_buf_free(&tb[t], nnets);
    lw_free(tb);
    plan_free(&P);
    if (!ok) {
        for (size_t n = 0; n < nnets; n++) {
            lw_free(out[n]);
            out[n] = NULL;
        }
        return lw_error_oom(err);
    }
    return LW_OK;
}
