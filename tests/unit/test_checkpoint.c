/* test_checkpoint.c - checkpoint and resume (run/checkpoint.h): a run stopped after k steps and resumed
 * from its checkpoint writes the same bits in every variable of gauges.nc, maps.nc and snapshots.nc as
 * the run never stopped, on every layout and precision, with rotation and friction, with a storm, with a
 * rupture in time, on 1 and 2 threads; a checkpoint of another run is refused with the difference named.
 *
 * What is checked is an identity of this program with itself, not a published value: the reference is
 * the uninterrupted run's own files ([derived]: the forward-backward step is a deterministic function of
 * the state the checkpoint holds). The basin, storm and fault below are fictional.
 */
#define _POSIX_C_SOURCE 200809L
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <netcdf.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "run/checkpoint.h"
#include "run/run.h"
#include "run/setup.h"
#include "testutil.h"

/* A fictional shelf basin: periodic west-east, a wall to the south, open to the north; an f-plane and
 * Manning friction; snapshots and checkpoints every few steps (dt is about 28 s on C). */
static const char *const BASIN =
    "[run]\n"
    "title = Lantern Shelf (fictional) - checkpoint test\n"
    "duration = %s\n"
    "layout = %s\n"
    "precision = %s\n"
    "courant_fraction = 0.9\n"
    "gauge_interval = 60 s\n"
    "snapshot_interval = 150 s\n"
    "checkpoint_interval = %s\n"
    "rotation = f-plane\n"
    "latitude = 45 deg\n"
    "friction = manning\n"
    "manning = 0.025\n"
    "[grid]\nnx = 40\nny = 30\ndx = 2 km\n"
    "[edges]\nwest = periodic\neast = periodic\nsouth = wall\nnorth = open\n"
    "[seabed]\ndeep = 200 m\ncoast = south\nshoreline = 6 km\nshelf_depth = 50 m\nshelf_width = 10 km\n"
    "land_height = 10 m\nmin_depth = 2 m\n"
    "[source Lantern rise]\nshape = hump\nx = 40 km\ny = 30 km\namplitude = 1 m\nradius = 10 km\n"
    "[gauges]\nFennikar Quay = 30 km, 9 km\nOffshore buoy = 40 km, 50 km\n%s";

/* A fictional storm crossing the basin (track file written by the test); open edges, quadratic friction. */
static const char *const STORM =
    "[run]\n"
    "title = storm Vantelle over Lantern Shelf (fictional) - checkpoint test\n"
    "duration = 2 h\n"
    "layout = C\n"
    "precision = %s\n"
    "gauge_interval = 5 min\n"
    "snapshot_interval = 10 min\n"
    "checkpoint_interval = 20 min\n"
    "rotation = f-plane\nlatitude = 20 deg\nfriction = quadratic\ndrag = 0.0025\n"
    "[grid]\nnx = 40\nny = 30\ndx = 2 km\n"
    "[edges]\nall = open\neast = wall\n"
    "[seabed]\ndeep = 100 m\ncoast = east\nshoreline = 70 km\nshelf_depth = 30 m\nshelf_width = 6 km\n"
    "land_height = 10 m\nmin_depth = 2 m\n"
    "[storm]\ntrack = ckpt-track.txt\nupdate = 10 min\n"
    "[gauges]\nTervelka Quay = 66 km, 30 km\nOuter buoy = 20 km, 30 km\n";

static const char *const TRACK =
    "# storm Vantelle - a FICTIONAL track for test_checkpoint.c\n"
    "time[h]   x[km]   y[km]   central_pressure[hPa]   rmax[km]   B\n"
    "0         -60     -20     980                     20         1.3\n"
    "3         140     80      975                     20         1.3\n";

/* A fictional fault rupturing in time: it starts at 30 s and rises over 150 s, several steps. */
static const char *const FAULT =
    "[fault Trevolsk slip]\nx = 30 km\ny = 20 km\ndepth = 2 km\nlength = 30 km\nwidth = 15 km\nstrike = 0\n"
    "dip = 20\nrake = 90\nslip = 3 m\nstart = 30 s\nrise = 150 s\n";

static void scratch_dir(char *out, size_t n, const char *name)
{
    tu_tmp_path(out, n, name);
    mkdir(out, 0777);
}

/* Runs text into folder out on `threads` threads; resume and stop_after as sw_run takes them, except that
 * a stop_after below 0 is -(thousandths of the run's steps). Returns the status, err filled. */
static sw_status run_text(const char *text, const char *out, int threads, int resume, long long stop_after,
                          sw_error *err)
{
    char dir[1024];
    tu_tmp_path(dir, sizeof dir, "");
    sw_scenario sc;
    sw_status rc = sw_scenario_parse(text, "ckpt.scn", dir, &sc, err);
    if (rc != SW_OK)
        fail_msg("%s", err->msg);
    sw_setup setup;
    rc = sw_setup_build(&sc, &setup, err);
    if (rc != SW_OK)
        fail_msg("%s", err->msg);
    if (stop_after < 0)
        stop_after = -stop_after * setup.n_steps / 1000;
    sw_run_options opt = {.out_dir = out, .threads = threads, .stop_after_steps = stop_after, .resume = resume};
    sw_run_result *res = calloc(1, sizeof *res);
    assert_non_null(res);
    rc = sw_run(&sc, &setup, &opt, res, err);
    free(res);
    sw_setup_free(&setup);
    sw_scenario_free(&sc);
    return rc;
}

static int exists(const char *dir, const char *name)
{
    char p[2048];
    snprintf(p, sizeof p, "%s/%s", dir, name);
    struct stat st;
    return stat(p, &st) == 0;
}

/* Every variable of file `name` in folders a and b holds the same bytes (and the same shape). Returns the
 * number of variables compared. */
static int same_variables(const char *a, const char *b, const char *name)
{
    char pa[2048], pb[2048];
    snprintf(pa, sizeof pa, "%s/%s", a, name);
    snprintf(pb, sizeof pb, "%s/%s", b, name);
    int fa, fb, nva, nvb;
    assert_int_equal(nc_open(pa, NC_NOWRITE, &fa), NC_NOERR);
    assert_int_equal(nc_open(pb, NC_NOWRITE, &fb), NC_NOERR);
    assert_int_equal(nc_inq_nvars(fa, &nva), NC_NOERR);
    assert_int_equal(nc_inq_nvars(fb, &nvb), NC_NOERR);
    assert_int_equal(nva, nvb);
    for (int v = 0; v < nva; v++) {
        char vname[NC_MAX_NAME + 1];
        nc_type type;
        int ndims, dims[NC_MAX_VAR_DIMS], vb;
        assert_int_equal(nc_inq_var(fa, v, vname, &type, &ndims, dims, NULL), NC_NOERR);
        assert_int_equal(nc_inq_varid(fb, vname, &vb), NC_NOERR);
        size_t count = 1, tsize = 0;
        for (int d = 0; d < ndims; d++) {
            size_t la, lb;
            int db[NC_MAX_VAR_DIMS];
            assert_int_equal(nc_inq_dimlen(fa, dims[d], &la), NC_NOERR);
            assert_int_equal(nc_inq_vardimid(fb, vb, db), NC_NOERR);
            assert_int_equal(nc_inq_dimlen(fb, db[d], &lb), NC_NOERR);
            if (la != lb)
                fail_msg("%s: %s: dimension %d is %zu long, %zu in the reference", name, vname, d, lb, la);
            count *= la;
        }
        assert_int_equal(nc_inq_type(fa, type, NULL, &tsize), NC_NOERR);
        if (type == NC_STRING || type == NC_CHAR || count == 0)
            continue;
        unsigned char *xa = malloc(count * tsize), *xb = malloc(count * tsize);
        assert_true(xa && xb);
        assert_int_equal(nc_get_var(fa, v, xa), NC_NOERR);
        assert_int_equal(nc_get_var(fb, vb, xb), NC_NOERR);
        if (memcmp(xa, xb, count * tsize) != 0)
            fail_msg("%s: variable %s differs from the uninterrupted run's", name, vname);
        free(xa);
        free(xb);
    }
    nc_close(fa);
    nc_close(fb);
    return nva;
}

/* The files of folders ref and got are the same bits. */
static void same_outputs(const char *ref, const char *got, int snapshots)
{
    assert_true(same_variables(ref, got, "gauges.nc") >= 4);
    assert_true(same_variables(ref, got, "maps.nc") >= 6);
    if (snapshots)
        assert_true(same_variables(ref, got, "snapshots.nc") >= 4);
}

/* Runs text straight through into <tag>-ref on threads_ref, then stopped after each step of stops[] and
 * resumed (threads alternating 2, 1) into <tag>-cut, and compares. */
static void check_resume(const char *text, const char *tag, int threads_ref, const long long *stops, size_t n_stops,
                         int snapshots)
{
    char ref[1024], cut[1024], name[256];
    snprintf(name, sizeof name, "ckpt-%s-ref", tag);
    scratch_dir(ref, sizeof ref, name);
    snprintf(name, sizeof name, "ckpt-%s-cut", tag);
    scratch_dir(cut, sizeof cut, name);
    sw_error err = {0};
    if (run_text(text, ref, threads_ref, 0, 0, &err) != SW_OK)
        fail_msg("%s: %s", tag, err.msg);
    assert_false(exists(ref, SW_CKPT_NAME));   /* a finished run leaves no checkpoint */
    assert_false(exists(ref, SW_CKPT_FRAMES_NAME));
    for (size_t s = 0; s <= n_stops; s++) {
        const long long stop = s < n_stops ? stops[s] : 0;
        sw_status rc = run_text(text, cut, s % 2 ? 1 : 2, s > 0, stop, &err);
        if (s < n_stops) {
            if (rc != SW_ERR_INTERRUPTED)
                fail_msg("%s: stop at step %lld: status %d: %s", tag, stop, (int)rc, err.msg);
            assert_non_null(strstr(err.msg, SW_CKPT_NAME));   /* the message names the checkpoint */
            assert_true(exists(cut, SW_CKPT_NAME));
        } else if (rc != SW_OK) {
            fail_msg("%s: resume: %s", tag, err.msg);
        }
    }
    assert_false(exists(cut, SW_CKPT_NAME));
    same_outputs(ref, cut, snapshots);
}

static void basin_text(char *out, size_t n, const char *duration, const char *layout, const char *precision,
                       const char *every, const char *extra)
{
    snprintf(out, n, BASIN, duration, layout, precision, every, extra);
}

/* Every layout, both precisions: stopped at 13 % of the steps (before the first checkpoint: the stop
 * writes its own) and at 47 %, resumed each time; reference on 1 thread, the pieces on 2 then 1 then 2. */
static void test_every_layout_and_precision(void **state)
{
    (void)state;
    static const char *const layouts[] = {"A", "B", "C", "D", "E"};
    static const char *const precisions[] = {"double", "single"};
    const long long stops[] = {-130, -470};
    for (size_t l = 0; l < 5; l++)
        for (size_t p = 0; p < 2; p++) {
            char text[4096], tag[64];
            basin_text(text, sizeof text, "1 h", layouts[l], precisions[p], "5 min", "");
            snprintf(tag, sizeof tag, "%s-%s", layouts[l], precisions[p]);
            check_resume(text, tag, 1, stops, 2, 1);
        }
}

/* A storm: slab times, the gauges' air series and the wind and pressure maps come back; stops between
 * slab times, right after one and past the half. Both precisions; reference on 2 threads. */
static void test_storm(void **state)
{
    (void)state;
    char track[1024];
    tu_tmp_path(track, sizeof track, "ckpt-track.txt");
    assert_int_equal(tu_write_file(track, TRACK), 0);
    const long long stops[] = {5, 22, -600};
    for (int p = 0; p < 2; p++) {
        char text[4096];
        snprintf(text, sizeof text, STORM, p ? "single" : "double");
        check_resume(text, p ? "storm-single" : "storm-double", 2, stops, 3, 1);
    }
}

/* A rupture in time: stopped while the floor still moves (step 3) and after it stopped (step 9). */
static void test_rupture_in_time(void **state)
{
    (void)state;
    char text[4096];
    const long long stops[] = {3, 9};
    basin_text(text, sizeof text, "30 min", "C", "double", "10 min", FAULT);
    check_resume(text, "fault-C", 2, stops, 2, 1);
    basin_text(text, sizeof text, "30 min", "E", "single", "10 min", FAULT);
    check_resume(text, "fault-E", 1, stops, 2, 1);
}

/* The interval alone (no stop): the run writes checkpoints as it goes and, finished, removes them; a run
 * stopped without checkpoints says no file was written and leaves none. */
static void test_interval_and_none(void **state)
{
    (void)state;
    char text[4096], dir[1024];
    scratch_dir(dir, sizeof dir, "ckpt-none");
    basin_text(text, sizeof text, "20 min", "C", "double", "0", "");
    sw_error err = {0};
    assert_int_equal(run_text(text, dir, 1, 0, 5, &err), SW_ERR_INTERRUPTED);
    assert_null(strstr(err.msg, SW_CKPT_NAME));
    assert_false(exists(dir, SW_CKPT_NAME));
    assert_int_equal(run_text(text, dir, 1, 1, 0, &err), SW_ERR_USAGE);   /* resume without checkpoints */
    assert_non_null(strstr(err.msg, "checkpoint_interval"));
}

/* Refusals: another precision, another scenario text, no checkpoint, a damaged one. */
static void test_refusals(void **state)
{
    (void)state;
    char text[4096], other[4096], dir[1024], path[2048];
    scratch_dir(dir, sizeof dir, "ckpt-refuse");
    basin_text(text, sizeof text, "20 min", "C", "double", "5 min", "");
    sw_error err = {0};
    snprintf(path, sizeof path, "%s/%s", dir, SW_CKPT_NAME);
    remove(path);
    assert_int_equal(run_text(text, dir, 1, 1, 0, &err), SW_ERR_IO);   /* nothing to resume from */
    assert_non_null(strstr(err.msg, SW_CKPT_NAME));
    assert_int_equal(run_text(text, dir, 1, 0, 8, &err), SW_ERR_INTERRUPTED);

    basin_text(other, sizeof other, "20 min", "C", "single", "5 min", "");
    assert_int_equal(run_text(other, dir, 1, 1, 0, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "precision"));
    assert_non_null(strstr(err.msg, "'double' in the checkpoint"));

    basin_text(other, sizeof other, "20 min", "C", "double", "5 min", "; a comment makes another text\n");
    assert_int_equal(run_text(other, dir, 1, 1, 0, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "scenario text"));

    basin_text(other, sizeof other, "20 min", "D", "double", "5 min", "");
    assert_int_equal(run_text(other, dir, 1, 1, 0, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "layout"));

    /* one byte changed deep in the blocks: the hash refuses it before anything is restored */
    FILE *f = fopen(path, "r+b");
    assert_non_null(f);
    assert_int_equal(fseek(f, -100, SEEK_END), 0);
    int c = fgetc(f);
    assert_int_equal(fseek(f, -100, SEEK_END), 0);
    fputc(c ^ 0x5a, f);
    fclose(f);
    assert_int_equal(run_text(text, dir, 1, 1, 0, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "damaged"));

    /* cut short */
    assert_int_equal(run_text(text, dir, 1, 0, 8, &err), SW_ERR_INTERRUPTED);
    struct stat st;
    assert_int_equal(stat(path, &st), 0);
    assert_int_equal(truncate(path, st.st_size / 2), 0);
    assert_int_equal(run_text(text, dir, 1, 1, 0, &err), SW_ERR_IO);
    assert_non_null(strstr(err.msg, "truncated"));
}

/* The file's own pieces: FNV-1a 64 of "a" is af63dc4c8601ec8c (Fowler, Noll, Vo; the FNV test vectors
 * [memory]). */
static void test_fnv(void **state)
{
    (void)state;
    assert_true(sw_ckpt_fnv1a(SW_FNV_BASIS, "", 0) == 0xcbf29ce484222325ULL);
    assert_true(sw_ckpt_fnv1a(SW_FNV_BASIS, "a", 1) == 0xaf63dc4c8601ec8cULL);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_fnv),
        cmocka_unit_test(test_every_layout_and_precision),
        cmocka_unit_test(test_storm),
        cmocka_unit_test(test_rupture_in_time),
        cmocka_unit_test(test_interval_and_none),
        cmocka_unit_test(test_refusals),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
