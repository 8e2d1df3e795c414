/* cmd_compare.c - `shoreward compare`: one scenario on several layouts and resolutions. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"
#include "studies/compare.h"
#include "model/layout.h"
#include "outputs/report.h"
#include "run/outdir.h"

static const char *const usage_compare =
    "Usage: shoreward compare SCENARIO [--layouts A,C,...] [--refine 1,2,4] [--out DIR] [--threads N]\n"
    "                         [--precision P] [--quiet] [--json]\n"
    "\n"
    "Runs SCENARIO on each layout and resolution and compares them: per run the grid, dt, steps, wall\n"
    "time, cell-updates per second, memory, Courant number against the layout's limit and a grid-scale\n"
    "noise index (energy near the 2-cell wave in eta_max, which exposes the spurious modes the A and B\n"
    "layouts allow); per gauge the first arrival and peak and their differences from the reference\n"
    "(the finest C-layout run, else the finest run of the first layout).\n"
    "\n"
    "  --layouts LIST  comma-separated layouts (default: all available)\n"
    "  --refine LIST   comma-separated grid refinements: 2 halves dx and dy (default: 1)\n"
    "  --out DIR       folder for compare.md, compare.csv and each run's files (default: <name>-compare)\n"
    "  --threads N     OpenMP threads for each run\n"
    CLI_PRECISION_HELP
    "  --quiet         no progress lines\n"
    "  --json          print the comparison as one JSON object on stdout\n"
    "\n"
    "Example:\n"
    "  shoreward compare scenarios/demo.scn --layouts A,C --refine 1,2\n";

/* Splits a comma-separated list in place into at most max items. Returns the count, or -1. */
static int split(char *s, char **items, int max)
{
    int n = 0;
    for (char *tok = strtok(s, ","); tok; tok = strtok(NULL, ",")) {
        if (n == max)
            return -1;
        items[n++] = tok;
    }
    return n;
}

/* What the live progress line and the per-run lines need: which run goes on, and whether a progress line
 * is open on the terminal (it then needs its newline before anything else is printed). */
typedef struct {
    const char *const *layouts; /* the layouts, outer loop of the runs */
    const int *refine;          /* the refinements, inner loop */
    size_t n_refine, n_runs;
    size_t current;             /* the run going on, 0-based */
    int rows;                   /* 1: print a line per finished run */
    int line_open;              /* 1: a progress line is on the terminal without its newline */
} compare_view;

/* The live progress line of the run going on (stderr, a terminal only: cmd_compare passes it only then),
 * rewritten in place as `run` does (cli_show_progress), with the run's layout and refinement in front. */
static void show_progress(const sw_progress *p, void *user)
{
    compare_view *cv = user;
    char sim[48], rem[48];
    sw_format_duration(p->sim_time_s, sim, sizeof sim);
    sw_format_duration(p->remaining_s, rem, sizeof rem);
    const size_t k = cv->current;
    fprintf(stderr, "\r  [%zu/%zu] layout %s x%d: t = %-14s %5.1f %%   ETA %-14s   ", k + 1, cv->n_runs,
            cv->layouts[k / cv->n_refine], cv->refine[k % cv->n_refine], sim,
            100.0 * (double)p->step / (double)(p->n_steps ? p->n_steps : 1), rem);
    fflush(stderr);
    cv->line_open = 1;
}

static void show_row(const sw_compare_row *r, size_t i, size_t n, void *user)
{
    compare_view *cv = user;
    if (cv->line_open)
        fputc('\n', stderr);   /* the progress line ends here */
    cv->line_open = 0;
    cv->current = i + 1;
    if (!cv->rows)
        return;
    if (r->status == SW_OK)
        fprintf(stderr, "  [%zu/%zu] layout %s x%d: %lld steps in %.2f s\n", i + 1, n, r->layout, r->refine,
                r->steps, r->wall_s);
    else
        fprintf(stderr, "  [%zu/%zu] layout %s x%d failed: %s\n", i + 1, n, r->layout, r->refine, r->error);
}

int cmd_compare(int argc, char **argv, const char *history)
{
    /* take --layouts and --refine out, leave the rest to cli_parse */
    char **rest = calloc((size_t)argc + 1, sizeof *rest);
    char layouts_buf[256] = "", refine_buf[256] = "1";
    int n_rest = 0;
    if (!rest)
        return 1;
    for (int k = 0; k < argc; k++) {
        int is_l = !strcmp(argv[k], "--layouts"), is_r = !strcmp(argv[k], "--refine");
        if (is_l || is_r) {
            if (k + 1 >= argc) {
                free(rest);
                return cli_usage_error("compare", "%s needs a comma-separated list", argv[k]);
            }
            snprintf(is_l ? layouts_buf : refine_buf, sizeof layouts_buf, "%s", argv[++k]);
        } else {
            rest[n_rest++] = argv[k];
        }
    }
    cli_args a;
    int code = cli_parse("compare", usage_compare, n_rest, rest, CLI_OUT | CLI_RUN_OPTS | CLI_PRECISION, &a);
    free(rest);
    if (code >= 0)
        return code;
    if (!a.scenario)
        return cli_usage_error("compare", "%s", "needs a scenario file");

    const char *layouts[8];
    char *items[8];
    int n_lay;
    if (!layouts_buf[0]) {
        n_lay = (int)sw_layout_count();
        for (int q = 0; q < n_lay; q++)
            layouts[q] = sw_layout_at((size_t)q)->name;
    } else {
        n_lay = split(layouts_buf, items, 8);
        if (n_lay <= 0)
            return cli_usage_error("compare", "--layouts takes a list such as A,C (available: %s)", sw_layout_names());
        for (int q = 0; q < n_lay; q++)
            layouts[q] = items[q];
    }
    int refine[16];
    char *ritems[16];
    int n_ref = split(refine_buf, ritems, 16);
    if (n_ref <= 0)
        return cli_usage_error("compare", "%s", "--refine takes a list of whole numbers such as 1,2,4");
    for (int q = 0; q < n_ref; q++) {
        char *end;
        long v = strtol(ritems[q], &end, 10);
        if (end == ritems[q] || *end || v < 1 || v > 64)
            return cli_usage_error("compare", "--refine: '%s' is not a whole number from 1 to 64", ritems[q]);
        refine[q] = (int)v;
    }

    sw_scenario sc;
    sw_error err = {0};
    if (sw_scenario_load(a.scenario, &sc, &err) != SW_OK)
        return cli_fail("compare", &err);
    cli_apply_precision(&a, &sc);
    char out[SW_PATH_MAX];
    if (a.out) {
        snprintf(out, sizeof out, "%s", a.out);
    } else {
        cli_default_out(a.scenario, out, sizeof out);
        size_t n = strlen(out);
        if (n > 4)
            snprintf(out + n - 4, sizeof out - (n - 4), "-compare");   /* "<name>-out" -> "<name>-compare" */
    }
    cli_catch_signals();
    /* a live progress line only on a terminal (not with --quiet): logs and pipes stay clean */
    compare_view cv = {.layouts = layouts, .refine = refine, .n_refine = (size_t)n_ref,
                       .n_runs = (size_t)n_lay * (size_t)n_ref, .rows = !a.quiet && !a.json};
    const int tty = isatty(STDERR_FILENO) && !a.quiet;
    sw_run_options opt = {.out_dir = out, .history = history, .threads = a.threads, .stop = &cli_stop,
                          .progress = tty ? show_progress : NULL, .progress_user = &cv};
    sw_compare cmp;
    if (!a.json && !a.quiet)
        fprintf(stderr, "Comparing %d layout(s) x %d resolution(s) of %s\n", n_lay, n_ref, a.scenario);
    /* the folder is created, write-tested and locked (run/outdir.h) for the runs and compare.md/.csv: a
     * second compare or run into it is refused with the holder's pid */
    sw_outdir od;
    if (sw_outdir_open(&od, out, history, &err) != SW_OK) {
        sw_scenario_free(&sc);
        return cli_fail("compare", &err);
    }
    if (od.note[0] && !a.json && !a.quiet)
        fprintf(stderr, "%s\n", od.note);
    if (sw_compare_run(&sc, layouts, (size_t)n_lay, refine, (size_t)n_ref, &opt, show_row, &cv, &cmp, &err) != SW_OK) {
        if (cv.line_open)
            fputc('\n', stderr);
        sw_outdir_close(&od);
        sw_scenario_free(&sc);
        return cli_fail("compare", &err);
    }
    char md[SW_PATH_MAX + 16], csv[SW_PATH_MAX + 16];
    snprintf(md, sizeof md, "%s/compare.md", out);
    snprintf(csv, sizeof csv, "%s/compare.csv", out);
    code = 0;
    if (sw_compare_write_markdown(md, &sc, &cmp, &err) != SW_OK || sw_compare_write_csv(csv, &cmp, &err) != SW_OK)
        code = cli_fail("compare", &err);
    sw_outdir_close(&od);
    if (a.json) {
        char *js = sw_compare_json(&sc, &cmp);
        if (js)
            puts(js);
        free(js);
        fprintf(stderr, "%s\n", sw_caution_for(&sc));
    } else {
        printf("\n");
        sw_compare_print(stdout, &cmp);
        printf("\nWritten: %s, %s\n\n%s\n", md, csv, sw_caution_for(&sc));
    }
    if (code == 0 && sw_compare_outcome(&cmp, &err) != SW_OK)   /* a failed run fails the comparison */
        code = cli_fail("compare", &err);
    sw_compare_free(&cmp);
    sw_scenario_free(&sc);
    return code;
}
