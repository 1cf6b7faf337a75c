/* jsonw.c - streaming JSON writer (see layerwise/jsonw.h). */
#include "layerwise/jsonw.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

void lw_jw_init(lw_jw *w, FILE *out)
{
    memset(w, 0, sizeof *w);
    w->out = out;
    w->first[0] = true;
}

static void indent(lw_jw *w)
{
    fputc('\n', w->out);
    for (int i = 0; i < w->depth; i++)
        fputc(' ', w->out);
}

/* Separator and indentation before a value or a key. */
static void before_value(lw_jw *w)
{
    if (w->after_key) {
        w->after_key = false;
        return;
    }
    if (w->depth == 0)
        return;
    if (!w->first[w->depth])
        fputc(',', w->out);
    w->first[w->depth] = false;
    indent(w);
}

static void open(lw_jw *w, char c)
{
    before_value(w);
    fputc(c, w->out);
    if (w->depth + 1 < LW_JW_MAX_DEPTH)
        w->depth++;
    w->first[w->depth] = true;
}

static void close(lw_jw *w, char c)
{
    bool empty = w->first[w->depth];
    if (w->depth > 0)
        w->depth--;
    if (!empty)
        indent(w);
    fputc(c, w->out);
    if (w->depth == 0)
        fputc('\n', w->out);
}

void lw_jw_begin_object(lw_jw *w) { open(w, '{'); }
void lw_jw_end_object(lw_jw *w) { close(w, '}'); }
void lw_jw_begin_array(lw_jw *w) { open(w, '['); }
void lw_jw_end_array(lw_jw *w) { close(w, ']'); }

static void put_string(FILE *out, const char *s)
{
    static const char hex[] = "0123456789abcdef";
    fputc('"', out);
    const unsigned char *p = (const unsigned char *)s;
    const unsigned char *run = p;
    for (; *p; p++) {
        unsigned char c = *p;
        if (c >= 0x20 && c != '"' && c != '\\')
            continue;
        fwrite(run, 1, (size_t)(p - run), out);
        run = p + 1;
        switch (c) {
        case '"': fputs("\\\"", out); break;
        case '\\': fputs("\\\\", out); break;
        case '\n': fputs("\\n", out); break;
        case '\r': fputs("\\r", out); break;
        case '\t': fputs("\\t", out); break;
        case '\b': fputs("\\b", out); break;
        case '\f': fputs("\\f", out); break;
        default:
            fputs("\\u00", out);
            fputc(hex[c >> 4], out);
            fputc(hex[c & 15], out);
        }
    }
    fwrite(run, 1, (size_t)(p - run), out);
    fputc('"', out);
}

void lw_jw_key(lw_jw *w, const char *key)
{
    before_value(w);
    put_string(w->out, key);
    fputs(": ", w->out);
    w->after_key = true;
}

void lw_jw_string(lw_jw *w, const char *s)
{
    before_value(w);
    if (s)
        put_string(w->out, s);
    else
        fputs("null", w->out);
}

void lw_jw_number(lw_jw *w, double x)
{
    before_value(w);
    if (!isfinite(x)) {
        fputs("null", w->out);
        return;
    }
    if (x == 0.0) {
        fputs("0.0", w->out);
        return;
    }
    char buf[40];
    int n = snprintf(buf, sizeof buf, "%.17g", x);
    /* keep it a real number in JSON readers that distinguish */
    if (n > 0 && !strpbrk(buf, ".eEn"))
        memcpy(buf + n, ".0", 3);
    fputs(buf, w->out);
}

void lw_jw_number_short(lw_jw *w, double x)
{
    if (!isfinite(x) || x == 0.0) {
        lw_jw_number(w, x);
        return;
    }
    before_value(w);
    char buf[40];
    for (int prec = 15; prec <= 17; prec++) {
        snprintf(buf, sizeof buf, "%.*g", prec, x);
        if (strtod(buf, NULL) == x)
            break;
    }
    size_t n = strlen(buf);
    if (!strpbrk(buf, ".eEn"))
        memcpy(buf + n, ".0", 3);
    fputs(buf, w->out);
}

void lw_jw_number_or_null(lw_jw *w, double x, bool ok)
{
    if (ok)
        lw_jw_number(w, x);
    else
        lw_jw_null(w);
}

void lw_jw_integer(lw_jw *w, long long x)
{
    before_value(w);
    fprintf(w->out, "%lld", x);
}

void lw_jw_bool(lw_jw *w, bool b)
{
    before_value(w);
    fputs(b ? "true" : "false", w->out);
}

void lw_jw_null(lw_jw *w)
{
    before_value(w);
    fputs("null", w->out);
}
