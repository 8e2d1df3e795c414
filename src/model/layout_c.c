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
 * carries the outgoing wave or the mirrored elevation (stage.h, sw_edge_cell); across a periodic edge
 * the mean with the cell on the opposite side.
 * Semi-discrete frequency: omega^2 = 4 g h (sin^2(k dx/2) / dx^2 + sin^2(l dy/2) / dy^2), highest at the
 * 2-cell wave: 2 sqrt(g h) sqrt(1/dx^2 + 1/dy^2); in a channel 2 sqrt(g h) / dx. With square cells
 * the Courant limit sqrt(g h) dt / dx <= 2 / max(omega dx / sqrt(g h)) is 1/sqrt(2) in 2D and 1 in 1D.
 */
#include <math.h>

#include "model/layout.h"
#include "model/stage.h"
#include "base/omp_compat.h"

#if SW_REAL_BITS == 64   /* precision-free: compiled in the double copy only */
static double c_max_frequency(double gh, double dx, double dy, int dims)
{
    double s = 1.0 / (dx * dx) + (dims == 2 ? 1.0 / (dy * dy) : 0.0);
    return 2.0 * sqrt(gh * s);
}
#endif

/* Face depths (see the top of the file): the mean of the two cells' depths between two water cells
 * (a periodic edge joins the last column or row to the first), the inner cell's beside the ghost of an
 * open or level edge, 0 against land or a wall. */
static void c_prepare(sw_prep *p)
{
    const sw_view *v = &p->f;
    const ptrdiff_t nx = (ptrdiff_t)v->nx, ny = (ptrdiff_t)v->ny;
    const sw_real *h = SW_V(v, h);
    sw_real *hx = SW_V(v, hx), *hy = SW_V(v, hy);
    for (ptrdiff_t j = 0; j < ny; j++)
        for (ptrdiff_t i = 0; i < nx; i++) {
            const size_t k = sw_pad(v, i, j), s = v->stride;
            if (h[k] <= 0)
                continue;
            double d;
            /* a face shared with another water cell of the grid: the mean (the same bits from either
             * side); beside a ghost: the inner depth; else a wall */
#define C_FACE(kind) ((kind) == SW_CELL_WATER ? (sw_real)0.5 * (h[k] + (sw_real)d) : (kind) == SW_CELL_GHOST ? h[k] : 0)
            hx[k] = C_FACE(sw_prep_cell(p, i + 1, j, &d));          /* east face */
            hy[k] = C_FACE(sw_prep_cell(p, i, j + 1, &d));          /* north face */
            if (i == 0)
                hx[k - 1] = C_FACE(sw_prep_cell(p, i - 1, j, &d));  /* the west edge's face */
            if (j == 0)
                hy[k - s] = C_FACE(sw_prep_cell(p, i, j - 1, &d));  /* the south edge's face */
#undef C_FACE
        }
}

/* Initial velocities: on each face that flows, the mean of the two cells beside it. */
static void c_initial_velocity(sw_prep *p, const double *uc, const double *vc)
{
    const sw_view *v = &p->f;
    const ptrdiff_t nx = (ptrdiff_t)v->nx, ny = (ptrdiff_t)v->ny;
    int n;
    for (ptrdiff_t j = -1; j < ny; j++)
        for (ptrdiff_t i = -1; i < nx; i++) {
            const size_t k = sw_pad(v, i, j);
            const ptrdiff_t east[4] = {i, j, i + 1, j}, north[4] = {i, j, i, j + 1};
            if (j >= 0 && SW_V(v, hx)[k] > 0)
                SW_V(v, u)[k] = (sw_real)sw_prep_mean(p, uc, east, 2, &n);
            if (i >= 0 && SW_V(v, hy)[k] > 0)
                SW_V(v, v)[k] = (sw_real)sw_prep_mean(p, vc, north, 2, &n);
        }
}

/* The new elevation of cell k: continuity from the old velocities (the one formula of both kernels). */
SW_INLINE sw_real c_eta_cell(const sw_cells *c, size_t k)
{
    const size_t s = c->s;
    return c->eta[k] - (c->cx * (c->hx[k] * c->u[k] - c->hx[k - 1] * c->u[k - 1])
                        + c->cy * (c->wn * (c->hy[k] * c->v[k]) - c->ws * (c->hy[k - s] * c->v[k - s])));
}

/* c_eta_cell on a row whose face lines both have metric 1 (every row of a projected grid): the two
 * multiplications by 1 left out. With contraction off (CMakeLists.txt) x * 1 is x for every x, NaN and
 * -0 included, so this gives c_eta_cell's bits; it spares the step two multiplications a cell (measured:
 * the plain step 0.94-0.97 x the pre-stepper step with them, 1.01-1.03 x without; DEVELOPERS.md). */
SW_INLINE sw_real c_eta_cell_flat(const sw_cells *c, size_t k)
{
    const size_t s = c->s;
    return c->eta[k] - (c->cx * (c->hx[k] * c->u[k] - c->hx[k - 1] * c->u[k - 1])
                        + c->cy * (c->hy[k] * c->v[k] - c->hy[k - s] * c->v[k - s]));
}

/* The centre values of cell k, rounded to float: each is (float) of c_centre_row's. In single precision
 * the float sum rounds once where c_centre_row rounds to double and then to float; rounding twice gives
 * the same result when the wider format has at least 2 p + 2 bits for a p-bit narrower one
 * (53 >= 2 * 24 + 2; Figueroa 1995, ACM SIGNUM Newsletter 30(3) [memory]); halving is exact. */
SW_INLINE void c_centre_cell(const sw_cells *c, size_t k, size_t i, size_t j, float *e, float *uc, float *vc)
{
    (void)i;
    (void)j;
    *e = (float)c->eta[k];
    *uc = (float)((sw_real)0.5 * (c->u[k - 1] + c->u[k]));
    *vc = (float)((sw_real)0.5 * (c->v[k - c->s] + c->v[k]));
}

/* The arrays and coefficients of continuity on padded row j: dt / dx and dt / dy over the row's metric,
 * the metric of its north and south face lines (all 1 on a projected grid, exactly: the same bits). */
static sw_cells c_cells(const sw_view *v, size_t j)
{
    const double m = v->cos_c[j];
    return (sw_cells){SW_V(v, eta), SW_V(v, u), SW_V(v, v), SW_V(v, h), SW_V(v, hx), SW_V(v, hy), v->stride,
                      (sw_real)(v->dt_s / (v->dx_m * m)), (sw_real)(v->dt_s / (v->dy_m * m)),
                      (sw_real)v->cos_f[j], (sw_real)v->cos_f[j - 1]};
}

/* 1 when both face lines of the row have metric 1, so that c_eta_cell_flat gives its bits (a test once a
 * row, not a cell). */
static int c_flat(const sw_cells *c) { return c->wn == 1 && c->ws == 1; }

/* Continuity of one row with each formula, and with the centre values of row f. Each loop a function of
 * its own (noinline): two loops in one function leave too few registers for either (measured: the flat
 * loop then reloads two array addresses a vector and gains nothing). */
static __attribute__((noinline)) void c_continuity_flat(sw_cells c, size_t k0, size_t nx)
{
    sw_continuity_loop(&c, k0, nx, c_eta_cell_flat);
}

static __attribute__((noinline)) void c_continuity_metric(sw_cells c, size_t k0, size_t nx)
{
    sw_continuity_loop(&c, k0, nx, c_eta_cell);
}

static __attribute__((noinline)) void c_observed_flat(sw_cells c, size_t k0, size_t f0, size_t jf, size_t nx, float *buf)
{
    sw_continuity_observed_loop(&c, k0, f0, jf, nx, buf, c_eta_cell_flat, c_centre_cell);
}

static __attribute__((noinline)) void c_observed_metric(sw_cells c, size_t k0, size_t f0, size_t jf, size_t nx, float *buf)
{
    sw_continuity_observed_loop(&c, k0, f0, jf, nx, buf, c_eta_cell, c_centre_cell);
}

static void c_continuity(const sw_view *v, size_t j)
{
    const sw_cells c = c_cells(v, j);
    (c_flat(&c) ? c_continuity_flat : c_continuity_metric)(c, j * v->stride + 1, v->nx);
}

static void c_continuity_observed(const sw_view *v, size_t j, size_t f, float *buf)
{
    const sw_cells c = c_cells(v, j);
    (c_flat(&c) ? c_observed_flat : c_observed_metric)(c, j * v->stride + 1, f * v->stride + 1, f - 1, v->nx, buf);
}

/* u on the faces of padded row j from its west edge face to its east edge face (new eta of row j). */
SW_INLINE void c_u_plain(const sw_view *v, size_t j, const int forced)
{
    sw_real *restrict u = SW_V(v, u);
    const sw_real *restrict eta = SW_V(v, eta), *restrict hx = SW_V(v, hx);
    const sw_real gx = (sw_real)(v->g * v->dt_s / (v->dx_m * v->cos_c[j]));
    const size_t k0 = j * v->stride + 1;
    const float *restrict a0 = forced ? v->terms->surface_x[0] : NULL, *restrict a1 = forced ? v->terms->surface_x[1] : NULL;
    const sw_real c0 = (sw_real)(v->dt_s * (1 - v->terms->surface_w)), c1 = (sw_real)(v->dt_s * v->terms->surface_w);
    SW_OMP(simd)
    for (size_t i = k0 - 1; i < k0 + v->nx; i++)
        u[i] = hx[i] > 0 ? (forced ? u[i] - gx * (eta[i + 1] - eta[i]) + sw_surface_dvel(a0, a1, i, c0, c1)
                                   : u[i] - gx * (eta[i + 1] - eta[i])) : 0;
}

/* v on the north faces of padded row j (row 0: the south edge's faces), from the new eta of rows j, j+1. */
SW_INLINE void c_v_plain(const sw_view *v, size_t j, const int forced)
{
    sw_real *restrict vv = SW_V(v, v);
    const sw_real *restrict eta = SW_V(v, eta), *restrict hy = SW_V(v, hy);
    const sw_real gy = (sw_real)(v->g * v->dt_s / v->dy_m);
    const size_t k0 = j * v->stride + 1, s = v->stride;
    const float *restrict a0 = forced ? v->terms->surface_y[0] : NULL, *restrict a1 = forced ? v->terms->surface_y[1] : NULL;
    const sw_real c0 = (sw_real)(v->dt_s * (1 - v->terms->surface_w)), c1 = (sw_real)(v->dt_s * v->terms->surface_w);
    SW_OMP(simd)
    for (size_t i = k0; i < k0 + v->nx; i++)
        vv[i] = hy[i] > 0 ? (forced ? vv[i] - gy * (eta[i + s] - eta[i]) + sw_surface_dvel(a0, a1, i, c0, c1)
                                    : vv[i] - gy * (eta[i + s] - eta[i])) : 0;
}

/* The momentum stages with rotation and friction (terms.h; docs/terms.md derives the weights).
 * u of row j first, from the old v on the four faces around it (two on the line of row j's north faces,
 * two on the line below), as a transport: with F = f dt on each line,
 *     rot = (F / 2) (hy0 v0 + hy1 v1)   summed over the two lines,
 * i.e. 2 dt times K v with pair weights K = (f / 4) hy. Then v of row j from the new u on its four
 * neighbouring faces (rows j and j+1, all on the line of v's own faces), plainly averaged: with the same
 * K divided by v's own depth hy, rot = (F / 2) hy (u0 + u1 + u2 + u3), and the opposite sign; so rotation
 * does no work on any depth (one weight matrix, K and its transpose). With `drag` the friction rho adds
 * Cd |U| dt, |U| from the point's velocity and the other component's plain average. On a geographic grid
 * the pair weights carry the areas the points stand for (sw_view.cos_c, cos_f): the u equation takes each
 * line's term times cos_f / cos_c, so that K stays symmetric under the area-weighted sum. */
SW_INLINE void c_u_terms(const sw_view *v, size_t j, const int drag, const int forced)
{
    sw_real *restrict u = SW_V(v, u);
    const sw_real *restrict eta = SW_V(v, eta), *restrict hx = SW_V(v, hx), *restrict hy = SW_V(v, hy);
    const sw_real *restrict vv = SW_V(v, v), *restrict cd = drag ? (const sw_real *)v->terms->drag_x : NULL;
    const sw_real gx = (sw_real)(v->g * v->dt_s / (v->dx_m * v->cos_c[j]));
    /* each line's v stand for areas cos_f of it against u's cos_c: weighted so, rotation does no work */
    const sw_real qn = (sw_real)(0.5 * v->dt_s * v->terms->f_face[j] * (v->cos_f[j] / v->cos_c[j]));
    const sw_real qs = (sw_real)(0.5 * v->dt_s * v->terms->f_face[j - 1] * (v->cos_f[j - 1] / v->cos_c[j]));
    const sw_real rho0 = (sw_real)(v->dt_s * v->terms->friction_rate_ms), dtc = (sw_real)v->dt_s;
    const float *restrict a0 = forced ? v->terms->surface_x[0] : NULL, *restrict a1 = forced ? v->terms->surface_x[1] : NULL;
    const sw_real c0 = (sw_real)(v->dt_s * (1 - v->terms->surface_w)), c1 = (sw_real)(v->dt_s * v->terms->surface_w);
    const size_t k0 = j * v->stride + 1, s = v->stride;
    SW_OMP(simd)
    for (size_t i = k0 - 1; i < k0 + v->nx; i++) {
        const sw_real n0 = vv[i], n1 = vv[i + 1], s0 = vv[i - s], s1 = vv[i - s + 1];
        const sw_real rot = qn * (hy[i] * n0 + hy[i + 1] * n1) + qs * (hy[i - s] * s0 + hy[i - s + 1] * s1);
        sw_real rho = rho0;
        if (drag) {
            const sw_real vbar = (sw_real)0.25 * (n0 + n1 + s0 + s1);
            rho += dtc * cd[i] * (sw_real)sqrt(u[i] * u[i] + vbar * vbar);
        }
        if (forced)
            u[i] = sw_terms_update(u[i], hx[i], -gx * (eta[i + 1] - eta[i]) + sw_surface_dvel(a0, a1, i, c0, c1), rot, rho);
        else
            u[i] = sw_terms_update(u[i], hx[i], -gx * (eta[i + 1] - eta[i]), rot, rho);
    }
}

SW_INLINE void c_v_terms(const sw_view *v, size_t j, const int drag, const int forced)
{
    sw_real *restrict vv = SW_V(v, v);
    const sw_real *restrict eta = SW_V(v, eta), *restrict hy = SW_V(v, hy);
    const sw_real *restrict u = SW_V(v, u), *restrict cd = drag ? (const sw_real *)v->terms->drag_y : NULL;
    const sw_real gy = (sw_real)(v->g * v->dt_s / v->dy_m);
    const sw_real q = (sw_real)(0.5 * v->dt_s * v->terms->f_face[j]);
    const sw_real rho0 = (sw_real)(v->dt_s * v->terms->friction_rate_ms), dtc = (sw_real)v->dt_s;
    const float *restrict a0 = forced ? v->terms->surface_y[0] : NULL, *restrict a1 = forced ? v->terms->surface_y[1] : NULL;
    const sw_real c0 = (sw_real)(v->dt_s * (1 - v->terms->surface_w)), c1 = (sw_real)(v->dt_s * v->terms->surface_w);
    const size_t k0 = j * v->stride + 1, s = v->stride;
    SW_OMP(simd)
    for (size_t i = k0; i < k0 + v->nx; i++) {
        const sw_real H = hy[i], sum = u[i - 1] + u[i] + u[i + s - 1] + u[i + s];
        sw_real rho = rho0;
        if (drag) {
            const sw_real ubar = (sw_real)0.25 * sum;
            rho += dtc * cd[i] * (sw_real)sqrt(vv[i] * vv[i] + ubar * ubar);
        }
        if (forced)
            vv[i] = sw_terms_update(vv[i], H, -gy * (eta[i + s] - eta[i]) + sw_surface_dvel(a0, a1, i, c0, c1), -(q * H * sum), rho);
        else
            vv[i] = sw_terms_update(vv[i], H, -gy * (eta[i + s] - eta[i]), -(q * H * sum), rho);
    }
}

static void c_u_row(const sw_view *v, size_t j) { c_u_plain(v, j, 0); }
static void c_v_row(const sw_view *v, size_t j) { c_v_plain(v, j, 0); }
static void c_u_forced(const sw_view *v, size_t j) { c_u_plain(v, j, 1); }
static void c_v_forced(const sw_view *v, size_t j) { c_v_plain(v, j, 1); }
static void c_u_linear(const sw_view *v, size_t j) { c_u_terms(v, j, 0, 0); }
static void c_v_linear(const sw_view *v, size_t j) { c_v_terms(v, j, 0, 0); }
static void c_u_drag(const sw_view *v, size_t j) { c_u_terms(v, j, 1, 0); }
static void c_v_drag(const sw_view *v, size_t j) { c_v_terms(v, j, 1, 0); }
static void c_u_forced_linear(const sw_view *v, size_t j) { c_u_terms(v, j, 0, 1); }
static void c_v_forced_linear(const sw_view *v, size_t j) { c_v_terms(v, j, 0, 1); }
static void c_u_forced_drag(const sw_view *v, size_t j) { c_u_terms(v, j, 1, 1); }
static void c_v_forced_drag(const sw_view *v, size_t j) { c_v_terms(v, j, 1, 1); }

static void c_centre_row(const sw_view *v, size_t j, double *eta, double *u, double *vel)
{
    const size_t r = sw_pad(v, 0, (ptrdiff_t)j), s = v->stride;
    const sw_real *e = SW_V(v, eta), *uu = SW_V(v, u), *vv = SW_V(v, v);
    for (size_t i = 0; i < v->nx; i++) {
        size_t k = r + i;
        eta[i] = e[k];
        u[i] = 0.5 * ((double)uu[k - 1] + uu[k]);
        vel[i] = 0.5 * ((double)vv[k - s] + vv[k]);
    }
}

static void c_centre_row_f32(const sw_view *v, size_t j, float *eta, float *u, float *vel)
{
    const sw_cells c = c_cells(v, j + 1);
    sw_centre_loop(&c, j, v->nx, eta, u, vel, c_centre_cell);
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

/* E* (layout.h). Velocity points are counted once: a periodic edge's halo copy is left out. The
 * rotation share (dt/2) u.K v sums each u point's four v neighbours with K = (f / 4) hy. Every sum
 * weights by the area of its points (cos_c of centre rows, cos_f of face lines). */
static double c_energy(const sw_view *v)
{
    const size_t nx = v->nx, ny = v->ny, s = v->stride, c0 = sw_first_col(v), r0 = sw_first_row(v);
    const double dx = v->dx_m, dy = v->dy_m, dt = v->dt_s;
    const sw_real *eta = SW_V(v, eta), *u = SW_V(v, u), *vv = SW_V(v, v), *hx = SW_V(v, hx), *hy = SW_V(v, hy);
    const double *ff = v->terms->f_face, *cc = v->cos_c, *cf = v->cos_f;   /* areas: cos_c, cos_f */
    double pot = 0, kin = 0, cross = 0, rot = 0;
    for (size_t j = 1; j <= ny; j++)
        for (size_t i = j * s + 1; i <= j * s + nx; i++) {
            /* the divergence times the cell's area (cos_c) */
            double div = ((double)hx[i] * u[i] - (double)hx[i - 1] * u[i - 1]) / dx
                       + (cf[j] * hy[i] * vv[i] - cf[j - 1] * hy[i - s] * vv[i - s]) / dy;
            pot += (double)eta[i] * eta[i] * cc[j];
            cross += eta[i] * div;
        }
    for (size_t j = 1; j <= ny; j++)   /* u: columns 0 (the west edge's faces) .. nx */
        for (size_t i = j * s + c0; i <= j * s + nx; i++) {
            kin += (double)hx[i] * u[i] * u[i] * cc[j];
            double pair = 0;
            for (int q = 0; q < 2; q++) {
                const size_t a = q ? i : i - s;   /* v on the line above, then below */
                const double f = q ? ff[j] * cf[j] : ff[j - 1] * cf[j - 1];
                pair += f * ((double)hy[a] * vv[a] + (double)hy[a + 1] * vv[a + 1]);
            }
            rot += u[i] * pair;
        }
    for (size_t j = r0; j <= ny; j++)   /* v: rows 0 (the south edge's faces) .. ny */
        for (size_t i = j * s + 1; i <= j * s + nx; i++)
            kin += (double)hy[i] * vv[i] * vv[i] * cf[j];
    return (0.5 * v->g * pot + 0.5 * kin - 0.5 * v->g * dt * cross + dt / 8 * rot) * dx * dy;
}

/* Stages: continuity of row j reads u of row j and v of rows j-1, j; u of row j reads eta of row j;
 * v of row j reads eta of rows j, j+1 (and row 0 holds the south edge's faces). */
const sw_layout_kernels SW_NAME(sw_layout_c_kernels) = {
    .prepare = c_prepare,
    .initial_velocity = c_initial_velocity,
    .continuity = {c_continuity, SW_WRITES(SW_FIELD_ETA), {SW_NO_ROWS, SW_ROWS(0, 0), SW_ROWS(-1, 0)}, 0},
    .continuity_observed = c_continuity_observed,
    .n_momentum = 2,
    .momentum = {
        [SW_TERMS_PLAIN] = {{c_u_row, SW_WRITES(SW_FIELD_U), {SW_ROWS(0, 0), SW_NO_ROWS, SW_NO_ROWS}, 0},
                            {c_v_row, SW_WRITES(SW_FIELD_V), {SW_ROWS(0, 1), SW_NO_ROWS, SW_NO_ROWS}, 1}},
        [SW_TERMS_FORCED] = {{c_u_forced, SW_WRITES(SW_FIELD_U), {SW_ROWS(0, 0), SW_NO_ROWS, SW_NO_ROWS}, 0},
                            {c_v_forced, SW_WRITES(SW_FIELD_V), {SW_ROWS(0, 1), SW_NO_ROWS, SW_NO_ROWS}, 1}},
        [SW_TERMS_LINEAR] = {{c_u_linear, SW_WRITES(SW_FIELD_U), {SW_ROWS(0, 0), SW_ROWS(0, 0), SW_ROWS(-1, 0)}, 0},
                             {c_v_linear, SW_WRITES(SW_FIELD_V), {SW_ROWS(0, 1), SW_ROWS(0, 1), SW_ROWS(0, 0)}, 1}},
        [SW_TERMS_DRAG] = {{c_u_drag, SW_WRITES(SW_FIELD_U), {SW_ROWS(0, 0), SW_ROWS(0, 0), SW_ROWS(-1, 0)}, 0},
                           {c_v_drag, SW_WRITES(SW_FIELD_V), {SW_ROWS(0, 1), SW_ROWS(0, 1), SW_ROWS(0, 0)}, 1}},
        [SW_TERMS_FORCED_LINEAR] = {{c_u_forced_linear, SW_WRITES(SW_FIELD_U), {SW_ROWS(0, 0), SW_ROWS(0, 0), SW_ROWS(-1, 0)}, 0},
                             {c_v_forced_linear, SW_WRITES(SW_FIELD_V), {SW_ROWS(0, 1), SW_ROWS(0, 1), SW_ROWS(0, 0)}, 1}},
        [SW_TERMS_FORCED_DRAG] = {{c_u_forced_drag, SW_WRITES(SW_FIELD_U), {SW_ROWS(0, 0), SW_ROWS(0, 0), SW_ROWS(-1, 0)}, 0},
                                  {c_v_forced_drag, SW_WRITES(SW_FIELD_V), {SW_ROWS(0, 1), SW_ROWS(0, 1), SW_ROWS(0, 0)}, 1}},
    },
    .observes = {SW_ROWS(0, 0), SW_ROWS(0, 0), SW_ROWS(-1, 0)},
    .centre_row = c_centre_row,
    .centre_row_f32 = c_centre_row_f32,
    .energy = c_energy,
};

#if SW_REAL_BITS == 64
extern const sw_layout_kernels sw_layout_c_kernels_f32;

const sw_layout sw_layout_c = {
    .name = "C",
    .summary = "staggered: eta at centres, u on east/west faces, v on north/south faces",
    .u_at = {0.5, 0},
    .v_at = {0, 0.5},
    .stream_values = 8,   /* eta, u, v read and written; hx, hy read */
    .max_frequency = c_max_frequency,
    .symbols = c_symbols,
    .kernels = {[SW_DOUBLE] = &sw_layout_c_kernels_f64, [SW_SINGLE] = &sw_layout_c_kernels_f32},
};
#endif
