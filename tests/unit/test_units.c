/* test_units.c - numbers with units ("2 h", "12.5 km") converted to SI base units.
 *
 * External reference for the expected factors: the SI Brochure (BIPM, 9th edition, 2019):
 * the prefix k = 1e3 (section 3), and Table 8 (non-SI units accepted for use with the SI):
 * 1 min = 60 s, 1 h = 3600 s, 1 d = 86 400 s. Degrees are kept as degrees (units.h).
 * The expected values below are written from those definitions, not computed by the code.
 */
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>

#include <math.h>
#include <string.h>

#include "base/units.h"

/* Parses text and returns the value, failing the test if it is refused. */
static double ok(const char *text, sw_unit_kind kind)
{
    double v = NAN;
    char why[256] = "";
    int rc = sw_units_parse(text, kind, &v, why, sizeof why);
    if (rc != 0)
        fail_msg("'%s' refused: %s", text, why);
    return v;
}

/* Checks that text is refused, that the output is untouched, and that the cause contains `want`. */
static void bad(const char *text, sw_unit_kind kind, const char *want)
{
    double v = 12345.0;
    char why[256] = "";
    int rc = sw_units_parse(text, kind, &v, why, sizeof why);
    if (rc != -1)
        fail_msg("'%s' accepted as %g", text, v);
    assert_true(v == 12345.0);
    if (!strstr(why, want))
        fail_msg("'%s': cause '%s' lacks '%s'", text, why, want);
}

static void test_each_unit(void **state)
{
    (void)state;
    /* SI Brochure: k = 1e3 */
    assert_true(ok("5 m", SW_UNIT_LENGTH) == 5.0);
    assert_true(ok("12.5 km", SW_UNIT_LENGTH) == 12500.0);
    /* SI Brochure Table 8: min = 60 s, h = 3600 s, d = 86400 s */
    assert_true(ok("30 s", SW_UNIT_TIME) == 30.0);
    assert_true(ok("2 min", SW_UNIT_TIME) == 120.0);
    assert_true(ok("2 h", SW_UNIT_TIME) == 7200.0);
    assert_true(ok("1.5 d", SW_UNIT_TIME) == 129600.0);
    assert_true(ok("45 deg", SW_UNIT_ANGLE) == 45.0);
    assert_true(ok("-30.5 deg", SW_UNIT_ANGLE) == -30.5);
    /* rates and speeds, the same factors: h-1 = 1/3600 s-1, cm = 1e-2 m, mm = 1e-3 m */
    assert_true(ok("1e-4 s-1", SW_UNIT_RATE) == 1e-4);
    assert_true(ok("-1e-4 /s", SW_UNIT_RATE) == -1e-4);
    assert_true(ok("0.36 h-1", SW_UNIT_RATE) == 0.36 / 3600);
    assert_true(ok("3.6/h", SW_UNIT_RATE) == 3.6 / 3600);
    assert_true(ok("2e-3", SW_UNIT_RATE) == 2e-3);
    assert_true(ok("0.002 m/s", SW_UNIT_SPEED) == 0.002);
    assert_true(ok("2 mm/s", SW_UNIT_SPEED) == 2e-3);
    assert_true(ok("0.5 cm/s", SW_UNIT_SPEED) == 0.005);
    bad("1e-4 s-2", SW_UNIT_RATE, "unknown unit 's-2' (accepted: s-1, /s, h-1, /h)");
    bad("2 km/h", SW_UNIT_SPEED, "unknown unit 'km/h' (accepted: m/s, cm/s, mm/s)");
    bad("2 m/s extra", SW_UNIT_SPEED, "after the unit");
    bad("2 m-1", SW_UNIT_LENGTH, "unexpected");   /* only rates and speeds take '-', '/' and digits */
}

static void test_bare_numbers_and_spacing(void **state)
{
    (void)state;
    assert_true(ok("30", SW_UNIT_LENGTH) == 30.0);       /* base unit m */
    assert_true(ok("90", SW_UNIT_TIME) == 90.0);         /* base unit s */
    assert_true(ok("0.9", SW_UNIT_NONE) == 0.9);
    assert_true(ok("2h", SW_UNIT_TIME) == 7200.0);       /* the space is optional */
    assert_true(ok("  7 km \t", SW_UNIT_LENGTH) == 7000.0);
    assert_true(ok("7\tkm", SW_UNIT_LENGTH) == 7000.0);
    assert_true(ok("1e3 m", SW_UNIT_LENGTH) == 1000.0);
    assert_true(ok("2.5E-1 km", SW_UNIT_LENGTH) == 250.0);
    assert_true(ok("+4", SW_UNIT_NONE) == 4.0);
    assert_true(ok(".5", SW_UNIT_NONE) == 0.5);
    assert_true(ok("5.", SW_UNIT_NONE) == 5.0);
    assert_true(ok("-3.25 m", SW_UNIT_LENGTH) == -3.25);
    /* "-0" is zero, stored without its sign */
    double z = ok("-0", SW_UNIT_NONE);
    assert_true(z == 0.0);
    assert_false(signbit(z));
    /* the tiniest double still parses; underflow to zero is not an error */
    assert_true(ok("1e-400", SW_UNIT_NONE) == 0.0);
}

static void test_bad_units_list_the_accepted(void **state)
{
    (void)state;
    bad("5 kn", SW_UNIT_LENGTH, "unknown unit 'kn' (accepted: m, km)");
    bad("5 KM", SW_UNIT_LENGTH, "unknown unit 'KM' (accepted: m, km)");
    bad("2 hours", SW_UNIT_TIME, "unknown unit 'hours' (accepted: s, min, h, d)");
    bad("2 ms", SW_UNIT_TIME, "(accepted: s, min, h, d)");
    bad("1 rad", SW_UNIT_ANGLE, "unknown unit 'rad' (accepted: deg)");
    bad("0.9 m", SW_UNIT_NONE, "unexpected 'm' after the number (accepted: a plain number, no unit)");
    bad("5 e", SW_UNIT_LENGTH, "unknown unit 'e'");
}

static void test_bad_forms(void **state)
{
    (void)state;
    bad("", SW_UNIT_LENGTH, "no value");
    bad("   ", SW_UNIT_TIME, "no value");
    bad(NULL, SW_UNIT_TIME, "no value");
    bad("km", SW_UNIT_LENGTH, "no number before 'km'");
    bad("12,5 km", SW_UNIT_LENGTH, "use '.' as the decimal point");
    bad("nan", SW_UNIT_NONE, "not a finite number");
    bad("NaN m", SW_UNIT_LENGTH, "not a finite number");
    bad("inf", SW_UNIT_NONE, "not a finite number");
    bad("-Infinity", SW_UNIT_NONE, "not a finite number");
    bad("1e400", SW_UNIT_NONE, "too large");
    bad("1e306 km", SW_UNIT_LENGTH, "too large");   /* finite as written, 1e309 m is not */
    bad("0x10", SW_UNIT_NONE, "unexpected 'x10'");
    bad("2 h 30 min", SW_UNIT_TIME, "unexpected '30 min' after the unit");
    bad("--1", SW_UNIT_NONE, "not a number");
    bad(".", SW_UNIT_NONE, "not a number");
    bad("e5", SW_UNIT_NONE, "no number before 'e5'");
    bad("1 2", SW_UNIT_NONE, "unexpected '2'");
}

static void test_accepted_and_small_buffers(void **state)
{
    (void)state;
    assert_string_equal(sw_units_accepted(SW_UNIT_LENGTH), "m, km");
    assert_string_equal(sw_units_accepted(SW_UNIT_TIME), "s, min, h, d");
    assert_string_equal(sw_units_accepted(SW_UNIT_ANGLE), "deg");
    assert_string_equal(sw_units_accepted(SW_UNIT_NONE), "no unit");
    /* a tiny or missing cause buffer is fine */
    char why[4];
    double v;
    assert_int_equal(sw_units_parse("3 parsecs", SW_UNIT_LENGTH, &v, why, sizeof why), -1);
    assert_int_equal(strlen(why), 3);
    assert_int_equal(sw_units_parse("3 parsecs", SW_UNIT_LENGTH, &v, NULL, 0), -1);
    /* a very long number is refused, not overflowed */
    char longnum[300];
    memset(longnum, '1', sizeof longnum - 1);
    longnum[sizeof longnum - 1] = '\0';
    bad(longnum, SW_UNIT_NONE, "the number has 299 characters");
}

/* Positions: a length (m, km; SI Brochure k = 1e3), an angle (deg, kept as degrees) or a bare number, with
 * the kind written reported; anything else refused naming the three units. */
static void test_positions(void **state)
{
    (void)state;
    static const struct {
        const char *text;
        double value;
        sw_unit_kind written;
    } ok_cases[] = {
        { "12.5 km", 12500.0, SW_UNIT_LENGTH }, { "-300 m", -300.0, SW_UNIT_LENGTH }, { "1e3m", 1000.0, SW_UNIT_LENGTH },
        { "172.5 deg", 172.5, SW_UNIT_ANGLE },  { " -41.25deg ", -41.25, SW_UNIT_ANGLE }, { "359.75", 359.75, SW_UNIT_NONE },
        { "-0", 0.0, SW_UNIT_NONE },
    };
    for (size_t i = 0; i < sizeof ok_cases / sizeof ok_cases[0]; i++) {
        double v = NAN;
        sw_unit_kind w = SW_UNIT_TIME;
        char why[256] = "";
        if (sw_units_parse_position(ok_cases[i].text, &v, &w, why, sizeof why) != 0)
            fail_msg("'%s' refused: %s", ok_cases[i].text, why);
        assert_true(v == ok_cases[i].value);
        assert_int_equal(w, ok_cases[i].written);
        if (v == 0)
            assert_false(signbit(v));   /* -0 is +0, as for every value */
    }
    static const struct {
        const char *text, *want;
    } bad_cases[] = {
        { "5 kn", "unknown unit 'kn' (accepted: m, km, deg)" },
        { "5 degrees", "unknown unit 'degrees' (accepted: m, km, deg)" },
        { "deg", "no number before 'deg' (accepted: a number, then one of m, km, deg)" },
        { "1 deg 2", "unexpected '2' after the unit" },
        { "", "no value (accepted: a number with an optional unit: m, km, deg)" },
        { "nan deg", "is not a finite number" },
    };
    for (size_t i = 0; i < sizeof bad_cases / sizeof bad_cases[0]; i++) {
        double v = 7.0;
        sw_unit_kind w = SW_UNIT_TIME;
        char why[256] = "";
        assert_int_equal(sw_units_parse_position(bad_cases[i].text, &v, &w, why, sizeof why), -1);
        assert_true(v == 7.0 && w == SW_UNIT_TIME);   /* untouched */
        if (!strstr(why, bad_cases[i].want))
            fail_msg("'%s': cause '%s' lacks '%s'", bad_cases[i].text, why, bad_cases[i].want);
    }
    double v;
    assert_int_equal(sw_units_parse_position("3 km", &v, NULL, NULL, 0), 0);   /* written and why optional */
    assert_true(v == 3000.0);
    /* the plain parser still refuses deg for a length */
    assert_int_equal(sw_units_parse("3 deg", SW_UNIT_LENGTH, &v, NULL, 0), -1);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_each_unit),
        cmocka_unit_test(test_bare_numbers_and_spacing),
        cmocka_unit_test(test_bad_units_list_the_accepted),
        cmocka_unit_test(test_bad_forms),
        cmocka_unit_test(test_accepted_and_small_buffers),
        cmocka_unit_test(test_positions),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
