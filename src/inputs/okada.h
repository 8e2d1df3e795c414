/* okada.h - the surface displacement of a finite rectangular dislocation in an elastic half-space
 * (Okada 1985, Bull. Seismol. Soc. Am. 75, 1135-1154): the sea floor's motion under an earthquake fault.
 *
 * Conventions (docs/faults.md): a fault is a rectangle `length` along strike by `width` down dip; its
 * reference point is the CENTRE OF ITS TOP EDGE, at depth `depth_m` below the sea floor (the half-space's
 * free surface). strike: degrees clockwise from north, the fault dipping to the right of the strike
 * direction (Aki & Richards); dip: 0 < dip <= 90 degrees; rake: the slip direction of the hanging wall
 * in the fault plane, degrees counter-clockwise from the strike direction (90 = thrust, 0 = left-lateral).
 * Displacements are east, north and up, in metres.
 */
#ifndef SW_OKADA_H
#define SW_OKADA_H

#include <stddef.h>

#include "base/grid.h"
#include "base/status.h"

typedef struct {
    double x_m, y_m;      /* the centre of the top edge, in grid coordinates (m; on a geographic grid arc
                           * metres, grid.h: the fault is evaluated on the plane tangent at this point) */
    double depth_m;       /* depth of the top edge below the sea floor, m (>= 0) */
    double length_m;      /* along strike, m (> 0) */
    double width_m;       /* down dip, m (> 0) */
    double strike_deg;    /* clockwise from north, deg */
    double dip_deg;       /* 0 < dip <= 90 deg */
    double rake_deg;      /* -180 .. 180 deg */
    double slip_m;        /* along rake, m (>= 0) */
    double opening_m;     /* tensile opening, m (0 for an earthquake) */
    double poisson;       /* Poisson's ratio nu of the half-space (0.25 gives lambda = mu: common practice) */
} sw_okada_fault;

/* The displacement (east, north, up; m) at the surface point (x_m, y_m) (grid coordinates; on a
 * geographic grid g the local east and north distances from the fault's reference point are taken on
 * the azimuthal equidistant plane about it: true distance and bearing from it; g may be NULL for a
 * projected plane). Okada (1985) formulas, including the singular cases on the fault trace (the rules the
 * paper gives; exactly at a corner of a fault that reaches the surface, where the displacement is
 * singular, the value is finite but arbitrary). A dip within 0.00034 deg of 90 is taken as 90 (okada.c).
 * Needs f within sw_okada_field's ranges (otherwise the result is unspecified, possibly NaN); never fails.
 * At a cell centre of g it gives sw_okada_field's bits for that fault. */
void sw_okada_point(const sw_okada_fault *f, const sw_grid *g, double x_m, double y_m, double out[3]);

/* Adds the displacement of faults f[0 .. n-1] at every cell centre of grid g to ux, uy, uz ([ny * nx],
 * m; any may be NULL when not wanted; uz's bits do not depend on whether ux or uy are asked for), threads
 * over rows. A fault is evaluated only within `reach` of its rectangle's surface projection:
 * reach = cutoff * (length + width + depth) (the far field decays as the inverse square of the distance:
 * cutoff 20 leaves below about 1e-3 of the peak beyond it [derived, docs/faults.md]); in practice on the
 * cells within reach + sqrt((length/2)^2 + (width cos dip)^2) of its reference point (true distances on
 * a geographic grid), which contain that region; cutoff <= 0 evaluates everywhere. Checks every fault
 * before writing anything: SW_ERR_RANGE with a one-line message naming the fault index, the key and the
 * accepted range for a value that is not finite, dip outside (0, 90], length or width <= 0, depth < 0,
 * slip < 0, poisson outside (0, 0.5); SW_ERR_USAGE for a missing grid or a geographic grid without a
 * radius; SW_ERR_NOMEM. Results are bitwise the same for any thread count (each cell sums its faults in
 * index order). n = 0 or all outputs NULL: SW_OK, nothing written. */
sw_status sw_okada_field(const sw_okada_fault *f, size_t n, const sw_grid *g, double cutoff, double *ux, double *uy,
                         double *uz, sw_error *err);

/* Seismic moment M0 = mu * length * width * slip (N m) of a fault, mu the rigidity (Pa). */
double sw_okada_moment(const sw_okada_fault *f, double rigidity_pa);

/* Moment magnitude Mw = (2/3)(log10 M0 - 9.1), M0 in N m (Hanks & Kanamori 1979); -infinity for
 * M0 <= 0. */
double sw_moment_magnitude(double m0_nm);

#endif
