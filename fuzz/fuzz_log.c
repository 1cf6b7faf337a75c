/*
 * fuzz_log.c - libFuzzer harness: arbitrary bytes as a near-miss log.
 *
 * A fixed model (the skeleton of docs/model-format.md: errors, safeguards,
 * an absent layer, observed counts, a common-cause group and a dependence)
 * is loaded once.  Each input is read as its log with lw_learn_memory;
 * when it is accepted, the result is rendered (text, JSON, CSV) to
 * /dev/null and the updated model of `learn -o` is made and loaded back.
 *
 * Besides crashes, leaks and undefined behaviour (the sanitizers), the
 * harness traps on broken contracts: a call returns LW_OK exactly when it
 * hands back a result; a failure leaves a status and a one-line message;
 * counts are consistent (missed <= reached, m <= n), estimates and
 * p-values are probabilities and the interval holds the estimate's data.
 */
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "layerwise/alloc.h"
#include "layerwise/learn.h"
#include "layerwise/model.h"
#include "layerwise/render_incident.h"

#define FUZZ_NAME "fuzz_log"
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static const char model_xml[] =
    "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
    "<safety-model format=\"1\" id=\"ward-transfusion\">\n"
    "  <exposure unit=\"transfusion episode\" per-year=\"18000\"/>\n"
    "  <error id=\"wrong-tube\" label=\"Wrong patient sampled\" p=\"4e-4\"/>\n"
    "  <safeguard id=\"lab-history\" label=\"History check\" p=\"0.1\">\n"
    "    <lognormal error-factor=\"3\"/>\n"
    "  </safeguard>\n"
    "  <safeguard id=\"nurse-1\" label=\"First nurse\">\n"
    "    <observed count=\"9\" of=\"400\" source=\"audit\"/>\n"
    "  </safeguard>\n"
    "  <safeguard id=\"nurse-2\" label=\"Second nurse\" p=\"0.02\"/>\n"
    "  <safeguard id=\"scan\" label=\"Scan\" p=\"0.01\" present=\"no\"/>\n"
    "  <block id=\"bedside\" label=\"Both bedside checks miss it\">\n"
    "    <all><ref to=\"nurse-1\"/><ref to=\"nurse-2\"/></all>\n"
    "  </block>\n"
    "  <hazard id=\"wrong-blood\" label=\"Wrong blood\" tolerable=\"1e-6\">\n"
    "    <any>\n"
    "      <all><ref to=\"wrong-tube\"/><ref to=\"lab-history\"/>\n"
    "        <ref to=\"bedside\"/><ref to=\"scan\"/></all>\n"
    "      <all id=\"collection-slip\">\n"
    "        <error id=\"wrong-unit\" label=\"Wrong unit\" p=\"2e-4\"/>\n"
    "        <vote k=\"2\">\n"
    "          <safeguard id=\"issue-a\" p=\"0.05\"/>\n"
    "          <safeguard id=\"issue-b\" p=\"0.05\"/>\n"
    "          <safeguard id=\"issue-c\" p=\"0.2\"/>\n"
    "        </vote>\n"
    "        <ref to=\"bedside\"/>\n"
    "      </all>\n"
    "    </any>\n"
    "  </hazard>\n"
    "  <common-cause id=\"same-shift\" beta=\"0.1\" "
    "members=\"issue-a issue-b\"/>\n"
    "  <dependence id=\"double-check\" first=\"nurse-1\" second=\"nurse-2\" "
    "level=\"high\"/>\n"
    "</safety-model>\n";




static lw_model *model(void)
{
    static lw_model *m;
    if (!m) {
        lw_error err = LW_ERROR_INIT;
        if (lw_model_load_memory(model_xml, sizeof model_xml - 1, "m.xml",
                                 NULL, &m, &err) != LW_OK)
            abort();
        lw_error_clear(&err);
    }
    return m;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const lw_model *m = model();
    lw_error err = LW_ERROR_INIT;
    lw_learn *l = NULL;
    lw_status st = lw_learn_memory(m, (const char *)data, size, "fuzz.csv",
                                   &l, &err);
    check_call(st, l, &err);
    if (!l)
        return 0;
    CHECK(l->rows_caught <= l->rows);
    for (size_t i = 0; i < l->nlayers; i++) {
        const lw_learn_layer *y = &l->layers[i];
        CHECK(y->node < m->nnodes);
        CHECK(m->nodes[y->node].kind == LW_NODE_SAFEGUARD);
        CHECK(y->missed <= y->reached);
        CHECK(y->M <= y->R);
        CHECK(is_prob(y->estimate));
        CHECK(is_prob(y->ci_lo) && is_prob(y->ci_hi) && y->ci_lo <= y->ci_hi);
    }
    for (size_t i = 0; i < l->npairs; i++) {
        const lw_learn_pair *p = &l->pairs[i];
        CHECK(p->m <= p->n && p->n >= LW_LEARN_MIN_PAIR);
        CHECK(p->first != p->second);
        CHECK(is_prob(p->p_value) && is_prob(p->rate));
        char line[512];
        lw_learn_dependence_xml(m, p, line, sizeof line);
    }
    FILE *out = devnull();
    lw_render_learn_text(out, m, l);
    lw_render_learn_csv(out, m, l, false);
    lw_render_learn_csv(out, m, l, true);
    lw_json_write(out, lw_learn_json(m, l));

    char *xml = NULL;
    size_t xlen = 0;
    st = lw_learn_update_model(model_xml, sizeof model_xml - 1, "m.xml", m, l,
                               &xml, &xlen, &err);
    check_call(st, xml, &err);
    if (xml) {
        lw_model *m2 = NULL;
        st = lw_model_load_memory(xml, xlen, "new.xml", NULL, &m2, &err);
        CHECK(st == LW_OK);
        lw_error_clear(&err);
        lw_model_free(m2);
        lw_free(xml);
    }
    lw_learn_free(l);
    return 0;
}
