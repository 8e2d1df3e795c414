/* harness.c - building, stepping and measuring models for the verification checks (see harness.h). */
#include "harness.h"

#include <complex.h>
#include <math.h>
#include <stdlib.h>

#include "base/omp_compat.h"

sw_precision vh_precision = SW_DOUBLE;

double vh_tol(double tol_double, double tol_single) { return vh_precision == SW_SINGLE ? tol_single : tol_double; }

sw_status vh_model(const vh_setup *s, sw_model **out, sw_error *err)
{
    *out = NULL;
    const size_t n = s->nx * s->ny;
    double *depth = malloc(n * sizeof *depth);
    if (!depth)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for a %zu x %zu depth field", s->nx, s->ny);
    for (size_t k = 0; k < n; k++)
        depth[k] = s->depth ? s->depth[k] : s->h;
    sw_grid g = {.nx = s->nx, .ny = s->ny, .dx_m = s->dx, .dy_m = s->dy};
    sw_model_config cfg = {.layout = s->layout, .grid = g, .depth_m = depth, .eta0_m = s->eta0,
                           .min_depth_m = 1.0, .gravity_ms2 = VH_G, .allow_unstable = s->allow_unstable,
                           .precision = vh_precision};
    for (int e = 0; e < 4; e++)
        cfg.edges[e] = s->edges[e];
    cfg.dt_s = s->courant_frac * sw_model_dt_limit(s->layout, &g, depth, 1.0, VH_G, sw_model_dims(&g, cfg.edges));
    sw_status rc = sw_model_create(&cfg, out, err);
    free(depth);
    return rc;
}

sw_status vh_eta_points(const vh_setup *s, unsigned char *mask, sw_error *err)
{
    const size_t n = s->nx * s->ny;
    double *ones = malloc(n * sizeof *ones);
    if (!ones)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory");
    for (size_t k = 0; k < n; k++)
        ones[k] = 1.0;
    vh_setup probe = *s;
    probe.eta0 = ones;
    probe.allow_unstable = 1;
    sw_model *m = NULL;
    sw_status rc = vh_model(&probe, &m, err);
    free(ones);
    if (rc != SW_OK)
        return rc;
    for (size_t j = 0; j < s->ny; j++)
        for (size_t i = 0; i < s->nx; i++)
            mask[j * s->nx + i] = sw_model_eta(m, i, j) != 0.0;
    sw_model_free(m);
    return SW_OK;
}

size_t vh_eta_row(const unsigned char *mask, size_t nx, size_t ny, size_t i, size_t j)
{
    if (mask[j * nx + i])
        return j;
    if (j + 1 < ny && mask[(j + 1) * nx + i])
        return j + 1;
    return j > 0 ? j - 1 : j;
}

double vh_dt_limit(const sw_layout *lay, double d, double h)
{
    const double depth[4] = {h, h, h, h};
    const sw_grid g = {.nx = 2, .ny = 2, .dx_m = d, .dy_m = d};
    return sw_model_dt_limit(lay, &g, depth, 1.0, VH_G, 2);
}

void vh_advance(sw_model *m, long n, int threads)
{
    omp_set_num_threads(threads);
    SW_OMP(parallel)
    for (long k = 0; k < n; k++) {
        sw_model_step(m);
        SW_OMP(single)
        sw_model_tick(m);
    }
}

double vh_p2(const sw_layout *lay, double k, double l, double dx, double dy, double gh, double dt)
{
    sw_symbols s;
    lay->symbols(k, l, dx, dy, &s);
    return -gh * dt * dt * creal(s.div_x * s.grad_x + s.div_y * s.grad_y);
}

double vh_theta(double p2)
{
    double c = 1.0 - 0.5 * p2;
    return c < -1.0 ? NAN : acos(c);
}

double vh_discrete_period(const sw_layout *lay, double k, double l, double dx, double dy, double gh, double dt)
{
    return 2.0 * VH_PI * dt / vh_theta(vh_p2(lay, k, l, dx, dy, gh, dt));
}

double vh_max_abs_eta(const sw_model *m)
{
    const sw_grid *g = sw_model_grid(m);
    const unsigned char *wet = sw_model_wet(m);
    double worst = 0.0;
    for (size_t j = 0; j < g->ny; j++)
        for (size_t i = 0; i < g->nx; i++) {
            double e = fabs(sw_model_eta(m, i, j));
            if (wet[j * g->nx + i] && !(e <= worst))   /* NaN and Inf count as the worst */
                worst = e;
        }
    return worst;
}

/* <eta, phi> / phi2 and max |eta - a phi| over the grid. */
static double project(const sw_model *m, const double *phi, double phi2, double *resid)
{
    const sw_grid *g = sw_model_grid(m);
    double dot = 0.0;
    for (size_t j = 0; j < g->ny; j++)
        for (size_t i = 0; i < g->nx; i++)
            dot += sw_model_eta(m, i, j) * phi[j * g->nx + i];
    double a = dot / phi2, r = 0.0;
    for (size_t j = 0; j < g->ny; j++)
        for (size_t i = 0; i < g->nx; i++)
            r = fmax(r, fabs(sw_model_eta(m, i, j) - a * phi[j * g->nx + i]));
    *resid = r;
    return a;
}

static void mode_store(vh_mode *md, double a)
{
    if (md->n == md->cap) {
        size_t cap = md->cap ? 2 * md->cap : 1024;
        double *p = realloc(md->a, cap * sizeof *p);
        if (!p) {
            md->nomem = 1;
            return;
        }
        md->a = p;
        md->cap = cap;
    }
    md->a[md->n++] = a;
}

void vh_mode_start(vh_mode *md, const sw_model *m, const double *phi)
{
    const sw_grid *g = sw_model_grid(m);
    *md = (vh_mode){.phi = phi, .t0 = sw_model_time(m), .dt = sw_model_dt(m)};
    for (size_t k = 0; k < g->nx * g->ny; k++)
        md->phi2 += phi[k] * phi[k];
    double a = project(m, phi, md->phi2, &md->resid_max);
    md->a_max = fabs(a);
    mode_store(md, a);
}

void vh_mode_sample(vh_mode *md, const sw_model *m)
{
    double resid, a = project(m, md->phi, md->phi2, &resid);
    md->resid_max = fmax(md->resid_max, resid);
    md->a_max = fmax(md->a_max, fabs(a));
    mode_store(md, a);
}

/* Period from the crossings, each placed within its step by a sinusoid of phase step theta
 * (theta = 0: linear interpolation). For a1 = A cos(phi), a2 = A cos(phi + theta) of opposite
 * signs, the zero lies at the fraction atan2(|a1| sin theta, |a1| cos theta + |a2|) / theta. */
static double crossing_period(const vh_mode *md, double theta)
{
    double t_first = NAN, t_last = NAN;
    int crossings = 0;
    for (size_t q = 1; q < md->n; q++) {
        double a1 = md->a[q - 1], a2 = md->a[q];
        if ((a1 > 0) == (a2 > 0))
            continue;
        double f = theta > 0 ? atan2(fabs(a1) * sin(theta), fabs(a1) * cos(theta) + fabs(a2)) / theta
                             : fabs(a1) / (fabs(a1) + fabs(a2));
        double tc = md->t0 + ((double)(q - 1) + f) * md->dt;
        if (crossings == 0)
            t_first = tc;
        t_last = tc;
        crossings++;
    }
    return crossings < 3 ? NAN : 2.0 * (t_last - t_first) / (crossings - 1);
}

double vh_mode_period(const vh_mode *md)
{
    if (md->nomem)
        return NAN;
    double period = crossing_period(md, 0.0);
    for (int it = 0; it < 2 && isfinite(period); it++)
        period = crossing_period(md, 2.0 * VH_PI * md->dt / period);
    return period;
}

void vh_mode_free(vh_mode *md)
{
    free(md->a);
    md->a = NULL;
    md->n = md->cap = 0;
}

double vh_mode_impurity(const vh_mode *md) { return md->a_max > 0 ? md->resid_max / md->a_max : NAN; }

void vh_peak(const double *t, const double *y, size_t n, size_t i0, size_t i1, double *t_peak, double *y_peak)
{
    size_t best = i0;
    for (size_t i = i0; i <= i1 && i < n; i++)
        if (y[i] > y[best])
            best = i;
    *t_peak = t[best];
    *y_peak = y[best];
    if (best == 0 || best + 1 >= n)
        return;
    double a = y[best - 1], b = y[best], c = y[best + 1];
    double den = a - 2 * b + c;
    if (den >= 0)
        return;
    double off = 0.5 * (a - c) / den;   /* in samples, within [-1/2, 1/2] */
    *t_peak = t[best] + off * (t[best + 1] - t[best]);
    *y_peak = b - 0.25 * (a - c) * off;
}

double vh_noise(unsigned long long *state)
{
    *state = *state * 6364136223846793005ULL + 1442695040888963407ULL;
    return (double)(*state >> 11) / 4503599627370496.0 - 1.0;   /* 53 bits -> [0, 2) - 1 */
}

sw_status vh_discrete_pulse_1d(const sw_layout *lay, double dx, double dy, double gh, double dt, double b,
                               const long *off, size_t n_off, long n_steps, size_t n_quad, double *out,
                               sw_error *err)
{
    const long half = (long)ceil(9.0 * b / dx);   /* exp(-81): the samples beyond are below round-off */
    const size_t len = (size_t)n_steps + 1;
    double *cosq = malloc(n_off * sizeof *cosq);
    if (!cosq)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for the discrete reference");
    for (size_t q = 0; q < n_off * len; q++)
        out[q] = 0.0;
    for (size_t i = 0; i <= n_quad; i++) {
        double k = (double)i * VH_PI / (dx * (double)n_quad);
        double w = (i == 0 || i == n_quad ? 0.5 : 1.0) * VH_PI / (dx * (double)n_quad) / VH_PI;
        /* discrete-time Fourier transform of the samples, symmetric about the centre cell */
        double spec = 1.0;
        for (long mm = 1; mm <= half; mm++) {
            double x = (double)mm * dx / b;
            spec += 2.0 * exp(-x * x) * cos(k * (double)mm * dx);
        }
        spec *= dx;
        double theta = vh_theta(vh_p2(lay, k, 0.0, dx, dy, gh, dt));
        if (isnan(theta)) {
            free(cosq);
            return sw_fail(err, SW_ERR_UNSTABLE, "discrete reference: a mode with k dx = %.3f is unstable", k * dx);
        }
        double amp = w * spec;
        for (size_t q = 0; q < n_off; q++)
            cosq[q] = amp * cos(k * (double)off[q] * dx);
        for (long n = 0; n <= n_steps; n++) {
            double r = cos((double)n * theta);   /* at rest at t = 0 (harness.h) */
            for (size_t q = 0; q < n_off; q++)
                out[q * len + (size_t)n] += cosq[q] * r;
        }
    }
    free(cosq);
    return SW_OK;
}
