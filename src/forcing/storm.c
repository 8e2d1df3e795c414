/* storm.c - a moving Holland (1980) storm along a track (see storm.h; the formulas and their sources are
 * in docs/storm.md).
 *
 * Invariant: a loaded storm has n >= 2 points with strictly increasing times and, at every point,
 * dp > 0, rmax > 0, B in [SW_STORM_B_MIN, SW_STORM_B_MAX]; its options are within their accepted ranges.
 * Everything after sw_storm_load therefore computes without checks and never fails.
 *
 * The fast path (sw_storm_row) avoids exp and pow per point: a frame tabulates p - pc and the 10 m
 * tangential speed divided by r against r once per time, so a point costs a square root, a division
 * (the translation weight, exact) and two linear interpolations. Dividing the speed by r in the table
 * turns "speed along the unit tangent" into "spin times the offset vector", so no point divides by r and
 * the centre needs no special case (spin is 0 there).
 */
#include "forcing/storm.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/omp_compat.h"
#include "inputs/table_text.h"

#define STORM_E 2.71828182845904523536   /* Euler's number */
#define STORM_PI 3.14159265358979323846

struct sw_storm {
    char *path;                /* the track file as given, for messages */
    sw_storm_options opt;      /* checked options */
    size_t n;                  /* track points, >= 2 */
    double *t_s;               /* n times, strictly increasing, s */
    double *x_m, *y_m;         /* n centre positions, m */
    double *dp_pa;             /* n pressure drops, Pa, > 0 */
    double *ambient_pa;        /* n environmental pressures, Pa */
    double *rmax_m;            /* n radii of maximum wind, m, > 0 */
    double *b;                 /* n Holland B (given or derived from max_wind) */
};

/* The track's columns, in this order (indices used below). */
enum { C_TIME, C_X, C_Y, C_PC, C_DP, C_RMAX, C_B, C_VMAX, C_AMB, C_COUNT };

/* Factors: SI Brochure (BIPM, 9th ed., 2019): min = 60 s, h = 3600 s, d = 86400 s, km = 1e3 m, hPa = 100 Pa,
 * kPa = 1e3 Pa; mbar = 1e-3 bar = 100 Pa (bar = 1e5 Pa) and the knot, one international nautical mile
 * (1852 m) per hour [memory]; km/h = 1000 m / 3600 s. */
static const sw_table_unit T_TIME[] = {{"s", 1.0}, {"min", 60.0}, {"h", 3600.0}, {"d", 86400.0}, {NULL, 0.0}};
static const sw_table_unit T_LENGTH[] = {{"m", 1.0}, {"km", 1e3}, {NULL, 0.0}};
static const sw_table_unit T_PRESSURE[] = {{"Pa", 1.0}, {"hPa", 100.0}, {"mbar", 100.0}, {"kPa", 1e3},
                                           {NULL, 0.0}};
static const sw_table_unit T_SPEED[] = {{"m/s", 1.0}, {"kn", 1852.0 / 3600.0}, {"km/h", 1e3 / 3600.0},
                                        {NULL, 0.0}};

static const sw_table_column TRACK_COLUMNS[C_COUNT] = {
    [C_TIME] = {"time", T_TIME, 1, 0},
    [C_X] = {"x", T_LENGTH, 1, 0},
    [C_Y] = {"y", T_LENGTH, 1, 0},
    [C_PC] = {"central_pressure", T_PRESSURE, 1, 1},
    [C_DP] = {"pressure_drop", T_PRESSURE, 1, 1},
    [C_RMAX] = {"rmax", T_LENGTH, 1, 0},
    [C_B] = {"B", NULL, 1, 2},
    [C_VMAX] = {"max_wind", T_SPEED, 1, 2},
    [C_AMB] = {"ambient_pressure", T_PRESSURE, 0, 0},
};

/* Accepted ranges of the options and of the ambient pressure column (inclusive unless noted). */
#define AMB_MIN_PA 80000.0
#define AMB_MAX_PA 110000.0
#define RHO_MIN 0.5
#define RHO_MAX 2.0
#define INFLOW_MAX_DEG 60.0
#define F_MAX_S 1e-3

sw_storm_options sw_storm_options_default(void)
{
    sw_storm_options o = {
        .ambient_pa = 101300.0,        /* 1013 hPa: an environmental pressure, common practice */
        .air_density_kgm3 = 1.15,      /* boundary-layer air in a storm, common practice */
        .reduction = 0.8,              /* gradient to 10 m wind, common practice (0.7 .. 0.9 are used) */
        .inflow_deg = 20.0,            /* surface inflow angle, common practice */
        .translation_fraction = 0.5,   /* common practice; the weighting by r is our choice */
        .coriolis_s = 0.0,
    };
    return o;
}

/* Checks the options. Returns SW_OK or SW_ERR_RANGE naming the option and its accepted range. */
static sw_status storm_check_options(const char *path, const sw_storm_options *o, sw_error *err)
{
    if (!(o->ambient_pa >= AMB_MIN_PA && o->ambient_pa <= AMB_MAX_PA))
        return sw_fail(err, SW_ERR_RANGE, "%s: ambient pressure %g Pa is outside the accepted range %g .. %g Pa",
                       path, o->ambient_pa, AMB_MIN_PA, AMB_MAX_PA);
    if (!(o->air_density_kgm3 >= RHO_MIN && o->air_density_kgm3 <= RHO_MAX))
        return sw_fail(err, SW_ERR_RANGE, "%s: air density %g kg m-3 is outside the accepted range %g .. %g kg m-3",
                       path, o->air_density_kgm3, RHO_MIN, RHO_MAX);
    if (!(o->reduction > 0.0 && o->reduction <= 1.0))
        return sw_fail(err, SW_ERR_RANGE, "%s: wind reduction factor %g is outside the accepted range 0 < k <= 1",
                       path, o->reduction);
    if (!(o->inflow_deg >= 0.0 && o->inflow_deg <= INFLOW_MAX_DEG))
        return sw_fail(err, SW_ERR_RANGE, "%s: inflow angle %g deg is outside the accepted range 0 .. %g deg", path,
                       o->inflow_deg, INFLOW_MAX_DEG);
    if (!(o->translation_fraction >= 0.0 && o->translation_fraction <= 1.0))
        return sw_fail(err, SW_ERR_RANGE, "%s: translation fraction %g is outside the accepted range 0 .. 1", path,
                       o->translation_fraction);
    if (!(fabs(o->coriolis_s) <= F_MAX_S))
        return sw_fail(err, SW_ERR_RANGE, "%s: Coriolis parameter %g s-1 is outside the accepted range |f| <= %g s-1",
                       path, o->coriolis_s, F_MAX_S);
    return SW_OK;
}

void sw_storm_free(sw_storm *s)
{
    if (!s)
        return;
    free(s->path);
    free(s->t_s);   /* one block holds all the per-point arrays */
    free(s);
}

/* The value v (base units) of column c as written in the file: "6 h", "-5 km", "3.5". */
static void storm_show(const sw_table *t, int c, double v, char *buf, size_t n)
{
    const sw_table_colinfo *ci = &t->col[c];
    snprintf(buf, n, "%.10g%s%s", v / ci->factor, ci->unit[0] ? " " : "", ci->unit);
}

/* Checks the table's rows and fills s's point arrays. Returns SW_OK or SW_ERR_PARSE / SW_ERR_RANGE
 * naming file:line and the accepted range. */
static sw_status storm_points(sw_storm *s, const sw_table *t, sw_error *err)
{
    const char *path = s->path;
    const sw_storm_options *o = &s->opt;
    char a[64], b[64];
    for (size_t r = 0; r < s->n; r++) {
        size_t line = t->line[r];
        double time = sw_table_at(t, r, C_TIME);
        if (r > 0 && !(time > s->t_s[r - 1])) {
            storm_show(t, C_TIME, time, a, sizeof a);
            storm_show(t, C_TIME, s->t_s[r - 1], b, sizeof b);
            return sw_fail(err, SW_ERR_PARSE, "%s:%zu: time %s is not after the previous point's %s (line %zu): "
                           "times must increase strictly", path, line, a, b, t->line[r - 1]);
        }
        double amb = o->ambient_pa;
        if (t->col[C_AMB].present) {
            amb = sw_table_at(t, r, C_AMB);
            if (!(amb >= AMB_MIN_PA && amb <= AMB_MAX_PA)) {
                storm_show(t, C_AMB, amb, a, sizeof a);
                return sw_fail(err, SW_ERR_RANGE, "%s:%zu: ambient_pressure %s is outside the accepted range "
                               "%g .. %g hPa", path, line, a, AMB_MIN_PA / 100.0, AMB_MAX_PA / 100.0);
            }
        }
        double dp;
        if (t->col[C_DP].present) {
            dp = sw_table_at(t, r, C_DP);
            if (!(dp > 0.0 && dp < amb)) {
                storm_show(t, C_DP, dp, a, sizeof a);
                return sw_fail(err, SW_ERR_RANGE, "%s:%zu: pressure_drop %s is outside the accepted range "
                               "0 < drop < the ambient pressure %g hPa", path, line, a, amb / 100.0);
            }
        } else {
            double pc = sw_table_at(t, r, C_PC);
            dp = amb - pc;
            if (!(pc > 0.0 && dp > 0.0)) {
                storm_show(t, C_PC, pc, a, sizeof a);
                return sw_fail(err, SW_ERR_RANGE, "%s:%zu: central_pressure %s is not below the ambient pressure "
                               "%g hPa (accepted: 0 < central_pressure < ambient; the drop must be > 0)", path, line,
                               a, amb / 100.0);
            }
        }
        double rmax = sw_table_at(t, r, C_RMAX);
        if (!(rmax > 0.0)) {
            storm_show(t, C_RMAX, rmax, a, sizeof a);
            return sw_fail(err, SW_ERR_RANGE, "%s:%zu: rmax %s is outside the accepted range rmax > 0", path, line, a);
        }
        double B;
        if (t->col[C_B].present) {
            B = sw_table_at(t, r, C_B);
            if (!(B >= SW_STORM_B_MIN && B <= SW_STORM_B_MAX))
                return sw_fail(err, SW_ERR_RANGE, "%s:%zu: B %g is outside the accepted range %g .. %g (Holland 1980 "
                               "found about 1 to 2.5)", path, line, B, SW_STORM_B_MIN, SW_STORM_B_MAX);
        } else {
            double vm = sw_table_at(t, r, C_VMAX);
            if (!(vm > 0.0)) {
                storm_show(t, C_VMAX, vm, a, sizeof a);
                return sw_fail(err, SW_ERR_RANGE, "%s:%zu: max_wind %s is outside the accepted range max_wind > 0",
                               path, line, a);
            }
            /* Holland's cyclostrophic maximum Vmax = sqrt(B dp / (rho_a e)), with the gradient maximum
             * Vmax = max_wind / reduction, solved for B */
            double vg = vm / o->reduction;
            B = o->air_density_kgm3 * STORM_E * vg * vg / dp;
            if (!(B >= SW_STORM_B_MIN && B <= SW_STORM_B_MAX)) {
                storm_show(t, C_VMAX, vm, a, sizeof a);
                return sw_fail(err, SW_ERR_RANGE, "%s:%zu: B %.4g, derived from max_wind %s (B = rho_a e "
                               "(max_wind / reduction)^2 / drop, rho_a = %g kg m-3, reduction = %g, drop = %g hPa), "
                               "is outside the accepted range %g .. %g (Holland 1980 found about 1 to 2.5)", path,
                               line, B, a, o->air_density_kgm3, o->reduction, dp / 100.0, SW_STORM_B_MIN,
                               SW_STORM_B_MAX);
            }
        }
        s->t_s[r] = time;
        s->x_m[r] = sw_table_at(t, r, C_X);
        s->y_m[r] = sw_table_at(t, r, C_Y);
        s->dp_pa[r] = dp;
        s->ambient_pa[r] = amb;
        s->rmax_m[r] = rmax;
        s->b[r] = B;
    }
    return SW_OK;
}

sw_status sw_storm_load(const char *path, const sw_storm_options *opt, sw_storm **out, sw_error *err)
{
    if (!out)
        return sw_fail(err, SW_ERR_USAGE, "sw_storm_load: no output");
    *out = NULL;
    if (!path)
        return sw_fail(err, SW_ERR_USAGE, "sw_storm_load: no track file given");
    sw_storm_options o = opt ? *opt : sw_storm_options_default();
    sw_status st = storm_check_options(path, &o, err);
    if (st != SW_OK)
        return st;

    sw_table t;
    st = sw_table_read(path, TRACK_COLUMNS, C_COUNT, &t, err);
    if (st != SW_OK)
        return st;
    if (t.n_rows < 2) {
        st = sw_fail(err, SW_ERR_PARSE, "%s:%zu: the track has 1 point; at least 2 are needed (a storm that stays "
                     "put is two points at the same place)", path, t.line[0]);
        sw_table_free(&t);
        return st;
    }

    sw_storm *s = calloc(1, sizeof *s);
    size_t n = t.n_rows;
    double *block = s && n <= SIZE_MAX / (7 * sizeof(double)) ? malloc(7 * n * sizeof *block) : NULL;
    char *p = s ? malloc(strlen(path) + 1) : NULL;
    if (!s || !block || !p) {
        free(s);
        free(block);
        free(p);
        sw_table_free(&t);
        return sw_fail(err, SW_ERR_NOMEM, "%s: out of memory for the track", path);
    }
    memcpy(p, path, strlen(path) + 1);
    s->path = p;
    s->opt = o;
    s->n = n;
    s->t_s = block;
    s->x_m = block + n;
    s->y_m = block + 2 * n;
    s->dp_pa = block + 3 * n;
    s->ambient_pa = block + 4 * n;
    s->rmax_m = block + 5 * n;
    s->b = block + 6 * n;
    st = storm_points(s, &t, err);
    sw_table_free(&t);
    if (st != SW_OK) {
        sw_storm_free(s);
        return st;
    }
    *out = s;
    return SW_OK;
}

double sw_storm_t_first(const sw_storm *s) { return s->t_s[0]; }

double sw_storm_t_last(const sw_storm *s) { return s->t_s[s->n - 1]; }

size_t sw_storm_points(const sw_storm *s) { return s->n; }

sw_status sw_storm_covers(const sw_storm *s, double t0_s, double t1_s, sw_error *err)
{
    return sw_table_covers(s->path, "track", "track points", sw_storm_t_first(s), sw_storm_t_last(s), t0_s, t1_s, err);
}

void sw_storm_state_at(const sw_storm *s, double t_s, sw_storm_state *st)
{
    const double *t = s->t_s;
    size_t n = s->n;
    double tc = t_s < t[0] ? t[0] : t_s > t[n - 1] ? t[n - 1] : t_s;
    if (tc != tc)   /* NaN: the first point */
        tc = t[0];
    /* the segment [t[i], t[i+1]] holding tc: the last i with t[i] <= tc, at most n - 2 */
    size_t lo = 0, hi = n - 1;
    while (hi - lo > 1) {
        size_t mid = lo + (hi - lo) / 2;
        if (t[mid] <= tc)
            lo = mid;
        else
            hi = mid;
    }
    size_t i = lo;
    double span = t[i + 1] - t[i];
    double w = (tc - t[i]) / span;
#define STORM_LERP(a) ((a)[i] + w * ((a)[i + 1] - (a)[i]))
    st->t_s = tc;
    st->x_m = STORM_LERP(s->x_m);
    st->y_m = STORM_LERP(s->y_m);
    st->dp_pa = STORM_LERP(s->dp_pa);
    st->ambient_pa = STORM_LERP(s->ambient_pa);
    st->pc_pa = st->ambient_pa - st->dp_pa;
    st->rmax_m = STORM_LERP(s->rmax_m);
    st->B = STORM_LERP(s->b);
#undef STORM_LERP
    st->vt_x_ms = (s->x_m[i + 1] - s->x_m[i]) / span;
    st->vt_y_ms = (s->y_m[i + 1] - s->y_m[i]) / span;
}

void sw_holland_profile(double r_m, double dp_pa, double rmax_m, double B, double rho_air, double f_s,
                        double *p_minus_pc_pa, double *vg_ms)
{
    double pr = 0.0, vg = 0.0;
    if (r_m > 0.0) {
        double x = pow(rmax_m / r_m, B);   /* (rmax/r)^B */
        double e = exp(-x);                /* 0 once x > ~745: then x e is 0 too (x may be inf) */
        pr = dp_pa * e;
        double a = e > 0.0 ? B * dp_pa * x * e / rho_air : 0.0;
        double h = 0.5 * r_m * fabs(f_s);
        /* sqrt(a + h^2) - h, written without cancellation where h^2 >> a */
        double den = sqrt(a + h * h) + h;
        vg = den > 0.0 ? a / den : 0.0;
    }
    if (p_minus_pc_pa)
        *p_minus_pc_pa = pr;
    if (vg_ms)
        *vg_ms = vg;
}

double sw_holland_vmax(double dp_pa, double B, double rho_air)
{
    return sqrt(B * dp_pa / (rho_air * STORM_E));
}

/* Rotation sense * cos(inflow) and sin(inflow) for the options o. */
static void storm_turn(const sw_storm_options *o, double *c, double *s)
{
    double a = o->inflow_deg * (STORM_PI / 180.0);
    *c = (o->coriolis_s >= 0.0 ? 1.0 : -1.0) * cos(a);
    *s = sin(a);
}

void sw_storm_point(const sw_storm *s, const sw_storm_state *st, double x_m, double y_m, double *p_pa,
                    double *u10_ms, double *v10_ms)
{
    const sw_storm_options *o = &s->opt;
    double dx = x_m - st->x_m, dy = y_m - st->y_m;
    double r = sqrt(dx * dx + dy * dy);
    double pr, vg;
    sw_holland_profile(r, st->dp_pa, st->rmax_m, st->B, o->air_density_kgm3, o->coriolis_s, &pr, &vg);
    double u = 0.0, v = 0.0;
    if (r > 0.0) {
        double c, sn;
        storm_turn(o, &c, &sn);
        /* unit tangent of the rotation sense (sense * (-dy, dx) / r) turned inward by the inflow angle:
         * cos(a) tangent - sin(a) radial */
        double k = o->reduction * vg / r;
        double wt = o->translation_fraction * 2.0 * r * st->rmax_m / (r * r + st->rmax_m * st->rmax_m);
        u = -k * (c * dy + sn * dx) + wt * st->vt_x_ms;
        v = k * (c * dx - sn * dy) + wt * st->vt_y_ms;
    }
    if (p_pa)
        *p_pa = st->pc_pa + pr;
    if (u10_ms)
        *u10_ms = u;
    if (v10_ms)
        *v10_ms = v;
}

void sw_storm_frame_free(sw_storm_frame *fr)
{
    if (!fr)
        return;
    free(fr->p_rel_pa);   /* one block holds both tables */
    memset(fr, 0, sizeof *fr);
}

sw_status sw_storm_frame_build(const sw_storm *s, double t_s, double reach_m, double dr_m, sw_storm_frame *fr,
                               sw_error *err)
{
    if (!fr)
        return sw_fail(err, SW_ERR_USAGE, "sw_storm_frame_build: no frame");
    memset(fr, 0, sizeof *fr);
    if (!s)
        return sw_fail(err, SW_ERR_USAGE, "sw_storm_frame_build: no storm");
    sw_storm_state st;
    sw_storm_state_at(s, t_s, &st);
    return sw_storm_frame_build_state(s, &st, reach_m, dr_m, fr, err);
}

sw_status sw_storm_frame_build_state(const sw_storm *s, const sw_storm_state *state, double reach_m, double dr_m,
                                     sw_storm_frame *fr, sw_error *err)
{
    if (!fr)
        return sw_fail(err, SW_ERR_USAGE, "sw_storm_frame_build: no frame");
    memset(fr, 0, sizeof *fr);
    if (!s || !state)
        return sw_fail(err, SW_ERR_USAGE, "sw_storm_frame_build: no storm or state");
    if (!(reach_m > 0.0 && reach_m < INFINITY) || !(dr_m > 0.0 && dr_m < INFINITY))
        return sw_fail(err, SW_ERR_USAGE, "sw_storm_frame_build: reach %g m and spacing %g m must be positive and "
                       "finite", reach_m, dr_m);
    if (!(state->dp_pa > 0.0 && state->dp_pa < INFINITY && state->rmax_m > 0.0 && state->rmax_m < INFINITY &&
          state->B >= SW_STORM_B_MIN && state->B <= SW_STORM_B_MAX && isfinite(state->x_m) && isfinite(state->y_m) &&
          isfinite(state->pc_pa) && isfinite(state->vt_x_ms) && isfinite(state->vt_y_ms)))
        return sw_fail(err, SW_ERR_RANGE, "%s: storm state out of range (drop %g Pa and rmax %g m must be > 0, B %g in "
                       "%g .. %g, the rest finite)", s->path, state->dp_pa, state->rmax_m, state->B, SW_STORM_B_MIN,
                       SW_STORM_B_MAX);
    /* the storm's own resolution: linear interpolation at rmax / 50 errs by up to ~1e-3 of the wind
     * (measured), at rmax / SW_STORM_TABLE_PER_RMAX by less than 1e-4 */
    double dr_storm = state->rmax_m / SW_STORM_TABLE_PER_RMAX;
    if (dr_m > dr_storm)
        dr_m = dr_storm;
    double intervals = ceil(reach_m / dr_m);
    if (intervals > SW_STORM_TABLE_MAX) {
        dr_m = reach_m / SW_STORM_TABLE_MAX;
        intervals = SW_STORM_TABLE_MAX;
        fr->coarsened = 1;
    }
    size_t n = intervals < 1.0 ? 1 : (size_t)intervals;
    double *block = malloc(2 * (n + 2) * sizeof *block);
    if (!block) {
        memset(fr, 0, sizeof *fr);
        return sw_fail(err, SW_ERR_NOMEM, "%s: out of memory for a storm table of %zu points", s->path, n + 2);
    }

    const sw_storm_options *o = &s->opt;
    sw_storm_state *st = &fr->st;
    *st = *state;
    fr->reach_m = reach_m;
    fr->dr_m = dr_m;
    fr->n = n;
    fr->p_rel_pa = block;
    fr->spin_s = block + n + 2;
    fr->inv_dr = 1.0 / dr_m;
    fr->q_max = (double)n;
    storm_turn(o, &fr->turn_cos, &fr->turn_sin);
    fr->trans_k_m = 2.0 * o->translation_fraction * st->rmax_m;
    fr->rmax2_m2 = st->rmax_m * st->rmax_m;
    fr->spin_s[0] = 0.0;
    fr->p_rel_pa[0] = 0.0;
    for (size_t k = 1; k <= n; k++) {
        double r = (double)k * dr_m, pr, vg;
        sw_holland_profile(r, st->dp_pa, st->rmax_m, st->B, o->air_density_kgm3, o->coriolis_s, &pr, &vg);
        fr->p_rel_pa[k] = pr;
        fr->spin_s[k] = o->reduction * vg / r;
    }
    fr->p_rel_pa[n + 1] = fr->p_rel_pa[n];
    fr->spin_s[n + 1] = fr->spin_s[n];
    return SW_OK;
}

void sw_storm_row(const sw_storm_frame *fr, double y_m, double x0_m, double dx_m, size_t n, float *restrict p_pa,
                  float *restrict u10_ms, float *restrict v10_ms)
{
    const double *restrict tp = fr->p_rel_pa;
    const double *restrict ts = fr->spin_s;
    const double dy = y_m - fr->st.y_m, dy2 = dy * dy;
    const double ax = x0_m - fr->st.x_m;
    const double inv_dr = fr->inv_dr, q_max = fr->q_max;
    const double c = fr->turn_cos, sn = fr->turn_sin;
    const double tk = fr->trans_k_m, rm2 = fr->rmax2_m2;
    const double vtx = fr->st.vt_x_ms, vty = fr->st.vt_y_ms, pc = fr->st.pc_pa;
    const double cdy = c * dy, sdy = sn * dy;
    SW_OMP(simd)
    for (size_t i = 0; i < n; i++) {
        double dx = ax + (double)i * dx_m;
        double r2 = dx * dx + dy2;
        double r = sqrt(r2);
        double q = r * inv_dr;
        q = q < q_max ? q : q_max;
        int k = (int)q;
        double w = q - (double)k;
        double pr = tp[k] + w * (tp[k + 1] - tp[k]);
        double spin = ts[k] + w * (ts[k + 1] - ts[k]);
        double wt = tk * r / (r2 + rm2);
        p_pa[i] = (float)(pc + pr);
        u10_ms[i] = (float)(wt * vtx - spin * (cdy + sn * dx));
        v10_ms[i] = (float)(wt * vty + spin * (c * dx - sdy));
    }
}

/* ---- a scenario's changes of the track ------------------------------------------------------------------ */

sw_storm_changes sw_storm_changes_none(void)
{
    return (sw_storm_changes){.speed_factor = 1, .dp_factor = 1, .rmax_factor = 1};
}

void sw_storm_changed_span(const sw_storm *s, const sw_storm_changes *c, double t0_s, double t1_s, double *a_s,
                           double *b_s)
{
    const double first = sw_storm_t_first(s);
    *a_s = first + (t0_s - first) * c->speed_factor;
    *b_s = first + (t1_s - first) * c->speed_factor;
}

void sw_storm_state_changed(const sw_storm *s, const sw_storm_changes *c, double t_s, sw_storm_state *st)
{
    /* the mean heading, first to last point (a storm that stays put heads east) */
    sw_storm_state a, b;
    sw_storm_state_at(s, sw_storm_t_first(s), &a);
    sw_storm_state_at(s, sw_storm_t_last(s), &b);
    double hx = b.x_m - a.x_m, hy = b.y_m - a.y_m, len = hypot(hx, hy);
    hx = len > 0 ? hx / len : 1;
    hy = len > 0 ? hy / len : 0;
    double tt, unused;
    sw_storm_changed_span(s, c, t_s, t_s, &tt, &unused);
    sw_storm_state_at(s, tt, st);
    st->t_s = t_s;
    st->vt_x_ms *= c->speed_factor;
    st->vt_y_ms *= c->speed_factor;
    st->x_m += c->shift_along_m * hx - c->shift_across_m * hy;   /* across: to the left of the heading */
    st->y_m += c->shift_along_m * hy + c->shift_across_m * hx;
    st->dp_pa *= c->dp_factor;
    st->pc_pa = st->ambient_pa - st->dp_pa;
    st->rmax_m *= c->rmax_factor;
}
