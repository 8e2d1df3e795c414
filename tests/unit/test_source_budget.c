/* test_source_budget.c - each source's displaced volume asked, on the grid and in the water (sw_source_budgets). */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>

#include "inputs/source.h"

#define PI 3.14159265358979323846

/* |got - want| <= tol, reporting both values (this cmocka has no assert_double_equal). */
#define assert_near(got, want, tol) near_check((got), (want), (tol), __FILE__, __LINE__)
static void near_check(double got, double want, double tol, const char *file, int line)
{
    if (!(fabs(got - want) <= tol)) {
        print_error("%.17g != %.17g (tolerance %g)\n", got, want, tol);
        _fail(file, line);
    }
}

/* A scenario on an n x n grid of d-metre cells from (0, 0), with one hump of amplitude a and radius r at (x, y). */
static sw_scenario *hump_scenario(size_t n, double d, double x, double y, double a, double r)
{
    sw_scenario *sc = calloc(1, sizeof *sc);
    assert_non_null(sc);
    strcpy(sc->path, "budget.scn");
    strcpy(sc->dir, ".");
    sc->has_grid = 1;
    sc->grid = (sw_grid){.nx = n, .ny = n, .dx_m = d, .dy_m = d};
    sc->n_sources = 1;
    sw_source_spec *s = &sc->sources[0];
    strcpy(s->name, "Tervelka Hump (fictional)");
    s->line = 7;
    s->shape = SW_SOURCE_HUMP;
    s->x_m = x;
    s->y_m = y;
    s->amplitude_m = a;
    s->radius_m = r;
    return sc;
}

/* The budget of sc's sources over depth (min_depth 1 m), expecting success. */
static void budget(const sw_scenario *sc, const double *depth, sw_source_budget *b, size_t *n)
{
    sw_error err = {0};
    sw_status st = sw_source_budgets(sc, depth, 1.0, NULL, b, n, &err);
    if (st != SW_OK)
        print_error("%s\n", err.msg);
    assert_int_equal(st, SW_OK);
}

/* A hump well inside deep water keeps all of it: asked = |A| pi R^2 (the Gaussian integral, int exp(-x^2) dx
 * = sqrt(pi)), and the grid's midpoint sum agrees to 1e-6 (a Gaussian sampled at 1/5 of its radius: the
 * midpoint rule's error on it is of order exp(-pi^2 R^2 / d^2) [derived]). */
static void test_hump_inside(void **state)
{
    (void)state;
    const size_t n = 100;
    sw_scenario *sc = hump_scenario(n, 1000, 50e3, 50e3, -2.0, 5e3);
    double *depth = malloc(n * n * sizeof *depth);
    assert_non_null(depth);
    for (size_t k = 0; k < n * n; k++)
        depth[k] = 100;
    sw_source_budget b[SW_MAX_SOURCES + 1];
    size_t nb = 0;
    budget(sc, depth, b, &nb);
    assert_int_equal(nb, 1);
    const double want = 2.0 * PI * 5e3 * 5e3;   /* |A| pi R^2 */
    assert_true(b[0].asked_known);
    assert_near(b[0].asked_m3, want, 1e-9 * want);
    assert_near(b[0].grid_m3, want, 1e-6 * want);
    assert_near(b[0].water_m3, b[0].grid_m3, 0);
    assert_true(sw_source_lost_fraction(&b[0]) < 1e-6);
    assert_string_equal(b[0].name, "Tervelka Hump (fictional)");
    assert_int_equal(b[0].line, 7);
    free(depth);
    free(sc);
}

/* A hump centred on the grid's west edge, x = 0: half its volume lies outside the grid [derived: symmetry];
 * with the east half of the grid made land, of the half on the grid only the cells west of the coast keep
 * water: the share of a Gaussian beyond x0 is erfc(x0 / R) / 2 [derived]. */
static void test_hump_on_edge_and_land(void **state)
{
    (void)state;
    const size_t n = 100;
    const double d = 500, R = 4e3;
    sw_scenario *sc = hump_scenario(n, d, 0, 25e3, 1.0, R);
    double *depth = malloc(n * n * sizeof *depth);
    assert_non_null(depth);
    const double coast = 2e3;   /* land east of x = 2 km (4 cells) */
    for (size_t j = 0; j < n; j++)
        for (size_t i = 0; i < n; i++)
            depth[j * n + i] = ((double)i + 0.5) * d < coast ? 50 : -5;
    sw_source_budget b[SW_MAX_SOURCES + 1];
    size_t nb = 0;
    budget(sc, depth, b, &nb);
    const double asked = PI * R * R;
    assert_near(b[0].asked_m3, asked, 1e-9 * asked);
    assert_near(b[0].grid_m3, 0.5 * asked, 2e-3 * asked);   /* midpoint sum of a half-Gaussian, d = R / 8 */
    /* in the water: the strip 0 <= x < 2 km: (erf(2/4) - erf(0)) / 2 of the whole */
    assert_near(b[0].water_m3, 0.5 * erf(coast / R) * asked, 2e-3 * asked);
    assert_near(sw_source_lost_fraction(&b[0]), 1 - 0.5 * erf(coast / R), 2e-3);
    free(depth);
    free(sc);
}

/* A pair whose halves lie far apart asks for pi L W (A + T) (each half a Gaussian ellipse, |A| pi L W);
 * the quadrature across the axis gives it to 1e-9. */
static void test_pair_apart(void **state)
{
    (void)state;
    const size_t n = 40;
    sw_scenario *sc = hump_scenario(n, 1000, 20e3, 20e3, 1.5, 1);
    sw_source_spec *s = &sc->sources[0];
    s->shape = SW_SOURCE_PAIR;
    s->length_m = 6e3;
    s->width_m = 2e3;
    s->separation_m = 40e3;   /* 20 widths apart: the halves do not overlap */
    s->trough_m = 0.5;
    double *depth = malloc(n * n * sizeof *depth);
    assert_non_null(depth);
    for (size_t k = 0; k < n * n; k++)
        depth[k] = 100;
    sw_source_budget b[SW_MAX_SOURCES + 1];
    size_t nb = 0;
    budget(sc, depth, b, &nb);
    const double want = PI * 6e3 * 2e3 * (1.5 + 0.5);
    assert_near(b[0].asked_m3, want, 1e-9 * want);
    /* the halves sit on the grid's north and south edges (y = 0 and 40 km): half of each is outside */
    assert_near(b[0].grid_m3, 0.5 * want, 1e-3 * want);
    free(depth);
    free(sc);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_hump_inside),
        cmocka_unit_test(test_hump_on_edge_and_land),
        cmocka_unit_test(test_pair_apart),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
