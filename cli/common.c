/* common.c - argument parsing, errors, progress and the run-and-report sequence shared by commands. */
#define _POSIX_C_SOURCE 200809L
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "base/cpu_share.h"
#include "base/omp_compat.h"
#include "cli.h"
#include "model/model.h"
#include "run/split.h"
#include "outputs/ncwrite.h"
#include "outputs/report.h"
#include "run/memcheck.h"
#include "run/outdir.h"
#include "run/setup.h"

volatile sig_atomic_t cli_stop = 0;

/* The folder holding this program's executable into dir (size n), without the final '/'; 0 if unknown. */
static int exe_dir(char *dir, size_t n)
{
    ssize_t len = readlink("/proc/self/exe", dir, n - 1);
    if (len <= 0 || (size_t)len >= n - 1)
        return 0;
    dir[len] = '\0';
    char *slash = strrchr(dir, '/');
    if (!slash)
        return 0;
    *slash = '\0';
    return 1;
}

void cli_launcher_size(long *size, long *rank)
{
    static const char *const names[][2] = {
        {"OMPI_COMM_WORLD_SIZE", "OMPI_COMM_WORLD_RANK"},
        {"PMI_SIZE", "PMI_RANK"},
        {"MV2_COMM_WORLD_SIZE", "MV2_COMM_WORLD_RANK"},
    };
    *size = 0;
    *rank = 0;
    for (size_t q = 0; q < sizeof names / sizeof names[0]; q++) {
        const char *n = getenv(names[q][0]), *r = getenv(names[q][1]);
        if (n && *n) {
            *size = strtol(n, NULL, 10);
            *rank = r && *r ? strtol(r, NULL, 10) : 0;
            return;
        }
    }
}

const char *cli_tool(const char *name)
{
    static char out[4200];
    char dir[4096];
    if (exe_dir(dir, sizeof dir)) {
        snprintf(out, sizeof out, "%s/shoreward-%s", dir, name);
        if (access(out, X_OK) == 0) {
            snprintf(out, sizeof out, "shoreward-%s", name);
            return out;
        }
    }
    snprintf(out, sizeof out, "tools/%s", name);
    return out;
}

const char *cli_bench_script(void)
{
    static char out[4200];
    char dir[4096];
    if (exe_dir(dir, sizeof dir)) {
        snprintf(out, sizeof out, "%s/../share/shoreward/bench_numpy.py", dir);
        if (access(out, R_OK) == 0)
            return out;
    }
    return SW_SOURCE_DIR "/tools/bench_numpy.py";
}

static void on_signal(int sig)
{
    (void)sig;
    cli_stop = 1;
}

void cli_catch_signals(void)
{
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = on_signal;
    sigaction(SIGINT, &sa, NULL);
    sigaction(SIGTERM, &sa, NULL);
}

int cli_usage_error(const char *cmd, const char *fmt, const char *arg)
{
    fprintf(stderr, "shoreward %s: ", cmd);
    fprintf(stderr, fmt, arg);
    fprintf(stderr, "\nTry `shoreward %s --help`.\n", cmd);
    return 2;
}

int cli_fail(const char *cmd, const sw_error *err)
{
    fprintf(stderr, "shoreward %s: error: %s\n", cmd, err->msg);
    return err->code == SW_ERR_INTERRUPTED ? 130 : 1;
}

/* The value of option `name` given as "--name VALUE" or "--name=VALUE", or NULL if s is not it.
 * Advances *k past a separate value; sets *missing when the value is absent. */
static const char *option_value(const char *name, int argc, char **argv, int *k, int *missing)
{
    size_t n = strlen(name);
    const char *s = argv[*k];
    if (strncmp(s, name, n) != 0)
        return NULL;
    if (s[n] == '=')
        return s + n + 1;
    if (s[n] != '\0')
        return NULL;
    if (*k + 1 < argc)
        return argv[++*k];
    *missing = 1;
    return "";
}

/* Prints text to f folded at spaces into lines of at most width characters (a longer word stays whole). */
static void print_folded(FILE *f, const char *text, size_t width)
{
    while (*text) {
        size_t n = strlen(text), cut = n;
        if (n > width) {
            cut = width;
            while (cut > 0 && text[cut] != ' ')
                cut--;
            if (cut == 0)
                cut = strcspn(text, " ");
        }
        fprintf(f, "%.*s\n", (int)cut, text);
        text += cut;
        while (*text == ' ')
            text++;
    }
}

/* The help text of cmd, and for a command whose output could be read as hazard information (run, check,
 * demo, compare, sweep) the full caution after it; sweep adds the sweep sentence (run.h). */
static void print_help(const char *cmd, const char *usage)
{
    static const char *const hazard[] = {"run", "check", "demo", "compare", "sweep"};
    fputs(usage, stdout);
    for (size_t q = 0; q < sizeof hazard / sizeof hazard[0]; q++)
        if (!strcmp(cmd, hazard[q])) {
            fputc('\n', stdout);
            print_folded(stdout, sw_caution(), 100);
            if (!strcmp(cmd, "sweep"))
                print_folded(stdout, sw_caution_sweep(), 100);
            fputs("A run with a storm, weather file or level series carries the longer surge caution.\n", stdout);
        }
}

int cli_parse(const char *cmd, const char *usage, int argc, char **argv, int flags, cli_args *a)
{
    sw_ncw_no_exit_handler();   /* before any NetCDF call: no HDF5 exit handler to crash after a full disk */
    memset(a, 0, sizeof *a);
    for (int k = 0; k < argc; k++) {
        const char *s = argv[k], *val;
        int missing = 0;
        if (!strcmp(s, "--help") || !strcmp(s, "-h")) {
            print_help(cmd, usage);
            return 0;
        } else if (!strcmp(s, "--json")) {
            a->json = 1;
        } else if ((flags & CLI_RUN_OPTS) && !strcmp(s, "--quiet")) {
            a->quiet = 1;
        } else if ((flags & CLI_RESUME) && !strcmp(s, "--resume")) {
            a->resume = 1;
        } else if ((flags & CLI_RECALIBRATE) && !strcmp(s, "--recalibrate")) {
            a->recalibrate = 1;
        } else if ((flags & CLI_OUT) && (val = option_value("--out", argc, argv, &k, &missing))) {
            if (missing || !*val)
                return cli_usage_error(cmd, "%s needs a folder", "--out");
            a->out = val;
        } else if ((flags & CLI_RUN_OPTS) && (val = option_value("--threads", argc, argv, &k, &missing))) {
            char *end = NULL;
            long n = strtol(val, &end, 10);
            if (missing || end == val || *end || n < 1 || n > 1024)
                return cli_usage_error(cmd, "--threads takes a whole number from 1 to 1024, not '%s'", val);
            a->threads = (int)n;
        } else if ((flags & CLI_RESUME) && (val = option_value("--steps-per-sweep", argc, argv, &k, &missing))) {
            char *end = NULL;
            long n = strtol(val, &end, 10);
            if (missing || end == val || *end || n < 1 || n > SW_WAVE_MAX_STEPS)
                return cli_usage_error(cmd, "--steps-per-sweep takes a whole number from 1 to 16 (the most "
                                       "steps a sweep takes), not '%s'", missing ? "" : val);
            a->steps_per_sweep = (int)n;
        } else if ((flags & CLI_PRECISION) && (val = option_value("--precision", argc, argv, &k, &missing))) {
            if (missing || !sw_precision_parse(val, &a->precision))
                return cli_usage_error(cmd, "--precision takes double or single, not '%s'", val);
            a->precision_set = 1;
        } else if (s[0] == '-' && s[1]) {
            return cli_usage_error(cmd, "unknown option '%s'", s);
        } else if (!a->scenario) {
            a->scenario = s;
        } else {
            return cli_usage_error(cmd, "unexpected argument '%s'", s);
        }
    }
    return -1;
}

void cli_apply_precision(const cli_args *a, sw_scenario *sc)
{
    if (a->precision_set)
        sc->precision = a->precision;
}

void cli_show_progress(const sw_progress *p, void *user)
{
    (void)user;
    char sim[48], ela[48], rem[48];
    sw_format_duration(p->sim_time_s, sim, sizeof sim);
    sw_format_duration(p->elapsed_s, ela, sizeof ela);
    sw_format_duration(p->remaining_s, rem, sizeof rem);
    fprintf(stderr, "\r  t = %-16s %5.1f %%   elapsed %-14s ETA %-14s %.3g cell-updates/s   ", sim,
            100.0 * (double)p->step / (double)(p->n_steps ? p->n_steps : 1), ela, rem, p->cell_updates_per_s);
    fflush(stderr);
}

void cli_default_out(const char *scenario, char *out, size_t n)
{
    const char *base = strrchr(scenario, '/');
    base = base ? base + 1 : scenario;
    const char *dot = strrchr(base, '.');
    int len = dot && dot != base ? (int)(dot - base) : (int)strlen(base);
    snprintf(out, n, "%.*s-out", len, base);
}

/* A split run's ranks agree on rc (run/split.h: the lowest failing rank's message); rc itself otherwise. */
static sw_status agreed(const cli_args *a, sw_status rc, sw_error *err)
{
    return a->split ? sw_split_agree(a->split, rc, err) : rc;
}

int cli_run_scenario(const char *cmd, sw_scenario *sc, const cli_args *a, const char *out_dir,
                     const char *history)
{
    sw_error err = {0};
    sw_setup setup;
    sw_outdir od = {.lock_fd = -1};   /* created, write-tested and locked before anything is computed
                                       * (run/outdir.h) */
    const int root = !a->split || a->split->rank == 0;   /* a split run: rank 0 owns the folder */
    if (agreed(a, root ? sw_outdir_open(&od, out_dir, history, &err) : SW_OK, &err) != SW_OK)
        return cli_fail(cmd, &err);
    if (od.note[0])
        fprintf(stderr, "shoreward %s: note: %s\n", cmd, od.note);
    const sw_status built = sw_setup_build(sc, &setup, &err);
    if (agreed(a, built, &err) != SW_OK) {
        if (built == SW_OK)   /* another rank failed */
            sw_setup_free(&setup);
        sw_outdir_close(&od);
        return cli_fail(cmd, &err);
    }
    /* the outputs against the free space, the run's memory against the machine and its limits */
    sw_memory_limits lim;
    sw_memory_limits_read(&lim);
    double held = 2.0 * (double)sw_grid_cells(&setup.grid) * sizeof(double);   /* depth and eta0, built */
    double need = (double)setup.total_bytes > held ? (double)setup.total_bytes - held : 0;
    /* the threads the run will have: --threads, else the process's choice (main.c, base/cpu_share.h) */
    int threads = a->threads > 0 ? a->threads : omp_get_max_threads();
    sw_status fits = root ? sw_outdir_check_space(out_dir, sw_outdir_output_bytes(sc, &setup), &err) : SW_OK;
    const int on_node = a->split && a->split->node_ranks > 1 ? a->split->node_ranks : 1;
    if (fits == SW_OK)   /* every rank of a split run holds the whole grid, and a node's ranks add up */
        fits = sw_memory_check(need * on_node, threads, &lim, &err);
    if (fits != SW_OK && on_node > 1) {
        char more[96];
        snprintf(more, sizeof more, " (for the %d ranks on this node, each holding the whole grid)", on_node);
        strncat(err.msg, more, sizeof err.msg - strlen(err.msg) - 1);
    }
    if (agreed(a, fits, &err) != SW_OK) {
        sw_setup_free(&setup);
        sw_outdir_close(&od);
        return cli_fail(cmd, &err);
    }

    int tty = isatty(STDERR_FILENO) && !a->quiet;
    if (!a->json && !a->quiet) {
        sw_report_plan(stdout, sc, &setup, NULL);
        const char *why = sw_cpu_share_note(threads);
        printf("\nThreads    %d%s%s%s\n", threads, *why ? " (" : "", why, *why ? ")" : "");
        char schedule[200];
        sw_run_schedule(sc, &setup, threads, a->steps_per_sweep, a->split ? a->split->size : 1, schedule,
                        sizeof schedule);
        printf("Schedule   %s\n", schedule);
        printf("\n%s\n\n", sw_caution_for(sc));
        fflush(stdout);
    }
    cli_catch_signals();
    sw_run_options opt = {
        .out_dir = out_dir, .history = history, .threads = a->threads,
        .progress = tty ? cli_show_progress : NULL, .stop = &cli_stop, .resume = a->resume, .split = a->split,
        .steps_per_sweep = a->steps_per_sweep,
    };
    sw_run_result *res = malloc(sizeof *res);
    if (!res) {
        sw_setup_free(&setup);
        sw_outdir_close(&od);
        fprintf(stderr, "shoreward %s: error: out of memory\n", cmd);
        return 1;
    }
    sw_status rc = sw_run(sc, &setup, &opt, res, &err);
    sw_outdir_close(&od);   /* the set is in place (or the old one untouched): the next run may start */
    if (tty)
        fputc('\n', stderr);
    int code = 0;
    if (rc != SW_OK) {
        code = cli_fail(cmd, &err);
    } else if (a->json) {
        char *js = sw_report_run_json(sc, &setup, res);
        if (js)
            puts(js);
        free(js);
        fprintf(stderr, "%s\n", sw_caution_for(sc));
    } else {
        sw_report_run(stdout, sc, &setup, res);
    }
    free(res);
    sw_setup_free(&setup);
    return code;
}
