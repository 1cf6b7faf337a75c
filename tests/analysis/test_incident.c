/*
 * test_incident.c - lw_incident_run against brute force.
 *
 * Sources of the expected values (none is a recorded output):
 *   - P(hazard | observation): brute-force enumeration of every assignment
 *     of the model's independent Bernoullis (each user event's own part,
 *     each common:G and each depends:D), with their probabilities computed
 *     here from model-format.md ("How dependence is quantified", beta-factor
 *     and THERP expansions, NUREG/CR-1278 ch. 10/20 weights) and the
 *     events and gates evaluated here from the lw_model itself.  This uses
 *     neither the compile room nor the BDD engine.  Closed form:
 *     P(H | O) = P(H and O) / P(O).
 *   - completed / one_away / stood: the minimal cut sets found by brute
 *     force over every subset of the network's variables (a cut set when
 *     the hazard gate is true with exactly those variables true, minimal
 *     when no one-smaller subset is), filtered by the definitions of
 *     docs/cli.md (incident) written out again here.
 *   - the posterior of a one-away set's missing variable: enumeration over
 *     the network's variables (no BDD).
 *   - a family too large to enumerate (3^40 cut sets): the completed and
 *     one-away counts follow from the structure (closed form: for
 *     AND of n ORs, with one input failed in n-1 ORs, exactly the 3 sets
 *     that add one input of the last OR are one away).
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
#include "layerwise/incident.h"
#include "testutil.h"

/* M1: common cause over three layers of a 2-of-3 vote, a dependence
 * between two layers in series, a shared error. */
static const char *M1 =
    "<safety-model format=\"1\" id=\"m1\">\n"
    " <error id=\"e1\" p=\"0.01\"/>\n"
    " <error id=\"e2\" p=\"0.02\"/>\n"
    " <safeguard id=\"a\" p=\"0.1\"/>\n"
    " <safeguard id=\"b\" p=\"0.2\"/>\n"
    " <safeguard id=\"c\" p=\"0.15\"/>\n"
    " <safeguard id=\"d\" p=\"0.3\"/>\n"
    " <safeguard id=\"f\" p=\"0.05\"/>\n"
    " <hazard id=\"h\"><any>\n"
    "  <all><ref to=\"e1\"/><ref to=\"a\"/><ref to=\"b\"/></all>\n"
    "  <all><ref to=\"e2\"/><vote k=\"2\"><ref to=\"c\"/><ref to=\"d\"/>"
    "<ref to=\"f\"/></vote></all>\n"
    "  <all><ref to=\"e1\"/><ref to=\"c\"/></all>\n"
    " </any></hazard>\n"
    " <common-cause id=\"g\" beta=\"0.2\" members=\"c d f\"/>\n"
    " <dependence id=\"dep\" first=\"a\" second=\"b\" level=\"moderate\"/>\n"
    "</safety-model>\n";

/* M2: a dependence whose first is a common-cause member, a chain of
 * dependences, a vote, a shared block, a condition, and an event outside
 * the hazard. */
static const char *M2 =
    "<safety-model format=\"1\" id=\"m2\">\n"
    " <error id=\"e\" p=\"0.05\"/>\n"
    " <error id=\"e2\" p=\"0.03\"/>\n"
    " <safeguard id=\"s1\" p=\"0.2\"/>\n"
    " <safeguard id=\"s2\" p=\"0.25\"/>\n"
    " <safeguard id=\"s3\" p=\"0.1\"/>\n"
    " <safeguard id=\"s4\" p=\"0.3\"/>\n"
    " <safeguard id=\"s5\" p=\"0.4\"/>\n"
    " <safeguard id=\"spare\" p=\"0.5\"/>\n"
    " <condition id=\"on\" state=\"true\"/>\n"
    " <block id=\"pair\"><all><ref to=\"s1\"/><ref to=\"s3\"/></all></block>\n"
    " <hazard id=\"h\"><any>\n"
    "  <all><ref to=\"e\"/><ref to=\"pair\"/><ref to=\"on\"/></all>\n"
    "  <all><ref to=\"e\"/><ref to=\"s2\"/><ref to=\"s4\"/></all>\n"
    "  <all><ref to=\"e2\"/><vote k=\"2\"><ref to=\"s1\"/><ref to=\"s4\"/>"
    "<ref to=\"s5\"/></vote></all>\n"
    "  <all><ref to=\"e2\"/><ref to=\"s2\"/><ref to=\"s3\"/></all>\n"
    " </any></hazard>\n"
    " <common-cause id=\"G\" beta=\"0.3\" members=\"s1 s2\"/>\n"
    " <dependence id=\"D1\" first=\"s1\" second=\"s3\" level=\"high\"/>\n"
    " <dependence id=\"D2\" first=\"s3\" second=\"s4\" level=\"low\"/>\n"
    "</safety-model>\n";

/* ---- brute force on the model ------------------------------------------ */

typedef struct brute {
    const lw_model *m;
    size_t nb;              /* Bernoullis */
    double p[32];
    size_t part_of[64];     /* per node: Bernoulli of its own part */
    size_t group_of[64];    /* per node: its group, or LW_NONE */
    size_t dep_of[64];      /* per node: dependence it is second of */
    size_t group_b[8];      /* per group: its Bernoulli */
    size_t dep_b[8];        /* per dependence: its Bernoulli */
} brute;

static double level_w(lw_level l)
{
    /* NUREG/CR-1278 ch. 10: 0, 1/20, 1/7, 1/2, 1 (methods.md §3.2) */
    static const double w[] = {0.0, 1.0 / 20.0, 1.0 / 7.0, 0.5, 1.0};
    return w[l];
}

static double event_p(const lw_model *m, size_t i)
{
    const lw_node *n = &m->nodes[i];
    if (n->kind == LW_NODE_SAFEGUARD && !n->present)
        return 1.0;
    return n->dist.p;
}

static void brute_init(brute *B, const lw_model *m)
{
    memset(B, 0, sizeof *B);
    B->m = m;
    assert_true(m->nnodes < 64 && m->ngroups < 8 && m->ndeps < 8);
    for (size_t i = 0; i < m->nnodes; i++) {
        B->part_of[i] = LW_NONE;
        B->group_of[i] = LW_NONE;
        B->dep_of[i] = LW_NONE;
    }
    for (size_t g = 0; g < m->ngroups; g++)
        for (size_t k = 0; k < m->groups[g].nmembers; k++)
            B->group_of[m->groups[g].members[k]] = g;
    for (size_t d = 0; d < m->ndeps; d++)
        B->dep_of[m->deps[d].second] = d;
    for (size_t g = 0; g < m->ngroups; g++) {
        double mn = 1.0;
        for (size_t k = 0; k < m->groups[g].nmembers; k++)
            mn = fmin(mn, event_p(m, m->groups[g].members[k]));
        B->group_b[g] = B->nb;
        B->p[B->nb++] = m->groups[g].beta * mn;     /* q = beta min p */
    }
    for (size_t d = 0; d < m->ndeps; d++) {
        double p = event_p(m, m->deps[d].second);
        double w = level_w(m->deps[d].level);
        double i = p * (1 - w), c = p + w * (1 - p);
        B->dep_b[d] = B->nb;
        B->p[B->nb++] = i >= 1 ? 0 : (c - i) / (1 - i);
    }
    for (size_t i = 0; i < m->nnodes; i++) {
        lw_node_kind k = m->nodes[i].kind;
        if (k != LW_NODE_ERROR && k != LW_NODE_SAFEGUARD)
            continue;
        double p = event_p(m, i);
        if (B->group_of[i] != LW_NONE) {
            double q = B->p[B->group_b[B->group_of[i]]];
            p = (p - q) / (1 - q);
        } else if (B->dep_of[i] != LW_NONE) {
            p = p * (1 - level_w(m->deps[B->dep_of[i]].level));
        }
        B->part_of[i] = B->nb;
        B->p[B->nb++] = p;
    }
    assert_true(B->nb <= 24);
}

static int ev(const brute *B, size_t i, unsigned x)
{
    if ((x >> B->part_of[i]) & 1u)
        return 1;
    if (B->group_of[i] != LW_NONE && ((x >> B->group_b[B->group_of[i]]) & 1u))
        return 1;
    if (B->dep_of[i] != LW_NONE) {
        size_t d = B->dep_of[i];
        return ((x >> B->dep_b[d]) & 1u) && ev(B, B->m->deps[d].first, x);
    }
    return 0;
}

static int node_val(const brute *B, size_t i, unsigned x)
{
    const lw_node *n = &B->m->nodes[i];
    switch (n->kind) {
    case LW_NODE_ERROR:
    case LW_NODE_SAFEGUARD: return ev(B, i, x);
    case LW_NODE_CONDITION: return n->state;
    case LW_NODE_BLOCK:
    case LW_NODE_HAZARD: return node_val(B, n->in[0], x);
    case LW_NODE_ALL:
        for (size_t k = 0; k < n->nin; k++)
            if (!node_val(B, n->in[k], x))
                return 0;
        return 1;
    case LW_NODE_ANY:
        for (size_t k = 0; k < n->nin; k++)
            if (node_val(B, n->in[k], x))
                return 1;
        return 0;
    case LW_NODE_VOTE: {
        int c = 0;
        for (size_t k = 0; k < n->nin; k++)
            c += node_val(B, n->in[k], x);
        return c >= n->k;
    }
    }
    return 0;
}

/* P(obs) and P(hazard and obs) by enumeration. */
static void brute_obs(const brute *B, const size_t *f, size_t nf,
                      const size_t *h, size_t nh, double *pobs,
                      double *pjoint)
{
    *pobs = *pjoint = 0.0;
    size_t hz = B->m->hazards[0];
    for (unsigned x = 0; x < (1u << B->nb); x++) {
        int ok = 1;
        for (size_t i = 0; i < nf && ok; i++)
            ok = ev(B, f[i], x);
        for (size_t j = 0; j < nh && ok; j++)
            ok = !ev(B, h[j], x);
        if (!ok)
            continue;
        double w = 1.0;
        for (size_t b = 0; b < B->nb; b++)
            w *= ((x >> b) & 1u) ? B->p[b] : 1.0 - B->p[b];
        *pobs += w;
        if (node_val(B, hz, x))
            *pjoint += w;
    }
}

/* ---- brute force on the network (cut sets) ------------------------------ */

static int listed(const size_t *l, size_t n, size_t x)
{
    for (size_t i = 0; i < n; i++)
        if (l[i] == x)
            return 1;
    return 0;
}

/* docs/cli.md: when does variable v count as failed? */
static int def_failed(const lw_model *m, const lw_var *v, const size_t *f,
                      size_t nf)
{
    if (v->kind == LW_VAR_COMMON) {
        size_t c = 0;
        for (size_t k = 0; k < m->groups[v->group].nmembers; k++)
            c += (size_t)listed(f, nf, m->groups[v->group].members[k]);
        return c >= 2;
    }
    if (v->kind == LW_VAR_DEPENDS)
        return listed(f, nf, m->deps[v->dep].first) &&
               listed(f, nf, m->deps[v->dep].second);
    return listed(f, nf, v->node);
}

static int def_held(const lw_var *v, const size_t *h, size_t nh)
{
    return v->node != LW_NONE && listed(h, nh, v->node);
}

typedef struct expect {
    uint32_t completed[256], one_away[256], one_missing[256];
    size_t ncompleted, none_away;
    int stood[64];          /* per node: 0 no, 1 untouched, 2 held */
} expect;

static void brute_sets(const lw_network *net, const size_t *f, size_t nf,
                       const size_t *h, size_t nh, expect *E)
{
    const lw_model *m = net->model;
    uint32_t hg = net->hazard_gate[0];
    size_t n = net->nvars;
    assert_true(n <= 16);
    memset(E, 0, sizeof *E);
    for (uint32_t x = 1; x < (1u << n); x++) {
        if (!tu_eval(net, hg, x))
            continue;
        int minimal = 1;
        for (size_t b = 0; b < n && minimal; b++)
            if (((x >> b) & 1u) && tu_eval(net, hg, x & ~(1u << b)))
                minimal = 0;
        if (!minimal)
            continue;
        size_t notf = 0, untouched = 0;
        uint32_t miss = UINT32_MAX;
        for (size_t b = 0; b < n; b++) {
            if (!((x >> b) & 1u) || def_failed(m, &net->vars[b], f, nf))
                continue;
            notf++;
            if (!def_held(&net->vars[b], h, nh)) {
                untouched++;
                miss = (uint32_t)b;
            }
        }
        if (notf == 0) {
            assert_true(E->ncompleted < 256);
            E->completed[E->ncompleted++] = x;
        } else if (notf == 1 && untouched == 1) {
            assert_true(E->none_away < 256);
            E->one_missing[E->none_away] = miss;
            E->one_away[E->none_away++] = x;
        }
        size_t nheld = notf - untouched;
        for (size_t b = 0; b < n; b++) {
            const lw_var *v = &net->vars[b];
            if (!((x >> b) & 1u) || v->kind != LW_VAR_SAFEGUARD ||
                def_failed(m, v, f, nf))
                continue;
            /* stood: a held safeguard where held layers stopped a chain
             * otherwise complete but for at most one untouched event; the
             * untouched safeguard a one-away set misses */
            if (def_held(v, h, nh) && nheld >= 1 && untouched <= 1)
                E->stood[v->node] = 2;
            else if (!def_held(v, h, nh) && notf == 1 && untouched == 1)
                E->stood[v->node] = 1;
        }
    }
}

/* P(var v | obs) over the network's variables (no BDD). */
static double brute_posterior(const lw_network *net, const size_t *f,
                              size_t nf, const size_t *h, size_t nh,
                              uint32_t v)
{
    double po = 0, pj = 0;
    size_t n = net->nvars;
    for (uint32_t x = 0; x < (1u << n); x++) {
        /* an event no hazard uses has no gate: it is independent of
         * every variable, so it drops out of P(v | obs) */
        int ok = 1;
        for (size_t i = 0; i < nf && ok; i++)
            ok = net->event_gate[f[i]] == LW_NO_GATE ||
                 tu_eval(net, net->event_gate[f[i]], x);
        for (size_t j = 0; j < nh && ok; j++)
            ok = net->event_gate[h[j]] == LW_NO_GATE ||
                 !tu_eval(net, net->event_gate[h[j]], x);
        if (!ok)
            continue;
        double w = 1;
        for (size_t b = 0; b < n; b++)
            w *= ((x >> b) & 1u) ? net->vars[b].p : 1 - net->vars[b].p;
        po += w;
        if ((x >> v) & 1u)
            pj += w;
    }
    return pj / po;
}

static uint32_t set_mask(const lw_incident_set *s)
{
    uint32_t x = 0;
    for (size_t k = 0; k < s->order; k++)
        x |= 1u << s->vars[k];
    return x;
}

static int mask_in(const uint32_t *list, size_t n, uint32_t x)
{
    for (size_t i = 0; i < n; i++)
        if (list[i] == x)
            return (int)i;
    return -1;
}

/* ---- the checks ------------------------------------------------------ */

static lw_status run(const lw_model *m, const size_t *f, size_t nf,
                     const size_t *h, size_t nh, lw_incident **out,
                     lw_error *err)
{
    const char *fid[16], *hid[16];
    for (size_t i = 0; i < nf; i++)
        fid[i] = m->nodes[f[i]].id;
    for (size_t j = 0; j < nh; j++)
        hid[j] = m->nodes[h[j]].id;
    return lw_incident_run(m, LW_NONE, 0, fid, nf, hid, nh, NULL, out, err);
}

/* One observation: everything against brute force. */
static void check_observation(const lw_model *m, const brute *B,
                              const size_t *f, size_t nf, const size_t *h,
                              size_t nh)
{
    double pobs, pjoint;
    brute_obs(B, f, nf, h, nh, &pobs, &pjoint);
    lw_incident *r = NULL;
    lw_error err = LW_ERROR_INIT;
    lw_status st = run(m, f, nf, h, nh, &r, &err);
    if (pobs <= 1e-300) {
        /* impossible: LW_EMODEL naming the reason */
        assert_int_equal(st, LW_EMODEL);
        assert_true(tu_error_has(&err, "impossible", NULL));
        lw_error_clear(&err);
        return;
    }
    if (st != LW_OK)
        fail_msg("incident failed: %s", err.count ? err.items[0].message
                                                  : lw_status_name(st));
    /* closed form P(H | O) = P(H and O) / P(O), brute force */
    assert_close(r->p_observation, pobs, 1e-10);
    assert_close(r->conditional, pjoint / pobs, 1e-9);
    if (pjoint > 0)
        assert_close(r->p_joint, pjoint, 1e-10);
    /* definitions of docs/cli.md on brute-force minimal cut sets */
    expect E;
    brute_sets(r->net, f, nf, h, nh, &E);
    assert_int_equal(r->ncompleted, E.ncompleted);
    assert_int_equal(r->none_away, E.none_away);
    const lw_incident_set *cs = lw_incident_completed(r);
    for (size_t i = 0; i < r->ncompleted; i++) {
        assert_true(mask_in(E.completed, E.ncompleted, set_mask(&cs[i])) >=
                    0);
        assert_int_equal(cs[i].missing, UINT32_MAX);
    }
    const lw_incident_set *oa = lw_incident_one_away(r);
    for (size_t i = 0; i < r->none_away; i++) {
        int k = mask_in(E.one_away, E.none_away, set_mask(&oa[i]));
        assert_true(k >= 0);
        assert_int_equal(oa[i].missing, E.one_missing[k]);
        double post = brute_posterior(r->net, f, nf, h, nh, oa[i].missing);
        if (post > 1e-300 || oa[i].missing_given > 1e-300)
            assert_close(oa[i].missing_given, post, 1e-9);
        /* sorted by probability, highest first */
        if (i)
            assert_true(oa[i - 1].probability >= oa[i].probability);
    }
    for (size_t x = 0; x < m->nnodes; x++) {
        int got = 0;
        for (size_t i = 0; i < r->nstood; i++)
            if (r->stood[i].node == x)
                got = r->stood[i].held ? 2 : 1;
        assert_int_equal(got, E.stood[x]);
    }
    lw_incident_free(r);
    lw_error_clear(&err);
}

/* Random observations: each event none / failed / held. */
static void random_observations(const char *xml, int rounds, uint64_t seed)
{
    lw_model *m = tu_load(xml);
    brute B;
    brute_init(&B, m);
    uint64_t rng = seed;
    size_t events[64], ne = 0;
    for (size_t i = 0; i < m->nnodes; i++)
        if (m->nodes[i].kind == LW_NODE_ERROR ||
            m->nodes[i].kind == LW_NODE_SAFEGUARD)
            events[ne++] = i;
    int possible = 0, with_sets = 0;
    for (int round = 0; round < rounds; round++) {
        size_t f[16], h[16], nf = 0, nh = 0;
        for (size_t i = 0; i < ne; i++) {
            double u = tu_uniform(&rng);
            if (u < 0.4)
                f[nf++] = events[i];
            else if (u < 0.6)
                h[nh++] = events[i];
        }
        double po, pj;
        brute_obs(&B, f, nf, h, nh, &po, &pj);
        if (po > 0)
            possible++;
        check_observation(m, &B, f, nf, h, nh);
        expect E;
        lw_network *net = NULL;
        lw_error err = LW_ERROR_INIT;
        assert_int_equal(lw_compile(m, LW_NONE, &net, &err), LW_OK);
        brute_sets(net, f, nf, h, nh, &E);
        with_sets += E.ncompleted + E.none_away > 0;
        lw_network_free(net);
        lw_error_clear(&err);
    }
    /* the rounds exercised the interesting cases */
    assert_true(possible > rounds / 4);
    assert_true(with_sets > rounds / 10);
    lw_model_free(m);
}

static void test_m1_random(void **state)
{
    (void)state;
    random_observations(M1, 150, 11);
}

static void test_m2_random(void **state)
{
    (void)state;
    random_observations(M2, 150, 29);
}

/* Hand-picked observations where the synthetic events count. */
static void test_synthetic_counting(void **state)
{
    (void)state;
    lw_model *m = tu_load(M1);
    brute B;
    brute_init(&B, m);
    size_t e2 = lw_model_find_node(m, "e2"), c = lw_model_find_node(m, "c"),
           d = lw_model_find_node(m, "d"), f = lw_model_find_node(m, "f"),
           e1 = lw_model_find_node(m, "e1"), a = lw_model_find_node(m, "a"),
           b = lw_model_find_node(m, "b");
    /* two members of g failed: common:g counts as failed, so
     * {e2, common:g} is completed */
    size_t f1[] = {e2, c, d};
    check_observation(m, &B, f1, 3, NULL, 0);
    lw_incident *r = NULL;
    lw_error err = LW_ERROR_INIT;
    assert_int_equal(run(m, f1, 3, NULL, 0, &r, &err), LW_OK);
    int found = 0;
    for (size_t i = 0; i < r->ncompleted; i++) {
        const lw_incident_set *s = &r->sets[i];
        if (s->order == 2 &&
            (!strcmp(r->net->vars[s->vars[0]].name, "common:g") ||
             !strcmp(r->net->vars[s->vars[1]].name, "common:g")))
            found = 1;
    }
    assert_true(found);
    lw_incident_free(r);
    /* first and second of dep failed: depends:dep counts as failed */
    size_t f2[] = {e1, a, b};
    size_t h2[] = {f};
    check_observation(m, &B, f2, 3, h2, 1);
    assert_int_equal(run(m, f2, 3, h2, 1, &r, &err), LW_OK);
    found = 0;
    for (size_t i = 0; i < r->ncompleted; i++)
        for (size_t k = 0; k < r->sets[i].order; k++)
            found |= !strcmp(r->net->vars[r->sets[i].vars[k]].name,
                             "depends:dep");
    assert_true(found);
    lw_incident_free(r);
    lw_error_clear(&err);
    lw_model_free(m);
}

/* AND of 40 ORs of 3: 3^40 minimal cut sets, never enumerated. */
static void test_huge_family(void **state)
{
    (void)state;
    size_t cap = 40 * 400 + 1000;
    char *xml = malloc(cap);
    assert_non_null(xml);
    size_t o = (size_t)snprintf(xml, cap, "<safety-model format=\"1\" "
                                "id=\"big\"><hazard id=\"h\"><all>");
    for (int i = 0; i < 40; i++) {
        o += (size_t)snprintf(xml + o, cap - o, "<any>");
        for (int j = 0; j < 3; j++)
            o += (size_t)snprintf(xml + o, cap - o, "<safeguard id=\"x%d_%d\""
                                  " p=\"0.1\"/>", i, j);
        o += (size_t)snprintf(xml + o, cap - o, "</any>");
    }
    snprintf(xml + o, cap - o, "</all></hazard></safety-model>");
    lw_model *m = tu_load(xml);
    free(xml);
    char names[39][16];
    const char *fid[39];
    for (int i = 0; i < 39; i++) {
        snprintf(names[i], sizeof names[i], "x%d_0", i);
        fid[i] = names[i];
    }
    const char *hid[] = {"x39_2"};
    lw_incident *r = NULL;
    lw_error err = LW_ERROR_INIT;
    assert_int_equal(lw_incident_run(m, LW_NONE, 0, fid, 39, hid, 1, NULL, &r,
                                     &err), LW_OK);
    /* closed form: 0 completed; one away = {x0_0..x38_0} + x39_j for the
     * two untouched j; blocked: the held x39_2 with the failed x_i_0
     * (1 set) or with one untouched x_i_1 / x_i_2, i < 39 (39 * 2) */
    assert_int_equal(r->ncompleted, 0);
    assert_int_equal(r->none_away, 2);
    assert_int_equal(r->nblocked, 1 + 39 * 2);
    assert_int_equal(lw_incident_one_away(r)[0].order, 40);
    /* closed form: P(H | obs) = P(x39_0 or x39_1) = 1 - 0.9^2 */
    assert_close(r->conditional, 1 - 0.9 * 0.9, 1e-12);
    /* stood: x39_2 held, x39_0 and x39_1 untouched (the x_i_1, x_i_2 of
     * blocked sets are not listed: only held layers of blocked sets) */
    assert_int_equal(r->nstood, 3);
    assert_true(r->stood[0].held);
    lw_incident_free(r);
    lw_error_clear(&err);
    lw_model_free(m);
}

static void test_usage_errors(void **state)
{
    (void)state;
    lw_model *m = tu_load(M2);
    lw_incident *r = NULL;
    lw_error err = LW_ERROR_INIT;
    const char *bad[] = {"e", "nope"};
    assert_int_equal(lw_incident_run(m, LW_NONE, 0, bad, 2, NULL, 0, NULL,
                                     &r, &err), LW_EUSAGE);
    assert_null(r);
    assert_true(tu_error_has(&err, "\"nope\"", NULL));
    /* the message lists the model's events */
    assert_true(tu_error_has(&err, "s1, s2", NULL));
    lw_error_clear(&err);
    const char *cond[] = {"on"};
    assert_int_equal(lw_incident_run(m, LW_NONE, 0, cond, 1, NULL, 0, NULL,
                                     &r, &err), LW_EUSAGE);
    assert_true(tu_error_has(&err, "condition", NULL));
    lw_error_clear(&err);
    const char *f[] = {"e", "s1"}, *h[] = {"s1"};
    assert_int_equal(lw_incident_run(m, LW_NONE, 0, f, 2, h, 1, NULL, &r,
                                     &err), LW_EUSAGE);
    assert_true(tu_error_has(&err, "both", NULL));
    lw_error_clear(&err);
    lw_model_free(m);
}

static void test_impossible(void **state)
{
    (void)state;
    lw_model *m = tu_load(
        "<safety-model format=\"1\" id=\"imp\">"
        "<error id=\"e\" p=\"0.1\"/><error id=\"never\" p=\"0\"/>"
        "<safeguard id=\"a\" p=\"0.2\"/><safeguard id=\"b\" p=\"0.3\"/>"
        "<safeguard id=\"gone\" p=\"0.1\" present=\"no\"/>"
        "<hazard id=\"h\"><any><all><ref to=\"e\"/><ref to=\"a\"/>"
        "<ref to=\"b\"/><ref to=\"gone\"/></all><ref to=\"never\"/></any>"
        "</hazard>"
        "<dependence first=\"a\" second=\"b\" level=\"complete\"/>"
        "</safety-model>");
    lw_incident *r = NULL;
    lw_error err = LW_ERROR_INIT;
    /* complete dependence: a missed makes b miss (NUREG/CR-1278: CD = 1) */
    const char *f1[] = {"a"}, *h1[] = {"b"};
    assert_int_equal(lw_incident_run(m, LW_NONE, 0, f1, 1, h1, 1, NULL, &r,
                                     &err), LW_EMODEL);
    assert_true(tu_error_has(&err, "impossible", NULL));
    assert_true(tu_error_has(&err, "\"b\" cannot have held", NULL));
    lw_error_clear(&err);
    /* an absent layer always misses */
    const char *f2[] = {"e"}, *h2[] = {"gone"};
    assert_int_equal(lw_incident_run(m, LW_NONE, 0, f2, 1, h2, 1, NULL, &r,
                                     &err), LW_EMODEL);
    assert_true(tu_error_has(&err, "absent", NULL));
    lw_error_clear(&err);
    const char *f3[] = {"never"};
    assert_int_equal(lw_incident_run(m, LW_NONE, 0, f3, 1, NULL, 0, NULL, &r,
                                     &err), LW_EMODEL);
    assert_true(tu_error_has(&err, "\"never\"", NULL));
    lw_error_clear(&err);
    /* absent layer listed as failed: completed */
    const char *f4[] = {"e", "a", "b", "gone"};
    assert_int_equal(lw_incident_run(m, LW_NONE, 0, f4, 4, NULL, 0, NULL, &r,
                                     &err), LW_OK);
    assert_int_equal(r->ncompleted, 2);   /* {e,a,b,gone}, {e,a,depends} */
    assert_close(r->conditional, 1.0, 1e-12);  /* closed form: certain */
    lw_incident_free(r);
    lw_error_clear(&err);
    lw_model_free(m);
}

/* Every allocation failure is reported and leaks nothing. */
static void test_out_of_memory(void **state)
{
    (void)state;
    lw_model *m = tu_load(M2);
    const char *f[] = {"e", "s1"}, *h[] = {"s3"};
    lw_incident *r = NULL;
    lw_error err = LW_ERROR_INIT;
    lw_alloc_fail_at(0, 0);
    assert_int_equal(lw_incident_run(m, LW_NONE, 0, f, 2, h, 1, NULL, &r,
                                     &err), LW_OK);
    unsigned long total = lw_alloc_count();
    lw_incident_free(r);
    lw_error_clear(&err);
    for (unsigned long n = 1; n <= total; n++) {
        lw_alloc_fail_at(n, 1);
        lw_status st = lw_incident_run(m, LW_NONE, 0, f, 2, h, 1, NULL, &r,
                                       &err);
        lw_alloc_fail_at(0, 0);
        if (st == LW_OK) {
            lw_incident_free(r);
        } else {
            assert_int_equal(st, LW_ENOMEM);
            assert_null(r);
        }
        lw_error_clear(&err);
    }
    lw_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_m1_random),
        cmocka_unit_test(test_m2_random),
        cmocka_unit_test(test_synthetic_counting),
        cmocka_unit_test(test_huge_family),
        cmocka_unit_test(test_usage_errors),
        cmocka_unit_test(test_impossible),
        cmocka_unit_test(test_out_of_memory),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
