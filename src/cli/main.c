/*
 * main.c - layerwise: dispatch to one command.
 *
 * The command runs on a thread with a large stack (lw_deep_call): some
 * diagram algorithms recurse once per variable level, and hospital-wide
 * models can have hundreds of thousands of them.
 */
#include <gsl/gsl_errno.h>
#if defined(__GLIBC__)
#include <malloc.h>
#endif
#include <stdio.h>
#include <string.h>

#include "cli/cli.h"
#include "layerwise/deep.h"

typedef struct command {
    const char *name;
    int (*run)(int argc, char **argv);
    const char *summary;
} command;

static const command commands[] = {
    {"check", cmd_check, "load and validate a model; list its parts"},
    {"analyze", cmd_analyze, "exact hazard probability, cut sets, importance"},
    {"target", cmd_target, "the miss probability each safeguard must reach"},
    {"uncertainty", cmd_uncertainty, "Monte Carlo: how sure the hazard chance is"},
    {"compare", cmd_compare, "baseline against variants, point and paired samples"},
    {"sweep", cmd_sweep, "the hazard chance as one event's probability varies"},
    {"report", cmd_report, "a self-contained HTML report for a risk committee"},
    {"diagram", cmd_diagram, "the tree as a picture: SVG (Graphviz) or DOT"},
    {"incident", cmd_incident, "after an incident: what the misses completed, what stood"},
    {"learn", cmd_learn, "update safeguard estimates from a near-miss log"},
};

static void print_usage(FILE *out)
{
    fputs("usage: layerwise COMMAND [options] MODEL.xml   (- reads standard "
          "input)\n\ncommands:\n", out);
    for (size_t i = 0; i < sizeof commands / sizeof *commands; i++)
        fprintf(out, "  %-12s %s\n", commands[i].name, commands[i].summary);
    fputs("\nlayerwise COMMAND --help shows a command's options; "
          "man layerwise has them all.\n", out);
}

typedef struct job {
    const command *cmd;
    int argc;
    char **argv;
    int rc;
} job;

static void run_job(void *arg)
{
    job *j = arg;
    j->rc = j->cmd->run(j->argc, j->argv);
}

int main(int argc, char **argv)
{
    /* GSL's default reaction to a numerical failure is abort(); layerwise
     * checks results itself */
    gsl_set_error_handler_off();
#if defined(__GLIBC__)
    /* Large models go through a series of big arrays (the model, the
     * scratch BDD, the frozen diagram, per-node work), each freed before
     * the next is made.  Keep arrays up to 32 MiB in the heap and the heap
     * from shrinking, so each reuses the memory of the one before instead
     * of mapping fresh pages (first touches of new memory are a fifth of
     * the time of a large analysis on a virtual machine). */
    mallopt(M_MMAP_THRESHOLD, 32 << 20);
    mallopt(M_TRIM_THRESHOLD, 1 << 30);
#endif
    if (argc < 2) {
        print_usage(stderr);
        return EXIT_USAGE;
    }
    if (!strcmp(argv[1], "--version") || !strcmp(argv[1], "version")) {
        printf("layerwise %s\n", lw_version());
        return EXIT_DONE;
    }
    if (!strcmp(argv[1], "--help") || !strcmp(argv[1], "-h") ||
        !strcmp(argv[1], "help")) {
        print_usage(stdout);
        return EXIT_DONE;
    }
    for (size_t i = 0; i < sizeof commands / sizeof *commands; i++) {
        if (strcmp(argv[1], commands[i].name))
            continue;
        job j = {&commands[i], argc - 1, argv + 1, EXIT_INVALID};
        lw_deep_call(run_job, &j);
        return j.rc;
    }
    fprintf(stderr, "layerwise: unknown command \"%s\"\n\n", argv[1]);
    print_usage(stderr);
    return EXIT_USAGE;
}
