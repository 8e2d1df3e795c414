/* gauges.c - gauge series sampled during the run (see gauges.h). */
#include "observers/gauges.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

typedef struct {
    size_t i[4], j[4];   /* the four surrounding cell centres */
    double w[4];         /* bilinear weights over water cells (sum 1), or all 0 when dry */
    double w_all[4];     /* bilinear weights over all four cells */
} stencil;

struct sw_gauges {
    size_t n, cap, count;     /* gauges; sample capacity; samples taken */
    char (*names)[SW_NAME_MAX];
    const char **name_ptrs;   /* [n] into names, for the writer */
    double *x, *y, *depth;    /* [n] */
    stencil *st;              /* [n] */
    double *time;             /* [cap] */
    double *eta, *u, *v;      /* [n * cap] station-major */
    double *air;              /* [3 n cap]: pressure, wind u, wind v, each [n * cap] station-major; or NULL */
    double *row;              /* 3 * nx scratch: eta, u, v of one row */
    size_t nx;
    int *dry;                 /* [n] */
    sw_gauge_stats *stats;    /* [n] from sw_gauges_watch */
    double *prev_eta;         /* [n] elevation at the previous watch, m */
    double prev_time;         /* time of the previous watch, s (NaN before the first) */
    size_t *by_row;           /* [n] the gauges in the order of their lower stencil row (sw_gauges_watch_row) */
    size_t *row_start;        /* [ny + 1]: the gauges whose lower row is j are by_row[row_start[j] ..
                               * row_start[j + 1]) */
};

/* Index of the centre at or below coordinate c along an axis of n cells, and the weight of the next. */
static void axis_weights(double c, double origin, double d, size_t n, size_t *lo, size_t *hi, double *f)
{
    double p = (c - origin) / d - 0.5;   /* position in units of cells from the first centre */
    if (n == 1 || !(p > 0)) {   /* NaN too: the cast below needs a value in range */
        *lo = *hi = 0;
        *f = 0;
        return;
    }
    if (p >= (double)(n - 1)) {
        *lo = *hi = n - 1;
        *f = 0;
        return;
    }
    *lo = (size_t)floor(p);
    *hi = *lo + 1;
    *f = p - (double)*lo;
}

static stencil make_stencil(const sw_grid *g, const unsigned char *wet, double x, double y)
{
    stencil s;
    size_t i0, i1, j0, j1;
    double fx, fy;
    axis_weights(x, g->x0_m, g->dx_m, g->nx, &i0, &i1, &fx);
    axis_weights(y, g->y0_m, g->dy_m, g->ny, &j0, &j1, &fy);
    size_t is[4] = {i0, i1, i0, i1}, js[4] = {j0, j0, j1, j1};
    double ws[4] = {(1 - fx) * (1 - fy), fx * (1 - fy), (1 - fx) * fy, fx * fy};
    double sum = 0;
    for (int q = 0; q < 4; q++) {
        s.i[q] = is[q];
        s.j[q] = js[q];
        s.w_all[q] = ws[q];
        s.w[q] = wet && !wet[js[q] * g->nx + is[q]] ? 0 : ws[q];
        sum += s.w[q];
    }
    for (int q = 0; q < 4; q++)
        s.w[q] = sum > 0 ? s.w[q] / sum : 0;
    return s;
}

double sw_gauges_depth_at(const sw_grid *g, const double *depth_m, double x_m, double y_m)
{
    stencil s = make_stencil(g, NULL, x_m, y_m);
    double d = 0;
    for (int q = 0; q < 4; q++)
        d += s.w_all[q] * depth_m[s.j[q] * g->nx + s.i[q]];
    return d;
}

void sw_gauges_free(sw_gauges *gs)
{
    if (!gs)
        return;
    free(gs->names);
    free(gs->name_ptrs);
    free(gs->x);
    free(gs->y);
    free(gs->depth);
    free(gs->st);
    free(gs->time);
    free(gs->eta);
    free(gs->u);
    free(gs->v);
    free(gs->air);
    free(gs->row);
    free(gs->dry);
    free(gs->stats);
    free(gs->prev_eta);
    free(gs->by_row);
    free(gs->row_start);
    free(gs);
}

size_t sw_gauges_state_parts(sw_gauges *gs, void **ptr, size_t *bytes)
{
    const size_t nn = gs->n ? gs->n : 1, cap = gs->cap ? gs->cap : 1;
    size_t n = 0;
#define PART(p, b) (ptr[n] = (p), bytes[n] = (b), n++)
    PART(&gs->count, sizeof gs->count);
    PART(gs->time, cap * sizeof *gs->time);
    PART(gs->eta, nn * cap * sizeof *gs->eta);
    PART(gs->u, nn * cap * sizeof *gs->u);
    PART(gs->v, nn * cap * sizeof *gs->v);
    PART(gs->stats, nn * sizeof *gs->stats);
    PART(gs->prev_eta, nn * sizeof *gs->prev_eta);
    PART(&gs->prev_time, sizeof gs->prev_time);
    if (gs->air)
        PART(gs->air, 3 * nn * cap * sizeof *gs->air);
#undef PART
    return n;
}

size_t sw_gauges_row(const sw_gauges *gs, size_t q) { return gs->st[q].j[0]; }

size_t sw_gauges_station_parts(sw_gauges *gs, size_t q, void **ptr, size_t *bytes)
{
    const size_t cap = gs->cap ? gs->cap : 1, series = cap * sizeof(double);
    size_t n = 0;
#define PART(p, b) (ptr[n] = (p), bytes[n] = (b), n++)
    PART(gs->eta + q * cap, series);
    PART(gs->u + q * cap, series);
    PART(gs->v + q * cap, series);
    PART(gs->stats + q, sizeof *gs->stats);
    PART(gs->prev_eta + q, sizeof *gs->prev_eta);
    if (gs->air) {
        const size_t nn = gs->n ? gs->n : 1;
        for (size_t k = 0; k < 3; k++)
            PART(gs->air + (k * nn + q) * cap, series);
    }
#undef PART
    return n;
}

sw_status sw_gauges_create(const sw_model *m, const double *depth_m, const sw_gauge_spec *specs, size_t n,
                           size_t max_samples, sw_gauges **out, sw_error *err)
{
    *out = NULL;
    const sw_grid *g = sw_model_grid(m);
    sw_gauges *gs = calloc(1, sizeof *gs);
    if (!gs)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory allocating gauges");
    gs->n = n;
    gs->cap = max_samples;
    gs->nx = g->nx;
    size_t nn = n ? n : 1;
    gs->names = calloc(nn, sizeof *gs->names);
    gs->name_ptrs = calloc(nn, sizeof *gs->name_ptrs);
    gs->x = calloc(nn, sizeof(double));
    gs->y = calloc(nn, sizeof(double));
    gs->depth = calloc(nn, sizeof(double));
    gs->st = calloc(nn, sizeof *gs->st);
    gs->dry = calloc(nn, sizeof(int));
    gs->time = calloc(max_samples ? max_samples : 1, sizeof(double));
    gs->eta = calloc(nn * (max_samples ? max_samples : 1), sizeof(double));
    gs->u = calloc(nn * (max_samples ? max_samples : 1), sizeof(double));
    gs->v = calloc(nn * (max_samples ? max_samples : 1), sizeof(double));
    gs->row = calloc(3 * g->nx, sizeof(double));
    gs->stats = calloc(nn, sizeof *gs->stats);
    gs->prev_eta = calloc(nn, sizeof(double));
    gs->prev_time = NAN;
    gs->by_row = calloc(nn, sizeof *gs->by_row);
    gs->row_start = calloc(g->ny + 1, sizeof *gs->row_start);
    if (!gs->by_row || !gs->row_start || !gs->stats || !gs->prev_eta || !gs->names || !gs->name_ptrs || !gs->x || !gs->y || !gs->depth || !gs->st || !gs->dry || !gs->time
        || !gs->eta || !gs->u || !gs->v || !gs->row) {
        sw_gauges_free(gs);
        return sw_fail(err, SW_ERR_NOMEM, "out of memory allocating %zu gauges x %zu samples", n, max_samples);
    }
    const unsigned char *wet = sw_model_wet(m);
    for (size_t q = 0; q < n; q++) {
        memcpy(gs->names[q], specs[q].name, SW_NAME_MAX);
        gs->names[q][SW_NAME_MAX - 1] = '\0';
        gs->name_ptrs[q] = gs->names[q];
        gs->x[q] = specs[q].x_m;
        gs->y[q] = specs[q].y_m;
        gs->st[q] = make_stencil(g, wet, specs[q].x_m, specs[q].y_m);
        gs->depth[q] = sw_gauges_depth_at(g, depth_m, specs[q].x_m, specs[q].y_m);
        double wsum = gs->st[q].w[0] + gs->st[q].w[1] + gs->st[q].w[2] + gs->st[q].w[3];
        gs->dry[q] = !(wsum > 0);
        gs->stats[q] = (sw_gauge_stats){NAN, -INFINITY, NAN, INFINITY, NAN};
        if (gs->dry[q])
            gs->stats[q].peak_m = gs->stats[q].trough_m = NAN;
    }
    /* the gauges by their lower stencil row (a counting sort): counts, starts, placing (which moves each
     * start to the next row's), then the starts back one row */
    for (size_t q = 0; q < n; q++)
        gs->row_start[gs->st[q].j[0] + 1]++;
    for (size_t j = 0; j < g->ny; j++)
        gs->row_start[j + 1] += gs->row_start[j];
    for (size_t q = 0; q < n; q++)
        gs->by_row[gs->row_start[gs->st[q].j[0]]++] = q;
    for (size_t j = g->ny; j > 0; j--)
        gs->row_start[j] = gs->row_start[j - 1];
    gs->row_start[0] = 0;
    *out = gs;
    return SW_OK;
}

sw_status sw_gauges_sample(sw_gauges *gs, const sw_model *m, sw_error *err)
{
    if (gs->count >= gs->cap)
        return sw_fail(err, SW_ERR_USAGE, "gauge sample capacity (%zu) exceeded", gs->cap);
    size_t t = gs->count++;
    gs->time[t] = sw_model_time(m);
    double *e = gs->row, *uu = e + gs->nx, *vv = uu + gs->nx;
    for (size_t q = 0; q < gs->n; q++) {
        const stencil *s = &gs->st[q];
        double se = 0, su = 0, sv = 0;
        size_t row_loaded = (size_t)-1;
        for (int c = 0; c < 4; c++) {
            if (s->w[c] == 0)
                continue;
            if (s->j[c] != row_loaded) {
                sw_model_centre_row(m, s->j[c], e, uu, vv);
                row_loaded = s->j[c];
            }
            se += s->w[c] * e[s->i[c]];
            su += s->w[c] * uu[s->i[c]];
            sv += s->w[c] * vv[s->i[c]];
        }
        size_t k = q * gs->cap + t;
        gs->eta[k] = gs->dry[q] ? NAN : se;
        gs->u[k] = gs->dry[q] ? NAN : su;
        gs->v[k] = gs->dry[q] ? NAN : sv;
    }
    return SW_OK;
}

sw_status sw_gauges_enable_air(sw_gauges *gs, sw_error *err)
{
    if (gs->air)
        return SW_OK;
    gs->air = malloc(3 * (gs->n ? gs->n : 1) * (gs->cap ? gs->cap : 1) * sizeof *gs->air);
    if (!gs->air)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for the gauges' wind and pressure");
    for (size_t k = 0; k < 3 * gs->n * gs->cap; k++)
        gs->air[k] = NAN;
    return SW_OK;
}

void sw_gauges_put_air(sw_gauges *gs, const double *p_pa, const double *u10_ms, const double *v10_ms)
{
    if (!gs->air || gs->count == 0)
        return;
    const size_t t = gs->count - 1, plane = gs->n * gs->cap;
    for (size_t q = 0; q < gs->n; q++) {
        gs->air[q * gs->cap + t] = p_pa[q];
        gs->air[plane + q * gs->cap + t] = u10_ms[q];
        gs->air[2 * plane + q * gs->cap + t] = v10_ms[q];
    }
}

void sw_gauges_table(sw_gauges *gs, sw_gauge_table *out)
{
    /* Series are stored `cap` apart; the table wants them `count` apart: compact once. */
    sw_gauges *w = gs;
    if (w->count < w->cap) {
        for (size_t q = 1; q < w->n; q++) {
            memmove(w->eta + q * w->count, w->eta + q * w->cap, w->count * sizeof(double));
            memmove(w->u + q * w->count, w->u + q * w->cap, w->count * sizeof(double));
            memmove(w->v + q * w->count, w->v + q * w->cap, w->count * sizeof(double));
        }
        if (w->air) {   /* three planes of n * cap into three of n * count, in order (never overlapping ahead) */
            const size_t plane = w->n * w->cap;
            for (size_t c = 0; c < 3; c++)
                for (size_t q = 0; q < w->n; q++)
                    memmove(w->air + c * w->n * w->count + q * w->count, w->air + c * plane + q * w->cap,
                            w->count * sizeof(double));
        }
        w->cap = w->count;
    }
    out->air_pressure_pa = w->air;
    out->wind_u_ms = w->air ? w->air + w->n * w->count : NULL;
    out->wind_v_ms = w->air ? w->air + 2 * w->n * w->count : NULL;
    out->n_stations = gs->n;
    out->n_times = gs->count;
    out->names = gs->name_ptrs;
    out->x_m = gs->x;
    out->y_m = gs->y;
    out->depth_m = gs->depth;
    out->time_s = gs->time;
    out->eta_m = gs->eta;
    out->u_ms = gs->u;
    out->v_ms = gs->v;
}

double sw_gauges_depth(const sw_gauges *gs, size_t q) { return gs->depth[q]; }
int sw_gauges_dry(const sw_gauges *gs, size_t q) { return gs->dry[q]; }

/* sw_gauges_watch for gauge q at time `now`, the previous watch at prev_time. */
static void watch_one(sw_gauges *gs, const sw_model *m, size_t q, double now, double prev_time, double threshold_m)
{
    {
        if (gs->dry[q])
            return;
        const stencil *s = &gs->st[q];
        double e = 0;
        for (int c = 0; c < 4; c++)
            e += s->w[c] * sw_model_eta_centre(m, s->i[c], s->j[c]);
        sw_gauge_stats *st = &gs->stats[q];
        if (isnan(st->arrival_s) && fabs(e) >= threshold_m) {
            /* the crossing, interpolated linearly in time from the previous step */
            double a = fabs(gs->prev_eta[q]), b = fabs(e);
            st->arrival_s = isnan(prev_time) || a >= threshold_m
                ? now : prev_time + (now - prev_time) * (threshold_m - a) / (b - a);
        }
        gs->prev_eta[q] = e;
        if (e > st->peak_m) {
            st->peak_m = e;
            st->peak_time_s = now;
        }
        if (e < st->trough_m) {
            st->trough_m = e;
            st->trough_time_s = now;
        }
    }
}

void sw_gauges_watch(sw_gauges *gs, const sw_model *m, double threshold_m)
{
    const double now = sw_model_time(m);
    for (size_t q = 0; q < gs->n; q++)
        watch_one(gs, m, q, now, gs->prev_time, threshold_m);
    gs->prev_time = now;
}

void sw_gauges_watch_row(sw_gauges *gs, const sw_model *m, size_t j, double time_s, double prev_time_s,
                         double threshold_m)
{
    for (size_t k = gs->row_start[j]; k < gs->row_start[j + 1]; k++)
        watch_one(gs, m, gs->by_row[k], time_s, prev_time_s, threshold_m);
}

void sw_gauges_watched(sw_gauges *gs, double time_s) { gs->prev_time = time_s; }

sw_gauge_stats sw_gauges_stats(const sw_gauges *gs, size_t q) { return gs->stats[q]; }
const char *sw_gauges_name(const sw_gauges *gs, size_t q) { return gs->names[q]; }

double sw_gauges_next_time(double next_s, double now_s, double interval_s)
{
    const double reached = now_s + 1e-9 * interval_s;
    for (int k = 0; k < 4 && next_s <= reached; k++)   /* one or two additions for an interval >= dt */
        next_s += interval_s;
    if (next_s <= reached)   /* an interval far below the step (or the rounding of now): sample every step */
        next_s = fmax(reached + interval_s, nextafter(reached, INFINITY));
    return next_s;
}
