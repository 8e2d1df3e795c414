/* cli.h - what the command files of the shoreward command line share.
 *
 * Each command is one function `int cmd_NAME(int argc, char **argv, const char *history)` taking
 * the arguments after the command name and returning the process exit status:
 * 0 success, 1 the run or its inputs failed, 2 bad command-line usage, 130 interrupted.
 * Commands are listed in the table in main.c; adding one is a file here and a line there.
 */
#ifndef SW_CLI_H
#define SW_CLI_H

#include <signal.h>
#include <stddef.h>

#include "run/run.h"
#include "inputs/scenario.h"
#include "base/status.h"

/* Set by SIGINT/SIGTERM once cli_catch_signals() ran; runs poll it and stop cleanly. */
extern volatile sig_atomic_t cli_stop;

/* Installs the SIGINT/SIGTERM handlers that set cli_stop. */
void cli_catch_signals(void);

/* Options common to the commands; which ones a command accepts is decided by parse flags. */
typedef struct {
    const char *scenario;   /* first positional argument, or NULL */
    const char *out;        /* --out DIR */
    int threads;            /* --threads N, 0 = default */
    int quiet;              /* --quiet */
    int json;               /* --json */
    int precision_set;      /* 1 when --precision was given */
    sw_precision precision; /* --precision double|single: replaces the scenario's [run] precision */
    int recalibrate;        /* --recalibrate: measure this machine's rate again (check) */
    int resume;             /* --resume: continue from the output folder's checkpoint (run) */
    int steps_per_sweep;    /* --steps-per-sweep N (run): 0 = the automatic choice */
    struct sw_split *split; /* set by cmd_run under an MPI launcher: this rank of a split run (run/split.h) */
} cli_args;

/* parse flags: accept --out; accept --threads/--quiet; accept --precision; accept --recalibrate;
 * accept --resume and --steps-per-sweep */
enum { CLI_OUT = 1, CLI_RUN_OPTS = 2, CLI_PRECISION = 4, CLI_RECALIBRATE = 8, CLI_RESUME = 16 };

/* Help text for --precision, shared by the commands that take it. */
#define CLI_PRECISION_HELP \
    "  --precision P   double or single: the model state's precision, over the scenario's [run]\n" \
    "                  precision (default double). single halves memory and runs faster; results\n" \
    "                  differ from double by round-off, ~1e-6 relative (docs/verification.md)\n"

/* Applies --precision (if given) to a loaded scenario. */
void cli_apply_precision(const cli_args *a, sw_scenario *sc);

/* Parses argv into a. Prints `usage` and returns 0 for --help; prints a usage error and returns 2
 * for a bad argument; returns -1 when the command should go on. */
int cli_parse(const char *cmd, const char *usage, int argc, char **argv, int flags, cli_args *a);

/* Prints "shoreward CMD: <fmt with arg>" and a hint to --help on stderr; returns 2. */
int cli_usage_error(const char *cmd, const char *fmt, const char *arg);

/* Prints "shoreward CMD: error: <err->msg>" on stderr; returns 130 when interrupted, else 1. */
int cli_fail(const char *cmd, const sw_error *err);

/* Progress callback for runs: a one-line status on stderr. user is unused. */
void cli_show_progress(const sw_progress *p, void *user);

/* Default output folder for a scenario path: "<file name without extension>-out". */
void cli_default_out(const char *scenario, char *out, size_t n);

/* Opens and locks out_dir (run/outdir.h: created, write-tested, .shoreward.lock), builds the setup for sc,
 * refuses too little disk or memory before the first step, prints the plan (unless quiet or json), runs
 * it into out_dir (from its checkpoint with a->resume) and prints the summary (text, or JSON on stdout);
 * releases the lock. Returns the exit status. */
int cli_run_scenario(const char *cmd, sw_scenario *sc, const cli_args *a, const char *out_dir,
                     const char *history);

/* How the user reaches the picture tool `name` ("plot", "plot-sweep", "plot-stability"): "shoreward-NAME"
 * when this program runs installed (that file sits beside it in bin/), else "tools/NAME" (a checkout).
 * Returns a static buffer, valid until the next call. */
const char *cli_tool(const char *name);

/* The NumPy bench script: PREFIX/share/shoreward/bench_numpy.py when this program runs installed in
 * PREFIX/bin, else the checkout's tools/bench_numpy.py (the path compiled in). Static buffer. */
const char *cli_bench_script(void);

/* The number of copies and this copy's rank that an MPI launcher announces in the environment (Open MPI,
 * MPICH and Intel MPI's Hydra or Slurm's PMI, MVAPICH); *size is 0 when none did. */
void cli_launcher_size(long *size, long *rank);

int cmd_run(int argc, char **argv, const char *history);
int cmd_check(int argc, char **argv, const char *history);
int cmd_demo(int argc, char **argv, const char *history);
int cmd_stability(int argc, char **argv, const char *history);
int cmd_compare(int argc, char **argv, const char *history);
int cmd_bench(int argc, char **argv, const char *history);
int cmd_sweep(int argc, char **argv, const char *history);

#endif
