/* args.c - option parsing and the plumbing every command shares. */
#define _GNU_SOURCE
#include "cli/cli.h"

#include <errno.h>
#include <getopt.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "common/numparse.h"

enum {
    K_HAZARD = 1000, K_VARIANT, K_FORMAT, K_TABLE, K_MAX_NODES, K_MAX_BYTES,
    K_MAX_EVENTS, K_MAX_DEPTH, K_TOP, K_CUTOFF, K_MAX_ORDER, K_GOAL, K_SAMPLES, K_SEED,
    K_THREADS, K_EVENT, K_FROM, K_TO, K_STEPS, K_LOGSCALE, K_FAILED, K_HELD,
    K_LOG, K_HELP
};

static const struct option long_opts[] = {
    {"hazard", required_argument, NULL, K_HAZARD},
    {"variant", required_argument, NULL, K_VARIANT},
    {"format", required_argument, NULL, K_FORMAT},
    {"table", required_argument, NULL, K_TABLE},
    {"max-nodes", required_argument, NULL, K_MAX_NODES},
    {"max-bytes", required_argument, NULL, K_MAX_BYTES},
    {"max-events", required_argument, NULL, K_MAX_EVENTS},
    {"max-depth", required_argument, NULL, K_MAX_DEPTH},
    {"top", required_argument, NULL, K_TOP},
    {"cutoff", required_argument, NULL, K_CUTOFF},
    {"max-order", required_argument, NULL, K_MAX_ORDER},
    {"goal", required_argument, NULL, K_GOAL},
    {"samples", required_argument, NULL, K_SAMPLES},
    {"seed", required_argument, NULL, K_SEED},
    {"threads", required_argument, NULL, K_THREADS},
    {"event", required_argument, NULL, K_EVENT},
    {"from", required_argument, NULL, K_FROM},
    {"to", required_argument, NULL, K_TO},
    {"steps", required_argument, NULL, K_STEPS},
    {"log-scale", no_argument, NULL, K_LOGSCALE},
    {"failed", required_argument, NULL, K_FAILED},
    {"held", required_argument, NULL, K_HELD},
    {"log", optional_argument, NULL, K_LOG},
    {"output", required_argument, NULL, 'o'},
    {"help", no_argument, NULL, K_HELP},
    {NULL, 0, NULL, 0}
};

static int usage(const char *fmt, const char *arg)
{
    fprintf(stderr, "layerwise: ");
    fprintf(stderr, fmt, arg);
    fprintf(stderr, "\n(try --help)\n");
    return EXIT_USAGE;
}

static int parse_count(const char *name, const char *s, size_t *out)
{
    double v;
    if (lw_parse_number(s, &v) != 0 || v < 0 || v != (double)(size_t)v)
        return usage("%s needs a whole number", name);
    *out = (size_t)v;
    return 0;
}

static int parse_prob(const char *name, const char *s, double *out)
{
    if (lw_parse_number(s, out) != 0 || *out < 0 || *out > 1)
        return usage("%s needs a probability between 0 and 1", name);
    return 0;
}

static int parse_real(const char *name, const char *s, double *out)
{
    if (lw_parse_number(s, out) != 0)
        return usage("%s needs a finite decimal number", name);
    return 0;
}

static unsigned needs(int key)
{
    switch (key) {
    case K_HAZARD: return OPT_HAZARD;
    case K_VARIANT: return OPT_VARIANT;
    case K_FORMAT: return OPT_FORMAT;
    case 'o': return OPT_OUTPUT;
    case K_TOP: case K_CUTOFF: case K_MAX_ORDER:
        return OPT_CUTS;
    case K_TABLE: return OPT_CUTS | OPT_LOG;
    case K_GOAL: return OPT_GOAL;
    case K_SAMPLES: case K_SEED: case K_THREADS: return OPT_MC;
    case K_EVENT: case K_FROM: case K_TO: case K_STEPS: case K_LOGSCALE:
        return OPT_SWEEP;
    case K_FAILED: case K_HELD: return OPT_INCIDENT;
    case K_LOG: return OPT_LOG | OPT_SWEEP;   /* sweep: --log = log steps */
    default: return 0;      /* limits and --help: every command */
    }
}

int cli_parse(int argc, char **argv, unsigned accept, const char *help,
              cli_args *a)
{
    memset(a, 0, sizeof *a);
    lw_options_init(&a->opt);
    a->format = FMT_TEXT;
    a->threads = 1;
    a->steps = 21;
    a->seed = 1;
    /* "--log FILE" (learn) must become "--log=FILE": getopt's optional
     * argument needs '=', and sweep's "--log" is a flag */
    static char *argbuf[256];
    static char logbuf[4096];
    if (argc > 255)
        return usage("%s", "too many arguments");
    int n = 0;
    for (int i = 0; i < argc; i++) {
        if (!(accept & OPT_SWEEP) && !strcmp(argv[i], "--log") &&
            i + 1 < argc) {
            snprintf(logbuf, sizeof logbuf, "--log=%s", argv[i + 1]);
            argbuf[n++] = logbuf;
            i++;
        } else {
            argbuf[n++] = argv[i];
        }
    }
    argbuf[n] = NULL;
    argc = n;
    argv = argbuf;
    optind = 1;
    opterr = 0;
    int c;
    while ((c = getopt_long(argc, argv, "o:h", long_opts, NULL)) != -1) {
        if (c == 'h' || c == K_HELP) {
            fputs(help, stdout);
            return -1;
        }
        if (c == '?' || c == ':') {
            if (optopt && optopt < 256)
                return usage("unknown or incomplete option -%c",
                             (char[]){(char)optopt, 0});
            return usage("unknown or incomplete option %s", argv[optind - 1]);
        }
        unsigned need = needs(c);
        if (need && !(accept & need))
            return usage("this command does not take %s", argv[optind - 1]);
        double d;
        switch (c) {
        case K_HAZARD: a->hazard = optarg; break;
        case K_VARIANT:
            if (a->nvariants == CLI_MAX_VARIANTS)
                return usage("at most %s variants at once", "32");
            a->variants[a->nvariants++] = optarg;
            break;
        case K_FORMAT:
            if (!strcmp(optarg, "text")) a->format = FMT_TEXT;
            else if (!strcmp(optarg, "json")) a->format = FMT_JSON;
            else if (!strcmp(optarg, "csv") && (accept & OPT_CSV))
                a->format = FMT_CSV;
            else
                return usage("--format takes %s", (accept & OPT_CSV)
                             ? "text, json or csv" : "text or json");
            break;
        case K_TABLE:
            if ((accept & OPT_LOG) ? strcmp(optarg, "layers") &&
                                         strcmp(optarg, "together")
                                   : strcmp(optarg, "cut-sets") &&
                                         strcmp(optarg, "importance"))
                return usage("--table takes %s", (accept & OPT_LOG)
                             ? "layers or together"
                             : "cut-sets or importance");
            a->table = optarg;
            break;
        case 'o': a->output = optarg; break;
        case K_MAX_NODES:
            if (parse_count("--max-nodes", optarg, &a->opt.max_nodes))
                return EXIT_USAGE;
            if (a->opt.max_nodes < 16)
                return usage("--max-nodes needs at least %s", "16");
            break;
        case K_MAX_BYTES:
            if (parse_count("--max-bytes", optarg, &a->limits.max_bytes))
                return EXIT_USAGE;
            break;
        case K_MAX_EVENTS:
            if (parse_count("--max-events", optarg, &a->limits.max_nodes))
                return EXIT_USAGE;
            break;
        case K_MAX_DEPTH: {
            size_t depth = 0;
            if (parse_count("--max-depth", optarg, &depth))
                return EXIT_USAGE;
            if (depth < 2 || depth > LW_MAX_DEPTH_LIMIT)
                return usage("--max-depth needs a number from 2 to %s",
                             LW_MAX_DEPTH_LIMIT_TEXT);
            a->limits.max_depth = (unsigned)depth;
            break;
        }
        case K_TOP:
            if (parse_count("--top", optarg, &a->opt.top))
                return EXIT_USAGE;
            a->top_set = true;
            break;
        case K_CUTOFF:
            if (parse_prob("--cutoff", optarg, &a->opt.cutoff))
                return EXIT_USAGE;
            break;
        case K_MAX_ORDER:
            if (parse_count("--max-order", optarg, &a->opt.max_order))
                return EXIT_USAGE;
            break;
        case K_GOAL:
            if (parse_prob("--goal", optarg, &a->goal))
                return EXIT_USAGE;
            a->goal_set = true;
            break;
        case K_SAMPLES:
            if (parse_count("--samples", optarg, &a->samples))
                return EXIT_USAGE;
            a->samples_set = true;
            break;
        case K_SEED: {
            char *end = NULL;
            errno = 0;
            a->seed = strtoull(optarg, &end, 10);
            if (errno || !end || *end || optarg[0] == '-')
                return usage("--seed needs a whole number, not %s", optarg);
            break;
        }
        case K_THREADS: {
            size_t t;
            if (parse_count("--threads", optarg, &t) || t < 1 || t > 256)
                return usage("--threads needs %s", "1 to 256");
            a->threads = (int)t;
            break;
        }
        case K_EVENT: a->event = optarg; break;
        case K_FROM:
            if (parse_real("--from", optarg, &d)) return EXIT_USAGE;
            a->from = d;
            a->from_set = true;
            break;
        case K_TO:
            if (parse_real("--to", optarg, &d)) return EXIT_USAGE;
            a->to = d;
            a->to_set = true;
            break;
        case K_STEPS:
            if (parse_count("--steps", optarg, &a->steps) || a->steps < 2)
                return usage("--steps needs %s", "a whole number >= 2");
            break;
        case K_LOGSCALE: a->log_scale = true; break;
        case K_FAILED: a->failed = optarg; break;
        case K_HELD: a->held = optarg; break;
        case K_LOG:
            if (optarg) {
                a->log_path = optarg;
            } else if (accept & OPT_SWEEP) {
                a->log_scale = true;    /* sweep --log: logarithmic steps */
            } else {
                return usage("%s needs a file", "--log");
            }
            break;
        default:
            return usage("unknown option %s", argv[optind - 1]);
        }
    }
    if (optind >= argc)
        return usage("%s", "no model given: name an XML file, or - for "
                     "standard input");
    if (optind + 1 < argc)
        return usage("one model at a time; unexpected %s", argv[optind + 1]);
    a->model = argv[optind];
    cli_note_input(0, a->model);
    cli_note_input(1, a->log_path);
    if (a->format == FMT_CSV && (accept & OPT_CUTS) == 0 && !(accept & OPT_CSV))
        return usage("%s", "csv is not available for this command");
    return 0;
}

void cli_print_errors(const lw_error *err)
{
    for (size_t i = 0; i < err->count; i++) {
        const lw_diag *d = &err->items[i];
        if (d->file && d->line > 0)
            fprintf(stderr, "layerwise: %s:%ld: %s\n", d->file, d->line,
                    d->message);
        else if (d->file)
            fprintf(stderr, "layerwise: %s: %s\n", d->file, d->message);
        else
            fprintf(stderr, "layerwise: %s\n", d->message);
    }
    if (err->dropped)
        fprintf(stderr, "layerwise: ... and %zu more problems\n",
                err->dropped);
    if (err->oom || (err->code == LW_ENOMEM && err->count == 0))
        fprintf(stderr, "layerwise: out of memory\n");
}

int cli_exit_code(lw_status st)
{
    switch (st) {
    case LW_OK: return EXIT_DONE;
    case LW_EUSAGE: return EXIT_USAGE;
    default: return EXIT_INVALID;
    }
}

int cli_load(const cli_args *a, lw_model **m)
{
    lw_error err = LW_ERROR_INIT;
    lw_status st = lw_model_load_file(a->model, &a->limits, m, &err);
    if (st != LW_OK) {
        cli_print_errors(&err);
        if (err.count == 0 && !err.oom)
            fprintf(stderr, "layerwise: %s: %s\n", a->model,
                    lw_status_name(st));
    }
    lw_error_clear(&err);
    return st == LW_OK ? 0 : cli_exit_code(st);
}

int cli_hazards(const cli_args *a, const lw_model *m, size_t *list,
                size_t *n)
{
    *n = 0;
    if (a->hazard) {
        size_t h = lw_model_find_hazard(m, a->hazard);
        if (h == LW_NONE) {
            fprintf(stderr, "layerwise: %s: no hazard \"%s\"; the model's "
                    "hazards are:", m->file, a->hazard);
            for (size_t i = 0; i < m->nhazards; i++)
                fprintf(stderr, " %s", m->nodes[m->hazards[i]].id);
            fputc('\n', stderr);
            return EXIT_USAGE;
        }
        list[(*n)++] = h;
        return 0;
    }
    for (size_t i = 0; i < m->nhazards; i++)
        list[(*n)++] = i;
    return 0;
}

int cli_variant(const lw_model *m, const char *id, size_t *out)
{
    *out = LW_NONE;
    if (!id)
        return 0;
    size_t v = lw_model_find_variant(m, id);
    if (v == LW_NONE) {
        fprintf(stderr, "layerwise: %s: no variant \"%s\"", m->file, id);
        if (m->nvariants) {
            fputs("; the model's variants are:", stderr);
            for (size_t i = 0; i < m->nvariants; i++)
                fprintf(stderr, " %s", m->variants[i].id);
        }
        fputc('\n', stderr);
        return EXIT_USAGE;
    }
    *out = v;
    return 0;
}

/* The model (and log) named on the command line: an output must never
 * replace them. */
static const char *g_inputs[2];

void cli_note_input(int slot, const char *path)
{
    if (slot >= 0 && slot < 2)
        g_inputs[slot] = path;
}

/* Is 'out' the same file as an input (same device and inode)? */
static const char *is_an_input(const char *out)
{
    struct stat so, si;
    if (stat(out, &so) != 0)
        return NULL;
    for (int i = 0; i < 2; i++)
        if (g_inputs[i] && strcmp(g_inputs[i], "-") &&
            stat(g_inputs[i], &si) == 0 && si.st_dev == so.st_dev &&
            si.st_ino == so.st_ino)
            return g_inputs[i];
    return NULL;
}

int cli_sink_open(cli_sink *s, const char *path)
{
    memset(s, 0, sizeof *s);
    if (!path || !strcmp(path, "-")) {
        s->fp = stdout;
        return 0;
    }
    const char *in = is_an_input(path);
    if (in) {
        fprintf(stderr, "layerwise: %s: -o names an input file (%s); "
                "inputs are never overwritten, choose another output\n",
                path, in);
        return EXIT_USAGE;
    }
    lw_error err = LW_ERROR_INIT;
    if (lw_out_open(&s->file, path, &err) != LW_OK) {
        cli_print_errors(&err);
        lw_error_clear(&err);
        return EXIT_INVALID;
    }
    s->fp = s->file.fp;
    s->to_file = true;
    return 0;
}

int cli_sink_close(cli_sink *s, int ok)
{
    if (!s->to_file) {
        /* a full disk, a closed pipe: say so (unless the caller already
         * reported its own failure) */
        if (fflush(stdout) != 0 || ferror(stdout)) {
            if (ok)
                fprintf(stderr, "layerwise: writing the output failed "
                        "(%s)\n", strerror(errno));
            return EXIT_INVALID;
        }
        return 0;
    }
    if (!ok) {
        lw_out_abort(&s->file);
        return 0;
    }
    lw_error err = LW_ERROR_INIT;
    lw_status st = lw_out_commit(&s->file, &err);
    if (st != LW_OK)
        cli_print_errors(&err);
    lw_error_clear(&err);
    return st == LW_OK ? 0 : EXIT_INVALID;
}
