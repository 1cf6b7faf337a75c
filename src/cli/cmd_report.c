/* cmd_report.c - layerwise report: the committee report as one HTML file. */
#define _POSIX_C_SOURCE 200809L
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "cli/cli.h"
#include "layerwise/alloc.h"
#include "layerwise/report.h"

static const char help[] =
    "usage: layerwise report [options] MODEL.xml -o FILE.html\n"
    "\n"
    "A self-contained report for a risk committee: one HTML file with inline\n"
    "pictures (no scripts, nothing loaded from a network) that opens on any\n"
    "computer and prints cleanly to A4 or Letter. For each hazard: the\n"
    "chance per exposure unit and per year, the tolerable level, the main\n"
    "error paths drawn as layered safeguards, the importance of each layer,\n"
    "the minimal cut sets, the uncertainty histogram and the variants side\n"
    "by side; then every input with its evidence, and the cautions.\n"
    "\n"
    "options:\n"
    "  -o FILE              the HTML file to write (atomically); required\n"
    "  --hazard ID          report one hazard (default: every hazard)\n"
    "  --variant ID         compare this variant (repeatable; default: every\n"
    "                       variant of the model)\n"
    "  --samples N          Monte Carlo samples for the uncertainty and the\n"
    "                       paired comparison (default 10,000; 0 = exact\n"
    "                       point values only)\n"
    "  --seed S             random seed (default 1)\n"
    "  --threads T          worker threads (default 1)\n"
    "  --top N              rows of the cut-set table (default 20)\n"
    "  --cutoff P, --max-order K   leave cut sets out of the table\n"
    "  --max-nodes N        decision-diagram node limit (default 20,000,000)\n"
    "\n"
    "The date printed in the report is now, or SOURCE_DATE_EPOCH when set.\n"
    "\n"
    "exit status: 0 done, 1 invalid model or analysis stopped, 2 usage\n";

static void report_date(char *buf, size_t n)
{
    time_t t = time(NULL);
    const char *sde = getenv("SOURCE_DATE_EPOCH");
    if (sde && *sde) {
        char *end = NULL;
        long long v = strtoll(sde, &end, 10);
        if (end && !*end && v >= 0)
            t = (time_t)v;
    }
    struct tm tm;
    if (gmtime_r(&t, &tm) && strftime(buf, n, "%Y-%m-%d %H:%M UTC", &tm))
        return;
    snprintf(buf, n, "(date unknown)");
}

static const char *base_name(const char *path)
{
    if (!strcmp(path, "-"))
        return "standard input";
    const char *s = strrchr(path, '/');
    return s ? s + 1 : path;
}

int cmd_report(int argc, char **argv)
{
    cli_args a;
    int rc = cli_parse(argc, argv, OPT_HAZARD | OPT_VARIANT | OPT_OUTPUT |
                       OPT_MC | OPT_CUTS, help, &a);
    if (rc)
        return rc < 0 ? EXIT_DONE : rc;
    if (!a.output) {
        fprintf(stderr, "layerwise: report needs -o FILE.html (the report is "
                "written to a file)\n(try --help)\n");
        return EXIT_USAGE;
    }
    if (a.table) {
        fprintf(stderr, "layerwise: report does not take --table\n");
        return EXIT_USAGE;
    }
    if (a.samples_set && a.samples == 1) {
        fprintf(stderr, "layerwise: --samples needs 0 (none) or at least "
                "2\n");
        return EXIT_USAGE;
    }
    lw_model *m = NULL;
    rc = cli_load(&a, &m);
    if (rc)
        return rc;
    size_t *hz = lw_malloc((m->nhazards + 1) * sizeof *hz);
    size_t *vs = lw_malloc((a.nvariants + 1) * sizeof *vs);
    size_t nh = 0;
    if (!hz || !vs) {
        fprintf(stderr, "layerwise: out of memory\n");
        rc = EXIT_INVALID;
        goto done;
    }
    rc = cli_hazards(&a, m, hz, &nh);
    for (size_t i = 0; !rc && i < a.nvariants; i++)
        rc = cli_variant(m, a.variants[i], &vs[i]);
    if (rc)
        goto done;

    lw_report_options ro;
    lw_report_options_init(&ro);
    char date[64];
    report_date(date, sizeof date);
    ro.generated = date;
    ro.source_name = base_name(a.model);
    ro.all_variants = a.nvariants == 0;
    ro.monte_carlo = !(a.samples_set && a.samples == 0);
    ro.samples = a.samples_set ? a.samples : 0;
    ro.seed = a.seed;
    ro.threads = a.threads;
    if (a.top_set && a.opt.top > 0)
        ro.cut_sets = a.opt.top;
    a.opt.top = 0;

    lw_error err = LW_ERROR_INIT;
    lw_report *rep = NULL;
    lw_status st = lw_report_build(m, hz, nh, vs, a.nvariants, &a.opt, &ro,
                                   &rep, &err);
    if (st != LW_OK) {
        cli_print_errors(&err);
        lw_error_clear(&err);
        rc = cli_exit_code(st);
        goto done;
    }
    cli_sink sink;
    rc = cli_sink_open(&sink, a.output);
    if (!rc) {
        st = lw_report_write_html(sink.fp, rep, &err);
        if (st != LW_OK) {
            cli_print_errors(&err);
            rc = cli_exit_code(st);
        }
        int crc = cli_sink_close(&sink, st == LW_OK);
        if (!rc)
            rc = crc;
    }
    lw_error_clear(&err);
    lw_report_free(rep);
done:
    lw_free(vs);
    lw_free(hz);
    lw_model_free(m);
    return rc;
}
