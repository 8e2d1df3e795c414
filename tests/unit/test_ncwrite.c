/* test_ncwrite.c - the CF-NetCDF writers: write small synthetic data, read it back through the
 * NetCDF-C API and compare with what was written and with what the CF conventions ask for.
 *
 * External references used by the checks:
 *  - CF Conventions 1.11: section 4.1/4.2 (axis X/Y/T), 4.4 (time units "seconds since ...",
 *    calendar "standard"), 7.3 (cell_methods "time: maximum"), 3.5 (flag_values/flag_meanings),
 *    chapter 9 and appendix H.2 (featureType "timeSeries", cf_role "timeseries_id", coordinates);
 *    standard names from the CF standard name table.
 *  - NetCDF Users Guide, "Fill Values": the default fill of double is 9.9692099683868690e+36 and of
 *    float 9.96921e+36f; written here as literals, not through the library's macro.
 *  - CF standard name table: air_pressure_at_mean_sea_level (Pa), eastward_wind, northward_wind,
 *    wind_speed (m s-1) for the forcing written by a storm-surge run [memory].
 *  - CF 1.11 section 5.6 (grid_mapping names a grid mapping variable; extended form "crs: x y"),
 *    appendix F (the grid_mapping_name values; latitude_longitude on a sphere: semi_major_axis and
 *    inverse_flattening 0), section 4.1/4.2 (longitude: units degrees_east, standard_name longitude;
 *    latitude: degrees_north, latitude) [memory]; eastward_sea_water_velocity and
 *    northward_sea_water_velocity from the standard name table [memory].
 *  - UTM zone 33N as a CF transverse_mercator: central meridian 15 deg E, scale 0.9996, false easting
 *    500 000 m, on WGS 84 (a = 6 378 137 m, 1/f = 298.257223563) [memory]; the test only checks that
 *    these values travel unchanged.
 */
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>

#include <math.h>
#include <netcdf.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "inputs/crs.h"
#include "outputs/ncwrite.h"
#include "studies/ncsweep.h"
#include "testutil.h"

/* NetCDF Users Guide, default fill values (literal values, independent of netcdf.h). */
#define FILL_DOUBLE_NUG 9.9692099683868690e+36
#define FILL_FLOAT_NUG 9.96921e+36f

static const char CAUTION[] = "Simplified linear model - not a hazard forecast. Follow official warnings.";
static const char SCENARIO[] = "[run]\ntitle = Test bay\nduration = 1 h\n\n[gauges]\nDravonne Pier = 1 km, 2 km\n";

static sw_run_meta test_meta(const char *title)
{
    sw_run_meta m = {
        .title = title,
        .history = "shoreward run test.scn",
        .scenario_text = SCENARIO,
        .layout = "C",
        .precision = "single",
        .version = "0.1.0-test",
        .caution = CAUTION,
        .time_origin = "2000-01-01 00:00:00",
        .dt_s = 2.5,
        .courant = 0.63,
        .courant_limit = 0.7071067811865476,
        .arrival_threshold_m = 0.01,
        .gravity_ms2 = 9.81,
    };
    return m;
}

static int exists(const char *path)
{
    struct stat st;
    return stat(path, &st) == 0;
}

/* Builds "<path>.part". */
static void part_of(const char *path, char *out, size_t n)
{
    snprintf(out, n, "%s.part", path);
}

/* Fresh scratch path: removes any file (and .part) left by an earlier run. */
static void scratch_path(char *out, size_t n, const char *name)
{
    char part[1100];
    tu_tmp_path(out, n, name);
    part_of(out, part, sizeof part);
    remove(out);
    remove(part);
}

/* Reads a text attribute (NULL var = global) into a malloc'ed NUL-terminated string. */
static char *get_text(int ncid, const char *var, const char *att)
{
    int varid = NC_GLOBAL;
    if (var)
        assert_int_equal(nc_inq_varid(ncid, var, &varid), NC_NOERR);
    nc_type type;
    size_t len;
    int rc = nc_inq_att(ncid, varid, att, &type, &len);
    if (rc != NC_NOERR)
        fail_msg("attribute %s:%s missing: %s", var ? var : "", att, nc_strerror(rc));
    assert_int_equal(type, NC_CHAR);
    char *s = calloc(len + 1, 1);
    assert_non_null(s);
    assert_int_equal(nc_get_att_text(ncid, varid, att, s), NC_NOERR);
    return s;
}

/* history is "YYYY-MM-DDTHH:MM:SSZ: <command>" (ISO 8601 UTC timestamp, CF 1.11 section 2.6.2). */
static void assert_history(int ncid, const char *command)
{
    char *s = get_text(ncid, NULL, "history");
    static const char pattern[] = "dddd-dd-ddTdd:dd:ddZ: ";
    int ok = strlen(s) == strlen(pattern) + strlen(command) && strcmp(s + strlen(pattern), command) == 0;
    for (size_t i = 0; ok && i < strlen(pattern); i++)
        ok = pattern[i] == 'd' ? (s[i] >= '0' && s[i] <= '9') : s[i] == pattern[i];
    char got[256];
    snprintf(got, sizeof got, "%s", s);
    free(s);
    if (!ok)
        fail_msg(":history is \"%s\", expected \"<ISO 8601 UTC>: %s\"", got, command);
}

static void assert_text(int ncid, const char *var, const char *att, const char *expected)
{
    char *s = get_text(ncid, var, att);
    if (strcmp(s, expected) != 0) {
        char got[256];
        snprintf(got, sizeof got, "%s", s);
        free(s);
        fail_msg("%s:%s is \"%s\", expected \"%s\"", var ? var : "", att, got, expected);
    }
    free(s);
}

static double get_double_att(int ncid, const char *var, const char *att)
{
    int varid = NC_GLOBAL;
    if (var)
        assert_int_equal(nc_inq_varid(ncid, var, &varid), NC_NOERR);
    double v = NAN;
    assert_int_equal(nc_get_att_double(ncid, varid, att, &v), NC_NOERR);
    return v;
}

static size_t dim_len(int ncid, const char *name)
{
    int id;
    size_t len = 0;
    assert_int_equal(nc_inq_dimid(ncid, name, &id), NC_NOERR);
    assert_int_equal(nc_inq_dimlen(ncid, id, &len), NC_NOERR);
    return len;
}

/* Checks that var exists with the given type and dimension names (comma-separated, in order). */
static void assert_var_dims(int ncid, const char *var, nc_type type, const char *dims)
{
    int varid, ndims, dimids[NC_MAX_VAR_DIMS];
    nc_type t;
    if (nc_inq_varid(ncid, var, &varid) != NC_NOERR)
        fail_msg("variable %s missing", var);
    assert_int_equal(nc_inq_var(ncid, varid, NULL, &t, &ndims, dimids, NULL), NC_NOERR);
    assert_int_equal(t, type);
    char joined[256] = "";
    for (int k = 0; k < ndims; k++) {
        char name[NC_MAX_NAME + 1];
        assert_int_equal(nc_inq_dimname(ncid, dimids[k], name), NC_NOERR);
        if (k)
            strcat(joined, ",");
        strcat(joined, name);
    }
    assert_string_equal(joined, dims);
}

static void get_doubles(int ncid, const char *var, double *out)
{
    int varid;
    assert_int_equal(nc_inq_varid(ncid, var, &varid), NC_NOERR);
    assert_int_equal(nc_get_var_double(ncid, varid, out), NC_NOERR);
}

static void assert_no_var(int ncid, const char *var)
{
    int varid;
    if (nc_inq_varid(ncid, var, &varid) != NC_ENOTVAR)
        fail_msg("variable %s is present, expected absent", var);
}

/* var has no attribute att. */
static void assert_no_var_att(int ncid, const char *var, const char *att)
{
    int varid;
    nc_type t;
    size_t len;
    assert_int_equal(nc_inq_varid(ncid, var, &varid), NC_NOERR);
    if (nc_inq_att(ncid, varid, att, &t, &len) != NC_ENOTATT)
        fail_msg("%s:%s is present, expected absent", var, att);
}

static void assert_no_att(int ncid, const char *att)
{
    nc_type t;
    size_t len;
    if (nc_inq_att(ncid, NC_GLOBAL, att, &t, &len) != NC_ENOTATT)
        fail_msg("global attribute %s is present, expected absent", att);
}

/* The global attributes every file must carry. */
static void assert_globals(int ncid, const char *title)
{
    assert_text(ncid, NULL, "Conventions", "CF-1.11");
    assert_text(ncid, NULL, "title", title);
    assert_history(ncid, "shoreward run test.scn");
    assert_text(ncid, NULL, "source", "shoreward 0.1.0-test");
    assert_text(ncid, NULL, "layout", "C");
    assert_text(ncid, NULL, "precision", "single");
    assert_text(ncid, NULL, "scenario", SCENARIO);
    assert_text(ncid, NULL, "caution", CAUTION);
    assert_text(ncid, NULL, "comment", "Linear shallow-water model run; see the caution attribute.");
    assert_true(get_double_att(ncid, NULL, "time_step_s") == 2.5);
    assert_true(get_double_att(ncid, NULL, "courant_number") == 0.63);
    assert_true(get_double_att(ncid, NULL, "courant_limit") == 0.7071067811865476);
    assert_true(get_double_att(ncid, NULL, "arrival_threshold_m") == 0.01);
    assert_true(get_double_att(ncid, NULL, "gravity_m_s2") == 9.81);
}

static void assert_done(const char *path)
{
    char part[1100];
    part_of(path, part, sizeof part);
    assert_true(exists(path));
    assert_false(exists(part));
}

/* ---- gauges ----------------------------------------------------------------------------- */

enum { NS = 3, NT = 4 };
static const char *const G_NAMES[NS] = {"Dravonne Pier", "Harbour Mouth",
                                        /* exactly 64 characters: fills name_strlen, no NUL */
                                        "A234567890123456789012345678901234567890123456789012345678901234"};
static const double G_X[NS] = {1000.0, 2500.0, 4000.0};
static const double G_Y[NS] = {2000.0, 500.0, 3500.0};
static const double G_DEPTH[NS] = {12.5, 40.0, -3.0};
static const double G_TIME[NT] = {0.0, 30.0, 60.0, 90.0};

static sw_gauge_table gauge_table(double *eta, double *u, double *v)
{
    for (size_t s = 0; s < NS; s++) {
        for (size_t t = 0; t < NT; t++) {
            eta[s * NT + t] = 0.1 * (double)s + 0.01 * (double)t;
            u[s * NT + t] = -0.5 + (double)t;
            v[s * NT + t] = 2.0 * (double)s;
        }
    }
    for (size_t t = 0; t < NT; t++)  /* the third gauge is on land: no values */
        eta[2 * NT + t] = u[2 * NT + t] = v[2 * NT + t] = NAN;
    sw_gauge_table gt = {NS, NT, G_NAMES, G_X, G_Y, G_DEPTH, G_TIME, eta, u, v, NULL, NULL, NULL};
    return gt;
}

static void test_gauges_roundtrip(void **state)
{
    (void)state;
    char path[1024];
    scratch_path(path, sizeof path, "ncw_gauges.nc");
    double eta[NS * NT], u[NS * NT], v[NS * NT];
    sw_gauge_table gt = gauge_table(eta, u, v);
    sw_run_meta meta = test_meta("Test bay");
    sw_error err = {0};
    assert_int_equal(sw_ncw_gauges(path, &meta, &gt, &err), SW_OK);
    assert_done(path);

    int ncid;
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    int format;
    assert_int_equal(nc_inq_format(ncid, &format), NC_NOERR);
    assert_int_equal(format, NC_FORMAT_NETCDF4);
    assert_globals(ncid, "Test bay");
    assert_text(ncid, NULL, "featureType", "timeSeries");  /* CF 9.4 */

    assert_int_equal(dim_len(ncid, "station"), NS);
    assert_int_equal(dim_len(ncid, "time"), NT);
    assert_int_equal(dim_len(ncid, "name_strlen"), 64);
    assert_var_dims(ncid, "station_name", NC_CHAR, "station,name_strlen");
    assert_var_dims(ncid, "station_x", NC_DOUBLE, "station");
    assert_var_dims(ncid, "station_y", NC_DOUBLE, "station");
    assert_var_dims(ncid, "depth", NC_DOUBLE, "station");
    assert_var_dims(ncid, "time", NC_DOUBLE, "time");
    assert_var_dims(ncid, "eta", NC_DOUBLE, "station,time");
    assert_var_dims(ncid, "u", NC_DOUBLE, "station,time");
    assert_var_dims(ncid, "v", NC_DOUBLE, "station,time");

    assert_text(ncid, "station_name", "cf_role", "timeseries_id");
    assert_text(ncid, "station_name", "long_name", "gauge name");
    assert_text(ncid, "station_x", "standard_name", "projection_x_coordinate");
    assert_text(ncid, "station_y", "standard_name", "projection_y_coordinate");
    assert_text(ncid, "station_x", "units", "m");
    assert_text(ncid, "station_x", "long_name", "gauge x position");
    assert_text(ncid, "depth", "standard_name", "sea_floor_depth_below_mean_sea_level");
    assert_text(ncid, "depth", "positive", "down");
    assert_text(ncid, "time", "standard_name", "time");
    assert_text(ncid, "time", "units", "seconds since 2000-01-01 00:00:00");
    assert_text(ncid, "time", "calendar", "standard");
    assert_text(ncid, "time", "axis", "T");
    assert_text(ncid, "eta", "standard_name", "sea_surface_height_above_mean_sea_level");
    assert_text(ncid, "eta", "units", "m");
    assert_text(ncid, "eta", "long_name", "sea surface elevation at gauge");
    assert_text(ncid, "u", "standard_name", "sea_water_x_velocity");
    assert_text(ncid, "v", "standard_name", "sea_water_y_velocity");
    assert_text(ncid, "u", "units", "m s-1");
    assert_text(ncid, "v", "units", "m s-1");
    for (int k = 0; k < 3; k++)
        assert_text(ncid, (const char *[]){"eta", "u", "v"}[k], "coordinates", "time station_y station_x station_name");
    assert_no_var(ncid, "air_pressure");   /* no atmosphere: no air series */
    assert_no_var(ncid, "wind_east");
    assert_no_var(ncid, "wind_north");
    assert_no_att(ncid, "forcing");        /* meta.forcing NULL: no attribute */

    char names[NS][64];
    int vid;
    assert_int_equal(nc_inq_varid(ncid, "station_name", &vid), NC_NOERR);
    assert_int_equal(nc_get_var_text(ncid, vid, &names[0][0]), NC_NOERR);
    for (size_t s = 0; s < NS; s++) {
        size_t n = strlen(G_NAMES[s]);
        assert_memory_equal(names[s], G_NAMES[s], n);
        for (size_t c = n; c < 64; c++)
            assert_int_equal(names[s][c], 0);  /* NUL padded */
    }

    double buf[NS * NT];
    get_doubles(ncid, "station_x", buf);
    assert_memory_equal(buf, G_X, sizeof G_X);
    get_doubles(ncid, "station_y", buf);
    assert_memory_equal(buf, G_Y, sizeof G_Y);
    get_doubles(ncid, "depth", buf);
    assert_memory_equal(buf, G_DEPTH, sizeof G_DEPTH);
    get_doubles(ncid, "time", buf);
    assert_memory_equal(buf, G_TIME, sizeof G_TIME);
    const double *sent[3] = {eta, u, v};
    for (int k = 0; k < 3; k++) {
        const char *var = (const char *[]){"eta", "u", "v"}[k];
        assert_true(get_double_att(ncid, var, "_FillValue") == FILL_DOUBLE_NUG);
        get_doubles(ncid, var, buf);
        for (size_t i = 0; i < NS * NT; i++) {
            if (isnan(sent[k][i]))
                assert_true(buf[i] == FILL_DOUBLE_NUG);
            else
                assert_true(buf[i] == sent[k][i]);
        }
    }
    assert_int_equal(nc_close(ncid), NC_NOERR);
    remove(path);
}

/* A run with an atmosphere: the air pressure and the 10 m wind at the gauges, with CF names, and the
 * forcing and the caution the run gives as global attributes. */
static void test_gauges_air(void **state)
{
    (void)state;
    char path[1024];
    scratch_path(path, sizeof path, "ncw_gauges_air.nc");
    double eta[NS * NT], u[NS * NT], v[NS * NT], p[NS * NT], we[NS * NT], wn[NS * NT];
    sw_gauge_table gt = gauge_table(eta, u, v);
    for (size_t k = 0; k < NS * NT; k++) {
        p[k] = 101300.0 - 250.0 * (double)k;
        we[k] = -3.0 + 0.5 * (double)k;
        wn[k] = 12.25 - (double)k;
    }
    p[2 * NT + 1] = NAN;   /* a missing value becomes the fill */
    gt.air_pressure_pa = p;
    gt.wind_u_ms = we;
    gt.wind_v_ms = wn;
    sw_run_meta meta = test_meta("Test bay");
    meta.forcing = "storm track.txt (Holland 1980), drag large-pond, slabs every 300 s";
    meta.caution = "CAUTION: surge sandbox, no flooding of land.";
    sw_error err = {0};
    assert_int_equal(sw_ncw_gauges(path, &meta, &gt, &err), SW_OK);
    assert_done(path);

    int ncid;
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    assert_text(ncid, NULL, "forcing", meta.forcing);
    assert_text(ncid, NULL, "caution", meta.caution);
    static const struct {
        const char *var, *standard_name, *units;
    } want[3] = {
        {"air_pressure", "air_pressure_at_mean_sea_level", "Pa"},   /* CF standard name table */
        {"wind_east", "eastward_wind", "m s-1"},
        {"wind_north", "northward_wind", "m s-1"},
    };
    const double *sent[3] = {p, we, wn};
    for (int k = 0; k < 3; k++) {
        assert_var_dims(ncid, want[k].var, NC_DOUBLE, "station,time");
        assert_text(ncid, want[k].var, "standard_name", want[k].standard_name);
        assert_text(ncid, want[k].var, "units", want[k].units);
        assert_text(ncid, want[k].var, "coordinates", "time station_y station_x station_name");
        char *ln = get_text(ncid, want[k].var, "long_name");
        assert_non_null(strstr(ln, "(the forcing at the gauge, linear in time between forcing slabs)"));
        assert_true(k == 0 || strstr(ln, "10 m wind") != NULL);
        free(ln);
        assert_true(get_double_att(ncid, want[k].var, "_FillValue") == FILL_DOUBLE_NUG);
        double buf[NS * NT];
        get_doubles(ncid, want[k].var, buf);
        for (size_t i = 0; i < NS * NT; i++)
            assert_true(isnan(sent[k][i]) ? buf[i] == FILL_DOUBLE_NUG : buf[i] == sent[k][i]);
    }
    assert_int_equal(nc_close(ncid), NC_NOERR);
    remove(path);

    /* part of the air series: refused, nothing written */
    gt.wind_v_ms = NULL;
    assert_int_equal(sw_ncw_gauges(path, &meta, &gt, &err), SW_ERR_USAGE);
    assert_non_null(strstr(err.msg, "air pressure and wind"));
    assert_false(exists(path));
}

static void test_gauges_refuse_bad_tables(void **state)
{
    (void)state;
    char path[1024];
    scratch_path(path, sizeof path, "ncw_gauges_bad.nc");
    double eta[NS * NT], u[NS * NT], v[NS * NT];
    sw_run_meta meta = test_meta("Test bay");
    sw_error err = {0};

    sw_gauge_table gt = gauge_table(eta, u, v);
    gt.n_stations = 0;
    assert_int_equal(sw_ncw_gauges(path, &meta, &gt, &err), SW_ERR_USAGE);
    assert_non_null(strstr(err.msg, path));

    gt = gauge_table(eta, u, v);
    gt.v_ms = NULL;
    assert_int_equal(sw_ncw_gauges(path, &meta, &gt, &err), SW_ERR_USAGE);

    const char *long_names[NS] = {"ok", "ok2",
                                  "A2345678901234567890123456789012345678901234567890123456789012345"};
    gt = gauge_table(eta, u, v);
    gt.names = long_names;
    assert_int_equal(sw_ncw_gauges(path, &meta, &gt, &err), SW_ERR_USAGE);
    assert_non_null(strstr(err.msg, "gauge 3"));

    gt = gauge_table(eta, u, v);
    meta.caution = NULL;
    assert_int_equal(sw_ncw_gauges(path, &meta, &gt, &err), SW_ERR_USAGE);
    assert_int_equal(sw_ncw_gauges(path, NULL, &gt, NULL), SW_ERR_USAGE);

    char part[1100];
    part_of(path, part, sizeof part);
    assert_false(exists(path));
    assert_false(exists(part));
}

/* ---- maps ------------------------------------------------------------------------------- */

enum { MNX = 5, MNY = 3, MN = MNX * MNY };
static const sw_grid M_GRID = {.nx = MNX, .ny = MNY, .dx_m = 1000.0, .dy_m = 2000.0, .x0_m = -500.0, .y0_m = 10000.0};

typedef struct {
    double depth[MN], eta_max[MN], eta_min[MN], arrival[MN], max_time[MN], speed[MN];
    unsigned char wet[MN];
} map_data;

/* Column 0 is land (NaN in every map); arrival never happens in the last cell. */
static sw_map_set map_set(map_data *d)
{
    for (size_t k = 0; k < MN; k++) {
        size_t i = k % MNX;
        d->wet[k] = i > 0;
        d->depth[k] = i > 0 ? 10.0 * (double)i : -2.0;
        d->eta_max[k] = i > 0 ? 0.5 + 0.01 * (double)k : NAN;
        d->eta_min[k] = i > 0 ? -0.25 - 0.01 * (double)k : NAN;
        d->arrival[k] = i > 0 ? 60.0 * (double)k : NAN;
        d->max_time[k] = i > 0 ? 90.0 * (double)k : NAN;
        d->speed[k] = i > 0 ? 0.125 * (double)k : NAN;
    }
    d->arrival[MN - 1] = NAN;
    sw_map_set m = {&M_GRID, d->depth, d->wet, d->eta_max, d->eta_min, d->arrival, d->max_time, d->speed, NULL, NULL, 0, NULL, NULL, NULL, NULL};
    return m;
}

static void assert_map_values(int ncid, const char *var, const double *sent)
{
    double got[MN];
    assert_var_dims(ncid, var, NC_DOUBLE, "y,x");
    assert_true(get_double_att(ncid, var, "_FillValue") == FILL_DOUBLE_NUG);
    get_doubles(ncid, var, got);
    for (size_t k = 0; k < MN; k++) {
        if (isnan(sent[k]))
            assert_true(got[k] == FILL_DOUBLE_NUG);
        else
            assert_true(got[k] == sent[k]);
    }
    int varid, shuffle, deflate, level, storage;
    size_t chunks[2];
    assert_int_equal(nc_inq_varid(ncid, var, &varid), NC_NOERR);
    assert_int_equal(nc_inq_var_deflate(ncid, varid, &shuffle, &deflate, &level), NC_NOERR);
    assert_true(shuffle && deflate && level == 1);
    assert_int_equal(nc_inq_var_chunking(ncid, varid, &storage, chunks), NC_NOERR);
    assert_int_equal(storage, NC_CHUNKED);
}

static void test_maps_roundtrip(void **state)
{
    (void)state;
    char path[1024];
    scratch_path(path, sizeof path, "ncw_maps.nc");
    map_data d;
    sw_map_set maps = map_set(&d);
    sw_run_meta meta = test_meta("Test bay");
    sw_error err = {0};
    assert_int_equal(sw_ncw_maps(path, &meta, &maps, &err), SW_OK);
    assert_done(path);

    int ncid;
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    assert_globals(ncid, "Test bay");
    assert_int_equal(dim_len(ncid, "x"), MNX);
    assert_int_equal(dim_len(ncid, "y"), MNY);
    assert_var_dims(ncid, "x", NC_DOUBLE, "x");
    assert_var_dims(ncid, "y", NC_DOUBLE, "y");
    assert_text(ncid, "x", "standard_name", "projection_x_coordinate");
    assert_text(ncid, "y", "standard_name", "projection_y_coordinate");
    assert_text(ncid, "x", "units", "m");
    assert_text(ncid, "y", "units", "m");
    assert_text(ncid, "x", "axis", "X");
    assert_text(ncid, "y", "axis", "Y");

    /* cell centres: x0 + (i + 1/2) dx, written out here rather than through grid.h */
    double xs[MNX], ys[MNY];
    get_doubles(ncid, "x", xs);
    get_doubles(ncid, "y", ys);
    const double want_x[MNX] = {0.0, 1000.0, 2000.0, 3000.0, 4000.0};
    const double want_y[MNY] = {11000.0, 13000.0, 15000.0};
    assert_memory_equal(xs, want_x, sizeof xs);
    assert_memory_equal(ys, want_y, sizeof ys);

    assert_text(ncid, "depth", "standard_name", "sea_floor_depth_below_mean_sea_level");
    assert_text(ncid, "depth", "units", "m");
    assert_text(ncid, "depth", "positive", "down");
    assert_map_values(ncid, "depth", d.depth);

    assert_text(ncid, "eta_max", "standard_name", "sea_surface_height_above_mean_sea_level");
    assert_text(ncid, "eta_max", "units", "m");
    assert_text(ncid, "eta_max", "cell_methods", "time: maximum");
    assert_text(ncid, "eta_max", "long_name", "highest sea surface elevation reached");
    assert_map_values(ncid, "eta_max", d.eta_max);
    assert_text(ncid, "eta_min", "standard_name", "sea_surface_height_above_mean_sea_level");
    assert_text(ncid, "eta_min", "cell_methods", "time: minimum");
    assert_map_values(ncid, "eta_min", d.eta_min);
    assert_text(ncid, "arrival_time", "units", "seconds");
    assert_map_values(ncid, "arrival_time", d.arrival);
    assert_text(ncid, "eta_max_time", "units", "seconds");
    assert_text(ncid, "eta_max_time", "long_name", "time at which eta_max was reached");
    assert_map_values(ncid, "eta_max_time", d.max_time);
    assert_text(ncid, "speed_max", "standard_name", "sea_water_speed");
    assert_text(ncid, "speed_max", "units", "m s-1");
    assert_text(ncid, "speed_max", "cell_methods", "time: maximum");
    assert_map_values(ncid, "speed_max", d.speed);

    /* CF 3.5: flag_values of the variable's type, flag_meanings blank-separated */
    assert_var_dims(ncid, "wet", NC_BYTE, "y,x");
    assert_text(ncid, "wet", "flag_meanings", "land water");
    int vid;
    signed char flags[2] = {9, 9}, wet[MN];
    nc_type ft;
    size_t fl;
    assert_int_equal(nc_inq_varid(ncid, "wet", &vid), NC_NOERR);
    assert_int_equal(nc_inq_att(ncid, vid, "flag_values", &ft, &fl), NC_NOERR);
    assert_int_equal(ft, NC_BYTE);
    assert_int_equal(fl, 2);
    assert_int_equal(nc_get_att_schar(ncid, vid, "flag_values", flags), NC_NOERR);
    assert_true(flags[0] == 0 && flags[1] == 1);
    assert_int_equal(nc_get_var_schar(ncid, vid, wet), NC_NOERR);
    for (size_t k = 0; k < MN; k++)
        assert_int_equal(wet[k], d.wet[k]);

    /* the arrival's meaning, for a tsunami and for a surge */
    char *ln = get_text(ncid, "arrival_time", "long_name");
    assert_non_null(strstr(ln, "first time |eta| reaches arrival_threshold"));
    assert_non_null(strstr(ln, "for a tsunami: the first wave's arrival"));
    assert_non_null(strstr(ln, "for a surge: the first time the water departs from mean level by the threshold"));
    free(ln);

    /* no atmosphere, no storm: none of their variables, no track dimension */
    assert_no_var(ncid, "wind_speed_max");
    assert_no_var(ncid, "air_pressure_min");
    assert_no_var(ncid, "storm_time");
    assert_no_var(ncid, "storm_x");
    int dim;
    assert_int_equal(nc_inq_dimid(ncid, "track", &dim), NC_EBADDIM);

    /* a projected grid without a coordinate reference: as always, no crs and no grid_mapping */
    assert_no_var(ncid, "crs");
    assert_no_var(ncid, "lon");
    assert_no_var(ncid, "lat");
    static const char *const all_maps[7] = {"depth", "wet", "eta_max", "eta_min", "arrival_time", "eta_max_time",
                                            "speed_max"};
    for (int k = 0; k < 7; k++)
        assert_no_var_att(ncid, all_maps[k], "grid_mapping");

    assert_int_equal(nc_close(ncid), NC_NOERR);
    remove(path);
}

/* A run with a storm: the highest wind and lowest pressure maps (NaN on land as the fill) and the
 * storm's track along its own dimension. */
static void test_maps_air_and_track(void **state)
{
    (void)state;
    char path[1024];
    scratch_path(path, sizeof path, "ncw_maps_air.nc");
    map_data d;
    sw_map_set maps = map_set(&d);
    double wind[MN], pmin[MN];
    for (size_t k = 0; k < MN; k++) {
        const int water = k % MNX > 0;
        wind[k] = water ? 20.0 + 0.5 * (double)k : NAN;
        pmin[k] = water ? 99000.0 - 10.0 * (double)k : NAN;
    }
    enum { NTR = 4 };
    const double tt[NTR] = {0, 300, 600, 700}, tx[NTR] = {-5000, 0, 5000, 6500}, ty[NTR] = {1e4, 1.2e4, 1.4e4, 1.5e4},
                 tp[NTR] = {97000, 96800, 96500, 96400};
    maps.wind_max_ms = wind;
    maps.air_pressure_min_pa = pmin;
    maps.n_track = NTR;
    maps.track_time_s = tt;
    maps.track_x_m = tx;
    maps.track_y_m = ty;
    maps.track_p_pa = tp;
    sw_run_meta meta = test_meta("Test bay");
    sw_error err = {0};
    assert_int_equal(sw_ncw_maps(path, &meta, &maps, &err), SW_OK);
    assert_done(path);

    int ncid;
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    assert_text(ncid, "wind_speed_max", "standard_name", "wind_speed");   /* CF standard name table */
    assert_text(ncid, "wind_speed_max", "units", "m s-1");
    assert_text(ncid, "wind_speed_max", "cell_methods", "time: maximum");   /* CF 7.3 */
    assert_text(ncid, "wind_speed_max", "long_name", "highest 10 m wind speed the water felt");
    assert_map_values(ncid, "wind_speed_max", wind);
    assert_text(ncid, "air_pressure_min", "standard_name", "air_pressure_at_mean_sea_level");
    assert_text(ncid, "air_pressure_min", "units", "Pa");
    assert_text(ncid, "air_pressure_min", "cell_methods", "time: minimum");
    assert_map_values(ncid, "air_pressure_min", pmin);

    assert_int_equal(dim_len(ncid, "track"), NTR);
    static const char *const tv[4] = {"storm_time", "storm_x", "storm_y", "storm_central_pressure"};
    const double *tsent[4] = {tt, tx, ty, tp};
    for (int k = 0; k < 4; k++) {
        double got[NTR];
        assert_var_dims(ncid, tv[k], NC_DOUBLE, "track");
        get_doubles(ncid, tv[k], got);
        assert_memory_equal(got, tsent[k], sizeof got);
        if (k > 0)
            assert_text(ncid, tv[k], "coordinates", "storm_time");
    }
    assert_text(ncid, "storm_time", "standard_name", "time");   /* CF 4.4 */
    assert_text(ncid, "storm_time", "units", "seconds since 2000-01-01 00:00:00");
    assert_text(ncid, "storm_x", "units", "m");
    assert_text(ncid, "storm_y", "units", "m");
    assert_text(ncid, "storm_central_pressure", "units", "Pa");
    assert_int_equal(nc_close(ncid), NC_NOERR);
    remove(path);

    /* the maps without a track (a weather file): no track dimension */
    maps.n_track = 0;
    assert_int_equal(sw_ncw_maps(path, &meta, &maps, &err), SW_OK);
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    assert_map_values(ncid, "wind_speed_max", wind);
    int dim;
    assert_int_equal(nc_inq_dimid(ncid, "track", &dim), NC_EBADDIM);
    assert_no_var(ncid, "storm_x");
    assert_int_equal(nc_close(ncid), NC_NOERR);
    remove(path);

    /* refused: one map of the two; track points without their arrays */
    maps.air_pressure_min_pa = NULL;
    assert_int_equal(sw_ncw_maps(path, &meta, &maps, &err), SW_ERR_USAGE);
    maps.air_pressure_min_pa = pmin;
    maps.n_track = NTR;
    maps.track_y_m = NULL;
    assert_int_equal(sw_ncw_maps(path, &meta, &maps, &err), SW_ERR_USAGE);
    assert_non_null(strstr(err.msg, "track"));
    assert_false(exists(path));
}

/* The writer must leave the caller's arrays alone (NaN is replaced in a copy). */
static void test_maps_keep_input(void **state)
{
    (void)state;
    char path[1024];
    scratch_path(path, sizeof path, "ncw_maps_input.nc");
    map_data d, before;
    memset(&d, 0, sizeof d);  /* padding too, for the byte comparison below */
    sw_map_set maps = map_set(&d);
    memcpy(&before, &d, sizeof d);
    sw_run_meta meta = test_meta("Test bay");
    assert_int_equal(sw_ncw_maps(path, &meta, &maps, NULL), SW_OK);
    assert_memory_equal(&before, &d, sizeof d);
    remove(path);
}

static void test_second_write_replaces(void **state)
{
    (void)state;
    char path[1024];
    scratch_path(path, sizeof path, "ncw_replace.nc");
    map_data d;
    sw_map_set maps = map_set(&d);
    sw_error err = {0};
    sw_run_meta meta = test_meta("first");
    assert_int_equal(sw_ncw_maps(path, &meta, &maps, &err), SW_OK);
    meta = test_meta("second");
    d.eta_max[7] = 42.0;
    assert_int_equal(sw_ncw_maps(path, &meta, &maps, &err), SW_OK);
    assert_done(path);

    int ncid;
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    assert_text(ncid, NULL, "title", "second");
    double got[MN];
    get_doubles(ncid, "eta_max", got);
    assert_true(got[7] == 42.0);
    assert_int_equal(nc_close(ncid), NC_NOERR);
    remove(path);
}

/* Every writer, aimed into a folder that does not exist: an IO/NetCDF error naming the path. */
static void test_missing_folder(void **state)
{
    (void)state;
    char dir[1024], path[1100], part[1200];
    tu_tmp_path(dir, sizeof dir, "ncw_no_such_folder");
    rmdir(dir);
    assert_false(exists(dir));
    snprintf(path, sizeof path, "%s/out.nc", dir);
    part_of(path, part, sizeof part);
    sw_run_meta meta = test_meta("Test bay");
    sw_error err = {0};

    double eta[NS * NT], u[NS * NT], v[NS * NT];
    sw_gauge_table gt = gauge_table(eta, u, v);
    sw_status st = sw_ncw_gauges(path, &meta, &gt, &err);
    assert_true(st == SW_ERR_IO || st == SW_ERR_NETCDF);
    assert_int_equal(err.code, st);
    assert_non_null(strstr(err.msg, path));
    assert_non_null(strstr(err.msg, "does not exist"));

    map_data d;
    sw_map_set maps = map_set(&d);
    sw_error_clear(&err);
    st = sw_ncw_maps(path, &meta, &maps, &err);
    assert_true(st == SW_ERR_IO || st == SW_ERR_NETCDF);
    assert_non_null(strstr(err.msg, path));

    sw_ncw_snapshots *s = (sw_ncw_snapshots *)&err;  /* must be reset to NULL */
    sw_error_clear(&err);
    st = sw_ncw_snapshots_open(path, &meta, &M_GRID, d.depth, d.wet, &s, &err);
    assert_true(st == SW_ERR_IO || st == SW_ERR_NETCDF);
    assert_null(s);
    assert_non_null(strstr(err.msg, path));

    assert_false(exists(path));
    assert_false(exists(part));
    assert_false(exists(dir));
}

/* The final rename fails when <path> is a folder: SW_ERR_IO, and the .part is removed. */
static void test_rename_failure_cleans_up(void **state)
{
    (void)state;
    char path[1024], part[1100];
    scratch_path(path, sizeof path, "ncw_is_a_folder.nc");
    part_of(path, part, sizeof part);
    rmdir(path);
    assert_int_equal(mkdir(path, 0700), 0);
    map_data d;
    sw_map_set maps = map_set(&d);
    sw_run_meta meta = test_meta("Test bay");
    sw_error err = {0};
    assert_int_equal(sw_ncw_maps(path, &meta, &maps, &err), SW_ERR_IO);
    assert_non_null(strstr(err.msg, path));
    assert_false(exists(part));
    struct stat st;
    assert_int_equal(stat(path, &st), 0);
    assert_true(S_ISDIR(st.st_mode));
    assert_int_equal(rmdir(path), 0);
}

/* A long scenario (beyond HDF5's 64 KiB compact attribute storage) and empty strings. */
static void test_long_and_empty_attributes(void **state)
{
    (void)state;
    char path[1024];
    scratch_path(path, sizeof path, "ncw_long_attr.nc");
    size_t n = 200000;
    char *text = malloc(n + 1);
    assert_non_null(text);
    for (size_t k = 0; k < n; k++)
        text[k] = (k % 80 == 79) ? '\n' : (char)('a' + k % 26);
    text[n] = '\0';
    sw_run_meta meta = test_meta("");
    meta.scenario_text = text;
    meta.history = "";
    double eta[NS * NT], u[NS * NT], v[NS * NT];
    sw_gauge_table gt = gauge_table(eta, u, v);
    sw_error err = {0};
    assert_int_equal(sw_ncw_gauges(path, &meta, &gt, &err), SW_OK);

    int ncid;
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    char *got = get_text(ncid, NULL, "scenario");
    assert_int_equal(strlen(got), n);
    assert_memory_equal(got, text, n);
    free(got);
    assert_text(ncid, NULL, "title", "");
    assert_history(ncid, "");
    assert_int_equal(nc_close(ncid), NC_NOERR);
    free(text);
    remove(path);
}

/* ---- snapshots -------------------------------------------------------------------------- */

static void fill_snapshot(double *eta, double t_s)
{
    for (size_t k = 0; k < MN; k++)
        eta[k] = (k % MNX == 0) ? NAN : 0.001 * t_s + 0.25 * (double)k;
}

static void test_snapshots_commit(void **state)
{
    (void)state;
    char path[1024], part[1100];
    scratch_path(path, sizeof path, "ncw_snap.nc");
    part_of(path, part, sizeof part);
    map_data d;
    map_set(&d);
    sw_run_meta meta = test_meta("Test bay");
    sw_error err = {0};
    sw_ncw_snapshots *s = NULL;
    assert_int_equal(sw_ncw_snapshots_open(path, &meta, &M_GRID, d.depth, d.wet, &s, &err), SW_OK);
    assert_non_null(s);
    assert_true(exists(part));
    assert_false(exists(path));

    const double times[3] = {0.0, 60.0, 120.0};
    double eta[MN];
    for (int n = 0; n < 3; n++) {
        fill_snapshot(eta, times[n]);
        assert_int_equal(sw_ncw_snapshots_append(s, times[n], eta, &err), SW_OK);
    }
    assert_int_equal(sw_ncw_snapshots_commit(s, &err), SW_OK);
    assert_done(path);

    int ncid;
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    assert_globals(ncid, "Test bay");
    int unlim;
    char unlim_name[NC_MAX_NAME + 1];
    assert_int_equal(nc_inq_unlimdim(ncid, &unlim), NC_NOERR);
    assert_int_equal(nc_inq_dimname(ncid, unlim, unlim_name), NC_NOERR);
    assert_string_equal(unlim_name, "time");
    assert_int_equal(dim_len(ncid, "time"), 3);
    assert_int_equal(dim_len(ncid, "x"), MNX);
    assert_int_equal(dim_len(ncid, "y"), MNY);
    assert_var_dims(ncid, "x", NC_DOUBLE, "x");
    assert_var_dims(ncid, "y", NC_DOUBLE, "y");
    assert_var_dims(ncid, "depth", NC_DOUBLE, "y,x");
    assert_var_dims(ncid, "time", NC_DOUBLE, "time");
    assert_var_dims(ncid, "eta", NC_FLOAT, "time,y,x");
    assert_text(ncid, "time", "units", "seconds since 2000-01-01 00:00:00");
    assert_text(ncid, "time", "standard_name", "time");
    assert_text(ncid, "time", "calendar", "standard");
    assert_text(ncid, "eta", "standard_name", "sea_surface_height_above_mean_sea_level");
    assert_text(ncid, "eta", "units", "m");
    assert_text(ncid, "depth", "standard_name", "sea_floor_depth_below_mean_sea_level");
    assert_map_values(ncid, "depth", d.depth);

    double t_got[3];
    get_doubles(ncid, "time", t_got);
    assert_memory_equal(t_got, times, sizeof times);

    int vid, storage;
    size_t chunks[3];
    float fill = 0.0f;
    assert_int_equal(nc_inq_varid(ncid, "eta", &vid), NC_NOERR);
    assert_int_equal(nc_get_att_float(ncid, vid, "_FillValue", &fill), NC_NOERR);
    assert_true(fill == FILL_FLOAT_NUG);
    assert_int_equal(nc_inq_var_chunking(ncid, vid, &storage, chunks), NC_NOERR);
    assert_int_equal(storage, NC_CHUNKED);
    assert_true(chunks[0] == 1 && chunks[1] == MNY && chunks[2] == MNX);  /* one slice per chunk */
    float got[3 * MN];
    assert_int_equal(nc_get_var_float(ncid, vid, got), NC_NOERR);
    for (int n = 0; n < 3; n++) {
        fill_snapshot(eta, times[n]);
        for (size_t k = 0; k < MN; k++) {
            if (isnan(eta[k]))
                assert_true(got[n * MN + k] == FILL_FLOAT_NUG);
            else
                assert_true(got[n * MN + k] == (float)eta[k]);
        }
    }
    assert_int_equal(nc_close(ncid), NC_NOERR);
    remove(path);
}

static void test_snapshots_abort(void **state)
{
    (void)state;
    char path[1024], part[1100];
    scratch_path(path, sizeof path, "ncw_snap_abort.nc");
    part_of(path, part, sizeof part);
    map_data d;
    map_set(&d);
    sw_run_meta meta = test_meta("Test bay");
    sw_error err = {0};
    sw_ncw_snapshots *s = NULL;
    assert_int_equal(sw_ncw_snapshots_open(path, &meta, &M_GRID, d.depth, NULL, &s, &err), SW_OK);
    double eta[MN];
    fill_snapshot(eta, 30.0);
    assert_int_equal(sw_ncw_snapshots_append(s, 30.0, eta, &err), SW_OK);
    sw_ncw_snapshots_abort(s);
    sw_ncw_snapshots_abort(NULL);
    assert_false(exists(path));
    assert_false(exists(part));
}

/* A snapshot going back in time is refused; the later commit fails and leaves nothing. */
static void test_snapshots_failed_append_fails_commit(void **state)
{
    (void)state;
    char path[1024], part[1100];
    scratch_path(path, sizeof path, "ncw_snap_back.nc");
    part_of(path, part, sizeof part);
    map_data d;
    map_set(&d);
    sw_run_meta meta = test_meta("Test bay");
    sw_error err = {0};
    sw_ncw_snapshots *s = NULL;
    assert_int_equal(sw_ncw_snapshots_open(path, &meta, &M_GRID, d.depth, d.wet, &s, &err), SW_OK);
    double eta[MN];
    fill_snapshot(eta, 60.0);
    assert_int_equal(sw_ncw_snapshots_append(s, 60.0, eta, &err), SW_OK);
    assert_int_equal(sw_ncw_snapshots_append(s, 30.0, eta, &err), SW_ERR_USAGE);
    assert_non_null(strstr(err.msg, path));
    assert_int_equal(sw_ncw_snapshots_append(s, NAN, eta, NULL), SW_ERR_USAGE);
    sw_error err2 = {0};
    assert_int_equal(sw_ncw_snapshots_commit(s, &err2), SW_ERR_USAGE);
    assert_non_null(strstr(err2.msg, path));
    assert_false(exists(path));
    assert_false(exists(part));
}

/* ---- coordinate reference systems ------------------------------------------------------- */

#define PI_NUG 3.14159265358979323846
#define R_EARTH 6371000.0                      /* the default radius, grid.h (IUGG mean radius [memory]) */
#define M_PER_DEG (R_EARTH * PI_NUG / 180.0)   /* metres of arc per degree on it [derived] */

/* A WKT text standing in for an input's crs_wkt: only copied, never parsed here. */
static const char UTM33_WKT[] =
    "PROJCS[\"WGS 84 / UTM zone 33N\",GEOGCS[\"WGS 84\",DATUM[\"WGS_1984\",SPHEROID[\"WGS 84\",6378137,"
    "298.257223563]],PRIMEM[\"Greenwich\",0],UNIT[\"degree\",0.0174532925199433]],PROJECTION["
    "\"Transverse_Mercator\"],PARAMETER[\"latitude_of_origin\",0],PARAMETER[\"central_meridian\",15],"
    "PARAMETER[\"scale_factor\",0.9996],PARAMETER[\"false_easting\",500000],PARAMETER[\"false_northing\",0],"
    "UNIT[\"metre\",1],AUTHORITY[\"EPSG\",\"32633\"]]";

/* How the seabed file of crs_input describes its grid mapping. */
typedef enum {
    CRS_IN_UTM,        /* grid_mapping "crs" -> transverse_mercator with parameters, crs_wkt, an EPSG code */
    CRS_IN_EXTENDED,   /* grid_mapping "utm: x y" (CF extended form) -> the same variable named utm */
    CRS_IN_NONE,       /* no grid_mapping attribute */
    CRS_IN_MISSING,    /* grid_mapping "nosuch": no such variable */
    CRS_IN_UNKNOWN,    /* grid_mapping_name "swiss_cheese_conformal" */
    CRS_IN_WKT_ONLY,   /* no grid_mapping_name, a spatial_ref text */
    CRS_IN_NOTHING,    /* neither a grid_mapping_name nor any well-known text */
} crs_input_kind;

/* Writes a small seabed file depth(y, x) whose grid mapping is described as `kind` says. */
static void crs_input(const char *path, crs_input_kind kind)
{
    int ncid, dy, dx, v, m;
    assert_int_equal(nc_create(path, NC_NETCDF4 | NC_CLOBBER, &ncid), NC_NOERR);
    assert_int_equal(nc_def_dim(ncid, "y", 3, &dy), NC_NOERR);
    assert_int_equal(nc_def_dim(ncid, "x", 4, &dx), NC_NOERR);
    int dims[2] = {dy, dx};
    assert_int_equal(nc_def_var(ncid, "depth", NC_DOUBLE, 2, dims, &v), NC_NOERR);
    const char *mvar = kind == CRS_IN_EXTENDED ? "utm" : "crs";
    const char *gm = kind == CRS_IN_EXTENDED ? "utm: x y" : kind == CRS_IN_MISSING ? "nosuch" : "crs";
    if (kind != CRS_IN_NONE)
        assert_int_equal(nc_put_att_text(ncid, v, "grid_mapping", strlen(gm), gm), NC_NOERR);
    assert_int_equal(nc_def_var(ncid, mvar, NC_INT, 0, NULL, &m), NC_NOERR);
    int fill = -1;
    assert_int_equal(nc_def_var_fill(ncid, m, 0, &fill), NC_NOERR);   /* a _FillValue: not a CRS attribute */
    const char *name = kind == CRS_IN_UNKNOWN ? "swiss_cheese_conformal" : "transverse_mercator";
    if (kind != CRS_IN_WKT_ONLY && kind != CRS_IN_NOTHING)
        assert_int_equal(nc_put_att_text(ncid, m, "grid_mapping_name", strlen(name), name), NC_NOERR);
    double d;
    float scale = 0.9996f;
    int epsg = 32633;
    d = 15.0;
    assert_int_equal(nc_put_att_double(ncid, m, "longitude_of_central_meridian", NC_DOUBLE, 1, &d), NC_NOERR);
    assert_int_equal(nc_put_att_float(ncid, m, "scale_factor_at_central_meridian", NC_FLOAT, 1, &scale), NC_NOERR);
    d = 500000.0;
    assert_int_equal(nc_put_att_double(ncid, m, "false_easting", NC_DOUBLE, 1, &d), NC_NOERR);
    const double towgs[3] = {0.0, 0.0, 0.0};
    assert_int_equal(nc_put_att_double(ncid, m, "towgs84", NC_DOUBLE, 3, towgs), NC_NOERR);
    assert_int_equal(nc_put_att_int(ncid, m, "epsg_code", NC_INT, 1, &epsg), NC_NOERR);
    if (kind == CRS_IN_WKT_ONLY)
        assert_int_equal(nc_put_att_text(ncid, m, "spatial_ref", strlen(UTM33_WKT), UTM33_WKT), NC_NOERR);
    else if (kind != CRS_IN_NOTHING)
        assert_int_equal(nc_put_att_text(ncid, m, "crs_wkt", strlen(UTM33_WKT), UTM33_WKT), NC_NOERR);
    const char *units_text = "m";
    assert_int_equal(nc_put_att_string(ncid, m, "units_note", 1, &units_text), NC_NOERR);   /* NC_STRING */
    assert_int_equal(nc_close(ncid), NC_NOERR);
}

/* The CF 1.11 appendix F grid mapping names [memory], typed here rather than taken from crs.c. */
static const char *const CF_MAPPINGS[16] = {
    "albers_conical_equal_area", "azimuthal_equidistant", "geostationary", "lambert_azimuthal_equal_area",
    "lambert_conformal_conic", "lambert_cylindrical_equal_area", "latitude_longitude", "mercator",
    "oblique_mercator", "orthographic", "polar_stereographic", "rotated_latitude_longitude", "sinusoidal",
    "stereographic", "transverse_mercator", "vertical_perspective",
};

/* Every attribute of the UTM mapping, as the file holds it (the _FillValue left out). */
static void assert_utm_atts(const sw_crs *c, int with_name)
{
    const sw_crs_att *a = sw_crs_find(c, "grid_mapping_name");
    if (with_name) {
        assert_non_null(a);
        assert_int_equal(a->type, SW_CRS_TEXT);
        assert_string_equal(a->text, "transverse_mercator");
        assert_string_equal(c->mapping_name, "transverse_mercator");
    } else {
        assert_null(a);
        assert_string_equal(c->mapping_name, "");
    }
    a = sw_crs_find(c, "longitude_of_central_meridian");
    assert_non_null(a);
    assert_int_equal(a->type, SW_CRS_NUMBERS);
    assert_int_equal(a->count, 1);
    assert_true(a->values[0] == 15.0);
    a = sw_crs_find(c, "scale_factor_at_central_meridian");   /* a float, its value exactly */
    assert_non_null(a);
    assert_true(a->values[0] == (double)0.9996f);
    a = sw_crs_find(c, "towgs84");
    assert_non_null(a);
    assert_int_equal(a->count, 3);
    a = sw_crs_find(c, "epsg_code");   /* an int, as a double */
    assert_non_null(a);
    assert_int_equal(a->type, SW_CRS_NUMBERS);
    assert_true(a->values[0] == 32633.0);
    a = sw_crs_find(c, with_name ? "crs_wkt" : "spatial_ref");
    assert_non_null(a);
    assert_int_equal(a->type, SW_CRS_TEXT);
    assert_int_equal(a->count, strlen(UTM33_WKT));
    assert_string_equal(a->text, UTM33_WKT);
    a = sw_crs_find(c, "units_note");   /* NC_STRING: its first string */
    assert_non_null(a);
    assert_int_equal(a->type, SW_CRS_TEXT);
    assert_string_equal(a->text, "m");
    assert_null(sw_crs_find(c, "_FillValue"));
    assert_int_equal(c->n_atts, with_name ? 8 : 7);
}

static void test_crs_read(void **state)
{
    (void)state;
    char path[1024];
    scratch_path(path, sizeof path, "crs_input.nc");
    sw_crs c;
    sw_error err = {0};

    crs_input(path, CRS_IN_UTM);
    assert_int_equal(sw_crs_read(path, "depth", &c, &err), SW_OK);
    assert_true(sw_crs_present(&c));
    assert_string_equal(c.variable, "crs");
    assert_utm_atts(&c, 1);
    sw_crs_free(&c);
    assert_false(sw_crs_present(&c));
    sw_crs_free(&c);   /* twice is fine */
    sw_crs_free(NULL);

    crs_input(path, CRS_IN_EXTENDED);   /* CF 5.6 extended form: the first mapping's name */
    assert_int_equal(sw_crs_read(path, "depth", &c, &err), SW_OK);
    assert_string_equal(c.variable, "utm");
    assert_utm_atts(&c, 1);
    sw_crs_free(&c);

    crs_input(path, CRS_IN_WKT_ONLY);   /* well-known text alone is a coordinate reference */
    assert_int_equal(sw_crs_read(path, "depth", &c, &err), SW_OK);
    assert_string_equal(c.variable, "crs");
    assert_utm_atts(&c, 0);
    sw_crs_free(&c);

    crs_input(path, CRS_IN_NONE);       /* no grid_mapping: no CRS, and fine */
    memset(&c, 0x5a, sizeof c);
    assert_int_equal(sw_crs_read(path, "depth", &c, &err), SW_OK);
    assert_false(sw_crs_present(&c));
    assert_int_equal(c.n_atts, 0);
    assert_null(c.atts);
    sw_crs_free(&c);
    remove(path);
}

/* Each refusal: one line naming the file and the variable, with the accepted form. */
static void test_crs_refused(void **state)
{
    (void)state;
    char path[1024];
    scratch_path(path, sizeof path, "crs_bad.nc");
    sw_crs c;
    sw_error err = {0};

    crs_input(path, CRS_IN_MISSING);
    assert_int_equal(sw_crs_read(path, "depth", &c, &err), SW_ERR_INPUT);
    assert_false(sw_crs_present(&c));
    assert_null(c.atts);
    assert_non_null(strstr(err.msg, path));
    assert_non_null(strstr(err.msg, "variable 'depth'"));
    assert_non_null(strstr(err.msg, "grid_mapping 'nosuch' names no variable"));
    assert_non_null(strstr(err.msg, "crs"));   /* the scalar variables the file does have */
    assert_null(strchr(err.msg, '\n'));

    crs_input(path, CRS_IN_UNKNOWN);
    sw_error_clear(&err);
    assert_int_equal(sw_crs_read(path, "depth", &c, &err), SW_ERR_INPUT);
    assert_null(c.atts);
    assert_non_null(strstr(err.msg, path));
    assert_non_null(strstr(err.msg, "variable 'crs' (the grid_mapping of 'depth')"));
    assert_non_null(strstr(err.msg, "'swiss_cheese_conformal' is not a CF grid mapping"));
    for (int k = 0; k < 16; k++)
        assert_non_null(strstr(err.msg, CF_MAPPINGS[k]));
    assert_null(strchr(err.msg, '\n'));

    crs_input(path, CRS_IN_NOTHING);
    sw_error_clear(&err);
    assert_int_equal(sw_crs_read(path, "depth", &c, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "has no grid_mapping_name"));
    assert_non_null(strstr(err.msg, "crs_wkt or spatial_ref"));

    sw_error_clear(&err);
    assert_int_equal(sw_crs_read(path, "elevation", &c, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "variable 'elevation' not found"));
    assert_non_null(strstr(err.msg, "depth"));
    remove(path);

    sw_error_clear(&err);
    assert_int_equal(sw_crs_read(path, "depth", &c, &err), SW_ERR_IO);   /* the file is gone */
    assert_non_null(strstr(err.msg, path));
    assert_int_equal(sw_crs_read(NULL, "depth", &c, &err), SW_ERR_USAGE);
}

static void test_crs_cf_names(void **state)
{
    (void)state;
    for (int k = 0; k < 16; k++) {
        assert_true(sw_crs_is_cf_mapping(CF_MAPPINGS[k]));
        assert_non_null(strstr(sw_crs_cf_names(), CF_MAPPINGS[k]));
    }
    assert_false(sw_crs_is_cf_mapping("Transverse_Mercator"));   /* CF names are lower case */
    assert_false(sw_crs_is_cf_mapping("utm"));
    assert_false(sw_crs_is_cf_mapping(""));
    assert_false(sw_crs_is_cf_mapping(NULL));
    /* exactly those 16: the list has 15 separators */
    size_t commas = 0;
    for (const char *p = sw_crs_cf_names(); *p; p++)
        commas += *p == ',';
    assert_int_equal(commas, 15);
}

/* Every attribute of c on the variable crs of ncid, with the same values. */
static void assert_crs_copied(int ncid, const sw_crs *c)
{
    int vid, natts, ndims;
    nc_type type;
    assert_int_equal(nc_inq_varid(ncid, "crs", &vid), NC_NOERR);
    assert_int_equal(nc_inq_var(ncid, vid, NULL, &type, &ndims, NULL, &natts), NC_NOERR);
    assert_int_equal(ndims, 0);   /* a scalar: CF 5.6 */
    assert_int_equal(natts, (int)c->n_atts);
    for (size_t k = 0; k < c->n_atts; k++) {
        const sw_crs_att *a = &c->atts[k];
        if (a->type == SW_CRS_TEXT) {
            assert_text(ncid, "crs", a->name, a->text);
            continue;
        }
        size_t len;
        assert_int_equal(nc_inq_att(ncid, vid, a->name, &type, &len), NC_NOERR);
        assert_int_equal(type, NC_DOUBLE);
        assert_int_equal(len, a->count);
        double got[8];
        assert_true(len <= 8);
        assert_int_equal(nc_get_att_double(ncid, vid, a->name, got), NC_NOERR);
        assert_memory_equal(got, a->values, len * sizeof *got);
    }
}

/* A projected run whose seabed file has a UTM grid mapping: maps, snapshots and gauges carry it. */
static void test_projected_crs_copied(void **state)
{
    (void)state;
    char in[1024], path[1024], snap[1024], gpath[1024];
    scratch_path(in, sizeof in, "crs_utm_in.nc");
    scratch_path(path, sizeof path, "ncw_maps_utm.nc");
    scratch_path(snap, sizeof snap, "ncw_snap_utm.nc");
    scratch_path(gpath, sizeof gpath, "ncw_gauges_utm.nc");
    crs_input(in, CRS_IN_UTM);
    sw_crs c;
    sw_error err = {0};
    assert_int_equal(sw_crs_read(in, "depth", &c, &err), SW_OK);

    map_data d;
    sw_map_set maps = map_set(&d);
    sw_run_meta meta = test_meta("Test bay");
    meta.crs = &c;
    meta.grid = &M_GRID;
    assert_int_equal(sw_ncw_maps(path, &meta, &maps, &err), SW_OK);
    int ncid;
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    assert_crs_copied(ncid, &c);
    assert_text(ncid, "x", "standard_name", "projection_x_coordinate");   /* still projected metres */
    assert_text(ncid, "y", "units", "m");
    assert_no_var(ncid, "lon");
    static const char *const all_maps[7] = {"depth", "wet", "eta_max", "eta_min", "arrival_time", "eta_max_time",
                                            "speed_max"};
    for (int k = 0; k < 7; k++)
        assert_text(ncid, all_maps[k], "grid_mapping", "crs");
    assert_no_var_att(ncid, "x", "grid_mapping");
    assert_map_values(ncid, "eta_max", d.eta_max);
    assert_int_equal(nc_close(ncid), NC_NOERR);

    sw_ncw_snapshots *s = NULL;
    double eta[MN];
    fill_snapshot(eta, 0.0);
    assert_int_equal(sw_ncw_snapshots_open(snap, &meta, &M_GRID, d.depth, d.wet, &s, &err), SW_OK);
    assert_int_equal(sw_ncw_snapshots_append(s, 0.0, eta, &err), SW_OK);
    assert_int_equal(sw_ncw_snapshots_commit(s, &err), SW_OK);
    assert_int_equal(nc_open(snap, NC_NOWRITE, &ncid), NC_NOERR);
    assert_crs_copied(ncid, &c);
    assert_text(ncid, "eta", "grid_mapping", "crs");
    assert_text(ncid, "depth", "grid_mapping", "crs");
    assert_int_equal(nc_close(ncid), NC_NOERR);

    double ge[NS * NT], gu[NS * NT], gv[NS * NT];
    sw_gauge_table gt = gauge_table(ge, gu, gv);
    assert_int_equal(sw_ncw_gauges(gpath, &meta, &gt, &err), SW_OK);
    assert_int_equal(nc_open(gpath, NC_NOWRITE, &ncid), NC_NOERR);
    assert_crs_copied(ncid, &c);
    assert_text(ncid, "eta", "grid_mapping", "crs");
    assert_text(ncid, "eta", "coordinates", "time station_y station_x station_name");
    assert_text(ncid, "u", "standard_name", "sea_water_x_velocity");
    double buf[NS];
    get_doubles(ncid, "station_x", buf);
    assert_memory_equal(buf, G_X, sizeof G_X);
    assert_int_equal(nc_close(ncid), NC_NOERR);

    sw_crs_free(&c);
    remove(in);
    remove(path);
    remove(snap);
    remove(gpath);
}

/* A geographic grid: 5 x 3 cells of 0.5 x 0.25 degrees from 179 deg E, 40 deg S, across the 180th
 * meridian. */
static sw_grid geo_grid(void)
{
    sw_grid g = {.nx = MNX, .ny = MNY, .dx_m = 0.5 * M_PER_DEG, .dy_m = 0.25 * M_PER_DEG,
                 .x0_m = 179.0 * M_PER_DEG, .y0_m = -40.0 * M_PER_DEG, .kind = SW_GRID_GEOGRAPHIC,
                 .radius_m = R_EARTH};
    return g;
}

/* The cell centres in degrees [derived: west edge + (i + 1/2) spacing]. */
static const double GEO_LON[MNX] = {179.25, 179.75, 180.25, 180.75, 181.25};
static const double GEO_LAT[MNY] = {-39.875, -39.625, -39.375};

/* lon(lon), lat(lat) in degrees, the latitude_longitude crs on the sphere, no x or y. */
static void assert_geo_coords(int ncid)
{
    assert_int_equal(dim_len(ncid, "lon"), MNX);
    assert_int_equal(dim_len(ncid, "lat"), MNY);
    assert_var_dims(ncid, "lon", NC_DOUBLE, "lon");
    assert_var_dims(ncid, "lat", NC_DOUBLE, "lat");
    assert_text(ncid, "lon", "standard_name", "longitude");
    assert_text(ncid, "lon", "units", "degrees_east");
    assert_text(ncid, "lon", "axis", "X");
    assert_text(ncid, "lat", "standard_name", "latitude");
    assert_text(ncid, "lat", "units", "degrees_north");
    assert_text(ncid, "lat", "axis", "Y");
    double lon[MNX], lat[MNY];
    get_doubles(ncid, "lon", lon);
    get_doubles(ncid, "lat", lat);
    for (size_t i = 0; i < MNX; i++)
        assert_true(fabs(lon[i] - GEO_LON[i]) < 1e-9);
    for (size_t j = 0; j < MNY; j++)
        assert_true(fabs(lat[j] - GEO_LAT[j]) < 1e-9);
    assert_no_var(ncid, "x");
    assert_no_var(ncid, "y");
    assert_var_dims(ncid, "crs", NC_INT, "");
    assert_text(ncid, "crs", "grid_mapping_name", "latitude_longitude");
    assert_true(get_double_att(ncid, "crs", "semi_major_axis") == R_EARTH);
    assert_true(get_double_att(ncid, "crs", "inverse_flattening") == 0.0);
}

static void test_maps_geographic(void **state)
{
    (void)state;
    char in[1024], path[1024];
    scratch_path(in, sizeof in, "crs_geo_in.nc");
    scratch_path(path, sizeof path, "ncw_maps_geo.nc");
    crs_input(in, CRS_IN_UTM);
    sw_crs c;
    sw_error err = {0};
    assert_int_equal(sw_crs_read(in, "depth", &c, &err), SW_OK);
    const sw_grid g = geo_grid();
    map_data d;
    sw_map_set maps = map_set(&d);
    maps.grid = &g;
    enum { NTR = 2 };
    const double tt[NTR] = {0, 600}, tx[NTR] = {179.5 * M_PER_DEG, 180.5 * M_PER_DEG},
                 ty[NTR] = {-39.5 * M_PER_DEG, -39.25 * M_PER_DEG}, tp[NTR] = {97000, 96800};
    maps.n_track = NTR;
    maps.track_time_s = tt;
    maps.track_x_m = tx;
    maps.track_y_m = ty;
    maps.track_p_pa = tp;
    sw_run_meta meta = test_meta("Test bay");
    meta.crs = &c;   /* a projected CRS is not used on a geographic grid */
    assert_int_equal(sw_ncw_maps(path, &meta, &maps, &err), SW_OK);

    int ncid;
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    assert_geo_coords(ncid);
    int vid, natts;
    assert_int_equal(nc_inq_varid(ncid, "crs", &vid), NC_NOERR);
    assert_int_equal(nc_inq_varnatts(ncid, vid, &natts), NC_NOERR);
    nc_type t;
    size_t len;
    assert_int_equal(nc_inq_att(ncid, vid, "crs_wkt", &t, &len), NC_ENOTATT);
    static const char *const all_maps[7] = {"depth", "wet", "eta_max", "eta_min", "arrival_time", "eta_max_time",
                                            "speed_max"};
    for (int k = 0; k < 7; k++) {
        assert_var_dims(ncid, all_maps[k], k == 1 ? NC_BYTE : NC_DOUBLE, "lat,lon");
        assert_text(ncid, all_maps[k], "grid_mapping", "crs");
    }
    double got[MN];
    get_doubles(ncid, "eta_min", got);   /* the values themselves are as on any grid */
    for (size_t k = 0; k < MN; k++)
        assert_true(isnan(d.eta_min[k]) ? got[k] == FILL_DOUBLE_NUG : got[k] == d.eta_min[k]);
    double lon[NTR], lat[NTR];
    assert_no_var(ncid, "storm_x");
    get_doubles(ncid, "storm_lon", lon);
    get_doubles(ncid, "storm_lat", lat);
    assert_text(ncid, "storm_lon", "units", "degrees_east");
    assert_text(ncid, "storm_lat", "units", "degrees_north");
    assert_true(fabs(lon[0] - 179.5) < 1e-9 && fabs(lon[1] - 180.5) < 1e-9);
    assert_true(fabs(lat[0] + 39.5) < 1e-9 && fabs(lat[1] + 39.25) < 1e-9);
    assert_int_equal(nc_close(ncid), NC_NOERR);

    /* another sphere's radius is the crs's */
    sw_grid g2 = g;
    g2.radius_m = 3389500.0;
    g2.x0_m = 179.0 * g2.radius_m * PI_NUG / 180.0;
    g2.dx_m = 0.5 * g2.radius_m * PI_NUG / 180.0;
    g2.y0_m = -40.0 * g2.radius_m * PI_NUG / 180.0;
    g2.dy_m = 0.25 * g2.radius_m * PI_NUG / 180.0;
    maps.grid = &g2;
    maps.n_track = 0;
    assert_int_equal(sw_ncw_maps(path, &meta, &maps, &err), SW_OK);
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    assert_true(get_double_att(ncid, "crs", "semi_major_axis") == 3389500.0);
    double lon2[MNX];
    get_doubles(ncid, "lon", lon2);
    for (size_t i = 0; i < MNX; i++)
        assert_true(fabs(lon2[i] - GEO_LON[i]) < 1e-9);
    assert_int_equal(nc_close(ncid), NC_NOERR);

    /* a geographic grid without a radius is refused, nothing written */
    remove(path);
    g2.radius_m = 0.0;
    assert_int_equal(sw_ncw_maps(path, &meta, &maps, &err), SW_ERR_USAGE);
    assert_non_null(strstr(err.msg, "radius"));
    assert_false(exists(path));
    sw_crs_free(&c);
    remove(in);
}

static void test_snapshots_geographic(void **state)
{
    (void)state;
    char path[1024];
    scratch_path(path, sizeof path, "ncw_snap_geo.nc");
    const sw_grid g = geo_grid();
    map_data d;
    map_set(&d);
    sw_run_meta meta = test_meta("Test bay");
    sw_error err = {0};
    sw_ncw_snapshots *s = NULL;
    double eta[MN];
    fill_snapshot(eta, 30.0);
    assert_int_equal(sw_ncw_snapshots_open(path, &meta, &g, d.depth, d.wet, &s, &err), SW_OK);
    assert_int_equal(sw_ncw_snapshots_append(s, 30.0, eta, &err), SW_OK);
    assert_int_equal(sw_ncw_snapshots_commit(s, &err), SW_OK);
    int ncid;
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    assert_geo_coords(ncid);
    assert_var_dims(ncid, "eta", NC_FLOAT, "time,lat,lon");
    assert_text(ncid, "eta", "grid_mapping", "crs");
    assert_text(ncid, "depth", "grid_mapping", "crs");
    assert_text(ncid, "wet", "grid_mapping", "crs");
    assert_int_equal(nc_close(ncid), NC_NOERR);
    remove(path);
}

/* Gauges of a geographic run: positions in degrees, eastward / northward velocities. */
static void test_gauges_geographic(void **state)
{
    (void)state;
    char path[1024];
    scratch_path(path, sizeof path, "ncw_gauges_geo.nc");
    const sw_grid g = geo_grid();
    double eta[NS * NT], u[NS * NT], v[NS * NT];
    sw_gauge_table gt = gauge_table(eta, u, v);
    const double lon[NS] = {179.3, 180.0, 181.1}, lat[NS] = {-39.9, -39.5, -39.26};
    double xm[NS], ym[NS];
    for (size_t k = 0; k < NS; k++) {
        xm[k] = lon[k] * M_PER_DEG;
        ym[k] = lat[k] * M_PER_DEG;
    }
    gt.x_m = xm;
    gt.y_m = ym;
    sw_run_meta meta = test_meta("Test bay");
    meta.grid = &g;
    sw_error err = {0};
    assert_int_equal(sw_ncw_gauges(path, &meta, &gt, &err), SW_OK);
    int ncid;
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    assert_no_var(ncid, "station_x");
    assert_no_var(ncid, "station_y");
    assert_var_dims(ncid, "station_lon", NC_DOUBLE, "station");
    assert_var_dims(ncid, "station_lat", NC_DOUBLE, "station");
    assert_text(ncid, "station_lon", "standard_name", "longitude");
    assert_text(ncid, "station_lon", "units", "degrees_east");
    assert_text(ncid, "station_lat", "standard_name", "latitude");
    assert_text(ncid, "station_lat", "units", "degrees_north");
    double got[NS];
    get_doubles(ncid, "station_lon", got);
    for (size_t k = 0; k < NS; k++)
        assert_true(fabs(got[k] - lon[k]) < 1e-9);
    get_doubles(ncid, "station_lat", got);
    for (size_t k = 0; k < NS; k++)
        assert_true(fabs(got[k] - lat[k]) < 1e-9);
    assert_text(ncid, "u", "standard_name", "eastward_sea_water_velocity");
    assert_text(ncid, "v", "standard_name", "northward_sea_water_velocity");
    assert_text(ncid, "eta", "standard_name", "sea_surface_height_above_mean_sea_level");
    for (int k = 0; k < 3; k++) {
        const char *var = (const char *[]){"eta", "u", "v"}[k];
        assert_text(ncid, var, "coordinates", "time station_lat station_lon station_name");
        assert_text(ncid, var, "grid_mapping", "crs");
    }
    assert_text(ncid, "crs", "grid_mapping_name", "latitude_longitude");
    assert_int_equal(nc_close(ncid), NC_NOERR);
    remove(path);
}

/* The sweep file: lat, lon and a crs on a geographic base grid; a given CRS copied on a projected one. */
static void test_sweep_file_crs(void **state)
{
    (void)state;
    char in[1024], path[1024];
    scratch_path(in, sizeof in, "crs_sweep_in.nc");
    scratch_path(path, sizeof path, "ncs_sweep_crs.nc");
    crs_input(in, CRS_IN_UTM);
    sw_crs c;
    sw_error err = {0};
    assert_int_equal(sw_crs_read(in, "depth", &c, &err), SW_OK);

    map_data md;
    map_set(&md);
    const sw_grid g = geo_grid();
    const char *pname[1] = {"amplitude"}, *punit[1] = {"m"}, *vtext[1] = {"1 m"}, *errs[1] = {""};
    const char *gname[1] = {"Quay"};
    const double value[1] = {1.0}, gx[1] = {180.0 * M_PER_DEG}, gy[1] = {-39.5 * M_PER_DEG};
    const double one[1] = {1.0}, gtime[2] = {0.0, 60.0}, geta[2] = {0.0, 0.5};
    const unsigned char failed[1] = {0};
    int counts[MN];
    for (size_t k = 0; k < MN; k++)
        counts[k] = 1;
    sw_ncs_sweep d = {
        .title = "t", .history = "h", .scenario_text = "s", .version = "v", .caution = CAUTION,
        .time_origin = "2000-01-01 00:00:00", .design = "one-at-a-time", .measure = "m", .map_method = "nearest",
        .n_params = 1, .param_name = pname, .param_units = punit,
        .n_members = 1, .value = value, .value_text = vtext, .failed = failed, .error = errs,
        .n_gauges = 1, .gauge_name = gname, .gauge_x = gx, .gauge_y = gy,
        .arrival_s = one, .peak_m = one, .peak_time_s = one, .trough_m = one,
        .n_times = 2, .gauge_time_s = gtime, .gauge_eta_m = geta, .arrival_sens = one, .peak_sens = one,
        .sens_units_arrival = "s", .sens_units_peak = "m",
        .grid = &g, .crs = &c, .depth_m = md.depth,
        .arrival_earliest_s = md.arrival, .arrival_median_s = md.arrival, .arrival_latest_s = md.arrival,
        .arrival_spread_s = md.arrival, .eta_max_p50_m = md.eta_max, .eta_max_p90_m = md.eta_max,
        .eta_max_highest_m = md.eta_max, .members_wet = counts, .members_reached = counts,
    };
    static const char *const sweep_maps[10] = {"depth", "arrival_earliest", "arrival_median", "arrival_latest",
                                               "arrival_spread", "eta_max_p50", "eta_max_p90", "eta_max_highest",
                                               "members_wet", "members_reached"};
    assert_int_equal(sw_ncs_sweep_write(path, &d, &err), SW_OK);
    int ncid;
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    assert_geo_coords(ncid);
    for (int k = 0; k < 10; k++) {
        assert_text(ncid, sweep_maps[k], "grid_mapping", "crs");
        assert_text(ncid, sweep_maps[k], "coordinates", "lat lon");
    }
    assert_no_var(ncid, "station_x");
    double got[1];
    get_doubles(ncid, "station_lon", got);
    assert_true(fabs(got[0] - 180.0) < 1e-9);
    get_doubles(ncid, "station_lat", got);
    assert_true(fabs(got[0] + 39.5) < 1e-9);
    assert_text(ncid, "station_lon", "units", "degrees_east");
    assert_int_equal(nc_close(ncid), NC_NOERR);

    d.grid = &M_GRID;   /* projected with the UTM CRS */
    assert_int_equal(sw_ncs_sweep_write(path, &d, &err), SW_OK);
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    assert_crs_copied(ncid, &c);
    assert_text(ncid, "x", "units", "m");
    for (int k = 0; k < 10; k++)
        assert_text(ncid, sweep_maps[k], "grid_mapping", "crs");
    assert_int_equal(nc_close(ncid), NC_NOERR);

    d.crs = NULL;       /* projected without: no crs, no grid_mapping, as always */
    assert_int_equal(sw_ncs_sweep_write(path, &d, &err), SW_OK);
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    assert_no_var(ncid, "crs");
    for (int k = 0; k < 10; k++)
        assert_no_var_att(ncid, sweep_maps[k], "grid_mapping");
    get_doubles(ncid, "station_x", got);
    assert_true(got[0] == gx[0]);
    assert_int_equal(nc_close(ncid), NC_NOERR);
    sw_crs_free(&c);
    remove(in);
    remove(path);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_gauges_roundtrip),
        cmocka_unit_test(test_gauges_air),
        cmocka_unit_test(test_gauges_refuse_bad_tables),
        cmocka_unit_test(test_maps_roundtrip),
        cmocka_unit_test(test_maps_air_and_track),
        cmocka_unit_test(test_maps_keep_input),
        cmocka_unit_test(test_second_write_replaces),
        cmocka_unit_test(test_missing_folder),
        cmocka_unit_test(test_rename_failure_cleans_up),
        cmocka_unit_test(test_long_and_empty_attributes),
        cmocka_unit_test(test_snapshots_commit),
        cmocka_unit_test(test_snapshots_abort),
        cmocka_unit_test(test_snapshots_failed_append_fails_commit),
        cmocka_unit_test(test_crs_read),
        cmocka_unit_test(test_crs_refused),
        cmocka_unit_test(test_crs_cf_names),
        cmocka_unit_test(test_projected_crs_copied),
        cmocka_unit_test(test_maps_geographic),
        cmocka_unit_test(test_snapshots_geographic),
        cmocka_unit_test(test_gauges_geographic),
        cmocka_unit_test(test_sweep_file_crs),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
