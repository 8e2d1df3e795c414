/* real.h - the floating-point type of the model state, chosen in this one place.
 *
 * Everything the time step reads or writes (eta, velocities, depths at velocity points)
 * is an sw_real. Inputs, outputs and diagnostics stay in double.
 */
#ifndef SW_REAL_H
#define SW_REAL_H

typedef double sw_real;

#endif
