/*
 * test_loader.c - the load room: every error kind of model-format.md
 * ("Errors the loader must report") fails with the right status and the
 * line of the bad element; valid models load with the right contents.
 *
 * Each bad model is written line by line with its line number in a
 * comment; lines 1 and 2 are always HEAD.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "testutil.h"

#define HEAD                                                               \
    /* 1 */ "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"                  \
    /* 2 */ "<safety-model format=\"1\" id=\"m\">\n"
#define END "</safety-model>\n"

static void dump(const lw_error *err)
{
    for (size_t i = 0; i < err->count; i++)
        fprintf(stderr, "  diag %zu: %s:%ld: %s\n", i,
                err->items[i].file ? err->items[i].file : "(null)",
                err->items[i].line, err->items[i].message);
}

/* The model must fail with 'code'; a diagnostic on 'line' must contain
 * 'needle' (when given).  With 'only', every diagnostic must be on 'line'
 * (one problem, so nothing else may be reported). */
static void expect_bad_ex(const char *xml, lw_status code, long line,
                          const char *needle, int only)
{
    lw_error err = LW_ERROR_INIT;
    lw_status st = tu_load_fail(xml, &err);
    int ok = st == code && err.count >= 1;
    int found = 0;
    for (size_t i = 0; i < err.count && ok; i++) {
        const lw_diag *d = &err.items[i];
        if (!d->file || strcmp(d->file, "bad.xml") != 0)
            ok = 0;
        if (d->line == line &&
            (!needle || strstr(d->message, needle) != NULL))
            found = 1;
        else if (only && d->line != line)
            ok = 0;
    }
    if (!ok || !found) {
        dump(&err);
        lw_error_clear(&err);
        fail_msg("want %s on line %ld%s%s%s, got %s with %s diagnostics",
                 lw_status_name(code), line, needle ? " containing \"" : "",
                 needle ? needle : "", needle ? "\"" : "",
                 lw_status_name(st), only ? "these" : "no matching");
    }
    lw_error_clear(&err);
}

static const lw_node *node(const lw_model *m, const char *id)
{
    size_t i = lw_model_find_node(m, id);
    if (i == LW_NONE)
        fail_msg("no node \"%s\"", id);
    return &m->nodes[i];
}

static void expect_only(const char *xml, lw_status code, long line,
                        const char *needle)
{
    expect_bad_ex(xml, code, line, needle, 1);
}

/* ------------------------------------------------------------------ */
/* malformed XML                                                       */

static void test_malformed_xml(void **state)
{
    (void)state;
    expect_bad_ex(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\"><ref to=\"a\"/></hazrd>\n"
        /* 5 */ END,
        LW_EPARSE, 4, "mismatch", 0);
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\" label=\"A & B\"/>\n"
        /* 4 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 5 */ END,
        LW_EPARSE, 3, NULL);
    expect_only(HEAD
        /* 3 */ "<error id=a p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 5 */ END,
        LW_EPARSE, 3, NULL);
    /* an empty file and a file that is not XML at all */
    expect_only(" ", LW_EPARSE, 1, NULL);
    expect_only("hello\n", LW_EPARSE, 1, NULL);
    lw_error err = LW_ERROR_INIT;
    lw_model *m = (lw_model *)1;
    assert_int_equal(lw_model_load_memory("", 0, "bad.xml", tu_limits, &m,
                                          &err), LW_EPARSE);
    assert_null(m);
    assert_int_equal(err.count, 1);
    assert_int_equal(err.items[0].line, 1);
    lw_error_clear(&err);
}

/* ------------------------------------------------------------------ */
/* structure: elements and attributes                                  */

static void test_unknown_element(void **state)
{
    (void)state;
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<bogus/>\n"
        /* 5 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 6 */ END,
        LW_EMODEL, 4, "bogus");
    /* inside logic */
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\">\n"
        /* 5 */ "  <and><ref to=\"a\"/></and>\n"
        /* 6 */ "</hazard>\n"
        /* 7 */ END,
        LW_EMODEL, 5, "and");
    /* a wrong root */
    expect_only("<?xml version=\"1.0\"?>\n"
        /* 2 */ "<model format=\"1\" id=\"m\"/>\n",
        LW_EMODEL, 2, "root");
}

static void test_unknown_attribute(void **state)
{
    (void)state;
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\" colour=\"red\"/>\n"
        /* 4 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 5 */ END,
        LW_EMODEL, 3, "colour");
    /* an element written over several lines: the line where it starts */
    expect_only(HEAD
        /* 3 */ "<error id=\"a\"\n"
        /* 4 */ "       label=\"An error\"\n"
        /* 5 */ "       colour=\"red\"\n"
        /* 6 */ "       p=\"0.1\"/>\n"
        /* 7 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 8 */ END,
        LW_EMODEL, 3, "colour");
    /* an attribute of another element: p on a condition */
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<condition id=\"c\" state=\"true\" p=\"0.5\"/>\n"
        /* 5 */ "<hazard id=\"h\"><all><ref to=\"a\"/><ref to=\"c\"/></all>"
                "</hazard>\n"
        /* 6 */ END,
        LW_EMODEL, 4, "'p'");
}

/* Lines are where an element starts, past comments, CDATA, processing
 * instructions and a DOCTYPE that hold look-alike tags. */
static void test_lines_where_elements_start(void **state)
{
    (void)state;
    const char *xml =
        /* 1 */ "<?xml version=\"1.0\"?>\n"
        /* 2 */ "<!DOCTYPE safety-model [\n"
        /* 3 */ "  <!ELEMENT note ANY> <!-- don't <error id=\"dtd\"> -->\n"
        /* 4 */ "]>\n"
        /* 5 */ "<!-- a comment with <error id=\"fake\"/> inside -->\n"
        /* 6 */ "<?note with <tags/> ?>\n"
        /* 7 */ "<safety-model format=\"1\" id=\"m\">\n"
        /* 8 */ "<description><![CDATA[ <error id=\"x\"/>\n"
        /* 9 */ " <hazard> ]]></description>\n"
        /* 10 */ "<error id=\"a\" label=\"a > b\"\n"
        /* 11 */ "   p=\"0.1\"/><!--\n"
        /* 12 */ "<safeguard id=\"ghost\"/> -->\n"
        /* 13 */ "<safeguard\n"
        /* 14 */ "   id=\"s\" p=\"0.2\"/>\n"
        /* 15 */ "<hazard\n"
        /* 16 */ " id=\"h\"><all><ref to=\"a\"/>\n"
        /* 17 */ "<ref\n"
        /* 18 */ " to=\"s\"/></all></hazard>\n"
        /* 19 */ END;
    lw_model *m = tu_load(xml);
    assert_int_equal(node(m, "a")->line, 10);
    assert_int_equal(node(m, "s")->line, 13);
    assert_int_equal(node(m, "h")->line, 15);
    assert_int_equal(m->nodes[node(m, "h")->in[0]].line, 16);
    assert_non_null(strstr(m->description, "<error id=\"x\"/>"));
    lw_model_free(m);
    /* the same layout with a bad p on the safeguard */
    size_t len = strlen(xml);
    char *bad = malloc(len + 1);
    assert_non_null(bad);
    memcpy(bad, xml, len + 1);
    char *p = strstr(bad, "p=\"0.2\"");
    assert_non_null(p);
    memcpy(p, "p=\"3.5\"", 7);          /* outside [0, 1] */
    expect_only(bad, LW_EMODEL, 13, "outside");
    free(bad);
}

static void test_missing_required_attribute(void **state)
{
    (void)state;
    expect_only(HEAD
        /* 3 */ "<error p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\"><error id=\"b\" p=\"0.1\"/></hazard>\n"
        /* 5 */ END,
        LW_EMODEL, 3, "'id'");
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/><error id=\"b\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\">\n"
        /* 5 */ "  <vote><ref to=\"a\"/><ref to=\"b\"/></vote>\n"
        /* 6 */ "</hazard>\n"
        /* 7 */ END,
        LW_EMODEL, 5, "'k'");
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\"><all><ref to=\"a\"/>\n"
        /* 5 */ "  <ref/></all></hazard>\n"
        /* 6 */ END,
        LW_EMODEL, 5, "'to'");
    expect_only("<?xml version=\"1.0\"?>\n"
        /* 2 */ "<safety-model id=\"m\">\n"
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 5 */ END,
        LW_EMODEL, 2, "'format'");
    /* an event with no probability at all */
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<safeguard id=\"s\"/>\n"
        /* 5 */ "<hazard id=\"h\"><all><ref to=\"a\"/><ref to=\"s\"/></all>"
                "</hazard>\n"
        /* 6 */ END,
        LW_EMODEL, 4, "no probability");
}

/* ------------------------------------------------------------------ */
/* numbers                                                             */

/* A model whose line 4 holds 'attrs' in a safeguard, e.g. p="nan". */
static void expect_bad_safeguard(const char *attrs, const char *child,
                                 long line, const char *needle)
{
    char xml[2048];
    snprintf(xml, sizeof xml, HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<safeguard id=\"s\" %s%s\n"
        /* 5 */ "%s%s"
        /* 5 or 6 */ "<hazard id=\"h\"><all><ref to=\"a\"/><ref to=\"s\"/>"
                "</all></hazard>\n"
        END, attrs, child ? ">" : "/>", child ? child : "",
        child ? "\n</safeguard>\n" : "");
    expect_only(xml, LW_EMODEL, line, needle);
}

static void test_number_not_finite_decimal(void **state)
{
    (void)state;
    static const char *bad[] = {"nan", "NaN", "inf", "-inf", "Infinity",
                                "1e999", "-1e999", "0.1x", "", " ", "0x10",
                                "1,5", "--1", "1e", ".", "e3", "0.1 0.2",
                                "1.0.0", "0b1"};
    for (size_t i = 0; i < sizeof bad / sizeof *bad; i++) {
        char attrs[64];
        snprintf(attrs, sizeof attrs, "p=\"%s\"", bad[i]);
        expect_bad_safeguard(attrs, NULL, 4, bad[i][0] == ' ' ? NULL
                                                              : bad[i]);
    }
    /* in other places: k, count/of, error-factor, beta, tolerable,
     * per-year, a variant's set */
    expect_bad_safeguard("", "<observed count=\"nan\" of=\"10\"/>", 5,
                         "nan");
    expect_bad_safeguard("p=\"0.1\"", "<lognormal error-factor=\"inf\"/>",
                         5, "inf");
    expect_bad_safeguard("", "<beta a=\"1e999\" b=\"2\"/>", 5, "1e999");
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/><error id=\"b\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\"><vote k=\"0x2\"><ref to=\"a\"/>"
                "<ref to=\"b\"/></vote></hazard>\n"
        /* 5 */ END,
        LW_EMODEL, 4, "0x2");
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\" tolerable=\"1e-6x\"><ref to=\"a\"/>"
                "</hazard>\n"
        /* 5 */ END,
        LW_EMODEL, 4, "1e-6x");
    expect_only(HEAD
        /* 3 */ "<exposure unit=\"episode\" per-year=\"nan\"/>\n"
        /* 4 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 5 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 6 */ END,
        LW_EMODEL, 3, "nan");
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 5 */ "<variant id=\"v\">\n"
        /* 6 */ "  <set ref=\"a\" p=\"inf\"/>\n"
        /* 7 */ "</variant>\n"
        /* 8 */ END,
        LW_EMODEL, 6, "inf");
}

static void test_number_out_of_range(void **state)
{
    (void)state;
    expect_bad_safeguard("p=\"1.5\"", NULL, 4, "p=1.5");
    expect_bad_safeguard("p=\"-0.1\"", NULL, 4, "p=-0.1");
    expect_bad_safeguard("p=\"1.0000001\"", NULL, 4, NULL);
    expect_bad_safeguard("p=\"0.1\"", "<lognormal error-factor=\"0.5\"/>",
                         5, "error-factor");
    expect_bad_safeguard("p=\"0.1\"", "<uniform low=\"0.2\" high=\"0.1\"/>",
                         5, "low");
    expect_bad_safeguard("p=\"0.1\"", "<uniform low=\"0\" high=\"1.5\"/>",
                         5, "high");
    expect_bad_safeguard("", "<beta a=\"0\" b=\"2\"/>", 5, "a=0");
    expect_bad_safeguard("", "<observed count=\"0\" of=\"0\"/>", 5, "of=0");
    expect_bad_safeguard("", "<observed count=\"-1\" of=\"10\"/>", 5,
                         "count=-1");
    /* beta of a common-cause group */
    expect_only(HEAD
        /* 3 */ "<safeguard id=\"s\" p=\"0.1\"/><safeguard id=\"t\" "
                "p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\"><all><ref to=\"s\"/><ref to=\"t\"/></all>"
                "</hazard>\n"
        /* 5 */ "<common-cause id=\"g\" beta=\"2\" members=\"s t\"/>\n"
        /* 6 */ END,
        LW_EMODEL, 5, "beta=2");
    /* tolerable must be in (0, 1] */
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\" tolerable=\"0\"><ref to=\"a\"/></hazard>\n"
        /* 5 */ END,
        LW_EMODEL, 4, "tolerable=0");
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\" tolerable=\"2\"><ref to=\"a\"/></hazard>\n"
        /* 5 */ END,
        LW_EMODEL, 4, "tolerable=2");
    /* per-year > 0 */
    expect_only(HEAD
        /* 3 */ "<exposure unit=\"episode\" per-year=\"0\"/>\n"
        /* 4 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 5 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 6 */ END,
        LW_EMODEL, 3, "per-year=0");
    expect_only(HEAD
        /* 3 */ "<exposure unit=\"episode\" per-year=\"-5\"/>\n"
        /* 4 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 5 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 6 */ END,
        LW_EMODEL, 3, "per-year=-5");
    /* a variant's p and beta */
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 5 */ "<variant id=\"v\">\n"
        /* 6 */ "  <set ref=\"a\" p=\"1.5\"/>\n"
        /* 7 */ "</variant>\n"
        /* 8 */ END,
        LW_EMODEL, 6, "p=1.5");
    /* a beta child whose mean disagrees with p */
    expect_bad_safeguard("p=\"0.5\"", "<beta a=\"2\" b=\"198\"/>", 5,
                         "mean");
}

/* ------------------------------------------------------------------ */
/* ids and references                                                  */

static void test_duplicate_id(void **state)
{
    (void)state;
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 5 */ "<safeguard id=\"a\" p=\"0.2\"/>\n"
        /* 6 */ END,
        LW_EMODEL, 5, "line 3");
    /* across kinds: a variant named like an inline gate */
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\"><any id=\"g\"><ref to=\"a\"/></any>"
                "</hazard>\n"
        /* 5 */ "<variant id=\"g\"/>\n"
        /* 6 */ END,
        LW_EMODEL, 5, "\"g\"");
}

static void test_ref_unknown_id(void **state)
{
    (void)state;
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\"><all>\n"
        /* 5 */ "  <ref to=\"a\"/>\n"
        /* 6 */ "  <ref to=\"nowhere\"/>\n"
        /* 7 */ "</all></hazard>\n"
        /* 8 */ END,
        LW_EMODEL, 6, "nowhere");
}

static void test_ref_to_hazard_or_group(void **state)
{
    (void)state;
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 5 */ "<hazard id=\"h2\">\n"
        /* 6 */ "  <ref to=\"h\"/>\n"
        /* 7 */ "</hazard>\n"
        /* 8 */ END,
        LW_EMODEL, 6, "hazard");
    expect_only(HEAD
        /* 3 */ "<safeguard id=\"s\" p=\"0.1\"/><safeguard id=\"t\" "
                "p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\"><all><ref to=\"s\"/><ref to=\"t\"/>\n"
        /* 5 */ "  <ref to=\"g\"/></all></hazard>\n"
        /* 6 */ "<common-cause id=\"g\" beta=\"0.1\" members=\"s t\"/>\n"
        /* 7 */ END,
        LW_EMODEL, 5, "common-cause");
}

static void test_cycle(void **state)
{
    (void)state;
    const char *xml = HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<block id=\"A\"><ref to=\"B\"/></block>\n"
        /* 5 */ "<block id=\"B\"><ref to=\"A\"/></block>\n"
        /* 6 */ "<hazard id=\"h\"><all><ref to=\"a\"/><ref to=\"A\"/></all>"
                "</hazard>\n"
        /* 7 */ END;
    lw_error err = LW_ERROR_INIT;
    assert_int_equal(tu_load_fail(xml, &err), LW_EMODEL);
    long line = 0;
    assert_true(tu_error_has(&err, "cycle", &line));
    assert_true(line == 4 || line == 5);   /* either block of the cycle */
    assert_int_equal(err.count, 1);
    lw_error_clear(&err);
    /* a block that uses itself, through a gate */
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<block id=\"A\"><any><ref to=\"a\"/><ref to=\"A\"/></any>"
                "</block>\n"
        /* 5 */ "<hazard id=\"h\"><ref to=\"A\"/></hazard>\n"
        /* 6 */ END,
        LW_EMODEL, 4, "cycle");
}

/* A chain of n blocks b0 -> b1 -> ... -> b(n-1) -> a (or -> b0). */
static char *block_chain(size_t n, int loop)
{
    size_t cap = 256 + n * 64;
    char *xml = malloc(cap);
    assert_non_null(xml);
    size_t len = (size_t)snprintf(xml, cap, HEAD
                                  "<error id=\"a\" p=\"0.1\"/>\n");
    for (size_t i = 0; i < n; i++) {
        char to[32];
        if (i + 1 < n)
            snprintf(to, sizeof to, "b%zu", i + 1);
        else
            snprintf(to, sizeof to, "%s", loop ? "b0" : "a");
        len += (size_t)snprintf(xml + len, cap - len,
                                "<block id=\"b%zu\"><ref to=\"%s\"/>"
                                "</block>\n", i, to);
    }
    snprintf(xml + len, cap - len, "<hazard id=\"h\"><ref to=\"b0\"/>"
             "</hazard>\n" END);
    return xml;
}

static void test_long_block_chain(void **state)
{
    (void)state;
    char *xml = block_chain(50000, 0);
    lw_model *m = tu_load(xml);
    free(xml);
    assert_int_equal(m->nnodes, 50002);     /* a, 50,000 blocks, h */
    assert_int_equal(m->nwarnings, 0);
    /* closed form: a chain of single-input blocks is its event */
    assert_close(tu_prob(m, LW_NONE, 0), 0.1, 1e-12);
    lw_model_free(m);
    /* the same chain closed into a loop: found without deep recursion */
    xml = block_chain(50000, 1);
    lw_error err = LW_ERROR_INIT;
    assert_int_equal(tu_load_fail(xml, &err), LW_EMODEL);
    assert_true(tu_error_has(&err, "cycle", NULL));
    lw_error_clear(&err);
    free(xml);
}

static void test_deep_nesting(void **state)
{
    (void)state;
    size_t depth = 200000;
    size_t cap = 256 + depth * 11;
    char *xml = malloc(cap);
    assert_non_null(xml);
    size_t len = (size_t)snprintf(xml, cap, HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\">\n");
    /* 5: every <all> on one line */
    for (size_t i = 0; i < depth; i++) {
        memcpy(xml + len, "<all>", 5);
        len += 5;
    }
    len += (size_t)snprintf(xml + len, cap - len, "<ref to=\"a\"/>");
    for (size_t i = 0; i < depth; i++) {
        memcpy(xml + len, "</all>", 6);
        len += 6;
    }
    snprintf(xml + len, cap - len, "\n</hazard>\n" END);
    expect_only(xml, LW_EPARSE, 5, "nested more than 256");
    free(xml);
}

/* Nesting 99,990 deep under a raised limit, loaded from a thread with a
 * 256 KiB stack: the builders recurse once per level, so the loader must
 * move to a large stack itself (layerwise/deep.h).  Every level is
 * any(b, ...), with a at the bottom. */
typedef struct nest_job {
    const char *xml;
    size_t len;
    lw_status st;
    size_t ngates;
} nest_job;

static void *nest_main(void *arg)
{
    nest_job *j = arg;
    lw_load_limits lim = {.max_depth = LW_MAX_DEPTH_LIMIT};
    if (tu_limits)
        lim.stream_from = tu_limits->stream_from;
    lw_error err = LW_ERROR_INIT;
    lw_model *m = NULL;
    j->st = lw_model_load_memory(j->xml, j->len, "nest.xml", &lim, &m, &err);
    if (m) {
        j->ngates = 0;
        for (size_t i = 0; i < m->nnodes; i++)
            j->ngates += lw_node_is_gate(m->nodes[i].kind);
        lw_model_free(m);
    }
    lw_error_clear(&err);
    return NULL;
}

static void test_deep_nesting_small_stack(void **state)
{
    (void)state;
    size_t depth = 99990;
    tu_text x = {0};
    tu_printf(&x, HEAD "<error id=\"a\" p=\"0.1\"/><error id=\"b\" "
              "p=\"0.2\"/>\n<hazard id=\"h\">");
    for (size_t i = 0; i < depth; i++)
        tu_printf(&x, "<any><ref to=\"b\"/>");
    tu_printf(&x, "<ref to=\"a\"/>");
    for (size_t i = 0; i < depth; i++)
        tu_printf(&x, "</any>");
    tu_printf(&x, "</hazard>\n" END);
    nest_job j = {x.s, x.len, LW_EINTERNAL, 0};
    tu_run_on_stack(nest_main, &j, 256 * 1024);
    assert_int_equal(j.st, LW_OK);
    assert_true(j.ngates >= depth);     /* one any per level, as written */
    free(x.s);
}

/* ------------------------------------------------------------------ */
/* gates                                                               */

static void test_vote_k_out_of_range(void **state)
{
    (void)state;
    static const char *ks[] = {"0", "4", "1.5", "-1"};
    for (size_t i = 0; i < sizeof ks / sizeof *ks; i++) {
        char xml[1024];
        snprintf(xml, sizeof xml, HEAD
            /* 3 */ "<error id=\"a\" p=\"0.1\"/><error id=\"b\" p=\"0.1\"/>"
                    "<error id=\"c\" p=\"0.1\"/>\n"
            /* 4 */ "<hazard id=\"h\">\n"
            /* 5 */ "  <vote k=\"%s\"><ref to=\"a\"/><ref to=\"b\"/>"
                    "<ref to=\"c\"/></vote>\n"
            /* 6 */ "</hazard>\n"
            /* 7 */ END, ks[i]);
        expect_only(xml, LW_EMODEL, 5, "k=");
    }
}

static void test_hazard_block_children(void **state)
{
    (void)state;
    /* no logic child */
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\">\n"
        /* 5 */ "</hazard>\n"
        /* 6 */ END,
        LW_EMODEL, 4, "hazard");
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<block id=\"b\"/>\n"
        /* 5 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 6 */ END,
        LW_EMODEL, 4, "block");
    /* two logic children: the second one is the bad element */
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/><error id=\"b\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\">\n"
        /* 5 */ "  <ref to=\"a\"/>\n"
        /* 6 */ "  <ref to=\"b\"/>\n"
        /* 7 */ "</hazard>\n"
        /* 8 */ END,
        LW_EMODEL, 6, "exactly one logic child");
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<block id=\"bl\">\n"
        /* 5 */ "  <ref to=\"a\"/>\n"
        /* 6 */ "  <error id=\"b\" p=\"0.1\"/>\n"
        /* 7 */ "</block>\n"
        /* 8 */ "<hazard id=\"h\"><ref to=\"bl\"/></hazard>\n"
        /* 9 */ END,
        LW_EMODEL, 6, "exactly one logic child");
}

static void test_gate_without_inputs(void **state)
{
    (void)state;
    static const char *gates[] = {"<all/>", "<any></any>",
                                  "<vote k=\"1\"/>"};
    for (size_t i = 0; i < sizeof gates / sizeof *gates; i++) {
        char xml[1024];
        snprintf(xml, sizeof xml, HEAD
            /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
            /* 4 */ "<hazard id=\"h\"><any>\n"
            /* 5 */ "  <ref to=\"a\"/>\n"
            /* 6 */ "  %s\n"
            /* 7 */ "</any></hazard>\n"
            /* 8 */ END, gates[i]);
        expect_only(xml, LW_EMODEL, 6, "at least one input");
    }
}

/* ------------------------------------------------------------------ */
/* observed counts                                                     */

static void test_observed_counts(void **state)
{
    (void)state;
    expect_bad_safeguard("", "<observed count=\"12\" of=\"10\"/>", 5,
                         "larger than of");
    expect_bad_safeguard("", "<observed count=\"2.5\" of=\"10\"/>", 5,
                         "whole numbers");
    expect_bad_safeguard("", "<observed count=\"2\" of=\"10.5\"/>", 5,
                         "whole numbers");
    /* p and observed together */
    expect_bad_safeguard("p=\"0.1\"", "<observed count=\"2\" of=\"10\"/>",
                         4, "both p and");
}

/* ------------------------------------------------------------------ */
/* common cause                                                        */

#define CC_EVENTS                                                          \
    /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"                                 \
    /* 4 */ "<safeguard id=\"s\" p=\"0.1\"/>\n"                             \
    /* 5 */ "<safeguard id=\"t\" p=\"0.1\"/>\n"                             \
    /* 6 */ "<condition id=\"c\" state=\"true\"/>\n"                        \
    /* 7 */ "<hazard id=\"h\"><all id=\"g1\"><ref to=\"a\"/>"              \
            "<ref to=\"s\"/><ref to=\"t\"/><ref to=\"c\"/></all></hazard>\n"

static void test_common_cause_members(void **state)
{
    (void)state;
    /* a gate, a condition, an undefined id */
    expect_only(HEAD CC_EVENTS
        /* 8 */ "<common-cause id=\"cc\" beta=\"0.1\" members=\"s g1\"/>\n"
        END, LW_EMODEL, 8, "\"g1\"");
    expect_only(HEAD CC_EVENTS
        /* 8 */ "<common-cause id=\"cc\" beta=\"0.1\" members=\"s c\"/>\n"
        END, LW_EMODEL, 8, "condition");
    expect_only(HEAD CC_EVENTS
        /* 8 */ "<common-cause id=\"cc\" beta=\"0.1\" members=\"s zz\"/>\n"
        END, LW_EMODEL, 8, "\"zz\" is not defined");
    /* an event in two groups: the second group is at fault */
    expect_only(HEAD CC_EVENTS
        /* 8 */ "<common-cause id=\"cc\" beta=\"0.1\" members=\"s t\"/>\n"
        /* 9 */ "<common-cause id=\"cc2\" beta=\"0.1\" members=\"a t\"/>\n"
        END, LW_EMODEL, 9, "one group only");
    /* one member only, and the same member twice */
    expect_only(HEAD CC_EVENTS
        /* 8 */ "<common-cause id=\"cc\" beta=\"0.1\" members=\"s\"/>\n"
        END, LW_EMODEL, 8, "at least two");
    expect_bad_ex(HEAD CC_EVENTS
        /* 8 */ "<common-cause id=\"cc\" beta=\"0.1\" members=\"s s\"/>\n"
        END, LW_EMODEL, 8, "twice", 1);
}

/* ------------------------------------------------------------------ */
/* dependence                                                          */

static void test_dependence_rules(void **state)
{
    (void)state;
    /* a loop A -> B, B -> A: reported on one of the two */
    const char *loop = HEAD CC_EVENTS
        /* 8 */ "<dependence id=\"d1\" first=\"s\" second=\"t\" "
                "level=\"high\"/>\n"
        /* 9 */ "<dependence id=\"d2\" first=\"t\" second=\"s\" "
                "level=\"low\"/>\n"
        END;
    lw_error err = LW_ERROR_INIT;
    assert_int_equal(tu_load_fail(loop, &err), LW_EMODEL);
    long line = 0;
    assert_true(tu_error_has(&err, "loops", &line));
    assert_true(line == 8 || line == 9);
    lw_error_clear(&err);
    /* a longer loop s -> t -> a -> s */
    lw_error_init(&err);
    assert_int_equal(tu_load_fail(HEAD CC_EVENTS
        /* 8 */ "<dependence first=\"s\" second=\"t\" level=\"high\"/>\n"
        /* 9 */ "<dependence first=\"t\" second=\"a\" level=\"high\"/>\n"
        /* 10 */ "<dependence first=\"a\" second=\"s\" level=\"high\"/>\n"
        END, &err), LW_EMODEL);
    assert_true(tu_error_has(&err, "loops", &line));
    assert_true(line >= 8 && line <= 10);
    lw_error_clear(&err);
    /* a second with two firsts */
    expect_only(HEAD CC_EVENTS
        /* 8 */ "<dependence id=\"d1\" first=\"s\" second=\"t\" "
                "level=\"high\"/>\n"
        /* 9 */ "<dependence id=\"d2\" first=\"a\" second=\"t\" "
                "level=\"low\"/>\n"
        END, LW_EMODEL, 9, "one first");
    /* a second that is also a common-cause member */
    expect_only(HEAD CC_EVENTS
        /* 8 */ "<common-cause id=\"cc\" beta=\"0.1\" members=\"s t\"/>\n"
        /* 9 */ "<dependence id=\"d1\" first=\"a\" second=\"t\" "
                "level=\"high\"/>\n"
        END, LW_EMODEL, 9, "not both");
    /* first or second not an event */
    expect_only(HEAD CC_EVENTS
        /* 8 */ "<dependence id=\"d1\" first=\"c\" second=\"t\" "
                "level=\"high\"/>\n"
        END, LW_EMODEL, 8, "condition");
    expect_only(HEAD CC_EVENTS
        /* 8 */ "<dependence id=\"d1\" first=\"s\" second=\"s\" "
                "level=\"high\"/>\n"
        END, LW_EMODEL, 8, "itself");
    /* a level that does not exist */
    expect_only(HEAD CC_EVENTS
        /* 8 */ "<dependence id=\"d1\" first=\"s\" second=\"t\" "
                "level=\"extreme\"/>\n"
        END, LW_EMODEL, 8, "extreme");
}

/* ------------------------------------------------------------------ */
/* variants                                                            */

static void expect_bad_set(const char *set, const char *needle)
{
    char xml[2048];
    snprintf(xml, sizeof xml, HEAD CC_EVENTS
        /* 8 */ "<common-cause id=\"cc\" beta=\"0.1\" members=\"s t\"/>\n"
        /* 9 */ "<variant id=\"v\">\n"
        /* 10 */ "  <set ref=\"a\" p=\"0.2\"/>\n"
        /* 11 */ "  %s\n"
        /* 12 */ "</variant>\n"
        END, set);
    expect_only(xml, LW_EMODEL, 11, needle);
}

static void test_set_attribute_target_lacks(void **state)
{
    (void)state;
    expect_bad_set("<set ref=\"c\" p=\"0.5\"/>", "no p attribute");
    expect_bad_set("<set ref=\"a\" present=\"no\"/>", "no present");
    expect_bad_set("<set ref=\"s\" state=\"true\"/>", "no state");
    expect_bad_set("<set ref=\"s\" beta=\"0.2\"/>", "no beta");
    expect_bad_set("<set ref=\"cc\" level=\"high\"/>", "no level");
    expect_bad_set("<set ref=\"cc\" p=\"0.1\"/>", "no p attribute");
    expect_bad_set("<set ref=\"g1\" p=\"0.1\"/>", "no p attribute");
    expect_bad_set("<set ref=\"nowhere\" p=\"0.1\"/>", "nowhere");
    /* two attributes, and none: reported once */
    expect_bad_set("<set ref=\"s\" p=\"0.1\" present=\"no\"/>",
                   "exactly one");
    expect_bad_set("<set ref=\"s\"/>", "exactly one");
    lw_error err = LW_ERROR_INIT;
    assert_int_equal(tu_load_fail(HEAD CC_EVENTS
        "<variant id=\"v\"><set ref=\"s\" p=\"0.1\" state=\"true\"/>"
        "</variant>\n" END, &err), LW_EMODEL);
    assert_int_equal(err.count, 1);
    lw_error_clear(&err);
}

/* ------------------------------------------------------------------ */
/* whole-model rules                                                   */

static void test_no_hazard(void **state)
{
    (void)state;
    expect_only(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ END,
        LW_EMODEL, 2, "no <hazard>");
}

static void test_title_exposure_twice(void **state)
{
    (void)state;
    expect_only(HEAD
        /* 3 */ "<title>One</title>\n"
        /* 4 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 5 */ "<title>Two</title>\n"
        /* 6 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 7 */ END,
        LW_EMODEL, 5, "line 3");
    expect_only(HEAD
        /* 3 */ "<description>One</description>\n"
        /* 4 */ "<description>Two</description>\n"
        /* 5 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 6 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 7 */ END,
        LW_EMODEL, 4, "line 3");
    expect_only(HEAD
        /* 3 */ "<exposure unit=\"episode\" per-year=\"100\"/>\n"
        /* 4 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 5 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 6 */ "<exposure unit=\"episode\" per-year=\"200\"/>\n"
        /* 7 */ END,
        LW_EMODEL, 6, "line 3");
}

/* ------------------------------------------------------------------ */
/* entities and DTDs                                                   */

/* No message and no loaded text may carry /etc/passwd's content. */
static void assert_no_passwd(const lw_error *err, const lw_model *m)
{
    char first[512] = "";
    FILE *f = fopen("/etc/passwd", "r");
    if (f) {
        if (!fgets(first, sizeof first, f))
            first[0] = '\0';
        fclose(f);
    }
    first[strcspn(first, "\n")] = '\0';
    const char *needles[] = {first, "root:x:0:0", "/bin/bash", "nologin"};
    for (size_t k = 0; k < sizeof needles / sizeof *needles; k++) {
        if (!needles[k][0])
            continue;
        for (size_t i = 0; err && i < err->count; i++)
            if (strstr(err->items[i].message, needles[k]))
                fail_msg("/etc/passwd content in a message: %s",
                         err->items[i].message);
        if (!m)
            continue;
        const char *texts[] = {m->id, m->title, m->description};
        for (size_t i = 0; i < 3; i++)
            if (texts[i] && strstr(texts[i], needles[k]))
                fail_msg("/etc/passwd content in the model");
        for (size_t i = 0; i < m->nnodes; i++)
            if (m->nodes[i].label && strstr(m->nodes[i].label, needles[k]))
                fail_msg("/etc/passwd content in a label");
    }
}

static void expect_entity_rejected(const char *xml, long line)
{
    lw_error err = LW_ERROR_INIT;
    lw_model *m = NULL;
    lw_status st = lw_model_load_memory(xml, strlen(xml), "bad.xml",
                                        tu_limits, &m, &err);
    assert_no_passwd(&err, m);
    if (st == LW_OK) {
        lw_model_free(m);
        lw_error_clear(&err);
        fail_msg("a DOCTYPE declaring entities was accepted");
    }
    assert_null(m);
    if (st != LW_EPARSE || err.count != 1 || err.items[0].line != line ||
        !strstr(err.items[0].message, "DOCTYPE")) {
        dump(&err);
        lw_error_clear(&err);
        fail_msg("want one parse error naming the DOCTYPE on line %ld",
                 line);
    }
    lw_error_clear(&err);
}

static void test_doctype_entities_rejected(void **state)
{
    (void)state;
    /* an internal entity */
    expect_entity_rejected(
        /* 1 */ "<?xml version=\"1.0\"?>\n"
        /* 2 */ "<!DOCTYPE safety-model [\n"
        /* 3 */ "<!ENTITY pval \"0.1\">\n"
        /* 4 */ "]>\n"
        /* 5 */ "<safety-model format=\"1\" id=\"m\">\n"
        /* 6 */ "<error id=\"a\" p=\"&pval;\"/>\n"
        /* 7 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 8 */ END, 3);
    /* an external entity naming /etc/passwd, used in text */
    expect_entity_rejected(
        /* 1 */ "<?xml version=\"1.0\"?>\n"
        /* 2 */ "<!DOCTYPE safety-model [\n"
        /* 3 */ "<!ENTITY x SYSTEM \"/etc/passwd\">\n"
        /* 4 */ "]>\n"
        /* 5 */ "<safety-model format=\"1\" id=\"m\">\n"
        /* 6 */ "<title>&x;</title>\n"
        /* 7 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 8 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 9 */ END, 3);
    /* ... and used in an attribute (libxml2 objects while parsing) */
    expect_entity_rejected(
        /* 1 */ "<?xml version=\"1.0\"?>\n"
        /* 2 */ "<!DOCTYPE safety-model [\n"
        /* 3 */ "<!ENTITY x SYSTEM \"file:///etc/passwd\">\n"
        /* 4 */ "]>\n"
        /* 5 */ "<safety-model format=\"1\" id=\"m\">\n"
        /* 6 */ "<error id=\"a\" p=\"0.1\" label=\"&x;\"/>\n"
        /* 7 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 8 */ END, 3);
    /* a parameter entity */
    expect_entity_rejected(
        /* 1 */ "<?xml version=\"1.0\"?>\n"
        /* 2 */ "<!DOCTYPE safety-model [\n"
        /* 3 */ "<!ENTITY % pe SYSTEM \"/etc/passwd\">\n"
        /* 4 */ "%pe;\n"
        /* 5 */ "]>\n"
        /* 6 */ "<safety-model format=\"1\" id=\"m\">\n"
        /* 7 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 8 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 9 */ END, 3);
    /* a quoted system id holding '[' and '>', then the subset */
    expect_entity_rejected(
        /* 1 */ "<?xml version=\"1.0\"?>\n"
        /* 2 */ "<!DOCTYPE safety-model SYSTEM \"odd[name>.dtd\" [\n"
        /* 3 */ "\n"
        /* 4 */ "<!ENTITY x \"y\">\n"
        /* 5 */ "]>\n"
        /* 6 */ "<safety-model format=\"1\" id=\"m\">\n"
        /* 7 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 8 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 9 */ END, 4);
    /* billion laughs: one plain message, no expansion */
    expect_entity_rejected(
        /* 1 */ "<?xml version=\"1.0\"?>\n"
        /* 2 */ "<!DOCTYPE safety-model [\n"
        /* 3 */ " <!ENTITY l0 \"ha\">\n"
        /* 4 */ " <!ENTITY l1 \"&l0;&l0;&l0;&l0;&l0;&l0;&l0;&l0;&l0;&l0;\">\n"
        /* 5 */ " <!ENTITY l2 \"&l1;&l1;&l1;&l1;&l1;&l1;&l1;&l1;&l1;&l1;\">\n"
        /* 6 */ " <!ENTITY l3 \"&l2;&l2;&l2;&l2;&l2;&l2;&l2;&l2;&l2;&l2;\">\n"
        /* 7 */ " <!ENTITY l4 \"&l3;&l3;&l3;&l3;&l3;&l3;&l3;&l3;&l3;&l3;\">\n"
        /* 8 */ " <!ENTITY l5 \"&l4;&l4;&l4;&l4;&l4;&l4;&l4;&l4;&l4;&l4;\">\n"
        /* 9 */ " <!ENTITY l6 \"&l5;&l5;&l5;&l5;&l5;&l5;&l5;&l5;&l5;&l5;\">\n"
        /* 10 */ " <!ENTITY l7 \"&l6;&l6;&l6;&l6;&l6;&l6;&l6;&l6;&l6;&l6;\">\n"
        /* 11 */ " <!ENTITY l8 \"&l7;&l7;&l7;&l7;&l7;&l7;&l7;&l7;&l7;&l7;\">\n"
        /* 12 */ " <!ENTITY l9 \"&l8;&l8;&l8;&l8;&l8;&l8;&l8;&l8;&l8;&l8;\">\n"
        /* 13 */ "]>\n"
        /* 14 */ "<safety-model format=\"1\" id=\"m\">\n"
        /* 15 */ "<title>&l9;</title>\n"
        /* 16 */ "<error id=\"a\" p=\"0.1\" label=\"&l9;\"/>\n"
        /* 17 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 18 */ END, 3);
}

/* A DOCTYPE whose subset holds only a comment that mentions an entity
 * declares none: the model loads. */
static void test_doctype_comment_only(void **state)
{
    (void)state;
    const char *xml =
        "<?xml version=\"1.0\"?>\n"
        "<!-- a comment -->\n"
        "<?pi x?>\n"
        "<!DOCTYPE safety-model [\n"
        "<!-- <!ENTITY no \"x\"> -->\n"
        "]>\n"
        "<safety-model format=\"1\" id=\"m\">\n"
        "<error id=\"a\" p=\"0.1\"/>\n"
        "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        END;
    lw_model *m = tu_load(xml);
    assert_int_equal(m->nhazards, 1);
    lw_model_free(m);
}

static void test_external_dtd_not_read(void **state)
{
    (void)state;
    /* a DOCTYPE naming an external DTD but declaring nothing: the DTD is
     * never fetched; whatever the outcome, nothing of it shows */
    const char *xml =
        /* 1 */ "<?xml version=\"1.0\"?>\n"
        /* 2 */ "<!DOCTYPE safety-model SYSTEM \"/etc/passwd\">\n"
        /* 3 */ "<safety-model format=\"1\" id=\"m\">\n"
        /* 4 */ "<title>T</title>\n"
        /* 5 */ "<error id=\"a\" p=\"0.1\" label=\"A\"/>\n"
        /* 6 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 7 */ END;
    lw_error err = LW_ERROR_INIT;
    lw_model *m = NULL;
    lw_status st = lw_model_load_memory(xml, strlen(xml), "dtd.xml",
                                        tu_limits, &m, &err);
    assert_no_passwd(&err, m);
    if (st == LW_OK) {
        assert_string_equal(m->title, "T");
        assert_int_equal(m->nodes[0].line, 5);
    }
    lw_model_free(m);
    lw_error_clear(&err);
}

/* ------------------------------------------------------------------ */
/* warnings, several errors                                            */

static void test_unused_event_is_a_warning(void **state)
{
    (void)state;
    lw_model *m = tu_load(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\"><ref to=\"a\"/></hazard>\n"
        /* 5 */ "<safeguard id=\"spare\" p=\"0.1\"/>\n"
        /* 6 */ END);
    assert_int_equal(m->nwarnings, 1);
    assert_non_null(strstr(m->warnings[0], "test.xml:5:"));
    assert_non_null(strstr(m->warnings[0], "spare"));
    lw_model_free(m);
}

static void test_every_error_reported(void **state)
{
    (void)state;
    /* three problems of the rule checks: range, duplicate, reference */
    lw_error err = LW_ERROR_INIT;
    assert_int_equal(tu_load_fail(HEAD
        /* 3 */ "<error id=\"a\" p=\"2\"/>\n"
        /* 4 */ "<error id=\"b\" p=\"0.1\"/>\n"
        /* 5 */ "<error id=\"b\" p=\"0.1\"/>\n"
        /* 6 */ "<hazard id=\"h\"><all><ref to=\"a\"/><ref to=\"b\"/>\n"
        /* 7 */ "<ref to=\"zz\"/></all></hazard>\n"
        /* 8 */ END, &err), LW_EMODEL);
    long line;
    assert_int_equal(err.count, 3);
    assert_true(tu_error_has(&err, "p=2", &line));
    assert_int_equal(line, 3);
    assert_true(tu_error_has(&err, "already used", &line));
    assert_int_equal(line, 5);
    assert_true(tu_error_has(&err, "zz", &line));
    assert_int_equal(line, 7);
    lw_error_clear(&err);
    /* a range error does not hide a cycle or a one-member group */
    lw_error_init(&err);
    assert_int_equal(tu_load_fail(HEAD
        /* 3 */ "<error id=\"a\" p=\"7\"/>\n"
        /* 4 */ "<block id=\"A\"><ref to=\"B\"/></block>\n"
        /* 5 */ "<block id=\"B\"><ref to=\"A\"/></block>\n"
        /* 6 */ "<hazard id=\"h\"><all><ref to=\"a\"/><ref to=\"A\"/></all>"
                "</hazard>\n"
        /* 7 */ "<common-cause id=\"g\" beta=\"0.1\" members=\"a\"/>\n"
        /* 8 */ END, &err), LW_EMODEL);
    assert_int_equal(err.count, 3);
    assert_true(tu_error_has(&err, "p=7", &line));
    assert_int_equal(line, 3);
    assert_true(tu_error_has(&err, "cycle", &line));
    assert_true(line == 4 || line == 5);
    assert_true(tu_error_has(&err, "at least two", &line));
    assert_int_equal(line, 7);
    lw_error_clear(&err);
    /* three structural problems */
    lw_error_init(&err);
    assert_int_equal(tu_load_fail(HEAD
        /* 3 */ "<error id=\"a\" p=\"0.1\" colour=\"red\"/>\n"
        /* 4 */ "<error id=\"b\" p=\"nan\"/>\n"
        /* 5 */ "<hazard id=\"h\"><all><ref to=\"a\"/><ref to=\"b\"/>\n"
        /* 6 */ "<bogus/></all></hazard>\n"
        /* 7 */ END, &err), LW_EMODEL);
    assert_int_equal(err.count, 3);
    assert_true(tu_error_has(&err, "colour", &line));
    assert_int_equal(line, 3);
    assert_true(tu_error_has(&err, "nan", &line));
    assert_int_equal(line, 4);
    assert_true(tu_error_has(&err, "bogus", &line));
    assert_int_equal(line, 6);
    lw_error_clear(&err);
}

/* ------------------------------------------------------------------ */
/* valid models                                                        */

static lw_model *load_skeleton(void)
{
    lw_error err = LW_ERROR_INIT;
    lw_model *m = NULL;
    lw_status st = lw_model_load_file(tu_source_path("tests/load/skeleton.xml"),
                                      tu_limits, &m, &err);
    if (st != LW_OK) {
        dump(&err);
        lw_error_clear(&err);
        fail_msg("the skeleton of model-format.md did not load");
    }
    lw_error_clear(&err);
    return m;
}

static void test_skeleton_loads(void **state)
{
    (void)state;
    lw_model *m = load_skeleton();
    size_t count[8] = {0};
    for (size_t i = 0; i < m->nnodes; i++)
        count[m->nodes[i].kind]++;
    /* counted by hand from model-format.md's skeleton */
    assert_int_equal(count[LW_NODE_ERROR], 2);
    assert_int_equal(count[LW_NODE_SAFEGUARD], 7);
    assert_int_equal(count[LW_NODE_CONDITION], 1);
    assert_int_equal(count[LW_NODE_ALL], 3);
    assert_int_equal(count[LW_NODE_ANY], 1);
    assert_int_equal(count[LW_NODE_VOTE], 1);
    assert_int_equal(count[LW_NODE_BLOCK], 1);
    assert_int_equal(count[LW_NODE_HAZARD], 1);
    assert_int_equal(m->nnodes, 17);
    assert_string_equal(m->id, "ward-transfusion");
    assert_string_equal(m->title, "Ward transfusion identity chain");
    assert_true(m->has_exposure);
    assert_string_equal(m->exposure_unit, "transfusion episode");
    assert_true(m->per_year == 18000.0);
    assert_int_equal(m->nhazards, 1);
    const lw_node *h = &m->nodes[m->hazards[0]];
    assert_string_equal(h->id, "wrong-blood");
    assert_true(h->has_tolerable && h->tolerable == 1e-6);
    assert_int_equal(h->nin, 1);
    assert_int_equal(m->nodes[h->in[0]].kind, LW_NODE_ANY);
    /* distributions */
    const lw_node *lab = node(m, "lab-history");
    assert_int_equal(lab->dist.kind, LW_DIST_LOGNORMAL);
    assert_true(lab->dist.p == 0.1 && lab->dist.ef == 3.0);
    const lw_node *scan = node(m, "scan");
    assert_false(scan->present);
    assert_true(node(m, "nurse-2")->present);
    assert_false(node(m, "out-of-hours")->state);
    const lw_node *vote = &m->nodes[lw_model_find_node(m, "issue-a") - 1];
    assert_int_equal(vote->kind, LW_NODE_VOTE);
    assert_int_equal(vote->k, 2);
    assert_int_equal(vote->nin, 3);
    /* the block shared by both paths is one node */
    size_t bedside = lw_model_find_node(m, "bedside");
    const lw_node *slip = node(m, "collection-slip");
    assert_int_equal(slip->nin, 3);
    assert_int_equal(slip->in[2], bedside);
    /* groups, dependences, variants */
    assert_int_equal(m->ngroups, 1);
    assert_string_equal(m->groups[0].id, "same-shift");
    assert_true(m->groups[0].beta == 0.1);
    assert_int_equal(m->groups[0].nmembers, 2);
    assert_int_equal(m->groups[0].members[0],
                     lw_model_find_node(m, "issue-a"));
    assert_int_equal(m->groups[0].members[1],
                     lw_model_find_node(m, "issue-b"));
    assert_int_equal(m->ndeps, 1);
    assert_int_equal(m->deps[0].first, lw_model_find_node(m, "nurse-1"));
    assert_int_equal(m->deps[0].second, lw_model_find_node(m, "nurse-2"));
    assert_int_equal(m->deps[0].level, LW_LEVEL_HIGH);
    assert_int_equal(m->nvariants, 1);
    assert_int_equal(m->variants[0].nsets, 1);
    const lw_set *s = &m->variants[0].sets[0];
    assert_int_equal(s->target_kind, LW_TARGET_NODE);
    assert_int_equal(s->target, lw_model_find_node(m, "scan"));
    assert_int_equal(s->attr, LW_SET_PRESENT);
    assert_true(s->flag);
    /* lines: the skeleton's error "wrong-tube" is on line 6 of tests/load/skeleton.xml */
    assert_int_equal(node(m, "wrong-tube")->line, 6);
    /* the condition out-of-hours is used nowhere: one warning */
    assert_int_equal(m->nwarnings, 1);
    assert_non_null(strstr(m->warnings[0], "out-of-hours"));
    lw_model_free(m);
}

static void test_observed_jeffreys_mean(void **state)
{
    (void)state;
    lw_model *m = load_skeleton();
    const lw_node *n1 = node(m, "nurse-1");
    assert_int_equal(n1->dist.kind, LW_DIST_OBSERVED);
    assert_true(n1->dist.count == 9.0 && n1->dist.of == 400.0);
    /* closed form (count + 0.5) / (of + 1) */
    assert_close(n1->dist.p, 9.5 / 401.0, 1e-15);
    /* methods.md 6.3 [D]: Jeffreys mean of 9/400 is 2.36908e-2 */
    assert_close(n1->dist.p, 2.36908e-2, 5e-6);
    assert_non_null(n1->dist.source);
    assert_string_equal(n1->dist.source, "Observation audit, autumn");
    lw_model_free(m);
    /* methods.md 6.3 [D]: 0/300 -> 1.66113e-3, 1/100 -> 1.48515e-2 */
    m = tu_load(HEAD
        "<safeguard id=\"s\"><observed count=\"0\" of=\"300\"/></safeguard>\n"
        "<safeguard id=\"t\"><observed count=\"1\" of=\"100\"/></safeguard>\n"
        "<hazard id=\"h\"><all><ref to=\"s\"/><ref to=\"t\"/></all></hazard>\n"
        END);
    assert_close(node(m, "s")->dist.p, 1.66113e-3, 5e-6);
    assert_close(node(m, "t")->dist.p, 1.48515e-2, 5e-6);
    lw_model_free(m);
}

static void test_beta_child_mean(void **state)
{
    (void)state;
    lw_model *m = tu_load(HEAD
        "<safeguard id=\"s\"><beta a=\"2\" b=\"198\"/></safeguard>\n"
        "<safeguard id=\"t\" p=\"0.25\"><beta a=\"1\" b=\"3\"/></safeguard>\n"
        "<hazard id=\"h\"><all><ref to=\"s\"/><ref to=\"t\"/></all></hazard>\n"
        END);
    const lw_node *s = node(m, "s");
    assert_int_equal(s->dist.kind, LW_DIST_BETA);
    /* closed form: the mean of Beta(a, b) is a / (a + b) */
    assert_close(s->dist.p, 2.0 / 200.0, 1e-15);
    assert_true(s->dist.a == 2.0 && s->dist.b == 198.0);
    assert_close(node(m, "t")->dist.p, 0.25, 1e-15);
    lw_model_free(m);
}

static void test_inline_events_are_global(void **state)
{
    (void)state;
    lw_model *m = tu_load(HEAD
        /* 3 */ "<block id=\"b\"><any><ref to=\"x\"/><ref to=\"y\"/></any>"
                "</block>\n"
        /* 4 */ "<hazard id=\"h\"><all>\n"
        /* 5 */ "  <error id=\"x\" p=\"0.2\"/>\n"
        /* 6 */ "  <safeguard id=\"y\" p=\"0.3\"/>\n"
        /* 7 */ "  <ref to=\"b\"/>\n"
        /* 8 */ "</all></hazard>\n"
        /* 9 */ "<common-cause id=\"g\" beta=\"0.1\" members=\"x y\"/>\n"
        END);
    size_t x = lw_model_find_node(m, "x"), y = lw_model_find_node(m, "y");
    assert_true(x != LW_NONE && y != LW_NONE);
    assert_int_equal(m->nodes[x].line, 5);
    const lw_node *any = &m->nodes[node(m, "b")->in[0]];
    assert_int_equal(any->nin, 2);
    assert_int_equal(any->in[0], x);    /* the ref is the inline event */
    assert_int_equal(any->in[1], y);
    const lw_node *all = &m->nodes[m->nodes[m->hazards[0]].in[0]];
    assert_int_equal(all->in[0], x);
    assert_int_equal(all->in[1], y);
    assert_int_equal(m->groups[0].members[0], x);
    assert_int_equal(m->nwarnings, 0);
    lw_model_free(m);
    /* and their ids clash with root ids like any other */
    expect_only(HEAD
        /* 3 */ "<error id=\"x\" p=\"0.1\"/>\n"
        /* 4 */ "<hazard id=\"h\"><all><ref to=\"x\"/>\n"
        /* 5 */ "  <error id=\"x\" p=\"0.2\"/></all></hazard>\n"
        END, LW_EMODEL, 5, "already used");
}

static void test_number_forms(void **state)
{
    (void)state;
    lw_model *m = tu_load(HEAD
        "<error id=\"a\" p=\"-0\"/>\n"
        "<error id=\"b\" p=\" 0.25 \"/>\n"
        "<error id=\"c\" p=\"+.5e-1\"/>\n"
        "<error id=\"d\" p=\"1E-3\"/>\n"
        "<error id=\"e\" p=\"1\"/>\n"
        "<hazard id=\"h\"><vote k=\" 2 \"><ref to=\"a\"/><ref to=\"b\"/>"
        "<ref to=\"c\"/><ref to=\"d\"/><ref to=\"e\"/></vote></hazard>\n"
        END);
    double a = node(m, "a")->dist.p;
    assert_true(a == 0.0);
    assert_false(signbit(a));           /* -0 reads as plain 0 */
    assert_true(node(m, "b")->dist.p == 0.25);
    assert_true(node(m, "c")->dist.p == 0.05);
    assert_true(node(m, "d")->dist.p == 1e-3);
    assert_true(node(m, "e")->dist.p == 1.0);
    assert_int_equal(m->nodes[m->nodes[m->hazards[0]].in[0]].k, 2);
    lw_model_free(m);
}

static void test_load_file_missing(void **state)
{
    (void)state;
    lw_error err = LW_ERROR_INIT;
    lw_model *m = (lw_model *)1;
    assert_int_equal(lw_model_load_file("/nonexistent/model.xml", tu_limits,
                                        &m, &err), LW_EIO);
    assert_null(m);
    assert_int_equal(err.count, 1);
    assert_string_equal(err.items[0].file, "/nonexistent/model.xml");
    lw_error_clear(&err);
}

/* ------------------------------------------------------------------ */
/* the streaming path                                                  */

/* Text of a model of about 'target' bytes that uses every kind of
 * element: start tags over several lines, comments and processing
 * instructions between elements, inline events, votes, groups,
 * dependences, variants and unused events (warnings). */
static char *big_model(size_t target, size_t *len)
{
    size_t cap = 2 * target + (1u << 16), n = 0;
    char *b = malloc(cap);
    assert_non_null(b);
#define PUT(...)                                                           \
    do {                                                                   \
        int w_ = snprintf(b + n, cap - n, __VA_ARGS__);                    \
        assert_true(w_ >= 0 && (size_t)w_ < cap - n);                      \
        n += (size_t)w_;                                                   \
    } while (0)
    PUT("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
        "<!-- generated for the loader tests -->\n"
        "<safety-model format=\"1\"\n    id=\"big\">\n"
        "  <title>Streaming &amp; tree</title>\n"
        "  <description>Both readers must agree.</description>\n"
        "  <exposure unit=\"transfusion\" per-year=\"1000\"/>\n");
    size_t i = 0;
    while (n < target) {
        PUT("  <error id=\"e%zu\" label=\"Error %zu\" p=\"0.00%zu1\"/>\n"
            "  <safeguard\n      id=\"s%zu\"\n      label=\"Check %zu\" "
            "p=\"0.0%zu\"/>\n  <?note %zu?>\n"
            "  <safeguard id=\"t%zu\" label=\"Second check %zu\">"
            "<observed count=\"%zu\" of=\"%zu\"/></safeguard>\n"
            "  <block id=\"b%zu\" label=\"Path %zu\">\n"
            "    <all><ref to=\"e%zu\"/><vote k=\"2\"><ref to=\"s%zu\"/>"
            "<ref to=\"t%zu\"/><safeguard id=\"x%zu\" p=\"0.2\"/></vote>"
            "</all>\n  </block>\n"
            "  <error id=\"u%zu\" p=\"0.1\"/>\n",
            i, i, i % 9 + 1, i, i, i % 9 + 1, i, i, i, i % 5, 20 + i % 7,
            i, i, i, i, i, i, i);
        i++;
    }
    PUT("  <common-cause id=\"g\" beta=\"0.1\" members=\"s0 s1\"/>\n"
        "  <dependence first=\"t0\" second=\"t1\" level=\"high\"/>\n"
        "  <hazard id=\"h\" label=\"Harm\">\n    <any>\n");
    for (size_t j = 0; j < i; j++)
        PUT("      <ref to=\"b%zu\"/>\n", j);
    PUT("    </any>\n  </hazard>\n"
        "  <variant id=\"v\" label=\"More\">\n"
        "    <set ref=\"s0\" p=\"0.01\"/>\n  </variant>\n"
        "</safety-model>\n");
#undef PUT
    *len = n;
    return b;
}

static void assert_same_model(const lw_model *a, const lw_model *b)
{
    assert_string_equal(a->id, b->id);
    assert_string_equal(a->title, b->title);
    assert_string_equal(a->description, b->description);
    assert_true(a->per_year == b->per_year);
    assert_int_equal(a->nnodes, b->nnodes);
    for (size_t i = 0; i < a->nnodes; i++) {
        const lw_node *x = &a->nodes[i], *y = &b->nodes[i];
        assert_int_equal(x->kind, y->kind);
        assert_true((x->id == NULL) == (y->id == NULL));
        if (x->id)
            assert_string_equal(x->id, y->id);
        assert_true((x->label == NULL) == (y->label == NULL));
        if (x->label)
            assert_string_equal(x->label, y->label);
        assert_int_equal(x->line, y->line);
        assert_int_equal(x->k, y->k);
        assert_int_equal(x->nin, y->nin);
        for (size_t j = 0; j < x->nin; j++)
            assert_int_equal(x->in[j], y->in[j]);
        assert_int_equal(x->dist.kind, y->dist.kind);
        assert_true(x->dist.p == y->dist.p && x->dist.ef == y->dist.ef &&
                    x->dist.a == y->dist.a && x->dist.b == y->dist.b &&
                    x->dist.count == y->dist.count &&
                    x->dist.of == y->dist.of);
    }
    assert_int_equal(a->ngroups, b->ngroups);
    for (size_t i = 0; i < a->ngroups; i++) {
        assert_int_equal(a->groups[i].line, b->groups[i].line);
        assert_int_equal(a->groups[i].nmembers, b->groups[i].nmembers);
    }
    assert_int_equal(a->ndeps, b->ndeps);
    for (size_t i = 0; i < a->ndeps; i++)
        assert_int_equal(a->deps[i].line, b->deps[i].line);
    assert_int_equal(a->nvariants, b->nvariants);
    for (size_t i = 0; i < a->nvariants; i++)
        assert_int_equal(a->variants[i].line, b->variants[i].line);
    assert_int_equal(a->nhazards, b->nhazards);
    assert_int_equal(a->nwarnings, b->nwarnings);
    for (size_t i = 0; i < a->nwarnings; i++)
        assert_string_equal(a->warnings[i], b->warnings[i]);
}

static lw_model *load_with(const char *xml, size_t len, size_t stream_from)
{
    lw_load_limits lim = {0};
    lim.stream_from = stream_from;
    lw_error err = LW_ERROR_INIT;
    lw_model *m = NULL;
    lw_status st = lw_model_load_memory(xml, len, "big.xml", &lim, &m, &err);
    if (st != LW_OK) {
        dump(&err);
        lw_error_clear(&err);
        fail_msg("the big model did not load");
    }
    lw_error_clear(&err);
    return m;
}

static void test_streamed_equals_tree(void **state)
{
    (void)state;
    size_t len;
    char *xml = big_model((size_t)3 << 20 >> 1, &len);   /* 1.5 MiB */
    lw_model *tree = load_with(xml, len, SIZE_MAX);
    lw_model *stream = load_with(xml, len, 0);           /* default 1 MiB */
    assert_false(tree->streamed);
    assert_true(stream->streamed);
    assert_true(stream->nwarnings > 0);
    assert_same_model(tree, stream);
    /* the lines really are where the start tags begin: s0's tag starts on
     * line 9 and ends on line 11 */
    assert_int_equal(stream->nodes[lw_model_find_node(stream, "s0")].line,
                     9);
    lw_model_free(tree);
    lw_model_free(stream);

    /* one broken byte near the end: the stream gives up, the tree path
     * reports, so the messages do not depend on the path */
    char *p = strstr(xml + len - 400, "<variant");
    assert_non_null(p);
    p[1] = '!';
    lw_load_limits lim = {0};
    lw_error e1 = LW_ERROR_INIT, e2 = LW_ERROR_INIT;
    lw_model *m = NULL;
    lim.stream_from = SIZE_MAX;
    assert_int_not_equal(lw_model_load_memory(xml, len, "big.xml", &lim, &m,
                                              &e1), LW_OK);
    lim.stream_from = 1;
    assert_int_not_equal(lw_model_load_memory(xml, len, "big.xml", &lim, &m,
                                              &e2), LW_OK);
    assert_null(m);
    assert_int_equal(e1.count, e2.count);
    assert_true(e1.count > 0);
    for (size_t i = 0; i < e1.count; i++) {
        assert_int_equal(e1.items[i].line, e2.items[i].line);
        assert_string_equal(e1.items[i].message, e2.items[i].message);
    }
    lw_error_clear(&e1);
    lw_error_clear(&e2);
    free(xml);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_malformed_xml),
        cmocka_unit_test(test_unknown_element),
        cmocka_unit_test(test_unknown_attribute),
        cmocka_unit_test(test_lines_where_elements_start),
        cmocka_unit_test(test_missing_required_attribute),
        cmocka_unit_test(test_number_not_finite_decimal),
        cmocka_unit_test(test_number_out_of_range),
        cmocka_unit_test(test_duplicate_id),
        cmocka_unit_test(test_ref_unknown_id),
        cmocka_unit_test(test_ref_to_hazard_or_group),
        cmocka_unit_test(test_cycle),
        cmocka_unit_test(test_long_block_chain),
        cmocka_unit_test(test_deep_nesting),
        cmocka_unit_test(test_deep_nesting_small_stack),
        cmocka_unit_test(test_vote_k_out_of_range),
        cmocka_unit_test(test_hazard_block_children),
        cmocka_unit_test(test_gate_without_inputs),
        cmocka_unit_test(test_observed_counts),
        cmocka_unit_test(test_common_cause_members),
        cmocka_unit_test(test_dependence_rules),
        cmocka_unit_test(test_set_attribute_target_lacks),
        cmocka_unit_test(test_no_hazard),
        cmocka_unit_test(test_title_exposure_twice),
        cmocka_unit_test(test_doctype_entities_rejected),
        cmocka_unit_test(test_doctype_comment_only),
        cmocka_unit_test(test_external_dtd_not_read),
        cmocka_unit_test(test_unused_event_is_a_warning),
        cmocka_unit_test(test_every_error_reported),
        cmocka_unit_test(test_skeleton_loads),
        cmocka_unit_test(test_observed_jeffreys_mean),
        cmocka_unit_test(test_beta_child_mean),
        cmocka_unit_test(test_inline_events_are_global),
        cmocka_unit_test(test_number_forms),
        cmocka_unit_test(test_load_file_missing),
        cmocka_unit_test(test_streamed_equals_tree),
    };
    /* every test twice: small models go through the tree path by default;
     * then every model is first read as a stream, which must give the
     * same models and, through its fallback, the same messages */
    int rc = cmocka_run_group_tests_name("tree", tests, NULL, NULL);
    static const lw_load_limits streamed = {.stream_from = 1};
    tu_limits = &streamed;
    rc |= cmocka_run_group_tests_name("streamed", tests, NULL, NULL);
    return rc;
}
