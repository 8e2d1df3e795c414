/* sweep_report.c - what a sweep tells its user: the summary for the terminal, sweep.md, the JSON
 * object, and the plan that `shoreward check` prints before a sweep (members, memory, time).
 *
 * Invariant: reports only read the plan and the summary; sweep.md goes through atomic_file.h like
 * every other file.
 */
#include "studies/sweep_impl.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/atomic_file.h"
#include "base/omp_compat.h"
#include "model/layout.h"
#include "outputs/report.h"
#include "run/run.h"
#include "studies/estimate.h"

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
                : "First arrival: which parameter", which ? "it" : "it", swp_measure_name(d), markdown ? "\n" : "");
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
    fprintf(f, "%s(%s)\n", markdown ? "\n" : "", swp_measure_sentence(d));
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
            swp_design_name(plan->base->sweep.design), s->n_members, s->n_ok, s->n_failed);
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
    fprintf(f, "\n%s\n", sw_caution_sweep_for(plan->base));
}

sw_status sw_sweep_write_markdown(const char *path, const sw_sweep_plan *plan, const sw_sweep_summary *s,
                                  sw_error *err)
{
    sw_atomic_file af;
    sw_status st = sw_atomic_open(&af, path, err);
    if (st != SW_OK)
        return st;
    FILE *f = af.f;
    fprintf(f, "# Sweep: %s\n\n> **%s**\n\n", plan->base->title, sw_caution_sweep_for(plan->base));
    fprintf(f, "Scenario `%s`, %s design, %zu members: %zu ran, %zu failed.\n\n", plan->base->path,
            swp_design_name(plan->base->sweep.design), s->n_members, s->n_ok, s->n_failed);
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
        cJSON_AddStringToObject(o, "units", swp_unit_text(p));
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
    cJSON_AddStringToObject(o, "design", swp_design_name(plan->base->sweep.design));
    cJSON_AddStringToObject(o, "measure", swp_measure_name(plan->base->sweep.design));
    cJSON_AddStringToObject(o, "measure_meaning", swp_measure_sentence(plan->base->sweep.design));
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
    cJSON_AddStringToObject(o, "caution", sw_caution_sweep_for(plan->base));
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
    if (block > SWP_BLOCK_BYTES)
        block = SWP_BLOCK_BYTES > per_row ? SWP_BLOCK_BYTES : per_row;
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
    fprintf(f, "\nSweep      %s design, %zu members", swp_design_name(sw->design), plan->n_members);
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
    cJSON_AddStringToObject(o, "design", swp_design_name(plan->base->sweep.design));
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
    const sw_layout *layout = sw_layout_find(sc->layout);
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
            cJSON_DeleteItemFromObject(o, "caution");   /* a sweep's plan carries the sweep caution */
            cJSON_AddStringToObject(o, "caution", sw_caution_sweep_for(sc));
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
