/*
 * prepare.c - the first step of every question: compile the variant,
 * order and build the hazard's BDD, freeze it, and compute P(hazard).
 */
#include "layerwise/analysis.h"

#include <string.h>

#include "layerwise/alloc.h"

#ifndef LW_VERSION
#define LW_VERSION "0.0.0"
#endif

const char *lw_version(void) { return LW_VERSION; }

const char *lw_caution(void)
{
    return "layerwise supports but does not replace institutional safety "
           "review. Its figures are model estimates with wide uncertainty; "
           "follow local policy, accreditation requirements and licensed "
           "clinical judgement, and never use them to judge individual "
           "staff.";
}

void lw_options_init(lw_options *o)
{
    memset(o, 0, sizeof *o);
    o->max_cut_sets = 1000000;
}

void lw_prepared_drop_builder(lw_prepared *p)
{
    if (!p)
        return;
    lw_builder_free(p->builder);
    p->builder = NULL;
}

void lw_prepared_free(lw_prepared *p)
{
    if (!p)
        return;
    lw_diagram_free(p->diagram);
    lw_builder_free(p->builder);
    lw_network_free(p->net);
    lw_free(p->q);
    lw_free(p->node_diff);
    lw_free(p);
}

lw_status lw_prepared_root(lw_prepared *p, lw_bref *out, lw_error *err)
{
    *out = LW_BREF_INVALID;
    if (!p->builder)
        return lw_error_set(err, LW_EINTERNAL, NULL, 0, "the decision "
                            "diagram manager was already released");
    if (p->root == LW_BREF_INVALID) {
        lw_status st = lw_builder_gate(p->builder,
                                       p->net->hazard_gate[p->hazard],
                                       &p->root, err);
        if (st != LW_OK)
            return st;
    }
    *out = p->root;
    return LW_OK;
}

lw_status lw_prepare(const lw_model *m, size_t variant, size_t hazard,
                     const lw_options *opt, lw_prepared **out, lw_error *err)
{
    *out = NULL;
    lw_status st;
    if (hazard >= m->nhazards)
        return lw_error_set(err, LW_EUSAGE, NULL, 0, "no hazard number %zu",
                            hazard);
    lw_prepared *p = lw_calloc(1, sizeof *p);
    if (!p)
        return lw_error_oom(err);
    p->model = m;
    p->variant = variant;
    p->hazard = hazard;
    st = lw_compile(m, variant, &p->net, err);
    if (st != LW_OK)
        goto fail;
    /* order: the hazard first, then every other event (so that questions
     * about events outside the hazard, e.g. an incident's observation,
     * can be built in the same manager) */
    const lw_network *net = p->net;
    uint32_t *roots = lw_malloc((m->nnodes + 1) * sizeof *roots);
    if (!roots) {
        st = lw_error_oom(err);
        goto fail;
    }
    size_t nroots = 0;
    roots[nroots++] = net->hazard_gate[hazard];
    for (size_t i = 0; i < m->nnodes; i++)
        if (net->event_gate[i] != LW_NO_GATE)
            roots[nroots++] = net->event_gate[i];
    st = lw_builder_new(net, roots, nroots, opt ? opt->max_nodes : 0,
                        &p->builder, err);
    lw_free(roots);
    if (st != LW_OK)
        goto fail;
    p->nlevels = lw_builder_nlevels(p->builder);
    p->hazard_levels = lw_builder_root_levels(p->builder);
    /* the hazard module by module, straight to the frozen diagram; the
     * builder's manager stays empty until a question needs more (see
     * lw_prepared_root) */
    p->root = LW_BREF_INVALID;
    st = lw_diagram_build(net, net->hazard_gate[hazard],
                          lw_builder_var_level(p->builder), p->nlevels,
                          lw_builder_level_var(p->builder),
                          opt ? opt->max_nodes : 0, &p->diagram, err);
    if (st != LW_OK)
        goto fail;
    p->q = lw_malloc((p->nlevels + 1) * sizeof *p->q);
    double *work = lw_malloc(p->diagram->n * sizeof *work);
    p->node_diff = lw_malloc(p->diagram->n * sizeof *p->node_diff);
    if (!p->q || !work || !p->node_diff) {
        lw_free(work);
        st = lw_error_oom(err);
        goto fail;
    }
    const uint32_t *lv = lw_builder_level_var(p->builder);
    for (uint32_t l = 0; l < p->nlevels; l++)
        p->q[l] = net->vars[lv[l]].p;
    p->probability = lw_diagram_prob_diff(p->diagram, p->q, work,
                                          p->node_diff);
    lw_free(work);
    *out = p;
    return LW_OK;
fail:
    lw_prepared_free(p);
    return st;
}
