/*
 * report_int.h - inside the committee report (render room, private).
 *
 * report_mc.c runs the Monte Carlo questions for the report and reads
 * their results back as the plain summaries below, so that the HTML
 * writer does not depend on the layout of the uncertainty structs.
 */
#ifndef LW_RENDER_REPORT_INT_H
#define LW_RENDER_REPORT_INT_H

#include <stdbool.h>
#include <stddef.h>

#include "layerwise/report.h"

/* Run uncertainty and (with variants) the paired comparison for 'h'. */
lw_status lw_report_run_mc(const lw_report *r, lw_report_hazard *h,
                           lw_error *err);
/* Free what lw_report_run_mc made. */
void lw_report_free_mc(lw_report_hazard *h);

typedef struct lwr_unc {
    size_t samples;
    unsigned long long seed;
    double point, mean, sd, p05, p50, p95;
    bool has_per_year;
    double per_year_p05, per_year_p50, per_year_p95;
    size_t nbins;
} lwr_unc;

/* The uncertainty of hazard 'h'; false when it was not run. */
bool lwr_uncertainty(const lw_report_hazard *h, lwr_unc *out);
/* Bin i of the histogram: its bounds and how many samples fell in it. */
double lwr_bin(const lw_report_hazard *h, size_t i, double *lo, double *hi);

typedef struct lwr_row {
    double probability, per_year, one_in, ratio;
    double prevented_per_year, checks_per_prevented;
    bool has_mc;            /* the fields below are from paired samples */
    double prob_better, ratio_p05, ratio_p95, p05, p50, p95;
} lwr_row;

/* Row v of the comparison (v = LW_NONE: the baseline); false when the
 * comparison was not run. */
bool lwr_compare_row(const lw_report *r, const lw_report_hazard *h,
                     size_t v, lwr_row *out);

#endif
