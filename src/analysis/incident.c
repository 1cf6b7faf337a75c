/*
 * incident.c - post-incident analysis: what the observation completes,
 * what still stood, how likely the chain was (see layerwise/incident.h).
 *
 * HOW IT WORKS
 *   1. The observation is built in the hazard's own BDD manager from the
 *      events' gates (each event as modelled, so common cause and
 *      dependence are in it), frozen, and evaluated with the point
 *      probabilities: P(obs), P(hazard AND obs), and by one Birnbaum pass
 *      the posterior of every variable.
 *   2. The near sets - minimal cut sets with at most one variable that is
 *      neither counted as failed nor held - are built straight from the
 *      hazard's frozen BDD as two ZBDD families per node:
 *          N0(f) = minimal cut sets of f using only free variables,
 *          N1(f) = those with at most one costly variable,
 *      with f = x.f1 + f0 and 'without(A, B)' = sets of A holding no set
 *      of B (the minimal-solutions decomposition of cutsets.c):
 *          x free:   N0 = {x} x without(N0(f1), N0(f0)) u N0(f0)
 *                    N1 = {x} x without(N1(f1), N1(f0)) u N1(f0)
 *          x costly: N0 = N0(f0)
 *                    N1 = {x} x without(N0(f1), N0(f0)) u N1(f0)
 *      (a subset of a set within the budget is within it too, so the
 *      budget-restricted families are enough on the right of 'without').
 *      Only sets within the budget are ever made or walked, so a hazard
 *      with 10^30 cut sets costs what its diagram costs.
 */
#include "layerwise/incident.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "layerwise/alloc.h"
#include "layerwise/deep.h"

/* ---- small helpers ---------------------------------------------------- */

static void sets_free(lw_incident_set *s, size_t n)
{
    if (!s)
        return;
    for (size_t i = 0; i < n; i++)
        lw_free(s[i].vars);
    lw_free(s);
}

void lw_incident_free(lw_incident *r)
{
    if (!r)
        return;
    lw_free(r->failed);
    lw_free(r->held);
    sets_free(r->sets, r->ncompleted + r->none_away + r->nblocked);
    lw_free(r->stood);
    lw_free(r->strains);
    lw_free(r->links);
    lw_free(r->in_hazard);
    lw_prepared_free(r->owned);
    lw_free(r);
}

const lw_incident_set *lw_incident_completed(const lw_incident *r)
{
    return r->sets;
}

const lw_incident_set *lw_incident_one_away(const lw_incident *r)
{
    return r->sets + r->ncompleted;
}

const lw_incident_set *lw_incident_blocked(const lw_incident *r)
{
    return r->sets + r->ncompleted + r->none_away;
}

static const char *kind_word(lw_node_kind k)
{
    switch (k) {
    case LW_NODE_CONDITION: return "a condition (a switch set in the model)";
    case LW_NODE_HAZARD: return "a hazard";
    case LW_NODE_BLOCK: return "a block";
    default: return "a gate";
    }
}

/* "a, b, c" of the model's error and safeguard ids (at most 60). */
static void list_events(const lw_model *m, char *buf, size_t n)
{
    size_t o = 0, shown = 0, total = 0;
    buf[0] = '\0';
    for (size_t i = 0; i < m->nnodes; i++) {
        const lw_node *x = &m->nodes[i];
        if (x->kind != LW_NODE_ERROR && x->kind != LW_NODE_SAFEGUARD)
            continue;
        total++;
        if (shown >= 60 || o + strlen(x->id) + 4 >= n)
            continue;
        int w = snprintf(buf + o, n - o, "%s%s", shown ? ", " : "", x->id);
        if (w > 0)
            o += (size_t)w;
        shown++;
    }
    if (shown < total && o + 32 < n)
        snprintf(buf + o, n - o, " ... and %zu more", total - shown);
}

lw_status lw_incident_resolve(const lw_model *m, const char *what,
                              const char *const *ids, size_t n,
                              size_t *nodes, lw_error *err)
{
    lw_status st = LW_OK;
    for (size_t i = 0; i < n; i++) {
        size_t x = lw_model_find_node(m, ids[i]);
        if (x != LW_NONE && (m->nodes[x].kind == LW_NODE_ERROR ||
                             m->nodes[x].kind == LW_NODE_SAFEGUARD)) {
            nodes[i] = x;
            continue;
        }
        char list[4096];
        list_events(m, list, sizeof list);
        if (x == LW_NONE)
            st = lw_error_set(err, LW_EUSAGE, m->file, 0, "%s names \"%s\", "
                              "which is not an id of the model; its errors "
                              "and safeguards are: %s", what, ids[i], list);
        else
            st = lw_error_set(err, LW_EUSAGE, m->file, 0, "%s names \"%s\", "
                              "which is %s, not an event; %s takes errors "
                              "and safeguards: %s", what, ids[i],
                              kind_word(m->nodes[x].kind), what, list);
    }
    return st;
}

/* ---- probability of a function in the live manager (small ones) ----- */

typedef struct pmemo {
    uint32_t *keys;         /* bref + 1, 0 = free slot */
    double *vals;
    size_t cap, n;
    int oom;
} pmemo;

static int pmemo_grow(pmemo *m)
{
    size_t ncap = m->cap ? m->cap * 2 : 256;
    uint32_t *k = lw_calloc(ncap, sizeof *k);
    double *v = lw_malloc(ncap * sizeof *v);
    if (!k || !v) {
        lw_free(k);
        lw_free(v);
        return 0;
    }
    for (size_t i = 0; i < m->cap; i++) {
        if (!m->keys[i])
            continue;
        size_t h = (m->keys[i] * 2654435761u) & (ncap - 1);
        while (k[h])
            h = (h + 1) & (ncap - 1);
        k[h] = m->keys[i];
        v[h] = m->vals[i];
    }
    lw_free(m->keys);
    lw_free(m->vals);
    m->keys = k;
    m->vals = v;
    m->cap = ncap;
    return 1;
}

static double prob_rec(lw_bdd *b, lw_bref f, const double *q, pmemo *m)
{
    if (f == LW_BDD_FALSE)
        return 0.0;
    if (f == LW_BDD_TRUE)
        return 1.0;
    size_t h = 0;
    if (m->cap) {
        h = ((f + 1) * 2654435761u) & (m->cap - 1);
        while (m->keys[h]) {
            if (m->keys[h] == f + 1)
                return m->vals[h];
            h = (h + 1) & (m->cap - 1);
        }
    }
    double p = q[lw_bdd_level(b, f)];
    double v = p * prob_rec(b, lw_bdd_hi(b, f), q, m) +
               (1.0 - p) * prob_rec(b, lw_bdd_lo(b, f), q, m);
    if (m->oom)
        return 0.0;
    if (2 * (m->n + 1) > m->cap && !pmemo_grow(m)) {
        m->oom = 1;
        return 0.0;
    }
    h = ((f + 1) * 2654435761u) & (m->cap - 1);
    while (m->keys[h])
        h = (h + 1) & (m->cap - 1);
    m->keys[h] = f + 1;
    m->vals[h] = v;
    m->n++;
    return v;
}

static lw_status bdd_prob(lw_bdd *b, lw_bref f, const double *q,
                          double *out, lw_error *err)
{
    pmemo m = {NULL, NULL, 0, 0, 0};
    *out = prob_rec(b, f, q, &m);
    lw_free(m.keys);
    lw_free(m.vals);
    if (m.oom)
        return lw_error_oom(err);
    return LW_OK;
}

static lw_status bdd_failed(lw_bdd *b, lw_error *err)
{
    if (lw_bdd_status(b) == LW_ELIMIT)
        return lw_error_set(err, LW_ELIMIT, NULL, 0, "the decision diagram "
                            "reached the node limit of %zu nodes "
                            "(--max-nodes) while building the observation; "
                            "raise --max-nodes or name fewer events",
                            lw_bdd_max_nodes(b));
    return lw_error_oom(err);
}

/* P(variable at level l | obs), computed once per level. */
static lw_status posterior(lw_prepared *p, double *post, lw_bref obs,
                           double p_obs, uint32_t l, double *out,
                           lw_error *err)
{
    if (post[l] < 0) {
        lw_bdd *b = lw_builder_bdd(p->builder);
        lw_bref g = lw_bdd_and(b, obs, lw_bdd_var(b, l));
        if (g == LW_BREF_INVALID)
            return bdd_failed(b, err);
        double pj = 0;
        lw_status st = bdd_prob(b, g, p->q, &pj, err);
        if (st != LW_OK)
            return st;
        double v = pj / p_obs;
        post[l] = v > 1 ? 1 : v;
    }
    *out = post[l];
    return LW_OK;
}

/* ---- the near-set families ------------------------------------------- */

/* Build N0 and N1 of the hazard's diagram in the ZDD manager 'z'. */
static lw_status near_families(const lw_diagram *d, const unsigned char *cheap,
                               lw_bdd *z, uint32_t *root0, uint32_t *root1,
                               lw_error *err)
{
    uint32_t *n0 = lw_malloc(d->n * sizeof *n0);
    uint32_t *n1 = lw_malloc(d->n * sizeof *n1);
    lw_status st = LW_OK;
    if (!n0 || !n1) {
        st = lw_error_oom(err);
        goto done;
    }
    n0[0] = n1[0] = 0;
    n0[1] = n1[1] = 1;
    for (uint32_t i = 2; i < d->n; i++) {
        uint32_t x = d->level[i], h = d->hi[i], l = d->lo[i];
        if (cheap[x]) {
            n0[i] = lw_bdd_mk(z, x, lw_zdd_without(z, n0[h], n0[l]), n0[l]);
            n1[i] = lw_bdd_mk(z, x, lw_zdd_without(z, n1[h], n1[l]), n1[l]);
        } else {
            n0[i] = n0[l];
            n1[i] = lw_bdd_mk(z, x, lw_zdd_without(z, n0[h], n0[l]), n1[l]);
        }
        if (n0[i] == LW_BREF_INVALID || n1[i] == LW_BREF_INVALID) {
            if (lw_bdd_status(z) == LW_ELIMIT)
                st = lw_error_set(err, LW_ELIMIT, NULL, 0, "the near cut "
                                  "sets reached the node limit of %zu nodes "
                                  "(--max-nodes); raise it",
                                  lw_bdd_max_nodes(z));
            else
                st = lw_error_oom(err);
            goto done;
        }
    }
    *root0 = n0[d->root];
    *root1 = n1[d->root];
done:
    lw_free(n0);
    lw_free(n1);
    return st;
}

/* ---- walking the families --------------------------------------------- */

typedef struct collect {
    lw_bdd *z;
    const lw_prepared *p;
    const unsigned char *failed_l;  /* per level: counts as failed */
    const unsigned char *held_l;    /* per level: held */
    uint32_t *path;
    bool untouched_only;            /* second pass: sets N0 lacks */
    lw_incident_set *sets;
    size_t n, cap;
    size_t limit;
    bool truncated;
    int oom;
} collect;

static void take_set(collect *c, size_t depth)
{
    size_t nf = 0, nh = 0;
    uint32_t miss = UINT32_MAX;
    for (size_t k = 0; k < depth; k++) {
        uint32_t l = c->path[k];
        if (c->failed_l[l])
            continue;
        nf++;
        if (c->held_l[l])
            nh++;
        else
            miss = l;
    }
    /* first pass (N0, no untouched variable): completed or blocked;
     * second pass (N1): only the sets with one untouched variable */
    if (c->untouched_only && miss == UINT32_MAX)
        return;
    if (c->n >= c->limit) {
        c->truncated = true;
        return;
    }
    lw_incident_set *s = lw_grow(c->sets, &c->cap, c->n + 1, sizeof *s);
    if (!s) {
        c->oom = 1;
        return;
    }
    c->sets = s;
    lw_incident_set *x = &s[c->n];
    memset(x, 0, sizeof *x);
    x->vars = lw_malloc((depth + 1) * sizeof *x->vars);
    if (!x->vars) {
        c->oom = 1;
        return;
    }
    c->n++;
    const lw_prepared *p = c->p;
    const uint32_t *lv = p->diagram->level_var;
    x->order = depth;
    x->probability = 1.0;
    for (size_t k = 0; k < depth; k++) {
        x->vars[k] = lv[c->path[k]];
        x->probability *= p->q[c->path[k]];
    }
    x->nheld = nh;
    x->cls = nf == 0 ? LW_INC_COMPLETED
                     : (nh == 0 ? LW_INC_ONE_AWAY : LW_INC_BLOCKED);
    x->missing = miss == UINT32_MAX ? UINT32_MAX : lv[miss];
    x->missing_p = miss == UINT32_MAX ? 0.0 : p->q[miss];
    x->missing_given = 0.0;     /* filled in later */
}

static void walk(collect *c, uint32_t n, size_t depth)
{
    while (!c->oom) {
        if (n == 0)
            return;
        if (n == 1) {
            take_set(c, depth);
            return;
        }
        c->path[depth] = lw_bdd_level(c->z, n);
        walk(c, lw_bdd_hi(c->z, n), depth + 1);
        n = lw_bdd_lo(c->z, n);
    }
}

static _Thread_local const lw_network *sort_net;

static int cmp_var_name(const void *a, const void *b)
{
    uint32_t x = *(const uint32_t *)a, y = *(const uint32_t *)b;
    return strcmp(sort_net->vars[x].name, sort_net->vars[y].name);
}

static int cmp_set(const void *a, const void *b)
{
    const lw_incident_set *x = a, *y = b;
    if (x->cls != y->cls)
        return x->cls < y->cls ? -1 : 1;
    if (x->probability != y->probability)
        return x->probability > y->probability ? -1 : 1;
    if (x->order != y->order)
        return x->order < y->order ? -1 : 1;
    for (size_t k = 0; k < x->order; k++) {
        int c = strcmp(sort_net->vars[x->vars[k]].name,
                       sort_net->vars[y->vars[k]].name);
        if (c)
            return c;
    }
    return 0;
}

static int cmp_stood(const void *a, const void *b)
{
    const lw_incident_stood *x = a, *y = b;
    if (x->held != y->held)
        return x->held ? -1 : 1;
    if (x->sets != y->sets)
        return x->sets > y->sets ? -1 : 1;
    return strcmp(sort_net->vars[x->var].name, sort_net->vars[y->var].name);
}

/* ---- events in the manager ------------------------------------------- */

/* The event as modelled, in the builder's manager.  An event that no
 * hazard uses has no gate in the network (nothing in any hazard depends on
 * it): it is independent of everything the BDD holds, so *out is TRUE and
 * *alone receives its probability; otherwise *alone = -1. */
static lw_status event_bdd(lw_prepared *p, size_t node, lw_bref *out,
                           double *alone, lw_error *err)
{
    const lw_network *net = p->net;
    if (net->event_gate[node] == LW_NO_GATE) {
        const lw_node *n = &p->model->nodes[node];
        *out = LW_BDD_TRUE;
        *alone = n->kind == LW_NODE_SAFEGUARD && !net->present[node]
                     ? 1.0 : net->dist[node].p;
        return LW_OK;
    }
    *alone = -1.0;
    return lw_builder_gate(p->builder, net->event_gate[node], out, err);
}

/* P(event) as modelled. */
static lw_status event_prob(lw_prepared *p, size_t node, double *out,
                            lw_error *err)
{
    lw_bref g;
    double alone;
    lw_status st = event_bdd(p, node, &g, &alone, err);
    if (st != LW_OK)
        return st;
    if (alone >= 0) {
        *out = alone;
        return LW_OK;
    }
    return bdd_prob(lw_builder_bdd(p->builder), g, p->q, out, err);
}

/* ---- explaining an impossible observation ---------------------------- */

static lw_status impossible(lw_prepared *p, const size_t *failed,
                            size_t nfailed, const size_t *held, size_t nheld,
                            lw_error *err)
{
    const lw_model *m = p->model;
    const lw_network *net = p->net;
    lw_bdd *b = lw_builder_bdd(p->builder);
    lw_status st = lw_error_set(err, LW_EMODEL, m->file, 0, "the observation "
                                "is impossible under the model (its "
                                "probability is 0), so nothing can be "
                                "conditioned on it");
    size_t reasons = 0;
    lw_error scratch = LW_ERROR_INIT;
    for (size_t i = 0; i < nfailed; i++) {
        double pr = 1;
        if (event_prob(p, failed[i], &pr, &scratch) != LW_OK)
            break;
        if (pr <= 0) {
            lw_error_set(err, LW_EMODEL, m->file, m->nodes[failed[i]].line,
                         "\"%s\" is listed as failed but cannot happen in "
                         "the model (probability 0)", m->nodes[failed[i]].id);
            reasons++;
        }
    }
    for (size_t j = 0; j < nheld; j++) {
        lw_bref g;
        double pr = 0, alone;
        if (event_bdd(p, held[j], &g, &alone, &scratch) != LW_OK ||
            event_prob(p, held[j], &pr, &scratch) != LW_OK)
            break;
        const lw_node *h = &m->nodes[held[j]];
        if (pr >= 1) {
            lw_error_set(err, LW_EMODEL, m->file, h->line, "\"%s\" is listed "
                         "as held but always misses in the model (%s), so it "
                         "cannot have held", h->id,
                         h->kind == LW_NODE_SAFEGUARD && !net->present[held[j]]
                             ? "an absent layer, present=\"no\""
                             : "probability 1");
            reasons++;
            continue;
        }
        if (alone >= 0)
            continue;       /* independent of every other event */
        for (size_t i = 0; i < nfailed; i++) {
            lw_bref f;
            double fa;
            if (event_bdd(p, failed[i], &f, &fa, &scratch) != LW_OK)
                break;
            if (fa >= 0)
                continue;
            lw_bref both = lw_bdd_and(b, f, lw_bdd_not(b, g));
            if (both == LW_BREF_INVALID ||
                bdd_prob(b, both, p->q, &pr, &scratch) != LW_OK)
                break;
            if (pr <= 0) {
                lw_error_set(err, LW_EMODEL, m->file, h->line, "when \"%s\" "
                             "misses, the model makes \"%s\" miss too "
                             "(complete dependence or a certain shared "
                             "cause), so \"%s\" cannot have held",
                             m->nodes[failed[i]].id, h->id, h->id);
                reasons++;
            }
        }
    }
    if (!reasons)
        lw_error_set(err, LW_EMODEL, m->file, 0, "no single event explains "
                     "it: the failed and held events cannot all be true "
                     "together under the model's logic");
    lw_error_clear(&scratch);
    return st;
}

/* ---- the question ---------------------------------------------------- */

static bool listed(const size_t *list, size_t n, size_t x)
{
    for (size_t i = 0; i < n; i++)
        if (list[i] == x)
            return true;
    return false;
}

/* Does variable v count as failed (docs/cli.md, incident)? */
static bool counts_failed(const lw_model *m, const lw_var *v,
                          const size_t *failed, size_t nfailed)
{
    if (v->node != LW_NONE)
        return listed(failed, nfailed, v->node);
    if (v->kind == LW_VAR_COMMON) {
        const lw_group *g = &m->groups[v->group];
        size_t c = 0;
        for (size_t k = 0; k < g->nmembers; k++)
            c += listed(failed, nfailed, g->members[k]);
        return c >= 2;
    }
    if (v->kind == LW_VAR_DEPENDS) {
        const lw_dependence *d = &m->deps[v->dep];
        return listed(failed, nfailed, d->first) &&
               listed(failed, nfailed, d->second);
    }
    return false;
}

/* Does synthetic variable v concern an event in 'failed'? */
static bool touches(const lw_model *m, const lw_var *v, const size_t *failed,
                    size_t nfailed)
{
    if (v->kind == LW_VAR_COMMON) {
        const lw_group *g = &m->groups[v->group];
        for (size_t k = 0; k < g->nmembers; k++)
            if (listed(failed, nfailed, g->members[k]))
                return true;
        return false;
    }
    if (v->kind == LW_VAR_DEPENDS) {
        const lw_dependence *d = &m->deps[v->dep];
        return listed(failed, nfailed, d->first) ||
               listed(failed, nfailed, d->second);
    }
    return false;
}

typedef struct work {
    lw_diagram *dobs, *djoint;
    double *w;
    double *post;           /* per level: P(v | obs), < 0 = not yet */
    unsigned char *failed_l, *held_l, *cheap;
    double *marg;           /* marginal of each failed event */
    double *alone;          /* per failed event: its p when no hazard uses
                               it, else -1 */
    lw_bref *fgate;         /* gate of each failed event */
    lw_bdd *z;
    uint32_t *path;
    size_t *stood_sets;     /* per model node */
    lw_bref obs;            /* the observation in the builder's manager
                               (events no hazard uses left out) */
    double p_obs;           /* its probability */
} work;

static void work_free(work *w)
{
    lw_diagram_free(w->dobs);
    lw_diagram_free(w->djoint);
    lw_free(w->w);
    lw_free(w->post);
    lw_free(w->failed_l);
    lw_free(w->held_l);
    lw_free(w->cheap);
    lw_free(w->marg);
    lw_free(w->alone);
    lw_free(w->fgate);
    lw_bdd_free(w->z);
    lw_free(w->path);
    lw_free(w->stood_sets);
}

static lw_status observation(lw_prepared *p, lw_incident *r, work *w,
                             lw_error *err)
{
    lw_bdd *b = lw_builder_bdd(p->builder);
    const uint32_t *lv = lw_builder_level_var(p->builder);
    lw_status st;
    lw_bref obs = LW_BDD_TRUE, misses = LW_BDD_TRUE;
    double fa = 1.0, ha = 1.0;  /* factors of events no hazard uses */
    for (size_t i = 0; i < r->nfailed; i++) {
        lw_bref g;
        st = event_bdd(p, r->failed[i], &g, &w->alone[i], err);
        if (st != LW_OK)
            return st;
        if (w->alone[i] >= 0)
            fa *= w->alone[i];
        w->fgate[i] = g;
        obs = lw_bdd_and(b, obs, g);
        if (obs == LW_BREF_INVALID)
            return bdd_failed(b, err);
    }
    misses = obs;
    for (size_t j = 0; j < r->nheld; j++) {
        lw_bref g;
        double alone;
        st = event_bdd(p, r->held[j], &g, &alone, err);
        if (st != LW_OK)
            return st;
        if (alone >= 0) {
            ha *= 1.0 - alone;
            continue;
        }
        obs = lw_bdd_and(b, obs, lw_bdd_not(b, g));
        if (obs == LW_BREF_INVALID)
            return bdd_failed(b, err);
    }
    w->obs = obs;
    lw_bref root;
    st = lw_prepared_root(p, &root, err);
    if (st != LW_OK)
        return st;
    lw_bref joint = lw_bdd_and(b, obs, root);
    if (joint == LW_BREF_INVALID)
        return bdd_failed(b, err);
    st = lw_diagram_freeze(b, obs, p->nlevels, lv, &w->dobs, err);
    if (st == LW_OK)
        st = lw_diagram_freeze(b, joint, p->nlevels, lv, &w->djoint, err);
    if (st != LW_OK)
        return st;
    uint32_t nmax = w->dobs->n > w->djoint->n ? w->dobs->n : w->djoint->n;
    w->w = lw_malloc(nmax * sizeof *w->w);
    w->post = lw_malloc((p->nlevels + 1) * sizeof *w->post);
    if (!w->w || !w->post)
        return lw_error_oom(err);
    for (uint32_t l = 0; l < p->nlevels; l++)
        w->post[l] = -1.0;
    r->p_joint = lw_diagram_prob(w->djoint, p->q, w->w) * fa * ha;
    w->p_obs = lw_diagram_prob(w->dobs, p->q, w->w);
    r->p_observation = w->p_obs * fa * ha;
    if (!(r->p_observation > 0))
        return impossible(p, r->failed, r->nfailed, r->held, r->nheld, err);
    r->conditional = r->p_joint / r->p_observation;
    if (r->conditional > 1)
        r->conditional = 1;     /* rounding */
    st = bdd_prob(b, misses, p->q, &r->misses_model, err);
    if (st != LW_OK)
        return st;
    r->misses_model *= fa;
    r->misses_independent = 1.0;
    for (size_t i = 0; i < r->nfailed; i++) {
        st = event_prob(p, r->failed[i], &w->marg[i], err);
        if (st != LW_OK)
            return st;
        r->misses_independent *= w->marg[i];
    }
    return LW_OK;
}

static lw_status strains(lw_prepared *p, lw_incident *r, work *w,
                         lw_error *err)
{
    const lw_model *m = p->model;
    lw_bdd *b = lw_builder_bdd(p->builder);
    size_t nsg = 0;
    for (size_t i = 0; i < r->nfailed; i++)
        nsg += m->nodes[r->failed[i]].kind == LW_NODE_SAFEGUARD;
    size_t cap = nsg + nsg * (nsg > 0 ? nsg - 1 : 0) / 2 + 1;
    r->strains = lw_calloc(cap, sizeof *r->strains);
    if (!r->strains)
        return lw_error_oom(err);
    for (size_t i = 0; i < r->nfailed; i++) {
        size_t a = r->failed[i];
        if (m->nodes[a].kind != LW_NODE_SAFEGUARD)
            continue;
        for (size_t j = i + 1; j < r->nfailed; j++) {
            size_t c = r->failed[j];
            if (m->nodes[c].kind != LW_NODE_SAFEGUARD)
                continue;
            /* a layer that always misses (absent) says nothing about
             * independence */
            if (!(w->marg[i] < 1) || !(w->marg[j] < 1))
                continue;
            lw_bref both = lw_bdd_and(b, w->fgate[i], w->fgate[j]);
            if (both == LW_BREF_INVALID)
                return bdd_failed(b, err);
            lw_incident_strain *s = &r->strains[r->nstrains++];
            s->kind = LW_STRAIN_PAIR;
            s->a = a;
            s->b = c;
            s->p_a = w->marg[i];
            s->p_b = w->marg[j];
            lw_status st = bdd_prob(b, both, p->q, &s->joint_model, err);
            if (st != LW_OK)
                return st;
            if (w->alone[i] >= 0)
                s->joint_model *= w->alone[i];
            if (w->alone[j] >= 0)
                s->joint_model *= w->alone[j];
            s->joint_independent = s->p_a * s->p_b;
            s->linked = s->joint_model >
                        s->joint_independent * (1 + 1e-9) + 1e-300;
        }
    }
    for (size_t i = 0; i < r->nfailed; i++) {
        size_t a = r->failed[i];
        if (m->nodes[a].kind != LW_NODE_SAFEGUARD ||
            !(w->marg[i] < LW_INCIDENT_SMALL_P))
            continue;
        lw_incident_strain *s = &r->strains[r->nstrains++];
        s->kind = LW_STRAIN_SMALL_P;
        s->a = a;
        s->b = LW_NONE;
        s->p_a = w->marg[i];
    }
    return LW_OK;
}

static lw_status links(lw_prepared *p, lw_incident *r, work *w,
                       lw_error *err)
{
    const lw_model *m = p->model;
    const lw_network *net = p->net;
    const uint32_t *vl = lw_builder_var_level(p->builder);
    r->links = lw_calloc(net->nvars + 1, sizeof *r->links);
    if (!r->links)
        return lw_error_oom(err);
    for (uint32_t v = 0; v < net->nvars; v++) {
        const lw_var *x = &net->vars[v];
        if (vl[v] == UINT32_MAX || !touches(m, x, r->failed, r->nfailed))
            continue;
        lw_incident_link *k = &r->links[r->nlinks++];
        k->var = v;
        k->prior = p->q[vl[v]];
        lw_status st = posterior(p, w->post, w->obs, w->p_obs,
                                 vl[v], &k->given, err);
        if (st != LW_OK)
            return st;
    }
    return LW_OK;
}

static lw_status near_sets(lw_prepared *p, lw_incident *r, work *w,
                           lw_error *err)
{
    const lw_model *m = p->model;
    const lw_network *net = p->net;
    const lw_diagram *d = p->diagram;
    uint32_t nl = p->nlevels;
    w->failed_l = lw_calloc(nl + 1, 1);
    w->held_l = lw_calloc(nl + 1, 1);
    w->cheap = lw_calloc(nl + 1, 1);
    w->path = lw_malloc((nl + 1) * sizeof *w->path);
    w->z = lw_zdd_new(nl, 0);
    if (!w->failed_l || !w->held_l || !w->cheap || !w->path || !w->z)
        return lw_error_oom(err);
    for (uint32_t l = 0; l < nl; l++) {
        const lw_var *v = &net->vars[d->level_var[l]];
        w->failed_l[l] = counts_failed(m, v, r->failed, r->nfailed);
        w->held_l[l] = v->node != LW_NONE &&
                       listed(r->held, r->nheld, v->node);
        w->cheap[l] = w->failed_l[l] || w->held_l[l];
    }
    uint32_t root0 = 0, root1 = 0;
    lw_status st = near_families(d, w->cheap, w->z, &root0, &root1, err);
    if (st != LW_OK)
        return st;
    /* N0 holds the sets made only of failed and held variables; the
     * completed ones are those without a held variable. */
    collect c;
    memset(&c, 0, sizeof c);
    c.z = w->z;
    c.p = p;
    c.failed_l = w->failed_l;
    c.held_l = w->held_l;
    c.path = w->path;
    c.limit = LW_INCIDENT_MAX_SETS;
    walk(&c, root0, 0);
    /* N1 repeats N0's sets: take from it only the sets with one untouched
     * variable (one_away when none is held, else blocked) */
    c.untouched_only = true;
    c.limit += c.n;
    if (!c.oom)
        walk(&c, root1, 0);
    if (c.oom) {
        sets_free(c.sets, c.n);
        return lw_error_oom(err);
    }
    r->truncated = c.truncated;
    for (size_t i = 0; i < c.n; i++) {
        lw_incident_set *x = &c.sets[i];
        if (x->missing == UINT32_MAX)
            continue;
        lw_status s2 = posterior(p, w->post, w->obs, w->p_obs,
                                 lw_builder_var_level(p->builder)[x->missing],
                                 &x->missing_given, err);
        if (s2 != LW_OK) {
            sets_free(c.sets, c.n);
            return s2;
        }
    }
    sort_net = net;
    for (size_t i = 0; i < c.n; i++) {
        lw_incident_set *s = &c.sets[i];
        if (s->order)
            qsort(s->vars, s->order, sizeof *s->vars, cmp_var_name);
        if (s->cls == LW_INC_COMPLETED)
            r->ncompleted++;
        else if (s->cls == LW_INC_ONE_AWAY)
            r->none_away++;
        else
            r->nblocked++;
    }
    if (c.n)
        qsort(c.sets, c.n, sizeof *c.sets, cmp_set);
    r->sets = c.sets;
    return LW_OK;
}

static lw_status stood(lw_prepared *p, lw_incident *r, work *w,
                       lw_error *err)
{
    const lw_model *m = p->model;
    const lw_network *net = p->net;
    lw_bdd *b = lw_builder_bdd(p->builder);
    const uint32_t *vl = lw_builder_var_level(p->builder);
    w->stood_sets = lw_calloc(m->nnodes + 1, sizeof *w->stood_sets);
    if (!w->stood_sets)
        return lw_error_oom(err);
    size_t nsets = r->ncompleted + r->none_away + r->nblocked;
    size_t count = 0;
    /* held safeguards of blocked sets; the untouched safeguard a one_away
     * set misses */
    for (size_t i = r->ncompleted; i < nsets; i++) {
        const lw_incident_set *s = &r->sets[i];
        for (size_t k = 0; k < s->order; k++) {
            const lw_var *v = &net->vars[s->vars[k]];
            uint32_t l = vl[s->vars[k]];
            if (v->kind != LW_VAR_SAFEGUARD || w->failed_l[l])
                continue;
            if (s->cls == LW_INC_BLOCKED ? !w->held_l[l]
                                         : s->vars[k] != s->missing)
                continue;
            if (w->stood_sets[v->node]++ == 0)
                count++;
        }
    }
    r->stood = lw_calloc(count + 1, sizeof *r->stood);
    if (!r->stood)
        return lw_error_oom(err);
    lw_bref obs = w->obs;
    for (size_t x = 0; x < m->nnodes; x++) {
        if (!w->stood_sets[x])
            continue;
        lw_incident_stood *s = &r->stood[r->nstood++];
        s->node = x;
        s->var = net->event_var[x];
        s->held = listed(r->held, r->nheld, x);
        s->sets = w->stood_sets[x];
        lw_bref g;
        double alone;
        lw_status st = event_bdd(p, x, &g, &alone, err);
        if (st != LW_OK)
            return st;
        st = bdd_prob(b, g, p->q, &s->p, err);
        if (st != LW_OK)
            return st;
        if (s->held) {
            s->given = 0.0;
            continue;
        }
        lw_bref both = lw_bdd_and(b, g, obs);
        if (both == LW_BREF_INVALID)
            return bdd_failed(b, err);
        double pj = 0;
        st = bdd_prob(b, both, p->q, &pj, err);
        if (st != LW_OK)
            return st;
        s->given = pj / w->p_obs;
        if (s->given > 1)
            s->given = 1;
    }
    sort_net = net;
    if (r->nstood)
        qsort(r->stood, r->nstood, sizeof *r->stood, cmp_stood);
    return LW_OK;
}

/* Copy a node list without repeats. */
static size_t *unique_copy(const size_t *in, size_t n, size_t *nout)
{
    size_t *o = lw_malloc((n + 1) * sizeof *o);
    size_t k = 0;
    if (!o)
        return NULL;
    for (size_t i = 0; i < n; i++)
        if (!listed(o, k, in[i]))
            o[k++] = in[i];
    *nout = k;
    return o;
}

static lw_status incident_here(lw_prepared *p, const size_t *failed,
                               size_t nfailed, const size_t *held,
                               size_t nheld, lw_incident **out,
                               lw_error *err)
{
    *out = NULL;
    const lw_model *m = p->model;
    for (size_t j = 0; j < nheld; j++)
        if (listed(failed, nfailed, held[j]))
            return lw_error_set(err, LW_EUSAGE, m->file, 0, "\"%s\" is "
                                "listed both as failed and as held; an "
                                "event either happened or it did not",
                                m->nodes[held[j]].id);
    lw_incident *r = lw_calloc(1, sizeof *r);
    if (!r)
        return lw_error_oom(err);
    work w;
    memset(&w, 0, sizeof w);
    lw_status st = LW_OK;
    r->hazard = p->hazard;
    r->variant = p->variant;
    r->net = p->net;
    r->prior = p->probability;
    r->failed = unique_copy(failed, nfailed, &r->nfailed);
    r->held = unique_copy(held, nheld, &r->nheld);
    r->in_hazard = lw_calloc(p->net->nvars + 1, 1);
    if (r->in_hazard) {
        const uint32_t *vl = lw_builder_var_level(p->builder);
        for (size_t v = 0; v < p->net->nvars; v++)
            r->in_hazard[v] = vl[v] < p->hazard_levels;
    }
    w.marg = lw_calloc(nfailed + 1, sizeof *w.marg);
    w.fgate = lw_calloc(nfailed + 1, sizeof *w.fgate);
    w.alone = lw_calloc(nfailed + 1, sizeof *w.alone);
    if (!r->failed || !r->held || !r->in_hazard || !w.marg || !w.fgate ||
        !w.alone) {
        st = lw_error_oom(err);
        goto fail;
    }
    st = observation(p, r, &w, err);
    if (st == LW_OK)
        st = strains(p, r, &w, err);
    if (st == LW_OK)
        st = links(p, r, &w, err);
    if (st == LW_OK)
        st = near_sets(p, r, &w, err);
    if (st == LW_OK)
        st = stood(p, r, &w, err);
    if (st != LW_OK)
        goto fail;
    work_free(&w);
    *out = r;
    return LW_OK;
fail:
    work_free(&w);
    lw_incident_free(r);
    return st;
}

/* The walks over diagrams recurse once per level: past LW_DEEP_LEVELS
 * levels the analysis runs on a thread with a large stack. */
typedef struct incident_job {
    lw_prepared *p;
    const size_t *failed, *held;
    size_t nfailed, nheld;
    lw_incident **out;
    lw_error *err;
    lw_status st;
} incident_job;

static void incident_run(void *arg)
{
    incident_job *j = arg;
    j->st = incident_here(j->p, j->failed, j->nfailed, j->held, j->nheld,
                          j->out, j->err);
}

lw_status lw_incident_prepared(lw_prepared *p, const size_t *failed,
                               size_t nfailed, const size_t *held,
                               size_t nheld, lw_incident **out,
                               lw_error *err)
{
    incident_job j = {p, failed, held, nfailed, nheld, out, err, LW_OK};
    lw_deep_call_past(p->nlevels, incident_run, &j);
    return j.st;
}

lw_status lw_incident_run(const lw_model *m, size_t variant, size_t hazard,
                          const char *const *failed, size_t nfailed,
                          const char *const *held, size_t nheld,
                          const lw_options *opt, lw_incident **out,
                          lw_error *err)
{
    *out = NULL;
    size_t *fn = lw_malloc((nfailed + 1) * sizeof *fn);
    size_t *hn = lw_malloc((nheld + 1) * sizeof *hn);
    lw_prepared *p = NULL;
    lw_status st = LW_OK;
    if (!fn || !hn) {
        st = lw_error_oom(err);
        goto done;
    }
    lw_status s1 = lw_incident_resolve(m, "--failed", failed, nfailed, fn,
                                       err);
    lw_status s2 = lw_incident_resolve(m, "--held", held, nheld, hn, err);
    st = s1 != LW_OK ? s1 : s2;
    if (st != LW_OK)
        goto done;
    st = lw_prepare(m, variant, hazard, opt, &p, err);
    if (st != LW_OK)
        goto done;
    st = lw_incident_prepared(p, fn, nfailed, hn, nheld, out, err);
    if (st != LW_OK) {
        lw_prepared_free(p);
        goto done;
    }
    (*out)->owned = p;
done:
    lw_free(fn);
    lw_free(hn);
    return st;
}
