/* incident_out.c - the incident result as text (for a post-incident
 * review meeting) and JSON. */
#include "layerwise/render_incident.h"

#include <math.h>
#include <string.h>

#include "layerwise/alloc.h"

const char *lw_log_caution(void)
{
    return "Incident and near-miss logs under-report: most errors that are "
           "caught, and many that are not, are never written down, and "
           "what is written is biased toward the errors that were noticed. "
           "Figures drawn from a log describe the reported events, not "
           "every event.";
}

static const char *node_id(const lw_model *m, size_t x)
{
    return m->nodes[x].id;
}

/* What a variable means, in words. */
static void var_words(char *buf, size_t n, const lw_model *m,
                      const lw_network *net, uint32_t v)
{
    const lw_var *x = &net->vars[v];
    if (x->kind == LW_VAR_DEPENDS) {
        const lw_dependence *d = &m->deps[x->dep];
        snprintf(buf, n, "%s misses because %s missed (%s dependence)",
                 node_id(m, d->second), node_id(m, d->first),
                 lw_level_name(net->level[x->dep]));
    } else if (x->kind == LW_VAR_COMMON) {
        snprintf(buf, n, "the shared cause of group %s",
                 m->groups[x->group].id);
    } else if (x->part) {
        snprintf(buf, n, "%s on its own", lw_var_text(net, v));
    } else {
        snprintf(buf, n, "%s", lw_var_text(net, v));
    }
}

void lw_incident_strain_text(char *buf, size_t n, const lw_model *m,
                             const lw_incident_strain *s)
{
    char pa[32], pb[32], jm[32], ji[32], r[32];
    lw_fmt_prob(pa, sizeof pa, s->p_a);
    if (s->kind == LW_STRAIN_SMALL_P) {
        char one[48];
        lw_fmt_one_in(one, sizeof one, s->p_a > 0 ? 1.0 / s->p_a : 0);
        snprintf(buf, n, "%s missed although the model gives it a miss "
                 "probability of only %s (about 1 in %s). One miss does not "
                 "prove the estimate wrong, but it may be optimistic: check "
                 "it against audit counts or the near-miss log (layerwise "
                 "learn).", node_id(m, s->a), pa, one);
        return;
    }
    lw_fmt_prob(pb, sizeof pb, s->p_b);
    lw_fmt_prob(jm, sizeof jm, s->joint_model);
    lw_fmt_prob(ji, sizeof ji, s->joint_independent);
    if (s->linked) {
        lw_fmt_sig(r, sizeof r, s->joint_independent > 0
                                    ? s->joint_model / s->joint_independent
                                    : 0);
        snprintf(buf, n, "%s and %s both missed. The model already links "
                 "them (common cause or dependence): the chance that both "
                 "miss is %s, %s times the %s that independence would give. "
                 "Check that the link is as strong as this event suggests.",
                 node_id(m, s->a), node_id(m, s->b), jm, r, ji);
    } else {
        snprintf(buf, n, "%s and %s both missed, and the model treats them "
                 "as independent: the chance that both miss is %s x %s = "
                 "%s. If they share a cause (the same person, the same "
                 "information, the same time pressure, one checker priming "
                 "the other), consider <dependence first=\"%s\" "
                 "second=\"%s\" level=\"...\"/> or a <common-cause> group, "
                 "and test it on the near-miss log with layerwise learn.",
                 node_id(m, s->a), node_id(m, s->b), pa, pb, jm,
                 node_id(m, s->a), node_id(m, s->b));
    }
}

/* ---- JSON ---------------------------------------------------------------- */

static json_t *ids_json(const lw_model *m, const size_t *nodes, size_t n)
{
    json_t *a = json_array();
    for (size_t i = 0; a && i < n; i++)
        json_array_append_new(a, json_string(node_id(m, nodes[i])));
    return a;
}

static json_t *set_json(const lw_network *net, const lw_incident_set *s,
                        const unsigned char *held_var)
{
    json_t *o = json_object();
    json_t *ev = json_array();
    for (size_t k = 0; k < s->order; k++)
        json_array_append_new(ev, json_string(net->vars[s->vars[k]].name));
    json_object_set_new(o, "events", ev);
    json_object_set_new(o, "order", json_integer((json_int_t)s->order));
    json_object_set_new(o, "probability", json_real(s->probability));
    if (s->cls != LW_INC_COMPLETED) {
        bool has = s->missing != UINT32_MAX;
        json_object_set_new(o, "missing", has
                            ? json_string(net->vars[s->missing].name)
                            : json_null());
        json_object_set_new(o, "missing_p",
                            lw_json_number(s->missing_p, has));
        json_object_set_new(o, "missing_given_observation",
                            lw_json_number(s->missing_given, has));
    }
    if (s->cls == LW_INC_BLOCKED) {
        json_t *h = json_array();
        for (size_t k = 0; k < s->order; k++)
            if (held_var[s->vars[k]])
                json_array_append_new(h,
                                      json_string(net->vars[s->vars[k]].name));
        json_object_set_new(o, "held", h);
    }
    return o;
}

json_t *lw_incident_json(const lw_model *m, const lw_incident *r)
{
    const lw_network *net = r->net;
    const lw_node *h = &m->nodes[m->hazards[r->hazard]];
    json_t *o = json_object();
    if (!o)
        return NULL;
    unsigned char *held_var = lw_calloc(net->nvars + 1, 1);
    if (!held_var) {
        json_decref(o);
        return NULL;
    }
    for (size_t j = 0; j < r->nheld; j++)
        if (net->event_var[r->held[j]] != UINT32_MAX)
            held_var[net->event_var[r->held[j]]] = 1;
    json_t *hz = json_object();
    json_object_set_new(hz, "id", json_string(h->id));
    json_object_set_new(hz, "label", h->label ? json_string(h->label)
                                              : json_null());
    json_object_set_new(o, "hazard", hz);
    json_object_set_new(o, "variant", r->variant == LW_NONE ? json_null()
                        : json_string(m->variants[r->variant].id));
    json_object_set_new(o, "failed", ids_json(m, r->failed, r->nfailed));
    json_object_set_new(o, "held", ids_json(m, r->held, r->nheld));
    json_object_set_new(o, "conditional_probability",
                        json_real(r->conditional));
    json_object_set_new(o, "prior_probability", json_real(r->prior));
    json_object_set_new(o, "observation_probability",
                        json_real(r->p_observation));
    json_object_set_new(o, "joint_probability", json_real(r->p_joint));
    json_object_set_new(o, "ratio", lw_json_number(r->conditional / r->prior,
                                                   r->prior > 0));
    const lw_incident_set *sets = r->sets;
    json_t *cs = json_array(), *oa = json_array(), *bl = json_array();
    size_t total = r->ncompleted + r->none_away + r->nblocked;
    for (size_t i = 0; i < total; i++) {
        json_t *target = sets[i].cls == LW_INC_COMPLETED ? cs
                         : sets[i].cls == LW_INC_ONE_AWAY ? oa : bl;
        json_array_append_new(target, set_json(net, &sets[i], held_var));
    }
    json_object_set_new(o, "completed", cs);
    json_object_set_new(o, "one_away", oa);
    json_object_set_new(o, "blocked", bl);
    json_object_set_new(o, "truncated", json_boolean(r->truncated));
    json_t *st = json_array();
    for (size_t i = 0; i < r->nstood; i++) {
        const lw_incident_stood *s = &r->stood[i];
        json_t *row = json_object();
        json_object_set_new(row, "id", json_string(node_id(m, s->node)));
        json_object_set_new(row, "label", m->nodes[s->node].label
                            ? json_string(m->nodes[s->node].label)
                            : json_null());
        json_object_set_new(row, "status",
                            json_string(s->held ? "held" : "untouched"));
        json_object_set_new(row, "p", json_real(s->p));
        json_object_set_new(row, "given_observation", json_real(s->given));
        json_object_set_new(row, "sets", json_integer((json_int_t)s->sets));
        json_array_append_new(st, row);
    }
    json_object_set_new(o, "stood", st);
    json_t *om = json_object();
    json_object_set_new(om, "model", json_real(r->misses_model));
    json_object_set_new(om, "independent", json_real(r->misses_independent));
    json_object_set_new(om, "ratio",
                        lw_json_number(r->misses_model / r->misses_independent,
                                       r->misses_independent > 0));
    json_object_set_new(o, "observed_misses", om);
    json_t *lk = json_array();
    for (size_t i = 0; i < r->nlinks; i++) {
        const lw_incident_link *k = &r->links[i];
        char words[512];
        var_words(words, sizeof words, m, net, k->var);
        json_t *row = json_object();
        json_object_set_new(row, "id", json_string(net->vars[k->var].name));
        json_object_set_new(row, "kind",
                            json_string(lw_var_kind_name(net->vars[k->var].kind)));
        json_object_set_new(row, "meaning", json_string(words));
        json_object_set_new(row, "prior", json_real(k->prior));
        json_object_set_new(row, "given_observation", json_real(k->given));
        json_array_append_new(lk, row);
    }
    json_object_set_new(o, "links", lk);
    json_t *sa = json_array();
    for (size_t i = 0; i < r->nstrains; i++) {
        const lw_incident_strain *s = &r->strains[i];
        char words[2048];
        lw_incident_strain_text(words, sizeof words, m, s);
        json_t *row = json_object();
        json_object_set_new(row, "kind", json_string(
            s->kind == LW_STRAIN_SMALL_P ? "small-p"
            : s->linked ? "linked-pair" : "independent-pair"));
        json_t *ev = json_array();
        json_array_append_new(ev, json_string(node_id(m, s->a)));
        if (s->b != LW_NONE)
            json_array_append_new(ev, json_string(node_id(m, s->b)));
        json_object_set_new(row, "events", ev);
        if (s->kind == LW_STRAIN_PAIR) {
            json_object_set_new(row, "joint_model", json_real(s->joint_model));
            json_object_set_new(row, "joint_independent",
                                json_real(s->joint_independent));
        } else {
            json_object_set_new(row, "p", json_real(s->p_a));
        }
        json_object_set_new(row, "text", json_string(words));
        json_array_append_new(sa, row);
    }
    json_object_set_new(o, "strains", sa);
    json_object_set_new(o, "warnings", lw_json_warnings(m));
    json_object_set_new(o, "log_caution", json_string(lw_log_caution()));
    json_object_set_new(o, "caution", json_string(lw_caution()));
    lw_free(held_var);
    return o;
}

/* ---- text ---------------------------------------------------------------- */

/* Print 'text' wrapped at about 76 columns after 'indent' spaces. */
static void wrap(FILE *out, const char *text, int indent, const char *first)
{
    int col = 0;
    const char *s = text;
    fprintf(out, "%*s%s", indent, "", first);
    col = indent + (int)strlen(first);
    while (*s) {
        while (*s == ' ')
            s++;
        const char *e = s;
        while (*e && *e != ' ')
            e++;
        int w = (int)(e - s);
        if (col + w + 1 > 76 && col > indent + (int)strlen(first)) {
            fprintf(out, "\n%*s", indent + (int)strlen(first), "");
            col = indent + (int)strlen(first);
        } else if (col > indent + (int)strlen(first)) {
            fputc(' ', out);
            col++;
        }
        fwrite(s, 1, (size_t)w, out);
        col += w;
        s = e;
    }
    fputc('\n', out);
}

static void print_set(FILE *out, const lw_model *m, const lw_incident *r,
                      const lw_incident_set *s, size_t no)
{
    const lw_network *net = r->net;
    char p[32], buf[512];
    lw_fmt_prob(p, sizeof p, s->probability);
    fprintf(out, "  %2zu. ", no);
    for (size_t k = 0; k < s->order; k++)
        fprintf(out, "%s%s", k ? " + " : "", net->vars[s->vars[k]].name);
    fprintf(out, "   (prior chance %s)\n", p);
    if (s->cls == LW_INC_BLOCKED) {
        fputs("      stopped by:", out);
        for (size_t k = 0; k < s->order; k++) {
            const lw_var *v = &net->vars[s->vars[k]];
            bool held = false;
            for (size_t j = 0; j < r->nheld && v->node != LW_NONE; j++)
                held |= r->held[j] == v->node;
            if (held)
                fprintf(out, " %s (held)", v->name);
        }
        fputc('\n', out);
    }
    if (s->missing != UINT32_MAX && s->cls == LW_INC_BLOCKED) {
        var_words(buf, sizeof buf, m, net, s->missing);
        fprintf(out, "      and it also needs: %s (%s)\n",
                net->vars[s->missing].name, buf);
    } else if (s->missing != UINT32_MAX) {
        char q[32], g[32];
        var_words(buf, sizeof buf, m, net, s->missing);
        lw_fmt_prob(q, sizeof q, s->missing_p);
        lw_fmt_prob(g, sizeof g, s->missing_given);
        fprintf(out, "      would be completed by: %s (%s)\n",
                net->vars[s->missing].name, buf);
        fprintf(out, "      its chance: %s as modelled, %s given what was "
                "observed%s\n", q, g,
                s->missing_given <= 0 ? " - ruled out by the observation"
                : s->missing_p >= 1 ? " - it always misses in this model "
                                      "(an absent layer?)" : "");
    }
}

static void print_class(FILE *out, const lw_model *m, const lw_incident *r,
                        const lw_incident_set *sets, size_t n, size_t top)
{
    size_t shown = top && n > top ? top : n;
    for (size_t i = 0; i < shown; i++)
        print_set(out, m, r, &sets[i], i + 1);
    if (shown < n)
        fprintf(out, "      ... and %zu more (--format json lists them "
                "all)\n", n - shown);
}

void lw_render_incident_text(FILE *out, const lw_model *m,
                             const lw_incident *r, size_t top)
{
    const lw_network *net = r->net;
    const lw_node *h = &m->nodes[m->hazards[r->hazard]];
    char b1[64], b2[64];
    fprintf(out, "Post-incident review: hazard %s: %s\n", h->id,
            lw_node_text(h));
    fprintf(out, "Model %s%s%s%s\n", m->id ? m->id : "",
            m->title ? ": " : "", m->title ? m->title : "",
            r->variant == LW_NONE ? " (as it is)" : "");
    if (r->variant != LW_NONE)
        fprintf(out, "Variant %s\n", m->variants[r->variant].id);
    fputs("\nWhat was observed\n", out);
    for (size_t i = 0; i < r->nfailed; i++)
        fprintf(out, "  failed   %-20s %s\n", node_id(m, r->failed[i]),
                lw_node_text(&m->nodes[r->failed[i]]));
    for (size_t j = 0; j < r->nheld; j++)
        fprintf(out, "  held     %-20s %s\n", node_id(m, r->held[j]),
                lw_node_text(&m->nodes[r->held[j]]));

    fputs("\nHow likely the chain was\n", out);
    lw_fmt_prob(b1, sizeof b1, r->prior);
    lw_fmt_one_in(b2, sizeof b2, r->prior > 0 ? 1 / r->prior : 0);
    fprintf(out, "  Chance of the hazard before the event       %s", b1);
    if (r->prior > 0)
        fprintf(out, "   (about 1 in %s)", b2);
    fputc('\n', out);
    lw_fmt_prob(b1, sizeof b1, r->p_observation);
    lw_fmt_one_in(b2, sizeof b2, 1 / r->p_observation);
    fprintf(out, "  Chance of what was observed                 %s   (about "
            "1 in %s)\n", b1, b2);
    lw_fmt_prob(b1, sizeof b1, r->conditional);
    fprintf(out, "  Chance of the hazard given the observation  %s", b1);
    if (r->prior > 0) {
        lw_fmt_sig(b2, sizeof b2, r->conditional / r->prior);
        fprintf(out, "   (%s times the prior)", b2);
    }
    fputc('\n', out);
    fputs("  (exact, on the model's decision diagram, with its common causes "
          "and dependences)\n", out);

    const lw_incident_set *cs = lw_incident_completed(r);
    fprintf(out, "\nChains the observed misses completed: %zu\n",
            r->ncompleted);
    if (r->ncompleted)
        print_class(out, m, r, cs, r->ncompleted, top);
    else
        fputs("  none: no minimal cut set is made only of events listed as "
              "failed\n", out);
    fprintf(out, "\nChains one event away: %zu\n", r->none_away);
    if (r->none_away)
        print_class(out, m, r, lw_incident_one_away(r),
                    r->none_away, top);
    else
        fputs("  none\n", out);
    if (r->nblocked) {
        fprintf(out, "\nChains that held layers stopped: %zu\n",
                r->nblocked);
        print_class(out, m, r, lw_incident_blocked(r),
                    r->nblocked, top);
    }
    if (r->truncated)
        fprintf(out, "  (the listing stopped at %d sets)\n",
                LW_INCIDENT_MAX_SETS);

    fputs("\nWhat stood\n", out);
    if (!r->nstood)
        fputs("  no safeguard stands on a completed or near chain\n", out);
    for (size_t i = 0; i < r->nstood; i++) {
        const lw_incident_stood *s = &r->stood[i];
        lw_fmt_prob(b1, sizeof b1, s->p);
        if (s->held) {
            fprintf(out, "  held       %-20s %s (miss chance %s as "
                    "modelled)\n", node_id(m, s->node),
                    lw_node_text(&m->nodes[s->node]), b1);
        } else {
            lw_fmt_prob(b2, sizeof b2, s->given);
            fprintf(out, "  untouched  %-20s %s\n", node_id(m, s->node),
                    lw_node_text(&m->nodes[s->node]));
            fprintf(out, "             miss chance %s as modelled, %s given "
                    "what was observed%s\n", b1, b2,
                    s->p >= 1 ? " (absent: it always misses)" : "");
        }
    }

    fputs("\nAssumptions the observation strains\n", out);
    if (r->nfailed > 1) {
        lw_fmt_prob(b1, sizeof b1, r->misses_model);
        lw_fmt_prob(b2, sizeof b2, r->misses_independent);
        char ratio[32];
        lw_fmt_sig(ratio, sizeof ratio, r->misses_independent > 0
                       ? r->misses_model / r->misses_independent : 0);
        char line[512];
        double rt = r->misses_independent > 0
                        ? r->misses_model / r->misses_independent : 0;
        if (fabs(rt - 1) < 1e-6)
            snprintf(line, sizeof line, "Under the model, the observed "
                     "misses together had a chance of %s before the event, "
                     "the same as if each were independent of the others.",
                     b1);
        else
            snprintf(line, sizeof line, "Under the model, the observed "
                     "misses together had a chance of %s before the event; "
                     "if each were independent of the others it would be "
                     "%s (the model's figure is %s times that).", b1, b2,
                     ratio);
        wrap(out, line, 2, "- ");
    }
    size_t nstr = 0;
    for (size_t i = 0; i < r->nstrains; i++) {
        char words[2048];
        lw_incident_strain_text(words, sizeof words, m, &r->strains[i]);
        wrap(out, words, 2, "- ");
        nstr++;
    }
    if (!nstr && r->nfailed <= 1)
        fputs("  - none found: one failed event alone says little about "
              "the model's assumptions\n", out);
    for (size_t i = 0; i < r->nlinks; i++) {
        const lw_incident_link *k = &r->links[i];
        char words[512], line[1024];
        var_words(words, sizeof words, m, net, k->var);
        lw_fmt_prob(b1, sizeof b1, k->prior);
        lw_fmt_prob(b2, sizeof b2, k->given);
        snprintf(line, sizeof line, "%s (%s): chance %s as modelled, %s "
                 "given what was observed.", net->vars[k->var].name, words,
                 b1, b2);
        wrap(out, line, 2, "- ");
    }
    /* absent layers on the hazard that were not listed */
    char absent[1024];
    size_t nabsent = 0, ao = 0;
    absent[0] = '\0';
    for (size_t i = 0; i < m->nnodes; i++) {
        uint32_t v = net->event_var[i];
        if (m->nodes[i].kind != LW_NODE_SAFEGUARD || net->present[i] ||
            v == UINT32_MAX || !r->in_hazard[v])
            continue;
        bool on = false;
        for (size_t k = 0; k < r->nfailed; k++)
            on |= r->failed[k] == i;
        if (on)
            continue;
        int w = snprintf(absent + ao, sizeof absent - ao, "%s%s",
                         nabsent ? ", " : "", m->nodes[i].id);
        if (w > 0 && (size_t)w < sizeof absent - ao)
            ao += (size_t)w;
        nabsent++;
    }
    if (nabsent) {
        char line[1400];
        snprintf(line, sizeof line, "Absent in this model (%s always "
                 "miss%s) and not listed in --failed: %s. Chains through "
                 "%s count as completed or one away only when %s listed.",
                 nabsent > 1 ? "they" : "it", nabsent > 1 ? "" : "es",
                 absent, nabsent > 1 ? "them" : "it",
                 nabsent > 1 ? "they are" : "it is");
        wrap(out, line, 2, "- ");
    }
    fputs("\nReading this\n", out);
    wrap(out, "A completed chain is a minimal cut set whose every event was "
         "listed as failed (a shared cause counts when two of its members "
         "failed, a dependence when both checks failed). A chain one miss "
         "away needs one more event that was not observed either way. "
         "The figures are the model's, conditioned on the observation; "
         "they do not say why the layers failed. Look for the reasons with "
         "the people involved, without blame.", 2, "");
    fputc('\n', out);
    wrap(out, lw_log_caution(), 0, "Note: ");
    lw_text_caution(out);
}
