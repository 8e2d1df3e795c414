/* layout.h - the table of functions that makes one Arakawa grid layout (A to E).
 *
 * A layout owns where eta, u and v live on the cell, its continuity and momentum stencils, how walls
 * and open edges enter those stencils, its stability limit, and how it reports values at cell
 * centres. The model (model.c) owns the memory and the time loop and calls a layout only through
 * this table, so adding a layout is one file (layout_x.c) plus one line in layouts.c.
 *
 * Every layout stores eta at cell centres. What u and v mean in sw_model (model_impl.h) is the
 * layout's business; the sketch at the top of each layout file shows it.
 */
#ifndef SW_LAYOUT_H
#define SW_LAYOUT_H

#include <complex.h>
#include <stddef.h>

#include "base/real.h"
#include "base/status.h"

typedef struct sw_model sw_model;

/* Fourier symbols of a layout's discrete operators for a plane wave exp(i (k x + l y)), each taken
 * relative to the phase at the point where the result lives. Applying an operator to the wave
 * multiplies its amplitude by the symbol. Units 1/m for derivatives, none for averages. */
typedef struct {
    double complex div_x;   /* d/dx of u (at u points) evaluated at eta points */
    double complex div_y;   /* d/dy of v (at v points) evaluated at eta points */
    double complex grad_x;  /* d/dx of eta evaluated at u points */
    double complex grad_y;  /* d/dy of eta evaluated at v points */
    double complex v_at_u;  /* v averaged onto u points (for Coriolis terms); 1 when co-located */
    double complex u_at_v;  /* u averaged onto v points */
} sw_symbols;

/* The functions that touch the state, compiled once per precision (real.h): each layout file
 * defines sw_layout_x_kernels_f64 and _f32 from one source. They read and write the state through
 * SW_F (model_impl.h) as the build's sw_real, and give everything else doubles. */
typedef struct sw_layout_kernels {
    /* Fills the layout's depth-at-velocity-point arrays (hx, hy) and open-edge lists from h and
     * m->edges, after model.c has allocated every array. Returns SW_OK or an error. */
    sw_status (*prepare)(sw_model *m, sw_error *err);

    /* Advances the state by one forward-backward step: eta first, from the old velocities, then the
     * velocities from the new eta. Must be called by every thread of an enclosing parallel region
     * (it uses orphaned `omp for` loops and their barriers); also works outside one. */
    void (*step)(sw_model *m);

    /* Values at the centres of row j (0 .. ny-1) into eta, u, v (each nx long): elevation (m) and
     * the two velocity components (m/s) interpolated to the centre. Land cells give 0. */
    void (*centre_row)(const sw_model *m, size_t j, double *eta, double *u, double *v);

    /* centre_row in float, for the tracker, whose maps are float: centre_row's values to float
     * round-off (A, C: exactly (float) of them), made without the double detour. Optional: NULL makes
     * sw_model_centre_row_f32 convert centre_row's doubles. A step that hands an observer its rows'
     * values (sw_row_values) must make them exactly as this does. */
    void (*centre_row_f32)(const sw_model *m, size_t j, float *eta, float *u, float *v);

    /* Elevation at the centre of cell (i, j), m, as centre_row gives it; 0 on land. NULL when every
     * cell stores its own elevation (then it is the stored value). */
    double (*eta_at)(const sw_model *m, size_t i, size_t j);

    /* The discrete energy that forward-backward stepping conserves exactly (walls, no forcing), per
     * unit density, m5 s-2:  E* = sum (g/2) eta^2 dA + sum (hu/2) |u|^2 dA - (g dt / 2) sum eta D(h u) dA,
     * with D the layout's divergence and hu the depth carried by each velocity point. Summed in double. */
    double (*energy)(const sw_model *m);

    /* 1 when step shows every finished row to the model's observer itself (sw_model_observe_row, once per
     * row, after the row's last value is final); 0 and sw_model_step observes after the step. */
    int observes_rows;
} sw_layout_kernels;

typedef struct sw_layout {
    const char *name;     /* "A" .. "E" */
    const char *summary;  /* one line for --help and reports */
    double eta_cells;     /* cells of area each stored elevation stands for: 0 or 1 = one cell each;
                           * E: 2 (half the cells store eta) */
    double level_node_offset; /* where a `level` edge holds its node: cells beyond the edge line
                               * (0 = on it; E: 0.5, on the ghost centres, see layout_e.c) */
    int stream_values;    /* the bytes model: values a fused cell update must move at least (each state
                           * value read and written once, each depth array read once); x bytes per value */

    /* Highest angular frequency (rad/s) of the layout's semi-discrete gravity waves on depth h,
     * over all wavenumbers the grid resolves, with gh = g*h (m2 s-2) and cell sizes dx, dy (m).
     * dims = 1 considers x-waves only (a channel); dims = 2 the whole plane.
     * Forward-backward stepping is stable exactly while max_frequency * dt <= 2. */
    double (*max_frequency)(double gh, double dx, double dy, int dims);

    /* Symbols of the layout's operators for wavenumbers (k, l) (rad/m) on cells dx x dy (m). The
     * gravity-wave frequency is omega^2 = -g h (div_x grad_x + div_y grad_y). */
    void (*symbols)(double k, double l, double dx, double dy, sw_symbols *out);

    /* The state kernels for each precision: kernels[SW_DOUBLE], kernels[SW_SINGLE]. */
    const sw_layout_kernels *kernels[SW_PRECISIONS];
} sw_layout;

/* Finds a layout by name ("A".."E", any case). Returns NULL for an unknown name; for a known name
 * this build does not implement yet, also NULL with *known set to 1 (known may be NULL). */
const sw_layout *sw_layout_find(const char *name, int *known);

/* Comma-separated names of the implemented layouts, e.g. "A, C". */
const char *sw_layout_names(void);

/* The implemented layouts, in registry order: sw_layout_at(q) for q < sw_layout_count(). */
size_t sw_layout_count(void);
const sw_layout *sw_layout_at(size_t q);

#endif
