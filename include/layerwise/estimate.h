/*
 * layerwise/estimate.h - estimates from audit counts (analysis room).
 *
 * For 'count' misses in 'of' observed trials:
 *   Jeffreys posterior Beta(count + 1/2, of - count + 1/2), mean
 *     (count + 0.5) / (of + 1), the point value layerwise uses;
 *   Clopper-Pearson 95 % interval: lower = B^-1(0.025; x, n - x + 1)
 *     (0 when x = 0), upper = B^-1(0.975; x + 1, n - x) (1 when x = n);
 *   for zero counts, the rule-of-three upper bound 3 / n, for comparison.
 * Beta quantiles come from GSL.
 */
#ifndef LAYERWISE_ESTIMATE_H
#define LAYERWISE_ESTIMATE_H

#include <stdbool.h>

#ifdef __cplusplus
extern "C" {
#endif

typedef struct lw_estimate {
    double count, of;       /* the data */
    double mle;             /* count / of */
    double mean;            /* Jeffreys posterior mean */
    double ci_lo, ci_hi;    /* Clopper-Pearson 95 % */
    bool zero;              /* count == 0 */
    double rule_of_three;   /* 3 / of (meaningful when zero) */
} lw_estimate;

/* Requires 0 <= count <= of, of >= 1. */
void lw_estimate_counts(double count, double of, lw_estimate *out);

/* P(X >= m) for X ~ Binomial(n, p): the one-sided p-value of seeing m or
 * more misses in n trials when the miss probability is p. */
double lw_binomial_upper_tail(unsigned m, unsigned n, double p);

#ifdef __cplusplus
}
#endif
#endif
