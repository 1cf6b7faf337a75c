/*
 * test_reference.c - exact hazard probabilities against published
 * formulas and derived check values.
 *
 * Every model is an XML string; every pinned number names its source
 * beside it.  "methods.md §x.y" is the project's reference sheet of
 * published formulas; its tags say what kind of value it is: [D] values
 * are exact (rational or 30-digit arithmetic) and are checked here to
 * 1e-12 relative, shorter printed values to their printed precision.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "layerwise/analysis.h"
#include "testutil.h"

#define EXACT 1e-12     /* source exact ([D] rational, closed form) */
#define HEAD "<safety-model format=\"1\" id=\"ref\">"
#define TAIL "</safety-model>"

static double model_prob(const char *xml)
{
    lw_model *m = tu_load(xml);
    double P = tu_prob(m, LW_NONE, 0);
    lw_model_free(m);
    return P;
}

/* ---- series, parallel ----------------------------------------------- */

/* Nine process steps each with a 1 % defect, hazard = any defect:
 * P = 1 - 0.99^9 = 0.08648275251635917 (methods.md §8.1, closed form). */
static void test_series_nine(void **state)
{
    (void)state;
    char xml[4096];
    size_t n = (size_t)snprintf(xml, sizeof xml, HEAD "<hazard id=\"h\"><any>");
    for (int i = 0; i < 9; i++)
        n += (size_t)snprintf(xml + n, sizeof xml - n,
                              "<error id=\"step%d\" p=\"0.01\"/>", i);
    snprintf(xml + n, sizeof xml - n, "</any></hazard>" TAIL);
    assert_close(model_prob(xml), 0.08648275251635917, EXACT);
    assert_close(model_prob(xml), 1.0 - pow(0.99, 9), EXACT);
}

/* Three 1e-17 events in OR: 3e-17, where naive 1 - prod(1 - q) gives 0
 * (methods.md §1.4 floating-point note [D]). */
static void test_tiny_or(void **state)
{
    (void)state;
    const char *xml = HEAD "<hazard id=\"h\"><any>"
        "<error id=\"a\" p=\"1e-17\"/><error id=\"b\" p=\"1e-17\"/>"
        "<error id=\"c\" p=\"1e-17\"/></any></hazard>" TAIL;
    assert_close(model_prob(xml), 3e-17, 1e-12);
}

/* Three redundant checks that each miss 1 %: P = 1e-6 (methods.md §8.2,
 * closed form prod q). */
static void test_parallel_three(void **state)
{
    (void)state;
    const char *xml = HEAD "<hazard id=\"h\"><all>"
        "<safeguard id=\"a\" p=\"0.01\"/><safeguard id=\"b\" p=\"0.01\"/>"
        "<safeguard id=\"c\" p=\"0.01\"/></all></hazard>" TAIL;
    assert_close(model_prob(xml), 1e-6, EXACT);
}

/* ---- Boolean reduction, NUREG-0492 ch. VII example -------------------- */

/* T = (A + (B + C)) (C + AB): exact P = 0.314 = 157/500 at .1/.2/.3,
 * 0.001000999 at 0.001 each; the naive gate-by-gate product 0.155744 is
 * wrong (methods.md §1.5 [D]). */
static void test_boolean_reduction(void **state)
{
    (void)state;
    const char *fmt = HEAD "<hazard id=\"T\"><all>"
        "<any><error id=\"A\" p=\"%s\"/><any><error id=\"B\" p=\"%s\"/>"
        "<error id=\"C\" p=\"%s\"/></any></any>"
        "<any><ref to=\"C\"/><all><ref to=\"A\"/><ref to=\"B\"/></all></any>"
        "</all></hazard>" TAIL;
    char xml[2048];
    snprintf(xml, sizeof xml, fmt, "0.1", "0.2", "0.3");
    double P = model_prob(xml);
    assert_close(P, 0.314, EXACT);
    assert_true(fabs(P - 0.155744) > 0.1);     /* not the naive product */
    snprintf(xml, sizeof xml, fmt, "0.001", "0.001", "0.001");
    assert_close(model_prob(xml), 0.001000999, EXACT);
}

/* A (B + C): 0.044 at .1/.2/.3 and 6.9e-4 at .01/.02/.05 (methods.md §1.7
 * [D]). */
static void test_a_and_b_or_c(void **state)
{
    (void)state;
    const char *fmt = HEAD "<hazard id=\"h\"><all><error id=\"A\" p=\"%s\"/>"
        "<any><safeguard id=\"B\" p=\"%s\"/><safeguard id=\"C\" p=\"%s\"/>"
        "</any></all></hazard>" TAIL;
    char xml[1024];
    snprintf(xml, sizeof xml, fmt, "0.1", "0.2", "0.3");
    assert_close(model_prob(xml), 0.044, EXACT);
    snprintf(xml, sizeof xml, fmt, "0.01", "0.02", "0.05");
    assert_close(model_prob(xml), 6.9e-4, EXACT);
}

/* ---- bridge ------------------------------------------------------------ */

/* The bridge written as the OR of its minimal cut sets {1,2}, {4,5},
 * {1,3,5}, {2,3,4}: Q = 0.02152 at q = 0.1 each, 0.002236284 at
 * q = .01/.02/.03/.04/.05 (methods.md §8.4 [D], exact rationals
 * 269/12500 and 559071/250000000). */
static double bridge_prob(const char *q1, const char *q2, const char *q3,
                          const char *q4, const char *q5)
{
    char xml[2048];
    snprintf(xml, sizeof xml, HEAD
             "<safeguard id=\"c1\" p=\"%s\"/><safeguard id=\"c2\" p=\"%s\"/>"
             "<safeguard id=\"c3\" p=\"%s\"/><safeguard id=\"c4\" p=\"%s\"/>"
             "<safeguard id=\"c5\" p=\"%s\"/>"
             "<hazard id=\"h\"><any>"
             "<all><ref to=\"c1\"/><ref to=\"c2\"/></all>"
             "<all><ref to=\"c4\"/><ref to=\"c5\"/></all>"
             "<all><ref to=\"c1\"/><ref to=\"c3\"/><ref to=\"c5\"/></all>"
             "<all><ref to=\"c2\"/><ref to=\"c3\"/><ref to=\"c4\"/></all>"
             "</any></hazard>" TAIL, q1, q2, q3, q4, q5);
    return model_prob(xml);
}

static void test_bridge(void **state)
{
    (void)state;
    assert_close(bridge_prob("0.1", "0.1", "0.1", "0.1", "0.1"), 0.02152,
                 EXACT);
    assert_close(bridge_prob("0.01", "0.02", "0.03", "0.04", "0.05"),
                 0.002236284, EXACT);
    /* pivotal decomposition on 3 with identical p = 0.9:
     * R = 2p^2 + 2p^3 - 5p^4 + 2p^5 (methods.md §8.4, closed form) */
    double p = 0.9;
    double R = 2 * p * p + 2 * pow(p, 3) - 5 * pow(p, 4) + 2 * pow(p, 5);
    assert_close(bridge_prob("0.1", "0.1", "0.1", "0.1", "0.1"), 1.0 - R,
                 EXACT);
}

/* ---- votes ---------------------------------------------------------- */

static double vote_prob(int k, int n, const char *const *q)
{
    char xml[4096];
    size_t len = (size_t)snprintf(xml, sizeof xml,
                                  HEAD "<hazard id=\"h\"><vote k=\"%d\">", k);
    for (int i = 0; i < n; i++)
        len += (size_t)snprintf(xml + len, sizeof xml - len,
                                "<safeguard id=\"s%d\" p=\"%s\"/>", i, q[i]);
    snprintf(xml + len, sizeof xml - len, "</vote></hazard>" TAIL);
    return model_prob(xml);
}

static void test_votes(void **state)
{
    (void)state;
    const char *const tenth[5] = {"0.1", "0.1", "0.1", "0.1", "0.1"};
    const char *const asym[3] = {"0.01", "0.02", "0.05"};
    const char *const five[4] = {"0.05", "0.05", "0.05", "0.05"};
    const char *const hundredth[3] = {"0.01", "0.01", "0.01"};
    /* 2-of-3, q = 0.1: 3q^2 - 2q^3 = 0.028 (methods.md §2.4 [D]) */
    assert_close(vote_prob(2, 3, tenth), 0.028, EXACT);
    /* 2-of-3, q = .01/.02/.05: 0.00168 = 21/12500 (methods.md §2.4 [D]) */
    assert_close(vote_prob(2, 3, asym), 0.00168, EXACT);
    /* 2-of-3, q = 0.01: 2.98e-4 (methods.md §8.3 [D]) */
    assert_close(vote_prob(2, 3, hundredth), 2.98e-4, EXACT);
    /* 3-of-5, q = 0.1: 0.00856 (methods.md §8.3 [D]) */
    assert_close(vote_prob(3, 5, tenth), 0.00856, EXACT);
    /* 2-of-4, q = 0.05: 0.01401875 (methods.md §8.3 [D]) */
    assert_close(vote_prob(2, 4, five), 0.01401875, EXACT);
    /* the binomial closed form sum_{j>=k} C(n,j) q^j (1-q)^(n-j)
     * (methods.md §1.4) for every k of 5 at q = 0.1 */
    for (int k = 1; k <= 5; k++) {
        double s = 0, c = 1;
        for (int j = 0; j <= 5; j++) {
            if (j >= k)
                s += c * pow(0.1, j) * pow(0.9, 5 - j);
            c = c * (5 - j) / (j + 1);
        }
        assert_close(vote_prob(k, 5, tenth), s, EXACT);
    }
}

/* ---- THERP dependence ------------------------------------------------ */

static const char *const level_names[5] = {"zero", "low", "moderate", "high",
                                           "complete"};
/* level weights w = 0, 1/20, 1/7, 1/2, 1 (NUREG/CR-1278 ch. 10, methods.md
 * §3.2 [C]) */
static const double weights[5] = {0.0, 1.0 / 20, 1.0 / 7, 0.5, 1.0};

/* Two safeguards with the same BHEP N, the second dependent on the first:
 * P(both miss) = N x CHEP (methods.md §3.3 joint table [D]); P(second)
 * = N at every level (marginal preservation, methods.md §3.4 item 1
 * [D]). */
static void test_therp_pairs(void **state)
{
    (void)state;
    const char *const bhep[3] = {"0.001", "0.01", "0.05"};
    const double N[3] = {0.001, 0.01, 0.05};
    /* methods.md §3.3 joint table, printed to 8 significant digits */
    const double joint[3][5] = {
        {1.0e-6, 5.095e-5, 1.4371429e-4, 5.005e-4, 1.0e-3},
        {1.0e-4, 5.95e-4, 1.5142857e-3, 5.05e-3, 1.0e-2},
        {2.5e-3, 4.875e-3, 9.2857143e-3, 2.625e-2, 5.0e-2},
    };
    for (int i = 0; i < 3; i++)
        for (int l = 0; l < 5; l++) {
            char xml[2048];
            snprintf(xml, sizeof xml, HEAD
                     "<safeguard id=\"n1\" p=\"%s\"/>"
                     "<safeguard id=\"n2\" p=\"%s\"/>"
                     "<hazard id=\"both\"><all><ref to=\"n1\"/>"
                     "<ref to=\"n2\"/></all></hazard>"
                     "<hazard id=\"second\"><ref to=\"n2\"/></hazard>"
                     "<hazard id=\"first\"><ref to=\"n1\"/></hazard>"
                     "<dependence id=\"d\" first=\"n1\" second=\"n2\" "
                     "level=\"%s\"/>" TAIL,
                     bhep[i], bhep[i], level_names[l]);
            lw_model *m = tu_load(xml);
            double both = tu_prob(m, LW_NONE, 0);
            /* printed table: 8 significant digits */
            assert_close(both, joint[i][l], 5e-8);
            /* the exact formula N (N + w (1 - N)) (methods.md §3.2) */
            assert_close(both, N[i] * (N[i] + weights[l] * (1 - N[i])),
                         EXACT);
            assert_close(tu_prob(m, LW_NONE, 1), N[i], EXACT);
            assert_close(tu_prob(m, LW_NONE, 2), N[i], EXACT);
            lw_model_free(m);
        }
}

/* CHEP itself, P(second | first missed) = P(both) / P(first): the
 * conditional table at BHEP .001/.01/.05 (methods.md §3.3 [D], printed
 * to 7 significant digits), and failure given success N(1 - w) at
 * N = 0.01: ZD .01, LD .0095, MD .0085714, HD .005, CD 0 (§3.3 [D]). */
static void test_therp_conditional(void **state)
{
    (void)state;
    const char *const bhep[3] = {"0.001", "0.01", "0.05"};
    const double chep[3][5] = {
        {0.001, 0.05095, 0.1437143, 0.5005, 1.0},
        {0.01, 0.0595, 0.1514286, 0.505, 1.0},
        {0.05, 0.0975, 0.1857143, 0.525, 1.0},
    };
    const double fail_given_success[5] = {0.01, 0.0095, 0.0085714, 0.005,
                                          0.0};
    for (int i = 0; i < 3; i++)
        for (int l = 0; l < 5; l++) {
            char xml[2048];
            /* a different first BHEP (0.2) makes the conditional visible
             * apart from the marginal */
            snprintf(xml, sizeof xml, HEAD
                     "<safeguard id=\"n1\" p=\"0.2\"/>"
                     "<safeguard id=\"n2\" p=\"%s\"/>"
                     "<condition id=\"k\" state=\"true\"/>"
                     "<hazard id=\"both\"><all><ref to=\"n1\"/>"
                     "<ref to=\"n2\"/><ref to=\"k\"/></all></hazard>"
                     "<hazard id=\"second\"><ref to=\"n2\"/></hazard>"
                     "<dependence first=\"n1\" second=\"n2\" "
                     "level=\"%s\"/>" TAIL,
                     bhep[i], level_names[l]);
            lw_model *m = tu_load(xml);
            double both = tu_prob(m, LW_NONE, 0);
            double c = both / 0.2;
            assert_close(c, chep[i][l], 5e-7);
            /* P(second) = 0.2 c + 0.8 N (1 - w) */
            double second = tu_prob(m, LW_NONE, 1);
            double fs = (second - 0.2 * c) / 0.8;
            if (i == 1) {
                if (l == 4)
                    assert_true(fabs(fs) < 1e-15);
                else
                    assert_close(fs, fail_given_success[l], 5e-6);
            }
            lw_model_free(m);
        }
}

/* Three sequential checks, BHEP 0.01, the same level pair-wise:
 * P(all three) = N CHEP^2 (methods.md §3.3 chain table [D]). */
static void test_therp_chain(void **state)
{
    (void)state;
    const double chain[5] = {1.0e-6, 3.540250e-5, 2.2930612e-4, 2.55025e-3,
                             1.0e-2};
    for (int l = 0; l < 5; l++) {
        char xml[2048];
        snprintf(xml, sizeof xml, HEAD
                 "<safeguard id=\"n1\" p=\"0.01\"/>"
                 "<safeguard id=\"n2\" p=\"0.01\"/>"
                 "<safeguard id=\"n3\" p=\"0.01\"/>"
                 "<hazard id=\"all3\"><all><ref to=\"n1\"/><ref to=\"n2\"/>"
                 "<ref to=\"n3\"/></all></hazard>"
                 "<hazard id=\"third\"><ref to=\"n3\"/></hazard>"
                 "<dependence id=\"d12\" first=\"n1\" second=\"n2\" "
                 "level=\"%s\"/>"
                 "<dependence id=\"d23\" first=\"n2\" second=\"n3\" "
                 "level=\"%s\"/>" TAIL,
                 level_names[l], level_names[l]);
        lw_model *m = tu_load(xml);
        double P = tu_prob(m, LW_NONE, 0);
        assert_close(P, chain[l], 5e-8);     /* printed to 8 digits */
        double c = 0.01 + weights[l] * 0.99;
        assert_close(P, 0.01 * c * c, EXACT);
        /* the marginal survives the chain (methods.md §3.4 item 1) */
        assert_close(tu_prob(m, LW_NONE, 1), 0.01, EXACT);
        lw_model_free(m);
    }
}

/* The coherent encoding N2 := I OR (N1 AND D): at N = 0.01, i and d by
 * level (methods.md §3.4 item 2 table [D], printed to 7 digits). */
static void test_therp_encoding(void **state)
{
    (void)state;
    const double iv[5] = {0.01, 0.0095, 0.0085714, 0.005, 0.0};
    const double dv[5] = {0.0, 0.0504796, 0.1440922, 0.5025126, 1.0};
    for (int l = 0; l < 5; l++) {
        char xml[2048];
        snprintf(xml, sizeof xml, HEAD
                 "<safeguard id=\"n1\" p=\"0.01\"/>"
                 "<safeguard id=\"n2\" p=\"0.01\"/>"
                 "<hazard id=\"h\"><all><ref to=\"n1\"/><ref to=\"n2\"/>"
                 "</all></hazard>"
                 "<dependence id=\"dd\" first=\"n1\" second=\"n2\" "
                 "level=\"%s\"/>" TAIL, level_names[l]);
        lw_model *m = tu_load(xml);
        lw_network *net = NULL;
        lw_error err = LW_ERROR_INIT;
        assert_int_equal(lw_compile(m, LW_NONE, &net, &err), LW_OK);
        int found = 0;
        for (size_t v = 0; v < net->nvars; v++) {
            const lw_var *x = &net->vars[v];
            if (strcmp(x->name, "n2") == 0) {
                found |= 1;
                /* printed to 7 decimals: half a unit in the last */
                assert_true(fabs(x->p - iv[l]) <= 5e-8);
            } else if (strcmp(x->name, "depends:dd") == 0) {
                found |= 2;
                assert_true(fabs(x->p - dv[l]) <= 5e-8);
            }
        }
        assert_int_equal(found, 3);
        lw_network_free(net);
        lw_error_clear(&err);
        lw_model_free(m);
    }
}

/* ---- beta-factor common cause ---------------------------------------- */

/* The sheet's fault-tree expansion written out by hand: each member is
 * OR(X_ind, CCF) with Q_I = (1 - beta) Q_t and Q_CCF = beta Q_t
 * (methods.md §4.2 [D]):
 *   both of 2 miss,  Q_t .01, beta .1  -> 1.080919e-3
 *   all of 3 miss,   Q_t .01, beta .1  -> 1.000728271e-3
 *   2-of-3 fail,     Q_t 1e-3, beta .05 -> 5.2705650e-5 */
static void test_beta_factor_expanded(void **state)
{
    (void)state;
    const char *two = HEAD
        "<error id=\"ccf\" p=\"0.001\"/>"
        "<hazard id=\"h\"><all>"
        "<any><safeguard id=\"a\" p=\"0.009\"/><ref to=\"ccf\"/></any>"
        "<any><safeguard id=\"b\" p=\"0.009\"/><ref to=\"ccf\"/></any>"
        "</all></hazard>" TAIL;
    /* exact: 1 - (1 - 0.001)(1 - 0.009^2), printed to 7 digits but the
     * product is exactly 1.080919e-3 */
    assert_close(model_prob(two), 1.080919e-3, EXACT);
    const char *three = HEAD
        "<error id=\"ccf\" p=\"0.001\"/>"
        "<hazard id=\"h\"><all>"
        "<any><safeguard id=\"a\" p=\"0.009\"/><ref to=\"ccf\"/></any>"
        "<any><safeguard id=\"b\" p=\"0.009\"/><ref to=\"ccf\"/></any>"
        "<any><safeguard id=\"c\" p=\"0.009\"/><ref to=\"ccf\"/></any>"
        "</all></hazard>" TAIL;
    assert_close(model_prob(three), 1.000728271e-3, EXACT);
    const char *vote = HEAD
        "<error id=\"ccf\" p=\"5e-5\"/>"
        "<hazard id=\"h\"><vote k=\"2\">"
        "<any><safeguard id=\"a\" p=\"9.5e-4\"/><ref to=\"ccf\"/></any>"
        "<any><safeguard id=\"b\" p=\"9.5e-4\"/><ref to=\"ccf\"/></any>"
        "<any><safeguard id=\"c\" p=\"9.5e-4\"/><ref to=\"ccf\"/></any>"
        "</vote></hazard>" TAIL;
    /* printed to 8 digits; exact 1 - (1-5e-5)(1 - [3 QI^2 - 2 QI^3]) */
    assert_close(model_prob(vote), 5.2705650e-5, 1e-8);
    double qi = 9.5e-4;
    assert_close(model_prob(vote),
                 1 - (1 - 5e-5) * (1 - (3 * qi * qi - 2 * qi * qi * qi)),
                 EXACT);
}

/* The <common-cause> element.  model-format.md keeps each member's
 * marginal p: q = beta min(p), independent part r = (p - q)/(1 - q).
 * The sheet's §4.2 rows use Q_I = (1 - beta) Q_t instead, whose member
 * marginal is Q_I + Q_CCF - Q_I Q_CCF; a model whose members state that
 * marginal (0.009991 for Q_t .01, beta .1) and whose beta gives
 * Q_CCF = 0.001 reproduces the sheet exactly. */
static void test_beta_factor_element(void **state)
{
    (void)state;
    char xml[2048];
    const char *fmt2 = HEAD
        "<hazard id=\"h\"><all><safeguard id=\"a\" p=\"%s\"/>"
        "<safeguard id=\"b\" p=\"%s\"/></all></hazard>"
        "<common-cause id=\"g\" beta=\"%s\" members=\"a b\"/>" TAIL;
    const char *fmt3 = HEAD
        "<hazard id=\"h\"><%s><safeguard id=\"a\" p=\"%s\"/>"
        "<safeguard id=\"b\" p=\"%s\"/><safeguard id=\"c\" p=\"%s\"/>"
        "</%s></hazard>"
        "<common-cause id=\"g\" beta=\"%s\" members=\"a b c\"/>" TAIL;
    /* sheet marginal: 0.009 + 0.001 - 0.009 * 0.001 = 0.009991, and
     * beta = 0.001 / 0.009991 to 17 digits */
    char beta[64];
    snprintf(beta, sizeof beta, "%.17g", 0.001 / 0.009991);
    snprintf(xml, sizeof xml, fmt2, "0.009991", "0.009991", beta);
    assert_close(model_prob(xml), 1.080919e-3, 1e-12);   /* §4.2 [D] */
    snprintf(xml, sizeof xml, fmt3, "all", "0.009991", "0.009991",
             "0.009991", "all", beta);
    assert_close(model_prob(xml), 1.000728271e-3, 1e-12); /* §4.2 [D] */
    /* 2oo3: Q_I 9.5e-4, Q_CCF 5e-5 -> member marginal 9.9995250e-4 */
    char p3[64], beta3[64];
    double marg = 9.5e-4 + 5e-5 - 9.5e-4 * 5e-5;
    snprintf(p3, sizeof p3, "%.17g", marg);
    snprintf(beta3, sizeof beta3, "%.17g", 5e-5 / marg);
    snprintf(xml, sizeof xml, fmt3, "vote k=\"2\"", p3, p3, p3, "vote",
             beta3);
    assert_close(model_prob(xml), 5.2705650e-5, 1e-8);   /* §4.2, 8 digits */

    /* the project's own convention at the sheet's nominal inputs
     * (model-format.md closed form): P = q + (1 - q) r^n with q = 0.001,
     * r = 0.009 / 0.999; not the sheet's 1.080919e-3, because here each
     * member keeps its marginal 0.01 exactly */
    snprintf(xml, sizeof xml, fmt2, "0.01", "0.01", "0.1");
    double q = 0.001, r = (0.01 - q) / (1 - q);
    assert_close(model_prob(xml), q + (1 - q) * r * r, EXACT);
    snprintf(xml, sizeof xml, fmt3, "all", "0.01", "0.01", "0.01", "all",
             "0.1");
    assert_close(model_prob(xml), q + (1 - q) * r * r * r, EXACT);
    /* beta 0: independent (methods.md §4.2, independent column 1.0e-6) */
    snprintf(xml, sizeof xml, fmt3, "all", "0.01", "0.01", "0.01", "all",
             "0");
    assert_close(model_prob(xml), 1e-6, EXACT);
    /* members with different p: q = beta * min p (model-format.md) and
     * every member keeps its marginal: hazard 'any' of one member alone */
    const char *mixed = HEAD
        "<safeguard id=\"a\" p=\"0.02\"/><safeguard id=\"b\" p=\"0.05\"/>"
        "<hazard id=\"both\"><all><ref to=\"a\"/><ref to=\"b\"/></all>"
        "</hazard>"
        "<hazard id=\"b-alone\"><ref to=\"b\"/></hazard>"
        "<common-cause id=\"g\" beta=\"0.25\" members=\"a b\"/>" TAIL;
    lw_model *m = tu_load(mixed);
    double qq = 0.25 * 0.02;
    double ra = (0.02 - qq) / (1 - qq), rb = (0.05 - qq) / (1 - qq);
    assert_close(tu_prob(m, LW_NONE, 0), qq + (1 - qq) * ra * rb, EXACT);
    assert_close(tu_prob(m, LW_NONE, 1), 0.05, EXACT);
    lw_model_free(m);
}

/* ---- audit counts ------------------------------------------------------ */

/* <observed count="x" of="n"/> takes the Jeffreys posterior mean
 * (x + 0.5)/(n + 1): 0/300 -> 1.66113e-3, 3/1000 -> 3.49650e-3,
 * 9/400 -> 2.36908e-2 (methods.md §6.3 table [D], 6 digits). */
static void test_jeffreys_means(void **state)
{
    (void)state;
    const int x[3] = {0, 3, 9}, n[3] = {300, 1000, 400};
    const double mean[3] = {1.66113e-3, 3.49650e-3, 2.36908e-2};
    for (int i = 0; i < 3; i++) {
        char xml[1024];
        snprintf(xml, sizeof xml, HEAD
                 "<hazard id=\"h\"><safeguard id=\"s\">"
                 "<observed count=\"%d\" of=\"%d\"/></safeguard></hazard>"
                 TAIL, x[i], n[i]);
        double P = model_prob(xml);
        assert_close(P, mean[i], 5e-6);
        assert_close(P, (x[i] + 0.5) / (n[i] + 1.0), EXACT);
    }
}

/* ---- the integrated chain ------------------------------------------- */

/* Wrong blood in tube: E0 5e-4, S1 0.3, N1 BHEP 0.01, N2 high dependence
 * on N1: P = 5e-4 x 0.3 x 0.01 x 0.505 = 7.575e-7; with zero dependence
 * 1.5e-8, a factor 50.5 (methods.md §10 [D]). */
static void test_integrated_chain(void **state)
{
    (void)state;
    const char *fmt = HEAD
        "<exposure unit=\"transfusion\" per-year=\"10000\"/>"
        "<hazard id=\"wbit\"><all>"
        "<error id=\"E0\" p=\"5e-4\"/><safeguard id=\"S1\" p=\"0.3\"/>"
        "<safeguard id=\"N1\" p=\"0.01\"/><safeguard id=\"N2\" p=\"0.01\"/>"
        "</all></hazard>"
        "<dependence id=\"bedside\" first=\"N1\" second=\"N2\" "
        "level=\"%s\"/>"
        "<variant id=\"independent\"><set ref=\"bedside\" level=\"zero\"/>"
        "</variant>" TAIL;
    char xml[2048];
    snprintf(xml, sizeof xml, fmt, "high");
    lw_model *m = tu_load(xml);
    double hd = tu_prob(m, LW_NONE, 0);
    assert_close(hd, 7.575e-7, EXACT);
    double zd = tu_prob(m, 0, 0);
    assert_close(zd, 1.5e-8, EXACT);
    assert_close(hd / zd, 50.5, EXACT);
    /* through lw_analyze: per year = P x exposure */
    lw_analysis *a = NULL;
    lw_error err = LW_ERROR_INIT;
    assert_int_equal(lw_analyze(m, LW_NONE, 0, NULL, &a, &err), LW_OK);
    assert_close(a->probability, 7.575e-7, EXACT);
    assert_true(a->has_exposure);
    assert_close(a->per_year, 7.575e-7 * 10000, EXACT);
    assert_close(a->one_in, 1.0 / 7.575e-7, EXACT);
    lw_analysis_free(a);
    lw_error_clear(&err);
    lw_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_series_nine),
        cmocka_unit_test(test_tiny_or),
        cmocka_unit_test(test_parallel_three),
        cmocka_unit_test(test_boolean_reduction),
        cmocka_unit_test(test_a_and_b_or_c),
        cmocka_unit_test(test_bridge),
        cmocka_unit_test(test_votes),
        cmocka_unit_test(test_therp_pairs),
        cmocka_unit_test(test_therp_conditional),
        cmocka_unit_test(test_therp_chain),
        cmocka_unit_test(test_therp_encoding),
        cmocka_unit_test(test_beta_factor_expanded),
        cmocka_unit_test(test_beta_factor_element),
        cmocka_unit_test(test_jeffreys_means),
        cmocka_unit_test(test_integrated_chain),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
