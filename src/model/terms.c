/* terms.c - names and one-line descriptions of the momentum terms (see terms.h). */
#include "model/terms.h"

#include <math.h>
#include <stdio.h>

const char *sw_rotation_name(sw_rotation_kind k)
{
    return k == SW_ROTATION_F_PLANE ? "f-plane" : k == SW_ROTATION_BETA_PLANE ? "beta-plane"
         : k == SW_ROTATION_SPHERE ? "sphere" : "none";
}

const char *sw_friction_name(sw_friction_kind k)
{
    return k == SW_FRICTION_LINEAR ? "linear" : k == SW_FRICTION_QUADRATIC ? "quadratic"
         : k == SW_FRICTION_MANNING ? "manning" : "none";
}

void sw_terms_describe(const sw_terms_config *c, char *buf, size_t n)
{
    char rot[160] = "", fric[96] = "";
    if (c->rotation == SW_ROTATION_F_PLANE)
        snprintf(rot, sizeof rot, "rotation f-plane (f = %.6g s-1)", c->f0_s);
    else if (c->rotation == SW_ROTATION_BETA_PLANE)
        snprintf(rot, sizeof rot, "rotation beta-plane (f = %.6g s-1 + %.6g m-1 s-1 (y - %.6g m))", c->f0_s,
                 c->beta_ms, c->y_ref_m);
    else if (c->rotation == SW_ROTATION_SPHERE)
        snprintf(rot, sizeof rot, "rotation sphere (f = 2 Omega sin(latitude))");
    if (c->friction == SW_FRICTION_LINEAR)
        snprintf(fric, sizeof fric, "friction linear (r = %.6g m/s)", c->friction_rate_ms);
    else if (c->friction == SW_FRICTION_QUADRATIC)
        snprintf(fric, sizeof fric, "friction quadratic (Cd = %.6g)", c->drag);
    else if (c->friction == SW_FRICTION_MANNING)
        snprintf(fric, sizeof fric, "friction manning (n = %.6g s m-1/3)", c->manning_n);
    if (!rot[0] && !fric[0])
        snprintf(buf, n, "none");
    else
        snprintf(buf, n, "%s%s%s", rot, rot[0] && fric[0] ? "; " : "", fric);
}

double sw_terms_stiff_depth(const sw_terms_config *c, double dt_s, double gravity_ms2)
{
    const double speed = 1.0;   /* m/s, the reference current for the quadratic laws */
    switch (c->friction) {
    case SW_FRICTION_LINEAR: return 0.5 * dt_s * c->friction_rate_ms;
    case SW_FRICTION_QUADRATIC: return 0.5 * dt_s * c->drag * speed;
    case SW_FRICTION_MANNING:   /* dt g n^2 |U| / (2 h^(4/3)) > 1 */
        return pow(0.5 * dt_s * gravity_ms2 * c->manning_n * c->manning_n * speed, 0.75);
    case SW_FRICTION_NONE: break;
    }
    return 0;
}

double sw_terms_f_at(const sw_terms_config *c, double y_m, double radius_m)
{
    switch (c->rotation) {
    case SW_ROTATION_F_PLANE: return c->f0_s;
    case SW_ROTATION_BETA_PLANE: return c->f0_s + c->beta_ms * (y_m - c->y_ref_m);
    case SW_ROTATION_SPHERE: return radius_m > 0 ? 2 * SW_EARTH_OMEGA * sin(y_m / radius_m) : 0;
    case SW_ROTATION_NONE: break;
    }
    return 0;
}

double sw_terms_f_max(const sw_terms_config *c, double y0_m, double y1_m, double radius_m)
{
    if (c->rotation == SW_ROTATION_F_PLANE)
        return fabs(c->f0_s);
    /* f is monotonic in y on the beta-plane and on the sphere within +-90 degrees: its ends bound it */
    return fmax(fabs(sw_terms_f_at(c, y0_m, radius_m)), fabs(sw_terms_f_at(c, y1_m, radius_m)));
}

/* The bound comes from the rotating step's Q = P + F^2 w^2 - F w c^2 sx sy <= 4 (docs/stability.md) with
 * |w| <= 1 and c^2 |sx sy| <= P / 2: Q <= P (1 + |F| / 2) + F^2, and P <= 4 c^2 / c0^2. dt - dt0 factor(f dt)
 * increases with dt, so bisection finds the largest dt it allows; the lower end is returned, which
 * always satisfies it. */
double sw_terms_dt_limit(double dt0_s, double f_max_s)
{
    if (!(f_max_s > 0))
        return dt0_s;
    double lo = 0, hi = fmin(dt0_s, 2 / f_max_s);
    for (int it = 0; it < 100 && hi - lo > 1e-15 * dt0_s; it++) {
        const double mid = 0.5 * (lo + hi), F = f_max_s * mid;
        if (mid <= dt0_s * sqrt((1 - F * F / 4) / (1 + F / 2)))
            lo = mid;
        else
            hi = mid;
    }
    return lo;
}
