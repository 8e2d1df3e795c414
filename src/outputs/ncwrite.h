/* ncwrite.h - CF-NetCDF writers for gauge series, maps and eta snapshots.
 *
 * Every file is written under "<path>.part" and renamed to <path> only once complete and closed,
 * so a failed or interrupted run never leaves a file that looks finished (and an existing file at
 * <path> is replaced only on success). All files are NetCDF-4, declare Conventions = "CF-1.11"
 * and carry the run's metadata and the caution as global attributes.
 */
#ifndef SW_NCWRITE_H
#define SW_NCWRITE_H

#include <stddef.h>

#include "base/grid.h"
#include "base/status.h"
#include "model/terms.h"
#include "observers/observed.h"   /* sw_gauge_table, sw_map_set */

/* Metadata written as global attributes of every file. Strings must not be NULL. */
typedef struct {
    const char *title;          /* scenario title */
    const char *history;        /* the command line that produced the file */
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
} sw_run_meta;

/* Writes the gauge file (CF discrete sampling geometry, featureType timeSeries): eta, u, v at each
 * gauge, and with an atmosphere (gt's air series not NULL) air_pressure, wind_east, wind_north. */
sw_status sw_ncw_gauges(const char *path, const sw_run_meta *meta, const sw_gauge_table *gt, sw_error *err);

/* Writes the map file: depth, wet, eta_max, eta_min, arrival_time, eta_max_time, speed_max; with an
 * atmosphere also wind_speed_max and air_pressure_min, and with a storm its track (storm_time,
 * storm_x, storm_y, storm_central_pressure along the dimension `track`). */
sw_status sw_ncw_maps(const char *path, const sw_run_meta *meta, const sw_map_set *maps, sw_error *err);

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
