/* test_sphere.c - the model on a geographic grid (longitude, latitude on a sphere), on every layout.
 *
 * Sources (restated in docs/references.md):
 *  - Great-circle distance by the haversine formula, d = 2 R asin(sqrt(sin^2(dphi/2)
 *    + cos(phi1) cos(phi2) sin^2(dlambda/2))): Sinnott, R. W. (1984), "Virtues of the haversine", Sky and
 *    Telescope 68(2), 159 [memory].
 *  - Long gravity waves travel at c = sqrt(g h) (Lamb 1932, Hydrodynamics, section 170 [memory]); on the
 *    sphere a front from a point goes along great circles at that speed, so a first arrival at distance d
 *    comes at d / c after a delay that is the same at every bearing and latitude [derived].
 *  - The destination point at distance d and bearing theta from (phi1, lambda1): phi2 = asin(sin phi1 cos
 *    delta + cos phi1 sin delta cos theta), lambda2 = lambda1 + atan2(sin theta sin delta cos phi1,
 *    cos delta - sin phi1 sin phi2), delta = d / R (spherical trigonometry [memory]).
 *  - Volume and the discrete energy are conserved exactly by the forward-backward step with the metric
 *    terms in flux form and the areas cos(phi) dlambda dphi R^2 (docs/layouts.md) [derived]: checked to
 *    round-off.
 *  - On a small domain at the equator the sphere's metric differs from the plane by 1 - cos(phi) <=
 *    phi_max^2 / 2 [derived]: a geographic and a projected run agree to that order.
 */
#include <math.h>
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

#include "model/layout.h"
#include "model/model.h"
#include "testutil.h"

#define G 9.81
#define PI 3.14159265358979323846
#define R_EARTH SW_EARTH_RADIUS_M
#define DEG (PI / 180.0)

static const sw_edge_kind WALLS_[4] = {SW_EDGE_WALL, SW_EDGE_WALL, SW_EDGE_WALL, SW_EDGE_WALL};
static const sw_edge_kind OPEN_[4] = {SW_EDGE_OPEN, SW_EDGE_OPEN, SW_EDGE_OPEN, SW_EDGE_OPEN};

/* 1 when layout `lay` is to be tested: all, or only the one named by the environment variable
 * SW_TEST_LAYOUT (for work on one layout). */
static int wanted(const sw_layout *lay)
{
    const char *only = getenv("SW_TEST_LAYOUT");
    return !only || !*only || sw_layout_find(only) == lay;
}

/* Great-circle distance (m) between (lat1, lon1) and (lat2, lon2), radians (Sinnott 1984). */
static double haversine(double lat1, double lon1, double lat2, double lon2)
{
    const double a = sin(0.5 * (lat2 - lat1)), b = sin(0.5 * (lon2 - lon1));
    return 2 * R_EARTH * asin(sqrt(a * a + cos(lat1) * cos(lat2) * b * b));
}

/* A geographic grid of nx x ny cells of `cell_deg` degrees with its south-west corner at (lon0, lat0) deg. */
static sw_grid geo_grid(size_t nx, size_t ny, double cell_deg, double lon0_deg, double lat0_deg)
{
    return (sw_grid){.nx = nx, .ny = ny, .dx_m = R_EARTH * cell_deg * DEG, .dy_m = R_EARTH * cell_deg * DEG,
                     .x0_m = R_EARTH * lon0_deg * DEG, .y0_m = R_EARTH * lat0_deg * DEG,
                     .kind = SW_GRID_GEOGRAPHIC, .radius_m = R_EARTH};
}

typedef struct {
    double lat, lon;      /* the hump's centre, rad */
    double amp, radius;   /* its height (m) and e-folding radius (m, along great circles) */
} hump;

/* Depth h everywhere (land where land_fn says), elevation a hump in true distance. */
static sw_model *make(const sw_layout *lay, const sw_grid *g, double h, const hump *hp, const sw_edge_kind edges[4],
                      sw_rotation_kind rot, double courant_frac, int with_island)
{
    const size_t nx = g->nx, ny = g->ny, n = nx * ny;
    double *depth = malloc(n * sizeof(double)), *eta = calloc(n, sizeof(double));
    assert_non_null(depth);
    assert_non_null(eta);
    for (size_t j = 0; j < ny; j++)
        for (size_t i = 0; i < nx; i++) {
            const double lon = sw_grid_xc(g, i) / g->radius_m, lat = sw_grid_yc(g, j) / g->radius_m;
            const double d = haversine(hp->lat, hp->lon, lat, lon);
            depth[j * nx + i] = h;
            if (with_island && i > nx / 2 && i < nx / 2 + 4 && j > ny / 3 && j < ny / 3 + 5)
                depth[j * nx + i] = 0;   /* a small island: walls inside the domain */
            eta[j * nx + i] = hp->amp * exp(-(d / hp->radius) * (d / hp->radius));
        }
    sw_model_config cfg = {.layout = lay, .grid = *g, .depth_m = depth, .eta0_m = eta, .min_depth_m = 1,
                           .gravity_ms2 = G, .terms = {.rotation = rot}};
    memcpy(cfg.edges, edges, sizeof cfg.edges);
    const double dt0 = sw_model_dt_limit(lay, g, depth, 1, G, 2);
    cfg.dt_s = courant_frac * sw_terms_dt_limit(dt0, sw_terms_f_max(&cfg.terms, g->y0_m, g->y0_m + (double)ny * g->dy_m,
                                                                     g->radius_m));
    sw_model *m = NULL;
    sw_error err = {0};
    const sw_status rc = sw_model_create(&cfg, &m, &err);
    if (rc != SW_OK)
        print_message("%s: %s\n", lay->name, err.msg);
    assert_int_equal(rc, SW_OK);
    free(depth);
    free(eta);
    return m;
}

/* The sum of |eta| dA over the grid (m3): the scale of the volume's round-off. */
static double abs_volume(const sw_model *m)
{
    const sw_grid *g = sw_model_grid(m);
    double s = 0;
    for (size_t j = 0; j < g->ny; j++)
        for (size_t i = 0; i < g->nx; i++)
            s += fabs(sw_model_eta(m, i, j)) * g->dx_m * g->dy_m * sw_grid_cos_lat(g, sw_grid_yc(g, j));
    return s;
}

/* Volume to round-off and energy to round-off over 300 steps in a closed basin at 25..55 N with an
 * island, without and with the sphere's rotation, on every layout. */
static void test_conservation(void **state)
{
    (void)state;
    const sw_grid g = geo_grid(48, 40, 0.75, -10, 25);
    const hump hp = {.lat = 42 * DEG, .lon = 6 * DEG, .amp = 1.0, .radius = 250e3};
    for (size_t q = 0; q < sw_layout_count(); q++)
        for (int r = 0; r < 2; r++) {
            const sw_layout *lay = sw_layout_at(q);
            if (!wanted(lay))
                continue;
            sw_model *m = make(lay, &g, 3000, &hp, WALLS_, r ? SW_ROTATION_SPHERE : SW_ROTATION_NONE, 0.9, 1);
            const double v0 = sw_model_volume(m), e0 = sw_model_energy(m), scale = abs_volume(m);
            double worst_v = 0, worst_e = 0;
            for (int s = 0; s < 300; s++) {
                sw_model_step(m);
                sw_model_tick(m);
                worst_v = fmax(worst_v, fabs(sw_model_volume(m) - v0) / scale);
                worst_e = fmax(worst_e, fabs(sw_model_energy(m) - e0) / e0);
            }
            print_message("%s rotation %s: volume drift %.2e of sum |eta| dA, energy drift %.2e\n", lay->name,
                          r ? "sphere" : "none", worst_v, worst_e);
            assert_true(worst_v < 1e-12);
            assert_true(worst_e < 1e-10);
            sw_model_free(m);
        }
}

/* First arrivals from a point source at 35 N and at 60 N: at every bearing the arrival time less the
 * great-circle distance over sqrt(g h) is one and the same delay, to within the front's discretisation
 * (here 1.5 cell crossings); and the speed fitted over distance is sqrt(g h) within 3 %. */
static void test_arrival_great_circle(void **state)
{
    (void)state;
    const double h = 4000, c = sqrt(G * h), cell = 0.2;
    const double lat_src[2] = {35, 60};
    const double bearing[8] = {0, 45, 90, 135, 180, 225, 270, 315};
    const double dist[3] = {500e3, 750e3, 1000e3};
    for (size_t q = 0; q < sw_layout_count(); q++)
        for (int L = 0; L < 2; L++) {
            const sw_layout *lay = sw_layout_at(q);
            if (!wanted(lay))
                continue;
            /* a domain about 2400 km square around the source, in degrees of longitude at its latitude */
            const double half_lat = 12.0, half_lon = half_lat / cos(lat_src[L] * DEG);
            const size_t nx = (size_t)(2 * half_lon / cell), ny = (size_t)(2 * half_lat / cell);
            const sw_grid g = geo_grid(nx, ny, cell, -half_lon, lat_src[L] - half_lat);
            const hump hp = {.lat = lat_src[L] * DEG, .lon = 0, .amp = 1.0, .radius = 80e3};
            sw_model *m = make(lay, &g, h, &hp, OPEN_, SW_ROTATION_NONE, 0.9, 0);
            size_t gi[8][3], gj[8][3];
            double gd[8][3], peak[8][3] = {{0}}, arrive[8][3];
            double *series = calloc(24 * 2000, sizeof(double));
            assert_non_null(series);
            for (int b = 0; b < 8; b++)
                for (int k = 0; k < 3; k++) {
                    const double th = bearing[b] * DEG, del = dist[k] / R_EARTH, p1 = hp.lat;
                    const double p2 = asin(sin(p1) * cos(del) + cos(p1) * sin(del) * cos(th));
                    const double l2 = atan2(sin(th) * sin(del) * cos(p1), cos(del) - sin(p1) * sin(p2));
                    gi[b][k] = (size_t)floor((R_EARTH * l2 - g.x0_m) / g.dx_m);
                    gj[b][k] = (size_t)floor((R_EARTH * p2 - g.y0_m) / g.dy_m);
                    assert_true(gi[b][k] < nx && gj[b][k] < ny);
                    gd[b][k] = haversine(p1, 0, sw_grid_yc(&g, gj[b][k]) / R_EARTH, sw_grid_xc(&g, gi[b][k]) / R_EARTH);
                }
            const double dt = sw_model_dt(m);
            const size_t steps = (size_t)ceil(1.25 * dist[2] / c / dt);
            assert_true(steps < 2000);
            for (size_t s = 0; s < steps; s++) {
                sw_model_step(m);
                sw_model_tick(m);
                for (int b = 0; b < 8; b++)
                    for (int k = 0; k < 3; k++) {
                        const double e = sw_model_eta_centre(m, gi[b][k], gj[b][k]);
                        series[(b * 3 + k) * 2000 + s] = e;
                        peak[b][k] = fmax(peak[b][k], fabs(e));
                    }
            }
            /* arrival: the first time |eta| reaches a fifth of the gauge's own peak (interpolated in time) */
            double delay_min = 1e30, delay_max = -1e30, worst_speed = 0;
            for (int b = 0; b < 8; b++) {
                for (int k = 0; k < 3; k++) {
                    const double *e = series + (b * 3 + k) * 2000, thr = 0.2 * peak[b][k];
                    arrive[b][k] = -1;
                    for (size_t s = 1; s < steps && arrive[b][k] < 0; s++)
                        if (fabs(e[s]) >= thr)
                            arrive[b][k] = dt * ((double)s + (thr - fabs(e[s - 1])) / (fabs(e[s]) - fabs(e[s - 1])));
                    assert_true(arrive[b][k] > 0);
                    const double delay = arrive[b][k] - gd[b][k] / c;
                    delay_min = fmin(delay_min, delay);
                    delay_max = fmax(delay_max, delay);
                }
                const double speed = (gd[b][2] - gd[b][0]) / (arrive[b][2] - arrive[b][0]);
                worst_speed = fmax(worst_speed, fabs(speed / c - 1));
            }
            const double cell_time = g.dy_m / c;   /* one cell crossing (north-south, the widest) */
            print_message("%s at %g N: delay spread %.1f s (%.2f cells), worst fitted speed %.2f %% off sqrt(g h)\n",
                          lay->name, lat_src[L], delay_max - delay_min, (delay_max - delay_min) / cell_time,
                          100 * worst_speed);
            assert_true(delay_max - delay_min < 1.5 * cell_time);
            assert_true(worst_speed < 0.03);
            free(series);
            sw_model_free(m);
        }
}

/* The largest |eta_geographic - eta_projected| over the largest |eta_projected| after 100 steps, for a
 * basin of 40 x 40 cells of `cell_deg` degrees centred on the equator with a hump of 8 cells' radius: the
 * same x = R lambda cells with and without the metric, stepped with the same dt (the geographic one's). */
static double equator_difference(const sw_layout *lay, double cell_deg)
{
    const size_t n = 40;
    const sw_grid geo = geo_grid(n, n, cell_deg, -20 * cell_deg, -20 * cell_deg);
    sw_grid plane = geo;
    plane.kind = SW_GRID_PROJECTED;
    const hump hp = {.lat = 4 * cell_deg * DEG, .lon = -2 * cell_deg * DEG, .amp = 1.0, .radius = 8 * geo.dy_m / 2};
    sw_model *a = make(lay, &geo, 50, &hp, WALLS_, SW_ROTATION_NONE, 0.8, 0), *b = NULL;
    double *depth = malloc(n * n * sizeof(double)), *eta = calloc(n * n, sizeof(double));
    assert_non_null(depth);
    assert_non_null(eta);
    for (size_t j = 0; j < n; j++)
        for (size_t i = 0; i < n; i++) {
            depth[j * n + i] = 50;
            const double d = haversine(hp.lat, hp.lon, sw_grid_yc(&geo, j) / R_EARTH, sw_grid_xc(&geo, i) / R_EARTH);
            eta[j * n + i] = exp(-(d / hp.radius) * (d / hp.radius));
        }
    sw_model_config cfg = {.layout = lay, .grid = plane, .depth_m = depth, .eta0_m = eta, .min_depth_m = 1,
                           .gravity_ms2 = G, .dt_s = sw_model_dt(a)};
    memcpy(cfg.edges, WALLS_, sizeof cfg.edges);
    sw_error err = {0};
    assert_int_equal(sw_model_create(&cfg, &b, &err), SW_OK);
    free(depth);
    free(eta);
    for (int s = 0; s < 100; s++) {
        sw_model_step(a);
        sw_model_tick(a);
        sw_model_step(b);
        sw_model_tick(b);
    }
    double worst = 0, top = 0;
    for (size_t j = 0; j < n; j++)
        for (size_t i = 0; i < n; i++) {
            worst = fmax(worst, fabs(sw_model_eta_centre(a, i, j) - sw_model_eta_centre(b, i, j)));
            top = fmax(top, fabs(sw_model_eta_centre(b, i, j)));
        }
    sw_model_free(a);
    sw_model_free(b);
    return worst / top;
}

/* Near the equator a geographic run and a projected run of the same cells differ by the metric, 1 -
 * cos(phi) ~ phi^2 / 2: halving the domain (every length halved, the run self-similar on the plane) must
 * divide the difference by about 4, and the difference must not be 0 (the metric is applied). */
static void test_equator_matches_plane(void **state)
{
    (void)state;
    for (size_t q = 0; q < sw_layout_count(); q++) {
        const sw_layout *lay = sw_layout_at(q);
        if (!wanted(lay))
            continue;
        const double big = equator_difference(lay, 0.05), small = equator_difference(lay, 0.025);
        print_message("%s: geographic - projected at the equator: %.3e (+-1 deg), %.3e (+-0.5 deg), ratio %.2f "
                      "(second order: 4)\n", lay->name, big, small, big / small);
        assert_true(small > 0);
        assert_true(big < 1e-2);
        assert_true(big / small > 3.5 && big / small < 4.5);
    }
}

/* The time step on the sphere is limited by the narrowest cells: the row nearest the pole. */
static void test_limit_row(void **state)
{
    (void)state;
    const sw_grid g = geo_grid(20, 30, 1.0, 0, 30);   /* 30 .. 60 N */
    double depth[600];
    for (size_t k = 0; k < 600; k++)
        depth[k] = 1000;
    size_t row = 0;
    const sw_layout *c = sw_layout_find("C");
    const double dt = sw_model_dt_limit_row(c, &g, depth, 1, G, 2, &row);
    assert_int_equal(row, 29);
    /* the C layout's limit on the cells of its north edge line, 60 N: 1 / (c sqrt(1/dx^2 + 1/dy^2)) */
    const double dx = g.dx_m * cos(60 * DEG), dy = g.dy_m, want = 1 / (sqrt(G * 1000) * sqrt(1 / (dx * dx) + 1 / (dy * dy)));
    assert_true(fabs(dt / want - 1) < 1e-12);
    /* deeper water further south can move the limit there */
    for (size_t i = 0; i < 20; i++)
        depth[2 * 20 + i] = 6000;
    sw_model_dt_limit_row(c, &g, depth, 1, G, 2, &row);
    assert_int_equal(row, 2);
}

/* Refusals: a grid whose halo passes 89 degrees; sphere rotation on a projected grid; f-plane on a
 * geographic one. */
static void test_refusals(void **state)
{
    (void)state;
    double depth[100], eta[100] = {0};
    for (size_t k = 0; k < 100; k++)
        depth[k] = 100;
    const sw_layout *c = sw_layout_find("C");
    sw_model *m = NULL;
    sw_error err = {0};
    sw_model_config cfg = {.layout = c, .grid = geo_grid(10, 10, 1.0, 0, 79), .depth_m = depth, .eta0_m = eta,
                           .min_depth_m = 1, .gravity_ms2 = G, .dt_s = 1};
    assert_int_equal(sw_model_create(&cfg, &m, &err), SW_ERR_RANGE);   /* halo row 89 .. 90 N */
    assert_non_null(strstr(err.msg, "pole"));
    cfg.grid = geo_grid(10, 10, 1.0, 0, 78);
    assert_int_equal(sw_model_create(&cfg, &m, &err), SW_OK);
    sw_model_free(m);
    cfg.terms.rotation = SW_ROTATION_F_PLANE;
    cfg.terms.f0_s = 1e-4;
    assert_int_equal(sw_model_create(&cfg, &m, &err), SW_ERR_USAGE);
    cfg.terms.rotation = SW_ROTATION_SPHERE;
    cfg.grid.kind = SW_GRID_PROJECTED;
    assert_int_equal(sw_model_create(&cfg, &m, &err), SW_ERR_USAGE);
    assert_null(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_limit_row),
        cmocka_unit_test(test_refusals),
        cmocka_unit_test(test_conservation),
        cmocka_unit_test(test_equator_matches_plane),
        cmocka_unit_test(test_arrival_great_circle),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
