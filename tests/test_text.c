/*
 * test_text.c - the strict number parse of io/text.c (fast_float's
 * Eisel-Lemire conversion, Lemire 2021) held to the C library's strtod
 * (glibc, correctly rounded) as the outside reference: the same double,
 * bit for bit, on random and edge-case decimal strings; and the grammar:
 * what strtod reads but the records format refuses (hexadecimal, inf,
 * nan, overflow) is refused.
 */
#include "test_util.h"

#include "io/text_internal.h"

#include <errno.h>
#include <float.h>

/* strtod's reading of a whole finite field, or -1 (the old parse). */
static int ref_parse(const char *s, double *out)
{
    char *end;
    errno = 0;
    double v = strtod(s, &end);
    if (end == s || *end != '\0' || !isfinite(v)) return -1;
    *out = v;
    return 0;
}

static void same_as_strtod(const char *s, long *checked)
{
    double a = 0, b = 0;
    int ra = tram__parse_double(s, &a), rb = ref_parse(s, &b);
    if (ra != rb || (ra == 0 && memcmp(&a, &b, sizeof a) != 0)) {
        printf("'%s': tram %d %.17g, strtod %d %.17g\n", s, ra, a, rb, b);
        fail();
    }
    (*checked)++;
}

static void test_edge_cases(void **state)
{
    (void)state;
    static const char *const cases[] = {
        "0", "-0", "+0", "0.0", ".5", "5.", "-.5e-3", "1e0", "1E+2", "1e-2", "00012",
        "1.7976931348623157e308", "1.7976931348623158e308", "2.2250738585072014e-308",
        "2.2250738585072011e-308", "4.9406564584124654e-324", "2.4703282292062327e-324",
        "2.4703282292062328e-324", "1e-400", "1e-320", "9007199254740993", "9007199254740992.5",
        "0.1", "0.2", "0.30000000000000004", "123456789012345678901234567890",
        "3.14159265358979323846264338327950288419716939937510", "1e22", "1e23", "8.5e-1",
        "7.3177701707893310e+15", "2.2250738585072012e-308", "0.000000000000000000000000001",
        "1.00000000000000011102230246251565404236316680908203125",
        "1.000000000000000111022302462515654042363166809082031250000001",
        "  12.5", "\t-3", "\v4", "4 ", "1e400", "-1e400", "inf", "-inf", "nan", "infinity",
        "0x1p3", "0X10", "-0x1.8p1", "1e", "1e+", ".", "-", "+", "", "+-1", "-+1", "++1", "1..2",
        "1e5.5", "1,5", "1_000", "e5", "1d", "1f"};
    long n = 0;
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        /* strtod reads hexadecimal; the records format does not (docs) */
        const char *p = cases[i];
        while (*p == '+' || *p == '-') p++;
        if (p[0] == '0' && (p[1] == 'x' || p[1] == 'X')) {
            double v;
            assert_int_equal(tram__parse_double(cases[i], &v), -1);
            n++;
            continue;
        }
        same_as_strtod(cases[i], &n);
    }
    printf("[ info     ] %ld edge cases agree with strtod (hexadecimal refused)\n", n);
}

/* Random decimal strings: 1 to 40 digits, a point anywhere, exponents
 * across the whole range and beyond (overflow, subnormals, underflow). */
static void test_random_strings(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("number strings", 20261202);
    long n = 0;
    char s[96];
    for (int k = 0; k < 400000; k++) {
        int len = 0;
        if (test_rng_next(&rng) % 3 == 0) s[len++] = '-';
        int digits = 1 + (int)(test_rng_next(&rng) % 40);
        int point = (int)(test_rng_next(&rng) % (uint64_t)(digits + 2)) - 1;
        for (int d = 0; d < digits; d++) {
            if (d == point) s[len++] = '.';
            s[len++] = (char)('0' + test_rng_next(&rng) % 10);
        }
        if (test_rng_next(&rng) % 2) {
            int e = (int)(test_rng_next(&rng) % 700) - 350;
            len += snprintf(s + len, sizeof s - (size_t)len, "e%d", e);
        }
        s[len] = '\0';
        same_as_strtod(s, &n);
    }
    /* the shortest round-trip form of random doubles (all bit patterns) */
    for (int k = 0; k < 200000; k++) {
        uint64_t bits = test_rng_next(&rng);
        double v;
        memcpy(&v, &bits, sizeof v);
        if (!isfinite(v)) continue;
        snprintf(s, sizeof s, k % 2 ? "%.17g" : "%.15e", v);
        same_as_strtod(s, &n);
    }
    printf("[ info     ] %ld random strings agree with strtod bit for bit\n", n);
}

static void test_span(void **state)
{
    (void)state;
    /* a span needs no NUL: the number stops at e */
    const char buf[] = "12.5,7";
    double v = 0;
    assert_int_equal(tram__parse_number(buf, buf + 4, &v), 0);
    assert_true(v == 12.5);
    assert_int_equal(tram__parse_number(buf, buf + 5, &v), -1);
    assert_int_equal(tram__parse_number(buf, buf, &v), -1);
}

int main(void)
{
    const struct CMUnitTest tests[] = {cmocka_unit_test(test_edge_cases),
                                       cmocka_unit_test(test_random_strings),
                                       cmocka_unit_test(test_span)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
