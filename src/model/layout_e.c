/* layout_e.c - the Arakawa E layout: a checkerboard of the model grid. Cells with (i + j) even hold
 * eta, cells with (i + j) odd hold u and v together; every derivative uses the four nearest
 * neighbours, which are of the other kind.
 *
 *        j+1   u,v  eta   u,v           eta[k]: elevation of an eta cell ((i + j) even); 0 in u,v cells
 *        j     eta  u,v   eta           u[k], v[k]: velocities of a u,v cell ((i + j) odd); 0 in eta cells
 *        j-1   u,v  eta   u,v           hx[k], hy[k]: depth carried by u[k], v[k]; 0 = no flow
 *              i-1   i    i+1
 *
 *   D(hu) at eta[k] = (hx u[k+1] - hx u[k-1]) / (2 dx) + (hy v[k+s] - hy v[k-s]) / (2 dy)
 *   G(eta) at u[k]  = (eta[k+1] - eta[k-1]) / (2 dx),   at v[k]: (eta[k+s] - eta[k-s]) / (2 dy)
 * so G = -D^T: water volume and E* (layout.h) are conserved exactly.
 *
 * Spacing. The model grid's dx is the distance from an eta point to its nearest velocity points
 * (east and west; dy to north and south). Like points are sqrt(dx^2 + dy^2) apart along the
 * diagonals (dx sqrt(2) on square cells) and 2 dx apart along the axes. Turned by 45 degrees this is
 * the B layout with cells dx sqrt(2) on a side: eta at the centres, u and v at the corners.
 * Each point stands for an area of 2 dx dy (the diamond between its four neighbours), which the
 * energy uses. Any dx, dy work; with dx != dy the turned B cell is a rhombus.
 * Seabed. The depth of each cell serves the variable living there: an eta cell's depth only decides
 * whether it is water; a u,v cell carries its own depth as hx and hy. A velocity flows when its cell
 * is water and both neighbours it differences (west and east for u, south and north for v) are
 * water (or ghosts of an open or level edge); otherwise it is held at 0. So a wall holds the normal
 * velocity at 0 half a cell outside the face beside an eta cell and half a cell inside beside a
 * u,v cell, alternating along the wall: a straight wall is on the face on average (a channel one
 * row wide has both its walls shifted by -dx/2).
 * State. u,v cells keep eta = 0 and eta cells keep u = v = 0 (prepare clears the initial elevation of
 * u,v cells), so the step runs A-layout loops over every cell: the zero flux depths of the other
 * kind make the extra updates exact no-ops. sw_model_volume therefore sums the eta cells only, with
 * the model's dx dy per cell; the water actually displaced is twice that (see docs/layouts.md).
 * On a geographic grid each point's area is cos(latitude) of its row times the plane's, the metric the
 * shared kernels carry (colocated.h), and the ghosts of west and east edges use the true cell width.
 * centre_row reports at a u,v cell the mean eta of its water neighbours, and at an eta cell the
 * mean u and v of its water neighbours.
 * Open and level edges use the shared ghost list, in two kinds: beside an eta cell the ghost is a
 * velocity point, beside a u,v cell an eta point (no velocity, hx = hy = 0). Open: a velocity ghost
 * takes eta from the inner cell (the shared ghost update) and the outgoing wave's velocity
 * sign sqrt(g/h) eta_ghost; an eta ghost is left alone by the shared update (keep = 1, take = 0)
 * and moves, by an implicit upwind step over dx, towards the outgoing-wave elevation of the inner
 * velocity, u / (sign sqrt(g/h)). It must follow that velocity (its own lattice), not the inner
 * cell's neighbours: following eta two cells in reflected twice as much, and a ghost fed from
 * another lattice pumps energy into the basin (seen on the D layout). Level: the lattice is
 * mirror-symmetric only about lines through cell centres, so the node of eta lies on the line
 * through the GHOST centres, half a cell beyond the edge face: an eta ghost holds 0; a velocity
 * ghost lies on the mirror line, stores the mirrored inner eta (-eta_inner, the shared rule) and
 * is stepped like any velocity with it. This is an exact mirror image, neutral and stable; a node on
 * the face line breaks the symmetry (tried: transients grew twentyfold on a rugged coast).
 *
 * Semi-discrete frequency: omega^2 = g h (sin^2(k dx) / dx^2 + sin^2(l dy) / dy^2) over the diamond
 * |k dx| + |l dy| <= pi of wavenumbers the eta lattice resolves; highest at k dx = l dy = pi/2:
 * omega_max = sqrt(g h) sqrt(1/dx^2 + 1/dy^2), in a channel sqrt(g h) / dx. Courant limit
 * sqrt(g h) dt / dx <= sqrt(2) in 2D and 2 in 1D (square cells). Spurious mode: k dx = pi, l = 0
 * (the same wave as k = 0, l dy = pi on this lattice): eta of alternating sign from one row of eta
 * points to the next has omega = 0.
 */
#include <math.h>
#include <stddef.h>

#include "model/layout.h"
#include "model/colocated.h"
#include "model/stage.h"
#include "base/omp_compat.h"

#if SW_REAL_BITS == 64   /* precision-free: compiled in the double copy only */
static double e_max_frequency(double gh, double dx, double dy, int dims)
{
    double s = 1.0 / (dx * dx) + (dims == 2 ? 1.0 / (dy * dy) : 0.0);
    return sqrt(gh * s);
}
#endif

/* Turns the shared edge list into the E layout's two kinds of ghost (see the file comment). A ghost
 * beside an eta cell is a velocity point: it keeps the shared coefficients and gets a flux depth.
 * A ghost beside a u,v cell is an eta point with no velocity and no flux depth: the shared update
 * leaves it alone (keep = 1, take = 0) and e_edge_velocities radiates it from the inner velocity (open,
 * vel kept as sign sqrt(g/h)), or it is the level node and stays 0 (keep = take = vel = 0). */
static void e_prepare_edges(sw_prep *p)
{
    const size_t s = p->f.stride;
    for (size_t q = 0; q < p->n_edge; q++) {
        sw_edge_cell *oc = &p->edge[q];
        const size_t i = oc->inner % s - 1, j = oc->inner / s - 1;
        sw_real *hn = oc->normal_x ? SW_V(&p->f, hx) : SW_V(&p->f, hy);
        if ((i + j) % 2 == 0) {
            hn[oc->ghost] = SW_V(&p->f, h)[oc->inner];
            continue;
        }
        const int open = oc->kind == SW_EDGE_OPEN;
        oc->mirror = 0;
        oc->keep = open ? 1 : 0;
        oc->take = 0;
        if (!open)
            oc->vel = 0;
    }
}

static void e_prepare(sw_prep *p)
{
    const sw_view *v = &p->f;
    const ptrdiff_t nx = (ptrdiff_t)v->nx, ny = (ptrdiff_t)v->ny;
    sw_real *h = SW_V(v, h), *hx = SW_V(v, hx), *hy = SW_V(v, hy);
    double d;
    for (ptrdiff_t j = 0; j < ny; j++)
        for (ptrdiff_t i = 0; i < nx; i++) {
            size_t k = sw_pad(v, i, j);
            if ((i + j) % 2 == 0)
                continue;
            SW_V(v, eta)[k] = 0;   /* a u,v cell holds no elevation */
            if (!(h[k] > 0))
                continue;
            hx[k] = sw_prep_water(p, i - 1, j, &d) && sw_prep_water(p, i + 1, j, &d) ? h[k] : 0;
            hy[k] = sw_prep_water(p, i, j - 1, &d) && sw_prep_water(p, i, j + 1, &d) ? h[k] : 0;
        }
    e_prepare_edges(p);
}

/* Centre values of cell k (grid column i, row j) in the state's precision, rounded to float: a cell's
 * own variables, and the other kind as the mean over its water neighbours (within float round-off of
 * e_centre_row, which sums in double). An eta cell needs the means of u and v, a u,v cell that of eta:
 * two means a cell, the first of u or of eta as the cell's kind says (each cell's arithmetic as if it
 * took all three, so the same bits, at two thirds of the work). */
SW_INLINE void e_centre_cell(const sw_cells *c, size_t k, size_t i, size_t j, float *eta, float *u, float *v)
{
    const size_t s = c->s;
    const sw_real *h = c->h, *e = c->eta, *uu = c->u, *vv = c->v;
    const sw_real ww = h[k - 1] > 0, we = h[k + 1] > 0, ws = h[k - s] > 0, wn = h[k + s] > 0;
    const sw_real w = ww + we + ws + wn, inv = w > 0 ? 1 / w : 0, wet = h[k] > 0;
    const int own = ((unsigned)i + (unsigned)j) % 2 == 0;   /* the cell stores eta; else u and v */
    /* the first mean: of u at an eta cell, of eta at a u,v cell */
    const sw_real xw = own ? uu[k - 1] : e[k - 1], xe = own ? uu[k + 1] : e[k + 1];
    const sw_real xs = own ? uu[k - s] : e[k - s], xn = own ? uu[k + s] : e[k + s];
    const sw_real xa = (ww * xw + we * xe + ws * xs + wn * xn) * inv;
    const sw_real va = (ww * vv[k - 1] + we * vv[k + 1] + ws * vv[k - s] + wn * vv[k + s]) * inv;
    *eta = (float)(wet * (own ? e[k] : xa));
    *u = (float)(wet * (own ? xa : uu[k]));
    *v = (float)(wet * (own ? va : vv[k]));
}

/* Continuity with A's cell formula (colocated.h): a no-op on u,v cells, whose neighbours carry no flux;
 * initial velocities likewise (eta cells have hx = hy = 0 and keep none). */
static void e_continuity(const sw_view *v, size_t j)
{
    const sw_cells c = sw_colocated_cells(v, j);
    sw_continuity_loop(&c, j * v->stride + 1, v->nx, sw_colocated_eta_cell);
}

static void e_continuity_observed(const sw_view *v, size_t j, size_t f, float *buf)
{
    const sw_cells c = sw_colocated_cells(v, j);
    sw_colocated_observed_loop(&c, j * v->stride + 1, f * v->stride + 1, f - 1, v->nx, buf, e_centre_cell);
}

static void e_centre_row_f32(const sw_view *v, size_t j, float *eta, float *u, float *vel)
{
    const sw_cells c = sw_colocated_cells(v, j + 1);
    sw_centre_loop(&c, j, v->nx, eta, u, vel, e_centre_cell);
}

/* Momentum on padded row j, plain and with the terms: the co-located stencil (colocated.h);
 * eta cells have hx = hy = 0 and stay at rest. */
static void e_momentum(const sw_view *v, size_t j) { sw_colocated_momentum(v, j, 0); }
static void e_momentum_forced(const sw_view *v, size_t j) { sw_colocated_momentum(v, j, 1); }
static void e_momentum_linear(const sw_view *v, size_t j) { sw_colocated_momentum_terms(v, j, 0, 0); }
static void e_momentum_drag(const sw_view *v, size_t j) { sw_colocated_momentum_terms(v, j, 1, 0); }
static void e_momentum_forced_linear(const sw_view *v, size_t j) { sw_colocated_momentum_terms(v, j, 0, 1); }
static void e_momentum_forced_drag(const sw_view *v, size_t j) { sw_colocated_momentum_terms(v, j, 1, 1); }

/* Ghost normal velocities beside eta cells: the outgoing wave's (open); on the mirror line, stepped like
 * any velocity with the ghost's eta (the inner eta mirrored) as the far neighbour (level). Open eta
 * ghosts beside u,v cells: radiated. Along x the spacing is the ghost row's true width, dx cos_c (a west
 * or east ghost is on its inner cell's row). */
static void e_edge_velocities(const sw_view *v, const sw_edge_cell *oc, size_t q0, size_t q1)
{
    sw_real *u = SW_V(v, u), *vv = SW_V(v, v), *eta = SW_V(v, eta);
    const sw_real *hx = SW_V(v, hx), *hy = SW_V(v, hy), *h = SW_V(v, h);
    const sw_real gy = (sw_real)(0.5 * v->g * v->dt_s / v->dy_m), ry = (sw_real)(v->dt_s / v->dy_m);
    for (size_t q = q0; q < q1; q++) {
        sw_real *vel = oc[q].normal_x ? u : vv;
        const sw_real *hn = oc[q].normal_x ? hx : hy;
        const size_t g = oc[q].ghost, n = oc[q].inner;
        const double dx_true = v->dx_m * v->cos_c[g / v->stride];   /* the ghost row's cell width, m */
        if (hn[g] > 0) {   /* a velocity ghost */
            const sw_real gn = oc[q].normal_x ? (sw_real)(0.5 * v->g * v->dt_s / dx_true) : gy;
            if (oc[q].mirror != 0)
                vel[g] -= gn * (g > n ? eta[g] - eta[n] : eta[n] - eta[g]);
            else
                vel[g] = (sw_real)oc[q].vel * (eta[g] + sw_edge_head(v, q));
        } else if (oc[q].vel != 0) {
            /* an open eta ghost: implicit upwind over the cell width towards the inner velocity's
             * outgoing-wave elevation, u / (sign sqrt(g/h)); read by that velocity's next step */
            const sw_real rn = oc[q].normal_x ? (sw_real)(v->dt_s / dx_true) : ry;
            const sw_real r = (sw_real)fabs(oc[q].vel) * h[n] * rn;
            const sw_real hd = sw_edge_head(v, q);   /* of eta + head, the departure (stage.h) */
            eta[g] = (eta[g] + hd + r * vel[n] / (sw_real)oc[q].vel) / (1 + r) - hd;
        }
    }
}

/* Centre values: a cell's own variables, and the other kind as the mean over its water neighbours
 * (cells of the grid with depth; the halo and land hold nothing of their own). */
static void e_centre_row(const sw_view *v, size_t j, double *eta, double *u, double *vel)
{
    const size_t r = sw_pad(v, 0, (ptrdiff_t)j), s = v->stride;
    const sw_real *h = SW_V(v, h), *e = SW_V(v, eta), *uu = SW_V(v, u), *vv = SW_V(v, v);
    for (size_t i = 0; i < v->nx; i++) {
        const size_t k = r + i;
        if (!(h[k] > 0)) {
            eta[i] = u[i] = vel[i] = 0;
            continue;
        }
        const double ww = h[k - 1] > 0, we = h[k + 1] > 0, ws = h[k - s] > 0, wn = h[k + s] > 0;
        const double w = ww + we + ws + wn;
        const double inv = w > 0 ? 1 / w : 0;
        if ((i + j) % 2 == 0) {
            eta[i] = e[k];
            u[i] = (ww * uu[k - 1] + we * uu[k + 1] + ws * uu[k - s] + wn * uu[k + s]) * inv;
            vel[i] = (ww * vv[k - 1] + we * vv[k + 1] + ws * vv[k - s] + wn * vv[k + s]) * inv;
        } else {
            eta[i] = (ww * e[k - 1] + we * e[k + 1] + ws * e[k - s] + wn * e[k + s]) * inv;
            u[i] = uu[k];
            vel[i] = vv[k];
        }
    }
}

static double e_eta_at(const sw_view *v, size_t i, size_t j)
{
    const size_t k = sw_pad(v, (ptrdiff_t)i, (ptrdiff_t)j), s = v->stride;
    const sw_real *h = SW_V(v, h), *e = SW_V(v, eta);
    if (!(h[k] > 0))
        return 0;
    if ((i + j) % 2 == 0)
        return e[k];
    const double ww = h[k - 1] > 0, we = h[k + 1] > 0, ws = h[k - s] > 0, wn = h[k + s] > 0;
    const double w = ww + we + ws + wn;
    return w > 0 ? (ww * e[k - 1] + we * e[k + 1] + ws * e[k - s] + wn * e[k + s]) / w : 0;
}

/* eta at (0, 0), u and v at (+-dx, 0) and (0, +-dy). */
#if SW_REAL_BITS == 64   /* precision-free: compiled in the double copy only */
static void e_symbols(double k, double l, double dx, double dy, sw_symbols *o)
{
    sw_colocated_symbols(k, l, dx, dy, o);
}
#endif

/* E* with each eta point and each velocity point standing for 2 dx dy (times its row's cos_c on the
 * sphere); the rotation share as A's. */
static double e_energy(const sw_view *v)
{
    return sw_colocated_energy_sum(v) * 2 * v->dx_m * v->dy_m;
}

/* Stages as the A layout's: continuity of row j reads u of row j and v of rows j-1 .. j+1; momentum of
 * row j reads eta of rows j-1 .. j+1. A row's centre values read its neighbours' rows. */
const sw_layout_kernels SW_NAME(sw_layout_e_kernels) = {
    .prepare = e_prepare,
    .initial_velocity = sw_colocated_initial_velocity,
    .continuity = {e_continuity, SW_WRITES(SW_FIELD_ETA), {SW_NO_ROWS, SW_ROWS(0, 0), SW_ROWS(-1, 1)}, 0},
    .continuity_observed = e_continuity_observed,
    .n_momentum = 1,
    .momentum = {
        [SW_TERMS_PLAIN] = {{e_momentum, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                             {SW_ROWS(-1, 1), SW_NO_ROWS, SW_NO_ROWS}, 0}},
        [SW_TERMS_FORCED] = {{e_momentum_forced, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                             {SW_ROWS(-1, 1), SW_NO_ROWS, SW_NO_ROWS}, 0}},
        [SW_TERMS_LINEAR] = {{e_momentum_linear, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                              {SW_ROWS(-1, 1), SW_ROWS(0, 0), SW_ROWS(0, 0)}, 0}},
        [SW_TERMS_DRAG] = {{e_momentum_drag, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                            {SW_ROWS(-1, 1), SW_ROWS(0, 0), SW_ROWS(0, 0)}, 0}},
        [SW_TERMS_FORCED_LINEAR] = {{e_momentum_forced_linear, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                            {SW_ROWS(-1, 1), SW_ROWS(0, 0), SW_ROWS(0, 0)}, 0}},
        [SW_TERMS_FORCED_DRAG] = {{e_momentum_forced_drag, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                            {SW_ROWS(-1, 1), SW_ROWS(0, 0), SW_ROWS(0, 0)}, 0}},
    },
    .edge_velocities = e_edge_velocities,
    .observes = {SW_ROWS(-1, 1), SW_ROWS(-1, 1), SW_ROWS(-1, 1)},
    .centre_reads_halo = 1,
    .centre_row = e_centre_row,
    .centre_row_f32 = e_centre_row_f32,
    .eta_at = e_eta_at,
    .energy = e_energy,
};

#if SW_REAL_BITS == 64
extern const sw_layout_kernels sw_layout_e_kernels_f32;

const sw_layout sw_layout_e = {
    .name = "E",
    .summary = "checkerboard: eta on (i+j) even cells, u and v on (i+j) odd cells (B turned 45 degrees)",
    .u_at = {0, 0},
    .v_at = {0, 0},
    .stream_values = 8,   /* eta, u, v read and written; hx, hy read (half of them zeros) */
    .max_frequency = e_max_frequency,
    .level_node_offset = 0.5,
    .checkerboard = 1,
    .eta_cells = 2,
    .symbols = e_symbols,
    .kernels = {[SW_DOUBLE] = &sw_layout_e_kernels_f64, [SW_SINGLE] = &sw_layout_e_kernels_f32},
};
#endif
