/* row_values.h - a finished row's centre values as a step hands them to an observer, and their extremes.
 *
 * The tracker keeps its maps per segment of SW_OBS_SEG cells: for each segment it needs the highest and
 * lowest elevation and the highest squared speed. A step can make them in the same pass over memory as
 * its own arithmetic (stage.h, sw_continuity_observed_loop); the tracker makes them itself otherwise.
 * Both use sw_row_extremes' comparisons (the step inline, per segment), so the two ways give the same bits.
 */
#ifndef SW_ROW_VALUES_H
#define SW_ROW_VALUES_H

#include <math.h>
#include <stddef.h>

/* Cells per segment of a row. */
#define SW_OBS_SEG 512

/* A row's centre values: the values sw_model_centre_row_f32 gives, bit for bit, and for each segment q
 * of SW_OBS_SEG cells (the last may be shorter) the highest and lowest elevation and the highest
 * u*u + v*v, computed in float, over the segment. */
typedef struct {
    const float *eta, *u, *v;         /* [nx] m, m/s, m/s */
    const float *hi, *lo, *speed2;    /* [ceil(nx / SW_OBS_SEG)] m, m, m2 s-2 */
} sw_row_values;

/* Floats of a row's values in a buffer (sw_row_values' arrays one after the other) for nx cells. */
static inline size_t sw_row_values_len(size_t nx) { return 3 * nx + 3 * ((nx + SW_OBS_SEG - 1) / SW_OBS_SEG); }

/* The sw_row_values whose arrays lie in buf (sw_row_values_len(nx) floats). */
static inline sw_row_values sw_row_values_in(const float *buf, size_t nx)
{
    const size_t n_seg = (nx + SW_OBS_SEG - 1) / SW_OBS_SEG;
    return (sw_row_values){buf, buf + nx, buf + 2 * nx, buf + 3 * nx, buf + 3 * nx + n_seg, buf + 3 * nx + 2 * n_seg};
}

/* The highest and lowest e and the highest u*u + v*v over cells [a, b) of a row's centre values, in
 * float. The comparisons are not fmaxf / fminf, which are libm calls per cell and stop the loop from
 * vectorising. */
static inline void sw_row_extremes(const float *restrict e, const float *restrict u, const float *restrict v,
                                   size_t a, size_t b, float *hi_out, float *lo_out, float *speed2_out)
{
    float hi = -INFINITY, lo = INFINITY, top = 0;
#ifdef _OPENMP
#pragma omp simd reduction(max : hi, top) reduction(min : lo)
#endif
    for (size_t i = a; i < b; i++) {
        const float s2 = u[i] * u[i] + v[i] * v[i];
        hi = e[i] > hi ? e[i] : hi;
        lo = e[i] < lo ? e[i] : lo;
        top = s2 > top ? s2 : top;
    }
    *hi_out = hi;
    *lo_out = lo;
    *speed2_out = top;
}

#endif
