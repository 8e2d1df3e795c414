/* main.c - the shoreward command line: dispatches to one function per command (see cli.h). */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

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
            char *history = join_args(argc, argv);
            int code = commands[q].fn(argc - 2, argv + 2, history ? history : "shoreward");
            free(history);
            return code;
        }
    fprintf(stderr, "shoreward: '%s' is not a command (accepted:", argv[1]);
    for (size_t q = 0; q < sizeof commands / sizeof commands[0]; q++)
        fprintf(stderr, " %s", commands[q].name);
    fprintf(stderr, ")\nTry `shoreward --help`.\n");
    return 2;
}
