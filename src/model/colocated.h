/* colocated.h - what the layouts whose u and v share their points and difference across the two
 * neighbouring cells have in common: A, and E on its checkerboard (its eta cells have hx = hy = 0 and
 * stay at rest). Their continuity coefficients, momentum stages, plain and with the terms, their symbols
 * and their energy sum. Included by layout_a.c and layout_e.c, compiled per precision with them.
 *
 * On a geographic grid (sw_view.cos_c: cos(latitude) of each padded row's centres) every point of these
 * layouts, elevation or velocity, sits on a centre row, so one factor per row carries the metric: an
 * x-difference on row j divides by cos_c[j], the y-fluxes h v that continuity differences between rows
 * j - 1 and j + 1 are multiplied by those rows' cos_c and the difference divided by row j's, and sums
 * weight each point by its area, cos_c[j] dx dy (E: twice that). With areas so, G = -D^T still holds, and
 * volume and E* are conserved exactly. u and v of a point share its area, so rotation needs no area ratio.
 * All the factors are exactly 1 on a projected grid, where the arithmetic is bit for bit the plane's.
 */
#ifndef SW_COLOCATED_H
#define SW_COLOCATED_H

#include <complex.h>
#include <math.h>
#include <stddef.h>

#include "base/omp_compat.h"
#include "model/stage.h"

/* Initial velocities: the centre values uc, vc ([ny * nx], m/s), where the point's u (v) flows. */
static inline void sw_colocated_initial_velocity(sw_prep *p, const double *uc, const double *vc)
{
    const sw_view *v = &p->f;
    for (size_t j = 0; j < v->ny; j++)
        for (size_t i = 0; i < v->nx; i++) {
            const size_t k = sw_pad(v, (ptrdiff_t)i, (ptrdiff_t)j), c = j * v->nx + i;
            SW_V(v, u)[k] = SW_V(v, hx)[k] > 0 ? (sw_real)uc[c] : 0;
            SW_V(v, v)[k] = SW_V(v, hy)[k] > 0 ? (sw_real)vc[c] : 0;
        }
}

/* The arrays and continuity coefficients of padded row j (0 .. ny + 1): dt / (2 dx) and dt / (2 dy) over
 * the row's metric cos_c[j], and as wn, ws the metric of the rows north and south (j + 1, j - 1) whose
 * y-fluxes continuity differences (all exactly 1 on a projected grid: the plane's bits). Needs j + 1 and
 * j - 1 to be padded rows (a stage row or a centre row's padded row). */
static inline sw_cells sw_colocated_cells(const sw_view *v, size_t j)
{
    const double m = v->cos_c[j];
    return (sw_cells){SW_V(v, eta), SW_V(v, u), SW_V(v, v), SW_V(v, h), SW_V(v, hx), SW_V(v, hy), v->stride,
                      (sw_real)(0.5 * v->dt_s / (v->dx_m * m)), (sw_real)(0.5 * v->dt_s / (v->dy_m * m)),
                      (sw_real)v->cos_c[j + 1], (sw_real)v->cos_c[j - 1]};
}

/* The new elevation of cell k: continuity from the old velocities (the one formula of a layout's
 * continuity kernels, plain and observed), the y-fluxes weighted by their rows' metric. */
SW_INLINE sw_real sw_colocated_eta_cell(const sw_cells *c, size_t k)
{
    const size_t s = c->s;
    return c->eta[k] - (c->cx * (c->hx[k + 1] * c->u[k + 1] - c->hx[k - 1] * c->u[k - 1])
                        + c->cy * (c->wn * (c->hy[k + s] * c->v[k + s]) - c->ws * (c->hy[k - s] * c->v[k - s])));
}

/* The continuity_observed body of these layouts: stage.h's sw_continuity_observed_loop (the one loop
 * every layout shares) with their continuity formula, sw_colocated_eta_cell, and the layout's centre
 * values. */
SW_INLINE void sw_colocated_observed_loop(const sw_cells *c, size_t k0, size_t f0, size_t jf, size_t nx,
                                          float *restrict buf, sw_centre_cell_fn centre)
{
    sw_continuity_observed_loop(c, k0, f0, jf, nx, buf, sw_colocated_eta_cell, centre);
}

/* g dt / (2 dx cos_c[j]): the x pressure-gradient coefficient of padded row j (its true width). */
static inline sw_real sw_colocated_gx(const sw_view *v, size_t j)
{
    return (sw_real)(0.5 * v->g * v->dt_s / (v->dx_m * v->cos_c[j]));
}

/* Momentum (backward: from the new eta of this row and its two neighbours) on padded row j; a point
 * with hx (hy) = 0 is held at rest. With `forced` the surface forcing's increment is added (stage.h).
 * The x-gradient divides by the row's metric (sw_colocated_gx). */
SW_INLINE void sw_colocated_momentum(const sw_view *v, size_t j, const int forced)
{
    sw_real *restrict u = SW_V(v, u), *restrict vv = SW_V(v, v);
    const sw_real *restrict eta = SW_V(v, eta), *restrict hx = SW_V(v, hx), *restrict hy = SW_V(v, hy);
    const sw_real gx = sw_colocated_gx(v, j), gy = (sw_real)(0.5 * v->g * v->dt_s / v->dy_m);
    const size_t s = v->stride, r = j * s;
    const float *restrict ax0 = forced ? v->terms->surface_x[0] : NULL, *restrict ax1 = forced ? v->terms->surface_x[1] : NULL;
    const float *restrict ay0 = forced ? v->terms->surface_y[0] : NULL, *restrict ay1 = forced ? v->terms->surface_y[1] : NULL;
    const sw_real c0 = (sw_real)(v->dt_s * (1 - v->terms->surface_w)), c1 = (sw_real)(v->dt_s * v->terms->surface_w);
    SW_OMP(simd)
    for (size_t i = r + 1; i <= r + v->nx; i++) {
        u[i] = hx[i] > 0 ? (forced ? u[i] - gx * (eta[i + 1] - eta[i - 1]) + sw_surface_dvel(ax0, ax1, i, c0, c1)
                                   : u[i] - gx * (eta[i + 1] - eta[i - 1])) : 0;
        vv[i] = hy[i] > 0 ? (forced ? vv[i] - gy * (eta[i + s] - eta[i - s]) + sw_surface_dvel(ay0, ay1, i, c0, c1)
                                    : vv[i] - gy * (eta[i + s] - eta[i - s])) : 0;
    }
}

/* Momentum with rotation and friction (terms.h, docs/terms.md): u from the old v at the same point,
 * then v from the new u, F = f dt at the cell centres; where both flow hx = hy, so the pair weight is
 * f h and rotation does no work (u and v of a point stand for the same area, also on the sphere). With
 * `drag` the friction adds Cd |U| dt (old u and v for u, new u and old v for v). */
SW_INLINE void sw_colocated_momentum_terms(const sw_view *v, size_t j, const int drag, const int forced)
{
    sw_real *restrict u = SW_V(v, u), *restrict vv = SW_V(v, v);
    const sw_real *restrict eta = SW_V(v, eta), *restrict hx = SW_V(v, hx), *restrict hy = SW_V(v, hy);
    const sw_real *restrict cdx = drag ? (const sw_real *)v->terms->drag_x : NULL;
    const sw_real *restrict cdy = drag ? (const sw_real *)v->terms->drag_y : NULL;
    const sw_real gx = sw_colocated_gx(v, j), gy = (sw_real)(0.5 * v->g * v->dt_s / v->dy_m);
    const sw_real F = (sw_real)(v->dt_s * v->terms->f_centre[j]);
    const sw_real rho0 = (sw_real)(v->dt_s * v->terms->friction_rate_ms), dtc = (sw_real)v->dt_s;
    const float *restrict ax0 = forced ? v->terms->surface_x[0] : NULL, *restrict ax1 = forced ? v->terms->surface_x[1] : NULL;
    const float *restrict ay0 = forced ? v->terms->surface_y[0] : NULL, *restrict ay1 = forced ? v->terms->surface_y[1] : NULL;
    const sw_real c0 = (sw_real)(v->dt_s * (1 - v->terms->surface_w)), c1 = (sw_real)(v->dt_s * v->terms->surface_w);
    const size_t s = v->stride, r = j * s;
    SW_OMP(simd)
    for (size_t i = r + 1; i <= r + v->nx; i++) {
        const sw_real Hx = hx[i], Hy = hy[i], u0 = u[i], v0 = vv[i];
        sw_real rx = rho0, ry = rho0;
        if (drag)
            rx += dtc * cdx[i] * (sw_real)sqrt(u0 * u0 + v0 * v0);
        const sw_real u1 = forced ? sw_terms_update(u0, Hx, -gx * (eta[i + 1] - eta[i - 1]) + sw_surface_dvel(ax0, ax1, i, c0, c1), 2 * Hx * F * v0, rx)
                                  : sw_terms_update(u0, Hx, -gx * (eta[i + 1] - eta[i - 1]), 2 * Hx * F * v0, rx);
        if (drag)
            ry += dtc * cdy[i] * (sw_real)sqrt(u1 * u1 + v0 * v0);
        u[i] = u1;
        vv[i] = forced ? sw_terms_update(v0, Hy, -gy * (eta[i + s] - eta[i - s]) + sw_surface_dvel(ay0, ay1, i, c0, c1), -2 * Hy * F * u1, ry)
                       : sw_terms_update(v0, Hy, -gy * (eta[i + s] - eta[i - s]), -2 * Hy * F * u1, ry);
    }
}

/* The symbols of the co-located stencil: centred differences over two cells, no averaging. */
#if SW_REAL_BITS == 64   /* precision-free: compiled in the double copy only */
static inline void sw_colocated_symbols(double k, double l, double dx, double dy, sw_symbols *o)
{
    o->div_x = o->grad_x = I * sin(k * dx) / dx;
    o->div_y = o->grad_y = I * sin(l * dy) / dy;
    o->v_at_u = o->u_at_v = 1;   /* co-located */
}
#endif

/* E* (layout.h) per unit of the area a point stands for on the plane (the layout multiplies: A dx dy,
 * E 2 dx dy), with the rotation share (dt/2) f h u v at each point (hx = hy where both flow). Every
 * point's terms are weighted by its row's metric cos_c (its area on the sphere; 1 on a projected grid). */
static inline double sw_colocated_energy_sum(const sw_view *v)
{
    const size_t nx = v->nx, ny = v->ny, s = v->stride;
    const double dx = v->dx_m, dy = v->dy_m, dt = v->dt_s, *cc = v->cos_c;
    const sw_real *eta = SW_V(v, eta), *u = SW_V(v, u), *vv = SW_V(v, v), *hx = SW_V(v, hx), *hy = SW_V(v, hy);
    double pot = 0, kin = 0, cross = 0, rot = 0;
    for (size_t j = 1; j <= ny; j++)
        for (size_t i = j * s + 1; i <= j * s + nx; i++) {
            /* the divergence times the point's area (cos_c[j]) */
            double div = ((double)hx[i + 1] * u[i + 1] - (double)hx[i - 1] * u[i - 1]) / (2 * dx)
                       + (cc[j + 1] * hy[i + s] * vv[i + s] - cc[j - 1] * hy[i - s] * vv[i - s]) / (2 * dy);
            pot += (double)eta[i] * eta[i] * cc[j];
            kin += ((double)hx[i] * u[i] * u[i] + (double)hy[i] * vv[i] * vv[i]) * cc[j];
            cross += eta[i] * div;
            rot += v->terms->f_centre[j] * hx[i] * u[i] * vv[i] * cc[j];
        }
    return 0.5 * v->g * pot + 0.5 * kin - 0.5 * v->g * dt * cross + 0.5 * dt * rot;
}

#endif
