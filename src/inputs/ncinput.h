/* ncinput.h - reading a 2D field from a NetCDF file onto a grid, projected (x/y in metres) or geographic
 * (longitude/latitude in degrees).
 *
 * The variable must have exactly two dimensions (y, x) (any names); each dimension must have a 1D
 * coordinate variable of the same name holding the coordinates of cell centres, evenly spaced and
 * monotonic: increasing, or decreasing (then the axis is reversed on read, so a file and its mirror
 * give the same field, bit for bit). The coordinates are either
 *   - both lengths: units "m" or "km" (km converted; no units attribute means metres): a projected file;
 *   - longitude and latitude (CF-1.11 sec. 4.1 and 4.2): units degrees_east / degrees_north (also
 *     degree_east, degrees_E, degree_E, degreesE, degreeE and the _north / N forms), or a
 *     standard_name longitude / latitude with units "degrees" (or none): a geographic file, with the
 *     latitude as the first dimension. Latitudes lie within -90 .. 90; longitudes within -180 .. 360
 *     (files in -180 .. 180 or 0 .. 360, or crossing 180 in either form). A longitude axis that goes
 *     round the sphere (n dlon = 360; a repeated last column at first + 360 is dropped) wraps.
 * Mixed axes (one in degrees, one in metres) are an error.
 *
 * A geographic file is read onto a geographic grid only and a projected file onto a projected grid only
 * (grid.h); the grid's longitudes are matched to the file's modulo 360. A longitude spacing that divides
 * 360 (within the evenly-spaced tolerance) is taken as exactly 360 / k and the centres as lying on its
 * half-cells, so that the same data in 0 .. 360 and in -180 .. 180 give the same field, bit for bit.
 *
 * Damaged files: sw_ncin_grid and sw_ncin_read_with first run themselves once per file and variable in an
 * isolated child (base/isolate.h), so that a NetCDF/HDF5 crash, hang or runaway allocation on a damaged
 * file is an SW_ERR_INPUT error naming the file; SHOREWARD_ISOLATE=off reads in the process only.
 */
#ifndef SW_NCINPUT_H
#define SW_NCINPUT_H

#include <stddef.h>

#include "base/grid.h"
#include "base/status.h"

/* Target cell centres beyond the file: an error, or 0 (sources). */
typedef enum { SW_NCIN_OUTSIDE_ERROR = 0, SW_NCIN_OUTSIDE_ZERO } sw_ncin_outside;

/* Flags of sw_ncin_options.land: why a cell is land. */
#define SW_NCIN_LAND_MISSING 1u   /* the file's value there is missing (with missing_land) */
#define SW_NCIN_LAND_MASK 2u      /* the land mask marks it */

/* How sw_ncin_read_with reads a variable. The zero value reads as sw_ncin_read does with
 * SW_NCIN_OUTSIDE_ERROR and no `positive`. */
typedef struct {
    sw_ncin_outside outside;  /* target centres beyond the file: error or 0. With ERROR, centres within the
                               * file's cell extent (up to half a cell beyond its outer centres) take the
                               * nearest edge value; with ZERO, everything beyond the outer centres is 0 */
    int missing_land;         /* 1: a missing value (_FillValue, missing_value, the type's default fill, NaN)
                               * marks land instead of being an error (Inf is still an error) */
    const char *land_mask;    /* a variable of the same file on the same dimensions whose land cells are
                               * land: nonzero; with flag_values and flag_meanings, the value whose meaning
                               * is "land"; with standard_name sea_binary_mask, zero. NULL or "" = none */
    unsigned char *land;      /* [nx * ny] out, required with missing_land or land_mask, else may be NULL:
                               * the SW_NCIN_LAND_* bits of the file point nearest each target centre
                               * (0 = water, and all 0 without missing_land and land_mask); the value at a
                               * land cell is 0 */
    const char *missing_hint; /* without missing_land: text added in brackets to a missing-value error, e.g.
                               * how the input can declare land; NULL = none */
    int *positive_attr;       /* out when not NULL: the variable's `positive` attribute, SW_POSITIVE_UP /
                               * _DOWN, or SW_POSITIVE_UNSET when absent or other text (an sw_positive,
                               * scenario.h) */
    const char *range_accepted; /* NULL = no range check; else every file value that is not land must lie
                               * in [range_lo, range_hi] after unpacking (in the variable's units), and
                               * the first that does not, in storage order, is an SW_ERR_RANGE error
                               * naming var[j][i], its coordinates and this text as the accepted values */
    double range_lo, range_hi; /* the range, with range_accepted; in the unpacked variable's units */
} sw_ncin_options;

/* Reads the grid of `var` in `path`: cell-centre coordinates -> sw_grid with x0/y0 at the south-west
 * corner of the first cell. A geographic file gives kind SW_GRID_GEOGRAPHIC, radius_m = radius_m (<= 0:
 * SW_EARTH_RADIUS_M) and x0_m, dx_m, ... as arc lengths (grid.h: x = R lambda, y = R phi), longitudes as
 * the file writes them; a projected file gives kind SW_GRID_PROJECTED (radius_m 0). Needs path, var and
 * out. Returns SW_OK, or SW_ERR_IO / SW_ERR_NETCDF / SW_ERR_INPUT with a message that names the file and
 * variable (and the accepted form), or the isolated reader's SW_ERR_INPUT / SW_ERR_IO / SW_ERR_INTERRUPTED
 * for a file that crashes, hangs or exhausts the library (isolate.h); *out is then unchanged. */
sw_status sw_ncin_grid(const char *path, const char *var, double radius_m, sw_grid *out, sw_error *err);

/* Reads `var` from `path` onto grid g (its kind must match the file's): copied where the grids' centres
 * coincide, bilinearly interpolated otherwise; fills out[j * g->nx + i] (caller allocates). Where a target's
 * nearest file point is land (opt->land), the target is land with value 0; elsewhere an interpolation
 * uses only the file points that are not land, their weights renormalised. Values are unpacked
 * (scale_factor, add_offset). A missing value (without missing_land), NaN or Inf is an error naming the
 * variable and the first bad index in storage order as "var[j][i]"; so is a finite stored value whose
 * unpacking overflows, and, with opt->range_accepted, a value that is not land outside the range. opt may be NULL (the zero value).
 * Returns SW_OK, or SW_ERR_USAGE / SW_ERR_IO / SW_ERR_NETCDF / SW_ERR_INPUT / SW_ERR_RANGE / SW_ERR_NOMEM
 * with a one-line message naming the file and variable (or the isolated reader's errors, as sw_ncin_grid);
 * out and opt->land then hold no meaningful values. */
sw_status sw_ncin_read_with(const char *path, const char *var, const sw_grid *g, const sw_ncin_options *opt,
                            double *out, sw_error *err);

/* sw_ncin_read_with with only `outside` and `positive_attr` (which may be NULL) set. */
sw_status sw_ncin_read(const char *path, const char *var, const sw_grid *g, sw_ncin_outside outside,
                       double *out, int *positive_attr, sw_error *err);

#endif
