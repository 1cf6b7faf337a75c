/*
 * test_zdd.c - the family operations of the engine room (union, product,
 * minimal sets, 'without') against plain set algebra.
 *
 * A family over 5 elements is a 32-bit mask: bit s is set when the set
 * whose members are the bits of s belongs to the family.  Every operation
 * is computed here by its definition (closed form: set algebra, by brute
 * force over all 32 x 32 pairs of sets) and compared with the ZBDD's
 * result read back by walking its paths.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>

#include "layerwise/bdd.h"
#include "testutil.h"

enum { NE = 5, NS = 1 << NE };

/* The family of mask 'm' as a ZBDD, built as a union of one-set chains
 * (exercises lw_zdd_union on every step). */
static lw_bref from_mask(lw_bdd *z, uint32_t m)
{
    lw_bref f = 0;
    for (uint32_t s = 0; s < NS; s++) {
        if (!(m >> s & 1))
            continue;
        lw_bref one = 1;
        for (int e = NE; e-- > 0;)      /* deepest level first */
            if (s >> e & 1)
                one = lw_bdd_mk(z, (uint32_t)e, one, 0);
        f = lw_zdd_union(z, f, one);
    }
    return f;
}

static void walk(const lw_bdd *z, lw_bref f, uint32_t set, uint32_t *m)
{
    if (f == 0)
        return;
    if (f == 1) {
        *m |= 1u << set;
        return;
    }
    uint32_t l = lw_bdd_level(z, f);
    walk(z, lw_bdd_hi(z, f), set | 1u << l, m);
    walk(z, lw_bdd_lo(z, f), set, m);
}

static uint32_t to_mask(const lw_bdd *z, lw_bref f)
{
    uint32_t m = 0;
    walk(z, f, 0, &m);
    return m;
}

/* ---- the definitions ---------------------------------------------------- */

static uint32_t ref_product(uint32_t a, uint32_t b)
{
    uint32_t r = 0;
    for (uint32_t s = 0; s < NS; s++)
        for (uint32_t t = 0; t < NS; t++)
            if ((a >> s & 1) && (b >> t & 1))
                r |= 1u << (s | t);
    return r;
}

static uint32_t ref_minimal(uint32_t a)
{
    uint32_t r = 0;
    for (uint32_t s = 0; s < NS; s++) {
        if (!(a >> s & 1))
            continue;
        int keep = 1;
        for (uint32_t t = 0; t < NS && keep; t++)
            if (t != s && (a >> t & 1) && (t & s) == t)
                keep = 0;           /* a proper subset is in the family */
        if (keep)
            r |= 1u << s;
    }
    return r;
}

static uint32_t ref_without(uint32_t a, uint32_t b)
{
    uint32_t r = 0;
    for (uint32_t s = 0; s < NS; s++) {
        if (!(a >> s & 1))
            continue;
        int keep = 1;
        for (uint32_t t = 0; t < NS && keep; t++)
            if ((b >> t & 1) && (t & s) == t)
                keep = 0;
        if (keep)
            r |= 1u << s;
    }
    return r;
}

/* ---- tests ---------------------------------------------------------------- */

static uint32_t rand_family(uint64_t *rng)
{
    /* sparse and dense families, with and without the empty set */
    uint32_t m = (uint32_t)tu_rand(rng);
    switch (tu_rand(rng) % 4) {
    case 0: m &= (uint32_t)tu_rand(rng) & (uint32_t)tu_rand(rng); break;
    case 1: m &= ~1u; break;
    case 2: m &= (uint32_t)tu_rand(rng); break;
    default: break;
    }
    return m;
}

static void test_operations_match_set_algebra(void **state)
{
    (void)state;
    uint64_t rng = 20261202;
    for (int trial = 0; trial < 3000; trial++) {
        lw_bdd *z = lw_zdd_new(NE, 0);
        assert_non_null(z);
        uint32_t a = rand_family(&rng), b = rand_family(&rng);
        lw_bref A = from_mask(z, a), B = from_mask(z, b);
        assert_int_equal(to_mask(z, A), a);
        assert_int_equal(to_mask(z, B), b);
        assert_int_equal(to_mask(z, lw_zdd_union(z, A, B)), a | b);
        assert_int_equal(to_mask(z, lw_zdd_product(z, A, B)),
                         ref_product(a, b));
        assert_int_equal(to_mask(z, lw_zdd_minimal(z, A)), ref_minimal(a));
        assert_int_equal(to_mask(z, lw_zdd_without(z, A, B)),
                         ref_without(a, b));
        /* the minimal family is flagged: asking again changes nothing */
        lw_bref mA = lw_zdd_minimal(z, A);
        assert_int_equal(lw_zdd_minimal(z, mA), mA);
        /* the empty set and the deepest level */
        assert_int_equal(lw_zdd_has_empty(z, A), (int)(a & 1));
        if (A > 1) {
            uint32_t deep = 0;
            for (uint32_t s = 1; s < NS; s++)
                if (a >> s & 1)
                    for (uint32_t e = 0; e < NE; e++)
                        if (s >> e & 1 && e > deep)
                            deep = e;
            assert_int_equal(lw_zdd_deepest(z, A), deep);
        }
        assert_int_equal(lw_bdd_status(z), LW_OK);
        lw_bdd_free(z);
    }
}

/* 'without' and 'minimal' with one family above the other (the quick
 * exit on the deepest level): nothing of the deeper one fits. */
static void test_disjoint_ranges(void **state)
{
    (void)state;
    lw_bdd *z = lw_zdd_new(NE, 0);
    /* {{0,1},{1}} over the top two levels, {{3},{2,4}} below */
    uint32_t hi = 1u << 3 | 1u << 2, lo = 1u << 8 | 1u << 20;
    lw_bref H = from_mask(z, hi), L = from_mask(z, lo);
    assert_int_equal(lw_zdd_without(z, H, L), H);
    assert_int_equal(to_mask(z, lw_zdd_without(z, L, H)), lo);
    assert_int_equal(to_mask(z, lw_zdd_minimal(z, lw_zdd_union(z, H, L))),
                     ref_minimal(hi | lo));
    /* with the empty set below, nothing survives */
    assert_int_equal(lw_zdd_without(z, H, lw_zdd_union(z, L, 1)), 0);
    lw_bdd_free(z);
}

/* The step budget stops a family that cannot be built, as the node
 * limit does: every later operation returns LW_BREF_INVALID. */
static void test_step_budget(void **state)
{
    (void)state;
    lw_bdd *z = lw_zdd_new(NE, 16);     /* 16 nodes, 1024 steps */
    lw_bref f = 0;
    for (int i = 0; i < 2000 && f != LW_BREF_INVALID; i++)
        f = lw_zdd_union(z, from_mask(z, (uint32_t)i * 2654435761u), f);
    assert_int_equal(f, LW_BREF_INVALID);
    assert_int_equal(lw_bdd_status(z), LW_ELIMIT);
    assert_int_equal(lw_zdd_product(z, 1, 1), LW_BREF_INVALID);
    lw_bdd_free(z);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_operations_match_set_algebra),
        cmocka_unit_test(test_disjoint_ranges),
        cmocka_unit_test(test_step_budget),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
