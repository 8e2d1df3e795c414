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
} sw_step_plan;

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

/* sw_model_surface_build in each precision (surface.c). */
void sw_surface_build_f64(sw_model *m, int slot, sw_surface_row_fn fn, void *ctx);
void sw_surface_build_f32(sw_model *m, int slot, sw_surface_row_fn fn, void *ctx);

#endif
