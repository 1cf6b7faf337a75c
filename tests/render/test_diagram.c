/* test_diagram.c - the tree as DOT (and as SVG through Graphviz). */
#define _POSIX_C_SOURCE 200809L
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <libxml/parser.h>
#include <libxml/tree.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "layerwise/alloc.h"
#include "layerwise/report.h"
#include "testutil.h"

static lw_model *load_file(const char *rel)
{
    lw_model *m = NULL;
    lw_error err = LW_ERROR_INIT;
    if (lw_model_load_file(tu_source_path(rel), NULL, &m, &err) != LW_OK)
        fail_msg("could not load %s", rel);
    lw_error_clear(&err);
    return m;
}

static char *dot_of(const lw_model *m, size_t hazard, size_t variant,
                    size_t *len)
{
    char *buf = NULL;
    size_t n = 0;
    FILE *f = open_memstream(&buf, &n);
    assert_non_null(f);
    lw_diagram_options o = {hazard, variant};
    lw_error err = LW_ERROR_INIT;
    lw_status st = lw_render_dot(f, m, &o, &err);
    if (st != LW_OK)
        fail_msg("lw_render_dot: %s", err.count ? err.items[0].message : "");
    assert_int_equal(fclose(f), 0);
    lw_error_clear(&err);
    if (len)
        *len = n;
    return buf;
}

static size_t count(const char *hay, const char *needle)
{
    size_t k = 0;
    for (const char *p = hay; (p = strstr(p, needle)) != NULL; p++)
        k++;
    return k;
}

/* Edge statements into node i: whole lines "  nP -> nI;" (text inside
 * a label never makes a line of its own). */
static size_t edges_into(const char *dot, size_t i)
{
    char tail[48];
    snprintf(tail, sizeof tail, " -> n%zu;", i);
    size_t tl = strlen(tail), k = 0;
    for (const char *p = dot; *p;) {
        const char *e = strchr(p, '\n');
        size_t n = e ? (size_t)(e - p) : strlen(p);
        if (n > tl + 3 && !strncmp(p, "  n", 3) &&
            !strncmp(p + n - tl, tail, tl))
            k++;
        p += n + (e ? 1 : 0);
    }
    return k;
}

/* Which nodes a hazard reaches, and how often each is used by a gate
 * (the independent reference: a plain recursive walk). */
static void uses(const lw_model *m, size_t node, unsigned char *seen,
                 size_t *used)
{
    if (seen[node])
        return;
    seen[node] = 1;
    const lw_node *n = &m->nodes[node];
    for (size_t i = 0; i < n->nin; i++) {
        used[n->in[i]]++;
        uses(m, n->in[i], seen, used);
    }
}

/* Every reached model node is one DOT node, defined once, with one edge
 * per use; nodes the hazard does not reach are absent. */
static void check_structure(const lw_model *m, const char *dot, size_t hz)
{
    unsigned char *seen = calloc(m->nnodes + 1, 1);
    size_t *used = calloc(m->nnodes + 1, sizeof *used);
    for (size_t h = 0; h < m->nhazards; h++)
        if (hz == LW_NONE || h == hz)
            uses(m, m->hazards[h], seen, used);
    char key[64];
    size_t shared = 0;
    for (size_t i = 0; i < m->nnodes; i++) {
        snprintf(key, sizeof key, "\n  n%zu [", i);
        size_t defs = count(dot, key);
        if (!seen[i]) {
            assert_int_equal(defs, 0);
            continue;
        }
        if (defs != 1)
            fail_msg("node %zu (%s) defined %zu times", i,
                     m->nodes[i].id ? m->nodes[i].id : "-", defs);
        assert_int_equal(edges_into(dot, i), used[i]);
        if (used[i] > 1)
            shared++;
        /* events show their probability, ids are shown */
        if (m->nodes[i].id) {
            snprintf(key, sizeof key, "(%s)", m->nodes[i].id);
            assert_true(count(dot, key) >= 1);
        }
    }
    free(seen);
    free(used);
    (void)shared;
}

static void run_model(const char *rel, size_t min_shared)
{
    lw_model *m = load_file(rel);
    char *dot = dot_of(m, LW_NONE, LW_NONE, NULL);
    assert_memory_equal(dot, "digraph ", 8);
    check_structure(m, dot, LW_NONE);
    /* the models share subtrees: some node has several parents, and is
     * still defined once (checked above) */
    unsigned char *seen = calloc(m->nnodes + 1, 1);
    size_t *used = calloc(m->nnodes + 1, sizeof *used);
    for (size_t h = 0; h < m->nhazards; h++)
        uses(m, m->hazards[h], seen, used);
    size_t shared = 0;
    for (size_t i = 0; i < m->nnodes; i++)
        shared += used[i] > 1;
    assert_true(shared >= min_shared);
    free(seen);
    free(used);
    free(dot);
    lw_model_free(m);
}

/* transfusion: wrong-band and manual-bedside are shared (see the model);
 * skeleton: bedside is used twice. */
static void test_transfusion(void **s) { (void)s; run_model("trees/transfusion.xml", 1); }
static void test_ed(void **s) { (void)s; run_model("trees/ed-specimen.xml", 0); }
static void test_infusion(void **s) { (void)s; run_model("trees/infusion.xml", 1); }
static void test_skeleton(void **s) { (void)s; run_model("tests/load/skeleton.xml", 1); }

/* IEC 61025 marks and shapes. */
static void test_shapes(void **s)
{
    (void)s;
    lw_model *m = load_file("tests/load/skeleton.xml");
    char *dot = dot_of(m, LW_NONE, LW_NONE, NULL);
    /* values as written in tests/load/skeleton.xml (the model's own
     * inputs, no computation): the vote gate is 2 of 3 */
    assert_non_null(strstr(dot, "|2/3}"));
    assert_non_null(strstr(dot, "shape=circle"));
    assert_non_null(strstr(dot, "HAZARD\\n"));
    /* tolerable 1e-6 of the skeleton's hazard */
    assert_non_null(strstr(dot, "tolerable 1\u2009\u00d7\u200910\u207b\u2076"));
    /* the absent scan is dashed and counts as p = 1 */
    size_t scan = lw_model_find_node(m, "scan");
    char key[64];
    snprintf(key, sizeof key, "n%zu [", scan);
    const char *def = strstr(dot, key);
    assert_non_null(def);
    const char *end = strchr(def, '\n');
    const char *dashed = strstr(def, "style=dashed");
    assert_non_null(dashed);
    assert_true(dashed < end);
    /* the dependence is a dashed arrow first -> second */
    size_t n1 = lw_model_find_node(m, "nurse-1"), n2 = lw_model_find_node(m, "nurse-2");
    snprintf(key, sizeof key, "n%zu -> n%zu [style=dashed", n1, n2);
    assert_non_null(strstr(dot, key));
    free(dot);
    /* with the variant the scan is present and shows its own p = 0.01 */
    size_t v = lw_model_find_variant(m, "add-scan");
    dot = dot_of(m, LW_NONE, v, NULL);
    assert_non_null(strstr(dot, "(scan)\\nmisses: p = 0.01"));
    assert_non_null(strstr(dot, "variant: "));
    free(dot);
    lw_model_free(m);
}

/* One hazard of two: only its part is drawn. */
static void test_one_hazard(void **s)
{
    (void)s;
    lw_model *m = tu_load(
        "<safety-model format=\"1\" id=\"two\">"
        "<error id=\"a\" p=\"0.1\"/><error id=\"b\" p=\"0.2\"/>"
        "<safeguard id=\"g\" p=\"0.3\"/>"
        "<hazard id=\"h1\"><all><ref to=\"a\"/><ref to=\"g\"/></all></hazard>"
        "<hazard id=\"h2\"><all><ref to=\"b\"/><ref to=\"g\"/></all></hazard>"
        "</safety-model>");
    for (size_t h = 0; h < 2; h++) {
        char *dot = dot_of(m, h, LW_NONE, NULL);
        check_structure(m, dot, h);
        assert_non_null(strstr(dot, h ? "(b)" : "(a)"));
        assert_null(strstr(dot, h ? "(a)" : "(b)"));
        free(dot);
    }
    char *dot = dot_of(m, LW_NONE, LW_NONE, NULL);
    check_structure(m, dot, LW_NONE);
    size_t g = lw_model_find_node(m, "g");
    assert_int_equal(edges_into(dot, g), 2);   /* shared by both hazards */
    free(dot);
    lw_model_free(m);
}

/* Labels that try to break out of their DOT strings stay inside. */
static const char hostile[] =
    "<safety-model format=\"1\" id=\"x\">"
    "<title>\"]; evil [label=\"x</title>"
    "<error id=\"e\" label=\"a\\&quot; -&gt; b \\\\ \\N { } | &lt; &gt;\" "
    "p=\"0.1\"/>"
    "<safeguard id=\"g\" label=\"&quot;]; n0 -&gt; n0; x [label=&quot;\" "
    "p=\"0.2\"/>"
    "<hazard id=\"h\" label=\"line one\nline two\">"
    "<all label=\"{|}&lt;&gt;\\&quot;\"><ref to=\"e\"/><ref to=\"g\"/></all>"
    "</hazard></safety-model>";

/* In a DOT double-quoted string every '"' must be preceded by an odd
 * number of backslashes (DOT language grammar: \" is the only escape
 * the lexer honours inside quotes). */
static void check_quotes_balanced(const char *dot)
{
    int in = 0;
    for (const char *p = dot; *p; p++) {
        if (*p == '\\' && in) {
            if (p[1])
                p++;
            continue;
        }
        if (*p == '"')
            in = !in;
        else if (!in && *p == '\n')
            continue;
    }
    assert_int_equal(in, 0);
}

static void test_hostile_dot(void **s)
{
    (void)s;
    lw_model *m = tu_load(hostile);
    char *dot = dot_of(m, LW_NONE, LW_NONE, NULL);
    check_quotes_balanced(dot);
    check_structure(m, dot, LW_NONE);
    /* the only statements are ours: one per node, edge and the header */
    size_t lines = count(dot, "\n");
    /* header 4, legend 1, nodes e g h all 4, edges 3, closing 1 */
    assert_int_equal(lines, 4 + 1 + 4 + 3 + 1);
    free(dot);
    lw_model_free(m);
}

static int have_dot(void)
{
    const char *path = getenv("PATH");
    if (!path)
        return 0;
    char buf[4096];
    const char *p = path;
    while (*p) {
        const char *e = strchr(p, ':');
        size_t n = e ? (size_t)(e - p) : strlen(p);
        snprintf(buf, sizeof buf, "%.*s/dot", (int)n, p);
        if (access(buf, X_OK) == 0)
            return 1;
        if (!e)
            break;
        p = e + 1;
    }
    return 0;
}

static void svg_of(const char *rel_or_xml, int inline_xml)
{
    lw_model *m = inline_xml ? tu_load(rel_or_xml) : load_file(rel_or_xml);
    size_t len = 0;
    char *dot = dot_of(m, LW_NONE, LW_NONE, &len);
    char *svg = NULL;
    size_t svg_len = 0;
    lw_error err = LW_ERROR_INIT;
    lw_status st = lw_dot_to_svg(dot, len, NULL, &svg, &svg_len, &err);
    if (st != LW_OK)
        fail_msg("dot: %s", err.count ? err.items[0].message : "?");
    xmlDocPtr doc = xmlReadMemory(svg, (int)svg_len, "d.svg", NULL,
                                  XML_PARSE_NONET | XML_PARSE_NOERROR |
                                  XML_PARSE_NOWARNING);
    assert_non_null(doc);
    assert_string_equal((const char *)xmlDocGetRootElement(doc)->name, "svg");
    xmlFreeDoc(doc);
    lw_free(svg);
    free(dot);
    lw_error_clear(&err);
    lw_model_free(m);
}

static void test_svg(void **s)
{
    (void)s;
    if (!have_dot()) {
        print_message("skipped: Graphviz dot not installed\n");
        skip();
    }
    svg_of("trees/transfusion.xml", 0);
    svg_of("trees/infusion.xml", 0);
    svg_of("trees/ed-specimen.xml", 0);
    svg_of(hostile, 1);
}

/* No Graphviz: a clear error that points at .dot, nothing returned. */
static void test_no_dot(void **s)
{
    (void)s;
    char *svg = (char *)"x";
    lw_error err = LW_ERROR_INIT;
    lw_status st = lw_dot_to_svg("digraph x {}\n", 13,
                                 "layerwise-no-such-program", &svg, NULL,
                                 &err);
    assert_int_equal(st, LW_EIO);
    assert_null(svg);
    assert_true(tu_error_has(&err, ".dot", NULL));
    assert_true(tu_error_has(&err, "layerwise-no-such-program", NULL));
    lw_error_clear(&err);
}

/* A program that fails: its message is passed on. */
static void test_dot_fails(void **s)
{
    (void)s;
    if (!have_dot())
        skip();
    char *svg = NULL;
    lw_error err = LW_ERROR_INIT;
    lw_status st = lw_dot_to_svg("digraph {{{ nonsense", 20, NULL, &svg,
                                 NULL, &err);
    assert_int_equal(st, LW_EIO);
    assert_null(svg);
    assert_true(tu_error_has(&err, "failed", NULL));
    lw_error_clear(&err);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_transfusion),
        cmocka_unit_test(test_ed),
        cmocka_unit_test(test_infusion),
        cmocka_unit_test(test_skeleton),
        cmocka_unit_test(test_shapes),
        cmocka_unit_test(test_one_hazard),
        cmocka_unit_test(test_hostile_dot),
        cmocka_unit_test(test_svg),
        cmocka_unit_test(test_no_dot),
        cmocka_unit_test(test_dot_fails),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
