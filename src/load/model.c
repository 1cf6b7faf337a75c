/* model.c - freeing and querying an lw_model. */
#include "layerwise/model.h"

#include <string.h>

#include "layerwise/alloc.h"

void lw_model_free(lw_model *m)
{
    if (!m)
        return;
    for (size_t i = 0; i < m->nnodes; i++) {
        lw_node *n = &m->nodes[i];
        lw_free(n->id);
        lw_free(n->label);
        lw_free(n->source);
        lw_free(n->in);
        lw_free(n->dist.source);
    }
    lw_free(m->nodes);
    for (size_t i = 0; i < m->ngroups; i++) {
        lw_free(m->groups[i].id);
        lw_free(m->groups[i].label);
        lw_free(m->groups[i].members);
    }
    lw_free(m->groups);
    for (size_t i = 0; i < m->ndeps; i++)
        lw_free(m->deps[i].id);
    lw_free(m->deps);
    for (size_t i = 0; i < m->nvariants; i++) {
        lw_free(m->variants[i].id);
        lw_free(m->variants[i].label);
        lw_free(m->variants[i].sets);
    }
    lw_free(m->variants);
    lw_free(m->hazards);
    for (size_t i = 0; i < m->nwarnings; i++)
        lw_free(m->warnings[i]);
    lw_free(m->warnings);
    lw_free(m->file);
    lw_free(m->id);
    lw_free(m->title);
    lw_free(m->description);
    lw_free(m->exposure_unit);
    lw_free(m);
}

size_t lw_model_find_node(const lw_model *m, const char *id)
{
    for (size_t i = 0; i < m->nnodes; i++)
        if (m->nodes[i].id && !strcmp(m->nodes[i].id, id))
            return i;
    return LW_NONE;
}

size_t lw_model_find_variant(const lw_model *m, const char *id)
{
    for (size_t i = 0; i < m->nvariants; i++)
        if (m->variants[i].id && !strcmp(m->variants[i].id, id))
            return i;
    return LW_NONE;
}

size_t lw_model_find_hazard(const lw_model *m, const char *id)
{
    for (size_t i = 0; i < m->nhazards; i++)
        if (!strcmp(m->nodes[m->hazards[i]].id, id))
            return i;
    return LW_NONE;
}

bool lw_node_is_event(lw_node_kind k)
{
    return k == LW_NODE_ERROR || k == LW_NODE_SAFEGUARD ||
           k == LW_NODE_CONDITION;
}

bool lw_node_is_gate(lw_node_kind k)
{
    return k == LW_NODE_ALL || k == LW_NODE_ANY || k == LW_NODE_VOTE;
}

const char *lw_node_kind_name(lw_node_kind k)
{
    switch (k) {
    case LW_NODE_ERROR: return "error";
    case LW_NODE_SAFEGUARD: return "safeguard";
    case LW_NODE_CONDITION: return "condition";
    case LW_NODE_ALL: return "all";
    case LW_NODE_ANY: return "any";
    case LW_NODE_VOTE: return "vote";
    case LW_NODE_BLOCK: return "block";
    case LW_NODE_HAZARD: return "hazard";
    }
    return "?";
}

const char *lw_level_name(lw_level l)
{
    static const char *names[] = {"zero", "low", "moderate", "high",
                                  "complete"};
    return (unsigned)l < 5 ? names[l] : "?";
}

double lw_level_weight(lw_level l)
{
    switch (l) {
    case LW_LEVEL_ZERO: return 0.0;
    case LW_LEVEL_LOW: return 1.0 / 20.0;
    case LW_LEVEL_MODERATE: return 1.0 / 7.0;
    case LW_LEVEL_HIGH: return 0.5;
    case LW_LEVEL_COMPLETE: return 1.0;
    }
    return 0.0;
}
