/* cmd_target.c - layerwise target: what each safeguard must achieve. */
#include <string.h>

#include "cli/cli.h"
#include "layerwise/alloc.h"
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
    size_t variant = LW_NONE, nh = 0;
    size_t *hz = lw_malloc((m->nhazards + 1) * sizeof *hz);
    if (!hz) {
        lw_model_free(m);
        return EXIT_INVALID;
    }
    rc = cli_variant(m, a.nvariants ? a.variants[0] : NULL, &variant);
    if (!rc)
        rc = cli_hazards(&a, m, hz, &nh);
    for (size_t i = 0; !rc && i < nh; i++) {
        const lw_node *h = &m->nodes[m->hazards[hz[i]]];
        if (!a.goal_set && !h->has_tolerable) {
            fprintf(stderr, "layerwise: %s: hazard \"%s\" has no tolerable "
                    "level; give --goal P\n", m->file, h->id);
            rc = EXIT_USAGE;
        }
    }
    cli_sink sink;
    if (!rc)
        rc = cli_sink_open(&sink, a.output);
    if (rc) {
        lw_free(hz);
        lw_model_free(m);
        return rc;
    }
    json_t *arr = json_array();
    int ok = 1;
    for (size_t i = 0; i < nh && ok; i++) {
        const lw_node *h = &m->nodes[m->hazards[hz[i]]];
        double goal = a.goal_set ? a.goal : h->tolerable;
        lw_error err = LW_ERROR_INIT;
        lw_target *t = NULL;
        lw_status st = lw_target_run(m, variant, hz[i], goal, &a.opt, &t,
                                     &err);
        if (st != LW_OK) {
            cli_print_errors(&err);
            lw_error_clear(&err);
            rc = cli_exit_code(st);
            ok = 0;
            break;
        }
        if (a.format == FMT_JSON)
            json_array_append_new(arr, lw_target_json(m, t));
        else if (a.format == FMT_CSV)
            lw_render_target_csv(sink.fp, m, t, i == 0);
        else {
            if (i)
                fputc('\n', sink.fp);
            lw_render_target_text(sink.fp, m, t);
        }
        lw_target_free(t);
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
