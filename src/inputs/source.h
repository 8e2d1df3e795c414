/* source.h - the initial sea-surface displacement at cell centres, summed over the scenario's sources.
 */
#ifndef SW_SOURCE_H
#define SW_SOURCE_H

#include "inputs/scenario.h"
#include "base/status.h"

/* Fills eta0_m[j * nx + i] (caller allocates nx*ny doubles) with the sum of all sources in
 * sc->sources, evaluated at cell centres of sc->grid (metres above mean sea level); on a geographic grid
 * the shapes' lengths are true distances on the sphere about each centre (source.c). File
 * sources are interpolated bilinearly; cells outside the file's extent get 0. NaN/Inf in a file
 * is an error naming the variable and the first bad index. The model zeroes land cells itself. */
sw_status sw_source_build(const sw_scenario *sc, double *eta0_m, sw_error *err);

#endif
