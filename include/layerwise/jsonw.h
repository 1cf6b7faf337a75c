/*
 * layerwise/jsonw.h - a streaming JSON writer for large results.
 *
 * Small documents are built with jansson; a result with a row for each of
 * a hundred thousand events is written as it is walked, which is an order
 * of magnitude faster than building and dumping a tree of objects.  Output
 * is standard JSON: strings escaped per RFC 8259, numbers with 17
 * significant digits (round-trip), non-finite numbers as null.
 */
#ifndef LAYERWISE_JSONW_H
#define LAYERWISE_JSONW_H

#include <stdbool.h>
#include <stdio.h>

#ifdef __cplusplus
extern "C" {
#endif

#define LW_JW_MAX_DEPTH 32

typedef struct lw_jw {
    FILE *out;
    int depth;
    bool first[LW_JW_MAX_DEPTH];    /* no member written yet at a depth */
    bool after_key;                 /* a key was just written */
    size_t len;                     /* bytes waiting in buf */
    char buf[1 << 16];              /* output buffer */
} lw_jw;

void lw_jw_init(lw_jw *w, FILE *out);
/* A finite double with 17 significant digits that reads back exactly
 * (fast; see jsonw.c).  Returns the length written. */
int lw_format_double(char *buf, size_t n, double x);
/* Write out what is buffered (done by itself when the outermost value
 * closes). */
void lw_jw_flush(lw_jw *w);
void lw_jw_begin_object(lw_jw *w);
void lw_jw_end_object(lw_jw *w);
void lw_jw_begin_array(lw_jw *w);
void lw_jw_end_array(lw_jw *w);
void lw_jw_key(lw_jw *w, const char *key);
void lw_jw_string(lw_jw *w, const char *s);   /* NULL writes null */
void lw_jw_number(lw_jw *w, double x);        /* non-finite writes null */
/* The shortest form that reads back as the same double (for values a
 * person typed, e.g. 1e-06 rather than 9.9999999999999995e-07). */
void lw_jw_number_short(lw_jw *w, double x);
void lw_jw_number_or_null(lw_jw *w, double x, bool ok);
void lw_jw_integer(lw_jw *w, long long x);
void lw_jw_bool(lw_jw *w, bool b);
void lw_jw_null(lw_jw *w);

#ifdef __cplusplus
}
#endif
#endif
