/*
 * report_mc.c - the Monte Carlo part of the committee report: the
 * uncertainty of each hazard (with its histogram) and the paired
 * comparison of the variants, read back as the plain summaries of
 * report_int.h.
 */
#include "render/report_int.h"

#include <math.h>

#include "layerwise/uncertainty.h"

static lw_mc_options mc_of(const lw_report *r)
{
    lw_mc_options mc;
    lw_mc_options_init(&mc);
    if (r->ro.samples)
        mc.samples = r->ro.samples;
    mc.seed = (uint64_t)r->ro.seed;
    mc.threads = r->ro.threads > 0 ? r->ro.threads : 1;
    return mc;
}

lw_status lw_report_run_mc(const lw_report *r, lw_report_hazard *h,
                           lw_error *err)
{
    lw_mc_options mc = mc_of(r);
    lw_uncertainty *u = NULL;
    lw_status st = lw_uncertainty_run(r->model, LW_NONE, h->hazard, &r->opt,
                                      &mc, &u, err);
    if (st != LW_OK)
        return st;
    h->uncertainty = u;
    if (r->nvariants) {
        lw_comparison *cmp = NULL;
        st = lw_compare_run(r->model, h->hazard, r->variants, r->nvariants,
                            &r->opt, &mc, &cmp, err);
        if (st != LW_OK)
            return st;
        h->comparison = cmp;
    }
    return LW_OK;
}

void lw_report_free_mc(lw_report_hazard *h)
{
    lw_uncertainty_free(h->uncertainty);
    lw_comparison_free(h->comparison);
    h->uncertainty = NULL;
    h->comparison = NULL;
}

bool lwr_uncertainty(const lw_report_hazard *h, lwr_unc *out)
{
    const lw_uncertainty *u = h->uncertainty;
    if (!u)
        return false;
    out->samples = u->samples;
    out->seed = (unsigned long long)u->seed;
    out->point = u->point;
    out->mean = u->mean;
    out->sd = u->sd;
    out->p05 = u->p05;
    out->p50 = u->p50;
    out->p95 = u->p95;
    out->has_per_year = u->has_exposure;
    out->per_year_p05 = u->per_year_p05;
    out->per_year_p50 = u->per_year_p50;
    out->per_year_p95 = u->per_year_p95;
    out->nbins = u->bin_lo && u->bin_hi && u->bin_count ? u->nbins : 0;
    return true;
}

double lwr_bin(const lw_report_hazard *h, size_t i, double *lo, double *hi)
{
    const lw_uncertainty *u = h->uncertainty;
    if (!u || i >= u->nbins || !u->bin_lo) {
        *lo = *hi = 0;
        return 0;
    }
    *lo = u->bin_lo[i];
    *hi = u->bin_hi[i];
    return (double)u->bin_count[i];
}

static void copy_row(const lw_compare_row *c, lwr_row *out)
{
    out->probability = c->probability;
    out->per_year = c->per_year;
    out->one_in = c->one_in;
    out->ratio = c->ratio;
    out->prevented_per_year = c->prevented_per_year;
    out->checks_per_prevented = c->reduces ? c->checks_per_prevented : NAN;
    out->has_mc = c->uncertain;
    out->prob_better = c->prob_better;
    out->ratio_p05 = c->ratio_p05;
    out->ratio_p95 = c->ratio_p95;
    out->p05 = c->p05;
    out->p50 = c->p50;
    out->p95 = c->p95;
}

bool lwr_compare_row(const lw_report *r, const lw_report_hazard *h,
                     size_t v, lwr_row *out)
{
    (void)r;
    const lw_comparison *c = h->comparison;
    if (!c)
        return false;
    if (v == LW_NONE) {
        copy_row(&c->baseline, out);
        return true;
    }
    for (size_t i = 0; i < c->nrows; i++) {
        if (c->rows[i].variant == v) {
            copy_row(&c->rows[i], out);
            return true;
        }
    }
    return false;
}
