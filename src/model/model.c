/* model.c - model state, its memory, and what every layout shares (see model.h).
 *
 * Invariant: on land cells and in the halo at walls, eta, u, v, h, hx and hy are 0 and stay 0;
 * the layouts guarantee it by giving every face next to land a zero flux depth. The halo beyond a
 * periodic edge holds a copy of the opposite side (the stepper keeps it so).
 * Time levels: after n steps the state holds eta at t_n = n dt and u, v at t_n + dt/2; a new model is
 * the water at rest at t = 0 (start_at_rest).
 */
#include "model/model.h"
#include "model/model_impl.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "base/fpmode.h"
#include "base/omp_compat.h"
#include "model/stepper.h"

#define SW_ALIGN 64

/* The stepper's step (which also shows the observer every finished row), with subnormal numbers
 * flushed to zero (fpmode.h); the caller's floating-point mode is restored after. */
static void step_flushed(sw_model *m)
{
    const unsigned int saved = sw_fp_flush();
    m->step(m);
    sw_fp_restore(saved);
}

static size_t round_up(size_t n, size_t to) { return (n + to - 1) / to * to; }

/* Row stride for a grid, in values of `size` bytes: nx + 2 padded to a whole number of 64-byte lines. */
static size_t stride_for(const sw_grid *g, size_t size)
{
    return round_up(g->nx + 2, SW_ALIGN / size);
}

size_t sw_model_bytes_for(const sw_grid *g, sw_precision precision, const sw_layout *layout,
                          const sw_terms_config *terms)
{
    const size_t size = sw_precision_bytes(precision);
    const size_t n_pad = stride_for(g, size) * (g->ny + 2);
    const sw_terms_variant v = terms ? sw_terms_variant_of(terms) : SW_TERMS_PLAIN;
    const size_t arrays = 6 + (sw_terms_variant_drags(v) ? 2 : 0) + (terms && terms->surface ? 3 : 0);
    const size_t share_bytes = v != SW_TERMS_PLAIN && layout && layout->transport_weighted
                               ? 2 * n_pad + 2 * (g->ny + 2) * (stride_for(g, size) / SW_SHARE_SEG + 1) : 0;
    const size_t surface_bytes = terms && terms->surface ? 4 * n_pad * sizeof(float) : 0;
    return arrays * n_pad * size + share_bytes + surface_bytes + g->nx * g->ny + 2 * (g->nx + g->ny) * sizeof(sw_edge_cell)
         + 4 * (g->ny + 2) * sizeof(double);   /* Coriolis rows and metric rows */
}

/* 64-byte aligned array of `rows` rows of `stride` values of `size` bytes, zeroed by the threads
 * that will later work on each row (first touch places the pages near them: the steps split rows
 * among threads the same static way), or NULL. Free with free(). */
static void *alloc_field(size_t rows, size_t stride, size_t size)
{
    const size_t row_bytes = stride * size, used = rows * row_bytes;
    size_t bytes = round_up(used, SW_ALIGN);
    char *p = aligned_alloc(SW_ALIGN, bytes);
    if (p) {
        SW_OMP(parallel for schedule(static))
        for (size_t j = 0; j < rows; j++)
            memset(p + j * row_bytes, 0, row_bytes);
        memset(p + used, 0, bytes - used);
    }
    return p;
}

double sw_model_get(const sw_model *m, const void *f, size_t k)
{
    return m->precision == SW_SINGLE ? (double)((const float *)f)[k] : ((const double *)f)[k];
}

void sw_model_put(const sw_model *m, void *f, size_t k, double x)
{
    if (m->precision == SW_SINGLE)
        ((float *)f)[k] = (float)x;
    else
        ((double *)f)[k] = x;
}

int sw_model_dims(const sw_grid *g, const sw_edge_kind edges[4])
{
    const int closed_ns = edges[SW_SOUTH] != SW_EDGE_OPEN && edges[SW_SOUTH] != SW_EDGE_LEVEL
                          && edges[SW_NORTH] != SW_EDGE_OPEN && edges[SW_NORTH] != SW_EDGE_LEVEL;
    const int closed_we = edges[SW_WEST] != SW_EDGE_OPEN && edges[SW_WEST] != SW_EDGE_LEVEL
                          && edges[SW_EAST] != SW_EDGE_OPEN && edges[SW_EAST] != SW_EDGE_LEVEL;
    return (g->ny == 1 && closed_ns) || (g->nx == 1 && closed_we) ? 1 : 2;
}

/* dims 1: the channel formula along the grid's long axis (y when the grid is one column wide, else x);
 * dims 2: the plane's. An open or level edge across a one-cell-wide grid moves its ghost cell, a wave
 * across the channel, so such grids need the plane's limit (sw_model_dims says which). */
static double max_frequency_for(const sw_layout *layout, const sw_grid *g, double gh, int dims)
{
    if (dims == 1 && g->nx == 1 && g->ny > 1)
        return layout->max_frequency(gh, g->dy_m, g->dx_m, 1);
    if (dims == 1)
        return layout->max_frequency(gh, g->dx_m, g->dy_m, 1);
    return layout->max_frequency(gh, g->dx_m, g->dy_m, 2);
}

static double deepest(const sw_grid *g, const double *depth_m, double min_depth_m)
{
    double h_max = 0.0;
    for (size_t k = 0; k < sw_grid_cells(g); k++)
        if (depth_m[k] >= min_depth_m && depth_m[k] > h_max)
            h_max = depth_m[k];
    return h_max;
}

/* The smallest cos(latitude) a point of grid row j (-1 .. ny) reaches: over its centres and its south and
 * north face lines (the layouts put velocities on all three); 1 on a projected grid. */
static double row_cos_min(const sw_grid *g, ptrdiff_t j)
{
    const double ys = g->y0_m + (double)j * g->dy_m;
    return fmin(sw_grid_cos_lat(g, ys + 0.5 * g->dy_m), fmin(sw_grid_cos_lat(g, ys), sw_grid_cos_lat(g, ys + g->dy_m)));
}

double sw_model_dt_limit_row(const sw_layout *layout, const sw_grid *g, const double *depth_m, double min_depth_m,
                             double gravity_ms2, int dims, size_t *row)
{
    if (row)
        *row = 0;
    if (!sw_grid_geographic(g)) {
        double h_max = deepest(g, depth_m, min_depth_m);
        return h_max > 0.0 ? 2.0 / max_frequency_for(layout, g, gravity_ms2 * h_max, dims) : 0.0;
    }
    /* on the sphere each row has its own cell width: the limit is the least over rows of the limit for
     * the row's deepest water on its narrowest width */
    double best = 0.0;
    for (size_t j = 0; j < g->ny; j++) {
        double h = 0.0;
        for (size_t i = 0; i < g->nx; i++) {
            const double d = depth_m[j * g->nx + i];
            if (d >= min_depth_m && d > h)
                h = d;
        }
        if (h <= 0.0)
            continue;
        sw_grid narrow = *g;
        narrow.dx_m = g->dx_m * row_cos_min(g, (ptrdiff_t)j);
        const double dt = 2.0 / max_frequency_for(layout, &narrow, gravity_ms2 * h, dims);
        if (best == 0.0 || dt < best) {
            best = dt;
            if (row)
                *row = j;
        }
    }
    return best;
}

double sw_model_dt_limit(const sw_layout *layout, const sw_grid *g, const double *depth_m,
                         double min_depth_m, double gravity_ms2, int dims)
{
    return sw_model_dt_limit_row(layout, g, depth_m, min_depth_m, gravity_ms2, dims, NULL);
}

double sw_model_courant(const sw_grid *g, double h_max_m, double gravity_ms2, double dt_s)
{
    const double dx = g->dx_m * sw_grid_cos_min(g);
    double d = dx < g->dy_m ? dx : g->dy_m;
    return sqrt(gravity_ms2 * h_max_m) * dt_s / d;
}

/* Refreshes the halo of padded field f beyond periodic edges: the cells of the opposite side (rows
 * after columns, so that the corners follow too). For set-up; the stepper keeps the halo during steps. */
static void wrap_halo_bytes(const sw_model *m, void *f, size_t size)
{
    const size_t nx = m->grid.nx, ny = m->grid.ny, s = m->stride;
    char *b = f;
    if (m->edges[SW_WEST] == SW_EDGE_PERIODIC)
        for (size_t j = 0; j < ny + 2; j++) {
            memcpy(b + j * s * size, b + (j * s + nx) * size, size);
            memcpy(b + (j * s + nx + 1) * size, b + (j * s + 1) * size, size);
        }
    if (m->edges[SW_SOUTH] == SW_EDGE_PERIODIC) {
        memcpy(b, b + ny * s * size, s * size);
        memcpy(b + (ny + 1) * s * size, b + s * size, s * size);
    }
}

static void wrap_halo(sw_model *m, void *f)
{
    wrap_halo_bytes(m, f, sw_precision_bytes(m->precision));
}

/* Every ghost elevation at the fixed point of its update (sw_edge_cell) for the present inner
 * elevation: eta_g = keep eta_g + take eta_in + level_gain L solved for eta_g, i.e.
 * (take eta_in + level_gain L) / (1 - keep), what the ghost holds once the inner cell has been still long
 * enough. Open edges (keep + take = 1): the inner
 * value; level edges (keep = 0): take eta_in, the mirror -eta_in; a ghost its layout moves by a rule
 * of its own (keep = 1, no fixed point): left as it is. */
static void ghosts_at_rest(sw_model *m)
{
    for (size_t q = 0; q < m->n_edge; q++) {
        const sw_edge_cell *oc = &m->edge[q];
        if (oc->keep != 1)
            sw_model_put(m, m->view.eta, oc->ghost, oc->take / (1 - oc->keep) * sw_model_get(m, m->view.eta, oc->inner)
                                                        + oc->level_gain * m->edge_level / (1 - oc->keep));
    }
    wrap_halo(m, m->view.eta);
}

/* Makes the new state (eta_0 in place, u = v = 0, ghosts as allocated) the state at rest at t = 0.
 *
 * Forward-backward stepping keeps the velocities half a step ahead: a step makes
 *     eta^{n+1} = eta^n - dt D(h u^{n+1/2}),   then   u^{n+3/2} = u^{n+1/2} - g dt G eta^{n+1},
 * so after n steps the model holds eta at t_n and u at t_n + dt/2. Water at rest at t = 0 has moved by
 * t = dt/2, to second order, to u^{1/2} = -(g dt / 2) G eta_0: one forward half momentum step. Leaving
 * u^{1/2} = 0 instead starts the water at rest at t = dt/2: a mode with cos(theta) = 1 - p^2/2 then
 * follows eta_n = eta_0 cos((n - 1/2) theta) / cos(theta/2) and every series lags by dt/2 (a first-order
 * error in time); with the half step eta_1 = eta_0 - dt D(h u^{1/2}) = eta_0 (1 - p^2/2) = eta_0 cos(theta),
 * and the two-step recursion eta_{n+1} + eta_{n-1} = (2 - p^2) eta_n gives eta_n = eta_0 cos(n theta)
 * exactly [derived].
 *
 * Done through the layout's own step, run once with dt/2 while u = v = 0: the continuity half changes
 * nothing (every flux is 0), the momentum half is the half step with the layout's own gradient, walls,
 * flux depths and edges. The ghost cells first take their state at rest (ghosts_at_rest) and are held
 * there during that step (keep = 1, take = 0): their updates are time steps of their own and the
 * elevation does not move. Their velocity rule is switched off too (vel = 0): for an open edge it is
 * the outgoing wave's velocity, which would set the water beyond the edge in motion at t = 0; a
 * mirrored velocity (level edge, mirror = 1) follows the half step like any other. The coefficients
 * are restored afterwards, the ghosts set at rest again (a layout's own ghost rule may have run), and
 * the clock stays at step 0, t = 0 (the step does not tick).
 * With initial velocities (cfg->u0_ms, v0_ms) the same half step gives u^{1/2} = u_0 + (dt/2) u_t(0) to
 * second order, rotation and friction included; its continuity half would move eta by
 * -(dt/2) D(h u_0), so eta is put back as it was at t = 0 afterwards (the momentum half saw that moved
 * eta: an O(dt^2) change of u^{1/2}, within the scheme's second order). SW_OK, or SW_ERR_NOMEM. */
static sw_status start_at_rest(sw_model *m, sw_error *err)
{
    sw_edge_cell *saved = malloc((m->n_edge ? m->n_edge : 1) * sizeof *saved);
    if (!saved)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory starting the model at rest");
    if (m->n_edge)
        memcpy(saved, m->edge, m->n_edge * sizeof *saved);
    ghosts_at_rest(m);
    for (size_t q = 0; q < m->n_edge; q++) {
        m->edge[q].keep = 1;
        m->edge[q].take = 0;
        m->edge[q].vel = 0;
        m->edge[q].level_gain = 0;
    }
    void *eta0 = NULL;
    const size_t bytes = m->n_pad * sw_precision_bytes(m->precision);
    if (m->moving) {   /* the half step's continuity would move eta: keep t = 0's */
        eta0 = malloc(bytes);
        if (!eta0) {
            free(saved);
            return sw_fail(err, SW_ERR_NOMEM, "out of memory starting the model");
        }
        memcpy(eta0, m->view.eta, bytes);
    }
    m->view.dt_s = 0.5 * m->dt;
    step_flushed(m);
    m->view.dt_s = m->dt;
    if (eta0) {
        memcpy(m->view.eta, eta0, bytes);
        free(eta0);
    }
    if (m->n_edge)
        memcpy(m->edge, saved, m->n_edge * sizeof *saved);
    free(saved);
    ghosts_at_rest(m);
    m->steps = 0;
    m->time = 0.0;
    return SW_OK;
}

static void observe_nothing(void *ctx, const sw_model *m, size_t j, double time_s, const sw_row_values *pre)
{
    (void)pre;
    (void)ctx;
    (void)m;
    (void)j;
    (void)time_s;
}

static sw_status sort_edges_by_row(sw_model *m, sw_error *err);

/* The layout's initial velocities from centre values (either may be NULL: 0 there). SW_OK or
 * SW_ERR_NOMEM. */
static sw_status initial_velocity(sw_model *m, sw_prep *prep, const double *u0, const double *v0, sw_error *err)
{
    const size_t n = sw_grid_cells(&m->grid);
    double *zero = (!u0 || !v0) ? calloc(n, sizeof *zero) : NULL;
    if ((!u0 || !v0) && !zero)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for the initial velocities");
    m->kernels->initial_velocity(prep, u0 ? u0 : zero, v0 ? v0 : zero);
    free(zero);
    m->moving = 1;
    return SW_OK;
}

/* The configuration's faults that are the caller's (not the scenario's: setup.c checks those with
 * line numbers first), or SW_OK. */
static sw_status check_config(const sw_model_config *cfg, sw_error *err)
{
    const sw_grid *g = &cfg->grid;
    if (!cfg->layout || g->nx == 0 || g->ny == 0 || !(g->dx_m > 0) || !(g->dy_m > 0) || !(cfg->dt_s > 0)
        || !(cfg->gravity_ms2 > 0) || !(cfg->min_depth_m > 0))
        return sw_fail(err, SW_ERR_USAGE, "model: invalid configuration (layout, grid, dt, g or min_depth)");
    if (sw_grid_geographic(g)) {
        const double lim = SW_GRID_POLE_LIMIT_DEG * 3.14159265358979323846 / 180.0;
        if (!(g->radius_m > 0) || !isfinite(g->radius_m))
            return sw_fail(err, SW_ERR_USAGE, "model: a geographic grid needs a positive sphere radius");
        if (!(fabs(g->y0_m - g->dy_m) / g->radius_m <= lim && fabs(g->y0_m + (double)(g->ny + 1) * g->dy_m) / g->radius_m <= lim))
            return sw_fail(err, SW_ERR_RANGE, "model: the geographic grid reaches within %g degrees of a pole "
                           "(its halo rows must stay within +-%g degrees: cos(latitude) goes to 0 there)",
                           90.0 - SW_GRID_POLE_LIMIT_DEG, SW_GRID_POLE_LIMIT_DEG);
    } else if (g->kind != SW_GRID_PROJECTED)
        return sw_fail(err, SW_ERR_USAGE, "model: grid kind %d is not 0 (projected) or 1 (geographic)", (int)g->kind);
    if ((unsigned)cfg->precision >= SW_PRECISIONS || !cfg->layout->kernels[cfg->precision])
        return sw_fail(err, SW_ERR_USAGE, "model: precision %d is not one of 0 (double), 1 (single)",
                       (int)cfg->precision);
    const sw_terms_config *t = &cfg->terms;
    if ((unsigned)t->rotation > SW_ROTATION_SPHERE || (unsigned)t->friction > SW_FRICTION_MANNING)
        return sw_fail(err, SW_ERR_USAGE, "model: unknown rotation (%d) or friction (%d) kind", (int)t->rotation,
                       (int)t->friction);
    if ((t->rotation == SW_ROTATION_SPHERE) != sw_grid_geographic(g) && t->rotation != SW_ROTATION_NONE)
        return sw_fail(err, SW_ERR_USAGE, "model: rotation on the sphere goes with a geographic grid, and only there "
                       "(f-plane and beta-plane: projected grids)");
    if (t->rotation != SW_ROTATION_NONE && !(isfinite(t->f0_s) && isfinite(t->beta_ms) && isfinite(t->y_ref_m)))
        return sw_fail(err, SW_ERR_USAGE, "model: the Coriolis parameter, beta and y_ref must be finite");
    if ((t->friction == SW_FRICTION_LINEAR && !(t->friction_rate_ms > 0 && isfinite(t->friction_rate_ms)))
        || (t->friction == SW_FRICTION_QUADRATIC && !(t->drag > 0 && isfinite(t->drag)))
        || (t->friction == SW_FRICTION_MANNING && !(t->manning_n > 0 && isfinite(t->manning_n))))
        return sw_fail(err, SW_ERR_USAGE, "model: the %s friction coefficient must be positive and finite",
                       sw_friction_name(t->friction));
    for (int e = 0; e < 4; e++)
        if ((unsigned)cfg->edges[e] > SW_EDGE_PERIODIC)
            return sw_fail(err, SW_ERR_USAGE, "model: edge %d has kind %d, not one of 0 .. 3", e, (int)cfg->edges[e]);
    if ((cfg->edges[SW_WEST] == SW_EDGE_PERIODIC) != (cfg->edges[SW_EAST] == SW_EDGE_PERIODIC)
        || (cfg->edges[SW_SOUTH] == SW_EDGE_PERIODIC) != (cfg->edges[SW_NORTH] == SW_EDGE_PERIODIC))
        return sw_fail(err, SW_ERR_RANGE, "model: a periodic edge needs the opposite edge periodic too");
    if (cfg->layout->checkerboard && ((cfg->edges[SW_WEST] == SW_EDGE_PERIODIC && g->nx % 2)
                                      || (cfg->edges[SW_SOUTH] == SW_EDGE_PERIODIC && g->ny % 2)))
        return sw_fail(err, SW_ERR_RANGE, "the %s layout's checkerboard needs an even number of cells between "
                       "periodic edges (nx = %zu, ny = %zu)", cfg->layout->name, g->nx, g->ny);
    return SW_OK;
}

/* The ghost list of the open and level edges: one halo cell beyond each water cell on such an edge,
 * with the shared coefficients (stage.h, sw_edge_cell); r uses the cell sizes dx, dy. */
static sw_status build_edges(sw_model *m, sw_error *err)
{
    const size_t nx = m->grid.nx, ny = m->grid.ny;
    size_t cap = 0;
    for (int e = 0; e < 4; e++)
        if (m->edges[e] == SW_EDGE_OPEN || m->edges[e] == SW_EDGE_LEVEL)
            cap += (e == SW_SOUTH || e == SW_NORTH) ? nx : ny;
    m->n_edge = 0;
    m->edge_row = calloc(ny + 3, sizeof *m->edge_row);
    m->edge = calloc(cap ? cap : 1, sizeof *m->edge);
    if (!m->edge || !m->edge_row)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory allocating edge cells");

    for (int e = 0; e < 4; e++) {
        if (m->edges[e] != SW_EDGE_OPEN && m->edges[e] != SW_EDGE_LEVEL)
            continue;
        int along_x = (e == SW_SOUTH || e == SW_NORTH);
        size_t n = along_x ? nx : ny;
        for (size_t t = 0; t < n; t++) {
            size_t i = along_x ? t : (e == SW_WEST ? 0 : nx - 1);
            size_t j = along_x ? (e == SW_SOUTH ? 0 : ny - 1) : t;
            if (!m->wet[j * nx + i])
                continue;
            size_t inner = sw_pidx(m, i, j);
            size_t ghost = e == SW_WEST ? inner - 1 : e == SW_EAST ? inner + 1
                         : e == SW_SOUTH ? inner - m->stride : inner + m->stride;
            double h = sw_model_get(m, m->view.h, inner);
            double c = sqrt(m->g * h);
            double r = c * m->dt / (along_x ? m->grid.dy_m : m->grid.dx_m * m->view.cos_c[j + 1]);
            double sign = (e == SW_EAST || e == SW_NORTH) ? 1 : -1;
            int open = m->edges[e] == SW_EDGE_OPEN;
            sw_edge_cell *oc = &m->edge[m->n_edge++];
            oc->ghost = ghost;
            oc->inner = inner;
            oc->keep = open ? 1 / (1 + r) : 0;
            oc->take = open ? r / (1 + r) : -1;
            oc->vel = open ? sign * c / h : 0;
            oc->mirror = open ? 0 : 1;
            oc->normal_x = (unsigned char)!along_x;
            oc->kind = (unsigned char)m->edges[e];
        }
    }
    return SW_OK;
}

/* The Coriolis parameter at the centres and on the north-face line of every padded row (terms.h), and
 * for quadratic friction the drag coefficient at every velocity point that flows: Cd, or with Manning's
 * n, g n^2 / h^(1/3) on the depth the point carries. After prepare (it reads hx, hy). */
static sw_status build_terms(sw_model *m, sw_error *err)
{
    const sw_terms_config *c = &m->terms_cfg;
    const sw_grid *g = &m->grid;
    for (size_t j = 0; j < g->ny + 2; j++) {
        const double yc = g->y0_m + ((double)j - 0.5) * g->dy_m, yf = g->y0_m + (double)j * g->dy_m;
        m->f_rows[j] = sw_terms_f_at(c, yc, g->radius_m);
        m->f_rows[g->ny + 2 + j] = sw_terms_f_at(c, yf, g->radius_m);
    }
    m->terms.friction_rate_ms = c->friction == SW_FRICTION_LINEAR ? c->friction_rate_ms : 0;
    if (c->surface) {
        m->surface = alloc_field(4 * (g->ny + 2), m->stride, sizeof(float));
        m->surface_scratch = alloc_field(3 * (g->ny + 2), m->stride, sw_precision_bytes(m->precision));
        if (!m->surface || !m->surface_scratch)
            return sw_fail(err, SW_ERR_NOMEM, "out of memory for the surface forcing (%zu MB)",
                           (m->n_pad * (4 * sizeof(float) + 3 * sw_precision_bytes(m->precision))) >> 20);
        for (int q = 0; q < 4; q++)
            m->slab[q / 2][q % 2] = m->surface + (size_t)q * m->n_pad;
        m->edge_heads = calloc(2 * (m->n_edge ? m->n_edge : 1), sizeof *m->edge_heads);
        if (!m->edge_heads)
            return sw_fail(err, SW_ERR_NOMEM, "out of memory for the surface forcing's edge heads");
        m->edge_slab[0] = m->edge_heads;
        m->edge_slab[1] = m->edge_heads + (m->n_edge ? m->n_edge : 1);
        sw_model_surface_shift(m);   /* only sets the views */
        sw_model_surface_shift(m);
        m->surface_build = m->precision == SW_SINGLE ? sw_surface_build_f32 : sw_surface_build_f64;
    }
    if (!sw_terms_variant_drags(sw_terms_variant_of(c)))
        return SW_OK;
    const size_t size = sw_precision_bytes(m->precision);
    m->drag = calloc(2 * m->n_pad, size);
    if (!m->drag)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for the drag coefficients (%zu MB)",
                       (2 * m->n_pad * size) >> 20);
    void *dx = m->drag, *dy = (char *)m->drag + m->n_pad * size;
    for (size_t k = 0; k < m->n_pad; k++)
        for (int q = 0; q < 2; q++) {
            /* the water depth at the point: hx, or on transport-weighted layouts hx f = hx / share */
            const uint8_t *share = q ? m->terms.share_y : m->terms.share_x;   /* 3 / f */
            double h = sw_model_get(m, q ? m->view.hy : m->view.hx, k);
            if (h > 0 && share)
                h = share[k] > 0 ? h * 3.0 / share[k] : 0;
            if (h > 0)
                sw_model_put(m, q ? dy : dx, k,
                             c->friction == SW_FRICTION_QUADRATIC ? c->drag : m->g * c->manning_n * c->manning_n / cbrt(h));
        }
    m->terms.drag_x = dx;
    m->terms.drag_y = dy;
    return SW_OK;
}

/* The flags of sw_terms.share_mixed_x and _y (terms.h): a segment is mixed when one of its velocity
 * points flows with a share code other than open water's. Where a point does not flow (H = 0) its
 * kernel keeps 0 whatever the code, so the open-water code gives the same bits there. */
static sw_status build_share_segments(sw_model *m, sw_error *err)
{
    const size_t rows = m->grid.ny + 2, nseg = (m->stride + SW_SHARE_SEG - 1) / SW_SHARE_SEG;
    m->share_mixed = calloc(2 * rows * nseg, 1);
    if (!m->share_mixed)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for the water fractions' segment flags");
    for (int q = 0; q < 2; q++) {
        const uint8_t *share = q ? m->terms.share_y : m->terms.share_x;
        const void *depth = q ? m->view.hy : m->view.hx;
        uint8_t *mixed = m->share_mixed + (size_t)q * rows * nseg;
        for (size_t j = 0; j < rows; j++)
            for (size_t i = 0; i < m->stride; i++) {
                const size_t k = j * m->stride + i;
                if (share[k] != SW_SHARE_OPEN && sw_model_get(m, depth, k) > 0)
                    mixed[j * nseg + i / SW_SHARE_SEG] = 1;
            }
    }
    m->terms.share_mixed_x = m->share_mixed;
    m->terms.share_mixed_y = m->share_mixed + rows * nseg;
    m->terms.n_share_seg = nseg;
    return SW_OK;
}

sw_status sw_model_create(const sw_model_config *cfg, sw_model **out, sw_error *err)
{
    *out = NULL;
    sw_status rc = check_config(cfg, err);
    if (rc != SW_OK)
        return rc;
    const sw_grid *g = &cfg->grid;
    double h_max = deepest(g, cfg->depth_m, cfg->min_depth_m);
    if (h_max <= 0.0)
        return sw_fail(err, SW_ERR_RANGE, "the domain has no water: every cell is shallower than min_depth = %g m",
                       cfg->min_depth_m);
    const double f_max = sw_terms_f_max(&cfg->terms, g->y0_m, g->y0_m + (double)g->ny * g->dy_m, g->radius_m);
    double dt_max = sw_terms_dt_limit(sw_model_dt_limit(cfg->layout, g, cfg->depth_m, cfg->min_depth_m,
                                                        cfg->gravity_ms2, sw_model_dims(g, cfg->edges)), f_max);
    if (cfg->dt_s > dt_max * (1.0 + 1e-12) && !cfg->allow_unstable) {
        double c = sw_model_courant(g, h_max, cfg->gravity_ms2, cfg->dt_s);
        double c_max = sw_model_courant(g, h_max, cfg->gravity_ms2, dt_max);
        return sw_fail(err, SW_ERR_UNSTABLE,
                       "dt = %g s gives Courant number %.4g, beyond the %s-layout limit %.4g%s "
                       "(dt <= %.4g s at the deepest water, %g m)",
                       cfg->dt_s, c, cfg->layout->name, c_max, f_max > 0 ? " with rotation" : "", dt_max, h_max);
    }

    sw_model *m = aligned_alloc(SW_ALIGN, round_up(sizeof *m, SW_ALIGN));   /* the wavefront's counters: lines */
    if (!m)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory allocating the model");
    memset(m, 0, sizeof *m);
    m->layout = cfg->layout;
    m->precision = cfg->precision;
    m->kernels = cfg->layout->kernels[cfg->precision];
    m->step = cfg->precision == SW_SINGLE ? sw_stepper_step_f32 : sw_stepper_step_f64;
    m->steps_fn = cfg->precision == SW_SINGLE ? sw_stepper_steps_f32 : sw_stepper_steps_f64;
    m->observe = observe_nothing;
    m->grid = *g;
    m->g = cfg->gravity_ms2;
    m->dt = cfg->dt_s;
    m->min_depth = cfg->min_depth_m;
    m->h_max = h_max;
    memcpy(m->edges, cfg->edges, sizeof m->edges);
    m->terms_cfg = cfg->terms;
    m->edge_level = cfg->edge_level_m;
    const size_t size = sw_precision_bytes(cfg->precision);
    m->stride = stride_for(g, size);
    m->n_pad = m->stride * (g->ny + 2);
    m->share_p0 = 1;
    m->share_p1 = g->ny;

    sw_view *v = &m->view;
    *v = (sw_view){.nx = g->nx, .ny = g->ny, .stride = m->stride, .dx_m = g->dx_m, .dy_m = g->dy_m, .g = m->g,
                   .dt_s = m->dt, .terms = &m->terms};
    memcpy(v->edges, m->edges, sizeof v->edges);
    v->eta = alloc_field(g->ny + 2, m->stride, size);
    v->u = alloc_field(g->ny + 2, m->stride, size);
    v->v = alloc_field(g->ny + 2, m->stride, size);
    v->h = alloc_field(g->ny + 2, m->stride, size);
    v->hx = alloc_field(g->ny + 2, m->stride, size);
    v->hy = alloc_field(g->ny + 2, m->stride, size);
    m->wet = calloc(sw_grid_cells(g), 1);
    m->f_rows = calloc(2 * (g->ny + 2), sizeof *m->f_rows);
    m->metric = calloc(2 * (g->ny + 2), sizeof *m->metric);
    if (!v->eta || !v->u || !v->v || !v->h || !v->hx || !v->hy || !m->wet || !m->f_rows || !m->metric) {
        sw_model_free(m);
        return sw_fail(err, SW_ERR_NOMEM, "out of memory: the model needs %zu MB for a %zu x %zu grid in %s precision",
                       sw_model_bytes_for(g, cfg->precision, cfg->layout, &cfg->terms) >> 20, g->nx, g->ny, sw_precision_name(cfg->precision));
    }
    m->terms.f_centre = m->f_rows;
    m->terms.f_face = m->f_rows + g->ny + 2;
    for (size_t j = 0; j < g->ny + 2; j++) {   /* padded row j holds grid row j - 1 */
        m->metric[j] = sw_grid_cos_lat(g, g->y0_m + ((double)j - 0.5) * g->dy_m);
        m->metric[g->ny + 2 + j] = sw_grid_cos_lat(g, g->y0_m + (double)j * g->dy_m);
    }
    v->cos_c = m->metric;
    v->cos_f = m->metric + g->ny + 2;

    for (size_t j = 0; j < g->ny; j++)
        for (size_t i = 0; i < g->nx; i++) {
            size_t k = j * g->nx + i;
            double d = cfg->depth_m[k];
            if (d >= cfg->min_depth_m) {
                m->wet[k] = 1;
                sw_model_put(m, v->h, sw_pidx(m, i, j), d);
                sw_model_put(m, v->eta, sw_pidx(m, i, j), cfg->eta0_m ? cfg->eta0_m[k] : 0);
            }
        }
    wrap_halo(m, v->h);

    rc = build_edges(m, err);
    sw_prep prep = {.f = *v, .edge = m->edge, .n_edge = m->n_edge};
    if (rc == SW_OK) {
        if (m->layout->transport_weighted && sw_terms_variant_of(&m->terms_cfg) != SW_TERMS_PLAIN) {
            m->share = alloc_field(2 * (g->ny + 2), m->stride, 1);
            if (!m->share)
                rc = sw_fail(err, SW_ERR_NOMEM, "out of memory for the velocity points' water fractions");
            else {
                prep.share_x = m->share;
                prep.share_y = m->share + m->n_pad;
            }
        }
    }
    if (rc == SW_OK) {
        m->kernels->prepare(&prep);
        for (size_t q = 0; q < m->n_edge; q++) {   /* what prepare left: a level ghost mirrors eta - L */
            sw_edge_cell *oc = &m->edge[q];
            oc->level_gain = oc->kind == SW_EDGE_LEVEL && oc->keep == 0 ? (float)(1 - oc->take) : 0.0f;
        }
        if (cfg->u0_ms || cfg->v0_ms)
            rc = initial_velocity(m, &prep, cfg->u0_ms, cfg->v0_ms, err);
        wrap_halo(m, v->hx);
        wrap_halo(m, v->hy);
        wrap_halo(m, v->eta);
        wrap_halo(m, v->u);
        wrap_halo(m, v->v);
        if (m->share) {
            wrap_halo_bytes(m, prep.share_x, 1);
            wrap_halo_bytes(m, prep.share_y, 1);
            m->terms.share_x = prep.share_x;
            m->terms.share_y = prep.share_y;
            if (rc == SW_OK)
                rc = build_share_segments(m, err);
        }
        if (rc == SW_OK)
            rc = sort_edges_by_row(m, err);
    }
    if (rc == SW_OK)
        rc = build_terms(m, err);
    if (rc == SW_OK)
        rc = sw_step_plan_build(m->kernels, sw_terms_variant_of(&m->terms_cfg), m->edges, &m->plan, err);
    m->prefetch_rows = m->terms.share_x != NULL || m->surface != NULL;
    if (rc == SW_OK)
        rc = start_at_rest(m, err);
    if (rc != SW_OK) {
        sw_model_free(m);
        return rc;
    }
    *out = m;
    return SW_OK;
}

void sw_model_free(sw_model *m)
{
    if (!m)
        return;
    free(m->view.eta);
    free(m->view.u);
    free(m->view.v);
    free(m->view.h);
    free(m->view.hx);
    free(m->view.hy);
    free(m->wet);
    free(m->f_rows);
    free(m->metric);
    free(m->drag);
    free(m->share);
    free(m->share_mixed);
    free(m->surface);
    free(m->surface_scratch);
    free(m->edge_heads);
    free(m->edge);
    free(m->edge_row);
    free(m->obs_buf);
    free(m);
}

/* Orders m->edge by the padded row of the inner cell (a stable counting sort) and fills m->edge_row. */
static sw_status sort_edges_by_row(sw_model *m, sw_error *err)
{
    const size_t rows = m->grid.ny + 2;
    sw_edge_cell *sorted = malloc((m->n_edge ? m->n_edge : 1) * sizeof *sorted);
    if (!sorted)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory sorting edge cells");
    for (size_t q = 0; q < m->n_edge; q++)
        m->edge_row[m->edge[q].inner / m->stride + 1]++;
    for (size_t j = 1; j <= rows; j++)
        m->edge_row[j] += m->edge_row[j - 1];
    size_t *next = calloc(rows, sizeof *next);
    if (!next) {
        free(sorted);
        return sw_fail(err, SW_ERR_NOMEM, "out of memory sorting edge cells");
    }
    memcpy(next, m->edge_row, rows * sizeof *next);
    for (size_t q = 0; q < m->n_edge; q++)
        sorted[next[m->edge[q].inner / m->stride]++] = m->edge[q];
    free(next);
    free(m->edge);
    m->edge = sorted;
    return SW_OK;
}

void sw_model_step(sw_model *m) { step_flushed(m); }

/* sw_model_wave_halo from a plan. */
static size_t wave_halo_of(const sw_step_plan *pl, int k)
{
    return (size_t)k * (size_t)pl->n_stages * (size_t)pl->wave_reach + (size_t)pl->wave_reach + 1;
}

size_t sw_model_wave_halo(const sw_model *m, int k) { return wave_halo_of(&m->plan, k); }

const char *sw_model_wave_refusal(const sw_model *m)
{
    if (m->plan.periodic_y)
        return "periodic south and north edges: a step's first rows need the step before's last";
    if (m->halo && wave_halo_of(&m->plan, 2) > m->share_reach)
        return "the split's bands are too thin for the halo of two steps";
    return NULL;
}

static double clamp01(double w) { return w < 0 ? 0 : w > 1 ? 1 : w; }

/* The views of a wavefront's k steps (model_impl.h): m->view with each step's terms, weight and level
 * (per_step NULL: the model's own for every step). By one thread. */
static void wave_views(sw_model *m, int k, const sw_step_forcing *per_step)
{
    for (int q = 0; q < k; q++) {
        m->wave_terms[q] = m->terms;
        if (per_step)
            m->wave_terms[q].surface_w = clamp01(per_step[q].surface_w);
        m->wave_view[q] = m->view;
        m->wave_view[q].terms = &m->wave_terms[q];
        m->wave_level[q] = per_step ? per_step[q].edge_level_m : m->edge_level;
    }
}

void sw_model_steps_forced(sw_model *m, int k, const sw_step_forcing *per_step)
{
    if (k > 1 && !sw_model_wave_refusal(m) && (!m->halo || wave_halo_of(&m->plan, k) <= m->share_reach)) {
        SW_OMP(single)
        wave_views(m, k, per_step);   /* the end of `single` publishes them */
        const unsigned int saved = sw_fp_flush();
        m->steps_fn(m, k);
        sw_fp_restore(saved);
    } else {
        for (int q = 0; q < k; q++) {
            if (per_step) {
                SW_OMP(single)
                {
                    sw_model_surface_weight(m, per_step[q].surface_w);
                    sw_model_set_edge_level(m, per_step[q].edge_level_m);
                }
            }
            step_flushed(m);
            SW_OMP(single)
            sw_model_tick(m);
        }
    }
    if (per_step) {
        SW_OMP(single)
        {
            sw_model_surface_weight(m, per_step[k - 1].surface_w);
            sw_model_set_edge_level(m, per_step[k - 1].edge_level_m);
        }
    }
}

void sw_model_steps(sw_model *m, int k) { sw_model_steps_forced(m, k, NULL); }

int sw_model_wave_steps_max(const sw_layout *layout, sw_precision precision, const sw_edge_kind edges[4],
                            const sw_terms_config *terms, size_t band_rows)
{
    sw_step_plan plan;
    if (edges[SW_SOUTH] == SW_EDGE_PERIODIC
        || sw_step_plan_build(layout->kernels[precision], sw_terms_variant_of(terms), edges, &plan, NULL) != SW_OK)
        return 1;
    int k = SW_WAVE_MAX_STEPS;
    while (k > 1 && band_rows && wave_halo_of(&plan, k) > band_rows)
        k--;
    return k;
}

int sw_model_wave_steps_for(const sw_layout *layout, sw_precision precision, const sw_grid *g,
                            const sw_edge_kind edges[4], const sw_terms_config *terms, int threads,
                            size_t cache_bytes, size_t band_rows, size_t *window_bytes)
{
    *window_bytes = 0;
    sw_step_plan plan;
    if (edges[SW_SOUTH] == SW_EDGE_PERIODIC
        || sw_step_plan_build(layout->kernels[precision], sw_terms_variant_of(terms), edges, &plan, NULL) != SW_OK)
        return 1;
    const size_t size = precision == SW_SINGLE ? sizeof(float) : sizeof(double);
    const size_t row = (size_t)layout->stream_values * stride_for(g, size) * size;   /* bytes a row's update touches */
    const size_t gap = (size_t)plan.wave_gap, rows = band_rows ? band_rows : g->ny;
    if (2.0 * (double)sw_model_bytes_for(g, precision, layout, terms) * (double)rows / (double)g->ny <= (double)cache_bytes)
        return 1;   /* the state (a split run's band) stays in cache from one sweep to the next anyway */
    int k = band_rows ? sw_model_wave_steps_max(layout, precision, edges, terms, band_rows) : SW_WAVE_MAX_STEPS;
    while (k > 1 && band_rows && 16 * wave_halo_of(&plan, k) > band_rows)
        k--;   /* a split band computes its sweep halo on both sides too: at most an eighth more rows */
    while (k > 1 && (size_t)k * gap * row > cache_bytes / 2)
        k--;
    if (threads > 1 && k >= 2 * threads)
        k -= k % threads;   /* every thread of the pipeline as many steps */
    if (k < 2 || (size_t)k * gap * 4 > rows)   /* too few rows to fill the pipeline */
        return 1;
    *window_bytes = (size_t)k * gap * row;
    return k;
}

int sw_model_wave_auto(const sw_model *m, int threads, size_t cache_bytes, size_t *window_bytes)
{
    *window_bytes = 0;
    if (sw_model_wave_refusal(m))
        return 1;
    return sw_model_wave_steps_for(m->layout, m->precision, &m->grid, m->edges, &m->terms_cfg, threads, cache_bytes,
                                   m->halo ? m->share_reach : 0, window_bytes);
}

void sw_model_set_observer(sw_model *m, sw_row_observer fn, void *ctx)
{
    m->observe = fn ? fn : observe_nothing;
    m->observe_ctx = fn ? ctx : NULL;
    m->observed = fn != NULL;
    free(m->obs_buf);
    m->obs_buf = NULL;
    m->obs_threads = 0;
    if (fn) {
        const size_t nx = m->grid.nx;
        m->obs_len = sw_row_values_len(nx);
        m->obs_len = (m->obs_len + 15) / 16 * 16;   /* whole 64-byte lines: threads share none */
        int n = omp_get_max_threads();
        m->obs_buf = aligned_alloc(SW_ALIGN, (size_t)n * m->obs_len * sizeof(float));
        m->obs_threads = m->obs_buf ? n : 0;   /* none: the step hands no values, the observer makes them */
    }
}

double sw_model_energy(const sw_model *m) { return m->kernels->energy(&m->view); }

void sw_model_tick(sw_model *m)
{
    m->steps++;
    m->time = (double)m->steps * m->dt;
}

void sw_model_centre_row(const sw_model *m, size_t j, double *eta, double *u, double *v)
{
    m->kernels->centre_row(&m->view, j, eta, u, v);
}

void sw_model_centre_row_f32(const sw_model *m, size_t j, float *eta, float *u, float *v)
{
    m->kernels->centre_row_f32(&m->view, j, eta, u, v);
}

double sw_model_eta(const sw_model *m, size_t i, size_t j) { return sw_model_get(m, m->view.eta, sw_pidx(m, i, j)); }

double sw_model_eta_centre(const sw_model *m, size_t i, size_t j)
{
    return m->kernels->eta_at ? m->kernels->eta_at(&m->view, i, j) : sw_model_eta(m, i, j);
}

void sw_model_set_eta(sw_model *m, size_t i, size_t j, double eta_m)
{
    if (m->wet[j * m->grid.nx + i])
        sw_model_put(m, m->view.eta, sw_pidx(m, i, j), eta_m);
}

void sw_model_add_eta(sw_model *m, const double *inc_m)
{
    const size_t nx = m->grid.nx, ny = m->grid.ny;
    const int checker = m->layout->checkerboard;
    SW_OMP(parallel for schedule(static))
    for (size_t j = 0; j < ny; j++)
        for (size_t i = 0; i < nx; i++) {
            const size_t k = j * nx + i;
            if (!m->wet[k] || inc_m[k] == 0 || (checker && (i + j) % 2))
                continue;
            const size_t p = sw_pidx(m, i, j);
            sw_model_put(m, m->view.eta, p, sw_model_get(m, m->view.eta, p) + inc_m[k]);
        }
    wrap_halo_bytes(m, m->view.eta, sw_precision_bytes(m->precision));   /* periodic edges' copies */
}

double sw_model_volume(const sw_model *m)
{
    /* Kahan-Babuska summation so that the sum itself adds no drift worth measuring. */
    double sum = 0.0, comp = 0.0;
    for (size_t j = 0; j < m->grid.ny; j++)
        for (size_t i = 0; i < m->grid.nx; i++) {
            double x = sw_model_get(m, m->view.eta, sw_pidx(m, i, j)) * m->view.cos_c[j + 1];   /* area */
            double t = sum + x;
            comp += fabs(sum) >= fabs(x) ? (sum - t) + x : (x - t) + sum;
            sum = t;
        }
    double per_point = m->layout->eta_cells > 0 ? m->layout->eta_cells : 1;   /* E: each eta point stands for 2 cells */
    return (sum + comp) * per_point * m->grid.dx_m * m->grid.dy_m;
}

const sw_grid *sw_model_grid(const sw_model *m) { return &m->grid; }
const sw_layout *sw_model_layout(const sw_model *m) { return m->layout; }
const unsigned char *sw_model_wet(const sw_model *m) { return m->wet; }
double sw_model_time(const sw_model *m) { return m->time; }
double sw_model_dt(const sw_model *m) { return m->dt; }
double sw_model_h_max(const sw_model *m) { return m->h_max; }
size_t sw_model_bytes(const sw_model *m) { return sw_model_bytes_for(&m->grid, m->precision, m->layout, &m->terms_cfg); }
sw_precision sw_model_precision(const sw_model *m) { return m->precision; }

void sw_model_surface_build(sw_model *m, int slot, sw_surface_row_fn fn, void *ctx)
{
    if (m->surface_build)
        m->surface_build(m, slot & 1, fn, ctx);
}

void sw_model_surface_shift(sw_model *m)
{
    if (!m->surface)
        return;
    for (int q = 0; q < 2; q++) {
        float *t = m->slab[0][q];
        m->slab[0][q] = m->slab[1][q];
        m->slab[1][q] = t;
    }
    float *t = m->edge_slab[0];
    m->edge_slab[0] = m->edge_slab[1];
    m->edge_slab[1] = t;
    m->terms.edge_head[0] = m->edge_slab[0];
    m->terms.edge_head[1] = m->edge_slab[1];
    m->terms.surface_x[0] = m->slab[0][0];
    m->terms.surface_x[1] = m->slab[1][0];
    m->terms.surface_y[0] = m->slab[0][1];
    m->terms.surface_y[1] = m->slab[1][1];
}

void sw_model_surface_weight(sw_model *m, double w) { m->terms.surface_w = clamp01(w); }

void sw_model_set_edge_level(sw_model *m, double level_m) { m->edge_level = level_m; }
double sw_model_edge_level(const sw_model *m) { return m->edge_level; }

size_t sw_model_state_parts(sw_model *m, void **ptr, size_t *bytes)
{
    const size_t field = m->n_pad * sw_precision_bytes(m->precision);
    size_t n = 0;
#define PART(p, b) (ptr[n] = (p), bytes[n] = (b), n++)
    PART(m->view.eta, field);
    PART(m->view.u, field);
    PART(m->view.v, field);
    PART(&m->steps, sizeof m->steps);
    PART(&m->time, sizeof m->time);
    PART(&m->edge_level, sizeof m->edge_level);
    PART(&m->terms.surface_w, sizeof m->terms.surface_w);
    if (m->surface) {
        for (int q = 0; q < 4; q++)
            PART(m->slab[q / 2][q % 2], m->n_pad * sizeof(float));
        for (int q = 0; q < 2; q++)
            PART(m->edge_slab[q], (m->n_edge ? m->n_edge : 1) * sizeof(float));
    }
#undef PART
    return n;
}

/* The larger of reach and the rows r reaches on either side (nothing when r is empty). */
static int reach_of(sw_rows r, int reach)
{
    if (r.lo > r.hi)
        return reach;
    return r.hi > reach ? r.hi : -r.lo > reach ? -r.lo : reach;
}

size_t sw_model_halo_rows(const sw_model *m)
{
    int reach = 1;
    for (int f = 0; f < SW_N_FIELDS; f++) {
        for (int s = 0; s < m->plan.n_stages; s++)
            reach = reach_of(m->plan.stage[s]->reads[f], reach);
        reach = reach_of(m->plan.observes[f], reach);
    }
    return (size_t)reach + 1;   /* + 1: a gauge's bilinear centre values reach one row past its own */
}

sw_status sw_model_set_share(sw_model *m, size_t row0, size_t row1, sw_halo_fn halo, void *ctx, sw_error *err)
{
    const size_t ny = m->grid.ny, h = sw_model_halo_rows(m);
    if (row0 >= row1 || row1 > ny)
        return sw_fail(err, SW_ERR_USAGE, "model: rows %zu .. %zu are not a share of a grid of %zu rows", row0,
                       row1, ny);
    if (row1 - row0 < ny && row1 - row0 < h)
        return sw_fail(err, SW_ERR_USAGE, "model: a share of %zu rows (of %zu) is too thin: the %s layout's "
                       "stencils reach %zu rows, so every share needs at least %zu", row1 - row0, ny,
                       m->layout->name, h, h);
    m->share_p0 = row0 + 1;
    m->share_p1 = row1;
    m->halo = halo;
    m->halo_ctx = ctx;
    m->halo_depth = m->share_reach = h;
    return SW_OK;
}

void sw_model_set_share_overlap(sw_model *m, sw_halo_part_fn start, sw_halo_part_fn poll, sw_halo_part_fn finish)
{
    m->halo_start = start;
    m->halo_poll = start ? poll : NULL;
    m->halo_finish = start ? finish : NULL;
}

size_t sw_model_halo_depth(const sw_model *m) { return m->halo_depth; }

void sw_model_set_share_reach(sw_model *m, size_t rows) { m->share_reach = rows; }

void *sw_model_field_rows(sw_model *m, int k, size_t r, size_t *row_bytes)
{
    const size_t size = sw_precision_bytes(m->precision);
    void *f = k == 0 ? m->view.eta : k == 1 ? m->view.u : m->view.v;
    *row_bytes = m->stride * size;
    return (char *)f + r * m->stride * size;
}

void sw_model_wrap_rows(sw_model *m)
{
    if (m->edges[SW_SOUTH] != SW_EDGE_PERIODIC)
        return;
    const size_t ny = m->grid.ny;
    for (int k = 0; k < 3; k++) {
        size_t rb;
        char *f = sw_model_field_rows(m, k, 0, &rb);
        if (m->share_p0 == 1)
            memcpy(f, f + ny * rb, rb);
        if (m->share_p1 == ny)
            memcpy(f + (ny + 1) * rb, f + rb, rb);
    }
}

void sw_model_velocity_points(const sw_model *m, size_t i, size_t j, double u_xy[2], double v_xy[2])
{
    const sw_grid *g = &m->grid;
    const double xc = sw_grid_xc(g, i), yc = sw_grid_yc(g, j);
    u_xy[0] = xc + m->layout->u_at[0] * g->dx_m;
    u_xy[1] = yc + m->layout->u_at[1] * g->dy_m;
    v_xy[0] = xc + m->layout->v_at[0] * g->dx_m;
    v_xy[1] = yc + m->layout->v_at[1] * g->dy_m;
}
