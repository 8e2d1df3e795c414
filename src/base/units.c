/* units.c - numbers with optional units converted to SI (see units.h).
 *
 * A value is: blanks, a plain decimal number (optional sign, digits with an optional fraction,
 * optional exponent; no hexadecimal, no "inf" or "nan"), optional blanks, an optional unit word of
 * letters (for rates and speeds also '/', and '-' and digits after the first character: "s-1",
 * "m/s"), blanks. The number times the unit's factor must be finite. Anything else is refused
 * with a cause a user can act on; nothing here allocates.
 */
#include "base/units.h"

#include <ctype.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

typedef struct {
    const char *name;   /* as written after the number */
    double factor;      /* base units per one of this unit */
    sw_unit_kind kind;  /* the kind it measures (a position's table holds two kinds) */
} unit_def;

/* Factors from the SI Brochure (BIPM, 9th ed., 2019): km = 1e3 m; Table 8: min = 60 s, h = 3600 s,
 * d = 86400 s. Angles stay in degrees. */
#define L SW_UNIT_LENGTH
static const unit_def LENGTH_UNITS[] = { { "m", 1.0, L }, { "km", 1e3, L }, { NULL, 0.0, L } };
static const unit_def TIME_UNITS[] = { { "s", 1.0, SW_UNIT_TIME }, { "min", 60.0, SW_UNIT_TIME },
                                       { "h", 3600.0, SW_UNIT_TIME }, { "d", 86400.0, SW_UNIT_TIME },
                                       { NULL, 0.0, SW_UNIT_TIME } };
static const unit_def ANGLE_UNITS[] = { { "deg", 1.0, SW_UNIT_ANGLE }, { NULL, 0.0, SW_UNIT_ANGLE } };
/* Rates (a Coriolis parameter) and speeds (a friction rate): compound units of the same factors. */
static const unit_def RATE_UNITS[] = { { "s-1", 1.0, SW_UNIT_RATE }, { "/s", 1.0, SW_UNIT_RATE },
                                       { "h-1", 1.0 / 3600, SW_UNIT_RATE }, { "/h", 1.0 / 3600, SW_UNIT_RATE },
                                       { NULL, 0.0, SW_UNIT_RATE } };
static const unit_def SPEED_UNITS[] = { { "m/s", 1.0, SW_UNIT_SPEED }, { "cm/s", 1e-2, SW_UNIT_SPEED },
                                        { "mm/s", 1e-3, SW_UNIT_SPEED }, { NULL, 0.0, SW_UNIT_SPEED } };
/* A position: a length on a projected grid, an angle (longitude, latitude) on a geographic one. */
static const unit_def POSITION_UNITS[] = { { "m", 1.0, L }, { "km", 1e3, L }, { "deg", 1.0, SW_UNIT_ANGLE },
                                           { NULL, 0.0, SW_UNIT_NONE } };
#undef L
#define POSITION_ACCEPTED "m, km, deg"

static const unit_def *units_of(sw_unit_kind kind)
{
    switch (kind) {
    case SW_UNIT_LENGTH: return LENGTH_UNITS;
    case SW_UNIT_TIME: return TIME_UNITS;
    case SW_UNIT_ANGLE: return ANGLE_UNITS;
    case SW_UNIT_RATE: return RATE_UNITS;
    case SW_UNIT_SPEED: return SPEED_UNITS;
    case SW_UNIT_NONE: break;
    }
    return NULL;
}

const char *sw_units_accepted(sw_unit_kind kind)
{
    switch (kind) {
    case SW_UNIT_LENGTH: return "m, km";
    case SW_UNIT_TIME: return "s, min, h, d";
    case SW_UNIT_ANGLE: return "deg";
    case SW_UNIT_RATE: return "s-1, /s, h-1, /h";
    case SW_UNIT_SPEED: return "m/s, cm/s, mm/s";
    case SW_UNIT_NONE: break;
    }
    return "no unit";
}

/* Length of the plain decimal number at the start of s, 0 if there is none. An 'e' that is not
 * followed by digits is not part of the number (it is then read as a unit and refused). */
static size_t scan_decimal(const char *s)
{
    size_t i = 0, digits = 0;
    if (s[i] == '+' || s[i] == '-')
        i++;
    while (isdigit((unsigned char)s[i])) {
        i++;
        digits++;
    }
    if (s[i] == '.') {
        i++;
        while (isdigit((unsigned char)s[i])) {
            i++;
            digits++;
        }
    }
    if (digits == 0)
        return 0;
    if (s[i] == 'e' || s[i] == 'E') {
        size_t j = i + 1;
        if (s[j] == '+' || s[j] == '-')
            j++;
        if (isdigit((unsigned char)s[j])) {
            while (isdigit((unsigned char)s[j]))
                j++;
            i = j;
        }
    }
    return i;
}

/* 1 if s starts with the lower-case word w in any case ("NaN", "Inf"). */
static int starts_with_nocase(const char *s, const char *w)
{
    for (; *w; s++, w++)
        if (tolower((unsigned char)*s) != *w)
            return 0;
    return 1;
}

/* printf-style into why (if any); always returns -1 so callers write `return refuse(...)`. */
static int refuse(char *why, unsigned why_size, const char *fmt, ...) __attribute__((format(printf, 3, 4)));

static int refuse(char *why, unsigned why_size, const char *fmt, ...)
{
    if (why && why_size > 0) {
        va_list ap;
        va_start(ap, fmt);
        vsnprintf(why, why_size, fmt, ap);
        va_end(ap);
    }
    return -1;
}

/* Parses text as a number with an optional unit of the table `units` (NULL: no unit allowed), listed
 * as `accepted` in messages; `compound` allows '/', '-' and digits in the unit word. On success stores
 * the value times the unit's factor in *out, the unit in *unit (NULL for a bare number) and returns 0;
 * on failure returns -1 with the cause in why. */
static int parse_value(const char *text, const unit_def *units, const char *accepted, int compound, double *out,
                       const unit_def **unit, char *why, unsigned why_size)
{
    const int no_unit = units == NULL;
    if (!text)
        return refuse(why, why_size, "no value");
    while (isspace((unsigned char)*text))
        text++;
    size_t end = strlen(text);
    while (end > 0 && isspace((unsigned char)text[end - 1]))
        end--;
    if (end == 0)
        return refuse(why, why_size, "no value (accepted: a number%s%s)",
                      no_unit ? "" : " with an optional unit: ", no_unit ? "" : accepted);

    size_t n = scan_decimal(text);
    if (n == 0) {
        const char *t = text + (text[0] == '+' || text[0] == '-');
        if (starts_with_nocase(t, "nan") || starts_with_nocase(t, "inf"))
            return refuse(why, why_size, "'%.*s' is not a finite number", (int)end, text);
        if (isalpha((unsigned char)*t))
            return refuse(why, why_size, "no number before '%.*s' (accepted: a number, then %s%s)", (int)end,
                          text, no_unit ? "" : "one of ", accepted);
        return refuse(why, why_size, "'%.*s' is not a number", (int)end, text);
    }
    char num[128];
    if (n >= sizeof num)
        return refuse(why, why_size, "the number has %zu characters (accepted: at most %zu)", n, sizeof num - 1);
    memcpy(num, text, n);
    num[n] = '\0';
    double v = strtod(num, NULL);   /* num holds exactly a decimal number, so strtod reads all of it */

    /* the unit: letters, then only blanks */
    const char *rest = text + n;
    const char *rest_end = text + end;
    while (rest < rest_end && isspace((unsigned char)*rest))
        rest++;
    const char *word = rest;
    /* compound units (rates, speeds) may hold '/', '-' and digits after their first character */
    while (rest < rest_end && (isalpha((unsigned char)*rest) || (compound && (*rest == '/' || (rest > word
           && (*rest == '-' || isdigit((unsigned char)*rest)))))))
        rest++;
    int word_len = (int)(rest - word);
    if (rest < rest_end) {   /* something that is not a unit word */
        int junk_len = (int)(rest_end - rest);
        if (word_len == 0 && *rest == ',' && isdigit((unsigned char)rest[1]))
            return refuse(why, why_size, "unexpected '%.*s' after the number (use '.' as the decimal point)",
                          junk_len, rest);
        if (word_len == 0 || !isspace((unsigned char)*rest))   /* "x10": not a word */
            return refuse(why, why_size, "unexpected '%.*s' after the number", junk_len + word_len, word);
        while (isspace((unsigned char)*rest)) {
            rest++;
            junk_len--;
        }
        return refuse(why, why_size, "unexpected '%.*s' after the unit (write one number and one unit)",
                      junk_len, rest);
    }

    double factor = 1.0;
    const unit_def *found = NULL;
    if (word_len > 0) {
        const unit_def *u = units;
        if (!u)
            return refuse(why, why_size, "unexpected '%.*s' after the number (accepted: a plain number, no unit)",
                          word_len, word);
        for (; u->name; u++)
            if (strlen(u->name) == (size_t)word_len && strncmp(u->name, word, (size_t)word_len) == 0)
                break;
        if (!u->name)
            return refuse(why, why_size, "unknown unit '%.*s' (accepted: %s)", word_len, word, accepted);
        factor = u->factor;
        found = u;
    }
    v *= factor;
    if (!isfinite(v))
        return refuse(why, why_size, "'%.*s' is too large to represent", (int)end, text);
    if (out)
        *out = v + 0.0;   /* + 0.0 turns -0 into +0 */
    if (unit)
        *unit = found;
    return 0;
}

int sw_units_parse(const char *text, sw_unit_kind kind, double *out, char *why, unsigned why_size)
{
    return parse_value(text, units_of(kind), sw_units_accepted(kind), kind == SW_UNIT_RATE || kind == SW_UNIT_SPEED,
                       out, NULL, why, why_size);
}

int sw_units_parse_position(const char *text, double *out, sw_unit_kind *written, char *why, unsigned why_size)
{
    const unit_def *u = NULL;
    double v;
    if (parse_value(text, POSITION_UNITS, POSITION_ACCEPTED, 0, &v, &u, why, why_size) != 0)
        return -1;
    if (out)
        *out = v;
    if (written)
        *written = u ? u->kind : SW_UNIT_NONE;
    return 0;
}
