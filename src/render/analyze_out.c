/* analyze_out.c - the analyze result as text, JSON and CSV. */
#include "layerwise/render.h"

#include <math.h>
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
    int rc = json_dumpf(doc, out, JSON_INDENT(2) | JSON_REAL_PRECISION(17));
    json_decref(doc);
    if (rc == 0)
        fputc('\n', out);
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

static json_t *cut_set_json(const lw_network *net, const lw_cut_set *c)
{
    json_t *o = json_object();
    json_t *ev = json_array();
    for (size_t k = 0; k < c->order; k++)
        json_array_append_new(ev, json_string(net->vars[c->vars[k]].name));
    json_object_set_new(o, "events", ev);
    json_object_set_new(o, "order", json_integer((json_int_t)c->order));
    json_object_set_new(o, "probability", json_real(c->probability));
    json_object_set_new(o, "share", json_real(c->share));
    return o;
}

json_t *lw_analysis_json(const lw_model *m, const lw_analysis *a)
{
    const lw_network *net = a->net;
    const lw_node *h = &m->nodes[m->hazards[a->hazard]];
    json_t *o = json_object();
    if (!o)
        return NULL;
    json_t *hz = json_object();
    json_object_set_new(hz, "id", json_string(h->id));
    json_object_set_new(hz, "label", h->label ? json_string(h->label)
                                              : json_null());
    json_object_set_new(o, "hazard", hz);
    const char *vid = variant_id(m, a->variant);
    json_object_set_new(o, "variant", vid ? json_string(vid) : json_null());
    json_object_set_new(o, "probability", json_real(a->probability));
    json_t *ap = json_object();
    json_object_set_new(ap, "rare_event", json_real(a->rare_event));
    json_object_set_new(ap, "min_cut_upper_bound",
                        lw_json_number(a->min_cut_upper_bound,
                                       a->mcub_exact));
    json_object_set_new(o, "approximations", ap);
    json_object_set_new(o, "per_year",
                        lw_json_number(a->per_year, a->has_exposure));
    json_object_set_new(o, "exposure_unit",
                        m->exposure_unit ? json_string(m->exposure_unit)
                                         : json_null());
    json_object_set_new(o, "one_in",
                        lw_json_number(a->one_in, a->probability > 0));
    json_object_set_new(o, "tolerable",
                        lw_json_number(a->tolerable, a->has_tolerable));
    json_object_set_new(o, "meets_tolerable",
                        a->has_tolerable ? json_boolean(a->meets_tolerable)
                                         : json_null());
    json_object_set_new(o, "cut_set_count", json_real(a->cut_set_count));
    json_t *cs = json_array();
    for (size_t i = 0; i < a->ncut_sets; i++)
        json_array_append_new(cs, cut_set_json(net, &a->cut_sets[i]));
    json_object_set_new(o, "cut_sets", cs);
    json_object_set_new(o, "truncated", json_boolean(a->truncated));
    json_object_set_new(o, "covered", json_real(a->covered));
    json_t *imp = json_array();
    for (size_t i = 0; i < a->nimportance; i++) {
        const lw_importance *r = &a->importance[i];
        const lw_var *v = &net->vars[r->var];
        json_t *row = json_object();
        json_object_set_new(row, "id", json_string(v->name));
        json_object_set_new(row, "kind", json_string(lw_var_kind_name(v->kind)));
        json_object_set_new(row, "label", v->label ? json_string(v->label)
                                                   : json_null());
        json_object_set_new(row, "p", json_real(r->p));
        json_object_set_new(row, "birnbaum", json_real(r->birnbaum));
        json_object_set_new(row, "criticality", json_real(r->criticality));
        json_object_set_new(row, "fussell_vesely",
                            json_real(r->fussell_vesely));
        json_object_set_new(row, "raw", lw_json_number(r->raw,
                                                       a->probability > 0));
        json_object_set_new(row, "rrw", lw_json_number(r->rrw,
                                                       r->rrw_defined));
        json_array_append_new(imp, row);
    }
    json_object_set_new(o, "importance", imp);
    json_object_set_new(o, "bdd_nodes", json_integer((json_int_t)a->bdd_nodes));
    json_object_set_new(o, "warnings", lw_json_warnings(m));
    json_object_set_new(o, "caution", json_string(lw_caution()));
    return o;
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
    fprintf(out, "  Chance per %s   %s", unit, b1);
    if (a->probability > 0)
        fprintf(out, "   (about 1 in %s)", b2);
    fputc('\n', out);
    if (a->has_exposure) {
        lw_fmt_sig(b1, sizeof b1, a->per_year);
        lw_fmt_sig(b2, sizeof b2, m->per_year);
        fprintf(out, "  Expected events per year      %s   (at %s a year)\n",
                b1, b2);
        if (a->per_year > 0) {
            lw_fmt_sig(b1, sizeof b1, 1.0 / a->per_year);
            fprintf(out, "  Mean time between events      %s years\n", b1);
            lw_fmt_sig(b1, sizeof b1, 100.0 * -expm1(-a->per_year));
            lw_fmt_sig(b2, sizeof b2, 100.0 * -expm1(-5 * a->per_year));
            lw_fmt_sig(b3, sizeof b3, 100.0 * -expm1(-10 * a->per_year));
            fprintf(out, "  Chance of at least one event  %s%% in a year, "
                    "%s%% in 5 years, %s%% in 10\n", b1, b2, b3);
        }
    } else {
        fputs("  (no <exposure> in the model: add one for per-year "
              "figures)\n", out);
    }
    if (a->has_tolerable) {
        lw_fmt_prob(b1, sizeof b1, a->tolerable);
        if (a->meets_tolerable) {
            fprintf(out, "  Tolerable level               %s   met\n", b1);
        } else {
            lw_fmt_sig(b2, sizeof b2, a->probability / a->tolerable);
            fprintf(out, "  Tolerable level               %s   NOT met: the "
                    "chance is %s times the tolerable level\n", b1, b2);
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
        for (size_t k = 0; k < c->order; k++) {
            char d[512];
            describe_var(d, sizeof d, m, net, c->vars[k]);
            fprintf(out, "%s%s\n", k ? "              " "            " : "",
                    d);
        }
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
