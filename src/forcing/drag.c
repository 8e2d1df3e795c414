/* drag.c - wind drag laws (see drag.h). */
#include "forcing/drag.h"

#include <stddef.h>
#include <strings.h>

double sw_drag_cd(sw_drag_law law, double w10_ms, double cap)
{
    const double w = w10_ms > 0 ? w10_ms : 0;
    double cd;
    switch (law) {
    case SW_DRAG_WU:
        cd = 0.8 + 0.065 * w;
        break;
    case SW_DRAG_GARRATT:
        cd = 0.75 + 0.067 * w;
        break;
    case SW_DRAG_LARGE_POND:
    default:
        cd = w < 10 ? 1.14 : 0.49 + 0.065 * w;
        break;
    }
    cd *= 1e-3;
    return cap > 0 && cd > cap ? cap : cd;
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
