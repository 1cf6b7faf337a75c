/*
 * test_buddy.c - the engine against a reference BDD library (BuDDy).
 *
 * A seeded generator makes a layered-safeguard network of about 3,000
 * events: the hazard is the OR of paths, each path the AND of an error
 * and 2-4 safeguard layers; a layer is a new safeguard, a ref to a
 * safeguard shared with nearby paths or with the whole process, or a
 * 2-of-3 vote.  The network is loaded from an XML string and analysed by
 * lw_prepare; the same function is built independently with BuDDy
 * (bdd_and / bdd_or, k-of-n by the ite recursion, methods.md §7.2) in
 * the same variable order (first occurrence in a depth-first walk of the
 * generator's structure), and its probability computed by a memoised
 * bottom-up pass over BuDDy's nodes (Shannon decomposition, methods.md
 * §7.3).  Both are reduced ordered BDDs without complement edges in one
 * order, so they are the same graph: equal node counts, and P equal to
 * 1e-9 relative (reference library: BuDDy).  Birnbaum importance of a
 * sample of events is checked against BuDDy cofactors (bdd_restrict):
 * I_B = P(f | x) - P(f | not x) (methods.md §2.2).
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <bdd.h>

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "layerwise/analysis.h"
#include "testutil.h"

#define TARGET_EVENTS 3000
#define NGLOBAL 4
#define RECENT 6

/* ---- the generator's structure ------------------------------------- */

enum { S_VAR, S_AND, S_OR, S_VOTE };

typedef struct snode {
    int kind;
    int var;            /* S_VAR: event index */
    int k;              /* S_VOTE */
    int nch;
    int ch[6];          /* child snode indices (S_OR uses 'kids') */
} snode;

typedef struct net {
    uint64_t rng;
    char *xml;
    size_t len, cap;
    /* events */
    int nev;
    char (*name)[16];
    double *p;
    int *defined;
    /* structure */
    snode *s;
    int ns, cap_s;
    int *kids;          /* the top OR's children */
    int nkids, cap_kids;
} net;

static uint32_t rnd(net *n, uint32_t m)
{
    return (uint32_t)(tu_rand(&n->rng) % m);
}

static void emit(net *n, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));

static void emit(net *n, const char *fmt, ...)
{
    for (;;) {
        va_list ap;
        va_start(ap, fmt);
        int k = vsnprintf(n->xml + n->len, n->cap - n->len, fmt, ap);
        va_end(ap);
        assert_true(k >= 0);
        if (n->len + (size_t)k < n->cap) {
            n->len += (size_t)k;
            return;
        }
        n->cap *= 2;
        n->xml = realloc(n->xml, n->cap);
        assert_non_null(n->xml);
    }
}

static int new_snode(net *n, int kind)
{
    if (n->ns == n->cap_s) {
        n->cap_s = n->cap_s ? 2 * n->cap_s : 1024;
        n->s = realloc(n->s, (size_t)n->cap_s * sizeof *n->s);
        assert_non_null(n->s);
    }
    memset(&n->s[n->ns], 0, sizeof n->s[n->ns]);
    n->s[n->ns].kind = kind;
    return n->ns++;
}

static void add_child(net *n, int parent, int child)
{
    assert_true(n->s[parent].nch < 6);
    n->s[parent].ch[n->s[parent].nch++] = child;
}

static int new_event(net *n, const char *prefix, double p)
{
    int e = n->nev++;
    n->name = realloc(n->name, (size_t)n->nev * sizeof *n->name);
    n->p = realloc(n->p, (size_t)n->nev * sizeof *n->p);
    n->defined = realloc(n->defined, (size_t)n->nev * sizeof *n->defined);
    assert_true(n->name && n->p && n->defined);
    snprintf(n->name[e], sizeof n->name[e], "%s%d", prefix, e);
    n->p[e] = p;
    n->defined[e] = 0;
    return e;
}

/* An event as a leaf: defined in place at first use, ref after. */
static int leaf(net *n, int e, int safeguard)
{
    if (n->defined[e]) {
        emit(n, "<ref to=\"%s\"/>", n->name[e]);
    } else {
        emit(n, "<%s id=\"%s\" p=\"%.17g\"/>",
             safeguard ? "safeguard" : "error", n->name[e], n->p[e]);
        n->defined[e] = 1;
    }
    int s = new_snode(n, S_VAR);
    n->s[s].var = e;
    return s;
}

static double p_safeguard(net *n)
{
    return 0.005 + 0.3 * tu_uniform(&n->rng);
}

static void generate(net *n, uint64_t seed)
{
    memset(n, 0, sizeof *n);
    n->rng = seed;
    n->cap = 1 << 16;
    n->xml = malloc(n->cap);
    assert_non_null(n->xml);
    emit(n, "<?xml version=\"1.0\"?>\n<safety-model format=\"1\" "
            "id=\"layers-%llu\">\n", (unsigned long long)seed);
    /* process-wide safeguards, defined at the root */
    int global[NGLOBAL];
    for (int i = 0; i < NGLOBAL; i++) {
        global[i] = new_event(n, "final", p_safeguard(n));
        emit(n, "<safeguard id=\"%s\" p=\"%.17g\"/>\n", n->name[global[i]],
             n->p[global[i]]);
        n->defined[global[i]] = 1;
    }
    int recent[RECENT], nrecent = 0, rpos = 0;
    emit(n, "<hazard id=\"harm\"><any>\n");
    while (n->nev < TARGET_EVENTS) {
        int a = new_snode(n, S_AND);
        emit(n, "<all>");
        double pe = pow(10.0, -4.0 + 2.0 * tu_uniform(&n->rng));
        add_child(n, a, leaf(n, new_event(n, "err", pe), 0));
        int layers = 2 + (int)rnd(n, 3);
        for (int l = 0; l < layers; l++) {
            uint32_t r = rnd(n, 100);
            if (r < 4) {
                add_child(n, a, leaf(n, global[rnd(n, NGLOBAL)], 1));
            } else if (r < 16 && nrecent > 0) {
                add_child(n, a, leaf(n, recent[rnd(n, (uint32_t)nrecent)],
                                     1));
            } else if (r < 35) {
                int v = new_snode(n, S_VOTE);
                n->s[v].k = 2;
                emit(n, "<vote k=\"2\">");
                for (int j = 0; j < 3; j++) {
                    int e;
                    if (j == 2 && nrecent > 0 && rnd(n, 3) == 0)
                        e = recent[rnd(n, (uint32_t)nrecent)];
                    else
                        e = new_event(n, "chk", p_safeguard(n));
                    add_child(n, v, leaf(n, e, 1));
                }
                emit(n, "</vote>");
                add_child(n, a, v);
            } else {
                int e = new_event(n, "chk", p_safeguard(n));
                add_child(n, a, leaf(n, e, 1));
                recent[rpos] = e;
                rpos = (rpos + 1) % RECENT;
                if (nrecent < RECENT)
                    nrecent++;
            }
        }
        emit(n, "</all>\n");
        if (n->nkids == n->cap_kids) {
            n->cap_kids = n->cap_kids ? 2 * n->cap_kids : 256;
            n->kids = realloc(n->kids, (size_t)n->cap_kids * sizeof *n->kids);
            assert_non_null(n->kids);
        }
        n->kids[n->nkids++] = a;
    }
    emit(n, "</any></hazard>\n</safety-model>\n");
}

static void net_free(net *n)
{
    free(n->xml);
    free(n->name);
    free(n->p);
    free(n->defined);
    free(n->s);
    free(n->kids);
}

/* ---- BuDDy side ----------------------------------------------------- */

typedef struct order {
    int *level_of;      /* event -> BuDDy variable (= level) */
    int *event_at;      /* level -> event */
    int n;
} order;

static void order_visit(const net *n, int s, order *o)
{
    const snode *x = &n->s[s];
    if (x->kind == S_VAR) {
        if (o->level_of[x->var] < 0) {
            o->level_of[x->var] = o->n;
            o->event_at[o->n++] = x->var;
        }
        return;
    }
    for (int i = 0; i < x->nch; i++)
        order_visit(n, x->ch[i], o);
}

/* at least k of in[i..n-1]: ite(in[i], atleast(k-1, i+1), atleast(k, i+1))
 * (methods.md §7.2); returns a referenced BDD */
static BDD atleast(int k, const BDD *in, int i, int n)
{
    if (k <= 0)
        return bdd_addref(bdd_true());
    if (n - i < k)
        return bdd_addref(bdd_false());
    BDD t = atleast(k - 1, in, i + 1, n);
    BDD e = atleast(k, in, i + 1, n);
    BDD r = bdd_addref(bdd_ite(in[i], t, e));
    bdd_delref(t);
    bdd_delref(e);
    return r;
}

/* The BDD of structure node s, referenced. */
static BDD build(const net *n, const order *o, int s)
{
    const snode *x = &n->s[s];
    if (x->kind == S_VAR)
        return bdd_addref(bdd_ithvar(o->level_of[x->var]));
    BDD in[6];
    for (int i = 0; i < x->nch; i++)
        in[i] = build(n, o, x->ch[i]);
    BDD r;
    if (x->kind == S_VOTE) {
        r = atleast(x->k, in, 0, x->nch);
    } else {
        r = bdd_addref(x->kind == S_AND ? bdd_true() : bdd_false());
        for (int i = 0; i < x->nch; i++) {
            BDD t = bdd_addref(x->kind == S_AND ? bdd_and(r, in[i])
                                                : bdd_or(r, in[i]));
            bdd_delref(r);
            r = t;
        }
    }
    for (int i = 0; i < x->nch; i++)
        bdd_delref(in[i]);
    return r;
}

/* P by Shannon decomposition over BuDDy's nodes, memoised per node. */
typedef struct pctx {
    double *memo;
    unsigned char *done;
    const double *q;     /* per BuDDy variable */
} pctx;

static double bprob(pctx *c, BDD f)
{
    if (f == bdd_false())
        return 0.0;
    if (f == bdd_true())
        return 1.0;
    if (c->done[f])
        return c->memo[f];
    double q = c->q[bdd_var(f)];
    double v = q * bprob(c, bdd_high(f)) + (1.0 - q) * bprob(c, bdd_low(f));
    c->memo[f] = v;
    c->done[f] = 1;
    return v;
}

static double buddy_prob(BDD f, const double *q)
{
    pctx c;
    size_t n = (size_t)bdd_getallocnum();
    c.memo = malloc(n * sizeof *c.memo);
    c.done = calloc(n, 1);
    c.q = q;
    assert_true(c.memo && c.done);
    double P = bprob(&c, f);
    free(c.memo);
    free(c.done);
    return P;
}

/* ---- the test ---------------------------------------------------------- */

static void run_seed(uint64_t seed)
{
    net n;
    generate(&n, seed);
    assert_true(n.nev >= TARGET_EVENTS);

    /* the library */
    lw_error err = LW_ERROR_INIT;
    lw_model *m = NULL;
    if (lw_model_load_memory(n.xml, n.len, "layers.xml", NULL, &m, &err) !=
        LW_OK) {
        for (size_t i = 0; i < err.count; i++)
            fprintf(stderr, "line %ld: %s\n", err.items[i].line,
                    err.items[i].message);
        fail_msg("generated model %llu did not load",
                 (unsigned long long)seed);
    }
    lw_prepared *p = NULL;
    assert_int_equal(lw_prepare(m, LW_NONE, 0, NULL, &p, &err), LW_OK);

    /* BuDDy, in the depth-first first-occurrence order of the generator's
     * own structure */
    order o;
    o.level_of = malloc((size_t)n.nev * sizeof *o.level_of);
    o.event_at = malloc((size_t)n.nev * sizeof *o.event_at);
    assert_true(o.level_of && o.event_at);
    for (int e = 0; e < n.nev; e++)
        o.level_of[e] = -1;
    o.n = 0;
    for (int i = 0; i < n.nkids; i++)
        order_visit(&n, n.kids[i], &o);
    /* the global safeguards may be unused */
    int used = o.n;
    for (int e = 0; e < n.nev; e++)
        if (o.level_of[e] < 0) {
            o.level_of[e] = o.n;
            o.event_at[o.n++] = e;
        }
    /* the library's order is the same on the levels the hazard uses */
    assert_int_equal(p->hazard_levels, (uint32_t)used);
    for (int l = 0; l < used; l++)
        assert_string_equal(
            p->net->vars[p->diagram->level_var[l]].name,
            n.name[o.event_at[l]]);

    assert_int_equal(bdd_init(1 << 21, 1 << 19), 0);
    bdd_gbc_hook(NULL);
    bdd_setmaxincrease(1 << 22);
    assert_int_equal(bdd_setvarnum(n.nev), 0);
    /* the OR of the paths as a balanced tree of bdd_or */
    BDD *level = malloc((size_t)n.nkids * sizeof *level);
    assert_non_null(level);
    for (int i = 0; i < n.nkids; i++)
        level[i] = build(&n, &o, n.kids[i]);
    for (int width = n.nkids; width > 1;) {
        int half = 0;
        for (int i = 0; i < width; i += 2) {
            if (i + 1 < width) {
                BDD t = bdd_addref(bdd_or(level[i], level[i + 1]));
                bdd_delref(level[i]);
                bdd_delref(level[i + 1]);
                level[half++] = t;
            } else {
                level[half++] = level[i];
            }
        }
        width = half;
    }
    BDD top = level[0];
    free(level);
    double *q = malloc((size_t)n.nev * sizeof *q);
    assert_non_null(q);
    for (int l = 0; l < n.nev; l++)
        q[l] = n.p[o.event_at[l]];
    double ref = buddy_prob(top, q);
    print_message("seed %llu: %d events, %d paths, BDD %d nodes (BuDDy) / "
                  "%u (layerwise, with terminals), P = %.17g / %.17g\n",
                  (unsigned long long)seed, n.nev, n.nkids,
                  bdd_nodecount(top), p->diagram->n, ref, p->probability);
    assert_true(ref > 0 && ref < 1);
    assert_close(p->probability, ref, 1e-9);
    /* one canonical graph: the same number of internal nodes */
    assert_int_equal((int)p->diagram->n - 2, bdd_nodecount(top));
    tu_same_family_both_ways(p, "buddy network");
    {   /* the diagram built by modules, against gate by gate */
        lw_bref r;
        lw_diagram *plain = NULL;
        assert_int_equal(lw_builder_gate(p->builder,
                                         p->net->hazard_gate[0], &r, &err),
                         LW_OK);
        assert_int_equal(lw_diagram_freeze(lw_builder_bdd(p->builder), r,
                                           p->nlevels,
                                           lw_builder_level_var(p->builder),
                                           &plain, &err), LW_OK);
        tu_same_diagram(plain, p->diagram, "buddy network");
        lw_diagram_free(plain);
    }

    /* Birnbaum of a sample of events against BuDDy cofactors */
    double *bir = malloc((p->nlevels + 1) * sizeof *bir);
    assert_non_null(bir);
    int ok = 0;
    double P2 = lw_diagram_birnbaum(p->diagram, p->q, bir, &err, &ok);
    assert_true(ok);
    assert_close(P2, ref, 1e-9);
    for (int j = 0; j < 12; j++) {
        int l = (int)(tu_rand(&n.rng) % (uint64_t)used);
        BDD x = bdd_ithvar(l);
        BDD nx = bdd_addref(bdd_not(x));
        BDD f1 = bdd_addref(bdd_restrict(top, x));
        BDD f0 = bdd_addref(bdd_restrict(top, nx));
        double B = buddy_prob(f1, q) - buddy_prob(f0, q);
        bdd_delref(f1);
        bdd_delref(f0);
        bdd_delref(nx);
        if (fabs(bir[l] - B) > 1e-9 * fabs(B) + 1e-15)
            fail_msg("Birnbaum of %s = %.17g, BuDDy %.17g",
                     n.name[o.event_at[l]], bir[l], B);
    }
    free(bir);
    bdd_delref(top);
    bdd_done();
    free(q);
    free(o.level_of);
    free(o.event_at);
    lw_prepared_free(p);
    lw_model_free(m);
    lw_error_clear(&err);
    net_free(&n);
}

static void test_buddy_layered(void **state)
{
    (void)state;
    run_seed(11);
    run_seed(2026);
    run_seed(777777);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_buddy_layered),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
