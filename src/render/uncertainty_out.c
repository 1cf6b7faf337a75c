/*
 * uncertainty_out.c - uncertainty, compare and sweep results as text,
 * JSON and CSV.
 */
#include "layerwise/render_mc.h"

#include <math.h>
#include <stdint.h>
#include <string.h>

#include "layerwise/render.h"

static const char *unit_of(const lw_model *m)
{
    return m->exposure_unit && m->exposure_unit[0] ? m->exposure_unit
                                                   : "exposure unit";
}

static json_t *hazard_json(const lw_model *m, size_t hazard)
{
    const lw_node *h = &m->nodes[m->hazards[hazard]];
    json_t *o = json_object();
    json_object_set_new(o, "id", json_string(h->id));
    json_object_set_new(o, "label", h->label ? json_string(h->label)
                                             : json_null());
    return o;
}

/* The seed as an integer (a real past 2^63, where JSON integers stop). */
static json_t *seed_json(uint64_t seed)
{
    if (seed <= (uint64_t)INT64_MAX)
        return json_integer((json_int_t)seed);
    return json_real((double)seed);
}

static json_t *variant_json(const lw_model *m, size_t v)
{
    return v == LW_NONE ? json_null() : json_string(m->variants[v].id);
}

static void header_text(FILE *out, const lw_model *m, size_t hazard,
                        size_t variant)
{
    const lw_node *h = &m->nodes[m->hazards[hazard]];
    fprintf(out, "Hazard %s: %s\n", h->id, lw_node_text(h));
    fprintf(out, "Model %s%s%s%s\n", m->id ? m->id : "",
            m->title ? ": " : "", m->title ? m->title : "",
            variant == LW_NONE ? ", as it is (baseline)" : "");
    if (variant != LW_NONE)
        fprintf(out, "Variant %s: %s\n", m->variants[variant].id,
                m->variants[variant].label ? m->variants[variant].label
                                           : "");
}

/* "12,345" for a count. */
static void fmt_count(char *buf, size_t n, size_t x)
{
    char d[32];
    snprintf(d, sizeof d, "%zu", x);
    size_t len = strlen(d), o = 0;
    for (size_t i = 0; i < len && o + 2 < n; i++) {
        buf[o++] = d[i];
        size_t left = len - i - 1;
        if (left && left % 3 == 0 && o + 2 < n)
            buf[o++] = ',';
    }
    buf[o] = '\0';
}

static void fmt_pct(char *buf, size_t n, double share)
{
    double pc = 100.0 * share;
    if (pc > 0 && pc < 1)
        snprintf(buf, n, "%.1f %%", pc);
    else if (pc > 99 && pc < 100)
        snprintf(buf, n, "%.1f %%", pc);
    else
        snprintf(buf, n, "%.0f %%", pc);
}

/* ---- estimates from counts ------------------------------------------ */

json_t *lw_observed_json(const lw_model *m, const lw_observed_info *o,
                         size_t n)
{
    json_t *arr = json_array();
    for (size_t i = 0; arr && i < n; i++) {
        const lw_node *nd = &m->nodes[o[i].node];
        const lw_estimate *e = &o[i].est;
        json_t *r = json_object();
        json_object_set_new(r, "id", json_string(nd->id));
        json_object_set_new(r, "label", nd->label ? json_string(nd->label)
                                                  : json_null());
        json_object_set_new(r, "count", json_real(e->count));
        json_object_set_new(r, "of", json_real(e->of));
        json_object_set_new(r, "estimate", json_real(e->mean));
        json_object_set_new(r, "jeffreys_mean", json_real(e->mean));
        json_t *ci = json_array();
        json_array_append_new(ci, json_real(e->ci_lo));
        json_array_append_new(ci, json_real(e->ci_hi));
        json_object_set_new(r, "ci95", ci);
        json_object_set_new(r, "ci95_method", json_string("Clopper-Pearson"));
        json_t *jf = json_array();
        json_array_append_new(jf, json_real(o[i].jeffreys_lo));
        json_array_append_new(jf, json_real(o[i].jeffreys_hi));
        json_object_set_new(r, "jeffreys_95", jf);
        json_object_set_new(r, "rule_of_three",
                            lw_json_number(e->rule_of_three, e->zero));
        json_object_set_new(r, "source", nd->dist.source
                                             ? json_string(nd->dist.source)
                                             : json_null());
        json_array_append_new(arr, r);
    }
    return arr;
}

void lw_render_observed_text(FILE *out, const lw_model *m,
                             const lw_observed_info *o, size_t n)
{
    if (!n)
        return;
    fputs("Estimates from audit counts (each sampled as Beta(count + 1/2, "
          "of - count + 1/2)):\n", out);
    for (size_t i = 0; i < n; i++) {
        const lw_node *nd = &m->nodes[o[i].node];
        const lw_estimate *e = &o[i].est;
        char b1[32], b2[32], b3[32];
        lw_fmt_sig(b1, sizeof b1, e->mean);
        lw_fmt_sig(b2, sizeof b2, e->ci_lo);
        lw_fmt_sig(b3, sizeof b3, e->ci_hi);
        fprintf(out, "  %s: %.0f missed of %.0f; estimate (Jeffreys mean) "
                "%s, 95 %% interval (Clopper-Pearson) %s to %s\n", nd->id,
                e->count, e->of, b1, b2, b3);
        if (e->zero) {
            lw_fmt_sig(b1, sizeof b1, e->rule_of_three);
            fprintf(out, "    no miss seen: by the rule of three the miss "
                    "rate is below about %s (3 / %.0f) with 95 %% "
                    "confidence\n", b1, e->of);
        }
        if (nd->dist.source)
            fprintf(out, "    counts from: %s\n", nd->dist.source);
    }
}

/* ---- uncertainty ------------------------------------------------------ */

json_t *lw_uncertainty_json(const lw_model *m, const lw_uncertainty *u)
{
    json_t *o = json_object();
    if (!o)
        return NULL;
    json_object_set_new(o, "hazard", hazard_json(m, u->hazard));
    json_object_set_new(o, "variant", variant_json(m, u->variant));
    json_object_set_new(o, "samples", json_integer((json_int_t)u->samples));
    json_object_set_new(o, "seed", seed_json(u->seed));
    json_object_set_new(o, "point", json_real(u->point));
    json_object_set_new(o, "mean", json_real(u->mean));
    json_object_set_new(o, "sd", json_real(u->sd));
    json_object_set_new(o, "p05", json_real(u->p05));
    json_object_set_new(o, "p50", json_real(u->p50));
    json_object_set_new(o, "p95", json_real(u->p95));
    json_object_set_new(o, "min", json_real(u->min));
    json_object_set_new(o, "max", json_real(u->max));
    json_object_set_new(o, "uncertain_events",
                        json_integer((json_int_t)u->nuncertain));
    if (u->has_exposure) {
        json_t *py = json_object();
        json_object_set_new(py, "exposures", json_real(m->per_year));
        json_object_set_new(py, "unit", json_string(unit_of(m)));
        json_object_set_new(py, "point", json_real(u->point * m->per_year));
        json_object_set_new(py, "mean", json_real(u->per_year_mean));
        json_object_set_new(py, "p05", json_real(u->per_year_p05));
        json_object_set_new(py, "p50", json_real(u->per_year_p50));
        json_object_set_new(py, "p95", json_real(u->per_year_p95));
        json_object_set_new(o, "per_year", py);
    } else {
        json_object_set_new(o, "per_year", json_null());
    }
    json_object_set_new(o, "tolerable",
                        lw_json_number(u->tolerable, u->has_tolerable));
    json_object_set_new(o, "prob_above_tolerable",
                        lw_json_number(u->prob_above_tolerable,
                                       u->has_tolerable));
    json_t *hist = json_object();
    json_object_set_new(hist, "scale", json_string("log10"));
    json_object_set_new(hist, "zeros", json_integer((json_int_t)u->zeros));
    json_t *bins = json_array();
    for (size_t b = 0; b < u->nbins; b++) {
        json_t *r = json_object();
        json_object_set_new(r, "lo", json_real(u->bin_lo[b]));
        json_object_set_new(r, "hi", json_real(u->bin_hi[b]));
        json_object_set_new(r, "count", json_integer((json_int_t)
                                                     u->bin_count[b]));
        json_array_append_new(bins, r);
    }
    json_object_set_new(hist, "bins", bins);
    json_object_set_new(o, "histogram", hist);
    json_object_set_new(o, "observed",
                        lw_observed_json(m, u->observed, u->nobserved));
    json_object_set_new(o, "warnings", lw_json_warnings(m));
    json_object_set_new(o, "caution", json_string(lw_caution()));
    return o;
}

static void histogram_text(FILE *out, const lw_model *m,
                           const lw_uncertainty *u)
{
    if (!u->nbins)
        return;
    size_t mx = 1;
    for (size_t b = 0; b < u->nbins; b++)
        if (u->bin_count[b] > mx)
            mx = u->bin_count[b];
    fprintf(out, "How the samples spread (chance per %s, log scale):\n",
            unit_of(m));
    for (size_t b = 0; b < u->nbins; b++) {
        char lo[32], hi[32], cnt[32], bar[48];
        lw_fmt_prob(lo, sizeof lo, u->bin_lo[b]);
        lw_fmt_prob(hi, sizeof hi, u->bin_hi[b]);
        fmt_count(cnt, sizeof cnt, u->bin_count[b]);
        size_t w = (size_t)llround(40.0 * (double)u->bin_count[b] /
                                   (double)mx);
        if (w == 0 && u->bin_count[b])
            w = 1;
        memset(bar, '#', w);
        bar[w] = '\0';
        fprintf(out, "  %9s to %-9s |%-40s %s\n", lo, hi, bar, cnt);
    }
    if (u->zeros) {
        char cnt[32];
        fmt_count(cnt, sizeof cnt, u->zeros);
        fprintf(out, "  (and %s samples in which the hazard cannot happen)\n",
                cnt);
    }
    fputc('\n', out);
}

void lw_render_uncertainty_text(FILE *out, const lw_model *m,
                                const lw_uncertainty *u)
{
    char b1[64], b2[64], b3[64], b4[64];
    header_text(out, m, u->hazard, u->variant);
    fmt_count(b1, sizeof b1, u->samples);
    fprintf(out, "Uncertainty: %s Monte Carlo samples, seed %llu; %zu "
            "event%s with a stated distribution\n\n", b1,
            (unsigned long long)u->seed, u->nuncertain,
            u->nuncertain == 1 ? "" : "s");
    if (u->nuncertain == 0)
        fputs("  (no event has a distribution, so every sample equals the "
              "point value)\n\n", out);

    fprintf(out, "  Chance per %s\n", unit_of(m));
    lw_fmt_prob(b1, sizeof b1, u->point);
    fprintf(out, "    at the stated values (point)   %-10s", b1);
    if (u->point > 0) {
        lw_fmt_one_in(b2, sizeof b2, 1.0 / u->point);
        fprintf(out, "(about 1 in %s)", b2);
    }
    fputc('\n', out);
    lw_fmt_prob(b1, sizeof b1, u->mean);
    fprintf(out, "    mean of the samples            %s\n", b1);
    lw_fmt_prob(b1, sizeof b1, u->p50);
    fprintf(out, "    middle value (p50)             %-10s", b1);
    if (u->p50 > 0) {
        lw_fmt_one_in(b2, sizeof b2, 1.0 / u->p50);
        fprintf(out, "(about 1 in %s)", b2);
    }
    fputc('\n', out);
    lw_fmt_prob(b1, sizeof b1, u->p05);
    lw_fmt_prob(b2, sizeof b2, u->p95);
    fprintf(out, "    90 %% range (p05 to p95)        %s to %s\n", b1, b2);
    lw_fmt_prob(b1, sizeof b1, u->sd);
    fprintf(out, "    standard deviation             %s\n", b1);
    if (u->p05 > 0) {
        lw_fmt_sig(b1, sizeof b1, u->p95 / u->p05);
        fprintf(out, "    spread (p95 / p05)             %s-fold\n", b1);
    }
    fputc('\n', out);
    if (u->has_exposure) {
        lw_fmt_sig(b1, sizeof b1, m->per_year);
        fprintf(out, "  Per year, at %s a year (%s):\n", b1, unit_of(m));
        lw_fmt_sig(b1, sizeof b1, u->per_year_p05);
        lw_fmt_sig(b2, sizeof b2, u->per_year_p95);
        lw_fmt_sig(b3, sizeof b3, u->per_year_p50);
        lw_fmt_sig(b4, sizeof b4, u->per_year_mean);
        fprintf(out, "    somewhere between %s and %s a year (9 samples in "
                "10 fall in this range);\n    middle value %s a year, mean "
                "%s a year\n", b1, b2, b3, b4);
        if (u->per_year_p05 > 0 && u->per_year_p95 < 1) {
            lw_fmt_sig(b1, sizeof b1, 1.0 / u->per_year_p95);
            lw_fmt_sig(b2, sizeof b2, 1.0 / u->per_year_p05);
            fprintf(out, "    that is, one event every %s to %s years\n",
                    b1, b2);
        } else if (u->per_year_p05 >= 1) {
            lw_fmt_sig(b1, sizeof b1, 365.25 / u->per_year_p95);
            lw_fmt_sig(b2, sizeof b2, 365.25 / u->per_year_p05);
            fprintf(out, "    that is, one event every %s to %s days\n",
                    b1, b2);
        }
        fputc('\n', out);
    } else {
        fputs("  (no <exposure> in the model: add one for per-year "
              "figures)\n\n", out);
    }
    if (u->has_tolerable) {
        lw_fmt_prob(b1, sizeof b1, u->tolerable);
        fmt_pct(b2, sizeof b2, u->prob_above_tolerable);
        fprintf(out, "  Tolerable level %s: exceeded in %s of the samples\n\n",
                b1, b2);
    }
    histogram_text(out, m, u);
    lw_render_observed_text(out, m, u->observed, u->nobserved);
    if (u->nobserved)
        fputc('\n', out);
    fputs("How to read this: each sample draws every uncertain probability "
          "from its stated\ndistribution and recomputes the exact hazard "
          "chance. The range shows how sure\nthe model's inputs allow us "
          "to be; it does not cover errors in the model's\nstructure. The "
          "mean is the best single figure for planning; the point value\n"
          "uses the stated values as they are.\n", out);
    for (size_t i = 0; i < m->nwarnings; i++)
        fprintf(out, "warning: %s\n", m->warnings[i]);
}

/* ---- compare ------------------------------------------------------------ */

static json_t *row_json(const lw_model *m, const lw_comparison *c,
                        const lw_compare_row *r, bool base)
{
    bool ex = c->has_exposure;
    json_t *o = json_object();
    if (!base) {
        const lw_variant *v = &m->variants[r->variant];
        json_object_set_new(o, "id", json_string(v->id));
        json_object_set_new(o, "label", v->label ? json_string(v->label)
                                                 : json_null());
    }
    json_object_set_new(o, "probability", json_real(r->probability));
    json_object_set_new(o, "per_year", lw_json_number(r->per_year, ex));
    json_object_set_new(o, "one_in",
                        lw_json_number(r->one_in, r->probability > 0));
    if (!base) {
        json_object_set_new(o, "ratio", lw_json_number(r->ratio, true));
        json_object_set_new(o, "prevented_per_year",
                            lw_json_number(r->prevented_per_year, ex));
        json_object_set_new(o, "checks_per_prevented",
                            lw_json_number(r->checks_per_prevented,
                                           r->reduces));
        json_object_set_new(o, "prob_better", json_real(r->prob_better));
        json_object_set_new(o, "prob_worse", json_real(r->prob_worse));
    }
    json_object_set_new(o, "mean", json_real(r->mean));
    json_object_set_new(o, "sd", json_real(r->sd));
    json_object_set_new(o, "p05", json_real(r->p05));
    json_object_set_new(o, "p50", json_real(r->p50));
    json_object_set_new(o, "p95", json_real(r->p95));
    if (!base) {
        json_object_set_new(o, "ratio_p05", lw_json_number(r->ratio_p05, 1));
        json_object_set_new(o, "ratio_p50", lw_json_number(r->ratio_p50, 1));
        json_object_set_new(o, "ratio_p95", lw_json_number(r->ratio_p95, 1));
        json_object_set_new(o, "prevented_per_year_p05",
                            lw_json_number(r->prevented_p05, ex));
        json_object_set_new(o, "prevented_per_year_p95",
                            lw_json_number(r->prevented_p95, ex));
    }
    return o;
}

json_t *lw_comparison_json(const lw_model *m, const lw_comparison *c)
{
    json_t *o = json_object();
    if (!o)
        return NULL;
    json_object_set_new(o, "hazard", hazard_json(m, c->hazard));
    json_object_set_new(o, "samples", json_integer((json_int_t)c->samples));
    json_object_set_new(o, "seed", seed_json(c->seed));
    json_object_set_new(o, "uncertain_events",
                        json_integer((json_int_t)c->nuncertain));
    json_object_set_new(o, "exposure_unit",
                        m->exposure_unit ? json_string(m->exposure_unit)
                                         : json_null());
    json_object_set_new(o, "baseline", row_json(m, c, &c->baseline, true));
    json_t *vs = json_array();
    for (size_t i = 0; i < c->nrows; i++)
        json_array_append_new(vs, row_json(m, c, &c->rows[i], false));
    json_object_set_new(o, "variants", vs);
    json_object_set_new(o, "observed",
                        lw_observed_json(m, c->observed, c->nobserved));
    json_object_set_new(o, "warnings", lw_json_warnings(m));
    json_object_set_new(o, "caution", json_string(lw_caution()));
    return o;
}

void lw_render_comparison_text(FILE *out, const lw_model *m,
                               const lw_comparison *c)
{
    char b1[64], b2[64], b3[64], b4[64];
    header_text(out, m, c->hazard, LW_NONE);
    fmt_count(b1, sizeof b1, c->samples);
    fprintf(out, "Compared with %zu variant%s: %s paired Monte Carlo samples, "
            "seed %llu\n(in each sample the baseline and every variant see "
            "the same draws)\n\n", c->nrows, c->nrows == 1 ? "" : "s", b1,
            (unsigned long long)c->seed);
    bool ex = c->has_exposure;
    fprintf(out, "  %-26s %9s %9s %7s %10s %9s  %s\n", "", "chance",
            ex ? "per year" : "", "ratio", ex ? "prevented" : "",
            "better in", "ratio, 90 % range");
    fprintf(out, "  %-26s %9s %9s %7s %10s %9s\n", "", "(exact)", "", "",
            ex ? "per year" : "", "samples");
    fputs("  -----------------------------------------------------------------"
          "---------------------------\n", out);
    for (size_t i = 0; i <= c->nrows; i++) {
        const lw_compare_row *r = i == 0 ? &c->baseline : &c->rows[i - 1];
        const char *name = i == 0 ? "(baseline)" : m->variants[r->variant].id;
        lw_fmt_prob(b1, sizeof b1, r->probability);
        if (ex)
            lw_fmt_sig(b2, sizeof b2, r->per_year);
        else
            b2[0] = '\0';
        if (i == 0) {
            fprintf(out, "  %-26.26s %9s %9s %7s\n", name, b1, b2, "1");
            continue;
        }
        lw_fmt_sig(b3, sizeof b3, r->ratio);
        if (ex)
            lw_fmt_sig(b4, sizeof b4, r->prevented_per_year);
        else
            b4[0] = '\0';
        char pb[32], r05[32], r95[32];
        fmt_pct(pb, sizeof pb, r->prob_better);
        lw_fmt_sig(r05, sizeof r05, r->ratio_p05);
        lw_fmt_sig(r95, sizeof r95, r->ratio_p95);
        fprintf(out, "  %-26.26s %9s %9s %7s %10s %9s  %s to %s\n", name, b1,
                b2, b3, b4, pb, r05, r95);
    }
    fputc('\n', out);
    const char *unit = unit_of(m);
    for (size_t i = 0; i < c->nrows; i++) {
        const lw_compare_row *r = &c->rows[i];
        const lw_variant *v = &m->variants[r->variant];
        fprintf(out, "- %s%s%s%s:\n", v->id, v->label ? " (" : "",
                v->label ? v->label : "", v->label ? ")" : "");
        lw_fmt_prob(b1, sizeof b1, c->baseline.probability);
        lw_fmt_prob(b2, sizeof b2, r->probability);
        if (r->probability < c->baseline.probability) {
            lw_fmt_sig(b3, sizeof b3, 100.0 * (1.0 - r->ratio));
            fprintf(out, "    the chance per %s falls from %s to %s "
                    "(%s %% lower).\n", unit, b1, b2, b3);
        } else if (r->probability > c->baseline.probability) {
            lw_fmt_sig(b3, sizeof b3, r->ratio);
            fprintf(out, "    the chance per %s RISES from %s to %s "
                    "(%s times the baseline).\n", unit, b1, b2, b3);
        } else {
            fprintf(out, "    the chance per %s stays at %s.\n", unit, b1);
        }
        if (ex && r->reduces) {
            lw_fmt_sig(b4, sizeof b4, m->per_year);
            lw_fmt_sig(b1, sizeof b1, r->prevented_per_year);
            lw_fmt_sig(b2, sizeof b2, r->prevented_p05);
            lw_fmt_sig(b3, sizeof b3, r->prevented_p95);
            fprintf(out, "    At %s a year it prevents about %s events a year "
                    "(90 %% range %s to %s).\n", b4, b1, b2, b3);
        }
        if (r->reduces) {
            lw_fmt_one_in(b1, sizeof b1, r->checks_per_prevented);
            fprintf(out, "    One event is prevented for every %s "
                    "exposures (each one %s).\n", b1, unit);
        }
        fmt_pct(b1, sizeof b1, r->prob_better);
        fmt_pct(b2, sizeof b2, r->prob_worse);
        fprintf(out, "    In %s of the paired samples the variant is better "
                "(lower), in %s worse.\n", b1, b2);
        lw_fmt_sig(b1, sizeof b1, r->ratio_p05);
        lw_fmt_sig(b2, sizeof b2, r->ratio_p95);
        fprintf(out, "    Its ratio to the baseline lies between %s and %s in "
                "9 samples of 10.\n", b1, b2);
    }
    if (c->nrows)
        fputc('\n', out);
    lw_render_observed_text(out, m, c->observed, c->nobserved);
    if (c->nobserved)
        fputc('\n', out);
    fputs("How to read this: the chances are exact for the stated values; "
          "\"better in\" is the\nshare of paired samples (same draws for "
          "baseline and variant) in which the variant\ngives the lower "
          "chance, so it shows how sure the inputs let us be that the "
          "change\nhelps, not how much.\n", out);
    for (size_t i = 0; i < m->nwarnings; i++)
        fprintf(out, "warning: %s\n", m->warnings[i]);
}

static void csv_num(FILE *out, double x, bool ok)
{
    fputc(',', out);
    if (ok && isfinite(x))
        fprintf(out, "%.17g", x);
}

void lw_render_comparison_csv(FILE *out, const lw_model *m,
                              const lw_comparison *c, bool header)
{
    if (header)
        fputs("hazard,variant,label,probability,per_year,one_in,ratio,"
              "prevented_per_year,checks_per_prevented,mean,sd,p05,p50,p95,"
              "prob_better,ratio_p05,ratio_p50,ratio_p95,samples,seed\r\n",
              out);
    const char *hid = m->nodes[m->hazards[c->hazard]].id;
    bool ex = c->has_exposure;
    for (size_t i = 0; i <= c->nrows; i++) {
        const lw_compare_row *r = i == 0 ? &c->baseline : &c->rows[i - 1];
        bool base = i == 0;
        lw_csv_field(out, hid);
        fputc(',', out);
        lw_csv_field(out, base ? "" : m->variants[r->variant].id);
        fputc(',', out);
        lw_csv_field(out, base ? "baseline" : m->variants[r->variant].label);
        csv_num(out, r->probability, true);
        csv_num(out, r->per_year, ex);
        csv_num(out, r->one_in, r->probability > 0);
        csv_num(out, r->ratio, true);
        csv_num(out, r->prevented_per_year, ex);
        csv_num(out, r->checks_per_prevented, !base && r->reduces);
        csv_num(out, r->mean, true);
        csv_num(out, r->sd, true);
        csv_num(out, r->p05, true);
        csv_num(out, r->p50, true);
        csv_num(out, r->p95, true);
        csv_num(out, r->prob_better, !base);
        csv_num(out, r->ratio_p05, true);
        csv_num(out, r->ratio_p50, true);
        csv_num(out, r->ratio_p95, true);
        fprintf(out, ",%zu,%llu\r\n", c->samples,
                (unsigned long long)c->seed);
    }
}

/* ---- sweep --------------------------------------------------------------- */

json_t *lw_sweep_json(const lw_model *m, const lw_sweep *s)
{
    json_t *o = json_object();
    if (!o)
        return NULL;
    const lw_node *ev = &m->nodes[s->event];
    json_object_set_new(o, "hazard", hazard_json(m, s->hazard));
    json_object_set_new(o, "variant", variant_json(m, s->variant));
    json_t *e = json_object();
    json_object_set_new(e, "id", json_string(ev->id));
    json_object_set_new(e, "label", ev->label ? json_string(ev->label)
                                              : json_null());
    json_object_set_new(e, "kind", json_string(lw_node_kind_name(ev->kind)));
    json_object_set_new(e, "p", json_real(s->current_p));
    json_object_set_new(e, "absent", json_boolean(s->was_absent));
    json_object_set_new(o, "event", e);
    json_object_set_new(o, "from", json_real(s->from));
    json_object_set_new(o, "to", json_real(s->to));
    json_object_set_new(o, "steps", json_integer((json_int_t)s->npoints));
    json_object_set_new(o, "log", json_boolean(s->log_scale));
    json_object_set_new(o, "point", json_real(s->current_probability));
    json_object_set_new(o, "in_hazard", json_boolean(s->in_hazard));
    json_object_set_new(o, "linear", json_boolean(s->linear));
    json_object_set_new(o, "a", lw_json_number(s->a, s->linear));
    json_object_set_new(o, "b", lw_json_number(s->b, s->linear));
    json_object_set_new(o, "tolerable",
                        lw_json_number(s->tolerable, s->has_tolerable));
    json_object_set_new(o, "crosses", json_boolean(s->crosses));
    json_object_set_new(o, "crossing_x",
                        lw_json_number(s->crossing_x, s->crosses));
    json_object_set_new(o, "exposure_unit",
                        m->exposure_unit ? json_string(m->exposure_unit)
                                         : json_null());
    json_t *pts = json_array();
    for (size_t i = 0; i < s->npoints; i++) {
        const lw_sweep_point *p = &s->points[i];
        json_t *r = json_object();
        json_object_set_new(r, "x", json_real(p->x));
        json_object_set_new(r, "probability", json_real(p->probability));
        json_object_set_new(r, "per_year",
                            lw_json_number(p->per_year, s->has_exposure));
        if (s->has_tolerable)
            json_object_set_new(r, "meets_tolerable",
                                json_boolean(p->probability <= s->tolerable));
        json_array_append_new(pts, r);
    }
    json_object_set_new(o, "points", pts);
    json_t *obs = json_null();
    if (s->observed) {
        json_t *arr = lw_observed_json(m, &s->obs, 1);
        json_decref(obs);
        obs = json_incref(json_array_get(arr, 0));
        json_decref(arr);
    }
    json_object_set_new(o, "observed", obs);
    json_object_set_new(o, "warnings", lw_json_warnings(m));
    json_object_set_new(o, "caution", json_string(lw_caution()));
    return o;
}

void lw_render_sweep_csv(FILE *out, const lw_model *m, const lw_sweep *s,
                         bool header)
{
    if (header)
        fputs("hazard,variant,event,x,probability,per_year,"
              "meets_tolerable\r\n", out);
    const char *hid = m->nodes[m->hazards[s->hazard]].id;
    for (size_t i = 0; i < s->npoints; i++) {
        const lw_sweep_point *p = &s->points[i];
        lw_csv_field(out, hid);
        fputc(',', out);
        lw_csv_field(out, s->variant == LW_NONE ? ""
                                                : m->variants[s->variant].id);
        fputc(',', out);
        lw_csv_field(out, m->nodes[s->event].id);
        csv_num(out, p->x, true);
        csv_num(out, p->probability, true);
        csv_num(out, p->per_year, s->has_exposure);
        fputc(',', out);
        if (s->has_tolerable)
            fputs(p->probability <= s->tolerable ? "true" : "false", out);
        fputs("\r\n", out);
    }
}

static void fmt_x(char *buf, size_t n, double x)
{
    if (x != 0 && (fabs(x) < 1e-4))
        snprintf(buf, n, "%.3e", x);
    else
        snprintf(buf, n, "%.4g", x);
}

void lw_render_sweep_text(FILE *out, const lw_model *m, const lw_sweep *s)
{
    char b1[64], b2[64], b3[64];
    const lw_node *ev = &m->nodes[s->event];
    header_text(out, m, s->hazard, s->variant);
    fmt_x(b1, sizeof b1, s->from);
    fmt_x(b2, sizeof b2, s->to);
    fprintf(out, "Sweep of %s (%s) from %s to %s, %zu points, %s steps\n",
            ev->id, lw_node_text(ev), b1, b2, s->npoints,
            s->log_scale ? "logarithmic" : "equal");
    fmt_x(b1, sizeof b1, s->current_p);
    lw_fmt_prob(b2, sizeof b2, s->current_probability);
    fprintf(out, "As modelled: p = %s gives a hazard chance of %s per %s.\n",
            b1, b2, unit_of(m));
    if (s->was_absent)
        fputs("This safeguard is absent in the model as analysed; the sweep "
              "treats it as present\nwith the swept miss probability.\n",
              out);
    if (!s->in_hazard)
        fputs("The hazard does not depend on this event: the curve is "
              "flat.\n", out);
    if (s->linear) {
        lw_fmt_prob(b1, sizeof b1, s->a);
        lw_fmt_prob(b2, sizeof b2, s->b);
        fprintf(out, "The hazard chance is linear in this event's "
                "probability x (exactly):\n  P = %s + %s x\n  (a = %s is the "
                "chance if this event never happens - for a safeguard, never "
                "misses;\n   b = %s is its Birnbaum importance)\n",
                b1, b2, b1, b2);
    } else {
        fputs("This event is a common-cause member or a dependence second: "
              "its probability also\nsets the shared part, so the curve is "
              "not a straight line. Each point is exact.\n", out);
    }
    if (s->has_tolerable) {
        lw_fmt_prob(b1, sizeof b1, s->tolerable);
        if (s->crosses) {
            fmt_x(b2, sizeof b2, s->crossing_x);
            bool low_ok = s->points[0].probability <= s->tolerable;
            fprintf(out, "Tolerable level %s: crossed at x = %s (%s it the "
                    "hazard meets the tolerable level).\n", b1, b2,
                    low_ok ? "below" : "above");
        } else {
            bool all_ok = s->points[0].probability <= s->tolerable;
            fprintf(out, "Tolerable level %s: %s over the whole range.\n", b1,
                    all_ok ? "met" : "NOT met");
        }
    }
    fputc('\n', out);
    double mx = 0;
    for (size_t i = 0; i < s->npoints; i++)
        if (s->points[i].probability > mx)
            mx = s->points[i].probability;
    fprintf(out, "  %-11s %-10s %-10s %-9s %s\n", "x", "chance",
            s->has_exposure ? "per year" : "", s->has_tolerable ? "tolerable"
                                                                : "",
            "chance (bar, linear)");
    fputs("  -----------------------------------------------------------------"
          "-------\n", out);
    bool crossed_shown = false;
    for (size_t i = 0; i < s->npoints; i++) {
        const lw_sweep_point *p = &s->points[i];
        if (s->crosses && !crossed_shown && p->x >= s->crossing_x && i > 0) {
            fmt_x(b1, sizeof b1, s->crossing_x);
            fprintf(out, "  ---- crosses the tolerable level at x = %s ----\n",
                    b1);
            crossed_shown = true;
        }
        fmt_x(b1, sizeof b1, p->x);
        lw_fmt_prob(b2, sizeof b2, p->probability);
        if (s->has_exposure)
            lw_fmt_sig(b3, sizeof b3, p->per_year);
        else
            b3[0] = '\0';
        char bar[40];
        size_t w = mx > 0 ? (size_t)llround(30.0 * p->probability / mx) : 0;
        memset(bar, '#', w);
        bar[w] = '\0';
        fprintf(out, "  %-11s %-10s %-10s %-9s %s\n", b1, b2, b3,
                !s->has_tolerable ? ""
                : p->probability <= s->tolerable ? "met" : "not met", bar);
    }
    if (s->observed) {
        fputc('\n', out);
        lw_render_observed_text(out, m, &s->obs, 1);
    }
    for (size_t i = 0; i < m->nwarnings; i++)
        fprintf(out, "warning: %s\n", m->warnings[i]);
}
