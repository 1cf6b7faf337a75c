/*
 * load.c - read a safety model (format 1) into an lw_model.
 *
 * HOW IT WORKS
 *   1. The bytes are parsed by libxml2 with the network off, no entity
 *      substitution, no DTD loading and line numbers past 65535 kept.  A
 *      DOCTYPE that declares entities is rejected outright: before parsing
 *      when its internal subset shows it, else after.
 *   2. The document is validated against the schema compiled into the
 *      library (docs/model.xsd).  Structural errors stop here, each with
 *      its line; libxml2's wording is rewritten where it helps.
 *   3. One walk over the elements builds the flat node array, registers
 *      every id in one map and records references by name.
 *   4. References are resolved, cycles are searched (iteratively: a model
 *      may chain 100,000 blocks), and the rules a schema cannot state are
 *      checked: ranges, groups, dependences, variants.
 *   Every problem is recorded with its line; loading fails if any was
 *   found, and the partial model is freed.
 *
 * LIMITS
 *   File size, text length, node count and element nesting by
 *   lw_load_limits (nesting: libxml2 stops at 256 levels unless a larger
 *   limit is asked for, and a smaller one is checked here).
 */
#include "layerwise/model.h"

#include <libxml/parser.h>
#include <libxml/tree.h>
#include <libxml/xmlreader.h>
#include <libxml/xmlschemas.h>
#include <errno.h>
#include <math.h>
#include <pthread.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "common/numparse.h"
#include "common/strmap.h"
#include "layerwise/alloc.h"
#include "layerwise/deep.h"
#include "load/schema.h"

/* What an id names: a node, a common-cause group, a dependence, a variant. */
enum { ID_NODE = 0, ID_GROUP = 1, ID_DEP = 2, ID_VARIANT = 3 };
#define ID_TAG(kind, index) (((size_t)(index) << 2) | (size_t)(kind))
#define ID_KIND(v) ((int)((v) & 3u))
#define ID_INDEX(v) ((v) >> 2)

typedef struct pending_ref {        /* a <ref to="..."> awaiting resolution */
    size_t gate;        /* node whose input slot it fills */
    size_t slot;        /* index in that node's 'in' */
    char *to;           /* owned target id */
    long line;
} pending_ref;

typedef struct loader {
    lw_model *m;
    lw_error *err;
    const char *file;           /* name for messages */
    lw_load_limits lim;
    lw_strmap ids;              /* id -> ID_TAG */
    size_t cap_nodes, cap_groups, cap_deps, cap_variants, cap_hazards;
    pending_ref *refs;
    size_t nrefs, cap_refs;
    char **group_members_raw;   /* per group: owned members attribute */
    long *group_member_line;
    char **dep_first_raw, **dep_second_raw;   /* per dependence */
    struct set_raw { char *ref; char *attr_value; } **set_raw;  /* per variant */
    int failed;                 /* an error was recorded */
    int oom;
    long title_line, desc_line, exposure_line;
} loader;

/* ------------------------------------------------------------------ */
/* small helpers                                                       */

static void fail(loader *L, long line, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));

static void fail(loader *L, long line, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    lw_error_vset(L->err, LW_EMODEL, L->file, line, fmt, ap);
    va_end(ap);
    L->failed = 1;
}

static void nomem(loader *L)
{
    if (!L->oom)
        lw_error_oom(L->err);
    L->oom = 1;
    L->failed = 1;
}

/* The line where an element's start tag begins (set by mark_begin_lines
 * in _private), else libxml2's own line; an attribute reports its
 * element's line. */
static long line_of(xmlNodePtr n)
{
    if (n && n->type == XML_ATTRIBUTE_NODE && n->parent)
        n = n->parent;
    if (n && n->type == XML_ELEMENT_NODE && n->_private)
        return (long)(intptr_t)n->_private;
    return n ? (long)xmlGetLineNo(n) : 0;
}

static const char *ename(xmlNodePtr n) { return (const char *)n->name; }

/* Owned copy of an attribute, or NULL when absent (or out of memory; then
 * L->oom is set). */
/* An attribute's value without copying it, when it is one text node (as
 * the parser makes it: no entities are substituted); NULL when absent.
 * '*tmp' receives a copy to xmlFree when the value had to be assembled. */
static const char *attr_view(xmlNodePtr n, const char *name, xmlChar **tmp)
{
    *tmp = NULL;
    for (xmlAttrPtr a = n->properties; a; a = a->next) {
        if (a->ns || !xmlStrEqual(a->name, (const xmlChar *)name))
            continue;
        xmlNodePtr c = a->children;
        if (!c)
            return "";
        if (c->type == XML_TEXT_NODE && !c->next && c->content)
            return (const char *)c->content;
        *tmp = xmlNodeListGetString(n->doc, c, 1);
        return *tmp ? (const char *)*tmp : "";
    }
    return NULL;
}

/* Owned copy of an attribute, or NULL when absent (or out of memory; then
 * L->oom is set). */
static char *attr(loader *L, xmlNodePtr n, const char *name)
{
    xmlChar *tmp;
    const char *v = attr_view(n, name, &tmp);
    if (!v)
        return NULL;
    char *s = lw_strdup(v);
    if (tmp)
        xmlFree(tmp);
    if (!s)
        nomem(L);
    return s;
}

static int has_attr(xmlNodePtr n, const char *name)
{
    return xmlHasProp(n, (const xmlChar *)name) != NULL;
}

/* Number attribute.  Returns 1 when present and valid, 0 when absent, -1
 * when present and invalid (an error was recorded). */
static int num_attr(loader *L, xmlNodePtr n, const char *name, double *out)
{
    xmlChar *tmp;
    const char *v = attr_view(n, name, &tmp);
    if (!v)
        return 0;
    int rc = lw_parse_number((const char *)v, out);
    if (rc == -2)
        fail(L, line_of(n), "<%s> %s=\"%s\" is too large to be a number; "
             "write a finite decimal such as 0.01 or 1e-3", ename(n), name,
             (const char *)v);
    else if (rc < 0)
        fail(L, line_of(n), "<%s> %s=\"%s\" is not a finite decimal number; "
             "write it as e.g. 0.01 or 1e-3", ename(n), name,
             (const char *)v);
    if (tmp)
        xmlFree(tmp);
    return rc == 0 ? 1 : -1;
}

static int check_text_len(loader *L, xmlNodePtr n, const char *what,
                          const char *s)
{
    if (s && strlen(s) > L->lim.max_text) {
        fail(L, line_of(n), "<%s> %s is %zu bytes long, over the limit of "
             "%zu; shorten it", ename(n), what, strlen(s), L->lim.max_text);
        return 0;
    }
    return 1;
}

static const char *kind_word(int idkind, const lw_model *m, size_t index)
{
    switch (idkind) {
    case ID_NODE:
        switch (m->nodes[index].kind) {
        case LW_NODE_ALL: return "gate <all>";
        case LW_NODE_ANY: return "gate <any>";
        case LW_NODE_VOTE: return "gate <vote>";
        default: return lw_node_kind_name(m->nodes[index].kind);
        }
    case ID_GROUP: return "common-cause";
    case ID_DEP: return "dependence";
    default: return "variant";
    }
}

static long id_line(const lw_model *m, size_t tag)
{
    size_t i = ID_INDEX(tag);
    switch (ID_KIND(tag)) {
    case ID_NODE: return m->nodes[i].line;
    case ID_GROUP: return m->groups[i].line;
    case ID_DEP: return m->deps[i].line;
    default: return m->variants[i].line;
    }
}

/* [A-Za-z][A-Za-z0-9_.-]*: checked here rather than by the schema's
 * regular expressions, which were most of the cost of validating a large
 * model (the compiled-in schema has its patterns removed). */
static int valid_id(const char *s)
{
    if (!((*s >= 'A' && *s <= 'Z') || (*s >= 'a' && *s <= 'z')))
        return 0;
    for (s++; *s; s++)
        if (!((*s >= 'A' && *s <= 'Z') || (*s >= 'a' && *s <= 'z') ||
              (*s >= '0' && *s <= '9') || *s == '_' || *s == '.' ||
              *s == '-'))
            return 0;
    return 1;
}

static void bad_id(loader *L, long line, const char *elem, const char *id)
{
    fail(L, line, "<%s> id=\"%s\" is not a valid id: start with a letter, "
         "then use letters, digits, '_', '.' or '-'", elem, id);
}

/* Register 'id' (borrowed from the model) for a thing of 'kind'. */
static void register_id(loader *L, const char *id, int kind, size_t index,
                        long line, const char *elem)
{
    if (!id)
        return;
    if (!valid_id(id)) {
        bad_id(L, line, elem, id);
        return;
    }
    size_t old = 0;
    int rc = lw_strmap_put(&L->ids, id, ID_TAG(kind, index), &old);
    if (rc < 0) {
        nomem(L);
    } else if (rc == 0) {
        fail(L, line, "<%s> id \"%s\" is already used by the %s on line %ld; "
             "ids must be unique across the file", elem, id,
             kind_word(ID_KIND(old), L->m, ID_INDEX(old)),
             id_line(L->m, old));
    }
}

/* ------------------------------------------------------------------ */
/* building nodes                                                      */

static size_t new_node(loader *L, lw_node_kind kind, xmlNodePtr x)
{
    lw_model *m = L->m;
    if (m->nnodes >= L->lim.max_nodes) {
        if (m->nnodes == L->lim.max_nodes)
            lw_error_set(L->err, LW_ELIMIT, L->file, line_of(x),
                         "the model has more than %zu events and gates, the "
                         "limit; raise it with --max-events",
                         L->lim.max_nodes);
        L->failed = 1;
        L->lim.max_nodes = m->nnodes - 1;   /* report only once */
        return LW_NONE;
    }
    lw_node *nodes = lw_grow(m->nodes, &L->cap_nodes, m->nnodes + 1,
                             sizeof *nodes);
    if (!nodes) {
        nomem(L);
        return LW_NONE;
    }
    m->nodes = nodes;
    lw_node *n = &nodes[m->nnodes];
    memset(n, 0, sizeof *n);
    n->kind = kind;
    n->line = line_of(x);
    n->present = true;
    return m->nnodes++;
}

static int is_logic_elem(xmlNodePtr c)
{
    static const char *names[] = {"all", "any", "vote", "ref", "error",
                                  "safeguard", "condition"};
    if (c->type != XML_ELEMENT_NODE)
        return 0;
    for (size_t i = 0; i < sizeof names / sizeof *names; i++)
        if (xmlStrEqual(c->name, (const xmlChar *)names[i]))
            return 1;
    return 0;
}

static void read_probability(loader *L, xmlNodePtr x, lw_node *n)
{
    lw_dist *d = &n->dist;
    double p = 0;
    int hp = num_attr(L, x, "p", &p);
    xmlNodePtr child = NULL;
    for (xmlNodePtr c = x->children; c; c = c->next)
        if (c->type == XML_ELEMENT_NODE) {
            child = c;
            break;
        }
    long line = line_of(x);
    const char *id = n->id ? n->id : "?";
    if (hp == 1 && (p < 0 || p > 1))
        fail(L, line, "<%s id=\"%s\"> p=%g is outside [0, 1]; a probability "
             "per exposure unit is between 0 and 1", ename(x), id, p);
    d->kind = LW_DIST_POINT;
    d->p = p;
    if (!child) {
        if (hp == 0)
            fail(L, line, "<%s id=\"%s\"> has no probability; give p=\"...\" "
                 "or an <observed count=\"..\" of=\"..\"/> child", ename(x),
                 id);
        return;
    }
    long cl = line_of(child);
    if (xmlStrEqual(child->name, (const xmlChar *)"observed")) {
        double c = 0, of = 0;
        d->kind = LW_DIST_OBSERVED;
        if (hp != 0) {
            fail(L, line, "<%s id=\"%s\"> has both p and <observed>; give "
                 "exactly one of them", ename(x), id);
        }
        int hc = num_attr(L, child, "count", &c);
        int ho = num_attr(L, child, "of", &of);
        if (hc == 1 && ho == 1) {
            if (c < 0 || c != floor(c) || of < 1 || of != floor(of) ||
                of > 9.0e15)
                fail(L, cl, "<observed> count=%g of=%g: both must be whole "
                     "numbers with count >= 0 and of >= 1", c, of);
            else if (c > of)
                fail(L, cl, "<observed> count=%g is larger than of=%g; "
                     "count is how many of the 'of' trials missed", c, of);
            d->count = c;
            d->of = of;
            d->p = (c + 0.5) / (of + 1.0);
        }
        d->source = attr(L, child, "source");
        check_text_len(L, child, "source", d->source);
        return;
    }
    if (hp == 0 && !xmlStrEqual(child->name, (const xmlChar *)"beta")) {
        fail(L, line, "<%s id=\"%s\"> has a <%s> child but no p; give the "
             "point value as p=\"...\"", ename(x), id, ename(child));
        return;
    }
    if (xmlStrEqual(child->name, (const xmlChar *)"lognormal")) {
        double ef = 0;
        d->kind = LW_DIST_LOGNORMAL;
        if (num_attr(L, child, "error-factor", &ef) == 1) {
            if (ef < 1)
                fail(L, cl, "<lognormal> error-factor=%g must be at least 1 "
                     "(it is the 95th percentile over the median)", ef);
            d->ef = ef;
        }
    } else if (xmlStrEqual(child->name, (const xmlChar *)"beta")) {
        double a = 0, b = 0;
        d->kind = LW_DIST_BETA;
        int ha = num_attr(L, child, "a", &a);
        int hb = num_attr(L, child, "b", &b);
        if (ha == 1 && hb == 1) {
            if (!(a > 0) || !(b > 0)) {
                fail(L, cl, "<beta> a=%g b=%g: both shape parameters must "
                     "be greater than 0", a, b);
            } else {
                double mean = a / (a + b);
                if (hp == 1 && fabs(mean - p) > 1e-9 * fmax(mean, 1e-300) &&
                    fabs(mean - p) > 1e-15)
                    fail(L, cl, "<beta a=\"%g\" b=\"%g\"> has mean %.9g but "
                         "the event says p=%g; remove p or make it agree",
                         a, b, mean, p);
                d->p = mean;
            }
            d->a = a;
            d->b = b;
        }
    } else if (xmlStrEqual(child->name, (const xmlChar *)"uniform")) {
        double lo = 0, hi = 0;
        d->kind = LW_DIST_UNIFORM;
        int hl = num_attr(L, child, "low", &lo);
        int hh = num_attr(L, child, "high", &hi);
        if (hl == 1 && hh == 1) {
            if (lo < 0 || hi > 1 || lo > hi)
                fail(L, cl, "<uniform> low=%g high=%g: need 0 <= low <= "
                     "high <= 1", lo, hi);
            else if (hp == 1 && (p < lo || p > hi))
                fail(L, cl, "<uniform low=\"%g\" high=\"%g\"> does not "
                     "contain the event's p=%g", lo, hi, p);
            d->low = lo;
            d->high = hi;
        }
    }
}

static size_t build_logic(loader *L, xmlNodePtr x);

/* An event element (root or inline). */
static size_t build_event(loader *L, xmlNodePtr x, lw_node_kind kind)
{
    size_t ni = new_node(L, kind, x);
    if (ni == LW_NONE)
        return LW_NONE;
    char *id = attr(L, x, "id");
    char *label = attr(L, x, "label");
    char *source = attr(L, x, "source");
    lw_node *n = &L->m->nodes[ni];
    n->id = id;
    n->label = label;
    n->source = source;
    check_text_len(L, x, "label", label);
    check_text_len(L, x, "source", source);
    if (kind == LW_NODE_CONDITION) {
        char *st = attr(L, x, "state");
        n->state = st && strcmp(st, "true") == 0;
        lw_free(st);
    } else {
        read_probability(L, x, n);
        if (kind == LW_NODE_SAFEGUARD) {
            char *pr = attr(L, x, "present");
            n = &L->m->nodes[ni];
            n->present = !(pr && strcmp(pr, "no") == 0);
            lw_free(pr);
        }
    }
    register_id(L, L->m->nodes[ni].id, ID_NODE, ni, L->m->nodes[ni].line,
                ename(x));
    return ni;
}

static void add_pending_ref(loader *L, size_t gate, size_t slot,
                            xmlNodePtr x)
{
    pending_ref *r = lw_grow(L->refs, &L->cap_refs, L->nrefs + 1, sizeof *r);
    if (!r) {
        nomem(L);
        return;
    }
    L->refs = r;
    char *to = attr(L, x, "to");
    if (!to) {
        if (!L->oom)
            fail(L, line_of(x), "<ref> needs a to=\"...\" attribute");
        return;
    }
    r[L->nrefs].gate = gate;
    r[L->nrefs].slot = slot;
    r[L->nrefs].to = to;
    r[L->nrefs].line = line_of(x);
    L->nrefs++;
}

/* A gate, block or hazard: make the node, then its inputs.  Nesting is
 * bounded by the parser's depth limit, so recursion here is bounded. */
static size_t build_gate(loader *L, xmlNodePtr x, lw_node_kind kind)
{
    size_t ni = new_node(L, kind, x);
    if (ni == LW_NONE)
        return LW_NONE;
    lw_node *n = &L->m->nodes[ni];
    n->id = attr(L, x, "id");
    n->label = attr(L, x, "label");
    check_text_len(L, x, "label", n->label);
    size_t count = 0;
    for (xmlNodePtr c = x->children; c; c = c->next)
        if (is_logic_elem(c))
            count++;
    size_t *in = lw_calloc(count, sizeof *in);
    if (!in) {
        nomem(L);
        return ni;
    }
    for (size_t i = 0; i < count; i++)
        in[i] = LW_NONE;
    L->m->nodes[ni].in = in;
    L->m->nodes[ni].nin = count;
    if (kind == LW_NODE_VOTE) {
        double k = 0;
        int hk = num_attr(L, x, "k", &k);
        if (hk == 1) {
            if (k != floor(k) || k < 1 || k > (double)count)
                fail(L, line_of(x), "<vote k=\"%g\"> needs a whole k from 1 "
                     "to its number of inputs (%zu)", k, count);
            else
                L->m->nodes[ni].k = (int)k;
        }
    }
    if (kind == LW_NODE_HAZARD) {
        double t = 0;
        int ht = num_attr(L, x, "tolerable", &t);
        if (ht == 1) {
            if (!(t > 0) || t > 1)
                fail(L, line_of(x), "<hazard> tolerable=%g must be a "
                     "probability per exposure unit in (0, 1]", t);
            L->m->nodes[ni].has_tolerable = true;
            L->m->nodes[ni].tolerable = t;
        }
    }
    register_id(L, L->m->nodes[ni].id, ID_NODE, ni, L->m->nodes[ni].line,
                ename(x));
    size_t slot = 0;
    for (xmlNodePtr c = x->children; c && !L->oom; c = c->next) {
        if (!is_logic_elem(c))
            continue;
        if (xmlStrEqual(c->name, (const xmlChar *)"ref")) {
            add_pending_ref(L, ni, slot, c);
        } else {
            size_t ci = build_logic(L, c);
            if (ci != LW_NONE)
                L->m->nodes[ni].in[slot] = ci;
        }
        slot++;
    }
    return ni;
}

static size_t build_logic(loader *L, xmlNodePtr x)
{
    const char *n = ename(x);
    if (!strcmp(n, "all")) return build_gate(L, x, LW_NODE_ALL);
    if (!strcmp(n, "any")) return build_gate(L, x, LW_NODE_ANY);
    if (!strcmp(n, "vote")) return build_gate(L, x, LW_NODE_VOTE);
    if (!strcmp(n, "error")) return build_event(L, x, LW_NODE_ERROR);
    if (!strcmp(n, "safeguard")) return build_event(L, x, LW_NODE_SAFEGUARD);
    if (!strcmp(n, "condition")) return build_event(L, x, LW_NODE_CONDITION);
    return LW_NONE;
}

static void build_group(loader *L, xmlNodePtr x)
{
    lw_model *m = L->m;
    lw_group *g = lw_grow(m->groups, &L->cap_groups, m->ngroups + 1,
                          sizeof *g);
    char **raw = g ? lw_realloc(L->group_members_raw,
                                L->cap_groups * sizeof *raw) : NULL;
    if (!g || !raw) {
        if (g)
            m->groups = g;
        nomem(L);
        return;
    }
    m->groups = g;
    L->group_members_raw = raw;
    size_t gi = m->ngroups++;
    memset(&g[gi], 0, sizeof g[gi]);
    raw[gi] = NULL;
    g[gi].line = line_of(x);
    g[gi].id = attr(L, x, "id");
    g[gi].label = attr(L, x, "label");
    check_text_len(L, x, "label", g[gi].label);
    double beta = 0;
    if (num_attr(L, x, "beta", &beta) == 1) {
        if (beta < 0 || beta > 1)
            fail(L, g[gi].line, "<common-cause> beta=%g must be in [0, 1]",
                 beta);
        g[gi].beta = beta;
    }
    raw[gi] = attr(L, x, "members");
    register_id(L, g[gi].id, ID_GROUP, gi, g[gi].line, "common-cause");
}

static int parse_level(const char *s, lw_level *out)
{
    static const char *names[] = {"zero", "low", "moderate", "high",
                                  "complete"};
    for (int i = 0; i < 5; i++)
        if (s && !strcmp(s, names[i])) {
            *out = (lw_level)i;
            return 1;
        }
    return 0;
}

static void build_dependence(loader *L, xmlNodePtr x)
{
    lw_model *m = L->m;
    lw_dependence *d = lw_grow(m->deps, &L->cap_deps, m->ndeps + 1,
                               sizeof *d);
    char **f = d ? lw_realloc(L->dep_first_raw, L->cap_deps * sizeof *f)
                 : NULL;
    if (f)
        L->dep_first_raw = f;
    char **s = f ? lw_realloc(L->dep_second_raw, L->cap_deps * sizeof *s)
                 : NULL;
    if (s)
        L->dep_second_raw = s;
    if (d)
        m->deps = d;
    if (!d || !f || !s) {
        nomem(L);
        return;
    }
    size_t di = m->ndeps++;
    memset(&d[di], 0, sizeof d[di]);
    d[di].line = line_of(x);
    d[di].id = attr(L, x, "id");
    f[di] = attr(L, x, "first");
    s[di] = attr(L, x, "second");
    char *lv = attr(L, x, "level");
    parse_level(lv, &d[di].level);
    lw_free(lv);
    register_id(L, d[di].id, ID_DEP, di, d[di].line, "dependence");
}

static void build_variant(loader *L, xmlNodePtr x)
{
    lw_model *m = L->m;
    lw_variant *v = lw_grow(m->variants, &L->cap_variants, m->nvariants + 1,
                            sizeof *v);
    if (!v) {
        nomem(L);
        return;
    }
    m->variants = v;
    struct set_raw **raw = lw_realloc(L->set_raw,
                                      L->cap_variants * sizeof *raw);
    if (!raw) {
        nomem(L);
        return;
    }
    L->set_raw = raw;
    size_t vi = m->nvariants++;
    memset(&v[vi], 0, sizeof v[vi]);
    raw[vi] = NULL;
    v[vi].line = line_of(x);
    v[vi].id = attr(L, x, "id");
    v[vi].label = attr(L, x, "label");
    check_text_len(L, x, "label", v[vi].label);
    register_id(L, v[vi].id, ID_VARIANT, vi, v[vi].line, "variant");
    size_t count = 0;
    for (xmlNodePtr c = x->children; c; c = c->next)
        if (c->type == XML_ELEMENT_NODE)
            count++;
    v[vi].sets = lw_calloc(count, sizeof *v[vi].sets);
    raw[vi] = lw_calloc(count, sizeof **raw);
    if (!v[vi].sets || !raw[vi]) {
        nomem(L);
        return;
    }
    static const char *attrs[] = {"p", "present", "state", "beta", "level"};
    for (xmlNodePtr c = x->children; c; c = c->next) {
        if (c->type != XML_ELEMENT_NODE)
            continue;
        size_t si = v[vi].nsets++;
        lw_set *s = &v[vi].sets[si];
        s->line = line_of(c);
        raw[vi][si].ref = attr(L, c, "ref");
        int found = 0;
        for (int a = 0; a < 5; a++) {
            if (!has_attr(c, attrs[a]))
                continue;
            found++;
            s->attr = (lw_set_attr)a;
            lw_free(raw[vi][si].attr_value);
            raw[vi][si].attr_value = attr(L, c, attrs[a]);
        }
        if (found != 1) {
            fail(L, s->line, "<set ref=\"%s\"> must change exactly one of "
                 "p, present, state, beta, level (it names %d)",
                 raw[vi][si].ref ? raw[vi][si].ref : "", found);
            lw_free(raw[vi][si].ref);   /* check_variants skips it */
            raw[vi][si].ref = NULL;
            continue;
        }
        const char *val = raw[vi][si].attr_value;
        if (s->attr == LW_SET_P || s->attr == LW_SET_BETA) {
            double d = 0;
            if (num_attr(L, c, attrs[s->attr], &d) == 1) {
                if (d < 0 || d > 1)
                    fail(L, s->line, "<set> %s=%g must be in [0, 1]",
                         attrs[s->attr], d);
                s->number = d;
            }
        } else if (s->attr == LW_SET_PRESENT) {
            s->flag = val && !strcmp(val, "yes");
        } else if (s->attr == LW_SET_STATE) {
            s->flag = val && !strcmp(val, "true");
        } else {
            parse_level(val, &s->level);
        }
    }
}

static void read_text_once(loader *L, xmlNodePtr x, char **slot,
                           long *seen_line)
{
    if (*seen_line) {
        fail(L, line_of(x), "<%s> appears again; it was already given on "
             "line %ld and may appear at most once", ename(x), *seen_line);
        return;
    }
    *seen_line = line_of(x);
    xmlChar *t = xmlNodeGetContent(x);
    if (t) {
        *slot = lw_strdup((const char *)t);
        xmlFree(t);
        if (!*slot)
            nomem(L);
        check_text_len(L, x, "text", *slot);
    }
}

static void build_root_begin(loader *L, xmlNodePtr root)
{
    lw_model *m = L->m;
    m->id = attr(L, root, "id");
    if (m->id && !valid_id(m->id))
        bad_id(L, line_of(root), "safety-model", m->id);
}

/* One child element of the root. */
static void build_root_child(loader *L, xmlNodePtr c)
{
    lw_model *m = L->m;
    {
        const char *n = ename(c);
        if (!strcmp(n, "title")) {
            read_text_once(L, c, &m->title, &L->title_line);
        } else if (!strcmp(n, "description")) {
            read_text_once(L, c, &m->description, &L->desc_line);
        } else if (!strcmp(n, "exposure")) {
            if (L->exposure_line) {
                fail(L, line_of(c), "<exposure> appears again; it was "
                     "already given on line %ld", L->exposure_line);
                return;
            }
            L->exposure_line = line_of(c);
            m->exposure_unit = attr(L, c, "unit");
            double py = 0;
            if (num_attr(L, c, "per-year", &py) == 1) {
                if (!(py > 0))
                    fail(L, line_of(c), "<exposure> per-year=%g must be "
                         "greater than 0", py);
                m->per_year = py;
                m->has_exposure = true;
            }
        } else if (!strcmp(n, "error") || !strcmp(n, "safeguard") ||
                   !strcmp(n, "condition")) {
            build_logic(L, c);
        } else if (!strcmp(n, "block")) {
            build_gate(L, c, LW_NODE_BLOCK);
        } else if (!strcmp(n, "hazard")) {
            size_t hi = build_gate(L, c, LW_NODE_HAZARD);
            if (hi != LW_NONE) {
                size_t *h = lw_grow(m->hazards, &L->cap_hazards,
                                    m->nhazards + 1, sizeof *h);
                if (!h) {
                    nomem(L);
                    return;
                }
                m->hazards = h;
                h[m->nhazards++] = hi;
            }
        } else if (!strcmp(n, "common-cause")) {
            build_group(L, c);
        } else if (!strcmp(n, "dependence")) {
            build_dependence(L, c);
        } else if (!strcmp(n, "variant")) {
            build_variant(L, c);
        }
    }
}

static void build_root(loader *L, xmlNodePtr root)
{
    build_root_begin(L, root);
    for (xmlNodePtr c = root->children; c && !L->oom; c = c->next)
        if (c->type == XML_ELEMENT_NODE)
            build_root_child(L, c);
}

/* ------------------------------------------------------------------ */
/* resolution and semantic rules                                       */

static int lookup(loader *L, const char *id, size_t *tag)
{
    return id && lw_strmap_get(&L->ids, id, tag);
}

static void resolve_refs(loader *L)
{
    lw_model *m = L->m;
    for (size_t i = 0; i < L->nrefs; i++) {
        pending_ref *r = &L->refs[i];
        size_t tag;
        if (!lookup(L, r->to, &tag)) {
            fail(L, r->line, "<ref to=\"%s\">: no element has this id; "
                 "check the spelling or define the event", r->to);
            continue;
        }
        if (ID_KIND(tag) != ID_NODE) {
            fail(L, r->line, "<ref to=\"%s\"> points to a %s; a ref may "
                 "only point to an event, a gate with an id, or a block",
                 r->to, kind_word(ID_KIND(tag), m, ID_INDEX(tag)));
            continue;
        }
        size_t t = ID_INDEX(tag);
        if (m->nodes[t].kind == LW_NODE_HAZARD) {
            fail(L, r->line, "<ref to=\"%s\"> points to a hazard; put the "
                 "shared logic in a <block> and ref the block from both "
                 "places", r->to);
            continue;
        }
        m->nodes[r->gate].in[r->slot] = t;
    }
}

/* Iterative depth-first search for a cycle through gate inputs. */
static void find_cycles(loader *L)
{
    lw_model *m = L->m;
    size_t n = m->nnodes;
    unsigned char *color = lw_calloc(n, 1);      /* 0 new, 1 open, 2 done */
    size_t *stack = lw_malloc((n + 1) * sizeof *stack);
    size_t *pos = lw_malloc((n + 1) * sizeof *pos);
    if (!color || !stack || !pos) {
        lw_free(color);
        lw_free(stack);
        lw_free(pos);
        nomem(L);
        return;
    }
    int reported = 0;
    for (size_t s = 0; s < n && !reported; s++) {
        if (color[s])
            continue;
        size_t top = 0;
        stack[0] = s;
        pos[0] = 0;
        color[s] = 1;
        while (top != (size_t)-1 && !reported) {
            size_t v = stack[top];
            lw_node *nv = &m->nodes[v];
            if (pos[top] < nv->nin) {
                size_t w = nv->in[pos[top]++];
                if (w == LW_NONE)
                    continue;
                if (color[w] == 1) {
                    fail(L, nv->line, "a cycle: %s%s%s%s uses \"%s\" "
                         "(line %ld), which leads back to it; a model must "
                         "not depend on itself",
                         nv->id ? lw_node_kind_name(nv->kind) : "an unnamed <",
                         nv->id ? " \"" : lw_node_kind_name(nv->kind),
                         nv->id ? nv->id : "> gate",
                         nv->id ? "\"" : "",
                         m->nodes[w].id ? m->nodes[w].id : "?",
                         m->nodes[w].line);
                    reported = 1;
                } else if (color[w] == 0) {
                    color[w] = 1;
                    top++;
                    stack[top] = w;
                    pos[top] = 0;
                }
            } else {
                color[v] = 2;
                top--;
            }
        }
    }
    lw_free(color);
    lw_free(stack);
    lw_free(pos);
}

static int is_prob_event(const lw_node *n)
{
    return n->kind == LW_NODE_ERROR || n->kind == LW_NODE_SAFEGUARD;
}

static void check_groups(loader *L)
{
    lw_model *m = L->m;
    size_t *owner = lw_malloc((m->nnodes + 1) * sizeof *owner);
    if (!owner) {
        nomem(L);
        return;
    }
    for (size_t i = 0; i < m->nnodes; i++)
        owner[i] = LW_NONE;
    for (size_t gi = 0; gi < m->ngroups; gi++) {
        lw_group *g = &m->groups[gi];
        const char *raw = L->group_members_raw[gi];
        if (!raw)
            continue;
        size_t cap = 0, listed = 0;
        const char *p = raw;
        while (*p) {
            while (*p == ' ' || *p == '\t' || *p == '\n' || *p == '\r')
                p++;
            if (!*p)
                break;
            const char *q = p;
            while (*q && *q != ' ' && *q != '\t' && *q != '\n' && *q != '\r')
                q++;
            char *tok = lw_strndup(p, (size_t)(q - p));
            if (!tok) {
                nomem(L);
                break;
            }
            listed++;
            size_t tag;
            if (!lookup(L, tok, &tag)) {
                fail(L, g->line, "<common-cause id=\"%s\"> member \"%s\" is "
                     "not defined", g->id ? g->id : "", tok);
            } else if (ID_KIND(tag) != ID_NODE ||
                       !is_prob_event(&m->nodes[ID_INDEX(tag)])) {
                fail(L, g->line, "<common-cause id=\"%s\"> member \"%s\" is "
                     "a %s; members must be errors or safeguards",
                     g->id ? g->id : "", tok,
                     kind_word(ID_KIND(tag), m, ID_INDEX(tag)));
            } else {
                size_t ei = ID_INDEX(tag);
                int dup = 0;
                for (size_t k = 0; k < g->nmembers; k++)
                    if (g->members[k] == ei)
                        dup = 1;
                if (dup) {
                    fail(L, g->line, "<common-cause id=\"%s\"> lists \"%s\" "
                         "twice", g->id ? g->id : "", tok);
                } else if (owner[ei] != LW_NONE) {
                    fail(L, g->line, "event \"%s\" is in common-cause group "
                         "\"%s\" and in \"%s\" (line %ld); an event may "
                         "belong to one group only", tok, g->id ? g->id : "",
                         m->groups[owner[ei]].id, m->groups[owner[ei]].line);
                } else {
                    size_t *mem = lw_grow(g->members, &cap, g->nmembers + 1,
                                          sizeof *mem);
                    if (!mem) {
                        lw_free(tok);
                        nomem(L);
                        break;
                    }
                    g->members = mem;
                    mem[g->nmembers++] = ei;
                    owner[ei] = gi;
                }
            }
            lw_free(tok);
            p = q;
        }
        if (listed < 2 && !L->oom)
            fail(L, g->line, "<common-cause id=\"%s\"> needs at least two "
                 "member events", g->id ? g->id : "");
    }
    /* dependences: resolve, one first per second, not also a member */
    size_t *first_of = lw_malloc((m->nnodes + 1) * sizeof *first_of);
    if (!first_of) {
        lw_free(owner);
        nomem(L);
        return;
    }
    for (size_t i = 0; i < m->nnodes; i++)
        first_of[i] = LW_NONE;
    for (size_t di = 0; di < m->ndeps; di++) {
        lw_dependence *d = &m->deps[di];
        const char *names[2] = {L->dep_first_raw[di], L->dep_second_raw[di]};
        size_t idx[2] = {LW_NONE, LW_NONE};
        for (int k = 0; k < 2; k++) {
            size_t tag;
            if (!names[k])
                continue;
            if (!lookup(L, names[k], &tag))
                fail(L, d->line, "<dependence> %s=\"%s\" is not defined",
                     k ? "second" : "first", names[k]);
            else if (ID_KIND(tag) != ID_NODE ||
                     !is_prob_event(&m->nodes[ID_INDEX(tag)]))
                fail(L, d->line, "<dependence> %s=\"%s\" is a %s; it must "
                     "be an error or a safeguard", k ? "second" : "first",
                     names[k], kind_word(ID_KIND(tag), m, ID_INDEX(tag)));
            else
                idx[k] = ID_INDEX(tag);
        }
        if (idx[0] == LW_NONE || idx[1] == LW_NONE)
            continue;
        d->first = idx[0];
        d->second = idx[1];
        if (idx[0] == idx[1]) {
            fail(L, d->line, "<dependence> first and second are both \"%s\"; "
                 "a check cannot depend on itself", names[0]);
            continue;
        }
        if (first_of[idx[1]] != LW_NONE) {
            fail(L, d->line, "\"%s\" is already the second of a dependence "
                 "(line %ld); an event may depend on one first event only",
                 names[1], m->deps[first_of[idx[1]]].line);
            continue;
        }
        if (owner[idx[1]] != LW_NONE) {
            fail(L, d->line, "\"%s\" is a member of common-cause group "
                 "\"%s\"; an event may be a group member or a dependence "
                 "second, not both", names[1], m->groups[owner[idx[1]]].id);
            continue;
        }
        first_of[idx[1]] = di;
    }
    /* dependence chains must not loop: follow first_of from each second */
    for (size_t di = 0; di < m->ndeps && !L->oom; di++) {
        if (first_of[m->deps[di].second] != di)
            continue;       /* not resolved, or rejected above */
        size_t e = m->deps[di].second;
        size_t steps = 0;
        while (e != LW_NONE && first_of[e] != LW_NONE && steps <= m->ndeps) {
            e = m->deps[first_of[e]].first;
            steps++;
        }
        if (steps > m->ndeps) {
            fail(L, m->deps[di].line, "dependence chain loops: following "
                 "first events from \"%s\" comes back to it",
                 m->nodes[m->deps[di].second].id);
            break;
        }
    }
    lw_free(first_of);
    lw_free(owner);
}

static void check_variants(loader *L)
{
    lw_model *m = L->m;
    static const char *attrs[] = {"p", "present", "state", "beta", "level"};
    for (size_t vi = 0; vi < m->nvariants; vi++) {
        lw_variant *v = &m->variants[vi];
        for (size_t si = 0; si < v->nsets; si++) {
            lw_set *s = &v->sets[si];
            const char *ref = L->set_raw[vi][si].ref;
            size_t tag;
            if (!ref)
                continue;
            if (!lookup(L, ref, &tag)) {
                fail(L, s->line, "<set ref=\"%s\"> in variant \"%s\": no "
                     "element has this id", ref, v->id ? v->id : "");
                continue;
            }
            int k = ID_KIND(tag);
            size_t t = ID_INDEX(tag);
            int ok = 0;
            if (k == ID_NODE) {
                lw_node_kind nk = m->nodes[t].kind;
                s->target_kind = LW_TARGET_NODE;
                ok = (s->attr == LW_SET_P && (nk == LW_NODE_ERROR ||
                                              nk == LW_NODE_SAFEGUARD)) ||
                     (s->attr == LW_SET_PRESENT && nk == LW_NODE_SAFEGUARD) ||
                     (s->attr == LW_SET_STATE && nk == LW_NODE_CONDITION);
            } else if (k == ID_GROUP) {
                s->target_kind = LW_TARGET_GROUP;
                ok = s->attr == LW_SET_BETA;
            } else if (k == ID_DEP) {
                s->target_kind = LW_TARGET_DEPENDENCE;
                ok = s->attr == LW_SET_LEVEL;
            }
            if (!ok) {
                fail(L, s->line, "<set ref=\"%s\" %s=...>: the %s \"%s\" has "
                     "no %s attribute to change", ref, attrs[s->attr],
                     kind_word(k, m, t), ref, attrs[s->attr]);
                continue;
            }
            s->target = t;
        }
    }
}

static void add_warning(loader *L, long line, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));

static void add_warning(loader *L, long line, const char *fmt, ...)
{
    lw_model *m = L->m;
    char msg[512];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(msg, sizeof msg, fmt, ap);
    va_end(ap);
    size_t need = strlen(L->file) + strlen(msg) + 32;
    char *w = lw_malloc(need);
    char **ws = w ? lw_realloc(m->warnings,
                               (m->nwarnings + 1) * sizeof *ws) : NULL;
    if (!w || !ws) {
        lw_free(w);
        nomem(L);
        return;
    }
    snprintf(w, need, "%s:%ld: %s", L->file, line, msg);
    m->warnings = ws;
    ws[m->nwarnings++] = w;
}

/* Mark everything reachable from hazards; warn on unused events/blocks. */
static void check_unused(loader *L)
{
    lw_model *m = L->m;
    unsigned char *seen = lw_calloc(m->nnodes + 1, 1);
    size_t *stack = lw_malloc((m->nnodes + 1) * sizeof *stack);
    if (!seen || !stack) {
        lw_free(seen);
        lw_free(stack);
        nomem(L);
        return;
    }
    size_t top = 0;
    for (size_t h = 0; h < m->nhazards; h++) {
        stack[top++] = m->hazards[h];
        seen[m->hazards[h]] = 1;
    }
    while (top) {
        lw_node *n = &m->nodes[stack[--top]];
        for (size_t i = 0; i < n->nin; i++) {
            size_t w = n->in[i];
            if (w != LW_NONE && !seen[w]) {
                seen[w] = 1;
                stack[top++] = w;
            }
        }
    }
    /* dependence firsts are used by their seconds */
    for (size_t di = 0; di < m->ndeps; di++)
        if (seen[m->deps[di].second])
            seen[m->deps[di].first] = 1;
    size_t unused = 0;
    for (size_t i = 0; i < m->nnodes; i++) {
        lw_node *n = &m->nodes[i];
        if (seen[i] || !(lw_node_is_event(n->kind) ||
                         n->kind == LW_NODE_BLOCK))
            continue;
        if (++unused <= 20)
            add_warning(L, n->line, "%s \"%s\" is not used by any hazard",
                        lw_node_kind_name(n->kind), n->id ? n->id : "?");
    }
    if (unused > 20)
        add_warning(L, 0, "%zu more unused events or blocks", unused - 20);
    lw_free(seen);
    lw_free(stack);
}

/* ------------------------------------------------------------------ */
/* libxml2 errors                                                      */

typedef struct xml_sink {
    loader *L;
    int count;
    const char *data;           /* the document's bytes */
    size_t len;
    long entity_line;           /* first <!ENTITY line, 0 none, -1 unknown */
    int entity_reported;
    long last_line;             /* the last diagnostic, to drop repeats */
    char last[256];
} xml_sink;

static long entity_decl_line(const char *d, size_t len);

static const char entity_msg[] =
    "the DOCTYPE declares entities; layerwise never expands entities or "
    "loads DTDs, so remove the DOCTYPE and write the text out";

/* libxml2's "'V' is not a valid value of the atomic type 'T'." that
 * follows a pattern message for the same value.  Tested at the END of the
 * message, so that a value holding those words is not mistaken for it. */
static int repeats_pattern(const char *msg)
{
    const char *last = NULL;
    for (const char *p = strstr(msg, " is not a valid value of the "); p;
         p = strstr(p + 1, " is not a valid value of the "))
        last = p;
    if (!last)
        return 0;
    last += strlen(" is not a valid value of the ");
    if (!strncmp(last, "atomic type '", 13))
        last += 13;
    else if (!strncmp(last, "list type '", 11))
        last += 11;
    else
        return 0;
    const char *q = strchr(last, '\'');
    return q && (!strcmp(q, "'") || !strcmp(q, "'."));
}

/* Rewrite libxml2's schema wording where a plainer message helps. */
static void xml_error_cb(void *ud, xmlErrorPtr e)
{
    xml_sink *sink = ud;
    loader *L = sink->L;
    if (!e || e->level == XML_ERR_WARNING)
        return;
    char msg[1024];
    snprintf(msg, sizeof msg, "%s", e->message ? e->message : "XML error");
    size_t len = strlen(msg);
    while (len && (msg[len - 1] == '\n' || msg[len - 1] == ' '))
        msg[--len] = '\0';
    for (char *nl = strchr(msg, '\n'); nl; nl = strchr(nl, '\n'))
        *nl = ' ';      /* one message, one line */
    const char *bytes = strstr(msg, "Bytes: ");
    if (strstr(msg, "not proper UTF-8") && bytes) {
        char b[64];
        snprintf(b, sizeof b, "%s", bytes + 7);
        snprintf(msg, sizeof msg, "the text is not valid UTF-8 (bytes %s); "
                 "save the file as UTF-8 or name its encoding in the XML "
                 "declaration", b);
    }
    if (e->domain == XML_FROM_SCHEMASV && repeats_pattern(msg)) {
        L->failed = 1;
        return;     /* follows a pattern message for the same value */
    }
    lw_status code = e->domain == XML_FROM_SCHEMASV ? LW_EMODEL : LW_EPARSE;
    long line = e->line;
    if (e->domain == XML_FROM_SCHEMASV && e->node)
        line = line_of((xmlNodePtr)e->node);
    const char *hint = "";
    if (e->domain != XML_FROM_SCHEMASV && strstr(msg, "ntity")) {
        /* an entity problem in a document that declares entities (an
         * external one, a reference loop): one plain message */
        if (sink->entity_line < 0)
            sink->entity_line = entity_decl_line(sink->data, sink->len);
        if (sink->entity_line > 0) {
            L->failed = 1;
            if (sink->entity_reported++)
                return;
            line = sink->entity_line;
            snprintf(msg, sizeof msg, "%s", entity_msg);
        }
    }
    if (strstr(msg, "[facet 'pattern']")) {
        if (strstr(msg, "[+\\-]?"))
            hint = " (a number must be a finite decimal such as 0.01 or "
                   "1e-3)";
        else
            hint = " (an id starts with a letter, then letters, digits, "
                   "'_', '.' or '-')";
        char *cut = strstr(msg, " by the pattern");
        if (cut)
            *cut = '\0';
    } else if (strstr(msg, "Excessive depth")) {
        snprintf(msg, sizeof msg, "elements are nested more than %u deep, "
                 "the limit; use <block> and <ref> to share logic instead "
                 "of nesting it, or raise --max-depth", L->lim.max_depth);
    } else if (strstr(msg, "This element is not expected") && e->node &&
               ((xmlNodePtr)e->node)->parent &&
               is_logic_elem((xmlNodePtr)e->node) &&
               (xmlStrEqual(((xmlNodePtr)e->node)->parent->name,
                            (const xmlChar *)"hazard") ||
                xmlStrEqual(((xmlNodePtr)e->node)->parent->name,
                            (const xmlChar *)"block"))) {
        hint = " (a hazard or block has exactly one logic child; combine "
               "several with <all>, <any> or <vote>)";
    } else if (strstr(msg, "This element is not expected") ||
               strstr(msg, "is not allowed")) {
        hint = " (see docs/model-format.md for the elements and attributes "
               "each element may have)";
    } else if (strstr(msg, "Missing child element")) {
        hint = " (a hazard or block needs exactly one logic child, a gate "
               "at least one input)";
    }
    L->failed = 1;
    if (line == sink->last_line && !strncmp(msg, sink->last,
                                            sizeof sink->last - 1))
        return;     /* libxml2 repeats some errors once per use */
    sink->last_line = line;
    strncpy(sink->last, msg, sizeof sink->last - 1);
    sink->last[sizeof sink->last - 1] = '\0';
    if (sink->count++ < 200)
        lw_error_set(L->err, code, L->file, line, "%s%s", msg, hint);
}

/* Advance *pos (counting lines in *line) to just past the next occurrence
 * of 'end'; returns 0 when it does not occur. */
static int skip_past(const char *d, size_t len, size_t *pos, long *line,
                     const char *end)
{
    size_t el = strlen(end);
    for (size_t i = *pos; i + el <= len; i++) {
        if (memcmp(d + i, end, el) == 0) {
            *pos = i + el;
            return 1;
        }
        if (d[i] == '\n')
            (*line)++;
    }
    return 0;
}

/* Position of the next start tag's '<' at or after *pos, with its line;
 * skips comments, CDATA, processing instructions, the DOCTYPE and end
 * tags.  Returns 0 when there is none. */
static int next_start_tag(const char *d, size_t len, size_t *pos, long *line)
{
    while (*pos < len) {
        if (d[*pos] == '\n')
            (*line)++;
        if (d[*pos] != '<') {
            (*pos)++;
            continue;
        }
        const char *t = d + *pos;
        size_t rest = len - *pos;
        int ok = 1;
        if (rest >= 4 && !memcmp(t, "<!--", 4)) {
            ok = skip_past(d, len, pos, line, "-->");
        } else if (rest >= 9 && !memcmp(t, "<![CDATA[", 9)) {
            ok = skip_past(d, len, pos, line, "]]>");
        } else if (rest >= 2 && t[1] == '?') {
            ok = skip_past(d, len, pos, line, "?>");
        } else if (rest >= 2 && t[1] == '!') {      /* <!DOCTYPE ... > */
            int depth = 0;
            char quote = 0;
            size_t i = *pos + 2;
            for (; i < len; i++) {
                char ch = d[i];
                if (!quote && ch == '<' && i + 4 <= len &&
                    !memcmp(d + i, "<!--", 4)) {
                    size_t at = i;      /* a comment in the subset */
                    if (!skip_past(d, len, &at, line, "-->"))
                        return 0;
                    i = at - 1;
                    continue;
                }
                if (ch == '\n')
                    (*line)++;
                if (quote) {
                    if (ch == quote)
                        quote = 0;
                } else if (ch == '"' || ch == '\'') {
                    quote = ch;
                } else if (ch == '[') {
                    depth++;
                } else if (ch == ']') {
                    depth--;
                } else if (ch == '>' && depth <= 0) {
                    break;
                }
            }
            *pos = i + 1;
            ok = i < len;
        } else if (rest >= 2 && t[1] == '/') {
            ok = skip_past(d, len, pos, line, ">");
        } else {
            return 1;
        }
        if (!ok)
            return 0;
    }
    return 0;
}

/* libxml2 gives an element the line where its start tag ENDS, which for
 * an element written over several lines is not where a reader looks.
 * Start tags appear in the bytes in document order, so one scan pairs the
 * k-th start tag with the k-th element (the document declares no entities
 * by now) and keeps the line where the tag begins in _private.  At the
 * first mismatch of name or order the scan stops and libxml2's lines stand
 * for the rest.  The scan state carries over, so the streaming loader can
 * feed it one top-level element at a time. */
typedef struct tag_scan {
    const char *d;
    size_t len;
    size_t pos;
    long line;
    int ok;
} tag_scan;

static void scan_one(tag_scan *s, xmlNodePtr n)
{
    if (!s->ok)
        return;
    const char *d = s->d;
    size_t len = s->len;
    if (!next_start_tag(d, len, &s->pos, &s->line)) {
        s->ok = 0;
        return;
    }
    size_t pos = s->pos;
    size_t nl = strlen((const char *)n->name);
    char after = pos + 1 + nl < len ? d[pos + 1 + nl] : '\0';
    if (n->ns || pos + 1 + nl > len ||
        memcmp(d + pos + 1, n->name, nl) != 0 ||
        !(after == '>' || after == '/' || after == ' ' ||
          after == '\t' || after == '\n' || after == '\r') ||
        s->line > (long)xmlGetLineNo(n)) {
        s->ok = 0;
        return;
    }
    n->_private = (void *)(intptr_t)s->line;
    s->pos++;
}

/* 'root' and every element inside it, in document order. */
static void scan_tree(tag_scan *s, xmlNodePtr root)
{
    xmlNodePtr n = root;
    while (n && s->ok) {
        if (n->type == XML_ELEMENT_NODE) {
            scan_one(s, n);
            if (n->children) {
                n = n->children;
                continue;
            }
        }
        while (n && !n->next && n != root)
            n = n->parent;
        if (!n || n == root)
            return;
        n = n->next;
    }
}

/* The first element more than 'max' deep under 'top' (itself at depth
 * 'top_depth'), in document order, or NULL. */
static xmlNodePtr deeper_than(xmlNodePtr top, unsigned top_depth,
                              unsigned max)
{
    xmlNodePtr n = top;
    unsigned depth = top_depth;
    while (n) {
        if (n->type == XML_ELEMENT_NODE && depth > max)
            return n;
        if (n->type == XML_ELEMENT_NODE && n->children) {
            n = n->children;
            depth++;
            continue;
        }
        while (n && !n->next && n != top) {
            n = n->parent;
            depth--;
        }
        if (!n || n == top)
            return NULL;
        n = n->next;
    }
    return NULL;
}

static void mark_begin_lines(xmlNodePtr root, const char *d, size_t len)
{
    tag_scan s = {d, len, 0, 1, 1};
    scan_tree(&s, root);
}

/* Line of the first entity declaration, or 0. */
static long entity_decl_line(const char *d, size_t len)
{
    long line = 1;
    for (size_t i = 0; i + 8 <= len; i++) {
        if (d[i] == '\n')
            line++;
        else if (d[i] == '<' && !memcmp(d + i, "<!ENTITY", 8))
            return line;
    }
    return 0;
}

/* Before any parsing: the line of the first <!ENTITY in the internal
 * subset of a DOCTYPE in the prolog (after the XML declaration, comments,
 * processing instructions and white space), or 0.  Such a document is
 * rejected without handing it to libxml2, which would spend seconds on a
 * kilobyte of nested entity definitions before the rejection. */
static long prolog_entity_line(const char *d, size_t len)
{
    long line = 1;
    size_t i = len >= 3 && !memcmp(d, "\xEF\xBB\xBF", 3) ? 3 : 0;
    for (;;) {      /* the prolog, up to the DOCTYPE */
        while (i < len && strchr(" \t\r\n", d[i]))
            line += d[i++] == '\n';
        int ok;
        if (i + 4 <= len && !memcmp(d + i, "<!--", 4))
            ok = skip_past(d, len, &i, &line, "-->");
        else if (i + 2 <= len && !memcmp(d + i, "<?", 2))
            ok = skip_past(d, len, &i, &line, "?>");
        else if (i + 9 <= len && !memcmp(d + i, "<!DOCTYPE", 9))
            break;
        else
            return 0;       /* the root element, or not XML at all */
        if (!ok)
            return 0;
    }
    /* the DOCTYPE, its internal subset between '[' and ']' outside
     * quotes and comments */
    int in_subset = 0;
    char quote = 0;
    for (i += 9; i < len; i++) {
        char ch = d[i];
        if (quote) {
            quote = ch == quote ? 0 : quote;
        } else if (ch == '"' || ch == '\'') {
            quote = ch;
        } else if (ch == '>' && !in_subset) {
            return 0;
        } else if (ch == '[') {
            in_subset = 1;
        } else if (ch == ']') {
            return 0;
        } else if (in_subset && i + 4 <= len && !memcmp(d + i, "<!--", 4)) {
            if (!skip_past(d, len, &i, &line, "-->"))
                return 0;
            i--;
            continue;
        } else if (in_subset && i + 8 <= len &&
                   !memcmp(d + i, "<!ENTITY", 8)) {
            return line;
        }
        line += ch == '\n';
    }
    return 0;
}

static int doc_declares_entities(xmlDocPtr doc)
{
    xmlDtdPtr dtds[2] = {doc->intSubset, doc->extSubset};
    for (int i = 0; i < 2; i++) {
        if (!dtds[i])
            continue;
        if (dtds[i]->entities || dtds[i]->pentities)
            return 1;
        for (xmlNodePtr c = dtds[i]->children; c; c = c->next)
            if (c->type == XML_ENTITY_DECL)
                return 1;
    }
    return 0;
}

/* ------------------------------------------------------------------ */
/* entry points                                                        */

static void free_loader(loader *L)
{
    lw_strmap_free(&L->ids);
    for (size_t i = 0; i < L->nrefs; i++)
        lw_free(L->refs[i].to);
    lw_free(L->refs);
    if (L->m) {
        for (size_t i = 0; i < L->m->ngroups && L->group_members_raw; i++)
            lw_free(L->group_members_raw[i]);
        for (size_t i = 0; i < L->m->ndeps; i++) {
            if (L->dep_first_raw)
                lw_free(L->dep_first_raw[i]);
            if (L->dep_second_raw)
                lw_free(L->dep_second_raw[i]);
        }
        for (size_t i = 0; i < L->m->nvariants && L->set_raw; i++) {
            if (!L->set_raw[i])
                continue;
            for (size_t j = 0; j < L->m->variants[i].nsets; j++) {
                lw_free(L->set_raw[i][j].ref);
                lw_free(L->set_raw[i][j].attr_value);
            }
            lw_free(L->set_raw[i]);
        }
    }
    lw_free(L->group_members_raw);
    lw_free(L->dep_first_raw);
    lw_free(L->dep_second_raw);
    lw_free(L->set_raw);
}

static void set_limits(lw_load_limits *out, const lw_load_limits *in)
{
    memset(out, 0, sizeof *out);
    if (in)
        *out = *in;
    if (!out->max_bytes)
        out->max_bytes = (size_t)64 << 20;
    if (!out->max_text)
        out->max_text = (size_t)64 << 10;
    if (!out->max_nodes)
        out->max_nodes = 5000000;
    if (!out->max_depth)
        out->max_depth = 256;
    if (out->max_depth > LW_MAX_DEPTH_LIMIT)
        out->max_depth = LW_MAX_DEPTH_LIMIT;
    if (!out->stream_from)
        out->stream_from = (size_t)1 << 20;
}

/* The rules that need the whole model, once every element is read. */
static void check_model(loader *L, long root_line)
{
    if (!L->oom)
        resolve_refs(L);
    if (!L->oom)
        find_cycles(L);
    if (!L->oom)
        check_groups(L);
    if (!L->oom)
        check_variants(L);
    if (!L->oom && L->m->nhazards == 0)
        fail(L, root_line, "the model has no <hazard>; add at least one "
             "hazard (the top event) with one logic child");
}

/* Schema validation, run beside the model builder. */
typedef struct validation {
    loader L;           /* copy of the builder's loader, errors to 'err' */
    xml_sink sink;
    xmlDocPtr doc;
    lw_error err;
    int rc;             /* lw_schema_validate's result */
    pthread_t thread;
} validation;

static void *validate_main(void *arg)
{
    validation *v = arg;
    /* libxml2's error handler is per thread */
    xmlSetStructuredErrorFunc(&v->sink, xml_error_cb);
    xmlSetGenericErrorFunc(NULL, NULL);
    v->rc = lw_schema_validate(v->doc);
    xmlSetStructuredErrorFunc(NULL, NULL);
    return NULL;
}

/* Move every diagnostic of 'from' into 'to' and order them by line (the
 * order of each source kept for equal lines). */
static void merge_errors(lw_error *to, lw_error *from)
{
    if (!to || !from->count)
        return;
    for (size_t i = 0; i < from->count; i++) {
        lw_diag *d = &from->items[i];
        lw_error_set(to, to->code ? to->code : LW_EMODEL, d->file, d->line,
                     "%s", d->message);
    }
    if (from->code != LW_OK && (to->code == LW_OK || to->code == LW_ENOMEM))
        to->code = from->code;
    /* insertion sort: stable, and lists are short */
    for (size_t i = 1; i < to->count; i++) {
        lw_diag x = to->items[i];
        size_t j = i;
        while (j > 0 && to->items[j - 1].line > x.line) {
            to->items[j] = to->items[j - 1];
            j--;
        }
        to->items[j] = x;
    }
}

/* ---- the streaming path for large files ------------------------------
 *
 * libxml2's document tree takes about 17 bytes of memory for every byte
 * of a model, and building it is most of the time of loading a large
 * file.  A file of lim.stream_from bytes or more (1 MiB unless the caller
 * says otherwise) is therefore first read as a
 * stream: a reader expands one child of the root at a time into a small
 * tree, the same builders as above read it, and the reader frees it
 * before the next.  The schema is checked at the same time on a second
 * thread, by a validator that also reads the bytes as a stream.
 *
 * The streaming path only ever says "valid" or "give up".  On any problem
 * at all (a parse or schema error, a finding of the builders, a DOCTYPE,
 * a second thread that cannot start) its partial model is dropped and
 * the file is read again by the tree path, whose messages are the ones
 * users and tests see.  So the two paths can only differ in speed. */
typedef struct fast_validation {
    const char *data;
    size_t len;
    int failed;
    int rc;
} fast_validation;

static void quiet_error_cb(void *ud, xmlErrorPtr e)
{
    if (e && e->level != XML_ERR_WARNING)
        *(int *)ud = 1;
}

static void *fast_validate_main(void *arg)
{
    fast_validation *v = arg;
    xmlSetStructuredErrorFunc(&v->failed, quiet_error_cb);
    xmlSetGenericErrorFunc(NULL, NULL);
    v->rc = lw_schema_validate_bytes(v->data, v->len);
    xmlSetStructuredErrorFunc(NULL, NULL);
    return NULL;
}

static int bytes_contain(const char *d, size_t len, const char *what)
{
    size_t wl = strlen(what);
    for (const char *p = d; (size_t)(p - d) + wl <= len;) {
        const char *q = memchr(p, what[0], len - (size_t)(p - d) - wl + 1);
        if (!q)
            return 0;
        if (!memcmp(q, what, wl))
            return 1;
        p = q + 1;
    }
    return 0;
}

/* LW_OK with *out set, LW_ENOMEM, or LW_EMODEL meaning "use the tree
 * path" (nothing reported). */
static lw_status load_streaming(const char *data, size_t len,
                                const loader *proto, lw_model **out)
{
    *out = NULL;
    if (bytes_contain(data, len, "<!DOCTYPE") ||
        bytes_contain(data, len, "<!ENTITY"))
        return LW_EMODEL;
    fast_validation V = {data, len, 0, -1};
    pthread_t thread;
    if (pthread_create(&thread, NULL, fast_validate_main, &V) != 0)
        return LW_EMODEL;

    lw_error scratch;
    lw_error_init(&scratch);
    loader L = *proto;
    L.err = &scratch;
    lw_strmap_init(&L.ids);
    int parse_failed = 0;
    xmlSetStructuredErrorFunc(&parse_failed, quiet_error_cb);
    xmlSetGenericErrorFunc(NULL, NULL);
    int opts = XML_PARSE_NONET | XML_PARSE_BIG_LINES | XML_PARSE_NOWARNING;
    if (L.lim.max_depth > 256)
        opts |= XML_PARSE_HUGE;
    xmlTextReaderPtr r = xmlReaderForMemory(data, (int)len, L.file, NULL,
                                            opts);
    lw_model *m = lw_calloc(1, sizeof *m);
    int ok = r && m;
    if (!m)
        L.oom = 1;
    if (ok) {
        L.m = m;
        m->file = lw_strdup(L.file);
        if (!m->file)
            nomem(&L);
    }
    tag_scan scan = {data, len, 0, 1, 1};
    int ret = 0;
    long root_line = 1;
    if (ok && !L.failed) {
        while ((ret = xmlTextReaderRead(r)) == 1 &&
               xmlTextReaderNodeType(r) != XML_READER_TYPE_ELEMENT)
            ;
        xmlNodePtr root = ret == 1 ? xmlTextReaderCurrentNode(r) : NULL;
        ok = root && !root->ns &&
             xmlStrEqual(root->name, (const xmlChar *)"safety-model") &&
             !xmlTextReaderIsEmptyElement(r);
        if (ok) {
            scan_one(&scan, root);
            root_line = line_of(root);
            build_root_begin(&L, root);
            ret = xmlTextReaderRead(r);
        }
    }
    while (ok && ret == 1 && !L.failed) {
        int depth = xmlTextReaderDepth(r);
        int type = xmlTextReaderNodeType(r);
        if (depth == 1 && type == XML_READER_TYPE_ELEMENT) {
            xmlNodePtr c = xmlTextReaderExpand(r);
            if (!c) {
                ok = 0;
                break;
            }
            if (deeper_than(c, 2, L.lim.max_depth)) {
                ok = 0;         /* the tree path reports it */
                break;
            }
            scan_tree(&scan, c);
            build_root_child(&L, c);
            ret = xmlTextReaderNext(r);
        } else {
            ret = xmlTextReaderRead(r);
        }
    }
    if (ret < 0 || parse_failed)
        ok = 0;
    if (r)
        xmlFreeTextReader(r);
    xmlSetStructuredErrorFunc(NULL, NULL);
    if (ok && !L.failed)
        check_model(&L, root_line);
    pthread_join(thread, NULL);
    if (V.rc != 0 || V.failed)
        ok = 0;
    if (ok && !L.failed)
        check_unused(&L);
    int oom = L.oom;
    ok = ok && !L.failed;
    L.m = m;                /* free_loader reads the model's counts */
    free_loader(&L);
    lw_error_clear(&scratch);
    if (!ok) {
        lw_model_free(m);
        return oom ? LW_ENOMEM : LW_EMODEL;
    }
    m->streamed = true;
    *out = m;
    return LW_OK;
}

static lw_status load_memory(const char *data, size_t len, const char *name,
                             const lw_load_limits *limits, lw_model **out,
                             lw_error *err)
{
    *out = NULL;
    loader L;
    memset(&L, 0, sizeof L);
    L.err = err;
    L.file = name && strcmp(name, "-") ? name : "<stdin>";
    set_limits(&L.lim, limits);
    lw_strmap_init(&L.ids);
    if (len > L.lim.max_bytes)
        return lw_error_set(err, LW_ELIMIT, L.file, 0, "the file is %zu "
                            "bytes, over the limit of %zu; raise it with "
                            "--max-bytes", len, L.lim.max_bytes);
    if (len > INT32_MAX)
        return lw_error_set(err, LW_ELIMIT, L.file, 0, "the file is too "
                            "large to parse (%zu bytes)", len);
    if (len == 0)
        return lw_error_set(err, LW_EPARSE, L.file, 1, "the file is empty; "
                            "a model starts with <safety-model format=\"1\" "
                            "id=\"...\">");

    xmlInitParser();
    if (len >= L.lim.stream_from) {
        lw_status fs = load_streaming(data, len, &L, out);
        if (fs == LW_OK) {
            lw_strmap_free(&L.ids);
            return LW_OK;
        }
        if (fs == LW_ENOMEM) {
            lw_strmap_free(&L.ids);
            return lw_error_oom(err);
        }
    }
    long pel = prolog_entity_line(data, len);
    if (pel > 0) {
        lw_strmap_free(&L.ids);
        return lw_error_set(err, LW_EPARSE, L.file, pel, "%s", entity_msg);
    }
    xml_sink sink = {&L, 0, data, len, -1, 0, -1, ""};
    xmlSetStructuredErrorFunc(&sink, xml_error_cb);
    xmlSetGenericErrorFunc(NULL, NULL);
    int opts = XML_PARSE_NONET | XML_PARSE_BIG_LINES | XML_PARSE_NOWARNING;
    if (L.lim.max_depth > 256)
        opts |= XML_PARSE_HUGE;
    xmlDocPtr doc = xmlReadMemory(data, (int)len, L.file, NULL, opts);
    lw_status st = LW_OK;
    lw_model *m = NULL;
    if (!doc || L.failed) {
        if (!L.failed)
            lw_error_set(err, LW_EPARSE, L.file, 0, "the file is not "
                         "well-formed XML");
        st = err && err->code ? err->code : LW_EPARSE;
        goto out;
    }
    if (doc_declares_entities(doc)) {
        long line = entity_decl_line(data, len);
        st = lw_error_set(err, LW_EPARSE, L.file, line > 0 ? line : 1,
                          "%s", entity_msg);
        goto out;
    }
    xmlNodePtr root = xmlDocGetRootElement(doc);
    if (root)
        mark_begin_lines(root, data, len);
    xmlNodePtr deep = root ? deeper_than(root, 1, L.lim.max_depth) : NULL;
    if (deep) {
        st = lw_error_set(err, LW_ELIMIT, L.file, line_of(deep), "elements "
                          "are nested more than %u deep, the limit; use "
                          "<block> and <ref> to share logic instead of "
                          "nesting it, or raise --max-depth",
                          L.lim.max_depth);
        goto out;
    }
    if (!root || !xmlStrEqual(root->name, (const xmlChar *)"safety-model")) {
        st = lw_error_set(err, LW_EMODEL, L.file,
                          root ? line_of(root) : 1, "the root element is "
                          "<%s>; a model's root is <safety-model format=\"1\""
                          " id=\"...\">", root ? ename(root) : "(none)");
        goto out;
    }
    if (L.failed) {
        st = err && err->code ? err->code : LW_EMODEL;
        goto out;
    }

    /* The schema is checked on a second thread while this one builds the
     * model: both only read the document.  Structural problems and the
     * builder's own findings are then reported together, in line order. */
    validation V;
    memset(&V, 0, sizeof V);
    V.L = L;                    /* a copy: file, limits; its own errors */
    V.L.err = &V.err;
    V.L.failed = 0;
    V.sink = sink;
    V.sink.L = &V.L;
    V.doc = doc;
    lw_error_init(&V.err);
    int threaded = len >= (1u << 16) &&
                   pthread_create(&V.thread, NULL, validate_main, &V) == 0;
    if (!threaded)
        validate_main(&V);

    m = lw_calloc(1, sizeof *m);
    if (m) {
        L.m = m;
        m->file = lw_strdup(L.file);
        if (!m->file)
            nomem(&L);
        build_root(&L, root);
        check_model(&L, line_of(root));
    }
    if (threaded)
        pthread_join(V.thread, NULL);
    if (!m) {
        lw_error_clear(&V.err);
        st = lw_error_oom(err);
        goto out;
    }
    if (V.rc != 0 || V.L.failed) {
        if (V.rc < 0 && !V.L.failed)
            lw_error_set(err, LW_EINTERNAL, L.file, 0,
                         "the built-in schema could not be used");
        else if (V.err.count == 0)
            lw_error_set(err, LW_EMODEL, L.file, 0, "the model does not "
                         "follow the model schema (docs/model.xsd)");
        merge_errors(err, &V.err);
        L.failed = 1;
    }
    lw_error_clear(&V.err);
    if (!L.oom && !L.failed)
        check_unused(&L);
    if (L.failed)
        st = L.oom ? LW_ENOMEM : (err && err->code ? err->code : LW_EMODEL);

out:
    xmlSetStructuredErrorFunc(NULL, NULL);
    if (doc)
        xmlFreeDoc(doc);
    free_loader(&L);
    if (st != LW_OK) {
        lw_model_free(m);
        return st;
    }
    *out = m;
    return LW_OK;
}

/* The model builders recurse once per level of element nesting: when the
 * limit allows more than LW_DEEP_LEVELS levels, the load runs on a thread
 * with a large stack (layerwise/deep.h), so callers need none. */
typedef struct load_job {
    const char *data;
    size_t len;
    const char *name;
    const lw_load_limits *limits;
    lw_model **out;
    lw_error *err;
    lw_status st;
} load_job;

static void load_run(void *arg)
{
    load_job *j = arg;
    j->st = load_memory(j->data, j->len, j->name, j->limits, j->out, j->err);
}

lw_status lw_model_load_memory(const char *data, size_t len, const char *name,
                               const lw_load_limits *limits, lw_model **out,
                               lw_error *err)
{
    load_job j = {data, len, name, limits, out, err, LW_OK};
    lw_deep_call_past(limits ? limits->max_depth : 0, load_run, &j);
    return j.st;
}

lw_status lw_model_load_file(const char *path, const lw_load_limits *limits,
                             lw_model **out, lw_error *err)
{
    *out = NULL;
    lw_load_limits lim;
    set_limits(&lim, limits);
    int is_stdin = strcmp(path, "-") == 0;
    const char *name = is_stdin ? "<stdin>" : path;
    FILE *f = is_stdin ? stdin : fopen(path, "rb");
    if (!f)
        return lw_error_set(err, LW_EIO, name, 0, "cannot open the model: "
                            "%s", strerror(errno));
    size_t cap = 1 << 16, len = 0;
    char *buf = lw_malloc(cap);
    lw_status st = LW_OK;
    if (!buf) {
        st = lw_error_oom(err);
        goto done;
    }
    for (;;) {
        if (len == cap) {
            if (cap > lim.max_bytes) {
                st = lw_error_set(err, LW_ELIMIT, name, 0, "the file is "
                                  "over the size limit of %zu bytes; raise "
                                  "it with --max-bytes", lim.max_bytes);
                goto done;
            }
            char *nb = lw_realloc(buf, cap * 2);
            if (!nb) {
                st = lw_error_oom(err);
                goto done;
            }
            buf = nb;
            cap *= 2;
        }
        size_t n = fread(buf + len, 1, cap - len, f);
        len += n;
        if (n == 0) {
            if (ferror(f))
                st = lw_error_set(err, LW_EIO, name, 0, "cannot read the "
                                  "model: %s", strerror(errno));
            break;
        }
    }
    if (st == LW_OK)
        st = lw_model_load_memory(buf, len, name, &lim, out, err);
done:
    lw_free(buf);
    if (!is_stdin)
        fclose(f);
    return st;
}
