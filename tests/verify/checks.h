/* checks.h - the verification checks: each runs one layout through one experiment and appends rows.
 *
 * A check never stops at a failed comparison: it records every row (pass or fail) so the report
 * shows all figures. A model the library refuses to build becomes a failed row naming the reason.
 * The published sources are listed in docs/references.md and docs/verification.md.
 */
#ifndef VC_CHECKS_H
#define VC_CHECKS_H

#include "model/layout.h"
#include "rows.h"

typedef void (*vc_fn)(const sw_layout *lay, vr_table *t);

typedef struct {
    const char *name;      /* as given to --check */
    const char *summary;   /* one line for --list */
    vc_fn run;
} vc_check;

/* checks_waves.c: wave physics against published formulas and the fully discrete answer */
void vc_seiche_closed(const sw_layout *lay, vr_table *t);
void vc_seiche_open(const sw_layout *lay, vr_table *t);
void vc_travel_time(const sw_layout *lay, vr_table *t);
void vc_shoaling(const sw_layout *lay, vr_table *t);
void vc_convergence(const sw_layout *lay, vr_table *t);

/* checks_numerics.c: properties of the scheme: stability, invariants, open edges, threads */
void vc_stability(const sw_layout *lay, vr_table *t);
void vc_conservation(const sw_layout *lay, vr_table *t);
void vc_open_edge(const sw_layout *lay, vr_table *t);
void vc_threads(const sw_layout *lay, vr_table *t);

#endif
