/* test_alloc_fail.c - every allocation failure in a whole run returns an error and frees what it took.
 *
 * For each scenario below (all fictional, tiny grids) the test makes the calls `shoreward run` makes
 * (cli/cmd_run.c, cli/common.c: sw_scenario_load, sw_setup_build, sw_report_plan, sw_run,
 * sw_report_run, sw_report_run_json, then the frees) while alloc_hook.h fails allocation number N of
 * the library's own code, for N = 1, 2, ... until a run completes without reaching N. Each failing N
 * must give a failure status with a non-empty message, and must not crash. A run that succeeds although
 * an allocation failed before its reports must have used a documented fallback that changes nothing: its
 * results must equal those of a run without the failure (today one such allocation: the row-value room of
 * sw_model_set_observer, model.h), otherwise the failure was swallowed and the test fails. (The text reports
 * return nothing and may skip a line instead.) The total number of allocations of a complete run must
 * exceed a floor, so the sweep cannot pass vacuously. Under AddressSanitizer (-DSW_SANITIZE=ON) a leak
 * check runs after every N, so a leak on a failure path fails the test and names its N. No failure may
 * leave a half-written output (a `.part` file, atomic_file.h) in the output folder.
 */
#define _DEFAULT_SOURCE
#include <dirent.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>
#include <netcdf.h>

#include "alloc_hook.h"
#include "testutil.h"
#include "inputs/scenario.h"
#include "outputs/report.h"
#include "run/run.h"
#include "run/setup.h"

#if defined(__SANITIZE_ADDRESS__)
#include <sanitizer/lsan_interface.h>
#define SWEEP_LEAK_CHECK() __lsan_do_recoverable_leak_check()
#else
#define SWEEP_LEAK_CHECK() 0
#endif

#define SWEEP_MAX_N 100000   /* a run with more allocations than this stops the test */
/* A complete run of each scenario must make more allocations than this, so that the sweep cannot pass
 * vacuously (e.g. with a hook that counts nothing). [derived] When the test was written the library made
 * 60 (tsunami), 86 (storm), 102 (fault) and 83 (NetCDF seabed) allocations; the floor leaves room for
 * allocations merged later. */
#define SWEEP_FLOOR 40

/* A fictional basin (Tern Sound): recipe seabed with a bay, an island and a shoal, a hump source, gauges,
 * snapshots. */
static const char tsunami_scn[] =
    "; Tern Sound - FICTIONAL, for the allocation-failure sweep\n"
    "[run]\ntitle = Tern Sound (fictional)\nduration = 120 s\nlayout = C\n"
    "gauge_interval = 20 s\nsnapshot_interval = 60 s\narrival_threshold = 0.01 m\n"
    "[grid]\nnx = 24\nny = 16\ndx = 1 km\n"
    "[edges]\nall = open\neast = wall\n"
    "[seabed]\ndeep = 1000 m\ncoast = east\nshoreline = 20 km\nshelf_depth = 50 m\nshelf_width = 4 km\n"
    "slope_width = 4 km\nland_height = 10 m\nmin_depth = 2 m\n"
    "[bay Tervelka Cove]\nx = 19 km\ny = 8 km\nradius_x = 2 km\nradius_y = 1.5 km\ndepth = 10 m\n"
    "[island Pellquin Rock]\nx = 10 km\ny = 5 km\nradius = 1 km\nheight = 20 m\n"
    "[shoal Velzimar Bank]\nx = 14 km\ny = 11 km\nradius = 1 km\ncrest = 5 m\n"
    "[source main]\nshape = hump\nx = 6 km\ny = 8 km\namplitude = 1 m\nradius = 2 km\n"
    "[gauges]\nOuter = 8 km, 8 km\nCove = 18 km, 8 km\n";

/* A fictional storm crossing the same kind of basin: track file, drag law, rotation, friction. */
static const char storm_scn[] =
    "; Tern Sound storm - FICTIONAL, for the allocation-failure sweep\n"
    "[run]\ntitle = Tern Sound storm (fictional)\nduration = 20 min\nlayout = C\n"
    "gauge_interval = 5 min\norigin = 2000-01-01 00:00:00\nrotation = f-plane\nlatitude = 20 deg\n"
    "friction = quadratic\ndrag = 0.0025\n"
    "[grid]\nnx = 20\nny = 16\ndx = 2 km\n"
    "[edges]\nall = open\neast = wall\n"
    "[seabed]\ndeep = 500 m\ncoast = east\nshoreline = 34 km\nshelf_depth = 40 m\nshelf_width = 6 km\n"
    "slope_width = 6 km\nland_height = 10 m\nmin_depth = 2 m\n"
    "[storm]\ntrack = alloc-track.txt\n"
    "[wind]\ndrag_law = large-pond\n"
    "[gauges]\nShore = 30 km, 16 km\n";

static const char storm_track[] =
    "# FICTIONAL storm track for the allocation-failure sweep\n"
    "time[h]   x[km]   y[km]   central_pressure[hPa]   rmax[km]   B\n"
    "0         -40     0       980                     20         1.3\n"
    "1         0       10      975                     20         1.3\n"
    "2         40      20      980                     20         1.3\n";

/* A fictional fault: a segment table, Kajiura filter, rupture in time. */
static const char fault_scn[] =
    "; Tern Trench - FICTIONAL, for the allocation-failure sweep\n"
    "[run]\ntitle = Tern Trench (fictional)\nduration = 60 s\nlayout = C\n"
    "gauge_interval = 20 s\n"
    "[grid]\nnx = 20\nny = 16\ndx = 2 km\n"
    "[edges]\nall = open\n"
    "[seabed]\ndeep = 2000 m\n"
    "[fault trench]\nsegments = alloc-segments.txt\nsurface = kajiura\nrupture_speed = 2000 m/s\n"
    "hypocentre_x = 16 km\nhypocentre_y = 10 km\nrise = 10 s\n"
    "[fault splay]\nx = 24 km\ny = 16 km\ndepth = 1 km\nlength = 8 km\nwidth = 4 km\nstrike = 5\n"
    "dip = 35\nrake = 90\nslip = 1 m\nhorizontal = on\n"
    "[gauges]\nMid = 20 km, 16 km\n";

static const char fault_segments[] =
    "# FICTIONAL fault segments for the allocation-failure sweep\n"
    "x[km]  y[km]  depth[km]  length[km]  width[km]  strike[deg]  dip[deg]  rake[deg]  slip[m]\n"
    "16     10     3          8           6          0            15        90         1.0\n"
    "16     18     3          8           6          0            15        90         1.5\n";

/* A seabed from a NetCDF file (written by write_bed_file): land from missing values, a grid mapping, a
 * source read from the same file's `eta`. */
static const char ncfile_scn[] =
    "; Tern Shelf - FICTIONAL, for the allocation-failure sweep\n"
    "[run]\ntitle = Tern Shelf (fictional)\nduration = 60 s\nlayout = C\ngauge_interval = 20 s\n"
    "[edges]\nall = open\n"
    "[seabed]\nfile = alloc-bed.nc\nmissing = land\nmin_depth = 2 m\n"
    "[source from file]\nshape = file\nfile = alloc-bed.nc\nvariable = eta\n"
    "[gauges]\nMid = 6 km, 5 km\n";

/* One run as `shoreward run` makes it, with allocation fail_at failing. Returns its status; *report_from
 * is the number of allocations made before the text reports began (-1 when they did not begin): a failure
 * of a later allocation may be swallowed. On success *result is the run's result. */
static sw_status one_run(const char *path, const char *out_dir, long fail_at, sw_error *err, long *report_from,
                         sw_run_result *result)
{
    char plan_path[SW_PATH_MAX];
    tu_tmp_path(plan_path, sizeof plan_path, "alloc-report.txt");
    FILE *rep = fopen(plan_path, "w");
    sw_scenario *sc = malloc(sizeof *sc);
    sw_run_result *res = malloc(sizeof *res);
    assert_non_null(rep);
    assert_non_null(sc);
    assert_non_null(res);
    sw_setup setup;
    sw_run_options opt = {.out_dir = out_dir, .history = "test_alloc_fail", .threads = 1};
    *report_from = -1;

    alloc_hook_arm(fail_at);
    sw_status st = sw_scenario_load(path, sc, err);
    if (st == SW_OK) {
        st = sw_setup_build(sc, &setup, err);
        if (st == SW_OK) {
            sw_report_plan(rep, sc, &setup, NULL);
            st = sw_run(sc, &setup, &opt, res, err);
            if (st == SW_OK) {
                *report_from = alloc_hook_count();
                *result = *res;
                char *js = sw_report_run_json(sc, &setup, res);
                free(js);
                sw_report_run(rep, sc, &setup, res);
            }
            sw_setup_free(&setup);
        }
        sw_scenario_free(sc);
    }
    (void)alloc_hook_disarm();
    free(res);
    free(sc);
    fclose(rep);
    return st;
}

/* The number of names in folder dir that end in ".part" (0 when dir cannot be read). */
static int part_files(const char *dir)
{
    DIR *d = opendir(dir);
    if (!d)
        return 0;
    int n = 0;
    struct dirent *e;
    while ((e = readdir(d)) != NULL) {
        size_t len = strlen(e->d_name);
        n += len > 5 && strcmp(e->d_name + len - 5, ".part") == 0;
    }
    closedir(d);
    return n;
}

/* 1 when two runs' results agree exactly in what they computed (steps, volume, extremes, gauges). */
static int same_result(const sw_run_result *a, const sw_run_result *b)
{
    if (a->steps != b->steps || a->n_gauges != b->n_gauges || a->end_time_s != b->end_time_s
        || a->volume_end_m3 != b->volume_end_m3 || a->max_abs_eta_m != b->max_abs_eta_m)
        return 0;
    for (size_t q = 0; q < a->n_gauges; q++)
        if (a->gauge[q].peak_m != b->gauge[q].peak_m || a->gauge[q].trough_m != b->gauge[q].trough_m)
            return 0;
    return 1;
}

static void sweep(const char *scn_name, long floor, const sw_run_result *reference)
{
    char path[SW_PATH_MAX], out_dir[SW_PATH_MAX];
    tu_tmp_path(path, sizeof path, scn_name);
    tu_tmp_path(out_dir, sizeof out_dir, "alloc-out");
    long failing = 0, leaky = 0, fallback = 0;
    sw_run_result *result = malloc(sizeof *result);
    assert_non_null(result);
    for (long n = 1; n <= SWEEP_MAX_N; n++) {
        sw_error err = {0};
        long report_from;
        sw_status st = one_run(path, out_dir, n, &err, &report_from, result);
        const int hit = alloc_hook_failed();
        if (SWEEP_LEAK_CHECK()) {
            fprintf(stderr, "%s: N = %ld: memory leaked after the failure (status %d: %s)\n", scn_name, n, (int)st,
                    err.msg);
            leaky++;
        }
        if (part_files(out_dir))
            fail_msg("%s: N = %ld: a .part file is left in %s (status %d: %s)", scn_name, n, out_dir, (int)st,
                     err.msg);
        if (st != SW_OK) {
            failing++;
            if (!hit)
                fail_msg("%s: N = %ld: the run failed without an allocation failure: %s", scn_name, n, err.msg);
            if (!err.msg[0])
                fail_msg("%s: N = %ld: status %d with an empty message", scn_name, n, (int)st);
            continue;
        }
        if (hit && n <= report_from) {
            /* a documented fallback (e.g. sw_model_set_observer without room for row values) may absorb a
             * failure, but only when it changes nothing the run computed */
            if (!same_result(result, reference))
                fail_msg("%s: N = %ld: an allocation failed, the run reported success and its results differ "
                         "from a run without the failure", scn_name, n);
            fallback++;
            continue;
        }
        if (hit)
            continue;   /* failed inside the text reports, which skip what they cannot format */
        /* the run no longer reaches N: n - 1 allocations in all */
        printf("%s: %ld allocations in a complete run; %ld failures returned an error with a message, %ld were "
               "absorbed by a fallback with identical results, %ld came in the text reports\n", scn_name, n - 1,
               failing, fallback, n - 1 - failing - fallback);
        free(result);
        assert_int_equal(leaky, 0);
        assert_true(n - 1 > floor);
        return;
    }
    free(result);
    fail_msg("%s: more than %d allocations", scn_name, SWEEP_MAX_N);
}

#define NC_CHECK(call) assert_int_equal((call), NC_NOERR)

/* Writes alloc-bed.nc: 12 x 10 cells of 1 km, depth (positive down, one missing corner = land, a
 * transverse_mercator grid mapping) and eta (a 0.5 m bump). */
static void write_bed_file(void)
{
    enum { NX = 12, NY = 10 };
    char path[SW_PATH_MAX];
    tu_tmp_path(path, sizeof path, "alloc-bed.nc");
    int nc, dx, dy, vx, vy, vd, ve, vc;
    NC_CHECK(nc_create(path, NC_CLOBBER, &nc));
    NC_CHECK(nc_def_dim(nc, "y", NY, &dy));
    NC_CHECK(nc_def_dim(nc, "x", NX, &dx));
    NC_CHECK(nc_def_var(nc, "x", NC_DOUBLE, 1, &dx, &vx));
    NC_CHECK(nc_def_var(nc, "y", NC_DOUBLE, 1, &dy, &vy));
    NC_CHECK(nc_put_att_text(nc, vx, "units", 1, "m"));
    NC_CHECK(nc_put_att_text(nc, vy, "units", 1, "m"));
    int dims[2] = {dy, dx};
    NC_CHECK(nc_def_var(nc, "depth", NC_FLOAT, 2, dims, &vd));
    NC_CHECK(nc_def_var(nc, "eta", NC_FLOAT, 2, dims, &ve));
    const float fill = -9999.0f;
    NC_CHECK(nc_put_att_float(nc, vd, "_FillValue", NC_FLOAT, 1, &fill));
    NC_CHECK(nc_put_att_text(nc, vd, "positive", 4, "down"));
    NC_CHECK(nc_put_att_text(nc, vd, "grid_mapping", 3, "crs"));
    NC_CHECK(nc_def_var(nc, "crs", NC_INT, 0, NULL, &vc));
    NC_CHECK(nc_put_att_text(nc, vc, "grid_mapping_name", 19, "transverse_mercator"));
    const double k0 = 0.9996;
    NC_CHECK(nc_put_att_double(nc, vc, "scale_factor_at_central_meridian", NC_DOUBLE, 1, &k0));
    NC_CHECK(nc_enddef(nc));
    double x[NX], y[NY];
    float depth[NY][NX], eta[NY][NX];
    for (size_t i = 0; i < NX; i++)
        x[i] = 500.0 + 1000.0 * (double)i;
    for (size_t j = 0; j < NY; j++)
        y[j] = 500.0 + 1000.0 * (double)j;
    for (size_t j = 0; j < NY; j++)
        for (size_t i = 0; i < NX; i++) {
            depth[j][i] = (float)(50.0 + 10.0 * (double)i);
            double r2 = ((double)i - 5.0) * ((double)i - 5.0) + ((double)j - 4.0) * ((double)j - 4.0);
            eta[j][i] = (float)(0.5 * exp(-r2 / 4.0));
        }
    depth[NY - 1][NX - 1] = fill;
    NC_CHECK(nc_put_var_double(nc, vx, x));
    NC_CHECK(nc_put_var_double(nc, vy, y));
    NC_CHECK(nc_put_var_float(nc, vd, &depth[0][0]));
    NC_CHECK(nc_put_var_float(nc, ve, &eta[0][0]));
    NC_CHECK(nc_close(nc));
}

static void write_inputs(void)
{
    write_bed_file();
    static const struct { const char *name; const char *text; } files[] = {
        {"alloc-tsunami.scn", tsunami_scn}, {"alloc-storm.scn", storm_scn}, {"alloc-track.txt", storm_track},
        {"alloc-fault.scn", fault_scn}, {"alloc-segments.txt", fault_segments},
        {"alloc-ncfile.scn", ncfile_scn},
    };
    for (size_t k = 0; k < sizeof files / sizeof files[0]; k++) {
        char path[SW_PATH_MAX];
        tu_tmp_path(path, sizeof path, files[k].name);
        assert_int_equal(tu_write_file(path, files[k].text), 0);
    }
}

/* Each scenario first runs once without a failure (it must be valid; *reference its result), then sweeps. */
static void check_valid(const char *scn_name, sw_run_result *reference)
{
    char path[SW_PATH_MAX], out_dir[SW_PATH_MAX];
    tu_tmp_path(path, sizeof path, scn_name);
    tu_tmp_path(out_dir, sizeof out_dir, "alloc-out");
    sw_error err = {0};
    long report_from;
    sw_status st = one_run(path, out_dir, 0, &err, &report_from, reference);
    if (st != SW_OK)
        fail_msg("%s is not a valid run: %s", scn_name, err.msg);
}

static void test_tsunami(void **state)
{
    (void)state;
    write_inputs();
    sw_run_result *reference = malloc(sizeof *reference);
    assert_non_null(reference);
    check_valid("alloc-tsunami.scn", reference);
    sweep("alloc-tsunami.scn", SWEEP_FLOOR, reference);
    free(reference);
}

static void test_storm(void **state)
{
    (void)state;
    write_inputs();
    sw_run_result *reference = malloc(sizeof *reference);
    assert_non_null(reference);
    check_valid("alloc-storm.scn", reference);
    sweep("alloc-storm.scn", SWEEP_FLOOR, reference);
    free(reference);
}

static void test_fault(void **state)
{
    (void)state;
    write_inputs();
    sw_run_result *reference = malloc(sizeof *reference);
    assert_non_null(reference);
    check_valid("alloc-fault.scn", reference);
    sweep("alloc-fault.scn", SWEEP_FLOOR, reference);
    free(reference);
}

static void test_ncfile(void **state)
{
    (void)state;
    write_inputs();
    sw_run_result *reference = malloc(sizeof *reference);
    assert_non_null(reference);
    check_valid("alloc-ncfile.scn", reference);
    sweep("alloc-ncfile.scn", SWEEP_FLOOR, reference);
    free(reference);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_tsunami),
        cmocka_unit_test(test_storm),
        cmocka_unit_test(test_fault),
        cmocka_unit_test(test_ncfile),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
