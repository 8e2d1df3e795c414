/* test_input_limits.c - the limits that keep odd but accepted inputs from hanging a run or passing
 * absurd values on: the observers' sampling schedule (sw_gauges_next_time) and the NetCDF reader's
 * unpacking overflow and range checks (sw_ncin_read_with). Issue 15, item 4. */
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
#include "observers/gauges.h"
#include "testutil.h"

#define NC_OK(call) assert_int_equal((call), NC_NOERR)

/* The loop run.c had before (one addition per interval passed), for the intervals where it ends quickly. */
static double old_next(double next, double now, double interval)
{
    while (next <= now + 1e-9 * interval)
        next += interval;
    return next;
}

/* Samples a run of n_steps steps of dt takes at `interval` (t = 0 included, not the extra one at the last
 * step), observed as run.c observes: at most one a step. */
static size_t samples(long n_steps, double dt, double interval)
{
    size_t count = 1;
    double next = sw_gauges_next_time(0, 0, interval);
    for (long n = 1; n <= n_steps; n++) {
        const double now = (double)n * dt;
        if (now >= next - 1e-9 * interval) {
            count++;
            next = sw_gauges_next_time(next, now, interval);
        }
    }
    return count;
}

/* For every interval the old loop handles in a few additions (interval >= dt / 3), the same next time,
 * bit for bit: the outputs of ordinary scenarios do not change. */
static void test_next_time_as_before(void **state)
{
    (void)state;
    const double dts[] = {20.32, 1.0, 0.37, 45.4337};
    const double ratios[] = {0.34, 0.5, 0.99, 1.0, 1.01, 1.5, 3.0, 17.0};
    for (size_t a = 0; a < sizeof dts / sizeof *dts; a++)
        for (size_t b = 0; b < sizeof ratios / sizeof *ratios; b++) {
            const double dt = dts[a], interval = ratios[b] * dt;
            double next_old = old_next(0, 0, interval), next_new = sw_gauges_next_time(0, 0, interval);
            for (long n = 1; n <= 2000; n++) {
                const double now = (double)n * dt;
                if (now >= next_new - 1e-9 * interval) {
                    next_old = old_next(next_old, now, interval);
                    next_new = sw_gauges_next_time(next_new, now, interval);
                }
                assert_true(next_old == next_new);
            }
        }
}

/* Intervals far below the step or the rounding of the time: the call ends, returns a later time, and a
 * run samples once a step: 30 steps give 31 samples (t = 0 and every step) [derived]. */
static void test_next_time_tiny(void **state)
{
    (void)state;
    const double tiny[] = {1e-12, 1e-300, 4.9406564584124654e-324, 1e-9, 0.5};
    for (size_t k = 0; k < sizeof tiny / sizeof *tiny; k++) {
        const double nows[] = {0, 20.32, 2.592e6, 1e15};
        for (size_t q = 0; q < sizeof nows / sizeof *nows; q++) {
            const double next = sw_gauges_next_time(0, nows[q], tiny[k]);
            assert_true(next > nows[q] + 1e-9 * tiny[k]);
            assert_true(isfinite(next));
        }
        assert_int_equal(samples(30, 20.32, tiny[k]), 31);
    }
    /* 30 s over 30 steps of 20.32 s (609.6 s): t = 0 and the first step at or after each of 30, 60 .. 600 s:
     * 1 + 20 = 21 [derived] */
    assert_int_equal(samples(30, 20.32, 30.0), 21);
    /* an interval longer than the run: t = 0 only */
    assert_int_equal(samples(30, 20.32, 3600.0), 1);
    /* a 30-day run of 1 s steps at 1e-12 s: every step, found in bounded time */
    assert_int_equal(samples(2592000, 1.0, 1e-12), 2592001);
}

/* A 4 x 3 file of 1 km cells, variable "depth" stored as short with the given scale_factor and
 * add_offset, every value 100 except stored[j][i] at (2, 1) = special. */
static void write_packed(const char *path, double scale, double offset, short special)
{
    int ncid, dy, dx, vy, vx, vv;
    NC_OK(nc_create(path, NC_CLOBBER | NC_NETCDF4, &ncid));
    NC_OK(nc_def_dim(ncid, "y", 3, &dy));
    NC_OK(nc_def_dim(ncid, "x", 4, &dx));
    NC_OK(nc_def_var(ncid, "y", NC_DOUBLE, 1, &dy, &vy));
    NC_OK(nc_def_var(ncid, "x", NC_DOUBLE, 1, &dx, &vx));
    int dims[2] = {dy, dx};
    NC_OK(nc_def_var(ncid, "depth", NC_SHORT, 2, dims, &vv));
    NC_OK(nc_put_att_text(ncid, vy, "units", 2, "km"));
    NC_OK(nc_put_att_text(ncid, vx, "units", 2, "km"));
    NC_OK(nc_put_att_double(ncid, vv, "scale_factor", NC_DOUBLE, 1, &scale));
    NC_OK(nc_put_att_double(ncid, vv, "add_offset", NC_DOUBLE, 1, &offset));
    NC_OK(nc_enddef(ncid));
    const double cx[4] = {0.5, 1.5, 2.5, 3.5}, cy[3] = {0.5, 1.5, 2.5};
    short v[12];
    for (int k = 0; k < 12; k++)
        v[k] = 100;
    v[2 * 4 + 1] = special;
    NC_OK(nc_put_var_double(ncid, vx, cx));
    NC_OK(nc_put_var_double(ncid, vy, cy));
    NC_OK(nc_put_var_short(ncid, vv, v));
    NC_OK(nc_close(ncid));
}

static const sw_grid GRID = {.nx = 4, .ny = 3, .dx_m = 1000, .dy_m = 1000};

/* An unpacking that overflows a double is an error naming the index and the attributes; without it the
 * unpacked value is read (30000 * 1e306 overflows; 30000 * 2 - 5 = 59995 does not). */
static void test_unpacking_overflow(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "sw_test_input_limits_a.nc");
    write_packed(path, 1e306, 0, 30000);
    double out[12];
    sw_error err = {0};
    assert_int_equal(sw_ncin_read_with(path, "depth", &GRID, NULL, out, &err), SW_ERR_INPUT);
    print_message("%s\n", err.msg);
    assert_non_null(strstr(err.msg, "depth[2][1]"));
    assert_non_null(strstr(err.msg, "scale_factor 1e+306"));
    assert_non_null(strstr(err.msg, "overflows"));
    write_packed(path, 2, -5, 30000);
    assert_int_equal(sw_ncin_read_with(path, "depth", &GRID, NULL, out, &err), SW_OK);
    assert_true(out[2 * 4 + 1] == 59995.0 && out[0] == 195.0);
    remove(path);
}

/* The range option: a value outside is an error naming var[j][i], the coordinates and the accepted text;
 * land (missing values with missing_land) is not checked; no range_accepted, no check. */
static void test_range(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "sw_test_input_limits_b.nc");
    write_packed(path, 1, 0, 500);
    double out[12];
    sw_error err = {0};
    sw_ncin_options opt = {.range_lo = -100, .range_hi = 100, .range_accepted = "|displacement| <= 100 m"};
    assert_int_equal(sw_ncin_read_with(path, "depth", &GRID, &opt, out, &err), SW_ERR_RANGE);
    print_message("%s\n", err.msg);
    assert_non_null(strstr(err.msg, "depth[2][1] = 500"));
    assert_non_null(strstr(err.msg, "y = 2500 m, x = 1500 m"));
    assert_non_null(strstr(err.msg, "(accepted: |displacement| <= 100 m)"));
    opt.range_hi = 500;
    assert_int_equal(sw_ncin_read_with(path, "depth", &GRID, &opt, out, &err), SW_OK);
    assert_true(out[2 * 4 + 1] == 500.0);
    assert_int_equal(sw_ncin_read_with(path, "depth", &GRID, NULL, out, &err), SW_OK);
    /* the default fill of a short (-32767) is missing: with missing_land it is land, not out of range */
    write_packed(path, 1, 0, -32767);
    unsigned char land[12];
    opt = (sw_ncin_options){.missing_land = 1, .land = land, .range_lo = 0, .range_hi = 200,
                            .range_accepted = "0 .. 200 m"};
    assert_int_equal(sw_ncin_read_with(path, "depth", &GRID, &opt, out, &err), SW_OK);
    assert_int_equal(land[2 * 4 + 1], SW_NCIN_LAND_MISSING);
    remove(path);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_next_time_as_before),
        cmocka_unit_test(test_next_time_tiny),
        cmocka_unit_test(test_unpacking_overflow),
        cmocka_unit_test(test_range),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
