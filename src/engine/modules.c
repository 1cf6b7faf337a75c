/*
 * modules.c - the frozen BDD of a gate, built module by module.
 *
 * HOW IT WORKS
 *   A module is a gate whose inputs, all the way down, are reached from
 *   the rest of the network only through it (Dutuit and Rauzy's linear
 *   test: one depth-first walk records when each gate and variable is
 *   first and last met; a gate is a module when everything below it is
 *   met only between its entry and its exit).  Layered-safeguard models
 *   are mostly modules: a path, a sub-system, a block.
 *
 *   1. Each module's BDD is built once, in a scratch manager, with every
 *      module directly inside it standing in as one variable.  So the
 *      manager never holds the whole function, and a block's BDD is built
 *      once instead of again inside every gate above it.
 *   2. The whole function is then written out by substitution: where a
 *      module's diagram tests an inner module C with children (h, l), C's
 *      own diagram is copied with its 1 leading to h and its 0 to l.
 *      Copies need no unique table: the variable order is the usual
 *      depth-first first-occurrence order, in which a module's variables
 *      are contiguous, so the copy is an ordered diagram, and in a
 *      monotone network (AND, OR and k-of-n only) two different nodes, or
 *      copies made for different (h, l), are never the same function.
 *
 *   Keys: the scratch manager orders level l as key 2l + 1 and an inner
 *   module whose first variable has level a as key 2a, just above it.
 *   Nested modules can share a first level, hence a key; a key is always
 *   read in the context of one module's diagram, where it names that
 *   module's direct inner module.
 *
 * RESULT
 *   The same reduced ordered BDD as building every gate with AND and OR
 *   (checked against that build and against BuDDy in the tests), frozen as
 *   lw_diagram_freeze lays it out.  Its nodes count against max_nodes
 *   like the scratch manager's.
 */
#include "layerwise/bdd.h"

#include <stdlib.h>
#include <string.h>

#include "layerwise/alloc.h"

#define NONE UINT32_MAX

typedef struct module {
    uint32_t gate;
    uint32_t a;             /* its first level */
    lw_bref root;           /* its BDD in the scratch manager */
    uint32_t first, n;      /* its frozen nodes: nodes[first .. first+n) */
    uint32_t kids, nkids;   /* its direct inner modules: kid[kids ..] */
    uint32_t parent;        /* the module it lies directly in, or NONE */
} module;

typedef struct mnode {
    uint32_t key;           /* scratch key; terminals: NONE */
    uint32_t hi, lo;        /* indices local to the module */
} mnode;

typedef struct builder {
    const lw_network *net;
    const uint32_t *var_level;
    size_t max_nodes;
    lw_error *err;
    lw_bdd *b;              /* scratch manager */
    uint32_t *post;         /* gates in post-order */
    uint32_t npost;
    uint32_t *mod_of;       /* gate -> module index, or NONE */
    module *mods;
    uint32_t nmods;
    uint32_t *kid;          /* module indices, grouped by parent, by a */
    mnode *nodes;           /* every module's frozen diagram */
    size_t nnodes;
    /* the whole function, as written out, in blocks that never move */
    struct fnode { uint32_t lv, hi, lo; } **blk;
    size_t nblk, cap_blk;
    size_t nflat;
} builder;

static lw_status limit_error(builder *B)
{
    return lw_error_set(B->err, LW_ELIMIT, NULL, 0,
                        "the decision diagram reached the node limit of %zu "
                        "nodes (--max-nodes) before the hazard was built; "
                        "raise --max-nodes if memory allows (about 40 bytes "
                        "a node), or split the model into smaller hazards",
                        B->max_nodes);
}

static lw_status scratch_failed(builder *B)
{
    return lw_bdd_status(B->b) == LW_ELIMIT ? limit_error(B)
                                            : lw_error_oom(B->err);
}

/* ---- 1. modules -------------------------------------------------------- */

static int is_leaf(const lw_gate *g)
{
    return g->kind == LW_GATE_VAR || g->kind == LW_GATE_TRUE ||
           g->kind == LW_GATE_FALSE;
}

/* One depth-first walk (inputs left to right, as the order was made),
 * then the module test bottom-up.  Fills post, mod_of, mods. */
static lw_status find_modules(builder *B, uint32_t root)
{
    const lw_network *net = B->net;
    size_t ng = net->ngates + 1, nv = net->nvars + 1;
    uint32_t *first = lw_calloc(ng, sizeof *first);
    uint32_t *last = lw_calloc(ng, sizeof *last);
    uint32_t *exit_ = lw_calloc(ng, sizeof *exit_);
    uint32_t *vfirst = lw_calloc(nv, sizeof *vfirst);
    uint32_t *vlast = lw_calloc(nv, sizeof *vlast);
    uint32_t *stack = lw_malloc(ng * sizeof *stack);
    uint32_t *pos = lw_malloc(ng * sizeof *pos);
    uint32_t *mn = lw_malloc(ng * sizeof *mn);
    uint32_t *mx = lw_malloc(ng * sizeof *mx);
    B->post = lw_malloc(ng * sizeof *B->post);
    B->mod_of = lw_malloc(ng * sizeof *B->mod_of);
    lw_status st = LW_OK;
    if (!first || !last || !exit_ || !vfirst || !vlast || !stack || !pos ||
        !mn || !mx || !B->post || !B->mod_of) {
        st = lw_error_oom(B->err);
        goto done;
    }
    /* times start at 1; 0 is "not met" */
    uint32_t t = 0;
    size_t sp = 0;
    first[root] = last[root] = ++t;
    stack[sp] = root;
    pos[sp++] = 0;
    while (sp) {
        uint32_t g = stack[sp - 1];
        const lw_gate *gt = &net->gates[g];
        if (pos[sp - 1] < gt->nin) {
            uint32_t c = net->inputs[gt->first + pos[sp - 1]++];
            const lw_gate *ct = &net->gates[c];
            if (ct->kind == LW_GATE_VAR) {
                ++t;
                if (!vfirst[ct->var])
                    vfirst[ct->var] = t;
                vlast[ct->var] = t;
            } else if (is_leaf(ct)) {
                continue;
            } else if (!first[c]) {
                first[c] = last[c] = ++t;
                stack[sp] = c;
                pos[sp++] = 0;
            } else {
                last[c] = ++t;
            }
        } else {
            exit_[g] = ++t;
            B->post[B->npost++] = g;
            sp--;
        }
    }
    /* everything met below a gate: between its entry and exit? */
    B->nmods = 0;
    for (uint32_t i = 0; i < B->npost; i++) {
        uint32_t g = B->post[i];
        const lw_gate *gt = &net->gates[g];
        uint32_t lo = UINT32_MAX, hi = 0;
        for (uint32_t k = 0; k < gt->nin; k++) {
            uint32_t c = net->inputs[gt->first + k];
            const lw_gate *ct = &net->gates[c];
            uint32_t f, l;
            if (ct->kind == LW_GATE_VAR) {
                f = vfirst[ct->var];
                l = vlast[ct->var];
            } else if (is_leaf(ct)) {
                continue;
            } else {
                f = first[c] < mn[c] ? first[c] : mn[c];
                l = last[c] > mx[c] ? last[c] : mx[c];
            }
            lo = f < lo ? f : lo;
            hi = l > hi ? l : hi;
        }
        mn[g] = lo;
        mx[g] = hi;
        B->mod_of[g] = (lo > first[g] && hi < exit_[g]) || g == root
                           ? B->nmods++ : NONE;
    }
    B->mods = lw_calloc(B->nmods + 1, sizeof *B->mods);
    if (!B->mods) {
        st = lw_error_oom(B->err);
        goto done;
    }
    for (uint32_t i = 0; i < B->npost; i++) {
        uint32_t g = B->post[i];
        if (B->mod_of[g] != NONE) {
            module *m = &B->mods[B->mod_of[g]];
            m->gate = g;
            m->parent = NONE;
            m->root = LW_BREF_INVALID;
        }
    }
done:
    lw_free(first);
    lw_free(last);
    lw_free(exit_);
    lw_free(vfirst);
    lw_free(vlast);
    lw_free(stack);
    lw_free(pos);
    lw_free(mn);
    lw_free(mx);
    return st;
}

/* Each module's direct inner modules that are not constant, sorted by
 * first level (run after build_modules, which sets 'a'): the module owning
 * a gate is found top-down (reverse post-order lists parents before
 * children). */
static lw_status link_modules(builder *B)
{
    const lw_network *net = B->net;
    size_t ng = net->ngates + 1;
    uint32_t *owner = lw_malloc(ng * sizeof *owner);
    uint32_t *count = lw_calloc(B->nmods + 1, sizeof *count);
    B->kid = lw_malloc((B->nmods + 1) * sizeof *B->kid);
    if (!owner || !count || !B->kid) {
        lw_free(owner);
        lw_free(count);
        return lw_error_oom(B->err);
    }
    for (uint32_t i = B->npost; i-- > 0;) {
        uint32_t g = B->post[i];
        uint32_t o = B->mod_of[g] != NONE ? B->mod_of[g] : owner[g];
        const lw_gate *gt = &net->gates[g];
        for (uint32_t k = 0; k < gt->nin; k++) {
            uint32_t c = net->inputs[gt->first + k];
            if (is_leaf(&net->gates[c]))
                continue;
            if (B->mod_of[c] != NONE)
                B->mods[B->mod_of[c]].parent = o;
            else
                owner[c] = o;
        }
    }
    for (uint32_t m = 0; m < B->nmods; m++)
        if (B->mods[m].parent != NONE && B->mods[m].a != NONE)
            count[B->mods[m].parent]++;
    uint32_t at = 0;
    for (uint32_t m = 0; m < B->nmods; m++) {
        B->mods[m].kids = at;
        B->mods[m].nkids = 0;
        at += count[m];
    }
    /* post-order lists a module's inner modules by increasing first
     * level, since they are visited left to right */
    for (uint32_t m = 0; m < B->nmods; m++) {
        uint32_t p = B->mods[m].parent;
        if (p != NONE && B->mods[m].a != NONE)
            B->kid[B->mods[p].kids + B->mods[p].nkids++] = m;
    }
    lw_free(owner);
    lw_free(count);
    return LW_OK;
}

/* ---- 2. each module's BDD -------------------------------------------- */

/* Gates spliced into their parent: an AND directly under an AND (or an
 * OR under an OR) with no other parent, and not a module, adds its inputs
 * to its parent's instead of being built (associativity).  Otherwise
 * every level of OR above a path would copy the path's nodes again. */
static lw_status mark_spliced(builder *B, unsigned char **out)
{
    const lw_network *net = B->net;
    size_t ng = net->ngates + 1;
    uint32_t *refs = lw_calloc(ng, sizeof *refs);
    unsigned char *sp = lw_calloc(ng, 1);
    if (!refs || !sp) {
        lw_free(refs);
        lw_free(sp);
        return lw_error_oom(B->err);
    }
    for (uint32_t i = 0; i < B->npost; i++) {
        const lw_gate *gt = &net->gates[B->post[i]];
        for (uint32_t k = 0; k < gt->nin; k++)
            refs[net->inputs[gt->first + k]]++;
    }
    for (uint32_t i = 0; i < B->npost; i++) {
        const lw_gate *gt = &net->gates[B->post[i]];
        if (gt->kind != LW_GATE_AND && gt->kind != LW_GATE_OR)
            continue;
        for (uint32_t k = 0; k < gt->nin; k++) {
            uint32_t c = net->inputs[gt->first + k];
            if (net->gates[c].kind == gt->kind && refs[c] == 1 &&
                B->mod_of[c] == NONE)
                sp[c] = 1;
        }
    }
    lw_free(refs);
    *out = sp;
    return LW_OK;
}

/* Every gate in post-order; a module's value as an input of the gates
 * above it is its stand-in variable (or its constant). */
static lw_status build_modules(builder *B)
{
    const lw_network *net = B->net;
    size_t ng = net->ngates + 1;
    lw_bref *val = lw_malloc(ng * sizeof *val);
    lw_bref *ins = NULL;
    uint32_t *todo = NULL;
    size_t cap_ins = 0, cap_todo = 0;
    unsigned char *spliced = NULL;
    if (!val)
        return lw_error_oom(B->err);
    lw_status st = mark_spliced(B, &spliced);
    if (st != LW_OK) {
        lw_free(val);
        return st;
    }
    lw_bdd *b = B->b;
    for (uint32_t i = 0; i < B->npost; i++) {
        uint32_t g = B->post[i];
        if (spliced[g])
            continue;
        const lw_gate *gt = &net->gates[g];
        /* the inputs, through spliced gates */
        uint32_t nins = 0;
        size_t nt = 0;
        uint32_t *nt2 = lw_grow(todo, &cap_todo, 1, sizeof *nt2);
        if (!nt2) {
            st = lw_error_oom(B->err);
            break;
        }
        todo = nt2;
        todo[nt++] = g;
        while (nt && st == LW_OK) {
            const lw_gate *at = &net->gates[todo[--nt]];
            for (uint32_t k = at->nin; k-- > 0;) {
                uint32_t c = net->inputs[at->first + k];
                const lw_gate *ct = &net->gates[c];
                if (spliced[c] && ct->kind == gt->kind &&
                    (gt->kind == LW_GATE_AND || gt->kind == LW_GATE_OR)) {
                    nt2 = lw_grow(todo, &cap_todo, nt + 1, sizeof *nt2);
                    if (!nt2) {
                        st = lw_error_oom(B->err);
                        break;
                    }
                    todo = nt2;
                    todo[nt++] = c;
                    continue;
                }
                lw_bref *ni = lw_grow(ins, &cap_ins, nins + 1, sizeof *ni);
                if (!ni) {
                    st = lw_error_oom(B->err);
                    break;
                }
                ins = ni;
                if (ct->kind == LW_GATE_VAR)
                    ins[nins++] = lw_bdd_var(b, 2 * B->var_level[ct->var] + 1);
                else if (ct->kind == LW_GATE_TRUE)
                    ins[nins++] = LW_BDD_TRUE;
                else if (ct->kind == LW_GATE_FALSE)
                    ins[nins++] = LW_BDD_FALSE;
                else
                    ins[nins++] = val[c];
            }
        }
        if (st != LW_OK)
            break;
        lw_bref r = LW_BREF_INVALID;
        switch (gt->kind) {
        case LW_GATE_AND:
        case LW_GATE_OR:
            lw_bdd_sort_deepest_first(b, ins, nins);
            r = gt->kind == LW_GATE_AND ? LW_BDD_TRUE : LW_BDD_FALSE;
            for (uint32_t k = 0; k < nins && r != LW_BREF_INVALID; k++)
                r = gt->kind == LW_GATE_AND ? lw_bdd_and(b, ins[k], r)
                                            : lw_bdd_or(b, ins[k], r);
            break;
        case LW_GATE_VOTE:
            /* inputs were gathered last to first */
            for (uint32_t k = 0; k < nins / 2; k++) {
                lw_bref t = ins[k];
                ins[k] = ins[nins - 1 - k];
                ins[nins - 1 - k] = t;
            }
            r = lw_bdd_atleast(b, gt->k, ins, nins);
            break;
        default:
            break;
        }
        if (st != LW_OK)
            break;
        if (r == LW_BREF_INVALID) {
            st = scratch_failed(B);
            break;
        }
        val[g] = r;
        uint32_t m = B->mod_of[g];
        if (m == NONE)
            continue;
        /* A module: keep its diagram and stand in as one variable just
         * above its top level.  Its top key is 2l + 1 for a level l, or
         * 2a for an inner module whose own top level is a: either way its
         * top level once written out is key / 2. */
        module *md = &B->mods[m];
        md->root = r;
        md->a = NONE;
        if (r <= 1)
            continue;                   /* a constant stands for itself */
        md->a = lw_bdd_level(b, r) / 2;
        val[g] = lw_bdd_mk(b, 2 * md->a, LW_BDD_TRUE, LW_BDD_FALSE);
        if (val[g] == LW_BREF_INVALID) {
            st = scratch_failed(B);
            break;
        }
    }
    lw_free(val);
    lw_free(ins);
    lw_free(todo);
    lw_free(spliced);
    return st;
}

static int cmp_u32(const void *a, const void *b)
{
    uint32_t x = *(const uint32_t *)a, y = *(const uint32_t *)b;
    return (x > y) - (x < y);
}

/* Copy each module's diagram into B->nodes: local indices 0 and 1 are the
 * terminals, then the nodes by increasing manager index (children before
 * parents), so the root comes last. */
static lw_status freeze_modules(builder *B)
{
    lw_bdd *b = B->b;
    size_t nb = lw_bdd_nodes(b);
    uint32_t *stamp = lw_calloc(nb + 1, sizeof *stamp);
    uint32_t *local = lw_malloc((nb + 1) * sizeof *local);
    uint32_t *list = lw_malloc((nb + 1) * sizeof *list);
    size_t cap = 0;
    lw_status st = LW_OK;
    if (!stamp || !local || !list) {
        st = lw_error_oom(B->err);
        goto done;
    }
    local[0] = 0;
    local[1] = 1;
    for (uint32_t m = 0; m < B->nmods; m++) {
        module *md = &B->mods[m];
        md->first = (uint32_t)B->nnodes;
        md->n = 0;
        if (md->root <= 1)
            continue;
        size_t n = 0;
        lw_bref lowest = md->root;
        list[n++] = md->root;
        stamp[md->root] = m + 1;
        for (size_t i = 0; i < n; i++) {
            lw_bref c[2] = {lw_bdd_hi(b, list[i]), lw_bdd_lo(b, list[i])};
            for (int k = 0; k < 2; k++)
                if (c[k] > 1 && stamp[c[k]] != m + 1) {
                    stamp[c[k]] = m + 1;
                    list[n++] = c[k];
                    lowest = c[k] < lowest ? c[k] : lowest;
                }
        }
        if ((size_t)(md->root - lowest) < 8 * n) {
            /* dense (the large modules): a sweep beats sorting */
            n = 0;
            for (lw_bref x = lowest; x <= md->root; x++)
                if (stamp[x] == m + 1)
                    list[n++] = x;
        } else {
            qsort(list, n, sizeof *list, cmp_u32);
        }
        mnode *nn = lw_grow(B->nodes, &cap, B->nnodes + n + 2, sizeof *nn);
        if (!nn) {
            st = lw_error_oom(B->err);
            goto done;
        }
        B->nodes = nn;
        mnode *out = B->nodes + B->nnodes;
        out[0] = (mnode){NONE, 0, 0};
        out[1] = (mnode){NONE, 1, 1};
        for (size_t i = 0; i < n; i++) {
            local[list[i]] = (uint32_t)i + 2;
            out[i + 2] = (mnode){lw_bdd_level(b, list[i]),
                                 local[lw_bdd_hi(b, list[i])],
                                 local[lw_bdd_lo(b, list[i])]};
        }
        md->n = (uint32_t)n + 2;
        B->nnodes += n + 2;
    }
done:
    lw_free(stamp);
    lw_free(local);
    lw_free(list);
    return st;
}

/* ---- 3. writing out the whole function -------------------------------- */

#define BLK_BITS 16
#define BLK_SIZE ((size_t)1 << BLK_BITS)

static inline struct fnode *flat(const builder *B, size_t i)
{
    return &B->blk[i >> BLK_BITS][i & (BLK_SIZE - 1)];
}

/* Append a node; NONE at the node limit, NONE - 1 out of memory. */
static uint32_t emit(builder *B, uint32_t level, uint32_t hi, uint32_t lo)
{
    if (B->nflat >= B->max_nodes)
        return NONE;
    if ((B->nflat & (BLK_SIZE - 1)) == 0) {
        size_t k = B->nflat >> BLK_BITS;
        struct fnode **nb = lw_grow(B->blk, &B->cap_blk, k + 1, sizeof *nb);
        if (!nb)
            return NONE - 1;
        B->blk = nb;
        if (k >= B->nblk) {
            B->blk[k] = lw_malloc(BLK_SIZE * sizeof **B->blk);
            if (!B->blk[k])
                return NONE - 1;
            B->nblk = k + 1;
        }
    }
    *flat(B, B->nflat) = (struct fnode){level, hi, lo};
    return (uint32_t)B->nflat++;
}

/* Module m's direct inner module whose stand-in key is 2a. */
static uint32_t inner(const builder *B, uint32_t m, uint32_t a)
{
    const module *md = &B->mods[m];
    uint32_t lo = 0, hi = md->nkids;
    while (lo < hi) {
        uint32_t mid = lo + (hi - lo) / 2;
        if (B->mods[B->kid[md->kids + mid]].a < a)
            lo = mid + 1;
        else
            hi = mid;
    }
    return B->kid[md->kids + lo];   /* present: the key came from it */
}

typedef struct frame {
    uint32_t m;         /* module being copied */
    uint32_t i;         /* next local node */
    size_t memo;        /* offset of its local -> written-out map */
} frame;

/* Write out the root module, copying inner modules where their stand-ins
 * are tested; an explicit stack, since modules may nest 100,000 deep. */
static lw_status write_out(builder *B, uint32_t rootmod, uint32_t *out)
{
    frame *fs = NULL;
    size_t nfs = 0, cap_fs = 0;
    uint32_t *memo = NULL;
    size_t top = 0, cap_memo = 0;
    lw_status st = LW_OK;
    B->nflat = 0;               /* 0 and 1: the terminals */
    if (emit(B, 0, 0, 0) >= NONE - 1 || emit(B, 0, 1, 1) >= NONE - 1)
        return lw_error_oom(B->err);
    /* push the root module with leaves 1 -> 1 and 0 -> 0 */
    uint32_t push_m = rootmod, push_h = 1, push_l = 0;
    for (;;) {
        if (push_m != NONE) {
            const module *md = &B->mods[push_m];
            frame *nf = lw_grow(fs, &cap_fs, nfs + 1, sizeof *nf);
            uint32_t *nm = lw_grow(memo, &cap_memo, top + md->n, sizeof *nm);
            if (nf)
                fs = nf;
            if (nm)
                memo = nm;
            if (!nf || !nm) {
                st = lw_error_oom(B->err);
                break;
            }
            fs[nfs++] = (frame){push_m, 2, top};
            memo[top] = push_l;
            memo[top + 1] = push_h;
            top += md->n;
            push_m = NONE;
        }
        frame *fr = &fs[nfs - 1];
        const module *md = &B->mods[fr->m];
        const mnode *nodes = B->nodes + md->first;
        uint32_t *mm = memo + fr->memo;
        while (fr->i < md->n) {
            const mnode *x = &nodes[fr->i];
            uint32_t h = mm[x->hi], l = mm[x->lo];
            if (x->key & 1) {
                uint32_t r = emit(B, x->key / 2, h, l);
                if (r >= NONE - 1) {
                    st = r == NONE ? limit_error(B) : lw_error_oom(B->err);
                    goto done;
                }
                mm[fr->i++] = r;
            } else {
                push_m = inner(B, fr->m, x->key / 2);
                push_h = h;
                push_l = l;
                break;
            }
        }
        if (push_m != NONE)
            continue;
        /* module done: its root is its last node */
        uint32_t r = mm[md->n - 1];
        top = fr->memo;
        nfs--;
        if (nfs == 0) {
            *out = r;
            break;
        }
        frame *pf = &fs[nfs - 1];
        memo[pf->memo + pf->i++] = r;
    }
done:
    lw_free(fs);
    lw_free(memo);
    return st;
}

/* Number the written-out nodes level by level, deepest first, as
 * lw_diagram_freeze does. */
static lw_status to_diagram(builder *B, uint32_t root, uint32_t nlevels,
                            const uint32_t *level_var, lw_diagram **out)
{
    size_t n = B->nflat;
    lw_diagram *d = lw_calloc(1, sizeof *d);
    uint32_t *start = lw_calloc((size_t)nlevels + 1, sizeof *start);
    uint32_t *map = lw_malloc(n * sizeof *map);
    if (d) {
        d->level = lw_malloc(n * sizeof *d->level);
        d->hi = lw_malloc(n * sizeof *d->hi);
        d->lo = lw_malloc(n * sizeof *d->lo);
        d->level_var = lw_malloc((nlevels + 1) * sizeof *d->level_var);
        d->lbeg = lw_malloc(((size_t)nlevels + 1) * sizeof *d->lbeg);
    }
    if (!d || !start || !map || !d->level || !d->hi || !d->lo ||
        !d->level_var || !d->lbeg) {
        lw_free(start);
        lw_free(map);
        lw_diagram_free(d);
        return lw_error_oom(B->err);
    }
    d->n = (uint32_t)n;
    d->nlevels = nlevels;
    if (nlevels)
        memcpy(d->level_var, level_var, nlevels * sizeof *level_var);
    for (size_t i = 2; i < n; i++)
        start[flat(B, i)->lv]++;
    uint32_t pos = 2;
    d->lbeg[nlevels] = (uint32_t)n;
    for (uint32_t l = nlevels; l-- > 0;) {
        uint32_t c = start[l];
        start[l] = d->lbeg[l] = pos;
        pos += c;
    }
    map[0] = 0;
    map[1] = 1;
    for (size_t i = 2; i < n; i++)
        map[i] = start[flat(B, i)->lv]++;
    d->level[0] = d->level[1] = LW_LEVEL_TERMINAL;
    d->hi[0] = d->lo[0] = 0;
    d->hi[1] = d->lo[1] = 1;
    for (size_t i = 2; i < n; i++) {
        uint32_t k = map[i];
        const struct fnode *x = flat(B, i);
        d->level[k] = x->lv;
        d->hi[k] = map[x->hi];
        d->lo[k] = map[x->lo];
    }
    lw_diagram_measure_edges(d);
    d->root = map[root];
    lw_free(start);
    lw_free(map);
    *out = d;
    return LW_OK;
}

lw_status lw_diagram_build(const lw_network *net, uint32_t root,
                           const uint32_t *var_level, uint32_t nlevels,
                           const uint32_t *level_var, size_t max_nodes,
                           lw_diagram **out, lw_error *err)
{
    *out = NULL;
    builder B;
    memset(&B, 0, sizeof B);
    B.net = net;
    B.var_level = var_level;
    B.max_nodes = max_nodes ? max_nodes : 20000000u;
    B.err = err;
    lw_status st;
    const lw_gate *rg = &net->gates[root];
    if (is_leaf(rg) || nlevels >= (UINT32_MAX - 2) / 2) {
        /* a single event or a constant: no modules to speak of */
        lw_bdd *b = lw_bdd_new(nlevels, B.max_nodes);
        if (!b)
            return lw_error_oom(err);
        lw_bref r = rg->kind == LW_GATE_VAR
                        ? lw_bdd_var(b, var_level[rg->var])
                        : rg->kind == LW_GATE_TRUE ? LW_BDD_TRUE
                                                   : LW_BDD_FALSE;
        st = r == LW_BREF_INVALID
                 ? lw_error_oom(err)
                 : lw_diagram_freeze(b, r, nlevels, level_var, out, err);
        lw_bdd_free(b);
        return st;
    }
    B.b = lw_bdd_new(2 * nlevels + 2, B.max_nodes);
    if (!B.b)
        return lw_error_oom(err);
    st = find_modules(&B, root);
    if (st == LW_OK)
        st = build_modules(&B);
    if (st == LW_OK)
        st = link_modules(&B);
    if (st == LW_OK)
        st = freeze_modules(&B);
    /* the scratch manager is not needed any more: free it before the
     * whole function is written out */
    lw_bdd_free(B.b);
    B.b = NULL;
    uint32_t rootmod = st == LW_OK ? B.mod_of[root] : NONE;
    if (st == LW_OK) {
        const module *rm = &B.mods[rootmod];
        if (rm->root <= 1) {
            lw_bdd *b = lw_bdd_new(nlevels, 16);
            st = b ? lw_diagram_freeze(b, rm->root, nlevels, level_var, out,
                                       err)
                   : lw_error_oom(err);
            lw_bdd_free(b);
        } else {
            uint32_t r = 0;
            st = write_out(&B, rootmod, &r);
            if (st == LW_OK)
                st = to_diagram(&B, r, nlevels, level_var, out);
        }
    }
    lw_free(B.post);
    lw_free(B.mod_of);
    lw_free(B.mods);
    lw_free(B.kid);
    lw_free(B.nodes);
    for (size_t k = 0; k < B.nblk; k++)
        lw_free(B.blk[k]);
    lw_free(B.blk);
    return st;
}
