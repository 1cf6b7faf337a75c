/*
 * bdd.c - reduced ordered binary decision diagrams (and ZBDD storage).
 *
 * HOW IT WORKS
 *   A node is a record {level, hi, lo, next} in one growable arena; its
 *   name is its index.  Indices 0 and 1 are the terminals false and true
 *   (for a ZBDD: the empty family and the family holding the empty set).
 *   Level 0 is the top of the variable order; terminals sit at level
 *   UINT32_MAX, below every variable.
 *
 *       arena:  [0] F  [1] T  [2] (l, hi, lo, next) [3] ...
 *       unique: bucket[hash(l, hi, lo)] -> node -> node.next -> ... -> 0
 *       cache:  entry[hash(op, f, g) & mask] = {f, g, op, result}  (lossy)
 *
 *   mk(l, hi, lo) applies the reduction rule (BDD: hi == lo gives hi; ZBDD:
 *   hi == 0 gives lo), then finds the triple in the unique table or appends
 *   a new record.  Because a node is made only after both children exist,
 *   a node's index is always larger than its children's: index order is a
 *   topological order, which the probability and importance passes use
 *   directly (bottom-up = increasing index, top-down = decreasing).
 *
 *   AND, OR and NOT are Shannon expansions on the top variable, with the
 *   terminal cases first and the operation cache consulted before
 *   expanding.  They run on an explicit stack, not the C stack, because a
 *   path may cross as many levels as the model has variables.  k-of-n is
 *   built by dynamic programming over the inputs:
 *       T_i(j) = g_i AND T_{i+1}(j-1)  OR  T_{i+1}(j),  T(0) = true,
 *   the usual ITE recursion ite(g_i, T_{i+1}(j-1), T_{i+1}(j)) written
 *   without NOT, which is exact because T_{i+1}(j) implies T_{i+1}(j-1).
 *
 * INVARIANTS
 *   - no node has hi == lo (BDD) or hi == 0 (ZBDD);
 *   - no two nodes share (level, hi, lo), so equal functions are equal
 *     indices (canonical for the fixed order);
 *   - level(node) < level(hi), level(lo): children lie strictly below.
 *
 * LIMITS
 *   Nodes are never collected: a manager lives for one analysis.  The
 *   number of nodes made is bounded by max_nodes; past it every operation
 *   returns LW_BREF_INVALID and lw_bdd_status says LW_ELIMIT, so a model
 *   whose BDD explodes stops cleanly instead of exhausting memory.  A
 *   record takes 16 bytes, the unique table 4 bytes a node, the cache
 *   16 bytes an entry (at most a quarter as many entries as nodes).
 */
#include "layerwise/bdd.h"

#include <string.h>

#include "layerwise/alloc.h"

typedef struct node {
    uint32_t level;
    uint32_t hi;
    uint32_t lo;
    uint32_t next;      /* unique-table chain, 0 ends it */
} node;

typedef struct centry {
    uint32_t f, g, op, r;
} centry;

enum { OP_AND = 1, OP_OR = 2, OP_NOT = 3, OP_WITHOUT = 4, OP_UNION = 5,
       OP_PRODUCT = 6, OP_MINIMAL = 7 };

struct lw_bdd {
    int zdd;            /* reduction rule: 0 BDD, 1 ZBDD */
    uint32_t nlevels;
    size_t count;       /* nodes made, terminals included */
    size_t cap;         /* records allocated */
    size_t max_nodes;
    node *nodes;
    uint32_t *buckets;
    size_t nbuckets;    /* power of two */
    centry *cache;
    size_t ncache;      /* power of two */
    lw_status status;
    uint64_t work;          /* 'without' steps taken, bounded like nodes */
    uint32_t *deep;         /* ZBDD only: per node, the deepest level of
                               any set below it, and DEEP_EMPTY when the
                               family holds the empty set */
    struct frame *stack;    /* apply's explicit stack */
    size_t stack_cap;
};

typedef struct frame {
    uint32_t f, g;
    uint32_t level;
    uint32_t hi;
    uint32_t state;
} frame;

#define DEEP_EMPTY 0x80000000u      /* the family holds the empty set */
#define DEEP_MIN 0x40000000u        /* the family is known to be minimal */
#define DEEP_LEVEL 0x3fffffffu

static inline uint32_t hash3(uint32_t a, uint32_t b, uint32_t c)
{
    uint64_t h = (uint64_t)a * 0x9E3779B97F4A7C15ull;
    h ^= (uint64_t)b * 0xC2B2AE3D27D4EB4Full;
    h ^= (uint64_t)c * 0x165667B19E3779F9ull;
    h ^= h >> 31;
    h *= 0xBF58476D1CE4E5B9ull;
    return (uint32_t)(h ^ (h >> 29));
}

static lw_bdd *manager_new(uint32_t nlevels, size_t max_nodes, int zdd)
{
    lw_bdd *b = lw_calloc(1, sizeof *b);
    if (!b)
        return NULL;
    b->zdd = zdd;
    b->nlevels = nlevels;
    if (zdd && nlevels > DEEP_LEVEL) {      /* levels share a word with flags */
        lw_free(b);
        return NULL;
    }
    b->max_nodes = max_nodes ? max_nodes : 20000000u;
    if (b->max_nodes > UINT32_MAX - 2)
        b->max_nodes = UINT32_MAX - 2;
    b->cap = 1024;
    b->nbuckets = 1024;
    b->ncache = 1024;
    b->nodes = lw_malloc(b->cap * sizeof *b->nodes);
    b->buckets = lw_calloc(b->nbuckets, sizeof *b->buckets);
    b->cache = lw_calloc(b->ncache, sizeof *b->cache);
    if (zdd)
        b->deep = lw_malloc(b->cap * sizeof *b->deep);
    if (!b->nodes || !b->buckets || !b->cache || (zdd && !b->deep)) {
        lw_bdd_free(b);
        return NULL;
    }
    for (int t = 0; t < 2; t++) {
        b->nodes[t].level = LW_LEVEL_TERMINAL;
        b->nodes[t].hi = b->nodes[t].lo = (uint32_t)t;
        b->nodes[t].next = 0;
    }
    if (zdd) {
        b->deep[0] = DEEP_MIN;              /* the empty family */
        b->deep[1] = DEEP_EMPTY | DEEP_MIN; /* { {} } */
    }
    b->count = 2;
    return b;
}

lw_bdd *lw_bdd_new(uint32_t nlevels, size_t max_nodes)
{
    return manager_new(nlevels, max_nodes, 0);
}

lw_bdd *lw_zdd_new(uint32_t nlevels, size_t max_nodes)
{
    return manager_new(nlevels, max_nodes, 1);
}

void lw_bdd_free(lw_bdd *b)
{
    if (!b)
        return;
    lw_free(b->nodes);
    lw_free(b->buckets);
    lw_free(b->cache);
    lw_free(b->stack);
    lw_free(b->deep);
    lw_free(b);
}

lw_status lw_bdd_status(const lw_bdd *b) { return b->status; }
size_t lw_bdd_nodes(const lw_bdd *b) { return b->count; }
size_t lw_bdd_max_nodes(const lw_bdd *b) { return b->max_nodes; }

size_t lw_bdd_bytes(const lw_bdd *b)
{
    return b->cap * sizeof(node) + b->nbuckets * sizeof(uint32_t) +
           b->ncache * sizeof(centry) + b->stack_cap * sizeof(frame);
}

uint32_t lw_bdd_level(const lw_bdd *b, lw_bref f) { return b->nodes[f].level; }
lw_bref lw_bdd_hi(const lw_bdd *b, lw_bref f) { return b->nodes[f].hi; }
lw_bref lw_bdd_lo(const lw_bdd *b, lw_bref f) { return b->nodes[f].lo; }

/* Double the unique table; a failure is harmless (chains get longer). */
static void grow_buckets(lw_bdd *b)
{
    size_t nb = b->nbuckets * 2;
    uint32_t *bk = lw_calloc(nb, sizeof *bk);
    if (!bk)
        return;
    for (size_t i = 2; i < b->count; i++) {
        node *n = &b->nodes[i];
        uint32_t h = hash3(n->level, n->hi, n->lo) & (uint32_t)(nb - 1);
        n->next = bk[h];
        bk[h] = (uint32_t)i;
    }
    lw_free(b->buckets);
    b->buckets = bk;
    b->nbuckets = nb;
}

/* Grow the cache with the node count (up to nodes / 4); harmless on
 * failure, and a lossy cache may simply be replaced. */
static void grow_cache(lw_bdd *b)
{
    size_t nc = b->ncache * 2;
    centry *c = lw_calloc(nc, sizeof *c);
    if (!c)
        return;
    lw_free(b->cache);
    b->cache = c;
    b->ncache = nc;
}

lw_bref lw_bdd_mk(lw_bdd *b, uint32_t level, lw_bref hi, lw_bref lo)
{
    if (b->status != LW_OK || hi == LW_BREF_INVALID || lo == LW_BREF_INVALID)
        return LW_BREF_INVALID;
    if (b->zdd ? hi == LW_BDD_FALSE : hi == lo)
        return b->zdd ? lo : hi;
    uint32_t h = hash3(level, hi, lo) & (uint32_t)(b->nbuckets - 1);
    for (uint32_t i = b->buckets[h]; i; i = b->nodes[i].next) {
        const node *n = &b->nodes[i];
        if (n->level == level && n->hi == hi && n->lo == lo)
            return i;
    }
    if (b->count >= b->max_nodes) {
        b->status = LW_ELIMIT;
        return LW_BREF_INVALID;
    }
    if (b->count == b->cap) {
        size_t ncap = b->cap + b->cap / 2;    /* 1.5x: less overshoot */
        if (ncap > b->max_nodes + 2)
            ncap = b->max_nodes + 2;
        node *nn = lw_realloc(b->nodes, ncap * sizeof *nn);
        if (!nn) {
            b->status = LW_ENOMEM;
            return LW_BREF_INVALID;
        }
        b->nodes = nn;
        if (b->zdd) {
            uint32_t *dp = lw_realloc(b->deep, ncap * sizeof *dp);
            if (!dp) {
                b->status = LW_ENOMEM;
                return LW_BREF_INVALID;
            }
            b->deep = dp;
        }
        b->cap = ncap;
    }
    uint32_t i = (uint32_t)b->count++;
    node *n = &b->nodes[i];
    n->level = level;
    n->hi = hi;
    n->lo = lo;
    n->next = b->buckets[h];
    b->buckets[h] = i;
    if (b->zdd) {
        uint32_t dh = b->deep[hi] & DEEP_LEVEL, dl = b->deep[lo] & DEEP_LEVEL;
        uint32_t d = level > dh ? level : dh;
        d = d > dl ? d : dl;
        b->deep[i] = d | (b->deep[lo] & DEEP_EMPTY);
    }
    if (b->count > b->nbuckets) {
        grow_buckets(b);
        if (b->ncache < b->count / 4)
            grow_cache(b);
    }
    return i;
}

lw_bref lw_bdd_var(lw_bdd *b, uint32_t level)
{
    return lw_bdd_mk(b, level, LW_BDD_TRUE, LW_BDD_FALSE);
}

/* Terminal cases; LW_BREF_INVALID when the operation must expand. */
static inline uint32_t terminal(uint32_t op, uint32_t f, uint32_t g)
{
    switch (op) {
    case OP_AND:
        if (f == 0 || g == 0) return 0;
        if (f == 1) return g;               /* 1 AND g = g */
        if (g == 1 || f == g) return f;     /* f AND 1 = f AND f = f */
        return LW_BREF_INVALID;
    case OP_OR:
        if (f == 1 || g == 1) return 1;
        if (f == 0) return g;               /* 0 OR g = g */
        if (g == 0 || f == g) return f;
        return LW_BREF_INVALID;
    default:                                /* NOT */
        if (f <= 1) return 1 - f;
        return LW_BREF_INVALID;
    }
}

static int push(lw_bdd *b, size_t *sp, uint32_t f, uint32_t g)
{
    if (*sp == b->stack_cap) {
        size_t nc = b->stack_cap ? b->stack_cap * 2 : 256;
        frame *s = lw_realloc(b->stack, nc * sizeof *s);
        if (!s) {
            b->status = LW_ENOMEM;
            return 0;
        }
        b->stack = s;
        b->stack_cap = nc;
    }
    frame *fr = &b->stack[(*sp)++];
    fr->f = f;
    fr->g = g;
    fr->state = 0;
    return 1;
}

/* AND / OR / NOT (g unused) by Shannon expansion on an explicit stack. */
static lw_bref apply(lw_bdd *b, uint32_t op, lw_bref f0, lw_bref g0)
{
    if (b->status != LW_OK || f0 == LW_BREF_INVALID || g0 == LW_BREF_INVALID)
        return LW_BREF_INVALID;
    size_t sp = 0;
    uint32_t ret = LW_BREF_INVALID;
    if (!push(b, &sp, f0, op == OP_NOT ? 0 : g0))
        return LW_BREF_INVALID;
    while (sp) {
        frame *fr = &b->stack[sp - 1];
        if (fr->state == 0) {
            uint32_t f = fr->f, g = fr->g;
            if (op != OP_NOT && f > g) {    /* AND, OR commute */
                fr->f = g;
                fr->g = f;
                f = fr->f;
                g = fr->g;
            }
            uint32_t r = terminal(op, f, g);
            if (r == LW_BREF_INVALID) {
                centry *c = &b->cache[hash3(op, f, g) &
                                      (uint32_t)(b->ncache - 1)];
                if (c->op == op && c->f == f && c->g == g)
                    r = c->r;
            }
            if (r != LW_BREF_INVALID) {
                ret = r;
                sp--;
                continue;
            }
            uint32_t lf = b->nodes[f].level;
            uint32_t lg = op == OP_NOT ? LW_LEVEL_TERMINAL : b->nodes[g].level;
            uint32_t lv = lf < lg ? lf : lg;
            fr->level = lv;
            fr->state = 1;
            uint32_t fh = lf == lv ? b->nodes[f].hi : f;
            uint32_t gh = op != OP_NOT && lg == lv ? b->nodes[g].hi : g;
            if (!push(b, &sp, fh, gh))
                return LW_BREF_INVALID;
        } else if (fr->state == 1) {
            fr->hi = ret;
            fr->state = 2;
            uint32_t f = fr->f, g = fr->g, lv = fr->level;
            uint32_t fl = b->nodes[f].level == lv ? b->nodes[f].lo : f;
            uint32_t gl = op != OP_NOT && b->nodes[g].level == lv
                              ? b->nodes[g].lo : g;
            if (!push(b, &sp, fl, gl))
                return LW_BREF_INVALID;
        } else {
            uint32_t r = lw_bdd_mk(b, fr->level, fr->hi, ret);
            if (r == LW_BREF_INVALID)
                return LW_BREF_INVALID;
            centry *c = &b->cache[hash3(op, fr->f, fr->g) &
                                  (uint32_t)(b->ncache - 1)];
            c->f = fr->f;
            c->g = fr->g;
            c->op = op;
            c->r = r;
            ret = r;
            sp--;
        }
    }
    return ret;
}

lw_bref lw_bdd_and(lw_bdd *b, lw_bref f, lw_bref g)
{
    return apply(b, OP_AND, f, g);
}

lw_bref lw_bdd_or(lw_bdd *b, lw_bref f, lw_bref g)
{
    return apply(b, OP_OR, f, g);
}

lw_bref lw_bdd_not(lw_bdd *b, lw_bref f)
{
    return apply(b, OP_NOT, f, 0);
}

lw_bref lw_bdd_atleast(lw_bdd *b, uint32_t k, const lw_bref *in, size_t n)
{
    if (k == 0)
        return LW_BDD_TRUE;
    if (k > n)
        return LW_BDD_FALSE;
    /* row[j] = at least j of in[i..n-1], for j = 0..k */
    lw_bref *row = lw_malloc((k + 1) * sizeof *row);
    if (!row) {
        b->status = LW_ENOMEM;
        return LW_BREF_INVALID;
    }
    row[0] = LW_BDD_TRUE;
    for (uint32_t j = 1; j <= k; j++)
        row[j] = LW_BDD_FALSE;
    for (size_t i = n; i-- > 0;) {
        size_t avail = n - i;           /* inputs in[i..n-1] */
        uint32_t top = avail < k ? (uint32_t)avail : k;
        size_t need_lo = k > i ? k - i : 1;   /* j below can't matter */
        /* (a copy: making nodes may move the arena) */
        uint32_t vl = in[i] > 1 ? b->nodes[in[i]].level : LW_LEVEL_TERMINAL;
        bool plain = in[i] > 1 && b->nodes[in[i]].hi == LW_BDD_TRUE &&
                     b->nodes[in[i]].lo == LW_BDD_FALSE;
        for (uint32_t j = top; j >= 1 && j >= need_lo; j--) {
            /* at least j of in[i..] = in[i] ? row[j-1] : row[j], because
             * row[j] implies row[j-1]; for a plain variable above both
             * that is one node (the general AND/OR below walks row[j]
             * whole, which made a 1500-of-3000 vote take hours) */
            if (plain && vl < lw_bdd_level(b, row[j - 1]) &&
                vl < lw_bdd_level(b, row[j])) {
                row[j] = lw_bdd_mk(b, vl, row[j - 1], row[j]);
            } else {
                lw_bref t = lw_bdd_and(b, in[i], row[j - 1]);
                row[j] = lw_bdd_or(b, t, row[j]);
            }
            if (row[j] == LW_BREF_INVALID) {
                lw_free(row);
                return LW_BREF_INVALID;
            }
        }
    }
    lw_bref r = row[k];
    lw_free(row);
    return r;
}

/* ZBDD: the sets of P that hold no set of Q (methods.md 7.6), memoised in
 * the manager's operation cache.  Recurses on the C stack, at most twice
 * the number of levels deep. */
lw_bref lw_zdd_without(lw_bdd *z, lw_bref P, lw_bref Q)
{
    if (P == LW_BREF_INVALID || Q == LW_BREF_INVALID || z->status != LW_OK)
        return LW_BREF_INVALID;
    /* its time is not bounded by the nodes it makes: bound the steps too
     * (64 per allowed node), so a family that cannot be built stops */
    if (++z->work > 64 * (uint64_t)z->max_nodes) {
        z->status = LW_ELIMIT;
        return LW_BREF_INVALID;
    }
    if (P == 0) return 0;
    if (Q == 0) return P;
    if (z->deep[Q] & DEEP_EMPTY)
        return 0;                   /* the empty set is inside every set */
    if (P == 1) return 1;           /* {} holds no non-empty set */
    if (P == Q) return 0;
    /* every element of P's sets lies above Q's top level: no set of Q
     * (all non-empty, all below that level) fits inside one of P */
    if ((z->deep[P] & DEEP_LEVEL) < z->nodes[Q].level)
        return P;
    centry *c = &z->cache[hash3(OP_WITHOUT, P, Q) & (uint32_t)(z->ncache - 1)];
    if (c->op == OP_WITHOUT && c->f == P && c->g == Q)
        return c->r;
    const node *p = &z->nodes[P], *q = &z->nodes[Q];
    uint32_t x = p->level, y = q->level;
    lw_bref r;
    if (x < y) {
        lw_bref ph = p->hi, pl = p->lo;
        lw_bref h = lw_zdd_without(z, ph, Q);
        lw_bref l = lw_zdd_without(z, pl, Q);
        r = lw_bdd_mk(z, x, h, l);
    } else if (x > y) {
        r = lw_zdd_without(z, P, q->lo);
    } else {
        lw_bref ph = p->hi, pl = p->lo, qh = q->hi, ql = q->lo;
        lw_bref h1 = lw_zdd_without(z, ph, qh);
        lw_bref h = lw_zdd_without(z, h1, ql);
        lw_bref l = lw_zdd_without(z, pl, ql);
        r = lw_bdd_mk(z, x, h, l);
    }
    if (r != LW_BREF_INVALID) {
        /* the arena may have moved, and the cache grown: look again */
        c = &z->cache[hash3(OP_WITHOUT, P, Q) & (uint32_t)(z->ncache - 1)];
        c->f = P;
        c->g = Q;
        c->op = OP_WITHOUT;
        c->r = r;
    }
    return r;
}

/* The step budget shared by the ZBDD operations: their time is not
 * bounded by the nodes they make (64 steps per allowed node). */
static inline int zstep(lw_bdd *z, lw_bref P, lw_bref Q)
{
    if (P == LW_BREF_INVALID || Q == LW_BREF_INVALID || z->status != LW_OK)
        return 0;
    if (++z->work > 64 * (uint64_t)z->max_nodes) {
        z->status = LW_ELIMIT;
        return 0;
    }
    return 1;
}

static inline lw_bref zcache_get(const lw_bdd *z, uint32_t op, lw_bref P,
                                 lw_bref Q)
{
    const centry *c = &z->cache[hash3(op, P, Q) & (uint32_t)(z->ncache - 1)];
    return c->op == op && c->f == P && c->g == Q ? c->r : LW_BREF_INVALID;
}

static inline void zcache_put(lw_bdd *z, uint32_t op, lw_bref P, lw_bref Q,
                              lw_bref r)
{
    if (r == LW_BREF_INVALID)
        return;
    centry *c = &z->cache[hash3(op, P, Q) & (uint32_t)(z->ncache - 1)];
    c->f = P;
    c->g = Q;
    c->op = op;
    c->r = r;
}

/* Union of two families (recursion on the C stack, like 'without'). */
lw_bref lw_zdd_union(lw_bdd *z, lw_bref P, lw_bref Q)
{
    if (!zstep(z, P, Q))
        return LW_BREF_INVALID;
    if (P == 0) return Q;
    if (Q == 0 || P == Q) return P;
    if (P > Q) {
        lw_bref t = P;
        P = Q;
        Q = t;
    }
    lw_bref r = zcache_get(z, OP_UNION, P, Q);
    if (r != LW_BREF_INVALID)
        return r;
    node p = z->nodes[P], q = z->nodes[Q];  /* copies: the arena moves */
    if (p.level < q.level) {
        r = lw_bdd_mk(z, p.level, p.hi, lw_zdd_union(z, p.lo, Q));
    } else if (p.level > q.level) {
        r = lw_bdd_mk(z, q.level, q.hi, lw_zdd_union(z, P, q.lo));
    } else {
        lw_bref h = lw_zdd_union(z, p.hi, q.hi);
        r = lw_bdd_mk(z, p.level, h, lw_zdd_union(z, p.lo, q.lo));
    }
    zcache_put(z, OP_UNION, P, Q, r);
    return r;
}

/* { p u q : p in P, q in Q }. */
lw_bref lw_zdd_product(lw_bdd *z, lw_bref P, lw_bref Q)
{
    if (!zstep(z, P, Q))
        return LW_BREF_INVALID;
    if (P == 0 || Q == 0) return 0;
    if (P == 1) return Q;
    if (Q == 1) return P;
    if (P > Q) {
        lw_bref t = P;
        P = Q;
        Q = t;
    }
    lw_bref r = zcache_get(z, OP_PRODUCT, P, Q);
    if (r != LW_BREF_INVALID)
        return r;
    node p = z->nodes[P], q = z->nodes[Q];
    if (p.level < q.level) {
        lw_bref h = lw_zdd_product(z, p.hi, Q);
        r = lw_bdd_mk(z, p.level, h, lw_zdd_product(z, p.lo, Q));
    } else if (p.level > q.level) {
        lw_bref h = lw_zdd_product(z, P, q.hi);
        r = lw_bdd_mk(z, q.level, h, lw_zdd_product(z, P, q.lo));
    } else {
        lw_bref a = lw_zdd_product(z, p.hi, q.hi);
        lw_bref b = lw_zdd_product(z, p.hi, q.lo);
        lw_bref c = lw_zdd_product(z, p.lo, q.hi);
        lw_bref h = lw_zdd_union(z, lw_zdd_union(z, a, b), c);
        r = lw_bdd_mk(z, p.level, h, lw_zdd_product(z, p.lo, q.lo));
    }
    zcache_put(z, OP_PRODUCT, P, Q, r);
    return r;
}

/* The minimal sets of P: for P = x.H + L (L's sets lack x),
 * min(P) = x.(min(H) without min(L)) + min(L).  Results are flagged, so
 * a family already made minimal costs nothing the next time. */
lw_bref lw_zdd_minimal(lw_bdd *z, lw_bref P)
{
    if (!zstep(z, P, 0))
        return LW_BREF_INVALID;
    if (z->deep[P] & DEEP_MIN)
        return P;
    lw_bref r = zcache_get(z, OP_MINIMAL, P, 0);
    if (r != LW_BREF_INVALID)
        return r;
    node p = z->nodes[P];
    lw_bref L = lw_zdd_minimal(z, p.lo);
    lw_bref H = lw_zdd_without(z, lw_zdd_minimal(z, p.hi), L);
    r = lw_bdd_mk(z, p.level, H, L);
    if (r != LW_BREF_INVALID)
        z->deep[r] |= DEEP_MIN;
    zcache_put(z, OP_MINIMAL, P, 0, r);
    return r;
}

uint32_t lw_zdd_deepest(const lw_bdd *z, lw_bref P)
{
    return P <= 1 ? LW_LEVEL_TERMINAL : (z->deep[P] & DEEP_LEVEL);
}

bool lw_zdd_has_empty(const lw_bdd *z, lw_bref P)
{
    return (z->deep[P] & DEEP_EMPTY) != 0;
}

void lw_zdd_mark_minimal(lw_bdd *z, lw_bref P)
{
    if (P != LW_BREF_INVALID)
        z->deep[P] |= DEEP_MIN;
}

/* r[i] goes before r[j]: the deeper top level first, then the smaller
 * index (a total order, so the result does not depend on the input's). */
static inline int deeper(const lw_bdd *b, lw_bref x, lw_bref y)
{
    uint32_t lx = b->nodes[x].level, ly = b->nodes[y].level;
    return lx != ly ? lx > ly : x < y;
}

static void sift_down(const lw_bdd *b, lw_bref *r, size_t i, size_t n)
{
    for (;;) {
        size_t c = 2 * i + 1;
        if (c >= n)
            return;
        if (c + 1 < n && deeper(b, r[c], r[c + 1]))
            c++;                        /* the later of the two children */
        if (!deeper(b, r[i], r[c]))
            return;
        lw_bref t = r[i];
        r[i] = r[c];
        r[c] = t;
        i = c;
    }
}

void lw_bdd_sort_deepest_first(const lw_bdd *b, lw_bref *r, size_t n)
{
    if (n <= 16) {                      /* gates are mostly small */
        for (size_t i = 1; i < n; i++) {
            lw_bref x = r[i];
            size_t j = i;
            while (j > 0 && deeper(b, x, r[j - 1])) {
                r[j] = r[j - 1];
                j--;
            }
            r[j] = x;
        }
        return;
    }
    /* heapsort: the heap's top is the element that goes last */
    for (size_t i = n / 2; i-- > 0;)
        sift_down(b, r, i, n);
    for (size_t end = n; end-- > 1;) {
        lw_bref t = r[0];
        r[0] = r[end];
        r[end] = t;
        sift_down(b, r, 0, end);
    }
}

size_t lw_bdd_size(const lw_bdd *b, lw_bref f)
{
    if (f == LW_BREF_INVALID)
        return 0;
    unsigned char *seen = lw_calloc(b->count, 1);
    uint32_t *stack = lw_malloc(b->count * sizeof *stack);
    size_t count = 0;
    if (seen && stack) {
        size_t sp = 0;
        stack[sp++] = f;
        seen[f] = 1;
        while (sp) {
            uint32_t x = stack[--sp];
            count++;
            if (x <= 1)
                continue;
            uint32_t c[2] = {b->nodes[x].hi, b->nodes[x].lo};
            for (int i = 0; i < 2; i++)
                if (!seen[c[i]]) {
                    seen[c[i]] = 1;
                    stack[sp++] = c[i];
                }
        }
    }
    lw_free(seen);
    lw_free(stack);
    return count;
}

/* ---- frozen diagrams ---------------------------------------------- */

static lw_status freeze(const lw_bdd *b, lw_bref f, uint32_t nlevels,
                        const uint32_t *level_var, int canonical,
                        lw_diagram **out, lw_error *err);

lw_status lw_diagram_freeze(const lw_bdd *b, lw_bref f, uint32_t nlevels,
                            const uint32_t *level_var, lw_diagram **out,
                            lw_error *err)
{
    return freeze(b, f, nlevels, level_var, 0, out, err);
}

lw_status lw_diagram_freeze_canonical(const lw_bdd *b, lw_bref f,
                                      uint32_t nlevels,
                                      const uint32_t *level_var,
                                      lw_diagram **out, lw_error *err)
{
    return freeze(b, f, nlevels, level_var, 1, out, err);
}

static lw_status freeze(const lw_bdd *b, lw_bref f, uint32_t nlevels,
                        const uint32_t *level_var, int canonical,
                        lw_diagram **out, lw_error *err)
{
    *out = NULL;
    size_t span = f > 1 ? (size_t)f + 1 : 2;
    uint32_t *map = lw_malloc(span * sizeof *map);
    lw_diagram *d = lw_calloc(1, sizeof *d);
    if (!map || !d)
        goto oom;
    /* Mark what f reaches by one sweep down the indices: a node's children
     * have smaller indices, so every node is marked before it is read. */
    memset(map, 0xff, span * sizeof *map);
    size_t n = 2;
    map[0] = map[1] = 0;
    if (f > 1)
        map[f] = 0;
    for (size_t i = span; i-- > 2;) {
        if (map[i] == UINT32_MAX)
            continue;
        n++;
        map[b->nodes[i].hi] = 0;
        map[b->nodes[i].lo] = 0;
    }
    d->n = (uint32_t)n;
    d->level = lw_malloc(n * sizeof *d->level);
    d->hi = lw_malloc(n * sizeof *d->hi);
    d->lo = lw_malloc(n * sizeof *d->lo);
    d->nlevels = nlevels;
    d->level_var = lw_malloc((nlevels + 1) * sizeof *d->level_var);
    d->lbeg = lw_malloc(((size_t)nlevels + 1) * sizeof *d->lbeg);
    if (!d->level || !d->hi || !d->lo || !d->level_var || !d->lbeg)
        goto oom;
    if (nlevels)
        memcpy(d->level_var, level_var, nlevels * sizeof *level_var);
    for (uint32_t l = 0; l <= nlevels; l++)
        d->lbeg[l] = (uint32_t)n;       /* all empty unless set below */
    /* Number the reachable nodes level by level, deepest first (a
     * counting sort; increasing index within a level).  Children lie on
     * deeper levels, so this is still a topological order, and nodes that
     * the passes touch together sit together in memory. */
    d->level[0] = d->level[1] = LW_LEVEL_TERMINAL;
    d->hi[0] = d->lo[0] = 0;
    d->hi[1] = d->lo[1] = 1;
    map[1] = 1;
    if (f > 1) {
        uint32_t *start = lw_calloc((size_t)nlevels + 1, sizeof *start);
        if (!start)
            goto oom;
        for (size_t i = 2; i <= f; i++)
            if (map[i] != UINT32_MAX)
                start[b->nodes[i].level]++;
        uint32_t pos = 2;
        for (uint32_t l = nlevels; l-- > 0;) {
            uint32_t c = start[l];
            start[l] = d->lbeg[l] = pos;
            pos += c;
        }
        if (!canonical) {
            for (size_t i = 2; i <= f; i++)
                if (map[i] != UINT32_MAX)
                    map[i] = start[b->nodes[i].level]++;
        } else {
            /* within a level, the order of a depth-first walk from the
             * root, hi first: it depends on the function only */
            uint32_t *stack = lw_malloc(n * sizeof *stack);
            if (!stack) {
                lw_free(start);
                goto oom;
            }
            size_t sp = 0;
            stack[sp++] = f;
            map[f] = start[b->nodes[f].level]++;
            while (sp) {
                const node *x = &b->nodes[stack[--sp]];
                lw_bref c[2] = {x->lo, x->hi};  /* hi is popped first */
                for (int k = 0; k < 2; k++)
                    if (c[k] > 1 && map[c[k]] == 0) {
                        map[c[k]] = start[b->nodes[c[k]].level]++;
                        stack[sp++] = c[k];
                    }
            }
            lw_free(stack);
        }
        lw_free(start);
        for (size_t i = 2; i <= f; i++) {
            if (map[i] == UINT32_MAX)
                continue;
            uint32_t k = map[i];
            d->level[k] = b->nodes[i].level;
            d->hi[k] = map[b->nodes[i].hi];
            d->lo[k] = map[b->nodes[i].lo];
        }
        lw_diagram_measure_edges(d);
    }
    d->root = f <= 1 ? f : map[f];
    lw_free(map);
    *out = d;
    return LW_OK;
oom:
    lw_free(map);
    lw_diagram_free(d);
    return lw_error_oom(err);
}

void lw_diagram_measure_edges(lw_diagram *d)
{
    uint32_t es = 0;
    const uint32_t *hi = d->hi, *lo = d->lo;
    for (uint32_t i = 2; i < d->n; i++) {
        uint32_t h = hi[i] > 1 ? i - hi[i] : 0, o = lo[i] > 1 ? i - lo[i] : 0;
        es = h > es ? h : es;
        es = o > es ? o : es;
    }
    d->edge_span = es;
}

int lw_diagram_same(const lw_diagram *a, const lw_diagram *b)
{
    if (a->n != b->n || a->nlevels != b->nlevels)
        return 0;
    uint32_t *map = lw_malloc((size_t)a->n * sizeof *map);
    uint32_t *back = lw_malloc((size_t)a->n * sizeof *back);
    uint32_t *stack = lw_malloc(((size_t)a->n + 1) * 2 * sizeof *stack);
    int same = 1;
    if (!map || !back || !stack) {
        same = -1;
        goto done;
    }
    memset(map, 0xff, (size_t)a->n * sizeof *map);
    memset(back, 0xff, (size_t)a->n * sizeof *back);
    map[0] = back[0] = 0;
    map[1] = back[1] = 1;
    /* each pair is pushed once (when first met), so the stack holds at
     * most one entry per node */
    size_t sp = 0;
    if (a->root > 1 && b->root > 1) {
        map[a->root] = b->root;
        back[b->root] = a->root;
        stack[sp++] = a->root;
    } else {
        same = a->root == b->root;
    }
    while (sp && same) {
        uint32_t x = stack[--sp], y = map[x];
        if (a->level[x] != b->level[y]) {
            same = 0;
            break;
        }
        uint32_t cx[2] = {a->hi[x], a->lo[x]}, cy[2] = {b->hi[y], b->lo[y]};
        for (int k = 0; k < 2 && same; k++) {
            if (map[cx[k]] == UINT32_MAX && back[cy[k]] == UINT32_MAX) {
                map[cx[k]] = cy[k];
                back[cy[k]] = cx[k];
                stack[sp++] = cx[k];
            } else if (map[cx[k]] != cy[k] || back[cy[k]] != cx[k]) {
                same = 0;
            }
        }
    }
done:
    lw_free(map);
    lw_free(back);
    lw_free(stack);
    return same;
}

void lw_diagram_free(lw_diagram *d)
{
    if (!d)
        return;
    lw_free(d->level);
    lw_free(d->hi);
    lw_free(d->lo);
    lw_free(d->level_var);
    lw_free(d->lbeg);
    lw_free(d);
}

double lw_diagram_prob(const lw_diagram *d, const double *q, double *w)
{
    w[0] = 0.0;
    w[1] = 1.0;
    const uint32_t *lv = d->level, *hi = d->hi, *lo = d->lo;
    for (uint32_t i = 2; i < d->n; i++) {
        double p = q[lv[i]];
        w[i] = p * w[hi[i]] + (1.0 - p) * w[lo[i]];
    }
    return w[d->root];
}

double lw_diagram_prob_diff(const lw_diagram *d, const double *q, double *w,
                            double *diff)
{
    /* lw_diagram_prob's pass, written the same way (so P is the same to
     * the last bit), keeping P(hi) - P(lo) while both are at hand: a
     * sequential store beside the node value */
    w[0] = 0.0;
    w[1] = 1.0;
    diff[0] = diff[1] = 0.0;
    const uint32_t *restrict lv = d->level, *restrict hi = d->hi,
                             *restrict lo = d->lo;
    double *restrict dd = diff;
    for (uint32_t i = 2; i < d->n; i++) {
        double p = q[lv[i]], h = w[hi[i]], o = w[lo[i]];
        w[i] = p * h + (1.0 - p) * o;
        dd[i] = h - o;
    }
    return w[d->root];
}

double lw_diagram_birnbaum_into(const lw_diagram *d, const double *q,
                                double *birnbaum, double *wr)
{
    double P = lw_diagram_prob_diff(d, q, wr, wr + d->n);
    lw_diagram_birnbaum_given(d, q, wr + d->n, birnbaum, wr);
    return P;
}

/* The top-down pass of lw_diagram_birnbaum_given; slot(i) = i & mk.  With
 * ring = 0 every node has its own slot and nothing needs clearing. */
static inline void push_down(const lw_diagram *d, const double *q,
                             const double *D, double *birnbaum,
                             double *reach, uint32_t mk, int ring)
{
    const uint32_t *hi = d->hi, *lo = d->lo;
    reach[d->root & mk] = 1.0;
    for (uint32_t l = 0; l < d->nlevels; l++) {
        uint32_t beg = d->lbeg[l], end = l ? d->lbeg[l - 1] : d->n;
        if (beg >= end)
            continue;
        double p = q[l], acc0 = 0.0, acc1 = 0.0;
        uint32_t i = end;
        while (i >= beg + 2) {
            i -= 2;
            uint32_t h1 = hi[i + 1], o1 = lo[i + 1], h0 = hi[i], o0 = lo[i];
            double r1 = reach[(i + 1) & mk], r0 = reach[i & mk];
            if (ring) {
                reach[(i + 1) & mk] = 0.0;
                reach[i & mk] = 0.0;
            }
            double a1 = r1 * p, a0 = r0 * p;
            if (h1 > 1)
                reach[h1 & mk] += a1;
            if (o1 > 1)
                reach[o1 & mk] += r1 - a1;
            if (h0 > 1)
                reach[h0 & mk] += a0;
            if (o0 > 1)
                reach[o0 & mk] += r0 - a0;
            acc1 += r1 * D[i + 1];
            acc0 += r0 * D[i];
        }
        if (i > beg) {
            i--;
            uint32_t h0 = hi[i], o0 = lo[i];
            double r0 = reach[i & mk], a0 = r0 * p;
            if (ring)
                reach[i & mk] = 0.0;
            if (h0 > 1)
                reach[h0 & mk] += a0;
            if (o0 > 1)
                reach[o0 & mk] += r0 - a0;
            acc0 += r0 * D[i];
        }
        birnbaum[l] = acc0 + acc1;
    }
}

static int ring_always;              /* lw_diagram_ring_for_tests */
static unsigned long ring_passes;

unsigned long lw_diagram_ring_for_tests(int on)
{
    unsigned long n = ring_passes;
    ring_always = on;
    ring_passes = 0;
    return n;
}

void lw_diagram_birnbaum_given(const lw_diagram *d, const double *q,
                               const double *node_diff, double *birnbaum,
                               double *reach)
{
    /* One top-down pass, level by level from the top: the probability of
     * reaching each node is pushed into its children, and the node adds
     * reach x (P(hi) - P(lo)) to its level's sum.  A level's nodes have
     * no children on their own level, so they are taken two at a time
     * with two sums.  Nothing is pushed into a terminal: its reach is
     * never read, and in a monotone diagram a fifth of all nodes have
     * hi = 1, whose pushes would form one long chain through memory.
     *
     * A diagram too big for the cache keeps its reach values in a ring of
     * R slots, node i in slot i mod R, with R a power of two above the
     * longest edge: a node's first push comes from a parent at most
     * edge_span above it, after the node R above it (the slot's last
     * user) was read and its slot cleared, and every node waiting for its
     * turn lies within R of the sweep.  In layered networks edges are
     * short, so the ring stays in cache and the pass streams only the
     * children and the differences. */
    memset(birnbaum, 0, d->nlevels * sizeof *birnbaum);
    if (d->n <= 2)
        return;
    uint64_t ring = 1;
    while (ring <= d->edge_span && ring < d->n)
        ring <<= 1;
    if (ring_always ? ring < d->n : d->n > LW_RING_FROM && ring < d->n / 4) {
        if (ring_always)
            ring_passes++;
        memset(reach, 0, ring * sizeof *reach);
        push_down(d, q, node_diff, birnbaum, reach, (uint32_t)(ring - 1), 1);
    } else {
        memset(reach, 0, d->n * sizeof *reach);
        push_down(d, q, node_diff, birnbaum, reach, UINT32_MAX, 0);
    }
}

double lw_diagram_birnbaum(const lw_diagram *d, const double *q,
                           double *birnbaum, lw_error *err, int *ok)
{
    *ok = 0;
    double *wr = lw_malloc(2 * (size_t)d->n * sizeof *wr);
    if (!wr) {
        lw_error_oom(err);
        return 0.0;
    }
    double P = lw_diagram_birnbaum_into(d, q, birnbaum, wr);
    lw_free(wr);
    *ok = 1;
    return P;
}
