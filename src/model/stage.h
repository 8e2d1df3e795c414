/* stage.h - what a layout's per-row stage kernels see and declare; shared by the layouts and the stepper.
 *
 * A layout does not step the model: it gives the stepper (stepper.c) a few stage kernels, each of
 * which advances ONE padded row of the fields it writes, on a plain view of the fields (sw_view: arrays,
 * stride, constants; no sw_model). Each stage also declares which rows of each field it reads, relative
 * to its own row; from that the stepper derives the one fused sweep over memory (continuity of row j,
 * then the velocity rows it completes), the rows that must wait for a barrier at thread-block
 * boundaries, the periodic halo copies, and when a row is final so that observers can see it.
 *
 * Every field array is padded with one halo cell on each side: cell (i, j) of the grid (0-based) lives
 * at (j + 1) * stride + (i + 1); padded row j holds grid row j - 1. Stage rows are padded rows.
 *
 * Precision: this header is included by files compiled once per precision (SW_REAL_BITS, base/real.h);
 * the arrays hold sw_real there and are reached through SW_V(view, field).
 */
#ifndef SW_STAGE_H
#define SW_STAGE_H

#include <stddef.h>

#include "base/real.h"
#include "model/edges.h"
#include "model/row_values.h"
#include "model/terms.h"

enum { SW_FIELD_ETA = 0, SW_FIELD_U = 1, SW_FIELD_V = 2, SW_N_FIELDS = 3 };
#define SW_WRITES(field) (1u << (field))

/* Rows row + lo .. row + hi of one field; lo > hi means none. */
typedef struct {
    signed char lo, hi;
} sw_rows;
#define SW_ROWS(lo, hi) {(lo), (hi)}
#define SW_NO_ROWS {1, 0}

/* The fields of a model and the step's constants, as stage kernels see them. */
typedef struct sw_view {
    void *eta;            /* elevation at cell centres, m (sw_real [n_pad]) */
    void *u, *v;          /* velocities where the layout puts them, m/s */
    void *h;              /* depth at cell centres, m; 0 on land and in the halo at walls */
    void *hx, *hy;        /* depth carried by each u and v point, m; 0 = no flow there */
    size_t nx, ny;        /* grid cells */
    size_t stride;        /* values between rows */
    double dx_m, dy_m;    /* cell size, m (geographic grids: on the equator and meridian, grid.h) */
    const double *cos_c;  /* [ny + 2] the metric of padded row j's cell centres: cos(latitude) on a
                           * geographic grid, 1 on a projected one. An x-derivative at a point of that
                           * row divides by it, a y-flux through a face line is multiplied by the line's
                           * (cos_f) and the divergence divided by the row's, and sums over cells weight
                           * by it (areas): so volume is conserved to round-off on the sphere. Every
                           * factor is exactly 1 on a projected grid, which keeps those steps' bits */
    const double *cos_f;  /* [ny + 2] the same on the line between padded rows j and j + 1 (the north
                           * faces and corners of row j) */
    double g;             /* gravity, m s-2 */
    double dt_s;          /* the step being taken, s (dt, or dt/2 for the start at rest) */
    const sw_terms *terms;/* rotation and friction; never NULL (all zero without terms) */
    sw_edge_kind edges[4];/* SW_WEST .. SW_NORTH */
} sw_view;

/* Advances padded row `row` of the fields the stage writes. */
typedef void (*sw_stage_fn)(const sw_view *v, size_t row);

/* One stage of a step. Stages run in table order over each row: continuity first (writes eta from the
 * old velocities), then the momentum stages. A stage reads the fields written by earlier stages as new
 * and the others as old; it may read the field it writes only on its own row. */
typedef struct {
    sw_stage_fn run;
    unsigned writes;                 /* SW_WRITES(SW_FIELD_...) of the fields it writes */
    sw_rows reads[SW_N_FIELDS];      /* rows of eta, u, v it reads, relative to its row */
    int south_line;                  /* 1: it also computes padded row 0, the line of the south edge
                                      * (velocities on the edge), unless that edge is periodic */
} sw_stage;

/* Continuity of padded row `row` and, in the same pass over memory, the values an observer needs of
 * the finished padded row `obs_row` (sw_row_values layout: eta, u, v at the centres [nx] as floats,
 * then per segment of SW_OBS_SEG cells the highest and lowest eta and the highest u*u + v*v) into buf.
 * The values must be bit for bit those of the layout's centre_row_f32. */
typedef void (*sw_continuity_observed_fn)(const sw_view *v, size_t row, size_t obs_row, float *buf);

/* One ghost (halo) cell beyond an open or level edge. After the continuity of its inner cell's row the
 * stepper sets
 *     eta_g <- keep * eta_g + take * eta_in
 * open:  keep = 1/(1+r), take = r/(1+r): an implicit upwind step of d(eta)/dt + c d(eta)/dn = 0
 *        (unconditionally stable; r = c dt / spacing, c = sqrt(g h)), so the ghost follows the
 *        outgoing wave;
 * level: keep = 0, take = -1: eta is antisymmetric about the edge line, a node of mean level there
 *        (with a tide or surge series L(t): eta - L antisymmetric, eta_g = -eta_in + 2 L; level_gain;
 *        under air pressure L less the head beyond the edge, sw_edge_head).
 * Layouts that keep a velocity in the ghost (A, D, E) set it in their edge_velocities kernel from
 * vel * eta_g + mirror * (inner velocity): open: vel = sign sqrt(g/h), mirror = 0 (the outgoing wave's
 * velocity); level: vel = 0, mirror = 1. vel = 0 also switches off the radiation of ghosts that a layout
 * moves by a rule of its own (D, E): the model's start at rest holds every ghost still that way. */
typedef struct {
    size_t ghost;   /* padded index of the ghost (halo) cell */
    size_t inner;   /* padded index of the edge cell inside the domain */
    double keep, take;   /* ghost update coefficients, dimensionless */
    double vel;     /* s-1: ghost normal velocity per metre of ghost eta */
    double mirror;  /* dimensionless: ghost normal velocity per unit inner normal velocity */
    float level_gain; /* the ghost update adds level_gain * L, L the level the edges hold now
                       * (sw_model_set_edge_level): 1 - take on a level edge, whose ghost then mirrors
                       * eta - L (eta_g - L = take (eta_in - L)); 0 on an open edge */
    unsigned char normal_x;   /* 1 if the edge is west/east (normal along x), 0 if south/north */
    unsigned char kind;       /* sw_edge_kind of its edge: SW_EDGE_OPEN or SW_EDGE_LEVEL (a byte: the list
                               * stays 56 bytes a cell) */
} sw_edge_cell;

/* Velocities (and, for layouts that radiate them, elevations) of ghost cells q0 .. q1-1, after every
 * momentum stage of the step has finished. Under surface forcing an open edge radiates the departure
 * from the inverse barometer, eta + head (sw_edge_head): the air pressure head is taken as the inner
 * cell's on both sides of the edge face (surface.c), so a steady pressure field holds the water still
 * instead of driving it across the edge. */
typedef void (*sw_edge_fn)(const sw_view *v, const sw_edge_cell *cells, size_t q0, size_t q1);

#ifdef SW_REAL_BITS
/* The air pressure head (m) at the inner cell of edge cell q at the step's time (linear between the
 * slabs); 0 without surface forcing. */
static inline sw_real sw_edge_head(const sw_view *v, size_t q)
{
    const float *const *h = v->terms->edge_head;
    if (!h[0])
        return 0;
    const double w = v->terms->surface_w;
    return (sw_real)((1 - w) * (double)h[0][q] + w * (double)h[1][q]);
}
#endif

/* What a layout's prepare sees: the fields (h, and eta as the initial state, are set; hx and hy are 0),
 * the edges, and the ghost list the model built for open and level edges, which prepare may adjust. */
typedef struct {
    sw_view f;            /* f.edges: the edge kinds */
    sw_edge_cell *edge;   /* [n_edge] */
    size_t n_edge;
    uint8_t *share_x, *share_y;  /* [n_pad] to fill with sw_share_code of each velocity point that flows
                                  * (terms.h), on transport-weighted layouts; NULL when no term needs
                                  * them */
} sw_prep;

/* What a cell of the halo-extended grid (-1 <= i <= nx, -1 <= j <= ny) is to a stencil. */
typedef enum {
    SW_CELL_NONE = 0,   /* land, a halo cell beyond a wall, or a halo corner */
    SW_CELL_WATER = 1,  /* a water cell of the grid (beyond a periodic edge: the cell it wraps to) */
    SW_CELL_GHOST = 2   /* the ghost beside an open or level edge (it has a water cell inside) */
} sw_cell_kind;

#ifdef SW_REAL_BITS
/* A field of a view with the type of this copy of the kernels: SW_V(v, eta)[k]. */
#define SW_V(view, field) ((sw_real *)(view)->field)

/* Padded index of cell (i, j), halo included: -1 <= i <= nx, -1 <= j <= ny. */
static inline size_t sw_pad(const sw_view *v, ptrdiff_t i, ptrdiff_t j)
{
    return (size_t)(j + 1) * v->stride + (size_t)(i + 1);
}

/* What cell (i, j) of the halo-extended grid is (sw_cell_kind), with its depth in *depth_m (a ghost
 * takes the inner cell's, a wrapped cell its own; 0 for NONE). For prepare kernels. */
static inline sw_cell_kind sw_prep_cell(const sw_prep *p, ptrdiff_t i, ptrdiff_t j, double *depth_m)
{
    const ptrdiff_t nx = (ptrdiff_t)p->f.nx, ny = (ptrdiff_t)p->f.ny;
    int ghost = 0;
    *depth_m = 0;
    if (i < 0 || i >= nx) {
        const sw_edge_kind e = p->f.edges[i < 0 ? SW_WEST : SW_EAST];
        if (e == SW_EDGE_WALL)
            return SW_CELL_NONE;
        if (e == SW_EDGE_PERIODIC)
            i = i < 0 ? i + nx : i - nx;
        else
            ghost = 1, i = i < 0 ? 0 : nx - 1;
    }
    if (j < 0 || j >= ny) {
        const sw_edge_kind e = p->f.edges[j < 0 ? SW_SOUTH : SW_NORTH];
        if (e == SW_EDGE_WALL || ghost)   /* a halo corner beside a ghost is nothing */
            return SW_CELL_NONE;
        if (e == SW_EDGE_PERIODIC)
            j = j < 0 ? j + ny : j - ny;
        else
            ghost = 1, j = j < 0 ? 0 : ny - 1;
    }
    *depth_m = (double)SW_V(&p->f, h)[sw_pad(&p->f, i, j)];
    if (!(*depth_m > 0)) {
        *depth_m = 0;
        return SW_CELL_NONE;
    }
    return ghost ? SW_CELL_GHOST : SW_CELL_WATER;
}

/* The value of an unpadded centre field c ([ny * nx]) at cell (i, j) of the halo-extended grid: the
 * cell's own, the wrapped cell's across a periodic edge, the inner cell's for a ghost; 0 for NONE. */
static inline double sw_prep_centre(const sw_prep *p, const double *c, ptrdiff_t i, ptrdiff_t j)
{
    const ptrdiff_t nx = (ptrdiff_t)p->f.nx, ny = (ptrdiff_t)p->f.ny;
    double d;
    if (sw_prep_cell(p, i, j, &d) == SW_CELL_NONE)
        return 0;
    i = i < 0 ? (p->f.edges[SW_WEST] == SW_EDGE_PERIODIC ? i + nx : 0) : i >= nx ? (p->f.edges[SW_EAST] == SW_EDGE_PERIODIC ? i - nx : nx - 1) : i;
    j = j < 0 ? (p->f.edges[SW_SOUTH] == SW_EDGE_PERIODIC ? j + ny : 0) : j >= ny ? (p->f.edges[SW_NORTH] == SW_EDGE_PERIODIC ? j - ny : ny - 1) : j;
    return c[(size_t)j * p->f.nx + (size_t)i];
}

/* The mean of centre field c over those of the n cells (ij[2q], ij[2q + 1]) that are water or ghosts
 * (0 when none is), their count in *n_water. */
static inline double sw_prep_mean(const sw_prep *p, const double *c, const ptrdiff_t *ij, int n, int *n_water)
{
    double sum = 0, d;
    int w = 0;
    for (int q = 0; q < n; q++)
        if (sw_prep_cell(p, ij[2 * q], ij[2 * q + 1], &d) != SW_CELL_NONE) {
            sum += sw_prep_centre(p, c, ij[2 * q], ij[2 * q + 1]);
            w++;
        }
    *n_water = w;
    return w == 0 ? 0 : sum / w;
}

/* 1 when cell (i, j) is water a stencil may use (a water cell, wrapped or not, or a ghost). */
static inline int sw_prep_water(const sw_prep *p, ptrdiff_t i, ptrdiff_t j, double *depth_m)
{
    return sw_prep_cell(p, i, j, depth_m) != SW_CELL_NONE;
}

/* The arrays and constants of one row kernel, unpacked from a view: what a layout's per-cell formulas
 * (below) read. Local to a kernel call, so the compiler keeps its members in registers. */
typedef struct {
    sw_real *eta;
    const sw_real *u, *v, *h, *hx, *hy;
    size_t s;             /* stride */
    sw_real cx, cy;       /* the layout's continuity coefficients (dt / dx times its stencil weight), for
                           * the row at hand: divided by its metric (sw_view.cos_c) */
    sw_real wn, ws;       /* the metric of the row's north and south face lines (sw_view.cos_f), which
                           * multiply the y-fluxes through them; 1 on a projected grid */
} sw_cells;

/* A layout's per-cell formulas, for sw_continuity_observed_loop: the new elevation of padded cell k, and
 * the float centre values of padded cell k (grid column i, grid row j). Written `static inline` with
 * always_inline so that the loop below is compiled with them in place. */
typedef sw_real (*sw_eta_cell_fn)(const sw_cells *c, size_t k);
typedef void (*sw_centre_cell_fn)(const sw_cells *c, size_t k, size_t i, size_t j, float *e, float *u, float *v);

#define SW_INLINE static inline __attribute__((always_inline))

/* The body every layout's continuity_observed shares (A and E through sw_colocated_observed_loop):
 * continuity of the row starting at padded index k0, and in the same pass over memory the float centre
 * values of grid row jf (padded index f0 of its first cell) into buf (row_values.h), segment by segment:
 * the segment's continuity, then its centre values with their extremes reduced in the loop that makes
 * them (sw_row_extremes' comparisons, so the same values), while the segment is in L1. Two loops a
 * segment, not one: with the continuity's arrays and the centre row's in one loop the compiler runs out
 * of registers and reloads addresses every iteration (measured on A: the step with an observer 1.4 x
 * the plain step in one loop, 1.2 x in two). The rows the centre values read are final before the call
 * (stepper.c: the observed row lags the continuity row by more than the layout's stencil reaches), so
 * continuity, which writes only row k0's eta, changes none of them: the bits are those of one loop. */
SW_INLINE void sw_continuity_observed_loop(const sw_cells *c, size_t k0, size_t f0, size_t jf, size_t nx,
                                           float *restrict buf, sw_eta_cell_fn eta_new, sw_centre_cell_fn centre)
{
    const size_t n_seg = (nx + SW_OBS_SEG - 1) / SW_OBS_SEG;
    float *restrict oe = buf, *restrict os2 = buf + nx;
    float *restrict hi = buf + 2 * nx, *restrict lo = hi + n_seg, *restrict speed2 = lo + n_seg;
    sw_real *restrict eta = c->eta;
    for (size_t q = 0; q < n_seg; q++) {
        const size_t a = q * SW_OBS_SEG, b = a + SW_OBS_SEG < nx ? a + SW_OBS_SEG : nx;
        float top_e = -INFINITY, bottom_e = INFINITY, top_s2 = 0;
#ifdef _OPENMP
#pragma omp simd
#endif
        for (size_t i = a; i < b; i++)
            eta[k0 + i] = eta_new(c, k0 + i);
#ifdef _OPENMP
#pragma omp simd reduction(max : top_e, top_s2) reduction(min : bottom_e)
#endif
        for (size_t i = a; i < b; i++) {
            float e, uc, vc;
            centre(c, f0 + i, i, jf, &e, &uc, &vc);
            const float s2 = sw_speed2(uc, vc);
            oe[i] = e;
            os2[i] = s2;
            top_e = e > top_e ? e : top_e;   /* not fmaxf: a libm call per cell */
            bottom_e = e < bottom_e ? e : bottom_e;
            top_s2 = s2 > top_s2 ? s2 : top_s2;
        }
        hi[q] = top_e;
        lo[q] = bottom_e;
        speed2[q] = top_s2;
    }
}

/* The first padded row (column) of velocities that are the grid's own along y (x): 1 beyond a periodic
 * edge, whose row 0 (column 0) is a copy of the opposite side, else 0. For sums over velocity points. */
static inline size_t sw_first_row(const sw_view *v) { return v->edges[SW_SOUTH] == SW_EDGE_PERIODIC; }
static inline size_t sw_first_col(const sw_view *v) { return v->edges[SW_WEST] == SW_EDGE_PERIODIC; }

/* One velocity point's momentum update with rotation and friction (terms.h, docs/terms.md): from the
 * old value vel, the depth it carries H (m; 0 holds it at 0), the pressure-gradient increment
 * dvel_gravity (m/s, -g dt d(eta)/dn), the rotation term rot = 2 dt (K w) (m2/s: the other component
 * w averaged onto the point with the energy-neutral weights K) and rho = dt (r + Cd |U|) (m), friction
 * centred in time:
 *     vel' = (vel (2H - rho) + 2H dvel_gravity + rot) / (2H + rho).
 * Without friction this is vel + dvel_gravity + rot / (2H); friction multiplies the old velocity by
 * (1 - a) / (1 + a) and the increments by 1 / (1 + a), a = rho / (2H). */
SW_INLINE sw_real sw_terms_update(sw_real vel, sw_real H, sw_real dvel_gravity, sw_real rot, sw_real rho)
{
    return H > 0 ? (vel * (2 * H - rho) + 2 * H * dvel_gravity + rot) / (2 * H + rho) : 0;
}

/* The span of a row's velocity points from a to the end of the run of segments of
 * sw_terms.share_mixed_x (terms.h) that have a's flag: for padded row j (first padded index r = j stride),
 * with the flag rows mx and my of j (a point reads the bytes when either says so; pass one row twice for
 * one flag), sets *b to the last point of the run (at most last) and returns the flag, 1 when the kernel
 * must read the share bytes there. A run, not a segment: a kernel's loop starts (and ends) once a run,
 * so a row of open water between two coasts is three loops. A kernel walks its points so:
 *     for (size_t a = first, b; a <= last; a = b + 1)
 *         if (sw_share_span(mx, my, r, a, last, &b)) (read the bytes) else (use SW_SHARE_OPEN) */
SW_INLINE int sw_share_span(const uint8_t *mx, const uint8_t *my, size_t r, size_t a, size_t last, size_t *b)
{
    size_t q = (a - r) / SW_SHARE_SEG, e = r + (q + 1) * SW_SHARE_SEG - 1;
    const int flag = mx[q] | my[q];
    while (e < last && (mx[q + 1] | my[q + 1]) == flag) {   /* e < last: segment q + 1 is in the row */
        q++;
        e += SW_SHARE_SEG;
    }
    *b = e < last ? e : last;
    return flag;
}

/* The velocity increment of surface forcing at point i over a step: dt (a0 + w (a1 - a0)) with the
 * slabs' accelerations a0, a1 (sw_terms.surface_x or _y, m s-2), c0 = dt (1 - w) and c1 = dt w (s). A
 * kernel adds it to its pressure-gradient increment (sw_terms_update's dvel_gravity), so friction damps
 * it like the other increments. */
SW_INLINE sw_real sw_surface_dvel(const float *restrict a0, const float *restrict a1, size_t i, sw_real c0, sw_real c1)
{
    return c0 * (sw_real)a0[i] + c1 * (sw_real)a1[i];
}

/* Continuity alone on the row starting at padded index k0, with the same per-cell formula. */
SW_INLINE void sw_continuity_loop(const sw_cells *c, size_t k0, size_t nx, sw_eta_cell_fn eta_new)
{
    sw_real *restrict eta = c->eta;
#ifdef _OPENMP
#pragma omp simd
#endif
    for (size_t i = k0; i < k0 + nx; i++)
        eta[i] = eta_new(c, i);
}

/* The centre values of grid row j into e, u, v with the same per-cell formula. */
SW_INLINE void sw_centre_loop(const sw_cells *c, size_t j, size_t nx, float *restrict e, float *restrict u,
                              float *restrict v, sw_centre_cell_fn centre)
{
    const size_t f0 = (j + 1) * c->s + 1;
#ifdef _OPENMP
#pragma omp simd
#endif
    for (size_t i = 0; i < nx; i++)
        centre(c, f0 + i, i, j, &e[i], &u[i], &v[i]);
}
#endif

#endif
