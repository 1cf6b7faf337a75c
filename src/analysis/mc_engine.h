/*
 * mc_engine.h - the Monte Carlo core shared by uncertainty.c and
 * compare.c (private to the analysis room).
 *
 * lw_mc_sample draws 'samples' paired samples of P(hazard) for each of
 * 'nnets' prepared hazards of the same model: in sample i every network
 * sees the same underlying deviates, transformed by its own
 * distributions.  out[k] receives an lw_malloc'd array of 'samples'
 * values, stored by sample index.
 */
#ifndef LW_ANALYSIS_MC_ENGINE_H
#define LW_ANALYSIS_MC_ENGINE_H

#include "layerwise/uncertainty.h"

/* Resolve defaults and check the limits; *samples receives the count. */
lw_status lw_mc_resolve(const lw_mc_options *mc, lw_mc_options *out,
                        lw_error *err);

lw_status lw_mc_sample(const lw_model *m, lw_prepared *const *nets,
                       size_t nnets, const lw_mc_options *mc, double **out,
                       size_t *nuncertain, lw_error *err);

/* The seed of block b's generator: the (b+1)-th output of splitmix64
 * started at 'seed'. */
uint64_t lw_mc_block_seed(uint64_t seed, uint64_t b);

/* Sorted copy of x (lw_malloc'd), NULL when out of memory. */
double *lw_mc_sorted(const double *x, size_t n);
/* Quantile f of sorted data (GSL's definition: linear interpolation at
 * index f (n - 1)), never outside the two samples it lies between. */
double lw_mc_quantile(const double *sorted, size_t n, double f);

/* Quantile f of Beta(a, b), by bisection on GSL's beta CDF. */
double lw_beta_quantile(double f, double a, double b);

/* The counts of an observed event, with their estimates. */
void lw_observed_fill(const lw_model *m, size_t node, lw_observed_info *o);
/* Observed events (as distributed in p's network) that p's hazard
 * depends on, in model order. */
lw_status lw_observed_list(const lw_prepared *p, lw_observed_info **out,
                           size_t *n, lw_error *err);

#endif
