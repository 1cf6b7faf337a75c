/*
 * uncertainty.c - Monte Carlo propagation of the event distributions to
 * one hazard: summary statistics, per-year figures, a log10 histogram,
 * and the estimates of every `observed` event the hazard depends on.
 */
#include "layerwise/uncertainty.h"

#include <math.h>
#include <string.h>

#include <gsl/gsl_statistics_double.h>

#include "analysis/mc_engine.h"
#include "layerwise/alloc.h"

void lw_uncertainty_free(lw_uncertainty *u)
{
    if (!u)
        return;
    lw_free(u->bin_lo);
    lw_free(u->bin_hi);
    lw_free(u->bin_count);
    lw_free(u->observed);
    lw_free(u);
}

/* Bins of equal width in log10 P over [min, max] of the positive samples,
 * at a readable step (0.05 .. 2 decades), at most 24 of them. */
static lw_status histogram(lw_uncertainty *u, const double *sorted, size_t n,
                           lw_error *err)
{
    size_t z = 0;
    while (z < n && sorted[z] <= 0)
        z++;
    u->zeros = z;
    if (z == n)
        return LW_OK;
    double lo = log10(sorted[z]), hi = log10(sorted[n - 1]);
    static const double steps[] = {0.05, 0.1, 0.2, 0.25, 0.5, 1.0, 2.0,
                                   5.0, 10.0, 50.0};
    double step = steps[0], start = 0;
    size_t nb = 1;
    bool single = hi - lo < 1e-12;
    for (size_t i = 0; !single && i < sizeof steps / sizeof *steps; i++) {
        step = steps[i];
        start = floor(lo / step) * step;
        double end = ceil(hi / step) * step;
        if (end <= hi)
            end += step;
        nb = (size_t)llround((end - start) / step);
        if (nb <= 24)
            break;
    }
    u->bin_lo = lw_malloc(nb * sizeof *u->bin_lo);
    u->bin_hi = lw_malloc(nb * sizeof *u->bin_hi);
    u->bin_count = lw_calloc(nb, sizeof *u->bin_count);
    if (!u->bin_lo || !u->bin_hi || !u->bin_count)
        return lw_error_oom(err);
    u->nbins = nb;
    if (single) {
        u->bin_lo[0] = sorted[z];
        u->bin_hi[0] = sorted[n - 1];
        u->bin_count[0] = n - z;
        return LW_OK;
    }
    for (size_t b = 0; b < nb; b++) {
        u->bin_lo[b] = pow(10.0, start + (double)b * step);
        u->bin_hi[b] = pow(10.0, start + (double)(b + 1) * step);
    }
    for (size_t i = z; i < n; i++) {
        double t = floor((log10(sorted[i]) - start) / step);
        size_t b = t < 0 ? 0 : (size_t)t;
        if (b >= nb)
            b = nb - 1;
        u->bin_count[b]++;
    }
    return LW_OK;
}

lw_status lw_uncertainty_run(const lw_model *m, size_t variant,
                             size_t hazard, const lw_options *opt,
                             const lw_mc_options *mc_in, lw_uncertainty **out,
                             lw_error *err)
{
    *out = NULL;
    lw_mc_options mc;
    lw_status st = lw_mc_resolve(mc_in, &mc, err);
    if (st != LW_OK)
        return st;
    lw_prepared *p = NULL;
    st = lw_prepare(m, variant, hazard, opt, &p, err);
    if (st != LW_OK)
        return st;
    lw_uncertainty *u = lw_calloc(1, sizeof *u);
    double *P = NULL, *sorted = NULL;
    if (!u) {
        st = lw_error_oom(err);
        goto done;
    }
    u->hazard = hazard;
    u->variant = variant;
    u->samples = mc.samples;
    u->seed = mc.seed;
    u->point = p->probability;
    st = lw_mc_sample(m, &p, 1, &mc, &P, &u->nuncertain, err);
    if (st != LW_OK)
        goto done;
    size_t n = mc.samples;
    sorted = lw_mc_sorted(P, n);
    if (!sorted) {
        st = lw_error_oom(err);
        goto done;
    }
    u->mean = gsl_stats_mean(P, 1, n);
    u->sd = gsl_stats_sd_m(P, 1, n, u->mean);
    u->p05 = lw_mc_quantile(sorted, n, 0.05);
    u->p50 = lw_mc_quantile(sorted, n, 0.50);
    u->p95 = lw_mc_quantile(sorted, n, 0.95);
    u->min = sorted[0];
    u->max = sorted[n - 1];
    u->has_exposure = m->has_exposure;
    if (m->has_exposure) {
        double v = m->per_year;
        u->per_year_mean = u->mean * v;
        u->per_year_p05 = u->p05 * v;
        u->per_year_p50 = u->p50 * v;
        u->per_year_p95 = u->p95 * v;
    }
    const lw_node *h = &m->nodes[m->hazards[hazard]];
    u->has_tolerable = h->has_tolerable;
    u->tolerable = h->tolerable;
    if (h->has_tolerable) {
        size_t above = 0;
        for (size_t i = 0; i < n; i++)
            above += P[i] > h->tolerable;
        u->prob_above_tolerable = (double)above / (double)n;
    }
    st = histogram(u, sorted, n, err);
    if (st == LW_OK)
        st = lw_observed_list(p, &u->observed, &u->nobserved, err);
done:
    lw_free(P);
    lw_free(sorted);
    lw_prepared_free(p);
    if (st != LW_OK) {
        lw_uncertainty_free(u);
        return st;
    }
    *out = u;
    return LW_OK;
}
