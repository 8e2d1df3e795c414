/* layout_d.c - the Arakawa D layout: eta at cell centres, u on the north/south faces, v on the east/west
 * faces (each velocity lies along its face, where the C layout has the other component).
 *
 *              u[k]                 k = padded index of cell (i, j), s = stride
 *        +-----> ---+               u[k]: x velocity on the NORTH face of cell k
 *        |          |               v[k]: y velocity on the EAST face of cell k
 * v[k-1] ^  eta[k]  ^ v[k]          hx[k], hy[k]: flux depths of u[k], v[k] (see below)
 *        |          |               u: padded rows 0..ny, columns 1..nx (+ ghosts in the halo columns)
 *        +-----> ---+               v: padded rows 1..ny, columns 0..nx (+ ghosts in the halo rows)
 *            u[k-s]
 *
 * Stencils: a velocity is half a cell from eta across its face and a whole cell along it, so each
 * derivative is a two-cell centred difference averaged over the two rows (columns) next to the face:
 *   D(hu)_x at eta[k] = (F[k+1] + F[k+1-s] - F[k-1] - F[k-1-s]) / (4 dx),        F = hx u,
 *   D(hv)_y at eta[k] = (H[k+s] + H[k+s-1] - H[k-s] - H[k-s-1]) / (4 dy),        H = hy v,
 *   G(eta)_x at u[k]  = (eta[k+1] + eta[k+1+s] - eta[k-1] - eta[k-1+s]) / (4 dx),
 *   G(eta)_y at v[k]  = (eta[k+s] + eta[k+s+1] - eta[k-s] - eta[k-s+1]) / (4 dy),
 * so G = -D^T and water volume and E* (layout.h) are conserved exactly.
 *
 * Walls (free slip). "Water" is a water cell of the grid or the ghost beside an open or level edge.
 * u on the face between cells (i, j) and (i, j+1) flows when at least one of those two is water and
 * its stencil is mirror-symmetric: (i-1, j) and (i+1, j) alike, (i-1, j+1) and (i+1, j+1) alike, not
 * all dry; v likewise with the roles of x and y swapped. So along a straight wall the velocity along
 * the wall flows (half its stencil is water), the velocity across it is held at 0 in the first cell
 * row, and each allowed point's fluxes cancel over the water cells it feeds (exact volume). Its flux
 * also reaches dry cells of its stencil; the continuity step keeps every dry cell at eta = 0.
 * Control area: f = (water cells of the stencil) / 4, 1 in open water and 1/2 on a wall. As on the
 * B layout (layout_b.c) u[k], v[k] store f * velocity and hx, hy = h_c / f, h_c = the mean depth of the
 * one or two water cells beside the face; hx u is the true depth-times-velocity, the step has no
 * weights, and the kinetic energy is (hx u^2 + hy v^2) / 2. A channel one cell wide (walls north and
 * south) carries u on its two walls and no v: it is exactly the A layout in 1D.
 * Open and level edges: ghost cells (halo) carry eta; the continuity of the edge row also reads the
 * normal velocity on the two faces of each ghost cell along the edge, which the step sets from the
 * edge list as a volume flux divided by the ghost's hx = h of the inner cell.
 * Level: ghost eta = -inner eta (sw_model_edge_eta_row) and the inner face's flux mirrored: an exact
 * mirror image.
 * Open: the two-cell differences split the layout into interleaved lattices (even and odd cells
 * along the normal), and a ghost must not feed one lattice from the other, or the edge pumps
 * energy into the basin (growth of 1e-3 per step, found with an eigenvalue analysis of the one-step
 * matrix). So the ghost velocity, read by the edge cell, is the outgoing wave's for the edge cell's
 * own eta, sign sqrt(g/h) eta_inner (its energy flux c eta^2 only leaves); and the ghost eta, read by
 * the normal velocities one cell in, is left alone by the shared update (keep = 1, take = 0) and
 * moves by an implicit upwind step over dx towards those velocities' outgoing-wave elevation.
 * Along an open or level edge line the velocity parallel to the edge would difference ghost
 * elevations: it is held at 0 (hx or hy = 0 there).
 * Semi-discrete frequency (a = k dx/2, b = l dy/2):
 *   omega^2 = g h (sin^2 2a cos^2 b / dx^2 + cos^2 a sin^2 2b / dy^2)
 *           = 4 g h (1 - X)(1 - Y)(X / dx^2 + Y / dy^2),   X = sin^2 a, Y = sin^2 b.
 * With p = 1/dx^2, q = 1/dy^2 the interior maximum is at X = (2p - q)/(3p), Y = (2q - p)/(3q)
 * (valid while p <= 2q and q <= 2p), omega^2 = 4 g h (p + q)^3 / (27 p q); otherwise on the edge
 * X = 1/2, Y = 0 (or the reverse), omega^2 = g h max(p, q). Square cells: omega_max =
 * sqrt(32/27) sqrt(g h) / dx at sin^2 a = sin^2 b = 1/3, Courant limit sqrt(27/8) = 1.8371 in 2D;
 * in a channel omega_max = sqrt(g h) / dx (the 4-cell wave), limit 2.
 * Spurious modes: every 2-cell wave along x (a = pi/2, any b) or along y has omega = 0.
 */
#include <math.h>
#include <stddef.h>

#include "model/layout.h"
#include "model/model_impl.h"
#include "base/omp_compat.h"

#if SW_REAL_BITS == 64   /* precision-free: compiled in the double copy only */
static double d_max_frequency(double gh, double dx, double dy, int dims)
{
    double p = 1.0 / (dx * dx), q = 1.0 / (dy * dy);
    if (dims != 2)
        return sqrt(gh * p);
    double w2 = p > q ? p : q;                        /* edge maximum */
    if (p <= 2 * q && q <= 2 * p) {
        double inner = 4.0 * (p + q) * (p + q) * (p + q) / (27.0 * p * q);
        w2 = inner > w2 ? inner : w2;
    }
    return sqrt(gh * w2);
}
#endif

/* Flux depth (h_c / f) of the velocity on the face between cells o1 and o2 (its "own" cells), with
 * the stencil pairs (a1, b1) and (a2, b2) that must match; 0 when it may not flow. Cells are given
 * as (i, j) pairs. */
static double d_face_depth(const sw_model *m, const ptrdiff_t own[4], const ptrdiff_t st[8])
{
    double h1, h2, d[4];
    int w1 = sw_model_water_at(m, own[0], own[1], &h1), w2 = sw_model_water_at(m, own[2], own[3], &h2);
    if (!w1 && !w2)
        return 0;
    int s0 = sw_model_water_at(m, st[0], st[1], &d[0]), s1 = sw_model_water_at(m, st[2], st[3], &d[1]);
    int s2 = sw_model_water_at(m, st[4], st[5], &d[2]), s3 = sw_model_water_at(m, st[6], st[7], &d[3]);
    int n = s0 + s1 + s2 + s3;
    if (n == 0 || s0 != s1 || s2 != s3)
        return 0;
    double hc = (h1 + h2) / (w1 + w2);
    return hc * 4.0 / n;
}

static sw_status d_prepare(sw_model *m, sw_error *err)
{
    const ptrdiff_t nx = (ptrdiff_t)m->grid.nx, ny = (ptrdiff_t)m->grid.ny;
    const size_t s = m->stride;
    /* u on the north face of (i, j): own (i, j), (i, j+1); pairs (i-1, j)~(i+1, j), (i-1, j+1)~(i+1, j+1) */
    for (ptrdiff_t j = -1; j < ny; j++)
        for (ptrdiff_t i = 0; i < nx; i++) {
            const ptrdiff_t own[4] = {i, j, i, j + 1};
            const ptrdiff_t st[8] = {i - 1, j, i + 1, j, i - 1, j + 1, i + 1, j + 1};
            /* on a south or north open/level edge line u would difference lagging ghosts: held at 0 */
            int edge_line = (j == -1 && m->edges[SW_SOUTH] != SW_EDGE_WALL)
                         || (j == ny - 1 && m->edges[SW_NORTH] != SW_EDGE_WALL);
            SW_F(m, hx)[sw_pidx_halo(m, i, j)] = edge_line ? 0 : (sw_real)d_face_depth(m, own, st);
        }
    /* v on the east face of (i, j): own (i, j), (i+1, j); pairs (i, j-1)~(i, j+1), (i+1, j-1)~(i+1, j+1) */
    for (ptrdiff_t j = 0; j < ny; j++)
        for (ptrdiff_t i = -1; i < nx; i++) {
            const ptrdiff_t own[4] = {i, j, i + 1, j};
            const ptrdiff_t st[8] = {i, j - 1, i, j + 1, i + 1, j - 1, i + 1, j + 1};
            int edge_line = (i == -1 && m->edges[SW_WEST] != SW_EDGE_WALL)
                         || (i == nx - 1 && m->edges[SW_EAST] != SW_EDGE_WALL);
            SW_F(m, hy)[sw_pidx_halo(m, i, j)] = edge_line ? 0 : (sw_real)d_face_depth(m, own, st);
        }
    sw_status rc = sw_model_build_edges(m, m->grid.dx_m, m->grid.dy_m, err);
    if (rc != SW_OK)
        return rc;
    /* Ghost normal velocities live on the two along-edge faces of each ghost cell: the face at +t
     * (index ghost) always, the face at -t (index ghost - t) when no ghost of the same edge owns it.
     * Their flux depth is the inner cell's depth, so they store true velocities. */
    for (size_t q = 0; q < m->n_edge; q++) {
        sw_edge_cell *oc = &m->edge[q];
        sw_real *hn = oc->normal_x ? SW_F(m, hx) : SW_F(m, hy);
        const size_t t = oc->normal_x ? s : 1;
        const size_t n = oc->inner, g = oc->ghost;
        hn[g] = SW_F(m, h)[n];
        if (!(SW_F(m, h)[n - t] > 0))
            hn[g - t] = SW_F(m, h)[n];
        if (oc->vel != 0) {   /* open (the shared list gives level edges vel = 0) */
            oc->keep = 1;     /* the shared update leaves the ghost alone: d_step radiates it */
            oc->take = 0;
        }
    }
    return SW_OK;
}

/* The new elevation of cell k: continuity from the old velocities; a wall velocity also feeds the dry
 * cells of its stencil, which must stay at 0 (the one formula of both continuity loops). */
static inline sw_real d_eta_new(const sw_real *restrict eta, const sw_real *restrict u, const sw_real *restrict v,
                                const sw_real *restrict hx, const sw_real *restrict hy, const sw_real *restrict h,
                                size_t k, size_t s, sw_real cx, sw_real cy)
{
    return h[k] > 0 ? eta[k] - cx * (hx[k + 1] * u[k + 1] + hx[k + 1 - s] * u[k + 1 - s] - hx[k - 1] * u[k - 1]
                                     - hx[k - 1 - s] * u[k - 1 - s])
                             - cy * (hy[k + s] * v[k + s] + hy[k + s - 1] * v[k + s - 1] - hy[k - s] * v[k - s]
                                     - hy[k - s - 1] * v[k - s - 1])
                    : 0;
}

/* Continuity (forward: from the old u of rows j-1, j and v of rows j-1, j+1) on padded row j, at
 * r = j * stride; a wall velocity also feeds the dry cells of its stencil, which must stay at 0. */
static inline void d_continuity_row(sw_real *restrict eta, const sw_real *restrict u, const sw_real *restrict v,
                                    const sw_real *restrict hx, const sw_real *restrict hy,
                                    const sw_real *restrict h, size_t r, size_t nx, size_t s, sw_real cx, sw_real cy)
{
    SW_OMP(simd)
    for (size_t i = r + 1; i <= r + nx; i++)
        eta[i] = d_eta_new(eta, u, v, hx, hy, h, i, s, cx, cy);
}

/* The centre values of cell k in the state's precision, one division, rounded to float: d_centre_row
 * to float round-off (centre_row_f32). */
static inline void d_centre_f32(const sw_real *restrict eta, const sw_real *restrict u, const sw_real *restrict v,
                                const sw_real *restrict hx, const sw_real *restrict hy, const sw_real *restrict h,
                                size_t k, size_t s, float *e, float *uc, float *vc)
{
    const int wet = h[k] > 0;
    const sw_real w = wet ? (sw_real)0.5 / h[k] : 0;
    *e = wet ? (float)eta[k] : 0.0f;
    *uc = (float)((hx[k] * u[k] + hx[k - s] * u[k - s]) * w);
    *vc = (float)((hy[k] * v[k] + hy[k - 1] * v[k - 1]) * w);
}

/* d_continuity_row on padded row j (r = j * stride), and in the same pass the values an observer needs
 * of the finished row at f (sw_row_values into buf), as layout_c.c's c_continuity_row_observed. */
static inline void d_continuity_row_observed(sw_real *restrict eta, const sw_real *restrict u,
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
            eta[k] = d_eta_new(eta, u, v, hx, hy, h, k, s, cx, cy);
            float e, uc, vc;
            d_centre_f32(eta, u, v, hx, hy, h, f + 1 + i, s, &e, &uc, &vc);
            oe[i] = e;
            ou[i] = uc;
            ov[i] = vc;
        }
        sw_row_extremes(oe, ou, ov, a, b, &o.hi[q], &o.lo[q], &o.speed2[q]);   /* the segment is in L1 */
    }
}

/* u on the north faces of padded row j (r = j * stride; row 0: the south edge's), from the new eta of
 * rows j and j+1. */
static inline void d_u_row(sw_real *restrict u, const sw_real *restrict eta, const sw_real *restrict hx, size_t r,
                           size_t nx, size_t s, sw_real gx)
{
    SW_OMP(simd)
    for (size_t i = r + 1; i <= r + nx; i++)
        u[i] = hx[i] > 0 ? u[i] - gx * (eta[i + 1] + eta[i + 1 + s] - eta[i - 1] - eta[i - 1 + s]) : 0;
}

/* v on the east faces of padded row j (columns 0..nx), from the new eta of rows j-1 and j+1. */
static inline void d_v_row(sw_real *restrict v, const sw_real *restrict eta, const sw_real *restrict hy, size_t r,
                           size_t nx, size_t s, sw_real gy)
{
    SW_OMP(simd)
    for (size_t i = r; i <= r + nx; i++)
        v[i] = hy[i] > 0 ? v[i] - gy * (eta[i + s] + eta[i + s + 1] - eta[i - s] - eta[i - s + 1]) : 0;
}

/* The step in one sweep over memory, as layout_c.c's. Each thread owns padded rows j0..j1 and, for each
 * row j: continuity of row j, its edge ghosts, u of row j-1 (new eta of rows j-1, j; u of row 0 after
 * row 1) and v of row j-1 (new eta of rows j-2, j) but for the block's first row. v of the first row
 * needs the previous block's last row of new eta, u and v of the last row the next block's first: they
 * wait for a barrier, as the neighbours' continuity reads them old before. Then the ghosts. A row's
 * centre values need its u, the u below and its v: rows j0+1 .. j1-1 are observed in the sweep, j0 and
 * j1 at the end. Each cell is computed as in two passes, for any thread count. */
static void d_step(sw_model *m)
{
    const size_t nx = m->grid.nx, ny = m->grid.ny, s = m->stride;
    const sw_real cx = (sw_real)(0.25 * m->dt / m->grid.dx_m), cy = (sw_real)(0.25 * m->dt / m->grid.dy_m);
    const sw_real gx = (sw_real)(0.25 * m->g * m->dt / m->grid.dx_m);
    const sw_real gy = (sw_real)(0.25 * m->g * m->dt / m->grid.dy_m);
    const sw_real rx = (sw_real)(m->dt / m->grid.dx_m), ry = (sw_real)(m->dt / m->grid.dy_m);
    sw_real *restrict eta = SW_F(m, eta), *restrict u = SW_F(m, u), *restrict v = SW_F(m, v);
    const sw_real *restrict hx = SW_F(m, hx), *restrict hy = SW_F(m, hy), *restrict h = SW_F(m, h);

    const size_t nt = (size_t)omp_get_num_threads(), me = (size_t)omp_get_thread_num();
    const size_t j0 = 1 + ny * me / nt, j1 = ny * (me + 1) / nt;   /* padded rows; empty when j1 < j0 */

    float *restrict buf = sw_model_obs_buffer(m, (int)me);

    for (size_t j = j0; j <= j1; j++) {
        if (buf && j >= j0 + 3)   /* with room for them, row j-2's values are made in row j's pass */
            d_continuity_row_observed(eta, u, v, hx, hy, h, j * s, nx, s, cx, cy, (j - 2) * s, buf);
        else
            d_continuity_row(eta, u, v, hx, hy, h, j * s, nx, s, cx, cy);
        sw_model_edge_eta_row(m, j);
        if (j == 1)
            d_u_row(u, eta, hx, 0, nx, s, gx);   /* the south edge's faces */
        if (j > j0)
            d_u_row(u, eta, hx, (j - 1) * s, nx, s, gx);
        if (j > j0 + 1)
            d_v_row(v, eta, hy, (j - 1) * s, nx, s, gy);
        if (buf && j >= j0 + 3)
            sw_model_observe_row_values(m, j - 2, buf);
        else if (!buf && j > j0 + 1)
            sw_model_observe_row(m, j - 1);
    }
    if (buf && j1 >= j0 + 2)
        sw_model_observe_row(m, j1 - 1);
    SW_OMP(barrier)
    if (j1 >= j0) {
        d_u_row(u, eta, hx, j1 * s, nx, s, gx);
        d_v_row(v, eta, hy, j0 * s, nx, s, gy);
    }
    if (j1 > j0)
        d_v_row(v, eta, hy, j1 * s, nx, s, gy);
    SW_OMP(barrier)
    if (j1 >= j0)
        sw_model_observe_row(m, j0);
    if (j1 > j0)
        sw_model_observe_row(m, j1);

    /* ghost normal velocities on the faces of the ghost cells (see d_prepare) */
    const sw_edge_cell *restrict oc = m->edge;
    const size_t n_edge = m->n_edge;
    SW_OMP(for schedule(static))
    for (size_t q = 0; q < n_edge; q++) {
        sw_real *vel = oc[q].normal_x ? u : v;
        const sw_real *hn = oc[q].normal_x ? hx : hy;
        const size_t t = oc[q].normal_x ? s : 1, g = oc[q].ghost, n = oc[q].inner;
        /* open: the outgoing wave's velocity for the inner cells' elevation, on the face at +t their
         * mean with the next inner cell along the edge when that is water (its flux h u = c eta leaves
         * the inner cells, never enters them); level: the inner face's volume flux, mirrored */
        const sw_real half = h[n + t] > 0 ? (sw_real)0.5 : 0, inv_h = 1 / h[n];
        vel[g] = (sw_real)oc[q].vel * ((1 - half) * eta[n] + half * eta[n + t]) + (sw_real)oc[q].mirror * hn[n] * vel[n] * inv_h;
        if (!(h[n - t] > 0))
            vel[g - t] = (sw_real)oc[q].vel * eta[n] + (sw_real)oc[q].mirror * hn[n - t] * vel[n - t] * inv_h;
        if (oc[q].vel != 0) {
            /* open: the ghost eta, read by the normal velocities one cell in (n and n - t), moves by an
             * implicit upwind step over the distance dx towards their outgoing-wave elevation,
             * mean flux / (h sign sqrt(g h)) */
            const sw_real f0 = hn[n] * vel[n], f1 = hn[n - t] * vel[n - t];
            const sw_real w = (hn[n] > 0) + (hn[n - t] > 0);
            const sw_real target = w > 0 ? (f0 + f1) / (w * h[n] * (sw_real)oc[q].vel) : 0;
            const sw_real r = (sw_real)fabs(oc[q].vel) * h[n] * (oc[q].normal_x ? rx : ry);
            eta[g] = (eta[g] + r * target) / (1 + r);
        }
    }
}

/* Centre values: eta as stored; velocity = the mean volume flux (hx u) on the two faces that carry it
 * divided by the cell's depth, i.e. the depth-mean velocity at the centre. */
static void d_centre_row(const sw_model *m, size_t j, double *eta, double *u, double *v)
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
        u[i] = ((double)hx[k] * uu[k] + (double)hx[k - s] * uu[k - s]) / (2 * h);
        v[i] = ((double)hy[k] * vv[k] + (double)hy[k - 1] * vv[k - 1]) / (2 * h);
    }
}

/* eta at (0, 0), u at (0, +-dy/2) + whole cells, v at (+-dx/2, 0) + whole cells. */
/* d_centre_row in the state's precision, one division, rounded to float (centre_row_f32: within float
 * round-off of d_centre_row). */
static void d_centre_row_f32(const sw_model *m, size_t j, float *restrict eta, float *restrict u, float *restrict v)
{
    const size_t r = sw_pidx(m, 0, j), s = m->stride;
    SW_OMP(simd)
    for (size_t i = 0; i < m->grid.nx; i++)
        d_centre_f32(SW_F(m, eta), SW_F(m, u), SW_F(m, v), SW_F(m, hx), SW_F(m, hy), SW_F(m, h), r + i, s, &eta[i],
                     &u[i], &v[i]);
}

#if SW_REAL_BITS == 64   /* precision-free: compiled in the double copy only */
static void d_symbols(double k, double l, double dx, double dy, sw_symbols *o)
{
    double a = 0.5 * k * dx, b = 0.5 * l * dy;
    o->div_x = o->grad_x = I * sin(2 * a) * cos(b) / dx;
    o->div_y = o->grad_y = I * cos(a) * sin(2 * b) / dy;
    o->v_at_u = o->u_at_v = cos(a) * cos(b);   /* four-point average across the cell corner */
}
#endif

static double d_energy(const sw_model *m)
{
    const size_t nx = m->grid.nx, ny = m->grid.ny, s = m->stride;
    const double dx = m->grid.dx_m, dy = m->grid.dy_m;
    const sw_real *eta = SW_F(m, eta), *u = SW_F(m, u), *v = SW_F(m, v), *hx = SW_F(m, hx), *hy = SW_F(m, hy);
    double pot = 0, kin = 0, cross = 0;
    for (size_t j = 1; j <= ny; j++)
        for (size_t i = j * s + 1; i <= j * s + nx; i++) {
            double div = ((double)hx[i + 1] * u[i + 1] + (double)hx[i + 1 - s] * u[i + 1 - s]
                          - (double)hx[i - 1] * u[i - 1] - (double)hx[i - 1 - s] * u[i - 1 - s]) / (4 * dx)
                       + ((double)hy[i + s] * v[i + s] + (double)hy[i + s - 1] * v[i + s - 1]
                          - (double)hy[i - s] * v[i - s] - (double)hy[i - s - 1] * v[i - s - 1]) / (4 * dy);
            pot += (double)eta[i] * eta[i];
            cross += eta[i] * div;
        }
    for (size_t j = 0; j <= ny; j++) {
        for (size_t i = j * s + 1; i <= j * s + nx; i++)
            kin += (double)hx[i] * u[i] * u[i];
        if (j > 0)
            for (size_t i = j * s; i <= j * s + nx; i++)
                kin += (double)hy[i] * v[i] * v[i];
    }
    return (0.5 * m->g * pot + 0.5 * kin - 0.5 * m->g * m->dt * cross) * dx * dy;
}

const sw_layout_kernels SW_NAME(sw_layout_d_kernels) = {
    .prepare = d_prepare,
    .step = d_step,
    .centre_row = d_centre_row,
    .centre_row_f32 = d_centre_row_f32,
    .energy = d_energy,
    .observes_rows = 1,
};

#if SW_REAL_BITS == 64
extern const sw_layout_kernels sw_layout_d_kernels_f32;

const sw_layout sw_layout_d = {
    .name = "D",
    .summary = "eta at centres, u on north/south faces, v on east/west faces, four-point averages",
    .stream_values = 9,   /* eta, u, v read and written; hx, hy, h read */
    .max_frequency = d_max_frequency,
    .symbols = d_symbols,
    .kernels = {[SW_DOUBLE] = &sw_layout_d_kernels_f64, [SW_SINGLE] = &sw_layout_d_kernels_f32},
};
#endif
