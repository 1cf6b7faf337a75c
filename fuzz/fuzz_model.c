/*
 * fuzz_model.c - libFuzzer harness: arbitrary bytes as a model file.
 *
 * Each input is loaded with lw_model_load_memory; when it loads, every
 * variant is compiled, and for a few hazards and variants the questions
 * users ask are run with small limits (analyze, target, a short Monte
 * Carlo run, an incident on the first events, the DOT diagram and the
 * HTML report), and the results are rendered to /dev/null.
 *
 * Besides crashes, leaks and undefined behaviour (the sanitizers), the
 * harness traps on broken contracts:
 *   - the input read as a stream gives the same model, or the same
 *     messages, as read as a tree;
 *   - the BDD built by modules is the one built gate by gate, and the
 *     cut-set family from the network is the one from the BDD;
 *   - a call returns LW_OK exactly when it hands back a result;
 *   - a failed call leaves a status and a message (or the OOM flag) in
 *     its lw_error, and every message is one line;
 *   - a probability is a number in [0, 1]; for a monotone function the
 *     rare-event sum and the min-cut upper bound are not below the exact
 *     value (Esary-Proschan; common practice, no source), Birnbaum values
 *     lie in [0, 1] and Monte Carlo percentiles are ordered.
 *
 * Build: cmake -DLW_FUZZ=ON with clang (see fuzz/CMakeLists.txt).
 */
#include <float.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "layerwise/alloc.h"
#include "layerwise/analysis.h"
#include "layerwise/incident.h"
#include "layerwise/jsonw.h"
#include "layerwise/model.h"
#include "layerwise/network.h"
#include "layerwise/render.h"
#include "layerwise/render_incident.h"
#include "layerwise/render_mc.h"
#include "layerwise/render_target.h"
#include "layerwise/report.h"
#include "layerwise/target.h"
#include "layerwise/uncertainty.h"

#define FUZZ_NAME "fuzz_model"
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

#define MAX_HAZARDS 3       /* hazards analysed per input */
#define MAX_VARIANTS 2      /* variants analysed per hazard (besides none) */




static void check_analysis(const lw_analysis *a)
{
    double p = a->probability;
    CHECK(is_prob(p));
    double slack = 1e-9 * p + 1e-300;
    CHECK(a->rare_event >= p - slack);
    if (a->mcub_exact) {
        CHECK(is_prob(a->min_cut_upper_bound));
        CHECK(a->min_cut_upper_bound >= p - slack);
    }
    CHECK(a->cut_set_count >= 0);
    for (size_t i = 0; i < a->ncut_sets; i++) {
        CHECK(is_prob(a->cut_sets[i].probability));
        /* a hazard that is always true has one empty cut set */
        CHECK(a->cut_sets[i].order >= 1 || a->probability == 1.0);
        /* highest first, up to rounding: products of the same factors
         * in another order may differ in the last bit */
        if (i)
            CHECK(a->cut_sets[i].probability <=
                  a->cut_sets[i - 1].probability * (1 + 1e-12));
    }
    for (size_t i = 0; i < a->nimportance; i++) {
        const lw_importance *r = &a->importance[i];
        CHECK(r->birnbaum >= -1e-12 && r->birnbaum <= 1 + 1e-12);
        CHECK(is_prob(r->p_true) || fabs(r->p_true - 1) < 1e-12);
        CHECK(r->p_false >= -1e-300 && r->p_false <= 1 + 1e-12);
    }
}

/* The two ways of building each thing give the same thing: the BDD by
 * modules and gate by gate; the cut sets from the network and from the
 * BDD; Birnbaum with reach values in a ring and without. */
static void run_builds(const lw_model *m, size_t h, size_t v)
{
    lw_options opt;
    lw_options_init(&opt);
    opt.max_nodes = 200000;
    lw_error err = LW_ERROR_INIT;
    lw_prepared *p = NULL;
    lw_status st = lw_prepare(m, v, h, &opt, &p, &err);
    check_call(st, p, &err);
    lw_error_clear(&err);
    if (!p)
        return;
    lw_bref r;
    lw_diagram *plain = NULL;
    if (lw_prepared_root(p, &r, &err) == LW_OK &&
        lw_diagram_freeze(lw_builder_bdd(p->builder), r, p->nlevels,
                          lw_builder_level_var(p->builder), &plain,
                          &err) == LW_OK)
        CHECK(lw_diagram_same(plain, p->diagram) == 1);
    lw_diagram_free(plain);
    lw_error_clear(&err);
    /* the longest edge the freeze recorded, and Birnbaum with reach values
     * in a ring and with a slot per node: the same operations in the same
     * order, so the same bits */
    const lw_diagram *d = p->diagram;
    uint32_t span = 0;
    for (uint32_t i = 2; i < d->n; i++) {
        if (d->hi[i] > 1 && i - d->hi[i] > span)
            span = i - d->hi[i];
        if (d->lo[i] > 1 && i - d->lo[i] > span)
            span = i - d->lo[i];
    }
    CHECK(span == d->edge_span);
    double *b1 = malloc((d->nlevels + 1) * sizeof *b1);
    double *b2 = malloc((d->nlevels + 1) * sizeof *b2);
    double *reach = malloc((size_t)d->n * sizeof *reach);
    if (b1 && b2 && reach) {
        lw_diagram_ring_for_tests(1);
        lw_diagram_birnbaum_given(d, p->q, p->node_diff, b1, reach);
        lw_diagram_ring_for_tests(0);
        lw_diagram whole = *d;
        whole.edge_span = d->n;
        lw_diagram_birnbaum_given(&whole, p->q, p->node_diff, b2, reach);
        CHECK(memcmp(b1, b2, d->nlevels * sizeof *b1) == 0);
    }
    free(b1);
    free(b2);
    free(reach);
    lw_cut_family *fb = NULL, *fn = NULL;
    lw_status sb = lw_cut_family_new(p->diagram, p->q, 200000, &fb, &err);
    lw_error_clear(&err);
    lw_status sn = lw_prepared_cut_family(p, &opt, &fn, &err);
    lw_error_clear(&err);
    if (sb == LW_OK && sn == LW_OK) {
        CHECK(lw_cut_family_nodes(fb) == lw_cut_family_nodes(fn));
        CHECK(lw_cut_family_count(fb) == lw_cut_family_count(fn));
        CHECK(lw_cut_family_rare_event(fb) == lw_cut_family_rare_event(fn));
    }
    lw_cut_family_free(fb);
    lw_cut_family_free(fn);
    lw_prepared_free(p);
}

static void run_hazard(const lw_model *m, size_t h, size_t v)
{
    FILE *out = devnull();
    lw_options opt;
    lw_options_init(&opt);
    opt.max_nodes = 200000;
    opt.top = 20;
    opt.max_cut_sets = 10000;
    lw_error err = LW_ERROR_INIT;

    lw_analysis *a = NULL;
    lw_status st = lw_analyze(m, v, h, &opt, &a, &err);
    check_call(st, a, &err);
    if (!a)
        return;
    check_analysis(a);
    lw_render_analysis_text(out, m, a, 20);
    lw_render_cut_sets_csv(out, m, a, true);
    lw_render_importance_csv(out, m, a, true);
    static lw_jw jw;
    lw_jw_init(&jw, out);
    lw_analysis_write_json(&jw, m, a);
    lw_jw_flush(&jw);
    lw_analysis_free(a);

    lw_target *t = NULL;
    st = lw_target_run(m, v, h, 1e-6, &opt, &t, &err);
    check_call(st, t, &err);
    if (t) {
        lw_render_target_text(out, m, t);
        lw_render_target_csv(out, m, t, true);
        lw_json_write(out, lw_target_json(m, t));
        lw_target_free(t);
    }

    /* an incident: the first event failed, the second held */
    const char *ev[2] = {NULL, NULL};
    size_t nev = 0;
    for (size_t i = 0; i < m->nnodes && nev < 2; i++) {
        lw_node_kind k = m->nodes[i].kind;
        if ((k == LW_NODE_ERROR || k == LW_NODE_SAFEGUARD) && m->nodes[i].id)
            ev[nev++] = m->nodes[i].id;
    }
    if (nev) {
        lw_incident *r = NULL;
        st = lw_incident_run(m, v, h, ev, 1, ev + 1, nev - 1, &opt, &r, &err);
        check_call(st, r, &err);
        if (r) {
            CHECK(is_prob(r->conditional));
            lw_render_incident_text(out, m, r, 10);
            lw_json_write(out, lw_incident_json(m, r));
            lw_incident_free(r);
        }
    }
}

static void run_uncertainty(const lw_model *m, size_t h)
{
    lw_options opt;
    lw_options_init(&opt);
    opt.max_nodes = 200000;
    lw_mc_options mc;
    lw_mc_options_init(&mc);
    mc.samples = 64;
    mc.seed = 7;
    lw_error err = LW_ERROR_INIT;
    lw_uncertainty *u = NULL;
    lw_status st = lw_uncertainty_run(m, LW_NONE, h, &opt, &mc, &u, &err);
    check_call(st, u, &err);
    if (!u)
        return;
    CHECK(is_prob(u->mean) && is_prob(u->p05) && is_prob(u->p95));
    /* ordered up to rounding: interpolating between equal samples can
     * give one ulp more (reported: uncertainty.c quantiles) */
    CHECK(u->p05 <= u->p50 * (1 + 1e-12) + DBL_MIN &&
          u->p50 <= u->p95 * (1 + 1e-12) + DBL_MIN);
    lw_render_uncertainty_text(devnull(), m, u);
    lw_json_write(devnull(), lw_uncertainty_json(m, u));
    lw_uncertainty_free(u);
}

static void run_report(const lw_model *m)
{
    lw_options opt;
    lw_options_init(&opt);
    opt.max_nodes = 200000;
    opt.max_cut_sets = 10000;
    lw_report_options ro;
    lw_report_options_init(&ro);
    ro.monte_carlo = false;
    ro.all_variants = true;
    ro.source_name = "fuzz.xml";
    ro.generated = "2026-01-01";
    size_t hz[MAX_HAZARDS];
    size_t nh = m->nhazards < MAX_HAZARDS ? m->nhazards : MAX_HAZARDS;
    for (size_t i = 0; i < nh; i++)
        hz[i] = i;
    lw_error err = LW_ERROR_INIT;
    lw_report *r = NULL;
    lw_status st = lw_report_build(m, hz, nh, NULL, 0, &opt, &ro, &r, &err);
    check_call(st, r, &err);
    if (r) {
        st = lw_report_write_html(devnull(), r, &err);
        CHECK(st == LW_OK);
        lw_error_clear(&err);
        lw_report_free(r);
    }
    lw_diagram_options dop = {LW_NONE, LW_NONE};
    st = lw_render_dot(devnull(), m, &dop, &err);
    CHECK(st == LW_OK || err.count > 0 || err.oom);
    lw_error_clear(&err);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    lw_load_limits lim;
    memset(&lim, 0, sizeof lim);
    lim.max_bytes = (size_t)1 << 20;
    lim.max_nodes = 20000;
    lw_error err = LW_ERROR_INIT;
    lw_model *m = NULL;
    lw_status st = lw_model_load_memory((const char *)data, size, "fuzz.xml",
                                        &lim, &m, &err);
    check_call(st, m, &err);
    /* read as a stream, the same input gives the same model or the same
     * messages (the stream gives up and the tree path reports) */
    {
        lw_load_limits sl = lim;
        sl.stream_from = 1;
        lw_error e2 = LW_ERROR_INIT;
        lw_model *m2 = NULL;
        lw_status s2 = lw_model_load_memory((const char *)data, size,
                                            "fuzz.xml", &sl, &m2, &e2);
        check_call(s2, m2, &e2);
        CHECK(s2 == st);
        if (m && m2) {
            CHECK(m->nnodes == m2->nnodes && m->nwarnings == m2->nwarnings &&
                  m->nhazards == m2->nhazards &&
                  m->nvariants == m2->nvariants);
            for (size_t i = 0; i < m->nnodes; i++)
                CHECK(m->nodes[i].line == m2->nodes[i].line &&
                      m->nodes[i].kind == m2->nodes[i].kind &&
                      m->nodes[i].nin == m2->nodes[i].nin);
            for (size_t i = 0; i < m->nwarnings; i++)
                CHECK(strcmp(m->warnings[i], m2->warnings[i]) == 0);
        } else if (!m && !m2) {
            CHECK(err.count == e2.count);
            for (size_t i = 0; i < err.count; i++)
                CHECK(err.items[i].line == e2.items[i].line &&
                      strcmp(err.items[i].message, e2.items[i].message) == 0);
        }
        lw_model_free(m2);
        lw_error_clear(&e2);
    }
    if (!m)
        return 0;
    CHECK(m->nhazards >= 1);

    /* every variant compiles (or says why not) */
    for (size_t v = 0; v <= m->nvariants && v <= 8; v++) {
        lw_network *net = NULL;
        size_t var = v == 0 ? LW_NONE : v - 1;
        st = lw_compile(m, var, &net, &err);
        check_call(st, net, &err);
        if (net) {
            for (size_t i = 0; i < net->nvars; i++)
                CHECK(is_prob(net->vars[i].p));
            lw_network_free(net);
        }
    }
    size_t nh = m->nhazards < MAX_HAZARDS ? m->nhazards : MAX_HAZARDS;
    for (size_t h = 0; h < nh; h++) {
        run_builds(m, h, LW_NONE);
        run_hazard(m, h, LW_NONE);
        for (size_t v = 0; v < m->nvariants && v < MAX_VARIANTS; v++)
            run_hazard(m, h, v);
    }
    run_uncertainty(m, 0);
    if (m->nnodes <= 2000)
        run_report(m);
    lw_model_free(m);
    return 0;
}
