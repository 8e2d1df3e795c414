/* compare.c - one scenario on several layouts and resolutions (see compare.h). */
#include "studies/compare.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "base/atomic_file.h"
#include "model/layout.h"
#include "inputs/seabed.h"
#include "run/setup.h"

void sw_compare_free(sw_compare *cmp)
{
    if (!cmp)
        return;
    free(cmp->rows);
    free(cmp->gauge_names);
    memset(cmp, 0, sizeof *cmp);
    cmp->reference = -1;
}

sw_status sw_compare_variant(const sw_scenario *sc, const char *layout, int r, sw_scenario *v, sw_error *err)
{
    *v = *sc;
    snprintf(v->layout, sizeof v->layout, "%s", layout);
    sw_status rc = sw_seabed_grid(v, err);   /* a grid taken from the seabed file is known only now */
    if (rc != SW_OK)
        return rc;
    v->has_grid = 1;
    v->grid.nx *= (size_t)r;
    v->grid.ny *= (size_t)r;
    v->grid.dx_m /= r;
    v->grid.dy_m /= r;
    if (v->dt_s > 0)
        v->dt_s /= r;    /* an explicit dt shrinks with the cells, keeping the Courant number */
    return SW_OK;
}

static void one_run(const sw_scenario *sc, const sw_run_options *opt, sw_compare_row *row, size_t n_gauges)
{
    sw_error e = {0};
    sw_scenario *v = malloc(sizeof *v);
    sw_run_result *res = malloc(sizeof *res);
    sw_setup setup = {0};
    char dir[SW_PATH_MAX];
    snprintf(dir, sizeof dir, "%s/%s-x%d", opt->out_dir, row->layout, row->refine);
    sw_run_options o = *opt;
    o.out_dir = dir;
    for (size_t q = 0; q < n_gauges; q++)
        row->arrival_s[q] = row->peak_m[q] = NAN;
    if (!v || !res)
        row->status = sw_fail(&e, SW_ERR_NOMEM, "out of memory");
    else if ((row->status = sw_compare_variant(sc, row->layout, row->refine, v, &e)) == SW_OK
             && (row->status = sw_setup_build(v, &setup, &e)) == SW_OK) {
        row->grid = setup.grid;
        row->dt_s = setup.dt_s;
        row->courant = setup.courant;
        row->courant_limit = setup.courant_limit;
        row->memory_bytes = setup.total_bytes;
        row->status = sw_run(v, &setup, &o, res, &e);
        if (row->status == SW_OK) {
            row->steps = res->steps;
            row->wall_s = res->wall_s;
            row->cell_updates_per_s = res->cell_updates_per_s;
            row->noise_index = res->noise_index;
            for (size_t q = 0; q < n_gauges; q++) {
                row->arrival_s[q] = res->gauge[q].arrival_s;
                row->peak_m[q] = res->gauge[q].peak_m;
            }
        }
    }
    snprintf(row->error, sizeof row->error, "%s", row->status == SW_OK ? "" : e.msg);
    sw_setup_free(&setup);
    free(v);
    free(res);
}

static void fill_differences(sw_compare *cmp)
{
    cmp->reference = -1;
    for (size_t pass = 0; pass < 2 && cmp->reference < 0; pass++)   /* pass 0: C only; pass 1: any */
        for (size_t q = 0; q < cmp->n_rows; q++) {
            const sw_compare_row *r = &cmp->rows[q];
            if (r->status != SW_OK || (pass == 0 && strcmp(r->layout, "C") != 0))
                continue;
            if (cmp->reference < 0 || r->refine > cmp->rows[cmp->reference].refine)
                cmp->reference = (long)q;
        }
    for (size_t q = 0; q < cmp->n_rows; q++) {
        sw_compare_row *r = &cmp->rows[q];
        for (size_t g = 0; g < cmp->n_gauges; g++) {
            r->d_arrival_s[g] = r->d_peak_m[g] = NAN;
            if (cmp->reference >= 0 && r->status == SW_OK) {
                const sw_compare_row *ref = &cmp->rows[cmp->reference];
                r->d_arrival_s[g] = r->arrival_s[g] - ref->arrival_s[g];
                r->d_peak_m[g] = r->peak_m[g] - ref->peak_m[g];
            }
        }
    }
}

static sw_status compare_runs(const sw_scenario *sc, const char *const *layouts, size_t n_layouts, const int *refine,
                               size_t n_refine, const sw_run_options *opt, sw_compare_fn done, void *user,
                               sw_compare *out, sw_error *err);

sw_status sw_compare_run(const sw_scenario *sc, const char *const *layouts, size_t n_layouts, const int *refine,
                         size_t n_refine, const sw_run_options *opt, sw_compare_fn done, void *user,
                         sw_compare *out, sw_error *err)
{
    if (!opt || !opt->out_dir)
        return sw_fail(err, SW_ERR_USAGE, "sw_compare_run: an output folder is required");
    return compare_runs(sc, layouts, n_layouts, refine, n_refine, opt, done, user, out, err);
}

static sw_status compare_runs(const sw_scenario *sc, const char *const *layouts, size_t n_layouts, const int *refine,
                               size_t n_refine, const sw_run_options *opt, sw_compare_fn done, void *user,
                               sw_compare *out, sw_error *err)
{
    memset(out, 0, sizeof *out);
    out->reference = -1;
    if (n_layouts == 0 || n_refine == 0)
        return sw_fail(err, SW_ERR_USAGE, "compare needs at least one layout and one resolution");
    if (n_layouts * n_refine > SW_COMPARE_MAX_RUNS)
        return sw_fail(err, SW_ERR_RANGE, "%zu runs requested (accepted: at most %d)", n_layouts * n_refine,
                       SW_COMPARE_MAX_RUNS);
    for (size_t a = 0; a < n_layouts; a++)
        if (!sw_layout_find(layouts[a]))
            return sw_fail(err, SW_ERR_RANGE, "layout '%s' is unknown (available: %s)", layouts[a], sw_layout_names());
    for (size_t b = 0; b < n_refine; b++)
        if (refine[b] < 1 || refine[b] > 64)
            return sw_fail(err, SW_ERR_RANGE, "refinement %d (accepted: whole numbers 1 to 64)", refine[b]);

    out->n_rows = n_layouts * n_refine;
    out->n_gauges = sc->n_gauges;
    out->rows = calloc(out->n_rows, sizeof *out->rows);
    out->gauge_names = calloc(sc->n_gauges ? sc->n_gauges : 1, sizeof *out->gauge_names);
    if (!out->rows || !out->gauge_names) {
        sw_compare_free(out);
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for the comparison");
    }
    for (size_t g = 0; g < sc->n_gauges; g++)
        memcpy(out->gauge_names[g], sc->gauges[g].name, SW_NAME_MAX);
    for (size_t a = 0, q = 0; a < n_layouts; a++)
        for (size_t b = 0; b < n_refine; b++, q++) {
            sw_compare_row *row = &out->rows[q];
            const sw_layout *lay = sw_layout_find(layouts[a]);
            snprintf(row->layout, sizeof row->layout, "%s", lay->name);
            row->refine = refine[b];
            one_run(sc, opt, row, sc->n_gauges);
            if (row->status == SW_ERR_INTERRUPTED) {
                sw_compare_free(out);
                return sw_fail(err, SW_ERR_INTERRUPTED, "comparison interrupted during %s x%d", lay->name, refine[b]);
            }
            if (done)
                done(row, q, out->n_rows, user);
        }
    fill_differences(out);
    return SW_OK;
}

sw_status sw_compare_outcome(const sw_compare *cmp, sw_error *err)
{
    size_t failed = 0, first = 0;
    for (size_t q = cmp->n_rows; q-- > 0;)
        if (cmp->rows[q].status != SW_OK) {
            failed++;
            first = q;
        }
    if (!failed)
        return SW_OK;
    const sw_compare_row *r = &cmp->rows[first];
    return sw_fail(err, r->status, "%zu of %zu runs failed; the first, layout %s x%d: %s", failed, cmp->n_rows,
                   r->layout, r->refine, r->error);
}

/* Formats v with fmt, or "-" when v is NaN. */
static const char *num(char *buf, size_t n, const char *fmt, double v)
{
    if (isnan(v))
        snprintf(buf, n, "-");
    else
        snprintf(buf, n, fmt, v);
    return buf;
}

void sw_compare_print(FILE *f, const sw_compare *cmp)
{
    char a[32], b[32];
    fprintf(f, "%-6s %6s %11s %8s %9s %9s %11s %10s %8s %7s  %s\n", "layout", "refine", "cells", "dt s",
            "steps", "wall s", "cells/s", "memory MB", "C/limit", "noise", "");
    for (size_t q = 0; q < cmp->n_rows; q++) {
        const sw_compare_row *r = &cmp->rows[q];
        if (r->status != SW_OK) {
            fprintf(f, "%-6s %6d  failed: %s\n", r->layout, r->refine, r->error);
            continue;
        }
        fprintf(f, "%-6s %6d %5zux%-5zu %8.4g %9lld %9.3g %11.3g %10.1f %8.3f %7.4f  %s\n", r->layout, r->refine,
                r->grid.nx, r->grid.ny, r->dt_s, r->steps, r->wall_s, r->cell_updates_per_s,
                (double)r->memory_bytes / 1048576.0, r->courant / r->courant_limit, r->noise_index,
                (long)q == cmp->reference ? "(reference)" : "");
    }
    if (!cmp->n_gauges)
        return;
    fprintf(f, "\n%-24s %-6s %6s %12s %12s %10s %10s\n", "gauge", "layout", "refine", "arrival s", "d arrival s",
            "peak m", "d peak m");
    for (size_t g = 0; g < cmp->n_gauges; g++)
        for (size_t q = 0; q < cmp->n_rows; q++) {
            const sw_compare_row *r = &cmp->rows[q];
            if (r->status != SW_OK)
                continue;
            fprintf(f, "%-24s %-6s %6d %12s ", cmp->gauge_names[g], r->layout, r->refine,
                    num(a, sizeof a, "%.1f", r->arrival_s[g]));
            fprintf(f, "%12s ", num(b, sizeof b, "%+.1f", r->d_arrival_s[g]));
            fprintf(f, "%10s ", num(a, sizeof a, "%.3f", r->peak_m[g]));
            fprintf(f, "%10s\n", num(b, sizeof b, "%+.3f", r->d_peak_m[g]));
        }
}

sw_status sw_compare_write_markdown(const char *path, const sw_scenario *sc, const sw_compare *cmp, sw_error *err)
{
    char a[32], b[32];
    sw_atomic_file af;
    sw_status st = sw_atomic_open(&af, path, err);
    if (st != SW_OK)
        return st;
    FILE *f = af.f;
    fprintf(f, "# Layout comparison: %s\n\nScenario `%s`. Reference: ", sc->title, sc->path);
    if (cmp->reference >= 0)
        fprintf(f, "layout %s refined x%d.\n\n", cmp->rows[cmp->reference].layout, cmp->rows[cmp->reference].refine);
    else
        fprintf(f, "none (every run failed).\n\n");
    fprintf(f, "| layout | refine | cells | dt (s) | steps | wall (s) | cell-updates/s | memory (MB) | Courant / limit | noise index |\n");
    fprintf(f, "|---|---|---|---|---|---|---|---|---|---|\n");
    for (size_t q = 0; q < cmp->n_rows; q++) {
        const sw_compare_row *r = &cmp->rows[q];
        if (r->status != SW_OK) {
            fprintf(f, "| %s | %d | failed: %s | | | | | | | |\n", r->layout, r->refine, r->error);
            continue;
        }
        fprintf(f, "| %s | %d | %zu x %zu | %.4g | %lld | %.3g | %.3g | %.1f | %.3f | %.4f |\n", r->layout, r->refine,
                r->grid.nx, r->grid.ny, r->dt_s, r->steps, r->wall_s, r->cell_updates_per_s,
                (double)r->memory_bytes / 1048576.0, r->courant / r->courant_limit, r->noise_index);
    }
    if (cmp->n_gauges) {
        fprintf(f, "\n| gauge | layout | refine | arrival (s) | arrival - ref (s) | peak (m) | peak - ref (m) |\n");
        fprintf(f, "|---|---|---|---|---|---|---|\n");
        for (size_t g = 0; g < cmp->n_gauges; g++)
            for (size_t q = 0; q < cmp->n_rows; q++) {
                const sw_compare_row *r = &cmp->rows[q];
                if (r->status != SW_OK)
                    continue;
                fprintf(f, "| %s | %s | %d | %s | ", cmp->gauge_names[g], r->layout, r->refine,
                        num(a, sizeof a, "%.1f", r->arrival_s[g]));
                fprintf(f, "%s | ", num(b, sizeof b, "%+.1f", r->d_arrival_s[g]));
                fprintf(f, "%s | ", num(a, sizeof a, "%.3f", r->peak_m[g]));
                fprintf(f, "%s |\n", num(b, sizeof b, "%+.3f", r->d_peak_m[g]));
            }
    }
    fprintf(f, "\nThe noise index is the RMS of eta_max minus its 1-2-1 smoothed copy, relative to the RMS of "
               "eta_max: energy near the 2-cell wavenumber.\n\n> **%s**\n", sw_caution_for(sc));
    return sw_atomic_close(&af, err);
}

sw_status sw_compare_write_csv(const char *path, const sw_compare *cmp, sw_error *err)
{
    sw_atomic_file af;
    sw_status st = sw_atomic_open(&af, path, err);
    if (st != SW_OK)
        return st;
    FILE *f = af.f;
    /* one comment line first (readers skip it with comment='#'); the general caution, as the CSV has no
     * scenario to tell a surge run by: compare.md and the JSON carry the scenario's own */
    fprintf(f, "# %s\n", sw_caution());
    fprintf(f, "layout,refine,status,nx,ny,dt_s,steps,wall_s,cell_updates_per_s,memory_bytes,courant_number,courant_limit,"
               "noise_index,gauge,arrival_s,d_arrival_s,peak_m,d_peak_m\n");
    for (size_t q = 0; q < cmp->n_rows; q++) {
        const sw_compare_row *r = &cmp->rows[q];
        size_t n = cmp->n_gauges ? cmp->n_gauges : 1;
        for (size_t g = 0; g < n; g++) {
            fprintf(f, "%s,%d,%s,%zu,%zu,%.9g,%lld,%.6g,%.6g,%zu,%.9g,%.9g,%.6g,", r->layout, r->refine,
                    sw_status_name(r->status), r->grid.nx, r->grid.ny, r->dt_s, r->steps, r->wall_s,
                    r->cell_updates_per_s, r->memory_bytes, r->courant, r->courant_limit, r->noise_index);
            if (cmp->n_gauges)
                fprintf(f, "\"%s\",%.9g,%.9g,%.9g,%.9g\n", cmp->gauge_names[g], r->arrival_s[g], r->d_arrival_s[g],
                        r->peak_m[g], r->d_peak_m[g]);
            else
                fprintf(f, ",,,,\n");
        }
    }
    return sw_atomic_close(&af, err);
}

static void add_num(cJSON *o, const char *k, double v)
{
    if (isfinite(v))
        cJSON_AddNumberToObject(o, k, v);
    else
        cJSON_AddNullToObject(o, k);
}

char *sw_compare_json(const sw_scenario *sc, const sw_compare *cmp)
{
    cJSON *o = cJSON_CreateObject();
    if (!o)
        return NULL;
    cJSON_AddStringToObject(o, "scenario", sc->path);
    cJSON_AddNumberToObject(o, "reference", (double)cmp->reference);
    cJSON *runs = cJSON_AddArrayToObject(o, "runs");
    for (size_t q = 0; q < cmp->n_rows; q++) {
        const sw_compare_row *r = &cmp->rows[q];
        cJSON *e = cJSON_CreateObject();
        cJSON_AddStringToObject(e, "layout", r->layout);
        cJSON_AddNumberToObject(e, "refine", r->refine);
        cJSON_AddStringToObject(e, "status", sw_status_name(r->status));
        if (r->status != SW_OK) {
            cJSON_AddStringToObject(e, "error", r->error);
            cJSON_AddItemToArray(runs, e);
            continue;
        }
        cJSON_AddNumberToObject(e, "nx", (double)r->grid.nx);
        cJSON_AddNumberToObject(e, "ny", (double)r->grid.ny);
        cJSON_AddNumberToObject(e, "dt_s", r->dt_s);
        cJSON_AddNumberToObject(e, "steps", (double)r->steps);
        cJSON_AddNumberToObject(e, "wall_s", r->wall_s);
        cJSON_AddNumberToObject(e, "cell_updates_per_s", r->cell_updates_per_s);
        cJSON_AddNumberToObject(e, "memory_bytes", (double)r->memory_bytes);
        cJSON_AddNumberToObject(e, "courant_number", r->courant);
        cJSON_AddNumberToObject(e, "courant_limit", r->courant_limit);
        cJSON_AddNumberToObject(e, "noise_index", r->noise_index);
        cJSON *gs = cJSON_AddArrayToObject(e, "gauges");
        for (size_t g = 0; g < cmp->n_gauges; g++) {
            cJSON *x = cJSON_CreateObject();
            cJSON_AddStringToObject(x, "name", cmp->gauge_names[g]);
            add_num(x, "arrival_s", r->arrival_s[g]);
            add_num(x, "d_arrival_s", r->d_arrival_s[g]);
            add_num(x, "peak_m", r->peak_m[g]);
            add_num(x, "d_peak_m", r->d_peak_m[g]);
            cJSON_AddItemToArray(gs, x);
        }
        cJSON_AddItemToArray(runs, e);
    }
    cJSON_AddStringToObject(o, "caution", sw_caution_for(sc));
    char *s = cJSON_Print(o);
    cJSON_Delete(o);
    return s;
}
