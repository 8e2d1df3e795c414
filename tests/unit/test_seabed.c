/* test_seabed.c - the seabed recipe and seabed files, on scenarios filled by hand. */
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

#include "inputs/seabed.h"
#include "testutil.h"

#define NC_OK(call) assert_int_equal((call), NC_NOERR)

/* |got - want| <= tol, reporting both values (this cmocka has no assert_double_equal). */
#define assert_near(got, want, tol) near_check((got), (want), (tol), __FILE__, __LINE__)
static void near_check(double got, double want, double tol, const char *file, int line)
{
    if (!(fabs(got - want) <= tol)) {
        print_error("%.17g != %.17g (tolerance %g)\n", got, want, tol);
        _fail(file, line);
    }
}

/* A zeroed scenario on an nx x ny grid with dx = dy = d, cell centres at (i d, j d). */
static sw_scenario *new_scenario(size_t nx, size_t ny, double d)
{
    sw_scenario *sc = calloc(1, sizeof *sc);
    assert_non_null(sc);
    strcpy(sc->path, "test.scn");
    strcpy(sc->dir, ".");
    sc->has_grid = 1;
    sc->grid = (sw_grid){.nx = nx, .ny = ny, .dx_m = d, .dy_m = d, .x0_m = -0.5 * d, .y0_m = -0.5 * d};
    return sc;
}

/* Builds the seabed of sc, expecting success; returns the depths (caller frees). */
static double *build(const sw_scenario *sc)
{
    double *depth = malloc(sw_grid_cells(&sc->grid) * sizeof *depth);
    assert_non_null(depth);
    sw_error err = {0};
    sw_status st = sw_seabed_build(sc, depth, &err);
    if (st != SW_OK)
        print_error("%s\n", err.msg);
    assert_int_equal(st, SW_OK);
    return depth;
}

/* Depth of the cell whose centre is at (x, y) (a multiple of the spacing, see new_scenario). */
static double at(const sw_scenario *sc, const double *depth, double x, double y)
{
    size_t i = (size_t)lround(x / sc->grid.dx_m), j = (size_t)lround(y / sc->grid.dy_m);
    assert_true(i < sc->grid.nx && j < sc->grid.ny);
    assert_near(x, (double)i * sc->grid.dx_m, 1e-9);   /* the test asks for a cell centre */
    assert_near(y, (double)j * sc->grid.dy_m, 1e-9);
    return depth[j * sc->grid.nx + i];
}

/* coast = none: flat at `deep`. Reference: docs/scenario.md, "With coast = none the floor is flat". */
static void test_flat_floor(void **state)
{
    (void)state;
    sw_scenario *sc = new_scenario(5, 4, 1000.0);
    sc->deep_m = 4000.0;
    double *d = build(sc);
    for (size_t k = 0; k < 20; k++)
        assert_near(d[k], 4000.0, 0.0);
    free(d);
    free(sc);
}

/* The profile across the coast at chosen distances s seaward of the shoreline, for every side.
 * Reference: docs/scenario.md: shelf_depth * s / shelf_width on the shelf (land down to
 * -land_height), shelf + (deep - shelf)(1 - cos(pi t))/2 on the slope; at t = 1/2 cos = 0, so
 * mid-slope is the mean of shelf and deep. Values here are worked by hand. */
static void test_shelf_profile_every_side(void **state)
{
    (void)state;
    static const struct { double s, depth; } pts[] = {
        {-50000.0, -50.0},    /* far inland: clipped at -land_height */
        {-5000.0, -25.0},     /* on land: the shelf line continued */
        {0.0, 0.0},           /* shoreline */
        {10000.0, 50.0},      /* mid-shelf */
        {20000.0, 100.0},     /* shelf break */
        {23000.0, 100.0 + 900.0 * 0.29289321881345248 / 2.0},  /* t = 1/4: 1 - cos(pi/4) = 1 - sqrt(2)/2 */
        {26000.0, 550.0},     /* mid-slope = (100 + 1000) / 2 */
        {32000.0, 1000.0},    /* foot of the slope */
        {45000.0, 1000.0},    /* deep */
    };
    static const sw_coast_side sides[] = {SW_COAST_WEST, SW_COAST_EAST, SW_COAST_SOUTH, SW_COAST_NORTH};
    for (size_t k = 0; k < 4; k++) {
        sw_coast_side side = sides[k];
        int across_x = side == SW_COAST_WEST || side == SW_COAST_EAST;
        sw_scenario *sc = across_x ? new_scenario(121, 3, 1000.0) : new_scenario(3, 121, 1000.0);
        sc->deep_m = 1000.0;
        sc->coast = side;
        sc->shoreline_m = 60000.0;
        sc->shelf_depth_m = 100.0;
        sc->shelf_width_m = 20000.0;
        sc->slope_width_m = 12000.0;
        sc->land_height_m = 50.0;
        sc->coast_wavelength_m = 50000.0;
        double *d = build(sc);
        int seaward_up = side == SW_COAST_WEST || side == SW_COAST_SOUTH;
        for (size_t p = 0; p < sizeof pts / sizeof pts[0]; p++) {
            double c = 60000.0 + (seaward_up ? pts[p].s : -pts[p].s);
            for (double a = 0.0; a <= 2000.0; a += 1000.0) {
                double got = across_x ? at(sc, d, c, a) : at(sc, d, a, c);
                assert_near(got, pts[p].depth, 1e-9);
            }
        }
        free(d);
        free(sc);
    }
}

/* A sinusoidal wiggle moves the shoreline along the coast. Reference: shoreline + w sin(2 pi y / L)
 * (seabed.c's stated phase): at y = L/4 the shoreline sits at +w, at y = 3L/4 at -w. */
static void test_wiggle_moves_shoreline(void **state)
{
    (void)state;
    sw_scenario *sc = new_scenario(101, 41, 1000.0);
    sc->deep_m = 1000.0;
    sc->coast = SW_COAST_WEST;
    sc->shoreline_m = 60000.0;
    sc->shelf_depth_m = 100.0;
    sc->shelf_width_m = 20000.0;
    sc->land_height_m = 50.0;
    sc->coast_wiggle_m = 3000.0;
    sc->coast_wavelength_m = 40000.0;
    double *d = build(sc);
    assert_near(at(sc, d, 63000.0, 10000.0), 0.0, 1e-9);     /* shoreline at 63 km */
    assert_near(at(sc, d, 63000.0, 30000.0), 30.0, 1e-9);    /* shoreline at 57 km: s = 6 km */
    assert_near(at(sc, d, 60000.0, 0.0), 0.0, 1e-9);         /* sin 0 = 0: the mean shoreline */
    assert_true(at(sc, d, 61000.0, 10000.0) < 0.0);          /* land where the coast bulges */
    free(d);
    free(sc);
}

/* An island on a flat floor reaches its height; a shoal its crest. Reference: the docs' bumps
 * with exp(0) = 1 at the centre and exp(-1) = 1/e at r = radius. */
static void test_island_and_shoal_on_flat_floor(void **state)
{
    (void)state;
    sw_scenario *sc = new_scenario(41, 21, 1000.0);
    sc->deep_m = 100.0;
    sc->n_features = 2;
    sc->features[0] = (sw_feature){.kind = SW_FEATURE_ISLAND, .name = "Gull Rock", .line = 9,
                                   .x_m = 10000.0, .y_m = 10000.0, .radius_x_m = 2000.0,
                                   .radius_y_m = 2000.0, .height_m = 20.0};
    sc->features[1] = (sw_feature){.kind = SW_FEATURE_SHOAL, .name = "Bank", .line = 15,
                                   .x_m = 30000.0, .y_m = 10000.0, .radius_x_m = 3000.0,
                                   .radius_y_m = 3000.0, .crest_m = 10.0};
    double *d = build(sc);
    assert_near(at(sc, d, 10000.0, 10000.0), -20.0, 1e-9);                  /* summit elevation */
    assert_near(at(sc, d, 12000.0, 10000.0), 100.0 - 120.0 / exp(1.0), 1e-9);   /* r = radius */
    assert_near(at(sc, d, 30000.0, 10000.0), 10.0, 1e-9);                   /* crest depth */
    assert_near(at(sc, d, 30000.0, 13000.0), 100.0 - 90.0 / exp(1.0), 1e-9);
    free(d);
    free(sc);
}

/* "Depth at the centre" is the field as built so far, evaluated at the exact centre (here off any
 * cell centre, on a sloping floor, over an earlier shoal). Reference: docs/scenario.md feature
 * formulas, evaluated by hand below in file order. */
static void test_features_use_analytic_centre_depth(void **state)
{
    (void)state;
    sw_scenario *sc = new_scenario(81, 21, 1000.0);
    sc->deep_m = 100.0;
    sc->coast = SW_COAST_WEST;   /* sloping floor: depth = x / 1000 for 0 <= x <= 100 km */
    sc->shoreline_m = 0.0;
    sc->shelf_depth_m = 100.0;
    sc->shelf_width_m = 100000.0;
    sc->land_height_m = 10.0;
    sc->n_features = 2;
    sc->features[0] = (sw_feature){.kind = SW_FEATURE_SHOAL, .x_m = 40000.0, .y_m = 7000.0,
                                   .radius_x_m = 5000.0, .radius_y_m = 5000.0, .crest_m = 5.0};
    sc->features[1] = (sw_feature){.kind = SW_FEATURE_ISLAND, .x_m = 40250.0, .y_m = 7300.0,
                                   .radius_x_m = 3000.0, .radius_y_m = 3000.0, .height_m = 15.0};
    double *d = build(sc);
    /* shoal amplitude: base at its centre (40) minus crest */
    double a_shoal = 40.0 - 5.0;
    double r2s = 250.0 * 250.0 + 300.0 * 300.0;
    double centre_island = 40.25 - a_shoal * exp(-r2s / (5000.0 * 5000.0));
    double a_island = centre_island + 15.0;
    for (size_t j = 0; j < 21; j++)
        for (size_t i = 30; i < 51; i++) {
            double x = 1000.0 * (double)i, y = 1000.0 * (double)j;
            double want = x / 1000.0;
            want -= a_shoal * exp(-((x - 40000.0) * (x - 40000.0) + (y - 7000.0) * (y - 7000.0)) / 25e6);
            want -= a_island * exp(-((x - 40250.0) * (x - 40250.0) + (y - 7300.0) * (y - 7300.0)) / 9e6);
            assert_near(d[j * 81 + i], want, 1e-9);
        }
    free(d);
    free(sc);
}

/* A bay cuts water into land: inside the ellipse depth >= depth (1 - r^2); outside unchanged.
 * Reference: docs/scenario.md [bay]; values worked by hand (shelf 100 m over 20 km: 5 mm per m). */
static void test_bay_makes_land_water(void **state)
{
    (void)state;
    sw_scenario *sc = new_scenario(41, 21, 1000.0);
    sc->deep_m = 100.0;
    sc->coast = SW_COAST_WEST;
    sc->shoreline_m = 20000.0;
    sc->shelf_depth_m = 100.0;
    sc->shelf_width_m = 20000.0;
    sc->land_height_m = 50.0;
    sc->n_features = 1;
    sc->features[0] = (sw_feature){.kind = SW_FEATURE_BAY, .name = "Harrow", .x_m = 15000.0,
                                   .y_m = 10000.0, .radius_x_m = 8000.0, .radius_y_m = 2000.0,
                                   .depth_m = 12.0};
    double *d = build(sc);
    assert_near(at(sc, d, 15000.0, 10000.0), 12.0, 1e-9);                 /* was -25: land */
    assert_near(at(sc, d, 19000.0, 10000.0), 12.0 * (1.0 - 0.25), 1e-9);  /* r^2 = 1/4, was -5 */
    assert_near(at(sc, d, 15000.0, 11000.0), 12.0 * (1.0 - 0.25), 1e-9);
    assert_near(at(sc, d, 15000.0, 13000.0), -25.0, 1e-9);                /* outside: land */
    assert_near(at(sc, d, 22000.0, 10000.0), 10.0, 1e-9);                 /* deeper water kept */
    assert_near(at(sc, d, 5000.0, 10000.0), -50.0, 1e-9);                 /* far inland */
    free(d);
    free(sc);
}

/* Writes a 2D variable `var` (x, y in m) with centres (i d, j d) and values val(i, j). */
static void write_bed(const char *path, const char *var, size_t nx, size_t ny, double d,
                      const char *positive)
{
    int ncid, dim[2], vy, vx, vv;
    NC_OK(nc_create(path, NC_CLOBBER, &ncid));
    NC_OK(nc_def_dim(ncid, "y", ny, &dim[0]));
    NC_OK(nc_def_dim(ncid, "x", nx, &dim[1]));
    NC_OK(nc_def_var(ncid, "y", NC_DOUBLE, 1, &dim[0], &vy));
    NC_OK(nc_def_var(ncid, "x", NC_DOUBLE, 1, &dim[1], &vx));
    NC_OK(nc_def_var(ncid, var, NC_DOUBLE, 2, dim, &vv));
    NC_OK(nc_put_att_text(ncid, vx, "units", 1, "m"));
    NC_OK(nc_put_att_text(ncid, vy, "units", 1, "m"));
    if (positive)
        NC_OK(nc_put_att_text(ncid, vv, "positive", strlen(positive), positive));
    NC_OK(nc_enddef(ncid));
    double *c = malloc((nx > ny ? nx : ny) * sizeof *c), *v = malloc(nx * ny * sizeof *v);
    assert_non_null(c);
    assert_non_null(v);
    for (size_t i = 0; i < nx; i++)
        c[i] = d * (double)i;
    NC_OK(nc_put_var_double(ncid, vx, c));
    for (size_t j = 0; j < ny; j++)
        c[j] = d * (double)j;
    NC_OK(nc_put_var_double(ncid, vy, c));
    for (size_t j = 0; j < ny; j++)
        for (size_t i = 0; i < nx; i++)
            v[j * nx + i] = 10.0 * (double)i + (double)j - 3.0;
    NC_OK(nc_put_var_double(ncid, vv, v));
    NC_OK(nc_close(ncid));
    free(c);
    free(v);
}

/* Seabed files: the grid is taken from the file; the sign follows `positive` (scenario first, then
 * the attribute); without either the error says what to add. Reference: the values written. */
static void test_seabed_file_sign_and_grid(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_bed_up.nc");
    write_bed(path, "elev", 6, 4, 250.0, "up");

    sw_scenario *sc = calloc(1, sizeof *sc);
    assert_non_null(sc);
    strcpy(sc->path, "bed.scn");
    /* a relative file name resolves against sc->dir */
    char *slash = strrchr(path, '/');
    assert_non_null(slash);
    memcpy(sc->dir, path, (size_t)(slash - path));
    strcpy(sc->bed_file, slash + 1);
    strcpy(sc->bed_variable, "elev");
    sc->bed_line = 7;
    sw_error err = {0};
    assert_int_equal(sw_seabed_grid(sc, &err), SW_OK);
    assert_int_equal(sc->has_grid, 1);
    assert_int_equal(sc->grid.nx, 6);
    assert_int_equal(sc->grid.ny, 4);
    assert_near(sc->grid.dx_m, 250.0, 0.0);
    assert_near(sc->grid.x0_m, -125.0, 0.0);
    assert_near(sc->grid.y0_m, -125.0, 0.0);

    double *d = build(sc);   /* positive up: depth = -elevation */
    for (size_t j = 0; j < 4; j++)
        for (size_t i = 0; i < 6; i++)
            assert_near(d[j * 6 + i], -(10.0 * (double)i + (double)j - 3.0), 0.0);
    free(d);

    sc->bed_positive = SW_POSITIVE_DOWN;   /* the scenario overrides the attribute */
    d = build(sc);
    assert_near(d[2 * 6 + 5], 10.0 * 5.0 + 2.0 - 3.0, 0.0);
    free(d);

    /* no attribute and no scenario setting */
    tu_tmp_path(path, sizeof path, "inputs_bed_nosign.nc");
    write_bed(path, "elev", 6, 4, 250.0, NULL);
    strcpy(sc->bed_file, path);   /* absolute: used as is */
    sc->bed_positive = SW_POSITIVE_UNSET;
    double depth[24];
    assert_int_equal(sw_seabed_build(sc, depth, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, path));
    assert_non_null(strstr(err.msg, "bed.scn:7"));
    assert_non_null(strstr(err.msg, "positive = down"));
    assert_non_null(strstr(err.msg, "[seabed]"));
    sc->bed_positive = SW_POSITIVE_UP;
    assert_int_equal(sw_seabed_build(sc, depth, &err), SW_OK);

    /* a grid reaching beyond the file is an error for the seabed */
    sc->grid.nx = 8;
    double big[32];
    assert_int_equal(sw_seabed_build(sc, big, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "does not cover"));

    /* has_grid: the scenario's grid is kept */
    sc->grid.nx = 3;
    assert_int_equal(sw_seabed_grid(sc, &err), SW_OK);
    assert_int_equal(sc->grid.nx, 3);

    /* a missing file names it, with the scenario line */
    strcpy(sc->bed_file, "no_such_bed.nc");
    strcpy(sc->dir, "/nonexistent");
    sc->has_grid = 0;
    assert_int_equal(sw_seabed_grid(sc, &err), SW_ERR_IO);
    assert_non_null(strstr(err.msg, "/nonexistent/no_such_bed.nc"));
    assert_non_null(strstr(err.msg, "bed.scn:7"));
    free(sc);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_flat_floor),
        cmocka_unit_test(test_shelf_profile_every_side),
        cmocka_unit_test(test_wiggle_moves_shoreline),
        cmocka_unit_test(test_island_and_shoal_on_flat_floor),
        cmocka_unit_test(test_features_use_analytic_centre_depth),
        cmocka_unit_test(test_bay_makes_land_water),
        cmocka_unit_test(test_seabed_file_sign_and_grid),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
