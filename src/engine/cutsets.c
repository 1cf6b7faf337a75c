/*
 * cutsets.c - minimal cut sets as a zero-suppressed BDD.
 *
 * HOW IT WORKS
 *   For a monotone f = x.f1 + f0 (so f0 implies f1), the minimal cut sets
 *   are
 *       MCS(f) = { {x} u s : s in MCS(f1), no set of MCS(f0) inside s }
 *                u MCS(f0)
 *   computed bottom-up over the frozen BDD, memoised per node, with
 *   'without(P, Q)' = the sets of P that contain no set of Q.  Families
 *   are ZBDDs: a node (x, hi, lo) is {sets of hi, each with x} u lo, and
 *   a node whose hi is the empty family is never made.  Nothing is ever
 *   expanded into products, so a family of 10^30 sets costs what its
 *   diagram costs.
 *
 *   Linear passes over the frozen family give the count, the rare-event
 *   sum S(n) = S(lo) + q.S(hi), the most probable completion
 *   M(n) = max(M(lo), q.M(hi)), and, with one top-down pass, every
 *   variable's Fussell-Vesely sum.  The N most probable sets come from a
 *   best-first search whose priority is (product so far) x M(node): the
 *   bound is exact, so each set is reached after at most 'depth' steps.
 *
 * LIMITS
 *   The set operations recurse on the C stack to a depth of about twice
 *   the number of levels, and listing the sets once per element of a set;
 *   past LW_DEEP_LEVELS levels the public builders and lw_cut_family_each
 *   do their work on a thread with a large stack (layerwise/deep.h), so
 *   callers need none.
 */
#include "layerwise/bdd.h"

#include <float.h>
#include <math.h>
#include <string.h>

#include "layerwise/alloc.h"
#include "layerwise/deep.h"

struct lw_cut_family {
    lw_bdd *z;              /* the ZBDD manager */
    lw_diagram *fam;        /* frozen family */
    double *q;              /* per level (copy) */
    uint32_t nlevels;
    double *count;          /* per frozen node */
    double *sum;            /* rare-event sum below each node */
    double *best;           /* most probable completion below each node */
};

static lw_status family_limit(lw_cut_family *f, lw_error *err)
{
    lw_error_set(err, LW_ELIMIT, NULL, 0, "the cut-set family reached the "
                 "limit of %zu nodes (--max-nodes; the work to build it is "
                 "bounded by 64 steps a node); raise it, or analyse a "
                 "smaller model or a narrower vote", lw_bdd_max_nodes(f->z));
    lw_cut_family_free(f);
    return LW_ELIMIT;
}

/* The manager holds the family 'root': freeze it (numbered canonically,
 * so both constructions give the same frozen family) and fill the
 * per-node passes. */
static lw_status family_finish(lw_cut_family *f, lw_bref root,
                               const uint32_t *level_var, lw_error *err)
{
    if (lw_bdd_status(f->z) == LW_ELIMIT)
        return family_limit(f, err);
    if (root == LW_BREF_INVALID)
        goto oom;
    if (lw_diagram_freeze_canonical(f->z, root, f->nlevels, level_var,
                                    &f->fam, err) != LW_OK) {
        lw_cut_family_free(f);
        return LW_ENOMEM;
    }
    const lw_diagram *z = f->fam;
    f->count = lw_malloc(z->n * sizeof *f->count);
    f->sum = lw_malloc(z->n * sizeof *f->sum);
    f->best = lw_malloc(z->n * sizeof *f->best);
    if (!f->count || !f->sum || !f->best)
        goto oom;
    f->count[0] = f->sum[0] = f->best[0] = 0.0;
    f->count[1] = f->sum[1] = f->best[1] = 1.0;
    for (uint32_t i = 2; i < z->n; i++) {
        double p = f->q[z->level[i]];
        uint32_t h = z->hi[i], l = z->lo[i];
        f->count[i] = f->count[h] + f->count[l];
        f->sum[i] = f->sum[l] + p * f->sum[h];
        double bh = p * f->best[h];
        f->best[i] = bh > f->best[l] ? bh : f->best[l];
    }
    return LW_OK;
oom:
    lw_cut_family_free(f);
    return lw_error_oom(err);
}

static lw_cut_family *family_alloc(uint32_t nlevels, const double *q,
                                   size_t max_nodes)
{
    lw_cut_family *f = lw_calloc(1, sizeof *f);
    if (!f)
        return NULL;
    f->nlevels = nlevels;
    f->q = lw_malloc((nlevels + 1) * sizeof *f->q);
    f->z = lw_zdd_new(nlevels, max_nodes);
    if (!f->q || !f->z) {
        lw_cut_family_free(f);
        return NULL;
    }
    if (nlevels)
        memcpy(f->q, q, nlevels * sizeof *q);
    return f;
}

static lw_status family_new(const lw_diagram *d, const double *q,
                            size_t max_nodes, lw_cut_family **out,
                            lw_error *err)
{
    *out = NULL;
    lw_cut_family *f = family_alloc(d->nlevels, q, max_nodes);
    uint32_t *memo = lw_malloc(d->n * sizeof *memo);  /* BDD node -> ZBDD */
    if (!f || !memo) {
        lw_free(memo);
        lw_cut_family_free(f);
        return lw_error_oom(err);
    }
    memo[0] = 0;
    memo[1] = 1;
    /* nodes are in topological order: children first */
    for (uint32_t i = 2; i < d->n; i++) {
        uint32_t L = memo[d->lo[i]];
        uint32_t H = lw_zdd_without(f->z, memo[d->hi[i]], L);
        memo[i] = lw_bdd_mk(f->z, d->level[i], H, L);
        if (memo[i] == LW_BREF_INVALID)
            break;
    }
    lw_bref root = memo[d->root];
    lw_free(memo);
    lw_status st = family_finish(f, root, d->level_var, err);
    if (st == LW_OK)
        *out = f;
    return st;
}

/* Do the inputs (sorted deepest first) use levels in ranges that do not
 * overlap, and lack the empty set?  Then unions and products of them are
 * minimal without a check: no set of one input can hold a set of
 * another, since every set is non-empty and drawn from its own range. */
static int disjoint_inputs(const lw_bdd *z, const lw_bref *ins, uint32_t n)
{
    uint32_t above = LW_LEVEL_TERMINAL;     /* top of the inputs so far */
    for (uint32_t i = 0; i < n; i++) {
        if (ins[i] == 0)
            continue;                       /* the empty family: no sets */
        if (lw_zdd_has_empty(z, ins[i]))
            return 0;
        if (lw_zdd_deepest(z, ins[i]) >= above)
            return 0;
        above = lw_bdd_level(z, ins[i]);
    }
    return 1;
}

/* The minimal cut sets of one gate from those of its inputs (each
 * minimal). */
static lw_bref gate_family(lw_bdd *z, const lw_gate *g, lw_bref *ins,
                           const uint32_t *var_level, lw_bref *row)
{
    switch (g->kind) {
    case LW_GATE_FALSE: return 0;
    case LW_GATE_TRUE: return 1;
    case LW_GATE_VAR:
        return lw_bdd_mk(z, var_level[g->var], 1, 0);
    case LW_GATE_AND:
    case LW_GATE_OR: {
        lw_bdd_sort_deepest_first(z, ins, g->nin);
        int dis = disjoint_inputs(z, ins, g->nin);
        lw_bref acc = g->kind == LW_GATE_AND ? 1 : 0;
        for (uint32_t i = 0; i < g->nin && acc != LW_BREF_INVALID; i++) {
            acc = g->kind == LW_GATE_AND ? lw_zdd_product(z, ins[i], acc)
                                         : lw_zdd_union(z, ins[i], acc);
            if (!dis)
                acc = lw_zdd_minimal(z, acc);
        }
        if (dis)
            lw_zdd_mark_minimal(z, acc);
        return acc;
    }
    case LW_GATE_VOTE: {
        /* row[j] = at least j of ins[i..n-1], as in lw_bdd_atleast */
        uint32_t k = g->k, n = g->nin;
        if (k == 0)
            return 1;
        if (k > n)
            return 0;
        /* inputs sorted deepest first work like the BDD's order: each
         * step only walks the new input (at least j of n does not depend
         * on the inputs' order) */
        lw_bdd_sort_deepest_first(z, ins, n);
        int dis = disjoint_inputs(z, ins, n);
        row[0] = 1;
        for (uint32_t j = 1; j <= k; j++)
            row[j] = 0;
        for (uint32_t i = 0; i < n; i++) {
            uint32_t top = i + 1 < k ? i + 1 : k;
            uint32_t need_lo = k > n - 1 - i ? k - (n - 1 - i) : 1;
            for (uint32_t j = top; j >= 1 && j >= need_lo; j--) {
                lw_bref t = lw_zdd_product(z, ins[i], row[j - 1]);
                row[j] = lw_zdd_union(z, t, row[j]);
                if (!dis)
                    row[j] = lw_zdd_minimal(z, row[j]);
                if (row[j] == LW_BREF_INVALID)
                    return LW_BREF_INVALID;
            }
        }
        if (dis)
            lw_zdd_mark_minimal(z, row[k]);
        return row[k];
    }
    }
    return LW_BREF_INVALID;
}

static lw_status family_from_network(const lw_network *net, uint32_t root,
                                     const uint32_t *var_level,
                                     uint32_t nlevels,
                                     const uint32_t *level_var,
                                     const double *q, size_t max_nodes,
                                     lw_cut_family **out, lw_error *err)
{
    *out = NULL;
    size_t ng = net->ngates + 1;
    lw_cut_family *f = family_alloc(nlevels, q, max_nodes);
    lw_bref *memo = lw_malloc(ng * sizeof *memo);
    uint32_t *stack = lw_malloc(ng * sizeof *stack);
    uint32_t *pos = lw_malloc(ng * sizeof *pos);
    lw_bref *ins = NULL, *row = NULL;
    size_t cap_ins = 0, cap_row = 0;
    lw_status st = LW_OK;
    if (!f || !memo || !stack || !pos)
        goto oom;
    for (size_t i = 0; i < ng; i++)
        memo[i] = LW_BREF_INVALID;
    /* post-order over the gates under 'root', each once */
    size_t sp = 0;
    stack[sp] = root;
    pos[sp] = 0;
    sp++;
    lw_bref r = LW_BREF_INVALID;
    while (sp) {
        uint32_t g = stack[sp - 1];
        const lw_gate *gt = &net->gates[g];
        if (pos[sp - 1] < gt->nin) {
            uint32_t c = net->inputs[gt->first + pos[sp - 1]++];
            if (memo[c] == LW_BREF_INVALID) {
                stack[sp] = c;
                pos[sp] = 0;
                sp++;
            }
            continue;
        }
        sp--;
        if (memo[g] != LW_BREF_INVALID)
            continue;       /* reached twice before it was done */
        lw_bref *ni = lw_grow(ins, &cap_ins, gt->nin + 1, sizeof *ni);
        lw_bref *nr = lw_grow(row, &cap_row, gt->k + 2, sizeof *nr);
        if (ni)
            ins = ni;
        if (nr)
            row = nr;
        if (!ni || !nr)
            goto oom;
        for (uint32_t i = 0; i < gt->nin; i++)
            ins[i] = memo[net->inputs[gt->first + i]];
        r = gate_family(f->z, gt, ins, var_level, row);
        if (r == LW_BREF_INVALID)
            break;
        memo[g] = r;
    }
    r = memo[root];
    lw_free(memo);
    lw_free(stack);
    lw_free(pos);
    lw_free(ins);
    lw_free(row);
    if (r == LW_BREF_INVALID && lw_bdd_status(f->z) == LW_OK) {
        lw_cut_family_free(f);
        return lw_error_oom(err);
    }
    st = family_finish(f, r, level_var, err);
    if (st == LW_OK)
        *out = f;
    return st;
oom:
    lw_free(memo);
    lw_free(stack);
    lw_free(pos);
    lw_free(ins);
    lw_free(row);
    lw_cut_family_free(f);
    return lw_error_oom(err);
}

/* ---- the public builders, on a large stack when the order is deep ---- */

typedef struct build_job {
    const lw_diagram *d;        /* from the BDD, or */
    const lw_network *net;      /* from the network */
    uint32_t root, nlevels;
    const uint32_t *var_level, *level_var;
    const double *q;
    size_t max_nodes;
    lw_cut_family **out;
    lw_error *err;
    lw_status st;
} build_job;

static void build_run(void *arg)
{
    build_job *j = arg;
    j->st = j->d ? family_new(j->d, j->q, j->max_nodes, j->out, j->err)
                 : family_from_network(j->net, j->root, j->var_level,
                                       j->nlevels, j->level_var, j->q,
                                       j->max_nodes, j->out, j->err);
}

static lw_status build(build_job *j)
{
    lw_deep_call_past(j->nlevels, build_run, j);
    return j->st;
}

lw_status lw_cut_family_new(const lw_diagram *d, const double *q,
                            size_t max_nodes, lw_cut_family **out,
                            lw_error *err)
{
    build_job j = {d, NULL, 0, d->nlevels, NULL, NULL, q, max_nodes, out,
                   err, LW_OK};
    return build(&j);
}

lw_status lw_cut_family_from_network(const lw_network *net, uint32_t root,
                                     const uint32_t *var_level,
                                     uint32_t nlevels,
                                     const uint32_t *level_var,
                                     const double *q, size_t max_nodes,
                                     lw_cut_family **out, lw_error *err)
{
    build_job j = {NULL, net, root, nlevels, var_level, level_var, q,
                   max_nodes, out, err, LW_OK};
    return build(&j);
}

void lw_cut_family_free(lw_cut_family *f)
{
    if (!f)
        return;
    lw_bdd_free(f->z);
    lw_diagram_free(f->fam);
    lw_free(f->q);
    lw_free(f->count);
    lw_free(f->sum);
    lw_free(f->best);
    lw_free(f);
}

double lw_cut_family_count(const lw_cut_family *f)
{
    return f->count[f->fam->root];
}

double lw_cut_family_rare_event(const lw_cut_family *f)
{
    return f->sum[f->fam->root];
}

size_t lw_cut_family_nodes(const lw_cut_family *f) { return f->fam->n; }

lw_status lw_cut_family_fussell_vesely(const lw_cut_family *f, double *fv,
                                       lw_error *err)
{
    const lw_diagram *z = f->fam;
    double *t = lw_calloc(z->n, sizeof *t);
    if (!t)
        return lw_error_oom(err);
    for (uint32_t l = 0; l < f->nlevels; l++)
        fv[l] = 0.0;
    t[z->root] = 1.0;
    for (uint32_t i = z->n; i-- > 2;) {
        double p = f->q[z->level[i]];
        uint32_t h = z->hi[i];
        t[z->lo[i]] += t[i];
        t[h] += t[i] * p;
        fv[z->level[i]] += t[i] * p * f->sum[h];
    }
    double total = f->sum[z->root];
    for (uint32_t l = 0; l < f->nlevels; l++)
        fv[l] = total > 0 ? fv[l] / total : 0.0;
    lw_free(t);
    return LW_OK;
}

/* ---- enumeration ------------------------------------------------------ */

typedef struct walk {
    const lw_cut_family *f;
    uint32_t *path;         /* levels taken on hi edges */
    int (*fn)(void *, const uint32_t *, size_t, double);
    void *ud;
    int stop;
} walk;

static void each_rec(walk *w, uint32_t n, size_t depth, double prob)
{
    const lw_diagram *z = w->f->fam;
    while (!w->stop) {
        if (n == 0)
            return;
        if (n == 1) {
            if (w->fn(w->ud, w->path, depth, prob))
                w->stop = 1;
            return;
        }
        w->path[depth] = z->level[n];
        each_rec(w, z->hi[n], depth + 1, prob * w->f->q[z->level[n]]);
        n = z->lo[n];       /* loop instead of recursing on lo */
    }
}

static void each_run(void *arg)
{
    walk *w = arg;
    each_rec(w, w->f->fam->root, 0, 1.0);
}

lw_status lw_cut_family_each(const lw_cut_family *f,
                             int (*fn)(void *, const uint32_t *, size_t,
                                       double),
                             void *ud, lw_error *err)
{
    walk w = {f, NULL, fn, ud, 0};
    w.path = lw_malloc((f->nlevels + 1) * sizeof *w.path);
    if (!w.path)
        return lw_error_oom(err);
    /* one frame per element of the set being listed */
    lw_deep_call_past(f->nlevels, each_run, &w);
    lw_free(w.path);
    return LW_OK;
}

static int add_log(void *ud, const uint32_t *levels, size_t order,
                   double prob)
{
    (void)levels;
    (void)order;
    double *acc = ud;
    *acc += log1p(-prob);
    return 0;
}

lw_status lw_cut_family_upper_bound(const lw_cut_family *f, double max_sets,
                                    double *out, lw_error *err)
{
    *out = 0.0;
    if (lw_cut_family_count(f) > max_sets)
        return LW_ELIMIT;
    double acc = 0.0;
    lw_status st = lw_cut_family_each(f, add_log, &acc, err);
    if (st == LW_OK)
        *out = -expm1(acc);
    return st;
}

/* ---- best-first top N ------------------------------------------------- */

typedef struct state {
    uint32_t node;          /* family node still to complete */
    uint32_t order;
    uint32_t parent;        /* state index, UINT32_MAX at the root */
    uint32_t level;         /* level taken on the hi edge into this state,
                               UINT32_MAX when it came by a lo edge */
    double prob;            /* product so far */
    double key;             /* prob x best completion, to 40 bits */
} state;

/* The search pops the state whose best completion is most probable.
 * Bounds are compared to 40 bits (about 1e-12 relative; subnormal ones
 * exactly, since clearing their low bits would clear the value): equal sets
 * (a vote over events of one probability has billions) and sets equal
 * but for rounding then tie, and a tie goes to the state nearest its end
 * (the deepest node), then the newest, so that a search among equals
 * runs straight down to a set instead of widening over all of them. */
static double bound_key(double x)
{
    /* below DBL_MIN the mantissa bits are the value itself: keep it */
    if (!(x >= DBL_MIN))
        return x;
    uint64_t u;
    memcpy(&u, &x, sizeof u);
    u &= ~(uint64_t)0xfff;
    memcpy(&x, &u, sizeof x);
    return x;
}

typedef struct heap {
    uint32_t *a;            /* state indices */
    size_t n, cap;
    const state *s;
    const uint32_t *level;  /* family node -> level (terminals last) */
} heap;

static inline int before(const heap *h, uint32_t x, uint32_t y)
{
    const state *a = &h->s[x], *b = &h->s[y];
    if (a->key != b->key)
        return a->key > b->key;
    uint32_t la = h->level[a->node], lb = h->level[b->node];
    if (la != lb)
        return la > lb;
    return x > y;
}

static int heap_push(heap *h, uint32_t x)
{
    uint32_t *a = lw_grow(h->a, &h->cap, h->n + 1, sizeof *a);
    if (!a)
        return 0;
    h->a = a;
    size_t i = h->n++;
    while (i > 0) {
        size_t p = (i - 1) / 2;
        if (!before(h, x, a[p]))
            break;
        a[i] = a[p];
        i = p;
    }
    a[i] = x;
    return 1;
}

static uint32_t heap_pop(heap *h)
{
    uint32_t *a = h->a;
    uint32_t top = a[0];
    uint32_t x = a[--h->n];
    size_t i = 0;
    for (;;) {
        size_t l = 2 * i + 1, r = l + 1, m = i;
        uint32_t best = x;
        if (l < h->n && before(h, a[l], best)) {
            m = l;
            best = a[l];
        }
        if (r < h->n && before(h, a[r], best))
            m = r;
        if (m == i)
            break;
        a[i] = a[m];
        i = m;
    }
    if (h->n)
        a[i] = x;
    return top;
}

void lw_level_sets_free(lw_level_set *sets, size_t n)
{
    if (!sets)
        return;
    for (size_t i = 0; i < n; i++)
        lw_free(sets[i].levels);
    lw_free(sets);
}

lw_status lw_cut_family_top(const lw_cut_family *f, size_t top,
                            double cutoff, size_t max_order,
                            lw_level_set **sets_out, size_t *nsets,
                            bool *more, lw_error *err)
{
    const lw_diagram *z = f->fam;
    *sets_out = NULL;
    *nsets = 0;
    *more = false;
    state *st = NULL;
    size_t nst = 0, cap_st = 0;
    heap h = {NULL, 0, 0, NULL, z->level};
    lw_level_set *sets = NULL;
    size_t ns = 0, cap_sets = 0;
    st = lw_grow(st, &cap_st, 1, sizeof *st);
    if (!st)
        goto oom;
    st[0] = (state){z->root, 0, UINT32_MAX, UINT32_MAX, 1.0,
                    bound_key(f->best[z->root])};
    nst = 1;
    h.s = st;
    if (z->root != 0 && !heap_push(&h, 0))
        goto oom;
    while (h.n) {
        uint32_t si = heap_pop(&h);
        state cur = st[si];
        double bound = cur.prob * f->best[cur.node];
        if (bound < cutoff || (top && ns >= top)) {
            *more = true;
            break;
        }
        if (cur.node == 1) {
            lw_level_set *s2 = lw_grow(sets, &cap_sets, ns + 1, sizeof *s2);
            if (!s2)
                goto oom;
            sets = s2;
            lw_level_set *set = &sets[ns];
            set->order = cur.order;
            set->probability = cur.prob;
            set->levels = lw_malloc((cur.order + 1) * sizeof *set->levels);
            if (!set->levels)
                goto oom;
            ns++;
            size_t k = cur.order;
            for (uint32_t x = si; x != UINT32_MAX; x = st[x].parent)
                if (st[x].level != UINT32_MAX)
                    set->levels[--k] = st[x].level;
            continue;
        }
        if (cur.node == 0)
            continue;
        /* expand: lo keeps the product, hi takes the level */
        state *s2 = lw_grow(st, &cap_st, nst + 2, sizeof *s2);
        if (!s2)
            goto oom;
        st = s2;
        h.s = st;
        uint32_t lv = z->level[cur.node];
        uint32_t lo = z->lo[cur.node], hi = z->hi[cur.node];
        if (lo != 0) {
            st[nst] = (state){lo, cur.order, si, UINT32_MAX, cur.prob,
                              bound_key(cur.prob * f->best[lo])};
            if (!heap_push(&h, (uint32_t)nst++))
                goto oom;
        }
        if (!max_order || cur.order + 1 <= max_order) {
            double pr = cur.prob * f->q[lv];
            st[nst] = (state){hi, cur.order + 1, si, lv, pr,
                              bound_key(pr * f->best[hi])};
            if (!heap_push(&h, (uint32_t)nst++))
                goto oom;
        } else {
            *more = true;
        }
    }
    lw_free(st);
    lw_free(h.a);
    *sets_out = sets;
    *nsets = ns;
    return LW_OK;
oom:
    lw_free(st);
    lw_free(h.a);
    lw_level_sets_free(sets, ns);
    return lw_error_oom(err);
}
