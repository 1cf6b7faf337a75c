/*
 * layerwise/error.h - status codes and the error record every room fills.
 *
 * A fallible function returns an lw_status and, on failure, appends one or
 * more diagnostics to the caller's lw_error.  Nothing below the command line
 * prints or exits; the cli room turns diagnostics into
 * "layerwise: FILE:LINE: message" lines and the status into an exit code.
 *
 * Ownership: an lw_error is a caller-owned value.  Initialise it with
 * LW_ERROR_INIT (or lw_error_init), release it with lw_error_clear.
 */
#ifndef LAYERWISE_ERROR_H
#define LAYERWISE_ERROR_H

#include <stdarg.h>
#include <stddef.h>

#ifdef __cplusplus
extern "C" {
#endif

typedef enum lw_status {
    LW_OK = 0,      /* done */
    LW_ENOMEM,      /* an allocation failed; everything taken was freed */
    LW_EPARSE,      /* the input is not well-formed (XML, CSV, number) */
    LW_EMODEL,      /* the input is well-formed but breaks a model rule */
    LW_ELIMIT,      /* a configured limit was reached (nodes, samples, size) */
    LW_EIO,         /* a file could not be read or written */
    LW_EUSAGE,      /* the caller asked for something that does not exist */
    LW_EINTERNAL    /* a broken invariant: a bug in layerwise */
} lw_status;

/* One message.  'file' may be NULL (no input location), 'line' 0 (none). */
typedef struct lw_diag {
    char *file;     /* owned copy of the input name, or NULL */
    long line;      /* 1-based input line, 0 when not tied to a line */
    char *message;  /* owned, no trailing newline */
} lw_diag;

typedef struct lw_error {
    lw_status code;     /* first non-OK status recorded, LW_OK when empty */
    size_t count;       /* number of diagnostics in 'items' */
    size_t cap;         /* allocated slots */
    size_t dropped;     /* diagnostics not stored because 'limit' was hit */
    size_t limit;       /* most diagnostics kept (0 = default 100) */
    int oom;            /* set when a diagnostic itself could not be stored */
    lw_diag *items;     /* owned array */
} lw_error;

#define LW_ERROR_INIT {LW_OK, 0, 0, 0, 0, 0, NULL}

void lw_error_init(lw_error *err);
void lw_error_clear(lw_error *err);

/* Record a diagnostic and return 'code' so that callers can write
 * `return lw_error_set(err, LW_EMODEL, file, line, "...", ...);`.
 * 'err' may be NULL (the message is dropped, the code still returned). */
lw_status lw_error_set(lw_error *err, lw_status code, const char *file,
                       long line, const char *fmt, ...)
    __attribute__((format(printf, 5, 6)));
lw_status lw_error_vset(lw_error *err, lw_status code, const char *file,
                        long line, const char *fmt, va_list ap);

/* Record an out-of-memory condition (never allocates). */
lw_status lw_error_oom(lw_error *err);

/* A short English name for a status, e.g. "model error". */
const char *lw_status_name(lw_status code);

#ifdef __cplusplus
}
#endif
#endif
