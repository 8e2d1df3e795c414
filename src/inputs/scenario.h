/* scenario.h - a scenario file parsed into plain settings in SI units.
 *
 * The scenario is INI-style text (see docs/scenario.md for the reference a user reads). Parsing
 * checks the form and range of every value and reports the first problem as
 * "FILE:LINE: [section] key: cause (accepted: ...)". Nothing here builds fields or knows about
 * layouts: the seabed, the source and the model are built from this struct later, and checks that
 * need them (the time step against the layout's limit, gauges on land) happen there, quoting the
 * line numbers recorded below.
 *
 * Positions (the x, y of gauges, sources, faults and features, [seabed] shoreline) are model metres once
 * placed: on a projected grid as written (m, km); on a geographic grid written in degrees and turned
 * into arc lengths x = R lambda, y = R phi (grid.h), a longitude first moved by 360 degrees when that
 * brings it onto the grid. Until the grid is known (it comes from the seabed file: positions_placed
 * == 0) they hold the number as written, with the unit it was written in; sw_scenario_place converts
 * them once the file has given the grid and its kind.
 */
#ifndef SW_SCENARIO_H
#define SW_SCENARIO_H

#include <stddef.h>

#include "base/grid.h"
#include "base/real.h"
#include "base/status.h"
#include "base/units.h"
#include "model/edges.h"
#include "model/terms.h"

#define SW_NAME_MAX 64        /* longest gauge / feature / source name, including the NUL */
#define SW_PATH_MAX 1024      /* longest file path, including the NUL */
#define SW_MAX_FEATURES 64    /* bays + islands + shoals */
#define SW_MAX_SOURCES 32
#define SW_MAX_FAULTS 32      /* [fault NAME] sections; each may read a table of many segments */
#define SW_MAX_GAUGES 256

typedef enum { SW_COAST_NONE = 0, SW_COAST_WEST, SW_COAST_EAST, SW_COAST_SOUTH, SW_COAST_NORTH } sw_coast_side;

typedef enum { SW_POSITIVE_UNSET = 0, SW_POSITIVE_DOWN, SW_POSITIVE_UP } sw_positive;

typedef enum { SW_FEATURE_BAY = 0, SW_FEATURE_ISLAND, SW_FEATURE_SHOAL } sw_feature_kind;

/* One analytic piece of the seabed recipe, applied in file order after the base profile. */
typedef struct {
    sw_feature_kind kind;
    char name[SW_NAME_MAX];   /* from the section header, e.g. [island Pellquin Rock] -> "Pellquin Rock" */
    int line;                 /* line of the section header */
    double x_m, y_m;          /* centre, m (a position: see the top of this file) */
    sw_unit_kind x_unit, y_unit; /* how x and y were written: SW_UNIT_LENGTH (m, km), SW_UNIT_ANGLE (deg) or
                               * SW_UNIT_NONE (a bare number) */
    double radius_x_m;        /* bay: semi-axis along x, m; island/shoal: e-folding radius, m */
    double radius_y_m;        /* bay: semi-axis along y, m; island/shoal: unused (= radius_x_m) */
    double depth_m;           /* bay: floor depth at the centre, m (> 0) */
    double height_m;          /* island: summit elevation above mean sea level, m (> 0) */
    double crest_m;           /* shoal: water depth over the crest, m (> 0) */
} sw_feature;

typedef enum { SW_SOURCE_HUMP = 0, SW_SOURCE_ELLIPSE, SW_SOURCE_PAIR, SW_SOURCE_FILE } sw_source_shape;

/* One initial sea-surface displacement; all sources are summed. */
typedef struct {
    sw_source_shape shape;
    char name[SW_NAME_MAX];   /* from the section header, e.g. [source main] -> "main" */
    int line;                 /* line of the section header */
    double x_m, y_m;          /* centre, m (a position: see the top of this file) */
    sw_unit_kind x_unit, y_unit; /* how x and y were written, as in sw_feature */
    double amplitude_m;       /* hump/ellipse: peak (may be negative); pair: uplift crest (> 0), m */
    double trough_m;          /* pair: subsidence depth (> 0), m; default = amplitude_m */
    double radius_m;          /* hump: e-folding radius, m */
    double length_m;          /* ellipse/pair: e-folding half-length along `angle`, m */
    double width_m;           /* ellipse/pair: e-folding half-width across `angle`, m */
    double angle_deg;         /* ellipse/pair: direction of the long axis, degrees counter-clockwise from east */
    double separation_m;      /* pair: distance between uplift and subsidence centres, m */
    char file[SW_PATH_MAX];   /* file: NetCDF path as written (relative to the scenario's folder) */
    char variable[SW_NAME_MAX]; /* file: variable name, default "eta" */
    double scale;             /* file: multiplies the file's values (default 1; 0, which the parser refuses,
                               * counts as 1 in a spec built by hand) */
    double x_offset_m, y_offset_m; /* file: the field is moved by this much, m (deg as written on a geographic
                               * grid until placed, like positions; default 0) */
    sw_unit_kind x_offset_unit, y_offset_unit; /* how the offsets were written */
} sw_source_spec;

/* The limits of a fault's values, shared by the [fault] keys and the segment table's rows (faults.c). */
#define SW_FAULT_DEPTH_MAX_M 1e5      /* depth of the top edge below the sea floor: 0 <= depth <= 100 km */
#define SW_FAULT_SIZE_MAX_M 2e6       /* length and width: 0 < size <= 2000 km */
#define SW_FAULT_SLIP_MAX_M 200.0     /* 0 <= slip <= 200 m; |opening| <= 200 m */
#define SW_FAULT_START_MAX_S (30 * 86400.0) /* 0 <= start <= 30 d */
#define SW_FAULT_RISE_MAX_S 86400.0   /* 0 <= rise <= 1 d */

/* One [fault NAME] section: a rectangular fault in an elastic half-space (inputs/okada.h; docs/faults.md),
 * or, with `segments`, a table of such rectangles (one a line). Geometry: the reference point (x, y) is
 * the CENTRE OF THE TOP EDGE; strike clockwise from north with the fault dipping to its right; rake
 * counter-clockwise from the strike direction in the fault plane. The section's slip_factor, offsets and
 * rotation apply to its one fault or to every row of its table (sw_faults_collect). */
typedef struct {
    char name[SW_NAME_MAX];   /* from the section header, e.g. [fault north] -> "north" */
    int line;                 /* line of the section header */
    double x_m, y_m;          /* centre of the top edge, m (a position: see the top of this file); without
                               * `segments` only */
    sw_unit_kind x_unit, y_unit; /* how x and y were written, as in sw_feature */
    double depth_m;           /* depth of the top edge below the sea floor, m (>= 0; 0 needs surface_rupture) */
    double length_m;          /* along strike, m (> 0) */
    double width_m;           /* down dip, m (> 0) */
    double strike_deg;        /* clockwise from north, deg (-360 .. 360) */
    double dip_deg;           /* 0 < dip <= 90 deg */
    double rake_deg;          /* slip direction of the hanging wall, counter-clockwise from strike, deg (-360 .. 360) */
    double slip_m;            /* along rake, m (0 .. 200) */
    double opening_m;         /* tensile opening, m (default 0; also the default of a table without the column) */
    double poisson;           /* Poisson's ratio nu (default 0.25: lambda = mu, common practice; from lambda and
                               * rigidity when lambda is given: nu = lambda / (2 (lambda + mu))) */
    double lambda_pa;         /* Lame's first parameter lambda, Pa, when given (0: not given) */
    double rigidity_pa;       /* shear modulus mu, Pa (default 30 GPa, common practice), for the seismic moment */
    int kajiura;              /* surface: 0 = floor (the sea surface takes the floor's uplift), 1 = kajiura */
    int horizontal;           /* horizontal: 1 = add the horizontal motion over the sloping seabed (Tanioka &
                               * Satake 1996); default 0 */
    int surface_rupture;      /* 1 = accept a top edge at depth 0 (the fault breaks the sea floor); 0 = refuse
                               * (default) */
    double start_s;           /* when it starts to move, s after the run's start (default 0) */
    double rise_s;            /* how long it moves, s (default 0: at once) */
    double rupture_speed_ms;  /* > 0: start = distance from the hypocentre to each segment's centre / speed; 0 = none */
    double hypo_x_m, hypo_y_m;/* the hypocentre's x and y (positions), with rupture_speed */
    sw_unit_kind hypo_x_unit, hypo_y_unit;
    double hypo_depth_m;      /* its depth below the sea floor, m; the distance is horizontal when not given */
    int hypo_depth_given;     /* 1 when hypocentre_depth is written */
    double cutoff;            /* okada.h sw_okada_field's cutoff (default 20; 0 = evaluate everywhere) */
    char segments[SW_PATH_MAX]; /* the segment table as written (relative to the scenario's folder); "" = none */
    int segments_line;        /* line of `segments` (0: not given) */
    double slip_factor;       /* multiplies the slip and opening of every segment (default 1) */
    double x_offset_m, y_offset_m; /* added to every reference point (and the hypocentre) after the rotation, m
                               * (deg as written on a geographic grid until placed, like positions) */
    sw_unit_kind x_offset_unit, y_offset_unit; /* how the offsets were written */
    double rotation_deg;      /* turns every segment's strike and reference point (and the hypocentre) clockwise
                               * about the centroid of the reference points of ALL the scenario's faults, deg */
    int start_line, rise_line, opening_line, speed_line; /* lines of start, rise, opening, rupture_speed (0: not
                               * written), for the table's rules */
    int rupture_line;         /* line of surface_rupture (0: not written) */
} sw_fault_spec;

typedef struct {
    char name[SW_NAME_MAX];   /* the key, e.g. "Port Vantrebel" */
    int line;
    double x_m, y_m;          /* m (a position: see the top of this file) */
    sw_unit_kind x_unit, y_unit; /* how x and y were written, as in sw_feature */
} sw_gauge_spec;

/* ---- [sweep]: what a sensitivity sweep varies (see docs/sweep.md; run by studies/sweep_*.c) */

#define SW_MAX_SWEEP_PARAMS 16    /* parameters one sweep may vary */
#define SW_MAX_SWEEP_LEVELS 64    /* values one parameter may list (or `in N` may generate) */
#define SW_MAX_SWEEP_MEMBERS 10000
#define SW_TARGET_MAX (SW_NAME_MAX + 48) /* "section NAME.key", including the NUL */

typedef enum {
    SW_SWEEP_ONE_AT_A_TIME = 0,  /* the base scenario, then each parameter's values with the others at base */
    SW_SWEEP_FACTORIAL,          /* every combination of every parameter's values */
    SW_SWEEP_LATIN_HYPERCUBE     /* `members` draws, each parameter's range cut into that many strata */
} sw_sweep_design;

typedef enum {
    SW_SWEEP_KEY = 0,            /* a scenario key `section.key` (also `layout`, `courant`, `arrival_threshold`) */
    SW_SWEEP_AMPLITUDE_FACTOR,   /* dimensionless; multiplies every source's amplitude (and a pair's trough) */
    SW_SWEEP_SOURCE_X_OFFSET,    /* m (deg on a geographic grid); added to every source's x */
    SW_SWEEP_SOURCE_Y_OFFSET,    /* m (deg on a geographic grid); added to every source's y */
    SW_SWEEP_DEPTH_FACTOR,       /* dimensionless; multiplies the built depth field (land included) */
    SW_SWEEP_RESOLUTION_FACTOR,  /* dimensionless; cells per unit length relative to [grid] (2 = half dx) */
    SW_SWEEP_SLIP_FACTOR,        /* dimensionless; multiplies every fault's slip_factor (every segment's slip) */
    SW_SWEEP_FAULT_X_OFFSET,     /* m (deg on a geographic grid); added to every fault's x_offset */
    SW_SWEEP_FAULT_Y_OFFSET,     /* m (deg on a geographic grid); added to every fault's y_offset */
    SW_SWEEP_FAULT_ROTATION      /* deg clockwise; added to every fault's rotation (about the faults' centroid) */
} sw_sweep_kind;

/* One varied parameter. Values are in base units (m, s, deg, or none); a layout is stored as its index
 * in the layout registry (sw_layout_at, model/layout.h: A = 0 .. E = 4 today). */
typedef struct {
    char name[SW_TARGET_MAX];    /* as written in [sweep], e.g. "depth_factor", "source main.amplitude" */
    sw_sweep_kind kind;
    char target[SW_TARGET_MAX];  /* SW_SWEEP_KEY: canonical "section.key" ("run.courant", "source main.x") */
    int unit;                    /* sw_unit_kind (units.h) of the values; a coordinate of a geographic grid
                                  * (a position, [grid] x0, y0, dx, dy, the source and fault offsets)
                                  * is SW_UNIT_ANGLE: its values are degrees, as the file writes them */
    int integer;                 /* 1: whole numbers (e.g. grid.nx) */
    int layout;                  /* 1: values are layouts */
    const char *const *words;    /* a key of named choices (e.g. wind.drag_law): its words, NULL-terminated;
                                  * the values are their indices (0 = the first word); NULL otherwise */
    int line;                    /* line of the parameter in the file */
    int is_range;                /* 1: written as `LO .. HI` (optionally `in N`) */
    double lo, hi;               /* the range, base units (is_range) */
    size_t n_levels;             /* values listed or generated by `in N`; 0 = a continuous range (Latin hypercube) */
    double level[SW_MAX_SWEEP_LEVELS]; /* the values, base units, in the order written */
} sw_sweep_param;

typedef struct {
    int present;                 /* 1 when the file has a [sweep] section */
    int line;                    /* line of its header */
    sw_sweep_design design;      /* default one-at-a-time */
    size_t members;              /* Latin hypercube: members to draw (required there) */
    unsigned long long seed;     /* Latin hypercube: random seed, default 1 */
    size_t n_params;
    sw_sweep_param param[SW_MAX_SWEEP_PARAMS];
} sw_sweep_spec;

/* What drives the water after t = 0 (docs/storm-surge.md): a moving parametric storm ([storm]) or a
 * weather file ([weather]), the wind drag and densities ([wind]), and a sea-level series for `level`
 * edges ([edges] level_series). The zero value (storm = weather = 0, level_file "") is none. */
typedef struct {
    int storm;                    /* 1 when [storm] is present */
    int storm_line;               /* line of its header */
    char track[SW_PATH_MAX];      /* the track file as written (relative to the scenario's folder) */
    double ambient_hpa;           /* environmental pressure when the track has no ambient_pressure column,
                                   * hPa; default 1013 */
    double reduction;             /* 10 m wind / gradient wind; default 0.8 (common practice) */
    double inflow_deg;            /* inflow angle of the 10 m wind, deg; default 20 (common practice) */
    double translation_fraction;  /* share of the forward velocity added at rmax; default 0.5 (common practice) */
    int south;                    /* 1: clockwise (southern hemisphere) when [run] has no rotation */
    double update_s;              /* the storm's forcing is made every update_s (the slabs, model.h), s;
                                   * default 600 s: a storm moving U shifts by U update between slabs,
                                   * and linear interpolation in time then errs by about (U update / rmax)^2 / 8
                                   * of the field, about 0.1 % for 5 m/s and rmax 30 km [derived] */
    double shift_across_m;        /* the track moved to the left of its mean heading, m; default 0 */
    double shift_along_m;         /* moved along its mean heading, m; default 0 */
    double dp_factor;             /* every pressure drop times this; default 1 */
    double rmax_factor;           /* every radius of maximum wind times this; default 1 */
    double speed_factor;          /* forward speed times this (the track is run faster about its first
                                   * point's time); default 1 */
    int weather;                  /* 1 when [weather] is present */
    int weather_line;
    char weather_file[SW_PATH_MAX]; /* NetCDF file of 10 m wind and sea-level pressure (docs/weather-file.md) */
    int drag_law;                 /* sw_drag_law (forcing/drag.h); default Large & Pond (1981) */
    double drag_cap;              /* the largest drag coefficient; 0 = none (default) */
    double air_density_kgm3;      /* default 1.15 (common practice) */
    double water_density_kgm3;    /* default 1025 (sea water, common practice) */
    char level_file[SW_PATH_MAX]; /* [edges] level_series: the level `level` edges follow; "" = mean sea level */
    char level_variable[SW_NAME_MAX]; /* [edges] level_variable: its NetCDF variable ("" = by standard name) */
    int level_line;               /* line of level_series */
} sw_forcing_spec;

typedef struct {
    /* where it came from */
    char path[SW_PATH_MAX];   /* scenario path as given ("<demo>" or "<string>" when parsed from memory) */
    char dir[SW_PATH_MAX];    /* folder relative file paths are resolved against ("." if none) */
    char *text;               /* the whole scenario text, NUL-terminated; owned, freed by sw_scenario_free */

    /* [run] */
    char title[256];          /* default "untitled scenario" */
    double duration_s;        /* required, > 0 */
    char layout[8];           /* a name of the layout registry (model/layout.h) as it spells it; default "C" */
    int layout_line;
    sw_precision precision;   /* of the model state; default SW_DOUBLE (real.h) */
    double courant_fraction;  /* fraction of the layout's stability limit, (0, 1]; default 0.9 */
    int courant_line;
    double dt_s;              /* explicit time step, s; 0 = derive from courant_fraction */
    int dt_line;
    double gauge_interval_s;  /* default 30 s */
    double snapshot_interval_s; /* 0 = no snapshots (default) */
    double checkpoint_interval_s; /* s of simulated time between checkpoints (run/checkpoint.h); 0 = none (default) */
    double arrival_threshold_m; /* default 0.01 m */
    double gravity_ms2;       /* default 9.81 */
    char origin[32];          /* time origin "YYYY-MM-DD HH:MM:SS", default "2000-01-01 00:00:00" */
    sw_terms_config terms;    /* rotation and friction (model/terms.h); from the keys below, f0 and beta
                               * derived from latitude when it is given; zero: none */
    double latitude_deg;      /* rotation's reference latitude, deg (when given) */
    int rotation_line;        /* line of `rotation` (or of [run] when defaulted) */
    int rotation_written;     /* 1 when [run] rotation is written; else it defaults to none on a projected
                               * grid and to sphere on a geographic one */
    int friction_line;        /* line of `friction` (or of [run]) */

    /* [grid]; has_grid == 0 when the section gives no size and the grid comes from the seabed file.
     * grid.kind and grid.radius_m are always set (projected and SW_EARTH_RADIUS_M by default); when
     * the grid comes from the file without [grid] kind, the file's axes decide the kind (sw_seabed_grid) */
    int has_grid;
    sw_grid grid;
    int grid_kind_line;       /* line of [grid] kind; 0 when not written */
    int positions_placed;     /* 1 when every position holds model metres for `grid` (see the top of this
                               * file); 0 until sw_scenario_place when the grid comes from the seabed file */

    /* [edges] */
    sw_edge_kind edges[4];    /* indexed by SW_WEST.. SW_NORTH; default wall */

    /* [seabed] */
    double min_depth_m;       /* cells shallower than this are land; default 1 m */
    char bed_file[SW_PATH_MAX];   /* "" = use the recipe */
    char bed_variable[SW_NAME_MAX]; /* default "depth" */
    sw_positive bed_positive; /* UNSET = read the variable's `positive` attribute */
    int bed_line;             /* line of `file` (or of the section) */
    int bed_missing_land;     /* [seabed] missing: 1 = land: a missing value (_FillValue, missing_value, NaN) in
                               * the file is land; 0 = an error naming it (default) */
    char bed_land_mask[SW_NAME_MAX]; /* [seabed] land_mask: a variable of the seabed file on its axes whose
                               * nonzero cells are land; "" = none */
    double deep_m;            /* recipe: offshore depth, m (> 0); required without a file */
    sw_coast_side coast;      /* recipe: side the land is on; default none (flat floor) */
    double shoreline_m;       /* recipe: x (coast west/east) or y (south/north) of the mean shoreline, m
                               * (a position: see the top of this file) */
    sw_unit_kind shoreline_unit; /* how shoreline was written, as in sw_feature */
    int shoreline_line;       /* line of shoreline (0: not given) */
    double coast_wiggle_m;    /* recipe: amplitude of a sinusoidal shoreline, m; default 0 */
    double coast_wavelength_m;/* recipe: its wavelength along the coast, m; default 50 km */
    double shelf_depth_m;     /* recipe: depth at the shelf break, m; default = deep_m */
    double shelf_width_m;     /* recipe: shoreline to shelf break, m; required (> 0) with a coast */
    double slope_width_m;     /* recipe: shelf break to deep floor, m; default 0 */
    double land_height_m;     /* recipe: highest land elevation, m; default 10 m */

    size_t n_features;
    sw_feature features[SW_MAX_FEATURES];

    size_t n_sources;
    sw_source_spec sources[SW_MAX_SOURCES];

    size_t n_faults;
    sw_fault_spec faults[SW_MAX_FAULTS];

    size_t n_gauges;
    sw_gauge_spec gauges[SW_MAX_GAUGES];

    /* [storm], [weather], [wind], [edges] level_series */
    sw_forcing_spec forcing;

    /* [sweep]; sweep.present == 0 without one. `shoreward run` ignores it. */
    sw_sweep_spec sweep;
} sw_scenario;

/* Parses the scenario file at `path` into *sc (which the caller provides; it is fully
 * overwritten). On success returns SW_OK and sc->text holds the file's text (free with
 * sw_scenario_free). On failure returns SW_ERR_IO / SW_ERR_PARSE / SW_ERR_RANGE, err->msg names
 * the file, line, section, key and the accepted values, and sc owns nothing. */
sw_status sw_scenario_load(const char *path, sw_scenario *sc, sw_error *err);

/* As sw_scenario_load, from text in memory. `name` stands in for the file name in messages and
 * `dir` is where relative file paths resolve (NULL = "."). The text is copied. */
sw_status sw_scenario_parse(const char *text, const char *name, const char *dir,
                            sw_scenario *sc, sw_error *err);

/* Places sc's positions on sc->grid once the grid and its kind are known (after sw_seabed_grid, which
 * sw_setup_build calls first): does nothing when sc->positions_placed. Otherwise, with sc->grid from the
 * seabed file, it applies the rules the parser applies when [grid] gives the kind: a position in degrees
 * on a projected grid, or in m or km on a geographic one, is an error; latitudes beyond +-90 deg and
 * longitudes outside -180 .. 360 deg are errors; [run] rotation defaults to sphere on a geographic grid,
 * and sphere on a projected grid, f-plane or beta-plane on a geographic one, [storm] or [weather] on a
 * geographic one are errors. Then converts every position to model metres (a longitude moved by +-360
 * deg onto the grid where that brings it nearer) and sets positions_placed. Returns SW_OK, or
 * SW_ERR_PARSE / SW_ERR_RANGE with err naming the scenario file, line and key and the accepted form;
 * positions are then left as they were. */
sw_status sw_scenario_place(sw_scenario *sc, sw_error *err);

/* A longitude lon_deg as model x (m) on geographic grid g, first moved by -360, 0 or +360 deg to the value
 * nearest the grid's longitudes (inside them when one is), as sw_scenario_place places positions; for
 * positions read outside the scenario (a fault's segment table). A latitude converts with sw_grid_deg. */
double sw_scenario_lon_m(const sw_grid *g, double lon_deg);

/* Releases what sc owns (sc->text) and zeroes it. sc may be NULL; safe to call twice. */
void sw_scenario_free(sw_scenario *sc);

/* Joins sc->dir and a relative path into out (size out_size); absolute paths are copied.
 * Returns SW_ERR_RANGE if it does not fit. */
sw_status sw_scenario_resolve(const sw_scenario *sc, const char *rel, char *out, size_t out_size,
                              sw_error *err);

/* One change to a scenario key, as a line of the file would write it. */
typedef struct {
    const char *target;   /* "section.key": "run.courant", "grid.dx", "source main.amplitude",
                           * "bay Vashkel Bay.depth" (the section as in its header; split at the last '.') */
    const char *value;    /* the value text with its unit, e.g. "0.5", "30 km", "C" */
} sw_override;

/* Applies overrides to a parsed scenario by editing its text and parsing it again, so every value
 * goes through the same key table, range checks and whole-file rules as a file's own values
 * (for example `dy` follows an overridden `dx` when the file gives no dy, and a pair's trough
 * follows its amplitude when the file gives no trough).
 * Each override replaces the key's line in its section, or is inserted after the section header
 * when the key was not written (the section must exist). Overriding [run] courant removes a [run]
 * dt line and overriding dt removes a courant line (they exclude each other). The lines of a
 * [sweep] section are blanked: the result describes one run. n may be 0 (then only [sweep] goes).
 * Only keys of the key tables can be overridden ([gauges] entries and [sweep] cannot).
 * On success fills *out (caller frees with sw_scenario_free; out->text is the edited text, path and
 * dir are sc's) and returns SW_OK. On failure *out owns nothing and err names the scenario and the
 * original line, or "override TARGET = VALUE" when the overridden line itself is refused, e.g.
 * "bay.scn: override run.courant = 1.5: [run] courant = 1.5: out of range (accepted: ...)".
 * sc is not changed. */
sw_status sw_scenario_override(const sw_scenario *sc, const sw_override *ov, size_t n, sw_scenario *out,
                               sw_error *err);

/* Reads the current value of a numeric or layout key `target` ("section.key", as for overrides)
 * of a parsed scenario into *out, in base units (a layout as its registry index, sw_layout_at; a named
 * choice as the index of its word; a coordinate of a geographic grid, a position, a fault's offset or
 * [grid] x0, y0, dx, dy, in degrees as a file writes it).
 * Returns SW_OK, or SW_ERR_RANGE when the section or key does not exist or is not numeric. */
sw_status sw_scenario_value(const sw_scenario *sc, const char *target, double *out, sw_error *err);

#endif
