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
 *   'without' recurses on the C stack to a depth of about twice the number
 *   of levels; the command-line tool runs analyses on a large stack.
 */
#include "layerwise/bdd.h"

#include <math.h>
#include <string.h>

#include "layerwise/alloc.h"

struct lw_cut_family {
    lw_bdd *z;              /* the ZBDD manager */
    lw_diagram *fam;        /* frozen family */
    double *q;              /* per level (copy) */
    uint32_t nlevels;
    double *count;          /* per frozen node */
    double *sum;            /* rare-event sum below each node */
    double *best;           /* most probable completion below each node */
};

lw_status lw_cut_family_new(const lw_diagram *d, const double *q,
                            size_t max_nodes, lw_cut_family **out,
                            lw_error *err)
{
    *out = NULL;
    lw_cut_family *f = lw_calloc(1, sizeof *f);
    uint32_t *memo = lw_malloc(d->n * sizeof *memo);  /* BDD node -> ZBDD */
    if (!f || !memo)
        goto oom;
    f->nlevels = d->nlevels;
    f->q = lw_malloc((d->nlevels + 1) * sizeof *f->q);
    f->z = lw_zdd_new(d->nlevels, max_nodes);
    if (!f->q || !f->z)
        goto oom;
    memcpy(f->q, q, d->nlevels * sizeof *q);
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
    uint32_t root = memo[d->root];
    if (lw_bdd_status(f->z) == LW_ELIMIT) {
        lw_error_set(err, LW_ELIMIT, NULL, 0, "the cut-set family reached "
                     "the limit of %zu nodes (--max-nodes; the work to build "
                     "it is bounded by 64 steps a node); raise it, or "
                     "analyse a smaller model or a narrower vote",
                     lw_bdd_max_nodes(f->z));
        lw_free(memo);
        lw_cut_family_free(f);
        return LW_ELIMIT;
    }
    if (root == LW_BREF_INVALID)
        goto oom;
    lw_free(memo);
    memo = NULL;
    if (lw_diagram_freeze(f->z, root, d->nlevels, d->level_var, &f->fam,
                          err) != LW_OK) {
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
    *out = f;
    return LW_OK;
oom:
    lw_free(memo);
    lw_cut_family_free(f);
    return lw_error_oom(err);
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

lw_status lw_cut_family_each(const lw_cut_family *f,
                             int (*fn)(void *, const uint32_t *, size_t,
                                       double),
                             void *ud, lw_error *err)
{
    walk w = {f, NULL, fn, ud, 0};
    w.path = lw_malloc((f->nlevels + 1) * sizeof *w.path);
    if (!w.path)
        return lw_error_oom(err);
    each_rec(&w, f->fam->root, 0, 1.0);
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
    uint32_t node;
    uint32_t order;
    uint32_t parent;        /* state index, UINT32_MAX at the root */
    uint32_t level;         /* level taken on the hi edge into this state,
                               UINT32_MAX when it came by a lo edge */
    double prob;            /* product so far */
} state;

typedef struct heap {
    uint32_t *a;            /* state indices */
    size_t n, cap;
    const state *s;
    const double *best;
} heap;

static inline double prio(const heap *h, uint32_t i)
{
    return h->s[i].prob * h->best[h->s[i].node];
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
        if (prio(h, a[p]) >= prio(h, x))
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
        double pm = prio(h, x);
        if (l < h->n && prio(h, a[l]) > pm) {
            m = l;
            pm = prio(h, a[l]);
        }
        if (r < h->n && prio(h, a[r]) > pm)
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
    heap h = {NULL, 0, 0, NULL, f->best};
    lw_level_set *sets = NULL;
    size_t ns = 0, cap_sets = 0;
    st = lw_grow(st, &cap_st, 1, sizeof *st);
    if (!st)
        goto oom;
    st[0] = (state){z->root, 0, UINT32_MAX, UINT32_MAX, 1.0};
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
            st[nst] = (state){lo, cur.order, si, UINT32_MAX, cur.prob};
            if (!heap_push(&h, (uint32_t)nst++))
                goto oom;
        }
        if (!max_order || cur.order + 1 <= max_order) {
            st[nst] = (state){hi, cur.order + 1, si, lv,
                              cur.prob * f->q[lv]};
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
