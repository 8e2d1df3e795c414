/* civil_time.h - dates and times of the proleptic Gregorian calendar: day counts, leap years, and
 * parsing "YYYY-MM-DD[ HH:MM[:SS]]" dates and CF time units "UNIT since DATE" into seconds since
 * 1970-01-01 00:00:00 UTC.
 *
 * Accepted date and time text (leading and trailing blanks allowed, nothing else):
 *
 *     YYYY-MM-DD[( |T)HH:MM[:SS[.fff]]][ ][Z|UTC|+HH[:MM]|-HH[:MM]]
 *
 *   year 0 .. 9999 (1 to 4 digits); month, day, hour, minute, second 1 or 2 digits; hours 00 .. 23,
 *   minutes and seconds 00 .. 59; any blanks may stand between date and time (and before a 'T');
 *   the time-zone offset (hours 0 .. 14, minutes 0 .. 59) is that of the local time written from UTC,
 *   so "12:00 +02:00" is 10:00 UTC; "HHMM" without the colon is accepted too.
 *
 * Accepted CF time units (CF Conventions, sec. 4.4): "UNIT since DATE", UNIT (any case) one of
 * seconds, second, secs, sec, s, minutes, minute, mins, min, hours, hour, hrs, hr, h, days, day, d.
 * Every function here is pure (no state, no allocation) and safe from several threads at once.
 */
#ifndef SW_CIVIL_TIME_H
#define SW_CIVIL_TIME_H

#include <stddef.h>
#include <stdint.h>

/* The form of a date and time, for messages. */
#define SW_DATE_FORM "YYYY-MM-DD[ HH:MM[:SS]]"

/* A parsed date and time as written (local to its time zone). */
typedef struct {
    int64_t year;      /* 0 .. 9999 */
    int month;         /* 1 .. 12 */
    int day;           /* 1 .. days of that month */
    int hour;          /* 0 .. 23 (0 when no time was written) */
    int minute;        /* 0 .. 59 */
    int second;        /* 0 .. 59 */
    double fraction_s; /* fraction of the second, s, [0, 1) */
    double zone_s;     /* offset of the written time from UTC, s (+3600 for "+01:00"; 0 for none, Z, UTC) */
} sw_civil_time;

/* 1 when year y is a leap year of the proleptic Gregorian calendar (divisible by 4, except centuries
 * not divisible by 400), else 0. Any y. */
int sw_is_leap_year(int64_t y);

/* Days in month m (1 .. 12) of year y; 0 when m is out of range. */
int sw_days_in_month(int64_t y, int m);

/* Days from 1970-01-01 to year y, month m (1 .. 12), day d (1 .. 31), negative before it. Needs a valid
 * month; exact for any |y| below 10^15 (the algorithm "days_from_civil" of H. Hinnant,
 * "chrono-Compatible Low-Level Date Algorithms"). */
int64_t sw_days_from_civil(int64_t y, int m, int d);

/* The inverse: year, month (1 .. 12) and day of day z since 1970-01-01 into *y, *m, *d (same source). */
void sw_civil_from_days(int64_t z, int64_t *y, int *m, int *d);

/* Seconds since 1970-01-01 00:00:00 UTC of a parsed date and time (its zone taken off). */
double sw_civil_seconds(const sw_civil_time *t);

/* Parses a date and time of the accepted form (header) into *out. Returns 0 on success; -1 on failure
 * with *out unspecified and a one-line cause in why (size n; why may be NULL), one of
 *   "'TEXT' is not a date (accepted: YYYY-MM-DD[ HH:MM[:SS]])"
 *   "'TEXT' is not a date and time (accepted: YYYY-MM-DD[ HH:MM[:SS]])"
 *   "'TEXT': time zone offset not understood (accepted: Z, UTC, +HH[:MM], -HH[:MM] up to 14:00)"
 *   "no such date (2001-02-29)"
 *   "no such time of day (24:00:00; accepted: 00:00:00 .. 23:59:59)"
 * (TEXT is cut at 40 characters). text NULL gives "no date". */
int sw_civil_parse(const char *text, sw_civil_time *out, char *why, size_t n);

/* sw_civil_parse, then sw_civil_seconds into *s_since_1970. Same returns and causes. */
int sw_datetime_parse(const char *text, double *s_since_1970, char *why, size_t n);

/* Parses CF time units "UNIT since DATE" into the seconds per UNIT (*unit_s), the date's seconds since
 * 1970 (*origin_s_since_1970) and, when origin_or_null is not NULL, the date as written. Returns 0 on
 * success; -1 with a one-line cause in why (size n; may be NULL): "time units 'TEXT' are not 'UNIT since
 * DATE' (accepted: ...)", "unknown time unit 'WORD' in 'TEXT' (accepted: ...)" or "time units 'TEXT': "
 * followed by the date's cause (sw_civil_parse). */
int sw_time_units_parse(const char *units, double *unit_s, double *origin_s_since_1970,
                        sw_civil_time *origin_or_null, char *why, size_t n);

/* Writes the date and time epoch_s (s since 1970-01-01 00:00:00 UTC, rounded down to a second) as
 * "YYYY-MM-DD HH:MM:SS" into buf (size n, truncated to fit); "(no date)" outside the years 1 .. 9999
 * or when not finite. */
void sw_datetime_format(double epoch_s, char *buf, size_t n);

#endif
