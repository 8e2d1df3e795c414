/* sweep_stats.c - the statistics of a sweep: percentiles, Spearman's rank correlation, and how much
 * each parameter moves an output (the design's sensitivity measure).
 *
 * Invariant: pure functions of their arguments (apart from sorting the arrays they are given); no
 * files, no shared state, so the aggregate is the same numbers however the members were run.
 */
#include "studies/sweep_impl.h"

#include <math.h>
#include <stdlib.h>

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

double sw_sweep_percentile(double *x, size_t n, double q)
{
    if (n == 0)
        return NAN;
    qsort(x, n, sizeof *x, cmp_double);
    double h = (double)(n - 1) * (q / 100.0);
    if (!(h > 0))
        return x[0];
    size_t lo = (size_t)floor(h);
    if (lo >= n - 1)
        return x[n - 1];
    double t = h - (double)lo, a = x[lo], b = x[lo + 1];
    if (t == 0)
        return a;
    if (isinf(a) || isinf(b))
        return INFINITY;   /* +Inf sorts last: b (or both) is +Inf */
    /* the same two-sided lerp numpy uses, so the result matches it to the last bit in most cases */
    return t >= 0.5 ? b - (b - a) * (1 - t) : a + (b - a) * t;
}

typedef struct {
    double v;
    size_t i;
} ranked;

static int cmp_ranked(const void *a, const void *b)
{
    const ranked *x = a, *y = b;
    return (x->v > y->v) - (x->v < y->v);
}

/* Ranks 1..n of x, ties sharing their mean rank. tmp holds n entries. */
static void mean_ranks(const double *x, size_t n, double *rank, ranked *tmp)
{
    for (size_t i = 0; i < n; i++)
        tmp[i] = (ranked){ x[i], i };
    qsort(tmp, n, sizeof *tmp, cmp_ranked);
    for (size_t a = 0; a < n;) {
        size_t b = a;
        while (b + 1 < n && tmp[b + 1].v == tmp[a].v)
            b++;
        double r = ((double)a + (double)b) / 2.0 + 1.0;   /* mean of ranks a+1 .. b+1 */
        for (size_t i = a; i <= b; i++)
            rank[tmp[i].i] = r;
        a = b + 1;
    }
}

double sw_sweep_spearman(const double *x, const double *y, size_t n)
{
    if (n < 3)
        return NAN;
    double *rx = malloc(2 * n * sizeof *rx);
    ranked *tmp = malloc(n * sizeof *tmp);
    if (!rx || !tmp) {
        free(rx);
        free(tmp);
        return NAN;
    }
    double *ry = rx + n;
    mean_ranks(x, n, rx, tmp);
    mean_ranks(y, n, ry, tmp);
    double mx = 0, my = 0;
    for (size_t i = 0; i < n; i++) {
        mx += rx[i];
        my += ry[i];
    }
    mx /= (double)n;
    my /= (double)n;
    double sxy = 0, sxx = 0, syy = 0;
    for (size_t i = 0; i < n; i++) {
        sxy += (rx[i] - mx) * (ry[i] - my);
        sxx += (rx[i] - mx) * (rx[i] - mx);
        syy += (ry[i] - my) * (ry[i] - my);
    }
    free(rx);
    free(tmp);
    return sxx > 0 && syy > 0 ? sxy / sqrt(sxx * syy) : NAN;
}

const char *swp_measure_name(sw_sweep_design d)
{
    return d == SW_SWEEP_ONE_AT_A_TIME ? "swing" : d == SW_SWEEP_FACTORIAL ? "main effect" : "Spearman rho";
}

const char *swp_measure_sentence(sw_sweep_design d)
{
    switch (d) {
    case SW_SWEEP_ONE_AT_A_TIME:
        return "one-at-a-time swing: max - min of the output over the base member and the members that change only "
               "this parameter (members that failed, or where the wave never arrived, left out)";
    case SW_SWEEP_FACTORIAL:
        return "main effect: max - min over this parameter's values of the output's mean over the members with that "
               "value (members that failed, or where the wave never arrived, left out)";
    case SW_SWEEP_LATIN_HYPERCUBE:
        break;
    }
    return "Spearman rank correlation between this parameter's values and the output over the members (mean ranks "
           "for ties; members that failed, or where the wave never arrived, left out); dimensionless, -1 .. 1";
}

static int cmp_rank(const void *a, const void *b)
{
    const sw_sweep_rank *x = a, *y = b;
    int nx = isnan(x->effect), ny = isnan(y->effect);
    if (nx != ny)
        return nx - ny;
    if (!nx && fabs(x->effect) != fabs(y->effect))
        return fabs(x->effect) < fabs(y->effect) ? 1 : -1;
    return (x->param > y->param) - (x->param < y->param);
}

/* How each parameter moves output y[k] (NaN or +Inf = no value), largest first into rank[0..P). */
void swp_sensitivity(const sw_sweep_plan *plan, const double *y, const sw_status *status, double *xs, double *ys,
                     sw_sweep_rank *rank)
{
    const sw_sweep_spec *sw = &plan->base->sweep;
    size_t M = plan->n_members;
    for (size_t q = 0; q < plan->n_params; q++) {
        const sw_sweep_param *p = &plan->param[q];
        size_t n = 0;
        double effect = NAN;
        if (sw->design == SW_SWEEP_ONE_AT_A_TIME) {
            double lo = INFINITY, hi = -INFINITY;
            for (size_t k = 0; k < M; k++) {
                long v = plan->member[k].varied;
                if (status[k] != SW_OK || !isfinite(y[k]) || (v != -1 && v != (long)q))
                    continue;
                lo = fmin(lo, y[k]);
                hi = fmax(hi, y[k]);
                n++;
            }
            effect = n >= 2 ? hi - lo : NAN;
        } else if (sw->design == SW_SWEEP_FACTORIAL) {
            double lo = INFINITY, hi = -INFINITY;
            size_t levels = 0;
            for (size_t l = 0; l < p->n_levels; l++) {
                double sum = 0;
                size_t cnt = 0;
                for (size_t k = 0; k < M; k++)
                    if (status[k] == SW_OK && isfinite(y[k]) && plan->member[k].value[q] == p->level[l]) {
                        sum += y[k];
                        cnt++;
                    }
                if (cnt) {
                    lo = fmin(lo, sum / (double)cnt);
                    hi = fmax(hi, sum / (double)cnt);
                    levels++;
                    n += cnt;
                }
            }
            effect = levels >= 2 ? hi - lo : NAN;
        } else {
            for (size_t k = 0; k < M; k++)
                if (status[k] == SW_OK && isfinite(y[k])) {
                    xs[n] = plan->member[k].value[q];
                    ys[n] = y[k];
                    n++;
                }
            effect = sw_sweep_spearman(xs, ys, n);
        }
        rank[q] = (sw_sweep_rank){ .param = q, .effect = effect, .n = n };
    }
    qsort(rank, plan->n_params, sizeof *rank, cmp_rank);
}

/* Minimum, median and maximum of v[0..n) (sorted in place). */
sw_sweep_stat swp_stat_of(double *v, size_t n)
{
    sw_sweep_stat s = { NAN, NAN, NAN, n };
    if (n) {
        s.median = sw_sweep_percentile(v, n, 50);   /* sorts */
        s.min = v[0];
        s.max = v[n - 1];
    }
    return s;
}
