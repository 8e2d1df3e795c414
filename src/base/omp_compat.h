/* omp_compat.h - OpenMP pragmas and calls that also build without OpenMP. */
#ifndef SW_OMP_COMPAT_H
#define SW_OMP_COMPAT_H

#define SW_PRAGMA(x) _Pragma(#x)
#ifdef _OPENMP
#include <omp.h>
#define SW_OMP(x) SW_PRAGMA(omp x)
#else
#define SW_OMP(x)
static inline int omp_get_thread_num(void) { return 0; }
static inline int omp_get_num_threads(void) { return 1; }
static inline int omp_get_max_threads(void) { return 1; }
static inline void omp_set_num_threads(int n) { (void)n; }
static inline double omp_get_wtime(void) { return 0.0; }
#endif

#endif
