/* cmd_learn.c - layerwise learn: safeguard estimates and layers that miss
 * together, from a near-miss / incident log; -o writes an updated model. */
#define _POSIX_C_SOURCE 200809L
#include <errno.h>
#include <string.h>
#include <sys/stat.h>

#include "cli/cli.h"
#include "layerwise/alloc.h"
#include "layerwise/learn.h"
#include "layerwise/render_incident.h"

static const char help[] =
    "usage: layerwise learn --log LOG.csv [-o NEW.xml] [options] MODEL.xml\n"
    "\n"
    "Reads a near-miss / incident log (CSV with the header row\n"
    "date,error,missed,caught_by,note; missed is ;-separated) and, for each\n"
    "safeguard it mentions, counts how often an error reached it and how\n"
    "often it missed; adds the model's own audit counts; and reports the\n"
    "estimate and its exact 95 % interval.  For pairs of safeguards it tests\n"
    "whether the second misses more often after the first missed than the\n"
    "model expects, and suggests the THERP dependence level closest to the\n"
    "log.  Any bad row stops everything, naming LOG:LINE.\n"
    "\n"
    "options:\n"
    "  --log LOG.csv        the log (- for standard input)\n"
    "  -o NEW.xml           also write the model with the updated counts\n"
    "                       (atomically; never the input model itself)\n"
    "  --format text|json|csv   the report on standard output (csv: the\n"
    "                       layers table; --table together: the pairs)\n"
    "  --max-bytes N, --max-events N, --max-depth N   input limits (see\n"
    "                       check --help)\n"
    "\n"
    "exit status: 0 done, 1 invalid model or log (nothing written), 2 usage\n";

/* Do two paths name the same file (or the same string)? */
static int same_file(const char *a, const char *b)
{
    if (!strcmp(a, b))
        return 1;
    struct stat sa, sb;
    if (stat(a, &sa) != 0 || stat(b, &sb) != 0)
        return 0;
    return sa.st_dev == sb.st_dev && sa.st_ino == sb.st_ino;
}

int cmd_learn(int argc, char **argv)
{
    cli_args a;
    int rc = cli_parse(argc, argv, OPT_FORMAT | OPT_CSV | OPT_LOG |
                       OPT_OUTPUT, help, &a);
    if (rc)
        return rc < 0 ? EXIT_DONE : rc;
    if (!a.log_path || !a.log_path[0]) {
        fprintf(stderr, "layerwise: learn needs --log LOG.csv\n(try "
                "--help)\n");
        return EXIT_USAGE;
    }
    if (!strcmp(a.model, "-") && !strcmp(a.log_path, "-")) {
        fprintf(stderr, "layerwise: the model and the log cannot both come "
                "from standard input\n");
        return EXIT_USAGE;
    }
    if (a.output && (!strcmp(a.output, "-") ||
                     (strcmp(a.model, "-") && same_file(a.output, a.model)) ||
                     (strcmp(a.log_path, "-") &&
                      same_file(a.output, a.log_path)))) {
        fprintf(stderr, "layerwise: -o %s names %s; learn never modifies "
                "its inputs: write the updated model to a new file\n",
                a.output, !strcmp(a.output, "-") ? "standard output (the "
                "report goes there)" : "an input");
        return EXIT_USAGE;
    }
    char *xml = NULL;
    size_t len = 0;
    lw_model *m = NULL;
    lw_learn *l = NULL;
    char *updated = NULL;
    size_t ulen = 0;
    lw_error err = LW_ERROR_INIT;
    lw_status st = lw_read_all(a.model, a.limits.max_bytes, &xml, &len, &err);
    if (st == LW_OK)
        st = lw_model_load_memory(xml, len, a.model, &a.limits, &m, &err);
    if (st == LW_OK)
        st = lw_learn_file(m, a.log_path, &l, &err);
    if (st == LW_OK && a.output)
        st = lw_learn_update_model(xml, len, a.model, m, l, &updated, &ulen,
                                   &err);
    if (st != LW_OK) {
        cli_print_errors(&err);
        if (err.count == 0 && !err.oom)
            fprintf(stderr, "layerwise: %s\n", lw_status_name(st));
        rc = cli_exit_code(st);
        goto out;
    }
    if (a.output) {
        lw_out o;
        st = lw_out_open(&o, a.output, &err);
        if (st == LW_OK) {
            if (fwrite(updated, 1, ulen, o.fp) != ulen) {
                lw_out_abort(&o);
                st = lw_error_set(&err, LW_EIO, a.output, 0, "writing "
                                  "failed; nothing was written");
            } else {
                st = lw_out_commit(&o, &err);
            }
        }
        if (st != LW_OK) {
            cli_print_errors(&err);
            rc = EXIT_INVALID;
            goto out;
        }
    }
    if (a.format == FMT_JSON) {
        if (lw_json_write(stdout, lw_learn_json(m, l)))
            rc = EXIT_INVALID;
    } else if (a.format == FMT_CSV) {
        lw_render_learn_csv(stdout, m, l,
                            a.table && !strcmp(a.table, "together"));
    } else {
        lw_render_learn_text(stdout, m, l);
        if (a.output)
            printf("\nWrote the updated model to %s.\n", a.output);
    }
    if (fflush(stdout) != 0 || ferror(stdout)) {
        fprintf(stderr, "layerwise: writing the output failed (%s)\n",
                strerror(errno));
        rc = EXIT_INVALID;
    }
out:
    lw_error_clear(&err);
    lw_free(updated);
    lw_learn_free(l);
    lw_model_free(m);
    lw_free(xml);
    return rc;
}
