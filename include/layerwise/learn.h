/*
 * layerwise/learn.h - learning from a near-miss / incident log (analysis
 * room).
 *
 * The log is CSV (RFC 4180) with a header row.  Columns are found by
 * name, case-insensitively and in any order; extra columns are ignored:
 *   error      the error that started the chain: an error id of the
 *              model, or empty (origin not recorded);
 *   missed     the safeguards it passed, ';'-separated (may be empty);
 *   caught_by  the one safeguard that stopped it, empty if none did;
 *   date, note optional, for people.
 * 'error', 'missed' and 'caught_by' are required.  A UTF-8 byte-order mark
 * and CRLF line ends are accepted, and quoted fields may hold line
 * breaks; every message names the PHYSICAL line where its row starts.
 *
 * Per safeguard (docs/cli.md): reached = rows where it is in missed or is
 * caught_by; missed = rows where it is in missed.  M and R add the model's
 * own <observed> counts; estimate = (M + 0.5) / (R + 1) (Jeffreys mean),
 * ci95 = Clopper-Pearson on M of R.
 *
 * Ordered pairs (first, second): n = rows where first missed and second
 * was reached, m = those where second missed too; p_value = P(X >= m),
 * X ~ Binomial(n, nominal), nominal = second's point p as the model
 * states it (the Jeffreys mean for observed counts), before any
 * common-cause or dependence expansion.  suggested = the THERP level whose
 * c = nominal + w(1 - nominal) is closest to m / n in log-odds, with both
 * clamped into [LW_LEARN_EPS, 1 - LW_LEARN_EPS] so that rates of 0 and 1
 * (and c = 1 for complete dependence) have finite log-odds; a tie goes to
 * the lower level.  Pairs with n >= 3, sorted by p_value (then rate,
 * highest first, then ids).
 */
#ifndef LAYERWISE_LEARN_H
#define LAYERWISE_LEARN_H

#include <stdbool.h>
#include <stddef.h>

#include "layerwise/error.h"
#include "layerwise/model.h"

#ifdef __cplusplus
extern "C" {
#endif

#define LW_LEARN_EPS 1e-6
#define LW_LEARN_MIN_PAIR 3     /* pairs need n >= 3 rows */

typedef struct lw_learn_layer {
    size_t node;            /* model safeguard */
    unsigned long reached;  /* log rows that reached it */
    unsigned long missed;   /* log rows where it missed */
    bool has_model_counts;  /* the model gives <observed> counts */
    double model_count, model_of;
    double M, R;            /* combined */
    double estimate;        /* (M + 0.5) / (R + 1) */
    double ci_lo, ci_hi;    /* Clopper-Pearson 95 % on M of R */
    double nominal;         /* the model's point p now */
} lw_learn_layer;

typedef struct lw_learn_pair {
    size_t first, second;   /* model safeguards */
    unsigned long n;        /* first missed, second reached */
    unsigned long m;        /* ... and second missed */
    double nominal;         /* second's p as the model states it */
    double rate;            /* m / n */
    double p_value;         /* P(X >= m), X ~ Binomial(n, nominal) */
    lw_level suggested;     /* THERP level closest in log-odds */
    bool modelled;          /* a dependence first -> second exists */
    lw_level modelled_level;
    bool linked;            /* the model already links them some other way:
                               a dependence second -> first, or one group */
    bool second_has_first;  /* second already depends on another event */
    bool second_in_group;   /* second is a common-cause member */
} lw_learn_pair;

typedef struct lw_learn {
    char *log;              /* log name used in messages */
    size_t rows;            /* data rows */
    size_t rows_caught;     /* rows with a caught_by */
    size_t nlayers;
    lw_learn_layer *layers; /* safeguards the log reaches, model order */
    size_t npairs;
    lw_learn_pair *pairs;
} lw_learn;

/* Learn from a log held in memory; 'name' is used in messages.  Every bad
 * row is reported (up to the lw_error limit) and then nothing is
 * returned. */
lw_status lw_learn_memory(const lw_model *m, const char *data, size_t len,
                          const char *name, lw_learn **out, lw_error *err);
/* The same from a file ("-" reads standard input). */
lw_status lw_learn_file(const lw_model *m, const char *path,
                        lw_learn **out, lw_error *err);
void lw_learn_free(lw_learn *l);

/* Read a whole file (or standard input for "-") into memory, at most
 * 'max_bytes' (0 = 64 MiB).  *data is NUL-terminated; free with lw_free. */
lw_status lw_read_all(const char *path, size_t max_bytes, char **data,
                      size_t *len, lw_error *err);

/* The model's XML with each learned safeguard's probability replaced by
 * <observed count="M" of="R" source="..."/> (its p attribute and any other
 * uncertainty child removed); everything else it says is unchanged.  The
 * document is re-read with the loader's safe settings (no DTD, no
 * entities, no network) and the result is checked to load before it is
 * returned.  *out (lw_malloc) holds *outlen bytes. */
lw_status lw_learn_update_model(const char *xml, size_t len,
                                const char *name, const lw_model *m,
                                const lw_learn *l, char **out,
                                size_t *outlen, lw_error *err);

/* The line to add to a model for a suggested pair. */
void lw_learn_dependence_xml(const lw_model *m, const lw_learn_pair *p,
                             char *buf, size_t n);

#ifdef __cplusplus
}
#endif
#endif
