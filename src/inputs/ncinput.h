/* ncinput.h - reading a 2D field on x/y coordinates (metres) from a NetCDF file onto a grid.
 *
 * The variable must have exactly two dimensions (y, x) (any names); each dimension must have a
 * 1D coordinate variable of the same name, evenly spaced and strictly increasing, in metres
 * (units "m" or "km"; km is converted). Values are the coordinates of cell centres.
 */
#ifndef SW_NCINPUT_H
#define SW_NCINPUT_H

#include "base/grid.h"
#include "base/status.h"

typedef enum { SW_NCIN_OUTSIDE_ERROR = 0, SW_NCIN_OUTSIDE_ZERO } sw_ncin_outside;

/* Reads the grid of `var` in `path` (cell-centre coordinates -> sw_grid with x0/y0 at the
 * south-west corner). Returns SW_OK, or SW_ERR_IO / SW_ERR_NETCDF / SW_ERR_INPUT with a message
 * that names the file and variable. */
sw_status sw_ncin_grid(const char *path, const char *var, sw_grid *out, sw_error *err);

/* Reads `var` from `path` and puts it on grid g: copied when the grids coincide, bilinearly
 * interpolated otherwise (a target cell centre outside the file's cell-centre extent is an error or
 * 0, per `outside`). Fills out[j * g->nx + i]. When positive_attr is not NULL it receives the
 * variable's `positive` attribute: SW_POSITIVE_UP / _DOWN, or SW_POSITIVE_UNSET when absent
 * (the int holds an sw_positive). NaN, Inf or _FillValue values are an error naming the variable
 * and the first bad index as "var[j][i]". */
sw_status sw_ncin_read(const char *path, const char *var, const sw_grid *g, sw_ncin_outside outside,
                       double *out, int *positive_attr, sw_error *err);

#endif
