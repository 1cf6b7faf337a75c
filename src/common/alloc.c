/* alloc.c - allocation wrappers with a fault-injection hook for tests. */
#include "layerwise/alloc.h"

#include <stdatomic.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

/* The counter is atomic: the loader validates on a second thread and Monte
 * Carlo samples on several, and they all allocate.  The hook itself is
 * set from single-threaded test code only (alloc.h). */
static atomic_ulong g_count;     /* allocations since the hook was set */
static unsigned long g_fail_at;  /* 0 = never fail */
static int g_sticky;             /* fail every allocation after g_fail_at */

void lw_alloc_fail_at(unsigned long n, int sticky)
{
    atomic_store_explicit(&g_count, 0, memory_order_relaxed);
    g_fail_at = n;
    g_sticky = sticky;
}

unsigned long lw_alloc_count(void)
{
    return atomic_load_explicit(&g_count, memory_order_relaxed);
}

static int should_fail(void)
{
    unsigned long c =
        atomic_fetch_add_explicit(&g_count, 1, memory_order_relaxed) + 1;
    if (g_fail_at == 0)
        return 0;
    return g_sticky ? c >= g_fail_at : c == g_fail_at;
}

void *lw_malloc(size_t size)
{
    if (should_fail())
        return NULL;
    return malloc(size ? size : 1);
}

void *lw_calloc(size_t n, size_t size)
{
    if (should_fail())
        return NULL;
    if (n == 0 || size == 0)
        return calloc(1, 1);
    return calloc(n, size);
}

void *lw_realloc(void *ptr, size_t size)
{
    if (should_fail())
        return NULL;
    return realloc(ptr, size ? size : 1);
}

void *lw_grow(void *ptr, size_t *cap, size_t need, size_t elem)
{
    if (need <= *cap)
        return ptr;
    size_t ncap = *cap ? *cap : 8;
    while (ncap < need) {
        if (ncap > SIZE_MAX / 2)
            return NULL;
        ncap *= 2;
    }
    if (elem && ncap > SIZE_MAX / elem)
        return NULL;
    void *p = lw_realloc(ptr, ncap * elem);
    if (!p)
        return NULL;
    *cap = ncap;
    return p;
}

char *lw_strndup(const char *s, size_t n)
{
    char *d = lw_malloc(n + 1);
    if (!d)
        return NULL;
    memcpy(d, s, n);
    d[n] = '\0';
    return d;
}

char *lw_strdup(const char *s)
{
    return s ? lw_strndup(s, strlen(s)) : NULL;
}

void lw_free(void *ptr) { free(ptr); }
