/*
 * report_html.c - the committee report as one self-contained HTML5 file.
 *
 * Layout: a cover block (title, model, date), contents, "about this
 * model", then per hazard: summary (with a log-scale picture of where the
 * chance stands against the tolerable level), the main error paths drawn
 * as layered safeguards, importance as a bar chart, the cut-set table,
 * the uncertainty histogram and the variants side by side; then every
 * input with its evidence, the cautions and a footer with the short
 * caution.
 *
 * Pictures are inline SVG drawn here.  Meaning is carried by shape,
 * line weight and pattern, never by colour alone, so the report prints
 * in greyscale.  The document is also well-formed XML: void elements are
 * closed and only the five XML entities are used.  Model text always
 * goes through lwh_esc.
 */
#include "layerwise/report.h"

#include <gsl/gsl_cdf.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "layerwise/alloc.h"
#include "layerwise/estimate.h"
#include "layerwise/network.h"
#include "layerwise/render.h"
#include "render/html.h"
#include "render/report_int.h"

typedef struct ctx {
    FILE *o;
    const lw_report *r;
    const lw_model *m;
    int fig;                /* figure counter: unique SVG ids */
    bool oom;               /* an allocation failed */
} ctx;

#define FONT "'Segoe UI','Helvetica Neue',Arial,'Liberation Sans'," \
             "'DejaVu Sans',sans-serif"

static const char css[] =
    ":root{color-scheme:light}\n"
    "*{box-sizing:border-box}\n"
    "body{font-family:" FONT ";color:#111;background:#fff;"
    "max-width:62rem;margin:0 auto;padding:2rem 2.5rem 3rem;"
    "line-height:1.45;font-size:15px}\n"
    "header.cover{border-bottom:4px solid #111;padding-bottom:1rem;"
    "margin-bottom:1.5rem}\n"
    ".kicker{text-transform:uppercase;letter-spacing:.09em;font-size:.78rem;"
    "color:#444;margin:0 0 .3rem}\n"
    "h1{font-size:1.85rem;line-height:1.2;margin:.1rem 0 .6rem}\n"
    "h2{font-size:1.35rem;border-bottom:2px solid #111;padding-bottom:.25rem;"
    "margin:2.4rem 0 .8rem}\n"
    "h3{font-size:1.08rem;margin:1.8rem 0 .5rem}\n"
    "h2 .id,h3 .id{font-weight:400;font-size:.8rem;color:#444}\n"
    "p{margin:.45rem 0}\n"
    ".meta{font-size:.88rem;color:#333}\n"
    ".meta span{white-space:nowrap}\n"
    ".notice{border:1px solid #111;border-left:6px solid #111;"
    "padding:.55rem .8rem;margin:1rem 0;font-size:.9rem;background:#f4f4f4}\n"
    "nav.toc ol{margin:.3rem 0 0 1.2rem;padding:0;columns:2;font-size:.92rem}\n"
    "nav.toc a{color:#111}\n"
    "code,.id{font-family:'DejaVu Sans Mono',Consolas,'Liberation Mono',"
    "Menlo,monospace;font-size:.84em}\n"
    "table{border-collapse:collapse;width:100%;font-size:.86rem;"
    "margin:.6rem 0 1.1rem}\n"
    "th,td{text-align:left;padding:.32rem .5rem;border-bottom:1px solid #bbb;"
    "vertical-align:top}\n"
    "thead th{border-bottom:2px solid #111;font-weight:600;"
    "vertical-align:bottom}\n"
    "tbody tr:nth-child(even) td{background:#f6f6f6}\n"
    ".num{text-align:right;font-variant-numeric:tabular-nums;"
    "white-space:nowrap}\n"
    "td.small,.small{font-size:.8rem;color:#333}\n"
    "table.variants td:first-child{width:32%}\n"
    "table.inputs td:nth-child(1){width:24%}\n"
    "table.inputs td:nth-child(2){width:9%}\n"
    "table.inputs td:nth-child(3){width:13%}\n"
    "table.inputs td:nth-child(4){width:25%}\n"
    "table.changes td:first-child{width:45%}\n"
    "svg text.halo{paint-order:stroke;stroke:#fff;stroke-width:4px;"
    "stroke-linejoin:round}\n"
    ".cards{display:grid;grid-template-columns:repeat(3,1fr);gap:.7rem;"
    "margin:.8rem 0}\n"
    ".card{border:1px solid #777;padding:.6rem .8rem .7rem}\n"
    ".card .label{font-size:.78rem;text-transform:uppercase;"
    "letter-spacing:.05em;color:#444}\n"
    ".card .big{font-size:1.45rem;font-weight:700;line-height:1.25;"
    "margin-top:.15rem}\n"
    ".card .sub{font-size:.84rem;color:#333}\n"
    ".card.verdict{border:2px solid #111}\n"
    ".card.verdict.not{border:4px double #111;background:#ececec}\n"
    ".lead{font-size:1.02rem}\n"
    "figure{margin:1rem 0 1.2rem;break-inside:avoid;page-break-inside:avoid}\n"
    "figcaption{font-size:.82rem;color:#333;margin-top:.3rem}\n"
    "svg{display:block;max-width:100%;height:auto}\n"
    ".path{break-inside:avoid;page-break-inside:avoid;margin:.2rem 0 .9rem;"
    "border-top:1px solid #999;padding-top:.35rem}\n"
    ".path .head{font-size:.88rem;margin-bottom:.2rem}\n"
    ".path .head b{font-size:.95rem}\n"
    "ul.plain{margin:.3rem 0 .6rem 1.2rem;padding:0}\n"
    "ol.cautions li{margin:.35rem 0}\n"
    "dl.facts{display:grid;grid-template-columns:max-content 1fr;"
    "gap:.2rem 1rem;font-size:.9rem;margin:.5rem 0}\n"
    "dl.facts dt{font-weight:600}\n"
    "dl.facts dd{margin:0}\n"
    "footer{margin-top:3rem;border-top:3px solid #111;padding-top:.7rem;"
    "font-size:.86rem}\n"
    "footer .caution{font-weight:600}\n"
    "@page{margin:16mm 14mm 18mm 14mm}\n"
    "@media print{\n"
    " body{max-width:none;padding:0;font-size:10pt}\n"
    " h2,h3{break-after:avoid;page-break-after:avoid}\n"
    " section.hazard{break-before:page;page-break-before:always}\n"
    " section.inputs,section.cautions{break-before:page;"
    "page-break-before:always}\n"
    " figure,.cards,.card,.path,tr,dl.facts{break-inside:avoid;"
    "page-break-inside:avoid}\n"
    " thead{display:table-header-group}\n"
    " tbody tr:nth-child(even) td{background:none}\n"
    " a{color:inherit;text-decoration:none}\n"
    " nav.toc{display:none}\n"
    "}\n";

/* ------------------------------------------------------------------ */
/* small helpers                                                        */

static void esc(ctx *c, const char *s) { lwh_esc(c->o, s); }

static const char *unit_of(const lw_model *m)
{
    return m->exposure_unit && m->exposure_unit[0] ? m->exposure_unit
                                                   : "exposure unit";
}

static void put_prob(ctx *c, double p)
{
    char b[96];
    lwh_prob(b, sizeof b, p);
    fputs(b, c->o);
}

static void put_sig(ctx *c, double x)
{
    char b[64];
    lw_fmt_sig(b, sizeof b, x);
    fputs(b, c->o);
}

static void put_one_in(ctx *c, double p)
{
    char b[64];
    if (p > 0 && isfinite(p)) {
        lw_fmt_one_in(b, sizeof b, 1.0 / p);
        fprintf(c->o, "1 in %s", b);
    } else {
        fputs("never", c->o);
    }
}

/* A mean time between events in words: years, months, days or hours. */
static void put_interval(ctx *c, double years)
{
    char b[64];
    if (!isfinite(years) || years <= 0) {
        fputs("\u2013", c->o);
    } else if (years >= 1.5) {
        lw_fmt_sig(b, sizeof b, years);
        fprintf(c->o, "%s years", b);
    } else if (years * 12 >= 2) {
        lw_fmt_sig(b, sizeof b, years * 12);
        fprintf(c->o, "%s months", b);
    } else if (years * 365.25 >= 2) {
        lw_fmt_sig(b, sizeof b, years * 365.25);
        fprintf(c->o, "%s days", b);
    } else {
        lw_fmt_sig(b, sizeof b, years * 365.25 * 24);
        fprintf(c->o, "%s hours", b);
    }
}

static void put_pct(ctx *c, double share)
{
    char b[64];
    lwh_pct(b, sizeof b, share);
    fputs(b, c->o);
}

static const lw_node *hazard_node(const lw_model *m, size_t h)
{
    return &m->nodes[m->hazards[h]];
}

/* A safeguard that is absent in this network (it misses for certain). */
static bool var_absent(const lw_network *net, uint32_t v)
{
    const lw_var *x = &net->vars[v];
    return x->kind == LW_VAR_SAFEGUARD && x->node != LW_NONE &&
           !net->present[x->node];
}

/* The words for a network variable, escaped. */
static void var_words(ctx *c, const lw_network *net, uint32_t v)
{
    const lw_var *x = &net->vars[v];
    const lw_model *m = c->m;
    if (x->kind == LW_VAR_DEPENDS) {
        const lw_dependence *d = &m->deps[x->dep];
        esc(c, lw_node_text(&m->nodes[d->second]));
        fputs(" \u2013 because ", c->o);
        esc(c, lw_node_text(&m->nodes[d->first]));
        fputs(" missed (", c->o);
        esc(c, lw_level_name(net->level[x->dep]));
        fputs(" dependence)", c->o);
    } else if (x->kind == LW_VAR_COMMON) {
        const lw_group *g = &m->groups[x->group];
        fputs("Shared cause: ", c->o);
        esc(c, g->label && g->label[0] ? g->label : g->id);
    } else {
        esc(c, lw_var_text(net, v));
        if (x->part)
            fputs(" (on its own)", c->o);
        if (var_absent(net, v))
            fputs(" (not in place)", c->o);
    }
}

/* The same into a buffer (unescaped), for wrapping inside SVG. */
static void var_words_buf(char *buf, size_t n, const lw_model *m,
                          const lw_network *net, uint32_t v)
{
    const lw_var *x = &net->vars[v];
    if (x->kind == LW_VAR_DEPENDS) {
        const lw_dependence *d = &m->deps[x->dep];
        snprintf(buf, n, "%s, because %s missed (%s dependence)",
                 lw_node_text(&m->nodes[d->second]),
                 lw_node_text(&m->nodes[d->first]),
                 lw_level_name(net->level[x->dep]));
    } else if (x->kind == LW_VAR_COMMON) {
        const lw_group *g = &m->groups[x->group];
        snprintf(buf, n, "Shared cause: %s",
                 g->label && g->label[0] ? g->label : g->id);
    } else {
        snprintf(buf, n, "%s%s%s", lw_var_text(net, v),
                 x->part ? " (on its own)" : "",
                 var_absent(net, v) ? " (not in place)" : "");
    }
}

/* Where a variable sits along a path: the model's document order, which
 * is usually the order of the process. */
static double var_position(const lw_model *m, const lw_network *net,
                           uint32_t v)
{
    const lw_var *x = &net->vars[v];
    if (x->node != LW_NONE)
        return (double)x->node;
    if (x->kind == LW_VAR_DEPENDS)
        return (double)m->deps[x->dep].second + 0.5;
    if (x->kind == LW_VAR_COMMON) {
        const lw_group *g = &m->groups[x->group];
        size_t lo = (size_t)-1;
        for (size_t i = 0; i < g->nmembers; i++)
            if (g->members[i] < lo)
                lo = g->members[i];
        return (double)lo - 0.5;
    }
    return 1e18;
}

/* ------------------------------------------------------------------ */
/* log axis shared by the summary, variant and histogram pictures       */

typedef struct axis {
    double lo, hi;          /* decades: log10 bounds */
    double x0, x1;          /* pixels */
    bool log;
} axis;

static double ax_x(const axis *a, double v)
{
    double t;
    if (a->log) {
        if (!(v > 0))
            return a->x0;
        t = (log10(v) - a->lo) / (a->hi - a->lo);
    } else {
        t = (v - a->lo) / (a->hi - a->lo);
    }
    if (t < 0)
        t = 0;
    if (t > 1)
        t = 1;
    return a->x0 + t * (a->x1 - a->x0);
}

/* A log axis covering every positive value given, whole decades, at
 * least 'min_decades' wide. */
static void ax_fit(axis *a, const double *v, size_t n, int min_decades)
{
    double lo = INFINITY, hi = -INFINITY;
    for (size_t i = 0; i < n; i++) {
        if (v[i] > 0 && isfinite(v[i])) {
            double l = log10(v[i]);
            if (l < lo) lo = l;
            if (l > hi) hi = l;
        }
    }
    if (!isfinite(lo)) {
        lo = -6;
        hi = 0;
    }
    a->lo = floor(lo - 0.15);
    a->hi = ceil(hi + 0.15);
    while (a->hi - a->lo < min_decades) {
        if (a->hi < 0)
            a->hi += 1;
        if (a->hi - a->lo < min_decades)
            a->lo -= 1;
    }
    if (a->hi > 0 && a->lo < 0)
        a->hi = a->hi > 0 ? 0 : a->hi;
    if (a->hi <= a->lo)
        a->hi = a->lo + 1;
    a->log = true;
}

/* "10⁻⁵"; 1 for 10⁰. */
static void decade_label(char *buf, size_t n, int e)
{
    static const char *const sup[10] = {
        "\u2070", "\u00b9", "\u00b2", "\u00b3", "\u2074",
        "\u2075", "\u2076", "\u2077", "\u2078", "\u2079"
    };
    if (e == 0) {
        snprintf(buf, n, "1");
        return;
    }
    char d[16];
    snprintf(d, sizeof d, "%d", e < 0 ? -e : e);
    size_t o = (size_t)snprintf(buf, n, "10%s", e < 0 ? "\u207b" : "");
    for (const char *q = d; *q && o + 4 < n; q++)
        o += (size_t)snprintf(buf + o, n - o, "%s", sup[*q - '0']);
}

static bool ax_inside(const axis *a, double v)
{
    double l = log10(v);
    return l >= a->lo - 1e-9 && l <= a->hi + 1e-9;
}

/* Ticks and decade labels along y; 'one_in' adds "1 in N" below.  When
 * fewer than three decades are labelled, 2 and 5 times each are too. */
static void ax_draw(ctx *c, const axis *a, double y, bool one_in)
{
    FILE *o = c->o;
    fprintf(o, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" "
            "stroke=\"#111\" stroke-width=\"1.2\"/>\n", a->x0, y, a->x1, y);
    int e0 = (int)floor(a->lo + 1e-9), e1 = (int)ceil(a->hi - 1e-9);
    int labelled = 0;
    for (int e = e0; e <= e1; e++)
        labelled += ax_inside(a, pow(10.0, e));
    bool minor_labels = labelled < 3;
    int step = (a->hi - a->lo) > 9 ? 2 : 1;
    for (int e = e0; e <= e1; e++) {
        for (int k = 2; k < 10; k++) {
            double v = k * pow(10.0, e);
            if (!ax_inside(a, v))
                continue;
            double xm = ax_x(a, v);
            fprintf(o, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" "
                    "y2=\"%.1f\" stroke=\"#777\" stroke-width=\"0.6\"/>\n",
                    xm, y, xm, y + 3);
            if (minor_labels && (k == 2 || k == 5)) {
                char b[64];
                lwh_prob(b, sizeof b, v);
                fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" "
                        "text-anchor=\"middle\" font-size=\"10.5\" "
                        "fill=\"#444\">%s</text>\n", xm, y + 17, b);
            }
        }
        double v = pow(10.0, e);
        if (!ax_inside(a, v))
            continue;
        double x = ax_x(a, v);
        fprintf(o, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" "
                "stroke=\"#111\" stroke-width=\"1\"/>\n", x, y, x, y + 5);
        if ((e - e0) % step)
            continue;
        char b[64];
        decade_label(b, sizeof b, e);
        fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"middle\" "
                "font-size=\"12\">%s</text>\n", x, y + 18, b);
        if (one_in && e < 0) {
            char n1[64];
            lw_fmt_one_in(n1, sizeof n1, pow(10.0, -e));
            fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"middle\" "
                    "font-size=\"10.5\" fill=\"#444\">1 in %s</text>\n",
                    x, y + 31, n1);
        }
    }
}

static void svg_open(ctx *c, double w, double h, const char *title_text,
                     const char *user_title)
{
    fprintf(c->o, "<svg width=\"%.0f\" height=\"%.0f\" viewBox=\"0 0 %.0f "
            "%.0f\" role=\"img\" font-family=\"%s\"><title>", w, h, w, h,
            FONT);
    if (title_text)
        fputs(title_text, c->o);
    if (user_title)
        esc(c, user_title);
    fputs("</title>\n", c->o);
}

/* Hatch and dot patterns for one figure (ids carry the figure number). */
static void svg_patterns(ctx *c)
{
    fprintf(c->o,
            "<defs>"
            "<pattern id=\"hatch%d\" width=\"6\" height=\"6\" "
            "patternUnits=\"userSpaceOnUse\" patternTransform=\"rotate(45)\">"
            "<rect width=\"6\" height=\"6\" fill=\"#fff\"/>"
            "<line x1=\"0\" y1=\"0\" x2=\"0\" y2=\"6\" stroke=\"#444\" "
            "stroke-width=\"2\"/></pattern>"
            "<pattern id=\"dots%d\" width=\"5\" height=\"5\" "
            "patternUnits=\"userSpaceOnUse\">"
            "<rect width=\"5\" height=\"5\" fill=\"#fff\"/>"
            "<circle cx=\"2.5\" cy=\"2.5\" r=\"1.1\" fill=\"#333\"/></pattern>"
            "<marker id=\"arrow%d\" viewBox=\"0 0 10 10\" refX=\"9\" "
            "refY=\"5\" markerWidth=\"7\" markerHeight=\"7\" "
            "orient=\"auto-start-reverse\"><path d=\"M0,0 L10,5 L0,10 z\" "
            "fill=\"#111\"/></marker>"
            "</defs>\n", c->fig, c->fig, c->fig);
}

/* ------------------------------------------------------------------ */
/* document head, cover, contents, about                                */

static void put_head(ctx *c)
{
    const lw_model *m = c->m;
    FILE *o = c->o;
    fputs("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n"
          "<meta charset=\"utf-8\"/>\n"
          "<meta name=\"viewport\" content=\"width=device-width, "
          "initial-scale=1\"/>\n", o);
    fprintf(o, "<meta name=\"generator\" content=\"layerwise %s\"/>\n",
            lw_version());
    fputs("<title>", o);
    esc(c, m->title && m->title[0] ? m->title : m->id);
    fputs(" \u2013 risk report</title>\n<style>\n", o);
    fputs(css, o);
    fputs("</style>\n</head>\n<body>\n", o);
}

static void put_cover(ctx *c)
{
    const lw_model *m = c->m;
    const lw_report *r = c->r;
    FILE *o = c->o;
    fputs("<header class=\"cover\">\n<p class=\"kicker\">Risk committee "
          "report \u00b7 quantitative analysis of a verification "
          "process</p>\n<h1>", o);
    esc(c, m->title && m->title[0] ? m->title : m->id);
    fputs("</h1>\n<p class=\"meta\"><span>Model <code>", o);
    esc(c, m->id);
    fputs("</code></span>", o);
    if (r->ro.source_name) {
        fputs(" \u00b7 <span>file <code>", o);
        esc(c, r->ro.source_name);
        fputs("</code></span>", o);
    }
    if (r->ro.generated) {
        fputs(" \u00b7 <span>prepared ", o);
        esc(c, r->ro.generated);
        fputs("</span>", o);
    }
    fprintf(o, " \u00b7 <span>layerwise %s</span>", lw_version());
    lwr_unc u;
    if (r->nhazards && lwr_uncertainty(&r->hazards[0], &u)) {
        char b[64];
        lw_fmt_sig(b, sizeof b, (double)u.samples);
        fprintf(o, " \u00b7 <span>Monte Carlo: %s samples, seed %llu</span>",
                b, u.seed);
    }
    fputs("</p>\n<p class=\"notice\"><b>Decision support only.</b> ", o);
    esc(c, lw_caution());
    fputs("</p>\n</header>\n", o);
}

static void put_toc(ctx *c)
{
    const lw_report *r = c->r;
    FILE *o = c->o;
    fputs("<nav class=\"toc\"><b>Contents</b>\n<ol>\n"
          "<li><a href=\"#about\">About this model</a></li>\n", o);
    for (size_t i = 0; i < r->nhazards; i++) {
        const lw_node *h = hazard_node(c->m, r->hazards[i].hazard);
        fputs("<li><a href=\"#h-", o);
        esc(c, h->id);
        fputs("\">Hazard: ", o);
        esc(c, lw_node_text(h));
        fputs("</a></li>\n", o);
    }
    fputs("<li><a href=\"#scope\">Scope and assumptions</a></li>\n"
          "<li><a href=\"#inputs\">Inputs and their evidence</a></li>\n"
          "<li><a href=\"#cautions\">Cautions</a></li>\n</ol>\n</nav>\n", o);
}

/* Free text as paragraphs: blank lines separate paragraphs; lines that
 * start with "- " or "* " become list items; other line breaks are
 * spaces (descriptions are usually hard-wrapped). */
static void put_prose(ctx *c, const char *s)
{
    FILE *o = c->o;
    bool in_p = false, in_ul = false, in_li = false;
    const char *p = s;
    while (p && *p) {
        const char *e = strchr(p, '\n');
        size_t len = e ? (size_t)(e - p) : strlen(p);
        const char *q = p;
        size_t ql = len;
        while (ql && (*q == ' ' || *q == '\t' || *q == '\r')) {
            q++;
            ql--;
        }
        while (ql && (q[ql - 1] == ' ' || q[ql - 1] == '\t' ||
                      q[ql - 1] == '\r'))
            ql--;
        if (ql == 0) {
            if (in_li) { fputs("</li>", o); in_li = false; }
            if (in_ul) { fputs("</ul>\n", o); in_ul = false; }
            if (in_p) { fputs("</p>\n", o); in_p = false; }
        } else if (ql >= 2 && (q[0] == '-' || q[0] == '*') && q[1] == ' ') {
            if (in_p) { fputs("</p>\n", o); in_p = false; }
            if (in_li) fputs("</li>\n", o);
            if (!in_ul) { fputs("<ul class=\"plain\">\n", o); in_ul = true; }
            fputs("<li>", o);
            in_li = true;
            lwh_esc_n(o, q + 2, ql - 2);
        } else if (in_li) {
            fputc(' ', o);
            lwh_esc_n(o, q, ql);
        } else {
            if (!in_p) { fputs("<p>", o); in_p = true; }
            else fputc(' ', o);
            lwh_esc_n(o, q, ql);
        }
        p = e ? e + 1 : NULL;
    }
    if (in_li) fputs("</li>", o);
    if (in_ul) fputs("</ul>\n", o);
    if (in_p) fputs("</p>\n", o);
}

static void put_about(ctx *c)
{
    const lw_model *m = c->m;
    FILE *o = c->o;
    fputs("<section class=\"about\" id=\"about\">\n<h2>About this model</h2>\n",
          o);
    fputs("<dl class=\"facts\">\n<dt>Process model</dt><dd>", o);
    esc(c, m->title && m->title[0] ? m->title : m->id);
    fputs(" <span class=\"id\">", o);
    esc(c, m->id);
    fputs("</span></dd>\n<dt>One trial is</dt><dd>one ", o);
    esc(c, unit_of(m));
    if (m->has_exposure) {
        fputs(", ", o);
        put_sig(c, m->per_year);
        fputs(" a year</dd>\n", o);
    } else {
        fputs(" (no yearly volume given: per-year figures are not "
              "available)</dd>\n", o);
    }
    size_t nev = 0, nsg = 0, ner = 0, ngate = 0;
    for (size_t i = 0; i < m->nnodes; i++) {
        lw_node_kind k = m->nodes[i].kind;
        if (k == LW_NODE_SAFEGUARD) nsg++;
        else if (k == LW_NODE_ERROR) ner++;
        else if (k == LW_NODE_CONDITION) nev++;
        else if (lw_node_is_gate(k)) ngate++;
    }
    fprintf(o, "<dt>Parts</dt><dd>%zu error source%s, %zu safeguard%s, "
            "%zu condition%s, %zu gate%s, %zu hazard%s, %zu common-cause "
            "group%s, %zu dependence%s, %zu variant%s</dd>\n",
            ner, ner == 1 ? "" : "s", nsg, nsg == 1 ? "" : "s",
            nev, nev == 1 ? "" : "s", ngate, ngate == 1 ? "" : "s",
            m->nhazards, m->nhazards == 1 ? "" : "s",
            m->ngroups, m->ngroups == 1 ? "" : "s",
            m->ndeps, m->ndeps == 1 ? "" : "s",
            m->nvariants, m->nvariants == 1 ? "" : "s");
    fputs("<dt>Hazards</dt><dd>", o);
    for (size_t i = 0; i < m->nhazards; i++) {
        const lw_node *h = hazard_node(m, i);
        if (i)
            fputs("; ", o);
        esc(c, lw_node_text(h));
        fputs(" <span class=\"id\">", o);
        esc(c, h->id);
        fputs("</span>", o);
    }
    fputs("</dd>\n</dl>\n", o);
    if (m->description && m->description[0])
        fputs("<p class=\"small\">The model's own account of its scope, "
              "sources and assumptions is reproduced under "
              "<a href=\"#scope\">Scope and assumptions</a>.</p>\n", o);
    fputs("</section>\n", o);
}

/* The model's description and the loader's notes. */
static void put_scope(ctx *c)
{
    const lw_model *m = c->m;
    FILE *o = c->o;
    fputs("<section class=\"scope\" id=\"scope\">\n<h2>Scope and "
          "assumptions</h2>\n", o);
    if (m->description && m->description[0]) {
        fputs("<p class=\"small\">As written in the model file.</p>\n", o);
        put_prose(c, m->description);
    } else {
        fputs("<p>The model gives no description. A model for a committee "
              "should state its scope, its sources and who reviewed "
              "it.</p>\n", o);
    }
    if (m->nwarnings) {
        fputs("<h3>Notes from loading the model</h3>\n<ul class=\"plain\">\n",
              o);
        for (size_t i = 0; i < m->nwarnings; i++) {
            fputs("<li>", o);
            esc(c, m->warnings[i]);
            fputs("</li>\n", o);
        }
        fputs("</ul>\n", o);
    }
    fputs("</section>\n", o);
}

/* A sub-heading of a hazard's section, with the anchor "ID-part". */
static void h3(ctx *c, size_t hazard, const char *part, const char *title)
{
    fputs("<h3 id=\"", c->o);
    esc(c, hazard_node(c->m, hazard)->id);
    fprintf(c->o, "-%s\">%s</h3>\n", part, title);
}

/* ------------------------------------------------------------------ */
/* per hazard: summary                                                  */

static void card(ctx *c, const char *cls, const char *label)
{
    fprintf(c->o, "<div class=\"card%s%s\"><div class=\"label\">%s</div>"
            "<div class=\"big\">", cls ? " " : "", cls ? cls : "", label);
}

/* Where the hazard stands on a log scale, with the tolerable level and
 * the 90 % uncertainty range. */
static void put_gauge(ctx *c, const lw_analysis *a, const lwr_unc *u)
{
    FILE *o = c->o;
    double v[4] = {a->probability, a->has_tolerable ? a->tolerable : 0,
                   u ? u->p05 : 0, u ? u->p95 : 0};
    axis ax = {0, 0, 40, 900, true};
    ax_fit(&ax, v, 4, 4);
    double W = 940, H = 128, y = 74;
    c->fig++;
    fputs("<figure>\n", o);
    svg_open(c, W, H, "Where the chance stands on a logarithmic scale",
             NULL);
    svg_patterns(c);
    if (a->has_tolerable && a->tolerable > 0) {
        double xt = ax_x(&ax, a->tolerable);
        fprintf(o, "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" height=\"30\" "
                "fill=\"url(#hatch%d)\" opacity=\"0.55\"/>\n", xt, y - 30,
                ax.x1 - xt, c->fig);
        fprintf(o, "<text class=\"halo\" x=\"%.1f\" y=\"%.1f\" "
                "text-anchor=\"end\" font-size=\"11\" fill=\"#111\">above "
                "the tolerable level</text>\n", ax.x1 - 2, y - 36);
        fprintf(o, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" "
                "stroke=\"#111\" stroke-width=\"2\" "
                "stroke-dasharray=\"6 3\"/>\n", xt, y - 44, xt, y + 4);
        char b[96];
        lwh_prob(b, sizeof b, a->tolerable);
        fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"middle\" "
                "font-size=\"11.5\">tolerable %s</text>\n", xt, y - 48, b);
    }
    if (u && u->p95 > 0) {
        double x1 = ax_x(&ax, u->p05), x2 = ax_x(&ax, u->p95);
        fprintf(o, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" "
                "stroke=\"#555\" stroke-width=\"6\"/>\n"
                "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" "
                "stroke=\"#111\" stroke-width=\"1.5\"/>\n"
                "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" "
                "stroke=\"#111\" stroke-width=\"1.5\"/>\n",
                x1, y - 12, x2, y - 12, x1, y - 19, x1, y - 5, x2, y - 19,
                x2, y - 5);
        fprintf(o, "<text class=\"halo\" x=\"%.1f\" y=\"%.1f\" "
                "font-size=\"11\" fill=\"#333\">90 %% range</text>\n",
                x2 + 6, y - 8);
    }
    if (a->probability > 0) {
        double xp = ax_x(&ax, a->probability);
        fprintf(o, "<path d=\"M%.1f,%.1f l8,-8 l8,8 l-8,8 z\" fill=\"#111\" "
                "stroke=\"#fff\" stroke-width=\"1.5\"/>\n", xp - 8, y - 12);
        char b[96];
        lwh_prob(b, sizeof b, a->probability);
        fprintf(o, "<text class=\"halo\" x=\"%.1f\" y=\"%.1f\" "
                "text-anchor=\"middle\" font-size=\"12.5\" "
                "font-weight=\"700\">%s</text>\n", xp, y - 26, b);
    }
    ax_draw(c, &ax, y, true);
    fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" font-size=\"11\" fill=\"#333\">"
            "chance per ", ax.x0, H - 4);
    esc(c, unit_of(c->m));
    fputs(" (logarithmic scale: each step is ten times the last)</text>\n",
          o);
    fputs("</svg>\n<figcaption>The black diamond is the exact chance as "
          "modelled", o);
    if (u)
        fputs("; the grey bar is the 90 % range from the uncertainty of the "
              "inputs", o);
    if (a->has_tolerable)
        fputs("; the dashed line is the tolerable level set in the model "
              "(hatched: above it)", o);
    fputs(".</figcaption>\n</figure>\n", o);
}

static void put_summary(ctx *c, const lw_report_hazard *rh)
{
    FILE *o = c->o;
    const lw_model *m = c->m;
    const lw_analysis *a = rh->analysis;
    const lw_node *h = hazard_node(m, rh->hazard);
    lwr_unc u;
    bool has_u = lwr_uncertainty(rh, &u);
    double lam = a->has_exposure ? a->per_year : 0;

    h3(c, rh->hazard, "summary", "Summary");
    fputs("<p class=\"lead\">", o);
    if (a->probability <= 0) {
        fputs("As modelled, <b>", o);
        esc(c, lw_node_text(h));
        fputs("</b> cannot happen: no combination of errors and misses "
              "reaches it.", o);
    } else if (a->probability >= 1) {
        fputs("As modelled, <b>", o);
        esc(c, lw_node_text(h));
        fputs("</b> is certain: it needs no error and no miss. Check the "
              "conditions and the logic of the model.", o);
    } else {
        fputs("As modelled, <b>", o);
        esc(c, lw_node_text(h));
        fputs("</b> has a chance of about <b>", o);
        put_one_in(c, a->probability);
        fputs("</b> per ", o);
        esc(c, unit_of(m));
        fputs(".", o);
        if (a->has_exposure) {
            fputs(" At ", o);
            put_sig(c, m->per_year);
            fputs(" a year that is about <b>", o);
            put_sig(c, lam);
            fputs(lam == 1 ? " event a year</b>" : " events a year</b>", o);
            if (lam > 0) {
                fputs(", one every ", o);
                put_interval(c, 1.0 / lam);
                fputs(" on average", o);
            }
            fputs(".", o);
        }
        if (a->has_tolerable) {
            if (a->meets_tolerable) {
                fputs(" This is within the tolerable level set in the "
                      "model.", o);
            } else {
                fputs(" This is <b>above the tolerable level</b> set in the "
                      "model (", o);
                put_sig(c, a->tolerable > 0 ? a->probability / a->tolerable
                                            : INFINITY);
                fputs(" times it).", o);
            }
        }
    }
    fputs("</p>\n<div class=\"cards\">\n", o);
    fputs("<div class=\"card\"><div class=\"label\">Chance per ", o);
    esc(c, unit_of(m));
    fputs("</div><div class=\"big\">", o);
    put_prob(c, a->probability);
    if (a->probability > 0) {
        fputs("</div><div class=\"sub\">about ", o);
        put_one_in(c, a->probability);
        fputs(" (exact)</div></div>\n", o);
    } else {
        fputs("</div><div class=\"sub\">impossible as modelled"
              "</div></div>\n", o);
    }

    card(c, NULL, "Expected events per year");
    if (a->has_exposure) {
        put_sig(c, lam);
        fputs("</div><div class=\"sub\">at a volume of ", o);
        put_sig(c, m->per_year);
        fputs(" a year</div></div>\n", o);
    } else {
        fputs("\u2013</div><div class=\"sub\">the model gives no yearly "
              "volume</div></div>\n", o);
    }

    card(c, NULL, "Mean time between events");
    if (lam > 0) {
        put_interval(c, 1.0 / lam);
        fputs("</div><div class=\"sub\">on average, if nothing "
              "changes</div></div>\n", o);
    } else {
        fputs("\u2013</div><div class=\"sub\">", o);
        fputs(a->has_exposure ? "no events expected" : "needs a yearly volume",
              o);
        fputs("</div></div>\n", o);
    }

    const int years[3] = {1, 5, 10};
    for (int k = 0; k < 3; k++) {
        char lab[64];
        snprintf(lab, sizeof lab, "At least one event in %d year%s",
                 years[k], years[k] == 1 ? "" : "s");
        card(c, NULL, lab);
        if (a->has_exposure) {
            double pk = -expm1(-lam * years[k]);
            if (pk > 0.999)
                fputs("over 99.9\u2009%", o);
            else
                put_pct(c, pk);
            fputs("</div><div class=\"sub\">1 \u2212 e<sup>\u2212\u03bbt</sup>"
                  " with \u03bb = ", o);
            put_sig(c, lam);
            fprintf(o, " a year, t = %d</div></div>\n", years[k]);
        } else {
            fputs("\u2013</div><div class=\"sub\">needs a yearly "
                  "volume</div></div>\n", o);
        }
    }

    if (a->has_tolerable) {
        card(c, a->meets_tolerable ? "verdict met" : "verdict not",
             "Tolerable level");
        fputs(a->meets_tolerable ? "Met" : "Not met", o);
        fputs("</div><div class=\"sub\">tolerable ", o);
        put_prob(c, a->tolerable);
        fputs(" per ", o);
        esc(c, unit_of(m));
        if (!a->meets_tolerable && a->tolerable > 0) {
            fputs("; the chance is ", o);
            put_sig(c, a->probability / a->tolerable);
            fputs(" times it", o);
        } else if (a->probability > 0) {
            fputs("; the chance is ", o);
            put_sig(c, a->probability / a->tolerable);
            fputs(" of it", o);
        }
        fputs("</div></div>\n", o);
    } else {
        card(c, NULL, "Tolerable level");
        fputs("\u2013</div><div class=\"sub\">not set in the model"
              "</div></div>\n", o);
    }
    if (has_u && !(u.p95 > u.p05)) {
        card(c, NULL, "How sure: 90 % range");
        fputs("no spread</div><div class=\"sub\">no input has a stated "
              "distribution</div></div>\n", o);
    } else if (has_u) {
        card(c, NULL, "How sure: 90 % range");
        put_prob(c, u.p05);
        fputs(" \u2013 ", o);
        put_prob(c, u.p95);
        fputs("</div><div class=\"sub\">5th to 95th percentile; median ", o);
        put_prob(c, u.p50);
        fputs("</div></div>\n", o);
    }
    fputs("</div>\n", o);
    if (a->probability > 0)
        put_gauge(c, a, has_u && u.p95 > u.p05 ? &u : NULL);
    fputs("<p class=\"small\">The exact chance comes from a binary decision "
          "diagram of the tree. The usual shortcuts give ", o);
    put_prob(c, a->rare_event);
    fputs(" (sum of the cut-set chances, the rare-event approximation)", o);
    if (a->mcub_exact) {
        fputs(" and ", o);
        put_prob(c, a->min_cut_upper_bound);
        fputs(" (min-cut upper bound)", o);
    }
    fputs(".</p>\n", o);
}

/* ------------------------------------------------------------------ */
/* per hazard: the error paths as layered safeguards                    */

typedef struct path_item {
    uint32_t var;
    double pos;
} path_item;

static int cmp_item(const void *x, const void *y)
{
    const path_item *a = x, *b = y;
    if (a->pos < b->pos) return -1;
    if (a->pos > b->pos) return 1;
    return (a->var > b->var) - (a->var < b->var);
}

static void put_path_legend(ctx *c)
{
    FILE *o = c->o;
    c->fig++;
    svg_open(c, 940, 40, "Legend of the path pictures", NULL);
    svg_patterns(c);
    const double y = 6, h = 26, w = 38;
    double x = 2;
    fprintf(o, "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" height=\"%.1f\" "
            "rx=\"8\" fill=\"#fff\" stroke=\"#111\" stroke-width=\"3\"/>\n",
            x + 1.5, y + 1.5, w - 3, h - 3);
    fprintf(o, "<text x=\"%.1f\" y=\"24\" font-size=\"12\">error that "
            "starts it</text>\n", x + w + 7);
    x += 178;
    fprintf(o, "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" height=\"%.1f\" "
            "fill=\"#fff\" stroke=\"#111\" stroke-width=\"1.5\"/>"
            "<rect x=\"%.1f\" y=\"%.1f\" width=\"9\" height=\"%.1f\" "
            "fill=\"url(#hatch%d)\" stroke=\"#111\" stroke-width=\"1.5\"/>\n",
            x, y, w, h, x, y, h, c->fig);
    fprintf(o, "<text x=\"%.1f\" y=\"24\" font-size=\"12\">safeguard that "
            "misses</text>\n", x + w + 7);
    x += 194;
    fprintf(o, "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" height=\"%.1f\" "
            "fill=\"#fff\" stroke=\"#777\" stroke-width=\"1.3\" "
            "stroke-dasharray=\"2 3\"/>\n", x, y, w, h);
    fprintf(o, "<text x=\"%.1f\" y=\"24\" font-size=\"12\">layer not in "
            "place</text>\n", x + w + 7);
    x += 176;
    fprintf(o, "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" height=\"%.1f\" "
            "fill=\"#fff\" stroke=\"#111\" stroke-width=\"1.5\" "
            "stroke-dasharray=\"6 3\"/><rect x=\"%.1f\" y=\"%.1f\" "
            "width=\"9\" height=\"%.1f\" fill=\"url(#dots%d)\" "
            "stroke=\"#111\" stroke-width=\"1\"/>\n", x, y, w, h, x, y, h,
            c->fig);
    fprintf(o, "<text x=\"%.1f\" y=\"24\" font-size=\"12\">shared cause, "
            "dependence</text>\n", x + w + 7);
    x += 218;
    fprintf(o, "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" height=\"%.1f\" "
            "fill=\"#1a1a1a\"/>\n", x, y, w, h);
    fprintf(o, "<text x=\"%.1f\" y=\"24\" font-size=\"12\">hazard</text>\n",
            x + w + 7);
    fputs("</svg>\n", o);
}

/* Sort the events of a cut set into the order of a path: errors first
 * (they start the chain), then the layers in the model's order. */
static path_item *path_order(const lw_model *m, const lw_network *net,
                             const lw_cut_set *cs)
{
    path_item *it = lw_malloc((cs->order + 1) * sizeof *it);
    if (!it)
        return NULL;
    for (size_t k = 0; k < cs->order; k++) {
        it[k].var = cs->vars[k];
        double pos = var_position(m, net, cs->vars[k]);
        if (net->vars[cs->vars[k]].kind == LW_VAR_ERROR)
            pos -= 1e12;
        it[k].pos = pos;
    }
    qsort(it, cs->order, sizeof *it, cmp_item);
    return it;
}

static void put_path(ctx *c, const lw_analysis *a, size_t rank,
                     const lw_node *hz)
{
    FILE *o = c->o;
    const lw_model *m = c->m;
    const lw_network *net = a->net;
    const lw_cut_set *cs = &a->cut_sets[rank];
    size_t n = cs->order;
    path_item *it = path_order(m, net, cs);
    if (!it) {
        c->oom = true;
        return;
    }

    fputs("<div class=\"path\"><div class=\"head\">", o);
    fprintf(o, "<b>Path %zu</b> \u00b7 ", rank + 1);
    put_prob(c, cs->probability);
    fputs(" per ", o);
    esc(c, unit_of(m));
    fputs(" (about ", o);
    put_one_in(c, cs->probability);
    fputs(") \u00b7 ", o);
    put_pct(c, cs->share);
    fputs(" of the total", o);
    if (a->has_exposure) {
        fputs(" \u00b7 ", o);
        put_sig(c, cs->probability * c->m->per_year);
        fputs(" a year", o);
    }
    fputs("</div>\n", o);

    const double gap = 22, hz_w = 132, top = 4, bh = 112;
    const double H = top + bh + 4;
    double bw = n ? (940 - hz_w - gap * (double)n) / (double)n : 0;
    if (bw > 170)
        bw = 170;
    if (n && bw < 84)
        bw = 84;
    double W = (double)n * (bw + gap) + hz_w + 2;
    if (W < 940)
        W = 940;
    double fs = bw < 110 ? 10.5 : 11.5;
    double lh = fs + 2.2;
    size_t cols = bw > 19 ? (size_t)((bw - 19) / (fs * 0.53)) : 1;
    size_t lines = bw < 110 ? 5 : 4;
    c->fig++;
    svg_open(c, W, H, "An error path: ", lw_node_text(hz));
    svg_patterns(c);
    double x = 1.5;
    double mid = top + bh / 2;
    for (size_t k = 0; k < n; k++) {
        uint32_t v = it[k].var;
        const lw_var *xv = &net->vars[v];
        bool absent = var_absent(net, v);
        fprintf(o, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" "
                "stroke=\"#111\" stroke-width=\"2.5\" "
                "marker-end=\"url(#arrow%d)\"/>\n", x + bw, mid,
                x + bw + gap - 1.5, mid, c->fig);
        const char *tag;
        double tx = x + 16;
        if (xv->kind == LW_VAR_ERROR) {
            tag = "ERROR";
            tx = x + 10;
            fprintf(o, "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" "
                    "height=\"%.1f\" rx=\"12\" fill=\"#fff\" stroke=\"#111\" "
                    "stroke-width=\"3\"/>\n", x + 1.5, top + 1.5, bw - 3,
                    bh - 3);
        } else if (absent) {
            tag = "NOT IN PLACE";
            tx = x + 8;
            fprintf(o, "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" "
                    "height=\"%.1f\" fill=\"#fff\" stroke=\"#777\" "
                    "stroke-width=\"1.3\" stroke-dasharray=\"2 3\"/>\n", x,
                    top, bw, bh);
        } else if (xv->kind == LW_VAR_SAFEGUARD) {
            tag = "SAFEGUARD";
            fprintf(o, "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" "
                    "height=\"%.1f\" fill=\"#fff\" stroke=\"#111\" "
                    "stroke-width=\"1.5\"/><rect x=\"%.1f\" y=\"%.1f\" "
                    "width=\"9\" height=\"%.1f\" fill=\"url(#hatch%d)\" "
                    "stroke=\"#111\" stroke-width=\"1.5\"/>\n", x, top, bw,
                    bh, x, top, bh, c->fig);
        } else {
            tag = xv->kind == LW_VAR_COMMON ? "SHARED CAUSE" : "DEPENDENCE";
            fprintf(o, "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" "
                    "height=\"%.1f\" fill=\"#fff\" stroke=\"#111\" "
                    "stroke-width=\"1.5\" stroke-dasharray=\"6 3\"/>"
                    "<rect x=\"%.1f\" y=\"%.1f\" width=\"9\" height=\"%.1f\" "
                    "fill=\"url(#dots%d)\" stroke=\"#111\" "
                    "stroke-width=\"1\"/>\n", x, top, bw, bh, x, top, bh,
                    c->fig);
        }
        fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" font-size=\"9\" "
                "letter-spacing=\"0.5\" fill=\"#444\">%s</text>\n", tx,
                top + 14, tag);
        char words[1024];
        var_words_buf(words, sizeof words, m, net, v);
        if (absent)     /* the tag says it */
            snprintf(words, sizeof words, "%s", lw_var_text(net, v));
        lwh_lines l;
        lwh_wrap(words, cols, lines, &l);
        fputs("<g><title>", o);
        esc(c, words);
        fputs(" (", o);
        esc(c, xv->name);
        fputs(")</title>\n", o);
        char attrs[64];
        snprintf(attrs, sizeof attrs, "font-size=\"%.1f\"%s", fs,
                 absent ? " fill=\"#444\"" : "");
        lwh_svg_lines(o, tx, top + 30, lh, &l, attrs);
        fputs("</g>\n", o);
        char pb[96];
        lwh_prob(pb, sizeof pb, xv->p);
        if (absent)
            fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" font-size=\"%.1f\" "
                    "font-style=\"italic\">always misses</text>\n", tx,
                    top + bh - 9, fs);
        else
            fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" font-size=\"%.1f\" "
                    "font-weight=\"700\">%s %s</text>\n", tx, top + bh - 9,
                    fs + 0.5,
                    xv->kind == LW_VAR_SAFEGUARD ? "misses" : "chance", pb);
        x += bw + gap;
    }
    /* the hazard */
    fprintf(o, "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" height=\"%.1f\" "
            "fill=\"#1a1a1a\" stroke=\"#111\" stroke-width=\"1.5\"/>\n", x,
            top, hz_w - 4, bh);
    fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" font-size=\"9\" "
            "letter-spacing=\"0.5\" fill=\"#ddd\">HAZARD</text>\n", x + 9,
            top + 14);
    lwh_lines hl;
    lwh_wrap(lw_node_text(hz), 17, 6, &hl);
    lwh_svg_lines(o, x + 9, top + 30, 13.2, &hl,
                  "font-size=\"11\" font-weight=\"700\" fill=\"#fff\"");
    if (n == 0) {
        fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" font-size=\"13\">No error "
                "or miss is needed: the hazard is certain as modelled."
                "</text>\n", x + hz_w + 6, mid);
    }
    fputs("</svg>\n</div>\n", o);
    lw_free(it);
}

static void put_paths(ctx *c, const lw_report_hazard *rh)
{
    FILE *o = c->o;
    const lw_analysis *a = rh->analysis;
    const lw_node *hz = hazard_node(c->m, rh->hazard);
    size_t shown = a->ncut_sets < c->r->ro.paths ? a->ncut_sets
                                                 : c->r->ro.paths;
    h3(c, rh->hazard, "paths", "How errors get through: the main paths");
    if (a->ncut_sets == 0) {
        fputs("<p>No path reaches this hazard.</p>\n", o);
        return;
    }
    fputs("<p>Each path below is one combination of events that together "
          "cause the hazard (a minimal cut set): an error starts the chain "
          "and every safeguard shown misses it. The number in each box is "
          "the chance of that step as modelled; the path's chance is their "
          "product. ", o);
    if ((double)shown < a->cut_set_count) {
        fprintf(o, "The %zu most likely of ", shown);
        put_sig(c, a->cut_set_count);
        fputs(" paths are drawn, and they carry ", o);
    } else {
        fprintf(o, "All %zu path%s drawn, carrying ", shown,
                shown == 1 ? " is" : "s are");
    }
    double cov = 0;
    for (size_t i = 0; i < shown; i++)
        cov += a->cut_sets[i].probability;
    put_pct(c, a->rare_event > 0 ? cov / a->rare_event : 0);
    fputs(" of the total.</p>\n<figure>\n", o);
    put_path_legend(c);
    fputs("</figure>\n", o);
    for (size_t i = 0; i < shown; i++)
        put_path(c, a, i, hz);
}

/* ------------------------------------------------------------------ */
/* per hazard: importance                                               */

static int cmp_fv(const void *x, const void *y)
{
    const lw_importance *a = *(const lw_importance *const *)x;
    const lw_importance *b = *(const lw_importance *const *)y;
    if (a->fussell_vesely > b->fussell_vesely) return -1;
    if (a->fussell_vesely < b->fussell_vesely) return 1;
    if (a->birnbaum > b->birnbaum) return -1;
    if (a->birnbaum < b->birnbaum) return 1;
    return (a->var > b->var) - (a->var < b->var);
}

static void put_importance(ctx *c, const lw_report_hazard *rh)
{
    FILE *o = c->o;
    const lw_analysis *a = rh->analysis;
    const lw_network *net = a->net;
    h3(c, rh->hazard, "importance", "Which safeguards matter most");
    if (a->nimportance == 0 || a->probability <= 0) {
        fputs("<p>Nothing to rank: the hazard does not depend on any "
              "event.</p>\n", o);
        return;
    }
    const lw_importance **rows = lw_malloc((a->nimportance + 1) *
                                           sizeof *rows);
    if (!rows) {
        c->oom = true;
        return;
    }
    size_t n = 0, nabsent = 0;
    for (size_t i = 0; i < a->nimportance; i++) {
        const lw_importance *r = &a->importance[i];
        if (var_absent(net, r->var))
            nabsent++;
        else if (r->fussell_vesely > 0 || r->birnbaum > 0)
            rows[n++] = r;
    }
    qsort(rows, n, sizeof *rows, cmp_fv);
    size_t shown = n < c->r->ro.bars ? n : c->r->ro.bars;

    fputs("<p>The bar is the share of the risk that flows through paths "
          "containing the event (Fussell-Vesely importance). On the right: "
          "how many times the risk would be if the event always happened or "
          "the layer were removed (risk achievement worth, RAW), and how "
          "many times lower it would be if it never did (risk reduction "
          "worth, RRW).</p>\n<figure>\n", o);
    const double lab_w = 330, bar_x = 340, bar_w = 380, row_h = 34;
    double H = 44 + row_h * (double)shown + 10, W = 940;
    c->fig++;
    svg_open(c, W, H, "Importance of each event", NULL);
    svg_patterns(c);
    double y0 = 34;
    for (int t = 0; t <= 4; t++) {
        double x = bar_x + bar_w * t / 4.0;
        fprintf(o, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" "
                "stroke=\"#bbb\" stroke-width=\"%s\"/>\n", x, y0 - 4, x,
                y0 + row_h * (double)shown, t ? "0.8" : "1.4");
        fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"middle\" "
                "font-size=\"11\" fill=\"#333\">%d %%</text>\n", x, y0 - 9,
                25 * t);
    }
    fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"end\" "
            "font-size=\"11\" font-weight=\"700\">RAW</text>\n"
            "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"end\" "
            "font-size=\"11\" font-weight=\"700\">RRW</text>\n",
            W - 96, y0 - 9, W - 10, y0 - 9);
    for (size_t i = 0; i < shown; i++) {
        const lw_importance *r = rows[i];
        const lw_var *v = &net->vars[r->var];
        double y = y0 + row_h * (double)i;
        char words[1024];
        var_words_buf(words, sizeof words, c->m, net, r->var);
        lwh_lines l;
        lwh_wrap(words, 50 > LWH_MAX_COLS ? LWH_MAX_COLS : 50, 2, &l);
        fputs("<g><title>", o);
        esc(c, words);
        fputs(" (", o);
        esc(c, v->name);
        fputs(")</title>\n", o);
        lwh_svg_lines(o, lab_w, y + (l.n > 1 ? 13 : 20), 12.5, &l,
                      "font-size=\"11.5\" text-anchor=\"end\"");
        fputs("</g>\n", o);
        double bw = bar_w * (r->fussell_vesely > 1 ? 1 : r->fussell_vesely);
        const char *fill;
        char fillbuf[32];
        if (v->kind == LW_VAR_SAFEGUARD) {
            fill = "#3a3a3a";
        } else if (v->kind == LW_VAR_ERROR) {
            fill = "#fff";
        } else {
            snprintf(fillbuf, sizeof fillbuf, "url(#hatch%d)", c->fig);
            fill = fillbuf;
        }
        fprintf(o, "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" height=\"18\" "
                "fill=\"%s\" stroke=\"#111\" stroke-width=\"1.2\"/>\n",
                bar_x, y + 6, bw < 1 ? 1 : bw, fill);
        char pct[64];
        lwh_pct(pct, sizeof pct, r->fussell_vesely);
        fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" font-size=\"12\" "
                "font-weight=\"700\">%s</text>\n", bar_x + bw + 6, y + 20,
                pct);
        char raw[64], rrw[64];
        lw_fmt_sig(raw, sizeof raw, r->raw);
        if (r->rrw_defined)
            lw_fmt_sig(rrw, sizeof rrw, r->rrw);
        else
            snprintf(rrw, sizeof rrw, "\u221e");
        fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"end\" "
                "font-size=\"12\">\u00d7%s</text>\n"
                "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"end\" "
                "font-size=\"12\">\u00f7%s</text>\n", W - 96, y + 20, raw,
                W - 10, y + 20, rrw);
    }
    fputs("</svg>\n<figcaption>Bars: dark = safeguard, white = error source, "
          "hatched = shared cause or dependence. ", o);
    if (shown < n)
        fprintf(o, "The %zu most important of %zu events are shown; the full "
                "list is in the CSV output of <code>layerwise analyze "
                "--format csv --table importance</code>. ", shown, n);
    fputs("\u221e: the hazard cannot happen without this event.", o);
    if (nabsent) {
        fputs(" Not shown, because they are not in place and miss for "
              "certain: ", o);
        size_t k = 0;
        for (size_t i = 0; i < a->nimportance; i++) {
            if (!var_absent(net, a->importance[i].var))
                continue;
            fputs(k++ ? ", " : "", o);
            esc(c, lw_var_text(net, a->importance[i].var));
        }
        fputs(".", o);
    }
    fputs("</figcaption>\n</figure>\n", o);

    /* in words, for the top safeguards */
    size_t said = 0;
    fputs("<ul class=\"plain\">\n", o);
    for (size_t i = 0; i < n && said < 3; i++) {
        const lw_importance *r = rows[i];
        const lw_var *v = &net->vars[r->var];
        if (v->kind != LW_VAR_SAFEGUARD || var_absent(net, r->var))
            continue;
        said++;
        fputs("<li><b>", o);
        esc(c, lw_var_text(net, r->var));
        fputs("</b>: the paths through this layer carry ", o);
        put_pct(c, r->fussell_vesely);
        fputs(" of the risk. If the layer were removed, the risk would be ",
              o);
        put_sig(c, r->raw);
        fputs(" times what it is", o);
        if (r->rrw_defined) {
            fputs("; if it never missed, the risk would fall ", o);
            put_sig(c, r->rrw);
            fputs("-fold.", o);
        } else {
            fputs("; if it never missed, the hazard could not happen.", o);
        }
        fputs("</li>\n", o);
    }
    fputs("</ul>\n", o);
    if (!said)
        fputs("<p>No safeguard carries any of the risk.</p>\n", o);
    lw_free(rows);
}

/* ------------------------------------------------------------------ */
/* per hazard: cut-set table                                            */

static void put_cut_sets(ctx *c, const lw_report_hazard *rh)
{
    FILE *o = c->o;
    const lw_analysis *a = rh->analysis;
    const lw_network *net = a->net;
    size_t shown = a->ncut_sets < c->r->ro.cut_sets ? a->ncut_sets
                                                    : c->r->ro.cut_sets;
    h3(c, rh->hazard, "cut-sets", "Every combination that causes the hazard "
       "(minimal cut sets)");
    fputs("<p>", o);
    put_sig(c, a->cut_set_count);
    fputs(" combination", o);
    if (a->cut_set_count != 1)
        fputs("s", o);
    fputs(" in all", o);
    if (shown < a->cut_set_count)
        fprintf(o, "; the %zu most likely are listed (the complete list: "
                "<code>layerwise analyze --format csv</code>)", shown);
    fputs(". Every event in a row must happen for that row to cause the "
          "hazard.</p>\n", o);
    if (!shown)
        return;
    fputs("<table>\n<thead><tr><th class=\"num\">#</th><th>Every one of "
          "these happens</th><th class=\"num\">Events</th>"
          "<th class=\"num\">Chance</th><th class=\"num\">About</th>"
          "<th class=\"num\">Share</th></tr></thead>\n<tbody>\n", o);
    for (size_t i = 0; i < shown; i++) {
        const lw_cut_set *cs = &a->cut_sets[i];
        fprintf(o, "<tr><td class=\"num\">%zu</td><td>", i + 1);
        path_item *it = path_order(c->m, net, cs);
        if (!it) {
            c->oom = true;
            break;
        }
        for (size_t k = 0; k < cs->order; k++) {
            uint32_t v = it[k].var;
            bool err = net->vars[v].kind == LW_VAR_ERROR;
            if (k)
                fputs("<br/>", o);
            fputs(err ? "<b>" : "", o);
            var_words(c, net, v);
            fputs(err ? "</b>" : "", o);
            fputs(" <span class=\"id\">", o);
            esc(c, net->vars[v].name);
            fputs("</span>", o);
        }
        lw_free(it);
        if (cs->order == 0)
            fputs("(nothing: the hazard is certain)", o);
        fprintf(o, "</td><td class=\"num\">%zu</td><td class=\"num\">",
                cs->order);
        put_prob(c, cs->probability);
        fputs("</td><td class=\"num\">", o);
        put_one_in(c, cs->probability);
        fputs("</td><td class=\"num\">", o);
        put_pct(c, cs->share);
        fputs("</td></tr>\n", o);
    }
    fputs("</tbody>\n</table>\n", o);
}

/* ------------------------------------------------------------------ */
/* per hazard: uncertainty histogram                                    */

static void put_uncertainty(ctx *c, const lw_report_hazard *rh)
{
    FILE *o = c->o;
    lwr_unc u;
    h3(c, rh->hazard, "uncertainty", "How sure are we: uncertainty");
    if (!lwr_uncertainty(rh, &u)) {
        fputs("<p>The uncertainty of the inputs was not propagated for this "
              "report (run <code>layerwise report</code> with "
              "<code>--samples N</code>, or <code>layerwise "
              "uncertainty</code>).</p>\n", o);
        return;
    }
    char sb[64];
    lw_fmt_sig(sb, sizeof sb, (double)u.samples);
    if (!(u.p95 > u.p05) && !(u.sd > 0)) {
        fprintf(o, "<p>%s draws (seed %llu) all gave the same chance, ", sb,
                u.seed);
        put_prob(c, u.p50);
        fputs(": no input this hazard depends on has a distribution, so "
              "the model states no uncertainty. That does not make the "
              "figure certain; give the inputs distributions (a lognormal "
              "error factor, audit counts) to see how wide it is.</p>\n", o);
        return;
    }
    fprintf(o, "<p>Every input with a distribution was drawn %s times "
            "(seed %llu) and the hazard's chance computed exactly for each "
            "draw. In 90 %% of the draws the chance lay between <b>", sb,
            u.seed);
    put_prob(c, u.p05);
    fputs("</b> and <b>", o);
    put_prob(c, u.p95);
    fputs("</b> (median ", o);
    put_prob(c, u.p50);
    fputs(", mean ", o);
    put_prob(c, u.mean);
    fputs("; the exact point value is ", o);
    put_prob(c, u.point);
    fputs(")", o);
    if (u.has_per_year) {
        fputs(", that is ", o);
        put_sig(c, u.per_year_p05);
        fputs(" to ", o);
        put_sig(c, u.per_year_p95);
        fputs(" events a year", o);
    }
    fputs(". Inputs given as a single value without a distribution are held "
          "fixed, so the true spread is wider.</p>\n", o);
    if (u.nbins == 0)
        return;

    /* the bins: log axis when every bound is positive and they span more
     * than a factor of ten */
    double lo0, hi0, lo1, hi1, maxc = 0;
    lwr_bin(rh, 0, &lo0, &hi0);
    lwr_bin(rh, u.nbins - 1, &lo1, &hi1);
    for (size_t i = 0; i < u.nbins; i++) {
        double l, h, cnt = lwr_bin(rh, i, &l, &h);
        if (cnt > maxc)
            maxc = cnt;
    }
    axis ax = {0, 0, 60, 900, true};
    if (lo0 > 0 && hi1 / lo0 > 10) {
        double v[2] = {lo0, hi1};
        ax_fit(&ax, v, 2, 1);
        ax.lo = log10(lo0);
        ax.hi = log10(hi1);
    } else {
        ax.log = false;
        ax.lo = lo0;
        ax.hi = hi1 > lo0 ? hi1 : lo0 + 1;
    }
    const double W = 940, H = 300, base = 230, top = 50;
    fputs("<figure>\n", o);
    c->fig++;
    svg_open(c, W, H, "Histogram of the hazard's chance over the Monte Carlo "
             "draws", NULL);
    svg_patterns(c);
    for (size_t i = 0; i < u.nbins; i++) {
        double l, h, cnt = lwr_bin(rh, i, &l, &h);
        if (cnt <= 0)
            continue;
        double x1 = ax_x(&ax, l), x2 = ax_x(&ax, h);
        double bh = maxc > 0 ? (base - top) * cnt / maxc : 0;
        fprintf(o, "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" "
                "height=\"%.1f\" fill=\"#bdbdbd\" stroke=\"#333\" "
                "stroke-width=\"0.6\"/>\n", x1, base - bh,
                x2 - x1 > 0.5 ? x2 - x1 : 0.5, bh);
    }
    /* percentile markers */
    struct { double v; const char *name; const char *dash; double w; }
    mk[4] = {
        {u.p05, "5th", "5 3", 1.6}, {u.p50, "median", "", 2.4},
        {u.p95, "95th", "5 3", 1.6}, {u.point, "point", "1.5 2.5", 2}
    };
    int row = 0;
    for (int k = 0; k < 4; k++) {
        double x = ax_x(&ax, mk[k].v);
        fprintf(o, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" "
                "stroke=\"#111\" stroke-width=\"%.1f\"%s%s%s/>\n", x,
                top - 14, x, base, mk[k].w,
                mk[k].dash[0] ? " stroke-dasharray=\"" : "", mk[k].dash,
                mk[k].dash[0] ? "\"" : "");
        row = k == 3 ? 1 : 0;
        char b[96];
        lwh_prob(b, sizeof b, mk[k].v);
        fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"middle\" "
                "font-size=\"11.5\"%s><tspan font-weight=\"700\">%s"
                "</tspan> %s</text>\n", x, row ? top - 34 : top - 18,
                k == 1 ? "" : "", mk[k].name, b);
    }
    if (ax.log) {
        ax_draw(c, &ax, base, false);
    } else {
        fprintf(o, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" "
                "stroke=\"#111\" stroke-width=\"1.2\"/>\n", ax.x0, base,
                ax.x1, base);
        for (int t = 0; t <= 4; t++) {
            double v = ax.lo + (ax.hi - ax.lo) * t / 4.0;
            double x = ax_x(&ax, v);
            char b[96];
            lwh_prob(b, sizeof b, v);
            fprintf(o, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" "
                    "y2=\"%.1f\" stroke=\"#111\"/><text x=\"%.1f\" y=\"%.1f\" "
                    "text-anchor=\"middle\" font-size=\"12\">%s</text>\n",
                    x, base, x, base + 5, x, base + 18, b);
        }
    }
    fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" font-size=\"11\" fill=\"#333\">"
            "chance per ", ax.x0, H - 22);
    esc(c, unit_of(c->m));
    fprintf(o, "%s; bar height: share of the draws</text>\n",
            ax.log ? " (logarithmic scale)" : "");
    fputs("</svg>\n<figcaption>Solid line: median; dashed: 5th and 95th "
          "percentiles; dotted: the exact point value.</figcaption>\n"
          "</figure>\n", o);
}

/* ------------------------------------------------------------------ */
/* per hazard: variants side by side                                    */

static void row_for(const lw_report *r, const lw_report_hazard *rh, size_t v,
                    lwr_row *out)
{
    /* v = index in r->variants, or LW_NONE for the baseline */
    memset(out, 0, sizeof *out);
    size_t mv = v == LW_NONE ? LW_NONE : r->variants[v];
    if (lwr_compare_row(r, rh, mv, out))
        return;
    const lw_analysis *b = rh->analysis;
    const lw_analysis *a = v == LW_NONE ? b : rh->variant_analysis[v];
    out->probability = a->probability;
    out->per_year = a->has_exposure ? a->per_year : NAN;
    out->one_in = a->probability > 0 ? 1.0 / a->probability : NAN;
    out->ratio = b->probability > 0 ? a->probability / b->probability : NAN;
    double prevented = b->probability - a->probability;
    out->prevented_per_year = a->has_exposure
                                  ? prevented * r->model->per_year : NAN;
    out->checks_per_prevented = prevented > 0 ? 1.0 / prevented : NAN;
    out->has_mc = false;
}

static void put_variant_chart(ctx *c, const lw_report_hazard *rh,
                              const lwr_row *rows)
{
    FILE *o = c->o;
    const lw_report *r = c->r;
    size_t n = r->nvariants + 1;
    double *v = lw_malloc((4 * n + 1) * sizeof *v);
    if (!v) {
        c->oom = true;
        return;
    }
    size_t k = 0;
    for (size_t i = 0; i < n; i++) {
        v[k++] = rows[i].probability;
        if (rows[i].has_mc) {
            v[k++] = rows[i].p05;
            v[k++] = rows[i].p95;
        }
    }
    const lw_analysis *a = rh->analysis;
    if (a->has_tolerable)
        v[k++] = a->tolerable;
    axis ax = {0, 0, 380, 880, true};
    ax_fit(&ax, v, k, 3);
    lw_free(v);
    const double row_h = 46, y0 = 30;
    double H = y0 + row_h * (double)n + 52, W = 940;
    fputs("<figure>\n", o);
    c->fig++;
    svg_open(c, W, H, "The chance of the hazard with each variant", NULL);
    svg_patterns(c);
    for (size_t i = 0; i < n; i++) {
        double y = y0 + row_h * (double)i + row_h / 2;
        if (i % 2 == 0)
            fprintf(o, "<rect x=\"0\" y=\"%.1f\" width=\"%.1f\" "
                    "height=\"%.1f\" fill=\"#f2f2f2\"/>\n",
                    y - row_h / 2, W, row_h);
        const char *label;
        const char *id;
        if (i == 0) {
            label = "Baseline (the model as it is)";
            id = NULL;
        } else {
            const lw_variant *var = &c->m->variants[r->variants[i - 1]];
            label = var->label && var->label[0] ? var->label : var->id;
            id = var->id;
        }
        lwh_lines l;
        lwh_wrap(label, 56 > LWH_MAX_COLS ? LWH_MAX_COLS : 56, 2, &l);
        fputs("<g><title>", o);
        esc(c, label);
        fputs("</title>\n", o);
        double total = (double)l.n + (id ? 1 : 0);
        double ty = y - (total - 1) * 13 / 2 + 4;
        lwh_svg_lines(o, 8, ty, 13, &l,
                      i == 0 ? "font-size=\"12\" font-weight=\"700\""
                             : "font-size=\"12\"");
        fputs("</g>\n", o);
        if (id) {
            fprintf(o, "<text x=\"8\" y=\"%.1f\" font-size=\"10.5\" "
                    "fill=\"#444\" font-family=\"'DejaVu Sans Mono',"
                    "Consolas,monospace\">", ty + 13 * (double)l.n);
            esc(c, id);
            fputs("</text>\n", o);
        }
        if (rows[i].has_mc && rows[i].p95 > 0) {
            double x1 = ax_x(&ax, rows[i].p05), x2 = ax_x(&ax, rows[i].p95);
            fprintf(o, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" "
                    "y2=\"%.1f\" stroke=\"#666\" stroke-width=\"5\"/>"
                    "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" "
                    "stroke=\"#111\" stroke-width=\"1.5\"/>"
                    "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" "
                    "stroke=\"#111\" stroke-width=\"1.5\"/>\n",
                    x1, y, x2, y, x1, y - 7, x1, y + 7, x2, y - 7, x2,
                    y + 7);
        }
        if (rows[i].probability > 0) {
            double xp = ax_x(&ax, rows[i].probability);
            if (i == 0)
                fprintf(o, "<path d=\"M%.1f,%.1f l8,-8 l8,8 l-8,8 z\" "
                        "fill=\"#111\" stroke=\"#fff\" "
                        "stroke-width=\"1.5\"/>\n", xp - 8, y);
            else
                fprintf(o, "<circle cx=\"%.1f\" cy=\"%.1f\" r=\"6.5\" "
                        "fill=\"#fff\" stroke=\"#111\" "
                        "stroke-width=\"2.5\"/>\n", xp, y);
        }
    }
    double ybot = y0 + row_h * (double)n;
    if (a->has_tolerable && a->tolerable > 0) {
        double xt = ax_x(&ax, a->tolerable);
        fprintf(o, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" "
                "stroke=\"#111\" stroke-width=\"1.6\" "
                "stroke-dasharray=\"6 3\"/>\n", xt, y0 - 8, xt, ybot);
        char b[96];
        lwh_prob(b, sizeof b, a->tolerable);
        fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"middle\" "
                "font-size=\"11\">tolerable %s</text>\n", xt, y0 - 12, b);
    }
    ax_draw(c, &ax, ybot, false);
    fprintf(o, "<text x=\"%.1f\" y=\"%.1f\" font-size=\"11\" fill=\"#333\">"
            "chance per ", ax.x0, H - 6);
    esc(c, unit_of(c->m));
    fputs(" (logarithmic scale)</text>\n</svg>\n<figcaption>Diamond: the "
          "baseline; circles: each variant (exact point values)", o);
    if (rows[0].has_mc)
        fputs("; bars: 90 % range over the same Monte Carlo draws", o);
    fputs(". Further left is safer.</figcaption>\n</figure>\n", o);
}

static void put_cell_sig(ctx *c, double x)
{
    fputs("<td class=\"num\">", c->o);
    if (isfinite(x))
        put_sig(c, x);
    else
        fputs("\u2013", c->o);
    fputs("</td>", c->o);
}

static void put_variants(ctx *c, const lw_report_hazard *rh)
{
    FILE *o = c->o;
    const lw_report *r = c->r;
    const lw_model *m = c->m;
    h3(c, rh->hazard, "variants", "Proposed changes side by side");
    if (r->nvariants == 0) {
        fputs("<p>The model defines no variants to compare.</p>\n", o);
        return;
    }
    size_t n = r->nvariants + 1;
    lwr_row *rows = lw_calloc(n, sizeof *rows);
    if (!rows) {
        c->oom = true;
        return;
    }
    row_for(r, rh, LW_NONE, &rows[0]);
    for (size_t i = 0; i < r->nvariants; i++)
        row_for(r, rh, i, &rows[i + 1]);
    bool mc = rows[0].has_mc;
    fputs("<p>Each variant is a named change written in the model. ", o);
    if (mc)
        fputs("The Monte Carlo columns use the same random draws for the "
              "baseline and every variant (paired samples), so "
              "\u201cchance lower\u201d is the share of draws in which the "
              "variant is safer than the baseline.", o);
    else
        fputs("Figures are exact point values; run with "
              "<code>--samples N</code> for paired uncertainty.", o);
    fputs("</p>\n", o);
    put_variant_chart(c, rh, rows);
    fputs("<table class=\"variants\">\n<thead><tr><th>Variant</th>"
          "<th class=\"num\">Chance</th><th class=\"num\">About</th>"
          "<th class=\"num\">Per year</th><th class=\"num\">Ratio</th>"
          "<th class=\"num\">Prevented a year</th>", o);
    if (mc)
        fputs("<th class=\"num\">Chance lower</th>"
              "<th class=\"num\">Ratio, 90\u2009% range</th>", o);
    fputs("</tr></thead>\n<tbody>\n", o);
    for (size_t i = 0; i < n; i++) {
        const lwr_row *w = &rows[i];
        fputs("<tr><td>", o);
        if (i == 0) {
            fputs("<b>Baseline</b> (as it is)", o);
        } else {
            const lw_variant *var = &m->variants[r->variants[i - 1]];
            esc(c, var->label && var->label[0] ? var->label : var->id);
            fputs(" <span class=\"id\">", o);
            esc(c, var->id);
            fputs("</span>", o);
        }
        fputs("</td><td class=\"num\">", o);
        put_prob(c, w->probability);
        fputs("</td><td class=\"num\">", o);
        put_one_in(c, w->probability);
        fputs("</td>", o);
        put_cell_sig(c, w->per_year);
        if (i == 0) {
            fputs("<td class=\"num\">1</td><td class=\"num\">\u2013</td>", o);
            if (mc)
                fputs("<td class=\"num\">\u2013</td>"
                      "<td class=\"num\">\u2013</td>", o);
        } else {
            put_cell_sig(c, w->ratio);
            put_cell_sig(c, w->prevented_per_year);
            if (mc) {
                fputs("<td class=\"num\">", o);
                put_pct(c, w->prob_better);
                fputs("</td><td class=\"num\">", o);
                put_sig(c, w->ratio_p05);
                fputs(" \u2013 ", o);
                put_sig(c, w->ratio_p95);
                fputs("</td>", o);
            }
        }
        fputs("</tr>\n", o);
    }
    fputs("</tbody>\n</table>\n<p class=\"small\">Chance: per ", o);
    esc(c, unit_of(m));
    fputs(". Ratio: the variant's chance divided by the baseline's (below 1 "
          "the variant lowers it). Prevented a year: expected events a year "
          "avoided (negative: added). A variant that helps on paper must "
          "still be judged for delay, workload and workarounds.</p>\n", o);
    lw_free(rows);
}

/* ------------------------------------------------------------------ */
/* inputs and evidence                                                  */

/* Beta quantile by bisection on the CDF: GSL's inverse can fail to
 * converge (and its default handler aborts) for some shapes. */
static double beta_quantile(double f, double a, double b)
{
    double lo = 0, hi = 1;
    for (int i = 0; i < 80; i++) {
        double mid = (lo + hi) / 2;
        if (gsl_cdf_beta_P(mid, a, b) < f)
            lo = mid;
        else
            hi = mid;
    }
    return (lo + hi) / 2;
}

static void put_dist(ctx *c, const lw_node *n)
{
    FILE *o = c->o;
    const lw_dist *d = &n->dist;
    switch (d->kind) {
    case LW_DIST_POINT:
        fputs("single value (no uncertainty given)", o);
        break;
    case LW_DIST_LOGNORMAL: {
        /* mean p and error factor EF: sigma = ln EF / 1.6448536,
         * median = mean exp(-sigma^2 / 2), 5th = median / EF,
         * 95th = median EF (NUREG/CR-6823) */
        double s = log(d->ef) / 1.6448536269514722;
        double med = d->p * exp(-s * s / 2);
        fputs("lognormal, mean ", o);
        put_prob(c, d->p);
        fputs(", error factor ", o);
        put_sig(c, d->ef);
        fputs("<br/><span class=\"small\">median ", o);
        put_prob(c, med);
        fputs("; 90 % range ", o);
        put_prob(c, med / d->ef);
        fputs(" \u2013 ", o);
        put_prob(c, med * d->ef > 1 ? 1 : med * d->ef);
        fputs("</span>", o);
        break;
    }
    case LW_DIST_BETA:
        fputs("beta(", o);
        put_sig(c, d->a);
        fputs(", ", o);
        put_sig(c, d->b);
        fputs("), mean ", o);
        put_prob(c, d->p);
        if (d->a > 0 && d->b > 0) {
            fputs("<br/><span class=\"small\">90 % range ", o);
            put_prob(c, beta_quantile(0.05, d->a, d->b));
            fputs(" \u2013 ", o);
            put_prob(c, beta_quantile(0.95, d->a, d->b));
            fputs("</span>", o);
        }
        break;
    case LW_DIST_UNIFORM:
        fputs("uniform from ", o);
        put_prob(c, d->low);
        fputs(" to ", o);
        put_prob(c, d->high);
        break;
    case LW_DIST_OBSERVED: {
        lw_estimate e;
        lw_estimate_counts(d->count, d->of, &e);
        fputs("observed: ", o);
        put_sig(c, d->count);
        fputs(" of ", o);
        put_sig(c, d->of);
        fputs("<br/><span class=\"small\">Jeffreys mean ", o);
        put_prob(c, e.mean);
        fputs("; Clopper-Pearson 95 % ", o);
        put_prob(c, e.ci_lo);
        fputs(" \u2013 ", o);
        put_prob(c, e.ci_hi);
        if (e.zero) {
            fputs("; none seen: rule of three gives at most ", o);
            put_prob(c, e.rule_of_three);
        }
        fputs("</span>", o);
        break;
    }
    }
}

static void put_inputs(ctx *c)
{
    FILE *o = c->o;
    const lw_model *m = c->m;
    fputs("<section class=\"inputs\" id=\"inputs\">\n<h2>Inputs and their "
          "evidence</h2>\n<p>Every event of the model as written (before any "
          "variant), with the value the analysis uses, what is known of its "
          "uncertainty, and where it comes from. Error probabilities are per ",
          o);
    esc(c, unit_of(m));
    fputs("; a safeguard's probability is the chance that it misses an "
          "error that reaches it.</p>\n", o);
    fputs("<table class=\"inputs\">\n<thead><tr><th>Event</th><th>Kind</th>"
          "<th class=\"num\">Value used</th><th>Uncertainty</th>"
          "<th>Evidence and source</th></tr></thead>\n<tbody>\n", o);
    for (size_t i = 0; i < m->nnodes; i++) {
        const lw_node *n = &m->nodes[i];
        if (!lw_node_is_event(n->kind))
            continue;
        fputs("<tr><td>", o);
        esc(c, lw_node_text(n));
        fputs("<br/><span class=\"id\">", o);
        esc(c, n->id);
        fputs("</span></td><td>", o);
        fputs(n->kind == LW_NODE_ERROR ? "error"
              : n->kind == LW_NODE_SAFEGUARD ? "safeguard" : "condition", o);
        fputs("</td><td class=\"num\">", o);
        if (n->kind == LW_NODE_CONDITION) {
            fputs(n->state ? "true" : "false", o);
            fputs("</td><td>a switch (house event), fixed", o);
        } else {
            if (n->kind == LW_NODE_SAFEGUARD && !n->present) {
                fputs("1<br/><span class=\"small\">absent at baseline; ", o);
                put_prob(c, n->dist.p);
                fputs(" when present</span>", o);
            } else {
                put_prob(c, n->dist.p);
            }
            fputs("</td><td>", o);
            put_dist(c, n);
        }
        fputs("</td><td class=\"small\">", o);
        bool any = false;
        if (n->source && n->source[0]) {
            esc(c, n->source);
            any = true;
        }
        if (n->dist.kind == LW_DIST_OBSERVED && n->dist.source &&
            n->dist.source[0] &&
            !(n->source && !strcmp(n->source, n->dist.source))) {
            if (any)
                fputs("<br/>", o);
            fputs("Counts: ", o);
            esc(c, n->dist.source);
            any = true;
        }
        if (!any)
            fputs("<i>no source given</i>", o);
        fputs("</td></tr>\n", o);
    }
    fputs("</tbody>\n</table>\n", o);

    if (m->ngroups) {
        fputs("<h3>Common-cause groups (beta factor)</h3>\n<p>Members of a "
              "group can all miss from one shared cause. The shared part has "
              "chance \u03b2 \u00d7 the smallest member probability; each "
              "member keeps its own total chance.</p>\n<table>\n<thead><tr>"
              "<th>Group</th><th class=\"num\">\u03b2</th><th>Members</th>"
              "</tr></thead>\n<tbody>\n", o);
        for (size_t g = 0; g < m->ngroups; g++) {
            const lw_group *gr = &m->groups[g];
            fputs("<tr><td>", o);
            esc(c, gr->label && gr->label[0] ? gr->label : gr->id);
            fputs("<br/><span class=\"id\">", o);
            esc(c, gr->id);
            fputs("</span></td><td class=\"num\">", o);
            put_sig(c, gr->beta);
            fputs("</td><td>", o);
            for (size_t k = 0; k < gr->nmembers; k++) {
                if (k)
                    fputs("<br/>", o);
                const lw_node *mem = &m->nodes[gr->members[k]];
                esc(c, lw_node_text(mem));
                fputs(" <span class=\"id\">", o);
                esc(c, mem->id);
                fputs("</span>", o);
            }
            fputs("</td></tr>\n", o);
        }
        fputs("</tbody>\n</table>\n", o);
    }
    if (m->ndeps) {
        fputs("<h3>Dependence between checks (THERP levels)</h3>\n<p>The "
              "second check is more likely to miss when the first one "
              "missed. Conditional miss probability c = p + w(1 \u2212 p) "
              "with w = 0, 1/20, 1/7, 1/2, 1 for zero, low, moderate, high "
              "and complete dependence (NUREG/CR-1278, ch. 10).</p>\n"
              "<table>\n<thead><tr><th>First check</th><th>Second check</th>"
              "<th>Level</th><th class=\"num\">Second misses alone</th>"
              "<th class=\"num\">Second misses after the first missed</th>"
              "</tr></thead>\n<tbody>\n", o);
        for (size_t k = 0; k < m->ndeps; k++) {
            const lw_dependence *d = &m->deps[k];
            const lw_node *a = &m->nodes[d->first], *b = &m->nodes[d->second];
            double p = b->dist.p, w = lw_level_weight(d->level);
            fputs("<tr><td>", o);
            esc(c, lw_node_text(a));
            fputs(" <span class=\"id\">", o);
            esc(c, a->id);
            fputs("</span></td><td>", o);
            esc(c, lw_node_text(b));
            fputs(" <span class=\"id\">", o);
            esc(c, b->id);
            fputs("</span></td><td>", o);
            esc(c, lw_level_name(d->level));
            fputs("</td><td class=\"num\">", o);
            put_prob(c, p);
            fputs("</td><td class=\"num\">", o);
            put_prob(c, p + w * (1 - p));
            fputs("</td></tr>\n", o);
        }
        fputs("</tbody>\n</table>\n", o);
    }
    if (m->nvariants) {
        fputs("<h3>Variants: what each one changes</h3>\n"
              "<table class=\"changes\">\n<thead><tr>"
              "<th>Variant</th><th>Changes</th></tr></thead>\n<tbody>\n", o);
        for (size_t v = 0; v < m->nvariants; v++) {
            const lw_variant *var = &m->variants[v];
            fputs("<tr><td>", o);
            esc(c, var->label && var->label[0] ? var->label : var->id);
            fputs("<br/><span class=\"id\">", o);
            esc(c, var->id);
            fputs("</span></td><td>", o);
            for (size_t s = 0; s < var->nsets; s++) {
                const lw_set *st = &var->sets[s];
                if (s)
                    fputs("<br/>", o);
                const char *tid;
                if (st->target_kind == LW_TARGET_NODE)
                    tid = m->nodes[st->target].id;
                else if (st->target_kind == LW_TARGET_GROUP)
                    tid = m->groups[st->target].id;
                else
                    tid = m->deps[st->target].id;
                fputs("<span class=\"id\">", o);
                esc(c, tid ? tid : "(dependence)");
                fputs("</span>: ", o);
                switch (st->attr) {
                case LW_SET_P:
                    fputs("probability \u2192 ", o);
                    put_prob(c, st->number);
                    break;
                case LW_SET_PRESENT:
                    fputs(st->flag ? "put in place" : "removed", o);
                    break;
                case LW_SET_STATE:
                    fputs(st->flag ? "switched on (true)"
                                   : "switched off (false)", o);
                    break;
                case LW_SET_BETA:
                    fputs("\u03b2 \u2192 ", o);
                    put_sig(c, st->number);
                    break;
                case LW_SET_LEVEL:
                    fputs("dependence level \u2192 ", o);
                    esc(c, lw_level_name(st->level));
                    break;
                }
            }
            if (!var->nsets)
                fputs("(no change)", o);
            fputs("</td></tr>\n", o);
        }
        fputs("</tbody>\n</table>\n", o);
    }
    fputs("</section>\n", o);
}

/* ------------------------------------------------------------------ */
/* cautions and footer                                                  */

static void put_cautions(ctx *c)
{
    fputs("<section class=\"cautions\" id=\"cautions\">\n<h2>Cautions</h2>\n"
          "<ol class=\"cautions\">\n"
          "<li><b>Decision support only.</b> Nothing in this report is a "
          "clinical instruction, a compliance finding or an approval. It "
          "informs the institution's safety review; it does not replace "
          "it.</li>\n"
          "<li><b>The numbers are model estimates.</b> They depend on the "
          "structure of the model and on input probabilities that are often "
          "uncertain by a factor of ten or more. The exact computation "
          "removes arithmetic error, not modelling error. Read the ranges, "
          "not only the point values, and state the assumptions with the "
          "figures.</li>\n"
          "<li><b>Local policy comes first.</b> Follow local policy, national "
          "guidance, accreditation requirements and the judgement of licensed "
          "practitioners. Where a figure and a rule disagree, the rule stands "
          "until the responsible body changes it.</li>\n"
          "<li><b>Never judge individuals.</b> Miss probabilities describe "
          "layers of a system under its working conditions. They must not be "
          "used to rate, rank, discipline or blame staff; that would also "
          "destroy the reporting the estimates depend on.</li>\n"
          "<li><b>No reported events is not no risk.</b> Incident and "
          "near-miss logs under-report. Zero events in an audit gives an "
          "upper bound (about 3 in the number observed), not a zero.</li>\n"
          "<li><b>Checks must not delay time-critical care.</b> An extra "
          "layer costs time, workload and alarm fatigue and invites "
          "workarounds; a modelled benefit does not show that a check is safe "
          "to add where minutes matter.</li>\n"
          "<li><b>Dependence is usually underestimated.</b> Checks done "
          "together or fed by the same source fail together more often than "
          "independent layers would. Where in doubt, model the dependence and "
          "see how much the answer moves.</li>\n"
          "</ol>\n</section>\n", c->o);
}

static void put_footer(ctx *c)
{
    FILE *o = c->o;
    fputs("<footer>\n<p class=\"caution\">Caution: ", o);
    esc(c, lw_caution());
    fprintf(o, "</p>\n<p>Prepared with layerwise %s. This file is "
            "self-contained: no scripts, and nothing is loaded from a "
            "network.</p>\n</footer>\n</body>\n</html>\n", lw_version());
}

/* ------------------------------------------------------------------ */

lw_status lw_report_write_html(FILE *out, const lw_report *r, lw_error *err)
{
    ctx c = {out, r, r->model, 0, false};
    put_head(&c);
    put_cover(&c);
    put_toc(&c);
    fputs("<main>\n", out);
    put_about(&c);
    for (size_t i = 0; i < r->nhazards; i++) {
        const lw_report_hazard *rh = &r->hazards[i];
        const lw_node *h = hazard_node(c.m, rh->hazard);
        fputs("<section class=\"hazard\" id=\"h-", out);
        esc(&c, h->id);
        fputs("\">\n<h2>Hazard: ", out);
        esc(&c, lw_node_text(h));
        fputs(" <span class=\"id\">", out);
        esc(&c, h->id);
        fputs("</span></h2>\n", out);
        put_summary(&c, rh);
        put_paths(&c, rh);
        put_importance(&c, rh);
        put_cut_sets(&c, rh);
        put_uncertainty(&c, rh);
        put_variants(&c, rh);
        fputs("</section>\n", out);
    }
    put_scope(&c);
    put_inputs(&c);
    put_cautions(&c);
    fputs("</main>\n", out);
    put_footer(&c);
    if (c.oom)
        return lw_error_oom(err);
    if (ferror(out))
        return lw_error_set(err, LW_EIO, NULL, 0,
                            "could not write the report");
    return LW_OK;
}
