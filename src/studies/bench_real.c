/* bench_real.c - the demo refined, run with its gauges and maps, beside the plain step (see bench_real.h). */
#include "studies/bench_real.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/omp_compat.h"
#include "inputs/demo.h"
#include "inputs/scenario.h"
#include "model/model.h"
#include "run/run.h"
#include "run/setup.h"
#include "studies/compare.h"

#define MAX_ROUNDS 32

/* The run's results go nowhere: the bench times the run, not the writers. */
static sw_status no_files(const sw_map_set *maps, const sw_gauge_table *gauges, void *user, sw_error *err)
{
    (void)maps;
    (void)gauges;
    (void)user;
    (void)err;
    return SW_OK;
}

/* Seconds for `steps` plain steps of a fresh model of sc's setup in sweeps of k (the last one shorter), on
 * the current threads; NAN when the model cannot be made. */
static double plain_seconds(const sw_scenario *sc, const sw_setup *setup, long long steps, int k, sw_error *err)
{
    const sw_model_config cfg = sw_setup_model_config(sc, setup);
    sw_model *m;
    if (sw_model_create(&cfg, &m, err) != SW_OK)
        return NAN;
    const double t0 = omp_get_wtime();
    SW_OMP(parallel)
    for (long long n = 0; n < steps; n += k)
        sw_model_steps(m, n + k <= steps ? k : (int)(steps - n));
    const double wall = omp_get_wtime() - t0;
    sw_model_free(m);
    return wall;
}

sw_status sw_bench_real_run(int refine, sw_precision precision, int threads, int rounds,
                            void (*progress)(const char *what, void *user), void *user, sw_bench_real *out,
                            sw_error *err)
{
    memset(out, 0, sizeof *out);
    if (refine < 1)
        return sw_fail(err, SW_ERR_USAGE, "real-run refinement %d (accepted: 1 or more)", refine);
    if (rounds < 3 || rounds > MAX_ROUNDS)
        return sw_fail(err, SW_ERR_USAGE, "rounds = %d (accepted: 3 to %d)", rounds, MAX_ROUNDS);
    sw_scenario sc, v;
    sw_setup setup = {0};
    sw_run_result *res = malloc(sizeof *res);
    if (!res)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for the real run's summary");
    sw_status rc = sw_scenario_parse(sw_demo_scenario, "demo.scn", ".", &sc, err);
    if (rc != SW_OK) {
        free(res);
        return rc;
    }
    sc.precision = precision;
    sc.duration_s = SW_BENCH_REAL_DURATION_S;
    rc = sw_compare_variant(&sc, "C", refine, &v, err);
    if (rc == SW_OK)
        rc = sw_setup_build(&v, &setup, err);
    omp_set_num_threads(threads);
    double run_rate[MAX_ROUNDS], plain_rate[MAX_ROUNDS], ratio[MAX_ROUNDS];
    int n = 0;
    for (int r = 0; r < rounds && rc == SW_OK; r++) {
        char what[160];
        snprintf(what, sizeof what, "real run: the demo refined %dx (%zu x %zu), round %d of %d", refine,
                 setup.grid.nx, setup.grid.ny, r + 1, rounds);
        if (progress)
            progress(what, user);
        const sw_run_options ro = {.threads = threads, .sink = no_files};
        rc = sw_run(&v, &setup, &ro, res, err);
        if (rc != SW_OK)
            break;
        const double cells = (double)setup.grid.nx * (double)setup.grid.ny;
        const double plain_s = plain_seconds(&v, &setup, res->steps, res->steps_per_sweep, err);
        if (isnan(plain_s)) {
            rc = err ? err->code : SW_ERR_NOMEM;
            break;
        }
        run_rate[n] = res->cell_updates_per_s;
        plain_rate[n] = cells * (double)res->steps / plain_s;
        ratio[n] = run_rate[n] / plain_rate[n];
        n++;
        out->steps = res->steps;
        out->steps_per_sweep = res->steps_per_sweep;
        out->n_gauges = res->n_gauges;
    }
    if (n > 0) {
        out->refine = refine;
        out->duration_s = SW_BENCH_REAL_DURATION_S;
        out->nx = setup.grid.nx;
        out->ny = setup.grid.ny;
        out->dt_s = setup.dt_s;
        out->threads = threads;
        out->run = sw_bench_summary(run_rate, n);
        out->plain = sw_bench_summary(plain_rate, n);
        out->ratio = sw_bench_summary(ratio, n).median;
    }
    if (rc != SW_OK)
        snprintf(out->note, sizeof out->note, "not measured: %.160s", err ? err->msg : "it failed");
    sw_setup_free(&setup);
    sw_scenario_free(&sc);
    free(res);
    return rc;
}
