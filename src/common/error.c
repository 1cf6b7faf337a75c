/* error.c - diagnostics collected by every room, printed only by the cli. */
#include "layerwise/error.h"
#include "layerwise/alloc.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void lw_error_init(lw_error *err)
{
    memset(err, 0, sizeof *err);
}

void lw_error_clear(lw_error *err)
{
    if (!err)
        return;
    for (size_t i = 0; i < err->count; i++) {
        lw_free(err->items[i].file);
        lw_free(err->items[i].message);
    }
    lw_free(err->items);
    size_t limit = err->limit;
    lw_error_init(err);
    err->limit = limit;
}

lw_status lw_error_oom(lw_error *err)
{
    if (err) {
        if (err->code == LW_OK)
            err->code = LW_ENOMEM;
        err->oom = 1;
    }
    return LW_ENOMEM;
}

lw_status lw_error_vset(lw_error *err, lw_status code, const char *file,
                        long line, const char *fmt, va_list ap)
{
    if (!err)
        return code;
    if (err->code == LW_OK || err->code == LW_ENOMEM)
        err->code = code;
    size_t limit = err->limit ? err->limit : 100;
    if (err->count >= limit) {
        err->dropped++;
        return code;
    }
    va_list ap2;
    va_copy(ap2, ap);
    int n = vsnprintf(NULL, 0, fmt, ap2);
    va_end(ap2);
    if (n < 0)
        n = 0;
    char *msg = lw_malloc((size_t)n + 1);
    char *fcopy = file ? lw_strdup(file) : NULL;
    if (!msg || (file && !fcopy)) {
        lw_free(msg);
        lw_free(fcopy);
        err->oom = 1;
        return code;
    }
    vsnprintf(msg, (size_t)n + 1, fmt, ap);
    lw_diag *items = lw_grow(err->items, &err->cap, err->count + 1,
                             sizeof *items);
    if (!items) {
        lw_free(msg);
        lw_free(fcopy);
        err->oom = 1;
        return code;
    }
    err->items = items;
    items[err->count].file = fcopy;
    items[err->count].line = line;
    items[err->count].message = msg;
    err->count++;
    return code;
}

lw_status lw_error_set(lw_error *err, lw_status code, const char *file,
                       long line, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    lw_status s = lw_error_vset(err, code, file, line, fmt, ap);
    va_end(ap);
    return s;
}

const char *lw_status_name(lw_status code)
{
    switch (code) {
    case LW_OK: return "ok";
    case LW_ENOMEM: return "out of memory";
    case LW_EPARSE: return "parse error";
    case LW_EMODEL: return "model error";
    case LW_ELIMIT: return "limit reached";
    case LW_EIO: return "input/output error";
    case LW_EUSAGE: return "usage error";
    case LW_EINTERNAL: return "internal error";
    }
    return "unknown error";
}
