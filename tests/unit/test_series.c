/* test_series.c - sea-level series for an edge (forcing/series.h): text and NetCDF files (written here
 * with the NetCDF-C API), linear interpolation, the CF time origin, units, and the bad inputs with their
 * messages. The calendar itself is tested in test_civil_time.c.
 *
 * Sources: the proleptic Gregorian calendar (a year is a leap year when divisible by 4, except centuries
 * not divisible by 400), from which every time offset below is [derived] by hand in its comment; CF
 * Conventions, section 4.4 "Time Coordinate" (units "UNIT since DATE", the calendar attribute) [memory].
 * The series are fictional.
 */
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

#include "forcing/series.h"
#include "testutil.h"

#define NC_OK(call) assert_int_equal((call), NC_NOERR)
#define DAY 86400.0

/* |got - want| <= tol, reporting both values (this cmocka has no assert_double_equal). */
#define assert_near(got, want, tol) near_check((got), (want), (tol), __FILE__, __LINE__)
static void near_check(double got, double want, double tol, const char *file, int line)
{
    if (!(fabs(got - want) <= tol)) {
        print_error("%.17g != %.17g (tolerance %g)\n", got, want, tol);
        _fail(file, line);
    }
}

static void scratch(char *path, size_t n, const char *name, const char *text)
{
    tu_tmp_path(path, n, name);
    if (text)
        assert_int_equal(tu_write_file(path, text), 0);
}

static sw_series *load_ok(const char *path, const char *var, const char *origin)
{
    sw_series *s = NULL;
    sw_error err = {0};
    sw_status st = sw_series_load(path, var, origin, &s, &err);
    if (st != SW_OK)
        print_error("%s\n", err.msg);
    assert_int_equal(st, SW_OK);
    assert_non_null(s);
    return s;
}

/* A text series in hours and centimetres; linear interpolation between values. */
static void test_text_series(void **state)
{
    (void)state;
    char path[512];
    scratch(path, sizeof path, "series_tide.txt",
            "# a fictional tide\n"
            "time[h]  elevation[cm]\n"
            "0        10     # low\n"
            "1        30\n"
            "\n"
            "3        -10\n");
    sw_series *s = load_ok(path, NULL, NULL);
    assert_int_equal(sw_series_count(s), 3);
    assert_near(sw_series_t_first(s), 0, 0);
    assert_near(sw_series_t_last(s), 3 * 3600.0, 0);
    assert_near(sw_series_at(s, 0), 0.10, 1e-15);
    assert_near(sw_series_at(s, 1800), 0.20, 1e-15);              /* halfway: the mean [linear] */
    assert_near(sw_series_at(s, 3600 + 0.25 * 7200), 0.20, 1e-15);  /* a quarter of 30 -> -10 cm */
    assert_near(sw_series_at(s, 3 * 3600.0), -0.10, 1e-15);
    assert_near(sw_series_at(s, -50), 0.10, 0);                   /* held outside the span [contract] */
    assert_near(sw_series_at(s, 1e6), -0.10, 0);
    sw_error err = {0};
    assert_int_equal(sw_series_covers(s, 0, 10800, &err), SW_OK);
    assert_int_equal(sw_series_covers(s, 0, 86400, &err), SW_ERR_RANGE);
    char want[1024];
    snprintf(want, sizeof want, "%s: the series covers 0 .. 10800 s but the run needs 0 .. 86400 s (add values up to "
             "at least 86400 s)", path);
    assert_string_equal(err.msg, want);
    assert_int_equal(sw_series_covers(s, -60, 600, &err), SW_ERR_RANGE);
    snprintf(want, sizeof want, "%s: the series covers 0 .. 10800 s but the run needs -60 .. 600 s (add values from "
             "-60 s or earlier)", path);
    assert_string_equal(err.msg, want);
    sw_series_free(s);
}

/* What a test NetCDF file holds. */
typedef struct {
    const char *var;            /* the sea-level variable's name */
    const char *standard_name;  /* NULL: none */
    const char *units;          /* NULL: none */
    const char *time_units;     /* NULL: none */
    const char *calendar;       /* NULL: none */
    const char *time_dim;       /* the dimension's name */
    int no_coord;               /* 1: no coordinate variable for the dimension */
    size_t n;
    const double *t, *v;        /* n times (file units) and values (file units) */
    int has_fill;
    double fill;
    int packed;                 /* 1: store v as shorts with scale_factor 0.001 */
    const char *extra;          /* a second 1D variable's name with the same standard_name, or NULL */
    int two_d;                  /* 1: make the variable 2D (time, station) */
} nc_series;

static void write_nc(const char *path, const nc_series *p)
{
    int ncid, dt, ds, vt, vv;
    NC_OK(nc_create(path, NC_CLOBBER | NC_NETCDF4, &ncid));
    NC_OK(nc_def_dim(ncid, p->time_dim, p->n, &dt));
    if (!p->no_coord) {
        NC_OK(nc_def_var(ncid, p->time_dim, NC_DOUBLE, 1, &dt, &vt));
        if (p->time_units)
            NC_OK(nc_put_att_text(ncid, vt, "units", strlen(p->time_units), p->time_units));
        if (p->calendar)
            NC_OK(nc_put_att_text(ncid, vt, "calendar", strlen(p->calendar), p->calendar));
    }
    if (p->two_d) {
        NC_OK(nc_def_dim(ncid, "station", 1, &ds));
        int dims[2] = {dt, ds};
        NC_OK(nc_def_var(ncid, p->var, NC_DOUBLE, 2, dims, &vv));
    } else {
        NC_OK(nc_def_var(ncid, p->var, p->packed ? NC_SHORT : NC_DOUBLE, 1, &dt, &vv));
    }
    if (p->standard_name)
        NC_OK(nc_put_att_text(ncid, vv, "standard_name", strlen(p->standard_name), p->standard_name));
    if (p->units)
        NC_OK(nc_put_att_text(ncid, vv, "units", strlen(p->units), p->units));
    if (p->has_fill) {
        if (p->packed) {
            short f = (short)p->fill;
            NC_OK(nc_put_att_short(ncid, vv, "_FillValue", NC_SHORT, 1, &f));
        } else {
            NC_OK(nc_put_att_double(ncid, vv, "_FillValue", NC_DOUBLE, 1, &p->fill));
        }
    }
    if (p->packed) {
        double sf = 0.001, off = 0.5;
        NC_OK(nc_put_att_double(ncid, vv, "scale_factor", NC_DOUBLE, 1, &sf));
        NC_OK(nc_put_att_double(ncid, vv, "add_offset", NC_DOUBLE, 1, &off));
    }
    int vx = -1;
    if (p->extra) {
        NC_OK(nc_def_var(ncid, p->extra, NC_DOUBLE, 1, &dt, &vx));
        NC_OK(nc_put_att_text(ncid, vx, "standard_name", strlen(p->standard_name), p->standard_name));
        NC_OK(nc_put_att_text(ncid, vx, "units", 1, "m"));
    }
    NC_OK(nc_enddef(ncid));
    if (!p->no_coord)
        NC_OK(nc_put_var_double(ncid, vt, p->t));
    if (p->packed) {
        short *raw = malloc(p->n * sizeof *raw);
        assert_non_null(raw);
        for (size_t k = 0; k < p->n; k++)
            raw[k] = p->has_fill && p->v[k] == p->fill ? (short)p->fill : (short)lround((p->v[k] - 0.5) / 0.001);
        NC_OK(nc_put_var_short(ncid, vv, raw));
        free(raw);
    } else {
        NC_OK(nc_put_var_double(ncid, vv, p->v));
    }
    if (vx >= 0)
        NC_OK(nc_put_var_double(ncid, vx, p->v));
    NC_OK(nc_close(ncid));
}

static const double T4[4] = {0, 1, 2, 3};
static const double V4[4] = {0.5, 1.0, 0.0, -0.5};

static nc_series base_nc(void)
{
    nc_series p = {.var = "zeta", .standard_name = SW_SEA_LEVEL_STANDARD_NAME, .units = "m",
                   .time_units = "hours since 2000-01-01 06:00", .time_dim = "time", .n = 4, .t = T4, .v = V4};
    return p;
}

/* NetCDF: the variable found by its standard_name; hours since 06:00 against a scenario origin at 00:00
 * shift every time by 21600 s [derived]; linear interpolation. */
static void test_netcdf_series(void **state)
{
    (void)state;
    char path[512];
    scratch(path, sizeof path, "series_tide.nc", NULL);
    nc_series p = base_nc();
    write_nc(path, &p);
    sw_series *s = load_ok(path, NULL, "2000-01-01 00:00:00");
    assert_int_equal(sw_series_count(s), 4);
    assert_near(sw_series_t_first(s), 21600, 0);
    assert_near(sw_series_t_last(s), 21600 + 3 * 3600, 0);
    assert_near(sw_series_at(s, 21600 + 1800), 0.75, 1e-15);
    assert_near(sw_series_at(s, 21600 + 2 * 3600 + 900), -0.125, 1e-15);
    sw_series_free(s);

    /* the same, named explicitly, with a scenario origin later than the file's: times move back */
    s = load_ok(path, "zeta", "2000-01-02 00:00:00");
    assert_near(sw_series_t_first(s), 21600 - DAY, 0);
    sw_series_free(s);

    /* across a leap day: "days since 2000-02-28" seen from 2000-03-01 starts 2 days before it, and from
     * 1900-03-01 "days since 1900-02-28" 1 day before (1900 has no 29 February) [derived] */
    p.time_units = "days since 2000-02-28";
    p.units = "cm";
    write_nc(path, &p);
    s = load_ok(path, NULL, "2000-03-01 00:00:00");
    assert_near(sw_series_t_first(s), -2 * DAY, 0);
    assert_near(sw_series_at(s, -2 * DAY + 0.5 * DAY), 0.0075, 1e-15);   /* cm: 0.75 cm */
    sw_series_free(s);
    p.time_units = "days since 1900-02-28 00:00:00";
    p.calendar = "proleptic_gregorian";
    write_nc(path, &p);
    s = load_ok(path, NULL, "1900-03-01 00:00:00");
    assert_near(sw_series_t_first(s), -DAY, 0);
    assert_near(sw_series_t_last(s), 2 * DAY, 0);
    sw_series_free(s);

    /* packed shorts: value = raw * scale_factor + add_offset (CF 8.1 [memory]) */
    p = base_nc();
    p.packed = 1;
    write_nc(path, &p);
    s = load_ok(path, NULL, "2000-01-01 00:00:00");
    assert_near(sw_series_at(s, 21600), 0.5, 1e-12);
    assert_near(sw_series_at(s, 21600 + 3 * 3600), -0.5, 1e-12);
    sw_series_free(s);

    /* a classic (CDF-1) file is recognised too */
    int ncid, dt, vt, vv;
    NC_OK(nc_create(path, NC_CLOBBER, &ncid));
    NC_OK(nc_def_dim(ncid, "t", 2, &dt));
    NC_OK(nc_def_var(ncid, "t", NC_DOUBLE, 1, &dt, &vt));
    NC_OK(nc_put_att_text(ncid, vt, "units", 22, "seconds since 2000-1-1"));
    NC_OK(nc_def_var(ncid, "level", NC_FLOAT, 1, &dt, &vv));
    NC_OK(nc_put_att_text(ncid, vv, "units", 6, "metres"));
    NC_OK(nc_enddef(ncid));
    NC_OK(nc_put_var_double(ncid, vt, (const double[]){0, 600}));
    NC_OK(nc_put_var_float(ncid, vv, (const float[]){1.0f, 2.0f}));
    NC_OK(nc_close(ncid));
    s = load_ok(path, "level", "2000-01-01 00:00:00");
    assert_near(sw_series_at(s, 300), 1.5, 1e-7);
    sw_series_free(s);
}

/* Loads path and expects status code with the message "PATH<suffix>" exactly. */
static void expect_fail(const char *path, const char *var, const char *origin, sw_status code, const char *suffix)
{
    char want[1024];
    sw_series *s = NULL;
    sw_error err = {0};
    sw_status st = sw_series_load(path, var, origin, &s, &err);
    snprintf(want, sizeof want, "%s%s", path, suffix);
    if (st != code || strcmp(err.msg, want) != 0)
        print_error("got  %s (%s)\nwant %s (%s)\n", err.msg, sw_status_name(st), want, sw_status_name(code));
    assert_int_equal(st, code);
    assert_string_equal(err.msg, want);
    assert_null(s);
}

static void expect_text_fail(const char *text, sw_status code, const char *suffix)
{
    char path[512];
    scratch(path, sizeof path, "series_bad.txt", text);
    expect_fail(path, NULL, NULL, code, suffix);
}

static void expect_nc_fail(const nc_series *p, const char *var, const char *origin, sw_status code, const char *suffix)
{
    char path[512];
    scratch(path, sizeof path, "series_bad.nc", NULL);
    write_nc(path, p);
    expect_fail(path, var, origin, code, suffix);
}

static void test_bad_inputs(void **state)
{
    (void)state;
    const char *O = "2000-01-01 00:00:00";
    /* text */
    expect_text_fail("time[h] elevation[m]\n0 0.1\n1 0.2\n1 0.3\n", SW_ERR_PARSE,
                     ":4: time 1 h is not after the previous value's 1 h (line 3): times must increase strictly");
    expect_text_fail("time[h] elevation[m]\n0 0.1\n", SW_ERR_PARSE, ":2: the series has 1 value; at least 2 are needed");
    expect_text_fail("time[h] elevation[ft]\n0 0.1\n1 0.2\n", SW_ERR_PARSE,
                     ":1: unknown unit 'ft' for elevation (accepted: m, cm)");
    expect_text_fail("time[h] level[m]\n0 0.1\n1 0.2\n", SW_ERR_PARSE,
                     ":1: unknown column 'level' (accepted: time, elevation)");
    expect_text_fail("time[h]\n0\n1\n", SW_ERR_PARSE, ":1: missing column 'elevation' (required: time, elevation)");
    expect_text_fail("time[h] elevation[m]\n0 0.1\n1 abc\n", SW_ERR_PARSE, ":3: column 2 'abc' is not a number");

    /* NetCDF */
    nc_series p = base_nc();
    expect_nc_fail(&p, "eta", O, SW_ERR_INPUT, ": variable 'eta' not found in the file (1D variables: time, zeta)");
    p.standard_name = "sea_surface_height";
    expect_nc_fail(&p, NULL, O, SW_ERR_INPUT, ": no variable has standard_name sea_surface_height_above_mean_sea_level: "
                   "name the variable (1D variables: time, zeta)");
    p = base_nc();
    p.extra = "zeta2";
    expect_nc_fail(&p, NULL, O, SW_ERR_INPUT, ": 2 variables have standard_name sea_surface_height_above_mean_sea_level "
                   "(zeta, zeta2): name the one to use");
    p = base_nc();
    p.two_d = 1;
    expect_nc_fail(&p, NULL, O, SW_ERR_INPUT, ": variable 'zeta' has 2 dimensions; it must have exactly 1, time");
    p = base_nc();
    p.units = NULL;
    expect_nc_fail(&p, NULL, O, SW_ERR_INPUT, ": variable 'zeta' has no units attribute (accepted: m, cm)");
    p.units = "ft";
    expect_nc_fail(&p, NULL, O, SW_ERR_INPUT, ": variable 'zeta' has units 'ft' (accepted: m, cm)");
    p = base_nc();
    p.no_coord = 1;
    expect_nc_fail(&p, NULL, O, SW_ERR_INPUT, ": variable 'zeta': its dimension 'time' has no coordinate variable (a "
                   "1D variable 'time' with units such as 'hours since 2000-01-01 00:00:00')");
    p = base_nc();
    p.time_units = NULL;
    expect_nc_fail(&p, NULL, O, SW_ERR_INPUT, ": time coordinate 'time' has no units attribute (accepted: 'UNIT since "
                   "DATE', e.g. 'hours since 2000-01-01 00:00:00')");
    p.time_units = "hours since 2000-02-30";
    expect_nc_fail(&p, NULL, O, SW_ERR_INPUT, ": time coordinate 'time': time units 'hours since 2000-02-30': no such "
                   "date (2000-02-30)");
    p = base_nc();
    p.calendar = "noleap";
    expect_nc_fail(&p, NULL, O, SW_ERR_INPUT, ": time coordinate 'time' has calendar 'noleap' (accepted: standard, "
                   "gregorian, proleptic_gregorian)");
    p.calendar = "standard";
    p.time_units = "days since 1500-01-01";
    expect_nc_fail(&p, NULL, O, SW_ERR_INPUT, ": time coordinate 'time': an origin before 1582-10-15 in the 'standard' "
                   "calendar is not supported (use proleptic_gregorian)");
    /* missing values: _FillValue, NaN, and the fill of a packed variable */
    double vf[4] = {0.5, 1.0, -999.0, -0.5};
    p = base_nc();
    p.v = vf;
    p.has_fill = 1;
    p.fill = -999.0;
    expect_nc_fail(&p, NULL, O, SW_ERR_INPUT, ": variable 'zeta' has a missing or non-finite value at zeta[2]");
    double vn[4] = {0.5, NAN, 0.0, -0.5};
    p = base_nc();
    p.v = vn;
    expect_nc_fail(&p, NULL, O, SW_ERR_INPUT, ": variable 'zeta' has a missing or non-finite value at zeta[1]");
    double vp[4] = {0.5, 1.0, 0.0, -32767};
    p = base_nc();
    p.v = vp;
    p.packed = 1;
    p.has_fill = 1;
    p.fill = -32767;
    expect_nc_fail(&p, NULL, O, SW_ERR_INPUT, ": variable 'zeta' has a missing or non-finite value at zeta[3]");
    double tn[4] = {0, 1, NAN, 3};
    p = base_nc();
    p.t = tn;
    expect_nc_fail(&p, NULL, O, SW_ERR_INPUT, ": variable 'time' has a missing or non-finite value at time[2]");
    double td[4] = {0, 2, 2, 3};
    p = base_nc();
    p.t = td;
    expect_nc_fail(&p, NULL, O, SW_ERR_INPUT, ": time coordinate 'time' is not strictly increasing: time[2] is 28800 s "
                   "after the time origin, time[1] 28800 s");
    p = base_nc();
    p.n = 1;
    expect_nc_fail(&p, NULL, O, SW_ERR_INPUT, ": variable 'zeta' has 1 value(s); at least 2 are needed");
}

/* A file that does not exist, and a bad scenario origin. */
static void test_bad_files(void **state)
{
    (void)state;
    char path[512];
    scratch(path, sizeof path, "series_no_such_file.nc", NULL);
    remove(path);
    expect_fail(path, NULL, "2000-01-01 00:00:00", SW_ERR_IO, ": cannot open: No such file or directory");
    scratch(path, sizeof path, "series_origin.nc", NULL);
    nc_series p = base_nc();
    write_nc(path, &p);
    expect_fail(path, NULL, "2000-02-30 00:00:00", SW_ERR_USAGE, ": the scenario's time origin: no such date (2000-02-30)");
    expect_fail(path, NULL, NULL, SW_ERR_USAGE, ": the scenario's time origin: none given");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_text_series),
        cmocka_unit_test(test_netcdf_series),
        cmocka_unit_test(test_bad_inputs),
        cmocka_unit_test(test_bad_files),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
