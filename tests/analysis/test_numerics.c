/*
 * test_numerics.c - probabilities at the edges of double precision.
 *
 * Risk models multiply many small numbers (a chain of thirty layers that
 * each miss once in ten billion) and take complements of numbers close to
 * 1.  These tests pin the exact probability, the approximations, the
 * importance measures and the targets down to 1e-300 and up to
 * 1 - 1e-16, where a naive 1 - (1 - q) loses every digit.
 *
 * Sources of the expected values (each also named beside its check):
 *   - closed forms: AND = product, OR = 1 - prod(1 - q), k-of-n identical
 *     = sum C(n, j) q^j (1 - q)^(n-j), evaluated here in long double or
 *     exactly (powers of two);
 *   - methods.md §1.4 [D]: q = 1e-17 three times in an OR: the naive
 *     1 - prod(1 - q) gives 0.0, the log1p form 3e-17;
 *   - importance definitions: docs/cli.md ("Definitions the checks hold
 *     you to"); target: required = (goal - a) / B, cli.md.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_statistics_double.h>

#include "analysis/mc_engine.h"
#include "layerwise/alloc.h"
#include "layerwise/analysis.h"
#include "layerwise/target.h"
#include "testutil.h"

#define HEAD "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n" \
             "<safety-model format=\"1\" id=\"edges\">\n"
#define END "</safety-model>\n"

static lw_analysis *analyze(const lw_model *m, size_t hazard)
{
    lw_options o;
    lw_options_init(&o);
    lw_error err = LW_ERROR_INIT;
    lw_analysis *a = NULL;
    lw_status st = lw_analyze(m, LW_NONE, hazard, &o, &a, &err);
    if (st != LW_OK) {
        for (size_t i = 0; i < err.count; i++)
            fprintf(stderr, "%s\n", err.items[i].message);
        lw_error_clear(&err);
        fail_msg("lw_analyze: %s", lw_status_name(st));
    }
    lw_error_clear(&err);
    return a;
}

static const lw_importance *row(const lw_analysis *a, const char *name)
{
    for (size_t i = 0; i < a->nimportance; i++)
        if (!strcmp(a->net->vars[a->importance[i].var].name, name))
            return &a->importance[i];
    fail_msg("no importance row for %s", name);
    return NULL;
}

/* A model whose one hazard is <gate> over n events named x0.. with
 * probability p (all written as p_text). */
static char *chain(const char *gate, int n, const char *p_text)
{
    size_t cap = 256 + (size_t)n * 64;
    char *s = malloc(cap);
    assert_non_null(s);
    size_t o = (size_t)snprintf(s, cap, HEAD "<hazard id=\"h\"><%s>", gate);
    for (int i = 0; i < n; i++)
        o += (size_t)snprintf(s + o, cap - o,
                              "<safeguard id=\"x%d\" p=\"%s\"/>", i, p_text);
    const char *name = strncmp(gate, "vote", 4) ? gate : "vote";
    snprintf(s + o, cap - o, "</%s></hazard>\n" END, name);
    return s;
}

/* ---- 1e-300: thirty layers of 1e-10 ---------------------------------- */

static void test_and_of_thirty(void **state)
{
    (void)state;
    char *xml = chain("all", 30, "1e-10");
    lw_model *m = tu_load(xml);
    free(xml);
    lw_analysis *a = analyze(m, 0);
    /* closed form: the product of the thirty probabilities, in long
     * double, rounded once */
    long double prod = 1;
    for (int i = 0; i < 30; i++)
        prod *= (long double)1e-10;
    double want = (double)prod;
    assert_true(want > 9.99e-301 && want < 1.001e-300);
    assert_close(a->probability, want, 1e-13);
    /* one cut set: rare-event sum and min-cut upper bound equal it; the
     * bound is 1 - (1 - 1e-300), which is 0 unless computed in log space
     * (-expm1(log1p(-q)) = q; closed form) */
    assert_close(a->rare_event, want, 1e-13);
    assert_true(a->mcub_exact);
    assert_close(a->min_cut_upper_bound, want, 1e-13);
    assert_close(a->cut_set_count, 1.0, 0);
    assert_int_equal(a->ncut_sets, 1);
    assert_int_equal(a->cut_sets[0].order, 30);
    assert_close(a->cut_sets[0].probability, want, 1e-13);
    /* closed form: 1 / P */
    assert_close(a->one_in, 1.0 / want, 1e-13);
    /* importance (cli.md): B = product of the other 29 = 1e-290;
     * criticality = B p / P = 1; FV = 1; RAW = 1 / p = 1e10; RRW is
     * undefined (P = 0 without the layer) */
    for (int i = 0; i < 30; i++) {
        char name[8];
        snprintf(name, sizeof name, "x%d", i);
        const lw_importance *r = row(a, name);
        assert_close(r->birnbaum, want / 1e-10, 1e-12);
        assert_close(r->criticality, 1.0, 1e-12);
        assert_close(r->fussell_vesely, 1.0, 1e-12);
        assert_close(r->raw, 1e10, 1e-12);
        assert_false(r->rrw_defined);
        assert_true(r->p_false == 0.0);
    }
    lw_analysis_free(a);

    /* target (cli.md): required = (goal - a) / B with a = 0 and
     * B = 1e-290: a goal of 1e-305 needs 1e-15 from one layer */
    lw_options o;
    lw_options_init(&o);
    lw_error err = LW_ERROR_INIT;
    lw_target *t = NULL;
    assert_int_equal(lw_target_run(m, LW_NONE, 0, 1e-305, &o, &t, &err),
                     LW_OK);
    assert_int_equal(t->nrows, 30);
    for (size_t i = 0; i < t->nrows; i++) {
        assert_true(t->rows[i].reachable);
        assert_true(t->rows[i].has_required);
        assert_close(t->rows[i].required, 1e-305 / (want / 1e-10), 1e-10);
        assert_true(t->rows[i].floor == 0.0);
    }
    lw_target_free(t);
    lw_error_clear(&err);
    lw_model_free(m);
}

/* ---- 1e-17 in an OR: the complement that loses everything -------------- */

static void test_or_of_tiny(void **state)
{
    (void)state;
    char *xml = chain("any", 3, "1e-17");
    lw_model *m = tu_load(xml);
    free(xml);
    lw_analysis *a = analyze(m, 0);
    /* methods.md §1.4 [D]: naive 1 - (1 - 1e-17)^3 = 0.0; correct 3e-17
     * (closed form 3q - 3q^2 + q^3, the q^2 terms below 1e-33) */
    double naive = 1.0 - (1.0 - 1e-17) * (1.0 - 1e-17) * (1.0 - 1e-17);
    assert_true(naive == 0.0);     /* the trap the code must avoid */
    assert_close(a->probability, 3e-17, 1e-14);
    assert_close(a->rare_event, 3e-17, 1e-14);
    assert_true(a->mcub_exact);
    assert_close(a->min_cut_upper_bound, 3e-17, 1e-14);
    /* importance: B = (1 - q)^2 = 1 - 2e-17, which is 1.0 in double
     * (closed form); RAW = 1 / P; RRW = P / (2q - q^2) = 1.5 */
    const lw_importance *r = row(a, "x1");
    assert_close(r->birnbaum, 1.0, 1e-15);
    assert_close(r->raw, 1.0 / 3e-17, 1e-14);
    assert_true(r->rrw_defined);
    assert_close(r->rrw, 1.5, 1e-14);
    assert_close(r->fussell_vesely, 1.0 / 3.0, 1e-14);
    assert_close(r->criticality, 1.0 / 3.0, 1e-14);
    lw_analysis_free(a);
    lw_model_free(m);
}

/* Ten disjoint pairs at 1e-10 x 1e-10: every cut set 1e-20.
 * closed form: MCUB = 1 - (1 - 1e-20)^10 = 1e-19 (to 1e-20 relative),
 * equal to the exact value since the sets share no event. */
static void test_upper_bound_tiny(void **state)
{
    (void)state;
    char xml[4096];
    size_t o = (size_t)snprintf(xml, sizeof xml, HEAD "<hazard id=\"h\"><any>");
    for (int i = 0; i < 10; i++)
        o += (size_t)snprintf(xml + o, sizeof xml - o,
                              "<all><error id=\"e%d\" p=\"1e-10\"/>"
                              "<safeguard id=\"s%d\" p=\"1e-10\"/></all>", i,
                              i);
    snprintf(xml + o, sizeof xml - o, "</any></hazard>\n" END);
    lw_model *m = tu_load(xml);
    lw_analysis *a = analyze(m, 0);
    assert_close(a->probability, 1e-19, 1e-13);
    assert_close(a->rare_event, 1e-19, 1e-13);
    assert_true(a->mcub_exact);
    assert_close(a->min_cut_upper_bound, 1e-19, 1e-13);
    assert_close(a->cut_set_count, 10.0, 0);
    for (size_t i = 0; i < a->ncut_sets; i++) {
        assert_close(a->cut_sets[i].probability, 1e-20, 1e-13);
        assert_close(a->cut_sets[i].share, 0.1, 1e-12);
    }
    /* importance of e3: B = P(s3) * P(no other pair) = 1e-10 (1 - 9e-20)
     * = 1e-10 in double; FV = 1/10; RRW = P / (P - 1e-20) = 10/9 */
    const lw_importance *r = row(a, "e3");
    assert_close(r->birnbaum, 1e-10, 1e-13);
    assert_close(r->fussell_vesely, 0.1, 1e-12);
    assert_true(r->rrw_defined);
    assert_close(r->rrw, 10.0 / 9.0, 1e-12);
    lw_analysis_free(a);
    lw_model_free(m);
}

/* ---- 1 - 1e-16: a layer that nearly always misses ------------------------ */

static void test_near_one(void **state)
{
    (void)state;
    /* "1 - 1e-16" written out: it reads as the double just below 1,
     * 1 - 2^-53 (closed form) */
    lw_model *m = tu_load(HEAD
        "<hazard id=\"or\"><any>"
        "<safeguard id=\"a\" p=\"0.9999999999999999\"/>"
        "<error id=\"b\" p=\"1e-3\"/></any></hazard>\n"
        "<hazard id=\"and\"><all>"
        "<ref to=\"a\"/><error id=\"c\" p=\"1e-3\"/></all></hazard>\n"
        END);
    const double pa = 1.0 - 0x1p-53;
    assert_true(m->nodes[lw_model_find_node(m, "a")].dist.p == pa);

    /* OR: closed form P = 1 - (1 - pa)(1 - pb) = 1 - 2^-53 * 0.999 */
    lw_analysis *a = analyze(m, 0);
    long double want = 1.0L - (long double)0x1p-53 * 0.999L;
    assert_close(a->probability, (double)want, 1e-16);
    assert_true(a->probability < 1.0);
    /* B_b = P(b true) - P(b false) = 1 - pa = 2^-53 exactly (Sterbenz:
     * the subtraction is exact); a naive 1 - p of a rounded P would not
     * be */
    const lw_importance *rb = row(a, "b");
    assert_true(rb->p_true == 1.0);
    assert_true(rb->p_false == pa);
    assert_true(rb->birnbaum == 0x1p-53);
    /* RRW of a = P / P(a false) = P / 1e-3 (closed form) */
    const lw_importance *ra = row(a, "a");
    assert_true(ra->rrw_defined);
    assert_close(ra->rrw, (double)(want / 1e-3L), 1e-15);
    /* B_a = 1 - 1e-3 = 0.999 (closed form) */
    assert_close(ra->birnbaum, 0.999, 1e-15);
    /* MCUB = 1 - (1 - pa)(1 - 1e-3): the same as P (disjoint sets) */
    assert_close(a->min_cut_upper_bound, (double)want, 1e-15);
    lw_analysis_free(a);

    /* AND: P = pa * 1e-3 (closed form); RAW of a = 1 / pa; RRW undefined */
    a = analyze(m, 1);
    assert_close(a->probability, pa * 1e-3, 1e-15);
    const lw_importance *r = row(a, "a");
    assert_close(r->raw, 1.0 / pa, 1e-15);
    assert_true(r->raw > 1.0);
    assert_false(r->rrw_defined);
    lw_analysis_free(a);
    lw_model_free(m);
}

/* ---- the smallest doubles ---------------------------------------------- */

static void test_denormal(void **state)
{
    (void)state;
    /* 4.9e-324 reads as the smallest subnormal, 2^-1074 (closed form);
     * P(e AND s) with s = 1 is that value, and the OR with 1e-300 is
     * 1e-300 + 2^-1074 = 1e-300 in double */
    lw_model *m = tu_load(HEAD
        "<hazard id=\"tiny\"><all><error id=\"e\" p=\"4.9e-324\"/>"
        "<safeguard id=\"s\" p=\"1\"/></all></hazard>\n"
        "<hazard id=\"or\"><any><ref to=\"e\"/>"
        "<error id=\"f\" p=\"1e-300\"/></any></hazard>\n"
        END);
    lw_analysis *a = analyze(m, 0);
    assert_true(a->probability == 0x1p-1074);
    assert_true(a->rare_event == 0x1p-1074);
    assert_true(a->min_cut_upper_bound == 0x1p-1074);
    lw_analysis_free(a);
    a = analyze(m, 1);
    assert_close(a->probability, 1e-300, 1e-15);
    /* share of {e}: 2^-1074 / 1e-300 (closed form), a subnormal ratio */
    for (size_t i = 0; i < a->ncut_sets; i++)
        if (a->cut_sets[i].probability < 1e-310)
            assert_close(a->cut_sets[i].share, 0x1p-1074 / 1e-300, 1e-6);
    lw_analysis_free(a);
    lw_model_free(m);

    /* two subnormal cut sets (the fuzzer's case): listed most likely
     * first, 1e-320 before 2^-1074 (the 40-bit comparison of the search
     * cleared both to zero and listed them the other way round) */
    m = tu_load(HEAD
        "<hazard id=\"or\"><any><error id=\"e\" p=\"4.9e-324\"/>"
        "<error id=\"f\" p=\"1e-320\"/></any></hazard>\n"
        END);
    a = analyze(m, 0);
    assert_int_equal(a->ncut_sets, 2);
    assert_true(a->cut_sets[0].probability > a->cut_sets[1].probability);
    assert_true(a->cut_sets[1].probability == 0x1p-1074);
    lw_analysis_free(a);
    lw_model_free(m);
}

/* 2-of-3 at 1e-100: closed form 3q^2(1 - q) + q^3 = 3e-200 - 2e-300,
 * which is 3e-200 in double */
static void test_vote_tiny(void **state)
{
    (void)state;
    char *xml = chain("vote k=\"2\"", 3, "1e-100");
    lw_model *m = tu_load(xml);
    free(xml);
    lw_analysis *a = analyze(m, 0);
    assert_close(a->probability, 3e-200, 1e-14);
    assert_close(a->rare_event, 3e-200, 1e-14);
    assert_close(a->min_cut_upper_bound, 3e-200, 1e-14);
    /* B = 2q(1 - q) = 2e-100; RAW = 2e-100 / 3e-200 (closed form) */
    const lw_importance *r = row(a, "x0");
    assert_close(r->birnbaum, 2e-100, 1e-14);
    assert_close(r->raw, 2e-100 / 3e-200, 1e-13);
    assert_close(r->rrw, 3.0, 1e-13);
    lw_analysis_free(a);
    lw_model_free(m);
}

/* Thirty layers of 1 - 1e-16 in an AND: closed form pa^30 = 1 - 30 *
 * 2^-53 + ...; the value must not round to 1. */
static void test_and_near_one(void **state)
{
    (void)state;
    char *xml = chain("all", 30, "0.9999999999999999");
    lw_model *m = tu_load(xml);
    free(xml);
    lw_analysis *a = analyze(m, 0);
    long double pa = 1.0L - (long double)0x1p-53;
    long double want = powl(pa, 30);
    assert_close(a->probability, (double)want, 1e-15);
    assert_true(a->probability < 1.0);
    /* how far below 1: 30 * 2^-53 to within 2 ulps of 1 */
    assert_true(fabs((1.0 - a->probability) - 30 * 0x1p-53) <= 2 * 0x1p-53);
    lw_analysis_free(a);
    lw_model_free(m);
}

/* Monte Carlo percentiles: GSL's definition (reference library: within
 * 2 units in the last place of gsl_stats_quantile_from_sorted_data on
 * random data), never outside the samples they lie between, so the 5th
 * percentile never exceeds the median, even when every sample is the same
 * subnormal number (a case the model fuzzer found with GSL's formula). */
static void test_quantiles_ordered(void **state)
{
    (void)state;
    double same[1000];
    for (int i = 0; i < 1000; i++)
        same[i] = 3.5e-310;
    for (double f = 0.0; f <= 1.0; f += 0.01)
        assert_true(lw_mc_quantile(same, 1000, f) == 3.5e-310);
    uint64_t rng = 7;
    double x[777];
    for (int trial = 0; trial < 200; trial++) {
        size_t n = 1 + tu_rand(&rng) % 777;
        for (size_t i = 0; i < n; i++)
            x[i] = trial % 2 ? tu_uniform(&rng) * 1e-300
                             : (double)(tu_rand(&rng) % 5);
        double *s = lw_mc_sorted(x, n);
        assert_non_null(s);
        double last = -1;
        for (double f = 0.0; f <= 1.0; f += 0.05) {
            double q = lw_mc_quantile(s, n, f);
            double g = gsl_stats_quantile_from_sorted_data(s, 1, n, f);
            assert_true(q >= last);
            assert_true(fabs(q - g) <= 2 * DBL_EPSILON * fabs(g) + 1e-320);
            last = q;
        }
        lw_free(s);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_and_of_thirty),
        cmocka_unit_test(test_or_of_tiny),
        cmocka_unit_test(test_upper_bound_tiny),
        cmocka_unit_test(test_near_one),
        cmocka_unit_test(test_denormal),
        cmocka_unit_test(test_vote_tiny),
        cmocka_unit_test(test_and_near_one),
        cmocka_unit_test(test_quantiles_ordered),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
