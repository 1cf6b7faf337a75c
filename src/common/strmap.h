/*
 * strmap.h - an open-addressing map from borrowed C strings to size_t.
 *
 * Keys are not copied: the caller keeps them alive while the map is used
 * (the model owns its ids).  Linear probing, power-of-two capacity, load
 * factor at most 1/2.  Internal to liblayerwise.
 */
#ifndef LW_STRMAP_H
#define LW_STRMAP_H

#include <stddef.h>

typedef struct lw_strmap {
    size_t cap;             /* slots, a power of two (0 when empty) */
    size_t count;           /* keys stored */
    const char **keys;      /* borrowed keys, NULL = free slot */
    size_t *values;
} lw_strmap;

void lw_strmap_init(lw_strmap *m);
void lw_strmap_free(lw_strmap *m);
/* Insert 'key'.  Returns 1 when inserted, 0 when the key was already there
 * (its value is left as it was and returned in *old), -1 out of memory. */
int lw_strmap_put(lw_strmap *m, const char *key, size_t value, size_t *old);
/* Returns 1 and sets *value when found, else 0. */
int lw_strmap_get(const lw_strmap *m, const char *key, size_t *value);

#endif
