/*
 * test_learn.c - estimates from counts, and learning from a near-miss log.
 *
 * Sources of the expected values:
 *   - Clopper-Pearson 95 % limits and Jeffreys means: methods.md §6.3 [D]
 *     (30-digit bisection on the regularized incomplete beta; Clopper &
 *     Pearson 1934, Brown, Cai & DasGupta 2001).
 *   - binomial upper tails: closed form, direct summation
 *     P(X >= m) = sum_{k=m..n} C(n,k) p^k (1-p)^(n-k), computed here in
 *     long double.
 *   - THERP conditional probabilities c = N + w(1 - N), w = 0, 1/20, 1/7,
 *     1/2, 1: NUREG/CR-1278 ch. 10 and 20 (methods.md §3.2 [C]).
 *   - reached / missed / pair counts: the definitions of docs/cli.md
 *     (learn), tallied here from randomly generated rows while the CSV
 *     text is written (the counting does not go through any CSV parser).
 *   - bad rows: the physical line where the row starts, counted by hand
 *     in each small log below (common practice, no source).
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "layerwise/alloc.h"
#include "layerwise/analysis.h"
#include "layerwise/estimate.h"
#include "layerwise/learn.h"
#include "testutil.h"

/* ---- binomial tail and Clopper-Pearson --------------------------------- */

static double direct_tail(unsigned m, unsigned n, double p)
{
    /* closed form: sum_{k=m}^{n} C(n,k) p^k (1-p)^(n-k) */
    long double total = 0;
    for (unsigned k = m; k <= n; k++) {
        long double c = 1;
        for (unsigned j = 1; j <= k; j++)
            c = c * (long double)(n - k + j) / (long double)j;
        total += c * powl(p, k) * powl(1.0L - p, n - k);
    }
    return (double)total;
}

static void test_binomial_tail(void **state)
{
    (void)state;
    static const struct { unsigned m, n; double p; } cases[] = {
        {1, 1, 0.5}, {2, 4, 0.1}, {3, 3, 0.2}, {5, 20, 0.1}, {15, 50, 0.3},
        {1, 30, 0.01}, {7, 9, 0.505}, {40, 60, 0.5}, {2, 12, 0.0595},
    };
    for (size_t i = 0; i < sizeof cases / sizeof *cases; i++)
        assert_close(lw_binomial_upper_tail(cases[i].m, cases[i].n,
                                            cases[i].p),
                     direct_tail(cases[i].m, cases[i].n, cases[i].p), 1e-10);
    /* closed forms: P(X >= 0) = 1; m > n impossible; P(X >= n) = p^n */
    assert_close(lw_binomial_upper_tail(0, 10, 0.3), 1.0, 1e-15);
    assert_true(lw_binomial_upper_tail(11, 10, 0.3) == 0.0);
    assert_close(lw_binomial_upper_tail(4, 4, 0.1), 1e-4, 1e-12);
    /* closed form: 1 - (1-p)^n for m = 1 */
    assert_close(lw_binomial_upper_tail(1, 25, 0.02), 1 - pow(0.98, 25),
                 1e-12);
}

static void test_clopper_pearson(void **state)
{
    (void)state;
    /* methods.md §6.3 [D]: x / n, Jeffreys mean, CP 95 % (2-sided) */
    static const struct { double x, n, mean, lo, hi; } v[] = {
        {0, 300, 1.66113e-3, 0, 1.22210e-2},
        {3, 1000, 3.49650e-3, 6.19100e-4, 8.74202e-3},
        {9, 400, 2.36908e-2, 1.03389e-2, 4.22810e-2},
        {0, 1000, 4.99500e-4, 0, 3.68208e-3},
        {1, 100, 1.48515e-2, 2.53146e-4, 5.44594e-2},
    };
    for (size_t i = 0; i < sizeof v / sizeof *v; i++) {
        lw_estimate e;
        lw_estimate_counts(v[i].x, v[i].n, &e);
        assert_close(e.mean, v[i].mean, 1e-5);
        assert_close(e.ci_hi, v[i].hi, 1e-5);
        if (v[i].lo == 0)
            assert_true(e.ci_lo == 0.0);
        else
            assert_close(e.ci_lo, v[i].lo, 1e-5);
    }
    /* closed form: x = 0 upper limit 1 - 0.025^(1/n) (methods.md §6.2) */
    lw_estimate e;
    lw_estimate_counts(0, 300, &e);
    assert_close(e.ci_hi, 1 - pow(0.025, 1.0 / 300), 1e-9);
}

/* ---- learning ------------------------------------------------------------ */

static const char *MODEL =
    "<?xml version=\"1.0\"?>\n"
    "<!-- a comment that need not survive -->\n"
    "<safety-model format=\"1\" id=\"lrn\">\n"
    " <error id=\"e1\" p=\"0.01\"/>\n"
    " <error id=\"e2\" p=\"0.02\"/>\n"
    " <safeguard id=\"s1\" p=\"0.1\"><lognormal error-factor=\"3\"/>"
    "</safeguard>\n"
    " <safeguard id=\"s2\" p=\"0.05\"/>\n"
    " <safeguard id=\"s3\"><observed count=\"7\" of=\"390\" "
    "source=\"audit &amp; review\"/></safeguard>\n"
    " <safeguard id=\"s4\" p=\"0.2\"/>\n"
    " <safeguard id=\"s5\" p=\"0.3\"/>\n"
    " <condition id=\"night\" state=\"false\"/>\n"
    " <hazard id=\"h\"><any>\n"
    "  <all><ref to=\"e1\"/><ref to=\"s1\"/><ref to=\"s2\"/>"
    "<ref to=\"s3\"/></all>\n"
    "  <all><ref to=\"e2\"/><ref to=\"s4\"/>"
    "<safeguard id=\"s6\" p=\"0.15\"/><ref to=\"s5\"/></all>\n"
    "  <all><ref to=\"night\"/><ref to=\"e2\"/></all>\n"
    " </any></hazard>\n"
    " <common-cause id=\"g\" beta=\"0.1\" members=\"s4 s5\"/>\n"
    " <dependence id=\"dd\" first=\"s1\" second=\"s2\" level=\"low\"/>\n"
    " <variant id=\"v\"><set ref=\"s2\" p=\"0.01\"/></variant>\n"
    "</safety-model>\n";

static lw_status learn_str(const lw_model *m, const char *log,
                           lw_learn **out, lw_error *err)
{
    return lw_learn_memory(m, log, strlen(log), "log.csv", out, err);
}

static const lw_learn_layer *layer(const lw_model *m, const lw_learn *l,
                                   const char *id)
{
    for (size_t i = 0; i < l->nlayers; i++)
        if (!strcmp(m->nodes[l->layers[i].node].id, id))
            return &l->layers[i];
    return NULL;
}

static void test_combined_counts(void **state)
{
    (void)state;
    lw_model *m = tu_load(MODEL);
    /* s3: model 7 of 390, log 2 missed of 10 reached -> 9 of 400;
     * s2: caught 300 times, never missed -> 0 of 300 */
    size_t cap = 64 * 320;
    char *log = malloc(cap);
    assert_non_null(log);
    size_t o = (size_t)snprintf(log, cap, "date,error,missed,caught_by,"
                                "note\n");
    for (int i = 0; i < 2; i++)
        o += (size_t)snprintf(log + o, cap - o, "2025-01-0%d,e1,s1;s3,,\n",
                              i + 1);
    for (int i = 0; i < 8; i++)
        o += (size_t)snprintf(log + o, cap - o, "2025-02-01,e1,,s3,\n");
    for (int i = 0; i < 300; i++)
        o += (size_t)snprintf(log + o, cap - o, "2025-03-01,e1,,s2,\n");
    lw_learn *l = NULL;
    lw_error err = LW_ERROR_INIT;
    assert_int_equal(learn_str(m, log, &l, &err), LW_OK);
    free(log);
    const lw_learn_layer *s3 = layer(m, l, "s3");
    assert_non_null(s3);
    /* reached and missed are from the log alone (cli.md) */
    assert_int_equal(s3->reached, 10);
    assert_int_equal(s3->missed, 2);
    /* methods.md §6.3: 9 / 400 */
    assert_close(s3->estimate, 2.36908e-2, 1e-5);
    assert_close(s3->ci_lo, 1.03389e-2, 1e-5);
    assert_close(s3->ci_hi, 4.22810e-2, 1e-5);
    const lw_learn_layer *s2 = layer(m, l, "s2");
    assert_non_null(s2);
    assert_int_equal(s2->reached, 300);
    assert_int_equal(s2->missed, 0);
    /* methods.md §6.3: 0 / 300 */
    assert_close(s2->estimate, 1.66113e-3, 1e-5);
    assert_true(s2->ci_lo == 0.0);
    assert_close(s2->ci_hi, 1.22210e-2, 1e-5);
    /* s1 missed twice, reached twice: closed form (2 + .5) / (2 + 1) */
    assert_close(layer(m, l, "s1")->estimate, 2.5 / 3.0, 1e-12);
    assert_null(layer(m, l, "s4"));     /* not in the log */
    assert_int_equal(l->rows, 310);
    lw_learn_free(l);
    lw_error_clear(&err);
    lw_model_free(m);
}

/* THERP level closest to the rate in log-odds, written out again from
 * NUREG/CR-1278 (methods.md §3.2), clamped at 1e-6 as learn.h documents. */
static lw_level expected_level(double nominal, double rate)
{
    const double w[] = {0, 1.0 / 20, 1.0 / 7, 0.5, 1};
    double r = fmin(fmax(rate, 1e-6), 1 - 1e-6);
    int best = 0;
    double bd = INFINITY;
    for (int k = 0; k < 5; k++) {
        double c = fmin(fmax(nominal + w[k] * (1 - nominal), 1e-6), 1 - 1e-6);
        double d = fabs(log(c / (1 - c)) - log(r / (1 - r)));
        if (d < bd - 1e-12) {
            bd = d;
            best = k;
        }
    }
    return (lw_level)best;
}

/* Write 's' as a CSV field, quoted at random (always when needed). */
static size_t put_field(char *buf, size_t cap, const char *s, uint64_t *rng)
{
    int need = strpbrk(s, ",\"\r\n") != NULL;
    if (!need && tu_uniform(rng) < 0.7)
        return (size_t)snprintf(buf, cap, "%s", s);
    size_t o = 0;
    buf[o++] = '"';
    for (; *s && o + 3 < cap; s++) {
        if (*s == '"')
            buf[o++] = '"';
        buf[o++] = *s;
    }
    buf[o++] = '"';
    buf[o] = '\0';
    return o;
}

static void test_random_logs(void **state)
{
    (void)state;
    lw_model *m = tu_load(MODEL);
    static const char *sg[] = {"s1", "s2", "s3", "s4", "s5", "s6"};
    static const char *errs[] = {"e1", "e2", ""};
    const int NS = 6;
    uint64_t rng = 2024;
    for (int round = 0; round < 40; round++) {
        unsigned long reached[6] = {0}, missed[6] = {0};
        unsigned long pn[6][6] = {{0}}, pm[6][6] = {{0}};
        int crlf = tu_uniform(&rng) < 0.5, bom = tu_uniform(&rng) < 0.5;
        const char *nl = crlf ? "\r\n" : "\n";
        size_t cap = 1 << 16, o = 0;
        char *log = malloc(cap);
        assert_non_null(log);
        if (bom)
            o += (size_t)snprintf(log + o, cap - o, "\xEF\xBB\xBF");
        /* header in one of two orders, with an extra column, odd case */
        int order = tu_uniform(&rng) < 0.5;
        o += (size_t)snprintf(log + o, cap - o, order
                              ? "Note,CAUGHT_BY,extra,Missed,error,date%s"
                              : "date,error,missed,caught_by,note%s", nl);
        int rows = 5 + (int)(tu_uniform(&rng) * 40);
        for (int r = 0; r < rows; r++) {
            int inm[6] = {0}, nmiss = 0;
            char missed_s[128] = "";
            for (int k = 0; k < NS; k++)
                if (tu_uniform(&rng) < 0.35) {
                    inm[k] = 1;
                    size_t len = strlen(missed_s);
                    snprintf(missed_s + len, sizeof missed_s - len, "%s%s",
                             nmiss++ ? (tu_uniform(&rng) < 0.5 ? ";" : " ; ")
                                     : "", sg[k]);
                }
            int catcher = -1;
            if (tu_uniform(&rng) < 0.7) {
                int k = (int)(tu_uniform(&rng) * NS);
                if (!inm[k])
                    catcher = k;
            }
            /* tally by the definitions of docs/cli.md */
            for (int a = 0; a < NS; a++) {
                if (inm[a] || a == catcher)
                    reached[a]++;
                if (inm[a])
                    missed[a]++;
                for (int b = 0; b < NS; b++) {
                    if (a == b || !inm[a] || !(inm[b] || b == catcher))
                        continue;
                    pn[a][b]++;
                    if (inm[b])
                        pm[a][b]++;
                }
            }
            const char *err_s = errs[(int)(tu_uniform(&rng) * 3)];
            const char *note = tu_uniform(&rng) < 0.3
                                   ? "two lines,\nwith \"quotes\""
                                   : "plain note";
            const char *cb = catcher >= 0 ? sg[catcher] : "";
            char f[5][256];
            put_field(f[0], sizeof f[0], "2025-05-01", &rng);
            put_field(f[1], sizeof f[1], err_s, &rng);
            put_field(f[2], sizeof f[2], missed_s, &rng);
            put_field(f[3], sizeof f[3], cb, &rng);
            put_field(f[4], sizeof f[4], note, &rng);
            if (order)
                o += (size_t)snprintf(log + o, cap - o, "%s,%s,x,%s,%s,%s%s",
                                      f[4], f[3], f[2], f[1], f[0], nl);
            else
                o += (size_t)snprintf(log + o, cap - o, "%s,%s,%s,%s,%s%s",
                                      f[0], f[1], f[2], f[3], f[4], nl);
            assert_true(o < cap);
        }
        lw_learn *l = NULL;
        lw_error err = LW_ERROR_INIT;
        lw_status st = lw_learn_memory(m, log, o, "rand.csv", &l, &err);
        if (st != LW_OK)
            fail_msg("round %d: %s:%ld: %s", round, err.items[0].file,
                     err.items[0].line, err.items[0].message);
        free(log);
        assert_int_equal(l->rows, (size_t)rows);
        size_t nl_expected = 0;
        for (int k = 0; k < NS; k++) {
            const lw_learn_layer *y = layer(m, l, sg[k]);
            if (!reached[k]) {
                assert_null(y);
                continue;
            }
            nl_expected++;
            assert_non_null(y);
            assert_int_equal(y->reached, reached[k]);
            assert_int_equal(y->missed, missed[k]);
            size_t node = lw_model_find_node(m, sg[k]);
            const lw_dist *d = &m->nodes[node].dist;
            double M = (double)missed[k], R = (double)reached[k];
            if (d->kind == LW_DIST_OBSERVED) {
                M += d->count;
                R += d->of;
            }
            /* closed form: Jeffreys mean (M + 0.5) / (R + 1) */
            assert_close(y->estimate, (M + 0.5) / (R + 1), 1e-12);
        }
        assert_int_equal(l->nlayers, nl_expected);
        size_t np = 0;
        for (int a = 0; a < NS; a++)
            for (int b = 0; b < NS; b++)
                np += pn[a][b] >= 3;
        assert_int_equal(l->npairs, np);
        for (size_t i = 0; i < l->npairs; i++) {
            const lw_learn_pair *p = &l->pairs[i];
            int a = -1, b = -1;
            for (int k = 0; k < NS; k++) {
                if (!strcmp(m->nodes[p->first].id, sg[k]))
                    a = k;
                if (!strcmp(m->nodes[p->second].id, sg[k]))
                    b = k;
            }
            assert_true(a >= 0 && b >= 0);
            assert_int_equal(p->n, pn[a][b]);
            assert_int_equal(p->m, pm[a][b]);
            double nominal = m->nodes[p->second].dist.p;
            assert_close(p->nominal, nominal, 1e-15);
            assert_close(p->rate, (double)pm[a][b] / (double)pn[a][b],
                         1e-15);
            assert_close(p->p_value, direct_tail((unsigned)pm[a][b],
                                                 (unsigned)pn[a][b],
                                                 nominal), 1e-9);
            assert_int_equal(p->suggested,
                             expected_level(nominal, p->rate));
            if (i)
                assert_true(l->pairs[i - 1].p_value <= p->p_value);
        }
        lw_learn_free(l);
        lw_error_clear(&err);
    }
    lw_model_free(m);
}

static void test_levels(void **state)
{
    (void)state;
    /* NUREG/CR-1278 ch. 20 conditional probabilities at N = 0.2 (s4's p),
     * c = N + w(1 - N): ZD 0.2, LD 0.24, MD 0.3142857 (= 11/35), HD 0.6,
     * CD 1.  A rate equal to a level's c must suggest that level. */
    lw_model *m = tu_load(MODEL);
    static const struct { int m, n; lw_level want; } v[] = {
        {12, 20, LW_LEVEL_HIGH},        /* 0.6 = HD */
        {4, 20, LW_LEVEL_ZERO},         /* 0.2 = ZD */
        {6, 25, LW_LEVEL_LOW},          /* 0.24 = LD */
        {11, 35, LW_LEVEL_MODERATE},    /* 11/35 = MD */
        {3, 3, LW_LEVEL_COMPLETE},      /* 1 = CD (both clamped) */
        {0, 5, LW_LEVEL_ZERO},          /* 0: clamped, nearest ZD */
    };
    for (size_t i = 0; i < sizeof v / sizeof *v; i++) {
        char log[8192];
        size_t o = (size_t)snprintf(log, sizeof log,
                                    "date,error,missed,caught_by,note\n");
        for (int k = 0; k < v[i].n; k++)
            o += (size_t)snprintf(log + o, sizeof log - o, "d,e1,%s,%s,\n",
                                  k < v[i].m ? "s1;s4" : "s1",
                                  k < v[i].m ? "" : "s4");
        lw_learn *l = NULL;
        lw_error err = LW_ERROR_INIT;
        assert_int_equal(learn_str(m, log, &l, &err), LW_OK);
        const lw_learn_pair *p = NULL;
        for (size_t k = 0; k < l->npairs; k++)
            if (!strcmp(m->nodes[l->pairs[k].first].id, "s1") &&
                !strcmp(m->nodes[l->pairs[k].second].id, "s4"))
                p = &l->pairs[k];
        assert_non_null(p);
        assert_int_equal(p->n, (unsigned long)v[i].n);
        assert_int_equal(p->m, (unsigned long)v[i].m);
        assert_int_equal(p->suggested, v[i].want);
        char xml[256];
        lw_learn_dependence_xml(m, p, xml, sizeof xml);
        char want[256];
        snprintf(want, sizeof want, "<dependence first=\"s1\" second=\"s4\" "
                 "level=\"%s\"/>", lw_level_name(v[i].want));
        assert_string_equal(xml, want);
        assert_true(p->second_in_group);    /* s4 is in group g */
        lw_learn_free(l);
        lw_error_clear(&err);
    }
    lw_model_free(m);
}

/* ---- bad logs ------------------------------------------------------------ */

static int diag_at(const lw_error *err, long line, const char *needle)
{
    for (size_t i = 0; i < err->count; i++)
        if (err->items[i].line == line && err->items[i].file &&
            !strcmp(err->items[i].file, "log.csv") &&
            strstr(err->items[i].message, needle))
            return 1;
    return 0;
}

static void expect_bad(const lw_model *m, const char *log, long line,
                       const char *needle)
{
    lw_learn *l = NULL;
    lw_error err = LW_ERROR_INIT;
    lw_status st = learn_str(m, log, &l, &err);
    assert_int_not_equal(st, LW_OK);
    assert_null(l);
    if (!diag_at(&err, line, needle)) {
        for (size_t i = 0; i < err.count; i++)
            fprintf(stderr, "  %s:%ld: %s\n", err.items[i].file,
                    err.items[i].line, err.items[i].message);
        fail_msg("no diagnostic at log.csv:%ld containing \"%s\"", line,
                 needle);
    }
    lw_error_clear(&err);
}

#define H "date,error,missed,caught_by,note\n"

static void test_bad_logs(void **state)
{
    (void)state;
    lw_model *m = tu_load(MODEL);
    expect_bad(m, H "d,e1,s1,,ok\nd,e1,zz,,bad\n", 3, "unknown id \"zz\"");
    expect_bad(m, H "d,e1,s1,s2,ok\nd,e1,s1;s2,s2,bad\n", 3,
               "both in missed and in caught_by");
    expect_bad(m, H "d,e1,s1,zz,ok\n", 2, "unknown id \"zz\" in caught_by");
    expect_bad(m, H "d,nope,s1,,\n", 2, "unknown id \"nope\" in error");
    expect_bad(m, H "d,s2,s1,,\n", 2, "not an error");
    expect_bad(m, H "d,e1,e2,,\n", 2, "not a safeguard");
    expect_bad(m, H "d,e1,s1,s2;s3,\n", 2, "not a list");
    expect_bad(m, H "d,e1,s1,s2\n", 2, "4 fields");
    /* bad quoting: a quote inside an unquoted field */
    expect_bad(m, H "d,e1,s1,,ok\nd,e1,s\"1,,x\n", 3, "malformed CSV");
    /* bad quoting: text after a closing quote */
    expect_bad(m, H "d,e1,\"s1\"x,,\n", 2, "malformed CSV");
    /* a quoted field never closed (starts on line 2) */
    expect_bad(m, H "d,e1,s1,,\"open\nmore\n", 2, "never closed");
    /* missing header: the first row is data */
    expect_bad(m, "2025-01-01,e1,s1,,ok\n", 1, "no \"error\" column");
    expect_bad(m, "date,error,missed,note\nd,e1,s1,x\n", 1,
               "no \"caught_by\" column");
    expect_bad(m, "", 1, "empty");
    expect_bad(m, "\xEF\xBB\xBF\r\n", 1, "empty");
    /* embedded line breaks: rows start on lines 2 (three lines), 5 (two
     * lines, the break a CRLF) and 7, the bad one */
    expect_bad(m, H "d,e1,s1,,\"line one\nline two\nline three\"\n"
                    "d,e1,s2,,\"a\r\nb\"\nd,e1,zz,,x\n", 7, "unknown id");
    /* every bad row is reported */
    lw_learn *l = NULL;
    lw_error err = LW_ERROR_INIT;
    assert_int_not_equal(learn_str(m, H "d,e1,zz,,\nd,e1,s1,,\n"
                                   "d,e1,s1,s1,\n", &l, &err), LW_OK);
    assert_true(diag_at(&err, 2, "unknown id"));
    assert_true(diag_at(&err, 4, "both in missed"));
    lw_error_clear(&err);
    lw_model_free(m);
}

static void test_bom_crlf(void **state)
{
    (void)state;
    lw_model *m = tu_load(MODEL);
    const char *log = "\xEF\xBB\xBF" "Date,Error,Missed,Caught_By,Note\r\n"
                      "2025-01-01,e1,s1 ; s2,s3,\"caught, at last\"\r\n"
                      "\r\n"
                      "2025-01-02,,s1,,\"two\r\nlines\"\r\n"
                      "2025-01-03,e2,,s1,no newline at the end";
    lw_learn *l = NULL;
    lw_error err = LW_ERROR_INIT;
    assert_int_equal(learn_str(m, log, &l, &err), LW_OK);
    assert_int_equal(l->rows, 3);
    assert_int_equal(l->rows_caught, 2);
    /* by hand from the definitions: s1 missed in rows 1, 2 and caught in
     * row 3 */
    assert_int_equal(layer(m, l, "s1")->reached, 3);
    assert_int_equal(layer(m, l, "s1")->missed, 2);
    assert_int_equal(layer(m, l, "s3")->reached, 1);
    assert_int_equal(layer(m, l, "s3")->missed, 0);
    lw_learn_free(l);
    lw_error_clear(&err);
    lw_model_free(m);
}

/* ---- the updated model ----------------------------------------------- */

static void test_round_trip(void **state)
{
    (void)state;
    lw_model *m = tu_load(MODEL);
    const char *log = H "d,e1,s1;s2,s3,\nd,e1,s1,s2,\nd,e2,s6,s5,\n"
                        "d,e2,s4;s6,,\n";
    lw_learn *l = NULL;
    lw_error err = LW_ERROR_INIT;
    assert_int_equal(lw_learn_memory(m, log, strlen(log), "near & \"far\".csv",
                                     &l, &err), LW_OK);
    char *out = NULL;
    size_t len = 0;
    assert_int_equal(lw_learn_update_model(MODEL, strlen(MODEL), "m.xml", m,
                                           l, &out, &len, &err), LW_OK);
    lw_model *m2 = NULL;
    assert_int_equal(lw_model_load_memory(out, len, "new.xml", NULL, &m2,
                                          &err), LW_OK);
    /* everything else it means is unchanged */
    assert_int_equal(m2->nnodes, m->nnodes);
    assert_int_equal(m2->ngroups, m->ngroups);
    assert_int_equal(m2->ndeps, m->ndeps);
    assert_int_equal(m2->nvariants, m->nvariants);
    assert_int_equal(m2->nhazards, m->nhazards);
    for (size_t i = 0; i < m->nnodes; i++) {
        const lw_node *a = &m->nodes[i];
        size_t k = a->id ? lw_model_find_node(m2, a->id) : i;
        assert_true(k != LW_NONE);
        const lw_node *b = &m2->nodes[k];
        assert_int_equal(a->kind, b->kind);
        assert_int_equal(a->nin, b->nin);
        if (a->kind != LW_NODE_SAFEGUARD || !layer(m, l, a->id)) {
            assert_int_equal(a->dist.kind, b->dist.kind);
            assert_true(a->dist.p == b->dist.p);
            continue;
        }
        /* learned: <observed count=M of=R/>, p = (M + .5) / (R + 1) */
        const lw_learn_layer *y = layer(m, l, a->id);
        assert_int_equal(b->dist.kind, LW_DIST_OBSERVED);
        assert_true(b->dist.count == y->M);
        assert_true(b->dist.of == y->R);
        assert_close(b->dist.p, (y->M + 0.5) / (y->R + 1), 1e-15);
        assert_non_null(b->dist.source);
        assert_non_null(strstr(b->dist.source, "near & \"far\".csv"));
    }
    /* s3 kept its audit and added the log: 7 + 0 of 390 + 1 */
    size_t s3 = lw_model_find_node(m2, "s3");
    assert_true(m2->nodes[s3].dist.count == 7 && m2->nodes[s3].dist.of == 391);
    assert_non_null(strstr(m2->nodes[s3].dist.source, "audit & review"));
    /* s6 was defined inside the logic: updated there */
    size_t s6 = lw_model_find_node(m2, "s6");
    assert_int_equal(m2->nodes[s6].dist.kind, LW_DIST_OBSERVED);
    /* the variant still sets p on s2 */
    assert_int_equal(m2->variants[0].nsets, 1);
    /* the new model analyses: P(hazard) against enumeration over its
     * network (no BDD) */
    lw_network *net = NULL;
    assert_int_equal(lw_compile(m2, LW_NONE, &net, &err), LW_OK);
    double *vp = malloc((net->nvars + 1) * sizeof *vp);
    assert_non_null(vp);
    for (size_t v = 0; v < net->nvars; v++)
        vp[v] = net->vars[v].p;
    assert_close(tu_prob(m2, LW_NONE, 0),
                 tu_brute_prob(net, net->hazard_gate[0], vp), 1e-12);
    free(vp);
    lw_network_free(net);
    lw_model_free(m2);
    lw_free(out);
    lw_learn_free(l);
    lw_error_clear(&err);
    lw_model_free(m);
}

static void test_read_file(void **state)
{
    (void)state;
    lw_model *m = tu_load(MODEL);
    lw_learn *l = NULL;
    lw_error err = LW_ERROR_INIT;
    assert_int_not_equal(lw_learn_file(m, "/nonexistent/log.csv", &l, &err),
                         LW_OK);
    assert_null(l);
    assert_true(tu_error_has(&err, "cannot open", NULL));
    lw_error_clear(&err);
    lw_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_binomial_tail),
        cmocka_unit_test(test_clopper_pearson),
        cmocka_unit_test(test_combined_counts),
        cmocka_unit_test(test_random_logs),
        cmocka_unit_test(test_levels),
        cmocka_unit_test(test_bad_logs),
        cmocka_unit_test(test_bom_crlf),
        cmocka_unit_test(test_round_trip),
        cmocka_unit_test(test_read_file),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
