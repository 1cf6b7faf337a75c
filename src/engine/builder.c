/*
 * builder.c - BDDs from a network: variable order and gate-by-gate build.
 *
 * The order is the usual fault-tree heuristic: walk the network depth
 * first, inputs left to right, from each root in turn, and give each
 * variable the next level the first time it is met.  Events that sit
 * together in the model then sit together in the order, which keeps
 * layered-safeguard networks small.
 *
 * Gates are built in post-order with an explicit stack and memoised, so a
 * shared subtree is built once.  AND and OR fold their inputs; k-of-n uses
 * lw_bdd_atleast.
 */
#include "layerwise/bdd.h"

#include <string.h>

#include "layerwise/alloc.h"

struct lw_builder {
    const lw_network *net;
    lw_bdd *bdd;
    uint32_t nlevels;
    uint32_t root_levels;   /* levels given by the first root alone */
    uint32_t *level_var;    /* level -> variable */
    uint32_t *var_level;    /* variable -> level (UINT32_MAX unused) */
    lw_bref *memo;          /* per gate, LW_BREF_INVALID when not built */
    uint32_t *stack;        /* post-order walk */
    uint32_t *pos;
    lw_bref *ins;           /* inputs of a k-of-n gate */
    size_t cap_ins;
};

void lw_builder_free(lw_builder *bl)
{
    if (!bl)
        return;
    lw_bdd_free(bl->bdd);
    lw_free(bl->level_var);
    lw_free(bl->var_level);
    lw_free(bl->memo);
    lw_free(bl->stack);
    lw_free(bl->pos);
    lw_free(bl->ins);
    lw_free(bl);
}

lw_bdd *lw_builder_bdd(lw_builder *bl) { return bl->bdd; }
uint32_t lw_builder_nlevels(const lw_builder *bl) { return bl->nlevels; }
uint32_t lw_builder_root_levels(const lw_builder *bl)
{
    return bl->root_levels;
}
const uint32_t *lw_builder_level_var(const lw_builder *bl)
{
    return bl->level_var;
}
const uint32_t *lw_builder_var_level(const lw_builder *bl)
{
    return bl->var_level;
}

/* Depth-first, left-to-right, first occurrence. */
static void order_from(lw_builder *bl, uint32_t root, unsigned char *seen)
{
    const lw_network *net = bl->net;
    size_t sp = 0;
    if (seen[root])
        return;
    seen[root] = 1;
    bl->stack[sp] = root;
    bl->pos[sp] = 0;
    sp++;
    while (sp) {
        uint32_t g = bl->stack[sp - 1];
        const lw_gate *gt = &net->gates[g];
        if (gt->kind == LW_GATE_VAR && bl->var_level[gt->var] == UINT32_MAX) {
            bl->var_level[gt->var] = bl->nlevels;
            bl->level_var[bl->nlevels++] = gt->var;
        }
        if (bl->pos[sp - 1] < gt->nin) {
            uint32_t c = net->inputs[gt->first + bl->pos[sp - 1]++];
            if (!seen[c]) {
                seen[c] = 1;
                bl->stack[sp] = c;
                bl->pos[sp] = 0;
                sp++;
            }
        } else {
            sp--;
        }
    }
}

lw_status lw_builder_new(const lw_network *net, const uint32_t *roots,
                         size_t nroots, size_t max_nodes, lw_builder **out,
                         lw_error *err)
{
    *out = NULL;
    lw_builder *bl = lw_calloc(1, sizeof *bl);
    if (!bl)
        return lw_error_oom(err);
    bl->net = net;
    size_t ng = net->ngates + 1, nv = net->nvars + 1;
    bl->level_var = lw_malloc(nv * sizeof *bl->level_var);
    bl->var_level = lw_malloc(nv * sizeof *bl->var_level);
    bl->memo = lw_malloc(ng * sizeof *bl->memo);
    bl->stack = lw_malloc(ng * sizeof *bl->stack);
    bl->pos = lw_malloc(ng * sizeof *bl->pos);
    unsigned char *seen = lw_calloc(ng, 1);
    if (!bl->level_var || !bl->var_level || !bl->memo || !bl->stack ||
        !bl->pos || !seen) {
        lw_free(seen);
        lw_builder_free(bl);
        return lw_error_oom(err);
    }
    memset(bl->var_level, 0xff, nv * sizeof *bl->var_level);
    for (size_t i = 0; i < ng; i++)
        bl->memo[i] = LW_BREF_INVALID;
    for (size_t r = 0; r < nroots; r++) {
        order_from(bl, roots[r], seen);
        if (r == 0)
            bl->root_levels = bl->nlevels;
    }
    lw_free(seen);
    bl->bdd = lw_bdd_new(bl->nlevels, max_nodes);
    if (!bl->bdd) {
        lw_builder_free(bl);
        return lw_error_oom(err);
    }
    bl->memo[0] = LW_BDD_FALSE;
    bl->memo[1] = LW_BDD_TRUE;
    *out = bl;
    return LW_OK;
}

static lw_status build_failed(lw_builder *bl, lw_error *err)
{
    if (lw_bdd_status(bl->bdd) == LW_ELIMIT)
        return lw_error_set(err, LW_ELIMIT, NULL, 0,
                            "the decision diagram reached the node limit of "
                            "%zu nodes (--max-nodes) before the hazard was "
                            "built; raise --max-nodes if memory allows "
                            "(about 40 bytes a node), or split the model "
                            "into smaller hazards",
                            lw_bdd_max_nodes(bl->bdd));
    return lw_error_oom(err);
}

static lw_bref build_one(lw_builder *bl, uint32_t g)
{
    const lw_network *net = bl->net;
    const lw_gate *gt = &net->gates[g];
    /* no gate has inputs in a network of single events: inputs is NULL */
    const uint32_t *in = net->inputs ? net->inputs + gt->first : NULL;
    lw_bdd *b = bl->bdd;
    switch (gt->kind) {
    case LW_GATE_FALSE: return LW_BDD_FALSE;
    case LW_GATE_TRUE: return LW_BDD_TRUE;
    case LW_GATE_VAR: return lw_bdd_var(b, bl->var_level[gt->var]);
    case LW_GATE_AND:
    case LW_GATE_OR: {
        /* Fold from the deepest input up.  The order puts earlier inputs
         * higher, so combining f (higher) with acc (lower) only walks f:
         * below f's nodes the other operand is acc itself.  Folding the
         * other way would copy the accumulated diagram at every step. */
        lw_bref *ins = lw_grow(bl->ins, &bl->cap_ins, gt->nin, sizeof *ins);
        if (!ins)
            return LW_BREF_INVALID;
        bl->ins = ins;
        for (uint32_t i = 0; i < gt->nin; i++)
            ins[i] = bl->memo[in[i]];
        lw_bdd_sort_deepest_first(b, ins, gt->nin);
        lw_bref acc = gt->kind == LW_GATE_AND ? LW_BDD_TRUE : LW_BDD_FALSE;
        for (uint32_t i = 0; i < gt->nin; i++) {
            acc = gt->kind == LW_GATE_AND ? lw_bdd_and(b, ins[i], acc)
                                          : lw_bdd_or(b, ins[i], acc);
            if (acc == LW_BREF_INVALID)
                return acc;
        }
        return acc;
    }
    case LW_GATE_VOTE: {
        lw_bref *ins = lw_grow(bl->ins, &bl->cap_ins, gt->nin, sizeof *ins);
        if (!ins)
            return LW_BREF_INVALID;
        bl->ins = ins;
        for (uint32_t i = 0; i < gt->nin; i++)
            ins[i] = bl->memo[in[i]];
        return lw_bdd_atleast(b, gt->k, ins, gt->nin);
    }
    }
    return LW_BREF_INVALID;
}

lw_status lw_builder_gate(lw_builder *bl, uint32_t root, lw_bref *out,
                          lw_error *err)
{
    const lw_network *net = bl->net;
    *out = LW_BREF_INVALID;
    if (bl->memo[root] != LW_BREF_INVALID) {
        *out = bl->memo[root];
        return LW_OK;
    }
    size_t sp = 0;
    bl->stack[sp] = root;
    bl->pos[sp] = 0;
    sp++;
    while (sp) {
        uint32_t g = bl->stack[sp - 1];
        const lw_gate *gt = &net->gates[g];
        if (bl->pos[sp - 1] < gt->nin) {
            uint32_t c = net->inputs[gt->first + bl->pos[sp - 1]++];
            if (bl->memo[c] == LW_BREF_INVALID) {
                bl->stack[sp] = c;
                bl->pos[sp] = 0;
                sp++;
            }
            continue;
        }
        lw_bref r = build_one(bl, g);
        if (r == LW_BREF_INVALID)
            return build_failed(bl, err);
        bl->memo[g] = r;
        sp--;
    }
    *out = bl->memo[root];
    return LW_OK;
}
