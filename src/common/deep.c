/* deep.c - run recursive work on a thread with a large stack. */
#include "layerwise/deep.h"

#include <pthread.h>
#include <stddef.h>
#include <stdint.h>

/* set on the threads lw_deep_call makes: nested calls run in place */
static _Thread_local int on_deep_stack;

typedef struct deep_job {
    void (*fn)(void *);
    void *arg;
} deep_job;

static void *deep_main(void *p)
{
    deep_job *j = p;
    on_deep_stack = 1;
    j->fn(j->arg);
    return NULL;
}

int lw_deep_call(void (*fn)(void *), void *arg)
{
    if (on_deep_stack) {
        fn(arg);
        return 0;
    }
    deep_job j = {fn, arg};
    pthread_t t;
    int made = 0;
    /* 1 GiB of address space, less where the process may not map that
     * much (an address-space limit, strict overcommit): halve down to
     * 64 MiB, still some 300,000 frames */
    size_t size = SIZE_MAX > 0xffffffffu ? (size_t)1 << 30 : (size_t)1 << 28;
    for (; !made && size >= (size_t)1 << 26; size /= 2) {
        pthread_attr_t attr;
        if (pthread_attr_init(&attr) != 0)
            break;
        made = pthread_attr_setstacksize(&attr, size) == 0 &&
               pthread_create(&t, &attr, deep_main, &j) == 0;
        pthread_attr_destroy(&attr);
    }
    if (!made) {
        fn(arg);        /* no thread at all: the caller's stack it is */
        return 0;
    }
    /* the work writes through the caller's frame: the caller must not
     * be cancelled away while it runs */
    int old;
    pthread_setcancelstate(PTHREAD_CANCEL_DISABLE, &old);
    pthread_join(t, NULL);
    pthread_setcancelstate(old, &old);
    return 1;
}

void lw_deep_call_past(size_t levels, void (*fn)(void *), void *arg)
{
    if (levels > LW_DEEP_LEVELS)
        lw_deep_call(fn, arg);
    else
        fn(arg);
}
