/* stability.h - von Neumann analysis of forward-backward stepping, one Fourier mode at a time, for
 * every layout in the registry, built only from the layout's operator symbols (sw_layout.symbols).
 *
 * Everything here is dimensionless, on square cells (dx = dy): the Courant number c = sqrt(g h) dt / dx,
 * the rotation f dt (rad per step), and wavenumbers as k dx, l dy (rad per cell, in [-pi, pi]).
 * With velocities scaled by sqrt(h / g), one step of the model maps the amplitudes (eta, u, v) of the
 * mode exp(i (k x + l y)) by a 3 x 3 complex matrix M:
 *     eta' = eta - c (Dx u + Dy v)
 *     u'   = u - c Gx eta' + f dt Vu v            (rotation: u from the old v,
 *     v'   = v - c Gy eta' - f dt Uv u'            then v from the new u; docs/terms.md)
 * with Dx, Dy, Gx, Gy the layout's divergence and gradient symbols times dx, and Vu, Uv its v-to-u and
 * u-to-v averaging symbols. Its eigenvalues lambda are the amplification factors of the mode; the step
 * is stable for the mode when every |lambda| <= 1. docs/stability.md has the derivation and the reading.
 *
 * This is the step the model takes (docs/terms.md): the analysis and the runs agree (test_stability.c).
 * Friction (centred in time) only takes energy out of this step, so it is left out here.
 * Nothing here prints; sw_stab_write_planes is the only function that touches files.
 */
#ifndef SW_STABILITY_H
#define SW_STABILITY_H

#include <complex.h>
#include <stddef.h>

#include "model/layout.h"
#include "base/status.h"

/* The wavelengths of the table, in cells: 2, 3, 4, 6, 8, 12, 16, 32. */
#define SW_STAB_N_WAVELENGTHS 8
extern const double sw_stab_wavelengths[SW_STAB_N_WAVELENGTHS];

/* Tolerance of "stable": a mode grows when max |lambda| > 1 + SW_STAB_GROWTH_TOL. */
#define SW_STAB_GROWTH_TOL 1e-12

/* Intervals per 2 pi of the scan's wavenumber grid (k dx and l dy step 2 pi / SW_STAB_SCAN_INTERVALS);
 * the grid holds 0, +-pi/2 and +-pi, and the scan then refines around the first mode to grow. */
#define SW_STAB_SCAN_INTERVALS 128

/* One Fourier mode after one step. */
typedef struct {
    double kdx, ldy;            /* wavenumber times cell size along x and y, rad */
    double complex lambda[3];   /* the eigenvalues of the one-step matrix M, no particular order */
    double amp;                 /* max |lambda|, dimensionless: > 1 + SW_STAB_GROWTH_TOL means growth */
    double omega_dt;            /* numerical frequency of the fastest mode (the gravity, or at k = 0 the
                                   inertial, mode) times dt: max |arg lambda|, rad per step, in [0, pi] */
    double exact_dt;            /* exact continuous frequency times dt, sqrt((f dt)^2 + c^2 (K dx)^2), rad,
                                   K = |(k, l)|; the exact phase speed is sqrt(g h + f^2 / K^2) */
    double speed_ratio;         /* omega_dt / exact_dt: numerical over exact phase speed (and frequency),
                                   dimensionless; NaN when exact_dt = 0 (k = l = 0 without rotation) */
} sw_stab_mode;

/* A stability limit found by scanning the wavenumbers. */
typedef struct {
    double courant;         /* largest c with max |lambda| <= 1 + SW_STAB_GROWTH_TOL over the scanned
                               wavenumbers, to a relative 1e-14; 0 if even c = 0 grows */
    double kdx, ldy;        /* the mode that grows first beyond it, rad (ldy = 0 in 1D; of the pair
                               (k, l), (-k, -l) the one with ldy >= 0) */
    size_t modes;           /* modes analysed, for the curious */
} sw_stab_limit;

/* One row of the wavelength table: the wave of `wavelength` cells measured along its direction of
 * travel, travelling along x (l = 0) and along the diagonal (k dx = l dy = 2 pi / (n sqrt 2)). */
typedef struct {
    double wavelength;      /* cells */
    sw_stab_mode axis;      /* along x */
    sw_stab_mode diagonal;  /* at 45 degrees */
} sw_stab_row;

/* Roots z[0..2] of z^3 + b z^2 + c z + d = 0, complex coefficients, repeated roots repeated.
 * Method: Cardano's formula on the depressed cubic (the cube root taken from the larger of the two
 * candidates so that nothing cancels) for the root of largest modulus; the other two from Vieta,
 * z1 + z2 = -b - z0 and z1 z2 = -d / z0, by the quadratic formula in its cancellation-free form; every
 * root then gets up to four Newton steps, each kept only when it lowers |p(z)| and moves the root by
 * less than half its distance to the nearest other root. Simple roots come out to a few ulps of their
 * own size; a double root to about sqrt(ulp), as for any method working from the coefficients. */
void sw_stab_cubic_roots(double complex b, double complex c, double complex d, double complex z[3]);

/* The one-step matrix minus the identity, N = M - I, of the mode (kdx, ldy) of layout `lay` at Courant
 * number `courant` and rotation `f_dt` (see the top of this file; rows and columns eta, u, v, velocities
 * scaled by sqrt(h / g)). N, not M, because near k = 0 all three eigenvalues crowd around 1: those of N
 * crowd around 0 and keep their relative accuracy. */
void sw_stab_step_matrix(const sw_layout *lay, double kdx, double ldy, double courant, double f_dt,
                         double complex n[3][3]);

/* Analyses one mode: the eigenvalues of M (1 + the roots of the characteristic polynomial of N, by
 * sw_stab_cubic_roots), their largest modulus, the numerical and exact frequencies. Needs a layout; the
 * numbers may be anything finite (NaN in gives NaN out). */
void sw_stab_mode_eval(const sw_layout *lay, double kdx, double ldy, double courant, double f_dt,
                       sw_stab_mode *out);

/* The closed-form Courant limit of a layout: 2 / max_frequency (forward-backward is neutral exactly
 * while the highest semi-discrete frequency times dt is <= 2), on square cells, in a channel (dims = 1,
 * x-waves only) or the plane (dims = 2). Returns NaN for other dims or a NULL layout. */
double sw_stab_limit_closed(const sw_layout *lay, int dims);

/* The Courant limit found numerically: bisection on c for max |lambda| <= 1 + SW_STAB_GROWTH_TOL over the
 * wavenumber grid (1D: l = 0, k dx in [-pi, pi]; 2D: k dx in [-pi, pi], l dy in [0, pi], which covers the
 * plane because the stencils are real: the mode (-k, -l) has the conjugate matrix), then four rounds of
 * an 8-times finer grid around the mode that grows first. With rotation (f_dt != 0) it is the limit of
 * the rotating step. Returns SW_OK; SW_ERR_USAGE for a NULL layout or out, dims not 1 or 2, or a
 * non-finite f_dt; SW_ERR_RANGE when no mode grows up to c = 1e6; SW_ERR_NOMEM. */
sw_status sw_stab_limit_scan(const sw_layout *lay, double f_dt, int dims, sw_stab_limit *out, sw_error *err);

/* The wavelength table (sw_stab_wavelengths) at Courant number `courant` and rotation `f_dt`. */
void sw_stab_table(const sw_layout *lay, double courant, double f_dt, sw_stab_row rows[SW_STAB_N_WAVELENGTHS]);

/* One layout's plane for sw_stab_write_planes. */
typedef struct {
    const sw_layout *layout;
    double courant;   /* the Courant number the plane is analysed at */
} sw_stab_plane;

/* Writes amplification = max |lambda| and phase_speed_ratio over the plane k dx, l dy in [-pi, pi]
 * (n_k points along each, n_k >= 3) for each of the n_planes layouts, with f_dt, as a CF-style NetCDF-4
 * file: dimensions (layout, ky, kx), coordinate variables kx, ky in radians, variables layout_name,
 * courant, courant_limit_1d and courant_limit_2d (closed form) per layout, global attributes courant
 * (one value per layout), f_dt, history (may be NULL) and a comment explaining the fields.
 * The file is written as "<path>.part" and renamed to `path` only when complete; on failure no .part is
 * left and an existing `path` is untouched. Returns SW_OK, SW_ERR_USAGE (no path, no planes, a NULL
 * layout, n_k < 3), SW_ERR_NOMEM, SW_ERR_IO or SW_ERR_NETCDF, naming the path. */
sw_status sw_stab_write_planes(const char *path, const sw_stab_plane *planes, size_t n_planes, double f_dt,
                               size_t n_k, const char *history, sw_error *err);

#endif
