/* cmd_uncertainty.c - layerwise uncertainty: Monte Carlo propagation. */
#include <string.h>

#include "cli/cli.h"
#include "layerwise/alloc.h"
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
    lw_mc_options_init(&mc);
    if (a.samples_set)
        mc.samples = a.samples;
    if (mc.samples < 2) {
        fprintf(stderr, "layerwise: --samples needs at least 2\n");
        return EXIT_USAGE;
    }
    mc.seed = (uint64_t)a.seed;
    mc.threads = a.threads;
    lw_model *m = NULL;
    rc = cli_load(&a, &m);
    if (rc)
        return rc;
    size_t variant = LW_NONE, nh = 0;
    size_t *hz = lw_malloc((m->nhazards + 1) * sizeof *hz);
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
    json_t *arr = a.format == FMT_JSON ? json_array() : NULL;
    int ok = 1;
    for (size_t i = 0; i < nh && ok; i++) {
        lw_error err = LW_ERROR_INIT;
        lw_uncertainty *u = NULL;
        lw_status st = lw_uncertainty_run(m, variant, hz[i], &a.opt, &mc, &u,
                                          &err);
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
            json_array_append_new(arr, lw_uncertainty_json(m, u));
        } else {
            if (i)
                fputs("\n", sink.fp);
            lw_render_uncertainty_text(sink.fp, m, u);
        }
        lw_uncertainty_free(u);
    }
    if (ok && a.format == FMT_JSON) {
        json_t *doc;
        if (nh == 1) {
            doc = json_incref(json_array_get(arr, 0));
        } else {
            doc = json_object();
            json_object_set(doc, "hazards", arr);
            json_object_set_new(doc, "caution", json_string(lw_caution()));
        }
        if (lw_json_write(sink.fp, doc))
            ok = 0, rc = EXIT_INVALID;
    } else if (ok) {
        lw_text_caution(sink.fp);
    }
    json_decref(arr);
    int crc = cli_sink_close(&sink, ok);
    if (!rc)
        rc = crc;
    lw_free(hz);
    lw_model_free(m);
    return rc;
}
