/* estimate.h - how fast this machine steps a layout, measured on the spot, for run-time estimates. */
#ifndef SW_ESTIMATE_H
#define SW_ESTIMATE_H

#include "layout.h"

/* Measures cell updates per second (step + arrival tracking) for `layout` in `precision` with `threads` threads
 * (0 = OpenMP default) on a 512 x 512 flat basin, for about `seconds` of wall time after a warm-up
 * step. Returns 0 if the measurement could not be made (out of memory). */
double sw_estimate_rate(const sw_layout *layout, sw_precision precision, int threads, double seconds);

#endif
