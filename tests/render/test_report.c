/* test_report.c - the committee report: well-formed, self-contained,
 * complete, and inert whatever the model's text says. */
#define _POSIX_C_SOURCE 200809L
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <libxml/parser.h>
#include <libxml/tree.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "layerwise/alloc.h"
#include "layerwise/render.h"
#include "layerwise/report.h"
#include "render/html.h"
#include "testutil.h"

/* ---- helpers --------------------------------------------------------- */

static lw_model *load_file(const char *rel)
{
    lw_model *m = NULL;
    lw_error err = LW_ERROR_INIT;
    lw_status st = lw_model_load_file(tu_source_path(rel), NULL, &m, &err);
    if (st != LW_OK) {
        for (size_t i = 0; i < err.count; i++)
            print_error("%s\n", err.items[i].message);
        lw_error_clear(&err);
        fail_msg("could not load %s", rel);
    }
    lw_error_clear(&err);
    return m;
}

/* Build and write the report of every hazard; returns the HTML (free). */
static char *report_html(const lw_model *m, size_t samples, size_t *len)
{
    size_t *hz = malloc((m->nhazards + 1) * sizeof *hz);
    assert_non_null(hz);
    for (size_t i = 0; i < m->nhazards; i++)
        hz[i] = i;
    lw_report_options ro;
    lw_report_options_init(&ro);
    ro.monte_carlo = samples > 0;
    ro.samples = samples;
    ro.seed = 7;
    ro.generated = "2026-01-01 00:00 UTC";
    ro.source_name = "model.xml";
    lw_report *r = NULL;
    lw_error err = LW_ERROR_INIT;
    lw_status st = lw_report_build(m, hz, m->nhazards, NULL, 0, NULL, &ro,
                                   &r, &err);
    if (st != LW_OK) {
        for (size_t i = 0; i < err.count; i++)
            print_error("%s\n", err.items[i].message);
        fail_msg("lw_report_build failed: %s", lw_status_name(st));
    }
    char *buf = NULL;
    size_t n = 0;
    FILE *f = open_memstream(&buf, &n);
    assert_non_null(f);
    st = lw_report_write_html(f, r, &err);
    assert_int_equal(st, LW_OK);
    assert_int_equal(fclose(f), 0);
    lw_report_free(r);
    lw_error_clear(&err);
    free(hz);
    *len = n;
    return buf;
}

static int xml_errors;

static void count_error(void *ud, const xmlError *e)
{
    (void)ud;
    if (e && e->level >= XML_ERR_ERROR) {
        xml_errors++;
        print_error("XML line %d: %s", e->line, e->message);
    }
}

/* Parse as XML (the report is written XML-compatible): no network, no
 * entity expansion beyond the predefined five; fails on any error. */
static xmlDocPtr parse_strict(const char *buf, size_t len)
{
    xml_errors = 0;
    xmlSetStructuredErrorFunc(NULL, (xmlStructuredErrorFunc)count_error);
    xmlDocPtr doc = xmlReadMemory(buf, (int)len, "report.html", "UTF-8",
                                  XML_PARSE_NONET);
    xmlSetStructuredErrorFunc(NULL, NULL);
    assert_non_null(doc);
    assert_int_equal(xml_errors, 0);
    return doc;
}

typedef struct walk {
    int svg, script, active_attr, remote, style_link, img;
} walk;

static int starts_with_ci(const char *s, const char *p)
{
    for (; *p; s++, p++)
        if ((*s | 0x20) != (*p | 0x20))
            return 0;
    return 1;
}

/* Count what a self-contained, inert document must not hold. */
static void walk_tree(xmlNodePtr n, walk *w)
{
    for (; n; n = n->next) {
        if (n->type != XML_ELEMENT_NODE)
            continue;
        const char *name = (const char *)n->name;
        if (!strcmp(name, "svg"))
            w->svg++;
        if (!strcmp(name, "script"))
            w->script++;
        if (!strcmp(name, "img") || !strcmp(name, "iframe") ||
            !strcmp(name, "object") || !strcmp(name, "embed") ||
            !strcmp(name, "image"))
            w->img++;
        if (!strcmp(name, "link"))
            w->style_link++;
        for (xmlAttrPtr a = n->properties; a; a = a->next) {
            const char *an = (const char *)a->name;
            xmlChar *v = xmlNodeGetContent((xmlNodePtr)a);
            const char *vs = v ? (const char *)v : "";
            if (starts_with_ci(an, "on"))
                w->active_attr++;
            if (!strcmp(an, "src") || !strcmp(an, "href") ||
                !strcmp(an, "xlink:href") || !strcmp(an, "action")) {
                /* only in-page anchors */
                if (vs[0] != '#')
                    w->remote++;
            }
            if (strstr(vs, "http://") || strstr(vs, "https://") ||
                strstr(vs, "javascript:"))
                w->remote++;
            xmlFree(v);
        }
        walk_tree(n->children, w);
    }
}

/* Does the document's text hold 's' (as text, after unescaping)? */
static int text_has(xmlDocPtr doc, const char *s)
{
    xmlChar *t = xmlNodeGetContent(xmlDocGetRootElement(doc));
    int found = t && strstr((const char *)t, s) != NULL;
    xmlFree(t);
    return found;
}

/* The checks every report must pass. */
static void check_report(const lw_model *m, const char *buf, size_t len)
{
    assert_true(len > 1000);
    assert_memory_equal(buf, "<!DOCTYPE html>", 15);
    assert_null(strstr(buf, "<script"));
    assert_null(strstr(buf, "<SCRIPT"));
    assert_null(strstr(buf, "@import"));
    assert_null(strstr(buf, "url(http"));
    assert_null(strstr(buf, "@font-face"));
    xmlDocPtr doc = parse_strict(buf, len);
    walk w = {0};
    walk_tree(xmlDocGetRootElement(doc), &w);
    assert_true(w.svg >= 3);
    assert_int_equal(w.script, 0);
    assert_int_equal(w.active_attr, 0);
    assert_int_equal(w.remote, 0);
    assert_int_equal(w.style_link, 0);
    assert_int_equal(w.img, 0);
    assert_true(text_has(doc, lw_caution()));
    assert_true(text_has(doc, "supports but does not replace"));
    for (size_t i = 0; i < m->nhazards; i++) {
        const lw_node *h = &m->nodes[m->hazards[i]];
        if (!text_has(doc, lw_node_text(h)))
            fail_msg("hazard label \"%s\" missing", lw_node_text(h));
        assert_true(text_has(doc, h->id));
    }
    /* the caution is in the footer */
    const char *foot = strstr(buf, "<footer>");
    assert_non_null(foot);
    assert_non_null(strstr(foot, "supports but does not replace"));
    /* a print style sheet */
    assert_non_null(strstr(buf, "@media print"));
    assert_non_null(strstr(buf, "@page"));
    xmlFreeDoc(doc);
}

/* ---- the demo models and the skeleton ------------------------------ */

static void run_model(const char *rel, size_t samples)
{
    lw_model *m = load_file(rel);
    size_t len = 0;
    char *buf = report_html(m, samples, &len);
    check_report(m, buf, len);
    /* every event id of the model appears in the inputs table */
    xmlDocPtr doc = parse_strict(buf, len);
    for (size_t i = 0; i < m->nnodes; i++)
        if (lw_node_is_event(m->nodes[i].kind))
            assert_true(text_has(doc, m->nodes[i].id));
    /* the variants side by side: every variant's id */
    for (size_t v = 0; v < m->nvariants; v++)
        assert_true(text_has(doc, m->variants[v].id));
    if (samples)
        assert_true(text_has(doc, "In 90 % of the draws"));
    else
        assert_true(text_has(doc, "was not propagated"));
    xmlFreeDoc(doc);
    free(buf);
    lw_model_free(m);
}

static void test_transfusion(void **s) { (void)s; run_model("trees/transfusion.xml", 400); }
static void test_ed_specimen(void **s) { (void)s; run_model("trees/ed-specimen.xml", 400); }
static void test_infusion(void **s) { (void)s; run_model("trees/infusion.xml", 400); }
static void test_skeleton(void **s) { (void)s; run_model("tests/load/skeleton.xml", 400); }
static void test_no_monte_carlo(void **s) { (void)s; run_model("trees/transfusion.xml", 0); }

/* The headline figures in the summary are the analysis's own: 1 in N
 * and the chance of at least one event in t years, 1 - exp(-lambda t)
 * (closed form: Poisson process with rate lambda, P(N(t) >= 1)). */
static void test_summary_figures(void **s)
{
    (void)s;
    lw_model *m = load_file("tests/load/skeleton.xml");
    size_t len = 0;
    char *buf = report_html(m, 0, &len);
    lw_analysis *a = NULL;
    lw_error err = LW_ERROR_INIT;
    assert_int_equal(lw_analyze(m, LW_NONE, 0, NULL, &a, &err), LW_OK);
    xmlDocPtr doc = parse_strict(buf, len);
    char b[96], want[160];
    lw_fmt_one_in(b, sizeof b, 1.0 / a->probability);
    snprintf(want, sizeof want, "1 in %s", b);
    assert_true(text_has(doc, want));
    double lam = a->per_year;
    assert_close(lam, a->probability * 18000, 1e-12); /* exposure in skeleton */
    const int years[3] = {1, 5, 10};
    for (int k = 0; k < 3; k++) {
        double p = 1 - exp(-lam * years[k]);
        lwh_pct(b, sizeof b, p);
        if (!text_has(doc, b))
            fail_msg("chance in %d years %s not in the report", years[k], b);
    }
    /* the tolerable verdict */
    assert_true(text_has(doc, a->meets_tolerable ? "Met" : "Not met"));
    lwh_prob(b, sizeof b, a->probability);
    assert_true(text_has(doc, b));
    xmlFreeDoc(doc);
    lw_analysis_free(a);
    free(buf);
    lw_model_free(m);
}

/* A bare model (no exposure, tolerable, description, variants or
 * distributions) with an ordinary, an impossible and a certain hazard. */
static void test_edge_cases(void **s)
{
    (void)s;
    lw_model *m = tu_load(
        "<safety-model format=\"1\" id=\"bare\">"
        "<error id=\"a\" p=\"0.1\"/><safeguard id=\"g\" p=\"0.3\"/>"
        "<condition id=\"off\" state=\"false\"/>"
        "<condition id=\"on\" state=\"true\"/>"
        "<hazard id=\"h1\" label=\"Ordinary\"><all><ref to=\"a\"/>"
        "<ref to=\"g\"/></all></hazard>"
        "<hazard id=\"never\" label=\"Never happens\"><all><ref to=\"a\"/>"
        "<ref to=\"off\"/></all></hazard>"
        "<hazard id=\"always\" label=\"Always happens\"><any>"
        "<ref to=\"on\"/><ref to=\"g\"/></any></hazard>"
        "</safety-model>");
    for (size_t samples = 0; samples <= 200; samples += 200) {
        size_t len = 0;
        char *buf = report_html(m, samples, &len);
        check_report(m, buf, len);
        assert_null(strstr(buf, "nan"));
        assert_null(strstr(buf, "inf<"));
        xmlDocPtr doc = parse_strict(buf, len);
        assert_true(text_has(doc, "cannot happen"));
        assert_true(text_has(doc, "is certain"));
        assert_true(text_has(doc, "impossible as modelled"));
        assert_true(text_has(doc, "no yearly volume"));
        assert_true(text_has(doc, "defines no variants"));
        /* A AND G: 0.1 x 0.3 (closed form: product of independent events) */
        char b[96];
        lwh_prob(b, sizeof b, 0.1 * 0.3);
        assert_true(text_has(doc, b));
        if (samples)
            assert_true(text_has(doc, "all gave the same chance"));
        xmlFreeDoc(doc);
        free(buf);
    }
    lw_model_free(m);
}

/* ---- hostile text ------------------------------------------------------ */

static const char hostile_xml[] =
    "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
    "<safety-model format=\"1\" id=\"hostile\">\n"
    "<title>&lt;script&gt;alert(1)&lt;/script&gt; \"&gt;&lt;img src=x "
    "onerror=alert(1)&gt; Tom &amp;amp; 'Jerry'</title>\n"
    "<description>&lt;script&gt;alert(2)&lt;/script&gt;\n"
    "- \"&gt;&lt;img src=x onerror=alert(3)&gt;\n"
    "&lt;a href=\"http://example.invalid/x\"&gt;link&lt;/a&gt; &amp;amp;"
    "</description>\n"
    "<exposure unit=\"&lt;b&gt;episode&lt;/b&gt;\" per-year=\"1000\"/>\n"
    "<error id=\"e1\" label=\"&lt;script&gt;alert(4)&lt;/script&gt;\" "
    "p=\"0.01\" source=\"&quot;&gt;&lt;img src=x onerror=alert(5)&gt;\">"
    "<lognormal error-factor=\"3\"/></error>\n"
    "<safeguard id=\"s1\" label=\"&quot;&gt;&lt;img src=x "
    "onerror=alert(6)&gt;\"><observed count=\"0\" of=\"30\" "
    "source=\"&lt;iframe src=&quot;https://example.invalid&quot;&gt;"
    "&lt;/iframe&gt;\"/></safeguard>\n"
    "<safeguard id=\"s2\" label=\"Tom &amp;amp; Jerry's &quot;check&quot;\" "
    "p=\"0.2\" source=\"x' onmouseover='alert(7)\"/>\n"
    "<safeguard id=\"s3\" label=\"&lt;svg onload=alert(8)&gt;\" p=\"0.3\"/>\n"
    "<condition id=\"c1\" label=\"&lt;style&gt;body{display:none}"
    "&lt;/style&gt;\" state=\"true\"/>\n"
    "<hazard id=\"h1\" label=\"&lt;/title&gt;&lt;script&gt;alert(9)"
    "&lt;/script&gt;\" tolerable=\"1e-4\">\n"
    " <all label=\"&lt;/svg&gt;&lt;script&gt;alert(10)&lt;/script&gt;\">\n"
    "  <ref to=\"e1\"/>\n"
    "  <any label=\"&quot;]; x -&gt; y [label=&quot;pwn\">\n"
    "   <ref to=\"s1\"/>\n"
    "   <vote k=\"2\" label=\"\\&quot; \\\\ \\N\"><ref to=\"s2\"/>"
    "<ref to=\"s3\"/><ref to=\"s1\"/></vote>\n"
    "  </any>\n"
    "  <ref to=\"c1\"/>\n"
    " </all>\n"
    "</hazard>\n"
    "<common-cause id=\"g1\" label=\"&lt;script&gt;alert(11)&lt;/script&gt;\" "
    "beta=\"0.1\" members=\"s2 s3\"/>\n"
    "<variant id=\"v1\" label=\"&lt;script&gt;alert(12)&lt;/script&gt;"
    "&quot;&gt;\"><set ref=\"s2\" p=\"0.05\"/></variant>\n"
    "</safety-model>\n";

static void test_hostile(void **s)
{
    (void)s;
    lw_model *m = tu_load(hostile_xml);
    size_t len = 0;
    char *buf = report_html(m, 300, &len);
    check_report(m, buf, len);
    /* the raw payloads never appear */
    static const char *const raw[] = {
        "<script", "<img", "<iframe", "<style>body", "<svg onload",
        "\"><img", "'alert", "onerror=alert(1)>", "</title><script",
        "<b>episode", "<a href=\"http"
    };
    for (size_t i = 0; i < sizeof raw / sizeof *raw; i++)
        if (strstr(buf, raw[i]))
            fail_msg("raw payload \"%s\" in the report", raw[i]);
    /* the escaped forms do, and the text reads back exactly */
    assert_non_null(strstr(buf, "&lt;script&gt;alert(1)&lt;/script&gt;"));
    assert_non_null(strstr(buf, "&amp;amp;"));
    assert_non_null(strstr(buf, "&quot;&gt;&lt;img src=x onerror=alert(1)"));
    assert_non_null(strstr(buf, "&#39;Jerry&#39;"));
    xmlDocPtr doc = parse_strict(buf, len);
    assert_true(text_has(doc, "<script>alert(1)</script> \"><img src=x "
                              "onerror=alert(1)> Tom &amp; 'Jerry'"));
    assert_true(text_has(doc, "</title><script>alert(9)</script>"));
    assert_true(text_has(doc, "<script>alert(12)</script>\">"));
    assert_true(text_has(doc, "x' onmouseover='alert(7)"));
    xmlFreeDoc(doc);
    free(buf);
    lw_model_free(m);
}

/* ---- helpers of the renderer ---------------------------------------- */

static void test_escape(void **s)
{
    (void)s;
    char *buf = NULL;
    size_t n = 0;
    FILE *f = open_memstream(&buf, &n);
    lwh_esc(f, "a&b<c>d\"e'f\x01g\th");
    lwh_esc(f, NULL);
    fclose(f);
    assert_string_equal(buf, "a&amp;b&lt;c&gt;d&quot;e&#39;fg\th");
    free(buf);
}

/* Number words (common practice, no source: the report's own style). */
static void test_numbers(void **s)
{
    (void)s;
    char b[96];
    lwh_prob(b, sizeof b, 3.41e-5);
    assert_string_equal(b, "3.41\u2009\u00d7\u200910\u207b\u2075");
    lwh_prob(b, sizeof b, 0.154);
    assert_string_equal(b, "0.154");
    lwh_prob(b, sizeof b, 1e-12);
    assert_string_equal(b, "1\u2009\u00d7\u200910\u207b\u00b9\u00b2");
    lwh_prob(b, sizeof b, 9.9996e-5);   /* rounds into the next decade */
    assert_string_equal(b, "1\u2009\u00d7\u200910\u207b\u2074");
    lwh_prob(b, sizeof b, 0);
    assert_string_equal(b, "0");
    lwh_pct(b, sizeof b, 0.356);
    assert_string_equal(b, "36\u2009%");
    lwh_pct(b, sizeof b, 0.0421);
    assert_string_equal(b, "4.2\u2009%");
    lwh_pct(b, sizeof b, 0.00031);
    assert_string_equal(b, "0.03\u2009%");
}

static void test_wrap(void **s)
{
    (void)s;
    lwh_lines l;
    lwh_wrap("First nurse's bedside check misses it", 16, 4, &l);
    assert_int_equal(l.n, 3);
    assert_string_equal(l.line[0], "First nurse's");
    assert_string_equal(l.line[1], "bedside check");
    assert_string_equal(l.line[2], "misses it");
    assert_false(l.cut);
    /* hyphens are break points; an over-long word is cut */
    lwh_wrap("scan-and-print", 10, 3, &l);
    assert_string_equal(l.line[0], "scan-and-");
    assert_string_equal(l.line[1], "print");
    lwh_wrap("abcdefghijklmnop", 6, 4, &l);
    assert_string_equal(l.line[0], "abcdef");
    /* too long: an ellipsis on the last line */
    lwh_wrap("one two three four five six seven", 9, 2, &l);
    assert_int_equal(l.n, 2);
    assert_true(l.cut);
    assert_non_null(strstr(l.line[1], "\u2026"));
    /* UTF-8 counts code points, never splits one */
    lwh_wrap("\u00e9\u00e9\u00e9\u00e9\u00e9\u00e9", 4, 3, &l);
    assert_string_equal(l.line[0], "\u00e9\u00e9\u00e9\u00e9");
    assert_string_equal(l.line[1], "\u00e9\u00e9");
    assert_int_equal(lwh_utf8_len("\u00e9t\u00e9"), 3);
}

/* Out of memory anywhere while writing: LW_ENOMEM, nothing leaked (the
 * sanitizer checks the leaks). */
static void test_write_oom(void **s)
{
    (void)s;
    lw_model *m = load_file("tests/load/skeleton.xml");
    size_t hz = 0;
    lw_report_options ro;
    lw_report_options_init(&ro);
    ro.monte_carlo = false;
    lw_report *r = NULL;
    lw_error err = LW_ERROR_INIT;
    assert_int_equal(lw_report_build(m, &hz, 1, NULL, 0, NULL, &ro, &r, &err),
                     LW_OK);
    int failed = 0;
    for (unsigned long n = 1; n < 200; n++) {
        char *buf = NULL;
        size_t len = 0;
        FILE *f = open_memstream(&buf, &len);
        lw_alloc_fail_at(n, 1);
        lw_status st = lw_report_write_html(f, r, &err);
        lw_alloc_fail_at(0, 0);
        fclose(f);
        free(buf);
        lw_error_clear(&err);
        if (st == LW_OK)
            break;
        assert_int_equal(st, LW_ENOMEM);
        failed++;
    }
    assert_true(failed > 0);
    lw_report_free(r);
    lw_model_free(m);
}

static void test_build_oom(void **s)
{
    (void)s;
    lw_model *m = load_file("tests/load/skeleton.xml");
    size_t hz = 0;
    lw_report_options ro;
    lw_report_options_init(&ro);
    ro.monte_carlo = false;
    int done = 0;
    for (unsigned long n = 1; n < 20000 && !done; n++) {
        lw_report *r = NULL;
        lw_error err = LW_ERROR_INIT;
        lw_alloc_fail_at(n, 0);
        lw_status st = lw_report_build(m, &hz, 1, NULL, 0, NULL, &ro, &r,
                                       &err);
        unsigned long made = lw_alloc_count();
        lw_alloc_fail_at(0, 0);
        if (st == LW_OK) {
            done = made < n;    /* the failure was never reached */
            lw_report_free(r);
        } else {
            assert_int_equal(st, LW_ENOMEM);
            assert_null(r);
        }
        lw_error_clear(&err);
    }
    assert_true(done);
    lw_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_escape),
        cmocka_unit_test(test_numbers),
        cmocka_unit_test(test_wrap),
        cmocka_unit_test(test_transfusion),
        cmocka_unit_test(test_ed_specimen),
        cmocka_unit_test(test_infusion),
        cmocka_unit_test(test_skeleton),
        cmocka_unit_test(test_no_monte_carlo),
        cmocka_unit_test(test_summary_figures),
        cmocka_unit_test(test_edge_cases),
        cmocka_unit_test(test_hostile),
        cmocka_unit_test(test_write_oom),
        cmocka_unit_test(test_build_oom),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
