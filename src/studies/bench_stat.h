/* bench_stat.h - a benchmark figure: the median of repeated measurements, with their spread. */
#ifndef SW_BENCH_STAT_H
#define SW_BENCH_STAT_H

/* Median and spread of repeated measurements. */
typedef struct {
    double median, min, max;   /* same units as the measurement */
    int n;                     /* measurements */
} sw_bench_stat;

/* The median, least and largest of x[0 .. n-1] (n >= 0; x is not changed; all 0 when n is 0). The median of
 * an even count is the mean of the middle two. n at most 64 (more are ignored). */
sw_bench_stat sw_bench_summary(const double *x, int n);

#endif
