/*
 * layerwise/uncertainty.h - the analysis room: uncertainty (Monte Carlo),
 * paired comparison of variants, and one-event sensitivity sweeps.
 *
 * Monte Carlo: the hazard is compiled and its BDD built once (lw_prepare);
 * each sample draws every uncertain event's probability from its
 * distribution, derives the variable probabilities with
 * lw_network_var_probs (so common-cause and THERP expansions follow the
 * sampled values) and makes one bottom-up probability pass.
 *
 *   lognormal: the stated p is the MEAN, EF = 95th / 50th percentile,
 *     sigma = ln(EF) / 1.6448536, mu = ln(p) - sigma^2 / 2; clipped at 1;
 *   beta(a, b); observed: Beta(count + 1/2, of - count + 1/2);
 *   uniform(low, high); points stay fixed; absent safeguards stay 1.
 *
 * Reproducibility: samples are split into fixed blocks of
 * LW_MC_BLOCK; block b draws from its own generator (GSL mt19937) seeded
 * from (seed, b) through the splitmix64 mixer, and every result is stored
 * by sample index, so the same seed gives bit-identical numbers whatever
 * the thread count.
 *
 * compare pairs its samples: in sample i, the baseline and every variant
 * see the same underlying deviates (the same standard normal z for a
 * lognormal, the same beta or uniform draw), each transformed by that
 * network's own distribution (a variant's `set p` on a lognormal event
 * keeps the error factor with the new mean; on any other kind it makes a
 * point).
 *
 * sweep: P(hazard) is linear in the probability of each plain event
 * (one that is not a common-cause member or a dependence second):
 * P = a + b x with a = P(hazard | event false) and b its Birnbaum
 * importance.  Each point is computed exactly by one probability pass.
 */
#ifndef LAYERWISE_UNCERTAINTY_H
#define LAYERWISE_UNCERTAINTY_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "layerwise/analysis.h"
#include "layerwise/error.h"
#include "layerwise/estimate.h"
#include "layerwise/model.h"

#ifdef __cplusplus
extern "C" {
#endif

/* The standard normal 95th percentile used for error factors. */
#define LW_Z95 1.6448536
/* Samples per block (each block has its own random stream). */
#define LW_MC_BLOCK 1024
/* Default and hard limits on the number of samples. */
#define LW_MC_DEFAULT_SAMPLES 10000
#define LW_MC_DEFAULT_MAX_SAMPLES 10000000

typedef struct lw_mc_options {
    size_t samples;         /* 0 = LW_MC_DEFAULT_SAMPLES */
    uint64_t seed;
    int threads;            /* <= 0 = 1 */
    size_t max_samples;     /* 0 = LW_MC_DEFAULT_MAX_SAMPLES */
} lw_mc_options;

void lw_mc_options_init(lw_mc_options *o);

/* mu and sigma of the lognormal with the given MEAN and error factor. */
void lw_lognormal_params(double mean, double ef, double *mu, double *sigma);

/* An `observed` event's counts, for display beside the results. */
typedef struct lw_observed_info {
    size_t node;            /* model node */
    lw_estimate est;        /* Jeffreys mean, Clopper-Pearson 95 %, rule of 3 */
    double jeffreys_lo;     /* Beta(x+1/2, n-x+1/2) 2.5 % quantile */
    double jeffreys_hi;     /* ... 97.5 % quantile */
} lw_observed_info;

typedef struct lw_uncertainty {
    size_t hazard, variant; size_t samples; uint64_t seed;
    double point, mean, sd, p05, p50, p95;
    bool has_exposure; double per_year_mean, per_year_p05, per_year_p50, per_year_p95;
    size_t nbins; double *bin_lo, *bin_hi; size_t *bin_count;   /* histogram of P, log10-spaced bins */
    /* additions */
    size_t zeros;           /* samples with P = 0 (not in the histogram) */
    double min, max;        /* smallest and largest sampled P */
    bool has_tolerable;
    double tolerable;
    double prob_above_tolerable;   /* share of samples with P > tolerable */
    size_t nuncertain;      /* events with a distribution (sampled) */
    size_t nobserved;       /* observed events the hazard depends on */
    lw_observed_info *observed;
} lw_uncertainty;

lw_status lw_uncertainty_run(const lw_model *m, size_t variant, size_t hazard, const lw_options *opt, const lw_mc_options *mc, lw_uncertainty **out, lw_error *err);
void lw_uncertainty_free(lw_uncertainty *u);

typedef struct lw_compare_row {
    size_t variant;            /* LW_NONE for the baseline row */
    double probability, per_year, one_in, ratio, prevented_per_year, checks_per_prevented;
    bool uncertain; double mean, p05, p50, p95, prob_better, ratio_p05, ratio_p50, ratio_p95;
    /* additions */
    bool reduces;               /* probability < baseline's: checks_per_prevented valid */
    double sd;                  /* of the sampled P */
    double prob_worse;          /* share of samples with the variant higher */
    double prevented_p05, prevented_p95;  /* 90 % range of (P_base - P_var) * per year */
} lw_compare_row;

typedef struct lw_comparison { size_t hazard; size_t samples; uint64_t seed; bool has_exposure; lw_compare_row baseline; size_t nrows; lw_compare_row *rows;
    /* additions */
    size_t nuncertain;          /* events with a distribution (sampled) */
    size_t nobserved;
    lw_observed_info *observed;
} lw_comparison;

lw_status lw_compare_run(const lw_model *m, size_t hazard, const size_t *variants, size_t nvariants, const lw_options *opt, const lw_mc_options *mc, lw_comparison **out, lw_error *err);
void lw_comparison_free(lw_comparison *c);

typedef struct lw_sweep_point { double x, probability, per_year; } lw_sweep_point;
typedef struct lw_sweep { size_t hazard, variant, event; double a, b; /* P = a + b*x */ size_t npoints; lw_sweep_point *points; bool has_tolerable; double tolerable; bool crosses; double crossing_x;
    /* additions */
    bool linear;                /* plain event: a and b are exact */
    bool in_hazard;             /* the hazard depends on the event */
    bool was_absent;            /* an absent safeguard, swept as if present */
    bool log_scale;
    double from, to;
    double current_p;           /* the event's probability as modelled */
    double current_probability; /* P(hazard) at current_p */
    bool has_exposure;
    bool observed;              /* the event has `observed` counts: */
    lw_observed_info obs;       /* ... their estimates */
} lw_sweep;

lw_status lw_sweep_run(const lw_model *m, size_t variant, size_t hazard, const char *event_id, double from, double to, size_t steps, bool log_scale, const lw_options *opt, lw_sweep **out, lw_error *err);
void lw_sweep_free(lw_sweep *s);

#ifdef __cplusplus
}
#endif
#endif
