/*
 * analyze.c - the main question: exact hazard probability, per-year
 * figures, minimal cut sets with their approximations, and importance.
 *
 * Importance (definitions in docs/measures.md) comes from one bottom-up
 * and one top-down pass over the hazard's BDD: Birnbaum B_x = dP/dq_x,
 * then, since P is linear in q_x,
 *     P(x true) = P + (1 - q_x) B_x,   P(x false) = P - q_x B_x,
 * and criticality, RAW and RRW follow without more BDD work.
 * Fussell-Vesely is the cut-set form: the share of the rare-event sum
 * carried by the sets that hold x, from one top-down pass over the
 * cut-set ZBDD.
 */
#include "layerwise/analysis.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "layerwise/alloc.h"

void lw_cut_sets_free(lw_cut_set *sets, size_t n)
{
    if (!sets)
        return;
    for (size_t i = 0; i < n; i++)
        lw_free(sets[i].vars);
    lw_free(sets);
}

void lw_analysis_free(lw_analysis *a)
{
    if (!a)
        return;
    lw_cut_sets_free(a->cut_sets, a->ncut_sets);
    lw_free(a->importance);
    lw_prepared_free(a->owned);
    lw_free(a);
}

/* qsort context for sorting variables by name (qsort has no user data;
 * analyses run one at a time per thread). */
static _Thread_local const lw_network *sort_net;

static int cmp_var_name(const void *a, const void *b)
{
    uint32_t x = *(const uint32_t *)a, y = *(const uint32_t *)b;
    return strcmp(sort_net->vars[x].name, sort_net->vars[y].name);
}

static int cmp_importance(const void *a, const void *b)
{
    const lw_importance *x = a, *y = b;
    if (x->birnbaum > y->birnbaum) return -1;
    if (x->birnbaum < y->birnbaum) return 1;
    return strcmp(sort_net->vars[x->var].name, sort_net->vars[y->var].name);
}

/* The hazard's minimal cut sets: from the network first (its cost grows
 * with the gates' families, usually far below the BDD's size), and from
 * the BDD when that meets its node limit, which is set at the scale of
 * the BDD so that a network whose gate families blow up (absorbed only at
 * the top) wastes no more than the BDD way would cost.  Both give the
 * same family. */
lw_status lw_prepared_cut_family(const lw_prepared *p, const lw_options *opt,
                                 lw_cut_family **out, lw_error *err)
{
    *out = NULL;
    const lw_diagram *d = p->diagram;
    size_t max_nodes = opt && opt->max_nodes ? opt->max_nodes : 20000000u;
    size_t first = 2 * (size_t)d->n + ((size_t)1 << 20);
    if (first > max_nodes)
        first = max_nodes;
    uint32_t *var_level = lw_malloc((p->net->nvars + 1) * sizeof *var_level);
    if (!var_level)
        return lw_error_oom(err);
    memset(var_level, 0xff, (p->net->nvars + 1) * sizeof *var_level);
    for (uint32_t l = 0; l < d->nlevels; l++)
        var_level[d->level_var[l]] = l;
    lw_error scratch = LW_ERROR_INIT;
    lw_status st = lw_cut_family_from_network(
        p->net, p->net->hazard_gate[p->hazard], var_level, d->nlevels,
        d->level_var, p->q, first, out, &scratch);
    lw_free(var_level);
    lw_error_clear(&scratch);
    if (st == LW_ELIMIT)
        st = lw_cut_family_new(d, p->q, max_nodes, out, err);
    else if (st != LW_OK)
        st = lw_error_oom(err);
    return st;
}

static lw_status cut_sets(const lw_prepared *p, const lw_options *opt,
                          lw_analysis *a, double *fv, lw_error *err)
{
    lw_cut_family *fam = NULL;
    lw_level_set *ls = NULL;
    size_t nls = 0;
    bool more = false;
    lw_status st = lw_prepared_cut_family(p, opt, &fam, err);
    if (st != LW_OK)
        return st;
    a->cut_set_count = lw_cut_family_count(fam);
    a->rare_event = lw_cut_family_rare_event(fam);
    a->zdd_nodes = lw_cut_family_nodes(fam);
    double mcub = 0;
    double max_sets = opt->max_cut_sets ? (double)opt->max_cut_sets : 1e6;
    st = lw_cut_family_upper_bound(fam, max_sets, &mcub, err);
    if (st == LW_OK) {
        a->min_cut_upper_bound = mcub;
        a->mcub_exact = true;
    } else if (st == LW_ELIMIT) {
        a->min_cut_upper_bound = a->rare_event < 1 ? a->rare_event : 1;
        a->mcub_exact = false;
    } else {
        goto done;
    }
    st = lw_cut_family_fussell_vesely(fam, fv, err);
    if (st != LW_OK)
        goto done;
    size_t top = opt->top;
    if (top == 0 && a->cut_set_count > max_sets)
        top = (size_t)max_sets;
    st = lw_cut_family_top(fam, top, opt->cutoff, opt->max_order, &ls, &nls,
                           &more, err);
    if (st != LW_OK)
        goto done;
    a->cut_sets = lw_calloc(nls + 1, sizeof *a->cut_sets);
    if (!a->cut_sets) {
        st = lw_error_oom(err);
        goto done;
    }
    const uint32_t *lv = p->diagram->level_var;
    sort_net = p->net;
    for (size_t i = 0; i < nls; i++) {
        lw_cut_set *c = &a->cut_sets[i];
        c->vars = lw_malloc((ls[i].order + 1) * sizeof *c->vars);
        if (!c->vars) {
            st = lw_error_oom(err);
            goto done;
        }
        a->ncut_sets = i + 1;
        c->order = ls[i].order;
        for (size_t k = 0; k < ls[i].order; k++)
            c->vars[k] = lv[ls[i].levels[k]];
        qsort(c->vars, c->order, sizeof *c->vars, cmp_var_name);
        c->probability = ls[i].probability;
        c->share = a->rare_event > 0 ? c->probability / a->rare_event : 0;
        a->covered += c->probability;
    }
    a->truncated = more;
done:
    lw_level_sets_free(ls, nls);
    lw_cut_family_free(fam);
    return st;
}

static lw_status importance(const lw_prepared *p, lw_analysis *a,
                            const double *fv, lw_error *err)
{
    const lw_diagram *d = p->diagram;
    uint32_t nl = p->hazard_levels;
    double *b = lw_malloc((p->nlevels + 1) * sizeof *b);
    a->importance = lw_calloc(nl + 1, sizeof *a->importance);
    if (!b || !a->importance) {
        lw_free(b);
        return lw_error_oom(err);
    }
    /* one top-down pass from the probability pass's differences */
    double *reach = lw_malloc((size_t)d->n * sizeof *reach);
    if (!reach) {
        lw_free(b);
        return lw_error_oom(err);
    }
    lw_diagram_birnbaum_given(d, p->q, p->node_diff, b, reach);
    lw_free(reach);
    double P = p->probability;
    double invP = P > 0 ? 1.0 / P : 0.0;    /* one division, not three */
    for (uint32_t l = 0; l < nl; l++) {
        lw_importance *r = &a->importance[l];
        double q = p->q[l], B = b[l];
        r->var = d->level_var[l];
        r->p = q;
        r->birnbaum = B;
        r->p_true = P + (1.0 - q) * B;
        r->p_false = P - q * B;
        /* P - q B cancels when x is necessary: a residue at the rounding
         * level of P (either sign) is an exact zero, so RRW is null */
        if (r->p_false <= 1e-12 * P)
            r->p_false = 0;
        if (r->p_true > 1)
            r->p_true = 1;
        r->criticality = B * q * invP;
        r->raw = r->p_true * invP;
        r->rrw_defined = r->p_false > 0;
        r->rrw = r->rrw_defined ? P / r->p_false : 0;
        r->fussell_vesely = fv[l];
    }
    a->nimportance = nl;
    sort_net = p->net;
    qsort(a->importance, nl, sizeof *a->importance, cmp_importance);
    lw_free(b);
    return LW_OK;
}

lw_status lw_analyze_prepared(const lw_prepared *p, const lw_options *opt,
                              lw_analysis **out, lw_error *err)
{
    *out = NULL;
    lw_options defaults;
    if (!opt) {
        lw_options_init(&defaults);
        opt = &defaults;
    }
    const lw_model *m = p->model;
    const lw_node *h = &m->nodes[m->hazards[p->hazard]];
    lw_analysis *a = lw_calloc(1, sizeof *a);
    double *fv = lw_calloc(p->nlevels + 1, sizeof *fv);
    if (!a || !fv) {
        lw_free(a);
        lw_free(fv);
        return lw_error_oom(err);
    }
    a->net = p->net;
    a->hazard = p->hazard;
    a->variant = p->variant;
    a->probability = p->probability;
    a->one_in = p->probability > 0 ? 1.0 / p->probability : 0.0;
    a->has_exposure = m->has_exposure;
    a->per_year = m->has_exposure ? p->probability * m->per_year : 0.0;
    a->has_tolerable = h->has_tolerable;
    a->tolerable = h->tolerable;
    a->meets_tolerable = !h->has_tolerable ||
                         p->probability <= h->tolerable;
    a->bdd_nodes = p->diagram->n;
    lw_status st = cut_sets(p, opt, a, fv, err);
    if (st == LW_OK)
        st = importance(p, a, fv, err);
    lw_free(fv);
    if (st != LW_OK) {
        lw_analysis_free(a);
        return st;
    }
    *out = a;
    return LW_OK;
}

lw_status lw_analyze(const lw_model *m, size_t variant, size_t hazard,
                     const lw_options *opt, lw_analysis **out, lw_error *err)
{
    *out = NULL;
    lw_prepared *p = NULL;
    lw_status st = lw_prepare(m, variant, hazard, opt, &p, err);
    if (st != LW_OK)
        return st;
    lw_prepared_drop_builder(p);    /* peak memory: keep only the diagram */
    st = lw_analyze_prepared(p, opt, out, err);
    if (st != LW_OK) {
        lw_prepared_free(p);
        return st;
    }
    (*out)->owned = p;
    return LW_OK;
}
