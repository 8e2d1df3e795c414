/* estimate.c - a short calibration run (see estimate.h). */
#include "estimate.h"

#include <math.h>
#include <stdlib.h>

#include "model.h"
#include "omp_compat.h"
#include "tracker.h"

double sw_estimate_rate(const sw_layout *layout, sw_precision precision, int threads, double seconds)
{
    enum { N = 512 };
    sw_grid g = {.nx = N, .ny = N, .dx_m = 1000, .dy_m = 1000};
    double *depth = malloc((size_t)N * N * sizeof(double));
    double *eta0 = malloc((size_t)N * N * sizeof(double));
    if (!depth || !eta0) {
        free(depth);
        free(eta0);
        return 0;
    }
    for (size_t j = 0; j < N; j++)
        for (size_t i = 0; i < N; i++) {
            double x = (double)i - N / 2.0, y = (double)j - N / 2.0;
            depth[j * N + i] = 1000;
            eta0[j * N + i] = exp(-(x * x + y * y) / 400.0);
        }
    sw_model_config cfg = {.layout = layout, .grid = g, .depth_m = depth, .eta0_m = eta0, .min_depth_m = 1,
                           .gravity_ms2 = 9.81, .dt_s = 1.0, .precision = precision};
    cfg.dt_s = 0.9 * sw_model_dt_limit(layout, &g, depth, 1, 9.81, 2);
    if (threads > 0)
        omp_set_num_threads(threads);
    sw_model *m = NULL;
    sw_tracker *t = NULL;
    double rate = 0;
    if (sw_model_create(&cfg, &m, NULL) == SW_OK
        && sw_tracker_create(m, 0.01, omp_get_max_threads(), &t, NULL) == SW_OK) {
        sw_model_step(m);   /* warm-up: first touch, caches */
        double t0 = omp_get_wtime(), wall = 0;
        long long steps = 0;
        while (wall < seconds) {
            SW_OMP(parallel)
            for (int n = 0; n < 10; n++) {
                sw_model_step(m);
                sw_tracker_update(t, m);
            }
            steps += 10;
            wall = omp_get_wtime() - t0;
        }
        rate = (double)steps * N * N / wall;
    }
    sw_tracker_free(t);
    sw_model_free(m);
    free(depth);
    free(eta0);
    return rate;
}
