/* scenario_keys.c - the scenario's key tables and the values they accept (see scenario_impl.h).
 *
 * Each section is a table of keys (name, kind, range, where it is stored, default, accepted
 * text): adding a key is one table row. Defaults are written as they would be in a file and go
 * through the same code as the file's values (scn_store_value), so a table row is the whole truth
 * about its key: the reader, [sweep] and overrides all look keys up here.
 */
#include "inputs/scenario_impl.h"

#include <ctype.h>
#include <math.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/civil_time.h"
#include "model/layout.h"

static const char *const EDGE_WORDS[] = { "wall", "open", "level", "periodic", NULL };       /* sw_edge_kind */
static const char *const ROTATION_WORDS[] = { "none", "f-plane", "beta-plane", "sphere", NULL }; /* sw_rotation_kind */
static const char *const GRID_KIND_WORDS[] = { "projected", "geographic", NULL };           /* sw_grid_kind */
static const char *const FRICTION_WORDS[] = { "none", "linear", "quadratic", "manning", NULL }; /* sw_friction_kind */
const char *const scn_coast_words[] = { "none", "west", "east", "south", "north", NULL };    /* sw_coast_side */
static const char *const POSITIVE_WORDS[] = { "down", "up", NULL };                        /* from SW_POSITIVE_DOWN */
static const char *const MISSING_WORDS[] = { "error", "land", NULL };                      /* bed_missing_land 0, 1 */
const char *const scn_shape_words[] = { "hump", "ellipse", "pair", "file", NULL };          /* sw_source_shape */
static const char *const PRECISION_WORDS[] = { "double", "single", NULL };                 /* sw_precision */
static const char *const DRAG_WORDS[] = { "large-pond", "wu", "garratt", NULL };           /* sw_drag_law */
static const char *const HEMISPHERE_WORDS[] = { "north", "south", NULL };
static const char *const FAULT_SURFACE_WORDS[] = { "floor", "kajiura", NULL };            /* sw_fault_spec.kajiura */
static const char *const OFF_ON_WORDS[] = { "off", "on", NULL };
static const char *const RUPTURE_WORDS[] = { "refuse", "accept", NULL };                  /* surface_rupture */

static const key_def RUN_KEYS[] = {
    { .name = "title", TEXT_SC(title), .dflt = "untitled scenario", .accepted = "up to 255 characters" },
    { .name = "duration", .kind = K_TIME, SC(duration_s), ABOVE(0, 30 * DAY), .required = 1,
      .accepted = "0 < duration <= 30 d" },
    { .name = "layout", .kind = K_LAYOUT, SC(layout), .size = FIELD_SIZE(sw_scenario, layout), .dflt = "C",
      .accepted = "the registry's names, sw_layout_names() (any case)" },
    { .name = "precision", .kind = K_CHOICE, SC(precision), .words = PRECISION_WORDS, .first = SW_DOUBLE,
      .dflt = "double", .accepted = "double, single" },
    { .name = "courant_fraction", .kind = K_NUMBER, SC(courant_fraction), ABOVE(0, 1), .dflt = "0.9",
      .accepted = "0 < courant_fraction <= 1, a fraction of the layout's limit" },
    { .name = "dt", .kind = K_TIME, SC(dt_s), ABOVE(0, DAY),
      .accepted = "0 < dt <= 1 d, not together with courant_fraction" },
    { .name = "gauge_interval", .kind = K_TIME, SC(gauge_interval_s), ABOVE(0, DAY), .dflt = "30 s",
      .accepted = "0 < gauge_interval <= 1 d" },
    { .name = "snapshot_interval", .kind = K_TIME, SC(snapshot_interval_s), RANGE(0, 30 * DAY), .dflt = "0",
      .accepted = "0 <= snapshot_interval <= 30 d; 0 writes none" },
    { .name = "checkpoint_interval", .kind = K_TIME, SC(checkpoint_interval_s), RANGE(0, 30 * DAY), .dflt = "0",
      .accepted = "0 <= checkpoint_interval <= 30 d; 0 writes none" },
    { .name = "arrival_threshold", .kind = K_LENGTH, SC(arrival_threshold_m), ABOVE(0, 100), .dflt = "0.01 m",
      .accepted = "0 < arrival_threshold <= 100 m" },
    { .name = "gravity", .kind = K_NUMBER, SC(gravity_ms2), RANGE(1, 30), .dflt = "9.81",
      .accepted = "1 <= gravity <= 30, in m s-2" },
    { .name = "origin", .kind = K_ORIGIN, SC(origin), .dflt = "2000-01-01 00:00:00",
      .accepted = "YYYY-MM-DD HH:MM:SS" },
    /* rotation and friction (docs/terms.md); which keys go with which kind is checked in finish_run */
    { .name = "rotation", .kind = K_CHOICE, SC(terms.rotation), .words = ROTATION_WORDS, .dflt = "none",
      .accepted = "none, f-plane, beta-plane on a projected grid; sphere (the default there), none on a geographic "
                  "grid" },
    { .name = "coriolis", .kind = K_RATE, SC(terms.f0_s), RANGE(-1e-3, 1e-3),
      .accepted = "-1e-3 <= coriolis <= 1e-3 s-1 (on Earth |f| <= 2 Omega = 1.458e-4 s-1)" },
    { .name = "latitude", .kind = K_ANGLE, SC(latitude_deg), RANGE(-89, 89),
      .accepted = "-89 <= latitude <= 89 deg (f = 2 Omega sin(latitude))" },
    { .name = "beta", .kind = K_NUMBER, SC(terms.beta_ms), RANGE(-1e-9, 1e-9),
      .accepted = "|beta| <= 1e-9, in m-1 s-1 (on Earth |beta| <= 2 Omega / R = 2.29e-11)" },
    { .name = "reference_y", .kind = K_LENGTH, SC(terms.y_ref_m), RANGE(-1e5 * KM, 1e5 * KM),
      .accepted = "the y where f is coriolis (or the latitude's), |reference_y| <= 100000 km" },
    { .name = "friction", .kind = K_CHOICE, SC(terms.friction), .words = FRICTION_WORDS, .dflt = "none",
      .accepted = "none, linear, quadratic, manning" },
    { .name = "friction_rate", .kind = K_SPEED, SC(terms.friction_rate_ms), ABOVE(0, 0.1),
      .accepted = "0 < friction_rate <= 0.1 m/s (the r of r u / h)" },
    { .name = "drag", .kind = K_NUMBER, SC(terms.drag), ABOVE(0, 0.1),
      .accepted = "0 < drag <= 0.1 (the Cd of Cd |U| u / h)" },
    { .name = "manning", .kind = K_NUMBER, SC(terms.manning_n), ABOVE(0, 0.2),
      .accepted = "0 < manning <= 0.2, in s m-1/3 (Manning's n)" },
};

/* [grid]: nx, ny and dx are required once the section gives a size (finish_grid); a [grid] of only
 * `kind` and `radius` leaves the size to the seabed file. */
static const key_def GRID_KEYS[] = {
    { .name = "kind", .kind = K_CHOICE, SC(grid.kind), .words = GRID_KIND_WORDS, .dflt = "projected",
      .accepted = "projected (x, y in m or km), geographic (longitude, latitude in degrees)" },
    { .name = "radius", .kind = K_LENGTH, SC(grid.radius_m), RANGE(6000 * KM, 7000 * KM),
      .accepted = "6000 km <= radius <= 7000 km, the sphere's radius (geographic grids only; default 6371 km)" },
    { .name = "nx", .kind = K_INTEGER, SC(grid.nx), RANGE(1, 100000),
      .accepted = "a whole number, 1 <= nx <= 100000, nx * ny <= 400000000" },
    { .name = "ny", .kind = K_INTEGER, SC(grid.ny), RANGE(1, 100000),
      .accepted = "a whole number, 1 <= ny <= 100000, nx * ny <= 400000000" },
    { .name = "dx", .kind = K_COORD, SC(grid.dx_m), RANGE(1, 1000 * KM), .grid_key = 1, .axis = SCN_AXIS_X,
      .accepted = "1 m <= dx <= 1000 km", .deg_lo = 1e-5, .deg_hi = 10,
      .deg_accepted = "1e-05 deg <= dx <= 10 deg on a geographic grid" },
    { .name = "dy", .kind = K_COORD, SC(grid.dy_m), RANGE(1, 1000 * KM), .grid_key = 1, .axis = SCN_AXIS_Y,
      .accepted = "1 m <= dy <= 1000 km", .deg_lo = 1e-5, .deg_hi = 10,
      .deg_accepted = "1e-05 deg <= dy <= 10 deg on a geographic grid" },
    { .name = "x0", .kind = K_COORD, SC(grid.x0_m), RANGE(-1e5 * KM, 1e5 * KM), .dflt = "0", .grid_key = 1,
      .axis = SCN_AXIS_X, .accepted = "|x0| <= 100000 km", .deg_lo = -360, .deg_hi = 360,
      .deg_accepted = "the west edge's longitude, -360 <= x0 <= 360 deg" },
    { .name = "y0", .kind = K_COORD, SC(grid.y0_m), RANGE(-1e5 * KM, 1e5 * KM), .dflt = "0", .grid_key = 1,
      .axis = SCN_AXIS_Y, .accepted = "|y0| <= 100000 km", .deg_lo = -90, .deg_hi = 90,
      .deg_accepted = "the south edge's latitude, -90 <= y0 <= 90 deg" },
};

/* A point's x and y: a length anywhere on a projected grid; a longitude or latitude on a geographic one. */
#define POINT_X(what, unit) .kind = K_COORD, .axis = SCN_AXIS_X, unit, .accepted = "x of the " what ", in m or km", \
    .deg_lo = -180, .deg_hi = 360, .deg_accepted = "the " what "'s longitude, -180 <= x <= 360 deg"
#define POINT_Y(what, unit) .kind = K_COORD, .axis = SCN_AXIS_Y, unit, .accepted = "y of the " what ", in m or km", \
    .deg_lo = -90, .deg_hi = 90, .deg_accepted = "the " what "'s latitude, -90 <= y <= 90 deg"
static const key_def POINT_KEYS[] = {   /* for positions that are not table keys ([gauges]) */
    { .name = "x", .kind = K_COORD, .axis = SCN_AXIS_X, .accepted = "x in m or km", .deg_lo = -180, .deg_hi = 360,
      .deg_accepted = "a longitude, -180 .. 360 deg" },
    { .name = "y", .kind = K_COORD, .axis = SCN_AXIS_Y, .accepted = "y in m or km", .deg_lo = -90, .deg_hi = 90,
      .deg_accepted = "a latitude, -90 .. 90 deg" },
};

static const key_def EDGES_KEYS[] = {
    { .name = "west", .kind = K_CHOICE, SC(edges[SW_WEST]),
      .words = EDGE_WORDS, .dflt = "wall", .accepted = "wall, open, level, periodic" },
    { .name = "east", .kind = K_CHOICE, SC(edges[SW_EAST]),
      .words = EDGE_WORDS, .dflt = "wall", .accepted = "wall, open, level, periodic" },
    { .name = "south", .kind = K_CHOICE, SC(edges[SW_SOUTH]),
      .words = EDGE_WORDS, .dflt = "wall", .accepted = "wall, open, level, periodic" },
    { .name = "north", .kind = K_CHOICE, SC(edges[SW_NORTH]),
      .words = EDGE_WORDS, .dflt = "wall", .accepted = "wall, open, level, periodic" },
    { .name = "all", .kind = K_CHOICE, .home = IN_PARSER, .off = 0 /* home_of: parse_state.edges_all */,
      .words = EDGE_WORDS, .accepted = "wall, open, level, periodic" },
    { .name = "level_series", TEXT_SC(forcing.level_file),
      .accepted = "a text or NetCDF file of time and sea level that `level` edges follow (docs/storm-surge.md)" },
    { .name = "level_variable", TEXT_SC(forcing.level_variable),
      .accepted = "the NetCDF variable of level_series (default: the one with standard_name "
                  "sea_surface_height_above_mean_sea_level)" },
};

static const key_def STORM_KEYS[] = {
    { .name = "track", TEXT_SC(forcing.track), .required = 1,
      .accepted = "a track file, relative to the scenario's folder (docs/storm.md)" },
    { .name = "ambient_pressure", .kind = K_NUMBER, SC(forcing.ambient_hpa), RANGE(800, 1100), .dflt = "1013",
      .accepted = "800 <= ambient_pressure <= 1100, in hPa" },
    { .name = "reduction", .kind = K_NUMBER, SC(forcing.reduction), ABOVE(0, 1), .dflt = "0.8",
      .accepted = "0 < reduction <= 1, the 10 m wind over the gradient wind" },
    { .name = "inflow_angle", .kind = K_ANGLE, SC(forcing.inflow_deg), RANGE(0, 60), .dflt = "20",
      .accepted = "0 <= inflow_angle <= 60 deg" },
    { .name = "translation_fraction", .kind = K_NUMBER, SC(forcing.translation_fraction), RANGE(0, 1), .dflt = "0.5",
      .accepted = "0 <= translation_fraction <= 1" },
    { .name = "hemisphere", .kind = K_CHOICE, SC(forcing.south), .words = HEMISPHERE_WORDS, .dflt = "north",
      .accepted = "north (counter-clockwise), south (clockwise); with [run] rotation the sign of f decides" },
    { .name = "update", .kind = K_TIME, SC(forcing.update_s), ABOVE(0, DAY), .dflt = "600 s",
      .accepted = "0 < update <= 1 d" },
    { .name = "shift_across", .kind = K_LENGTH, SC(forcing.shift_across_m), RANGE(-1e4 * KM, 1e4 * KM), .dflt = "0",
      .accepted = "|shift_across| <= 10000 km, to the left of the mean heading" },
    { .name = "shift_along", .kind = K_LENGTH, SC(forcing.shift_along_m), RANGE(-1e4 * KM, 1e4 * KM), .dflt = "0",
      .accepted = "|shift_along| <= 10000 km, along the mean heading" },
    { .name = "pressure_drop_factor", .kind = K_NUMBER, SC(forcing.dp_factor), ABOVE(0, 10), .dflt = "1",
      .accepted = "0 < pressure_drop_factor <= 10" },
    { .name = "rmax_factor", .kind = K_NUMBER, SC(forcing.rmax_factor), ABOVE(0, 10), .dflt = "1",
      .accepted = "0 < rmax_factor <= 10" },
    { .name = "speed_factor", .kind = K_NUMBER, SC(forcing.speed_factor), ABOVE(0, 10), .dflt = "1",
      .accepted = "0 < speed_factor <= 10" },
};

static const key_def WEATHER_KEYS[] = {
    { .name = "file", TEXT_SC(forcing.weather_file), .required = 1,
      .accepted = "a NetCDF file of 10 m wind and sea-level pressure, relative to the scenario's folder "
                  "(docs/weather-file.md)" },
};

static const key_def WIND_KEYS[] = {
    { .name = "drag_law", .kind = K_CHOICE, SC(forcing.drag_law), .words = DRAG_WORDS, .dflt = "large-pond",
      .accepted = "large-pond, wu, garratt" },
    { .name = "drag_cap", .kind = K_NUMBER, SC(forcing.drag_cap), RANGE(0, 0.01), .dflt = "0",
      .accepted = "0 <= drag_cap <= 0.01; 0 = no cap (2.5e-3 is common practice for storm winds)" },
    { .name = "air_density", .kind = K_NUMBER, SC(forcing.air_density_kgm3), RANGE(0.5, 2), .dflt = "1.15",
      .accepted = "0.5 <= air_density <= 2, in kg m-3" },
    { .name = "water_density", .kind = K_NUMBER, SC(forcing.water_density_kgm3), RANGE(900, 1100), .dflt = "1025",
      .accepted = "900 <= water_density <= 1100, in kg m-3" },
};

static const key_def SEABED_KEYS[] = {
    { .name = "min_depth", .kind = K_LENGTH, SC(min_depth_m), ABOVE(0, 100), .dflt = "1 m",
      .accepted = "0 < min_depth <= 100 m" },
    { .name = "file", TEXT_SC(bed_file), .accepted = "a NetCDF path, relative to the scenario's folder" },
    { .name = "variable", TEXT_SC(bed_variable), .dflt = "depth", .only = BED_FILE, .accepted = "a variable name" },
    { .name = "positive", .kind = K_CHOICE, SC(bed_positive), .words = POSITIVE_WORDS, .first = SW_POSITIVE_DOWN,
      .only = BED_FILE, .accepted = "down (depth), up (elevation)" },
    { .name = "missing", .kind = K_CHOICE, SC(bed_missing_land), .words = MISSING_WORDS, .dflt = "error",
      .only = BED_FILE, .accepted = "error (a missing or NaN value stops the run), land (it marks land)" },
    { .name = "land_mask", TEXT_SC(bed_land_mask), .only = BED_FILE,
      .accepted = "a variable of the seabed file on the same axes, nonzero (or 1 with flag_values) = land" },
    { .name = "deep", .kind = K_LENGTH, SC(deep_m), ABOVE(0, 12 * KM), .required = 1, .only = BED_RECIPE,
      .accepted = "0 < deep <= 12 km" },
    { .name = "coast", .kind = K_CHOICE, SC(coast), .words = scn_coast_words, .dflt = "none", .only = BED_RECIPE,
      .accepted = "none, west, east, south, north" },
    { .name = "shoreline", .kind = K_COORD, SC(shoreline_m), .only = BED_RECIPE, .axis = SCN_AXIS_EITHER,
      SC_UNIT(shoreline_unit), .accepted = "x (coast west/east) or y (coast south/north) of the mean shoreline",
      .deg_lo = -180, .deg_hi = 360, .deg_accepted = "the shoreline's longitude (coast west/east, -180 .. 360 deg) "
      "or latitude (coast south/north, -90 .. 90 deg)" },
    { .name = "coast_wiggle", .kind = K_LENGTH, SC(coast_wiggle_m), RANGE(-1000 * KM, 1000 * KM), .dflt = "0",
      .only = BED_RECIPE, .accepted = "|coast_wiggle| <= 1000 km" },
    { .name = "coast_wavelength", .kind = K_LENGTH, SC(coast_wavelength_m), ABOVE(0, HUGE_VAL), .dflt = "50 km",
      .only = BED_RECIPE, .accepted = "coast_wavelength > 0" },
    { .name = "shelf_depth", .kind = K_LENGTH, SC(shelf_depth_m), ABOVE(0, 12 * KM), .only = BED_RECIPE,
      .accepted = "0 < shelf_depth <= deep" },
    { .name = "shelf_width", .kind = K_LENGTH, SC(shelf_width_m), ABOVE(0, HUGE_VAL), .only = BED_RECIPE,
      .accepted = "shelf_width > 0" },
    { .name = "slope_width", .kind = K_LENGTH, SC(slope_width_m), RANGE(0, HUGE_VAL), .dflt = "0",
      .only = BED_RECIPE, .accepted = "slope_width >= 0" },
    { .name = "land_height", .kind = K_LENGTH, SC(land_height_m), ABOVE(0, 9 * KM), .dflt = "10 m",
      .only = BED_RECIPE, .accepted = "0 < land_height <= 9 km" },
};

static const key_def BAY_KEYS[] = {
    { .name = "x", FE(x_m), .required = 1, POINT_X("centre", FE_UNIT(x_unit)) },
    { .name = "y", FE(y_m), .required = 1, POINT_Y("centre", FE_UNIT(y_unit)) },
    { .name = "radius_x", .kind = K_LENGTH, FE(radius_x_m), ABOVE(0, HUGE_VAL),
      .required = 1, .accepted = "radius_x > 0" },
    { .name = "radius_y", .kind = K_LENGTH, FE(radius_y_m), ABOVE(0, HUGE_VAL),
      .required = 1, .accepted = "radius_y > 0" },
    { .name = "depth", .kind = K_LENGTH, FE(depth_m), ABOVE(0, HUGE_VAL), .required = 1,
      .accepted = "depth > 0, the floor depth at the centre" },
};

static const key_def ISLAND_KEYS[] = {
    { .name = "x", FE(x_m), .required = 1, POINT_X("centre", FE_UNIT(x_unit)) },
    { .name = "y", FE(y_m), .required = 1, POINT_Y("centre", FE_UNIT(y_unit)) },
    { .name = "radius", .kind = K_LENGTH, FE(radius_x_m), ABOVE(0, HUGE_VAL), .required = 1,
      .accepted = "radius > 0, the e-folding radius" },
    { .name = "height", .kind = K_LENGTH, FE(height_m), ABOVE(0, HUGE_VAL), .required = 1,
      .accepted = "height > 0, the summit above sea level" },
};

static const key_def SHOAL_KEYS[] = {
    { .name = "x", FE(x_m), .required = 1, POINT_X("centre", FE_UNIT(x_unit)) },
    { .name = "y", FE(y_m), .required = 1, POINT_Y("centre", FE_UNIT(y_unit)) },
    { .name = "radius", .kind = K_LENGTH, FE(radius_x_m), ABOVE(0, HUGE_VAL), .required = 1,
      .accepted = "radius > 0, the e-folding radius" },
    { .name = "crest", .kind = K_LENGTH, FE(crest_m), ABOVE(0, HUGE_VAL), .required = 1,
      .accepted = "crest > 0, the water depth over the crest" },
};

static const key_def SOURCE_KEYS[] = {
    { .name = "shape", .kind = K_CHOICE, SO(shape), .words = scn_shape_words, .required = 1,
      .accepted = "hump, ellipse, pair, file" },
    { .name = "x", SO(x_m), .required = 1, .only = SHAPES_XY, POINT_X("centre", SO_UNIT(x_unit)) },
    { .name = "y", SO(y_m), .required = 1, .only = SHAPES_XY, POINT_Y("centre", SO_UNIT(y_unit)) },
    { .name = "amplitude", .kind = K_LENGTH, SO(amplitude_m), RANGE(-100, 100), .required = 1, .only = SHAPES_XY,
      .accepted = "|amplitude| <= 100 m; > 0 for a pair" },
    { .name = "subsidence", .kind = K_LENGTH, SO(trough_m), ABOVE(0, 100), .only = SHAPE(SW_SOURCE_PAIR),
      .accepted = "0 < subsidence <= 100 m (default: amplitude)" },
    { .name = "radius", .kind = K_LENGTH, SO(radius_m), ABOVE(0, HUGE_VAL), .required = 1,
      .only = SHAPE(SW_SOURCE_HUMP), .accepted = "radius > 0" },
    { .name = "length", .kind = K_LENGTH, SO(length_m), ABOVE(0, HUGE_VAL), .required = 1, .only = SHAPES_AXES,
      .accepted = "length > 0" },
    { .name = "width", .kind = K_LENGTH, SO(width_m), ABOVE(0, HUGE_VAL), .required = 1, .only = SHAPES_AXES,
      .accepted = "width > 0" },
    { .name = "angle", .kind = K_ANGLE, SO(angle_deg), .required = 1, .only = SHAPES_AXES,
      .accepted = "degrees counter-clockwise from east" },
    { .name = "separation", .kind = K_LENGTH, SO(separation_m), ABOVE(0, HUGE_VAL), .required = 1,
      .only = SHAPE(SW_SOURCE_PAIR), .accepted = "separation > 0" },
    { .name = "file", TEXT_SO(file), .required = 1, .only = SHAPE(SW_SOURCE_FILE),
      .accepted = "a NetCDF path, relative to the scenario's folder" },
    { .name = "variable", TEXT_SO(variable), .dflt = "eta", .only = SHAPE(SW_SOURCE_FILE),
      .accepted = "a variable name" },
    /* a file source scaled and moved, so that sweeps can vary it */
    { .name = "scale", .kind = K_NUMBER, SO(scale), RANGE(-1000, 1000), .dflt = "1", .only = SHAPE(SW_SOURCE_FILE),
      .accepted = "0 < |scale| <= 1000, multiplying the file's values" },
    { .name = "x_offset", .kind = K_COORD, SO(x_offset_m), RANGE(-1e4 * KM, 1e4 * KM), .dflt = "0", .axis = SCN_AXIS_X,
      SO_UNIT(x_offset_unit), .only = SHAPE(SW_SOURCE_FILE), .accepted = "|x_offset| <= 10000 km, moving the field",
      .deg_lo = -360, .deg_hi = 360, .deg_accepted = "|x_offset| <= 360 deg on a geographic grid" },
    { .name = "y_offset", .kind = K_COORD, SO(y_offset_m), RANGE(-1e4 * KM, 1e4 * KM), .dflt = "0", .axis = SCN_AXIS_Y,
      SO_UNIT(y_offset_unit), .only = SHAPE(SW_SOURCE_FILE), .accepted = "|y_offset| <= 10000 km, moving the field",
      .deg_lo = -180, .deg_hi = 180, .deg_accepted = "|y_offset| <= 180 deg on a geographic grid" },
};

/* [fault NAME]: one rectangular fault from its keys, or a segment table (`segments`; faults.c reads it once
 * the grid is known). The limits are scenario.h's SW_FAULT_*, which the table's rows meet too. */
static const key_def FAULT_KEYS[] = {
    { .name = "x", FA(x_m), .required = 1, .only = FAULT_ONE, POINT_X("top-edge centre", FA_UNIT(x_unit)) },
    { .name = "y", FA(y_m), .required = 1, .only = FAULT_ONE, POINT_Y("top-edge centre", FA_UNIT(y_unit)) },
    { .name = "depth", .kind = K_LENGTH, FA(depth_m), RANGE(0, SW_FAULT_DEPTH_MAX_M), .required = 1, .only = FAULT_ONE,
      .accepted = "0 <= depth <= 100 km, the top edge below the sea floor (0 needs surface_rupture = accept)" },
    { .name = "length", .kind = K_LENGTH, FA(length_m), ABOVE(0, SW_FAULT_SIZE_MAX_M), .required = 1,
      .only = FAULT_ONE, .accepted = "0 < length <= 2000 km, along strike" },
    { .name = "width", .kind = K_LENGTH, FA(width_m), ABOVE(0, SW_FAULT_SIZE_MAX_M), .required = 1,
      .only = FAULT_ONE, .accepted = "0 < width <= 2000 km, down dip" },
    { .name = "strike", .kind = K_ANGLE, FA(strike_deg), RANGE(-360, 360), .required = 1, .only = FAULT_ONE,
      .accepted = "-360 <= strike <= 360 deg, clockwise from north (the fault dips to its right)" },
    { .name = "dip", .kind = K_ANGLE, FA(dip_deg), ABOVE(0, 90), .required = 1, .only = FAULT_ONE,
      .accepted = "0 < dip <= 90 deg" },
    { .name = "rake", .kind = K_ANGLE, FA(rake_deg), RANGE(-360, 360), .required = 1, .only = FAULT_ONE,
      .accepted = "-360 <= rake <= 360 deg, counter-clockwise from the strike (90 = thrust)" },
    { .name = "slip", .kind = K_LENGTH, FA(slip_m), RANGE(0, SW_FAULT_SLIP_MAX_M), .required = 1, .only = FAULT_ONE,
      .accepted = "0 <= slip <= 200 m" },
    { .name = "opening", .kind = K_LENGTH, FA(opening_m), RANGE(-SW_FAULT_SLIP_MAX_M, SW_FAULT_SLIP_MAX_M), .dflt = "0",
      .accepted = "|opening| <= 200 m, the tensile opening (0 for an earthquake)" },
    { .name = "poisson", .kind = K_NUMBER, FA(poisson), ABOVE(0, 0.5), .dflt = "0.25",
      .accepted = "0 < poisson < 0.5 (0.25 gives lambda = mu: common practice)" },
    { .name = "lambda", .kind = K_PRESSURE, FA(lambda_pa), ABOVE(0, 1e12),
      .accepted = "0 < lambda <= 1000 GPa, Lame's first parameter, instead of poisson" },
    { .name = "rigidity", .kind = K_PRESSURE, FA(rigidity_pa), RANGE(1e9, 2e11), .dflt = "30 GPa",
      .accepted = "1 GPa <= rigidity <= 200 GPa, the shear modulus mu (30 GPa: common practice)" },
    { .name = "surface", .kind = K_CHOICE, FA(kajiura), .words = FAULT_SURFACE_WORDS, .dflt = "floor",
      .accepted = "floor (the sea surface takes the floor's uplift), kajiura (filtered by 1 / cosh(k h))" },
    { .name = "horizontal", .kind = K_CHOICE, FA(horizontal), .words = OFF_ON_WORDS, .dflt = "off",
      .accepted = "off, on (the horizontal motion over the sloping seabed, Tanioka & Satake 1996)" },
    { .name = "surface_rupture", .kind = K_CHOICE, FA(surface_rupture), .words = RUPTURE_WORDS, .dflt = "refuse",
      .accepted = "refuse, accept (a top edge at depth 0, breaking the sea floor)" },
    { .name = "start", .kind = K_TIME, FA(start_s), RANGE(0, SW_FAULT_START_MAX_S), .dflt = "0",
      .accepted = "0 <= start <= 30 d after the run's start, not together with rupture_speed" },
    { .name = "rise", .kind = K_TIME, FA(rise_s), RANGE(0, SW_FAULT_RISE_MAX_S), .dflt = "0",
      .accepted = "0 <= rise <= 1 d; 0 moves at once" },
    { .name = "rupture_speed", .kind = K_SPEED, FA(rupture_speed_ms), ABOVE(0, 1e4),
      .accepted = "0 < rupture_speed <= 10000 m/s, with hypocentre_x and hypocentre_y" },
    { .name = "hypocentre_x", FA(hypo_x_m), POINT_X("hypocentre", FA_UNIT(hypo_x_unit)) },
    { .name = "hypocentre_y", FA(hypo_y_m), POINT_Y("hypocentre", FA_UNIT(hypo_y_unit)) },
    { .name = "hypocentre_depth", .kind = K_LENGTH, FA(hypo_depth_m), RANGE(0, 1e6),
      .accepted = "0 <= hypocentre_depth <= 1000 km below the sea floor" },
    { .name = "cutoff", .kind = K_NUMBER, FA(cutoff), RANGE(0, 1e4), .dflt = "20",
      .accepted = "0 <= cutoff <= 10000, in (length + width + depth) of each segment; 0 evaluates everywhere" },
    { .name = "segments", .kind = K_TEXT, FA(segments), .size = FIELD_SIZE(sw_fault_spec, segments),
      .accepted = "a segment table file, relative to the scenario's folder (docs/faults.md)" },
    { .name = "slip_factor", .kind = K_NUMBER, FA(slip_factor), RANGE(0, 1000), .dflt = "1",
      .accepted = "0 <= slip_factor <= 1000, multiplying every segment's slip and opening" },
    { .name = "x_offset", .kind = K_COORD, FA(x_offset_m), RANGE(-1e4 * KM, 1e4 * KM), .dflt = "0", .axis = SCN_AXIS_X,
      FA_UNIT(x_offset_unit), .accepted = "|x_offset| <= 10000 km", .deg_lo = -360, .deg_hi = 360,
      .deg_accepted = "|x_offset| <= 360 deg on a geographic grid" },
    { .name = "y_offset", .kind = K_COORD, FA(y_offset_m), RANGE(-1e4 * KM, 1e4 * KM), .dflt = "0", .axis = SCN_AXIS_Y,
      FA_UNIT(y_offset_unit), .accepted = "|y_offset| <= 10000 km", .deg_lo = -180, .deg_hi = 180,
      .deg_accepted = "|y_offset| <= 180 deg on a geographic grid" },
    { .name = "rotation", .kind = K_ANGLE, FA(rotation_deg), RANGE(-360, 360), .dflt = "0",
      .accepted = "-360 <= rotation <= 360 deg, clockwise about the centroid of all faults' reference points" },
};

#define TABLE(t) t, sizeof t / sizeof t[0]
const section_def scn_sections[] = {
    { "run", S_RUN, 0, TABLE(RUN_KEYS) },          { "grid", S_GRID, 0, TABLE(GRID_KEYS) },
    { "edges", S_EDGES, 0, TABLE(EDGES_KEYS) },    { "seabed", S_SEABED, 0, TABLE(SEABED_KEYS) },
    { "gauges", S_GAUGES, 0, NULL, 0 },            { "bay", S_BAY, 1, TABLE(BAY_KEYS) },
    { "island", S_ISLAND, 1, TABLE(ISLAND_KEYS) }, { "shoal", S_SHOAL, 1, TABLE(SHOAL_KEYS) },
    { "source", S_SOURCE, 1, TABLE(SOURCE_KEYS) }, { "sweep", S_SWEEP, 0, NULL, 0 },
    { "storm", S_STORM, 0, TABLE(STORM_KEYS) },    { "weather", S_WEATHER, 0, TABLE(WEATHER_KEYS) },
    { "wind", S_WIND, 0, TABLE(WIND_KEYS) },      { "fault", S_FAULT, 1, TABLE(FAULT_KEYS) },
};
const size_t scn_n_sections = sizeof scn_sections / sizeof scn_sections[0];

_Static_assert(sizeof RUN_KEYS / sizeof RUN_KEYS[0] <= KEYS_MAX, "raise KEYS_MAX");
_Static_assert(sizeof SEABED_KEYS / sizeof SEABED_KEYS[0] <= KEYS_MAX, "raise KEYS_MAX");
_Static_assert(sizeof SOURCE_KEYS / sizeof SOURCE_KEYS[0] <= KEYS_MAX, "raise KEYS_MAX");
_Static_assert(sizeof FAULT_KEYS / sizeof FAULT_KEYS[0] <= KEYS_MAX, "raise KEYS_MAX");
_Static_assert(sizeof(sw_edge_kind) == sizeof(int) && sizeof(sw_coast_side) == sizeof(int)
               && sizeof(sw_rotation_kind) == sizeof(int) && sizeof(sw_friction_kind) == sizeof(int)
               && sizeof(sw_positive) == sizeof(int) && sizeof(sw_source_shape) == sizeof(int)
               && sizeof(sw_precision) == sizeof(int) && sizeof(sw_grid_kind) == sizeof(int),
               "K_CHOICE stores an int");

const section_def *scn_find_section_def(const char *name, suggestion *s)
{
    for (size_t i = 0; i < scn_n_sections; i++) {
        if (strcmp(scn_sections[i].name, name) == 0)
            return &scn_sections[i];
        if (s)
            scn_suggest_try(s, name, scn_sections[i].name);
    }
    return NULL;
}

const key_def *scn_find_key(const section_def *def, const char *name, suggestion *s)
{
    for (size_t i = 0; def && i < def->n_keys; i++) {
        if (strcmp(def->keys[i].name, name) == 0)
            return &def->keys[i];
        if (s)
            scn_suggest_try(s, name, def->keys[i].name);
    }
    return NULL;
}

/* ---- renamed keys ---------------------------------------------------------------------------- */

/* Keys whose names changed so that one word means one thing across scenario, command line, JSON and
 * NetCDF: a scenario using an old name is refused with the new one rather than read differently. */
static const struct {
    const char *section, *old_key, *hint;
} RENAMED_KEYS[] = {
    { "run", "courant", " (renamed: write courant_fraction = F, a fraction 0 < F <= 1 of the layout's limit; "
                        "'Courant number' always means the absolute c = sqrt(g h) dt / dx, which check reports)" },
    { "source", "trough", " (renamed: write subsidence = D, the pair's sinking in metres; 'trough' is the lowest "
                          "elevation a gauge records)" },
};

const char *scn_renamed_key(const char *section, const char *key)
{
    for (size_t i = 0; section && key && i < sizeof RENAMED_KEYS / sizeof RENAMED_KEYS[0]; i++)
        if (!strcmp(RENAMED_KEYS[i].section, section) && !strcmp(RENAMED_KEYS[i].old_key, key))
            return RENAMED_KEYS[i].hint;
    return "";
}

/* ---- suggestions --------------------------------------------------------------------------- */

/* Levenshtein distance between a and b (insertions, deletions, substitutions), SIZE_MAX when
 * either is longer than 64 characters (then they are not close anyway). */
static size_t edit_distance(const char *a, const char *b)
{
    size_t la = strlen(a), lb = strlen(b);
    if (la > 64 || lb > 64)
        return SIZE_MAX;
    size_t row[65];
    for (size_t j = 0; j <= lb; j++)
        row[j] = j;
    for (size_t i = 1; i <= la; i++) {
        size_t diag = row[0];   /* distance(a[:i-1], b[:j-1]) */
        row[0] = i;
        for (size_t j = 1; j <= lb; j++) {
            size_t up = row[j];
            size_t best = diag + (a[i - 1] != b[j - 1]);
            if (up + 1 < best)
                best = up + 1;
            if (row[j - 1] + 1 < best)
                best = row[j - 1] + 1;
            row[j] = best;
            diag = up;
        }
    }
    return row[lb];
}

/* Keeps the closest candidate to `typed`: within edit distance 2, or one that `typed` begins (or
 * that begins `typed`, for candidates of 3 characters or more). */
void scn_suggest_try(suggestion *s, const char *typed, const char *candidate)
{
    size_t d = edit_distance(typed, candidate);
    size_t lt = strlen(typed), lc = strlen(candidate);
    if (d > 2 && ((lt > 0 && strncmp(candidate, typed, lt) == 0) || (lc >= 3 && strncmp(typed, candidate, lc) == 0)))
        d = 2;   /* "dur" for "duration", "downward" for "down": close too */
    if (d <= 2 && (!s->best || d < s->dist)) {
        s->best = candidate;
        s->dist = d;
    }
}

/* Writes " (did you mean 'x'?)" or "" into out. */
const char *scn_suggest_text(const suggestion *s, char *out, size_t n)
{
    if (s->best)
        snprintf(out, n, " (did you mean '%s'?)", s->best);
    else if (n)
        out[0] = '\0';
    return out;
}

/* ---- values -------------------------------------------------------------------------------- */

sw_unit_kind scn_unit_kind(key_kind k)
{
    switch (k) {
    case K_LENGTH: return SW_UNIT_LENGTH;
    case K_TIME: return SW_UNIT_TIME;
    case K_ANGLE: return SW_UNIT_ANGLE;
    case K_RATE: return SW_UNIT_RATE;
    case K_SPEED: return SW_UNIT_SPEED;
    default: return SW_UNIT_NONE;
    }
}

/* Checks "YYYY-MM-DD HH:MM:SS" with a real calendar date (proleptic Gregorian). */
static sw_status check_origin(const char *v, char *why, size_t n)
{
    static const char pattern[] = "dddd-dd-dd dd:dd:dd";
    size_t len = strlen(v);
    int ok = len == sizeof pattern - 1;
    for (size_t i = 0; ok && i < len; i++)
        ok = pattern[i] == 'd' ? isdigit((unsigned char)v[i]) != 0 : v[i] == pattern[i];
    if (!ok) {
        snprintf(why, n, "not a date and time (accepted: YYYY-MM-DD HH:MM:SS, e.g. 2000-01-01 00:00:00)");
        return SW_ERR_PARSE;
    }
    int y = atoi(v), mo = atoi(v + 5), d = atoi(v + 8), h = atoi(v + 11), mi = atoi(v + 14), s = atoi(v + 17);
    int dim = sw_days_in_month(y, mo);
    if (y < 1 || mo < 1 || mo > 12 || d < 1 || d > dim || h > 23 || mi > 59 || s > 59) {
        snprintf(why, n, "no such date or time (accepted: year 0001..9999, month 01..12, a day of that month, "
                         "HH 00..23, MM and SS 00..59)");
        return SW_ERR_RANGE;
    }
    return SW_OK;
}

int scn_is_numeric(key_kind k)
{
    return k == K_NUMBER || k == K_INTEGER || k == K_LENGTH || k == K_TIME || k == K_ANGLE || k == K_RATE
        || k == K_SPEED || k == K_COORD || k == K_PRESSURE;
}

/* Parses a pressure "30 GPa", "3e10 Pa", "3e10" (a bare number is Pa) into *v in Pa. Returns 0, or -1 with
 * the cause in why. */
static int parse_pressure(const char *text, double *v, char *why, size_t n)
{
    static const struct { const char *name; double factor; } UNITS[] = {
        { "Pa", 1.0 }, { "kPa", 1e3 }, { "MPa", 1e6 }, { "GPa", 1e9 },
    };
    char *end;
    while (isspace((unsigned char)*text))
        text++;
    double x = strtod(text, &end);
    if (end == text || !isfinite(x)) {
        snprintf(why, n, "not a number (accepted: a pressure such as 30 GPa; units Pa, kPa, MPa, GPa)");
        return -1;
    }
    while (isspace((unsigned char)*end))
        end++;
    char unit[16];
    size_t len = strlen(end);
    while (len > 0 && isspace((unsigned char)end[len - 1]))
        len--;
    if (len == 0) {
        *v = x;
        return 0;
    }
    if (len < sizeof unit) {
        memcpy(unit, end, len);
        unit[len] = '\0';
        for (size_t q = 0; q < sizeof UNITS / sizeof UNITS[0]; q++)
            if (!strcmp(unit, UNITS[q].name)) {
                *v = x * UNITS[q].factor;
                return 0;
            }
    }
    snprintf(why, n, "unknown unit '%.*s' (accepted: Pa, kPa, MPa, GPa)", (int)(len < 24 ? len : 24), end);
    return -1;
}

/* The registry position (sw_layout_at) of the layout called `name` (any case) into *index, as a sweep
 * stores a layout value. Returns 0 when no layout has that name. */
int scn_layout_index(const char *name, double *index)
{
    const sw_layout *lay = sw_layout_find(name);
    for (size_t q = 0; lay && q < sw_layout_count(); q++)
        if (sw_layout_at(q) == lay) {
            *index = (double)q;
            return 1;
        }
    return 0;
}

/* Parses `value` as a number of numeric key k (unit, whole number, range) into *v. Returns SW_OK,
 * or SW_ERR_PARSE / SW_ERR_RANGE with the cause in why. */
sw_status scn_parse_number(const key_def *k, const char *value, double *v, char *why, size_t n)
{
    if (k->kind == K_PRESSURE ? parse_pressure(value, v, why, n) != 0
                              : sw_units_parse(value, scn_unit_kind(k->kind), v, why, (unsigned)n) != 0)
        return SW_ERR_PARSE;
    if (k->kind == K_INTEGER && *v != floor(*v)) {
        snprintf(why, n, "not a whole number (accepted: %s)", k->accepted);
        return SW_ERR_PARSE;
    }
    if (k->ranged && ((k->gt ? !(*v > k->lo) : !(*v >= k->lo)) || !(*v <= k->hi))) {
        snprintf(why, n, "out of range (accepted: %s)", k->accepted);
        return SW_ERR_RANGE;
    }
    return SW_OK;
}

/* Parses `value` as key k and stores it into home. Returns SW_OK, or SW_ERR_PARSE / SW_ERR_RANGE
 * with the cause in why. Nothing is stored on failure. */
sw_status scn_store_value(const key_def *k, void *home, const char *value, int kind, char *why, size_t n)
{
    char *at = (char *)home + k->off;
    switch (k->kind) {
    case K_NUMBER:
    case K_INTEGER:
    case K_LENGTH:
    case K_TIME:
    case K_ANGLE:
    case K_RATE:
    case K_SPEED:
    case K_PRESSURE: {
        double v;
        sw_status st = scn_parse_number(k, value, &v, why, n);
        if (st != SW_OK)
            return st;
        if (k->kind == K_INTEGER) {
            size_t iv = (size_t)v;   /* ranged: 1 .. 100000 */
            memcpy(at, &iv, sizeof iv);
        } else {
            memcpy(at, &v, sizeof v);
        }
        return SW_OK;
    }
    case K_TEXT: {
        size_t len = strlen(value);
        if (len == 0) {
            snprintf(why, n, "empty (accepted: %s)", k->accepted);
            return SW_ERR_PARSE;
        }
        if (len >= k->size) {
            snprintf(why, n, "too long: %zu characters (accepted: at most %zu)", len, k->size - 1);
            return SW_ERR_RANGE;
        }
        memcpy(at, value, len + 1);
        return SW_OK;
    }
    case K_CHOICE: {
        suggestion s = { 0 };
        for (int i = 0; k->words[i]; i++) {
            if (strcmp(value, k->words[i]) == 0) {
                int v = k->first + i;
                memcpy(at, &v, sizeof v);
                return SW_OK;
            }
            scn_suggest_try(&s, value, k->words[i]);
        }
        char hint[96];
        snprintf(why, n, "unknown value%s (accepted: %s)", scn_suggest_text(&s, hint, sizeof hint), k->accepted);
        return SW_ERR_PARSE;
    }
    case K_LAYOUT: {
        const sw_layout *lay = sw_layout_find(value);
        if (!lay) {
            snprintf(why, n, "unknown layout (accepted: %s (any case))", sw_layout_names());
            return SW_ERR_PARSE;
        }
        size_t len = strlen(lay->name);
        if (len >= k->size) {
            snprintf(why, n, "internal: the layout name %s is longer than %zu characters", lay->name, k->size - 1);
            return SW_ERR_RANGE;
        }
        memcpy(at, lay->name, len + 1);
        return SW_OK;
    }
    case K_ORIGIN: {
        sw_status st = check_origin(value, why, n);
        if (st == SW_OK)
            memcpy(at, value, strlen(value) + 1);   /* 19 characters into char[32] */
        return st;
    }
    case K_COORD: {
        double v;
        sw_unit_kind unit;
        sw_status st = scn_parse_coord(k, value, kind, &v, &unit, why, n);
        if (st != SW_OK)
            return st;
        memcpy(at, &v, sizeof v);
        if (!k->grid_key)
            memcpy((char *)home + k->unit_off, &unit, sizeof unit);
        return SW_OK;
    }
    }
    snprintf(why, n, "internal: unknown key kind");
    return SW_ERR_PARSE;
}

/* ---- coordinates ----------------------------------------------------------------------------- */

/* Writes the cause into why and returns code. */
static sw_status coord_refuse(sw_status code, char *why, size_t n, const char *fmt, ...)
    __attribute__((format(printf, 4, 5)));
static sw_status coord_refuse(sw_status code, char *why, size_t n, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(why, n, fmt, ap);
    va_end(ap);
    return code;
}

sw_status scn_check_coord(const key_def *k, int axis, double v, sw_unit_kind unit, int kind, char *why, size_t n)
{
    if (!k)
        k = scn_point_key(axis);
    if (kind == SW_GRID_GEOGRAPHIC) {
        if (unit == SW_UNIT_LENGTH)
            return coord_refuse(SW_ERR_PARSE, why, n, "a length: give degrees on a geographic grid (accepted: %s)",
                                k->deg_accepted);
        if (!(v >= k->deg_lo && v <= k->deg_hi))
            return coord_refuse(SW_ERR_RANGE, why, n, "out of range (accepted: %s)", k->deg_accepted);
        return SW_OK;
    }
    if (unit == SW_UNIT_ANGLE)
        return coord_refuse(SW_ERR_PARSE, why, n, "degrees on a projected grid (accepted: %s; degrees need [grid] "
                            "kind = geographic)", k->accepted);
    if (k->ranged && ((k->gt ? !(v > k->lo) : !(v >= k->lo)) || !(v <= k->hi)))
        return coord_refuse(SW_ERR_RANGE, why, n, "out of range (accepted: %s)", k->accepted);
    return SW_OK;
}

sw_status scn_parse_coord(const key_def *k, const char *value, int kind, double *v, sw_unit_kind *unit, char *why,
                          size_t n)
{
    double x;
    sw_unit_kind written;
    if (sw_units_parse_position(value, &x, &written, why, (unsigned)n) != 0)
        return SW_ERR_PARSE;
    /* pending: what the unit written says can be checked now, the rest once the grid is known */
    int as = kind;
    if (kind == SCN_KIND_PENDING)
        as = written == SW_UNIT_ANGLE ? SW_GRID_GEOGRAPHIC : written == SW_UNIT_LENGTH ? SW_GRID_PROJECTED
             : SCN_KIND_PENDING;
    if (as != SCN_KIND_PENDING) {
        sw_status st = scn_check_coord(k, k->axis, x, written, as, why, n);
        if (st != SW_OK)
            return st;
    }
    *v = x;
    *unit = written;
    return SW_OK;
}

double sw_scenario_lon_m(const sw_grid *g, double lon_deg)
{
    return scn_coord_to_m(g, SCN_AXIS_X, lon_deg);
}

const key_def *scn_point_key(int axis)
{
    return &POINT_KEYS[axis == SCN_AXIS_Y];
}

/* How far longitude v (deg) lies outside [lo, hi]; 0 inside. */
static double outside_by(double v, double lo, double hi)
{
    return v < lo ? lo - v : v > hi ? v - hi : 0.0;
}

double scn_coord_to_m(const sw_grid *g, int axis, double v_deg)
{
    if (axis != SCN_AXIS_X)
        return sw_grid_deg(g, v_deg);
    const double lo = sw_grid_to_deg(g, g->x0_m), hi = lo + sw_grid_to_deg(g, (double)g->nx * g->dx_m);
    double best = v_deg, off = outside_by(v_deg, lo, hi);
    for (int s = -1; s <= 1; s += 2) {
        const double w = v_deg + 360.0 * s, o = outside_by(w, lo, hi);
        if (o < off) {
            best = w;
            off = o;
        }
    }
    return sw_grid_deg(g, best);
}

/* ---- targets: "section name.key" ----------------------------------------------------------- */

void scn_trim(char *t)
{
    size_t n = strlen(t), a = 0;
    while (a < n && isspace((unsigned char)t[a]))
        a++;
    while (n > a && isspace((unsigned char)t[n - 1]))
        n--;
    memmove(t, t + a, n - a);
    t[n - a] = '\0';
}

/* Splits "section words.key" at the last '.' into the section's kind (first word), its name (the
 * rest, trimmed) and the key. Returns 0 when a part is missing or too long. */
int scn_split_target(const char *target, char *kind, char *name, char *key)
{
    const char *dot = strrchr(target, '.');
    if (!dot || strlen(target) > LINE_MAX_CHARS)
        return 0;
    char sect[LINE_MAX_CHARS + 1];
    memcpy(sect, target, (size_t)(dot - target));
    sect[dot - target] = '\0';
    snprintf(key, LINE_MAX_CHARS + 1, "%s", dot + 1);
    scn_trim(key);
    scn_split_section(sect, kind, name);
    return kind[0] && key[0] && strlen(name) < SW_NAME_MAX;
}

/* Splits "kind words": the first word is the kind, the rest (trimmed) the name. */
void scn_split_section(const char *text, char *kind, char *name)
{
    char t[LINE_MAX_CHARS + 1];
    snprintf(t, sizeof t, "%s", text);
    scn_trim(t);
    size_t kn = 0;
    while (t[kn] && !isspace((unsigned char)t[kn]))
        kn++;
    memcpy(kind, t, kn);
    kind[kn] = '\0';
    snprintf(name, LINE_MAX_CHARS + 1, "%s", t + kn);
    scn_trim(name);
}

/* Canonical "kind name.key" / "kind.key". */
void scn_join_target(char *out, size_t n, const char *kind, const char *name, const char *key)
{
    /* kinds and keys are short table words; names are below SW_NAME_MAX (scn_split_target) */
    snprintf(out, n, "%.16s%s%.63s.%.24s", kind, name[0] ? " " : "", name, key);
}
