/*
 * fuzz_common.h - what both libFuzzer harnesses share: a sink for
 * rendered output and the contract every library call must keep.
 * Define FUZZ_NAME (the harness's name, for messages) before including.
 */
#ifndef LW_FUZZ_COMMON_H
#define LW_FUZZ_COMMON_H

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "layerwise/error.h"

static FILE *devnull(void)
{
    static FILE *f;
    if (!f)
        f = fopen("/dev/null", "w");
    if (!f)
        abort();
    return f;
}

/* A broken contract aborts, so libFuzzer keeps the input. */
#define CHECK(cond)                                                        \
    do {                                                                   \
        if (!(cond)) {                                                     \
            fprintf(stderr, FUZZ_NAME ": broken contract: %s (%s:%d)\n",   \
                    #cond, __FILE__, __LINE__);                            \
            abort();                                                       \
        }                                                                  \
    } while (0)

static int is_prob(double p) { return p >= 0.0 && p <= 1.0; }

/* After a call: status and result agree, a failure says why (never as an
 * internal error), every message is one line; the error is cleared. */
static void check_call(lw_status st, const void *result, lw_error *err)
{
    if (st == LW_OK) {
        CHECK(result != NULL);
    } else {
        CHECK(result == NULL);
        CHECK(err->code != LW_OK);
        CHECK(err->count > 0 || err->oom);
        CHECK(st != LW_EINTERNAL);
    }
    for (size_t i = 0; i < err->count; i++) {
        CHECK(err->items[i].message != NULL);
        CHECK(strchr(err->items[i].message, '\n') == NULL);
    }
    lw_error_clear(err);
}

#endif
