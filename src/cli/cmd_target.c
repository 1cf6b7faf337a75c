/* cmd_target.c - layerwise target: what each safeguard must achieve. */
#include <string.h>

#include "cli/cli.h"
#include "layerwise/render_target.h"

static const char help[] =
    "usage: layerwise target [options] MODEL.xml\n"
    "\n"
    "For each safeguard, the miss probability it would have to reach on its\n"
    "own for the hazard to meet the goal, or that it cannot; and the single\n"
    "most effective layer to improve.  Exact: the hazard's chance is linear\n"
    "in each layer's miss probability.\n"
    "\n"
    "options:\n"
    "  --goal P             the goal per exposure unit (default: the\n"
    "                       hazard's tolerable level)\n"
    "  --hazard ID          one hazard (default: every hazard)\n"
    "  --variant ID         apply a variant first\n"
    "  --format text|json|csv\n"
    "  -o FILE              write to FILE (atomically)\n"
    "  --max-nodes N        decision-diagram node limit\n"
    "\n"
    "exit status: 0 done, 1 invalid model or analysis stopped, 2 usage\n";

typedef struct target_ctx {
    const lw_model *m;
    size_t variant;
    const cli_args *a;
} target_ctx;

static lw_status run(void *ctx, size_t hazard, void **res, lw_error *err)
{
    target_ctx *c = ctx;
    const lw_node *h = &c->m->nodes[c->m->hazards[hazard]];
    double goal = c->a->goal_set ? c->a->goal : h->tolerable;
    return lw_target_run(c->m, c->variant, hazard, goal, &c->a->opt,
                         (lw_target **)res, err);
}

static json_t *json(const lw_model *m, const void *res)
{
    return lw_target_json(m, res);
}

static void text(void *ctx, FILE *out, const lw_model *m, const void *res)
{
    (void)ctx;
    lw_render_target_text(out, m, res);
}

static void csv(void *ctx, FILE *out, const lw_model *m, const void *res,
                bool header)
{
    (void)ctx;
    lw_render_target_csv(out, m, res, header);
}

static void free_result(void *res) { lw_target_free(res); }

int cmd_target(int argc, char **argv)
{
    cli_args a;
    int rc = cli_parse(argc, argv, OPT_HAZARD | OPT_VARIANT | OPT_FORMAT |
                       OPT_CSV | OPT_OUTPUT | OPT_GOAL, help, &a);
    if (rc)
        return rc < 0 ? EXIT_DONE : rc;
    if (a.nvariants > 1) {
        fprintf(stderr, "layerwise: target takes one --variant\n");
        return EXIT_USAGE;
    }
    lw_model *m = NULL;
    rc = cli_load(&a, &m);
    if (rc)
        return rc;
    target_ctx c = {m, LW_NONE, &a};
    rc = cli_variant(m, a.nvariants ? a.variants[0] : NULL, &c.variant);
    for (size_t i = 0; !rc && i < m->nhazards; i++) {
        const lw_node *h = &m->nodes[m->hazards[i]];
        if (a.hazard && strcmp(a.hazard, h->id))
            continue;
        if (!a.goal_set && !h->has_tolerable) {
            fprintf(stderr, "layerwise: %s: hazard \"%s\" has no tolerable "
                    "level; give --goal P\n", m->file, h->id);
            rc = EXIT_USAGE;
        }
    }
    if (!rc) {
        static const cli_hazard_ops ops = {
            .run = run, .json = json, .text = text, .csv = csv,
            .free = free_result};
        rc = cli_each_hazard(&a, m, &ops, &c);
    }
    lw_model_free(m);
    return rc;
}
