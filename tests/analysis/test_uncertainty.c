/*
 * test_uncertainty.c - Monte Carlo propagation (layerwise uncertainty).
 *
 * Reference values come from methods.md §5 (lognormal error-factor
 * convention), §6.3 (binomial estimates) and §9 (Monte Carlo checks), and
 * from GSL's beta quantile function; each check names its source.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_cdf.h>

#include "analysis/mc_engine.h"
#include "layerwise/uncertainty.h"
#include "testutil.h"

static lw_uncertainty *run(const lw_model *m, size_t variant, size_t samples,
                           uint64_t seed, int threads)
{
    lw_mc_options mc;
    lw_mc_options_init(&mc);
    mc.samples = samples;
    mc.seed = seed;
    mc.threads = threads;
    lw_error err = LW_ERROR_INIT;
    lw_uncertainty *u = NULL;
    lw_status st = lw_uncertainty_run(m, variant, 0, NULL, &mc, &u, &err);
    if (st != LW_OK) {
        for (size_t i = 0; i < err.count; i++)
            fprintf(stderr, "%s\n", err.items[i].message);
        lw_error_clear(&err);
        fail_msg("uncertainty failed: %s", lw_status_name(st));
    }
    lw_error_clear(&err);
    return u;
}

/* The mean of a lognormal from its median and error factor
 * (methods.md §5.1, closed form: mean = median * exp(sigma^2 / 2),
 * sigma = ln(EF) / 1.6448536). */
static double ln_mean(double median, double ef)
{
    double s = log(ef) / 1.6448536;
    return median * exp(0.5 * s * s);
}

static lw_model *load_fmt(const char *fmt, ...)
{
    char buf[8192];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(buf, sizeof buf, fmt, ap);
    va_end(ap);
    return tu_load(buf);
}

/* ---- lognormal error-factor relations --------------------------------- */

static void test_lognormal_ef_relations(void **state)
{
    (void)state;
    double mu, s;
    /* methods.md §5.2 [D]: median 1e-3, EF 3 -> sigma 0.667909,
     * mean 1.249884e-3 */
    lw_lognormal_params(1.249884e-3, 3.0, &mu, &s);
    assert_close(s, 0.667909, 2e-6);
    assert_close(exp(mu), 1e-3, 2e-6);
    /* 5th pct = median / EF, 95th = median * EF (methods.md §5.1) */
    assert_close(exp(mu - LW_Z95 * s), 3.33333e-4, 2e-6);
    assert_close(exp(mu + LW_Z95 * s), 3e-3, 2e-6);
    /* methods.md §5.2 [D]: median 1e-3, EF 10 -> sigma 1.399872,
     * mean 2.663980e-3 */
    lw_lognormal_params(2.663980e-3, 10.0, &mu, &s);
    assert_close(s, 1.399872, 2e-6);
    assert_close(exp(mu), 1e-3, 2e-6);
    /* methods.md §5.2 [D]: median 1e-2, EF 5 -> sigma 0.978469,
     * mean 1.613976e-2 */
    lw_lognormal_params(1.613976e-2, 5.0, &mu, &s);
    assert_close(s, 0.978469, 2e-6);
    assert_close(exp(mu), 1e-2, 2e-6);
    /* methods.md §5.2 [D]: mean 1e-3 with EF 3 -> median 8.000740e-4 */
    lw_lognormal_params(1e-3, 3.0, &mu, &s);
    assert_close(exp(mu), 8.000740e-4, 2e-6);
    /* methods.md §5.2: the constant must be 1.6448536, not 1.645: with
     * 1.645 the EF-10 mean would be 2.6635156e-3, which this excludes */
    assert_false(tu_close(ln_mean(1e-3, 10.0), 2.6635156e-3, 1e-5));
    assert_close(ln_mean(1e-3, 10.0), 2.663980e-3, 2e-6);
}

/* ---- one lognormal event ------------------------------------------------ */

static void test_single_lognormal(void **state)
{
    (void)state;
    /* median 1e-3, EF 10 (methods.md §5.2 [D]) */
    lw_model *m = load_fmt(
        "<safety-model format=\"1\" id=\"t\">"
        "<hazard id=\"h\"><error id=\"e\" p=\"%.17g\">"
        "<lognormal error-factor=\"10\"/></error></hazard>"
        "</safety-model>", ln_mean(1e-3, 10.0));
    lw_uncertainty *u = run(m, LW_NONE, 200000, 7, 1);
    assert_int_equal(u->samples, 200000);
    assert_int_equal(u->nuncertain, 1);
    /* methods.md §5.2 [D]: 5th pct 1e-4, median 1e-3, 95th 1e-2,
     * mean 2.663980e-3; acceptance: within 3 % at 200,000 samples */
    assert_close(u->p05, 1e-4, 0.03);
    assert_close(u->p50, 1e-3, 0.03);
    assert_close(u->p95, 1e-2, 0.03);
    assert_close(u->mean, 2.663980e-3, 0.03);
    /* methods.md §5.2 [D]: s.d. 6.577814e-3 (heavy tail: 10 %) */
    assert_close(u->sd, 6.577814e-3, 0.10);
    /* the point value is the stated mean */
    assert_close(u->point, 2.663980e-3, 1e-6);
    lw_uncertainty_free(u);
    lw_model_free(m);
}

/* ---- product of two lognormals ------------------------------------------ */

static void test_product_of_lognormals(void **state)
{
    (void)state;
    /* methods.md §9 item 2 [D]: two events, median 1e-3 and EF 3 each */
    double mean = ln_mean(1e-3, 3.0);
    lw_model *m = load_fmt(
        "<safety-model format=\"1\" id=\"t\">"
        "<hazard id=\"h\"><all>"
        "<error id=\"x\" p=\"%.17g\"><lognormal error-factor=\"3\"/></error>"
        "<safeguard id=\"y\" p=\"%.17g\"><lognormal error-factor=\"3\"/>"
        "</safeguard></all></hazard></safety-model>", mean, mean);
    lw_uncertainty *u = run(m, LW_NONE, 200000, 11, 1);
    /* methods.md §9 item 2 [D]: product median 1e-6, 5th pct 2.114699e-7,
     * 95th 4.728804e-6, mean 1.5622112e-6; within 3 % */
    assert_close(u->p50, 1e-6, 0.03);
    assert_close(u->p05, 2.114699e-7, 0.03);
    assert_close(u->p95, 4.728804e-6, 0.03);
    assert_close(u->mean, 1.5622112e-6, 0.03);
    /* methods.md §9 item 2 [D]: product EF 4.728804 = p95 / p50 */
    assert_close(u->p95 / u->p50, 4.728804, 0.03);
    /* the point value is the product of the means (closed form) */
    assert_close(u->point, mean * mean, 1e-12);
    lw_uncertainty_free(u);
    lw_model_free(m);
}

/* ---- the mean identity E[P] = P(means) ------------------------------------ */

static void test_mean_identity(void **state)
{
    (void)state;
    /* methods.md §9 item 1 [D]: A.(B + C), medians 0.01, 0.02, 0.05,
     * EF 3 each; E[P(T)] = 1.0740220e-3 */
    lw_model *m = load_fmt(
        "<safety-model format=\"1\" id=\"t\">"
        "<hazard id=\"h\"><all>"
        "<error id=\"a\" p=\"%.17g\"><lognormal error-factor=\"3\"/></error>"
        "<any>"
        "<safeguard id=\"b\" p=\"%.17g\"><lognormal error-factor=\"3\"/>"
        "</safeguard>"
        "<safeguard id=\"c\" p=\"%.17g\"><lognormal error-factor=\"3\"/>"
        "</safeguard>"
        "</any></all></hazard></safety-model>",
        ln_mean(0.01, 3), ln_mean(0.02, 3), ln_mean(0.05, 3));
    /* methods.md §9 item 1 [D]: the means 0.01249884, 0.02499769,
     * 0.06249422 give the point value 1.0740220e-3 */
    lw_uncertainty *u = run(m, LW_NONE, 100000, 3, 1);
    assert_close(u->point, 1.0740220e-3, 1e-6);
    /* the sample mean agrees within 4 standard errors */
    double se = u->sd / sqrt((double)u->samples);
    if (fabs(u->mean - 1.0740220e-3) > 4 * se)
        fail_msg("mean %.10g differs from 1.0740220e-3 by more than 4 "
                 "standard errors (%.3g)", u->mean, se);
    /* ... and the point at the medians, 6.9e-4 (methods.md §9 item 1), is
     * well outside: the identity is about means, not medians */
    assert_true(fabs(u->mean - 6.9e-4) > 20 * se);
    lw_uncertainty_free(u);
    lw_model_free(m);
}

/* ---- an observed event ---------------------------------------------------- */

static void test_observed_event(void **state)
{
    (void)state;
    lw_model *m = tu_load(
        "<safety-model format=\"1\" id=\"t\">"
        "<hazard id=\"h\"><safeguard id=\"n\">"
        "<observed count=\"9\" of=\"400\" source=\"audit\"/></safeguard>"
        "</hazard></safety-model>");
    lw_uncertainty *u = run(m, LW_NONE, 200000, 5, 1);
    /* quantiles of Beta(9.5, 391.5) from GSL (reference library) */
    assert_close(u->p05, gsl_cdf_beta_Pinv(0.05, 9.5, 391.5), 0.03);
    assert_close(u->p50, gsl_cdf_beta_Pinv(0.50, 9.5, 391.5), 0.03);
    assert_close(u->p95, gsl_cdf_beta_Pinv(0.95, 9.5, 391.5), 0.03);
    /* methods.md §6.3 [D]: 9/400 Jeffreys mean 2.36908e-2, median
     * 2.29029e-2 */
    assert_close(u->mean, 2.36908e-2, 0.03);
    assert_close(u->p50, 2.29029e-2, 0.03);
    assert_close(u->point, 2.36908e-2, 1e-5);
    /* the estimates from counts are listed (methods.md §6.3 [D]: CP 95 %
     * [1.03389e-2, 4.22810e-2], Jeffreys 95 % [1.11900e-2, 4.06592e-2]) */
    assert_int_equal(u->nobserved, 1);
    assert_close(u->observed[0].est.mean, 2.36908e-2, 1e-5);
    assert_close(u->observed[0].est.ci_lo, 1.03389e-2, 1e-5);
    assert_close(u->observed[0].est.ci_hi, 4.22810e-2, 1e-5);
    assert_close(u->observed[0].jeffreys_lo, 1.11900e-2, 1e-5);
    assert_close(u->observed[0].jeffreys_hi, 4.06592e-2, 1e-5);
    assert_false(u->observed[0].est.zero);
    lw_uncertainty_free(u);
    lw_model_free(m);
}

/* ---- beta quantiles against the reference sheet ------------------------- */

static void test_beta_quantiles_reference(void **state)
{
    (void)state;
    static const struct {
        double x, n, mean, jlo, jhi, cplo, cphi;
    } rows[] = {
        /* methods.md §6.3 [D] (x/n, Jeffreys mean, Jeffreys 95 %
         * equal-tailed, Clopper-Pearson 95 %) */
        {3, 1000, 3.49650e-3, 8.45635e-4, 7.98437e-3, 6.19100e-4, 8.74202e-3},
        {9, 400, 2.36908e-2, 1.11900e-2, 4.06592e-2, 1.03389e-2, 4.22810e-2},
        {1, 100, 1.48515e-2, 1.08110e-3, 4.57789e-2, 2.53146e-4, 5.44594e-2},
        /* zero counts: CP lower 0; Jeffreys lower before the BCD rule */
        {0, 300, 1.66113e-3, 1.63542e-6, 8.33127e-3, 0.0, 1.22210e-2},
        {0, 1000, 4.99500e-4, 4.90912e-7, 2.50816e-3, 0.0, 3.68208e-3},
    };
    lw_model *m = tu_load(
        "<safety-model format=\"1\" id=\"t\">"
        "<hazard id=\"h\"><safeguard id=\"n\">"
        "<observed count=\"0\" of=\"300\"/></safeguard>"
        "</hazard></safety-model>");
    size_t node = lw_model_find_node(m, "n");
    for (size_t i = 0; i < sizeof rows / sizeof *rows; i++) {
        lw_dist *d = &m->nodes[node].dist;
        d->count = rows[i].x;
        d->of = rows[i].n;
        lw_observed_info o;
        lw_observed_fill(m, node, &o);
        assert_close(o.est.mean, rows[i].mean, 1e-5);
        assert_close(o.jeffreys_lo, rows[i].jlo, 1e-5);
        assert_close(o.jeffreys_hi, rows[i].jhi, 1e-5);
        if (rows[i].cplo == 0)
            assert_true(o.est.ci_lo == 0.0);
        else
            assert_close(o.est.ci_lo, rows[i].cplo, 1e-5);
        assert_close(o.est.ci_hi, rows[i].cphi, 1e-5);
        assert_true(o.est.zero == (rows[i].x == 0));
    }
    /* methods.md §6.3 [D]: 0/300, rule of three 0.01 */
    m->nodes[node].dist.count = 0;
    m->nodes[node].dist.of = 300;
    lw_observed_info o;
    lw_observed_fill(m, node, &o);
    assert_close(o.est.rule_of_three, 0.01, 1e-12);
    /* 12/400: where gsl_cdf_beta_Pinv does not converge for the upper
     * Jeffreys limit; the quantile must still satisfy its definition
     * against GSL's beta CDF (reference library) */
    m->nodes[node].dist.count = 12;
    m->nodes[node].dist.of = 400;
    lw_observed_fill(m, node, &o);
    assert_close(gsl_cdf_beta_P(o.jeffreys_hi, 12.5, 388.5), 0.975, 1e-9);
    assert_close(gsl_cdf_beta_P(o.jeffreys_lo, 12.5, 388.5), 0.025, 1e-9);
    assert_close(gsl_cdf_beta_P(o.est.ci_hi, 13, 388), 0.975, 1e-9);
    assert_close(gsl_cdf_beta_P(o.est.ci_lo, 12, 389), 0.025, 1e-9);
    lw_model_free(m);
}

/* ---- determinism across thread counts ------------------------------------ */

static void same_result(const lw_uncertainty *a, const lw_uncertainty *b)
{
    assert_int_equal(a->samples, b->samples);
    assert_memory_equal(&a->mean, &b->mean, sizeof a->mean);
    assert_memory_equal(&a->sd, &b->sd, sizeof a->sd);
    assert_memory_equal(&a->p05, &b->p05, sizeof a->p05);
    assert_memory_equal(&a->p50, &b->p50, sizeof a->p50);
    assert_memory_equal(&a->p95, &b->p95, sizeof a->p95);
    assert_memory_equal(&a->min, &b->min, sizeof a->min);
    assert_memory_equal(&a->max, &b->max, sizeof a->max);
    assert_memory_equal(&a->per_year_mean, &b->per_year_mean,
                        sizeof a->per_year_mean);
    assert_int_equal(a->nbins, b->nbins);
    for (size_t i = 0; i < a->nbins; i++)
        assert_int_equal(a->bin_count[i], b->bin_count[i]);
}

static void test_threads_identical(void **state)
{
    (void)state;
    lw_error err = LW_ERROR_INIT;
    lw_model *m = NULL;
    /* a demo model with lognormal, beta, uniform and observed events,
     * common cause and dependence */
    assert_int_equal(lw_model_load_file(tu_source_path("trees/infusion.xml"),
                                        NULL, &m, &err), LW_OK);
    lw_error_clear(&err);
    /* 9 blocks: several per thread, uneven last block */
    size_t n = 8 * LW_MC_BLOCK + 77;
    lw_uncertainty *u1 = run(m, LW_NONE, n, 42, 1);
    lw_uncertainty *u2 = run(m, LW_NONE, n, 42, 2);
    lw_uncertainty *u3 = run(m, LW_NONE, n, 42, 3);
    same_result(u1, u2);
    same_result(u1, u3);
    /* a different seed gives different numbers (so the check above can
     * fail) */
    lw_uncertainty *u4 = run(m, LW_NONE, n, 43, 2);
    assert_true(u4->mean != u1->mean);
    /* closed form: the point is the exact probability */
    assert_close(u1->point, tu_prob(m, LW_NONE, 0), 1e-15);
    lw_uncertainty_free(u1);
    lw_uncertainty_free(u2);
    lw_uncertainty_free(u3);
    lw_uncertainty_free(u4);
    lw_model_free(m);
}

/* ---- points stay fixed; absent safeguards stay 1 ------------------------- */

static void test_points_fixed(void **state)
{
    (void)state;
    lw_model *m = tu_load(
        "<safety-model format=\"1\" id=\"t\">"
        "<hazard id=\"h\"><all>"
        "<error id=\"e\" p=\"0.01\"/>"
        "<safeguard id=\"s\" p=\"0.1\" present=\"no\">"
        "<lognormal error-factor=\"10\"/></safeguard>"
        "<safeguard id=\"k\" p=\"0.5\"/>"
        "</all></hazard></safety-model>");
    lw_uncertainty *u = run(m, LW_NONE, 3000, 1, 1);
    /* closed form: 0.01 * 1 * 0.5 in every sample */
    assert_true(u->min == u->max);
    assert_close(u->mean, 0.005, 1e-12);
    assert_close(u->p05, 0.005, 1e-12);
    assert_close(u->p95, 0.005, 1e-12);
    assert_true(u->sd < 1e-15);
    assert_int_equal(u->nbins, 1);
    assert_int_equal(u->bin_count[0], 3000);
    lw_uncertainty_free(u);
    lw_model_free(m);
}

/* ---- a variant's `set p` on a lognormal keeps its error factor ---------- */

static void test_variant_keeps_ef(void **state)
{
    (void)state;
    lw_model *m = tu_load(
        "<safety-model format=\"1\" id=\"t\">"
        "<hazard id=\"h\"><all>"
        "<error id=\"e\" p=\"0.001\"><lognormal error-factor=\"3\"/></error>"
        "<safeguard id=\"s\" p=\"0.1\"><beta a=\"2\" b=\"18\"/></safeguard>"
        "</all></hazard>"
        "<variant id=\"twice\"><set ref=\"e\" p=\"0.002\"/></variant>"
        "<variant id=\"fixed\"><set ref=\"s\" p=\"0.1\"/></variant>"
        "</safety-model>");
    lw_uncertainty *b = run(m, LW_NONE, 20000, 9, 1);
    lw_uncertainty *v = run(m, 0, 20000, 9, 1);
    lw_uncertainty *f = run(m, 1, 20000, 9, 1);
    /* closed form: the same z with mu + ln 2 scales every sample by 2 */
    assert_close(v->p05, 2 * b->p05, 1e-12);
    assert_close(v->p50, 2 * b->p50, 1e-12);
    assert_close(v->p95, 2 * b->p95, 1e-12);
    assert_close(v->mean, 2 * b->mean, 1e-12);
    /* `set p` on a beta makes it a point: less spread (common practice,
     * no source: the product loses one uncertain factor) */
    assert_true(f->p95 / f->p05 < b->p95 / b->p05);
    lw_uncertainty_free(b);
    lw_uncertainty_free(v);
    lw_uncertainty_free(f);
    lw_model_free(m);
}

/* ---- limits ---------------------------------------------------------------- */

static void test_limits(void **state)
{
    (void)state;
    lw_model *m = tu_load(
        "<safety-model format=\"1\" id=\"t\">"
        "<hazard id=\"h\"><error id=\"e\" p=\"0.01\"/></hazard>"
        "</safety-model>");
    lw_mc_options mc;
    lw_mc_options_init(&mc);
    /* the agreed defaults (issue 4: 10,000 samples, limit 10,000,000;
     * common practice, no source) */
    assert_int_equal(mc.samples, 10000);
    assert_int_equal(mc.max_samples, 10000000);
    mc.samples = 10000001;
    lw_error err = LW_ERROR_INIT;
    lw_uncertainty *u = NULL;
    assert_int_equal(lw_uncertainty_run(m, LW_NONE, 0, NULL, &mc, &u, &err),
                     LW_ELIMIT);
    assert_null(u);
    assert_true(tu_error_has(&err, "limit", NULL));
    lw_error_clear(&err);
    mc.samples = 1;
    assert_int_equal(lw_uncertainty_run(m, LW_NONE, 0, NULL, &mc, &u, &err),
                     LW_EUSAGE);
    lw_error_clear(&err);
    lw_model_free(m);
}

/* ---- the block seeds ---------------------------------------------------- */

static void test_block_seeds(void **state)
{
    (void)state;
    /* splitmix64 (reference: the generator's published first output for
     * state 0 is 0xE220A8397B1DCDAF, from memory) */
    assert_true(lw_mc_block_seed(0, 0) == UINT64_C(0xE220A8397B1DCDAF));
    assert_true(lw_mc_block_seed(1, 0) != lw_mc_block_seed(1, 1));
    assert_true(lw_mc_block_seed(1, 0) != lw_mc_block_seed(2, 0));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_lognormal_ef_relations),
        cmocka_unit_test(test_single_lognormal),
        cmocka_unit_test(test_product_of_lognormals),
        cmocka_unit_test(test_mean_identity),
        cmocka_unit_test(test_observed_event),
        cmocka_unit_test(test_beta_quantiles_reference),
        cmocka_unit_test(test_threads_identical),
        cmocka_unit_test(test_points_fixed),
        cmocka_unit_test(test_variant_keeps_ef),
        cmocka_unit_test(test_limits),
        cmocka_unit_test(test_block_seeds),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
