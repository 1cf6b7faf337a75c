/* cmd_analyze.c - layerwise analyze: the main job. */
#include <string.h>

#include "cli/cli.h"
#include "layerwise/jsonw.h"
#include "layerwise/render.h"

static const char help[] =
    "usage: layerwise analyze [options] MODEL.xml\n"
    "\n"
    "The exact chance of each hazard (from a binary decision diagram), the\n"
    "usual approximations beside it, per-year figures, the minimal cut sets\n"
    "(the combinations of misses that cause the hazard) and the importance\n"
    "of every event.\n"
    "\n"
    "options:\n"
    "  --hazard ID          analyse one hazard (default: every hazard)\n"
    "  --variant ID         apply a variant of the model first\n"
    "  --format text|json|csv   output (csv: the cut-set table)\n"
    "  --table cut-sets|importance   which table --format csv prints\n"
    "  --top N              list at most N cut sets (text default 20,\n"
    "                       json default all)\n"
    "  --cutoff P           leave out cut sets less likely than P\n"
    "  --max-order K        leave out cut sets of more than K events\n"
    "  --max-nodes N        decision-diagram node limit (default 20,000,000)\n"
    "  -o FILE              write to FILE (atomically) instead of stdout\n"
    "  --max-bytes N, --max-events N, --max-depth N   input limits (see\n"
    "                       check --help)\n"
    "\n"
    "exit status: 0 done, 1 invalid model or analysis stopped, 2 usage\n";

typedef struct analyze_ctx {
    const lw_model *m;
    size_t variant;
    const cli_args *a;
} analyze_ctx;

static lw_status run(void *ctx, size_t hazard, void **res, lw_error *err)
{
    analyze_ctx *c = ctx;
    return lw_analyze(c->m, c->variant, hazard, &c->a->opt,
                      (lw_analysis **)res, err);
}

static void text(void *ctx, FILE *out, const lw_model *m, const void *res)
{
    lw_render_analysis_text(out, m, res, ((analyze_ctx *)ctx)->a->opt.top);
}

static void csv(void *ctx, FILE *out, const lw_model *m, const void *res,
                bool header)
{
    const char *table = ((analyze_ctx *)ctx)->a->table;
    if (table && !strcmp(table, "importance"))
        lw_render_importance_csv(out, m, res, header);
    else
        lw_render_cut_sets_csv(out, m, res, header);
}

static void stream_json(lw_jw *w, const lw_model *m, const void *res)
{
    lw_analysis_write_json(w, m, res);
}

static void free_result(void *res) { lw_analysis_free(res); }

int cmd_analyze(int argc, char **argv)
{
    cli_args a;
    int rc = cli_parse(argc, argv, OPT_HAZARD | OPT_VARIANT | OPT_FORMAT |
                       OPT_CSV | OPT_OUTPUT | OPT_CUTS, help, &a);
    if (rc)
        return rc < 0 ? EXIT_DONE : rc;
    if (a.nvariants > 1) {
        fprintf(stderr, "layerwise: analyze takes one --variant; use "
                "compare for several\n");
        return EXIT_USAGE;
    }
    if (!a.top_set && a.format == FMT_TEXT)
        a.opt.top = 20;
    lw_model *m = NULL;
    rc = cli_load(&a, &m);
    if (rc)
        return rc;
    analyze_ctx c = {m, LW_NONE, &a};
    rc = cli_variant(m, a.nvariants ? a.variants[0] : NULL, &c.variant);
    if (!rc) {
        static const cli_hazard_ops ops = {
            .run = run, .stream_json = stream_json, .text = text,
            .csv = csv, .free = free_result};
        rc = cli_each_hazard(&a, m, &ops, &c);
    }
    lw_model_free(m);
    return rc;
}
