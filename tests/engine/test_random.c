/*
 * test_random.c - randomly generated small models, each checked three
 * ways:
 *
 *   1. P(hazard) from lw_prepare equals tu_brute_prob on the compiled
 *      network (truth-table enumeration of its variables);
 *   2. it also equals an evaluator written here over the *model* (the
 *      lw_model node graph), which enumerates every user event plus one
 *      extra Bernoulli per common-cause group and per dependence, with the
 *      exact expansion of model-format.md ("How dependence is
 *      quantified") recomputed here from the generator's own parameters;
 *      this checks compile, not only the BDD;
 *   3. lw_analyze's minimal cut sets equal those found by brute force on
 *      the compiled network (every assignment, minimal true sets), with
 *      their count, probabilities, rare-event sum and min-cut upper bound
 *      (methods.md §1.4 formulas), and every importance measure equals
 *      its definition (cli.md "Definitions the checks hold you to",
 *      methods.md §2.2) computed by forcing the variable true / false in
 *      the enumeration; the identity q RAW + (1 - q)/RRW = 1 (methods.md
 *      §2.2 [D]) holds wherever RRW is defined.
 *
 * The models use 3-10 events, all / any / vote gates nested 1-3 deep,
 * shared events and gates via ref, blocks, conditions, absent safeguards,
 * audit counts, common-cause groups, THERP dependences and variants.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdbool.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "layerwise/analysis.h"
#include "testutil.h"

#define NMODELS 320
#define MAXEV 10
#define MAXCOND 3
#define MAXGROUP 2
#define MAXDEP 2
#define MAXNAMED 16

/* ---- generator ---------------------------------------------------------- */

typedef struct gevent {
    char id[16];
    int safeguard;          /* else error */
    double p;               /* as written (observed: Jeffreys mean) */
    int observed, count, of;
    int present;            /* as written */
    int in_place;           /* defined inside logic at first use */
    int defined;
    /* after the variant */
    double p_final;
    int present_final;
} gevent;

typedef struct gcond {
    char id[16];
    int state, state_final;
    int in_place, defined;
} gcond;

typedef struct gen {
    uint64_t rng;
    char *xml;
    size_t len, cap;
    int nev;
    gevent ev[MAXEV];
    int ncond;
    gcond cond[MAXCOND];
    int ngroups;
    int gmem[MAXGROUP][3], ngm[MAXGROUP];
    double beta[MAXGROUP], beta_final[MAXGROUP];
    int ndeps;
    int dfirst[MAXDEP], dsecond[MAXDEP], dlevel[MAXDEP], dlevel_final[MAXDEP];
    int dnamed[MAXDEP];
    int nhaz;
    int has_variant;
    char named[MAXNAMED][16];   /* completed named gates and blocks */
    int nnamed;
    int gate_counter;
} gen;

static uint32_t rnd(gen *g, uint32_t n)
{
    return (uint32_t)(tu_rand(&g->rng) % n);
}

static void emit(gen *g, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));

static void emit(gen *g, const char *fmt, ...)
{
    for (;;) {
        va_list ap;
        va_start(ap, fmt);
        int n = vsnprintf(g->xml + g->len, g->cap - g->len, fmt, ap);
        va_end(ap);
        assert_true(n >= 0);
        if (g->len + (size_t)n < g->cap) {
            g->len += (size_t)n;
            return;
        }
        g->cap *= 2;
        g->xml = realloc(g->xml, g->cap);
        assert_non_null(g->xml);
    }
}

static double rand_p(gen *g)
{
    switch (rnd(g, 8)) {
    case 0: return 0.0;
    case 1: return 1.0;
    case 2: return 0.5;
    case 3:
    case 4: return pow(10.0, -6.0 * tu_uniform(&g->rng));
    default: return tu_uniform(&g->rng);
    }
}

static void emit_event(gen *g, int i)
{
    gevent *e = &g->ev[i];
    const char *tag = e->safeguard ? "safeguard" : "error";
    emit(g, "<%s id=\"%s\"", tag, e->id);
    if (e->safeguard && !e->present)
        emit(g, " present=\"no\"");
    if (e->observed)
        emit(g, "><observed count=\"%d\" of=\"%d\"/></%s>", e->count, e->of,
             tag);
    else
        emit(g, " p=\"%.17g\"/>", e->p);
    e->defined = 1;
}

static void emit_cond(gen *g, int i)
{
    emit(g, "<condition id=\"%s\" state=\"%s\"/>", g->cond[i].id,
         g->cond[i].state ? "true" : "false");
    g->cond[i].defined = 1;
}

static void gen_leaf(gen *g)
{
    uint32_t r = rnd(g, 100);
    if (r < 10 && g->ncond > 0) {
        int c = (int)rnd(g, (uint32_t)g->ncond);
        if (!g->cond[c].defined)
            emit_cond(g, c);
        else
            emit(g, "<ref to=\"%s\"/>", g->cond[c].id);
        return;
    }
    if (r < 22 && g->nnamed > 0) {
        emit(g, "<ref to=\"%s\"/>", g->named[rnd(g, (uint32_t)g->nnamed)]);
        return;
    }
    int e = (int)rnd(g, (uint32_t)g->nev);
    if (!g->ev[e].defined)
        emit_event(g, e);
    else
        emit(g, "<ref to=\"%s\"/>", g->ev[e].id);
}

static void gen_logic(gen *g, int depth)
{
    if (depth <= 0) {
        gen_leaf(g);
        return;
    }
    uint32_t kind = rnd(g, 3);
    uint32_t n = 2 + rnd(g, 3);
    char id[16] = "";
    if (rnd(g, 4) == 0 && g->nnamed < MAXNAMED)
        snprintf(id, sizeof id, "g%d", g->gate_counter++);
    const char *tag = kind == 0 ? "all" : kind == 1 ? "any" : "vote";
    emit(g, "<%s", tag);
    if (id[0])
        emit(g, " id=\"%s\"", id);
    if (kind == 2)
        emit(g, " k=\"%u\"", 1 + rnd(g, n));
    emit(g, ">");
    for (uint32_t i = 0; i < n; i++) {
        if (depth > 1 && rnd(g, 100) < 40)
            gen_logic(g, depth - 1 - (int)rnd(g, (uint32_t)depth - 1));
        else
            gen_leaf(g);
    }
    emit(g, "</%s>", tag);
    if (id[0])
        memcpy(g->named[g->nnamed++], id, sizeof id);
}

/* Is 'a' reachable from 'b' by following dependence firsts? */
static int dep_reaches(const gen *g, int from, int to)
{
    for (int steps = 0; steps <= g->ndeps; steps++) {
        if (from == to)
            return 1;
        int next = -1;
        for (int d = 0; d < g->ndeps; d++)
            if (g->dsecond[d] == from)
                next = g->dfirst[d];
        if (next < 0)
            return 0;
        from = next;
    }
    return 1;
}

static int group_of(const gen *g, int e)
{
    for (int k = 0; k < g->ngroups; k++)
        for (int j = 0; j < g->ngm[k]; j++)
            if (g->gmem[k][j] == e)
                return k;
    return -1;
}

static int second_of(const gen *g, int e)
{
    for (int d = 0; d < g->ndeps; d++)
        if (g->dsecond[d] == e)
            return d;
    return -1;
}

static const char *const level_names[5] = {"zero", "low", "moderate", "high",
                                           "complete"};

static void generate(gen *g, uint64_t seed)
{
    memset(g, 0, sizeof *g);
    g->rng = seed * 0x2545F4914F6CDD1Dull + 7;
    g->cap = 8192;
    g->xml = malloc(g->cap);
    assert_non_null(g->xml);
    g->nev = 3 + (int)rnd(g, MAXEV - 2);
    for (int i = 0; i < g->nev; i++) {
        gevent *e = &g->ev[i];
        /* names whose sort order differs from their number */
        static const char *const stem[4] = {"tube", "Scan", "nurse", "lab"};
        snprintf(e->id, sizeof e->id, "%s-%d", stem[rnd(g, 4)], i);
        e->safeguard = rnd(g, 3) != 0;
        e->present = !(e->safeguard && rnd(g, 8) == 0);
        if (rnd(g, 6) == 0) {
            e->observed = 1;
            e->of = 1 + (int)rnd(g, 500);
            e->count = (int)rnd(g, (uint32_t)e->of + 1);
            e->p = (e->count + 0.5) / (e->of + 1.0); /* Jeffreys mean,
                                                       model-format.md */
        } else {
            e->p = rand_p(g);
        }
        e->in_place = rnd(g, 2) == 0;
    }
    g->ncond = (int)rnd(g, MAXCOND + 1);
    for (int i = 0; i < g->ncond; i++) {
        snprintf(g->cond[i].id, sizeof g->cond[i].id, "cond%d", i);
        g->cond[i].state = (int)rnd(g, 2);
        g->cond[i].in_place = rnd(g, 2) == 0;
    }
    /* common-cause groups: 2-3 members, an event in one group at most */
    if (rnd(g, 3) == 0) {
        int want = 1 + (int)rnd(g, MAXGROUP);
        for (int k = 0; k < want; k++) {
            int nm = 2 + (int)rnd(g, 2), got = 0;
            for (int tries = 0; tries < 30 && got < nm; tries++) {
                int e = (int)rnd(g, (uint32_t)g->nev), dup = 0;
                if (group_of(g, e) >= 0)
                    dup = 1;
                for (int j = 0; j < got; j++)
                    dup |= g->gmem[g->ngroups][j] == e;
                if (!dup)
                    g->gmem[g->ngroups][got++] = e;
            }
            if (got < 2)
                break;
            g->ngm[g->ngroups] = got;
            g->beta[g->ngroups] = rnd(g, 5) == 0 ? 1.0 : tu_uniform(&g->rng);
            g->ngroups++;
        }
    }
    /* dependences: a second is no group member and has one first; no
     * loops */
    if (rnd(g, 3) == 0) {
        int want = 1 + (int)rnd(g, MAXDEP);
        for (int tries = 0; tries < 40 && g->ndeps < want; tries++) {
            int a = (int)rnd(g, (uint32_t)g->nev);
            int b = (int)rnd(g, (uint32_t)g->nev);
            if (a == b || group_of(g, b) >= 0 || second_of(g, b) >= 0 ||
                dep_reaches(g, a, b))
                continue;
            g->dfirst[g->ndeps] = a;
            g->dsecond[g->ndeps] = b;
            g->dlevel[g->ndeps] = (int)rnd(g, 5);
            g->dnamed[g->ndeps] = rnd(g, 3) != 0;
            g->ndeps++;
        }
    }
    /* final parameters start as written */
    for (int i = 0; i < g->nev; i++) {
        g->ev[i].p_final = g->ev[i].p;
        g->ev[i].present_final = g->ev[i].present;
    }
    for (int i = 0; i < g->ncond; i++)
        g->cond[i].state_final = g->cond[i].state;
    for (int k = 0; k < g->ngroups; k++)
        g->beta_final[k] = g->beta[k];
    for (int d = 0; d < g->ndeps; d++)
        g->dlevel_final[d] = g->dlevel[d];

    emit(g, "<?xml version=\"1.0\"?>\n<safety-model format=\"1\" "
            "id=\"random-%llu\">\n", (unsigned long long)seed);
    for (int i = 0; i < g->nev; i++)
        if (!g->ev[i].in_place)
            emit_event(g, i);
    for (int i = 0; i < g->ncond; i++)
        if (!g->cond[i].in_place)
            emit_cond(g, i);
    if (rnd(g, 3) == 0) {
        emit(g, "\n<block id=\"blk\">");
        gen_logic(g, 1 + (int)rnd(g, 2));
        emit(g, "</block>");
        memcpy(g->named[g->nnamed++], "blk", 4);
    }
    g->nhaz = 1 + (int)rnd(g, 2);
    for (int h = 0; h < g->nhaz; h++) {
        emit(g, "\n<hazard id=\"haz%d\">", h);
        if (rnd(g, 20) == 0)
            gen_leaf(g);
        else
            gen_logic(g, 1 + (int)rnd(g, 3));
        emit(g, "</hazard>");
    }
    emit(g, "\n");
    for (int i = 0; i < g->nev; i++)
        if (!g->ev[i].defined)
            emit_event(g, i);
    for (int i = 0; i < g->ncond; i++)
        if (!g->cond[i].defined)
            emit_cond(g, i);
    for (int k = 0; k < g->ngroups; k++) {
        emit(g, "\n<common-cause id=\"grp%d\" beta=\"%.17g\" members=\"", k,
             g->beta[k]);
        for (int j = 0; j < g->ngm[k]; j++)
            emit(g, "%s%s", j ? " " : "", g->ev[g->gmem[k][j]].id);
        emit(g, "\"/>");
    }
    for (int d = 0; d < g->ndeps; d++) {
        emit(g, "\n<dependence");
        if (g->dnamed[d])
            emit(g, " id=\"dep%d\"", d);
        emit(g, " first=\"%s\" second=\"%s\" level=\"%s\"/>",
             g->ev[g->dfirst[d]].id, g->ev[g->dsecond[d]].id,
             level_names[g->dlevel[d]]);
    }
    /* a variant, applied to the analysis when present */
    if (rnd(g, 3) == 0) {
        g->has_variant = 1;
        emit(g, "\n<variant id=\"change\">");
        int nsets = 1 + (int)rnd(g, 3);
        int used_ev[MAXEV] = {0}, used_c[MAXCOND] = {0};
        int used_g[MAXGROUP] = {0}, used_d[MAXDEP] = {0};
        for (int s = 0; s < nsets; s++) {
            uint32_t what = rnd(g, 5);
            if (what == 0 || what == 1) {
                int e = (int)rnd(g, (uint32_t)g->nev);
                gevent *ev = &g->ev[e];
                if (used_ev[e])
                    continue;
                if (what == 1 && ev->safeguard) {
                    used_ev[e] = 1;
                    ev->present_final = (int)rnd(g, 2);
                    emit(g, "<set ref=\"%s\" present=\"%s\"/>", ev->id,
                         ev->present_final ? "yes" : "no");
                } else if (!ev->observed) {
                    used_ev[e] = 1;
                    ev->p_final = rand_p(g);
                    emit(g, "<set ref=\"%s\" p=\"%.17g\"/>", ev->id,
                         ev->p_final);
                }
            } else if (what == 2 && g->ncond) {
                int c = (int)rnd(g, (uint32_t)g->ncond);
                if (used_c[c])
                    continue;
                used_c[c] = 1;
                g->cond[c].state_final = !g->cond[c].state;
                emit(g, "<set ref=\"%s\" state=\"%s\"/>", g->cond[c].id,
                     g->cond[c].state_final ? "true" : "false");
            } else if (what == 3 && g->ngroups) {
                int k = (int)rnd(g, (uint32_t)g->ngroups);
                if (used_g[k])
                    continue;
                used_g[k] = 1;
                g->beta_final[k] = tu_uniform(&g->rng);
                emit(g, "<set ref=\"grp%d\" beta=\"%.17g\"/>", k,
                     g->beta_final[k]);
            } else if (what == 4 && g->ndeps) {
                int d = (int)rnd(g, (uint32_t)g->ndeps);
                if (used_d[d] || !g->dnamed[d])
                    continue;
                used_d[d] = 1;
                g->dlevel_final[d] = (int)rnd(g, 5);
                emit(g, "<set ref=\"dep%d\" level=\"%s\"/>", d,
                     level_names[g->dlevel_final[d]]);
            }
        }
        emit(g, "</variant>");
    }
    emit(g, "\n</safety-model>\n");
}

/* ---- the expansion of model-format.md, recomputed here ---------------- */

/* THERP weights (NUREG/CR-1278 ch. 10; methods.md §3.2 [C]). */
static const double weight[5] = {0.0, 1.0 / 20, 1.0 / 7, 0.5, 1.0};

static double event_p(const gen *g, int e)
{
    const gevent *ev = &g->ev[e];
    return ev->safeguard && !ev->present_final ? 1.0 : ev->p_final;
}

static double group_q(const gen *g, int k)
{
    double mn = 1.0;
    for (int j = 0; j < g->ngm[k]; j++)
        mn = fmin(mn, event_p(g, g->gmem[k][j]));
    return g->beta_final[k] * mn;
}

/* Probability of the independent Bernoulli of user event e. */
static double part_p(const gen *g, int e)
{
    double p = event_p(g, e);
    int k = group_of(g, e), d = second_of(g, e);
    if (k >= 0) {
        double q = group_q(g, k);
        if (q >= 1.0)
            return 0.0;     /* the member is certain through the group */
        return fmax(0.0, (p - q) / (1.0 - q));
    }
    if (d >= 0)     /* model-format.md: an absent layer misses with certainty */
        return p >= 1.0 ? 1.0 : p * (1.0 - weight[g->dlevel_final[d]]);
    return p;
}

static double dep_p(const gen *g, int d)
{
    double p = event_p(g, g->dsecond[d]);
    double w = weight[g->dlevel_final[d]];
    double i = p * (1.0 - w), c = p + w * (1.0 - p);
    return i >= 1.0 ? 0.0 : (c - i) / (1.0 - i);
}

/* ---- evaluator over the model ---------------------------------------- */

typedef struct meval {
    const lw_model *m;
    const gen *g;
    int *gen_of;            /* model node -> generator event, or -1 */
    int *cond_of;           /* model node -> generator condition, or -1 */
    int *group_bit, *dep_bit;   /* per model group / dependence */
    int *first_node_dep;    /* model node -> model dependence it is second
                               of, or -1 */
    int *group_node;        /* model node -> model group, or -1 */
    signed char *val;       /* per model node, -1 = not yet */
    uint64_t x;
} meval;

static int ev_val(meval *c, size_t ni)
{
    if (c->val[ni] >= 0)
        return c->val[ni];
    int v = (int)((c->x >> c->gen_of[ni]) & 1u);
    if (c->group_node[ni] >= 0)
        v |= (int)((c->x >> c->group_bit[c->group_node[ni]]) & 1u);
    int d = c->first_node_dep[ni];
    if (d >= 0 && ((c->x >> c->dep_bit[d]) & 1u))
        v |= ev_val(c, c->m->deps[d].first);
    c->val[ni] = (signed char)v;
    return v;
}

static int node_val(meval *c, size_t ni)
{
    const lw_node *n = &c->m->nodes[ni];
    switch (n->kind) {
    case LW_NODE_ERROR:
    case LW_NODE_SAFEGUARD:
        return ev_val(c, ni);
    case LW_NODE_CONDITION:
        return c->g->cond[c->cond_of[ni]].state_final;
    case LW_NODE_BLOCK:
    case LW_NODE_HAZARD:
        return node_val(c, n->in[0]);
    case LW_NODE_ALL:
        for (size_t i = 0; i < n->nin; i++)
            if (!node_val(c, n->in[i]))
                return 0;
        return 1;
    case LW_NODE_ANY:
        for (size_t i = 0; i < n->nin; i++)
            if (node_val(c, n->in[i]))
                return 1;
        return 0;
    case LW_NODE_VOTE: {
        int cnt = 0;
        for (size_t i = 0; i < n->nin; i++)
            cnt += node_val(c, n->in[i]);
        return cnt >= n->k;
    }
    }
    fail_msg("unexpected node kind");
    return 0;
}

/* Weights of every assignment of n independent bits: w[x] = prod over
 * bits of q or 1 - q. */
static void weights(const double *q, int n, double *w)
{
    w[0] = 1.0;
    for (int u = 0; u < n; u++) {
        uint64_t half = 1ull << u;
        for (uint64_t x = 0; x < half; x++) {
            w[x | half] = w[x] * q[u];
            w[x] *= 1.0 - q[u];
        }
    }
}

/* P(hazard h) by enumerating the model's events and extra Bernoullis. */
static double model_eval(const lw_model *m, const gen *g, size_t h)
{
    meval c;
    memset(&c, 0, sizeof c);
    c.m = m;
    c.g = g;
    size_t nn = m->nnodes;
    c.gen_of = calloc(nn, sizeof *c.gen_of);
    c.cond_of = calloc(nn, sizeof *c.cond_of);
    c.first_node_dep = calloc(nn, sizeof *c.first_node_dep);
    c.group_node = calloc(nn, sizeof *c.group_node);
    c.val = calloc(nn, 1);
    c.group_bit = calloc(m->ngroups + 1, sizeof *c.group_bit);
    c.dep_bit = calloc(m->ndeps + 1, sizeof *c.dep_bit);
    assert_true(c.gen_of && c.cond_of && c.first_node_dep && c.group_node &&
                c.val && c.group_bit && c.dep_bit);
    for (size_t i = 0; i < nn; i++) {
        c.gen_of[i] = c.cond_of[i] = -1;
        c.first_node_dep[i] = c.group_node[i] = -1;
        const lw_node *n = &m->nodes[i];
        if (n->kind == LW_NODE_ERROR || n->kind == LW_NODE_SAFEGUARD) {
            for (int e = 0; e < g->nev; e++)
                if (strcmp(g->ev[e].id, n->id) == 0)
                    c.gen_of[i] = e;
            assert_true(c.gen_of[i] >= 0);
        } else if (n->kind == LW_NODE_CONDITION) {
            for (int k = 0; k < g->ncond; k++)
                if (strcmp(g->cond[k].id, n->id) == 0)
                    c.cond_of[i] = k;
            assert_true(c.cond_of[i] >= 0);
        }
    }
    int nbits = g->nev;
    double q[MAXEV + MAXGROUP + MAXDEP];
    for (int e = 0; e < g->nev; e++)
        q[e] = part_p(g, e);
    /* the model's groups and dependences are the generator's, in order */
    assert_int_equal(m->ngroups, (size_t)g->ngroups);
    assert_int_equal(m->ndeps, (size_t)g->ndeps);
    for (size_t k = 0; k < m->ngroups; k++) {
        assert_int_equal(m->groups[k].nmembers, (size_t)g->ngm[k]);
        for (size_t j = 0; j < m->groups[k].nmembers; j++) {
            size_t ni = m->groups[k].members[j];
            c.group_node[ni] = (int)k;
        }
        c.group_bit[k] = nbits;
        q[nbits++] = group_q(g, (int)k);
    }
    for (size_t d = 0; d < m->ndeps; d++) {
        c.first_node_dep[m->deps[d].second] = (int)d;
        assert_int_equal(c.gen_of[m->deps[d].second], g->dsecond[d]);
        assert_int_equal(c.gen_of[m->deps[d].first], g->dfirst[d]);
        c.dep_bit[d] = nbits;
        q[nbits++] = dep_p(g, (int)d);
    }
    double *w = malloc(sizeof(double) << nbits);
    assert_non_null(w);
    weights(q, nbits, w);
    double total = 0.0;
    for (uint64_t x = 0; x < (1ull << nbits); x++) {
        c.x = x;
        memset(c.val, 0xff, nn);
        if (node_val(&c, m->hazards[h]))
            total += w[x];
    }
    free(w);
    free(c.gen_of);
    free(c.cond_of);
    free(c.first_node_dep);
    free(c.group_node);
    free(c.val);
    free(c.group_bit);
    free(c.dep_bit);
    return total;
}

/* ---- brute force on the compiled network ------------------------------ */

static double table_prob(const unsigned char *tt, const double *q, int n,
                         double *w)
{
    weights(q, n, w);
    double total = 0.0;
    for (uint64_t x = 0; x < (1ull << n); x++)
        if (tt[x])
            total += w[x];
    return total;
}

/* LW_RANDOM_SOFT=1 reports mismatches and carries on (diagnosis). */
static int soft_failures;

static void mismatch(const char *fmt, ...)
    __attribute__((format(printf, 1, 2)));

static void mismatch(const char *fmt, ...)
{
    char buf[512];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(buf, sizeof buf, fmt, ap);
    va_end(ap);
    if (getenv("LW_RANDOM_SOFT")) {
        fprintf(stderr, "%s\n", buf);
        soft_failures++;
        return;
    }
    fail_msg("%s", buf);
}

/* Both within 'rel' of each other, or within 'abs_tol' absolutely. */
static void check_close(const char *what, const char *name, double got,
                        double want, double rel, double abs_tol,
                        uint64_t seed)
{
    double d = fabs(got - want);
    if (d <= abs_tol || d <= rel * fmax(fabs(got), fabs(want)))
        return;
    mismatch("model %llu, %s of %s = %.17g, expected %.17g",
             (unsigned long long)seed, what, name, got, want);
}

typedef struct bset {
    char key[256];          /* names sorted by strcmp, space separated */
    double p;
} bset;

static int cmp_str(const void *a, const void *b)
{
    return strcmp(*(const char *const *)a, *(const char *const *)b);
}

static int cmp_bset(const void *a, const void *b)
{
    return strcmp(((const bset *)a)->key, ((const bset *)b)->key);
}

static void set_key(const lw_network *net, const uint32_t *vars, size_t n,
                    char *key, size_t cap)
{
    const char *names[32];
    assert_true(n <= 32);
    for (size_t i = 0; i < n; i++)
        names[i] = net->vars[vars[i]].name;
    qsort(names, n, sizeof *names, cmp_str);
    size_t len = 0;
    key[0] = 0;
    for (size_t i = 0; i < n; i++)
        len += (size_t)snprintf(key + len, cap - len, "%s%s", i ? " " : "",
                                names[i]);
    assert_true(len < cap);
}

typedef struct stats {
    int models, hazards, groups, deps, variants, conds, absent, observed;
    int constant, rrw_null, rrw_tiny, cut_sets, max_vars, ring;
} stats;

static void check_hazard(const lw_model *m, const gen *g, size_t h,
                         uint64_t seed, stats *st)
{
    size_t variant = g->has_variant ? 0 : LW_NONE;
    lw_error err = LW_ERROR_INIT;
    lw_prepared *p = NULL;
    if (lw_prepare(m, variant, h, NULL, &p, &err) != LW_OK)
        fail_msg("model %llu: prepare failed", (unsigned long long)seed);
    const lw_network *net = p->net;
    int n = (int)net->nvars;
    assert_true(n <= 16);
    if (n > st->max_vars)
        st->max_vars = n;
    uint32_t hg = net->hazard_gate[h];
    if (hg <= 1)
        st->constant++;

    /* variable probabilities: the expansion recomputed here */
    double var_p[32];
    for (int v = 0; v < n; v++) {
        const lw_var *x = &net->vars[v];
        double want;
        if (x->kind == LW_VAR_COMMON) {
            want = group_q(g, (int)x->group);
        } else if (x->kind == LW_VAR_DEPENDS) {
            want = dep_p(g, (int)x->dep);
            if (g->dnamed[x->dep]) {
                char nm[32];
                snprintf(nm, sizeof nm, "depends:dep%zu", x->dep);
                assert_string_equal(x->name, nm);
            }
        } else {
            int e = -1;
            for (int k = 0; k < g->nev; k++)
                if (strcmp(g->ev[k].id, x->name) == 0)
                    e = k;
            assert_true(e >= 0);
            want = part_p(g, e);
        }
        check_close("variable p", x->name, x->p, want, 1e-13, 0, seed);
        var_p[v] = x->p;
    }

    /* 0. the diagram built by modules equals the one built gate by gate
     * with AND and OR in one manager */
    {
        lw_bref r;
        lw_diagram *plain = NULL;
        char what[64];
        snprintf(what, sizeof what, "model %llu", (unsigned long long)seed);
        assert_int_equal(lw_builder_gate(p->builder, hg, &r, &err), LW_OK);
        assert_int_equal(lw_diagram_freeze(lw_builder_bdd(p->builder), r,
                                           p->nlevels,
                                           lw_builder_level_var(p->builder),
                                           &plain, &err), LW_OK);
        tu_same_diagram(plain, p->diagram, what);
        lw_diagram_free(plain);
    }

    /* 1. the BDD against the network's truth table */
    double P = p->probability;
    double brute = tu_brute_prob(net, hg, var_p);
    check_close("P vs tu_brute_prob", "hazard", P, brute, 1e-12, 0, seed);
    /* 2. against the model evaluator (does not use lw_compile) */
    double direct = model_eval(m, g, h);
    check_close("P vs model evaluator", "hazard", P, direct, 1e-12, 0, seed);

    /* 3. cut sets and importance */
    lw_analysis *a = NULL;
    if (lw_analyze_prepared(p, NULL, &a, &err) != LW_OK)
        fail_msg("model %llu: analyze failed", (unsigned long long)seed);
    assert_true(a->probability == P);
    size_t nx = (size_t)1 << n;
    unsigned char *tt = malloc(nx);
    double *w = malloc(nx * sizeof *w);
    assert_true(tt && w);
    for (uint64_t x = 0; x < nx; x++)
        tt[x] = (unsigned char)tu_eval(net, hg, x);
    /* minimal true sets (the network is monotone) */
    bset *bs = NULL;
    size_t nbs = 0;
    for (uint64_t x = 0; x < nx; x++) {
        if (!tt[x])
            continue;
        int minimal = 1;
        for (int b = 0; b < n && minimal; b++)
            if (((x >> b) & 1u) && tt[x & ~(1ull << b)])
                minimal = 0;
        if (!minimal)
            continue;
        bs = realloc(bs, (nbs + 1) * sizeof *bs);
        assert_non_null(bs);
        uint32_t vars[32];
        size_t k = 0;
        double pr = 1.0;
        for (int b = 0; b < n; b++)
            if ((x >> b) & 1u) {
                vars[k++] = (uint32_t)b;
                pr *= var_p[b];
            }
        set_key(net, vars, k, bs[nbs].key, sizeof bs[nbs].key);
        bs[nbs].p = pr;
        nbs++;
    }
    st->cut_sets += (int)nbs;
    if (a->cut_set_count != (double)nbs)
        fail_msg("model %llu: cut_set_count %g, brute force %zu",
                 (unsigned long long)seed, a->cut_set_count, nbs);
    assert_int_equal(a->ncut_sets, nbs);
    assert_false(a->truncated);
    assert_true(a->mcub_exact);
    double rea = 0.0, mcub = 0.0, surv = 1.0, covered = 0.0;
    if (nbs)
        qsort(bs, nbs, sizeof *bs, cmp_bset);
    for (size_t i = 0; i < nbs; i++) {
        rea += bs[i].p;
        mcub += surv * bs[i].p;         /* 1 - prod(1 - p), positive terms */
        surv *= 1.0 - bs[i].p;
    }
    bset *ls = calloc(nbs + 1, sizeof *ls);
    assert_non_null(ls);
    for (size_t i = 0; i < a->ncut_sets; i++) {
        const lw_cut_set *c = &a->cut_sets[i];
        /* ids sorted inside a set */
        for (size_t k = 1; k < c->order; k++)
            assert_true(strcmp(net->vars[c->vars[k - 1]].name,
                               net->vars[c->vars[k]].name) < 0);
        /* sorted by probability, highest first */
        if (i > 0 && c->probability >
                         a->cut_sets[i - 1].probability * (1 + 1e-12))
            fail_msg("model %llu: cut sets out of order at %zu",
                     (unsigned long long)seed, i);
        set_key(net, c->vars, c->order, ls[i].key, sizeof ls[i].key);
        ls[i].p = c->probability;
        covered += c->probability;
        if (rea > 0)
            check_close("share", ls[i].key, c->share, c->probability / rea,
                        1e-12, 0, seed);
    }
    qsort(ls, a->ncut_sets, sizeof *ls, cmp_bset);
    for (size_t i = 0; i < nbs; i++) {
        if (strcmp(ls[i].key, bs[i].key) != 0)
            fail_msg("model %llu: cut set {%s}, brute force {%s}",
                     (unsigned long long)seed, ls[i].key, bs[i].key);
        check_close("cut set probability", bs[i].key, ls[i].p, bs[i].p,
                    1e-12, 0, seed);
    }
    check_close("rare_event", "hazard", a->rare_event, rea, 1e-12, 0, seed);
    char what[64];
    snprintf(what, sizeof what, "model %llu", (unsigned long long)seed);
    tu_same_family_both_ways(p, what);
    check_close("min_cut_upper_bound", "hazard", a->min_cut_upper_bound,
                mcub, 1e-12, 0, seed);
    check_close("covered", "hazard", a->covered, rea, 1e-12, 0, seed);

    /* importance: one row per variable the hazard reaches */
    unsigned char reach[32] = {0}, *gseen = calloc(net->ngates + 1, 1);
    uint32_t *stack = malloc((net->ngates + 1) * sizeof *stack);
    assert_true(gseen && stack);
    size_t sp = 0;
    stack[sp++] = hg;
    gseen[hg] = 1;
    while (sp) {
        const lw_gate *gt = &net->gates[stack[--sp]];
        if (gt->kind == LW_GATE_VAR)
            reach[gt->var] = 1;
        for (uint32_t i = 0; i < gt->nin; i++) {
            uint32_t c = net->inputs[gt->first + i];
            if (!gseen[c]) {
                gseen[c] = 1;
                stack[sp++] = c;
            }
        }
    }
    free(gseen);
    free(stack);
    size_t nreach = 0;
    for (int v = 0; v < n; v++)
        nreach += reach[v];
    assert_int_equal(a->nimportance, nreach);
    unsigned char row_seen[32] = {0};
    double q[32];
    for (size_t r = 0; r < a->nimportance; r++) {
        const lw_importance *im = &a->importance[r];
        uint32_t v = im->var;
        assert_true(v < (uint32_t)n && reach[v] && !row_seen[v]);
        row_seen[v] = 1;
        const char *name = net->vars[v].name;
        if (r > 0)
            assert_true(a->importance[r - 1].birnbaum >= im->birnbaum);
        memcpy(q, var_p, sizeof(double) * (size_t)n);
        q[v] = 1.0;
        double p1 = table_prob(tt, q, n, w);
        q[v] = 0.0;
        double p0 = table_prob(tt, q, n, w);
        double qv = var_p[v];
        assert_true(im->p == qv);
        double scale = fmax(p1, P);
        double B = p1 - p0;
        check_close("birnbaum", name, im->birnbaum, B, 1e-9, 1e-13 * scale,
                    seed);
        check_close("p_true", name, im->p_true, p1, 1e-9, 1e-13 * scale,
                    seed);
        check_close("p_false", name, im->p_false, p0, 1e-9, 1e-13 * scale,
                    seed);
        if (P > 0) {
            check_close("criticality", name, im->criticality, B * qv / P,
                        1e-9, 1e-12, seed);
            check_close("raw", name, im->raw, p1 / P, 1e-9, 0, seed);
        }
        /* FV: sum P(cut sets holding v) / sum P(all), cli.md */
        double fvs = 0.0;
        for (size_t i = 0; i < nbs; i++) {
            char pat[40];
            snprintf(pat, sizeof pat, " %s ", name);
            char padded[260];
            snprintf(padded, sizeof padded, " %s ", bs[i].key);
            if (strstr(padded, pat))
                fvs += bs[i].p;
        }
        double fv = rea > 0 ? fvs / rea : 0.0;
        check_close("fussell_vesely", name, im->fussell_vesely, fv, 1e-9,
                    1e-12, seed);
        if (p0 == 0.0) {
            st->rrw_null++;
            if (im->rrw_defined)
                mismatch("model %llu: RRW of %s is %.17g (p_false %.17g) "
                         "but P(hazard | %s false) = 0 exactly: it must be "
                         "null", (unsigned long long)seed, name, im->rrw,
                         im->p_false, name);
        } else if (p0 < 1e-12 * P) {
            /* below the rounding of P itself, P - q B cannot resolve it;
             * analyze.c reports it as zero (null RRW) */
            st->rrw_tiny++;
            if (im->rrw_defined)
                mismatch("model %llu: RRW of %s is %.17g for P(hazard | %s "
                         "false) = %.17g, below 1e-12 P: expected null",
                         (unsigned long long)seed, name, im->rrw, name, p0);
        } else {
            if (!im->rrw_defined)
                mismatch("model %llu: RRW of %s undefined, expected "
                         "%.17g", (unsigned long long)seed, name, P / p0);
            check_close("rrw", name, im->rrw, P / p0, 1e-9, 0, seed);
            /* q RAW + (1 - q)/RRW = 1 (methods.md §2.2 [D]) */
            if (P > 0)
                check_close("q RAW + (1-q)/RRW", name,
                            qv * im->raw + (1 - qv) / im->rrw, 1.0, 1e-9, 0,
                            seed);
        }
    }
    free(ls);
    free(bs);
    free(tt);
    free(w);
    lw_analysis_free(a);
    lw_prepared_free(p);
    lw_error_clear(&err);
}

static void test_random_models(void **state)
{
    (void)state;
    stats st;
    memset(&st, 0, sizeof st);
    for (uint64_t seed = 1; seed <= NMODELS; seed++) {
        gen g;
        generate(&g, seed);
        lw_error err = LW_ERROR_INIT;
        lw_model *m = NULL;
        if (lw_model_load_memory(g.xml, g.len, "random.xml", NULL, &m,
                                 &err) != LW_OK) {
            for (size_t i = 0; i < err.count; i++)
                fprintf(stderr, "line %ld: %s\n", err.items[i].line,
                        err.items[i].message);
            fprintf(stderr, "%s", g.xml);
            fail_msg("model %llu did not load", (unsigned long long)seed);
        }
        lw_error_clear(&err);
        st.models++;
        st.groups += g.ngroups > 0;
        st.deps += g.ndeps > 0;
        st.variants += g.has_variant;
        st.conds += g.ncond > 0;
        for (int i = 0; i < g.nev; i++) {
            st.absent += !g.ev[i].present_final && g.ev[i].safeguard;
            st.observed += g.ev[i].observed;
        }
        for (size_t h = 0; h < m->nhazards; h++) {
            if (getenv("LW_RANDOM_SHOW"))
                fprintf(stderr, "---- model %llu hazard %zu\n%s",
                        (unsigned long long)seed, h, g.xml);
            /* every other model: Birnbaum with reach values in a ring
             * (engine/bdd.c), whatever the diagram's size */
            lw_diagram_ring_for_tests(seed % 2);
            check_hazard(m, &g, h, seed, &st);
            st.ring += lw_diagram_ring_for_tests(0);
            st.hazards++;
        }
        lw_model_free(m);
        free(g.xml);
    }
    print_message("%d models, %d hazards (%d constant); with groups %d, "
                  "dependences %d, variants %d, conditions %d; absent "
                  "safeguards %d, observed events %d; %d cut sets; %d null "
                  "RRW (%d below 1e-12 P); at most %d variables; %d "
                  "Birnbaum passes in a ring\n",
                  st.models, st.hazards, st.constant, st.groups, st.deps,
                  st.variants, st.conds, st.absent, st.observed, st.cut_sets,
                  st.rrw_null, st.rrw_tiny, st.max_vars, st.ring);
    assert_int_equal(soft_failures, 0);
    assert_true(st.models >= 300);
    assert_true(st.ring > 50);
    /* the generator really exercises every feature */
    assert_true(st.groups > 20 && st.deps > 20 && st.variants > 20 &&
                st.conds > 20 && st.absent > 10 && st.observed > 10);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_random_models),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
