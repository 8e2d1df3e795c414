/* test_okada.c - the surface displacement of a rectangular fault (inputs/okada.h: Okada 1985), the seismic
 * moment and the moment magnitude.
 *
 * Sources (restated in docs/references.md, "Earthquake sources"):
 *  - Okada (1985) Bull. Seismol. Soc. Am. 75, 1135-1154: the checklist values of the finite rectangular
 *    source, case x = 2, y = 3, d = 4, dip 70, L = 3, W = 2, lambda = mu, unit dislocation [values seen in
 *    independent transcriptions that agree]; and the paper's formulas, written again below corner by corner
 *    with atan and log exactly as printed (okada_literal), to hold the library's rearranged forms to them.
 *  - The dip-90 values at the checklist point: the paper's cos(dip) = 0 forms evaluated in 50-digit
 *    arithmetic, which its general forms at dip 90 - 1e-9 deg reproduce to 10 digits [derived].
 *  - Symmetries of a vertical fault under reflections [derived, the argument beside the test].
 *  - The step of a fault that reaches the surface: the hanging wall moves by the slip vector across the
 *    trace [derived: the displacement is discontinuous across the fault by exactly the dislocation].
 *  - Decay: a finite source's surface displacement falls as the inverse square of the distance or faster
 *    (its far field is that of a point dislocation, Okada 1985 section 2) [memory; checked here by ratio].
 *  - Destination point on the sphere (spherical trigonometry) [memory], for the geographic placement.
 *  - Hanks & Kanamori (1979) J. Geophys. Res. 84, 2348-2350: Mw = (2/3)(log10 M0 - 9.1), M0 in N m
 *    [memory; the constant 9.1 for N m is the usual modern form].
 * All faults here are invented test cases.
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
#include "inputs/okada.h"

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

/* A small deterministic generator (xorshift64), uniform in [a, b). */
static uint64_t rng_state = 0x9E3779B97F4A7C15ull;
static double uniform(double a, double b)
{
    rng_state ^= rng_state << 13;
    rng_state ^= rng_state >> 7;
    rng_state ^= rng_state << 17;
    return a + (b - a) * (double)(rng_state >> 11) / 9007199254740992.0;
}

/* Okada (1985) eqs. 25-30 as printed, in his frame (x along strike, y to its left, the lower edge at depth
 * d from x = 0 to L, W up dip), summed over the four corners with Chinnery's signs; vertical: the
 * cos(dip) = 0 forms (sin = 1, cos = 0). U1, U2, U3: strike-slip, dip-slip, tensile; nu Poisson's ratio.
 * Singular corners are not handled: callers keep away from them. */
static void okada_literal(double x, double y, double d, double dip_deg, double L, double W, double U1, double U2,
                          double U3, double nu, int vertical, double out[3])
{
    const double sd = vertical ? 1.0 : sin(dip_deg * PI_ / 180), cd = vertical ? 0.0 : cos(dip_deg * PI_ / 180);
    const double m = 1 - 2 * nu;                     /* mu / (lambda + mu) */
    const double p = y * cd + d * sd, q = y * sd - d * cd;
    const double xis[4] = {x, x, x - L, x - L}, etas[4] = {p, p - W, p, p - W}, sg[4] = {1, -1, -1, 1};
    out[0] = out[1] = out[2] = 0;
    for (int c = 0; c < 4; c++) {
        const double xi = xis[c], eta = etas[c];
        const double yt = eta * cd + q * sd, dt = eta * sd - q * cd;
        const double R = sqrt(xi * xi + eta * eta + q * q), X = sqrt(xi * xi + q * q);
        const double A = q != 0 ? atan(xi * eta / (q * R)) : 0.0;
        const double lRe = log(R + eta);
        double I1, I2, I3, I4, I5;
        if (!vertical) {
            I5 = xi == 0 ? 0.0 : m * 2 / cd * atan((eta * (X + q * cd) + X * (R + X) * sd) / (xi * (R + X) * cd));
            I4 = m / cd * (log(R + dt) - sd * lRe);
            I3 = m * (yt / (cd * (R + dt)) - lRe) + sd / cd * I4;
            I2 = m * (-lRe) - I3;
            I1 = m * (-xi / (cd * (R + dt))) - sd / cd * I5;
        } else {
            I1 = -m / 2 * xi * q / ((R + dt) * (R + dt));
            I3 = m / 2 * (eta / (R + dt) + yt * q / ((R + dt) * (R + dt)) - lRe);
            I4 = -m * q / (R + dt);
            I5 = -m * xi * sd / (R + dt);
            I2 = m * (-lRe) - I3;
        }
        const double ss[3] = {xi * q / (R * (R + eta)) + A + I1 * sd,
                              yt * q / (R * (R + eta)) + q * cd / (R + eta) + I2 * sd,
                              dt * q / (R * (R + eta)) + q * sd / (R + eta) + I4 * sd};
        const double ds[3] = {q / R - I3 * sd * cd, yt * q / (R * (R + xi)) + cd * A - I1 * sd * cd,
                              dt * q / (R * (R + xi)) + sd * A - I5 * sd * cd};
        const double ts[3] = {q * q / (R * (R + eta)) - I3 * sd * sd,
                              -dt * q / (R * (R + xi)) - sd * (xi * q / (R * (R + eta)) - A) - I1 * sd * sd,
                              yt * q / (R * (R + xi)) + cd * (xi * q / (R * (R + eta)) - A) - I5 * sd * sd};
        for (int k = 0; k < 3; k++)
            out[k] += sg[c] * (-U1 / (2 * PI_) * ss[k] - U2 / (2 * PI_) * ds[k] + U3 / (2 * PI_) * ts[k]);
    }
}

/* The fault of okada.h that is Okada's fault (lower edge at depth d under the x axis from 0 to L) on a
 * plane whose x runs east: strike 90 (x along strike, y = north to its left), reference point the centre of
 * the top edge (L/2, W cos(dip)), top edge at depth d - W sin(dip). Then (east, north, up) = Okada's
 * (u_x, u_y, u_z). U1 and U2 become slip and rake (exact for the pure cases). */
static sw_okada_fault okada_frame(double d, double dip_deg, double L, double W, double U1, double U2, double U3)
{
    const double sd = dip_deg == 90 ? 1.0 : sin(dip_deg * PI_ / 180);
    const double cd = dip_deg == 90 ? 0.0 : cos(dip_deg * PI_ / 180);
    sw_okada_fault f = {.x_m = L / 2, .y_m = W * cd, .depth_m = d - W * sd, .length_m = L, .width_m = W,
                        .strike_deg = 90, .dip_deg = dip_deg, .opening_m = U3, .poisson = 0.25};
    if (U2 == 0) {
        f.slip_m = fabs(U1);
        f.rake_deg = U1 >= 0 ? 0 : 180;
    } else if (U1 == 0) {
        f.slip_m = fabs(U2);
        f.rake_deg = U2 >= 0 ? 90 : -90;
    } else {
        f.slip_m = hypot(U1, U2);
        f.rake_deg = atan2(U2, U1) * 180 / PI_;
    }
    return f;
}

/* A fault of okada.h with its geometry, unit slip at `rake` and Poisson's ratio 1/4. */
static sw_okada_fault fault(double x, double y, double depth, double L, double W, double strike, double dip,
                            double rake)
{
    sw_okada_fault f = {.x_m = x, .y_m = y, .depth_m = depth, .length_m = L, .width_m = W, .strike_deg = strike,
                        .dip_deg = dip, .rake_deg = rake, .slip_m = 1.0, .poisson = 0.25};
    return f;
}

static double norm3(const double u[3]) { return sqrt(u[0] * u[0] + u[1] * u[1] + u[2] * u[2]); }

/* Okada (1985), checklist for the finite rectangular source: x = 2, y = 3, d = 4, dip 70, L = 3, W = 2,
 * lambda = mu (Poisson 1/4), unit dislocation [values seen in independent transcriptions that agree],
 * to the published digits (relative 5e-4; docs/references.md). */
static void test_checklist(void **state)
{
    (void)state;
    static const double want[3][3] = {
        {-8.689e-3, -4.298e-3, -2.747e-3},   /* strike-slip U1 = 1 */
        {-4.682e-3, -3.527e-2, -3.564e-2},   /* dip-slip U2 = 1 */
        {-2.660e-4, +1.056e-2, +3.214e-3},   /* tensile U3 = 1 */
    };
    for (int k = 0; k < 3; k++) {
        const sw_okada_fault f = okada_frame(4, 70, 3, 2, k == 0, k == 1, k == 2);
        double u[3], lit[3];
        sw_okada_point(&f, NULL, 2, 3, u);
        okada_literal(2, 3, 4, 70, 3, 2, k == 0, k == 1, k == 2, 0.25, 0, lit);
        for (int c = 0; c < 3; c++) {
            assert_near(u[c], want[k][c], 5e-4 * fabs(want[k][c]));    /* Okada (1985) checklist */
            assert_near(lit[c], want[k][c], 5e-4 * fabs(want[k][c]));  /* the formulas as printed */
            assert_near(u[c], lit[c], 1e-13);                           /* the library's forms = the paper's */
        }
    }
}

/* The paper's formulas as printed (okada_literal) against the library's rearranged, vectorised forms, over
 * random faults, rakes, openings, Poisson's ratios and points near and far: within 2e-9 of the largest
 * displacement of each fault's sample [derived: the forms are algebraically equal]. The tolerance is the
 * printed forms' own rounding: R + eta cancels near a fault 1 m below the sea floor, where they lose up
 * to 2e-10 of the peak (the library keeps 1e-13 there against 50-digit arithmetic; a wrong term would
 * show at 1e-3 or more). The points include ones just above such a shallow fault, where the rectangle
 * subtends nearly a half-sphere (the arctangent sums reach beyond pi and must not wrap). */
static void test_literal_agreement(void **state)
{
    (void)state;
    for (int n = 0; n < 60; n++) {
        const int vertical = n % 6 == 5;
        const double dip = vertical ? 90.0 : uniform(3, 87);
        const double L = uniform(2e3, 80e3), W = uniform(2e3, 40e3);
        const double sd = vertical ? 1.0 : sin(dip * PI_ / 180), cd = vertical ? 0.0 : cos(dip * PI_ / 180);
        const double depth = n % 4 == 0 ? 1.0 : uniform(0, 20e3);
        const double d = depth + W * sd;
        const double U1 = uniform(-2, 2), U2 = uniform(-2, 2), U3 = n % 3 == 0 ? uniform(-1, 1) : 0.0;
        sw_okada_fault f = okada_frame(d, dip, L, W, U1, U2, U3);
        f.poisson = uniform(0.1, 0.45);
        double worst = 0, peak = 0;
        for (int k = 0; k < 200; k++) {
            double x, y;
            if (k < 120) {
                x = uniform(-2 * L, 3 * L);
                y = uniform(-2 * W - d, 2 * W + d);
            } else if (k < 160) {
                x = uniform(-30 * L, 30 * L);
                y = uniform(-30 * L, 30 * L);
            } else {
                /* just above the fault plane, near its top */
                x = uniform(0.1 * L, 0.9 * L);
                y = W * cd * uniform(0.5, 0.999);
            }
            double u[3], lit[3];
            sw_okada_point(&f, NULL, x, y, u);
            okada_literal(x, y, d, dip, L, W, U1, U2, U3, f.poisson, vertical, lit);
            for (int c = 0; c < 3; c++) {
                worst = fmax(worst, fabs(u[c] - lit[c]));
                peak = fmax(peak, fabs(lit[c]));
            }
        }
        if (!(worst <= 2e-9 * peak))
            print_error("fault %d (dip %g, depth %g m): worst %g, peak %g\n", n, dip, depth, worst, peak);
        assert_true(worst <= 2e-9 * peak);
    }
}

/* A vertical fault, strike-slip or dip-slip, under reflection in its plane (y -> -y in Okada's frame) and in
 * the plane across its middle (x -> L - x) [derived: a reflection S maps the fault onto itself; the field
 * S u(S r) is the half-space's response to the dislocation S b with the fault's sides exchanged (in its
 * plane) or not (across its middle). In its plane S b = b for slip along x or z but the sides swap, so the
 * field is -u: u_x and u_z odd in y, u_y even. Across the middle, S b = -b for strike-slip (the field is
 * -u: u_x even in x - L/2, u_y and u_z odd) and S b = b for dip-slip (u_x odd, u_y and u_z even)]. Exact up
 * to rounding: 1e-13 of the peak. The dip-90 (cos = 0) forms of the paper are used here. */
static void test_vertical_symmetry(void **state)
{
    (void)state;
    const double L = 20e3, W = 10e3, d = 11e3;
    for (int kind = 0; kind < 2; kind++) {
        const sw_okada_fault f = okada_frame(d, 90, L, W, kind == 0, kind == 1, 0);
        double peak = 0;
        for (int k = 0; k < 100; k++) {
            double u[3];
            sw_okada_point(&f, NULL, uniform(-L, 2 * L), uniform(-L, L), u);
            peak = fmax(peak, norm3(u));
        }
        const double tol = 1e-13 * peak;
        for (int k = 0; k < 200; k++) {
            const double x = uniform(-2 * L, 3 * L), y = uniform(-2 * L, 2 * L);
            double u[3], r[3], s[3];
            sw_okada_point(&f, NULL, x, y, u);
            sw_okada_point(&f, NULL, x, -y, r);
            sw_okada_point(&f, NULL, L - x, y, s);
            assert_near(r[0], -u[0], tol);   /* in its plane: u_x odd */
            assert_near(r[1], u[1], tol);    /*               u_y even */
            assert_near(r[2], -u[2], tol);   /*               u_z odd */
            const double sx = kind == 0 ? 1 : -1;
            assert_near(s[0], sx * u[0], tol);    /* across its middle */
            assert_near(s[1], -sx * u[1], tol);
            assert_near(s[2], -sx * u[2], tol);
        }
    }
}

/* Dip 90 by the paper's cos(dip) = 0 forms, against their values in 50-digit arithmetic at the checklist
 * point (relative 1e-9) [derived]; dips near 90 by the general forms converge to them: 89.99 and 89.999
 * within 3 cos(dip) of the peak [derived: the difference is of order cos(dip)]; 89.999999 deg lies
 * within okada.c's switch to the vertical forms (cos(dip) < 6e-6) and agrees to 1e-5. */
static void test_vertical_limit(void **state)
{
    (void)state;
    static const double want[3][3] = {
        {-0.01101436129, -0.007351638013, -0.005039768006},   /* strike-slip */
        {-0.006830048399, -0.05037940213, -0.04795152384},     /* dip-slip */
        {0.004697097304, 0.04916137243, 0.03623107327},        /* tensile */
    };
    for (int k = 0; k < 3; k++) {
        const sw_okada_fault f90 = okada_frame(4, 90, 3, 2, k == 0, k == 1, k == 2);
        double u[3];
        sw_okada_point(&f90, NULL, 2, 3, u);
        for (int c = 0; c < 3; c++)
            assert_near(u[c], want[k][c], 1e-9 * fabs(want[k][c]));
        const double peak = norm3(u);
        static const double dips[3] = {89.99, 89.999, 89.999999};
        const double tols[3] = {3 * cos(89.99 * PI_ / 180), 3 * cos(89.999 * PI_ / 180), 1e-5};
        for (int n = 0; n < 3; n++) {
            /* the same lower edge (d = 4) and point, in Okada's frame */
            const sw_okada_fault f = okada_frame(4, dips[n], 3, 2, k == 0, k == 1, k == 2);
            double v[3];
            sw_okada_point(&f, NULL, 2, 3, v);
            for (int c = 0; c < 3; c++)
                assert_near(v[c], u[c], tols[n] * peak);
        }
    }
}

/* Far from the fault the displacement falls as the inverse square of the distance, the far field of a point
 * dislocation (Okada 1985, section 2: its surface displacements go as 1/R^2 [memory]): doubling the
 * distance from 800 to 1600 km and from 1600 to 3200 km divides |u| by 4 within 3 %, in eight directions
 * (nearer in, terms of relative order (fault size / r) still show: ratios 0.23 to 0.28 from 100 to 200 km). */
static void test_far_field(void **state)
{
    (void)state;
    const sw_okada_fault f = fault(0, 0, 5e3, 20e3, 10e3, 20, 30, 75);
    for (int b = 0; b < 8; b++) {
        const double az = (22.5 + 45.0 * b) * PI_ / 180;
        double prev = 0;
        for (int k = 0; k < 3; k++) {
            const double r = 800e3 * (double)(1 << k);
            double u[3];
            sw_okada_point(&f, NULL, r * sin(az), r * cos(az), u);
            const double a = norm3(u);
            assert_true(a > 0 && isfinite(a));
            if (k > 0) {
                if (!(fabs(a / prev - 0.25) <= 0.03 * 0.25))
                    print_error("bearing %g deg, r %g km: ratio %g\n", az * 180 / PI_, r / 1e3, a / prev);
                assert_true(fabs(a / prev - 0.25) <= 0.03 * 0.25);
            }
            prev = a;
        }
    }
}

/* okada.h's conventions. (1) A thrust (rake 90) reaching the surface (depth 0), strike 0, dipping 45 deg
 * east, reference point (3 km, -2 km): across its trace, the line x = 3 km from y = -2 - L/2 to -2 + L/2
 * (the reference point is the top edge's centre), the hanging wall (east) stands higher by slip sin(dip)
 * and has moved west (up dip) by slip cos(dip) [derived: the displacement jumps by the dislocation across
 * the fault]; beyond the trace's ends there is no step. (2) Buried (depth 2 km, dip 20 or 60 east), it lifts
 * the sea floor most above its surface projection, east of the trace; dipping 60 it lowers the footwall west
 * of it, as the checklist's dip-slip case does on its footwall side (Okada 1985). */
static void test_conventions(void **state)
{
    (void)state;
    const double L = 20e3, W = 10e3, xf = 3e3, yf = -2e3, dip = 45;
    const sw_okada_fault f = fault(xf, yf, 0.0, L, W, 0, dip, 90);
    const double sd = sin(dip * PI_ / 180), cd = cos(dip * PI_ / 180);
    static const double along[4] = {-0.45, 0.0, 0.3, 0.45};
    for (int k = 0; k < 4; k++) {
        double e[3], w[3];
        const double y = yf + along[k] * L;
        sw_okada_point(&f, NULL, xf + 0.01, y, e);
        sw_okada_point(&f, NULL, xf - 0.01, y, w);
        assert_near(e[2] - w[2], sd, 1e-4);    /* the hanging wall up by slip sin(dip) */
        assert_near(e[0] - w[0], -cd, 1e-4);   /* and west by slip cos(dip) */
        assert_near(e[1] - w[1], 0.0, 1e-4);   /* no strike-slip */
    }
    for (int s = -1; s <= 1; s += 2) {         /* 1 km beyond either end: continuous */
        double e[3], w[3];
        const double y = yf + s * (0.5 * L + 1e3);
        sw_okada_point(&f, NULL, xf + 0.01, y, e);
        sw_okada_point(&f, NULL, xf - 0.01, y, w);
        assert_near(e[2] - w[2], 0.0, 1e-4);
        assert_near(e[0] - w[0], 0.0, 1e-4);
    }

    for (int k = 0; k < 2; k++) {
        const double dip2 = k ? 60 : 20, wc = W * cos(dip2 * PI_ / 180);
        const sw_okada_fault b = fault(xf, yf, 2e3, L, W, 0, dip2, 90);
        double u[3];
        sw_okada_point(&b, NULL, xf + 0.5 * wc, yf, u);   /* above the projection's middle */
        assert_true(u[2] > 0.1);
        /* the highest uplift along the line y = yf lies east of the trace, over the projection */
        double best = -1, xbest = 0;
        for (int i = -400; i <= 400; i++) {
            const double x = xf + 100.0 * i;
            sw_okada_point(&b, NULL, x, yf, u);
            if (u[2] > best) {
                best = u[2];
                xbest = x;
            }
        }
        assert_true(xbest > xf && xbest <= xf + wc);
        if (k) {   /* steep: the footwall, west, subsides (as the checklist's dip-slip u_z at y = 3) */
            sw_okada_point(&b, NULL, xf - 5e3, yf, u);
            assert_true(u[2] < 0.0);
        }
    }
}

/* Turning a fault's strike by theta and the point about the reference point with it turns the displacement
 * by theta [derived: the half-space is isotropic in the horizontal]; within 1e-13 of the peak. */
static void test_rotation(void **state)
{
    (void)state;
    const double th = 37.0, c = cos(th * PI_ / 180), s = sin(th * PI_ / 180);
    const double xf = -4e3, yf = 7e3;
    const sw_okada_fault f0 = fault(xf, yf, 3e3, 30e3, 12e3, 0, 35, 60);
    sw_okada_fault f1 = f0;
    f1.strike_deg = th;
    for (int k = 0; k < 100; k++) {
        const double e = uniform(-60e3, 60e3), n = uniform(-60e3, 60e3);
        double u0[3], u1[3];
        sw_okada_point(&f0, NULL, xf + e, yf + n, u0);
        /* clockwise by theta: (e, n) -> (e cos + n sin, -e sin + n cos) */
        sw_okada_point(&f1, NULL, xf + e * c + n * s, yf - e * s + n * c, u1);
        const double tol = 1e-13 * fmax(1e-3, norm3(u0)) + 1e-16;
        assert_near(u1[0], u0[0] * c + u0[1] * s, tol);
        assert_near(u1[1], -u0[0] * s + u0[1] * c, tol);
        assert_near(u1[2], u0[2], tol);
    }
}

/* On a geographic grid the local east and north distances are the azimuthal equidistant ones about the
 * reference point: a point placed at true distance r and bearing b from it (destination formula [memory])
 * has the displacement the plane gives at (r sin b, r cos b), at 50 deg N within 1e-9 of the peak (the
 * placement's rounding); at the equator the geographic grid's x = R lambda, y = R phi are the plane's
 * coordinates to second order in r / R [derived: the map's scale error]: within 1e-3 of the peak out to
 * 150 km. */
static void test_geographic(void **state)
{
    (void)state;
    const double R = SW_EARTH_RADIUS_M;
    const sw_grid geo = {.nx = 1, .ny = 1, .dx_m = 1, .dy_m = 1, .kind = SW_GRID_GEOGRAPHIC, .radius_m = R};
    for (int pass = 0; pass < 2; pass++) {
        const double lat = pass == 0 ? 50.0 : 0.0, lon = 141.5;
        const double phi1 = lat * PI_ / 180, lam1 = lon * PI_ / 180;
        sw_okada_fault fg = fault(R * lam1, R * phi1, 4e3, 40e3, 20e3, 200, 25, 95);
        sw_okada_fault fp = fg;
        fp.x_m = 0;
        fp.y_m = 0;
        double peak = 0, worst = 0;
        for (int k = 0; k < 200; k++) {
            const double r = uniform(0, 150e3), b = uniform(0, 2 * PI_);
            const double dl = r / R;
            double ug[3], up[3];
            if (pass == 0) {
                const double phi2 = asin(sin(phi1) * cos(dl) + cos(phi1) * sin(dl) * cos(b));
                const double lam2 = lam1 + atan2(sin(b) * sin(dl) * cos(phi1), cos(dl) - sin(phi1) * sin(phi2));
                sw_okada_point(&fg, &geo, R * lam2, R * phi2, ug);
                sw_okada_point(&fp, NULL, r * sin(b), r * cos(b), up);
            } else {
                sw_okada_point(&fg, &geo, fg.x_m + r * sin(b), fg.y_m + r * cos(b), ug);
                sw_okada_point(&fp, NULL, r * sin(b), r * cos(b), up);
            }
            for (int c = 0; c < 3; c++) {
                worst = fmax(worst, fabs(ug[c] - up[c]));
                peak = fmax(peak, fabs(up[c]));
            }
        }
        if (!(worst <= (pass == 0 ? 1e-9 : 1e-3) * peak))
            print_error("lat %g: worst %g of peak %g\n", lat, worst, peak);
        assert_true(worst <= (pass == 0 ? 1e-9 : 1e-3) * peak);
    }
}

/* A field of several faults on grid g: the same bits as sw_okada_point summed over the faults in index
 * order at every cell centre, for 1 and 2 threads, and for the vertical part alone. */
static void check_field_matches_points(const sw_okada_fault *f, size_t n, const sw_grid *g)
{
    const size_t cells = sw_grid_cells(g);
    double *ux = calloc(cells, sizeof *ux), *uy = calloc(cells, sizeof *uy), *uz = calloc(cells, sizeof *uz);
    double *ref = calloc(3 * cells, sizeof *ref), *uz2 = calloc(cells, sizeof *uz2), *ux1 = calloc(cells, sizeof *ux1);
    assert_true(ux && uy && uz && ref && uz2 && ux1);
    for (size_t j = 0; j < g->ny; j++)
        for (size_t i = 0; i < g->nx; i++)
            for (size_t k = 0; k < n; k++) {
                double u[3];
                sw_okada_point(&f[k], g, sw_grid_xc(g, i), sw_grid_yc(g, j), u);
                for (int c = 0; c < 3; c++)
                    ref[c * cells + j * g->nx + i] += u[c];
            }
    sw_error err = {0};
    for (int threads = 1; threads <= 2; threads++) {
        omp_set_num_threads(threads);
        memset(ux, 0, cells * sizeof *ux);
        memset(uy, 0, cells * sizeof *uy);
        memset(uz, 0, cells * sizeof *uz);
        assert_int_equal(sw_okada_field(f, n, g, 0.0, ux, uy, uz, &err), SW_OK);
        assert_memory_equal(ux, ref, cells * sizeof *ux);
        assert_memory_equal(uy, ref + cells, cells * sizeof *uy);
        assert_memory_equal(uz, ref + 2 * cells, cells * sizeof *uz);
        /* the vertical part alone, and one horizontal part alone: the same bits */
        memset(uz2, 0, cells * sizeof *uz2);
        assert_int_equal(sw_okada_field(f, n, g, 0.0, NULL, NULL, uz2, &err), SW_OK);
        assert_memory_equal(uz2, ref + 2 * cells, cells * sizeof *uz2);
        memset(ux1, 0, cells * sizeof *ux1);
        assert_int_equal(sw_okada_field(f, n, g, -1.0, ux1, NULL, NULL, &err), SW_OK);
        assert_memory_equal(ux1, ref, cells * sizeof *ux1);
    }
    omp_set_num_threads(2);
    free(ux);
    free(uy);
    free(uz);
    free(ref);
    free(uz2);
    free(ux1);
}

/* The grid evaluation equals the point evaluation bit for bit, on a projected grid and on a geographic
 * one, for any thread count; faults include a vertical one and one reaching the surface, whose trace's
 * corners fall on cell centres [derived: one code path, each cell's faults summed in index order]. */
static void test_field(void **state)
{
    (void)state;
    const sw_grid plane = {.nx = 67, .ny = 45, .dx_m = 2e3, .dy_m = 2e3, .x0_m = -60e3, .y0_m = -40e3};
    const sw_okada_fault f[3] = {
        fault(1e3, 1e3, 3e3, 30e3, 15e3, 30, 25, 90),
        fault(-21e3, -5e3, 0.0, 20e3, 10e3, 0, 90, 0),   /* vertical, trace from y = -15 to 5 km on centres */
        fault(15e3, -11e3, 0.0, 12e3, 8e3, 90, 60, 120), /* reaching the surface */
    };
    check_field_matches_points(f, 3, &plane);

    const double R = SW_EARTH_RADIUS_M, deg = R * PI_ / 180;
    const sw_grid sphere = {.nx = 41, .ny = 37, .dx_m = 0.05 * deg, .dy_m = 0.05 * deg, .x0_m = 140.0 * deg,
                            .y0_m = 38.0 * deg, .kind = SW_GRID_GEOGRAPHIC, .radius_m = R};
    const sw_okada_fault fg[2] = {
        fault(141.0 * deg, 38.9 * deg, 5e3, 40e3, 20e3, 195, 15, 88),
        fault(140.6 * deg, 39.3 * deg, 1e3, 15e3, 10e3, 10, 70, -30),
    };
    check_field_matches_points(fg, 2, &sphere);
}

/* The window (okada.h): with cutoff c a fault adds to every cell within reach = c (L + W + depth) of its
 * surface projection (the value sw_okada_point gives, bit for bit) and to no cell farther than
 * reach + sqrt((L/2)^2 + (W cos dip)^2) from its reference point (0 there) [derived from the contract];
 * on a projected and on a geographic grid (true distances from the reference point, haversine). */
static void test_window(void **state)
{
    (void)state;
    const double R = SW_EARTH_RADIUS_M, deg = R * PI_ / 180;
    for (int geo = 0; geo < 2; geo++) {
        sw_grid g = {.nx = 160, .ny = 140, .dx_m = 1e3, .dy_m = 1e3, .x0_m = -80e3, .y0_m = -70e3};
        if (geo) {
            g = (sw_grid){.nx = 160, .ny = 140, .dx_m = 0.01 * deg, .dy_m = 0.01 * deg, .x0_m = 20.0 * deg,
                          .y0_m = 44.0 * deg, .kind = SW_GRID_GEOGRAPHIC, .radius_m = R};
        }
        const double xf = g.x0_m + 81.3 * g.dx_m, yf = g.y0_m + 69.7 * g.dy_m;
        const sw_okada_fault f = fault(xf, yf, 2e3, 8e3, 4e3, 50, 40, 90);
        const double cutoff = 3.0, reach = cutoff * (8e3 + 4e3 + 2e3);
        const double cd = cos(40 * PI_ / 180), sd_ = sin(50 * PI_ / 180), cs_ = cos(50 * PI_ / 180);
        const double outer = reach + sqrt(16e6 + 16e6 * cd * cd);
        const size_t cells = sw_grid_cells(&g);
        double *uz = calloc(cells, sizeof *uz);
        assert_non_null(uz);
        sw_error err = {0};
        assert_int_equal(sw_okada_field(&f, 1, &g, cutoff, NULL, NULL, uz, &err), SW_OK);
        size_t inside = 0, outside = 0;
        for (size_t j = 0; j < g.ny; j++)
            for (size_t i = 0; i < g.nx; i++) {
                const double x = sw_grid_xc(&g, i), y = sw_grid_yc(&g, j);
                double e, n, dist;
                if (geo) {   /* azimuthal equidistant offsets: distance by the haversine, bearing */
                    const double p1 = yf / R, p2 = y / R, dl = (x - xf) / R;
                    const double h = sin(0.5 * (p2 - p1)) * sin(0.5 * (p2 - p1))
                                   + cos(p1) * cos(p2) * sin(0.5 * dl) * sin(0.5 * dl);
                    dist = 2 * R * asin(sqrt(h));
                    const double be = sin(dl) * cos(p2), bn = cos(p1) * sin(p2) - sin(p1) * cos(p2) * cos(dl);
                    const double bh = hypot(be, bn);
                    e = bh > 0 ? dist * be / bh : 0;
                    n = bh > 0 ? dist * bn / bh : 0;
                } else {
                    e = x - xf;
                    n = y - yf;
                    dist = hypot(e, n);
                }
                /* distance from the surface projection: along in [-L/2, L/2], across (right of strike)
                 * in [0, W cos dip] */
                const double a = e * sd_ + n * cs_, r = e * cs_ - n * sd_;
                const double da = fmax(0, fabs(a) - 4e3), dr = fmax(0, fmax(-r, r - 4e3 * cd));
                const double dproj = hypot(da, dr);
                double u[3];
                sw_okada_point(&f, &g, x, y, u);
                if (dproj <= reach * (1 - 1e-9)) {
                    assert_memory_equal(&uz[j * g.nx + i], &u[2], sizeof u[2]);
                    inside++;
                }
                if (dist >= outer * (1 + 1e-9)) {
                    assert_true(uz[j * g.nx + i] == 0.0);
                    outside++;
                }
            }
        assert_true(inside > 1000 && outside > 1000);
        free(uz);
    }
}

/* Points where the paper's terms are singular give finite values: the top corners and trace of faults
 * reaching the surface (R = 0, R + xi = 0, q = 0), the lines through the fault's ends (xi = 0), on dipping
 * and vertical faults. Off a buried fault the displacement is continuous, also where q = 0, the surface
 * line in the fault's plane: there the rule atan(xi eta / (q R)) = 0 (Okada 1985) gives the mean of the
 * two sides [derived]. On a vertical fault q = y exactly on its strike line; on a dipping one (30 deg)
 * where its plane, extended up dip, meets the surface (q = 0 up to rounding). Checked at +-1e-4 m: the two
 * sides within 1e-6 m, the middle their mean within 1e-9 m. */
static void test_singular_points(void **state)
{
    (void)state;
    const double L = 10e3, W = 6e3;
    for (int v = 0; v < 2; v++) {
        const double dip = v ? 90 : 30, cd = v ? 0 : cos(30 * PI_ / 180);
        for (int rake = -90; rake <= 180; rake += 90) {
            sw_okada_fault f = fault(0, 0, 0.0, L, W, 90, dip, rake);   /* trace along x from -L/2 to L/2 */
            f.opening_m = 0.3;
            const double xs[7] = {-L / 2, L / 2, 0.0, -L, L, -L / 2 - 1.0, L / 2 + 1.0};
            const double ys[5] = {0.0, -W * cd, -W * cd / 2, 1e3, -1e3};
            for (int i = 0; i < 7; i++)
                for (int j = 0; j < 5; j++) {
                    double u[3];
                    sw_okada_point(&f, NULL, xs[i], ys[j], u);
                    assert_true(isfinite(u[0]) && isfinite(u[1]) && isfinite(u[2]));
                }
        }
    }
    /* buried (top edge 2 km deep), strike 90: vertical, q = 0 on y = 0; dipping 30 deg to the south, q = 0
     * north of the trace at y = depth / tan(dip) */
    const double depth = 2e3;
    for (int v = 0; v < 2; v++) {
        const double yq = v ? 0.0 : depth / tan(30 * PI_ / 180);
        sw_okada_fault f = fault(0, 0, depth, L, W, 90, v ? 90 : 30, 70);
        f.opening_m = 0.2;
        for (int k = 0; k < 3; k++) {
            const double x = (k - 1) * 0.7 * L;   /* beyond, over and beyond the ends */
            double m[3], a[3], b[3];
            sw_okada_point(&f, NULL, x, yq, m);
            sw_okada_point(&f, NULL, x, yq + 1e-4, a);
            sw_okada_point(&f, NULL, x, yq - 1e-4, b);
            for (int c = 0; c < 3; c++) {
                assert_near(a[c], b[c], 1e-6);
                assert_near(m[c], 0.5 * (a[c] + b[c]), 1e-9);
            }
        }
    }
}

/* M0 = mu L W slip and Mw = (2/3)(log10 M0 - 9.1) (Hanks & Kanamori 1979 [memory]), by hand:
 * L = 100 km, W = 50 km, slip 2 m, mu = 3e10 Pa: M0 = 3e10 * 1e5 * 5e4 * 2 = 3e20 N m;
 * log10(3e20) = 20 + log10(3) = 20.477121254719662; minus 9.1: 11.377121254719662; times 2/3:
 * Mw = 7.584747503146441. And M0 = 10^22.6 N m gives Mw = (2/3)(22.6 - 9.1) = 9 [derived]. */
static void test_moment_magnitude(void **state)
{
    (void)state;
    const sw_okada_fault f = {.length_m = 100e3, .width_m = 50e3, .slip_m = 2.0, .dip_deg = 30, .poisson = 0.25};
    const double m0 = sw_okada_moment(&f, 3e10);
    assert_near(m0, 3e20, 1e5);
    assert_near(sw_moment_magnitude(m0), 7.584747503146441, 1e-12);
    assert_near(sw_moment_magnitude(pow(10.0, 22.6)), 9.0, 1e-12);
    assert_true(isinf(sw_moment_magnitude(0.0)) && sw_moment_magnitude(0.0) < 0);
}

/* A bad fault: SW_ERR_RANGE, one line naming the fault's index, the key and the accepted range; nothing
 * written. A geographic grid without a radius: SW_ERR_USAGE. */
static void test_bad_inputs(void **state)
{
    (void)state;
    const sw_grid g = {.nx = 8, .ny = 6, .dx_m = 1e3, .dy_m = 1e3};
    static const struct {
        const char *key;   /* the key the message must name */
        double value;
        const char *range; /* what the message must say is accepted */
    } cases[] = {
        {"dip", 0.0, "0 < dip <= 90"},    {"dip", 95.0, "0 < dip <= 90"},   {"dip", -10.0, "0 < dip <= 90"},
        {"length", 0.0, "> 0"},           {"width", -5e3, "> 0"},           {"depth", -1.0, ">= 0"},
        {"slip", -1.0, ">= 0"},           {"poisson", 0.5, "0 < poisson < 0.5"},
        {"poisson", 0.0, "0 < poisson < 0.5"}, {"strike", INFINITY, "finite"}, {"rake", NAN, "finite"},
        {"x", NAN, "finite"},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        sw_okada_fault f[2] = {fault(0, 0, 1e3, 5e3, 3e3, 0, 45, 90), fault(0, 0, 1e3, 5e3, 3e3, 0, 45, 90)};
        sw_okada_fault *b = &f[1];
        const char *key = cases[k].key;
        double *slot = !strcmp(key, "dip")       ? &b->dip_deg
                       : !strcmp(key, "length")  ? &b->length_m
                       : !strcmp(key, "width")   ? &b->width_m
                       : !strcmp(key, "depth")   ? &b->depth_m
                       : !strcmp(key, "slip")    ? &b->slip_m
                       : !strcmp(key, "poisson") ? &b->poisson
                       : !strcmp(key, "strike")  ? &b->strike_deg
                       : !strcmp(key, "rake")    ? &b->rake_deg
                                                 : &b->x_m;
        *slot = cases[k].value;
        double uz[48];
        for (int i = 0; i < 48; i++)
            uz[i] = 7.0;
        sw_error err = {0};
        assert_int_equal(sw_okada_field(f, 2, &g, 20.0, NULL, NULL, uz, &err), SW_ERR_RANGE);
        if (!strstr(err.msg, "fault 1") || !strstr(err.msg, key) || !strstr(err.msg, cases[k].range))
            print_error("message: %s\n", err.msg);
        assert_non_null(strstr(err.msg, "fault 1: "));
        assert_non_null(strstr(err.msg, key));
        assert_non_null(strstr(err.msg, cases[k].range));
        assert_null(strchr(err.msg, '\n'));
        for (int i = 0; i < 48; i++)
            assert_true(uz[i] == 7.0);
    }
    const sw_okada_fault ok = fault(0, 0, 1e3, 5e3, 3e3, 0, 45, 90);
    const sw_grid bad = {.nx = 4, .ny = 4, .dx_m = 1, .dy_m = 1, .kind = SW_GRID_GEOGRAPHIC, .radius_m = 0};
    double uz[16] = {0};
    sw_error err = {0};
    assert_int_equal(sw_okada_field(&ok, 1, &bad, 20.0, NULL, NULL, uz, &err), SW_ERR_USAGE);
    assert_non_null(strstr(err.msg, "radius"));
    /* no faults, or nothing wanted: fine and nothing written */
    assert_int_equal(sw_okada_field(NULL, 0, &g, 20.0, NULL, NULL, uz, &err), SW_OK);
    assert_int_equal(sw_okada_field(&ok, 1, &g, 20.0, NULL, NULL, NULL, &err), SW_OK);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_checklist),
        cmocka_unit_test(test_literal_agreement),
        cmocka_unit_test(test_vertical_symmetry),
        cmocka_unit_test(test_vertical_limit),
        cmocka_unit_test(test_far_field),
        cmocka_unit_test(test_conventions),
        cmocka_unit_test(test_rotation),
        cmocka_unit_test(test_geographic),
        cmocka_unit_test(test_field),
        cmocka_unit_test(test_window),
        cmocka_unit_test(test_singular_points),
        cmocka_unit_test(test_moment_magnitude),
        cmocka_unit_test(test_bad_inputs),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
