/*
 * test_compare.c - the baseline against variants (layerwise compare):
 * exact point figures and paired Monte Carlo samples.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <string.h>

#include <gsl/gsl_cdf.h>

#include "layerwise/uncertainty.h"
#include "testutil.h"

static lw_comparison *run(const lw_model *m, const size_t *v, size_t nv,
                          size_t samples, uint64_t seed, int threads)
{
    lw_mc_options mc;
    lw_mc_options_init(&mc);
    mc.samples = samples;
    mc.seed = seed;
    mc.threads = threads;
    lw_error err = LW_ERROR_INIT;
    lw_comparison *c = NULL;
    lw_status st = lw_compare_run(m, 0, v, nv, NULL, &mc, &c, &err);
    if (st != LW_OK) {
        for (size_t i = 0; i < err.count; i++)
            fprintf(stderr, "%s\n", err.items[i].message);
        lw_error_clear(&err);
        fail_msg("compare failed: %s", lw_status_name(st));
    }
    lw_error_clear(&err);
    return c;
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

/* ---- point figures ---------------------------------------------------- */

static void test_point_closed_form(void **state)
{
    (void)state;
    /* check A is replaced by check B */
    lw_model *m = tu_load(
        "<safety-model format=\"1\" id=\"t\">"
        "<exposure unit=\"episode\" per-year=\"10000\"/>"
        "<hazard id=\"h\"><all>"
        "<error id=\"e\" p=\"0.01\"/>"
        "<safeguard id=\"a\" p=\"0.1\"/>"
        "<safeguard id=\"b\" p=\"0.02\" present=\"no\"/>"
        "</all></hazard>"
        "<variant id=\"swap\"><set ref=\"a\" present=\"no\"/>"
        "<set ref=\"b\" present=\"yes\"/></variant>"
        "<variant id=\"worse\"><set ref=\"a\" p=\"0.3\"/></variant>"
        "</safety-model>");
    size_t v[2] = {0, 1};
    lw_comparison *c = run(m, v, 2, 2000, 1, 1);
    assert_int_equal(c->nrows, 2);
    /* closed form: 0.01 * 0.1 * 1 and 0.01 * 1 * 0.02 */
    assert_close(c->baseline.probability, 1e-3, 1e-12);
    assert_close(c->baseline.per_year, 10.0, 1e-12);
    assert_close(c->baseline.one_in, 1000.0, 1e-12);
    assert_true(c->baseline.variant == LW_NONE);
    const lw_compare_row *r = &c->rows[0];
    assert_close(r->probability, 2e-4, 1e-12);
    assert_close(r->ratio, 0.2, 1e-9);
    /* closed form: (1e-3 - 2e-4) * 10000 = 8 a year; 1 / 8e-4 = 1250 */
    assert_close(r->prevented_per_year, 8.0, 1e-9);
    assert_true(r->reduces);
    assert_close(r->checks_per_prevented, 1250.0, 1e-9);
    /* points only: every paired sample is better */
    assert_close(r->prob_better, 1.0, 1e-15);
    assert_close(r->ratio_p50, 0.2, 1e-9);
    /* a change for the worse: ratio 3, negative prevention, no checks */
    const lw_compare_row *w = &c->rows[1];
    assert_close(w->ratio, 3.0, 1e-9);
    assert_close(w->prevented_per_year, -20.0, 1e-9);
    assert_false(w->reduces);
    assert_true(w->prob_better == 0.0);
    assert_close(w->prob_worse, 1.0, 1e-15);
    lw_comparison_free(c);
    lw_model_free(m);
}

static void test_point_exact_demo(void **state)
{
    (void)state;
    lw_error err = LW_ERROR_INIT;
    lw_model *m = NULL;
    assert_int_equal(lw_model_load_file(tu_source_path("trees/infusion.xml"),
                                        NULL, &m, &err), LW_OK);
    lw_error_clear(&err);
    size_t v[8], nv = 0;
    for (size_t i = 0; i < m->nvariants && nv < 8; i++)
        v[nv++] = i;
    assert_true(nv >= 2);
    lw_comparison *c = run(m, v, nv, 3000, 1, 2);
    /* exact BDD probabilities (tu_prob: the analysis path, independent of
     * the sampler) and their ratios to 1e-9 */
    double Pb = tu_prob(m, LW_NONE, 0);
    assert_close(c->baseline.probability, Pb, 1e-12);
    for (size_t i = 0; i < nv; i++) {
        double Pv = tu_prob(m, v[i], 0);
        assert_close(c->rows[i].probability, Pv, 1e-12);
        assert_close(c->rows[i].ratio, Pv / Pb, 1e-9);
        assert_close(c->rows[i].prevented_per_year,
                     (Pb - Pv) * m->per_year, 1e-9);
    }
    lw_comparison_free(c);
    lw_model_free(m);
}

/* ---- prob_better in closed form ------------------------------------------- */

static void test_prob_better_closed_form(void **state)
{
    (void)state;
    /* A: median 0.1, EF 3; B: median 0.05, EF 5; the variant replaces A
     * by B.  P is e * A (baseline) and e * B (variant), so the variant is
     * better exactly when B < A, and
     *   P(B < A) = Phi((muA - muB) / sqrt(sA^2 + sB^2))
     * (closed form: difference of independent normals), with
     * sigma = ln(EF) / 1.6448536 and mean = median exp(sigma^2 / 2)
     * (methods.md §5.1). */
    double mA = 0.1, mB = 0.05;
    double sA = log(3.0) / 1.6448536, sB = log(5.0) / 1.6448536;
    lw_model *m = load_fmt(
        "<safety-model format=\"1\" id=\"t\">"
        "<hazard id=\"h\"><all>"
        "<error id=\"e\" p=\"0.001\"/>"
        "<safeguard id=\"a\" p=\"%.17g\"><lognormal error-factor=\"3\"/>"
        "</safeguard>"
        "<safeguard id=\"b\" p=\"%.17g\" present=\"no\">"
        "<lognormal error-factor=\"5\"/></safeguard>"
        "</all></hazard>"
        "<variant id=\"replace\"><set ref=\"a\" present=\"no\"/>"
        "<set ref=\"b\" present=\"yes\"/></variant>"
        "</safety-model>",
        mA * exp(0.5 * sA * sA), mB * exp(0.5 * sB * sB));
    size_t v = 0;
    lw_comparison *c = run(m, &v, 1, 100000, 17, 2);
    double s = sqrt(sA * sA + sB * sB);
    double expect = gsl_cdf_ugaussian_P((log(mA) - log(mB)) / s);
    assert_close(c->rows[0].prob_better, expect, 0.03);
    /* ties only where both draws are clipped at 1 (P(B > 1) is about
     * 1e-3, closed form), so better + worse is 1 to within 1e-3 */
    assert_close(c->rows[0].prob_better + c->rows[0].prob_worse, 1.0, 1e-3);
    /* the ratio B / A is lognormal, median mB / mA, sigma s (closed form):
     * its 5, 50 and 95 % points */
    assert_close(c->rows[0].ratio_p50, mB / mA, 0.03);
    assert_close(c->rows[0].ratio_p05, mB / mA * exp(-1.6448536 * s), 0.03);
    assert_close(c->rows[0].ratio_p95, mB / mA * exp(1.6448536 * s), 0.03);
    /* point ratio: the means' ratio (closed form) */
    assert_close(c->rows[0].ratio,
                 mB * exp(0.5 * sB * sB) / (mA * exp(0.5 * sA * sA)), 1e-9);
    lw_comparison_free(c);
    lw_model_free(m);
}

/* ---- pairing --------------------------------------------------------------- */

static void test_pairing_exact(void **state)
{
    (void)state;
    /* a variant that changes nothing: with paired draws every sample ties
     * (common practice, no source: a paired comparison of a thing with
     * itself shows no difference) */
    lw_model *m = tu_load(
        "<safety-model format=\"1\" id=\"t\">"
        "<hazard id=\"h\"><all>"
        "<error id=\"e\" p=\"0.001\"><lognormal error-factor=\"5\"/></error>"
        "<safeguard id=\"s\" p=\"0.2\"><beta a=\"2\" b=\"8\"/></safeguard>"
        "<safeguard id=\"u\" p=\"0.5\"><uniform low=\"0.4\" high=\"0.6\"/>"
        "</safeguard>"
        "<safeguard id=\"o\"><observed count=\"3\" of=\"50\"/></safeguard>"
        "</all></hazard>"
        "<variant id=\"same\"><set ref=\"e\" p=\"0.001\"/></variant>"
        "</safety-model>");
    size_t v = 0;
    lw_comparison *c = run(m, &v, 1, 5000, 3, 1);
    const lw_compare_row *r = &c->rows[0];
    assert_true(r->prob_better == 0.0);
    assert_true(r->prob_worse == 0.0);
    assert_true(r->ratio_p05 == 1.0 && r->ratio_p50 == 1.0 &&
                r->ratio_p95 == 1.0);
    assert_memory_equal(&r->mean, &c->baseline.mean, sizeof r->mean);
    /* the baseline row equals the uncertainty run with the same seed */
    lw_mc_options mc;
    lw_mc_options_init(&mc);
    mc.samples = 5000;
    mc.seed = 3;
    lw_error err = LW_ERROR_INIT;
    lw_uncertainty *u = NULL;
    assert_int_equal(lw_uncertainty_run(m, LW_NONE, 0, NULL, &mc, &u, &err),
                     LW_OK);
    assert_memory_equal(&u->mean, &c->baseline.mean, sizeof u->mean);
    assert_memory_equal(&u->p95, &c->baseline.p95, sizeof u->p95);
    lw_uncertainty_free(u);
    lw_comparison_free(c);
    lw_model_free(m);
}

static void test_threads_identical(void **state)
{
    (void)state;
    lw_error err = LW_ERROR_INIT;
    lw_model *m = NULL;
    assert_int_equal(lw_model_load_file(tu_source_path("trees/infusion.xml"),
                                        NULL, &m, &err), LW_OK);
    lw_error_clear(&err);
    size_t v[2] = {0, 1};
    size_t n = 5 * LW_MC_BLOCK + 3;
    lw_comparison *a = run(m, v, 2, n, 99, 1);
    lw_comparison *b = run(m, v, 2, n, 99, 2);
    for (size_t i = 0; i <= a->nrows; i++) {
        const lw_compare_row *x = i ? &a->rows[i - 1] : &a->baseline;
        const lw_compare_row *y = i ? &b->rows[i - 1] : &b->baseline;
        assert_memory_equal(&x->mean, &y->mean, sizeof x->mean);
        assert_memory_equal(&x->p05, &y->p05, sizeof x->p05);
        assert_memory_equal(&x->p95, &y->p95, sizeof x->p95);
        assert_memory_equal(&x->prob_better, &y->prob_better,
                            sizeof x->prob_better);
        assert_memory_equal(&x->ratio_p50, &y->ratio_p50,
                            sizeof x->ratio_p50);
    }
    lw_comparison_free(a);
    lw_comparison_free(b);
    lw_model_free(m);
}

static void test_needs_variant(void **state)
{
    (void)state;
    lw_model *m = tu_load(
        "<safety-model format=\"1\" id=\"t\">"
        "<hazard id=\"h\"><error id=\"e\" p=\"0.01\"/></hazard>"
        "</safety-model>");
    lw_error err = LW_ERROR_INIT;
    lw_comparison *c = NULL;
    assert_int_equal(lw_compare_run(m, 0, NULL, 0, NULL, NULL, &c, &err),
                     LW_EUSAGE);
    assert_null(c);
    lw_error_clear(&err);
    lw_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_point_closed_form),
        cmocka_unit_test(test_point_exact_demo),
        cmocka_unit_test(test_prob_better_closed_form),
        cmocka_unit_test(test_pairing_exact),
        cmocka_unit_test(test_threads_identical),
        cmocka_unit_test(test_needs_variant),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
