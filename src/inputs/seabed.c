/* seabed.c - water depth at cell centres, from a NetCDF file or the analytic recipe (see seabed.h).
 *
 * Depth is positive down everywhere in this file. The recipe is a pure function of (x, y): the base
 * profile across the coast, then each feature in scenario order. Islands and shoals scale their
 * bump by the depth "at their centre", which is that same function evaluated (analytically, not at
 * the nearest cell) with only the features before them; those amplitudes are computed once, in
 * order, before the grid is filled.
 *
 * Shoreline: along-coast coordinate a (y for a west/east coast, x for south/north), mean shoreline
 * position S, wiggle W and wavelength L give the shoreline at S + W sin(2 pi a / L), with a
 * measured from the coordinate origin. s, the distance seaward, is positive away from the land side.
 *
 * On a geographic grid (grid.h: x = R lambda, y = R phi) every length of the recipe is a true distance:
 * an x extent is multiplied by cos(latitude), of the point itself for the coast (the distance along its
 * parallel) and of the mean latitude of the point and the centre for a feature's east offset (the
 * equirectangular approximation of the local distance, with a relative error of the order of the
 * square of the offset over the radius); y extents are true lengths already. The shoreline S and
 * feature centres are positions (arc metres), W, L, the widths and radii lengths. Projected grids
 * take none of these branches, so their depths keep their bits.
 */
#include "inputs/seabed.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "inputs/ncinput.h"

#define SEABED_PI 3.14159265358979323846

/* Absolute paths as given, otherwise sc->dir + "/" + rel. Returns SW_ERR_RANGE if it does not fit. */
/* sw_scenario_resolve, with the scenario line of [seabed] file in a failure message. */
static sw_status resolve_path(const sw_scenario *sc, const char *rel, char *out, size_t n, sw_error *err)
{
    sw_status st = sw_scenario_resolve(sc, rel, out, n, err);
    if (st != SW_OK)
        sw_error_prefix(err, "%s:%d: [seabed] file: ", sc->path, sc->bed_line);
    return st;
}

static const char *bed_variable(const sw_scenario *sc)
{
    return sc->bed_variable[0] ? sc->bed_variable : "depth";
}

sw_status sw_seabed_grid(sw_scenario *sc, sw_error *err)
{
    if (!sc)
        return sw_fail(err, SW_ERR_USAGE, "sw_seabed_grid: no scenario");
    if (sc->has_grid)
        return SW_OK;
    if (!sc->bed_file[0])
        return sw_fail(err, SW_ERR_INPUT, "%s: a [grid] section is required when [seabed] has no file",
                       sc->path);
    char path[SW_PATH_MAX];
    sw_status st = resolve_path(sc, sc->bed_file, path, sizeof path, err);
    if (st != SW_OK)
        return st;
    sw_grid g;
    st = sw_ncin_grid(path, bed_variable(sc), sc->grid.radius_m, &g, err);
    if (st != SW_OK) {
        sw_error_prefix(err, "%s:%d: [seabed] file: ", sc->path, sc->bed_line);
        return st;
    }
    /* the limits docs/scenario.md sets on [grid] apply to a grid taken from the file too */
    if (g.nx > 100000 || g.ny > 100000 || g.nx * g.ny > 400000000u)
        return sw_fail(err, SW_ERR_RANGE, "%s:%d: [seabed] file: %s: variable '%s' has %zu x %zu "
                       "cells (accepted: nx, ny <= 100000 and nx * ny <= 400000000)", sc->path,
                       sc->bed_line, path, bed_variable(sc), g.nx, g.ny);
    if (g.dx_m < 1.0 || g.dx_m > 1e6 || g.dy_m < 1.0 || g.dy_m > 1e6)
        return sw_fail(err, SW_ERR_RANGE, "%s:%d: [seabed] file: %s: variable '%s' has spacing "
                       "dx = %g m, dy = %g m (accepted: 1 m .. 1000 km)", sc->path, sc->bed_line,
                       path, bed_variable(sc), g.dx_m, g.dy_m);
    if (sc->grid_kind_line && g.kind != sc->grid.kind)
        return sw_fail(err, SW_ERR_INPUT, "%s:%d: [grid] kind = %s, but the seabed file %s has variable '%s' on %s "
                       "(accepted: kind = %s for this file, or a file on %s)", sc->path, sc->grid_kind_line,
                       sc->grid.kind == SW_GRID_GEOGRAPHIC ? "geographic" : "projected", path, bed_variable(sc),
                       g.kind == SW_GRID_GEOGRAPHIC ? "longitude/latitude axes in degrees" : "x/y axes in metres",
                       g.kind == SW_GRID_GEOGRAPHIC ? "geographic" : "projected",
                       sc->grid.kind == SW_GRID_GEOGRAPHIC ? "longitude/latitude axes (degrees_east, degrees_north)"
                                                           : "x/y axes in m or km");
    sc->grid = g;
    sc->has_grid = 1;
    return SW_OK;
}

/* Every depth read from the file within the limits the recipe's keys have: deep <= SW_SEABED_DEPTH_MAX_M,
 * land_height <= SW_SEABED_HEIGHT_MAX_M (scenario_keys.c). The first cell beyond them (row by row from the
 * south-west) is an error naming the scenario line, the file, the variable, the grid cell and its centre. */
static sw_status seabed_file_range(const sw_scenario *sc, const char *path, const double *depth_m, sw_error *err)
{
    const sw_grid *g = &sc->grid;
    for (size_t j = 0; j < g->ny; j++)
        for (size_t i = 0; i < g->nx; i++) {
            const double d = depth_m[j * g->nx + i];
            if (d >= -SW_SEABED_HEIGHT_MAX_M && d <= SW_SEABED_DEPTH_MAX_M)
                continue;
            const int geo = sw_grid_geographic(g);
            const double x = geo ? sw_grid_to_deg(g, sw_grid_xc(g, i)) : sw_grid_xc(g, i);
            const double y = geo ? sw_grid_to_deg(g, sw_grid_yc(g, j)) : sw_grid_yc(g, j);
            return sw_fail(err, SW_ERR_RANGE, "%s:%d: [seabed] file: %s: variable '%s' gives depth %g m at grid "
                           "cell i = %zu, j = %zu (x = %g %s, y = %g %s), %s (accepted: -%g m <= depth <= %g m, "
                           "the limits of [seabed] land_height and deep)", sc->path, sc->bed_line, path,
                           bed_variable(sc), d, i, j, x, geo ? "deg" : "m", y, geo ? "deg" : "m",
                           d > 0 ? "deeper than any sea" : "higher than any land", SW_SEABED_HEIGHT_MAX_M,
                           SW_SEABED_DEPTH_MAX_M);
        }
    return SW_OK;
}

/* Depth from the file: values converted from the file's sign convention (the scenario's
 * `positive` wins over the variable's attribute); land from missing values or the mask at depth 0. */
static sw_status seabed_from_file(const sw_scenario *sc, double *depth_m, sw_seabed_info *info, sw_error *err)
{
    char path[SW_PATH_MAX];
    sw_status st = resolve_path(sc, sc->bed_file, path, sizeof path, err);
    if (st != SW_OK)
        return st;
    const size_t n = sw_grid_cells(&sc->grid);
    const int want_land = sc->bed_missing_land || sc->bed_land_mask[0];
    unsigned char *land = want_land ? malloc(n) : NULL;
    if (want_land && !land)
        return sw_fail(err, SW_ERR_NOMEM, "%s:%d: [seabed] file: out of memory for %zu cells", sc->path,
                       sc->bed_line, n);
    int attr = SW_POSITIVE_UNSET;
    const sw_ncin_options opt = {
        .outside = SW_NCIN_OUTSIDE_ERROR,
        .missing_land = sc->bed_missing_land,
        .land_mask = sc->bed_land_mask,
        .land = land,
        .missing_hint = "accepted: finite values; or `missing = land` in [seabed] when they mark land",
        .positive_attr = &attr,
    };
    st = sw_ncin_read_with(path, bed_variable(sc), &sc->grid, &opt, depth_m, err);
    if (st != SW_OK) {
        free(land);
        sw_error_prefix(err, "%s:%d: [seabed] file: ", sc->path, sc->bed_line);
        return st;
    }
    sw_positive pos = sc->bed_positive != SW_POSITIVE_UNSET ? sc->bed_positive : (sw_positive)attr;
    if (pos == SW_POSITIVE_UNSET) {
        free(land);
        return sw_fail(err, SW_ERR_INPUT,
                       "%s:%d: [seabed] file: %s: variable '%s' has no 'positive' attribute (up or "
                       "down), so its sign is unknown: add `positive = down` (values are depths) or "
                       "`positive = up` (elevations) to [seabed]", sc->path, sc->bed_line, path,
                       bed_variable(sc));
    }
    if (pos == SW_POSITIVE_UP)
        for (size_t k = 0; k < n; k++)
            depth_m[k] = -depth_m[k];
    for (size_t k = 0; land && k < n; k++) {
        if (!land[k])
            continue;
        depth_m[k] = 0.0;   /* land for every min_depth (> 0) */
        if (land[k] & SW_NCIN_LAND_MASK)
            info->land_mask++;
        else
            info->land_missing++;
    }
    free(land);
    return seabed_file_range(sc, path, depth_m, err);
}

/* The recipe's settings, with the defaults docs/scenario.md gives for values left at 0 by a
 * hand-built scenario (the parser fills them itself). */
typedef struct {
    sw_coast_side coast;
    double deep_m, shelf_m, shelf_w_m, slope_w_m, land_m;
    double shore_m, wiggle_m, wavelength_m;
    int geo;            /* 1 on a geographic grid: x extents are scaled to true lengths */
    double radius_m;    /* geographic: the sphere's radius, m */
} seabed_recipe;

/* Base profile at (x, y): flat `deep`, or the shelf / cosine slope / deep profile across the coast. */
static double seabed_base(const seabed_recipe *r, double x, double y)
{
    if (r->coast == SW_COAST_NONE)
        return r->deep_m;
    int along_y = r->coast == SW_COAST_WEST || r->coast == SW_COAST_EAST;
    double a = along_y ? y : x;          /* along the coast */
    double c = along_y ? x : y;          /* across the coast */
    double shore = r->shore_m;
    double s;
    if (!r->geo) {
        if (r->wiggle_m != 0.0)
            shore += r->wiggle_m * sin(2.0 * SEABED_PI * a / r->wavelength_m);
        s = (r->coast == SW_COAST_WEST || r->coast == SW_COAST_SOUTH) ? c - shore : shore - c;
    } else {
        /* true lengths: an x extent times cos(latitude) of the point (the parallel through it) */
        const double cl = cos(y / r->radius_m);
        const double sign = (r->coast == SW_COAST_WEST || r->coast == SW_COAST_SOUTH) ? 1.0 : -1.0;
        if (!along_y)
            a *= cl;
        s = sign * (c - shore) * (along_y ? cl : 1.0);
        if (r->wiggle_m != 0.0)
            s -= sign * r->wiggle_m * sin(2.0 * SEABED_PI * a / r->wavelength_m);
    }
    if (s <= r->shelf_w_m) {
        double d = r->shelf_m * s / r->shelf_w_m;
        return d < -r->land_m ? -r->land_m : d;
    }
    if (s < r->shelf_w_m + r->slope_w_m) {
        double t = (s - r->shelf_w_m) / r->slope_w_m;
        return r->shelf_m + (r->deep_m - r->shelf_m) * (1.0 - cos(SEABED_PI * t)) / 2.0;
    }
    return r->deep_m;
}

/* Applies feature f, with precomputed bump amplitude amp_m (island/shoal), to depth d at (x, y). */
static double seabed_feature(const seabed_recipe *r, const sw_feature *f, double amp_m, double x, double y,
                             double d)
{
    double ex = x - f->x_m, ey = y - f->y_m;
    if (r->geo)   /* the local east offset: cos of the mean latitude of the point and the centre */
        ex *= cos(0.5 * (y + f->y_m) / r->radius_m);
    if (f->kind == SW_FEATURE_BAY) {
        double u = ex / f->radius_x_m, v = ey / f->radius_y_m;
        double r2 = u * u + v * v;
        if (r2 < 1.0) {
            double floor_m = f->depth_m * (1.0 - r2);
            if (d < floor_m)
                d = floor_m;
        }
        return d;
    }
    double R = f->radius_x_m;
    return d - amp_m * exp(-(ex * ex + ey * ey) / (R * R));
}

/* Depth of the recipe at (x, y) with the first nf features applied. */
static double seabed_point(const seabed_recipe *r, const sw_scenario *sc, const double *amp, size_t nf,
                           double x, double y)
{
    double d = seabed_base(r, x, y);
    for (size_t k = 0; k < nf; k++)
        d = seabed_feature(r, &sc->features[k], amp[k], x, y, d);
    return d;
}

static const char *feature_kind_name(sw_feature_kind k)
{
    return k == SW_FEATURE_BAY ? "bay" : k == SW_FEATURE_ISLAND ? "island" : "shoal";
}

/* Checks the recipe's settings (the parser checks them too; this guards against hand-built
 * scenarios dividing by zero) and fills r. */
static sw_status seabed_recipe_init(const sw_scenario *sc, seabed_recipe *r, sw_error *err)
{
    r->coast = sc->coast;
    r->deep_m = sc->deep_m;
    r->shelf_m = sc->shelf_depth_m > 0.0 ? sc->shelf_depth_m : sc->deep_m;
    r->shelf_w_m = sc->shelf_width_m;
    r->slope_w_m = sc->slope_width_m;
    r->land_m = sc->land_height_m;
    r->shore_m = sc->shoreline_m;
    r->wiggle_m = sc->coast_wiggle_m;
    r->wavelength_m = sc->coast_wavelength_m;
    r->geo = sw_grid_geographic(&sc->grid);
    r->radius_m = sc->grid.radius_m > 0.0 ? sc->grid.radius_m : SW_EARTH_RADIUS_M;
    if (!(r->deep_m > 0.0))
        return sw_fail(err, SW_ERR_RANGE, "%s: [seabed] deep = %g m: needs a value > 0 without a file",
                       sc->path, r->deep_m);
    if (r->coast != SW_COAST_NONE) {
        if (!(r->shelf_w_m > 0.0))
            return sw_fail(err, SW_ERR_RANGE, "%s: [seabed] shelf_width = %g m: needs a value > 0 "
                           "with a coast", sc->path, r->shelf_w_m);
        if (!(r->slope_w_m >= 0.0))
            return sw_fail(err, SW_ERR_RANGE, "%s: [seabed] slope_width = %g m: needs a value >= 0",
                           sc->path, r->slope_w_m);
        if (r->wiggle_m != 0.0 && !(r->wavelength_m > 0.0))
            return sw_fail(err, SW_ERR_RANGE, "%s: [seabed] coast_wavelength = %g m: needs a value "
                           "> 0 with a coast_wiggle", sc->path, r->wavelength_m);
    }
    if (sc->n_features > SW_MAX_FEATURES)
        return sw_fail(err, SW_ERR_USAGE, "%s: %zu features (at most %d)", sc->path, sc->n_features,
                       SW_MAX_FEATURES);
    for (size_t k = 0; k < sc->n_features; k++) {
        const sw_feature *f = &sc->features[k];
        int bad = f->kind == SW_FEATURE_BAY ? !(f->radius_x_m > 0.0 && f->radius_y_m > 0.0)
                                            : !(f->radius_x_m > 0.0);
        if (bad)
            return sw_fail(err, SW_ERR_RANGE, "%s:%d: [%s %s] radius: needs a value > 0", sc->path,
                           f->line, feature_kind_name(f->kind), f->name);
    }
    return SW_OK;
}

sw_status sw_seabed_build(const sw_scenario *sc, double *depth_m, sw_error *err)
{
    return sw_seabed_build_info(sc, depth_m, NULL, err);
}

sw_status sw_seabed_build_info(const sw_scenario *sc, double *depth_m, sw_seabed_info *info, sw_error *err)
{
    sw_seabed_info none;
    if (!info)
        info = &none;
    memset(info, 0, sizeof *info);
    if (!sc || !depth_m)
        return sw_fail(err, SW_ERR_USAGE, "sw_seabed_build: no scenario or output");
    if (!sc->has_grid)
        return sw_fail(err, SW_ERR_USAGE, "%s: sw_seabed_build: the grid is not set (call "
                       "sw_seabed_grid first)", sc->path);
    if (sc->bed_file[0])
        return seabed_from_file(sc, depth_m, info, err);

    seabed_recipe r;
    sw_status st = seabed_recipe_init(sc, &r, err);
    if (st != SW_OK)
        return st;
    /* bump amplitudes, in order: each sees the field built by the features before it */
    double amp[SW_MAX_FEATURES] = {0};
    for (size_t k = 0; k < sc->n_features; k++) {
        const sw_feature *f = &sc->features[k];
        if (f->kind == SW_FEATURE_BAY)
            continue;
        double centre = seabed_point(&r, sc, amp, k, f->x_m, f->y_m);
        amp[k] = f->kind == SW_FEATURE_ISLAND ? centre + f->height_m : centre - f->crest_m;
    }
    const sw_grid *g = &sc->grid;
    for (size_t j = 0; j < g->ny; j++) {
        double y = sw_grid_yc(g, j);
        for (size_t i = 0; i < g->nx; i++)
            depth_m[j * g->nx + i] = seabed_point(&r, sc, amp, sc->n_features, sw_grid_xc(g, i), y);
    }
    return SW_OK;
}
