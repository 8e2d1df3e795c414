/* cmd_sweep.c - `shoreward sweep`: a sensitivity sweep of one scenario (the work is in src/studies/sweep_*.c).
 *
 * MPI. Started by an MPI launcher (mpirun, mpiexec, srun: cli_launcher_size), a build with -DSW_MPI=ON
 * (SW_HAVE_MPI) spreads the members over the ranks (studies/sweep_mpi.h): every rank parses the arguments
 * and the scenario and plans the sweep, the plans are checked to agree, and only rank 0 prints (the other
 * ranks' stdout and stderr go to /dev/null; their failures reach rank 0 and are printed there). A build
 * without MPI started by a launcher with more than one copy refuses to run, since every copy would run the
 * whole sweep into the same folder.
 */
#define _POSIX_C_SOURCE 200809L
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"
#include "outputs/report.h"
#include "studies/sweep.h"
#ifdef SW_HAVE_MPI
#include "studies/sweep_mpi.h"

static sw_sweep_mpi_world *mpi_world;   /* the MPI job this sweep runs in; NULL when not started by a launcher */
#endif

static const char *const usage_sweep =
    "Usage: shoreward sweep SCENARIO [--out DIR] [--members-parallel N] [--threads N] [--precision P]\n"
    "                        [--quiet] [--json]\n"
    "\n"
    "Runs the members of SCENARIO's [sweep] section (what varies and how: docs/sweep.md) and writes\n"
    "into DIR (default: <scenario name>-sweep):\n"
    "  sweep.nc    each member's parameter values, gauge arrival / peak / trough / peak time and series,\n"
    "              maps of the earliest, median and latest arrival and its spread, eta_max percentiles\n"
    "  sweep.md    the summary table: per gauge min / median / max arrival and peak, and which\n"
    "              parameter moves each most\n"
    "  members/    one file per finished member, its scenario (mNNNNN.scn) and the sweep's manifest\n"
    "An interrupted sweep (Ctrl-C) keeps its finished members: run the same command again to resume.\n"
    "A member that fails (for example an unstable time step) is reported and the others go on.\n"
    "\n"
    "  --out DIR               output folder, created if missing\n"
    "  --members-parallel N    run N members at once, one thread each (1: one after another with all\n"
    "                          threads); default: side by side when members are small (<= 512 x 512 cells)\n"
    "  --threads N             threads for the whole sweep (default: the cores free of other work);\n"
    "                          results do not depend on it\n"
    "  --precision P           double or single for every member, over [run] precision (written into\n"
    "                          each member's scenario file)\n"
    "  --quiet                 no plan and no progress line\n"
    "  --json                  print the summary as one JSON object on stdout\n"
    "\n"
    "On a cluster (a build configured with -DSW_MPI=ON): mpirun -n N shoreward sweep SCENARIO --out DIR\n"
    "hands the members to N ranks (DIR must be one folder all of them see); the result is the same.\n"
    "\n"
    "Example:\n"
    "  shoreward sweep scenarios/sweep-demo.scn --out sweep-out\n"
    "  tools/plot-sweep sweep-out      (installed: shoreward-plot-sweep sweep-out)\n";

static void show_progress(const sw_sweep_progress *p, void *user)
{
    (void)user;
    char ela[48], rem[48];
    sw_format_duration(p->elapsed_s, ela, sizeof ela);
    sw_format_duration(p->remaining_s, rem, sizeof rem);
    fprintf(stderr, "\r  members %zu/%zu done, %zu running, m%05zu at %3.0f %%   elapsed %-12s ETA %-12s   ", p->done,
            p->total, p->running, p->current, 100.0 * p->current_fraction, ela, rem);
    fflush(stderr);
}

/* Takes --members-parallel N (or =N) out of argv into *n; the rest goes to rest. Returns -1 when
 * fine, or the usage-error exit status. */
static int take_members_parallel(int argc, char **argv, char **rest, int *n_rest, int *n)
{
    *n_rest = 0;
    for (int k = 0; k < argc; k++) {
        const char *name = "--members-parallel", *val = NULL;
        size_t len = strlen(name);
        if (!strncmp(argv[k], name, len) && argv[k][len] == '=')
            val = argv[k] + len + 1;
        else if (!strcmp(argv[k], name))
            val = k + 1 < argc ? argv[++k] : "";
        if (!val) {
            rest[(*n_rest)++] = argv[k];
            continue;
        }
        char *end = NULL;
        long v = strtol(val, &end, 10);
        if (end == val || *end || v < 1 || v > 1024)
            return cli_usage_error("sweep", "--members-parallel takes a whole number from 1 to 1024, not '%s'", val);
        *n = (int)v;
    }
    return -1;
}

/* 1 on the rank that prints (rank 0, or the only process). */
static int printing_rank(void)
{
#ifdef SW_HAVE_MPI
    return !mpi_world || mpi_world->rank == 0;
#else
    return 1;
#endif
}

/* Under MPI: brings every rank's setup outcome together (sw_sweep_mpi_agree). `code` is this rank's exit
 * status so far (-1 = set up; a failure was printed already by rank 0 when it was its own). Returns the
 * exit status every rank goes on with (-1 = all set up). Without MPI it returns code. */
static int agree(int code, const sw_sweep_plan *plan, sw_error *err)
{
#ifdef SW_HAVE_MPI
    if (!mpi_world)
        return code;
    if (code >= 0 && err->code == SW_OK)
        sw_fail(err, code == 2 ? SW_ERR_USAGE : SW_ERR_INPUT, "the command line or scenario is refused");
    sw_status st = sw_sweep_mpi_agree(mpi_world, code < 0 ? plan : NULL, code < 0 ? SW_OK : err->code, err);
    if (st == SW_OK || code >= 0)
        return code;
    return cli_fail("sweep", err);
#else
    (void)plan;
    (void)err;
    return code;
#endif
}

static int sweep_main(int argc, char **argv, const char *history);

int cmd_sweep(int argc, char **argv, const char *history)
{
    long n_copies, rank;
    cli_launcher_size(&n_copies, &rank);
#ifndef SW_HAVE_MPI
    if (n_copies > 1) {
        if (rank == 0)
            fprintf(stderr, "shoreward sweep: error: this shoreward was built without MPI (cmake -DSW_MPI=ON); "
                            "%ld copies would each run the whole sweep\n", n_copies);
        return 2;
    }
    return sweep_main(argc, argv, history);
#else
    if (n_copies <= 0)
        return sweep_main(argc, argv, history);
    static sw_sweep_mpi_world w;
    sw_error err = { 0 };
    if (sw_sweep_mpi_init(NULL, NULL, &w, &err) != SW_OK)
        return rank == 0 ? cli_fail("sweep", &err) : 1;
    mpi_world = &w;
    if (w.rank != 0) {   /* silent: what goes wrong here is reported by rank 0 */
        if (!freopen("/dev/null", "w", stdout) || !freopen("/dev/null", "w", stderr))
            clearerr(stderr);
    }
    int code = sweep_main(argc, argv, history);
    return sw_sweep_mpi_finish(&w, code);
#endif
}

static int sweep_main(int argc, char **argv, const char *history)
{
    char **rest = calloc((size_t)argc + 1, sizeof *rest);
    if (!rest)
        return 1;
    int n_rest = 0, members_parallel = 0;
    int code = take_members_parallel(argc, argv, rest, &n_rest, &members_parallel);
    cli_args a;
    sw_error err = { 0 };
    if (code < 0)
        code = cli_parse("sweep", usage_sweep, n_rest, rest, CLI_OUT | CLI_RUN_OPTS | CLI_PRECISION, &a);
    free(rest);
    if (code < 0 && !a.scenario)
        code = cli_usage_error("sweep", "%s", "needs a scenario file with a [sweep] section");
    if (code >= 0)
        return agree(code, NULL, &err);

    sw_scenario *sc = malloc(sizeof *sc);
    sw_sweep_plan plan;
    sw_sweep_summary summary;
    if (!sc) {
        sw_fail(&err, SW_ERR_NOMEM, "out of memory");
        return agree(1, NULL, &err);
    }
    if (sw_scenario_load(a.scenario, sc, &err) != SW_OK) {
        free(sc);
        return agree(cli_fail("sweep", &err), NULL, &err);
    }
    cli_apply_precision(&a, sc);
    if (!sc->sweep.present) {
        fprintf(stderr, "shoreward sweep: error: %s has no [sweep] section; docs/sweep.md says how to write one\n",
                a.scenario);
        sw_fail(&err, SW_ERR_USAGE, "%s has no [sweep] section; docs/sweep.md says how to write one", a.scenario);
        sw_scenario_free(sc);
        free(sc);
        return agree(1, NULL, &err);
    }
    char out[SW_PATH_MAX];
    if (a.out)
        snprintf(out, sizeof out, "%s", a.out);
    else {
        cli_default_out(a.scenario, out, sizeof out);
        size_t n = strlen(out);
        if (n >= 4 && !strcmp(out + n - 4, "-out"))
            snprintf(out + n - 4, sizeof out - (n - 4), "-sweep");
    }
    if (sw_sweep_plan_build(sc, out, &plan, &err) != SW_OK) {
        sw_scenario_free(sc);
        free(sc);
        return agree(cli_fail("sweep", &err), NULL, &err);
    }
    code = agree(-1, &plan, &err);
    if (code >= 0) {
        sw_sweep_plan_free(&plan);
        sw_scenario_free(sc);
        free(sc);
        return code;
    }
    if (!a.json && !a.quiet && printing_rank()) {
        printf("Scenario   %s  (%s)\n", sc->title, sc->path);
        sw_sweep_report_plan(stdout, &plan, a.threads, members_parallel, 0, 0);
#ifdef SW_HAVE_MPI
        if (mpi_world)
            printf("MPI        %d ranks, each running one member at a time (rank 0 with %d thread%s); rank 0 %s\n",
                   mpi_world->size, sw_sweep_mpi_threads(mpi_world, a.threads),
                   sw_sweep_mpi_threads(mpi_world, a.threads) == 1 ? "" : "s",
                   mpi_world->rank0_runs_members ? "also dispatches" : "only dispatches");
#endif
        printf("\n%s\n\n", sw_caution_sweep_for(sc));
        fflush(stdout);
    }
#ifdef SW_HAVE_MPI
    if (mpi_world && mpi_world->rank == 0 && (size_t)mpi_world->size > plan.n_members)
        fprintf(stderr, "shoreward sweep: note: %d ranks for %zu members: %zu of them will have nothing to do; "
                        "mpirun -n %zu is enough\n", mpi_world->size, plan.n_members,
                (size_t)mpi_world->size - plan.n_members, plan.n_members);
#endif
    cli_catch_signals();
    int tty = isatty(STDERR_FILENO) && !a.quiet && printing_rank();
    sw_sweep_options opt = {
        .threads = a.threads, .members_parallel = members_parallel, .history = history,
        .progress = tty ? show_progress : NULL, .stop = &cli_stop,
    };
#ifdef SW_HAVE_MPI
    sw_status rc = mpi_world ? sw_sweep_mpi_run(mpi_world, &plan, &opt, &summary, &err)
                             : sw_sweep_run(&plan, &opt, &summary, &err);
#else
    sw_status rc = sw_sweep_run(&plan, &opt, &summary, &err);
#endif
    if (tty)
        fputc('\n', stderr);
    code = 0;
    if (rc != SW_OK) {
        code = cli_fail("sweep", &err);
    } else if (!printing_rank()) {
        code = 0;   /* a worker rank: rank 0 reports */
    } else {
        if (a.json) {
            char *js = sw_sweep_json(&plan, &summary);
            if (js)
                puts(js);
            free(js);
            fprintf(stderr, "%s\n", sw_caution_sweep_for(sc));
        } else {
            sw_sweep_report(stdout, &plan, &summary);
            printf("\nPictures: %s %s\n", cli_tool("plot-sweep"), out);
        }
        if (summary.n_ok == 0) {
            fprintf(stderr, "shoreward sweep: error: every member failed (causes above)\n");
            code = 1;
        }
    }
    sw_sweep_summary_free(&summary);
    sw_sweep_plan_free(&plan);
    sw_scenario_free(sc);
    free(sc);
    return code;
}
