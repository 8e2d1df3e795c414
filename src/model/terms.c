/* terms.c - names and one-line descriptions of the momentum terms (see terms.h). */
#include "model/terms.h"

#include <stdio.h>

const char *sw_rotation_name(sw_rotation_kind k)
{
    return k == SW_ROTATION_F_PLANE ? "f-plane" : k == SW_ROTATION_BETA_PLANE ? "beta-plane" : "none";
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
