/* stability.c - von Neumann analysis of forward-backward stepping per layout (see stability.h).
 *
 * Invariant: the analysis knows a layout only through its table (symbols and max_frequency), so a
 * layout added to the registry is analysed without a line changed here.
 *
 * Why the eigenvalues are taken from N = M - I: without rotation and near k = 0 the three eigenvalues
 * of M are 1 and e^(+-i p) with p small; the characteristic polynomial of M then has a near-triple root
 * and loses about two thirds of the digits (an error of ulp / p^2 in |lambda|). The eigenvalues of N are
 * 0 and e^(+-i p) - 1, all of size p, so they keep their relative accuracy, and |1 + mu| is exact to a
 * few ulps. This is what lets the scan demand |lambda| <= 1 + 1e-12.
 */
#include "studies/stability.h"

#include <float.h>
#include <math.h>
#include <netcdf.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#ifndef CMPLX   /* C11 7.3.9.3; glibc defines it for gcc only: clang builds (tools/fuzz) take the builtin */
#define CMPLX(x, y) __builtin_complex((double)(x), (double)(y))
#endif

#include "base/atomic_file.h"

#define STAB_PI 3.14159265358979323846
#define STAB_MAX_COURANT 1e6        /* the scan gives up beyond this Courant number */
#define STAB_ZOOM_ROUNDS 4          /* refinements of the scan grid around the critical mode */
#define STAB_ZOOM_HALF 8            /* a refinement grid has 2 * 8 + 1 points along each axis */
#define STAB_BISECT_REL 1e-14       /* relative width at which the bisection stops */
#define STAB_NAME_LEN 8             /* length of the layout-name character dimension */

const double sw_stab_wavelengths[SW_STAB_N_WAVELENGTHS] = {2, 3, 4, 6, 8, 12, 16, 32};

/* ---- the cubic ---------------------------------------------------------------------------- */

static double complex cubic_at(double complex b, double complex c, double complex d, double complex z)
{
    return ((z + b) * z + c) * z + d;
}

/* Up to four guarded Newton steps on root z (see stability.h); `dist` is the distance to the nearest
 * other root. */
static double complex cubic_polish(double complex b, double complex c, double complex d, double complex z,
                                   double dist)
{
    for (int it = 0; it < 4; it++) {
        double complex f = cubic_at(b, c, d, z);
        double complex fp = (3 * z + 2 * b) * z + c;
        if (f == 0 || fp == 0)
            break;
        double complex step = f / fp;
        if (!(cabs(step) < 0.5 * dist))
            break;
        double complex zn = z - step;
        if (!(cabs(cubic_at(b, c, d, zn)) < cabs(f)))
            break;
        z = zn;
    }
    return z;
}

/* Distance from z[k] to the nearest of the other two. */
static double nearest_other(const double complex z[3], int k)
{
    double dist = DBL_MAX;
    for (int j = 0; j < 3; j++)
        if (j != k && cabs(z[k] - z[j]) < dist)
            dist = cabs(z[k] - z[j]);
    return dist;
}

void sw_stab_cubic_roots(double complex b, double complex c, double complex d, double complex z[3])
{
    /* z = y - s turns the cubic into y^3 + p y + q = 0 */
    const double complex s = b / 3;
    const double complex p = c - 3 * s * s;
    const double complex q = (2 * s * s - c) * s + d;
    const double complex root = csqrt(q * q / 4 + p * p * p / 27);
    double complex u3 = -q / 2 + root;
    if (cabs(-q / 2 - root) > cabs(u3))
        u3 = -q / 2 - root;   /* the larger candidate: no cancellation in u^3 */
    double complex y[3] = {0, 0, 0};
    if (u3 != 0) {
        /* y = u + v with u^3 = u3 and u v = -p / 3; the other roots rotate u and v by the cube roots of 1 */
        double r = cbrt(cabs(u3)), t = carg(u3) / 3;
        double complex u = CMPLX(r * cos(t), r * sin(t));
        double complex v = -p / (3 * u);
        const double complex w = CMPLX(-0.5, 0.86602540378443864676);   /* e^(2 pi i / 3) */
        y[0] = u + v;
        y[1] = u * w + v * conj(w);
        y[2] = u * conj(w) + v * w;
    }                                  /* else p = q = 0: a triple root y = 0 */
    for (int k = 0; k < 3; k++)
        z[k] = y[k] - s;

    /* Cardano gives the largest root to a few ulps but the small ones only to ulps of the largest:
     * keep the largest, polished, and take the other two from z1 + z2 = -b - z0, z1 z2 = -d / z0 */
    int big = 0;
    for (int k = 1; k < 3; k++)
        if (cabs(z[k]) > cabs(z[big]))
            big = k;
    double complex z0 = cubic_polish(b, c, d, z[big], nearest_other(z, big));
    if (z0 == 0) {
        z[0] = z[1] = z[2] = 0;   /* the largest root is 0: all are */
        return;
    }
    const double complex sum = -b - z0, prod = -d / z0;
    double complex disc = csqrt(sum * sum - 4 * prod);
    if (creal(conj(sum) * disc) < 0)
        disc = -disc;              /* add, never subtract, nearly equal numbers */
    double complex z1 = 0.5 * (sum + disc);
    double complex z2 = z1 != 0 ? prod / z1 : 0;
    z[0] = z0;
    z[1] = z1;
    z[2] = z2;
    double d1 = nearest_other(z, 1), d2 = nearest_other(z, 2);
    z[1] = cubic_polish(b, c, d, z1, d1);
    z[2] = cubic_polish(b, c, d, z2, d2);
}

/* ---- one mode ------------------------------------------------------------------------------ */

/* N = M - I from the symbols of a mode (taken with dx = dy = 1), for the step of docs/terms.md:
 *     eta' = eta - c (Dx u + Dy v),   u' = u - c Gx eta' + F Vu v,   v' = v - c Gy eta' - F Uv u'
 * (F = f dt; u from the old v, then v from the new u). With eta' = eta + N0 x and u' = u + N1 x the rows
 * are N0 = (0, -c Dx, -c Dy), N1 = (-c Gx, c^2 Gx Dx, c^2 Gx Dy + F Vu) and
 * N2 = (-c Gy, c^2 Gy Dx, c^2 Gy Dy) - F Uv (e_u + N1). */
static void step_matrix(const sw_symbols *sy, double courant, double f_dt, double complex n[3][3])
{
    const double complex dx = sy->div_x, dy = sy->div_y, gx = sy->grad_x, gy = sy->grad_y;
    const double complex vu = sy->v_at_u, uv = sy->u_at_v;
    const double c = courant, F = f_dt;

    n[0][0] = 0;
    n[0][1] = -c * dx;
    n[0][2] = -c * dy;
    n[1][0] = -c * gx;
    n[1][1] = c * c * gx * dx;
    n[1][2] = c * c * gx * dy + F * vu;
    n[2][0] = -c * gy - F * uv * n[1][0];
    n[2][1] = c * c * gy * dx - F * uv * (1 + n[1][1]);
    n[2][2] = c * c * gy * dy - F * uv * n[1][2];
}

void sw_stab_step_matrix(const sw_layout *lay, double kdx, double ldy, double courant, double f_dt,
                         double complex n[3][3])
{
    sw_symbols sy;
    lay->symbols(kdx, ldy, 1.0, 1.0, &sy);
    step_matrix(&sy, courant, f_dt, n);
}

/* The eigenvalues of M = I + N: 1 + the roots of det(mu I - N) = mu^3 - t mu^2 + s mu - det N. */
static void eigenvalues(double complex n[3][3], double complex lambda[3])
{
    const double complex t = n[0][0] + n[1][1] + n[2][2];
    const double complex s = (n[0][0] * n[1][1] - n[0][1] * n[1][0]) + (n[0][0] * n[2][2] - n[0][2] * n[2][0])
                           + (n[1][1] * n[2][2] - n[1][2] * n[2][1]);
    const double complex det = n[0][0] * (n[1][1] * n[2][2] - n[1][2] * n[2][1])
                             - n[0][1] * (n[1][0] * n[2][2] - n[1][2] * n[2][0])
                             + n[0][2] * (n[1][0] * n[2][1] - n[1][1] * n[2][0]);
    double complex mu[3];
    sw_stab_cubic_roots(-t, s, -det, mu);
    for (int k = 0; k < 3; k++)
        lambda[k] = 1 + mu[k];
}

/* Largest |lambda| of a mode; the cheap path of the scan. */
static double mode_amp(const sw_symbols *sy, double courant, double f_dt)
{
    double complex n[3][3], lambda[3];
    step_matrix(sy, courant, f_dt, n);
    eigenvalues(n, lambda);
    double amp = cabs(lambda[0]);
    for (int k = 1; k < 3; k++)
        if (cabs(lambda[k]) > amp)
            amp = cabs(lambda[k]);
    return amp;
}

static void mode_eval(const sw_symbols *sy, double kdx, double ldy, double courant, double f_dt,
                      sw_stab_mode *out)
{
    double complex n[3][3];
    step_matrix(sy, courant, f_dt, n);
    eigenvalues(n, out->lambda);
    out->kdx = kdx;
    out->ldy = ldy;
    out->amp = 0;
    out->omega_dt = 0;
    for (int k = 0; k < 3; k++) {
        double m = cabs(out->lambda[k]), w = fabs(carg(out->lambda[k]));
        if (m > out->amp || isnan(m))
            out->amp = m;
        if (w > out->omega_dt || isnan(w))
            out->omega_dt = w;
    }
    out->exact_dt = sqrt(f_dt * f_dt + courant * courant * (kdx * kdx + ldy * ldy));
    out->speed_ratio = out->exact_dt > 0 ? out->omega_dt / out->exact_dt : NAN;
}

void sw_stab_mode_eval(const sw_layout *lay, double kdx, double ldy, double courant, double f_dt,
                       sw_stab_mode *out)
{
    sw_symbols sy;
    lay->symbols(kdx, ldy, 1.0, 1.0, &sy);
    mode_eval(&sy, kdx, ldy, courant, f_dt, out);
}

void sw_stab_table(const sw_layout *lay, double courant, double f_dt, sw_stab_row rows[SW_STAB_N_WAVELENGTHS])
{
    for (size_t q = 0; q < SW_STAB_N_WAVELENGTHS; q++) {
        double n = sw_stab_wavelengths[q];
        double kd = 2 * STAB_PI / n, kdiag = kd / sqrt(2.0);
        rows[q].wavelength = n;
        sw_stab_mode_eval(lay, kd, 0, courant, f_dt, &rows[q].axis);
        sw_stab_mode_eval(lay, kdiag, kdiag, courant, f_dt, &rows[q].diagonal);
    }
}

/* ---- limits -------------------------------------------------------------------------------- */

double sw_stab_limit_closed(const sw_layout *lay, int dims)
{
    if (!lay || (dims != 1 && dims != 2))
        return NAN;
    /* with g h = 1, dx = dy = 1 and dt = 1 the Courant number is dt itself */
    return 2.0 / lay->max_frequency(1.0, 1.0, 1.0, dims);
}

/* A set of modes with their symbols, scanned together. */
typedef struct {
    size_t n;            /* modes */
    double *kdx, *ldy;   /* [n], rad */
    sw_symbols *sym;     /* [n] */
    size_t hint;         /* the mode that grew last: tried first */
    size_t *count;       /* modes analysed, accumulated */
} mode_set;

/* 1 when some mode of the set grows at Courant number c. */
static int set_grows(mode_set *ms, double c, double f_dt)
{
    *ms->count += 1;
    if (mode_amp(&ms->sym[ms->hint], c, f_dt) > 1 + SW_STAB_GROWTH_TOL)
        return 1;
    for (size_t q = 0; q < ms->n; q++)
        if (mode_amp(&ms->sym[q], c, f_dt) > 1 + SW_STAB_GROWTH_TOL) {
            *ms->count += q + 1;
            ms->hint = q;
            return 1;
        }
    *ms->count += ms->n;
    return 0;
}

/* The mode of the set with the largest |lambda| at c; among equals the last (largest l, then k). */
static size_t set_argmax(mode_set *ms, double c, double f_dt)
{
    size_t best = 0;
    double best_amp = -1;
    for (size_t q = 0; q < ms->n; q++) {
        double amp = mode_amp(&ms->sym[q], c, f_dt);
        if (amp >= best_amp) {
            best_amp = amp;
            best = q;
        }
    }
    *ms->count += ms->n;
    return best;
}

/* Bisection for the largest stable c in [lo, hi], knowing the set is stable at lo and grows at hi.
 * Returns lo at the end and leaves *hi_out the smallest c found to grow. */
static double bisect(mode_set *ms, double lo, double hi, double f_dt, double *hi_out)
{
    for (int it = 0; it < 200 && hi - lo > STAB_BISECT_REL * hi; it++) {
        double mid = 0.5 * (lo + hi);
        if (set_grows(ms, mid, f_dt))
            hi = mid;
        else
            lo = mid;
    }
    *hi_out = hi;
    return lo;
}

/* Fills a set with the grid kdx in [k0 - half*h, k0 + half*h] (clamped to [-pi, pi]) and likewise ldy
 * (a single ldy = 0 when dims = 1; ldy clamped below at ldy_min). Returns the modes filled. */
static size_t fill_grid(const sw_layout *lay, mode_set *ms, int dims, double k0, double l0, double h,
                        size_t half_k, size_t half_l, double ldy_min)
{
    size_t n = 0;
    const size_t nl = dims == 2 ? 2 * half_l + 1 : 1;
    for (size_t jl = 0; jl < nl; jl++) {
        double l = dims == 2 ? l0 + ((double)jl - (double)half_l) * h : 0.0;
        if (l < ldy_min - 1e-15 || l > STAB_PI + 1e-15)
            continue;
        for (size_t ik = 0; ik <= 2 * half_k; ik++) {
            double k = k0 + ((double)ik - (double)half_k) * h;
            if (k < -STAB_PI - 1e-15 || k > STAB_PI + 1e-15)
                continue;
            ms->kdx[n] = k;
            ms->ldy[n] = l;
            lay->symbols(k, l, 1.0, 1.0, &ms->sym[n]);
            n++;
        }
    }
    ms->n = n;
    ms->hint = 0;
    return n;
}

static void set_free(mode_set *ms)
{
    free(ms->kdx);
    free(ms->ldy);
    free(ms->sym);
}

static int set_alloc(mode_set *ms, size_t cap, size_t *count)
{
    memset(ms, 0, sizeof *ms);
    ms->kdx = malloc(cap * sizeof *ms->kdx);
    ms->ldy = malloc(cap * sizeof *ms->ldy);
    ms->sym = malloc(cap * sizeof *ms->sym);
    ms->count = count;
    if (!ms->kdx || !ms->ldy || !ms->sym) {
        set_free(ms);
        return 0;
    }
    return 1;
}

/* Of (k, l) and (-k, -l), the one with l > 0, or k >= 0 when l = 0. */
static void canonical(double *k, double *l)
{
    if (*l < 0 || (*l == 0 && *k < 0)) {
        *k = -*k;
        *l = -*l;
    }
    if (*l == 0)
        *l = 0.0;   /* no -0 */
}

sw_status sw_stab_limit_scan(const sw_layout *lay, double f_dt, int dims, sw_stab_limit *out, sw_error *err)
{
    if (!lay || !out)
        return sw_fail(err, SW_ERR_USAGE, "stability scan: no layout or no result given");
    if (dims != 1 && dims != 2)
        return sw_fail(err, SW_ERR_USAGE, "stability scan: dims = %d (accepted: 1 or 2)", dims);
    if (!isfinite(f_dt))
        return sw_fail(err, SW_ERR_USAGE, "stability scan: f dt = %g is not a finite number", f_dt);
    memset(out, 0, sizeof *out);

    const size_t half = SW_STAB_SCAN_INTERVALS / 2;   /* grid points on each side of 0 */
    const double h = 2 * STAB_PI / SW_STAB_SCAN_INTERVALS;
    const size_t cap_grid = (2 * half + 1) * (dims == 2 ? half + 1 : 1);
    const size_t cap_zoom = (2 * STAB_ZOOM_HALF + 1) * (dims == 2 ? 2 * STAB_ZOOM_HALF + 1 : 1);
    mode_set grid, zoom;
    if (!set_alloc(&grid, cap_grid, &out->modes))
        return sw_fail(err, SW_ERR_NOMEM, "stability scan: out of memory for %zu modes", cap_grid);
    if (!set_alloc(&zoom, cap_zoom, &out->modes)) {
        set_free(&grid);
        return sw_fail(err, SW_ERR_NOMEM, "stability scan: out of memory for %zu modes", cap_zoom);
    }
    /* the grid: k dx in [-pi, pi], l dy in [0, pi] (the other half plane holds the conjugates) */
    fill_grid(lay, &grid, dims, 0.0, 0.5 * STAB_PI, h, half, half / 2, 0.0);

    sw_status rc = SW_OK;
    size_t crit = 0;
    if (set_grows(&grid, 0.0, f_dt)) {
        /* even without gravity waves some mode grows: the limit is 0 */
        crit = set_argmax(&grid, 0.0, f_dt);
        out->courant = 0;
        out->kdx = grid.kdx[crit];
        out->ldy = grid.ldy[crit];
        canonical(&out->kdx, &out->ldy);
        goto done;
    }
    double hi = 1.0;
    while (!set_grows(&grid, hi, f_dt)) {
        if (hi >= STAB_MAX_COURANT) {
            rc = sw_fail(err, SW_ERR_RANGE,
                         "stability scan: layout %s shows no growing mode up to Courant number %g",
                         lay->name, STAB_MAX_COURANT);
            goto done;
        }
        hi *= 2;
    }
    double c_hi;
    double c = bisect(&grid, 0.0, hi, f_dt, &c_hi);
    crit = set_argmax(&grid, c_hi, f_dt);
    double k0 = grid.kdx[crit], l0 = grid.ldy[crit];

    /* refine around the critical mode: a maximum between grid points lowers the limit */
    double step = h;
    for (int round = 0; round < STAB_ZOOM_ROUNDS; round++) {
        step /= STAB_ZOOM_HALF;   /* 8 times finer: the 17 x 17 points cover +-1 old step */
        fill_grid(lay, &zoom, dims, k0, l0, step, STAB_ZOOM_HALF, STAB_ZOOM_HALF, -STAB_PI);
        if (zoom.n == 0 || !set_grows(&zoom, c, f_dt))
            continue;
        double z_hi;
        c = bisect(&zoom, 0.0, c, f_dt, &z_hi);
        size_t zc = set_argmax(&zoom, z_hi, f_dt);
        k0 = zoom.kdx[zc];
        l0 = zoom.ldy[zc];
    }
    out->courant = c;
    out->kdx = k0;
    out->ldy = l0;
    canonical(&out->kdx, &out->ldy);
done:
    set_free(&grid);
    set_free(&zoom);
    return rc;
}

/* ---- NetCDF -------------------------------------------------------------------------------- */

static const char STAB_COMMENT[] =
    "Von Neumann analysis of one forward-backward step (eta first, then velocities from the new eta; "
    "rotation: u from the old v, then v from the new u) for the Fourier mode exp(i (k x + l y)) on square cells. "
    "amplification is the largest modulus of the three eigenvalues of the one-step matrix: 1 is neutral, "
    "above 1 the mode grows every step. phase_speed_ratio is the numerical frequency of the fastest mode "
    "(max |arg lambda| / dt) over the exact continuous frequency sqrt(f^2 + g h K^2), which is the ratio of "
    "numerical to exact phase speed; 1 is exact, below 1 the wave lags. Coordinates are k dx and l dy in "
    "radians: pi is the 2-cell wave. courant_number = sqrt(g h) dt / dx, f_dt = Coriolis parameter times dt. "
    "See docs/stability.md.";

/* Records a NetCDF failure once; returns 1 while nothing has failed. */
static int nc_ok(int rc, sw_status *st, sw_error *err, const char *path, const char *what)
{
    if (*st != SW_OK)
        return 0;
    if (rc == NC_NOERR)
        return 1;
    *st = sw_fail(err, SW_ERR_NETCDF, "%s: %s: %s", path, what, nc_strerror(rc));
    return 0;
}

static void put_text(int ncid, int var, const char *att, const char *text, sw_status *st, sw_error *err,
                     const char *path)
{
    if (*st == SW_OK)
        nc_ok(nc_put_att_text(ncid, var, att, strlen(text), text), st, err, path, att);
}

static void put_double(int ncid, int var, const char *att, size_t n, const double *v, sw_status *st,
                       sw_error *err, const char *path)
{
    if (*st == SW_OK)
        nc_ok(nc_put_att_double(ncid, var, att, NC_DOUBLE, n, v), st, err, path, att);
}

/* Defines a variable with long_name and units; returns its id, or -1 after a failure. */
static int def_var(int ncid, const char *name, nc_type type, int ndims, const int *dims, const char *long_name,
                   const char *units, sw_status *st, sw_error *err, const char *path)
{
    int id = -1;
    if (*st != SW_OK || !nc_ok(nc_def_var(ncid, name, type, ndims, dims, &id), st, err, path, name))
        return -1;
    put_text(ncid, id, "long_name", long_name, st, err, path);
    if (units)
        put_text(ncid, id, "units", units, st, err, path);
    return id;
}

sw_status sw_stab_write_planes(const char *path, const sw_stab_plane *planes, size_t n_planes, double f_dt,
                               size_t n_k, const char *history, sw_error *err)
{
    if (!path || !*path)
        return sw_fail(err, SW_ERR_USAGE, "stability planes: no output path given");
    if (!planes || n_planes == 0 || n_k < 3)
        return sw_fail(err, SW_ERR_USAGE, "%s: need at least one layout and n_k >= 3 (got %zu and %zu)", path,
                       n_planes, n_k);
    for (size_t q = 0; q < n_planes; q++)
        if (!planes[q].layout)
            return sw_fail(err, SW_ERR_USAGE, "%s: plane %zu has no layout", path, q + 1);
    if (n_k > 100000)
        return sw_fail(err, SW_ERR_USAGE, "%s: n_k = %zu is too large (at most 100000)", path, n_k);

    const size_t n_plane = n_k * n_k;
    double *k = malloc(n_k * sizeof *k);
    double *amp = malloc(n_planes * n_plane * sizeof *amp);
    double *ratio = malloc(n_planes * n_plane * sizeof *ratio);
    double *per = malloc(3 * n_planes * sizeof *per);
    char *names = calloc(n_planes, STAB_NAME_LEN);
    sw_atomic_file *af = malloc(sizeof *af);
    if (!k || !amp || !ratio || !per || !names || !af) {
        free(k), free(amp), free(ratio), free(per), free(names), free(af);
        return sw_fail(err, SW_ERR_NOMEM, "%s: out of memory for %zu x %zu x %zu values", path, n_planes, n_k,
                       n_k);
    }

    /* compute first: nothing is created until the numbers exist */
    for (size_t i = 0; i < n_k; i++)
        k[i] = -STAB_PI + 2 * STAB_PI * (double)i / (double)(n_k - 1);
    k[n_k - 1] = STAB_PI;
    if (n_k % 2)
        k[(n_k - 1) / 2] = 0.0;   /* exactly 0 at the centre */
    for (size_t q = 0; q < n_planes; q++) {
        const sw_layout *lay = planes[q].layout;
        snprintf(names + q * STAB_NAME_LEN, STAB_NAME_LEN, "%s", lay->name);
        per[q] = planes[q].courant;
        per[n_planes + q] = sw_stab_limit_closed(lay, 1);
        per[2 * n_planes + q] = sw_stab_limit_closed(lay, 2);
        for (size_t j = 0; j < n_k; j++)
            for (size_t i = 0; i < n_k; i++) {
                sw_stab_mode m;
                sw_stab_mode_eval(lay, k[i], k[j], planes[q].courant, f_dt, &m);
                size_t at = q * n_plane + j * n_k + i;
                amp[at] = m.amp;
                ratio[at] = isnan(m.speed_ratio) ? NC_FILL_DOUBLE : m.speed_ratio;
            }
    }

    int ncid = -1;
    sw_status st = sw_atomic_begin(af, path, err);
    if (st == SW_OK) {
        int rc = nc_create(af->part, NC_NETCDF4 | NC_CLOBBER, &ncid);
        if (rc != NC_NOERR) {
            st = sw_atomic_create_failed(af, rc > 0 ? SW_ERR_IO : SW_ERR_NETCDF, nc_strerror(rc), err);
            ncid = -1;
        }
    }

    int d_layout = -1, d_len = -1, d_ky = -1, d_kx = -1;
    if (st == SW_OK) {
        nc_ok(nc_def_dim(ncid, "layout", n_planes, &d_layout), &st, err, path, "dimension layout");
        if (st == SW_OK)
            nc_ok(nc_def_dim(ncid, "name_strlen", STAB_NAME_LEN, &d_len), &st, err, path, "dimension name_strlen");
        if (st == SW_OK)
            nc_ok(nc_def_dim(ncid, "ky", n_k, &d_ky), &st, err, path, "dimension ky");
        if (st == SW_OK)
            nc_ok(nc_def_dim(ncid, "kx", n_k, &d_kx), &st, err, path, "dimension kx");
    }
    int dims_name[2] = {d_layout, d_len}, dims_plane[3] = {d_layout, d_ky, d_kx};
    int v_kx = def_var(ncid, "kx", NC_DOUBLE, 1, &d_kx, "wavenumber along x times the cell width, k dx", "rad",
                       &st, err, path);
    put_text(ncid, v_kx, "comment", "pi is the 2-cell wave along x, 0 the infinitely long wave", &st, err, path);
    int v_ky = def_var(ncid, "ky", NC_DOUBLE, 1, &d_ky, "wavenumber along y times the cell height, l dy", "rad",
                       &st, err, path);
    put_text(ncid, v_ky, "comment", "pi is the 2-cell wave along y, 0 the infinitely long wave", &st, err, path);
    int v_name = def_var(ncid, "layout_name", NC_CHAR, 2, dims_name, "grid layout (Arakawa letter)", NULL, &st,
                         err, path);
    int v_c = def_var(ncid, "courant_number", NC_DOUBLE, 1, &d_layout,
                      "Courant number sqrt(g h) dt / dx the plane is analysed at", "1", &st, err, path);
    int v_l1 = def_var(ncid, "courant_limit_1d", NC_DOUBLE, 1, &d_layout,
                       "Courant limit of waves along x (closed form, 2 / max frequency)", "1", &st, err, path);
    int v_l2 = def_var(ncid, "courant_limit_2d", NC_DOUBLE, 1, &d_layout,
                       "Courant limit of waves in the plane (closed form, 2 / max frequency)", "1", &st, err,
                       path);
    int v_amp = def_var(ncid, "amplification", NC_DOUBLE, 3, dims_plane,
                        "largest modulus of the one-step amplification factors, max |lambda|", "1", &st, err,
                        path);
    put_text(ncid, v_amp, "coordinates", "layout_name", &st, err, path);
    put_text(ncid, v_amp, "comment", "1 = neutral; above 1 the mode grows by this factor every step", &st, err,
             path);
    int v_ratio = def_var(ncid, "phase_speed_ratio", NC_DOUBLE, 3, dims_plane,
                          "numerical over exact phase speed of the fastest (gravity or inertial) mode", "1", &st,
                          err, path);
    if (st == SW_OK && v_ratio >= 0) {
        double fill = NC_FILL_DOUBLE;
        nc_ok(nc_def_var_fill(ncid, v_ratio, 0, &fill), &st, err, path, "phase_speed_ratio:_FillValue");
    }
    put_text(ncid, v_ratio, "coordinates", "layout_name", &st, err, path);
    put_text(ncid, v_ratio, "comment",
             "max |arg lambda| / (dt sqrt(f^2 + g h K^2)); 1 = exact; undefined (fill) at k = l = 0 "
             "without rotation", &st, err, path);

    char source[64];
    snprintf(source, sizeof source, "shoreward %s", SW_VERSION);
    put_text(ncid, NC_GLOBAL, "Conventions", "CF-1.11", &st, err, path);
    put_text(ncid, NC_GLOBAL, "title", "Stability and phase speed of forward-backward stepping per grid layout",
             &st, err, path);
    put_text(ncid, NC_GLOBAL, "history", history ? history : "", &st, err, path);
    put_text(ncid, NC_GLOBAL, "source", source, &st, err, path);
    put_double(ncid, NC_GLOBAL, "courant_number", n_planes, per, &st, err, path);
    put_double(ncid, NC_GLOBAL, "f_dt", 1, &f_dt, &st, err, path);
    put_text(ncid, NC_GLOBAL, "comment", STAB_COMMENT, &st, err, path);
    if (st == SW_OK)
        nc_ok(nc_enddef(ncid), &st, err, path, "ending definitions");

    if (st == SW_OK)
        nc_ok(nc_put_var_double(ncid, v_kx, k), &st, err, path, "writing kx");
    if (st == SW_OK)
        nc_ok(nc_put_var_double(ncid, v_ky, k), &st, err, path, "writing ky");
    if (st == SW_OK)
        nc_ok(nc_put_var_text(ncid, v_name, names), &st, err, path, "writing layout_name");
    if (st == SW_OK)
        nc_ok(nc_put_var_double(ncid, v_c, per), &st, err, path, "writing courant_number");
    if (st == SW_OK)
        nc_ok(nc_put_var_double(ncid, v_l1, per + n_planes), &st, err, path, "writing courant_limit_1d");
    if (st == SW_OK)
        nc_ok(nc_put_var_double(ncid, v_l2, per + 2 * n_planes), &st, err, path, "writing courant_limit_2d");
    if (st == SW_OK)
        nc_ok(nc_put_var_double(ncid, v_amp, amp), &st, err, path, "writing amplification");
    if (st == SW_OK)
        nc_ok(nc_put_var_double(ncid, v_ratio, ratio), &st, err, path, "writing phase_speed_ratio");

    if (ncid >= 0) {
        int crc = nc_close(ncid);
        if (st == SW_OK)
            nc_ok(crc, &st, err, path, "closing");
        if (st == SW_OK)
            st = sw_atomic_commit(af, err);
        else
            sw_atomic_discard(af);
    }
    free(k), free(amp), free(ratio), free(per), free(names), free(af);
    return st;
}
