/* layout.h - the table of functions that makes one grid layout (the Arakawa layouts A to E).
 *
 * A layout owns where eta, u and v live on the cell, its continuity and momentum stencils, how walls
 * and open edges enter those stencils, its stability limit, and how it reports values at cell
 * centres. It does so as per-row stage kernels (stage.h); the model (model.c) owns the memory and
 * the stepper (stepper.c) the schedule, and both call a layout only through this table, so adding a
 * layout is one file (layout_x.c) plus one line in layouts.c.
 *
 * Every layout stores eta at cell centres. What u and v mean is the layout's business; the sketch at
 * the top of each layout file shows it.
 */
#ifndef SW_LAYOUT_H
#define SW_LAYOUT_H

#include <complex.h>
#include <stddef.h>

#include "base/real.h"
#include "base/status.h"
#include "model/stage.h"

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

/* Momentum stages a layout may have (one for u and v together, or one each). */
#define SW_MAX_MOMENTUM 2

/* The functions that touch the state, compiled once per precision (base/real.h): each layout file
 * defines sw_layout_x_kernels_f64 and _f32 from one source. They work on a plain view of the fields
 * (model/stage.h), row by row; the stepper (stepper.c) owns the schedule: thread blocks, barriers, the
 * fused sweep, ghost and periodic halo cells, and handing finished rows to the observers. */
typedef struct sw_layout_kernels {
    /* Fills the depth-at-velocity-point arrays (hx, hy) from h and the edges (p->f.hx, hy are 0 on
     * entry) and adjusts the ghost cells of open and level edges (sw_edge_cell) where the layout's
     * ghosts differ from the shared rule. Clears what the layout does not store (E: eta of u,v cells). */
    void (*prepare)(sw_prep *p);

    /* Sets the velocities at t = 0 from values at the cell centres uc, vc ([ny * nx], m/s): at each
     * point that flows, the mean of the water cells (or ghosts) around it, stored as the layout stores
     * velocities (B, D: times the point's water fraction). After prepare. */
    void (*initial_velocity)(sw_prep *p, const double *uc, const double *vc);

    /* The continuity stage: eta of a row from the old velocities (stage 0 of every step). */
    sw_stage continuity;

    /* Continuity of a row fused with the centre values of a finished row (stage.h). */
    sw_continuity_observed_fn continuity_observed;

    /* The momentum stages, in the order they run, for each sw_terms_variant: [SW_TERMS_PLAIN] without
     * rotation and friction (the step's bits do not depend on the terms being compiled in), then with
     * rotation and linear friction, then also quadratic friction. Each variant declares its own reads. */
    int n_momentum;
    sw_stage momentum[SW_TERMS_VARIANTS][SW_MAX_MOMENTUM];

    /* Ghost cells' velocities (and radiated elevations) after the momentum stages; NULL when the
     * layout keeps no velocity in ghosts (B, C). */
    sw_edge_fn edge_velocities;

    /* Rows of eta, u and v the centre values of a row read (relative to it): when a row is final. */
    sw_rows observes[SW_N_FIELDS];

    /* 1 when centre values read halo cells (as neighbours, weighted by 0): then they wait for the
     * ghosts of the step to be finished (E). */
    int centre_reads_halo;

    /* Values at the centres of grid row j (0 .. ny-1) into eta, u, v (each nx long): elevation (m) and
     * the two velocity components (m/s) interpolated to the centre. Land cells give 0. */
    void (*centre_row)(const sw_view *v, size_t j, double *eta, double *u, double *vel);

    /* centre_row in float, for the tracker, whose maps are float: centre_row's values to float round-off
     * (A, C: exactly (float) of them), made without the double detour; continuity_observed makes the
     * same bits. */
    void (*centre_row_f32)(const sw_view *v, size_t j, float *eta, float *u, float *vel);

    /* Elevation at the centre of cell (i, j), m, as centre_row gives it; 0 on land. NULL when every
     * cell stores its own elevation (then it is the stored value). */
    double (*eta_at)(const sw_view *v, size_t i, size_t j);

    /* The discrete energy that the step conserves exactly without friction and forcing (walls, periodic
     * edges), per unit density, m5 s-2: E* = sum (g/2) eta^2 dA + sum (hu/2) |u|^2 dA
     * - (g dt / 2) sum eta D(h u) dA, with D the layout's divergence and hu the depth carried by each
     * velocity point, plus with rotation (dt/2) u.K v, the rotation term's share (docs/terms.md).
     * Summed in double. */
    double (*energy)(const sw_view *v);
} sw_layout_kernels;

typedef struct sw_layout {
    const char *name;     /* "A" .. "E": at most 7 characters (sw_scenario.layout) */
    const char *summary;  /* one line for --help and reports */
    double eta_cells;     /* cells of area each stored elevation stands for: 0 or 1 = one cell each;
                           * E: 2 (half the cells store eta) */
    double level_node_offset; /* where a `level` edge holds its node: cells beyond the edge line
                               * (0 = on it; E: 0.5, on the ghost centres, see layout_e.c) */
    int checkerboard;     /* 1 when the variables alternate from cell to cell (E: eta on the cells with
                           * i + j even, u and v on the others): a periodic pair of edges then needs an even
                           * number of cells between them */
    int transport_weighted; /* 1 when velocity points store f * velocity with f their water fraction
                             * (B, D): friction then needs 1 / f per point (terms.h, share_x) */
    double u_at[2];       /* where u[k] lies relative to the centre of the cell k indexes, in cells along
                           * x and y (C: the east face, +1/2, 0); surface forcing is evaluated there */
    double v_at[2];       /* the same for v[k] */
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

/* Finds a layout of the registry by name, in any letter case ("c" finds "C"). NULL for an unknown name
 * (sw_layout_names lists the known ones). */
const sw_layout *sw_layout_find(const char *name);

/* Comma-separated names of the implemented layouts, e.g. "A, C". */
const char *sw_layout_names(void);

/* The implemented layouts, in registry order: sw_layout_at(q) for q < sw_layout_count(). */
size_t sw_layout_count(void);
const sw_layout *sw_layout_at(size_t q);

#endif
