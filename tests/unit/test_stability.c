/* test_stability.c - the von Neumann analysis (stability.c) against published and derived formulas,
 * and against the model itself.
 *
 * Sources (see docs/references.md):
 *  - Forward-backward step [derived, docs/references.md "Fully discrete answer"]: a mode of semi-discrete
 *    frequency omega has lambda^2 - (2 - p^2) lambda + 1 = 0, p = omega dt: neutral iff p <= 2, and then
 *    cos(W dt) = 1 - p^2 / 2.
 *  - Semi-discrete frequencies (no rotation, square cells, c = sqrt(g h) dt / dx, a = k dx / 2,
 *    b = l dy / 2), Arakawa & Lamb (1977), Randall (1994) [citations seen; formulas memory, re-derived in
 *    the layout files]:
 *      A: (omega dt)^2 = c^2 (sin^2 2a + sin^2 2b)
 *      B: (omega dt)^2 = 4 c^2 (sin^2 a cos^2 b + cos^2 a sin^2 b)
 *      C: (omega dt)^2 = 4 c^2 (sin^2 a + sin^2 b)
 *    D: c^2 (sin^2 2a cos^2 b + cos^2 a sin^2 2b) and E: as A [derived in docs/stability.md from the
 *    stencils documented in layout_d.c / layout_e.c];
 *    and with rotation (lambda_R / d = c / (f dt)), with the averaging factor w = 1 for A, B (E) and
 *    w = cos a cos b for C (D):  (omega / f)^2 = w^2 + (lambda_R / d)^2 (omega_0 dt)^2 / c^2, omega_0 the
 *    frequency without rotation; e.g. C: cos^2 a cos^2 b + 4 (lambda_R / d)^2 (sin^2 a + sin^2 b).
 *  - Courant limits: A 1D 2 (common practice; a well-known textbook result), A 2D sqrt(2), C 1D 1, C 2D
 *    1/sqrt(2) [derived from max omega: A at k dx = l dy = pi/2, C at the 2-cell wave].
 *  - With rotation, the model's step (docs/terms.md: u from the old v, then v from the new u) [derived in
 *    docs/stability.md, checked symbolically with sympy]: for symbols Dx = Gx = i sx, Dy = Gy = i sy and
 *    real averaging w = v_at_u = u_at_v, det(lambda I - M) = (lambda - 1) (lambda^2 - (2 - Q) lambda + 1)
 *    with Q = P + F^2 w^2 - F w c^2 sx sy, P = c^2 (sx^2 + sy^2), F = f dt: neutral iff 0 <= Q <= 4, and
 *    then cos(W dt) = 1 - Q / 2. At k = 0 (Q = F^2): the inertial oscillation, Omega dt = acos(1 - F^2 / 2),
 *    neutral while |F| <= 2. Courant limits with rotation [derived there]: 1D A, E sqrt(4 - F^2), B
 *    sqrt(1 - F^2 / 4), C 1, D 1 + sqrt(1 - F^2 / 4); 2D A, E sqrt(2 - |F|), B sqrt(1 - F^2 / 4), C 1/sqrt(2)
 *    (for |F| <= sqrt(5) - 1); every layout at least c0 sqrt((1 - F^2 / 4) / (1 + |F| / 2)), c0 the limit
 *    without rotation (the bound the model's set-up uses).
 * Every layout in the registry is tested where the check does not need its formula; those with a formula
 * above also against it (a check is skipped when the build lacks its layout).
 */
#include <complex.h>
#include <math.h>
#include <netcdf.h>
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <cmocka.h>

#include "model/layout.h"
#include "model/model.h"
#include "studies/stability.h"
#include "testutil.h"

#define PI 3.14159265358979323846
#define G 9.81

/* ---- helpers -------------------------------------------------------------------------------- */

static const sw_layout *need(const char *name)
{
    return sw_layout_find(name);
}

/* Semi-discrete (omega dt)^2 without rotation, a = k dx / 2, b = l dy / 2. A, B, C: docs/references.md (Arakawa &
 * Lamb 1977; Randall 1994) [formulas memory, re-derived]; D, E: [derived] in docs/stability.md from the
 * stencils written at the top of layout_d.c and layout_e.c. Returns -1 for a layout without one. */
static double p2_published(const char *name, double c, double kdx, double ldy)
{
    double a = kdx / 2, b = ldy / 2, sa = sin(a), sb = sin(b), ca = cos(a), cb = cos(b);
    switch (name[0]) {
    case 'A':
    case 'E':
        return c * c * (sin(kdx) * sin(kdx) + sin(ldy) * sin(ldy));
    case 'B':
        return 4 * c * c * (sa * sa * cb * cb + ca * ca * sb * sb);
    case 'C':
        return 4 * c * c * (sa * sa + sb * sb);
    case 'D':
        return c * c * (sin(kdx) * sin(kdx) * cb * cb + ca * ca * sin(ldy) * sin(ldy));
    default:
        return -1;
    }
}

/* The product sx sy of the gradient symbols (Dx = i sx, Dy = i sy) of the layouts above, for the rotating
 * step's Q (header). */
static double sxsy_published(const char *name, double kdx, double ldy)
{
    double a = kdx / 2, b = ldy / 2, sa = sin(a), sb = sin(b), ca = cos(a), cb = cos(b);
    switch (name[0]) {
    case 'A':
    case 'E':
        return sin(kdx) * sin(ldy);
    case 'B':
        return 4 * sa * cb * ca * sb;
    case 'C':
        return 4 * sa * sb;
    case 'D':
        return sin(kdx) * cb * ca * sin(ldy);
    default:
        return NAN;
    }
}

/* The Courant limit of the rotating step, F = f dt, where derived (header); NAN where not (D in 2D). */
static double limit_rotating(const char *name, int dims, double F)
{
    const double f = fabs(F);
    switch (name[0]) {
    case 'A':
    case 'E':
        return dims == 1 ? sqrt(4 - F * F) : sqrt(2 - f);
    case 'B':
        return sqrt(1 - F * F / 4);
    case 'C':
        return dims == 1 ? 1.0 : sqrt(0.5);
    case 'D':
        return dims == 1 ? 1 + sqrt(1 - F * F / 4) : NAN;
    default:
        return NAN;
    }
}

/* Scans are the slow part: each (layout, dims, rotation) is scanned once and kept. */
static const sw_stab_limit *scan_cached(size_t q, int dims, int rotating)
{
    static sw_stab_limit cache[32][2][2];
    static int have[32][2][2];
    assert_true(q < 32);
    if (!have[q][dims - 1][rotating]) {
        sw_error err = {0};
        sw_stab_limit *out = &cache[q][dims - 1][rotating];
        assert_int_equal(sw_stab_limit_scan(sw_layout_at(q), rotating ? 0.3 : 0.0, dims, out, &err), SW_OK);
        have[q][dims - 1][rotating] = 1;
    }
    return &cache[q][dims - 1][rotating];
}

/* (omega dt)^2 from any layout's symbols: -c^2 (Dx Gx + Dy Gy) (layout.h). */
static double p2_symbols(const sw_layout *lay, double c, double kdx, double ldy)
{
    sw_symbols s;
    lay->symbols(kdx, ldy, 1.0, 1.0, &s);
    return -c * c * creal(s.div_x * s.grad_x + s.div_y * s.grad_y);
}

/* ---- the cubic ------------------------------------------------------------------------------ */

/* Largest distance from each known root to the nearest computed one (and back). */
static double root_error(const double complex want[3], const double complex got[3])
{
    double worst = 0;
    for (int a = 0; a < 3; a++) {
        double best = INFINITY, best2 = INFINITY;
        for (int b = 0; b < 3; b++) {
            if (cabs(want[a] - got[b]) < best)
                best = cabs(want[a] - got[b]);
            if (cabs(got[a] - want[b]) < best2)
                best2 = cabs(got[a] - want[b]);
        }
        worst = fmax(worst, fmax(best, best2));
    }
    return worst;
}

/* Roots of cubics built from known roots (z - r0)(z - r1)(z - r2) [derived: Vieta]. */
static void test_cubic_roots(void **state)
{
    (void)state;
    const double complex cases[][3] = {
        {1, 2 * I, -0.5 + 0.3 * I},
        {0, CMPLX(0.01, 0.2), CMPLX(0.01, -0.2)},    /* like N near k = 0 */
        {-2, -2 + 1e-3 * I, 0.5},                    /* close pair */
        {1e-9, -1e-9, 3},                            /* tiny pair next to a big root */
        {0, 0, 0},                                   /* triple at 0 */
    };
    const double tol[] = {1e-14, 1e-15, 1e-12, 1e-15, 0};
    for (size_t q = 0; q < sizeof cases / sizeof cases[0]; q++) {
        const double complex *r = cases[q];
        double complex b = -(r[0] + r[1] + r[2]);
        double complex c = r[0] * r[1] + r[0] * r[2] + r[1] * r[2];
        double complex d = -r[0] * r[1] * r[2];
        double complex z[3];
        sw_stab_cubic_roots(b, c, d, z);
        double e = root_error(r, z);
        print_message("cubic %zu: worst root error %.3g\n", q, e);
        assert_true(e <= tol[q]);
    }
    /* a double root keeps about half the digits: (z - 0.3)^2 (z + 1) */
    double complex r[3] = {0.3, 0.3, -1}, z[3];
    sw_stab_cubic_roots(-(r[0] + r[1] + r[2]), r[0] * r[1] + r[0] * r[2] + r[1] * r[2], -r[0] * r[1] * r[2], z);
    print_message("cubic double root: error %.3g\n", root_error(r, z));
    assert_true(root_error(r, z) < 1e-7);
}

/* ---- limits --------------------------------------------------------------------------------- */

/* For every layout in the registry: without rotation the scanned limit equals the closed form
 * 2 / max_frequency to 1e-6, in 1D and 2D; with f dt = 0.3 it equals the derived rotating limit (header)
 * to 1e-6 where there is one, and lies between the set-up's bound and the limit without rotation. */
static void test_scan_equals_closed_form(void **state)
{
    (void)state;
    assert_true(sw_layout_count() >= 1);
    for (size_t q = 0; q < sw_layout_count(); q++) {
        const sw_layout *lay = sw_layout_at(q);
        for (int dims = 1; dims <= 2; dims++)
            for (int r = 0; r < 2; r++) {
                double f_dt = r ? 0.3 : 0.0;
                sw_stab_limit lim = *scan_cached(q, dims, r);
                double closed = sw_stab_limit_closed(lay, dims);
                double want = r ? limit_rotating(lay->name, dims, f_dt) : closed;
                double bound = closed * sqrt((1 - f_dt * f_dt / 4) / (1 + fabs(f_dt) / 2));
                double rel = isnan(want) ? NAN : fabs(lim.courant - want) / want;
                print_message("%s %dD f dt %.1f: closed %.12f scan %.12f derived %.12f (rel %.2g) bound %.6f "
                              "at (%.4f pi, %.4f pi), %zu modes\n", lay->name, dims, f_dt, closed, lim.courant, want,
                              rel, bound, lim.kdx / PI, lim.ldy / PI, lim.modes);
                assert_true(closed > 0);
                if (!isnan(want))
                    assert_true(rel < 1e-6);
                assert_true(lim.courant >= bound * (1 - 1e-9) && lim.courant <= closed * (1 + 1e-9));
            }
    }
}

/* The known values: A 2 and sqrt(2), C 1 and 1/sqrt(2) (docs/references.md; header). */
static void test_known_limits(void **state)
{
    (void)state;
    const struct { const char *name; double l1, l2; } known[] = {
        {"A", 2.0, 1.4142135623730951},   /* 1D: common practice / textbook [memory]; 2D [derived] */
        {"C", 1.0, 0.7071067811865476},   /* [derived] */
    };
    int seen = 0;
    for (size_t q = 0; q < 2; q++) {
        const sw_layout *lay = need(known[q].name);
        if (!lay)
            continue;
        seen++;
        sw_stab_limit s1 = {0}, s2 = {0};
        for (size_t r = 0; r < sw_layout_count(); r++)
            if (sw_layout_at(r) == lay) {
                s1 = *scan_cached(r, 1, 0);
                s2 = *scan_cached(r, 2, 0);
            }
        print_message("%s: 1D %.12f (want %g), 2D %.12f (want %.12f)\n", known[q].name, s1.courant, known[q].l1,
                      s2.courant, known[q].l2);
        assert_true(fabs(sw_stab_limit_closed(lay, 1) - known[q].l1) < 1e-12);
        assert_true(fabs(sw_stab_limit_closed(lay, 2) - known[q].l2) < 1e-12);
        assert_true(fabs(s1.courant - known[q].l1) < 1e-9);
        assert_true(fabs(s2.courant - known[q].l2) < 1e-9);
    }
    if (!seen)
        skip();
}

/* A made-up layout whose highest frequency lies between the scan's grid points: sin(0.77 k) peaks at
 * k dx = pi / 1.54 = 2.040 rad, 83.1 grid steps from 0. Its closed-form limit is still 2 (1D) and
 * sqrt(2) (2D): the scan must refine to find it (the bare grid alone is off by 1.4e-4). */
static double odd_max_frequency(double gh, double dx, double dy, int dims)
{
    return sqrt(gh * (1 / (dx * dx) + (dims == 2 ? 1 / (dy * dy) : 0)));
}
static void odd_symbols(double k, double l, double dx, double dy, sw_symbols *o)
{
    o->div_x = o->grad_x = I * sin(0.77 * k * dx) / dx;
    o->div_y = o->grad_y = I * sin(0.77 * l * dy) / dy;
    o->v_at_u = o->u_at_v = 1;
}
static void test_scan_refines_off_grid_maximum(void **state)
{
    (void)state;
    const sw_layout odd = {.name = "X", .summary = "test", .max_frequency = odd_max_frequency,
                           .symbols = odd_symbols};
    for (int dims = 1; dims <= 2; dims++) {
        sw_stab_limit lim;
        assert_int_equal(sw_stab_limit_scan(&odd, 0.0, dims, &lim, NULL), SW_OK);
        double closed = sw_stab_limit_closed(&odd, dims);
        print_message("off-grid %dD: closed %.12f scan %.12f at k dx = %.6f (peak %.6f)\n", dims, closed,
                      lim.courant, lim.kdx, PI / 1.54);
        assert_true(fabs(lim.courant - closed) / closed < 1e-6);
        assert_true(fabs(fabs(lim.kdx) - PI / 1.54) < 1e-3);
    }
}

static void test_scan_errors(void **state)
{
    (void)state;
    const sw_layout *lay = sw_layout_at(0);
    sw_stab_limit lim;
    sw_error err = {0};
    assert_int_equal(sw_stab_limit_scan(lay, 0.0, 3, &lim, &err), SW_ERR_USAGE);
    assert_non_null(strstr(err.msg, "1 or 2"));
    assert_int_equal(sw_stab_limit_scan(lay, NAN, 2, &lim, &err), SW_ERR_USAGE);
    assert_int_equal(sw_stab_limit_scan(NULL, 0.0, 2, &lim, &err), SW_ERR_USAGE);
    assert_true(isnan(sw_stab_limit_closed(lay, 0)));
}

/* ---- amplification -------------------------------------------------------------------------- */

/* Every layout: just below the limit (the scanned one: with rotation it may lie below the closed form)
 * every |lambda| is 1 to 1e-12 on a 65 x 65 grid of the plane (and the channel), with and without
 * rotation; just above, the first mode to grow has |lambda| > 1.01 (p = 2.002 gives |lambda| = 1.09
 * [derived from the quadratic]). */
static void test_neutral_below_growth_above(void **state)
{
    (void)state;
    for (size_t q = 0; q < sw_layout_count(); q++) {
        const sw_layout *lay = sw_layout_at(q);
        for (int dims = 1; dims <= 2; dims++)
            for (int r = 0; r < 2; r++) {
                const sw_stab_limit s = *scan_cached(q, dims, r);
                double f_dt = r ? 0.3 : 0.0, lim = s.courant;
                double lo = 1, hi = 1;
                const int n = 65;
                for (int j = 0; j < (dims == 2 ? n : 1); j++)
                    for (int i = 0; i < n; i++) {
                        double k = -PI + 2 * PI * i / (n - 1), l = dims == 2 ? -PI + 2 * PI * j / (n - 1) : 0;
                        sw_stab_mode m;
                        sw_stab_mode_eval(lay, k, l, 0.999 * lim, f_dt, &m);
                        for (int e = 0; e < 3; e++) {
                            lo = fmin(lo, cabs(m.lambda[e]));
                            hi = fmax(hi, cabs(m.lambda[e]));
                        }
                    }
                sw_stab_mode above;
                sw_stab_mode_eval(lay, s.kdx, s.ldy, 1.001 * lim, f_dt, &above);
                print_message("%s %dD f dt %.1f: 0.999 limit |lambda| in [1 %+.2g, 1 %+.2g]; 1.001 limit %.6f\n",
                              lay->name, dims, f_dt, lo - 1, hi - 1, above.amp);
                assert_true(hi - 1 < 1e-12 && 1 - lo < 1e-12);
                assert_true(above.amp > 1.01);
            }
    }
}

/* The analysed frequency is the fully discrete cos(W dt) = 1 - p^2 / 2: for every layout with p from its
 * symbols, and where a formula is known (p2_published) with that p; 2D grid, c = 0.9 of the limit. */
static void test_discrete_frequency(void **state)
{
    (void)state;
    for (size_t q = 0; q < sw_layout_count(); q++) {
        const sw_layout *lay = sw_layout_at(q);
        const int published = p2_published(lay->name, 1, 0.3, 0.2) >= 0;
        double c = 0.9 * sw_stab_limit_closed(lay, 2), worst = 0, worst_sym = 0;
        const int n = 33;
        for (int j = 0; j < n; j++)
            for (int i = 0; i < n; i++) {
                double k = -PI + 2 * PI * i / (n - 1), l = -PI + 2 * PI * j / (n - 1);
                sw_stab_mode m;
                sw_stab_mode_eval(lay, k, l, c, 0.0, &m);
                worst_sym = fmax(worst_sym, fabs(cos(m.omega_dt) - (1 - p2_symbols(lay, c, k, l) / 2)));
                if (published)
                    worst = fmax(worst, fabs(cos(m.omega_dt) - (1 - p2_published(lay->name, c, k, l) / 2)));
            }
        if (published)
            print_message("%s: |cos(W dt) - (1 - p^2/2)| <= %.2g (p from symbols), %.2g (p from the formula)\n",
                          lay->name, worst_sym, worst);
        else
            print_message("%s: |cos(W dt) - (1 - p^2/2)| <= %.2g (p from symbols; no formula for it)\n",
                          lay->name, worst_sym);
        assert_true(worst_sym < 1e-13);
        assert_true(worst < 1e-13);
    }
}

/* k = 0 with rotation: the inertial oscillation of the model's step, Omega dt = acos(1 - F^2 / 2) and
 * |lambda| = 1 while |F| <= 2 (F = f dt; header, [derived]); beyond, it grows. Every layout. */
static void test_rotation_k0(void **state)
{
    (void)state;
    const double fdts[] = {1e-3, 0.3, 1.5, -0.7, 1.99, 2.5};
    for (size_t q = 0; q < sw_layout_count(); q++) {
        const sw_layout *lay = sw_layout_at(q);
        for (size_t r = 0; r < sizeof fdts / sizeof fdts[0]; r++) {
            const double F = fdts[r];
            sw_stab_mode m;
            sw_stab_mode_eval(lay, 0, 0, 0.5 * sw_stab_limit_closed(lay, 2), F, &m);
            if (fabs(F) > 2) {
                print_message("%s f dt %5.3f: |lambda| = %.6f (grows)\n", lay->name, F, m.amp);
                assert_true(m.amp > 1.5);
                continue;
            }
            double want = acos(1 - F * F / 2);
            print_message("%s f dt %5.3f: Omega dt %.15f, acos(1 - F^2/2) %.15f, |lambda| - 1 = %.2g\n",
                          lay->name, F, m.omega_dt, want, m.amp - 1);
            assert_true(fabs(m.omega_dt - want) < 1e-9);
            assert_true(fabs(m.amp - 1) < 1e-12);
        }
    }
}

/* The averaging factor w of the rotating formulas (docs/references.md): 1 where u and v share a point (A, B; E
 * [derived]), cos a cos b where they sit on different faces (C; D [derived]); -1 when unknown. */
static double w_published(const char *name, double kdx, double ldy)
{
    switch (name[0]) {
    case 'A':
    case 'B':
    case 'E':
        return 1.0;
    case 'C':
    case 'D':
        return cos(kdx / 2) * cos(ldy / 2);
    default:
        return -1;
    }
}

/* With rotation at any k, every layout with a known formula: the derived quadratic factor (header)
 * cos(W dt) = 1 - Q / 2, Q = P + F^2 w^2 - F w c^2 sx sy, to 1e-13; and at small dt the frequency tends to
 * the published semi-discrete one with rotation, (w / f)^2 = w^2 + (lambda_R / d)^2 P / c^2 (Arakawa &
 * Lamb), to 1e-6 at c = 1e-7 (the cross term F w c^2 sx sy makes the step's error in the frequency of
 * oblique waves first order in f dt: 1.1e-5 at c = 1e-4, docs/terms.md). */
static void test_rotation_formulas(void **state)
{
    (void)state;
    int seen = 0;
    for (size_t q = 0; q < sw_layout_count(); q++) {
        const sw_layout *lay = sw_layout_at(q);
        if (w_published(lay->name, 0, 0) < 0 || p2_published(lay->name, 1, 0, 0) < 0)
            continue;
        seen++;
        double worst = 0, worst_semi = 0;
        const int n = 17;
        for (int j = 0; j < n; j++)
            for (int i = 0; i < n; i++) {
                double k = -PI + 2 * PI * i / (n - 1), l = -PI + 2 * PI * j / (n - 1);
                double w = w_published(lay->name, k, l);
                /* fully discrete */
                double c = 0.8 * limit_rotating(lay->name, 1, 0.4) / sw_stab_limit_closed(lay, 1)
                           * sw_stab_limit_closed(lay, 2) * 0.9, F = 0.4;
                double Q = p2_published(lay->name, c, k, l) + F * F * w * w - F * w * c * c * sxsy_published(lay->name, k, l);
                sw_stab_mode m;
                sw_stab_mode_eval(lay, k, l, c, F, &m);
                worst = fmax(worst, fabs(cos(m.omega_dt) - (1 - Q / 2)));
                /* semi-discrete limit: lambda_R / d = c / (f dt) = 2 cells, c = 1e-7 */
                double cs = 1e-7, fs = cs / 2.0, ratio = cs / fs;
                double wf2 = w * w + ratio * ratio * p2_published(lay->name, 1.0, k, l);
                sw_stab_mode ms;
                sw_stab_mode_eval(lay, k, l, cs, fs, &ms);
                worst_semi = fmax(worst_semi, fabs(ms.omega_dt / (fs * sqrt(wf2)) - 1));
            }
        print_message("%s rotating: fully discrete cos error %.2g; semi-discrete limit rel. error %.2g\n",
                      lay->name, worst, worst_semi);
        assert_true(worst < 1e-13);
        assert_true(worst_semi < 1e-6);
    }
    if (!seen)
        skip();
}

/* `stability --f-dt` against the model (docs/terms.md): with f dt = 0.5, far beyond real rotation so that
 * the limit moves (A, B, D, E; C's stays), each layout's scanned 2D limit is checked by runs of a periodic
 * 48 x 48 box of constant depth started from grid-scale noise: at 0.98 of the limit the largest |eta|
 * stays within 5 times its start over 3000 steps (neutral modes, phases lining up; the geostrophic part
 * stands still), at 1.02 it passes 1e6 times its start within 3000 steps. */
static double rotating_run(const sw_layout *lay, double courant, double F, long max_steps, long *steps)
{
    const size_t n = 48;
    const double d = 1000, h = 100;
    sw_grid g = {.nx = n, .ny = n, .dx_m = d, .dy_m = d};
    double *depth = malloc(n * n * sizeof *depth), *eta0 = malloc(n * n * sizeof *eta0);
    assert_true(depth && eta0);
    unsigned long long x = 88172645463325252ull;   /* xorshift: the same noise every run */
    for (size_t k = 0; k < n * n; k++) {
        x ^= x << 13, x ^= x >> 7, x ^= x << 17;
        depth[k] = h;
        eta0[k] = (double)(x % 2000001) / 1e6 - 1.0;
    }
    const double dt = courant * d / sqrt(G * h);
    sw_model_config cfg = {.layout = lay, .grid = g, .depth_m = depth, .eta0_m = eta0, .min_depth_m = 1,
                           .gravity_ms2 = G, .dt_s = dt, .allow_unstable = 1,
                           .edges = {SW_EDGE_PERIODIC, SW_EDGE_PERIODIC, SW_EDGE_PERIODIC, SW_EDGE_PERIODIC},
                           .terms = {.rotation = SW_ROTATION_F_PLANE, .f0_s = F / dt}};
    sw_model *m = NULL;
    sw_error err = {0};
    assert_int_equal(sw_model_create(&cfg, &m, &err), SW_OK);
    double a0 = 0, top = 0;
    for (size_t k = 0; k < n * n; k++)
        a0 = fmax(a0, fabs(sw_model_eta(m, k % n, k / n)));
    top = a0;
    long q = 0;
    while (q < max_steps && top <= 1e6 * a0) {
        tu_advance(m, 10, 2);
        q += 10;
        for (size_t k = 0; k < n * n; k++)
            top = fmax(top, fabs(sw_model_eta(m, k % n, k / n)));
    }
    *steps = q;
    sw_model_free(m);
    free(depth);
    free(eta0);
    return top / a0;
}

static void test_rotating_runs(void **state)
{
    (void)state;
    const double F = 0.5;
    for (size_t q = 0; q < sw_layout_count(); q++) {
        const sw_layout *lay = sw_layout_at(q);
        sw_stab_limit lim;
        assert_int_equal(sw_stab_limit_scan(lay, F, 2, &lim, NULL), SW_OK);
        long s_lo, s_hi;
        const double below = rotating_run(lay, 0.98 * lim.courant, F, 3000, &s_lo);
        const double above = rotating_run(lay, 1.02 * lim.courant, F, 3000, &s_hi);
        print_message("%s f dt %.1f: scanned limit %.6f (closed form without rotation %.6f); at 0.98 max |eta| / "
                      "start %.2f over %ld steps, at 1.02 %.3g after %ld steps\n", lay->name, F, lim.courant,
                      sw_stab_limit_closed(lay, 2), below, s_lo, above, s_hi);
        assert_true(below <= 5.0);
        assert_true(above > 1e6);
    }
}

/* The table: hand values from cos(W dt) = 1 - p^2 / 2 [derived]. C at c = 0.5, 2-cell wave along x:
 * p = 1, W dt = pi / 3, exact c pi = pi / 2: ratio 2/3. A at c = 1, 4-cell wave: p = 1, W dt = pi/3,
 * exact pi / 2: ratio 2/3; A's 2-cell wave does not move (ratio 0, layout_a.c). Long waves: ratio -> 1. */
static void test_table(void **state)
{
    (void)state;
    sw_stab_row rows[SW_STAB_N_WAVELENGTHS];
    const sw_layout *c = need("C"), *a = need("A");
    if (!a && !c)
        skip();
    if (c) {
        sw_stab_table(c, 0.5, 0.0, rows);
        assert_true(rows[0].wavelength == 2);
        print_message("C c=0.5: 2-cell ratio %.15f (want 2/3), 32-cell %.6f\n", rows[0].axis.speed_ratio,
                      rows[7].axis.speed_ratio);
        assert_true(fabs(rows[0].axis.speed_ratio - 2.0 / 3.0) < 1e-14);
        assert_true(fabs(rows[0].axis.amp - 1) < 1e-14);
        /* diagonal: k dx = l dy = 2 pi / (n sqrt 2) with the published C frequency */
        for (size_t q = 0; q < SW_STAB_N_WAVELENGTHS; q++) {
            double kd = 2 * PI / (rows[q].wavelength * sqrt(2.0));
            double W = acos(1 - p2_published("C", 0.5, kd, kd) / 2);
            assert_true(fabs(rows[q].diagonal.omega_dt - W) < 1e-12);
            assert_true(fabs(rows[q].diagonal.speed_ratio - W / (0.5 * 2 * PI / rows[q].wavelength)) < 1e-12);
        }
        assert_true(fabs(rows[7].axis.speed_ratio - 1) < 0.01);
    }
    if (a) {
        sw_stab_table(a, 1.0, 0.0, rows);
        print_message("A c=1: 2-cell ratio %.3g, 4-cell %.15f (want 2/3)\n", rows[0].axis.speed_ratio,
                      rows[2].axis.speed_ratio);
        assert_true(fabs(rows[0].axis.speed_ratio) < 1e-15);
        assert_true(fabs(rows[2].axis.speed_ratio - 2.0 / 3.0) < 1e-14);
        assert_true(fabs(rows[7].axis.speed_ratio - 1) < 0.01);
    }
}

/* ---- against the model ---------------------------------------------------------------------- */

typedef struct {
    double kx, ky;   /* rad/m */
    int sine;        /* 1: sin(kx x) sin(ky y) (level edges), 0: cos(kx x) cos(ky y) (walls) */
} mode_shape;

/* Runs the model with one standing mode and returns W dt measured from eta: an exact eigenvector obeys
 * eta(n+1) + eta(n-1) = 2 cos(W dt) eta(n) in every cell, fitted by least squares over all cells and
 * `steps` steps. Also returns the model's Courant number and, in *series (malloc'd, caller frees),
 * eta of every cell at steps 0 .. steps, [n * nx * ny + cell]. */
static double run_mode(const sw_layout *lay, size_t nx, size_t ny, double d, double h, const mode_shape *ms,
                       const sw_edge_kind edges[4], long steps, double *courant, double **series)
{
    sw_grid g = {.nx = nx, .ny = ny, .dx_m = d, .dy_m = d};
    double *depth = malloc(nx * ny * sizeof *depth), *eta0 = malloc(nx * ny * sizeof *eta0);
    double *prev = malloc(nx * ny * sizeof *prev), *now = malloc(nx * ny * sizeof *now);
    assert_true(depth && eta0 && prev && now);
    for (size_t j = 0; j < ny; j++)
        for (size_t i = 0; i < nx; i++) {
            double x = ((double)i + 0.5) * d, y = ((double)j + 0.5) * d;
            depth[j * nx + i] = h;
            eta0[j * nx + i] = ms->sine ? sin(ms->kx * x) * (ny > 1 ? sin(ms->ky * y) : 1.0)
                                        : cos(ms->kx * x) * cos(ms->ky * y);
        }
    sw_model_config cfg = {.layout = lay, .grid = g, .depth_m = depth, .eta0_m = eta0, .min_depth_m = 1,
                           .gravity_ms2 = G, .edges = {edges[0], edges[1], edges[2], edges[3]}};
    cfg.dt_s = 0.9 * sw_model_dt_limit(lay, &g, depth, 1, G, sw_model_dims(&g, cfg.edges));
    sw_model *m = NULL;
    sw_error err = {0};
    assert_int_equal(sw_model_create(&cfg, &m, &err), SW_OK);
    *courant = sw_model_courant(&g, h, G, cfg.dt_s);
    double num = 0, den = 0;
    const size_t cells = nx * ny;
    double *all = malloc((size_t)(steps + 1) * cells * sizeof *all);
    assert_non_null(all);
    for (size_t c = 0; c < cells; c++)
        all[c] = prev[c] = sw_model_eta(m, c % nx, c / nx);
    sw_model_step(m);
    sw_model_tick(m);
    for (size_t c = 0; c < cells; c++)
        all[cells + c] = now[c] = sw_model_eta(m, c % nx, c / nx);
    for (long n = 1; n < steps; n++) {
        sw_model_step(m);
        sw_model_tick(m);
        for (size_t c = 0; c < cells; c++) {
            double next = sw_model_eta(m, c % nx, c / nx);
            all[(size_t)(n + 1) * cells + c] = next;
            num += now[c] * (next + prev[c]);
            den += 2 * now[c] * now[c];
            prev[c] = now[c];
            now[c] = next;
        }
    }
    sw_model_free(m);
    free(depth), free(eta0), free(prev), free(now);
    *series = all;
    return acos(num / den);
}

/* One standing mode in the model has the analysis' discrete frequency to 1e-6 (measured ~1e-12):
 * C with walls, eta = cos(k x) cos(l y) (an exact eigenvector, test_model.c); A with level edges,
 * eta = sin(k x) sin(l y): the ghosts hold -eta and the mirrored velocity, so the centred stencil sees
 * the odd continuation and the sine is exact (with walls A zeroes u in the edge cells and it is not).
 * And its phase: the model starts at rest at t = 0 (model.h), so every cell follows
 * eta_0 cos(n W dt) with the analysis' W dt from step 1 on [derived, model.c], to 1e-9 of the amplitude
 * over 300 steps (a start lagging by dt/2, eta_0 cos((n - 1/2) W dt) / cos(W dt / 2), misses by
 * about tan(W dt / 2): 0.28 to 0.83 here). */
static void model_mode(const char *name, int dims)
{
    const sw_layout *lay = need(name);
    if (!lay) {
        skip();
        return;
    }
    const sw_edge_kind WALLS[4] = {SW_EDGE_WALL, SW_EDGE_WALL, SW_EDGE_WALL, SW_EDGE_WALL};
    const sw_edge_kind LEVEL_WE[4] = {SW_EDGE_LEVEL, SW_EDGE_LEVEL, SW_EDGE_WALL, SW_EDGE_WALL};
    const sw_edge_kind LEVEL[4] = {SW_EDGE_LEVEL, SW_EDGE_LEVEL, SW_EDGE_LEVEL, SW_EDGE_LEVEL};
    const int a = name[0] == 'A';
    const size_t nx = 40, ny = dims == 2 ? 24 : 1;
    const double d = 1000, h = 50, L = nx * d, Ly = ny * d;
    /* 8-cell wave along x (mode 10 of 40), and mode 3 of 24 along y in 2D */
    mode_shape ms = {.kx = 10 * PI / L, .ky = dims == 2 ? 3 * PI / Ly : 0, .sine = a};
    double courant, *series = NULL;
    const long steps = 300;
    double measured = run_mode(lay, nx, ny, d, h, &ms, a ? (dims == 2 ? LEVEL : LEVEL_WE) : WALLS, steps, &courant,
                               &series);
    sw_stab_mode m;
    sw_stab_mode_eval(lay, ms.kx * d, ms.ky * d, courant, 0.0, &m);
    double exact = courant * sqrt(ms.kx * ms.kx + ms.ky * ms.ky) * d;
    const size_t cells = nx * ny;
    double amp = 0, phase_err = 0;
    for (size_t c = 0; c < cells; c++)
        amp = fmax(amp, fabs(series[c]));
    for (long n = 1; n <= steps; n++)
        for (size_t c = 0; c < cells; c++)
            phase_err = fmax(phase_err, fabs(series[(size_t)n * cells + c] - series[c] * cos((double)n * m.omega_dt)));
    free(series);
    print_message("%s %dD mode: c = %.6f, measured W dt %.15f, analysis %.15f (rel %.2g), continuous %.6f; "
                  "max |eta_n - eta_0 cos(n W dt)| / a = %.2e over %ld steps\n", name, dims, courant, measured,
                  m.omega_dt, fabs(measured - m.omega_dt) / m.omega_dt, exact, phase_err / amp, steps);
    assert_true(fabs(measured - m.omega_dt) / m.omega_dt < 1e-6);
    assert_true(phase_err / amp < 1e-9);
    assert_true(fabs(m.amp - 1) < 1e-12);
    /* and the analysis is not simply the continuous answer: the 8-cell wave lags by more than 0.3 % */
    assert_true(m.omega_dt < 0.997 * exact);
}
static void test_model_mode_c_1d(void **state) { (void)state; model_mode("C", 1); }
static void test_model_mode_c_2d(void **state) { (void)state; model_mode("C", 2); }
static void test_model_mode_a_1d(void **state) { (void)state; model_mode("A", 1); }
static void test_model_mode_a_2d(void **state) { (void)state; model_mode("A", 2); }

/* ---- NetCDF --------------------------------------------------------------------------------- */

static int exists(const char *path)
{
    struct stat st;
    return stat(path, &st) == 0;
}

static void text_att(int ncid, int var, const char *att, char *out, size_t n)
{
    size_t len = 0;
    assert_int_equal(nc_inq_attlen(ncid, var, att, &len), NC_NOERR);
    assert_true(len < n);
    assert_int_equal(nc_get_att_text(ncid, var, att, out), NC_NOERR);
    out[len] = '\0';
}

/* The planes file: dimensions (layout, ky, kx), coordinates in radians, CF attributes, values equal to
 * sw_stab_mode_eval, fill at k = l = 0 without rotation, no .part left; a missing folder is an I/O error. */
static void test_write_planes(void **state)
{
    (void)state;
    char path[1024], part[1100];
    tu_tmp_path(path, sizeof path, "stability_planes.nc");
    snprintf(part, sizeof part, "%s.part", path);
    remove(path);
    const size_t nl = sw_layout_count(), nk = 33;
    sw_stab_plane planes[16];
    assert_true(nl <= 16);
    for (size_t q = 0; q < nl; q++)
        planes[q] = (sw_stab_plane){.layout = sw_layout_at(q),
                                    .courant = 0.8 * sw_stab_limit_closed(sw_layout_at(q), 2)};
    sw_error err = {0};
    assert_int_equal(sw_stab_write_planes(path, planes, nl, 0.0, nk, "test", &err), SW_OK);
    assert_true(exists(path));
    assert_false(exists(part));

    int ncid, var;
    assert_int_equal(nc_open(path, NC_NOWRITE, &ncid), NC_NOERR);
    char buf[2048];
    text_att(ncid, NC_GLOBAL, "Conventions", buf, sizeof buf);
    assert_string_equal(buf, "CF-1.11");
    text_att(ncid, NC_GLOBAL, "comment", buf, sizeof buf);
    assert_non_null(strstr(buf, "amplification"));
    double courants[16], f_dt = -1;
    size_t len = 0;
    assert_int_equal(nc_inq_attlen(ncid, NC_GLOBAL, "courant_number", &len), NC_NOERR);
    assert_int_equal(len, nl);
    assert_int_equal(nc_get_att_double(ncid, NC_GLOBAL, "courant_number", courants), NC_NOERR);
    assert_int_equal(nc_get_att_double(ncid, NC_GLOBAL, "f_dt", &f_dt), NC_NOERR);
    assert_true(f_dt == 0.0 && courants[0] == planes[0].courant);

    assert_int_equal(nc_inq_varid(ncid, "kx", &var), NC_NOERR);
    text_att(ncid, var, "units", buf, sizeof buf);
    assert_string_equal(buf, "rad");
    double k[33];
    assert_int_equal(nc_get_var_double(ncid, var, k), NC_NOERR);
    assert_true(fabs(k[0] + PI) < 1e-15 && k[16] == 0 && fabs(k[32] - PI) < 1e-15);

    int ratio_id, amp_id, dims[3], nd = 0;
    assert_int_equal(nc_inq_varid(ncid, "phase_speed_ratio", &ratio_id), NC_NOERR);
    assert_int_equal(nc_inq_varid(ncid, "amplification", &amp_id), NC_NOERR);
    assert_int_equal(nc_inq_varndims(ncid, amp_id, &nd), NC_NOERR);
    assert_int_equal(nd, 3);
    assert_int_equal(nc_inq_vardimid(ncid, amp_id, dims), NC_NOERR);
    const char *want_dims[3] = {"layout", "ky", "kx"};
    for (int e = 0; e < 3; e++) {
        char name[NC_MAX_NAME + 1];
        assert_int_equal(nc_inq_dimname(ncid, dims[e], name), NC_NOERR);
        assert_string_equal(name, want_dims[e]);
    }
    for (size_t q = 0; q < nl; q++) {
        size_t at[3] = {q, 20, 27};   /* (l dy, k dx) = (pi/4, 11 pi/16) */
        double amp, ratio;
        assert_int_equal(nc_get_var1_double(ncid, amp_id, at, &amp), NC_NOERR);
        assert_int_equal(nc_get_var1_double(ncid, ratio_id, at, &ratio), NC_NOERR);
        sw_stab_mode m;
        sw_stab_mode_eval(planes[q].layout, k[27], k[20], planes[q].courant, 0.0, &m);
        assert_true(amp == m.amp && ratio == m.speed_ratio);
        size_t centre[3] = {q, 16, 16};
        assert_int_equal(nc_get_var1_double(ncid, ratio_id, centre, &ratio), NC_NOERR);
        assert_true(ratio == NC_FILL_DOUBLE);
    }
    assert_int_equal(nc_close(ncid), NC_NOERR);
    remove(path);

    char bad[1024];
    tu_tmp_path(bad, sizeof bad, "no-such-folder/planes.nc");
    assert_int_equal(sw_stab_write_planes(bad, planes, nl, 0.0, nk, NULL, &err), SW_ERR_IO);
    print_message("missing folder: %s\n", err.msg);
    assert_non_null(strstr(err.msg, "does not exist"));
    snprintf(part, sizeof part, "%s.part", bad);
    assert_false(exists(part));
    assert_int_equal(sw_stab_write_planes(path, planes, nl, 0.0, 2, NULL, &err), SW_ERR_USAGE);
    assert_false(exists(path));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_cubic_roots),
        cmocka_unit_test(test_scan_equals_closed_form),
        cmocka_unit_test(test_known_limits),
        cmocka_unit_test(test_scan_refines_off_grid_maximum),
        cmocka_unit_test(test_scan_errors),
        cmocka_unit_test(test_neutral_below_growth_above),
        cmocka_unit_test(test_discrete_frequency),
        cmocka_unit_test(test_rotation_k0),
        cmocka_unit_test(test_rotation_formulas),
        cmocka_unit_test(test_rotating_runs),
        cmocka_unit_test(test_table),
        cmocka_unit_test(test_model_mode_c_1d),
        cmocka_unit_test(test_model_mode_c_2d),
        cmocka_unit_test(test_model_mode_a_1d),
        cmocka_unit_test(test_model_mode_a_2d),
        cmocka_unit_test(test_write_planes),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
