/* sweep.c - sensitivity sweeps: design, member runs, resume and aggregation (see sweep.h).
 *
 * How a member is made. Every parameter except depth_factor becomes one or more scenario overrides
 * ("section.key = value" text, sw_scenario_override), collected into one list and applied in one
 * re-parse: key parameters first, then resolution_factor (grid.nx/ny/dx/dy from the effective grid),
 * amplitude_factor (each source's amplitude, and a pair's trough) and the source offsets (each
 * source's x, y), each computed from the values already in the list. depth_factor multiplies the
 * depth field after the setup is built; dt, the step count and the sizes are then derived again by
 * the same function that sw_setup_build uses (sw_setup_derive).
 *
 * Threads. Small members run side by side: an outer `omp parallel for schedule(dynamic, 1)` over
 * the members, each member inside a nested one-thread `omp parallel` (so that orphaned `omp for`
 * loops in the model, tracker and layouts bind to it and not to the team of members; nested
 * regions are inactive by default, and a member's own regions then run on its one thread). Large members
 * run one after another, each with all threads. NetCDF-C is not thread-safe: every NetCDF call made
 * while members may run (setup input, member files) sits in `omp critical(sw_netcdf)`.
 *
 * Files. <out>/members/manifest.json records the scenario text and the design; a resumed sweep
 * whose scenario or design differs is refused. <out>/members/mNNNNN.nc (ncsweep.c) appears, via
 * .part + rename, only when member NNNNN has finished (ok or failed), so a present file is a
 * finished member. <out>/members/mNNNNN.scn is the member's scenario text: `shoreward run` on it
 * repeats the member (except depth_factor, which no scenario key expresses; its file says so).
 */
#define _XOPEN_SOURCE 700   /* realpath, with POSIX 2008 */
#include "studies/sweep.h"

#include <cjson/cJSON.h>
#include <limits.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "base/atomic_file.h"
#include "studies/estimate.h"
#include "model/layout.h"
#include "model/model.h"
#include "studies/ncsweep.h"
#include "base/omp_compat.h"
#include "outputs/report.h"
#include "run/run.h"
#include "inputs/seabed.h"
#include "run/setup.h"
#include "base/units.h"

#define SWEEP_BLOCK_BYTES ((size_t)64 << 20) /* member map rows held at once while combining */

static const char *const DESIGN_NAME[] = { "one-at-a-time", "factorial", "latin-hypercube" };

/* ---- small helpers ------------------------------------------------------------------------- */

static int is_factor(sw_sweep_kind k)
{
    return k == SW_SWEEP_AMPLITUDE_FACTOR || k == SW_SWEEP_DEPTH_FACTOR || k == SW_SWEEP_RESOLUTION_FACTOR;
}

static const char *unit_text(const sw_sweep_param *p)
{
    if (p->layout)
        return "layout";
    switch ((sw_unit_kind)p->unit) {
    case SW_UNIT_LENGTH: return "m";
    case SW_UNIT_TIME: return "s";
    case SW_UNIT_ANGLE: return "deg";
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

/* The exact text of value v for an override: every double round-trips through "%.17g". */
static void override_text(const sw_sweep_param *p, double v, char *buf, size_t n)
{
    const char *u = unit_text(p);
    if (p->layout)
        snprintf(buf, n, "%s", layout_name(v));
    else if (p->integer)
        snprintf(buf, n, "%.0f", v);
    else if (strcmp(u, "1") == 0)
        snprintf(buf, n, "%.17g", v);
    else
        snprintf(buf, n, "%.17g %s", v, u);
}

void sw_sweep_format_value(const sw_sweep_param *p, double v, char *buf, size_t n)
{
    if (isnan(v)) {
        snprintf(buf, n, "-");
        return;
    }
    if (p->layout)
        snprintf(buf, n, "%s", layout_name(v));
    else if (p->unit == SW_UNIT_LENGTH && fabs(v) >= 1000)
        snprintf(buf, n, "%.6g km", v / 1000);
    else if (p->unit == SW_UNIT_NONE)
        snprintf(buf, n, "%.6g", v);
    else
        snprintf(buf, n, "%.6g %s", v, unit_text(p));
}

static void member_file(const sw_sweep_plan *plan, size_t k, const char *ext, char *out, size_t n)
{
    snprintf(out, n, "%.960s/members/m%05zu.%.3s", plan->out_dir, k % 100000, ext);   /* members < 100000 */
}

static int file_exists(const char *path)
{
    struct stat st;
    return stat(path, &st) == 0 && S_ISREG(st.st_mode);
}

/* Reads a whole small text file (caller frees); NULL when it cannot. */
static char *read_text_file(const char *path)
{
    FILE *f = fopen(path, "rb");
    if (!f)
        return NULL;
    size_t cap = 4096, len = 0;
    char *buf = malloc(cap);
    while (buf) {
        if (len + 1 >= cap) {
            char *b = realloc(buf, cap * 2);
            if (!b) {
                free(buf);
                buf = NULL;
                break;
            }
            buf = b;
            cap *= 2;
        }
        size_t got = fread(buf + len, 1, cap - 1 - len, f);
        len += got;
        if (got == 0)
            break;
    }
    fclose(f);
    if (buf)
        buf[len] = '\0';
    return buf;
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

/* ---- a member's scenario ------------------------------------------------------------------ */

typedef struct {
    char target[SW_TARGET_MAX];
    char value[SW_PATH_MAX];
    double num;       /* the value as a number (NaN for paths) */
} ov_entry;

typedef struct {
    size_t n;
    ov_entry e[SW_MAX_SWEEP_PARAMS + 4 + 6 * SW_MAX_SOURCES];
} ov_list;

/* Sets target to value (replacing an earlier entry for the same target). */
static void ov_set(ov_list *l, const char *target, const char *value, double num)
{
    size_t i = 0;
    while (i < l->n && strcmp(l->e[i].target, target) != 0)
        i++;
    if (i == l->n) {
        if (l->n >= sizeof l->e / sizeof l->e[0])
            return;   /* cannot happen: the list is sized for every parameter and source */
        l->n++;
    }
    snprintf(l->e[i].target, sizeof l->e[i].target, "%s", target);
    snprintf(l->e[i].value, sizeof l->e[i].value, "%s", value);
    l->e[i].num = num;
}

/* The value of target in the member: from the list when set there, else `fallback`. */
static double ov_get(const ov_list *l, const char *target, double fallback)
{
    for (size_t i = 0; i < l->n; i++)
        if (strcmp(l->e[i].target, target) == 0)
            return l->e[i].num;
    return fallback;
}

static void ov_set_number(ov_list *l, const char *target, double v, const char *unit)
{
    char text[64];
    if (unit[0])
        snprintf(text, sizeof text, "%.17g %s", v, unit);
    else
        snprintf(text, sizeof text, "%.17g", v);
    ov_set(l, target, text, v);
}

/* Whether member k applies parameter q (one-at-a-time: only the varied one). */
static int applies(const sw_sweep_plan *plan, size_t k, size_t q)
{
    if (plan->base->sweep.design != SW_SWEEP_ONE_AT_A_TIME)
        return 1;
    return plan->member[k].varied == (long)q;
}

static double member_builtin(const sw_sweep_plan *plan, size_t k, sw_sweep_kind kind, double fallback)
{
    for (size_t q = 0; q < plan->n_params; q++)
        if (plan->param[q].kind == kind && applies(plan, k, q))
            return plan->member[k].value[q];
    return fallback;
}

double sw_sweep_member_depth_factor(const sw_sweep_plan *plan, size_t k)
{
    return member_builtin(plan, k, SW_SWEEP_DEPTH_FACTOR, 1.0);
}

/* The overrides of member k. */
static void member_overrides(const sw_sweep_plan *plan, size_t k, ov_list *l)
{
    const sw_scenario *sc = plan->base;
    l->n = 0;
    char text[SW_PATH_MAX], target[SW_TARGET_MAX];
    for (size_t q = 0; q < plan->n_params; q++) {
        const sw_sweep_param *p = &plan->param[q];
        if (p->kind != SW_SWEEP_KEY || !applies(plan, k, q))
            continue;
        override_text(p, plan->member[k].value[q], text, sizeof text);
        ov_set(l, p->target, text, plan->member[k].value[q]);
    }
    double r = member_builtin(plan, k, SW_SWEEP_RESOLUTION_FACTOR, 1.0);
    if (r != 1.0) {   /* the same extent in round(n r) cells */
        double nx = ov_get(l, "grid.nx", (double)sc->grid.nx), ny = ov_get(l, "grid.ny", (double)sc->grid.ny);
        double dx = ov_get(l, "grid.dx", sc->grid.dx_m);
        double dy = ov_get(l, "grid.dy", sc->grid.dy_m == sc->grid.dx_m ? dx : sc->grid.dy_m);
        double nx2 = fmax(1.0, (double)llround(nx * r)), ny2 = fmax(1.0, (double)llround(ny * r));
        snprintf(text, sizeof text, "%.0f", nx2);
        ov_set(l, "grid.nx", text, nx2);
        snprintf(text, sizeof text, "%.0f", ny2);
        ov_set(l, "grid.ny", text, ny2);
        ov_set_number(l, "grid.dx", nx * dx / nx2, "m");
        ov_set_number(l, "grid.dy", ny * dy / ny2, "m");
    }
    double f = member_builtin(plan, k, SW_SWEEP_AMPLITUDE_FACTOR, 1.0);
    double ox = member_builtin(plan, k, SW_SWEEP_SOURCE_X_OFFSET, 0.0);
    double oy = member_builtin(plan, k, SW_SWEEP_SOURCE_Y_OFFSET, 0.0);
    for (size_t i = 0; i < sc->n_sources; i++) {
        const sw_source_spec *s = &sc->sources[i];
        if (s->shape == SW_SOURCE_FILE)
            continue;   /* the parser refuses amplitude_factor and offsets with file sources */
        if (f != 1.0) {
            snprintf(target, sizeof target, "source %s.amplitude", s->name);
            double amp = ov_get(l, target, s->amplitude_m);
            if (s->shape == SW_SOURCE_PAIR) {
                char tt[SW_TARGET_MAX];
                snprintf(tt, sizeof tt, "source %s.trough", s->name);
                double trough = ov_get(l, tt, s->trough_m == s->amplitude_m ? amp : s->trough_m);
                ov_set_number(l, tt, f * trough, "m");
            }
            ov_set_number(l, target, f * amp, "m");
        }
        const double off[2] = { ox, oy };
        const double base[2] = { s->x_m, s->y_m };
        for (int a = 0; a < 2; a++)
            if (off[a] != 0.0) {
                snprintf(target, sizeof target, "source %s.%s", s->name, a ? "y" : "x");
                ov_set_number(l, target, ov_get(l, target, base[a]) + off[a], "m");
            }
    }
    /* file paths made absolute, so the member's scenario file runs from its own folder */
    char rel[SW_PATH_MAX], abs_path[PATH_MAX];
    if (sc->bed_file[0] && sw_scenario_resolve(sc, sc->bed_file, rel, sizeof rel, NULL) == SW_OK
        && realpath(rel, abs_path) && strlen(abs_path) < 180)
        ov_set(l, "seabed.file", abs_path, NAN);
    for (size_t i = 0; i < sc->n_sources; i++) {
        const sw_source_spec *s = &sc->sources[i];
        if (s->shape != SW_SOURCE_FILE || sw_scenario_resolve(sc, s->file, rel, sizeof rel, NULL) != SW_OK
            || !realpath(rel, abs_path) || strlen(abs_path) >= 180)
            continue;
        snprintf(target, sizeof target, "source %s.file", s->name);
        ov_set(l, target, abs_path, NAN);
    }
}

void sw_sweep_member_label(const sw_sweep_plan *plan, size_t k, char *buf, size_t n)
{
    size_t used = 0;
    buf[0] = '\0';
    for (size_t q = 0; q < plan->n_params && used + 1 < n; q++) {
        char v[64];
        sw_sweep_format_value(&plan->param[q], plan->member[k].value[q], v, sizeof v);
        int w = snprintf(buf + used, n - used, "%s%s = %s", q ? ", " : "", plan->param[q].name, v);
        if (w < 0)
            break;
        used += (size_t)w;
    }
}

sw_status sw_sweep_member_scenario(const sw_sweep_plan *plan, size_t k, sw_scenario *out, sw_error *err)
{
    ov_list *l = malloc(sizeof *l);
    sw_override *ov = malloc(sizeof(sw_override) * (sizeof l->e / sizeof l->e[0] + 1));
    if (!l || !ov) {
        free(l);
        free(ov);
        memset(out, 0, sizeof *out);
        return sw_fail(err, SW_ERR_NOMEM, "out of memory building member %zu", k);
    }
    member_overrides(plan, k, l);
    for (size_t i = 0; i < l->n; i++)
        ov[i] = (sw_override){ .target = l->e[i].target, .value = l->e[i].value };
    /* the base's precision, which --precision may have set over its text, written into every member */
    ov[l->n] = (sw_override){ .target = "run.precision", .value = sw_precision_name(plan->base->precision) };
    sw_status st = sw_scenario_override(plan->base, ov, l->n + 1, out, err);
    free(l);
    free(ov);
    if (st == SW_OK) {
        if (plan->out_dir[0])
            member_file(plan, k, "scn", out->path, sizeof out->path);
        else
            snprintf(out->path, sizeof out->path, "%.900s [member %zu]", plan->base->path, k);
    }
    return st;
}

/* ---- a member's setup and run --------------------------------------------------------------- */

/* Multiplies the depth field by factor and derives again what depends on it (sw_setup_derive). */
static sw_status rescale_depth(const sw_scenario *sc, sw_setup *s, double factor, sw_error *err)
{
    size_t n = sw_grid_cells(&s->grid);
    for (size_t k = 0; k < n; k++)
        s->depth_m[k] *= factor;
    char change[64];
    snprintf(change, sizeof change, "depth_factor = %g", factor);
    return sw_setup_derive(sc, s, change, err);
}

/* Member k's scenario and setup (depth_factor applied). On failure both own nothing. */
static sw_status member_setup(const sw_sweep_plan *plan, size_t k, sw_scenario *sc, sw_setup *setup, sw_error *err)
{
    memset(setup, 0, sizeof *setup);
    sw_status st = sw_sweep_member_scenario(plan, k, sc, err);
    if (st != SW_OK)
        return st;
    SW_OMP(critical(sw_netcdf))
    st = sw_setup_build(sc, setup, err);
    double s = sw_sweep_member_depth_factor(plan, k);
    if (st == SW_OK && s != 1.0)
        st = rescale_depth(sc, setup, s, err);
    if (st != SW_OK) {
        sw_setup_free(setup);
        sw_scenario_free(sc);
    }
    return st;
}

sw_status sw_sweep_plan_build(const sw_scenario *base, const char *out_dir, sw_sweep_plan *plan, sw_error *err)
{
    sw_status st = sw_sweep_make_design(base, plan, err);
    if (st != SW_OK)
        return st;
    snprintf(plan->out_dir, sizeof plan->out_dir, "%s", out_dir ? out_dir : "");
    sw_scenario *sc = malloc(sizeof *sc);
    if (!sc) {
        sw_sweep_plan_free(plan);
        return sw_fail(err, SW_ERR_NOMEM, "out of memory planning the sweep");
    }
    for (size_t k = 0; k < plan->n_members; k++) {
        sw_sweep_member *m = &plan->member[k];
        sw_setup setup;
        sw_error e = { 0 };
        m->status = member_setup(plan, k, sc, &setup, &e);
        if (m->status != SW_OK) {
            m->error = malloc(strlen(e.msg) + 1);
            if (m->error)
                memcpy(m->error, e.msg, strlen(e.msg) + 1);
            continue;
        }
        m->grid = setup.grid;
        snprintf(m->layout, sizeof m->layout, "%s", setup.layout->name);
        m->dt_s = setup.dt_s;
        m->steps = setup.n_steps;
        m->bytes = setup.total_bytes;
        m->cost = (double)sw_grid_cells(&setup.grid) * (double)setup.n_steps;
        sw_setup_free(&setup);
        sw_scenario_free(sc);
    }
    free(sc);
    return SW_OK;
}

/* What the run hands back through the sink: maps onto the base grid, the gauge series copied. */
typedef struct {
    const sw_grid *base;
    sw_sweep_member_result *r;
    size_t k;
    sw_sweep_member_progress_fn progress;
    void *user;
} member_ctx;

static sw_status member_sink(const sw_map_set *maps, const sw_gauge_table *gt, void *user, sw_error *err)
{
    member_ctx *c = user;
    sw_sweep_member_result *r = c->r;
    const sw_grid *b = c->base, *g = maps->grid;
    /* nearest: the member cell that contains the base cell's centre */
    for (size_t j = 0; j < b->ny; j++) {
        double fy = floor((sw_grid_yc(b, j) - g->y0_m) / g->dy_m);
        for (size_t i = 0; i < b->nx; i++) {
            size_t kb = j * b->nx + i;
            double fx = floor((sw_grid_xc(b, i) - g->x0_m) / g->dx_m);
            if (fx < 0 || fy < 0 || fx >= (double)g->nx || fy >= (double)g->ny) {
                r->arrival_map_s[kb] = r->eta_max_map_m[kb] = NAN;
                r->wet[kb] = 0;
                continue;
            }
            size_t km = (size_t)fy * g->nx + (size_t)fx;
            r->wet[kb] = maps->wet[km] ? 1 : 0;
            r->arrival_map_s[kb] = maps->wet[km] ? maps->arrival_s[km] : NAN;
            r->eta_max_map_m[kb] = maps->wet[km] ? maps->eta_max_m[km] : NAN;
        }
    }
    r->n_times = gt->n_times;
    r->time_s = malloc((gt->n_times ? gt->n_times : 1) * sizeof(double));
    r->eta_m = malloc((gt->n_stations * gt->n_times > 0 ? gt->n_stations * gt->n_times : 1) * sizeof(double));
    if (!r->time_s || !r->eta_m)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory keeping member %zu's gauge series", c->k);
    if (gt->n_times)
        memcpy(r->time_s, gt->time_s, gt->n_times * sizeof(double));
    if (gt->n_stations * gt->n_times > 0)
        memcpy(r->eta_m, gt->eta_m, gt->n_stations * gt->n_times * sizeof(double));
    return SW_OK;
}

static void member_run_progress(const sw_progress *p, void *user)
{
    member_ctx *c = user;
    if (c->progress)
        c->progress(c->k, p->n_steps > 0 ? (double)p->step / (double)p->n_steps : 0, c->user);
}

sw_status sw_sweep_member_run(const sw_sweep_plan *plan, size_t k, int threads, volatile sig_atomic_t *stop,
                              sw_sweep_member_progress_fn progress, void *user, sw_sweep_member_result *out,
                              sw_error *err)
{
    memset(out, 0, sizeof *out);
    out->index = k;
    out->n_gauges = plan->base->n_gauges;
    for (size_t q = 0; q < SW_MAX_GAUGES; q++)
        out->arrival_s[q] = out->peak_m[q] = out->peak_time_s[q] = out->trough_m[q] = NAN;
    out->n_cells = sw_grid_cells(&plan->base_grid);
    out->arrival_map_s = malloc(out->n_cells * sizeof(double));
    out->eta_max_map_m = malloc(out->n_cells * sizeof(double));
    out->wet = calloc(out->n_cells, 1);
    sw_scenario *sc = malloc(sizeof *sc);
    sw_run_result *res = malloc(sizeof *res);
    if (!out->arrival_map_s || !out->eta_max_map_m || !out->wet || !sc || !res) {
        free(sc);
        free(res);
        sw_sweep_member_result_free(out);
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for member %zu's maps", k);
    }
    sw_error e = { 0 };
    sw_setup setup;
    out->status = member_setup(plan, k, sc, &setup, &e);
    if (out->status == SW_OK) {
        member_ctx c = { .base = &plan->base_grid, .r = out, .k = k, .progress = progress, .user = user };
        sw_run_options o = { .threads = threads, .stop = stop, .progress = member_run_progress, .progress_user = &c,
                             .sink = member_sink, .sink_user = &c, .history = "" };
        out->status = sw_run(sc, &setup, &o, res, &e);
        out->dt_s = setup.dt_s;
        out->steps = res->steps;
        out->wall_s = res->wall_s;
        for (size_t q = 0; out->status == SW_OK && q < res->n_gauges; q++) {
            out->arrival_s[q] = res->gauge[q].arrival_s;
            out->peak_m[q] = res->gauge[q].peak_m;
            out->peak_time_s[q] = res->gauge[q].peak_time_s;
            out->trough_m[q] = res->gauge[q].trough_m;
        }
        sw_setup_free(&setup);
        sw_scenario_free(sc);
    }
    snprintf(out->error, sizeof out->error, "%s", out->status == SW_OK ? "" : e.msg);
    if (out->status != SW_OK) {   /* a failed member keeps no arrays */
        sw_status keep = out->status;
        sw_sweep_member_result_free(out);
        out->status = keep;
    }
    free(sc);
    free(res);
    return SW_OK;
}

/* ---- statistics ----------------------------------------------------------------------------- */

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

void sw_sweep_summary_free(sw_sweep_summary *s)
{
    if (!s)
        return;
    for (size_t k = 0; s->error && k < s->n_members; k++)
        free(s->error[k]);
    free(s->error);
    free(s->status);
    free(s->gauge);
    memset(s, 0, sizeof *s);
}

/* ---- the manifest: what a resumed sweep must match ------------------------------------------ */

/* The design as canonical text: design, seed, parameters and every member's values (%.17g). */
static char *design_text(const sw_sweep_plan *plan)
{
    const sw_sweep_spec *sw = &plan->base->sweep;
    size_t cap = 256 + plan->n_params * 160 + plan->n_members * (plan->n_params * 26 + 16);
    char *t = malloc(cap);
    if (!t)
        return NULL;
    size_t used = (size_t)snprintf(t, cap, "design %s; seed %llu; %zu members; parameters:", DESIGN_NAME[sw->design],
                                   sw->seed, plan->n_members);
    for (size_t q = 0; q < plan->n_params; q++)
        used += (size_t)snprintf(t + used, cap - used, " %s;", plan->param[q].name);
    for (size_t k = 0; k < plan->n_members; k++) {
        used += (size_t)snprintf(t + used, cap - used, "\nm%05zu", k);
        for (size_t q = 0; q < plan->n_params; q++)
            used += (size_t)snprintf(t + used, cap - used, " %.17g", plan->member[k].value[q]);
    }
    return t;
}

/* The first line where a and b differ (1-based), with both lines cut to 60 characters. */
static int first_difference(const char *a, const char *b, char *la, char *lb)
{
    int line = 1;
    while (1) {
        const char *ea = strchr(a, '\n'), *eb = strchr(b, '\n');
        size_t na = ea ? (size_t)(ea - a) : strlen(a), nb = eb ? (size_t)(eb - b) : strlen(b);
        if (na != nb || memcmp(a, b, na) != 0 || !ea != !eb) {
            snprintf(la, 64, "%.*s", (int)(na < 60 ? na : 60), a);
            snprintf(lb, 64, "%.*s", (int)(nb < 60 ? nb : 60), b);
            return line;
        }
        if (!ea)
            return 0;
        a = ea + 1;
        b = eb + 1;
        line++;
    }
}

/* Writes the manifest, or checks an existing one against this sweep. */
static sw_status manifest(const sw_sweep_plan *plan, const char *members_dir, sw_error *err)
{
    char path[SW_PATH_MAX + 32];
    snprintf(path, sizeof path, "%s/manifest.json", members_dir);
    char *design = design_text(plan);
    if (!design)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory writing the sweep manifest");
    sw_status st = SW_OK;
    char *old = read_text_file(path);
    if (old) {
        cJSON *o = cJSON_Parse(old);
        const char *ver = cJSON_GetStringValue(cJSON_GetObjectItem(o, "shoreward"));
        const char *text = cJSON_GetStringValue(cJSON_GetObjectItem(o, "scenario_text"));
        const char *des = cJSON_GetStringValue(cJSON_GetObjectItem(o, "design"));
        const char *how = "use another --out folder, or remove it to start this sweep over";
        char la[64], lb[64];
        if (!ver || !text || !des)
            st = sw_fail(err, SW_ERR_USAGE, "%s is not a sweep manifest this version can read; %s", path, how);
        else if (strcmp(ver, SW_VERSION) != 0)
            st = sw_fail(err, SW_ERR_USAGE, "%s: the finished members come from shoreward %s, this is %s; %s", path, ver,
                         SW_VERSION, how);
        else if (strcmp(text, plan->base->text) != 0) {
            int line = first_difference(plan->base->text, text, la, lb);
            st = sw_fail(err, SW_ERR_USAGE, "%s: the finished members in %s were run from a different scenario text "
                         "(line %d now reads '%s', then read '%s'); a sweep resumes only with the same scenario: %s",
                         plan->base->path, members_dir, line, la, lb, how);
        } else if (strcmp(des, design) != 0)
            st = sw_fail(err, SW_ERR_USAGE, "%s: the finished members in %s belong to a different design; %s",
                         plan->base->path, members_dir, how);
        cJSON_Delete(o);
        free(old);
        free(design);
        return st;
    }
    for (size_t k = 0; k < plan->n_members; k++) {
        char f[SW_PATH_MAX + 32];
        member_file(plan, k, "nc", f, sizeof f);
        if (file_exists(f)) {
            free(design);
            return sw_fail(err, SW_ERR_USAGE, "%s holds member files but no manifest.json, so they cannot be matched to "
                           "this sweep; use another --out folder, or remove it", members_dir);
        }
    }
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "format", "shoreward sweep manifest 1");
    cJSON_AddStringToObject(o, "shoreward", SW_VERSION);
    cJSON_AddStringToObject(o, "scenario", plan->base->path);
    cJSON_AddStringToObject(o, "scenario_text", plan->base->text);
    cJSON_AddStringToObject(o, "design", design);
    char *txt = cJSON_Print(o);
    cJSON_Delete(o);
    free(design);
    if (!txt)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory writing the sweep manifest");
    st = sw_atomic_write_text(path, txt, err);
    free(txt);
    return st;
}

/* ---- the member loop ------------------------------------------------------------------------ */

typedef struct {
    const sw_sweep_plan *plan;
    const sw_sweep_options *opt;
    double t0, next_report;
    size_t done, total, n_running;
    double cost_all, cost_done;   /* cells x steps of this attempt's members; of those finished */
    double *fraction;             /* [n_members] progress of running members */
    unsigned char *running;       /* [n_members] */
    size_t last;                  /* member of the last report */
    int interrupted, failed;
    sw_error fail;                /* first I/O or memory failure */
} sweep_ctx;

/* Calls the progress callback (inside critical(sw_sweep_progress)). */
static void report_progress(sweep_ctx *c, size_t k)
{
    if (!c->opt->progress)
        return;
    double now = omp_get_wtime() - c->t0, work = c->cost_done;
    for (size_t i = 0; i < c->plan->n_members; i++)
        if (c->running[i])
            work += c->fraction[i] * c->plan->member[i].cost;
    sw_sweep_progress p = {
        .done = c->done, .total = c->total, .running = c->n_running, .current = k,
        .current_fraction = c->fraction[k], .elapsed_s = now,
        .remaining_s = work > 0 && c->cost_all > 0 ? now * (c->cost_all - work) / work : NAN,
    };
    c->opt->progress(&p, c->opt->progress_user);
    c->next_report = now + 0.5;
}

static void on_member_progress(size_t k, double fraction, void *user)
{
    sweep_ctx *c = user;
    SW_OMP(critical(sw_sweep_progress))
    {
        c->fraction[k] = fraction;
        if (omp_get_wtime() - c->t0 >= c->next_report)
            report_progress(c, k);
    }
}

/* Runs member k and keeps its file; a failed member is kept too, an interrupted one is not. */
static void run_one(sweep_ctx *c, size_t k, int threads, int side_by_side)
{
    const sw_sweep_plan *plan = c->plan;
    if (side_by_side)   /* maybe not the thread netCDF started in (see ncsweep.h) */
        sw_ncs_quiet_thread();
    SW_OMP(critical(sw_sweep_progress))
    {
        c->running[k] = 1;
        c->fraction[k] = 0;
        c->n_running++;
        report_progress(c, k);
    }
    sw_sweep_member_result r;
    sw_error e = { 0 };
    sw_status st = sw_sweep_member_run(plan, k, threads, c->opt->stop, on_member_progress, c, &r, &e);
    int kept = 0;
    if (st == SW_OK && r.status == SW_ERR_INTERRUPTED) {
        SW_OMP(atomic write)
        c->interrupted = 1;
    } else if (st == SW_OK) {
        char path[SW_PATH_MAX + 32];
        member_file(plan, k, "nc", path, sizeof path);
        SW_OMP(critical(sw_netcdf))
        st = sw_ncs_member_write(path, &r, plan->member[k].value, plan->n_params, &plan->base_grid, sw_caution(), &e);
        kept = st == SW_OK;
    }
    sw_sweep_member_result_free(&r);
    SW_OMP(critical(sw_sweep_progress))
    {
        if (st != SW_OK && !c->failed) {
            c->failed = 1;
            c->fail = e;
        }
        c->running[k] = 0;
        c->n_running--;
        if (kept) {
            c->done++;
            c->cost_done += plan->member[k].cost;
        }
        c->fraction[k] = kept ? 1 : 0;
        report_progress(c, k);
    }
}

/* Writes member k's scenario file: the member's text, then what it is (as comments at the end, so
 * line numbers in messages match the file). */
static sw_status write_member_scenario(const sw_sweep_plan *plan, size_t k, sw_error *err)
{
    sw_scenario *sc = malloc(sizeof *sc);
    if (!sc)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory");
    sw_error e = { 0 };
    if (sw_sweep_member_scenario(plan, k, sc, &e) != SW_OK) {
        free(sc);
        return SW_OK;   /* a member that cannot be built has no scenario file; its member file says why */
    }
    char label[2048];
    sw_sweep_member_label(plan, k, label, sizeof label);
    size_t n = strlen(sc->text) + strlen(label) + 1024;
    char *text = malloc(n);
    sw_status st = SW_OK;
    if (!text)
        st = sw_fail(err, SW_ERR_NOMEM, "out of memory");
    else {
        double s = sw_sweep_member_depth_factor(plan, k);
        snprintf(text, n, "%s%s\n; ---- shoreward sweep member %zu of %s\n; %s\n%s", sc->text,
                 sc->text[0] && sc->text[strlen(sc->text) - 1] == '\n' ? "" : "\n", k, plan->base->path, label,
                 s != 1.0 ? "; depth_factor is applied to the built depth field by `shoreward sweep`; no scenario key "
                            "expresses it, so `shoreward run` of this file runs the member without it.\n" : "");
        char path[SW_PATH_MAX + 32];
        member_file(plan, k, "scn", path, sizeof path);
        st = sw_atomic_write_text(path, text, err);
    }
    free(text);
    sw_scenario_free(sc);
    free(sc);
    return st;
}

static sw_status aggregate(sw_sweep_plan *plan, const sw_sweep_options *opt, sw_sweep_summary *out, sw_error *err);

sw_status sw_sweep_run(sw_sweep_plan *plan, const sw_sweep_options *opt, sw_sweep_summary *out, sw_error *err)
{
    memset(out, 0, sizeof *out);
    if (!plan || !plan->out_dir[0] || !opt)
        return sw_fail(err, SW_ERR_USAGE, "sw_sweep_run: a plan with an output folder is required");
    if (strlen(plan->out_dir) > 900)   /* member paths are cut at 960 characters (member_file) */
        return sw_fail(err, SW_ERR_RANGE, "output folder path has %zu characters (accepted: at most 900)",
                       strlen(plan->out_dir));
    size_t M = plan->n_members;
    snprintf(out->members_dir, sizeof out->members_dir, "%.1000s/members", plan->out_dir);
    sw_status st = sw_make_dirs(out->members_dir, err);
    if (st == SW_OK)
        st = manifest(plan, out->members_dir, err);
    if (st != SW_OK)
        return st;

    sweep_ctx c = { .plan = plan, .opt = opt, .total = M };
    size_t *pending = malloc(M * sizeof *pending);
    c.fraction = calloc(M, sizeof *c.fraction);
    c.running = calloc(M, 1);
    if (!pending || !c.fraction || !c.running) {
        free(pending);
        free(c.fraction);
        free(c.running);
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for %zu members", M);
    }
    size_t n_pending = 0, max_cells = 0;
    for (size_t k = 0; k < M && st == SW_OK; k++) {
        char path[SW_PATH_MAX + 32];
        member_file(plan, k, "nc", path, sizeof path);
        if (file_exists(path)) {
            out->n_resumed++;
            c.done++;
            continue;
        }
        st = write_member_scenario(plan, k, err);
        const sw_sweep_member *m = &plan->member[k];
        if (st == SW_OK && m->status != SW_OK) {   /* cannot run: kept as a failed member right away */
            sw_sweep_member_result r = { .index = k, .status = m->status };
            snprintf(r.error, sizeof r.error, "%s", m->error ? m->error : "");
            st = sw_ncs_member_write(path, &r, m->value, plan->n_params, &plan->base_grid, sw_caution(), err);
            c.done++;
            continue;
        }
        pending[n_pending++] = k;
        c.cost_all += m->cost;
        size_t cells = sw_grid_cells(&m->grid);
        max_cells = cells > max_cells ? cells : max_cells;
    }
    int threads = opt->threads > 0 ? opt->threads : omp_get_max_threads();
    int par = opt->members_parallel;
    if (par <= 0)
        par = threads > 1 && max_cells <= SW_SWEEP_SMALL_CELLS ? threads : 1;
    if ((size_t)par > n_pending)
        par = n_pending > 0 ? (int)n_pending : 1;
    out->members_parallel = par;
    out->threads = par > 1 ? 1 : threads;
    c.t0 = omp_get_wtime();
    if (st == SW_OK && par > 1) {
        SW_OMP(parallel for num_threads(par) schedule(dynamic, 1))
        for (size_t i = 0; i < n_pending; i++) {
            int skip;
            SW_OMP(atomic read)
            skip = c.failed;
            /* a one-thread region of its own: the orphaned `omp for` loops a run meets outside its
             * time loop (model set-up, tracker) must bind to it, not to this team of members */
            if (!skip && !(opt->stop && *opt->stop))
                SW_OMP(parallel num_threads(1))
                run_one(&c, pending[i], 1, 1);
        }
    } else if (st == SW_OK) {
        for (size_t i = 0; i < n_pending && !c.failed && !(opt->stop && *opt->stop); i++)
            run_one(&c, pending[i], threads, 0);
    }
    out->wall_s = omp_get_wtime() - c.t0;
    free(pending);
    free(c.fraction);
    free(c.running);
    if (st != SW_OK)
        return st;
    if (c.failed) {
        if (err)
            *err = c.fail;
        return c.fail.code;
    }
    if (c.interrupted || c.done < M)
        return sw_fail(err, SW_ERR_INTERRUPTED, "sweep interrupted: %zu of %zu members are finished and kept in %s; "
                       "run the same command again to resume", c.done, M, out->members_dir);
    return aggregate(plan, opt, out, err);
}

/* ---- combining the members ------------------------------------------------------------------ */

static const char *measure_name(sw_sweep_design d)
{
    return d == SW_SWEEP_ONE_AT_A_TIME ? "swing" : d == SW_SWEEP_FACTORIAL ? "main effect" : "Spearman rho";
}

static const char *measure_sentence(sw_sweep_design d)
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
static void sensitivity(const sw_sweep_plan *plan, const double *y, const sw_status *status, double *xs, double *ys,
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
static sw_sweep_stat stat_of(double *v, size_t n)
{
    sw_sweep_stat s = { NAN, NAN, NAN, n };
    if (n) {
        s.median = sw_sweep_percentile(v, n, 50);   /* sorts */
        s.min = v[0];
        s.max = v[n - 1];
    }
    return s;
}

/* The per-cell maps over the members, from the member files, a block of rows at a time. */
typedef struct {
    double *earliest, *median, *latest, *spread, *p50, *p90, *highest;   /* [n] each */
    int *wet, *reached;                                                  /* [n] each */
} sweep_maps;

static sw_status combine_maps(const sw_sweep_plan *plan, const sw_status *status, sweep_maps *mp, sw_error *err)
{
    const sw_grid *g = &plan->base_grid;
    size_t M = plan->n_members, nx = g->nx, n_ok = 0;
    for (size_t k = 0; k < M; k++)
        n_ok += status[k] == SW_OK;
    size_t per_row = (n_ok ? n_ok : 1) * nx * (2 * sizeof(double) + 1);
    size_t rows = SWEEP_BLOCK_BYTES / per_row;
    rows = rows < 1 ? 1 : rows > g->ny ? g->ny : rows;
    size_t cells = rows * nx, nb = (n_ok ? n_ok : 1) * cells;
    double *arr = malloc(nb * sizeof *arr), *emx = malloc(nb * sizeof *emx);
    unsigned char *wet = malloc(nb);
    double *a = malloc((n_ok + 1) * sizeof *a), *e = malloc((n_ok + 1) * sizeof *e);
    sw_status st = arr && emx && wet && a && e ? SW_OK : sw_fail(err, SW_ERR_NOMEM, "out of memory combining maps");
    for (size_t j0 = 0; st == SW_OK && j0 < g->ny; j0 += rows) {
        size_t nr = j0 + rows > g->ny ? g->ny - j0 : rows, nc = nr * nx;
        for (size_t k = 0, i = 0; k < M && st == SW_OK; k++) {
            if (status[k] != SW_OK)
                continue;
            char path[SW_PATH_MAX + 32];
            member_file(plan, k, "nc", path, sizeof path);
            st = sw_ncs_member_read_rows(path, g, j0, nr, arr + i * cells, emx + i * cells, wet + i * cells, err);
            i++;
        }
        for (size_t c = 0; st == SW_OK && c < nc; c++) {
            size_t kk = j0 * nx + c, nw = 0, nreach = 0;
            for (size_t i = 0; i < n_ok; i++) {
                if (!wet[i * cells + c])
                    continue;
                double t = arr[i * cells + c];
                a[nw] = isnan(t) ? INFINITY : t;
                e[nw] = emx[i * cells + c];
                nreach += !isnan(t);
                nw++;
            }
            mp->wet[kk] = (int)nw;
            mp->reached[kk] = (int)nreach;
            double med = sw_sweep_percentile(a, nw, 50);   /* sorts a */
            mp->earliest[kk] = nw && isfinite(a[0]) ? a[0] : NAN;
            mp->latest[kk] = nw && isfinite(a[nw - 1]) ? a[nw - 1] : NAN;
            mp->median[kk] = isfinite(med) ? med : NAN;
            mp->spread[kk] = mp->latest[kk] - mp->earliest[kk];
            mp->p50[kk] = sw_sweep_percentile(e, nw, 50);
            mp->p90[kk] = sw_sweep_percentile(e, nw, 90);
            mp->highest[kk] = nw ? e[nw - 1] : NAN;
        }
    }
    free(arr);
    free(emx);
    free(wet);
    free(a);
    free(e);
    return st;
}

/* Everything aggregate() allocates, freed in one place. */
typedef struct {
    double *arrival, *peak, *peak_time, *trough;   /* [M * G] */
    size_t *n_times;                               /* [M] */
    double **time, **eta;                          /* [M] each member's series */
    double *gauge_time, *gauge_eta;                /* [M * T], [M * G * T] */
    double *sens_arr, *sens_peak;                  /* [G * P] */
    double *xs, *ys, *col;                         /* [M] scratch */
    double *maps;                                  /* 7 maps of n doubles */
    int *counts;                                   /* 2 maps of n ints */
    double *depth;                                 /* [n] */
    char *value_text;                              /* [M * P * 48] */
    const char **value_ptr;                        /* [M * P] */
    const char **error_ptr;                        /* [M] */
    unsigned char *failed;                         /* [M] */
    const char **names;                            /* [G] */
    double *gx, *gy;                               /* [G] */
} agg_mem;

static void agg_free(agg_mem *a, size_t M)
{
    for (size_t k = 0; a->time && a->eta && k < M; k++) {
        free(a->time[k]);
        free(a->eta[k]);
    }
    void *all[] = { a->arrival, a->peak, a->peak_time, a->trough, a->n_times, a->time, a->eta, a->gauge_time,
                    a->gauge_eta, a->sens_arr, a->sens_peak, a->xs, a->ys, a->col, a->maps, a->counts, a->depth,
                    a->value_text, a->value_ptr, a->error_ptr, a->failed, a->names, a->gx, a->gy };
    for (size_t i = 0; i < sizeof all / sizeof all[0]; i++)
        free(all[i]);
}

static sw_status aggregate(sw_sweep_plan *plan, const sw_sweep_options *opt, sw_sweep_summary *out, sw_error *err)
{
    const sw_scenario *sc = plan->base;
    size_t M = plan->n_members, P = plan->n_params, G = sc->n_gauges, MG = M * (G ? G : 1);
    const sw_grid *g = &plan->base_grid;
    size_t n = sw_grid_cells(g);
    out->n_members = M;
    out->n_gauges = G;
    out->status = calloc(M, sizeof *out->status);
    out->error = calloc(M, sizeof *out->error);
    out->gauge = calloc(G ? G : 1, sizeof *out->gauge);
    agg_mem a = { 0 };
    a.arrival = malloc(MG * sizeof(double));
    a.peak = malloc(MG * sizeof(double));
    a.peak_time = malloc(MG * sizeof(double));
    a.trough = malloc(MG * sizeof(double));
    a.n_times = calloc(M, sizeof *a.n_times);
    a.time = calloc(M, sizeof *a.time);
    a.eta = calloc(M, sizeof *a.eta);
    a.xs = malloc(M * sizeof(double));
    a.ys = malloc(M * sizeof(double));
    a.col = malloc(M * sizeof(double));
    a.sens_arr = malloc((G ? G : 1) * P * sizeof(double));
    a.sens_peak = malloc((G ? G : 1) * P * sizeof(double));
    a.maps = malloc(7 * n * sizeof(double));
    a.counts = malloc(2 * n * sizeof(int));
    a.depth = malloc(n * sizeof(double));
    a.value_text = calloc(M * P, 48);
    a.value_ptr = malloc(M * P * sizeof *a.value_ptr);
    a.error_ptr = malloc(M * sizeof *a.error_ptr);
    a.failed = calloc(M, 1);
    a.names = malloc((G ? G : 1) * sizeof *a.names);
    a.gx = malloc((G ? G : 1) * sizeof(double));
    a.gy = malloc((G ? G : 1) * sizeof(double));
    sw_status st = SW_OK;
    if (!out->status || !out->error || !out->gauge || !a.arrival || !a.peak || !a.peak_time || !a.trough
        || !a.n_times || !a.time || !a.eta || !a.xs || !a.ys || !a.col || !a.sens_arr || !a.sens_peak || !a.maps
        || !a.counts || !a.depth || !a.value_text || !a.value_ptr || !a.error_ptr || !a.failed || !a.names || !a.gx
        || !a.gy)
        st = sw_fail(err, SW_ERR_NOMEM, "out of memory combining %zu members", M);

    /* each member's file: status, values, gauge statistics and series */
    double values[SW_MAX_SWEEP_PARAMS];
    size_t T = 1;
    for (size_t k = 0; k < M && st == SW_OK; k++) {
        char path[SW_PATH_MAX + 32];
        member_file(plan, k, "nc", path, sizeof path);
        sw_sweep_member_result r;
        st = sw_ncs_member_read(path, P, G, values, &r, err);
        if (st != SW_OK)
            break;
        for (size_t q = 0; q < P; q++)
            if (!(values[q] == plan->member[k].value[q]))
                st = sw_fail(err, SW_ERR_INPUT, "%s holds %s = %.17g, the sweep has %.17g for this member; remove the "
                             "folder %s to start over", path, plan->param[q].name, values[q],
                             plan->member[k].value[q], out->members_dir);
        out->status[k] = r.status;
        if (r.status != SW_OK) {
            out->n_failed++;
            out->error[k] = malloc(strlen(r.error) + 1);
            if (out->error[k])
                memcpy(out->error[k], r.error, strlen(r.error) + 1);
        } else {
            out->n_ok++;
        }
        for (size_t q = 0; q < G; q++) {
            int ok = r.status == SW_OK;
            a.arrival[k * G + q] = ok ? r.arrival_s[q] : NAN;
            a.peak[k * G + q] = ok ? r.peak_m[q] : NAN;
            a.peak_time[k * G + q] = ok ? r.peak_time_s[q] : NAN;
            a.trough[k * G + q] = ok ? r.trough_m[q] : NAN;
        }
        a.n_times[k] = r.n_times;
        a.time[k] = r.time_s;
        a.eta[k] = r.eta_m;
        r.time_s = r.eta_m = NULL;
        T = r.n_times > T ? r.n_times : T;
        sw_sweep_member_result_free(&r);
    }
    if (st == SW_OK) {
        a.gauge_time = malloc(M * T * sizeof(double));
        a.gauge_eta = malloc(MG * T * sizeof(double));
        if (!a.gauge_time || !a.gauge_eta)
            st = sw_fail(err, SW_ERR_NOMEM, "out of memory for the gauge series of %zu members", M);
    }
    if (st == SW_OK) {
        for (size_t k = 0; k < M; k++) {
            for (size_t t = 0; t < T; t++)
                a.gauge_time[k * T + t] = t < a.n_times[k] ? a.time[k][t] : NAN;
            for (size_t q = 0; q < G; q++)
                for (size_t t = 0; t < T; t++)
                    a.gauge_eta[(k * G + q) * T + t] = t < a.n_times[k] ? a.eta[k][q * a.n_times[k] + t] : NAN;
        }
        /* per gauge: min / median / max and the ranking */
        for (size_t q = 0; q < G; q++) {
            sw_sweep_gauge_summary *gs = &out->gauge[q];
            snprintf(gs->name, sizeof gs->name, "%s", sc->gauges[q].name);
            size_t na = 0, np = 0;
            for (size_t k = 0; k < M; k++) {
                double pk = a.peak[k * G + q], ar = a.arrival[k * G + q];
                if (out->status[k] != SW_OK || isnan(pk))
                    continue;   /* failed, or the gauge is dry in this member */
                a.xs[na++] = isnan(ar) ? INFINITY : ar;
                gs->not_reached += isnan(ar);
                a.ys[np++] = pk;
            }
            gs->arrival = stat_of(a.xs, na);
            gs->peak = stat_of(a.ys, np);
            for (size_t k = 0; k < M; k++)
                a.col[k] = a.arrival[k * G + q];
            sensitivity(plan, a.col, out->status, a.xs, a.ys, gs->arrival_rank);
            for (size_t k = 0; k < M; k++)
                a.col[k] = a.peak[k * G + q];
            sensitivity(plan, a.col, out->status, a.xs, a.ys, gs->peak_rank);
            for (size_t r = 0; r < P; r++) {
                a.sens_arr[q * P + gs->arrival_rank[r].param] = gs->arrival_rank[r].effect;
                a.sens_peak[q * P + gs->peak_rank[r].param] = gs->peak_rank[r].effect;
            }
            a.names[q] = sc->gauges[q].name;
            a.gx[q] = sc->gauges[q].x_m;
            a.gy[q] = sc->gauges[q].y_m;
        }
        sweep_maps mp = { a.maps, a.maps + n, a.maps + 2 * n, a.maps + 3 * n, a.maps + 4 * n, a.maps + 5 * n,
                          a.maps + 6 * n, a.counts, a.counts + n };
        st = combine_maps(plan, out->status, &mp, err);
    }
    if (st == SW_OK) {   /* the base depth, on the base grid */
        sw_scenario *copy = malloc(sizeof *copy);
        if (!copy)
            st = sw_fail(err, SW_ERR_NOMEM, "out of memory");
        else {
            *copy = *sc;   /* shares sc's text; never freed through the copy */
            copy->grid = *g;
            copy->has_grid = 1;
            st = sw_seabed_build(copy, a.depth, err);
            free(copy);
        }
    }
    if (st == SW_OK) {
        for (size_t k = 0; k < M; k++) {
            for (size_t q = 0; q < P; q++) {
                char *t = a.value_text + (k * P + q) * 48;
                sw_sweep_format_value(&plan->param[q], plan->member[k].value[q], t, 48);
                a.value_ptr[k * P + q] = t;
            }
            a.failed[k] = out->status[k] != SW_OK;
            a.error_ptr[k] = out->error[k] ? out->error[k] : "";
        }
        const char *pname[SW_MAX_SWEEP_PARAMS], *punit[SW_MAX_SWEEP_PARAMS];
        for (size_t q = 0; q < P; q++) {
            pname[q] = plan->param[q].name;
            punit[q] = unit_text(&plan->param[q]);
        }
        int spearman = sc->sweep.design == SW_SWEEP_LATIN_HYPERCUBE;
        sw_ncs_sweep d = {
            .title = sc->title, .history = opt->history ? opt->history : "", .scenario_text = sc->text,
            .version = SW_VERSION, .caution = sw_caution(), .time_origin = sc->origin,
            .design = DESIGN_NAME[sc->sweep.design], .measure = measure_sentence(sc->sweep.design),
            .map_method = "nearest: each base-grid cell takes the value of the member cell that contains its centre "
                          "(identical when a member is on the base grid); cells a member does not cover are left out",
            .seed = sc->sweep.seed, .has_seed = spearman,
            .n_params = P, .param_name = pname, .param_units = punit,
            .n_members = M, .value = plan->values, .value_text = a.value_ptr, .failed = a.failed,
            .error = a.error_ptr,
            .n_gauges = G, .gauge_name = a.names, .gauge_x = a.gx, .gauge_y = a.gy,
            .arrival_s = a.arrival, .peak_m = a.peak, .peak_time_s = a.peak_time, .trough_m = a.trough,
            .n_times = T, .gauge_time_s = a.gauge_time, .gauge_eta_m = a.gauge_eta,
            .arrival_sens = a.sens_arr, .peak_sens = a.sens_peak,
            .sens_units_arrival = spearman ? "1" : "s", .sens_units_peak = spearman ? "1" : "m",
            .grid = g, .depth_m = a.depth,
            .arrival_earliest_s = a.maps, .arrival_median_s = a.maps + n, .arrival_latest_s = a.maps + 2 * n,
            .arrival_spread_s = a.maps + 3 * n, .eta_max_p50_m = a.maps + 4 * n, .eta_max_p90_m = a.maps + 5 * n,
            .eta_max_highest_m = a.maps + 6 * n, .members_wet = a.counts, .members_reached = a.counts + n,
        };
        snprintf(out->sweep_path, sizeof out->sweep_path, "%.1000s/sweep.nc", plan->out_dir);
        snprintf(out->markdown_path, sizeof out->markdown_path, "%.1000s/sweep.md", plan->out_dir);
        st = sw_ncs_sweep_write(out->sweep_path, &d, err);
        if (st == SW_OK)
            st = sw_sweep_write_markdown(out->markdown_path, plan, out, err);
    }
    agg_free(&a, M);
    return st;
}

/* ---- reports -------------------------------------------------------------------------------- */

/* An arrival time for a table: "12 min 30 s", "not reached" (+Inf) or "-" (NaN). */
static void fmt_arrival(double s, char *buf, size_t n)
{
    if (isinf(s))
        snprintf(buf, n, "not reached");
    else
        sw_format_duration(s, buf, n);
}

static void fmt_peak(double m, char *buf, size_t n)
{
    if (isnan(m))
        snprintf(buf, n, "-");
    else
        snprintf(buf, n, "%.3f", m);
}

/* An effect with its unit: a duration, metres, or a signed correlation. */
static void fmt_effect(const sw_sweep_plan *plan, int arrival, double e, char *buf, size_t n)
{
    if (isnan(e))
        snprintf(buf, n, "-");
    else if (plan->base->sweep.design == SW_SWEEP_LATIN_HYPERCUBE)
        snprintf(buf, n, "rho %+.2f", e);
    else if (arrival)
        sw_format_duration(e, buf, n);
    else
        snprintf(buf, n, "%.3f m", e);
}

/* "amplitude_factor 0.5, 2" style list of a parameter's values as written. */
static void fmt_levels(const sw_sweep_param *p, char *buf, size_t n)
{
    char a[64], b[64];
    if (p->n_levels == 0) {
        sw_sweep_format_value(p, p->lo, a, sizeof a);
        sw_sweep_format_value(p, p->hi, b, sizeof b);
        snprintf(buf, n, "%s .. %s (continuous)", a, b);
        return;
    }
    size_t used = 0;
    buf[0] = '\0';
    for (size_t l = 0; l < p->n_levels && used + 16 < n; l++) {
        sw_sweep_format_value(p, p->level[l], a, sizeof a);
        used += (size_t)snprintf(buf + used, n - used, "%s%s", l ? ", " : "", a);
    }
}

static void print_params(FILE *f, const sw_sweep_plan *plan, int markdown)
{
    if (markdown)
        fprintf(f, "| parameter | base value | values |\n|---|---|---|\n");
    else
        fprintf(f, "%-28s %-12s %s\n", "Parameter", "base", "values");
    for (size_t q = 0; q < plan->n_params; q++) {
        char base[64], levels[1024];
        sw_sweep_format_value(&plan->param[q], plan->base_value[q], base, sizeof base);
        fmt_levels(&plan->param[q], levels, sizeof levels);
        if (markdown)
            fprintf(f, "| `%s` | %s | %s |\n", plan->param[q].name, base, levels);
        else
            fprintf(f, "%-28s %-12s %s\n", plan->param[q].name, base, levels);
    }
}

/* The min / median / max table and the rankings (top `top` parameters; all in Markdown). */
static void print_gauges(FILE *f, const sw_sweep_plan *plan, const sw_sweep_summary *s, int markdown)
{
    if (s->n_gauges == 0) {
        fprintf(f, "%sNo gauges: see the maps in %s.\n", markdown ? "\n" : "\n", s->sweep_path);
        return;
    }
    char t[6][48];
    if (markdown)
        fprintf(f, "\n| gauge | first arrival: earliest | median | latest | peak m: min | median | max |\n"
                   "|---|---|---|---|---|---|---|\n");
    else
        fprintf(f, "\n%-24s %44s %26s\n%-24s %14s %14s %14s %8s %8s %8s\n", "",
                "-------------- first arrival -------------", "------- peak (m) -------", "Gauge", "earliest",
                "median", "latest", "min", "median", "max");
    for (size_t q = 0; q < s->n_gauges; q++) {
        const sw_sweep_gauge_summary *g = &s->gauge[q];
        fmt_arrival(g->arrival.min, t[0], 48);
        fmt_arrival(g->arrival.median, t[1], 48);
        fmt_arrival(g->arrival.max, t[2], 48);
        fmt_peak(g->peak.min, t[3], 48);
        fmt_peak(g->peak.median, t[4], 48);
        fmt_peak(g->peak.max, t[5], 48);
        if (markdown)
            fprintf(f, "| %s | %s | %s | %s | %s | %s | %s |\n", g->name, t[0], t[1], t[2], t[3], t[4], t[5]);
        else
            fprintf(f, "%-24s %14s %14s %14s %8s %8s %8s\n", g->name, t[0], t[1], t[2], t[3], t[4], t[5]);
    }
    fprintf(f, "%s(arrival: first time |eta| >= the arrival threshold; over the %zu member%s that ran", markdown ? "\n" : "",
            s->n_ok, s->n_ok == 1 ? "" : "s");
    size_t worst = 0;
    for (size_t q = 0; q < s->n_gauges; q++)
        worst = s->gauge[q].not_reached > worst ? s->gauge[q].not_reached : worst;
    fprintf(f, "%s)\n", worst ? "; \"not reached\": in some members the wave never reached the gauge within the "
                                "duration" : "");

    sw_sweep_design d = plan->base->sweep.design;
    size_t top = markdown ? plan->n_params : (plan->n_params < 3 ? plan->n_params : 3);
    for (int which = 0; which < 2; which++) {
        fprintf(f, "\n%s%s moves %s most (%s)%s\n", markdown ? "### " : "", which ? "Peak: which parameter"
                : "First arrival: which parameter", which ? "it" : "it", measure_name(d), markdown ? "\n" : "");
        if (markdown) {
            fprintf(f, "| gauge |");
            for (size_t r = 0; r < top; r++)
                fprintf(f, " %zu. |", r + 1);
            fprintf(f, "\n|---|");
            for (size_t r = 0; r < top; r++)
                fprintf(f, "---|");
            fprintf(f, "\n");
        }
        for (size_t q = 0; q < s->n_gauges; q++) {
            const sw_sweep_rank *rank = which ? s->gauge[q].peak_rank : s->gauge[q].arrival_rank;
            fprintf(f, markdown ? "| %s |" : "  %-24s", s->gauge[q].name);
            for (size_t r = 0; r < top; r++) {
                char e[48], cell[SW_TARGET_MAX + 64];
                fmt_effect(plan, !which, rank[r].effect, e, sizeof e);
                snprintf(cell, sizeof cell, "%s (%s)", plan->param[rank[r].param].name, e);
                fprintf(f, markdown ? " %s |" : " %-34s", cell);
            }
            fprintf(f, "\n");
        }
    }
    fprintf(f, "%s(%s)\n", markdown ? "\n" : "", measure_sentence(d));
}

static void print_failed(FILE *f, const sw_sweep_plan *plan, const sw_sweep_summary *s, int markdown)
{
    if (!s->n_failed)
        return;
    fprintf(f, "\n%s%zu member%s failed (the others are not affected):\n%s", markdown ? "### " : "", s->n_failed,
            s->n_failed == 1 ? "" : "s", markdown ? "\n" : "");
    for (size_t k = 0; k < s->n_members; k++) {
        if (s->status[k] == SW_OK)
            continue;
        char label[1024];
        sw_sweep_member_label(plan, k, label, sizeof label);
        fprintf(f, markdown ? "- m%05zu (%s): %s\n" : "  m%05zu (%s): %s\n", k, label, s->error[k] ? s->error[k] : "");
    }
}

void sw_sweep_report(FILE *f, const sw_sweep_plan *plan, const sw_sweep_summary *s)
{
    char wall[48];
    sw_format_duration(s->wall_s, wall, sizeof wall);
    fprintf(f, "\nSweep of %s: %s design, %zu members: %zu ran, %zu failed", plan->base->title,
            DESIGN_NAME[plan->base->sweep.design], s->n_members, s->n_ok, s->n_failed);
    if (s->n_resumed)
        fprintf(f, " (%zu kept from an earlier attempt)", s->n_resumed);
    if (s->members_parallel > 1)
        fprintf(f, "\nThis attempt: %s wall time, members side by side (%d at a time, one thread each)\n\n", wall,
                s->members_parallel);
    else
        fprintf(f, "\nThis attempt: %s wall time, members one after another with %d thread%s each\n\n", wall,
                s->threads, s->threads == 1 ? "" : "s");
    print_params(f, plan, 0);
    print_gauges(f, plan, s, 0);
    print_failed(f, plan, s, 0);
    fprintf(f, "\nWritten:\n  %s\n  %s\n  %s/ (one file per member; mNNNNN.scn repeats a member with "
               "`shoreward run`)\n", s->sweep_path, s->markdown_path, s->members_dir);
    fprintf(f, "\n%s\n", sw_caution());
}

sw_status sw_sweep_write_markdown(const char *path, const sw_sweep_plan *plan, const sw_sweep_summary *s,
                                  sw_error *err)
{
    sw_atomic_file af;
    sw_status st = sw_atomic_open(&af, path, err);
    if (st != SW_OK)
        return st;
    FILE *f = af.f;
    fprintf(f, "# Sweep: %s\n\n> **%s**\n\n", plan->base->title, sw_caution());
    fprintf(f, "Scenario `%s`, %s design, %zu members: %zu ran, %zu failed.\n\n", plan->base->path,
            DESIGN_NAME[plan->base->sweep.design], s->n_members, s->n_ok, s->n_failed);
    print_params(f, plan, 1);
    print_gauges(f, plan, s, 1);
    print_failed(f, plan, s, 1);
    fprintf(f, "\n### Members\n\n| member | status |");
    for (size_t q = 0; q < plan->n_params; q++)
        fprintf(f, " %s |", plan->param[q].name);
    fprintf(f, "\n|---|---|");
    for (size_t q = 0; q < plan->n_params; q++)
        fprintf(f, "---|");
    fprintf(f, "\n");
    for (size_t k = 0; k < s->n_members; k++) {
        fprintf(f, "| m%05zu | %s |", k, s->status[k] == SW_OK ? "ok" : sw_status_name(s->status[k]));
        for (size_t q = 0; q < plan->n_params; q++) {
            char v[64];
            sw_sweep_format_value(&plan->param[q], plan->member[k].value[q], v, sizeof v);
            fprintf(f, " %s |", v);
        }
        fprintf(f, "\n");
    }
    fprintf(f, "\nMaps (earliest, median and latest arrival, arrival spread, eta_max percentiles) are in `%s`.\n",
            s->sweep_path);
    return sw_atomic_close(&af, err);
}

static void add_number(cJSON *o, const char *key, double v)
{
    if (isfinite(v))
        cJSON_AddNumberToObject(o, key, v);
    else
        cJSON_AddNullToObject(o, key);
}

static cJSON *params_json(const sw_sweep_plan *plan)
{
    cJSON *arr = cJSON_CreateArray();
    for (size_t q = 0; q < plan->n_params; q++) {
        const sw_sweep_param *p = &plan->param[q];
        cJSON *o = cJSON_CreateObject();
        cJSON_AddStringToObject(o, "name", p->name);
        cJSON_AddStringToObject(o, "units", unit_text(p));
        add_number(o, "base", plan->base_value[q]);
        cJSON *lv = cJSON_AddArrayToObject(o, "values");
        for (size_t l = 0; l < p->n_levels; l++)
            cJSON_AddItemToArray(lv, cJSON_CreateNumber(p->level[l]));
        if (p->is_range) {
            cJSON_AddNumberToObject(o, "lo", p->lo);
            cJSON_AddNumberToObject(o, "hi", p->hi);
        }
        cJSON_AddItemToArray(arr, o);
    }
    return arr;
}

char *sw_sweep_json(const sw_sweep_plan *plan, const sw_sweep_summary *s)
{
    cJSON *o = cJSON_CreateObject();
    if (!o)
        return NULL;
    cJSON_AddStringToObject(o, "scenario", plan->base->path);
    cJSON_AddStringToObject(o, "title", plan->base->title);
    cJSON_AddStringToObject(o, "design", DESIGN_NAME[plan->base->sweep.design]);
    cJSON_AddStringToObject(o, "measure", measure_name(plan->base->sweep.design));
    cJSON_AddStringToObject(o, "measure_meaning", measure_sentence(plan->base->sweep.design));
    cJSON_AddNumberToObject(o, "members", (double)s->n_members);
    cJSON_AddNumberToObject(o, "members_ok", (double)s->n_ok);
    cJSON_AddNumberToObject(o, "members_failed", (double)s->n_failed);
    cJSON_AddNumberToObject(o, "members_resumed", (double)s->n_resumed);
    cJSON_AddNumberToObject(o, "members_parallel", s->members_parallel);
    cJSON_AddNumberToObject(o, "threads_per_member", s->threads);
    cJSON_AddNumberToObject(o, "wall_s", s->wall_s);
    cJSON_AddItemToObject(o, "parameters", params_json(plan));
    cJSON *ms = cJSON_AddArrayToObject(o, "member_list");
    for (size_t k = 0; k < s->n_members; k++) {
        cJSON *m = cJSON_CreateObject();
        cJSON_AddNumberToObject(m, "member", (double)k);
        cJSON_AddStringToObject(m, "status", s->status[k] == SW_OK ? "ok" : sw_status_name(s->status[k]));
        if (s->error[k])
            cJSON_AddStringToObject(m, "error", s->error[k]);
        cJSON *v = cJSON_AddObjectToObject(m, "values");
        for (size_t q = 0; q < plan->n_params; q++)
            cJSON_AddNumberToObject(v, plan->param[q].name, plan->member[k].value[q]);
        cJSON_AddItemToArray(ms, m);
    }
    cJSON *gs = cJSON_AddArrayToObject(o, "gauges");
    for (size_t q = 0; q < s->n_gauges; q++) {
        const sw_sweep_gauge_summary *g = &s->gauge[q];
        cJSON *e = cJSON_CreateObject();
        cJSON_AddStringToObject(e, "name", g->name);
        const sw_sweep_stat *st[2] = { &g->arrival, &g->peak };
        static const char *const key[2] = { "arrival_s", "peak_m" };
        for (int w = 0; w < 2; w++) {
            cJSON *x = cJSON_AddObjectToObject(e, key[w]);
            add_number(x, "min", st[w]->min);
            add_number(x, "median", st[w]->median);
            add_number(x, "max", st[w]->max);
            cJSON_AddNumberToObject(x, "members", (double)st[w]->n);
        }
        cJSON_AddNumberToObject(e, "not_reached", (double)g->not_reached);
        static const char *const rk[2] = { "arrival_ranking", "peak_ranking" };
        for (int w = 0; w < 2; w++) {
            cJSON *arr = cJSON_AddArrayToObject(e, rk[w]);
            const sw_sweep_rank *r = w ? g->peak_rank : g->arrival_rank;
            for (size_t i = 0; i < plan->n_params; i++) {
                cJSON *x = cJSON_CreateObject();
                cJSON_AddStringToObject(x, "parameter", plan->param[r[i].param].name);
                add_number(x, "effect", r[i].effect);
                cJSON_AddNumberToObject(x, "members", (double)r[i].n);
                cJSON_AddItemToArray(arr, x);
            }
        }
        cJSON_AddItemToArray(gs, e);
    }
    cJSON *files = cJSON_AddObjectToObject(o, "files");
    cJSON_AddStringToObject(files, "sweep", s->sweep_path);
    cJSON_AddStringToObject(files, "markdown", s->markdown_path);
    cJSON_AddStringToObject(files, "members", s->members_dir);
    cJSON_AddStringToObject(o, "caution", sw_caution());
    char *txt = cJSON_Print(o);
    cJSON_Delete(o);
    return txt;
}

/* How the sweep would run: members at once, threads each, peak memory, and estimated seconds. */
typedef struct {
    size_t runnable, failing;
    int par, threads;
    double cost, max_cost;
    size_t max_bytes, combine_bytes, max_cells;
    double seconds;   /* NaN when unknown */
} plan_figures;

static plan_figures figures(const sw_sweep_plan *plan, int threads, int members_parallel, double rate1,
                            double rate_all)
{
    plan_figures f = { 0 };
    f.threads = threads > 0 ? threads : omp_get_max_threads();
    for (size_t k = 0; k < plan->n_members; k++) {
        const sw_sweep_member *m = &plan->member[k];
        if (m->status != SW_OK) {
            f.failing++;
            continue;
        }
        f.runnable++;
        f.cost += m->cost;
        f.max_cost = fmax(f.max_cost, m->cost);
        f.max_bytes = m->bytes > f.max_bytes ? m->bytes : f.max_bytes;
        size_t cells = sw_grid_cells(&m->grid);
        f.max_cells = cells > f.max_cells ? cells : f.max_cells;
    }
    f.par = members_parallel > 0 ? members_parallel
          : f.threads > 1 && f.max_cells <= SW_SWEEP_SMALL_CELLS ? f.threads : 1;   /* as sw_sweep_run */
    if ((size_t)f.par > f.runnable)
        f.par = f.runnable > 0 ? (int)f.runnable : 1;
    size_t n = sw_grid_cells(&plan->base_grid), per_row = (f.runnable ? f.runnable : 1) * plan->base_grid.nx * 17;
    size_t block = per_row * plan->base_grid.ny;
    if (block > SWEEP_BLOCK_BYTES)
        block = SWEEP_BLOCK_BYTES > per_row ? SWEEP_BLOCK_BYTES : per_row;
    f.combine_bytes = block + n * (7 * sizeof(double) + 3 * sizeof(int) + sizeof(double));
    double rate = f.par > 1 ? rate1 : rate_all;
    f.seconds = NAN;
    if (rate > 0)
        f.seconds = f.par > 1 ? fmax(f.cost / (rate * f.par), f.max_cost / rate) : f.cost / rate;
    return f;
}

void sw_sweep_report_plan(FILE *f, const sw_sweep_plan *plan, int threads, int members_parallel, double rate1,
                          double rate_all)
{
    plan_figures x = figures(plan, threads, members_parallel, rate1, rate_all);
    const sw_sweep_spec *sw = &plan->base->sweep;
    fprintf(f, "\nSweep      %s design, %zu members", DESIGN_NAME[sw->design], plan->n_members);
    if (sw->design == SW_SWEEP_LATIN_HYPERCUBE)
        fprintf(f, " (seed %llu)", sw->seed);
    fprintf(f, "; %zu can run, %zu cannot\n", x.runnable, x.failing);
    for (size_t q = 0; q < plan->n_params; q++) {
        char levels[1024];
        fmt_levels(&plan->param[q], levels, sizeof levels);
        fprintf(f, "           %s: %s\n", plan->param[q].name, levels);
    }
    if (x.par > 1)
        fprintf(f, "Members    small (largest %zu cells): %d at a time, one thread each\n", x.max_cells, x.par);
    else
        fprintf(f, "Members    one after another with %d thread%s (largest %zu cells)\n", x.threads,
                x.threads == 1 ? "" : "s", x.max_cells);
    fprintf(f, "Memory     about %.1f MB at once (%d x %.1f MB for members, %.1f MB to combine them)\n",
            ((double)x.par * (double)x.max_bytes + (double)x.combine_bytes) / (1024.0 * 1024.0), x.par,
            (double)x.max_bytes / (1024.0 * 1024.0), (double)x.combine_bytes / (1024.0 * 1024.0));
    if (!isnan(x.seconds)) {
        char buf[48];
        sw_format_duration(x.seconds, buf, sizeof buf);
        fprintf(f, "Estimate   about %s for %.3g cell-updates (at %.3g cell-updates/s %s, this machine's)\n", buf, x.cost,
                x.par > 1 ? rate1 : rate_all, x.par > 1 ? "per thread" : "with all threads");
    }
    for (size_t k = 0; k < plan->n_members; k++)
        if (plan->member[k].status != SW_OK)
            fprintf(f, "           member m%05zu cannot run: %s\n", k, plan->member[k].error ? plan->member[k].error : "");
}

char *sw_sweep_plan_json(const sw_sweep_plan *plan, int threads, int members_parallel, double rate1,
                         double rate_all)
{
    plan_figures x = figures(plan, threads, members_parallel, rate1, rate_all);
    cJSON *o = cJSON_CreateObject();
    if (!o)
        return NULL;
    cJSON_AddStringToObject(o, "design", DESIGN_NAME[plan->base->sweep.design]);
    cJSON_AddNumberToObject(o, "members", (double)plan->n_members);
    cJSON_AddNumberToObject(o, "members_runnable", (double)x.runnable);
    cJSON_AddNumberToObject(o, "members_parallel", x.par);
    cJSON_AddNumberToObject(o, "memory_bytes", (double)x.par * (double)x.max_bytes + (double)x.combine_bytes);
    add_number(o, "estimated_seconds", x.seconds);
    cJSON_AddItemToObject(o, "parameters", params_json(plan));
    cJSON *bad = cJSON_AddArrayToObject(o, "cannot_run");
    for (size_t k = 0; k < plan->n_members; k++)
        if (plan->member[k].status != SW_OK) {
            cJSON *m = cJSON_CreateObject();
            cJSON_AddNumberToObject(m, "member", (double)k);
            cJSON_AddStringToObject(m, "error", plan->member[k].error ? plan->member[k].error : "");
            cJSON_AddItemToArray(bad, m);
        }
    char *txt = cJSON_Print(o);
    cJSON_Delete(o);
    return txt;
}

sw_status sw_sweep_check(const sw_scenario *sc, double rate_all, FILE *f, char **json, sw_error *err)
{
    int threads = omp_get_max_threads();
    sw_sweep_plan plan;
    sw_status st = sw_sweep_plan_build(sc, NULL, &plan, err);
    if (st != SW_OK)
        return st;
    const sw_layout *layout = sw_layout_find(sc->layout, NULL);
    /* the one-thread rate, cached as check's all-thread one (estimate.h); cache trouble only measures */
    sw_rate_info one = {0};
    double rate1 = layout && sw_estimate_rate_cached(layout, sc->precision, 1, 0, SW_RATE_CALIBRATION_S, &one, NULL) == SW_OK
                 ? one.cells_per_s : 0;
    omp_set_num_threads(threads);
    if (json) {
        cJSON *o = *json ? cJSON_Parse(*json) : cJSON_CreateObject();
        char *add = sw_sweep_plan_json(&plan, threads, 0, rate1, rate_all);
        cJSON *sweep = add ? cJSON_Parse(add) : NULL;
        free(add);
        char *txt = NULL;
        if (o && sweep) {
            cJSON_AddItemToObject(o, "sweep", sweep);
            sweep = NULL;
            txt = cJSON_Print(o);
        }
        cJSON_Delete(sweep);
        cJSON_Delete(o);
        if (!txt)
            st = sw_fail(err, SW_ERR_NOMEM, "out of memory printing the sweep plan");
        else {
            free(*json);
            *json = txt;
        }
    } else {
        sw_sweep_report_plan(f, &plan, threads, 0, rate1, rate_all);
    }
    sw_sweep_plan_free(&plan);
    return st;
}
