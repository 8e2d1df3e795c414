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
 * ghost cell (halo) carries eta and the normal velocity set in stage.h (sw_edge_cell), with
 * the inner cell's depth. Periodic edges: the halo holds the opposite side's cells.
 * Semi-discrete frequency: omega^2 = g h (sin^2(k dx) / dx^2 + sin^2(l dy) / dy^2), highest at the
 * 4-cell wave: sqrt(g h) sqrt(1/dx^2 + 1/dy^2); in a channel sqrt(g h) / dx. With square cells the
 * Courant limit is sqrt(2) in 2D and 2 in 1D. The 2-cell wave has omega = 0: a checkerboard in eta
 * does not propagate (the layout's known spurious mode).
 */
#include <math.h>

#include "model/layout.h"
#include "model/colocated.h"
#include "model/stage.h"
#include "base/omp_compat.h"

#if SW_REAL_BITS == 64   /* precision-free: compiled in the double copy only */
static double a_max_frequency(double gh, double dx, double dy, int dims)
{
    double s = 1.0 / (dx * dx) + (dims == 2 ? 1.0 / (dy * dy) : 0.0);
    return sqrt(gh * s);
}
#endif

/* u flows where the west and east neighbours are water (or ghosts of open and level edges, or across a
 * periodic edge), v where the south and north ones are; the ghosts carry the inner cell's depth. */
static void a_prepare(sw_prep *p)
{
    const sw_view *v = &p->f;
    const ptrdiff_t nx = (ptrdiff_t)v->nx, ny = (ptrdiff_t)v->ny;
    const sw_real *h = SW_V(v, h);
    sw_real *hx = SW_V(v, hx), *hy = SW_V(v, hy);
    double d;
    for (ptrdiff_t j = 0; j < ny; j++)
        for (ptrdiff_t i = 0; i < nx; i++) {
            const size_t k = sw_pad(v, i, j);
            if (h[k] <= 0)
                continue;
            hx[k] = sw_prep_water(p, i - 1, j, &d) && sw_prep_water(p, i + 1, j, &d) ? h[k] : 0;
            hy[k] = sw_prep_water(p, i, j - 1, &d) && sw_prep_water(p, i, j + 1, &d) ? h[k] : 0;
        }
    for (size_t q = 0; q < p->n_edge; q++) {
        const sw_edge_cell *oc = &p->edge[q];
        (oc->normal_x ? hx : hy)[oc->ghost] = h[oc->inner];
    }
}

/* The centre values of cell k (the stored ones), rounded to float. */
SW_INLINE void a_centre_cell(const sw_cells *c, size_t k, size_t i, size_t j, float *e, float *uc, float *vc)
{
    (void)i;
    (void)j;
    *e = (float)c->eta[k];
    *uc = (float)c->u[k];
    *vc = (float)c->v[k];
}

static void a_continuity(const sw_view *v, size_t j)
{
    const sw_cells c = sw_colocated_cells(v, j);
    sw_continuity_loop(&c, j * v->stride + 1, v->nx, sw_colocated_eta_cell);
}

static void a_continuity_observed(const sw_view *v, size_t j, size_t f, float *buf)
{
    const sw_cells c = sw_colocated_cells(v, j);
    sw_colocated_observed_loop(&c, j * v->stride + 1, f * v->stride + 1, f - 1, v->nx, buf, a_centre_cell);
}

/* Momentum on padded row j, plain and with the terms: the co-located stencil (colocated.h). */
static void a_momentum(const sw_view *v, size_t j) { sw_colocated_momentum(v, j, 0); }
static void a_momentum_forced(const sw_view *v, size_t j) { sw_colocated_momentum(v, j, 1); }
static void a_momentum_linear(const sw_view *v, size_t j) { sw_colocated_momentum_terms(v, j, 0, 0); }
static void a_momentum_drag(const sw_view *v, size_t j) { sw_colocated_momentum_terms(v, j, 1, 0); }
static void a_momentum_forced_linear(const sw_view *v, size_t j) { sw_colocated_momentum_terms(v, j, 0, 1); }
static void a_momentum_forced_drag(const sw_view *v, size_t j) { sw_colocated_momentum_terms(v, j, 1, 1); }

/* Ghost normal velocities: the outgoing wave's (open) or the inner cell's mirror (level). */
static void a_edge_velocities(const sw_view *v, const sw_edge_cell *cells, size_t q0, size_t q1)
{
    sw_real *u = SW_V(v, u), *vv = SW_V(v, v);
    const sw_real *eta = SW_V(v, eta);
    for (size_t q = q0; q < q1; q++) {
        const sw_edge_cell *oc = &cells[q];
        sw_real *vel = oc->normal_x ? u : vv;
        vel[oc->ghost] = (sw_real)oc->vel * (eta[oc->ghost] + sw_edge_head(v, q)) + (sw_real)oc->mirror * vel[oc->inner];
    }
}

static void a_centre_row(const sw_view *v, size_t j, double *eta, double *u, double *vel)
{
    const size_t r = sw_pad(v, 0, (ptrdiff_t)j);
    for (size_t i = 0; i < v->nx; i++) {
        eta[i] = SW_V(v, eta)[r + i];
        u[i] = SW_V(v, u)[r + i];
        vel[i] = SW_V(v, v)[r + i];
    }
}

static void a_centre_row_f32(const sw_view *v, size_t j, float *eta, float *u, float *vel)
{
    const sw_cells c = sw_colocated_cells(v, j + 1);
    sw_centre_loop(&c, j, v->nx, eta, u, vel, a_centre_cell);
}

#if SW_REAL_BITS == 64   /* precision-free: compiled in the double copy only */
static void a_symbols(double k, double l, double dx, double dy, sw_symbols *o)
{
    sw_colocated_symbols(k, l, dx, dy, o);
}
#endif

/* E* (layout.h), each point standing for dx dy (cos_c dx dy on the sphere), with the rotation share
 * (colocated.h). */
static double a_energy(const sw_view *v)
{
    return sw_colocated_energy_sum(v) * v->dx_m * v->dy_m;
}

/* Stages: continuity of row j reads u of row j and v of rows j-1 .. j+1; momentum of row j (u and v)
 * reads eta of rows j-1 .. j+1. */
const sw_layout_kernels SW_NAME(sw_layout_a_kernels) = {
    .prepare = a_prepare,
    .initial_velocity = sw_colocated_initial_velocity,
    .continuity = {a_continuity, SW_WRITES(SW_FIELD_ETA), {SW_NO_ROWS, SW_ROWS(0, 0), SW_ROWS(-1, 1)}, 0},
    .continuity_observed = a_continuity_observed,
    .n_momentum = 1,
    .momentum = {
        [SW_TERMS_PLAIN] = {{a_momentum, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                             {SW_ROWS(-1, 1), SW_NO_ROWS, SW_NO_ROWS}, 0}},
        [SW_TERMS_FORCED] = {{a_momentum_forced, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                             {SW_ROWS(-1, 1), SW_NO_ROWS, SW_NO_ROWS}, 0}},
        [SW_TERMS_LINEAR] = {{a_momentum_linear, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                              {SW_ROWS(-1, 1), SW_ROWS(0, 0), SW_ROWS(0, 0)}, 0}},
        [SW_TERMS_DRAG] = {{a_momentum_drag, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                            {SW_ROWS(-1, 1), SW_ROWS(0, 0), SW_ROWS(0, 0)}, 0}},
        [SW_TERMS_FORCED_LINEAR] = {{a_momentum_forced_linear, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                            {SW_ROWS(-1, 1), SW_ROWS(0, 0), SW_ROWS(0, 0)}, 0}},
        [SW_TERMS_FORCED_DRAG] = {{a_momentum_forced_drag, SW_WRITES(SW_FIELD_U) | SW_WRITES(SW_FIELD_V),
                            {SW_ROWS(-1, 1), SW_ROWS(0, 0), SW_ROWS(0, 0)}, 0}},
    },
    .edge_velocities = a_edge_velocities,
    .observes = {SW_ROWS(0, 0), SW_ROWS(0, 0), SW_ROWS(0, 0)},
    .centre_row = a_centre_row,
    .centre_row_f32 = a_centre_row_f32,
    .energy = a_energy,
};

#if SW_REAL_BITS == 64
extern const sw_layout_kernels sw_layout_a_kernels_f32;

const sw_layout sw_layout_a = {
    .name = "A",
    .summary = "co-located: eta, u and v at cell centres, centred differences",
    .u_at = {0, 0},
    .v_at = {0, 0},
    .stream_values = 8,   /* eta, u, v read and written; hx, hy read */
    .max_frequency = a_max_frequency,
    .symbols = a_symbols,
    .kernels = {[SW_DOUBLE] = &sw_layout_a_kernels_f64, [SW_SINGLE] = &sw_layout_a_kernels_f32},
};
#endif
