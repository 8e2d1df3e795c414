/* report.h - what a person reads: the plan of a run, its summary table, and their JSON twins. */
#ifndef SW_REPORT_H
#define SW_REPORT_H

#include <stddef.h>
#include <stdio.h>

#include "run.h"
#include "scenario.h"
#include "setup.h"

/* Formats a duration in seconds as "1 h 02 min 03 s", "12 min 30 s" or "42.5 s"; "-" for NaN. */
void sw_format_duration(double s, char *buf, size_t n);

/* Prints the plan of a run (grid, layout, dt and Courant number against the limit, steps, memory,
 * estimated time from rate cell-updates/s (0 = unknown), gauges with their depth and warnings). */
void sw_report_plan(FILE *f, const sw_scenario *sc, const sw_setup *s, double rate);

/* The plan as a JSON object (string owned by the caller, free()). NULL when out of memory. */
char *sw_report_plan_json(const sw_scenario *sc, const sw_setup *s, double rate);

/* Prints the end-of-run summary: a table per gauge, the files written and the caution. */
void sw_report_run(FILE *f, const sw_scenario *sc, const sw_setup *s, const sw_run_result *r);

/* The summary as a JSON object (string owned by the caller, free()). NULL when out of memory. */
char *sw_report_run_json(const sw_scenario *sc, const sw_setup *s, const sw_run_result *r);

#endif
