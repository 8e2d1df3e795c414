/* main.c - the shoreward command line: dispatches to one function per command (see cli.h). */
#define _POSIX_C_SOURCE 200809L
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "base/cpu_share.h"
#include "cli.h"
#include "outputs/ncwrite.h"

static const char *const usage_main =
    "shoreward - linear shallow-water sandbox for tsunami and surge arrival times\n"
    "\n"
    "Usage: shoreward COMMAND [OPTIONS]\n"
    "\n"
    "Commands:\n"
    "  run SCENARIO     run a scenario and write gauge series and arrival/peak maps (NetCDF)\n"
    "  check SCENARIO   validate a scenario and print the plan (grid, dt, Courant number, cost)\n"
    "  demo [DIR]       write the built-in fictional scenario into DIR and run it\n"
    "  stability        Courant limits and wave accuracy of each grid layout (von Neumann analysis)\n"
    "  compare SCENARIO run a scenario on several grid layouts and resolutions, side by side\n"
    "  bench            measure step rates against the machine's memory bandwidth and NumPy\n"
    "  sweep SCENARIO   sensitivity sweep: many runs with the [sweep] section's settings varied\n"
    "\n"
    "Options:\n"
    "  --help           this text; `shoreward COMMAND --help` explains a command\n"
    "  --version        print the version\n"
    "\n"
    "The scenario file format is described in docs/scenario.md and the README.\n";

typedef struct {
    const char *name;
    int (*fn)(int argc, char **argv, const char *history);
} command;

static const command commands[] = {
    {"run", cmd_run},
    {"check", cmd_check},
    {"demo", cmd_demo},
    {"stability", cmd_stability},
    {"compare", cmd_compare},
    {"bench", cmd_bench},
    {"sweep", cmd_sweep},
};

/* The command line as one string, for the history attribute; NULL when out of memory. */
static char *join_args(int argc, char **argv)
{
    size_t n = 1;
    for (int k = 0; k < argc; k++)
        n += strlen(argv[k]) + 1;
    char *s = malloc(n);
    if (!s)
        return NULL;
    char *p = s;
    for (int k = 0; k < argc; k++)
        p += sprintf(p, k ? " %s" : "%s", argv[k]);
    return s;
}

/* The commands whose runs keep OpenMP threads busy: they get the automatic thread choice (base/cpu_share.h).
 * Not bench (it measures the thread counts it is given) nor stability (no long parallel work). */
static int runs_threads(const char *cmd)
{
    static const char *const names[] = {"run", "demo", "check", "compare", "sweep"};
    for (size_t q = 0; q < sizeof names / sizeof names[0]; q++)
        if (!strcmp(cmd, names[q]))
            return 1;
    return 0;
}

/* The N of --threads N / --threads=N among a command's arguments, 0 when absent or not a whole number
 * from 1 to 1024 (cli_parse then refuses it with the usage message). 0 too when --help is asked for. */
static int threads_option(int argc, char **argv, int *help)
{
    int n = 0;
    *help = 0;
    for (int k = 0; k < argc; k++) {
        const char *val = NULL;
        if (!strcmp(argv[k], "--help") || !strcmp(argv[k], "-h"))
            *help = 1;
        else if (!strcmp(argv[k], "--threads") && k + 1 < argc)
            val = argv[++k];
        else if (!strncmp(argv[k], "--threads=", 10))
            val = argv[k] + 10;
        if (val) {
            char *end = NULL;
            long v = strtol(val, &end, 10);
            n = end != val && !*end && v >= 1 && v <= 1024 ? (int)v : 0;
        }
    }
    return n;
}

/* The threads and the waiting of this process, chosen before any OpenMP work (base/cpu_share.h): taken
 * back from before a restart, or measured and decided for a command that runs threads. Passive waiting
 * needs a fresh process (libgomp reads OMP_WAIT_POLICY before main): the program then executes itself
 * again with the same arguments and does not come back here. Returns -1 to go on, or an exit status. */
static int choose_threads(int argc, char **argv)
{
    sw_cpu_choice c;
    if (sw_cpu_share_import(&c)) {
        sw_cpu_share_apply(&c);
        return -1;
    }
    int help = 0, option = threads_option(argc - 2, argv + 2, &help);
    long copies = 0, rank = 0;
    cli_launcher_size(&copies, &rank);
    if (!runs_threads(argv[1]) || help || copies > 1)   /* MPI ranks: the launcher places them (sweep_mpi.h) */
        return -1;
    sw_cpu_wishes w;
    sw_cpu_wishes_from_env(&w, option);
    sw_cpu_load load;
    const sw_cpu_load *lp = NULL;
    if (sw_cpu_share_wants_load(&w)) {
        sw_cpu_load_measure(SW_CPU_SHARE_SAMPLE_S, &load);
        lp = &load;
    }
    sw_error err = {0};
    if (sw_cpu_share_decide(lp, &w, &c, &err) != SW_OK) {
        fprintf(stderr, "shoreward %s: error: %s\n", argv[1], err.msg);
        return 2;
    }
    if (sw_cpu_share_needs_restart(&c)) {
        const char *why = NULL;
        if (sw_cpu_share_export(&c, &err) == SW_OK) {
            fflush(NULL);
            execv("/proc/self/exe", argv);
            why = strerror(errno);
            sw_cpu_share_unexport();
        } else {
            why = err.msg;
        }
        c.wait = SW_WAIT_SPIN;   /* this process keeps libgomp's spinning waits */
        size_t len = strlen(c.note);
        char *cut = strstr(c.note, "passive waiting");
        if (cut)
            len = (size_t)(cut - c.note);
        snprintf(c.note + len, sizeof c.note - len, "spinning waits (the restart for passive waiting failed: %.60s)",
                 why);
    }
    sw_cpu_share_apply(&c);
    return -1;
}

/* Only run and sweep spread over the ranks of an MPI job (demo says how itself: cmd_run.c); any other
 * command started by a launcher with more than one copy would do its work N times over: refused (exit 2,
 * one line from rank 0 only). Returns -1 to go on. */
static int one_process_only(const char *cmd)
{
    long copies = 0, rank = 0;
    cli_launcher_size(&copies, &rank);
    if (copies <= 1 || !strcmp(cmd, "run") || !strcmp(cmd, "sweep") || !strcmp(cmd, "demo"))
        return -1;
    if (rank == 0)
        fprintf(stderr, "shoreward %s: error: %s runs in one process, not %ld (only run and sweep spread over MPI "
                "ranks): start it without mpirun\n", cmd, cmd, copies);
    return 2;
}

int main(int argc, char **argv)
{
    sw_ncw_no_exit_handler();   /* before any NetCDF call (stability and bench too): no HDF5 exit handler to
                                 * crash after a failed close on a full disk (outputs/ncwrite.h) */
    if (argc < 2) {
        fputs(usage_main, stderr);
        fprintf(stderr, "\n%s\n", sw_caution_short());
        return 2;
    }
    if (!strcmp(argv[1], "--help") || !strcmp(argv[1], "-h") || !strcmp(argv[1], "help")) {
        fputs(usage_main, stdout);
        printf("\n%s\n", sw_caution_short());
        return 0;
    }
    if (!strcmp(argv[1], "--version")) {
        printf("shoreward %s\n", SW_VERSION);
        return 0;
    }
    for (size_t q = 0; q < sizeof commands / sizeof commands[0]; q++)
        if (!strcmp(argv[1], commands[q].name)) {
            int code = one_process_only(argv[1]);
            if (code >= 0)
                return code;
            code = choose_threads(argc, argv);   /* before the command's first OpenMP call */
            if (code >= 0)
                return code;
            char *history = join_args(argc, argv);
            code = commands[q].fn(argc - 2, argv + 2, history ? history : "shoreward");
            free(history);
            return code;
        }
    fprintf(stderr, "shoreward: '%s' is not a command (accepted:", argv[1]);
    for (size_t q = 0; q < sizeof commands / sizeof commands[0]; q++)
        fprintf(stderr, " %s", commands[q].name);
    fprintf(stderr, ")\nTry `shoreward --help`.\n");
    return 2;
}
