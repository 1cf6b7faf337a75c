/*
 * test_compile.c - the compile room: conditions folded away, absent
 * safeguards, variants, and the exact common-cause and THERP expansions
 * (model-format.md, "How dependence is quantified").
 *
 * Every hazard probability is computed twice: by enumerating the compiled
 * network's variables (tu_brute_prob, no BDD) and by the library (tu_prob);
 * both must match the expected value, whose source is named beside it.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "layerwise/network.h"
#include "testutil.h"

/* A value printed to 7 decimals (methods.md 3.4) is within 5e-8. */
#define PRINTED7 5.0000001e-8
#define assert_abs(a, b, tol)                                              \
    do {                                                                   \
        double a_ = (a), b_ = (b);                                         \
        if (!(fabs(a_ - b_) <= (tol)))                                     \
            fail_msg("%s = %.17g, expected %.17g (abs tol %g)", #a, a_,   \
                     b_, (double)(tol));                                   \
    } while (0)

#define HEAD "<?xml version=\"1.0\"?>\n<safety-model format=\"1\" id=\"m\">\n"
#define END "</safety-model>\n"

static lw_network *compile(const lw_model *m, const char *variant)
{
    size_t v = LW_NONE;
    if (variant) {
        v = lw_model_find_variant(m, variant);
        if (v == LW_NONE)
            fail_msg("no variant %s", variant);
    }
    lw_error err = LW_ERROR_INIT;
    lw_network *net = NULL;
    lw_status st = lw_compile(m, v, &net, &err);
    lw_error_clear(&err);
    if (st != LW_OK)
        fail_msg("compile failed: %s", lw_status_name(st));
    return net;
}

static const lw_var *var_named(const lw_network *net, const char *name)
{
    for (size_t i = 0; i < net->nvars; i++)
        if (!strcmp(net->vars[i].name, name))
            return &net->vars[i];
    return NULL;
}

static double var_p(const lw_network *net, const char *name)
{
    const lw_var *v = var_named(net, name);
    if (!v)
        fail_msg("no variable %s", name);
    return v->p;
}

/* P(gate) by enumeration over the compiled variables. */
static double brute(const lw_network *net, uint32_t gate)
{
    double *p = malloc((net->nvars + 1) * sizeof *p);
    assert_non_null(p);
    for (size_t i = 0; i < net->nvars; i++)
        p[i] = net->vars[i].p;
    double r = tu_brute_prob(net, gate, p);
    free(p);
    return r;
}

/* The hazard's probability, by enumeration and by the library's BDD,
 * each checked against 'want'. */
static void check_hazard(const lw_model *m, const char *variant,
                         double want, double tol)
{
    lw_network *net = compile(m, variant);
    double b = brute(net, net->hazard_gate[0]);
    lw_network_free(net);
    assert_close(b, want, tol);
    size_t v = variant ? lw_model_find_variant(m, variant) : LW_NONE;
    assert_close(tu_prob(m, v, 0), want, tol);
}

/* ------------------------------------------------------------------ */
/* conditions                                                          */

static void test_false_condition_makes_and_impossible(void **state)
{
    (void)state;
    lw_model *m = tu_load(HEAD
        "<error id=\"a\" p=\"0.1\"/>\n"
        "<safeguard id=\"s\" p=\"0.2\"/>\n"
        "<condition id=\"night\" state=\"false\"/>\n"
        "<hazard id=\"h\"><all><ref to=\"a\"/><ref to=\"s\"/>"
        "<ref to=\"night\"/></all></hazard>\n"
        END);
    lw_network *net = compile(m, NULL);
    /* gate 0 is the constant false */
    assert_int_equal(net->hazard_gate[0], 0);
    assert_int_equal(net->gates[0].kind, LW_GATE_FALSE);
    assert_null(var_named(net, "night"));   /* never a variable */
    lw_network_free(net);
    assert_true(tu_prob(m, LW_NONE, 0) == 0.0);
    lw_model_free(m);
}

static void test_true_condition_folds(void **state)
{
    (void)state;
    /* true in an AND is dropped; true in an OR makes it certain */
    lw_model *m = tu_load(HEAD
        "<error id=\"a\" p=\"0.1\"/>\n"
        "<error id=\"b\" p=\"0.2\"/>\n"
        "<condition id=\"c\" state=\"true\"/>\n"
        "<hazard id=\"h\"><all><ref to=\"a\"/><ref to=\"c\"/></all>"
        "</hazard>\n"
        "<hazard id=\"h2\"><any><ref to=\"b\"/><ref to=\"c\"/></any>"
        "</hazard>\n"
        END);
    lw_network *net = compile(m, NULL);
    const lw_var *a = var_named(net, "a");
    assert_non_null(a);
    assert_int_equal(net->hazard_gate[0], net->event_gate[a->node]);
    assert_int_equal(net->gates[net->hazard_gate[0]].kind, LW_GATE_VAR);
    assert_int_equal(net->hazard_gate[1], 1);     /* constant true */
    assert_int_equal(net->gates[1].kind, LW_GATE_TRUE);
    assert_null(var_named(net, "c"));
    lw_network_free(net);
    assert_close(tu_prob(m, LW_NONE, 0), 0.1, 1e-15);   /* closed form: p_a */
    assert_true(tu_prob(m, LW_NONE, 1) == 1.0);
    lw_model_free(m);
}

static void test_vote_with_conditions(void **state)
{
    (void)state;
    /* 3-of-4 with one input true is 2-of-3 of the rest */
    lw_model *m = tu_load(HEAD
        "<error id=\"a\" p=\"0.1\"/><error id=\"b\" p=\"0.1\"/>"
        "<error id=\"c\" p=\"0.1\"/>\n"
        "<condition id=\"yes\" state=\"true\"/>\n"
        "<condition id=\"no\" state=\"false\"/>\n"
        "<hazard id=\"h\"><vote k=\"3\"><ref to=\"yes\"/><ref to=\"a\"/>"
        "<ref to=\"b\"/><ref to=\"c\"/></vote></hazard>\n"
        "<hazard id=\"h2\"><vote k=\"2\"><ref to=\"yes\"/><ref to=\"a\"/>"
        "<ref to=\"b\"/></vote></hazard>\n"
        "<hazard id=\"h3\"><vote k=\"2\"><ref to=\"no\"/><ref to=\"a\"/>"
        "<ref to=\"b\"/></vote></hazard>\n"
        "<hazard id=\"h4\"><vote k=\"2\"><ref to=\"yes\"/><ref to=\"yes\"/>"
        "<ref to=\"a\"/></vote></hazard>\n"
        "<hazard id=\"h5\"><vote k=\"3\"><ref to=\"no\"/><ref to=\"a\"/>"
        "<ref to=\"b\"/></vote></hazard>\n"
        END);
    lw_network *net = compile(m, NULL);
    const lw_gate *g = &net->gates[net->hazard_gate[0]];
    assert_int_equal(g->kind, LW_GATE_VOTE);
    assert_int_equal(g->k, 2);
    assert_int_equal(g->nin, 3);
    /* methods.md 2.4 [D]: 2-of-3 at q = 0.1 is 0.028 */
    assert_close(brute(net, net->hazard_gate[0]), 0.028, 1e-12);
    /* 2-of-3 with one true: 1-of-2, an OR; closed form 1 - 0.9^2 */
    assert_int_equal(net->gates[net->hazard_gate[1]].kind, LW_GATE_OR);
    assert_close(brute(net, net->hazard_gate[1]), 1.0 - 0.9 * 0.9, 1e-12);
    /* 2-of-3 with one false: 2-of-2, an AND; closed form 0.1^2 */
    assert_int_equal(net->gates[net->hazard_gate[2]].kind, LW_GATE_AND);
    assert_close(brute(net, net->hazard_gate[2]), 0.01, 1e-12);
    /* enough true inputs: certain; too many false: impossible */
    assert_int_equal(net->hazard_gate[3], 1);
    assert_int_equal(net->hazard_gate[4], 0);
    assert_null(var_named(net, "yes"));
    assert_null(var_named(net, "no"));
    lw_network_free(net);
    /* the same through the library: methods.md 2.4 [D]; closed forms
     * 1 - 0.9^2 and 0.1^2 */
    assert_close(tu_prob(m, LW_NONE, 0), 0.028, 1e-12);
    assert_close(tu_prob(m, LW_NONE, 1), 0.19, 1e-12);
    assert_close(tu_prob(m, LW_NONE, 2), 0.01, 1e-12);
    lw_model_free(m);
}

/* ------------------------------------------------------------------ */
/* absent safeguards                                                   */

static void test_absent_safeguard_is_certain_variable(void **state)
{
    (void)state;
    lw_model *m = tu_load(HEAD
        "<error id=\"a\" p=\"0.1\"/>\n"
        "<safeguard id=\"scan\" p=\"0.01\" present=\"no\"/>\n"
        "<safeguard id=\"nurse\" p=\"0.2\"/>\n"
        "<hazard id=\"h\"><all><ref to=\"a\"/><ref to=\"scan\"/>"
        "<ref to=\"nurse\"/></all></hazard>\n"
        "<variant id=\"add-scan\"><set ref=\"scan\" present=\"yes\"/>"
        "</variant>\n"
        END);
    lw_network *net = compile(m, NULL);
    const lw_var *scan = var_named(net, "scan");
    assert_non_null(scan);                  /* a variable, not a constant */
    assert_int_equal(scan->kind, LW_VAR_SAFEGUARD);
    assert_true(scan->p == 1.0);            /* model-format.md: p = 1 */
    assert_true(var_p(net, "nurse") == 0.2);
    lw_network_free(net);
    /* closed form: 0.1 * 1 * 0.2 */
    check_hazard(m, NULL, 0.02, 1e-14);
    /* present again in the variant: its own p */
    net = compile(m, "add-scan");
    assert_true(var_p(net, "scan") == 0.01);
    lw_network_free(net);
    check_hazard(m, "add-scan", 0.1 * 0.01 * 0.2, 1e-14);
    lw_model_free(m);
}

/* A dependence second that is absent misses with certainty: the layer is
 * not there (model-format.md: "An absent safeguard misses with certainty
 * (p = 1)").  Closed form: P(e AND b) = p_e * 1. */
static void test_absent_dependence_second(void **state)
{
    (void)state;
    lw_model *m = tu_load(HEAD
        "<error id=\"e\" p=\"0.01\"/>\n"
        "<safeguard id=\"a\" p=\"0.1\"/>\n"
        "<safeguard id=\"b\" p=\"0.1\" present=\"no\"/>\n"
        "<hazard id=\"h\"><any><all><ref to=\"e\"/><ref to=\"b\"/></all>"
        "<all><ref to=\"e\"/><ref to=\"a\"/></all></any></hazard>\n"
        "<dependence id=\"d\" first=\"a\" second=\"b\" level=\"high\"/>\n"
        END);
    double P = tu_prob(m, LW_NONE, 0);
    lw_model_free(m);
    /* model-format.md: an absent safeguard misses with certainty, so
     * P = P(e) = 0.01 (closed form) */
    assert_close(P, 0.01, 1e-12);
}

/* ------------------------------------------------------------------ */
/* variants                                                            */

#define VARIANT_MODEL                                                       \
    HEAD                                                                    \
    "<error id=\"a\" p=\"0.1\"><lognormal error-factor=\"3\"/></error>\n"   \
    "<safeguard id=\"s\" p=\"0.01\" present=\"no\"/>\n"                     \
    "<safeguard id=\"t\" p=\"0.01\"/>\n"                                    \
    "<safeguard id=\"w\" p=\"0.01\"/>\n"                                    \
    "<safeguard id=\"u\" p=\"0.02\"/>\n"                                    \
    "<safeguard id=\"v\" p=\"0.04\"/>\n"                                    \
    "<safeguard id=\"o\"><observed count=\"9\" of=\"400\"/></safeguard>\n"  \
    "<condition id=\"c\" state=\"false\"/>\n"                               \
    "<hazard id=\"h\"><all><ref to=\"a\"/><any>\n"                          \
    "  <all><ref to=\"t\"/><ref to=\"w\"/></all>\n"                         \
    "  <all><ref to=\"u\"/><ref to=\"v\"/></all>\n"                         \
    "  <all><ref to=\"s\"/><ref to=\"o\"/></all>\n"                         \
    "  <ref to=\"c\"/>\n"                                                   \
    "</any></all></hazard>\n"                                               \
    "<common-cause id=\"g\" beta=\"0.1\" members=\"u v\"/>\n"               \
    "<dependence id=\"d\" first=\"t\" second=\"w\" level=\"high\"/>\n"      \
    "<variant id=\"vp\"><set ref=\"a\" p=\"0.3\"/>"                         \
    "<set ref=\"o\" p=\"0.5\"/></variant>\n"                                \
    "<variant id=\"vpresent\"><set ref=\"s\" present=\"yes\"/></variant>\n" \
    "<variant id=\"vstate\"><set ref=\"c\" state=\"true\"/></variant>\n"    \
    "<variant id=\"vbeta\"><set ref=\"g\" beta=\"0.5\"/></variant>\n"       \
    "<variant id=\"vlevel\"><set ref=\"d\" level=\"low\"/></variant>\n"     \
    END

static void test_variants_change_probabilities(void **state)
{
    (void)state;
    lw_model *m = tu_load(VARIANT_MODEL);
    lw_network *base = compile(m, NULL);
    assert_true(var_p(base, "a") == 0.1);
    assert_true(var_p(base, "s") == 1.0);
    /* Jeffreys mean of 9/400, methods.md 6.3 [D] (closed form 9.5/401) */
    assert_close(var_p(base, "o"), 9.5 / 401.0, 1e-15);
    /* closed form q = beta * min p (model-format.md) */
    assert_close(var_p(base, "common:g"), 0.1 * 0.02, 1e-15);
    assert_abs(var_p(base, "depends:d"), 0.5025126, PRINTED7); /* 3.4 HD */
    double pb = brute(base, base->hazard_gate[0]);

    /* set p: the variable's p changes, a lognormal keeps its error factor */
    lw_network *net = compile(m, "vp");
    assert_true(var_p(net, "a") == 0.3);
    assert_true(var_p(net, "o") == 0.5);
    size_t ai = lw_model_find_node(m, "a");
    assert_int_equal(net->dist[ai].kind, LW_DIST_LOGNORMAL);
    assert_true(net->dist[ai].ef == 3.0);
    /* a multiplies the whole hazard: P scales by 0.3 / 0.1 except for the
     * o term, which changes too; check against enumeration of the base
     * network with a and o replaced (independent of the variant code) */
    {
        double *p = malloc(base->nvars * sizeof *p);
        assert_non_null(p);
        for (size_t i = 0; i < base->nvars; i++) {
            p[i] = base->vars[i].p;
            if (!strcmp(base->vars[i].name, "a"))
                p[i] = 0.3;
            if (!strcmp(base->vars[i].name, "o"))
                p[i] = 0.5;
        }
        assert_close(brute(net, net->hazard_gate[0]),
                     tu_brute_prob(base, base->hazard_gate[0], p), 1e-12);
        free(p);
    }
    lw_network_free(net);

    /* set present */
    net = compile(m, "vpresent");
    assert_true(var_p(net, "s") == 0.01);
    assert_true(brute(net, net->hazard_gate[0]) < pb);
    lw_network_free(net);

    /* set state: the true condition makes the inner OR certain, so the
     * hazard is just a (closed form) */
    net = compile(m, "vstate");
    assert_int_equal(net->gates[net->hazard_gate[0]].kind, LW_GATE_VAR);
    assert_close(brute(net, net->hazard_gate[0]), 0.1, 1e-14);
    lw_network_free(net);
    assert_close(tu_prob(m, lw_model_find_variant(m, "vstate"), 0), 0.1,
                 1e-14);

    /* set beta: q = beta * min p (model-format.md) */
    net = compile(m, "vbeta");
    assert_close(var_p(net, "common:g"), 0.5 * 0.02, 1e-15);
    assert_close(var_p(net, "u"), (0.02 - 0.01) / (1 - 0.01), 1e-14);
    assert_close(var_p(net, "v"), (0.04 - 0.01) / (1 - 0.01), 1e-14);
    lw_network_free(net);

    /* set level: methods.md 3.4 [D], LD at N = 0.01: i 0.0095, d 0.0504796 */
    net = compile(m, "vlevel");
    assert_close(var_p(net, "w"), 0.0095, 1e-12);      /* p (1 - 1/20) */
    assert_abs(var_p(net, "depends:d"), 0.0504796, PRINTED7);
    lw_network_free(net);

    /* the baseline is unchanged by compiling variants */
    net = compile(m, NULL);
    assert_close(brute(net, net->hazard_gate[0]), pb, 1e-15);
    lw_network_free(net);
    lw_network_free(base);
    lw_model_free(m);
}

/* ------------------------------------------------------------------ */
/* common cause                                                        */

static void test_beta_factor_expansion(void **state)
{
    (void)state;
    lw_model *m = tu_load(HEAD
        "<error id=\"e\" p=\"1\"/>\n"
        "<safeguard id=\"u\" p=\"0.02\"/>\n"
        "<safeguard id=\"v\" p=\"0.01\"/>\n"
        "<hazard id=\"h\"><all><ref to=\"e\"/><ref to=\"u\"/>"
        "<ref to=\"v\"/></all></hazard>\n"
        "<common-cause id=\"same-shift\" beta=\"0.2\" members=\"u v\"/>\n"
        END);
    lw_network *net = compile(m, NULL);
    /* closed form (model-format.md): q = beta * min p = 0.2 * 0.01 */
    const double q = 0.002;
    const lw_var *cv = var_named(net, "common:same-shift");
    assert_non_null(cv);
    assert_int_equal(cv->kind, LW_VAR_COMMON);
    assert_close(cv->p, q, 1e-15);
    /* member part (p_i - q) / (1 - q) */
    const double ru = (0.02 - q) / (1 - q), rv = (0.01 - q) / (1 - q);
    const lw_var *u = var_named(net, "u");
    assert_true(u->part);
    assert_int_equal(net->vars[u->partner].kind, LW_VAR_COMMON);
    assert_close(u->p, ru, 1e-14);
    assert_close(var_p(net, "v"), rv, 1e-14);
    /* every member keeps its marginal p_i */
    assert_close(brute(net, net->event_gate[lw_model_find_node(m, "u")]),
                 0.02, 1e-13);
    assert_close(brute(net, net->event_gate[lw_model_find_node(m, "v")]),
                 0.01, 1e-13);
    lw_network_free(net);
    /* both miss: closed form 1 - (1 - q)(1 - r_u r_v) */
    check_hazard(m, NULL, 1 - (1 - q) * (1 - ru * rv), 1e-12);
    lw_model_free(m);
}

/* methods.md 4.2 [D] check values, with member p and beta written so
 * that the expansion has exactly the sheet's Q_I and Q_CCF:
 * p = Q_I (1 - Q_CCF) + Q_CCF, beta = Q_CCF / p. */
static void test_beta_factor_published_values(void **state)
{
    (void)state;
    /* Q_t 0.01, beta 0.1: Q_I 0.009, Q_CCF 0.001 */
    lw_model *m = tu_load(HEAD
        "<safeguard id=\"x\" p=\"0.009991\"/>\n"
        "<safeguard id=\"y\" p=\"0.009991\"/>\n"
        "<safeguard id=\"z\" p=\"0.009991\"/>\n"
        "<hazard id=\"two\"><all><ref to=\"x\"/><ref to=\"y\"/></all>"
        "</hazard>\n"
        "<common-cause id=\"g\" beta=\"0.10009008107296567\" "
        "members=\"x y\"/>\n"
        END);
    lw_network *net = compile(m, NULL);
    assert_close(var_p(net, "common:g"), 0.001, 1e-12);
    assert_close(var_p(net, "x"), 0.009, 1e-12);
    lw_network_free(net);
    /* methods.md 4.2 [D]: both of 2 miss, 1.080919e-3 */
    check_hazard(m, NULL, 1.080919e-3, 1e-6);
    lw_model_free(m);
    m = tu_load(HEAD
        "<safeguard id=\"x\" p=\"0.009991\"/>\n"
        "<safeguard id=\"y\" p=\"0.009991\"/>\n"
        "<safeguard id=\"z\" p=\"0.009991\"/>\n"
        "<hazard id=\"three\"><all><ref to=\"x\"/><ref to=\"y\"/>"
        "<ref to=\"z\"/></all></hazard>\n"
        "<common-cause id=\"g\" beta=\"0.10009008107296567\" "
        "members=\"x y z\"/>\n"
        END);
    /* methods.md 4.2 [D]: all 3 parallel miss, 1.000728271e-3 */
    check_hazard(m, NULL, 1.000728271e-3, 1e-9);
    lw_model_free(m);
    /* Q_t 1e-3, beta 0.05: Q_I 9.5e-4, Q_CCF 5e-5; 2-out-of-3 fails */
    m = tu_load(HEAD
        "<safeguard id=\"x\" p=\"0.0009999525\"/>\n"
        "<safeguard id=\"y\" p=\"0.0009999525\"/>\n"
        "<safeguard id=\"z\" p=\"0.0009999525\"/>\n"
        "<hazard id=\"vote\"><vote k=\"2\"><ref to=\"x\"/><ref to=\"y\"/>"
        "<ref to=\"z\"/></vote></hazard>\n"
        "<common-cause id=\"g\" beta=\"0.050002375112817861\" "
        "members=\"x y z\"/>\n"
        END);
    /* methods.md 4.2 [D]: exact 5.2705650e-5 */
    check_hazard(m, NULL, 5.2705650e-5, 1e-7);
    lw_model_free(m);
}

/* ------------------------------------------------------------------ */
/* THERP dependence                                                    */

static lw_model *therp_pair(const char *level)
{
    char xml[1024];
    snprintf(xml, sizeof xml, HEAD
             "<safeguard id=\"first\" p=\"0.01\"/>\n"
             "<safeguard id=\"second\" p=\"0.01\"/>\n"
             "<hazard id=\"both\"><all><ref to=\"first\"/>"
             "<ref to=\"second\"/></all></hazard>\n"
             "<hazard id=\"second-alone\"><ref to=\"second\"/></hazard>\n"
             "<dependence id=\"double-check\" first=\"first\" "
             "second=\"second\" level=\"%s\"/>\n" END, level);
    return tu_load(xml);
}

static void test_therp_expansion(void **state)
{
    (void)state;
    /* methods.md 3.4 [D] (i, d) at N = 0.01 and 3.3 [D] joint N * CHEP */
    static const struct {
        const char *level;
        double i, d, joint;
    } rows[] = {
        {"zero", 0.01, 0.0, 1.0e-4},
        {"low", 0.0095, 0.0504796, 5.95e-4},
        {"moderate", 0.0085714, 0.1440922, 1.5142857e-3},
        {"high", 0.005, 0.5025126, 5.05e-3},
        {"complete", 0.0, 1.0, 1.0e-2},
    };
    for (size_t r = 0; r < sizeof rows / sizeof *rows; r++) {
        lw_model *m = therp_pair(rows[r].level);
        lw_network *net = compile(m, NULL);
        const lw_var *sec = var_named(net, "second");
        const lw_var *dep = var_named(net, "depends:double-check");
        assert_non_null(sec);
        assert_non_null(dep);
        assert_int_equal(dep->kind, LW_VAR_DEPENDS);
        assert_true(sec->part);
        assert_int_equal(net->vars[sec->partner].kind, LW_VAR_DEPENDS);
        assert_abs(sec->p, rows[r].i, PRINTED7);
        assert_abs(dep->p, rows[r].d, PRINTED7);
        /* the first is a plain variable */
        assert_false(var_named(net, "first")->part);
        assert_true(var_p(net, "first") == 0.01);
        /* joint miss N * CHEP; the second keeps its marginal N
         * (methods.md 3.4 fact 1) */
        assert_close(brute(net, net->hazard_gate[0]), rows[r].joint, 1e-6);
        assert_close(brute(net, net->hazard_gate[1]), 0.01, 1e-12);
        lw_network_free(net);
        assert_close(tu_prob(m, LW_NONE, 0), rows[r].joint, 1e-6);
        assert_close(tu_prob(m, LW_NONE, 1), 0.01, 1e-12);
        lw_model_free(m);
    }
}

static void test_therp_closed_form(void **state)
{
    (void)state;
    /* model-format.md: i = p(1 - w), d = (c - i)/(1 - i), c = p + w(1-p);
     * with a first of another probability, P(A and B) = P(A) c */
    lw_model *m = tu_load(HEAD
        "<safeguard id=\"a\" p=\"0.3\"/>\n"
        "<safeguard id=\"b\" p=\"0.04\"/>\n"
        "<hazard id=\"h\"><all><ref to=\"a\"/><ref to=\"b\"/></all>"
        "</hazard>\n"
        "<dependence id=\"dd\" first=\"a\" second=\"b\" level=\"moderate\"/>\n"
        END);
    const double p = 0.04, w = 1.0 / 7.0;      /* NUREG/CR-1278 MD */
    const double i = p * (1 - w), c = p + w * (1 - p);
    lw_network *net = compile(m, NULL);
    assert_close(var_p(net, "b"), i, 1e-14);
    assert_close(var_p(net, "depends:dd"), (c - i) / (1 - i), 1e-14);
    lw_network_free(net);
    check_hazard(m, NULL, 0.3 * c, 1e-12);
    lw_model_free(m);
}

static void test_therp_chain_of_three(void **state)
{
    (void)state;
    /* methods.md 3.3 [D]: three checks of BHEP 0.01, HD pair-wise:
     * N CHEP^2 = 2.55025e-3; the third depends on the second as
     * modelled (with its own dependence) */
    lw_model *m = tu_load(HEAD
        "<safeguard id=\"c1\" p=\"0.01\"/>\n"
        "<safeguard id=\"c2\" p=\"0.01\"/>\n"
        "<safeguard id=\"c3\" p=\"0.01\"/>\n"
        "<hazard id=\"h\"><all><ref to=\"c1\"/><ref to=\"c2\"/>"
        "<ref to=\"c3\"/></all></hazard>\n"
        "<dependence id=\"d23\" first=\"c2\" second=\"c3\" level=\"high\"/>\n"
        "<dependence id=\"d12\" first=\"c1\" second=\"c2\" level=\"high\"/>\n"
        END);
    lw_network *net = compile(m, NULL);
    assert_non_null(var_named(net, "depends:d12"));
    assert_non_null(var_named(net, "depends:d23"));
    /* every check keeps its marginal 0.01 (methods.md 3.4 fact 1) */
    for (int k = 1; k <= 3; k++) {
        char id[8];
        snprintf(id, sizeof id, "c%d", k);
        assert_close(brute(net, net->event_gate[lw_model_find_node(m, id)]),
                     0.01, 1e-12);
    }
    lw_network_free(net);
    check_hazard(m, NULL, 2.55025e-3, 1e-9);
    lw_model_free(m);
}

static void test_synthetic_names(void **state)
{
    (void)state;
    lw_model *m = tu_load(HEAD
        "<safeguard id=\"issue-a\" p=\"0.05\"/>\n"
        "<safeguard id=\"issue-b\" p=\"0.05\"/>\n"
        "<safeguard id=\"nurse-1\" p=\"0.02\"/>\n"
        "<safeguard id=\"nurse-2\" p=\"0.02\"/>\n"
        "<safeguard id=\"x\" p=\"0.02\"/><safeguard id=\"y\" p=\"0.02\"/>\n"
        "<hazard id=\"h\"><any><all><ref to=\"issue-a\"/>"
        "<ref to=\"issue-b\"/></all><all><ref to=\"nurse-1\"/>"
        "<ref to=\"nurse-2\"/></all><all><ref to=\"x\"/><ref to=\"y\"/>"
        "</all></any></hazard>\n"
        "<common-cause id=\"same-shift\" beta=\"0.1\" "
        "members=\"issue-a issue-b\"/>\n"
        "<dependence id=\"double-check\" first=\"nurse-1\" "
        "second=\"nurse-2\" level=\"high\"/>\n"
        "<dependence first=\"x\" second=\"y\" level=\"low\"/>\n"
        END);
    lw_network *net = compile(m, NULL);
    /* model-format.md: common:ID and depends:ID */
    const lw_var *cc = var_named(net, "common:same-shift");
    const lw_var *dd = var_named(net, "depends:double-check");
    assert_non_null(cc);
    assert_non_null(dd);
    assert_int_equal(cc->kind, LW_VAR_COMMON);
    assert_int_equal(dd->kind, LW_VAR_DEPENDS);
    assert_int_equal(cc->group, 0);
    assert_int_equal(dd->dep, 0);
    /* an unnamed dependence still gets a depends: name */
    size_t ndepends = 0, ncommon = 0;
    for (size_t i = 0; i < net->nvars; i++) {
        if (!strncmp(net->vars[i].name, "depends:", 8)) {
            ndepends++;
            assert_int_equal(net->vars[i].kind, LW_VAR_DEPENDS);
        }
        if (!strncmp(net->vars[i].name, "common:", 7))
            ncommon++;
    }
    assert_int_equal(ndepends, 2);
    assert_int_equal(ncommon, 1);
    /* user events keep their ids; 6 events + 1 group + 2 dependences */
    assert_int_equal(net->nvars, 9);
    assert_non_null(var_named(net, "issue-a"));
    assert_non_null(var_named(net, "nurse-2"));
    lw_network_free(net);
    lw_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_false_condition_makes_and_impossible),
        cmocka_unit_test(test_true_condition_folds),
        cmocka_unit_test(test_vote_with_conditions),
        cmocka_unit_test(test_absent_safeguard_is_certain_variable),
        cmocka_unit_test(test_absent_dependence_second),
        cmocka_unit_test(test_variants_change_probabilities),
        cmocka_unit_test(test_beta_factor_expansion),
        cmocka_unit_test(test_beta_factor_published_values),
        cmocka_unit_test(test_therp_expansion),
        cmocka_unit_test(test_therp_closed_form),
        cmocka_unit_test(test_therp_chain_of_three),
        cmocka_unit_test(test_synthetic_names),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
