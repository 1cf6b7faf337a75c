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

/* A message quotes what it found in the input, which may be megabytes
 * long (a 2 MB "id" in a log): keep its first and last parts, cut at
 * UTF-8 character boundaries, and say how much was left out between. */
#define LW_MSG_HEAD 1200
#define LW_MSG_TAIL 600
static void cut_long(char *msg)
{
    size_t len = strlen(msg);
    if (len <= LW_MSG_HEAD + LW_MSG_TAIL + 64)
        return;
    size_t head = LW_MSG_HEAD, tail = len - LW_MSG_TAIL;
    while (head > 0 && ((unsigned char)msg[head] & 0xC0) == 0x80)
        head--;
    while (tail < len && ((unsigned char)msg[tail] & 0xC0) == 0x80)
        tail++;
    char mark[64];
    int ml = snprintf(mark, sizeof mark, " [... %zu bytes left out ...] ",
                      tail - head);
    /* the mark is shorter than what it replaces */
    memcpy(msg + head, mark, (size_t)ml);
    memmove(msg + head + (size_t)ml, msg + tail, len - tail + 1);
}

/* A message is one line of plain text: control characters that came
 * from the input (a line break inside a quoted CSV field, an escape
 * sequence) are written as \n, \r or \xHH, so that they can neither
 * forge a "layerwise: FILE:LINE:" line nor drive the terminal.  Returns
 * 'msg' or a new string (then 'msg' is freed); 'msg' when out of memory,
 * with the controls replaced by '?'. */
static char *one_line(char *msg)
{
    size_t extra = 0;
    for (const unsigned char *p = (const unsigned char *)msg; *p; p++)
        if ((*p < 0x20 && *p != '\t') || *p == 0x7f)
            extra += 3;
    if (!extra)
        return msg;
    size_t len = strlen(msg);
    char *out = lw_malloc(len + extra + 1);
    if (!out) {
        for (char *p = msg; *p; p++)
            if (((unsigned char)*p < 0x20 && *p != '\t') || *p == 0x7f)
                *p = '?';
        return msg;
    }
    char *o = out;
    for (const unsigned char *p = (const unsigned char *)msg; *p; p++) {
        if ((*p >= 0x20 || *p == '\t') && *p != 0x7f) {
            *o++ = (char)*p;
            continue;
        }
        *o++ = '\\';
        if (*p == '\n')
            *o++ = 'n';
        else if (*p == '\r')
            *o++ = 'r';
        else
            o += sprintf(o, "x%02x", *p);
    }
    *o = '\0';
    lw_free(msg);
    return out;
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
    cut_long(msg);
    msg = one_line(msg);
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
