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
    "  --max-bytes N, --max-events N, --max-depth N   input limits (see\n"
    "                       check --help)\n"
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

typedef struct incident_ctx {
    const lw_model *m;
    size_t variant;
    const cli_args *a;
    const char **failed;
    size_t nfailed;
    const char **held;
    size_t nheld;
} incident_ctx;

static lw_status run(void *ctx, size_t hazard, void **res, lw_error *err)
{
    incident_ctx *c = ctx;
    return lw_incident_run(c->m, c->variant, hazard, c->failed, c->nfailed,
                           c->held, c->nheld, &c->a->opt,
                           (lw_incident **)res, err);
}

static json_t *json(const lw_model *m, const void *res)
{
    return lw_incident_json(m, res);
}

static void text(void *ctx, FILE *out, const lw_model *m, const void *res)
{
    (void)ctx;
    lw_render_incident_text(out, m, res, 20);
}

static void free_result(void *res) { lw_incident_free(res); }

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
    size_t *fn = NULL, *hn = NULL;
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
    if (!fn || !hn) {
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
    incident_ctx c = {m, LW_NONE, &a, fids, nf, hids, nh};
    rc = cli_variant(m, a.nvariants ? a.variants[0] : NULL, &c.variant);
    if (!rc) {
        static const cli_hazard_ops ops = {
            .run = run, .json = json, .text = text, .free = free_result,
            .separator = "\n\n", .no_caution = true};
        rc = cli_each_hazard(&a, m, &ops, &c);
    }
out:
    lw_free(fbuf);
    lw_free(hbuf);
    lw_free(fids);
    lw_free(hids);
    lw_free(fn);
    lw_free(hn);
    lw_model_free(m);
    return rc;
}
