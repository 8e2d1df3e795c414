/* cmd_run.c - the commands that run one scenario: run, check and demo. */
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/omp_compat.h"
#include "cli.h"
#include "inputs/demo.h"
#include "studies/estimate.h"
#include "outputs/report.h"
#include "run/run.h"
#include "run/setup.h"
#include "studies/sweep.h"
#include "run/split.h"
#ifdef SW_HAVE_MPI
#include "run/split_mpi.h"
#include "studies/sweep_mpi.h"
#endif

static const char *const usage_run =
    "Usage: shoreward run SCENARIO [--out DIR] [--threads N] [--precision P] [--quiet] [--json] [--resume]\n"
    "                              [--steps-per-sweep K]\n"
    "\n"
    "Runs SCENARIO and writes into DIR (default: <scenario name>-out):\n"
    "  gauges.nc     eta, u, v time series at the gauges (CF timeSeries); with a [storm] or\n"
    "                [weather] also air_pressure, wind_east, wind_north (the forcing at each gauge)\n"
    "  maps.nc       depth, eta_max, eta_min, arrival_time, eta_max_time, speed_max; with a [storm]\n"
    "                or [weather] also wind_speed_max, air_pressure_min (the extremes the water felt),\n"
    "                and with a [storm] its track: storm_time, storm_x, storm_y, storm_central_pressure\n"
    "  snapshots.nc  eta at [run] snapshot_interval (only when set)\n"
    "  run.json      written last: the files of this set and their sizes (tools/plot checks it)\n"
    "Before the first step the run creates DIR, tests that it can write there, locks it (DIR/.shoreward.lock;\n"
    "a second run into DIR is refused with the first one's pid) and refuses a run whose outputs would not\n"
    "fit on the disk or whose memory exceeds what the machine and its limits (cgroup, ulimit -v) allow.\n"
    "The files are written in DIR/.staging-PID and moved into place together once all are complete: a\n"
    "failed, interrupted (Ctrl-C) or killed run leaves the previous set in DIR as it was.\n"
    "With [run] checkpoint_interval the run also writes DIR/checkpoint.swck (its whole state) at that\n"
    "interval of simulated time and when stopped by Ctrl-C or SIGTERM; --resume continues from it, and\n"
    "the files are then the same bits as those of a run never stopped.\n"
    "\n"
    "  --out DIR      output folder, created if missing\n"
    "  --threads N    OpenMP threads (default: the cores free of other work, README \"Threads on a\n"
    "                 busy machine\"); results do not depend on N\n"
    CLI_PRECISION_HELP
    "  --quiet        no plan and no progress line\n"
    "  --json         print the summary as one JSON object on stdout\n"
    "  --resume       continue from DIR/checkpoint.swck, written by a stopped run of the same\n"
    "                 scenario with the same --precision (any --threads)\n"
    "  --steps-per-sweep K  take K time steps (1 to 16) in each pass over memory, for benchmarking;\n"
    "                 the default chooses from the grid and the cache (the plan's Schedule line says\n"
    "                 what and why). Runs with periodic south-north edges or split over processes\n"
    "                 take one step a pass. The files are the same bits whatever K\n"
    "\n"
    "On a cluster (a build configured with -DSW_MPI=ON): mpirun -n N shoreward run SCENARIO --out DIR\n"
    "splits the grid's rows over N ranks (each holds the whole grid; rank 0 writes DIR, one folder all of\n"
    "them see); the files are the same bits (README \"Running on a cluster\").\n"
    "\n"
    "Example:\n"
    "  shoreward run scenarios/demo.scn --out demo-out --threads 2\n"
    "  shoreward run scenarios/demo.scn --precision single   # half the memory, faster\n";

static const char *const usage_check =
    "Usage: shoreward check SCENARIO [--precision P] [--json] [--recalibrate]\n"
    "\n"
    "Parses and validates SCENARIO, builds the seabed and source, and prints the plan without\n"
    "running: grid, layout, dt and Courant number against the layout's limit, the terms, the forcing\n"
    "(storm track, weather file, level series; a warning when a storm's centre never enters the\n"
    "domain), steps, memory, an estimated run time, and each gauge with the depth there. A storm's\n"
    "track is read and checked here; a weather file and a level series are read by the run.\n"
    "\n"
    "The estimate is cells x steps / rate, the rate being this machine's cell updates per second\n"
    "for the layout (time step + arrival tracking, all threads), from a 0.2 s measurement on a\n"
    "512 x 512 basin. The rate is cached per shoreward version, layout, precision, thread count and\n"
    "CPU model in $SHOREWARD_CACHE_DIR/rates.txt (default: $XDG_CACHE_HOME/shoreward, else\n"
    "~/.cache/shoreward) and measured again after 30 days. The estimate is a guide: a real run\n"
    "also writes gauges and files, and a busy machine is slower.\n"
    "\n"
    "  --json         print the plan as one JSON object (rate_cells_per_s, rate_source, rate_age_days)\n"
    "  --recalibrate  measure the rate again now and replace the cached entry (after a hardware or\n"
    "                 load change, or when the estimate looks wrong)\n"
    "\n"
    CLI_PRECISION_HELP
    "\n"
    "Example:\n"
    "  shoreward check scenarios/demo.scn --recalibrate\n";

static const char *const usage_demo =
    "Usage: shoreward demo [DIR] [--threads N] [--precision P] [--quiet] [--json]\n"
    "\n"
    "Writes the built-in scenario of a fictional coastline (Vashkel Bay) to DIR/demo.scn and runs it,\n"
    "writing the outputs into DIR (default: shoreward-demo). Draw pictures with tools/plot DIR\n"
    "(installed: shoreward-plot DIR).\n"
    "\n"
    CLI_PRECISION_HELP
    "\n"
    "Example:\n"
    "  shoreward demo /tmp/merrow\n";

/* One run over the ranks of an MPI job (`mpirun -n N shoreward run`): a build with -DSW_MPI=ON splits the
 * grid's rows over the ranks (run/split.h); rank 0 prints and writes, the others are silent. A build
 * without MPI started by a launcher with more than one copy refuses (exit 2, from rank 0 only), since every
 * copy would run the whole scenario into the same folder. */
static int run_main(int argc, char **argv, const char *history, sw_split *split, int node_threads);

#ifdef SW_HAVE_MPI
/* Runs `run_main` as one rank of a split run; returns rank 0's exit status on every rank. */
static int run_split(int argc, char **argv, const char *history)
{
    static sw_sweep_mpi_world w;
    sw_error err = {0};
    long copies = 0, rank = 0;
    cli_launcher_size(&copies, &rank);
    if (sw_sweep_mpi_init(NULL, NULL, &w, &err) != SW_OK)
        return rank == 0 ? cli_fail("run", &err) : 1;
    sw_split split;
    int code = 1;
    if (sw_split_mpi_create(&split, &err) != SW_OK)
        code = cli_fail("run", &err);
    else {
        if (w.rank != 0 && (!freopen("/dev/null", "w", stdout) || !freopen("/dev/null", "w", stderr)))
            clearerr(stderr);   /* silent: what goes wrong is reported by rank 0 */
        split.node_ranks = w.node_ranks > 0 ? w.node_ranks : 1;
        code = run_main(argc, argv, history, &split, sw_sweep_mpi_threads(&w, 0));
        sw_split_mpi_free(&split);
    }
    return sw_sweep_mpi_finish(&w, code);
}
#endif

int cmd_run(int argc, char **argv, const char *history)
{
    long copies = 0, rank = 0;
    cli_launcher_size(&copies, &rank);
    if (copies > 1) {
#ifdef SW_HAVE_MPI
        return run_split(argc, argv, history);
#else
        if (rank == 0) {
            char msg[300];
            snprintf(msg, sizeof msg, "this shoreward was built without MPI (cmake -DSW_MPI=ON), so one run does not "
                     "spread over MPI ranks; %ld copies would each run the whole scenario (start one process, or "
                     "build with MPI)", copies);
            cli_usage_error("run", "%s", msg);
        }
        return 2;
#endif
    }
    return run_main(argc, argv, history, NULL, 0);
}

/* `shoreward run` in this process; split: this rank of a split run (NULL: not split), whose threads are
 * node_threads unless --threads says (the ranks on one node share its cores: sweep_mpi.h). */
static int run_main(int argc, char **argv, const char *history, sw_split *split, int node_threads)
{
    cli_args a;
    int code = cli_parse("run", usage_run, argc, argv, CLI_OUT | CLI_RUN_OPTS | CLI_PRECISION | CLI_RESUME, &a);
    if (code >= 0)
        return code;
    if (!a.scenario)
        return cli_usage_error("run", "%s", "needs a scenario file");
    sw_scenario sc;
    sw_error err = {0};
    sw_status rc = sw_scenario_load(a.scenario, &sc, &err);
    if (split)   /* a rank that cannot read the scenario ends the job */
        rc = sw_split_agree(split, rc, &err);
    if (rc != SW_OK)
        return cli_fail("run", &err);
    cli_apply_precision(&a, &sc);
    a.split = split;
    if (split && a.threads <= 0)
        a.threads = node_threads;
    char out[SW_PATH_MAX];
    if (a.out)
        snprintf(out, sizeof out, "%s", a.out);
    else
        cli_default_out(a.scenario, out, sizeof out);
    code = cli_run_scenario("run", &sc, &a, out, history);
    sw_scenario_free(&sc);
    return code;
}

int cmd_check(int argc, char **argv, const char *history)
{
    (void)history;
    cli_args a;
    int code = cli_parse("check", usage_check, argc, argv, CLI_PRECISION | CLI_RECALIBRATE, &a);
    if (code >= 0)
        return code;
    if (!a.scenario)
        return cli_usage_error("check", "%s", "needs a scenario file");
    sw_scenario sc;
    sw_setup setup;
    sw_error err = {0};
    if (sw_scenario_load(a.scenario, &sc, &err) != SW_OK)
        return cli_fail("check", &err);
    cli_apply_precision(&a, &sc);
    if (sw_setup_build(&sc, &setup, &err) != SW_OK) {
        sw_scenario_free(&sc);
        return cli_fail("check", &err);
    }
    sw_crs crs;   /* a seabed file's grid mapping is read now, so that a bad one stops `check` as it would `run` */
    if (sw_run_crs(&sc, &setup.grid, &crs, &err) != SW_OK) {
        sw_setup_free(&setup);
        sw_scenario_free(&sc);
        return cli_fail("check", &err);
    }
    sw_crs_free(&crs);
    sw_rate_info rate = {0};              /* from the cache, or measured now (estimate.h) */
    sw_error rate_err = {0};
    if (sw_estimate_rate_cached(setup.layout, sc.precision, 0, a.recalibrate, SW_RATE_CALIBRATION_S, &rate,
                                &rate_err) != SW_OK) {
        fprintf(stderr, "shoreward check: warning: no run-time estimate: %s\n", rate_err.msg);
        rate.cells_per_s = 0;
    }
    sw_status swept = SW_OK;   /* a [sweep] section adds its member count, memory and time (sweep.h) */
    if (a.json) {
        char *js = sw_report_plan_json(&sc, &setup, &rate);
        if (js && sc.sweep.present)
            swept = sw_sweep_check(&sc, rate.cells_per_s, NULL, &js, &err);
        if (js)
            puts(js);
        free(js);
        fprintf(stderr, "%s\n", sc.sweep.present ? sw_caution_sweep_for(&sc) : sw_caution_for(&sc));
    } else {
        sw_report_plan(stdout, &sc, &setup, &rate);
        char schedule[200];
        sw_run_schedule(&sc, &setup, omp_get_max_threads(), 0, 0, schedule, sizeof schedule);
        printf("Schedule   %s (on %d thread%s)\n", schedule, omp_get_max_threads(), omp_get_max_threads() == 1 ? "" : "s");
        if (sc.sweep.present)
            swept = sw_sweep_check(&sc, rate.cells_per_s, stdout, NULL, &err);
        if (swept == SW_OK)
            printf("\nScenario is valid.\n");
        printf("\n%s\n", sc.sweep.present ? sw_caution_sweep_for(&sc) : sw_caution_for(&sc));
    }
    sw_setup_free(&setup);
    sw_scenario_free(&sc);
    return swept == SW_OK ? 0 : cli_fail("check", &err);
}

int cmd_demo(int argc, char **argv, const char *history)
{
    cli_args a;
    long copies = 0, rank = 0;
    cli_launcher_size(&copies, &rank);
    if (copies > 1) {   /* every copy would write the same demo folder */
        if (rank == 0) {
            char msg[300];
            snprintf(msg, sizeof msg, "the demo runs in one process, not %ld: write it with `shoreward demo DIR`, "
                     "then run it on ranks with `mpirun -n N shoreward run DIR/demo.scn`", copies);
            cli_usage_error("demo", "%s", msg);
        }
        return 2;
    }
    int code;
    code = cli_parse("demo", usage_demo, argc, argv, CLI_RUN_OPTS | CLI_PRECISION, &a);
    if (code >= 0)
        return code;
    const char *dir = a.scenario ? a.scenario : "shoreward-demo";
    sw_error err = {0};
    if (sw_make_dirs(dir, &err) != SW_OK)
        return cli_fail("demo", &err);
    char path[SW_PATH_MAX];
    snprintf(path, sizeof path, "%s/demo.scn", dir);
    FILE *f = fopen(path, "w");
    if (!f || fputs(sw_demo_scenario, f) < 0 || fclose(f) != 0) {
        fprintf(stderr, "shoreward demo: error: cannot write %s: %s\n", path, strerror(errno));
        return 1;
    }
    if (!a.json)
        printf("Wrote the fictional demo scenario to %s\n\n", path);
    sw_scenario sc;
    if (sw_scenario_load(path, &sc, &err) != SW_OK)
        return cli_fail("demo", &err);
    cli_apply_precision(&a, &sc);
    code = cli_run_scenario("demo", &sc, &a, dir, history);
    sw_scenario_free(&sc);
    if (code == 0 && !a.json)
        printf("\nPictures: %s %s\n", cli_tool("plot"), dir);
    return code;
}
