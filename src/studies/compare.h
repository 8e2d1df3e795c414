/* compare.h - one scenario run on several grid layouts and resolutions, side by side.
 *
 * Each run is the scenario with its layout replaced and its grid refined by an integer factor
 * (dx / r, nx * r over the same area; the seabed recipe or file is evaluated on the finer grid: a file's
 * outer cells are read up to their edges, ncinput.h). The reference is the
 * finest C-layout run when C is among the layouts, else the finest run of the first layout; every
 * run's gauge arrivals and peaks are given as differences from it.
 */
#ifndef SW_COMPARE_H
#define SW_COMPARE_H

#include <stddef.h>
#include <stdio.h>

#include "base/grid.h"
#include "run/run.h"
#include "inputs/scenario.h"
#include "base/status.h"

#define SW_COMPARE_MAX_RUNS 64

/* One run of the comparison. */
typedef struct {
    char layout[8];            /* layout name */
    int refine;                /* resolution factor r (grid spacing / r) */
    sw_status status;          /* SW_OK, or why this run failed (the others go on) */
    char error[SW_ERROR_MSG_MAX]; /* the failure message, "" when ok */
    sw_grid grid;              /* the refined grid */
    double dt_s;               /* time step, s */
    double courant, courant_limit; /* Courant number used and the layout's limit */
    long long steps;           /* steps taken */
    double wall_s;             /* wall-clock time of the time loop, s */
    double cell_updates_per_s; /* cells x steps / wall_s */
    size_t memory_bytes;       /* estimated memory of the run, bytes */
    double noise_index;        /* grid-scale noise of eta_max (tracker.h, sw_tracker_noise) */
    double arrival_s[SW_MAX_GAUGES];   /* per gauge: first arrival, s (NaN if never) */
    double peak_m[SW_MAX_GAUGES];      /* per gauge: highest elevation, m */
    double d_arrival_s[SW_MAX_GAUGES]; /* arrival minus the reference's, s (NaN if either is missing) */
    double d_peak_m[SW_MAX_GAUGES];    /* peak minus the reference's, m */
} sw_compare_row;

typedef struct {
    size_t n_rows;
    sw_compare_row *rows;      /* [n_rows], owned; layouts outer, refinements inner */
    long reference;            /* index of the reference row, -1 when every run failed */
    size_t n_gauges;           /* gauges of the scenario */
    char (*gauge_names)[SW_NAME_MAX]; /* [n_gauges], owned */
} sw_compare;

/* Called after each run (row i of n), from the calling thread. */
typedef void (*sw_compare_fn)(const sw_compare_row *row, size_t i, size_t n, void *user);

/* The scenario for one run of a comparison: sc with layout `layout` and its grid refined by r (>= 1: nx, ny
 * times r, dx, dy and an explicit dt divided by r), into *v. A grid taken from a seabed file is read here
 * (sw_seabed_grid). The copy borrows sc's text and arrays: never free it through v. Returns SW_OK, or the
 * seabed file's failure with err naming it. */
sw_status sw_compare_variant(const sw_scenario *sc, const char *layout, int r, sw_scenario *v, sw_error *err);

/* Runs sc on every layout x refinement and fills *out (free with sw_compare_free). Output files of
 * each run go to <opt->out_dir>/<layout>-x<r>/. A failing run is recorded in its row and the others
 * go on (sw_compare_outcome then says the comparison failed); the call itself fails only for bad
 * arguments (SW_ERR_USAGE/RANGE: unknown layout, refine < 1, more than SW_COMPARE_MAX_RUNS runs), out of
 * memory, or an interruption (SW_ERR_INTERRUPTED), and then *out owns nothing. The caller locks
 * opt->out_dir (run/outdir.h) for the runs and the files it writes after them (the CLI does). */
sw_status sw_compare_run(const sw_scenario *sc, const char *const *layouts, size_t n_layouts, const int *refine,
                         size_t n_refine, const sw_run_options *opt, sw_compare_fn done, void *user,
                         sw_compare *out, sw_error *err);

/* What the comparison as a whole says: SW_OK when every run succeeded; otherwise the status of the first
 * failed run, with a one-line message in err naming how many runs failed and the first one's layout,
 * refinement and cause ("2 of 6 runs failed; the first, layout C x2: ..."), so that a caller (the CLI)
 * can report the tables and files of the runs that worked and still fail. Needs cmp filled by
 * sw_compare_run. */
sw_status sw_compare_outcome(const sw_compare *cmp, sw_error *err);

/* Releases what cmp owns and zeroes it. cmp may be NULL. */
void sw_compare_free(sw_compare *cmp);

/* Writes the comparison as a terminal table (two tables: runs, then gauges). */
void sw_compare_print(FILE *f, const sw_compare *cmp);

/* Writes the comparison as Markdown (with the caution) and as CSV (a "# CAUTION: ..." comment line, then
 * one line per run and gauge).
 * Each file via "<path>.part" and rename. */
sw_status sw_compare_write_markdown(const char *path, const sw_scenario *sc, const sw_compare *cmp, sw_error *err);
sw_status sw_compare_write_csv(const char *path, const sw_compare *cmp, sw_error *err);

/* The comparison as one JSON object (caller frees), or NULL when out of memory. */
char *sw_compare_json(const sw_scenario *sc, const sw_compare *cmp);

#endif
