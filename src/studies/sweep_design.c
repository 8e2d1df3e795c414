/* sweep_design.c - the design of a sweep: which members it has and each one's parameter values
 * (one-at-a-time, full factorial, Latin hypercube), and parameter values as text.
 *
 * Invariant: the design is values only, a function of the scenario alone (the Latin hypercube draws
 * from splitmix64 seeded by [sweep] seed, the same on every platform); apart from reading the base
 * grid, nothing is built or run here, so planning, running and resuming a sweep see the same members.
 */
#include "studies/sweep_impl.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/omp_compat.h"
#include "base/units.h"
#include "inputs/seabed.h"
#include "model/layout.h"

static const char *const DESIGN_NAME[] = { "one-at-a-time", "factorial", "latin-hypercube" };

const char *swp_design_name(sw_sweep_design d) { return DESIGN_NAME[d]; }

static int is_factor(sw_sweep_kind k)
{
    return k == SW_SWEEP_AMPLITUDE_FACTOR || k == SW_SWEEP_DEPTH_FACTOR || k == SW_SWEEP_RESOLUTION_FACTOR
        || k == SW_SWEEP_SLIP_FACTOR;
}

/* ---- values as text ------------------------------------------------------------------------ */

const char *swp_unit_text(const sw_sweep_param *p)
{
    if (p->layout)
        return "layout";
    if (p->words)
        return "choice";
    switch ((sw_unit_kind)p->unit) {
    case SW_UNIT_LENGTH: return "m";
    case SW_UNIT_TIME: return "s";
    case SW_UNIT_ANGLE: return "deg";
    case SW_UNIT_RATE: return "s-1";
    case SW_UNIT_SPEED: return "m s-1";
    case SW_UNIT_NONE: break;
    }
    return "1";
}

/* The name of the layout a sweep value stands for (its index in the registry). */
static const char *layout_name(double v)
{
    const sw_layout *lay = v >= 0 ? sw_layout_at((size_t)v) : NULL;
    return lay ? lay->name : "?";
}

/* The word a choice value stands for (its index among p->words). */
static const char *choice_word(const sw_sweep_param *p, double v)
{
    size_t n = 0;
    while (p->words[n])
        n++;
    return v >= 0 && (size_t)v < n ? p->words[(size_t)v] : "?";
}

/* The shortest of "%.15g", "%.16g" and "%.17g" that strtod reads back as exactly v, into buf (size n):
 * 0.4 is written "0.4", not "0.40000000000000002" ("%.17g" always round-trips; IEEE 754 binary64 needs
 * at most 17 significant digits [memory]). */
static void shortest_text(double v, char *buf, size_t n)
{
    for (int digits = 15; digits <= 17; digits++) {
        snprintf(buf, n, "%.*g", digits, v);
        if (digits == 17 || strtod(buf, NULL) == v)
            return;
    }
}

/* The exact text of value v for an override: the shortest decimal that reads back as the same double
 * (shortest_text), so the member scenario files show what a person would write. */
void swp_override_text(const sw_sweep_param *p, double v, char *buf, size_t n)
{
    char num[32];
    shortest_text(v, num, sizeof num);
    const char *u = swp_unit_text(p);
    if (p->layout)
        snprintf(buf, n, "%s", layout_name(v));
    else if (p->words)
        snprintf(buf, n, "%s", choice_word(p, v));
    else if (p->integer)
        snprintf(buf, n, "%.0f", v);
    else if (strcmp(u, "1") == 0)
        snprintf(buf, n, "%s", num);
    else
        snprintf(buf, n, "%s %s", num, u);
}

void sw_sweep_format_value(const sw_sweep_param *p, double v, char *buf, size_t n)
{
    if (isnan(v)) {
        snprintf(buf, n, "-");
        return;
    }
    if (p->layout)
        snprintf(buf, n, "%s", layout_name(v));
    else if (p->words)
        snprintf(buf, n, "%s", choice_word(p, v));
    else if (p->unit == SW_UNIT_LENGTH && fabs(v) >= 1000)
        snprintf(buf, n, "%.6g km", v / 1000);
    else if (p->unit == SW_UNIT_NONE)
        snprintf(buf, n, "%.6g", v);
    else
        snprintf(buf, n, "%.6g %s", v, swp_unit_text(p));
}

/* ---- design ------------------------------------------------------------------------------- */

/* splitmix64 (Steele, Lea & Flood 2014, "Fast splittable pseudorandom number generators",
 * OOPSLA [memory]): a small generator whose output is the same on every platform. */
static uint64_t rng_next(uint64_t *s)
{
    uint64_t z = (*s += 0x9e3779b97f4a7c15ULL);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31);
}

static double rng_uniform(uint64_t *s) { return (double)(rng_next(s) >> 11) * 0x1.0p-53; }   /* [0, 1) */

void sw_sweep_plan_free(sw_sweep_plan *plan)
{
    if (!plan)
        return;
    for (size_t k = 0; plan->member && k < plan->n_members; k++)
        free(plan->member[k].error);
    free(plan->member);
    free(plan->values);
    memset(plan, 0, sizeof *plan);
}

/* The value a parameter has in the base scenario. */
static sw_status base_value(const sw_scenario *sc, const sw_sweep_param *p, double *out, sw_error *err)
{
    if (p->kind == SW_SWEEP_KEY)
        return sw_scenario_value(sc, p->target, out, err);
    *out = is_factor(p->kind) ? 1.0 : 0.0;
    return SW_OK;
}

sw_status sw_sweep_make_design(const sw_scenario *base, sw_sweep_plan *plan, sw_error *err)
{
    memset(plan, 0, sizeof *plan);
    if (!base || !base->sweep.present)
        return sw_fail(err, SW_ERR_USAGE, "%s: the scenario has no [sweep] section (see docs/sweep.md)",
                       base ? base->path : "");
    const sw_sweep_spec *sw = &base->sweep;
    plan->base = base;
    plan->n_params = sw->n_params;
    plan->param = sw->param;
    sw_status st = SW_OK;
    for (size_t q = 0; q < sw->n_params && st == SW_OK; q++)
        st = base_value(base, &sw->param[q], &plan->base_value[q], err);
    if (st != SW_OK)
        return st;
    /* the base grid: a grid taken from the seabed file is known only once the file is read */
    sw_scenario *copy = malloc(sizeof *copy);
    if (!copy)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory planning the sweep");
    *copy = *base;   /* shares base's text; never freed through the copy */
    SW_OMP(critical(sw_netcdf))
    st = sw_seabed_grid(copy, err);
    plan->base_grid = copy->grid;
    free(copy);
    if (st != SW_OK)
        return st;

    size_t P = sw->n_params, M = 1;
    if (sw->design == SW_SWEEP_ONE_AT_A_TIME) {
        for (size_t q = 0; q < P; q++)
            for (size_t l = 0; l < sw->param[q].n_levels; l++)
                M += sw->param[q].level[l] != plan->base_value[q];
    } else if (sw->design == SW_SWEEP_FACTORIAL) {
        for (size_t q = 0; q < P; q++)
            M *= sw->param[q].n_levels;
    } else {
        M = sw->members;
    }
    plan->n_members = M;
    plan->member = calloc(M, sizeof *plan->member);
    plan->values = malloc(M * P * sizeof *plan->values);
    size_t *perm = malloc(M * sizeof *perm);
    if (!plan->member || !plan->values || !perm) {
        free(perm);
        sw_sweep_plan_free(plan);
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for %zu members", M);
    }
    for (size_t k = 0; k < M; k++) {
        sw_sweep_member *m = &plan->member[k];
        m->index = k;
        m->value = plan->values + k * P;
        m->varied = -1;
        memcpy(m->value, plan->base_value, P * sizeof *m->value);
    }
    if (sw->design == SW_SWEEP_ONE_AT_A_TIME) {
        size_t k = 1;   /* member 0 is the base scenario */
        for (size_t q = 0; q < P; q++)
            for (size_t l = 0; l < sw->param[q].n_levels; l++)
                if (sw->param[q].level[l] != plan->base_value[q]) {
                    plan->member[k].value[q] = sw->param[q].level[l];
                    plan->member[k].varied = (long)q;
                    k++;
                }
    } else if (sw->design == SW_SWEEP_FACTORIAL) {
        for (size_t k = 0; k < M; k++) {   /* the last parameter changes fastest */
            size_t rest = k;
            for (size_t q = P; q-- > 0;) {
                const sw_sweep_param *p = &sw->param[q];
                plan->member[k].value[q] = p->level[rest % p->n_levels];
                rest /= p->n_levels;
            }
        }
    } else {
        /* Latin hypercube (McKay, Beckman & Conover 1979, Technometrics 21(2) [memory]): for each
         * parameter a random permutation puts exactly one member in each of M equal strata of
         * [0, 1), at a uniform position inside it; u maps onto the range or onto the listed values. */
        uint64_t state = (uint64_t)sw->seed;
        for (size_t q = 0; q < P; q++) {
            const sw_sweep_param *p = &sw->param[q];
            for (size_t k = 0; k < M; k++)
                perm[k] = k;
            for (size_t i = M; i-- > 1;) {   /* Fisher-Yates shuffle */
                size_t j = (size_t)(rng_uniform(&state) * (double)(i + 1));
                size_t t = perm[i];
                perm[i] = perm[j > i ? i : j];
                perm[j > i ? i : j] = t;
            }
            for (size_t k = 0; k < M; k++) {
                double u = ((double)perm[k] + rng_uniform(&state)) / (double)M;
                double v;
                if (p->n_levels == 0) {
                    v = p->lo + u * (p->hi - p->lo);
                } else {
                    size_t l = (size_t)(u * (double)p->n_levels);
                    v = p->level[l < p->n_levels ? l : p->n_levels - 1];
                }
                plan->member[k].value[q] = v;
            }
        }
    }
    free(perm);
    return SW_OK;
}
