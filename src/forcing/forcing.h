/* forcing.h - what drives the water after t = 0, stepped beside the model: a moving storm or a weather
 * file (wind stress and air pressure), and the sea level that `level` edges follow.
 *
 * The atmosphere reaches the model as slabs (model.h, sw_model_surface_build): the surface forcing at
 * two forcing times ta < tb around the step, linear in time between them. The forcing times are the
 * weather file's own times, or for a storm every [storm] update seconds (0, update, 2 update, ...).
 * A step from t_n to t_n+1 takes the forcing at t_n+1, the time of its new elevation, which is the
 * centre of its momentum update (forward-backward keeps the velocities half a step ahead), so the
 * forcing is placed in time to second order. A slab holds the 10 m wind turned into a stress by the
 * [wind] drag law, tau = rho_air C_D |U10| U10, and the air pressure as a head of water
 * (p - p_ref) / (rho_water g), p_ref the storm's ambient pressure or 1013.25 hPa for a file.
 * While it builds the slabs it also keeps, at every cell, the highest 10 m wind speed and the lowest
 * air pressure of the slab times up to the end of the run (linear in time between slabs, so these
 * are the extremes the water felt), and the wind and pressure at the gauges, for the outputs.
 *
 * Lifecycle: sw_forcing_create -> (sw_forcing_advance before every step) -> sw_forcing_maps,
 * sw_forcing_sample -> sw_forcing_free.
 */
#ifndef SW_FORCING_H
#define SW_FORCING_H

#include <stddef.h>

#include "base/status.h"
#include "inputs/scenario.h"
#include "forcing/storm.h"
#include "model/model.h"

typedef struct sw_forcing sw_forcing;

/* 1 when scenario sc asks for forcing (a storm, a weather file or a level series): sw_forcing_create then
 * makes one, which changes the model between every two steps. */
int sw_forcing_wanted(const sw_scenario *sc);

/* Reads what sc->forcing asks for (the storm's track, the weather file, the level series; relative paths
 * from sc->dir) for model m (its grid, layout, gravity, and Coriolis parameter for the storm's gradient
 * wind) and a run from 0 to duration_s, and checks that each covers the run. n_points points (x_m, y_m,
 * m) are sampled for sw_forcing_sample (the gauges; n_points may be 0). Room is made for slabs built by up
 * to omp_get_max_threads() threads: set the thread count before. m must have been made with
 * sc->terms.surface when there is a storm or a weather file.
 * Returns SW_OK with *out, or *out = NULL when the scenario has no forcing at all; on failure the
 * status with err naming the file and line (SW_ERR_IO, SW_ERR_PARSE, SW_ERR_RANGE, SW_ERR_INPUT,
 * SW_ERR_NETCDF, SW_ERR_NOMEM) and *out = NULL. Free with sw_forcing_free. */
sw_status sw_forcing_create(const sw_scenario *sc, const sw_model *m, double duration_s, const double *x_m,
                            const double *y_m, size_t n_points, sw_forcing **out, sw_error *err);

/* Frees f; NULL is fine. */
void sw_forcing_free(sw_forcing *f);

/* Readies the model for the step that ends at t_next_s: the slabs around t_next_s (building those it
 * lacks, reading a weather slab when needed), their weight, and the edges' level at t_next_s. Call from
 * every thread of a parallel region (or outside one) before sw_model_step; it ends with a barrier. A
 * failure (a weather slab that cannot be read) is kept: see sw_forcing_failed. */
void sw_forcing_advance(sw_forcing *f, sw_model *m, double t_next_s);

/* 1 when an advance failed (its cause copied into err when err is not NULL), else 0. */
int sw_forcing_failed(const sw_forcing *f, sw_error *err);

/* For a sweep of k steps over memory (model.h, sw_model_steps_forced) whose steps end at t_next_s[0 ..
 * k-1] (s, each computed as the run computes it): how many of them, from the first, take the slabs the
 * first one takes (at least 1; k without a storm or weather file). A sweep ends before a step that needs
 * new slabs. Reads f's fixed settings only: any thread may call it. */
int sw_forcing_steps_on_slabs(const sw_forcing *f, const double *t_next_s, int k);

/* The slab weight and the edge level sw_forcing_advance would set for each of those k steps, into
 * per_step[0 .. k-1], sw_forcing_advance having been called for t_next_s[0] (so the slabs are built):
 * the weight 0 without a storm or weather file (a model without slabs never has another), the level
 * level_now_m (the model's) without a level series. */
void sw_forcing_per_step(const sw_forcing *f, const double *t_next_s, int k, double level_now_m,
                         sw_step_forcing *per_step);

/* 1 when the forcing has an atmosphere (a storm or a weather file), 0 when it is a level series only. */
int sw_forcing_has_air(const sw_forcing *f);

/* The air pressure (Pa) and 10 m wind (m/s) at the n_points points at time t_s, linear in time between
 * the slabs of the last advance, into p_pa[q], u10_ms[q], v10_ms[q]. NaN before the first advance and
 * without an atmosphere. */
void sw_forcing_sample(const sw_forcing *f, double t_s, double *p_pa, double *u10_ms, double *v10_ms);

/* The maps of the run so far, [ny * nx]: the highest 10 m wind speed (m/s) and the lowest air pressure
 * (Pa) at each cell centre over the slab times within the run; NaN where wet[k] == 0 (land). */
void sw_forcing_maps(const sw_forcing *f, const unsigned char *wet, double *wind_max_ms, double *p_min_pa);

/* The storm's centre as the run moves it, at every slab time from 0 to the end of the run: *n points
 * (0 without a storm) in arrays owned by f (valid until sw_forcing_free): time (s), x, y (m) and the
 * central pressure (Pa). */
void sw_forcing_track(const sw_forcing *f, size_t *n, const double **t_s, const double **x_m, const double **y_m,
                      const double **pc_pa);

/* The storm options and track changes a scenario asks for ([storm], [wind], and the gradient wind's
 * Coriolis parameter from [run] rotation at the middle of grid g), for sw_storm_load and
 * sw_storm_state_changed: the one place that reads them, for runs and for plans. */
void sw_forcing_storm_settings(const sw_scenario *sc, const sw_grid *g, sw_storm_options *opt, sw_storm_changes *changes);

/* One line for plans and file attributes, e.g. "storm track.txt (Holland 1980), drag large-pond, slabs
 * every 600 s" or "weather file.nc (48 slabs)"; "level series tide.txt" is added when there is one. */
void sw_forcing_describe(const sw_forcing *f, char *buf, size_t n);

#define SW_FORCING_STATE_PARTS 5   /* most parts sw_forcing_state_parts gives */

/* The memory holding what of f evolves, for a checkpoint (run/checkpoint.h): ptr[k], bytes[k] for up to
 * SW_FORCING_STATE_PARTS parts in this order: the times of the two slabs (2 doubles, NaN: not built), the
 * values at the sample points of slot 0 and slot 1 (3 n_points doubles each), the maps of the highest
 * wind and lowest pressure so far (float [ny * nx] each); none without an atmosphere (f NULL or a level
 * series only: a series has no state). The slabs themselves are the model's (sw_model_state_parts); the
 * source each was built from (a storm frame, a weather slab) is needed only while building it, and is
 * made again for the next slab. Writing a saved state into the parts of a forcing made alike, together
 * with the model's, between steps (after any sw_forcing_advance), makes the next advances give the
 * same slabs, samples and maps. The pointers are valid until the next advance. Returns the count. */
size_t sw_forcing_state_parts(sw_forcing *f, void **ptr, size_t *bytes);

#endif
