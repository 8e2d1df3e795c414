/* test_drag.c - the wind drag laws against their published formulas, and the cap.
 *
 * Sources (restated in docs/storm-surge.md and docs/references.md), 10^3 C_D with U10 in m/s:
 *  - Large & Pond (1981) J. Phys. Oceanogr. 11, 324-336: 1.14 for 4 <= U10 < 10, 0.49 + 0.065 U10 for
 *    10 <= U10 <= 26 [seen in code, as restated in the project's references];
 *  - Wu (1982) J. Geophys. Res. 87(C12): 0.8 + 0.065 U10 [seen in code];
 *  - Garratt (1977) Mon. Wea. Rev. 105: 0.75 + 0.067 U10 [seen in code];
 *  - the cap: C_D levels off in hurricane winds, Powell, Vickery & Reinhold (2003) Nature 422 [memory];
 *    the value 2.5e-3 is common practice.
 * The expected values below are the formulas worked by hand at each speed, not the library's code.
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include "forcing/drag.h"

static void near(double got, double want)
{
    if (fabs(got - want) > 1e-12)
        fail_msg("got %.15g, want %.15g", got, want);
}

static void test_large_pond(void **state)
{
    (void)state;
    near(sw_drag_cd(SW_DRAG_LARGE_POND, 5, 0), 1.14e-3);             /* the constant branch */
    near(sw_drag_cd(SW_DRAG_LARGE_POND, 9.99, 0), 1.14e-3);
    near(sw_drag_cd(SW_DRAG_LARGE_POND, 10, 0), 1.14e-3);            /* 0.49 + 0.65: the branches meet */
    near(sw_drag_cd(SW_DRAG_LARGE_POND, 20, 0), 1.79e-3);            /* 0.49 + 1.30 */
    near(sw_drag_cd(SW_DRAG_LARGE_POND, 26, 0), 2.18e-3);            /* 0.49 + 1.69 */
    near(sw_drag_cd(SW_DRAG_LARGE_POND, 2, 0), 1.14e-3);             /* below 4 m/s: held (common practice) */
}

static void test_wu_garratt(void **state)
{
    (void)state;
    near(sw_drag_cd(SW_DRAG_WU, 0, 0), 0.8e-3);
    near(sw_drag_cd(SW_DRAG_WU, 10, 0), 1.45e-3);                    /* 0.8 + 0.65 */
    near(sw_drag_cd(SW_DRAG_WU, 30, 0), 2.75e-3);                    /* 0.8 + 1.95 */
    near(sw_drag_cd(SW_DRAG_GARRATT, 0, 0), 0.75e-3);
    near(sw_drag_cd(SW_DRAG_GARRATT, 10, 0), 1.42e-3);               /* 0.75 + 0.67 */
    near(sw_drag_cd(SW_DRAG_GARRATT, 40, 0), 3.43e-3);               /* 0.75 + 2.68 */
}

static void test_cap(void **state)
{
    (void)state;
    near(sw_drag_cd(SW_DRAG_GARRATT, 40, 2.5e-3), 2.5e-3);           /* capped */
    near(sw_drag_cd(SW_DRAG_WU, 10, 2.5e-3), 1.45e-3);               /* below the cap: untouched */
    near(sw_drag_cd(SW_DRAG_LARGE_POND, 50, 2.5e-3), 2.5e-3);        /* 0.49 + 3.25 = 3.74, capped */
    near(sw_drag_cd(SW_DRAG_LARGE_POND, 50, 0), 3.74e-3);            /* no cap: extended */
}

/* tau / rho_w = (rho_a / rho_w) C_D |U| U: a 20 m/s wind along x with Large & Pond, rho_a = 1.15,
 * rho_w = 1025: tau = 1.15 * 1.79e-3 * 400 = 0.8234 N m-2 [derived]. */
static void test_stress(void **state)
{
    (void)state;
    double sx, sy;
    sw_drag_stress(SW_DRAG_LARGE_POND, 0, 1.15 / 1025, 20, 0, &sx, &sy);
    near(sx * 1025, 1.15 * 1.79e-3 * 400);
    near(sy, 0);
    sw_drag_stress(SW_DRAG_WU, 0, 1.0, 6, 8, &sx, &sy);              /* |U| = 10: C_D 1.45e-3 */
    near(sx, 1.45e-3 * 10 * 6);
    near(sy, 1.45e-3 * 10 * 8);
}

static void test_names(void **state)
{
    (void)state;
    sw_drag_law law;
    assert_int_equal(sw_drag_law_find("Large-Pond", &law), 0);
    assert_int_equal(law, SW_DRAG_LARGE_POND);
    assert_int_equal(sw_drag_law_find("garratt", &law), 0);
    assert_int_equal(law, SW_DRAG_GARRATT);
    assert_int_equal(sw_drag_law_find("smith", &law), -1);
    assert_string_equal(sw_drag_law_name(SW_DRAG_WU), "wu");
    assert_null(sw_drag_law_name((sw_drag_law)7));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_large_pond), cmocka_unit_test(test_wu_garratt), cmocka_unit_test(test_cap),
        cmocka_unit_test(test_stress),     cmocka_unit_test(test_names),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
