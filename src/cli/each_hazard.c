/* each_hazard.c - run one question for each selected hazard and write the
 * results as text, JSON or CSV: the loop every per-hazard command shares. */
#include "cli/cli.h"

#include "layerwise/alloc.h"
#include "layerwise/jsonw.h"
#include "layerwise/render.h"
#include "layerwise/uncertainty.h"

int cli_each_hazard(const cli_args *a, const lw_model *m,
                    const cli_hazard_ops *ops, void *ctx)
{
    size_t *hz = lw_malloc((m->nhazards + 1) * sizeof *hz), nh = 0;
    if (!hz) {
        fprintf(stderr, "layerwise: out of memory\n");
        return EXIT_INVALID;
    }
    int rc = cli_hazards(a, m, hz, &nh);
    cli_sink sink;
    if (!rc)
        rc = cli_sink_open(&sink, a->output);
    if (rc) {
        lw_free(hz);
        return rc;
    }
    bool streamed = a->format == FMT_JSON && ops->stream_json;
    json_t *arr = a->format == FMT_JSON && !streamed ? json_array() : NULL;
    lw_jw *jw = streamed ? lw_malloc(sizeof *jw) : NULL;
    int ok = !(a->format == FMT_JSON && !arr && !jw);
    if (jw) {
        lw_jw_init(jw, sink.fp);
        if (nh > 1) {
            lw_jw_begin_object(jw);
            lw_jw_key(jw, "hazards");
            lw_jw_begin_array(jw);
        }
    }
    for (size_t i = 0; i < nh && ok; i++) {
        lw_error err = LW_ERROR_INIT;
        void *res = NULL;
        lw_status st = ops->run(ctx, hz[i], &res, &err);
        if (st != LW_OK) {
            fprintf(stderr, "layerwise: %s: hazard \"%s\":\n", m->file,
                    m->nodes[m->hazards[hz[i]]].id);
            cli_print_errors(&err);
            lw_error_clear(&err);
            rc = cli_exit_code(st);
            ok = 0;
            break;
        }
        lw_error_clear(&err);
        if (jw) {
            ops->stream_json(jw, m, res);
        } else if (arr) {
            json_t *o = ops->json(m, res);
            if (!o || json_array_append_new(arr, o) != 0)
                ok = 0, rc = EXIT_INVALID;
        } else if (a->format == FMT_CSV && ops->csv) {
            ops->csv(ctx, sink.fp, m, res, i == 0);
        } else {
            if (i)
                fputs(ops->separator ? ops->separator : "\n", sink.fp);
            ops->text(ctx, sink.fp, m, res);
        }
        ops->free(res);
    }
    if (ok && jw && nh > 1) {
        lw_jw_end_array(jw);
        lw_jw_key(jw, "caution");
        lw_jw_string(jw, lw_caution());
        lw_jw_end_object(jw);
    } else if (ok && arr) {
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
    } else if (ok && a->format == FMT_TEXT && !ops->no_caution) {
        lw_text_caution(sink.fp);
    }
    if (ok && ferror(sink.fp)) {
        fprintf(stderr, "layerwise: writing the output failed\n");
        ok = 0;
        rc = EXIT_INVALID;
    }
    json_decref(arr);
    lw_free(jw);
    int crc = cli_sink_close(&sink, ok);
    if (!rc)
        rc = crc;
    lw_free(hz);
    return rc;
}

int cli_mc_options(const cli_args *a, lw_mc_options *mc)
{
    lw_mc_options_init(mc);
    if (a->samples_set)
        mc->samples = a->samples;
    if (mc->samples < 2) {
        fprintf(stderr, "layerwise: --samples needs at least 2\n");
        return EXIT_USAGE;
    }
    mc->seed = (uint64_t)a->seed;
    mc->threads = a->threads;
    return 0;
}
