/* sweep_combine.c - the aggregate of a finished sweep: every member file read back, per-gauge
 * statistics and rankings, per-cell maps over the members, written as sweep.nc and sweep.md.
 *
 * Invariant: the aggregate is computed from the member files only, never from results held in memory,
 * so an interrupted and resumed sweep gives the same sweep.nc data as an uninterrupted one. The maps
 * are combined a block of rows at a time (SWP_BLOCK_BYTES of member rows), so memory stays bounded
 * however many members there are.
 */
#include "studies/sweep_impl.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "inputs/seabed.h"
#include "run/run.h"
#include "studies/ncsweep.h"

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
    size_t rows = SWP_BLOCK_BYTES / per_row;
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
            swp_member_file(plan, k, "nc", path, sizeof path);
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

/* Everything swp_combine() allocates, freed in one place. */
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

sw_status swp_combine(sw_sweep_plan *plan, const sw_sweep_options *opt, sw_sweep_summary *out, sw_error *err)
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
        swp_member_file(plan, k, "nc", path, sizeof path);
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
            gs->arrival = swp_stat_of(a.xs, na);
            gs->peak = swp_stat_of(a.ys, np);
            for (size_t k = 0; k < M; k++)
                a.col[k] = a.arrival[k * G + q];
            swp_sensitivity(plan, a.col, out->status, a.xs, a.ys, gs->arrival_rank);
            for (size_t k = 0; k < M; k++)
                a.col[k] = a.peak[k * G + q];
            swp_sensitivity(plan, a.col, out->status, a.xs, a.ys, gs->peak_rank);
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
            punit[q] = swp_unit_text(&plan->param[q]);
        }
        int spearman = sc->sweep.design == SW_SWEEP_LATIN_HYPERCUBE;
        sw_crs crs;   /* the seabed file's coordinate reference (projected grids), as a run's files carry it */
        st = sw_run_crs(sc, g, &crs, err);
        if (st != SW_OK) {
            agg_free(&a, M);
            return st;
        }
        sw_ncs_sweep d = {
            .crs = sw_crs_present(&crs) ? &crs : NULL,
            .title = sc->title, .history = opt->history ? opt->history : "", .scenario_text = sc->text,
            .version = SW_VERSION, .caution = sw_caution_sweep_for(sc), .time_origin = sc->origin,
            .design = swp_design_name(sc->sweep.design), .measure = swp_measure_sentence(sc->sweep.design),
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
        sw_crs_free(&crs);
        if (st == SW_OK)
            st = sw_sweep_write_markdown(out->markdown_path, plan, out, err);
    }
    agg_free(&a, M);
    return st;
}
