/* forcing.c - a storm or a weather file and a level series, stepped beside the model (see forcing.h).
 *
 * Invariant: slot q (0 = earlier, 1 = later) of this struct describes the model's slab q: its time, the
 * source data it was built from (a storm frame or a weather slab) and the values at the sample points.
 * Both move together when the model's slabs shift.
 */
#include "forcing/forcing.h"

#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/omp_compat.h"
#include "forcing/drag.h"
#include "forcing/gridded.h"
#include "forcing/series.h"
#include "forcing/storm.h"

#define P_STANDARD_PA 101325.0   /* the reference pressure of a weather file's head, Pa (1013.25 hPa) */

struct sw_forcing {
    const sw_grid *grid;       /* the model's */
    double duration_s;         /* the run's end, s */
    char what[3 * SW_PATH_MAX];/* sw_forcing_describe's line */

    /* the atmosphere: one of storm, weather, or neither */
    sw_storm *storm;
    sw_storm_options storm_opt;
    sw_storm_changes changes;                      /* [storm] changes to the track */
    double update_s;                               /* a storm's slab interval, s */
    sw_storm_frame frame[2];                       /* per slot */
    double reach_m, dr_m;                          /* frames cover reach_m at spacing dr_m */
    sw_weather *weather;
    sw_weather_slab wslab[2];                      /* per slot */

    sw_drag_law law;
    double cap;                /* drag coefficient cap, 0 = none */
    sw_drag_form drag;         /* the law in its branch-free form (drag.h) */
    double rho_ratio;          /* rho_air / rho_water */
    double head_per_pa;        /* 1 / (rho_water g), m Pa-1 */
    double p_ref_pa;           /* the pressure of zero head, Pa */

    double t_slot[2];          /* times of the slabs, s; NaN: not built */
    int building;              /* the slot whose rows the row function fills */
    int todo[2];               /* slots advance must build */
    int failed;
    sw_error err;

    float *scratch;            /* [threads][3 row_cap]: p, u, v of one row */
    size_t row_cap;            /* nx + 2 */
    int threads;
    float *wind_max;           /* [ny * nx], m/s */
    float *p_min;              /* [ny * nx], Pa */

    size_t n_points;
    double *px, *py;           /* [n_points] the sample points, m */
    double *pv[2];             /* [slot][3 n_points]: p, u, v at the points */

    sw_series *level;          /* the edges' level, or NULL */
    size_t n_track;            /* the storm's centre at the slab times 0 .. the run's end */
    double *track;             /* [4 n_track]: t, x, y, pc */
};

/* ---- the storm with the scenario's changes ------------------------------------------------------------ */

static void storm_state(const sw_forcing *f, double t_s, sw_storm_state *st)
{
    sw_storm_state_changed(f->storm, &f->changes, t_s, st);
}

void sw_forcing_storm_settings(const sw_scenario *sc, const sw_grid *g, sw_storm_options *opt, sw_storm_changes *changes)
{
    const sw_forcing_spec *fs = &sc->forcing;
    *opt = sw_storm_options_default();
    opt->ambient_pa = fs->ambient_hpa * 100;
    opt->air_density_kgm3 = fs->air_density_kgm3;
    opt->reduction = fs->reduction;
    opt->inflow_deg = fs->inflow_deg;
    opt->translation_fraction = fs->translation_fraction;
    /* the gradient wind's f: the model's at the domain's middle with rotation; else its sign only */
    const sw_terms_config *t = &sc->terms;
    const double f_mid = t->rotation == SW_ROTATION_NONE ? 0
                       : t->f0_s + (t->rotation == SW_ROTATION_BETA_PLANE
                                        ? t->beta_ms * (g->y0_m + 0.5 * (double)g->ny * g->dy_m - t->y_ref_m) : 0);
    opt->coriolis_s = f_mid != 0 ? f_mid : fs->south ? -1e-12 : 0;
    *changes = (sw_storm_changes){.speed_factor = fs->speed_factor, .dp_factor = fs->dp_factor,
                                  .rmax_factor = fs->rmax_factor, .shift_along_m = fs->shift_along_m,
                                  .shift_across_m = fs->shift_across_m};
}

/* ---- building a slot ------------------------------------------------------------------------------------ */

/* The source's pressure and wind along a row, for slot q. */
static void source_row(const sw_forcing *f, int q, double y_m, double x0_m, double dx_m, size_t n, float *p, float *u,
                       float *v)
{
    if (f->storm)
        sw_storm_row(&f->frame[q], y_m, x0_m, dx_m, n, p, u, v);
    else
        sw_weather_row(f->weather, &f->wslab[q], y_m, x0_m, dx_m, n, p, u, v);
}

/* The model's row function (model.h sw_surface_row_fn): heads at centres (and the maps), stresses at
 * velocity points. */
static void surface_row(void *ctx, sw_surface_kind kind, ptrdiff_t j, size_t i0, double y_m, double x0_m, double dx_m,
                        size_t n, float *out)
{
    sw_forcing *f = ctx;
    const int t = omp_get_thread_num();
    if (t >= f->threads || n > f->row_cap) {   /* no room: cannot happen with the thread count set before */
        memset(out, 0, n * sizeof *out);
        return;
    }
    float *restrict p = f->scratch + (size_t)t * 3 * f->row_cap, *restrict u = p + f->row_cap, *restrict v = u + f->row_cap;
    const int q = f->building;
    source_row(f, q, y_m, x0_m, dx_m, n, p, u, v);
    if (kind == SW_SURFACE_HEAD) {
        /* in float: p - ref is exact for pressures within a factor 2 of ref (Sterbenz), and the head's
         * relative rounding, 6e-8, is far below what the forcing is known to */
        const float ref = (float)f->p_ref_pa, k = (float)f->head_per_pa;
        SW_OMP(simd)
        for (size_t i = 0; i < n; i++)
            out[i] = (p[i] - ref) * k;
        const size_t nx = f->grid->nx;
        if (j >= 0 && (size_t)j < f->grid->ny && f->t_slot[q] <= f->duration_s * (1 + 1e-12)) {
            /* the piece's points in grid columns 0 .. nx-1: point p is padded column i0 + p, cell i0 + p - 1 */
            const size_t p0 = i0 == 0 ? 1 : 0, p1 = i0 + n > nx + 1 ? nx + 1 - i0 : n;
            float *restrict wm = f->wind_max + (size_t)j * nx + (i0 + p0 - 1), *restrict pm = f->p_min + (size_t)j * nx + (i0 + p0 - 1);
            SW_OMP(simd)
            for (size_t i = 0; i < (p1 > p0 ? p1 - p0 : 0); i++) {
                const float w = sqrtf(u[p0 + i] * u[p0 + i] + v[p0 + i] * v[p0 + i]);
                wm[i] = w > wm[i] ? w : wm[i];   /* not fmaxf: a call per value without -ffast-math */
                pm[i] = p[p0 + i] < pm[i] ? p[p0 + i] : pm[i];
            }
        }
        return;
    }
    /* tau / rho_w = (rho_a / rho_w) C_D |U| U, C_D in the drag law's branch-free form (drag.h) */
    const float *restrict along = kind == SW_SURFACE_STRESS_X ? u : v;
    const float lo = (float)f->drag.lo, a = (float)f->drag.a, b = (float)f->drag.b;
    const float cap = (float)fmin(f->drag.cap, FLT_MAX), k = (float)(1e-3 * f->rho_ratio);
    SW_OMP(simd)
    for (size_t i = 0; i < n; i++) {
        const float w = sqrtf(u[i] * u[i] + v[i] * v[i]), lin = a + b * w, cd = lin > lo ? lin : lo;
        out[i] = k * (cd < cap ? cd : cap) * w * along[i];
    }
}

/* Readies the source of slot q for time t (one thread): a storm frame, or the weather slab at file
 * index k; and the values at the sample points. */
static sw_status prepare_slot(sw_forcing *f, int q, double t_s, size_t k, sw_error *err)
{
    sw_status rc = SW_OK;
    if (f->storm) {
        sw_storm_state st;
        storm_state(f, t_s, &st);
        sw_storm_frame_free(&f->frame[q]);
        rc = sw_storm_frame_build_state(f->storm, &st, f->reach_m, f->dr_m, &f->frame[q], err);
        for (size_t g = 0; rc == SW_OK && g < f->n_points; g++)
            sw_storm_point(f->storm, &st, f->px[g], f->py[g], &f->pv[q][3 * g], &f->pv[q][3 * g + 1], &f->pv[q][3 * g + 2]);
    } else {
        rc = sw_weather_read(f->weather, k, &f->wslab[q], err);
        for (size_t g = 0; rc == SW_OK && g < f->n_points; g++)
            sw_weather_point(f->weather, &f->wslab[q], f->px[g], f->py[g], &f->pv[q][3 * g], &f->pv[q][3 * g + 1],
                             &f->pv[q][3 * g + 2]);
    }
    f->t_slot[q] = rc == SW_OK ? t_s : NAN;
    return rc;
}

/* Slot 1 becomes slot 0, as the model's slabs shift. */
static void shift_slots(sw_forcing *f, sw_model *m)
{
    sw_model_surface_shift(m);
    sw_storm_frame tf = f->frame[0];
    f->frame[0] = f->frame[1];
    f->frame[1] = tf;
    sw_weather_slab tw = f->wslab[0];
    f->wslab[0] = f->wslab[1];
    f->wslab[1] = tw;
    double *tv = f->pv[0];
    f->pv[0] = f->pv[1];
    f->pv[1] = tv;
    f->t_slot[0] = f->t_slot[1];
    f->t_slot[1] = NAN;
}

/* The forcing times ta <= tb of the slabs a step ending at t takes (a storm's update times around t, or the
 * weather file's times around it, ka the index of ta there; a storm leaves ka at 0). */
static void slab_times(const sw_forcing *f, double t, double *ta, double *tb, size_t *ka)
{
    *ka = 0;
    if (f->storm) {
        const double n = floor(t / f->update_s);
        *ta = n * f->update_s;
        *tb = *ta + f->update_s;
    } else {
        *ka = sw_weather_locate(f->weather, t);
        *ta = sw_weather_time(f->weather, *ka);
        *tb = sw_weather_count(f->weather) > 1 ? sw_weather_time(f->weather, *ka + 1) : *ta;
    }
}

/* Decides, for a step ending at t, which slots to build and readies their sources (one thread). */
static void plan(sw_forcing *f, sw_model *m, double t)
{
    f->todo[0] = f->todo[1] = 0;
    if (f->failed || (!f->storm && !f->weather))
        return;
    double ta, tb;
    size_t ka;
    slab_times(f, t, &ta, &tb, &ka);
    if (f->t_slot[0] == ta && f->t_slot[1] == tb)
        return;
    if (f->t_slot[1] == ta)
        shift_slots(f, m);
    sw_error e = {0};
    sw_status rc = SW_OK;
    if (f->t_slot[0] != ta) {
        rc = prepare_slot(f, 0, ta, ka, &e);
        f->todo[0] = 1;
    }
    if (rc == SW_OK) {
        rc = prepare_slot(f, 1, tb, ka + (tb > ta), &e);
        f->todo[1] = 1;
    }
    if (rc != SW_OK) {
        f->failed = 1;
        f->err = e;
        f->todo[0] = f->todo[1] = 0;
    }
}

void sw_forcing_advance(sw_forcing *f, sw_model *m, double t_next_s)
{
    SW_OMP(single)
    plan(f, m, t_next_s);
    for (int q = 0; q < 2; q++) {
        if (!f->todo[q])
            continue;
        SW_OMP(single)
        f->building = q;
        sw_model_surface_build(m, q, surface_row, f);
        SW_OMP(barrier)
    }
    SW_OMP(single)
    {
        if (f->storm || f->weather) {
            const double ta = f->t_slot[0], tb = f->t_slot[1];
            sw_model_surface_weight(m, tb > ta ? (t_next_s - ta) / (tb - ta) : 0);
        }
        if (f->level)
            sw_model_set_edge_level(m, sw_series_at(f->level, t_next_s));
    }
}

int sw_forcing_steps_on_slabs(const sw_forcing *f, const double *t_next_s, int k)
{
    if (!f->storm && !f->weather)
        return k;
    double ta, tb;
    size_t ka;
    slab_times(f, t_next_s[0], &ta, &tb, &ka);
    for (int q = 1; q < k; q++) {
        double a, b;
        slab_times(f, t_next_s[q], &a, &b, &ka);
        if (a != ta || b != tb)
            return q;
    }
    return k;
}

void sw_forcing_per_step(const sw_forcing *f, const double *t_next_s, int k, double level_now_m,
                         sw_step_forcing *per_step)
{
    const int air = f->storm || f->weather;
    const double ta = f->t_slot[0], tb = f->t_slot[1];
    for (int q = 0; q < k; q++) {   /* as sw_forcing_advance sets them (the model clamps the weight) */
        per_step[q].surface_w = air && tb > ta ? (t_next_s[q] - ta) / (tb - ta) : 0;
        per_step[q].edge_level_m = f->level ? sw_series_at(f->level, t_next_s[q]) : level_now_m;
    }
}

int sw_forcing_failed(const sw_forcing *f, sw_error *err)
{
    if (f && f->failed && err)
        *err = f->err;
    return f && f->failed;
}

int sw_forcing_has_air(const sw_forcing *f) { return f && (f->storm || f->weather); }

void sw_forcing_sample(const sw_forcing *f, double t_s, double *p_pa, double *u10_ms, double *v10_ms)
{
    const double ta = f->t_slot[0], tb = f->t_slot[1];
    const double w = tb > ta ? (t_s - ta) / (tb - ta) : 0;
    for (size_t g = 0; g < f->n_points; g++) {
        double out[3];
        for (int c = 0; c < 3; c++)
            out[c] = sw_forcing_has_air(f) && !isnan(ta) && !isnan(tb)
                         ? f->pv[0][3 * g + c] + w * (f->pv[1][3 * g + c] - f->pv[0][3 * g + c]) : NAN;
        p_pa[g] = out[0];
        u10_ms[g] = out[1];
        v10_ms[g] = out[2];
    }
}

void sw_forcing_maps(const sw_forcing *f, const unsigned char *wet, double *wind_max_ms, double *p_min_pa)
{
    const size_t n = sw_grid_cells(f->grid);
    for (size_t c = 0; c < n; c++) {
        const int have = wet[c] && f->p_min && f->p_min[c] < FLT_MAX;
        wind_max_ms[c] = have ? f->wind_max[c] : NAN;
        p_min_pa[c] = have ? f->p_min[c] : NAN;
    }
}

void sw_forcing_track(const sw_forcing *f, size_t *n, const double **t_s, const double **x_m, const double **y_m,
                      const double **pc_pa)
{
    const size_t k = f ? f->n_track : 0;
    *n = k;
    *t_s = k ? f->track : NULL;
    *x_m = k ? f->track + k : NULL;
    *y_m = k ? f->track + 2 * k : NULL;
    *pc_pa = k ? f->track + 3 * k : NULL;
}

size_t sw_forcing_state_parts(sw_forcing *f, void **ptr, size_t *bytes)
{
    if (!sw_forcing_has_air(f))
        return 0;
    const size_t values = 3 * (f->n_points ? f->n_points : 1) * sizeof(double);
    const size_t map = sw_grid_cells(f->grid) * sizeof(float);
    ptr[0] = f->t_slot;
    bytes[0] = sizeof f->t_slot;
    ptr[1] = f->pv[0];
    bytes[1] = values;
    ptr[2] = f->pv[1];
    bytes[2] = values;
    ptr[3] = f->wind_max;
    bytes[3] = map;
    ptr[4] = f->p_min;
    bytes[4] = map;
    return SW_FORCING_STATE_PARTS;
}

void sw_forcing_describe(const sw_forcing *f, char *buf, size_t n)
{
    snprintf(buf, n, "%s", f ? f->what : "none");
}

/* ---- making and freeing --------------------------------------------------------------------------------- */

void sw_forcing_free(sw_forcing *f)
{
    if (!f)
        return;
    for (int q = 0; q < 2; q++) {
        sw_storm_frame_free(&f->frame[q]);
        sw_weather_slab_free(&f->wslab[q]);
        free(f->pv[q]);
    }
    sw_storm_free(f->storm);
    sw_weather_close(f->weather);
    sw_series_free(f->level);
    free(f->scratch);
    free(f->track);
    free(f->wind_max);
    free(f->p_min);
    free(f->px);
    free(f->py);
    free(f);
}

/* The largest distance from a point of the domain (one cell beyond it: the halo) to any storm centre the
 * run can see: from the domain's box to the box of the track's positions. */
static double storm_reach(const sw_forcing *f, double duration_s)
{
    const sw_grid *g = f->grid;
    const double x0 = g->x0_m - 2 * g->dx_m, x1 = g->x0_m + ((double)g->nx + 2) * g->dx_m;
    const double y0 = g->y0_m - 2 * g->dy_m, y1 = g->y0_m + ((double)g->ny + 2) * g->dy_m;
    double cx0 = INFINITY, cx1 = -INFINITY, cy0 = INFINITY, cy1 = -INFINITY;
    const double step = f->update_s;
    for (double t = 0;; t += step) {   /* the centres of every slab, the last one past the end included */
        sw_storm_state st;
        storm_state(f, t, &st);
        cx0 = fmin(cx0, st.x_m);
        cx1 = fmax(cx1, st.x_m);
        cy0 = fmin(cy0, st.y_m);
        cy1 = fmax(cy1, st.y_m);
        if (t > duration_s)
            break;
    }
    const double ddx = fmax(fabs(x1 - cx0), fabs(cx1 - x0)), ddy = fmax(fabs(y1 - cy0), fabs(cy1 - y0));
    return hypot(ddx, ddy) * 1.01 + 1;
}

int sw_forcing_wanted(const sw_scenario *sc)
{
    const sw_forcing_spec *fs = &sc->forcing;
    return fs->storm || fs->weather || fs->level_file[0];
}

sw_status sw_forcing_create(const sw_scenario *sc, const sw_model *m, double duration_s, const double *x_m,
                            const double *y_m, size_t n_points, sw_forcing **out, sw_error *err)
{
    *out = NULL;
    const sw_forcing_spec *fs = &sc->forcing;
    if (!sw_forcing_wanted(sc))
        return SW_OK;
    sw_forcing *f = calloc(1, sizeof *f);
    if (!f)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for the forcing");
    const sw_grid *g = sw_model_grid(m);
    f->grid = g;
    f->duration_s = duration_s;
    f->t_slot[0] = f->t_slot[1] = NAN;
    f->law = (sw_drag_law)fs->drag_law;
    f->cap = fs->drag_cap;
    f->drag = sw_drag_form_of(f->law, f->cap);
    f->rho_ratio = fs->air_density_kgm3 / fs->water_density_kgm3;
    f->head_per_pa = 1 / (fs->water_density_kgm3 * sc->gravity_ms2);
    char path[SW_PATH_MAX];
    sw_status rc = SW_OK;
    if (fs->storm) {
        sw_forcing_storm_settings(sc, g, &f->storm_opt, &f->changes);
        f->update_s = fs->update_s;
        rc = sw_scenario_resolve(sc, fs->track, path, sizeof path, err);
        if (rc == SW_OK)
            rc = sw_storm_load(path, &f->storm_opt, &f->storm, err);
        if (rc == SW_OK) {
            /* the track's times the run reads: the slabs' around 0 .. duration, at the changed speed */
            double a, b;
            sw_storm_changed_span(f->storm, &f->changes, 0, ceil(duration_s / f->update_s) * f->update_s, &a, &b);
            rc = sw_storm_covers(f->storm, a, b, err);
        }
        if (rc == SW_OK) {
            sw_storm_state st;
            storm_state(f, 0, &st);
            f->p_ref_pa = st.ambient_pa;
            f->reach_m = storm_reach(f, duration_s);
            f->n_track = (size_t)ceil(duration_s / f->update_s - 1e-9) + 1;
            f->track = malloc(4 * f->n_track * sizeof *f->track);
            if (!f->track)
                rc = sw_fail(err, SW_ERR_NOMEM, "out of memory for the storm's track");
            for (size_t q = 0; rc == SW_OK && q < f->n_track; q++) {
                const double t = fmin((double)q * f->update_s, duration_s);
                storm_state(f, t, &st);
                f->track[q] = t;
                f->track[f->n_track + q] = st.x_m;
                f->track[2 * f->n_track + q] = st.y_m;
                f->track[3 * f->n_track + q] = st.pc_pa;
                if (!(st.pc_pa > 0))
                    rc = sw_fail(err, SW_ERR_RANGE, "%s: at t = %g s the storm's pressure drop %g hPa (times "
                                 "pressure_drop_factor %g) leaves no central pressure (ambient %g hPa); lower "
                                 "[storm] pressure_drop_factor", fs->track, t, st.dp_pa / 100, fs->dp_factor,
                                 st.ambient_pa / 100);
            }
            f->dr_m = 0.25 * fmin(g->dx_m, g->dy_m);
            snprintf(f->what, sizeof f->what, "storm %s (Holland 1980), drag %s%s, slabs every %g s", fs->track,
                     sw_drag_law_name(f->law), f->cap > 0 ? " capped" : "", f->update_s);
        }
    } else if (fs->weather) {
        rc = sw_scenario_resolve(sc, fs->weather_file, path, sizeof path, err);
        if (rc == SW_OK)
            rc = sw_weather_open(path, sc->origin, g, &f->weather, err);
        if (rc == SW_OK)
            rc = sw_weather_covers(f->weather, 0, duration_s, err);
        for (int q = 0; q < 2 && rc == SW_OK; q++)
            rc = sw_weather_slab_alloc(f->weather, &f->wslab[q], err);
        if (rc == SW_OK) {
            f->p_ref_pa = P_STANDARD_PA;
            snprintf(f->what, sizeof f->what, "weather %s (%zu slabs), drag %s%s", fs->weather_file,
                     sw_weather_count(f->weather), sw_drag_law_name(f->law), f->cap > 0 ? " capped" : "");
        }
    }
    if (rc == SW_OK && fs->level_file[0]) {
        rc = sw_scenario_resolve(sc, fs->level_file, path, sizeof path, err);
        if (rc == SW_OK)
            rc = sw_series_load(path, fs->level_variable[0] ? fs->level_variable : NULL, sc->origin, &f->level, err);
        if (rc == SW_OK)
            rc = sw_series_covers(f->level, 0, duration_s, err);
        if (rc == SW_OK) {
            const size_t used = strlen(f->what);
            snprintf(f->what + used, sizeof f->what - used, "%slevel series %s", used ? "; " : "", fs->level_file);
        }
    }
    if (rc == SW_OK && (f->storm || f->weather)) {
        const size_t n = sw_grid_cells(g);
        f->threads = omp_get_max_threads();
        f->row_cap = SW_SURFACE_PIECE;
        f->scratch = malloc((size_t)f->threads * 3 * f->row_cap * sizeof *f->scratch);
        f->wind_max = malloc(n * sizeof *f->wind_max);
        f->p_min = malloc(n * sizeof *f->p_min);
        f->n_points = n_points;
        f->px = malloc((n_points ? n_points : 1) * sizeof *f->px);
        f->py = malloc((n_points ? n_points : 1) * sizeof *f->py);
        f->pv[0] = calloc(3 * (n_points ? n_points : 1), sizeof *f->pv[0]);
        f->pv[1] = calloc(3 * (n_points ? n_points : 1), sizeof *f->pv[1]);
        if (!f->scratch || !f->wind_max || !f->p_min || !f->px || !f->py || !f->pv[0] || !f->pv[1])
            rc = sw_fail(err, SW_ERR_NOMEM, "out of memory for the forcing's maps");
        else {
            for (size_t c = 0; c < n; c++) {
                f->wind_max[c] = 0;
                f->p_min[c] = FLT_MAX;
            }
            for (size_t q = 0; q < n_points; q++) {
                f->px[q] = x_m[q];
                f->py[q] = y_m[q];
            }
        }
    }
    if (rc != SW_OK) {
        sw_forcing_free(f);
        return rc;
    }
    *out = f;
    return SW_OK;
}
