/* test_source.c - initial sea-surface displacements, on scenarios filled by hand. */
#include <math.h>
#include <netcdf.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>

#include "inputs/source.h"
#include "testutil.h"

#define NC_OK(call) assert_int_equal((call), NC_NOERR)
#define PI 3.14159265358979323846

/* |got - want| <= tol, reporting both values (this cmocka has no assert_double_equal). */
#define assert_near(got, want, tol) near_check((got), (want), (tol), __FILE__, __LINE__)
static void near_check(double got, double want, double tol, const char *file, int line)
{
    if (!(fabs(got - want) <= tol)) {
        print_error("%.17g != %.17g (tolerance %g)\n", got, want, tol);
        _fail(file, line);
    }
}

/* A zeroed scenario on an n x n grid with dx = dy = d, cell centres at (i d, j d). */
static sw_scenario *new_scenario(size_t n, double d)
{
    sw_scenario *sc = calloc(1, sizeof *sc);
    assert_non_null(sc);
    strcpy(sc->path, "src.scn");
    strcpy(sc->dir, ".");
    sc->has_grid = 1;
    sc->grid = (sw_grid){.nx = n, .ny = n, .dx_m = d, .dy_m = d, .x0_m = -0.5 * d, .y0_m = -0.5 * d};
    return sc;
}

/* Builds the displacement of sc, expecting success; returns it (caller frees). */
static double *build(const sw_scenario *sc)
{
    double *eta = malloc(sw_grid_cells(&sc->grid) * sizeof *eta);
    assert_non_null(eta);
    sw_error err = {0};
    sw_status st = sw_source_build(sc, NULL, NULL, 0.0, eta, NULL, &err);
    if (st != SW_OK)
        print_error("%s\n", err.msg);
    assert_int_equal(st, SW_OK);
    return eta;
}

/* Value at the cell with centre (x, y), which must be a cell centre. */
static double at(const sw_scenario *sc, const double *eta, double x, double y)
{
    size_t i = (size_t)lround(x / sc->grid.dx_m), j = (size_t)lround(y / sc->grid.dy_m);
    assert_true(i < sc->grid.nx && j < sc->grid.ny);
    assert_near(x, (double)i * sc->grid.dx_m, 1e-9);
    assert_near(y, (double)j * sc->grid.dy_m, 1e-9);
    return eta[j * sc->grid.nx + i];
}

static sw_source_spec hump(double x, double y, double amp, double radius)
{
    return (sw_source_spec){.shape = SW_SOURCE_HUMP, .name = "hump", .line = 3, .x_m = x, .y_m = y,
                            .amplitude_m = amp, .radius_m = radius};
}

static sw_source_spec ellipse(double x, double y, double amp, double len, double wid, double ang)
{
    return (sw_source_spec){.shape = SW_SOURCE_ELLIPSE, .name = "ell", .line = 5, .x_m = x, .y_m = y,
                            .amplitude_m = amp, .length_m = len, .width_m = wid, .angle_deg = ang};
}

static sw_source_spec pair(double x, double y, double amp, double trough, double len, double wid,
                           double ang, double sep)
{
    return (sw_source_spec){.shape = SW_SOURCE_PAIR, .name = "pair", .line = 8, .x_m = x, .y_m = y,
                            .amplitude_m = amp, .trough_m = trough, .length_m = len, .width_m = wid,
                            .angle_deg = ang, .separation_m = sep};
}

/* Hump: amplitude at the centre, amplitude/e at r = radius. Reference: definition of the
 * e-folding radius, exp(-r^2/R^2) = exp(-1) at r = R. */
static void test_hump_centre_and_efolding(void **state)
{
    (void)state;
    sw_scenario *sc = new_scenario(21, 500.0);
    sc->n_sources = 1;
    sc->sources[0] = hump(5000.0, 5000.0, 2.5, 1500.0);
    double *eta = build(sc);
    assert_near(at(sc, eta, 5000.0, 5000.0), 2.5, 1e-15);
    assert_near(at(sc, eta, 6500.0, 5000.0), 2.5 / exp(1.0), 1e-14);
    assert_near(at(sc, eta, 5000.0, 3500.0), 2.5 / exp(1.0), 1e-14);
    assert_near(at(sc, eta, 4000.0, 6000.0), 2.5 * exp(-2.0e6 / 2.25e6), 1e-14);
    free(eta);
    free(sc);
}

/* Ellipse: rotating by 90 degrees equals swapping length and width; at 45 degrees the e-folding
 * points lie on the diagonals. Reference: rotation of coordinates, u = x cos a + y sin a,
 * v = -x sin a + y cos a. */
static void test_ellipse_rotation(void **state)
{
    (void)state;
    sw_scenario *a = new_scenario(41, 250.0), *b = new_scenario(41, 250.0);
    a->n_sources = b->n_sources = 1;
    a->sources[0] = ellipse(5000.0, 5000.0, -1.5, 3000.0, 1000.0, 90.0);
    b->sources[0] = ellipse(5000.0, 5000.0, -1.5, 1000.0, 3000.0, 0.0);
    double *ea = build(a), *eb = build(b);
    for (size_t k = 0; k < 41 * 41; k++)
        assert_near(ea[k], eb[k], 1e-12);
    assert_true(at(a, ea, 5000.0, 7000.0) < at(a, ea, 7000.0, 5000.0));   /* long axis north */
    free(ea);
    free(eb);

    a->sources[0] = ellipse(5000.0, 5000.0, 1.0, 1000.0 * sqrt(2.0), 500.0 * sqrt(2.0), 45.0);
    ea = build(a);
    assert_near(at(a, ea, 6000.0, 6000.0), exp(-1.0), 1e-12);   /* along: u = L */
    assert_near(at(a, ea, 4000.0, 6000.0), exp(-4.0), 1e-12);   /* across: v = 2 W */
    free(ea);
    free(a);
    free(b);
}

/* Pair: the midpoint sum of eta dx dy equals amplitude pi L W - trough pi L W. Reference: the
 * Gaussian integral, integral of exp(-(x/a)^2 - (y/b)^2) over the plane = pi a b (the midpoint rule
 * on a grid of spacing a/16 is accurate to far below the tolerance for a Gaussian). The uplift
 * lobe lies to the left of `angle` (direction angle + 90 degrees). */
static void test_pair_integral_and_sides(void **state)
{
    (void)state;
    const double L = 4000.0, W = 2000.0, A = 3.0, T = 1.0, sep = 6000.0, ang = 30.0;
    const double d = 125.0;
    sw_scenario *sc = new_scenario(641, d);   /* centres 0 .. 80 km */
    sc->n_sources = 1;
    sc->sources[0] = pair(40000.0, 40000.0, A, T, L, W, ang, sep);
    double *eta = build(sc);
    double sum = 0.0;
    size_t imax = 0, imin = 0;
    for (size_t k = 0; k < 641 * 641; k++) {
        sum += eta[k];
        imax = eta[k] > eta[imax] ? k : imax;
        imin = eta[k] < eta[imin] ? k : imin;
    }
    assert_near(sum * d * d, (A - T) * PI * L * W, 1e-9 * A * PI * L * W);

    /* the crest sits sep/2 towards angle + 90 deg: (-sin 30, cos 30) */
    double a = ang * PI / 180.0;
    double ux = 40000.0 - 0.5 * sep * sin(a), uy = 40000.0 + 0.5 * sep * cos(a);
    double sx = 40000.0 + 0.5 * sep * sin(a), sy = 40000.0 - 0.5 * sep * cos(a);
    double mx = (double)(imax % 641) * d, my = (double)(imax / 641) * d;
    double nx = (double)(imin % 641) * d, ny = (double)(imin / 641) * d;
    assert_true(hypot(mx - ux, my - uy) <= 1.5 * d);
    assert_true(hypot(nx - sx, ny - sy) <= 1.5 * d);
    assert_near(eta[imax], A, 0.01 * A);
    assert_near(eta[imin], -T, 0.01 * A);
    free(eta);

    /* angle 0 (axis east): uplift north, subsidence south; trough 0 = unset = amplitude */
    sc->sources[0] = pair(40000.0, 40000.0, 2.0, 0.0, L, W, 0.0, sep);
    eta = build(sc);
    assert_near(at(sc, eta, 40000.0, 43000.0), 2.0, 1e-3);
    assert_near(at(sc, eta, 40000.0, 37000.0), -2.0, 1e-3);
    free(eta);
    free(sc);
}

/* Writes `eta` on centres x = x0 + i d, y = y0 + j d with values val = 1 + i + 10 j. */
static void write_eta(const char *path, size_t nx, size_t ny, double x0, double y0, double d, int nan_at)
{
    int ncid, dim[2], vy, vx, vv;
    NC_OK(nc_create(path, NC_CLOBBER, &ncid));
    NC_OK(nc_def_dim(ncid, "y", ny, &dim[0]));
    NC_OK(nc_def_dim(ncid, "x", nx, &dim[1]));
    NC_OK(nc_def_var(ncid, "y", NC_DOUBLE, 1, &dim[0], &vy));
    NC_OK(nc_def_var(ncid, "x", NC_DOUBLE, 1, &dim[1], &vx));
    NC_OK(nc_def_var(ncid, "eta", NC_DOUBLE, 2, dim, &vv));
    NC_OK(nc_enddef(ncid));
    double cx[64], cy[64], v[64 * 64];
    assert_true(nx <= 64 && ny <= 64);
    for (size_t i = 0; i < nx; i++)
        cx[i] = x0 + d * (double)i;
    for (size_t j = 0; j < ny; j++)
        cy[j] = y0 + d * (double)j;
    for (size_t k = 0; k < nx * ny; k++)
        v[k] = 1.0 + (double)(k % nx) + 10.0 * (double)(k / nx);
    if (nan_at >= 0)
        v[nan_at] = NAN;
    NC_OK(nc_put_var_double(ncid, vx, cx));
    NC_OK(nc_put_var_double(ncid, vy, cy));
    NC_OK(nc_put_var_double(ncid, vv, v));
    NC_OK(nc_close(ncid));
}

/* File sources are 0 outside the file; all sources add up. Reference: superposition (the sum of
 * the sources built one at a time) and the values written to the file. */
static void test_sum_and_file_source(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_eta.nc");
    write_eta(path, 5, 4, 2000.0, 1000.0, 500.0, -1);   /* centres x 2000..4000, y 1000..2500 */

    sw_scenario *sc = new_scenario(21, 500.0);
    sw_source_spec file = {.shape = SW_SOURCE_FILE, .name = "scan", .line = 12};
    strcpy(file.file, path);
    sc->n_sources = 1;
    sc->sources[0] = file;
    double *ef = build(sc);
    for (size_t j = 0; j < 21; j++)
        for (size_t i = 0; i < 21; i++) {
            int in = i >= 4 && i <= 8 && j >= 2 && j <= 5;
            double want = in ? 1.0 + (double)(i - 4) + 10.0 * (double)(j - 2) : 0.0;
            assert_near(ef[j * 21 + i], want, 1e-12);
        }

    /* scale and offsets (for sweeps): the field times the scale, moved by the offsets (here 2 cells east and
     * 1 cell south, on the file's own points, so the values are the file's exactly) */
    sc->sources[0].scale = -2.0;
    sc->sources[0].x_offset_m = 1000.0;
    sc->sources[0].y_offset_m = -500.0;
    double *em = build(sc);
    for (size_t j = 0; j < 21; j++)
        for (size_t i = 0; i < 21; i++) {
            int in = i >= 6 && i <= 10 && j + 1 >= 2 && j + 1 <= 5;
            double want = in ? -2.0 * (1.0 + (double)(i - 6) + 10.0 * (double)(j + 1 - 2)) : 0.0;
            assert_near(em[j * 21 + i], want, 1e-12);
        }
    free(em);
    sc->sources[0] = file;

    sc->sources[0] = hump(3000.0, 4000.0, 0.7, 2000.0);
    double *eh = build(sc);
    sc->sources[0] = pair(6000.0, 5000.0, 1.0, 0.4, 2500.0, 1000.0, 120.0, 2000.0);
    double *ep = build(sc);
    sc->n_sources = 3;
    sc->sources[0] = hump(3000.0, 4000.0, 0.7, 2000.0);
    sc->sources[1] = file;
    sc->sources[2] = pair(6000.0, 5000.0, 1.0, 0.4, 2500.0, 1000.0, 120.0, 2000.0);
    double *all = build(sc);
    for (size_t k = 0; k < 21 * 21; k++)
        assert_near(all[k], eh[k] + ef[k] + ep[k], 1e-12);
    free(ef);
    free(eh);
    free(ep);
    free(all);

    /* NaN in the file: error naming the index, the source and its line */
    write_eta(path, 5, 4, 2000.0, 1000.0, 500.0, 2 * 5 + 1);
    double eta[21 * 21];
    sw_error err = {0};
    assert_int_equal(sw_source_build(sc, NULL, NULL, 0.0, eta, NULL, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "eta[2][1]"));
    assert_non_null(strstr(err.msg, "src.scn:12: [source scan]"));
    assert_non_null(strstr(err.msg, path));

    /* a missing file, relative to the scenario's folder */
    strcpy(sc->sources[1].file, "missing_eta.nc");
    strcpy(sc->dir, "/nonexistent");
    assert_int_equal(sw_source_build(sc, NULL, NULL, 0.0, eta, NULL, &err), SW_ERR_IO);
    assert_non_null(strstr(err.msg, "/nonexistent/missing_eta.nc"));
    free(sc);
}

/* ---- geographic grids ------------------------------------------------------------------------ */

#define R_EARTH 6371000.0   /* the mean Earth radius (IUGG) [memory], the default sphere */

/* A geographic grid of nx x ny cells, dlambda_deg wide and dy_m high, whose cell (ic, jc) has its centre at
 * longitude lon_deg, latitude lat_deg. */
static sw_scenario *new_sphere(size_t nx, size_t ny, double dlambda_deg, double dy_m, size_t ic, size_t jc,
                               double lon_deg, double lat_deg)
{
    sw_scenario *sc = calloc(1, sizeof *sc);
    assert_non_null(sc);
    strcpy(sc->path, "geo.scn");
    strcpy(sc->dir, ".");
    sc->has_grid = 1;
    const double dx = R_EARTH * (dlambda_deg * PI / 180);
    sc->grid = (sw_grid){.nx = nx, .ny = ny, .dx_m = dx, .dy_m = dy_m, .kind = SW_GRID_GEOGRAPHIC,
                         .radius_m = R_EARTH, .x0_m = R_EARTH * (lon_deg * PI / 180) - ((double)ic + 0.5) * dx,
                         .y0_m = R_EARTH * (lat_deg * PI / 180) - ((double)jc + 0.5) * dy_m};
    return sc;
}

/* A hump at 60 N is round in true metres: the cell 4 columns east of its centre and the cell one row north
 * lie at the same great-circle distance d (the row height is chosen so), and get the same elevation,
 * A exp(-d^2 / r^2), as do the cells west and south. d east along the parallel from the haversine formula
 * with dphi = 0, d = 2 R asin(cos(phi) sin(dlambda / 2)) (Sinnott 1984 [memory]); d north = R dphi, the
 * row height [derived]. A plane metric (dx cos(phi)) would differ by about dlambda^2 / 24, some 1e-8 here. */
static void test_hump_round_on_the_sphere(void **state)
{
    (void)state;
    const double phi = 60 * PI / 180, dl = 0.1 * PI / 180;
    const double d = 2 * R_EARTH * asin(cos(phi) * sin(4 * dl / 2));
    sw_scenario *sc = new_sphere(21, 11, 0.1, d, 10, 5, 175.0, 60.0);
    sc->n_sources = 1;
    sc->sources[0] = hump(sw_grid_xc(&sc->grid, 10), sw_grid_yc(&sc->grid, 5), 1.5, 50000.0);
    double *eta = build(sc);
    const size_t nx = sc->grid.nx;
    const double centre = eta[5 * nx + 10], east = eta[5 * nx + 14], west = eta[5 * nx + 6];
    const double north = eta[6 * nx + 10], south = eta[4 * nx + 10];
    assert_near(centre, 1.5, 1e-15);
    const double want = 1.5 * exp(-(d * d) / (50000.0 * 50000.0));
    assert_near(east / want, 1.0, 1e-12);
    assert_near(north / east, 1.0, 1e-12);
    assert_near(west / east, 1.0, 1e-12);
    assert_near(south / north, 1.0, 1e-12);
    /* and not what the plane along the parallel would give (R dlambda cos(phi) is longer than d) */
    const double plane = R_EARTH * 4 * dl * cos(phi);
    assert_true(fabs(1.5 * exp(-(plane * plane) / (50000.0 * 50000.0)) / east - 1) > 1e-9);
    free(eta);
    free(sc);
}

/* Shapes on the sphere against the azimuthal equidistant plane computed independently: for each cell the
 * great-circle distance from Vincenty's form for a sphere, d = R atan2(sqrt((cos p2 sin dl)^2 + (cos p1 sin
 * p2 - sin p1 cos p2 cos dl)^2), sin p1 sin p2 + cos p1 cos p2 cos dl) [memory], and the bearing b = atan2(cos p2
 * sin dl, cos p1 sin p2 - sin p1 cos p2 cos dl) from north [memory]; the ellipse and pair formulas of
 * docs/scenario.md in (d sin b, d cos b). Also the ellipse's e-folding point straight along its axis when
 * the axis points north: at true distance L on the meridian (angle 90). */
static void test_shapes_on_the_sphere(void **state)
{
    (void)state;
    sw_scenario *sc = new_sphere(61, 41, 0.05, 2000.0, 30, 20, -170.0, -42.0);
    const double xc = sw_grid_xc(&sc->grid, 30), yc = sw_grid_yc(&sc->grid, 20);
    sc->n_sources = 2;
    sc->sources[0] = ellipse(xc, yc, 0.8, 30000.0, 12000.0, 30.0);
    sc->sources[1] = pair(xc + 3000, yc - 5000, 1.0, 0.6, 15000.0, 6000.0, 120.0, 9000.0);
    double *eta = build(sc);
    const sw_grid *g = &sc->grid;
    for (size_t j = 0; j < g->ny; j++)
        for (size_t i = 0; i < g->nx; i++) {
            double want = 0;
            for (size_t q = 0; q < 2; q++) {
                const sw_source_spec *s = &sc->sources[q];
                const double p1 = s->y_m / R_EARTH, p2 = sw_grid_yc(g, j) / R_EARTH;
                const double dl = (sw_grid_xc(g, i) - s->x_m) / R_EARTH;
                const double e = cos(p2) * sin(dl), n = cos(p1) * sin(p2) - sin(p1) * cos(p2) * cos(dl);
                const double dist = R_EARTH * atan2(hypot(e, n), sin(p1) * sin(p2) + cos(p1) * cos(p2) * cos(dl));
                const double b = atan2(e, n), ex = dist * sin(b), ey = dist * cos(b);
                const double a = s->angle_deg * PI / 180, ca = cos(a), sa = sin(a);
                if (s->shape == SW_SOURCE_ELLIPSE) {
                    const double u = (ex * ca + ey * sa) / s->length_m, v = (-ex * sa + ey * ca) / s->width_m;
                    want += s->amplitude_m * exp(-u * u - v * v);
                } else {   /* uplift centred separation/2 to the left of the axis, (-sin a, cos a), trough right */
                    const double h = s->separation_m / 2;
                    for (int left = -1; left <= 1; left += 2) {
                        const double px = ex + left * h * sa, py = ey - left * h * ca;
                        const double u = (px * ca + py * sa) / s->length_m, v = (-px * sa + py * ca) / s->width_m;
                        want += (left > 0 ? s->amplitude_m : -s->trough_m) * exp(-u * u - v * v);
                    }
                }
            }
            assert_near(eta[j * g->nx + i], want, 1e-11);
        }
    free(eta);

    /* the axis pointing north: e-folding at true distance L along the meridian */
    sc->n_sources = 1;
    sc->sources[0] = ellipse(xc, yc, 1.0, 4 * 2000.0, 500.0, 90.0);
    eta = build(sc);
    assert_near(eta[24 * g->nx + 30], exp(-1.0), 1e-12);
    assert_near(eta[16 * g->nx + 30], exp(-1.0), 1e-12);
    free(eta);
    free(sc);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_hump_centre_and_efolding),
        cmocka_unit_test(test_ellipse_rotation),
        cmocka_unit_test(test_pair_integral_and_sides),
        cmocka_unit_test(test_sum_and_file_source),
        cmocka_unit_test(test_hump_round_on_the_sphere),
        cmocka_unit_test(test_shapes_on_the_sphere),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
