/* jsonw.c - streaming JSON writer (see layerwise/jsonw.h). */
#include "layerwise/jsonw.h"

#include <math.h>
#include <pthread.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

void lw_jw_init(lw_jw *w, FILE *out)
{
    memset(w, 0, sizeof *w);
    w->out = out;
    w->first[0] = true;
}

void lw_jw_flush(lw_jw *w)
{
    if (w->len)
        fwrite(w->buf, 1, w->len, w->out);
    w->len = 0;
}

static void put(lw_jw *w, const char *s, size_t n)
{
    if (w->len + n > sizeof w->buf) {
        lw_jw_flush(w);
        if (n > sizeof w->buf) {
            fwrite(s, 1, n, w->out);
            return;
        }
    }
    memcpy(w->buf + w->len, s, n);
    w->len += n;
}

static void putch(lw_jw *w, char c)
{
    if (w->len == sizeof w->buf)
        lw_jw_flush(w);
    w->buf[w->len++] = c;
}

static void puts_(lw_jw *w, const char *s) { put(w, s, strlen(s)); }

static void indent(lw_jw *w)
{
    static const char spaces[LW_JW_MAX_DEPTH + 2] =
        "\n                                 ";
    put(w, spaces, (size_t)w->depth + 1);
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
        putch(w, ',');
    w->first[w->depth] = false;
    indent(w);
}

static void open(lw_jw *w, char c)
{
    before_value(w);
    putch(w, c);
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
    putch(w, c);
    if (w->depth == 0) {
        putch(w, '\n');
        lw_jw_flush(w);
    }
}

void lw_jw_begin_object(lw_jw *w) { open(w, '{'); }
void lw_jw_end_object(lw_jw *w) { close(w, '}'); }
void lw_jw_begin_array(lw_jw *w) { open(w, '['); }
void lw_jw_end_array(lw_jw *w) { close(w, ']'); }

static void put_string(lw_jw *w, const char *s)
{
    static const char hex[] = "0123456789abcdef";
    putch(w, '"');
    const unsigned char *p = (const unsigned char *)s;
    const unsigned char *run = p;
    for (; *p; p++) {
        unsigned char c = *p;
        if (c >= 0x20 && c != '"' && c != '\\')
            continue;
        put(w, (const char *)run, (size_t)(p - run));
        run = p + 1;
        switch (c) {
        case '"': puts_(w, "\\\""); break;
        case '\\': puts_(w, "\\\\"); break;
        case '\n': puts_(w, "\\n"); break;
        case '\r': puts_(w, "\\r"); break;
        case '\t': puts_(w, "\\t"); break;
        case '\b': puts_(w, "\\b"); break;
        case '\f': puts_(w, "\\f"); break;
        default: {
            char u[6] = {'\\', 'u', '0', '0', hex[c >> 4], hex[c & 15]};
            put(w, u, 6);
        }
        }
    }
    put(w, (const char *)run, (size_t)(p - run));
    putch(w, '"');
}

void lw_jw_key(lw_jw *w, const char *key)
{
    before_value(w);
    put_string(w, key);
    put(w, ": ", 2);
    w->after_key = true;
}

void lw_jw_string(lw_jw *w, const char *s)
{
    before_value(w);
    if (s)
        put_string(w, s);
    else
        puts_(w, "null");
}

/*
 * 17 significant digits without printf, whose exact multi-precision
 * conversion dominated the writing of large results.  The double is scaled
 * by a power of ten in long double (64-bit mantissa, powl correct to about
 * an ulp), so the 17-digit integer is off by at most about 0.01 before
 * rounding; the printed value is then within 0.51 units of the 17th digit,
 * i.e. under 5.1e-17 relative, which is less than half a double's spacing
 * (at least 5.55e-17 relative): reading it back gives the same double.
 */
static long double pow10_table[700];     /* 10^(k - 350) */
static pthread_once_t pow10_once = PTHREAD_ONCE_INIT;

static void pow10_init(void)
{
    for (int k = 0; k < 700; k++)
        pow10_table[k] = powl(10.0L, (long double)(k - 350));
}

static long double pow10l_(int k)
{
    if (k < -350 || k >= 350)
        return powl(10.0L, (long double)k);
    return pow10_table[k + 350];
}

int lw_format_double(char *buf, size_t n, double x)
{
    pthread_once(&pow10_once, pow10_init);
    if (!isfinite(x) || n < 32)
        return snprintf(buf, n, "%.17g", x);
    if (x == 0.0)
        return snprintf(buf, n, "0.0");
    char *p = buf;
    if (x < 0) {
        *p++ = '-';
        x = -x;
    }
    int e10 = (int)floor(log10(x));
    long double scaled = (long double)x * pow10l_(16 - e10);
    uint64_t m = (uint64_t)llroundl(scaled);
    if (m >= 100000000000000000ull) {           /* log10 rounded down */
        m = (m + 5) / 10;
        e10++;
    } else if (m < 10000000000000000ull) {      /* log10 rounded up */
        scaled = (long double)x * pow10l_(17 - e10);
        m = (uint64_t)llroundl(scaled);
        e10--;
    }
    if (m >= 100000000000000000ull) {
        m = (m + 5) / 10;
        e10++;
    }
    char digits[24];
    for (int i = 16; i >= 0; i--) {
        digits[i] = (char)('0' + m % 10);
        m /= 10;
    }
    int nd = 17;
    while (nd > 1 && digits[nd - 1] == '0')
        nd--;
    if (e10 >= -5 && e10 < 17) {
        /* positional, like %g */
        if (e10 < 0) {
            *p++ = '0';
            *p++ = '.';
            for (int i = -1; i > e10; i--)
                *p++ = '0';
            memcpy(p, digits, (size_t)nd);
            p += nd;
        } else {
            for (int i = 0; i <= e10; i++)
                *p++ = i < nd ? digits[i] : '0';
            *p++ = '.';
            if (nd > e10 + 1) {
                memcpy(p, digits + e10 + 1, (size_t)(nd - e10 - 1));
                p += nd - e10 - 1;
            } else {
                *p++ = '0';
            }
        }
    } else {
        *p++ = digits[0];
        if (nd > 1) {
            *p++ = '.';
            memcpy(p, digits + 1, (size_t)(nd - 1));
            p += nd - 1;
        }
        *p++ = 'e';
        *p++ = e10 < 0 ? '-' : '+';
        int ae = e10 < 0 ? -e10 : e10;
        if (ae >= 100)
            *p++ = (char)('0' + ae / 100);
        *p++ = (char)('0' + ae / 10 % 10);
        *p++ = (char)('0' + ae % 10);
    }
    *p = '\0';
    return (int)(p - buf);
}

void lw_jw_number(lw_jw *w, double x)
{
    before_value(w);
    if (!isfinite(x)) {
        puts_(w, "null");
        return;
    }
    char buf[48];
    int n = lw_format_double(buf, sizeof buf, x);
    put(w, buf, (size_t)n);
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
    puts_(w, buf);
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
    char buf[32];
    int n = snprintf(buf, sizeof buf, "%lld", x);
    put(w, buf, (size_t)n);
}

void lw_jw_bool(lw_jw *w, bool b)
{
    before_value(w);
    puts_(w, b ? "true" : "false");
}

void lw_jw_null(lw_jw *w)
{
    before_value(w);
    puts_(w, "null");
}
