/* cmd_check.c - layerwise check: load, validate, summarise. */
#include <string.h>

#include "cli/cli.h"
#include "layerwise/render.h"

static const char help[] =
    "usage: layerwise check [options] MODEL.xml\n"
    "\n"
    "Load and validate a model: its structure against the model schema and\n"
    "its rules (ids, references, cycles, ranges, groups, dependences,\n"
    "variants).  Prints a summary, or every problem as FILE:LINE: message.\n"
    "\n"
    "options:\n"
    "  --format text|json   output format (default text)\n"
    "  --max-bytes N        largest model file read (default 64 MiB)\n"
    "  --max-events N       most events and gates (default 5,000,000)\n"
    "  --max-depth N        deepest element nesting (default 256, at most "
    "100000)\n"
    "\n"
    "exit status: 0 valid, 1 invalid, 2 usage error\n";

int cmd_check(int argc, char **argv)
{
    cli_args a;
    int rc = cli_parse(argc, argv, OPT_FORMAT, help, &a);
    if (rc)
        return rc < 0 ? EXIT_DONE : rc;
    lw_model *m = NULL;
    rc = cli_load(&a, &m);
    if (rc)
        return rc;
    size_t count[8] = {0};
    for (size_t i = 0; i < m->nnodes; i++)
        count[m->nodes[i].kind]++;
    if (a.format == FMT_JSON) {
        json_t *o = json_object();
        json_object_set_new(o, "valid", json_true());
        json_object_set_new(o, "id", json_string(m->id));
        json_object_set_new(o, "title", m->title ? json_string(m->title)
                                                 : json_null());
        json_object_set_new(o, "errors", json_integer((json_int_t)count[0]));
        json_object_set_new(o, "safeguards",
                            json_integer((json_int_t)count[1]));
        json_object_set_new(o, "conditions",
                            json_integer((json_int_t)count[2]));
        json_object_set_new(o, "gates", json_integer((json_int_t)(
                                count[3] + count[4] + count[5])));
        json_object_set_new(o, "blocks", json_integer((json_int_t)count[6]));
        json_t *hz = json_array();
        for (size_t i = 0; i < m->nhazards; i++)
            json_array_append_new(hz, json_string(m->nodes[m->hazards[i]].id));
        json_object_set_new(o, "hazards", hz);
        json_t *vs = json_array();
        for (size_t i = 0; i < m->nvariants; i++)
            json_array_append_new(vs, json_string(m->variants[i].id));
        json_object_set_new(o, "variants", vs);
        json_object_set_new(o, "common_cause_groups",
                            json_integer((json_int_t)m->ngroups));
        json_object_set_new(o, "dependences",
                            json_integer((json_int_t)m->ndeps));
        json_object_set_new(o, "warnings", lw_json_warnings(m));
        json_object_set_new(o, "caution", json_string(lw_caution()));
        rc = lw_json_write(stdout, o) ? EXIT_INVALID : EXIT_DONE;
    } else {
        printf("%s: valid model \"%s\"%s%s\n", m->file, m->id,
               m->title ? ": " : "", m->title ? m->title : "");
        printf("  %zu errors, %zu safeguards, %zu conditions\n", count[0],
               count[1], count[2]);
        printf("  %zu gates, %zu blocks, %zu common-cause groups, "
               "%zu dependences\n", count[3] + count[4] + count[5],
               count[6], m->ngroups, m->ndeps);
        printf("  hazards:");
        for (size_t i = 0; i < m->nhazards; i++)
            printf(" %s", m->nodes[m->hazards[i]].id);
        printf("\n  variants:");
        if (!m->nvariants)
            printf(" (none)");
        for (size_t i = 0; i < m->nvariants; i++)
            printf(" %s", m->variants[i].id);
        printf("\n");
        if (m->has_exposure)
            printf("  exposure: %g %s a year\n", m->per_year,
                   m->exposure_unit ? m->exposure_unit : "units");
        for (size_t i = 0; i < m->nwarnings; i++)
            printf("warning: %s\n", m->warnings[i]);
        lw_text_caution(stdout);
        rc = EXIT_DONE;
    }
    if (fflush(stdout) != 0 || ferror(stdout)) {
        fprintf(stderr, "layerwise: writing the output failed\n");
        rc = EXIT_INVALID;
    }
    lw_model_free(m);
    return rc;
}
