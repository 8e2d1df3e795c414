/* kajiura.h - from sea-floor displacement to the initial sea surface: the 1 / cosh(k h) filter of
 * Kajiura (1963, Bull. Earthquake Res. Inst. 41, 535-571), with a real FFT (FFTW3) on the model grid.
 */
#ifndef SW_KAJIURA_H
#define SW_KAJIURA_H

#include "base/grid.h"
#include "base/status.h"

/* Filters the sea-floor uplift `floor_m` ([ny * nx], m) into the sea surface `surface_m` ([ny * nx], m):
 * each horizontal wavenumber k of the uplift reduced by 1 / cosh(k h). The depth varies over the grid:
 * the field is filtered for a ladder of depths spanning the wet cells' range and each cell takes its own
 * depth's value, interpolated between the nearest rungs (docs/faults.md states the ladder and its error);
 * the grid is zero-padded so that the filter does not wrap round. depth_m ([ny * nx], m, positive
 * down) below min_depth_m is land: its surface value is 0. On a geographic grid the x wavenumbers use the
 * cell width at the domain's mid-latitude. floor_m and surface_m may be the same array. Returns SW_OK, or
 * SW_ERR_NOMEM / SW_ERR_USAGE with a message.
 *
 * In detail (kajiura.c):
 *  - Needs g with nx, ny >= 1 and finite cell sizes > 0 (a geographic grid: radius > 0, its mid-latitude
 *    away from the poles); finite min_depth_m; a finite depth and uplift at every wet cell (depth >=
 *    min_depth_m; a NaN depth is land). Else SW_ERR_USAGE naming the cell "(i, j)" and what is accepted.
 *  - Uplift on land is ignored (no water stands over it), so the k = 0 term, the volume, is the uplift's
 *    integral over the wet cells; it is kept exactly, and the surface holds it when the filtered field
 *    fits on the grid (none of it lands on land or beyond the edges).
 *  - Constant depth (every wet cell equally deep): one transform at that depth, exact to round-off.
 *    Varying depth: rungs geometrically spaced at most exp(0.125) apart from the shallowest to the deepest
 *    wet cell (plus one beyond each end), cubic interpolation in ln(depth); the error is at most 1.9e-5 of
 *    each wavenumber's amplitude (for a hump with a positive transform, of its peak) [derived]. Depths
 *    where (k_max h)^2 / 2 < 1e-6 (k_max the grid's largest wavenumber) share one rung. Rungs no cell
 *    needs are skipped (a seabed of two depths costs two transforms).
 *  - Zero padding: a margin of 24 times the depth of the deepest rung used (in true cell widths; at
 *    least 16 cells) on each axis, so what wraps round is below about 1e-16 of the field for fields
 *    smooth at the grid scale.
 *  - Memory: about 8 (1 + T) bytes per cell of the padded grid (T the threads, one spectrum each), plus
 *    8 bytes per grid cell. Failure: SW_ERR_NOMEM ("out of memory", or a padded grid too large for FFTW's
 *    int sizes); surface_m is then unchanged.
 *  - Threads: the rungs are spread over the threads of a parallel region it opens (one thread when
 *    called inside an active parallel region); results are bitwise the same for any thread count. Safe to
 *    call from several threads at once (FFTW's planner runs in `omp critical(sw_fftw_plan)`).
 *  - Cost, measured on one thread of a busy 2-core machine: a 2000 x 2000 grid of 1 km cells, depths
 *    10 - 6000 m (55 rungs, padded to 2240 x 2240): 4 - 7 s; of 200 m cells, depths 2 - 6000 m (67 rungs,
 *    padded to 2880 x 2880): 10 - 18 s. */
sw_status sw_kajiura_filter(const sw_grid *g, const double *depth_m, double min_depth_m, const double *floor_m,
                            double *surface_m, sw_error *err);

#endif
