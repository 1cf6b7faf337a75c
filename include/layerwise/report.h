/*
 * layerwise/report.h - the render room: the committee report (HTML) and
 * the tree diagram (DOT, and SVG through Graphviz's dot program).
 *
 * The report is one self-contained HTML5 file: inline CSS and inline SVG,
 * no script, no font, image or link that loads anything.  It is also
 * well-formed XML (void elements closed, only the five XML entities and
 * numeric character references), so XML tools can read it.  Every piece
 * of text that comes from the model is escaped.
 *
 * lw_report_build runs the questions the report answers (analyze for each
 * hazard; Monte Carlo uncertainty and the comparison of variants when
 * asked) and keeps the results; lw_report_write_html prints them.
 */
#ifndef LAYERWISE_REPORT_H
#define LAYERWISE_REPORT_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#include "layerwise/analysis.h"
#include "layerwise/error.h"
#include "layerwise/model.h"

#ifdef __cplusplus
extern "C" {
#endif

struct lw_uncertainty;
struct lw_comparison;

typedef struct lw_report_options {
    size_t paths;           /* error paths drawn per hazard (0 = 8) */
    size_t cut_sets;        /* rows of the cut-set table (0 = 20) */
    size_t bars;            /* bars of the importance chart (0 = 12) */
    bool monte_carlo;       /* run uncertainty and paired comparison */
    size_t samples;         /* Monte Carlo samples (0 = the default) */
    unsigned long long seed;
    int threads;            /* 0 or 1 = one thread */
    bool all_variants;      /* no variant list given: compare them all */
    const char *source_name;    /* model file name shown, or NULL */
    const char *generated;      /* date/time text for the header, or NULL */
} lw_report_options;

void lw_report_options_init(lw_report_options *o);

/* What the report says about one hazard. */
typedef struct lw_report_hazard {
    size_t hazard;                      /* index into model->hazards */
    lw_analysis *analysis;              /* baseline, owned */
    struct lw_uncertainty *uncertainty; /* owned, NULL when not run */
    struct lw_comparison *comparison;   /* owned, NULL when not run */
    lw_analysis **variant_analysis;     /* per listed variant (point
                                           values), owned */
} lw_report_hazard;

typedef struct lw_report {
    const lw_model *model;              /* borrowed */
    lw_options opt;                     /* analysis options used */
    lw_report_options ro;               /* copy (strings borrowed) */
    size_t nvariants;
    size_t *variants;                   /* variant indices compared */
    size_t nhazards;
    lw_report_hazard *hazards;
} lw_report;

/* Run everything the report needs for the given hazards (indices into
 * model->hazards) and variants (indices into model->variants; with none
 * given and ro->all_variants set, every variant of the model). */
lw_status lw_report_build(const lw_model *m, const size_t *hazards,
                          size_t nhazards, const size_t *variants,
                          size_t nvariants, const lw_options *opt,
                          const lw_report_options *ro, lw_report **out,
                          lw_error *err);
void lw_report_free(lw_report *r);

/* Print the report as one HTML5 document.  LW_EIO when writing fails. */
lw_status lw_report_write_html(FILE *out, const lw_report *r,
                               lw_error *err);

/* ---- the tree diagram -------------------------------------------------- */

typedef struct lw_diagram_options {
    size_t hazard;          /* LW_NONE = every hazard */
    size_t variant;         /* LW_NONE = the baseline */
} lw_diagram_options;

/* The model (or one hazard's part of it) as a Graphviz digraph: one DOT
 * node per model node, drawn once however often it is used; gates with
 * the IEC 61025 rectangular marks (&, >=1, k/n), basic events as circles
 * showing their probability (and common-cause group), conditions as
 * house shapes, hazards as rectangles; dependences as dashed arrows. */
lw_status lw_render_dot(FILE *out, const lw_model *m,
                        const lw_diagram_options *o, lw_error *err);

/* Lay out DOT text with Graphviz: run 'program' (NULL = "dot", looked up
 * on PATH) as a separate process with "-Tsvg", DOT on its standard input,
 * and collect the SVG from its standard output.  No shell is involved.
 * LW_EIO with a message naming the program when it cannot be run (not
 * installed) or when it fails.  *svg (NUL-terminated, lw_free) on success. */
lw_status lw_dot_to_svg(const char *dot, size_t len, const char *program,
                        char **svg, size_t *svg_len, lw_error *err);

#ifdef __cplusplus
}
#endif
#endif
