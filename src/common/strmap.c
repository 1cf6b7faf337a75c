/* strmap.c - string -> size_t map (see strmap.h). */
#include "common/strmap.h"

#include <stdint.h>
#include <string.h>

#include "layerwise/alloc.h"

static uint64_t hash_str(const char *s)
{
    uint64_t h = 1469598103934665603ull;   /* FNV-1a */
    for (; *s; s++) {
        h ^= (unsigned char)*s;
        h *= 1099511628211ull;
    }
    return h ^ (h >> 29);
}

void lw_strmap_init(lw_strmap *m) { memset(m, 0, sizeof *m); }

void lw_strmap_free(lw_strmap *m)
{
    lw_free(m->keys);
    lw_free(m->values);
    lw_strmap_init(m);
}

static int rehash(lw_strmap *m, size_t ncap)
{
    const char **keys = lw_calloc(ncap, sizeof *keys);
    size_t *values = lw_malloc(ncap * sizeof *values);
    if (!keys || !values) {
        lw_free(keys);
        lw_free(values);
        return -1;
    }
    for (size_t i = 0; i < m->cap; i++) {
        if (!m->keys[i])
            continue;
        size_t j = (size_t)hash_str(m->keys[i]) & (ncap - 1);
        while (keys[j])
            j = (j + 1) & (ncap - 1);
        keys[j] = m->keys[i];
        values[j] = m->values[i];
    }
    lw_free(m->keys);
    lw_free(m->values);
    m->keys = keys;
    m->values = values;
    m->cap = ncap;
    return 0;
}

int lw_strmap_put(lw_strmap *m, const char *key, size_t value, size_t *old)
{
    if (2 * (m->count + 1) > m->cap) {
        if (rehash(m, m->cap ? 2 * m->cap : 64) < 0)
            return -1;
    }
    size_t j = (size_t)hash_str(key) & (m->cap - 1);
    while (m->keys[j]) {
        if (strcmp(m->keys[j], key) == 0) {
            if (old)
                *old = m->values[j];
            return 0;
        }
        j = (j + 1) & (m->cap - 1);
    }
    m->keys[j] = key;
    m->values[j] = value;
    m->count++;
    return 1;
}

int lw_strmap_get(const lw_strmap *m, const char *key, size_t *value)
{
    if (m->cap == 0)
        return 0;
    size_t j = (size_t)hash_str(key) & (m->cap - 1);
    while (m->keys[j]) {
        if (strcmp(m->keys[j], key) == 0) {
            if (value)
                *value = m->values[j];
            return 1;
        }
        j = (j + 1) & (m->cap - 1);
    }
    return 0;
}
