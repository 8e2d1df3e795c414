/* gridded.h - gridded 10 m wind and sea-level air pressure read from a CF NetCDF file, one time slab at a time.
 *
 * A weather file (docs/weather-file.md) holds three variables with dimensions (time, y, x), found by
 * their CF standard_name: eastward_wind and northward_wind (m s-1 or knots) and
 * air_pressure_at_mean_sea_level (Pa, hPa, mbar). Its x and y axes are 1D coordinates in m or km,
 * strictly increasing but not necessarily evenly spaced; its time axis is "UNIT since DATE". Opening
 * the file checks all of that once and keeps only the axes; values are then read one time slab at a
 * time (sw_weather_read), converted to SI units, so memory stays at a few slabs whatever the file's
 * length (the library's chunk cache of each variable is sized to the chunks of one slab, so chunks
 * already read do not pile up). Interpolation in space is bilinear on the file's own grid
 * (sw_weather_row, sw_weather_point); interpolating between two slabs in time is the caller's
 * business (sw_weather_locate finds them).
 *
 * Threads: NetCDF-C is not thread safe, so sw_weather_open, sw_weather_read and sw_weather_write must
 * not run beside any other NetCDF call (parallel callers wrap them in `omp critical(sw_netcdf)`, as the
 * sweep does; these functions do not take that lock themselves). Everything that only reads an open
 * sw_weather and a filled slab (count, time, locate, covers, row, point) is thread safe.
 */
#ifndef SW_GRIDDED_H
#define SW_GRIDDED_H

#include <stddef.h>

#include "base/grid.h"
#include "base/status.h"

/* An open weather file and its checked axes (opaque; gridded.c). */
typedef struct sw_weather sw_weather;

/* One time slab on the file's own grid, values in SI units. Arrays are row by row, index j * nx + i,
 * j along the file's y axis (north), i along its x axis (east). */
typedef struct {
    double time_s;  /* time of the slab, s since the scenario's origin */
    size_t index;   /* its time index in the file */
    size_t nx, ny;  /* the file's grid: points along x and y */
    float *u;       /* [ny * nx] eastward 10 m wind, m/s */
    float *v;       /* [ny * nx] northward 10 m wind, m/s */
    float *p;       /* [ny * nx] air pressure at mean sea level, Pa */
} sw_weather_slab;

/* Opens the weather file at `path` and checks it: the three variables (by standard_name), their
 * units, dimensions (time, y, x), the coordinate variables of the three axes, the time units and
 * calendar, strictly increasing times and coordinates, and that the file's x/y extent (first to last
 * coordinate) contains every cell centre of model_grid (within 1e-6 of a model cell). The file's times
 * are converted to seconds since `origin` ("YYYY-MM-DD HH:MM:SS", the scenario's time origin; proleptic
 * Gregorian calendar, UTC).
 * Needs: path, origin, model_grid (nx, ny >= 1, dx, dy > 0) and out not NULL.
 * Returns SW_OK with *out open (close with sw_weather_close); on failure *out = NULL, the file is closed
 * and err holds one line starting with the path: SW_ERR_IO (cannot open), SW_ERR_INPUT (the file's
 * content: a missing variable, units, dimensions, axes, coverage), SW_ERR_NETCDF (the library failed),
 * SW_ERR_USAGE (arguments, a malformed origin), SW_ERR_NOMEM.
 * Damaged files: the first open of a file runs in an isolated child that also reads every slab
 * (base/isolate.h); a crash, hang or runaway allocation of the library there is SW_ERR_INPUT naming the
 * file (SW_ERR_IO when no child can be started, SW_ERR_INTERRUPTED on Ctrl-C); an error of a slab is
 * left to sw_weather_read. */
sw_status sw_weather_open(const char *path, const char *origin, const sw_grid *model_grid, sw_weather **out,
                          sw_error *err);

/* Number of time slabs in the file (>= 1). */
size_t sw_weather_count(const sw_weather *w);

/* Time of slab k (k < sw_weather_count), s since the origin given to sw_weather_open; NaN for k out of
 * range. */
double sw_weather_time(const sw_weather *w, size_t k);

/* The slab pair around t_s: k with time(k) <= t_s <= time(k + 1), for interpolating in time. Times
 * before the first slab give 0, times after the last give count - 2 (0 when the file has one slab). */
size_t sw_weather_locate(const sw_weather *w, double t_s);

/* The file's grid size (points along x and y) into *nx, *ny (either may be NULL). */
void sw_weather_size(const sw_weather *w, size_t *nx, size_t *ny);

/* The path the file was opened from (valid until sw_weather_close). */
const char *sw_weather_path(const sw_weather *w);

/* Checks that the file's times cover a run from t0_s to t1_s (s since the origin, t0_s <= t1_s).
 * Returns SW_OK, or SW_ERR_INPUT with "PATH: the file covers A .. B s (DATE .. DATE) but the run needs
 * C .. D s (DATE .. DATE)". */
sw_status sw_weather_covers(const sw_weather *w, double t0_s, double t1_s, sw_error *err);

/* Allocates the three arrays of slab s for w's grid (index = SIZE_MAX and time_s = NaN until read).
 * Returns SW_OK, or SW_ERR_NOMEM with s's arrays NULL. Free with sw_weather_slab_free. */
sw_status sw_weather_slab_alloc(const sw_weather *w, sw_weather_slab *s, sw_error *err);

/* Frees the arrays of s and sets them to NULL. s may be NULL, or already freed. */
void sw_weather_slab_free(sw_weather_slab *s);

/* Reads time slab k (k < count) into s (allocated for w), one nc_get_vara_float per variable: unpacks
 * scale_factor / add_offset, converts to m/s and Pa, and sets s->time_s and s->index.
 * Returns SW_OK; or SW_ERR_INPUT when the slab holds a _FillValue, a missing_value, NaN or Inf, naming
 * the variable, the time (index and seconds) and the first bad point as VAR[k][j][i]; SW_ERR_NETCDF
 * when the library fails; SW_ERR_USAGE for k out of range. After a failure the slab's values are
 * unspecified (index = SIZE_MAX). Not thread safe (NetCDF). */
sw_status sw_weather_read(sw_weather *w, size_t k, sw_weather_slab *s, sw_error *err);

/* Bilinear values of slab s at the n points (x0_m + i dx_m, y_m), i = 0 .. n-1, into p_pa (Pa),
 * u10_ms and v10_ms (m/s), n floats each; a NULL output is skipped. Points beyond the file's extent
 * take the value at its edge (constant extrapolation; after sw_weather_open's check only points half
 * a model cell outside the outermost cell centres, i.e. on the model's border, can be there).
 * Needs dx_m > 0 for the fast path (any other dx_m is served point by point). Cost: one interval
 * search for the first point, then O(n + file points along the row): no search per point.
 * Thread safe: reads w and s only. */
void sw_weather_row(const sw_weather *w, const sw_weather_slab *s, double y_m, double x0_m, double dx_m, size_t n,
                    float *p_pa, float *u10_ms, float *v10_ms);

/* Bilinear values of slab s at one point (clamped to the file's extent like sw_weather_row), in
 * double: air pressure (Pa) and wind (m/s) into *p_pa, *u10_ms, *v10_ms (a NULL output is skipped).
 * Thread safe. */
void sw_weather_point(const sw_weather *w, const sw_weather_slab *s, double x_m, double y_m, double *p_pa,
                      double *u10_ms, double *v10_ms);

/* Closes the file and frees w. w may be NULL. */
void sw_weather_close(sw_weather *w);

/* Fills slab k of a file being written, on the file's grid g (cell centres, row by row j * nx + i):
 * air pressure (Pa) and 10 m wind (m/s) at time_s (s since the origin). Returns SW_OK, or a failure
 * recorded in err (the writer then stops and leaves no file). Values must be finite. */
typedef sw_status (*sw_weather_fill_fn)(void *ctx, size_t k, double time_s, const sw_grid *g, float *p_pa,
                                        float *u10_ms, float *v10_ms, sw_error *err);

/* Writes a weather file at `path` that sw_weather_open reads: the three variables (float, CF
 * standard_name, units "m s-1" and "Pa", long_name, _FillValue; one compressed chunk per slab), x and y
 * coordinates in m at the cell centres of file_grid with axis attributes, a 10 m height coordinate,
 * a time axis "seconds since ORIGIN" (proleptic Gregorian) holding times_s, and the global attributes
 * Conventions = "CF-1.11", title, caution and source. Slab k is filled by fill(ctx, k, times_s[k], ...),
 * one slab in memory at a time. The file is written as "<path>.part" and renamed to path only when
 * complete (atomic_file.h).
 * Needs: file_grid with nx, ny >= 2 and dx, dy > 0; n_times >= 1 strictly increasing finite times_s;
 * origin "YYYY-MM-DD HH:MM:SS"; title and caution text (caution may be NULL: no attribute); fill.
 * Returns SW_OK; or SW_ERR_USAGE (arguments), SW_ERR_RANGE (a non-finite value from fill, named by
 * slab and [j][i]), fill's own failure, SW_ERR_IO / SW_ERR_NETCDF / SW_ERR_NOMEM; on failure no file
 * is left at path's .part and an existing file at path is untouched. */
sw_status sw_weather_write(const char *path, const sw_grid *file_grid, const double *times_s, size_t n_times,
                           const char *origin, const char *title, const char *caution, sw_weather_fill_fn fill,
                           void *ctx, sw_error *err);

#endif
