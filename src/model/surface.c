/* surface.c - building a slab of surface forcing on the model's velocity points (see model.h,
 * sw_model_surface_build).
 *
 * Compiled once per precision (SW_REAL_BITS), beside the stepper: it runs the layout's own plain
 * momentum stages on a scratch view. A slab holds, at each velocity point that flows, the point's
 * acceleration in the form the layout stores velocities,
 *     a = tau / (rho_w H) - g grad(p_b),
 * H the depth the point carries (hx, hy): the wind stress at the point's own position, and the gradient
 * of the air pressure head p_b (m) at the cell centres taken by the plain momentum stage with
 * eta = p_b (0 on land, like eta, and the air's own value in the ghost cells of open and level edges),
 * velocities 0 and dt = 1 s, which returns -g grad(p_b) with the layout's gradient, walls and edges (B, D:
 * in their stored, transport-weighted form, whose stress term is tau / (rho_w H) with H = h / f as well).
 * The forced momentum stages add dt a to the pressure-gradient increment (stage.h, sw_surface_dvel); at
 * the points of walls and land (H = 0) a is 0.
 *
 * Invariant: every row is built by one thread from values no other thread writes in the same phase, so
 * the slab does not depend on the thread count.
 */
#include <string.h>

#include "base/omp_compat.h"
#include "model/model_impl.h"
#include "model/stepper.h"

void SW_NAME(sw_surface_build)(sw_model *m, int slot, sw_surface_row_fn fn, void *ctx)
{
    const sw_grid *g = &m->grid;
    const size_t s = m->stride, nx = g->nx, ny = g->ny, np = nx + 2, n_pad = m->n_pad;
    sw_real *restrict pb = (sw_real *)m->surface_scratch, *restrict gu = pb + n_pad, *restrict gv = gu + n_pad;
    float *restrict ax = m->slab[slot][0], *restrict ay = m->slab[slot][1];
    const sw_real *restrict h = SW_V(&m->view, h), *restrict hx = SW_V(&m->view, hx), *restrict hy = SW_V(&m->view, hy);
    const int periodic_x = m->edges[SW_WEST] == SW_EDGE_PERIODIC, periodic_y = m->edges[SW_SOUTH] == SW_EDGE_PERIODIC;
    const double x_centre0 = g->x0_m - 0.5 * g->dx_m;   /* x of padded column 0's centre */
    float tmp[SW_SURFACE_PIECE];                         /* one piece of a row */

    /* 1: the head at every centre, halo included (the halo of a periodic edge: the opposite side's). The
     * gradients gu, gv are 0 here: zeroed when the model was made, and again by every build once read */
    SW_OMP(for schedule(static))
    for (size_t jp = 0; jp < ny + 2; jp++) {
        sw_real *restrict row = pb + jp * s;
        const sw_real *restrict hr = h + jp * s;
        const double y = g->y0_m + ((double)jp - 0.5) * g->dy_m;
        for (size_t c = 0; c < np; c += SW_SURFACE_PIECE) {
            const size_t n = np - c < SW_SURFACE_PIECE ? np - c : SW_SURFACE_PIECE;
            fn(ctx, SW_SURFACE_HEAD, (ptrdiff_t)jp - 1, c, y, x_centre0 + (double)c * g->dx_m, g->dx_m, n, tmp);
            for (size_t i = 0; i < n; i++)   /* 0 on land, as eta is there: no gradient from the land's air */
                row[c + i] = hr[c + i] > 0 ? (sw_real)tmp[i] : 0;
        }
        if (periodic_x) {
            row[0] = row[nx];
            row[nx + 1] = row[1];
        }
    }
    SW_OMP(single)
    {
        /* the ghosts: beyond a level edge the air's own head; beyond an open edge the inner cell's, so that
         * no pressure gradient acts across the edge face and the edge radiates the departure from the
         * inverse barometer (stage.h, sw_edge_head), whose heads are kept per slab */
        for (size_t q = 0; q < m->n_edge; q++) {
            const sw_edge_cell *oc = &m->edge[q];
            if (oc->kind == SW_EDGE_OPEN)
                pb[oc->ghost] = pb[oc->inner];
            else {
                const size_t jp = oc->ghost / s, ip = oc->ghost % s;
                fn(ctx, SW_SURFACE_HEAD, (ptrdiff_t)jp - 1, ip, g->y0_m + ((double)jp - 0.5) * g->dy_m,
                   x_centre0 + (double)ip * g->dx_m, g->dx_m, 1, tmp);
                pb[oc->ghost] = (sw_real)tmp[0];
            }
            /* open: the inner cell's head (its ghost rules radiate eta + head); level: the air's head beyond
             * the edge, which the edge's level is lowered by (stepper.c, after_continuity) */
            m->edge_slab[slot][q] = (float)pb[oc->kind == SW_EDGE_OPEN ? oc->inner : oc->ghost];
        }
        if (periodic_y) {
            memcpy(pb, pb + ny * s, s * sizeof *pb);
            memcpy(pb + (ny + 1) * s, pb + s, s * sizeof *pb);
        }
    }

    /* 2: -g grad(p_b) by the plain momentum stages, then a at the u and v points of each row */
    sw_view sv = m->view;
    const sw_terms none = {.f_centre = m->terms.f_centre, .f_face = m->terms.f_face};
    sv.eta = pb;
    sv.u = gu;
    sv.v = gv;
    sv.dt_s = 1;
    sv.terms = &none;
    const sw_stage *plain = m->kernels->momentum[SW_TERMS_PLAIN];
    SW_OMP(for schedule(static))
    for (size_t jp = 0; jp < ny + 2; jp++) {
        for (int q = 0; q < m->kernels->n_momentum; q++) {
            const size_t first = plain[q].south_line && !periodic_y ? 0 : 1;
            if (jp >= first && jp <= ny)
                plain[q].run(&sv, jp);
        }
        const double yc = g->y0_m + ((double)jp - 0.5) * g->dy_m;
        for (int c = 0; c < 2; c++) {
            const double *at = c ? m->layout->v_at : m->layout->u_at;
            const sw_real *restrict hc = c ? hy : hx;
            sw_real *restrict gc = c ? gv : gu;
            float *restrict a = c ? ay : ax;
            for (size_t i0 = 0; i0 < np; i0 += SW_SURFACE_PIECE) {
                const size_t n = np - i0 < SW_SURFACE_PIECE ? np - i0 : SW_SURFACE_PIECE, k0 = jp * s + i0;
                fn(ctx, c ? SW_SURFACE_STRESS_Y : SW_SURFACE_STRESS_X, (ptrdiff_t)jp - 1, i0, yc + at[1] * g->dy_m,
                   x_centre0 + ((double)i0 + at[0]) * g->dx_m, g->dx_m, n, tmp);
                SW_OMP(simd)
                for (size_t i = 0; i < n; i++) {
                    const size_t k = k0 + i;
                    a[k] = hc[k] > 0 ? (float)((sw_real)tmp[i] / hc[k] + gc[k]) : 0.0f;
                    gc[k] = 0;   /* ready for the next build: the stages step it from 0 */
                }
            }
        }
    }
}
