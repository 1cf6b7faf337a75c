/*
 * layerwise/analysis.h - the analysis room: the questions users ask.
 *
 * Each question takes a loaded model and options and returns a plain
 * result struct that the render room prints.  Results own their memory;
 * each lw_x_result has an lw_x_result_free.
 *
 * lw_prepared is the shared first step: compile a variant, build the
 * hazard's BDD, freeze it, and compute the point probabilities by level.
 */
#ifndef LAYERWISE_ANALYSIS_H
#define LAYERWISE_ANALYSIS_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "layerwise/bdd.h"
#include "layerwise/error.h"
#include "layerwise/model.h"
#include "layerwise/network.h"

#ifdef __cplusplus
extern "C" {
#endif

/* The short caution carried by every output (see SAFETY.md). */
const char *lw_caution(void);
/* The library version, e.g. "0.1.0". */
const char *lw_version(void);

typedef struct lw_options {
    size_t max_nodes;       /* BDD node limit (0 = default) */
    size_t top;             /* most cut sets listed (0 = all) */
    double cutoff;          /* drop cut sets below this probability */
    size_t max_order;       /* drop cut sets longer than this (0 = none) */
    size_t max_cut_sets;    /* most sets enumerated for the upper bound,
                               0 = default 1,000,000 */
} lw_options;

void lw_options_init(lw_options *o);

typedef struct lw_prepared {
    const lw_model *model;      /* borrowed */
    size_t variant;             /* LW_NONE = baseline */
    size_t hazard;              /* index into model->hazards */
    lw_network *net;            /* owned */
    lw_builder *builder;        /* owned: the order, and a manager for
                                   questions beyond the hazard */
    lw_bref root;               /* the hazard in the builder's manager once
                                   lw_prepared_root made it, else
                                   LW_BREF_INVALID */
    lw_diagram *diagram;        /* owned frozen copy of the hazard */
    uint32_t nlevels;           /* levels of the order (all events) */
    uint32_t hazard_levels;     /* levels the hazard's structure reaches */
    double *q;                  /* point probability per level */
    double probability;         /* exact P(hazard) */
    double *node_diff;          /* P(hi) - P(lo) of every diagram node,
                                   kept by the probability pass
                                   (importances start from it) */
} lw_prepared;

/* Compile, order every event (the hazard's first), build and freeze. */
lw_status lw_prepare(const lw_model *m, size_t variant, size_t hazard,
                     const lw_options *opt, lw_prepared **out, lw_error *err);
void lw_prepared_free(lw_prepared *p);
/* Free the builder once only the frozen diagram is needed; p->builder
 * becomes NULL. */
void lw_prepared_drop_builder(lw_prepared *p);
/* The hazard in the builder's manager (built on first use; the frozen
 * diagram is made without it). */
lw_status lw_prepared_root(lw_prepared *p, lw_bref *out, lw_error *err);
/* The hazard's minimal cut sets as a family (engine room), built from the
 * network and, if that meets its limit, from the frozen BDD. */
lw_status lw_prepared_cut_family(const lw_prepared *p, const lw_options *opt,
                                 lw_cut_family **out, lw_error *err);

/* ---- analyze -------------------------------------------------------- */

typedef struct lw_cut_set {
    size_t order;           /* number of events */
    uint32_t *vars;         /* network variables, sorted by name */
    double probability;     /* product of the events' probabilities */
    double share;           /* probability / sum over all cut sets */
} lw_cut_set;

typedef struct lw_importance {
    uint32_t var;           /* network variable */
    double p;               /* its point probability */
    double p_true;          /* P(hazard | var true) */
    double p_false;         /* P(hazard | var false) */
    double birnbaum;        /* p_true - p_false */
    double criticality;     /* birnbaum * p / P */
    double fussell_vesely;  /* sum P(cut sets with var) / sum P(all) */
    double raw;             /* p_true / P */
    double rrw;             /* P / p_false; valid when rrw_defined */
    bool rrw_defined;       /* false when p_false == 0 */
} lw_importance;

typedef struct lw_analysis {
    size_t hazard;              /* index into model->hazards */
    size_t variant;             /* LW_NONE = baseline */
    double probability;         /* exact */
    bool has_exposure;
    double per_year;            /* probability * exposure per year */
    double one_in;              /* 1 / probability (0 when P = 0) */
    bool has_tolerable;
    double tolerable;
    bool meets_tolerable;
    /* cut sets */
    double rare_event;          /* sum of cut-set probabilities */
    double min_cut_upper_bound; /* 1 - prod(1 - P(cut set)) */
    bool mcub_exact;            /* false when too many sets to enumerate */
    double cut_set_count;       /* all minimal cut sets (a double) */
    size_t ncut_sets;           /* listed */
    lw_cut_set *cut_sets;       /* sorted by probability, highest first */
    bool truncated;             /* top/cutoff/max-order dropped some */
    double covered;             /* sum of listed sets' probabilities */
    /* importance, sorted by Birnbaum, highest first */
    size_t nimportance;
    lw_importance *importance;
    size_t bdd_nodes;           /* nodes of the hazard's diagram */
    size_t zdd_nodes;           /* nodes of the cut-set family */
    const lw_network *net;      /* names the variables above (borrowed
                                   from 'prepared') */
    lw_prepared *owned;         /* kept alive for 'net' by lw_analyze */
} lw_analysis;

lw_status lw_analyze(const lw_model *m, size_t variant, size_t hazard,
                     const lw_options *opt, lw_analysis **out,
                     lw_error *err);
/* The same from a prepared hazard (reused by other questions). */
lw_status lw_analyze_prepared(const lw_prepared *p, const lw_options *opt,
                              lw_analysis **out, lw_error *err);
void lw_analysis_free(lw_analysis *a);

void lw_cut_sets_free(lw_cut_set *sets, size_t n);


#ifdef __cplusplus
}
#endif
#endif
