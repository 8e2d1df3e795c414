/* test_storm.c - the moving parametric storm (forcing/storm.h) and its track file (inputs/table_text.h).
 *
 * Sources (restated in docs/storm.md and docs/references.md):
 *  - Holland (1980) Mon. Wea. Rev. 108, 1212-1218: p(r) = pc + dp exp(-(rmax/r)^B) and the gradient wind
 *    Vg(r) = sqrt(B dp (rmax/r)^B exp(-(rmax/r)^B) / rho_a + (r f / 2)^2) - r |f| / 2 [seen in a handbook
 *    copy]. Written again here (holland_p, holland_vg) rather than calling the library to check itself.
 *  - Its cyclostrophic maximum sqrt(B dp / (rho_a e)) at r = rmax, and 0 <= Vmax_c - max Vg <= rmax |f| / 2
 *    for f != 0 [derived: d/dr of x e^-x with x = (rmax/r)^B vanishes at x = 1; sqrt(a + h^2) - h lies in
 *    [sqrt(a) - h, sqrt(a)]].
 *  - The surface wind: reduction, inflow angle and translation share with the weight 2 r rmax / (r^2 + rmax^2)
 *    are common practice, the weighting our choice (docs/storm.md).
 * The track files are fictional.
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

#include "base/omp_compat.h"
#include "forcing/storm.h"
#include "testutil.h"

#define E_ 2.71828182845904523536
#define PI_ 3.14159265358979323846

/* |got - want| <= tol, reporting both values (this cmocka has no assert_double_equal). */
#define assert_near(got, want, tol) near_check((got), (want), (tol), __FILE__, __LINE__)
static void near_check(double got, double want, double tol, const char *file, int line)
{
    if (!(fabs(got - want) <= tol)) {
        print_error("%.17g != %.17g (tolerance %g)\n", got, want, tol);
        _fail(file, line);
    }
}

/* Holland (1980): p - pc at r. */
static double holland_p(double r, double dp, double rmax, double B)
{
    return dp * exp(-pow(rmax / r, B));
}

/* Holland (1980): gradient wind at r, written as in the paper (difference form). */
static double holland_vg(double r, double dp, double rmax, double B, double rho, double f)
{
    double x = pow(rmax / r, B);
    return sqrt(B * dp * x * exp(-x) / rho + (r * f / 2) * (r * f / 2)) - r * fabs(f) / 2;
}

/* Writes `text` to a scratch file called name; path receives its path. */
static void track_file(char *path, size_t n, const char *name, const char *text)
{
    tu_tmp_path(path, n, name);
    assert_int_equal(tu_write_file(path, text), 0);
}

static sw_storm *load_ok(const char *name, const char *text, const sw_storm_options *o)
{
    char path[512];
    track_file(path, sizeof path, name, text);
    sw_storm *s = NULL;
    sw_error err = {0};
    sw_status st = sw_storm_load(path, o, &s, &err);
    if (st != SW_OK)
        print_error("%s\n", err.msg);
    assert_int_equal(st, SW_OK);
    assert_non_null(s);
    return s;
}

/* A stationary storm at (0, 0): dp 40 hPa, rmax 40 km. */
static const char STILL[] = "time[h] x[km] y[km] pressure_drop[hPa] rmax[km] B\n"
                            "0 0 0 40 40 1.3\n"
                            "24 0 0 40 40 1.3\n";

/* Pressure and gradient wind at 0.5, 1, 2, 5 rmax against Holland (1980) written out above. */
static void test_profile_closed_form(void **state)
{
    (void)state;
    const double dp = 4000.0, rmax = 40e3, rho = 1.15;
    const double Bs[] = {1.0, 1.3, 2.5};
    const double fs[] = {0.0, 5e-5, -5e-5};
    const double mult[] = {0.5, 1.0, 2.0, 5.0};
    for (size_t b = 0; b < 3; b++)
        for (size_t k = 0; k < 3; k++)
            for (size_t m = 0; m < 4; m++) {
                double r = mult[m] * rmax, pr, vg;
                sw_holland_profile(r, dp, rmax, Bs[b], rho, fs[k], &pr, &vg);
                double want_p = holland_p(r, dp, rmax, Bs[b]), want_v = holland_vg(r, dp, rmax, Bs[b], rho, fs[k]);
                assert_near(pr, want_p, 1e-12 * dp);     /* Holland (1980) pressure */
                assert_near(vg, want_v, 1e-10 * want_v); /* Holland (1980) gradient wind */
            }
    /* one value by hand: r = rmax, f = 0: p - pc = dp / e, Vg = sqrt(B dp / (rho e)) [derived] */
    double pr, vg;
    sw_holland_profile(rmax, dp, rmax, 1.3, rho, 0.0, &pr, &vg);
    assert_near(pr, dp / E_, 1e-12 * dp);
    assert_near(vg, sqrt(1.3 * dp / (rho * E_)), 1e-12 * vg);
    /* r = 0: p = pc and no wind (no NaN) [storm.h contract]; and a tiny r, where (rmax/r)^B overflows */
    sw_holland_profile(0.0, dp, rmax, 1.3, rho, 5e-5, &pr, &vg);
    assert_true(pr == 0.0 && vg == 0.0);
    sw_holland_profile(1e-300, dp, rmax, 1.3, rho, 5e-5, &pr, &vg);
    assert_true(pr == 0.0 && vg == 0.0);
    /* far away the wind falls towards 0 and the pressure towards ambient [derived] */
    sw_holland_profile(1e8, dp, rmax, 1.3, rho, 5e-5, &pr, &vg);
    assert_near(pr, dp, 1e-3 * dp);
    assert_true(vg >= 0.0 && vg < 1e-3);
}

/* Golden-section search for the maximum of the library's gradient wind on [a, b]. */
static double vg_of(double r, double dp, double rmax, double B, double rho, double f)
{
    double v;
    sw_holland_profile(r, dp, rmax, B, rho, f, NULL, &v);
    return v;
}

static double max_vg(double dp, double rmax, double B, double rho, double f, double *r_at)
{
    /* a coarse scan brackets the maximum, then golden sections narrow it */
    double best = 0.0, rb = rmax;
    for (int k = 1; k <= 4000; k++) {
        double r = rmax * k / 1000.0, v = vg_of(r, dp, rmax, B, rho, f);
        if (v > best) {
            best = v;
            rb = r;
        }
    }
    double a = rb - rmax / 1000.0, b = rb + rmax / 1000.0, g = (sqrt(5.0) - 1) / 2;
    for (int it = 0; it < 200 && b - a > 1e-9 * rmax; it++) {
        double c = b - g * (b - a), d = a + g * (b - a);
        if (vg_of(c, dp, rmax, B, rho, f) > vg_of(d, dp, rmax, B, rho, f))
            b = d;
        else
            a = c;
    }
    *r_at = (a + b) / 2;
    return vg_of(*r_at, dp, rmax, B, rho, f);
}

/* The gradient wind's maximum against Holland's cyclostrophic Vmax = sqrt(B dp / (rho e)). */
static void test_vmax(void **state)
{
    (void)state;
    const double dp = 5000.0, rmax = 30e3, rho = 1.15;
    const double Bs[] = {1.0, 1.6, 2.5};
    for (size_t b = 0; b < 3; b++) {
        double B = Bs[b], r_at;
        double vc = sqrt(B * dp / (rho * E_));   /* Holland (1980) cyclostrophic maximum */
        assert_near(sw_holland_vmax(dp, B, rho), vc, 1e-12 * vc);
        double v0 = max_vg(dp, rmax, B, rho, 0.0, &r_at);
        assert_near(v0, vc, 1e-6 * vc);           /* f = 0: the maximum is Vmax [Holland 1980] */
        assert_near(r_at, rmax, 1e-3 * rmax);     /* ... reached at r = rmax [derived] */
        const double f = 5e-5;
        double v1 = max_vg(dp, rmax, B, rho, f, &r_at);
        /* f != 0: Vmax_c - rmax |f| / 2 <= max Vg <= Vmax_c [derived], plus 1e-9 relative for the search */
        assert_true(v1 <= vc * (1 + 1e-9));
        assert_true(v1 >= vc - rmax * f / 2 - 1e-9 * vc);
        assert_true(v1 < vc);   /* rotation lowers it */
        double v2 = max_vg(dp, rmax, B, rho, -f, &r_at);
        assert_near(v2, v1, 1e-12 * v1);   /* only |f| enters the speed [Holland 1980] */
    }
}

/* The 10 m wind turns inward by the inflow angle and rotates counter-clockwise for f >= 0, clockwise for
 * f < 0; speed = reduction * Vg (no translation on a stationary track). Common practice (docs/storm.md). */
static void test_surface_wind_direction(void **state)
{
    (void)state;
    const double fs[] = {5e-5, 0.0, -5e-5};
    const double inflows[] = {0.0, 20.0, 35.0};
    for (size_t k = 0; k < 3; k++)
        for (size_t a = 0; a < 3; a++) {
            sw_storm_options o = sw_storm_options_default();
            o.coriolis_s = fs[k];
            o.inflow_deg = inflows[a];
            sw_storm *s = load_ok("storm_still.txt", STILL, &o);
            sw_storm_state st;
            sw_storm_state_at(s, 3600.0, &st);
            assert_true(st.vt_x_ms == 0.0 && st.vt_y_ms == 0.0);
            for (int az = 0; az < 12; az++) {
                double th = az * PI_ / 6 + 0.1, r = 1.7 * 40e3;
                double dx = r * cos(th), dy = r * sin(th), p, u, v;
                sw_storm_point(s, &st, dx, dy, &p, &u, &v);
                double speed = hypot(u, v);
                assert_near(speed, o.reduction * holland_vg(r, 4000, 40e3, 1.3, o.air_density_kgm3, fs[k]),
                            1e-9 * speed);
                assert_near(p, st.pc_pa + holland_p(r, 4000, 40e3, 1.3), 1e-9 * 4000);
                /* angle between the wind and the outward radius: 90 deg + inflow [common practice] */
                double ang = acos((u * dx + v * dy) / (speed * r)) * 180 / PI_;
                assert_near(ang, 90.0 + inflows[a], 1e-7);
                /* rotation sense from the cross product r x w: > 0 counter-clockwise */
                double cross = dx * v - dy * u;
                if (fs[k] >= 0)
                    assert_true(cross > 0);
                else
                    assert_true(cross < 0);
            }
            /* at the centre: p = pc and no wind [storm.h contract] */
            double p, u, v;
            sw_storm_point(s, &st, 0.0, 0.0, &p, &u, &v);
            assert_true(p == st.pc_pa && u == 0.0 && v == 0.0);
            sw_storm_free(s);
        }
}

/* A track moving east at 10 m/s: the forward share at r = rmax is translation_fraction * vt (weight 1);
 * at r = 3 rmax the weight is 2 * 3 / (9 + 1) = 0.6 [our weighting, docs/storm.md]. */
static void test_translation(void **state)
{
    (void)state;
    sw_storm_options o = sw_storm_options_default();
    o.coriolis_s = 4e-5;
    sw_storm *s = load_ok("storm_moving.txt",
                          "time[s] x[m] y[m] central_pressure[hPa] rmax[m] B\n"
                          "0 0 0 970 40000 1.4\n"
                          "10000 100000 0 970 40000 1.4\n", &o);
    sw_storm_state st;
    sw_storm_state_at(s, 5000.0, &st);
    assert_near(st.vt_x_ms, 10.0, 1e-12);   /* slope of the track [definition] */
    assert_near(st.vt_y_ms, 0.0, 1e-12);
    sw_storm_state still = st;
    still.vt_x_ms = still.vt_y_ms = 0.0;
    const double mult[] = {1.0, 3.0};
    const double weight[] = {1.0, 0.6};
    for (size_t m = 0; m < 2; m++)
        for (int az = 0; az < 8; az++) {
            double th = az * PI_ / 4, r = mult[m] * 40e3;
            double x = st.x_m + r * cos(th), y = st.y_m + r * sin(th), u1, v1, u0, v0;
            sw_storm_point(s, &st, x, y, NULL, &u1, &v1);
            sw_storm_point(s, &still, x, y, NULL, &u0, &v0);
            assert_near(u1 - u0, 0.5 * weight[m] * 10.0, 1e-9);   /* translation_fraction 0.5 [default] */
            assert_near(v1 - v0, 0.0, 1e-9);
        }
    sw_storm_free(s);
}

/* Every parameter is linear in time between track points, in the file's units converted to SI. */
static void test_track_interpolation(void **state)
{
    (void)state;
    sw_storm *s = load_ok("storm_interp.txt",
                          "# a fictional storm   (comments, blank lines, CR LF and trailing comments are fine)\r\n"
                          "\r\n"
                          "time[h]  x[km]  y[km]  central_pressure[mbar]  rmax[km]  B    ambient_pressure[hPa]\r\n"
                          "0        -120   340    975                     40        1.3  1012   # first\r\n"
                          "   \r\n"
                          "6        -60    300    960                     30        1.5  1010\r\n"
                          "12       0      250    955                     30        1.6  1010\r\n", NULL);
    assert_int_equal(sw_storm_points(s), 3);
    assert_near(sw_storm_t_first(s), 0.0, 0.0);
    assert_near(sw_storm_t_last(s), 43200.0, 0.0);
    sw_storm_state st;
    sw_storm_state_at(s, 3 * 3600.0, &st);   /* halfway between the first two points */
    assert_near(st.x_m, -90e3, 1e-6);
    assert_near(st.y_m, 320e3, 1e-6);
    assert_near(st.ambient_pa, 101100.0, 1e-6);
    assert_near(st.dp_pa, (3700.0 + 5000.0) / 2, 1e-6);   /* drops 1012-975 and 1010-960 hPa */
    assert_near(st.pc_pa, 101100.0 - 4350.0, 1e-6);
    assert_near(st.rmax_m, 35e3, 1e-6);
    assert_near(st.B, 1.4, 1e-12);
    assert_near(st.vt_x_ms, 60e3 / 21600.0, 1e-12);
    assert_near(st.vt_y_ms, -40e3 / 21600.0, 1e-12);
    /* at a track point: its values; on the second segment: its slope */
    sw_storm_state_at(s, 6 * 3600.0, &st);
    assert_near(st.x_m, -60e3, 1e-6);
    assert_near(st.vt_y_ms, -50e3 / 21600.0, 1e-12);
    /* clamped outside the span */
    sw_storm_state_at(s, -100.0, &st);
    assert_near(st.x_m, -120e3, 1e-6);
    assert_near(st.t_s, 0.0, 0.0);
    sw_storm_state_at(s, 1e6, &st);
    assert_near(st.y_m, 250e3, 1e-6);
    assert_near(st.B, 1.6, 1e-12);

    sw_error err = {0};
    assert_int_equal(sw_storm_covers(s, 0.0, 43200.0, &err), SW_OK);
    assert_int_equal(sw_storm_covers(s, 600.0, 7200.0, &err), SW_OK);
    sw_storm_free(s);
}

/* B from max_wind: B = rho_a e (max_wind / reduction)^2 / dp, so that reduction * Vmax = max_wind
 * [derived from Holland's (1980) cyclostrophic maximum]. */
static void test_b_from_max_wind(void **state)
{
    (void)state;
    sw_storm_options o = sw_storm_options_default();
    sw_storm *s = load_ok("storm_vmax.txt",
                          "time[h] x[km] y[km] pressure_drop[hPa] rmax[km] max_wind[m/s]\n"
                          "0 0 0 40 40 40\n"
                          "6 50 0 40 40 40\n", &o);
    sw_storm_state st;
    sw_storm_state_at(s, 0.0, &st);
    double want = 1.15 * E_ * (40.0 / 0.8) * (40.0 / 0.8) / 4000.0;   /* 1.9538 */
    assert_near(st.B, want, 1e-12);
    assert_near(o.reduction * sw_holland_vmax(st.dp_pa, st.B, o.air_density_kgm3), 40.0, 1e-9);
    sw_storm_free(s);

    /* knots: 1 kn = 1852 m / 3600 s (international nautical mile) */
    s = load_ok("storm_vmax_kn.txt",
                "time[h] x[km] y[km] pressure_drop[hPa] rmax[km] max_wind[kn]\n"
                "0 0 0 40 40 80\n"
                "6 50 0 40 40 80\n", &o);
    sw_storm_state_at(s, 0.0, &st);
    double vm = 80 * 1852.0 / 3600.0;
    assert_near(st.B, 1.15 * E_ * (vm / 0.8) * (vm / 0.8) / 4000.0, 1e-12);
    sw_storm_free(s);
}

/* sw_storm_row against sw_storm_point over rows crossing the eye, for a requested spacing of rmax / 50 (and
 * coarser, rmax / 4; finer, rmax / 1000): the table's interpolation error must stay below 1e-4 of the
 * maximum 10 m wind and of dp (storm.h contract). */
static void test_row_matches_point(void **state)
{
    (void)state;
    const double Bs[] = {1.0, 1.5, 2.5, 3.0};
    const double per_rmax[] = {50.0, 4.0, 1000.0};
    double worst_v[3] = {0}, worst_p[3] = {0};
    for (size_t b = 0; b < 4; b++) {
        char text[256];
        snprintf(text, sizeof text,
                 "time[h] x[km] y[km] pressure_drop[hPa] rmax[km] B\n"
                 "0 -100 20 50 30 %g\n"
                 "12 300 120 50 30 %g\n", Bs[b], Bs[b]);
        sw_storm_options o = sw_storm_options_default();
        o.coriolis_s = 6e-5;
        sw_storm *s = load_ok("storm_row.txt", text, &o);
        const double t = 4 * 3600.0, dx = 250.0, x0 = -200e3;
        const size_t n = 2400;   /* x from -200 km to 400 km */
        sw_storm_state st;
        sw_storm_state_at(s, t, &st);
        /* the largest 10 m wind: reduction * max Vg plus the translation share at rmax */
        double vt = hypot(st.vt_x_ms, st.vt_y_ms), r_at;
        double vmax10 = o.reduction * max_vg(st.dp_pa, st.rmax_m, st.B, o.air_density_kgm3, o.coriolis_s, &r_at) +
                        o.translation_fraction * vt;
        float *p = malloc(n * sizeof *p), *u = malloc(n * sizeof *u), *v = malloc(n * sizeof *v);
        assert_true(p && u && v);
        for (size_t d = 0; d < 3; d++) {
            sw_storm_frame fr;
            sw_error err = {0};
            assert_int_equal(sw_storm_frame_build(s, t, 800e3, st.rmax_m / per_rmax[d], &fr, &err), SW_OK);
            assert_int_equal(fr.coarsened, 0);
            assert_true(fr.dr_m <= st.rmax_m / SW_STORM_TABLE_PER_RMAX * (1 + 1e-12));
            assert_true(fr.n * fr.dr_m >= 800e3);
            /* rows through the eye, just beside it, and at 0.3, 0.6, 1 and 3 rmax */
            const double offs[] = {0.0, 0.37 * fr.dr_m, 0.3 * st.rmax_m, 0.6 * st.rmax_m, st.rmax_m,
                                   3 * st.rmax_m};
            for (size_t k = 0; k < 6; k++) {
                double y = st.y_m + offs[k];
                /* a start so that one point of each row lies on the centre's x */
                double xs = st.x_m + floor((x0 - st.x_m) / dx) * dx;
                sw_storm_row(&fr, y, xs, dx, n, p, u, v);
                for (size_t i = 0; i < n; i++) {
                    double pp, uu, vv;
                    sw_storm_point(s, &st, xs + (double)i * dx, y, &pp, &uu, &vv);
                    double ev = fmax(fabs(u[i] - uu), fabs(v[i] - vv)) / vmax10;
                    double ep = fabs(p[i] - pp) / st.dp_pa;
                    worst_v[d] = fmax(worst_v[d], ev);
                    worst_p[d] = fmax(worst_p[d], ep);
                    assert_true(isfinite(u[i]) && isfinite(v[i]) && isfinite(p[i]));
                }
            }
            sw_storm_frame_free(&fr);
        }
        free(p);
        free(u);
        free(v);
        sw_storm_free(s);
    }
    for (size_t d = 0; d < 3; d++) {
        print_message("sw_storm_row vs sw_storm_point, requested dr = rmax/%g, B 1 .. 3: max error %.3g of the max "
                      "10 m wind, %.3g of dp\n", per_rmax[d], worst_v[d], worst_p[d]);
        assert_true(worst_v[d] < 1e-4);   /* storm.h contract */
        assert_true(worst_p[d] < 1e-4);
    }
}

/* The same rows from several threads at once give the same numbers (the frame is read-only). */
static void test_row_threads(void **state)
{
    (void)state;
    sw_storm *s = load_ok("storm_thr.txt", STILL, NULL);
    sw_storm_frame fr;
    sw_error err = {0};
    assert_int_equal(sw_storm_frame_build(s, 0.0, 300e3, 250.0, &fr, &err), SW_OK);
    enum { NX = 400, NY = 64 };
    float *a = malloc(3 * NX * NY * sizeof *a), *b = malloc(3 * NX * NY * sizeof *b);
    assert_true(a && b);
    for (size_t j = 0; j < NY; j++)
        sw_storm_row(&fr, -150e3 + 1000.0 * (double)j, -200e3, 1000.0, NX, a + j * NX, a + (NY + j) * NX,
                     a + (2 * NY + j) * NX);
    omp_set_num_threads(2);
    SW_OMP(parallel for schedule(static, 1))
    for (size_t j = 0; j < NY; j++)
        sw_storm_row(&fr, -150e3 + 1000.0 * (double)j, -200e3, 1000.0, NX, b + j * NX, b + (NY + j) * NX,
                     b + (2 * NY + j) * NX);
    assert_memory_equal(a, b, 3 * NX * NY * sizeof *a);
    free(a);
    free(b);
    sw_storm_frame_free(&fr);
    sw_storm_free(s);
}

/* A table longer than SW_STORM_TABLE_MAX intervals is coarsened, and says so. */
static void test_frame_coarsened(void **state)
{
    (void)state;
    sw_storm *s = load_ok("storm_coarse.txt", STILL, NULL);
    sw_storm_frame fr;
    sw_error err = {0};
    assert_int_equal(sw_storm_frame_build(s, 0.0, 4000e3, 1.0, &fr, &err), SW_OK);
    assert_int_equal(fr.coarsened, 1);
    assert_int_equal(fr.n, SW_STORM_TABLE_MAX);
    assert_near(fr.dr_m, 4000e3 / SW_STORM_TABLE_MAX, 1e-12);
    sw_storm_frame_free(&fr);
    assert_int_equal(sw_storm_frame_build(s, 0.0, 0.0, 1.0, &fr, &err), SW_ERR_USAGE);
    assert_null(fr.p_rel_pa);
    sw_storm_frame_free(&fr);
    sw_storm_free(s);
}

/* A frame built from a state the caller changed (moved, deepened, widened) follows that state: its rows
 * match sw_storm_point for the same state [storm.h contract]. A state out of range is refused. */
static void test_frame_from_state(void **state)
{
    (void)state;
    sw_storm *s = load_ok("storm_state.txt", STILL, NULL);
    sw_storm_state st;
    sw_storm_state_at(s, 7200.0, &st);
    st.x_m += 25e3;
    st.dp_pa *= 1.3;
    st.pc_pa = st.ambient_pa - st.dp_pa;
    st.rmax_m *= 0.8;
    st.vt_x_ms = 6.0;
    sw_storm_frame fr;
    sw_error err = {0};
    assert_int_equal(sw_storm_frame_build_state(s, &st, 400e3, 500.0, &fr, &err), SW_OK);
    enum { N = 801 };
    float p[N], u[N], v[N];
    sw_storm_row(&fr, st.y_m + 0.5 * st.rmax_m, st.x_m - 200e3, 500.0, N, p, u, v);
    double vmax10 = 0.8 * sw_holland_vmax(st.dp_pa, st.B, 1.15) + 3.0;
    for (size_t i = 0; i < N; i++) {
        double pp, uu, vv;
        sw_storm_point(s, &st, st.x_m - 200e3 + 500.0 * (double)i, st.y_m + 0.5 * st.rmax_m, &pp, &uu, &vv);
        assert_near(p[i], pp, 1e-4 * st.dp_pa);
        assert_near(u[i], uu, 1e-4 * vmax10);
        assert_near(v[i], vv, 1e-4 * vmax10);
    }
    sw_storm_frame_free(&fr);
    st.rmax_m = -1.0;
    assert_int_equal(sw_storm_frame_build_state(s, &st, 400e3, 500.0, &fr, &err), SW_ERR_RANGE);
    assert_null(fr.p_rel_pa);
    sw_storm_free(s);
}

/* Loads `text` and expects status `code` with the message "PATH<suffix>" exactly. */
static void expect_fail(const char *text, const sw_storm_options *o, sw_status code, const char *suffix)
{
    char path[512], want[1024];
    track_file(path, sizeof path, "storm_bad.txt", text);
    sw_storm *s = (sw_storm *)&path;   /* must come back NULL */
    sw_error err = {0};
    sw_status st = sw_storm_load(path, o, &s, &err);
    snprintf(want, sizeof want, "%s%s", path, suffix);
    if (st != code || strcmp(err.msg, want) != 0)
        print_error("got  %s (%s)\nwant %s (%s)\n", err.msg, sw_status_name(st), want, sw_status_name(code));
    assert_int_equal(st, code);
    assert_string_equal(err.msg, want);
    assert_null(s);
}

#define HDR "time[h] x[km] y[km] pressure_drop[hPa] rmax[km] B\n"

static void test_bad_tracks(void **state)
{
    (void)state;
    expect_fail(HDR "0 0 0 40 40 1.3\n6 0 0 abc 40 1.3\n", NULL, SW_ERR_PARSE, ":3: column 4 'abc' is not a number");
    expect_fail(HDR "0 0 0 40 40 1.3\n6 0 0 40 1.3\n", NULL, SW_ERR_PARSE, ":3: 5 values, the header names 6");
    expect_fail(HDR "0 0 0 40 40 1.3\n6 0 0 40 40 1.3 7\n", NULL, SW_ERR_PARSE, ":3: 7 values, the header names 6");
    expect_fail(HDR "0 0 0 40 40 1.3\n6 0 0 1e999 40 1.3\n", NULL, SW_ERR_PARSE,
                ":3: column 4 '1e999' is not a finite number");
    expect_fail(HDR "0 0 0 nan 40 1.3\n", NULL, SW_ERR_PARSE, ":2: column 4 'nan' is not a number");
    expect_fail(HDR "0 0 0x10 40 40 1.3\n", NULL, SW_ERR_PARSE, ":2: column 3 '0x10' is not a number");
    expect_fail("# fictional\ntime[h] x[km] y[km] presure[hPa] rmax[km] B\n0 0 0 40 40 1.3\n", NULL, SW_ERR_PARSE,
                ":2: unknown column 'presure' (accepted: time, x, y, central_pressure, pressure_drop, rmax, B, "
                "max_wind, ambient_pressure)");
    expect_fail("time[h] x[km] y[km] pressure_drop[hPa] rmax[kts] B\n0 0 0 40 40 1.3\n", NULL, SW_ERR_PARSE,
                ":1: unknown unit 'kts' for rmax (accepted: m, km)");
    expect_fail("time[h] x[km] y[km] pressure_drop[hPa] rmax[km] B[1]\n0 0 0 40 40 1.3\n", NULL, SW_ERR_PARSE,
                ":1: unknown unit '1' for B (accepted: no unit)");
    expect_fail("time x[km] y[km] pressure_drop[hPa] rmax[km] B\n0 0 0 40 40 1.3\n", NULL, SW_ERR_PARSE,
                ":1: column 'time' needs a unit in brackets, e.g. time[s] (accepted: s, min, h, d)");
    expect_fail("time[h] x[km] y[km] pressure_drop[hPa] B\n0 0 0 40 1.3\n", NULL, SW_ERR_PARSE,
                ":1: missing column 'rmax' (required: time, x, y, central_pressure or pressure_drop, rmax, "
                "B or max_wind)");
    expect_fail("time[h] x[km] y[km] rmax[km] B\n0 0 0 40 1.3\n", NULL, SW_ERR_PARSE,
                ":1: missing column 'central_pressure' or 'pressure_drop' (required: time, x, y, "
                "central_pressure or pressure_drop, rmax, B or max_wind)");
    expect_fail("time[h] x[km] y[km] pressure_drop[hPa] central_pressure[hPa] rmax[km] B\n0 0 0 40 970 40 1.3\n",
                NULL, SW_ERR_PARSE, ":1: columns 'central_pressure' and 'pressure_drop' exclude each other (give one)");
    expect_fail("time[h] x[km] y[km] pressure_drop[hPa] rmax[km] B max_wind[m/s]\n0 0 0 40 40 1.3 40\n", NULL,
                SW_ERR_PARSE, ":1: columns 'B' and 'max_wind' exclude each other (give one)");
    expect_fail("time[h] x[km] x[km] pressure_drop[hPa] rmax[km] B\n0 0 0 40 40 1.3\n", NULL, SW_ERR_PARSE,
                ":1: column 'x' appears twice (columns 2 and 3)");
    expect_fail("time[h x[km] y[km] pressure_drop[hPa] rmax[km] B\n0 0 0 40 40 1.3\n", NULL, SW_ERR_PARSE,
                ":1: column header 'time[h' is not name or name[unit] (no blanks inside the brackets)");
    expect_fail("0 0 0 40 40 1.3\n", NULL, SW_ERR_PARSE,
                ":1: the first line that is not a comment must name the columns (found the number '0'; accepted "
                "columns: time, x, y, central_pressure, pressure_drop, rmax, B, max_wind, ambient_pressure)");
    expect_fail("# only a comment\n\n", NULL, SW_ERR_PARSE,
                ": no header: the first line that is not blank or a comment must name the columns (accepted: "
                "time, x, y, central_pressure, pressure_drop, rmax, B, max_wind, ambient_pressure)");
    expect_fail("\n" HDR "# nothing\n", NULL, SW_ERR_PARSE, ":2: no data rows after the header");
    expect_fail(HDR "0 0 0 40 40 1.3\n", NULL, SW_ERR_PARSE,
                ":2: the track has 1 point; at least 2 are needed (a storm that stays put is two points at the "
                "same place)");
    expect_fail(HDR "0 0 0 40 40 1.3\n6 0 0 40 40 1.3\n6 0 0 40 40 1.3\n", NULL, SW_ERR_PARSE,
                ":4: time 6 h is not after the previous point's 6 h (line 3): times must increase strictly");
    expect_fail(HDR "0 0 0 40 40 1.3\n# a comment\n-1 0 0 40 40 1.3\n", NULL, SW_ERR_PARSE,
                ":4: time -1 h is not after the previous point's 0 h (line 2): times must increase strictly");
    expect_fail(HDR "0 0 0 40 40 1.3\n6 0 0 40 -5 1.3\n", NULL, SW_ERR_RANGE,
                ":3: rmax -5 km is outside the accepted range rmax > 0");
    expect_fail(HDR "0 0 0 40 0 1.3\n6 0 0 40 5 1.3\n", NULL, SW_ERR_RANGE,
                ":2: rmax 0 km is outside the accepted range rmax > 0");
    expect_fail(HDR "0 0 0 0 40 1.3\n6 0 0 40 40 1.3\n", NULL, SW_ERR_RANGE,
                ":2: pressure_drop 0 hPa is outside the accepted range 0 < drop < the ambient pressure 1013 hPa");
    expect_fail(HDR "0 0 0 -3 40 1.3\n6 0 0 40 40 1.3\n", NULL, SW_ERR_RANGE,
                ":2: pressure_drop -3 hPa is outside the accepted range 0 < drop < the ambient pressure 1013 hPa");
    expect_fail("time[h] x[km] y[km] central_pressure[hPa] rmax[km] B\n0 0 0 960 40 1.3\n6 0 0 1013 40 1.3\n", NULL,
                SW_ERR_RANGE, ":3: central_pressure 1013 hPa is not below the ambient pressure 1013 hPa (accepted: "
                "0 < central_pressure < ambient; the drop must be > 0)");
    expect_fail("time[h] x[km] y[km] central_pressure[hPa] rmax[km] B ambient_pressure[hPa]\n"
                "0 0 0 960 40 1.3 1005\n6 0 0 1008 40 1.3 1005\n", NULL, SW_ERR_RANGE,
                ":3: central_pressure 1008 hPa is not below the ambient pressure 1005 hPa (accepted: "
                "0 < central_pressure < ambient; the drop must be > 0)");
    expect_fail("time[h] x[km] y[km] central_pressure[hPa] rmax[km] B ambient_pressure[hPa]\n"
                "0 0 0 960 40 1.3 1500\n6 0 0 960 40 1.3 1005\n", NULL, SW_ERR_RANGE,
                ":2: ambient_pressure 1500 hPa is outside the accepted range 800 .. 1100 hPa");
    expect_fail(HDR "0 0 0 40 40 1.3\n6 0 0 40 40 3.5\n", NULL, SW_ERR_RANGE,
                ":3: B 3.5 is outside the accepted range 0.5 .. 3 (Holland 1980 found about 1 to 2.5)");
    expect_fail(HDR "0 0 0 40 40 0.4\n6 0 0 40 40 1.5\n", NULL, SW_ERR_RANGE,
                ":2: B 0.4 is outside the accepted range 0.5 .. 3 (Holland 1980 found about 1 to 2.5)");
    /* B = 1.15 e (70 / 0.8)^2 / 4000 = 5.983 */
    expect_fail("time[h] x[km] y[km] pressure_drop[hPa] rmax[km] max_wind[m/s]\n0 0 0 40 40 70\n6 0 0 40 40 40\n",
                NULL, SW_ERR_RANGE,
                ":2: B 5.983, derived from max_wind 70 m/s (B = rho_a e (max_wind / reduction)^2 / drop, rho_a = "
                "1.15 kg m-3, reduction = 0.8, drop = 40 hPa), is outside the accepted range 0.5 .. 3 (Holland 1980 "
                "found about 1 to 2.5)");
    expect_fail("time[h] x[km] y[km] pressure_drop[hPa] rmax[km] max_wind[m/s]\n0 0 0 40 40 0\n6 0 0 40 40 40\n",
                NULL, SW_ERR_RANGE, ":2: max_wind 0 m/s is outside the accepted range max_wind > 0");

    sw_storm_options o = sw_storm_options_default();
    o.reduction = 1.2;
    expect_fail(HDR "0 0 0 40 40 1.3\n6 0 0 40 40 1.3\n", &o, SW_ERR_RANGE,
                ": wind reduction factor 1.2 is outside the accepted range 0 < k <= 1");
    o = sw_storm_options_default();
    o.coriolis_s = 2e-3;
    expect_fail(HDR "0 0 0 40 40 1.3\n6 0 0 40 40 1.3\n", &o, SW_ERR_RANGE,
                ": Coriolis parameter 0.002 s-1 is outside the accepted range |f| <= 0.001 s-1");

    /* a file that does not exist */
    char path[512], want[1024];
    tu_tmp_path(path, sizeof path, "storm_no_such_track.txt");
    remove(path);
    sw_storm *s = NULL;
    sw_error err = {0};
    assert_int_equal(sw_storm_load(path, NULL, &s, &err), SW_ERR_IO);
    snprintf(want, sizeof want, "%s: cannot open: No such file or directory", path);
    assert_string_equal(err.msg, want);
    assert_null(s);
}

/* A track that does not cover the run: the message says what to add. */
static void test_covers(void **state)
{
    (void)state;
    char path[512], want[1024];
    track_file(path, sizeof path, "storm_span.txt", HDR "0 0 0 40 40 1.3\n12 0 0 40 40 1.3\n");
    sw_storm *s = NULL;
    sw_error err = {0};
    assert_int_equal(sw_storm_load(path, NULL, &s, &err), SW_OK);
    assert_int_equal(sw_storm_covers(s, 0.0, 43200.0, &err), SW_OK);
    assert_int_equal(sw_storm_covers(s, 0.0, 86400.0, &err), SW_ERR_RANGE);
    snprintf(want, sizeof want, "%s: the track covers 0 .. 43200 s but the run needs 0 .. 86400 s (add track points "
             "up to at least 86400 s)", path);
    assert_string_equal(err.msg, want);
    assert_int_equal(sw_storm_covers(s, -600.0, 3600.0, &err), SW_ERR_RANGE);
    snprintf(want, sizeof want, "%s: the track covers 0 .. 43200 s but the run needs -600 .. 3600 s (add track points "
             "from -600 s or earlier)", path);
    assert_string_equal(err.msg, want);
    assert_int_equal(sw_storm_covers(s, -600.0, 86400.0, &err), SW_ERR_RANGE);
    snprintf(want, sizeof want, "%s: the track covers 0 .. 43200 s but the run needs -600 .. 86400 s (add track "
             "points from -600 s or earlier and up to at least 86400 s)", path);
    assert_string_equal(err.msg, want);
    sw_storm_free(s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_profile_closed_form),
        cmocka_unit_test(test_vmax),
        cmocka_unit_test(test_surface_wind_direction),
        cmocka_unit_test(test_translation),
        cmocka_unit_test(test_track_interpolation),
        cmocka_unit_test(test_b_from_max_wind),
        cmocka_unit_test(test_row_matches_point),
        cmocka_unit_test(test_row_threads),
        cmocka_unit_test(test_frame_coarsened),
        cmocka_unit_test(test_frame_from_state),
        cmocka_unit_test(test_bad_tracks),
        cmocka_unit_test(test_covers),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
