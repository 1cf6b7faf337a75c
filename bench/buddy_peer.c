/*
 * lw-buddy-peer: reference computation of a hazard's exact probability with
 * the BuDDy BDD package, used as a performance and correctness peer for
 * layerwise in the benchmarks.
 *
 *   lw-buddy-peer [--hazard ID] [--fold right|left|balanced] MODEL.xml
 *
 * Handles only the subset of the model format that lw-gen emits: root-level
 * or in-place `error` / `safeguard` events with a point `p` (and optional
 * `present`), `all` / `any` / `vote` gates, `ref`, `block` and `hazard`.
 * `title`, `description` and `exposure` are accepted and ignored; anything
 * else is rejected with an error (exit 1).
 *
 * Method (deliberately plain):
 *   - variable order: first occurrence of each event in a depth-first,
 *     left-to-right walk from the hazard;
 *   - each gate is built once (memoised per gate; the memo reference is
 *     released after the gate's last use);
 *   - all/any: fold the inputs right-to-left with bdd_apply (bddop_and/or);
 *     --fold left|balanced selects another fold for experiments;
 *   - vote k-of-n: atleast(k,[g1..gn]) = ite(g1, atleast(k-1,rest),
 *     atleast(k,rest)), memoised on (k, position);
 *   - probability: bottom-up over the BDD, memoised on node index,
 *     P(node) = p(var) * P(high) + (1 - p(var)) * P(low).
 *
 * Output: one line of JSON on stdout.
 */
#define _POSIX_C_SOURCE 200809L
#include <bdd.h>
#include <errno.h>
#include <libxml/hash.h>
#include <libxml/parser.h>
#include <libxml/tree.h>
#include <math.h>
#include <pthread.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <time.h>

/* ---- small utilities ---------------------------------------------------------- */
static const char *g_path = "";

static void die(const char *fmt, ...)
{
    va_list ap;
    fprintf(stderr, "lw-buddy-peer: ");
    va_start(ap, fmt);
    vfprintf(stderr, fmt, ap);
    va_end(ap);
    fputc('\n', stderr);
    exit(1);
}

static void die_at(const xmlNode *n, const char *fmt, ...)
{
    va_list ap;
    fprintf(stderr, "%s:%ld: ", g_path, n ? xmlGetLineNo(n) : 0L);
    va_start(ap, fmt);
    vfprintf(stderr, fmt, ap);
    va_end(ap);
    fputc('\n', stderr);
    exit(1);
}

static void *xmalloc(size_t n)
{
    void *p = malloc(n ? n : 1);
    if (!p)
        die("out of memory");
    return p;
}

static void *xcalloc(size_t n, size_t s)
{
    void *p = calloc(n ? n : 1, s ? s : 1);
    if (!p)
        die("out of memory");
    return p;
}

static double now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + (double)ts.tv_nsec * 1e-9;
}

static int name_is(const xmlNode *n, const char *s)
{
    return n->type == XML_ELEMENT_NODE && xmlStrEqual(n->name, (const xmlChar *)s);
}

/* ---- per-element info ------------------------------------------------------------ */
enum kind { K_NONE, K_EVENT, K_ALL, K_ANY, K_VOTE, K_REF, K_BLOCK, K_HAZARD };

typedef struct {
    enum kind kind;
    xmlNode *node;
    xmlNode *target; /* K_REF: resolved element; K_BLOCK/K_HAZARD: logic child */
    int k;           /* K_VOTE */
    int n_in;        /* gates: number of logic children */
    double p;        /* K_EVENT */
    int var;         /* K_EVENT: BDD variable, -1 until first seen */
    int state;       /* gates: 0 new, 1 on stack, 2 done (ordering walk) */
    int uses;        /* gates: remaining parent uses (for releasing the memo) */
    int built;
    BDD bdd;
} info;

static info *infos;
static size_t n_infos, cap_infos;
static xmlHashTablePtr ids;

static info *info_of(const xmlNode *n)
{
    uintptr_t i = (uintptr_t)n->_private;
    return i ? &infos[i - 1] : NULL;
}

static info *new_info(xmlNode *n, enum kind k)
{
    if (n_infos == cap_infos) {
        size_t nc = cap_infos ? cap_infos * 2 : 4096;
        info *ni = realloc(infos, nc * sizeof *ni);
        if (!ni)
            die("out of memory");
        infos = ni;
        cap_infos = nc;
    }
    info *in = &infos[n_infos];
    memset(in, 0, sizeof *in);
    in->kind = k;
    in->node = n;
    in->var = -1;
    n_infos++;
    n->_private = (void *)(uintptr_t)n_infos;
    return in;
}

static void check_attrs(xmlNode *n, const char *const *allowed)
{
    for (xmlAttr *a = n->properties; a; a = a->next) {
        int ok = 0;
        for (const char *const *s = allowed; *s; s++)
            if (xmlStrEqual(a->name, (const xmlChar *)*s))
                ok = 1;
        if (!ok)
            die_at(n, "attribute '%s' on <%s> is not supported by lw-buddy-peer", a->name,
                   n->name);
    }
}

static char *attr(xmlNode *n, const char *name) /* caller frees with xmlFree */
{
    return (char *)xmlGetProp(n, (const xmlChar *)name);
}

static void register_id(xmlNode *n, int required)
{
    char *id = attr(n, "id");
    if (!id) {
        if (required)
            die_at(n, "<%s> needs an id", n->name);
        return;
    }
    if (xmlHashAddEntry(ids, (const xmlChar *)id, n) != 0)
        die_at(n, "duplicate id '%s'", id);
    xmlFree(id);
}

static int is_logic(const xmlNode *c)
{
    return name_is(c, "all") || name_is(c, "any") || name_is(c, "vote") || name_is(c, "ref") ||
           name_is(c, "error") || name_is(c, "safeguard");
}

static void no_text(xmlNode *n)
{
    for (xmlNode *c = n->children; c; c = c->next) {
        if (c->type == XML_TEXT_NODE) {
            for (const xmlChar *s = c->content; s && *s; s++)
                if (*s != ' ' && *s != '\t' && *s != '\n' && *s != '\r')
                    die_at(n, "unexpected text inside <%s>", n->name);
        } else if (c->type == XML_ELEMENT_NODE) {
            if (!is_logic(c))
                die_at(c, "element <%s> is not supported by lw-buddy-peer "
                          "(subset: error, safeguard, all, any, vote, ref, block, hazard)",
                       c->name);
        } else if (c->type != XML_COMMENT_NODE) {
            die_at(n, "unsupported content inside <%s>", n->name);
        }
    }
}

static void scan_logic(xmlNode *n);

static void scan_event(xmlNode *n)
{
    static const char *const allowed[] = {"id", "label", "p", "present", NULL};
    check_attrs(n, allowed);
    for (xmlNode *c = n->children; c; c = c->next)
        if (c->type == XML_ELEMENT_NODE)
            die_at(c, "<%s> inside <%s>: uncertainty and audit data are not supported by "
                      "lw-buddy-peer",
                   c->name, n->name);
    info *in = new_info(n, K_EVENT);
    register_id(n, 1);
    char *p = attr(n, "p");
    if (!p)
        die_at(n, "<%s> needs a point probability p=\"...\"", n->name);
    char *end;
    errno = 0;
    double v = strtod(p, &end);
    if (errno || end == p || *end || !isfinite(v) || v < 0.0 || v > 1.0)
        die_at(n, "p=\"%s\" is not a probability in [0, 1]", p);
    xmlFree(p);
    in->p = v;
    char *pr = attr(n, "present");
    if (pr) {
        if (!name_is(n, "safeguard"))
            die_at(n, "present is only allowed on <safeguard>");
        if (!strcmp(pr, "no"))
            in->p = 1.0;
        else if (strcmp(pr, "yes"))
            die_at(n, "present must be \"yes\" or \"no\"");
        xmlFree(pr);
    }
}

static void scan_gate(xmlNode *n, enum kind k)
{
    static const char *const allowed[] = {"id", "label", NULL};
    static const char *const allowed_vote[] = {"id", "label", "k", NULL};
    check_attrs(n, k == K_VOTE ? allowed_vote : allowed);
    no_text(n);
    int n_in = 0;
    for (xmlNode *c = n->children; c; c = c->next)
        if (c->type == XML_ELEMENT_NODE)
            n_in++;
    if (n_in == 0)
        die_at(n, "<%s> has no inputs", n->name);
    new_info(n, k)->n_in = n_in; /* pointer not kept: scan_logic may grow infos */
    register_id(n, 0);
    for (xmlNode *c = n->children; c; c = c->next)
        if (c->type == XML_ELEMENT_NODE)
            scan_logic(c);
    if (k == K_VOTE) {
        char *ks = attr(n, "k");
        if (!ks)
            die_at(n, "<vote> needs k");
        char *end;
        errno = 0;
        long v = strtol(ks, &end, 10);
        if (errno || end == ks || *end || v < 1 || v > n_in)
            die_at(n, "vote k=\"%s\" out of range 1..%d", ks, n_in);
        xmlFree(ks);
        info_of(n)->k = (int)v;
    }
}

static void scan_logic(xmlNode *n)
{
    if (name_is(n, "error") || name_is(n, "safeguard"))
        scan_event(n);
    else if (name_is(n, "all"))
        scan_gate(n, K_ALL);
    else if (name_is(n, "any"))
        scan_gate(n, K_ANY);
    else if (name_is(n, "vote"))
        scan_gate(n, K_VOTE);
    else if (name_is(n, "ref")) {
        static const char *const allowed[] = {"to", NULL};
        check_attrs(n, allowed);
        if (n->children)
            die_at(n, "<ref> must be empty");
        char *to = attr(n, "to");
        if (!to)
            die_at(n, "<ref> needs to=\"...\"");
        xmlFree(to);
        new_info(n, K_REF);
    } else
        die_at(n, "element <%s> is not supported by lw-buddy-peer", n->name);
}

static void scan_holder(xmlNode *n, enum kind k) /* block or hazard */
{
    static const char *const allowed_block[] = {"id", "label", NULL};
    static const char *const allowed_hazard[] = {"id", "label", "tolerable", NULL};
    check_attrs(n, k == K_BLOCK ? allowed_block : allowed_hazard);
    no_text(n);
    new_info(n, k);
    register_id(n, 1);
    xmlNode *child = NULL;
    int count = 0;
    for (xmlNode *c = n->children; c; c = c->next)
        if (c->type == XML_ELEMENT_NODE) {
            child = c;
            count++;
        }
    if (count != 1)
        die_at(n, "<%s> must have exactly one logic child (has %d)", n->name, count);
    scan_logic(child);
    info_of(n)->target = child;
}

/* Resolve refs (after all ids are known). */
static void resolve_refs(void)
{
    for (size_t i = 0; i < n_infos; i++) {
        info *in = &infos[i];
        if (in->kind != K_REF)
            continue;
        char *to = attr(in->node, "to");
        xmlNode *t = xmlHashLookup(ids, (const xmlChar *)to);
        if (!t)
            die_at(in->node, "ref to unknown id '%s'", to);
        if (name_is(t, "hazard"))
            die_at(in->node, "ref to hazard '%s' is not allowed", to);
        xmlFree(to);
        in->target = t;
    }
}

/* Follow refs and blocks down to an event or gate element. */
static info *resolve(xmlNode *n)
{
    info *in = info_of(n);
    for (int hops = 0; in->kind == K_REF || in->kind == K_BLOCK; hops++) {
        if (hops > 1000000)
            die_at(n, "reference chain does not end (cycle)");
        in = info_of(in->target);
    }
    return in;
}

/* ---- ordering walk ------------------------------------------------------------ */
static int n_vars;
static double *var_p;
static int cap_vars;

static void order_walk(xmlNode *n)
{
    info *in = resolve(n);
    if (in->kind == K_EVENT) {
        if (in->var < 0) {
            if (n_vars == cap_vars) {
                cap_vars = cap_vars ? cap_vars * 2 : 1024;
                var_p = realloc(var_p, (size_t)cap_vars * sizeof *var_p);
                if (!var_p)
                    die("out of memory");
            }
            var_p[n_vars] = in->p;
            in->var = n_vars++;
        }
        return;
    }
    in->uses++;
    if (in->state == 1)
        die_at(in->node, "cycle through this gate");
    if (in->state == 2)
        return;
    in->state = 1;
    for (xmlNode *c = in->node->children; c; c = c->next)
        if (c->type == XML_ELEMENT_NODE)
            order_walk(c);
    in->state = 2;
}

/* ---- BDD construction ------------------------------------------------------------ */
static int gc_runs;

static void gbc_quiet(int pre, bddGbcStat *s)
{
    (void)s;
    if (!pre)
        gc_runs++;
}

static void bdd_err(int code)
{
    die("BuDDy error %d: %s", code, bdd_errstring(code));
}

static BDD build(xmlNode *n); /* returns a referenced BDD owned by the caller */

/* How all/any fold their inputs.  Default: right-to-left, which suits the
   depth-first variable order (each apply's left operand lies above the
   accumulated right part), and was the fastest of the three here. */
enum fold { FOLD_RIGHT, FOLD_LEFT, FOLD_BALANCED };
static enum fold g_fold = FOLD_RIGHT;

static BDD apply_owned(BDD a, BDD b, int op) /* consumes a and b */
{
    BDD r = bdd_addref(bdd_apply(a, b, op));
    bdd_delref(a);
    bdd_delref(b);
    return r;
}

static BDD reduce(BDD *v, int n, int op)
{
    if (g_fold == FOLD_RIGHT) {
        BDD r = v[n - 1];
        for (int i = n - 2; i >= 0; i--)
            r = apply_owned(v[i], r, op);
        return r;
    }
    if (g_fold == FOLD_LEFT) {
        BDD r = v[0];
        for (int i = 1; i < n; i++)
            r = apply_owned(r, v[i], op);
        return r;
    }
    while (n > 1) {
        int m = 0;
        for (int i = 0; i + 1 < n; i += 2)
            v[m++] = apply_owned(v[i], v[i + 1], op);
        if (n & 1)
            v[m++] = v[n - 1];
        n = m;
    }
    return v[0];
}

static BDD *vote_memo;
static BDD *vote_in;
static int vote_n, vote_k;

static BDD atleast(int k, int i)
{
    if (k == 0)
        return bddtrue;
    if (vote_n - i < k)
        return bddfalse;
    BDD *m = &vote_memo[i * (vote_k + 1) + k];
    if (*m >= 0)
        return *m;
    BDD hi = atleast(k - 1, i + 1);
    BDD lo = atleast(k, i + 1);
    *m = bdd_addref(bdd_ite(vote_in[i], hi, lo));
    return *m;
}

static BDD build_gate(info *in)
{
    BDD *v = xmalloc((size_t)in->n_in * sizeof *v);
    int n = 0;
    for (xmlNode *c = in->node->children; c; c = c->next)
        if (c->type == XML_ELEMENT_NODE)
            v[n++] = build(c);
    BDD r;
    if (in->kind == K_ALL)
        r = reduce(v, n, bddop_and);
    else if (in->kind == K_ANY)
        r = reduce(v, n, bddop_or);
    else {
        /* votes are not nested inside votes in generated models, but keep it
           re-entrant anyway by saving the globals */
        BDD *sm = vote_memo, *si = vote_in;
        int sn = vote_n, sk = vote_k;
        vote_n = n;
        vote_k = in->k;
        vote_in = v;
        size_t cells = (size_t)(n + 1) * (size_t)(in->k + 1);
        vote_memo = xmalloc(cells * sizeof *vote_memo);
        for (size_t i = 0; i < cells; i++)
            vote_memo[i] = -1;
        r = bdd_addref(atleast(in->k, 0));
        for (size_t i = 0; i < cells; i++)
            if (vote_memo[i] >= 0)
                bdd_delref(vote_memo[i]);
        for (int i = 0; i < n; i++)
            bdd_delref(v[i]);
        free(vote_memo);
        vote_memo = sm;
        vote_in = si;
        vote_n = sn;
        vote_k = sk;
    }
    free(v);
    return r;
}

static BDD build(xmlNode *n)
{
    info *in = resolve(n);
    if (in->kind == K_EVENT)
        return bdd_ithvar(in->var); /* variable nodes are permanent */
    if (!in->built) {
        in->bdd = build_gate(in); /* the memo owns this reference */
        in->built = 1;
    }
    BDD r = bdd_addref(in->bdd);
    if (--in->uses == 0) {
        bdd_delref(in->bdd);
        in->bdd = bddfalse;
    }
    return r;
}

/* ---- probability ---------------------------------------------------------------- */
static double probability(BDD root)
{
    if (root == bddfalse)
        return 0.0;
    if (root == bddtrue)
        return 1.0;
    size_t cap = (size_t)bdd_getallocnum();
    double *P = xmalloc(cap * sizeof *P);
    unsigned char *done = xcalloc(cap, 1);
    P[0] = 0.0;
    P[1] = 1.0;
    done[0] = done[1] = 1;
    size_t scap = 1024, sp = 0;
    int *stack = xmalloc(scap * sizeof *stack);
    stack[sp++] = root;
    while (sp) {
        int u = stack[sp - 1];
        if (done[u]) {
            sp--;
            continue;
        }
        int lo = bdd_low(u), hi = bdd_high(u);
        int next = !done[lo] ? lo : (!done[hi] ? hi : -1);
        if (next >= 0) {
            if (sp == scap) {
                scap *= 2;
                stack = realloc(stack, scap * sizeof *stack);
                if (!stack)
                    die("out of memory");
            }
            stack[sp++] = next;
            continue;
        }
        double p = var_p[bdd_var(u)];
        P[u] = p * P[hi] + (1.0 - p) * P[lo];
        done[u] = 1;
        sp--;
    }
    double r = P[root];
    free(stack);
    free(done);
    free(P);
    return r;
}

/* ---- main ------------------------------------------------------------------------ */
typedef struct {
    xmlNode *hazard;
    double t_build, t_prob, prob;
    int nodes;
} job;

static void *run_job(void *arg)
{
    job *j = arg;
    double t0 = now();
    info *h = info_of(j->hazard);
    order_walk(h->target);
    if (n_vars == 0)
        die("hazard has no events");

    bdd_init(1000000, 100000);
    bdd_error_hook(bdd_err);
    bdd_gbc_hook(gbc_quiet);
    bdd_setmaxincrease(4000000);
    bdd_setcacheratio(10);
    bdd_setvarnum(n_vars);

    BDD root = build(h->target);
    double t1 = now();
    j->prob = probability(root);
    double t2 = now();
    j->nodes = bdd_nodecount(root);
    j->t_build = t1 - t0;
    j->t_prob = t2 - t1;
    bdd_delref(root);
    bdd_done();
    return NULL;
}

static void usage(FILE *f)
{
    fprintf(f, "usage: lw-buddy-peer [--hazard ID] [--fold right|left|balanced] MODEL.xml\n"
               "Exact hazard probability with BuDDy (benchmark peer). Prints one JSON line.\n");
}

int main(int argc, char **argv)
{
    const char *hazard_id = NULL, *path = NULL;
    for (int i = 1; i < argc; i++) {
        if (!strcmp(argv[i], "-h") || !strcmp(argv[i], "--help")) {
            usage(stdout);
            return 0;
        } else if (!strcmp(argv[i], "--hazard") && i + 1 < argc)
            hazard_id = argv[++i];
        else if (!strcmp(argv[i], "--fold") && i + 1 < argc) {
            const char *f = argv[++i];
            if (!strcmp(f, "right"))
                g_fold = FOLD_RIGHT;
            else if (!strcmp(f, "left"))
                g_fold = FOLD_LEFT;
            else if (!strcmp(f, "balanced"))
                g_fold = FOLD_BALANCED;
            else {
                usage(stderr);
                return 2;
            }
        }
        else if (argv[i][0] == '-' && argv[i][1]) {
            usage(stderr);
            return 2;
        } else if (!path)
            path = argv[i];
        else {
            usage(stderr);
            return 2;
        }
    }
    if (!path) {
        usage(stderr);
        return 2;
    }
    g_path = path;

    double t0 = now();
    LIBXML_TEST_VERSION
    xmlDoc *doc = xmlReadFile(path, NULL, XML_PARSE_NONET | XML_PARSE_BIG_LINES | XML_PARSE_HUGE);
    if (!doc)
        die("%s: cannot parse XML", path);
    xmlNode *root = xmlDocGetRootElement(doc);
    if (!root || !name_is(root, "safety-model"))
        die("%s: root element must be <safety-model>", path);
    {
        char *fmt = attr(root, "format");
        if (!fmt || strcmp(fmt, "1"))
            die_at(root, "expected format=\"1\"");
        xmlFree(fmt);
    }
    ids = xmlHashCreate(1 << 16);
    xmlNode *hazard = NULL;
    for (xmlNode *c = root->children; c; c = c->next) {
        if (c->type != XML_ELEMENT_NODE)
            continue;
        if (name_is(c, "title") || name_is(c, "description") || name_is(c, "exposure"))
            continue;
        if (name_is(c, "error") || name_is(c, "safeguard"))
            scan_event(c);
        else if (name_is(c, "block"))
            scan_holder(c, K_BLOCK);
        else if (name_is(c, "hazard")) {
            scan_holder(c, K_HAZARD);
            if (!hazard) {
                if (!hazard_id)
                    hazard = c;
                else {
                    char *id = attr(c, "id");
                    if (!strcmp(id, hazard_id))
                        hazard = c;
                    xmlFree(id);
                }
            }
        } else
            die_at(c, "element <%s> is not supported by lw-buddy-peer "
                      "(subset: error, safeguard, all, any, vote, ref, block, hazard)",
                   c->name);
    }
    if (!hazard) {
        if (hazard_id)
            die("%s: no hazard with id '%s'", path, hazard_id);
        die("%s: no hazard", path);
    }
    resolve_refs();
    double t1 = now();

    /* BuDDy's apply recursion can go as deep as the number of variables: run the
       BDD work on a thread with a large stack (untouched pages cost nothing). */
    job j = {.hazard = hazard};
    pthread_attr_t at;
    pthread_t th;
    pthread_attr_init(&at);
    pthread_attr_setstacksize(&at, (size_t)1 << 30);
    if (pthread_create(&th, &at, run_job, &j) != 0)
        die("cannot start worker thread");
    pthread_join(th, NULL);
    pthread_attr_destroy(&at);

    struct rusage ru;
    getrusage(RUSAGE_SELF, &ru);
    printf("{\"probability\": %.17g, \"bdd_nodes\": %d, \"seconds_load\": %.17g, "
           "\"seconds_build\": %.17g, \"seconds_prob\": %.17g, \"peak_rss_kb\": %ld, "
           "\"variables\": %d, \"gc_runs\": %d}\n",
           j.prob, j.nodes, t1 - t0, j.t_build, j.t_prob, (long)ru.ru_maxrss, n_vars,
           gc_runs);

    xmlHashFree(ids, NULL);
    xmlFreeDoc(doc);
    xmlCleanupParser();
    free(infos);
    free(var_p);
    return 0;
}
