/* test_blowup.c - a run that blows up stops within a few steps of it, naming when and where, and leaves
 * no output file (issue "Nothing lost, nothing hangs", item 4).
 *
 * The run is forced beyond the layout's stability limit (sw_run_options.allow_unstable, dt = 1.5 x the
 * limit). Forward-backward stepping amplifies the fastest wave by |lambda| > 1 every step beyond the limit
 * (docs/stability.md; von Neumann analysis [derived]), so the elevation overflows after a number of steps
 * that grows with log(FLT_MAX / amplitude): far fewer than the run's 3000. The test checks that the run
 * stops at the step the tracker first meets a non-finite value, not after its last step, and that the
 * message names the step and a grid row. The basin is fictional.
 */
#define _POSIX_C_SOURCE 200809L
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "run/run.h"
#include "run/setup.h"
#include "testutil.h"

static const char *const BASIN =
    "[run]\n"
    "title = Brumelo Bank basin (fictional) - blow-up test\n"
    "duration = 3000 min\n"
    "layout = %s\n"
    "precision = %s\n"
    "gauge_interval = 10 min\n"
    "[grid]\nnx = 40\nny = 30\ndx = 1 km\n"
    "[edges]\nall = wall\n"
    "[seabed]\ndeep = 10 m\n"
    "[source Brumelo rise]\nshape = hump\nx = 20 km\ny = 15 km\namplitude = 1 m\nradius = 3 km\n"
    "[gauges]\nOffshore buoy = 10 km, 10 km\n";

static int exists(const char *dir, const char *name)
{
    char p[1200];
    snprintf(p, sizeof p, "%s/%s", dir, name);
    struct stat st;
    return stat(p, &st) == 0;
}

static void blow_up(const char *layout, const char *precision)
{
    char text[2048], dir[1024], out[1100];
    snprintf(text, sizeof text, BASIN, layout, precision);
    tu_tmp_path(dir, sizeof dir, "");
    snprintf(out, sizeof out, "%s/blowup-%s-%s", dir, layout, precision);
    mkdir(out, 0777);
    sw_scenario sc;
    sw_error err = {0};
    if (sw_scenario_parse(text, "blowup.scn", dir, &sc, &err) != SW_OK)
        fail_msg("%s", err.msg);
    sw_setup setup;
    if (sw_setup_build(&sc, &setup, &err) != SW_OK)
        fail_msg("%s", err.msg);
    setup.dt_s = 1.5 * setup.dt_limit_s;   /* beyond the layout's own limit; n_steps stays the planned one */
    const long long n_steps = setup.n_steps;
    sw_run_options opt = {.out_dir = out, .threads = 2, .allow_unstable = 1};
    sw_run_result *res = calloc(1, sizeof *res);
    assert_non_null(res);
    sw_status rc = sw_run(&sc, &setup, &opt, res, &err);
    print_message("  %s %s: %s\n", layout, precision, err.msg);
    assert_int_equal(rc, SW_ERR_UNSTABLE);
    assert_non_null(strstr(err.msg, "the run blew up at t = "));
    assert_non_null(strstr(err.msg, "on grid row "));
    const char *at = strstr(err.msg, "(step ");
    assert_non_null(at);
    long long step = 0, of = 0;
    assert_int_equal(sscanf(at, "(step %lld of %lld)", &step, &of), 2);
    assert_true(of == n_steps);
    assert_true(step >= 1 && step < n_steps / 4);   /* stopped soon after it broke, not at the end */
    assert_false(exists(out, "maps.nc"));
    assert_false(exists(out, "gauges.nc"));
    free(res);
    sw_setup_free(&setup);
    sw_scenario_free(&sc);
}

static void test_blowup_stops_early(void **state)
{
    (void)state;
    static const char *const layouts[] = {"A", "B", "C", "D", "E"};
    for (size_t q = 0; q < 5; q++) {
        blow_up(layouts[q], "double");
        blow_up(layouts[q], "single");
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_blowup_stops_early),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
