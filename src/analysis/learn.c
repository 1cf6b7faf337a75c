/*
 * learn.c - safeguard estimates and "miss together" pairs from a
 * near-miss / incident log (see layerwise/learn.h), and the updated model
 * for learn -o.
 *
 * HOW IT WORKS
 *   The log is parsed by libcsv in strict mode, fed one byte at a time so
 *   that the physical line where each row starts is known even when a
 *   quoted field holds line breaks.  The first row is the header.  Each
 *   data row is checked in full (every problem is reported), and the
 *   counts are kept only when no row is bad.  Pair counts live in a hash
 *   table keyed by (first, second), filled from each row's missed list
 *   crossed with its missed list plus its catcher, so the work is the sum
 *   of squares of the row lengths, never the square of the model's size.
 */
#define _POSIX_C_SOURCE 200809L
#include "layerwise/learn.h"

#include <csv.h>
#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#include <libxml/parser.h>
#include <libxml/tree.h>

#include "layerwise/alloc.h"
#include "layerwise/estimate.h"

void lw_learn_free(lw_learn *l)
{
    if (!l)
        return;
    lw_free(l->log);
    lw_free(l->layers);
    lw_free(l->pairs);
    lw_free(l);
}

/* ---- reading files ---------------------------------------------------- */

lw_status lw_read_all(const char *path, size_t max_bytes, char **data,
                      size_t *len, lw_error *err)
{
    *data = NULL;
    *len = 0;
    if (!max_bytes)
        max_bytes = (size_t)64 << 20;
    int is_stdin = strcmp(path, "-") == 0;
    const char *name = is_stdin ? "<stdin>" : path;
    FILE *f = is_stdin ? stdin : fopen(path, "rb");
    if (!f)
        return lw_error_set(err, LW_EIO, name, 0, "cannot open: %s",
                            strerror(errno));
    size_t cap = 1 << 14, n = 0;
    char *buf = lw_malloc(cap + 1);
    lw_status st = LW_OK;
    if (!buf) {
        st = lw_error_oom(err);
        goto done;
    }
    for (;;) {
        if (n == cap) {
            if (cap >= max_bytes) {
                st = lw_error_set(err, LW_ELIMIT, name, 0, "the file is "
                                  "over the size limit of %zu bytes",
                                  max_bytes);
                goto done;
            }
            char *nb = lw_realloc(buf, cap * 2 + 1);
            if (!nb) {
                st = lw_error_oom(err);
                goto done;
            }
            buf = nb;
            cap *= 2;
        }
        size_t got = fread(buf + n, 1, cap - n, f);
        n += got;
        if (got == 0) {
            if (ferror(f))
                st = lw_error_set(err, LW_EIO, name, 0, "cannot read: %s",
                                  strerror(errno));
            break;
        }
    }
done:
    if (!is_stdin)
        fclose(f);
    if (st != LW_OK) {
        lw_free(buf);
        return st;
    }
    buf[n] = '\0';
    *data = buf;
    *len = n;
    return LW_OK;
}

/* ---- pair table -------------------------------------------------------- */

typedef struct pair_slot {
    uint64_t key;           /* (first + 1) << 32 | (second + 1); 0 = free */
    unsigned long n, m;
} pair_slot;

typedef struct pair_map {
    pair_slot *slots;
    size_t cap, count;
} pair_map;

static size_t pair_hash(uint64_t k, size_t cap)
{
    k ^= k >> 33;
    k *= 0xff51afd7ed558ccdull;
    k ^= k >> 33;
    return (size_t)k & (cap - 1);
}

static pair_slot *pair_get(pair_map *pm, size_t a, size_t b)
{
    if (2 * (pm->count + 1) > pm->cap) {
        size_t ncap = pm->cap ? pm->cap * 2 : 64;
        pair_slot *ns = lw_calloc(ncap, sizeof *ns);
        if (!ns)
            return NULL;
        for (size_t i = 0; i < pm->cap; i++) {
            if (!pm->slots[i].key)
                continue;
            size_t h = pair_hash(pm->slots[i].key, ncap);
            while (ns[h].key)
                h = (h + 1) & (ncap - 1);
            ns[h] = pm->slots[i];
        }
        lw_free(pm->slots);
        pm->slots = ns;
        pm->cap = ncap;
    }
    uint64_t key = ((uint64_t)(a + 1) << 32) | (uint64_t)(b + 1);
    size_t h = pair_hash(key, pm->cap);
    while (pm->slots[h].key && pm->slots[h].key != key)
        h = (h + 1) & (pm->cap - 1);
    if (!pm->slots[h].key) {
        pm->slots[h].key = key;
        pm->count++;
    }
    return &pm->slots[h];
}

/* ---- the log ------------------------------------------------------------ */

enum { COL_DATE, COL_ERROR, COL_MISSED, COL_CAUGHT, COL_NOTE, NCOLS };
static const char *const col_names[NCOLS] = {"date", "error", "missed",
                                             "caught_by", "note"};
static const bool col_required[NCOLS] = {false, true, true, true, false};

typedef struct learner {
    const lw_model *m;
    const char *name;
    lw_error *err;
    struct csv_parser csv;
    long line;              /* physical line of the byte being fed */
    long row_line;          /* where the current row starts, 0 = none */
    char **fields;
    size_t nfields, cap_fields;
    bool have_header;
    bool stop;              /* the header is unusable */
    size_t ncols;           /* header fields */
    long col[NCOLS];        /* field index of each column, -1 absent */
    size_t bad;             /* bad rows */
    size_t rows, rows_caught;
    unsigned long *reached, *missed;    /* per model node */
    size_t *row_missed;     /* this row's missed safeguards */
    size_t nrow_missed, cap_row_missed;
    pair_map pairs;
    int oom;
} learner;

static void clear_fields(learner *L)
{
    for (size_t i = 0; i < L->nfields; i++)
        lw_free(L->fields[i]);
    L->nfields = 0;
}

static void on_field(void *s, size_t len, void *ud)
{
    learner *L = ud;
    if (L->oom)
        return;
    char **f = lw_grow(L->fields, &L->cap_fields, L->nfields + 1,
                       sizeof *f);
    if (!f) {
        L->oom = 1;
        return;
    }
    L->fields = f;
    char *copy = lw_strndup(s ? (const char *)s : "", s ? len : 0);
    if (!copy) {
        L->oom = 1;
        return;
    }
    f[L->nfields++] = copy;
}

/* Trim ASCII white space in place; returns the start. */
static char *trim(char *s)
{
    while (*s && isspace((unsigned char)*s))
        s++;
    size_t n = strlen(s);
    while (n && isspace((unsigned char)s[n - 1]))
        s[--n] = '\0';
    return s;
}

static void list_kind(const lw_model *m, lw_node_kind k, char *buf,
                      size_t n)
{
    size_t o = 0, shown = 0, total = 0;
    buf[0] = '\0';
    for (size_t i = 0; i < m->nnodes; i++) {
        if (m->nodes[i].kind != k)
            continue;
        total++;
        if (shown >= 40 || o + strlen(m->nodes[i].id) + 4 >= n)
            continue;
        int w = snprintf(buf + o, n - o, "%s%s", shown ? ", " : "",
                         m->nodes[i].id);
        if (w > 0)
            o += (size_t)w;
        shown++;
    }
    if (!total)
        snprintf(buf, n, "(none)");
    else if (shown < total && o + 32 < n)
        snprintf(buf + o, n - o, " ... and %zu more", total - shown);
}

static bool row_fail(learner *L, int *bad, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));

static bool row_fail(learner *L, int *bad, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    lw_error_vset(L->err, LW_EPARSE, L->name, L->row_line, fmt, ap);
    va_end(ap);
    *bad = 1;
    return false;
}

/* Look up a safeguard id of column 'col'; reports and returns LW_NONE
 * when it is not one. */
static size_t safeguard_id(learner *L, const char *id, const char *col,
                           int *bad)
{
    const lw_model *m = L->m;
    size_t x = lw_model_find_node(m, id);
    if (x != LW_NONE && m->nodes[x].kind == LW_NODE_SAFEGUARD)
        return x;
    char list[2048];
    list_kind(m, LW_NODE_SAFEGUARD, list, sizeof list);
    if (x == LW_NONE)
        row_fail(L, bad, "unknown id \"%s\" in %s; the model's safeguards "
                 "are: %s", id, col, list);
    else
        row_fail(L, bad, "\"%s\" in %s is %s %s, not a safeguard; %s names "
                 "safeguards: %s", id, col,
                 m->nodes[x].kind == LW_NODE_ERROR ? "an" : "a",
                 lw_node_kind_name(m->nodes[x].kind), col, list);
    return LW_NONE;
}

static void header_row(learner *L)
{
    L->have_header = true;
    L->ncols = L->nfields;
    for (int c = 0; c < NCOLS; c++)
        L->col[c] = -1;
    for (size_t i = 0; i < L->nfields; i++) {
        const char *h = trim(L->fields[i]);
        for (int c = 0; c < NCOLS; c++) {
            if (strcasecmp(h, col_names[c]))
                continue;
            if (L->col[c] >= 0) {
                lw_error_set(L->err, LW_EPARSE, L->name, L->row_line,
                             "the header names the column \"%s\" twice",
                             col_names[c]);
                L->stop = true;
            }
            L->col[c] = (long)i;
        }
    }
    for (int c = 0; c < NCOLS; c++)
        if (col_required[c] && L->col[c] < 0) {
            lw_error_set(L->err, LW_EPARSE, L->name, L->row_line,
                         "the header has no \"%s\" column; a log starts "
                         "with the header row date,error,missed,caught_by,"
                         "note (any order, extra columns ignored)",
                         col_names[c]);
            L->stop = true;
        }
}

static void data_row(learner *L)
{
    const lw_model *m = L->m;
    int bad = 0;
    L->rows++;
    if (L->nfields != L->ncols) {
        row_fail(L, &bad, "the row has %zu fields but the header has %zu; "
                 "quote any field that holds a comma (RFC 4180)",
                 L->nfields, L->ncols);
        L->bad++;
        return;
    }
    char *error = trim(L->fields[L->col[COL_ERROR]]);
    char *missed = trim(L->fields[L->col[COL_MISSED]]);
    char *caught = trim(L->fields[L->col[COL_CAUGHT]]);
    if (*error) {
        size_t x = lw_model_find_node(m, error);
        if (x == LW_NONE || m->nodes[x].kind != LW_NODE_ERROR) {
            char list[2048];
            list_kind(m, LW_NODE_ERROR, list, sizeof list);
            if (x == LW_NONE)
                row_fail(L, &bad, "unknown id \"%s\" in error; the model's "
                         "errors are: %s", error, list);
            else
                row_fail(L, &bad, "\"%s\" in error is a %s, not an error; "
                         "the error column names the error that started "
                         "the chain: %s", error,
                         lw_node_kind_name(m->nodes[x].kind), list);
        }
    }
    L->nrow_missed = 0;
    char *save = NULL;
    for (char *tok = strtok_r(missed, ";", &save); tok;
         tok = strtok_r(NULL, ";", &save)) {
        char *id = trim(tok);
        if (!*id)
            continue;
        size_t x = safeguard_id(L, id, "missed", &bad);
        if (x == LW_NONE)
            continue;
        bool dup = false;
        for (size_t k = 0; k < L->nrow_missed; k++)
            dup |= L->row_missed[k] == x;
        if (dup)
            continue;
        size_t *rm = lw_grow(L->row_missed, &L->cap_row_missed,
                             L->nrow_missed + 1, sizeof *rm);
        if (!rm) {
            L->oom = 1;
            return;
        }
        L->row_missed = rm;
        rm[L->nrow_missed++] = x;
    }
    size_t catcher = LW_NONE;
    if (strchr(caught, ';')) {
        row_fail(L, &bad, "caught_by names one safeguard (the one that "
                 "stopped the error), not a list: \"%s\"", caught);
    } else if (*caught) {
        catcher = safeguard_id(L, caught, "caught_by", &bad);
        for (size_t k = 0; catcher != LW_NONE && k < L->nrow_missed; k++)
            if (L->row_missed[k] == catcher)
                row_fail(L, &bad, "\"%s\" is both in missed and in "
                         "caught_by; a safeguard either missed the error "
                         "or caught it", caught);
    }
    if (bad) {
        L->bad++;
        return;
    }
    if (catcher != LW_NONE) {
        L->rows_caught++;
        L->reached[catcher]++;
    }
    for (size_t k = 0; k < L->nrow_missed; k++) {
        size_t a = L->row_missed[k];
        L->reached[a]++;
        L->missed[a]++;
        for (size_t j = 0; j <= L->nrow_missed; j++) {
            size_t b = j < L->nrow_missed ? L->row_missed[j] : catcher;
            if (b == LW_NONE || b == a)
                continue;
            pair_slot *s = pair_get(&L->pairs, a, b);
            if (!s) {
                L->oom = 1;
                return;
            }
            s->n++;
            if (j < L->nrow_missed)
                s->m++;
        }
    }
}

static void on_row(int c, void *ud)
{
    (void)c;
    learner *L = ud;
    if (!L->oom && !L->stop) {
        if (!L->have_header)
            header_row(L);
        else
            data_row(L);
    }
    clear_fields(L);
    L->row_line = 0;
}

static int csv_space(unsigned char c) { return c == ' ' || c == '\t'; }

static lw_level closest_level(double nominal, double rate)
{
    const double eps = LW_LEARN_EPS;
    double r = fmin(fmax(rate, eps), 1.0 - eps);
    double target = log(r / (1.0 - r));
    lw_level best = LW_LEVEL_ZERO;
    double bestd = INFINITY;
    for (int l = LW_LEVEL_ZERO; l <= LW_LEVEL_COMPLETE; l++) {
        double w = lw_level_weight((lw_level)l);
        double c = nominal + w * (1.0 - nominal);
        c = fmin(fmax(c, eps), 1.0 - eps);
        double d = fabs(log(c / (1.0 - c)) - target);
        if (d < bestd - 1e-12) {
            bestd = d;
            best = (lw_level)l;
        }
    }
    return best;
}

static int cmp_pair(const void *a, const void *b)
{
    const lw_learn_pair *x = a, *y = b;
    if (x->p_value != y->p_value)
        return x->p_value < y->p_value ? -1 : 1;
    if (x->rate != y->rate)
        return x->rate > y->rate ? -1 : 1;
    if (x->first != y->first)
        return x->first < y->first ? -1 : 1;
    return x->second < y->second ? -1 : (x->second > y->second);
}

static lw_status finish(learner *L, lw_learn *l, lw_error *err)
{
    const lw_model *m = L->m;
    size_t n = 0;
    for (size_t i = 0; i < m->nnodes; i++)
        n += L->reached[i] > 0;
    l->layers = lw_calloc(n + 1, sizeof *l->layers);
    size_t np = 0;
    for (size_t i = 0; i < L->pairs.cap; i++)
        np += L->pairs.slots[i].key && L->pairs.slots[i].n >=
                                           LW_LEARN_MIN_PAIR;
    l->pairs = lw_calloc(np + 1, sizeof *l->pairs);
    if (!l->layers || !l->pairs)
        return lw_error_oom(err);
    for (size_t i = 0; i < m->nnodes; i++) {
        if (!L->reached[i])
            continue;
        const lw_dist *d = &m->nodes[i].dist;
        lw_learn_layer *y = &l->layers[l->nlayers++];
        y->node = i;
        y->reached = L->reached[i];
        y->missed = L->missed[i];
        y->has_model_counts = d->kind == LW_DIST_OBSERVED;
        y->model_count = y->has_model_counts ? d->count : 0;
        y->model_of = y->has_model_counts ? d->of : 0;
        y->M = (double)y->missed + y->model_count;
        y->R = (double)y->reached + y->model_of;
        lw_estimate e;
        lw_estimate_counts(y->M, y->R, &e);
        y->estimate = (y->M + 0.5) / (y->R + 1.0);
        y->ci_lo = e.ci_lo;
        y->ci_hi = e.ci_hi;
        y->nominal = d->p;
    }
    for (size_t i = 0; i < L->pairs.cap; i++) {
        const pair_slot *s = &L->pairs.slots[i];
        if (!s->key || s->n < LW_LEARN_MIN_PAIR)
            continue;
        lw_learn_pair *p = &l->pairs[l->npairs++];
        p->first = (size_t)(s->key >> 32) - 1;
        p->second = (size_t)(s->key & 0xffffffffu) - 1;
        p->n = s->n;
        p->m = s->m;
        p->nominal = m->nodes[p->second].dist.p;
        p->rate = (double)s->m / (double)s->n;
        p->p_value = lw_binomial_upper_tail((unsigned)s->m, (unsigned)s->n,
                                            p->nominal);
        p->suggested = closest_level(p->nominal, p->rate);
        for (size_t d = 0; d < m->ndeps; d++) {
            const lw_dependence *dp = &m->deps[d];
            if (dp->first == p->first && dp->second == p->second) {
                p->modelled = true;
                p->modelled_level = dp->level;
            } else if (dp->second == p->second) {
                p->second_has_first = true;
            }
            if (dp->first == p->second && dp->second == p->first)
                p->linked = true;
        }
        for (size_t g = 0; g < m->ngroups; g++) {
            const lw_group *gr = &m->groups[g];
            bool has_a = false, has_b = false;
            for (size_t k = 0; k < gr->nmembers; k++) {
                has_a |= gr->members[k] == p->first;
                has_b |= gr->members[k] == p->second;
            }
            p->second_in_group |= has_b;
            p->linked |= has_a && has_b;
        }
    }
    qsort(l->pairs, l->npairs, sizeof *l->pairs, cmp_pair);
    l->rows = L->rows;
    l->rows_caught = L->rows_caught;
    return LW_OK;
}

lw_status lw_learn_memory(const lw_model *m, const char *data, size_t len,
                          const char *name, lw_learn **out, lw_error *err)
{
    *out = NULL;
    learner L;
    memset(&L, 0, sizeof L);
    L.m = m;
    L.name = name && strcmp(name, "-") ? name : "<stdin>";
    L.err = err;
    L.line = 1;
    lw_status st = LW_OK;
    lw_learn *l = NULL;
    size_t errors_before = err ? err->count + err->dropped : 0;
    /* a UTF-8 byte-order mark */
    if (len >= 3 && !memcmp(data, "\xEF\xBB\xBF", 3)) {
        data += 3;
        len -= 3;
    }
    bool blank = true;
    for (size_t i = 0; i < len && blank; i++)
        blank = isspace((unsigned char)data[i]) != 0;
    if (blank)
        return lw_error_set(err, LW_EPARSE, L.name, 1, "the log is empty; "
                            "it needs a header row date,error,missed,"
                            "caught_by,note and one row per event");
    L.reached = lw_calloc(m->nnodes + 1, sizeof *L.reached);
    L.missed = lw_calloc(m->nnodes + 1, sizeof *L.missed);
    if (!L.reached || !L.missed ||
        csv_init(&L.csv, CSV_STRICT | CSV_STRICT_FINI | CSV_APPEND_NULL)) {
        lw_free(L.reached);
        lw_free(L.missed);
        return lw_error_oom(err);
    }
    csv_set_space_func(&L.csv, csv_space);
    csv_set_realloc_func(&L.csv, lw_realloc);
    csv_set_free_func(&L.csv, lw_free);
    /* fields grow in steps of this many bytes (libcsv's 128 made a
     * megabyte field cost seconds of copying) */
    csv_set_blk_size(&L.csv, (size_t)64 << 10);
    bool malformed = false;
    /* one physical line at a time, so that every callback and error knows
     * its line */
    for (size_t i = 0; i < len && !L.oom && !L.stop;) {
        const char *nl = memchr(data + i, '\n', len - i);
        size_t n = nl ? (size_t)(nl - (data + i)) + 1 : len - i;
        if (!L.row_line)
            for (size_t k = 0; k < n; k++) {
                unsigned char c = (unsigned char)data[i + k];
                if (c != ' ' && c != '\t' && c != '\r' && c != '\n') {
                    L.row_line = L.line;
                    break;
                }
            }
        if (csv_parse(&L.csv, data + i, n, on_field, on_row, &L) != n) {
            if (csv_error(&L.csv) == CSV_ENOMEM ||
                csv_error(&L.csv) == CSV_ETOOBIG) {
                L.oom = 1;
                break;
            }
            long at = L.row_line ? L.row_line : L.line;
            if (L.line != at)
                lw_error_set(err, LW_EPARSE, L.name, at, "malformed CSV on "
                             "line %ld, in the row that starts here: a "
                             "quote inside an unquoted field or text after "
                             "a closing quote; quote the whole field and "
                             "double any quote inside it (RFC 4180)",
                             L.line);
            else
                lw_error_set(err, LW_EPARSE, L.name, at, "malformed CSV: a "
                             "quote inside an unquoted field or text after "
                             "a closing quote; quote the whole field and "
                             "double any quote inside it (RFC 4180)");
            malformed = true;
            break;
        }
        i += n;
        if (nl)
            L.line++;
    }
    if (!malformed && !L.oom && !L.stop &&
        csv_fini(&L.csv, on_field, on_row, &L) != 0) {
        if (csv_error(&L.csv) == CSV_EPARSE)
            lw_error_set(err, LW_EPARSE, L.name,
                         L.row_line ? L.row_line : L.line, "malformed CSV: "
                         "a quoted field that starts in this row is never "
                         "closed (RFC 4180)");
        else
            L.oom = 1;
        malformed = true;
    }
    if (L.oom) {
        st = lw_error_oom(err);
        goto done;
    }
    if (!L.have_header && !malformed) {
        st = lw_error_set(err, LW_EPARSE, L.name, 1, "the log is empty; it "
                          "needs a header row date,error,missed,caught_by,"
                          "note");
        goto done;
    }
    if (L.bad || L.stop || malformed ||
        (err && err->count + err->dropped > errors_before)) {
        if (L.bad > 1)
            lw_error_set(err, LW_EPARSE, L.name, 0, "%zu bad rows; nothing "
                         "was learned or written", L.bad);
        st = err && err->code ? err->code : LW_EPARSE;
        if (st == LW_OK)
            st = LW_EPARSE;
        goto done;
    }
    l = lw_calloc(1, sizeof *l);
    if (!l || !(l->log = lw_strdup(L.name))) {
        st = lw_error_oom(err);
        goto done;
    }
    st = finish(&L, l, err);
done:
    csv_free(&L.csv);
    clear_fields(&L);
    lw_free(L.fields);
    lw_free(L.reached);
    lw_free(L.missed);
    lw_free(L.row_missed);
    lw_free(L.pairs.slots);
    if (st != LW_OK) {
        lw_learn_free(l);
        return st;
    }
    *out = l;
    return LW_OK;
}

lw_status lw_learn_file(const lw_model *m, const char *path, lw_learn **out,
                        lw_error *err)
{
    *out = NULL;
    char *data = NULL;
    size_t len = 0;
    lw_status st = lw_read_all(path, 0, &data, &len, err);
    if (st != LW_OK)
        return st;
    st = lw_learn_memory(m, data, len, path, out, err);
    lw_free(data);
    return st;
}

void lw_learn_dependence_xml(const lw_model *m, const lw_learn_pair *p,
                             char *buf, size_t n)
{
    snprintf(buf, n, "<dependence first=\"%s\" second=\"%s\" level=\"%s\"/>",
             m->nodes[p->first].id, m->nodes[p->second].id,
             lw_level_name(p->suggested));
}

/* ---- the updated model ----------------------------------------------- */

static void xml_quiet(void *ud, xmlErrorPtr e)
{
    int *failed = ud;
    if (e && e->level >= XML_ERR_ERROR)
        *failed = 1;
}

static bool has_entities(xmlDocPtr doc)
{
    xmlDtdPtr dtds[2] = {doc->intSubset, doc->extSubset};
    for (int i = 0; i < 2; i++) {
        if (!dtds[i])
            continue;
        if (dtds[i]->entities || dtds[i]->pentities)
            return true;
        for (xmlNodePtr c = dtds[i]->children; c; c = c->next)
            if (c->type == XML_ENTITY_DECL)
                return true;
    }
    return false;
}

static const lw_learn_layer *learned(const lw_model *m, const lw_learn *l,
                                     const xmlChar *id)
{
    if (!id)
        return NULL;
    for (size_t i = 0; i < l->nlayers; i++)
        if (!strcmp(m->nodes[l->layers[i].node].id, (const char *)id))
            return &l->layers[i];
    return NULL;
}

/* Replace one safeguard's probability; 0 on success. */
static int update_safeguard(xmlDocPtr doc, xmlNodePtr x, const lw_model *m,
                            const lw_learn *l, const lw_learn_layer *y)
{
    char count[64], of[64], source[1024];
    snprintf(count, sizeof count, "%.0f", y->M);
    snprintf(of, sizeof of, "%.0f", y->R);
    const lw_dist *d = &m->nodes[y->node].dist;
    if (y->has_model_counts && d->source && d->source[0])
        snprintf(source, sizeof source, "%s; plus %lu missed of %lu reached "
                 "in the log %s (layerwise learn)", d->source, y->missed,
                 y->reached, l->log);
    else if (y->has_model_counts)
        snprintf(source, sizeof source, "model counts %.0f of %.0f plus "
                 "%lu missed of %lu reached in the log %s (layerwise learn)",
                 y->model_count, y->model_of, y->missed, y->reached, l->log);
    else
        snprintf(source, sizeof source, "%lu missed of %lu reached in the "
                 "log %s (layerwise learn)", y->missed, y->reached, l->log);
    xmlNodePtr obs = xmlNewDocNode(doc, x->ns, (const xmlChar *)"observed",
                                   NULL);
    if (!obs)
        return -1;
    if (!xmlSetProp(obs, (const xmlChar *)"count", (const xmlChar *)count) ||
        !xmlSetProp(obs, (const xmlChar *)"of", (const xmlChar *)of) ||
        !xmlSetProp(obs, (const xmlChar *)"source",
                    (const xmlChar *)source)) {
        xmlFreeNode(obs);
        return -1;
    }
    xmlAttrPtr pa = xmlHasProp(x, (const xmlChar *)"p");
    if (pa)
        xmlRemoveProp(pa);
    bool placed = false;
    xmlNodePtr c = x->children;
    while (c) {
        xmlNodePtr next = c->next;
        if (c->type == XML_ELEMENT_NODE) {
            if (!placed) {
                xmlReplaceNode(c, obs);
                placed = true;
            } else {
                xmlUnlinkNode(c);
            }
            xmlFreeNode(c);
        }
        c = next;
    }
    if (!placed && !xmlAddChild(x, obs)) {
        xmlFreeNode(obs);
        return -1;
    }
    return 0;
}

lw_status lw_learn_update_model(const char *xml, size_t len,
                                const char *name, const lw_model *m,
                                const lw_learn *l, char **out,
                                size_t *outlen, lw_error *err)
{
    *out = NULL;
    *outlen = 0;
    const char *file = name && strcmp(name, "-") ? name : "<stdin>";
    if (len > INT32_MAX)
        return lw_error_set(err, LW_ELIMIT, file, 0, "the model is too "
                            "large to rewrite");
    int failed = 0;
    xmlInitParser();
    xmlSetStructuredErrorFunc(&failed, xml_quiet);
    xmlSetGenericErrorFunc(NULL, NULL);
    /* the loader's settings: no network, no DTD loading, no entity
     * substitution */
    int opts = XML_PARSE_NONET | XML_PARSE_BIG_LINES | XML_PARSE_NOWARNING |
               XML_PARSE_NOERROR | XML_PARSE_HUGE;
    xmlDocPtr doc = xmlReadMemory(xml, (int)len, file, NULL, opts);
    xmlSetStructuredErrorFunc(NULL, NULL);
    lw_status st = LW_OK;
    xmlChar *buf = NULL;
    int size = 0;
    if (!doc || failed) {
        st = lw_error_set(err, LW_EPARSE, file, 0, "the model could not be "
                          "read again to write the updated copy");
        goto done;
    }
    if (has_entities(doc)) {
        st = lw_error_set(err, LW_EPARSE, file, 0, "the DOCTYPE declares "
                          "entities; layerwise never expands them");
        goto done;
    }
    size_t done_count = 0;
    /* every element, depth first (safeguards may be defined in place) */
    xmlNodePtr x = xmlDocGetRootElement(doc);
    while (x) {
        if (x->type == XML_ELEMENT_NODE &&
            xmlStrEqual(x->name, (const xmlChar *)"safeguard")) {
            xmlChar *id = xmlGetProp(x, (const xmlChar *)"id");
            const lw_learn_layer *y = learned(m, l, id);
            xmlFree(id);
            if (y) {
                if (update_safeguard(doc, x, m, l, y) != 0) {
                    st = lw_error_oom(err);
                    goto done;
                }
                done_count++;
            }
            /* a safeguard's children are probability elements only */
        } else if (x->children && x->type == XML_ELEMENT_NODE) {
            x = x->children;
            continue;
        }
        while (x && !x->next)
            x = x->parent && x->parent->type == XML_ELEMENT_NODE
                    ? x->parent : NULL;
        if (x)
            x = x->next;
    }
    if (done_count != l->nlayers) {
        st = lw_error_set(err, LW_EINTERNAL, file, 0, "found %zu of the %zu "
                          "learned safeguards in the XML", done_count,
                          l->nlayers);
        goto done;
    }
    xmlDocDumpMemoryEnc(doc, &buf, &size, "UTF-8");
    if (!buf || size <= 0) {
        st = lw_error_oom(err);
        goto done;
    }
    *out = lw_malloc((size_t)size + 1);
    if (!*out) {
        st = lw_error_oom(err);
        goto done;
    }
    memcpy(*out, buf, (size_t)size);
    (*out)[size] = '\0';
    *outlen = (size_t)size;
done:
    if (buf)
        xmlFree(buf);
    if (doc)
        xmlFreeDoc(doc);
    if (st != LW_OK)
        return st;
    /* the written model must load, with the new counts */
    lw_model *m2 = NULL;
    lw_error e2 = LW_ERROR_INIT;
    st = lw_model_load_memory(*out, *outlen, file, NULL, &m2, &e2);
    if (st == LW_OK) {
        for (size_t i = 0; i < l->nlayers; i++) {
            const lw_learn_layer *y = &l->layers[i];
            size_t k = lw_model_find_node(m2, m->nodes[y->node].id);
            if (k == LW_NONE || m2->nodes[k].dist.kind != LW_DIST_OBSERVED ||
                m2->nodes[k].dist.count != y->M ||
                m2->nodes[k].dist.of != y->R)
                st = LW_EINTERNAL;
        }
    }
    if (st == LW_ENOMEM) {
        lw_error_oom(err);      /* the check itself ran out of memory */
        lw_free(*out);
        *out = NULL;
        *outlen = 0;
    } else if (st != LW_OK) {
        lw_error_set(err, LW_EINTERNAL, file, 0, "the updated model did not "
                     "load back as expected (%s); nothing was written",
                     e2.count ? e2.items[0].message : lw_status_name(st));
        st = LW_EINTERNAL;
        lw_free(*out);
        *out = NULL;
        *outlen = 0;
    }
    lw_model_free(m2);
    lw_error_clear(&e2);
    return st;
}
