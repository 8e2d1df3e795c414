/* test_surge.c - wind stress, air pressure and a moving sea level at the edges, on every layout, against
 * published results and derived answers. The model is driven directly through its surface slabs
 * (model.h, sw_model_surface_build) by analytic row functions, so these tests check the model's forcing
 * terms alone; the storm, the weather file and the run loop are tested in test_storm.c, test_gridded.c
 * and tests/py/test_surge.py.
 *
 * Sources (restated in docs/storm-surge.md and docs/references.md):
 *  - Steady wind set-up in a closed basin of constant depth h under a uniform stress tau: the surface
 *    slope d(eta)/dx = tau / (rho_w g h); Pugh (1987) Tides, Surges and Mean Sea-Level, ch. 6 [memory]; in
 *    the steady state there is no flow for any friction [derived].
 *  - Inverse barometer: a still sea under a steady air pressure p settles to eta = -(p - mean p) / (rho_w g),
 *    about 0.99 cm per hPa for rho_w = 1025 kg m-3; Pugh (1987) [memory]; the mean is taken over the basin
 *    because a closed basin keeps its volume [derived].
 *  - Proudman resonance: a pressure disturbance dp moving at speed U over depth h carries a forced wave
 *    of amplitude (-dp / (rho_w g)) / (1 - U^2 / (g h)) in one dimension; Proudman (1929) Geophys. Suppl.
 *    Mon. Not. R. Astron. Soc. 2 [memory: the formula is recalled, not checked against the paper].
 *  - A channel closed at x = L and driven at its mouth x = 0 by a sea level A cos(w t) holds the standing
 *    wave eta = A cos(k (L - x)) / cos(k L) cos(w t), k = w / sqrt(g h) [derived from the linear equations
 *    with u = 0 at the closed end].
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

#include "base/omp_compat.h"
#include "model/layout.h"
#include "model/model.h"
#include "testutil.h"

#define G 9.81
#define RHO_W 1025.0
#define PI 3.14159265358979323846

static const char *const LAYOUTS[5] = {"A", "B", "C", "D", "E"};

static double start_level;   /* the level edges hold at t = 0 in the next make(), m */

static sw_model *make(const char *layout, size_t nx, size_t ny, double d, double h, const sw_edge_kind edges[4],
                      sw_terms_config terms, double courant, const double *eta0)
{
    const sw_layout *lay = sw_layout_find(layout);
    assert_non_null(lay);
    sw_grid g = {.nx = nx, .ny = ny, .dx_m = d, .dy_m = d};
    double *depth = malloc(nx * ny * sizeof *depth);
    assert_non_null(depth);
    for (size_t k = 0; k < nx * ny; k++)
        depth[k] = h;
    sw_model_config cfg = {.layout = lay, .grid = g, .depth_m = depth, .eta0_m = eta0, .min_depth_m = 1,
                           .gravity_ms2 = G, .terms = terms, .edge_level_m = start_level};
    memcpy(cfg.edges, edges, sizeof cfg.edges);
    const double f = sw_terms_f_max(&terms, 0, (double)ny * d, 0);
    cfg.dt_s = courant * sw_terms_dt_limit(sw_model_dt_limit(lay, &g, depth, 1, G, sw_model_dims(&g, cfg.edges)), f);
    sw_model *m = NULL;
    sw_error err = {0};
    sw_status rc = sw_model_create(&cfg, &m, &err);
    if (rc != SW_OK)
        print_message("%s: %s\n", layout, err.msg);
    assert_int_equal(rc, SW_OK);
    free(depth);
    return m;
}

/* ---- analytic surface fields ------------------------------------------------------------------------ */

typedef struct {
    double sx, sy;             /* uniform kinematic stress, m2 s-2 */
    double dp_pa;              /* pressure anomaly at the centre of a Gaussian, Pa (0: none) */
    double xc_m, yc_m, r_m;    /* its centre and e-folding radius, m */
    int one_d;                 /* 1: the Gaussian depends on x only */
} field;

static double field_head(const field *f, double x, double y)
{
    if (f->dp_pa == 0)
        return 0;
    const double dx = x - f->xc_m, dy = f->one_d ? 0 : y - f->yc_m;
    return f->dp_pa * exp(-(dx * dx + dy * dy) / (f->r_m * f->r_m)) / (RHO_W * G);
}

static void field_row(void *ctx, sw_surface_kind kind, ptrdiff_t j, size_t i0, double y, double x0, double dx, size_t n,
                      float *out)
{
    (void)j, (void)i0;
    const field *f = ctx;
    for (size_t i = 0; i < n; i++)
        out[i] = kind == SW_SURFACE_HEAD ? (float)field_head(f, x0 + (double)i * dx, y)
               : kind == SW_SURFACE_STRESS_X ? (float)f->sx : (float)f->sy;
}

/* Holds the field fixed: both slabs the same, weight 0. */
static void force_steady(sw_model *m, field *f)
{
    sw_model_surface_build(m, 0, field_row, f);
    sw_model_surface_build(m, 1, field_row, f);
    sw_model_surface_weight(m, 0);
}

static void advance(sw_model *m, long n)
{
    tu_advance(m, n, 2);
}

/* The least-squares slope of eta along x over row j's cells i0 .. i1, and the largest misfit (m). */
static double row_slope(const sw_model *m, size_t j, size_t i0, size_t i1, double d, double *misfit)
{
    double sx = 0, sy = 0, sxx = 0, sxy = 0, n = 0;
    for (size_t i = i0; i <= i1; i++) {
        const double x = (double)i * d, e = sw_model_eta_centre(m, i, j);
        sx += x, sy += e, sxx += x * x, sxy += x * e, n++;
    }
    const double b = (n * sxy - sx * sy) / (n * sxx - sx * sx), a = (sy - b * sx) / n;
    *misfit = 0;
    for (size_t i = i0; i <= i1; i++)
        *misfit = fmax(*misfit, fabs(sw_model_eta_centre(m, i, j) - (a + b * (double)i * d)));
    return b;
}

/* ---- steady wind set-up (Pugh 1987, ch. 6 [memory]) -------------------------------------------------- */

static void test_wind_setup(void **state)
{
    (void)state;
    static const sw_edge_kind walls[4] = {SW_EDGE_WALL, SW_EDGE_WALL, SW_EDGE_WALL, SW_EDGE_WALL};
    const double h = 20, d = 2500, sx = 1e-4;   /* tau = rho_w sx = 0.1 Pa, about a 7 m/s wind */
    const double expect = sx / (G * h);         /* the published slope tau / (rho_w g h) */
    for (int q = 0; q < 5; q++) {
        /* linear friction damps the seiche: amplitude e-folds in 2 h / r = 4000 s [derived] */
        sw_terms_config t = {.surface = 1, .friction = SW_FRICTION_LINEAR, .friction_rate_ms = 0.01};
        sw_model *m = make(LAYOUTS[q], 40, 8, d, h, walls, t, 0.9, NULL);
        field f = {.sx = sx};
        force_steady(m, &f);
        const long steps = (long)(30 * 4000.0 / sw_model_dt(m));   /* 30 e-folding times */
        advance(m, steps);
        double misfit;
        /* the slope between cells 30 apart (same parity: A and E hold two lattices, whose steady states
         * are the same line shifted by half a step, a staircase of pairs), and the misfit of a line fitted
         * over every cell, away from the end walls */
        const double slope = (sw_model_eta_centre(m, 35, 4) - sw_model_eta_centre(m, 5, 4)) / (30 * d);
        row_slope(m, 4, 4, 35, d, &misfit);
        print_message("%s wind set-up: slope %.6e, tau/(rho g h) = %.6e, ratio %.6f, misfit %.1e m (rise %.4f m)\n",
                      LAYOUTS[q], slope, expect, slope / expect, misfit, expect * 40 * d);
        assert_true(fabs(slope / expect - 1) < 1e-3);
        const int two_lattices = q == 0 || q == 3 || q == 4;   /* A, D, E difference across two cells */
        assert_true(misfit < (two_lattices ? 0.6 * expect * d : 1e-3 * expect * 40 * d));
        sw_model_free(m);
    }
}

/* ---- inverse barometer (Pugh 1987 [memory]) ------------------------------------------------------------- */

static void test_inverse_barometer(void **state)
{
    (void)state;
    static const sw_edge_kind walls[4] = {SW_EDGE_WALL, SW_EDGE_WALL, SW_EDGE_WALL, SW_EDGE_WALL};
    const double h = 50, d = 5000, dp = -2000;   /* a 20 hPa low */
    for (int q = 0; q < 5; q++) {
        sw_terms_config t = {.surface = 1, .friction = SW_FRICTION_LINEAR, .friction_rate_ms = 0.02};
        const size_t n = 30;
        sw_model *m = make(LAYOUTS[q], n, n, d, h, walls, t, 0.9, NULL);
        field f = {.dp_pa = dp, .xc_m = 0.5 * (double)n * d, .yc_m = 0.5 * (double)n * d, .r_m = 20e3};
        force_steady(m, &f);
        advance(m, (long)(30 * 2 * h / 0.02 / sw_model_dt(m)));
        /* the expected eta: -(head - its basin mean), the mean over the cells that store eta */
        const sw_layout *lay = sw_model_layout(m);
        double mean = 0, cells = 0;
        for (size_t j = 0; j < n; j++)
            for (size_t i = 0; i < n; i++)
                if (!lay->checkerboard || (i + j) % 2 == 0) {
                    mean += field_head(&f, ((double)i + 0.5) * d, ((double)j + 0.5) * d);
                    cells++;
                }
        mean /= cells;
        double worst = 0;
        const double centre = -(field_head(&f, f.xc_m, f.yc_m) - mean);
        for (size_t j = 2; j < n - 2; j++)
            for (size_t i = 2; i < n - 2; i++) {
                if (lay->checkerboard && (i + j) % 2)
                    continue;   /* E: the cells that store eta */
                const double want = -(field_head(&f, ((double)i + 0.5) * d, ((double)j + 0.5) * d) - mean);
                worst = fmax(worst, fabs(sw_model_eta_centre(m, i, j) - want));
            }
        /* 1 cm per hPa, about (Pugh 1987 [memory]): 1 / (rho_w g) = 0.995 cm per hPa here */
        const double cm_per_hpa = 100 * 100 / (RHO_W * G);
        print_message("%s inverse barometer: centre %.5f m for %.0f hPa (%.4f cm/hPa), worst misfit %.1e m\n",
                      LAYOUTS[q], sw_model_eta_centre(m, n / 2, n / 2), dp / 100, cm_per_hpa, worst);
        assert_true(fabs(cm_per_hpa - 0.995) < 0.01);
        assert_true(worst < 2e-3 * fabs(centre));
        sw_model_free(m);
    }
}

/* ---- Proudman resonance (Proudman 1929 [memory]) -------------------------------------------------------- */

typedef struct {
    field f;
    double x_start, speed;
} mover;

/* The forced amplitude under the centre of a Gaussian low moving at U = fr * sqrt(g h) along a channel. */
static double proudman_amplitude(const char *layout, double fr)
{
    static const sw_edge_kind ch[4] = {SW_EDGE_OPEN, SW_EDGE_OPEN, SW_EDGE_WALL, SW_EDGE_WALL};
    const double h = 50, d = 2000, c = sqrt(G * h);
    const size_t nx = 700;
    sw_terms_config t = {.surface = 1};
    sw_model *m = make(layout, nx, 4, d, h, ch, t, 0.5, NULL);
    mover mv = {.f = {.dp_pa = -1000, .r_m = 20e3, .one_d = 1}, .x_start = 100e3, .speed = fr * c};
    /* travel until the free waves started with the motion are 8 radii away from the forced one */
    const double t_end = 8 * mv.f.r_m / fabs(c - mv.speed);
    const long steps = (long)(t_end / sw_model_dt(m));
    assert_true(mv.x_start + mv.speed * t_end < 0.9 * (double)nx * d);
    omp_set_num_threads(2);
    SW_OMP(parallel)
    for (long k = 0; k < steps; k++) {
        SW_OMP(single)
        mv.f.xc_m = mv.x_start + mv.speed * (double)(k + 1) * sw_model_dt(m);   /* the forcing at the step's end */
        sw_model_surface_build(m, 1, field_row, &mv.f);
        SW_OMP(single)
        sw_model_surface_weight(m, 1);
        sw_model_step(m);
        SW_OMP(single)
        sw_model_tick(m);
    }
    const double xc = mv.x_start + mv.speed * (double)steps * sw_model_dt(m);
    const size_t ic = (size_t)(xc / d);
    /* the elevation at the disturbance's centre (between the two cells around it) */
    const double w = xc / d - 0.5 - (double)(ic - 1);
    double e = 0;
    const double e0 = sw_model_eta_centre(m, ic - 1, 1), e1 = sw_model_eta_centre(m, ic, 1);
    e = w < 1 ? e0 + w * (e1 - e0) : e1;
    if (sw_layout_find(layout)->checkerboard)   /* E: centre values mix two lattices: average a row pair */
        e = 0.5 * (e + (1 - w) * sw_model_eta_centre(m, ic - 1, 2) + w * sw_model_eta_centre(m, ic, 2));
    sw_model_free(m);
    return e / (1000 / (RHO_W * G));   /* in units of the static inverse-barometer rise */
}

static void test_proudman(void **state)
{
    (void)state;
    const double fr[4] = {0.5, 0.7, 1.4, 1.8};
    for (int q = 0; q < 5; q++)
        for (int s = 0; s < 4; s++) {
            const double got = proudman_amplitude(LAYOUTS[q], fr[s]), want = 1 / (1 - fr[s] * fr[s]);
            print_message("%s Proudman U/c = %.1f: amplitude %.4f x static, 1/(1 - U^2/gh) = %.4f (%.2f%%)\n",
                          LAYOUTS[q], fr[s], got, want, 100 * (got / want - 1));
            assert_true(fabs(got / want - 1) < 0.03);
        }
}

/* ---- a level edge following a series: the closed channel (derived) ----------------------------------- */

static void test_level_series(void **state)
{
    (void)state;
    static const sw_edge_kind ch[4] = {SW_EDGE_LEVEL, SW_EDGE_WALL, SW_EDGE_WALL, SW_EDGE_WALL};
    const double h = 10, d = 1000, amp = 0.5, c = sqrt(G * h);
    const size_t nx = 100;
    int bad = 0;
    for (int q = 0; q < 5; q++) {
        const sw_layout *lay = sw_layout_find(LAYOUTS[q]);
        /* the node line lies level_node_offset cells beyond the edge; the closed end is the east face */
        const double x_mouth = -lay->level_node_offset * d, L = (double)nx * d - x_mouth;
        const double k = 0.8 / L, w = k * c;   /* kL = 0.8: the end rises to 1.44 times the mouth */
        double *eta0 = malloc(nx * 4 * sizeof *eta0);
        assert_non_null(eta0);
        for (size_t j = 0; j < 4; j++)
            for (size_t i = 0; i < nx; i++) {
                const double x = ((double)i + 0.5) * d - x_mouth;
                eta0[j * nx + i] = amp * cos(k * (L - x)) / cos(k * L);
            }
        sw_terms_config t = {0};
        start_level = amp;   /* the mouth at t = 0 */
        sw_model *m = make(LAYOUTS[q], nx, 4, d, h, ch, t, 0.5, eta0);
        start_level = 0;
        free(eta0);
        const double dt = sw_model_dt(m);
        const long steps = (long)(2 * 2 * PI / w / dt);   /* two periods */
        double worst = 0, end_peak = 0;
        for (long n = 0; n < steps; n++) {
            sw_model_set_edge_level(m, amp * cos(w * (double)(n + 1) * dt));
            advance(m, 1);
            const double tt = (double)(n + 1) * dt;
            const double want_end = amp * cos(k * (L - ((double)nx - 0.5) * d + x_mouth)) / cos(k * L) * cos(w * tt);
            const double got = sw_model_eta_centre(m, nx - 1, 1);
            worst = fmax(worst, fabs(got - want_end));
            end_peak = fmax(end_peak, fabs(got));
        }
        print_message("%s level series: closed end peaks %.4f m (expected %.4f), worst misfit %.2e m\n", LAYOUTS[q],
                      end_peak, amp * cos(k * 0.5 * d) / cos(k * L), worst);
        bad += !(worst < 0.01 * amp / cos(k * L));
        sw_model_free(m);
    }
    assert_int_equal(bad, 0);
}

/* ---- open edges under a pressure gradient (inverse barometer, Pugh 1987 [memory]) ----------------------- */

/* A channel open at both ends under a steady air pressure that falls along it (a head slope s): the
 * water settles to the inverse barometer, eta = -head + const, and then stays still. Were the open edges
 * to radiate eta itself instead of its departure from the inverse barometer, the pressure gradient
 * across them would keep driving water through them and the level would drift without end [derived]. */
typedef struct {
    double slope;   /* head per m along x */
} ramp;

static void ramp_row(void *ctx, sw_surface_kind kind, ptrdiff_t j, size_t i0, double y, double x0, double dx, size_t n,
                     float *out)
{
    (void)j, (void)i0, (void)y;
    const ramp *r = ctx;
    for (size_t i = 0; i < n; i++)
        out[i] = kind == SW_SURFACE_HEAD ? (float)(r->slope * (x0 + (double)i * dx - 100e3)) : 0.0f;
}

static void test_open_edges_still(void **state)
{
    (void)state;
    static const sw_edge_kind ch[4] = {SW_EDGE_OPEN, SW_EDGE_OPEN, SW_EDGE_WALL, SW_EDGE_WALL};
    const double h = 50, d = 2000, slope = 0.1 / 200e3;   /* 10 hPa over the channel's 200 km */
    int bad = 0;
    for (int q = 0; q < 5; q++) {
        sw_terms_config t = {.surface = 1, .friction = SW_FRICTION_LINEAR, .friction_rate_ms = 0.01};
        sw_model *m = make(LAYOUTS[q], 100, 6, d, h, ch, t, 0.9, NULL);
        ramp r = {.slope = slope};
        sw_model_surface_build(m, 0, ramp_row, &r);
        sw_model_surface_build(m, 1, ramp_row, &r);
        sw_model_surface_weight(m, 0);
        const long per = (long)(2 * h / 0.01 / sw_model_dt(m));   /* one e-folding time of the friction */
        advance(m, 20 * per);
        double e1[100], drift = 0, misfit = 0;
        for (size_t i = 0; i < 100; i++)
            e1[i] = sw_model_eta_centre(m, i, 3);
        advance(m, 20 * per);
        const double mid = sw_model_eta_centre(m, 50, 3) + slope * (50.5 * d - 100e3);   /* the constant */
        for (size_t i = 5; i < 95; i++) {
            const double e2 = sw_model_eta_centre(m, i, 3);
            drift = fmax(drift, fabs(e2 - e1[i]));
            misfit = fmax(misfit, fabs(e2 - (mid - slope * (((double)i + 0.5) * d - 100e3))));
        }
        print_message("%s open channel under a pressure slope (rise 0.1 m): drift %.2e m over 20 e-folding times, "
                      "misfit from the inverse barometer %.2e m\n", LAYOUTS[q], drift, misfit);
        bad += !(drift < 1e-4 && misfit < 2e-3);
        sw_model_free(m);
    }
    assert_int_equal(bad, 0);
}

/* ---- a uniform, slowly varying pressure anomaly (Pugh 1987 [memory]) -------------------------------------- */

/* A basin whose sea edges are `level` under an air pressure that falls uniformly by 10 hPa over a day: a
 * level edge holds the sea beyond it at its inverse barometer (L less the head there), so the water
 * inside follows -dp / (rho_w g), about 1 cm per hPa, everywhere [derived: with no gradient of eta + head
 * left, the steady state has no flow]. */
typedef struct {
    double head;    /* the uniform head now, m */
} uniform;

static void uniform_row(void *ctx, sw_surface_kind kind, ptrdiff_t j, size_t i0, double y, double x0, double dx,
                        size_t n, float *out)
{
    (void)j, (void)i0, (void)y, (void)x0, (void)dx;
    const uniform *u = ctx;
    for (size_t i = 0; i < n; i++)
        out[i] = kind == SW_SURFACE_HEAD ? (float)u->head : 0.0f;
}

static void test_uniform_barometer(void **state)
{
    (void)state;
    static const sw_edge_kind sea[4] = {SW_EDGE_LEVEL, SW_EDGE_WALL, SW_EDGE_LEVEL, SW_EDGE_LEVEL};
    const double h = 30, d = 3000, dp = -1000, ramp_s = 86400;   /* a 10 hPa fall over a day */
    int bad = 0;
    for (int q = 0; q < 5; q++) {
        sw_terms_config t = {.surface = 1, .friction = SW_FRICTION_LINEAR, .friction_rate_ms = 0.005};
        sw_model *m = make(LAYOUTS[q], 40, 30, d, h, sea, t, 0.9, NULL);
        const double dt = sw_model_dt(m);
        const long steps = (long)(1.5 * ramp_s / dt);
        uniform u = {0};
        for (long n = 0; n < steps; n++) {   /* the forcing at the step's end, one slab a step */
            const double tt = (double)(n + 1) * dt;
            u.head = dp * fmin(tt / ramp_s, 1) / (RHO_W * G);
            sw_model_surface_build(m, 1, uniform_row, &u);
            sw_model_surface_weight(m, 1);
            advance(m, 1);
        }
        const double want = -dp / (RHO_W * G);   /* +0.0995 m for a 10 hPa fall */
        double worst = 0;
        for (size_t j = 2; j < 28; j++)
            for (size_t i = 2; i < 38; i++) {
                if (sw_layout_find(LAYOUTS[q])->checkerboard && (i + j) % 2)
                    continue;
                worst = fmax(worst, fabs(sw_model_eta_centre(m, i, j) - want));
            }
        print_message("%s uniform 10 hPa fall behind level edges: the sea rose %.5f m in the middle, "
                      "-dp / (rho_w g) = %.5f m; worst misfit %.1e m\n", LAYOUTS[q], sw_model_eta_centre(m, 20, 14),
                      want, worst);
        bad += !(worst < 0.01 * want);
        sw_model_free(m);
    }
    assert_int_equal(bad, 0);
}

/* ---- bits: forcing does not depend on the thread count ------------------------------------------------ */

static void test_threads(void **state)
{
    (void)state;
    static const sw_edge_kind walls[4] = {SW_EDGE_OPEN, SW_EDGE_WALL, SW_EDGE_WALL, SW_EDGE_OPEN};
    for (int q = 0; q < 5; q++) {
        sw_terms_config t = {.surface = 1, .rotation = SW_ROTATION_F_PLANE, .f0_s = 1e-4,
                             .friction = SW_FRICTION_QUADRATIC, .drag = 2.5e-3};
        sw_model *m[2];
        for (int r = 0; r < 2; r++) {
            m[r] = make(LAYOUTS[q], 37, 29, 3000, 30, walls, t, 0.8, NULL);
            field f = {.sx = 2e-4, .sy = -1e-4, .dp_pa = -1500, .xc_m = 50e3, .yc_m = 40e3, .r_m = 15e3};
            omp_set_num_threads(r ? 3 : 1);
            SW_OMP(parallel)
            {
                sw_model_surface_build(m[r], 0, field_row, &f);
                sw_model_surface_build(m[r], 1, field_row, &f);
            }
            sw_model_surface_weight(m[r], 0.3);
            tu_advance(m[r], 60, r ? 3 : 1);
        }
        int same = 1;
        for (size_t j = 0; j < 29; j++)
            for (size_t i = 0; i < 37; i++)
                same &= sw_model_eta(m[0], i, j) == sw_model_eta(m[1], i, j);
        print_message("%s forced step on 1 and 3 threads: %s\n", LAYOUTS[q], same ? "same bits" : "DIFFERENT");
        assert_true(same);
        sw_model_free(m[0]);
        sw_model_free(m[1]);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_wind_setup),
        cmocka_unit_test(test_inverse_barometer),
        cmocka_unit_test(test_proudman),
        cmocka_unit_test(test_level_series),
        cmocka_unit_test(test_open_edges_still),
        cmocka_unit_test(test_uniform_barometer),
        cmocka_unit_test(test_threads),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
