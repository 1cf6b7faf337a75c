/*
 * test_measures.c - lw_analyze: minimal cut sets, the rare-event and
 * min-cut upper bound approximations, and importance measures on the
 * worked examples of methods.md, plus the listing options (top, cutoff,
 * max-order) and a family too large to enumerate.
 *
 * Fussell-Vesely is the form cli.md defines: (sum of probabilities of the
 * minimal cut sets holding x) / (sum over all minimal cut sets); in
 * methods.md's tables that is the column "FV REA" / "FV (REA ratio)".
 * RRW is null (rrw_defined false) when P(hazard | x false) = 0 (cli.md;
 * methods.md writes infinity).
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "layerwise/analysis.h"
#include "testutil.h"

#define EXACT 1e-12     /* source exact: [D] rationals, closed forms */
#define HEAD "<safety-model format=\"1\" id=\"measures\">"
#define TAIL "</safety-model>"

/* ---- helpers ------------------------------------------------------------ */

typedef struct fixture {
    lw_model *m;
    lw_analysis *a;
} fixture;

static fixture analyze(const char *xml, const lw_options *opt)
{
    fixture f = {tu_load(xml), NULL};
    lw_error err = LW_ERROR_INIT;
    if (lw_analyze(f.m, LW_NONE, 0, opt, &f.a, &err) != LW_OK) {
        for (size_t i = 0; i < err.count; i++)
            fprintf(stderr, "%s\n", err.items[i].message);
        fail_msg("analyze failed");
    }
    lw_error_clear(&err);
    return f;
}

static void release(fixture *f)
{
    lw_analysis_free(f->a);
    lw_model_free(f->m);
}

static const char *var_name(const lw_analysis *a, uint32_t v)
{
    return a->net->vars[v].name;
}

static const lw_importance *row(const lw_analysis *a, const char *id)
{
    for (size_t i = 0; i < a->nimportance; i++)
        if (strcmp(var_name(a, a->importance[i].var), id) == 0)
            return &a->importance[i];
    fail_msg("no importance row for %s", id);
    return NULL;
}

/* Cut set i as "a b c" (ids in the library's order, which must be
 * sorted). */
static void set_text(const lw_analysis *a, size_t i, char *buf, size_t cap)
{
    const lw_cut_set *c = &a->cut_sets[i];
    size_t len = 0;
    buf[0] = 0;
    for (size_t k = 0; k < c->order; k++) {
        if (k)
            assert_true(strcmp(var_name(a, c->vars[k - 1]),
                               var_name(a, c->vars[k])) < 0);
        len += (size_t)snprintf(buf + len, cap - len, "%s%s", k ? " " : "",
                                var_name(a, c->vars[k]));
    }
}

static void expect_set(const lw_analysis *a, size_t i, const char *text,
                       double p, double tol)
{
    char buf[512];
    assert_true(i < a->ncut_sets);
    set_text(a, i, buf, sizeof buf);
    assert_string_equal(buf, text);
    assert_close(a->cut_sets[i].probability, p, tol);
}

/* A value printed to a fixed number of digits: within half a unit of
 * the last printed digit. */
#define assert_printed(x, printed, half_unit)                              \
    do {                                                                   \
        double x_ = (x);                                                   \
        if (!(fabs(x_ - (printed)) <= (half_unit)))                        \
            fail_msg("%s = %.17g, printed value %.10g", #x, x_,            \
                     (double)(printed));                                   \
    } while (0)

/* Sets listed in decreasing probability; share = P(set) / REA. */
static void check_listing(const lw_analysis *a)
{
    double covered = 0;
    for (size_t i = 0; i < a->ncut_sets; i++) {
        if (i)
            assert_true(a->cut_sets[i].probability <=
                        a->cut_sets[i - 1].probability);
        covered += a->cut_sets[i].probability;
        assert_close(a->cut_sets[i].share,
                     a->cut_sets[i].probability / a->rare_event, EXACT);
    }
    assert_close(a->covered, covered, EXACT);
    if (!a->truncated)
        assert_close(a->covered, a->rare_event, EXACT);
}

typedef struct expect_row {
    const char *id;
    double birnbaum, criticality, fv, raw, rrw;   /* rrw < 0: null */
} expect_row;

static void expect_rows(const lw_analysis *a, const expect_row *rows,
                        size_t n, double tol)
{
    assert_int_equal(a->nimportance, n);
    for (size_t i = 0; i < a->nimportance; i++)
        if (i)
            assert_true(a->importance[i].birnbaum <=
                        a->importance[i - 1].birnbaum);
    for (size_t i = 0; i < n; i++) {
        const lw_importance *r = row(a, rows[i].id);
        assert_close(r->birnbaum, rows[i].birnbaum, tol);
        assert_close(r->criticality, rows[i].criticality, tol);
        assert_close(r->fussell_vesely, rows[i].fv, tol);
        assert_close(r->raw, rows[i].raw, tol);
        if (rows[i].rrw < 0) {
            if (r->rrw_defined)
                fail_msg("RRW of %s = %.17g (p_false %.17g); P(hazard | %s "
                         "false) = 0, so it must be null", rows[i].id,
                         r->rrw, r->p_false, rows[i].id);
        } else {
            assert_true(r->rrw_defined);
            assert_close(r->rrw, rows[i].rrw, tol);
            /* q RAW + (1 - q)/RRW = 1 (methods.md §2.2 [D]) */
            assert_close(r->p * r->raw + (1 - r->p) / r->rrw, 1.0, 1e-12);
        }
        /* P(x true) = P + (1 - q) I_B, P(x false) = P - q I_B
         * (methods.md §2.2 [D]) */
        assert_close(r->p_true, a->probability + (1 - r->p) * r->birnbaum,
                     1e-12);
    }
}

/* ---- §1.5: T = (A + B + C)(C + AB) ---------------------------------- */

static void test_boolean_reduction_example(void **state)
{
    (void)state;
    fixture f = analyze(HEAD "<hazard id=\"T\"><all>"
        "<any><error id=\"A\" p=\"0.1\"/><any><error id=\"B\" p=\"0.2\"/>"
        "<error id=\"C\" p=\"0.3\"/></any></any>"
        "<any><ref to=\"C\"/><all><ref to=\"A\"/><ref to=\"B\"/></all></any>"
        "</all></hazard>" TAIL, NULL);
    const lw_analysis *a = f.a;
    /* methods.md §1.5 [D]: MCS {C}, {A,B}; P 0.314; REA 0.32; MCUB 0.314 */
    assert_close(a->probability, 0.314, EXACT);
    assert_true(a->cut_set_count == 2);
    assert_int_equal(a->ncut_sets, 2);
    expect_set(a, 0, "C", 0.3, EXACT);
    expect_set(a, 1, "A B", 0.02, EXACT);
    assert_close(a->rare_event, 0.32, EXACT);
    assert_true(a->mcub_exact);
    assert_close(a->min_cut_upper_bound, 0.314, EXACT);
    assert_false(a->truncated);
    check_listing(a);
    /* methods.md §1.5 importance table [D] (exact rationals) */
    const expect_row rows[] = {
        {"A", 0.14, 7.0 / 157, 1.0 / 16, 220.0 / 157, 157.0 / 150},
        {"B", 0.07, 7.0 / 157, 1.0 / 16, 185.0 / 157, 157.0 / 150},
        {"C", 0.98, 147.0 / 157, 15.0 / 16, 500.0 / 157, 15.7},
    };
    expect_rows(a, rows, 3, EXACT);
    assert_string_equal(var_name(a, a->importance[0].var), "C");
    assert_string_equal(var_name(a, a->importance[1].var), "A");
    assert_string_equal(var_name(a, a->importance[2].var), "B");
    release(&f);
}

/* ---- §1.6: pressure tank ------------------------------------------- */

static const char *const tank = HEAD
    "<hazard id=\"TOP\"><any>"
    "<error id=\"T\" p=\"5e-6\"/>"
    "<any><safeguard id=\"K2\" p=\"3e-5\"/>"
    "<all><safeguard id=\"S\" p=\"1e-4\"/>"
    "<any><safeguard id=\"S1\" p=\"3e-5\"/>"
    "<any><safeguard id=\"K1\" p=\"3e-5\"/><safeguard id=\"R\" p=\"1e-4\"/>"
    "</any></any></all></any></any></hazard>" TAIL;

static void test_pressure_tank(void **state)
{
    (void)state;
    fixture f = analyze(tank, NULL);
    const lw_analysis *a = f.a;
    /* methods.md §1.6 [D] */
    assert_close(a->probability, 3.501584875003555e-5, EXACT);
    assert_close(a->rare_event, 3.5016e-5, EXACT);
    assert_close(a->min_cut_upper_bound, 3.50158494399334e-5, 1e-13);
    assert_true(a->cut_set_count == 5);
    assert_int_equal(a->ncut_sets, 5);
    expect_set(a, 0, "K2", 3e-5, EXACT);
    expect_set(a, 1, "T", 5e-6, EXACT);
    expect_set(a, 2, "R S", 1e-8, EXACT);
    /* {K1,S} and {S,S1} tie at 3e-9: either order */
    char s3[64], s4[64];
    set_text(a, 3, s3, sizeof s3);
    set_text(a, 4, s4, sizeof s4);
    assert_true((strcmp(s3, "K1 S") == 0 && strcmp(s4, "S S1") == 0) ||
                (strcmp(s3, "S S1") == 0 && strcmp(s4, "K1 S") == 0));
    assert_close(a->cut_sets[3].probability, 3e-9, EXACT);
    assert_close(a->cut_sets[4].probability, 3e-9, EXACT);
    check_listing(a);
    /* Birnbaum: T 0.99996998, K2 0.99999498 (8 digits), S 1.599875e-4,
     * S1 and K1 9.998350e-5, R 9.999050e-5 (7 digits) */
    assert_printed(row(a, "T")->birnbaum, 0.99996998, 5e-9);
    assert_printed(row(a, "K2")->birnbaum, 0.99999498, 5e-9);
    assert_printed(row(a, "S")->birnbaum, 1.599875e-4, 5e-11);
    assert_printed(row(a, "S1")->birnbaum, 9.998350e-5, 5e-12);
    assert_printed(row(a, "K1")->birnbaum, 9.998350e-5, 5e-12);
    assert_printed(row(a, "R")->birnbaum, 9.999050e-5, 5e-12);
    /* criticality: K2 0.856751, T 0.142788, S 4.56900e-4 (6 digits) */
    assert_printed(row(a, "K2")->criticality, 0.856751, 5e-7);
    assert_printed(row(a, "T")->criticality, 0.142788, 5e-7);
    assert_printed(row(a, "S")->criticality, 4.56900e-4, 5e-10);
    /* RAW(T) = RAW(K2) = 28558.497; RRW(K2) = 6.980832 */
    assert_printed(row(a, "T")->raw, 28558.497, 5e-4);
    assert_printed(row(a, "K2")->raw, 28558.497, 5e-4);
    assert_true(row(a, "K2")->rrw_defined);
    assert_printed(row(a, "K2")->rrw, 6.980832, 5e-7);
    /* FV, cli.md form, from the cut sets above: K2 3e-5 / 3.5016e-5 */
    assert_close(row(a, "K2")->fussell_vesely, 3e-5 / 3.5016e-5, EXACT);
    assert_close(row(a, "S")->fussell_vesely, 1.6e-8 / 3.5016e-5, EXACT);
    assert_close(row(a, "R")->fussell_vesely, 1e-8 / 3.5016e-5, EXACT);
    /* ranking by Birnbaum: K2, T, S, then R, then S1/K1 */
    assert_string_equal(var_name(a, a->importance[0].var), "K2");
    assert_string_equal(var_name(a, a->importance[1].var), "T");
    assert_string_equal(var_name(a, a->importance[2].var), "S");
    assert_string_equal(var_name(a, a->importance[3].var), "R");
    assert_close(row(a, "S1")->fussell_vesely, 3e-9 / 3.5016e-5, EXACT);
    assert_close(row(a, "K1")->fussell_vesely, 3e-9 / 3.5016e-5, EXACT);
    assert_int_equal(a->nimportance, 6);
    release(&f);
}

/* ---- §2.3: A (B + C) ---------------------------------------------------- */

static void test_a_and_b_or_c(void **state)
{
    (void)state;
    const char *fmt = HEAD "<hazard id=\"h\"><all><error id=\"A\" p=\"%s\"/>"
        "<any><safeguard id=\"B\" p=\"%s\"/><safeguard id=\"C\" p=\"%s\"/>"
        "</any></all></hazard>" TAIL;
    char xml[1024];
    snprintf(xml, sizeof xml, fmt, "0.1", "0.2", "0.3");
    fixture f = analyze(xml, NULL);
    /* methods.md §1.7 and §2.3 [D] */
    assert_close(f.a->probability, 0.044, EXACT);
    assert_close(f.a->rare_event, 0.05, EXACT);
    assert_close(f.a->min_cut_upper_bound, 0.0494, EXACT);
    expect_set(f.a, 0, "A C", 0.03, EXACT);
    expect_set(f.a, 1, "A B", 0.02, EXACT);
    check_listing(f.a);
    const expect_row r1[] = {
        {"A", 0.44, 1.0, 1.0, 10.0, -1},
        {"B", 0.07, 7.0 / 22, 0.4, 25.0 / 11, 22.0 / 15},
        {"C", 0.08, 6.0 / 11, 0.6, 25.0 / 11, 2.2},
    };
    expect_rows(f.a, r1, 3, EXACT);
    release(&f);

    snprintf(xml, sizeof xml, fmt, "0.01", "0.02", "0.05");
    f = analyze(xml, NULL);
    assert_close(f.a->probability, 6.9e-4, EXACT);
    assert_close(f.a->rare_event, 7.0e-4, EXACT);
    assert_close(f.a->min_cut_upper_bound, 6.999e-4, EXACT);
    const expect_row r2[] = {
        {"A", 0.069, 1.0, 1.0, 100.0, -1},
        {"B", 0.0095, 19.0 / 69, 2.0 / 7, 1000.0 / 69, 1.38},
        {"C", 0.0098, 49.0 / 69, 5.0 / 7, 1000.0 / 69, 3.45},
    };
    expect_rows(f.a, r2, 3, EXACT);
    release(&f);
}

/* A three-event AND: every event is necessary, so P(hazard | x false) = 0
 * and RRW is null for each (cli.md).  P - q I_B left a residue of
 * 3.5e-18 for C (P = 0.1 x 0.3 x 0.7, closed form), which gave RRW
 * 6.05e15 instead of null before analyze.c treated a residue at the
 * rounding level of P as zero. */
static void test_rrw_null_when_necessary(void **state)
{
    (void)state;
    fixture f = analyze(HEAD "<hazard id=\"h\"><all><error id=\"A\" "
        "p=\"0.1\"/><safeguard id=\"B\" p=\"0.3\"/>"
        "<safeguard id=\"C\" p=\"0.7\"/></all></hazard>" TAIL, NULL);
    assert_close(f.a->probability, 0.1 * 0.3 * 0.7, EXACT);
    /* I_B = product of the others; criticality = FV = 1; RAW = 1/q
     * (closed forms) */
    const expect_row rows[] = {
        {"A", 0.21, 1.0, 1.0, 10.0, -1},
        {"B", 0.07, 1.0, 1.0, 1.0 / 0.3, -1},
        {"C", 0.03, 1.0, 1.0, 1.0 / 0.7, -1},
    };
    expect_rows(f.a, rows, 3, EXACT);
    for (size_t i = 0; i < 3; i++)
        assert_true(f.a->importance[i].p_false == 0.0);
    release(&f);
}

/* ---- §2.4: 2-of-3 ------------------------------------------------------- */

static void test_two_of_three(void **state)
{
    (void)state;
    const char *fmt = HEAD "<hazard id=\"h\"><vote k=\"2\">"
        "<safeguard id=\"A\" p=\"%s\"/><safeguard id=\"B\" p=\"%s\"/>"
        "<safeguard id=\"C\" p=\"%s\"/></vote></hazard>" TAIL;
    char xml[1024];
    snprintf(xml, sizeof xml, fmt, "0.1", "0.1", "0.1");
    fixture f = analyze(xml, NULL);
    /* methods.md §2.4 symmetric [D] */
    assert_close(f.a->probability, 0.028, EXACT);
    assert_close(f.a->rare_event, 0.03, EXACT);
    assert_close(f.a->min_cut_upper_bound, 0.029701, EXACT);
    assert_true(f.a->cut_set_count == 3);
    check_listing(f.a);
    const expect_row r1[] = {
        {"A", 0.18, 9.0 / 14, 2.0 / 3, 95.0 / 14, 2.8},
        {"B", 0.18, 9.0 / 14, 2.0 / 3, 95.0 / 14, 2.8},
        {"C", 0.18, 9.0 / 14, 2.0 / 3, 95.0 / 14, 2.8},
    };
    expect_rows(f.a, r1, 3, EXACT);
    release(&f);

    snprintf(xml, sizeof xml, fmt, "0.01", "0.02", "0.05");
    f = analyze(xml, NULL);
    /* methods.md §2.4 asymmetric [D] */
    assert_close(f.a->probability, 0.00168, EXACT);
    assert_close(f.a->rare_event, 0.0017, EXACT);
    assert_close(f.a->min_cut_upper_bound, 0.0016992001, EXACT);
    expect_set(f.a, 0, "B C", 0.001, EXACT);
    expect_set(f.a, 1, "A C", 0.0005, EXACT);
    expect_set(f.a, 2, "A B", 0.0002, EXACT);
    check_listing(f.a);
    const expect_row r2[] = {
        {"A", 0.068, 17.0 / 42, 7.0 / 17, 575.0 / 14, 1.68},
        {"B", 0.059, 59.0 / 84, 12.0 / 17, 425.0 / 12, 3.36},
        {"C", 0.0296, 37.0 / 42, 15.0 / 17, 745.0 / 42, 8.4},
    };
    expect_rows(f.a, r2, 3, EXACT);
    release(&f);
}

/* ---- §2.5 / §8.4: bridge ------------------------------------------------ */

static const char *const bridge_fmt = HEAD
    "<safeguard id=\"c1\" p=\"%s\"/><safeguard id=\"c2\" p=\"%s\"/>"
    "<safeguard id=\"c3\" p=\"%s\"/><safeguard id=\"c4\" p=\"%s\"/>"
    "<safeguard id=\"c5\" p=\"%s\"/>"
    "<hazard id=\"h\"><any>"
    "<all><ref to=\"c1\"/><ref to=\"c2\"/></all>"
    "<all><ref to=\"c4\"/><ref to=\"c5\"/></all>"
    "<all><ref to=\"c1\"/><ref to=\"c3\"/><ref to=\"c5\"/></all>"
    "<all><ref to=\"c2\"/><ref to=\"c3\"/><ref to=\"c4\"/></all>"
    "</any></hazard>" TAIL;

static void test_bridge(void **state)
{
    (void)state;
    char xml[2048];
    snprintf(xml, sizeof xml, bridge_fmt, "0.1", "0.1", "0.1", "0.1", "0.1");
    fixture f = analyze(xml, NULL);
    /* methods.md §8.4 / §2.5 [D] */
    assert_close(f.a->probability, 0.02152, EXACT);
    assert_close(f.a->rare_event, 0.022, EXACT);
    assert_close(f.a->min_cut_upper_bound, 0.0218592199, EXACT);
    assert_true(f.a->cut_set_count == 4);
    check_listing(f.a);
    /* orders 2 first, then 3, ids sorted inside */
    char s[4][64];
    for (int i = 0; i < 4; i++)
        set_text(f.a, (size_t)i, s[i], sizeof s[i]);
    assert_true((!strcmp(s[0], "c1 c2") && !strcmp(s[1], "c4 c5")) ||
                (!strcmp(s[0], "c4 c5") && !strcmp(s[1], "c1 c2")));
    assert_true((!strcmp(s[2], "c1 c3 c5") && !strcmp(s[3], "c2 c3 c4")) ||
                (!strcmp(s[2], "c2 c3 c4") && !strcmp(s[3], "c1 c3 c5")));
    const expect_row r1[] = {
        {"c1", 0.1062, 531.0 / 1076, 0.5, 5855.0 / 1076, 1076.0 / 545},
        {"c2", 0.1062, 531.0 / 1076, 0.5, 5855.0 / 1076, 1076.0 / 545},
        {"c3", 0.0162, 81.0 / 1076, 1.0 / 11, 1805.0 / 1076, 1076.0 / 995},
        {"c4", 0.1062, 531.0 / 1076, 0.5, 5855.0 / 1076, 1076.0 / 545},
        {"c5", 0.1062, 531.0 / 1076, 0.5, 5855.0 / 1076, 1076.0 / 545},
    };
    expect_rows(f.a, r1, 5, EXACT);
    release(&f);

    snprintf(xml, sizeof xml, bridge_fmt, "0.01", "0.02", "0.03", "0.04",
             "0.05");
    f = analyze(xml, NULL);
    /* methods.md §8.4 [D]: Q, REA, MCUB (8 digits), Birnbaum */
    assert_close(f.a->probability, 0.002236284, EXACT);
    assert_close(f.a->rare_event, 0.002239, EXACT);
    assert_printed(f.a->min_cut_upper_bound, 0.0022385139, 5e-11);
    expect_set(f.a, 0, "c4 c5", 0.002, EXACT);
    expect_set(f.a, 1, "c1 c2", 0.0002, EXACT);
    expect_set(f.a, 2, "c2 c3 c4", 0.000024, EXACT);
    expect_set(f.a, 3, "c1 c3 c5", 0.000015, EXACT);
    assert_close(row(f.a, "c1")->birnbaum, 0.0213484, EXACT);
    assert_close(row(f.a, "c2")->birnbaum, 0.0110942, EXACT);
    assert_close(row(f.a, "c3")->birnbaum, 0.0012228, EXACT);
    assert_close(row(f.a, "c4")->birnbaum, 0.0505396, EXACT);
    assert_close(row(f.a, "c5")->birnbaum, 0.04025048, EXACT);
    release(&f);
}

/* ---- listing options ------------------------------------------------- */

static void test_top_cutoff_max_order(void **state)
{
    (void)state;
    lw_options o;
    /* --top 2: the two most probable, truncated, covered = their sum
     * (cli.md) */
    lw_options_init(&o);
    o.top = 2;
    fixture f = analyze(tank, &o);
    assert_int_equal(f.a->ncut_sets, 2);
    assert_true(f.a->truncated);
    expect_set(f.a, 0, "K2", 3e-5, EXACT);
    expect_set(f.a, 1, "T", 5e-6, EXACT);
    assert_close(f.a->covered, 3.5e-5, EXACT);
    /* the count, REA, MCUB and FV use the untruncated family (cli.md) */
    assert_true(f.a->cut_set_count == 5);
    assert_close(f.a->rare_event, 3.5016e-5, EXACT);
    assert_close(f.a->min_cut_upper_bound, 3.50158494399334e-5, 1e-13);
    assert_close(row(f.a, "S")->fussell_vesely, 1.6e-8 / 3.5016e-5, EXACT);
    check_listing(f.a);
    release(&f);

    /* --top 5 lists everything: not truncated */
    o.top = 5;
    f = analyze(tank, &o);
    assert_int_equal(f.a->ncut_sets, 5);
    assert_false(f.a->truncated);
    check_listing(f.a);
    release(&f);

    /* --cutoff 4e-9 drops the two 3e-9 sets */
    lw_options_init(&o);
    o.cutoff = 4e-9;
    f = analyze(tank, &o);
    assert_int_equal(f.a->ncut_sets, 3);
    assert_true(f.a->truncated);
    expect_set(f.a, 2, "R S", 1e-8, EXACT);
    assert_close(f.a->covered, 3.5e-5 + 1e-8, EXACT);
    check_listing(f.a);
    release(&f);

    /* a cutoff equal to the smallest set keeps it ("below P" drops) */
    lw_options_init(&o);
    f = analyze(tank, &o);
    double smallest = f.a->cut_sets[4].probability;
    release(&f);
    o.cutoff = smallest;
    f = analyze(tank, &o);
    assert_int_equal(f.a->ncut_sets, 5);
    assert_false(f.a->truncated);
    release(&f);

    /* --max-order 1: the single events only */
    lw_options_init(&o);
    o.max_order = 1;
    f = analyze(tank, &o);
    assert_int_equal(f.a->ncut_sets, 2);
    assert_true(f.a->truncated);
    assert_close(f.a->covered, 3.5e-5, EXACT);
    release(&f);

    /* --max-order 2 keeps every set of the tank: not truncated */
    o.max_order = 2;
    f = analyze(tank, &o);
    assert_int_equal(f.a->ncut_sets, 5);
    assert_false(f.a->truncated);
    release(&f);

    /* all three together on the bridge at q = .01...05: max-order 2 and
     * top 1 leave {c4,c5} */
    char xml[2048];
    snprintf(xml, sizeof xml, bridge_fmt, "0.01", "0.02", "0.03", "0.04",
             "0.05");
    lw_options_init(&o);
    o.max_order = 2;
    o.top = 1;
    o.cutoff = 1e-6;
    f = analyze(xml, &o);
    assert_int_equal(f.a->ncut_sets, 1);
    expect_set(f.a, 0, "c4 c5", 0.002, EXACT);
    assert_true(f.a->truncated);
    assert_close(f.a->covered, 0.002, EXACT);
    release(&f);
    /* max-order 3 with cutoff 2e-5 drops only {c1,c3,c5} (1.5e-5) */
    lw_options_init(&o);
    o.max_order = 3;
    o.cutoff = 2e-5;
    f = analyze(xml, &o);
    assert_int_equal(f.a->ncut_sets, 3);
    assert_true(f.a->truncated);
    assert_close(f.a->covered, 0.002 + 0.0002 + 0.000024, EXACT);
    release(&f);
}

/* ---- a family too large to list ------------------------------------- */

/* AND of 40 two-of-three votes: each minimal cut set picks one pair from
 * every vote, so there are 3^40 (about 1.2e19) of them (closed form:
 * product of C(3,2) over the votes).  P, REA, FV and Birnbaum have
 * product closed forms; the ten most probable sets come from an
 * independent k-best merge over the votes. */
#define NVOTES 40

typedef struct partial {
    double p;
    unsigned char pick[NVOTES];     /* 0: {b,c}, 1: {a,c}, 2: {a,b} */
} partial;

static int cmp_partial(const void *x, const void *y)
{
    double a = ((const partial *)x)->p, b = ((const partial *)y)->p;
    return a < b ? 1 : a > b ? -1 : 0;
}

static void test_huge_family(void **state)
{
    (void)state;
    static char xml[65536];
    double q[NVOTES][3];
    uint64_t rng = 2024;
    size_t len = (size_t)snprintf(xml, sizeof xml,
                                  HEAD "<hazard id=\"h\"><all>");
    for (int v = 0; v < NVOTES; v++) {
        len += (size_t)snprintf(xml + len, sizeof xml - len,
                                "<vote k=\"2\">");
        for (int j = 0; j < 3; j++) {
            /* q in [0.05, 0.5], written exactly to 17 digits so that
             * no two products tie */
            q[v][j] = 0.05 + 0.45 * tu_uniform(&rng);
            len += (size_t)snprintf(xml + len, sizeof xml - len,
                                    "<safeguard id=\"v%02d%c\" "
                                    "p=\"%.17g\"/>", v, 'a' + j, q[v][j]);
        }
        len += (size_t)snprintf(xml + len, sizeof xml - len, "</vote>");
    }
    snprintf(xml + len, sizeof xml - len, "</all></hazard>" TAIL);
    lw_options o;
    lw_options_init(&o);
    o.top = 10;
    clock_t t0 = clock();
    fixture f = analyze(xml, &o);
    double secs = (double)(clock() - t0) / CLOCKS_PER_SEC;
    const lw_analysis *a = f.a;
    assert_close(a->cut_set_count, pow(3.0, NVOTES), 1e-12);
    assert_true(a->cut_set_count > 1.2e19);
    /* closed forms: P = prod P_v, P_v = ab + ac + bc - 2abc;
     * REA = prod S_v, S_v = ab + ac + bc */
    double P = 1, S = 1;
    double pv[NVOTES], sv[NVOTES];
    for (int v = 0; v < NVOTES; v++) {
        double x = q[v][0], y = q[v][1], z = q[v][2];
        pv[v] = x * y + x * z + y * z - 2 * x * y * z;
        sv[v] = x * y + x * z + y * z;
        P *= pv[v];
        S *= sv[v];
    }
    assert_close(a->probability, P, 1e-11);
    assert_close(a->rare_event, S, 1e-11);
    assert_false(a->mcub_exact);
    /* FV of a in vote v: (ab + ac) / S_v; Birnbaum: prod_{u != v} P_u x
     * (b + c - 2bc) */
    for (int v = 0; v < NVOTES; v += 7) {
        char id[16];
        snprintf(id, sizeof id, "v%02da", v);
        double x = q[v][0], y = q[v][1], z = q[v][2];
        assert_close(row(a, id)->fussell_vesely, (x * y + x * z) / sv[v],
                     1e-10);
        assert_close(row(a, id)->birnbaum, P / pv[v] * (y + z - 2 * y * z),
                     1e-10);
    }
    assert_int_equal(a->nimportance, 3 * NVOTES);
    /* the ten best: k-best merge of the per-vote choices */
    partial best[10], next[30];
    size_t nb = 1;
    memset(&best[0], 0, sizeof best[0]);
    best[0].p = 1.0;
    for (int v = 0; v < NVOTES; v++) {
        size_t nn = 0;
        double pair[3] = {q[v][1] * q[v][2], q[v][0] * q[v][2],
                          q[v][0] * q[v][1]};
        for (size_t i = 0; i < nb; i++)
            for (int c = 0; c < 3; c++) {
                next[nn] = best[i];
                next[nn].p *= pair[c];
                next[nn].pick[v] = (unsigned char)c;
                nn++;
            }
        qsort(next, nn, sizeof *next, cmp_partial);
        nb = nn < 10 ? nn : 10;
        memcpy(best, next, nb * sizeof *best);
    }
    assert_int_equal(a->ncut_sets, 10);
    assert_true(a->truncated);
    double covered = 0;
    for (size_t i = 0; i < 10; i++) {
        char want[1024], got[1024];
        size_t wl = 0;
        for (int v = 0; v < NVOTES; v++) {
            static const char *const pairs[3][2] = {{"b", "c"}, {"a", "c"},
                                                    {"a", "b"}};
            wl += (size_t)snprintf(want + wl, sizeof want - wl,
                                   "%sv%02d%s v%02d%s", v ? " " : "", v,
                                   pairs[best[i].pick[v]][0], v,
                                   pairs[best[i].pick[v]][1]);
        }
        set_text(a, i, got, sizeof got);
        assert_string_equal(got, want);
        assert_close(a->cut_sets[i].probability, best[i].p, 1e-12);
        covered += best[i].p;
    }
    assert_close(a->covered, covered, 1e-12);
    /* quickly: no enumeration of 1.2e19 sets (generous under ASan) */
    assert_true(secs < 5.0);
    release(&f);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_boolean_reduction_example),
        cmocka_unit_test(test_pressure_tank),
        cmocka_unit_test(test_a_and_b_or_c),
        cmocka_unit_test(test_rrw_null_when_necessary),
        cmocka_unit_test(test_two_of_three),
        cmocka_unit_test(test_bridge),
        cmocka_unit_test(test_top_cutoff_max_order),
        cmocka_unit_test(test_huge_family),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
