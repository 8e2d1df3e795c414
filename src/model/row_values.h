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

/* A row's centre values: the elevation sw_model_centre_row_f32 gives, bit for bit, and the squared speed
 * u*u + v*v of its u and v computed in float; and for each segment q of SW_OBS_SEG cells (the last may be
 * shorter) the highest and lowest elevation and the highest squared speed over the segment. The observer
 * (the tracker) needs the speed only squared: handing that over, not u and v, spares a value a cell both
 * ways and the tracker's own squaring. */
typedef struct {
    const float *eta, *speed2;        /* [nx] m, m2 s-2 */
    const float *hi, *lo, *top_speed2;/* [ceil(nx / SW_OBS_SEG)] m, m, m2 s-2 */
} sw_row_values;

/* Floats of a row's values in a buffer (sw_row_values' arrays one after the other) for nx cells. */
static inline size_t sw_row_values_len(size_t nx) { return 2 * nx + 3 * ((nx + SW_OBS_SEG - 1) / SW_OBS_SEG); }

/* The sw_row_values whose arrays lie in buf (sw_row_values_len(nx) floats). */
static inline sw_row_values sw_row_values_in(const float *buf, size_t nx)
{
    const size_t n_seg = (nx + SW_OBS_SEG - 1) / SW_OBS_SEG;
    return (sw_row_values){buf, buf + nx, buf + 2 * nx, buf + 2 * nx + n_seg, buf + 2 * nx + 2 * n_seg};
}

/* The squared speed u*u + v*v of centre values u, v, in float: the one expression of every maker of
 * sw_row_values.speed2 (contraction is off, so the same bits wherever it is computed). */
static inline float sw_speed2(float u, float v) { return u * u + v * v; }

/* The highest and lowest e and the highest s2 over cells [a, b) of a row's centre values. The comparisons
 * are not fmaxf / fminf, which are libm calls per cell and stop the loop from vectorising. */
static inline void sw_row_extremes(const float *restrict e, const float *restrict s2, size_t a, size_t b,
                                   float *hi_out, float *lo_out, float *speed2_out)
{
    float hi = -INFINITY, lo = INFINITY, top = 0;
#ifdef _OPENMP
#pragma omp simd reduction(max : hi, top) reduction(min : lo)
#endif
    for (size_t i = a; i < b; i++) {
        hi = e[i] > hi ? e[i] : hi;
        lo = e[i] < lo ? e[i] : lo;
        top = s2[i] > top ? s2[i] : top;
    }
    *hi_out = hi;
    *lo_out = lo;
    *speed2_out = top;
}

#endif
