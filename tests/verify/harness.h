/* harness.h - building, stepping and measuring models for the verification checks, on any layout.
 *
 * Everything here uses the library's public headers only (model.h, layout.h): the state is read as
 * eta at cell centres, the layout through its table (stability limit, Fourier symbols, energy). So
 * a layout added to the registry is verified without naming it.
 *
 * Fully discrete answers [derived]: forward-backward stepping (eta first, then velocities) maps a
 * Fourier mode with p^2 = -g h dt^2 (div_x grad_x + div_y grad_y) (the layout's symbols) through a
 * 2 x 2 matrix of trace 2 - p^2 and determinant 1, so its eigenvalues are exp(+-i theta) with
 * cos(theta) = 1 - p^2 / 2 (neutral while p <= 2). Started at rest at t = 0 (sw_model_create stores
 * the velocity of t = dt/2, u^{1/2} = -(g dt / 2) G eta_0, model.h) the elevation after n steps is
 *     eta_n = eta_0 cos(n theta)
 * (Chebyshev recursion on the matrix powers, M^n = (sin(n theta) M - sin((n - 1) theta) I) / sin(theta),
 * with eta_1 = eta_0 (1 - p^2 / 2) = eta_0 cos(theta)). A start with u = 0 stored instead would give
 * eta_0 cos((n - 1/2) theta) / cos(theta / 2): each mode dt/2 late and larger by 1 / cos(theta / 2).
 */
#ifndef VH_HARNESS_H
#define VH_HARNESS_H

#include <stddef.h>

#include "model/layout.h"
#include "model/model.h"
#include "base/status.h"

#define VH_G 9.81                        /* gravity used by every check, m s-2 */
#define VH_PI 3.14159265358979323846

/* A rectangular basin for a check. */
typedef struct {
    const sw_layout *layout;
    size_t nx, ny;           /* cells */
    double dx, dy;           /* cell size, m */
    double h;                /* constant depth, m, used when depth is NULL */
    const double *depth;     /* [ny * nx] depth, m, or NULL */
    const double *eta0;      /* [ny * nx] initial elevation, m, or NULL for rest */
    sw_edge_kind edges[4];   /* SW_WEST .. SW_NORTH */
    double courant_frac;     /* dt as a fraction of the layout's 2D limit (sw_model_dt_limit, dims 2) */
    int allow_unstable;      /* passed to sw_model_config */
} vh_setup;

/* The precision every model of this run is built in (verify --precision; default double). Checks
 * whose tolerance covers round-off choose it per precision with vh_tol. */
extern sw_precision vh_precision;

/* Tolerances that cover round-off, in single precision (4-byte state; unit round-off u = 2^-24 =
 * 6.0e-8). The double-precision tolerances (1e-9 .. 1e-12) stand beside each check. A step rounds
 * every value once, and a neutral scheme keeps the errors: they add up like a random walk, about
 * u sqrt(steps) relative, 2-3e-6 after the 2000-5000 steps of these checks. Measured on A-E
 * (2026-12-02): series vs the discrete solution 3.6e-7 .. 1.2e-6 of the peak; drift of volume and E*
 * over 2000-3000 steps 5e-8 .. 4.2e-7; largest one-step rise of E* at open edges 3.3e-8. Each bound
 * is 8 to 100 times the largest measured figure and far below any physical effect the checks look for. */
#define VH_SINGLE_SERIES 1e-5   /* |model - discrete solution| / peak */
#define VH_SINGLE_DRIFT 5e-6    /* relative drift of a conserved sum */
#define VH_SINGLE_RISE 1e-6     /* max E* / E*_0 - 1 with open edges */

/* tol_double in double precision, tol_single in single. */
double vh_tol(double tol_double, double tol_single);

/* Creates the model for s (min depth 1 m, g = VH_G, precision vh_precision). On failure returns the status with err set. */
sw_status vh_model(const vh_setup *s, sw_model **out, sw_error *err);

/* Which cells of s's grid hold an elevation of their own: mask[j * nx + i] = 1 where a model built
 * from s with eta_0 = 1 everywhere keeps a non-zero sw_model_eta. Every cell on most layouts; half
 * of them on a layout whose elevation points form a checkerboard (there sw_model_eta reads 0 and the
 * cell-centre value of sw_model_centre_row is an average of neighbours). Checks that compare the
 * native elevation with an exact answer read only these cells. */
sw_status vh_eta_points(const vh_setup *s, unsigned char *mask, sw_error *err);

/* Of rows j and j + 1 (or j - 1 at the top), the first whose cell in column i holds an elevation. */
size_t vh_eta_row(const unsigned char *mask, size_t nx, size_t ny, size_t i, size_t j);

/* The layout's 2D stability limit (s) on square cells of size d (m) and constant depth h (m), as
 * vh_model uses it for any grid of at least 2 x 2 cells. */
double vh_dt_limit(const sw_layout *lay, double d, double h);

/* Advances m by n steps on `threads` OpenMP threads (one parallel region around the loop). */
void vh_advance(sw_model *m, long n, int threads);

/* p^2 = (omega_h dt)^2 of the layout's gravity wave with wavenumbers (k, l) rad/m, from its symbols. */
double vh_p2(const sw_layout *lay, double k, double l, double dx, double dy, double gh, double dt);

/* theta = acos(1 - p2 / 2), the phase advance per step of a neutral mode; NaN when p2 > 4. */
double vh_theta(double p2);

/* Period (s) of the fully discrete mode with wavenumbers (k, l): 2 pi dt / theta. */
double vh_discrete_period(const sw_layout *lay, double k, double l, double dx, double dy, double gh,
                          double dt);

/* Largest |eta| over the water cells. */
double vh_max_abs_eta(const sw_model *m);

/* Following one mode shape phi [ny * nx]: the projection a(t) = <eta, phi> / <phi, phi> at every
 * step (kept for the period estimate), and how far eta strays from a(t) phi. */
typedef struct {
    const double *phi;       /* mode shape, [ny * nx] */
    double phi2;             /* <phi, phi> */
    double *a;               /* [n] projections, owned; sample q at time t0 + q dt */
    size_t n, cap;
    double t0, dt;           /* time of sample 0 and the step, s */
    double a_max;            /* largest |a| */
    double resid_max;        /* largest max_cells |eta - a phi| */
    int nomem;               /* 1 if a sample could not be stored */
} vh_mode;

/* Starts following phi on m (its present state is sample 0). */
void vh_mode_start(vh_mode *md, const sw_model *m, const double *phi);

/* Records the state after a step. */
void vh_mode_sample(vh_mode *md, const sw_model *m);

/* Period (s) from the zero crossings of a(t): 2 (t_last - t_first) / (crossings - 1); NaN with
 * fewer than 3 crossings. Each crossing is placed by fitting a sinusoid of the estimated phase
 * step theta through the two samples around it (exact for a pure mode; plain linear interpolation
 * errs at third order in theta), theta refined from the period twice. */
double vh_mode_period(const vh_mode *md);

/* Largest departure from the mode shape relative to the mode's amplitude: 0 (round-off) when phi
 * is an exact eigenvector of the layout's stepping. */
double vh_mode_impurity(const vh_mode *md);

/* Frees the stored samples. */
void vh_mode_free(vh_mode *md);

/* Time and value of the largest sample of y[i0 .. i1] (inclusive, 0 < i0 <= i1 < n - 1 for a
 * three-point fit), refined by a parabola through the highest sample and its neighbours; times t[]
 * are equally spaced. */
void vh_peak(const double *t, const double *y, size_t n, size_t i0, size_t i1, double *t_peak, double *y_peak);

/* Deterministic pseudo-random numbers in [-1, 1) (a 64-bit linear congruential generator). */
double vh_noise(unsigned long long *state);

/* Elevation of the fully discrete solution on an unbounded grid of x-waves (uniform in y) at rest at
 * t = 0 (eta_n = eta_0 cos(n theta) per mode) from the sampled pulse eta0(x_m) = exp(-(m dx / b)^2), m the cell offset from the pulse's
 * centre cell: for each of n_off offsets off[q] (cells) and steps 0 .. n_steps, into
 * out[q * (n_steps + 1) + n]. It inverts the discrete-time Fourier transform of the samples by the
 * trapezoidal rule on n_quad points of [0, pi/dx] (exact for the trigonometric polynomials involved
 * while n_quad exceeds their degree). Returns SW_ERR_NOMEM, SW_ERR_UNSTABLE if a mode is unstable. */
sw_status vh_discrete_pulse_1d(const sw_layout *lay, double dx, double dy, double gh, double dt, double b,
                               const long *off, size_t n_off, long n_steps, size_t n_quad, double *out,
                               sw_error *err);

#endif
