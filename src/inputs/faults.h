/* faults.h - a scenario's earthquake faults as one list of rectangular segments, and the sea-surface
 * displacement they make, at once or in time (docs/faults.md).
 *
 * Data flow: the scenario's [fault NAME] sections (one segment each, or a segment table file) ->
 * sw_faults_collect -> sw_fault_set. Setup puts the segments that move at t = 0 at once (start 0, rise 0)
 * into the initial elevation (sw_faults_surface with SW_FAULTS_INSTANT); a run adds the others' motion as
 * it happens, step by step (sw_faults_increment), so that the sea floor rises while waves already travel.
 */
#ifndef SW_FAULTS_H
#define SW_FAULTS_H

#include <stddef.h>

#include "base/grid.h"
#include "base/status.h"
#include "inputs/okada.h"
#include "inputs/scenario.h"

typedef struct {
    sw_okada_fault f;     /* geometry, slip and elastic constant of the segment (okada.h) */
    double rigidity_pa;   /* mu, Pa, for the seismic moment */
    double start_s;       /* when it starts to move, s after the run's start (>= 0) */
    double rise_s;        /* how long it moves, s (>= 0): its slip grows linearly from start to start + rise */
    int kajiura;          /* 1: the sea surface takes the floor's uplift filtered by 1 / cosh(k h) (kajiura.h);
                           * 0: the floor's vertical motion itself */
    int horizontal;       /* 1: the horizontal motion over the sloping seabed adds u_x dh/dx + u_y dh/dy (h the
                           * water depth, positive down; Tanioka & Satake 1996) */
    int section;          /* index of its [fault NAME] section among the scenario's faults */
    int line;             /* the line that gave it: the section header, or the segment table's line */
} sw_fault_segment;

typedef struct {
    size_t n;                 /* segments */
    sw_fault_segment *seg;    /* [n], owned */
    double cutoff;            /* okada.h sw_okada_field's cutoff, used for every segment */
} sw_fault_set;

/* What of a set sw_faults_surface evaluates. */
typedef enum { SW_FAULTS_INSTANT = 0, SW_FAULTS_ALL = 1 } sw_faults_which;

/* Collects the segments of every [fault NAME] section of sc (reading segment table files relative to the
 * scenario's folder), in file order. *out is zeroed and filled; a scenario without faults gives n = 0.
 * Returns SW_OK, or a failure with err naming the table file and line, or the scenario line. Free with
 * sw_faults_free. */
sw_status sw_faults_collect(const sw_scenario *sc, sw_fault_set *out, sw_error *err);

/* Releases what s owns and zeroes it. s may be NULL. */
void sw_faults_free(sw_fault_set *s);

/* Adds to eta_m ([ny * nx], m) the sea-surface displacement of the segments that `which` selects (the
 * instant ones: start 0 and rise 0; or all, at their full slip) on grid g, over the depth field depth_m
 * (positive down; needed for the Kajiura filter and the horizontal term; cells below min_depth_m are land).
 * Returns SW_OK or the failure (memory, a bad segment). */
sw_status sw_faults_surface(const sw_fault_set *s, sw_faults_which which, const sw_grid *g, const double *depth_m,
                            double min_depth_m, double *eta_m, sw_error *err);

/* The sea-surface change between times t0_s < t1_s from the segments moving then (each at the share of its
 * slip it gains between t0 and t1), written into inc_m ([ny * nx], m; set to 0 first). *moved is 0 when no
 * segment moved in (t0, t1]: then inc_m is all 0 and nothing was evaluated. Instant segments never move here
 * (they are in the initial elevation). Returns SW_OK or the failure. */
sw_status sw_faults_increment(const sw_fault_set *s, double t0_s, double t1_s, const sw_grid *g,
                              const double *depth_m, double min_depth_m, double *inc_m, int *moved, sw_error *err);

/* The time (s) the last segment stops moving (0 when all are instant). */
double sw_faults_end(const sw_fault_set *s);

/* The total seismic moment (N m) of the set. */
double sw_faults_moment(const sw_fault_set *s);

#endif
