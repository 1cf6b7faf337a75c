/* estimate.c - Jeffreys, Clopper-Pearson and binomial tails (GSL). */
#include "layerwise/estimate.h"

#include <gsl/gsl_cdf.h>

/* The f-quantile of Beta(a, b) by bisection on GSL's regularized
 * incomplete beta, down to adjacent doubles: gsl_cdf_beta_Pinv fails to
 * converge for some shapes (e.g. 0.975 of Beta(10, 4011)) and GSL's
 * default error handler then aborts the process. */
static double beta_quantile(double f, double a, double b)
{
    double lo = 0.0, hi = 1.0;
    for (int it = 0; it < 2200; it++) {
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

void lw_estimate_counts(double x, double n, lw_estimate *e)
{
    e->count = x;
    e->of = n;
    e->mle = n > 0 ? x / n : 0.0;
    e->mean = (x + 0.5) / (n + 1.0);
    e->ci_lo = x <= 0 ? 0.0 : beta_quantile(0.025, x, n - x + 1.0);
    e->ci_hi = x >= n ? 1.0 : beta_quantile(0.975, x + 1.0, n - x);
    e->zero = x <= 0;
    e->rule_of_three = n > 0 ? 3.0 / n : 1.0;
}

double lw_binomial_upper_tail(unsigned m, unsigned n, double p)
{
    if (m == 0)
        return 1.0;
    if (m > n)
        return 0.0;
    /* P(X >= m) = Q(m - 1) */
    return gsl_cdf_binomial_Q(m - 1, p, n);
}
