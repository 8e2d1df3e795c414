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
    assert_int_equal(sw_ncin_grid(path, "depth", 0.0, &g, &err), SW_OK);
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
    assert_int_equal(sw_ncin_grid(path, "depth", 0.0, &g, &err), SW_OK);
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
    assert_int_equal(sw_ncin_grid(path, "depth", 0.0, &g, &err), SW_OK);
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
    assert_int_equal(sw_ncin_grid(path, "depth", 0.0, &g, &err), SW_OK);
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
    assert_int_equal(sw_ncin_grid(path, "depth", 0.0, &g, &err), SW_OK);
    double out[4];
    assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_OK);
    assert_near(out[0], 8.0, 0.0);
    assert_near(out[1], 10.0, 0.0);
    assert_near(out[2], 13.0, 0.0);
    assert_near(out[3], 160.0, 0.0);
}

/* Writes a file whose layout is broken in one way, chosen by `kind`. */
enum { BAD_3D, BAD_NO_COORD, BAD_UNEVEN, BAD_DEGREES, BAD_NONMONOTONIC, BAD_ONE_POINT, BAD_COORD_2D };

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
    if (kind == BAD_NONMONOTONIC)
        cx[1] = 20, cx[2] = 10;
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
    assert_int_equal(sw_ncin_grid(path, "depth", 0.0, &g, &err), code);
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
        {BAD_DEGREES, "coordinate 'y' is in metres but 'x' in degrees_east (longitude) (accepted: both in m or km"},
        {BAD_NONMONOTONIC, "coordinate 'x' is neither strictly increasing nor strictly decreasing"},
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
    assert_int_not_equal(sw_ncin_grid(path, "depth", 0.0, &g, &err), SW_OK);
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
        assert_int_equal(sw_ncin_grid(path, "depth", 0.0, &g, &err), SW_OK);
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
    assert_int_equal(sw_ncin_grid(path, "depth", 0.0, &g, &err), SW_OK);
    int pos = -1;
    assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, &pos, &err), SW_OK);
    assert_int_equal(pos, SW_POSITIVE_UP);
}

/* ---- descending axes, geographic files, land, edge cells ------------------------------------------ */

#define T_PI 3.14159265358979323846

/* A general test file: variable `var` on (ydim, xdim) with the coordinates as given, and optionally a
 * land mask on the same dimensions. */
typedef struct {
    const char *ydim, *xdim;          /* dimension and coordinate variable names */
    const double *yc, *xc;            /* coordinates as stored */
    size_t ny, nx;
    const char *yunits, *xunits;      /* NULL = no attribute */
    const char *ystd, *xstd;          /* standard_name, NULL = none */
    int float_coords;                 /* store the coordinates as float: 1 both, 2 x only */
    int has_fill;                     /* write _FillValue = fill */
    double fill;
    const char *mask;                 /* a mask variable, NULL = none */
    const double *mask_v;             /* its values */
    const char *mask_std;             /* its standard_name, NULL = none */
    const char *mask_meanings;        /* its flag_meanings, NULL = none */
    const double *mask_flags;         /* its flag_values [n_flags] (as bytes) */
    size_t n_flags;
    int mask_fill;                    /* 1: the mask has _FillValue = 9 */
} gfile;

static void put_text(int ncid, int vid, const char *name, const char *text)
{
    if (text)
        NC_OK(nc_put_att_text(ncid, vid, name, strlen(text), text));
}

static void write_gfile(const char *path, const char *var, const gfile *s, const double *v)
{
    int ncid, dy, dx, vy, vx, vv, vm = -1;
    NC_OK(nc_create(path, NC_CLOBBER | NC_NETCDF4, &ncid));
    NC_OK(nc_def_dim(ncid, s->ydim, s->ny, &dy));
    NC_OK(nc_def_dim(ncid, s->xdim, s->nx, &dx));
    NC_OK(nc_def_var(ncid, s->ydim, s->float_coords == 1 ? NC_FLOAT : NC_DOUBLE, 1, &dy, &vy));
    NC_OK(nc_def_var(ncid, s->xdim, s->float_coords ? NC_FLOAT : NC_DOUBLE, 1, &dx, &vx));
    int dims[2] = {dy, dx};
    NC_OK(nc_def_var(ncid, var, NC_DOUBLE, 2, dims, &vv));
    put_text(ncid, vy, "units", s->yunits);
    put_text(ncid, vx, "units", s->xunits);
    put_text(ncid, vy, "standard_name", s->ystd);
    put_text(ncid, vx, "standard_name", s->xstd);
    if (s->has_fill)
        NC_OK(nc_put_att_double(ncid, vv, "_FillValue", NC_DOUBLE, 1, &s->fill));
    if (s->mask) {
        NC_OK(nc_def_var(ncid, s->mask, NC_BYTE, 2, dims, &vm));
        put_text(ncid, vm, "standard_name", s->mask_std);
        put_text(ncid, vm, "flag_meanings", s->mask_meanings);
        if (s->n_flags)
            NC_OK(nc_put_att_double(ncid, vm, "flag_values", NC_BYTE, s->n_flags, s->mask_flags));
        if (s->mask_fill) {
            signed char f9 = 9;
            NC_OK(nc_put_att_schar(ncid, vm, "_FillValue", NC_BYTE, 1, &f9));
        }
    }
    NC_OK(nc_enddef(ncid));
    NC_OK(nc_put_var_double(ncid, vy, s->yc));
    NC_OK(nc_put_var_double(ncid, vx, s->xc));
    NC_OK(nc_put_var_double(ncid, vv, v));
    if (s->mask)
        NC_OK(nc_put_var_double(ncid, vm, s->mask_v));
    NC_OK(nc_close(ncid));
}

/* A geographic grid of nx x ny cells of dlon x dlat degrees, west edge lon_w, south edge lat_s (deg),
 * on the default sphere. */
static sw_grid geo_grid(size_t nx, size_t ny, double lon_w, double lat_s, double dlon, double dlat)
{
    sw_grid g = {.nx = nx, .ny = ny, .kind = SW_GRID_GEOGRAPHIC, .radius_m = SW_EARTH_RADIUS_M};
    g.x0_m = sw_grid_deg(&g, lon_w);
    g.y0_m = sw_grid_deg(&g, lat_s);
    g.dx_m = sw_grid_deg(&g, dlon);
    g.dy_m = sw_grid_deg(&g, dlat);
    return g;
}

/* c[m] = first + m step, m < n. */
static void fill_axis(double *c, size_t n, double first, double step)
{
    for (size_t m = 0; m < n; m++)
        c[m] = first + (double)m * step;
}

/* The same field with its rows (flip_y) and/or columns (flip_x) in reverse order. */
static void flip_field(const double *v, size_t ny, size_t nx, int flip_y, int flip_x, double *out)
{
    for (size_t j = 0; j < ny; j++)
        for (size_t i = 0; i < nx; i++)
            out[j * nx + i] = v[(flip_y ? ny - 1 - j : j) * nx + (flip_x ? nx - 1 - i : i)];
}

static void reverse(const double *c, size_t n, double *out)
{
    for (size_t m = 0; m < n; m++)
        out[m] = c[n - 1 - m];
}

/* A file whose axes decrease (either or both) gives the same grid and the same field, bit for bit, as the
 * ascending file: on its own grid and interpolated onto another, projected and geographic. Reference: the
 * ascending file's own values (the field is the same data, stored mirrored). */
static void test_descending_axes_same_field(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_desc.nc");
    enum { NX = 9, NY = 7 };
    double xc[NX], yc[NY], xr[NX], yr[NY], v[NX * NY], w[NX * NY];
    for (int geo = 0; geo < 2; geo++) {
        fill_axis(xc, NX, geo ? 10.0 : 1000.0, geo ? 0.3 : 500.0);
        fill_axis(yc, NY, geo ? 40.0 : -200.0, geo ? 0.7 : 300.0);
        reverse(xc, NX, xr);
        reverse(yc, NY, yr);
        for (size_t k = 0; k < NX * NY; k++)
            v[k] = 100.0 + 37.0 * sin((double)k * 0.7) + 1e-3 * (double)(k * k);
        gfile f = {.ydim = geo ? "lat" : "y", .xdim = geo ? "lon" : "x", .ny = NY, .nx = NX,
                   .yunits = geo ? "degrees_north" : "m", .xunits = geo ? "degrees_east" : "m"};
        sw_grid other = geo ? geo_grid(11, 9, 10.05, 40.1, 0.21, 0.43) : (sw_grid){.nx = 11, .ny = 9, .dx_m = 310.0,
                              .dy_m = 190.0, .x0_m = 1100.0, .y0_m = -150.0};
        double ref_own[NX * NY], ref_other[11 * 9];
        sw_grid ref_grid = {0};
        for (int kind = 0; kind < 4; kind++) {   /* ascending, y down, x down, both down */
            const int fy = kind & 1, fx = (kind >> 1) & 1;
            f.yc = fy ? yr : yc;
            f.xc = fx ? xr : xc;
            flip_field(v, NY, NX, fy, fx, w);
            write_gfile(path, "depth", &f, w);
            sw_grid g;
            sw_error err = {0};
            assert_int_equal(sw_ncin_grid(path, "depth", 0.0, &g, &err), SW_OK);
            double own[NX * NY], oth[11 * 9];
            assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, own, NULL, &err), SW_OK);
            sw_status st = sw_ncin_read(path, "depth", &other, SW_NCIN_OUTSIDE_ERROR, oth, NULL, &err);
            if (st != SW_OK)
                print_error("%s\n", err.msg);
            assert_int_equal(st, SW_OK);
            if (kind == 0) {
                ref_grid = g;
                memcpy(ref_own, own, sizeof own);
                memcpy(ref_other, oth, sizeof oth);
                assert_memory_equal(own, v, sizeof own);   /* the file's own grid copies exactly */
            } else {
                assert_true(g.nx == ref_grid.nx && g.ny == ref_grid.ny && g.dx_m == ref_grid.dx_m &&
                            g.dy_m == ref_grid.dy_m && g.x0_m == ref_grid.x0_m && g.y0_m == ref_grid.y0_m &&
                            g.kind == ref_grid.kind);
                assert_memory_equal(own, ref_own, sizeof own);
                assert_memory_equal(oth, ref_other, sizeof oth);
            }
        }
    }
}

/* Longitude/latitude axes make the file geographic, in every CF spelling, and its grid is given in arc metres
 * x = R lambda (grid.h). Reference: CF-1.11 sec. 4.1 (latitude units degrees_north, degree_north,
 * degree_N, degrees_N, degreeN, degreesN) and 4.2 (the _east / E forms), and standard_name
 * latitude / longitude; R pi / 180 metres per degree. */
static void test_geographic_axes_grid(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_geo_axes.nc");
    static const struct { const char *xu, *yu, *xs, *ys; } spell[] = {
        {"degrees_east", "degrees_north", NULL, NULL}, {"degree_east", "degree_north", NULL, NULL},
        {"degrees_E", "degrees_N", NULL, NULL},        {"degree_E", "degree_N", NULL, NULL},
        {"degreesE", "degreesN", NULL, NULL},          {"degreeE", "degreeN", NULL, NULL},
        {"degrees", "degrees", "longitude", "latitude"}, {NULL, NULL, "longitude", "latitude"},
        {"Degrees_East", "DEGREES_NORTH", NULL, NULL},
    };
    double xc[21], yc[41], v[21 * 41] = {0};
    fill_axis(xc, 21, 10.0, 0.5);
    fill_axis(yc, 41, -5.0, 0.25);
    const double mpd = SW_EARTH_RADIUS_M * T_PI / 180.0;
    for (size_t k = 0; k < sizeof spell / sizeof spell[0]; k++) {
        gfile f = {.ydim = "lat", .xdim = "lon", .yc = yc, .xc = xc, .ny = 41, .nx = 21, .yunits = spell[k].yu,
                   .xunits = spell[k].xu, .ystd = spell[k].ys, .xstd = spell[k].xs};
        write_gfile(path, "depth", &f, v);
        sw_grid g;
        sw_error err = {0};
        sw_status st = sw_ncin_grid(path, "depth", 0.0, &g, &err);
        if (st != SW_OK)
            print_error("%s: %s\n", spell[k].xu ? spell[k].xu : "(none)", err.msg);
        assert_int_equal(st, SW_OK);
        assert_int_equal(g.kind, SW_GRID_GEOGRAPHIC);
        assert_near(g.radius_m, SW_EARTH_RADIUS_M, 0.0);
        assert_int_equal(g.nx, 21);
        assert_int_equal(g.ny, 41);
        assert_near(g.dx_m, 0.5 * mpd, 1e-6);
        assert_near(g.dy_m, 0.25 * mpd, 1e-6);
        assert_near(g.x0_m, 9.75 * mpd, 1e-6);     /* first centre - half a cell */
        assert_near(g.y0_m, -5.125 * mpd, 1e-6);
    }
    /* another radius scales every length */
    sw_grid g;
    sw_error err = {0};
    assert_int_equal(sw_ncin_grid(path, "depth", 6.0e6, &g, &err), SW_OK);
    assert_near(g.radius_m, 6.0e6, 0.0);
    assert_near(g.dx_m, 0.5 * 6.0e6 * T_PI / 180.0, 1e-6);

    /* a projected file keeps kind 0 */
    tu_tmp_path(path, sizeof path, "inputs_geo_proj.nc");
    nc_spec s = base_spec();
    double pv[42] = {0};
    write_field(path, "depth", &s, pv);
    assert_int_equal(sw_ncin_grid(path, "depth", 0.0, &g, &err), SW_OK);
    assert_int_equal(g.kind, SW_GRID_PROJECTED);
}

/* f = a + b lon + c lat + d lon lat in degrees, interpolated onto a geographic grid, is exact, and the file's own
 * grid copies its values bit for bit although the centres went through arc metres. Reference: bilinear
 * interpolation reproduces span{1, x, y, xy} (Press et al., Numerical Recipes 3rd ed., sec. 3.6). */
static double bilin_deg(double lon, double lat)
{
    return 30.0 + 2.0 * lon - 3.0 * lat + 0.125 * lon * lat;
}

static void test_geographic_bilinear_exact(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_geo_bilin.nc");
    double xc[21], yc[41], v[21 * 41];
    fill_axis(xc, 21, 10.0, 0.5);
    fill_axis(yc, 41, -5.0, 0.25);
    for (size_t j = 0; j < 41; j++)
        for (size_t i = 0; i < 21; i++)
            v[j * 21 + i] = bilin_deg(xc[i], yc[j]);
    gfile f = {.ydim = "lat", .xdim = "lon", .yc = yc, .xc = xc, .ny = 41, .nx = 21, .yunits = "degrees_north",
               .xunits = "degrees_east"};
    write_gfile(path, "depth", &f, v);
    sw_grid g = geo_grid(49, 66, 10.2, -4.9, 0.2, 0.15);
    double out[49 * 66];
    sw_error err = {0};
    assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_OK);
    for (size_t j = 0; j < g.ny; j++)
        for (size_t i = 0; i < g.nx; i++)
            assert_near(out[j * g.nx + i], bilin_deg(sw_grid_to_deg(&g, sw_grid_xc(&g, i)),
                                                     sw_grid_to_deg(&g, sw_grid_yc(&g, j))), 1e-9);
    sw_grid own;
    assert_int_equal(sw_ncin_grid(path, "depth", 0.0, &own, &err), SW_OK);
    double copy[21 * 41];
    assert_int_equal(sw_ncin_read(path, "depth", &own, SW_NCIN_OUTSIDE_ERROR, copy, NULL, &err), SW_OK);
    assert_memory_equal(copy, v, sizeof v);
}

/* The same global data in 0 .. 360, in -180 .. 180, with the 360 seam column repeated, and with longitudes
 * decreasing give the same field bit for bit on grids crossing 180 and 0; the same grid written with
 * longitudes 360 lower gives the same values; a regional file across 180 in 0 .. 360 agrees. The spacing
 * 0.3 deg is not exact in binary. Reference: the values are a function of the longitude modulo 360 (each
 * column's canonical index), interpolated by hand below [derived]. */
enum { GL_NX = 1200, GL_NY = 201 };
static double glob_value(size_t col, size_t row)   /* col: index of lon = 0.3 col in [0, 360) */
{
    return 100.0 + 20.0 * sin(2.0 * T_PI * 3.0 * (double)col / GL_NX) * cos((double)row / 50.0) + 0.01 * (double)row;
}

static void test_longitude_conventions(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_lon.nc");
    double *xc = malloc((GL_NX + 1) * sizeof *xc), *yc = malloc(GL_NY * sizeof *yc);
    double *v = malloc((GL_NX + 1) * GL_NY * sizeof *v);
    assert_true(xc && yc && v);
    fill_axis(yc, GL_NY, -30.0, 0.3);
    sw_grid grids[3] = {geo_grid(100, 50, 175.0, -10.0, 0.1, 0.1),    /* across 180 */
                        geo_grid(100, 50, -5.0, -10.0, 0.1, 0.1),     /* across 0 */
                        geo_grid(100, 50, -185.0, -10.0, 0.1, 0.1)};  /* grids[0], written 360 lower */
    double *ref[3], *out = malloc(100 * 50 * sizeof *out);
    assert_non_null(out);
    for (int g = 0; g < 3; g++) {
        ref[g] = malloc(100 * 50 * sizeof *ref[g]);
        assert_non_null(ref[g]);
    }
    /* 0: 0 .. 359.7; 1: -180 .. 179.7; 2: 0 .. 360 with the seam column; 3: 359.7 .. 0 (decreasing);
     * 4: -180 .. 179.7 stored as float (its spacing off by float rounding) */
    for (int kind = 0; kind < 5; kind++) {
        size_t nx = kind == 2 ? GL_NX + 1 : GL_NX;
        for (size_t i = 0; i < nx; i++) {
            size_t col = kind == 1 || kind == 4 ? (i + GL_NX / 2) % GL_NX : kind == 3 ? GL_NX - 1 - i : i % GL_NX;
            xc[i] = kind == 1 || kind == 4 ? -180.0 + (double)i * 0.3 : (double)col * 0.3;
            if (kind == 4)
                xc[i] = (double)(float)xc[i];
            if (kind == 2 && i == GL_NX)
                xc[i] = 360.0;
            for (size_t j = 0; j < GL_NY; j++)
                v[j * nx + i] = glob_value(col, j);
        }
        gfile f = {.ydim = "lat", .xdim = "lon", .yc = yc, .xc = xc, .ny = GL_NY, .nx = nx,
                   .yunits = "degrees_north", .xunits = "degrees_east", .float_coords = kind == 4 ? 2 : 0};
        write_gfile(path, "depth", &f, v);
        for (int g = 0; g < 3; g++) {
            sw_error err = {0};
            sw_status st = sw_ncin_read(path, "depth", &grids[g], SW_NCIN_OUTSIDE_ERROR, out, NULL, &err);
            if (st != SW_OK)
                print_error("kind %d grid %d: %s\n", kind, g, err.msg);
            assert_int_equal(st, SW_OK);
            if (kind == 0) {
                memcpy(ref[g], out, 100 * 50 * sizeof *out);
                continue;
            }
            assert_memory_equal(out, ref[g], 100 * 50 * sizeof *out);
        }
    }
    /* the values, by hand: lon in [0, 360), p = lon / 0.3, q = (lat + 30) / 0.3 */
    for (int g = 0; g < 2; g++)
        for (size_t j = 0; j < 50; j += 7)
            for (size_t i = 0; i < 100; i += 3) {
                double lon = sw_grid_to_deg(&grids[g], sw_grid_xc(&grids[g], i));
                double lat = sw_grid_to_deg(&grids[g], sw_grid_yc(&grids[g], j));
                lon = fmod(lon + 360.0, 360.0);
                double p = lon / 0.3, q = (lat + 30.0) / 0.3;
                size_t i0 = (size_t)floor(p), j0 = (size_t)floor(q);
                double a = p - (double)i0, b = q - (double)j0;
                size_t i1 = (i0 + 1) % GL_NX;
                double want = (1 - b) * ((1 - a) * glob_value(i0, j0) + a * glob_value(i1, j0)) +
                              b * ((1 - a) * glob_value(i0, j0 + 1) + a * glob_value(i1, j0 + 1));
                assert_near(ref[g][j * 100 + i], want, 1e-9);
            }
    /* the same grid 360 lower */
    for (size_t k = 0; k < 100 * 50; k++)
        assert_near(ref[2][k], ref[0][k], 1e-9);

    /* a regional file across 180, in 0 .. 360: 150 .. 210 */
    size_t nr = 201;
    for (size_t i = 0; i < nr; i++) {
        xc[i] = 150.0 + (double)i * 0.3;
        for (size_t j = 0; j < GL_NY; j++)
            v[j * nr + i] = glob_value(500 + i, j);
    }
    gfile f = {.ydim = "lat", .xdim = "lon", .yc = yc, .xc = xc, .ny = GL_NY, .nx = nr,
               .yunits = "degrees_north", .xunits = "degrees_east"};
    write_gfile(path, "depth", &f, v);
    sw_error err = {0};
    for (int g = 0; g < 3; g += 2) {
        assert_int_equal(sw_ncin_read(path, "depth", &grids[g], SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_OK);
        for (size_t k = 0; k < 100 * 50; k++)
            assert_near(out[k], ref[0][k], 1e-9);
    }
    /* ... which does not reach 0 */
    assert_int_equal(sw_ncin_read(path, "depth", &grids[1], SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "does not cover the grid"));
    assert_non_null(strstr(err.msg, " deg"));
    for (int g = 0; g < 3; g++)
        free(ref[g]);
    free(out);
    free(xc);
    free(yc);
    free(v);
}

/* Writes a small file for a bad-input case and expects sw_ncin_read onto g to fail with SW_ERR_INPUT and a
 * message naming the path and holding needle. */
static void expect_read_failure(const char *path, const gfile *f, const sw_grid *g, const char *needle)
{
    double v[64] = {0}, out[64];
    assert_true(f->nx * f->ny <= 64 && g->nx * g->ny <= 64);
    write_gfile(path, "depth", f, v);
    sw_error err = {0};
    sw_status st = sw_ncin_read(path, "depth", g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err);
    if (st != SW_ERR_INPUT || !strstr(err.msg, needle) || !strstr(err.msg, path))
        print_error("wanted '%s', got %d: %s\n", needle, (int)st, err.msg);
    assert_int_equal(st, SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, path));
    assert_non_null(strstr(err.msg, needle));
    assert_non_null(strstr(err.msg, "variable 'depth'"));
}

/* Degrees on a projected grid, metres on a geographic one, latitudes beyond +-90, longitudes outside the two
 * conventions, more than a turn, (lon, lat) order, plain degrees, mixed units: one line each naming the file,
 * the variable and the accepted form. */
static void test_geographic_bad_inputs(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_geo_bad.nc");
    double lon[4] = {10, 11, 12, 13}, lat[3] = {0, 1, 2}, big[4] = {80, 90, 100, 110}, far[4] = {-200, -199, -198, -197};
    double xm[4] = {0, 10, 20, 30}, ym[3] = {0, 10, 20};
    sw_grid geo = geo_grid(4, 3, 9.5, -0.5, 1.0, 1.0);
    sw_grid proj = {.nx = 4, .ny = 3, .dx_m = 10, .dy_m = 10, .x0_m = -5, .y0_m = -5};
    gfile ok = {.ydim = "lat", .xdim = "lon", .yc = lat, .xc = lon, .ny = 3, .nx = 4, .yunits = "degrees_north",
                .xunits = "degrees_east"};
    expect_read_failure(path, &ok, &proj, "are latitude and longitude in degrees, but the grid is projected "
                                          "(accepted on a projected grid: x and y in m or km");
    gfile metres = {.ydim = "y", .xdim = "x", .yc = ym, .xc = xm, .ny = 3, .nx = 4, .yunits = "m", .xunits = "m"};
    expect_read_failure(path, &metres, &geo, "are in metres, but the grid is geographic (accepted on a geographic "
                                             "grid: latitude and longitude in degrees_north and degrees_east)");
    gfile f = ok;
    f.yc = big;
    f.ny = 4;
    expect_read_failure(path, &f, &geo, "latitude 'lat' runs from 80 to 110 degrees_north (accepted: within -90 .. 90)");
    f = ok;
    f.xc = far;
    expect_read_failure(path, &f, &geo, "longitude 'lon' runs from -200 to -197 degrees_east (accepted: within "
                                        "-180 .. 180 or 0 .. 360)");
    double wide[60];
    fill_axis(wide, 60, -180.0, 9.0);   /* -180 .. 351: 540 degrees in 60 columns */
    f = ok;
    f.xc = wide;
    f.nx = 60;
    f.ny = 1;
    sw_grid g1 = geo_grid(2, 1, 0.0, -0.5, 1.0, 1.0);
    {
        double v[60] = {0}, out[2];
        write_gfile(path, "depth", &f, v);
        sw_error err = {0};
        assert_int_equal(sw_ncin_read(path, "depth", &g1, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_ERR_INPUT);
        assert_non_null(strstr(err.msg, "at least 2"));   /* one latitude row cannot define a spacing */
    }
    f.ny = 3;
    {
        double v[180] = {0}, out[2];
        write_gfile(path, "depth", &f, v);
        sw_error err = {0};
        assert_int_equal(sw_ncin_read(path, "depth", &g1, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_ERR_INPUT);
        assert_non_null(strstr(err.msg, "spans 540 degrees"));
        assert_non_null(strstr(err.msg, "accepted: at most 360 degrees"));
    }
    gfile swapped = {.ydim = "lon", .xdim = "lat", .yc = lon, .xc = lat, .ny = 4, .nx = 3, .yunits = "degrees_east",
                     .xunits = "degrees_north"};
    expect_read_failure(path, &swapped, &geo, "has dimensions (lon, lat); they must be (lat, lon)");
    f = ok;
    f.xunits = "degrees";
    expect_read_failure(path, &f, &geo, "coordinate 'lon' has units 'degrees' without saying east or north (accepted: "
                                        "degrees_east or degrees_north");
    f = ok;
    f.yc = ym;
    f.yunits = "km";
    expect_read_failure(path, &f, &geo, "coordinate 'lat' is in metres but 'lon' in degrees_east (longitude)");
    f = ok;
    f.yunits = "degrees_east";
    expect_read_failure(path, &f, &geo, "coordinate 'lat' is in degrees_east (longitude) but 'lon' in degrees_east");
    /* coordinates stored as float, 0.1 deg apart near 180: evenly spaced within their own rounding */
    double fl[4], fy[3];
    for (int m = 0; m < 4; m++)
        fl[m] = (double)(float)(179.7 + 0.1 * m);
    for (int m = 0; m < 3; m++)
        fy[m] = (double)(float)(45.3 + 0.1 * m);
    f = ok;
    f.xc = fl;
    f.yc = fy;
    f.float_coords = 1;
    double v[12] = {0}, out[4];
    write_gfile(path, "depth", &f, v);
    sw_grid g;
    sw_error err = {0};
    sw_status st = sw_ncin_grid(path, "depth", 0.0, &g, &err);
    if (st != SW_OK)
        print_error("%s\n", err.msg);
    assert_int_equal(st, SW_OK);
    assert_near(sw_grid_to_deg(&g, g.dx_m), 0.1, 1e-6);
    sw_grid one = geo_grid(2, 2, 179.7, 45.3, 0.1, 0.1);
    assert_int_equal(sw_ncin_read(path, "depth", &one, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_OK);
}

/* Missing values as land: NaN, _FillValue and missing_value cells are land (flag SW_NCIN_LAND_MISSING, value 0);
 * Inf stays an error; without missing_land the error names the hint. Near the coast a target takes the land
 * of its nearest file point, or the bilinear weights of the water points renormalised [derived]. Reference
 * for the markers: NetCDF Users Guide, "Attribute Conventions"; CF-1.11 sec. 2.5.1. */
static void test_missing_as_land(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_land_missing.nc");
    nc_spec s = base_spec();
    s.has_fill = 1;
    s.fill = -9999.0;
    double v[42];
    fill_wavy(&s, v);
    v[2 * 7 + 3] = NAN;
    v[4 * 7 + 1] = -9999.0;
    write_field(path, "depth", &s, v);
    int ncid, vid;
    double mv = -1.0;
    NC_OK(nc_open(path, NC_WRITE, &ncid));
    NC_OK(nc_inq_varid(ncid, "depth", &vid));
    NC_OK(nc_redef(ncid));
    NC_OK(nc_put_att_double(ncid, vid, "missing_value", NC_DOUBLE, 1, &mv));
    NC_OK(nc_enddef(ncid));
    size_t at[2] = {0, 6};
    NC_OK(nc_put_var1_double(ncid, vid, at, &mv));
    NC_OK(nc_close(ncid));
    v[0 * 7 + 6] = -1.0;

    sw_grid g;
    sw_error err = {0};
    assert_int_equal(sw_ncin_grid(path, "depth", 0.0, &g, &err), SW_OK);
    double out[42];
    unsigned char land[42];
    sw_ncin_options opt = {.missing_land = 1, .land = land};
    assert_int_equal(sw_ncin_read_with(path, "depth", &g, &opt, out, &err), SW_OK);
    for (size_t k = 0; k < 42; k++) {
        int is_land = k == 2 * 7 + 3 || k == 4 * 7 + 1 || k == 0 * 7 + 6;
        assert_int_equal(land[k], is_land ? SW_NCIN_LAND_MISSING : 0);
        assert_near(out[k], is_land ? 0.0 : v[k], 0.0);
    }
    /* without missing_land: the error names the first one in storage order, and the hint */
    opt = (sw_ncin_options){.missing_hint = "say how"};
    assert_int_equal(sw_ncin_read_with(path, "depth", &g, &opt, out, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "depth[0][6] (say how)"));
    /* missing_land needs the land array */
    opt = (sw_ncin_options){.missing_land = 1};
    assert_int_equal(sw_ncin_read_with(path, "depth", &g, &opt, out, &err), SW_ERR_USAGE);

    /* a grid twice as fine (its centres a quarter of a file cell from the file's) */
    sw_grid h = {.nx = 12, .ny = 10, .dx_m = 250.0, .dy_m = 150.0, .x0_m = 1000.0, .y0_m = -200.0};
    double fine[120];
    unsigned char fl[120];
    opt = (sw_ncin_options){.missing_land = 1, .land = fl};
    assert_int_equal(sw_ncin_read_with(path, "depth", &h, &opt, fine, &err), SW_OK);
    for (size_t j = 0; j < h.ny; j++)
        for (size_t i = 0; i < h.nx; i++) {
            double p = (sw_grid_xc(&h, i) - 1000.0) / 500.0, q = (sw_grid_yc(&h, j) + 200.0) / 300.0;
            size_t i0 = (size_t)floor(p), j0 = (size_t)floor(q);
            double a = p - (double)i0, b = q - (double)j0;
            size_t near = (b > 0.5 ? j0 + 1 : j0) * 7 + (a > 0.5 ? i0 + 1 : i0);
            size_t idx[4] = {j0 * 7 + i0, j0 * 7 + i0 + 1, (j0 + 1) * 7 + i0, (j0 + 1) * 7 + i0 + 1};
            double w[4] = {(1 - b) * (1 - a), (1 - b) * a, b * (1 - a), b * a}, sum = 0, ws = 0;
            for (int c = 0; c < 4; c++)
                if (land[idx[c]] == 0) {
                    sum += w[c] * v[idx[c]];
                    ws += w[c];
                }
            size_t k = j * h.nx + i;
            assert_int_equal(fl[k], land[near]);
            assert_near(fine[k], land[near] ? 0.0 : sum / ws, 1e-12);
        }
    /* Inf is never land */
    fill_wavy(&s, v);
    v[3] = INFINITY;
    write_field(path, "depth", &s, v);
    opt = (sw_ncin_options){.missing_land = 1, .land = land};
    assert_int_equal(sw_ncin_read_with(path, "depth", &g, &opt, out, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "depth[0][3]"));
}

/* Land masks: nonzero; flag_values with the meaning "land" (CF-1.11 sec. 3.5); standard_name sea_binary_mask
 * (zero = land; CF standard name table); meanings without land, a missing variable, other dimensions and a
 * missing mask value are errors. The masked cells' own values do not matter. */
static void test_land_mask(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_land_mask.nc");
    double xc[5], yc[4], v[20], m[20];
    fill_axis(xc, 5, 0.0, 10.0);
    fill_axis(yc, 4, 0.0, 10.0);
    for (size_t k = 0; k < 20; k++) {
        v[k] = 50.0 + (double)k;
        m[k] = k % 3 == 0 ? 1.0 : 0.0;
    }
    v[3] = NAN;   /* under the mask (3 % 3 == 0): no error */
    sw_grid g = {.nx = 5, .ny = 4, .dx_m = 10, .dy_m = 10, .x0_m = -5, .y0_m = -5};
    double out[20];
    unsigned char land[20];
    sw_error err = {0};
    static const double flags01[2] = {0, 1}, flags57[2] = {5, 7};
    static const struct { const char *std, *meanings; const double *flags; double one, zero; int want; } cases[] = {
        {NULL, NULL, NULL, 1, 0, 1},                                 /* nonzero = land */
        {NULL, "sea land", flags01, 1, 0, 1},                       /* flag 1 means land */
        {NULL, "land water", flags57, 5, 7, 1},                     /* flag 5 means land */
        {"land_binary_mask", NULL, NULL, 1, 0, 1},
        {"sea_binary_mask", NULL, NULL, 0, 1, 1},                   /* zero = land */
    };
    for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
        double mv[20];
        for (size_t k = 0; k < 20; k++)
            mv[k] = m[k] != 0.0 ? cases[c].one : cases[c].zero;
        gfile f = {.ydim = "y", .xdim = "x", .yc = yc, .xc = xc, .ny = 4, .nx = 5, .yunits = "m", .xunits = "m",
                   .mask = "landmask", .mask_v = mv, .mask_std = cases[c].std, .mask_meanings = cases[c].meanings,
                   .mask_flags = cases[c].flags, .n_flags = cases[c].flags ? 2 : 0};
        write_gfile(path, "depth", &f, v);
        sw_ncin_options opt = {.land_mask = "landmask", .land = land};
        sw_status st = sw_ncin_read_with(path, "depth", &g, &opt, out, &err);
        if (st != SW_OK)
            print_error("case %zu: %s\n", c, err.msg);
        assert_int_equal(st, SW_OK);
        for (size_t k = 0; k < 20; k++) {
            assert_int_equal(land[k], m[k] != 0.0 ? SW_NCIN_LAND_MASK : 0);
            assert_near(out[k], m[k] != 0.0 ? 0.0 : v[k], 0.0);
        }
    }
    /* with missing_land too, a masked missing cell carries both flags */
    gfile f = {.ydim = "y", .xdim = "x", .yc = yc, .xc = xc, .ny = 4, .nx = 5, .yunits = "m", .xunits = "m",
               .mask = "landmask", .mask_v = m};
    write_gfile(path, "depth", &f, v);
    sw_ncin_options opt = {.land_mask = "landmask", .missing_land = 1, .land = land};
    assert_int_equal(sw_ncin_read_with(path, "depth", &g, &opt, out, &err), SW_OK);
    assert_int_equal(land[3], SW_NCIN_LAND_MASK | SW_NCIN_LAND_MISSING);

    /* errors */
    f.mask_meanings = "sea shelf";
    f.mask_flags = flags01;
    f.n_flags = 2;
    write_gfile(path, "depth", &f, v);
    opt = (sw_ncin_options){.land_mask = "landmask", .land = land};
    assert_int_equal(sw_ncin_read_with(path, "depth", &g, &opt, out, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "land mask 'landmask' has flag_meanings without the word 'land'"));
    assert_non_null(strstr(err.msg, path));
    opt.land_mask = "nosuch";
    assert_int_equal(sw_ncin_read_with(path, "depth", &g, &opt, out, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "land mask 'nosuch' not found in the file (2D variables: depth, landmask)"));
    opt.land_mask = "x";
    assert_int_equal(sw_ncin_read_with(path, "depth", &g, &opt, out, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "land mask 'x' must be numbers on the dimensions (y, x) of variable 'depth'"));
    f.mask_meanings = NULL;
    f.n_flags = 0;
    f.mask_fill = 1;
    m[7] = 9.0;   /* the mask's own fill value */
    write_gfile(path, "depth", &f, v);
    opt.land_mask = "landmask";
    assert_int_equal(sw_ncin_read_with(path, "depth", &g, &opt, out, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "variable 'landmask' has a missing or non-finite value at landmask[1][2]"));
    /* NaN outside the mask without missing_land */
    m[7] = 0.0;
    f.mask_fill = 0;
    v[4] = NAN;
    write_gfile(path, "depth", &f, v);
    assert_int_equal(sw_ncin_read_with(path, "depth", &g, &opt, out, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "depth[0][4]"));
}

/* A grid refined over the file's cell extent (what `compare --refine` and a sweep's resolution_factor make)
 * reads it: targets up to half a cell beyond the outer centres take the edge value (the nearest, along the
 * axis they are outside), farther ones are an error; with OUTSIDE_ZERO they stay 0 beyond the centres.
 * Reference: bilinear exactness (Numerical Recipes 3rd ed., sec. 3.6) inside; the clamped position outside
 * [derived]. */
static void test_edge_cells_nearest(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "inputs_edge_cells.nc");
    nc_spec s = base_spec();   /* centres x 1000 .. 4000, y -200 .. 1300; cells x 750 .. 4250, y -350 .. 1450 */
    double v[42];
    for (size_t j = 0; j < s.ny; j++)
        for (size_t i = 0; i < s.nx; i++)
            v[j * s.nx + i] = bilin(s.xc0 + (double)i * s.dx, s.yc0 + (double)j * s.dy);
    write_field(path, "depth", &s, v);
    for (int r = 2; r <= 3; r++) {
        sw_grid g = {.nx = 7 * (size_t)r, .ny = 6 * (size_t)r, .dx_m = 500.0 / r, .dy_m = 300.0 / r, .x0_m = 750.0,
                     .y0_m = -350.0};
        double out[21 * 18];
        sw_error err = {0};
        sw_status st = sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err);
        if (st != SW_OK)
            print_error("%s\n", err.msg);
        assert_int_equal(st, SW_OK);
        for (size_t j = 0; j < g.ny; j++)
            for (size_t i = 0; i < g.nx; i++) {
                double x = fmin(fmax(sw_grid_xc(&g, i), 1000.0), 4000.0);
                double y = fmin(fmax(sw_grid_yc(&g, j), -200.0), 1300.0);
                assert_near(out[j * g.nx + i], bilin(x, y), 1e-12);
            }
        /* OUTSIDE_ZERO (sources) keeps 0 beyond the outer centres */
        assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ZERO, out, NULL, &err), SW_OK);
        assert_near(out[0], 0.0, 0.0);
        assert_near(out[(size_t)r * 7 + 2], bilin(sw_grid_xc(&g, 2), sw_grid_yc(&g, 1)), 1e-12);
    }
    /* a grid reaching 0.6 of a cell beyond the west edge centre */
    sw_grid g = {.nx = 4, .ny = 2, .dx_m = 500.0, .dy_m = 300.0, .x0_m = 450.0, .y0_m = 0.0};
    double out[8];
    sw_error err = {0};
    assert_int_equal(sw_ncin_read(path, "depth", &g, SW_NCIN_OUTSIDE_ERROR, out, NULL, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "does not cover the grid"));
    assert_non_null(strstr(err.msg, "lies outside the file's cells (x 750 .. 4250 m, y -350 .. 1450 m)"));
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
        cmocka_unit_test(test_descending_axes_same_field),
        cmocka_unit_test(test_geographic_axes_grid),
        cmocka_unit_test(test_geographic_bilinear_exact),
        cmocka_unit_test(test_longitude_conventions),
        cmocka_unit_test(test_geographic_bad_inputs),
        cmocka_unit_test(test_missing_as_land),
        cmocka_unit_test(test_land_mask),
        cmocka_unit_test(test_edge_cells_nearest),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
