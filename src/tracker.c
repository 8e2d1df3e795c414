/* tracker.c - arrival time and extremes at cell centres (see tracker.h).
 *
 * The running maps are kept in single precision (4 bytes a value: 7 significant digits for
 * elevations, and for times a resolution finer than 0.01 s up to a simulated day): the tracker
 * reads and writes them at every step, so their size is its cost. sw_tracker_maps converts them to
 * the double maps the writers take.
 */
#include "tracker.h"

#include <math.h>
#include <stdlib.h>

#include "omp_compat.h"

struct sw_tracker {
    size_t nx, ny;
    float threshold;      /* m */
    int n_threads;        /* row buffers available */
    float *eta_max, *eta_min;      /* [ny * nx] running extremes, m */
    float *arrival, *eta_max_time; /* [ny * nx] s; arrival NaN until reached */
    float *speed2_max;             /* [ny * nx] squared speed, m2 s-2 */
    double *rows;         /* [n_threads * 3 * nx]: eta, u, v of one row per thread */
    int *nonfinite;       /* [n_threads]: thread saw a NaN or Inf */
    double *out;          /* [5 * ny * nx] the double maps, made by sw_tracker_maps */
};

void sw_tracker_free(sw_tracker *t)
{
    if (!t)
        return;
    free(t->eta_max);
    free(t->eta_min);
    free(t->arrival);
    free(t->eta_max_time);
    free(t->speed2_max);
    free(t->rows);
    free(t->nonfinite);
    free(t->out);
    free(t);
}

size_t sw_tracker_bytes_per_cell(void) { return 5 * sizeof(float); }

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
    t->threshold = (float)threshold_m;
    t->n_threads = n_threads < 1 ? 1 : n_threads;
    t->eta_max = malloc(n * sizeof(float));
    t->eta_min = malloc(n * sizeof(float));
    t->arrival = malloc(n * sizeof(float));
    t->eta_max_time = malloc(n * sizeof(float));
    t->speed2_max = malloc(n * sizeof(float));
    t->rows = malloc((size_t)t->n_threads * 3 * g->nx * sizeof(double));
    t->nonfinite = calloc((size_t)t->n_threads, sizeof(int));
    if (!t->eta_max || !t->eta_min || !t->arrival || !t->eta_max_time || !t->speed2_max || !t->rows
        || !t->nonfinite) {
        sw_tracker_free(t);
        return sw_fail(err, SW_ERR_NOMEM, "out of memory allocating the arrival tracker (%zu cells)", n);
    }
    SW_OMP(parallel for schedule(static))   /* first touch by the threads that update each row */
    for (size_t j = 0; j < t->ny; j++)
        for (size_t k = j * t->nx; k < (j + 1) * t->nx; k++) {
            t->eta_max[k] = -INFINITY;
            t->eta_min[k] = INFINITY;
            t->arrival[k] = NAN;
            t->eta_max_time[k] = 0.0f;
            t->speed2_max[k] = 0.0f;
        }
    sw_tracker_update(t, m);
    *out = t;
    return SW_OK;
}

void sw_tracker_update(sw_tracker *t, const sw_model *m)
{
    const size_t nx = t->nx, ny = t->ny;
    const float now = (float)sw_model_time(m), thr = t->threshold;
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
        float *restrict mx = t->eta_max + j * nx, *restrict mn = t->eta_min + j * nx;
        float *restrict arr = t->arrival + j * nx, *restrict tmx = t->eta_max_time + j * nx;
        float *restrict sp = t->speed2_max + j * nx;
        SW_OMP(simd reduction(| : bad))
        for (size_t i = 0; i < nx; i++) {
            float ei = (float)e[i];
            int higher = ei > mx[i];
            mx[i] = higher ? ei : mx[i];
            tmx[i] = higher ? now : tmx[i];
            mn[i] = ei < mn[i] ? ei : mn[i];
            float s2 = (float)(uu[i] * uu[i] + vv[i] * vv[i]);
            sp[i] = s2 > sp[i] ? s2 : sp[i];
            arr[i] = (arr[i] != arr[i] && fabsf(ei) >= thr) ? now : arr[i];   /* NaN until first reached */
            bad |= !(fabs(e[i]) <= 1e300);   /* NaN or Inf in the state */
        }
    }
    t->nonfinite[tid] |= bad;
}

int sw_tracker_nonfinite(const sw_tracker *t)
{
    int bad = 0;
    for (int q = 0; q < t->n_threads; q++)
        bad |= t->nonfinite[q];
    return bad;
}

sw_status sw_tracker_maps(sw_tracker *t, const sw_model *m, const double *depth_m, sw_map_set *maps, sw_error *err)
{
    const size_t n = t->nx * t->ny;
    const unsigned char *wet = sw_model_wet(m);
    if (!t->out && !(t->out = malloc(5 * n * sizeof(double))))
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for the maps (%zu cells)", n);
    double *mx = t->out, *mn = mx + n, *arr = mn + n, *tmx = arr + n, *sp = tmx + n;
    for (size_t k = 0; k < n; k++) {
        mx[k] = wet[k] ? t->eta_max[k] : NAN;
        mn[k] = wet[k] ? t->eta_min[k] : NAN;
        arr[k] = wet[k] ? t->arrival[k] : NAN;
        tmx[k] = wet[k] ? t->eta_max_time[k] : NAN;
        sp[k] = wet[k] ? sqrt((double)t->speed2_max[k]) : NAN;
    }
    maps->grid = sw_model_grid(m);
    maps->depth_m = depth_m;
    maps->wet = wet;
    maps->eta_max_m = mx;
    maps->eta_min_m = mn;
    maps->arrival_s = arr;
    maps->eta_max_time_s = tmx;
    maps->speed_max_ms = sp;
    return SW_OK;
}

double sw_tracker_max_abs(const sw_tracker *t)
{
    double worst = 0.0;
    for (size_t k = 0; k < t->nx * t->ny; k++)
        if (!isnan(t->eta_max[k]) && isfinite(t->eta_max[k]))
            worst = fmax(worst, fmax(fabs(t->eta_max[k]), fabs(t->eta_min[k])));
    return worst;
}

double sw_tracker_noise(const sw_tracker *t, const unsigned char *wet)
{
    const size_t nx = t->nx, ny = t->ny;
    const float *e = t->eta_max;
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
