/* tracker.c - arrival time and extremes at cell centres (see tracker.h).
 *
 * The running maps are kept in single precision (4 bytes a value: 7 significant digits for
 * elevations, and for times a resolution finer than 0.01 s up to a simulated day): the tracker
 * reads and writes them at every step, so their size is its cost. sw_tracker_maps converts them to
 * the double maps the writers take.
 *
 * Every map is made from the centre values rounded to float (sw_model_centre_row_f32), the squared
 * speed computed in float. Elevations smaller than the floor (1 micrometre, or a hundredth of the
 * arrival threshold when that is smaller) and speeds below 1 micrometre per second count as 0: the
 * tail of a Gaussian source reaches every cell of the grid with values like 1e-14 m that change every
 * step, and without a floor every map of every cell would be rewritten at every step for nothing.
 *
 * Most of a grid, most of the time, cannot change its maps: the water is still, or lower than the crest
 * that already passed. Each row is cut into segments of SEG cells, and each segment keeps a summary
 * of its maps (the lowest eta_max, the highest eta_min, the lowest speed_max^2, whether a water cell
 * still waits for its arrival). A row update first reduces the new values of each segment (highest
 * and lowest elevation, top squared speed) and touches the segment's maps only when one
 * of them could change, and then only that one (behind a crest, where the water falls, eta_min and the
 * speed, not all five); the per-cell rules are the same either way, so the maps are the same bits as
 * with every cell updated. Attached to the model (sw_tracker_attach) the update runs inside the step,
 * on rows still in cache, and the state is not streamed from memory a second time. Either way it runs
 * with subnormal numbers flushed to zero (fpmode.h), so values below 1.18e-38 enter the maps as 0.
 */
#include "observers/tracker.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "base/fpmode.h"
#include "base/omp_compat.h"

#define SEG SW_OBS_SEG   /* cells per segment of a row (the last one may be shorter): as the step's */
#define SPEED2_FLOOR 1e-12f   /* m2 s-2: squared speeds below (1 micrometre per second)^2 count as 0 */

/* What a segment's maps hold at best, as the values that would change them: for deciding, from the
 * raw (unfloored) new values, that they cannot. Maps hold floored values only: 0, or at least the
 * floor in size. So with lo_max the lowest eta_max of the segment, a floored value passes it only if
 * a raw value passes lo_max, or passes the floor when lo_max is 0 (and so for the others). */
typedef struct {
    float up;          /* m: a raw eta above it may raise an eta_max (lo_max, or just under the floor if 0) */
    float down;        /* m: a raw eta below it may lower an eta_min */
    float faster;      /* m2 s-2: a raw squared speed above it may raise a speed2_max */
    int waiting;       /* 1 while a water cell of the segment has no arrival time yet */
} seg_summary;

/* The trigger for a map whose weakest value is `weakest`, given the floor below which values are 0. */
static float trigger(float weakest, float floor_value)
{
    return weakest == 0.0f ? nextafterf(floor_value, 0.0f) : weakest;
}

/* What one thread of the team owns: its row buffers and counts. Each slot starts on a 64-byte line of
 * its own (threads write their counts every row); its size is a whole number of lines. */
typedef struct {
    _Alignas(64) float *row;   /* [3 nx]: centre eta, u, v of one row */
    int nonfinite;        /* the thread met a NaN or Inf */
    size_t bad_row;       /* the grid row (0 .. ny-1) where it first did, valid with nonfinite */
    double bad_time;      /* s: the time of that row's state */
    long long seen;       /* segments looked at */
    long long updated;    /* segments whose maps were rewritten */
} thread_slot;

struct sw_tracker {
    size_t nx, ny;
    float threshold;      /* m */
    float floor;          /* m: |eta| below it counts as 0 (min(1e-6, threshold / 100)) */
    int n_threads;        /* slots of the team's threads */
    thread_slot *slot;    /* [n_threads + 1], 64-byte aligned; the last serves, one at a time, threads
                           * beyond n_threads */
    float *eta_max, *eta_min;      /* [ny * nx] running extremes, m */
    float *arrival, *eta_max_time; /* [ny * nx] s; arrival NaN until reached */
    float *speed2_max;             /* [ny * nx] squared speed, m2 s-2 */
    size_t n_seg;         /* segments per row */
    seg_summary *seg;     /* [ny * n_seg] */
    unsigned char *seg_all_wet; /* [ny * n_seg] 1 when every cell of the segment is water: its updates need not
                           * read the wet mask (not part of the state: it follows from the model) */
    const unsigned char *wet; /* the model's mask [ny * nx] */
    int all_maps;         /* 1 during the first update (sw_tracker_create): every segment rewrites every map,
                           * so that each summary holds what its maps say from then on */
    double *out;          /* [5 * ny * nx] the double maps, made by sw_tracker_maps */
};

static void free_slots(sw_tracker *t)
{
    for (int q = 0; t->slot && q <= t->n_threads; q++) {
        free(t->slot[q].row);
    }
    free(t->slot);
    t->slot = NULL;
    t->n_threads = 0;
}

/* Gives t at least n thread slots and the overflow slot (the counts of the old ones carried over).
 * SW_OK or SW_ERR_NOMEM (then t is as it was). */
static sw_status ensure_slots(sw_tracker *t, int n, sw_error *err)
{
    if (t->slot && n <= t->n_threads)
        return SW_OK;
    thread_slot *slot = aligned_alloc(64, (size_t)(n + 1) * sizeof *slot);
    if (!slot)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for the tracker's %d thread buffers", n);
    memset(slot, 0, (size_t)(n + 1) * sizeof *slot);
    int ok = 1;
    for (int q = 0; q <= n; q++) {
        slot[q].row = malloc(3 * t->nx * sizeof(float));
        ok &= slot[q].row != NULL;
    }
    for (int q = 0; t->slot && q <= t->n_threads; q++) {   /* counts: the old overflow slot's into the new */
        const int to = q < t->n_threads ? q : n;
        slot[to].nonfinite |= t->slot[q].nonfinite;
        slot[to].seen += t->slot[q].seen;
        slot[to].updated += t->slot[q].updated;
    }
    if (!ok) {
        for (int q = 0; q <= n; q++) {
            free(slot[q].row);
        }
        free(slot);
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for the tracker's %d thread buffers", n);
    }
    free_slots(t);
    t->slot = slot;
    t->n_threads = n;
    return SW_OK;
}

size_t sw_tracker_state_parts(sw_tracker *t, void **ptr, size_t *bytes)
{
    for (int q = 1; q <= t->n_threads; q++) {   /* every count into slot 0 */
        t->slot[0].nonfinite |= t->slot[q].nonfinite;
        t->slot[0].seen += t->slot[q].seen;
        t->slot[0].updated += t->slot[q].updated;
        t->slot[q].nonfinite = 0;
        t->slot[q].seen = t->slot[q].updated = 0;
    }
    const size_t map = t->nx * t->ny * sizeof(float);
    float *maps[5] = {t->eta_max, t->eta_min, t->arrival, t->eta_max_time, t->speed2_max};
    for (int k = 0; k < 5; k++) {
        ptr[k] = maps[k];
        bytes[k] = map;
    }
    ptr[5] = t->seg;
    bytes[5] = t->ny * t->n_seg * sizeof *t->seg;
    ptr[6] = &t->slot[0].seen;
    bytes[6] = sizeof t->slot[0].seen;
    ptr[7] = &t->slot[0].updated;
    bytes[7] = sizeof t->slot[0].updated;
    ptr[8] = &t->slot[0].nonfinite;
    bytes[8] = sizeof t->slot[0].nonfinite;
    return SW_TRACKER_STATE_PARTS;
}

void sw_tracker_free(sw_tracker *t)
{
    if (!t)
        return;
    free(t->eta_max);
    free(t->eta_min);
    free(t->arrival);
    free(t->eta_max_time);
    free(t->speed2_max);
    free_slots(t);
    free(t->seg);
    free(t->seg_all_wet);
    free(t->out);
    free(t);
}

size_t sw_tracker_bytes_per_cell(void) { return 5 * sizeof(float); }

sw_status sw_tracker_create(const sw_model *m, double threshold_m, int n_threads, sw_tracker **out,
                            sw_error *err)
{
    *out = NULL;
    const sw_grid *g = sw_model_grid(m);
    size_t n = sw_grid_cells(g);
    sw_tracker *t = calloc(1, sizeof *t);
    if (!t)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory allocating the arrival tracker");
    t->nx = g->nx;
    t->ny = g->ny;
    t->threshold = (float)threshold_m;
    t->floor = (float)fmin(1e-6, threshold_m / 100);
    t->eta_max = malloc(n * sizeof(float));
    t->eta_min = malloc(n * sizeof(float));
    t->arrival = malloc(n * sizeof(float));
    t->eta_max_time = malloc(n * sizeof(float));
    t->speed2_max = malloc(n * sizeof(float));
    t->n_seg = (g->nx + SEG - 1) / SEG;
    t->seg = malloc(g->ny * t->n_seg * sizeof *t->seg);
    t->seg_all_wet = malloc(g->ny * t->n_seg);
    t->wet = sw_model_wet(m);
    if (!t->eta_max || !t->eta_min || !t->arrival || !t->eta_max_time || !t->speed2_max || !t->seg || !t->seg_all_wet
        || ensure_slots(t, n_threads < 1 ? 1 : n_threads, NULL) != SW_OK) {
        sw_tracker_free(t);
        return sw_fail(err, SW_ERR_NOMEM, "out of memory allocating the arrival tracker (%zu cells)", n);
    }
    SW_OMP(parallel for schedule(static))   /* first touch by the threads that update each row */
    for (size_t j = 0; j < t->ny; j++)
        for (size_t k = j * t->nx; k < (j + 1) * t->nx; k++) {
            t->eta_max[k] = -INFINITY;
            t->eta_min[k] = INFINITY;
            t->arrival[k] = NAN;
            t->eta_max_time[k] = 0.0f;
            t->speed2_max[k] = 0.0f;
        }
    for (size_t q = 0; q < g->ny * t->n_seg; q++) {   /* anything may change: every segment updates */
        t->seg[q] = (seg_summary){.up = -INFINITY, .down = INFINITY, .faster = -1, .waiting = 1};
        const size_t j = q / t->n_seg, a = (q % t->n_seg) * SEG, b = a + SEG < g->nx ? a + SEG : g->nx;
        unsigned char all = 1;
        for (size_t i = a; i < b; i++)
            all &= t->wet[j * g->nx + i] != 0;
        t->seg_all_wet[q] = all;
    }
    t->all_maps = 1;
    sw_tracker_update(t, m);
    t->all_maps = 0;
    *out = t;
    return SW_OK;
}

/* The maps a segment's update rewrites: those whose trigger a new value passed (seg_summary). */
enum { MAP_MAX = 1, MAP_MIN = 2, MAP_SPEED = 4, MAP_ARRIVAL = 8, MAP_ALL = 15 };

/* The maps MAX, MIN and SPEED that `which` names, and the check for NaN and Inf, in one pass over cells
 * a .. b-1: update_cells' loops for those maps fused, so that the row values and the wet mask are read
 * once. A map's value is stored back unchanged where the cell does not pass it (the same bits). */
static inline __attribute__((always_inline)) int fused_maps(sw_tracker *t, size_t j, size_t a, size_t b,
                                                            const float *restrict e, const float *restrict s2c,
                                                            float now, seg_summary *sum,
                                                            const int do_max, const int do_min, const int do_speed,
                                                            const int all_wet)
{
    const size_t r = j * t->nx;
    const float fl = t->floor;
    const unsigned char *restrict wet = t->wet + r;
    float *restrict mx = t->eta_max + r, *restrict tmx = t->eta_max_time + r, *restrict mn = t->eta_min + r;
    float *restrict sp = t->speed2_max + r;
    float lo_max = INFINITY, hi_min = -INFINITY, lo_sp = INFINITY;
    int bad = 0;
    SW_OMP(simd reduction(min : lo_max, lo_sp) reduction(max : hi_min) reduction(| : bad))
    for (size_t i = a; i < b; i++) {
        const float s2_raw = s2c[i];
        bad |= !(fabsf(e[i]) <= FLT_MAX) | !(s2_raw <= FLT_MAX);   /* NaN or Inf in the state */
        const float ei = fabsf(e[i]) < fl ? 0.0f : e[i];
        const int w = all_wet || wet[i] != 0;   /* all_wet: a constant, the mask not read */
        if (do_max) {
            const float old = mx[i];
            const int higher = ei > old;
            const float m = higher ? ei : old;
            mx[i] = m;
            if (higher)
                tmx[i] = now;
            lo_max = w && m < lo_max ? m : lo_max;
        }
        if (do_min) {
            const float old = mn[i];
            const float m = ei < old ? ei : old;
            mn[i] = m;
            hi_min = w && m > hi_min ? m : hi_min;
        }
        if (do_speed) {
            const float s2 = s2_raw < SPEED2_FLOOR ? 0.0f : s2_raw, old = sp[i];
            const float m = s2 > old ? s2 : old;
            sp[i] = m;
            lo_sp = w && m < lo_sp ? m : lo_sp;
        }
    }
    if (do_max)
        sum->up = trigger(lo_max, fl);
    if (do_min)
        sum->down = -trigger(-hi_min, fl);
    if (do_speed)
        sum->faster = trigger(lo_sp, SPEED2_FLOOR);
    return bad;
}

/* Folds cells [a, b) of row j (centre elevations e and squared speeds s2, indexed from the row's start) into the maps
 * named by `which` (MAP_...), cell by cell, and renews their parts of the segment's summary. A map
 * whose trigger no value passed cannot change (seg_summary), so it is neither read nor written and its
 * part of the summary stays as it is: the maps and the summary are those of updating every map. A cell
 * is written only where its map changes (a masked store: lines with no change stay clean), so a
 * segment where only the minimum is falling costs one map's traffic, not five. Returns 1 when a value
 * is NaN or infinite. A state that blows up passes through ever larger values, which make its segments
 * update, so checking here finds it without a test on every cell of every step. */
static int update_cells(sw_tracker *t, size_t j, size_t a, size_t b, const float *restrict e,
                         const float *restrict s2, float now, unsigned which,
                         seg_summary *sum)
{
    const size_t r = j * t->nx;
    const float thr = t->threshold, fl = t->floor;
    const unsigned char *restrict wet = t->wet + r;
    int bad;
    const int all = t->seg_all_wet[j * t->n_seg + a / SEG];
    /* one copy of the pass for each set of maps, with and without the wet mask */
#define FUSED(mx, mn, sp) (all ? fused_maps(t, j, a, b, e, s2, now, sum, mx, mn, sp, 1) \
                               : fused_maps(t, j, a, b, e, s2, now, sum, mx, mn, sp, 0))
    switch (which & (MAP_MAX | MAP_MIN | MAP_SPEED)) {
    case MAP_MAX: bad = FUSED(1, 0, 0); break;
    case MAP_MIN: bad = FUSED(0, 1, 0); break;
    case MAP_MAX | MAP_MIN: bad = FUSED(1, 1, 0); break;
    case MAP_SPEED: bad = FUSED(0, 0, 1); break;
    case MAP_MAX | MAP_SPEED: bad = FUSED(1, 0, 1); break;
    case MAP_MIN | MAP_SPEED: bad = FUSED(0, 1, 1); break;
    case MAP_MAX | MAP_MIN | MAP_SPEED: bad = FUSED(1, 1, 1); break;
    default: bad = FUSED(0, 0, 0); break;
    }
#undef FUSED
    if (which & MAP_ARRIVAL) {
        float *restrict arr = t->arrival + r;
        int waiting = 0;
        SW_OMP(simd reduction(| : waiting))
        for (size_t i = a; i < b; i++) {
            const float ei = fabsf(e[i]) < fl ? 0.0f : e[i], old = arr[i];
            const int unset = old != old;   /* NaN until first reached */
            const int arrives = unset & (fabsf(ei) >= thr);   /* & and |, not && and ||: no branch per cell */
            if (arrives)
                arr[i] = now;
            waiting |= (all | (wet[i] != 0)) & unset & !arrives;
        }
        sum->waiting = waiting;
    }
    return bad;
}

/* The row update with thread slot `sl` (see the top of this file). */
static void track_row_in(sw_tracker *t, thread_slot *sl, const sw_model *m, size_t j, double time_s,
                         const sw_row_values *pre)
{
    const size_t nx = t->nx;
    const float now = (float)time_s, thr = t->threshold;
    const float *e, *s2;
    float *row = sl->row;
    if (pre) {   /* the step made the values and the segments' extremes */
        e = pre->eta;
        s2 = pre->speed2;
    } else {
        float *uu = row + nx, *vv = row + 2 * nx;
        sw_model_centre_row_f32(m, j, row, uu, vv);
        SW_OMP(simd)
        for (size_t i = 0; i < nx; i++)
            uu[i] = sw_speed2(uu[i], vv[i]);   /* in place: the squared speed */
        e = row;
        s2 = uu;
    }
    int bad = 0;
    long long updated = 0;
    for (size_t q = 0; q < t->n_seg; q++) {
        const size_t a = q * SEG, b = a + SEG < nx ? a + SEG : nx;
        float hi, lo, top_s2;
        if (pre) {
            hi = pre->hi[q];
            lo = pre->lo[q];
            top_s2 = pre->top_speed2[q];
        } else {
            sw_row_extremes(e, s2, a, b, &hi, &lo, &top_s2);
        }
        seg_summary *sum = &t->seg[j * t->n_seg + q];
        /* A cell's maps change only when its new value passes them, or it arrives; if no raw value
         * passes the segment's triggers, no floored value passes its own cell's maps (seg_summary).
         * |eta| >= thr (> floor) is the same test raw or floored. */
        const unsigned which = t->all_maps ? MAP_ALL
            : (hi > sum->up ? MAP_MAX : 0u) | (lo < sum->down ? MAP_MIN : 0u) | (top_s2 > sum->faster ? MAP_SPEED : 0u)
              | (sum->waiting && (hi >= thr || -lo >= thr) ? MAP_ARRIVAL : 0u);
        if (which) {
            bad |= update_cells(t, j, a, b, e, s2, now, which, sum);
            updated++;
        }
    }
    if (bad) {
        if (!sl->nonfinite || time_s < sl->bad_time) {
            sl->bad_row = j;
            sl->bad_time = time_s;
        }
        sl->nonfinite = 1;
    }
    sl->seen += (long long)t->n_seg;
    sl->updated += updated;
}

/* The row update (see the top of this file): the centre values of row j, at time_s, into the maps.
 * A sw_row_observer (model.h). Threads beyond the slots (a team larger than the tracker was made or
 * attached for) share the overflow slot one at a time: correct, slow, and never the case in sw_run. */
void sw_tracker_observe(void *ctx, const sw_model *m, size_t j, double time_s, const sw_row_values *pre)
{
    sw_tracker *t = ctx;
    const int tid = omp_get_thread_num();
    if (tid < t->n_threads) {
        track_row_in(t, &t->slot[tid], m, j, time_s, pre);
    } else {
        SW_OMP(critical(sw_tracker_overflow))
        track_row_in(t, &t->slot[t->n_threads], m, j, time_s, pre);
    }
}

void sw_tracker_update(sw_tracker *t, const sw_model *m)
{
    const double now = sw_model_time(m);
    const unsigned int saved = sw_fp_flush();   /* the mode the attached update runs in (model.c) */
    SW_OMP(for schedule(static))
    for (size_t j = 0; j < t->ny; j++)
        sw_tracker_observe(t, m, j, now, NULL);
    sw_fp_restore(saved);
}

sw_status sw_tracker_attach(sw_tracker *t, sw_model *m, sw_error *err)
{
    if (t) {
        sw_status rc = ensure_slots(t, omp_get_max_threads(), err);
        if (rc != SW_OK)
            return rc;
    }
    sw_model_set_observer(m, t ? sw_tracker_observe : NULL, t);
    return SW_OK;
}

void sw_tracker_segments(const sw_tracker *t, long long *seen, long long *updated)
{
    *seen = *updated = 0;
    for (int q = 0; q <= t->n_threads; q++) {
        *seen += t->slot[q].seen;
        *updated += t->slot[q].updated;
    }
}

int sw_tracker_nonfinite_row(const sw_tracker *t, size_t *row, double *time_s)
{
    int bad = 0;
    for (int q = 0; q <= t->n_threads; q++) {
        const thread_slot *sl = &t->slot[q];
        if (sl->nonfinite && (!bad || sl->bad_time < *time_s || (sl->bad_time == *time_s && sl->bad_row < *row))) {
            *row = sl->bad_row;
            *time_s = sl->bad_time;
            bad = 1;
        }
    }
    return bad;
}

int sw_tracker_nonfinite(const sw_tracker *t)
{
    int bad = 0;
    for (int q = 0; q <= t->n_threads; q++)
        bad |= t->slot[q].nonfinite;
    return bad;
}

sw_status sw_tracker_maps(sw_tracker *t, const sw_model *m, const double *depth_m, sw_map_set *maps, sw_error *err)
{
    const size_t n = t->nx * t->ny;
    const unsigned char *wet = sw_model_wet(m);
    if (!t->out && !(t->out = malloc(5 * n * sizeof(double))))
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for the maps (%zu cells)", n);
    double *mx = t->out, *mn = mx + n, *arr = mn + n, *tmx = arr + n, *sp = tmx + n;
    for (size_t k = 0; k < n; k++) {
        mx[k] = wet[k] ? t->eta_max[k] : NAN;
        mn[k] = wet[k] ? t->eta_min[k] : NAN;
        arr[k] = wet[k] ? t->arrival[k] : NAN;
        tmx[k] = wet[k] ? t->eta_max_time[k] : NAN;
        sp[k] = wet[k] ? sqrt((double)t->speed2_max[k]) : NAN;
    }
    maps->grid = sw_model_grid(m);
    maps->depth_m = depth_m;
    maps->wet = wet;
    maps->eta_max_m = mx;
    maps->eta_min_m = mn;
    maps->arrival_s = arr;
    maps->eta_max_time_s = tmx;
    maps->speed_max_ms = sp;
    return SW_OK;
}

double sw_tracker_max_abs(const sw_tracker *t)
{
    double worst = 0.0;
    for (size_t k = 0; k < t->nx * t->ny; k++)
        if (!isnan(t->eta_max[k]) && isfinite(t->eta_max[k]))
            worst = fmax(worst, fmax(fabs(t->eta_max[k]), fabs(t->eta_min[k])));
    return worst;
}

double sw_tracker_noise(const sw_tracker *t, const unsigned char *wet)
{
    const size_t nx = t->nx, ny = t->ny;
    const float *e = t->eta_max;
    double hp2 = 0, e2 = 0;
    for (size_t j = 1; j + 1 < ny; j++)
        for (size_t i = 1; i + 1 < nx; i++) {
            int all_wet = 1;
            double smooth = 0;
            for (int dj = -1; dj <= 1; dj++)
                for (int di = -1; di <= 1; di++) {
                    size_t k = (j + (size_t)dj) * nx + (i + (size_t)di);
                    all_wet &= wet[k];
                    smooth += (di ? 0.25 : 0.5) * (dj ? 0.25 : 0.5) * e[k];
                }
            if (!all_wet)
                continue;
            double c = e[j * nx + i];
            hp2 += (c - smooth) * (c - smooth);
            e2 += c * c;
        }
    return e2 > 0 ? sqrt(hp2 / e2) : 0;
}
