/* civil_time.c - proleptic Gregorian dates and CF time units (see civil_time.h).
 *
 * The day counts are H. Hinnant's "days_from_civil" / "civil_from_days" ("chrono-Compatible Low-Level
 * Date Algorithms"): years start on 1 March, so the leap day ends a year; eras are the 400-year
 * Gregorian cycles of 146097 days.
 */
#include "base/civil_time.h"

#include <ctype.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

int sw_is_leap_year(int64_t y) { return (y % 4 == 0 && y % 100 != 0) || y % 400 == 0; }

int sw_days_in_month(int64_t y, int m)
{
    static const int mdays[12] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
    if (m < 1 || m > 12)
        return 0;
    return mdays[m - 1] + (m == 2 && sw_is_leap_year(y));
}

int64_t sw_days_from_civil(int64_t y, int m, int d)
{
    y -= m <= 2;
    const int64_t era = (y >= 0 ? y : y - 399) / 400;
    const int64_t yoe = y - era * 400;                                    /* [0, 399] */
    const int64_t doy = (153 * (m > 2 ? m - 3 : m + 9) + 2) / 5 + d - 1;  /* [0, 365] */
    const int64_t doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;            /* [0, 146096] */
    return era * 146097 + doe - 719468;
}

void sw_civil_from_days(int64_t z, int64_t *y, int *m, int *d)
{
    z += 719468;
    const int64_t era = (z >= 0 ? z : z - 146096) / 146097;
    const int64_t doe = z - era * 146097;                                        /* [0, 146096] */
    const int64_t yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;   /* [0, 399] */
    const int64_t doy = doe - (365 * yoe + yoe / 4 - yoe / 100);                 /* [0, 365] */
    const int64_t mp = (5 * doy + 2) / 153;                                      /* [0, 11] */
    *d = (int)(doy - (153 * mp + 2) / 5 + 1);
    *m = (int)(mp < 10 ? mp + 3 : mp - 9);
    *y = yoe + era * 400 + (*m <= 2);
}

double sw_civil_seconds(const sw_civil_time *t)
{
    return (double)sw_days_from_civil(t->year, t->month, t->day) * 86400.0 + t->hour * 3600.0 + t->minute * 60.0 +
           t->second + t->fraction_s - t->zone_s;
}

/* Reads 1 to max_digits digits at *p into *v and advances *p. Returns 0, or -1 when there is no digit. */
static int ct_digits(const char **p, int max_digits, int *v)
{
    int k = 0, x = 0;
    while (k < max_digits && isdigit((unsigned char)(*p)[k])) {
        x = 10 * x + ((*p)[k] - '0');
        k++;
    }
    if (k == 0)
        return -1;
    *p += k;
    *v = x;
    return 0;
}

static int ct_refuse(char *why, size_t n, const char *fmt, ...) __attribute__((format(printf, 3, 4)));

/* printf-style into why (if any); always returns -1 so callers write `return ct_refuse(...)`. */
static int ct_refuse(char *why, size_t n, const char *fmt, ...)
{
    if (why && n > 0) {
        va_list ap;
        va_start(ap, fmt);
        vsnprintf(why, n, fmt, ap);
        va_end(ap);
    }
    return -1;
}

/* Case-insensitive equality of two ASCII strings. */
static int ct_same_word(const char *a, const char *b)
{
    for (; *a && *b; a++, b++)
        if (tolower((unsigned char)*a) != tolower((unsigned char)*b))
            return 0;
    return *a == *b;
}

#define CT_NOT_TIME "'%.40s' is not a date and time (accepted: " SW_DATE_FORM ")"

int sw_civil_parse(const char *text, sw_civil_time *out, char *why, size_t n)
{
    if (!text)
        return ct_refuse(why, n, "no date");
    const char *p = text;
    while (isspace((unsigned char)*p))
        p++;
    int y, mo, d, h = 0, mi = 0, se = 0;
    double frac = 0.0;
    if (ct_digits(&p, 4, &y) || *p++ != '-' || ct_digits(&p, 2, &mo) || *p++ != '-' || ct_digits(&p, 2, &d))
        return ct_refuse(why, n, "'%.40s' is not a date (accepted: " SW_DATE_FORM ")", text);
    /* the time: blanks and/or a 'T', then HH:MM[:SS[.fff]] */
    const char *q = p;
    while (*q == ' ')
        q++;
    if (*q == 'T')
        q++;
    if (q > p && isdigit((unsigned char)*q)) {
        p = q;
        if (ct_digits(&p, 2, &h) || *p++ != ':' || ct_digits(&p, 2, &mi))
            return ct_refuse(why, n, CT_NOT_TIME, text);
        if (*p == ':') {
            p++;
            if (ct_digits(&p, 2, &se))
                return ct_refuse(why, n, CT_NOT_TIME, text);
            if (*p == '.') {
                const char *f = ++p;
                double scale = 0.1;
                while (isdigit((unsigned char)*p)) {
                    frac += scale * (*p - '0');
                    scale *= 0.1;
                    p++;
                }
                if (p == f)
                    return ct_refuse(why, n, CT_NOT_TIME, text);
            }
        }
    }
    /* the time zone: Z, UTC, +HH[:MM], -HH[:MM] */
    double zone_s = 0.0;
    while (*p == ' ')
        p++;
    if (*p == 'Z') {
        p++;
    } else if (strncmp(p, "UTC", 3) == 0) {
        p += 3;
    } else if (*p == '+' || *p == '-') {
        int sign = *p++ == '-' ? -1 : 1, zh, zm = 0;
        int bad = ct_digits(&p, 2, &zh) != 0;
        if (!bad && *p == ':')
            p++;
        if (!bad && isdigit((unsigned char)*p))
            bad = ct_digits(&p, 2, &zm) != 0;
        if (bad || zh > 14 || zm > 59)
            return ct_refuse(why, n, "'%.40s': time zone offset not understood (accepted: Z, UTC, +HH[:MM], "
                             "-HH[:MM] up to 14:00)", text);
        zone_s = sign * (zh * 3600.0 + zm * 60.0);
    }
    while (isspace((unsigned char)*p))
        p++;
    if (*p)
        return ct_refuse(why, n, CT_NOT_TIME, text);
    if (d < 1 || d > sw_days_in_month(y, mo))
        return ct_refuse(why, n, "no such date (%04d-%02d-%02d)", y, mo, d);
    if (h > 23 || mi > 59 || se > 59)
        return ct_refuse(why, n, "no such time of day (%02d:%02d:%02d; accepted: 00:00:00 .. 23:59:59)", h, mi, se);
    out->year = y;
    out->month = mo;
    out->day = d;
    out->hour = h;
    out->minute = mi;
    out->second = se;
    out->fraction_s = frac;
    out->zone_s = zone_s;
    return 0;
}

int sw_datetime_parse(const char *text, double *s_since_1970, char *why, size_t n)
{
    sw_civil_time t;
    if (sw_civil_parse(text, &t, why, n) != 0)
        return -1;
    *s_since_1970 = sw_civil_seconds(&t);
    return 0;
}

int sw_time_units_parse(const char *units, double *unit_s, double *origin_s_since_1970,
                        sw_civil_time *origin_or_null, char *why, size_t n)
{
    /* SI Brochure (BIPM, 9th ed., 2019): min = 60 s, h = 3600 s, d = 86400 s */
    static const struct {
        const char *name;
        double s;
    } words[] = {{"seconds", 1}, {"second", 1}, {"secs", 1}, {"sec", 1}, {"s", 1},
                 {"minutes", 60}, {"minute", 60}, {"mins", 60}, {"min", 60},
                 {"hours", 3600}, {"hour", 3600}, {"hrs", 3600}, {"hr", 3600}, {"h", 3600},
                 {"days", 86400}, {"day", 86400}, {"d", 86400}};
    if (!units)
        return ct_refuse(why, n, "no time units");
    const char *p = units;
    while (isspace((unsigned char)*p))
        p++;
    const char *w = p;
    while (isalpha((unsigned char)*p))
        p++;
    char word[16];
    size_t len = (size_t)(p - w);
    const char *form = "UNIT since " SW_DATE_FORM ", UNIT seconds, minutes, hours or days";
    if (len == 0 || len >= sizeof word)
        return ct_refuse(why, n, "time units '%.60s' are not 'UNIT since DATE' (accepted: %s)", units, form);
    memcpy(word, w, len);
    word[len] = '\0';
    size_t k = 0;
    while (k < sizeof words / sizeof words[0] && !ct_same_word(word, words[k].name))
        k++;
    if (k == sizeof words / sizeof words[0])
        return ct_refuse(why, n, "unknown time unit '%s' in '%.60s' (accepted: %s)", word, units, form);
    while (isspace((unsigned char)*p))
        p++;
    int since = isspace((unsigned char)p[5]) != 0;
    for (int c = 0; c < 5 && since; c++)
        since = tolower((unsigned char)p[c]) == "since"[c];
    if (!since)
        return ct_refuse(why, n, "time units '%.60s' are not 'UNIT since DATE' (accepted: %s)", units, form);
    p += 5;
    char date_why[160];
    sw_civil_time t;
    if (sw_civil_parse(p, &t, date_why, sizeof date_why) != 0)
        return ct_refuse(why, n, "time units '%.60s': %s", units, date_why);
    *unit_s = words[k].s;
    *origin_s_since_1970 = sw_civil_seconds(&t);
    if (origin_or_null)
        *origin_or_null = t;
    return 0;
}

void sw_datetime_format(double epoch_s, char *buf, size_t n)
{
    if (!isfinite(epoch_s) || epoch_s < -62135596800.0 || epoch_s > 253402300799.0) {   /* years 1 .. 9999 */
        snprintf(buf, n, "(no date)");
        return;
    }
    int64_t t = (int64_t)floor(epoch_s);
    int64_t days = t >= 0 ? t / 86400 : -((-t + 86399) / 86400);
    int64_t rest = t - days * 86400;
    int64_t y;
    int m, d;
    sw_civil_from_days(days, &y, &m, &d);
    int hh = (int)(rest / 3600), mm = (int)(rest % 3600 / 60), ss = (int)(rest % 60);
    snprintf(buf, n, "%04lld-%02d-%02d %02d:%02d:%02d", (long long)y, m, d, hh, mm, ss);
}
