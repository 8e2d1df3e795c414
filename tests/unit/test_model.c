/* test_model.c - the model on layouts A and C against published formulas and exact discrete answers.
 *
 * Sources (see docs/references.md):
 *  - Merian's formula for a closed basin, T_n = 2 L / (n sqrt(g h)): Rabinovich (2009), "Seiches and
 *    harbour oscillations", Handbook of Coastal and Ocean Engineering [seen]; h = 10 m, L = 10 km
 *    gives T_1 = 2019.28 s.
 *  - Phase speed sqrt(g h): Lamb (1932), Hydrodynamics, ch. VIII [memory].
 *  - Fully discrete frequency of forward-backward stepping [derived here]: a mode with semi-discrete
 *    frequency w obeys lambda^2 - (2 - p^2) lambda + 1 = 0, p = w dt, so cos(W dt) = 1 - p^2/2.
 *    On the C layout in a walled channel, eta = cos(k x) at the cell centres with k = n pi / L is an
 *    exact eigenvector, with w = (2 c / dx) sin(k dx / 2).
 *  - Start at rest [derived here and in model.c]: with u^{1/2} = -(g dt/2) G eta_0 stored at creation,
 *    eta_1 = eta_0 - dt h D u^{1/2} = eta_0 (1 - p^2/2) = eta_0 cos(W dt), and the recursion
 *    eta_{n+1} + eta_{n-1} = (2 - p^2) eta_n gives eta_n = eta_0 cos(n W dt) for any mode; p^2 =
 *    -g h dt^2 (div_x grad_x + div_y grad_y) from the layout's symbols (layout.h). Left at u = 0 the
 *    same mode would follow eta_0 cos((n - 1/2) W dt) / cos(W dt / 2): eta_1 = eta_0, a lag of dt/2.
 */
#include <complex.h>
#include <math.h>
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

#include "model/layout.h"
#include "testutil.h"
#include "model/model.h"
#include "base/omp_compat.h"

#if defined(__SSE2__)
#include <xmmintrin.h>
#endif

#define G 9.81
#define PI 3.14159265358979323846

/* A basin of nx x ny cells of size d with constant depth h, and an eta0 callback. */
typedef double (*shape_fn)(double x, double y, void *user);

static const sw_edge_kind WALLS[4] = {SW_EDGE_WALL, SW_EDGE_WALL, SW_EDGE_WALL, SW_EDGE_WALL};
static const sw_edge_kind OPEN[4] = {SW_EDGE_OPEN, SW_EDGE_OPEN, SW_EDGE_OPEN, SW_EDGE_OPEN};
static const sw_edge_kind LEVEL_EAST[4] = {SW_EDGE_WALL, SW_EDGE_LEVEL, SW_EDGE_WALL, SW_EDGE_WALL};

/* The precision make_model builds in: double unless a single-precision test sets it (and resets it). */
static sw_precision model_precision = SW_DOUBLE;

static sw_model *make_model(const char *layout, size_t nx, size_t ny, double d, double h, double courant_frac,
                            const sw_edge_kind edges[4], shape_fn eta0, void *user, double *depth_override)
{
    sw_grid g = {.nx = nx, .ny = ny, .dx_m = d, .dy_m = d};
    double *depth = malloc(nx * ny * sizeof(double));
    double *eta = malloc(nx * ny * sizeof(double));
    assert_non_null(depth);
    assert_non_null(eta);
    for (size_t j = 0; j < ny; j++)
        for (size_t i = 0; i < nx; i++) {
            double x = ((double)i + 0.5) * d, y = ((double)j + 0.5) * d;
            depth[j * nx + i] = depth_override ? depth_override[j * nx + i] : h;
            eta[j * nx + i] = eta0 ? eta0(x, y, user) : 0.0;
        }
    const sw_layout *lay = sw_layout_find(layout);
    assert_non_null(lay);
    sw_model_config cfg = {.layout = lay, .grid = g, .depth_m = depth, .eta0_m = eta, .min_depth_m = 1,
                           .gravity_ms2 = G, .edges = {edges[0], edges[1], edges[2], edges[3]},
                           .precision = model_precision};
    cfg.dt_s = courant_frac * sw_model_dt_limit(lay, &g, depth, 1, G, sw_model_dims(&g, cfg.edges));
    sw_model *m = NULL;
    sw_error err = {0};
    assert_int_equal(sw_model_create(&cfg, &m, &err), SW_OK);
    free(depth);
    free(eta);
    return m;
}

static void advance(sw_model *m, long n, int threads) { tu_advance(m, n, threads); }

static double cos_mode(double x, double y, void *user)
{
    (void)y;
    double *p = user;   /* p[0] = k, p[1] = amplitude */
    return p[1] * cos(p[0] * x);
}

static double sin_mode(double x, double y, void *user)
{
    (void)y;
    double *p = user;   /* p[0] = k, p[1] = amplitude */
    return p[1] * sin(p[0] * x);
}

/* Period from zero crossings (testutil.c); at least three crossings are required. */
static double measure_period(sw_model *m, double expected_s, int n_periods)
{
    int crossings;
    double period = tu_measure_period(m, expected_s, n_periods, &crossings);
    assert_true(crossings >= 3);
    return period;
}

/* Closed channel, h = 10 m, L = 10 km, mode 1, C layout: Merian within 0.5 %, discrete answer to 1e-7. */
static void test_seiche_c_mode1(void **state)
{
    (void)state;
    const size_t nx = 100;
    const double L = 10000, h = 10, d = L / nx;
    double p[2] = {PI / L, 0.01};
    sw_model *m = make_model("C", nx, 1, d, h, 0.9, WALLS, cos_mode, p, NULL);
    double c = sqrt(G * h);
    double merian = 2 * L / c;
    assert_true(fabs(merian - 2019.28) < 0.01);   /* the handbook's worked value */
    double dt = sw_model_dt(m);
    double w = (2 * c / d) * sin(p[0] * d / 2);
    double discrete = 2 * PI * dt / acos(1 - (w * dt) * (w * dt) / 2);
    double measured = measure_period(m, discrete, 6);
    print_message("C seiche: measured %.6f s, discrete %.6f s, Merian %.6f s\n", measured, discrete, merian);
    assert_true(fabs(measured - merian) / merian < 5e-3);
    assert_true(fabs(measured - discrete) / discrete < 1e-7);
    sw_model_free(m);
}

/* Basin open at one end onto a level edge (a node at x = L), C layout: the quarter-wave period
 * T_0 = 4 L / sqrt(g h) (Rabinovich 2009 [seen]: 4038.55 s for h = 10 m, L = 10 km) within 0.5 %, and
 * the fully discrete period to 1e-7: eta = cos(k x), k = pi / (2 L), is an exact eigenvector when
 * the ghost beyond the edge holds -eta (antisymmetry about x = L). */
static void test_seiche_c_quarter_wave(void **state)
{
    (void)state;
    const size_t nx = 100;
    const double L = 10000, h = 10, d = L / nx;
    double p[2] = {PI / (2 * L), 0.01};
    sw_model *m = make_model("C", nx, 1, d, h, 0.9, LEVEL_EAST, cos_mode, p, NULL);
    double c = sqrt(G * h);
    double merian = 4 * L / c;
    assert_true(fabs(merian - 4038.55) < 0.01);
    double dt = sw_model_dt(m);
    double w = (2 * c / d) * sin(p[0] * d / 2);
    double discrete = 2 * PI * dt / acos(1 - (w * dt) * (w * dt) / 2);
    double measured = measure_period(m, discrete, 4);
    print_message("C quarter wave: measured %.6f s, discrete %.6f s, Merian %.6f s\n", measured, discrete, merian);
    assert_true(fabs(measured - merian) / merian < 5e-3);
    assert_true(fabs(measured - discrete) / discrete < 1e-7);
    sw_model_free(m);
}

/* Same basin on the A layout: Merian's period within 0.1 % (measured: 3e-5). */
static void test_seiche_a_merian(void **state)
{
    (void)state;
    const size_t nx = 100;
    const double L = 10000, h = 10, d = L / nx;
    double p[2] = {PI / L, 0.01};
    sw_model *m = make_model("A", nx, 1, d, h, 0.9, WALLS, cos_mode, p, NULL);
    double merian = 2 * L / sqrt(G * h);
    double measured = measure_period(m, merian, 6);
    print_message("A seiche: measured %.4f s, Merian %.4f s\n", measured, merian);
    assert_true(fabs(measured - merian) / merian < 1e-3);
    sw_model_free(m);
}

static double hump_1d(double x, double y, void *user)
{
    (void)y;
    double *p = user;   /* centre, e-folding width */
    return exp(-((x - p[0]) * (x - p[0])) / (p[1] * p[1]));
}

/* Position (m) of the eastward pulse's crest: quadratic fit through the highest cell east of x0. */
static double crest_east(sw_model *m, size_t nx, double d, double x0)
{
    size_t best = 0;
    double bv = -1;
    for (size_t i = (size_t)(x0 / d); i + 1 < nx; i++)
        if (sw_model_eta(m, i, 0) > bv) {
            bv = sw_model_eta(m, i, 0);
            best = i;
        }
    double a = sw_model_eta(m, best - 1, 0), b = bv, c = sw_model_eta(m, best + 1, 0);
    double off = 0.5 * (a - c) / (a - 2 * b + c);
    return ((double)best + 0.5 + off) * d;
}

/* A hump splits into two pulses travelling at sqrt(g h) (Lamb 1932, [memory]); within 0.3 %. */
static void front_speed(const char *layout)
{
    const size_t nx = 2000;
    const double d = 100, h = 100, x0 = 50000;
    double p[2] = {x0, 2000};
    sw_model *m = make_model(layout, nx, 1, d, h, 0.9, WALLS, hump_1d, p, NULL);
    long n = (long)(1000.0 / sw_model_dt(m));
    advance(m, n, 1);
    double t1 = sw_model_time(m), x1 = crest_east(m, nx, d, x0);
    advance(m, n, 2);
    double t2 = sw_model_time(m), x2 = crest_east(m, nx, d, x0);
    double speed = (x2 - x1) / (t2 - t1);
    double c = sqrt(G * h);
    print_message("%s front: %.4f m/s, sqrt(g h) = %.4f m/s\n", layout, speed, c);
    assert_true(fabs(c - 31.3209) < 1e-3);   /* sqrt(9.81 * 100) */
    assert_true(fabs(speed - c) / c < 3e-3);
    sw_model_free(m);
}
static void test_front_speed_c(void **state) { (void)state; front_speed("C"); }
static void test_front_speed_a(void **state) { (void)state; front_speed("A"); }

static double hump_2d(double x, double y, void *user)
{
    double *p = user;
    double r2 = (x - p[0]) * (x - p[0]) + (y - p[1]) * (y - p[1]);
    return 0.5 * exp(-r2 / (p[2] * p[2]));
}

/* A basin with an island and a bumpy floor: with walls the water volume stays put to round-off. */
static void mass_conserved(const char *layout)
{
    const size_t nx = 80, ny = 60;
    const double d = 1000;
    double *depth = malloc(nx * ny * sizeof(double));
    assert_non_null(depth);
    for (size_t j = 0; j < ny; j++)
        for (size_t i = 0; i < nx; i++) {
            double x = (double)i - 50, y = (double)j - 30;
            depth[j * nx + i] = 200 + 50 * sin(0.3 * (double)i) - 300 * exp(-(x * x + y * y) / 40.0);
        }
    double p[3] = {20000, 20000, 6000};
    sw_model *m = make_model(layout, nx, ny, d, 0, 0.95, WALLS, hump_2d, p, depth);
    free(depth);
    double v0 = sw_model_volume(m);
    advance(m, 2000, 2);
    double v1 = sw_model_volume(m);
    /* the volume is ~3e7 m3; round-off of 2000 steps on 4800 cells is far below 1e-9 of it */
    print_message("%s volume: %.10e -> %.10e m3\n", layout, v0, v1);
    assert_true(v0 > 1e7);
    assert_true(fabs(v1 - v0) / v0 < 1e-10);
    sw_model_free(m);
}
static void test_mass_c(void **state) { (void)state; mass_conserved("C"); }
static void test_mass_a(void **state) { (void)state; mass_conserved("A"); }

/* dt beyond the layout's limit is refused, with the limit named; the limits are the closed forms. */
static void test_dt_refused(void **state)
{
    (void)state;
    const char *names[2] = {"A", "C"};
    const double limit_2d[2] = {sqrt(2.0), 1 / sqrt(2.0)};   /* derived in layout_a.c / layout_c.c */
    const double limit_1d[2] = {2.0, 1.0};                   /* A: common textbook result; C: derived */
    for (int q = 0; q < 2; q++) {
        const sw_layout *lay = sw_layout_find(names[q]);
        sw_grid g2 = {.nx = 10, .ny = 10, .dx_m = 100, .dy_m = 100};
        sw_grid g1 = {.nx = 10, .ny = 1, .dx_m = 100, .dy_m = 100};
        double depth[100];
        for (int k = 0; k < 100; k++)
            depth[k] = 40;
        double c = sqrt(G * 40);
        double dt2 = sw_model_dt_limit(lay, &g2, depth, 1, G, 2);
        double dt1 = sw_model_dt_limit(lay, &g1, depth, 1, G, 1);
        assert_true(fabs(c * dt2 / 100 - limit_2d[q]) < 1e-12);
        assert_true(fabs(c * dt1 / 100 - limit_1d[q]) < 1e-12);

        sw_model_config cfg = {.layout = lay, .grid = g2, .depth_m = depth, .min_depth_m = 1, .gravity_ms2 = G,
                               .dt_s = 1.02 * dt2};
        sw_model *m = NULL;
        sw_error err = {0};
        assert_int_equal(sw_model_create(&cfg, &m, &err), SW_ERR_UNSTABLE);
        assert_null(m);
        assert_non_null(strstr(err.msg, "limit"));
        cfg.dt_s = 0.98 * dt2;
        assert_int_equal(sw_model_create(&cfg, &m, &err), SW_OK);
        sw_model_free(m);
    }
}

/* Results do not depend on the number of threads: bitwise equal elevations. */
static void thread_independent(const char *layout)
{
    const size_t nx = 97, ny = 61;
    double p[3] = {30000, 25000, 8000};
    sw_model *m1 = make_model(layout, nx, ny, 1000, 500, 0.9, OPEN, hump_2d, p, NULL);
    sw_model *m2 = make_model(layout, nx, ny, 1000, 500, 0.9, OPEN, hump_2d, p, NULL);
    advance(m1, 300, 1);
    advance(m2, 300, 2);
    size_t differ = 0;
    for (size_t j = 0; j < ny; j++)
        for (size_t i = 0; i < nx; i++) {
            double a = sw_model_eta(m1, i, j), b = sw_model_eta(m2, i, j);
            differ += memcmp(&a, &b, sizeof a) != 0;
        }
    assert_int_equal(differ, 0);
    assert_true(fabs(sw_model_eta(m1, 30, 25)) > 0);   /* something happened */
    sw_model_free(m1);
    sw_model_free(m2);
}
static void test_threads_c(void **state) { (void)state; thread_independent("C"); }
static void test_threads_a(void **state) { (void)state; thread_independent("A"); }

/* The forward-backward energy invariant E* (docs/references.md, [derived]) stays put to round-off with
 * walls, on a bumpy floor with an island; the plain energy only oscillates. */
static void energy_conserved(const char *layout)
{
    const size_t nx = 60, ny = 50;
    double *depth = malloc(nx * ny * sizeof(double));
    assert_non_null(depth);
    for (size_t j = 0; j < ny; j++)
        for (size_t i = 0; i < nx; i++) {
            double x = (double)i - 40, y = (double)j - 25;
            depth[j * nx + i] = 200 + 50 * sin(0.3 * (double)i) - 300 * exp(-(x * x + y * y) / 30.0);
        }
    double p[3] = {20000, 20000, 5000};
    sw_model *m = make_model(layout, nx, ny, 1000, 0, 0.95, WALLS, hump_2d, p, depth);
    free(depth);
    double e0 = sw_model_energy(m), worst = 0;
    for (int n = 0; n < 40; n++) {
        advance(m, 25, 1);
        worst = fmax(worst, fabs(sw_model_energy(m) - e0) / e0);
    }
    print_message("%s energy: E* = %.6e, largest relative change over 1000 steps %.2e\n", layout, e0, worst);
    assert_true(e0 > 0);
    assert_true(worst < 1e-11);
    sw_model_free(m);
}
static void test_energy_c(void **state) { (void)state; energy_conserved("C"); }
static void test_energy_a(void **state) { (void)state; energy_conserved("A"); }

/* p^2 = (w dt)^2 of the plane wave (k, l) on a layout, from its symbols (layout.h). */
static double p2_of(const sw_layout *lay, double k, double l, double d, double gh, double dt)
{
    sw_symbols s;
    lay->symbols(k, l, d, d, &s);
    return -gh * dt * dt * creal(s.div_x * s.grad_x + s.div_y * s.grad_y);
}

static double plane_wave(double x, double y, void *user)
{
    double *p = user;   /* k, l, amplitude */
    return p[2] * cos(p[0] * x + p[1] * y);
}

/* Started at rest, every layout follows eta_n = eta_0 cos(n W dt) exactly [derived above]: an oblique
 * plane wave in a walled basin, checked for n = 1 .. 6 on the cells that no edge has reached yet (one
 * step reaches at most 2 cells on any layout, so a margin of 2n + 2 cells) and on the layout's own
 * elevation points (E keeps none on its u,v cells). The old start (u = 0) would miss by
 * eta_0 p^2 / 2 at n = 1, printed beside the measured error. */
static void test_rest_start_mode(void **state)
{
    (void)state;
    const size_t nx = 48, ny = 40;
    const double d = 1000, h = 100, amp = 0.01;
    double p[3] = {2 * PI / (9.3 * d), 2 * PI / (13.7 * d), amp};
    for (size_t q = 0; q < sw_layout_count(); q++) {
        const sw_layout *lay = sw_layout_at(q);
        sw_model *m = make_model(lay->name, nx, ny, d, h, 0.9, WALLS, plane_wave, p, NULL);
        const double p2 = p2_of(lay, p[0], p[1], d, G * h, sw_model_dt(m)), theta = acos(1 - p2 / 2);
        double *eta0 = malloc(nx * ny * sizeof *eta0);
        assert_non_null(eta0);
        for (size_t k = 0; k < nx * ny; k++)
            eta0[k] = sw_model_eta(m, k % nx, k / nx);
        double worst = 0, first = 0;
        size_t checked = 0;
        for (int n = 1; n <= 6; n++) {
            advance(m, 1, 1 + n % 2);
            const size_t margin = 2 * (size_t)n + 2;
            for (size_t j = margin; j + margin < ny; j++)
                for (size_t i = margin; i + margin < nx; i++) {
                    const double e0 = eta0[j * nx + i];
                    if (e0 == 0)
                        continue;   /* not an elevation point of this layout */
                    double err = fabs(sw_model_eta(m, i, j) - e0 * cos(n * theta)) / amp;
                    worst = fmax(worst, err);
                    if (n == 1)
                        first = fmax(first, err);
                    checked++;
                }
        }
        print_message("%s rest start: p^2 = %.4f, max |eta_n - eta_0 cos(n theta)| / a = %.2e (n = 1: %.2e) over %zu "
                      "values; a start with u = 0 misses by up to %.2e at n = 1\n",
                      lay->name, p2, worst, first, checked, p2 / 2);
        assert_true(checked > 1000);
        assert_true(p2 > 0.05);   /* the old start's error would be far above the tolerance */
        assert_true(worst < 1e-12);
        free(eta0);
        sw_model_free(m);
    }
}

/* Exact eigenvectors that reach the edges: the C quarter wave cos(k x), k = pi / (2 L), against a level
 * edge (the ghost must start at -eta_0 for the half step to see the mode's gradient on the edge face),
 * and A's sin(k x) between two level edges (test_stability.c: the ghosts hold -eta and the mirrored
 * velocity). Every cell follows eta_0 cos(n W dt) for 300 steps, W dt from the symbols. */
static void rest_start_edges(const char *layout, double k, const sw_edge_kind edges[4], int sine)
{
    const size_t nx = 40;
    const double d = 1000, h = 50, amp = 0.01;
    double pk[2] = {k, amp};
    sw_model *m = make_model(layout, nx, 1, d, h, 0.9, edges, sine ? sin_mode : cos_mode, pk, NULL);
    const double p2 = p2_of(sw_model_layout(m), k, 0, d, G * h, sw_model_dt(m)), theta = acos(1 - p2 / 2);
    double eta0[40], worst = 0, first = 0;
    for (size_t i = 0; i < nx; i++)
        eta0[i] = sw_model_eta(m, i, 0);
    for (int n = 1; n <= 300; n++) {
        advance(m, 1, 1);
        for (size_t i = 0; i < nx; i++) {
            double err = fabs(sw_model_eta(m, i, 0) - eta0[i] * cos(n * theta)) / amp;
            worst = fmax(worst, err);
            if (n == 1)
                first = fmax(first, err);
        }
    }
    print_message("%s %s against level edges: max |eta_n - eta_0 cos(n theta)| / a = %.2e over 300 steps "
                  "(n = 1: %.2e; a start with u = 0 misses by %.2e at n = 1)\n",
                  layout, sine ? "sin(k x)" : "cos(k x)", worst, first, p2 / 2);
    assert_true(p2 > 1e-3);
    assert_true(worst < 1e-10);
    sw_model_free(m);
}
static void test_rest_start_level_c(void **state)
{
    (void)state;
    rest_start_edges("C", PI / (2 * 40e3), LEVEL_EAST, 0);
    rest_start_edges("C", 5 * PI / (2 * 40e3), LEVEL_EAST, 0);
}
static void test_rest_start_level_a(void **state)
{
    (void)state;
    const sw_edge_kind level_we[4] = {SW_EDGE_LEVEL, SW_EDGE_LEVEL, SW_EDGE_WALL, SW_EDGE_WALL};
    rest_start_edges("A", 10 * PI / 40e3, level_we, 1);
}

/* A level raised uniformly, at rest, with all edges open, stays at rest on C: each open ghost starts at
 * the elevation of its edge cell (the fixed point of the radiation update, model.c), so no face sees a
 * gradient. A ghost started at 0 would drain it through the edges. */
static void test_rest_start_open_still(void **state)
{
    (void)state;
    double p[2] = {0, 0.5};   /* cos(0 x): a uniform 0.5 m */
    sw_model *m = make_model("C", 30, 20, 1000, 100, 0.9, OPEN, cos_mode, p, NULL);
    advance(m, 200, 2);
    double worst = 0, e[30], u[30], v[30], speed = 0;
    for (size_t j = 0; j < 20; j++) {
        sw_model_centre_row(m, j, e, u, v);
        for (size_t i = 0; i < 30; i++) {
            worst = fmax(worst, fabs(e[i] - 0.5));
            speed = fmax(speed, hypot(u[i], v[i]));
        }
    }
    print_message("C uniform 0.5 m, open edges, 200 steps: max |eta - 0.5| = %.2e m, max speed %.2e m/s\n", worst,
                  speed);
    assert_true(worst < 1e-12);
    assert_true(speed < 1e-12);
    sw_model_free(m);
}

/* The displaced volume of a Gaussian hump a exp(-r^2/b^2) is pi a b^2 (Gaussian integral) on every
 * layout, including E, which stores eta on half the cells. */
static void test_volume_of_hump(void **state)
{
    (void)state;
    const char *names[5] = {"A", "B", "C", "D", "E"};
    double p[3] = {40000, 40000, 6000};   /* centre x, y and e-folding radius, m; amplitude 0.5 m */
    for (int q = 0; q < 5; q++) {
        sw_model *m = make_model(names[q], 80, 80, 1000, 100, 0.9, WALLS, hump_2d, p, NULL);
        double expected = PI * 0.5 * p[2] * p[2];
        double got = sw_model_volume(m);
        print_message("%s hump volume %.6e m3, pi a b^2 = %.6e m3\n", names[q], got, expected);
        assert_true(fabs(got - expected) / expected < 5e-3);
        sw_model_free(m);
    }
}

/* Single precision (4-byte state), on every layout: the same physics as double to the round-off of
 * floats. IEEE 754 single precision has unit round-off 2^-24 = 6.0e-8; a neutral scheme keeps its
 * rounding errors, which grow like a random walk, ~ u sqrt(steps) [common practice for the estimate].
 * A 0.5 m hump in an open basin, 100 steps (most of it has left): |eta_single - eta_double| <= 1e-6 m
 * everywhere, 2e-6 of the initial peak; both precisions step to the same bits on 1 and 2 threads; walls keep the volume to
 * 5e-6 (the flux form telescopes; only float rounding of each cell's sum remains); the state takes
 * 0.5 x the bytes (+ the 1-byte mask and the edge list). The seiche period against Merian's formula
 * (Rabinovich 2009 [seen], 2019.28 s for L = 10 km, h = 10 m) stays within 0.5 %, as in double. */
static void test_single_precision(void **state)
{
    (void)state;
    const char *names[5] = {"A", "B", "C", "D", "E"};
    const size_t nx = 61, ny = 47;
    double p[3] = {30000, 25000, 8000};
    for (int q = 0; q < 5; q++) {
        model_precision = SW_DOUBLE;
        sw_model *md = make_model(names[q], nx, ny, 1000, 500, 0.9, OPEN, hump_2d, p, NULL);
        model_precision = SW_SINGLE;
        sw_model *m1 = make_model(names[q], nx, ny, 1000, 500, 0.9, OPEN, hump_2d, p, NULL);
        sw_model *m2 = make_model(names[q], nx, ny, 1000, 500, 0.9, OPEN, hump_2d, p, NULL);
        model_precision = SW_DOUBLE;
        assert_int_equal(sw_model_precision(md), SW_DOUBLE);
        assert_int_equal(sw_model_precision(m1), SW_SINGLE);
        assert_true(sw_model_bytes(m1) < 0.55 * (double)sw_model_bytes(md));
        advance(md, 100, 1);
        advance(m1, 100, 1);
        advance(m2, 100, 2);
        double worst = 0, top = 0;
        size_t differ = 0;
        for (size_t j = 0; j < ny; j++)
            for (size_t i = 0; i < nx; i++) {
                double d = sw_model_eta(md, i, j), a = sw_model_eta(m1, i, j), b = sw_model_eta(m2, i, j);
                worst = fmax(worst, fabs(a - d));
                top = fmax(top, fabs(d));
                differ += memcmp(&a, &b, sizeof a) != 0;
            }
        print_message("%s single vs double after 100 steps: largest difference %.2e m (peak now %.4f m)\n", names[q],
                      worst, top);
        assert_true(top > 1e-4);   /* the wave is still in the basin */
        assert_true(worst < 1e-6);
        assert_int_equal(differ, 0);
        sw_model_free(md);
        sw_model_free(m1);
        sw_model_free(m2);
    }
    model_precision = SW_SINGLE;
    double depth[80 * 60];
    for (size_t j = 0; j < 60; j++)
        for (size_t i = 0; i < 80; i++) {
            double x = (double)i - 50, y = (double)j - 30;
            depth[j * 80 + i] = 200 + 50 * sin(0.3 * (double)i) - 300 * exp(-(x * x + y * y) / 40.0);
        }
    double ph[3] = {20000, 20000, 6000};
    sw_model *m = make_model("C", 80, 60, 1000, 0, 0.95, WALLS, hump_2d, ph, depth);
    double v0 = sw_model_volume(m);
    advance(m, 2000, 2);
    print_message("C single volume drift over 2000 steps: %.2e\n", fabs(sw_model_volume(m) - v0) / v0);
    assert_true(fabs(sw_model_volume(m) - v0) / v0 < 5e-6);
    sw_model_free(m);
    const double L = 10000, h = 10;
    double pm[2] = {PI / L, 0.01};
    m = make_model("C", 100, 1, L / 100, h, 0.9, WALLS, cos_mode, pm, NULL);
    double merian = 2 * L / sqrt(G * h);
    double measured = measure_period(m, merian, 6);
    print_message("C single seiche: measured %.4f s, Merian %.4f s\n", measured, merian);
    assert_true(fabs(measured - merian) / merian < 5e-3);
    sw_model_free(m);
    model_precision = SW_DOUBLE;
}

/* The step flushes subnormal numbers to zero (model.c: they take a slow path in x86 arithmetic) and
 * leaves the caller's floating-point mode as it found it. An elevation of 1e-40 m (a subnormal float:
 * the smallest normal one is 2^-126 = 1.18e-38, IEEE 754) reads as 0 in the step and comes out 0. */
static void test_subnormals_flushed(void **state)
{
    (void)state;
#if defined(__SSE2__)
    model_precision = SW_SINGLE;
    sw_model *m = make_model("C", 8, 8, 1000, 100, 0.9, WALLS, NULL, NULL, NULL);
    model_precision = SW_DOUBLE;
    for (size_t j = 0; j < 8; j++)
        for (size_t i = 0; i < 8; i++)
            sw_model_set_eta(m, i, j, 1e-40 * (double)(1 + i));
    assert_true(sw_model_eta(m, 3, 3) > 0 && sw_model_eta(m, 3, 3) < 1.18e-38);   /* stored subnormal */
    const unsigned int before = _mm_getcsr();
    sw_model_step(m);
    assert_int_equal(_mm_getcsr(), before);
    for (size_t j = 0; j < 8; j++)
        for (size_t i = 0; i < 8; i++)
            assert_true(sw_model_eta(m, i, j) == 0.0);
    sw_model_free(m);
#else
    skip();
#endif
}

/* Layout registry: all five Arakawa layouts are built, in order; F is unknown. */
static void test_registry(void **state)
{
    (void)state;
    for (const char *p = "abcde"; *p; p++) {
        char name[2] = {*p, 0};
        assert_non_null(sw_layout_find(name));
    }
    assert_null(sw_layout_find("F"));
    assert_null(sw_layout_find("CC"));
    assert_int_equal(sw_layout_count(), 5);
    assert_string_equal(sw_layout_names(), "A, B, C, D, E");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_seiche_c_mode1),  cmocka_unit_test(test_seiche_a_merian),
        cmocka_unit_test(test_seiche_c_quarter_wave),
        cmocka_unit_test(test_front_speed_c),   cmocka_unit_test(test_front_speed_a),
        cmocka_unit_test(test_mass_c),          cmocka_unit_test(test_mass_a),
        cmocka_unit_test(test_dt_refused),      cmocka_unit_test(test_threads_c),
        cmocka_unit_test(test_threads_a),       cmocka_unit_test(test_registry),
        cmocka_unit_test(test_volume_of_hump),
        cmocka_unit_test(test_energy_c),        cmocka_unit_test(test_energy_a),
        cmocka_unit_test(test_rest_start_mode), cmocka_unit_test(test_rest_start_level_c),
        cmocka_unit_test(test_rest_start_level_a), cmocka_unit_test(test_rest_start_open_still),
        cmocka_unit_test(test_single_precision), cmocka_unit_test(test_subnormals_flushed),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
