/* bench.h - measuring the step against the machine's memory bandwidth, side by side in one process.
 *
 * Every figure is taken in interleaved rounds (triad, then each measurement, then triad again ...) so
 * that noise from other work on a shared machine hits all of them alike; ratios are formed from the
 * medians of one run. Benchmarks never pass or fail anything: they report.
 */
#ifndef SW_BENCH_H
#define SW_BENCH_H

#include <stddef.h>
#include <stdio.h>

#include "base/real.h"
#include "base/status.h"
#include "studies/bench_real.h"
#include "studies/bench_stat.h"

#define SW_BENCH_MAX_THREADS 64
#define SW_BENCH_MAX_LAYOUTS 8

typedef struct {
    size_t n_large;        /* cells per side of the large grid; 0 = working set >= max(4 x LLC, 2 GB) */
    size_t n_small;        /* cells per side of the cache-resident grid; 0 = 128 */
    int threads[SW_BENCH_MAX_THREADS]; /* thread counts for the scaling figures; n_threads = 0: 1 .. cores */
    int n_threads;
    int rounds;            /* interleaved rounds, >= 3 (default 5) */
    int steps_per_sweep;   /* steps per sweep of the blocked figures (sw_model_steps), 1 .. SW_WAVE_MAX_STEPS;
                            * 0 = each layout's automatic choice for the large grid and the most threads
                            * (sw_model_wave_auto with the last-level cache) */
    sw_precision precision;/* of the model state (and of the NumPy arrays) */
    int real_refine;       /* the real run (bench_real.h): the demo grid refined by this; 0 = not measured. Run on
                            * the C layout, when it is among `layouts` */
    const char *layouts;   /* layout letters to measure, e.g. "C" or "AC"; NULL = every layout */
    const char *numpy_script; /* tools/bench_numpy.py to compare against (run with python), NULL = skip */
    const char *python;    /* interpreter for it, e.g. /usr/bin/python3 */
    void (*progress)(const char *what, void *user);   /* called before each measurement; may be NULL */
    void *user;
} sw_bench_options;

/* One layout's figures. Rates in cell-updates per second; bandwidths in bytes per second. */
typedef struct {
    char layout[8];
    int values_per_cell;        /* the bytes model: values a fused cell update must move (layout.h) */
    sw_bench_stat large;        /* step on the large grid, all threads */
    sw_bench_stat large_tracked;/* step + arrival/extreme tracking, all threads, on the bench's hump (a source
                                 * of tracking_source_cells, small beside the basin: most segments quiet) */
    sw_bench_stat small;        /* step on the cache-resident grid, all threads */
    sw_bench_stat triad;        /* triad bandwidth measured in the same rounds, B/s */
    sw_bench_stat scaling[SW_BENCH_MAX_THREADS]; /* large grid step with threads[q] */
    double bandwidth;           /* effective: median rate x values_per_cell x sizeof(value), B/s */
    double bandwidth_ratio;     /* bandwidth / median triad */
    double tracking_cost;       /* large_tracked time / large time - 1 (fraction added; ratio of the medians) */
    double tracking_active;     /* share of the row segments (SW_OBS_SEG cells) whose maps the timed tracked
                                 * steps rewrote: the share of the grid in motion (the cost grows with it:
                                 * quiet water costs a compare per segment) */
    double tracking_source_cells; /* the hump's e-folding radius, cells */
    /* Tracking on a moving source: a second model of the large grid with a hump of e-folding radius
     * moving_source_cells (an eighth of the side), plain and tracked slices taken turn about in rounds of
     * their own; n = 0 when the model or its tracker did not fit in memory: */
    sw_bench_stat large_moving;        /* its plain step, all threads */
    sw_bench_stat large_moving_tracked;/* its step + tracking, all threads */
    double moving_tracking_cost;  /* median over rounds of (tracked time / plain time) - 1 */
    double moving_active;         /* share of row segments whose maps its tracked steps rewrote */
    double moving_source_cells;   /* its hump's e-folding radius, cells */
    /* Several steps per sweep over memory (sw_model_steps: temporal blocking, a wavefront of rows) on the
     * large grid, all threads, in the same rounds and slices as the one-step step (large), taken turn about
     * with it: */
    int steps_per_sweep;        /* k: the steps each sweep takes (the option's, else steps_per_sweep_auto) */
    int steps_per_sweep_auto;   /* sw_model_wave_auto's choice for the large grid, the most threads and llc_bytes
                                 * (1: one step per sweep, the model fits in half the cache or has too few rows) */
    size_t wave_window_bytes;   /* the wavefront's window of rows at k (k x the rows between steps x a row's
                                 * bytes; sw_model_wave_auto), B; 0 when k = 1 or when the automatic choice is 1
                                 * (the window is then not known here) */
    sw_bench_stat large_blocked;/* the step in sweeps of k, large grid, all threads */
    double blocked_ratio;       /* median over rounds of (blocked rate / one-step rate), same round */
    double blocked_bandwidth;   /* effective: median blocked rate x values_per_cell x sizeof(value), B/s (the
                                 * bytes a one-step sweep would move for those updates) */
    double blocked_bandwidth_ratio; /* blocked_bandwidth / median triad */
    int blocked_identical;      /* 1 when sweeps of k steps (the last one shorter) and single steps left the same
                                 * bits (state, clock and tracking maps) after 50 steps on the cache-resident grid
                                 * with all threads (checked once), else 0 */
    /* The blocked step on the moving source (the model of large_moving, its own slices in the same rounds,
     * after the one-step pair; n = 0 when that model was not made): */
    sw_bench_stat large_moving_blocked;        /* its step in sweeps of k */
    sw_bench_stat large_moving_blocked_tracked;/* the same with tracking */
    double moving_blocked_tracking_cost; /* median over rounds of (tracked time / plain time) - 1, blocked */
    double moving_blocked_active; /* share of row segments whose maps its blocked tracked steps rewrote */
    double efficiency_2;        /* parallel efficiency from 1 thread to the most threads */
    sw_bench_stat large_terms;  /* step with rotation and linear friction (f = 1e-4 s-1, r = 1 mm/s), large grid;
                                 * n = 0 when the second large model did not fit in memory */
    double terms_ratio;         /* median over rounds of (step with terms / plain step) measured in the same round */
    sw_bench_stat reference;    /* C only: the pre-stepper C step (bench_reference.h) on the same model; n = 0
                                 * for the other layouts */
    double reference_ratio;     /* C only: median over rounds of (stepper / pre-stepper step), same round */
    int reference_identical;    /* C only: 1 when the pre-stepper step and the stepper left the same bits
                                 * after 50 steps on the cache-resident grid (checked once), else 0 */
    /* Surface forcing on the large grid (a second set of rounds, the plain step measured again beside it;
     * n = 0 when the forced model did not fit in memory): */
    sw_bench_stat large_storm;  /* step with a moving parametric storm (slabs rebuilt every [storm] update,
                                 * 600 s of model time), the forcing's advance included */
    sw_bench_stat large_weather;/* step with a weather file (101 x 101 points, hourly slabs) */
    sw_bench_stat large_forced; /* the forced step alone, its slabs held (no rebuild) */
    double storm_ratio, weather_ratio, forced_ratio; /* medians of the rounds' ratios to the plain step */
    double storm_build_s;       /* one storm slab built on the large grid, s (median) */
    double storm_steps_per_build; /* steps between storm slab builds (update / dt) */
    /* A geographic grid of the same size (from 10 N, at most 60 degrees of latitude; rotation on the sphere
     * off), in rounds of its own with the plain step measured again beside it; n = 0 when it could not be
     * made: */
    sw_bench_stat large_geographic; /* the geographic step, large grid */
    double geographic_ratio;    /* median over rounds of (projected step time / geographic step time): the
                                 * geographic step's cost is 1 / this of the projected one's */
} sw_bench_layout;

typedef struct {
    size_t n_large, n_small;    /* grid sides used */
    size_t llc_bytes;           /* last-level cache as the system reports it */
    size_t working_set_bytes;   /* state + depth arrays of the large grid */
    sw_precision precision;     /* of the state */
    int real_bytes;             /* bytes of one state value: 8 (double) or 4 (single) */
    int n_threads, threads[SW_BENCH_MAX_THREADS];
    size_t n_layouts;
    sw_bench_layout layouts[SW_BENCH_MAX_LAYOUTS];
    sw_bench_stat numpy;        /* NumPy C-layout step rate, interleaved with the C rounds (n = 0: skipped) */
    sw_bench_stat numpy_c;      /* the C layout's rate measured in the same rounds */
    double numpy_ratio;         /* numpy_c median / numpy median */
    char numpy_note[256];       /* why NumPy was skipped, or its grid when the full grid did not fit */
    sw_bench_real real;         /* the real run beside the plain step (real.refine = 0: not measured, real.note
                                 * says why) */
} sw_bench_result;

/* Runs the benchmark. Needs about working_set x 1.5 of memory. Returns SW_ERR_NOMEM when the grid
 * does not fit, SW_ERR_USAGE for bad options (rounds or steps_per_sweep out of range, a letter in
 * opt->layouts that names no layout of this build). */
sw_status sw_bench_run(const sw_bench_options *opt, sw_bench_result *res, sw_error *err);

/* McCalpin's STREAM triad a[i] = b[i] + s c[i] on three arrays of n doubles with the current OpenMP
 * threads, best of `repeats`: bytes moved (3 n 8, as STREAM counts them) per second. 0 on no memory. */
double sw_bench_triad(size_t n, int repeats);

/* Prints the result as text to f, and as JSON (caller frees; NULL when out of memory). */
void sw_bench_print(FILE *f, const sw_bench_result *res);
char *sw_bench_json(const sw_bench_result *res);

#endif
