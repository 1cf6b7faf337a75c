/* test_target.c - what each safeguard must reach, checked by recomputing
 * the hazard with the safeguard at its required value. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "layerwise/target.h"
#include "testutil.h"

/* P(hazard) with one variable's probability replaced: an independent
 * recomputation on the compiled network by enumeration. */
static double with_var(const lw_network *net, uint32_t gate, uint32_t var,
                       double p)
{
    double q[24];
    for (size_t v = 0; v < net->nvars; v++)
        q[v] = net->vars[v].p;
    q[var] = p;
    return tu_brute_prob(net, gate, q);
}

/* A AND (B OR C) with q = 0.1, 0.2, 0.3: P = 0.044 (methods.md 1.7, closed
 * form).  For goal 0.03: B must reach (0.03 - P(B=0)) / I_B with
 * P(B=0) = 0.1 * 0.3 = 0.03 -> exactly 0 (closed form); C:
 * P(C=0) = 0.02, I_C = 0.08 -> (0.03 - 0.02) / 0.08 = 0.125 (closed form);
 * A: P(A=0) = 0, I_A = 0.44 -> 0.03 / 0.44 (closed form). */
static void test_closed_form(void **state)
{
    (void)state;
    lw_model *m = tu_load(
        "<safety-model format=\"1\" id=\"t\">"
        "<hazard id=\"h\" tolerable=\"0.03\"><all>"
        "<safeguard id=\"A\" p=\"0.1\"/>"
        "<any><safeguard id=\"B\" p=\"0.2\"/><safeguard id=\"C\" p=\"0.3\"/>"
        "</any></all></hazard></safety-model>");
    lw_error err = LW_ERROR_INIT;
    lw_target *t = NULL;
    assert_int_equal(lw_target_run(m, LW_NONE, 0, 0.03, NULL, &t, &err),
                     LW_OK);
    assert_close(t->probability, 0.044, 1e-12);
    assert_false(t->meets);
    int seen = 0;
    for (size_t i = 0; i < t->nrows; i++) {
        const lw_target_row *r = &t->rows[i];
        const char *id = t->net->vars[r->var].name;
        if (!strcmp(id, "A")) {
            assert_true(r->reachable && r->has_required);
            assert_close(r->required, 0.03 / 0.44, 1e-12);
            seen++;
        } else if (!strcmp(id, "B")) {
            /* a = goal exactly: even a perfect B only reaches the goal */
            assert_false(r->reachable);
            assert_false(r->has_required);
            seen++;
        } else if (!strcmp(id, "C")) {
            assert_true(r->has_required);
            assert_close(r->required, 0.125, 1e-12);
            seen++;
        }
    }
    assert_int_equal(seen, 3);
    /* the most effective single layer: lowest hazard if perfect (A -> 0) */
    assert_true(t->best != LW_NONE);
    assert_string_equal(t->net->vars[t->rows[t->best].var].name, "A");
    lw_target_free(t);
    lw_model_free(m);
    lw_error_clear(&err);
}

/* Random small models: every required value, put back into the model,
 * gives the goal (within 1e-9; linearity of P in each probability, closed
 * form), and unreachable layers give at least the goal even at 0. */
static void test_random_recompute(void **state)
{
    (void)state;
    uint64_t seed = 99;
    int checked = 0;
    for (int k = 0; k < 60; k++) {
        char xml[4096];
        int n = 3 + (int)(tu_rand(&seed) % 6);
        int len = snprintf(xml, sizeof xml,
                           "<safety-model format=\"1\" id=\"r\">");
        for (int i = 0; i < n; i++)
            len += snprintf(xml + len, sizeof xml - (size_t)len,
                            "<safeguard id=\"s%d\" p=\"%.3f\"/>", i,
                            0.05 + 0.6 * tu_uniform(&seed));
        len += snprintf(xml + len, sizeof xml - (size_t)len,
                        "<error id=\"e\" p=\"0.5\"/><hazard id=\"h\"><all>"
                        "<ref to=\"e\"/><any>");
        for (int g = 0; g < 3; g++) {
            len += snprintf(xml + len, sizeof xml - (size_t)len, "<all>");
            for (int i = 0; i < 2; i++)
                len += snprintf(xml + len, sizeof xml - (size_t)len,
                                "<ref to=\"s%d\"/>",
                                (int)(tu_rand(&seed) % (uint64_t)n));
            len += snprintf(xml + len, sizeof xml - (size_t)len, "</all>");
        }
        snprintf(xml + len, sizeof xml - (size_t)len,
                 "</any></all></hazard></safety-model>");
        lw_error err = LW_ERROR_INIT;
        lw_model *m = NULL;
        if (lw_model_load_memory(xml, strlen(xml), "r.xml", NULL, &m,
                                 &err) != LW_OK) {
            lw_error_clear(&err);
            continue;       /* an unused safeguard is only a warning */
        }
        double P = tu_prob(m, LW_NONE, 0);
        double goal = P * (0.2 + 0.7 * tu_uniform(&seed));
        lw_target *t = NULL;
        assert_int_equal(lw_target_run(m, LW_NONE, 0, goal, NULL, &t, &err),
                         LW_OK);
        const lw_network *net = t->net;
        uint32_t gate = net->hazard_gate[0];
        for (size_t i = 0; i < t->nrows; i++) {
            const lw_target_row *r = &t->rows[i];
            double floor0 = with_var(net, gate, r->var, 0.0);
            assert_close(r->floor, floor0, 1e-9);
            if (r->has_required && r->required < 1) {
                assert_close(with_var(net, gate, r->var, r->required), goal,
                             1e-7);
                checked++;
            }
            if (!r->reachable)
                assert_true(floor0 >= goal * (1 - 1e-12));
        }
        lw_target_free(t);
        lw_model_free(m);
        lw_error_clear(&err);
    }
    assert_true(checked > 20);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_closed_form),
        cmocka_unit_test(test_random_recompute),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
