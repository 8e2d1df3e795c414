/* layout_a.c - the Arakawa A layout: eta, u and v all at cell centres, centred differences.
 *
 *        +---------+              k = padded index of cell (i, j)
 *        |  eta[k] |              eta, u, v, h at the centre of cell k
 *        |  u[k]   |              derivatives: (f[k+1] - f[k-1]) / (2 dx), (f[k+s] - f[k-s]) / (2 dy)
 *        |  v[k]   |              hx[k], hy[k]: depth carried by u[k], v[k]
 *        +---------+
 *
 * Walls: u is held at 0 in every water cell whose west or east neighbour is land or a wall edge
 * (hx = 0 there), v likewise with the south/north neighbours (hy = 0); so no flux crosses into land,
 * water volume is conserved, and momentum never reads a land cell's eta. Open and level edges: the
 * ghost cell (halo) carries eta and the normal velocity set in model_impl.h (sw_edge_cell), with
 * the inner cell's depth.
 * Semi-discrete frequency: omega^2 = g h (sin^2(k dx) / dx^2 + sin^2(l dy) / dy^2), highest at the
 * 4-cell wave: sqrt(g h) sqrt(1/dx^2 + 1/dy^2); in a channel sqrt(g h) / dx. With square cells the
 * Courant limit is sqrt(2) in 2D and 2 in 1D. The 2-cell wave has omega = 0: a checkerboard in eta
 * does not propagate (the layout's known spurious mode).
 */
#include <math.h>

#include "model/layout.h"
#include "model/model_impl.h"
#include "base/omp_compat.h"

#if SW_REAL_BITS == 64   /* precision-free: compiled in the double copy only */
static double a_max_frequency(double gh, double dx, double dy, int dims)
{
    double s = 1.0 / (dx * dx) + (dims == 2 ? 1.0 / (dy * dy) : 0.0);
    return sqrt(gh * s);
}
#endif

static sw_status a_prepare(sw_model *m, sw_error *err)
{
    const size_t nx = m->grid.nx, ny = m->grid.ny, s = m->stride;
    /* water flows across open and level edges: their ghosts act as water neighbours */
    const int open_w = m->edges[SW_WEST] != SW_EDGE_WALL, open_e = m->edges[SW_EAST] != SW_EDGE_WALL;
    const int open_s = m->edges[SW_SOUTH] != SW_EDGE_WALL, open_n = m->edges[SW_NORTH] != SW_EDGE_WALL;
    const sw_real *h = SW_F(m, h);
    for (size_t j = 0; j < ny; j++)
        for (size_t i = 0; i < nx; i++) {
            size_t k = sw_pidx(m, i, j);
            if (h[k] <= 0)
                continue;
            int west = i > 0 ? h[k - 1] > 0 : open_w;
            int east = i + 1 < nx ? h[k + 1] > 0 : open_e;
            int south = j > 0 ? h[k - s] > 0 : open_s;
            int north = j + 1 < ny ? h[k + s] > 0 : open_n;
            SW_F(m, hx)[k] = west && east ? h[k] : 0;
            SW_F(m, hy)[k] = south && north ? h[k] : 0;
        }
    sw_status rc = sw_model_build_edges(m, m->grid.dx_m, m->grid.dy_m, err);
    if (rc != SW_OK)
        return rc;
    /* ghosts carry the inner cell's depth along their normal */
    for (size_t q = 0; q < m->n_edge; q++) {
        const sw_edge_cell *oc = &m->edge[q];
        if (oc->normal_x)
            SW_F(m, hx)[oc->ghost] = SW_F(m, h)[oc->inner];
        else
            SW_F(m, hy)[oc->ghost] = SW_F(m, h)[oc->inner];
    }
    return SW_OK;
}

/* The new elevation of cell k: continuity from the old velocities (the one formula of both loops). */
static inline sw_real a_eta_new(const sw_real *restrict eta, const sw_real *restrict u, const sw_real *restrict v,
                                const sw_real *restrict hx, const sw_real *restrict hy, size_t k, size_t s,
                                sw_real cx, sw_real cy)
{
    return eta[k] - (cx * (hx[k + 1] * u[k + 1] - hx[k - 1] * u[k - 1]) + cy * (hy[k + s] * v[k + s] - hy[k - s] * v[k - s]));
}

/* Continuity (forward: from the old velocities) on the padded row starting at r + 1. */
static inline void a_continuity_row(sw_real *restrict eta, const sw_real *restrict u, const sw_real *restrict v,
                                    const sw_real *restrict hx, const sw_real *restrict hy, size_t r, size_t nx,
                                    size_t s, sw_real cx, sw_real cy)
{
    SW_OMP(simd)
    for (size_t i = r + 1; i <= r + nx; i++)
        eta[i] = a_eta_new(eta, u, v, hx, hy, i, s, cx, cy);
}

/* The centre values of cell k (the stored ones), rounded to float. */
static inline void a_centre_f32(const sw_real *restrict eta, const sw_real *restrict u, const sw_real *restrict v,
                                size_t k, float *e, float *uc, float *vc)
{
    *e = (float)eta[k];
    *uc = (float)u[k];
    *vc = (float)v[k];
}

/* a_continuity_row for the row at r + 1, and in the same pass the values an observer needs of the
 * finished row at f + 1 (sw_row_values into buf: the stored eta, u, v as floats, then per segment the
 * highest and lowest eta and the highest u*u + v*v), as layout_c.c's c_continuity_row_observed. */
static inline void a_continuity_row_observed(sw_real *restrict eta, const sw_real *restrict u,
                                             const sw_real *restrict v, const sw_real *restrict hx,
                                             const sw_real *restrict hy, size_t r, size_t nx, size_t s, sw_real cx,
                                             sw_real cy, size_t f, float *restrict buf)
{
    const sw_obs_row o = sw_obs_row_in(buf, nx);
    float *restrict oe = o.eta, *restrict ou = o.u, *restrict ov = o.v;
    for (size_t q = 0; q < o.n_seg; q++) {
        const size_t a = q * SW_OBS_SEG, b = a + SW_OBS_SEG < nx ? a + SW_OBS_SEG : nx;
        SW_OMP(simd)
        for (size_t i = a; i < b; i++) {
            const size_t k = r + 1 + i, c = f + 1 + i;
            eta[k] = a_eta_new(eta, u, v, hx, hy, k, s, cx, cy);
            float e, uc, vc;
            a_centre_f32(eta, u, v, c, &e, &uc, &vc);
            oe[i] = e;
            ou[i] = uc;
            ov[i] = vc;
        }
        sw_row_extremes(oe, ou, ov, a, b, &o.hi[q], &o.lo[q], &o.speed2[q]);   /* the segment is in L1 */
    }
}

/* Momentum (backward: from the new eta of this row and its two neighbours) on the row at r + 1. */
static inline void a_momentum_row(sw_real *restrict u, sw_real *restrict v, const sw_real *restrict eta,
                                  const sw_real *restrict hx, const sw_real *restrict hy, size_t r, size_t nx,
                                  size_t s, sw_real gx, sw_real gy)
{
    SW_OMP(simd)
    for (size_t i = r + 1; i <= r + nx; i++) {
        u[i] = hx[i] > 0 ? u[i] - gx * (eta[i + 1] - eta[i - 1]) : 0;
        v[i] = hy[i] > 0 ? v[i] - gy * (eta[i + s] - eta[i - s]) : 0;
    }
}

/* The step in one sweep over memory, as layout_c.c's. Each thread owns padded rows j0..j1 and, for each
 * row j: continuity of row j (old u, v of rows j-1 .. j+1), its edge ghosts, then momentum of row j-1
 * (new eta of rows j-2 .. j). Momentum of the block's first row needs the previous block's last row of
 * new eta, and of its last row the next block's first: both wait for a barrier, as the next block's
 * continuity reads the old velocities of our last row before it. The ghosts' velocities follow once
 * every inner velocity is new. Each cell is computed as before, for any thread count. Rows j0+1 ..
 * j1-1 are observed in the sweep (model_impl.h), j0 and j1 at the end; with room for the row's values
 * the observer is handed row j-2's, made in row j's continuity pass, and row j1-1's after the sweep. */
static void a_step(sw_model *m)
{
    const size_t nx = m->grid.nx, ny = m->grid.ny, s = m->stride;
    const sw_real cx = (sw_real)(0.5 * m->dt / m->grid.dx_m), cy = (sw_real)(0.5 * m->dt / m->grid.dy_m);
    const sw_real gx = (sw_real)(0.5 * m->g * m->dt / m->grid.dx_m);
    const sw_real gy = (sw_real)(0.5 * m->g * m->dt / m->grid.dy_m);
    sw_real *restrict eta = SW_F(m, eta), *restrict u = SW_F(m, u), *restrict v = SW_F(m, v);
    const sw_real *restrict hx = SW_F(m, hx), *restrict hy = SW_F(m, hy);
    const size_t nt = (size_t)omp_get_num_threads(), t = (size_t)omp_get_thread_num();
    const size_t j0 = 1 + ny * t / nt, j1 = ny * (t + 1) / nt;   /* padded rows; empty when j1 < j0 */
    float *restrict buf = sw_model_obs_buffer(m, (int)t);

    for (size_t j = j0; j <= j1; j++) {
        if (buf && j >= j0 + 3)
            a_continuity_row_observed(eta, u, v, hx, hy, j * s, nx, s, cx, cy, (j - 2) * s, buf);
        else
            a_continuity_row(eta, u, v, hx, hy, j * s, nx, s, cx, cy);
        sw_model_edge_eta_row(m, j);
        if (j > j0 + 1)
            a_momentum_row(u, v, eta, hx, hy, (j - 1) * s, nx, s, gx, gy);
        if (buf && j >= j0 + 3)
            sw_model_observe_row_values(m, j - 2, buf);
        else if (!buf && j > j0 + 1)
            sw_model_observe_row(m, j - 1);
    }
    if (buf && j1 >= j0 + 2)
        sw_model_observe_row(m, j1 - 1);
    SW_OMP(barrier)
    if (j1 >= j0)
        a_momentum_row(u, v, eta, hx, hy, j0 * s, nx, s, gx, gy);
    if (j1 > j0)
        a_momentum_row(u, v, eta, hx, hy, j1 * s, nx, s, gx, gy);
    SW_OMP(barrier)

    /* ghost normal velocities: the outgoing wave's (open) or the inner cell's mirror (level) */
    const sw_edge_cell *restrict oc = m->edge;
    const size_t n_edge = m->n_edge;
    SW_OMP(for schedule(static) nowait)
    for (size_t q = 0; q < n_edge; q++) {
        sw_real *vel = oc[q].normal_x ? u : v;
        vel[oc[q].ghost] = (sw_real)oc[q].vel * eta[oc[q].ghost] + (sw_real)oc[q].mirror * vel[oc[q].inner];
    }
    if (j1 >= j0)
        sw_model_observe_row(m, j0);
    if (j1 > j0)
        sw_model_observe_row(m, j1);
    SW_OMP(barrier)   /* the step ends when every row has been observed */
}

static void a_centre_row(const sw_model *m, size_t j, double *eta, double *u, double *v)
{
    const size_t r = sw_pidx(m, 0, j);
    for (size_t i = 0; i < m->grid.nx; i++) {
        eta[i] = SW_F(m, eta)[r + i];
        u[i] = SW_F(m, u)[r + i];
        v[i] = SW_F(m, v)[r + i];
    }
}

/* a_centre_row in float: the stored values, rounded. */
static void a_centre_row_f32(const sw_model *m, size_t j, float *restrict eta, float *restrict u, float *restrict v)
{
    const size_t r = sw_pidx(m, 0, j);
    SW_OMP(simd)
    for (size_t i = 0; i < m->grid.nx; i++)
        a_centre_f32(SW_F(m, eta), SW_F(m, u), SW_F(m, v), r + i, &eta[i], &u[i], &v[i]);
}

#if SW_REAL_BITS == 64   /* precision-free: compiled in the double copy only */
static void a_symbols(double k, double l, double dx, double dy, sw_symbols *o)
{
    o->div_x = o->grad_x = I * sin(k * dx) / dx;
    o->div_y = o->grad_y = I * sin(l * dy) / dy;
    o->v_at_u = o->u_at_v = 1;   /* co-located */
}
#endif

static double a_energy(const sw_model *m)
{
    const size_t nx = m->grid.nx, ny = m->grid.ny, s = m->stride;
    const double dx = m->grid.dx_m, dy = m->grid.dy_m;
    const sw_real *eta = SW_F(m, eta), *u = SW_F(m, u), *v = SW_F(m, v), *hx = SW_F(m, hx), *hy = SW_F(m, hy);
    double pot = 0, kin = 0, cross = 0;
    for (size_t j = 1; j <= ny; j++)
        for (size_t i = j * s + 1; i <= j * s + nx; i++) {
            double div = ((double)hx[i + 1] * u[i + 1] - (double)hx[i - 1] * u[i - 1]) / (2 * dx)
                       + ((double)hy[i + s] * v[i + s] - (double)hy[i - s] * v[i - s]) / (2 * dy);
            pot += (double)eta[i] * eta[i];
            kin += (double)hx[i] * u[i] * u[i] + (double)hy[i] * v[i] * v[i];
            cross += eta[i] * div;
        }
    return (0.5 * m->g * pot + 0.5 * kin - 0.5 * m->g * m->dt * cross) * dx * dy;
}

const sw_layout_kernels SW_NAME(sw_layout_a_kernels) = {
    .prepare = a_prepare,
    .step = a_step,
    .centre_row = a_centre_row,
    .centre_row_f32 = a_centre_row_f32,
    .energy = a_energy,
    .observes_rows = 1,
};

#if SW_REAL_BITS == 64
extern const sw_layout_kernels sw_layout_a_kernels_f32;

const sw_layout sw_layout_a = {
    .name = "A",
    .summary = "co-located: eta, u and v at cell centres, centred differences",
    .stream_values = 8,   /* eta, u, v read and written; hx, hy read */
    .max_frequency = a_max_frequency,
    .symbols = a_symbols,
    .kernels = {[SW_DOUBLE] = &sw_layout_a_kernels_f64, [SW_SINGLE] = &sw_layout_a_kernels_f32},
};
#endif
