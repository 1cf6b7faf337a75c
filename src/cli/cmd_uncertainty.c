/* cmd_uncertainty.c - layerwise uncertainty: Monte Carlo propagation. */
#include <string.h>

#include "cli/cli.h"
#include "layerwise/render.h"
#include "layerwise/render_mc.h"
#include "layerwise/uncertainty.h"

static const char help[] =
    "usage: layerwise uncertainty [options] MODEL.xml\n"
    "\n"
    "How sure can we be? Draws every event probability that has a stated\n"
    "distribution (lognormal by mean and error factor, beta, audit counts,\n"
    "uniform) and recomputes the exact hazard chance for each sample: the\n"
    "mean, the 5th, 50th and 95th percentiles, per-year figures and a small\n"
    "histogram. Events with a single value stay fixed.\n"
    "\n"
    "options:\n"
    "  --hazard ID          one hazard (default: every hazard)\n"
    "  --variant ID         apply a variant of the model first\n"
    "  --samples N          Monte Carlo samples (default 10,000; at most\n"
    "                       10,000,000)\n"
    "  --seed S             random seed (default 1); the same seed gives the\n"
    "                       same numbers whatever --threads is\n"
    "  --threads T          worker threads (default 1)\n"
    "  --format text|json   output\n"
    "  --max-nodes N        decision-diagram node limit (default 20,000,000)\n"
    "  -o FILE              write to FILE (atomically) instead of stdout\n"
    "\n"
    "exit status: 0 done, 1 invalid model or analysis stopped, 2 usage\n";

typedef struct mc_ctx {
    const lw_model *m;
    size_t variant;
    const cli_args *a;
    const lw_mc_options *mc;
    const size_t *variants;     /* compare */
    size_t nvariants;
} mc_ctx;

static lw_status run(void *ctx, size_t hazard, void **res, lw_error *err)
{
    mc_ctx *c = ctx;
    return lw_uncertainty_run(c->m, c->variant, hazard, &c->a->opt, c->mc,
                              (lw_uncertainty **)res, err);
}

static json_t *json(const lw_model *m, const void *res)
{
    return lw_uncertainty_json(m, res);
}

static void text(void *ctx, FILE *out, const lw_model *m, const void *res)
{
    (void)ctx;
    lw_render_uncertainty_text(out, m, res);
}

static void free_result(void *res) { lw_uncertainty_free(res); }

int cmd_uncertainty(int argc, char **argv)
{
    cli_args a;
    int rc = cli_parse(argc, argv, OPT_HAZARD | OPT_VARIANT | OPT_FORMAT |
                       OPT_OUTPUT | OPT_MC, help, &a);
    if (rc)
        return rc < 0 ? EXIT_DONE : rc;
    if (a.nvariants > 1) {
        fprintf(stderr, "layerwise: uncertainty takes one --variant; use "
                "compare for several\n");
        return EXIT_USAGE;
    }
    lw_mc_options mc;
    rc = cli_mc_options(&a, &mc);
    if (rc)
        return rc;
    lw_model *m = NULL;
    rc = cli_load(&a, &m);
    if (rc)
        return rc;
    mc_ctx c = {m, LW_NONE, &a, &mc, NULL, 0};
    rc = cli_variant(m, a.nvariants ? a.variants[0] : NULL, &c.variant);
    if (!rc) {
        static const cli_hazard_ops ops = {
            .run = run, .json = json, .text = text, .free = free_result};
        rc = cli_each_hazard(&a, m, &ops, &c);
    }
    lw_model_free(m);
    return rc;
}
