/* layout_c.c - the Arakawa C layout: eta at cell centres, u and v on the faces.
 *
 *            v[k]                 k = padded index of cell (i, j)
 *        +----^----+              u[k]: x velocity on the EAST face of cell k
 *        |         |              v[k]: y velocity on the NORTH face of cell k
 *  u[k-1]>  eta[k] >u[k]          hx[k], hy[k]: depth carried by u[k], v[k]
 *        |         |
 *        +----^----+
 *          v[k-stride]
 *
 * Face depth: the mean of the two cells' depths when both are water; 0 (a wall) when either is land
 * or beyond a wall edge; the inner cell's depth on an open or level edge, whose ghost cell (halo)
 * carries the outgoing wave or the mirrored elevation (model_impl.h, sw_edge_cell).
 * Semi-discrete frequency: omega^2 = 4 g h (sin^2(k dx/2) / dx^2 + sin^2(l dy/2) / dy^2), highest at the
 * 2-cell wave: 2 sqrt(g h) sqrt(1/dx^2 + 1/dy^2); in a channel 2 sqrt(g h) / dx. With square cells
 * the Courant limit sqrt(g h) dt / dx <= 2 / max(omega dx / sqrt(g h)) is 1/sqrt(2) in 2D and 1 in 1D.
 */
#include <math.h>

#include "model/layout.h"
#include "model/model_impl.h"
#include "base/omp_compat.h"

#if SW_REAL_BITS == 64   /* precision-free: compiled in the double copy only */
static double c_max_frequency(double gh, double dx, double dy, int dims)
{
    double s = 1.0 / (dx * dx) + (dims == 2 ? 1.0 / (dy * dy) : 0.0);
    return 2.0 * sqrt(gh * s);
}
#endif

static sw_status c_prepare(sw_model *m, sw_error *err)
{
    const size_t nx = m->grid.nx, ny = m->grid.ny, s = m->stride;
    const sw_real *h = SW_F(m, h);
    for (size_t j = 0; j < ny; j++)
        for (size_t i = 0; i < nx; i++) {
            size_t k = sw_pidx(m, i, j);
            if (h[k] <= 0)
                continue;
            /* east face: interior, or the east edge */
            if (i + 1 < nx)
                SW_F(m, hx)[k] = h[k + 1] > 0 ? (sw_real)0.5 * (h[k] + h[k + 1]) : 0;
            else
                SW_F(m, hx)[k] = m->edges[SW_EAST] != SW_EDGE_WALL ? h[k] : 0;
            if (i == 0)
                SW_F(m, hx)[k - 1] = m->edges[SW_WEST] != SW_EDGE_WALL ? h[k] : 0;
            /* north face */
            if (j + 1 < ny)
                SW_F(m, hy)[k] = h[k + s] > 0 ? (sw_real)0.5 * (h[k] + h[k + s]) : 0;
            else
                SW_F(m, hy)[k] = m->edges[SW_NORTH] != SW_EDGE_WALL ? h[k] : 0;
            if (j == 0)
                SW_F(m, hy)[k - s] = m->edges[SW_SOUTH] != SW_EDGE_WALL ? h[k] : 0;
        }
    return sw_model_build_edges(m, m->grid.dx_m, m->grid.dy_m, err);
}

/* The new elevation of cell k: continuity from the old velocities. The one formula both continuity
 * loops use, so that a row comes out the same bits whichever loop a thread's block gives it to. */
static inline sw_real c_eta_new(const sw_real *restrict eta, const sw_real *restrict u, const sw_real *restrict v,
                                const sw_real *restrict hx, const sw_real *restrict hy, size_t k, size_t s,
                                sw_real cx, sw_real cy)
{
    return eta[k] - (cx * (hx[k] * u[k] - hx[k - 1] * u[k - 1]) + cy * (hy[k] * v[k] - hy[k - s] * v[k - s]));
}

/* One row of each half-step, k0 = padded index of the row's first interior cell. */
static inline void c_continuity_row(sw_real *restrict eta, const sw_real *restrict u, const sw_real *restrict v,
                                    const sw_real *restrict hx, const sw_real *restrict hy, size_t k0, size_t nx,
                                    size_t s, sw_real cx, sw_real cy)
{
    SW_OMP(simd)
    for (size_t i = k0; i < k0 + nx; i++)
        eta[i] = c_eta_new(eta, u, v, hx, hy, i, s, cx, cy);
}

/* The centre values of cell k as c_centre_row makes them, rounded to float: each is (float) of
 * c_centre_row's. In single precision the float sum rounds once where c_centre_row rounds to double
 * and then to float; rounding twice gives the same result when the wider format has at least 2 p + 2
 * bits for a p-bit narrower one (53 >= 2 * 24 + 2; Figueroa 1995, ACM SIGNUM Newsletter 30(3)
 * [memory]); halving is exact. */
static inline void c_centre_f32(const sw_real *restrict eta, const sw_real *restrict u, const sw_real *restrict v,
                                size_t k, size_t s, float *e, float *uc, float *vc)
{
    *e = (float)eta[k];
    *uc = (float)((sw_real)0.5 * (u[k - 1] + u[k]));
    *vc = (float)((sw_real)0.5 * (v[k - s] + v[k]));
}

/* c_continuity_row for the row at k0, and in the same pass the values an observer needs of the
 * finished row at r0 (sw_row_values, into buf: eta, u, v at the centres as floats, then per segment the
 * highest and lowest eta and the highest u*u + v*v). The finished row is in cache, and its arithmetic
 * hides behind the memory stream of the row being stepped. */
static inline void c_continuity_row_observed(sw_real *restrict eta, const sw_real *restrict u,
                                             const sw_real *restrict v, const sw_real *restrict hx,
                                             const sw_real *restrict hy, size_t k0, size_t nx, size_t s, sw_real cx,
                                             sw_real cy, size_t r0, float *restrict buf)
{
    const sw_obs_row o = sw_obs_row_in(buf, nx);
    float *restrict oe = o.eta, *restrict ou = o.u, *restrict ov = o.v;
    for (size_t q = 0; q < o.n_seg; q++) {
        const size_t a = q * SW_OBS_SEG, b = a + SW_OBS_SEG < nx ? a + SW_OBS_SEG : nx;
        SW_OMP(simd)
        for (size_t i = a; i < b; i++) {
            const size_t k = k0 + i, r = r0 + i;
            eta[k] = c_eta_new(eta, u, v, hx, hy, k, s, cx, cy);
            float e, uc, vc;
            c_centre_f32(eta, u, v, r, s, &e, &uc, &vc);
            oe[i] = e;
            ou[i] = uc;
            ov[i] = vc;
        }
        sw_row_extremes(oe, ou, ov, a, b, &o.hi[q], &o.lo[q], &o.speed2[q]);   /* the segment is in L1 */
    }
}

/* u on the faces k0 - 1 .. k0 + nx - 1 (the west edge face through the east edge face). */
static inline void c_u_row(sw_real *restrict u, const sw_real *restrict eta, const sw_real *restrict hx, size_t k0,
                           size_t nx, sw_real gx)
{
    SW_OMP(simd)
    for (size_t i = k0 - 1; i < k0 + nx; i++)
        u[i] = hx[i] > 0 ? u[i] - gx * (eta[i + 1] - eta[i]) : 0;
}

/* v on the north faces of the row starting at k0 (padded row 0 holds the south edge's faces). */
static inline void c_v_row(sw_real *restrict v, const sw_real *restrict eta, const sw_real *restrict hy, size_t k0,
                           size_t nx, size_t s, sw_real gy)
{
    SW_OMP(simd)
    for (size_t i = k0; i < k0 + nx; i++)
        v[i] = hy[i] > 0 ? v[i] - gy * (eta[i + s] - eta[i]) : 0;
}

/* The step in one sweep over memory. Each thread owns a block of rows j0..j1 and, for each row j:
 * advances eta (old u, v), sets that row's edge ghosts, advances u of row j (new eta of row j) and
 * v of row j-1 (new eta of rows j-1 and j). v of the block's last row needs the next block's first
 * row of eta, so it waits for a barrier. The next block reads that old v before the barrier, as the
 * continuity equation requires. Each cell is computed the same way for any thread count.
 * Observing (model_impl.h): row j-1 is final once v of row j-1 is, except the block's first row,
 * whose south face belongs to the previous block's last v; so rows j0+1 .. j1-1 are observed in the
 * sweep, while still in cache, and rows j0 and j1 after the second barrier (a third ends the step).
 * With room for the row's values (sw_model_obs_buffer) the observer is handed them made in the
 * continuity pass two rows on (c_continuity_row_observed), row j-2 at row j, and the block's row
 * j1-1 after the sweep; without, it makes them itself. The choice is per thread and step: one branch
 * per row, none per cell. */
static void c_step(sw_model *m)
{
    const size_t nx = m->grid.nx, ny = m->grid.ny, s = m->stride;
    const sw_real cx = (sw_real)(m->dt / m->grid.dx_m), cy = (sw_real)(m->dt / m->grid.dy_m);
    const sw_real gx = (sw_real)(m->g * m->dt / m->grid.dx_m), gy = (sw_real)(m->g * m->dt / m->grid.dy_m);
    sw_real *restrict eta = SW_F(m, eta), *restrict u = SW_F(m, u), *restrict v = SW_F(m, v);
    const sw_real *restrict hx = SW_F(m, hx), *restrict hy = SW_F(m, hy);
    const size_t nt = (size_t)omp_get_num_threads(), t = (size_t)omp_get_thread_num();
    const size_t j0 = 1 + ny * t / nt, j1 = ny * (t + 1) / nt;   /* padded rows; empty when j1 < j0 */
    float *restrict buf = sw_model_obs_buffer(m, (int)t);

    for (size_t j = j0; j <= j1; j++) {
        if (buf && j >= j0 + 3)
            c_continuity_row_observed(eta, u, v, hx, hy, j * s + 1, nx, s, cx, cy, (j - 2) * s + 1, buf);
        else
            c_continuity_row(eta, u, v, hx, hy, j * s + 1, nx, s, cx, cy);
        sw_model_edge_eta_row(m, j);
        c_u_row(u, eta, hx, j * s + 1, nx, gx);
        if (j == 1)
            c_v_row(v, eta, hy, 1, nx, s, gy);   /* the south edge's faces: ghost row 0 and row 1 */
        if (j > j0)
            c_v_row(v, eta, hy, (j - 1) * s + 1, nx, s, gy);
        if (buf && j >= j0 + 3)
            sw_model_observe_row_values(m, j - 2, buf);
        else if (!buf && j > j0 + 1)
            sw_model_observe_row(m, j - 1);
    }
    if (buf && j1 >= j0 + 2)
        sw_model_observe_row(m, j1 - 1);
    SW_OMP(barrier)
    if (j1 >= j0)
        c_v_row(v, eta, hy, j1 * s + 1, nx, s, gy);
    SW_OMP(barrier)
    if (j1 >= j0)
        sw_model_observe_row(m, j0);
    if (j1 > j0)
        sw_model_observe_row(m, j1);
    SW_OMP(barrier)   /* the step ends when every row has been observed */
}

static void c_centre_row(const sw_model *m, size_t j, double *eta, double *u, double *v)
{
    const size_t r = sw_pidx(m, 0, j), s = m->stride;
    for (size_t i = 0; i < m->grid.nx; i++) {
        size_t k = r + i;
        eta[i] = SW_F(m, eta)[k];
        u[i] = 0.5 * ((double)SW_F(m, u)[k - 1] + SW_F(m, u)[k]);
        v[i] = 0.5 * ((double)SW_F(m, v)[k - s] + SW_F(m, v)[k]);
    }
}

/* c_centre_row in float (sw_layout_kernels.centre_row_f32). */
static void c_centre_row_f32(const sw_model *m, size_t j, float *restrict eta, float *restrict u, float *restrict v)
{
    const size_t r = sw_pidx(m, 0, j), s = m->stride;
    SW_OMP(simd)
    for (size_t i = 0; i < m->grid.nx; i++)
        c_centre_f32(SW_F(m, eta), SW_F(m, u), SW_F(m, v), r + i, s, &eta[i], &u[i], &v[i]);
}

#if SW_REAL_BITS == 64   /* precision-free: compiled in the double copy only */
static void c_symbols(double k, double l, double dx, double dy, sw_symbols *o)
{
    double a = 0.5 * k * dx, b = 0.5 * l * dy;
    o->div_x = o->grad_x = 2 * I * sin(a) / dx;
    o->div_y = o->grad_y = 2 * I * sin(b) / dy;
    o->v_at_u = o->u_at_v = cos(a) * cos(b);   /* four-point average across the cell corner */
}
#endif

static double c_energy(const sw_model *m)
{
    const size_t nx = m->grid.nx, ny = m->grid.ny, s = m->stride;
    const double dx = m->grid.dx_m, dy = m->grid.dy_m;
    const sw_real *eta = SW_F(m, eta), *u = SW_F(m, u), *v = SW_F(m, v), *hx = SW_F(m, hx), *hy = SW_F(m, hy);
    double pot = 0, kin = 0, cross = 0;
    for (size_t j = 1; j <= ny; j++)
        for (size_t i = j * s + 1; i <= j * s + nx; i++) {
            double div = ((double)hx[i] * u[i] - (double)hx[i - 1] * u[i - 1]) / dx
                       + ((double)hy[i] * v[i] - (double)hy[i - s] * v[i - s]) / dy;
            pot += (double)eta[i] * eta[i];
            cross += eta[i] * div;
        }
    for (size_t j = 0; j <= ny; j++)
        for (size_t i = j * s; i <= j * s + nx; i++) {
            if (j > 0)
                kin += (double)hx[i] * u[i] * u[i];
            if (i > j * s)
                kin += (double)hy[i] * v[i] * v[i];
        }
    return (0.5 * m->g * pot + 0.5 * kin - 0.5 * m->g * m->dt * cross) * dx * dy;
}

const sw_layout_kernels SW_NAME(sw_layout_c_kernels) = {
    .prepare = c_prepare,
    .step = c_step,
    .centre_row = c_centre_row,
    .centre_row_f32 = c_centre_row_f32,
    .energy = c_energy,
    .observes_rows = 1,
};

#if SW_REAL_BITS == 64
extern const sw_layout_kernels sw_layout_c_kernels_f32;

const sw_layout sw_layout_c = {
    .name = "C",
    .summary = "staggered: eta at centres, u on east/west faces, v on north/south faces",
    .stream_values = 8,   /* eta, u, v read and written; hx, hy read */
    .max_frequency = c_max_frequency,
    .symbols = c_symbols,
    .kernels = {[SW_DOUBLE] = &sw_layout_c_kernels_f64, [SW_SINGLE] = &sw_layout_c_kernels_f32},
};
#endif
