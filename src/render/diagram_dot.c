/*
 * diagram_dot.c - the model as a Graphviz digraph.
 *
 * One DOT node per model node that the chosen hazards reach, named
 * "n<index>", written once however many gates use it (the model is a
 * DAG); one edge per use.  Shapes follow IEC 61025: hazards (top events)
 * and blocks as rectangles; gates as a rectangle holding the description
 * above the gate's rectangular mark (& for AND, >=1 for OR, k/n for a
 * voting gate); basic events (errors, safeguard misses) as circles with
 * their probability (and their common-cause group, if any); conditions
 * as house shapes.  Dependences are dashed arrows from the first check
 * to the second that do not steer the layout.  Meaning is carried by
 * shape and line style, not colour.
 *
 * Every label is DOT-escaped (quotes and backslashes; in record labels
 * also the record syntax characters), so model text cannot break out of
 * its string.
 */
#include "layerwise/report.h"

#include <math.h>
#include <string.h>

#include "layerwise/alloc.h"
#include "layerwise/network.h"
#include "layerwise/render.h"
#include "render/html.h"

/* Write 's' inside a DOT double-quoted string; 'record' also escapes
 * the characters that structure a record label. */
static void dot_esc(FILE *o, const char *s, bool record)
{
    for (; s && *s; s++) {
        unsigned char c = (unsigned char)*s;
        if (c == '"' || c == '\\') {
            fputc('\\', o);
            fputc(c, o);
        } else if (record && (c == '{' || c == '}' || c == '|' || c == '<' ||
                              c == '>' || c == ' ')) {
            fputc('\\', o);
            fputc(c, o);
        } else if (c == '\n' || c == '\t' || c == '\r') {
            fputc(record ? '\\' : ' ', o);
            if (record)
                fputc(' ', o);
        } else if (c >= 0x20 && c != 0x7f) {
            fputc(c, o);
        }
    }
}

/* Wrapped text, lines joined by the DOT line break "\n". */
static void dot_wrapped(FILE *o, const char *s, size_t cols, size_t lines,
                        bool record)
{
    lwh_lines l;
    lwh_wrap(s, cols, lines, &l);
    for (size_t i = 0; i < l.n; i++) {
        if (i)
            fputs("\\n", o);
        dot_esc(o, l.line[i], record);
    }
}

static void dot_prob(FILE *o, double p)
{
    char b[64];
    lwh_prob(b, sizeof b, p);
    fputs(b, o);
}

static const char *gate_mark(const lw_node *n, char *buf, size_t len)
{
    switch (n->kind) {
    case LW_NODE_ALL: return "&";
    case LW_NODE_ANY: return "\u22651";
    case LW_NODE_VOTE:
        snprintf(buf, len, "%d/%zu", n->k, n->nin);
        return buf;
    default: return "";
    }
}

/* Mark every node reachable from 'root' (iterative: models can be deep). */
static lw_status reach(const lw_model *m, size_t root, unsigned char *seen,
                       lw_error *err)
{
    size_t cap = 64, top = 0;
    size_t *stack = lw_malloc(cap * sizeof *stack);
    if (!stack)
        return lw_error_oom(err);
    stack[top++] = root;
    seen[root] = 1;
    while (top) {
        const lw_node *n = &m->nodes[stack[--top]];
        for (size_t i = 0; i < n->nin; i++) {
            size_t c = n->in[i];
            if (seen[c])
                continue;
            seen[c] = 1;
            if (top == cap) {
                size_t *s2 = lw_grow(stack, &cap, top + 1, sizeof *stack);
                if (!s2) {
                    lw_free(stack);
                    return lw_error_oom(err);
                }
                stack = s2;
            }
            stack[top++] = c;
        }
    }
    lw_free(stack);
    return LW_OK;
}

static void put_event(FILE *o, const lw_model *m, const lw_network *net,
                      size_t i, const double *event_p, bool state)
{
    const lw_node *n = &m->nodes[i];
    fprintf(o, "  n%zu [", i);
    if (n->kind == LW_NODE_CONDITION) {
        fputs("shape=house, margin=\"0.08,0.04\", label=\"CONDITION\\n", o);
        dot_wrapped(o, lw_node_text(n), 18, 4, false);
        fputs("\\n(", o);
        dot_esc(o, n->id, false);
        fprintf(o, ")\\nstate: %s\"", state ? "true" : "false");
    } else {
        bool absent = n->kind == LW_NODE_SAFEGUARD && net &&
                      !net->present[i];
        fprintf(o, "shape=circle, width=1.3, margin=0.02, fontsize=9, "
                "penwidth=%s%s, "
                "label=\"%s\\n", n->kind == LW_NODE_ERROR ? "2.6" : "1.2",
                absent ? ", style=dashed" : "",
                n->kind == LW_NODE_ERROR ? "ERROR" : "SAFEGUARD");
        dot_wrapped(o, lw_node_text(n), 16, 4, false);
        fputs("\\n(", o);
        dot_esc(o, n->id, false);
        fputs(")\\n", o);
        if (absent) {
            fputs("absent: misses, p = 1", o);
        } else {
            fputs(n->kind == LW_NODE_SAFEGUARD ? "misses: p = " : "p = ", o);
            dot_prob(o, event_p[i]);
        }
        for (size_t g = 0; g < m->ngroups; g++) {
            const lw_group *gr = &m->groups[g];
            for (size_t k = 0; k < gr->nmembers; k++) {
                if (gr->members[k] != i)
                    continue;
                fputs("\\ncommon cause\\n", o);
                dot_esc(o, gr->id, false);
                fprintf(o, ", beta %.3g", net ? net->beta[g] : gr->beta);
            }
        }
        fputc('"', o);
    }
    fputs("];\n", o);
}

static void put_gate(FILE *o, const lw_model *m, size_t i)
{
    const lw_node *n = &m->nodes[i];
    char kb[48];
    const char *mark = gate_mark(n, kb, sizeof kb);
    bool named = (n->label && n->label[0]) || n->id;
    fprintf(o, "  n%zu [", i);
    if (!named) {
        fputs("shape=box, width=0.5, height=0.3, fontsize=13, label=\"", o);
        dot_esc(o, mark, false);
        fputs("\"];\n", o);
        return;
    }
    fputs("shape=record, label=\"{", o);
    dot_wrapped(o, n->label && n->label[0] ? n->label : n->id, 26, 4, true);
    if (n->id) {
        fputs("\\n(", o);
        dot_esc(o, n->id, true);
        fputs(")", o);
    }
    fputs("|", o);
    dot_esc(o, mark, true);
    fputs("}\"];\n", o);
}

static void put_box(FILE *o, const lw_model *m, size_t i)
{
    const lw_node *n = &m->nodes[i];
    fprintf(o, "  n%zu [shape=box, ", i);
    if (n->kind == LW_NODE_HAZARD) {
        fputs("penwidth=3, fontsize=12, label=\"HAZARD\\n", o);
        dot_wrapped(o, lw_node_text(n), 30, 4, false);
        fputs("\\n(", o);
        dot_esc(o, n->id, false);
        fputs(")", o);
        if (n->has_tolerable) {
            fputs("\\ntolerable ", o);
            dot_prob(o, n->tolerable);
        }
    } else {
        fputs("penwidth=1.4, label=\"", o);
        dot_wrapped(o, lw_node_text(n), 28, 4, false);
        fputs("\\n(", o);
        dot_esc(o, n->id, false);
        fputs(")", o);
    }
    fputs("\"];\n", o);
}

lw_status lw_render_dot(FILE *out, const lw_model *m,
                        const lw_diagram_options *opt, lw_error *err)
{
    size_t hazard = opt ? opt->hazard : LW_NONE;
    size_t variant = opt ? opt->variant : LW_NONE;
    if (hazard != LW_NONE && hazard >= m->nhazards)
        return lw_error_set(err, LW_EUSAGE, m->file, 0,
                            "no hazard number %zu", hazard);
    lw_network *net = NULL;
    lw_status st = lw_compile(m, variant, &net, err);
    if (st != LW_OK)
        return st;
    unsigned char *seen = lw_calloc(m->nnodes + 1, 1);
    double *event_p = lw_calloc(m->nnodes + 1, sizeof *event_p);
    bool *state = lw_calloc(m->nnodes + 1, sizeof *state);
    if (!seen || !event_p || !state) {
        st = lw_error_oom(err);
        goto done;
    }
    lw_network_event_probs(net, event_p);
    for (size_t i = 0; i < m->nnodes; i++)
        state[i] = m->nodes[i].state;
    if (variant != LW_NONE) {
        const lw_variant *v = &m->variants[variant];
        for (size_t s = 0; s < v->nsets; s++)
            if (v->sets[s].attr == LW_SET_STATE &&
                v->sets[s].target_kind == LW_TARGET_NODE)
                state[v->sets[s].target] = v->sets[s].flag;
    }
    for (size_t h = 0; h < m->nhazards; h++) {
        if (hazard != LW_NONE && h != hazard)
            continue;
        st = reach(m, m->hazards[h], seen, err);
        if (st != LW_OK)
            goto done;
    }

    fputs("digraph \"", out);
    dot_esc(out, m->id, false);
    fputs("\" {\n  graph [rankdir=TB, nodesep=0.25, ranksep=0.4, "
          "fontname=\"Helvetica\", fontsize=16, labelloc=t, label=\"", out);
    dot_wrapped(out, m->title && m->title[0] ? m->title : m->id, 70, 2,
                false);
    if (variant != LW_NONE) {
        const lw_variant *v = &m->variants[variant];
        fputs("\\nvariant: ", out);
        dot_wrapped(out, v->label && v->label[0] ? v->label : v->id, 70, 2,
                    false);
        fputs(" (", out);
        dot_esc(out, v->id, false);
        fputs(")", out);
    }
    fputs("\"];\n  node [fontname=\"Helvetica\", fontsize=10];\n"
          "  edge [arrowhead=none, penwidth=1.2, fontname=\"Helvetica\"];\n", out);
    fputs("  legend [shape=note, fontsize=9, label=\"How to read this tree"
          "\\l& : all inputs happen (AND gate)\\l\u22651 : any input happens "
          "(OR gate)\\lk/n : at least k of the n inputs (voting gate)\\l"
          "circle: basic event with its probability\\l  bold: an error; "
          "thin: a safeguard (chance it misses)\\l  dashed: a safeguard "
          "absent here\\l"
          "house: a condition (switch)\\ldashed arrow: the second check "
          "depends on the first\\lcommon cause: events that can fail "
          "together\\l\"];\n", out);

    for (size_t i = 0; i < m->nnodes; i++) {
        if (!seen[i])
            continue;
        const lw_node *n = &m->nodes[i];
        if (lw_node_is_event(n->kind))
            put_event(out, m, net, i, event_p, state[i]);
        else if (lw_node_is_gate(n->kind))
            put_gate(out, m, i);
        else
            put_box(out, m, i);
    }
    for (size_t i = 0; i < m->nnodes; i++) {
        if (!seen[i])
            continue;
        const lw_node *n = &m->nodes[i];
        for (size_t k = 0; k < n->nin; k++)
            fprintf(out, "  n%zu -> n%zu;\n", i, n->in[k]);
    }
    for (size_t d = 0; d < m->ndeps; d++) {
        const lw_dependence *dp = &m->deps[d];
        if (!seen[dp->first] || !seen[dp->second])
            continue;
        fprintf(out, "  n%zu -> n%zu [style=dashed, arrowhead=normal, "
                "constraint=false, fontsize=9, label=\"%s dependence\"];\n",
                dp->first, dp->second, lw_level_name(net->level[d]));
    }
    fputs("}\n", out);
    if (ferror(out))
        st = lw_error_set(err, LW_EIO, NULL, 0,
                          "could not write the diagram");
done:
    lw_free(state);
    lw_free(event_p);
    lw_free(seen);
    lw_network_free(net);
    return st;
}
