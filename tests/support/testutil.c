/* testutil.c - see testutil.h. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "testutil.h"

const lw_load_limits *tu_limits = NULL;

lw_model *tu_load(const char *xml)
{
    lw_error err = LW_ERROR_INIT;
    lw_model *m = NULL;
    lw_status st = lw_model_load_memory(xml, strlen(xml), "test.xml",
                                        tu_limits, &m, &err);
    if (st != LW_OK) {
        for (size_t i = 0; i < err.count; i++)
            fprintf(stderr, "%s:%ld: %s\n", err.items[i].file,
                    err.items[i].line, err.items[i].message);
        lw_error_clear(&err);
        fail_msg("model did not load (%s)", lw_status_name(st));
    }
    lw_error_clear(&err);
    return m;
}

lw_status tu_load_fail(const char *xml, lw_error *err)
{
    lw_model *m = NULL;
    lw_status st = lw_model_load_memory(xml, strlen(xml), "bad.xml",
                                        tu_limits, &m, err);
    if (st == LW_OK) {
        lw_model_free(m);
        fail_msg("model loaded but should have failed");
    }
    return st;
}

int tu_error_has(const lw_error *err, const char *needle, long *line)
{
    for (size_t i = 0; i < err->count; i++)
        if (strstr(err->items[i].message, needle)) {
            if (line)
                *line = err->items[i].line;
            return 1;
        }
    return 0;
}

int tu_eval(const lw_network *net, uint32_t g, uint64_t x)
{
    const lw_gate *gt = &net->gates[g];
    const uint32_t *in = net->inputs + gt->first;
    switch (gt->kind) {
    case LW_GATE_FALSE: return 0;
    case LW_GATE_TRUE: return 1;
    case LW_GATE_VAR: return (int)((x >> gt->var) & 1u);
    case LW_GATE_AND:
        for (uint32_t i = 0; i < gt->nin; i++)
            if (!tu_eval(net, in[i], x))
                return 0;
        return 1;
    case LW_GATE_OR:
        for (uint32_t i = 0; i < gt->nin; i++)
            if (tu_eval(net, in[i], x))
                return 1;
        return 0;
    case LW_GATE_VOTE: {
        uint32_t c = 0;
        for (uint32_t i = 0; i < gt->nin; i++)
            c += (uint32_t)tu_eval(net, in[i], x);
        return c >= gt->k;
    }
    }
    return 0;
}

double tu_brute_prob(const lw_network *net, uint32_t gate,
                     const double *var_p)
{
    size_t n = net->nvars;
    assert_true(n <= 24);
    double total = 0.0;
    for (uint64_t x = 0; x < (1ull << n); x++) {
        if (!tu_eval(net, gate, x))
            continue;
        double w = 1.0;
        for (size_t v = 0; v < n; v++)
            w *= ((x >> v) & 1u) ? var_p[v] : 1.0 - var_p[v];
        total += w;
    }
    return total;
}

double tu_prob(const lw_model *m, size_t variant, size_t hazard)
{
    lw_error err = LW_ERROR_INIT;
    lw_prepared *p = NULL;
    lw_status st = lw_prepare(m, variant, hazard, NULL, &p, &err);
    if (st != LW_OK) {
        lw_error_clear(&err);
        fail_msg("prepare failed: %s", lw_status_name(st));
    }
    double P = p->probability;
    lw_prepared_free(p);
    lw_error_clear(&err);
    return P;
}

uint64_t tu_rand(uint64_t *s)
{
    uint64_t z = (*s += 0x9E3779B97F4A7C15ull);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ull;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBull;
    return z ^ (z >> 31);
}

double tu_uniform(uint64_t *s)
{
    return (double)(tu_rand(s) >> 11) * (1.0 / 9007199254740992.0);
}

const char *tu_source_path(const char *rel)
{
    static char buf[4096];
    const char *root = getenv("LW_SOURCE_DIR");
    snprintf(buf, sizeof buf, "%s/%s", root ? root : ".", rel);
    return buf;
}

int tu_close(double a, double b, double tol)
{
    double s = fmax(fabs(a), fabs(b));
    if (s < 1e-300)
        return 1;
    return fabs(a - b) <= tol * s;
}

/* Every set of a family, in the order the family lists them. */
typedef struct set_text {
    char *s;
    size_t n, cap;
} set_text;

static int add_set(void *ud, const uint32_t *levels, size_t order,
                   double probability)
{
    set_text *t = ud;
    char buf[64];
    for (size_t i = 0; i <= order; i++) {
        int w = i < order ? snprintf(buf, sizeof buf, "%u,", levels[i])
                          : snprintf(buf, sizeof buf, "%a;", probability);
        if (t->n + (size_t)w + 1 > t->cap) {
            t->cap = 2 * (t->n + (size_t)w + 1);
            t->s = realloc(t->s, t->cap);
            assert_non_null(t->s);
        }
        memcpy(t->s + t->n, buf, (size_t)w + 1);
        t->n += (size_t)w;
    }
    return 0;
}

/* The family built from the network (what analyze uses) and the one built
 * from the BDD are the same family, frozen the same way: the same count,
 * the same sets in the same order, bit for bit the same sums. */
void tu_same_family_both_ways(const lw_prepared *p, const char *what)
{
    const lw_diagram *d = p->diagram;
    lw_error err = LW_ERROR_INIT;
    uint32_t *vl = malloc((p->net->nvars + 1) * sizeof *vl);
    assert_non_null(vl);
    memset(vl, 0xff, (p->net->nvars + 1) * sizeof *vl);
    for (uint32_t l = 0; l < d->nlevels; l++)
        vl[d->level_var[l]] = l;
    lw_cut_family *fb = NULL, *fn = NULL;
    assert_int_equal(lw_cut_family_new(d, p->q, 0, &fb, &err), LW_OK);
    assert_int_equal(lw_cut_family_from_network(
                         p->net, p->net->hazard_gate[p->hazard], vl,
                         d->nlevels, d->level_var, p->q, 0, &fn, &err),
                     LW_OK);
    set_text tb = {0}, tn = {0};
    assert_int_equal(lw_cut_family_each(fb, add_set, &tb, &err), LW_OK);
    assert_int_equal(lw_cut_family_each(fn, add_set, &tn, &err), LW_OK);
    if (lw_cut_family_nodes(fb) != lw_cut_family_nodes(fn) ||
        lw_cut_family_count(fb) != lw_cut_family_count(fn) ||
        lw_cut_family_rare_event(fb) != lw_cut_family_rare_event(fn) ||
        ((tb.s || tn.s) && (!tb.s || !tn.s || strcmp(tb.s, tn.s) != 0)))
        fail_msg("%s: the family from the network differs from the family "
                 "from the BDD:\n  %.2000s\n  %.2000s", what,
                 tn.s ? tn.s : "", tb.s ? tb.s : "");
    free(tb.s);
    free(tn.s);
    free(vl);
    lw_cut_family_free(fb);
    lw_cut_family_free(fn);
}


/* The longest edge to a non-terminal child, counted again. */
static uint32_t edge_span(const lw_diagram *d)
{
    uint32_t es = 0;
    for (uint32_t i = 2; i < d->n; i++) {
        uint32_t c[2] = {d->hi[i], d->lo[i]};
        for (int k = 0; k < 2; k++)
            if (c[k] > 1 && i - c[k] > es)
                es = i - c[k];
    }
    return es;
}

void tu_same_diagram(const lw_diagram *a, const lw_diagram *b,
                     const char *what)
{
    if (a->edge_span != edge_span(a) || b->edge_span != edge_span(b))
        fail_msg("%s: edge spans %u and %u, counted again %u and %u", what,
                 a->edge_span, b->edge_span, edge_span(a), edge_span(b));
    int same = lw_diagram_same(a, b);
    if (same != 1)
        fail_msg("%s: diagrams of %u and %u nodes are %s", what, a->n, b->n,
                 same < 0 ? "not compared (out of memory)" : "different");
}

void tu_run_on_stack(void *(*fn)(void *), void *arg, size_t bytes)
{
    pthread_attr_t attr;
    pthread_t t;
    assert_int_equal(pthread_attr_init(&attr), 0);
    assert_int_equal(pthread_attr_setstacksize(&attr, bytes), 0);
    assert_int_equal(pthread_create(&t, &attr, fn, arg), 0);
    pthread_attr_destroy(&attr);
    pthread_join(t, NULL);
}

void tu_printf(tu_text *t, const char *fmt, ...)
{
    for (;;) {
        va_list ap;
        va_start(ap, fmt);
        int n = vsnprintf(t->s ? t->s + t->len : NULL,
                          t->s ? t->cap - t->len : 0, fmt, ap);
        va_end(ap);
        assert_true(n >= 0);
        if (t->s && t->len + (size_t)n < t->cap) {
            t->len += (size_t)n;
            return;
        }
        size_t cap = t->cap ? 2 * t->cap : 4096;
        while (cap <= t->len + (size_t)n)
            cap *= 2;
        char *ns = realloc(t->s, cap);
        assert_non_null(ns);
        t->s = ns;
        t->cap = cap;
    }
}
