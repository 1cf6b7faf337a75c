/* target_out.c - the target result as text, JSON and CSV. */
#include "layerwise/render_target.h"

#include <string.h>

json_t *lw_target_json(const lw_model *m, const lw_target *t)
{
    const lw_node *h = &m->nodes[m->hazards[t->hazard]];
    json_t *o = json_object();
    if (!o)
        return NULL;
    json_t *hz = json_object();
    json_object_set_new(hz, "id", json_string(h->id));
    json_object_set_new(hz, "label", h->label ? json_string(h->label)
                                              : json_null());
    json_object_set_new(o, "hazard", hz);
    json_object_set_new(o, "variant", t->variant == LW_NONE ? json_null()
                        : json_string(m->variants[t->variant].id));
    json_object_set_new(o, "goal", json_real(t->goal));
    json_object_set_new(o, "probability", json_real(t->probability));
    json_object_set_new(o, "meets_goal", json_boolean(t->meets));
    json_t *rows = json_array();
    for (size_t i = 0; i < t->nrows; i++) {
        const lw_target_row *r = &t->rows[i];
        const lw_var *v = &t->net->vars[r->var];
        json_t *row = json_object();
        json_object_set_new(row, "id", json_string(v->name));
        json_object_set_new(row, "label", v->label ? json_string(v->label)
                                                   : json_null());
        json_object_set_new(row, "current", json_real(r->current));
        json_object_set_new(row, "required",
                            lw_json_number(r->required, r->has_required));
        json_object_set_new(row, "reachable", json_boolean(r->reachable));
        json_object_set_new(row, "already_met", json_boolean(r->already));
        json_object_set_new(row, "hazard_if_perfect", json_real(r->floor));
        json_object_set_new(row, "birnbaum", json_real(r->birnbaum));
        json_object_set_new(row, "independent_part", json_boolean(v->part));
        json_array_append_new(rows, row);
    }
    json_object_set_new(o, "targets", rows);
    json_object_set_new(o, "most_effective", t->best == LW_NONE
                        ? json_null()
                        : json_string(t->net->vars[t->rows[t->best].var].name));
    json_object_set_new(o, "warnings", lw_json_warnings(m));
    json_object_set_new(o, "caution", json_string(lw_caution()));
    return o;
}

void lw_render_target_text(FILE *out, const lw_model *m, const lw_target *t)
{
    const lw_node *h = &m->nodes[m->hazards[t->hazard]];
    char g[32], p[32], b1[32], b2[32];
    lw_fmt_prob(g, sizeof g, t->goal);
    lw_fmt_prob(p, sizeof p, t->probability);
    fprintf(out, "Hazard %s: %s\n", h->id, lw_node_text(h));
    if (t->variant != LW_NONE)
        fprintf(out, "Variant %s\n", m->variants[t->variant].id);
    fprintf(out, "\n  Chance now %s per %s; goal %s: %s\n\n", p,
            m->exposure_unit ? m->exposure_unit : "exposure unit", g,
            t->meets ? "met" : "not met");
    fputs("What each safeguard would have to achieve on its own (all other "
          "layers as they are).\nThe chance is linear in each layer's miss "
          "probability, so these values are exact.\n", out);
    fputs("  ----------------------------------------------------------------"
          "------\n", out);
    fprintf(out, "  %-24s %10s %12s   %s\n", "safeguard", "misses now",
            "must reach", "if it never missed");
    fputs("  ----------------------------------------------------------------"
          "------\n", out);
    for (size_t i = 0; i < t->nrows; i++) {
        const lw_target_row *r = &t->rows[i];
        lw_fmt_prob(b1, sizeof b1, r->current);
        lw_fmt_prob(b2, sizeof b2, r->floor);
        char req[48];
        if (r->has_required && r->already)
            snprintf(req, sizeof req, "(met)");
        else if (r->has_required)
            lw_fmt_prob(req, sizeof req, r->required);
        else if (!r->reachable)
            snprintf(req, sizeof req, "cannot");
        else
            snprintf(req, sizeof req, "(no effect)");
        fprintf(out, "  %-24.24s %10s %12s   %s%s\n",
                t->net->vars[r->var].name, b1, req, b2,
                t->net->vars[r->var].part ? "  (its independent part)" : "");
    }
    fputc('\n', out);
    if (t->best != LW_NONE) {
        const lw_target_row *r = &t->rows[t->best];
        lw_fmt_sig(b1, sizeof b1, t->probability / (r->floor > 0 ? r->floor
                                                                  : 1));
        fprintf(out, "  Most effective single layer to improve: \"%s\"; if "
                "it never missed, the chance would be %s",
                lw_var_text(t->net, r->var), r->floor > 0 ? "" : "zero");
        if (r->floor > 0) {
            lw_fmt_prob(b2, sizeof b2, r->floor);
            fprintf(out, "%s (%s-fold lower)", b2, b1);
        }
        fputs(".\n", out);
    }
    size_t cannot = 0;
    for (size_t i = 0; i < t->nrows; i++)
        cannot += !t->rows[i].reachable;
    if (cannot)
        fprintf(out, "  %zu layer%s cannot reach the goal alone, even if "
                "perfect: other paths carry too much risk; look at the cut "
                "sets.\n", cannot, cannot == 1 ? "" : "s");
}

void lw_render_target_csv(FILE *out, const lw_model *m, const lw_target *t,
                          bool header)
{
    if (header)
        fputs("hazard,variant,goal,id,current,required,reachable,"
              "hazard_if_perfect,birnbaum\r\n", out);
    for (size_t i = 0; i < t->nrows; i++) {
        const lw_target_row *r = &t->rows[i];
        lw_csv_field(out, m->nodes[m->hazards[t->hazard]].id);
        fputc(',', out);
        lw_csv_field(out, t->variant == LW_NONE ? ""
                                                : m->variants[t->variant].id);
        fprintf(out, ",%.17g,", t->goal);
        lw_csv_field(out, t->net->vars[r->var].name);
        fprintf(out, ",%.17g,", r->current);
        if (r->has_required)
            fprintf(out, "%.17g", r->required);
        fprintf(out, ",%s,%.17g,%.17g\r\n", r->reachable ? "true" : "false",
                r->floor, r->birnbaum);
    }
}
