/* analyze_out.c - the analyze result as text, JSON and CSV. */
#include "layerwise/render.h"
#include "layerwise/jsonw.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static const char *hazard_id(const lw_model *m, const lw_analysis *a)
{
    return m->nodes[m->hazards[a->hazard]].id;
}

static const char *variant_id(const lw_model *m, size_t v)
{
    return v == LW_NONE ? NULL : m->variants[v].id;
}

json_t *lw_json_number(double x, bool ok)
{
    if (!ok || !isfinite(x))
        return json_null();
    return json_real(x);
}

json_t *lw_json_warnings(const lw_model *m)
{
    json_t *w = json_array();
    for (size_t i = 0; w && i < m->nwarnings; i++)
        json_array_append_new(w, json_string(m->warnings[i]));
    return w;
}

int lw_json_write(FILE *out, json_t *doc)
{
    if (!doc)
        return -1;
    /* one string, one write: dumping straight to a FILE makes a call per
     * token */
    char *text = json_dumps(doc, JSON_INDENT(1) | JSON_REAL_PRECISION(17));
    json_decref(doc);
    if (!text)
        return -1;
    size_t len = strlen(text);
    int rc = fwrite(text, 1, len, out) == len && fputc('\n', out) != EOF
                 ? 0 : -1;
    free(text);
    return rc;
}

/* What a synthetic variable means, in words. */
static void describe_var(char *buf, size_t n, const lw_model *m,
                         const lw_network *net, uint32_t v)
{
    const lw_var *x = &net->vars[v];
    if (x->kind == LW_VAR_DEPENDS) {
        const lw_dependence *d = &m->deps[x->dep];
        snprintf(buf, n, "%s misses because %s missed (%s dependence)",
                 m->nodes[d->second].id, m->nodes[d->first].id,
                 lw_level_name(net->level[x->dep]));
    } else if (x->kind == LW_VAR_COMMON) {
        snprintf(buf, n, "%s (shared cause)", lw_var_text(net, v));
    } else if (x->part) {
        snprintf(buf, n, "%s (on its own)", lw_var_text(net, v));
    } else {
        snprintf(buf, n, "%s", lw_var_text(net, v));
    }
}

void lw_analysis_write_json(lw_jw *w, const lw_model *m,
                            const lw_analysis *a)
{
    const lw_network *net = a->net;
    const lw_node *h = &m->nodes[m->hazards[a->hazard]];
    lw_jw_begin_object(w);
    lw_jw_key(w, "hazard");
    lw_jw_begin_object(w);
    lw_jw_key(w, "id");
    lw_jw_string(w, h->id);
    lw_jw_key(w, "label");
    lw_jw_string(w, h->label);
    lw_jw_end_object(w);
    lw_jw_key(w, "variant");
    lw_jw_string(w, variant_id(m, a->variant));
    lw_jw_key(w, "probability");
    lw_jw_number(w, a->probability);
    lw_jw_key(w, "approximations");
    lw_jw_begin_object(w);
    lw_jw_key(w, "rare_event");
    lw_jw_number(w, a->rare_event);
    lw_jw_key(w, "min_cut_upper_bound");
    lw_jw_number_or_null(w, a->min_cut_upper_bound, a->mcub_exact);
    lw_jw_end_object(w);
    lw_jw_key(w, "per_year");
    lw_jw_number_or_null(w, a->per_year, a->has_exposure);
    lw_jw_key(w, "exposure_unit");
    lw_jw_string(w, m->exposure_unit);
    lw_jw_key(w, "one_in");
    lw_jw_number_or_null(w, a->one_in, a->probability > 0);
    lw_jw_key(w, "tolerable");
    if (a->has_tolerable)
        lw_jw_number_short(w, a->tolerable);
    else
        lw_jw_null(w);
    lw_jw_key(w, "meets_tolerable");
    if (a->has_tolerable)
        lw_jw_bool(w, a->meets_tolerable);
    else
        lw_jw_null(w);
    lw_jw_key(w, "cut_set_count");
    lw_jw_number(w, a->cut_set_count);
    lw_jw_key(w, "cut_sets");
    lw_jw_begin_array(w);
    for (size_t i = 0; i < a->ncut_sets; i++) {
        const lw_cut_set *c = &a->cut_sets[i];
        lw_jw_begin_object(w);
        lw_jw_key(w, "events");
        lw_jw_begin_array(w);
        for (size_t k = 0; k < c->order; k++)
            lw_jw_string(w, net->vars[c->vars[k]].name);
        lw_jw_end_array(w);
        lw_jw_key(w, "order");
        lw_jw_integer(w, (long long)c->order);
        lw_jw_key(w, "probability");
        lw_jw_number(w, c->probability);
        lw_jw_key(w, "share");
        lw_jw_number(w, c->share);
        lw_jw_end_object(w);
    }
    lw_jw_end_array(w);
    lw_jw_key(w, "truncated");
    lw_jw_bool(w, a->truncated);
    lw_jw_key(w, "covered");
    lw_jw_number(w, a->covered);
    lw_jw_key(w, "importance");
    lw_jw_begin_array(w);
    for (size_t i = 0; i < a->nimportance; i++) {
        const lw_importance *r = &a->importance[i];
        const lw_var *v = &net->vars[r->var];
        lw_jw_begin_object(w);
        lw_jw_key(w, "id");
        lw_jw_string(w, v->name);
        lw_jw_key(w, "kind");
        lw_jw_string(w, lw_var_kind_name(v->kind));
        lw_jw_key(w, "label");
        lw_jw_string(w, v->label);
        lw_jw_key(w, "p");
        lw_jw_number(w, r->p);
        lw_jw_key(w, "birnbaum");
        lw_jw_number(w, r->birnbaum);
        lw_jw_key(w, "criticality");
        lw_jw_number(w, r->criticality);
        lw_jw_key(w, "fussell_vesely");
        lw_jw_number(w, r->fussell_vesely);
        lw_jw_key(w, "raw");
        lw_jw_number_or_null(w, r->raw, a->probability > 0);
        lw_jw_key(w, "rrw");
        lw_jw_number_or_null(w, r->rrw, r->rrw_defined);
        lw_jw_end_object(w);
    }
    lw_jw_end_array(w);
    lw_jw_key(w, "bdd_nodes");
    lw_jw_integer(w, (long long)a->bdd_nodes);
    lw_jw_key(w, "warnings");
    lw_jw_begin_array(w);
    for (size_t i = 0; i < m->nwarnings; i++)
        lw_jw_string(w, m->warnings[i]);
    lw_jw_end_array(w);
    lw_jw_key(w, "caution");
    lw_jw_string(w, lw_caution());
    lw_jw_end_object(w);
}

/* A chance as a percentage that never rounds a near-certainty to 100 %. */
static void fmt_percent(char *buf, size_t n, double x)
{
    if (x >= 0.9995)
        snprintf(buf, n, "over 99.9%%");
    else if (x < 0.0005 && x > 0)
        snprintf(buf, n, "under 0.1%%");
    else
        snprintf(buf, n, "%.1f%%", 100.0 * x);
}

/* A time in years, in days or months when it is short. */
static void fmt_interval(char *buf, size_t n, double years)
{
    char v[32];
    if (years < 1.0 / 12.0) {
        lw_fmt_sig(v, sizeof v, years * 365.25);
        snprintf(buf, n, "%s days", v);
    } else if (years < 1.0) {
        lw_fmt_sig(v, sizeof v, years * 12.0);
        snprintf(buf, n, "%s months", v);
    } else {
        lw_fmt_sig(v, sizeof v, years);
        snprintf(buf, n, "%s years", v);
    }
}

static int cmp_u32(const void *a, const void *b)
{
    uint32_t x = *(const uint32_t *)a, y = *(const uint32_t *)b;
    return (x > y) - (x < y);
}

static void print_rule(FILE *out)
{
    fputs("  ----------------------------------------------------------------"
          "------\n", out);
}

void lw_render_analysis_text(FILE *out, const lw_model *m,
                             const lw_analysis *a, size_t top)
{
    const lw_network *net = a->net;
    const lw_node *h = &m->nodes[m->hazards[a->hazard]];
    char b1[64], b2[64], b3[64];
    const char *unit = m->exposure_unit ? m->exposure_unit : "exposure unit";

    fprintf(out, "Hazard %s: %s\n", h->id, lw_node_text(h));
    fprintf(out, "Model %s%s%s, %s\n", m->id ? m->id : "",
            m->title ? ": " : "", m->title ? m->title : "",
            a->variant == LW_NONE ? "as it is (baseline)" : "");
    if (a->variant != LW_NONE)
        fprintf(out, "Variant %s: %s\n", m->variants[a->variant].id,
                m->variants[a->variant].label
                    ? m->variants[a->variant].label : "");
    fputc('\n', out);

    lw_fmt_prob(b1, sizeof b1, a->probability);
    lw_fmt_one_in(b2, sizeof b2, a->one_in);
    char lbl[96];
    snprintf(lbl, sizeof lbl, "Chance per %s", unit);
    fprintf(out, "  %-31s %s", lbl, b1);
    if (a->probability > 0)
        fprintf(out, "   (about 1 in %s)", b2);
    fputc('\n', out);
    if (a->has_exposure) {
        lw_fmt_sig(b1, sizeof b1, a->per_year);
        lw_fmt_sig(b2, sizeof b2, m->per_year);
        fprintf(out, "  %-31s %s   (at %s a year)\n", "Expected events per year",
                b1, b2);
        if (a->per_year > 0) {
            fmt_interval(b1, sizeof b1, 1.0 / a->per_year);
            fprintf(out, "  %-31s %s\n", "Mean time between events", b1);
            fmt_percent(b1, sizeof b1, -expm1(-a->per_year));
            fmt_percent(b2, sizeof b2, -expm1(-5 * a->per_year));
            fmt_percent(b3, sizeof b3, -expm1(-10 * a->per_year));
            fprintf(out, "  %-31s %s in a year, "
                    "%s in 5 years, %s in 10\n", "Chance of an event", b1, b2,
                    b3);
        }
    } else {
        fputs("  (no <exposure> in the model: add one for per-year "
              "figures)\n", out);
    }
    if (a->has_tolerable) {
        lw_fmt_prob(b1, sizeof b1, a->tolerable);
        if (a->meets_tolerable) {
            fprintf(out, "  %-31s %s   met\n", "Tolerable level", b1);
        } else {
            lw_fmt_sig(b2, sizeof b2, a->probability / a->tolerable);
            fprintf(out, "  %-31s %s   NOT met: the "
                    "chance is %s times the tolerable level\n",
                    "Tolerable level", b1, b2);
        }
    }
    fputc('\n', out);

    fputs("The chance above is exact. For comparison, the usual shortcuts:\n",
          out);
    lw_fmt_prob(b1, sizeof b1, a->rare_event);
    fprintf(out, "  sum of cut-set chances (rare-event)   %s\n", b1);
    if (a->mcub_exact) {
        lw_fmt_prob(b1, sizeof b1, a->min_cut_upper_bound);
        fprintf(out, "  min-cut upper bound                   %s\n", b1);
    } else {
        fputs("  min-cut upper bound                   (too many cut sets "
              "to enumerate)\n", out);
    }
    fputc('\n', out);

    lw_fmt_sig(b1, sizeof b1, a->cut_set_count);
    fprintf(out, "Combinations of misses that cause the hazard (minimal cut "
            "sets): %s in all", b1);
    if (a->ncut_sets < a->cut_set_count)
        fprintf(out, ", the %zu most likely shown", a->ncut_sets);
    fputs("\n", out);
    print_rule(out);
    fprintf(out, "  %4s  %-9s  %6s  %s\n", "#", "chance", "share",
            "every one of these happens");
    print_rule(out);
    size_t shown = a->ncut_sets;
    if (top && shown > top)
        shown = top;
    for (size_t i = 0; i < shown; i++) {
        const lw_cut_set *c = &a->cut_sets[i];
        lw_fmt_prob(b1, sizeof b1, c->probability);
        fprintf(out, "  %4zu  %-9s  %5.1f%%  ", i + 1, b1, 100.0 * c->share);
        /* in the model's order (errors, then the layers they pass) */
        uint32_t order[64];
        size_t no = c->order < 64 ? c->order : 64;
        memcpy(order, c->vars, no * sizeof *order);
        qsort(order, no, sizeof *order, cmp_u32);
        for (size_t k = 0; k < no; k++) {
            char d[512];
            describe_var(d, sizeof d, m, net, order[k]);
            fprintf(out, "%*s%s\n", k ? 27 : 0, "", d);
        }
        if (c->order > no)
            fprintf(out, "%27s... and %zu more events\n", "", c->order - no);
        if (c->order == 0)
            fputs("(always: the hazard needs no miss)\n", out);
    }
    if (a->truncated)
        fprintf(out, "  (list cut short by --top, --cutoff or --max-order; "
                "the listed sets carry %.1f%% of the sum)\n",
                a->rare_event > 0 ? 100.0 * a->covered / a->rare_event : 0);
    fputc('\n', out);

    fputs("Which layers matter most (importance, sorted by Birnbaum):\n",
          out);
    print_rule(out);
    fprintf(out, "  %-24s %9s %9s %7s %9s %9s\n", "event", "p", "Birnbaum",
            "FV", "RAW", "RRW");
    print_rule(out);
    for (size_t i = 0; i < a->nimportance; i++) {
        const lw_importance *r = &a->importance[i];
        char p[32], bb[32], raw[32], rrw[32];
        lw_fmt_prob(p, sizeof p, r->p);
        lw_fmt_prob(bb, sizeof bb, r->birnbaum);
        lw_fmt_sig(raw, sizeof raw, r->raw);
        if (r->rrw_defined)
            lw_fmt_sig(rrw, sizeof rrw, r->rrw);
        else
            snprintf(rrw, sizeof rrw, "(none)");
        fprintf(out, "  %-24.24s %9s %9s %6.1f%% %9s %9s\n",
                net->vars[r->var].name, p, bb, 100.0 * r->fussell_vesely,
                raw, rrw);
    }
    fputc('\n', out);
    /* in words, for the safeguards that matter most */
    size_t said = 0;
    for (size_t i = 0; i < a->nimportance && said < 3; i++) {
        const lw_importance *r = &a->importance[i];
        const lw_var *v = &net->vars[r->var];
        if (v->kind != LW_VAR_SAFEGUARD || r->birnbaum <= 0)
            continue;
        said++;
        lw_fmt_sig(b1, sizeof b1, r->raw);
        fprintf(out, "  - If \"%s\" always missed (the layer removed), the "
                "risk would be %s times what it is.", lw_var_text(net, r->var),
                b1);
        if (r->rrw_defined) {
            lw_fmt_sig(b2, sizeof b2, r->rrw);
            fprintf(out, " If it never missed, the risk would fall %s-fold.",
                    b2);
        } else {
            fputs(" If it never missed, the hazard could not happen.", out);
        }
        fprintf(out, " The combinations it is part of carry %.0f%% of the "
                "risk.\n", 100.0 * r->fussell_vesely);
    }
    if (said)
        fputc('\n', out);
    for (size_t i = 0; i < m->nwarnings; i++)
        fprintf(out, "warning: %s\n", m->warnings[i]);
    (void)hazard_id;
}

void lw_render_cut_sets_csv(FILE *out, const lw_model *m,
                            const lw_analysis *a, bool header)
{
    if (header)
        fputs("hazard,variant,rank,probability,share,order,events\r\n", out);
    for (size_t i = 0; i < a->ncut_sets; i++) {
        const lw_cut_set *c = &a->cut_sets[i];
        lw_csv_field(out, hazard_id(m, a));
        fputc(',', out);
        lw_csv_field(out, variant_id(m, a->variant));
        fprintf(out, ",%zu,%.17g,%.17g,%zu,", i + 1, c->probability,
                c->share, c->order);
        size_t len = 0;
        for (size_t k = 0; k < c->order; k++)
            len += strlen(a->net->vars[c->vars[k]].name) + 1;
        char buf[4096];
        char *big = len < sizeof buf ? buf : NULL;
        if (big) {
            buf[0] = '\0';
            for (size_t k = 0; k < c->order; k++) {
                if (k)
                    strcat(buf, ";");
                strcat(buf, a->net->vars[c->vars[k]].name);
            }
            lw_csv_field(out, buf);
        } else {
            fputc('"', out);
            for (size_t k = 0; k < c->order; k++)
                fprintf(out, "%s%s", k ? ";" : "",
                        a->net->vars[c->vars[k]].name);
            fputc('"', out);
        }
        fputs("\r\n", out);
    }
}

void lw_render_importance_csv(FILE *out, const lw_model *m,
                              const lw_analysis *a, bool header)
{
    if (header)
        fputs("hazard,variant,id,kind,label,p,birnbaum,criticality,"
              "fussell_vesely,raw,rrw\r\n", out);
    for (size_t i = 0; i < a->nimportance; i++) {
        const lw_importance *r = &a->importance[i];
        const lw_var *v = &a->net->vars[r->var];
        lw_csv_field(out, hazard_id(m, a));
        fputc(',', out);
        lw_csv_field(out, variant_id(m, a->variant));
        fputc(',', out);
        lw_csv_field(out, v->name);
        fputc(',', out);
        lw_csv_field(out, lw_var_kind_name(v->kind));
        fputc(',', out);
        lw_csv_field(out, v->label);
        fprintf(out, ",%.17g,%.17g,%.17g,%.17g,%.17g,", r->p, r->birnbaum,
                r->criticality, r->fussell_vesely, r->raw);
        if (r->rrw_defined)
            fprintf(out, "%.17g", r->rrw);
        fputs("\r\n", out);
    }
}
