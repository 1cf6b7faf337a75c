/*
 * layerwise/render_incident.h - rendering the post-incident questions:
 * incident (text, JSON) and learn (text, JSON, CSV).
 *
 * Both text reports are written for a post-incident review meeting and
 * end with the log caution (lw_log_caution) and the short caution.
 */
#ifndef LAYERWISE_RENDER_INCIDENT_H
#define LAYERWISE_RENDER_INCIDENT_H

#include "layerwise/incident.h"
#include "layerwise/learn.h"
#include "layerwise/render.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Incident and near-miss logs under-report, and what they hold is biased
 * toward the errors that were noticed. */
const char *lw_log_caution(void);

/* ---- incident -------------------------------------------------------- */

/* 'top' limits each listed class of cut sets in text (0 = all). */
void lw_render_incident_text(FILE *out, const lw_model *m,
                             const lw_incident *r, size_t top);
/* One hazard's JSON object (keys of docs/cli.md plus extras). */
json_t *lw_incident_json(const lw_model *m, const lw_incident *r);
/* One strain in words (for both text and JSON). */
void lw_incident_strain_text(char *buf, size_t n, const lw_model *m,
                             const lw_incident_strain *s);

/* ---- learn ----------------------------------------------------------- */

void lw_render_learn_text(FILE *out, const lw_model *m, const lw_learn *l);
json_t *lw_learn_json(const lw_model *m, const lw_learn *l);
/* The layers table, or the pairs table when 'together'. */
void lw_render_learn_csv(FILE *out, const lw_model *m, const lw_learn *l,
                         bool together);

#ifdef __cplusplus
}
#endif
#endif
