/* cmd_sweep.c - layerwise sweep: the hazard as one probability varies. */
#include <string.h>

#include "cli/cli.h"
#include "layerwise/alloc.h"
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
        lw_sweep *s = NULL;
        lw_status st = lw_sweep_run(m, variant, hz[i], a.event, a.from, a.to,
                                    a.steps, a.log_scale, &a.opt, &s, &err);
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
            json_array_append_new(arr, lw_sweep_json(m, s));
        } else if (a.format == FMT_CSV) {
            lw_render_sweep_csv(sink.fp, m, s, i == 0);
        } else {
            if (i)
                fputs("\n", sink.fp);
            lw_render_sweep_text(sink.fp, m, s);
        }
        lw_sweep_free(s);
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
    } else if (ok && a.format == FMT_TEXT) {
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
