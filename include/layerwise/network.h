/*
 * layerwise/network.h - the compile room: a Boolean network over variables.
 *
 * lw_compile applies a variant to a model, turns conditions into constants
 * and simplifies them away, gives absent safeguards p = 1, and expands
 * dependence exactly:
 *
 *   common cause (beta-factor): q = beta * min(p of members); a shared
 *     variable "common:G" with P = q; member i becomes (i OR common:G) with
 *     P(i) = (p_i - q) / (1 - q), so every member keeps its marginal p_i.
 *   THERP dependence of B on A, weight w by level: B becomes
 *     (B OR (A AND depends:D)), P(B) = i = p(1 - w),
 *     P(depends:D) = (c - i) / (1 - i) with c = p + w(1 - p).
 *
 * The result has one variable per user event (for a group member or a
 * dependence second, its independent part, named by the event's id) and
 * one per group and dependence.  Gates use only AND, OR and k-of-n, so the
 * network stays monotone.  Gate 0 is the constant false, gate 1 true.
 *
 * The network borrows the model: free the network first.
 */
#ifndef LAYERWISE_NETWORK_H
#define LAYERWISE_NETWORK_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "layerwise/error.h"
#include "layerwise/model.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum lw_var_kind {
    LW_VAR_ERROR,       /* a user error event */
    LW_VAR_SAFEGUARD,   /* a user safeguard (its miss) */
    LW_VAR_COMMON,      /* common:G, the shared cause of a group */
    LW_VAR_DEPENDS      /* depends:D, the coupling of a dependence */
} lw_var_kind;

typedef struct lw_var {
    char *name;         /* owned: the event id, "common:G" or "depends:D" */
    const char *label;  /* borrowed from the model; may be NULL */
    lw_var_kind kind;
    size_t node;        /* model node of a user event, else LW_NONE */
    size_t group;       /* LW_VAR_COMMON: group index, else LW_NONE */
    size_t dep;         /* LW_VAR_DEPENDS: dependence index, else LW_NONE */
    bool part;          /* the independent part of a member or a second */
    uint32_t partner;   /* part: its common:G or depends:D variable */
    double p;           /* point probability after expansion */
} lw_var;

typedef enum lw_gate_kind {
    LW_GATE_FALSE, LW_GATE_TRUE, LW_GATE_VAR, LW_GATE_AND, LW_GATE_OR,
    LW_GATE_VOTE
} lw_gate_kind;

typedef struct lw_gate {
    lw_gate_kind kind;
    uint32_t var;       /* VAR: variable index */
    uint32_t k;         /* VOTE: at least k inputs */
    uint32_t nin;       /* number of inputs */
    uint32_t first;     /* inputs are net->inputs[first .. first + nin) */
    size_t node;        /* model node this gate came from, or LW_NONE */
} lw_gate;

typedef struct lw_network {
    const lw_model *model;      /* borrowed */
    size_t variant;             /* applied variant, or LW_NONE */
    size_t nvars;
    lw_var *vars;
    size_t ngates;
    lw_gate *gates;
    size_t ninputs;
    uint32_t *inputs;
    uint32_t *hazard_gate;      /* per model hazard (model->hazards order) */
    uint32_t *event_gate;       /* per model node: the event as modelled
                                   (user events only; else UINT32_MAX) */
    uint32_t *event_var;        /* per model node: its (independent part)
                                   variable, or UINT32_MAX */
    /* parameters after the variant, from which variable p's derive */
    lw_dist *dist;              /* per model node (events) */
    bool *present;              /* per model node (safeguards) */
    double *beta;               /* per group */
    lw_level *level;            /* per dependence */
    size_t cap_vars, cap_gates, cap_inputs;     /* allocation sizes */
} lw_network;

#define LW_NO_GATE UINT32_MAX

/* Compile 'model' with variant 'variant' (LW_NONE for the baseline). */
lw_status lw_compile(const lw_model *model, size_t variant,
                     lw_network **out, lw_error *err);
void lw_network_free(lw_network *net);

/* Point probability of each model event after the variant (absent
 * safeguards 1); fills 'event_p' (model->nnodes entries). */
void lw_network_event_probs(const lw_network *net, double *event_p);

/* Derive every variable's probability from per-event probabilities
 * (model->nnodes entries, only events read): the common-cause and THERP
 * expansions above.  Used for the point value and for every Monte Carlo
 * sample. */
void lw_network_var_probs(const lw_network *net, const double *event_p,
                          double *var_p);

const char *lw_var_kind_name(lw_var_kind k);

#ifdef __cplusplus
}
#endif
#endif
