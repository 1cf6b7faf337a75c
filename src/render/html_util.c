/* html_util.c - escaping, number words and text wrapping for HTML/SVG. */
#include "render/html.h"

#include <math.h>
#include <string.h>

void lwh_esc_n(FILE *out, const char *s, size_t n)
{
    if (!s)
        return;
    for (size_t i = 0; i < n && s[i]; i++) {
        unsigned char c = (unsigned char)s[i];
        switch (c) {
        case '&': fputs("&amp;", out); break;
        case '<': fputs("&lt;", out); break;
        case '>': fputs("&gt;", out); break;
        case '"': fputs("&quot;", out); break;
        case '\'': fputs("&#39;", out); break;
        case '\t': case '\n': fputc(c, out); break;
        case '\r': break;
        default:
            if (c >= 0x20 && c != 0x7f)
                fputc(c, out);
            break;
        }
    }
}

void lwh_esc(FILE *out, const char *s)
{
    if (s)
        lwh_esc_n(out, s, strlen(s));
}

static const char *const superscript[10] = {
    "\u2070", "\u00b9", "\u00b2", "\u00b3", "\u2074",
    "\u2075", "\u2076", "\u2077", "\u2078", "\u2079"
};

void lwh_prob(char *buf, size_t n, double p)
{
    if (!isfinite(p)) {
        snprintf(buf, n, "\u2013");
        return;
    }
    if (p == 0) {
        snprintf(buf, n, "0");
        return;
    }
    if (p == 1) {
        snprintf(buf, n, "1");
        return;
    }
    double a = fabs(p);
    if (a >= 0.001 && a < 1000) {
        snprintf(buf, n, "%.3g", p);
        return;
    }
    int e = (int)floor(log10(a));
    double mant = p / pow(10.0, e);
    if (fabs(mant) >= 9.995) {     /* rounding carried into the next decade */
        mant /= 10;
        e++;
    }
    char exp[64] = "";
    size_t o = 0;
    if (e < 0)
        o += (size_t)snprintf(exp + o, sizeof exp - o, "\u207b");
    char digits[16];
    snprintf(digits, sizeof digits, "%d", e < 0 ? -e : e);
    for (const char *d = digits; *d && o + 4 < sizeof exp; d++)
        o += (size_t)snprintf(exp + o, sizeof exp - o, "%s",
                              superscript[*d - '0']);
    snprintf(buf, n, "%.3g\u2009\u00d7\u200910%s", mant, exp);
}

void lwh_pct(char *buf, size_t n, double share)
{
    double v = 100.0 * share;
    if (!isfinite(v))
        snprintf(buf, n, "\u2013");
    else if (v == 0)
        snprintf(buf, n, "0\u2009%%");
    else if (v < 0.01)
        snprintf(buf, n, "under 0.01\u2009%%");
    else if (v < 1)
        snprintf(buf, n, "%.2f\u2009%%", v);
    else if (v < 9.95)
        snprintf(buf, n, "%.1f\u2009%%", v);
    else
        snprintf(buf, n, "%.0f\u2009%%", v);
}

size_t lwh_utf8_len(const char *s)
{
    size_t k = 0;
    for (; s && *s; s++)
        if (((unsigned char)*s & 0xc0) != 0x80)
            k++;
    return k;
}

/* Bytes taken by the first 'cps' code points of s (stops at NUL). */
static size_t cp_bytes(const char *s, size_t cps)
{
    size_t i = 0, k = 0;
    while (s[i]) {
        if (((unsigned char)s[i] & 0xc0) != 0x80) {
            if (k == cps)
                break;
            k++;
        }
        i++;
    }
    return i;
}

static void put_line(lwh_lines *l, const char *s, size_t bytes)
{
    size_t cap = sizeof l->line[0] - 4;     /* room for an ellipsis */
    if (bytes > cap)
        bytes = cap;
    memcpy(l->line[l->n], s, bytes);
    l->line[l->n][bytes] = '\0';
    l->n++;
}

static void add_ellipsis(lwh_lines *l, size_t cols)
{
    if (l->n == 0)
        return;
    char *last = l->line[l->n - 1];
    /* make room for one code point when the line is full */
    size_t len = lwh_utf8_len(last);
    if (len >= cols && len > 0) {
        size_t b = cp_bytes(last, len - 1);
        last[b] = '\0';
    }
    size_t bl = strlen(last);
    while (bl > 0 && last[bl - 1] == ' ')
        last[--bl] = '\0';
    strcat(last, "\u2026");
}

void lwh_wrap(const char *s, size_t cols, size_t maxlines, lwh_lines *out)
{
    memset(out, 0, sizeof *out);
    if (cols < 4)
        cols = 4;
    if (cols > LWH_MAX_COLS)
        cols = LWH_MAX_COLS;
    if (maxlines < 1)
        maxlines = 1;
    if (maxlines > LWH_MAX_LINES)
        maxlines = LWH_MAX_LINES;
    if (!s)
        return;
    /* whitespace (including newlines) counts as one space */
    const char *p = s;
    while (*p) {
        while (*p == ' ' || *p == '\n' || *p == '\t' || *p == '\r')
            p++;
        if (!*p)
            break;
        if (out->n == maxlines) {
            out->cut = 1;
            add_ellipsis(out, cols);
            return;
        }
        /* take as many words as fit in 'cols' code points */
        size_t fit = cp_bytes(p, cols);
        size_t end;
        if (p[fit] == '\0' || p[fit] == ' ' || p[fit] == '\n' ||
            p[fit] == '\t' || p[fit] == '\r') {
            end = fit;
        } else {
            end = fit;
            while (end > 0 && p[end - 1] != ' ' && p[end - 1] != '\n' &&
                   p[end - 1] != '\t' && p[end - 1] != '-')
                end--;
            if (end > 0 && p[end - 1] == '-' && end < 3)
                end = 0;        /* a leading hyphen is no break */
            if (end == 0)
                end = fit;      /* one long word: cut it */
        }
        /* the line, with whitespace runs collapsed */
        char tmp[LWH_MAX_COLS * 4 + 4];
        size_t o = 0;
        int sp = 0;
        for (size_t i = 0; i < end && o + 1 < sizeof tmp; i++) {
            char c = p[i];
            if (c == '\n' || c == '\t' || c == '\r' || c == ' ') {
                sp = 1;
                continue;
            }
            if (sp && o)
                tmp[o++] = ' ';
            sp = 0;
            tmp[o++] = c;
        }
        tmp[o] = '\0';
        put_line(out, tmp, o);
        p += end;
    }
}

void lwh_svg_lines(FILE *out, double x, double y, double lh,
                   const lwh_lines *l, const char *attrs)
{
    fprintf(out, "<text x=\"%.1f\" y=\"%.1f\" %s>", x, y, attrs ? attrs : "");
    for (size_t i = 0; i < l->n; i++) {
        fprintf(out, "<tspan x=\"%.1f\" dy=\"%.1f\">", x, i ? lh : 0.0);
        lwh_esc(out, l->line[i]);
        fputs("</tspan>", out);
    }
    fputs("</text>\n", out);
}
