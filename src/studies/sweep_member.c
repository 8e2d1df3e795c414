/* sweep_member.c - one sweep member: its scenario, its setup, its run in memory, its files' names, and
 * what it produced (sweep_member.h).
 *
 * How a member is made. Every parameter except depth_factor becomes one or more scenario overrides
 * ("section.key = value" text, sw_scenario_override), collected into one list and applied in one
 * re-parse: key parameters first, then resolution_factor (grid.nx/ny/dx/dy from the effective grid),
 * amplitude_factor (each source's amplitude, and a pair's subsidence), the source offsets (each
 * source's x, y), and the fault parameters (each [fault]'s slip_factor, x_offset, y_offset and
 * rotation, which apply to a segment table too), each computed from the values already in the list.
 * depth_factor multiplies the depth field after the setup is built; dt, the step count and the sizes are
 * then derived again by the same function that sw_setup_build uses (sw_setup_derive), and the initial
 * elevation is built again when a fault uses the depth (Kajiura filter, horizontal term).
 *
 * Invariant: a member is a function of the plan and its number alone, so it gives the same results
 * whichever members ran before it, on however many threads, in whichever attempt.
 */
#define _XOPEN_SOURCE 700   /* realpath, with POSIX 2008 */
#include "studies/sweep_impl.h"

#include <limits.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/omp_compat.h"
#include "run/run.h"
#include "run/setup.h"

/* <out_dir>/members/mNNNNN.<ext> (see sweep_impl.h); the folder is cut at 960 characters, which
 * sw_sweep_run keeps paths below. */
void swp_member_file(const sw_sweep_plan *plan, size_t k, const char *ext, char *out, size_t n)
{
    snprintf(out, n, "%.960s/members/m%05zu.%.3s", plan->out_dir, k % 100000, ext);   /* members < 100000 */
}

/* ---- a member's scenario ------------------------------------------------------------------ */

typedef struct {
    char target[SW_TARGET_MAX];
    char value[SW_PATH_MAX];
    double num;       /* the value as a number (NaN for paths) */
} ov_entry;

typedef struct {
    size_t n;
    ov_entry e[SW_MAX_SWEEP_PARAMS + 4 + 6 * SW_MAX_SOURCES + 5 * SW_MAX_FAULTS];
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

/* The shortest of "%.15g", "%.16g" and "%.17g" that strtod reads back as exactly v, into buf (size n), so
 * a member file shows "0.4 m", not "0.40000000000000002 m" (the same rule as swp_override_text). */
static void shortest_text(double v, char *buf, size_t n)
{
    for (int digits = 15; digits <= 17; digits++) {
        snprintf(buf, n, "%.*g", digits, v);
        if (digits == 17 || strtod(buf, NULL) == v)
            return;
    }
}

static void ov_set_number(ov_list *l, const char *target, double v, const char *unit)
{
    char text[64], num[32];
    shortest_text(v, num, sizeof num);
    if (unit[0])
        snprintf(text, sizeof text, "%s %s", num, unit);
    else
        snprintf(text, sizeof text, "%s", num);
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

/* The fault parameters of member k: every [fault]'s slip_factor times slip_factor, its offsets plus
 * fault_x_offset and fault_y_offset (m, or deg on a geographic grid, as the file writes them), its rotation
 * plus fault_rotation (every section turns about the same centroid, faults.c, so the whole rupture turns
 * rigidly). Each starts from the value already in the list (a SECTION.KEY parameter), else the base's. */
static void fault_overrides(const sw_sweep_plan *plan, size_t k, ov_list *l)
{
    const sw_scenario *sc = plan->base;
    const double f = member_builtin(plan, k, SW_SWEEP_SLIP_FACTOR, 1.0);
    const double ox = member_builtin(plan, k, SW_SWEEP_FAULT_X_OFFSET, 0.0);
    const double oy = member_builtin(plan, k, SW_SWEEP_FAULT_Y_OFFSET, 0.0);
    const double rot = member_builtin(plan, k, SW_SWEEP_FAULT_ROTATION, 0.0);
    const int geo = sw_grid_geographic(&sc->grid);
    char target[SW_TARGET_MAX];
    for (size_t i = 0; i < sc->n_faults; i++) {
        const sw_fault_spec *fs = &sc->faults[i];
        if (f != 1.0) {
            snprintf(target, sizeof target, "fault %s.slip_factor", fs->name);
            ov_set_number(l, target, f * ov_get(l, target, fs->slip_factor), "");
        }
        /* offsets in the unit the file writes them in: held in metres once placed (scenario.h) */
        const int placed = sc->positions_placed;
        const double base[2] = { geo && placed ? sw_grid_to_deg(&sc->grid, fs->x_offset_m) : fs->x_offset_m,
                                 geo && placed ? sw_grid_to_deg(&sc->grid, fs->y_offset_m) : fs->y_offset_m };
        const double off[2] = { ox, oy };
        for (int a = 0; a < 2; a++)
            if (off[a] != 0.0) {
                snprintf(target, sizeof target, "fault %s.%s", fs->name, a ? "y_offset" : "x_offset");
                ov_set_number(l, target, ov_get(l, target, base[a]) + off[a], geo ? "deg" : "m");
            }
        if (rot != 0.0) {
            snprintf(target, sizeof target, "fault %s.rotation", fs->name);
            ov_set_number(l, target, fmod(ov_get(l, target, fs->rotation_deg) + rot, 360.0), "deg");   /* a turn is 0 */
        }
    }
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
        swp_override_text(p, plan->member[k].value[q], text, sizeof text);
        ov_set(l, p->target, text, plan->member[k].value[q]);
    }
    double r = member_builtin(plan, k, SW_SWEEP_RESOLUTION_FACTOR, 1.0);
    if (r != 1.0) {   /* the same extent in round(n r) cells (a seabed file is read up to its outer cells' edges) */
        /* spacings in the unit the file writes them in: m, or deg on a geographic grid (scenario.h) */
        const int geo = sw_grid_geographic(&sc->grid);
        const double gdx = geo ? sw_grid_to_deg(&sc->grid, sc->grid.dx_m) : sc->grid.dx_m;
        const double gdy = geo ? sw_grid_to_deg(&sc->grid, sc->grid.dy_m) : sc->grid.dy_m;
        double nx = ov_get(l, "grid.nx", (double)sc->grid.nx), ny = ov_get(l, "grid.ny", (double)sc->grid.ny);
        double dx = ov_get(l, "grid.dx", gdx);
        double dy = ov_get(l, "grid.dy", sc->grid.dy_m == sc->grid.dx_m ? dx : gdy);
        double nx2 = fmax(1.0, (double)llround(nx * r)), ny2 = fmax(1.0, (double)llround(ny * r));
        snprintf(text, sizeof text, "%.0f", nx2);
        ov_set(l, "grid.nx", text, nx2);
        snprintf(text, sizeof text, "%.0f", ny2);
        ov_set(l, "grid.ny", text, ny2);
        ov_set_number(l, "grid.dx", nx * dx / nx2, geo ? "deg" : "m");
        ov_set_number(l, "grid.dy", ny * dy / ny2, geo ? "deg" : "m");
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
                snprintf(tt, sizeof tt, "source %s.subsidence", s->name);
                double trough = ov_get(l, tt, s->trough_m == s->amplitude_m ? amp : s->trough_m);
                ov_set_number(l, tt, f * trough, "m");
            }
            ov_set_number(l, target, f * amp, "m");
        }
        /* positions and their offsets in the unit the file writes them in: m, or deg on a geographic grid */
        const int geo = sw_grid_geographic(&sc->grid);
        const double off[2] = { ox, oy };
        const int placed = sc->positions_placed;   /* else as written: deg on a geographic grid */
        const double base[2] = { geo && placed ? sw_grid_to_deg(&sc->grid, s->x_m) : s->x_m,
                                 geo && placed ? sw_grid_to_deg(&sc->grid, s->y_m) : s->y_m };
        for (int a = 0; a < 2; a++)
            if (off[a] != 0.0) {
                snprintf(target, sizeof target, "source %s.%s", s->name, a ? "y" : "x");
                ov_set_number(l, target, ov_get(l, target, base[a]) + off[a], geo ? "deg" : "m");
            }
    }
    fault_overrides(plan, k, l);
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
    for (size_t i = 0; i < sc->n_faults; i++) {
        const sw_fault_spec *fs = &sc->faults[i];
        if (!fs->segments[0] || sw_scenario_resolve(sc, fs->segments, rel, sizeof rel, NULL) != SW_OK
            || !realpath(rel, abs_path) || strlen(abs_path) >= 180)
            continue;
        snprintf(target, sizeof target, "fault %s.segments", fs->name);
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
            swp_member_file(plan, k, "scn", out->path, sizeof out->path);
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
    sw_status st = sw_setup_derive(sc, s, change, err);
    if (st == SW_OK && sw_setup_faults_use_depth(s)) {   /* the Kajiura filter and the slope term see the new depth */
        SW_OMP(critical(sw_netcdf))   /* a file source is read again */
        st = sw_setup_sources(sc, s, err);
    }
    return st;
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

void sw_sweep_member_result_free(sw_sweep_member_result *r)
{
    if (!r)
        return;
    free(r->time_s);
    free(r->eta_m);
    free(r->arrival_map_s);
    free(r->eta_max_map_m);
    free(r->wet);
    r->time_s = r->eta_m = r->arrival_map_s = r->eta_max_map_m = NULL;
    r->wet = NULL;
    r->n_times = r->n_cells = 0;
}
