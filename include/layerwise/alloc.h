/*
 * layerwise/alloc.h - the one place where the library takes memory.
 *
 * Every allocation made by liblayerwise goes through lw_malloc, lw_calloc,
 * lw_realloc and lw_strdup.  Tests use the fault hook to make the Nth
 * allocation fail and check that every room reports LW_ENOMEM and frees
 * what it took.  The hook is process-wide and not thread-safe: set it only
 * from single-threaded test code.
 */
#ifndef LAYERWISE_ALLOC_H
#define LAYERWISE_ALLOC_H

#include <stddef.h>

#ifdef __cplusplus
extern "C" {
#endif

void *lw_malloc(size_t size);
void *lw_calloc(size_t n, size_t size);
void *lw_realloc(void *ptr, size_t size);
/* Grow an array to hold at least 'need' elements of 'elem' bytes; doubles
 * the capacity.  On failure returns NULL and leaves *ptr and *cap intact. */
void *lw_grow(void *ptr, size_t *cap, size_t need, size_t elem);
char *lw_strdup(const char *s);
char *lw_strndup(const char *s, size_t n);
void lw_free(void *ptr);

/* Fault injection (tests): fail the allocation numbered 'n' (1-based) and
 * every later one when 'sticky', or only that one otherwise.  n = 0 turns
 * injection off.  lw_alloc_count() tells how many allocations were made
 * since the last lw_alloc_fail_at call. */
void lw_alloc_fail_at(unsigned long n, int sticky);
unsigned long lw_alloc_count(void);

#ifdef __cplusplus
}
#endif
#endif
