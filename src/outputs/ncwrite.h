/* ncwrite.h - CF-NetCDF writers for gauge series, maps and eta snapshots.
 *
 * Every file is written under "<path>.part" and renamed to <path> only once complete and closed,
 * so a failed or interrupted run never leaves a file that looks finished (and an existing file at
 * <path> is replaced only on success). All files are NetCDF-4, declare Conventions = "CF-1.11"
 * and carry the run's metadata and the caution as global attributes.
 *
 * Coordinates (CF 1.11 sections 4 and 5.6), so that GIS tools (GDAL, QGIS) place the maps:
 *  - projected grid: dimensions and coordinates x, y (projection_x/y_coordinate, m); with a
 *    coordinate reference (sw_run_meta.crs, e.g. the seabed file's) a scalar variable `crs` holding
 *    every attribute of the input's grid mapping, and grid_mapping = "crs" on every gridded variable
 *    (and the gauge series); without one the files are as they always were;
 *  - geographic grid (sw_grid.kind): dimensions and coordinates lon, lat (longitude / latitude,
 *    degrees_east / degrees_north, the cell centres; longitudes increase eastward and may pass 180),
 *    a `crs` variable with grid_mapping_name = latitude_longitude on the model's sphere
 *    (semi_major_axis = radius_m, inverse_flattening = 0) and grid_mapping = "crs" on every gridded
 *    variable; gauge positions are lon, lat in degrees. A given sw_run_meta.crs is not used there.
 */
#ifndef SW_NCWRITE_H
#define SW_NCWRITE_H

#include <stddef.h>

#include "base/grid.h"
#include "base/status.h"
#include "inputs/crs.h"
#include "model/terms.h"
#include "observers/observed.h"   /* sw_gauge_table, sw_map_set */

/* Metadata written as global attributes of every file. Strings must not be NULL. */
typedef struct {
    const char *title;          /* scenario title */
    const char *history;        /* the command line that produced the file; written as the history
                                 * attribute after an ISO 8601 UTC timestamp (sw_ncw_history) */
    const char *scenario_text;  /* the whole scenario file, verbatim */
    const char *layout;         /* the layout's name (registry, model/layout.h) */
    const char *precision;      /* of the model state: "double" or "single" */
    const char *version;        /* shoreward version string */
    const char *caution;        /* the caution text (not a forecast ...) */
    const char *time_origin;    /* "YYYY-MM-DD HH:MM:SS": time units are "seconds since <origin>" */
    double dt_s;                /* time step, s */
    double courant;             /* Courant number sqrt(g h_max) dt / min(dx, dy) */
    double courant_limit;       /* the layout's limit of the same number */
    double arrival_threshold_m; /* |eta| threshold defining arrival, m */
    double gravity_ms2;         /* g, m s-2 */
    const sw_terms_config *terms; /* rotation and friction in force (NULL: none) */
    const char *forcing;        /* a line naming the storm, weather file or level series (NULL: none) */
    const sw_crs *crs;          /* the coordinate reference of a projected grid (the seabed file's grid
                                 * mapping), copied onto every file; NULL or empty: none. Unused on a
                                 * geographic grid, which writes its own */
    const sw_grid *grid;        /* the run's grid, for the gauge file: on a geographic grid the gauge
                                 * positions are written as lon, lat (degrees); NULL: projected. Maps and
                                 * snapshots use the grid they are given */
} sw_run_meta;

/* Writes the gauge file (CF discrete sampling geometry, featureType timeSeries): eta, u, v at each
 * gauge, and with an atmosphere (gt's air series not NULL) air_pressure, wind_east, wind_north. */
sw_status sw_ncw_gauges(const char *path, const sw_run_meta *meta, const sw_gauge_table *gt, sw_error *err);

/* Writes the map file: depth, wet, eta_max, eta_min, arrival_time, eta_max_time, speed_max; with an
 * atmosphere also wind_speed_max and air_pressure_min, and with a storm its track (storm_time,
 * storm_x, storm_y, storm_central_pressure along the dimension `track`; storm_lon, storm_lat in degrees
 * on a geographic grid). */
sw_status sw_ncw_maps(const char *path, const sw_run_meta *meta, const sw_map_set *maps, sw_error *err);

/* The CF history line (CF 1.11 section 2.6.2: "a list of the applications that have modified the
 * original data", each conventionally preceded by a timestamp) for `command` run now:
 * "YYYY-MM-DDTHH:MM:SSZ: <command>" in UTC (ISO 8601). Needs command (NULL is taken as "").
 * Returns a new string the caller frees, or NULL when out of memory or the clock is unreadable. */
char *sw_ncw_history(const char *command);

/* Keeps HDF5 (under NetCDF-4) from installing its exit handler, H5_term_library. After a failed close
 * (a full disk) HDF5 keeps a half-closed file in its table, and that handler crashed on it at exit
 * (SIGSEGV in H5F__close_cb, exit status 139, after the error had been reported). Without the handler
 * nothing is flushed at exit, which is what every writer here wants: a file is complete only once
 * closed and renamed. Must run before the first NetCDF call of the process to take effect (the command
 * line calls it first thing); later calls do nothing. Never fails. */
void sw_ncw_no_exit_handler(void);

/* Snapshots of eta written as the run goes (unlimited time dimension). */
typedef struct sw_ncw_snapshots sw_ncw_snapshots;

/* Creates "<path>.part" with x, y, depth and an empty eta(time, y, x). *out receives the handle,
 * owned by the caller and released by _commit or _abort. On failure *out is NULL and no file is left. */
sw_status sw_ncw_snapshots_open(const char *path, const sw_run_meta *meta, const sw_grid *g,
                                const double *depth_m, const unsigned char *wet,
                                sw_ncw_snapshots **out, sw_error *err);
/* Appends one snapshot: eta_m is [ny * nx], NaN on land (written as _FillValue). */
sw_status sw_ncw_snapshots_append(sw_ncw_snapshots *s, double t_s, const double *eta_m, sw_error *err);
/* Closes the file and renames it to <path>; frees s (also on failure, after removing the .part). */
sw_status sw_ncw_snapshots_commit(sw_ncw_snapshots *s, sw_error *err);
/* Closes and removes the .part file, frees s. s may be NULL. */
void sw_ncw_snapshots_abort(sw_ncw_snapshots *s);

#endif
