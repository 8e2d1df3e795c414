/* layout_b.c - the Arakawa B layout: eta at cell centres, u and v together at the cell corners.
 *
 *   u[k-1],v[k-1]        u[k],v[k]       k = padded index of cell (i, j)
 *             o-----------o              u[k], v[k]: velocities at the NORTH-EAST corner of cell k
 *             |           |              eta[k], h[k]: at the centre of cell k
 *             |  eta[k]   |              hx[k], hy[k]: flux depths of u[k], v[k] (see below)
 *             |           |
 *             o-----------o              corners live on padded rows 0..ny, columns 0..nx
 *   u[k-s-1],v[k-s-1]    u[k-s],v[k-s]   (s = stride; row 0 / column 0 are the south / west edge lines)
 *
 * Stencils: the divergence at a centre and the gradient at a corner average two one-cell differences,
 *   D(hu) = (F[k] + F[k-s] - F[k-1] - F[k-s-1]) / (2 dx),   F = hx u   (and likewise y),
 *   G(eta)_x = (eta[k+1] + eta[k+s+1] - eta[k] - eta[k+s]) / (2 dx),
 * so G = -D^T and water volume and the energy E* (layout.h) are conserved exactly.
 *
 * Walls (free slip). A corner touches four cells; "water" means a water cell of the grid or the ghost
 * beside an open or level edge. u at a corner may flow only when its west and east cells match row by
 * row (both water or both dry in each of the two rows), v only when its south and north cells match
 * column by column; otherwise it is held at 0. So in open water both flow; on a straight wall or
 * coast (two water cells on one side) only the velocity along the wall flows; at a land corner
 * (one or three water cells) nothing flows. Every allowed corner's fluxes then cancel over the water
 * cells it feeds, which is what keeps the volume exact.
 *
 * Control area. The corner's share of water is f = (water cells) / 4: 1 in open water, 1/2 on a wall.
 * Its momentum balance over that area divides the raw two-row difference by f (a wall corner sees the
 * full one-row gradient) and its kinetic energy counts f. To keep the step free of weights, a corner
 * stores the TRANSPORT-WEIGHTED velocity f * velocity in u[k] / v[k], and hx[k] = hy[k] = h_c / f with
 * h_c the mean depth of its water cells: hx * u is then the true depth-times-velocity, du/dt is the raw
 * difference, and the kinetic energy is (hx u^2 + hy v^2) / 2, the same form as on the C layout.
 * A channel one cell wide (walls north and south) is therefore exactly the C layout in 1D.
 * Open and level edges: the ghost cells (halo) carry eta (model_impl.h, sw_edge_cell); the corners on
 * the edge line are ordinary corners, so no ghost velocity is needed. Their velocity ALONG the edge
 * would difference ghost elevations, which lag behind the water (open) and then pump energy into
 * the edge (an eigenvalue analysis of the one-step matrix shows growth): it is held at 0. The
 * velocity across the edge works as on the C layout, from the ghost-to-inner difference.
 * Dry cells: a wall corner's flux also reaches the dry cells of its stencil; the continuity step
 * keeps every dry cell at eta = 0 (it reads h), so volume counts water cells only.
 *
 * Semi-discrete frequency (a = k dx/2, b = l dy/2):
 *   omega^2 = 4 g h (sin^2 a cos^2 b / dx^2 + cos^2 a sin^2 b / dy^2),
 * bilinear in sin^2 a and sin^2 b, so its maximum is at a corner of the square: the 2-cell wave along
 * one axis, omega_max = 2 sqrt(g h) / min(dx, dy) (in a channel 2 sqrt(g h) / dx). Courant limit
 * sqrt(g h) dt / dx <= 1 in 1D and in 2D (square cells). Spurious mode: the checkerboard
 * (a = b = pi/2) has omega = 0 in eta and in (u, v); it neither propagates nor decays.
 */
#include <math.h>
#include <stddef.h>

#include "model/layout.h"
#include "model/model_impl.h"
#include "base/omp_compat.h"

#if SW_REAL_BITS == 64   /* precision-free: compiled in the double copy only */
static double b_max_frequency(double gh, double dx, double dy, int dims)
{
    double d = dims == 2 && dy < dx ? dy : dx;
    return 2.0 * sqrt(gh) / d;
}
#endif

static sw_status b_prepare(sw_model *m, sw_error *err)
{
    const ptrdiff_t nx = (ptrdiff_t)m->grid.nx, ny = (ptrdiff_t)m->grid.ny;
    /* corner (i, j) = north-east corner of cell (i, j) */
    for (ptrdiff_t j = -1; j < ny; j++)
        for (ptrdiff_t i = -1; i < nx; i++) {
            double d[4];
            int sw = sw_model_water_at(m, i, j, &d[0]), se = sw_model_water_at(m, i + 1, j, &d[1]);
            int nw = sw_model_water_at(m, i, j + 1, &d[2]), ne = sw_model_water_at(m, i + 1, j + 1, &d[3]);
            int n = sw + se + nw + ne;
            if (n == 0)
                continue;
            double hc = (d[0] + d[1] + d[2] + d[3]) / n;   /* dry cells contribute 0 */
            double per_f = hc * 4.0 / n;                  /* h_c / f */
            int u_ok = sw == se && nw == ne;
            int v_ok = sw == nw && se == ne;
            /* on the line of an open or level edge the velocity along the edge would difference ghost
             * elevations, which lag behind (open) and pump energy into the edge: it is held at 0 */
            if ((i == -1 && m->edges[SW_WEST] != SW_EDGE_WALL) || (i == nx - 1 && m->edges[SW_EAST] != SW_EDGE_WALL))
                v_ok = 0;
            if ((j == -1 && m->edges[SW_SOUTH] != SW_EDGE_WALL) || (j == ny - 1 && m->edges[SW_NORTH] != SW_EDGE_WALL))
                u_ok = 0;
            size_t c = sw_pidx_halo(m, i, j);
            SW_F(m, hx)[c] = u_ok ? (sw_real)per_f : 0;
            SW_F(m, hy)[c] = v_ok ? (sw_real)per_f : 0;
        }
    return sw_model_build_edges(m, m->grid.dx_m, m->grid.dy_m, err);
}

/* The new elevation of cell k: continuity from the old corner velocities; a wall corner also feeds the
 * dry cells of its stencil, which must stay at 0 (the one formula of both continuity loops). */
static inline sw_real b_eta_new(const sw_real *restrict eta, const sw_real *restrict u, const sw_real *restrict v,
                                const sw_real *restrict hx, const sw_real *restrict hy, const sw_real *restrict h,
                                size_t k, size_t s, sw_real cx, sw_real cy)
{
    return h[k] > 0 ? eta[k] - cx * (hx[k] * u[k] + hx[k - s] * u[k - s] - hx[k - 1] * u[k - 1] - hx[k - s - 1] * u[k - s - 1])
                             - cy * (hy[k] * v[k] + hy[k - 1] * v[k - 1] - hy[k - s] * v[k - s] - hy[k - s - 1] * v[k - s - 1])
                    : 0;
}

/* Continuity (forward: from the old corner velocities of corner rows j-1 and j) on padded row j, at
 * r = j * stride; a wall corner also feeds the dry cells of its stencil, which must stay at 0. */
static inline void b_continuity_row(sw_real *restrict eta, const sw_real *restrict u, const sw_real *restrict v,
                                    const sw_real *restrict hx, const sw_real *restrict hy,
                                    const sw_real *restrict h, size_t r, size_t nx, size_t s, sw_real cx, sw_real cy)
{
    SW_OMP(simd)
    for (size_t i = r + 1; i <= r + nx; i++)
        eta[i] = b_eta_new(eta, u, v, hx, hy, h, i, s, cx, cy);
}

/* The centre values of cell k as b_centre_row makes them, in the state's precision and rounded to
 * float (one division, not two in double: the tracker's input, within float round-off of centre_row). */
static inline void b_centre_f32(const sw_real *restrict eta, const sw_real *restrict u, const sw_real *restrict v,
                                const sw_real *restrict hx, const sw_real *restrict hy, const sw_real *restrict h,
                                size_t k, size_t s, float *e, float *uc, float *vc)
{
    const int wet = h[k] > 0;
    const sw_real w = wet ? (sw_real)0.25 / h[k] : 0;
    *e = wet ? (float)eta[k] : 0.0f;
    *uc = (float)((hx[k] * u[k] + hx[k - 1] * u[k - 1] + hx[k - s] * u[k - s] + hx[k - s - 1] * u[k - s - 1]) * w);
    *vc = (float)((hy[k] * v[k] + hy[k - 1] * v[k - 1] + hy[k - s] * v[k - s] + hy[k - s - 1] * v[k - s - 1]) * w);
}

/* b_continuity_row on padded row j (r = j * stride), and in the same pass the values an observer needs
 * of the finished row at f = its padded row * stride (sw_row_values into buf), as layout_c.c's
 * c_continuity_row_observed. */
static inline void b_continuity_row_observed(sw_real *restrict eta, const sw_real *restrict u,
                                             const sw_real *restrict v, const sw_real *restrict hx,
                                             const sw_real *restrict hy, const sw_real *restrict h, size_t r,
                                             size_t nx, size_t s, sw_real cx, sw_real cy, size_t f,
                                             float *restrict buf)
{
    const sw_obs_row o = sw_obs_row_in(buf, nx);
    float *restrict oe = o.eta, *restrict ou = o.u, *restrict ov = o.v;
    for (size_t q = 0; q < o.n_seg; q++) {
        const size_t a = q * SW_OBS_SEG, b = a + SW_OBS_SEG < nx ? a + SW_OBS_SEG : nx;
        SW_OMP(simd)
        for (size_t i = a; i < b; i++) {
            const size_t k = r + 1 + i;
            eta[k] = b_eta_new(eta, u, v, hx, hy, h, k, s, cx, cy);
            float e, uc, vc;
            b_centre_f32(eta, u, v, hx, hy, h, f + 1 + i, s, &e, &uc, &vc);
            oe[i] = e;
            ou[i] = uc;
            ov[i] = vc;
        }
        sw_row_extremes(oe, ou, ov, a, b, &o.hi[q], &o.lo[q], &o.speed2[q]);   /* the segment is in L1 */
    }
}

/* b_centre_row in float (sw_layout_kernels.centre_row_f32). */
static void b_centre_row_f32(const sw_model *m, size_t j, float *restrict eta, float *restrict u, float *restrict v)
{
    const size_t r = sw_pidx(m, 0, j), s = m->stride;
    SW_OMP(simd)
    for (size_t i = 0; i < m->grid.nx; i++)
        b_centre_f32(SW_F(m, eta), SW_F(m, u), SW_F(m, v), SW_F(m, hx), SW_F(m, hy), SW_F(m, h), r + i, s, &eta[i],
                     &u[i], &v[i]);
}

/* Momentum (backward) on corner row j (columns 0..nx), at r = j * stride: from the new eta of cell rows
 * j and j+1. */
static inline void b_momentum_row(sw_real *restrict u, sw_real *restrict v, const sw_real *restrict eta,
                                  const sw_real *restrict hx, const sw_real *restrict hy, size_t r, size_t nx,
                                  size_t s, sw_real gx, sw_real gy)
{
    SW_OMP(simd)
    for (size_t i = r; i <= r + nx; i++) {
        u[i] = hx[i] > 0 ? u[i] - gx * (eta[i + 1] + eta[i + s + 1] - eta[i] - eta[i + s]) : 0;
        v[i] = hy[i] > 0 ? v[i] - gy * (eta[i + s] + eta[i + s + 1] - eta[i] - eta[i + 1]) : 0;
    }
}

/* The step in one sweep over memory, as layout_c.c's. Each thread owns padded cell rows j0..j1 and, for
 * each row j: continuity of row j (old corners of corner rows j-1, j), its edge ghosts, then momentum of
 * corner row j-1 (new eta of cell rows j-1, j); corner row 0 (the south edge) after cell row 1.
 * Corner row j1 needs the next block's first row of new eta and waits for a barrier, as the next
 * block's continuity reads it old before. A cell row is final once both its corner rows are: rows
 * j0+1 .. j1-1 are observed in the sweep, j0 (its south corners are the previous block's) and j1 at
 * the end. Each cell is computed as in two passes, for any thread count. */
static void b_step(sw_model *m)
{
    const size_t nx = m->grid.nx, ny = m->grid.ny, s = m->stride;
    const sw_real cx = (sw_real)(0.5 * m->dt / m->grid.dx_m), cy = (sw_real)(0.5 * m->dt / m->grid.dy_m);
    const sw_real gx = (sw_real)(0.5 * m->g * m->dt / m->grid.dx_m);
    const sw_real gy = (sw_real)(0.5 * m->g * m->dt / m->grid.dy_m);
    sw_real *restrict eta = SW_F(m, eta), *restrict u = SW_F(m, u), *restrict v = SW_F(m, v);
    const sw_real *restrict hx = SW_F(m, hx), *restrict hy = SW_F(m, hy), *restrict h = SW_F(m, h);
    const size_t nt = (size_t)omp_get_num_threads(), t = (size_t)omp_get_thread_num();
    const size_t j0 = 1 + ny * t / nt, j1 = ny * (t + 1) / nt;   /* padded rows; empty when j1 < j0 */
    float *restrict buf = sw_model_obs_buffer(m, (int)t);

    for (size_t j = j0; j <= j1; j++) {
        if (buf && j >= j0 + 3)   /* with room for them, row j-2's values are made in row j's pass */
            b_continuity_row_observed(eta, u, v, hx, hy, h, j * s, nx, s, cx, cy, (j - 2) * s, buf);
        else
            b_continuity_row(eta, u, v, hx, hy, h, j * s, nx, s, cx, cy);
        sw_model_edge_eta_row(m, j);
        if (j == 1)
            b_momentum_row(u, v, eta, hx, hy, 0, nx, s, gx, gy);   /* the south edge's corners */
        if (j > j0)
            b_momentum_row(u, v, eta, hx, hy, (j - 1) * s, nx, s, gx, gy);
        if (buf && j >= j0 + 3)
            sw_model_observe_row_values(m, j - 2, buf);
        else if (!buf && j > j0 + 1)
            sw_model_observe_row(m, j - 1);
    }
    if (buf && j1 >= j0 + 2)
        sw_model_observe_row(m, j1 - 1);
    SW_OMP(barrier)
    if (j1 >= j0)
        b_momentum_row(u, v, eta, hx, hy, j1 * s, nx, s, gx, gy);
    SW_OMP(barrier)
    if (j1 >= j0)
        sw_model_observe_row(m, j0);
    if (j1 > j0)
        sw_model_observe_row(m, j1);
    SW_OMP(barrier)   /* the step ends when every row has been observed */
}

/* Centre values: eta as stored; velocity = the four corners' mean volume flux (hx u = depth x
 * velocity) divided by the cell's depth, i.e. the depth-mean velocity at the centre. */
static void b_centre_row(const sw_model *m, size_t j, double *eta, double *u, double *v)
{
    const size_t r = sw_pidx(m, 0, j), s = m->stride;
    const sw_real *hx = SW_F(m, hx), *hy = SW_F(m, hy), *uu = SW_F(m, u), *vv = SW_F(m, v);
    for (size_t i = 0; i < m->grid.nx; i++) {
        const size_t k = r + i;
        const double h = SW_F(m, h)[k];
        if (!(h > 0)) {
            eta[i] = u[i] = v[i] = 0;
            continue;
        }
        eta[i] = SW_F(m, eta)[k];
        u[i] = ((double)hx[k] * uu[k] + (double)hx[k - 1] * uu[k - 1] + (double)hx[k - s] * uu[k - s]
                + (double)hx[k - s - 1] * uu[k - s - 1]) / (4 * h);
        v[i] = ((double)hy[k] * vv[k] + (double)hy[k - 1] * vv[k - 1] + (double)hy[k - s] * vv[k - s]
                + (double)hy[k - s - 1] * vv[k - s - 1]) / (4 * h);
    }
}

/* eta at (0, 0), corners at (+-dx/2, +-dy/2): each derivative is a one-cell difference averaged
 * over the two rows (columns) it spans. */
#if SW_REAL_BITS == 64   /* precision-free: compiled in the double copy only */
static void b_symbols(double k, double l, double dx, double dy, sw_symbols *o)
{
    double a = 0.5 * k * dx, b = 0.5 * l * dy;
    o->div_x = o->grad_x = 2 * I * sin(a) * cos(b) / dx;
    o->div_y = o->grad_y = 2 * I * cos(a) * sin(b) / dy;
    o->v_at_u = o->u_at_v = 1;   /* co-located */
}
#endif

static double b_energy(const sw_model *m)
{
    const size_t nx = m->grid.nx, ny = m->grid.ny, s = m->stride;
    const double dx = m->grid.dx_m, dy = m->grid.dy_m;
    const sw_real *eta = SW_F(m, eta), *u = SW_F(m, u), *v = SW_F(m, v), *hx = SW_F(m, hx), *hy = SW_F(m, hy);
    double pot = 0, kin = 0, cross = 0;
    for (size_t j = 1; j <= ny; j++)
        for (size_t i = j * s + 1; i <= j * s + nx; i++) {
            double div = ((double)hx[i] * u[i] + (double)hx[i - s] * u[i - s] - (double)hx[i - 1] * u[i - 1]
                          - (double)hx[i - s - 1] * u[i - s - 1]) / (2 * dx)
                       + ((double)hy[i] * v[i] + (double)hy[i - 1] * v[i - 1] - (double)hy[i - s] * v[i - s]
                          - (double)hy[i - s - 1] * v[i - s - 1]) / (2 * dy);
            pot += (double)eta[i] * eta[i];
            cross += eta[i] * div;
        }
    for (size_t j = 0; j <= ny; j++)
        for (size_t i = j * s; i <= j * s + nx; i++)
            kin += (double)hx[i] * u[i] * u[i] + (double)hy[i] * v[i] * v[i];
    return (0.5 * m->g * pot + 0.5 * kin - 0.5 * m->g * m->dt * cross) * dx * dy;
}

const sw_layout_kernels SW_NAME(sw_layout_b_kernels) = {
    .prepare = b_prepare,
    .step = b_step,
    .centre_row = b_centre_row,
    .centre_row_f32 = b_centre_row_f32,
    .energy = b_energy,
    .observes_rows = 1,
};

#if SW_REAL_BITS == 64
extern const sw_layout_kernels sw_layout_b_kernels_f32;

const sw_layout sw_layout_b = {
    .name = "B",
    .summary = "eta at centres, u and v together at cell corners, two-row averaged differences",
    .stream_values = 9,   /* eta, u, v read and written; hx, hy, h read */
    .max_frequency = b_max_frequency,
    .symbols = b_symbols,
    .kernels = {[SW_DOUBLE] = &sw_layout_b_kernels_f64, [SW_SINGLE] = &sw_layout_b_kernels_f32},
};
#endif
