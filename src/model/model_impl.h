/* model_impl.h - the model's struct, shared by model.c and the stepper only (the layouts see a view).
 *
 * Every field array is padded with one halo cell on each side: cell (i, j) of the grid (0-based)
 * lives at index (j + 1) * stride + (i + 1). The halo holds ghost values at open and level edges,
 * copies of the opposite side at periodic edges and zeros at walls. Rows are `stride` elements apart
 * (whole 64-byte lines, arrays 64-byte aligned).
 *
 * The state arrays hold doubles or floats, as the model's precision says (base/real.h): the stepper and
 * the layouts, compiled once per precision, reach them as sw_real; model.c, compiled once, only through
 * sw_model_get / sw_model_put.
 */
#ifndef SW_MODEL_IMPL_H
#define SW_MODEL_IMPL_H

#include <stddef.h>

#include "base/grid.h"
#include "base/real.h"
#include "model/edges.h"
#include "model/layout.h"
#include "model/model.h"
#include "model/stage.h"
#include "model/stepper.h"
#include "model/terms.h"

struct sw_model {
    const sw_layout *layout;
    const sw_layout_kernels *kernels;   /* layout->kernels[precision] */
    sw_precision precision;             /* what the state arrays hold */
    sw_grid grid;
    double g;            /* gravity, m s-2 */
    double dt;           /* time step, s */
    double min_depth;    /* land threshold, m */
    double h_max;        /* deepest water cell, m */
    sw_edge_kind edges[4];

    size_t stride;       /* elements between rows of a padded array */
    size_t n_pad;        /* elements in each padded array: stride * (ny + 2) */

    sw_view view;        /* the fields (owned: eta, u, v, h, hx, hy) and constants the kernels see */
    unsigned char *wet;  /* [ny * nx] unpadded: 1 = water cell */

    sw_terms_config terms_cfg;   /* what was asked for */
    sw_terms terms;              /* what the kernels read (view.terms points here) */
    double *f_rows;              /* [2 (ny + 2)] owned: terms.f_centre, then terms.f_face */
    double *metric;              /* [2 (ny + 2)] owned: view.cos_c, then view.cos_f (all 1 on a projected grid) */
    void *drag;                  /* [2 n_pad] owned: terms.drag_x, then drag_y (quadratic friction), or NULL */
    uint8_t *share;              /* [2 n_pad] owned: terms.share_x, then share_y (bytes; transport-weighted
                                  * layouts with terms), or NULL */
    uint8_t *share_mixed;        /* [2 (ny + 2) n_share_seg] owned: terms.share_mixed_x, then _y (NULL
                                  * without share) */
    float *surface;              /* [4 n_pad] owned with surface forcing: the slabs terms.surface_x[0, 1],
                                  * surface_y[0, 1] point into it (in some order), or NULL. (Stored as pairs
                                  * of the two slabs instead, one stream per component, the C forced step
                                  * ran at 0.31 x the plain step instead of 0.49: strided loads) */
    float *slab[2][2];           /* [slot][x = 0, y = 1]: writable views of terms.surface_x/_y */
    float *edge_heads;           /* [2 n_edge] owned with surface forcing: terms.edge_head[0, 1] point into it */
    float *edge_slab[2];         /* [slot]: writable views of terms.edge_head */
    void *surface_scratch;       /* [3 n_pad] sw_real owned with surface forcing: the head and its gradient
                                  * at u and v points while a slab is built, or NULL */
    void (*surface_build)(sw_model *m, int slot, sw_surface_row_fn fn, void *ctx);   /* of this precision */
    double edge_level;           /* m: the level `level` edges hold (sw_model_set_edge_level) */
    int prefetch_rows;           /* 1 when the step has arrays only its momentum stages read (slabs, water
                                  * fractions): the stepper asks for their next row ahead (stepper.c) */

    size_t n_edge;       /* ghost cells of open and level edges */
    sw_edge_cell *edge;  /* [n_edge], sorted by the padded row of their inner cell */
    size_t *edge_row;    /* [ny + 3]: the ghosts whose inner cell is in padded row j are
                          * edge[edge_row[j] .. edge_row[j + 1]) */

    sw_step_plan plan;            /* the schedule of a step (stepper.h) */
    void (*step)(sw_model *m);    /* the stepper of this precision */

    int moving;          /* 1 when the initial state had velocities (model.c, start_at_rest) */
    long long steps;     /* steps taken */
    double time;         /* simulated time, s */

    size_t share_p0, share_p1;  /* padded rows this process steps: 1 .. ny unless split (sw_model_set_share) */
    sw_halo_fn halo;            /* NULL, or the exchange of a split run's halo rows */
    void *halo_ctx;
    sw_halo_part_fn halo_start, halo_poll, halo_finish; /* NULL, or a sweep's exchange in parts
                                 * (sw_model_set_share_overlap), with halo_ctx */
    size_t halo_depth;          /* rows on each side the next call of halo exchanges (sw_model_halo_depth) */
    size_t share_reach;         /* the deepest halo the split can deliver: its thinnest share's rows (0 unsplit) */

    sw_row_observer observe;   /* never NULL: a no-op when nothing observes (model.c) */
    void *observe_ctx;
    int observed;              /* 1 when an observer is set */
    float *obs_buf;            /* [obs_threads][obs_len]: each thread's sw_row_values storage, or NULL */
    size_t obs_len;            /* floats per thread: sw_row_values_len(nx), in whole 64-byte lines */
    int obs_threads;

    void (*steps_fn)(sw_model *m, int k);   /* the wavefront of this precision (sw_stepper_steps) */
    sw_view wave_view[SW_WAVE_MAX_STEPS];   /* the view step q of a wavefront runs with: m->view but for its
                                             * terms (sw_model_steps_forced) */
    sw_terms wave_terms[SW_WAVE_MAX_STEPS]; /* m->terms with step q's slab weight */
    double wave_level[SW_WAVE_MAX_STEPS];   /* step q's edge level, m */
    _Alignas(64) long wave_done[8 * SW_WAVE_THREADS];   /* the wavefront's progress, one 64-byte line a thread */
};

/* Thread t's storage for a row's values, or NULL when nothing observes or there is none for t. */
static inline float *sw_model_obs_buffer(const sw_model *m, int t)
{
    return m->observed && m->obs_buf && t < m->obs_threads ? m->obs_buf + (size_t)t * m->obs_len : NULL;
}

/* Shows the observer padded row j (1 .. ny) of the state this step has just finished, with its values
 * made by the step in buf (NULL: the observer makes them). The time is the time after the step. */
static inline void sw_model_observe_row(const sw_model *m, size_t j, const float *buf)
{
    const sw_row_values pre = buf ? sw_row_values_in(buf, m->grid.nx) : (sw_row_values){0};
    m->observe(m->observe_ctx, m, j - 1, (double)(m->steps + 1) * m->dt, buf ? &pre : NULL);
}

/* sw_model_observe_row for the state q steps after the next one (q = 0: the next): a wavefront
 * (sw_stepper_steps) finishes rows of several steps before the clock moves. */
static inline void sw_model_observe_row_ahead(const sw_model *m, size_t j, const float *buf, int q)
{
    const sw_row_values pre = buf ? sw_row_values_in(buf, m->grid.nx) : (sw_row_values){0};
    m->observe(m->observe_ctx, m, j - 1, (double)(m->steps + 1 + q) * m->dt, buf ? &pre : NULL);
}

/* Padded index of grid cell (i, j), 0-based (i < nx, j < ny). */
static inline size_t sw_pidx(const sw_model *m, size_t i, size_t j) { return (j + 1) * m->stride + (i + 1); }

/* Value k of a state array `f` (one of the view's arrays) as a double, in the model's precision. */
double sw_model_get(const sw_model *m, const void *f, size_t k);

/* Stores x into value k of state array `f`, rounded to the model's precision. */
void sw_model_put(const sw_model *m, void *f, size_t k, double x);

#endif
