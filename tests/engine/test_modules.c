/*
 * test_modules.c - the diagram built module by module (engine/modules.c)
 * is the diagram built gate by gate, on the shapes that stress it:
 * modules nested with the same first event, modules tested with children
 * other than the leaves, votes over modules, constant modules, splicing
 * of OR under OR and AND under AND, shared events that stop a gate from
 * being a module, and a chain of 100,000 nested blocks.  Also the
 * Birnbaum pass on a diagram big enough to keep reach values in a ring,
 * and cut sets of a long chain analysed from a thread with a small stack.
 *
 * Probabilities pinned here are closed forms (independent events).
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
#include "testutil.h"

#define HEAD "<?xml version=\"1.0\"?>\n<safety-model format=\"1\" id=\"m\">\n"
#define END "</safety-model>\n"

/* Prepare hazard 0, compare with the gate-by-gate build, return P. */
static double check(const char *xml)
{
    lw_model *m = tu_load(xml);
    lw_error err = LW_ERROR_INIT;
    lw_prepared *p = NULL;
    assert_int_equal(lw_prepare(m, LW_NONE, 0, NULL, &p, &err), LW_OK);
    lw_bref r;
    lw_diagram *plain = NULL;
    assert_int_equal(lw_prepared_root(p, &r, &err), LW_OK);
    assert_int_equal(lw_diagram_freeze(lw_builder_bdd(p->builder), r,
                                       p->nlevels,
                                       lw_builder_level_var(p->builder),
                                       &plain, &err), LW_OK);
    tu_same_diagram(plain, p->diagram, "modules");
    double P = p->probability;
    lw_diagram_free(plain);
    lw_prepared_free(p);
    lw_model_free(m);
    lw_error_clear(&err);
    return P;
}

#define EV(id, p) "<error id=\"" id "\" p=\"" p "\"/>"

static void test_nested_same_first_event(void **state)
{
    (void)state;
    /* h = (a OR b) AND c ... inside blocks that all start with a:
     * hazard -> block X -> all(block Y, c) ; Y -> any(block Z, b) ;
     * Z -> all(a, d).  P = ((a d) + b - a d b) c, closed form */
    const char *xml = HEAD
        EV("a", "0.1") EV("b", "0.2") EV("c", "0.3") EV("d", "0.4")
        "<block id=\"Z\"><all><ref to=\"a\"/><ref to=\"d\"/></all></block>"
        "<block id=\"Y\"><any><ref to=\"Z\"/><ref to=\"b\"/></any></block>"
        "<block id=\"X\"><all><ref to=\"Y\"/><ref to=\"c\"/></all></block>"
        "<hazard id=\"h\"><ref to=\"X\"/></hazard>" END;
    double ad = 0.1 * 0.4;
    assert_true(tu_close(check(xml), (ad + 0.2 - ad * 0.2) * 0.3, 1e-15));
}

static void test_module_tested_with_inner_children(void **state)
{
    (void)state;
    /* OR(M, x) with x after M, and M = 2-of-3 module: the stand-in's lo
     * child is x, not a leaf; M appears under a vote too */
    const char *xml = HEAD
        EV("a", "0.1") EV("b", "0.2") EV("c", "0.3") EV("x", "0.05")
        EV("y", "0.5") EV("z", "0.6")
        "<block id=\"M\"><vote k=\"2\"><ref to=\"a\"/><ref to=\"b\"/>"
        "<ref to=\"c\"/></vote></block>"
        "<hazard id=\"h\"><vote k=\"2\"><any><ref to=\"M\"/>"
        "<ref to=\"x\"/></any><ref to=\"y\"/><ref to=\"z\"/></vote>"
        "</hazard>" END;
    double m = 0.1 * 0.2 + 0.1 * 0.3 + 0.2 * 0.3 - 2 * 0.1 * 0.2 * 0.3;
    double u = m + 0.05 - m * 0.05;
    double y = 0.5, z = 0.6;
    double P = u * y + u * z + y * z - 2 * u * y * z;
    assert_true(tu_close(check(xml), P, 1e-14));
}

static void test_shared_event_breaks_module(void **state)
{
    (void)state;
    /* s is used in two paths: neither path is a module, their OR is */
    const char *xml = HEAD
        EV("e1", "0.01") EV("e2", "0.02") EV("s", "0.3") EV("t", "0.4")
        EV("u", "0.5")
        "<hazard id=\"h\"><any>"
        "<all><ref to=\"e1\"/><ref to=\"s\"/><ref to=\"t\"/></all>"
        "<all><ref to=\"e2\"/><ref to=\"s\"/></all>"
        "<all><ref to=\"u\"/><ref to=\"t\"/></all>"
        "</any></hazard>" END;
    /* inclusion-exclusion over the three products (closed form) */
    double A = 0.01 * 0.3 * 0.4, B = 0.02 * 0.3, C = 0.5 * 0.4;
    double AB = 0.01 * 0.02 * 0.3 * 0.4, AC = 0.01 * 0.3 * 0.4 * 0.5,
           BC = 0.02 * 0.3 * 0.5 * 0.4, ABC = 0.01 * 0.02 * 0.3 * 0.4 * 0.5;
    assert_true(tu_close(check(xml), A + B + C - AB - AC - BC + ABC,
                         1e-14));
}

static void test_spliced_or_and(void **state)
{
    (void)state;
    /* OR under OR and AND under AND, anonymous and single-parent: spliced;
     * the same gates with a second parent are not */
    const char *xml = HEAD
        EV("a", "0.1") EV("b", "0.2") EV("c", "0.3") EV("d", "0.4")
        EV("e", "0.5")
        "<block id=\"shared\"><any><ref to=\"d\"/><ref to=\"e\"/></any>"
        "</block>"
        "<hazard id=\"h\"><any><any><ref to=\"a\"/><any><ref to=\"b\"/>"
        "<ref to=\"shared\"/></any></any>"
        "<all><ref to=\"c\"/><all><ref to=\"shared\"/><ref to=\"a\"/></all>"
        "</all></any></hazard>" END;
    /* a + b + (d|e) absorbs c.(d|e).a: P = 1 - (1-a)(1-b)(1-d)(1-e) */
    assert_true(tu_close(check(xml), 1 - 0.9 * 0.8 * 0.6 * 0.5, 1e-15));
}

static void test_constant_module(void **state)
{
    (void)state;
    /* a condition that is false empties a block: a constant module */
    const char *xml = HEAD
        EV("a", "0.1") EV("b", "0.2")
        "<condition id=\"night\" state=\"false\"/>"
        "<block id=\"B\"><all><ref to=\"night\"/><ref to=\"a\"/></all>"
        "</block>"
        "<hazard id=\"h\"><any><ref to=\"B\"/><ref to=\"b\"/></any>"
        "</hazard>" END;
    assert_true(tu_close(check(xml), 0.2, 1e-15));
}

/* 100,000 blocks, each the OR of the next and one event: modules nested
 * 100,000 deep (the write-out has no recursion).  P = 1 - 0.9^n. */
static void test_deep_chain(void **state)
{
    (void)state;
    int n = 100000;
    tu_text x = {0};
    tu_printf(&x, HEAD);
    for (int i = 0; i < n; i++)
        tu_printf(&x, "<error id=\"e%d\" p=\"1e-6\"/>\n", i);
    for (int i = 0; i < n; i++) {
        tu_printf(&x, "<block id=\"b%d\"><any><ref to=\"e%d\"/>", i, i);
        if (i + 1 < n)
            tu_printf(&x, "<ref to=\"b%d\"/>", i + 1);
        tu_printf(&x, "</any></block>\n");
    }
    tu_printf(&x, "<hazard id=\"h\"><ref to=\"b0\"/></hazard>" END);
    double P = check(x.s);
    assert_true(tu_close(P, -expm1(n * log1p(-1e-6)), 1e-12));
    free(x.s);
}

/* Birnbaum values of a diagram too big for the cache, whose reach values
 * the top-down pass keeps in a ring (engine/bdd.c), against the closed
 * form and against the same pass with one slot per node.  The hazard is
 * the OR of n blocks, each a 2-of-3 vote: the diagram has 4n nodes (two
 * on each block's second level, so the pass takes nodes both one and two
 * at a time) with short edges, so the ring has a few slots.
 *   P = 1 - prod_j (1 - P_j), P_j = ab + ac + bc - 2abc;
 *   B(a_j) = (b + c - 2bc) prod_{m != j} (1 - P_m)   (closed form) */
static void test_birnbaum_ring(void **state)
{
    (void)state;
    int n = 50000;
    tu_text t = {0};
    double *pj = malloc((size_t)n * 3 * sizeof *pj);
    assert_non_null(pj);
    tu_printf(&t, HEAD);
    for (int j = 0; j < 3 * n; j++) {
        pj[j] = 0.05 + 0.9 * (double)((j * 7919) % 1000) / 1000.0;
        tu_printf(&t, "<error id=\"e%d\" p=\"%.17g\"/>\n", j, pj[j]);
    }
    for (int j = 0; j < n; j++)
        tu_printf(&t, "<block id=\"b%d\"><vote k=\"2\"><ref to=\"e%d\"/>"
                  "<ref to=\"e%d\"/><ref to=\"e%d\"/></vote></block>\n", j,
                  3 * j, 3 * j + 1, 3 * j + 2);
    tu_printf(&t, "<hazard id=\"h\"><any>");
    for (int j = 0; j < n; j++)
        tu_printf(&t, "<ref to=\"b%d\"/>", j);
    tu_printf(&t, "</any></hazard>" END);
    lw_model *m = tu_load(t.s);
    free(t.s);
    lw_error err = LW_ERROR_INIT;
    lw_prepared *p = NULL;
    assert_int_equal(lw_prepare(m, LW_NONE, 0, NULL, &p, &err), LW_OK);
    const lw_diagram *d = p->diagram;
    assert_true(d->n > LW_RING_FROM);
    assert_true(d->edge_span <= 8);
    double *b = malloc(d->nlevels * sizeof *b);
    double *b_full = malloc(d->nlevels * sizeof *b_full);
    double *reach = malloc(d->n * sizeof *reach);
    assert_non_null(b);
    assert_non_null(b_full);
    assert_non_null(reach);
    lw_diagram_birnbaum_given(d, p->q, p->node_diff, b, reach);
    /* one slot per node: the same diagram with its longest edge claimed
     * to span it all; the same operations in the same order */
    lw_diagram whole = *d;
    whole.edge_span = d->n - 1;
    lw_diagram_birnbaum_given(&whole, p->q, p->node_diff, b_full, reach);
    assert_memory_equal(b, b_full, d->nlevels * sizeof *b);
    /* closed form: log of prod_j (1 - P_j), then each event's value */
    double log_rest = 0.0;
    double *P = malloc((size_t)n * sizeof *P);
    assert_non_null(P);
    for (int j = 0; j < n; j++) {
        double a = pj[3 * j], bb = pj[3 * j + 1], c = pj[3 * j + 2];
        P[j] = a * bb + a * c + bb * c - 2 * a * bb * c;
        log_rest += log1p(-P[j]);
    }
    assert_true(tu_close(p->probability, -expm1(log_rest), 1e-12));
    const lw_network *net = p->net;
    for (uint32_t l = 0; l < d->nlevels; l++) {
        int e = atoi(net->vars[d->level_var[l]].name + 1);
        int j = e / 3;
        double x = 0.0, y = 0.0;
        for (int k = 3 * j; k < 3 * j + 3; k++)
            if (k != e) {
                if (x == 0.0)
                    x = pj[k];
                else
                    y = pj[k];
            }
        double expect = (x + y - 2 * x * y) * exp(log_rest - log1p(-P[j]));
        if (!tu_close(b[l], expect, 1e-9))
            fail_msg("Birnbaum of e%d = %.17g, closed form %.17g", e, b[l],
                     expect);
    }
    free(b);
    free(b_full);
    free(reach);
    free(pj);
    free(P);
    lw_prepared_free(p);
    lw_model_free(m);
    lw_error_clear(&err);
}

/* The cut sets of a model with a long chain of levels, analysed from a
 * thread with a small stack: the set operations recurse once per level,
 * so the library must move them to a large stack itself.  The hazard is
 * the OR of n pairs plus one pair across the chain (first and last
 * events), which makes the family's minimisation walk the whole chain.
 * Cut sets: the n pairs and the cross pair (closed form). */
typedef struct small_stack_job {
    const lw_model *m;
    lw_status st;
    double cut_sets;
} small_stack_job;

static void *small_stack_main(void *arg)
{
    small_stack_job *j = arg;
    lw_error err = LW_ERROR_INIT;
    lw_options opt;
    lw_options_init(&opt);
    opt.top = 3;
    lw_analysis *a = NULL;
    j->st = lw_analyze(j->m, LW_NONE, 0, &opt, &a, &err);
    if (j->st == LW_OK)
        j->cut_sets = a->cut_set_count;
    lw_analysis_free(a);
    lw_error_clear(&err);
    return NULL;
}

static void test_deep_family_small_stack(void **state)
{
    (void)state;
    int n = 20000;
    tu_text x = {0};
    tu_printf(&x, HEAD);
    for (int i = 0; i < 2 * n; i++)
        tu_printf(&x, "<error id=\"e%d\" p=\"0.001\"/>\n", i);
    tu_printf(&x, "<hazard id=\"h\"><any>");
    for (int i = 0; i < n; i++)
        tu_printf(&x, "<all><ref to=\"e%d\"/><ref to=\"e%d\"/></all>",
                  2 * i, 2 * i + 1);
    tu_printf(&x, "<all><ref to=\"e0\"/><ref to=\"e%d\"/></all></any>"
              "</hazard>" END, 2 * n - 1);
    lw_model *m = tu_load(x.s);
    free(x.s);
    small_stack_job j = {m, LW_EINTERNAL, 0};
    tu_run_on_stack(small_stack_main, &j, 256 * 1024);
    assert_int_equal(j.st, LW_OK);
    assert_true(j.cut_sets == n + 1);
    lw_model_free(m);
}

/* Out of memory anywhere in the build: an error, nothing leaked. */
static void test_allocation_failures(void **state)
{
    (void)state;
    const char *xml = HEAD
        EV("a", "0.1") EV("b", "0.2") EV("c", "0.3") EV("x", "0.05")
        "<block id=\"M\"><vote k=\"2\"><ref to=\"a\"/><ref to=\"b\"/>"
        "<ref to=\"c\"/></vote></block>"
        "<hazard id=\"h\"><any><ref to=\"M\"/><ref to=\"x\"/></any>"
        "</hazard>" END;
    lw_model *m = tu_load(xml);
    int failed = 0;
    for (unsigned long k = 1; k < 400; k++) {
        lw_error err = LW_ERROR_INIT;
        lw_prepared *p = NULL;
        lw_alloc_fail_at(k, 0);
        lw_status st = lw_prepare(m, LW_NONE, 0, NULL, &p, &err);
        lw_alloc_fail_at(0, 0);
        if (st == LW_OK) {
            lw_prepared_free(p);
        } else {
            assert_int_equal(st, LW_ENOMEM);
            failed++;
        }
        lw_error_clear(&err);
    }
    assert_true(failed > 10);
    lw_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_nested_same_first_event),
        cmocka_unit_test(test_module_tested_with_inner_children),
        cmocka_unit_test(test_shared_event_breaks_module),
        cmocka_unit_test(test_spliced_or_and),
        cmocka_unit_test(test_constant_module),
        cmocka_unit_test(test_deep_chain),
        cmocka_unit_test(test_birnbaum_ring),
        cmocka_unit_test(test_deep_family_small_stack),
        cmocka_unit_test(test_allocation_failures),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
