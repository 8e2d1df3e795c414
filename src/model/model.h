/* model.h - the model state on one grid layout, and stepping it in time.
 *
 * Solves the linear shallow-water equations on a Cartesian grid,
 *     d(eta)/dt + d(h u)/dx + d(h v)/dy = 0,      du/dt = -g d(eta)/dx,      dv/dt = -g d(eta)/dy,
 * or on a geographic grid (grid.h: x = R lambda, y = R phi) the same on the sphere,
 *     d(eta)/dt + [d(h u)/dx + d(h v cos(phi))/dy] / cos(phi) = 0,   du/dt = -g d(eta)/dx / cos(phi),
 * with cos(phi) carried row by row (sw_view.cos_c, cos_f: no per-cell arrays),
 * with forward-backward stepping: eta is advanced first from the old velocities, then the
 * velocities from the new eta. Cells shallower than the minimum depth are land (walls: no flow
 * across their faces); each domain edge is a wall, open (a radiation condition), level (mean sea
 * level held on the edge line) or periodic (joined to the opposite edge). Rotation and bottom
 * friction enter the momentum equations when cfg->terms asks for them (terms.h).
 *
 * Time levels: after n steps (sw_model_time = n dt) the model holds eta at t_n and the velocities at
 * t_n + dt/2, the staggering in time that makes forward-backward second order. The initial state is
 * the water at rest at t = 0 with elevation eta0_m: sw_model_create stores the velocities of
 * t = dt/2 that this implies (one half momentum step, model.c), so that a Fourier mode follows
 * eta_n = eta_0 cos(n theta), cos(theta) = 1 - (omega_h dt)^2 / 2, with no start-up lag.
 *
 * Lifecycle: sw_model_create -> sw_model_step ... -> sw_model_free. The model owns all its arrays.
 */
#ifndef SW_MODEL_H
#define SW_MODEL_H

#include <math.h>
#include <stddef.h>

#include "base/grid.h"
#include "model/layout.h"
#include "model/edges.h"
#include "model/row_values.h"
#include "model/terms.h"
#include "base/status.h"

typedef struct sw_model sw_model;

/* An observer of the state, row by row: called with grid row j (0 .. ny-1) once a step has finished
 * every value of that row, with time_s the time of that state (s), by the thread that finished the row
 * (each row exactly once per step, rows in any order and from any thread). pre is NULL, or the row's
 * centre values made by the step (sw_row_values). It may read the model (sw_model_centre_row) for
 * row j only, and must not write it. ctx is the observer's own. */
typedef void (*sw_row_observer)(void *ctx, const sw_model *m, size_t j, double time_s, const sw_row_values *pre);

/* What a model is built from. Arrays are [ny * nx], row j at [j * nx]; they are copied. */
typedef struct {
    const sw_layout *layout;   /* from sw_layout_find */
    sw_grid grid;
    const double *depth_m;     /* still-water depth, positive down; < min_depth_m = land */
    const double *eta0_m;      /* initial elevation, m (NULL = 0); land cells are set to 0 */
    const double *u0_ms;       /* initial velocity along x at the cell centres, m/s (NULL = at rest); the
                                * layout interpolates it onto its velocity points (mean of the cells
                                * around each, water cells only) */
    const double *v0_ms;       /* the same along y (NULL = at rest) */
    double min_depth_m;        /* land threshold, m (> 0) */
    double gravity_ms2;        /* g, m s-2 */
    double dt_s;               /* time step, s (> 0); see sw_model_dt_limit */
    sw_edge_kind edges[4];     /* SW_WEST .. SW_NORTH; periodic ones come in pairs (west and east,
                                * south and north) */
    sw_terms_config terms;     /* rotation and friction; the zero value is none */
    double edge_level_m;       /* the level `level` edges hold at t = 0, m (0: mean sea level); later levels
                                * come from sw_model_set_edge_level */
    int allow_unstable;        /* 1 = accept dt beyond the stability limit (for stability experiments) */
    sw_precision precision;    /* of the state: SW_DOUBLE (the zero default) or SW_SINGLE (real.h) */
} sw_model_config;

/* Which stability limit a grid needs: 1 (the channel's, along its long axis) when it is one cell across
 * (ny == 1 or nx == 1) and both edges across it are walls or periodic; otherwise 2 (the plane's): an
 * open or level edge across a one-cell-wide grid lets a wave run across it. */
int sw_model_dims(const sw_grid *g, const sw_edge_kind edges[4]);

/* The largest stable time step (s) for `layout` on the given depth field: 2 / max_frequency at the
 * deepest water cell (on a geographic grid the least over rows, sw_model_dt_limit_row); dims 1 for the
 * channel formula along the grid's long axis, 2 for the plane (sw_model_dims chooses for a real grid).
 * Returns 0 when there is no water cell. */
double sw_model_dt_limit(const sw_layout *layout, const sw_grid *g, const double *depth_m,
                         double min_depth_m, double gravity_ms2, int dims);

/* sw_model_dt_limit, and in *row (NULL: not wanted) the grid row where the limit is reached: on a
 * geographic grid the row whose deepest water on its narrowest cells (dx cos(latitude)) allows the least
 * step, often near the edge farthest from the equator; 0 on a projected grid (the limit is the deepest
 * water's, wherever it is). */
double sw_model_dt_limit_row(const sw_layout *layout, const sw_grid *g, const double *depth_m, double min_depth_m,
                             double gravity_ms2, int dims, size_t *row);

/* The Courant number of a time step: sqrt(g h_max) dt / min(dx, dy), dx the narrowest true cell width
 * (sw_grid_cos_min on a geographic grid). */
double sw_model_courant(const sw_grid *g, double h_max_m, double gravity_ms2, double dt_s);

/* Creates a model whose initial state at t = 0 has elevation cfg->eta0_m and velocities cfg->u0_ms,
 * cfg->v0_ms (at rest when those are NULL): the velocities it stores are those of t = dt/2, one half
 * momentum step on (at rest: -(g dt / 2) times the layout's gradient of eta0; 0 where the layout holds a
 * velocity at 0: walls, land); the ghost cells beyond open and level edges start still, at the fixed
 * point of their update (model.c: the edge cell's elevation, or its mirror image). Step 0, time 0.
 * It runs the layout's step once (with dt/2): call it outside a parallel region, or inside one that has a
 * single thread.
 * Refuses (SW_ERR_UNSTABLE) a dt beyond the layout's stability limit, naming both, unless
 * cfg->allow_unstable; SW_ERR_RANGE when there is no water cell; SW_ERR_NOMEM.
 * *out is NULL on failure. */
sw_status sw_model_create(const sw_model_config *cfg, sw_model **out, sw_error *err);

/* Frees the model. m may be NULL. */
void sw_model_free(sw_model *m);

/* One time step (the stepper, stepper.h: call from all threads of a parallel region, or outside one).
 * With an observer set (sw_model_set_observer) it also shows the observer every row of the new state,
 * each as soon as the step has finished it (while it is still in cache, for most rows). The time passed
 * is the time after the step, what sw_model_time gives after the sw_model_tick that follows. */
void sw_model_step(sw_model *m);

/* Why several steps cannot share one sweep over memory on model m, or NULL when they can: periodic south
 * and north edges (the wavefront runs from south to north, and a step's first rows would need the last
 * rows of the step before), or a split whose shares are too thin for the halo of two steps. A static
 * string. */
const char *sw_model_wave_refusal(const sw_model *m);

/* The most steps one sweep over memory takes (sw_model_wave_auto). */
#define SW_WAVE_MAX_STEPS 16

/* k >= 1 steps, each followed by sw_model_tick, in one sweep over memory (temporal blocking: a wavefront
 * over rows in which each step follows the one before a few rows behind, while those rows are still in
 * cache; with T threads, thread t runs steps k t / T .. k (t + 1) / T - 1 as a pipeline; stepper.h), or,
 * when sw_model_wave_refusal says why not or k = 1, in k single steps. The state, the observer's calls
 * (every row of every step once, with that step's time) and so every output bit are those of k times
 * sw_model_step then sw_model_tick, for any k and thread count. The surface forcing and the edge level
 * stay as they are for the k steps: a run with forcing takes one step at a time. Call as sw_model_step
 * (from every thread of a parallel region, or outside one), but not followed by sw_model_tick. */
void sw_model_steps(sw_model *m, int k);

/* What changes from step to step of a run with forcing: the slab weight (sw_model_surface_weight) and the
 * edge level (sw_model_set_edge_level) that step q of a sweep takes. */
typedef struct {
    double surface_w;   /* 0 .. 1 (clamped as sw_model_surface_weight does) */
    double edge_level_m;/* m */
} sw_step_forcing;

/* sw_model_steps with step q of the k taking the weight and level of per_step[q] (k entries), as k times
 * (sw_model_surface_weight, sw_model_set_edge_level, sw_model_step, sw_model_tick) would, bit for bit: the
 * slabs themselves stay as they are for the k steps (the caller cuts its sweeps where they change). After
 * it the model holds the last step's weight and level. per_step must stay valid and unchanged until the
 * call returns in every thread (share one array). */
void sw_model_steps_forced(sw_model *m, int k, const sw_step_forcing *per_step);

/* The steps per sweep the model runs fastest with, by the bytes model: as many as keep the wavefront's
 * window of rows (steps x the gap between them x the bytes a row's update touches) within half of
 * cache_bytes (the last-level cache), at most SW_WAVE_MAX_STEPS, a multiple of `threads` when that
 * leaves at least two a thread; 1 (one step per sweep) when the model (sw_model_bytes_for) fits in half
 * the cache already, when sw_model_wave_refusal refuses, or when the grid has too few rows to fill the pipeline.
 * *window_bytes: that window (0 for 1). */
int sw_model_wave_auto(const sw_model *m, int threads, size_t cache_bytes, size_t *window_bytes);

/* sw_model_wave_auto before a model exists (a plan): for a model of that layout, precision, grid, edges
 * and terms; band_rows 0 unsplit, else the thinnest share of a split run (its rows stand for the grid's,
 * and k is at most sw_model_wave_steps_max and so small that the sweep's halo on both sides adds at most
 * an eighth to the band's rows: those rows are computed twice). */
int sw_model_wave_steps_for(const sw_layout *layout, sw_precision precision, const sw_grid *g,
                            const sw_edge_kind edges[4], const sw_terms_config *terms, int threads,
                            size_t cache_bytes, size_t band_rows, size_t *window_bytes);

/* The most steps a sweep of a split run may take: the largest k <= SW_WAVE_MAX_STEPS whose halo
 * (sw_model_wave_halo) fits in band_rows, the thinnest share's rows; 1 when not even 2 fit. For a model of
 * that layout, precision, edges and terms. */
int sw_model_wave_steps_max(const sw_layout *layout, sw_precision precision, const sw_edge_kind edges[4],
                            const sw_terms_config *terms, size_t band_rows);

/* Sets the row observer sw_model_step calls (NULL: none), with room for steps on up to
 * omp_get_max_threads() threads to hand it rows' values (sw_row_values; a thread beyond that, or no
 * memory for the room, hands none). Call outside parallel regions. */
void sw_model_set_observer(sw_model *m, sw_row_observer fn, void *ctx);

/* Advances the step counter and clock after a step. Call from one thread only. */
void sw_model_tick(sw_model *m);

/* Values at the centres of row j (see sw_layout.centre_row). */
void sw_model_centre_row(const sw_model *m, size_t j, double *eta, double *u, double *v);

/* sw_model_centre_row in float, to float round-off (sw_layout_kernels.centre_row_f32), into eta, u, v
 * (each nx long). The tracker's input. */
void sw_model_centre_row_f32(const sw_model *m, size_t j, float *eta, float *u, float *v);

/* Elevation at cell centre (i, j), m. */
double sw_model_eta(const sw_model *m, size_t i, size_t j);

/* Elevation at the centre of cell (i, j), m, as the layout reports it: the stored value, or on the E
 * layout the mean of the neighbours where the cell stores velocities (sw_layout_kernels.eta_at). */
double sw_model_eta_centre(const sw_model *m, size_t i, size_t j);

/* Sets the elevation at cell centre (i, j) (ignored on land). For tests and restarts. The velocities
 * are left as they are: after it the state is no longer the one at rest that sw_model_create made
 * (give the elevation as cfg->eta0_m for that). */
void sw_model_set_eta(sw_model *m, size_t i, size_t j, double eta_m);

/* Adds inc_m[j * nx + i] (m) to the elevation of every water cell that stores one (on a checkerboard
 * layout, E, the cells with i + j even; layout.h): a sudden change of the sea surface between steps, as a
 * sea floor moving under the water makes (a rupture in time: run.c). The velocities are left as they are.
 * Threads over rows (its own parallel loop: call it outside a parallel region); cells of other kinds and
 * land ignore their values. The halo is not refreshed: ghosts beyond open and level edges follow at the
 * next step. */
void sw_model_add_eta(sw_model *m, const double *inc_m);

/* The layout's conserved discrete energy (see sw_layout.energy), m5 s-2. */
double sw_model_energy(const sw_model *m);

/* Water volume displaced: sum of the stored eta times the area each stands for (a cell; two on the E
 * layout), m3 (compensated summation). */
double sw_model_volume(const sw_model *m);

/* Accessors. */
const sw_grid *sw_model_grid(const sw_model *m);
const sw_layout *sw_model_layout(const sw_model *m);
const unsigned char *sw_model_wet(const sw_model *m);  /* [ny * nx], 1 = water */
double sw_model_time(const sw_model *m);               /* simulated time, s */
double sw_model_dt(const sw_model *m);                 /* s */
double sw_model_h_max(const sw_model *m);              /* deepest water cell, m */
size_t sw_model_bytes(const sw_model *m);              /* memory held, bytes */
sw_precision sw_model_precision(const sw_model *m);    /* of the state arrays */

/* ---- surface forcing: wind stress and air pressure (terms.h sw_terms_config.surface; forcing/forcing.h)
 *
 * The forcing is held in two slabs, at two forcing times around the step, and is linear in time between
 * them: each step's momentum takes slab0 + w (slab1 - slab0) with the weight w set for the step's
 * time (sw_model_surface_weight). A slab holds, at every velocity point, its acceleration
 * tau / (rho_w H) - g grad(p_b), H the depth the point carries: the air pressure enters as a head of
 * water p_b whose gradient is the layout's own gradient of eta (so a still sea under steady pressure
 * settles to eta = -p_b exactly, the inverse barometer), the wind stress at the point's own position. */

/* What a forcing source gives the model, along a piece of one row: the n values at x = x0_m + i dx_m,
 * y = y_m, into out: SW_SURFACE_HEAD: the air pressure as a head of water, (p - p_ref) / (rho_w g), m, at
 * cell centres; SW_SURFACE_STRESS_X (_Y): the kinematic wind stress along x (y), tau / rho_w, m2 s-2, at
 * the layout's u (v) points. j is the grid row (-1 .. ny, the halo rows included) and i0 the padded column
 * of the first point (0 = the west halo; grid column i0 - 1). A row comes in pieces of at most
 * SW_SURFACE_PIECE points. Called by several threads at once, for different rows. */
typedef enum { SW_SURFACE_HEAD = 0, SW_SURFACE_STRESS_X = 1, SW_SURFACE_STRESS_Y = 2 } sw_surface_kind;
typedef void (*sw_surface_row_fn)(void *ctx, sw_surface_kind kind, ptrdiff_t j, size_t i0, double y_m, double x0_m,
                                  double dx_m, size_t n, float *out);
#define SW_SURFACE_PIECE 512

/* Builds slab `slot` (0 or 1) from a source: the head at every cell centre and its gradient by the
 * layout's own momentum kernel, the stresses at every velocity point. For a model made with
 * cfg->terms.surface (otherwise nothing happens). Call from every thread of a parallel region, or outside
 * one: it splits the rows among the threads and ends with a barrier. */
void sw_model_surface_build(sw_model *m, int slot, sw_surface_row_fn fn, void *ctx);

/* Slab 1 becomes slab 0 (the arrays are swapped; slab 1 then holds the old slab 0 until rebuilt). Call
 * from one thread. */
void sw_model_surface_shift(sw_model *m);

/* The weight of slab 1 for the next steps, 0 .. 1. Call from one thread, between steps. */
void sw_model_surface_weight(sw_model *m, double w);

/* The sea level (m) that `level` edges hold for the next steps: their ghost cells mirror eta about it
 * (sw_edge_cell), so that the level on the edge's node line follows a tide or a remote surge. 0 at
 * creation (mean sea level). Call from one thread, between steps. */
void sw_model_set_edge_level(sw_model *m, double level_m);

/* The level `level` edges hold now, m (sw_model_set_edge_level). */
double sw_model_edge_level(const sw_model *m);

/* Where the layout puts u[k] and v[k] relative to the centre of grid cell (i, j) sharing their index:
 * the position (m) of the u and v points of cell (i, j) (sw_layout.u_at, v_at). */
void sw_model_velocity_points(const sw_model *m, size_t i, size_t j, double u_xy[2], double v_xy[2]);

/* ---- checkpoints (run/checkpoint.h) */

#define SW_MODEL_STATE_PARTS 13   /* most parts sw_model_state_parts gives */

/* The memory holding everything of m that evolves in a run and that the next step reads, for writing a
 * checkpoint and reading one back. Fills ptr[k], bytes[k] for up to SW_MODEL_STATE_PARTS parts, always in
 * this order: eta, u, v as stored (padded, halo included, in the model's precision); the steps taken
 * (long long); the time (s), the level of `level` edges (m) and the weight of slab 1 (doubles); with surface
 * forcing the slabs in slot order (slot 0 along x, along y, then slot 1: padded float arrays) and the edge
 * heads of slots 0 and 1 (floats). Returns the number of parts. Copying a saved state into the parts of a
 * model made from the same configuration, between steps, makes the next steps give the same bits as
 * the model it was saved from. The pointers are valid until the next sw_model_surface_shift or
 * sw_model_free. Reads or writes nothing itself. */
size_t sw_model_state_parts(sw_model *m, void **ptr, size_t *bytes);

/* ---- one run split over processes (run/split.h) ------------------------------------------------------ */

/* Brings into m the halo rows of its share (sw_model_set_share) from the processes that compute them.
 * Called by one thread of the step, at every point where the step's threads meet. */
typedef void (*sw_halo_fn)(void *ctx, sw_model *m);

/* Restricts every later step of m to grid rows row0 .. row1 - 1 (0-based; the rows this process
 * computes), with `halo` called at each meeting point of the step: after the sweep, before each stage
 * whose waiting rows read another stage's waiting rows, before and after the edge ghosts. At each call,
 * halo must copy into m the current values of the sw_model_halo_rows(m) rows on each side of the share
 * (from the processes computing them, into the same padded rows: sw_model_field_rows), then call
 * sw_model_wrap_rows. The step then computes, observes and sets edge ghosts for the share's rows only;
 * rows beyond the share and its halo keep stale values. Since the step's values do not depend on who
 * computes a row, the share's rows are the same bits as those of an unsplit model (stepper.h). halo NULL
 * and the whole grid: the default, no split. SW_ERR_USAGE when the rows are empty or out of the grid, or
 * fewer than sw_model_halo_rows(m) (a halo would then reach past the neighbour). Call outside parallel
 * regions. */
sw_status sw_model_set_share(sw_model *m, size_t row0, size_t row1, sw_halo_fn halo, void *ctx, sw_error *err);

/* The exchange before a sweep of several steps in three parts, so that the share's interior is computed
 * while the far side's rows are still on their way (sw_model_set_share_overlap). start posts the exchange
 * of sw_model_halo_depth(m) rows on each side and returns once the south side is done: the halo rows
 * below the share are in m, and the share's lowest rows, which the sweep changes first, are sent (or
 * copied out). poll advances the rest without waiting (it may do nothing). finish completes the north
 * side: the halo rows above the share are in m and the share's highest rows are sent; then it calls
 * sw_model_wrap_rows. All three are called by one thread, OpenMP's master (the thread that started MPI). */
typedef void (*sw_halo_part_fn)(void *ctx, sw_model *m);

/* Gives a split model (sw_model_set_share, same ctx) the exchange in parts for its sweeps of several steps
 * (sw_model_steps): start before the sweep, poll every few rows of the sweep's first step, finish before
 * that step reaches the share's highest sw_model_halo_depth(m) rows (the rows sent north, which it then
 * changes; the rows received from the north are read later still). The sweep's other steps follow the first
 * (the wavefront), so they read those rows later again: the values are those of one exchange before the
 * sweep, the same bits. Single steps (periodic south and north edges, bands too thin to sweep) keep the
 * whole exchange. start NULL: no overlap (the default). Call outside parallel regions. */
void sw_model_set_share_overlap(sw_model *m, sw_halo_part_fn start, sw_halo_part_fn poll, sw_halo_part_fn finish);

/* Rows on each side of a share its step reads (the stencils' reach, plus one for the gauges' bilinear
 * centre values): at least 2. */
size_t sw_model_halo_rows(const sw_model *m);

/* The rows on each side that the present call of the halo function must bring: sw_model_halo_rows(m)
 * within a step; before a sweep of k steps over memory, sw_model_wave_halo(m, k) (the sweep then computes
 * the rows of that deeper halo too, redundantly, and exchanges nothing more until its end). */
size_t sw_model_halo_depth(const sw_model *m);

/* The rows a sweep of k steps needs beyond a share, so that the share's rows are exact at every step of
 * it: k times the rows a step's values reach back (each stage's reach, added over the stages), plus a
 * row's observation reach and one for the gauges. */
size_t sw_model_wave_halo(const sw_model *m, int k);

/* Tells a split model the deepest halo its exchange can deliver: the rows of the thinnest share of the
 * split (a neighbour sends rows of its own share only). Sweeps of several steps are limited to k with
 * sw_model_wave_halo(m, k) <= rows. */
void sw_model_set_share_reach(sw_model *m, size_t rows);

/* Padded row r (0 .. ny + 1; grid row r - 1) of state field k (0 eta, 1 u, 2 v): its first byte, and
 * the bytes of one padded row in *row_bytes. Rows are contiguous: rows r .. r + n - 1 are n * row_bytes
 * bytes from the returned pointer. */
void *sw_model_field_rows(sw_model *m, int k, size_t r, size_t *row_bytes);

/* After a halo exchange: where the south and north edges are periodic, copies the end rows of the share
 * into the halo row beyond the opposite end (row ny into row 0 when the share holds row 1, row 1 into row
 * ny + 1 when it holds row ny), as the step does within one process. Nothing otherwise. */
void sw_model_wrap_rows(sw_model *m);

/* Bytes a model of this grid, layout and terms would hold in this precision (for plans), without creating
 * it: the six padded state and depth arrays, the wet mask and edge cells, and with terms the per-row
 * Coriolis parameters, the drag arrays of quadratic friction (2 padded arrays), on transport-weighted
 * layouts the water fractions (2 more), and with surface forcing its two slabs (4 padded float arrays)
 * and the scratch of their making (3 padded arrays). terms may be NULL (none). */
size_t sw_model_bytes_for(const sw_grid *g, sw_precision precision, const sw_layout *layout,
                          const sw_terms_config *terms);

#endif
