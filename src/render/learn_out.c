/* learn_out.c - the learn result as text (for a review meeting), JSON and
 * CSV. */
#include "layerwise/render_incident.h"

#include <math.h>
#include <string.h>

static const char *nid(const lw_model *m, size_t x) { return m->nodes[x].id; }

/* ---- JSON ---------------------------------------------------------------- */

json_t *lw_learn_json(const lw_model *m, const lw_learn *l)
{
    json_t *o = json_object();
    if (!o)
        return NULL;
    json_object_set_new(o, "log", json_string(l->log));
    json_object_set_new(o, "rows", json_integer((json_int_t)l->rows));
    json_object_set_new(o, "rows_caught",
                        json_integer((json_int_t)l->rows_caught));
    json_t *layers = json_array();
    for (size_t i = 0; i < l->nlayers; i++) {
        const lw_learn_layer *y = &l->layers[i];
        json_t *row = json_object();
        json_object_set_new(row, "id", json_string(nid(m, y->node)));
        json_object_set_new(row, "label", m->nodes[y->node].label
                            ? json_string(m->nodes[y->node].label)
                            : json_null());
        json_object_set_new(row, "reached", json_integer((json_int_t)y->reached));
        json_object_set_new(row, "missed", json_integer((json_int_t)y->missed));
        json_object_set_new(row, "estimate", json_real(y->estimate));
        json_t *ci = json_array();
        json_array_append_new(ci, json_real(y->ci_lo));
        json_array_append_new(ci, json_real(y->ci_hi));
        json_object_set_new(row, "ci95", ci);
        json_object_set_new(row, "model_count", y->has_model_counts
                            ? json_integer((json_int_t)y->model_count)
                            : json_null());
        json_object_set_new(row, "model_of", y->has_model_counts
                            ? json_integer((json_int_t)y->model_of)
                            : json_null());
        json_object_set_new(row, "combined_missed",
                            json_integer((json_int_t)y->M));
        json_object_set_new(row, "combined_reached",
                            json_integer((json_int_t)y->R));
        json_object_set_new(row, "nominal", json_real(y->nominal));
        json_array_append_new(layers, row);
    }
    json_object_set_new(o, "layers", layers);
    json_t *tog = json_array();
    for (size_t i = 0; i < l->npairs; i++) {
        const lw_learn_pair *p = &l->pairs[i];
        char xml[512];
        lw_learn_dependence_xml(m, p, xml, sizeof xml);
        json_t *row = json_object();
        json_object_set_new(row, "first", json_string(nid(m, p->first)));
        json_object_set_new(row, "second", json_string(nid(m, p->second)));
        json_object_set_new(row, "after_first_missed",
                            json_integer((json_int_t)p->n));
        json_object_set_new(row, "both_missed",
                            json_integer((json_int_t)p->m));
        json_object_set_new(row, "nominal", json_real(p->nominal));
        json_object_set_new(row, "rate", json_real(p->rate));
        json_object_set_new(row, "p_value", json_real(p->p_value));
        json_object_set_new(row, "suggested_level",
                            json_string(lw_level_name(p->suggested)));
        json_object_set_new(row, "dependence", json_string(xml));
        json_object_set_new(row, "modelled_level", p->modelled
                            ? json_string(lw_level_name(p->modelled_level))
                            : json_null());
        json_array_append_new(tog, row);
    }
    json_object_set_new(o, "together", tog);
    json_object_set_new(o, "log_caution", json_string(lw_log_caution()));
    json_object_set_new(o, "caution", json_string(lw_caution()));
    return o;
}

/* ---- CSV ----------------------------------------------------------------- */

void lw_render_learn_csv(FILE *out, const lw_model *m, const lw_learn *l,
                         bool together)
{
    if (together) {
        fputs("first,second,after_first_missed,both_missed,nominal,rate,"
              "p_value,suggested_level,modelled_level\r\n", out);
        for (size_t i = 0; i < l->npairs; i++) {
            const lw_learn_pair *p = &l->pairs[i];
            lw_csv_field(out, nid(m, p->first));
            fputc(',', out);
            lw_csv_field(out, nid(m, p->second));
            fprintf(out, ",%lu,%lu,%.17g,%.17g,%.17g,%s,%s\r\n", p->n, p->m,
                    p->nominal, p->rate, p->p_value,
                    lw_level_name(p->suggested),
                    p->modelled ? lw_level_name(p->modelled_level) : "");
        }
        return;
    }
    fputs("id,label,reached,missed,model_count,model_of,combined_reached,"
          "combined_missed,estimate,ci95_low,ci95_high,nominal\r\n", out);
    for (size_t i = 0; i < l->nlayers; i++) {
        const lw_learn_layer *y = &l->layers[i];
        lw_csv_field(out, nid(m, y->node));
        fputc(',', out);
        lw_csv_field(out, m->nodes[y->node].label);
        fprintf(out, ",%lu,%lu,", y->reached, y->missed);
        if (y->has_model_counts)
            fprintf(out, "%.0f,%.0f", y->model_count, y->model_of);
        else
            fputc(',', out);
        fprintf(out, ",%.0f,%.0f,%.17g,%.17g,%.17g,%.17g\r\n", y->R, y->M,
                y->estimate, y->ci_lo, y->ci_hi, y->nominal);
    }
}

/* ---- text ---------------------------------------------------------------- */

/* Print 'text' wrapped at about 76 columns: 'first' then the text, later
 * lines indented to line up with it. */
static void wrap(FILE *out, const char *text, int indent, const char *first)
{
    int start = indent + (int)strlen(first);
    int col = start;
    const char *s = text;
    fprintf(out, "%*s%s", indent, "", first);
    while (*s) {
        while (*s == ' ')
            s++;
        const char *e = s;
        while (*e && *e != ' ')
            e++;
        int w = (int)(e - s);
        if (col + w + 1 > 76 && col > start) {
            fprintf(out, "\n%*s", start, "");
            col = start;
        } else if (col > start) {
            fputc(' ', out);
            col++;
        }
        fwrite(s, 1, (size_t)w, out);
        col += w;
        s = e;
    }
    fputc('\n', out);
}

static void para(FILE *out, const char *text, int indent)
{
    wrap(out, text, indent, "");
}

void lw_render_learn_text(FILE *out, const lw_model *m, const lw_learn *l)
{
    char b1[32], b2[32], b3[32], b4[32];
    fprintf(out, "Learning from the log %s\n", l->log);
    fprintf(out, "Model %s%s%s\n", m->id ? m->id : "", m->title ? ": " : "",
            m->title ? m->title : "");
    fprintf(out, "%zu rows: %zu stopped by a safeguard, %zu that no "
            "safeguard stopped\n", l->rows, l->rows_caught,
            l->rows - l->rows_caught);

    fputs("\nWhat the log says about each layer\n", out);
    if (!l->nlayers) {
        fputs("  no safeguard appears in the log\n", out);
    } else {
        fprintf(out, "  %-18s %7s %6s %12s %10s %9s  %-19s %s\n", "layer",
                "reached", "missed", "model audit", "combined", "estimate",
                "95% interval", "model now");
        for (size_t i = 0; i < l->nlayers; i++) {
            const lw_learn_layer *y = &l->layers[i];
            char audit[64], comb[64], ci[80];
            if (y->has_model_counts)
                snprintf(audit, sizeof audit, "%.0f/%.0f", y->model_count,
                         y->model_of);
            else
                snprintf(audit, sizeof audit, "-");
            snprintf(comb, sizeof comb, "%.0f/%.0f", y->M, y->R);
            lw_fmt_sig(b1, sizeof b1, y->estimate);
            lw_fmt_sig(b2, sizeof b2, y->ci_lo);
            lw_fmt_sig(b3, sizeof b3, y->ci_hi);
            lw_fmt_sig(b4, sizeof b4, y->nominal);
            snprintf(ci, sizeof ci, "%s to %s", b2, b3);
            bool outside = y->nominal < y->ci_lo || y->nominal > y->ci_hi;
            fprintf(out, "  %-18s %7lu %6lu %12s %10s %9s  %-19s %s%s\n",
                    nid(m, y->node), y->reached, y->missed, audit, comb, b1,
                    ci, b4, outside ? "  <- outside the interval" : "");
        }
        fputc('\n', out);
        para(out, "reached: log rows in which the error got to the layer "
             "(it missed it or caught it); missed: rows in which it let the "
             "error pass. The estimate is (missed + 0.5) / (reached + 1) on "
             "the combined counts (the model's own audit counts, if any, "
             "plus the log): the mean under a Jeffreys prior. The interval "
             "is the exact (Clopper-Pearson) 95 % interval. With a handful "
             "of rows the interval is wide: read it, not the estimate "
             "alone.", 2);
    }

    fputs("\nLayers that miss together\n", out);
    if (!l->npairs) {
        fprintf(out, "  no pair of layers shares %d or more rows in which "
                "the first missed and the second was reached\n",
                LW_LEARN_MIN_PAIR);
    }
    for (size_t i = 0; i < l->npairs; i++) {
        const lw_learn_pair *p = &l->pairs[i];
        char xml[512];
        lw_learn_dependence_xml(m, p, xml, sizeof xml);
        lw_fmt_sig(b1, sizeof b1, p->rate);
        lw_fmt_sig(b2, sizeof b2, p->nominal);
        lw_fmt_sig(b3, sizeof b3, p->p_value);
        fprintf(out, "  %s then %s\n", nid(m, p->first), nid(m, p->second));
        fprintf(out, "    after %s missed, %s was reached %lu times and "
                "missed %lu (%s);\n", nid(m, p->first), nid(m, p->second),
                p->n, p->m, b1);
        fprintf(out, "    on its own the model expects %s. Chance of %lu or "
                "more misses by luck: %s%s\n", b2, p->m, b3,
                p->p_value < 0.05 ? "  <- unlikely to be chance alone" : "");
        fprintf(out, "    closest THERP level: %s", lw_level_name(p->suggested));
        if (p->modelled)
            fprintf(out, " (the model says %s)",
                    lw_level_name(p->modelled_level));
        fputc('\n', out);
        if (p->suggested != LW_LEVEL_ZERO &&
            !(p->modelled && p->modelled_level == p->suggested)) {
            fprintf(out, "    to model it: %s\n", xml);
            if (p->modelled)
                fputs("    (change the level of the existing "
                      "<dependence>)\n", out);
            else if (p->second_has_first)
                fprintf(out, "    (%s already depends on another check; a "
                        "second has at most one first)\n", nid(m, p->second));
            else if (p->second_in_group)
                fprintf(out, "    (%s is in a common-cause group; an event "
                        "is a group member or a dependence second, not "
                        "both)\n", nid(m, p->second));
            else if (p->linked)
                fputs("    (the model already links the two another way)\n",
                      out);
        }
    }
    if (l->npairs) {
        fputc('\n', out);
        para(out, "The chance by luck is the one-sided binomial p-value of "
             "seeing that many misses of the second layer, in the rows that "
             "reached it after the first missed, if it missed at the "
             "model's own rate. Many pairs are tested at once, so an "
             "occasional small value is expected by chance; a dependence "
             "level should come from how the checks are done, with the log "
             "as one piece of evidence.", 2);
    }
    fputs("\nWhat learn -o would write\n", out);
    para(out, "Each layer above gets <observed count=\"missed\" "
         "of=\"reached\"/> with the combined counts in place of its p and "
         "uncertainty. A judged p is then replaced by the log's counts "
         "alone: with few rows that can move it a long way, so review the "
         "new model before using it.", 2);
    fputc('\n', out);
    wrap(out, lw_log_caution(), 0, "Note: ");
    lw_text_caution(out);
}
