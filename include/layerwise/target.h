/*
 * layerwise/target.h - what each safeguard must achieve (analysis room).
 *
 * P(hazard) is linear in each variable's probability:
 *     P = a + B * p_x,   a = P(hazard | x never happens), B = Birnbaum.
 * For a goal G, a safeguard x meets it alone when its miss probability is
 * at most required = (G - a) / B; when a >= G even a perfect layer cannot
 * meet the goal (reachable = false, required undefined); when B = 0 the
 * layer does not change the hazard (required undefined).
 */
#ifndef LAYERWISE_TARGET_H
#define LAYERWISE_TARGET_H

#include "layerwise/analysis.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef struct lw_target_row {
    uint32_t var;           /* network variable (a safeguard) */
    double current;         /* its miss probability now */
    double floor;           /* a: P(hazard) if it never missed */
    double birnbaum;        /* B */
    bool reachable;         /* a < goal */
    bool has_required;      /* reachable and B > 0 */
    double required;        /* (goal - a) / B, clipped to [0, 1] */
    bool already;           /* current already meets the goal */
} lw_target_row;

typedef struct lw_target {
    size_t hazard, variant;
    double goal;
    double probability;     /* P(hazard) now */
    bool meets;             /* probability <= goal */
    size_t nrows;
    lw_target_row *rows;    /* safeguards, most effective first */
    size_t best;            /* row of the most effective layer, or LW_NONE */
    const lw_network *net;  /* names the variables (borrowed from owned) */
    lw_analysis *owned;
} lw_target;

lw_status lw_target_run(const lw_model *m, size_t variant, size_t hazard,
                        double goal, const lw_options *opt, lw_target **out,
                        lw_error *err);
void lw_target_free(lw_target *t);

#ifdef __cplusplus
}
#endif
#endif
