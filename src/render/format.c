/* format.c - number and text helpers shared by every renderer. */
#include "layerwise/render.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

void lw_fmt_prob(char *buf, size_t n, double p)
{
    if (p == 0.0)
        snprintf(buf, n, "0");
    else if (p == 1.0)
        snprintf(buf, n, "1");
    else
        snprintf(buf, n, "%.2e", p);
}

/* Insert thousands separators into the integer 'v' (>= 0). */
static void with_commas(char *buf, size_t n, double v)
{
    char digits[64];
    snprintf(digits, sizeof digits, "%.0f", v);
    size_t len = strlen(digits), o = 0;
    for (size_t i = 0; i < len && o + 2 < n; i++) {
        buf[o++] = digits[i];
        size_t left = len - i - 1;
        if (left && left % 3 == 0 && o + 2 < n)
            buf[o++] = ',';
    }
    buf[o] = '\0';
}

void lw_fmt_one_in(char *buf, size_t n, double x)
{
    if (!(x > 0) || !isfinite(x)) {
        snprintf(buf, n, "-");
        return;
    }
    if (x >= 1e15) {
        snprintf(buf, n, "%.2e", x);
        return;
    }
    double r = x;
    if (x >= 1000) {
        double mag = pow(10.0, floor(log10(x)) - 2);
        r = round(x / mag) * mag;
    } else {
        r = round(x);
    }
    with_commas(buf, n, r);
}

void lw_fmt_sig(char *buf, size_t n, double x)
{
    if (!isfinite(x)) {
        snprintf(buf, n, "-");
        return;
    }
    double a = fabs(x);
    if (a == 0) {
        snprintf(buf, n, "0");
    } else if (a >= 1000 && a < 1e15) {
        double mag = pow(10.0, floor(log10(a)) - 2);
        char tmp[64];
        with_commas(tmp, sizeof tmp, round(a / mag) * mag);
        snprintf(buf, n, "%s%s", x < 0 ? "-" : "", tmp);
    } else if (a >= 1e-3 && a < 1000) {
        snprintf(buf, n, "%.3g", x);
    } else {
        snprintf(buf, n, "%.2e", x);
    }
}

void lw_csv_field(FILE *out, const char *s)
{
    if (!s)
        s = "";
    if (!strpbrk(s, ",\"\r\n") && s[0] != ' ' &&
        (s[0] == '\0' || s[strlen(s) - 1] != ' ')) {
        fputs(s, out);
        return;
    }
    fputc('"', out);
    for (; *s; s++) {
        if (*s == '"')
            fputc('"', out);
        fputc(*s, out);
    }
    fputc('"', out);
}

const char *lw_node_text(const lw_node *n)
{
    if (n->label && n->label[0])
        return n->label;
    return n->id ? n->id : "(unnamed)";
}

const char *lw_var_text(const lw_network *net, uint32_t v)
{
    const lw_var *x = &net->vars[v];
    if (x->label && x->label[0])
        return x->label;
    return x->name;
}

void lw_text_caution(FILE *out)
{
    fprintf(out, "\nCaution: %s\n", lw_caution());
}
