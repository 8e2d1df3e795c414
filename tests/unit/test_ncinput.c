/* test_ncinput.c - reading 2D fields from NetCDF files written here with the NetCDF-C API itself. */
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

#include "inputs/ncinput.h"
#include "inputs/scenario.h"
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

/* A test file: coordinates of cell centres (in `units`) and optional attributes of the variable. */
typedef struct {
    size_t nx, ny;
    double xc0, dx, yc0, dy;   /* first centre and spacing, in the file's units */
    const char *units;         /* units of both coordinates; NULL = no attribute */
    const char *positive;      /* `positive` attribute as text; NULL = none */
    int has_fill;              /* write _FillValue = fill */
    double fill;
} nc_spec;

/* Writes var (ny x nx doubles, row j = y index) with coordinate variables y, x to path. */
static void write_field(const char *path, const char *var, const nc_spec *s, const double *v)
{
    int ncid, dy, dx, vy, vx, vv;
    NC_OK(nc_create(path, NC_CLOBBER | NC_NETCDF4, &ncid));
    NC_OK(nc_def_dim(ncid, "y", s->ny, &dy));
    NC_OK(nc_def_dim(ncid, "x", s->nx, &dx));
    NC_OK(nc_def_var(ncid, "y", NC_DOUBLE, 1, &dy, &vy));
    NC_OK(nc_def_var(ncid, "x", NC_DOUBLE, 1, &dx, &vx));
    int dims[2] = {dy, dx};
    NC_OK(nc_def_var(ncid, var, NC_DOUBLE, 2, dims, &vv));
    if (s->units) {
        NC_OK(nc_put_att_text(ncid, vy, "units", strlen(s->units), s->units));
        NC_OK(nc_put_att_text(ncid, vx, "units", strlen(s->units), s->units));
    }
    if (s->positive)
        NC_OK(nc_put_att_text(ncid, vv, "positive", strlen(s->positive), s->positive));
    if (s->has_fill)
        NC_OK(nc_put_att_double(ncid, vv, "_FillValue", NC_DOUBLE, 1, &s->fill));
    NC_OK(nc_enddef(ncid));
    double *cx = malloc(s->nx * sizeof *cx), *cy = malloc(s->ny * sizeof *cy);
    assert_non_null(cx);
    assert_non_null(cy);
    for (size_t i = 0; i < s->nx; i++)
        cx[i] = s->xc0 + (double)i * s->dx;
    for (size_t j = 0; j < s->ny; j++)
        cy[j] = s->yc0 + (double)j * s->dy;
    NC_OK(nc_put_var_double(ncid, vx, cx));
    NC_OK(nc_put_var_double(ncid, vy, cy));
    NC_OK(nc_put_var_double(ncid, vv, v));
    NC_OK(nc_close(ncid));
    free(cx);
    free(cy);
}

/* Fills v[j*nx+i] with a smooth non-polynomial function of the centre coordinates. */
static void fill_wavy(const nc_spec *s, double *v)
{
    for (size_t j = 0; j < s->ny; j++)
        for (size_t i = 0; i < s->nx; i++) {
            double x = s->xc0 + (double)i * s->dx, y = s->yc0 + (double)j * s->dy;
            v[j * s->nx + i] = 100.0 + 37.0 * sin(x / 913.0) * cos(y / 517.0) + 1e-3 * x;
        }
}

static nc_spec base_spec(void)
{
    nc_spec s = {.nx = 7, .ny = 6, .xc0 = 1000.0, .dx = 500.0, .yc0 = -200.0, .dy = 300.0, .units = "m"};
    return s;
}

/* The file's own grid, read back and used as the target, copies the values exactly.
 * Reference: the values written through nc_put_var_double above. */
static void test_identical_grid_copies_exactly(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_ident.nc");
    nc_spec s = base_spec();
    double v[42];
    fill_wavy(&s, v);
    write_field(path, "depth", &s, v);

    sw_grid g;
    sw_error err = {0};
    assert_int_equal(sw_ncin_grid(path, "depth", &g, &err), SW_OK);
    assert_int_equal(g.nx, 7);
    assert_int_equal(g.ny, 6);
    assert_true(g.dx_m == 500.0 && g.dy_m == 300.0);
    assert_true(g.x0_m == 750.0 && g.y0_m == -350.0);   /* first centre - spacing / 2 */

    double out[42];
    assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_OK);
    assert_memory_equal(out, v, sizeof v);
}

/* f = a + b x + c y + d x y interpolated onto an offset, finer grid. Reference: bilinear
 * interpolation reproduces every function in span{1, x, y, xy} exactly (Press et al., Numerical
 * Recipes 3rd ed., sec. 3.6, eq. 3.6.5 is linear in t, u and tu). */
static double bilin(double x, double y)
{
    return 3.0 + 2e-3 * x - 1e-3 * y + 1e-7 * x * y;
}

static void test_bilinear_function_is_exact(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_bilin.nc");
    nc_spec s = base_spec();
    double v[42];
    for (size_t j = 0; j < s.ny; j++)
        for (size_t i = 0; i < s.nx; i++)
            v[j * s.nx + i] = bilin(s.xc0 + (double)i * s.dx, s.yc0 + (double)j * s.dy);
    write_field(path, "depth", &s, v);

    /* source centres: x 1000 .. 4000, y -200 .. 1300 */
    sw_grid g = {.nx = 22, .ny = 20, .dx_m = 130.0, .dy_m = 70.0, .x0_m = 1000.0, .y0_m = -150.0};
    double out[22 * 20];
    sw_error err = {0};
    assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_OK);
    for (size_t j = 0; j < g.ny; j++)
        for (size_t i = 0; i < g.nx; i++)
            assert_near(out[j * g.nx + i], bilin(sw_grid_xc(&g, i), sw_grid_yc(&g, j)), 1e-12);

    /* a grid twice as fine whose first and last centres sit exactly on the file's edge centres is
     * inside (edge tolerance), and still exact */
    sw_grid h = {.nx = 13, .ny = 11, .dx_m = 250.0, .dy_m = 150.0, .x0_m = 875.0, .y0_m = -275.0};
    double out2[13 * 11];
    assert_int_equal(sw_ncin_read(path, "depth", &h, SW_NCIN_OUTSIDE_ERROR, out2, NULL, &err), SW_OK);
    for (size_t j = 0; j < h.ny; j++)
        for (size_t i = 0; i < h.nx; i++)
            assert_near(out2[j * h.nx + i], bilin(sw_grid_xc(&h, i), sw_grid_yc(&h, j)), 1e-12);
}

/* Cells beyond the file's centre extent: an error, or 0 when asked. */
static void test_outside_error_or_zero(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_outside.nc");
    nc_spec s = base_spec();
    double v[42];
    for (size_t k = 0; k < 42; k++)
        v[k] = 5.0;
    write_field(path, "eta", &s, v);

    /* centres x 500 .. 4500 (file 1000 .. 4000), y 0 .. 1000 (inside) */
    sw_grid g = {.nx = 5, .ny = 3, .dx_m = 1000.0, .dy_m = 500.0, .x0_m = 0.0, .y0_m = -250.0};
    double out[15];
    sw_error err = {0};
    assert_int_equal(sw_ncin_read(path, "eta", &g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, path));
    assert_non_null(strstr(err.msg, "does not cover"));

    assert_int_equal(sw_ncin_read(path, "eta", &g, SW_NCIN_OUTSIDE_ZERO, out, NULL, &err), SW_OK);
    for (size_t j = 0; j < 3; j++)
        for (size_t i = 0; i < 5; i++)
            assert_near(out[j * 5 + i], (i == 0 || i == 4) ? 0.0 : 5.0, 0.0);
}

/* Coordinates in km are converted to m. Reference: 1 km = 1000 m (SI). */
static void test_km_units_converted(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_km.nc");
    nc_spec s = {.nx = 4, .ny = 3, .xc0 = 2.0, .dx = 0.5, .yc0 = -1.0, .dy = 0.25, .units = "km"};
    double v[12];
    for (size_t k = 0; k < 12; k++)
        v[k] = (double)k;
    write_field(path, "depth", &s, v);
    sw_grid g;
    sw_error err = {0};
    assert_int_equal(sw_ncin_grid(path, "depth", &g, &err), SW_OK);
    assert_near(g.dx_m, 500.0, 1e-9);
    assert_near(g.dy_m, 250.0, 1e-9);
    assert_near(g.x0_m, 1750.0, 1e-9);
    assert_near(g.y0_m, -1125.0, 1e-9);
    double out[12];
    assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_OK);
    assert_memory_equal(out, v, sizeof v);

    /* a missing units attribute means metres */
    s.units = NULL;
    write_field(path, "depth", &s, v);
    assert_int_equal(sw_ncin_grid(path, "depth", &g, &err), SW_OK);
    assert_near(g.dx_m, 0.5, 1e-12);
}

/* Coordinates that are not exact in binary (0.1 + 0.3 i km) put the file's last centre a rounding
 * error beyond a target centre meant to coincide with it; that target is still inside. Reference:
 * the values written (linear in i, so the interpolated edge values equal the file's). */
static void test_edges_tolerate_rounding(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_edges.nc");
    nc_spec s = {.nx = 13, .ny = 7, .xc0 = 0.1, .dx = 0.3, .yc0 = 0.1, .dy = 0.7, .units = "km"};
    double v[13 * 7];
    for (size_t j = 0; j < s.ny; j++)
        for (size_t i = 0; i < s.nx; i++)
            v[j * s.nx + i] = (double)i + 100.0 * (double)j;
    write_field(path, "depth", &s, v);
    /* half the spacing; first and last centres at the file's nominal edge centres */
    sw_grid g = {.nx = 25, .ny = 13, .dx_m = 150.0, .dy_m = 350.0, .x0_m = 25.0, .y0_m = -75.0};
    double out[25 * 13];
    sw_error err = {0};
    sw_status st = sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err);
    if (st != SW_OK)
        print_error("%s\n", err.msg);
    assert_int_equal(st, SW_OK);
    for (size_t j = 0; j < g.ny; j++)
        for (size_t i = 0; i < g.nx; i++)
            assert_near(out[j * g.nx + i], 0.5 * (double)i + 50.0 * (double)j, 1e-9);
}

/* NaN, _FillValue and missing_value are rejected with the first bad index in storage order.
 * Reference: NetCDF Users Guide, "Attribute Conventions" (_FillValue, missing_value) and CF-1.11
 * sec. 2.5.1. */
static void test_missing_values_rejected(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_nan.nc");
    nc_spec s = base_spec();
    double v[42];
    fill_wavy(&s, v);
    v[2 * 7 + 3] = NAN;
    v[4 * 7 + 1] = NAN;
    write_field(path, "depth", &s, v);
    sw_grid g;
    sw_error err = {0};
    assert_int_equal(sw_ncin_grid(path, "depth", &g, &err), SW_OK);
    double out[42];
    assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, path));
    assert_non_null(strstr(err.msg, "variable 'depth' has a missing or non-finite value at depth[2][3]"));

    fill_wavy(&s, v);
    v[1 * 7 + 4] = INFINITY;
    write_field(path, "depth", &s, v);
    assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "depth[1][4]"));

    fill_wavy(&s, v);
    s.has_fill = 1;
    s.fill = -9999.0;
    v[5 * 7 + 6] = -9999.0;
    write_field(path, "depth", &s, v);
    assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, path));
    assert_non_null(strstr(err.msg, "depth[5][6]"));

    /* missing_value, on a file without _FillValue */
    s.has_fill = 0;
    fill_wavy(&s, v);
    v[0 * 7 + 2] = -1.0;
    write_field(path, "depth", &s, v);
    int ncid, vid;
    double mv = -1.0;
    NC_OK(nc_open(path, NC_WRITE, &ncid));
    NC_OK(nc_inq_varid(ncid, "depth", &vid));
    NC_OK(nc_redef(ncid));
    NC_OK(nc_put_att_double(ncid, vid, "missing_value", NC_DOUBLE, 1, &mv));
    NC_OK(nc_close(ncid));
    assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "depth[0][2]"));
}

/* Points never written hold the library's default fill value and are missing too. Reference:
 * NetCDF Users Guide, "Fill Values" (NC_FILL_DOUBLE for unwritten doubles). */
static void test_unwritten_points_rejected(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_unwritten.nc");
    int ncid, d[2], vy, vx, vv;
    NC_OK(nc_create(path, NC_CLOBBER, &ncid));
    NC_OK(nc_def_dim(ncid, "y", 2, &d[0]));
    NC_OK(nc_def_dim(ncid, "x", 3, &d[1]));
    NC_OK(nc_def_var(ncid, "y", NC_DOUBLE, 1, &d[0], &vy));
    NC_OK(nc_def_var(ncid, "x", NC_DOUBLE, 1, &d[1], &vx));
    NC_OK(nc_def_var(ncid, "depth", NC_DOUBLE, 2, d, &vv));
    NC_OK(nc_enddef(ncid));
    double cx[3] = {0, 10, 20}, cy[2] = {0, 10};
    NC_OK(nc_put_var_double(ncid, vx, cx));
    NC_OK(nc_put_var_double(ncid, vy, cy));
    size_t start[2] = {0, 0}, count[2] = {1, 3};
    double row[3] = {1, 2, 3};
    NC_OK(nc_put_vara_double(ncid, vv, start, count, row));   /* row 1 left unwritten */
    NC_OK(nc_close(ncid));
    sw_grid g = {.nx = 3, .ny = 2, .dx_m = 10, .dy_m = 10, .x0_m = -5, .y0_m = -5};
    double out[6];
    sw_error err = {0};
    assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "depth[1][0]"));
}

/* Packed values are unpacked. Reference: CF-1.11 sec. 8.1, unpacked = packed * scale_factor +
 * add_offset. */
static void test_packed_values_unpacked(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_packed.nc");
    int ncid, d[2], vy, vx, vv;
    NC_OK(nc_create(path, NC_CLOBBER, &ncid));
    NC_OK(nc_def_dim(ncid, "y", 2, &d[0]));
    NC_OK(nc_def_dim(ncid, "x", 2, &d[1]));
    NC_OK(nc_def_var(ncid, "y", NC_FLOAT, 1, &d[0], &vy));
    NC_OK(nc_def_var(ncid, "x", NC_FLOAT, 1, &d[1], &vx));
    NC_OK(nc_def_var(ncid, "depth", NC_SHORT, 2, d, &vv));
    double sf = 0.5, ao = 10.0;
    NC_OK(nc_put_att_double(ncid, vv, "scale_factor", NC_DOUBLE, 1, &sf));
    NC_OK(nc_put_att_double(ncid, vv, "add_offset", NC_DOUBLE, 1, &ao));
    NC_OK(nc_enddef(ncid));
    float c[2] = {0, 100};
    short p[4] = {-4, 0, 6, 300};
    NC_OK(nc_put_var_float(ncid, vx, c));
    NC_OK(nc_put_var_float(ncid, vy, c));
    NC_OK(nc_put_var_short(ncid, vv, p));
    NC_OK(nc_close(ncid));
    sw_grid g;
    sw_error err = {0};
    assert_int_equal(sw_ncin_grid(path, "depth", &g, &err), SW_OK);
    double out[4];
    assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_OK);
    assert_near(out[0], 8.0, 0.0);
    assert_near(out[1], 10.0, 0.0);
    assert_near(out[2], 13.0, 0.0);
    assert_near(out[3], 160.0, 0.0);
}

/* Writes a file whose layout is broken in one way, chosen by `kind`. */
enum { BAD_3D, BAD_NO_COORD, BAD_UNEVEN, BAD_DEGREES, BAD_DECREASING, BAD_ONE_POINT, BAD_COORD_2D };

static void write_bad(const char *path, int kind)
{
    int ncid, d[3], vy, vx, vv;
    size_t ny = kind == BAD_ONE_POINT ? 1 : 3;
    NC_OK(nc_create(path, NC_CLOBBER, &ncid));
    NC_OK(nc_def_dim(ncid, "time", 2, &d[0]));
    NC_OK(nc_def_dim(ncid, "y", ny, &d[1]));
    NC_OK(nc_def_dim(ncid, "x", 4, &d[2]));
    NC_OK(nc_def_var(ncid, "y", NC_DOUBLE, 1, &d[1], &vy));
    if (kind == BAD_COORD_2D)
        NC_OK(nc_def_var(ncid, "x", NC_DOUBLE, 2, &d[1], &vx));
    else if (kind != BAD_NO_COORD)
        NC_OK(nc_def_var(ncid, "x", NC_DOUBLE, 1, &d[2], &vx));
    NC_OK(nc_def_var(ncid, "depth", NC_DOUBLE, kind == BAD_3D ? 3 : 2, kind == BAD_3D ? d : d + 1, &vv));
    const char *units = kind == BAD_DEGREES ? "degrees_east" : "m";
    if (kind != BAD_NO_COORD && kind != BAD_COORD_2D)
        NC_OK(nc_put_att_text(ncid, vx, "units", strlen(units), units));
    NC_OK(nc_enddef(ncid));
    double cy[3] = {0, 10, 20};
    double cx[4] = {0, 10, 20, 30};
    if (kind == BAD_UNEVEN)
        cx[2] = 21;
    if (kind == BAD_DECREASING)
        cx[0] = 30, cx[1] = 20, cx[2] = 10, cx[3] = 0;
    NC_OK(nc_put_var_double(ncid, vy, cy));
    if (kind == BAD_COORD_2D) {
        double c2[12] = {0};
        NC_OK(nc_put_var_double(ncid, vx, c2));
    } else if (kind != BAD_NO_COORD) {
        NC_OK(nc_put_var_double(ncid, vx, cx));
    }
    double v[24] = {0};
    NC_OK(nc_put_var_double(ncid, vv, v));
    NC_OK(nc_close(ncid));
}

/* Expects both sw_ncin_grid and sw_ncin_read to fail with `code` and a message holding the path
 * and `needle`. */
static void expect_failure(const char *path, sw_status code, const char *needle)
{
    sw_grid g = {.nx = 4, .ny = 3, .dx_m = 10, .dy_m = 10, .x0_m = -5, .y0_m = -5};
    double out[12];
    sw_error err = {0};
    assert_int_equal(sw_ncin_grid(path, "depth", &g, &err), code);
    assert_non_null(strstr(err.msg, path));
    assert_non_null(strstr(err.msg, needle));
    sw_error_clear(&err);
    assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), code);
    assert_non_null(strstr(err.msg, path));
    assert_non_null(strstr(err.msg, needle));
}

static void test_bad_layouts_rejected(void **state)
{
    (void)state;
    static const struct { int kind; const char *needle; } cases[] = {
        {BAD_3D, "exactly 2"},
        {BAD_NO_COORD, "no coordinate variable"},
        {BAD_UNEVEN, "not evenly spaced"},
        {BAD_DEGREES, "projected in metres"},
        {BAD_DECREASING, "not strictly increasing"},
        {BAD_ONE_POINT, "at least 2"},
        {BAD_COORD_2D, "must be 1D"},
    };
    char path[512];
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        char name[64];
        snprintf(name, sizeof name, "inputs_bad%d.nc", cases[k].kind);
        tu_tmp_path(path, sizeof path, name);
        write_bad(path, cases[k].kind);
        expect_failure(path, SW_ERR_INPUT, cases[k].needle);
    }
}

static void test_missing_file_and_variable(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_does_not_exist.nc");
    remove(path);
    expect_failure(path, SW_ERR_IO, "cannot open");

    tu_tmp_path(path, sizeof path, "inputs_novar.nc");
    nc_spec s = base_spec();
    double v[42] = {0};
    write_field(path, "elevation", &s, v);
    expect_failure(path, SW_ERR_INPUT, "'depth' not found in the file (2D variables: elevation)");

    /* a text file is not NetCDF */
    tu_tmp_path(path, sizeof path, "inputs_text.nc");
    assert_int_equal(tu_write_file(path, "not a netcdf file\n"), 0);
    sw_grid g;
    sw_error err = {0};
    assert_int_not_equal(sw_ncin_grid(path, "depth", &g, &err), SW_OK);
    assert_non_null(strstr(err.msg, path));
}

/* The `positive` attribute, read case-insensitively; absent or other text -> unset. */
static void test_positive_attribute(void **state)
{
    (void)state;
    static const struct { const char *text; int want; } cases[] = {
        {"up", SW_POSITIVE_UP}, {"DOWN", SW_POSITIVE_DOWN}, {" Up ", SW_POSITIVE_UP},
        {"sideways", SW_POSITIVE_UNSET}, {NULL, SW_POSITIVE_UNSET},
    };
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_positive.nc");
    nc_spec s = base_spec();
    double v[42] = {0}, out[42];
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        s.positive = cases[k].text;
        write_field(path, "depth", &s, v);
        sw_grid g;
        sw_error err = {0};
        assert_int_equal(sw_ncin_grid(path, "depth", &g, &err), SW_OK);
        int pos = -1;
        assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, &pos, &err), SW_OK);
        assert_int_equal(pos, cases[k].want);
    }

    /* a NetCDF-4 string attribute */
    s.positive = NULL;
    write_field(path, "depth", &s, v);
    int ncid, vid;
    const char *up = "up";
    NC_OK(nc_open(path, NC_WRITE, &ncid));
    NC_OK(nc_inq_varid(ncid, "depth", &vid));
    NC_OK(nc_put_att_string(ncid, vid, "positive", 1, &up));
    NC_OK(nc_close(ncid));
    sw_grid g;
    sw_error err = {0};
    assert_int_equal(sw_ncin_grid(path, "depth", &g, &err), SW_OK);
    int pos = -1;
    assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, &pos, &err), SW_OK);
    assert_int_equal(pos, SW_POSITIVE_UP);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_identical_grid_copies_exactly),
        cmocka_unit_test(test_bilinear_function_is_exact),
        cmocka_unit_test(test_outside_error_or_zero),
        cmocka_unit_test(test_km_units_converted),
        cmocka_unit_test(test_edges_tolerate_rounding),
        cmocka_unit_test(test_missing_values_rejected),
        cmocka_unit_test(test_unwritten_points_rejected),
        cmocka_unit_test(test_packed_values_unpacked),
        cmocka_unit_test(test_bad_layouts_rejected),
        cmocka_unit_test(test_missing_file_and_variable),
        cmocka_unit_test(test_positive_attribute),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
