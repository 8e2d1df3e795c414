/* drag.c - wind drag laws (see drag.h). */
#include "forcing/drag.h"

#include <math.h>
#include <stddef.h>
#include <strings.h>

sw_drag_form sw_drag_form_of(sw_drag_law law, double cap)
{
    sw_drag_form f = {.lo = 0, .a = 0.49, .b = 0.065, .cap = cap > 0 ? 1e3 * cap : HUGE_VAL};
    switch (law) {
    case SW_DRAG_WU:
        f.a = 0.8;
        break;
    case SW_DRAG_GARRATT:
        f.a = 0.75;
        f.b = 0.067;
        break;
    case SW_DRAG_LARGE_POND:
    default:
        f.lo = 1.14;   /* 0.49 + 0.065 U10 < 1.14 exactly when U10 < 10: the max picks the branch */
        break;
    }
    return f;
}

double sw_drag_cd(sw_drag_law law, double w10_ms, double cap)
{
    const sw_drag_form f = sw_drag_form_of(law, cap);
    const double w = w10_ms > 0 ? w10_ms : 0;
    return 1e-3 * fmin(fmax(f.lo, f.a + f.b * w), f.cap);
}

static const char *const names[SW_DRAG_LAWS] = {"large-pond", "wu", "garratt"};

const char *sw_drag_law_name(sw_drag_law law)
{
    return (unsigned)law < SW_DRAG_LAWS ? names[law] : NULL;
}

int sw_drag_law_find(const char *name, sw_drag_law *out)
{
    for (int q = 0; q < SW_DRAG_LAWS; q++)
        if (strcasecmp(name, names[q]) == 0) {
            *out = (sw_drag_law)q;
            return 0;
        }
    return -1;
}

const char *sw_drag_law_names(void) { return "large-pond, wu, garratt"; }
