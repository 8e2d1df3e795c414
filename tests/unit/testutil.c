/* testutil.c - helpers shared by the unit tests (see testutil.h). */
#include "testutil.h"

#include "model/model.h"
#include "base/omp_compat.h"

#include <stdio.h>
#include <stdlib.h>

void tu_tmp_path(char *out, size_t n, const char *name)
{
    const char *dir = getenv("SW_TEST_TMP");
    snprintf(out, n, "%s/%s", dir && *dir ? dir : "/tmp", name);
}

int tu_write_file(const char *path, const char *text)
{
    FILE *f = fopen(path, "w");
    if (!f)
        return -1;
    int bad = fputs(text, f) < 0;
    bad |= fclose(f) != 0;
    return bad ? -1 : 0;
}

void tu_advance(struct sw_model *m, long n, int threads)
{
    omp_set_num_threads(threads);
    SW_OMP(parallel)
    for (long k = 0; k < n; k++) {
        sw_model_step(m);
        SW_OMP(single)
        sw_model_tick(m);
    }
}

double tu_measure_period(struct sw_model *m, double expected_s, int n_periods, int *crossings)
{
    double dt = sw_model_dt(m);
    long steps = (long)(expected_s * (n_periods + 0.75) / dt);
    double prev = sw_model_eta(m, 0, 0), t_first = -1, t_last = -1;
    *crossings = 0;
    for (long n = 0; n < steps; n++) {
        tu_advance(m, 1, 1);
        double now = sw_model_eta(m, 0, 0);
        if ((prev > 0) != (now > 0)) {
            double t = sw_model_time(m) - dt + dt * prev / (prev - now);
            if (*crossings == 0)
                t_first = t;
            t_last = t;
            ++*crossings;
        }
        prev = now;
    }
    return *crossings > 1 ? 2.0 * (t_last - t_first) / (*crossings - 1) : 0.0;
}
