/*
 * report_data.c - gather what the committee report says: the baseline
 * analysis of each hazard, a point analysis of each variant, and, when
 * asked, the Monte Carlo uncertainty and the paired comparison.
 */
#include "layerwise/report.h"

#include <string.h>

#include "layerwise/alloc.h"
#include "render/report_int.h"

void lw_report_options_init(lw_report_options *o)
{
    memset(o, 0, sizeof *o);
    o->paths = 8;
    o->cut_sets = 20;
    o->bars = 12;
    o->monte_carlo = true;
    o->seed = 1;
    o->threads = 1;
    o->all_variants = true;
}

static void hazard_free(const lw_report *r, lw_report_hazard *h)
{
    lw_analysis_free(h->analysis);
    if (h->variant_analysis) {
        for (size_t v = 0; v < r->nvariants; v++)
            lw_analysis_free(h->variant_analysis[v]);
        lw_free(h->variant_analysis);
    }
    lw_report_free_mc(h);
}

void lw_report_free(lw_report *r)
{
    if (!r)
        return;
    for (size_t i = 0; i < r->nhazards; i++)
        hazard_free(r, &r->hazards[i]);
    lw_free(r->hazards);
    lw_free(r->variants);
    lw_free(r);
}

lw_status lw_report_build(const lw_model *m, const size_t *hazards,
                          size_t nhazards, const size_t *variants,
                          size_t nvariants, const lw_options *opt,
                          const lw_report_options *ro, lw_report **out,
                          lw_error *err)
{
    *out = NULL;
    lw_report *r = lw_calloc(1, sizeof *r);
    if (!r)
        return lw_error_oom(err);
    r->model = m;
    if (ro)
        r->ro = *ro;
    else
        lw_report_options_init(&r->ro);
    if (!r->ro.paths)
        r->ro.paths = 8;
    if (!r->ro.cut_sets)
        r->ro.cut_sets = 20;
    if (!r->ro.bars)
        r->ro.bars = 12;
    if (opt)
        r->opt = *opt;
    else
        lw_options_init(&r->opt);
    /* list enough cut sets for the table and the paths; the importance
     * and the approximations always use the whole family */
    size_t want = r->ro.cut_sets > r->ro.paths ? r->ro.cut_sets : r->ro.paths;
    if (!r->opt.top || r->opt.top > want)
        r->opt.top = want;

    lw_status st = LW_OK;
    if (nvariants == 0 && r->ro.all_variants) {
        variants = NULL;
        nvariants = m->nvariants;
    }
    r->variants = lw_calloc(nvariants + 1, sizeof *r->variants);
    r->hazards = lw_calloc(nhazards + 1, sizeof *r->hazards);
    if (!r->variants || !r->hazards) {
        st = lw_error_oom(err);
        goto fail;
    }
    for (size_t v = 0; v < nvariants; v++) {
        size_t idx = variants ? variants[v] : v;
        if (idx >= m->nvariants) {
            st = lw_error_set(err, LW_EUSAGE, m->file, 0,
                              "no variant number %zu", idx);
            goto fail;
        }
        r->variants[v] = idx;
    }
    r->nvariants = nvariants;
    for (size_t i = 0; i < nhazards; i++) {
        if (hazards[i] >= m->nhazards) {
            st = lw_error_set(err, LW_EUSAGE, m->file, 0,
                              "no hazard number %zu", hazards[i]);
            goto fail;
        }
        lw_report_hazard *h = &r->hazards[i];
        r->nhazards = i + 1;
        h->hazard = hazards[i];
        st = lw_analyze(m, LW_NONE, h->hazard, &r->opt, &h->analysis, err);
        if (st != LW_OK)
            goto fail;
        h->variant_analysis = lw_calloc(nvariants + 1,
                                        sizeof *h->variant_analysis);
        if (!h->variant_analysis) {
            st = lw_error_oom(err);
            goto fail;
        }
        lw_options vo = r->opt;
        vo.top = 1;
        for (size_t v = 0; v < nvariants; v++) {
            st = lw_analyze(m, r->variants[v], h->hazard, &vo,
                            &h->variant_analysis[v], err);
            if (st != LW_OK)
                goto fail;
        }
        if (r->ro.monte_carlo) {
            st = lw_report_run_mc(r, h, err);
            if (st != LW_OK)
                goto fail;
        }
    }
    *out = r;
    return LW_OK;
fail:
    lw_report_free(r);
    return st;
}
