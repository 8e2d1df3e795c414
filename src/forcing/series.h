/* series.h - a time series of sea level (a tide or a remote surge) for an edge, read from a text table
 * or a NetCDF file and interpolated linearly in time.
 *
 * Text files (read with inputs/table_text.h; times count from the scenario's time origin):
 *
 *     # fictional tide at the west edge
 *     time[h]   elevation[m]
 *     0         0.12
 *     1         0.35
 *
 *   time        required; s, min, h, d
 *   elevation   required; m, cm
 *
 * NetCDF files (recognised by their first bytes, classic or HDF5-based): a 1D numeric variable along a
 * time dimension, chosen by name or, without a name, as the one variable whose standard_name is
 * sea_surface_height_above_mean_sea_level; units m or cm (metre(s), meter(s), centimetre(s) and
 * centimeter(s) too); _FillValue / missing_value / scale_factor / add_offset honoured. Its dimension
 * must have a 1D coordinate variable of the same name with CF units "UNIT since DATE":
 *   UNIT  seconds, minutes, hours, days (also second, minute, hour, day, s, min, h, d and the others
 *         of base/civil_time.h)
 *   DATE  YYYY-MM-DD[ HH:MM[:SS[.fff]]] (or a 'T' between date and time; an optional "Z", "UTC" or
 *         offset +HH[:MM] / -HH[:MM] from UTC), proleptic Gregorian (base/civil_time.h); a calendar
 *         attribute, if any, must be standard, gregorian or proleptic_gregorian (for the first two,
 *         the origin must not precede 1582-10-15).
 * Times are converted to seconds since the scenario's time origin ("YYYY-MM-DD HH:MM:SS").
 *
 * In both forms times must increase strictly, at least 2 values are needed, and a missing value (fill,
 * NaN) is an error naming its index.
 */
#ifndef SW_SERIES_H
#define SW_SERIES_H

#include <stddef.h>

#include "base/status.h"

#define SW_SEA_LEVEL_STANDARD_NAME "sea_surface_height_above_mean_sea_level"

/* A loaded sea-level series (opaque). */
typedef struct sw_series sw_series;

/* Reads the series in `path`. variable_or_null names the NetCDF variable (NULL or "": the one with
 * standard_name SW_SEA_LEVEL_STANDARD_NAME; ignored for text files). origin is the scenario's time origin
 * "YYYY-MM-DD HH:MM:SS" (needed for NetCDF files; may be NULL for text files, whose times count from it).
 * On success returns SW_OK and *out (free with sw_series_free). On failure *out = NULL and the status is
 * SW_ERR_IO (cannot open or read), SW_ERR_PARSE (a text table's form, an unreadable time unit or date),
 * SW_ERR_INPUT (NetCDF content: variable, dimensions, units, missing values, order of times),
 * SW_ERR_NETCDF, SW_ERR_USAGE (a bad origin) or SW_ERR_NOMEM, with a one-line message naming the file
 * (and the line, the variable or the index). A NetCDF file is read once first in an isolated child
 * (base/isolate.h): a crash, hang or runaway allocation of the library is SW_ERR_INPUT naming the file
 * (SW_ERR_IO when no child can be started, SW_ERR_INTERRUPTED on Ctrl-C). */
sw_status sw_series_load(const char *path, const char *variable_or_null, const char *origin, sw_series **out,
                         sw_error *err);

/* Frees a series; NULL is fine. */
void sw_series_free(sw_series *s);

/* Number of values (>= 2), first and last time (s since the scenario's origin). */
size_t sw_series_count(const sw_series *s);
double sw_series_t_first(const sw_series *s);
double sw_series_t_last(const sw_series *s);

/* SW_OK when the series spans t0_s .. t1_s; else SW_ERR_RANGE with e.g. "tide.nc: the series covers
 * 0 .. 43200 s but the run needs 0 .. 86400 s (add values up to at least 86400 s)". */
sw_status sw_series_covers(const sw_series *s, double t0_s, double t1_s, sw_error *err);

/* Sea level (m) at t_s, linear between values; the first or last value outside the span. Reads s only:
 * safe from several threads at once. */
double sw_series_at(const sw_series *s, double t_s);

#endif
