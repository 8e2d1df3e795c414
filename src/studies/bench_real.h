/* bench_real.h - the bench's real run: the demo coast refined, gauges and tracking on, beside the plain step.
 *
 * What users pay for is a run, not a step: its gauges, its arrival and extreme maps, its sweeps cut at the
 * gauges' samples. This times the built-in demo scenario (scenarios/demo.scn, fictional) with its grid
 * refined, run as `shoreward run` runs it (sw_run: the run's own schedule and observers, its results handed
 * to a sink instead of files), and in the same rounds the plain step (no observer) on a model of the same
 * grid, source, time step and schedule for the same number of steps. Nothing passes or fails.
 */
#ifndef SW_BENCH_REAL_H
#define SW_BENCH_REAL_H

#include <stddef.h>

#include "base/real.h"
#include "base/status.h"
#include "studies/bench_stat.h"

/* Model time each timed run covers, s: by then the demo's wave has spread over most of the grid and
 * reached every gauge's neighbourhood, so the tracker and the gauges work on a grid mostly in motion. */
#define SW_BENCH_REAL_DURATION_S 1800.0

/* The default refinement of the demo grid (500 x 375 cells of 400 m): 4 gives 2000 x 1500 = 3 million cells
 * of 100 m, larger than the 2 million a real run of interest has at least. */
#define SW_BENCH_REAL_REFINE 4

typedef struct {
    int refine;            /* the demo grid refined by this; 0: not measured (note says why) */
    double duration_s;     /* model time of each run, s */
    size_t nx, ny;         /* the refined grid, cells */
    long long steps;       /* steps of each run (and of each plain slice) */
    double dt_s;           /* its time step, s */
    size_t n_gauges;       /* the demo's gauges, sampled as the run samples them */
    int threads;           /* threads of every figure */
    int steps_per_sweep;   /* the run's schedule (sw_run_schedule), used by the plain step too */
    sw_bench_stat run;     /* the run's time loop: cells x steps / s, gauges and tracking on, no files */
    sw_bench_stat plain;   /* the plain step on the same model, schedule and steps: cells x steps / s */
    double ratio;          /* median over rounds of (run rate / plain rate), the two taken in the same round */
    char note[200];        /* why it was not measured, "" when it was */
} sw_bench_real;

/* Times the demo refined by `refine` (>= 1) for SW_BENCH_REAL_DURATION_S of model time in `precision`
 * on `threads` threads, `rounds` times (3 .. 32), each round a run then the plain step, and fills *out.
 * progress (may be NULL) is called before each measurement. Returns SW_OK; SW_ERR_USAGE for refine < 1
 * or rounds out of range; a run's failure (memory) with err naming it, *out then holding what was
 * measured before. Sets the OpenMP thread count to `threads`. */
sw_status sw_bench_real_run(int refine, sw_precision precision, int threads, int rounds,
                            void (*progress)(const char *what, void *user), void *user, sw_bench_real *out,
                            sw_error *err);

#endif
