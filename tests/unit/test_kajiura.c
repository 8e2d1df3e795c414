/* test_kajiura.c - the sea-floor to sea-surface filter 1 / cosh(k h) (kajiura.h) against its formula.
 *
 * Sources (restated with their status in docs/references.md, section "Kajiura"):
 *  - Kajiura (1963) Bull. Earthquake Res. Inst. 41, 535-571 [memory]: a sudden sea-floor displacement of
 *    horizontal wavenumber k under water of depth h raises the sea surface by the displacement over
 *    cosh(k h). [derived] It is the linear potential-flow response of the layer: the impulse potential
 *    A sinh(k z) is 0 at the surface z = 0, its vertical derivative A k cosh(k h) at the floor z = -h is
 *    the floor's displacement, and the surface rises by A k = displacement / cosh(k h).
 *  - A Gaussian hump a exp(-r^2 / b^2) has the 2D Fourier transform a pi b^2 exp(-k^2 b^2 / 4) [derived:
 *    the Gaussian integral], so the filtered surface at its centre is
 *    a (b^2 / 2) int_0^inf k exp(-k^2 b^2 / 4) / cosh(k h) dk [derived], evaluated here by Simpson's rule.
 *    Its transform is positive, so the sum of its wavenumbers' amplitudes is its peak a [derived]: the
 *    interpolation bound per wavenumber (kajiura.c, 0.0758 step^4 with step <= 0.125, below 1.9e-5) is
 *    then a bound in metres per metre of peak.
 *  - Zero padding: the filter's kernel decays as exp(-pi r / (2 h)) (the nearest poles of 1 / cosh(k h)
 *    lie at k = +-i pi / (2 h)) [derived]; the tests keep every field that far from the grid's edges where
 *    a check needs it.
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
#include "inputs/kajiura.h"
#include "testutil.h"

#define PI 3.14159265358979323846
#define INTERP_BOUND 1.9e-5   /* kajiura.c: 0.0758 * 0.125^4 = 1.85e-5 per unit amplitude [derived] */

/* |got - want| <= tol, reporting both values (this cmocka has no assert_double_equal). */
#define assert_near(got, want, tol) near_check((got), (want), (tol), __FILE__, __LINE__)
static void near_check(double got, double want, double tol, const char *file, int line)
{
    if (!(fabs(got - want) <= tol)) {
        print_error("%.17g != %.17g (tolerance %g, off by %g)\n", got, want, tol, fabs(got - want));
        _fail(file, line);
    }
}

static double *alloc_cells(const sw_grid *g)
{
    double *p = calloc(sw_grid_cells(g), sizeof *p);
    assert_non_null(p);
    return p;
}

static void fill(const sw_grid *g, double *f, double v)
{
    for (size_t c = 0; c < sw_grid_cells(g); c++)
        f[c] = v;
}

/* The true x of column i's centre, m: on a geographic grid the width at the domain's mid-latitude, as
 * kajiura.h states for the wavenumbers. */
static double true_x(const sw_grid *g, size_t i)
{
    const double c = sw_grid_cos_lat(g, g->y0_m + 0.5 * (double)g->ny * g->dy_m);
    return ((double)i + 0.5) * g->dx_m * c;
}
static double true_y(const sw_grid *g, size_t j) { return ((double)j + 0.5) * g->dy_m; }

/* a exp(-r^2 / b^2) cos(kx x + ky y) around the centre of cell (ic, jc), true distances. */
static void wave_packet(const sw_grid *g, double *f, size_t ic, size_t jc, double a, double b, double kx, double ky)
{
    const double xc = true_x(g, ic), yc = true_y(g, jc);
    for (size_t j = 0; j < g->ny; j++)
        for (size_t i = 0; i < g->nx; i++) {
            const double x = true_x(g, i) - xc, y = true_y(g, j) - yc;
            f[j * g->nx + i] = a * exp(-(x * x + y * y) / (b * b)) * cos(kx * x + ky * y);
        }
}

/* The field's Fourier coefficient at (kx, ky): sum f exp(-i k . x) over the cells (true positions). */
static void coefficient(const sw_grid *g, const double *f, double kx, double ky, double *re, double *im)
{
    double sr = 0.0, si = 0.0;
    for (size_t j = 0; j < g->ny; j++)
        for (size_t i = 0; i < g->nx; i++) {
            const double ph = kx * true_x(g, i) + ky * true_y(g, j), v = f[j * g->nx + i];
            sr += v * cos(ph);
            si -= v * sin(ph);
        }
    *re = sr;
    *im = si;
}

/* Kajiura (1963) over a Gaussian hump a exp(-r^2/b^2) at its centre (see the top of the file), by
 * Simpson's rule on k in [0, 14 / b] (the integrand there is below exp(-49) of its peak). */
static double gaussian_centre(double a, double b, double h)
{
    const int n = 20000;
    const double kmax = 14.0 / b, dk = kmax / n;
    double s = 0.0;
    for (int m = 0; m <= n; m++) {
        const double k = m * dk, v = k * exp(-k * k * b * b / 4.0) / cosh(k * h);
        s += v * (m == 0 || m == n ? 1.0 : m % 2 ? 4.0 : 2.0);
    }
    return a * (b * b / 2.0) * s * dk / 3.0;
}

/* Filters on constant depth h (min_depth 1 m) and checks the call succeeded. */
static void filter_const(const sw_grid *g, double h, const double *floor_m, double *out)
{
    double *depth = alloc_cells(g);
    fill(g, depth, h);
    sw_error err = {0};
    assert_int_equal(sw_kajiura_filter(g, depth, 1.0, floor_m, out, &err), SW_OK);
    free(depth);
}

/* Kajiura (1963): one wavenumber of the uplift comes out reduced by exactly 1 / cosh(k h). The uplift is a
 * wave packet (wavenumber k0 under a Gaussian envelope) far from the edges, so its filtered surface fits
 * on the grid and each of its Fourier coefficients, taken over the grid at any k, must come out times
 * 1 / cosh(|k| h) (to 1e-12 of the coefficient at k0). dx != dy and an oblique k check both axes. */
static void check_one_wavenumber(const sw_grid *g, size_t ic, size_t jc, double h)
{
    const double kx0 = 2.0 * PI / 10e3, ky0 = 2.0 * PI / 15e3, b = 12e3;
    double *f = alloc_cells(g), *out = alloc_cells(g);
    wave_packet(g, f, ic, jc, 1.0, b, kx0, ky0);
    filter_const(g, h, f, out);
    double r0, i0;
    coefficient(g, f, kx0, ky0, &r0, &i0);
    const double amp = hypot(r0, i0);
    const double ks[][2] = {{kx0, ky0}, {0.5 * kx0, ky0}, {kx0, -0.7 * ky0}, {1.3 * kx0, 1.1 * ky0}, {kx0, 0.0}};
    double worst = 0.0;
    for (size_t q = 0; q < sizeof ks / sizeof ks[0]; q++) {
        const double kx = ks[q][0], ky = ks[q][1], damp = 1.0 / cosh(hypot(kx, ky) * h);
        double ri, ii, ro, io;
        coefficient(g, f, kx, ky, &ri, &ii);
        coefficient(g, out, kx, ky, &ro, &io);
        worst = fmax(worst, hypot(ro - damp * ri, io - damp * ii) / amp);
        assert_near(ro, damp * ri, 1e-12 * amp);
        assert_near(io, damp * ii, 1e-12 * amp);
        if (q == 0) {   /* the check is not empty: the mode is reduced a lot */
            assert_true(damp < 0.1);
            assert_true(hypot(ri, ii) > 0.1 * amp);
        }
    }
    print_message("one wavenumber: largest departure from 1 / cosh(k h) %.3g of the amplitude\n", worst);
    free(f);
    free(out);
}

static void test_one_wavenumber(void **state)
{
    (void)state;
    /* |k0| h = 3.78 at h = 5000 m: 1 / cosh = 0.0458 */
    sw_grid g = {.nx = 256, .ny = 200, .dx_m = 1000.0, .dy_m = 1250.0};
    check_one_wavenumber(&g, 128, 100, 5000.0);
}

/* The same on a geographic grid around 60 N: the x wavenumbers use the true width dx cos(60 deg) there
 * (kajiura.h). dx_m = 2000 m on the equator is 1000 m at the mid-latitude. */
static void test_one_wavenumber_geographic(void **state)
{
    (void)state;
    const double R = SW_EARTH_RADIUS_M, d2r = PI / 180.0, dphi = 1250.0 / R;
    const size_t ny = 200;
    sw_grid g = {.nx = 256, .ny = ny, .dx_m = 2000.0, .dy_m = 1250.0, .kind = SW_GRID_GEOGRAPHIC, .radius_m = R};
    g.x0_m = 10.0 * d2r * R;
    g.y0_m = (60.0 * d2r - 0.5 * (double)ny * dphi) * R;   /* the domain's mid-latitude is 60 N */
    assert_near(sw_grid_cos_lat(&g, g.y0_m + 0.5 * (double)ny * g.dy_m), 0.5, 1e-12);
    check_one_wavenumber(&g, 128, 100, 5000.0);
}

/* k = 0: a uniform uplift passes unchanged (1 / cosh(0) = 1) wherever the zero padding beyond the grid's
 * edges is farther than the kernel reaches: 20 depths (exp(-pi 20 / 2) = 2e-14 [derived]). */
static void test_uniform(void **state)
{
    (void)state;
    const double h = 4000.0;
    sw_grid g = {.nx = 500, .ny = 480, .dx_m = 500.0, .dy_m = 500.0};
    double *f = alloc_cells(&g), *out = alloc_cells(&g);
    fill(&g, f, 0.75);
    filter_const(&g, h, f, out);
    const size_t m = (size_t)ceil(20.0 * h / g.dx_m);
    double worst = 0.0;
    for (size_t j = m; j < g.ny - m; j++)
        for (size_t i = m; i < g.nx - m; i++)
            worst = fmax(worst, fabs(out[j * g.nx + i] - 0.75));
    print_message("uniform uplift, 20 depths from the edges: largest change %.3g of it\n", worst / 0.75);
    assert_true(worst <= 1e-12 * 0.75);
    /* and near the edges it is smoothed (the zero padding is really there): the corner loses most */
    assert_true(out[0] < 0.5 * 0.75);
    free(f);
    free(out);
}

/* The zero padding keeps the filter from wrapping round: a hump on the east edge lifts nothing on the
 * west edge, 40 depths away across the grid (the kernel there is about exp(-pi 40 / 2) = 3e-28 [derived]),
 * although an unpadded periodic transform would put the west edge next to it. The depth is 8 cells: on
 * shallower water (about 3 cells and less) the grid's cut-off at the Nyquist wavenumber leaves the
 * discrete filter a slowly decaying tail of about 1 / cosh(pi h / dx) (kajiura.c), which the hump cut
 * by the edge would excite. */
static void test_no_wrap(void **state)
{
    (void)state;
    const double h = 4000.0;
    sw_grid g = {.nx = 330, .ny = 60, .dx_m = 500.0, .dy_m = 500.0};
    double *f = alloc_cells(&g), *out = alloc_cells(&g);
    wave_packet(&g, f, g.nx - 1, 30, 1.0, 4e3, 0.0, 0.0);
    filter_const(&g, h, f, out);
    double west = 0.0;
    for (size_t j = 0; j < g.ny; j++)
        west = fmax(west, fabs(out[j * g.nx]));
    print_message("hump on the east edge: largest value on the west edge %.3g of its peak\n", west);
    assert_true(west <= 1e-13);   /* round-off: measured 1e-15; with a 12-depth margin 2e-10 */
    assert_true(out[30 * g.nx + g.nx - 1] > 0.1);
    free(f);
    free(out);
}

/* Volume: the k = 0 term passes unchanged, so the filtered surface holds the same volume as the uplift
 * over the wet cells when the filtered field fits on the grid; uplift on land is not water's and is
 * ignored (land gets 0). Constant depth over the water. */
static void test_volume(void **state)
{
    (void)state;
    const double h = 3000.0, b = 10e3;
    sw_grid g = {.nx = 220, .ny = 200, .dx_m = 1000.0, .dy_m = 1000.0};
    double *f = alloc_cells(&g), *out = alloc_cells(&g), *depth = alloc_cells(&g);
    wave_packet(&g, f, 110, 100, 2.0, b, 0.0, 0.0);
    fill(&g, depth, h);
    double wet_in = 0.0;
    for (size_t j = 0; j < g.ny; j++)
        for (size_t i = 0; i < g.nx; i++) {
            const size_t c = j * g.nx + i;
            if (i < 12 && j < 12) {   /* an island in the corner, lifted too */
                depth[c] = 0.0;
                f[c] = 1.5;
            } else
                wet_in += f[c];
        }
    sw_error err = {0};
    assert_int_equal(sw_kajiura_filter(&g, depth, 1.0, f, out, &err), SW_OK);
    double sum = 0.0;
    for (size_t c = 0; c < sw_grid_cells(&g); c++)
        sum += out[c];
    assert_near(sum, wet_in, 1e-12 * wet_in);
    for (size_t j = 0; j < 12; j++)
        for (size_t i = 0; i < 12; i++)
            assert_true(out[j * g.nx + i] == 0.0);
    /* the hump did change shape: its peak went down */
    assert_true(out[100 * g.nx + 110] < 0.9 * 2.0);
    free(f);
    free(out);
    free(depth);
}

/* Deep water smooths more than shallow: the centre of a filtered Gaussian hump against Kajiura's filter
 * integrated over the hump's transform (see the top of the file), on constant depths of 2000 and 8000 m
 * (one rung, so exact to round-off). */
static void test_gaussian_depths(void **state)
{
    (void)state;
    const double a = 1.0, b = 10e3;
    sw_grid g = {.nx = 128, .ny = 128, .dx_m = 1000.0, .dy_m = 1000.0};
    double *f = alloc_cells(&g), *out = alloc_cells(&g);
    wave_packet(&g, f, 64, 64, a, b, 0.0, 0.0);
    const double hs[] = {2000.0, 8000.0};
    double centre[2];
    for (int q = 0; q < 2; q++) {
        filter_const(&g, hs[q], f, out);
        centre[q] = out[64 * g.nx + 64];
        const double want = gaussian_centre(a, b, hs[q]);
        assert_near(centre[q], want, 1e-12 * a);
    }
    /* [derived from the integral]: 1 / cosh falls with h for every k > 0 */
    assert_true(centre[1] < centre[0]);
    assert_true(centre[0] < a);
    assert_true(centre[1] < 0.8 * a);   /* the deep one by much: its depth is 0.8 b */
    free(f);
    free(out);
}

/* Land (depth below min_depth) gets 0, and uplift on land alone raises no water anywhere. */
static void test_land(void **state)
{
    (void)state;
    sw_grid g = {.nx = 64, .ny = 48, .dx_m = 1000.0, .dy_m = 1000.0};
    double *f = alloc_cells(&g), *out = alloc_cells(&g), *depth = alloc_cells(&g);
    for (size_t j = 0; j < g.ny; j++)
        for (size_t i = 0; i < g.nx; i++)
            depth[j * g.nx + i] = i < 16 ? 0.5 : 100.0 + 50.0 * (double)i;   /* 0.5 m < min_depth 1 m */
    fill(&g, f, 1.0);
    sw_error err = {0};
    assert_int_equal(sw_kajiura_filter(&g, depth, 1.0, f, out, &err), SW_OK);
    for (size_t j = 0; j < g.ny; j++)
        for (size_t i = 0; i < g.nx; i++)
            if (i < 16)
                assert_true(out[j * g.nx + i] == 0.0);
            else
                assert_true(out[j * g.nx + i] > 0.0);
    for (size_t j = 0; j < g.ny; j++)
        for (size_t i = 0; i < g.nx; i++)
            f[j * g.nx + i] = i < 16 ? 1.0 : 0.0;
    assert_int_equal(sw_kajiura_filter(&g, depth, 1.0, f, out, &err), SW_OK);
    for (size_t c = 0; c < sw_grid_cells(&g); c++)
        assert_true(out[c] == 0.0);
    /* all land: all 0 */
    fill(&g, depth, 0.0);
    assert_int_equal(sw_kajiura_filter(&g, depth, 1.0, f, out, &err), SW_OK);
    for (size_t c = 0; c < sw_grid_cells(&g); c++)
        assert_true(out[c] == 0.0);
    free(f);
    free(out);
    free(depth);
}

/* Variable depth: each cell takes its own depth's filter. The depth grows geometrically along x from 1000
 * to 6000 m (many rungs); every 3rd column is compared with the constant-depth result at that column's
 * depth, which must agree within the interpolation bound (per metre of the hump's peak, see the top);
 * at the hump's centre the value lies between the constant-depth results of the shallowest and deepest
 * water. */
static void test_variable_depth(void **state)
{
    (void)state;
    const double a = 1.0, b = 8e3, h1 = 1000.0, h2 = 6000.0;
    sw_grid g = {.nx = 121, .ny = 100, .dx_m = 1000.0, .dy_m = 1000.0};
    double *f = alloc_cells(&g), *out = alloc_cells(&g), *ref = alloc_cells(&g), *depth = alloc_cells(&g);
    wave_packet(&g, f, 60, 50, a, b, 0.0, 0.0);
    for (size_t j = 0; j < g.ny; j++)
        for (size_t i = 0; i < g.nx; i++)
            depth[j * g.nx + i] = h1 * pow(h2 / h1, (double)i / (double)(g.nx - 1));
    sw_error err = {0};
    assert_int_equal(sw_kajiura_filter(&g, depth, 1.0, f, out, &err), SW_OK);
    double worst = 0.0;
    for (size_t i = 0; i < g.nx; i += 3) {
        filter_const(&g, depth[i], f, ref);
        for (size_t j = 0; j < g.ny; j++)
            worst = fmax(worst, fabs(out[j * g.nx + i] - ref[j * g.nx + i]));
    }
    print_message("variable depth 1000..6000 m: largest difference from the constant-depth filter %.3g m "
                  "per m of peak (bound %.3g)\n", worst / a, INTERP_BOUND);
    assert_true(worst <= INTERP_BOUND * a);
    assert_true(worst > 0.0);   /* the cells between rungs were interpolated */
    const double mid = out[50 * g.nx + 60];
    filter_const(&g, h1, f, ref);
    const double shallow = ref[50 * g.nx + 60];
    filter_const(&g, h2, f, ref);
    const double deep = ref[50 * g.nx + 60];
    assert_true(deep < mid && mid < shallow);
    free(f);
    free(out);
    free(ref);
    free(depth);
}

/* A seabed of two depths needs only the two rungs at its ends (the others have weight 0 everywhere):
 * each half matches its own constant-depth result to round-off. */
static void test_two_depths(void **state)
{
    (void)state;
    const double h1 = 500.0, h2 = 4000.0;
    sw_grid g = {.nx = 96, .ny = 80, .dx_m = 1000.0, .dy_m = 1000.0};
    double *f = alloc_cells(&g), *out = alloc_cells(&g), *ref = alloc_cells(&g), *depth = alloc_cells(&g);
    wave_packet(&g, f, 48, 40, 1.0, 8e3, 0.0, 0.0);
    for (size_t j = 0; j < g.ny; j++)
        for (size_t i = 0; i < g.nx; i++)
            depth[j * g.nx + i] = i < 48 ? h1 : h2;
    sw_error err = {0};
    assert_int_equal(sw_kajiura_filter(&g, depth, 1.0, f, out, &err), SW_OK);
    for (int half = 0; half < 2; half++) {
        filter_const(&g, half ? h2 : h1, f, ref);
        for (size_t j = 0; j < g.ny; j++)
            for (size_t i = half ? 48 : 0; i < (half ? g.nx : 48); i++)
                assert_near(out[j * g.nx + i], ref[j * g.nx + i], 1e-13);
    }
    free(f);
    free(out);
    free(ref);
    free(depth);
}

/* The same bits for one thread and two, and with the surface written over the floor array itself. */
static void test_threads_and_in_place(void **state)
{
    (void)state;
    sw_grid g = {.nx = 90, .ny = 70, .dx_m = 800.0, .dy_m = 900.0};
    double *f = alloc_cells(&g), *one = alloc_cells(&g), *two = alloc_cells(&g), *depth = alloc_cells(&g);
    wave_packet(&g, f, 40, 30, 1.0, 7e3, 2.0 * PI / 20e3, 0.0);
    for (size_t j = 0; j < g.ny; j++)
        for (size_t i = 0; i < g.nx; i++)
            depth[j * g.nx + i] = 200.0 + 40.0 * (double)(i + j);
    sw_error err = {0};
    const int before = omp_get_max_threads();
    omp_set_num_threads(1);
    assert_int_equal(sw_kajiura_filter(&g, depth, 1.0, f, one, &err), SW_OK);
    omp_set_num_threads(2);
    assert_int_equal(sw_kajiura_filter(&g, depth, 1.0, f, two, &err), SW_OK);
    assert_memory_equal(one, two, sw_grid_cells(&g) * sizeof *one);
    memcpy(two, f, sw_grid_cells(&g) * sizeof *two);
    assert_int_equal(sw_kajiura_filter(&g, depth, 1.0, two, two, &err), SW_OK);
    assert_memory_equal(one, two, sw_grid_cells(&g) * sizeof *one);
    omp_set_num_threads(before);
    free(f);
    free(one);
    free(two);
    free(depth);
}

/* Bad input: a one-line message naming the cause and what is accepted. */
static void test_bad_input(void **state)
{
    (void)state;
    sw_grid g = {.nx = 8, .ny = 6, .dx_m = 1000.0, .dy_m = 1000.0};
    double *f = alloc_cells(&g), *out = alloc_cells(&g), *depth = alloc_cells(&g);
    fill(&g, depth, 100.0);
    sw_error err = {0};
    assert_int_equal(sw_kajiura_filter(NULL, depth, 1.0, f, out, &err), SW_ERR_USAGE);
    assert_non_null(strstr(err.msg, "NULL"));
    assert_int_equal(sw_kajiura_filter(&g, NULL, 1.0, f, out, &err), SW_ERR_USAGE);
    assert_int_equal(sw_kajiura_filter(&g, depth, 1.0, NULL, out, &err), SW_ERR_USAGE);
    assert_int_equal(sw_kajiura_filter(&g, depth, 1.0, f, NULL, &err), SW_ERR_USAGE);
    assert_int_equal(sw_kajiura_filter(NULL, depth, 1.0, f, out, NULL), SW_ERR_USAGE);   /* err may be NULL */
    sw_grid empty = g;
    empty.nx = 0;
    assert_int_equal(sw_kajiura_filter(&empty, depth, 1.0, f, out, &err), SW_ERR_USAGE);
    assert_non_null(strstr(err.msg, "0 x 6"));
    sw_grid flat = g;
    flat.dy_m = 0.0;
    assert_int_equal(sw_kajiura_filter(&flat, depth, 1.0, f, out, &err), SW_ERR_USAGE);
    assert_int_equal(sw_kajiura_filter(&g, depth, NAN, f, out, &err), SW_ERR_USAGE);
    f[2 * g.nx + 3] = NAN;
    assert_int_equal(sw_kajiura_filter(&g, depth, 1.0, f, out, &err), SW_ERR_USAGE);
    assert_non_null(strstr(err.msg, "(3, 2)"));
    assert_null(strchr(err.msg, '\n'));
    depth[2 * g.nx + 3] = 0.0;   /* on land the uplift is not read */
    assert_int_equal(sw_kajiura_filter(&g, depth, 1.0, f, out, &err), SW_OK);
    depth[1 * g.nx + 5] = 1e15;   /* the zero margin would be 2.4e13 cells */
    assert_int_equal(sw_kajiura_filter(&g, depth, 1.0, f, out, &err), SW_ERR_NOMEM);
    assert_non_null(strstr(err.msg, "too large"));
    depth[1 * g.nx + 5] = INFINITY;
    assert_int_equal(sw_kajiura_filter(&g, depth, 1.0, f, out, &err), SW_ERR_USAGE);
    assert_non_null(strstr(err.msg, "(5, 1)"));
    free(f);
    free(out);
    free(depth);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_one_wavenumber),
        cmocka_unit_test(test_one_wavenumber_geographic),
        cmocka_unit_test(test_uniform),
        cmocka_unit_test(test_no_wrap),
        cmocka_unit_test(test_volume),
        cmocka_unit_test(test_gaussian_depths),
        cmocka_unit_test(test_land),
        cmocka_unit_test(test_variable_depth),
        cmocka_unit_test(test_two_depths),
        cmocka_unit_test(test_threads_and_in_place),
        cmocka_unit_test(test_bad_input),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
