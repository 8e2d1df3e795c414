/* verify.c - runs the verification checks (checks.h) on the grid layouts of the registry.
 *
 *   verify --list                       the checks, one per line: NAME  summary
 *   verify --layouts                    the layouts this build has, one per line
 *   verify --check NAME|all --layout L|all [--precision double|single] [--json]
 *                                       runs checks; rows as text, or one JSON array with --json
 *   verify --expect "NAME,NAME,..."     exit 0 when the list of checks is exactly this (CMake's list)
 *
 * Exit status: 0 every row passed, 1 a row failed, 2 usage error (an unknown check or layout).
 * Not part of the shipped binary: tests/verify/CMakeLists.txt builds it for ctest and for
 * tools/verification-report.
 */
#include <stdio.h>
#include <string.h>

#include "checks.h"
#include "harness.h"
#include "model/layout.h"
#include "rows.h"


static const vc_check checks[] = {
    {"seiche_closed", "closed-basin seiche modes 1-3: Merian's formula and the fully discrete period", vc_seiche_closed},
    {"seiche_open", "basin open at one end (level edge), quarter-wave modes n = 0, 1", vc_seiche_open},
    {"travel_time", "a pulse reaches gauges 100-400 km away at distance / sqrt(g h); series vs discrete solution",
     vc_travel_time},
    {"shoaling", "amplitude gain over a gentle slope 4000 m -> 100 m vs Green's law", vc_shoaling},
    {"convergence", "second-order convergence of a standing mode at 16, 32, 64 cells", vc_convergence},
    {"stability", "bounded at 0.98 of the Courant limit, blows up at 1.02; limit vs symbols", vc_stability},
    {"conservation", "volume and E* to round-off with walls; E* never rises with open edges", vc_conservation},
    {"open_edge", "reflection from an open edge at normal and 45-degree incidence", vc_open_edge},
    {"threads", "1 and 2 threads give bitwise equal results", vc_threads},
};
static const size_t n_checks = sizeof checks / sizeof checks[0];

static int usage(const char *msg)
{
    fprintf(stderr, "verify: %s\nusage: verify --list | --layouts | --expect LIST | --check NAME|all --layout L|all [--precision P] [--json]\n",
            msg);
    return 2;
}

/* 0 when `list` (names separated by "," or ";") is exactly the table, in order. */
static int expect(const char *list)
{
    char buf[1024];
    snprintf(buf, sizeof buf, "%s", list);
    size_t q = 0;
    for (char *tok = strtok(buf, ",;"); tok; tok = strtok(NULL, ",;"), q++)
        if (q >= n_checks || strcmp(tok, checks[q].name)) {
            fprintf(stderr, "verify: CMake's check list and the program's differ at '%s' (program: %s)\n", tok,
                    q < n_checks ? checks[q].name : "(end)");
            return 1;
        }
    if (q != n_checks) {
        fprintf(stderr, "verify: CMake's list misses '%s'\n", checks[q].name);
        return 1;
    }
    return 0;
}

int main(int argc, char **argv)
{
    const char *check = NULL, *layout = NULL;
    int json = 0;
    for (int a = 1; a < argc; a++) {
        if (!strcmp(argv[a], "--list")) {
            for (size_t q = 0; q < n_checks; q++)
                printf("%-14s %s\n", checks[q].name, checks[q].summary);
            return 0;
        } else if (!strcmp(argv[a], "--layouts")) {
            for (size_t q = 0; q < sw_layout_count(); q++)
                printf("%s\n", sw_layout_at(q)->name);
            return 0;
        } else if (!strcmp(argv[a], "--expect") && a + 1 < argc) {
            return expect(argv[++a]);
        } else if (!strcmp(argv[a], "--check") && a + 1 < argc) {
            check = argv[++a];
        } else if (!strcmp(argv[a], "--layout") && a + 1 < argc) {
            layout = argv[++a];
        } else if (!strcmp(argv[a], "--precision") && a + 1 < argc) {
            if (!sw_precision_parse(argv[++a], &vh_precision))
                return usage("--precision takes double or single");
        } else if (!strcmp(argv[a], "--json")) {
            json = 1;
        } else {
            return usage("unknown or incomplete argument");
        }
    }
    if (!check || !layout)
        return usage("--check and --layout are both needed");

    const sw_layout *only = NULL;
    if (strcmp(layout, "all")) {
        only = sw_layout_find(layout);
        if (!only)
            return usage("unknown layout");
    }
    int any = 0;
    vr_table table = {0};
    for (size_t c = 0; c < n_checks; c++) {
        if (strcmp(check, "all") && strcmp(check, checks[c].name))
            continue;
        any = 1;
        for (size_t q = 0; q < sw_layout_count(); q++) {
            const sw_layout *lay = sw_layout_at(q);
            if (only && lay != only)
                continue;
            table.check = checks[c].name;
            table.layout = lay->name;
            checks[c].run(lay, &table);
        }
    }
    if (!any) {
        vr_free(&table);
        return usage("unknown check (see --list)");
    }
    if (json) {
        if (vr_print_json(&table) != 0)
            fprintf(stderr, "verify: out of memory writing JSON\n");
    } else {
        vr_print_text(&table);
    }
    size_t bad = vr_failed(&table);
    if (!json)
        printf("%zu row%s, %zu failed\n", table.n, table.n == 1 ? "" : "s", bad);
    vr_free(&table);
    return bad ? 1 : 0;
}
