/* run.c - one complete run (see run.h).
 *
 * One parallel region spans the whole time loop (one per stretch of about 2 s when the threads follow the
 * load: time_loop): each step's kernels and the tracker bind their
 * `omp for` loops to it; gauges, snapshots and progress run in a `single` between steps. No
 * result depends on the number of threads: every cell is computed the same way by whichever
 * thread owns its row, and no sum runs across cells in the loop. While a rupture in time still moves
 * the sea floor (faults.h), each step runs in a region of its own after the floor's motion over it is
 * added to the elevation; once the last segment has stopped the loop above takes over, so a rupture
 * costs the step nothing from then on.
 */
#define _POSIX_C_SOURCE 200809L
#include "run/run.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "inputs/crs.h"
#include "observers/gauges.h"
#include "model/model.h"
#include "inputs/faults.h"
#include "outputs/ncwrite.h"
#include "base/cpu_share.h"
#include "base/omp_compat.h"
#include "observers/tracker.h"
#include "forcing/forcing.h"
#include "run/checkpoint.h"
#include "run/outdir.h"
#include "run/split.h"

/* The one definition of the caution texts (run.h). The full forms are built from the same sentences,
 * so that the short form, the surge form and the sweep form can never drift apart. */
#define CAUTION_NOT_FORECAST "They are not a hazard forecast or warning."
#define CAUTION_EMERGENCY                                                                                    \
    "In an emergency follow official warning agencies and local emergency management. Planning decisions " \
    "need qualified professionals and local codes."
#define CAUTION_FULL                                                                                         \
    "CAUTION: results come from a simplified linear model for exploring scenarios. " CAUTION_NOT_FORECAST   \
    " " CAUTION_EMERGENCY
#define CAUTION_SURGE                                                                                        \
    "CAUTION: results come from a simplified linear, depth-averaged model for exploring scenarios: no "     \
    "waves, no tide-surge interaction beyond adding the two, no flooding of land. They are not a surge, "   \
    "tide or hazard forecast or warning. " CAUTION_EMERGENCY
#define CAUTION_SWEEP                                                                                        \
    "A sweep multiplies a simplified linear model; it does not make it a forecast. The spread shows how "   \
    "sensitive this model is to the settings you vary, not the uncertainty of a real event."

const char *sw_caution(void)
{
    return CAUTION_FULL;
}

const char *sw_caution_surge(void)
{
    return CAUTION_SURGE;
}

const char *sw_caution_short(void)
{
    return "CAUTION: simplified linear model for exploring scenarios, not a hazard forecast or warning; in an "
           "emergency follow official warning agencies and local emergency management.";
}

const char *sw_caution_sweep(void)
{
    return CAUTION_SWEEP;
}

/* Whether sc has forcing, which makes its caution the surge one. */
static int has_forcing(const sw_scenario *sc)
{
    const sw_forcing_spec *f = &sc->forcing;
    return f->storm || f->weather || f->level_file[0];
}

const char *sw_caution_for(const sw_scenario *sc)
{
    return has_forcing(sc) ? sw_caution_surge() : sw_caution();
}

const char *sw_caution_sweep_for(const sw_scenario *sc)
{
    return has_forcing(sc) ? CAUTION_SURGE " " CAUTION_SWEEP : CAUTION_FULL " " CAUTION_SWEEP;
}

sw_status sw_make_dirs(const char *path, sw_error *err)
{
    char buf[SW_PATH_MAX];
    if (snprintf(buf, sizeof buf, "%s", path) >= (int)sizeof buf)
        return sw_fail(err, SW_ERR_RANGE, "output folder path too long: %s", path);
    for (char *p = buf + 1;; p++) {
        char c = *p;
        if (c == '/' || c == '\0') {
            *p = '\0';
            if (mkdir(buf, 0777) != 0 && errno != EEXIST)
                return sw_fail(err, SW_ERR_IO, "cannot create folder %s: %s", buf, strerror(errno));
            *p = c;
        }
        if (c == '\0')
            break;
    }
    struct stat st;
    if (stat(path, &st) != 0 || !S_ISDIR(st.st_mode))
        return sw_fail(err, SW_ERR_IO, "%s exists and is not a folder", path);
    return SW_OK;
}

/* Everything the loop touches, so the parallel region reads one struct. */
typedef struct {
    const sw_scenario *sc;
    const sw_setup *setup;
    const sw_run_options *opt;
    sw_model *model;
    sw_tracker *tracker;
    sw_gauges *gauges;
    sw_forcing *forcing;      /* storm, weather, level series; NULL when none */
    const sw_fault_set *faults; /* the setup's faults when some move after t = 0 (a rupture in time), else NULL
                               * (instant faults are in the initial elevation: setup.c) */
    double fault_end_s;       /* when the last segment stops moving, s */
    double *fault_inc;        /* [ny * nx] the sea surface's change over one step while the floor moves */
    double *air;              /* [3 n_gauges] the gauges' pressure and wind at a sample */
    sw_ncw_snapshots *snaps;
    double *frame;            /* [ny * nx] snapshot buffer, or NULL */
    double next_sample, next_snapshot, next_progress;
    double t_start;
    int stop;                 /* set inside `single`: 0 go on, 1 interrupted, 2 failed */
    sw_error loop_err;
    /* checkpoints (checkpoint.h): on with [run] checkpoint_interval in a run that writes files */
    int checkpointing;
    int checkpointed;         /* 1 once the checkpoint at a stop is written */
    long long first_step;     /* where the loop starts: 0, or the step of the checkpoint resumed */
    double next_checkpoint;   /* s */
    double volume_start;      /* m3, the displaced volume at t = 0 */
    long long n_frames;       /* snapshots taken, kept in `frames` */
    sw_ckpt_frames *frames;   /* the snapshots beside the checkpoint, or NULL */
    sw_ckpt_fingerprint fp;
    char ckpt_path[SW_PATH_MAX];
    sw_split *split;          /* a run split over processes (split.h), or NULL */
    int wave_k;               /* steps per sweep over memory (sw_run_schedule) */
    int waving;               /* 1 while a sweep of several steps runs: the gauges are watched row by row by
                               * the model's observer (run_row), not between steps */
    sw_step_forcing per_step[SW_WAVE_MAX_STEPS]; /* the forcing of each step of a sweep (sweep_in_region) */
    /* the threads following the load (base/cpu_share.h; time_loop): only when the count was chosen
     * automatically, and never in a split run or a sweep member */
    sw_cpu_mark *mark;        /* the machine's reading at the present stretch's start; NULL: the count is fixed */
    sw_wait wait;             /* the process's waiting, fixed from its start */
    double recheck_at;        /* omp_get_wtime() at which the present stretch ends, s */
    int recheck;              /* set inside `single` once recheck_at has passed: every thread leaves the region
                               * after that step, the load is measured again */
    long long next_step;      /* where the stretch just run stopped (written by the master thread) */
    int threads_start;        /* the count at the start: the most the buffers are made for */
    int threads_now;          /* the count of the present stretch */
    int threads_min, threads_max; /* the fewest and most threads used */
    int n_changes;            /* times the count changed */
    double change_t_s[4], change_wall_s[4]; /* the first changes: simulated time and wall time into the loop, s */
    int change_to[4];         /* ... and the new count */
} run_ctx;

static void snapshot_frame(run_ctx *c)
{
    const sw_grid *g = sw_model_grid(c->model);
    const unsigned char *wet = sw_model_wet(c->model);
    double *tmp_u = malloc(2 * g->nx * sizeof(double));
    if (!tmp_u) {
        sw_fail(&c->loop_err, SW_ERR_NOMEM, "out of memory writing a snapshot");
        c->stop = 2;
        if (!c->split)
            return;
    }
    size_t j0 = 0, j1 = g->ny;   /* a split run: this rank's band, then the bands gathered on rank 0 */
    if (c->split)
        sw_split_rows(g->ny, c->split->size, c->split->rank, &j0, &j1);
    for (size_t j = j0; tmp_u && j < j1; j++) {
        double *row = c->frame + j * g->nx;
        sw_model_centre_row(c->model, j, row, tmp_u, tmp_u + g->nx);
        for (size_t i = 0; i < g->nx; i++)
            if (!wet[j * g->nx + i])
                row[i] = NAN;
    }
    free(tmp_u);
    if (c->split)   /* every rank gathers, even one that failed (split.h: collectives are never skipped) */
        c->split->ops->gather_rows(c->split, c->frame, g->nx * sizeof *c->frame);
    if (!c->snaps || c->stop)   /* a rank other than 0 of a split run, or a failure */
        return;
    if (sw_ncw_snapshots_append(c->snaps, sw_model_time(c->model), c->frame, &c->loop_err) != SW_OK ||
        (c->frames && sw_ckpt_frames_add(c->frames, sw_model_time(c->model), c->frame, &c->loop_err) != SW_OK))
        c->stop = 2;
    c->n_frames = sw_ckpt_frames_count(c->frames);
}

/* What a checkpoint of this run holds (checkpoint.h). */
static sw_ckpt_run ckpt_state(run_ctx *c)
{
    return (sw_ckpt_run){.model = c->model, .tracker = c->tracker, .gauges = c->gauges, .forcing = c->forcing,
                         .next_sample_s = &c->next_sample, .next_snapshot_s = &c->next_snapshot,
                         .next_checkpoint_s = &c->next_checkpoint, .volume_start_m3 = &c->volume_start,
                         .frames = &c->n_frames};
}

/* Writes the checkpoint at the present step, by one thread between steps; a failure stops the run. */
static void write_checkpoint(run_ctx *c)
{
    if (c->split) {   /* rank 0 saves the whole run: every band's state, maps and gauges first */
        sw_split_gather(c->split, c->model, c->tracker, c->gauges, c->sc->n_gauges);
        if (c->split->rank != 0)
            return;
    }
    const sw_ckpt_run st = ckpt_state(c);
    const long long step = (long long)llround(sw_model_time(c->model) / sw_model_dt(c->model));
    if ((c->frames && sw_ckpt_frames_sync(c->frames, &c->loop_err) != SW_OK) ||
        sw_ckpt_save(c->ckpt_path, &c->fp, step, &st, &c->loop_err) != SW_OK)
        c->stop = 2;
}

/* The observers at the model's present time, by one thread: gauges (watched always, sampled at
 * the interval and at the last step) and snapshots. Also used for the initial state. Each samples at
 * most once a call, and the next time to wait for is found in a bounded number of operations
 * (sw_gauges_next_time), whatever the interval: an interval shorter than dt samples every step. */
static void observe(run_ctx *c, int last)
{
    sw_model *m = c->model;
    double now = sw_model_time(m);
    if (c->waving)   /* every step of the sweep was watched row by row (run_row) */
        sw_gauges_watched(c->gauges, now);
    else
        sw_gauges_watch(c->gauges, m, c->sc->arrival_threshold_m);
    if (now >= c->next_sample - 1e-9 * c->sc->gauge_interval_s || last) {
        if (sw_gauges_sample(c->gauges, m, &c->loop_err) != SW_OK) {
            c->stop = 2;
            if (!c->split)   /* a split run still takes its part in the snapshot's gather */
                return;
        }
        if (c->air) {
            const size_t n = c->sc->n_gauges;
            sw_forcing_sample(c->forcing, now, c->air, c->air + n, c->air + 2 * n);
            sw_gauges_put_air(c->gauges, c->air, c->air + n, c->air + 2 * n);
        }
        c->next_sample = sw_gauges_next_time(c->next_sample, now, c->sc->gauge_interval_s);
    }
    if (c->frame && now >= c->next_snapshot - 1e-9 * c->sc->snapshot_interval_s) {
        snapshot_frame(c);
        c->next_snapshot = sw_gauges_next_time(c->next_snapshot, now, c->sc->snapshot_interval_s);
    }
}

/* A split run: c->stop (and *flag when not NULL) become the largest over the ranks, so that every rank
 * takes the same decisions from here. Nothing for one process. */
static void agree(run_ctx *c, int *flag)
{
    if (!c->split)
        return;
    long long v[2] = {c->stop, flag ? *flag : 0};
    c->split->ops->max_ll(c->split, v, 2);
    c->stop = (int)v[0];
    if (flag)
        *flag = (int)v[1];
}

/* Work between steps, by one thread: the observers, then interruption and progress. In a split run every
 * rank makes the same collective calls in the same order whatever happened to it alone: decisions to skip
 * one are taken on agreed values only (agree). */
static void between_steps(run_ctx *c, int last)
{
    agree(c, NULL);   /* a failure of the forcing on one rank */
    if (c->stop)
        return;
    observe(c, last);
    sw_model *m = c->model;
    double now = sw_model_time(m);
    size_t bad_row;
    double bad_s;
    if (!c->stop && c->tracker && sw_tracker_nonfinite_row(c->tracker, &bad_row, &bad_s)) {   /* a blow-up stops the run */
        const sw_grid *g = &c->setup->grid;
        sw_fail(&c->loop_err, SW_ERR_UNSTABLE, "the run blew up at t = %.6g s (step %lld of %lld): the elevation "
                "became infinite or NaN on grid row %zu (y = %.6g %s); reduce [run] courant_fraction or dt", bad_s,
                (long long)llround(bad_s / sw_model_dt(m)), c->setup->n_steps, bad_row,
                sw_grid_geographic(g) ? sw_grid_to_deg(g, g->y0_m + ((double)bad_row + 0.5) * g->dy_m)
                                      : (g->y0_m + ((double)bad_row + 0.5) * g->dy_m) / 1000,
                sw_grid_geographic(g) ? "deg" : "km");
        c->stop = 2;
    }
    /* a stop asked for (Ctrl-C reaches the ranks of a job at different moments) */
    int asked = (c->opt->stop && *c->opt->stop) ||
                (c->opt->stop_after_steps > 0 && llround(now / sw_model_dt(m)) >= c->opt->stop_after_steps);
    agree(c, &asked);
    if (c->stop)
        return;
    const double every = c->sc->checkpoint_interval_s;
    if (c->checkpointing && !last && now >= c->next_checkpoint - 1e-9 * every) {
        c->next_checkpoint = sw_gauges_next_time(c->next_checkpoint, now, every);
        write_checkpoint(c);
        agree(c, NULL);
        if (c->stop)
            return;
    }
    if (asked) {
        if (c->checkpointing) {
            write_checkpoint(c);
            agree(c, NULL);
            if (c->stop)
                return;
            c->checkpointed = 1;
        }
        c->stop = 1;
        return;
    }
    if (c->opt->progress) {
        double wall = omp_get_wtime() - c->t_start;
        if (wall >= c->next_progress || last) {
            long long step = (long long)llround(now / sw_model_dt(m));
            sw_progress p = {
                .step = step, .n_steps = c->setup->n_steps, .sim_time_s = now,
                .duration_s = (double)c->setup->n_steps * sw_model_dt(m), .elapsed_s = wall,
                .remaining_s = step > c->first_step
                    ? wall * (double)(c->setup->n_steps - step) / (double)(step - c->first_step) : NAN,
                .cell_updates_per_s = wall > 0
                    ? (double)(step - c->first_step) * (double)sw_grid_cells(&c->setup->grid) / wall : 0,
            };
            c->opt->progress(&p, c->opt->progress_user);
            c->next_progress = wall + 0.5;
        }
    }
}

/* By one thread between steps (in `single`, whose end publishes it): once the present stretch has run its
 * wall time, every thread is to leave the parallel region after this step so that time_loop measures the
 * load again. Nothing when the thread count is fixed. */
static void recheck_due(run_ctx *c)
{
    if (c->mark && !c->stop && omp_get_wtime() >= c->recheck_at)
        c->recheck = 1;
}

/* Step n of n_steps, by every thread of the enclosing parallel region: the forcing's slabs and edge level
 * at the time the step ends (forcing.h), the step (which also updates the tracker attached in sw_run),
 * then by one thread the clock and the work between steps. The barrier at the end of `single` publishes
 * c->stop to every thread. */
static void after_step(run_ctx *c, long long n, long long n_steps)
{
    sw_model_tick(c->model);
    if (sw_forcing_failed(c->forcing, &c->loop_err))
        c->stop = 2;
    between_steps(c, n + 1 == n_steps);   /* returns at once on a failure, all ranks alike (agree) */
    recheck_due(c);
}

static void step_in_region(run_ctx *c, long long n, long long n_steps)
{
    if (c->forcing)
        sw_forcing_advance(c->forcing, c->model, (double)(n + 1) * sw_model_dt(c->model));
    sw_model_step(c->model);
    if (c->split) {   /* its messages from the thread that started MPI (split.h) */
        SW_OMP(master)
        after_step(c, n, n_steps);
        SW_OMP(barrier)
    } else {
        SW_OMP(single)
        after_step(c, n, n_steps);
    }
}

/* One step while the sea floor still moves: the surface's change over the step (the faults' motion in
 * (t_n, t_n+1], evaluated with the threads of its own parallel loops) is added to the elevation, then the
 * step in a parallel region of its own. Returns 0 to go on, else stop. */
static int rupture_step(run_ctx *c, long long n, long long n_steps)
{
    const double dt = sw_model_dt(c->model), t0 = (double)n * dt;
    int moved = 0;
    if (sw_faults_increment(c->faults, t0, t0 + dt, &c->setup->grid, c->setup->depth_m, c->sc->min_depth_m,
                            c->fault_inc, &moved, &c->loop_err) != SW_OK) {
        c->stop = 2;
        return 1;
    }
    if (moved)
        sw_model_add_eta(c->model, c->fault_inc);
    SW_OMP(parallel)
    step_in_region(c, n, n_steps);
    return c->stop;
}

/* The steps of the sweep that starts at step n: the schedule's c->wave_k, cut to end on the first step
 * after which the work between steps samples the gauges, takes a snapshot or a checkpoint, or stops (the
 * same comparisons as observe and between_steps make), and at the last step. Every thread computes the
 * same number from values written in `single` sections. */
static int sweep_steps(const run_ctx *c, long long n, long long n_steps)
{
    long long k = c->wave_k < n_steps - n ? c->wave_k : n_steps - n;
    const double dt = sw_model_dt(c->model);
    for (long long q = 1; q < k; q++) {
        const double t = (double)(n + q) * dt;
        if (t >= c->next_sample - 1e-9 * c->sc->gauge_interval_s
            || (c->frame && t >= c->next_snapshot - 1e-9 * c->sc->snapshot_interval_s)
            || (c->checkpointing && t >= c->next_checkpoint - 1e-9 * c->sc->checkpoint_interval_s)
            || (c->opt->stop_after_steps > 0 && n + q >= c->opt->stop_after_steps)) {
            k = q;
            break;
        }
    }
    if (c->forcing && k > 1) {   /* and before a step that needs the forcing's next slabs */
        double t_next[SW_WAVE_MAX_STEPS];
        for (long long q = 0; q < k; q++)
            t_next[q] = (double)(n + 1 + q) * dt;
        return sw_forcing_steps_on_slabs(c->forcing, t_next, (int)k);
    }
    return (int)k;
}

/* Steps n .. n + k - 1 (k >= 2) in one sweep over memory (sw_model_steps), by every thread of the
 * enclosing parallel region, then the work between steps once, as after_step does for one step. */
static void sweep_in_region(run_ctx *c, long long n, int k, long long n_steps)
{
    const double dt = sw_model_dt(c->model);
    if (c->forcing)   /* the slabs of the first step, which serve all k (sweep_steps) */
        sw_forcing_advance(c->forcing, c->model, (double)(n + 1) * dt);
    SW_OMP(single)
    {
        c->waving = 1;   /* the end of `single` publishes it, and per_step, before any row is observed */
        if (c->forcing) {   /* each step's slab weight and edge level */
            double t_next[SW_WAVE_MAX_STEPS];
            for (int q = 0; q < k; q++)
                t_next[q] = (double)(n + 1 + q) * dt;
            sw_forcing_per_step(c->forcing, t_next, k, sw_model_edge_level(c->model), c->per_step);
        }
    }
    sw_model_steps_forced(c->model, k, c->forcing ? c->per_step : NULL);   /* the clock too */
    if (c->split) {   /* its messages from the thread that started MPI (split.h) */
        SW_OMP(master)
        {
            if (sw_forcing_failed(c->forcing, &c->loop_err))
                c->stop = 2;
            between_steps(c, n + k == n_steps);
            c->waving = 0;
        }
        SW_OMP(barrier)
        return;
    }
    SW_OMP(single)
    {
        if (sw_forcing_failed(c->forcing, &c->loop_err))
            c->stop = 2;
        between_steps(c, n + k == n_steps);
        c->waving = 0;
        recheck_due(c);
    }
}

/* The model's row observer in a run (sw_run attaches it): the tracker, and during a sweep of several steps
 * the gauges whose lower stencil row it is, watched at that row's step (sw_gauges_watch_row): in a split
 * run, by the rank that samples them and whose statistics are gathered (the row above may be its halo's). */
static void run_row(void *ctx, const sw_model *m, size_t j, double time_s, const sw_row_values *pre)
{
    run_ctx *c = ctx;
    sw_tracker_observe(c->tracker, m, j, time_s, pre);
    if (c->waving) {
        const double dt = sw_model_dt(m);
        sw_gauges_watch_row(c->gauges, m, j, time_s, (double)(llround(time_s / dt) - 1) * dt,
                            c->sc->arrival_threshold_m);
    }
}

/* Whether the threads follow the load in this run (base/cpu_share.h): when the process chose the count
 * itself (not --threads, OMP_NUM_THREADS or SHOREWARD_THREADS_AUTO=off) and nothing set another since; not
 * in a split run (every rank keeps its threads) nor a sweep member (one-thread regions nested in the
 * sweep's); not from one thread (the buffers are made for the start's count: it can only go down). Then
 * takes the first reading and starts the first stretch. */
static void threads_watch_start(run_ctx *c)
{
    c->threads_start = c->threads_now = c->threads_min = c->threads_max = omp_get_max_threads();
    if (c->split || c->opt->sink || c->opt->threads > 0 || c->threads_start < 2 ||
        !sw_cpu_share_adapts(c->threads_start, &c->wait))
        return;
    c->mark = sw_cpu_mark_new();   /* NULL (no memory): the count stays */
    c->recheck_at = omp_get_wtime() + SW_CPU_SHARE_RECHECK_S;
}

/* Between two stretches, outside any parallel region: the others' load over the stretch just run, without
 * waiting, and the count for the next (sw_cpu_share_retune), put into effect for the next region and kept
 * for the summary. */
static void threads_retune(run_ctx *c)
{
    sw_cpu_load load;
    sw_cpu_load_since(c->mark, &load);
    const int t = sw_cpu_share_retune(&load, c->wait, c->threads_now, c->threads_start);
    if (t != c->threads_now) {
        omp_set_num_threads(t);
        const int q = c->n_changes;
        if (q < (int)(sizeof c->change_to / sizeof c->change_to[0])) {
            c->change_t_s[q] = sw_model_time(c->model);
            c->change_wall_s[q] = omp_get_wtime() - c->t_start;
            c->change_to[q] = t;
        }
        c->n_changes++;
        c->threads_now = t;
        c->threads_min = t < c->threads_min ? t : c->threads_min;
        c->threads_max = t > c->threads_max ? t : c->threads_max;
    }
    c->recheck = 0;
    c->recheck_at = omp_get_wtime() + SW_CPU_SHARE_RECHECK_S;
}

/* The steps from c->first_step to the end. While a rupture goes on each step adds the sea floor's motion
 * first (docs/faults.md), in a region of its own; once the last segment has stopped, the steps run as
 * without it, in one parallel region, or, when the threads follow the load, in one region per stretch of
 * about SW_CPU_SHARE_RECHECK_S of wall time with the load measured between them. Every thread leaves a
 * stretch's region at the same step (c->recheck, set in `single`), between two steps or sweeps: the steps,
 * the sweeps and so the results are those of one region. */
static void time_loop(run_ctx *c)
{
    const long long n_steps = c->setup->n_steps;
    long long first = c->first_step;
    threads_watch_start(c);
    while (c->faults && first < n_steps && (double)first * sw_model_dt(c->model) < c->fault_end_s) {
        if (rupture_step(c, first++, n_steps))
            break;
        if (c->mark && omp_get_wtime() >= c->recheck_at)
            threads_retune(c);
    }
    while (!c->stop && first < n_steps) {
        SW_OMP(parallel)
        {
            long long n = first;
            while (n < n_steps) {
                const int k = c->wave_k > 1 ? sweep_steps(c, n, n_steps) : 1;
                if (k > 1)
                    sweep_in_region(c, n, k, n_steps);
                else
                    step_in_region(c, n, n_steps);
                n += k;
                if (c->stop || c->recheck)
                    break;
            }
            SW_OMP(master)
            c->next_step = n;   /* every thread's n is the same; the region's end publishes it */
        }
        first = c->next_step;
        if (c->recheck && !c->stop && first < n_steps)
            threads_retune(c);
    }
    if (c->mark && c->threads_now != c->threads_start)
        omp_set_num_threads(c->threads_start);   /* a next run in this process starts as this one did */
    sw_cpu_mark_free(c->mark);
    c->mark = NULL;
}

int sw_run_schedule(const sw_scenario *sc, const sw_setup *setup, int threads, int asked, int ranks, char *why,
                    size_t n)
{
    /* a split run: each rank's band stands for the grid, and its thinnest band limits the steps (the halo of
     * a sweep comes from the neighbours' bands: sw_model_wave_halo) */
    const size_t band = ranks > 1 ? setup->grid.ny / (size_t)ranks : 0;
    const int most = band ? sw_model_wave_steps_max(setup->layout, sc->precision, sc->edges, &sc->terms, band)
                          : SW_WAVE_MAX_STEPS;
    const char *no = sc->edges[SW_SOUTH] == SW_EDGE_PERIODIC ? "the south and north edges are periodic: a step's "
                                                              "first rows need the step before's last"
                   : most < 2 ? "the bands of the split are too thin for the halo of two steps"
                   : NULL;
    if (no) {
        snprintf(why, n, "one step per sweep over memory (%s%s)", no, asked > 1 ? "; --steps-per-sweep is not taken" : "");
        return 1;
    }
    const size_t cache = sw_cpu_cache_bytes();
    size_t window = 0;
    const int k = sw_model_wave_steps_for(setup->layout, sc->precision, &setup->grid, sc->edges, &sc->terms, threads,
                                          cache, band, &window);
    if (asked > most) {
        snprintf(why, n, "%d steps per sweep over memory (%d asked for; a sweep's halo must fit in the thinnest of "
                 "the %d bands, %zu rows)", most, asked, ranks, band);
        return most;
    }
    if (asked > 0) {
        snprintf(why, n, asked == 1 ? "one step per sweep over memory (asked for)"
                                    : "%d steps per sweep over memory (asked for; the choice would be %d)", asked, k);
        return asked;
    }
    if (k > 1)
        snprintf(why, n, "%d steps per sweep over memory: a wavefront of rows, %.3g MB, in the %.3g MB cache%s", k,
                 (double)window / 1e6, (double)cache / 1e6, threads > 1 ? ", the threads as a pipeline of steps" : "");
    else if (2.0 * (double)sw_model_bytes_for(&setup->grid, sc->precision, setup->layout, &sc->terms) <= (double)cache)
        snprintf(why, n, "one step per sweep over memory: the model's %.3g MB stay in the %.3g MB cache from one "
                 "step to the next", (double)sw_model_bytes_for(&setup->grid, sc->precision, setup->layout, &sc->terms) / 1e6,
                 (double)cache / 1e6);
    else
        snprintf(why, n, "one step per sweep over memory: %zu rows are too few to fill a wavefront's pipeline",
                 setup->grid.ny);
    return k;
}

static void file_path(char *out, const sw_run_options *opt, const char *name)
{
    snprintf(out, SW_PATH_MAX, "%s/%s%s", opt->out_dir, opt->file_prefix ? opt->file_prefix : "", name);
}

/* The path an output file is written at: `name` (with the prefix) in the staging folder (outdir.h),
 * into out (size SW_PATH_MAX + 64); its name alone into name_out (size 256) when not NULL. */
static void staged_path(char *out, char *name_out, const char *stage, const sw_run_options *opt, const char *name)
{
    const char *pre = opt->file_prefix ? opt->file_prefix : "";
    snprintf(out, SW_PATH_MAX + 64, "%s/%s%s", stage, pre, name);
    if (name_out)
        snprintf(name_out, 256, "%s%s", pre, name);
}

sw_status sw_run_crs(const sw_scenario *sc, const sw_grid *g, sw_crs *crs, sw_error *err)
{
    memset(crs, 0, sizeof *crs);
    if (sw_grid_geographic(g) || !sc->bed_file[0])
        return SW_OK;
    char path[SW_PATH_MAX];
    sw_status rc = sw_scenario_resolve(sc, sc->bed_file, path, sizeof path, err);
    if (rc == SW_OK)
        rc = sw_crs_read(path, sc->bed_variable, crs, err);
    if (rc == SW_OK && (strcmp(crs->mapping_name, "latitude_longitude") == 0 ||
                        strcmp(crs->mapping_name, "rotated_latitude_longitude") == 0)) {
        rc = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' (the grid_mapping of '%s') is %s, in degrees, but the "
                     "grid is projected, in metres (accepted: a projected grid mapping, or [grid] kind = "
                     "geographic)", path, crs->variable, sc->bed_variable, crs->mapping_name);
        sw_crs_free(crs);
    }
    return rc;
}

/* Readies checkpoints for a run that writes files, once its parts exist (their state at t = 0) and before
 * the first observation: with opt->resume, the state of the checkpoint in the output folder and the
 * snapshots it names, appended again to the new snapshot file. Sets c->first_step (the step to go on from)
 * and *resumed. */
static sw_status start_checkpoints(run_ctx *c, int *resumed, sw_error *err)
{
    const sw_scenario *sc = c->sc;
    const sw_run_options *opt = c->opt;
    *resumed = 0;
    if (opt->resume && (opt->sink || !(sc->checkpoint_interval_s > 0)))
        return sw_fail(err, SW_ERR_USAGE, opt->sink ? "a run handing its results to a sink (a sweep member) has no "
                       "checkpoint to resume from" : "no checkpoint to resume from: the scenario's [run] "
                       "checkpoint_interval is 0, so no run of it writes one (accepted: a time > 0)");
    if (opt->sink || !(sc->checkpoint_interval_s > 0))
        return SW_OK;
    c->checkpointing = 1;
    c->next_checkpoint = sc->checkpoint_interval_s;
    sw_ckpt_fingerprint_of(sc, c->setup, &c->fp);
    file_path(c->ckpt_path, opt, SW_CKPT_NAME);
    char frames_path[SW_PATH_MAX];
    file_path(frames_path, opt, SW_CKPT_FRAMES_NAME);
    const size_t cells = sw_grid_cells(&c->setup->grid);
    if (!opt->resume)
        return c->snaps ? sw_ckpt_frames_open(frames_path, cells, -1, &c->frames, err) : SW_OK;
    const sw_ckpt_run st = ckpt_state(c);
    sw_status rc = sw_ckpt_load(c->ckpt_path, &c->fp, &st, &c->first_step, err);
    if (rc == SW_OK && c->snaps)
        rc = sw_ckpt_frames_open(frames_path, cells, c->n_frames, &c->frames, err);
    for (long long k = 0; rc == SW_OK && c->frames && k < c->n_frames; k++) {   /* rank 0 of a split run */
        double t;
        rc = sw_ckpt_frames_get(c->frames, k, &t, c->frame, err);
        if (rc == SW_OK)
            rc = sw_ncw_snapshots_append(c->snaps, t, c->frame, err);
    }
    *resumed = rc == SW_OK;
    return rc;
}

static void fill_results(const run_ctx *c, sw_run_result *res)
{
    res->n_gauges = c->sc->n_gauges;
    for (size_t q = 0; q < c->sc->n_gauges; q++) {
        sw_gauge_result *r = &res->gauge[q];
        const sw_gauge_spec *sp = &c->sc->gauges[q];
        sw_gauge_stats st = sw_gauges_stats(c->gauges, q);
        snprintf(r->name, sizeof r->name, "%s", sp->name);
        r->x_m = sp->x_m;
        r->y_m = sp->y_m;
        r->depth_m = sw_gauges_depth(c->gauges, q);
        r->dry = sw_gauges_dry(c->gauges, q);
        r->arrival_s = st.arrival_s;
        r->peak_m = st.peak_m;
        r->peak_time_s = st.peak_time_s;
        r->trough_m = st.trough_m;
        r->trough_time_s = st.trough_time_s;
    }
}

sw_status sw_run(const sw_scenario *sc, const sw_setup *setup, const sw_run_options *opt,
                 sw_run_result *res, sw_error *err)
{
    memset(res, 0, sizeof *res);
    run_ctx c = {.sc = sc, .setup = setup, .opt = opt};
    sw_split *split = opt->split && opt->split->size > 1 ? opt->split : NULL;
    const int root = !split || split->rank == 0;   /* writes the files */
    c.split = split;
    if (split && opt->sink)
        return sw_fail(err, SW_ERR_USAGE, "a run split over %d MPI ranks cannot hand its results to a sweep",
                       split->size);
    sw_status rc = opt->sink || !root ? SW_OK : sw_make_dirs(opt->out_dir, err);
    if (split)
        rc = sw_split_agree(split, rc, err);
    if (rc != SW_OK)
        return rc;
    if (opt->threads > 0)
        omp_set_num_threads(opt->threads);
    res->threads = omp_get_max_threads();

    sw_model_config cfg = sw_setup_model_config(sc, setup);
    cfg.allow_unstable = opt->allow_unstable;

    sw_run_meta meta = {
        .title = sc->title, .history = opt->history ? opt->history : "", .scenario_text = sc->text ? sc->text : "",
        .layout = setup->layout->name, .precision = sw_precision_name(sc->precision), .version = SW_VERSION, .caution = sw_caution(), .time_origin = sc->origin,
        .dt_s = setup->dt_s, .courant = setup->courant, .courant_limit = setup->courant_limit,
        .arrival_threshold_m = sc->arrival_threshold_m, .gravity_ms2 = sc->gravity_ms2, .terms = &sc->terms,
    };
    meta.caution = sw_caution_for(sc);
    sw_crs crs = {0};
    if (!opt->sink) {   /* with a sink the paths stay "" (and no NetCDF call is made: sinks run in threads) */
        file_path(res->gauges_path, opt, "gauges.nc");
        file_path(res->maps_path, opt, "maps.nc");
        rc = sw_run_crs(sc, &setup->grid, &crs, err);
        if (rc != SW_OK)
            return rc;
        meta.crs = &crs;
        meta.grid = &setup->grid;
    }

    rc = sw_model_create(&cfg, &c.model, err);
    if (rc == SW_OK)
        rc = sw_tracker_create(c.model, sc->arrival_threshold_m, res->threads, &c.tracker, err);
    if (rc == SW_OK)
        rc = sw_tracker_attach(c.tracker, c.model, err);   /* after omp_set_num_threads above */
    if (rc == SW_OK) {   /* the tracker, and the gauges during sweeps of several steps (run_row) */
        sw_model_set_observer(c.model, run_row, &c);
        res->steps_per_sweep = c.wave_k = sw_run_schedule(sc, setup, res->threads, opt->steps_per_sweep,
                                                          split ? split->size : 1, res->schedule, sizeof res->schedule);
    }
    if (rc == SW_OK)
        rc = sw_gauges_create(c.model, setup->depth_m, sc->gauges, sc->n_gauges, setup->n_samples, &c.gauges, err);
    if (rc == SW_OK) {
        double gx[SW_MAX_GAUGES], gy[SW_MAX_GAUGES];
        for (size_t q = 0; q < sc->n_gauges; q++) {
            gx[q] = sc->gauges[q].x_m;
            gy[q] = sc->gauges[q].y_m;
        }
        rc = sw_forcing_create(sc, c.model, (double)setup->n_steps * setup->dt_s, gx, gy, sc->n_gauges, &c.forcing, err);
        if (rc == SW_OK && c.forcing) {
            sw_forcing_describe(c.forcing, res->forcing, sizeof res->forcing);
            meta.forcing = res->forcing;
        }
        if (rc == SW_OK && sw_forcing_has_air(c.forcing)) {
            c.air = malloc(3 * (sc->n_gauges ? sc->n_gauges : 1) * sizeof *c.air);
            rc = c.air ? sw_gauges_enable_air(c.gauges, err) : sw_fail(err, SW_ERR_NOMEM, "out of memory for the gauges' wind");
        }
        if (rc == SW_OK && c.forcing) {   /* the slabs around t = 0, for the first sample */
            sw_forcing_advance(c.forcing, c.model, 0);
            if (sw_forcing_failed(c.forcing, err))
                rc = err->code;
        }
    }
    if (rc == SW_OK && split)
        rc = sw_split_attach(split, c.model, sc->edges[SW_SOUTH] == SW_EDGE_PERIODIC, err);
    if (rc == SW_OK && (c.fault_end_s = sw_faults_end(&setup->faults)) > 0) {   /* a rupture in time */
        c.faults = &setup->faults;
        c.fault_inc = malloc(sw_grid_cells(&setup->grid) * sizeof(double));
        if (!c.fault_inc)
            rc = sw_fail(err, SW_ERR_NOMEM, "out of memory for the rupture's sea-floor motion");
    }
    /* the files are written in a staging folder and moved into place together once all are complete */
    char stage[SW_PATH_MAX + 32] = "", staged[3][SW_PATH_MAX + 64], names[3][256];
    size_t n_staged = 0;
    if (rc == SW_OK && !opt->sink && root)
        rc = sw_outdir_stage(opt->out_dir, stage, sizeof stage, err);
    if (rc == SW_OK && sc->snapshot_interval_s > 0 && !opt->sink) {
        file_path(res->snapshots_path, opt, "snapshots.nc");
        staged_path(staged[2], names[2], stage, opt, "snapshots.nc");
        c.frame = malloc(sw_grid_cells(&setup->grid) * sizeof(double));
        if (!c.frame)
            rc = sw_fail(err, SW_ERR_NOMEM, "out of memory for the snapshot buffer");
        else if (root)
            rc = sw_ncw_snapshots_open(staged[2], &meta, &setup->grid, setup->depth_m, sw_model_wet(c.model),
                                       &c.snaps, err);
    }
    int resumed = 0;
    if (rc == SW_OK) {
        c.volume_start = sw_model_volume(c.model);
        /* the initial state is sample 0 and snapshot 0 */
        c.next_sample = 0;
        c.next_snapshot = 0;
        rc = start_checkpoints(&c, &resumed, err);   /* resumed: the state of a checkpoint instead */
        res->volume_start_m3 = c.volume_start;
    }
    if (split)   /* no rank steps unless every rank is ready */
        rc = sw_split_agree(split, rc, err);
    if (rc == SW_OK) {
        c.t_start = omp_get_wtime();
        c.next_progress = 0.5;
        if (!resumed)
            observe(&c, 0);
        agree(&c, NULL);   /* a split run: a failure of the first observation on one rank stops all */
        if (!c.stop)
            time_loop(&c);
        res->wall_s = omp_get_wtime() - c.t_start;
        res->ranks = split ? split->size : 1;
        res->threads_changes = c.n_changes;   /* the threads following the load (time_loop) */
        res->threads_min = c.n_changes ? c.threads_min : res->threads;
        res->threads_max = c.n_changes ? c.threads_max : res->threads;
        memcpy(res->threads_change_t_s, c.change_t_s, sizeof c.change_t_s);
        memcpy(res->threads_change_wall_s, c.change_wall_s, sizeof c.change_wall_s);
        memcpy(res->threads_change_to, c.change_to, sizeof c.change_to);
        if (split && !c.stop) {   /* rank 0 then holds what one process would */
            sw_split_gather(split, c.model, c.tracker, c.gauges, sc->n_gauges);
            long long most[2] = {llround(split->exchange_s * 1e6), llround(split->halo_bytes)};
            split->ops->max_ll(split, most, 2);
            const long long steps = (long long)llround(sw_model_time(c.model) / sw_model_dt(c.model)) - c.first_step;
            res->halo_rows = split->halo;
            res->sweep_halo_rows = c.wave_k > 1 ? sw_model_wave_halo(c.model, c.wave_k) : 0;
            res->exchange_s = (double)most[0] * 1e-6;
            res->halo_bytes_per_step = steps > 0 ? (double)most[1] / (double)steps : 0;
            res->exchanges_per_step = steps > 0 ? (double)split->exchanges / (double)steps : 0;
        }
        res->steps = (long long)llround(sw_model_time(c.model) / sw_model_dt(c.model));
        res->end_time_s = sw_model_time(c.model);
        res->cell_updates_per_s = res->wall_s > 0
            ? (double)(res->steps - c.first_step) * (double)sw_grid_cells(&setup->grid) / res->wall_s : 0;
        res->volume_end_m3 = sw_model_volume(c.model);
        if (c.stop == 1 && c.checkpointed)
            rc = sw_fail(err, SW_ERR_INTERRUPTED, "run interrupted at t = %g s; no output files were written; "
                         "checkpoint written to %s: run the same scenario with --resume and the same output "
                         "folder to continue", sw_model_time(c.model), c.ckpt_path);
        else if (c.stop == 1)
            rc = sw_fail(err, SW_ERR_INTERRUPTED, "run interrupted at t = %g s; no output files were written",
                         sw_model_time(c.model));
        else if (c.stop == 2) {
            *err = c.loop_err;
            rc = err->code;
        } else if (sw_tracker_nonfinite(c.tracker))
            rc = sw_fail(err, SW_ERR_UNSTABLE, "the run blew up (non-finite elevation); reduce [run] courant_fraction "
                         "or dt");
        if (split)   /* a failure seen by one rank is the job's */
            rc = sw_split_agree(split, rc, err);
    }
    sw_map_set maps = {0};
    double *air_maps = NULL;   /* [2 cells]: highest wind, lowest pressure */
    res->wind_max_ms = res->air_pressure_min_pa = NAN;
    if (rc == SW_OK && root)
        rc = sw_tracker_maps(c.tracker, c.model, setup->depth_m, &maps, err);
    if (rc == SW_OK && root && sw_forcing_has_air(c.forcing)) {
        const size_t n = sw_grid_cells(&setup->grid);
        air_maps = malloc(2 * n * sizeof *air_maps);
        if (!air_maps)
            rc = sw_fail(err, SW_ERR_NOMEM, "out of memory for the wind and pressure maps");
        else {
            sw_forcing_maps(c.forcing, maps.wet, air_maps, air_maps + n);
            sw_forcing_track(c.forcing, &maps.n_track, &maps.track_time_s, &maps.track_x_m, &maps.track_y_m,
                             &maps.track_p_pa);
            maps.wind_max_ms = air_maps;
            maps.air_pressure_min_pa = air_maps + n;
            for (size_t k = 0; k < n; k++) {
                if (air_maps[k] > res->wind_max_ms || isnan(res->wind_max_ms))
                    res->wind_max_ms = isnan(air_maps[k]) ? res->wind_max_ms : air_maps[k];
                if (air_maps[n + k] < res->air_pressure_min_pa || isnan(res->air_pressure_min_pa))
                    res->air_pressure_min_pa = isnan(air_maps[n + k]) ? res->air_pressure_min_pa : air_maps[n + k];
            }
        }
    }
    if (rc == SW_OK && root) {
        sw_gauge_table table;
        res->max_abs_eta_m = sw_tracker_max_abs(c.tracker);
        res->noise_index = sw_tracker_noise(c.tracker, maps.wet);
        sw_gauges_table(c.gauges, &table);
        fill_results(&c, res);
        const char *set[3];
        if (!opt->sink) {
            staged_path(staged[0], names[0], stage, opt, "gauges.nc");
            staged_path(staged[1], names[1], stage, opt, "maps.nc");
        }
        if (opt->sink)
            rc = opt->sink(&maps, &table, opt->sink_user, err);   /* instead of the files */
        else if (table.n_stations > 0) {
            rc = sw_ncw_gauges(staged[0], &meta, &table, err);
            set[n_staged++] = names[0];
        } else
            res->gauges_path[0] = '\0';   /* no gauges, no gauge file */
        if (rc == SW_OK && !opt->sink) {
            rc = sw_ncw_maps(staged[1], &meta, &maps, err);
            set[n_staged++] = names[1];
        }
        if (rc == SW_OK && c.snaps) {
            rc = sw_ncw_snapshots_commit(c.snaps, err);
            c.snaps = NULL;
            set[n_staged++] = names[2];
        }
        if (rc == SW_OK && !opt->sink)   /* all complete: the set replaces the previous one (outdir.h) */
            rc = sw_outdir_commit(opt->out_dir, stage, opt->file_prefix, set, n_staged, meta.caution, err);
    }
    if (split)   /* rank 0's writing: the job's outcome (every rank comes here) */
        rc = sw_split_agree(split, rc, err);
    sw_ncw_snapshots_abort(c.snaps);
    if (rc != SW_OK && stage[0]) {   /* the previous set stays as it was; the message names the final paths */
        sw_outdir_rename_msg(err, stage, opt->out_dir);
        sw_outdir_unstage(stage);
    }
    sw_ckpt_frames_close(c.frames, rc == SW_OK);   /* the run's files are written: its checkpoint is spent */
    if (rc == SW_OK && c.checkpointing)
        remove(c.ckpt_path);
    free(air_maps);
    free(c.air);
    free(c.fault_inc);
    sw_forcing_free(c.forcing);
    free(c.frame);
    sw_gauges_free(c.gauges);
    sw_tracker_free(c.tracker);
    sw_model_free(c.model);
    sw_crs_free(&crs);
    return rc;
}
