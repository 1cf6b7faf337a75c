/* cmd_diagram.c - layerwise diagram: the tree as a picture. */
#define _POSIX_C_SOURCE 200809L
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli/cli.h"
#include "layerwise/alloc.h"
#include "layerwise/report.h"

static const char help[] =
    "usage: layerwise diagram [options] MODEL.xml -o FILE.svg|FILE.dot\n"
    "\n"
    "The model drawn as a fault tree. Hazards are rectangles at the top;\n"
    "gates show their IEC 61025 mark (& all inputs, >=1 any input, k/n at\n"
    "least k of n); errors and safeguard misses are circles with their\n"
    "probability; conditions are house shapes. A part used in several\n"
    "places is drawn once, with a line to each use. A dependence is a\n"
    "dashed arrow from the first check to the second; members of a\n"
    "common-cause group name their group.\n"
    "\n"
    "FILE.dot is the Graphviz text, written by layerwise itself. FILE.svg\n"
    "is laid out by Graphviz's dot program (Debian package graphviz), run\n"
    "as a separate process. Without -o the DOT text goes to standard\n"
    "output.\n"
    "\n"
    "options:\n"
    "  -o FILE              FILE.svg or FILE.dot (also .gv), written\n"
    "                       atomically\n"
    "  --hazard ID          draw one hazard's tree (default: every hazard)\n"
    "  --variant ID         show the probabilities after a variant\n"
    "\n"
    "exit status: 0 done, 1 invalid model, dot missing or failed, 2 usage\n";

static bool ends_with(const char *s, const char *suffix)
{
    size_t a = strlen(s), b = strlen(suffix);
    if (a < b)
        return false;
    for (size_t i = 0; i < b; i++) {
        char c = s[a - b + i];
        if (c >= 'A' && c <= 'Z')
            c = (char)(c - 'A' + 'a');
        if (c != suffix[i])
            return false;
    }
    return true;
}

int cmd_diagram(int argc, char **argv)
{
    cli_args a;
    int rc = cli_parse(argc, argv, OPT_HAZARD | OPT_VARIANT | OPT_OUTPUT,
                       help, &a);
    if (rc)
        return rc < 0 ? EXIT_DONE : rc;
    if (a.nvariants > 1) {
        fprintf(stderr, "layerwise: diagram takes one --variant\n");
        return EXIT_USAGE;
    }
    bool svg = false;
    if (a.output && strcmp(a.output, "-")) {
        if (ends_with(a.output, ".svg")) {
            svg = true;
        } else if (!ends_with(a.output, ".dot") &&
                   !ends_with(a.output, ".gv")) {
            fprintf(stderr, "layerwise: diagram writes FILE.svg or FILE.dot; "
                    "\"%s\" is neither\n(try --help)\n", a.output);
            return EXIT_USAGE;
        }
    }
    lw_model *m = NULL;
    rc = cli_load(&a, &m);
    if (rc)
        return rc;
    lw_diagram_options dopt = {LW_NONE, LW_NONE};
    rc = cli_variant(m, a.nvariants ? a.variants[0] : NULL, &dopt.variant);
    if (!rc && a.hazard) {
        size_t one = 0, n = 0;
        rc = cli_hazards(&a, m, &one, &n);
        dopt.hazard = one;
    }
    if (rc) {
        lw_model_free(m);
        return rc;
    }

    char *dot = NULL;
    size_t dot_len = 0;
    FILE *mem = open_memstream(&dot, &dot_len);
    if (!mem) {
        fprintf(stderr, "layerwise: out of memory\n");
        lw_model_free(m);
        return EXIT_INVALID;
    }
    lw_error err = LW_ERROR_INIT;
    lw_status st = lw_render_dot(mem, m, &dopt, &err);
    if (fclose(mem) != 0 && st == LW_OK)
        st = lw_error_set(&err, LW_ENOMEM, NULL, 0, "out of memory");
    char *svg_text = NULL;
    size_t svg_len = 0;
    if (st == LW_OK && svg)
        st = lw_dot_to_svg(dot, dot_len, NULL, &svg_text, &svg_len, &err);
    if (st != LW_OK) {
        cli_print_errors(&err);
        rc = cli_exit_code(st);
    } else {
        cli_sink sink;
        rc = cli_sink_open(&sink, a.output);
        if (!rc) {
            const char *data = svg ? svg_text : dot;
            size_t len = svg ? svg_len : dot_len;
            int ok = fwrite(data, 1, len, sink.fp) == len;
            if (!ok)
                fprintf(stderr, "layerwise: writing the output failed "
                        "(%s)\n", strerror(errno));
            rc = cli_sink_close(&sink, ok);
            if (!ok)
                rc = EXIT_INVALID;
        }
    }
    lw_error_clear(&err);
    lw_free(svg_text);
    free(dot);
    lw_model_free(m);
    return rc;
}
