/* test_civil_time.c - the proleptic Gregorian calendar of base/civil_time.h: day counts both ways, leap
 * years, month lengths, date and time parsing (with time zones), CF time units and date formatting,
 * with the messages of the bad inputs.
 *
 * Sources: the proleptic Gregorian calendar (a year is a leap year when divisible by 4, except centuries
 * not divisible by 400), from which every day count below is [derived] by hand in its comment; CF
 * Conventions, section 4.4 "Time Coordinate" (units "UNIT since DATE") [memory]; ISO 8601 time-zone
 * offsets (local time = UTC + offset) [memory].
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>

#include "base/civil_time.h"

#define DAY 86400.0

/* |got - want| <= tol, reporting both values (this cmocka has no assert_double_equal). */
#define assert_near(got, want, tol) near_check((got), (want), (tol), __FILE__, __LINE__)
static void near_check(double got, double want, double tol, const char *file, int line)
{
    if (!(fabs(got - want) <= tol)) {
        print_error("%.17g != %.17g (tolerance %g)\n", got, want, tol);
        _fail(file, line);
    }
}

/* Day counts from the Gregorian rules, each [derived] by hand. */
static void test_days_from_civil(void **state)
{
    (void)state;
    assert_int_equal(sw_days_from_civil(1970, 1, 1), 0);             /* the epoch */
    assert_int_equal(sw_days_from_civil(1969, 12, 31), -1);
    assert_int_equal(sw_days_from_civil(1970, 3, 1), 31 + 28);
    assert_int_equal(sw_days_from_civil(2000, 1, 1), 30 * 365 + 7);  /* leap years 1972 .. 1996: 7 */
    /* 0001-01-01: 1969 years of 365 days + 477 leap days (492 - 19 + 4) before 1970 */
    assert_int_equal(sw_days_from_civil(1, 1, 1), -(1969 * 365 + 477));
    /* a 400-year cycle has 400 * 365 + 97 days */
    assert_int_equal(sw_days_from_civil(2400, 1, 1) - sw_days_from_civil(2000, 1, 1), 146097);
    assert_int_equal(sw_days_from_civil(1600, 1, 1) - sw_days_from_civil(1200, 1, 1), 146097);
    /* leap days: 2000 and 2024 have one, 1900 and 2100 none */
    assert_int_equal(sw_days_from_civil(2000, 3, 1) - sw_days_from_civil(2000, 2, 28), 2);
    assert_int_equal(sw_days_from_civil(2024, 3, 1) - sw_days_from_civil(2024, 2, 28), 2);
    assert_int_equal(sw_days_from_civil(1900, 3, 1) - sw_days_from_civil(1900, 2, 28), 1);
    assert_int_equal(sw_days_from_civil(2100, 3, 1) - sw_days_from_civil(2100, 2, 28), 1);
    assert_int_equal(sw_days_from_civil(2001, 1, 1) - sw_days_from_civil(2000, 1, 1), 366);
    assert_int_equal(sw_days_from_civil(1901, 1, 1) - sw_days_from_civil(1900, 1, 1), 365);
    /* every day of 1999 .. 2001 follows the previous one */
    static const int mdays[12] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
    int64_t prev = sw_days_from_civil(1998, 12, 31);
    for (int y = 1999; y <= 2001; y++)
        for (int m = 1; m <= 12; m++)
            for (int d = 1; d <= mdays[m - 1] + (m == 2 && y == 2000); d++) {
                int64_t k = sw_days_from_civil(y, m, d);
                assert_int_equal(k, prev + 1);
                prev = k;
            }
}

static void test_datetime_parse(void **state)
{
    (void)state;
    double s;
    char why[200];
    const double d2000 = (30 * 365 + 7) * DAY;   /* 2000-01-01 [derived above] */
    assert_int_equal(sw_datetime_parse("2000-01-01 00:00:00", &s, why, sizeof why), 0);
    assert_near(s, d2000, 0);
    assert_int_equal(sw_datetime_parse("2000-01-01", &s, why, sizeof why), 0);
    assert_near(s, d2000, 0);
    assert_int_equal(sw_datetime_parse("2000-01-01 06:00", &s, why, sizeof why), 0);
    assert_near(s, d2000 + 21600, 0);
    assert_int_equal(sw_datetime_parse("2000-1-1T6:30:15.5Z", &s, why, sizeof why), 0);
    assert_near(s, d2000 + 6 * 3600 + 30 * 60 + 15.5, 1e-6);
    assert_int_equal(sw_datetime_parse("2000-01-01 00:00:00 UTC", &s, why, sizeof why), 0);
    assert_near(s, d2000, 0);
    assert_int_equal(sw_datetime_parse("2000-02-29 00:00:00", &s, why, sizeof why), 0);   /* 2000 is a leap year */
    assert_near(s, d2000 + 59 * DAY, 0);

    assert_int_equal(sw_datetime_parse("2001-02-29 00:00:00", &s, why, sizeof why), -1);
    assert_string_equal(why, "no such date (2001-02-29)");
    assert_int_equal(sw_datetime_parse("1900-02-29", &s, why, sizeof why), -1);
    assert_string_equal(why, "no such date (1900-02-29)");
    assert_int_equal(sw_datetime_parse("2000-13-01", &s, why, sizeof why), -1);
    assert_string_equal(why, "no such date (2000-13-01)");
    assert_int_equal(sw_datetime_parse("2000-01-01 24:00:00", &s, why, sizeof why), -1);
    assert_string_equal(why, "no such time of day (24:00:00; accepted: 00:00:00 .. 23:59:59)");
    /* an offset east of UTC: local midnight at +01:00 is 23:00 UTC the day before (ISO 8601 [memory]) */
    assert_int_equal(sw_datetime_parse("2000-01-01 00:00:00 +01:00", &s, why, sizeof why), 0);
    assert_near(s, d2000 - 3600, 0);
    assert_int_equal(sw_datetime_parse("2000-01-01 12:00 -0930", &s, why, sizeof why), 0);
    assert_near(s, d2000 + 12 * 3600 + 9.5 * 3600, 0);
    assert_int_equal(sw_datetime_parse("2000-01-01  T06:00", &s, why, sizeof why), 0);   /* blanks before 'T' */
    assert_near(s, d2000 + 21600, 0);
    assert_int_equal(sw_datetime_parse("0000-03-01", &s, why, sizeof why), 0);   /* year 0 is accepted */
    assert_near(s, (double)sw_days_from_civil(0, 3, 1) * DAY, 0);
    assert_int_equal(sw_datetime_parse("2000-01-01 00:00:00 +15:00", &s, why, sizeof why), -1);
    assert_string_equal(why, "'2000-01-01 00:00:00 +15:00': time zone offset not understood (accepted: Z, UTC, "
                             "+HH[:MM], -HH[:MM] up to 14:00)");
    assert_int_equal(sw_datetime_parse("2000-01-01 00:00:00.", &s, why, sizeof why), -1);
    assert_string_equal(why, "'2000-01-01 00:00:00.' is not a date and time (accepted: YYYY-MM-DD[ HH:MM[:SS]])");
    assert_int_equal(sw_datetime_parse(NULL, &s, why, sizeof why), -1);
    assert_string_equal(why, "no date");
    assert_int_equal(sw_datetime_parse("01/01/2000", &s, why, sizeof why), -1);
    assert_string_equal(why, "'01/01/2000' is not a date (accepted: YYYY-MM-DD[ HH:MM[:SS]])");
    assert_int_equal(sw_datetime_parse("2000-01-01 00", &s, why, sizeof why), -1);
    assert_string_equal(why, "'2000-01-01 00' is not a date and time (accepted: YYYY-MM-DD[ HH:MM[:SS]])");
}

/* CF time units "UNIT since DATE" (CF Conventions 4.4 [memory]). */
static void test_time_units_parse(void **state)
{
    (void)state;
    double u, o;
    char why[300];
    const double d2000 = (30 * 365 + 7) * DAY;
    assert_int_equal(sw_time_units_parse("hours since 2000-01-01 06:00", &u, &o, NULL, why, sizeof why), 0);
    assert_near(u, 3600, 0);
    assert_near(o, d2000 + 21600, 0);
    assert_int_equal(sw_time_units_parse("seconds since 1970-01-01T00:00:00Z", &u, &o, NULL, why, sizeof why), 0);
    assert_near(u, 1, 0);
    assert_near(o, 0, 0);
    assert_int_equal(sw_time_units_parse(" Days since 1900-03-01", &u, &o, NULL, why, sizeof why), 0);
    assert_near(u, DAY, 0);
    /* 1900-03-01: 70 years back minus 17 leap days (1904 .. 1968) and Jan, Feb 1900 (31 + 28) */
    assert_near(o, -(70.0 * 365 + 17 - 59) * DAY, 0);
    assert_int_equal(sw_time_units_parse("minutes since 2000-01-01", &u, &o, NULL, why, sizeof why), 0);
    assert_near(u, 60, 0);
    /* the shorter words gridded weather files use, and the date as written */
    sw_civil_time t;
    assert_int_equal(sw_time_units_parse("HRS since 2000-01-01 12:00:00 +02:00", &u, &o, &t, why, sizeof why), 0);
    assert_near(u, 3600, 0);
    assert_near(o, d2000 + 10 * 3600, 0);   /* 12:00 at +02:00 is 10:00 UTC */
    assert_int_equal(t.year, 2000);
    assert_int_equal(t.month, 1);
    assert_int_equal(t.day, 1);
    assert_int_equal(t.hour, 12);
    assert_near(t.zone_s, 7200, 0);
    assert_int_equal(sw_time_units_parse("secs since 1970-01-01", &u, &o, NULL, why, sizeof why), 0);
    assert_near(u, 1, 0);
    assert_int_equal(sw_time_units_parse("mins since 1970-01-01", &u, &o, NULL, why, sizeof why), 0);
    assert_near(u, 60, 0);

    assert_int_equal(sw_time_units_parse("fortnights since 2000-01-01", &u, &o, NULL, why, sizeof why), -1);
    assert_string_equal(why, "unknown time unit 'fortnights' in 'fortnights since 2000-01-01' (accepted: UNIT since "
                             "YYYY-MM-DD[ HH:MM[:SS]], UNIT seconds, minutes, hours or days)");
    assert_int_equal(sw_time_units_parse("hours after 2000-01-01", &u, &o, NULL, why, sizeof why), -1);
    assert_string_equal(why, "time units 'hours after 2000-01-01' are not 'UNIT since DATE' (accepted: UNIT since "
                             "YYYY-MM-DD[ HH:MM[:SS]], UNIT seconds, minutes, hours or days)");
    assert_int_equal(sw_time_units_parse("hours since 2000-02-30", &u, &o, NULL, why, sizeof why), -1);
    assert_string_equal(why, "time units 'hours since 2000-02-30': no such date (2000-02-30)");
}

/* Leap years and month lengths by the Gregorian rule [derived]. */
static void test_leap_years(void **state)
{
    (void)state;
    assert_int_equal(sw_is_leap_year(2000), 1);   /* a century divisible by 400 */
    assert_int_equal(sw_is_leap_year(1900), 0);   /* a century not divisible by 400 */
    assert_int_equal(sw_is_leap_year(2024), 1);
    assert_int_equal(sw_is_leap_year(2023), 0);
    assert_int_equal(sw_is_leap_year(0), 1);      /* year 0 is divisible by 400 */
    assert_int_equal(sw_days_in_month(2024, 2), 29);
    assert_int_equal(sw_days_in_month(2100, 2), 28);
    assert_int_equal(sw_days_in_month(2001, 4), 30);
    assert_int_equal(sw_days_in_month(2001, 12), 31);
    assert_int_equal(sw_days_in_month(2001, 0), 0);
    assert_int_equal(sw_days_in_month(2001, 13), 0);
    /* 400 years hold 146097 days: the month lengths add up to the day count [derived above] */
    int64_t total = 0;
    for (int64_t y = 2000; y < 2400; y++)
        for (int m = 1; m <= 12; m++)
            total += sw_days_in_month(y, m);
    assert_int_equal(total, 146097);
}

/* civil_from_days inverts days_from_civil on every day of 1599 .. 2401 (centuries and leap days). */
static void test_civil_from_days(void **state)
{
    (void)state;
    int64_t y;
    int m, d;
    sw_civil_from_days(0, &y, &m, &d);
    assert_int_equal(y, 1970);
    assert_int_equal(m, 1);
    assert_int_equal(d, 1);
    sw_civil_from_days(-1, &y, &m, &d);
    assert_int_equal(y, 1969);
    assert_int_equal(m, 12);
    assert_int_equal(d, 31);
    sw_civil_from_days(30 * 365 + 7 + 59, &y, &m, &d);   /* 2000-01-01 + 59 days = 2000-02-29 [derived] */
    assert_int_equal(y, 2000);
    assert_int_equal(m, 2);
    assert_int_equal(d, 29);
    for (int64_t z = sw_days_from_civil(1599, 1, 1); z <= sw_days_from_civil(2401, 12, 31); z++) {
        sw_civil_from_days(z, &y, &m, &d);
        assert_true(m >= 1 && m <= 12 && d >= 1 && d <= sw_days_in_month(y, m));
        assert_int_equal(sw_days_from_civil(y, m, d), z);
    }
}

/* Formatting: the inverse of parsing, rounded down to a second. */
static void test_datetime_format(void **state)
{
    (void)state;
    char buf[32];
    const double d2000 = (30 * 365 + 7) * DAY;   /* 2000-01-01 [derived above] */
    sw_datetime_format(d2000 + 59 * DAY + 3 * 3600 + 4 * 60 + 5.9, buf, sizeof buf);
    assert_string_equal(buf, "2000-02-29 03:04:05");
    sw_datetime_format(-0.5, buf, sizeof buf);
    assert_string_equal(buf, "1969-12-31 23:59:59");
    sw_datetime_format(NAN, buf, sizeof buf);
    assert_string_equal(buf, "(no date)");
    sw_datetime_format(1e13, buf, sizeof buf);   /* beyond 9999-12-31 */
    assert_string_equal(buf, "(no date)");
    double s;
    assert_int_equal(sw_datetime_parse("1582-10-15 12:30:00", &s, NULL, 0), 0);
    sw_datetime_format(s, buf, sizeof buf);
    assert_string_equal(buf, "1582-10-15 12:30:00");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_days_from_civil),
        cmocka_unit_test(test_leap_years),
        cmocka_unit_test(test_civil_from_days),
        cmocka_unit_test(test_datetime_parse),
        cmocka_unit_test(test_time_units_parse),
        cmocka_unit_test(test_datetime_format),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
