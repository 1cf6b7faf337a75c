/*
 * test_deep.c - lw_deep_call runs work on a large stack, once.
 *
 * A recursion a million frames deep runs through it; a call made from the
 * work it runs stays on the same thread; the work's results come back.
 * No numbers are pinned here (common practice, no source).
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <pthread.h>
#include <stdint.h>

#include "layerwise/deep.h"

/* one frame per step; the volatile array keeps frames from being merged */
static uint64_t deep_sum(uint32_t n)
{
    volatile uint32_t pad[8];
    pad[0] = n;
    if (n == 0)
        return 0;
    uint64_t below = deep_sum(n - 1);
    return below + pad[0];      /* read after the call: no tail call */
}

typedef struct job {
    uint32_t depth;
    uint64_t sum;
    int nested_new_thread;
    pthread_t self;
    pthread_t nested_self;
} job;

static void nested(void *arg)
{
    job *j = arg;
    j->nested_self = pthread_self();
}

static void run(void *arg)
{
    job *j = arg;
    j->self = pthread_self();
    j->sum = deep_sum(j->depth);
    j->nested_new_thread = lw_deep_call(nested, j);
}

static void test_deep_recursion(void **state)
{
    (void)state;
    job j = {1000000, 0, -1, pthread_self(), pthread_self()};
    int made = lw_deep_call(run, &j);
    assert_int_equal(made, 1);
    /* closed form: 1 + 2 + ... + n */
    assert_true(j.sum == (uint64_t)j.depth * (j.depth + 1) / 2);
    assert_false(pthread_equal(j.self, pthread_self()));
    /* a call from the large stack runs in place */
    assert_int_equal(j.nested_new_thread, 0);
    assert_true(pthread_equal(j.nested_self, j.self));
}

static void note_thread(void *arg)
{
    *(pthread_t *)arg = pthread_self();
}

/* lw_deep_call_past: in place up to LW_DEEP_LEVELS, on a new thread past */
static void test_deep_call_past(void **state)
{
    (void)state;
    pthread_t t = pthread_self();
    lw_deep_call_past(LW_DEEP_LEVELS, note_thread, &t);
    assert_true(pthread_equal(t, pthread_self()));
    lw_deep_call_past(LW_DEEP_LEVELS + 1, note_thread, &t);
    assert_false(pthread_equal(t, pthread_self()));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_deep_recursion),
        cmocka_unit_test(test_deep_call_past),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
