/* tracker.c - arrival time and extremes at cell centres (see tracker.h). */
#include "tracker.h"

#include <math.h>
#include <stdlib.h>

#include "omp_compat.h"

struct sw_tracker {
    size_t nx, ny;
    double threshold;     /* m */
    int n_threads;        /* row buffers available */
    double *eta_max, *eta_min, *arrival, *eta_max_time;  /* [ny * nx], m and s */
    double *speed_max;    /* [ny * nx]: squared speed (m2 s-2) while running, speed (m/s) after _maps */
    double *rows;         /* [n_threads * 3 * nx]: eta, u, v of one row per thread */
    int *nonfinite;       /* [n_threads]: thread saw a NaN or Inf */
};

void sw_tracker_free(sw_tracker *t)
{
    if (!t)
        return;
    free(t->eta_max);
    free(t->eta_min);
    free(t->arrival);
    free(t->eta_max_time);
    free(t->speed_max);
    free(t->rows);
    free(t->nonfinite);
    free(t);
}

sw_status sw_tracker_create(const sw_model *m, double threshold_m, int n_threads, sw_tracker **out,
                            sw_error *err)
{
    *out = NULL;
    const sw_grid *g = sw_model_grid(m);
    size_t n = sw_grid_cells(g);
    sw_tracker *t = calloc(1, sizeof *t);
    if (!t)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory allocating the arrival tracker");
    t->nx = g->nx;
    t->ny = g->ny;
    t->threshold = threshold_m;
    t->n_threads = n_threads < 1 ? 1 : n_threads;
    t->eta_max = malloc(n * sizeof(double));
    t->eta_min = malloc(n * sizeof(double));
    t->arrival = malloc(n * sizeof(double));
    t->eta_max_time = malloc(n * sizeof(double));
    t->speed_max = malloc(n * sizeof(double));
    t->rows = malloc((size_t)t->n_threads * 3 * g->nx * sizeof(double));
    t->nonfinite = calloc((size_t)t->n_threads, sizeof(int));
    if (!t->eta_max || !t->eta_min || !t->arrival || !t->eta_max_time || !t->speed_max || !t->rows
        || !t->nonfinite) {
        sw_tracker_free(t);
        return sw_fail(err, SW_ERR_NOMEM, "out of memory allocating the arrival tracker (%zu cells)", n);
    }
    for (size_t k = 0; k < n; k++) {
        t->eta_max[k] = -INFINITY;
        t->eta_min[k] = INFINITY;
        t->arrival[k] = NAN;
        t->eta_max_time[k] = 0.0;
        t->speed_max[k] = 0.0;
    }
    sw_tracker_update(t, m);
    *out = t;
    return SW_OK;
}

void sw_tracker_update(sw_tracker *t, const sw_model *m)
{
    const size_t nx = t->nx, ny = t->ny;
    const double now = sw_model_time(m), thr = t->threshold;
    int tid = omp_get_thread_num();
    if (tid >= t->n_threads)
        tid = 0;   /* never happens when created with the team size; stays memory-safe if it does */
    double *restrict e = t->rows + (size_t)tid * 3 * nx;
    double *restrict uu = e + nx;
    double *restrict vv = uu + nx;
    int bad = 0;
    SW_OMP(for schedule(static))
    for (size_t j = 0; j < ny; j++) {
        sw_model_centre_row(m, j, e, uu, vv);
        double *restrict mx = t->eta_max + j * nx, *restrict mn = t->eta_min + j * nx;
        double *restrict arr = t->arrival + j * nx, *restrict tmx = t->eta_max_time + j * nx;
        double *restrict sp = t->speed_max + j * nx;
        SW_OMP(simd reduction(| : bad))
        for (size_t i = 0; i < nx; i++) {
            int higher = e[i] > mx[i];
            mx[i] = higher ? e[i] : mx[i];
            tmx[i] = higher ? now : tmx[i];
            mn[i] = e[i] < mn[i] ? e[i] : mn[i];
            double s2 = uu[i] * uu[i] + vv[i] * vv[i];
            sp[i] = s2 > sp[i] ? s2 : sp[i];
            arr[i] = (arr[i] != arr[i] && fabs(e[i]) >= thr) ? now : arr[i];   /* first time only: NaN until set */
            bad |= !(fabs(e[i]) <= 1e300);   /* NaN or Inf */
        }
    }
    t->nonfinite[tid] |= bad;
}

void sw_tracker_maps(sw_tracker *t, const sw_model *m, const double *depth_m, sw_map_set *maps)
{
    const unsigned char *wet = sw_model_wet(m);
    for (size_t k = 0; k < t->nx * t->ny; k++)
        t->speed_max[k] = sqrt(t->speed_max[k]);
    for (size_t k = 0; k < t->nx * t->ny; k++)
        if (!wet[k])
            t->eta_max[k] = t->eta_min[k] = t->arrival[k] = t->eta_max_time[k] = t->speed_max[k] = NAN;
    maps->grid = sw_model_grid(m);
    maps->depth_m = depth_m;
    maps->wet = wet;
    maps->eta_max_m = t->eta_max;
    maps->eta_min_m = t->eta_min;
    maps->arrival_s = t->arrival;
    maps->eta_max_time_s = t->eta_max_time;
    maps->speed_max_ms = t->speed_max;
}

int sw_tracker_nonfinite(const sw_tracker *t)
{
    int bad = 0;
    for (int q = 0; q < t->n_threads; q++)
        bad |= t->nonfinite[q];
    return bad;
}

double sw_tracker_max_abs(const sw_tracker *t)
{
    double worst = 0.0;
    for (size_t k = 0; k < t->nx * t->ny; k++) {
        if (isnan(t->eta_max[k]))
            continue;   /* land, after sw_tracker_maps */
        worst = fmax(worst, fmax(fabs(t->eta_max[k]), fabs(t->eta_min[k])));
    }
    return worst;
}

double sw_tracker_noise(const sw_tracker *t, const unsigned char *wet)
{
    const size_t nx = t->nx, ny = t->ny;
    const double *e = t->eta_max;
    double hp2 = 0, e2 = 0;
    for (size_t j = 1; j + 1 < ny; j++)
        for (size_t i = 1; i + 1 < nx; i++) {
            int all_wet = 1;
            double smooth = 0;
            for (int dj = -1; dj <= 1; dj++)
                for (int di = -1; di <= 1; di++) {
                    size_t k = (j + (size_t)dj) * nx + (i + (size_t)di);
                    all_wet &= wet[k];
                    smooth += (di ? 0.25 : 0.5) * (dj ? 0.25 : 0.5) * e[k];
                }
            if (!all_wet)
                continue;
            double c = e[j * nx + i];
            hp2 += (c - smooth) * (c - smooth);
            e2 += c * c;
        }
    return e2 > 0 ? sqrt(hp2 / e2) : 0;
}
