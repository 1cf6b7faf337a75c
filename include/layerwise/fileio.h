/*
 * layerwise/fileio.h - writing output files without ever losing one.
 *
 * lw_out_open creates a temporary file beside the target (same folder, so
 * the final rename is atomic); lw_out_commit flushes, syncs and renames it
 * over the target; lw_out_abort removes it.  If anything fails, the old
 * file is left as it was.  Inputs are never opened for writing.
 */
#ifndef LAYERWISE_FILEIO_H
#define LAYERWISE_FILEIO_H

#include <stdio.h>

#include "layerwise/error.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef struct lw_out {
    FILE *fp;           /* write here */
    char *path;         /* the target */
    char *tmp;          /* the temporary file */
} lw_out;

lw_status lw_out_open(lw_out *o, const char *path, lw_error *err);
lw_status lw_out_commit(lw_out *o, lw_error *err);
void lw_out_abort(lw_out *o);

#ifdef __cplusplus
}
#endif
#endif
