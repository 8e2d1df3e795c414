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
 * Level: ghost eta = -inner eta (the shared ghost update) and the inner face's flux mirrored: an exact
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
 *
 * Geographic grids (sw_view.cos_c, cos_f; x = R lambda, y = R phi): eta and v lie on centre rows (area
 * cos_c[j] dx dy), u on face lines (area cos_f[j] dx dy). G(eta)_x at u on line j divides by cos_f[j];
 * the continuity of row j divides by cos_c[j] and multiplies each y-flux H by the cos_c of the row
 * it lies on (j - 1 or j + 1), so D is still -G^T in the area-weighted sums: volume and E* exact. The
 * u equation's rotation scales each v row's transport by cos_c / cos_f (areas), v's is unchanged.
 * On a projected grid every factor is 1.0 and the arithmetic is bit for bit the plane's.
 */
#include <math.h>
#include <stddef.h>

#include "model/layout.h"
#include "model/stage.h"
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
 * as (i, j) pairs. *share gets sw_share_code of the point (0 when it may not flow). */
static double d_face_depth(const sw_prep *p, const ptrdiff_t own[4], const ptrdiff_t st[8], uint8_t *share)
{
    *share = 0;
    double h1, h2, d[4];
    int w1 = sw_prep_water(p, own[0], own[1], &h1), w2 = sw_prep_water(p, own[2], own[3], &h2);
    if (!w1 && !w2)
        return 0;
    int s0 = sw_prep_water(p, st[0], st[1], &d[0]), s1 = sw_prep_water(p, st[2], st[3], &d[1]);
    int s2 = sw_prep_water(p, st[4], st[5], &d[2]), s3 = sw_prep_water(p, st[6], st[7], &d[3]);
    int n = s0 + s1 + s2 + s3;
    if (n == 0 || s0 != s1 || s2 != s3)
        return 0;
    double hc = (h1 + h2) / (w1 + w2);
    *share = sw_share_code(n);
    return hc * 4.0 / n;
}

static int d_ghost_line(const sw_prep *p, int edge)
{
    return p->f.edges[edge] == SW_EDGE_OPEN || p->f.edges[edge] == SW_EDGE_LEVEL;
}

static void d_prepare(sw_prep *p)
{
    const sw_view *v = &p->f;
    const ptrdiff_t nx = (ptrdiff_t)v->nx, ny = (ptrdiff_t)v->ny;
    const size_t s = v->stride;
    sw_real *hx = SW_V(v, hx), *hy = SW_V(v, hy);
    const sw_real *h = SW_V(v, h);
    /* u on the north face of (i, j): own (i, j), (i, j+1); pairs (i-1, j)~(i+1, j), (i-1, j+1)~(i+1, j+1) */
    for (ptrdiff_t j = -1; j < ny; j++)
        for (ptrdiff_t i = 0; i < nx; i++) {
            const ptrdiff_t own[4] = {i, j, i, j + 1};
            const ptrdiff_t st[8] = {i - 1, j, i + 1, j, i - 1, j + 1, i + 1, j + 1};
            /* on a south or north open/level edge line u would difference lagging ghosts: held at 0 */
            int edge_line = (j == -1 && d_ghost_line(p, SW_SOUTH)) || (j == ny - 1 && d_ghost_line(p, SW_NORTH));
            uint8_t share;
            double depth = d_face_depth(p, own, st, &share);
            hx[sw_pad(v, i, j)] = edge_line ? 0 : (sw_real)depth;
            if (p->share_x)
                p->share_x[sw_pad(v, i, j)] = edge_line ? 0 : share;
        }
    /* v on the east face of (i, j): own (i, j), (i+1, j); pairs (i, j-1)~(i, j+1), (i+1, j-1)~(i+1, j+1) */
    for (ptrdiff_t j = 0; j < ny; j++)
        for (ptrdiff_t i = -1; i < nx; i++) {
            const ptrdiff_t own[4] = {i, j, i + 1, j};
            const ptrdiff_t st[8] = {i, j - 1, i, j + 1, i + 1, j - 1, i + 1, j + 1};
            int edge_line = (i == -1 && d_ghost_line(p, SW_WEST)) || (i == nx - 1 && d_ghost_line(p, SW_EAST));
            uint8_t share;
            double depth = d_face_depth(p, own, st, &share);
            hy[sw_pad(v, i, j)] = edge_line ? 0 : (sw_real)depth;
            if (p->share_y)
                p->share_y[sw_pad(v, i, j)] = edge_line ? 0 : share;
        }
    /* Ghost normal velocities live on the two along-edge faces of each ghost cell: the face at +t
     * (index ghost) always, the face at -t (index ghost - t) when no ghost of the same edge owns it.
     * Their flux depth is the inner cell's depth, so they store true velocities. */
    for (size_t q = 0; q < p->n_edge; q++) {
        sw_edge_cell *oc = &p->edge[q];
        sw_real *hn = oc->normal_x ? hx : hy;
        const size_t t = oc->normal_x ? s : 1;
        const size_t n = oc->inner, g = oc->ghost;
        hn[g] = h[n];
        if (!(h[n - t] > 0))
            hn[g - t] = h[n];
        if (oc->kind == SW_EDGE_OPEN) {
            oc->keep = 1;     /* the shared update leaves the ghost alone: d_edge_velocities radiates it */
            oc->take = 0;
        }
    }
}

/* Initial velocities: on each face that flows, the mean of its water cells times its water fraction
 * (the water cells of its four-cell stencil over 4: the stored, transport-weighted value). */
static void d_initial_velocity(sw_prep *p, const double *uc, const double *vc)
{
    const sw_view *v = &p->f;
    const ptrdiff_t nx = (ptrdiff_t)v->nx, ny = (ptrdiff_t)v->ny;
    int n, ns;
    for (ptrdiff_t j = -1; j < ny; j++)
        for (ptrdiff_t i = -1; i < nx; i++) {
            const size_t k = sw_pad(v, i, j);
            if (i >= 0 && SW_V(v, hx)[k] > 0) {   /* u on the north face of (i, j) */
                const ptrdiff_t own[4] = {i, j, i, j + 1}, st[8] = {i - 1, j, i + 1, j, i - 1, j + 1, i + 1, j + 1};
                const double mean = sw_prep_mean(p, uc, own, 2, &n);
                sw_prep_mean(p, uc, st, 4, &ns);
                SW_V(v, u)[k] = (sw_real)(mean * ns / 4);
            }
            if (j >= 0 && SW_V(v, hy)[k] > 0) {   /* v on the east face of (i, j) */
                const ptrdiff_t own[4] = {i, j, i + 1, j}, st[8] = {i, j - 1, i, j + 1, i + 1, j - 1, i + 1, j + 1};
                const double mean = sw_prep_mean(p, vc, own, 2, &n);
                sw_prep_mean(p, vc, st, 4, &ns);
                SW_V(v, v)[k] = (sw_real)(mean * ns / 4);
            }
        }
}

/* The new elevation of cell k: continuity from the old velocities; a wall velocity also feeds the dry
 * cells of its stencil, which must stay at 0 (the one formula of both kernels). The y-fluxes of the rows
 * north and south are weighted by those rows' metric (wn, ws), grouped so that with factors of 1.0 the
 * sum is the plane's, operation for operation. */
SW_INLINE sw_real d_eta_cell(const sw_cells *c, size_t k)
{
    const size_t s = c->s;
    const sw_real *hx = c->hx, *hy = c->hy, *u = c->u, *v = c->v;
    return c->h[k] > 0 ? c->eta[k] - c->cx * (hx[k + 1] * u[k + 1] + hx[k + 1 - s] * u[k + 1 - s] - hx[k - 1] * u[k - 1]
                                              - hx[k - 1 - s] * u[k - 1 - s])
                                   - c->cy * (c->wn * (hy[k + s] * v[k + s] + hy[k + s - 1] * v[k + s - 1])
                                              - c->ws * (hy[k - s] * v[k - s]) - c->ws * (hy[k - s - 1] * v[k - s - 1]))
                       : 0;
}

/* The centre values of cell k in the state's precision, one division, rounded to float: d_centre_row
 * to float round-off (centre_row_f32). */
SW_INLINE void d_centre_cell(const sw_cells *c, size_t k, size_t i, size_t j, float *e, float *uc, float *vc)
{
    (void)i;
    (void)j;
    const size_t s = c->s;
    const sw_real *hx = c->hx, *hy = c->hy, *u = c->u, *v = c->v;
    const int wet = c->h[k] > 0;
    const sw_real w = wet ? (sw_real)0.5 / c->h[k] : 0;
    *e = wet ? (float)c->eta[k] : 0.0f;
    *uc = (float)((hx[k] * u[k] + hx[k - s] * u[k - s]) * w);
    *vc = (float)((hy[k] * v[k] + hy[k - 1] * v[k - 1]) * w);
}

/* The arrays and coefficients of continuity on padded row j: dt / (4 dx) and dt / (4 dy) over the row's
 * metric, and the metric of the rows north and south, where the y-fluxes it reads lie (v is on centre
 * rows on this layout, so wn, ws are cos_c[j + 1], cos_c[j - 1]). All 1 on a projected grid. */
static sw_cells d_cells(const sw_view *v, size_t j)
{
    const double m = v->cos_c[j];
    return (sw_cells){SW_V(v, eta), SW_V(v, u), SW_V(v, v), SW_V(v, h), SW_V(v, hx), SW_V(v, hy), v->stride,
                      (sw_real)(0.25 * v->dt_s / (v->dx_m * m)), (sw_real)(0.25 * v->dt_s / (v->dy_m * m)),
                      (sw_real)v->cos_c[j + 1], (sw_real)v->cos_c[j - 1]};
}

static void d_continuity(const sw_view *v, size_t j)
{
    const sw_cells c = d_cells(v, j);
    sw_continuity_loop(&c, j * v->stride + 1, v->nx, d_eta_cell);
}

static void d_continuity_observed(const sw_view *v, size_t j, size_t f, float *buf)
{
    const sw_cells c = d_cells(v, j);
    sw_continuity_observed_loop(&c, j * v->stride + 1, f * v->stride + 1, f - 1, v->nx, buf, d_eta_cell, d_centre_cell);
}

static void d_centre_row_f32(const sw_view *v, size_t j, float *eta, float *u, float *vel)
{
    const sw_cells c = d_cells(v, j + 1);
    sw_centre_loop(&c, j, v->nx, eta, u, vel, d_centre_cell);
}

/* u on the north faces of padded row j (row 0: the south edge's), from the new eta of rows j and j+1;
 * the x-derivative on the face line j divides by its metric cos_f[j]. */
SW_INLINE void d_u_plain(const sw_view *v, size_t j, const int forced)
{
    sw_real *restrict u = SW_V(v, u);
    const sw_real *restrict eta = SW_V(v, eta), *restrict hx = SW_V(v, hx);
    const sw_real gx = (sw_real)(0.25 * v->g * v->dt_s / (v->dx_m * v->cos_f[j]));
    const size_t s = v->stride, r = j * s;
    const float *restrict a0 = forced ? v->terms->surface_x[0] : NULL, *restrict a1 = forced ? v->terms->surface_x[1] : NULL;
    const sw_real c0 = (sw_real)(v->dt_s * (1 - v->terms->surface_w)), c1 = (sw_real)(v->dt_s * v->terms->surface_w);
    SW_OMP(simd)
    for (size_t i = r + 1; i <= r + v->nx; i++)
        u[i] = hx[i] > 0 ? (forced ? u[i] - gx * (eta[i + 1] + eta[i + 1 + s] - eta[i - 1] - eta[i - 1 + s])
                                         + sw_surface_dvel(a0, a1, i, c0, c1)
                                   : u[i] - gx * (eta[i + 1] + eta[i + 1 + s] - eta[i - 1] - eta[i - 1 + s])) : 0;
}

/* v on the east faces of padded row j (columns 0..nx), from the new eta of rows j-1 and j+1. */
SW_INLINE void d_v_plain(const sw_view *v, size_t j, const int forced)
{
    sw_real *restrict vv = SW_V(v, v);
    const sw_real *restrict eta = SW_V(v, eta), *restrict hy = SW_V(v, hy);
    const sw_real gy = (sw_real)(0.25 * v->g * v->dt_s / v->dy_m);
    const size_t s = v->stride, r = j * s;
    const float *restrict a0 = forced ? v->terms->surface_y[0] : NULL, *restrict a1 = forced ? v->terms->surface_y[1] : NULL;
    const sw_real c0 = (sw_real)(v->dt_s * (1 - v->terms->surface_w)), c1 = (sw_real)(v->dt_s * v->terms->surface_w);
    SW_OMP(simd)
    for (size_t i = r; i <= r + v->nx; i++)
        vv[i] = hy[i] > 0 ? (forced ? vv[i] - gy * (eta[i + s] + eta[i + s + 1] - eta[i - s] - eta[i - s + 1])
                                          + sw_surface_dvel(a0, a1, i, c0, c1)
                                    : vv[i] - gy * (eta[i + s] + eta[i + s + 1] - eta[i - s] - eta[i - s + 1])) : 0;
}

/* What a row of D's terms kernels computes once: the coefficients of d_u_span / d_v_span. */
typedef struct {
    sw_real g;          /* gx or gy: the gravity coefficient of the row's stencil */
    sw_real q, qr;      /* u: rotation weight and the area ratio of row j+1 to row j; v: qn, qs */
    sw_real rho0, dtc;  /* friction: dt r / 3 and dt / 9 (the thirds of the share code folded in) */
    sw_real c0, c1;     /* surface forcing weights */
} d_row_coef;

/* The momentum stages with rotation and friction (terms.h; docs/terms.md), as layout_c.c's with the
 * roles of the faces turned: u of row j (north faces, on the line j) from the transport of the old v on
 * the four east faces around it (rows j and j+1, corners on line j), rot = (F / 2) sum hy v; then v of
 * row j (east faces) from the plain average of the new u on the two north faces of row j (line j) and the
 * two of row j-1 (line j-1), rot = (F / 2) hy sum u, F on each line. One weight matrix K = (f / 4) hy
 * and its transpose: rotation does no work on any depth. Friction carries 1 / f (share) as on the B layout
 * (layout_b.c), since the faces store f * velocity with hx = h / f. On a geographic grid the pair weights
 * carry the areas the points stand for: the u equation takes row j's v transport times cos_c[j] / cos_f[j]
 * and row j+1's times cos_c[j+1] / cos_f[j] (written as q times qr, the ratio of the rows, 1.0 on a plane, so
 * the plane's sum is unchanged), so that K stays symmetric under the area-weighted sum. The share bytes
 * are read only in the segments of a row that need them (terms.h share_mixed_x).
 * d_u_span: u of padded row j at points i0..i1 (one segment); mixed: read the share bytes (else every
 * flowing point is in open water, code SW_SHARE_OPEN: the same values without the byte stream). */
SW_INLINE void d_u_span(const sw_view *v, const d_row_coef *k, size_t i0, size_t i1, const int mixed,
                        const int flat, const int drag, const int forced)
{
    sw_real *restrict u = SW_V(v, u);
    const sw_real *restrict eta = SW_V(v, eta), *restrict hx = SW_V(v, hx), *restrict hy = SW_V(v, hy);
    const sw_real *restrict vv = SW_V(v, v), *restrict cd = drag ? (const sw_real *)v->terms->drag_x : NULL;
    const uint8_t *restrict sh = v->terms->share_x;   /* 3 / f */
    const float *restrict a0 = forced ? v->terms->surface_x[0] : NULL, *restrict a1 = forced ? v->terms->surface_x[1] : NULL;
    const sw_real gx = k->g, q = k->q, qr = k->qr, rho0 = k->rho0, dtc = k->dtc, c0 = k->c0, c1 = k->c1;
    const size_t s = v->stride;
    SW_OMP(simd)
    for (size_t i = i0; i <= i1; i++) {
        const sw_real w0 = vv[i - 1], w1 = vv[i], n0 = vv[i + s - 1], n1 = vv[i + s];
        const sw_real rot = flat ? q * (hy[i - 1] * w0 + hy[i] * w1 + hy[i + s - 1] * n0 + hy[i + s] * n1)
                                 : q * (hy[i - 1] * w0 + hy[i] * w1 + qr * (hy[i + s - 1] * n0) + qr * (hy[i + s] * n1));
        const sw_real c = mixed ? (sw_real)sh[i] : (sw_real)SW_SHARE_OPEN;
        sw_real rho = rho0 * c;
        if (drag) {
            const sw_real vbar = (sw_real)0.25 * (w0 + w1 + n0 + n1);
            rho += dtc * cd[i] * (c * c) * (sw_real)sqrt(u[i] * u[i] + vbar * vbar);
        }
        const sw_real dg = -gx * (eta[i + 1] + eta[i + 1 + s] - eta[i - 1] - eta[i - 1 + s]);
        u[i] = forced ? sw_terms_update(u[i], hx[i], dg + sw_surface_dvel(a0, a1, i, c0, c1), rot, rho)
                      : sw_terms_update(u[i], hx[i], dg, rot, rho);
    }
}

SW_INLINE void d_u_terms(const sw_view *v, size_t j, const int drag, const int forced)
{
    /* v of row j and row j+1 stand for areas cos_c of those rows against u's cos_f of line j */
    const d_row_coef k = {
        .g = (sw_real)(0.25 * v->g * v->dt_s / (v->dx_m * v->cos_f[j])),
        .q = (sw_real)(0.5 * v->dt_s * v->terms->f_face[j] * (v->cos_c[j] / v->cos_f[j])),
        .qr = (sw_real)(v->cos_c[j + 1] / v->cos_c[j]),
        .rho0 = (sw_real)(v->dt_s * v->terms->friction_rate_ms / 3), .dtc = (sw_real)(v->dt_s / 9),
        .c0 = (sw_real)(v->dt_s * (1 - v->terms->surface_w)), .c1 = (sw_real)(v->dt_s * v->terms->surface_w)};
    const size_t r = j * v->stride, last = r + v->nx;
    const uint8_t *mixed = v->terms->share_mixed_x + j * v->terms->n_share_seg;
    const int flat = k.qr == 1;
    for (size_t a = r + 1, b; a <= last; a = b + 1) {
        const int mix = sw_share_span(mixed, mixed, r, a, last, &b);
        if (mix && flat)
            d_u_span(v, &k, a, b, 1, 1, drag, forced);
        else if (mix)
            d_u_span(v, &k, a, b, 1, 0, drag, forced);
        else if (flat)
            d_u_span(v, &k, a, b, 0, 1, drag, forced);
        else
            d_u_span(v, &k, a, b, 0, 0, drag, forced);
    }
}

/* v of padded row j at points i0..i1, as d_u_span. */
SW_INLINE void d_v_span(const sw_view *v, const d_row_coef *k, size_t i0, size_t i1, const int mixed,
                        const int drag, const int forced)
{
    sw_real *restrict vv = SW_V(v, v);
    const sw_real *restrict eta = SW_V(v, eta), *restrict hy = SW_V(v, hy);
    const sw_real *restrict u = SW_V(v, u), *restrict cd = drag ? (const sw_real *)v->terms->drag_y : NULL;
    const uint8_t *restrict sh = v->terms->share_y;
    const float *restrict a0 = forced ? v->terms->surface_y[0] : NULL, *restrict a1 = forced ? v->terms->surface_y[1] : NULL;
    const sw_real gy = k->g, qn = k->q, qs = k->qr, rho0 = k->rho0, dtc = k->dtc, c0 = k->c0, c1 = k->c1;
    const size_t s = v->stride;
    SW_OMP(simd)
    for (size_t i = i0; i <= i1; i++) {
        const sw_real H = hy[i], n0 = u[i], n1 = u[i + 1], s0 = u[i - s], s1 = u[i - s + 1];
        const sw_real rot = H * (qn * (n0 + n1) + qs * (s0 + s1));
        const sw_real c = mixed ? (sw_real)sh[i] : (sw_real)SW_SHARE_OPEN;
        sw_real rho = rho0 * c;
        if (drag) {
            const sw_real ubar = (sw_real)0.25 * (n0 + n1 + s0 + s1);
            rho += dtc * cd[i] * (c * c) * (sw_real)sqrt(vv[i] * vv[i] + ubar * ubar);
        }
        const sw_real dg = -gy * (eta[i + s] + eta[i + s + 1] - eta[i - s] - eta[i - s + 1]);
        vv[i] = forced ? sw_terms_update(vv[i], H, dg + sw_surface_dvel(a0, a1, i, c0, c1), -rot, rho)
                       : sw_terms_update(vv[i], H, dg, -rot, rho);
    }
}

SW_INLINE void d_v_terms(const sw_view *v, size_t j, const int drag, const int forced)
{
    const d_row_coef k = {
        .g = (sw_real)(0.25 * v->g * v->dt_s / v->dy_m),
        .q = (sw_real)(0.5 * v->dt_s * v->terms->f_face[j]), .qr = (sw_real)(0.5 * v->dt_s * v->terms->f_face[j - 1]),
        .rho0 = (sw_real)(v->dt_s * v->terms->friction_rate_ms / 3), .dtc = (sw_real)(v->dt_s / 9),
        .c0 = (sw_real)(v->dt_s * (1 - v->terms->surface_w)), .c1 = (sw_real)(v->dt_s * v->terms->surface_w)};
    const size_t r = j * v->stride, last = r + v->nx;
    const uint8_t *mixed = v->terms->share_mixed_y + j * v->terms->n_share_seg;
    for (size_t a = r, b; a <= last; a = b + 1) {
        if (sw_share_span(mixed, mixed, r, a, last, &b))
            d_v_span(v, &k, a, b, 1, drag, forced);
        else
            d_v_span(v, &k, a, b, 0, drag, forced);
    }
}

static void d_u_row(const sw_view *v, size_t j) { d_u_plain(v, j, 0); }
static void d_v_row(const sw_view *v, size_t j) { d_v_plain(v, j, 0); }
static void d_u_forced(const sw_view *v, size_t j) { d_u_plain(v, j, 1); }
static void d_v_forced(const sw_view *v, size_t j) { d_v_plain(v, j, 1); }
static void d_u_linear(const sw_view *v, size_t j) { d_u_terms(v, j, 0, 0); }
static void d_v_linear(const sw_view *v, size_t j) { d_v_terms(v, j, 0, 0); }
static void d_u_drag(const sw_view *v, size_t j) { d_u_terms(v, j, 1, 0); }
static void d_v_drag(const sw_view *v, size_t j) { d_v_terms(v, j, 1, 0); }
static void d_u_forced_linear(const sw_view *v, size_t j) { d_u_terms(v, j, 0, 1); }
static void d_v_forced_linear(const sw_view *v, size_t j) { d_v_terms(v, j, 0, 1); }
static void d_u_forced_drag(const sw_view *v, size_t j) { d_u_terms(v, j, 1, 1); }
static void d_v_forced_drag(const sw_view *v, size_t j) { d_v_terms(v, j, 1, 1); }

/* Ghost normal velocities on the faces of the ghost cells (see d_prepare), and the radiated elevation of
 * open ghosts (over the ghost's true width: dx times its row's metric on a west or east edge). */
static void d_edge_velocities(const sw_view *v, const sw_edge_cell *oc, size_t q0, size_t q1)
{
    sw_real *u = SW_V(v, u), *vv = SW_V(v, v), *eta = SW_V(v, eta);
    const sw_real *hx = SW_V(v, hx), *hy = SW_V(v, hy), *h = SW_V(v, h);
    const sw_real ry = (sw_real)(v->dt_s / v->dy_m);
    const size_t s = v->stride;
    for (size_t q = q0; q < q1; q++) {
        sw_real *vel = oc[q].normal_x ? u : vv;
        const sw_real *hn = oc[q].normal_x ? hx : hy;
        const size_t t = oc[q].normal_x ? s : 1, g = oc[q].ghost, n = oc[q].inner;
        /* open: the outgoing wave's velocity for the inner cells' elevation, on the face at +t their
         * mean with the next inner cell along the edge when that is water (its flux h u = c eta leaves
         * the inner cells, never enters them); level: the inner face's volume flux, mirrored */
        const sw_real half = h[n + t] > 0 ? (sw_real)0.5 : 0, inv_h = 1 / h[n], hd = sw_edge_head(v, q);
        vel[g] = (sw_real)oc[q].vel * ((1 - half) * (eta[n] + hd) + half * (eta[n + t] + hd))
               + (sw_real)oc[q].mirror * hn[n] * vel[n] * inv_h;
        if (!(h[n - t] > 0))
            vel[g - t] = (sw_real)oc[q].vel * (eta[n] + hd) + (sw_real)oc[q].mirror * hn[n - t] * vel[n - t] * inv_h;
        if (oc[q].vel != 0) {
            /* open: the ghost eta, read by the normal velocities one cell in (n and n - t), moves by an
             * implicit upwind step over the distance dx towards their outgoing-wave elevation,
             * mean flux / (h sign sqrt(g h)) */
            const sw_real f0 = hn[n] * vel[n], f1 = hn[n - t] * vel[n - t];
            const sw_real w = (hn[n] > 0) + (hn[n - t] > 0);
            const sw_real target = w > 0 ? (f0 + f1) / (w * h[n] * (sw_real)oc[q].vel) : 0;
            const sw_real rx = oc[q].normal_x ? (sw_real)(v->dt_s / (v->dx_m * v->cos_c[g / s])) : ry;
            const sw_real r = (sw_real)fabs(oc[q].vel) * h[n] * rx;
            eta[g] = (eta[g] + hd + r * target) / (1 + r) - hd;   /* of eta + head, the departure */
        }
    }
}

/* Centre values: eta as stored; velocity = the mean volume flux (hx u) on the two faces that carry it
 * divided by the cell's depth, i.e. the depth-mean velocity at the centre. */
static void d_centre_row(const sw_view *v, size_t j, double *eta, double *u, double *vel)
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
        u[i] = ((double)hx[k] * uu[k] + (double)hx[k - s] * uu[k - s]) / (2 * h);
        vel[i] = ((double)hy[k] * vv[k] + (double)hy[k - 1] * vv[k - 1]) / (2 * h);
    }
}

/* eta at (0, 0), u at (0, +-dy/2) + whole cells, v at (+-dx/2, 0) + whole cells. */
#if SW_REAL_BITS == 64   /* precision-free: compiled in the double copy only */
static void d_symbols(double k, double l, double dx, double dy, sw_symbols *o)
{
    double a = 0.5 * k * dx, b = 0.5 * l * dy;
    o->div_x = o->grad_x = I * sin(2 * a) * cos(b) / dx;
    o->div_y = o->grad_y = I * cos(a) * sin(2 * b) / dy;
    o->v_at_u = o->u_at_v = cos(a) * cos(b);   /* four-point average across the cell corner */
}
#endif

/* E* (layout.h), velocity points counted once (a periodic edge's halo copy left out), with the
 * rotation share (dt/2) u.K v: each u point's four v neighbours, K = (f / 4) hy. Every sum weights by
 * the area of its points: cos_c of centre rows (eta, v), cos_f of face lines (u). */
static double d_energy(const sw_view *v)
{
    const size_t nx = v->nx, ny = v->ny, s = v->stride, c0 = sw_first_col(v), r0 = sw_first_row(v);
    const double dx = v->dx_m, dy = v->dy_m, dt = v->dt_s;
    const sw_real *eta = SW_V(v, eta), *u = SW_V(v, u), *vv = SW_V(v, v), *hx = SW_V(v, hx), *hy = SW_V(v, hy);
    const double *cc = v->cos_c, *cf = v->cos_f;   /* areas */
    double pot = 0, kin = 0, cross = 0, rot = 0;
    for (size_t j = 1; j <= ny; j++)
        for (size_t i = j * s + 1; i <= j * s + nx; i++) {
            /* the divergence times the cell's area (cos_c[j]): y-fluxes times their rows' */
            double div = ((double)hx[i + 1] * u[i + 1] + (double)hx[i + 1 - s] * u[i + 1 - s]
                          - (double)hx[i - 1] * u[i - 1] - (double)hx[i - 1 - s] * u[i - 1 - s]) / (4 * dx)
                       + (cc[j + 1] * ((double)hy[i + s] * vv[i + s] + (double)hy[i + s - 1] * vv[i + s - 1])
                          - cc[j - 1] * ((double)hy[i - s] * vv[i - s])
                          - cc[j - 1] * ((double)hy[i - s - 1] * vv[i - s - 1])) / (4 * dy);
            pot += (double)eta[i] * eta[i] * cc[j];
            cross += eta[i] * div;
        }
    for (size_t j = r0; j <= ny; j++)   /* u: rows 0 (the south edge's faces) .. ny, columns 1 .. nx */
        for (size_t i = j * s + 1; i <= j * s + nx; i++) {
            kin += (double)hx[i] * u[i] * u[i] * cf[j];
            double pair = 0;
            for (size_t a = i, r = j; a <= i + s; a += s, r++)   /* v of rows j and j+1, west and east */
                pair += cc[r] * ((double)hy[a - 1] * vv[a - 1] + (double)hy[a] * vv[a]);
            rot += v->terms->f_face[j] * u[i] * pair;
        }
    for (size_t j = 1; j <= ny; j++)     /* v: rows 1 .. ny, columns 0 (the west edge's faces) .. nx */
        for (size_t i = j * s + c0; i <= j * s + nx; i++)
            kin += (double)hy[i] * vv[i] * vv[i] * cc[j];
    return (0.5 * v->g * pot + 0.5 * kin - 0.5 * v->g * dt * cross + dt / 8 * rot) * dx * dy;
}

/* Stages: continuity of row j reads u of rows j-1, j and v of rows j-1 .. j+1; u of row j (its north
 * faces; row 0 holds the south edge's) reads eta of rows j, j+1; v of row j reads eta of rows j-1 .. j+1. */
const sw_layout_kernels SW_NAME(sw_layout_d_kernels) = {
    .prepare = d_prepare,
    .initial_velocity = d_initial_velocity,
    .continuity = {d_continuity, SW_WRITES(SW_FIELD_ETA), {SW_NO_ROWS, SW_ROWS(-1, 0), SW_ROWS(-1, 1)}, 0},
    .continuity_observed = d_continuity_observed,
    .n_momentum = 2,
    .momentum = {
        [SW_TERMS_PLAIN] = {{d_u_row, SW_WRITES(SW_FIELD_U), {SW_ROWS(0, 1), SW_NO_ROWS, SW_NO_ROWS}, 1},
                            {d_v_row, SW_WRITES(SW_FIELD_V), {SW_ROWS(-1, 1), SW_NO_ROWS, SW_NO_ROWS}, 0}},
        [SW_TERMS_FORCED] = {{d_u_forced, SW_WRITES(SW_FIELD_U), {SW_ROWS(0, 1), SW_NO_ROWS, SW_NO_ROWS}, 1},
                            {d_v_forced, SW_WRITES(SW_FIELD_V), {SW_ROWS(-1, 1), SW_NO_ROWS, SW_NO_ROWS}, 0}},
        [SW_TERMS_LINEAR] = {{d_u_linear, SW_WRITES(SW_FIELD_U), {SW_ROWS(0, 1), SW_ROWS(0, 0), SW_ROWS(0, 1)}, 1},
                             {d_v_linear, SW_WRITES(SW_FIELD_V), {SW_ROWS(-1, 1), SW_ROWS(-1, 0), SW_ROWS(0, 0)}, 0}},
        [SW_TERMS_DRAG] = {{d_u_drag, SW_WRITES(SW_FIELD_U), {SW_ROWS(0, 1), SW_ROWS(0, 0), SW_ROWS(0, 1)}, 1},
                           {d_v_drag, SW_WRITES(SW_FIELD_V), {SW_ROWS(-1, 1), SW_ROWS(-1, 0), SW_ROWS(0, 0)}, 0}},
        [SW_TERMS_FORCED_LINEAR] = {{d_u_forced_linear, SW_WRITES(SW_FIELD_U), {SW_ROWS(0, 1), SW_ROWS(0, 0), SW_ROWS(0, 1)}, 1},
                           {d_v_forced_linear, SW_WRITES(SW_FIELD_V), {SW_ROWS(-1, 1), SW_ROWS(-1, 0), SW_ROWS(0, 0)}, 0}},
        [SW_TERMS_FORCED_DRAG] = {{d_u_forced_drag, SW_WRITES(SW_FIELD_U), {SW_ROWS(0, 1), SW_ROWS(0, 0), SW_ROWS(0, 1)}, 1},
                           {d_v_forced_drag, SW_WRITES(SW_FIELD_V), {SW_ROWS(-1, 1), SW_ROWS(-1, 0), SW_ROWS(0, 0)}, 0}},
    },
    .edge_velocities = d_edge_velocities,
    .observes = {SW_ROWS(0, 0), SW_ROWS(-1, 0), SW_ROWS(0, 0)},
    .centre_row = d_centre_row,
    .centre_row_f32 = d_centre_row_f32,
    .energy = d_energy,
};

#if SW_REAL_BITS == 64
extern const sw_layout_kernels sw_layout_d_kernels_f32;

const sw_layout sw_layout_d = {
    .name = "D",
    .summary = "eta at centres, u on north/south faces, v on east/west faces, four-point averages",
    .transport_weighted = 1,
    .u_at = {0, 0.5},
    .v_at = {0.5, 0},
    .stream_values = 9,   /* eta, u, v read and written; hx, hy, h read */
    .max_frequency = d_max_frequency,
    .symbols = d_symbols,
    .kernels = {[SW_DOUBLE] = &sw_layout_d_kernels_f64, [SW_SINGLE] = &sw_layout_d_kernels_f32},
};
#endif
