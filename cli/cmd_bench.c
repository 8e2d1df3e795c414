/* cmd_bench.c - `shoreward bench`: step rates against the machine's memory bandwidth. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "studies/bench.h"
#include "cli.h"
#include "model/layout.h"
#include "model/model.h"

static const char *const usage_bench =
    "Usage: shoreward bench [--size N] [--threads LIST] [--rounds R] [--precision P] [--layouts LIST]\n"
    "                       [--steps-per-sweep K] [--real-refine R] [--no-numpy] [--json]\n"
    "\n"
    "Measures, in one process and in interleaved rounds so that machine noise hits every figure alike:\n"
    "  - the STREAM triad bandwidth (McCalpin's kernel, best of 3 per round);\n"
    "  - each layout's step on a large grid (working set >= 4 x last-level cache and >= 2 GB) and on a\n"
    "    cache-resident grid, with and without arrival/extreme tracking, and over thread counts;\n"
    "  - each layout's step in sweeps of K steps over memory on the large grid (temporal blocking, what a\n"
    "    run on that grid does) beside the one-step step, its effective bandwidth against triad, and its\n"
    "    tracking cost on the moving source; the two schedules are checked to leave the same bits;\n"
    "  - the same C-layout scheme written in plain vectorised NumPy (tools/bench_numpy.py);\n"
    "  - each layout's step with surface forcing beside the plain step: a moving storm (its slabs rebuilt\n"
    "    every 600 s of model time), a weather file (hourly slabs), and the forced step with its slabs held;\n"
    "  - each layout's step on a geographic grid (longitude, latitude) of the same size beside the projected one;\n"
    "  - tracking twice: on the bench's source, a hump of 20 cells' e-folding radius (most of the grid quiet),\n"
    "    and on a moving source, a hump whose radius is an eighth of the side (most of the grid moving);\n"
    "  - a real run, what users pay for: the built-in demo (a fictional coast) with its grid refined R times\n"
    "    (3 million cells at R = 4), 30 min of model time run as `shoreward run` runs it, gauges and the\n"
    "    arrival/extreme maps on (results kept in memory, no files), beside the plain step on the same grid,\n"
    "    time step and schedule (C layout, the most threads).\n"
    "Reports medians with the spread, the effective bandwidth (cells x steps x bytes per cell update per\n"
    "the layout's bytes model / time) as a ratio to triad, the parallel efficiency and the speed-up over\n"
    "NumPy. A tracking figure is the time the arrival/extreme maps add to the step (\"adds 30 %\": the\n"
    "tracked step takes 1.3 x the plain one), with the share of the grid in motion: of the row segments\n"
    "(512 cells) the timed tracked steps looked at, those whose maps changed; quiet segments cost one\n"
    "comparison, so the cost grows with that share. Nothing passes or fails. Needs about 6 GB of memory\n"
    "at the default size (the NumPy version on the same grid needs about as much again).\n"
    "\n"
    "  --size N        cells per side of the large grid (default: from the cache size)\n"
    "  --threads LIST  thread counts for scaling, e.g. 1,2 (default: 1 .. cores)\n"
    "  --rounds R      interleaved rounds, 3 to 32 (default 5)\n"
    "  --precision P   single (default: the performance targets are stated for it) or double\n"
    "  --layouts LIST  layouts to measure, e.g. C or A,C (default: all)\n"
    "  --steps-per-sweep K  steps per sweep of the blocked figures, 1 to 16 (default: what a run on the\n"
    "                  large grid with the most threads chooses, for each layout)\n"
    "  --real-refine R refinement of the real run's demo grid, 1 to 16, or 0 to skip it (default 4)\n"
    "  --no-numpy      skip the NumPy comparison\n"
    "  --json          print the figures as one JSON object on stdout\n"
    "\n"
    "Example:\n"
    "  shoreward bench --size 3000 --rounds 3\n"
    "  shoreward bench --layouts C --precision double\n"
    "  shoreward bench --layouts C,E --steps-per-sweep 8\n";

static void show(const char *what, void *user)
{
    (void)user;
    fprintf(stderr, "  %s\n", what);
}

int cmd_bench(int argc, char **argv, const char *history)
{
    (void)history;
    sw_bench_options opt = {.rounds = 5, .python = "/usr/bin/python3", .numpy_script = cli_bench_script(),
                            .progress = show, .precision = SW_SINGLE,
                            .real_refine = SW_BENCH_REAL_REFINE};
    char layouts[16] = "";
    int json = 0;
    for (int k = 0; k < argc; k++) {
        const char *s = argv[k];
        const char *val = k + 1 < argc ? argv[k + 1] : NULL;
        char *end = NULL;
        if (!strcmp(s, "--help") || !strcmp(s, "-h")) {
            fputs(usage_bench, stdout);
            return 0;
        } else if (!strcmp(s, "--json")) {
            json = 1;
        } else if (!strcmp(s, "--no-numpy")) {
            opt.numpy_script = NULL;
        } else if (!strcmp(s, "--size") && val) {
            long n = strtol(val, &end, 10);
            if (*end || n < 16 || n > 200000)
                return cli_usage_error("bench", "--size takes a whole number from 16 to 200000, not '%s'", val);
            opt.n_large = (size_t)n;
            k++;
        } else if (!strcmp(s, "--rounds") && val) {
            long n = strtol(val, &end, 10);
            if (*end || n < 3 || n > 32)
                return cli_usage_error("bench", "--rounds takes a whole number from 3 to 32, not '%s'", val);
            opt.rounds = (int)n;
            k++;
        } else if (!strcmp(s, "--steps-per-sweep") && val) {
            long n = strtol(val, &end, 10);
            if (*end || n < 1 || n > SW_WAVE_MAX_STEPS)
                return cli_usage_error("bench", "--steps-per-sweep takes a whole number from 1 to 16, not '%s'", val);
            opt.steps_per_sweep = (int)n;
            k++;
        } else if (!strcmp(s, "--real-refine") && val) {
            long n = strtol(val, &end, 10);
            if (*end || n < 0 || n > 16)
                return cli_usage_error("bench", "--real-refine takes a whole number from 0 (skip) to 16, not '%s'", val);
            opt.real_refine = (int)n;
            k++;
        } else if (!strcmp(s, "--precision") && val) {
            if (!sw_precision_parse(val, &opt.precision))
                return cli_usage_error("bench", "--precision takes single or double, not '%s'", val);
            k++;
        } else if (!strcmp(s, "--layouts") && val) {
            size_t n = 0;
            for (const char *p = val; *p; p++) {
                if (*p == ',')
                    continue;
                char name[2] = {*p, '\0'};
                if (!sw_layout_find(name) || n + 1 >= sizeof layouts)
                    return cli_usage_error("bench", "--layouts takes a list of layouts such as A,C, not '%s'", val);
                layouts[n++] = *p;
                layouts[n] = '\0';
            }
            if (!n)
                return cli_usage_error("bench", "--layouts takes a list of layouts such as A,C, not '%s'", val);
            opt.layouts = layouts;
            k++;
        } else if (!strcmp(s, "--threads") && val) {
            char buf[256];
            snprintf(buf, sizeof buf, "%s", val);
            for (char *tok = strtok(buf, ","); tok; tok = strtok(NULL, ",")) {
                long n = strtol(tok, &end, 10);
                if (*end || n < 1 || n > 1024 || opt.n_threads == SW_BENCH_MAX_THREADS)
                    return cli_usage_error("bench", "--threads takes a list of thread counts such as 1,2, not '%s'", val);
                opt.threads[opt.n_threads++] = (int)n;
            }
            k++;
        } else {
            return cli_usage_error("bench", "unknown or incomplete option '%s'", s);
        }
    }
    if (json)
        opt.progress = NULL;
    sw_bench_result *res = malloc(sizeof *res);
    sw_error err = {0};
    if (!res) {
        fprintf(stderr, "shoreward bench: error: out of memory\n");
        return 1;
    }
    if (sw_bench_run(&opt, res, &err) != SW_OK) {
        free(res);
        return cli_fail("bench", &err);
    }
    if (json) {
        char *js = sw_bench_json(res);
        if (js)
            puts(js);
        free(js);
    } else {
        sw_bench_print(stdout, res);
    }
    free(res);
    return 0;
}
