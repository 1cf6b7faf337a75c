/* test_jsonw.c - the streaming JSON writer and its number formatting. */
#define _POSIX_C_SOURCE 200809L
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <jansson.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "layerwise/jsonw.h"
#include "testutil.h"

/* Every formatted double must read back as the same double (the property
 * %.17g guarantees; common practice, no source).  Random bit patterns
 * cover the whole exponent range, denormals included. */
static void test_round_trip(void **state)
{
    (void)state;
    uint64_t s = 12345;
    char buf[64];
    for (int i = 0; i < 300000; i++) {
        uint64_t bits = tu_rand(&s);
        double x;
        memcpy(&x, &bits, sizeof x);
        if (!isfinite(x))
            continue;
        lw_format_double(buf, sizeof buf, x);
        double y = strtod(buf, NULL);
        if (y != x)
            fail_msg("%.17g formatted as %s reads back as %.17g", x, buf, y);
    }
    /* values a model is made of */
    static const double v[] = {0.01, 1e-6, 0.5, 1.0, 3.361872419559968e-05,
                               1e-300, 4.9e-324, 1.7976931348623157e308,
                               123456789012345678.0, 0.1, 1e16, 1e17, 9.5,
                               100.0, 0.3333333333333333};
    for (size_t i = 0; i < sizeof v / sizeof *v; i++) {
        lw_format_double(buf, sizeof buf, v[i]);
        assert_true(strtod(buf, NULL) == v[i]);
        lw_format_double(buf, sizeof buf, -v[i]);
        assert_true(strtod(buf, NULL) == -v[i]);
    }
    lw_format_double(buf, sizeof buf, 0.01);
    assert_string_equal(buf, "0.01");
    lw_format_double(buf, sizeof buf, 1e-6);
    assert_string_equal(buf, "1e-06");
    lw_format_double(buf, sizeof buf, 100.0);
    assert_string_equal(buf, "100.0");
}

/* A document written by the writer parses with jansson and holds what was
 * written, escapes included. */
static void test_document(void **state)
{
    (void)state;
    char *text = NULL;
    size_t len = 0;
    FILE *f = open_memstream(&text, &len);
    lw_jw w;
    lw_jw_init(&w, f);
    lw_jw_begin_object(&w);
    lw_jw_key(&w, "s");
    lw_jw_string(&w, "quote\" backslash\\ newline\n tab\t bell\a <&>");
    lw_jw_key(&w, "n");
    lw_jw_number(&w, 0.044);
    lw_jw_key(&w, "nan");
    lw_jw_number(&w, NAN);
    lw_jw_key(&w, "empty");
    lw_jw_begin_array(&w);
    lw_jw_end_array(&w);
    lw_jw_key(&w, "a");
    lw_jw_begin_array(&w);
    lw_jw_integer(&w, 7);
    lw_jw_bool(&w, true);
    lw_jw_null(&w);
    lw_jw_string(&w, NULL);
    lw_jw_end_array(&w);
    lw_jw_end_object(&w);
    fclose(f);
    json_error_t e;
    json_t *doc = json_loads(text, 0, &e);
    if (!doc)
        fail_msg("invalid JSON (%s): %s", e.text, text);
    assert_string_equal(json_string_value(json_object_get(doc, "s")),
                        "quote\" backslash\\ newline\n tab\t bell\a <&>");
    assert_true(json_real_value(json_object_get(doc, "n")) == 0.044);
    assert_true(json_is_null(json_object_get(doc, "nan")));
    assert_int_equal(json_array_size(json_object_get(doc, "empty")), 0);
    assert_int_equal(json_array_size(json_object_get(doc, "a")), 4);
    json_decref(doc);
    free(text);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_round_trip),
        cmocka_unit_test(test_document),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
