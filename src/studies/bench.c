/* bench.c - step rates against STREAM triad, interleaved in one process (see bench.h). */
#define _POSIX_C_SOURCE 200809L
#include "studies/bench.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "model/layout.h"
#include "model/model.h"
#include "base/cpu_share.h"
#include "base/omp_compat.h"
#include "base/real.h"
#include "observers/tracker.h"
#include "base/fpmode.h"
#include "studies/bench_reference.h"
#include "forcing/forcing.h"
#include "forcing/gridded.h"
#include "inputs/scenario.h"

#define MAX_ROUNDS 32
#define MEASURE_S 0.4   /* aim for measurements of about this long */
#define PAIRS 4         /* slices of the plain step and of what it is compared with, taken turn about */

typedef struct {
    double v[MAX_ROUNDS];
    int n;
} samples;

static sw_bench_stat summarise(const samples *s)
{
    return sw_bench_summary(s->v, s->n);
}

static void push(samples *s, double x)
{
    if (s->n < MAX_ROUNDS)
        s->v[s->n++] = x;
}


double sw_bench_triad(size_t n, int repeats)
{
    double *a = malloc(n * sizeof(double)), *b = malloc(n * sizeof(double)), *c = malloc(n * sizeof(double));
    double best = 0;
    if (a && b && c) {
        SW_OMP(parallel for schedule(static))
        for (size_t i = 0; i < n; i++) {   /* first touch by the threads that will use each page */
            a[i] = 0;
            b[i] = 1;
            c[i] = 2;
        }
        const double s = 3.0;
        for (int r = 0; r < repeats; r++) {
            double t0 = omp_get_wtime();
            SW_OMP(parallel for simd schedule(static))
            for (size_t i = 0; i < n; i++)
                a[i] = b[i] + s * c[i];
            double t = omp_get_wtime() - t0;
            if (t > 0 && 3.0 * 8.0 * (double)n / t > best)
                best = 3.0 * 8.0 * (double)n / t;
        }
        if (a[n / 2] != 7.0)   /* keep the loop honest */
            best = 0;
    }
    free(a);
    free(b);
    free(c);
    return best;
}

/* The source's e-folding radius, cells: a 20 km hump on 1 km cells, as a fault or a landslide makes
 * one, small beside the basin as in a real domain. Tracking costs most where its maps still change
 * (rising and falling water), so it is measured a second time on a moving source (bench_moving). */
#define SOURCE_CELLS 20.0

/* The moving source's e-folding radius as a share of the basin's side: a 1 m hump of radius n / 8 is
 * above the tracker's floor (1 micrometre: out to 3.7 radii) over two thirds of the grid, all of it
 * rising or falling from the first step. */
#define MOVING_SOURCE_SHARE 0.125

/* The terms of the "with terms" figures: rotation at about 43 deg and a typical linear friction rate. */
static const sw_terms_config BENCH_TERMS = {.rotation = SW_ROTATION_F_PLANE, .f0_s = 1e-4,
                                            .friction = SW_FRICTION_LINEAR, .friction_rate_ms = 1e-3};

/* A square basin of n x n cells, 1000 m deep, with a 1 m hump of e-folding radius source_cells at its
 * centre, at 90 % of the layout's limit, with the given terms (NULL: none); on a geographic grid (cells of
 * up to 1000 m of arc, from 10 N) when `geographic`. */
static sw_model *make_model_src(const sw_layout *lay, size_t n, sw_precision precision, const sw_terms_config *terms,
                                int geographic, double source_cells, sw_error *err)
{
    sw_grid g = {.nx = n, .ny = n, .dx_m = 1000, .dy_m = 1000};
    if (geographic) {   /* cells of 1000 m of arc (grid.h) from 10 N, fewer where 60 degrees of latitude
                         * would not hold n of them (the grid must stay clear of the pole) */
        const double deg = SW_EARTH_RADIUS_M * 3.14159265358979 / 180, d = fmin(1000, 60 * deg / (double)n);
        g = (sw_grid){.nx = n, .ny = n, .dx_m = d, .dy_m = d, .y0_m = 10 * deg, .kind = SW_GRID_GEOGRAPHIC,
                      .radius_m = SW_EARTH_RADIUS_M};
    }
    double *depth = malloc(n * n * sizeof(double));
    double *eta = malloc(n * n * sizeof(double));
    sw_model *m = NULL;
    if (!depth || !eta) {
        sw_fail(err, SW_ERR_NOMEM, "out of memory for a %zu x %zu benchmark grid", n, n);
    } else {
        SW_OMP(parallel for schedule(static))
        for (size_t j = 0; j < n; j++)
            for (size_t i = 0; i < n; i++) {
                double x = ((double)i - (double)n / 2) / source_cells, y = ((double)j - (double)n / 2) / source_cells;
                depth[j * n + i] = 1000;
                eta[j * n + i] = exp(-(x * x + y * y));
            }
        sw_model_config cfg = {.layout = lay, .grid = g, .depth_m = depth, .eta0_m = eta, .min_depth_m = 1,
                               .gravity_ms2 = 9.81, .precision = precision};
        if (terms)
            cfg.terms = *terms;
        cfg.dt_s = 0.9 * sw_model_dt_limit(lay, &g, depth, 1, 9.81, 2);   /* the same dt with or without terms */
        sw_model_create(&cfg, &m, err);
    }
    free(depth);
    free(eta);
    return m;
}

/* The same with the bench's hump (SOURCE_CELLS), on a projected grid or (geographic) a geographic one. */
static sw_model *make_model_on(const sw_layout *lay, size_t n, sw_precision precision, const sw_terms_config *terms,
                               int geographic, sw_error *err)
{
    return make_model_src(lay, n, precision, terms, geographic, SOURCE_CELLS, err);
}

static sw_model *make_model(const sw_layout *lay, size_t n, sw_precision precision, const sw_terms_config *terms,
                            sw_error *err)
{
    return make_model_on(lay, n, precision, terms, 0, err);
}

/* Seconds for `steps` steps as a run takes them (step, then the clock's tick), with arrival and
 * extreme tracking attached when t is not NULL, on `threads` threads. */
static double time_steps(sw_model *m, sw_tracker *t, int threads, int steps)
{
    omp_set_num_threads(threads);
    if (sw_tracker_attach(t, m, NULL) != SW_OK)   /* t = NULL detaches */
        return NAN;   /* no memory for the tracker's thread buffers: the figure reads NaN */
    double t0 = omp_get_wtime();
    SW_OMP(parallel)
    for (int k = 0; k < steps; k++) {
        sw_model_step(m);
        SW_OMP(single)
        sw_model_tick(m);
    }
    double wall = omp_get_wtime() - t0;
    sw_tracker_attach(NULL, m, NULL);
    return wall;
}

/* Seconds for `steps` steps as a run on a large grid takes them: in sweeps of k steps over memory
 * (sw_model_steps, which ticks the clock itself; the last sweep shorter when k does not divide steps),
 * with t attached when not NULL, on `threads` threads. */
static double time_sweeps(sw_model *m, sw_tracker *t, int threads, int steps, int k)
{
    omp_set_num_threads(threads);
    if (sw_tracker_attach(t, m, NULL) != SW_OK)
        return NAN;
    double t0 = omp_get_wtime();
    SW_OMP(parallel)
    for (int n = 0; n < steps; n += k)
        sw_model_steps(m, n + k <= steps ? k : steps - n);
    double wall = omp_get_wtime() - t0;
    sw_tracker_attach(NULL, m, NULL);
    return wall;
}

/* Steps rounded up to a whole number of sweeps of k (a timed slice of the blocked step ends on a sweep). */
static int whole_sweeps(int steps, int k)
{
    return (steps + k - 1) / k * k;
}

/* time_steps (k = 1) or time_sweeps (k > 1) with t attached, adding to *seen and *updated the row
 * segments those steps' updates looked at and rewrote maps in (sw_tracker_segments over these steps
 * only, not since the tracker's creation, whose first update rewrites every segment). */
static double time_tracked_steps(sw_model *m, sw_tracker *t, int threads, int steps, int k, long long *seen,
                                 long long *updated)
{
    long long s0, u0, s1, u1;
    sw_tracker_segments(t, &s0, &u0);
    const double wall = k > 1 ? time_sweeps(m, t, threads, steps, k) : time_steps(m, t, threads, steps);
    sw_tracker_segments(t, &s1, &u1);
    *seen += s1 - s0;
    *updated += u1 - u0;
    return wall;
}

/* The same as time_steps without tracking, through the pre-stepper C step (bench_reference.c). */
static double time_reference_steps(sw_model *m, int threads, int steps)
{
    omp_set_num_threads(threads);
    void (*step)(sw_model *) = sw_model_precision(m) == SW_SINGLE ? sw_bench_reference_c_step_f32
                                                                 : sw_bench_reference_c_step_f64;
    double t0 = omp_get_wtime();
    SW_OMP(parallel)
    {
        const unsigned int saved = sw_fp_flush();
        for (int k = 0; k < steps; k++) {
            step(m);
            SW_OMP(single)
            sw_model_tick(m);
        }
        sw_fp_restore(saved);
    }
    return omp_get_wtime() - t0;
}

/* 1 when the pre-stepper C step and the stepper leave the same bits after 50 steps of two models built
 * alike (a benchmark that checks its reference computes the same thing). */
static int reference_identical(size_t n, sw_precision precision, int threads)
{
    sw_model *a = make_model(sw_layout_find("C"), n, precision, NULL, NULL);
    sw_model *b = make_model(sw_layout_find("C"), n, precision, NULL, NULL);
    int same = a && b;
    if (same) {
        time_steps(a, NULL, threads, 50);
        time_reference_steps(b, threads, 50);
        for (size_t k = 0; k < n * n && same; k++) {
            const double x = sw_model_eta(a, k % n, k / n), y = sw_model_eta(b, k % n, k / n);
            same = memcmp(&x, &y, sizeof x) == 0;
        }
    }
    sw_model_free(a);
    sw_model_free(b);
    return same;
}

/* 1 when the first n parts at pa (bytes ba) and at pb (bytes bb), as sw_model_state_parts or
 * sw_tracker_state_parts give them, have the same sizes and the same bits, else 0. */
static int same_parts(size_t n, void *const *pa, const size_t *ba, void *const *pb, const size_t *bb)
{
    for (size_t q = 0; q < n; q++)
        if (ba[q] != bb[q] || memcmp(pa[q], pb[q], ba[q]) != 0)
            return 0;
    return 1;
}

/* 1 when 50 steps in sweeps of k (sw_model_steps; the last sweep shorter when k does not divide 50) and
 * 50 single steps leave the same bits, state and clock and tracking maps, on two n x n models of layout
 * lay built alike, each with a tracker attached, on `threads` threads: the blocked figures time the same
 * computation as the one-step ones. 0 when they differ or there was no memory to check. */
static int blocked_identical(const sw_layout *lay, size_t n, sw_precision precision, int threads, int k)
{
    enum { STEPS = 50 };
    sw_model *a = make_model(lay, n, precision, NULL, NULL), *b = make_model(lay, n, precision, NULL, NULL);
    sw_tracker *ta = NULL, *tb = NULL;
    int same = a && b && sw_tracker_create(a, 0.01, threads, &ta, NULL) == SW_OK
               && sw_tracker_create(b, 0.01, threads, &tb, NULL) == SW_OK;
    if (same) {
        long long seen = 0, updated = 0;
        same = time_tracked_steps(a, ta, threads, STEPS, 1, &seen, &updated) >= 0
               && time_tracked_steps(b, tb, threads, STEPS, k, &seen, &updated) >= 0;   /* NaN: no memory */
    }
    if (same) {
        void *pa[SW_MODEL_STATE_PARTS], *pb[SW_MODEL_STATE_PARTS];
        size_t ba[SW_MODEL_STATE_PARTS], bb[SW_MODEL_STATE_PARTS];
        const size_t na = sw_model_state_parts(a, pa, ba), nb = sw_model_state_parts(b, pb, bb);
        same = na == nb && same_parts(na, pa, ba, pb, bb);
    }
    if (same) {
        void *pa[SW_TRACKER_STATE_PARTS], *pb[SW_TRACKER_STATE_PARTS];
        size_t ba[SW_TRACKER_STATE_PARTS], bb[SW_TRACKER_STATE_PARTS];
        sw_tracker_state_parts(ta, pa, ba);
        sw_tracker_state_parts(tb, pb, bb);
        same = same_parts(6, pa, ba, pb, bb);   /* the five maps and the segment summaries, not the counts */
    }
    sw_tracker_free(ta);
    sw_tracker_free(tb);
    sw_model_free(a);
    sw_model_free(b);
    return same;
}

/* Steps that make a measurement last about MEASURE_S, from one timed step. */
static int steps_for(sw_model *m, int threads)
{
    double t = time_steps(m, NULL, threads, 1);
    int s = t > 0 ? (int)(MEASURE_S / t) : 100;
    return s < 2 ? 2 : s > 100000 ? 100000 : s;
}

/* Runs the NumPy script; its cell-update rate, or 0 on failure. */
static double numpy_rate(const sw_bench_options *opt, size_t n, int steps)
{
    char cmd[2048];
    snprintf(cmd, sizeof cmd, "'%s' '%s' %zu %d %s 2>/dev/null", opt->python, opt->numpy_script, n, steps,
             opt->precision == SW_SINGLE ? "float32" : "float64");
    FILE *p = popen(cmd, "r");
    if (!p)
        return 0;
    char buf[4096];
    size_t got = fread(buf, 1, sizeof buf - 1, p);
    buf[got] = '\0';
    if (pclose(p) != 0)
        return 0;
    cJSON *o = cJSON_Parse(buf);
    const cJSON *r = cJSON_GetObjectItemCaseSensitive(o, "cell_updates_per_s");
    double rate = cJSON_IsNumber(r) ? r->valuedouble : 0;
    cJSON_Delete(o);
    return rate;
}

static void say(const sw_bench_options *opt, const char *what)
{
    if (opt->progress)
        opt->progress(what, opt->user);
}

static void bench_forcing(const sw_bench_options *opt, const sw_layout *lay, sw_bench_result *res, sw_model *big,
                          sw_bench_layout *out);

/* All figures of one layout, interleaved with triad. */
static void bench_geographic(const sw_bench_options *opt, const sw_layout *lay, sw_bench_result *res, sw_model *big,
                             sw_bench_layout *out);
static void bench_moving(const sw_bench_options *opt, const sw_layout *lay, sw_bench_result *res, int slice, int k,
                         sw_bench_layout *out);

static sw_status bench_layout(const sw_bench_options *opt, const sw_layout *lay, sw_bench_result *res,
                              sw_bench_layout *out, sw_error *err)
{
    char what[128];
    const int top = res->threads[res->n_threads - 1];
    const size_t triad_n = res->working_set_bytes / 24;
    snprintf(out->layout, sizeof out->layout, "%s", lay->name);
    out->values_per_cell = lay->stream_values;

    snprintf(what, sizeof what, "layout %s: building the %zu x %zu grid", lay->name, res->n_large, res->n_large);
    say(opt, what);
    sw_model *big = make_model(lay, res->n_large, opt->precision, NULL, err);
    sw_model *small = big ? make_model(lay, res->n_small, opt->precision, NULL, err) : NULL;
    /* a second large model for the step with terms (chosen at creation); without memory for it, no figure */
    sw_model *big_terms = small ? make_model(lay, res->n_large, opt->precision, &BENCH_TERMS, NULL) : NULL;
    const int is_c = !strcmp(lay->name, "C");
    sw_tracker *tr = NULL;
    if (small && sw_tracker_create(big, 0.01, top, &tr, err) != SW_OK)
        tr = NULL;
    if (!big || !small || !tr) {
        sw_tracker_free(tr);
        sw_model_free(small);
        sw_model_free(big);
        return err->code ? err->code : sw_fail(err, SW_ERR_NOMEM, "out of memory for the benchmark");
    }
    int steps_big = steps_for(big, top), steps_small = steps_for(small, top);
    /* several steps per sweep: the option's k, else the one a run on this grid with these threads takes */
    size_t window = 0;
    out->steps_per_sweep_auto = sw_model_wave_auto(big, top, res->llc_bytes, &window);
    const int k = opt->steps_per_sweep > 0 ? opt->steps_per_sweep : out->steps_per_sweep_auto;
    out->steps_per_sweep = k;
    out->wave_window_bytes = k > 1 && out->steps_per_sweep_auto > 1
        ? window / (size_t)out->steps_per_sweep_auto * (size_t)k : 0;   /* the window grows as k */
    const int slice_blocked = whole_sweeps(steps_big, k);
    samples lgt = {0}, rt = {0}, ref = {0}, rr = {0}, lb = {0}, rb = {0};
    const double cells = (double)res->n_large * (double)res->n_large;
    const double cells_small = (double)res->n_small * (double)res->n_small;
    samples tri = {0}, lg = {0}, lt = {0}, sm = {0}, sc[SW_BENCH_MAX_THREADS] = {{{0}, 0}}, np = {0}, npc = {0};
    long long seen = 0, updated = 0;   /* row segments of the timed tracked steps (time_tracked_steps) */
    int with_numpy = opt->numpy_script && !strcmp(lay->name, "C");
    for (int r = 0; r < opt->rounds; r++) {
        snprintf(what, sizeof what, "layout %s: round %d of %d", lay->name, r + 1, opt->rounds);
        say(opt, what);
        omp_set_num_threads(top);
        push(&tri, sw_bench_triad(triad_n, 3));
        /* the plain step and what it is compared with, in PAIRS slices taken turn about (the order
         * alternating from round to round): a shared machine's slow spells then fall on both alike */
        double t_plain = 0, t_with = 0, t_old = 0, t_blocked = 0;
        const int slice = steps_big;
        for (int q = 0; q < PAIRS; q++) {
            const int later = (r + q) % 2;
            if (later && big_terms)
                t_with += time_steps(big_terms, NULL, top, slice);
            if (later && is_c)
                t_old += time_reference_steps(big, top, slice);
            if (later)
                t_blocked += time_sweeps(big, NULL, top, slice_blocked, k);
            t_plain += time_steps(big, NULL, top, slice);
            if (!later && big_terms)
                t_with += time_steps(big_terms, NULL, top, slice);
            if (!later && is_c)
                t_old += time_reference_steps(big, top, slice);
            if (!later)
                t_blocked += time_sweeps(big, NULL, top, slice_blocked, k);
        }
        const double plain = cells * slice * PAIRS / t_plain;
        push(&lg, plain);
        const double blocked = cells * slice_blocked * PAIRS / t_blocked;
        push(&lb, blocked);
        push(&rb, blocked / plain);
        if (big_terms) {
            const double with = cells * slice * PAIRS / t_with;
            push(&lgt, with);
            push(&rt, with / plain);
        }
        if (is_c) {
            const double old = cells * slice * PAIRS / t_old;
            push(&ref, old);
            push(&rr, plain / old);
        }
        push(&lt, cells * steps_big / time_tracked_steps(big, tr, top, steps_big, 1, &seen, &updated));
        push(&sm, cells_small * steps_small / time_steps(small, NULL, top, steps_small));
        for (int q = 0; q < res->n_threads; q++)
            push(&sc[q], cells * steps_big / time_steps(big, NULL, res->threads[q], steps_big));
        if (with_numpy) {
            double rate = numpy_rate(opt, res->n_large, 2);
            if (rate > 0) {
                push(&np, rate);
                push(&npc, cells * steps_big / time_steps(big, NULL, top, steps_big));
            }
        }
    }
    out->triad = summarise(&tri);
    out->large = summarise(&lg);
    out->large_terms = summarise(&lgt);
    out->terms_ratio = summarise(&rt).median;
    out->reference = summarise(&ref);
    out->reference_ratio = summarise(&rr).median;
    if (is_c)
        out->reference_identical = reference_identical(res->n_small, opt->precision, top);
    out->large_blocked = summarise(&lb);
    out->blocked_ratio = summarise(&rb).median;
    out->blocked_bandwidth = out->large_blocked.median * lay->stream_values * (double)res->real_bytes;
    out->blocked_bandwidth_ratio = out->triad.median > 0 ? out->blocked_bandwidth / out->triad.median : 0;
    out->blocked_identical = blocked_identical(lay, res->n_small, opt->precision, top, k);
    out->large_tracked = summarise(&lt);
    out->small = summarise(&sm);
    for (int q = 0; q < res->n_threads; q++)
        out->scaling[q] = summarise(&sc[q]);
    out->bandwidth = out->large.median * lay->stream_values * (double)res->real_bytes;
    out->bandwidth_ratio = out->triad.median > 0 ? out->bandwidth / out->triad.median : 0;
    out->tracking_cost = out->large_tracked.median > 0 ? out->large.median / out->large_tracked.median - 1 : 0;
    out->tracking_source_cells = SOURCE_CELLS;
    out->tracking_active = seen > 0 ? (double)updated / (double)seen : 0;
    out->efficiency_2 = out->scaling[0].median > 0
        ? out->scaling[res->n_threads - 1].median / (out->scaling[0].median * top / res->threads[0]) : 0;
    if (with_numpy) {
        res->numpy = summarise(&np);
        res->numpy_c = summarise(&npc);
        res->numpy_ratio = res->numpy.median > 0 ? res->numpy_c.median / res->numpy.median : 0;
        if (np.n == 0)
            snprintf(res->numpy_note, sizeof res->numpy_note, "NumPy run failed (is %s with numpy installed?)",
                     opt->python);
    }
    sw_tracker_free(tr);
    sw_model_free(big_terms);
    sw_model_free(small);
    /* after big_terms is freed: the moving model takes its room; half slices (a ratio needs no more, and the
     * tracked slices of a moving grid take three times as long) */
    bench_moving(opt, lay, res, steps_big / 2 > 2 ? steps_big / 2 : 2, k, out);
    bench_forcing(opt, lay, res, big, out);   /* and so does the forced model */
    bench_geographic(opt, lay, res, big, out);
    sw_model_free(big);
    return SW_OK;
}

/* ---- tracking on a moving source ------------------------------------------------------------------------ */

#define MOVING_PAIRS 1   /* slices of the plain and of the tracked step per round, taken turn about (the
                          * order alternating from round to round); PAIRS would add a fifth to the time */

/* Tracking's cost where most of the grid moves: a model of the large grid's size with a hump of
 * e-folding radius MOVING_SOURCE_SHARE x n cells, stepped in slices of `slice` steps (the large grid's
 * measurement, steps_for), plain and with its own tracker attached, taken turn about (the tracker skips
 * the plain slices' states: its maps are not a run's, its cost per step is); then, in the same round, the
 * same pair in sweeps of k steps (slices of whole sweeps), its order alternating alike. Each cost is the
 * median of the rounds' ratios; each share in motion that of the segments its tracked slices rewrote maps
 * in. Without memory for the model or its tracker the figures stay n = 0. */
static void bench_moving(const sw_bench_options *opt, const sw_layout *lay, sw_bench_result *res, int slice, int k,
                         sw_bench_layout *out)
{
    const int top = res->threads[res->n_threads - 1];
    const double cells = (double)res->n_large * (double)res->n_large;
    const double radius = MOVING_SOURCE_SHARE * (double)res->n_large;
    sw_model *mv = make_model_src(lay, res->n_large, opt->precision, NULL, 0, radius, NULL);
    sw_tracker *tr = NULL;
    if (!mv || sw_tracker_create(mv, 0.01, top, &tr, NULL) != SW_OK) {
        sw_model_free(mv);
        return;
    }
    char what[128];
    samples pl = {0}, tk = {0}, ra = {0}, bp = {0}, bt = {0}, br = {0};
    long long seen = 0, updated = 0, seen_b = 0, updated_b = 0;
    const int slice_b = whole_sweeps(slice, k);
    for (int r = 0; r < opt->rounds; r++) {
        snprintf(what, sizeof what, "layout %s: moving-source tracking round %d of %d", lay->name, r + 1, opt->rounds);
        say(opt, what);
        double t_plain = 0, t_tracked = 0;
        for (int q = 0; q < MOVING_PAIRS; q++) {
            const int later = (r + q) % 2;
            if (later)
                t_tracked += time_tracked_steps(mv, tr, top, slice, 1, &seen, &updated);
            t_plain += time_steps(mv, NULL, top, slice);
            if (!later)
                t_tracked += time_tracked_steps(mv, tr, top, slice, 1, &seen, &updated);
        }
        push(&pl, cells * slice * MOVING_PAIRS / t_plain);
        push(&tk, cells * slice * MOVING_PAIRS / t_tracked);
        push(&ra, t_tracked / t_plain);
        double tb_plain = 0, tb_tracked = 0;
        for (int q = 0; q < MOVING_PAIRS; q++) {
            const int later = (r + q) % 2;
            if (later)
                tb_tracked += time_tracked_steps(mv, tr, top, slice_b, k, &seen_b, &updated_b);
            tb_plain += time_sweeps(mv, NULL, top, slice_b, k);
            if (!later)
                tb_tracked += time_tracked_steps(mv, tr, top, slice_b, k, &seen_b, &updated_b);
        }
        push(&bp, cells * slice_b * MOVING_PAIRS / tb_plain);
        push(&bt, cells * slice_b * MOVING_PAIRS / tb_tracked);
        push(&br, tb_tracked / tb_plain);
    }
    out->moving_source_cells = radius;
    out->large_moving = summarise(&pl);
    out->large_moving_tracked = summarise(&tk);
    out->moving_tracking_cost = summarise(&ra).median - 1;
    out->moving_active = seen > 0 ? (double)updated / (double)seen : 0;
    out->large_moving_blocked = summarise(&bp);
    out->large_moving_blocked_tracked = summarise(&bt);
    out->moving_blocked_tracking_cost = summarise(&br).median - 1;
    out->moving_blocked_active = seen_b > 0 ? (double)updated_b / (double)seen_b : 0;
    sw_tracker_free(tr);
    sw_model_free(mv);
}

/* ---- surface forcing ------------------------------------------------------------------------------------ */

/* The forcing figures' storm: an invented track across the bench basin over FORCING_SPAN_S; model time is
 * taken modulo the span, so a long measurement keeps rebuilding slabs at the run's own cadence. */
#define FORCING_SPAN_S (2 * 86400.0)

typedef struct {
    char dir[64];              /* a scratch folder for the track and the weather file ("" when none) */
    sw_scenario storm, weather;/* scenarios that name them (only their forcing is used) */
    int have_storm, have_weather;
} forcing_files;

static sw_status bench_weather_fill(void *ctx, size_t k, double time_s, const sw_grid *g, float *p, float *u,
                                    float *v, sw_error *err)
{
    (void)ctx, (void)k, (void)err;
    const double w = 2 * 3.14159265358979323846 * time_s / FORCING_SPAN_S;
    for (size_t j = 0; j < g->ny; j++)
        for (size_t i = 0; i < g->nx; i++) {
            const double a = (double)i / (double)g->nx, b = (double)j / (double)g->ny;
            p[j * g->nx + i] = (float)(101325 - 2000 * sin(3 * a + w) * cos(2 * b));
            u[j * g->nx + i] = (float)(12 * cos(2 * b + w));
            v[j * g->nx + i] = (float)(8 * sin(3 * a - w));
        }
    return SW_OK;
}

/* Writes the storm's track and a weather file over an n x n basin of 1 km cells into a scratch folder,
 * and parses a scenario for each. What fails leaves that figure out (have_* = 0). */
static void forcing_files_make(forcing_files *ff, size_t n)
{
    memset(ff, 0, sizeof *ff);
    const char *tmp = getenv("TMPDIR");
    snprintf(ff->dir, sizeof ff->dir, "%.40s/shoreward-bench-XXXXXX", tmp && *tmp ? tmp : "/tmp");
    if (!mkdtemp(ff->dir)) {
        ff->dir[0] = '\0';
        return;
    }
    const double L = (double)n;   /* km */
    char path[128], text[1024];
    snprintf(path, sizeof path, "%s/track.txt", ff->dir);
    FILE *f = fopen(path, "w");
    if (f) {
        fprintf(f, "# an invented storm crossing the benchmark basin\ntime[h] x[km] y[km] pressure_drop[hPa] rmax[km] B\n"
                   "0 %.1f %.1f 50 80 1.3\n48 %.1f %.1f 50 80 1.3\n", 0.2 * L, 0.3 * L, 0.8 * L, 0.7 * L);
        const int bad = fclose(f) != 0;
        snprintf(text, sizeof text, "[run]\nduration = 2 d\n[grid]\nnx = 2\nny = 2\ndx = 1 km\n[seabed]\ndeep = 1 km\n"
                                    "[storm]\ntrack = track.txt\n");
        ff->have_storm = !bad && sw_scenario_parse(text, "<bench storm>", ff->dir, &ff->storm, NULL) == SW_OK;
    }
    const sw_grid fg = {.nx = 101, .ny = 101, .dx_m = (L + 4) * 1000 / 100, .dy_m = (L + 4) * 1000 / 100,
                        .x0_m = -2000 - 0.5 * (L + 4) * 1000 / 100, .y0_m = -2000 - 0.5 * (L + 4) * 1000 / 100};
    double times[49];
    for (int q = 0; q < 49; q++)
        times[q] = 3600.0 * q;
    snprintf(path, sizeof path, "%s/weather.nc", ff->dir);
    if (sw_weather_write(path, &fg, times, 49, "2000-01-01 00:00:00", "benchmark weather (invented)", NULL,
                         bench_weather_fill, NULL, NULL) == SW_OK) {
        snprintf(text, sizeof text, "[run]\nduration = 2 d\n[grid]\nnx = 2\nny = 2\ndx = 1 km\n[seabed]\ndeep = 1 km\n"
                                    "[weather]\nfile = weather.nc\n");
        ff->have_weather = sw_scenario_parse(text, "<bench weather>", ff->dir, &ff->weather, NULL) == SW_OK;
    }
}

static void forcing_files_free(forcing_files *ff)
{
    char path[128];
    if (ff->have_storm)
        sw_scenario_free(&ff->storm);
    if (ff->have_weather)
        sw_scenario_free(&ff->weather);
    if (ff->dir[0]) {
        snprintf(path, sizeof path, "%s/track.txt", ff->dir);
        remove(path);
        snprintf(path, sizeof path, "%s/weather.nc", ff->dir);
        remove(path);
        rmdir(ff->dir);
    }
}

/* Seconds for `steps` forced steps as a run takes them (the forcing's advance, the step, the tick); f NULL:
 * the slabs as they are. Each forcing keeps its own clock (*clock_s, s), which its slices alone advance:
 * the storm and the weather file take turns on one model, and each must see its own time run on
 * smoothly, rebuilding its slabs at its own cadence (the model's slabs hold whichever built last: the
 * step's cost does not depend on their values). */
static double time_forced_steps(sw_model *m, sw_forcing *f, double *clock_s, int threads, int steps)
{
    omp_set_num_threads(threads);
    const double dt = sw_model_dt(m);
    double t0 = omp_get_wtime();
    SW_OMP(parallel)
    for (int k = 0; k < steps; k++) {
        if (f)
            sw_forcing_advance(f, m, fmod(*clock_s + (double)(k + 1) * dt, FORCING_SPAN_S));
        sw_model_step(m);
        SW_OMP(single)
        sw_model_tick(m);
    }
    const double wall = omp_get_wtime() - t0;
    if (clock_s)
        *clock_s += (double)steps * dt;
    return wall;
}

/* One storm slab built on m, s: an advance two updates on from the storm's clock rebuilds both slabs
 * (timed, halved); the clock then stands there, so the storm's next slice goes on without a rebuild. */
static double time_storm_build(sw_model *m, sw_forcing *f, double *clock_s, double update_s, int threads)
{
    omp_set_num_threads(threads);
    *clock_s = (floor(*clock_s / update_s) + 2) * update_s;
    const double t = fmod(*clock_s, FORCING_SPAN_S);
    double t0 = omp_get_wtime();
    SW_OMP(parallel)
    sw_forcing_advance(f, m, t);
    return 0.5 * (omp_get_wtime() - t0);
}

/* The forcing figures of one layout: plain, storm, weather and held slabs in PAIRS slices per round. */
static void bench_forcing(const sw_bench_options *opt, const sw_layout *lay, sw_bench_result *res, sw_model *big,
                          sw_bench_layout *out)
{
    const int top = res->threads[res->n_threads - 1];
    const double cells = (double)res->n_large * (double)res->n_large;
    forcing_files ff;
    forcing_files_make(&ff, res->n_large);
    const sw_terms_config surface = {.surface = 1};
    sw_model *forced = ff.have_storm && ff.have_weather ? make_model(lay, res->n_large, opt->precision, &surface, NULL)
                                                        : NULL;
    sw_forcing *storm = NULL, *weather = NULL;
    if (forced) {
        const double span = FORCING_SPAN_S;
        if (sw_forcing_create(&ff.storm, forced, span, NULL, NULL, 0, &storm, NULL) != SW_OK
            || sw_forcing_create(&ff.weather, forced, span, NULL, NULL, 0, &weather, NULL) != SW_OK)
            storm = weather = NULL;
    }
    if (storm && weather) {
        char what[128];
        const int slice = steps_for(big, top);
        samples st = {0}, we = {0}, fo = {0}, rs = {0}, rw = {0}, rf = {0}, bu = {0};
        double clock_storm = 0, clock_weather = 0;
        for (int r = 0; r < opt->rounds; r++) {
            snprintf(what, sizeof what, "layout %s: forcing round %d of %d", lay->name, r + 1, opt->rounds);
            say(opt, what);
            double t_plain = 0, t_storm = 0, t_weather = 0, t_held = 0;
            for (int q = 0; q < PAIRS; q++) {
                const int later = (r + q) % 2;
                if (later) {
                    t_storm += time_forced_steps(forced, storm, &clock_storm, top, slice);
                    t_weather += time_forced_steps(forced, weather, &clock_weather, top, slice);
                }
                t_plain += time_steps(big, NULL, top, slice);
                t_held += time_forced_steps(forced, NULL, NULL, top, slice);
                if (!later) {
                    t_storm += time_forced_steps(forced, storm, &clock_storm, top, slice);
                    t_weather += time_forced_steps(forced, weather, &clock_weather, top, slice);
                }
            }
            const double n = cells * slice * PAIRS, plain = n / t_plain;
            push(&st, n / t_storm);
            push(&we, n / t_weather);
            push(&fo, n / t_held);
            push(&rs, n / t_storm / plain);
            push(&rw, n / t_weather / plain);
            push(&rf, n / t_held / plain);
            push(&bu, time_storm_build(forced, storm, &clock_storm, ff.storm.forcing.update_s, top));
        }
        out->large_storm = summarise(&st);
        out->large_weather = summarise(&we);
        out->large_forced = summarise(&fo);
        out->storm_ratio = summarise(&rs).median;
        out->weather_ratio = summarise(&rw).median;
        out->forced_ratio = summarise(&rf).median;
        out->storm_build_s = summarise(&bu).median;
        out->storm_steps_per_build = ff.storm.forcing.update_s / sw_model_dt(forced);
    }
    sw_forcing_free(storm);
    sw_forcing_free(weather);
    sw_model_free(forced);
    forcing_files_free(&ff);
}

/* The geographic figure of one layout: a geographic model of the large grid's size, stepped in PAIRS
 * slices per round taken turn about with the plain (projected) model. */
static void bench_geographic(const sw_bench_options *opt, const sw_layout *lay, sw_bench_result *res, sw_model *big,
                             sw_bench_layout *out)
{
    const int top = res->threads[res->n_threads - 1];
    const double cells = (double)res->n_large * (double)res->n_large;
    sw_model *geo = make_model_on(lay, res->n_large, opt->precision, NULL, 1, NULL);
    if (!geo)
        return;
    char what[128];
    const int slice = steps_for(big, top);
    samples ge = {0}, rg = {0};
    for (int r = 0; r < opt->rounds; r++) {
        snprintf(what, sizeof what, "layout %s: geographic round %d of %d", lay->name, r + 1, opt->rounds);
        say(opt, what);
        double t_plain = 0, t_geo = 0;
        for (int q = 0; q < PAIRS; q++) {
            const int later = (r + q) % 2;
            if (later)
                t_geo += time_steps(geo, NULL, top, slice);
            t_plain += time_steps(big, NULL, top, slice);
            if (!later)
                t_geo += time_steps(geo, NULL, top, slice);
        }
        push(&ge, cells * slice * PAIRS / t_geo);
        push(&rg, t_plain / t_geo);
    }
    out->large_geographic = summarise(&ge);
    out->geographic_ratio = summarise(&rg).median;
    sw_model_free(geo);
}

/* 1 when the layout letters in `letters` (any case, as in sw_bench_options.layouts) name lay. */
static int selected(const char *letters, const sw_layout *lay)
{
    for (const char *p = letters; *p; p++) {
        char name[2] = {*p, '\0'};
        if (sw_layout_find(name) == lay)
            return 1;
    }
    return 0;
}

sw_status sw_bench_run(const sw_bench_options *opt, sw_bench_result *res, sw_error *err)
{
    memset(res, 0, sizeof *res);
    if (opt->rounds < 3 || opt->rounds > MAX_ROUNDS)
        return sw_fail(err, SW_ERR_USAGE, "rounds = %d (accepted: 3 to %d)", opt->rounds, MAX_ROUNDS);
    if (opt->steps_per_sweep < 0 || opt->steps_per_sweep > SW_WAVE_MAX_STEPS)
        return sw_fail(err, SW_ERR_USAGE, "steps_per_sweep = %d (accepted: 0, automatic, or 1 to %d)",
                       opt->steps_per_sweep, SW_WAVE_MAX_STEPS);
    if ((unsigned)opt->precision >= SW_PRECISIONS)
        return sw_fail(err, SW_ERR_USAGE, "precision %d (accepted: double, single)", (int)opt->precision);
    for (const char *p = opt->layouts; p && *p; p++) {
        char name[2] = {*p, '\0'};
        if (!sw_layout_find(name))
            return sw_fail(err, SW_ERR_USAGE, "layout '%c' (accepted: %s)", *p, sw_layout_names());
    }
    res->precision = opt->precision;
    res->real_bytes = (int)sw_precision_bytes(opt->precision);
    res->llc_bytes = sw_cpu_cache_bytes();
    const size_t per_cell = 6 * (size_t)res->real_bytes + 1;   /* the six state arrays and the wet mask */
    size_t target = 4 * res->llc_bytes;
    if (target < ((size_t)2 << 30))
        target = (size_t)2 << 30;
    res->n_large = opt->n_large ? opt->n_large : (size_t)ceil(sqrt((double)target / (double)per_cell));
    res->n_small = opt->n_small ? opt->n_small : 128;
    res->working_set_bytes = res->n_large * res->n_large * per_cell;
    if (opt->n_threads > 0) {
        res->n_threads = opt->n_threads;
        memcpy(res->threads, opt->threads, sizeof res->threads);
    } else {
        int cores = omp_get_max_threads();
        res->n_threads = cores < SW_BENCH_MAX_THREADS ? cores : SW_BENCH_MAX_THREADS;
        for (int q = 0; q < res->n_threads; q++)
            res->threads[q] = q + 1;
    }
    if (!opt->numpy_script)
        snprintf(res->numpy_note, sizeof res->numpy_note, "skipped");
    for (size_t q = 0; q < sw_layout_count() && q < SW_BENCH_MAX_LAYOUTS; q++) {
        if (opt->layouts && !selected(opt->layouts, sw_layout_at(q)))
            continue;
        sw_status rc = bench_layout(opt, sw_layout_at(q), res, &res->layouts[res->n_layouts], err);
        if (rc != SW_OK)
            return rc;
        res->n_layouts++;
    }
    const int most = res->threads[res->n_threads - 1];
    if (!opt->real_refine)
        snprintf(res->real.note, sizeof res->real.note, "skipped");
    else if (opt->layouts && !strchr(opt->layouts, 'C'))
        snprintf(res->real.note, sizeof res->real.note, "not measured: it runs on the C layout, not among those asked for");
    else {
        sw_status rc = sw_bench_real_run(opt->real_refine, opt->precision, most, opt->rounds, opt->progress, opt->user,
                                         &res->real, err);
        if (rc != SW_OK && rc != SW_ERR_NOMEM)
            return rc;   /* out of memory: the figure says so (real.note), the others stand */
    }
    omp_set_num_threads(most);
    return SW_OK;
}

static void print_stat(FILE *f, const char *label, sw_bench_stat s, double scale, const char *unit)
{
    fprintf(f, "  %-34s %10.3g %s  (min %.3g, max %.3g, n = %d)\n", label, s.median / scale, unit, s.min / scale,
           s.max / scale, s.n);
}

/* The figures of several steps per sweep on the large grid: the rate, k and why, the ratio to the one-step
 * step, the effective bandwidth, and whether the two schedules leave the same bits. */
static void print_blocked(FILE *f, const sw_bench_result *res, const sw_bench_layout *l)
{
    char label[48], why[128], window[48] = "";
    snprintf(label, sizeof label, "blocked step, %d a sweep, large", l->steps_per_sweep);
    print_stat(f, label, l->large_blocked, 1e6, "M cell-updates/s");
    if (l->steps_per_sweep != l->steps_per_sweep_auto)
        snprintf(why, sizeof why, "asked for; the automatic choice is %d", l->steps_per_sweep_auto);
    else
        snprintf(why, sizeof why, "automatic for %d thread%s and the %.0f MB cache", res->threads[res->n_threads - 1],
                 res->threads[res->n_threads - 1] > 1 ? "s" : "", (double)res->llc_bytes / 1048576.0);
    if (l->wave_window_bytes)
        snprintf(window, sizeof window, "; a window of rows of %.3g MB", (double)l->wave_window_bytes / 1e6);
    fprintf(f, "  several steps per sweep: k = %d (%s%s): %.3f x the one-step step (median of the rounds' ratios); "
               "effective bandwidth %.3g GB/s = %.2f x triad; the same bits as single steps (state and tracking "
               "maps, 50 steps on the cache-resident grid): %s\n",
            l->steps_per_sweep, why, window, l->blocked_ratio, l->blocked_bandwidth / 1e9, l->blocked_bandwidth_ratio,
            l->blocked_identical ? "yes" : "NO (its rates time a different computation)");
}

void sw_bench_print(FILE *f, const sw_bench_result *res)
{
    fprintf(f, "Grid %zu x %zu (working set %.2f GB, last-level cache %.0f MB), cache-resident grid %zu x %zu, %s precision\n",
           res->n_large, res->n_large, (double)res->working_set_bytes / 1e9, (double)res->llc_bytes / 1048576.0,
           res->n_small, res->n_small, sw_precision_name(res->precision));
    for (size_t q = 0; q < res->n_layouts; q++) {
        const sw_bench_layout *l = &res->layouts[q];
        fprintf(f, "\nLayout %s (bytes model: %d values per cell update)\n", l->layout, l->values_per_cell);
        print_stat(f, "triad bandwidth", l->triad, 1e9, "GB/s");
        print_stat(f, "step, large grid", l->large, 1e6, "M cell-updates/s");
        print_stat(f, "step + tracking, large grid", l->large_tracked, 1e6, "M cell-updates/s");
        if (l->large_terms.n)
            print_stat(f, "step + rotation + friction, large", l->large_terms, 1e6, "M cell-updates/s");
        if (l->reference.n)
            print_stat(f, "pre-stepper C step, large grid", l->reference, 1e6, "M cell-updates/s");
        print_stat(f, "step, cache-resident grid", l->small, 1e6, "M cell-updates/s");
        for (int t = 0; t < res->n_threads; t++) {
            char label[48];
            snprintf(label, sizeof label, "step, large grid, %d thread%s", res->threads[t], res->threads[t] > 1 ? "s" : "");
            print_stat(f, label, l->scaling[t], 1e6, "M cell-updates/s");
        }
        fprintf(f, "  effective bandwidth %.3g GB/s = %.2f x triad; parallel efficiency %d -> %d threads %.0f %%\n",
               l->bandwidth / 1e9, l->bandwidth_ratio, res->threads[0], res->threads[res->n_threads - 1],
               100 * l->efficiency_2);
        print_blocked(f, res, l);
        fprintf(f, "  tracking, hump of %.0f cells: adds %.1f %% to the step (ratio of the medians); grid in motion "
                   "(segments whose maps changed): %.2g %%\n",
               l->tracking_source_cells, 100 * l->tracking_cost, 100 * l->tracking_active);
        if (l->large_moving.n) {
            print_stat(f, "step, moving source, large", l->large_moving, 1e6, "M cell-updates/s");
            print_stat(f, "step + tracking, moving source", l->large_moving_tracked, 1e6, "M cell-updates/s");
            fprintf(f, "  tracking, moving source (hump of %.0f cells): adds %.1f %% to the step (median of the rounds' "
                       "ratios); grid in motion: %.2g %%\n",
                    l->moving_source_cells, 100 * l->moving_tracking_cost, 100 * l->moving_active);
            print_stat(f, "blocked step, moving source", l->large_moving_blocked, 1e6, "M cell-updates/s");
            print_stat(f, "blocked step + tracking, moving", l->large_moving_blocked_tracked, 1e6, "M cell-updates/s");
            fprintf(f, "  tracking, moving source, %d step%s per sweep: adds %.1f %% to the blocked step (median of the "
                       "rounds' ratios); grid in motion: %.2g %%\n",
                    l->steps_per_sweep, l->steps_per_sweep > 1 ? "s" : "", 100 * l->moving_blocked_tracking_cost,
                    100 * l->moving_blocked_active);
        } else
            fprintf(f, "  tracking, moving source: not measured (no memory for the model or its tracker)\n");
        if (l->large_terms.n)
            fprintf(f, "  with rotation and linear friction: %.3f x the plain step (median of the rounds' ratios)\n",
                    l->terms_ratio);
        else
            fprintf(f, "  with rotation and linear friction: not measured (no memory for a second large grid)\n");
        if (l->reference.n)
            fprintf(f, "  the stepper: %.3f x the pre-stepper C step (median of the rounds' ratios); the two leave %s\n",
                    l->reference_ratio, l->reference_identical ? "the same bits" : "DIFFERENT bits");
        if (l->large_storm.n) {
            print_stat(f, "step + moving storm, large", l->large_storm, 1e6, "M cell-updates/s");
            print_stat(f, "step + weather file, large", l->large_weather, 1e6, "M cell-updates/s");
            print_stat(f, "forced step, slabs held, large", l->large_forced, 1e6, "M cell-updates/s");
            fprintf(f, "  surface forcing: moving storm %.3f x the plain step, weather file %.3f x, the forced step alone "
                       "%.3f x (medians of the rounds' ratios); a storm slab takes %.3g s (%.3g ns a cell), built every "
                       "%.0f steps\n",
                    l->storm_ratio, l->weather_ratio, l->forced_ratio, l->storm_build_s,
                    1e9 * l->storm_build_s / ((double)res->n_large * (double)res->n_large), l->storm_steps_per_build);
        } else
            fprintf(f, "  surface forcing: not measured (no memory for the forced model, or no scratch folder)\n");
        if (l->large_geographic.n) {
            print_stat(f, "step, geographic grid, large", l->large_geographic, 1e6, "M cell-updates/s");
            fprintf(f, "  geographic grid: its step costs %.3f x the projected step's (median of the rounds' ratios)\n",
                    l->geographic_ratio > 0 ? 1 / l->geographic_ratio : 0);
        } else
            fprintf(f, "  geographic grid: not measured (no memory for the geographic model)\n");
    }
    const sw_bench_real *rr = &res->real;
    if (rr->refine) {
        fprintf(f, "\nReal run: the demo (fictional coast) refined %dx, %zu x %zu cells, %.0f min of model time in %lld "
                   "steps of %.3g s, %zu gauges and the arrival/extreme maps on, %d step%s per sweep, %d thread%s\n",
                rr->refine, rr->nx, rr->ny, rr->duration_s / 60, rr->steps, rr->dt_s, rr->n_gauges, rr->steps_per_sweep,
                rr->steps_per_sweep > 1 ? "s" : "", rr->threads, rr->threads > 1 ? "s" : "");
        print_stat(f, "the run (gauges, tracking)", rr->run, 1e6, "M cell-updates/s");
        print_stat(f, "plain step, same grid and schedule", rr->plain, 1e6, "M cell-updates/s");
        fprintf(f, "  the run: %.3f x the plain step (median of the rounds' ratios)\n", rr->ratio);
    } else
        fprintf(f, "\nReal run: %s\n", rr->note);
    if (res->numpy.n > 0)
        fprintf(f, "\nNumPy C-layout step: %.3g M cell-updates/s; shoreward C in the same rounds %.3g M: %.1f x\n",
               res->numpy.median / 1e6, res->numpy_c.median / 1e6, res->numpy_ratio);
    else
        fprintf(f, "\nNumPy comparison: %s\n", res->numpy_note);
}

static cJSON *stat_json(sw_bench_stat s)
{
    cJSON *o = cJSON_CreateObject();
    cJSON_AddNumberToObject(o, "median", s.median);
    cJSON_AddNumberToObject(o, "min", s.min);
    cJSON_AddNumberToObject(o, "max", s.max);
    cJSON_AddNumberToObject(o, "n", s.n);
    return o;
}

char *sw_bench_json(const sw_bench_result *res)
{
    cJSON *o = cJSON_CreateObject();
    if (!o)
        return NULL;
    cJSON_AddNumberToObject(o, "n_large", (double)res->n_large);
    cJSON_AddNumberToObject(o, "n_small", (double)res->n_small);
    cJSON_AddNumberToObject(o, "working_set_bytes", (double)res->working_set_bytes);
    cJSON_AddNumberToObject(o, "llc_bytes", (double)res->llc_bytes);
    cJSON_AddStringToObject(o, "precision", sw_precision_name(res->precision));
    cJSON *ls = cJSON_AddArrayToObject(o, "layouts");
    for (size_t q = 0; q < res->n_layouts; q++) {
        const sw_bench_layout *l = &res->layouts[q];
        cJSON *e = cJSON_CreateObject();
        cJSON_AddStringToObject(e, "layout", l->layout);
        cJSON_AddNumberToObject(e, "values_per_cell", l->values_per_cell);
        cJSON_AddItemToObject(e, "triad_bytes_per_s", stat_json(l->triad));
        cJSON_AddItemToObject(e, "large", stat_json(l->large));
        cJSON_AddItemToObject(e, "large_tracked", stat_json(l->large_tracked));
        cJSON_AddItemToObject(e, "small", stat_json(l->small));
        cJSON *sc = cJSON_AddArrayToObject(e, "scaling");
        for (int t = 0; t < res->n_threads; t++) {
            cJSON *x = stat_json(l->scaling[t]);
            cJSON_AddNumberToObject(x, "threads", res->threads[t]);
            cJSON_AddItemToArray(sc, x);
        }
        cJSON_AddNumberToObject(e, "bandwidth_bytes_per_s", l->bandwidth);
        cJSON_AddNumberToObject(e, "bandwidth_ratio_to_triad", l->bandwidth_ratio);
        cJSON_AddNumberToObject(e, "steps_per_sweep", l->steps_per_sweep);
        cJSON_AddNumberToObject(e, "steps_per_sweep_auto", l->steps_per_sweep_auto);
        cJSON_AddNumberToObject(e, "wave_window_bytes", (double)l->wave_window_bytes);
        cJSON_AddItemToObject(e, "large_blocked", stat_json(l->large_blocked));
        cJSON_AddNumberToObject(e, "blocked_ratio", l->blocked_ratio);
        cJSON_AddNumberToObject(e, "blocked_bandwidth_bytes_per_s", l->blocked_bandwidth);
        cJSON_AddNumberToObject(e, "blocked_bandwidth_ratio_to_triad", l->blocked_bandwidth_ratio);
        cJSON_AddBoolToObject(e, "blocked_identical", l->blocked_identical);
        cJSON_AddNumberToObject(e, "tracking_cost", l->tracking_cost);
        cJSON_AddNumberToObject(e, "tracking_active_share", l->tracking_active);
        cJSON_AddNumberToObject(e, "tracking_source_cells", l->tracking_source_cells);
        cJSON_AddItemToObject(e, "large_moving", stat_json(l->large_moving));
        cJSON_AddItemToObject(e, "large_moving_tracked", stat_json(l->large_moving_tracked));
        cJSON_AddNumberToObject(e, "moving_tracking_cost", l->moving_tracking_cost);
        cJSON_AddNumberToObject(e, "moving_active_share", l->moving_active);
        cJSON_AddNumberToObject(e, "moving_source_cells", l->moving_source_cells);
        cJSON_AddItemToObject(e, "large_moving_blocked", stat_json(l->large_moving_blocked));
        cJSON_AddItemToObject(e, "large_moving_blocked_tracked", stat_json(l->large_moving_blocked_tracked));
        cJSON_AddNumberToObject(e, "moving_blocked_tracking_cost", l->moving_blocked_tracking_cost);
        cJSON_AddNumberToObject(e, "moving_blocked_active_share", l->moving_blocked_active);
        cJSON_AddNumberToObject(e, "parallel_efficiency", l->efficiency_2);
        cJSON_AddItemToObject(e, "large_terms", stat_json(l->large_terms));
        cJSON_AddNumberToObject(e, "terms_ratio", l->terms_ratio);
        cJSON_AddItemToObject(e, "large_storm", stat_json(l->large_storm));
        cJSON_AddItemToObject(e, "large_weather", stat_json(l->large_weather));
        cJSON_AddItemToObject(e, "large_forced", stat_json(l->large_forced));
        cJSON_AddNumberToObject(e, "storm_ratio", l->storm_ratio);
        cJSON_AddItemToObject(e, "large_geographic", stat_json(l->large_geographic));
        cJSON_AddNumberToObject(e, "geographic_cost_ratio", l->geographic_ratio > 0 ? 1 / l->geographic_ratio : 0);
        cJSON_AddNumberToObject(e, "weather_ratio", l->weather_ratio);
        cJSON_AddNumberToObject(e, "forced_ratio", l->forced_ratio);
        cJSON_AddNumberToObject(e, "storm_build_s", l->storm_build_s);
        cJSON_AddNumberToObject(e, "storm_steps_per_build", l->storm_steps_per_build);
        if (l->reference.n) {
            cJSON_AddItemToObject(e, "reference", stat_json(l->reference));
            cJSON_AddNumberToObject(e, "reference_ratio", l->reference_ratio);
            cJSON_AddBoolToObject(e, "reference_identical", l->reference_identical);
        }
        cJSON_AddItemToArray(ls, e);
    }
    cJSON *rj = cJSON_AddObjectToObject(o, "real_run");
    cJSON_AddNumberToObject(rj, "refine", res->real.refine);
    cJSON_AddNumberToObject(rj, "nx", (double)res->real.nx);
    cJSON_AddNumberToObject(rj, "ny", (double)res->real.ny);
    cJSON_AddNumberToObject(rj, "duration_s", res->real.duration_s);
    cJSON_AddNumberToObject(rj, "steps", (double)res->real.steps);
    cJSON_AddNumberToObject(rj, "dt_s", res->real.dt_s);
    cJSON_AddNumberToObject(rj, "gauges", (double)res->real.n_gauges);
    cJSON_AddNumberToObject(rj, "threads", res->real.threads);
    cJSON_AddNumberToObject(rj, "steps_per_sweep", res->real.steps_per_sweep);
    cJSON_AddItemToObject(rj, "run", stat_json(res->real.run));
    cJSON_AddItemToObject(rj, "plain", stat_json(res->real.plain));
    cJSON_AddNumberToObject(rj, "ratio", res->real.ratio);
    cJSON_AddStringToObject(rj, "note", res->real.note);
    cJSON *np = cJSON_AddObjectToObject(o, "numpy");
    cJSON_AddItemToObject(np, "rate", stat_json(res->numpy));
    cJSON_AddItemToObject(np, "shoreward_c_rate", stat_json(res->numpy_c));
    cJSON_AddNumberToObject(np, "ratio", res->numpy_ratio);
    cJSON_AddStringToObject(np, "note", res->numpy_note);
    char *s = cJSON_Print(o);
    cJSON_Delete(o);
    return s;
}
