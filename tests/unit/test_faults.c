/* test_faults.c - earthquake faults in scenarios: the [fault NAME] keys and every refusal, the segment table
 * and its refusals, the seismic moment and magnitude, the rupture's timing, the sea surface at once and in
 * time, the sources and setup that carry it, sweeps over faults, and a fault on a geographic grid.
 *
 * External references used by the checks:
 *  - Moment magnitude Mw = (2/3)(log10 M0 - 9.1), M0 in N m: Hanks & Kanamori (1979), J. Geophys. Res. 84,
 *    2348-2350 [memory; the constant 9.1 for N m is the usual modern form]. Seismic moment M0 = mu A D
 *    (rigidity, fault area, mean slip): Aki (1966) [memory]. The hand example is worked in the test.
 *  - Okada (1985), Bull. Seismol. Soc. Am. 75, 1135-1154: the surface displacement is linear in the slip
 *    [derived from its formulas, each term a multiple of U1, U2 or U3], so the increments of a rupture in
 *    time sum to its whole surface. The checklist values themselves are test_okada.c's.
 *  - Tanioka & Satake (1996), Geophys. Res. Lett. 23, 861-864 [memory]: the horizontal motion of a sloping
 *    seabed lifts the water by u_x dH/dx + u_y dH/dy (H the water depth).
 *  - Great-circle distance, haversine: Sinnott (1984), Sky and Telescope 68(2), 159 [memory]: along a
 *    meridian the distance is R dphi exactly [derived]; mean Earth radius 6371 km (IUGG, common practice).
 *  - Conservation of mass [derived]: the water a run starts with, sum(eta dA) over water cells, is the sea
 *    floor's uplift integrated over them when the surface takes the floor's motion.
 *  - SI Brochure (BIPM, 9th edition, 2019): k = 1e3, c = 1e-2, G = 1e9; 1 min = 60 s.
 *  - docs/faults.md and docs/scenario.md: the keys, defaults, ranges and messages a user is promised.
 */
#define _POSIX_C_SOURCE 200809L   /* open_memstream */
#include <math.h>
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>

#include <netcdf.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "inputs/faults.h"
#include "inputs/kajiura.h"
#include "inputs/okada.h"
#include "inputs/scenario.h"
#include "inputs/source.h"
#include "outputs/report.h"
#include "run/run.h"
#include "run/setup.h"
#include "studies/sweep.h"
#include "testutil.h"

#define PI 3.14159265358979323846
#define R_EARTH 6371000.0   /* the default sphere (IUGG mean radius, common practice) */

/* |got - want| <= tol, reporting both values. */
#define assert_near(got, want, tol) near_check((got), (want), (tol), __FILE__, __LINE__)
static void near_check(double got, double want, double tol, const char *file, int line)
{
    if (!(fabs(got - want) <= tol)) {
        print_error("%.17g != %.17g (tolerance %g)\n", got, want, tol);
        _fail(file, line);
    }
}

/* a[k] == b[k] for every k (+0 and -0 alike): the same numbers, bit for bit but for the sign of zeros. */
static void assert_same(const double *a, const double *b, size_t n)
{
    for (size_t k = 0; k < n; k++)
        if (!(a[k] == b[k]))
            fail_msg("at %zu: %.17g != %.17g", k, a[k], b[k]);
}

/* The folder the tests' scratch files go to (tu_tmp_path's). */
static void tmp_dir(char *out, size_t n)
{
    tu_tmp_path(out, n, "x");
    out[strlen(out) - 2] = '\0';
}

/* Writes the scratch file `name` (in tmp_dir) with text. */
static void write_tmp(const char *name, const char *text)
{
    char path[1024];
    tu_tmp_path(path, sizeof path, name);
    assert_int_equal(tu_write_file(path, text), 0);
}

/* A projected 60 x 50 grid of 2 km cells, 2000 m deep; the next line is line 9. */
#define HEAD                                                                                                 \
    "[run]\n"               /* 1 */                                                                          \
    "duration = 10 min\n"   /* 2 */                                                                          \
    "[grid]\n"              /* 3 */                                                                          \
    "nx = 60\n"             /* 4 */                                                                          \
    "ny = 50\n"             /* 5 */                                                                          \
    "dx = 2 km\n"           /* 6 */                                                                          \
    "[seabed]\n"            /* 7 */                                                                          \
    "deep = 2000 m\n"       /* 8 */

/* [fault A] on lines 9 .. 18; the next line is 19. */
static const char *const FAULT_A[] = {
    "[fault A]",        /*  9 */
    "x = 50 km",        /* 10 */
    "y = 40 km",        /* 11 */
    "depth = 5 km",     /* 12 */
    "length = 40 km",   /* 13 */
    "width = 20 km",    /* 14 */
    "strike = 0",       /* 15 */
    "dip = 30",         /* 16 */
    "rake = 90",        /* 17 */
    "slip = 2 m",       /* 18 */
};

/* HEAD, then [fault A] with the line of key `key` replaced by `line` (NULL: the key left out, its line
 * blank so later lines keep their numbers), then `extra`. Returns a static buffer. */
static const char *fault_text(const char *key, const char *line, const char *extra)
{
    static char buf[8192];
    size_t used = (size_t)snprintf(buf, sizeof buf, "%s", HEAD);
    for (size_t q = 0; q < sizeof FAULT_A / sizeof FAULT_A[0]; q++) {
        const char *l = FAULT_A[q];
        if (key && !strncmp(l, key, strlen(key)) && l[strlen(key)] == ' ')
            l = line ? line : "";
        used += (size_t)snprintf(buf + used, sizeof buf - used, "%s\n", l);
    }
    snprintf(buf + used, sizeof buf - used, "%s", extra ? extra : "");
    return buf;
}

static sw_scenario *parse_ok(const char *text)
{
    sw_scenario *sc = calloc(1, sizeof *sc);
    assert_non_null(sc);
    char dir[1024];
    tmp_dir(dir, sizeof dir);
    sw_error err = { 0 };
    sw_status st = sw_scenario_parse(text, "f.scn", dir, sc, &err);
    if (st != SW_OK)
        fail_msg("refused (%s): %s\n--- text ---\n%s", sw_status_name(st), err.msg, text);
    return sc;
}

static void del_sc(sw_scenario *sc)
{
    sw_scenario_free(sc);
    free(sc);
}

/* Parsing must fail with `code` and a message holding want1 and want2 (may be NULL). */
static void parse_bad(const char *text, sw_status code, const char *want1, const char *want2)
{
    sw_scenario *sc = calloc(1, sizeof *sc);
    assert_non_null(sc);
    sw_error err = { 0 };
    sw_status st = sw_scenario_parse(text, "f.scn", NULL, sc, &err);
    if (st == SW_OK)
        fail_msg("accepted, expected '%s'\n--- text ---\n%s", want1 ? want1 : "", text);
    if (st != code)
        fail_msg("status %s, expected %s: %s", sw_status_name(st), sw_status_name(code), err.msg);
    if ((want1 && !strstr(err.msg, want1)) || (want2 && !strstr(err.msg, want2)))
        fail_msg("message '%s' lacks '%s' / '%s'", err.msg, want1 ? want1 : "", want2 ? want2 : "");
    print_message("  refused as expected: %s\n", err.msg);
    del_sc(sc);
}

/* Collects the faults of sc, which must succeed. */
static void collect_ok(const sw_scenario *sc, sw_fault_set *set)
{
    sw_error err = { 0 };
    sw_status st = sw_faults_collect(sc, set, &err);
    if (st != SW_OK)
        fail_msg("collect refused (%s): %s", sw_status_name(st), err.msg);
}

/* Collecting the faults of text must fail with `code` and a message holding want1 and want2. */
static void collect_bad(const char *text, sw_status code, const char *want1, const char *want2)
{
    sw_scenario *sc = parse_ok(text);
    sw_fault_set set;
    sw_error err = { 0 };
    sw_status st = sw_faults_collect(sc, &set, &err);
    if (st == SW_OK)
        fail_msg("collected, expected '%s'", want1 ? want1 : "");
    if (st != code)
        fail_msg("status %s, expected %s: %s", sw_status_name(st), sw_status_name(code), err.msg);
    if ((want1 && !strstr(err.msg, want1)) || (want2 && !strstr(err.msg, want2)))
        fail_msg("message '%s' lacks '%s' / '%s'", err.msg, want1 ? want1 : "", want2 ? want2 : "");
    assert_int_equal(set.n, 0);
    assert_null(set.seg);
    print_message("  refused as expected: %s\n", err.msg);
    del_sc(sc);
}

/* ---- the [fault] keys ------------------------------------------------------------------------------- */

static void test_keys_in_si_and_defaults(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok(fault_text(NULL, NULL, NULL));
    assert_int_equal(sc->n_faults, 1);
    const sw_fault_spec *f = &sc->faults[0];
    assert_string_equal(f->name, "A");
    assert_int_equal(f->line, 9);
    assert_near(f->x_m, 50e3, 0);
    assert_near(f->y_m, 40e3, 0);
    assert_near(f->depth_m, 5e3, 0);
    assert_near(f->length_m, 40e3, 0);
    assert_near(f->width_m, 20e3, 0);
    assert_near(f->dip_deg, 30, 0);
    assert_near(f->rake_deg, 90, 0);
    assert_near(f->slip_m, 2, 0);
    /* defaults (docs/faults.md): poisson 0.25 (lambda = mu, common practice), rigidity 30 GPa (common
     * practice), opening 0, floor, no horizontal term, cutoff 20, at once, factor 1, no offsets or rotation */
    assert_near(f->poisson, 0.25, 0);
    assert_near(f->rigidity_pa, 30e9, 0);
    assert_near(f->opening_m, 0, 0);
    assert_int_equal(f->kajiura, 0);
    assert_int_equal(f->horizontal, 0);
    assert_int_equal(f->surface_rupture, 0);
    assert_near(f->cutoff, 20, 0);
    assert_near(f->start_s, 0, 0);
    assert_near(f->rise_s, 0, 0);
    assert_near(f->rupture_speed_ms, 0, 0);
    assert_near(f->slip_factor, 1, 0);
    assert_near(f->x_offset_m, 0, 0);
    assert_near(f->rotation_deg, 0, 0);
    assert_string_equal(f->segments, "");
    del_sc(sc);

    /* every key written, in its units (SI Brochure: G = 1e9, c = 1e-2, min = 60 s) */
    sc = parse_ok(fault_text(NULL, NULL,
                             "opening = 0.5 m\nrigidity = 40 GPa\nlambda = 40 GPa\nsurface = kajiura\n"
                             "horizontal = on\nrise = 1 min\nrupture_speed = 2500 m/s\nhypocentre_x = 60 km\n"
                             "hypocentre_y = 20 km\nhypocentre_depth = 12 km\ncutoff = 0\nslip_factor = 1.5\n"
                             "x_offset = -3 km\ny_offset = 4 km\nrotation = 15\n"));
    f = &sc->faults[0];
    assert_near(f->opening_m, 0.5, 0);
    assert_near(f->rigidity_pa, 40e9, 0);
    assert_near(f->lambda_pa, 40e9, 0);
    assert_near(f->poisson, 0.25, 1e-15);   /* nu = lambda / (2 (lambda + mu)) = 40 / 160 [derived] */
    assert_int_equal(f->kajiura, 1);
    assert_int_equal(f->horizontal, 1);
    assert_near(f->rise_s, 60, 0);
    assert_near(f->rupture_speed_ms, 2500, 0);
    assert_near(f->hypo_x_m, 60e3, 0);
    assert_near(f->hypo_y_m, 20e3, 0);
    assert_near(f->hypo_depth_m, 12e3, 0);
    assert_int_equal(f->hypo_depth_given, 1);
    assert_near(f->cutoff, 0, 0);
    assert_near(f->slip_factor, 1.5, 0);
    assert_near(f->x_offset_m, -3e3, 0);
    assert_near(f->y_offset_m, 4e3, 0);
    assert_near(f->rotation_deg, 15, 0);
    del_sc(sc);

    /* lambda = 60 GPa with mu = 30 GPa: nu = 60 / 180 = 1/3 [derived] */
    sc = parse_ok(fault_text(NULL, NULL, "lambda = 60 GPa\n"));
    assert_near(sc->faults[0].poisson, 1.0 / 3.0, 1e-15);
    del_sc(sc);

    /* a top edge at the sea floor, accepted by its key */
    sc = parse_ok(fault_text("depth", "depth = 0 m", "surface_rupture = accept\n"));
    assert_near(sc->faults[0].depth_m, 0, 0);
    assert_int_equal(sc->faults[0].surface_rupture, 1);
    del_sc(sc);

    /* two sections are two faults, beside a source */
    char text[16384];
    snprintf(text, sizeof text, "%s[fault B]\nx = 20 km\ny = 20 km\ndepth = 3 km\nlength = 10 km\nwidth = 5 km\n"
             "strike = 200\ndip = 90\nrake = 0\nslip = 1 m\n[source s]\nshape = hump\nx = 10 km\ny = 10 km\n"
             "amplitude = 1 m\nradius = 5 km\n", fault_text(NULL, NULL, NULL));
    sc = parse_ok(text);
    assert_int_equal(sc->n_faults, 2);
    assert_int_equal(sc->n_sources, 1);
    assert_string_equal(sc->faults[1].name, "B");
    del_sc(sc);
}

static void test_keys_refused(void **state)
{
    (void)state;
    /* the bad inputs: dip outside 0 .. 90, a negative width or depth, a top edge at the sea floor */
    parse_bad(fault_text("dip", "dip = 95", NULL), SW_ERR_RANGE,
              "f.scn:16: [fault A] dip = 95: out of range", "(accepted: 0 < dip <= 90 deg)");
    parse_bad(fault_text("dip", "dip = 0", NULL), SW_ERR_RANGE, "f.scn:16: [fault A] dip = 0: out of range", NULL);
    parse_bad(fault_text("dip", "dip = -10", NULL), SW_ERR_RANGE, "f.scn:16:", "0 < dip <= 90 deg");
    parse_bad(fault_text("width", "width = -3 km", NULL), SW_ERR_RANGE,
              "f.scn:14: [fault A] width = -3 km: out of range", "(accepted: 0 < width <= 2000 km, down dip)");
    parse_bad(fault_text("depth", "depth = -1 km", NULL), SW_ERR_RANGE,
              "f.scn:12: [fault A] depth = -1 km: out of range", "0 <= depth <= 100 km");
    parse_bad(fault_text("depth", "depth = 0 m", NULL), SW_ERR_RANGE,
              "f.scn:12: [fault A] depth = 0 m: the fault's top edge breaks the sea floor",
              "(accepted: depth > 0, or surface_rupture = accept");
    parse_bad(fault_text("length", "length = 0 km", NULL), SW_ERR_RANGE, "f.scn:13: [fault A] length = 0 km", NULL);
    parse_bad(fault_text("slip", "slip = 300 m", NULL), SW_ERR_RANGE, "f.scn:18:", "0 <= slip <= 200 m");
    parse_bad(fault_text("slip", "slip = 2 deg", NULL), SW_ERR_PARSE, "f.scn:18: [fault A] slip = 2 deg", NULL);
    parse_bad(fault_text("strike", "strike = 400", NULL), SW_ERR_RANGE, "f.scn:15:", "-360 <= strike <= 360 deg");
    /* a required key missing: the header's line, the key and its range */
    parse_bad(fault_text("rake", NULL, NULL), SW_ERR_PARSE, "f.scn:9: [fault A] missing key 'rake'",
              "counter-clockwise from the strike");
    /* a position in degrees on a projected grid */
    parse_bad(fault_text("x", "x = 170 deg", NULL), SW_ERR_PARSE, "f.scn:10: [fault A] x = 170 deg: degrees on a "
              "projected grid", "x of the top-edge centre, in m or km");
    /* elastic constants */
    parse_bad(fault_text(NULL, NULL, "poisson = 0.5\n"), SW_ERR_RANGE, "f.scn:19: [fault A] poisson = 0.5",
              "0 < poisson < 0.5");
    parse_bad(fault_text(NULL, NULL, "poisson = 0.3\nlambda = 30 GPa\n"), SW_ERR_PARSE,
              "f.scn:20: [fault A] poisson (line 19) and lambda (line 20) are both given", NULL);
    parse_bad(fault_text(NULL, NULL, "rigidity = 30\n"), SW_ERR_RANGE, "f.scn:19: [fault A] rigidity = 30: out of "
              "range", "1 GPa <= rigidity <= 200 GPa");
    parse_bad(fault_text(NULL, NULL, "rigidity = 30 kN\n"), SW_ERR_PARSE, "f.scn:19:", "unknown unit 'kN' (accepted: "
              "Pa, kPa, MPa, GPa)");
    /* choices */
    parse_bad(fault_text(NULL, NULL, "surface = kajura\n"), SW_ERR_PARSE, "f.scn:19: [fault A] surface = kajura: "
              "unknown value (did you mean 'kajiura'?)", NULL);
    parse_bad(fault_text(NULL, NULL, "surface_rupture = yes\n"), SW_ERR_PARSE, "f.scn:19:", "refuse, accept");
    /* timing */
    parse_bad(fault_text(NULL, NULL, "start = 10 s\nrupture_speed = 2 m/s\nhypocentre_x = 1 km\nhypocentre_y = 1 "
                         "km\n"), SW_ERR_PARSE, "f.scn:20: [fault A] start (line 19) and rupture_speed (line 20) are "
              "both given", NULL);
    parse_bad(fault_text(NULL, NULL, "rupture_speed = 2500 m/s\nhypocentre_x = 1 km\n"), SW_ERR_PARSE,
              "f.scn:19: [fault A] rupture_speed needs hypocentre_x and hypocentre_y", NULL);
    parse_bad(fault_text(NULL, NULL, "hypocentre_y = 1 km\n"), SW_ERR_PARSE,
              "f.scn:19: [fault A] hypocentre_y: not used without rupture_speed", NULL);
    parse_bad(fault_text(NULL, NULL, "rise = 2 d\n"), SW_ERR_RANGE, "f.scn:19:", "0 <= rise <= 1 d");
    parse_bad(fault_text(NULL, NULL, "cutoff = -1\n"), SW_ERR_RANGE, "f.scn:19:", "0 <= cutoff <= 10000");
    /* a table section gives no geometry of its own */
    parse_bad(HEAD "[fault B]\nsegments = seg.txt\ndip = 30\n", SW_ERR_PARSE,
              "f.scn:11: [fault B] dip: not used with 'segments'", NULL);
    parse_bad(HEAD "[fault]\n", SW_ERR_PARSE, "f.scn:9: section [fault] needs a name, e.g. [fault main]", NULL);
    parse_bad(HEAD "[faults A]\n", SW_ERR_PARSE, "f.scn:9: unknown section [faults A] (did you mean 'fault'?)", NULL);
    parse_bad(HEAD "[fualt A]\nx = 1\n", SW_ERR_PARSE, "f.scn:9:", "did you mean 'fault'?");
    parse_bad(fault_text(NULL, NULL, "[fault A]\n"), SW_ERR_PARSE, "f.scn:19: duplicate section [fault A] (first on "
              "line 9)", NULL);
    parse_bad(fault_text(NULL, NULL, "slpi = 1 m\n"), SW_ERR_PARSE, "f.scn:19: [fault A] unknown key 'slpi' (did you "
              "mean 'slip'?)", NULL);
}

/* ---- the segment table ------------------------------------------------------------------------------ */

/* [fault B] reading seg-name on line 9 .. 11, then `extra` from line 12. */
static const char *table_text(const char *name, const char *extra)
{
    static char buf[4096];
    snprintf(buf, sizeof buf, HEAD "[fault B]\nsegments = %s\nrigidity = 40 GPa\n%s", name, extra ? extra : "");
    return buf;
}

#define SEG_GOOD                                                                                             \
    "# fictional segments (test_faults.c)\n"                                                                 \
    "x[km]  y[km]  depth[km]  length[m]  width[km]  strike[deg]  dip[deg]  rake[deg]  slip[cm]  rise[min]\n"  \
    "40     30     4          20000      15         10           20        90         150       0.5\n"         \
    "\n"                                                                                                     \
    "60     32     6          25000      12         -350         25        -270       250       1  # a note\n"

static void test_table_reader(void **state)
{
    (void)state;
    write_tmp("faults_seg.txt", SEG_GOOD);
    sw_scenario *sc = parse_ok(table_text("faults_seg.txt", NULL));
    assert_string_equal(sc->faults[0].segments, "faults_seg.txt");
    assert_int_equal(sc->faults[0].segments_line, 10);
    sw_fault_set set;
    collect_ok(sc, &set);
    assert_int_equal(set.n, 2);
    const sw_fault_segment *a = &set.seg[0], *b = &set.seg[1];
    /* units into SI (k = 1e3, c = 1e-2, min = 60 s), each row's own line */
    assert_near(a->f.x_m, 40e3, 0);
    assert_near(a->f.y_m, 30e3, 0);
    assert_near(a->f.depth_m, 4e3, 0);
    assert_near(a->f.length_m, 20e3, 0);
    assert_near(a->f.width_m, 15e3, 0);
    assert_near(a->f.strike_deg, 10, 0);
    assert_near(a->f.dip_deg, 20, 0);
    assert_near(a->f.rake_deg, 90, 0);
    assert_near(a->f.slip_m, 1.5, 1e-15);
    assert_near(a->rise_s, 30, 1e-12);
    assert_int_equal(a->line, 3);
    assert_int_equal(b->line, 5);
    assert_int_equal(a->section, 0);
    /* angles beyond a turn are brought into [0, 360) and (-180, 180] */
    assert_near(b->f.strike_deg, 10, 1e-12);
    assert_near(b->f.rake_deg, 90, 1e-12);
    assert_near(b->f.slip_m, 2.5, 1e-15);
    /* the section's constants reach every row */
    assert_near(a->rigidity_pa, 40e9, 0);
    assert_near(b->f.poisson, 0.25, 0);
    assert_near(b->f.opening_m, 0, 0);
    assert_near(set.cutoff, 20, 0);
    /* the moment of a table is the sum of its rows' mu L W D (Aki 1966 [memory]) */
    const double m0 = 40e9 * (20e3 * 15e3 * 1.5 + 25e3 * 12e3 * 2.5);
    assert_near(sw_faults_moment(&set), m0, 1e-15 * m0);
    /* rises of 30 s and 60 s from t = 0: both move in time */
    assert_near(sw_faults_end(&set), 60, 1e-12);
    sw_faults_free(&set);
    assert_int_equal(set.n, 0);
    assert_null(set.seg);
    del_sc(sc);

    /* optional columns: opening, start */
    write_tmp("faults_seg2.txt", "x[m] y[m] depth[m] length[m] width[m] strike[deg] dip[deg] rake[deg] slip[m] "
              "opening[cm] start[s]\n1000 2000 3000 4000 5000 6 7 8 9 50 12\n");
    sc = parse_ok(table_text("faults_seg2.txt", NULL));
    collect_ok(sc, &set);
    assert_int_equal(set.n, 1);
    assert_near(set.seg[0].f.opening_m, 0.5, 1e-15);
    assert_near(set.seg[0].start_s, 12, 0);
    assert_int_equal(set.seg[0].line, 2);
    sw_faults_free(&set);
    del_sc(sc);
}

static void test_table_refused(void **state)
{
    (void)state;
    char path[1024];
    tu_tmp_path(path, sizeof path, "faults_bad.txt");
    const char *head = "x[km] y[km] depth[km] length[km] width[km] strike[deg] dip[deg] rake[deg] slip[m]\n";
    char t[2048];
    /* a bad line: file and line */
    snprintf(t, sizeof t, "%s40 30 4 20 15 10 20 90 1\n40 30 4 20 15 10 abc 90 1\n", head);
    write_tmp("faults_bad.txt", t);
    collect_bad(table_text("faults_bad.txt", NULL), SW_ERR_PARSE, "faults_bad.txt:3: column 7 'abc' is not a number",
                path);
    snprintf(t, sizeof t, "%s40 30 4 20 15 10 20 90\n", head);
    write_tmp("faults_bad.txt", t);
    collect_bad(table_text("faults_bad.txt", NULL), SW_ERR_PARSE, "faults_bad.txt:2: 8 values, the header names 9",
                NULL);
    /* a value out of its range: the line, the column, the value as written and the range */
    snprintf(t, sizeof t, "# comment\n%s40 30 4 20 15 10 95 90 1\n", head);
    write_tmp("faults_bad.txt", t);
    collect_bad(table_text("faults_bad.txt", NULL), SW_ERR_RANGE, "faults_bad.txt:3: dip = 95 deg: out of range "
                "(accepted: 0 < dip <= 90 deg)", NULL);
    snprintf(t, sizeof t, "%s40 30 4 20 -15 10 20 90 1\n", head);
    write_tmp("faults_bad.txt", t);
    collect_bad(table_text("faults_bad.txt", NULL), SW_ERR_RANGE, "faults_bad.txt:2: width = -15 km: out of range "
                "(accepted: 0 < width <= 2000 km)", NULL);
    snprintf(t, sizeof t, "%s40 30 -4 20 15 10 20 90 1\n", head);
    write_tmp("faults_bad.txt", t);
    collect_bad(table_text("faults_bad.txt", NULL), SW_ERR_RANGE, "faults_bad.txt:2: depth = -4 km: out of range",
                NULL);
    /* a top edge at the sea floor: refused unless the section accepts it */
    snprintf(t, sizeof t, "%s40 30 0 20 15 10 20 90 1\n", head);
    write_tmp("faults_bad.txt", t);
    collect_bad(table_text("faults_bad.txt", NULL), SW_ERR_RANGE, "faults_bad.txt:2: depth = 0 km: the segment's top "
                "edge breaks the sea floor", "surface_rupture = accept in [fault B] at f.scn:9");
    sw_scenario *sc = parse_ok(table_text("faults_bad.txt", "surface_rupture = accept\n"));
    sw_fault_set set;
    collect_ok(sc, &set);
    assert_near(set.seg[0].f.depth_m, 0, 0);
    sw_faults_free(&set);
    del_sc(sc);
    /* unknown column, missing unit, unknown unit, missing column: the accepted names */
    write_tmp("faults_bad.txt", "x[km] y[km] depth[km] length[km] width[km] strike[deg] dip[deg] rake[deg] slp[m]\n"
              "1 2 3 4 5 6 7 8 9\n");
    collect_bad(table_text("faults_bad.txt", NULL), SW_ERR_PARSE, "faults_bad.txt:1: unknown column 'slp' (accepted: "
                "x, y, depth, length, width, strike, dip, rake, slip, start, rise, opening)", NULL);
    write_tmp("faults_bad.txt", "x[km] y[km] depth[km] length[km] width[km] strike[deg] dip rake[deg] slip[m]\n"
              "1 2 3 4 5 6 7 8 9\n");
    collect_bad(table_text("faults_bad.txt", NULL), SW_ERR_PARSE, "faults_bad.txt:1: column 'dip' needs a unit in "
                "brackets, e.g. dip[deg] (accepted: deg)", NULL);
    write_tmp("faults_bad.txt", "x[km] y[km] depth[km] length[km] width[km] strike[deg] dip[deg] rake[deg] slip[ft]\n"
              "1 2 3 4 5 6 7 8 9\n");
    collect_bad(table_text("faults_bad.txt", NULL), SW_ERR_PARSE, "faults_bad.txt:1: unknown unit 'ft' for slip "
                "(accepted: m, cm)", NULL);
    write_tmp("faults_bad.txt", "x[km] y[km] depth[km] length[km] width[km] strike[deg] dip[deg] slip[m]\n"
              "1 2 3 4 5 6 7 8\n");
    collect_bad(table_text("faults_bad.txt", NULL), SW_ERR_PARSE, "faults_bad.txt:1: missing column 'rake'", NULL);
    /* degrees on a projected grid */
    write_tmp("faults_bad.txt", "x[deg] y[deg] depth[km] length[km] width[km] strike[deg] dip[deg] rake[deg] slip[m]\n"
              "1 2 3 4 5 6 7 8 9\n");
    collect_bad(table_text("faults_bad.txt", NULL), SW_ERR_PARSE, "faults_bad.txt:1: column x[deg]: degrees on a "
                "projected grid (accepted: x[m] or x[km]", NULL);
    /* a column and a section key that say the same */
    snprintf(t, sizeof t, "x[km] y[km] depth[km] length[km] width[km] strike[deg] dip[deg] rake[deg] slip[m] start[s]\n"
             "40 30 4 20 15 10 20 90 1 5\n");
    write_tmp("faults_bad.txt", t);
    collect_bad(table_text("faults_bad.txt", "rupture_speed = 2000 m/s\nhypocentre_x = 0\nhypocentre_y = 0\n"),
                SW_ERR_PARSE, "faults_bad.txt:1: column 'start' and [fault B] rupture_speed (f.scn:12) are both given",
                NULL);
    collect_bad(table_text("faults_bad.txt", "start = 3 s\n"), SW_ERR_PARSE, "column 'start' and [fault B] start "
                "(f.scn:12) are both given", NULL);
    /* a missing file names the scenario's line and the path */
    collect_bad(table_text("faults_missing.txt", NULL), SW_ERR_IO, "f.scn:10: [fault B] segments: ",
                "faults_missing.txt: cannot open");
    /* setup reports a bad table as collect does, so `check` does */
    snprintf(t, sizeof t, "%s40 30 4 20 15 10 20 900 1\n", head);
    write_tmp("faults_bad.txt", t);
    sc = parse_ok(table_text("faults_bad.txt", NULL));
    sw_setup s;
    sw_error err = { 0 };
    assert_int_equal(sw_setup_build(sc, &s, &err), SW_ERR_RANGE);
    assert_non_null(strstr(err.msg, "faults_bad.txt:2: rake = 900 deg: out of range (accepted: -360 <= rake <= 360 "
                                    "deg)"));
    assert_null(s.faults.seg);
    del_sc(sc);
}

/* ---- moment, magnitude, timing ---------------------------------------------------------------------- */

static void test_moment_magnitude_hand_example(void **state)
{
    (void)state;
    /* mu = 30 GPa, L = 40 km, W = 20 km, D = 2 m: M0 = 3e10 * 4e4 * 2e4 * 2 = 4.8e19 N m;
     * Mw = (2/3)(log10 4.8e19 - 9.1) = (2/3)(19.681241237 - 9.1) = (2/3)(10.581241237) = 7.054160825
     * (log10 4.8 = 0.681241237 [memory, checked as log10 48 - 1 = 1.681241237 - 1]; Hanks & Kanamori 1979) */
    sw_scenario *sc = parse_ok(fault_text(NULL, NULL, NULL));
    sw_fault_set set;
    collect_ok(sc, &set);
    assert_int_equal(set.n, 1);
    assert_near(sw_faults_moment(&set), 4.8e19, 0);
    assert_near(sw_moment_magnitude(sw_faults_moment(&set)), 7.054160825, 1e-9);
    assert_near(sw_faults_end(&set), 0, 0);
    sw_faults_free(&set);

    /* the plan's figures: setup carries the same, and the peaks of the initial surface over water */
    sw_setup s;
    sw_error err = { 0 };
    assert_int_equal(sw_setup_build(sc, &s, &err), SW_OK);
    assert_int_equal(s.fault.sections, 1);
    assert_int_equal(s.fault.segments, 1);
    assert_near(s.fault.moment_nm, 4.8e19, 0);
    assert_near(s.fault.magnitude, 7.054160825, 1e-9);
    assert_int_equal(s.fault.whole_rupture, 0);
    assert_int_equal(s.fault.run_bytes, 0);
    double hi = 0, lo = 0;
    for (size_t k = 0; k < sw_grid_cells(&s.grid); k++) {
        hi = fmax(hi, s.eta0_m[k]);
        lo = fmin(lo, s.eta0_m[k]);
    }
    assert_true(hi > 0.1 && lo < -0.01);   /* a thrust lifts the hanging wall and lowers the far side */
    assert_near(s.fault.uplift_m, hi, 0);
    assert_near(s.fault.subsidence_m, lo, 0);
    /* the plan says so, in text and JSON */
    char *txt = NULL;
    size_t len = 0;
    FILE *mem = open_memstream(&txt, &len);
    assert_non_null(mem);
    sw_report_plan(mem, sc, &s, NULL);
    fclose(mem);
    if (!strstr(txt, "Faults     1 section, 1 segment: M0 = 4.8e+19 N m, Mw 7.05 (Hanks & Kanamori 1979)\n"
                "           every segment moves at once at t = 0; the initial sea surface over water: uplift up to "))
        fail_msg("plan:\n%s", txt);
    free(txt);
    char *js = sw_report_plan_json(sc, &s, NULL);
    assert_non_null(js);
    assert_non_null(strstr(js, "\"magnitude_mw\":"));
    assert_non_null(strstr(js, "\"peaks_of\":\t\"initial surface\""));
    assert_non_null(strstr(js, "\"segments\":\t1,"));
    free(js);
    sw_setup_free(&s);
    del_sc(sc);

    /* Mw 9.0 is M0 = 10^(1.5 * 9 + 9.1) = 10^22.6 N m [derived from the same formula] */
    assert_near(sw_moment_magnitude(pow(10.0, 22.6)), 9.0, 1e-12);
}

static void test_rupture_start_from_hypocentre(void **state)
{
    (void)state;
    /* strike 0 (north), dip 30, W = 20 km: the rectangle's centre lies W/2 cos 30 = 8.660254038 km east of the
     * top edge's centre (the fault dips to the right of the strike: east) and W/2 sin 30 = 5 km deeper, at
     * (58.660254038 km, 40 km), 10 km deep [derived]. A hypocentre 30 km south of it, at 2000 m/s: 15 s. */
    const double cx = 50e3 + 10e3 * cos(30 * PI / 180);
    char extra[256];
    snprintf(extra, sizeof extra, "rupture_speed = 2000 m/s\nhypocentre_x = %.12f m\nhypocentre_y = 10 km\n"
             "rise = 4 s\n", cx);
    sw_scenario *sc = parse_ok(fault_text(NULL, NULL, extra));
    sw_fault_set set;
    collect_ok(sc, &set);
    assert_near(set.seg[0].start_s, 15, 1e-9);
    assert_near(set.seg[0].rise_s, 4, 0);
    assert_near(sw_faults_end(&set), 19, 1e-9);
    sw_faults_free(&set);
    del_sc(sc);
    /* with hypocentre_depth = 50 km the front travels sqrt(30^2 + 40^2) = 50 km: 25 s */
    snprintf(extra, sizeof extra, "rupture_speed = 2000 m/s\nhypocentre_x = %.12f m\nhypocentre_y = 10 km\n"
             "hypocentre_depth = 50 km\n", cx);
    sc = parse_ok(fault_text(NULL, NULL, extra));
    collect_ok(sc, &set);
    assert_near(set.seg[0].start_s, 25, 1e-9);
    sw_faults_free(&set);
    del_sc(sc);

    /* a table: each row from its own centre. Dip 90 puts the centre under the top edge [derived]; from a
     * hypocentre at (10 km, 0) the rows lie 3 km, hypot(4, 3) = 5 km and 4 km away */
    write_tmp("faults_seg3.txt", "x[km] y[km] depth[km] length[km] width[km] strike[deg] dip[deg] rake[deg] slip[m]\n"
              "10 3 5 2 2 0 90 0 1\n"
              "14 3 5 2 2 0 90 0 1\n"
              "10 -4 5 2 2 0 90 0 1\n");
    sc = parse_ok(table_text("faults_seg3.txt", "rupture_speed = 1000 m/s\nhypocentre_x = 10 km\nhypocentre_y = 0\n"
                             "rise = 2 s\n"));
    collect_ok(sc, &set);
    assert_near(set.seg[0].start_s, 3, 1e-9);    /* 3 km */
    assert_near(set.seg[1].start_s, 5, 1e-9);    /* hypot(4, 3) = 5 km */
    assert_near(set.seg[2].start_s, 4, 1e-9);    /* 4 km */
    assert_near(sw_faults_end(&set), 7, 1e-9);   /* the last starts at 5 s and rises for 2 s */
    sw_faults_free(&set);
    del_sc(sc);
}

/* ---- the sea surface -------------------------------------------------------------------------------- */

/* The grid of HEAD. */
static sw_grid head_grid(void)
{
    return (sw_grid){ .nx = 60, .ny = 50, .dx_m = 2000, .dy_m = 2000 };
}

/* A set of three segments by hand: one instant, one rising from 10 s over 20 s, one jumping at 35 s. */
static sw_fault_set three_segments(void)
{
    sw_fault_set s = { .n = 3, .cutoff = 20 };
    s.seg = calloc(3, sizeof *s.seg);
    assert_non_null(s.seg);
    const double x[3] = { 40e3, 70e3, 55e3 }, y[3] = { 30e3, 60e3, 45e3 };
    const double start[3] = { 0, 10, 35 }, rise[3] = { 0, 20, 0 };
    for (int k = 0; k < 3; k++) {
        s.seg[k].f = (sw_okada_fault){ .x_m = x[k], .y_m = y[k], .depth_m = 3e3 + 1e3 * k, .length_m = 20e3,
                                       .width_m = 10e3, .strike_deg = 20.0 * k, .dip_deg = 25 + 10 * k, .rake_deg = 90,
                                       .slip_m = 1 + k, .poisson = 0.25 };
        s.seg[k].rigidity_pa = 3e10;
        s.seg[k].start_s = start[k];
        s.seg[k].rise_s = rise[k];
    }
    return s;
}

static double max_abs(const double *v, size_t n)
{
    double m = 0;
    for (size_t k = 0; k < n; k++)
        m = fmax(m, fabs(v[k]));
    return m;
}

static void test_increments_sum_to_the_whole_rupture(void **state)
{
    (void)state;
    const sw_grid g = head_grid();
    const size_t n = sw_grid_cells(&g);
    sw_fault_set s = three_segments();
    double *all = calloc(n, sizeof *all), *instant = calloc(n, sizeof *instant), *sum = calloc(n, sizeof *sum);
    double *inc = malloc(n * sizeof *inc);
    assert_non_null(all && instant && sum && inc);
    sw_error err = { 0 };
    assert_int_equal(sw_faults_surface(&s, SW_FAULTS_ALL, &g, NULL, 1.0, all, &err), SW_OK);
    assert_int_equal(sw_faults_surface(&s, SW_FAULTS_INSTANT, &g, NULL, 1.0, instant, &err), SW_OK);
    assert_near(sw_faults_end(&s), 35, 0);
    /* the instant one is the first segment alone: its Okada uplift (the floor surface) */
    double *uz = calloc(n, sizeof *uz);
    assert_non_null(uz);
    assert_int_equal(sw_okada_field(&s.seg[0].f, 1, &g, 20, NULL, NULL, uz, &err), SW_OK);
    assert_same(uz, instant, n);
    free(uz);

    /* steps of 3 s from 0 to 60 s: before 10 s nothing moves; the sum is the whole rupture less the instant
     * part, to round-off (Okada's displacement is linear in the slip) */
    int moved = 1, steps_moved = 0;
    for (double t = 0; t < 60; t += 3) {
        assert_int_equal(sw_faults_increment(&s, t, t + 3, &g, NULL, 1.0, inc, &moved, &err), SW_OK);
        if (t + 3 <= 10 || t >= 35) {
            assert_int_equal(moved, 0);
            assert_near(max_abs(inc, n), 0, 0);
        }
        steps_moved += moved;
        for (size_t k = 0; k < n; k++)
            sum[k] += inc[k];
    }
    assert_int_equal(steps_moved, 8);   /* (9, 12] .. (27, 30]: the rise over 10 .. 30 s; (33, 36]: the jump at 35 s */
    const double peak = max_abs(all, n);
    for (size_t k = 0; k < n; k++)
        assert_near(instant[k] + sum[k], all[k], 1e-12 * peak);
    /* after the end: nothing, at no cost */
    for (size_t k = 0; k < n; k++)
        inc[k] = 7;
    assert_int_equal(sw_faults_increment(&s, 35, 1e6, &g, NULL, 1.0, inc, &moved, &err), SW_OK);
    assert_int_equal(moved, 0);
    assert_near(max_abs(inc, n), 0, 0);

    /* zero rise time: every segment at 0 s with rise 0 is the instant source, bit for bit */
    for (int k = 0; k < 3; k++)
        s.seg[k].start_s = s.seg[k].rise_s = 0;
    double *inst2 = calloc(n, sizeof *inst2);
    assert_non_null(inst2);
    assert_int_equal(sw_faults_surface(&s, SW_FAULTS_INSTANT, &g, NULL, 1.0, inst2, &err), SW_OK);
    assert_same(inst2, all, n);
    assert_near(sw_faults_end(&s), 0, 0);
    assert_int_equal(sw_faults_increment(&s, 0, 1, &g, NULL, 1.0, inc, &moved, &err), SW_OK);
    assert_int_equal(moved, 0);
    /* and all jumping at one later time with rise 0 is the same field, arriving in one step, bit for bit */
    for (int k = 0; k < 3; k++)
        s.seg[k].start_s = 20;
    assert_int_equal(sw_faults_increment(&s, 18, 21, &g, NULL, 1.0, inc, &moved, &err), SW_OK);
    assert_int_equal(moved, 1);
    assert_same(inc, all, n);
    free(inst2);
    free(all);
    free(instant);
    free(sum);
    free(inc);
    sw_faults_free(&s);
}

static void test_floor_to_surface(void **state)
{
    (void)state;
    const sw_grid g = head_grid();
    const size_t n = sw_grid_cells(&g);
    sw_fault_set s = three_segments();
    s.n = 1;
    /* a seabed sloping down to the east, H = 100 m + 0.02 x (dH/dx = 0.02), with land (H < 1 m) nowhere */
    double *depth = malloc(n * sizeof *depth), *floor_m = calloc(n, sizeof *floor_m), *horiz = calloc(n, sizeof *horiz);
    double *ux = calloc(n, sizeof *ux), *uy = calloc(n, sizeof *uy), *uz = calloc(n, sizeof *uz);
    assert_non_null(depth && floor_m && horiz && ux && uy && uz);
    for (size_t j = 0; j < g.ny; j++)
        for (size_t i = 0; i < g.nx; i++)
            depth[j * g.nx + i] = 100 + 0.02 * sw_grid_xc(&g, i);
    sw_error err = { 0 };
    assert_int_equal(sw_faults_surface(&s, SW_FAULTS_ALL, &g, depth, 1.0, floor_m, &err), SW_OK);
    s.seg[0].horizontal = 1;
    assert_int_equal(sw_faults_surface(&s, SW_FAULTS_ALL, &g, depth, 1.0, horiz, &err), SW_OK);
    assert_int_equal(sw_okada_field(&s.seg[0].f, 1, &g, 20, ux, uy, uz, &err), SW_OK);
    /* Tanioka & Satake (1996): the horizontal term adds u_x dH/dx + u_y dH/dy; here u_x * 0.02 inside, where
     * the differences are centred (on the west and east edges one-sided, the same slope: the field is linear) */
    const double peak = max_abs(ux, n) * 0.02;
    assert_true(peak > 1e-3);
    for (size_t k = 0; k < n; k++)
        assert_near(horiz[k] - floor_m[k], ux[k] * 0.02, 1e-12 + 1e-9 * peak);
    /* Kajiura (1963): the surface is sw_kajiura_filter of the floor's uplift, land at 0 */
    s.seg[0].horizontal = 0;
    s.seg[0].kajiura = 1;
    double *kaj = calloc(n, sizeof *kaj), *want = malloc(n * sizeof *want);
    assert_non_null(kaj && want);
    assert_int_equal(sw_faults_surface(&s, SW_FAULTS_ALL, &g, depth, 1.0, kaj, &err), SW_OK);
    assert_int_equal(sw_kajiura_filter(&g, depth, 1.0, floor_m, want, &err), SW_OK);
    assert_same(kaj, want, n);
    /* without a depth field the filter cannot run: a usage error, not a crash */
    assert_int_equal(sw_faults_surface(&s, SW_FAULTS_ALL, &g, NULL, 1.0, kaj, &err), SW_ERR_USAGE);
    free(kaj);
    free(want);
    free(depth);
    free(floor_m);
    free(horiz);
    free(ux);
    free(uy);
    free(uz);
    sw_faults_free(&s);
}

/* sw_source_build adds the instant faults' surface to the other sources, and hands it back alone. */
static void test_source_adds_faults(void **state)
{
    (void)state;
    char text[16384];
    snprintf(text, sizeof text, "%s[source s]\nshape = hump\nx = 9 km\ny = 9 km\namplitude = 1 m\nradius = 5 km\n"
             "[fault C]\nx = 90 km\ny = 60 km\ndepth = 4 km\nlength = 20 km\nwidth = 10 km\nstrike = 45\ndip = 40\n"
             "rake = 70\nslip = 1 m\nstart = 30 s\n", fault_text(NULL, NULL, NULL));
    sw_scenario *sc = parse_ok(text);
    const size_t n = sw_grid_cells(&sc->grid);
    double *eta = malloc(n * sizeof *eta), *faults = malloc(n * sizeof *faults), *want = calloc(n, sizeof *want);
    assert_non_null(eta && faults && want);
    sw_error err = { 0 };
    assert_int_equal(sw_source_build(sc, NULL, NULL, 1.0, eta, faults, &err), SW_OK);
    sw_fault_set set;
    collect_ok(sc, &set);
    assert_int_equal(set.n, 2);
    assert_int_equal(sw_faults_surface(&set, SW_FAULTS_INSTANT, &sc->grid, NULL, 1.0, want, &err), SW_OK);
    assert_same(faults, want, n);   /* [fault A] only: C starts at 30 s */
    /* the hump, 1 m at (9 km, 9 km), the centre of cell (4, 4) on 2 km cells, where [fault A]'s far field is
     * small but not 0 */
    const size_t k = 4 * 60 + 4;
    assert_true(fabs(want[k]) > 0);
    assert_near(eta[k], 1.0 + want[k], 1e-15);
    sw_faults_free(&set);

    /* setup: the whole rupture's peaks, the end, and the run's memory for the increments */
    sw_setup s;
    assert_int_equal(sw_setup_build(sc, &s, &err), SW_OK);
    assert_int_equal(s.fault.segments, 2);
    assert_int_equal(s.fault.whole_rupture, 1);
    assert_near(s.fault.end_s, 30, 0);
    assert_int_equal(s.fault.run_bytes, 2 * n * sizeof(double));
    double *whole = calloc(n, sizeof *whole);
    assert_non_null(whole);
    assert_int_equal(sw_faults_surface(&s.faults, SW_FAULTS_ALL, &s.grid, s.depth_m, 1.0, whole, &err), SW_OK);
    double hi = 0;
    for (size_t q = 0; q < n; q++)
        hi = fmax(hi, whole[q]);
    assert_near(s.fault.uplift_m, hi, 0);
    assert_same(s.eta0_m, eta, n);
    free(whole);
    sw_setup_free(&s);
    free(eta);
    free(faults);
    free(want);
    del_sc(sc);
}

/* ---- a run: the same as a file source of the same field, and the volume it displaces ------------------ */

/* What a run's sink received: copies of its arrival and peak maps. */
typedef struct {
    size_t n;
    double *arrival_s, *eta_max_m;
} run_maps;

static sw_status keep_maps(const sw_map_set *maps, const sw_gauge_table *gt, void *user, sw_error *err)
{
    (void)gt;
    (void)err;
    run_maps *r = user;
    r->n = sw_grid_cells(maps->grid);
    r->arrival_s = malloc(r->n * sizeof *r->arrival_s);
    r->eta_max_m = malloc(r->n * sizeof *r->eta_max_m);
    assert_non_null(r->arrival_s);
    assert_non_null(r->eta_max_m);
    memcpy(r->arrival_s, maps->arrival_s, r->n * sizeof *r->arrival_s);
    memcpy(r->eta_max_m, maps->eta_max_m, r->n * sizeof *r->eta_max_m);
    return SW_OK;
}

/* Builds and runs sc on one thread, keeping its maps and result. */
static void run_keep(sw_scenario *sc, run_maps *maps, sw_run_result *res, sw_setup *s)
{
    sw_error err = { 0 };
    if (sw_setup_build(sc, s, &err) != SW_OK)
        fail_msg("setup: %s", err.msg);
    sw_run_options o = { .threads = 1, .sink = keep_maps, .sink_user = maps, .history = "" };
    if (sw_run(sc, s, &o, res, &err) != SW_OK)
        fail_msg("run: %s", err.msg);
}

#define NC_OK(call) assert_int_equal((call), NC_NOERR)

/* Writes v ([ny * nx] on grid g's centres) as the variable `name` of a NetCDF file with x and y axes (in
 * metres: no units). */
static void write_field(const char *path, const sw_grid *g, const double *v, const char *name)
{
    int ncid, dim[2], vy, vx, vv;
    NC_OK(nc_create(path, NC_CLOBBER, &ncid));
    NC_OK(nc_def_dim(ncid, "y", g->ny, &dim[0]));
    NC_OK(nc_def_dim(ncid, "x", g->nx, &dim[1]));
    NC_OK(nc_def_var(ncid, "y", NC_DOUBLE, 1, &dim[0], &vy));
    NC_OK(nc_def_var(ncid, "x", NC_DOUBLE, 1, &dim[1], &vx));
    NC_OK(nc_def_var(ncid, name, NC_DOUBLE, 2, dim, &vv));
    NC_OK(nc_enddef(ncid));
    double *cx = malloc(g->nx * sizeof *cx), *cy = malloc(g->ny * sizeof *cy);
    assert_non_null(cx);
    assert_non_null(cy);
    for (size_t i = 0; i < g->nx; i++)
        cx[i] = sw_grid_xc(g, i);
    for (size_t j = 0; j < g->ny; j++)
        cy[j] = sw_grid_yc(g, j);
    NC_OK(nc_put_var_double(ncid, vx, cx));
    NC_OK(nc_put_var_double(ncid, vy, cy));
    NC_OK(nc_put_var_double(ncid, vv, v));
    NC_OK(nc_close(ncid));
    free(cx);
    free(cy);
}

static void test_run_equals_file_source(void **state)
{
    (void)state;
    /* the fault's run */
    sw_scenario *sc = parse_ok(fault_text(NULL, NULL, NULL));
    run_maps a = { 0 }, b = { 0 };
    sw_run_result *ra = malloc(sizeof *ra), *rb = malloc(sizeof *rb);
    assert_non_null(ra);
    assert_non_null(rb);
    sw_setup sa, sb;
    run_keep(sc, &a, ra, &sa);
    /* the displaced volume is the floor's uplift integrated over the water (every cell is water here) */
    const sw_grid *g = &sa.grid;
    const size_t n = sw_grid_cells(g);
    double *uz = calloc(n, sizeof *uz);
    assert_non_null(uz);
    sw_error err = { 0 };
    assert_int_equal(sw_okada_field(&sa.faults.seg[0].f, 1, g, sa.faults.cutoff, NULL, NULL, uz, &err), SW_OK);
    double vol = 0, mag = 0;
    for (size_t k = 0; k < n; k++) {
        vol += uz[k] * g->dx_m * g->dy_m;
        mag += fabs(uz[k]) * g->dx_m * g->dy_m;
    }
    assert_true(fabs(vol) > 1e6);
    assert_near(ra->volume_start_m3, vol, 1e-12 * mag);
    /* a file source holding the same field: the same initial elevation, and the same maps, bit for bit */
    char path[1024], text[16384];
    tu_tmp_path(path, sizeof path, "faults_eta.nc");
    write_field(path, g, sa.eta0_m, "eta");
    snprintf(text, sizeof text, "%s[source f]\nshape = file\nfile = faults_eta.nc\n", HEAD);
    sw_scenario *sf = parse_ok(text);
    run_keep(sf, &b, rb, &sb);
    assert_same(sb.eta0_m, sa.eta0_m, n);
    assert_int_equal(ra->steps, rb->steps);
    assert_memory_equal(a.arrival_s, b.arrival_s, n * sizeof *a.arrival_s);
    assert_memory_equal(a.eta_max_m, b.eta_max_m, n * sizeof *a.eta_max_m);
    assert_near(ra->volume_start_m3, rb->volume_start_m3, 0);
    free(uz);
    free(a.arrival_s);
    free(a.eta_max_m);
    free(b.arrival_s);
    free(b.eta_max_m);
    free(ra);
    free(rb);
    sw_setup_free(&sa);
    sw_setup_free(&sb);
    del_sc(sc);
    del_sc(sf);

    /* the grid from the seabed file: the faults' positions wait for it (sw_scenario_place), then are read */
    const sw_grid hg = head_grid();
    double *depth = malloc(sw_grid_cells(&hg) * sizeof *depth);
    assert_non_null(depth);
    for (size_t k = 0; k < sw_grid_cells(&hg); k++)
        depth[k] = 2000;
    tu_tmp_path(path, sizeof path, "faults_depth.nc");
    write_field(path, &hg, depth, "depth");
    free(depth);
    sc = parse_ok("[run]\nduration = 10 min\n[seabed]\nfile = faults_depth.nc\npositive = down\n[fault A]\n"
                  "x = 50 km\ny = 40 km\ndepth = 5 km\nlength = 40 km\nwidth = 20 km\nstrike = 0\ndip = 30\n"
                  "rake = 90\nslip = 2 m\nx_offset = 2 km\n");
    assert_false(sc->positions_placed);
    sw_fault_set set;
    assert_int_equal(sw_faults_collect(sc, &set, &err), SW_ERR_USAGE);   /* not before the grid is known */
    assert_int_equal(sw_setup_build(sc, &sa, &err), SW_OK);
    assert_int_equal(sa.faults.n, 1);
    assert_near(sa.faults.seg[0].f.x_m, 52e3, 0);
    assert_near(sa.faults.seg[0].f.y_m, 40e3, 0);
    assert_near(sa.fault.moment_nm, 4.8e19, 0);
    sw_setup_free(&sa);
    del_sc(sc);
}

/* A rupture in time through a run (run.c adds each step's sea-floor motion before the step):
 *  - start 0, rise 0 written out is the instant source, bit for bit;
 *  - the fault moving from 60 s over 30 s: once it has stopped, the volume the run holds (walls all round:
 *    the step conserves it to round-off) is the whole uplift's, as for the instant source [derived];
 *  - starting at 120 s with rise 0: nowhere does the water move before 120 s, and each first arrival is
 *    the instant run's plus 120 s to within two steps (the sudden rise after 120 s starts from rest, the
 *    instant source from its half-step velocities: model.h) [derived]. */
static void test_rupture_in_time_run(void **state)
{
    (void)state;
    const char *walls = "[edges]\nall = wall\n";
    char extra[256];
    sw_setup s0, s1;
    run_maps m0 = { 0 }, m1 = { 0 };
    sw_run_result *r0 = malloc(sizeof *r0), *r1 = malloc(sizeof *r1);
    assert_non_null(r0);
    assert_non_null(r1);

    sw_scenario *a = parse_ok(fault_text(NULL, NULL, walls));
    run_keep(a, &m0, r0, &s0);
    snprintf(extra, sizeof extra, "%sstart = 0 s\nrise = 0 s\n", "");
    {   /* the keys go into [fault A]: append them before [edges] */
        char text[8192];
        snprintf(text, sizeof text, "%s%s", fault_text(NULL, NULL, extra), walls);
        sw_scenario *b = parse_ok(text);
        run_keep(b, &m1, r1, &s1);
        assert_memory_equal(m0.arrival_s, m1.arrival_s, m0.n * sizeof *m0.arrival_s);
        assert_memory_equal(m0.eta_max_m, m1.eta_max_m, m0.n * sizeof *m0.eta_max_m);
        free(m1.arrival_s);
        free(m1.eta_max_m);
        sw_setup_free(&s1);
        del_sc(b);
    }
    const double v_all = r0->volume_start_m3;

    char text[8192];
    snprintf(text, sizeof text, "%s%s", fault_text(NULL, NULL, "start = 60 s\nrise = 30 s\n"), walls);
    sw_scenario *c = parse_ok(text);
    run_keep(c, &m1, r1, &s1);
    print_message("rupture 60 .. 90 s: volume at the start %.3e m3, at the end %.9e m3, the instant source's %.9e m3\n",
                  r1->volume_start_m3, r1->volume_end_m3, v_all);
    assert_near(r1->volume_start_m3, 0, 0);
    assert_near(r1->volume_end_m3, v_all, 1e-12 * fabs(v_all));
    free(m1.arrival_s);
    free(m1.eta_max_m);
    sw_setup_free(&s1);
    del_sc(c);

    snprintf(text, sizeof text, "%s%s", fault_text(NULL, NULL, "start = 120 s\nrise = 0 s\n"), walls);
    sw_scenario *d = parse_ok(text);
    run_keep(d, &m1, r1, &s1);
    const double dt = s1.dt_s;
    double worst = 0;
    size_t reached = 0;
    for (size_t k = 0; k < m0.n; k++) {
        const double t0 = m0.arrival_s[k], t1 = m1.arrival_s[k];
        if (!isfinite(t0) || !isfinite(t1) || t0 > 300)
            continue;
        assert_true(t1 >= 120 - 1e-9);
        worst = fmax(worst, fabs(t1 - (t0 + 120)));
        reached++;
    }
    print_message("rupture at 120 s, rise 0: %zu cells reached; arrival - (instant + 120 s) at most %.2f s (dt %.2f s)\n",
                  reached, worst, dt);
    assert_true(reached > 100);
    assert_true(worst <= 2 * dt + 1e-9);
    free(m1.arrival_s);
    free(m1.eta_max_m);
    sw_setup_free(&s1);
    del_sc(d);

    free(m0.arrival_s);
    free(m0.eta_max_m);
    sw_setup_free(&s0);
    del_sc(a);
    free(r0);
    free(r1);
}

/* ---- sweeps ------------------------------------------------------------------------------------------- */

static void test_sweeps_over_faults(void **state)
{
    (void)state;
    write_tmp("faults_seg4.txt", "x[km] y[km] depth[km] length[km] width[km] strike[deg] dip[deg] rake[deg] slip[m]\n"
              "40 30 4 20 15 10 20 90 1.5\n"
              "60 32 6 20 15 10 25 90 2.5\n");
    char text[16384];
    snprintf(text, sizeof text, "%s[fault B]\nsegments = faults_seg4.txt\n[sweep]\nslip_factor = 0.5, 2\n"
             "fault_x_offset = -10 km, 10 km\nfault_rotation = 90\nfault A.dip = 45\nfault B.rigidity = 40 GPa\n"
             "fault A.surface = kajiura\n", fault_text(NULL, NULL, NULL));
    sw_scenario *sc = parse_ok(text);
    const sw_sweep_spec *sw = &sc->sweep;
    assert_int_equal(sw->n_params, 6);
    assert_int_equal(sw->param[0].kind, SW_SWEEP_SLIP_FACTOR);
    assert_int_equal(sw->param[1].kind, SW_SWEEP_FAULT_X_OFFSET);
    assert_int_equal(sw->param[1].unit, SW_UNIT_LENGTH);
    assert_near(sw->param[1].level[1], 10e3, 0);
    assert_int_equal(sw->param[2].kind, SW_SWEEP_FAULT_ROTATION);
    assert_int_equal(sw->param[3].kind, SW_SWEEP_KEY);
    assert_string_equal(sw->param[3].target, "fault A.dip");
    assert_near(sw->param[4].level[0], 40e9, 0);
    assert_non_null(sw->param[5].words);
    assert_near(sw->param[5].level[0], 1, 0);   /* kajiura: the second word */
    double v;
    sw_error err = { 0 };
    assert_int_equal(sw_scenario_value(sc, "fault A.slip", &v, &err), SW_OK);
    assert_near(v, 2, 0);
    assert_int_equal(sw_scenario_value(sc, "fault B.slip_factor", &v, &err), SW_OK);
    assert_near(v, 1, 0);

    sw_sweep_plan plan;
    assert_int_equal(sw_sweep_make_design(sc, &plan, &err), SW_OK);
    assert_int_equal(plan.n_members, 1 + 2 + 2 + 1 + 1 + 1 + 1);
    sw_fault_set base;
    collect_ok(sc, &base);
    assert_int_equal(base.n, 3);
    for (size_t k = 1; k < plan.n_members; k++) {
        sw_scenario m;
        if (sw_sweep_member_scenario(&plan, k, &m, &err) != SW_OK)
            fail_msg("member %zu: %s", k, err.msg);
        sw_fault_set set;
        collect_ok(&m, &set);
        assert_int_equal(set.n, 3);
        const long q = plan.member[k].varied;
        const double val = plan.member[k].value[q];
        for (size_t i = 0; i < 3; i++) {
            const sw_okada_fault *a = &base.seg[i].f, *b = &set.seg[i].f;
            if (q == 0) {   /* slip_factor: every segment, table rows included; the moment with it */
                assert_near(b->slip_m, val * a->slip_m, 1e-15);
                assert_near(b->x_m, a->x_m, 0);
            } else if (q == 1) {   /* fault_x_offset: every reference point moves */
                assert_near(b->x_m, a->x_m + val, 1e-9);
                assert_near(b->y_m, a->y_m, 0);
                assert_near(b->slip_m, a->slip_m, 0);
            } else if (q == 2) {
                /* fault_rotation 90 deg clockwise about the centroid of the three reference points as written,
                 * C = ((50 + 40 + 60) / 3, (40 + 30 + 32) / 3) km = (50, 34) km: an offset (e, n) becomes (n, -e)
                 * [derived], and every strike turns by 90 deg */
                const double cx = 50e3, cy = 34e3;
                assert_near(b->x_m, cx + (a->y_m - cy), 1e-6);
                assert_near(b->y_m, cy - (a->x_m - cx), 1e-6);
                assert_near(b->strike_deg, fmod(a->strike_deg + 90, 360), 1e-12);
                assert_near(b->dip_deg, a->dip_deg, 0);
            }
        }
        if (q == 0)
            assert_near(sw_faults_moment(&set), val * sw_faults_moment(&base), 1e-15 * sw_faults_moment(&base));
        if (q == 3)
            assert_near(set.seg[0].f.dip_deg, 45, 0);
        if (q == 4)
            assert_near(set.seg[1].rigidity_pa, 40e9, 0);
        if (q == 5)
            assert_int_equal(set.seg[0].kajiura, 1);
        sw_faults_free(&set);
        sw_scenario_free(&m);
    }
    sw_faults_free(&base);
    sw_sweep_plan_free(&plan);
    del_sc(sc);

    /* depth_factor with faults that use the depth: each member builds again over the scaled depth */
    sc = parse_ok(fault_text(NULL, NULL, "surface = kajiura\nhorizontal = on\n[sweep]\ndepth_factor = 0.5, 2\n"));
    assert_int_equal(sw_sweep_plan_build(sc, "", &plan, &err), SW_OK);
    assert_int_equal(plan.n_members, 3);
    for (size_t k = 0; k < plan.n_members; k++)
        if (plan.member[k].status != SW_OK)
            fail_msg("member %zu: %s", k, plan.member[k].error ? plan.member[k].error : "?");
    sw_sweep_plan_free(&plan);
    del_sc(sc);

    /* refusals */
    parse_bad(HEAD "[sweep]\nslip_factor = 2\n", SW_ERR_PARSE, "f.scn:10: [sweep] slip_factor: the scenario has no "
              "[fault] to change", NULL);
    parse_bad(HEAD "[fault B]\nsegments = x.txt\n[sweep]\nfault B.dip = 30\n", SW_ERR_PARSE,
              "f.scn:12: [sweep] fault B.dip: [fault B] dip is not used by this fault: its segment table gives it",
              NULL);
    parse_bad(fault_text(NULL, NULL, "[sweep]\nslip_factor = 0, 1\n"), SW_ERR_RANGE, "f.scn:20: [sweep] slip_factor = "
              "0, 1: value '0': out of range (accepted: 0 < slip_factor <= 1000)", NULL);
    parse_bad(fault_text(NULL, NULL, "[sweep]\nfault_rotation = 400\n"), SW_ERR_RANGE, "f.scn:20:",
              "-360 <= fault_rotation <= 360 deg");
    parse_bad(fault_text(NULL, NULL, "[sweep]\nfault A.dip = 30, 95\n"), SW_ERR_RANGE, "value '95': out of range "
              "(accepted: 0 < dip <= 90 deg)", NULL);
    parse_bad(fault_text(NULL, NULL, "[sweep]\nslip_factr = 2\n"), SW_ERR_PARSE, "did you mean 'slip_factor'?", NULL);
}

/* ---- a geographic grid ------------------------------------------------------------------------------ */

#define GEO_HEAD                                                                                             \
    "[run]\nduration = 10 min\n"                                                                             \
    "[grid]\nkind = geographic\nnx = 40\nny = 30\ndx = 0.05 deg\nx0 = 179 deg\ny0 = -41 deg\n"              \
    "[seabed]\ndeep = 2000 m\n"   /* lines 1 .. 11 */

static void test_geographic_fault(void **state)
{
    (void)state;
    const double m_per_deg = R_EARTH * PI / 180;
    /* a vertical fault (dip 90: its centre lies under its top edge) with the hypocentre 0.5 deg north on the
     * same meridian: the front travels R * 0.5 deg = 55.597 km [derived: haversine along a meridian] */
    sw_scenario *sc = parse_ok(GEO_HEAD "[fault G]\nx = 180 deg\ny = -40.5 deg\ndepth = 5 km\nlength = 30 km\n"
                               "width = 15 km\nstrike = 90\ndip = 90\nrake = 0\nslip = 1 m\nrupture_speed = 2000 m/s\n"
                               "hypocentre_x = 180\nhypocentre_y = -40 deg\nx_offset = 0.1 deg\n");
    assert_true(sc->positions_placed);
    const sw_fault_spec *f = &sc->faults[0];
    assert_near(f->x_m, 180 * m_per_deg, 1e-6);
    assert_near(f->y_m, -40.5 * m_per_deg, 1e-6);
    assert_near(f->x_offset_m, 0.1 * m_per_deg, 1e-9);
    double v;
    sw_error err = { 0 };
    assert_int_equal(sw_scenario_value(sc, "fault G.x_offset", &v, &err), SW_OK);
    assert_near(v, 0.1, 1e-12);   /* read back in degrees, as the file writes it */
    sw_fault_set set;
    collect_ok(sc, &set);
    assert_near(set.seg[0].f.x_m, 180.1 * m_per_deg, 1e-6);
    assert_near(set.seg[0].start_s, 0.5 * m_per_deg / 2000, 1e-6);
    sw_faults_free(&set);
    /* it lifts the sea: a strike-slip fault's quadrants, up and down, on the sphere */
    sw_setup s;
    assert_int_equal(sw_setup_build(sc, &s, &err), SW_OK);
    assert_int_equal(s.fault.whole_rupture, 1);
    assert_true(s.fault.uplift_m > 1e-3 && s.fault.subsidence_m < -1e-3);
    sw_setup_free(&s);
    del_sc(sc);

    /* a table in degrees; a longitude moved by 360 deg onto the grid (-179.8 is 180.2 on 179 .. 181 deg) */
    write_tmp("faults_geo.txt", "x[deg] y[deg] depth[km] length[km] width[km] strike[deg] dip[deg] rake[deg] slip[m]\n"
              "180.2 -40.6 5 10 10 0 45 90 1\n"
              "-179.8 -40.7 5 10 10 0 45 90 1\n");
    sc = parse_ok(GEO_HEAD "[fault T]\nsegments = faults_geo.txt\n");
    collect_ok(sc, &set);
    assert_near(set.seg[0].f.x_m, 180.2 * m_per_deg, 1e-6);
    assert_near(set.seg[1].f.x_m, 180.2 * m_per_deg, 1e-6);
    assert_near(set.seg[1].f.y_m, -40.7 * m_per_deg, 1e-6);
    sw_faults_free(&set);
    del_sc(sc);
    /* lengths there are refused, in the table and in the keys */
    write_tmp("faults_geo.txt", "x[km] y[km] depth[km] length[km] width[km] strike[deg] dip[deg] rake[deg] slip[m]\n"
              "180.2 -40.6 5 10 10 0 45 90 1\n");
    collect_bad(GEO_HEAD "[fault T]\nsegments = faults_geo.txt\n", SW_ERR_PARSE, "faults_geo.txt:1: column x[km]: a "
                "length on a geographic grid (accepted: x[deg], the longitude)", NULL);
    write_tmp("faults_geo.txt", "x[deg] y[deg] depth[km] length[km] width[km] strike[deg] dip[deg] rake[deg] slip[m]\n"
              "180.2 -95 5 10 10 0 45 90 1\n");
    collect_bad(GEO_HEAD "[fault T]\nsegments = faults_geo.txt\n", SW_ERR_RANGE, "faults_geo.txt:2: y = -95 deg: out "
                "of range (accepted: the top edge's latitude, -90 <= y <= 90 deg)", NULL);
    parse_bad(GEO_HEAD "[fault G]\nx = 30 km\n", SW_ERR_PARSE, "f.scn:13: [fault G] x = 30 km: a length: give degrees "
              "on a geographic grid", NULL);
    /* the sweep's offsets are degrees there */
    sc = parse_ok(GEO_HEAD "[fault T]\nsegments = x.txt\n[sweep]\nfault_y_offset = -0.5 deg, 0.5\n");
    assert_int_equal(sc->sweep.param[0].unit, SW_UNIT_ANGLE);
    assert_near(sc->sweep.param[0].level[1], 0.5, 0);
    del_sc(sc);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_keys_in_si_and_defaults),
        cmocka_unit_test(test_keys_refused),
        cmocka_unit_test(test_table_reader),
        cmocka_unit_test(test_table_refused),
        cmocka_unit_test(test_moment_magnitude_hand_example),
        cmocka_unit_test(test_rupture_start_from_hypocentre),
        cmocka_unit_test(test_increments_sum_to_the_whole_rupture),
        cmocka_unit_test(test_floor_to_surface),
        cmocka_unit_test(test_source_adds_faults),
        cmocka_unit_test(test_run_equals_file_source),
        cmocka_unit_test(test_rupture_in_time_run),
        cmocka_unit_test(test_sweeps_over_faults),
        cmocka_unit_test(test_geographic_fault),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
