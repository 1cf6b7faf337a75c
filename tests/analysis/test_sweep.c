/*
 * test_sweep.c - one-event sensitivity sweeps (layerwise sweep).
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "layerwise/uncertainty.h"
#include "testutil.h"

static lw_sweep *sweep(const lw_model *m, const char *ev, double from,
                       double to, size_t steps, bool lg)
{
    lw_error err = LW_ERROR_INIT;
    lw_sweep *s = NULL;
    lw_status st = lw_sweep_run(m, LW_NONE, 0, ev, from, to, steps, lg, NULL,
                                &s, &err);
    if (st != LW_OK) {
        for (size_t i = 0; i < err.count; i++)
            fprintf(stderr, "%s\n", err.items[i].message);
        lw_error_clear(&err);
        fail_msg("sweep failed: %s", lw_status_name(st));
    }
    lw_error_clear(&err);
    return s;
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

/* E.(A + B) with pE = 0.01, pA = 0.3, pB = 0.2 and a tolerable level
 * 4e-3 */
static const char *plain_xml =
    "<safety-model format=\"1\" id=\"t\">"
    "<exposure unit=\"episode\" per-year=\"5000\"/>"
    "<hazard id=\"h\" tolerable=\"0.004\"><all>"
    "<error id=\"e\" p=\"0.01\"/>"
    "<any><safeguard id=\"a\" p=\"0.3\"/><safeguard id=\"b\" p=\"0.2\"/>"
    "</any></all></hazard>"
    "<condition id=\"c\" state=\"false\"/>"
    "</safety-model>";

static void test_linear_plain_event(void **state)
{
    (void)state;
    lw_model *m = tu_load(plain_xml);
    lw_sweep *s = sweep(m, "a", 0.0, 1.0, 11, false);
    /* closed form: P = pE (pA + pB - pA pB) = pE pB + pE (1 - pB) pA */
    double a = 0.01 * 0.2, b = 0.01 * 0.8;
    assert_true(s->linear);
    assert_true(s->in_hazard);
    assert_close(s->a, a, 1e-12);
    assert_close(s->b, b, 1e-12);
    assert_int_equal(s->npoints, 11);
    for (size_t i = 0; i < s->npoints; i++) {
        const lw_sweep_point *p = &s->points[i];
        /* every point on the line, to 1e-12 */
        if (fabs(p->probability - (s->a + s->b * p->x)) > 1e-12)
            fail_msg("point %zu off the line", i);
        assert_close(p->per_year, p->probability * 5000, 1e-12);
    }
    /* closed form: equal steps 0, 0.1, ..., 1 with exact ends */
    assert_true(s->points[0].x == 0.0 && s->points[10].x == 1.0);
    assert_close(s->points[3].x, 0.3, 1e-12);
    /* the as-modelled point: pA = 0.3 (closed form 0.01 * 0.44) */
    assert_close(s->current_p, 0.3, 0);
    assert_close(s->current_probability, 0.0044, 1e-12);
    /* tolerable 0.004 is crossed at x = (0.004 - a) / b = 0.25 (closed
     * form) */
    assert_true(s->has_tolerable);
    assert_true(s->crosses);
    assert_close(s->crossing_x, 0.25, 1e-12);
    lw_sweep_free(s);
    /* a range that never reaches it */
    s = sweep(m, "a", 0.0, 0.2, 5, false);
    assert_false(s->crosses);
    lw_sweep_free(s);
    lw_model_free(m);
}

static void test_log_steps(void **state)
{
    (void)state;
    lw_model *m = tu_load(plain_xml);
    lw_sweep *s = sweep(m, "e", 1e-4, 1e-1, 4, true);
    /* closed form: geometric steps 1e-4, 1e-3, 1e-2, 1e-1 */
    assert_true(s->points[0].x == 1e-4);
    assert_close(s->points[1].x, 1e-3, 1e-12);
    assert_close(s->points[2].x, 1e-2, 1e-12);
    assert_true(s->points[3].x == 1e-1);
    /* closed form: P = x (0.3 + 0.2 - 0.06) */
    for (size_t i = 0; i < 4; i++)
        assert_close(s->points[i].probability, 0.44 * s->points[i].x, 1e-12);
    assert_close(s->a, 0.0, 0);
    assert_close(s->b, 0.44, 1e-12);
    lw_sweep_free(s);
    lw_model_free(m);
}

/* A common-cause member: the curve is not a line; each point must equal
 * the exact probability of the model with that member's p. */
static const char *cc_fmt =
    "<safety-model format=\"1\" id=\"t\">"
    "<hazard id=\"h\" tolerable=\"%s\"><all>"
    "<error id=\"e\" p=\"0.1\"/>"
    "<safeguard id=\"a\" p=\"%.17g\"/><safeguard id=\"b\" p=\"0.2\"/>"
    "</all></hazard>"
    "<common-cause id=\"g\" beta=\"0.3\" members=\"a b\"/>"
    "</safety-model>";

static double cc_prob(double pa)
{
    lw_model *m = load_fmt(cc_fmt, "1e-3", pa);
    double P = tu_prob(m, LW_NONE, 0);
    lw_model_free(m);
    return P;
}

static void test_common_cause_member(void **state)
{
    (void)state;
    lw_model *m = load_fmt(cc_fmt, "0.01", 0.1);
    lw_sweep *s = sweep(m, "a", 0.05, 0.6, 12, false);
    assert_false(s->linear);
    for (size_t i = 0; i < s->npoints; i++)
        assert_close(s->points[i].probability, cc_prob(s->points[i].x),
                     1e-12);
    /* closed form at pa = 0.4: q = 0.3 * min(0.4, 0.2) = 0.06; members
     * (x OR C): P(a and b) = q + (1 - q) ra rb with ra = (0.4 - q)/(1 - q),
     * rb = (0.2 - q)/(1 - q); times pE = 0.1 */
    double q = 0.06, ra = (0.4 - q) / (1 - q), rb = (0.2 - q) / (1 - q);
    assert_close(cc_prob(0.4), 0.1 * (q + (1 - q) * ra * rb), 1e-12);
    /* the crossing is found by bisection: P(crossing) = tolerable */
    assert_true(s->crosses);
    assert_close(cc_prob(s->crossing_x), 0.01, 1e-9);
    lw_sweep_free(s);
    lw_model_free(m);
}

static void test_dependence_second(void **state)
{
    (void)state;
    static const char *fmt =
        "<safety-model format=\"1\" id=\"t\">"
        "<hazard id=\"h\"><all>"
        "<error id=\"e\" p=\"0.01\"/>"
        "<safeguard id=\"n1\" p=\"0.1\"/><safeguard id=\"n2\" p=\"%.17g\"/>"
        "</all></hazard>"
        "<dependence id=\"d\" first=\"n1\" second=\"n2\" level=\"high\"/>"
        "</safety-model>";
    lw_model *m = load_fmt(fmt, 0.1);
    lw_sweep *s = sweep(m, "n2", 0.01, 0.5, 5, false);
    assert_false(s->linear);
    for (size_t i = 0; i < s->npoints; i++) {
        double x = s->points[i].x;
        /* NUREG/CR-1278 ch. 20 (methods.md §3.2): HD conditional
         * (1 + p) / 2, so P = pE * pA * (1 + x) / 2 */
        assert_close(s->points[i].probability, 0.01 * 0.1 * (1 + x) / 2,
                     1e-12);
    }
    lw_sweep_free(s);
    /* the first of a dependence is a plain variable: linear */
    s = sweep(m, "n1", 0.0, 1.0, 3, false);
    assert_true(s->linear);
    assert_close(s->b, 0.01 * (1 + 0.1) / 2, 1e-12);
    lw_sweep_free(s);
    lw_model_free(m);
}

static void test_observed_and_absent(void **state)
{
    (void)state;
    lw_model *m = tu_load(
        "<safety-model format=\"1\" id=\"t\">"
        "<hazard id=\"h\"><all>"
        "<error id=\"e\" p=\"0.01\"/>"
        "<safeguard id=\"o\"><observed count=\"0\" of=\"300\"/></safeguard>"
        "<safeguard id=\"x\" p=\"0.5\" present=\"no\"/>"
        "</all></hazard></safety-model>");
    lw_sweep *s = sweep(m, "o", 0.0, 0.1, 3, false);
    assert_true(s->observed);
    /* methods.md §6.3 [D]: 0/300: Jeffreys mean 1.66113e-3, rule of 3
     * 0.01 */
    assert_close(s->obs.est.mean, 1.66113e-3, 1e-5);
    assert_close(s->obs.est.rule_of_three, 0.01, 1e-12);
    assert_close(s->current_p, 1.66113e-3, 1e-5);
    lw_sweep_free(s);
    /* an absent safeguard is swept as if present */
    s = sweep(m, "x", 0.0, 1.0, 3, false);
    assert_true(s->was_absent);
    assert_close(s->current_p, 1.0, 0);
    /* closed form: 0.01 * (0.5 / 301) * x */
    assert_close(s->points[1].probability, 0.01 * (0.5 / 301) * 0.5, 1e-12);
    lw_sweep_free(s);
    lw_model_free(m);
}

static void test_errors(void **state)
{
    (void)state;
    lw_model *m = tu_load(plain_xml);
    lw_error err = LW_ERROR_INIT;
    lw_sweep *s = NULL;
    assert_int_equal(lw_sweep_run(m, LW_NONE, 0, "nope", 0, 1, 5, false, NULL,
                                  &s, &err), LW_EUSAGE);
    assert_int_equal(lw_sweep_run(m, LW_NONE, 0, "c", 0, 1, 5, false, NULL,
                                  &s, &err), LW_EUSAGE);
    assert_int_equal(lw_sweep_run(m, LW_NONE, 0, "a", 0.5, 0.5, 5, false,
                                  NULL, &s, &err), LW_EUSAGE);
    assert_int_equal(lw_sweep_run(m, LW_NONE, 0, "a", 0, 1.5, 5, false, NULL,
                                  &s, &err), LW_EUSAGE);
    assert_int_equal(lw_sweep_run(m, LW_NONE, 0, "a", 0, 1, 5, true, NULL,
                                  &s, &err), LW_EUSAGE);
    assert_int_equal(lw_sweep_run(m, LW_NONE, 0, "a", 0, 1, 1, false, NULL,
                                  &s, &err), LW_EUSAGE);
    assert_null(s);
    lw_error_clear(&err);
    lw_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_linear_plain_event),
        cmocka_unit_test(test_log_steps),
        cmocka_unit_test(test_common_cause_member),
        cmocka_unit_test(test_dependence_second),
        cmocka_unit_test(test_observed_and_absent),
        cmocka_unit_test(test_errors),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
