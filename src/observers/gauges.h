/* gauges.h - time series of eta, u and v at named points, sampled during the run.
 *
 * A gauge value is the bilinear interpolation of the four surrounding cell-centre values, with land
 * cells left out and the weights of the water cells renormalised; a gauge with no water cell
 * around it records NaN. Near the domain edge the nearest centres are used (constant extrapolation).
 */
#ifndef SW_GAUGES_H
#define SW_GAUGES_H

#include <stddef.h>

#include "model/model.h"
#include "observers/observed.h"
#include "inputs/scenario.h"
#include "base/status.h"

typedef struct sw_gauges sw_gauges;

/* Creates a recorder for the n gauges in specs on model m's grid, with room for max_samples samples.
 * depth_m [ny * nx] is the still-water depth, used for each gauge's depth (interpolated over all
 * four cells, land included). *out is NULL on failure. */
sw_status sw_gauges_create(const sw_model *m, const double *depth_m, const sw_gauge_spec *specs, size_t n,
                           size_t max_samples, sw_gauges **out, sw_error *err);

/* Records one sample of every gauge at the model's current time. Call from one thread.
 * Returns SW_ERR_USAGE (recording nothing) when the capacity is used up. */
sw_status sw_gauges_sample(sw_gauges *gs, const sw_model *m, sw_error *err);

/* Makes room for the air pressure and 10 m wind at every gauge (a run with an atmosphere). Call once,
 * before the first sample. SW_OK or SW_ERR_NOMEM. */
sw_status sw_gauges_enable_air(sw_gauges *gs, sw_error *err);

/* Stores the air pressure (Pa) and 10 m wind (m/s) of every gauge ([n] each) for the sample just
 * taken (after sw_gauges_sample). Ignored when sw_gauges_enable_air was not called. */
void sw_gauges_put_air(sw_gauges *gs, const double *p_pa, const double *u10_ms, const double *v10_ms);

/* Follows every gauge's elevation at the model's current time (call at time 0 and after every step,
 * from one thread): first arrival (the time |eta| first reaches threshold_m, interpolated linearly
 * between the two steps around the crossing), highest and lowest elevation and their times.
 * Reads only the four cell-centre elevations, so it is cheap enough for every step. */
void sw_gauges_watch(sw_gauges *gs, const sw_model *m, double threshold_m);

/* sw_gauges_watch for the gauges whose stencil's lower row is grid row j (sw_gauges_row: the row that
 * decides which rank of a split run samples a gauge), at time_s, the previous watch having been at
 * prev_time_s: for a row observer (model.h) during steps that finish rows of several steps before the
 * clock moves (sw_model_steps). The elevations at the centres of rows j and j + 1 must be those of time_s
 * (the wavefront observes row j after its continuity has passed the rows above that those read, and keeps
 * them until every observer of that step's row j has returned: stepper.h). Calls for
 * different rows may run in different threads at once; calls for one row come in time order. After the
 * steps, sw_gauges_watched gives the last step's time to the next sw_gauges_watch. The same values, bit
 * for bit, as sw_gauges_watch after each step. */
void sw_gauges_watch_row(sw_gauges *gs, const sw_model *m, size_t j, double time_s, double prev_time_s,
                         double threshold_m);
void sw_gauges_watched(sw_gauges *gs, double time_s);

/* What sw_gauges_watch found for gauge q. Times in s; arrival NaN when never reached; all NaN
 * for a dry gauge. */
typedef struct {
    double arrival_s, peak_m, peak_time_s, trough_m, trough_time_s;
} sw_gauge_stats;
sw_gauge_stats sw_gauges_stats(const sw_gauges *gs, size_t q);

/* Name of gauge q. */
const char *sw_gauges_name(const sw_gauges *gs, size_t q);

/* Ends recording and gives a table view for the writer, valid until sw_gauges_free. The series are
 * compacted, so no sample may be taken afterwards (sw_gauges_sample then fails). */
void sw_gauges_table(sw_gauges *gs, sw_gauge_table *out);

/* Still-water depth at gauge q, m (negative on land). */
double sw_gauges_depth(const sw_gauges *gs, size_t q);

/* 1 if no water cell surrounds gauge q (its series is NaN). */
int sw_gauges_dry(const sw_gauges *gs, size_t q);

/* The sampling schedule shared by gauges and snapshots (run.c observes, setup.c counts the same way):
 * after a sample at model time now_s, the next multiple of interval_s (s, > 0) to wait for, starting
 * from the previous one, next_s. Multiples within 1e-9 of the interval of now_s count as reached. An
 * observer samples at the first step at or after each multiple, so at most once per step: an interval
 * shorter than the step samples at every step. For an interval that needs more than a few additions
 * to pass now_s (shorter than a third of the step, or below the rounding of now_s) the result is the
 * next representable time after now_s (plus the interval when that is representable), which gives the
 * same samples, so the call always ends after at most 4 additions. Returns a time > now_s + 1e-9
 * interval_s. */
double sw_gauges_next_time(double next_s, double now_s, double interval_s);

/* Bilinear depth at (x, y) from a [ny * nx] field on grid g (for plans, before a model exists). */
double sw_gauges_depth_at(const sw_grid *g, const double *depth_m, double x_m, double y_m);

#define SW_GAUGES_STATE_PARTS 9   /* most parts sw_gauges_state_parts gives */

/* The memory holding the recorder's state, for a checkpoint (run/checkpoint.h): ptr[k], bytes[k] for up to
 * SW_GAUGES_STATE_PARTS parts in this order: the samples taken (size_t), their times, the eta, u, v series
 * (doubles, the whole capacity), what sw_gauges_watch keeps (the stats, the previous elevations and
 * time), and with sw_gauges_enable_air the air series. Writing a saved state into the parts of a recorder
 * made alike (same gauges, capacity, air) restores it. Returns the number of parts. */
size_t sw_gauges_state_parts(sw_gauges *gs, void **ptr, size_t *bytes);

/* The grid row of gauge q's lower stencil cells: its samples read that row and the next. */
size_t sw_gauges_row(const sw_gauges *gs, size_t q);

#define SW_GAUGES_STATION_PARTS 8   /* most parts sw_gauges_station_parts gives */

/* The memory holding what gauge q alone has recorded (the rest of sw_gauges_state_parts is the same for
 * every gauge): its eta, u, v series (the whole capacity), its stats and previous elevation, and with
 * sw_gauges_enable_air its pressure and wind series. Fills ptr[k], bytes[k]; returns the number of parts.
 * For a split run (run/split.h), whose gauges are sampled on different ranks. */
size_t sw_gauges_station_parts(sw_gauges *gs, size_t q, void **ptr, size_t *bytes);

void sw_gauges_free(sw_gauges *gs);

#endif
