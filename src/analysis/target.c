/* target.c - the miss probability each safeguard must reach. */
#include "layerwise/target.h"

#include <stdlib.h>

#include "layerwise/alloc.h"

void lw_target_free(lw_target *t)
{
    if (!t)
        return;
    lw_free(t->rows);
    lw_analysis_free(t->owned);
    lw_free(t);
}

static int cmp_floor(const void *a, const void *b)
{
    const lw_target_row *x = a, *y = b;
    if (x->floor < y->floor) return -1;
    if (x->floor > y->floor) return 1;
    return (x->var > y->var) - (x->var < y->var);
}

lw_status lw_target_run(const lw_model *m, size_t variant, size_t hazard,
                        double goal, const lw_options *opt, lw_target **out,
                        lw_error *err)
{
    *out = NULL;
    lw_options o;
    if (opt)
        o = *opt;
    else
        lw_options_init(&o);
    o.top = 1;      /* the cut-set list is not needed here */
    lw_analysis *a = NULL;
    lw_status st = lw_analyze(m, variant, hazard, &o, &a, err);
    if (st != LW_OK)
        return st;
    lw_target *t = lw_calloc(1, sizeof *t);
    if (!t || !(t->rows = lw_calloc(a->nimportance + 1, sizeof *t->rows))) {
        lw_free(t);
        lw_analysis_free(a);
        return lw_error_oom(err);
    }
    t->owned = a;
    t->net = a->net;
    t->hazard = hazard;
    t->variant = variant;
    t->goal = goal;
    t->probability = a->probability;
    t->meets = a->probability <= goal;
    t->best = LW_NONE;
    for (size_t i = 0; i < a->nimportance; i++) {
        const lw_importance *r = &a->importance[i];
        if (a->net->vars[r->var].kind != LW_VAR_SAFEGUARD)
            continue;
        lw_target_row *row = &t->rows[t->nrows++];
        row->var = r->var;
        row->current = r->p;
        row->floor = r->p_false;
        row->birnbaum = r->birnbaum;
        row->reachable = r->p_false < goal;
        row->has_required = row->reachable && r->birnbaum > 0;
        if (row->has_required) {
            double req = (goal - r->p_false) / r->birnbaum;
            row->required = req > 1 ? 1 : req;
        }
        row->already = row->has_required && r->p <= row->required;
    }
    qsort(t->rows, t->nrows, sizeof *t->rows, cmp_floor);
    if (t->nrows && t->rows[0].birnbaum > 0)
        t->best = 0;
    *out = t;
    return LW_OK;
}
