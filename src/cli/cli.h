/*
 * cli.h - the command-line tool: shared option parsing, loading and
 * error printing.  One file per command (cmd_<name>.c) holds its help
 * text and its run function; main.c dispatches.
 *
 * To add a command: write cmd_<name>.c with `int cmd_<name>(int argc,
 * char **argv)`, declare it below, add a row to the table in main.c, and
 * accept the options it needs with the OPT_ bits in cli_parse.
 */
#ifndef LW_CLI_H
#define LW_CLI_H

#include <stdbool.h>
#include <stddef.h>
#include <stdio.h>

#include <jansson.h>

#include "layerwise/analysis.h"
#include "layerwise/error.h"
#include "layerwise/fileio.h"
#include "layerwise/model.h"

enum { EXIT_DONE = 0, EXIT_INVALID = 1, EXIT_USAGE = 2 };

typedef enum cli_format { FMT_TEXT, FMT_JSON, FMT_CSV } cli_format;

/* Options a command accepts (bits for cli_parse). */
enum {
    OPT_HAZARD = 1u << 0,   /* --hazard ID */
    OPT_VARIANT = 1u << 1,  /* --variant ID (repeatable) */
    OPT_FORMAT = 1u << 2,   /* --format text|json[|csv] */
    OPT_CSV = 1u << 3,      /* csv allowed in --format */
    OPT_OUTPUT = 1u << 4,   /* -o FILE */
    OPT_CUTS = 1u << 5,     /* --top --cutoff --max-order --table */
    OPT_GOAL = 1u << 6,     /* --goal P */
    OPT_MC = 1u << 7,       /* --samples --seed --threads */
    OPT_SWEEP = 1u << 8,    /* --event --from --to --steps --log */
    OPT_INCIDENT = 1u << 9, /* --failed --held */
    OPT_LOG = 1u << 10      /* --log FILE */
};

#define CLI_MAX_VARIANTS 32

typedef struct cli_args {
    const char *model;          /* positional MODEL ("-" = stdin) */
    const char *hazard;
    const char *variants[CLI_MAX_VARIANTS];
    size_t nvariants;
    cli_format format;
    const char *table;          /* --table cut-sets|importance */
    const char *output;         /* -o */
    lw_options opt;             /* --max-nodes, --top, --cutoff, ... */
    bool top_set;
    lw_load_limits limits;      /* --max-bytes, --max-events, --max-depth */
    double goal;
    bool goal_set;
    size_t samples;
    bool samples_set;
    unsigned long long seed;
    int threads;
    const char *event;          /* sweep */
    double from, to;
    bool from_set, to_set;
    size_t steps;
    bool log_scale;
    const char *failed, *held;  /* incident */
    const char *log_path;       /* learn --log */
} cli_args;

/* Parse argv (after the command word).  Prints help and returns -1 for
 * --help; prints a usage error and returns EXIT_USAGE on a bad option;
 * 0 when fine.  'accept' is a mask of OPT_ bits. */
int cli_parse(int argc, char **argv, unsigned accept, const char *help,
              cli_args *a);

/* Print every diagnostic as "layerwise: FILE:LINE: message". */
void cli_print_errors(const lw_error *err);
int cli_exit_code(lw_status st);
/* Load the model, printing errors; returns 0 or an exit code. */
int cli_load(const cli_args *a, lw_model **m);
/* Resolve --hazard to a list of hazard indices (all when absent). */
int cli_hazards(const cli_args *a, const lw_model *m, size_t *list,
                size_t *n);
/* Resolve variant i of --variant, or LW_NONE; returns exit code. */
int cli_variant(const lw_model *m, const char *id, size_t *out);
/* Where output goes: stdout or an atomic file. */
typedef struct cli_sink {
    FILE *fp;
    lw_out file;
    bool to_file;
} cli_sink;
/* Refuses (exit 2) a path that is one of the inputs noted by cli_parse. */
int cli_sink_open(cli_sink *s, const char *path);
void cli_note_input(int slot, const char *path);
int cli_sink_close(cli_sink *s, int ok);

/* A question asked of each selected hazard (--hazard, or all). */
struct lw_jw;
typedef struct cli_hazard_ops {
    /* Answer for one hazard (an index into model->hazards). */
    lw_status (*run)(void *ctx, size_t hazard, void **result, lw_error *err);
    /* JSON: one of the two (stream_json for results with a row per
     * event). */
    json_t *(*json)(const lw_model *m, const void *result);
    void (*stream_json)(struct lw_jw *w, const lw_model *m,
                        const void *result);
    void (*text)(void *ctx, FILE *out, const lw_model *m,
                 const void *result);
    void (*csv)(void *ctx, FILE *out, const lw_model *m, const void *result,
                bool header);                   /* may be NULL */
    void (*free)(void *result);
    const char *separator;      /* between hazards in text, default "\n" */
    bool no_caution;            /* the text renderer prints it itself */
} cli_hazard_ops;

/* Resolve --hazard, open the output (-o or stdout), answer each hazard,
 * write text, JSON (one object, or {"hazards": [...], "caution"}) or
 * CSV, and close the output.  Returns the exit code. */
int cli_each_hazard(const cli_args *a, const lw_model *m,
                    const cli_hazard_ops *ops, void *ctx);

/* --samples, --seed, --threads into Monte Carlo options (exit code). */
struct lw_mc_options;
int cli_mc_options(const cli_args *a, struct lw_mc_options *mc);

int cmd_check(int argc, char **argv);
int cmd_analyze(int argc, char **argv);
int cmd_target(int argc, char **argv);
int cmd_uncertainty(int argc, char **argv);
int cmd_compare(int argc, char **argv);
int cmd_sweep(int argc, char **argv);
int cmd_report(int argc, char **argv);
int cmd_diagram(int argc, char **argv);
int cmd_incident(int argc, char **argv);
int cmd_learn(int argc, char **argv);

#endif
