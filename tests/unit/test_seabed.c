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
    sc->features[0] = (sw_feature){.kind = SW_FEATURE_ISLAND, .name = "Pellquin Rock", .line = 9,
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

/* ---- land from missing values and masks, refined grids, geographic grids -------------------------------- */

#define T_PI 3.14159265358979323846

/* A seabed file for the land tests: `var` (and an optional byte mask `mask`) on axes y, x (metres, or lat, lon
 * in degrees when geo), centres first + k step. */
typedef struct {
    size_t nx, ny;
    double x0, dx, y0, dy;   /* first centres and spacings, m or deg */
    int geo;
    const char *positive;    /* NULL = no attribute */
    int has_fill;
    double fill;
    const char *mask;        /* NULL = none */
} bed_spec;

static void write_bed2(const char *path, const char *var, const bed_spec *b, const double *v, const double *mask)
{
    int ncid, dim[2], vy, vx, vv, vm;
    NC_OK(nc_create(path, NC_CLOBBER | NC_NETCDF4, &ncid));
    NC_OK(nc_def_dim(ncid, b->geo ? "lat" : "y", b->ny, &dim[0]));
    NC_OK(nc_def_dim(ncid, b->geo ? "lon" : "x", b->nx, &dim[1]));
    NC_OK(nc_def_var(ncid, b->geo ? "lat" : "y", NC_DOUBLE, 1, &dim[0], &vy));
    NC_OK(nc_def_var(ncid, b->geo ? "lon" : "x", NC_DOUBLE, 1, &dim[1], &vx));
    NC_OK(nc_def_var(ncid, var, NC_DOUBLE, 2, dim, &vv));
    const char *ux = b->geo ? "degrees_east" : "m", *uy = b->geo ? "degrees_north" : "m";
    NC_OK(nc_put_att_text(ncid, vx, "units", strlen(ux), ux));
    NC_OK(nc_put_att_text(ncid, vy, "units", strlen(uy), uy));
    if (b->positive)
        NC_OK(nc_put_att_text(ncid, vv, "positive", strlen(b->positive), b->positive));
    if (b->has_fill)
        NC_OK(nc_put_att_double(ncid, vv, "_FillValue", NC_DOUBLE, 1, &b->fill));
    if (b->mask)
        NC_OK(nc_def_var(ncid, b->mask, NC_BYTE, 2, dim, &vm));
    NC_OK(nc_enddef(ncid));
    double *c = malloc((b->nx > b->ny ? b->nx : b->ny) * sizeof *c);
    assert_non_null(c);
    for (size_t i = 0; i < b->nx; i++)
        c[i] = b->x0 + (double)i * b->dx;
    NC_OK(nc_put_var_double(ncid, vx, c));
    for (size_t j = 0; j < b->ny; j++)
        c[j] = b->y0 + (double)j * b->dy;
    NC_OK(nc_put_var_double(ncid, vy, c));
    NC_OK(nc_put_var_double(ncid, vv, v));
    if (b->mask)
        NC_OK(nc_put_var_double(ncid, vm, mask));
    NC_OK(nc_close(ncid));
    free(c);
}

/* A scenario reading the seabed file at path (absolute), variable var, grid taken from the file. */
static sw_scenario *file_scenario(const char *path, const char *var)
{
    sw_scenario *sc = calloc(1, sizeof *sc);
    assert_non_null(sc);
    strcpy(sc->path, "bed.scn");
    strcpy(sc->dir, ".");
    snprintf(sc->bed_file, sizeof sc->bed_file, "%s", path);
    snprintf(sc->bed_variable, sizeof sc->bed_variable, "%s", var);
    sc->bed_line = 7;
    sc->min_depth_m = 1.0;
    sc->grid.radius_m = SW_EARTH_RADIUS_M;
    return sc;
}

/* The depth the model uses: the depth on water (>= min_depth), 0 on land (model.h: land carries no depth). */
static void model_depth(const double *d, size_t n, double min_depth, double *h)
{
    for (size_t k = 0; k < n; k++)
        h[k] = d[k] >= min_depth ? d[k] : 0.0;
}

/* One coast four ways: land as negative depths (positive down), as NaN with `missing = land`, under a land
 * mask over junk values, and as _FillValue in an elevation file with `missing = land`: the same model depth
 * field, bit for bit, on the file's grid; the last three also on a grid twice as fine; the counts say how
 * many cells the missing values or the mask made land. Projected and geographic. Reference: the depths
 * written (land below min_depth in every form). */
static void test_land_three_ways(void **state)
{
    (void)state;
    enum { NX = 12, NY = 10, N = NX * NY };
    for (int geo = 0; geo < 2; geo++) {
        bed_spec b = {.nx = NX, .ny = NY, .x0 = geo ? 150.0 : 0.0, .dx = geo ? 0.05 : 500.0,
                      .y0 = geo ? -40.0 : 0.0, .dy = geo ? 0.04 : 400.0, .geo = geo};
        double depth[N], v[N], mask[N];
        size_t n_land = 0;
        for (size_t j = 0; j < NY; j++)
            for (size_t i = 0; i < NX; i++) {
                int land = i + j < 6 || (i == 9 && j == 4);
                depth[j * NX + i] = land ? -3.0 - (double)i : 5.0 + 3.0 * (double)i + 2.0 * (double)j + 0.1 * sin((double)(i * j));
                n_land += land;
            }
        char path[4][512];
        double *h[4], *fine[4];
        for (int way = 0; way < 4; way++) {
            char name[64];
            snprintf(name, sizeof name, "inputs_bed_land%d_%d.nc", way, geo);
            tu_tmp_path(path[way], sizeof path[way], name);
            bed_spec bw = b;
            for (size_t k = 0; k < N; k++) {
                int land = depth[k] < 0.0;
                mask[k] = land;
                v[k] = way == 0 ? depth[k] : way == 1 ? (land ? NAN : depth[k]) : way == 2 ? (land ? 777.0 : depth[k])
                                                       : (land ? -32767.0 : -depth[k]);
            }
            bw.positive = way == 3 ? "up" : "down";
            bw.has_fill = way == 3;
            bw.fill = -32767.0;
            bw.mask = way == 2 ? "landmask" : NULL;
            write_bed2(path[way], "depth", &bw, v, mask);

            sw_scenario *sc = file_scenario(path[way], "depth");
            sc->bed_missing_land = way == 1 || way == 3;
            if (way == 2)
                strcpy(sc->bed_land_mask, "landmask");
            sw_error err = {0};
            assert_int_equal(sw_seabed_grid(sc, &err), SW_OK);
            assert_int_equal(sc->grid.kind, geo ? SW_GRID_GEOGRAPHIC : SW_GRID_PROJECTED);
            double d[N];
            sw_seabed_info info;
            sw_status st = sw_seabed_build_info(sc, d, &info, &err);
            if (st != SW_OK)
                print_error("way %d: %s\n", way, err.msg);
            assert_int_equal(st, SW_OK);
            assert_int_equal(info.land_missing, way == 1 || way == 3 ? n_land : 0);
            assert_int_equal(info.land_mask, way == 2 ? n_land : 0);
            h[way] = malloc(N * sizeof *h[way]);
            assert_non_null(h[way]);
            model_depth(d, N, sc->min_depth_m, h[way]);
            if (way > 0)
                assert_memory_equal(h[way], h[0], N * sizeof *h[0]);

            /* twice as fine over the same cells */
            sc->grid.nx *= 2;
            sc->grid.ny *= 2;
            sc->grid.dx_m /= 2;
            sc->grid.dy_m /= 2;
            fine[way] = malloc(4 * N * sizeof *fine[way]);
            assert_non_null(fine[way]);
            st = sw_seabed_build_info(sc, fine[way], &info, &err);
            if (st != SW_OK)
                print_error("way %d fine: %s\n", way, err.msg);
            assert_int_equal(st, SW_OK);
            if (way > 1)
                assert_memory_equal(fine[way], fine[1], 4 * N * sizeof *fine[1]);
            if (way == 1)   /* each file cell's land covers its four fine cells */
                assert_int_equal(info.land_missing, 4 * n_land);

            /* `missing = error` (the default) names the key to use */
            if (way == 1) {
                sc->bed_missing_land = 0;
                assert_int_equal(sw_seabed_build_info(sc, fine[way], &info, &err), SW_ERR_INPUT);
                assert_non_null(strstr(err.msg, "bed.scn:7: [seabed] file: "));
                assert_non_null(strstr(err.msg, "depth[0][0]"));
                assert_non_null(strstr(err.msg, "`missing = land` in [seabed]"));
            }
            free(sc);
        }
        for (int way = 0; way < 4; way++) {
            free(h[way]);
            free(fine[way]);
        }
    }
}

/* What `compare --refine r` does to a grid taken from a file (nx r cells of dx / r over the same extent): the
 * seabed reads, the cells beyond the outer centres taking the edge values; a grid wider than the file's
 * cells is still an error. Reference: the linear values written (write_bed: 10 i + j - 3 at centre (i d, j d)),
 * clamped to the outer centres [derived]. */
static void test_refined_file_grid(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_bed_refine.nc");
    write_bed(path, "depth", 6, 4, 250.0, "down");
    for (int r = 1; r <= 4; r++) {
        sw_scenario *sc = file_scenario(path, "depth");
        sw_error err = {0};
        assert_int_equal(sw_seabed_grid(sc, &err), SW_OK);
        sc->grid.nx *= (size_t)r;
        sc->grid.ny *= (size_t)r;
        sc->grid.dx_m /= r;
        sc->grid.dy_m /= r;
        double *d = malloc(sw_grid_cells(&sc->grid) * sizeof *d);
        assert_non_null(d);
        sw_status st = sw_seabed_build(sc, d, &err);
        if (st != SW_OK)
            print_error("x%d: %s\n", r, err.msg);
        assert_int_equal(st, SW_OK);
        for (size_t j = 0; j < sc->grid.ny; j++)
            for (size_t i = 0; i < sc->grid.nx; i++) {
                double x = fmin(fmax(sw_grid_xc(&sc->grid, i), 0.0), 1250.0) / 250.0;
                double y = fmin(fmax(sw_grid_yc(&sc->grid, j), 0.0), 750.0) / 250.0;
                assert_near(d[j * sc->grid.nx + i], 10.0 * x + y - 3.0, 1e-12);
            }
        free(d);
        /* one more fine cell to the east passes the file's edge */
        sc->grid.nx += 1;
        d = malloc(sw_grid_cells(&sc->grid) * sizeof *d);
        assert_non_null(d);
        assert_int_equal(sw_seabed_build(sc, d, &err), SW_ERR_INPUT);
        assert_non_null(strstr(err.msg, "does not cover the grid"));
        free(d);
        free(sc);
    }
}

/* The recipe on a geographic grid measures true distances. An island's bump against the great-circle
 * distance from its centre (haversine formula, R. W. Sinnott, Sky & Telescope 68, 159 (1984) [memory]; the
 * local east offset's approximation errs by O((r / R)^2), under 1e-3 m here [derived]); a west coast's shelf
 * against the distance along the parallel, R cos(latitude) dlambda (spherical geometry); a south coast's
 * against the distance along the meridian, R dphi. A bay's ellipse in true metres. */
static double haversine_m(double lon1, double lat1, double lon2, double lat2)
{
    const double r = T_PI / 180.0;
    double a = sin(0.5 * (lat2 - lat1) * r), b = sin(0.5 * (lon2 - lon1) * r);
    return 2.0 * SW_EARTH_RADIUS_M * asin(sqrt(a * a + cos(lat1 * r) * cos(lat2 * r) * b * b));
}

static sw_scenario *geo_scenario(size_t nx, size_t ny, double lon_w, double lat_s, double d_deg)
{
    sw_scenario *sc = calloc(1, sizeof *sc);
    assert_non_null(sc);
    strcpy(sc->path, "geo.scn");
    strcpy(sc->dir, ".");
    sc->has_grid = 1;
    sc->grid = (sw_grid){.nx = nx, .ny = ny, .kind = SW_GRID_GEOGRAPHIC, .radius_m = SW_EARTH_RADIUS_M};
    sc->grid.x0_m = sw_grid_deg(&sc->grid, lon_w);
    sc->grid.y0_m = sw_grid_deg(&sc->grid, lat_s);
    sc->grid.dx_m = sc->grid.dy_m = sw_grid_deg(&sc->grid, d_deg);
    return sc;
}

static void test_geographic_recipe(void **state)
{
    (void)state;
    /* an island at 60 N: at 60 degrees a degree of longitude is half a degree of latitude long */
    sw_scenario *sc = geo_scenario(80, 60, 0.0, 59.7, 0.01);
    sc->deep_m = 100.0;
    sc->n_features = 1;
    sc->features[0] = (sw_feature){.kind = SW_FEATURE_ISLAND, .name = "Tervelka Islet", .x_m = sw_grid_deg(&sc->grid, 0.4),
                                   .y_m = sw_grid_deg(&sc->grid, 60.0), .radius_x_m = 5000.0, .radius_y_m = 5000.0,
                                   .height_m = 20.0};
    double *d = build(sc);
    double worst = 0.0, east_at_r = 0.0;
    for (size_t j = 0; j < sc->grid.ny; j++)
        for (size_t i = 0; i < sc->grid.nx; i++) {
            double lon = sw_grid_to_deg(&sc->grid, sw_grid_xc(&sc->grid, i));
            double lat = sw_grid_to_deg(&sc->grid, sw_grid_yc(&sc->grid, j));
            double r = haversine_m(0.4, 60.0, lon, lat) / 5000.0;
            double want = 100.0 - 120.0 * exp(-r * r);
            worst = fmax(worst, fabs(d[j * sc->grid.nx + i] - want));
            if (j == 30 && i == 50)   /* 0.105 deg east, 0.005 deg north: 5.86 km away, 1.17 radii */
                east_at_r = d[j * sc->grid.nx + i];
        }
    assert_true(worst < 1e-3);
    /* that cell is 1.17 radii away, not the 2.34 that 0.105 deg are at the equator (depth 99.5 m) */
    assert_near(east_at_r, 100.0 - 120.0 * exp(-1.17 * 1.17), 0.5);
    free(d);
    free(sc);

    /* a west coast: depth = shelf s / shelf_width, s the distance along the parallel from the shoreline */
    sc = geo_scenario(100, 40, 0.0, 40.0, 0.01);
    sc->deep_m = 200.0;
    sc->coast = SW_COAST_WEST;
    sc->shoreline_m = sw_grid_deg(&sc->grid, 0.2);
    sc->shelf_depth_m = 200.0;
    sc->shelf_width_m = 100000.0;
    sc->land_height_m = 50.0;
    sc->coast_wavelength_m = 50000.0;
    d = build(sc);
    for (size_t j = 0; j < sc->grid.ny; j += 13)
        for (size_t i = 20; i < sc->grid.nx; i += 7) {
            double lon = sw_grid_to_deg(&sc->grid, sw_grid_xc(&sc->grid, i));
            double lat = sw_grid_to_deg(&sc->grid, sw_grid_yc(&sc->grid, j));
            double s_m = SW_EARTH_RADIUS_M * cos(lat * T_PI / 180.0) * (lon - 0.2) * T_PI / 180.0;
            assert_near(d[j * sc->grid.nx + i], 200.0 * s_m / 100000.0, 1e-9);
        }
    free(d);

    /* a south coast with a wiggle along it: the shelf follows the meridian distance, the wiggle's phase the
     * true distance along the parallel */
    sc->coast = SW_COAST_SOUTH;
    sc->shoreline_m = sw_grid_deg(&sc->grid, 40.05);
    sc->coast_wiggle_m = 1000.0;
    sc->coast_wavelength_m = 40000.0;
    d = build(sc);
    for (size_t j = 10; j < sc->grid.ny; j += 9)
        for (size_t i = 0; i < sc->grid.nx; i += 11) {
            double x = sw_grid_xc(&sc->grid, i), y = sw_grid_yc(&sc->grid, j);
            double a = x * cos(y / SW_EARTH_RADIUS_M);
            double s_m = y - sc->shoreline_m - 1000.0 * sin(2.0 * T_PI * a / 40000.0);
            assert_near(d[j * sc->grid.nx + i], 200.0 * s_m / 100000.0, 1e-9);
        }
    free(d);
    free(sc);

    /* a bay 4 km across (east-west, true) at 60 N on land: 0.04 deg of longitude is 2.22 km there */
    sc = geo_scenario(60, 40, 0.0, 59.9, 0.01);
    sc->deep_m = 100.0;
    sc->coast = SW_COAST_EAST;
    sc->shoreline_m = sw_grid_deg(&sc->grid, 0.0);   /* everything is land (west of ... east coast) */
    sc->shelf_depth_m = 50.0;
    sc->shelf_width_m = 10000.0;
    sc->land_height_m = 30.0;
    sc->coast_wavelength_m = 50000.0;
    sc->n_features = 1;
    sc->features[0] = (sw_feature){.kind = SW_FEATURE_BAY, .name = "Skerry Voe", .x_m = sw_grid_deg(&sc->grid, 0.3),
                                   .y_m = sw_grid_deg(&sc->grid, 60.1), .radius_x_m = 4000.0, .radius_y_m = 1000.0,
                                   .depth_m = 10.0};
    d = build(sc);
    for (size_t i = 0; i < sc->grid.nx; i++) {
        size_t j = 20;   /* centre row: lat 60.105 */
        double lon = sw_grid_to_deg(&sc->grid, sw_grid_xc(&sc->grid, i));
        double lat = sw_grid_to_deg(&sc->grid, sw_grid_yc(&sc->grid, j));
        double ex = SW_EARTH_RADIUS_M * cos(0.5 * (lat + 60.1) * T_PI / 180.0) * (lon - 0.3) * T_PI / 180.0;
        double ey = (lat - 60.1) * T_PI / 180.0 * SW_EARTH_RADIUS_M;
        double r2 = (ex / 4000.0) * (ex / 4000.0) + (ey / 1000.0) * (ey / 1000.0);
        double got = d[j * sc->grid.nx + i];
        if (r2 < 1.0)
            assert_near(got, 10.0 * (1.0 - r2), 1e-9);
        else
            assert_true(got <= 0.0);
        if (fabs(lon - 0.3) < 0.06)   /* 0.06 deg east is 3.3 km: inside the 4 km semi-axis */
            assert_true(got > 0.0);
    }
    free(d);
    free(sc);
}

/* A longitude/latitude seabed file without [grid] makes the grid geographic (the scenario's radius kept);
 * with [grid] kind written and the other kind, the error names the line. Reference: the file's axes. */
static void test_geographic_file_grid(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_bed_geo.nc");
    bed_spec b = {.nx = 8, .ny = 5, .x0 = 170.0, .dx = 0.25, .y0 = 45.0, .dy = 0.25, .geo = 1, .positive = "down"};
    double v[40];
    for (size_t k = 0; k < 40; k++)
        v[k] = 100.0 + (double)k;
    write_bed2(path, "depth", &b, v, NULL);
    sw_scenario *sc = file_scenario(path, "depth");
    sc->grid.radius_m = 6.3e6;
    sw_error err = {0};
    assert_int_equal(sw_seabed_grid(sc, &err), SW_OK);
    assert_int_equal(sc->grid.kind, SW_GRID_GEOGRAPHIC);
    assert_near(sc->grid.radius_m, 6.3e6, 0.0);
    assert_near(sw_grid_to_deg(&sc->grid, sc->grid.x0_m), 169.875, 1e-9);
    assert_near(sw_grid_to_deg(&sc->grid, sc->grid.dy_m), 0.25, 1e-12);
    double *d = build(sc);
    assert_memory_equal(d, v, sizeof v);
    free(d);
    free(sc);

    sc = file_scenario(path, "depth");
    sc->grid_kind_line = 3;   /* [grid] kind = projected, written */
    assert_int_equal(sw_seabed_grid(sc, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "bed.scn:3: [grid] kind = projected, but the seabed file"));
    assert_non_null(strstr(err.msg, "accepted: kind = geographic for this file"));
    assert_int_equal(sc->has_grid, 0);
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
        cmocka_unit_test(test_land_three_ways),
        cmocka_unit_test(test_refined_file_grid),
        cmocka_unit_test(test_geographic_recipe),
        cmocka_unit_test(test_geographic_file_grid),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
