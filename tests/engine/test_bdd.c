/*
 * test_bdd.c - the ROBDD core: canonicity, reduction invariants, node
 * counts, the node limit, NOT, and the probability / Birnbaum passes of
 * frozen diagrams.
 *
 * Check values name their source beside them: methods.md sections (the
 * project's reference sheet of published formulas and derived values),
 * closed forms, or an exhaustive truth-table evaluation done in the test.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "layerwise/bdd.h"
#include "testutil.h"

/* ---- helpers ---------------------------------------------------------- */

static uint32_t identity_order[64];

static void init_identity(void)
{
    for (uint32_t i = 0; i < 64; i++)
        identity_order[i] = i;
}

static lw_diagram *freeze(const lw_bdd *b, lw_bref f, uint32_t nlevels)
{
    lw_error err = LW_ERROR_INIT;
    lw_diagram *d = NULL;
    init_identity();
    assert_int_equal(lw_diagram_freeze(b, f, nlevels, identity_order, &d,
                                       &err),
                     LW_OK);
    lw_error_clear(&err);
    assert_non_null(d);
    return d;
}

static double prob(const lw_bdd *b, lw_bref f, uint32_t nlevels,
                   const double *q)
{
    lw_diagram *d = freeze(b, f, nlevels);
    double *w = malloc(d->n * sizeof *w);
    assert_non_null(w);
    double P = lw_diagram_prob(d, q, w);
    free(w);
    lw_diagram_free(d);
    return P;
}

/* Every node the manager made obeys the reduction rules: no hi == lo
 * (BDD) or hi == 0 (ZBDD), children strictly below, no duplicate triple
 * (methods.md §7.2, reduction invariants 1 and 2; §7.6 zero-suppression). */
typedef struct triple {
    uint32_t level, hi, lo;
} triple;

static int cmp_triple(const void *a, const void *b)
{
    const triple *x = a, *y = b;
    if (x->level != y->level)
        return x->level < y->level ? -1 : 1;
    if (x->hi != y->hi)
        return x->hi < y->hi ? -1 : 1;
    if (x->lo != y->lo)
        return x->lo < y->lo ? -1 : 1;
    return 0;
}

static void check_invariants(const lw_bdd *b, int zdd)
{
    size_t n = lw_bdd_nodes(b);
    assert_true(n >= 2);
    assert_int_equal(lw_bdd_level(b, LW_BDD_FALSE), LW_LEVEL_TERMINAL);
    assert_int_equal(lw_bdd_level(b, LW_BDD_TRUE), LW_LEVEL_TERMINAL);
    triple *t = malloc((n + 1) * sizeof *t);
    assert_non_null(t);
    for (lw_bref i = 2; i < n; i++) {
        uint32_t l = lw_bdd_level(b, i);
        lw_bref h = lw_bdd_hi(b, i), o = lw_bdd_lo(b, i);
        assert_true(h < n && o < n);
        if (zdd)
            assert_int_not_equal(h, LW_BDD_FALSE);
        else
            assert_int_not_equal(h, o);
        assert_true(l < lw_bdd_level(b, h));
        assert_true(l < lw_bdd_level(b, o));
        /* children were made first: index order is topological */
        assert_true(h < i && o < i);
        t[i - 2] = (triple){l, h, o};
    }
    qsort(t, n - 2, sizeof *t, cmp_triple);
    for (size_t i = 1; i + 2 < n; i++)
        assert_int_not_equal(cmp_triple(&t[i - 1], &t[i]), 0);
    free(t);
}

/* The BDD of a truth table (bit x of tt = value at assignment x, bit l of
 * x = level l) by Shannon expansion with mk: the canonical reference. */
static lw_bref from_table(lw_bdd *b, const unsigned char *tt, uint32_t n,
                          uint32_t level, uint32_t x)
{
    if (level == n)
        return tt[x] ? LW_BDD_TRUE : LW_BDD_FALSE;
    lw_bref hi = from_table(b, tt, n, level + 1, x | (1u << level));
    lw_bref lo = from_table(b, tt, n, level + 1, x);
    return lw_bdd_mk(b, level, hi, lo);
}

/* ---- canonicity ------------------------------------------------------- */

/* (a AND b) OR c and c OR (b AND a) are one function, so one node
 * (methods.md §7.2: with both reduction rules the representation is
 * canonical for a fixed order; commutative law §1.3). */
static void test_canonical_commuted(void **state)
{
    (void)state;
    lw_bdd *b = lw_bdd_new(3, 0);
    lw_bref a = lw_bdd_var(b, 0), bb = lw_bdd_var(b, 1), c = lw_bdd_var(b, 2);
    lw_bref f1 = lw_bdd_or(b, lw_bdd_and(b, a, bb), c);
    lw_bref f2 = lw_bdd_or(b, c, lw_bdd_and(b, bb, a));
    assert_int_not_equal(f1, LW_BREF_INVALID);
    assert_int_equal(f1, f2);
    /* and it is the BDD written out by hand: a ? (b ? 1 : c) : c */
    lw_bref nc = lw_bdd_mk(b, 2, LW_BDD_TRUE, LW_BDD_FALSE);
    lw_bref nb = lw_bdd_mk(b, 1, LW_BDD_TRUE, nc);
    lw_bref na = lw_bdd_mk(b, 0, nb, nc);
    assert_int_equal(f1, na);
    /* idempotence and absorption (§1.3) */
    assert_int_equal(lw_bdd_and(b, a, a), a);
    assert_int_equal(lw_bdd_or(b, a, a), a);
    assert_int_equal(lw_bdd_and(b, a, lw_bdd_or(b, a, bb)), a);
    assert_int_equal(lw_bdd_or(b, a, lw_bdd_and(b, a, bb)), a);
    check_invariants(b, 0);
    assert_int_equal(lw_bdd_status(b), LW_OK);
    lw_bdd_free(b);
}

/* Distributive laws X(Y+Z) = XY + XZ and X + YZ = (X+Y)(X+Z), on
 * composite functions (methods.md §1.3). */
static void test_canonical_distributive(void **state)
{
    (void)state;
    lw_bdd *b = lw_bdd_new(6, 0);
    lw_bref v[6];
    for (uint32_t i = 0; i < 6; i++)
        v[i] = lw_bdd_var(b, i);
    lw_bref X = lw_bdd_or(b, v[0], lw_bdd_and(b, v[3], v[5]));
    lw_bref Y = lw_bdd_and(b, v[1], v[4]);
    lw_bref Z = lw_bdd_or(b, v[2], v[5]);
    lw_bref l1 = lw_bdd_and(b, X, lw_bdd_or(b, Y, Z));
    lw_bref r1 = lw_bdd_or(b, lw_bdd_and(b, X, Y), lw_bdd_and(b, X, Z));
    assert_int_equal(l1, r1);
    lw_bref l2 = lw_bdd_or(b, X, lw_bdd_and(b, Y, Z));
    lw_bref r2 = lw_bdd_and(b, lw_bdd_or(b, X, Y), lw_bdd_or(b, X, Z));
    assert_int_equal(l2, r2);
    /* associativity (§1.3) */
    assert_int_equal(lw_bdd_and(b, X, lw_bdd_and(b, Y, Z)),
                     lw_bdd_and(b, lw_bdd_and(b, X, Y), Z));
    assert_int_equal(lw_bdd_or(b, X, lw_bdd_or(b, Y, Z)),
                     lw_bdd_or(b, lw_bdd_or(b, X, Y), Z));
    /* and the two sides differ where they should: XY != X + Y */
    assert_int_not_equal(lw_bdd_and(b, X, Y), lw_bdd_or(b, X, Y));
    check_invariants(b, 0);
    lw_bdd_free(b);
}

/* atleast(k) equals the explicit OR over all k-subsets of the AND of the
 * subset (closed form: definition of the k-of-n gate, methods.md §1.2),
 * on input functions that share variables. */
static void test_atleast_equals_or_of_ands(void **state)
{
    (void)state;
    const uint32_t n = 5;
    lw_bdd *b = lw_bdd_new(7, 0);
    lw_bref v[7], g[5];
    for (uint32_t i = 0; i < 7; i++)
        v[i] = lw_bdd_var(b, i);
    /* overlapping inputs: g_i = v_i OR (v_{i+1} AND v_{i+2}) */
    for (uint32_t i = 0; i < n; i++)
        g[i] = lw_bdd_or(b, v[i], lw_bdd_and(b, v[i + 1], v[i + 2]));
    for (uint32_t k = 0; k <= n + 1; k++) {
        lw_bref expect = k == 0 ? LW_BDD_TRUE : LW_BDD_FALSE;
        for (uint32_t mask = 0; mask < (1u << n); mask++) {
            if ((uint32_t)__builtin_popcount(mask) != k || k == 0)
                continue;
            lw_bref t = LW_BDD_TRUE;
            for (uint32_t i = 0; i < n; i++)
                if (mask & (1u << i))
                    t = lw_bdd_and(b, t, g[i]);
            expect = lw_bdd_or(b, expect, t);
        }
        lw_bref got = lw_bdd_atleast(b, k, g, n);
        assert_int_not_equal(got, LW_BREF_INVALID);
        assert_int_equal(got, expect);
    }
    /* k = 1 is OR, k = n is AND */
    lw_bref all = LW_BDD_TRUE, any = LW_BDD_FALSE;
    for (uint32_t i = 0; i < n; i++) {
        all = lw_bdd_and(b, all, g[i]);
        any = lw_bdd_or(b, any, g[i]);
    }
    assert_int_equal(lw_bdd_atleast(b, 1, g, n), any);
    assert_int_equal(lw_bdd_atleast(b, n, g, n), all);
    check_invariants(b, 0);
    lw_bdd_free(b);
}

/* Random expressions over 6 variables, built by AND/OR/NOT/atleast, are
 * the very node that Shannon expansion of their truth table gives
 * (canonicity, methods.md §7.2); the probability pass equals the
 * truth-table sum and the Birnbaum pass equals P(q_l = 1) - P(q_l = 0)
 * (methods.md §2.2 definition, §7.3-7.4). */
typedef struct expr_ctx {
    lw_bdd *b;
    uint64_t rng;
} expr_ctx;

static lw_bref rand_expr(expr_ctx *c, int depth, unsigned char *tt)
{
    uint32_t kind = depth <= 0 ? 0 : (uint32_t)(tu_rand(&c->rng) % 5);
    if (kind == 0) {
        uint32_t l = (uint32_t)(tu_rand(&c->rng) % 6);
        for (uint32_t x = 0; x < 64; x++)
            tt[x] = (unsigned char)((x >> l) & 1u);
        return lw_bdd_var(c->b, l);
    }
    if (kind == 1) {
        lw_bref f = rand_expr(c, depth - 1, tt);
        for (uint32_t x = 0; x < 64; x++)
            tt[x] = (unsigned char)!tt[x];
        return lw_bdd_not(c->b, f);
    }
    if (kind == 4) {
        unsigned char t3[3][64];
        lw_bref in[3];
        for (int i = 0; i < 3; i++)
            in[i] = rand_expr(c, depth - 1, t3[i]);
        uint32_t k = (uint32_t)(tu_rand(&c->rng) % 4);
        for (uint32_t x = 0; x < 64; x++)
            tt[x] = (unsigned char)((uint32_t)(t3[0][x] + t3[1][x] +
                                               t3[2][x]) >= k);
        return lw_bdd_atleast(c->b, k, in, 3);
    }
    unsigned char t2[64];
    lw_bref f = rand_expr(c, depth - 1, tt);
    lw_bref g = rand_expr(c, depth - 1, t2);
    for (uint32_t x = 0; x < 64; x++)
        tt[x] = (unsigned char)(kind == 2 ? (tt[x] && t2[x])
                                          : (tt[x] || t2[x]));
    return kind == 2 ? lw_bdd_and(c->b, f, g) : lw_bdd_or(c->b, f, g);
}

static double table_prob(const unsigned char *tt, const double *q)
{
    double total = 0.0;
    for (uint32_t x = 0; x < 64; x++) {
        if (!tt[x])
            continue;
        double w = 1.0;
        for (uint32_t l = 0; l < 6; l++)
            w *= ((x >> l) & 1u) ? q[l] : 1.0 - q[l];
        total += w;
    }
    return total;
}

static void test_random_canonical(void **state)
{
    (void)state;
    expr_ctx c = {lw_bdd_new(6, 0), 12345};
    assert_non_null(c.b);
    for (int trial = 0; trial < 400; trial++) {
        unsigned char tt[64];
        lw_bref f = rand_expr(&c, 1 + trial % 5, tt);
        assert_int_not_equal(f, LW_BREF_INVALID);
        lw_bref ref = from_table(c.b, tt, 6, 0, 0);
        assert_int_equal(f, ref);
        double q[6], qq[6], bir[6];
        for (int l = 0; l < 6; l++)
            q[l] = tu_uniform(&c.rng);
        lw_diagram *d = freeze(c.b, f, 6);
        double *w = malloc(d->n * sizeof *w);
        assert_non_null(w);
        double P = lw_diagram_prob(d, q, w);
        assert_close(P, table_prob(tt, q), 1e-12);
        lw_error err = LW_ERROR_INIT;
        int ok = 0;
        double P2 = lw_diagram_birnbaum(d, q, bir, &err, &ok);
        assert_true(ok);
        assert_close(P2, P, 1e-12);
        for (int l = 0; l < 6; l++) {
            memcpy(qq, q, sizeof q);
            qq[l] = 1.0;
            double p1 = table_prob(tt, qq);
            qq[l] = 0.0;
            double p0 = table_prob(tt, qq);
            if (fabs(bir[l] - (p1 - p0)) > 1e-12)
                fail_msg("Birnbaum of level %d = %.17g, expected %.17g", l,
                         bir[l], p1 - p0);
        }
        /* the same from the differences a probability pass keeps: the
         * pass gives lw_diagram_prob's P to the last bit */
        double bg[6], *reach = malloc(d->n * sizeof *reach);
        double *diff = malloc(d->n * sizeof *diff);
        assert_non_null(reach);
        assert_non_null(diff);
        assert_true(lw_diagram_prob_diff(d, q, reach, diff) == P);
        lw_diagram_birnbaum_given(d, q, diff, bg, reach);
        for (int l = 0; l < 6; l++)
            if (fabs(bg[l] - bir[l]) > 1e-14)
                fail_msg("Birnbaum of level %d from the probability pass = "
                         "%.17g, from its own pass %.17g", l, bg[l], bir[l]);
        free(reach);
        free(diff);
        /* the frozen copy: root last, children before parents */
        assert_true(d->root == (f <= 1 ? f : d->n - 1));
        for (uint32_t i = 2; i < d->n; i++) {
            assert_true(d->hi[i] < i && d->lo[i] < i);
            assert_int_not_equal(d->hi[i], d->lo[i]);
        }
        assert_int_equal(d->n, f <= 1 ? 2 : lw_bdd_size(c.b, f));
        free(w);
        lw_diagram_free(d);
        lw_error_clear(&err);
    }
    check_invariants(c.b, 0);
    lw_bdd_free(c.b);
}

/* ---- NOT ---------------------------------------------------------------- */

/* Complementation and De Morgan (methods.md §1.3); P(NOT f) = 1 - P(f)
 * (§7.3). */
static void test_not(void **state)
{
    (void)state;
    lw_bdd *b = lw_bdd_new(4, 0);
    lw_bref v[4];
    for (uint32_t i = 0; i < 4; i++)
        v[i] = lw_bdd_var(b, i);
    assert_int_equal(lw_bdd_not(b, LW_BDD_TRUE), LW_BDD_FALSE);
    assert_int_equal(lw_bdd_not(b, LW_BDD_FALSE), LW_BDD_TRUE);
    lw_bref f = lw_bdd_or(b, lw_bdd_and(b, v[0], v[1]),
                          lw_bdd_and(b, v[2], v[3]));
    lw_bref nf = lw_bdd_not(b, f);
    assert_int_not_equal(nf, f);
    assert_int_equal(lw_bdd_not(b, nf), f);                     /* (X')' = X */
    assert_int_equal(lw_bdd_and(b, f, nf), LW_BDD_FALSE);      /* XX' = 0 */
    assert_int_equal(lw_bdd_or(b, f, nf), LW_BDD_TRUE);        /* X+X' = 1 */
    /* De Morgan: (XY)' = X' + Y', (X+Y)' = X'Y' */
    assert_int_equal(lw_bdd_not(b, lw_bdd_and(b, v[0], v[2])),
                     lw_bdd_or(b, lw_bdd_not(b, v[0]), lw_bdd_not(b, v[2])));
    assert_int_equal(lw_bdd_not(b, lw_bdd_or(b, v[1], v[3])),
                     lw_bdd_and(b, lw_bdd_not(b, v[1]), lw_bdd_not(b, v[3])));
    /* X + X'Y = X + Y (§1.3 useful extras) */
    assert_int_equal(lw_bdd_or(b, v[0], lw_bdd_and(b, lw_bdd_not(b, v[0]),
                                                   v[1])),
                     lw_bdd_or(b, v[0], v[1]));
    double q[4] = {0.1, 0.2, 0.3, 0.4};
    /* closed form: P(ab + cd) = ab + cd - abcd */
    double P = 0.1 * 0.2 + 0.3 * 0.4 - 0.1 * 0.2 * 0.3 * 0.4;
    assert_close(prob(b, f, 4, q), P, 1e-12);
    assert_close(prob(b, nf, 4, q), 1.0 - P, 1e-12);
    /* XOR is non-coherent: P = a(1-b) + (1-a)b, Birnbaum of a = 1 - 2b
     * (closed form; §7.3 says the pass is exact for any function) */
    lw_bref x = lw_bdd_or(b, lw_bdd_and(b, v[0], lw_bdd_not(b, v[1])),
                          lw_bdd_and(b, lw_bdd_not(b, v[0]), v[1]));
    lw_diagram *d = freeze(b, x, 4);
    double bir[4];
    lw_error err = LW_ERROR_INIT;
    int ok = 0;
    double Px = lw_diagram_birnbaum(d, q, bir, &err, &ok);
    assert_true(ok);
    assert_close(Px, 0.1 * 0.8 + 0.9 * 0.2, 1e-12);
    assert_close(bir[0], 1.0 - 2 * 0.2, 1e-12);
    assert_close(bir[1], 1.0 - 2 * 0.1, 1e-12);
    assert_true(bir[2] == 0.0 && bir[3] == 0.0);
    lw_diagram_free(d);
    lw_error_clear(&err);
    check_invariants(b, 0);
    lw_bdd_free(b);
}

/* ---- sizes ------------------------------------------------------------ */

/* k-of-n over distinct events has k(n-k+1) internal nodes: 2-of-3 -> 4,
 * 3-of-5 -> 9 (methods.md §7.2 [D]); lw_bdd_size counts the two
 * terminals too.  The bridge (methods.md §8.4, written as the OR of its
 * minimal cut sets) has 8 internal nodes with order 1<2<3<4<5 and 9 with
 * 3 first (methods.md §7.2 [D]). */
static lw_bref bridge(lw_bdd *b, const uint32_t *lev)
{
    /* lev[i] = level of component i+1 */
    lw_bref c[5];
    for (int i = 0; i < 5; i++)
        c[i] = lw_bdd_var(b, lev[i]);
    lw_bref m1 = lw_bdd_and(b, c[0], c[1]);
    lw_bref m2 = lw_bdd_and(b, c[3], c[4]);
    lw_bref m3 = lw_bdd_and(b, c[0], lw_bdd_and(b, c[2], c[4]));
    lw_bref m4 = lw_bdd_and(b, c[1], lw_bdd_and(b, c[2], c[3]));
    return lw_bdd_or(b, lw_bdd_or(b, m1, m2), lw_bdd_or(b, m3, m4));
}

static void test_sizes(void **state)
{
    (void)state;
    lw_bdd *b = lw_bdd_new(8, 0);
    lw_bref v[5];
    for (uint32_t i = 0; i < 5; i++)
        v[i] = lw_bdd_var(b, i);
    assert_int_equal(lw_bdd_size(b, lw_bdd_atleast(b, 2, v, 3)), 4 + 2);
    assert_int_equal(lw_bdd_size(b, lw_bdd_atleast(b, 3, v, 5)), 9 + 2);
    for (uint32_t n = 1; n <= 5; n++)
        for (uint32_t k = 1; k <= n; k++)
            assert_int_equal(lw_bdd_size(b, lw_bdd_atleast(b, k, v, n)),
                             k * (n - k + 1) + 2);
    lw_bdd_free(b);

    const uint32_t natural[5] = {0, 1, 2, 3, 4};
    const uint32_t three_first[5] = {1, 2, 0, 3, 4};
    b = lw_bdd_new(5, 0);
    assert_int_equal(lw_bdd_size(b, bridge(b, natural)), 8 + 2);
    lw_bdd_free(b);
    b = lw_bdd_new(5, 0);
    assert_int_equal(lw_bdd_size(b, bridge(b, three_first)), 9 + 2);
    lw_bdd_free(b);
}

/* ---- node limit ------------------------------------------------------- */

/* OR_i (x_i AND y_i) with all x before all y: every subset of the x's
 * seen so far is a distinct subfunction, 2^(n+1) - 2 internal nodes;
 * interleaved x1 y1 x2 y2 ..., 2n (closed form; the order example of
 * Bryant 1986, methods.md §7.1, from memory). */
static lw_bref pairs(lw_bdd *b, uint32_t n, int interleaved)
{
    lw_bref f = LW_BDD_FALSE;
    for (uint32_t i = 0; i < n; i++) {
        uint32_t lx = interleaved ? 2 * i : i;
        uint32_t ly = interleaved ? 2 * i + 1 : n + i;
        f = lw_bdd_or(b, f, lw_bdd_and(b, lw_bdd_var(b, lx),
                                       lw_bdd_var(b, ly)));
    }
    return f;
}

static void test_node_limit(void **state)
{
    (void)state;
    const uint32_t n = 12;
    lw_bdd *b = lw_bdd_new(2 * n, 1000);
    assert_int_equal(lw_bdd_max_nodes(b), 1000);
    lw_bref f = pairs(b, n, 0);
    assert_int_equal(f, LW_BREF_INVALID);
    assert_int_equal(lw_bdd_status(b), LW_ELIMIT);
    assert_true(lw_bdd_nodes(b) <= 1000);
    /* sticky: even trivial operations now fail */
    assert_int_equal(lw_bdd_var(b, 0), LW_BREF_INVALID);
    assert_int_equal(lw_bdd_and(b, LW_BDD_TRUE, LW_BDD_TRUE),
                     LW_BREF_INVALID);
    assert_int_equal(lw_bdd_status(b), LW_ELIMIT);
    lw_bdd_free(b);

    /* the same function fits in the default limit: 2^(n+1) with the
     * terminals */
    b = lw_bdd_new(2 * n, 0);
    f = pairs(b, n, 0);
    assert_int_not_equal(f, LW_BREF_INVALID);
    assert_int_equal(lw_bdd_status(b), LW_OK);
    assert_int_equal(lw_bdd_size(b, f), (size_t)1 << (n + 1));
    check_invariants(b, 0);
    lw_bdd_free(b);

    /* and with a good order it fits in the small limit: 2n + 2 */
    b = lw_bdd_new(2 * n, 1000);
    f = pairs(b, n, 1);
    assert_int_not_equal(f, LW_BREF_INVALID);
    assert_int_equal(lw_bdd_size(b, f), 2 * n + 2);
    assert_int_equal(lw_bdd_status(b), LW_OK);
    lw_bdd_free(b);
}

/* A parity (XOR) chain under a node limit: the limit also stops NOT,
 * and a half-built operation never returns a wrong node. */
static void test_node_limit_parity(void **state)
{
    (void)state;
    lw_bdd *b = lw_bdd_new(40, 50);
    lw_bref f = LW_BDD_FALSE;
    for (uint32_t i = 0; i < 40 && f != LW_BREF_INVALID; i++) {
        lw_bref x = lw_bdd_var(b, i);
        lw_bref nf = lw_bdd_not(b, f);
        f = lw_bdd_or(b, lw_bdd_and(b, f, lw_bdd_not(b, x)),
                      lw_bdd_and(b, nf, x));
    }
    assert_int_equal(f, LW_BREF_INVALID);
    assert_int_equal(lw_bdd_status(b), LW_ELIMIT);
    assert_true(lw_bdd_nodes(b) <= 50);
    lw_bdd_free(b);
}

/* Through the library: a model whose BDD explodes under --max-nodes 1000
 * stops with LW_ELIMIT and a message naming the limit. */
static void test_node_limit_prepare(void **state)
{
    (void)state;
    /* any(all(x_i, y_i)) with every x first in the tree: the builder's
     * depth-first order puts all x before all y (closed form above) */
    char xml[8192];
    size_t len = 0;
    len += (size_t)snprintf(xml + len, sizeof xml - len,
                            "<safety-model format=\"1\" id=\"m\">"
                            "<hazard id=\"h\"><any>"
                            "<vote k=\"12\">");
    for (int i = 0; i < 12; i++)
        len += (size_t)snprintf(xml + len, sizeof xml - len,
                                "<any><error id=\"x%d\" p=\"0.5\"/>"
                                "<error id=\"z%d\" p=\"0.5\"/></any>",
                                i, i);
    len += (size_t)snprintf(xml + len, sizeof xml - len, "</vote>");
    for (int i = 0; i < 12; i++)
        len += (size_t)snprintf(xml + len, sizeof xml - len,
                                "<all><ref to=\"x%d\"/>"
                                "<error id=\"y%d\" p=\"0.5\"/></all>",
                                i, i);
    snprintf(xml + len, sizeof xml - len, "</any></hazard></safety-model>");
    lw_model *m = tu_load(xml);
    lw_options opt;
    lw_options_init(&opt);
    opt.max_nodes = 1000;
    lw_prepared *p = NULL;
    lw_error err = LW_ERROR_INIT;
    assert_int_equal(lw_prepare(m, LW_NONE, 0, &opt, &p, &err), LW_ELIMIT);
    assert_null(p);
    assert_true(tu_error_has(&err, "1000", NULL));
    assert_true(tu_error_has(&err, "--max-nodes", NULL));
    lw_error_clear(&err);
    lw_model_free(m);
}

/* ---- ZBDD reduction ---------------------------------------------------- */

/* Zero-suppression: a node whose hi is the empty family is its lo
 * (methods.md §7.6, [C] reduction rule); hi == lo is a real node. */
static void test_zdd_rule(void **state)
{
    (void)state;
    lw_bdd *z = lw_zdd_new(3, 0);
    lw_bref a = lw_bdd_mk(z, 2, LW_BDD_TRUE, LW_BDD_FALSE);   /* {{c}} */
    assert_int_equal(lw_bdd_mk(z, 1, LW_BDD_FALSE, a), a);
    lw_bref s = lw_bdd_mk(z, 1, a, a);   /* {{b,c},{c}} */
    assert_int_not_equal(s, a);
    assert_int_equal(lw_bdd_mk(z, 1, a, a), s);
    check_invariants(z, 1);
    lw_bdd_free(z);
}

/* ---- comparing frozen diagrams --------------------------------------- */

/* lw_diagram_same: one function frozen two ways (node order by index, and
 * canonical) is the same; two functions with as many nodes are not. */
static void test_diagram_same(void **state)
{
    (void)state;
    lw_bdd *b = lw_bdd_new(4, 0);
    lw_bref x[4];
    for (uint32_t i = 0; i < 4; i++)
        x[i] = lw_bdd_var(b, i);
    /* made in an order that differs from a walk from the root */
    lw_bref g = lw_bdd_or(b, lw_bdd_and(b, x[2], x[3]), x[1]);
    lw_bref f = lw_bdd_or(b, lw_bdd_and(b, x[0], g), lw_bdd_and(b, x[1],
                                                                  x[3]));
    lw_bref h = lw_bdd_and(b, lw_bdd_or(b, x[0], g), lw_bdd_or(b, x[1],
                                                                 x[3]));
    lw_diagram *d1 = freeze(b, f, 4), *d2 = NULL, *d3 = freeze(b, h, 4);
    lw_error err = LW_ERROR_INIT;
    assert_int_equal(lw_diagram_freeze_canonical(b, f, 4, identity_order,
                                                 &d2, &err), LW_OK);
    assert_int_equal(lw_diagram_same(d1, d2), 1);
    assert_int_equal(lw_diagram_same(d1, d1), 1);
    if (d3->n == d1->n)     /* different functions: never the same */
        assert_int_equal(lw_diagram_same(d1, d3), 0);
    /* x0 AND x1 against x0 OR x1: two nodes each, not the same */
    lw_diagram *da = freeze(b, lw_bdd_and(b, x[0], x[1]), 4);
    lw_diagram *dor = freeze(b, lw_bdd_or(b, x[0], x[1]), 4);
    assert_int_equal(da->n, dor->n);
    assert_int_equal(lw_diagram_same(da, dor), 0);
    lw_diagram_free(da);
    lw_diagram_free(dor);
    /* the same shape with one level changed is not the same */
    d2->level[d2->root] = d2->level[d2->root] + 1;
    assert_int_equal(lw_diagram_same(d1, d2), 0);
    lw_diagram_free(d1);
    lw_diagram_free(d2);
    lw_diagram_free(d3);
    lw_bdd_free(b);
}

/* ---- the worked trace ------------------------------------------------- */

/* 2-of-3 with order A<B<C, q = (0.01, 0.02, 0.05): the node structure,
 * P = 0.00168 and I_B = 0.068 / 0.059 / 0.0296 (methods.md §7.4 worked
 * trace [D], exact rationals). */
static void test_worked_trace(void **state)
{
    (void)state;
    lw_bdd *b = lw_bdd_new(3, 0);
    lw_bref v[3];
    for (uint32_t i = 0; i < 3; i++)
        v[i] = lw_bdd_var(b, i);
    lw_bref f = lw_bdd_atleast(b, 2, v, 3);
    /* n_A = (A, n_B1, n_B0), n_B1 = (B, 1, n_C), n_B0 = (B, n_C, 0),
     * n_C = (C, 1, 0) */
    lw_bref nC = lw_bdd_mk(b, 2, LW_BDD_TRUE, LW_BDD_FALSE);
    lw_bref nB1 = lw_bdd_mk(b, 1, LW_BDD_TRUE, nC);
    lw_bref nB0 = lw_bdd_mk(b, 1, nC, LW_BDD_FALSE);
    assert_int_equal(f, lw_bdd_mk(b, 0, nB1, nB0));
    const double q[3] = {0.01, 0.02, 0.05};
    lw_diagram *d = freeze(b, f, 3);
    assert_int_equal(d->n, 6);
    double *w = malloc(d->n * sizeof *w);
    assert_non_null(w);
    assert_close(lw_diagram_prob(d, q, w), 0.00168, 1e-12);
    /* node values of the backward pass: 0.05, 0.069, 0.001 */
    int seen = 0;
    for (uint32_t i = 2; i < d->n; i++) {
        if (d->level[i] == 2) {
            assert_close(w[i], 0.05, 1e-12);
            seen |= 1;
        } else if (d->level[i] == 1 && d->hi[i] == 1) {
            assert_close(w[i], 0.069, 1e-12);
            seen |= 2;
        } else if (d->level[i] == 1) {
            assert_close(w[i], 0.001, 1e-12);
            seen |= 4;
        }
    }
    assert_int_equal(seen, 7);
    double bir[3];
    lw_error err = LW_ERROR_INIT;
    int ok = 0;
    double P = lw_diagram_birnbaum(d, q, bir, &err, &ok);
    assert_true(ok);
    assert_close(P, 0.00168, 1e-12);
    assert_close(bir[0], 0.068, 1e-12);
    assert_close(bir[1], 0.059, 1e-12);
    assert_close(bir[2], 0.0296, 1e-12);
    /* RAW(A) = (P + (1 - q_A) I_B) / P = 575/14 (methods.md §7.4, §2.4) */
    assert_close((P + (1 - q[0]) * bir[0]) / P, 575.0 / 14.0, 1e-12);
    free(w);
    lw_diagram_free(d);
    lw_error_clear(&err);

    /* constants freeze to a bare terminal */
    d = freeze(b, LW_BDD_TRUE, 3);
    double w2[2];
    assert_int_equal(d->n, 2);
    assert_true(lw_diagram_prob(d, q, w2) == 1.0);
    lw_diagram_free(d);
    d = freeze(b, LW_BDD_FALSE, 3);
    assert_true(lw_diagram_prob(d, q, w2) == 0.0);
    lw_diagram_free(d);
    lw_bdd_free(b);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_canonical_commuted),
        cmocka_unit_test(test_canonical_distributive),
        cmocka_unit_test(test_atleast_equals_or_of_ands),
        cmocka_unit_test(test_random_canonical),
        cmocka_unit_test(test_not),
        cmocka_unit_test(test_sizes),
        cmocka_unit_test(test_node_limit),
        cmocka_unit_test(test_node_limit_parity),
        cmocka_unit_test(test_node_limit_prepare),
        cmocka_unit_test(test_zdd_rule),
        cmocka_unit_test(test_worked_trace),
        cmocka_unit_test(test_diagram_same),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
