/* test_numfmt: the fast number formatting, checked byte for byte against the C library (glibc's
 * snprintf "%.*g" and, for the JSON form, its "%.15g/%.16g/%.17g, first that strtod reads back"
 * loop): a table of edge cases (exact ties, carries into the next power of ten, powers of two whose
 * lower neighbour is closer, the ends of the exact range, signs, zero, infinities) and a seeded sweep
 * over every precision. */
#include "testutil.h"

#include <float.h>
#include <stdint.h>

#include "numfmt.h"

static void expect_g(double v, int prec)
{
    char got[NUMFMT_SIZE], want[64];
    size_t n = numfmt_g(got, v, prec);
    snprintf(want, sizeof want, "%.*g", prec < 1 ? 1 : prec, v);
    if (strcmp(got, want) != 0 || n != strlen(want)) {
        print_error("numfmt_g(%.17g, %d) = '%s', snprintf gives '%s'\n", v, prec, got, want);
        fail();
    }
}

static void expect_json(double v)
{
    char got[NUMFMT_SIZE], want[64];
    size_t n = numfmt_json(got, v);
    for (int p = 15; p <= 17; p++) {
        snprintf(want, sizeof want, "%.*g", p, v);
        if (p == 17 || strtod(want, NULL) == v)
            break;
    }
    if (strcmp(got, want) != 0 || n != strlen(want)) {
        print_error("numfmt_json(%.17g) = '%s', the snprintf loop gives '%s'\n", v, got, want);
        fail();
    }
}

static void expect_all(double v)
{
    for (int p = 0; p <= 18; p++)
        expect_g(v, p);
    expect_json(v);
    expect_json(-v);
}

static void test_edges(void **state)
{
    (void)state;
    static const double rows[] = {
        0.0, 1.0, 10.0, 0.1, 0.5, 1.5, 2.5, 0.125, 0.375, 1e-5, 1e-4, 9.9999e-5, 0.00099995, 999.5, 9.9996,
        9.5, 95.0, 0.95, 123456789012345678.0, 1e15, 1e16, 1e17, 9.999999999999999e16, 1e-16, 1.0000000000000002e-16,
        9.99999999999999e-17, 1e-17, 1e22, 1e23, 5e-324, 2.2250738585072014e-308, 1.7976931348623157e308,
        4503599627370496.0, 9007199254740992.0, 9007199254740993.0, 0.30000000000000004, 2.0 / 3.0, 1.0 / 3.0,
        6.0221407600000003e23, 1.602176634e-19, 1.380649e-23, 3.14159265358979, 299792458.0, 4.60307e-06,
        0.000116132, 2.3071e-06, 0.207018, 6.19366e-14, 28.92860075883252, 0.06408736842105263,
        /* powers of two: the double below is closer than the one above */
        0.5, 0.25, 1.0 / 1024, 1.0 / 1048576, 1099511627776.0, 1.0 / 1099511627776.0, 0x1p-50, 0x1p-53, 0x1p40,
        0x1p-44, 0x1p-25, 0x1p-24, /* their 16-digit neighbour below reads back only with the narrow bound */
        /* values just below a power of ten, where rounding carries */
        0.09999999999999999, 0.9999999999999999, 99.99999999999999, 9.999999999999998e-7, 0.0009999995,
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        expect_all(rows[i]);
        expect_all(-rows[i]);
        expect_all(nextafter(rows[i], 0.0));
        expect_all(nextafter(rows[i], INFINITY));
    }
    expect_all(-0.0);
    char buf[NUMFMT_SIZE];
    numfmt_g(buf, INFINITY, 3);
    assert_string_equal(buf, "inf");
    numfmt_g(buf, -INFINITY, 3);
    assert_string_equal(buf, "-inf");
    numfmt_json(buf, NAN);
    assert_true(strstr(buf, "nan") != NULL);
}

/* xorshift64: a fixed sequence, so a failure is reproducible */
static uint64_t next(uint64_t *s)
{
    *s ^= *s << 13;
    *s ^= *s >> 7;
    *s ^= *s << 17;
    return *s;
}

static void test_sweep(void **state)
{
    (void)state;
    uint64_t s = 0x9E3779B97F4A7C15ull;
    for (int i = 0; i < 40000; i++) {
        double v;
        uint64_t r = next(&s);
        switch (i % 4) {
        case 0: /* any bit pattern */
            memcpy(&v, &r, sizeof v);
            if (!isfinite(v))
                continue;
            break;
        case 1: /* the magnitudes of a circuit: 1e-20 .. 1e15, any digits */
            v = pow(10.0, -20.0 + 35.0 * (double)(r >> 11) / 9007199254740992.0);
            break;
        case 2: { /* short decimals as simulators print them (1 to 17 digits) */
            char t[48];
            snprintf(t, sizeof t, "%.*g", 1 + (int)(r % 17),
                     pow(10.0, -18.0 + 33.0 * (double)(next(&s) >> 11) / 9007199254740992.0));
            v = strtod(t, NULL);
            break;
        }
        default: /* exact halves and multiples of powers of ten: ties */
            v = (double)(r % 200000) * 0.5 * pow(10.0, (double)((int)(next(&s) % 30) - 20));
            break;
        }
        expect_all(v);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_edges),
        cmocka_unit_test(test_sweep),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
