/* setup.h - from a parsed scenario to everything a run needs: seabed, source, layout, time step, plan.
 *
 * This is where checks that need more than the scenario text happen: the time step against the
 * layout's stability limit (quoting the scenario line), and the layout's availability.
 */
#ifndef SW_SETUP_H
#define SW_SETUP_H

#include <stddef.h>

#include "base/grid.h"
#include "base/status.h"
#include "inputs/faults.h"
#include "inputs/scenario.h"
#include "inputs/source.h"
#include "model/layout.h"
#include "model/model.h"

/* Where a [storm]'s centre goes relative to the domain during the run: the plan warns when it never
 * enters, since the water then feels only the storm's outer winds. */
typedef struct {
    int present;              /* 1 when the scenario has a [storm]; the fields below are then set */
    int outside;              /* 1 when the centre stays outside the domain rectangle for the whole run */
    double closest_m;         /* the centre's least distance from the domain rectangle over the run, m
                               * (0 when it enters) */
    double closest_time_s;    /* when it is closest (the first time inside when it enters), s since the origin */
} sw_storm_pass;

/* What `check` says about the scenario's faults (docs/faults.md). */
typedef struct {
    size_t sections;          /* [fault] sections (0: none; the fields below are then 0) */
    size_t segments;          /* rectangular segments, over all sections and tables */
    size_t kajiura;           /* of them, with surface = kajiura */
    size_t horizontal;        /* of them, with horizontal = on */
    double moment_nm;         /* the total seismic moment M0 = sum of mu L W slip, N m */
    double magnitude;         /* the moment magnitude Mw = (2/3)(log10 M0 - 9.1) (Hanks & Kanamori 1979); 0 when
                               * M0 = 0 */
    double end_s;             /* when the last segment stops moving, s after the start (0: all at once) */
    int whole_rupture;        /* 1: the peaks below are of the whole rupture (some segments move later);
                               * 0: of the initial sea surface */
    double uplift_m;          /* the faults' highest sea-surface displacement over water, m (>= 0) */
    double subsidence_m;      /* their lowest, m (<= 0) */
    size_t run_bytes;         /* what a rupture in time adds to a run's memory, bytes (0 when all at once) */
} sw_fault_summary;

/* The share of a source's displaced volume the water may lose before `check` warns, and the share that must
 * be left in the water for a run to go ahead (docs/scenario.md, "What check says about the source"). */
#define SW_SOURCE_WARN_LOST 0.01
#define SW_SOURCE_MIN_LEFT 0.001
/* The extent of the source: cells whose |eta| is above this share of the larger peak. */
#define SW_SOURCE_EXTENT_SHARE 0.01

/* The initial sea surface as the model holds it (water cells only: the model zeroes land), for `check`. */
typedef struct {
    int any;                  /* 1 when some water cell moves (|eta| > 0); the fields below are 0 otherwise */
    int final_surface;        /* 1: of the final static surface of a rupture in time (every fault segment at its
                               * full slip, the other sources as at t = 0); 0: of the surface at t = 0 */
    double uplift_m;          /* the highest elevation over water, m (>= 0) */
    double uplift_x_m, uplift_y_m;         /* the centre of its cell, m (arc metres on a geographic grid) */
    double subsidence_m;      /* the lowest elevation over water, m (<= 0) */
    double subsidence_x_m, subsidence_y_m; /* the centre of its cell, m */
    double threshold_m;       /* SW_SOURCE_EXTENT_SHARE of max(uplift, -subsidence), m */
    double x0_m, x1_m, y0_m, y1_m;         /* the bounding box of the water cells with |eta| > threshold_m (their
                                            * edges), m */
    double area_m2;           /* the area of those cells, m^2 (cells weigh dx dy cos(latitude)) */
    double volume_m3;         /* the displaced volume: the sum of eta times cell area over water, m^3 */
    double positive_m3;       /* the sum of its positive parts, m^3 (>= 0) */
    double negative_m3;       /* the sum of its negative parts, m^3 (<= 0) */
    size_t n_budgets;         /* entries of budget: the scenario's sources, then "faults" when there are some */
    sw_source_budget budget[SW_MAX_SOURCES + 1];   /* each source asked against kept (sw_source_budgets) */
} sw_source_summary;

typedef struct {
    sw_grid grid;             /* the model grid (from [grid] or the seabed file) */
    const sw_layout *layout;  /* the chosen layout */
    double *depth_m;          /* [ny * nx] still-water depth, positive down; owned */
    double *eta0_m;           /* [ny * nx] initial elevation, m; owned */
    size_t wet_cells;         /* cells deeper than min_depth */
    double h_max_m;           /* deepest water, m */
    double dt_s;              /* time step, s */
    double dt_limit_s;        /* largest stable time step, s */
    double courant;           /* sqrt(g h_max) dt / min(dx, dy) */
    double courant_limit;     /* the same number at dt_limit_s: the layout's limit */
    size_t dt_row;            /* the grid row where the limit is reached (sw_model_dt_limit_row): on a
                               * geographic grid the row whose deepest water on its narrowest cells allows
                               * the least step; 0 on a projected grid (the limit is the deepest water's) */
    double dt_row_lat_deg;    /* geographic: the latitude of that row's centres, deg; 0 on a projected grid */
    double dt_row_width_m;    /* the narrowest true cell width on that row, m: dx_m times the least
                               * cos(latitude) over its centres and face lines (dx_m on a projected grid) */
    size_t land_missing;      /* cells the seabed file made land by a missing value ([seabed] missing = land) */
    size_t land_mask;         /* cells the seabed file's land mask made land ([seabed] land_mask); a cell both
                               * masked and missing counts here (sw_seabed_info) */
    int dims;                 /* 1 for a one-cell-wide channel, else 2 */
    long long n_steps;        /* steps to cover the duration */
    size_t n_samples;         /* gauge samples the run records: the length of the gauge file's time axis */
    size_t n_snapshots;       /* eta snapshots the run will write */
    size_t model_bytes;       /* memory of the model state, bytes (with a storm or weather file its two
                               * forcing slabs and their scratch included: sw_model_bytes_for) */
    size_t forcing_bytes;     /* what the forcing adds to a run's memory, bytes: the model's slabs and
                               * scratch, the wind and pressure maps, the gauges' air series
                               * (sw_setup_forcing_bytes); 0 without an atmosphere */
    size_t total_bytes;       /* a run's peak memory, bytes (sw_setup_total_bytes) */
    sw_storm_pass storm;      /* the storm's centre against the domain (sw_setup_storm_pass); zero
                               * without a [storm] */
    sw_fault_set faults;      /* the scenario's fault segments (sw_faults_collect), owned; n = 0 without
                               * [fault]. The instant ones are in eta0_m; a run adds the others' motion
                               * with sw_faults_increment until sw_faults_end */
    sw_fault_summary fault;   /* their moment, magnitude, timing and peaks (sw_setup_sources) */
    sw_source_summary source; /* the initial surface's peaks, extent and volume, and each source's volume asked
                               * against kept (sw_setup_sources) */
} sw_setup;

/* Builds the setup for sc: grid (taken from the seabed file when sc has no [grid]; sc->grid is
 * then filled in, and sc's positions placed on it: sw_scenario_place), depth (with the counts of land
 * the file marked), the fault segments (sw_faults_collect: segment tables are read here, so `check`
 * reports a bad table line as `run` would), initial elevation (sw_setup_sources), layout, time step and
 * sizes, and with a [storm] its
 * pass over the domain (sw_setup_storm_pass: the track is read and checked to cover the run here, so
 * `check` reports a bad track as `run` would). On failure returns the status, err names the scenario
 * file and line (or the track file and line) where one applies, and s owns nothing.
 * Free with sw_setup_free. */
sw_status sw_setup_build(sw_scenario *sc, sw_setup *s, sw_error *err);

/* Builds s->eta0_m from sc's sources and the instant segments of s->faults (sw_source_build) over the depth
 * s->depth_m, and fills s->fault: the count, moment, magnitude, end of the rupture, and the faults' peak
 * uplift and subsidence over water (cells at least sc->min_depth_m deep) of the initial surface, or of the
 * whole rupture (sw_faults_surface SW_FAULTS_ALL, one more evaluation) when some segments move later.
 * sw_setup_build calls it once the depth and the faults are known; a caller that changes the depth
 * afterwards (a sweep's depth_factor) calls it again when a fault uses the depth (Kajiura filter or the
 * horizontal term: sw_setup_faults_use_depth). Also fills s->source: the peaks, extent and volume of the
 * surface over water (of the final static surface when a rupture goes on in time), and each source's
 * displaced volume asked, on the grid and in the water (sw_source_budgets). Returns SW_OK or the failure (a
 * source file, memory; SW_ERR_RANGE when a source keeps less than SW_SOURCE_MIN_LEFT of its volume in the
 * water, naming the source, its line and the figures) with err naming the file and line; s keeps its
 * arrays either way. */
sw_status sw_setup_sources(const sw_scenario *sc, sw_setup *s, sw_error *err);

/* 1 when a fault segment of s uses the depth (surface = kajiura or horizontal = on). */
int sw_setup_faults_use_depth(const sw_setup *s);

/* Derives from the depth field s->depth_m (on s->grid, for s->layout) everything that depends on it:
 * wet_cells, h_max_m, dims, dt_limit_s (and where it is reached: dt_row, dt_row_lat_deg, dt_row_width_m),
 * courant_limit, the time step dt_s (sc's Courant fraction of the
 * limit, or sc's explicit dt, refused beyond the limit) and courant, then n_steps, n_samples, n_snapshots,
 * model_bytes and total_bytes. sw_setup_build calls it once the depth is built; a caller that changes the
 * depth afterwards (a sweep's depth_factor) calls it again, so both derive dt and sizes the same way.
 * `change` names such a change in messages ("depth_factor = 1.1"); NULL for none. Returns SW_OK, or
 * SW_ERR_RANGE (no water, too many steps) / SW_ERR_UNSTABLE (dt beyond the layout's limit) with err
 * naming the scenario file and line; s keeps its arrays either way (the caller frees). */
sw_status sw_setup_derive(const sw_scenario *sc, sw_setup *s, const char *change, sw_error *err);

/* Releases the arrays s owns and zeroes it. s may be NULL. */
void sw_setup_free(sw_setup *s);

/* The model a run of sc on setup s steps: s's layout, grid, depth, initial elevation and time step with
 * sc's land threshold, gravity, terms, edges, edge level 0 and precision. The arrays are s's (the model
 * copies them). One derivation for `run` and for those that build the same model beside it (bench's real
 * run). */
sw_model_config sw_setup_model_config(const sw_scenario *sc, const sw_setup *s);

/* The memory a run of sc on setup s holds at its peak, bytes: the model (s->model_bytes), the input
 * depth and elevation, the tracker's running maps, the five result maps, a snapshot frame when
 * snapshots are on, the gauge series, with an atmosphere what the forcing holds beside the model
 * (sw_setup_forcing_bytes less the model's share), and with a rupture in time its increment and scratch
 * fields (s->fault.run_bytes). Uses s->grid, s->layout, s->model_bytes, s->n_samples, s->n_snapshots,
 * s->fault. */
size_t sw_setup_total_bytes(const sw_scenario *sc, const sw_setup *s);

/* What a storm or weather file adds to a run's memory, bytes (0 without one): in the model its two
 * slabs and their scratch (sw_model_bytes_for with and without sc->terms.surface), beside it the
 * running highest-wind and lowest-pressure maps (float), the two maps written (double) and the air
 * pressure and wind at every gauge sample (double). Not counted: a storm's radial tables (a few
 * thousand values) and a weather file's two slabs on its own grid (its size is known only once the
 * file is open). Uses s->grid, s->layout, s->n_samples. */
size_t sw_setup_forcing_bytes(const sw_scenario *sc, const sw_setup *s);

/* Reads sc's [storm] track (relative to sc->dir, with the scenario's [storm] and [wind] settings),
 * checks that it covers a run ending at run_end_s as the run reads it (forcing slabs every [storm]
 * update up to the first at or after the end, at the changed speed), and follows the centre as the run
 * moves it ([storm] shift_along, shift_across and speed_factor, applied as forcing/forcing.c does) from
 * 0 to run_end_s, at 4000 even steps, against the rectangle of grid g. Fills *out (zeroed without a [storm]). Returns SW_OK, or the track's failure (SW_ERR_IO,
 * SW_ERR_PARSE, SW_ERR_RANGE, SW_ERR_NOMEM) with err naming the track file and line or the span the
 * run needs; *out is then zeroed. */
sw_status sw_setup_storm_pass(const sw_scenario *sc, const sw_grid *g, double run_end_s, sw_storm_pass *out,
                              sw_error *err);

#endif
