/* bench_reference.c - the C layout's step as it was before the shared stepper (commit d66de45), kept
 * only so that `shoreward bench` can measure the stepper against it side by side in one run.
 *
 * It is the hand-fused step that layout_c.c held then, unchanged but for the names of the fields (now in
 * the model's view) and of the helpers it called: one sweep over each thread's block of rows, the
 * observer's rows made in the continuity pass two rows on, three barriers. It knows neither rotation,
 * friction nor periodic edges; bench runs it only on the plain C model, and checks that it leaves the
 * same bits as sw_model_step (a benchmark that verifies its answer). Compiled once per precision. Not
 * for runs: nothing but bench.c calls it.
 */
#include "studies/bench_reference.h"

#include "base/omp_compat.h"
#include "model/model_impl.h"

/* The ghosts whose inner cell is in padded row j (then sw_model_edge_eta_row). */
static inline void ref_edge_eta_row(sw_model *m, size_t j)
{
    sw_real *restrict eta = SW_V(&m->view, eta);
    for (size_t q = m->edge_row[j]; q < m->edge_row[j + 1]; q++)
        eta[m->edge[q].ghost] = (sw_real)m->edge[q].keep * eta[m->edge[q].ghost] + (sw_real)m->edge[q].take * eta[m->edge[q].inner];
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
    const sw_row_values o = sw_row_values_in(buf, nx);
    float *restrict oe = (float *)o.eta, *restrict os2 = (float *)o.speed2;
    const size_t n_seg = (nx + SW_OBS_SEG - 1) / SW_OBS_SEG;
    for (size_t q = 0; q < n_seg; q++) {
        const size_t a = q * SW_OBS_SEG, b = a + SW_OBS_SEG < nx ? a + SW_OBS_SEG : nx;
        SW_OMP(simd)
        for (size_t i = a; i < b; i++) {
            const size_t k = k0 + i, r = r0 + i;
            eta[k] = c_eta_new(eta, u, v, hx, hy, k, s, cx, cy);
            float e, uc, vc;
            c_centre_f32(eta, u, v, r, s, &e, &uc, &vc);
            oe[i] = e;
            os2[i] = sw_speed2(uc, vc);
        }
        sw_row_extremes(oe, os2, a, b, (float *)&o.hi[q], (float *)&o.lo[q], (float *)&o.top_speed2[q]);   /* the segment is in L1 */
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
void SW_NAME(sw_bench_reference_c_step)(sw_model *m)
{
    const size_t nx = m->grid.nx, ny = m->grid.ny, s = m->stride;
    const sw_real cx = (sw_real)(m->dt / m->grid.dx_m), cy = (sw_real)(m->dt / m->grid.dy_m);
    const sw_real gx = (sw_real)(m->g * m->dt / m->grid.dx_m), gy = (sw_real)(m->g * m->dt / m->grid.dy_m);
    sw_real *restrict eta = SW_V(&m->view, eta), *restrict u = SW_V(&m->view, u), *restrict v = SW_V(&m->view, v);
    const sw_real *restrict hx = SW_V(&m->view, hx), *restrict hy = SW_V(&m->view, hy);
    const size_t nt = (size_t)omp_get_num_threads(), t = (size_t)omp_get_thread_num();
    const size_t j0 = 1 + ny * t / nt, j1 = ny * (t + 1) / nt;   /* padded rows; empty when j1 < j0 */
    float *restrict buf = sw_model_obs_buffer(m, (int)t);

    for (size_t j = j0; j <= j1; j++) {
        if (buf && j >= j0 + 3)
            c_continuity_row_observed(eta, u, v, hx, hy, j * s + 1, nx, s, cx, cy, (j - 2) * s + 1, buf);
        else
            c_continuity_row(eta, u, v, hx, hy, j * s + 1, nx, s, cx, cy);
        ref_edge_eta_row(m, j);
        c_u_row(u, eta, hx, j * s + 1, nx, gx);
        if (j == 1)
            c_v_row(v, eta, hy, 1, nx, s, gy);   /* the south edge's faces: ghost row 0 and row 1 */
        if (j > j0)
            c_v_row(v, eta, hy, (j - 1) * s + 1, nx, s, gy);
        if (buf && j >= j0 + 3)
            sw_model_observe_row(m, j - 2, buf);
        else if (!buf && j > j0 + 1)
            sw_model_observe_row(m, j - 1, NULL);
    }
    if (buf && j1 >= j0 + 2)
        sw_model_observe_row(m, j1 - 1, NULL);
    SW_OMP(barrier)
    if (j1 >= j0)
        c_v_row(v, eta, hy, j1 * s + 1, nx, s, gy);
    SW_OMP(barrier)
    if (j1 >= j0)
        sw_model_observe_row(m, j0, NULL);
    if (j1 > j0)
        sw_model_observe_row(m, j1, NULL);
    SW_OMP(barrier)   /* the step ends when every row has been observed */
}

