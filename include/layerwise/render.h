/*
 * layerwise/render.h - the render room: results to bytes.
 *
 * Text is for people (aligned tables, "about 1 in N"), JSON (jansson) and
 * CSV (RFC 4180) for programs and spreadsheets.  Every text report ends
 * with the caution and every JSON document carries it as "caution".
 * Renderers write to a FILE *; the caller decides where it goes.
 */
#ifndef LAYERWISE_RENDER_H
#define LAYERWISE_RENDER_H

#include <jansson.h>
#include <stdbool.h>
#include <stdio.h>

#include "layerwise/analysis.h"
#include "layerwise/model.h"

#ifdef __cplusplus
extern "C" {
#endif

/* ---- formatting helpers (shared by every renderer) ----------------- */

/* A probability as "1.23e-06" (or "0", "1"). */
void lw_fmt_prob(char *buf, size_t n, double p);
/* A count with thousands separators, rounded to 3 significant figures
 * when large: 813,000.  Used for "1 in N". */
void lw_fmt_one_in(char *buf, size_t n, double one_in);
/* A plain figure with 3 significant digits: 0.0235, 4.3, 1,250. */
void lw_fmt_sig(char *buf, size_t n, double x);
/* Write 's' as an RFC 4180 CSV field (quoted when needed). */
void lw_csv_field(FILE *out, const char *s);
/* The label of a model node, or its id when it has none. */
const char *lw_node_text(const lw_node *n);
/* Human name of a network variable: its label or id. */
const char *lw_var_text(const lw_network *net, uint32_t v);
/* The caution footer as printed under every text report. */
void lw_text_caution(FILE *out);

/* ---- analyze --------------------------------------------------------- */

void lw_render_analysis_text(FILE *out, const lw_model *m,
                             const lw_analysis *a, size_t top);
/* One hazard's JSON object (keys of docs/cli.md), streamed: a result has
 * a row for every event, and networks have hundreds of thousands. */
struct lw_jw;
void lw_analysis_write_json(struct lw_jw *w, const lw_model *m,
                            const lw_analysis *a);
/* The cut-set table (header row first). */
void lw_render_cut_sets_csv(FILE *out, const lw_model *m,
                            const lw_analysis *a, bool header);
void lw_render_importance_csv(FILE *out, const lw_model *m,
                              const lw_analysis *a, bool header);

/* A JSON number, or null when 'ok' is false or x is not finite. */
json_t *lw_json_number(double x, bool ok);
/* Model warnings as a JSON array of strings. */
json_t *lw_json_warnings(const lw_model *m);
/* Dump 'doc' (consumed) to 'out' with the project's settings;
 * returns 0 on success. */
int lw_json_write(FILE *out, json_t *doc);

#ifdef __cplusplus
}
#endif
#endif
