/* seabed.h - water depth at cell centres, from a NetCDF file or the scenario's analytic recipe.
 *
 * Depth is in metres, positive down (below mean sea level); land has depth <= 0 (its elevation,
 * negated; 0 where the seabed file marks land by a missing value or a mask). Cells with depth < the
 * scenario's min_depth_m are treated as land by the model; this module does not apply that threshold,
 * so the written depth map still shows the land's shape.
 */
#ifndef SW_SEABED_H
#define SW_SEABED_H

#include <stddef.h>

#include "base/grid.h"
#include "base/status.h"
#include "inputs/scenario.h"

/* The depths a seabed accepts, m, the same whether the recipe's keys or a file give them: down to
 * 12 km ([seabed] deep <= 12 km; the deepest trench is about 10.9 km [memory]) and up to 9 km of land
 * ([seabed] land_height <= 9 km; the highest summit is about 8.8 km [memory]). */
#define SW_SEABED_DEPTH_MAX_M 12000.0
#define SW_SEABED_HEIGHT_MAX_M 9000.0

/* Fills sc->grid from the seabed file when the scenario has no [grid] section (sc->has_grid == 0):
 * the grid becomes the file's grid (ncinput.h: coordinate variables evenly spaced and monotonic, in
 * metres, or latitude and longitude in degrees, which make the grid geographic with radius
 * sc->grid.radius_m, or SW_EARTH_RADIUS_M when that is 0). Does nothing when sc->has_grid. Returns
 * SW_OK or an error naming the scenario line, the file and the variable; sc is then unchanged. */
sw_status sw_seabed_grid(sw_scenario *sc, sw_error *err);

/* What the seabed file contributed beside the depths. */
typedef struct {
    size_t land_missing;  /* cells made land by missing values of the file ([seabed] missing = land) */
    size_t land_mask;     /* cells made land by the land mask ([seabed] land_mask); a cell both masked and
                           * missing counts here */
} sw_seabed_info;

/* Builds depth_m[j * nx + i] (caller allocates nx*ny doubles) for sc->grid.
 * With sc->bed_file set: reads the variable (ncinput.h: interpolated bilinearly onto the grid when the
 * file's grid differs; a grid cell centre beyond the file's cells is an error, one within half a cell
 * beyond the outer centres takes the edge value, so a refined grid over the file's area reads it),
 * converting elevation (positive up) to depth. A cell whose nearest file point is land by a missing
 * value (sc->bed_missing_land) or by the land mask (sc->bed_land_mask) gets depth 0: land for every
 * min_depth (> 0). NaN/Inf, a missing value otherwise or an unpacking overflow is an error naming the
 * variable and the first bad index; so is a depth beyond -SW_SEABED_HEIGHT_MAX_M .. SW_SEABED_DEPTH_MAX_M
 * (naming the grid cell and its centre). Without a file: evaluates the recipe (base profile, then features in file order); on a
 * geographic grid its lengths are true distances on the sphere (seabed.c).
 * info (may be NULL) receives the land counts (0 without a file). On failure depth_m and *info hold no
 * meaningful values; err names the scenario line, the file and the variable. */
sw_status sw_seabed_build_info(const sw_scenario *sc, double *depth_m, sw_seabed_info *info, sw_error *err);

/* sw_seabed_build_info without the counts. */
sw_status sw_seabed_build(const sw_scenario *sc, double *depth_m, sw_error *err);

#endif
