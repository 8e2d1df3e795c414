/* stepper.c - the schedule of a step over a layout's stage kernels (see stepper.h).
 *
 * Compiled once per precision (SW_REAL_BITS): the halo copies and ghost updates touch sw_real values.
 * The plan (sw_step_plan_build) is precision-free and compiled in the double copy only.
 *
 * Invariant: stage s computes row r of its fields exactly once per step, after every row its reads
 * depend on has been finished by the stage that writes it (read-after-write) and after every earlier
 * stage that reads the old value of row r has done so (write-after-read). Within a thread's block this
 * is the lag; across blocks it is the barrier: a row whose stencil reaches a neighbouring block, in
 * either direction, waits for it (the margins below and above). A row's observer call comes after every
 * row its centre values read is final.
 *
 * The plan, for stages s = 0 (continuity, lag 0, no margins) .. n-1, from each earlier stage p:
 *   p writes a field s reads at rows +lo .. +hi:  lag[s] >= lag[p] + hi,  below[s] >= below[p] - lo,
 *                                                 above[s] >= above[p] + hi;
 *   s writes a field p reads at rows +lo .. +hi:  lag[s] >= lag[p] - lo,  below[s] >= below[p] + hi,
 *                                                 above[s] >= above[p] - lo.
 * A block's rows j0 + below[s] .. j1 - above[s] of stage s run in the sweep; its first `below` and last
 * `above` rows wait for the barrier, where a neighbour (or a periodic partner) lies on that side. At the
 * south and north domain edges there is none: the halo rows belong to the first and last blocks.
 */
#include "model/stepper.h"

#include <limits.h>
#include <sched.h>
#include <string.h>

#include "base/omp_compat.h"
#include "model/model_impl.h"

#if SW_REAL_BITS == 64   /* the plan is precision-free: compiled in the double copy only */
static int rows_empty(sw_rows r) { return r.lo > r.hi; }
static int imax(int a, int b) { return a > b ? a : b; }

sw_status sw_step_plan_build(const sw_layout_kernels *k, sw_terms_variant variant, const sw_edge_kind edges[4],
                             sw_step_plan *out, sw_error *err)
{
    memset(out, 0, sizeof *out);
    if (k->n_momentum < 1 || k->n_momentum > SW_MAX_MOMENTUM)
        return sw_fail(err, SW_ERR_USAGE, "stepper: a layout needs 1 to %d momentum stages, not %d", SW_MAX_MOMENTUM,
                       k->n_momentum);
    out->n_stages = 1 + k->n_momentum;
    out->stage[0] = &k->continuity;
    for (int s = 1; s < out->n_stages; s++)
        out->stage[s] = &k->momentum[variant][s - 1];
    for (int f = 0; f < SW_N_FIELDS; f++)
        out->writer[f] = -1;
    for (int s = 0; s < out->n_stages; s++) {
        const sw_stage *st = out->stage[s];
        if (!st->run)
            return sw_fail(err, SW_ERR_USAGE, "stepper: stage %d of variant %d has no kernel", s, (int)variant);
        for (int f = 0; f < SW_N_FIELDS; f++) {
            if (!(st->writes & SW_WRITES(f)))
                continue;
            if (out->writer[f] >= 0)
                return sw_fail(err, SW_ERR_USAGE, "stepper: field %d is written by stages %d and %d", f,
                               out->writer[f], s);
            out->writer[f] = s;
            if (!rows_empty(st->reads[f]) && (st->reads[f].lo != 0 || st->reads[f].hi != 0))
                return sw_fail(err, SW_ERR_USAGE, "stepper: stage %d reads the field it writes on other rows", s);
        }
    }
    if (out->writer[SW_FIELD_ETA] != 0)
        return sw_fail(err, SW_ERR_USAGE, "stepper: stage 0 must be the continuity stage (it writes eta)");
    for (int f = 0; f < SW_N_FIELDS; f++)
        if (out->writer[f] < 0)
            return sw_fail(err, SW_ERR_USAGE, "stepper: no stage writes field %d", f);

    for (int s = 1; s < out->n_stages; s++) {
        const sw_stage *st = out->stage[s];
        int lag = 0, below = 0, above = 0, needs_barrier = 0;
        for (int p = 0; p < s; p++) {
            const sw_stage *sp = out->stage[p];
            for (int f = 0; f < SW_N_FIELDS; f++) {
                if ((sp->writes & SW_WRITES(f)) && !rows_empty(st->reads[f])) {   /* s reads p's new values */
                    const sw_rows r = st->reads[f];
                    lag = imax(lag, out->lag[p] + r.hi);
                    below = imax(below, out->below[p] - r.lo);
                    above = imax(above, out->above[p] + r.hi);
                    needs_barrier |= p > 0;
                }
                if ((st->writes & SW_WRITES(f)) && !rows_empty(sp->reads[f])) {   /* p reads s's old values */
                    const sw_rows r = sp->reads[f];
                    lag = imax(lag, out->lag[p] - r.lo);
                    below = imax(below, out->below[p] + r.hi);
                    above = imax(above, out->above[p] - r.lo);
                    needs_barrier |= p > 0;
                }
            }
        }
        out->first_row[s] = st->south_line && edges[SW_SOUTH] != SW_EDGE_PERIODIC ? 0 : 1;
        if (out->first_row[s] + lag < 1)
            return sw_fail(err, SW_ERR_USAGE, "stepper: stage %d computes the south edge's line with no lag", s);
        out->lag[s] = lag;
        out->below[s] = below;
        out->above[s] = above;
        out->barrier_before[s] = needs_barrier;
        out->max_lag = imax(out->max_lag, lag);
    }
    out->first_row[0] = 1;

    out->obs_lag = 0;
    for (int f = 0; f < SW_N_FIELDS; f++) {
        out->observes[f] = k->observes[f];
        if (!rows_empty(k->observes[f]))
            out->obs_lag = imax(out->obs_lag, out->lag[out->writer[f]] + k->observes[f].hi);
    }
    out->periodic_x = edges[SW_WEST] == SW_EDGE_PERIODIC;
    out->periodic_y = edges[SW_SOUTH] == SW_EDGE_PERIODIC;
    out->ghosts_before_obs = k->centre_reads_halo && k->edge_velocities;

    /* the wavefront (sw_stepper_steps): how far its iterations reach, and the gap between steps */
    int reach = 1;
    for (int s = 0; s < out->n_stages; s++)
        for (int f = 0; f < SW_N_FIELDS; f++)
            if (!rows_empty(out->stage[s]->reads[f]))
                reach = imax(reach, imax(-out->stage[s]->reads[f].lo, out->stage[s]->reads[f].hi));
    for (int f = 0; f < SW_N_FIELDS; f++)
        if (!rows_empty(k->observes[f]))
            reach = imax(reach, imax(-k->observes[f].lo, k->observes[f].hi));
    out->wave_reach = reach;
    out->wave_ghost_lag = out->max_lag + SW_GHOST_REACH;
    /* at least 2: an observer may read the elevations at the centres of the row above too (a gauge's
     * stencil, sw_gauges_watch_row), which on E read the row beyond it: continuity must have passed both */
    out->wave_obs_lag = imax(imax(out->obs_lag, 2), out->ghosts_before_obs ? out->wave_ghost_lag + reach + 1 : 0);
    out->wave_tail = imax(imax(out->max_lag, out->wave_ghost_lag), out->wave_obs_lag);
    /* iteration i touches rows i - behind .. i + reach: a stage's row i - lag and the rows it reads; the
     * ghosts of row i - wave_ghost_lag; the row observed in the continuity pass, i - wave_obs_lag - 1, and
     * the rows its centre values read (a gauge watched there reads the rows above it, which are nearer) */
    const int behind = imax(imax(out->max_lag + reach, out->wave_ghost_lag), out->wave_obs_lag + 1 + reach);
    out->wave_gap = behind + reach;
    return SW_OK;
}
#endif

/* ---- one step ------------------------------------------------------------------------------------ */

/* The rows of one stage in one thread's block: those it runs in the sweep, and those that wait. */
typedef struct {
    ptrdiff_t lo, hi;         /* in the sweep: lo .. hi */
    ptrdiff_t first, last;    /* all of the block's rows of this stage: first .. last */
} stage_rows;

/* What one thread does in a step. */
typedef struct {
    ptrdiff_t j0, j1;                    /* its block of padded rows (empty when j1 < j0) */
    stage_rows st[SW_MAX_STAGES];
    ptrdiff_t ob_lo, ob_hi;              /* rows observed in the sweep */
    float *buf;                          /* room for rows' values made by the step, or NULL */
} block;

static ptrdiff_t pmax(ptrdiff_t a, ptrdiff_t b) { return a > b ? a : b; }
static ptrdiff_t pmin(ptrdiff_t a, ptrdiff_t b) { return a < b ? a : b; }

static block block_of(const sw_model *m, int t, int nt)
{
    const sw_step_plan *pl = &m->plan;
    const ptrdiff_t ny = (ptrdiff_t)m->grid.ny;
    const ptrdiff_t p0 = (ptrdiff_t)m->share_p0, rows = (ptrdiff_t)m->share_p1 - p0 + 1;   /* all rows, unsplit */
    block b = {0};
    b.j0 = p0 + rows * t / nt;
    b.j1 = p0 + rows * (t + 1) / nt - 1;
    /* the block holding row 1 (ny) also holds the south (north) halo rows, unless the edge is periodic;
     * blocks may be empty when there are more threads than rows */
    const int south_domain = b.j0 == 1 && !pl->periodic_y, north_domain = b.j1 == ny && !pl->periodic_y;
    for (int s = 0; s < pl->n_stages; s++) {
        stage_rows *r = &b.st[s];
        r->first = south_domain ? pl->first_row[s] : b.j0;
        r->last = b.j1;
        r->lo = south_domain ? r->first : b.j0 + pl->below[s];
        r->hi = north_domain ? r->last : b.j1 - pl->above[s];
    }
    /* a row is observed in the sweep when every row its centre values read is finished there (rows
     * beyond a domain edge are ghosts or never written: no wait) */
    b.ob_lo = b.j0;
    b.ob_hi = b.j1;
    for (int f = 0; f < SW_N_FIELDS; f++) {
        const sw_rows o = pl->observes[f];
        if (o.lo > o.hi)
            continue;
        const stage_rows *r = &b.st[pl->writer[f]];
        const ptrdiff_t lo = south_domain ? pmax(r->lo, 1) : r->lo, hi = north_domain ? pmin(r->hi, ny) : r->hi;
        b.ob_lo = pmax(b.ob_lo, south_domain && b.j0 + o.lo < lo ? b.j0 : lo - o.lo);
        b.ob_hi = pmin(b.ob_hi, north_domain && b.j1 + o.hi > hi ? b.j1 : hi - o.hi);
    }
    b.buf = sw_model_obs_buffer(m, t);
    return b;
}

/* The halo copies of periodic edges for padded row r of field f, after it was written. */
static void periodic_row(const sw_model *m, sw_real *restrict f, ptrdiff_t r)
{
    const size_t s = m->stride, nx = m->grid.nx, ny = m->grid.ny;
    if (m->plan.periodic_x) {
        f[(size_t)r * s] = f[(size_t)r * s + nx];
        f[(size_t)r * s + nx + 1] = f[(size_t)r * s + 1];
    }
    if (m->plan.periodic_y) {
        if ((size_t)r == ny)
            memcpy(f, f + ny * s, s * sizeof *f);
        if (r == 1)
            memcpy(f + (ny + 1) * s, f + s, s * sizeof *f);
    }
}

/* Stage s on row r with view v (the model's, or a wavefront step's), with the periodic copies of what it
 * wrote. */
static void run_stage_in(sw_model *m, const sw_view *v, int s, ptrdiff_t r)
{
    const sw_stage *st = m->plan.stage[s];
    st->run(v, (size_t)r);
    if (m->plan.periodic_x || m->plan.periodic_y)
        for (int f = 0; f < SW_N_FIELDS; f++)
            if (st->writes & SW_WRITES(f))
                periodic_row(m, f == SW_FIELD_ETA ? SW_V(&m->view, eta) : f == SW_FIELD_U ? SW_V(&m->view, u)
                                                                                            : SW_V(&m->view, v), r);
}

static void run_stage(sw_model *m, int s, ptrdiff_t r) { run_stage_in(m, &m->view, s, r); }

/* After the continuity of row j, with view v and edge level `edge_level` (m; the model's, or a wavefront
 * step's): the ghosts whose inner cell is in row j (model_impl.h), then the periodic copies of the row,
 * and of a ghost row of the south or north edge when west and east are periodic. */
static void after_continuity_in(sw_model *m, const sw_view *v, double edge_level, ptrdiff_t j)
{
    sw_real *restrict eta = SW_V(v, eta);
    for (size_t q = m->edge_row[j]; q < m->edge_row[j + 1]; q++) {
        const sw_edge_cell *oc = &m->edge[q];
        /* a level edge holds L less the air's head there: the sea beyond it at its inverse barometer */
        const double level = edge_level - (double)sw_edge_head(v, q);
        eta[oc->ghost] = (sw_real)oc->keep * eta[oc->ghost] + (sw_real)oc->take * eta[oc->inner]
                       + (sw_real)(oc->level_gain * level);
    }
    if (m->plan.periodic_x || m->plan.periodic_y)
        periodic_row(m, eta, j);
    if (m->plan.periodic_x && !m->plan.periodic_y) {
        if (j == 1)
            periodic_row(m, eta, 0);
        if ((size_t)j == m->grid.ny)
            periodic_row(m, eta, (ptrdiff_t)m->grid.ny + 1);
    }
}

static void after_continuity(sw_model *m, ptrdiff_t j) { after_continuity_in(m, &m->view, m->edge_level, j); }

static int in(ptrdiff_t r, ptrdiff_t lo, ptrdiff_t hi) { return r >= lo && r <= hi; }

/* Asks for padded row r of the arrays only the momentum stages read, ahead of them: the surface forcing's
 * four slabs and, on transport-weighted layouts, the water-fraction bytes. The plain stages read rows the
 * continuity pass has just brought into cache; these nobody has touched, and without the request each
 * stage that reads them waits on their streams. */
static void prefetch_momentum_rows(const sw_model *m, ptrdiff_t r)
{
    const sw_terms *t = &m->terms;
    if (r < 0 || (size_t)r > m->grid.ny + 1)
        return;
    const size_t k0 = (size_t)r * m->stride, k1 = k0 + m->grid.nx + 2;
    if (t->surface_x[0]) {
        const float *a[4] = {t->surface_x[0], t->surface_x[1], t->surface_y[0], t->surface_y[1]};
        for (int q = 0; q < 4; q++)
            for (size_t k = k0; k < k1; k += 16)   /* a 64-byte line holds 16 floats */
                __builtin_prefetch(a[q] + k, 0, 3);
    }
    if (t->share_x) {   /* only the segments whose bytes the kernels read (terms.h share_mixed_x) */
        const uint8_t *mx = t->share_mixed_x + (size_t)r * t->n_share_seg, *my = t->share_mixed_y + (size_t)r * t->n_share_seg;
        for (size_t q = 0; q < t->n_share_seg; q++) {
            const size_t a = k0 + q * SW_SHARE_SEG, z = a + SW_SHARE_SEG < k1 ? a + SW_SHARE_SEG : k1;
            for (size_t k = a; k < z; k += 64) {    /* 64 bytes */
                if (mx[q])
                    __builtin_prefetch(t->share_x + k, 0, 3);
                if (my[q])
                    __builtin_prefetch(t->share_y + k, 0, 3);
            }
        }
    }
}

static void observe_rest(const sw_model *m, const block *b)
{
    for (ptrdiff_t f = b->j0; f <= b->j1; f++)
        if (!in(f, b->ob_lo, b->ob_hi))
            sw_model_observe_row(m, (size_t)f, NULL);
}

/* The ghost velocities of the step, each thread a static share of the list (as `omp for` would give),
 * then the periodic copies they need (a ghost row or column wraps); ends with a barrier when the rows
 * observed next read halo cells. */
static void ghosts(sw_model *m, int t, int nt)
{
    /* a split run's share: the ghosts whose inner cell is in its rows (the list is sorted by that row) */
    const size_t a = m->share_p0 == 1 ? 0 : m->edge_row[m->share_p0];
    const size_t z = m->share_p1 == m->grid.ny ? m->n_edge : m->edge_row[m->share_p1 + 1];
    const size_t n = z - a, q0 = a + n * (size_t)t / (size_t)nt, q1 = a + n * (size_t)(t + 1) / (size_t)nt;
    if (q1 > q0)
        m->kernels->edge_velocities(&m->view, m->edge, q0, q1);
    if (m->plan.periodic_x || m->plan.periodic_y) {
        SW_OMP(barrier)
        SW_OMP(single)
        {
            const ptrdiff_t last = (ptrdiff_t)m->grid.ny + 1;
            sw_real *f[3] = {SW_V(&m->view, eta), SW_V(&m->view, u), SW_V(&m->view, v)};
            for (int q = 0; q < 3; q++) {
                if (m->plan.periodic_x) {   /* ghost rows of the south and north edges */
                    periodic_row(m, f[q], 0);
                    periodic_row(m, f[q], last);
                }
                if (m->plan.periodic_y) {   /* rows holding ghosts of the west and east edges */
                    periodic_row(m, f[q], 1);
                    periodic_row(m, f[q], last - 1);
                }
            }
        }   /* the end of `single` is a barrier */
    } else if (m->plan.ghosts_before_obs) {
        SW_OMP(barrier)
    }
}

/* A split run's halo exchange (model.h sw_model_set_share), by the master thread (the one that started
 * the messages' library) once every thread has arrived: the caller has just passed a barrier; the one
 * after it publishes the halo rows. Nothing when unsplit. */
static void halo(sw_model *m)
{
    if (m->halo) {
        SW_OMP(master)
        m->halo(m->halo_ctx, m);
        SW_OMP(barrier)
    }
}

void SW_NAME(sw_stepper_step)(sw_model *m)
{
    const sw_step_plan *pl = &m->plan;
    const int nt = omp_get_num_threads(), t = omp_get_thread_num();
    const block b = block_of(m, t, nt);
    const int observed = m->observed;

    if (b.j1 >= b.j0) {
        const ptrdiff_t end = b.j1 + (pl->max_lag > pl->obs_lag ? pl->max_lag : pl->obs_lag);
        for (ptrdiff_t j = b.j0; j <= end; j++) {
            if (j <= b.j1) {
                const ptrdiff_t f = j - pl->obs_lag - 1;   /* final since the last iteration */
                if (observed && b.buf && in(f, b.ob_lo, b.ob_hi) && m->kernels->continuity_observed) {
                    m->kernels->continuity_observed(&m->view, (size_t)j, (size_t)f, b.buf);
                    after_continuity(m, j);
                    sw_model_observe_row(m, (size_t)f, b.buf);
                } else {
                    m->plan.stage[0]->run(&m->view, (size_t)j);
                    after_continuity(m, j);
                }
                if (m->prefetch_rows)
                    prefetch_momentum_rows(m, j + 1);
            }
            for (int st = 1; st < pl->n_stages; st++) {
                const ptrdiff_t r = j - pl->lag[st];
                if (in(r, b.st[st].lo, b.st[st].hi))
                    run_stage(m, st, r);
            }
            if (observed) {   /* rows not handed in a continuity pass: the observer makes their values */
                const ptrdiff_t f = j - pl->obs_lag;
                const int handed = b.buf && m->kernels->continuity_observed && f + pl->obs_lag + 1 <= b.j1;
                if (in(f, b.ob_lo, b.ob_hi) && !handed)
                    sw_model_observe_row(m, (size_t)f, NULL);
            }
        }
    }
    SW_OMP(barrier)
    halo(m);
    for (int st = 1; st < pl->n_stages; st++) {
        if (pl->barrier_before[st]) {
            SW_OMP(barrier)
            halo(m);
        }
        if (b.j1 < b.j0)
            continue;
        for (ptrdiff_t r = b.st[st].first; r <= b.st[st].last; r++)
            if (!in(r, b.st[st].lo, b.st[st].hi))
                run_stage(m, st, r);
    }
    SW_OMP(barrier)
    halo(m);
    if (m->kernels->edge_velocities && m->n_edge) {
        ghosts(m, t, nt);
        if (m->halo) {
            SW_OMP(barrier)
            halo(m);
        }
    }
    if (observed && b.j1 >= b.j0)
        observe_rest(m, &b);
    SW_OMP(barrier)   /* the step ends when every row has been observed */
}

/* ---- several steps per sweep (temporal blocking) ------------------------------------------------ */

/* The ghost velocities of the ghosts whose inner cell is in padded row r, and the periodic copies of a
 * ghost row of the south or north edge they complete (as ghosts() does after all of them). */
static void wave_ghosts(sw_model *m, const sw_view *v, ptrdiff_t r)
{
    const size_t q0 = m->edge_row[r], q1 = m->edge_row[r + 1];
    if (q1 > q0)
        m->kernels->edge_velocities(v, m->edge, q0, q1);
    const ptrdiff_t ny = (ptrdiff_t)m->grid.ny;
    if (m->plan.periodic_x && (r == 1 || r == ny)) {
        sw_real *f[3] = {SW_V(&m->view, eta), SW_V(&m->view, u), SW_V(&m->view, v)};
        for (int q = 0; q < 3; q++)
            periodic_row(m, f[q], r == 1 ? 0 : ny + 1);
    }
}

/* Iteration i of the one-thread sweep of step q of the wavefront (stepper.h, sw_step_plan): what the
 * one-step sweep does at i, with the ghosts and the observation moved into the sweep (wave_ghost_lag,
 * wave_obs_lag rows behind). b is the one-thread block (all rows) with this thread's buffer. */
static void wave_iteration(sw_model *m, const block *b, ptrdiff_t i, int q, int ghosts_on)
{
    const sw_step_plan *pl = &m->plan;
    const ptrdiff_t obs = pl->wave_obs_lag;
    const ptrdiff_t o0 = (ptrdiff_t)m->share_p0, o1 = (ptrdiff_t)m->share_p1;   /* the rows observed: the share */
    const int fused = m->observed && b->buf && m->kernels->continuity_observed;
    const sw_view *v = &m->wave_view[q];   /* the model's view with step q's forcing weight */
    const double level = m->wave_level[q];
    if (i <= b->j1) {
        const ptrdiff_t f = i - obs - 1;   /* final since the last iteration */
        if (fused && in(f, o0, o1)) {
            m->kernels->continuity_observed(v, (size_t)i, (size_t)f, b->buf);
            after_continuity_in(m, v, level, i);
            sw_model_observe_row_ahead(m, (size_t)f, b->buf, q);
        } else {
            pl->stage[0]->run(v, (size_t)i);
            after_continuity_in(m, v, level, i);
        }
        if (m->prefetch_rows)
            prefetch_momentum_rows(m, i + 1);
    }
    for (int st = 1; st < pl->n_stages; st++) {
        const ptrdiff_t r = i - pl->lag[st];
        if (in(r, b->st[st].first, b->st[st].last))
            run_stage_in(m, v, st, r);
    }
    if (ghosts_on && in(i - pl->wave_ghost_lag, b->j0, b->j1))
        wave_ghosts(m, v, i - pl->wave_ghost_lag);
    if (m->observed) {
        const ptrdiff_t f = i - obs;
        if (in(f, o0, o1) && !(fused && f + obs + 1 <= b->j1))
            sw_model_observe_row_ahead(m, (size_t)f, NULL, q);
    }
}

/* The rows a wavefront computes, as a one-thread block (stage rows first .. last): the grid's, or for a
 * split model its share and the halo of the k steps (sw_model_wave_halo) within the grid. Rows of that
 * halo are computed as the share's neighbours compute them, from the values the exchange brought; those
 * near its far end go wrong step by step (their inputs beyond are stale), but no row of the share depends
 * on them within k steps. */
static block wave_block(const sw_model *m, int k)
{
    const sw_step_plan *pl = &m->plan;
    const ptrdiff_t ny = (ptrdiff_t)m->grid.ny, h = m->halo ? (ptrdiff_t)sw_model_wave_halo(m, k) : 0;
    block b = {0};
    b.j0 = pmax(1, (ptrdiff_t)m->share_p0 - h);
    b.j1 = pmin(ny, (ptrdiff_t)m->share_p1 + h);
    for (int s = 0; s < pl->n_stages; s++) {
        b.st[s].first = b.j0 == 1 ? pl->first_row[s] : b.j0;   /* the south edge's line, where it is in */
        b.st[s].last = b.j1;
    }
    return b;
}

/* Waits until *count >= need (written by another thread with release). Spins briefly, then yields the
 * core: on a busy machine the thread waited for may be off its core. */
static void wave_wait(const long *count, long need)
{
    for (unsigned spins = 0; __atomic_load_n(count, __ATOMIC_ACQUIRE) < need; spins++) {
        if (spins < 4096) {
#if defined(__x86_64__) || defined(__i386__)
            __builtin_ia32_pause();
#endif
        } else {
            sched_yield();
        }
    }
}

void SW_NAME(sw_stepper_steps)(sw_model *m, int k)
{
    const sw_step_plan *pl = &m->plan;
    const int nt = omp_get_num_threads(), t = omp_get_thread_num();
    const int n_pipe = nt < k ? (nt < SW_WAVE_THREADS ? nt : SW_WAVE_THREADS) : (k < SW_WAVE_THREADS ? k : SW_WAVE_THREADS);
    block b = wave_block(m, k);
    const ptrdiff_t first = b.j0, last = b.j1 + pl->wave_tail, gap = pl->wave_gap;
    long *done = m->wave_done;   /* done[8 t]: the last iteration thread t's last step has finished */
    if (t < n_pipe)
        __atomic_store_n(&done[8 * t], LONG_MIN, __ATOMIC_RELAXED);
    SW_OMP(barrier)
    /* A split model: the halo of k steps, once (sw_model_wave_halo). In parts when it can be: the north
     * side's rows travel while the first step sweeps the share up to them (sw_model_set_share_overlap). */
    const ptrdiff_t h = m->halo ? (ptrdiff_t)sw_model_wave_halo(m, k) : 0;
    ptrdiff_t north_by = PTRDIFF_MAX;   /* the first step's iteration that needs the north side done */
    if (m->halo) {
        SW_OMP(master)
        {
            m->halo_depth = (size_t)h;
            if (m->halo_start)
                m->halo_start(m->halo_ctx, m);
            else
                m->halo(m->halo_ctx, m);
            m->halo_depth = sw_model_halo_rows(m);
        }
        /* the first step writes row i at iteration i and reads no row above it: the share's highest h rows
         * (sent north) are first changed at iteration share_p1 - h + 1, the rows above read later */
        if (m->halo_start)
            north_by = (ptrdiff_t)m->share_p1 - h + 1;
        SW_OMP(barrier)
    }
    if (t < n_pipe) {
        const int q0 = k * t / n_pipe, q1 = k * (t + 1) / n_pipe, n_q = q1 - q0;
        b.buf = sw_model_obs_buffer(m, t);
        const int ghosts_on = m->kernels->edge_velocities && m->n_edge;
        const ptrdiff_t end = last + (ptrdiff_t)(n_q - 1) * gap;
        /* the pipeline's first thread runs step 0 and is OpenMP's master: it completes the exchange */
        int north_pending = t == 0 && north_by != PTRDIFF_MAX;
        for (ptrdiff_t front = first; front <= end; front++) {
            if (north_pending) {   /* step 0's iteration is `front` */
                if (front >= north_by) {
                    m->halo_finish(m->halo_ctx, m);
                    north_pending = 0;
                } else if (m->halo_poll && (front & 7) == 0) {
                    m->halo_poll(m->halo_ctx, m);
                }
            }
            if (t > 0)   /* step q0 - 1 has passed every row step q0's iteration `front` touches */
                wave_wait(&done[8 * (t - 1)], front + gap < last ? front + gap : last);
            for (int q = q0; q < q1; q++) {
                const ptrdiff_t i = front - (ptrdiff_t)(q - q0) * gap;
                if (in(i, first, last))
                    wave_iteration(m, &b, i, q, ghosts_on);
            }
            __atomic_store_n(&done[8 * t], front - (ptrdiff_t)(n_q - 1) * gap, __ATOMIC_RELEASE);
        }
        if (north_pending)   /* a share no higher than its halo: never reached (not the case: bands are deeper) */
            m->halo_finish(m->halo_ctx, m);
    }
    SW_OMP(barrier)
    SW_OMP(single)
    {
        m->steps += k;
        m->time = (double)m->steps * m->dt;
    }   /* the end of `single` is a barrier */
}
