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
 * Open and level edges: the ghost cells (halo) carry eta (stage.h, sw_edge_cell); the corners on
 * the edge line are ordinary corners, so no ghost velocity is needed. Their velocity ALONG the edge
 * would difference ghost elevations, which lag behind the water (open) and then pump energy into
 * the edge (an eigenvalue analysis of the one-step matrix shows growth): it is held at 0. The
 * velocity across the edge works as on the C layout, from the ghost-to-inner difference.
 * Dry cells: a wall corner's flux also reaches the dry cells of its stencil; the continuity step
 * keeps every dry cell at eta = 0 (it reads h), so volume counts water cells only.
 *
 * On a geographic grid (x = R lambda, y = R phi; sw_view.cos_c, cos_f the cos(latitude) of a padded row's
 * centres and of the corner line north of it) the areas are cos dx dy: a centre's of its row, a
 * corner's of its line. Continuity is the flux form over the cell, x-fluxes through faces dy long and
 * y-fluxes through faces dx cos_f long, divided by the cell's area; the corner's x-gradient divides by
 * its line's cos_f, its y-gradient needs none: so G = -D^T still holds under the area-weighted sums and
 * volume and E* stay exact. u and v share the corner and its area, so the rotation pair f H needs no
 * area ratio. Every factor is exactly 1 on a projected grid (the same bits as without them).
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
#include "model/stage.h"
#include "base/omp_compat.h"

#if SW_REAL_BITS == 64   /* precision-free: compiled in the double copy only */
static double b_max_frequency(double gh, double dx, double dy, int dims)
{
    double d = dims == 2 && dy < dx ? dy : dx;
    return 2.0 * sqrt(gh) / d;
}
#endif

static void b_prepare(sw_prep *p)
{
    const sw_view *v = &p->f;
    const ptrdiff_t nx = (ptrdiff_t)v->nx, ny = (ptrdiff_t)v->ny;
    sw_real *hx = SW_V(v, hx), *hy = SW_V(v, hy);
    const int line_w = p->f.edges[SW_WEST] == SW_EDGE_OPEN || p->f.edges[SW_WEST] == SW_EDGE_LEVEL;
    const int line_e = p->f.edges[SW_EAST] == SW_EDGE_OPEN || p->f.edges[SW_EAST] == SW_EDGE_LEVEL;
    const int line_s = p->f.edges[SW_SOUTH] == SW_EDGE_OPEN || p->f.edges[SW_SOUTH] == SW_EDGE_LEVEL;
    const int line_n = p->f.edges[SW_NORTH] == SW_EDGE_OPEN || p->f.edges[SW_NORTH] == SW_EDGE_LEVEL;
    /* corner (i, j) = north-east corner of cell (i, j) */
    for (ptrdiff_t j = -1; j < ny; j++)
        for (ptrdiff_t i = -1; i < nx; i++) {
            double d[4];
            int sw = sw_prep_water(p, i, j, &d[0]), se = sw_prep_water(p, i + 1, j, &d[1]);
            int nw = sw_prep_water(p, i, j + 1, &d[2]), ne = sw_prep_water(p, i + 1, j + 1, &d[3]);
            int n = sw + se + nw + ne;
            if (n == 0)
                continue;
            double hc = (d[0] + d[1] + d[2] + d[3]) / n;   /* dry cells contribute 0 */
            double per_f = hc * 4.0 / n;                  /* h_c / f */
            int u_ok = sw == se && nw == ne;
            int v_ok = sw == nw && se == ne;
            /* on the line of an open or level edge the velocity along the edge would difference ghost
             * elevations, which lag behind (open) and pump energy into the edge: it is held at 0 */
            if ((i == -1 && line_w) || (i == nx - 1 && line_e))
                v_ok = 0;
            if ((j == -1 && line_s) || (j == ny - 1 && line_n))
                u_ok = 0;
            size_t c = sw_pad(v, i, j);
            hx[c] = u_ok ? (sw_real)per_f : 0;
            hy[c] = v_ok ? (sw_real)per_f : 0;
            if (p->share_x)   /* 3 / f = 12 / n, whether or not u and v flow (hx, hy say that) */
                p->share_x[c] = p->share_y[c] = sw_share_code(n);
        }
}

/* Initial velocities: at each corner that flows, the mean of its water cells times its water fraction
 * (the stored, transport-weighted value). */
static void b_initial_velocity(sw_prep *p, const double *uc, const double *vc)
{
    const sw_view *v = &p->f;
    const ptrdiff_t nx = (ptrdiff_t)v->nx, ny = (ptrdiff_t)v->ny;
    int n;
    for (ptrdiff_t j = -1; j < ny; j++)
        for (ptrdiff_t i = -1; i < nx; i++) {
            const size_t k = sw_pad(v, i, j);
            const ptrdiff_t four[8] = {i, j, i + 1, j, i, j + 1, i + 1, j + 1};
            if (SW_V(v, hx)[k] > 0) {
                const double mean = sw_prep_mean(p, uc, four, 4, &n);
                SW_V(v, u)[k] = (sw_real)(mean * n / 4);
            }
            if (SW_V(v, hy)[k] > 0) {
                const double mean = sw_prep_mean(p, vc, four, 4, &n);
                SW_V(v, v)[k] = (sw_real)(mean * n / 4);
            }
        }
}

/* The new elevation of cell k: continuity from the old corner velocities; a wall corner also feeds the
 * dry cells of its stencil, which must stay at 0 (the one formula of both kernels). */
SW_INLINE sw_real b_eta_cell(const sw_cells *c, size_t k)
{
    const size_t s = c->s;
    const sw_real *hx = c->hx, *hy = c->hy, *u = c->u, *v = c->v;
    /* the y-fluxes times their corner line's metric, summed in the order of the projected formula
     * (((n0 + n1) - s0) - s1), so that with wn = ws = 1 the bits are those without the metric */
    return c->h[k] > 0 ? c->eta[k] - c->cx * (hx[k] * u[k] + hx[k - s] * u[k - s] - hx[k - 1] * u[k - 1] - hx[k - s - 1] * u[k - s - 1])
                                   - c->cy * (c->wn * (hy[k] * v[k] + hy[k - 1] * v[k - 1]) - c->ws * (hy[k - s] * v[k - s])
                                              - c->ws * (hy[k - s - 1] * v[k - s - 1]))
                       : 0;
}

/* The centre values of cell k as b_centre_row makes them, in the state's precision and rounded to
 * float (one division, not two in double: the tracker's input, within float round-off of centre_row). */
SW_INLINE void b_centre_cell(const sw_cells *c, size_t k, size_t i, size_t j, float *e, float *uc, float *vc)
{
    (void)i;
    (void)j;
    const size_t s = c->s;
    const sw_real *hx = c->hx, *hy = c->hy, *u = c->u, *v = c->v;
    const int wet = c->h[k] > 0;
    const sw_real w = wet ? (sw_real)0.25 / c->h[k] : 0;
    *e = wet ? (float)c->eta[k] : 0.0f;
    *uc = (float)((hx[k] * u[k] + hx[k - 1] * u[k - 1] + hx[k - s] * u[k - s] + hx[k - s - 1] * u[k - s - 1]) * w);
    *vc = (float)((hy[k] * v[k] + hy[k - 1] * v[k - 1] + hy[k - s] * v[k - s] + hy[k - s - 1] * v[k - s - 1]) * w);
}

/* The arrays and coefficients of continuity on padded row j: dt / (2 dx) and dt / (2 dy) over the row's
 * metric, and the metric of the corner lines north (j) and south (j - 1) of it, which multiply the
 * y-fluxes (all 1 on a projected grid, exactly: the same bits). */
static sw_cells b_cells(const sw_view *v, size_t j)
{
    const double m = v->cos_c[j];
    return (sw_cells){SW_V(v, eta), SW_V(v, u), SW_V(v, v), SW_V(v, h), SW_V(v, hx), SW_V(v, hy), v->stride,
                      (sw_real)(0.5 * v->dt_s / (v->dx_m * m)), (sw_real)(0.5 * v->dt_s / (v->dy_m * m)),
                      (sw_real)v->cos_f[j], (sw_real)v->cos_f[j - 1]};
}

static void b_continuity(const sw_view *v, size_t j)
{
    const sw_cells c = b_cells(v, j);
    sw_continuity_loop(&c, j * v->stride + 1, v->nx, b_eta_cell);
}

static void b_continuity_observed(const sw_view *v, size_t j, size_t f, float *buf)
{
    const sw_cells c = b_cells(v, j);
    sw_continuity_observed_loop(&c, j * v->stride + 1, f * v->stride + 1, f - 1, v->nx, buf, b_eta_cell, b_centre_cell);
}

static void b_centre_row_f32(const sw_view *v, size_t j, float *eta, float *u, float *vel)
{
    const sw_cells c = b_cells(v, j + 1);   /* grid row j; the centre values use no coefficient */
    sw_centre_loop(&c, j, v->nx, eta, u, vel, b_centre_cell);
}

/* Momentum (backward) on corner row j (columns 0..nx): from the new eta of cell rows j and j+1. The
 * x-gradient divides by the corner line's metric cos_f[j] (1 on a projected grid). */
SW_INLINE void b_momentum_plain(const sw_view *v, size_t j, const int forced)
{
    sw_real *restrict u = SW_V(v, u), *restrict vv = SW_V(v, v);
    const sw_real *restrict eta = SW_V(v, eta), *restrict hx = SW_V(v, hx), *restrict hy = SW_V(v, hy);
    const sw_real gx = (sw_real)(0.5 * v->g * v->dt_s / (v->dx_m * v->cos_f[j]));
    const sw_real gy = (sw_real)(0.5 * v->g * v->dt_s / v->dy_m);
    const size_t s = v->stride, r = j * s;
    const float *restrict ax0 = forced ? v->terms->surface_x[0] : NULL, *restrict ax1 = forced ? v->terms->surface_x[1] : NULL;
    const float *restrict ay0 = forced ? v->terms->surface_y[0] : NULL, *restrict ay1 = forced ? v->terms->surface_y[1] : NULL;
    const sw_real c0 = (sw_real)(v->dt_s * (1 - v->terms->surface_w)), c1 = (sw_real)(v->dt_s * v->terms->surface_w);
    SW_OMP(simd)
    for (size_t i = r; i <= r + v->nx; i++) {
        const sw_real du = gx * (eta[i + 1] + eta[i + s + 1] - eta[i] - eta[i + s]);
        const sw_real dv = gy * (eta[i + s] + eta[i + s + 1] - eta[i] - eta[i + 1]);
        u[i] = hx[i] > 0 ? (forced ? u[i] - du + sw_surface_dvel(ax0, ax1, i, c0, c1) : u[i] - du) : 0;
        vv[i] = hy[i] > 0 ? (forced ? vv[i] - dv + sw_surface_dvel(ay0, ay1, i, c0, c1) : vv[i] - dv) : 0;
    }
}

/* Momentum with rotation and friction on corner row j: as the A layout's (colocated.h),
 * F = f dt on the corner line (hx = hy where both flow, and both hold f * velocity: the rotation of the
 * stored pair is the rotation of the velocity). The corners store f * velocity with hx = h / f, so the friction rate
 * r / h of the velocity is that of the stored value when rho carries 1 / f (share): rho = dt r / f, and
 * for quadratic friction, |velocity| = |stored| / f, rho = dt Cd |stored| / f^2. u and v of a corner
 * have one f, read from share_x (the byte 3 / f: the thirds are folded into rho0 and dtc). On a
 * geographic grid the x-gradient divides by cos_f[j] as in the plain kernel; u and v stand for the same
 * area (the corner's), so the rotation pair needs no area ratio and still does no work. b_row_coef holds
 * what a row computes once. */
typedef struct {
    sw_real gx, gy, F;  /* gravity coefficients of the row's stencils, dt f on the corner line */
    sw_real rho0, dtc;  /* friction: dt r / 3 and dt / 9 (the thirds of the share code folded in) */
    sw_real c0, c1;     /* surface forcing weights */
} b_row_coef;

/* Corners i0..i1 of one share segment (terms.h share_mixed_x); mixed: read the share bytes, else every
 * flowing corner is in open water (SW_SHARE_OPEN: the same values without the byte stream). */
SW_INLINE void b_terms_span(const sw_view *v, const b_row_coef *k, size_t i0, size_t i1, const int mixed,
                            const int drag, const int forced)
{
    sw_real *restrict u = SW_V(v, u), *restrict vv = SW_V(v, v);
    const sw_real *restrict eta = SW_V(v, eta), *restrict hx = SW_V(v, hx), *restrict hy = SW_V(v, hy);
    const sw_real *restrict cdx = drag ? (const sw_real *)v->terms->drag_x : NULL;
    const sw_real *restrict cdy = drag ? (const sw_real *)v->terms->drag_y : NULL;
    const uint8_t *restrict sh = v->terms->share_x;   /* 3 / f of the corner, for u and v alike */
    const float *restrict ax0 = forced ? v->terms->surface_x[0] : NULL, *restrict ax1 = forced ? v->terms->surface_x[1] : NULL;
    const float *restrict ay0 = forced ? v->terms->surface_y[0] : NULL, *restrict ay1 = forced ? v->terms->surface_y[1] : NULL;
    const sw_real gx = k->gx, gy = k->gy, F = k->F, rho0 = k->rho0, dtc = k->dtc, c0 = k->c0, c1 = k->c1;
    const size_t s = v->stride;
    SW_OMP(simd)
    for (size_t i = i0; i <= i1; i++) {
        const sw_real Hx = hx[i], Hy = hy[i], u0 = u[i], v0 = vv[i];
        const sw_real c = mixed ? (sw_real)sh[i] : (sw_real)SW_SHARE_OPEN;
        sw_real rx = rho0 * c, ry = rho0 * c;
        if (drag)
            rx += dtc * cdx[i] * (c * c) * (sw_real)sqrt(u0 * u0 + v0 * v0);
        const sw_real dgx = -gx * (eta[i + 1] + eta[i + s + 1] - eta[i] - eta[i + s]);
        const sw_real u1 = forced ? sw_terms_update(u0, Hx, dgx + sw_surface_dvel(ax0, ax1, i, c0, c1), 2 * Hx * F * v0, rx)
                                  : sw_terms_update(u0, Hx, dgx, 2 * Hx * F * v0, rx);
        if (drag)
            ry += dtc * cdy[i] * (c * c) * (sw_real)sqrt(u1 * u1 + v0 * v0);
        u[i] = u1;
        const sw_real dgy = -gy * (eta[i + s] + eta[i + s + 1] - eta[i] - eta[i + 1]);
        vv[i] = forced ? sw_terms_update(v0, Hy, dgy + sw_surface_dvel(ay0, ay1, i, c0, c1), -2 * Hy * F * u1, ry)
                       : sw_terms_update(v0, Hy, dgy, -2 * Hy * F * u1, ry);
    }
}

SW_INLINE void b_momentum_terms(const sw_view *v, size_t j, const int drag, const int forced)
{
    const b_row_coef k = {
        .gx = (sw_real)(0.5 * v->g * v->dt_s / (v->dx_m * v->cos_f[j])), .gy = (sw_real)(0.5 * v->g * v->dt_s / v->dy_m),
        .F = (sw_real)(v->dt_s * v->terms->f_face[j]),
        .rho0 = (sw_real)(v->dt_s * v->terms->friction_rate_ms / 3), .dtc = (sw_real)(v->dt_s / 9),
        .c0 = (sw_real)(v->dt_s * (1 - v->terms->surface_w)), .c1 = (sw_real)(v->dt_s * v->terms->surface_w)};
    const size_t r = j * v->stride, last = r + v->nx;
    /* u and v share one byte: a segment is mixed when either's flag says so */
    const uint8_t *mx = v->terms->share_mixed_x + j * v->terms->n_share_seg;
    const uint8_t *my = v->terms->share_mixed_y + j * v->terms->n_share_seg;
    for (size_t a = r, b; a <= last; a = b + 1) {
        if (sw_share_span(mx, my, r, a, last, &b))
            b_terms_span(v, &k, a, b, 1, drag, forced);
        else
            b_terms_span(v, &k, a, b, 0, drag, forced);
    }
}

static void b_momentum(const sw_view *v, size_t j) { b_momentum_plain(v, j, 0); }
static void b_momentum_forced(const sw_view *v, size_t j) { b_momentum_plain(v, j, 1); }
static void b_momentum_linear(const sw_view *v, size_t j) { b_momentum_terms(v, j, 0, 0); }
static void b_momentum_drag(const sw_view *v, size_t j) { b_momentum_terms(v, j, 1, 0); }
static void b_momentum_forced_linear(const sw_view *v, size_t j) { b_momentum_terms(v, j, 0, 1); }
static void b_momentum_forced_drag(const sw_view *v, size_t j) { b_momentum_terms(v, j, 1, 1); }

/* Centre values: eta as stored; velocity = the four corners' mean volume flux (hx u = depth x
 * velocity) divided by the cell's depth, i.e. the depth-mean velocity at the centre. */
static void b_centre_row(const sw_view *v, size_t j, double *eta, double *u, double *vel)
{
    const size_t r = sw_pad(v, 0, (ptrdiff_t)j), s = v->stride;
    const sw_real *hx = SW_V(v, hx), *hy = SW_V(v, hy), *uu = SW_V(v, u), *vv = SW_V(v, v);
    for (size_t i = 0; i < v->nx; i++) {
        const size_t k = r + i;
        const double h = SW_V(v, h)[k];
        if (!(h > 0)) {
            eta[i] = u[i] = vel[i] = 0;
            continue;
        }
        eta[i] = SW_V(v, eta)[k];
        u[i] = ((double)hx[k] * uu[k] + (double)hx[k - 1] * uu[k - 1] + (double)hx[k - s] * uu[k - s]
                + (double)hx[k - s - 1] * uu[k - s - 1]) / (4 * h);
        vel[i] = ((double)hy[k] * vv[k] + (double)hy[k - 1] * vv[k - 1] + (double)hy[k - s] * vv[k - s]
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

/* E* (layout.h), corners counted once (a periodic edge's halo copy left out), with the rotation share
 * (dt/2) f hx u v at each corner. Every sum weights by the area of its points (cos_c of centre rows,
 * cos_f of corner lines; 1 on a projected grid, exactly). */
static double b_energy(const sw_view *v)
{
    const size_t nx = v->nx, ny = v->ny, s = v->stride, c0 = sw_first_col(v), r0 = sw_first_row(v);
    const double dx = v->dx_m, dy = v->dy_m, dt = v->dt_s;
    const sw_real *eta = SW_V(v, eta), *u = SW_V(v, u), *vv = SW_V(v, v), *hx = SW_V(v, hx), *hy = SW_V(v, hy);
    const double *cc = v->cos_c, *cf = v->cos_f;   /* areas: cos_c, cos_f */
    double pot = 0, kin = 0, cross = 0, rot = 0;
    for (size_t j = 1; j <= ny; j++)
        for (size_t i = j * s + 1; i <= j * s + nx; i++) {
            /* the divergence times the cell's area (cos_c): the y-fluxes times their line's cos_f */
            double div = ((double)hx[i] * u[i] + (double)hx[i - s] * u[i - s] - (double)hx[i - 1] * u[i - 1]
                          - (double)hx[i - s - 1] * u[i - s - 1]) / (2 * dx)
                       + (cf[j] * ((double)hy[i] * vv[i] + (double)hy[i - 1] * vv[i - 1])
                          - cf[j - 1] * ((double)hy[i - s] * vv[i - s]) - cf[j - 1] * ((double)hy[i - s - 1] * vv[i - s - 1]))
                         / (2 * dy);
            pot += (double)eta[i] * eta[i] * cc[j];
            cross += eta[i] * div;
        }
    for (size_t j = r0; j <= ny; j++)
        for (size_t i = j * s + c0; i <= j * s + nx; i++) {
            kin += ((double)hx[i] * u[i] * u[i] + (double)hy[i] * vv[i] * vv[i]) * cf[j];
            rot += v->terms->f_face[j] * hx[i] * u[i] * vv[i] * cf[j];
        }
    return (0.5 * v->g * pot + 0.5 * kin - 0.5 * v->g * dt * cross + 0.5 * dt * rot) * dx * dy;
}

/* Stages: continuity of cell row j reads the corners of corner rows j-1 and j; momentum of corner row j
 * (u and v) reads eta of cell rows j and j+1 (corner row 0 is the south edge's line). */
const sw_layout_kernels SW_NAME(sw_layout_b_kernels) = {
    .prepare = b_prepare,
    .initial_velocity = b_initial_velocity,
    .continuity = {b_continuity, SW_WRITES(SW_FIELD_ETA), {SW_NO_ROWS, SW_ROWS(-1, 0), SW_ROWS(-1, 0)}, 0},
    .continuity_observed = b_continuity_observed,
    .n_momentum = 1,
    .momentum = {
        [SW_TERMS_PLAIN] = {{b_momentum, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                             {SW_ROWS(0, 1), SW_NO_ROWS, SW_NO_ROWS}, 1}},
        [SW_TERMS_FORCED] = {{b_momentum_forced, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                             {SW_ROWS(0, 1), SW_NO_ROWS, SW_NO_ROWS}, 1}},
        [SW_TERMS_LINEAR] = {{b_momentum_linear, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                              {SW_ROWS(0, 1), SW_ROWS(0, 0), SW_ROWS(0, 0)}, 1}},
        [SW_TERMS_DRAG] = {{b_momentum_drag, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                            {SW_ROWS(0, 1), SW_ROWS(0, 0), SW_ROWS(0, 0)}, 1}},
        [SW_TERMS_FORCED_LINEAR] = {{b_momentum_forced_linear, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                            {SW_ROWS(0, 1), SW_ROWS(0, 0), SW_ROWS(0, 0)}, 1}},
        [SW_TERMS_FORCED_DRAG] = {{b_momentum_forced_drag, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                            {SW_ROWS(0, 1), SW_ROWS(0, 0), SW_ROWS(0, 0)}, 1}},
    },
    .observes = {SW_ROWS(0, 0), SW_ROWS(-1, 0), SW_ROWS(-1, 0)},
    .centre_row = b_centre_row,
    .centre_row_f32 = b_centre_row_f32,
    .energy = b_energy,
};

#if SW_REAL_BITS == 64
extern const sw_layout_kernels sw_layout_b_kernels_f32;

const sw_layout sw_layout_b = {
    .name = "B",
    .summary = "eta at centres, u and v together at cell corners, two-row averaged differences",
    .transport_weighted = 1,
    .u_at = {0.5, 0.5},
    .v_at = {0.5, 0.5},
    .stream_values = 9,   /* eta, u, v read and written; hx, hy, h read */
    .max_frequency = b_max_frequency,
    .symbols = b_symbols,
    .kernels = {[SW_DOUBLE] = &sw_layout_b_kernels_f64, [SW_SINGLE] = &sw_layout_b_kernels_f32},
};
#endif
