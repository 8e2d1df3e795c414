/* fpmode.h - flushing subnormal numbers to zero around the hot loops, and restoring the caller's mode.
 *
 * Wave tails decay through the subnormal range (below 1.18e-38 in single precision, 2.2e-308 in
 * double), where x86 arithmetic takes a slow microcode path: the step ran 2.6x slower in single
 * precision than in double on the calibration basin until they were flushed. With the x86 MXCSR bits
 * FTZ (results) and DAZ (inputs) set, such values count as 0, far below any tolerance. The step and
 * the tracker run in this mode on every thread, so results stay the same bits for any thread count.
 * Without SSE2 (other CPUs) these do nothing and the default mode stays.
 */
#ifndef SW_FPMODE_H
#define SW_FPMODE_H

#if defined(__SSE2__)
#include <xmmintrin.h>
#endif

/* Sets flush-to-zero for this thread; returns the mode to give sw_fp_restore. */
static inline unsigned int sw_fp_flush(void)
{
#if defined(__SSE2__)
    const unsigned int saved = _mm_getcsr();
    _mm_setcsr(saved | 0x8040u);   /* FTZ (bit 15) | DAZ (bit 6) */
    return saved;
#else
    return 0;
#endif
}

/* Restores the mode sw_fp_flush returned. */
static inline void sw_fp_restore(unsigned int saved)
{
#if defined(__SSE2__)
    _mm_setcsr(saved);
#else
    (void)saved;
#endif
}

#endif
