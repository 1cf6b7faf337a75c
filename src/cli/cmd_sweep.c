/* cmd_sweep.c - layerwise sweep: the hazard as one probability varies. */
#include <string.h>

#include "cli/cli.h"
#include "layerwise/render.h"
#include "layerwise/render_mc.h"
#include "layerwise/uncertainty.h"

static const char help[] =
    "usage: layerwise sweep --event ID --from A --to B [--steps N] [--log] "
    "[options] MODEL.xml\n"
    "\n"
    "The exact hazard chance as one event's probability runs from A to B.\n"
    "For a plain event the chance is a straight line in that probability,\n"
    "P = a + b x, and the report gives a and b; where the hazard has a\n"
    "tolerable level, it marks where the curve crosses it.\n"
    "\n"
    "options:\n"
    "  --event ID           the error or safeguard to vary\n"
    "  --from A --to B      the range, 0 <= A < B <= 1\n"
    "  --steps N            points, ends included (default 21)\n"
    "  --log                logarithmic steps (needs A > 0)\n"
    "  --hazard ID          one hazard (default: every hazard)\n"
    "  --variant ID         apply a variant of the model first\n"
    "  --format text|json|csv   output\n"
    "  --max-nodes N        decision-diagram node limit (default 20,000,000)\n"
    "  -o FILE              write to FILE (atomically) instead of stdout\n"
    "\n"
    "exit status: 0 done, 1 invalid model or analysis stopped, 2 usage\n";

typedef struct sweep_ctx {
    const lw_model *m;
    size_t variant;
    const cli_args *a;
} sweep_ctx;

static lw_status run(void *ctx, size_t hazard, void **res, lw_error *err)
{
    sweep_ctx *c = ctx;
    const cli_args *a = c->a;
    return lw_sweep_run(c->m, c->variant, hazard, a->event, a->from, a->to,
                        a->steps, a->log_scale, &a->opt, (lw_sweep **)res,
                        err);
}

static json_t *json(const lw_model *m, const void *res)
{
    return lw_sweep_json(m, res);
}

static void text(void *ctx, FILE *out, const lw_model *m, const void *res)
{
    (void)ctx;
    lw_render_sweep_text(out, m, res);
}

static void csv(void *ctx, FILE *out, const lw_model *m, const void *res,
                bool header)
{
    (void)ctx;
    lw_render_sweep_csv(out, m, res, header);
}

static void free_result(void *res) { lw_sweep_free(res); }

int cmd_sweep(int argc, char **argv)
{
    cli_args a;
    int rc = cli_parse(argc, argv, OPT_HAZARD | OPT_VARIANT | OPT_FORMAT |
                       OPT_CSV | OPT_OUTPUT | OPT_SWEEP, help, &a);
    if (rc)
        return rc < 0 ? EXIT_DONE : rc;
    if (a.nvariants > 1) {
        fprintf(stderr, "layerwise: sweep takes one --variant\n");
        return EXIT_USAGE;
    }
    if (!a.event || !a.from_set || !a.to_set) {
        fprintf(stderr, "layerwise: sweep needs --event ID, --from A and "
                "--to B (try --help)\n");
        return EXIT_USAGE;
    }
    if (a.from < 0 || a.to > 1 || !(a.from < a.to)) {
        fprintf(stderr, "layerwise: the sweep range needs 0 <= --from < --to "
                "<= 1\n");
        return EXIT_USAGE;
    }
    if (a.log_scale && !(a.from > 0)) {
        fprintf(stderr, "layerwise: --log needs --from above 0\n");
        return EXIT_USAGE;
    }
    lw_model *m = NULL;
    rc = cli_load(&a, &m);
    if (rc)
        return rc;
    sweep_ctx c = {m, LW_NONE, &a};
    rc = cli_variant(m, a.nvariants ? a.variants[0] : NULL, &c.variant);
    if (!rc) {
        static const cli_hazard_ops ops = {
            .run = run, .json = json, .text = text, .csv = csv,
            .free = free_result};
        rc = cli_each_hazard(&a, m, &ops, &c);
    }
    lw_model_free(m);
    return rc;
}
