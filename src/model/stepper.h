/* stepper.h - the schedule of one forward-backward step over a layout's stage kernels (model-internal).
 *
 * The stepper is the one place that knows how a step is run: rows are split into one block per thread;
 * each thread sweeps its block once, running for each row j the continuity stage, the ghost and
 * periodic halo updates of that row, and every momentum stage on the row it has just completed (lag
 * rows behind); rows whose stencils reach into a neighbouring block wait for a barrier (the margins);
 * after the momentum stages the layout's ghost velocities are set; every finished row is handed to the
 * model's observer once, while it is still in cache where the schedule allows. The plan is derived
 * from the rows each stage declares it reads (stage.h), so a new layout or term changes no schedule
 * code. Later features hook in here: process halos, nest boundaries, several steps per sweep.
 *
 * Results do not depend on the thread count: each value is computed by one stage from the same inputs
 * whichever thread runs it, and no sum runs across cells.
 */
#ifndef SW_STEPPER_H
#define SW_STEPPER_H

#include "base/status.h"
#include "model/edges.h"
#include "model/layout.h"
#include "model/model.h"
#include "model/stage.h"
#include "model/terms.h"

#define SW_MAX_STAGES (1 + SW_MAX_MOMENTUM)

/* The schedule of a step, derived once from the stages (sw_step_plan_build). Rows are padded rows; a
 * block of a thread is padded rows j0 .. j1. */
typedef struct {
    int n_stages;                        /* continuity + momentum stages */
    const sw_stage *stage[SW_MAX_STAGES];
    int first_row[SW_MAX_STAGES];        /* 0 when the stage computes the south edge's line, else 1 */
    int lag[SW_MAX_STAGES];              /* stage s runs row j - lag[s] right after continuity of row j */
    int below[SW_MAX_STAGES];            /* the first `below` rows of a block that has a neighbour (or a
                                          * periodic partner) below wait for the barrier */
    int above[SW_MAX_STAGES];            /* the same for the last rows, beside a neighbour above */
    int barrier_before[SW_MAX_STAGES];   /* 1: after the barrier, stage s's waiting rows need the waiting
                                          * rows of an earlier stage in other blocks: another barrier */
    int max_lag;
    int writer[SW_N_FIELDS];             /* the stage that writes each field */
    sw_rows observes[SW_N_FIELDS];       /* the rows of each field a row's centre values read */
    int obs_lag;                         /* a row is final obs_lag iterations after its continuity */
    int periodic_x, periodic_y;          /* 1 when west/east (south/north) are periodic */
    int ghosts_before_obs;               /* 1: rows observed after the sweep wait for the ghosts */

    /* Several steps per sweep (sw_stepper_steps): a wavefront over rows in which step q + 1 runs the
     * iteration of the one-step sweep that lies `wave_gap` rows behind step q's. In iteration i of a
     * step: continuity of row i, stage s on row i - lag[s], the ghost velocities of the ghosts whose
     * inner cell is in row i - wave_ghost_lag, the observation of row i - wave_obs_lag. */
    int wave_reach;                      /* rows a stage or an observer reads beyond its own: the most of
                                          * any |lo|, |hi| declared (at least 1) */
    int wave_ghost_lag;                  /* max_lag + SW_GHOST_REACH */
    int wave_obs_lag;                    /* >= obs_lag, and, where the centre values read halo cells (E),
                                          * after the ghosts of every row they read */
    int wave_tail;                       /* iterations of a step past row ny: the largest lag */
    int wave_gap;                        /* rows between the iterations of consecutive steps: as many as one
                                          * iteration spans, from the rows it touches furthest behind (the
                                          * row observed in its continuity pass, the rows that row's and a
                                          * gauge's lower row's centre values read) to wave_reach ahead */
} sw_step_plan;

/* Rows beyond a ghost's inner row that a layout's edge_velocities reads (each layout's ghost velocity is
 * made from its own elevation and the inner cell's velocities, on the inner row): the wavefront runs a
 * row's ghosts this far behind the momentum stages' last row. The bitwise tests of the wavefront against
 * one step per sweep (test_wave.c, test_wave_run.py) hold every layout to it: with the ghosts one row
 * earlier they fail. */
#define SW_GHOST_REACH 0

/* The most threads a wavefront uses (sw_stepper_steps): the others of a larger team wait. */
#define SW_WAVE_THREADS 64

/* Derives the plan for layout kernels k with the momentum stages of `variant` and the given edges.
 * SW_OK, or SW_ERR_USAGE naming what is inconsistent in the layout's declarations (a field written
 * twice or never, a stage reading its own field on another row, a stage on the edge line without a
 * lag, too many stages). */
sw_status sw_step_plan_build(const sw_layout_kernels *k, sw_terms_variant variant, const sw_edge_kind edges[4],
                             sw_step_plan *out, sw_error *err);

typedef struct sw_model sw_model;

/* One step of model m, in this precision's copy (stepper.c is compiled per precision). Call from every
 * thread of an enclosing parallel region (it uses orphaned `omp for` and barriers and ends with one),
 * or outside one. Through sw_model_step only (it sets the floating-point mode). */
void sw_stepper_step_f64(sw_model *m);
void sw_stepper_step_f32(sw_model *m);

/* k steps (k >= 1) in one sweep over memory, with the clock advanced k times (temporal blocking; the
 * model must be unsplit and not periodic south-north: sw_model_steps checks). The state, the observer's
 * calls (each row of each step once, with that step's time) and every bit are those of k sw_stepper_step
 * with a tick after each, for any thread count. Step q runs with the view m->wave_view[q] and the edge
 * level m->wave_level[q] (sw_model_steps_forced sets them). The threads form a pipeline: thread t runs steps
 * k t / T .. k (t + 1) / T - 1 of the k as a wavefront over the whole grid, wave_gap rows behind the
 * steps before them (a progress counter per thread, read with acquire and written with release). Call as
 * sw_stepper_step. */
void sw_stepper_steps_f64(sw_model *m, int k);
void sw_stepper_steps_f32(sw_model *m, int k);

/* sw_model_surface_build in each precision (surface.c). */
void sw_surface_build_f64(sw_model *m, int slot, sw_surface_row_fn fn, void *ctx);
void sw_surface_build_f32(sw_model *m, int slot, sw_surface_row_fn fn, void *ctx);

#endif
