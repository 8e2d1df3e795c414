/* source.h - the initial sea-surface displacement at cell centres, summed over the scenario's sources.
 */
#ifndef SW_SOURCE_H
#define SW_SOURCE_H

#include "base/status.h"
#include "inputs/faults.h"
#include "inputs/scenario.h"

/* Fills eta0_m[j * nx + i] (caller allocates nx*ny doubles) with the sum of all sources in
 * sc->sources, evaluated at cell centres of sc->grid (metres above mean sea level); on a geographic grid
 * the shapes' lengths are true distances on the sphere about each centre (source.c). File
 * sources are interpolated bilinearly, times their scale and moved by their offsets; cells outside the
 * file's extent get 0. NaN/Inf in a file
 * is an error naming the variable and the first bad index. Then the sea surface of the instant fault
 * segments (start 0, rise 0: sw_faults_surface with SW_FAULTS_INSTANT) is added: `faults` is the
 * scenario's set (sw_faults_collect; sc's positions placed), or NULL to collect it here from sc;
 * depth_m ([ny * nx], m, positive down; cells below min_depth_m are land) is needed when a fault uses
 * the Kajiura filter or the horizontal term, and may be NULL otherwise. When faults_eta_m is not NULL
 * ([ny * nx], m) it receives the instant faults' sea surface alone (0 without faults). The model zeroes
 * land cells itself. Returns SW_OK or the failure (a file, a fault table, memory) with err naming the
 * scenario line or the file and line. */
sw_status sw_source_build(const sw_scenario *sc, const sw_fault_set *faults, const double *depth_m,
                          double min_depth_m, double *eta0_m, double *faults_eta_m, sw_error *err);

#endif
