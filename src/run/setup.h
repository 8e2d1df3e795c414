/* setup.h - from a parsed scenario to everything a run needs: seabed, source, layout, time step, plan.
 *
 * This is where checks that need more than the scenario text happen: the time step against the
 * layout's stability limit (quoting the scenario line), and the layout's availability.
 */
#ifndef SW_SETUP_H
#define SW_SETUP_H

#include <stddef.h>

#include "base/grid.h"
#include "model/layout.h"
#include "inputs/scenario.h"
#include "base/status.h"

typedef struct {
    sw_grid grid;             /* the model grid (from [grid] or the seabed file) */
    const sw_layout *layout;  /* the chosen layout */
    double *depth_m;          /* [ny * nx] still-water depth, positive down; owned */
    double *eta0_m;           /* [ny * nx] initial elevation, m; owned */
    size_t wet_cells;         /* cells deeper than min_depth */
    double h_max_m;           /* deepest water, m */
    double dt_s;              /* time step, s */
    double dt_limit_s;        /* largest stable time step, s */
    double courant;           /* sqrt(g h_max) dt / min(dx, dy) */
    double courant_limit;     /* the same number at dt_limit_s: the layout's limit */
    int dims;                 /* 1 for a one-cell-wide channel, else 2 */
    long long n_steps;        /* steps to cover the duration */
    size_t n_samples;         /* gauge samples the run will record, at most */
    size_t n_snapshots;       /* eta snapshots the run will write */
    size_t model_bytes;       /* memory of the model state, bytes */
    size_t total_bytes;       /* a run's peak memory, bytes (sw_setup_total_bytes) */
} sw_setup;

/* Builds the setup for sc: grid (taken from the seabed file when sc has no [grid]; sc->grid is
 * then filled in), depth, initial elevation, layout, time step and sizes. On failure returns the
 * status, err names the scenario file and line where one applies, and s owns nothing.
 * Free with sw_setup_free. */
sw_status sw_setup_build(sw_scenario *sc, sw_setup *s, sw_error *err);

/* Derives from the depth field s->depth_m (on s->grid, for s->layout) everything that depends on it:
 * wet_cells, h_max_m, dims, dt_limit_s, courant_limit, the time step dt_s (sc's Courant fraction of the
 * limit, or sc's explicit dt, refused beyond the limit) and courant, then n_steps, n_samples, n_snapshots,
 * model_bytes and total_bytes. sw_setup_build calls it once the depth is built; a caller that changes the
 * depth afterwards (a sweep's depth_factor) calls it again, so both derive dt and sizes the same way.
 * `change` names such a change in messages ("depth_factor = 1.1"); NULL for none. Returns SW_OK, or
 * SW_ERR_RANGE (no water, too many steps) / SW_ERR_UNSTABLE (dt beyond the layout's limit) with err
 * naming the scenario file and line; s keeps its arrays either way (the caller frees). */
sw_status sw_setup_derive(const sw_scenario *sc, sw_setup *s, const char *change, sw_error *err);

/* Releases the arrays s owns and zeroes it. s may be NULL. */
void sw_setup_free(sw_setup *s);

/* The memory a run of sc on setup s holds at its peak, bytes: the model (s->model_bytes), the input
 * depth and elevation, the tracker's running maps, the five result maps, a snapshot frame when
 * snapshots are on, and the gauge series. Uses s->grid, s->model_bytes, s->n_samples, s->n_snapshots. */
size_t sw_setup_total_bytes(const sw_scenario *sc, const sw_setup *s);

#endif
