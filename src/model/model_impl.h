/* model_impl.h - the model's fields, shared by model.c and the layout files only.
 *
 * Every field array is padded with one halo cell on each side: cell (i, j) of the grid (0-based)
 * lives at index (j + 1) * stride + (i + 1). The halo holds ghost values at open edges and zeros
 * at walls. Rows are `stride` elements apart (whole 64-byte lines, arrays 64-byte aligned).
 *
 * The state arrays hold doubles or floats, as the model's precision says (real.h). The layout files,
 * compiled once per precision, reach them as sw_real through SW_F; model.c, which is compiled once,
 * only through sw_model_get / sw_model_put.
 */
#ifndef SW_MODEL_IMPL_H
#define SW_MODEL_IMPL_H

#include <stddef.h>

#include "base/grid.h"
#include "model/layout.h"
#include "model/model.h"
#include "base/real.h"
#include "model/edges.h"

/* One ghost (halo) cell beyond an open or level edge. After each eta update the ghost is set to
 *     eta_g <- keep * eta_g + take * eta_in
 * open:  keep = 1/(1+r), take = r/(1+r): an implicit upwind step of d(eta)/dt + c d(eta)/dn = 0
 *        (unconditionally stable; r = c dt / spacing, c = sqrt(g h)), so the ghost follows the
 *        outgoing wave;
 * level: keep = 0, take = -1: eta is antisymmetric about the edge line, a node of mean level there.
 * Layouts that keep a velocity in the ghost (A) set it to vel * eta_g + mirror * (inner velocity):
 * open: vel = sign sqrt(g/h), mirror = 0 (the outgoing wave's velocity); level: vel = 0, mirror = 1. */
typedef struct {
    size_t ghost;   /* padded index of the ghost (halo) cell */
    size_t inner;   /* padded index of the edge cell inside the domain */
    double keep, take;   /* ghost update coefficients, dimensionless */
    double vel;     /* s-1: ghost normal velocity per metre of ghost eta */
    double mirror;  /* dimensionless: ghost normal velocity per unit inner normal velocity */
    int normal_x;   /* 1 if the edge is west/east (normal along x), 0 if south/north */
} sw_edge_cell;

struct sw_model {
    const sw_layout *layout;
    const sw_layout_kernels *kernels;   /* layout->kernels[precision] */
    sw_precision precision;             /* what the state arrays hold */
    sw_grid grid;
    double g;            /* gravity, m s-2 */
    double dt;           /* time step, s */
    double min_depth;    /* land threshold, m */
    double h_max;        /* deepest water cell, m */
    sw_edge_kind edges[4];

    size_t stride;       /* elements between rows of a padded array */
    size_t n_pad;        /* elements in each padded array: stride * (ny + 2) */

    /* The state, double or float by `precision` (SW_F gives them their type in the layouts): */
    void *eta;           /* elevation at cell centres, m */
    void *u;             /* x velocity, m/s, where the layout puts it */
    void *v;             /* y velocity, m/s, where the layout puts it */
    void *h;             /* depth at cell centres, m; 0 on land and in the halo */
    void *hx;            /* depth carried by u (the layout's x-flux depth); 0 = no flow there */
    void *hy;            /* depth carried by v; 0 = no flow there */
    unsigned char *wet;  /* [ny * nx] unpadded: 1 = water cell */

    size_t n_edge;       /* ghost cells of open and level edges */
    sw_edge_cell *edge;  /* [n_edge], sorted by the padded row of their inner cell */
    size_t *edge_row;    /* [ny + 3]: the ghosts whose inner cell is in padded row j are
                          * edge[edge_row[j] .. edge_row[j + 1]) */

    long long steps;     /* steps taken */
    double time;         /* simulated time, s */

    sw_row_observer observe;   /* never NULL: a no-op when nothing observes (model.c) */
    void *observe_ctx;
    int observed;              /* 1 when an observer is set */
    float *obs_buf;            /* [obs_threads][obs_len]: each thread's sw_row_values storage, or NULL */
    size_t obs_len;            /* floats per thread: 3 nx + 3 ceil(nx / SW_OBS_SEG) */
    int obs_threads;
};

/* Thread t's storage for a row's values (eta, u, v, then hi, lo, speed2 per segment), or NULL when
 * nothing observes or there is none for t. */
static inline float *sw_model_obs_buffer(const sw_model *m, int t)
{
    return m->observed && m->obs_buf && t < m->obs_threads ? m->obs_buf + (size_t)t * m->obs_len : NULL;
}

/* Shows the observer padded row j (1 .. ny) of the state this step has just finished. For layouts
 * whose step observes rows itself (sw_layout_kernels.observes_rows); the time is after the step. */
static inline void sw_model_observe_row(const sw_model *m, size_t j)
{
    m->observe(m->observe_ctx, m, j - 1, (double)(m->steps + 1) * m->dt, NULL);
}

/* Where a row's values live in a thread's buffer (sw_model_obs_buffer) of a row of nx cells: eta, u,
 * v [nx] each, then hi, lo, speed2 [n_seg] each. The step's loops fill them; n_seg segments of
 * SW_OBS_SEG cells. */
typedef struct {
    float *eta, *u, *v, *hi, *lo, *speed2;
    size_t n_seg;
} sw_obs_row;

static inline sw_obs_row sw_obs_row_in(float *buf, size_t nx)
{
    const size_t n_seg = (nx + SW_OBS_SEG - 1) / SW_OBS_SEG;
    return (sw_obs_row){buf, buf + nx, buf + 2 * nx, buf + 3 * nx, buf + 3 * nx + n_seg, buf + 3 * nx + 2 * n_seg,
                        n_seg};
}

/* The same, handing the observer the row's values in buf (sw_model_obs_buffer), filled by the step. */
static inline void sw_model_observe_row_values(const sw_model *m, size_t j, float *buf)
{
    const sw_obs_row o = sw_obs_row_in(buf, m->grid.nx);
    const sw_row_values pre = {o.eta, o.u, o.v, o.hi, o.lo, o.speed2};
    m->observe(m->observe_ctx, m, j - 1, (double)(m->steps + 1) * m->dt, &pre);
}

/* Padded index of grid cell (i, j), 0-based (i < nx, j < ny). Halo neighbours are reached from it
 * by -1 / +1 (west / east) and -stride / +stride (south / north). */
static inline size_t sw_pidx(const sw_model *m, size_t i, size_t j) { return (j + 1) * m->stride + (i + 1); }

/* Padded index of cell (i, j) with the halo included: -1 <= i <= nx, -1 <= j <= ny. */
static inline size_t sw_pidx_halo(const sw_model *m, ptrdiff_t i, ptrdiff_t j)
{
    return (size_t)(j + 1) * m->stride + (size_t)(i + 1);
}

/* 1 when cell (i, j) (halo included) holds water the stencils may use: a water cell of the grid, or
 * the ghost beside an open or level edge (it needs a water cell inside). *depth_m gets its depth, m
 * (a ghost takes the inner cell's; 0 when dry). Halo corners are never water. For layouts' prepare. */
int sw_model_water_at(const sw_model *m, ptrdiff_t i, ptrdiff_t j, double *depth_m);

/* Builds m->edge for every open edge: one ghost per water cell next to the edge. `spacing_x` and
 * `spacing_y` are the distances used in r (dx and dy for the A and C layouts). Shared by layouts. */
sw_status sw_model_build_edges(sw_model *m, double spacing_x, double spacing_y, sw_error *err);

/* Value k of a state array `f` (one of m->eta .. m->hy) as a double, in the model's precision. */
double sw_model_get(const sw_model *m, const void *f, size_t k);

/* Stores x into value k of state array `f`, rounded to the model's precision. */
void sw_model_put(const sw_model *m, void *f, size_t k, double x);

#ifdef SW_REAL_BITS
/* A state array with the type of this copy of the layout kernels (real.h): SW_F(m, eta)[k]. */
#define SW_F(m, field) ((sw_real *)(m)->field)

/* The ghost update of edge cell q (see sw_edge_cell), in sw_real arithmetic. */
static inline void sw_edge_eta_one(sw_real *restrict eta, const sw_edge_cell *restrict oc)
{
    eta[oc->ghost] = (sw_real)oc->keep * eta[oc->ghost] + (sw_real)oc->take * eta[oc->inner];
}

/* Updates the ghosts whose inner cell is in padded row j (see sw_edge_cell): the steps call it for each
 * row right after the row's continuity. */
static inline void sw_model_edge_eta_row(sw_model *m, size_t j)
{
    sw_real *restrict eta = SW_F(m, eta);
    for (size_t q = m->edge_row[j]; q < m->edge_row[j + 1]; q++)
        sw_edge_eta_one(eta, &m->edge[q]);
}
#endif

#endif
