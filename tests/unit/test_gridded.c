/* test_gridded.c - gridded wind and air pressure read from NetCDF slab by slab (src/forcing/gridded.c):
 * files written by sw_weather_write and by hand through the NetCDF-C API, read back and compared
 * with the analytic fields they were made from.
 *
 * References used by the checks:
 *  - bilinear interpolation reproduces every function in span{1, x, y, xy} exactly (Press et al.,
 *    Numerical Recipes 3rd ed., sec. 3.6, eq. 3.6.5 is linear in t, u and tu) [derived for the linear
 *    fields used here];
 *  - 1 hPa = 1 mbar = 100 Pa (SI prefixes, 1 bar = 1e5 Pa); 1 knot = 1852 m / 3600 s (the
 *    international nautical mile is 1852 m exactly) [exact definitions];
 *  - Gregorian calendar: a year divisible by 4 is a leap year, except centuries not divisible by 400
 *    [exact definition]; 1970-01-01 to 2000-01-01 is 30 * 365 + 7 = 10957 days (leap years 1972 .. 1996)
 *    [derived];
 *  - CF Conventions 1.11: sec. 4.4 (time units "UNIT since DATE", calendars), 8.1 (scale_factor,
 *    add_offset), 2.5.1 (_FillValue, missing_value); NetCDF Users Guide, "Attribute Conventions".
 */
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>

#include <math.h>
#include <netcdf.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

#include "forcing/gridded.h"
#include "testutil.h"

#define NC_OK(call) assert_int_equal((call), NC_NOERR)
#define KNOT (1852.0 / 3600.0)   /* m/s per knot [exact definition] */

static const char CAUTION[] = "Fictional test weather: not a forecast.";

/* |got - want| <= tol, reporting both values (this cmocka has no assert_double_equal). */
#define assert_near(got, want, tol) near_check((got), (want), (tol), __FILE__, __LINE__)
static void near_check(double got, double want, double tol, const char *file, int line)
{
    if (!(fabs(got - want) <= tol)) {
        print_error("%.17g != %.17g (tolerance %g)\n", got, want, tol);
        _fail(file, line);
    }
}

/* The message holds every one of the NULL-terminated fragments (printing it when not). */
#define assert_msg(err, ...) msg_check((err)->msg, __FILE__, __LINE__, __VA_ARGS__, (const char *)NULL)
static void msg_check(const char *msg, const char *file, int line, ...)
{
    va_list ap;
    va_start(ap, line);
    for (const char *frag; (frag = va_arg(ap, const char *)) != NULL;)
        if (!strstr(msg, frag)) {
            print_error("message \"%s\"\n  lacks \"%s\"\n", msg, frag);
            va_end(ap);
            _fail(file, line);
            return;
        }
    va_end(ap);
}

static int exists(const char *path)
{
    struct stat st;
    return stat(path, &st) == 0;
}

static double clampd(double x, double lo, double hi) { return x < lo ? lo : x > hi ? hi : x; }

/* ---- a file from the writer: fields linear in x and y ------------------------------------------ */

/* The analytic fields of slab k: node values (x multiple of 1000 m, y of 2000 m) are exact in float. */
static double lin_p(double x, double y, size_t k) { return 100000.0 + 0.002 * x + 0.003 * y - 0.5 * (double)k; }
static double lin_u(double x, double y, size_t k) { return 5.0 + 0.00025 * x - 0.00025 * y + (double)k; }
static double lin_v(double x, double y, size_t k) { return -3.0 + 0.000125 * x + 0.000375 * y - 0.25 * (double)k; }

static sw_status fill_linear(void *ctx, size_t k, double time_s, const sw_grid *g, float *p, float *u, float *v,
                             sw_error *err)
{
    (void)ctx;
    (void)time_s;
    (void)err;
    for (size_t j = 0; j < g->ny; j++)
        for (size_t i = 0; i < g->nx; i++) {
            double x = sw_grid_xc(g, i), y = sw_grid_yc(g, j);
            p[j * g->nx + i] = (float)lin_p(x, y, k);
            u[j * g->nx + i] = (float)lin_u(x, y, k);
            v[j * g->nx + i] = (float)lin_v(x, y, k);
        }
    return SW_OK;
}

/* File grid: centres x = 0, 1000 .. 8000 m, y = 0, 2000 .. 12000 m. */
static const sw_grid FILE_GRID = {.nx = 9, .ny = 7, .dx_m = 1000.0, .dy_m = 2000.0, .x0_m = -500.0, .y0_m = -1000.0};
/* Model grid inside it: centres x 200 .. 7400 m, y 475 .. 10925 m. */
static const sw_grid MODEL_GRID = {.nx = 37, .ny = 20, .dx_m = 200.0, .dy_m = 550.0, .x0_m = 100.0, .y0_m = 200.0};
static const double TIMES4[4] = {0.0, 3600.0, 7200.0, 10800.0};

static void write_linear(const char *path)
{
    sw_error err = {0};
    sw_status st = sw_weather_write(path, &FILE_GRID, TIMES4, 4, "2000-01-01 00:00:00", "Fictional test storm",
                                    CAUTION, fill_linear, NULL, &err);
    if (st != SW_OK)
        print_error("%s\n", err.msg);
    assert_int_equal(st, SW_OK);
}

/* Points (in, on the edges and outside the file's extent) and rows (fine, coarse, beyond both ends)
 * of slab 2 against the analytic field, bilinear being exact for it. Outside the extent the value at
 * the edge is expected (constant extrapolation). */
static void test_written_file_read_back_exactly(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "gridded_linear.nc");
    write_linear(path);
    char part[600];
    snprintf(part, sizeof part, "%s.part", path);
    assert_false(exists(part));

    sw_weather *w = NULL;
    sw_error err = {0};
    sw_status st = sw_weather_open(path, "2000-01-01 00:00:00", &MODEL_GRID, &w, &err);
    if (st != SW_OK)
        print_error("%s\n", err.msg);
    assert_int_equal(st, SW_OK);
    assert_int_equal(sw_weather_count(w), 4);
    for (size_t k = 0; k < 4; k++)
        assert_near(sw_weather_time(w, k), TIMES4[k], 0.0);
    size_t nx, ny;
    sw_weather_size(w, &nx, &ny);
    assert_int_equal(nx, 9);
    assert_int_equal(ny, 7);
    assert_string_equal(sw_weather_path(w), path);

    sw_weather_slab s;
    assert_int_equal(sw_weather_slab_alloc(w, &s, &err), SW_OK);
    assert_int_equal(sw_weather_read(w, 2, &s, &err), SW_OK);
    assert_int_equal(s.index, 2);
    assert_near(s.time_s, 7200.0, 0.0);
    /* node values are the written floats, exactly */
    assert_near(s.p[3 * 9 + 4], lin_p(4000.0, 6000.0, 2), 0.0);
    assert_near(s.u[3 * 9 + 4], lin_u(4000.0, 6000.0, 2), 0.0);
    assert_near(s.v[6 * 9 + 8], lin_v(8000.0, 12000.0, 2), 0.0);

    /* points: inside, on nodes and edges, and beyond the extent (clamped) */
    static const double pts[][2] = {{0.0, 0.0},        {8000.0, 12000.0}, {1234.5, 5678.9}, {7999.99, 1.0},
                                    {4000.0, 6000.0},  {3333.3, 11999.0}, {-300.0, 500.0},  {8400.0, 12500.0},
                                    {2500.0, -1000.0}, {123.0, 13000.0}};
    for (size_t m = 0; m < sizeof pts / sizeof pts[0]; m++) {
        double x = pts[m][0], y = pts[m][1], xc = clampd(x, 0.0, 8000.0), yc = clampd(y, 0.0, 12000.0);
        double p, u, v;
        sw_weather_point(w, &s, x, y, &p, &u, &v);
        assert_near(p, lin_p(xc, yc, 2), 1e-9);
        assert_near(u, lin_u(xc, yc, 2), 1e-12);
        assert_near(v, lin_v(xc, yc, 2), 1e-12);
    }

    /* rows: (x0, dx, n), every model row; floats: p to half an ulp at 1e5 (0.004 Pa) plus the sums */
    static const double rows[][3] = {{200.0, 200.0, 37},  {-700.0, 450.0, 22}, {0.0, 3100.0, 4},
                                     {13.0, 7.3, 1100},   {7990.0, 1.0, 30},   {-50.0, 1e4, 3},
                                     {8500.0, 10.0, 5},   {999.9999, 1000.0, 9}};
    float pr[1100], ur[1100], vr[1100];
    for (size_t r = 0; r < sizeof rows / sizeof rows[0]; r++)
        for (size_t j = 0; j < MODEL_GRID.ny + 2; j++) {
            double y = j < MODEL_GRID.ny ? sw_grid_yc(&MODEL_GRID, j) : j == MODEL_GRID.ny ? -400.0 : 12345.0;
            double x0 = rows[r][0], dx = rows[r][1];
            size_t n = (size_t)rows[r][2];
            sw_weather_row(w, &s, y, x0, dx, n, pr, ur, vr);
            for (size_t i = 0; i < n; i++) {
                double x = clampd(x0 + (double)i * dx, 0.0, 8000.0), yc = clampd(y, 0.0, 12000.0);
                assert_near(pr[i], lin_p(x, yc, 2), 0.01);
                assert_near(ur[i], lin_u(x, yc, 2), 2e-6);
                assert_near(vr[i], lin_v(x, yc, 2), 2e-6);
            }
        }
    /* a NULL output is skipped; the others are the same */
    float only_p[37];
    sw_weather_row(w, &s, 3000.0, 200.0, 200.0, 37, pr, ur, vr);
    sw_weather_row(w, &s, 3000.0, 200.0, 200.0, 37, only_p, NULL, NULL);
    assert_memory_equal(only_p, pr, sizeof only_p);
    /* n = 0 writes nothing; a decreasing row is served point by point */
    sw_weather_row(w, &s, 3000.0, 200.0, 200.0, 0, NULL, NULL, NULL);
    sw_weather_row(w, &s, 3000.0, 7000.0, -250.0, 20, pr, ur, vr);
    for (size_t i = 0; i < 20; i++)
        assert_near(pr[i], lin_p(7000.0 - 250.0 * (double)i, 3000.0, 2), 0.01);

    /* another slab into the same arrays */
    assert_int_equal(sw_weather_read(w, 0, &s, &err), SW_OK);
    double p;
    sw_weather_point(w, &s, 1500.0, 2500.0, &p, NULL, NULL);
    assert_near(p, lin_p(1500.0, 2500.0, 0), 1e-9);
    assert_int_equal(sw_weather_read(w, 4, &s, &err), SW_ERR_USAGE);
    assert_msg(&err, path, "slab 4");

    sw_weather_slab_free(&s);
    sw_weather_slab_free(&s);   /* twice is fine */
    sw_weather_close(w);
    sw_weather_close(NULL);
}

/* The writer's CF description: standard names, units, _FillValue, axes, time units, globals. */
static void test_written_file_attributes(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "gridded_attrs.nc");
    write_linear(path);
    int ncid, id;
    NC_OK(nc_open(path, NC_NOWRITE, &ncid));
    char text[512];
    size_t len;
    static const char *const checks[][3] = {
        {NULL, "Conventions", "CF-1.11"},
        {NULL, "title", "Fictional test storm"},
        {NULL, "caution", CAUTION},
        {"time", "units", "seconds since 2000-01-01 00:00:00"},
        {"time", "axis", "T"},
        {"x", "axis", "X"},
        {"x", "units", "m"},
        {"y", "axis", "Y"},
        {"eastward_wind_10m", "standard_name", "eastward_wind"},
        {"eastward_wind_10m", "units", "m s-1"},
        {"northward_wind_10m", "standard_name", "northward_wind"},
        {"air_pressure_msl", "standard_name", "air_pressure_at_mean_sea_level"},
        {"air_pressure_msl", "units", "Pa"},
        {"air_pressure_msl", "long_name", "air pressure at mean sea level"},
    };
    for (size_t m = 0; m < sizeof checks / sizeof checks[0]; m++) {
        id = NC_GLOBAL;
        if (checks[m][0])
            NC_OK(nc_inq_varid(ncid, checks[m][0], &id));
        NC_OK(nc_inq_attlen(ncid, id, checks[m][1], &len));
        assert_true(len < sizeof text);
        NC_OK(nc_get_att_text(ncid, id, checks[m][1], text));
        text[len] = '\0';
        assert_string_equal(text, checks[m][2]);
    }
    /* _FillValue: the NetCDF default of float, 9.96921e+36f (NetCDF Users Guide, "Fill Values") */
    float fill;
    NC_OK(nc_inq_varid(ncid, "air_pressure_msl", &id));
    NC_OK(nc_get_att_float(ncid, id, "_FillValue", &fill));
    assert_true(fill == 9.96921e+36f);
    /* the x axis holds the file grid's cell centres */
    double xs[9];
    NC_OK(nc_inq_varid(ncid, "x", &id));
    NC_OK(nc_get_var_double(ncid, id, xs));
    for (size_t i = 0; i < 9; i++)
        assert_near(xs[i], 1000.0 * (double)i, 0.0);
    /* one slab per chunk, so that a read touches one slab */
    size_t chunks[3];
    int storage;
    NC_OK(nc_inq_varid(ncid, "eastward_wind_10m", &id));
    NC_OK(nc_inq_var_chunking(ncid, id, &storage, chunks));
    assert_int_equal(storage, NC_CHUNKED);
    assert_int_equal(chunks[0], 1);
    NC_OK(nc_close(ncid));
}

/* ---- a file by hand: uneven axes, km, hPa, knots, packing ------------------------------------ */

/* What the hand-written file holds; hand_spec_default() is a good file. */
typedef struct {
    const char *u_units, *v_units, *p_units;   /* NULL: no units attribute */
    const char *p_standard_name;               /* of the pressure variable */
    int p_2d;                                  /* pressure on (y, x) only */
    int transposed;                            /* 1: the variables on (time, x, y), axes marked;
                                                * 2: only the winds */
    const char *time_units;                    /* NULL: none */
    const char *calendar;                      /* NULL: none */
    const char *x_units;                       /* of x (in m values); y is written in km */
    size_t nt;
    double times[6];                           /* in the file's time units */
    int fill_slab;                             /* >= 0: pressure slab with a _FillValue at [fill_j][fill_i] */
    size_t fill_j, fill_i;
    int nan_u_slab;                            /* >= 0: u (double) slab with a NaN at [0][1] */
} hand_spec;

#define HNX 5
#define HNY 4
static const double HX[HNX] = {0.0, 1000.0, 3000.0, 3500.0, 6000.0}; /* m */
static const double HY_KM[HNY] = {0.0, 2.0, 3.0, 7.0};              /* km */

static hand_spec hand_spec_default(void)
{
    hand_spec h = {.u_units = "knots", .v_units = "kt", .p_units = "hPa",
                   .p_standard_name = "air_pressure_at_mean_sea_level",
                   .time_units = "hours since 2024-02-28 00:00:00", .x_units = "m",
                   .nt = 4, .times = {0.0, 24.0, 48.0, 72.0}, .fill_slab = -1, .nan_u_slab = -1};
    return h;
}

/* The hand file's fields at (x, y) m in slab k, in the file's units (node values exact in float). */
static double hand_p_hpa(double x, double y, size_t k) { return 1000.0 + 0.001 * x - 0.0005 * y + (double)k; }
static double hand_u_kn(double x, double y, size_t k) { return 10.0 + 0.002 * x + 0.001 * y - (double)k; }
static double hand_v_kn(double x, double y, size_t k) { return 1.0 + x / 500.0 + y / 1000.0 + 2.0 * (double)k; }

static void put_text(int ncid, int id, const char *att, const char *text)
{
    if (text)
        NC_OK(nc_put_att_text(ncid, id, att, strlen(text), text));
}

/* Writes the hand file: u double in knots, v packed short (scale 0.5, offset 1) in kt, p float in hPa
 * with _FillValue -999; x in m, y in km, both uneven. */
static void write_hand(const char *path, const hand_spec *h)
{
    int ncid, dt, dy, dx, vt, vx, vy, vu, vv, vp;
    NC_OK(nc_create(path, NC_CLOBBER | NC_NETCDF4, &ncid));
    NC_OK(nc_def_dim(ncid, "t", h->nt, &dt));
    NC_OK(nc_def_dim(ncid, "northing", HNY, &dy));
    NC_OK(nc_def_dim(ncid, "easting", HNX, &dx));
    NC_OK(nc_def_var(ncid, "t", NC_DOUBLE, 1, &dt, &vt));
    NC_OK(nc_def_var(ncid, "northing", NC_DOUBLE, 1, &dy, &vy));
    NC_OK(nc_def_var(ncid, "easting", NC_DOUBLE, 1, &dx, &vx));
    put_text(ncid, vt, "units", h->time_units);
    put_text(ncid, vt, "calendar", h->calendar);
    put_text(ncid, vx, "units", h->x_units);
    put_text(ncid, vy, "units", "km");
    if (h->transposed) {
        put_text(ncid, vx, "axis", "X");
        put_text(ncid, vy, "axis", "Y");
    }
    int d3[3] = {dt, dy, dx};
    if (h->transposed) {
        d3[1] = dx;
        d3[2] = dy;
    }
    NC_OK(nc_def_var(ncid, "gust_e", NC_DOUBLE, 3, d3, &vu));
    NC_OK(nc_def_var(ncid, "gust_n", NC_SHORT, 3, d3, &vv));
    int d2[2] = {dy, dx}, dp[3] = {dt, dy, dx};
    if (h->transposed == 1)
        memcpy(dp, d3, sizeof dp);
    NC_OK(nc_def_var(ncid, "slp", NC_FLOAT, h->p_2d ? 2 : 3, h->p_2d ? d2 : dp, &vp));
    put_text(ncid, vu, "standard_name", "eastward_wind");
    put_text(ncid, vv, "standard_name", "northward_wind");
    put_text(ncid, vp, "standard_name", h->p_standard_name);
    put_text(ncid, vu, "units", h->u_units);
    put_text(ncid, vv, "units", h->v_units);
    put_text(ncid, vp, "units", h->p_units);
    double scale = 0.5, offset = 1.0;
    NC_OK(nc_put_att_double(ncid, vv, "scale_factor", NC_DOUBLE, 1, &scale));
    NC_OK(nc_put_att_double(ncid, vv, "add_offset", NC_DOUBLE, 1, &offset));
    float pfill = -999.0f;
    NC_OK(nc_def_var_fill(ncid, vp, 0, &pfill));
    NC_OK(nc_enddef(ncid));

    double y_m[HNY];
    for (size_t j = 0; j < HNY; j++)
        y_m[j] = 1000.0 * HY_KM[j];
    NC_OK(nc_put_var_double(ncid, vt, h->times));
    NC_OK(nc_put_var_double(ncid, vx, HX));
    NC_OK(nc_put_var_double(ncid, vy, HY_KM));
    for (size_t k = 0; k < h->nt; k++) {
        double u[HNY * HNX];
        short v[HNY * HNX];
        float p[HNY * HNX];
        for (size_t j = 0; j < HNY; j++)
            for (size_t i = 0; i < HNX; i++) {
                size_t m = h->transposed ? i * HNY + j : j * HNX + i;
                u[m] = hand_u_kn(HX[i], y_m[j], k);
                v[m] = (short)((hand_v_kn(HX[i], y_m[j], k) - 1.0) / 0.5);
                p[h->transposed == 1 ? m : j * HNX + i] = (float)hand_p_hpa(HX[i], y_m[j], k);
            }
        if ((int)k == h->fill_slab)
            p[h->fill_j * HNX + h->fill_i] = -999.0f;
        if ((int)k == h->nan_u_slab)
            u[1] = NAN;
        size_t s3[3] = {k, 0, 0}, c3[3] = {1, h->transposed ? HNX : HNY, h->transposed ? HNY : HNX};
        NC_OK(nc_put_vara_double(ncid, vu, s3, c3, u));
        NC_OK(nc_put_vara_short(ncid, vv, s3, c3, v));
        if (!h->p_2d) {
            size_t cp[3] = {1, h->transposed == 1 ? HNX : HNY, h->transposed == 1 ? HNY : HNX};
            NC_OK(nc_put_vara_float(ncid, vp, s3, cp, p));
        } else if (k == 0) {
            NC_OK(nc_put_var_float(ncid, vp, p));
        }
    }
    NC_OK(nc_close(ncid));
}

/* A model grid inside the hand file's extent (x 0 .. 6000 m, y 0 .. 7000 m): centres x 150 .. 5850,
 * y 250 .. 6750. */
static const sw_grid HAND_MODEL = {.nx = 20, .ny = 14, .dx_m = 300.0, .dy_m = 500.0, .x0_m = 0.0, .y0_m = 0.0};

/* hPa -> Pa and knots -> m/s, packed values unpacked, on uneven axes (binary search), km -> m. */
static void test_units_converted(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "gridded_hand.nc");
    hand_spec h = hand_spec_default();
    write_hand(path, &h);
    sw_weather *w = NULL;
    sw_error err = {0};
    sw_status st = sw_weather_open(path, "2024-02-28 00:00:00", &HAND_MODEL, &w, &err);
    if (st != SW_OK)
        print_error("%s\n", err.msg);
    assert_int_equal(st, SW_OK);
    sw_weather_slab s;
    assert_int_equal(sw_weather_slab_alloc(w, &s, &err), SW_OK);
    assert_int_equal(sw_weather_read(w, 1, &s, &err), SW_OK);
    /* a node: 1 hPa = 100 Pa, 1 kn = 1852/3600 m/s [exact definitions] */
    assert_near(s.p[2 * HNX + 3], 100.0 * hand_p_hpa(3500.0, 3000.0, 1), 1e-9);
    assert_near(s.u[2 * HNX + 3], KNOT * hand_u_kn(3500.0, 3000.0, 1), 1e-6);
    assert_near(s.v[2 * HNX + 3], KNOT * hand_v_kn(3500.0, 3000.0, 1), 1e-6);
    /* points between uneven nodes */
    static const double pts[][2] = {{2999.0, 6999.0}, {3200.0, 2100.0}, {100.0, 10.0}, {5999.0, 4000.0},
                                    {3500.0, 3000.0}, {1000.0, 2000.0}};
    for (size_t m = 0; m < sizeof pts / sizeof pts[0]; m++) {
        double x = pts[m][0], y = pts[m][1], p, u, v;
        sw_weather_point(w, &s, x, y, &p, &u, &v);
        assert_near(p, 100.0 * hand_p_hpa(x, y, 1), 1e-8);
        assert_near(u, KNOT * hand_u_kn(x, y, 1), 1e-6);
        assert_near(v, KNOT * hand_v_kn(x, y, 1), 1e-6);
    }
    /* every model row, and a row finer than the file with points on every node */
    float pr[601], ur[601], vr[601];
    for (size_t j = 0; j < HAND_MODEL.ny; j++) {
        double y = sw_grid_yc(&HAND_MODEL, j);
        sw_weather_row(w, &s, y, sw_grid_xc(&HAND_MODEL, 0), HAND_MODEL.dx_m, HAND_MODEL.nx, pr, ur, vr);
        for (size_t i = 0; i < HAND_MODEL.nx; i++) {
            double x = sw_grid_xc(&HAND_MODEL, i);
            assert_near(pr[i], 100.0 * hand_p_hpa(x, y, 1), 0.01);
            assert_near(ur[i], KNOT * hand_u_kn(x, y, 1), 1e-5);
            assert_near(vr[i], KNOT * hand_v_kn(x, y, 1), 1e-5);
        }
    }
    sw_weather_row(w, &s, 6999.0, 0.0, 10.0, 601, pr, ur, vr);
    for (size_t i = 0; i < 601; i++) {
        double x = 10.0 * (double)i;
        assert_near(pr[i], 100.0 * hand_p_hpa(x, 6999.0, 1), 0.01);
        assert_near(ur[i], KNOT * hand_u_kn(x, 6999.0, 1), 1e-5);
    }
    sw_weather_slab_free(&s);
    sw_weather_close(w);

    /* other spellings of the same units */
    static const char *const winds[] = {"m s-1", "m/s", "m s**-1", "knots", "kt", "kn", "M S-1"};
    static const double wind_f[] = {1.0, 1.0, 1.0, KNOT, KNOT, KNOT, 1.0};
    static const char *const press[] = {"Pa", "hPa", "mbar", "millibar", "Pa", "hPa", "mbar"};
    static const double press_f[] = {1.0, 100.0, 100.0, 100.0, 1.0, 100.0, 100.0};
    for (size_t m = 0; m < sizeof winds / sizeof winds[0]; m++) {
        h.u_units = winds[m];
        h.p_units = press[m];
        write_hand(path, &h);
        st = sw_weather_open(path, "2024-02-28 00:00:00", &HAND_MODEL, &w, &err);
        if (st != SW_OK)
            print_error("%s\n", err.msg);
        assert_int_equal(st, SW_OK);
        assert_int_equal(sw_weather_slab_alloc(w, &s, &err), SW_OK);
        assert_int_equal(sw_weather_read(w, 0, &s, &err), SW_OK);
        assert_near(s.u[7], wind_f[m] * hand_u_kn(HX[2], 2000.0, 0), 1e-5);
        assert_near(s.p[7], press_f[m] * hand_p_hpa(HX[2], 2000.0, 0), 1e-9);
        sw_weather_slab_free(&s);
        sw_weather_close(w);
    }
}

/* ---- time ---------------------------------------------------------------------------------------- */

/* The file's times in seconds since another origin, across leap days and in every unit. */
static void test_time_conversion(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "gridded_time.nc");
    hand_spec h = hand_spec_default();
    sw_error err = {0};
    sw_weather *w = NULL;
    /* 2024-02-28 00:00 + 0, 24, 48, 72 h since 2024-03-01 00:00: 2024 is a leap year, so Feb 29 lies
     * between and the origin is 2 days = 172800 s after the reference [Gregorian rule] */
    write_hand(path, &h);
    assert_int_equal(sw_weather_open(path, "2024-03-01 00:00:00", &HAND_MODEL, &w, &err), SW_OK);
    static const double want[4] = {-172800.0, -86400.0, 0.0, 86400.0};
    for (size_t k = 0; k < 4; k++)
        assert_near(sw_weather_time(w, k), want[k], 0.0);
    /* locate: the pair around a time, clamped at both ends */
    assert_int_equal(sw_weather_locate(w, -1e9), 0);
    assert_int_equal(sw_weather_locate(w, -172800.0), 0);
    assert_int_equal(sw_weather_locate(w, -100000.0), 0);
    assert_int_equal(sw_weather_locate(w, -86400.0), 1);
    assert_int_equal(sw_weather_locate(w, 3600.0), 2);
    assert_int_equal(sw_weather_locate(w, 86400.0), 2);
    assert_int_equal(sw_weather_locate(w, 1e9), 2);
    /* covers */
    assert_int_equal(sw_weather_covers(w, -172800.0, 86400.0, &err), SW_OK);
    assert_int_equal(sw_weather_covers(w, 0.0, 90000.0, &err), SW_ERR_INPUT);
    assert_msg(&err, path, "the file covers -172800 .. 86400 s (2024-02-28 00:00:00 .. 2024-03-02 00:00:00)",
               "the run needs 0 .. 90000 s (2024-03-01 00:00:00 .. 2024-03-02 01:00:00)");
    sw_weather_close(w);

    /* {time units, the file's value of slab 0, origin, seconds expected} */
    static const struct {
        const char *units;
        double t0;
        const char *origin;
        double want_s;
    } cases[] = {
        /* 2023 is not a leap year: one day from Feb 28 to Mar 1 */
        {"hours since 2023-02-28 00:00:00", 0.0, "2023-03-01 00:00:00", -86400.0},
        /* 2100 is a century not divisible by 400: not a leap year */
        {"days since 2100-02-28", 1.0, "2100-03-01 00:00:00", 0.0},
        /* 2000 is divisible by 400: a leap year, Feb 29 exists */
        {"days since 2000-02-28", 2.0, "2000-03-01 00:00:00", 0.0},
        /* 10957 days from 1970-01-01 to 2000-01-01 [derived] */
        {"days since 1970-01-01 00:00:00", 10957.0, "2000-01-01 00:00:00", 0.0},
        {"minutes since 2000-01-01T06:30Z", 30.0, "2000-01-01 00:00:00", 7.0 * 3600.0},
        {"seconds since 1999-12-31 23:59:59", 1.0, "2000-01-01 00:00:00", 0.0},
        {"hours since 2000-01-01 12:00:00 +02:00", 0.0, "2000-01-01 00:00:00", 10.0 * 3600.0},
        {"hour since 2000-1-1 0:0:0", 1.5, "2000-01-01 00:00:00", 5400.0},
    };
    for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
        h.time_units = cases[c].units;
        for (size_t k = 0; k < h.nt; k++)
            h.times[k] = cases[c].t0 + (double)k;
        write_hand(path, &h);
        sw_status st = sw_weather_open(path, cases[c].origin, &HAND_MODEL, &w, &err);
        if (st != SW_OK)
            print_error("case %zu: %s\n", c, err.msg);
        assert_int_equal(st, SW_OK);
        assert_near(sw_weather_time(w, 0), cases[c].want_s, 1e-6);
        sw_weather_close(w);
    }

    /* the writer's own origin differs from the reader's: 2024-02-28 12:00 is 36 h before 2024-03-01 */
    tu_tmp_path(path, sizeof path, "gridded_time_w.nc");
    assert_int_equal(sw_weather_write(path, &FILE_GRID, TIMES4, 4, "2024-02-28 12:00:00", "Fictional", NULL,
                                      fill_linear, NULL, &err), SW_OK);
    assert_int_equal(sw_weather_open(path, "2024-03-01 00:00:00", &MODEL_GRID, &w, &err), SW_OK);
    for (size_t k = 0; k < 4; k++)
        assert_near(sw_weather_time(w, k), TIMES4[k] - 36.0 * 3600.0, 0.0);
    sw_weather_close(w);

    /* a malformed origin is the caller's error */
    assert_int_equal(sw_weather_open(path, "2024-02-30 00:00:00", &MODEL_GRID, &w, &err), SW_ERR_USAGE);
    assert_msg(&err, path, "time origin '2024-02-30 00:00:00'", "YYYY-MM-DD HH:MM:SS");
    assert_null(w);
}

/* ---- memory ------------------------------------------------------------------------------------- */

static long peak_rss_kb(void)
{
    struct rusage ru;
    getrusage(RUSAGE_SELF, &ru);
    return ru.ru_maxrss;   /* kilobytes on Linux */
}

/* The child's side of test_memory_stays_at_a_few_slabs: reads every slab of path, then (control) one
 * whole variable; prints the figures. Returns 0 when both behave as expected, else a code > 0. */
static int memory_child(const char *path, size_t nt, const sw_grid *model)
{
    sw_weather *w = NULL;
    sw_error err = {0};
    if (sw_weather_open(path, "2000-01-01 00:00:00", model, &w, &err) != SW_OK) {
        print_error("%s\n", err.msg);
        return 2;
    }
    sw_weather_slab s;
    if (sw_weather_slab_alloc(w, &s, &err) != SW_OK)
        return 3;
    float row[49];
    long start = peak_rss_kb();
    for (size_t k = 0; k < 10; k++)
        if (sw_weather_read(w, k, &s, &err) != SW_OK)
            return 4;
    long first = peak_rss_kb();
    double sum = 0.0;
    for (size_t k = 0; k < nt; k++) {
        if (sw_weather_read(w, k, &s, &err) != SW_OK)
            return 4;
        sw_weather_row(w, &s, 20000.0, 1000.0, 1000.0, 49, row, NULL, NULL);
        sum += row[0];
    }
    long after = peak_rss_kb();
    int bad = s.u[0] != (float)lin_u(500.0, 500.0, nt - 1);   /* the last slab, exactly as written */
    sw_weather_slab_free(&s);
    sw_weather_close(w);

    /* control: the whole variable at once, through the library directly */
    int ncid, id;
    float *all = malloc(nt * 50 * 40 * sizeof *all);
    if (!all || nc_open(path, NC_NOWRITE, &ncid) != NC_NOERR ||
        nc_inq_varid(ncid, "air_pressure_msl", &id) != NC_NOERR || nc_get_var_float(ncid, id, all) != NC_NOERR ||
        nc_close(ncid) != NC_NOERR)
        return 5;
    sum += all[0];
    long control = peak_rss_kb();
    free(all);
    print_message("memory: peak RSS %ld kB at the start, %ld kB after 10 slabs, %ld kB after all %zu (+%ld kB); "
                  "after reading one whole variable (%zu kB) as a control: %ld kB (+%ld kB); checksum %g\n", start,
                  first, after, nt, after - first, nt * 50 * 40 * 4 / 1000, control, control - after, sum);
#if defined(__SANITIZE_ADDRESS__)
    print_message("memory: AddressSanitizer build (freed memory is quarantined): figures not checked\n");
    return bad;
#else
    if (after - first >= 2048)
        return 6;
    if (control - after <= 4096)   /* the measure must see a whole variable */
        return 7;
    return bad;
#endif
}

/* Reading 800 slabs one by one keeps the peak resident memory within 2 MB of what the first slabs
 * took, where the whole of the three variables is 800 * 50 * 40 * 4 * 3 = 19.2 MB; a control read of
 * one whole variable (6.4 MB) shows the measure sees it. Writing and reading run in forked children:
 * a child's peak starts at its parent's current size, not at the parent's earlier peak. */
static void test_memory_stays_at_a_few_slabs(void **state)
{
    (void)state;
    enum { NT = 800 };
    static const sw_grid g = {.nx = 50, .ny = 40, .dx_m = 1000.0, .dy_m = 1000.0, .x0_m = 0.0, .y0_m = 0.0};
    static const sw_grid model = {.nx = 49, .ny = 39, .dx_m = 1000.0, .dy_m = 1000.0, .x0_m = 500.0, .y0_m = 500.0};
    double *times = malloc(NT * sizeof *times);
    assert_non_null(times);
    for (size_t k = 0; k < NT; k++)
        times[k] = 600.0 * (double)k;
    char path[512];
    tu_tmp_path(path, sizeof path, "gridded_long.nc");
    /* the file is written in a child too: the memory the writer frees stays in this process's heap,
     * where the reader would reuse it unseen */
    fflush(NULL);
    pid_t pid = fork();
    assert_true(pid >= 0);
    if (pid == 0) {
        sw_error err = {0};
        sw_status st = sw_weather_write(path, &g, times, NT, "2000-01-01 00:00:00", "Fictional long record", CAUTION,
                                        fill_linear, NULL, &err);
        if (st != SW_OK)
            print_error("%s\n", err.msg);
        fflush(NULL);
        _exit(st == SW_OK ? 0 : 1);
    }
    int status = 0;
    assert_int_equal(waitpid(pid, &status, 0), pid);
    assert_true(WIFEXITED(status) && WEXITSTATUS(status) == 0);
    free(times);

    fflush(NULL);
    pid = fork();
    assert_true(pid >= 0);
    if (pid == 0) {
        int code = memory_child(path, NT, &model);
        fflush(NULL);
        _exit(code);
    }
    assert_int_equal(waitpid(pid, &status, 0), pid);
    assert_true(WIFEXITED(status));
    if (WEXITSTATUS(status) != 0)
        print_error("memory child: code %d (6: slabs grew the peak by 2 MB or more, 7: the control was not "
                    "seen)\n", WEXITSTATUS(status));
    assert_int_equal(WEXITSTATUS(status), 0);
}

/* ---- bad inputs -------------------------------------------------------------------------------- */

/* Writes the hand file h and opens it on HAND_MODEL; expects `code`. */
static void open_hand_fails(const hand_spec *h, const char *name, sw_status code, sw_error *err)
{
    char path[512];
    tu_tmp_path(path, sizeof path, name);
    write_hand(path, h);
    sw_weather *w = (sw_weather *)&w;   /* any non-NULL value: open must set it to NULL */
    sw_status st = sw_weather_open(path, "2024-02-28 00:00:00", &HAND_MODEL, &w, err);
    if (st != code)
        print_error("%s: %s\n", name, err->msg);
    assert_int_equal(st, code);
    assert_null(w);
    assert_msg(err, path);
}

static void test_bad_files_named(void **state)
{
    (void)state;
    sw_error err = {0};
    hand_spec h;

    /* a missing variable: the standard names looked for */
    h = hand_spec_default();
    h.p_standard_name = "air_pressure";
    open_hand_fails(&h, "gridded_bad_var.nc", SW_ERR_INPUT, &err);
    assert_msg(&err, "no variable has standard_name 'air_pressure_at_mean_sea_level'", "eastward_wind",
               "northward_wind", "slp");

    /* units missing, units unknown */
    h = hand_spec_default();
    h.u_units = NULL;
    open_hand_fails(&h, "gridded_bad_nounits.nc", SW_ERR_INPUT, &err);
    assert_msg(&err, "variable 'gust_e' (eastward_wind) has no units attribute", "accepted: m s-1", "knots");
    h = hand_spec_default();
    h.p_units = "inHg";
    open_hand_fails(&h, "gridded_bad_units.nc", SW_ERR_INPUT, &err);
    assert_msg(&err, "variable 'slp' (air_pressure_at_mean_sea_level) has units 'inHg'", "accepted: Pa, hPa, mbar");

    /* a non-increasing time */
    h = hand_spec_default();
    h.times[2] = 24.0;
    open_hand_fails(&h, "gridded_bad_time.nc", SW_ERR_INPUT, &err);
    assert_msg(&err, "time axis 't' is not strictly increasing", "t[2] = 24 is not after t[1] = 24");

    /* time units not "UNIT since DATE" */
    h = hand_spec_default();
    h.time_units = "hours";
    open_hand_fails(&h, "gridded_bad_tunits.nc", SW_ERR_INPUT, &err);
    assert_msg(&err, "time axis 't' (the first of the variables' dimensions (time, y, x)) has units 'hours'",
               "UNIT since YYYY-MM-DD");
    h.time_units = "fortnights since 2000-01-01";
    open_hand_fails(&h, "gridded_bad_tunits.nc", SW_ERR_INPUT, &err);
    assert_msg(&err, "units 'fortnights since 2000-01-01'");
    h.time_units = "hours since 2000-13-01";
    open_hand_fails(&h, "gridded_bad_tunits.nc", SW_ERR_INPUT, &err);
    assert_msg(&err, "units 'hours since 2000-13-01'");
    h.time_units = NULL;
    open_hand_fails(&h, "gridded_bad_tunits.nc", SW_ERR_INPUT, &err);
    assert_msg(&err, "time axis 't' has no units attribute");
    h = hand_spec_default();
    h.calendar = "noleap";
    open_hand_fails(&h, "gridded_bad_cal.nc", SW_ERR_INPUT, &err);
    assert_msg(&err, "calendar 'noleap'", "proleptic_gregorian");

    /* a variable with the wrong dimensions; dimensions in the wrong order */
    h = hand_spec_default();
    h.p_2d = 1;
    open_hand_fails(&h, "gridded_bad_dims.nc", SW_ERR_INPUT, &err);
    assert_msg(&err, "variable 'slp' (air_pressure_at_mean_sea_level) has 2 dimension(s) (northing, easting)",
               "it must have 3, (time, y, x)");
    h = hand_spec_default();
    h.transposed = 1;
    open_hand_fails(&h, "gridded_bad_order.nc", SW_ERR_INPUT, &err);
    assert_msg(&err, "coordinate 'northing' of the last dimension has axis = \"Y\"", "must be (time, y, x)");
    h.transposed = 2;
    open_hand_fails(&h, "gridded_bad_order.nc", SW_ERR_INPUT, &err);
    assert_msg(&err, "variable 'gust_e' (eastward_wind) has dimensions (t, easting, northing) but variable 'slp' "
               "(air_pressure_at_mean_sea_level) has (t, northing, easting)", "same (time, y, x)");

    /* axes in degrees */
    h = hand_spec_default();
    h.x_units = "degrees_east";
    open_hand_fails(&h, "gridded_bad_deg.nc", SW_ERR_INPUT, &err);
    assert_msg(&err, "coordinate 'easting' has units 'degrees_east'", "m, km");

    /* a model grid the file does not cover: both extents */
    h = hand_spec_default();
    char path[512];
    tu_tmp_path(path, sizeof path, "gridded_bad_cover.nc");
    write_hand(path, &h);
    sw_grid big = HAND_MODEL;
    big.nx = 21;   /* last centre at x = 6150 m, the file ends at 6000 m */
    sw_weather *w = NULL;
    assert_int_equal(sw_weather_open(path, "2024-02-28 00:00:00", &big, &w, &err), SW_ERR_INPUT);
    assert_msg(&err, path, "the file's grid (x 0 .. 6000 m, y 0 .. 7000 m) does not cover the model grid's cell "
               "centres (x 150 .. 6150 m, y 250 .. 6750 m)");
    assert_null(w);
    big = HAND_MODEL;
    big.y0_m = -300.0;
    assert_int_equal(sw_weather_open(path, "2024-02-28 00:00:00", &big, &w, &err), SW_ERR_INPUT);
    assert_msg(&err, "does not cover", "y -50 .. 6450 m");
    /* the model grid exactly on the file's first and last coordinates is covered */
    sw_grid edge = {.nx = 13, .ny = 8, .dx_m = 500.0, .dy_m = 1000.0, .x0_m = -250.0, .y0_m = -500.0};
    assert_int_equal(sw_weather_open(path, "2024-02-28 00:00:00", &edge, &w, &err), SW_OK);
    sw_weather_close(w);

    /* a file that does not exist */
    tu_tmp_path(path, sizeof path, "gridded_no_such_file.nc");
    remove(path);
    w = (sw_weather *)&w;
    assert_int_equal(sw_weather_open(path, "2024-02-28 00:00:00", &HAND_MODEL, &w, &err), SW_ERR_IO);
    assert_msg(&err, path, "cannot open the weather file", "No such file");
    assert_null(w);
}

/* A _FillValue in slab 3 is found when slab 3 is read, named by variable, time and [j][i]; so is NaN. */
static void test_missing_values_in_a_slab(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "gridded_fill.nc");
    hand_spec h = hand_spec_default();
    h.fill_slab = 3;
    h.fill_j = 2;
    h.fill_i = 4;
    write_hand(path, &h);
    sw_weather *w = NULL;
    sw_error err = {0};
    assert_int_equal(sw_weather_open(path, "2024-02-28 00:00:00", &HAND_MODEL, &w, &err), SW_OK);
    sw_weather_slab s;
    assert_int_equal(sw_weather_slab_alloc(w, &s, &err), SW_OK);
    for (size_t k = 0; k < 3; k++)
        assert_int_equal(sw_weather_read(w, k, &s, &err), SW_OK);
    assert_int_equal(sw_weather_read(w, 3, &s, &err), SW_ERR_INPUT);
    assert_msg(&err, path, "variable 'slp' (air_pressure_at_mean_sea_level) has a missing value (_FillValue)",
               "slp[3][2][4]", "time slab 3 (t = 259200 s since the origin)", "j = 2", "i = 4");
    assert_int_equal(s.index, SIZE_MAX);
    sw_weather_slab_free(&s);
    sw_weather_close(w);

    h = hand_spec_default();
    h.nan_u_slab = 1;
    write_hand(path, &h);
    assert_int_equal(sw_weather_open(path, "2024-02-28 00:00:00", &HAND_MODEL, &w, &err), SW_OK);
    assert_int_equal(sw_weather_slab_alloc(w, &s, &err), SW_OK);
    assert_int_equal(sw_weather_read(w, 0, &s, &err), SW_OK);
    assert_int_equal(sw_weather_read(w, 1, &s, &err), SW_ERR_INPUT);
    assert_msg(&err, path, "variable 'gust_e' (eastward_wind) has a missing value (NaN) at gust_e[1][0][1]",
               "t = 86400 s");
    sw_weather_slab_free(&s);
    sw_weather_close(w);
}

/* ---- the writer's failures ---------------------------------------------------------------------- */

static sw_status fill_nan_in_slab2(void *ctx, size_t k, double time_s, const sw_grid *g, float *p, float *u,
                                   float *v, sw_error *err)
{
    sw_status st = fill_linear(ctx, k, time_s, g, p, u, v, err);
    if (k == 2)
        v[1 * g->nx + 3] = NAN;
    return st;
}

static sw_status fill_fails_in_slab1(void *ctx, size_t k, double time_s, const sw_grid *g, float *p, float *u,
                                     float *v, sw_error *err)
{
    if (k == 1)
        return sw_fail(err, SW_ERR_INPUT, "storm track ended");
    return fill_linear(ctx, k, time_s, g, p, u, v, err);
}

/* A writer that fails leaves no file and no .part, and an existing file untouched. */
static void test_writer_failures_leave_nothing(void **state)
{
    (void)state;
    char path[512], part[600];
    tu_tmp_path(path, sizeof path, "gridded_wfail.nc");
    snprintf(part, sizeof part, "%s.part", path);
    remove(path);
    sw_error err = {0};
    assert_int_equal(sw_weather_write(path, &FILE_GRID, TIMES4, 4, "2000-01-01 00:00:00", "t", NULL,
                                      fill_nan_in_slab2, NULL, &err), SW_ERR_RANGE);
    assert_msg(&err, path, "northward wind of slab 2", "[1][3]");
    assert_false(exists(path));
    assert_false(exists(part));

    assert_int_equal(sw_weather_write(path, &FILE_GRID, TIMES4, 4, "2000-01-01 00:00:00", "t", NULL,
                                      fill_fails_in_slab1, NULL, &err), SW_ERR_INPUT);
    assert_msg(&err, "storm track ended");
    assert_false(exists(path));
    assert_false(exists(part));

    static const double bad_times[3] = {0.0, 60.0, 60.0};
    assert_int_equal(sw_weather_write(path, &FILE_GRID, bad_times, 3, "2000-01-01 00:00:00", "t", NULL,
                                      fill_linear, NULL, &err), SW_ERR_USAGE);
    assert_msg(&err, path, "strictly increasing", "times_s[2]");
    assert_int_equal(sw_weather_write(path, &FILE_GRID, TIMES4, 4, "2000-01-01", "t", NULL, fill_linear, NULL, &err),
                     SW_OK);   /* a date alone means midnight */
    assert_int_equal(sw_weather_write(path, &FILE_GRID, TIMES4, 4, "1 Jan 2000", "t", NULL, fill_linear, NULL, &err),
                     SW_ERR_USAGE);
    assert_msg(&err, "time origin '1 Jan 2000'");

    /* the good file stays when a later write fails */
    assert_true(exists(path));
    assert_int_equal(sw_weather_write(path, &FILE_GRID, TIMES4, 4, "2000-01-01 00:00:00", "t", NULL,
                                      fill_nan_in_slab2, NULL, &err), SW_ERR_RANGE);
    sw_weather *w = NULL;
    assert_int_equal(sw_weather_open(path, "2000-01-01 00:00:00", &MODEL_GRID, &w, &err), SW_OK);
    sw_weather_close(w);
    assert_false(exists(part));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_written_file_read_back_exactly),
        cmocka_unit_test(test_written_file_attributes),
        cmocka_unit_test(test_units_converted),
        cmocka_unit_test(test_time_conversion),
        cmocka_unit_test(test_memory_stays_at_a_few_slabs),
        cmocka_unit_test(test_bad_files_named),
        cmocka_unit_test(test_missing_values_in_a_slab),
        cmocka_unit_test(test_writer_failures_leave_nothing),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
