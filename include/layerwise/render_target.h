/* layerwise/render_target.h - rendering the target question. */
#ifndef LAYERWISE_RENDER_TARGET_H
#define LAYERWISE_RENDER_TARGET_H

#include "layerwise/render.h"
#include "layerwise/target.h"

json_t *lw_target_json(const lw_model *m, const lw_target *t);
void lw_render_target_text(FILE *out, const lw_model *m, const lw_target *t);
void lw_render_target_csv(FILE *out, const lw_model *m, const lw_target *t,
                          bool header);

#endif
