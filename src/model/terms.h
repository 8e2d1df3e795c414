/* terms.h - the momentum terms beside the pressure gradient: rotation (Coriolis) and bottom friction.
 *
 * What a scenario asks for is an sw_terms_config; the model turns it into an sw_terms, the view its
 * stage kernels read: the Coriolis parameter per row (no per-cell array: f depends on y only) and the
 * friction coefficients. docs/terms.md derives the time discretisation and the energy it conserves.
 *
 *   du/dt = ... + f v - (r + Cd |U|) u / h,     dv/dt = ... - f u - (r + Cd |U|) v / h
 *
 * Rotation: the u equation takes v from before the step, then the v equation takes the new u (the
 * forward-backward idea applied to the Coriolis pair); the other component is averaged onto a
 * velocity point with the layout's own v_at_u / u_at_v operator, weighted so that rotation does no
 * work on any depth. Friction is centred in time (Crank-Nicolson), on the still-water depth carried by
 * the velocity point (hx, hy), so it only ever removes energy and cannot make a step unstable.
 */
#ifndef SW_TERMS_H
#define SW_TERMS_H

#include <stddef.h>
#include <stdint.h>

typedef enum {
    SW_ROTATION_NONE = 0,   /* f = 0 */
    SW_ROTATION_F_PLANE,    /* f = f0 everywhere */
    SW_ROTATION_BETA_PLANE, /* f = f0 + beta (y - y_ref) */
    SW_ROTATION_SPHERE      /* f = 2 Omega sin(latitude), row by row: geographic grids only (grid.h) */
} sw_rotation_kind;

typedef enum {
    SW_FRICTION_NONE = 0,
    SW_FRICTION_LINEAR,     /* r u / h, r a rate in m/s */
    SW_FRICTION_QUADRATIC,  /* Cd |U| u / h, Cd a constant drag coefficient */
    SW_FRICTION_MANNING     /* Cd = g n^2 / h^(1/3), Manning's n */
} sw_friction_kind;

/* What a run asks for. The zero value is "no terms": the model then steps with the plain kernels. */
typedef struct {
    sw_rotation_kind rotation;
    double f0_s;              /* Coriolis parameter at y_ref (f-plane: everywhere), s-1 */
    double beta_ms;           /* beta-plane: df/dy, m-1 s-1 */
    double y_ref_m;           /* beta-plane: the y where f = f0, m (same axis as the grid's y0) */
    sw_friction_kind friction;
    double friction_rate_ms;  /* linear: r, m/s (> 0) */
    double drag;              /* quadratic: Cd, dimensionless (> 0) */
    double manning_n;         /* Manning: n, s m-1/3 (> 0) */
    int surface;              /* 1: the momentum step also carries surface forcing (wind stress and the
                               * air-pressure gradient), which the run supplies in time slabs
                               * (sw_model_surface_build, model.h; forcing/forcing.h) */
} sw_terms_config;

/* Which kernels a configuration needs: none (bit-identical to a model without terms), rotation
 * and/or linear friction, or also quadratic friction (which reads per-point drag arrays); each of the
 * three also with surface forcing (which reads the forcing slabs). */
typedef enum {
    SW_TERMS_PLAIN = 0,
    SW_TERMS_LINEAR = 1,
    SW_TERMS_DRAG = 2,
    SW_TERMS_FORCED = 3,        /* PLAIN with surface forcing */
    SW_TERMS_FORCED_LINEAR = 4, /* LINEAR with surface forcing */
    SW_TERMS_FORCED_DRAG = 5    /* DRAG with surface forcing */
} sw_terms_variant;
#define SW_TERMS_VARIANTS 6

static inline sw_terms_variant sw_terms_variant_of(const sw_terms_config *c)
{
    const int drag = c->friction == SW_FRICTION_QUADRATIC || c->friction == SW_FRICTION_MANNING;
    const int linear = c->rotation != SW_ROTATION_NONE || c->friction == SW_FRICTION_LINEAR;
    if (c->surface)
        return drag ? SW_TERMS_FORCED_DRAG : linear ? SW_TERMS_FORCED_LINEAR : SW_TERMS_FORCED;
    return drag ? SW_TERMS_DRAG : linear ? SW_TERMS_LINEAR : SW_TERMS_PLAIN;
}

/* 1 when a variant reads the quadratic drag arrays (sw_terms.drag_x, drag_y). */
static inline int sw_terms_variant_drags(sw_terms_variant v) { return v == SW_TERMS_DRAG || v == SW_TERMS_FORCED_DRAG; }

/* The terms as the stage kernels read them (built by model.c from an sw_terms_config). */
typedef struct sw_terms {
    const double *f_centre;   /* [ny + 2] Coriolis parameter at the cell centres of padded row j, s-1 */
    const double *f_face;     /* [ny + 2] at the line between padded rows j and j + 1 (the north faces
                               * of row j), s-1; both all 0 without rotation */
    double friction_rate_ms;  /* linear friction r, m/s; 0 without */
    const void *drag_x;       /* [n_pad] sw_real: quadratic drag coefficient at each u point (the same
                               * padded index as u), dimensionless; NULL unless the variant is DRAG */
    const void *drag_y;       /* [n_pad] the same at v points */
    const uint8_t *share_x;   /* [n_pad] on layouts whose velocity points can stand for part of a cell's
                               * area (B, D: sw_layout.transport_weighted): 3 / f at each u point in a
                               * byte (sw_share_code), f = n / 4 its water fraction (1 in open water, 1/2
                               * along a wall), which turns the friction rate of the velocity into that of
                               * the stored f * velocity; NULL on the other layouts and without terms.
                               * A byte, not a real: the step reads it at every point, and four bytes
                               * there cost a quarter of the step's memory traffic */
    const uint8_t *share_y;   /* [n_pad] the same at v points */
    const uint8_t *share_mixed_x; /* [(ny + 2) n_share_seg] with share_x: 1 when the segment q of padded row
                               * j (padded columns q SW_SHARE_SEG .. (q + 1) SW_SHARE_SEG - 1) holds a u
                               * point that flows (hx > 0) with a code other than open water's
                               * (SW_SHARE_OPEN), else 0: the kernels read the bytes of mixed segments only
                               * and use the open-water code elsewhere (same values, no byte stream) */
    const uint8_t *share_mixed_y; /* the same for share_y, the v points and hy */
    size_t n_share_seg;       /* segments a padded row has: ceil(stride / SW_SHARE_SEG) */
    const float *surface_x[2];/* [n_pad] surface forcing at each u point (same padded index as u) at the two
                               * forcing times around the step, earlier then later: the acceleration
                               * tau_x / (rho_w H) - g d(p_b)/dx, m s-2, in the form the layout stores
                               * velocities (p_b the air pressure as a head of water, tau_x the wind stress,
                               * H the depth the point carries; built by sw_model_surface_build; 0 where
                               * H = 0); NULL unless the variant is one of the FORCED ones */
    const float *surface_y[2];/* [n_pad] the same at v points */
    const float *edge_head[2];/* [n_edge] the air pressure head (m) for each ghost of the edge list, for the
                               * two slabs: on an open edge the inner cell's (the edge radiates the
                               * departure from the inverse barometer, eta + head), on a level edge the
                               * ghost's own (the edge holds L - head, the sea beyond at its inverse
                               * barometer); stage.h sw_edge_head; NULL without surface forcing */
    double surface_w;         /* weight of the later slab at the time the step's momentum is centred on
                               * (its new elevation's), 0 .. 1: the forcing is linear in time between slabs */
} sw_terms;

#define SW_SHARE_OPEN 3    /* sw_share_code of a point in open water (f = 1) */
#define SW_SHARE_SEG 256   /* padded columns a segment of sw_terms.share_mixed_x covers */

/* The byte stored for a velocity point whose control area holds n_water (1..4) water cells of its
 * four: 3 / f = 12 / n_water (12, 6, 4, 3), exact; 0 for none. A kernel multiplies by it and by a third
 * folded into its constant (rho = (dt r / 3) code). */
static inline uint8_t sw_share_code(int n_water)
{
    return n_water > 0 && n_water <= 4 ? (uint8_t)(12 / n_water) : 0;
}

/* Short words for plans and file attributes: "none", "f-plane", "beta-plane"; "none", "linear",
 * "quadratic", "manning". */
const char *sw_rotation_name(sw_rotation_kind k);
const char *sw_friction_name(sw_friction_kind k);

/* One line naming the terms in force, e.g. "rotation f-plane (f = 1e-04 s-1); friction linear
 * (r = 0.002 m/s)" or "none", into buf (size n). For plans, JSON and the NetCDF globals. */
void sw_terms_describe(const sw_terms_config *c, char *buf, size_t n);

/* The Earth's rotation rate Omega, rad/s (sidereal day; docs/references.md). */
#define SW_EARTH_OMEGA 7.2921159e-5

/* The Coriolis parameter (s-1) at model y (m): f0, f0 + beta (y - y_ref), or on the sphere 2 Omega
 * sin(y / radius_m) (radius_m: the geographic grid's; unused otherwise); 0 without rotation. */
double sw_terms_f_at(const sw_terms_config *c, double y_m, double radius_m);

/* The largest |f| (s-1) over a domain whose rows span y0_m .. y1_m (m): |f0| on the f-plane, the larger
 * end of the beta-plane or of the sphere (radius_m as for sw_terms_f_at); 0 without rotation. */
double sw_terms_f_max(const sw_terms_config *c, double y0_m, double y1_m, double radius_m);

/* The largest stable time step (s) with rotation, from the one without, dt0_s, and the largest |f|:
 * dt0 sqrt((1 - F^2 / 4) / (1 + |F| / 2)), F = f_max dt, solved for dt. The factor bounds the Courant
 * limit of the rotating step from below on every layout (exact for A and E; docs/terms.md derives it),
 * so a step within it is stable. dt0_s itself when f_max = 0. */
double sw_terms_dt_limit(double dt0_s, double f_max_s);

/* The depth (m) below which friction is stiff, i.e. dt k / 2 > 1 with k = (r + Cd |U|) / h, so that the
 * velocity alternates in sign from step to step while its energy decays (docs/terms.md): for linear
 * friction dt r / 2; for quadratic and Manning friction with a current of |U| = 1 m/s. 0 without friction. */
double sw_terms_stiff_depth(const sw_terms_config *c, double dt_s, double gravity_ms2);

#endif
