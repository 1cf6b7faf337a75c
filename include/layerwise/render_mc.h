/*
 * layerwise/render_mc.h - the render room: uncertainty, compare and sweep
 * results as text (for a committee), JSON (keys of docs/cli.md) and CSV
 * (RFC 4180, header row first).
 *
 * The JSON functions return one hazard's object, caution included; NULL
 * when out of memory.  Text renderers do not print the caution footer:
 * the command prints it once under the whole report (lw_text_caution).
 */
#ifndef LAYERWISE_RENDER_MC_H
#define LAYERWISE_RENDER_MC_H

#include <jansson.h>
#include <stdbool.h>
#include <stdio.h>

#include "layerwise/model.h"
#include "layerwise/uncertainty.h"

#ifdef __cplusplus
extern "C" {
#endif

void lw_render_uncertainty_text(FILE *out, const lw_model *m,
                                const lw_uncertainty *u);
json_t *lw_uncertainty_json(const lw_model *m, const lw_uncertainty *u);

void lw_render_comparison_text(FILE *out, const lw_model *m,
                               const lw_comparison *c);
json_t *lw_comparison_json(const lw_model *m, const lw_comparison *c);
void lw_render_comparison_csv(FILE *out, const lw_model *m,
                              const lw_comparison *c, bool header);

void lw_render_sweep_text(FILE *out, const lw_model *m, const lw_sweep *s);
json_t *lw_sweep_json(const lw_model *m, const lw_sweep *s);
void lw_render_sweep_csv(FILE *out, const lw_model *m, const lw_sweep *s,
                         bool header);

/* Estimates from audit counts: a JSON array, and text lines. */
json_t *lw_observed_json(const lw_model *m, const lw_observed_info *o,
                         size_t n);
void lw_render_observed_text(FILE *out, const lw_model *m,
                             const lw_observed_info *o, size_t n);

#ifdef __cplusplus
}
#endif
#endif
