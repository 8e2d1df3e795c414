/* drag.h - the wind drag coefficient of the sea surface, C_D(U10), by a published law, and the wind stress.
 *
 * tau = rho_air C_D(U10) |U10| U10 (N m-2), with U10 the wind 10 m above the sea. The laws (10^3 C_D, U10 in
 * m/s), restated with their sources in docs/storm-surge.md and docs/references.md:
 *   Large & Pond (1981, J. Phys. Oceanogr. 11, 324-336): 1.14 for U10 < 10, 0.49 + 0.065 U10 above
 *     (fitted over 4 .. 26 m/s; below 4 m/s held at 1.14 and above 26 m/s extended, common practice);
 *   Wu (1982, J. Geophys. Res. 87(C12)): 0.8 + 0.065 U10;
 *   Garratt (1977, Mon. Wea. Rev. 105): 0.75 + 0.067 U10.
 * Each grows without bound with the wind. Measurements in hurricanes (Powell, Vickery & Reinhold 2003,
 * Nature 422, 279-283 [memory]) found C_D levelling off, even falling, above about 33 m/s, so a cap on
 * C_D is common practice for storm winds; the cap is the caller's choice (a value of 2.5e-3 to 3e-3 is
 * common practice), none by default.
 */
#ifndef SW_DRAG_H
#define SW_DRAG_H

#include <math.h>

typedef enum {
    SW_DRAG_LARGE_POND = 0,   /* Large & Pond (1981) */
    SW_DRAG_WU,               /* Wu (1982) */
    SW_DRAG_GARRATT           /* Garratt (1977) */
} sw_drag_law;
#define SW_DRAG_LAWS 3

/* The law's drag coefficient at a 10 m wind speed w10_ms (m/s, >= 0), dimensionless, limited to cap when
 * cap > 0 (cap <= 0: no limit). */
double sw_drag_cd(sw_drag_law law, double w10_ms, double cap);

/* Every law above in one branch-free form, for loops over many points:
 *     10^3 C_D = min(max(lo, a + b U10), 10^3 cap)
 * (Large & Pond: lo = 1.14, a = 0.49, b = 0.065, the max choosing the branch; Wu and Garratt: lo = 0). */
typedef struct {
    double lo, a, b;   /* 10^3 C_D: floor, intercept, slope per m/s */
    double cap;        /* 10^3 C_D's largest value (HUGE_VAL: none) */
} sw_drag_form;

/* The form of `law` with the cap (cap <= 0: none). */
sw_drag_form sw_drag_form_of(sw_drag_law law, double cap);

/* The short name a scenario writes: "large-pond", "wu", "garratt"; NULL for a law out of range. */
const char *sw_drag_law_name(sw_drag_law law);

/* The law named `name` (any letter case) into *out; 0 on success, -1 for an unknown name. */
int sw_drag_law_find(const char *name, sw_drag_law *out);

/* The accepted names, "large-pond, wu, garratt", for messages. */
const char *sw_drag_law_names(void);

/* The kinematic wind stress tau / rho_water (m2 s-2) of the 10 m wind (u10, v10) (m/s) along x and y,
 * rho_ratio = rho_air / rho_water: rho_ratio C_D |U| (u, v). */
static inline void sw_drag_stress(sw_drag_law law, double cap, double rho_ratio, double u10, double v10, double *sx,
                                  double *sy)
{
    const double w = sqrt(u10 * u10 + v10 * v10), k = rho_ratio * sw_drag_cd(law, w, cap) * w;
    *sx = k * u10;
    *sy = k * v10;
}

#endif
