/* run.h - one complete run: model, observers and writers, from a setup to files and a summary.
 *
 * Data flow: setup (seabed, source, dt) -> model (layout + state + stepper) -> observers (gauges,
 * arrival and extreme tracking) -> writers (NetCDF) -> the summary returned to the caller.
 */
#ifndef SW_RUN_H
#define SW_RUN_H

#include <signal.h>
#include <stddef.h>

#include "observers/observed.h"
#include "inputs/crs.h"
#include "inputs/scenario.h"
#include "run/setup.h"
#include "base/status.h"

/* Progress of a running model, passed to the caller's callback about twice a second. */
typedef struct {
    long long step, n_steps;     /* steps done, steps in the run */
    double sim_time_s;           /* simulated time reached, s */
    double duration_s;           /* simulated time at the end, s */
    double elapsed_s;            /* wall-clock time so far, s */
    double remaining_s;          /* estimated wall-clock time left, s */
    double cell_updates_per_s;   /* water and land cells advanced per wall-clock second */
} sw_progress;

typedef void (*sw_progress_fn)(const sw_progress *p, void *user);

/* Receives a finished run's maps and gauge series in place of the files (see sw_run_options.sink).
 * The arrays are valid only during the call. Returns SW_OK, or a failure that sw_run returns. */
typedef sw_status (*sw_run_sink_fn)(const sw_map_set *maps, const sw_gauge_table *gauges, void *user,
                                    sw_error *err);

typedef struct {
    const char *out_dir;          /* folder for the output files; created if missing */
    const char *file_prefix;      /* put before each file name ("" for none; NULL = "") */
    const char *history;          /* the command line, for the history attribute ("" if none) */
    int threads;                  /* OpenMP threads; 0 = the OpenMP default */
    sw_progress_fn progress;      /* NULL = no progress reports */
    void *progress_user;          /* passed to progress */
    volatile sig_atomic_t *stop;  /* when it becomes non-zero the run stops (SW_ERR_INTERRUPTED); may be NULL */
    sw_run_sink_fn sink;          /* non-NULL: hand maps and gauge series to sink and write no file at all
                                   * (out_dir and file_prefix unused, no snapshots); sweep members use it,
                                   * since NetCDF calls must not run in several threads at once */
    void *sink_user;              /* passed to sink */
    long long stop_after_steps;   /* > 0: stop as an interruption does once the model has taken this many
                                   * steps (writing the final checkpoint when checkpoints are on); for tests */
    int resume;                   /* 1: continue from the checkpoint in out_dir (run/checkpoint.h) instead of
                                   * t = 0 (`shoreward run --resume`) */
    int allow_unstable;           /* 1: accept a time step beyond the layout's limit (sw_model_config); for
                                   * tests of what a run does when it blows up */
    struct sw_split *split;       /* NULL: one process; else this rank of a run split over the processes of
                                   * a job (run/split.h): every rank calls sw_run with the same scenario and
                                   * options but the progress callback; rank 0 writes the files. No sink,
                                   * resume or checkpoints then (SW_ERR_USAGE) */
    int steps_per_sweep;          /* 0: chosen by sw_run_schedule; >= 1: that many steps per sweep over memory
                                   * (1: one step per sweep), where the run allows more than one
                                   * (`run --steps-per-sweep`, for benchmarking) */
} sw_run_options;

/* What a gauge saw (times in s since the origin; NaN when never reached or the gauge is dry). */
typedef struct {
    char name[SW_NAME_MAX];
    double x_m, y_m;
    double depth_m;               /* still-water depth at the gauge, m (negative on land) */
    int dry;                      /* 1 when no water cell surrounds it */
    double arrival_s;             /* first time |eta| >= threshold */
    double peak_m, peak_time_s;   /* highest elevation and when */
    double trough_m, trough_time_s; /* lowest elevation and when */
} sw_gauge_result;

typedef struct {
    size_t n_gauges;
    sw_gauge_result gauge[SW_MAX_GAUGES];
    char gauges_path[SW_PATH_MAX];    /* files written; gauges_path is "" when there are no gauges */
    char maps_path[SW_PATH_MAX];
    char snapshots_path[SW_PATH_MAX]; /* "" when no snapshots were asked for */
    int threads;                      /* threads at the start (threads_min / threads_max: all it used) */
    long long steps;                  /* steps taken */
    double end_time_s;                /* simulated time at the end, s */
    double wall_s;                    /* wall-clock time of the time loop, s */
    double cell_updates_per_s;        /* grid cells x steps / wall_s */
    double volume_start_m3, volume_end_m3; /* displaced water volume at start and end, m3 */
    double max_abs_eta_m;             /* largest |eta| anywhere, m */
    double noise_index;               /* grid-scale noise of the eta_max map (sw_tracker_noise) */
    char forcing[3 * SW_PATH_MAX];    /* the forcing in force (sw_forcing_describe), "" when none */
    double wind_max_ms;               /* highest 10 m wind over the water, m/s; NaN without an atmosphere */
    double air_pressure_min_pa;       /* lowest air pressure over the water, Pa; NaN likewise */
    int ranks;                        /* processes the run was split over (1: not split) */
    size_t halo_rows;                 /* rows of each band's halo on each side (split runs), else 0 */
    size_t sweep_halo_rows;           /* split runs sweeping several steps: the rows of a sweep's halo on each
                                       * side, exchanged once a sweep and computed by the band too
                                       * (sw_model_wave_halo), else 0 */
    double exchange_s;                /* split runs: wall-clock time in halo exchanges, the most of any rank, s */
    double halo_bytes_per_step;       /* split runs: bytes a rank sends per step, the most of any rank */
    double exchanges_per_step;        /* split runs: halo exchanges per step (each with both neighbours) */
    int steps_per_sweep;              /* the schedule: steps per sweep over memory (sw_run_schedule) */
    char schedule[200];               /* the schedule in words, with why (sw_run_schedule) */
    int threads_changes;              /* times the thread count changed as other programs took or freed cores
                                       * (base/cpu_share.h: a count chosen automatically only), 0 = never */
    int threads_min, threads_max;     /* the fewest and the most threads used (both `threads` when the count
                                       * never changed) */
    double threads_change_t_s[4];     /* the first (up to 4) changes: the simulated time from which the new
                                       * count ran, s */
    double threads_change_wall_s[4];  /* ... the wall-clock time into the time loop then, s */
    int threads_change_to[4];         /* ... and the new count */
} sw_run_result;

/* The schedule a run of sc will step with on `threads` threads, split over `ranks` processes (0 or 1: not
 * split): the steps per sweep over memory (model.h, sw_model_steps), and in words, with why, into why (n
 * bytes). asked: sw_run_options.steps_per_sweep (0: the choice of sw_model_wave_steps_for against this
 * machine's cache, a split run's band standing for the grid). One step per sweep with periodic south and
 * north edges, whatever is asked; a split run at most as many as its thinnest band allows
 * (sw_model_wave_steps_max); those and the choice are said in why. A run with forcing sweeps too: each
 * step takes its own slab weight and edge level, and a sweep ends where new slabs are needed. */
int sw_run_schedule(const sw_scenario *sc, const sw_setup *setup, int threads, int asked, int ranks, char *why,
                    size_t n);

/* The caution texts are defined once, in run.c; every command's output, help text and output file takes
 * them from these functions. Each returns a static string (never NULL, nothing to free). */

/* The full caution every run, file and report carries: a simplified linear model, not a hazard forecast
 * or warning; follow official warning agencies and local emergency management; planning needs qualified
 * professionals and local codes. */
const char *sw_caution(void);

/* The full caution of a run with a storm, weather file or level series: sw_caution's, and what a linear,
 * depth-averaged surge sandbox leaves out (waves, tide-surge interaction, flooding of land). */
const char *sw_caution_surge(void);

/* The short form, one line for places with little room (the top-level --help): not a hazard forecast or
 * warning, follow official warning agencies and local emergency management. Where there is room (files,
 * reports, pictures in small type) the full form is used. */
const char *sw_caution_short(void);

/* The sweep-specific sentences alone (docs/sweep.md): a sweep does not make the model a forecast; the
 * spread is this model's sensitivity to the varied settings, not a real event's uncertainty. */
const char *sw_caution_sweep(void);

/* The full caution for scenario sc: sw_caution_surge when it has forcing, else sw_caution. */
const char *sw_caution_for(const sw_scenario *sc);

/* The caution of every sweep output of scenario sc: sw_caution_for(sc), a space, sw_caution_sweep(). */
const char *sw_caution_sweep_for(const sw_scenario *sc);

/* Runs the scenario with the setup built from it and writes <out_dir>/<prefix>gauges.nc (when there
 * are gauges), maps.nc and (with a snapshot interval) snapshots.nc, each only once complete. Fills *res. On failure (I/O,
 * interruption, a run that blew up) returns the status with err naming the cause; no output file
 * is left half-written, and files of an earlier run at the same paths are kept.
 * Checkpoints (run/checkpoint.h), for a run that writes files: with sc->checkpoint_interval_s > 0 the run
 * writes <out_dir>/<prefix>checkpoint.swck at the first step at or after each multiple of the interval
 * (not at the last step), and once more when it is stopped (opt->stop, opt->stop_after_steps; the message
 * then names the checkpoint); snapshots taken so far are kept beside it in checkpoint.frames. Both are
 * removed when the run ends with its files written. With opt->resume the run continues from the
 * checkpoint in out_dir instead of t = 0, and its files are the same bits as those of a run never
 * stopped, whatever the thread counts of either; refused (SW_ERR_USAGE) with a sink or without a
 * checkpoint interval, and as sw_ckpt_load refuses a checkpoint of another run. res->wall_s and the
 * progress then count the resumed part only. */
sw_status sw_run(const sw_scenario *sc, const sw_setup *setup, const sw_run_options *opt,
                 sw_run_result *res, sw_error *err);

/* The coordinate reference the files of a run on a projected grid carry: the grid mapping of the
 * seabed file's variable (inputs/crs.h), *crs empty without a seabed file or on a geographic grid (whose
 * files describe their own sphere). A mapping in longitude and latitude cannot describe the projected
 * grid's metres: SW_ERR_INPUT. Returns SW_OK or the failure with err naming the file and variable (then
 * *crs owns nothing); the caller frees *crs with sw_crs_free. Opens a NetCDF file: not from several
 * threads at once. `check` calls it so that a bad mapping is reported before a run. */
sw_status sw_run_crs(const sw_scenario *sc, const sw_grid *g, sw_crs *crs, sw_error *err);

/* Creates folder `path` and its parents as needed (like mkdir -p). */
sw_status sw_make_dirs(const char *path, sw_error *err);

#endif
