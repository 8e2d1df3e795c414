/* ncsweep.h - the NetCDF files of a sensitivity sweep: one small file per finished member, and the
 * sweep file with a member dimension.
 *
 * Every file is written as "<path>.part" and renamed to <path> only once complete and closed, so a
 * file at <path> is always whole: a member file's presence is what marks the member finished. NaN
 * in the caller's arrays means "no value" and is written as the variable's _FillValue; readers
 * turn the _FillValue back into NaN. Doubles round-trip exactly. NetCDF-C is not thread-safe:
 * callers must not run these functions in several threads at once (the sweep serialises them).
 */
#ifndef SW_NCSWEEP_H
#define SW_NCSWEEP_H

#include <stddef.h>

#include "base/grid.h"
#include "base/status.h"
#include "inputs/crs.h"
#include "studies/sweep_member.h"

/* Quiets HDF5's automatic error printing in the calling thread. A thread-safe HDF5 keeps that switch
 * per thread, and netCDF turns it off only in the thread that first called it, so in other threads
 * HDF5 would print the harmless internal "attribute not found" stacks netCDF provokes while it
 * opens a file. Call once in each worker thread before its first NetCDF call. The switch is looked
 * up at run time in the already loaded HDF5 library; without it this does nothing. */
void sw_ncs_quiet_thread(void);

/* Writes member result r: status and error (global attributes), the member's parameter values
 * values[0 .. n_params), and when r->status == SW_OK its gauge statistics, gauge series and maps on
 * the base grid g. Returns SW_OK or SW_ERR_NOMEM / SW_ERR_IO / SW_ERR_NETCDF (then no file is left
 * at <path> or <path>.part). */
sw_status sw_ncs_member_write(const char *path, const sw_sweep_member_result *r, const double *values,
                              size_t n_params, const sw_grid *g, const char *caution, sw_error *err);

/* Reads a member file's status, error, parameter values (into values[0 .. n_params), which must be
 * the count the file has), gauge statistics and gauge series (not the maps) into r, whose arrays it
 * allocates (free with sw_sweep_member_result_free). n_gauges must match the file. Returns SW_OK,
 * SW_ERR_INPUT for a file of another shape, or SW_ERR_NETCDF / SW_ERR_NOMEM. */
sw_status sw_ncs_member_read(const char *path, size_t n_params, size_t n_gauges, double *values,
                             sw_sweep_member_result *r, sw_error *err);

/* Reads rows j0 .. j0 + n_rows - 1 of an ok member's maps (base grid g) into arrival_s and
 * eta_max_m (NaN for no value) and wet, each n_rows * g->nx long. */
sw_status sw_ncs_member_read_rows(const char *path, const sw_grid *g, size_t j0, size_t n_rows, double *arrival_s,
                                  double *eta_max_m, unsigned char *wet, sw_error *err);

/* Everything the sweep file holds. Arrays are member-major; NaN = no value. */
typedef struct {
    /* global attributes */
    const char *title, *history, *scenario_text, *version, *caution, *time_origin;
    const char *design;            /* "one-at-a-time", "factorial", "latin-hypercube" */
    const char *measure;           /* what the sensitivity variables hold (a sentence) */
    const char *map_method;        /* how member maps reach the base grid (a sentence) */
    unsigned long long seed;       /* Latin hypercube seed */
    int has_seed;                  /* 1: write sweep_seed */

    size_t n_params;
    const char *const *param_name; /* [n_params] as in [sweep] */
    const char *const *param_units;/* [n_params] "m", "s", "deg", "1" (dimensionless), "layout" */

    size_t n_members;
    const double *value;           /* [n_members * n_params] parameter values, base units */
    const char *const *value_text; /* [n_members * n_params] the same as text ("30 km", "C") */
    const unsigned char *failed;   /* [n_members] 1 = the member failed */
    const char *const *error;      /* [n_members] failure message, "" when ok */

    size_t n_gauges;               /* 0: no station variables */
    const char *const *gauge_name; /* [n_gauges] */
    const double *gauge_x, *gauge_y; /* [n_gauges] positions, m (written as station_lon, station_lat in
                                    * degrees on a geographic grid) */
    const double *arrival_s, *peak_m, *peak_time_s, *trough_m; /* [n_members * n_gauges] */
    size_t n_times;                /* longest gauge series of any member (>= 1) */
    const double *gauge_time_s;    /* [n_members * n_times] */
    const double *gauge_eta_m;     /* [n_members * n_gauges * n_times] */
    const double *arrival_sens, *peak_sens; /* [n_gauges * n_params] sensitivity (see measure) */
    const char *sens_units_arrival, *sens_units_peak; /* "s" / "m", or "1" for rank correlations */

    const sw_grid *grid;           /* the base grid; a geographic one gives the file lat, lon coordinates */
    const sw_crs *crs;             /* a projected base grid's coordinate reference (the seabed file's grid
                                    * mapping), copied into the variable crs; NULL or empty: none */
    const double *depth_m;         /* [ny * nx] base still-water depth, positive down */
    const double *arrival_earliest_s, *arrival_median_s, *arrival_latest_s, *arrival_spread_s; /* [ny * nx] */
    const double *eta_max_p50_m, *eta_max_p90_m, *eta_max_highest_m;  /* [ny * nx] */
    const int *members_wet, *members_reached;   /* [ny * nx] counts */
} sw_ncs_sweep;

/* Writes the sweep file (CF 1.11 attributes where they apply; the member dimension carries
 * standard_name "realization"). Its maps have the coordinates of outputs/ncwrite.h: x, y (m) on a
 * projected grid, with d->crs a variable crs (the input's grid mapping) named by every map's
 * grid_mapping; on a geographic grid lon, lat (degrees), a latitude_longitude crs on the model's sphere
 * and the gauges' station_lon, station_lat (degrees) in place of station_x, station_y. Member files
 * keep x, y in m (they are read back only by the sweep). Returns SW_OK or SW_ERR_USAGE / SW_ERR_NOMEM
 * / SW_ERR_IO / SW_ERR_NETCDF; then no file is left and an existing <path> is untouched. */
sw_status sw_ncs_sweep_write(const char *path, const sw_ncs_sweep *d, sw_error *err);

#endif
