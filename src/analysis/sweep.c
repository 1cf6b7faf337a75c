/*
 * sweep.c - the hazard probability as one event's probability runs over a
 * range, exact at every point.
 *
 * Each point sets the event's probability, derives the variable
 * probabilities again (lw_network_var_probs, so a common-cause member or a
 * dependence second also moves its shared parts) and makes one probability
 * pass over the frozen diagram.
 *
 * For a plain event (its variable is not the independent part of a
 * common-cause member or of a dependence second) P(hazard) is linear in
 * its probability x (Shannon expansion on that variable):
 *     P = a + b x,  a = P(hazard | event false),  b = Birnbaum importance,
 * so the crossing of the tolerable level is solved exactly as
 * x = (tolerable - a) / b.  Otherwise the crossing is bracketed between
 * two points and found by bisection, one pass per step.
 */
#include "layerwise/uncertainty.h"

#include <math.h>
#include <string.h>

#include "analysis/mc_engine.h"
#include "layerwise/alloc.h"

void lw_sweep_free(lw_sweep *s)
{
    if (!s)
        return;
    lw_free(s->points);
    lw_free(s);
}

typedef struct evaluator {
    const lw_prepared *p;
    size_t event;
    double *ep, *vp, *q, *work;
} evaluator;

static double eval_at(evaluator *E, double x)
{
    const lw_prepared *p = E->p;
    E->ep[E->event] = x;
    lw_network_var_probs(p->net, E->ep, E->vp);
    const uint32_t *lv = p->diagram->level_var;
    for (uint32_t l = 0; l < p->hazard_levels; l++)
        E->q[l] = E->vp[lv[l]];
    return lw_diagram_prob(p->diagram, E->q, E->work);
}

lw_status lw_sweep_run(const lw_model *m, size_t variant, size_t hazard,
                       const char *event_id, double from, double to,
                       size_t steps, bool log_scale, const lw_options *opt,
                       lw_sweep **out, lw_error *err)
{
    *out = NULL;
    size_t e = event_id ? lw_model_find_node(m, event_id) : LW_NONE;
    if (e == LW_NONE)
        return lw_error_set(err, LW_EUSAGE, m->file, 0,
                            "no event \"%s\" to sweep",
                            event_id ? event_id : "");
    const lw_node *en = &m->nodes[e];
    if (en->kind != LW_NODE_ERROR && en->kind != LW_NODE_SAFEGUARD)
        return lw_error_set(err, LW_EUSAGE, m->file, en->line,
                            "\"%s\" is a %s, not an error or safeguard: "
                            "sweep varies an event's probability",
                            event_id, lw_node_kind_name(en->kind));
    if (!isfinite(from) || !isfinite(to) || from < 0 || to > 1 ||
        !(from < to))
        return lw_error_set(err, LW_EUSAGE, NULL, 0,
                            "the sweep range needs 0 <= from < to <= 1 "
                            "(got %g to %g)", from, to);
    if (log_scale && !(from > 0))
        return lw_error_set(err, LW_EUSAGE, NULL, 0,
                            "a logarithmic sweep needs from > 0");
    if (steps < 2 || steps > 1000000)
        return lw_error_set(err, LW_EUSAGE, NULL, 0,
                            "the sweep needs 2 to 1,000,000 points "
                            "(got %zu)", steps);
    lw_prepared *p = NULL;
    lw_status st = lw_prepare(m, variant, hazard, opt, &p, err);
    if (st != LW_OK)
        return st;
    const lw_network *net = p->net;
    lw_sweep *s = lw_calloc(1, sizeof *s);
    evaluator E;
    memset(&E, 0, sizeof E);
    E.p = p;
    E.event = e;
    E.ep = lw_malloc((m->nnodes + 1) * sizeof *E.ep);
    E.vp = lw_malloc((net->nvars + 1) * sizeof *E.vp);
    E.q = lw_malloc((p->nlevels + 1) * sizeof *E.q);
    E.work = lw_malloc(((size_t)p->diagram->n + 2) * sizeof *E.work);
    if (s)
        s->points = lw_calloc(steps, sizeof *s->points);
    if (!s || !s->points || !E.ep || !E.vp || !E.q || !E.work) {
        st = lw_error_oom(err);
        goto done;
    }
    lw_network_event_probs(net, E.ep);
    memcpy(E.q, p->q, p->nlevels * sizeof *E.q);
    const lw_node *h = &m->nodes[m->hazards[hazard]];
    s->hazard = hazard;
    s->variant = variant;
    s->event = e;
    s->from = from;
    s->to = to;
    s->log_scale = log_scale;
    s->current_p = E.ep[e];
    s->current_probability = p->probability;
    s->was_absent = en->kind == LW_NODE_SAFEGUARD && !net->present[e];
    s->has_exposure = m->has_exposure;
    s->has_tolerable = h->has_tolerable;
    s->tolerable = h->tolerable;
    if (net->dist[e].kind == LW_DIST_OBSERVED) {
        s->observed = true;
        lw_observed_fill(m, e, &s->obs);
    }
    uint32_t v = net->event_var[e];
    const uint32_t *vl = lw_builder_var_level(p->builder);
    bool part = v != LW_NO_GATE && net->vars[v].part;
    s->in_hazard = v != LW_NO_GATE &&
                   ((vl[v] != UINT32_MAX && vl[v] < p->hazard_levels) ||
                    (part && vl[net->vars[v].partner] != UINT32_MAX &&
                     vl[net->vars[v].partner] < p->hazard_levels));
    s->linear = !part;
    if (s->linear) {
        s->a = eval_at(&E, 0.0);
        s->b = eval_at(&E, 1.0) - s->a;
    }
    s->npoints = steps;
    double lf = log(from), lt = log(to);
    for (size_t i = 0; i < steps; i++) {
        double t = (double)i / (double)(steps - 1);
        double x;
        if (i == 0)
            x = from;
        else if (i == steps - 1)
            x = to;
        else
            x = log_scale ? exp(lf + (lt - lf) * t) : from + (to - from) * t;
        lw_sweep_point *pt = &s->points[i];
        pt->x = x;
        pt->probability = eval_at(&E, x);
        pt->per_year = m->has_exposure ? pt->probability * m->per_year : 0;
    }
    if (s->has_tolerable) {
        double tol = s->tolerable;
        if (s->linear) {
            if (s->b != 0) {
                double xs = (tol - s->a) / s->b;
                if (xs >= from && xs <= to) {
                    s->crosses = true;
                    s->crossing_x = xs;
                }
            }
        } else {
            for (size_t i = 0; i + 1 < steps && !s->crosses; i++) {
                bool above0 = s->points[i].probability > tol;
                bool above1 = s->points[i + 1].probability > tol;
                if (above0 == above1)
                    continue;
                double lo = s->points[i].x, hi = s->points[i + 1].x;
                for (int it = 0; it < 200; it++) {
                    double mid = 0.5 * (lo + hi);
                    if (mid <= lo || mid >= hi)
                        break;
                    if ((eval_at(&E, mid) > tol) == above0)
                        lo = mid;
                    else
                        hi = mid;
                }
                s->crosses = true;
                s->crossing_x = 0.5 * (lo + hi);
            }
        }
    }
done:
    lw_free(E.ep);
    lw_free(E.vp);
    lw_free(E.q);
    lw_free(E.work);
    lw_prepared_free(p);
    if (st != LW_OK) {
        lw_sweep_free(s);
        return st;
    }
    *out = s;
    return LW_OK;
}
