/* test_tracker.c - arrival and extreme maps: the tracker against a plain cell-by-cell recomputation.
 *
 * The tracker skips the segments of a row whose maps cannot change and, attached to the model, runs
 * inside the step, where a layout may hand it each row's values made in its own loops (tracker.c).
 * None of that may change a single bit of the maps. The reference here is the definition in README
 * ("Outputs"), written out plainly from the centre values in float (sw_model_centre_row_f32, checked
 * against the double centre_row below): after every step, for every water cell,
 * eta_max / eta_min are the highest / lowest centre elevation so far (as floats), eta_max_time the
 * time of the highest, speed_max the highest |u| at the centre (from the centre values rounded to float,
 * squared and summed in float), arrival the first time |eta| >= the
 * threshold; values below the smallest normal float, 2^-126 = 1.18e-38 (IEEE 754), count as 0
 * (the tracker runs with subnormals flushed, fpmode.h), and so do elevations below 1 micrometre and
 * speeds below 1 micrometre per second (the tracker's floor). Checked on every layout, in both precisions, on 1 and 2 threads, on a grid whose rows
 * are not a whole number of segments, with open edges so that waves leave, and with an island.
 * Also: a wave front's arrival time against distance / sqrt(g h) (Lamb 1932, Hydrodynamics, ch. VIII
 * [memory]).
 */
#include <float.h>
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

#include "model/layout.h"
#include "model/model.h"
#include "base/omp_compat.h"
#include "testutil.h"
#include "observers/tracker.h"

#define G 9.81

typedef struct {
    float *mx, *mn, *arr, *tmx, *sp2;
} ref_maps;

static sw_model *basin(const char *layout, sw_precision precision, size_t nx, size_t ny, double d, double h,
                       double x0, double y0, double radius)
{
    double *depth = malloc(nx * ny * sizeof(double)), *eta = malloc(nx * ny * sizeof(double));
    assert_non_null(depth);
    assert_non_null(eta);
    for (size_t j = 0; j < ny; j++)
        for (size_t i = 0; i < nx; i++) {
            double x = ((double)i + 0.5) * d, y = ((double)j + 0.5) * d;
            double ri = (double)i - 0.7 * (double)nx, rj = (double)j - 0.5 * (double)ny;
            depth[j * nx + i] = ri * ri + rj * rj < 30 ? 0 : h;   /* an island */
            double r2 = ((x - x0) * (x - x0) + (y - y0) * (y - y0)) / (radius * radius);
            eta[j * nx + i] = 0.8 * exp(-r2);
        }
    sw_grid g = {.nx = nx, .ny = ny, .dx_m = d, .dy_m = d};
    const sw_layout *lay = sw_layout_find(layout);
    assert_non_null(lay);
    sw_model_config cfg = {.layout = lay, .grid = g, .depth_m = depth, .eta0_m = eta, .min_depth_m = 1,
                           .gravity_ms2 = G, .precision = precision,
                           .edges = {SW_EDGE_OPEN, SW_EDGE_OPEN, SW_EDGE_WALL, SW_EDGE_OPEN}};
    cfg.dt_s = 0.9 * sw_model_dt_limit(lay, &g, depth, 1, G, sw_model_dims(&g, cfg.edges));
    sw_model *m = NULL;
    sw_error err = {0};
    assert_int_equal(sw_model_create(&cfg, &m, &err), SW_OK);
    free(depth);
    free(eta);
    return m;
}

/* x, or 0 (of x's sign) when it is below the smallest normal float. */
static float flushed(double x)
{
    float f = (float)x;
    return fabsf(f) < FLT_MIN ? copysignf(0.0f, f) : f;
}

static void ref_update(ref_maps *r, const sw_model *m, float thr)
{
    const sw_grid *g = sw_model_grid(m);
    const float now = (float)sw_model_time(m), floor_m = (float)fmin(1e-6, thr / 100.0);
    float *e = malloc(3 * g->nx * sizeof(float));
    assert_non_null(e);
    for (size_t j = 0; j < g->ny; j++) {
        sw_model_centre_row_f32(m, j, e, e + g->nx, e + 2 * g->nx);
        for (size_t i = 0; i < g->nx; i++) {
            size_t k = j * g->nx + i;
            float ei = flushed(e[i]), uc = flushed(e[g->nx + i]), vc = flushed(e[2 * g->nx + i]);
            float s2 = flushed(flushed(uc * uc) + flushed(vc * vc));   /* float arithmetic, flushed */
            float ai = fabsf(ei);
            ei = ai < floor_m ? 0.0f : ei;            /* below the floor: 0 */
            s2 = s2 < 1e-12f ? 0.0f : s2;
            if (ei > r->mx[k]) {
                r->mx[k] = ei;
                r->tmx[k] = now;
            }
            if (ei < r->mn[k])
                r->mn[k] = ei;
            if (s2 > r->sp2[k])
                r->sp2[k] = s2;
            if (isnan(r->arr[k]) && ai >= thr)
                r->arr[k] = now;
        }
    }
    free(e);
}

/* The attached tracker's maps after `steps` steps on `threads` threads, against the reference. The
 * tracker is made and attached for `attached` threads: fewer than run makes the extra thread take
 * the slow paths (no room for the step's row values, the tracker's borrowed slot). */
static void attached_equals_reference(const char *layout, sw_precision precision, int threads, int attached)
{
    const size_t nx = 700, ny = 41;   /* 700 = one segment of 512 and a short one */
    const double d = 1000, h = 200, thr = 0.01;
    sw_model *m = basin(layout, precision, nx, ny, d, h, 150e3, 20e3, 8e3);
    sw_model *r = basin(layout, precision, nx, ny, d, h, 150e3, 20e3, 8e3);
    sw_tracker *t = NULL;
    sw_error err = {0};
    assert_int_equal(sw_tracker_create(m, thr, attached, &t, &err), SW_OK);
    omp_set_num_threads(attached);
    assert_int_equal(sw_tracker_attach(t, m, &err), SW_OK);
    const size_t n = nx * ny;
    ref_maps ref = {malloc(n * sizeof(float)), malloc(n * sizeof(float)), malloc(n * sizeof(float)),
                    malloc(n * sizeof(float)), malloc(n * sizeof(float))};
    assert_non_null(ref.mx);
    assert_non_null(ref.sp2);
    for (size_t k = 0; k < n; k++) {
        ref.mx[k] = -INFINITY;
        ref.mn[k] = INFINITY;
        ref.arr[k] = NAN;
        ref.tmx[k] = 0;
        ref.sp2[k] = 0;
    }
    ref_update(&ref, r, (float)thr);
    const int steps = 400;   /* the hump spreads over much of the basin and partly leaves it */
    omp_set_num_threads(threads);
    SW_OMP(parallel)
    for (int q = 0; q < steps; q++) {
        sw_model_step(m);
        SW_OMP(single)
        sw_model_tick(m);
    }
    for (int q = 0; q < steps; q++) {
        tu_advance(r, 1, 1);
        ref_update(&ref, r, (float)thr);
    }
    double *depth = calloc(n, sizeof(double));
    sw_map_set maps;
    assert_int_equal(sw_tracker_maps(t, m, depth, &maps, &err), SW_OK);
    const unsigned char *wet = sw_model_wet(m);
    size_t differ = 0, arrived = 0, water = 0;
    for (size_t k = 0; k < n; k++) {
        if (!wet[k])
            continue;   /* NaN in every map (sw_tracker_maps) */
        water++;
        arrived += !isnan(ref.arr[k]);
        differ += maps.eta_max_m[k] != (double)ref.mx[k] || maps.eta_min_m[k] != (double)ref.mn[k]
                || maps.eta_max_time_s[k] != (double)ref.tmx[k]
                || maps.speed_max_ms[k] != sqrt((double)ref.sp2[k])
                || !(maps.arrival_s[k] == (double)ref.arr[k] || (isnan(maps.arrival_s[k]) && isnan(ref.arr[k])));
    }
    long long seen, updated;
    sw_tracker_segments(t, &seen, &updated);
    print_message("%s %s %d thread(s) (attached for %d): %zu of %zu water cells arrived, maps rewritten in "
                  "%lld of %lld segments, %zu cells differ\n", layout, sw_precision_name(precision), threads,
                  attached, arrived, water, updated, seen, differ);
    assert_true(arrived > water / 10 && arrived < water);   /* a front is still moving */
    assert_true(updated > seen / 20 && updated < seen * 9 / 10);   /* segments both rewritten and skipped */
    assert_int_equal(differ, 0);
    free(depth);
    for (float **p = &ref.mx; p <= &ref.sp2; p++)
        free(*p);
    sw_tracker_free(t);
    sw_model_free(m);
    sw_model_free(r);
}

static void test_attached_equals_reference(void **state)
{
    (void)state;
    for (size_t q = 0; q < sw_layout_count(); q++)
        for (int p = 0; p < SW_PRECISIONS; p++)
            for (int threads = 1; threads <= 2; threads++)
                attached_equals_reference(sw_layout_at(q)->name, (sw_precision)p, threads, threads);
    attached_equals_reference("C", SW_SINGLE, 2, 1);   /* the second thread without room or slot */
    attached_equals_reference("A", SW_DOUBLE, 2, 1);
}

/* The tracker's float centre values agree with the double ones to float round-off, on every layout
 * and precision: |f32 - double| <= 2^-22 (two float ulps, IEEE 754 binary32) of the row's largest
 * value, or 1e-30 (values near 0). */
static void test_centre_row_f32(void **state)
{
    (void)state;
    const size_t nx = 90, ny = 30;
    float *f = malloc(3 * nx * sizeof(float));
    double *d = malloc(3 * nx * sizeof(double));
    assert_non_null(f);
    assert_non_null(d);
    for (size_t q = 0; q < sw_layout_count(); q++)
        for (int p = 0; p < SW_PRECISIONS; p++) {
            sw_model *m = basin(sw_layout_at(q)->name, (sw_precision)p, nx, ny, 1000, 200, 40e3, 15e3, 6e3);
            tu_advance(m, 40, 1);
            double worst = 0;
            for (size_t j = 0; j < ny; j++) {
                sw_model_centre_row_f32(m, j, f, f + nx, f + 2 * nx);
                sw_model_centre_row(m, j, d, d + nx, d + 2 * nx);
                for (int c = 0; c < 3; c++) {
                    double top = 0;
                    for (size_t i = 0; i < nx; i++)
                        top = fmax(top, fabs(d[c * nx + i]));
                    for (size_t i = 0; i < nx; i++) {
                        double err = fabs((double)f[c * nx + i] - d[c * nx + i]);
                        worst = fmax(worst, err / (top > 0 ? top : 1));
                        assert_true(err <= ldexp(top, -22) + 1e-30);
                    }
                }
            }
            print_message("%s %s: float centre values within %.2e of the row's largest\n", sw_layout_at(q)->name,
                          sw_precision_name((sw_precision)p), worst);
            sw_model_free(m);
        }
    free(f);
    free(d);
}

/* A hump's front reaches a cell 60 km away at about (60 km - its radius) / sqrt(g h). The 1 cm threshold
 * is met at the front's foot a little before the crest, so the bound is loose: within 15 %. */
static void test_arrival_speed(void **state)
{
    (void)state;
    const size_t nx = 300, ny = 11;
    const double d = 500, h = 100, c = sqrt(G * h);
    sw_model *m = basin("C", SW_SINGLE, nx, ny, d, h, 20e3, 2.75e3, 3e3);
    sw_tracker *t = NULL;
    sw_error err = {0};
    assert_int_equal(sw_tracker_create(m, 0.01, 1, &t, &err), SW_OK);
    assert_int_equal(sw_tracker_attach(t, m, &err), SW_OK);
    long steps = (long)(2.0 * 60e3 / c / sw_model_dt(m));
    for (long q = 0; q < steps; q++) {
        sw_model_step(m);
        sw_model_tick(m);
    }
    double *depth = calloc(nx * ny, sizeof(double));
    sw_map_set maps;
    assert_int_equal(sw_tracker_maps(t, m, depth, &maps, &err), SW_OK);
    size_t i = (size_t)((20e3 + 60e3) / d), j = 5;
    double got = maps.arrival_s[j * nx + i], expect = (60e3 - 3e3) / c;
    print_message("arrival 60 km east: %.1f s; (60 km - radius) / sqrt(g h) = %.1f s\n", got, expect);
    assert_true(fabs(got - expect) / expect < 0.15);
    free(depth);
    sw_tracker_free(t);
    sw_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_attached_equals_reference),
        cmocka_unit_test(test_arrival_speed),
        cmocka_unit_test(test_centre_row_f32),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
