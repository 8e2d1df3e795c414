/* sweep.h - a sensitivity sweep: many runs (members) of one scenario with some settings varied.
 *
 * The scenario's [sweep] section (scenario.h, sw_sweep_spec; docs/sweep.md) says what varies and
 * how the members are chosen: one-at-a-time around the base scenario, full factorial, or a Latin
 * hypercube. A member is the base scenario with overrides (sw_scenario_override), so every value
 * passes the parser's own checks; only depth_factor acts on the built depth field instead.
 *
 * Data flow: plan (design + each member's grid, dt and cost) -> members run, several at once with
 * one thread each when they are small, else one after another with all threads -> each finished
 * member written to OUT/members/mNNNNN.nc (via .part + rename) -> the aggregate read back from
 * those files -> OUT/sweep.nc, OUT/sweep.md and a summary for the terminal or JSON. The stages live
 * in sweep_design.c, sweep_member.c, sweep_run.c, sweep_combine.c and sweep_report.c (statistics
 * in sweep_stats.c, the files in ncsweep.c).
 *
 * Invariant: a member's results do not depend on which other members ran, in which order, on how
 * many threads, or in which attempt (resume); the aggregate is always computed from the member
 * files, so an interrupted and resumed sweep gives the same sweep.nc data as an uninterrupted one.
 */
#ifndef SW_SWEEP_H
#define SW_SWEEP_H

#include <signal.h>
#include <stddef.h>
#include <stdio.h>

#include "base/grid.h"
#include "inputs/scenario.h"
#include "base/status.h"
#include "studies/sweep_member.h"   /* sw_sweep_member_result */

#define SW_SWEEP_SMALL_CELLS ((size_t)1 << 18) /* members up to 512 x 512 cells run side by side */

/* One member as planned: its parameter values, and what a run of it costs. */
typedef struct {
    size_t index;             /* 0-based member number; files are mNNNNN with this number */
    double *value;            /* [n_params] the parameters' values, base units (a layout as its registry
                               * index, sw_layout_at) */
    long varied;              /* one-at-a-time: the parameter this member changes; -1 for the base member
                               * and in the other designs */
    sw_status status;         /* SW_OK when it can run; else why not, found while planning */
    char *error;              /* the planning failure (owned), NULL when status == SW_OK */
    sw_grid grid;             /* its grid */
    char layout[8];           /* its layout */
    double dt_s;              /* its time step, s */
    long long steps;          /* steps of its run */
    size_t bytes;             /* memory of its run, bytes (setup estimate) */
    double cost;              /* cells x steps, for time estimates */
} sw_sweep_member;

typedef struct {
    const sw_scenario *base;  /* borrowed; must outlive the plan */
    sw_grid base_grid;        /* grid of the base scenario: maps are written on it */
    char out_dir[SW_PATH_MAX];/* sweep output folder ("" while only planning) */
    size_t n_params;
    const sw_sweep_param *param; /* = base->sweep.param */
    double base_value[SW_MAX_SWEEP_PARAMS]; /* each parameter's value in the base scenario */
    size_t n_members;
    sw_sweep_member *member;  /* [n_members], owned */
    double *values;           /* [n_members * n_params] storage behind member[k].value, owned */
} sw_sweep_plan;

/* Chooses the members of base's [sweep] (values only: no setup is built). plan is fully
 * overwritten; free with sw_sweep_plan_free. Returns SW_ERR_USAGE when base has no [sweep],
 * SW_ERR_NOMEM, or a failure reading the base grid from a seabed file. */
sw_status sw_sweep_make_design(const sw_scenario *base, sw_sweep_plan *plan, sw_error *err);

/* sw_sweep_make_design, then each member's setup (grid, dt, steps, memory, cost) is built and freed;
 * a member that cannot run is recorded with its cause and does not fail the call. out_dir (may be
 * NULL) is where the sweep will write; member scenario files are named after it. */
sw_status sw_sweep_plan_build(const sw_scenario *base, const char *out_dir, sw_sweep_plan *plan, sw_error *err);

/* Releases what plan owns and zeroes it. plan may be NULL. */
void sw_sweep_plan_free(sw_sweep_plan *plan);

/* The scenario of member k: base with the member's overrides, [sweep] blanked; its path is the
 * member's scenario file (<out_dir>/members/mNNNNN.scn) so later messages name it. *out must be
 * freed with sw_scenario_free. depth_factor is not in it: see sw_sweep_member_depth_factor. */
sw_status sw_sweep_member_scenario(const sw_sweep_plan *plan, size_t k, sw_scenario *out, sw_error *err);

/* The depth factor of member k (1 when the sweep does not vary it). */
double sw_sweep_member_depth_factor(const sw_sweep_plan *plan, size_t k);

/* "depth_factor = 1.1, source_y_offset = 30 km" (the member's values; all parameters), into buf. */
void sw_sweep_member_label(const sw_sweep_plan *plan, size_t k, char *buf, size_t n);

/* Formats value v of parameter p with its unit ("30 km", "0.9", "C") into buf. */
void sw_sweep_format_value(const sw_sweep_param *p, double v, char *buf, size_t n);

/* Progress of a sweep, for a callback about twice a second. */
typedef struct {
    size_t done, total;       /* members finished (ok or failed, earlier attempts included); in the design */
    size_t running;           /* members running now */
    size_t current;           /* the member the last report came from */
    double current_fraction;  /* its progress, 0 .. 1 */
    double elapsed_s;         /* wall-clock time of this attempt, s */
    double remaining_s;       /* estimated wall-clock time left, s (NaN until known) */
} sw_sweep_progress;

typedef void (*sw_sweep_progress_fn)(const sw_sweep_progress *p, void *user);

/* Runs member k in memory: builds its scenario and setup (applying depth_factor), runs it with
 * `threads` threads (0 = OpenMP default) and puts its maps on the base grid (nearest: the member
 * cell containing each base cell's centre). Fills *out (free with sw_sweep_member_result_free).
 * A member that fails records the failure in out->status / out->error and the call returns SW_OK;
 * only SW_ERR_NOMEM for the result arrays is returned. progress (may be NULL) gets the run's
 * fraction done. Safe to call from several threads at once (NetCDF input is serialised). */
typedef void (*sw_sweep_member_progress_fn)(size_t k, double fraction, void *user);
sw_status sw_sweep_member_run(const sw_sweep_plan *plan, size_t k, int threads, volatile sig_atomic_t *stop,
                              sw_sweep_member_progress_fn progress, void *user, sw_sweep_member_result *out,
                              sw_error *err);

/* How each parameter moves an output at one gauge. */
typedef struct {
    size_t param;             /* index of the parameter */
    double effect;            /* one-at-a-time: max - min over the base and that parameter's members;
                               * factorial: max - min of the output's mean per value (main effect);
                               * Latin hypercube: Spearman's rank correlation (signed). Output units
                               * (s or m) except for Spearman (none). NaN when not computable. */
    size_t n;                 /* members it rests on */
} sw_sweep_rank;

/* Minimum, median and maximum of an output over the members that ran. */
typedef struct {
    double min, median, max;  /* NaN when no member has a value; arrival: +Inf = not reached */
    size_t n;                 /* members with a value */
} sw_sweep_stat;

typedef struct {
    char name[SW_NAME_MAX];
    sw_sweep_stat arrival;    /* s; never reached counts as +Inf (so a median or max may be +Inf) */
    sw_sweep_stat peak;       /* m */
    size_t not_reached;       /* members in which the wave never reached the gauge */
    sw_sweep_rank arrival_rank[SW_MAX_SWEEP_PARAMS]; /* [n_params], largest |effect| first, NaN last */
    sw_sweep_rank peak_rank[SW_MAX_SWEEP_PARAMS];
} sw_sweep_gauge_summary;

/* The outcome of a whole sweep. */
typedef struct {
    size_t n_members, n_ok, n_failed;
    size_t n_resumed;         /* members finished by an earlier attempt and kept */
    int members_parallel;     /* members run at once in this attempt (1 = one after another) */
    int threads;              /* threads per member */
    double wall_s;            /* wall-clock time of this attempt, s */
    sw_status *status;        /* [n_members] each member's outcome (owned) */
    char **error;             /* [n_members] failure messages, NULL when ok (owned) */
    size_t n_gauges;
    sw_sweep_gauge_summary *gauge; /* [n_gauges] (owned) */
    char sweep_path[SW_PATH_MAX];  /* <out>/sweep.nc */
    char markdown_path[SW_PATH_MAX]; /* <out>/sweep.md */
    char members_dir[SW_PATH_MAX]; /* <out>/members */
} sw_sweep_summary;

void sw_sweep_summary_free(sw_sweep_summary *s);

typedef struct {
    int threads;              /* all threads for the sweep; 0 = OpenMP default */
    int members_parallel;     /* 0 = choose (side by side when members are small); 1 = one after another
                               * with all threads; N > 1 = N members at once, one thread each */
    const char *history;      /* the command line, for the history attribute ("" if none) */
    sw_sweep_progress_fn progress; /* NULL = no reports */
    void *progress_user;
    volatile sig_atomic_t *stop;   /* non-zero stops the sweep (finished members are kept) */
    /* NULL (the default): the members run in this process. Otherwise the attempt's member loop is handed
     * to it (sweep_mpi.c hands the members to MPI ranks): pending[0..n_pending) are the members left to
     * run, ascending; done counts those already finished (earlier attempts, members that cannot run);
     * out->members_parallel and out->threads are its to set; user is member_loop_user. It returns SW_OK
     * when every pending member has its member file, else the interruption or failure that stopped it
     * (err filled); sw_sweep_run then returns that. */
    sw_status (*member_loop)(const sw_sweep_plan *plan, const size_t *pending, size_t n_pending, size_t done,
                             sw_sweep_summary *out, void *user, sw_error *err);
    void *member_loop_user;
} sw_sweep_options;

/* Runs the planned sweep into plan->out_dir (see the data flow above). Members already in
 * <out>/members from an earlier attempt of the same sweep are kept and not run again; an earlier
 * attempt of a different sweep (another scenario text or design) is refused with SW_ERR_USAGE.
 * Failed members are recorded (and reported) and do not stop the others. Returns SW_OK when every
 * member finished (ok or failed) and the files are written; SW_ERR_INTERRUPTED when stopped (the
 * finished members are kept, run again to resume); I/O or memory failures otherwise. */
sw_status sw_sweep_run(sw_sweep_plan *plan, const sw_sweep_options *opt, sw_sweep_summary *out, sw_error *err);

/* The plan for `shoreward check`: design, member count, members that cannot run, how members would
 * run on `threads` threads (0 = the OpenMP default) with members_parallel as in sw_sweep_options,
 * peak memory and an estimated time from rates in cell-updates/s measured with one thread (rate1)
 * and all threads (rate_all); 0 = unknown (no estimate printed). */
void sw_sweep_report_plan(FILE *f, const sw_sweep_plan *plan, int threads, int members_parallel, double rate1,
                          double rate_all);

/* The same as a JSON object (caller frees), NULL when out of memory. */
char *sw_sweep_plan_json(const sw_sweep_plan *plan, int threads, int members_parallel, double rate1,
                         double rate_all);

/* For `shoreward check` on a scenario with [sweep]: plans the sweep and, with json == NULL, prints
 * sw_sweep_report_plan to f; otherwise adds the plan as "sweep" to the JSON object text *json
 * (replaced by a new malloc'ed string; *json NULL starts an empty object). rate_all is the base
 * layout's rate with all threads, cached or measured (0 = unknown); the one-thread rate comes from
 * the same cache (sw_estimate_rate_cached), measured when it holds none. The JSON's "caution" is the
 * sweep's (sw_caution_sweep_for, run.h). */
sw_status sw_sweep_check(const sw_scenario *sc, double rate_all, FILE *f, char **json, sw_error *err);

/* The summary table for the terminal (with the caution), as Markdown into a file (via .part and
 * rename), and as a JSON object (caller frees; NULL when out of memory). */
void sw_sweep_report(FILE *f, const sw_sweep_plan *plan, const sw_sweep_summary *s);
sw_status sw_sweep_write_markdown(const char *path, const sw_sweep_plan *plan, const sw_sweep_summary *s,
                                  sw_error *err);
char *sw_sweep_json(const sw_sweep_plan *plan, const sw_sweep_summary *s);

/* Helpers shared with the tests. */

/* Percentile q (0..100) of x[0..n) by linear interpolation between order statistics (Hyndman & Fan
 * 1996, definition 7; numpy's default). Sorts x in place. +Inf values sort last; a result that
 * involves one is +Inf. NaN when n == 0. */
double sw_sweep_percentile(double *x, size_t n, double q);

/* Spearman's rank correlation of (x[i], y[i]), i < n: Pearson's correlation of the ranks, tied
 * values sharing their mean rank. NaN when n < 3 or either side is constant. */
double sw_sweep_spearman(const double *x, const double *y, size_t n);

#endif
