/* seabed.h - water depth at cell centres, from a NetCDF file or the scenario's analytic recipe.
 *
 * Depth is in metres, positive down (below mean sea level); land has depth <= 0 (its elevation,
 * negated). Cells with depth < the scenario's min_depth_m are treated as land by the model; this
 * module does not apply that threshold, so the written depth map still shows the land's shape.
 */
#ifndef SW_SEABED_H
#define SW_SEABED_H

#include "base/grid.h"
#include "inputs/scenario.h"
#include "base/status.h"

/* Fills sc->grid from the seabed file when the scenario has no [grid] section (sc->has_grid == 0):
 * the grid becomes the file's grid (its coordinate variables must be evenly spaced, increasing,
 * in metres). Does nothing when sc->has_grid. Returns SW_OK or an error naming the file. */
sw_status sw_seabed_grid(sw_scenario *sc, sw_error *err);

/* Builds depth_m[j * nx + i] (caller allocates nx*ny doubles) for sc->grid.
 * With sc->bed_file set: reads the variable (interpolated bilinearly onto the grid when the file's
 * grid differs; a grid cell outside the file's extent is an error), converting elevation
 * (positive up) to depth. NaN/Inf in the file is an error naming the variable and the first bad
 * index. Without a file: evaluates the recipe (base profile, then features in file order).
 * On failure depth_m holds no meaningful values. */
sw_status sw_seabed_build(const sw_scenario *sc, double *depth_m, sw_error *err);

#endif
