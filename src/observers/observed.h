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
} sw_map_set;

#endif
