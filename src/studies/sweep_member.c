/* sweep_member.c - what one sweep member produced (see sweep_member.h). */
#include "studies/sweep_member.h"

#include <stdlib.h>

void sw_sweep_member_result_free(sw_sweep_member_result *r)
{
    if (!r)
        return;
    free(r->time_s);
    free(r->eta_m);
    free(r->arrival_map_s);
    free(r->eta_max_map_m);
    free(r->wet);
    r->time_s = r->eta_m = r->arrival_map_s = r->eta_max_map_m = NULL;
    r->wet = NULL;
    r->n_times = r->n_cells = 0;
}
