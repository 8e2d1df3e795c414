/* test_geoscenario.c - scenarios on geographic grids: [grid] kind and radius, positions in degrees,
 * longitudes across the 180th meridian, rotation on the sphere, the refusals (each a one-line message
 * naming the file, line and key and the accepted form), positions placed once the seabed file gives the
 * grid, sweeps and overrides of coordinates, and what setup and the plan say about the time step's row.
 *
 * External references used by the checks:
 *  - The arc-length coordinates x = R lambda, y = R phi of a geographic grid (src/base/grid.h, the
 *    design); R = 6371 km, the mean Earth radius (IUGG) [memory; docs/references.md]. Expected metres are
 *    written as R * (degrees * pi / 180) in the test, an independent product of the same formula.
 *  - A cell's true east-west width on a sphere is R dlambda cos(phi) [derived: the circumference of the
 *    parallel at latitude phi is 2 pi R cos(phi)].
 *  - The time-step limit of the C layout in 2D, dt = 1 / (c sqrt(1/dx^2 + 1/dy^2)) with c = sqrt(g h)
 *    (docs/layouts.md; Courant, Friedrichs & Lewy 1928 [memory]) at the narrowest cell: on a flat floor
 *    the northernmost row of a northern-hemisphere grid, whose north face line has the least cos(phi).
 *  - docs/scenario.md: the message formats and accepted forms a user is promised.
 */
#define _POSIX_C_SOURCE 200809L   /* open_memstream */

#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>

#include <cjson/cJSON.h>
#include <math.h>
#include <netcdf.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "inputs/scenario.h"
#include "outputs/report.h"
#include "run/setup.h"
#include "testutil.h"

#define PI 3.14159265358979323846
#define R_EARTH 6371000.0
#define NC_OK(call) assert_int_equal((call), NC_NOERR)

/* Degrees as arc metres on the default sphere: R * (deg * pi / 180). */
static double arc_m(double deg) { return R_EARTH * (deg * PI / 180.0); }

/* |got - want| <= tol * |want| (relative), reporting both. */
#define assert_rel(got, want, tol) rel_check((got), (want), (tol), __FILE__, __LINE__)
static void rel_check(double got, double want, double tol, const char *file, int line)
{
    if (!(fabs(got - want) <= tol * fabs(want))) {
        print_error("%.17g != %.17g (relative tolerance %g)\n", got, want, tol);
        _fail(file, line);
    }
}

/* A geographic base: [run] line 1, [grid] lines 3-9 (longitude 170 .. 190 deg, latitude 50 .. 55 deg),
 * [seabed] line 10; appended text starts on line 12. */
#define GEO                                                                                                  \
    "[run]\nduration = 1 h\n"                                                                                \
    "[grid]\nkind = geographic\nnx = 400\nny = 100\ndx = 0.05 deg\nx0 = 170\ny0 = 50 deg\n"                  \
    "[seabed]\ndeep = 3 km\n"

/* The same grid in metres (projected): appended text starts on line 9. */
#define PROJ                                                                                                 \
    "[run]\nduration = 1 h\n"                                                                                \
    "[grid]\nnx = 10\nny = 20\ndx = 1 km\n"                                                                  \
    "[seabed]\ndeep = 100 m\n"

static sw_scenario *parse_ok(const char *text)
{
    sw_scenario *sc = calloc(1, sizeof *sc);
    assert_non_null(sc);
    sw_error err = { 0 };
    sw_status st = sw_scenario_parse(text, "g.scn", NULL, sc, &err);
    if (st != SW_OK)
        fail_msg("refused (%s): %s\n--- text ---\n%s", sw_status_name(st), err.msg, text);
    return sc;
}

static void del_sc(sw_scenario *sc)
{
    sw_scenario_free(sc);
    free(sc);
}

/* Parses text that must fail with `code` and a one-line message containing want1 and want2 (may be NULL). */
static void parse_bad(const char *text, sw_status code, const char *want1, const char *want2)
{
    sw_scenario *sc = calloc(1, sizeof *sc);
    assert_non_null(sc);
    sw_error err = { 0 };
    sw_status st = sw_scenario_parse(text, "g.scn", NULL, sc, &err);
    if (st == SW_OK)
        fail_msg("accepted, expected '%s'\n--- text ---\n%s", want1 ? want1 : "", text);
    if (st != code)
        fail_msg("status %s, expected %s: %s", sw_status_name(st), sw_status_name(code), err.msg);
    if ((want1 && !strstr(err.msg, want1)) || (want2 && !strstr(err.msg, want2)))
        fail_msg("message '%s' lacks '%s' / '%s'", err.msg, want1 ? want1 : "", want2 ? want2 : "");
    assert_null(strchr(err.msg, '\n'));
    assert_null(sc->text);
    del_sc(sc);
}

typedef struct {
    const char *text;
    sw_status code;
    const char *want1, *want2;
} bad_case;

static void run_cases(const bad_case *c, size_t n)
{
    for (size_t i = 0; i < n; i++) {
        print_message("case %zu\n", i);
        parse_bad(c[i].text, c[i].code, c[i].want1, c[i].want2);
    }
}

/* ---- [grid] ---------------------------------------------------------------------------------- */

static void test_grid_in_degrees(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok(GEO);
    const sw_grid *g = &sc->grid;
    assert_int_equal(g->kind, SW_GRID_GEOGRAPHIC);
    assert_true(g->radius_m == R_EARTH);   /* the default: 6371 km */
    assert_int_equal(sc->grid_kind_line, 4);
    assert_int_equal(sc->has_grid, 1);
    assert_int_equal(sc->positions_placed, 1);
    /* x = R lambda, y = R phi [design, grid.h]; a bare number is degrees there */
    assert_rel(g->x0_m, arc_m(170), 1e-15);
    assert_rel(g->y0_m, arc_m(50), 1e-15);
    assert_rel(g->dx_m, arc_m(0.05), 1e-15);
    assert_rel(g->dy_m, arc_m(0.05), 1e-15);   /* dy defaults to dx */
    assert_int_equal(sc->terms.rotation, SW_ROTATION_SPHERE);   /* the default on a geographic grid */
    assert_int_equal(sc->rotation_written, 0);
    del_sc(sc);

    /* another radius: the WGS 84 equatorial radius 6378.137 km [memory] */
    sc = parse_ok("[run]\nduration = 1 h\n[grid]\nkind = geographic\nradius = 6378.137 km\nnx = 10\nny = 10\n"
                  "dx = 1 deg\ndy = 0.5 deg\nx0 = -5 deg\ny0 = -2\n[seabed]\ndeep = 1 km\n");
    assert_true(sc->grid.radius_m == 6378137.0);
    assert_rel(sc->grid.dy_m, 6378137.0 * (0.5 * PI / 180), 1e-15);
    assert_rel(sc->grid.x0_m, -6378137.0 * (5 * PI / 180), 1e-15);
    del_sc(sc);

    /* a projected grid: kind and radius still set (the defaults), metres untouched */
    sc = parse_ok(PROJ);
    assert_int_equal(sc->grid.kind, SW_GRID_PROJECTED);
    assert_true(sc->grid.radius_m == R_EARTH);
    assert_int_equal(sc->grid_kind_line, 0);
    assert_true(sc->grid.dx_m == 1000.0);
    assert_int_equal(sc->terms.rotation, SW_ROTATION_NONE);
    del_sc(sc);

    /* once around is the most: 360 x 1 deg */
    sc = parse_ok("[run]\nduration = 1 h\n[grid]\nkind = geographic\nnx = 360\nny = 10\ndx = 1\nx0 = -180\n"
                  "[seabed]\ndeep = 1 km\n");
    assert_rel(sc->grid.x0_m, arc_m(-180), 1e-15);
    del_sc(sc);

    /* [grid] giving only the kind, the grid from the seabed file: nothing else required */
    sc = parse_ok("[run]\nduration = 1 h\n[grid]\nkind = geographic\nradius = 6400 km\n[seabed]\nfile = b.nc\n");
    assert_int_equal(sc->has_grid, 0);
    assert_int_equal(sc->grid.kind, SW_GRID_GEOGRAPHIC);
    assert_true(sc->grid.radius_m == 6.4e6);
    assert_int_equal(sc->grid.nx, 0);
    assert_int_equal(sc->positions_placed, 0);
    del_sc(sc);
}

static void test_grid_refusals(void **state)
{
    (void)state;
    static const bad_case cases[] = {
        /* metres on a geographic grid, degrees on a projected one: the key and the accepted form */
        { "[run]\nduration = 1 h\n[grid]\nkind = geographic\nnx = 10\nny = 10\ndx = 5 km\n[seabed]\ndeep = 1 km\n",
          SW_ERR_PARSE, "g.scn:7: [grid] dx = 5 km: a length: give degrees on a geographic grid (accepted: 1e-05 deg "
          "<= dx <= 10 deg on a geographic grid)", NULL },
        { "[run]\nduration = 1 h\n[grid]\nnx = 10\nny = 10\ndx = 1 km\nx0 = 170 deg\n[seabed]\ndeep = 1 km\n",
          SW_ERR_PARSE, "g.scn:7: [grid] x0 = 170 deg: degrees on a projected grid (accepted: |x0| <= 100000 km; "
          "degrees need [grid] kind = geographic)", NULL },
        /* the kind may come after the keys it governs */
        { "[run]\nduration = 1 h\n[grid]\nnx = 10\nny = 10\ndx = 500 m\nkind = geographic\n[seabed]\ndeep = 1 km\n",
          SW_ERR_PARSE, "g.scn:6: [grid] dx = 500 m: a length: give degrees on a geographic grid", NULL },
        /* latitudes beyond +-90 */
        { "[run]\nduration = 1 h\n[grid]\nkind = geographic\nnx = 10\nny = 10\ndx = 1\ny0 = 95 deg\n[seabed]\n"
          "deep = 1 km\n", SW_ERR_RANGE, "g.scn:8: [grid] y0 = 95 deg: out of range (accepted: the south edge's "
          "latitude, -90 <= y0 <= 90 deg)", NULL },
        /* halo rows beyond 89 deg: north line of the halo row at 80 + 91 * 0.1 = 89.1 deg */
        { "[run]\nduration = 1 h\n[grid]\nkind = geographic\nnx = 10\nny = 90\ndx = 0.1\ny0 = 80 deg\n[seabed]\n"
          "deep = 1 km\n", SW_ERR_RANGE, "g.scn:8: [grid] y0 = 80 deg, ny = 90, dy = 0.1 deg: the halo rows reach "
          "latitude 89.1 deg, beyond +-89 deg", "cos(latitude) goes to 0, cells collapse to slivers and the time step "
          "with them" },
        { "[run]\nduration = 1 h\n[grid]\nkind = geographic\nnx = 10\nny = 10\ndx = 0.5\ny0 = -89 deg\n[seabed]\n"
          "deep = 1 km\n", SW_ERR_RANGE, "latitude -89.5 deg, beyond +-89 deg", NULL },
        /* longitudes: more than once around, x0 beyond 360 */
        { "[run]\nduration = 1 h\n[grid]\nkind = geographic\nnx = 361\nny = 10\ndx = 1\n[seabed]\ndeep = 1 km\n",
          SW_ERR_RANGE, "g.scn:7: [grid] nx * dx = 361 * 1 deg = 361 deg: more than once around the sphere (accepted: "
          "nx * dx <= 360 deg)", NULL },
        { "[run]\nduration = 1 h\n[grid]\nkind = geographic\nnx = 10\nny = 10\ndx = 1\nx0 = 400\n[seabed]\n"
          "deep = 1 km\n", SW_ERR_RANGE, "g.scn:8: [grid] x0 = 400: out of range (accepted: the west edge's "
          "longitude, -360 <= x0 <= 360 deg)", NULL },
        { "[run]\nduration = 1 h\n[grid]\nkind = geographic\nnx = 10\nny = 10\ndx = 11 deg\n[seabed]\ndeep = 1 km\n",
          SW_ERR_RANGE, "[grid] dx = 11 deg: out of range (accepted: 1e-05 deg <= dx <= 10 deg", NULL },
        /* radius: its range, and only on a geographic grid */
        { "[run]\nduration = 1 h\n[grid]\nkind = geographic\nradius = 5000 km\nnx = 1\nny = 1\ndx = 1\n[seabed]\n"
          "deep = 1 km\n", SW_ERR_RANGE, "g.scn:5: [grid] radius = 5000 km: out of range (accepted: 6000 km <= "
          "radius <= 7000 km", NULL },
        { "[run]\nduration = 1 h\n[grid]\nnx = 1\nny = 1\ndx = 1\nradius = 6371 km\n[seabed]\ndeep = 1 km\n",
          SW_ERR_PARSE, "g.scn:7: [grid] radius: only on a geographic grid (accepted: kind = geographic with it, or "
          "leave it out)", NULL },
        { "[run]\nduration = 1 h\n[grid]\nkind = geografic\nnx = 1\nny = 1\ndx = 1\n[seabed]\ndeep = 1 km\n",
          SW_ERR_PARSE, "g.scn:4: [grid] kind = geografic: unknown value (did you mean 'geographic'?)", NULL },
        /* only the kind, and no seabed file to give the size */
        { "[run]\nduration = 1 h\n[grid]\nkind = geographic\n[seabed]\ndeep = 1 km\n", SW_ERR_PARSE,
          "g.scn:3: [grid] missing key 'nx'", "only [seabed] file can give the grid's size" },
        /* a size begun is a size: nx and dx then required */
        { "[run]\nduration = 1 h\n[grid]\nkind = geographic\nny = 4\n[seabed]\nfile = b.nc\n", SW_ERR_PARSE,
          "g.scn:3: [grid] missing key 'nx'", NULL },
    };
    run_cases(cases, sizeof cases / sizeof cases[0]);
}

/* ---- positions ------------------------------------------------------------------------------- */

static void test_positions_in_degrees(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok(GEO
                               "[source main]\nshape = hump\nx = 175.5 deg\ny = 52\namplitude = 1 m\nradius = 50 km\n"
                               "[island Skerry]\nx = -178\ny = 53 deg\nradius = 4 km\nheight = 20 m\n"
                               "[gauges]\nWest = 170 deg, 50 deg\nAcross = -175.25 deg, 54.5 deg\nEast = 190, 55\n");
    const double eps = 1e-15;
    assert_rel(sc->sources[0].x_m, arc_m(175.5), eps);
    assert_rel(sc->sources[0].y_m, arc_m(52), eps);
    assert_true(sc->sources[0].radius_m == 50000.0);   /* sizes stay lengths */
    /* -178 and -175.25 lie on the grid (170 .. 190) once moved by 360 deg */
    assert_rel(sc->features[0].x_m, arc_m(182), eps);
    assert_rel(sc->gauges[1].x_m, arc_m(184.75), eps);
    assert_rel(sc->gauges[1].y_m, arc_m(54.5), eps);
    assert_rel(sc->gauges[0].x_m, arc_m(170), eps);   /* the edges are inside */
    assert_rel(sc->gauges[2].x_m, arc_m(190), eps);
    del_sc(sc);

    /* a grid written in -180 .. 180 across 0: a longitude of 355 deg is -5 deg there */
    sc = parse_ok("[run]\nduration = 1 h\n[grid]\nkind = geographic\nnx = 20\nny = 10\ndx = 1\nx0 = -10\n"
                  "[seabed]\ndeep = 1 km\n[gauges]\nP = 355 deg, 5 deg\nQ = -5 deg, 5 deg\n");
    assert_rel(sc->gauges[0].x_m, arc_m(-5), eps);
    assert_true(sc->gauges[0].x_m == sc->gauges[1].x_m);
    del_sc(sc);

    /* a source off the grid stays where it is unless 360 deg brings it nearer */
    sc = parse_ok(GEO "[source far]\nshape = hump\nx = 100\ny = 52\namplitude = 1\nradius = 9 km\n");
    assert_rel(sc->sources[0].x_m, arc_m(100), eps);
    del_sc(sc);

    /* the shoreline of a recipe is a position too: a latitude with a north coast */
    sc = parse_ok("[run]\nduration = 1 h\n[grid]\nkind = geographic\nnx = 10\nny = 10\ndx = 0.1\ny0 = 40\n"
                  "[seabed]\ndeep = 1 km\ncoast = north\nshoreline = 40.8 deg\nshelf_width = 20 km\n");
    assert_rel(sc->shoreline_m, arc_m(40.8), eps);
    assert_true(sc->shelf_width_m == 20000.0);
    del_sc(sc);
}

static void test_position_refusals(void **state)
{
    (void)state;
    static const bad_case cases[] = {
        /* lengths on a geographic grid, degrees on a projected one: file:line, key, accepted form */
        { GEO "[source s]\nshape = hump\nx = 30 km\n", SW_ERR_PARSE, "g.scn:14: [source s] x = 30 km: a length: give "
          "degrees on a geographic grid (accepted: the centre's longitude, -180 <= x <= 360 deg)", NULL },
        { GEO "[gauges]\nPort = 175 deg, 5 km\n", SW_ERR_PARSE, "g.scn:13: [gauges] Port = 175 deg, 5 km: y: a length: "
          "give degrees on a geographic grid (accepted: a latitude, -90 .. 90 deg)", NULL },
        { PROJ "[gauges]\nPort = 175 deg, 5 km\n", SW_ERR_PARSE, "g.scn:10: [gauges] Port = 175 deg, 5 km: x: degrees "
          "on a projected grid (accepted: x in m or km; degrees need [grid] kind = geographic)", NULL },
        { PROJ "[bay b]\ny = 2 deg\n", SW_ERR_PARSE, "g.scn:10: [bay b] y = 2 deg: degrees on a projected grid "
          "(accepted: y of the centre, in m or km", NULL },
        /* latitudes beyond +-90, longitudes beyond -180 .. 360 */
        { GEO "[gauges]\nPole = 175 deg, 91 deg\n", SW_ERR_RANGE, "g.scn:13: [gauges] Pole = 175 deg, 91 deg: y: out of "
          "range (accepted: a latitude, -90 .. 90 deg)", NULL },
        { GEO "[source s]\nshape = hump\ny = -90.5\n", SW_ERR_RANGE, "g.scn:14: [source s] y = -90.5: out of range "
          "(accepted: the centre's latitude, -90 <= y <= 90 deg)", NULL },
        { GEO "[shoal s]\nx = -181 deg\n", SW_ERR_RANGE, "[shoal s] x = -181 deg: out of range", NULL },
        { "[run]\nduration = 1 h\n[grid]\nkind = geographic\nnx = 10\nny = 10\ndx = 0.1\ny0 = 40\n[seabed]\n"
          "deep = 1 km\ncoast = south\nshoreline = 95\nshelf_width = 20 km\n", SW_ERR_RANGE, "g.scn:12: [seabed] "
          "shoreline = 95 deg: out of range (accepted: with coast = south the shoreline's latitude", NULL },
        /* a gauge outside the grid, in degrees: 200 deg is -160, off the grid both ways */
        { GEO "[gauges]\nFar = 200 deg, 52 deg\n", SW_ERR_RANGE, "g.scn:13: [gauges] Far = 200 deg, 52 deg: outside the "
          "domain (accepted: 170 <= longitude <= 190 deg, 50 <= latitude <= 55 deg)", NULL },
        { GEO "[gauges]\nSouth = 180 deg, 49.99 deg\n", SW_ERR_RANGE, "[gauges] South = 180 deg, 49.99 deg: outside",
          NULL },
        { GEO "[gauges]\nPort = 175 deg\n", SW_ERR_PARSE, "g.scn:13: [gauges] Port = 175 deg: expected two angles 'x, y' "
          "(e.g. 172.5 deg, -41.25 deg)", NULL },
    };
    run_cases(cases, sizeof cases / sizeof cases[0]);
}

/* ---- rotation and the atmosphere ------------------------------------------------------------- */

static void test_rotation_and_forcing(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok("[run]\nduration = 1 h\nrotation = none\n[grid]\nkind = geographic\nnx = 4\nny = 4\n"
                               "dx = 1\n[seabed]\ndeep = 1 km\n");
    assert_int_equal(sc->terms.rotation, SW_ROTATION_NONE);
    assert_int_equal(sc->rotation_written, 1);
    del_sc(sc);
    sc = parse_ok("[run]\nduration = 1 h\nrotation = sphere\n[grid]\nkind = geographic\nnx = 4\nny = 4\ndx = 1\n"
                  "[seabed]\ndeep = 1 km\n");
    assert_int_equal(sc->terms.rotation, SW_ROTATION_SPHERE);
    del_sc(sc);
    /* with the kind from the seabed file, sphere is taken now and checked once the file is read */
    sc = parse_ok("[run]\nduration = 1 h\nrotation = sphere\n[seabed]\nfile = b.nc\n");
    assert_int_equal(sc->terms.rotation, SW_ROTATION_SPHERE);
    del_sc(sc);

#define GEO_RUN(keys) "[run]\nduration = 1 h\n" keys "[grid]\nkind = geographic\nnx = 4\nny = 4\ndx = 1\n" \
                      "[seabed]\ndeep = 1 km\n"
    static const bad_case cases[] = {
        { GEO_RUN("rotation = f-plane\nlatitude = 40\n"), SW_ERR_PARSE, "g.scn:3: [run] rotation = f-plane: on a "
          "geographic grid the sphere gives f (accepted: sphere, the default there, or none)", NULL },
        { GEO_RUN("rotation = beta-plane\n"), SW_ERR_PARSE, "g.scn:3: [run] rotation = beta-plane: on a geographic grid "
          "the sphere gives f", NULL },
        { GEO_RUN("latitude = 40 deg\n"), SW_ERR_PARSE, "g.scn:3: [run] latitude: not used on a geographic grid: the "
          "sphere gives f = 2 Omega sin(latitude) row by row (accepted: leave it out)", NULL },
        { GEO_RUN("reference_y = 10 km\ncoriolis = 1e-4\n"), SW_ERR_PARSE, "g.scn:3: [run] reference_y: not used on a "
          "geographic grid", NULL },
        { GEO_RUN("rotation = none\nbeta = 1e-11\n"), SW_ERR_PARSE, "g.scn:4: [run] beta: not used on a geographic grid",
          NULL },
        { "[run]\nduration = 1 h\nrotation = sphere\n[grid]\nnx = 4\nny = 4\ndx = 1 km\n[seabed]\ndeep = 1 km\n",
          SW_ERR_PARSE, "g.scn:3: [run] rotation = sphere: only on a geographic grid (accepted: none, f-plane, "
          "beta-plane on a projected grid; sphere with [grid] kind = geographic)", NULL },
        { "[run]\nduration = 1 h\nrotation = sphere\nlatitude = 10\n[seabed]\nfile = b.nc\n", SW_ERR_PARSE,
          "g.scn:4: [run] latitude: not used with rotation = sphere", NULL },
        /* storms and weather files: not on geographic grids this round */
        { GEO "[storm]\ntrack = t.txt\n", SW_ERR_PARSE, "g.scn:12: [storm]: not yet available on geographic grids; use "
          "a projected grid", NULL },
        { GEO "[weather]\nfile = w.nc\n", SW_ERR_PARSE, "g.scn:12: [weather]: not yet available on geographic grids; "
          "use a projected grid", NULL },
    };
#undef GEO_RUN
    run_cases(cases, sizeof cases / sizeof cases[0]);
    /* a level series at level edges is fine */
    sc = parse_ok(GEO "[edges]\nwest = level\nlevel_series = tide.txt\n");
    assert_string_equal(sc->forcing.level_file, "tide.txt");
    del_sc(sc);
}

/* ---- the grid from the seabed file: positions placed later ---------------------------------- */

/* The grid sw_seabed_grid would take from a geographic file: longitude 175 .. 183, latitude 40 .. 45. */
static void fake_file_grid(sw_scenario *sc, sw_grid_kind kind)
{
    sc->grid.kind = kind;
    sc->grid.nx = 80;
    sc->grid.ny = 50;
    if (kind == SW_GRID_GEOGRAPHIC) {
        sc->grid.dx_m = sc->grid.dy_m = sw_grid_deg(&sc->grid, 0.1);
        sc->grid.x0_m = sw_grid_deg(&sc->grid, 175);
        sc->grid.y0_m = sw_grid_deg(&sc->grid, 40);
    } else {
        sc->grid.dx_m = sc->grid.dy_m = 1000;
        sc->grid.x0_m = sc->grid.y0_m = 0;
    }
    sc->has_grid = 1;
}

#define FILE_GRID "[run]\nduration = 1 h\n[seabed]\nfile = b.nc\n"   /* appended text starts on line 5 */

/* Places sc on a fake file grid of `kind`, expecting failure with a message containing want. */
static void place_bad(const char *text, sw_grid_kind kind, const char *want)
{
    sw_scenario *sc = parse_ok(text);
    assert_int_equal(sc->positions_placed, 0);
    fake_file_grid(sc, kind);
    sw_scenario before = *sc;
    sw_error err = { 0 };
    sw_status st = sw_scenario_place(sc, &err);
    if (st == SW_OK || !strstr(err.msg, want))
        fail_msg("place: %s, '%s' lacks '%s'", sw_status_name(st), err.msg, want);
    assert_null(strchr(err.msg, '\n'));
    assert_int_equal(sc->positions_placed, 0);   /* nothing changed */
    assert_memory_equal(sc->sources, before.sources, sizeof before.sources);
    assert_memory_equal(sc->gauges, before.gauges, sizeof before.gauges);
    del_sc(sc);
}

static void test_place_after_the_file(void **state)
{
    (void)state;
    const char *text = FILE_GRID "[source s]\nshape = hump\nx = -178.5\ny = 42 deg\namplitude = 1\nradius = 20 km\n"
                                 "[gauges]\nA = 179.5 deg, 44.5\nB = 181, 40\n";
    sw_scenario *sc = parse_ok(text);
    assert_int_equal(sc->has_grid, 0);
    assert_int_equal(sc->positions_placed, 0);
    /* kept as written, with their units */
    assert_true(sc->sources[0].x_m == -178.5 && sc->sources[0].x_unit == SW_UNIT_NONE);
    assert_true(sc->sources[0].y_m == 42 && sc->sources[0].y_unit == SW_UNIT_ANGLE);
    assert_true(sc->gauges[0].x_m == 179.5 && sc->gauges[0].x_unit == SW_UNIT_ANGLE);
    fake_file_grid(sc, SW_GRID_GEOGRAPHIC);
    sw_error err = { 0 };
    assert_int_equal(sw_scenario_place(sc, &err), SW_OK);
    assert_int_equal(sc->positions_placed, 1);
    assert_rel(sc->sources[0].x_m, arc_m(181.5), 1e-15);   /* -178.5 + 360, on the grid */
    assert_rel(sc->sources[0].y_m, arc_m(42), 1e-15);
    assert_rel(sc->gauges[0].x_m, arc_m(179.5), 1e-15);
    assert_rel(sc->gauges[1].y_m, arc_m(40), 1e-15);
    assert_int_equal(sc->terms.rotation, SW_ROTATION_SPHERE);   /* the default once the grid is geographic */
    const double x = sc->sources[0].x_m;
    assert_int_equal(sw_scenario_place(sc, &err), SW_OK);   /* twice: no change */
    assert_true(sc->sources[0].x_m == x);
    del_sc(sc);

    /* the same on a projected file: metres and bare numbers are metres, rotation stays none */
    sc = parse_ok(FILE_GRID "[gauges]\nA = 5 km, 3000\n");
    fake_file_grid(sc, SW_GRID_PROJECTED);
    assert_int_equal(sw_scenario_place(sc, &err), SW_OK);
    assert_true(sc->gauges[0].x_m == 5000 && sc->gauges[0].y_m == 3000);
    assert_int_equal(sc->terms.rotation, SW_ROTATION_NONE);
    del_sc(sc);

    /* the rules, with the line that breaks them */
    place_bad(FILE_GRID "[source s]\nshape = hump\nx = 30 km\ny = 42\namplitude = 1\nradius = 20 km\n",
              SW_GRID_GEOGRAPHIC, "g.scn:5: [source s] x = 30 km: a length: give degrees on a geographic grid "
              "(accepted: the centre's longitude, -180 <= x <= 360 deg)");
    place_bad(FILE_GRID "[gauges]\nA = 1 km, 44.5 deg\n", SW_GRID_PROJECTED,
              "g.scn:6: [gauges] A = 1 km, 44.5 deg: y: degrees on a projected grid");
    place_bad(FILE_GRID "[gauges]\nA = 180, 95\n", SW_GRID_GEOGRAPHIC,
              "g.scn:6: [gauges] A = 180, 95: y: out of range (accepted: a latitude, -90 .. 90 deg)");
    place_bad("[run]\nduration = 1 h\nrotation = f-plane\ncoriolis = 1e-4\n[seabed]\nfile = b.nc\n", SW_GRID_GEOGRAPHIC,
              "g.scn:3: [run] rotation = f-plane: the grid is geographic (from [seabed] file), where the sphere gives f");
    place_bad("[run]\nduration = 1 h\nrotation = sphere\n[seabed]\nfile = b.nc\n", SW_GRID_PROJECTED,
              "g.scn:3: [run] rotation = sphere: only on a geographic grid, and the grid is projected");
    place_bad(FILE_GRID "[storm]\ntrack = t.txt\n", SW_GRID_GEOGRAPHIC,
              "g.scn:5: [storm]: not yet available on geographic grids");
    /* when parsing already knows the kind, degrees in a projected [grid]-less file scenario fail at once */
    parse_bad("[run]\nduration = 1 h\n[grid]\nkind = projected\n[seabed]\nfile = b.nc\n[gauges]\nA = 3 deg, 4 deg\n",
              SW_ERR_PARSE, "g.scn:8: [gauges] A = 3 deg, 4 deg: x: degrees on a projected grid", NULL);
}

/* ---- sweeps and overrides of coordinates ----------------------------------------------------- */

static void test_sweep_and_override(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok(GEO "[source main]\nshape = hump\nx = 175\ny = 52\namplitude = 1\nradius = 50 km\n"
                               "[sweep]\nsource_x_offset = -0.5 deg, 0.5\nsource main.y = 51.5 .. 52.5 in 3\n"
                               "grid.dx = 0.1, 0.05\n");
    const sw_sweep_spec *sw = &sc->sweep;
    assert_int_equal(sw->n_params, 3);
    /* coordinates of a geographic grid are swept in degrees, as the file writes them */
    assert_int_equal(sw->param[0].unit, SW_UNIT_ANGLE);
    assert_true(sw->param[0].level[0] == -0.5 && sw->param[0].level[1] == 0.5);
    assert_int_equal(sw->param[1].unit, SW_UNIT_ANGLE);
    assert_true(sw->param[1].level[1] == 52.0);
    assert_int_equal(sw->param[2].unit, SW_UNIT_ANGLE);
    double v;
    sw_error err = { 0 };
    assert_int_equal(sw_scenario_value(sc, "source main.y", &v, &err), SW_OK);
    assert_rel(v, 52.0, 1e-14);
    assert_int_equal(sw_scenario_value(sc, "grid.dx", &v, &err), SW_OK);
    assert_rel(v, 0.05, 1e-14);

    /* an override written in degrees is placed like the file's own value; metres are refused */
    sw_override ov[] = { { .target = "source main.x", .value = "-179 deg" } };
    sw_scenario *o = calloc(1, sizeof *o);
    assert_non_null(o);
    assert_int_equal(sw_scenario_override(sc, ov, 1, o, &err), SW_OK);
    assert_rel(o->sources[0].x_m, arc_m(181), 1e-15);
    sw_scenario_free(o);
    ov[0].value = "500 km";
    assert_int_equal(sw_scenario_override(sc, ov, 1, o, &err), SW_ERR_PARSE);
    assert_non_null(strstr(err.msg, "override source main.x = 500 km: [source main] x = 500 km: a length: give degrees "
                                    "on a geographic grid"));
    free(o);
    del_sc(sc);

    /* projected: offsets and positions stay lengths in metres */
    sc = parse_ok(PROJ "[source main]\nshape = hump\nx = 5 km\ny = 5 km\namplitude = 1\nradius = 1 km\n"
                  "[sweep]\nsource_y_offset = -1 km, 1 km\n");
    assert_int_equal(sc->sweep.param[0].unit, SW_UNIT_LENGTH);
    assert_true(sc->sweep.param[0].level[1] == 1000.0);
    del_sc(sc);

    static const bad_case cases[] = {
        { GEO "[source m]\nshape = hump\nx = 175\ny = 52\namplitude = 1\nradius = 5 km\n[sweep]\n"
          "source_x_offset = 10 km, 20 km\n", SW_ERR_PARSE, "g.scn:19: [sweep] source_x_offset = 10 km, 20 km: value "
          "'10 km': a length: give degrees on a geographic grid (accepted: |source_x_offset| <= 360 deg on a "
          "geographic grid)", NULL },
        { PROJ "[source m]\nshape = hump\nx = 1\ny = 1\namplitude = 1\nradius = 5 km\n[sweep]\n"
          "source m.x = 1 deg, 2 deg\n", SW_ERR_PARSE, "g.scn:16: [sweep] source m.x = 1 deg, 2 deg: value '1 deg': "
          "degrees on a projected grid", NULL },
        { FILE_GRID "[source m]\nshape = hump\nx = 1\ny = 1\namplitude = 1\nradius = 5 km\n[sweep]\n"
          "source_y_offset = 1, 2\n", SW_ERR_PARSE, "g.scn:12: [sweep] source_y_offset: a coordinate, and the grid's "
          "kind comes from the seabed file (accepted: with [grid] kind = projected or geographic written)", NULL },
        { "[run]\nduration = 1 h\n[grid]\nkind = geographic\n[seabed]\nfile = b.nc\n[sweep]\ngrid.dx = 1, 2\n",
          SW_ERR_PARSE, "g.scn:8: [sweep] grid.dx: the grid comes from the seabed file", NULL },
    };
    run_cases(cases, sizeof cases / sizeof cases[0]);
}

/* ---- setup and the plan ---------------------------------------------------------------------- */

/* A flat 3 km floor, longitude 170 .. 190 deg, latitude 50 .. 55 deg, with two gauges; ASCII only. */
static const char SETUP_SCN[] =
    "[run]\nduration = 10 min\ntitle = Fictional Sound\nrotation = none\n"
    "[grid]\nkind = geographic\nnx = 40\nny = 10\ndx = 0.5 deg\ny0 = 50\nx0 = 170\n"
    "[seabed]\ndeep = 3 km\n"
    "[source main]\nshape = hump\nx = 178\ny = 52.5\namplitude = 1\nradius = 60 km\n"
    "[gauges]\nOskeldrun Post = -175, 54\n";

static void test_setup_time_step_row(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok(SETUP_SCN);
    sw_setup s;
    sw_error err = { 0 };
    sw_status st = sw_setup_build(sc, &s, &err);
    if (st != SW_OK)
        fail_msg("%s", err.msg);
    /* a flat floor in the north: the limit is reached on the northernmost row, whose north face line at
     * 55 deg is its narrowest: width R dlambda cos(55 deg) [derived] */
    assert_int_equal(s.dt_row, 9);
    assert_rel(s.dt_row_lat_deg, 54.75, 1e-12);
    const double width = R_EARTH * (0.5 * PI / 180) * cos(55 * PI / 180);
    assert_rel(s.dt_row_width_m, width, 1e-12);
    /* the C layout's 2D limit there (no rotation): 1 / (c sqrt(1/w^2 + 1/dy^2)) (docs/layouts.md) */
    const double c = sqrt(9.81 * 3000.0), dy = R_EARTH * (0.5 * PI / 180);
    assert_rel(s.dt_limit_s, 1.0 / (c * sqrt(1 / (width * width) + 1 / (dy * dy))), 1e-12);
    assert_int_equal(s.land_missing + s.land_mask, 0);

    /* the plan: kind, extent in degrees, where the limit is, gauges in degrees */
    char *buf = NULL;
    size_t len = 0;
    FILE *f = open_memstream(&buf, &len);
    assert_non_null(f);
    sw_report_plan(f, sc, &s, NULL);
    fclose(f);
    assert_non_null(strstr(buf, "Grid       geographic (sphere of radius 6371 km), 40 x 10 cells of 0.5 deg x 0.5 "
                                "deg, longitude 170 to 190 deg, latitude 50 to 55 deg"));
    assert_non_null(strstr(buf, "the limit is reached on row 9, latitude 54.75 deg, where the narrowest cell is "));
    assert_non_null(strstr(buf, "lon (deg)"));
    assert_non_null(strstr(buf, "185.00000"));   /* -175 on this grid */
    free(buf);
    char *json = sw_report_plan_json(sc, &s, NULL);
    assert_non_null(json);
    cJSON *o = cJSON_Parse(json);
    assert_non_null(o);
    const cJSON *grid = cJSON_GetObjectItem(o, "grid"), *lim = cJSON_GetObjectItem(o, "dt_limit");
    assert_string_equal(cJSON_GetStringValue(cJSON_GetObjectItem(grid, "kind")), "geographic");
    assert_rel(cJSON_GetNumberValue(cJSON_GetObjectItem(grid, "lat_north_deg")), 55, 1e-12);
    assert_rel(cJSON_GetNumberValue(cJSON_GetObjectItem(grid, "lon_west_deg")), 170, 1e-12);
    assert_true(cJSON_GetNumberValue(cJSON_GetObjectItem(lim, "row")) == 9);
    assert_rel(cJSON_GetNumberValue(cJSON_GetObjectItem(lim, "cell_width_m")), width, 1e-12);
    const cJSON *gauge = cJSON_GetArrayItem(cJSON_GetObjectItem(o, "gauges"), 0);
    assert_rel(cJSON_GetNumberValue(cJSON_GetObjectItem(gauge, "lon_deg")), 185, 1e-12);
    assert_true(cJSON_IsNull(cJSON_GetObjectItem(o, "land_from_file")));
    cJSON_Delete(o);
    free(json);
    sw_setup_free(&s);
    del_sc(sc);

    /* a projected grid: row 0 and the plain width, and the plan names the kind */
    sc = parse_ok("[run]\nduration = 10 min\n[grid]\nnx = 20\nny = 10\ndx = 2 km\n[seabed]\ndeep = 100 m\n");
    assert_int_equal(sw_setup_build(sc, &s, &err), SW_OK);
    assert_int_equal(s.dt_row, 0);
    assert_true(s.dt_row_width_m == 2000.0);
    f = open_memstream(&buf, &len);
    sw_report_plan(f, sc, &s, NULL);
    fclose(f);
    assert_non_null(strstr(buf, "Grid       projected, 20 x 10 cells of 2000 m x 2000 m"));
    assert_null(strstr(buf, "the limit is reached"));
    free(buf);
    sw_setup_free(&s);
    del_sc(sc);

    /* an explicit dt beyond the limit names the row and its latitude */
    char text[1024];
    snprintf(text, sizeof text, "%s", SETUP_SCN);
    char *at = strstr(text, "title");
    memcpy(at, "dt = 600 s  ;", 13);   /* same length: the line numbers stay */
    sc = parse_ok(text);
    st = sw_setup_build(sc, &s, &err);
    assert_int_equal(st, SW_ERR_UNSTABLE);
    assert_non_null(strstr(err.msg, "g.scn:3: [run] dt = 600 s: Courant number"));
    assert_non_null(strstr(err.msg, "on row 9 at latitude 54.75 deg, where cells are"));
    del_sc(sc);
}

/* Writes a geographic seabed file (lat 40 .. 45, lon 175 .. 183, 0.1 deg cells) of 3000 m with NaN on the
 * first `nan_cells` points, at path. */
static void write_geo_bed(const char *path, int nan_cells)
{
    int nc, dl, dm, vl, vm, vd;
    NC_OK(nc_create(path, NC_CLOBBER | NC_NETCDF4, &nc));
    NC_OK(nc_def_dim(nc, "lat", 50, &dl));
    NC_OK(nc_def_dim(nc, "lon", 80, &dm));
    NC_OK(nc_def_var(nc, "lat", NC_DOUBLE, 1, &dl, &vl));
    NC_OK(nc_def_var(nc, "lon", NC_DOUBLE, 1, &dm, &vm));
    NC_OK(nc_put_att_text(nc, vl, "units", 13, "degrees_north"));
    NC_OK(nc_put_att_text(nc, vm, "units", 12, "degrees_east"));
    int dims[2] = { dl, dm };
    NC_OK(nc_def_var(nc, "depth", NC_DOUBLE, 2, dims, &vd));
    NC_OK(nc_put_att_text(nc, vd, "positive", 4, "down"));
    NC_OK(nc_enddef(nc));
    double lat[50], lon[80], *d = malloc(50 * 80 * sizeof *d);
    assert_non_null(d);
    for (int j = 0; j < 50; j++)
        lat[j] = 40.05 + 0.1 * j;
    for (int i = 0; i < 80; i++)
        lon[i] = 175.05 + 0.1 * i;
    for (int k = 0; k < 50 * 80; k++)
        d[k] = k < nan_cells ? NAN : 3000.0;
    NC_OK(nc_put_var_double(nc, vl, lat));
    NC_OK(nc_put_var_double(nc, vm, lon));
    NC_OK(nc_put_var_double(nc, vd, d));
    NC_OK(nc_close(nc));
    free(d);
}

static void test_setup_from_a_geographic_file(void **state)
{
    (void)state;
    char bed[512], text[2048];
    tu_tmp_path(bed, sizeof bed, "geoscenario_bed.nc");
    write_geo_bed(bed, 7);
    sw_error err = { 0 };
    sw_setup s;

    /* the file makes the grid geographic; positions placed; NaN as land counted */
    snprintf(text, sizeof text, "[run]\nduration = 5 min\n[seabed]\nfile = %s\nmissing = land\n"
             "[gauges]\nA = -179.5 deg, 44.5 deg\n", bed);
    sw_scenario *sc = parse_ok(text);
    sw_status st = sw_setup_build(sc, &s, &err);
    if (st != SW_OK)
        fail_msg("%s", err.msg);
    assert_int_equal(sc->grid.kind, SW_GRID_GEOGRAPHIC);
    assert_int_equal(sc->positions_placed, 1);
    assert_rel(sc->gauges[0].x_m, arc_m(180.5), 1e-12);
    assert_int_equal(sc->terms.rotation, SW_ROTATION_SPHERE);
    assert_int_equal(s.land_missing, 7);
    char *buf = NULL;
    size_t len = 0;
    FILE *f = open_memstream(&buf, &len);
    sw_report_plan(f, sc, &s, NULL);
    fclose(f);
    assert_non_null(strstr(buf, "7 cells by missing values"));
    free(buf);
    sw_setup_free(&s);
    del_sc(sc);

    /* a length on it, found with its line once the file is read */
    snprintf(text, sizeof text, "[run]\nduration = 5 min\n[seabed]\nfile = %s\nmissing = land\n"
             "[gauges]\nA = 10 km, 44.5 deg\n", bed);
    sc = parse_ok(text);
    assert_int_equal(sw_setup_build(sc, &s, &err), SW_ERR_PARSE);
    assert_non_null(strstr(err.msg, "g.scn:7: [gauges] A = 10 km, 44.5 deg: x: a length: give degrees on a "
                                    "geographic grid"));
    del_sc(sc);

    /* a gauge outside the file's grid, in degrees */
    snprintf(text, sizeof text, "[run]\nduration = 5 min\n[seabed]\nfile = %s\nmissing = land\n"
             "[gauges]\nA = 170 deg, 44.5 deg\n", bed);
    sc = parse_ok(text);
    assert_int_equal(sw_setup_build(sc, &s, &err), SW_ERR_RANGE);
    assert_non_null(strstr(err.msg, "g.scn:7: [gauges] A = 170 deg, 44.5 deg: outside the domain (accepted: longitude "
                                    "from 175 to 183 deg, latitude from 40 to 45 deg)"));
    del_sc(sc);

    /* a [grid] kind the file contradicts (sw_seabed_grid says so, naming the kind's line) */
    snprintf(text, sizeof text, "[run]\nduration = 5 min\n[grid]\nkind = projected\n[seabed]\nfile = %s\n"
             "missing = land\n", bed);
    sc = parse_ok(text);
    assert_int_not_equal(sw_setup_build(sc, &s, &err), SW_OK);
    assert_non_null(strstr(err.msg, "g.scn:4: [grid] kind = projected"));
    del_sc(sc);

    /* a file grid whose halo rows pass 89 deg: refused with the reason */
    write_geo_bed(bed, 0);
    int nc, vl;
    double lat[50];
    for (int j = 0; j < 50; j++)
        lat[j] = 84.05 + 0.1 * j;   /* rows up to 89 deg: the halo row beyond reaches 89.1 deg */
    NC_OK(nc_open(bed, NC_WRITE, &nc));
    NC_OK(nc_inq_varid(nc, "lat", &vl));
    NC_OK(nc_put_var_double(nc, vl, lat));
    NC_OK(nc_close(nc));
    snprintf(text, sizeof text, "[run]\nduration = 5 min\n[seabed]\nfile = %s\n", bed);
    sc = parse_ok(text);
    assert_int_equal(sw_setup_build(sc, &s, &err), SW_ERR_RANGE);
    assert_non_null(strstr(err.msg, "g.scn:4: [seabed] file: its rows and their halo rows span latitude 83.9 to 89.1 "
                                    "deg, beyond +-89 deg"));
    assert_non_null(strstr(err.msg, "cos(latitude) goes to 0"));
    del_sc(sc);
    remove(bed);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_grid_in_degrees),
        cmocka_unit_test(test_grid_refusals),
        cmocka_unit_test(test_positions_in_degrees),
        cmocka_unit_test(test_position_refusals),
        cmocka_unit_test(test_rotation_and_forcing),
        cmocka_unit_test(test_place_after_the_file),
        cmocka_unit_test(test_sweep_and_override),
        cmocka_unit_test(test_setup_time_step_row),
        cmocka_unit_test(test_setup_from_a_geographic_file),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
