/*
 * layerwise/bdd.h - the engine room: reduced ordered BDDs and ZBDDs.
 *
 * An lw_bdd manager owns every node in one arena; nodes are never freed
 * one by one, and lw_bdd_free releases them all.  A node is named by a
 * 32-bit index (lw_bref); 0 and 1 are the terminals.  Variables are
 * identified by their level (0 = top of the order).
 *
 * The same manager type serves zero-suppressed diagrams (families of sets,
 * used for minimal cut sets) when made with lw_zdd_new; a manager is one
 * kind or the other, never both.
 *
 * Every operation returns LW_BREF_INVALID once the node limit is reached or
 * memory runs out; the reason is sticky and read with lw_bdd_status.
 *
 * lw_builder turns a network into BDDs: it fixes the variable order (first
 * occurrence in a depth-first, left-to-right walk from the roots) and
 * builds each gate once.  lw_diagram is a frozen, compact copy of one
 * function, the form every analysis reads.
 */
#ifndef LAYERWISE_BDD_H
#define LAYERWISE_BDD_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "layerwise/error.h"
#include "layerwise/network.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef uint32_t lw_bref;
#define LW_BDD_FALSE ((lw_bref)0)
#define LW_BDD_TRUE ((lw_bref)1)
#define LW_BREF_INVALID ((lw_bref)UINT32_MAX)
#define LW_LEVEL_TERMINAL UINT32_MAX

typedef struct lw_bdd lw_bdd;

/* A manager for 'nlevels' variables that makes at most 'max_nodes' nodes
 * (0 = the default, 20 million).  NULL when out of memory. */
lw_bdd *lw_bdd_new(uint32_t nlevels, size_t max_nodes);
lw_bdd *lw_zdd_new(uint32_t nlevels, size_t max_nodes);
void lw_bdd_free(lw_bdd *b);

lw_status lw_bdd_status(const lw_bdd *b);   /* LW_OK, LW_ELIMIT, LW_ENOMEM */
size_t lw_bdd_nodes(const lw_bdd *b);       /* nodes made, terminals too */
size_t lw_bdd_max_nodes(const lw_bdd *b);
size_t lw_bdd_bytes(const lw_bdd *b);       /* memory held */

uint32_t lw_bdd_level(const lw_bdd *b, lw_bref f);
lw_bref lw_bdd_hi(const lw_bdd *b, lw_bref f);
lw_bref lw_bdd_lo(const lw_bdd *b, lw_bref f);

/* Find or make the node (level, hi, lo), applying the reduction rule of the
 * manager's kind (BDD: hi == lo; ZDD: hi == 0). */
lw_bref lw_bdd_mk(lw_bdd *b, uint32_t level, lw_bref hi, lw_bref lo);

/* BDD operations. */
lw_bref lw_bdd_var(lw_bdd *b, uint32_t level);
lw_bref lw_bdd_and(lw_bdd *b, lw_bref f, lw_bref g);
lw_bref lw_bdd_or(lw_bdd *b, lw_bref f, lw_bref g);
lw_bref lw_bdd_not(lw_bdd *b, lw_bref f);
/* At least k of the n functions are true. */
lw_bref lw_bdd_atleast(lw_bdd *b, uint32_t k, const lw_bref *in, size_t n);
/* ZBDD (a manager made with lw_zdd_new): the sets of P that hold no set
 * of Q. */
lw_bref lw_zdd_without(lw_bdd *z, lw_bref P, lw_bref Q);
/* ZBDD: the union of P and Q; the family { p u q : p in P, q in Q }; the
 * minimal sets of P (none holding another).  Like 'without', each counts
 * its steps against a budget of 64 per allowed node.  The four recurse on
 * the C stack, up to twice the number of levels deep: past LW_DEEP_LEVELS
 * levels call them through lw_deep_call (layerwise/deep.h), as the cut-set
 * builders below do. */
lw_bref lw_zdd_union(lw_bdd *z, lw_bref P, lw_bref Q);
lw_bref lw_zdd_product(lw_bdd *z, lw_bref P, lw_bref Q);
lw_bref lw_zdd_minimal(lw_bdd *z, lw_bref P);
/* The deepest level in any set of P (LW_LEVEL_TERMINAL for 0 and 1);
 * whether P holds the empty set; record that P is known to be minimal
 * (the caller's proof: lw_zdd_minimal then returns it as it is). */
uint32_t lw_zdd_deepest(const lw_bdd *z, lw_bref P);
bool lw_zdd_has_empty(const lw_bdd *z, lw_bref P);
void lw_zdd_mark_minimal(lw_bdd *z, lw_bref P);
/* Sort refs by the level of their top node, deepest first, equal levels
 * by increasing index: the order in which gate inputs are folded (the
 * order puts earlier inputs higher, so combining a higher operand with
 * the lower accumulated one only walks the higher).  In place, no memory,
 * O(n log n) for the gates with tens of thousands of inputs. */
void lw_bdd_sort_deepest_first(const lw_bdd *b, lw_bref *r, size_t n);
/* Number of nodes reachable from f, terminals included. */
size_t lw_bdd_size(const lw_bdd *b, lw_bref f);

/* ---- from a network ---------------------------------------------- */

typedef struct lw_builder lw_builder;

/* Fix the order from 'roots' (gates of 'net') and prepare to build. */
lw_status lw_builder_new(const lw_network *net, const uint32_t *roots,
                         size_t nroots, size_t max_nodes, lw_builder **out,
                         lw_error *err);
void lw_builder_free(lw_builder *bl);
/* The BDD of gate 'g' (memoised).  On failure the message names the node
 * limit and what to try. */
lw_status lw_builder_gate(lw_builder *bl, uint32_t g, lw_bref *out,
                          lw_error *err);
lw_bdd *lw_builder_bdd(lw_builder *bl);
uint32_t lw_builder_nlevels(const lw_builder *bl);
/* Levels that the first root alone reaches: 0 .. root_levels-1. */
uint32_t lw_builder_root_levels(const lw_builder *bl);
const uint32_t *lw_builder_level_var(const lw_builder *bl); /* level->var */
const uint32_t *lw_builder_var_level(const lw_builder *bl); /* var->level,
                                                  UINT32_MAX when unused */

/* ---- frozen diagrams ---------------------------------------------- */

/* A compact copy of one function: nodes grouped by level, deepest level
 * first (so children come before parents), terminals at 0 and 1, the
 * root last. */
typedef struct lw_diagram {
    uint32_t n;             /* nodes, terminals included */
    uint32_t root;          /* index of the root (0 or 1 when constant) */
    uint32_t *level;        /* per node; LW_LEVEL_TERMINAL for 0 and 1 */
    uint32_t *hi, *lo;      /* children, local indices */
    uint32_t nlevels;       /* levels of the order */
    uint32_t *level_var;    /* level -> network variable (owned copy) */
    uint32_t *lbeg;         /* nlevels + 1: level l's nodes are
                               [lbeg[l], l ? lbeg[l - 1] : n) */
    uint32_t edge_span;     /* longest edge to a non-terminal child:
                               max of parent index - child index (0 when
                               there is none) */
} lw_diagram;

lw_status lw_diagram_freeze(const lw_bdd *b, lw_bref f, uint32_t nlevels,
                            const uint32_t *level_var, lw_diagram **out,
                            lw_error *err);
/* The same, but nodes within a level are numbered in the order of a
 * depth-first walk from the root (hi first), so that the frozen copy
 * depends only on the function, not on the order its nodes were made. */
lw_status lw_diagram_freeze_canonical(const lw_bdd *b, lw_bref f,
                                      uint32_t nlevels,
                                      const uint32_t *level_var,
                                      lw_diagram **out, lw_error *err);
void lw_diagram_free(lw_diagram *d);
/* Set d->edge_span from the children (the freezers do). */
void lw_diagram_measure_edges(lw_diagram *d);
/* 1 when a and b are the same BDD up to the numbering of their nodes (a
 * walk from the roots pairs their nodes one to one, level for level), 0
 * when not, -1 when out of memory. */
int lw_diagram_same(const lw_diagram *a, const lw_diagram *b);

/* The frozen BDD of gate 'root' of a monotone network (AND, OR, k-of-n),
 * built module by module (engine/modules.c): each module's diagram once,
 * with its inner modules as single variables, then the whole function
 * written out by substitution, with no manager holding it.  'var_level'
 * and 'level_var' must be the depth-first first-occurrence order of the
 * builder (lw_builder_new with 'root' as the first root).  The same
 * diagram as lw_builder_gate + lw_diagram_freeze, in a fraction of the
 * time and memory on modular networks. */
lw_status lw_diagram_build(const lw_network *net, uint32_t root,
                           const uint32_t *var_level, uint32_t nlevels,
                           const uint32_t *level_var, size_t max_nodes,
                           lw_diagram **out, lw_error *err);

/* Probability of the function when level l is true with probability
 * q[l]: one bottom-up pass.  'work' holds d->n doubles (node values are
 * left there). */
double lw_diagram_prob(const lw_diagram *d, const double *q, double *work);

/* Birnbaum importance of every level (dP/dq[l]) from one bottom-up and
 * one top-down pass; 'birnbaum' receives d->nlevels values.  Returns P. */
double lw_diagram_birnbaum(const lw_diagram *d, const double *q,
                           double *birnbaum, lw_error *err, int *ok);
/* The same with caller-owned work space: 'wr' holds 2 * d->n doubles. */
double lw_diagram_birnbaum_into(const lw_diagram *d, const double *q,
                                double *birnbaum, double *wr);

/* lw_diagram_prob's pass (the same P to the last bit) that also keeps each
 * node's difference P(hi) - P(lo) in 'diff' (d->n doubles; 0 for the
 * terminals), which is all lw_diagram_birnbaum_given needs from it. */
double lw_diagram_prob_diff(const lw_diagram *d, const double *q, double *w,
                            double *diff);

/* The same Birnbaum values given the differences a probability pass kept
 * ('node_diff', from lw_diagram_prob_diff with the same q): one top-down
 * pass, so importances cost one pass beyond the probability that every
 * analysis computes anyway; 'reach' is d->n doubles of work space.  When
 * the diagram has more than LW_RING_FROM nodes and the smallest power of
 * two above d->edge_span is under a quarter of them, the pass uses only
 * that many slots, as a ring. */
#define LW_RING_FROM 131072u
/* Tests: with 'on', lw_diagram_birnbaum_given uses the ring on every
 * diagram where it is smaller than the diagram, to check it on small
 * ones.  Returns how many passes used the ring while test mode was on,
 * since the previous call.  Process-wide; call from single-threaded test
 * code only. */
unsigned long lw_diagram_ring_for_tests(int on);
void lw_diagram_birnbaum_given(const lw_diagram *d, const double *q,
                               const double *node_diff, double *birnbaum,
                               double *reach);

/* ---- minimal cut sets ------------------------------------------------ */

/* The minimal cut sets of a monotone function as a zero-suppressed BDD,
 * by the decomposition MCS(x.f1 + f0) = {x} x (MCS(f1) without supersets
 * of MCS(f0)) + MCS(f0).  'q' gives the probability of each level. */
typedef struct lw_cut_family lw_cut_family;

typedef struct lw_level_set {
    size_t order;           /* number of levels in the set */
    uint32_t *levels;       /* increasing */
    double probability;     /* product of q over the set */
} lw_level_set;

lw_status lw_cut_family_new(const lw_diagram *d, const double *q,
                            size_t max_nodes, lw_cut_family **out,
                            lw_error *err);
/* The same family built from the network instead of the BDD: bottom-up
 * over the gates under 'root' with ZBDD union, product and minimisation.
 * Its cost grows with the families of the gates, not with the BDD, and it
 * needs only the network and the order (var_level: variable -> level), so
 * it can run beside the BDD build.  For the same order it gives the same
 * frozen family as lw_cut_family_new. */
lw_status lw_cut_family_from_network(const lw_network *net, uint32_t root,
                                     const uint32_t *var_level,
                                     uint32_t nlevels,
                                     const uint32_t *level_var,
                                     const double *q, size_t max_nodes,
                                     lw_cut_family **out, lw_error *err);
void lw_cut_family_free(lw_cut_family *f);
double lw_cut_family_count(const lw_cut_family *f);      /* all sets */
double lw_cut_family_rare_event(const lw_cut_family *f); /* sum of P(set) */
size_t lw_cut_family_nodes(const lw_cut_family *f);
/* fv[l] = sum of P(sets holding level l) / sum of P(all sets). */
lw_status lw_cut_family_fussell_vesely(const lw_cut_family *f, double *fv,
                                       lw_error *err);
/* 1 - prod over all sets of (1 - P(set)), in log space; LW_ELIMIT when
 * the family has more than 'max_sets' sets. */
lw_status lw_cut_family_upper_bound(const lw_cut_family *f, double max_sets,
                                    double *out, lw_error *err);
/* The most probable sets, best first: at most 'top' (0 = all), none
 * below 'cutoff', none longer than 'max_order' (0 = any).  Best-first
 * search guided by each node's most probable completion, so the first N
 * sets cost about N times the depth, whatever the family's size.
 * *more is set when sets were left out. */
lw_status lw_cut_family_top(const lw_cut_family *f, size_t top,
                            double cutoff, size_t max_order,
                            lw_level_set **sets, size_t *nsets, bool *more,
                            lw_error *err);
void lw_level_sets_free(lw_level_set *sets, size_t n);
/* Visit every set (for small families: tests, incident); 'fn' returns
 * non-zero to stop.  Past LW_DEEP_LEVELS levels 'fn' runs on a thread with
 * a large stack while the caller waits (layerwise/deep.h): it must not
 * longjmp or throw out of itself. */
lw_status lw_cut_family_each(const lw_cut_family *f,
                             int (*fn)(void *ud, const uint32_t *levels,
                                       size_t order, double probability),
                             void *ud, lw_error *err);

#ifdef __cplusplus
}
#endif
#endif
