/* units.h - numbers with optional units ("2 h", "12.5 km", "30") converted to SI.
 *
 * Each key of the scenario has a kind; a bare number takes the kind's base unit.
 *   length:   m, km                 (base m)
 *   time:     s, min, h, d          (base s)
 *   angle:    deg                   (base deg)
 *   rate:     s-1, /s, h-1, /h      (base s-1)
 *   speed:    m/s, cm/s, mm/s       (base m/s)
 *   none:     no unit allowed
 * A position (sw_units_parse_position) is a length or an angle: m, km or deg, or a bare number whose
 * meaning the grid decides (metres on a projected grid, degrees on a geographic one).
 */
#ifndef SW_UNITS_H
#define SW_UNITS_H

typedef enum { SW_UNIT_NONE = 0, SW_UNIT_LENGTH, SW_UNIT_TIME, SW_UNIT_ANGLE, SW_UNIT_RATE, SW_UNIT_SPEED } sw_unit_kind;

/* Parses `text` (leading/trailing blanks allowed) as a finite number with an optional unit of
 * `kind`. On success stores the value in base units in *out and returns 0. On failure returns -1
 * and writes a short cause into why (size why_size), e.g. "unknown unit 'kn' (accepted: m, km)". */
int sw_units_parse(const char *text, sw_unit_kind kind, double *out, char *why, unsigned why_size);

/* As sw_units_parse for a position or spacing that may be a length or an angle: units m, km or deg.
 * On success stores the value in *out (m for m and km, deg for deg, the number itself when bare), in
 * *written the kind of the unit written (SW_UNIT_LENGTH, SW_UNIT_ANGLE, or SW_UNIT_NONE for a bare
 * number; written may be NULL) and returns 0. On failure returns -1 with the cause in why (the accepted
 * units "m, km, deg" named), *out and *written untouched. */
int sw_units_parse_position(const char *text, double *out, sw_unit_kind *written, char *why, unsigned why_size);

/* The accepted units of a kind as a human list, e.g. "m, km". */
const char *sw_units_accepted(sw_unit_kind kind);

#endif
