/* sweep_member.h - what one sweep member produced, on the base grid: the record a member file holds.
 *
 * The sweep (sweep.h) fills it by running a member (sw_sweep_member_run) and the sweep's files layer
 * (ncsweep.h) writes and reads it, so both include this header and the dependency points one way:
 * sweep -> ncsweep -> sweep_member, never back. Its functions live in sweep_member.c.
 */
#ifndef SW_SWEEP_MEMBER_H
#define SW_SWEEP_MEMBER_H

#include <stddef.h>

#include "base/status.h"
#include "inputs/scenario.h"   /* SW_MAX_GAUGES */

/* What one member produced, on the base grid. */
typedef struct {
    size_t index;             /* member number */
    sw_status status;         /* SW_OK, or why the member failed (SW_ERR_INTERRUPTED: not finished) */
    char error[SW_ERROR_MSG_MAX]; /* the failure, "" when ok */
    size_t n_gauges;          /* gauges of the base scenario */
    double arrival_s[SW_MAX_GAUGES];   /* first arrival, s since the origin (NaN: never, or dry) */
    double peak_m[SW_MAX_GAUGES];      /* highest elevation, m */
    double peak_time_s[SW_MAX_GAUGES]; /* when, s */
    double trough_m[SW_MAX_GAUGES];    /* lowest elevation, m */
    size_t n_times;           /* gauge samples */
    double *time_s;           /* [n_times] sample times, s (owned) */
    double *eta_m;            /* [n_gauges * n_times] gauge elevation, station-major, m (owned) */
    size_t n_cells;           /* cells of the base grid */
    double *arrival_map_s;    /* [n_cells] first arrival, s; NaN where never reached or land (owned) */
    double *eta_max_map_m;    /* [n_cells] highest elevation, m; NaN on land (owned) */
    unsigned char *wet;       /* [n_cells] 1 where the member has water at the base cell's centre (owned) */
    double dt_s;              /* its time step, s */
    long long steps;          /* steps taken */
    double wall_s;            /* wall-clock time of its run, s */
} sw_sweep_member_result;

/* Frees the arrays of r (not r itself) and zeroes them. r may be NULL. */
void sw_sweep_member_result_free(sw_sweep_member_result *r);

#endif
