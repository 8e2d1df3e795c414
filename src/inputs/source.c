/* source.c - the initial sea-surface displacement, summed over the scenario's sources (see source.h).
 *
 * Analytic shapes are Gaussians evaluated at cell centres. For a source with long-axis direction
 * angle a (counter-clockwise from east), a point's offset (ex, ey) from the centre has the
 * along-axis part u = ex cos a + ey sin a and the across part v = -ex sin a + ey cos a (positive
 * to the left of the axis, i.e. towards a + 90 degrees).
 *
 *   hump:    A exp(-r^2 / R^2)
 *   ellipse: A exp(-(u / L)^2 - (v / W)^2)
 *   pair:    the ellipse with +A centred separation/2 to the left of the axis, minus the ellipse
 *            with T (trough) centred separation/2 to the right.
 *   file:    interpolated bilinearly; 0 outside the file's extent; times its scale, moved by its offsets.
 *   faults:  the sea surface of the fault segments that move at t = 0 (faults.c), added last.
 *
 * On a geographic grid (grid.h: x = R lambda, y = R phi) the offset (ex, ey) is a point's place in the
 * azimuthal equidistant plane about the source's centre: ex = d sin(b), ey = d cos(b), with d the
 * great-circle distance from the centre (the haversine formula, well conditioned for short distances:
 * R. W. Sinnott, "Virtues of the haversine", Sky and Telescope 68(2), 1984, p. 159 [memory]) and b the
 * initial bearing from the centre, clockwise from north (the forward azimuth of spherical trigonometry,
 * tan b = sin(dlambda) cos(phi) / (cos(phi_c) sin(phi) - sin(phi_c) cos(phi) cos(dlambda))). So every
 * length of a shape is a true distance on the sphere and every direction a true bearing: a hump of radius
 * 50 km is round on the ground at any latitude, and d is exact along every ray from the centre. A pair's
 * two centres are placed separation/2 to either side of the axis in that plane. Projected grids keep
 * the plane formulas above, and their bits.
 */
#include "inputs/source.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "inputs/ncinput.h"

#define SOURCE_PI 3.14159265358979323846

/* sw_scenario_resolve for a file source, with its scenario line in a failure message. */
static sw_status resolve_path(const sw_scenario *sc, const sw_source_spec *s, char *out, size_t n,
                              sw_error *err)
{
    sw_status st = sw_scenario_resolve(sc, s->file, out, n, err);
    if (st != SW_OK)
        sw_error_prefix(err, "%s:%d: [source %s] file: ", sc->path, s->line, s->name);
    return st;
}

/* Adds amp * exp(-(u/L)^2 - (v/W)^2) around (xc, yc), axis at angle (cos ca, sin sa), to eta. */
static void source_add_ellipse(const sw_grid *g, double xc, double yc, double amp, double L, double W,
                               double ca, double sa, double *eta)
{
    for (size_t j = 0; j < g->ny; j++) {
        double ey = sw_grid_yc(g, j) - yc;
        for (size_t i = 0; i < g->nx; i++) {
            double ex = sw_grid_xc(g, i) - xc;
            double u = (ex * ca + ey * sa) / L;
            double v = (-ex * sa + ey * ca) / W;
            eta[j * g->nx + i] += amp * exp(-(u * u) - (v * v));
        }
    }
}

/* The centre of a source on a geographic grid, with the sines and cosines the plane about it needs. */
typedef struct {
    double lambda, phi;       /* the centre's longitude and latitude, rad */
    double sin_phi, cos_phi;
} sphere_centre;

/* Adds amp * exp(-(u/L)^2 - (v/W)^2) to eta on geographic grid g, with (ex, ey) the azimuthal equidistant
 * coordinates of each cell centre about c (see the top of this file) less (sx, sy), the offset of this
 * ellipse's own centre in that plane (a pair's halves), axis at angle (ca, sa). */
static void source_add_ellipse_sphere(const sw_grid *g, const sphere_centre *c, double sx, double sy, double amp,
                                      double L, double W, double ca, double sa, double *eta)
{
    const double R = g->radius_m;
    for (size_t j = 0; j < g->ny; j++) {
        const double phi = sw_grid_yc(g, j) / R;
        const double sp = sin(phi), cp = cos(phi), sh = sin(0.5 * (phi - c->phi));
        for (size_t i = 0; i < g->nx; i++) {
            const double dl = sw_grid_xc(g, i) / R - c->lambda;
            const double sl = sin(0.5 * dl);
            /* haversine: a = sin^2(dphi / 2) + cos(phi_c) cos(phi) sin^2(dlambda / 2), d = 2 R asin(sqrt(a)) */
            const double a = fmin(1.0, sh * sh + c->cos_phi * cp * sl * sl);
            const double d = 2.0 * R * asin(sqrt(a));
            /* the bearing's east and north parts, unnormalised */
            const double e = sin(dl) * cp, n = c->cos_phi * sp - c->sin_phi * cp * cos(dl);
            const double h = hypot(e, n);
            const double ex = (h > 0 ? d * e / h : 0.0) - sx, ey = (h > 0 ? d * n / h : 0.0) - sy;
            const double u = (ex * ca + ey * sa) / L;
            const double v = (-ex * sa + ey * ca) / W;
            eta[j * g->nx + i] += amp * exp(-(u * u) - (v * v));
        }
    }
}

/* Adds the analytic source s (hump, ellipse or pair) to eta on geographic grid g. */
static void source_add_sphere(const sw_grid *g, const sw_source_spec *s, double ca, double sa, double *eta)
{
    sphere_centre c = { .lambda = s->x_m / g->radius_m, .phi = s->y_m / g->radius_m };
    c.sin_phi = sin(c.phi);
    c.cos_phi = cos(c.phi);
    switch (s->shape) {
    case SW_SOURCE_HUMP:
        source_add_ellipse_sphere(g, &c, 0, 0, s->amplitude_m, s->radius_m, s->radius_m, 1.0, 0.0, eta);
        break;
    case SW_SOURCE_ELLIPSE:
        source_add_ellipse_sphere(g, &c, 0, 0, s->amplitude_m, s->length_m, s->width_m, ca, sa, eta);
        break;
    case SW_SOURCE_PAIR: {
        const double h = 0.5 * s->separation_m;
        const double trough = s->trough_m != 0.0 ? s->trough_m : s->amplitude_m;  /* 0 = unset */
        source_add_ellipse_sphere(g, &c, -h * sa, h * ca, s->amplitude_m, s->length_m, s->width_m, ca, sa, eta);
        source_add_ellipse_sphere(g, &c, h * sa, -h * ca, -trough, s->length_m, s->width_m, ca, sa, eta);
        break;
    }
    case SW_SOURCE_FILE:
        break;
    }
}

/* Adds the file source s to eta (interpolated; 0 outside the file), times its scale and moved by its offsets:
 * the file is read onto the grid moved back by the offsets, so that each cell takes the file's value that
 * far behind it. */
static sw_status source_add_file(const sw_scenario *sc, const sw_source_spec *s, double *eta,
                                 sw_error *err)
{
    char path[SW_PATH_MAX];
    sw_status st = resolve_path(sc, s, path, sizeof path, err);
    if (st != SW_OK)
        return st;
    size_t n = sw_grid_cells(&sc->grid);
    double *tmp = malloc(n * sizeof *tmp);
    if (!tmp)
        return sw_fail(err, SW_ERR_NOMEM, "%s:%d: [source %s]: out of memory for %zu cells", sc->path,
                       s->line, s->name, n);
    sw_grid g = sc->grid;
    g.x0_m -= s->x_offset_m;
    g.y0_m -= s->y_offset_m;
    const double scale = s->scale != 0.0 ? s->scale : 1.0;   /* 0 = unset, in a spec built by hand */
    /* the file's displacement, scaled, within the limit of an analytic source's amplitude */
    char accepted[160];
    snprintf(accepted, sizeof accepted, "|scale x displacement| <= %g m, the limit of [source] amplitude; with "
             "scale = %g: |displacement| <= %g m", SW_SOURCE_FILE_MAX_M, scale, SW_SOURCE_FILE_MAX_M / fabs(scale));
    const sw_ncin_options opt = {.outside = SW_NCIN_OUTSIDE_ZERO, .range_lo = -SW_SOURCE_FILE_MAX_M / fabs(scale),
                                 .range_hi = SW_SOURCE_FILE_MAX_M / fabs(scale), .range_accepted = accepted};
    st = sw_ncin_read_with(path, s->variable[0] ? s->variable : "eta", &g, &opt, tmp, err);
    if (st == SW_OK) {
        for (size_t k = 0; k < n; k++)
            eta[k] += scale * tmp[k];
    } else {
        sw_error_prefix(err, "%s:%d: [source %s] file: ", sc->path, s->line, s->name);
    }
    free(tmp);
    return st;
}

/* Checks the lengths an analytic shape divides by (the parser checks them too). */
static sw_status source_check(const sw_scenario *sc, const sw_source_spec *s, sw_error *err)
{
    const char *what = NULL;
    if (s->shape == SW_SOURCE_HUMP && !(s->radius_m > 0.0))
        what = "radius";
    else if ((s->shape == SW_SOURCE_ELLIPSE || s->shape == SW_SOURCE_PAIR) && !(s->length_m > 0.0))
        what = "length";
    else if ((s->shape == SW_SOURCE_ELLIPSE || s->shape == SW_SOURCE_PAIR) && !(s->width_m > 0.0))
        what = "width";
    if (what)
        return sw_fail(err, SW_ERR_RANGE, "%s:%d: [source %s] %s: needs a value > 0", sc->path, s->line,
                       s->name, what);
    return SW_OK;
}

/* Adds the instant faults' sea surface to eta0 (and puts it alone into faults_eta when not NULL). */
static sw_status source_add_faults(const sw_scenario *sc, const sw_fault_set *faults, const double *depth_m,
                                   double min_depth_m, double *eta0_m, double *faults_eta_m, sw_error *err)
{
    const size_t n = sw_grid_cells(&sc->grid);
    if (faults_eta_m)
        memset(faults_eta_m, 0, n * sizeof *faults_eta_m);
    if (sc->n_faults == 0 && (!faults || faults->n == 0))
        return SW_OK;
    sw_fault_set own = { 0 };
    sw_status st = SW_OK;
    if (!faults) {
        st = sw_faults_collect(sc, &own, err);
        faults = &own;
    }
    double *f = faults_eta_m ? faults_eta_m : calloc(n, sizeof *f);
    if (st == SW_OK && !f)
        st = sw_fail(err, SW_ERR_NOMEM, "%s: out of memory for the faults' sea surface on %zu cells", sc->path, n);
    if (st == SW_OK)
        st = sw_faults_surface(faults, SW_FAULTS_INSTANT, &sc->grid, depth_m, min_depth_m, f, err);
    for (size_t k = 0; st == SW_OK && k < n; k++)
        eta0_m[k] += f[k];
    if (f != faults_eta_m)
        free(f);
    sw_faults_free(&own);
    return st;
}

sw_status sw_source_build(const sw_scenario *sc, const sw_fault_set *faults, const double *depth_m,
                          double min_depth_m, double *eta0_m, double *faults_eta_m, sw_error *err)
{
    if (!sc || !eta0_m)
        return sw_fail(err, SW_ERR_USAGE, "sw_source_build: no scenario or output");
    if (sc->n_sources > SW_MAX_SOURCES)
        return sw_fail(err, SW_ERR_USAGE, "%s: %zu sources (at most %d)", sc->path, sc->n_sources,
                       SW_MAX_SOURCES);
    const sw_grid *g = &sc->grid;
    size_t n = sw_grid_cells(g);
    for (size_t k = 0; k < n; k++)
        eta0_m[k] = 0.0;

    for (size_t m = 0; m < sc->n_sources; m++) {
        const sw_source_spec *s = &sc->sources[m];
        sw_status st = source_check(sc, s, err);
        if (st != SW_OK)
            return st;
        double a = s->angle_deg * SOURCE_PI / 180.0;
        double ca = cos(a), sa = sin(a);
        if (sw_grid_geographic(g) && s->shape != SW_SOURCE_FILE) {
            if (!(g->radius_m > 0))
                return sw_fail(err, SW_ERR_USAGE, "%s:%d: [source %s]: the geographic grid has no sphere radius",
                               sc->path, s->line, s->name);
            source_add_sphere(g, s, ca, sa, eta0_m);
            continue;
        }
        switch (s->shape) {
        case SW_SOURCE_HUMP:
            source_add_ellipse(g, s->x_m, s->y_m, s->amplitude_m, s->radius_m, s->radius_m, 1.0, 0.0,
                               eta0_m);
            break;
        case SW_SOURCE_ELLIPSE:
            source_add_ellipse(g, s->x_m, s->y_m, s->amplitude_m, s->length_m, s->width_m, ca, sa, eta0_m);
            break;
        case SW_SOURCE_PAIR: {
            /* left of the axis is the direction angle + 90 deg: (-sin a, cos a) */
            double h = 0.5 * s->separation_m;
            double trough = s->trough_m != 0.0 ? s->trough_m : s->amplitude_m;  /* 0 = unset */
            source_add_ellipse(g, s->x_m - h * sa, s->y_m + h * ca, s->amplitude_m, s->length_m,
                               s->width_m, ca, sa, eta0_m);
            source_add_ellipse(g, s->x_m + h * sa, s->y_m - h * ca, -trough, s->length_m, s->width_m,
                               ca, sa, eta0_m);
            break;
        }
        case SW_SOURCE_FILE:
            st = source_add_file(sc, s, eta0_m, err);
            if (st != SW_OK)
                return st;
            break;
        default:
            return sw_fail(err, SW_ERR_USAGE, "%s:%d: [source %s]: unknown shape %d", sc->path, s->line,
                           s->name, (int)s->shape);
        }
    }
    return source_add_faults(sc, faults, depth_m, min_depth_m, eta0_m, faults_eta_m, err);
}

/* ---- what each source keeps: its displaced volume asked, on the grid, in the water ------------------ */

/* The integral of |eta| over the plane of analytic source s, m^3 (its shape's own lengths: on a sphere the
 * azimuthal equidistant plane about its centre, whose areas differ from the sphere's by less than
 * (d / R)^2 / 3 at distance d [derived]). Hump and ellipse: |A| pi L W (the Gaussian integral
 * int exp(-x^2) dx = sqrt(pi)). Pair: the along-axis factor L sqrt(pi) times the across-axis integral of
 * |A exp(-((v - h) / W)^2) - T exp(-((v + h) / W)^2)|, by the midpoint rule over h + 8 W either side
 * (8000 points; the tails beyond weigh less than exp(-64)). -1 for a file source. */
static double source_asked(const sw_source_spec *s)
{
    const double sqrt_pi = 1.77245385090551602729;
    switch (s->shape) {
    case SW_SOURCE_HUMP:
        return fabs(s->amplitude_m) * SOURCE_PI * s->radius_m * s->radius_m;
    case SW_SOURCE_ELLIPSE:
        return fabs(s->amplitude_m) * SOURCE_PI * s->length_m * s->width_m;
    case SW_SOURCE_PAIR: {
        const double h = 0.5 * s->separation_m, W = s->width_m;
        const double trough = s->trough_m != 0.0 ? s->trough_m : s->amplitude_m;
        const double a = -h - 8 * W, b = h + 8 * W;
        const size_t n = 8000;
        const double dv = (b - a) / (double)n;
        double sum = 0;
        for (size_t k = 0; k < n; k++) {
            const double v = a + ((double)k + 0.5) * dv, p = (v - h) / W, q = (v + h) / W;
            sum += fabs(s->amplitude_m * exp(-p * p) - trough * exp(-q * q));
        }
        return s->length_m * sqrt_pi * sum * dv;
    }
    default:
        return -1;
    }
}

/* The integrals of |eta| over every cell of g and over its water cells (depth_m >= min_depth_m) into
 * *grid_m3 and *water_m3, a cell weighing dx dy cos(latitude of its centre) (1 on a projected grid). */
static void source_sums(const sw_grid *g, const double *eta, const double *depth_m, double min_depth_m,
                        double *grid_m3, double *water_m3)
{
    double all = 0, water = 0;
    for (size_t j = 0; j < g->ny; j++) {
        const double area = g->dx_m * g->dy_m * sw_grid_cos_lat(g, sw_grid_yc(g, j));
        double ra = 0, rw = 0;
        for (size_t i = 0; i < g->nx; i++) {
            const size_t k = j * g->nx + i;
            ra += fabs(eta[k]);
            if (depth_m[k] >= min_depth_m)
                rw += fabs(eta[k]);
        }
        all += ra * area;
        water += rw * area;
    }
    *grid_m3 = all;
    *water_m3 = water;
}

/* Source s alone into eta (zeroed first): the same shapes and file reading as sw_source_build. */
static sw_status source_alone(const sw_scenario *sc, const sw_source_spec *s, double *eta, sw_error *err)
{
    const sw_grid *g = &sc->grid;
    memset(eta, 0, sw_grid_cells(g) * sizeof *eta);
    sw_status st = source_check(sc, s, err);
    if (st != SW_OK)
        return st;
    const double a = s->angle_deg * SOURCE_PI / 180.0, ca = cos(a), sa = sin(a);
    if (s->shape == SW_SOURCE_FILE)
        return source_add_file(sc, s, eta, err);
    if (sw_grid_geographic(g)) {
        source_add_sphere(g, s, ca, sa, eta);
        return SW_OK;
    }
    const double h = 0.5 * s->separation_m, trough = s->trough_m != 0.0 ? s->trough_m : s->amplitude_m;
    switch (s->shape) {
    case SW_SOURCE_HUMP:
        source_add_ellipse(g, s->x_m, s->y_m, s->amplitude_m, s->radius_m, s->radius_m, 1.0, 0.0, eta);
        break;
    case SW_SOURCE_ELLIPSE:
        source_add_ellipse(g, s->x_m, s->y_m, s->amplitude_m, s->length_m, s->width_m, ca, sa, eta);
        break;
    case SW_SOURCE_PAIR:
        source_add_ellipse(g, s->x_m - h * sa, s->y_m + h * ca, s->amplitude_m, s->length_m, s->width_m, ca, sa, eta);
        source_add_ellipse(g, s->x_m + h * sa, s->y_m - h * ca, -trough, s->length_m, s->width_m, ca, sa, eta);
        break;
    default:
        break;
    }
    return SW_OK;
}

sw_status sw_source_budgets(const sw_scenario *sc, const double *depth_m, double min_depth_m,
                            const double *faults_eta_m, sw_source_budget *out, size_t *n_out, sw_error *err)
{
    *n_out = 0;
    const sw_grid *g = &sc->grid;
    const size_t n = sw_grid_cells(g);
    double *eta = malloc(n * sizeof *eta);
    if (!eta)
        return sw_fail(err, SW_ERR_NOMEM, "%s: out of memory for a source's field on %zu cells", sc->path, n);
    sw_status st = SW_OK;
    for (size_t m = 0; m < sc->n_sources && m < SW_MAX_SOURCES && st == SW_OK; m++) {
        const sw_source_spec *s = &sc->sources[m];
        sw_source_budget *b = &out[*n_out];
        memset(b, 0, sizeof *b);
        snprintf(b->name, sizeof b->name, "%s", s->name);
        b->line = s->line;
        st = source_alone(sc, s, eta, err);
        if (st != SW_OK)
            break;
        source_sums(g, eta, depth_m, min_depth_m, &b->grid_m3, &b->water_m3);
        const double asked = source_asked(s);
        b->asked_known = asked >= 0;
        /* the quadrature can fall a hair short of the grid's sum when all of it is inside */
        b->asked_m3 = asked >= 0 ? fmax(asked, b->grid_m3) : b->grid_m3;
        (*n_out)++;
    }
    if (st == SW_OK && faults_eta_m) {
        sw_source_budget *b = &out[*n_out];
        memset(b, 0, sizeof *b);
        snprintf(b->name, sizeof b->name, "faults");
        source_sums(g, faults_eta_m, depth_m, min_depth_m, &b->grid_m3, &b->water_m3);
        b->asked_m3 = b->grid_m3;
        (*n_out)++;
    }
    free(eta);
    return st;
}

double sw_source_lost_fraction(const sw_source_budget *b)
{
    return b->asked_m3 > 0 ? fmax(0.0, 1.0 - b->water_m3 / b->asked_m3) : 0.0;
}
