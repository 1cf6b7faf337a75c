/* cmd_compare.c - layerwise compare: baseline against variants. */
#include <string.h>

#include "cli/cli.h"
#include "layerwise/render.h"
#include "layerwise/render_mc.h"
#include "layerwise/uncertainty.h"

static const char help[] =
    "usage: layerwise compare --variant ID [--variant ID2 ...] [options] "
    "MODEL.xml\n"
    "\n"
    "What does a change buy? The baseline against each variant: the exact\n"
    "chance, per-year figures, the ratio to the baseline, events prevented\n"
    "a year, how many exposures (checks) prevent one event, and - from\n"
    "paired Monte Carlo samples, the same draws for the baseline and every\n"
    "variant - the share of samples in which the variant is better and the\n"
    "90 % range of the ratio.\n"
    "\n"
    "options:\n"
    "  --variant ID         a variant to compare (repeat for several;\n"
    "                       at least one)\n"
    "  --hazard ID          one hazard (default: every hazard)\n"
    "  --samples N          Monte Carlo samples (default 10,000; at most\n"
    "                       10,000,000)\n"
    "  --seed S             random seed (default 1); the same seed gives the\n"
    "                       same numbers whatever --threads is\n"
    "  --threads T          worker threads (default 1)\n"
    "  --format text|json|csv   output\n"
    "  --max-nodes N        decision-diagram node limit (default 20,000,000)\n"
    "  -o FILE              write to FILE (atomically) instead of stdout\n"
    "\n"
    "exit status: 0 done, 1 invalid model or analysis stopped, 2 usage\n";

typedef struct compare_ctx {
    const lw_model *m;
    const cli_args *a;
    const lw_mc_options *mc;
    const size_t *variants;
    size_t nvariants;
} compare_ctx;

static lw_status run(void *ctx, size_t hazard, void **res, lw_error *err)
{
    compare_ctx *c = ctx;
    return lw_compare_run(c->m, hazard, c->variants, c->nvariants,
                          &c->a->opt, c->mc, (lw_comparison **)res, err);
}

static json_t *json(const lw_model *m, const void *res)
{
    return lw_comparison_json(m, res);
}

static void text(void *ctx, FILE *out, const lw_model *m, const void *res)
{
    (void)ctx;
    lw_render_comparison_text(out, m, res);
}

static void csv(void *ctx, FILE *out, const lw_model *m, const void *res,
                bool header)
{
    (void)ctx;
    lw_render_comparison_csv(out, m, res, header);
}

static void free_result(void *res) { lw_comparison_free(res); }

int cmd_compare(int argc, char **argv)
{
    cli_args a;
    int rc = cli_parse(argc, argv, OPT_HAZARD | OPT_VARIANT | OPT_FORMAT |
                       OPT_CSV | OPT_OUTPUT | OPT_MC, help, &a);
    if (rc)
        return rc < 0 ? EXIT_DONE : rc;
    if (a.nvariants == 0) {
        fprintf(stderr, "layerwise: compare needs at least one --variant ID "
                "(try --help)\n");
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
    size_t variants[CLI_MAX_VARIANTS];
    for (size_t i = 0; i < a.nvariants && !rc; i++)
        rc = cli_variant(m, a.variants[i], &variants[i]);
    if (!rc) {
        compare_ctx c = {m, &a, &mc, variants, a.nvariants};
        static const cli_hazard_ops ops = {
            .run = run, .json = json, .text = text, .csv = csv,
            .free = free_result};
        rc = cli_each_hazard(&a, m, &ops, &c);
    }
    lw_model_free(m);
    return rc;
}
