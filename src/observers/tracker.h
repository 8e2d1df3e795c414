/* tracker.h - arrival time and extremes at every cell centre, updated as the run goes.
 *
 * No history is kept: after each step the tracker compares the new centre values with what it holds.
 * Arrival is the first time |eta| >= the threshold (the initial state counts, at t = 0).
 */
#ifndef SW_TRACKER_H
#define SW_TRACKER_H

#include "model/model.h"
#include "observers/observed.h"
#include "base/status.h"

typedef struct sw_tracker sw_tracker;

/* Creates a tracker for model m (already holding its initial state, at time 0) with arrival
 * threshold threshold_m (> 0), with row buffers for n_threads threads (a larger team is served one
 * thread at a time; sw_tracker_attach sizes them to the team). *out is NULL on failure. */
sw_status sw_tracker_create(const sw_model *m, double threshold_m, int n_threads, sw_tracker **out,
                            sw_error *err);

/* Folds the model's current state (at sw_model_time(m)) into the maps. Orphaned `omp for` over rows:
 * call from every thread of a parallel region (thread t uses buffer t), or outside one. */
void sw_tracker_update(sw_tracker *t, const sw_model *m);

/* Makes every sw_model_step of m fold the new state into t, row by row as the step finishes them
 * (model.h, sw_row_observer): the same maps as sw_tracker_update after each step, without reading
 * the state again. Gives t buffers for omp_get_max_threads() threads (and the model room for rows'
 * values for as many): set the thread count first. t must outlive the attachment;
 * sw_tracker_attach(NULL, m, err) detaches. Call outside parallel regions. A model has one observer:
 * attaching replaces the previous one. SW_OK, or SW_ERR_NOMEM (then nothing is attached). */
sw_status sw_tracker_attach(sw_tracker *t, sw_model *m, sw_error *err);

/* The row observer sw_tracker_attach sets (ctx: the tracker), for an observer of one's own that also
 * calls it (sw_run: the tracker and the gauges). Attach first, which sizes the tracker's buffers. */
void sw_tracker_observe(void *ctx, const sw_model *m, size_t j, double time_s, const sw_row_values *pre);

/* Segments (rows cut into SW_OBS_SEG cells) the updates have looked at, and how many of them had their
 * maps rewritten, since creation: the share of the grid where the maps were still changing. */
void sw_tracker_segments(const sw_tracker *t, long long *seen, long long *updated);

/* Converts the running maps to double and points maps' arrays at them (valid until
 * sw_tracker_free); land cells and never-reached arrivals read NaN. depth_m is the caller's
 * still-water depth [ny * nx], stored in maps->depth_m. Returns SW_ERR_NOMEM on failure. */
sw_status sw_tracker_maps(sw_tracker *t, const sw_model *m, const double *depth_m, sw_map_set *maps, sw_error *err);

/* Largest |eta| seen at any cell, m (land cells stay 0). */
double sw_tracker_max_abs(const sw_tracker *t);

/* 1 if any update met a NaN or Inf elevation (the run blew up), else 0. Call outside parallel regions. */
int sw_tracker_nonfinite(const sw_tracker *t);

/* As sw_tracker_nonfinite, and when it is 1 the earliest state's time where a thread met it into *time_s
 * and the lowest grid row (0 .. ny-1) where one did at that time into *row. Cheap (one flag per thread):
 * sw_run asks after every step (or sweep of several steps), so that a run that blows up stops at once
 * and names the step where it did. */
int sw_tracker_nonfinite_row(const sw_tracker *t, size_t *row, double *time_s);

/* Grid-scale noise index of the eta_max map: the RMS of eta_max minus its
 * 1-2-1 smoothed copy (separable, weights 1/4, 1/2, 1/4 along x and y), over water cells whose eight
 * neighbours are water, divided by the RMS of eta_max there. The smoother removes the 2-cell wave
 * completely and passes long waves almost untouched, so the index measures energy near the 2 dx
 * wavenumber: near 0 for a smooth field, larger where a layout lets grid-scale modes grow.
 * Returns 0 when no cell qualifies. */
double sw_tracker_noise(const sw_tracker *t, const unsigned char *wet);

#define SW_TRACKER_STATE_PARTS 9   /* parts sw_tracker_state_parts gives */

/* The memory holding the tracker's state, for a checkpoint (run/checkpoint.h): ptr[k], bytes[k] for
 * SW_TRACKER_STATE_PARTS parts in this order: the running maps eta_max, eta_min, arrival, eta_max_time,
 * speed2_max (float [ny * nx] each), the segments' summaries, and the counts of sw_tracker_segments and
 * sw_tracker_nonfinite (long long, long long, int). First gathers the threads' counts into the first
 * thread's (their sums and sw_tracker_segments stay the same), so that the parts hold them all.
 * Writing a saved state into the parts of a tracker made for the same model, between steps, restores it
 * whatever the thread count. Returns SW_TRACKER_STATE_PARTS. Call outside parallel regions or from one
 * thread between steps. */
size_t sw_tracker_state_parts(sw_tracker *t, void **ptr, size_t *bytes);

void sw_tracker_free(sw_tracker *t);

/* Bytes per grid cell the tracker holds while a run goes (its running maps; sw_tracker_maps adds the
 * double maps the writers take, 5 x 8 bytes per cell, counted apart). */
size_t sw_tracker_bytes_per_cell(void);

#endif
