/*
 * compile.c - from an lw_model (as written) to an lw_network (gates over
 * variables), see layerwise/network.h for the expansions.
 *
 * The model's node graph is walked in post-order with an explicit stack
 * (a model may chain many blocks), memoised per node so that a shared
 * subtree becomes one gate.  Constants from conditions are folded while
 * gates are made:
 *   AND: a false input makes it false, true inputs are dropped;
 *   OR: the dual;
 *   k-of-n: each true input lowers k by one, false inputs are dropped;
 *     k <= 0 is true, k > n false, k = n an AND, k = 1 an OR;
 *   a gate left with one input is that input.
 */
#include "layerwise/network.h"

#include <stdio.h>
#include <string.h>

#include "layerwise/alloc.h"

typedef struct compiler {
    const lw_model *m;
    lw_network *net;
    lw_error *err;
    uint32_t *gate_of;      /* per model node, LW_NO_GATE when not made */
    uint32_t *var_gate;     /* per variable: its VAR gate */
    size_t cap_var_gate;
    size_t *group_of;       /* per model node: its group, or LW_NONE */
    size_t *dep_of;         /* per model node: dependence it is second of */
    uint32_t *group_var;    /* per group: common:G variable */
    uint32_t *dep_var;      /* per dependence: depends:D variable */
    uint32_t *scratch;      /* gate inputs being assembled */
    size_t cap_scratch;
    int oom;
} compiler;

static uint32_t new_gate(compiler *C, lw_gate_kind kind, uint32_t var,
                         uint32_t k, const uint32_t *in, uint32_t nin,
                         size_t node)
{
    lw_network *net = C->net;
    lw_gate *g = lw_grow(net->gates, &net->cap_gates, net->ngates + 1,
                         sizeof *g);
    if (!g) {
        C->oom = 1;
        return LW_NO_GATE;
    }
    net->gates = g;
    uint32_t *inputs = net->inputs;
    if (nin) {
        inputs = lw_grow(net->inputs, &net->cap_inputs, net->ninputs + nin,
                         sizeof *inputs);
        if (!inputs) {
            C->oom = 1;
            return LW_NO_GATE;
        }
        net->inputs = inputs;
    }
    lw_gate *n = &g[net->ngates];
    n->kind = kind;
    n->var = var;
    n->k = k;
    n->nin = nin;
    n->first = (uint32_t)net->ninputs;
    n->node = node;
    if (nin)
        memcpy(inputs + net->ninputs, in, nin * sizeof *in);
    net->ninputs += nin;
    return (uint32_t)net->ngates++;
}

static uint32_t new_var(compiler *C, lw_var_kind kind, const char *prefix,
                        const char *id, const char *label)
{
    lw_network *net = C->net;
    lw_var *v = lw_grow(net->vars, &net->cap_vars, net->nvars + 1,
                        sizeof *v);
    if (!v) {
        C->oom = 1;
        return LW_NO_GATE;
    }
    net->vars = v;
    uint32_t *vg = lw_grow(C->var_gate, &C->cap_var_gate, net->nvars + 1,
                           sizeof *vg);
    if (!vg) {
        C->oom = 1;
        return LW_NO_GATE;
    }
    C->var_gate = vg;
    size_t len = strlen(prefix) + strlen(id) + 1;
    char *name = lw_malloc(len);
    if (!name) {
        C->oom = 1;
        return LW_NO_GATE;
    }
    snprintf(name, len, "%s%s", prefix, id);
    uint32_t vi = (uint32_t)net->nvars;
    lw_var *nv = &v[vi];
    memset(nv, 0, sizeof *nv);
    nv->name = name;
    nv->label = label;
    nv->kind = kind;
    nv->node = nv->group = nv->dep = LW_NONE;
    net->nvars++;
    uint32_t g = new_gate(C, LW_GATE_VAR, vi, 0, NULL, 0, LW_NONE);
    C->var_gate[vi] = g;
    if (g == LW_NO_GATE)
        return LW_NO_GATE;
    return vi;
}

/* Make the gate for an event whose dependence first (if any) already has
 * its gate. */
static void make_event_gate(compiler *C, size_t e)
{
    const lw_model *m = C->m;
    lw_network *net = C->net;
    const lw_node *n = &m->nodes[e];
    uint32_t v = new_var(C, n->kind == LW_NODE_ERROR ? LW_VAR_ERROR
                                                      : LW_VAR_SAFEGUARD,
                         "", n->id, n->label);
    if (v == LW_NO_GATE)
        return;
    net->vars[v].node = e;
    net->event_var[e] = v;
    uint32_t vg = C->var_gate[v];
    size_t g = C->group_of[e], d = C->dep_of[e];
    if (g != LW_NONE) {
        net->vars[v].part = true;
        if (C->group_var[g] == LW_NO_GATE) {
            const lw_group *grp = &m->groups[g];
            uint32_t cv = new_var(C, LW_VAR_COMMON, "common:", grp->id,
                                  grp->label);
            if (cv == LW_NO_GATE)
                return;
            net->vars[cv].group = g;
            C->group_var[g] = cv;
        }
        net->vars[v].partner = C->group_var[g];
        uint32_t in[2] = {vg, C->var_gate[C->group_var[g]]};
        net->event_gate[e] = new_gate(C, LW_GATE_OR, 0, 0, in, 2, e);
    } else if (d != LW_NONE) {
        net->vars[v].part = true;
        const lw_dependence *dep = &m->deps[d];
        char autoname[64];
        const char *did = dep->id;
        if (!did) {
            snprintf(autoname, sizeof autoname, "%zu", d + 1);
            did = autoname;
        }
        uint32_t dv;
        if (dep->id) {
            dv = new_var(C, LW_VAR_DEPENDS, "depends:", did, NULL);
        } else {
            /* unnamed: depends:FIRST>SECOND reads well in a cut set */
            size_t len = strlen(m->nodes[dep->first].id) +
                         strlen(m->nodes[dep->second].id) + 2;
            char *nm = lw_malloc(len);
            if (!nm) {
                C->oom = 1;
                return;
            }
            snprintf(nm, len, "%s>%s", m->nodes[dep->first].id,
                     m->nodes[dep->second].id);
            dv = new_var(C, LW_VAR_DEPENDS, "depends:", nm, NULL);
            lw_free(nm);
        }
        if (dv == LW_NO_GATE)
            return;
        net->vars[dv].dep = d;
        net->vars[v].partner = dv;
        C->dep_var[d] = dv;
        uint32_t a = net->event_gate[dep->first];
        uint32_t and_in[2] = {a, C->var_gate[dv]};
        uint32_t ag = new_gate(C, LW_GATE_AND, 0, 0, and_in, 2, LW_NONE);
        if (ag == LW_NO_GATE)
            return;
        uint32_t or_in[2] = {vg, ag};
        net->event_gate[e] = new_gate(C, LW_GATE_OR, 0, 0, or_in, 2, e);
    } else {
        net->event_gate[e] = vg;
    }
}

/* The gate of event 'e' as modelled, making its dependence chain first. */
static uint32_t event_gate(compiler *C, size_t e)
{
    lw_network *net = C->net;
    if (net->event_gate[e] != LW_NO_GATE)
        return net->event_gate[e];
    /* walk up the chain of firsts to one that is made or has none */
    size_t depth = 0, x = e;
    while (C->dep_of[x] != LW_NONE) {
        size_t a = C->m->deps[C->dep_of[x]].first;
        if (net->event_gate[a] != LW_NO_GATE)
            break;
        x = a;
        depth++;
    }
    /* make them from the top of the chain down */
    for (size_t level = depth + 1; level-- > 0 && !C->oom;) {
        size_t y = e;
        for (size_t i = 0; i < level; i++)
            y = C->m->deps[C->dep_of[y]].first;
        make_event_gate(C, y);
    }
    return C->oom ? LW_NO_GATE : net->event_gate[e];
}

static int push_scratch(compiler *C, size_t n, uint32_t g)
{
    uint32_t *s = lw_grow(C->scratch, &C->cap_scratch, n + 1, sizeof *s);
    if (!s) {
        C->oom = 1;
        return 0;
    }
    C->scratch = s;
    s[n] = g;
    return 1;
}

/* A gate from a model gate whose inputs are all made: fold constants. */
static uint32_t make_logic_gate(compiler *C, size_t ni)
{
    const lw_node *n = &C->m->nodes[ni];
    size_t nt = 0, nf = 0, cnt = 0;
    for (size_t i = 0; i < n->nin; i++) {
        uint32_t g = C->gate_of[n->in[i]];
        if (g == 0)
            nf++;
        else if (g == 1)
            nt++;
        else if (!push_scratch(C, cnt++, g))
            return LW_NO_GATE;
    }
    lw_gate_kind kind;
    uint32_t k = 0;
    if (n->kind == LW_NODE_ALL) {
        if (nf)
            return 0;
        if (cnt == 0)
            return 1;
        kind = LW_GATE_AND;
    } else if (n->kind == LW_NODE_ANY) {
        if (nt)
            return 1;
        if (cnt == 0)
            return 0;
        kind = LW_GATE_OR;
    } else {
        long kk = (long)n->k - (long)nt;
        if (kk <= 0)
            return 1;
        if ((size_t)kk > cnt)
            return 0;
        if ((size_t)kk == cnt)
            kind = LW_GATE_AND;
        else if (kk == 1)
            kind = LW_GATE_OR;
        else
            kind = LW_GATE_VOTE;
        k = (uint32_t)kk;
    }
    if (cnt == 1)
        return C->scratch[0];
    return new_gate(C, kind, 0, k, C->scratch, (uint32_t)cnt, ni);
}

static uint32_t make_node_gate(compiler *C, size_t ni)
{
    const lw_node *n = &C->m->nodes[ni];
    switch (n->kind) {
    case LW_NODE_ERROR:
    case LW_NODE_SAFEGUARD:
        return event_gate(C, ni);
    case LW_NODE_CONDITION:
        return C->net->present[ni] ? 1 : 0;
    case LW_NODE_BLOCK:
    case LW_NODE_HAZARD:
        return C->gate_of[n->in[0]];
    default:
        return make_logic_gate(C, ni);
    }
}

/* Post-order walk from 'root' with an explicit stack. */
static void build_from(compiler *C, size_t root, size_t *stack, size_t *pos)
{
    const lw_model *m = C->m;
    if (C->gate_of[root] != LW_NO_GATE)
        return;
    size_t top = 0;
    stack[0] = root;
    pos[0] = 0;
    while (!C->oom) {
        size_t v = stack[top];
        const lw_node *n = &m->nodes[v];
        if (pos[top] < n->nin) {
            size_t w = n->in[pos[top]++];
            if (C->gate_of[w] == LW_NO_GATE) {
                top++;
                stack[top] = w;
                pos[top] = 0;
            }
            continue;
        }
        uint32_t g = make_node_gate(C, v);
        if (g == LW_NO_GATE)
            break;
        C->gate_of[v] = g;
        if (top == 0)
            break;
        top--;
    }
}

static void apply_variant(compiler *C, size_t variant)
{
    const lw_model *m = C->m;
    lw_network *net = C->net;
    for (size_t i = 0; i < m->nnodes; i++) {
        net->dist[i] = m->nodes[i].dist;
        net->dist[i].source = NULL;     /* borrowed text stays in model */
        net->present[i] = m->nodes[i].kind == LW_NODE_CONDITION
                              ? m->nodes[i].state : m->nodes[i].present;
    }
    for (size_t g = 0; g < m->ngroups; g++)
        net->beta[g] = m->groups[g].beta;
    for (size_t d = 0; d < m->ndeps; d++)
        net->level[d] = m->deps[d].level;
    if (variant == LW_NONE)
        return;
    const lw_variant *v = &m->variants[variant];
    for (size_t s = 0; s < v->nsets; s++) {
        const lw_set *set = &v->sets[s];
        switch (set->attr) {
        case LW_SET_P: {
            lw_dist *d = &net->dist[set->target];
            if (d->kind != LW_DIST_LOGNORMAL)
                d->kind = LW_DIST_POINT;    /* lognormal keeps its EF */
            d->p = set->number;
            break;
        }
        case LW_SET_PRESENT:
        case LW_SET_STATE:
            net->present[set->target] = set->flag;
            break;
        case LW_SET_BETA:
            net->beta[set->target] = set->number;
            break;
        case LW_SET_LEVEL:
            net->level[set->target] = set->level;
            break;
        }
    }
}

lw_status lw_compile(const lw_model *m, size_t variant, lw_network **out,
                     lw_error *err)
{
    *out = NULL;
    compiler C;
    memset(&C, 0, sizeof C);
    C.m = m;
    C.err = err;
    lw_network *net = lw_calloc(1, sizeof *net);
    if (!net)
        return lw_error_oom(err);
    C.net = net;
    net->model = m;
    net->variant = variant;
    size_t nn = m->nnodes + 1;
    net->hazard_gate = lw_malloc((m->nhazards + 1) * sizeof(uint32_t));
    net->event_gate = lw_malloc(nn * sizeof(uint32_t));
    net->event_var = lw_malloc(nn * sizeof(uint32_t));
    net->dist = lw_calloc(nn, sizeof *net->dist);
    net->present = lw_calloc(nn, sizeof *net->present);
    net->beta = lw_calloc(m->ngroups + 1, sizeof *net->beta);
    net->level = lw_calloc(m->ndeps + 1, sizeof *net->level);
    C.gate_of = lw_malloc(nn * sizeof *C.gate_of);
    C.group_of = lw_malloc(nn * sizeof *C.group_of);
    C.dep_of = lw_malloc(nn * sizeof *C.dep_of);
    C.group_var = lw_malloc((m->ngroups + 1) * sizeof *C.group_var);
    C.dep_var = lw_malloc((m->ndeps + 1) * sizeof *C.dep_var);
    size_t *stack = lw_malloc(nn * sizeof *stack);
    size_t *pos = lw_malloc(nn * sizeof *pos);
    if (!net->hazard_gate || !net->event_gate || !net->event_var ||
        !net->dist || !net->present || !net->beta || !net->level ||
        !C.gate_of || !C.group_of || !C.dep_of || !C.group_var ||
        !C.dep_var || !stack || !pos) {
        C.oom = 1;
        goto done;
    }
    for (size_t i = 0; i < m->nnodes; i++) {
        net->event_gate[i] = LW_NO_GATE;
        net->event_var[i] = LW_NO_GATE;
        C.gate_of[i] = LW_NO_GATE;
        C.group_of[i] = LW_NONE;
        C.dep_of[i] = LW_NONE;
    }
    for (size_t g = 0; g < m->ngroups; g++) {
        C.group_var[g] = LW_NO_GATE;
        for (size_t k = 0; k < m->groups[g].nmembers; k++)
            C.group_of[m->groups[g].members[k]] = g;
    }
    for (size_t d = 0; d < m->ndeps; d++) {
        C.dep_var[d] = LW_NO_GATE;
        C.dep_of[m->deps[d].second] = d;
    }
    apply_variant(&C, variant);
    /* gates 0 and 1 are the constants */
    if (new_gate(&C, LW_GATE_FALSE, 0, 0, NULL, 0, LW_NONE) != 0 ||
        new_gate(&C, LW_GATE_TRUE, 0, 0, NULL, 0, LW_NONE) != 1) {
        C.oom = 1;
        goto done;
    }
    for (size_t h = 0; h < m->nhazards && !C.oom; h++) {
        build_from(&C, m->hazards[h], stack, pos);
        net->hazard_gate[h] = C.gate_of[m->hazards[h]];
    }
    if (!C.oom) {
        double *ep = lw_malloc(nn * sizeof *ep);
        if (!ep) {
            C.oom = 1;
        } else {
            lw_network_event_probs(net, ep);
            double *vp = lw_malloc((net->nvars + 1) * sizeof *vp);
            if (!vp) {
                C.oom = 1;
            } else {
                lw_network_var_probs(net, ep, vp);
                for (size_t v = 0; v < net->nvars; v++)
                    net->vars[v].p = vp[v];
                lw_free(vp);
            }
            lw_free(ep);
        }
    }
done:
    lw_free(C.gate_of);
    lw_free(C.var_gate);
    lw_free(C.group_of);
    lw_free(C.dep_of);
    lw_free(C.group_var);
    lw_free(C.dep_var);
    lw_free(C.scratch);
    lw_free(stack);
    lw_free(pos);
    if (C.oom) {
        lw_network_free(net);
        return lw_error_oom(err);
    }
    *out = net;
    return LW_OK;
}

void lw_network_free(lw_network *net)
{
    if (!net)
        return;
    for (size_t v = 0; v < net->nvars; v++)
        lw_free(net->vars[v].name);
    lw_free(net->vars);
    lw_free(net->gates);
    lw_free(net->inputs);
    lw_free(net->hazard_gate);
    lw_free(net->event_gate);
    lw_free(net->event_var);
    lw_free(net->dist);
    lw_free(net->present);
    lw_free(net->beta);
    lw_free(net->level);
    lw_free(net);
}

void lw_network_event_probs(const lw_network *net, double *event_p)
{
    const lw_model *m = net->model;
    for (size_t i = 0; i < m->nnodes; i++) {
        const lw_node *n = &m->nodes[i];
        if (n->kind == LW_NODE_SAFEGUARD && !net->present[i])
            event_p[i] = 1.0;
        else if (n->kind == LW_NODE_ERROR || n->kind == LW_NODE_SAFEGUARD)
            event_p[i] = net->dist[i].p;
        else
            event_p[i] = 0.0;
    }
}

void lw_network_var_probs(const lw_network *net, const double *event_p,
                          double *var_p)
{
    const lw_model *m = net->model;
    /* common causes first: q = beta * min(p of members) */
    for (size_t v = 0; v < net->nvars; v++) {
        const lw_var *x = &net->vars[v];
        if (x->kind != LW_VAR_COMMON)
            continue;
        const lw_group *g = &m->groups[x->group];
        double mn = 1.0;
        for (size_t k = 0; k < g->nmembers; k++)
            if (event_p[g->members[k]] < mn)
                mn = event_p[g->members[k]];
        var_p[v] = net->beta[x->group] * mn;
    }
    for (size_t v = 0; v < net->nvars; v++) {
        const lw_var *x = &net->vars[v];
        if (x->kind == LW_VAR_COMMON)
            continue;
        if (x->kind == LW_VAR_DEPENDS) {
            const lw_dependence *d = &m->deps[x->dep];
            double p = event_p[d->second];
            double w = lw_level_weight(net->level[x->dep]);
            double i = p * (1.0 - w);
            double c = p + w * (1.0 - p);
            var_p[v] = i >= 1.0 ? 0.0 : (c - i) / (1.0 - i);
            continue;
        }
        size_t e = x->node;
        double p = event_p[e];
        if (!x->part) {
            var_p[v] = p;
            continue;
        }
        /* a group member or a dependence second: its independent part */
        const lw_var *pv = &net->vars[x->partner];
        if (pv->kind == LW_VAR_COMMON) {
            double q = var_p[x->partner];
            double r = q >= 1.0 ? 0.0 : (p - q) / (1.0 - q);
            var_p[v] = r < 0.0 ? 0.0 : r;
        } else {
            /* an absent layer (or one with p = 1) misses whatever the
             * first check did: the THERP success branch p(1 - w) is for
             * a basic probability below 1 */
            double w = lw_level_weight(net->level[pv->dep]);
            var_p[v] = p >= 1.0 ? 1.0 : p * (1.0 - w);
        }
    }
}

const char *lw_var_kind_name(lw_var_kind k)
{
    switch (k) {
    case LW_VAR_ERROR: return "error";
    case LW_VAR_SAFEGUARD: return "safeguard";
    case LW_VAR_COMMON: return "common-cause";
    case LW_VAR_DEPENDS: return "dependence";
    }
    return "?";
}
