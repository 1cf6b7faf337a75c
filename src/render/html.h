/*
 * html.h - helpers for the HTML report and its inline SVG (render room,
 * private).
 *
 * Everything that comes from a model goes through lwh_esc, which turns
 * the five characters & < > " ' into entities, so the text is inert in
 * HTML text, in attribute values and in SVG <text> alike.
 */
#ifndef LW_RENDER_HTML_H
#define LW_RENDER_HTML_H

#include <stddef.h>
#include <stdio.h>

/* Write 's' (NULL writes nothing) escaped for HTML/XML text or a quoted
 * attribute.  Control characters other than tab and newline are dropped. */
void lwh_esc(FILE *out, const char *s);
/* The same for at most 'n' bytes of 's'. */
void lwh_esc_n(FILE *out, const char *s, size_t n);

/* A probability for people: 0.154, 0.00236, or 3.41 × 10⁻⁵ (Unicode
 * superscripts, so it reads the same in HTML and SVG). */
void lwh_prob(char *buf, size_t n, double p);
/* A percentage with sensible digits: 35 %, 4.2 %, 0.31 %,
 * "under 0.01 %".  Plain text (no markup). */
void lwh_pct(char *buf, size_t n, double share);

/* Text wrapped into at most LWH_MAX_LINES lines of at most 'cols'
 * characters (UTF-8 code points), broken at spaces; a word longer than
 * a line is cut.  When the text does not fit, the last line ends in an
 * ellipsis and 'cut' is set. */
#define LWH_MAX_LINES 6
#define LWH_MAX_COLS 48
typedef struct lwh_lines {
    size_t n;
    int cut;
    char line[LWH_MAX_LINES][LWH_MAX_COLS * 4 + 4];
} lwh_lines;

void lwh_wrap(const char *s, size_t cols, size_t maxlines, lwh_lines *out);

/* Number of UTF-8 code points in 's'. */
size_t lwh_utf8_len(const char *s);

/* SVG <text> lines at (x, y), one <tspan> per line 'lh' apart; 'attrs'
 * is trusted attribute text (anchor, size, weight). */
void lwh_svg_lines(FILE *out, double x, double y, double lh,
                   const lwh_lines *l, const char *attrs);

#endif
