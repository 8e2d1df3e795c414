/* setup.c - scenario -> seabed, source, layout and time step (see setup.h). */
#include "run/setup.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "forcing/forcing.h"
#include "forcing/storm.h"
#include "model/model.h"
#include "inputs/seabed.h"
#include "inputs/source.h"
#include "observers/gauges.h"
#include "observers/tracker.h"

void sw_setup_free(sw_setup *s)
{
    if (!s)
        return;
    free(s->depth_m);
    free(s->eta0_m);
    sw_faults_free(&s->faults);
    memset(s, 0, sizeof *s);
}

/* Picks the layout, or says which ones exist. */
static sw_status choose_layout(const sw_scenario *sc, sw_setup *s, sw_error *err)
{
    s->layout = sw_layout_find(sc->layout);
    if (s->layout)
        return SW_OK;
    return sw_fail(err, SW_ERR_RANGE, "%s:%d: [run] layout = %s: unknown (accepted: %s)", sc->path,
                   sc->layout_line, sc->layout, sw_layout_names());
}

/* A checkerboard layout (E) wraps across periodic edges only with an even number of cells between
 * them; the grid may come from the seabed file, so this is checked here. */
static sw_status periodic_fits(const sw_scenario *sc, const sw_layout *lay, const sw_grid *g, sw_error *err)
{
    const int px = sc->edges[SW_WEST] == SW_EDGE_PERIODIC, py = sc->edges[SW_SOUTH] == SW_EDGE_PERIODIC;
    if (!lay->checkerboard || !((px && g->nx % 2) || (py && g->ny % 2)))
        return SW_OK;
    return sw_fail(err, SW_ERR_RANGE, "%s:%d: [run] layout = %s with periodic %s edges: the %s layout's checkerboard "
                   "needs an even number of cells between periodic edges (nx = %zu, ny = %zu; accepted: an even %s, "
                   "or another layout)", sc->path, sc->layout_line, lay->name, px && g->nx % 2 ? "west/east" : "south/north",
                   lay->name, g->nx, g->ny, px && g->nx % 2 ? "nx" : "ny");
}

/* Every gauge must lie in the domain. The parser checks this when [grid] is given; a grid taken
 * from the seabed file is only known here. On a geographic grid the edges are given a micrometre for
 * the round-off of degrees turned into metres, and the message is in degrees. */
static sw_status gauges_inside(const sw_scenario *sc, const sw_grid *g, sw_error *err)
{
    const int geo = sw_grid_geographic(g);
    const double eps = geo ? 1e-6 : 0.0;
    double x1 = g->x0_m + (double)g->nx * g->dx_m, y1 = g->y0_m + (double)g->ny * g->dy_m;
    for (size_t q = 0; q < sc->n_gauges; q++) {
        const sw_gauge_spec *gp = &sc->gauges[q];
        if (!(gp->x_m < g->x0_m - eps || gp->x_m > x1 + eps || gp->y_m < g->y0_m - eps || gp->y_m > y1 + eps))
            continue;
        if (geo)
            return sw_fail(err, SW_ERR_RANGE, "%s:%d: [gauges] %s = %.10g deg, %.10g deg: outside the domain "
                           "(accepted: longitude from %.10g to %.10g deg, latitude from %.10g to %.10g deg)", sc->path,
                           gp->line, gp->name, sw_grid_to_deg(g, gp->x_m), sw_grid_to_deg(g, gp->y_m),
                           sw_grid_to_deg(g, g->x0_m), sw_grid_to_deg(g, x1), sw_grid_to_deg(g, g->y0_m),
                           sw_grid_to_deg(g, y1));
        return sw_fail(err, SW_ERR_RANGE, "%s:%d: [gauges] %s = %g m, %g m: outside the domain "
                       "(accepted: x from %g to %g m, y from %g to %g m)", sc->path, gp->line, gp->name,
                       gp->x_m, gp->y_m, g->x0_m, x1, g->y0_m, y1);
    }
    return SW_OK;
}

/* A geographic grid taken from the seabed file must keep the limits [grid] has (the parser checks them
 * there): at most once around the sphere, and its halo rows within SW_GRID_POLE_LIMIT_DEG of the
 * equator, tested as the model tests them (model.c). */
static sw_status sphere_fits(const sw_scenario *sc, const sw_grid *g, sw_error *err)
{
    if (!sw_grid_geographic(g))
        return SW_OK;
    const double around = sw_grid_to_deg(g, (double)g->nx * g->dx_m);
    if (around > 360.0 * (1 + 1e-9))
        return sw_fail(err, SW_ERR_RANGE, "%s:%d: [seabed] file: its %zu columns of %.10g deg span %.10g deg of "
                       "longitude, more than once around the sphere (accepted: at most 360 deg)", sc->path,
                       sc->bed_line, g->nx, sw_grid_to_deg(g, g->dx_m), around);
    const double lim = SW_GRID_POLE_LIMIT_DEG * 3.14159265358979323846 / 180.0;
    const double south = g->y0_m - g->dy_m, north = g->y0_m + (double)(g->ny + 1) * g->dy_m;
    if (!(fabs(south) / g->radius_m <= lim && fabs(north) / g->radius_m <= lim))
        return sw_fail(err, SW_ERR_RANGE, "%s:%d: [seabed] file: its rows and their halo rows span latitude %.10g to "
                       "%.10g deg, beyond +-%g deg (accepted: a grid whose outer rows, one row beyond the file's, stay "
                       "within +-%g deg: towards a pole cos(latitude) goes to 0, cells collapse to slivers and the time "
                       "step with them)", sc->path, sc->bed_line, sw_grid_to_deg(g, south), sw_grid_to_deg(g, north),
                       SW_GRID_POLE_LIMIT_DEG, SW_GRID_POLE_LIMIT_DEG);
    return SW_OK;
}

/* The grid: from [grid], or read from the seabed file, whose axes then give the kind (sw_seabed_grid
 * refuses a file that contradicts a kind [grid] writes). Then sc's positions are placed on it
 * (sw_scenario_place), and a grid from the file must keep [grid]'s limits on a sphere. */
static sw_status take_grid(sw_scenario *sc, sw_error *err)
{
    const int from_file = !sc->has_grid;
    sw_status rc = sw_seabed_grid(sc, err);
    if (rc == SW_OK)
        rc = sw_scenario_place(sc, err);
    if (rc == SW_OK && from_file)
        rc = sphere_fits(sc, &sc->grid, err);
    return rc;
}

sw_status sw_setup_build(sw_scenario *sc, sw_setup *s, sw_error *err)
{
    memset(s, 0, sizeof *s);
    sw_status rc = choose_layout(sc, s, err);
    if (rc == SW_OK)
        rc = take_grid(sc, err);
    if (rc == SW_OK)
        rc = gauges_inside(sc, &sc->grid, err);
    if (rc == SW_OK)
        rc = periodic_fits(sc, s->layout, &sc->grid, err);
    if (rc != SW_OK)
        return rc;
    s->grid = sc->grid;
    size_t n = sw_grid_cells(&s->grid);
    s->depth_m = malloc(n * sizeof(double));
    s->eta0_m = malloc(n * sizeof(double));
    if (!s->depth_m || !s->eta0_m) {
        const size_t nx = s->grid.nx, ny = s->grid.ny;   /* sw_setup_free clears s */
        sw_setup_free(s);
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for the %zu x %zu input fields (depth and initial "
                       "elevation, %.0f MB)", nx, ny, 2.0 * (double)n * sizeof(double) / 1e6);
    }
    sw_seabed_info info = { 0 };
    rc = sw_seabed_build_info(sc, s->depth_m, &info, err);
    s->land_missing = info.land_missing;
    s->land_mask = info.land_mask;
    if (rc == SW_OK)
        rc = sw_faults_collect(sc, &s->faults, err);
    if (rc == SW_OK)
        rc = sw_setup_sources(sc, s, err);
    if (rc != SW_OK) {
        sw_setup_free(s);
        return rc;
    }
    rc = sw_setup_derive(sc, s, NULL, err);
    if (rc == SW_OK)
        rc = sw_setup_storm_pass(sc, &s->grid, (double)s->n_steps * s->dt_s, &s->storm, err);
    if (rc != SW_OK)
        sw_setup_free(s);
    return rc;
}

int sw_setup_faults_use_depth(const sw_setup *s)
{
    for (size_t k = 0; k < s->faults.n; k++)
        if (s->faults.seg[k].kajiura || s->faults.seg[k].horizontal)
            return 1;
    return 0;
}

/* The faults' count, moment, timing and run memory into s->fault (the peaks are set by the caller). */
static void fault_counts(const sw_scenario *sc, sw_setup *s)
{
    sw_fault_summary *f = &s->fault;
    memset(f, 0, sizeof *f);
    f->sections = sc->n_faults;
    f->segments = s->faults.n;
    int moving_horizontal = 0;
    for (size_t k = 0; k < s->faults.n; k++) {
        const sw_fault_segment *g = &s->faults.seg[k];
        f->kajiura += g->kajiura != 0;
        f->horizontal += g->horizontal != 0;
        moving_horizontal |= g->horizontal && !(g->start_s == 0 && g->rise_s == 0);
    }
    f->moment_nm = sw_faults_moment(&s->faults);
    f->magnitude = f->moment_nm > 0 ? sw_moment_magnitude(f->moment_nm) : 0.0;
    f->end_s = sw_faults_end(&s->faults);
    f->whole_rupture = f->end_s > 0;
    /* a rupture in time: the run's increment field and sw_faults_increment's floor field (and the horizontal
     * motion's two components when a moving segment has horizontal = on) */
    f->run_bytes = f->end_s > 0 ? sw_grid_cells(&s->grid) * sizeof(double) * (2 + 2 * (size_t)moving_horizontal) : 0;
}

/* The highest and lowest of field v over the water cells of s into s->fault. */
static void fault_peaks(const sw_scenario *sc, sw_setup *s, const double *v)
{
    double hi = 0, lo = 0;
    for (size_t k = 0; k < sw_grid_cells(&s->grid); k++)
        if (s->depth_m[k] >= sc->min_depth_m) {
            hi = fmax(hi, v[k]);
            lo = fmin(lo, v[k]);
        }
    s->fault.uplift_m = hi;
    s->fault.subsidence_m = lo;
}

/* The peaks, extent and volume of surface v over the water cells of s into *o (its budgets untouched). */
static void source_shape(const sw_scenario *sc, const sw_setup *s, const double *v, sw_source_summary *o)
{
    const sw_grid *g = &s->grid;
    o->any = 0;
    o->uplift_m = o->subsidence_m = 0;
    o->uplift_x_m = o->uplift_y_m = o->subsidence_x_m = o->subsidence_y_m = 0;
    o->threshold_m = o->area_m2 = o->volume_m3 = o->positive_m3 = o->negative_m3 = 0;
    o->x0_m = o->x1_m = o->y0_m = o->y1_m = 0;
    for (size_t j = 0; j < g->ny; j++)
        for (size_t i = 0; i < g->nx; i++) {
            const size_t k = j * g->nx + i;
            if (!(s->depth_m[k] >= sc->min_depth_m))
                continue;
            if (v[k] > o->uplift_m) {
                o->uplift_m = v[k];
                o->uplift_x_m = sw_grid_xc(g, i);
                o->uplift_y_m = sw_grid_yc(g, j);
            }
            if (v[k] < o->subsidence_m) {
                o->subsidence_m = v[k];
                o->subsidence_x_m = sw_grid_xc(g, i);
                o->subsidence_y_m = sw_grid_yc(g, j);
            }
        }
    const double peak = fmax(o->uplift_m, -o->subsidence_m);
    if (!(peak > 0))
        return;
    o->any = 1;
    o->threshold_m = SW_SOURCE_EXTENT_SHARE * peak;
    size_t i0 = g->nx, i1 = 0, j0 = g->ny, j1 = 0;
    for (size_t j = 0; j < g->ny; j++) {
        const double area = g->dx_m * g->dy_m * sw_grid_cos_lat(g, sw_grid_yc(g, j));
        double pos = 0, neg = 0;
        size_t over = 0;
        for (size_t i = 0; i < g->nx; i++) {
            const size_t k = j * g->nx + i;
            if (!(s->depth_m[k] >= sc->min_depth_m))
                continue;
            if (v[k] > 0)
                pos += v[k];
            else
                neg += v[k];
            if (fabs(v[k]) > o->threshold_m) {
                over++;
                i0 = i < i0 ? i : i0;
                i1 = i > i1 ? i : i1;
                j0 = j < j0 ? j : j0;
                j1 = j > j1 ? j : j1;
            }
        }
        o->positive_m3 += pos * area;
        o->negative_m3 += neg * area;
        o->area_m2 += (double)over * area;
    }
    o->volume_m3 = o->positive_m3 + o->negative_m3;
    o->x0_m = g->x0_m + (double)i0 * g->dx_m;
    o->x1_m = g->x0_m + (double)(i1 + 1) * g->dx_m;
    o->y0_m = g->y0_m + (double)j0 * g->dy_m;
    o->y1_m = g->y0_m + (double)(j1 + 1) * g->dy_m;
}

/* The first source that keeps less than SW_SOURCE_MIN_LEFT of its displaced volume in the water, as an error
 * naming it and the figures; SW_OK when none. */
static sw_status source_left(const sw_scenario *sc, const sw_source_summary *o, sw_error *err)
{
    for (size_t q = 0; q < o->n_budgets; q++) {
        const sw_source_budget *b = &o->budget[q];
        if (!(b->asked_m3 > 0) || b->water_m3 >= SW_SOURCE_MIN_LEFT * b->asked_m3)
            continue;
        const double off = b->asked_m3 - b->grid_m3;
        char where[SW_PATH_MAX + SW_NAME_MAX + 48];
        if (b->line > 0)
            snprintf(where, sizeof where, "%s:%d: [source %s]", sc->path, b->line, b->name);
        else
            snprintf(where, sizeof where, "%s: [fault] sections", sc->path);
        return sw_fail(err, SW_ERR_RANGE, "%s: nothing of its displaced volume is left in the water (%.3g of %.3g "
                       "m^3; %.3g m^3 on land, %.3g m^3 outside the grid; accepted: at least %g %% in water "
                       "cells, at least [seabed] min_depth = %g m deep)", where, b->water_m3, b->asked_m3,
                       b->grid_m3 - b->water_m3, off > 0 ? off : 0.0, 100 * SW_SOURCE_MIN_LEFT, sc->min_depth_m);
    }
    return SW_OK;
}

sw_status sw_setup_sources(const sw_scenario *sc, sw_setup *s, sw_error *err)
{
    sw_source_summary *o = &s->source;
    memset(o, 0, sizeof *o);
    if (sc->n_faults == 0) {
        sw_status rc = sw_source_build(sc, &s->faults, s->depth_m, sc->min_depth_m, s->eta0_m, NULL, err);
        if (rc == SW_OK)
            rc = sw_source_budgets(sc, s->depth_m, sc->min_depth_m, NULL, o->budget, &o->n_budgets, err);
        if (rc == SW_OK)
            source_shape(sc, s, s->eta0_m, o);
        return rc == SW_OK ? source_left(sc, o, err) : rc;
    }
    const size_t n = sw_grid_cells(&s->grid);
    double *f = malloc(n * sizeof *f), *all = NULL;
    if (!f)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for the faults' sea surface on %zu x %zu cells", s->grid.nx,
                       s->grid.ny);
    sw_status rc = sw_source_build(sc, &s->faults, s->depth_m, sc->min_depth_m, s->eta0_m, f, err);
    if (rc == SW_OK) {
        fault_counts(sc, s);
        if (s->fault.whole_rupture) {   /* of the whole rupture: every segment at its full slip */
            all = calloc(n, sizeof *all);
            rc = all ? sw_faults_surface(&s->faults, SW_FAULTS_ALL, &s->grid, s->depth_m, sc->min_depth_m, all, err)
                     : sw_fail(err, SW_ERR_NOMEM, "out of memory for the rupture's final surface on %zu x %zu cells",
                               s->grid.nx, s->grid.ny);
        }
    }
    const double *faults_final = all ? all : f;
    if (rc == SW_OK) {
        fault_peaks(sc, s, faults_final);
        rc = sw_source_budgets(sc, s->depth_m, sc->min_depth_m, faults_final, o->budget, &o->n_budgets, err);
    }
    if (rc == SW_OK && all) {   /* the final static surface: eta0 less the instant faults, plus all of them */
        for (size_t k = 0; k < n; k++)
            f[k] = s->eta0_m[k] - f[k] + all[k];
        source_shape(sc, s, f, o);
        o->final_surface = 1;
    } else if (rc == SW_OK) {
        source_shape(sc, s, s->eta0_m, o);
    }
    free(f);
    free(all);
    return rc == SW_OK ? source_left(sc, o, err) : rc;
}

/* Where the time-step limit is reached (s->dt_row, from sw_model_dt_limit_row): the latitude of the row's
 * centres and its narrowest true cell width, the least cos(latitude) over its centres and face lines as
 * the model takes it (model.c). */
static void where_limit(const sw_grid *g, sw_setup *s)
{
    if (!sw_grid_geographic(g)) {
        s->dt_row_lat_deg = 0;
        s->dt_row_width_m = g->dx_m;
        return;
    }
    const double ys = g->y0_m + (double)s->dt_row * g->dy_m;
    s->dt_row_lat_deg = sw_grid_to_deg(g, ys + 0.5 * g->dy_m);
    s->dt_row_width_m = g->dx_m * fmin(sw_grid_cos_lat(g, ys + 0.5 * g->dy_m),
                                       fmin(sw_grid_cos_lat(g, ys), sw_grid_cos_lat(g, ys + g->dy_m)));
}

/* The gauge samples (last_always = 1) or snapshots (0) a run of n_steps steps of dt (s) takes at interval
 * (s), counted as run.c's observe takes them: at t = 0, at the first step whose time n dt (sw_model_tick)
 * reaches the next multiple of the interval (less 1e-9 of it), skipping the multiples that step has passed,
 * and for gauges at the last step when it is not already a sample. Walks sample by sample (not step by
 * step), with run.c's very comparisons. */
static size_t count_samples(long long n_steps, double dt, double interval, int last_always)
{
    const double eps = 1e-9 * interval;
    size_t count = 1;          /* t = 0 */
    double next = 0;
    next = sw_gauges_next_time(next, 0, interval);   /* bounded, as run.c's observe */
    long long last = 0;        /* the step of the latest sample */
    while (last < n_steps) {
        /* the first step n > last with n dt >= next - eps */
        const double first = ceil((next - eps) / dt);   /* guarded: the cast needs a value in range */
        long long n = first > (double)n_steps ? n_steps + 1 : (long long)first;
        if (n <= last)
            n = last + 1;
        while (n > last + 1 && (double)(n - 1) * dt >= next - eps)
            n--;
        while ((double)n * dt < next - eps)
            n++;
        if (n > n_steps || (n == n_steps && last_always))   /* the last step is always a gauge sample */
            return count + (last_always ? 1 : 0);
        count++;
        last = n;
        const double now = (double)n * dt;
        next = sw_gauges_next_time(next, now, interval);
    }
    return count;
}

sw_status sw_setup_derive(const sw_scenario *sc, sw_setup *s, const char *change, sw_error *err)
{
    const sw_grid *g = &s->grid;
    size_t n = sw_grid_cells(g);
    s->wet_cells = 0;
    s->h_max_m = 0;
    for (size_t k = 0; k < n; k++)
        if (s->depth_m[k] >= sc->min_depth_m) {
            s->wet_cells++;
            s->h_max_m = fmax(s->h_max_m, s->depth_m[k]);
        }
    if (s->wet_cells == 0) {
        if (change)
            return sw_fail(err, SW_ERR_RANGE, "%s: %s leaves no water: every cell is shallower than [seabed] "
                           "min_depth = %g m", sc->path, change, sc->min_depth_m);
        return sw_fail(err, SW_ERR_RANGE, "%s: the domain has no water: every cell is shallower than "
                       "[seabed] min_depth = %g m", sc->path, sc->min_depth_m);
    }

    /* dt from the Courant fraction, or the explicit dt checked against the limit */
    s->dims = sw_model_dims(g, sc->edges);
    s->dt_limit_s = sw_model_dt_limit_row(s->layout, g, s->depth_m, sc->min_depth_m, sc->gravity_ms2, s->dims,
                                          &s->dt_row);
    where_limit(g, s);
    /* rotation lowers the limit a little (docs/terms.md): f dt = 1e-3 takes 0.03 % off */
    const double f_max = sw_terms_f_max(&sc->terms, g->y0_m, g->y0_m + (double)g->ny * g->dy_m, g->radius_m);
    s->dt_limit_s = sw_terms_dt_limit(s->dt_limit_s, f_max);
    s->courant_limit = sw_model_courant(g, s->h_max_m, sc->gravity_ms2, s->dt_limit_s);
    if (sc->dt_s > 0) {
        char where[160];
        if (sw_grid_geographic(g))
            snprintf(where, sizeof where, "on row %zu at latitude %.4g deg, where cells are %.4g km wide", s->dt_row,
                     s->dt_row_lat_deg, s->dt_row_width_m / 1000);
        else
            snprintf(where, sizeof where, "at the deepest water, %g m", s->h_max_m);
        s->dt_s = sc->dt_s;
        s->courant = sw_model_courant(g, s->h_max_m, sc->gravity_ms2, s->dt_s);
        if (s->dt_s > s->dt_limit_s * (1 + 1e-12))
            return sw_fail(err, SW_ERR_UNSTABLE,
                           "%s:%d: [run] dt = %g s%s%s: Courant number %.4g exceeds the %s-layout limit %.4g%s "
                           "(largest stable dt = %.4g s %s)",
                           sc->path, sc->dt_line, sc->dt_s, change ? " with " : "", change ? change : "",
                           s->courant, s->layout->name, s->courant_limit, f_max > 0 ? " with rotation" : "",
                           s->dt_limit_s, where);
    } else {
        s->dt_s = sc->courant_fraction * s->dt_limit_s;
        s->courant = sw_model_courant(g, s->h_max_m, sc->gravity_ms2, s->dt_s);
    }

    /* sizes */
    double steps = ceil(sc->duration_s / s->dt_s - 1e-9);
    if (!(steps <= 1e12))   /* also NaN: the cast below needs a value in range */
        return sw_fail(err, SW_ERR_RANGE, "%s: the run needs %.3g steps (duration %g s / dt %g s); "
                       "shorten the duration or coarsen the grid", sc->path, steps, sc->duration_s, s->dt_s);
    s->n_steps = (long long)steps;
    s->n_samples = count_samples(s->n_steps, s->dt_s, sc->gauge_interval_s, 1);
    s->n_snapshots = sc->snapshot_interval_s > 0 ? count_samples(s->n_steps, s->dt_s, sc->snapshot_interval_s, 0) : 0;
    s->model_bytes = sw_model_bytes_for(g, sc->precision, s->layout, &sc->terms);
    s->forcing_bytes = sw_setup_forcing_bytes(sc, s);
    s->total_bytes = sw_setup_total_bytes(sc, s);
    return SW_OK;
}

/* The forcing's memory outside the model: running maps (2 float), written maps (2 double), and the
 * gauges' pressure and wind (3 double a sample); 0 without an atmosphere. */
static size_t forcing_outside_model(const sw_scenario *sc, const sw_setup *s)
{
    if (!sc->terms.surface)
        return 0;
    const size_t n = sw_grid_cells(&s->grid);
    return n * (2 * sizeof(float) + 2 * sizeof(double)) + sc->n_gauges * s->n_samples * 3 * sizeof(double);
}

size_t sw_setup_forcing_bytes(const sw_scenario *sc, const sw_setup *s)
{
    if (!sc->terms.surface)
        return 0;
    sw_terms_config still = sc->terms;
    still.surface = 0;
    const size_t with = sw_model_bytes_for(&s->grid, sc->precision, s->layout, &sc->terms);
    const size_t without = sw_model_bytes_for(&s->grid, sc->precision, s->layout, &still);
    return (with > without ? with - without : 0) + forcing_outside_model(sc, s);
}

size_t sw_setup_total_bytes(const sw_scenario *sc, const sw_setup *s)
{
    const size_t n = sw_grid_cells(&s->grid);
    return s->model_bytes
         + n * 2 * sizeof(double)                                  /* input depth and initial elevation */
         + n * sw_tracker_bytes_per_cell()                          /* running maps during the run */
         + n * 5 * sizeof(double)                                   /* the five result maps written */
         + (s->n_snapshots ? n * sizeof(double) : 0)                /* one snapshot frame */
         + sc->n_gauges * s->n_samples * 3 * sizeof(double)        /* gauge series */
         + forcing_outside_model(sc, s)                             /* wind and pressure maps and series */
         + s->fault.run_bytes;                                      /* a rupture in time's fields */
}

/* ---- the storm's pass over the domain ---------------------------------------------------------------- */

#define PASS_STEPS 4000   /* even time steps over the run at which the centre is checked */

/* Distance (m) from (x, y) to the rectangle [x0, x1] x [y0, y1]; 0 inside or on it. */
static double rect_distance(double x, double y, double x0, double x1, double y0, double y1)
{
    const double dx = fmax(fmax(x0 - x, x - x1), 0), dy = fmax(fmax(y0 - y, y - y1), 0);
    return hypot(dx, dy);
}

sw_status sw_setup_storm_pass(const sw_scenario *sc, const sw_grid *g, double run_end_s, sw_storm_pass *out,
                              sw_error *err)
{
    memset(out, 0, sizeof *out);
    const sw_forcing_spec *fs = &sc->forcing;
    if (!fs->storm)
        return SW_OK;
    char path[SW_PATH_MAX];
    sw_storm_options opt;
    sw_storm_changes changes;
    sw_forcing_storm_settings(sc, g, &opt, &changes);   /* what the run will use (forcing.c) */
    sw_storm *storm = NULL;
    sw_status rc = sw_scenario_resolve(sc, fs->track, path, sizeof path, err);
    if (rc == SW_OK)
        rc = sw_storm_load(path, &opt, &storm, err);
    if (rc != SW_OK)
        return rc;
    /* the span the run reads: the slabs up to the first at or after the end (forcing.c) */
    const double t_end = fs->update_s > 0 ? ceil(run_end_s / fs->update_s) * fs->update_s : run_end_s;
    double span0, span1;
    sw_storm_changed_span(storm, &changes, 0, t_end, &span0, &span1);
    rc = sw_storm_covers(storm, span0, span1, err);
    if (rc == SW_OK) {
        const double x0 = g->x0_m, x1 = g->x0_m + (double)g->nx * g->dx_m;
        const double y0 = g->y0_m, y1 = g->y0_m + (double)g->ny * g->dy_m;
        out->present = 1;
        out->closest_m = INFINITY;
        /* the centre moves piecewise linearly: between two of these times it can enter the domain
         * unnoticed only for less than a 4000th of the run, too short to matter */
        for (size_t k = 0; k <= PASS_STEPS; k++) {
            const double t = run_end_s * (double)k / PASS_STEPS;
            sw_storm_state st;
            sw_storm_state_changed(storm, &changes, t, &st);
            if (!(st.pc_pa > 0)) {
                rc = sw_fail(err, SW_ERR_RANGE, "%s: at t = %g s the storm's pressure drop %g hPa (times "
                             "pressure_drop_factor %g) leaves no central pressure (ambient %g hPa); lower [storm] "
                             "pressure_drop_factor", fs->track, t, st.dp_pa / 100, fs->dp_factor, st.ambient_pa / 100);
                break;
            }
            const double d = rect_distance(st.x_m, st.y_m, x0, x1, y0, y1);
            if (d < out->closest_m) {   /* strictly: the first time inside is kept */
                out->closest_m = d;
                out->closest_time_s = t;
            }
        }
        out->outside = out->closest_m > 0;
    }
    sw_storm_free(storm);
    if (rc != SW_OK)
        memset(out, 0, sizeof *out);
    return rc;
}

sw_model_config sw_setup_model_config(const sw_scenario *sc, const sw_setup *s)
{
    sw_model_config cfg = {
        .layout = s->layout, .grid = s->grid, .depth_m = s->depth_m, .eta0_m = s->eta0_m,
        .min_depth_m = sc->min_depth_m, .gravity_ms2 = sc->gravity_ms2, .dt_s = s->dt_s,
        .precision = sc->precision, .terms = sc->terms,
    };
    memcpy(cfg.edges, sc->edges, sizeof cfg.edges);
    return cfg;
}
