/*
 * compare.c - the baseline against one or more variants: exact point
 * figures, and paired Monte Carlo samples (the same draws for the
 * baseline and every variant, see mc_engine.c) for the uncertain ones.
 *
 *   ratio                 P_variant / P_baseline
 *   prevented_per_year    (P_baseline - P_variant) * exposures a year
 *   checks_per_prevented  1 / (P_baseline - P_variant): exposures (checks
 *                         done) per hazard prevented, when it reduces
 *   prob_better           share of paired samples with P_variant < P_base
 */
#include "layerwise/uncertainty.h"

#include <math.h>
#include <string.h>

#include <gsl/gsl_statistics_double.h>

#include "analysis/mc_engine.h"
#include "layerwise/alloc.h"

void lw_comparison_free(lw_comparison *c)
{
    if (!c)
        return;
    lw_free(c->rows);
    lw_free(c->observed);
    lw_free(c);
}

static double ratio_of(double v, double b)
{
    if (b > 0)
        return v / b;
    return v == 0 ? 1.0 : INFINITY;
}

static void point_row(lw_compare_row *r, const lw_model *m, double Pb,
                      double Pv)
{
    r->probability = Pv;
    r->per_year = m->has_exposure ? Pv * m->per_year : 0.0;
    r->one_in = Pv > 0 ? 1.0 / Pv : 0.0;
    r->ratio = ratio_of(Pv, Pb);
    r->prevented_per_year = m->has_exposure ? (Pb - Pv) * m->per_year : 0.0;
    r->reduces = Pv < Pb;
    r->checks_per_prevented = r->reduces ? 1.0 / (Pb - Pv) : 0.0;
}

static lw_status sample_stats(lw_compare_row *r, const double *x, size_t n,
                              lw_error *err)
{
    double *s = lw_mc_sorted(x, n);
    if (!s)
        return lw_error_oom(err);
    r->uncertain = true;
    r->mean = gsl_stats_mean(x, 1, n);
    r->sd = gsl_stats_sd_m(x, 1, n, r->mean);
    r->p05 = lw_mc_quantile(s, n, 0.05);
    r->p50 = lw_mc_quantile(s, n, 0.50);
    r->p95 = lw_mc_quantile(s, n, 0.95);
    lw_free(s);
    return LW_OK;
}

/* Paired figures of a variant's samples v against the baseline's b. */
static lw_status paired_stats(lw_compare_row *r, const lw_model *m,
                              const double *b, const double *v, size_t n,
                              lw_error *err)
{
    double *t = lw_malloc((n + 1) * sizeof *t);
    if (!t)
        return lw_error_oom(err);
    size_t better = 0, worse = 0;
    for (size_t i = 0; i < n; i++) {
        better += v[i] < b[i];
        worse += v[i] > b[i];
        t[i] = ratio_of(v[i], b[i]);
    }
    r->prob_better = (double)better / (double)n;
    r->prob_worse = (double)worse / (double)n;
    double *s = lw_mc_sorted(t, n);
    if (!s) {
        lw_free(t);
        return lw_error_oom(err);
    }
    r->ratio_p05 = lw_mc_quantile(s, n, 0.05);
    r->ratio_p50 = lw_mc_quantile(s, n, 0.50);
    r->ratio_p95 = lw_mc_quantile(s, n, 0.95);
    lw_free(s);
    double vol = m->has_exposure ? m->per_year : 0.0;
    for (size_t i = 0; i < n; i++)
        t[i] = (b[i] - v[i]) * vol;
    s = lw_mc_sorted(t, n);
    lw_free(t);
    if (!s)
        return lw_error_oom(err);
    r->prevented_p05 = lw_mc_quantile(s, n, 0.05);
    r->prevented_p95 = lw_mc_quantile(s, n, 0.95);
    lw_free(s);
    return LW_OK;
}

lw_status lw_compare_run(const lw_model *m, size_t hazard,
                         const size_t *variants, size_t nvariants,
                         const lw_options *opt, const lw_mc_options *mc_in,
                         lw_comparison **out, lw_error *err)
{
    *out = NULL;
    if (nvariants == 0)
        return lw_error_set(err, LW_EUSAGE, NULL, 0,
                            "compare needs at least one variant");
    for (size_t i = 0; i < nvariants; i++)
        if (variants[i] >= m->nvariants)
            return lw_error_set(err, LW_EUSAGE, NULL, 0,
                                "no variant number %zu", variants[i]);
    lw_mc_options mc;
    lw_status st = lw_mc_resolve(mc_in, &mc, err);
    if (st != LW_OK)
        return st;
    size_t nn = nvariants + 1;
    lw_prepared **nets = lw_calloc(nn, sizeof *nets);
    double **P = lw_calloc(nn, sizeof *P);
    lw_comparison *c = lw_calloc(1, sizeof *c);
    if (!nets || !P || !c) {
        st = lw_error_oom(err);
        goto done;
    }
    c->rows = lw_calloc(nvariants, sizeof *c->rows);
    if (!c->rows) {
        st = lw_error_oom(err);
        goto done;
    }
    c->hazard = hazard;
    c->samples = mc.samples;
    c->seed = mc.seed;
    c->has_exposure = m->has_exposure;
    for (size_t k = 0; k < nn && st == LW_OK; k++)
        st = lw_prepare(m, k == 0 ? LW_NONE : variants[k - 1], hazard, opt,
                        &nets[k], err);
    if (st != LW_OK)
        goto done;
    st = lw_mc_sample(m, nets, nn, &mc, P, &c->nuncertain, err);
    if (st != LW_OK)
        goto done;
    double Pb = nets[0]->probability;
    lw_compare_row *base = &c->baseline;
    base->variant = LW_NONE;
    point_row(base, m, Pb, Pb);
    st = sample_stats(base, P[0], mc.samples, err);
    base->ratio_p05 = base->ratio_p50 = base->ratio_p95 = 1.0;
    for (size_t k = 1; k < nn && st == LW_OK; k++) {
        lw_compare_row *r = &c->rows[k - 1];
        r->variant = variants[k - 1];
        point_row(r, m, Pb, nets[k]->probability);
        st = sample_stats(r, P[k], mc.samples, err);
        if (st == LW_OK)
            st = paired_stats(r, m, P[0], P[k], mc.samples, err);
        c->nrows = k;
    }
    if (st == LW_OK)
        st = lw_observed_list(nets[0], &c->observed, &c->nobserved, err);
done:
    for (size_t k = 0; nets && k < nn; k++)
        lw_prepared_free(nets[k]);
    for (size_t k = 0; P && k < nn; k++)
        lw_free(P[k]);
    lw_free(nets);
    lw_free(P);
    if (st != LW_OK) {
        lw_comparison_free(c);
        return st;
    }
    *out = c;
    return LW_OK;
}
