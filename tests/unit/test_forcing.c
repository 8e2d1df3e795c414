/* test_forcing.c - a whole surge run through sw_run: a parametric storm against the same storm written
 * to a weather file and read back, and what the forcing keeps for the outputs.
 *
 * Checks:
 *  - A weather file holding the parametric storm's fields (Holland 1980 through src/forcing/storm.c) at
 *    the storm's own slab times, on a grid of the model's cell centres, must drive the same surge as the
 *    storm itself, to interpolation error [derived: both feed the same slabs, but the file is bilinear
 *    between centres where the storm is evaluated at each velocity point, so they differ by the
 *    second-order interpolation error of a smooth field].
 *  - The maps of highest wind and lowest pressure agree between the two at the cell centres, where the
 *    file holds the storm's own values (to float rounding), and a gauge's pressure is the storm's own
 *    value at the gauge (sw_storm_point) at the slab times around the sample, linear between them
 *    [derived from the placement in time, forcing.h].
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

#include "forcing/gridded.h"
#include "forcing/storm.h"
#include "inputs/scenario.h"
#include "run/run.h"
#include "run/setup.h"
#include "testutil.h"

#define TRACK "time[h] x[km] y[km] pressure_drop[hPa] rmax[km] B\n0 -60 60 30 25 1.4\n8 260 140 30 25 1.4\n"

#define SCENARIO_HEAD                                                                                            \
    "[run]\ntitle = fictional storm\nduration = 5 h\nrotation = f-plane\nlatitude = 20\nfriction = linear\n"     \
    "friction_rate = 0.002 m/s\ngauge_interval = 10 min\n"                                                       \
    "[grid]\nnx = 50\nny = 40\ndx = 4 km\n"                                                                      \
    "[seabed]\ndeep = 40 m\ncoast = north\nshoreline = 150 km\nshelf_width = 40 km\nshelf_depth = 10 m\n"        \
    "[gauges]\nCape Fiction = 120 km, 145 km\nOpen Water = 100 km, 60 km\n"

typedef struct {
    sw_map_set maps;
    double *eta_max, *wind_max, *p_min;
    size_t cells, n_times;
    double *gauge_eta, *gauge_p, *time;
} captured;

static sw_status capture(const sw_map_set *maps, const sw_gauge_table *g, void *user, sw_error *err)
{
    (void)err;
    captured *c = user;
    const size_t n = sw_grid_cells(maps->grid);
    c->cells = n;
    c->eta_max = malloc(n * sizeof(double));
    c->wind_max = malloc(n * sizeof(double));
    c->p_min = malloc(n * sizeof(double));
    c->n_times = g->n_times;
    c->gauge_eta = malloc(g->n_stations * g->n_times * sizeof(double));
    c->gauge_p = malloc(g->n_stations * g->n_times * sizeof(double));
    c->time = malloc(g->n_times * sizeof(double));
    memcpy(c->time, g->time_s, g->n_times * sizeof(double));
    assert_non_null(c->eta_max);
    assert_non_null(maps->wind_max_ms);
    assert_non_null(g->air_pressure_pa);
    memcpy(c->eta_max, maps->eta_max_m, n * sizeof(double));
    memcpy(c->wind_max, maps->wind_max_ms, n * sizeof(double));
    memcpy(c->p_min, maps->air_pressure_min_pa, n * sizeof(double));
    memcpy(c->gauge_eta, g->eta_m, g->n_stations * g->n_times * sizeof(double));
    memcpy(c->gauge_p, g->air_pressure_pa, g->n_stations * g->n_times * sizeof(double));
    return SW_OK;
}

static void run_text(const char *text, const char *dir, captured *c)
{
    sw_scenario sc;
    sw_error err = {0};
    sw_status rc = sw_scenario_parse(text, "t.scn", dir, &sc, &err);
    if (rc != SW_OK)
        fail_msg("%s", err.msg);
    sw_setup setup;
    rc = sw_setup_build(&sc, &setup, &err);
    if (rc != SW_OK)
        fail_msg("%s", err.msg);
    sw_run_options opt = {.threads = 2, .sink = capture, .sink_user = c};
    sw_run_result *res = calloc(1, sizeof *res);
    assert_non_null(res);
    rc = sw_run(&sc, &setup, &opt, res, &err);
    if (rc != SW_OK)
        fail_msg("%s", err.msg);
    free(res);
    sw_setup_free(&setup);
    sw_scenario_free(&sc);
}

static void release(captured *c)
{
    free(c->eta_max);
    free(c->wind_max);
    free(c->p_min);
    free(c->gauge_eta);
    free(c->gauge_p);
    free(c->time);
}

/* The weather file's slabs: the storm at each time, at the file grid's points. */
static sw_status fill_storm(void *ctx, size_t k, double time_s, const sw_grid *g, float *p, float *u, float *v,
                            sw_error *err)
{
    (void)k, (void)err;
    const sw_storm *s = ctx;
    sw_storm_state st;
    sw_storm_state_at(s, time_s, &st);
    for (size_t j = 0; j < g->ny; j++)
        for (size_t i = 0; i < g->nx; i++) {
            double pp, uu, vv;
            sw_storm_point(s, &st, sw_grid_xc(g, i), sw_grid_yc(g, j), &pp, &uu, &vv);
            p[j * g->nx + i] = (float)pp;
            u[j * g->nx + i] = (float)uu;
            v[j * g->nx + i] = (float)vv;
        }
    return SW_OK;
}

static void test_file_matches_storm(void **state)
{
    (void)state;
    char dir[512], track[600], file[600];
    tu_tmp_path(dir, sizeof dir, "");
    tu_tmp_path(track, sizeof track, "forcing_track.txt");
    tu_tmp_path(file, sizeof file, "forcing_weather.nc");
    assert_int_equal(tu_write_file(track, TRACK), 0);

    /* the file: the storm at its slab times (every 600 s, [storm] update's default) on a grid of the
     * model's cell centres widened by two cells, so that the halo lies inside it too */
    sw_storm_options o = sw_storm_options_default();
    o.coriolis_s = 2 * 7.2921159e-5 * sin(20 * 3.14159265358979323846 / 180);   /* the run's f at 20 deg */
    sw_storm *storm = NULL;
    sw_error err = {0};
    assert_int_equal(sw_storm_load(track, &o, &storm, &err), SW_OK);
    const sw_grid fg = {.nx = 54, .ny = 44, .dx_m = 4000, .dy_m = 4000, .x0_m = -8000, .y0_m = -8000};
    double times[64];
    size_t nt = 0;
    for (double t = 0; t <= 5 * 3600 + 600; t += 600)
        times[nt++] = t;
    sw_status rc = sw_weather_write(file, &fg, times, nt, "2000-01-01 00:00:00", "fictional storm", "test only",
                                    fill_storm, storm, &err);
    if (rc != SW_OK)
        fail_msg("%s", err.msg);

    char text[4096];
    captured a = {0}, b = {0};
    snprintf(text, sizeof text, SCENARIO_HEAD "[storm]\ntrack = forcing_track.txt\n");
    run_text(text, dir, &a);
    snprintf(text, sizeof text, SCENARIO_HEAD "[weather]\nfile = forcing_weather.nc\n");
    run_text(text, dir, &b);

    double peak = 0, worst = 0, wind_worst = 0, wind_peak = 0, p_worst = 0;
    for (size_t k = 0; k < a.cells; k++) {
        if (isnan(a.eta_max[k]))
            continue;
        peak = fmax(peak, fabs(a.eta_max[k]));
        worst = fmax(worst, fabs(a.eta_max[k] - b.eta_max[k]));
        wind_peak = fmax(wind_peak, a.wind_max[k]);
        wind_worst = fmax(wind_worst, fabs(a.wind_max[k] - b.wind_max[k]));
        p_worst = fmax(p_worst, fabs(a.p_min[k] - b.p_min[k]));
    }
    print_message("storm vs its weather file: eta_max %.4f m, worst difference %.2e m (%.2f%%); wind_max %.2f m/s, "
                  "worst %.2e m/s; lowest pressure worst %.2f Pa\n",
                  peak, worst, 100 * worst / peak, wind_peak, wind_worst, p_worst);
    assert_true(peak > 0.05);                   /* the storm does raise the sea */
    assert_true(worst < 0.02 * peak);           /* bilinear between centres: ~1% at 6 cells to rmax */
    assert_true(wind_worst < 1e-3 * wind_peak); /* at the centres both are the storm's own value */
    assert_true(p_worst < 0.05);                /* Pa: float rounding of ~1e5 Pa */

    /* the gauges' pressure: the storm's own at the gauge at the slab times around the sample, linear
     * between them (sample 15: the first step at or after 2.5 h) */
    const double ts = a.time[15], t0 = floor(ts / 600) * 600, w = (ts - t0) / 600;
    double p_slab[2];
    for (int q = 0; q < 2; q++) {
        sw_storm_state st;
        sw_storm_state_at(storm, t0 + 600 * q, &st);
        sw_storm_point(storm, &st, 100e3, 60e3, &p_slab[q], NULL, NULL);
    }
    const double p_want = p_slab[0] + w * (p_slab[1] - p_slab[0]), p_got = a.gauge_p[1 * a.n_times + 15];
    print_message("Open Water at t = %.0f s: pressure %.4f hPa, the storm's (between slabs) %.4f hPa\n", ts, p_got / 100,
                  p_want / 100);
    assert_true(fabs(p_got - p_want) < 1e-9 * p_want);

    sw_storm_free(storm);
    release(&a);
    release(&b);
    remove(track);
    remove(file);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_file_matches_storm),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
