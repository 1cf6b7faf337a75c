/*
 * test_alloc_failure.c - out of memory, everywhere.
 *
 * For each step a user's command takes (load a model that uses every
 * element of the format, compile each variant, analyze = prepare + cut
 * sets + importance, target, uncertainty, compare, sweep, incident, learn
 * and the updated model, the report, the renderers), the step is first run
 * with no failure to count its allocations N (lw_alloc_count), then once
 * for every n in 1..N with the n-th allocation failing, both "sticky"
 * (every later allocation fails too) and "once" (only the n-th).  Each
 * run must:
 *   - not crash (the sanitizers turn a bad read into a failure);
 *   - return an error status with *out == NULL and a non-empty lw_error
 *     (a message or the out-of-memory flag), or succeed with a result
 *     (allowed when the failed allocation was optional, e.g. a cache);
 *   - free everything it took: after each step the leak checker is asked
 *     (under AddressSanitizer) and the process exits leak-free.
 *
 * jansson is pointed at the hook (json_set_alloc_funcs), so the JSON
 * trees the renderers build are swept too.  Not covered: allocations made
 * inside libxml2, GSL and the C library, which do not pass through the
 * lw_malloc hook (layerwise/alloc.h).
 *
 * No numbers are pinned here (the checks are about status and memory,
 * common practice, no source).
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include <jansson.h>

#include "layerwise/alloc.h"
#include "layerwise/analysis.h"
#include "layerwise/incident.h"
#include "layerwise/jsonw.h"
#include "layerwise/learn.h"
#include "layerwise/model.h"
#include "layerwise/network.h"
#include "layerwise/render.h"
#include "layerwise/render_incident.h"
#include "layerwise/render_mc.h"
#include "layerwise/render_target.h"
#include "layerwise/report.h"
#include "layerwise/target.h"
#include "layerwise/uncertainty.h"
#include "testutil.h"

#if defined(__SANITIZE_ADDRESS__)
#include <sanitizer/lsan_interface.h>
#define HAVE_LSAN 1
#endif

/* Every element and attribute of model-format.md: title, description,
 * exposure, the three event kinds (root and inline), every distribution,
 * an absent safeguard, a block, all four gate kinds, refs, two hazards
 * (one with tolerable), a common-cause group, a dependence, and variants
 * setting each of p, present, state, beta and level. */
static const char model_xml[] =
    "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
    "<safety-model format=\"1\" id=\"every-element\">\n"
    "  <title>Every element</title>\n"
    "  <description>Allocation-failure sweep model.</description>\n"
    "  <exposure unit=\"episode\" per-year=\"18000\"/>\n"
    "  <error id=\"e1\" label=\"First error\" p=\"4e-4\" source=\"audit\"/>\n"
    "  <safeguard id=\"s1\" label=\"Lognormal layer\" p=\"0.1\">\n"
    "    <lognormal error-factor=\"3\"/>\n"
    "  </safeguard>\n"
    "  <safeguard id=\"s2\" label=\"Observed layer\">\n"
    "    <observed count=\"9\" of=\"400\" source=\"audit\"/>\n"
    "  </safeguard>\n"
    "  <safeguard id=\"s3\" label=\"Beta layer\"><beta a=\"2\" b=\"98\"/>"
    "</safeguard>\n"
    "  <safeguard id=\"s4\" label=\"Uniform layer\" p=\"0.05\">\n"
    "    <uniform low=\"0.01\" high=\"0.1\"/>\n"
    "  </safeguard>\n"
    "  <safeguard id=\"s5\" label=\"Absent layer\" p=\"0.01\" "
    "present=\"no\"/>\n"
    "  <condition id=\"night\" label=\"Night shift\" state=\"false\"/>\n"
    "  <block id=\"bedside\" label=\"Both bedside checks\">\n"
    "    <all><ref to=\"s2\"/><ref to=\"s3\"/></all>\n"
    "  </block>\n"
    "  <hazard id=\"h1\" label=\"Main hazard\" tolerable=\"1e-6\">\n"
    "    <any>\n"
    "      <all label=\"Path one\">\n"
    "        <ref to=\"e1\"/><ref to=\"s1\"/><ref to=\"bedside\"/>"
    "<ref to=\"s5\"/>\n"
    "      </all>\n"
    "      <all id=\"path-two\" label=\"Path two\">\n"
    "        <error id=\"e2\" label=\"Second error\" p=\"2e-4\"/>\n"
    "        <vote k=\"2\" label=\"Two of three\">\n"
    "          <safeguard id=\"v1\" p=\"0.05\"/>\n"
    "          <safeguard id=\"v2\" p=\"0.05\"/>\n"
    "          <safeguard id=\"v3\" p=\"0.2\"/>\n"
    "        </vote>\n"
    "        <ref to=\"bedside\"/>\n"
    "      </all>\n"
    "      <all><ref to=\"night\"/><ref to=\"e2\"/><ref to=\"s4\"/></all>\n"
    "    </any>\n"
    "  </hazard>\n"
    "  <hazard id=\"h2\" label=\"Second hazard\">\n"
    "    <all><ref to=\"e2\"/><ref to=\"s4\"/><ref to=\"v3\"/></all>\n"
    "  </hazard>\n"
    "  <common-cause id=\"same-team\" label=\"Same team\" beta=\"0.1\" "
    "members=\"v1 v2\"/>\n"
    "  <dependence id=\"double\" first=\"s2\" second=\"s3\" "
    "level=\"high\"/>\n"
    "  <variant id=\"add\" label=\"Add the layer\">\n"
    "    <set ref=\"s5\" present=\"yes\"/>\n"
    "    <set ref=\"e1\" p=\"1e-4\"/>\n"
    "  </variant>\n"
    "  <variant id=\"night-shift\" label=\"At night\">\n"
    "    <set ref=\"night\" state=\"true\"/>\n"
    "    <set ref=\"same-team\" beta=\"0.3\"/>\n"
    "    <set ref=\"double\" level=\"complete\"/>\n"
    "  </variant>\n"
    "</safety-model>\n";

static const char log_csv[] =
    "\xEF\xBB\xBF" "date,error,missed,caught_by,note\r\n"
    "2026-01-01,e1,s1,s2,\"first, with a comma\"\r\n"
    "2026-01-02,e1,s1;s2,s3,\"line one\nline two\"\r\n"
    "2026-01-03,e1,s1;s2;s3,,reached the patient\r\n"
    "2026-01-04,e2,v1;v2,v3,\r\n"
    "2026-01-05,e2,v1,v2,\r\n"
    "2026-01-06,e1,s2,s3,\r\n"
    "2026-01-07,e1,s2;s3,,\r\n"
    "2026-01-08,e1,s2;s3,,\r\n";

static lw_model *g_model;
static FILE *g_null;

/* One step: run it, hand back its result (NULL when it returns none) and
 * free that result. */
typedef struct step {
    const char *name;
    lw_status (*run)(void **out, lw_error *err);
    void (*free_result)(void *r);
    unsigned flags;
} step;

enum {
    ALWAYS_OK = 1       /* returns nothing that can fail (renderers) */
};

/* ---- the steps ------------------------------------------------------- */

static lw_options small_options(void)
{
    lw_options o;
    lw_options_init(&o);
    o.top = 10;
    return o;
}

static lw_status run_load(void **out, lw_error *err)
{
    return lw_model_load_memory(model_xml, sizeof model_xml - 1, "m.xml",
                                NULL, (lw_model **)out, err);
}
static void free_model(void *r) { lw_model_free(r); }

static lw_status run_compile(void **out, lw_error *err)
{
    /* every variant, the result is the last network */
    lw_network *net = NULL;
    for (size_t v = 0; v <= g_model->nvariants; v++) {
        lw_network_free(net);
        net = NULL;
        lw_status st = lw_compile(g_model, v == 0 ? LW_NONE : v - 1, &net,
                                  err);
        if (st != LW_OK) {
            if (net)
                fail_msg("lw_compile failed but returned a network");
            return st;
        }
    }
    *out = net;
    return LW_OK;
}
static void free_network(void *r) { lw_network_free(r); }

static lw_status run_prepare(void **out, lw_error *err)
{
    lw_options o = small_options();
    return lw_prepare(g_model, 1, 0, &o, (lw_prepared **)out, err);
}
static void free_prepared(void *r) { lw_prepared_free(r); }

static lw_status run_analyze(void **out, lw_error *err)
{
    lw_options o = small_options();
    return lw_analyze(g_model, LW_NONE, 0, &o, (lw_analysis **)out, err);
}
static void free_analysis(void *r) { lw_analysis_free(r); }

static lw_status run_analyze_variant(void **out, lw_error *err)
{
    lw_options o = small_options();
    o.cutoff = 1e-9;
    o.max_order = 3;
    return lw_analyze(g_model, 1, 0, &o, (lw_analysis **)out, err);
}

static lw_status run_target(void **out, lw_error *err)
{
    lw_options o = small_options();
    return lw_target_run(g_model, LW_NONE, 0, 1e-7, &o, (lw_target **)out,
                         err);
}
static void free_target(void *r) { lw_target_free(r); }

static lw_mc_options small_mc(void)
{
    lw_mc_options mc;
    lw_mc_options_init(&mc);
    mc.samples = 40;
    mc.seed = 3;
    mc.threads = 1;
    return mc;
}

static lw_status run_uncertainty(void **out, lw_error *err)
{
    lw_options o = small_options();
    lw_mc_options mc = small_mc();
    return lw_uncertainty_run(g_model, LW_NONE, 0, &o, &mc,
                              (lw_uncertainty **)out, err);
}
static void free_uncertainty(void *r) { lw_uncertainty_free(r); }

static lw_status run_compare(void **out, lw_error *err)
{
    lw_options o = small_options();
    lw_mc_options mc = small_mc();
    size_t v[2] = {0, 1};
    return lw_compare_run(g_model, 0, v, 2, &o, &mc, (lw_comparison **)out,
                          err);
}
static void free_comparison(void *r) { lw_comparison_free(r); }

static lw_status run_sweep(void **out, lw_error *err)
{
    lw_options o = small_options();
    return lw_sweep_run(g_model, LW_NONE, 0, "s1", 1e-4, 0.5, 5, true, &o,
                        (lw_sweep **)out, err);
}
static void free_sweep(void *r) { lw_sweep_free(r); }

static lw_status run_incident(void **out, lw_error *err)
{
    lw_options o = small_options();
    const char *failed[] = {"e1", "s2"};
    const char *held[] = {"s3"};
    return lw_incident_run(g_model, LW_NONE, 0, failed, 2, held, 1, &o,
                           (lw_incident **)out, err);
}
static void free_incident(void *r) { lw_incident_free(r); }

static lw_status run_learn(void **out, lw_error *err)
{
    return lw_learn_memory(g_model, log_csv, sizeof log_csv - 1, "log.csv",
                           (lw_learn **)out, err);
}
static void free_learn(void *r) { lw_learn_free(r); }

/* learn -o: the log and the updated model; the result is the new XML */
static lw_status run_learn_update(void **out, lw_error *err)
{
    lw_learn *l = NULL;
    lw_status st = lw_learn_memory(g_model, log_csv, sizeof log_csv - 1,
                                   "log.csv", &l, err);
    if (st != LW_OK)
        return st;
    char *xml = NULL;
    size_t len = 0;
    st = lw_learn_update_model(model_xml, sizeof model_xml - 1, "m.xml",
                               g_model, l, &xml, &len, err);
    lw_learn_free(l);
    if (st == LW_OK)
        *out = xml;
    else if (xml)
        fail_msg("lw_learn_update_model failed but returned text");
    return st;
}
static void free_text(void *r) { lw_free(r); }

static lw_status run_report(void **out, lw_error *err)
{
    lw_options o = small_options();
    lw_report_options ro;
    lw_report_options_init(&ro);
    /* one hazard and one variant keep the sweep short (the Monte Carlo
     * parts are swept above, as uncertainty and compare) */
    ro.monte_carlo = false;
    ro.source_name = "m.xml";
    ro.generated = "2026-01-01";
    size_t hz[1] = {0};
    size_t vs[1] = {1};
    lw_report *r = NULL;
    lw_status st = lw_report_build(g_model, hz, 1, vs, 1, &o, &ro, &r, err);
    if (st != LW_OK)
        return st;
    /* writing may fail for want of memory too; it must say so */
    st = lw_report_write_html(g_null, r, err);
    if (st != LW_OK) {
        lw_report_free(r);
        return st;
    }
    *out = r;
    return LW_OK;
}
static void free_report(void *r) { lw_report_free(r); }

static lw_status run_dot(void **out, lw_error *err)
{
    lw_diagram_options d = {LW_NONE, LW_NONE};
    lw_status st = lw_render_dot(g_null, g_model, &d, err);
    *out = st == LW_OK ? (void *)g_model : NULL;  /* nothing to free */
    return st;
}
static void free_nothing(void *r) { (void)r; }

/* The renderers return nothing (text, streamed JSON) or a jansson tree;
 * under failure they must neither crash nor leak.  The results they
 * print are made once, outside the sweep. */
static lw_analysis *g_analysis;
static lw_target *g_target;
static lw_uncertainty *g_unc;
static lw_incident *g_inc;
static lw_learn *g_learn;

static lw_status run_render(void **out, lw_error *err)
{
    (void)err;
    lw_render_analysis_text(g_null, g_model, g_analysis, 10);
    lw_render_cut_sets_csv(g_null, g_model, g_analysis, true);
    lw_render_importance_csv(g_null, g_model, g_analysis, true);
    static lw_jw jw;
    lw_jw_init(&jw, g_null);
    lw_analysis_write_json(&jw, g_model, g_analysis);
    lw_jw_flush(&jw);
    lw_render_target_text(g_null, g_model, g_target);
    lw_render_target_csv(g_null, g_model, g_target, true);
    lw_json_write(g_null, lw_target_json(g_model, g_target));
    lw_render_uncertainty_text(g_null, g_model, g_unc);
    lw_json_write(g_null, lw_uncertainty_json(g_model, g_unc));
    lw_render_incident_text(g_null, g_model, g_inc, 10);
    lw_json_write(g_null, lw_incident_json(g_model, g_inc));
    lw_render_learn_text(g_null, g_model, g_learn);
    lw_render_learn_csv(g_null, g_model, g_learn, false);
    lw_render_learn_csv(g_null, g_model, g_learn, true);
    lw_json_write(g_null, lw_learn_json(g_model, g_learn));
    *out = g_model;
    return LW_OK;
}

/* ---- the sweep --------------------------------------------------------- */

static void check_leaks(const char *name)
{
#ifdef HAVE_LSAN
    if (__lsan_do_recoverable_leak_check())
        fail_msg("%s: memory leaked under allocation failure (see the "
                 "leak report above)", name);
#else
    (void)name;
#endif
}

/* Run 'st' once without failure, then with allocation n failing for every
 * n; returns the number of allocations of the clean run. */
static unsigned long sweep(const step *s)
{
    lw_error err = LW_ERROR_INIT;
    void *r = NULL;
    lw_alloc_fail_at(0, 0);
    lw_status st = s->run(&r, &err);
    unsigned long n = lw_alloc_count();
    if (st != LW_OK || !r) {
        for (size_t i = 0; i < err.count; i++)
            fprintf(stderr, "  %s\n", err.items[i].message);
        fail_msg("%s: fails without any allocation failure (%s)", s->name,
                 lw_status_name(st));
    }
    s->free_result(r);
    lw_error_clear(&err);
    if (n == 0)
        fail_msg("%s: made no allocation through lw_malloc", s->name);

    for (int sticky = 1; sticky >= 0; sticky--) {
        unsigned long failures = 0;
        for (unsigned long k = 1; k <= n; k++) {
            r = NULL;
            lw_alloc_fail_at(k, sticky);
            st = s->run(&r, &err);
            lw_alloc_fail_at(0, 0);
            if (st == LW_OK) {
                if (!r)
                    fail_msg("%s: allocation %lu of %lu failed (%s): LW_OK "
                             "without a result", s->name, k, n,
                             sticky ? "sticky" : "once");
                s->free_result(r);
            } else {
                failures++;
                if (r)
                    fail_msg("%s: allocation %lu of %lu failed (%s): %s "
                             "with a result left behind", s->name, k, n,
                             sticky ? "sticky" : "once",
                             lw_status_name(st));
                if (err.code == LW_OK || (err.count == 0 && !err.oom))
                    fail_msg("%s: allocation %lu of %lu failed (%s): %s "
                             "with nothing in the lw_error", s->name, k, n,
                             sticky ? "sticky" : "once",
                             lw_status_name(st));
                if (st == LW_EINTERNAL)
                    fail_msg("%s: allocation %lu of %lu failed (%s): "
                             "reported as an internal error", s->name, k, n,
                             sticky ? "sticky" : "once");
            }
            lw_error_clear(&err);
        }
        /* with every allocation from the first one failing, nothing can
         * be done */
        if (sticky && failures == 0 && !(s->flags & ALWAYS_OK))
            fail_msg("%s: never failed under sticky allocation failure",
                     s->name);
    }
    check_leaks(s->name);
    return n;
}

static void run_steps(const step *steps, size_t n)
{
    for (size_t i = 0; i < n; i++) {
        clock_t t0 = clock();
        unsigned long count = sweep(&steps[i]);
        print_message("  %-20s %6lu allocations, each failed twice "
                      "(%.1f s)\n", steps[i].name, count,
                      (double)(clock() - t0) / CLOCKS_PER_SEC);
    }
}

/* ---- tests ------------------------------------------------------------- */

static void test_load_and_compile(void **state)
{
    (void)state;
    static const step steps[] = {
        {"load", run_load, free_model, 0},
        {"compile", run_compile, free_network, 0},
    };
    run_steps(steps, sizeof steps / sizeof *steps);
}

static void test_analyze(void **state)
{
    (void)state;
    static const step steps[] = {
        {"prepare", run_prepare, free_prepared, 0},
        {"analyze", run_analyze, free_analysis, 0},
        {"analyze --variant", run_analyze_variant, free_analysis, 0},
        {"target", run_target, free_target, 0},
    };
    run_steps(steps, sizeof steps / sizeof *steps);
}

static void test_monte_carlo(void **state)
{
    (void)state;
    static const step steps[] = {
        {"uncertainty", run_uncertainty, free_uncertainty, 0},
        {"compare", run_compare, free_comparison, 0},
        {"sweep", run_sweep, free_sweep, 0},
    };
    run_steps(steps, sizeof steps / sizeof *steps);
}

static void test_incident_and_learn(void **state)
{
    (void)state;
    static const step steps[] = {
        {"incident", run_incident, free_incident, 0},
        {"learn", run_learn, free_learn, 0},
        {"learn -o", run_learn_update, free_text, 0},
    };
    run_steps(steps, sizeof steps / sizeof *steps);
}

static void test_report_and_render(void **state)
{
    (void)state;
    lw_error err = LW_ERROR_INIT;
    lw_options o = small_options();
    lw_mc_options mc = small_mc();
    const char *failed[] = {"e1", "s2"};
    assert_int_equal(lw_analyze(g_model, LW_NONE, 0, &o, &g_analysis, &err),
                     LW_OK);
    assert_int_equal(lw_target_run(g_model, LW_NONE, 0, 1e-7, &o, &g_target,
                                   &err), LW_OK);
    assert_int_equal(lw_uncertainty_run(g_model, LW_NONE, 0, &o, &mc, &g_unc,
                                        &err), LW_OK);
    assert_int_equal(lw_incident_run(g_model, LW_NONE, 0, failed, 2, NULL, 0,
                                     &o, &g_inc, &err), LW_OK);
    assert_int_equal(lw_learn_memory(g_model, log_csv, sizeof log_csv - 1,
                                     "log.csv", &g_learn, &err), LW_OK);
    static const step steps[] = {
        {"report", run_report, free_report, 0},
        {"diagram (DOT)", run_dot, free_nothing, 0},
        {"renderers", run_render, free_nothing, ALWAYS_OK},
    };
    run_steps(steps, sizeof steps / sizeof *steps);
    lw_analysis_free(g_analysis);
    lw_target_free(g_target);
    lw_uncertainty_free(g_unc);
    lw_incident_free(g_inc);
    lw_learn_free(g_learn);
    lw_error_clear(&err);
}

/* lw_error itself: a diagnostic that cannot be stored sets the OOM flag
 * and keeps the status (error.h). */
static void test_error_record(void **state)
{
    (void)state;
    for (unsigned long k = 1; k <= 3; k++) {
        lw_error err = LW_ERROR_INIT;
        lw_alloc_fail_at(k, 0);
        lw_status st = lw_error_set(&err, LW_EMODEL, "f.xml", 3, "bad %s",
                                    "thing");
        lw_alloc_fail_at(0, 0);
        assert_int_equal(st, LW_EMODEL);
        assert_int_equal(err.code, LW_EMODEL);
        assert_true(err.oom);
        assert_int_equal(err.count, 0);
        lw_error_clear(&err);
    }
    check_leaks("lw_error_set");
}

static int setup(void **state)
{
    (void)state;
    /* jansson (the JSON trees of the renderers) allocates through the hook
     * too, so that its failures are swept with the rest */
    json_set_alloc_funcs(lw_malloc, lw_free);
    g_null = fopen("/dev/null", "w");
    if (!g_null)
        return -1;
    lw_error err = LW_ERROR_INIT;
    lw_status st = lw_model_load_memory(model_xml, sizeof model_xml - 1,
                                        "m.xml", NULL, &g_model, &err);
    for (size_t i = 0; i < err.count; i++)
        fprintf(stderr, "m.xml:%ld: %s\n", err.items[i].line,
                err.items[i].message);
    lw_error_clear(&err);
    return st == LW_OK ? 0 : -1;
}

static int teardown(void **state)
{
    (void)state;
    lw_model_free(g_model);
    fclose(g_null);
    return 0;
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_error_record),
        cmocka_unit_test(test_load_and_compile),
        cmocka_unit_test(test_analyze),
        cmocka_unit_test(test_monte_carlo),
        cmocka_unit_test(test_incident_and_learn),
        cmocka_unit_test(test_report_and_render),
    };
    return cmocka_run_group_tests(tests, setup, teardown);
}
