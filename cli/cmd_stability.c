/* cmd_stability.c - the stability command: Courant limits and wave accuracy of each grid layout. */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"
#include "model/layout.h"
#include "studies/stability.h"

#define STAB_CLI_PI 3.14159265358979323846
#define STAB_CLI_DEFAULT_FRACTION 0.9   /* default Courant number: this fraction of the layout's limit */
#define STAB_CLI_PLANE_POINTS 129       /* points along each axis of the --out planes (step pi / 64) */

static const char *const usage_stability =
    "Usage: shoreward stability [--layout L | --all] [--courant-number C | --courant-fraction F]\n"
    "                           [--f-dt X] [--dims 1|2] [--json] [--out FILE]\n"
    "\n"
    "Von Neumann analysis of the model's forward-backward step on each grid layout: one Fourier\n"
    "wave at a time, the step multiplies the wave by factors lambda. |lambda| = 1 keeps the wave's\n"
    "height (neutral), |lambda| > 1 makes it grow every step (the run blows up). For each layout it\n"
    "prints\n"
    "  - the Courant limit, c = sqrt(g h) dt / dx on square cells, twice: in closed form from the\n"
    "    layout's highest wave frequency, and found by scanning every wave the grid resolves; for\n"
    "    waves along x only (1D, a channel) and in the plane (2D);\n"
    "  - a table of waves 2 to 32 cells long, along x and along the diagonal: |lambda| and the\n"
    "    speed ratio, numerical over exact phase speed (1 = exact; below 1 the wave lags).\n"
    "\n"
    "  --layout L    one layout (the layouts of this build are listed at the end)\n"
    "  --all         every built layout (the default)\n"
    "  --courant-number C    the Courant number c of the table and planes, the same for\n"
    "                every layout; above a layout's limit its table shows growth\n"
    "  --courant-fraction F  c at this fraction of each layout's own limit, as the scenario's\n"
    "                [run] courant_fraction (default 0.9; 2D limit unless --dims 1)\n"
    "  --f-dt X      Coriolis parameter times dt, rad (default 0): the step with rotation as the\n"
    "                model takes it (u from the old v, then v from the new u; docs/terms.md);\n"
    "                e.g. f = 1e-4 s-1 and dt = 30 s give 0.003\n"
    "  --dims 1|2    only the channel (1) or only the plane (2); default both\n"
    "  --json        print one JSON object on stdout instead of text\n"
    "  --out FILE    also write |lambda| and the speed ratio over the whole wavenumber plane\n"
    "                (k dx, l dy in [-pi, pi]) to FILE (NetCDF); draw it with tools/plot-stability\n"
    "                (installed: shoreward-plot-stability)\n"
    "\n"
    "Examples:\n"
    "  shoreward stability\n"
    "  shoreward stability --layout C --courant-number 0.5 --f-dt 0.01 --out stab.nc\n"
    "  tools/plot-stability stab.nc --out stab.png\n"
    "\n"
    "The derivation and how to read the table: docs/stability.md.\n";

/* What the command was asked. */
typedef struct {
    const sw_layout *layouts[16];   /* the layouts to analyse */
    size_t n_layouts;
    double courant;                 /* the Courant number asked, or 0 = a fraction of each limit */
    double fraction;                /* that fraction of each layout's limit (when courant is 0) */
    double f_dt;                    /* rad */
    int dims;                       /* 1, 2, or 0 = both */
    int json;
    const char *out;                /* NetCDF path or NULL */
} stab_args;

/* Everything computed for one layout. */
typedef struct {
    const sw_layout *layout;
    double closed[2];               /* closed-form limits, 1D and 2D */
    sw_stab_limit scan[2];          /* scanned limits, 1D and 2D (when asked) */
    double courant;                 /* Courant number of the table */
    double fraction;                /* courant / the limit it was taken from, or NaN when absolute */
    sw_stab_row rows[SW_STAB_N_WAVELENGTHS];
} stab_result;

/* The value of option `name` as "--name VALUE" or "--name=VALUE", or NULL if argv[*k] is not it. */
static const char *stab_option(const char *name, int argc, char **argv, int *k, int *missing)
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

/* Parses a whole finite number; returns 1 on success. */
static int stab_number(const char *s, double *out)
{
    char *end = NULL;
    double v = strtod(s, &end);
    if (end == s || *end || !isfinite(v))
        return 0;
    *out = v;
    return 1;
}

/* Prints the usage error for an unknown layout name. */
static int stab_bad_layout(const char *name)
{
    char msg[256];
    snprintf(msg, sizeof msg, "unknown layout '%s' (accepted: %s)", name, sw_layout_names());
    return cli_usage_error("stability", "%s", msg);
}

/* Returns -1 to go on, or the exit status (0 after --help, 2 for a usage error). */
static int stab_parse(int argc, char **argv, stab_args *a)
{
    memset(a, 0, sizeof *a);
    const char *layout = NULL;
    int all = 0;
    for (int k = 0; k < argc; k++) {
        const char *s = argv[k], *val;
        int missing = 0;
        if (!strcmp(s, "--help") || !strcmp(s, "-h")) {
            fputs(usage_stability, stdout);
            printf("Layouts in this build: %s.\n", sw_layout_names());
            return 0;
        } else if (!strcmp(s, "--json")) {
            a->json = 1;
        } else if (!strcmp(s, "--all")) {
            all = 1;
        } else if ((val = stab_option("--layout", argc, argv, &k, &missing))) {
            if (missing || !*val)
                return cli_usage_error("stability", "--layout needs a name (accepted: %s)", sw_layout_names());
            layout = val;
        } else if ((val = stab_option("--courant-number", argc, argv, &k, &missing))) {
            if (missing || !stab_number(val, &a->courant) || !(a->courant > 0) || a->courant > 1e6)
                return cli_usage_error("stability", "--courant-number takes a number with 0 < C <= 1e6, not '%s'",
                                       val);
        } else if ((val = stab_option("--courant-fraction", argc, argv, &k, &missing))) {
            if (missing || !stab_number(val, &a->fraction) || !(a->fraction > 0) || a->fraction > 1e6)
                return cli_usage_error("stability", "--courant-fraction takes a number with 0 < F <= 1e6 (1 is the "
                                       "limit), not '%s'", val);
        } else if ((val = stab_option("--courant", argc, argv, &k, &missing))) {
            return cli_usage_error("stability", "%s", "--courant is now --courant-number C (the same Courant number "
                                   "for every layout) or --courant-fraction F (a fraction of each layout's limit, as "
                                   "the scenario's courant_fraction)");
        } else if ((val = stab_option("--f-dt", argc, argv, &k, &missing))) {
            if (missing || !stab_number(val, &a->f_dt) || fabs(a->f_dt) > 1e6)
                return cli_usage_error("stability", "--f-dt takes a number with |X| <= 1e6 (rad), not '%s'", val);
        } else if ((val = stab_option("--dims", argc, argv, &k, &missing))) {
            if (missing || (strcmp(val, "1") && strcmp(val, "2")))
                return cli_usage_error("stability", "--dims takes 1 (a channel) or 2 (the plane), not '%s'", val);
            a->dims = val[0] - '0';
        } else if ((val = stab_option("--out", argc, argv, &k, &missing))) {
            if (missing || !*val)
                return cli_usage_error("stability", "%s needs a file name, e.g. stab.nc", "--out");
            a->out = val;
        } else if (s[0] == '-' && s[1]) {
            return cli_usage_error("stability", "unknown option '%s'", s);
        } else {
            return cli_usage_error("stability", "unexpected argument '%s' (give a layout with --layout)", s);
        }
    }
    if (layout && all)
        return cli_usage_error("stability", "%s", "give either --layout L or --all, not both");
    if (a->courant > 0 && a->fraction > 0)
        return cli_usage_error("stability", "%s", "give either --courant-number C or --courant-fraction F, not both");
    if (!(a->courant > 0) && !(a->fraction > 0))
        a->fraction = STAB_CLI_DEFAULT_FRACTION;
    if (layout) {
        const sw_layout *lay = sw_layout_find(layout);
        if (!lay)
            return stab_bad_layout(layout);
        a->layouts[a->n_layouts++] = lay;
    } else {
        for (size_t q = 0; q < sw_layout_count() && q < sizeof a->layouts / sizeof a->layouts[0]; q++)
            a->layouts[a->n_layouts++] = sw_layout_at(q);
    }
    return -1;
}

/* Analyses one layout as asked. */
static sw_status stab_analyse(const stab_args *a, const sw_layout *lay, stab_result *r, sw_error *err)
{
    memset(r, 0, sizeof *r);
    r->layout = lay;
    for (int d = 1; d <= 2; d++) {
        r->closed[d - 1] = sw_stab_limit_closed(lay, d);
        if (a->dims && a->dims != d)
            continue;
        sw_status rc = sw_stab_limit_scan(lay, a->f_dt, d, &r->scan[d - 1], err);
        if (rc != SW_OK)
            return rc;
    }
    /* the limit of the step analysed: with rotation the scanned one (it may lie below the closed form) */
    int base = a->dims == 1 ? 0 : 1;
    const double limit = a->f_dt != 0 ? r->scan[base].courant : r->closed[base];
    if (a->courant > 0) {
        r->courant = a->courant;
        r->fraction = a->courant / limit;
    } else {
        r->courant = a->fraction * limit;
        r->fraction = a->fraction;
    }
    sw_stab_table(lay, r->courant, a->f_dt, r->rows);
    return SW_OK;
}

/* Writes an angle as a multiple of pi, e.g. "0.5 pi", "0". */
static const char *stab_pi(double x, char *buf, size_t n)
{
    if (x == 0)
        snprintf(buf, n, "0");
    else
        snprintf(buf, n, "%.4g pi", x / STAB_CLI_PI);
    return buf;
}

static const char *stab_amp_mark(double amp) { return amp > 1 + SW_STAB_GROWTH_TOL ? "*" : " "; }

static void stab_print(const stab_args *a, const stab_result *r)
{
    const sw_layout *lay = r->layout;
    char b1[32], b2[32];
    printf("Layout %s: %s\n", lay->name, lay->summary);
    printf("  Courant limit   closed form%s scan%s first wave to grow (k dx, l dy)\n",
           a->f_dt != 0 ? " (f=0)" : "      ", a->f_dt != 0 ? " (with f)" : "         ");
    for (int d = 1; d <= 2; d++) {
        if (a->dims && a->dims != d)
            continue;
        const sw_stab_limit *s = &r->scan[d - 1];
        printf("    %s  %-13.9f  %-13.9f  (%s, %s)\n", d == 1 ? "1D (channel)" : "2D (plane)  ", r->closed[d - 1],
               s->courant, stab_pi(s->kdx, b1, sizeof b1), stab_pi(s->ldy, b2, sizeof b2));
    }
    const char *which = a->dims == 1 ? "1D" : "2D";
    if (a->courant > 0)
        printf("  Waves at c = %.6g (%.4g of the %s limit), f dt = %g:\n", r->courant, r->fraction, which,
               a->f_dt);
    else
        printf("  Waves at c = %.6g (%g of the %s limit), f dt = %g:\n", r->courant, r->fraction, which, a->f_dt);
    int diag = a->dims != 1, grows = 0;
    printf("    wavelength   along x%s\n", diag ? "                 diagonal (45 deg)" : "");
    printf("    (cells)      |lambda|    speed ratio%s\n", diag ? " |lambda|    speed ratio" : "");
    for (size_t q = 0; q < SW_STAB_N_WAVELENGTHS; q++) {
        const sw_stab_row *w = &r->rows[q];
        printf("    %5g        %.6f%s   %.4f", w->wavelength, w->axis.amp, stab_amp_mark(w->axis.amp),
               w->axis.speed_ratio);
        grows |= w->axis.amp > 1 + SW_STAB_GROWTH_TOL;
        if (diag) {
            printf("      %.6f%s   %.4f", w->diagonal.amp, stab_amp_mark(w->diagonal.amp),
                   w->diagonal.speed_ratio);
            grows |= w->diagonal.amp > 1 + SW_STAB_GROWTH_TOL;
        }
        putchar('\n');
    }
    if (grows)
        printf("    * grows every step (its speed ratio means nothing): c = %.6g is beyond the limit for it\n",
               r->courant);
}

static cJSON *stab_mode_json(const sw_stab_mode *m)
{
    cJSON *o = cJSON_CreateObject();
    cJSON_AddNumberToObject(o, "kdx", m->kdx);
    cJSON_AddNumberToObject(o, "ldy", m->ldy);
    cJSON_AddNumberToObject(o, "amplification", m->amp);
    cJSON_AddNumberToObject(o, "omega_dt", m->omega_dt);
    cJSON_AddNumberToObject(o, "speed_ratio", m->speed_ratio);
    return o;
}

static cJSON *stab_json(const stab_args *a, const stab_result *res, size_t n)
{
    cJSON *root = cJSON_CreateObject();
    cJSON_AddNumberToObject(root, "f_dt", a->f_dt);
    if (a->courant > 0) {
        cJSON_AddNumberToObject(root, "courant_number", a->courant);
        cJSON_AddNullToObject(root, "courant_fraction");
    } else {
        cJSON_AddNullToObject(root, "courant_number");
        cJSON_AddNumberToObject(root, "courant_fraction", a->fraction);
    }
    cJSON_AddNumberToObject(root, "growth_tolerance", SW_STAB_GROWTH_TOL);
    if (a->out)
        cJSON_AddStringToObject(root, "out", a->out);
    cJSON *arr = cJSON_AddArrayToObject(root, "layouts");
    for (size_t q = 0; q < n; q++) {
        const stab_result *r = &res[q];
        cJSON *o = cJSON_CreateObject();
        cJSON_AddStringToObject(o, "name", r->layout->name);
        cJSON_AddStringToObject(o, "summary", r->layout->summary);
        cJSON *lim = cJSON_AddObjectToObject(o, "limits");
        for (int d = 1; d <= 2; d++) {
            if (a->dims && a->dims != d)
                continue;
            cJSON *l = cJSON_AddObjectToObject(lim, d == 1 ? "1d" : "2d");
            cJSON_AddNumberToObject(l, "closed_form", r->closed[d - 1]);
            cJSON_AddNumberToObject(l, "scan", r->scan[d - 1].courant);
            cJSON_AddNumberToObject(l, "critical_kdx", r->scan[d - 1].kdx);
            cJSON_AddNumberToObject(l, "critical_ldy", r->scan[d - 1].ldy);
        }
        cJSON_AddNumberToObject(o, "courant_number", r->courant);
        cJSON_AddNumberToObject(o, "courant_fraction", r->fraction);
        cJSON *tab = cJSON_AddArrayToObject(o, "table");
        for (size_t k = 0; k < SW_STAB_N_WAVELENGTHS; k++) {
            cJSON *row = cJSON_CreateObject();
            cJSON_AddNumberToObject(row, "wavelength_cells", r->rows[k].wavelength);
            cJSON_AddItemToObject(row, "axis", stab_mode_json(&r->rows[k].axis));
            if (a->dims != 1)
                cJSON_AddItemToObject(row, "diagonal", stab_mode_json(&r->rows[k].diagonal));
            cJSON_AddItemToArray(tab, row);
        }
        cJSON_AddItemToArray(arr, o);
    }
    return root;
}

int cmd_stability(int argc, char **argv, const char *history)
{
    stab_args a;
    int code = stab_parse(argc, argv, &a);
    if (code >= 0)
        return code;
    stab_result res[sizeof a.layouts / sizeof a.layouts[0]];
    sw_error err = {0};
    for (size_t q = 0; q < a.n_layouts; q++)
        if (stab_analyse(&a, a.layouts[q], &res[q], &err) != SW_OK)
            return cli_fail("stability", &err);

    if (a.out) {
        sw_stab_plane planes[sizeof a.layouts / sizeof a.layouts[0]];
        for (size_t q = 0; q < a.n_layouts; q++)
            planes[q] = (sw_stab_plane){.layout = res[q].layout, .courant = res[q].courant};
        sw_status rc =
            sw_stab_write_planes(a.out, planes, a.n_layouts, a.f_dt, STAB_CLI_PLANE_POINTS, history, &err);
        if (rc != SW_OK)
            return cli_fail("stability", &err);
    }

    if (a.json) {
        cJSON *root = stab_json(&a, res, a.n_layouts);
        char *text = root ? cJSON_Print(root) : NULL;
        cJSON_Delete(root);
        if (!text) {
            fputs("shoreward stability: error: out of memory building the JSON\n", stderr);
            return 1;
        }
        puts(text);
        free(text);
        return 0;
    }
    printf("Forward-backward stability on square cells: c = sqrt(g h) dt / dx, f dt = %g\n", a.f_dt);
    printf("A wave is stable while max |lambda| <= 1 + %g; speed ratio = numerical / exact phase speed.\n\n",
           SW_STAB_GROWTH_TOL);
    for (size_t q = 0; q < a.n_layouts; q++) {
        stab_print(&a, &res[q]);
        putchar('\n');
    }
    if (a.out)
        printf("Wrote the wavenumber planes to %s (draw them with %s %s)\n", a.out, cli_tool("plot-stability"),
               a.out);
    else
        printf("See docs/stability.md for how to read this.\n");
    return 0;
}
