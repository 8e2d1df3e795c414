/* storm.h - a moving parametric storm: the Holland (1980) pressure and wind profile about a centre that
 * follows a track read from a text file, evaluated at points, or fast over whole grid rows.
 *
 * The track file is a table_text table (inputs/table_text.h) with these columns (docs/storm.md):
 *
 *   time               required; s, min, h, d; strictly increasing
 *   x, y               required; m, km: the centre on the model's Cartesian axes (x east, y north)
 *   central_pressure   Pa, hPa, mbar, kPa   } exactly one of the two; drop = ambient - central > 0
 *   pressure_drop      Pa, hPa, mbar, kPa   }
 *   rmax               required; m, km: radius of maximum wind, > 0
 *   B                  no unit              } exactly one of the two; B (given or derived) in
 *   max_wind           m/s, kn, km/h        } [SW_STORM_B_MIN, SW_STORM_B_MAX]
 *   ambient_pressure   optional; Pa, hPa, mbar, kPa: else sw_storm_options.ambient_pa
 *
 * Between track points every parameter (x, y, drop, ambient, rmax, B) is linear in time; the translation
 * velocity is the track's slope on the segment. With max_wind, B is derived at each track point from
 * Holland's cyclostrophic maximum and then interpolated like the others.
 *
 * Formulas (Holland 1980, Mon. Wea. Rev. 108, 1212-1218), r the distance from the centre:
 *   p(r)  = pc + dp exp(-(rmax/r)^B)
 *   Vg(r) = sqrt(B dp (rmax/r)^B exp(-(rmax/r)^B) / rho_a + (r f / 2)^2) - r |f| / 2
 *   Vmax  = sqrt(B dp / (rho_a e))          (cyclostrophic, f = 0, reached at r = rmax)
 * 10 m wind: reduction * Vg along the tangent of the rotation sense, turned towards the centre by the
 * inflow angle, plus translation_fraction * 2 r rmax / (r^2 + rmax^2) * (vt_x, vt_y). At r = 0 the
 * pressure is pc and the wind 0.
 */
#ifndef SW_STORM_H
#define SW_STORM_H

#include <stddef.h>

#include "base/status.h"

#define SW_STORM_B_MIN 0.5     /* smallest accepted Holland B (Holland 1980 found about 1 to 2.5 [memory]) */
#define SW_STORM_B_MAX 3.0     /* largest accepted Holland B */
#define SW_STORM_TABLE_MAX 2000000   /* most intervals a frame's radial table may have */
#define SW_STORM_TABLE_PER_RMAX 256  /* a frame's table spacing is at most rmax / this */

/* Settings of the wind model that the track does not give. Units in each field's name. */
typedef struct {
    double ambient_pa;            /* environmental pressure when the track has no ambient_pressure column,
                                     Pa; default 101300 (1013 hPa); accepted 80000 .. 110000 */
    double air_density_kgm3;      /* rho_a in the gradient wind and in B from max_wind, kg m-3; default 1.15;
                                     accepted 0.5 .. 2 */
    double reduction;             /* 10 m wind / gradient wind, default 0.8; accepted 0 < k <= 1 */
    double inflow_deg;            /* angle by which the 10 m wind turns from the tangent towards the
                                     centre, deg; default 20; accepted 0 .. 60 */
    double translation_fraction;  /* share of the storm's forward velocity added at r = rmax (weighted by
                                     2 r rmax / (r^2 + rmax^2)); default 0.5; accepted 0 .. 1 */
    double coriolis_s;            /* Coriolis parameter f in the gradient wind, s-1; its sign sets the
                                     rotation: f >= 0 counter-clockwise (northern hemisphere), f < 0
                                     clockwise; default 0 (cyclostrophic, counter-clockwise); accepted
                                     |f| <= 1e-3 */
} sw_storm_options;

/* The storm at one time. */
typedef struct {
    double t_s;                 /* the time this state is for (clamped to the track's span), s */
    double x_m, y_m;            /* centre, m */
    double pc_pa;               /* central pressure, Pa (= ambient_pa - dp_pa) */
    double dp_pa;               /* pressure drop, Pa, > 0 */
    double ambient_pa;          /* environmental pressure, Pa */
    double rmax_m;              /* radius of maximum wind, m, > 0 */
    double B;                   /* Holland's shape parameter, dimensionless */
    double vt_x_ms, vt_y_ms;    /* translation velocity (the track's slope on this segment), m/s */
} sw_storm_state;

/* A loaded track and its options (opaque). */
typedef struct sw_storm sw_storm;

/* A storm at one time, tabulated against r for fast evaluation over grid rows (sw_storm_row). Built by
 * sw_storm_frame_build, read-only afterwards (any number of threads may read it at once). */
typedef struct {
    sw_storm_state st;          /* the storm at the frame's time */
    double reach_m;             /* the requested reach: the largest distance a point may have, m */
    double dr_m;                /* the table spacing used, m: min(requested, rmax / SW_STORM_TABLE_PER_RMAX),
                                   or wider if coarsened */
    int coarsened;              /* 1 when dr_m was widened to keep the table within SW_STORM_TABLE_MAX */
    size_t n;                   /* intervals in the table: nodes r_k = k dr_m, k = 0 .. n (n dr_m >= reach_m),
                                   plus one pad node n + 1 equal to node n */
    double *p_rel_pa;           /* n + 2 values: p - pc at r_k, Pa */
    double *spin_s;             /* n + 2 values: the 10 m tangential speed / r at r_k, s-1 (0 at r = 0) */
    double inv_dr;              /* 1 / dr_m, m-1 */
    double q_max;               /* n: the largest fractional table index used (points beyond reach) */
    double turn_cos;            /* rotation sense (+1 counter-clockwise, -1 clockwise) * cos(inflow) */
    double turn_sin;            /* sin(inflow) */
    double trans_k_m;           /* 2 translation_fraction rmax, m: weight = trans_k_m r / (r^2 + rmax^2) */
    double rmax2_m2;            /* rmax^2, m^2 */
} sw_storm_frame;

/* Defaults of every option (see the fields). */
sw_storm_options sw_storm_options_default(void);

/* Reads the track in `path` (format above) with options opt (NULL: the defaults). Needs at least 2 track
 * points. On success returns SW_OK and *out (free with sw_storm_free). On failure returns SW_ERR_IO (cannot
 * open), SW_ERR_PARSE (the table's form, a non-increasing time), SW_ERR_RANGE (a value or option out of
 * its accepted range) or SW_ERR_NOMEM with a message "PATH:LINE: cause (accepted ...)", and *out = NULL. */
sw_status sw_storm_load(const char *path, const sw_storm_options *opt, sw_storm **out, sw_error *err);

/* Frees a storm; NULL is fine. */
void sw_storm_free(sw_storm *s);

/* First and last track time, s. */
double sw_storm_t_first(const sw_storm *s);
double sw_storm_t_last(const sw_storm *s);

/* Number of track points (>= 2). */
size_t sw_storm_points(const sw_storm *s);

/* SW_OK when the track spans t0_s .. t1_s (s); else SW_ERR_RANGE with e.g. "track.txt: the track covers
 * 0 .. 43200 s but the run needs 0 .. 86400 s (add track points up to at least 86400 s)". */
sw_status sw_storm_covers(const sw_storm *s, double t0_s, double t1_s, sw_error *err);

/* The storm at time t_s (clamped to the track's span: before the first point the first point, after the
 * last the last, each with its end segment's translation velocity) into *st. */
void sw_storm_state_at(const sw_storm *s, double t_s, sw_storm_state *st);

/* What a scenario changes of a track ([storm] keys, docs/storm-surge.md): the zero value changes
 * nothing but is not valid; use sw_storm_changes_none. */
typedef struct {
    double speed_factor;        /* forward speed times this: run time t reads the track at
                                 * t_first + (t - t_first) speed_factor (> 0) */
    double dp_factor;           /* every pressure drop times this (> 0) */
    double rmax_factor;         /* every radius of maximum wind times this (> 0) */
    double shift_along_m;       /* every centre moved along the mean heading (first to last point), m */
    double shift_across_m;      /* ... and to the left of it, m */
} sw_storm_changes;

/* No change: factors 1, shifts 0. */
sw_storm_changes sw_storm_changes_none(void);

/* The changed storm at run time t_s into *st (central pressure = ambient - the changed drop; st->t_s is
 * t_s). */
void sw_storm_state_changed(const sw_storm *s, const sw_storm_changes *c, double t_s, sw_storm_state *st);

/* The track times that run times t0_s .. t1_s read under c, into *a_s, *b_s (for sw_storm_covers). */
void sw_storm_changed_span(const sw_storm *s, const sw_storm_changes *c, double t0_s, double t1_s, double *a_s,
                           double *b_s);

/* Holland (1980) at distance r_m from the centre, for drop dp_pa, rmax_m, B, air density rho_air (kg m-3)
 * and Coriolis parameter f_s (s-1; only |f| matters): p - pc (Pa) into *p_minus_pc_pa and the gradient
 * wind speed (m/s, >= 0) into *vg_ms. r_m <= 0 gives 0 and 0. Either output may be NULL. */
void sw_holland_profile(double r_m, double dp_pa, double rmax_m, double B, double rho_air, double f_s,
                        double *p_minus_pc_pa, double *vg_ms);

/* Holland's cyclostrophic maximum gradient wind sqrt(B dp / (rho_air e)), m/s. */
double sw_holland_vmax(double dp_pa, double B, double rho_air);

/* Absolute pressure (Pa) and 10 m wind (m/s; x east, y north) at (x_m, y_m) for the storm state st
 * (from sw_storm_state_at) with s's options. Outputs may be NULL. Exact (no table): for gauges and tests. */
void sw_storm_point(const sw_storm *s, const sw_storm_state *st, double x_m, double y_m, double *p_pa,
                    double *u10_ms, double *v10_ms);

/* Builds the frame of the storm at t_s (clamped as in sw_storm_state_at) for points at most reach_m from
 * the centre (the caller computes it, e.g. the distance to the grid's farthest corner), tabulated every
 * dr_m (callers pass about a quarter of the grid spacing) or every rmax / SW_STORM_TABLE_PER_RMAX where
 * that is finer: the table must resolve the storm as well as the grid. Linear interpolation at rmax / 50
 * alone errs by up to 1.1e-3 of the maximum 10 m wind and 2.4e-4 of dp (measured, B 1 to 3), above the
 * 1e-4 we want. If the table would exceed SW_STORM_TABLE_MAX intervals, the spacing is widened to
 * reach_m / SW_STORM_TABLE_MAX and fr->coarsened is set (the caller should say so: the error then grows
 * as the spacing squared). fr->dr_m holds the spacing used.
 * Error against sw_storm_point with the spacing rmax / 256 (any requested dr_m >= that, rmax / 50 among
 * them), B 1 to 3: at most 4.2e-5 of the maximum 10 m wind and 9.1e-6 of dp on a dense scan in r; the rows
 * crossing the eye in tests/unit/test_storm.c measure 2.9e-5 and 9.5e-6 (float outputs included).
 * On success returns SW_OK with fr's tables allocated (free with sw_storm_frame_free); on failure
 * SW_ERR_USAGE (reach or dr not positive and finite) or SW_ERR_NOMEM, and fr is left empty. */
sw_status sw_storm_frame_build(const sw_storm *s, double t_s, double reach_m, double dr_m, sw_storm_frame *fr,
                               sw_error *err);

/* As sw_storm_frame_build, for a given state (e.g. one from sw_storm_state_at that the caller has shifted,
 * scaled or sped up) instead of a time; s gives the options. The state must have dp_pa > 0, rmax_m > 0,
 * B in [SW_STORM_B_MIN, SW_STORM_B_MAX] and finite positions, pc_pa and velocities: else SW_ERR_RANGE. */
sw_status sw_storm_frame_build_state(const sw_storm *s, const sw_storm_state *st, double reach_m, double dr_m,
                                     sw_storm_frame *fr, sw_error *err);

/* Frees a frame's tables and empties it; NULL or an empty frame is fine. */
void sw_storm_frame_free(sw_storm_frame *fr);

/* Fills n points of the row y = y_m at x = x0_m + i dx_m (i = 0 .. n-1): absolute pressure (Pa) into
 * p_pa[i] and the 10 m wind (m/s) into u10_ms[i], v10_ms[i]. The three arrays must not overlap. Points
 * farther than the frame's table (n dr) take the table's last node (not meaningful: pass a reach that
 * covers every point). Reads fr only: safe from several threads at once. Costs one sqrt, one division,
 * two table lookups and a few multiplications a point; vectorised. */
void sw_storm_row(const sw_storm_frame *fr, double y_m, double x0_m, double dx_m, size_t n, float *p_pa,
                  float *u10_ms, float *v10_ms);

#endif
