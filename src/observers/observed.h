/* observed.h - what the observers hand over at the end of a run: the maps and the gauge series.
 *
 * The tracker (tracker.h) fills an sw_map_set and the gauges (gauges.h) an sw_gauge_table; the
 * writers (outputs/ncwrite.h) and a run's sink (run/run.h) consume them. Both are views: the arrays
 * belong to whoever filled them and stay valid as that owner's header says.
 */
#ifndef SW_OBSERVED_H
#define SW_OBSERVED_H

#include <stddef.h>

#include "base/grid.h"

/* Gauge series in memory, station-major: value of station s at time index t is [s * n_times + t]. */
typedef struct {
    size_t n_stations;          /* gauges */
    size_t n_times;             /* samples per gauge */
    const char *const *names;   /* [n_stations] station names */
    const double *x_m, *y_m;    /* [n_stations] positions, m */
    const double *depth_m;      /* [n_stations] still-water depth at the gauge, m (<= 0 on land) */
    const double *time_s;       /* [n_times] seconds since the origin */
    const double *eta_m;        /* [n_stations * n_times] sea-surface elevation, m */
    const double *u_ms;         /* [n_stations * n_times] x velocity, m/s */
    const double *v_ms;         /* [n_stations * n_times] y velocity, m/s */
    const double *air_pressure_pa; /* [n_stations * n_times] air pressure at sea level, Pa; NULL when the run
                                    * has no atmosphere ([storm] or [weather]) */
    const double *wind_u_ms;    /* [n_stations * n_times] 10 m wind along x (east), m/s; NULL likewise */
    const double *wind_v_ms;    /* [n_stations * n_times] 10 m wind along y (north), m/s; NULL likewise */
} sw_gauge_table;

/* Maps at cell centres, each [ny * nx], row j at [j * nx]. Values on land cells (wet[k] == 0) and
 * arrival where never reached are NaN here (the writers store them as _FillValue). */
typedef struct {
    const sw_grid *grid;          /* the grid the maps are on */
    const double *depth_m;        /* still-water depth, positive down (land negative), written everywhere */
    const unsigned char *wet;     /* 1 = water cell in the model, 0 = land */
    const double *eta_max_m;      /* highest eta reached, m */
    const double *eta_min_m;      /* lowest eta reached, m */
    const double *arrival_s;      /* first time |eta| >= threshold, s since the origin; NaN if never */
    const double *eta_max_time_s; /* time of eta_max, s since the origin */
    const double *speed_max_ms;   /* highest current speed, m/s */
    const double *wind_max_ms;    /* highest 10 m wind speed the water felt, m/s; NULL without an atmosphere */
    const double *air_pressure_min_pa; /* lowest air pressure the water felt, Pa; NULL likewise */
    size_t n_track;               /* points of the storm's track (0 without a storm) */
    const double *track_time_s;   /* [n_track] times, s since the origin, from 0 to the end of the run */
    const double *track_x_m, *track_y_m; /* [n_track] the storm's centre at those times, m (as the run
                                   * moved it: [storm] shifts and factors applied) */
    const double *track_p_pa;     /* [n_track] its central pressure, Pa */
} sw_map_set;

#endif
