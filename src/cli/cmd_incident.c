/* cmd_incident.c - layerwise incident: what an observed chain of misses
 * completes, what still stood, and how likely the chain was. */
#include <ctype.h>
#include <string.h>

#include "cli/cli.h"
#include "layerwise/alloc.h"
#include "layerwise/incident.h"
#include "layerwise/render_incident.h"

static const char help[] =
    "usage: layerwise incident --failed ID,ID [--held ID,ID] [options] "
    "MODEL.xml\n"
    "\n"
    "After an incident or a near miss: the events that happened (--failed)\n"
    "and the layers that caught it or were seen to work (--held) are set on\n"
    "the model, and layerwise reports the chance of the hazard given that\n"
    "observation (exact, with common causes and dependences), the chains\n"
    "(minimal cut sets) the observed misses completed, those one miss away\n"
    "and which event would complete them, the layers that stood, and which\n"
    "of the model's assumptions the observation strains.\n"
    "\n"
    "options:\n"
    "  --failed ID,ID       errors that happened and safeguards that missed\n"
    "  --held ID,ID         safeguards (or errors) seen NOT to have failed\n"
    "  --hazard ID          one hazard (default: every hazard)\n"
    "  --variant ID         apply a variant of the model first\n"
    "  --format text|json   output\n"
    "  -o FILE              write to FILE (atomically) instead of stdout\n"
    "  --max-nodes N        decision-diagram node limit\n"
    "  --max-bytes N, --max-events N   input limits (see check --help)\n"
    "\n"
    "exit status: 0 done, 1 invalid model or impossible observation,\n"
    "2 usage (unknown id, an id both failed and held)\n";

/* Split "a, b,c" into trimmed non-empty ids (pointers into 'buf'). */
static size_t split_ids(char *buf, const char **ids, size_t max)
{
    size_t n = 0;
    char *s = buf;
    while (s && *s) {
        char *comma = strchr(s, ',');
        if (comma)
            *comma = '\0';
        while (isspace((unsigned char)*s))
            s++;
        size_t len = strlen(s);
        while (len && isspace((unsigned char)s[len - 1]))
            s[--len] = '\0';
        if (len && n < max)
            ids[n++] = s;
        s = comma ? comma + 1 : NULL;
    }
    return n;
}

int cmd_incident(int argc, char **argv)
{
    cli_args a;
    int rc = cli_parse(argc, argv, OPT_HAZARD | OPT_VARIANT | OPT_FORMAT |
                       OPT_OUTPUT | OPT_INCIDENT, help, &a);
    if (rc)
        return rc < 0 ? EXIT_DONE : rc;
    if (a.nvariants > 1) {
        fprintf(stderr, "layerwise: incident takes one --variant\n");
        return EXIT_USAGE;
    }
    if (!a.failed) {
        fprintf(stderr, "layerwise: incident needs --failed ID,ID: the "
                "events that happened and the safeguards that missed\n"
                "(try --help)\n");
        return EXIT_USAGE;
    }
    char *fbuf = lw_strdup(a.failed);
    char *hbuf = lw_strdup(a.held ? a.held : "");
    size_t maxn = strlen(a.failed) + (a.held ? strlen(a.held) : 0) + 2;
    const char **fids = lw_malloc(maxn * sizeof *fids);
    const char **hids = lw_malloc(maxn * sizeof *hids);
    lw_model *m = NULL;
    size_t *hz = NULL, *fn = NULL, *hn = NULL;
    if (!fbuf || !hbuf || !fids || !hids) {
        fprintf(stderr, "layerwise: out of memory\n");
        rc = EXIT_INVALID;
        goto out;
    }
    size_t nf = split_ids(fbuf, fids, maxn);
    size_t nh = split_ids(hbuf, hids, maxn);
    if (nf == 0) {
        fprintf(stderr, "layerwise: --failed names no event\n(try --help)\n");
        rc = EXIT_USAGE;
        goto out;
    }
    rc = cli_load(&a, &m);
    if (rc)
        goto out;
    /* check the ids once, before any hazard is analysed */
    fn = lw_malloc((nf + 1) * sizeof *fn);
    hn = lw_malloc((nh + 1) * sizeof *hn);
    hz = lw_malloc((m->nhazards + 1) * sizeof *hz);
    if (!fn || !hn || !hz) {
        fprintf(stderr, "layerwise: out of memory\n");
        rc = EXIT_INVALID;
        goto out;
    }
    lw_error err = LW_ERROR_INIT;
    lw_status s1 = lw_incident_resolve(m, "--failed", fids, nf, fn, &err);
    lw_status s2 = lw_incident_resolve(m, "--held", hids, nh, hn, &err);
    for (size_t j = 0; s1 == LW_OK && s2 == LW_OK && j < nh; j++)
        for (size_t i = 0; i < nf; i++)
            if (fn[i] == hn[j]) {
                s2 = lw_error_set(&err, LW_EUSAGE, m->file, 0, "\"%s\" is "
                                  "listed both in --failed and in --held; "
                                  "an event either happened or it did not",
                                  hids[j]);
                break;
            }
    if (s1 != LW_OK || s2 != LW_OK) {
        cli_print_errors(&err);
        lw_error_clear(&err);
        rc = cli_exit_code(s1 != LW_OK ? s1 : s2);
        goto out;
    }
    lw_error_clear(&err);
    size_t variant = LW_NONE, nhz = 0;
    rc = cli_variant(m, a.nvariants ? a.variants[0] : NULL, &variant);
    if (!rc)
        rc = cli_hazards(&a, m, hz, &nhz);
    cli_sink sink;
    if (!rc)
        rc = cli_sink_open(&sink, a.output);
    if (rc)
        goto out;
    json_t *arr = a.format == FMT_JSON ? json_array() : NULL;
    int ok = 1;
    for (size_t i = 0; i < nhz && ok; i++) {
        lw_incident *res = NULL;
        lw_error e = LW_ERROR_INIT;
        lw_status st = lw_incident_run(m, variant, hz[i], fids, nf, hids, nh,
                                       &a.opt, &res, &e);
        if (st != LW_OK) {
            fprintf(stderr, "layerwise: %s: hazard \"%s\":\n", m->file,
                    m->nodes[m->hazards[hz[i]]].id);
            cli_print_errors(&e);
            lw_error_clear(&e);
            rc = cli_exit_code(st);
            ok = 0;
            break;
        }
        lw_error_clear(&e);
        if (a.format == FMT_JSON) {
            json_array_append_new(arr, lw_incident_json(m, res));
        } else {
            if (i)
                fputs("\n\n", sink.fp);
            lw_render_incident_text(sink.fp, m, res, 20);
        }
        lw_incident_free(res);
    }
    if (ok && a.format == FMT_JSON) {
        json_t *doc;
        if (nhz == 1) {
            doc = json_incref(json_array_get(arr, 0));
        } else {
            doc = json_object();
            json_object_set(doc, "hazards", arr);
            json_object_set_new(doc, "caution", json_string(lw_caution()));
        }
        if (lw_json_write(sink.fp, doc))
            ok = 0, rc = EXIT_INVALID;
    }
    json_decref(arr);
    int crc = cli_sink_close(&sink, ok);
    if (!rc)
        rc = crc;
out:
    lw_free(fbuf);
    lw_free(hbuf);
    lw_free(fids);
    lw_free(hids);
    lw_free(fn);
    lw_free(hn);
    lw_free(hz);
    lw_model_free(m);
    return rc;
}
