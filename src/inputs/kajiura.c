/* kajiura.c - the sea surface over a moved sea floor: the floor's uplift filtered by 1 / cosh(k h)
 * (Kajiura 1963), with FFTW3's real 2D transforms on a zero-padded copy of the model grid (see kajiura.h).
 *
 * Why 1 / cosh(k h) [derived; docs/references.md "Kajiura"]: a sudden floor motion in a layer of
 * incompressible water at rest is a potential-flow impulse problem; for one horizontal wavenumber k the
 * impulse potential A sinh(k z) vanishes at the surface (z = 0) and its vertical derivative at the floor
 * (z = -h) is the floor's motion, so the surface rises by the floor's uplift over cosh(k h).
 *
 * Method. The wet cells' uplift (land cells' uplift is ignored: no water stands over it) is transformed
 * once, U(k). The depth varies, so the filter is applied for a ladder of depths ("rungs"), each an inverse
 * transform of U(k) / cosh(|k| h_r), and every wet cell takes its own depth's value interpolated between
 * the rungs around it:
 *   - constant depth (every wet cell equally deep): one rung at that depth, exact;
 *   - otherwise rungs geometrically spaced between the shallowest and the deepest wet cell, at most
 *     KJ_STEP_LN apart in ln h, plus one rung beyond each end, and cubic (4-point Lagrange) interpolation
 *     in ln h, so every cell lies in a middle interval. The error for one wavenumber of unit amplitude is
 *     at most (9/16) step^4 / 24 max|d^4/ds^4 sech(e^s)| = 0.0758 step^4 (the maximum, 3.234 at k h = 2.49,
 *     found by scanning k h from 1e-4 to 60 [derived]; linear interpolation would give 0.0732 step^2):
 *     with step <= 0.125, below 1.9e-5;
 *   - depths below KJ_FLOOR_KH / k_max (k_max the grid's largest wavenumber) take the rung at that depth:
 *     their filter differs from 1 by at most (k_max h)^2 / 2 <= 1e-6.
 * Rungs that no cell needs (a weight of exactly 0 for every cell, as at two-depth seabeds) are skipped.
 * Wavenumbers with k h > 40, where 1 / cosh(k h) < 8.5e-18, are set to 0 without evaluating it (most of
 * the spectrum of a deep rung on a fine grid); what they leave out is below round-off.
 *
 * Padding. The padded grid is the model grid plus a zero margin on each axis of at least KJ_MARGIN_DEPTHS
 * times the deepest rung over the true cell size (and KJ_MARGIN_MIN cells), rounded up to an even size
 * whose factors are 2, 3, 5 and 7. The kernel of 1 / cosh(k h) decays as exp(-pi r / (2 h)) (the
 * nearest poles of 1 / cosh(k h) lie at k = +-i pi / (2 h) [derived]), so what wraps round is below
 * exp(-pi 24 / 2), about 4e-17 of the field, for fields smooth at the grid scale. (Where the depth is
 * under about 3 cells the grid's cut-off at the Nyquist wavenumber adds a slowly decaying tail of about
 * sech(pi h / dx) that only fields with grid-scale wiggles feel.)
 *
 * Threads: rungs are computed side by side, one per thread, each thread owning one spectrum buffer; the
 * cells then add the finished rungs in rung order, so results are bitwise the same for any thread count.
 * Called inside an active parallel region (a sweep's members) it runs on one thread.
 */
#include "inputs/kajiura.h"

#include <fftw3.h>
#include <limits.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "base/omp_compat.h"

#define KJ_PI 3.14159265358979323846
#define KJ_STEP_LN 0.125        /* the largest ln(h_{r+1} / h_r) between neighbouring rungs */
#define KJ_MARGIN_DEPTHS 24.0   /* zero margin on each axis: this many depths of the deepest rung used ... */
#define KJ_MARGIN_MIN 16        /* ... and at least this many cells */
#define KJ_KH_CUT 40.0          /* beyond k h = 40 the filter, below 2 e^-40 = 8.5e-18, is taken as 0 */
#define KJ_FLOOR_KH 1.4142135623730951e-3 /* shallowest rung: k_max h = sqrt(2e-6), so 1 - sech <= 1e-6 */

/* The depth ladder. With n == 1 every wet cell uses rung 0 with weight 1; otherwise rung r (0 .. n-1)
 * lies at ln h = ln_lo + (r - 1) step, rungs 1 and n - 2 exactly at the shallowest and deepest wet cell
 * (h_lo, h_hi), and a cell at depth h sits at position x = ln(h / h_lo) / step in [0, n - 3]. */
typedef struct {
    size_t n;          /* rungs: 1, or intervals + 3 */
    size_t intervals;  /* intervals between h_lo and h_hi (n - 3), 0 when n == 1 */
    double h_lo, h_hi; /* the ladder's inner ends, m (equal when n == 1) */
    double step;       /* ln(h_{r+1} / h_r) */
    double *h;         /* [n] depth of each rung, m */
} kj_ladder;

/* The position of depth h on the ladder (see kj_ladder), clamped to [0, intervals]; exact at the ends. */
static double kj_position(const kj_ladder *L, double h)
{
    if (L->n == 1 || h <= L->h_lo)
        return 0.0;
    if (h >= L->h_hi)
        return (double)L->intervals;
    const double x = log(h / L->h_lo) / L->step;
    return x < 0.0 ? 0.0 : x > (double)L->intervals ? (double)L->intervals : x;
}

/* The cubic Lagrange weights w[0..3] of rungs q .. q + 3 for a cell at t in [0, 1] between rungs q + 1 and
 * q + 2 (nodes at -1, 0, 1, 2). t = 0 gives exactly (0, 1, 0, 0), t = 1 exactly (0, 0, 1, 0). */
static void kj_weights(double t, double w[4])
{
    w[0] = -t * (t - 1.0) * (t - 2.0) / 6.0;
    w[1] = (t + 1.0) * (t - 1.0) * (t - 2.0) / 2.0;
    w[2] = -(t + 1.0) * t * (t - 2.0) / 2.0;
    w[3] = (t + 1.0) * t * (t - 1.0) / 6.0;
}

/* The first of the (at most four) rungs a wet cell at ladder position x uses: q, for rungs q .. q + 3. */
static size_t kj_first_rung(const kj_ladder *L, double x)
{
    if (L->n == 1)
        return 0;
    const size_t q = (size_t)x;
    return q >= L->intervals ? L->intervals - 1 : q;
}

/* The weight rung r has for a wet cell at ladder position x (kj_position); 0 when r is not one of its
 * four rungs. */
static double kj_weight(const kj_ladder *L, double x, size_t r)
{
    if (L->n == 1)
        return 1.0;
    const size_t q = kj_first_rung(L, x);
    if (r < q || r > q + 3)
        return 0.0;
    double w[4];
    kj_weights(x - (double)q, w);
    return w[r - q];
}

/* The smallest even m >= n whose prime factors are 2, 3, 5 and 7 only: FFTW is fastest on those, and an
 * even length halves its real transforms (measured on 2163 cells: 2240 took 26 ms a c2r transform,
 * 2187 = 3^7 41 ms). */
static size_t kj_fft_size(size_t n)
{
    for (size_t m = n > 2 ? n + n % 2 : 2;; m += 2) {
        size_t k = m;
        static const size_t primes[] = {2, 3, 5, 7};
        for (size_t p = 0; p < 4; p++)
            while (k % primes[p] == 0)
                k /= primes[p];
        if (k == 1)
            return m;
    }
}

/* Threads for the rungs: 1 inside an active parallel region, the team's default size otherwise. */
static int kj_threads(void)
{
#ifdef _OPENMP
    return omp_in_parallel() ? 1 : omp_get_max_threads();
#else
    return 1;
#endif
}

/* Everything one call allocates; kj_release frees what is not NULL. */
typedef struct {
    kj_ladder lad;
    double *pos;          /* [ny * nx] ladder position of each wet cell, -1 on land */
    size_t *used;         /* [n_used] the rungs some cell needs, increasing */
    size_t n_used;
    double *kx2, *ky2;    /* [hx], [py] squared wavenumbers, rad^2 / m^2 */
    fftw_complex *spec;   /* [py * hx] the uplift's spectrum U(k) */
    fftw_complex **work;  /* [threads] one rung's spectrum, turned in place into its field */
    int threads;
    fftw_plan fwd, inv;   /* in place: real -> spec, and work[0] -> its own field */
} kj_state;

static void kj_release(kj_state *s)
{
    if (s->fwd || s->inv) {
        SW_OMP(critical(sw_fftw_plan))   /* FFTW's planner state is not thread-safe */
        {
            if (s->fwd)
                fftw_destroy_plan(s->fwd);
            if (s->inv)
                fftw_destroy_plan(s->inv);
        }
    }
    if (s->work)
        for (int t = 0; t < s->threads; t++)
            fftw_free(s->work[t]);
    free(s->work);
    fftw_free(s->spec);
    free(s->kx2);
    free(s->ky2);
    free(s->used);
    free(s->pos);
    free(s->lad.h);
}

/* Builds the ladder for wet depths in [h_min, h_max] (h_min > 0) on a grid whose largest wavenumber is
 * k_max. Returns 0, or -1 when out of memory. */
static int kj_ladder_make(kj_ladder *L, double h_min, double h_max, double k_max)
{
    L->h_lo = fmax(h_min, KJ_FLOOR_KH / k_max);
    L->h_hi = fmax(h_max, L->h_lo);
    if (L->h_hi == L->h_lo) {
        L->n = 1;
        L->intervals = 0;
        L->step = 0.0;
        L->h = malloc(sizeof *L->h);
        if (!L->h)
            return -1;
        L->h[0] = L->h_lo;
        return 0;
    }
    const double span = log(L->h_hi / L->h_lo);
    L->intervals = (size_t)ceil(span / KJ_STEP_LN);
    if (L->intervals < 1)
        L->intervals = 1;
    L->step = span / (double)L->intervals;
    L->n = L->intervals + 3;
    L->h = malloc(L->n * sizeof *L->h);
    if (!L->h)
        return -1;
    const double ln_lo = log(L->h_lo);
    for (size_t r = 0; r < L->n; r++)
        L->h[r] = exp(ln_lo + ((double)r - 1.0) * L->step);
    L->h[1] = L->h_lo;
    L->h[L->n - 2] = L->h_hi;
    return 0;
}

/* One rung: work = spec / cosh(|k| h) / (px py), then in place to its field (rows of 2 hx doubles).
 * Wavenumbers with k h > KJ_KH_CUT are set to 0 without evaluating the filter (kx2 grows with i). */
static void kj_rung(const kj_state *s, size_t py, size_t hx, double h, double norm, fftw_complex *work)
{
    const double kc2 = (KJ_KH_CUT / h) * (KJ_KH_CUT / h);
    for (size_t j = 0; j < py; j++) {
        const double ky2 = s->ky2[j];
        const double *u = (const double *)(s->spec + j * hx);   /* re, im pairs */
        double *w = (double *)(work + j * hx);
        size_t i = 0;
        for (; i < hx && s->kx2[i] + ky2 <= kc2; i++) {
            /* 1 / cosh(a) = 2 e^-a / (1 + e^-2a): no overflow for large k h, exactly 1 at k = 0 */
            const double e = exp(-sqrt(s->kx2[i] + ky2) * h);
            const double f = norm * (2.0 * e / (1.0 + e * e));
            w[2 * i] = u[2 * i] * f;
            w[2 * i + 1] = u[2 * i + 1] * f;
        }
        memset(w + 2 * i, 0, 2 * (hx - i) * sizeof *w);
    }
    fftw_execute_dft_c2r(s->inv, work, (double *)work);
}

/* Checks the arguments and finds the wet depth range. Returns SW_OK with *n_wet the wet cells and
 * [*h_min, *h_max] their depths, or SW_ERR_USAGE with a message. */
static sw_status kj_check(const sw_grid *g, const double *depth_m, double min_depth_m, const double *floor_m,
                          const double *surface_m, size_t *n_wet, double *h_min, double *h_max, sw_error *err)
{
    if (!g || !depth_m || !floor_m || !surface_m)
        return sw_fail(err, SW_ERR_USAGE, "Kajiura filter: the grid, depth, floor and surface arrays must "
                                          "all be given (one is NULL)");
    if (g->nx == 0 || g->ny == 0)
        return sw_fail(err, SW_ERR_USAGE, "Kajiura filter: grid of %zu x %zu cells: needs at least one cell",
                       g->nx, g->ny);
    if (!(g->dx_m > 0.0 && isfinite(g->dx_m) && g->dy_m > 0.0 && isfinite(g->dy_m)))
        return sw_fail(err, SW_ERR_USAGE, "Kajiura filter: cell size %g x %g m: needs finite sizes > 0", g->dx_m,
                       g->dy_m);
    if (sw_grid_geographic(g) && !(g->radius_m > 0.0 && isfinite(g->radius_m)))
        return sw_fail(err, SW_ERR_USAGE, "Kajiura filter: geographic grid with radius %g m: needs a finite "
                                          "radius > 0", g->radius_m);
    if (!isfinite(min_depth_m))
        return sw_fail(err, SW_ERR_USAGE, "Kajiura filter: min_depth %g m: needs a finite value", min_depth_m);
    size_t wet = 0;
    double lo = INFINITY, hi = 0.0;
    for (size_t j = 0; j < g->ny; j++)
        for (size_t i = 0; i < g->nx; i++) {
            const size_t c = j * g->nx + i;
            const double h = depth_m[c];
            if (!(h >= min_depth_m))   /* shallower than min_depth, or NaN: land */
                continue;
            if (!isfinite(h))
                return sw_fail(err, SW_ERR_USAGE, "Kajiura filter: depth at cell (%zu, %zu) is %g m: needs a "
                                                  "finite depth", i, j, h);
            if (!isfinite(floor_m[c]))
                return sw_fail(err, SW_ERR_USAGE, "Kajiura filter: sea-floor uplift at cell (%zu, %zu) is %g m: "
                                                  "needs a finite value", i, j, floor_m[c]);
            wet++;
            lo = fmin(lo, h);
            hi = fmax(hi, h);
        }
    *n_wet = wet;
    *h_min = lo;
    *h_max = hi;
    return SW_OK;
}

sw_status sw_kajiura_filter(const sw_grid *g, const double *depth_m, double min_depth_m, const double *floor_m,
                            double *surface_m, sw_error *err)
{
    size_t n_wet = 0;
    double h_min = 0.0, h_max = 0.0;
    sw_status st = kj_check(g, depth_m, min_depth_m, floor_m, surface_m, &n_wet, &h_min, &h_max, err);
    if (st != SW_OK)
        return st;
    const size_t nx = g->nx, ny = g->ny, cells = nx * ny;
    if (n_wet == 0) {   /* all land: nothing floats */
        memset(surface_m, 0, cells * sizeof *surface_m);
        return SW_OK;
    }
    /* the true cell sizes: on a geographic grid the width at the domain's mid-latitude (grid.h) */
    const double dxt = g->dx_m * sw_grid_cos_lat(g, g->y0_m + 0.5 * (double)ny * g->dy_m), dyt = g->dy_m;
    if (!(dxt > 0.0))
        return sw_fail(err, SW_ERR_USAGE, "Kajiura filter: the geographic grid's mid-latitude has no width "
                                          "(cos(latitude) = %g): needs a domain away from the poles", dxt / g->dx_m);
    const double k_max = KJ_PI * sqrt(1.0 / (dxt * dxt) + 1.0 / (dyt * dyt));
    if (h_min <= 0.0)
        h_min = 0.0;   /* kj_ladder_make raises it to the shallowest rung */

    kj_state s = {0};
    if (kj_ladder_make(&s.lad, h_min, h_max, k_max) != 0)
        goto nomem;
    const kj_ladder *L = &s.lad;

    /* every wet cell's ladder position, and which rungs any cell needs */
    s.pos = malloc(cells * sizeof *s.pos);
    unsigned char *need = calloc(L->n, 1);
    if (!s.pos || !need) {
        free(need);
        goto nomem;
    }
    for (size_t c = 0; c < cells; c++) {
        const double h = depth_m[c];
        if (!(h >= min_depth_m)) {
            s.pos[c] = -1.0;
            continue;
        }
        const double x = kj_position(L, h);
        s.pos[c] = x;
        const size_t q = kj_first_rung(L, x);
        for (size_t r = q; r < q + 4 && r < L->n; r++)
            if (kj_weight(L, x, r) != 0.0)
                need[r] = 1;
    }
    for (size_t r = 0; r < L->n; r++)
        s.n_used += need[r];
    s.used = malloc(s.n_used * sizeof *s.used);
    if (!s.used) {
        free(need);
        goto nomem;
    }
    double h_top = 0.0;
    for (size_t r = 0, k = 0; r < L->n; r++)
        if (need[r]) {
            s.used[k++] = r;
            h_top = L->h[r];
        }
    free(need);

    /* the padded grid: zero margins of KJ_MARGIN_DEPTHS deepest depths (see the top of the file) */
    const double mx = fmax(ceil(KJ_MARGIN_DEPTHS * h_top / dxt), KJ_MARGIN_MIN),
                 my = fmax(ceil(KJ_MARGIN_DEPTHS * h_top / dyt), KJ_MARGIN_MIN);
    if (!((double)nx + mx < (double)INT_MAX / 2 && (double)ny + my < (double)INT_MAX / 2)) {
        kj_release(&s);
        return sw_fail(err, SW_ERR_NOMEM, "Kajiura filter: the zero-padded grid (%.0f x %.0f cells, for a "
                                          "depth of %g m on %g x %g m cells) is too large",
                       (double)nx + mx, (double)ny + my, h_top, dxt, dyt);
    }
    const size_t px = kj_fft_size(nx + (size_t)mx), py = kj_fft_size(ny + (size_t)my), hx = px / 2 + 1;
    if (py > SIZE_MAX / sizeof(fftw_complex) / hx) {
        kj_release(&s);
        return sw_fail(err, SW_ERR_NOMEM, "Kajiura filter: the zero-padded grid (%zu x %zu cells) is too large",
                       px, py);
    }
    const size_t spec_bytes = py * hx * sizeof(fftw_complex);

    /* wavenumbers: k = 2 pi m / (p d) with m signed along y; along x only m = 0 .. px / 2 are stored */
    s.kx2 = malloc(hx * sizeof *s.kx2);
    s.ky2 = malloc(py * sizeof *s.ky2);
    s.spec = fftw_malloc(spec_bytes);
    if (!s.kx2 || !s.ky2 || !s.spec)
        goto nomem;
    for (size_t i = 0; i < hx; i++) {
        const double k = 2.0 * KJ_PI * (double)i / ((double)px * dxt);
        s.kx2[i] = k * k;
    }
    for (size_t j = 0; j < py; j++) {
        const double m = j <= py / 2 ? (double)j : (double)j - (double)py;
        const double k = 2.0 * KJ_PI * m / ((double)py * dyt);
        s.ky2[j] = k * k;
    }

    /* one spectrum buffer per thread; fewer threads when memory is short */
    int threads = kj_threads();
    if ((size_t)threads > s.n_used)
        threads = (int)s.n_used;
    if (threads < 1)
        threads = 1;
    s.work = calloc((size_t)threads, sizeof *s.work);
    if (!s.work)
        goto nomem;
    s.threads = threads;
    for (int t = 0; t < threads; t++) {
        s.work[t] = fftw_malloc(spec_bytes);
        if (!s.work[t]) {
            if (t == 0)
                goto nomem;
            s.threads = threads = t;
            break;
        }
    }

    /* plans: in place, FFTW_ESTIMATE (the arrays are not touched while planning) */
    SW_OMP(critical(sw_fftw_plan))
    {
        s.fwd = fftw_plan_dft_r2c_2d((int)py, (int)px, (double *)s.spec, s.spec, FFTW_ESTIMATE);
        s.inv = fftw_plan_dft_c2r_2d((int)py, (int)px, s.work[0], (double *)s.work[0], FFTW_ESTIMATE);
    }
    if (!s.fwd || !s.inv) {
        kj_release(&s);
        return sw_fail(err, SW_ERR_NOMEM, "Kajiura filter: FFTW could not plan a %zu x %zu transform", px, py);
    }

    /* the wet cells' uplift, zero elsewhere (land and margins), in rows of 2 hx doubles; then U(k) */
    const size_t rs = 2 * hx;   /* doubles per row of the in-place real arrays */
    double *real = (double *)s.spec;
    SW_OMP(parallel for schedule(static) num_threads(threads))
    for (size_t j = 0; j < py; j++) {
        double *row = real + j * rs;
        memset(row, 0, rs * sizeof *row);
        if (j < ny)
            for (size_t i = 0; i < nx; i++)
                if (s.pos[j * nx + i] >= 0.0)
                    row[i] = floor_m[j * nx + i];
    }
    fftw_execute(s.fwd);

    /* floor_m has been read: surface_m may be the same array */
    memset(surface_m, 0, cells * sizeof *surface_m);
    const double norm = 1.0 / ((double)px * (double)py);   /* FFTW's transforms are unnormalised */
    const size_t n_used = s.n_used;
    SW_OMP(parallel num_threads(threads))
    {
        const size_t nt = (size_t)omp_get_num_threads(), tid = (size_t)omp_get_thread_num();
        for (size_t w0 = 0; w0 < n_used; w0 += nt) {
            const size_t nw = n_used - w0 < nt ? n_used - w0 : nt;
            if (tid < nw)
                kj_rung(&s, py, hx, L->h[s.used[w0 + tid]], norm, s.work[tid]);
            SW_OMP(barrier)
            /* each cell adds this wave's rungs in rung order: the same sums for any thread count */
            SW_OMP(for schedule(static))
            for (size_t j = 0; j < ny; j++)
                for (size_t i = 0; i < nx; i++) {
                    const size_t c = j * nx + i;
                    const double x = s.pos[c];
                    if (x < 0.0)
                        continue;
                    for (size_t t = 0; t < nw; t++) {
                        const double w = kj_weight(L, x, s.used[w0 + t]);
                        if (w != 0.0)
                            surface_m[c] += w * ((const double *)s.work[t])[j * rs + i];
                    }
                }
        }
    }
    kj_release(&s);
    return SW_OK;

nomem:
    kj_release(&s);
    return sw_fail(err, SW_ERR_NOMEM, "Kajiura filter: out of memory for a %zu x %zu grid", nx, ny);
}
