/* sweep_impl.h - what the files of the sweep share; private to src/studies/sweep_*.c.
 *
 * A sweep (sweep.h) is six files of one concern each: sweep_design.c (which members, their values, and
 * values as text), sweep_member.c (one member: scenario, setup, run, file names), sweep_run.c (the
 * manifest and the member loop, resume), sweep_combine.c (the aggregate read back from the member
 * files), sweep_stats.c (percentiles, rank correlation, sensitivity measures) and sweep_report.c
 * (terminal, Markdown, JSON, the plan for `check`). Functions shared between them carry the tag swp_.
 */
#ifndef SW_SWEEP_IMPL_H
#define SW_SWEEP_IMPL_H

#include <stddef.h>

#include "studies/sweep.h"

#define SWP_BLOCK_BYTES ((size_t)64 << 20) /* member map rows held at once while combining, bytes */

/* ---- sweep_design.c ------------------------------------------------------------------------ */

/* "one-at-a-time", "factorial" or "latin-hypercube". */
const char *swp_design_name(sw_sweep_design d);

/* The units of p's values: "m", "s", "deg", "1" (dimensionless) or "layout". */
const char *swp_unit_text(const sw_sweep_param *p);

/* The exact text of value v of p for an override, into buf (size n): every double round-trips
 * through "%.17g"; a layout is its name. */
void swp_override_text(const sw_sweep_param *p, double v, char *buf, size_t n);

/* ---- sweep_member.c ------------------------------------------------------------------------ */

/* <out_dir>/members/mNNNNN.<ext> of member k into out (size n); ext is "nc" or "scn". */
void swp_member_file(const sw_sweep_plan *plan, size_t k, const char *ext, char *out, size_t n);

/* ---- sweep_stats.c ------------------------------------------------------------------------- */

/* The short name of the design's sensitivity measure ("swing", "main effect", "Spearman rho") and
 * the sentence that defines it. */
const char *swp_measure_name(sw_sweep_design d);
const char *swp_measure_sentence(sw_sweep_design d);

/* How each parameter moves output y[k] (k < plan->n_members; NaN or +Inf = no value; members whose
 * status is not SW_OK left out), by the design's measure, largest |effect| first and NaN last into
 * rank[0 .. n_params). xs and ys are scratch of n_members doubles each. */
void swp_sensitivity(const sw_sweep_plan *plan, const double *y, const sw_status *status, double *xs, double *ys,
                     sw_sweep_rank *rank);

/* Minimum, median and maximum of v[0..n) (sorted in place). */
sw_sweep_stat swp_stat_of(double *v, size_t n);

/* ---- sweep_combine.c ----------------------------------------------------------------------- */

/* Reads every member file of the finished sweep back and fills out (statuses, errors, per-gauge
 * statistics and rankings), then writes <out_dir>/sweep.nc and sweep.md. Returns SW_OK, or an I/O,
 * NetCDF, input or memory failure; out owns what it holds either way (sw_sweep_summary_free). */
sw_status swp_combine(sw_sweep_plan *plan, const sw_sweep_options *opt, sw_sweep_summary *out, sw_error *err);

#endif
