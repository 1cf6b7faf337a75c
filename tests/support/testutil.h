/*
 * testutil.h - helpers shared by the unit tests.
 *
 * Include after <setjmp.h>, <stdarg.h>, <stddef.h> and <cmocka.h>.
 */
#ifndef LW_TESTUTIL_H
#define LW_TESTUTIL_H

#include <stddef.h>
#include <stdint.h>

#include "layerwise/analysis.h"
#include "layerwise/model.h"
#include "layerwise/network.h"

/* Limits for tu_load and tu_load_fail (NULL = the defaults); the loader
 * tests run once as is and once with every model read as a stream. */
extern const lw_load_limits *tu_limits;

/* Load a model from a string; fails the test with the loader's messages
 * when it does not load. */
lw_model *tu_load(const char *xml);
/* Load a model expected to fail; returns the error (caller clears). */
lw_status tu_load_fail(const char *xml, lw_error *err);
/* Does any diagnostic's message contain 'needle'? Its line in *line. */
int tu_error_has(const lw_error *err, const char *needle, long *line);

/* Exact P(gate) by enumerating every assignment of the network's
 * variables (nvars <= 24): the independent reference for the BDD. */
double tu_brute_prob(const lw_network *net, uint32_t gate,
                     const double *var_p);
/* Evaluate a gate under an assignment (bit v of 'x' = variable v). */
int tu_eval(const lw_network *net, uint32_t gate, uint64_t x);
/* The exact probability of a hazard via the library. */
double tu_prob(const lw_model *m, size_t variant, size_t hazard);

/* The hazard's cut-set family built from the network and from the BDD
 * must be the same, frozen the same way (count, sets in order, sums bit
 * for bit); fails the test naming 'what' otherwise. */
void tu_same_family_both_ways(const lw_prepared *p, const char *what);

/* Two frozen diagrams are the same BDD up to the numbering of their nodes
 * (a walk from the roots pairs every node one to one, level for level). */
void tu_same_diagram(const lw_diagram *a, const lw_diagram *b,
                     const char *what);

/* A small deterministic PRNG for generated tests. */
uint64_t tu_rand(uint64_t *state);
double tu_uniform(uint64_t *state);

/* Path of a file in the source tree (LW_SOURCE_DIR or "."). */
const char *tu_source_path(const char *rel);

/* Relative closeness: |a - b| <= tol * max(|a|, |b|, tiny). */
int tu_close(double a, double b, double tol);
/* Text that grows as it is written (big generated models); fails the
 * test when memory runs out.  Free t->s when done. */
typedef struct tu_text {
    char *s;
    size_t len, cap;
} tu_text;
void tu_printf(tu_text *t, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));
/* Run fn(arg) on a new thread with a stack of 'bytes', and wait for it. */
void tu_run_on_stack(void *(*fn)(void *), void *arg, size_t bytes);
#define assert_close(a, b, tol)                                            \
    do {                                                                   \
        double a_ = (a), b_ = (b);                                         \
        if (!tu_close(a_, b_, (tol)))                                      \
            fail_msg("%s = %.17g, expected %.17g (rel tol %g)", #a, a_,   \
                     b_, (double)(tol));                                   \
    } while (0)

#endif
