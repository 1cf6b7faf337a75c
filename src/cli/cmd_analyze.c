/* cmd_analyze.c - layerwise analyze: the main job. */
#include <string.h>

#include "cli/cli.h"
#include "layerwise/alloc.h"
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
    "  --max-bytes N, --max-events N   input limits (see check --help)\n"
    "\n"
    "exit status: 0 done, 1 invalid model or analysis stopped, 2 usage\n";

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
    size_t variant = LW_NONE;
    size_t *hz = lw_malloc((m->nhazards + 1) * sizeof *hz);
    size_t nh = 0;
    if (!hz) {
        lw_model_free(m);
        fprintf(stderr, "layerwise: out of memory\n");
        return EXIT_INVALID;
    }
    rc = cli_variant(m, a.nvariants ? a.variants[0] : NULL, &variant);
    if (!rc)
        rc = cli_hazards(&a, m, hz, &nh);
    cli_sink sink;
    if (!rc)
        rc = cli_sink_open(&sink, a.output);
    if (rc) {
        lw_free(hz);
        lw_model_free(m);
        return rc;
    }
    lw_jw jw;
    lw_jw_init(&jw, sink.fp);
    if (a.format == FMT_JSON && nh > 1) {
        lw_jw_begin_object(&jw);
        lw_jw_key(&jw, "hazards");
        lw_jw_begin_array(&jw);
    }
    int ok = 1;
    for (size_t i = 0; i < nh && ok; i++) {
        lw_error err = LW_ERROR_INIT;
        lw_analysis *res = NULL;
        lw_status st = lw_analyze(m, variant, hz[i], &a.opt, &res, &err);
        if (st != LW_OK) {
            fprintf(stderr, "layerwise: %s: hazard \"%s\":\n", m->file,
                    m->nodes[m->hazards[hz[i]]].id);
            cli_print_errors(&err);
            lw_error_clear(&err);
            rc = cli_exit_code(st);
            ok = 0;
            break;
        }
        if (a.format == FMT_JSON) {
            lw_analysis_write_json(&jw, m, res);
        } else if (a.format == FMT_CSV) {
            if (a.table && !strcmp(a.table, "importance"))
                lw_render_importance_csv(sink.fp, m, res, i == 0);
            else
                lw_render_cut_sets_csv(sink.fp, m, res, i == 0);
        } else {
            if (i)
                fputs("\n", sink.fp);
            lw_render_analysis_text(sink.fp, m, res, a.opt.top);
        }
        lw_analysis_free(res);
    }
    if (ok && a.format == FMT_JSON && nh > 1) {
        lw_jw_end_array(&jw);
        lw_jw_key(&jw, "caution");
        lw_jw_string(&jw, lw_caution());
        lw_jw_end_object(&jw);
    } else if (ok && a.format == FMT_TEXT) {
        lw_text_caution(sink.fp);
    }
    if (ok && ferror(sink.fp)) {
        fprintf(stderr, "layerwise: writing the output failed\n");
        ok = 0;
        rc = EXIT_INVALID;
    }
    int crc = cli_sink_close(&sink, ok);
    if (!rc)
        rc = crc;
    lw_free(hz);
    lw_model_free(m);
    return rc;
}
