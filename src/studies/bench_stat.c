/* bench_stat.c - median and spread of a benchmark's measurements (see bench_stat.h). */
#include "studies/bench_stat.h"

#include <stdlib.h>
#include <string.h>

#define MAX_VALUES 64

static int cmp_double(const void *a, const void *b)
{
    const double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

sw_bench_stat sw_bench_summary(const double *x, int n)
{
    if (n > MAX_VALUES)
        n = MAX_VALUES;
    sw_bench_stat st = {0, 0, 0, n < 0 ? 0 : n};
    if (n <= 0)
        return st;
    double v[MAX_VALUES];
    memcpy(v, x, (size_t)n * sizeof(double));
    qsort(v, (size_t)n, sizeof(double), cmp_double);
    st.min = v[0];
    st.max = v[n - 1];
    st.median = n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
    return st;
}
