/* test_scenario.c - the scenario parser: values into SI, defaults, every kind of error message,
 * nasty inputs, files and paths.
 *
 * External references used by the checks:
 *  - SI Brochure (BIPM, 9th edition, 2019): k = 1e3; Table 8: 1 min = 60 s, 1 h = 3600 s,
 *    1 d = 86 400 s. Expected SI values are written from these definitions.
 *  - Gregorian calendar leap-year rule (as in ISO 8601): a year is a leap year when divisible by 4,
 *    except centuries, except those divisible by 400 (2000 and 2020 leap; 1900 and 2021 not).
 *  - Levenshtein distance (V. I. Levenshtein, 1966): the edit distances quoted beside the
 *    suggestion checks are counted by hand from that definition.
 *  - docs/scenario.md: the defaults, ranges and message formats a user is promised.
 */
#include <math.h>
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "inputs/scenario.h"
#include "testutil.h"

/* A valid base: [run] on line 1, [grid] on line 3, [seabed] on line 7; appended text starts on line 9. */
#define BASE                                                                                                 \
    "[run]\nduration = 1 h\n"                                                                                \
    "[grid]\nnx = 10\nny = 20\ndx = 1 km\n"                                                                  \
    "[seabed]\ndeep = 100 m\n"

static sw_scenario *new_sc(void)
{
    sw_scenario *sc = calloc(1, sizeof *sc);
    assert_non_null(sc);
    return sc;
}

static void del_sc(sw_scenario *sc)
{
    sw_scenario_free(sc);
    free(sc);
}

/* Parses text that must be valid; the caller frees with del_sc. */
static sw_scenario *parse_ok(const char *text)
{
    sw_scenario *sc = new_sc();
    sw_error err = { 0 };
    sw_status st = sw_scenario_parse(text, "t.scn", NULL, sc, &err);
    if (st != SW_OK)
        fail_msg("refused (%s): %s\n--- text ---\n%s", sw_status_name(st), err.msg, text);
    return sc;
}

/* Parses text that must fail with `code` and a message containing want1 and want2 (may be NULL). */
static void parse_bad(const char *text, sw_status code, const char *want1, const char *want2)
{
    sw_scenario *sc = new_sc();
    sw_error err = { 0 };
    sw_status st = sw_scenario_parse(text, "t.scn", NULL, sc, &err);
    if (st == SW_OK)
        fail_msg("accepted, expected '%s'\n--- text ---\n%s", want1 ? want1 : "", text);
    if (st != code)
        fail_msg("status %s, expected %s: %s", sw_status_name(st), sw_status_name(code), err.msg);
    if (err.code != code)
        fail_msg("err.code %s differs from the returned status", sw_status_name(err.code));
    if ((want1 && !strstr(err.msg, want1)) || (want2 && !strstr(err.msg, want2)))
        fail_msg("message '%s' lacks '%s' / '%s'", err.msg, want1 ? want1 : "", want2 ? want2 : "");
    assert_null(sc->text);   /* sc owns nothing after a failure */
    assert_null(strchr(err.msg, '\n'));
    del_sc(sc);
}

/* ---- values -------------------------------------------------------------------------------- */

static const char FULL[] =
    "; every section and key\n"                 /*  1 */
    "[run]\n"                                   /*  2 */
    "title = Harbour test\n"                    /*  3 */
    "duration = 2 h\n"                          /*  4 */
    "layout = d\n"                              /*  5 */
    "dt = 1.5 s\n"                              /*  6 */
    "gauge_interval = 1 min\n"                  /*  7 */
    "snapshot_interval = 0.5 d\n"               /*  8 */
    "arrival_threshold = 2 m\n"                 /*  9 */
    "gravity = 9.8\n"                           /* 10 */
    "origin = 2020-02-29 12:30:45\n"            /* 11 */
    "[grid]\n"                                  /* 12 */
    "nx = 300\n"                                /* 13 */
    "ny = 200\n"                                /* 14 */
    "dx = 0.5 km\n"                             /* 15 */
    "dy = 250 m\n"                              /* 16 */
    "x0 = -10 km\n"                             /* 17 */
    "y0 = 5 km\n"                               /* 18 */
    "[edges]\n"                                 /* 19 */
    "west = open\n"                             /* 20 */
    "east = wall\n"                             /* 21 */
    "south = open\n"                            /* 22 */
    "north = wall\n"                            /* 23 */
    "[seabed]\n"                                /* 24 */
    "min_depth = 2 m\n"                         /* 25 */
    "deep = 4 km\n"                             /* 26 */
    "coast = east\n"                            /* 27 */
    "shoreline = 120 km\n"                      /* 28 */
    "coast_wiggle = 3 km\n"                     /* 29 */
    "coast_wavelength = 40 km\n"                /* 30 */
    "shelf_depth = 200 m\n"                     /* 31 */
    "shelf_width = 20 km\n"                     /* 32 */
    "slope_width = 15 km\n"                     /* 33 */
    "land_height = 25 m\n"                      /* 34 */
    "[bay Lonquessa Bay]\n"                          /* 35 */
    "x = 100 km\n"                              /* 36 */
    "y = 30 km\n"                               /* 37 */
    "radius_x = 8 km\n"                         /* 38 */
    "radius_y = 5 km\n"                         /* 39 */
    "depth = 20 m\n"                            /* 40 */
    "[island Pellquin Rock]\n"                      /* 41 */
    "x = 60 km\n"                               /* 42 */
    "y = 20 km\n"                               /* 43 */
    "radius = 2 km\n"                           /* 44 */
    "height = 30 m\n"                           /* 45 */
    "[shoal Trevolsk Ground]\n"                   /* 46 */
    "x = 70 km\n"                               /* 47 */
    "y = 15 km\n"                               /* 48 */
    "radius = 3 km\n"                           /* 49 */
    "crest = 5 m\n"                             /* 50 */
    "[source main]\n"                           /* 51 */
    "shape = pair\n"                            /* 52 */
    "x = 30 km\n"                               /* 53 */
    "y = 25 km\n"                               /* 54 */
    "amplitude = 2 m\n"                         /* 55 */
    "subsidence = 1.5 m\n"                      /* 56 */
    "length = 50 km\n"                          /* 57 */
    "width = 20 km\n"                           /* 58 */
    "angle = 30 deg\n"                          /* 59 */
    "separation = 40 km\n"                      /* 60 */
    "[source hump]\n"                           /* 61 */
    "shape = hump\n"                            /* 62 */
    "x = 10 km\n"                               /* 63 */
    "y = 10 km\n"                               /* 64 */
    "amplitude = -0.5 m\n"                      /* 65 */
    "radius = 5 km\n"                           /* 66 */
    "[source oval]\n"                           /* 67 */
    "shape = ellipse\n"                         /* 68 */
    "x = 20 km\n"                               /* 69 */
    "y = 20 km\n"                               /* 70 */
    "amplitude = 1 m\n"                         /* 71 */
    "length = 9 km\n"                           /* 72 */
    "width = 3 km\n"                            /* 73 */
    "angle = -45\n"                             /* 74 */
    "[source from file]\n"                      /* 75 */
    "shape = file\n"                            /* 76 */
    "file = data/eta0.nc\n"                     /* 77 */
    "variable = zeta\n"                         /* 78 */
    "[gauges]\n"                                /* 79 */
    "Port Vantrebel = 42 km, 18.5 km\n"            /* 80 */
    "Buoy 7 = 0.5km,12000\n";                   /* 81 */

static void test_full_scenario_in_si(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok(FULL);
    assert_string_equal(sc->path, "t.scn");
    assert_string_equal(sc->dir, ".");
    assert_string_equal(sc->text, FULL);
    /* [run]; SI Brochure: h = 3600 s, min = 60 s, d = 86400 s */
    assert_string_equal(sc->title, "Harbour test");
    assert_true(sc->duration_s == 7200.0);
    assert_string_equal(sc->layout, "D");
    assert_int_equal(sc->layout_line, 5);
    assert_true(sc->dt_s == 1.5);
    assert_int_equal(sc->dt_line, 6);
    assert_true(sc->courant_fraction == 0.9);   /* default, unused when dt is given */
    assert_true(sc->gauge_interval_s == 60.0);
    assert_true(sc->snapshot_interval_s == 43200.0);
    assert_true(sc->arrival_threshold_m == 2.0);
    assert_true(sc->gravity_ms2 == 9.8);
    assert_string_equal(sc->origin, "2020-02-29 12:30:45");   /* 2020 is a leap year */
    /* [grid]; k = 1e3 */
    assert_int_equal(sc->has_grid, 1);
    assert_int_equal(sc->grid.nx, 300);
    assert_int_equal(sc->grid.ny, 200);
    assert_true(sc->grid.dx_m == 500.0);
    assert_true(sc->grid.dy_m == 250.0);
    assert_true(sc->grid.x0_m == -10000.0);
    assert_true(sc->grid.y0_m == 5000.0);
    /* [edges] */
    assert_int_equal(sc->edges[SW_WEST], SW_EDGE_OPEN);
    assert_int_equal(sc->edges[SW_EAST], SW_EDGE_WALL);
    assert_int_equal(sc->edges[SW_SOUTH], SW_EDGE_OPEN);
    assert_int_equal(sc->edges[SW_NORTH], SW_EDGE_WALL);
    /* [seabed] */
    assert_true(sc->min_depth_m == 2.0);
    assert_string_equal(sc->bed_file, "");
    assert_int_equal(sc->bed_line, 24);
    assert_true(sc->deep_m == 4000.0);
    assert_int_equal(sc->coast, SW_COAST_EAST);
    assert_true(sc->shoreline_m == 120000.0);
    assert_true(sc->coast_wiggle_m == 3000.0);
    assert_true(sc->coast_wavelength_m == 40000.0);
    assert_true(sc->shelf_depth_m == 200.0);
    assert_true(sc->shelf_width_m == 20000.0);
    assert_true(sc->slope_width_m == 15000.0);
    assert_true(sc->land_height_m == 25.0);
    /* features, in file order */
    assert_int_equal(sc->n_features, 3);
    const sw_feature *f = sc->features;
    assert_int_equal(f[0].kind, SW_FEATURE_BAY);
    assert_string_equal(f[0].name, "Lonquessa Bay");
    assert_int_equal(f[0].line, 35);
    assert_true(f[0].x_m == 100000.0 && f[0].y_m == 30000.0);
    assert_true(f[0].radius_x_m == 8000.0 && f[0].radius_y_m == 5000.0);
    assert_true(f[0].depth_m == 20.0);
    assert_int_equal(f[1].kind, SW_FEATURE_ISLAND);
    assert_string_equal(f[1].name, "Pellquin Rock");
    assert_int_equal(f[1].line, 41);
    assert_true(f[1].x_m == 60000.0 && f[1].y_m == 20000.0);
    assert_true(f[1].radius_x_m == 2000.0 && f[1].radius_y_m == 2000.0);
    assert_true(f[1].height_m == 30.0);
    assert_int_equal(f[2].kind, SW_FEATURE_SHOAL);
    assert_string_equal(f[2].name, "Trevolsk Ground");
    assert_true(f[2].radius_x_m == 3000.0 && f[2].radius_y_m == 3000.0);
    assert_true(f[2].crest_m == 5.0);
    /* sources */
    assert_int_equal(sc->n_sources, 4);
    const sw_source_spec *s = sc->sources;
    assert_int_equal(s[0].shape, SW_SOURCE_PAIR);
    assert_string_equal(s[0].name, "main");
    assert_int_equal(s[0].line, 51);
    assert_true(s[0].x_m == 30000.0 && s[0].y_m == 25000.0);
    assert_true(s[0].amplitude_m == 2.0 && s[0].trough_m == 1.5);
    assert_true(s[0].length_m == 50000.0 && s[0].width_m == 20000.0);
    assert_true(s[0].angle_deg == 30.0 && s[0].separation_m == 40000.0);
    assert_int_equal(s[1].shape, SW_SOURCE_HUMP);
    assert_true(s[1].amplitude_m == -0.5 && s[1].radius_m == 5000.0);
    assert_int_equal(s[2].shape, SW_SOURCE_ELLIPSE);
    assert_true(s[2].length_m == 9000.0 && s[2].width_m == 3000.0 && s[2].angle_deg == -45.0);
    assert_int_equal(s[3].shape, SW_SOURCE_FILE);
    assert_string_equal(s[3].name, "from file");
    assert_string_equal(s[3].file, "data/eta0.nc");
    assert_string_equal(s[3].variable, "zeta");
    /* gauges */
    assert_int_equal(sc->n_gauges, 2);
    assert_string_equal(sc->gauges[0].name, "Port Vantrebel");
    assert_int_equal(sc->gauges[0].line, 80);
    assert_true(sc->gauges[0].x_m == 42000.0 && sc->gauges[0].y_m == 18500.0);
    assert_string_equal(sc->gauges[1].name, "Buoy 7");
    assert_true(sc->gauges[1].x_m == 500.0 && sc->gauges[1].y_m == 12000.0);
    del_sc(sc);
}

/* The defaults promised by docs/scenario.md. */
static void test_defaults(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok(BASE);
    assert_string_equal(sc->title, "untitled scenario");
    assert_true(sc->duration_s == 3600.0);
    assert_string_equal(sc->layout, "C");
    assert_int_equal(sc->precision, SW_DOUBLE);
    assert_true(sc->courant_fraction == 0.9);
    assert_true(sc->dt_s == 0.0);
    assert_int_equal(sc->layout_line, 1);    /* defaulted: the [run] header */
    assert_int_equal(sc->courant_line, 1);
    assert_true(sc->gauge_interval_s == 30.0);
    assert_true(sc->snapshot_interval_s == 0.0);
    assert_true(sc->arrival_threshold_m == 0.01);
    assert_true(sc->gravity_ms2 == 9.81);
    assert_string_equal(sc->origin, "2000-01-01 00:00:00");
    assert_int_equal(sc->has_grid, 1);
    assert_true(sc->grid.dy_m == sc->grid.dx_m && sc->grid.dx_m == 1000.0);
    assert_true(sc->grid.x0_m == 0.0 && sc->grid.y0_m == 0.0);
    for (int i = 0; i < 4; i++)
        assert_int_equal(sc->edges[i], SW_EDGE_WALL);
    assert_true(sc->min_depth_m == 1.0);
    assert_string_equal(sc->bed_file, "");
    assert_string_equal(sc->bed_variable, "depth");
    assert_int_equal(sc->bed_positive, SW_POSITIVE_UNSET);
    assert_int_equal(sc->bed_line, 7);
    assert_true(sc->deep_m == 100.0);
    assert_int_equal(sc->coast, SW_COAST_NONE);
    assert_true(sc->coast_wiggle_m == 0.0);
    assert_true(sc->coast_wavelength_m == 50000.0);
    assert_true(sc->shelf_depth_m == 100.0);   /* = deep */
    assert_true(sc->slope_width_m == 0.0);
    assert_true(sc->land_height_m == 10.0);
    assert_int_equal(sc->n_features, 0);
    assert_int_equal(sc->n_sources, 0);   /* no source: zero displacement is allowed */
    assert_int_equal(sc->n_gauges, 0);
    del_sc(sc);

    /* pair: subsidence defaults to amplitude; file: variable defaults to eta */
    sc = parse_ok(BASE "[source p]\nshape = pair\nx = 1 km\ny = 1 km\namplitude = 0.7\nlength = 9 km\n"
                       "width = 3 km\nangle = 0\nseparation = 5 km\n"
                       "[source f]\nshape = file\nfile = /abs/eta.nc\n");
    assert_true(sc->sources[0].trough_m == 0.7);
    assert_string_equal(sc->sources[1].variable, "eta");
    del_sc(sc);
}

static void test_edges_all(void **state)
{
    (void)state;
    /* a side named overrides `all`, whichever comes first */
    sw_scenario *sc = parse_ok(BASE "[edges]\nwest = wall\nall = open\nnorth = wall\n");
    assert_int_equal(sc->edges[SW_WEST], SW_EDGE_WALL);
    assert_int_equal(sc->edges[SW_EAST], SW_EDGE_OPEN);
    assert_int_equal(sc->edges[SW_SOUTH], SW_EDGE_OPEN);
    assert_int_equal(sc->edges[SW_NORTH], SW_EDGE_WALL);
    del_sc(sc);
    parse_bad(BASE "[edges]\nall = opne\n", SW_ERR_PARSE, "t.scn:10: [edges] all = opne: unknown value",
              "did you mean 'open'?");
}

static void test_seabed_file_without_grid(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok("[run]\nduration = 30 min\n[seabed]\nfile = bathy.nc\nvariable = elev\npositive = up\n"
                               "[gauges]\nFar Away = 1000 km, 1000 km\n");
    assert_int_equal(sc->has_grid, 0);
    assert_int_equal(sc->grid.nx, 0);
    assert_string_equal(sc->bed_file, "bathy.nc");
    assert_string_equal(sc->bed_variable, "elev");
    assert_int_equal(sc->bed_positive, SW_POSITIVE_UP);
    assert_int_equal(sc->bed_line, 4);
    assert_int_equal(sc->n_gauges, 1);   /* not checked against a grid that is not known yet */
    del_sc(sc);
    parse_bad("[run]\nduration = 30 min\n[seabed]\ndeep = 1 km\n", SW_ERR_PARSE, "missing section [grid]", NULL);
    parse_bad("[run]\nduration = 30 min\n[seabed]\nfile = b.nc\ndeep = 1 km\n", SW_ERR_PARSE,
              "t.scn:5: [seabed] deep: not used with 'file'", NULL);
    parse_bad(BASE "variable = d\n", SW_ERR_PARSE, "t.scn:9: [seabed] variable: not used without 'file'", NULL);
}

/* ---- error messages ------------------------------------------------------------------------ */

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

static void test_messages_name_file_line_key(void **state)
{
    (void)state;
    static const bad_case cases[] = {
        /* the format promised in docs/scenario.md */
        { "[run]\nduration = 1 h\n\ncourant_fraction = 1.9\n", SW_ERR_RANGE,
          "t.scn:4: [run] courant_fraction = 1.9: out of range (accepted: 0 < courant_fraction <= 1, a fraction of the layout's limit)",
          NULL },
        { "[run]\nlayout = C\n\n\n\nduraton = 1 h\n", SW_ERR_PARSE,
          "t.scn:6: [run] unknown key 'duraton' (did you mean 'duration'?)", NULL },
        { "[sorce main]\n", SW_ERR_PARSE, "t.scn:1: unknown section [sorce main] (did you mean 'source'?)", NULL },
        /* duplicates name both lines */
        { "[run]\nduration = 1 h\ntitle = a\nduration = 2 h\n", SW_ERR_PARSE,
          "t.scn:4: [run] duplicate key 'duration' (first on line 2, again on line 4)", NULL },
        { BASE "[island Pellquin Rock]\nx = 1\n[island Pellquin Rock]\n", SW_ERR_PARSE,
          "t.scn:11: duplicate section [island Pellquin Rock] (first on line 9)", NULL },
        { BASE "[run]\n", SW_ERR_PARSE, "t.scn:9: duplicate section [run] (first on line 1)", NULL },
        { BASE "[gauges]\nA = 1 km, 1 km\nB = 2 km, 2 km\nA = 3 km, 3 km\n", SW_ERR_PARSE,
          "t.scn:12: [gauges] duplicate gauge 'A' (first on line 10, again on line 12)", NULL },
        { BASE "[gauges]\nA = 1 km, 1 km\n[gauges]\n", SW_ERR_PARSE, "t.scn:11: duplicate section [gauges]", NULL },
        /* names */
        { BASE "[island]\n", SW_ERR_PARSE, "t.scn:9: section [island] needs a name", NULL },
        { BASE "[source   ]\n", SW_ERR_PARSE, "t.scn:9: section [source] needs a name", NULL },
        { BASE "[edges west]\n", SW_ERR_PARSE, "t.scn:9: section [edges] takes no name", NULL },
        { BASE "[]\n", SW_ERR_PARSE, "t.scn:9: empty section header", NULL },
        { BASE "[Run]\n", SW_ERR_PARSE, "t.scn:9: unknown section [Run] (did you mean 'run'?)", NULL },
        { BASE "[tide]\n", SW_ERR_PARSE, "t.scn:9: unknown section [tide] (accepted: run, grid", NULL },
        /* what drives the water after t = 0 */
        { BASE "[weather]\n", SW_ERR_PARSE, "t.scn:9: [weather] missing key 'file' (accepted: a NetCDF file", NULL },
        { BASE "[storm]\ntrack = a.txt\n[weather]\nfile = b.nc\n", SW_ERR_PARSE,
          "t.scn:11: [storm] (line 9) and [weather] (line 11) are both given (accepted: one of them)", NULL },
        { BASE "[wind]\ndrag_law = wu\n", SW_ERR_PARSE, "t.scn:9: [wind] without [storm] or [weather]", NULL },
        { BASE "[storm]\ntrack = a.txt\n[wind]\ndrag_law = smith\n", SW_ERR_PARSE,
          "t.scn:12: [wind] drag_law = smith: unknown value", "large-pond, wu, garratt" },
        { BASE "[storm]\ntrack = a.txt\nrmax_factor = 0\n", SW_ERR_RANGE,
          "t.scn:11: [storm] rmax_factor = 0: out of range (accepted: 0 < rmax_factor <= 10)", NULL },
        { "[run]\nduration = 1 h\nrotation = f-plane\nlatitude = 20\n[grid]\nnx = 10\nny = 20\ndx = 1 km\n[seabed]\n"
          "deep = 100 m\n[storm]\ntrack = a.txt\nhemisphere = south\n", SW_ERR_PARSE,
          "t.scn:13: [storm] hemisphere: not used with [run] rotation", NULL },
        { BASE "[edges]\nlevel_series = tide.txt\n", SW_ERR_PARSE,
          "t.scn:10: [edges] level_series: no edge is `level` (accepted: with at least one edge = level)", NULL },
        { BASE "[edges]\nwest = level\nlevel_variable = z\n", SW_ERR_PARSE,
          "t.scn:11: [edges] level_variable: not used without level_series", NULL },
        { BASE "[run] extra\n", SW_ERR_PARSE, "t.scn:9: unexpected ' extra' after the section header [run]", NULL },
        /* missing keys: at the header line */
        { "[run]\ntitle = x\n[grid]\nnx = 1\nny = 1\ndx = 1\n[seabed]\ndeep = 1\n", SW_ERR_PARSE,
          "t.scn:1: [run] missing key 'duration' (accepted: 0 < duration <= 30 d)", NULL },
        { "[run]\nduration = 1 h\n[grid]\nnx = 10\ndx = 1 km\n[seabed]\ndeep = 1 km\n", SW_ERR_PARSE,
          "t.scn:3: [grid] missing key 'ny'", NULL },
        { "[run]\nduration = 1 h\n[grid]\nnx = 10\nny = 10\n[seabed]\ndeep = 1 km\n", SW_ERR_PARSE,
          "t.scn:3: [grid] missing key 'dx'", NULL },
        { "[run]\nduration = 1 h\n[grid]\nnx = 10\nny = 10\ndx = 1\n[seabed]\nmin_depth = 2 m\n", SW_ERR_PARSE,
          "t.scn:7: [seabed] missing key 'deep'", NULL },
        { "[grid]\nnx = 10\nny = 10\ndx = 1\n[seabed]\ndeep = 1\n", SW_ERR_PARSE, "t.scn: missing section [run]",
          NULL },
        { "[run]\nduration = 1 h\n[grid]\nnx = 10\nny = 10\ndx = 1\n", SW_ERR_PARSE, "t.scn: missing section [seabed]",
          NULL },
        { BASE "coast = west\nshelf_width = 5 km\n", SW_ERR_PARSE,
          "t.scn:7: [seabed] missing key 'shoreline' (needed with coast = west)", NULL },
        { BASE "coast = north\nshoreline = 5 km\n", SW_ERR_PARSE,
          "t.scn:7: [seabed] missing key 'shelf_width' (needed with coast = north)", NULL },
        { BASE "[bay b]\nx = 1\ny = 1\nradius_x = 1\ndepth = 3\n", SW_ERR_PARSE, "t.scn:9: [bay b] missing key 'radius_y'",
          NULL },
        { BASE "[shoal s]\nx = 1\ny = 1\nradius = 1\n", SW_ERR_PARSE, "t.scn:9: [shoal s] missing key 'crest'", NULL },
        /* cross-key rules */
        { "[run]\nduration = 1 h\ndt = 2 s\ncourant_fraction = 0.5\n[grid]\nnx = 1\nny = 1\ndx = 1\n[seabed]\ndeep = 1\n",
          SW_ERR_PARSE, "t.scn:4: [run] dt (line 3) and courant_fraction (line 4) are both given", NULL },
        { BASE "shelf_depth = 200 m\n", SW_ERR_RANGE,
          "t.scn:9: [seabed] shelf_depth = 200 m: out of range (accepted: 0 < shelf_depth <= deep = 100 m)", NULL },
        { "[run]\nduration = 1 h\n[grid]\nnx = 100000\nny = 5000\ndx = 1 m\n[seabed]\ndeep = 1 km\n", SW_ERR_RANGE,
          "t.scn:5: [grid] nx * ny = 100000 * 5000 = 500000000 cells: out of range", NULL },
        /* gauges: nx = 10 cells of 1 km, ny = 20: the domain is [0, 10 km] x [0, 20 km] */
        { BASE "[gauges]\nIn = 10 km, 20 km\nOut = 10.5 km, 3 km\n", SW_ERR_RANGE,
          "t.scn:11: [gauges] Out = 10.5 km, 3 km: outside the domain (accepted: 0 m <= x <= 10 km, 0 m <= y <= 20 km)",
          NULL },
        { BASE "[gauges]\nSouth = 1 km, -1 m\n", SW_ERR_RANGE, "t.scn:10: [gauges] South", "outside the domain" },
        { BASE "[gauges]\nP = 1 km\n", SW_ERR_PARSE, "t.scn:10: [gauges] P = 1 km: expected two lengths 'x, y'", NULL },
        { BASE "[gauges]\nP = 1, 2, 3\n", SW_ERR_PARSE, "expected two lengths", NULL },
        { BASE "[gauges]\nP = 1 km, 2 kn\n", SW_ERR_PARSE, "t.scn:10: [gauges] P = 1 km, 2 kn: y: unknown unit 'kn'",
          NULL },
        { BASE "[gauges]\n= 1, 2\n", SW_ERR_PARSE, "t.scn:10: [gauges] a key name is missing", NULL },
        /* keys before any section */
        { "duration = 1 h\n[run]\n", SW_ERR_PARSE, "t.scn:1: key 'duration' comes before any [section] header", NULL },
        { "; comment\n\n= 5\n", SW_ERR_PARSE, "t.scn:3: a key name is missing before '='", NULL },
    };
    run_cases(cases, sizeof cases / sizeof cases[0]);
}

static void test_values_out_of_range_or_malformed(void **state)
{
    (void)state;
    static const bad_case cases[] = {
        { "[run]\nduration = 31 d\n", SW_ERR_RANGE, "t.scn:2: [run] duration = 31 d: out of range (accepted: 0 < "
          "duration <= 30 d)", NULL },
        { "[run]\nduration = -0\n", SW_ERR_RANGE, "[run] duration = -0: out of range", NULL },
        { "[run]\nduration = 0 s\n", SW_ERR_RANGE, "[run] duration = 0 s: out of range", NULL },
        { "[run]\nduration = 2 hours\n", SW_ERR_PARSE,
          "t.scn:2: [run] duration = 2 hours: unknown unit 'hours' (accepted: s, min, h, d)", NULL },
        { "[run]\nduration = h\n", SW_ERR_PARSE, "[run] duration = h: no number before 'h'", NULL },
        { "[run]\nduration =\n", SW_ERR_PARSE, "t.scn:2: [run] duration = : no value", NULL },
        { "[run]\nduration = nan\n", SW_ERR_PARSE, "'nan' is not a finite number", NULL },
        { "[run]\nduration = inf h\n", SW_ERR_PARSE, "not a finite number", NULL },
        { "[run]\nduration = 1e999\n", SW_ERR_PARSE, "too large", NULL },
        { "[run]\nduration = 1e300 d\n", SW_ERR_RANGE, "out of range", NULL },
        { "[run]\nlayout = F\n", SW_ERR_PARSE, "t.scn:2: [run] layout = F: unknown layout (accepted: A, B, C, D, E (any "
          "case))", NULL },
        { "[run]\nlayout = CC\n", SW_ERR_PARSE, "unknown layout", NULL },
        { "[run]\nprecision = half\n", SW_ERR_PARSE, "t.scn:2: [run] precision = half: unknown value (accepted: "
          "double, single)", NULL },
        { "[run]\ncourant_fraction = 0\n", SW_ERR_RANGE, "[run] courant_fraction = 0: out of range", NULL },
        { "[run]\ncourant_fraction = 0.5 s\n", SW_ERR_PARSE, "[run] courant_fraction = 0.5 s: unexpected 's' after the number", NULL },
        /* keys renamed so that one word means one thing everywhere: the old name is refused with the new */
        { "[run]\ncourant = 0.9\n", SW_ERR_PARSE, "t.scn:2: [run] unknown key 'courant' (renamed: write "
          "courant_fraction = F", "'Courant number' always means the absolute c" },
        { "[run]\ndt = 2 d\n", SW_ERR_RANGE, "[run] dt = 2 d: out of range (accepted: 0 < dt <= 1 d", NULL },
        { "[run]\ngauge_interval = 0\n", SW_ERR_RANGE, "gauge_interval = 0: out of range", NULL },
        { "[run]\nsnapshot_interval = -1 s\n", SW_ERR_RANGE, "snapshot_interval = -1 s: out of range", NULL },
        { "[run]\narrival_threshold = 101 m\n", SW_ERR_RANGE, "arrival_threshold = 101 m: out of range", NULL },
        { "[run]\ngravity = 0.5\n", SW_ERR_RANGE, "gravity = 0.5: out of range (accepted: 1 <= gravity <= 30", NULL },
        { "[run]\ntitle =\n", SW_ERR_PARSE, "[run] title = : empty", NULL },
        { "[grid]\nnx = 12.5\n", SW_ERR_PARSE, "t.scn:2: [grid] nx = 12.5: not a whole number", NULL },
        { "[grid]\nnx = 100 m\n", SW_ERR_PARSE, "[grid] nx = 100 m: unexpected 'm' after the number", NULL },
        { "[grid]\nny = 0\n", SW_ERR_RANGE, "[grid] ny = 0: out of range", NULL },
        { "[grid]\nnx = 100001\n", SW_ERR_RANGE, "[grid] nx = 100001: out of range", NULL },
        { "[grid]\nnx = -0\n", SW_ERR_RANGE, "[grid] nx = -0: out of range", NULL },
        { "[grid]\ndx = 12,5 km\n", SW_ERR_PARSE, "t.scn:2: [grid] dx = 12,5 km: unexpected ',5 km' after the number",
          "use '.'" },
        { "[grid]\ndx = 0.5 m\n", SW_ERR_RANGE, "[grid] dx = 0.5 m: out of range (accepted: 1 m <= dx <= 1000 km)", NULL },
        { "[grid]\ndy = 1001 km\n", SW_ERR_RANGE, "[grid] dy = 1001 km: out of range", NULL },
        { "[grid]\nx0 = 100001 km\n", SW_ERR_RANGE, "[grid] x0 = 100001 km: out of range", NULL },
        { "[edges]\nwest = closed\n", SW_ERR_PARSE, "[edges] west = closed: unknown value (accepted: wall, open, level, periodic)", NULL },
        { "[seabed]\ndeep = 13 km\n", SW_ERR_RANGE, "[seabed] deep = 13 km: out of range (accepted: 0 < deep <= 12 km)",
          NULL },
        { "[seabed]\nmin_depth = 0\n", SW_ERR_RANGE, "[seabed] min_depth = 0: out of range", NULL },
        { "[seabed]\ncoast = left\n", SW_ERR_PARSE, "[seabed] coast = left: unknown value", NULL },
        { "[seabed]\npositive = downward\n", SW_ERR_PARSE, "(did you mean 'down'?)", NULL },
        { "[seabed]\ncoast_wiggle = -1001 km\n", SW_ERR_RANGE, "coast_wiggle = -1001 km: out of range", NULL },
        { "[seabed]\ncoast_wavelength = 0\n", SW_ERR_RANGE, "coast_wavelength = 0: out of range", NULL },
        { "[seabed]\nslope_width = -1\n", SW_ERR_RANGE, "slope_width = -1: out of range", NULL },
        { "[seabed]\nland_height = 10 km\n", SW_ERR_RANGE, "land_height = 10 km: out of range", NULL },
        { "[island i]\nradius = 0\n", SW_ERR_RANGE, "t.scn:2: [island i] radius = 0: out of range", NULL },
        { "[source s]\namplitude = 101 m\n", SW_ERR_RANGE, "[source s] amplitude = 101 m: out of range", NULL },
        { "[source s]\nangle = 30 rad\n", SW_ERR_PARSE, "[source s] angle = 30 rad: unknown unit 'rad' (accepted: deg)",
          NULL },
        { "[source s]\nshape = blob\n", SW_ERR_PARSE, "[source s] shape = blob: unknown value (accepted: hump, ellipse, "
          "pair, file)", NULL },
    };
    run_cases(cases, sizeof cases / sizeof cases[0]);
    /* titles: any text up to the line limit (255 characters fit the field; a line holds 200) */
    char text[512];
    snprintf(text, sizeof text, "[run]\nduration = 1 h\ntitle = %0185d\n"
             "[grid]\nnx = 1\nny = 1\ndx = 1\n[seabed]\ndeep = 1\n", 7);
    sw_scenario *sc = parse_ok(text);
    assert_int_equal(strlen(sc->title), 185);
    del_sc(sc);
}

static void test_source_shapes(void **state)
{
    (void)state;
    static const bad_case cases[] = {
        { BASE "[source s]\nx = 1\ny = 1\n", SW_ERR_PARSE,
          "t.scn:9: [source s] missing key 'shape' (accepted: hump, ellipse, pair, file)", NULL },
        { BASE "[source s]\nshape = hump\nx = 1\ny = 1\namplitude = 1\n", SW_ERR_PARSE,
          "t.scn:9: [source s] missing key 'radius'", NULL },
        { BASE "[source s]\nshape = ellipse\nx = 1\ny = 1\namplitude = 1\nlength = 1\nwidth = 1\nangle = 0\n"
               "radius = 5 km\n",
          SW_ERR_PARSE, "t.scn:17: [source s] radius: not used by shape 'ellipse'", NULL },
        { BASE "[source s]\nshape = ellipse\nx = 1\ny = 1\namplitude = 1\nlength = 1\nwidth = 1\n", SW_ERR_PARSE,
          "t.scn:9: [source s] missing key 'angle'", NULL },
        { BASE "[source s]\nshape = pair\nx = 1\ny = 1\namplitude = 1\nlength = 1\nwidth = 1\nangle = 0\n",
          SW_ERR_PARSE, "[source s] missing key 'separation'", NULL },
        { BASE "[source s]\nshape = pair\nx = 1\ny = 1\namplitude = -1\nlength = 1\nwidth = 1\nangle = 0\n"
               "separation = 1\n",
          SW_ERR_RANGE, "t.scn:13: [source s] amplitude = -1 m: out of range", "for a pair" },
        { BASE "[source s]\nshape = hump\nx = 1\ny = 1\namplitude = 1\nradius = 1\nsubsidence = 1\n", SW_ERR_PARSE,
          "t.scn:15: [source s] subsidence: not used by shape 'hump'", NULL },
        { BASE "[source s]\nshape = pair\nx = 1\ny = 1\namplitude = 1\nlength = 1\nwidth = 1\nangle = 0\n"
               "separation = 1\ntrough = 1 m\n", SW_ERR_PARSE,
          "t.scn:18: [source s] unknown key 'trough' (renamed: write subsidence = D", "lowest elevation a gauge" },
        { BASE "[source s]\nshape = file\nvariable = eta\n", SW_ERR_PARSE, "t.scn:9: [source s] missing key 'file'",
          NULL },
        { BASE "[source s]\nshape = file\nfile = a.nc\nx = 1\n", SW_ERR_PARSE,
          "t.scn:12: [source s] x: not used by shape 'file'", NULL },
        /* a file source's scale and offsets, for sweeps; not on analytic shapes */
        { BASE "[source s]\nshape = file\nfile = a.nc\nscale = 0\n", SW_ERR_RANGE,
          "t.scn:12: [source s] scale = 0: out of range (accepted: 0 < |scale| <= 1000", NULL },
        { BASE "[source s]\nshape = file\nfile = a.nc\nscale = 2000\n", SW_ERR_RANGE,
          "t.scn:12: [source s] scale = 2000: out of range", NULL },
        { BASE "[source s]\nshape = file\nfile = a.nc\nx_offset = 3 deg\n", SW_ERR_PARSE,
          "t.scn:12: [source s] x_offset = 3 deg: degrees on a projected grid", NULL },
        { BASE "[source s]\nshape = hump\nx = 1\ny = 1\namplitude = 1\nradius = 1\nscale = 2\n", SW_ERR_PARSE,
          "t.scn:15: [source s] scale: not used by shape 'hump'", NULL },
    };
    run_cases(cases, sizeof cases / sizeof cases[0]);

    /* keys of a named section may come in any order around `shape` */
    sw_scenario *sc = parse_ok(BASE "[source late shape]\nradius = 2 km\nx = 1 km\ny = 2 km\namplitude = 0.3\n"
                                    "shape = hump\n");
    assert_int_equal(sc->sources[0].shape, SW_SOURCE_HUMP);
    assert_true(sc->sources[0].radius_m == 2000.0);
    del_sc(sc);

    /* a file source: scale 1 and offsets 0 by default; given, in SI; a sweep varies them as keys */
    sc = parse_ok(BASE "[source f]\nshape = file\nfile = a.nc\n[source g]\nshape = file\nfile = b.nc\n"
                       "scale = -0.5\nx_offset = 2 km\ny_offset = -300 m\n"
                       "[sweep]\nsource g.scale = 1, 2\nsource g.y_offset = 1 km, 2 km\n");
    assert_true(sc->sources[0].scale == 1.0 && sc->sources[0].x_offset_m == 0.0 && sc->sources[0].y_offset_m == 0.0);
    assert_true(sc->sources[1].scale == -0.5);
    assert_true(sc->sources[1].x_offset_m == 2000.0 && sc->sources[1].y_offset_m == -300.0);
    assert_int_equal(sc->sweep.n_params, 2);
    assert_string_equal(sc->sweep.param[1].target, "source g.y_offset");
    assert_true(sc->sweep.param[1].level[1] == 2000.0);
    del_sc(sc);
}

/* Suggestions: Levenshtein distance <= 2, or one name begins the other. */
static void test_suggestions(void **state)
{
    (void)state;
    /* "duratoin" -> "duration": two substitutions (distance 2) */
    parse_bad("[run]\nduratoin = 1 h\n", SW_ERR_PARSE, "unknown key 'duratoin' (did you mean 'duration'?)", NULL);
    /* "dur" is a prefix of "duration" (distance 5) */
    parse_bad("[run]\ndur = 1 h\n", SW_ERR_PARSE, "unknown key 'dur' (did you mean 'duration'?)", NULL);
    /* "shelfdepth" -> "shelf_depth": one insertion */
    parse_bad("[seabed]\nshelfdepth = 1\n", SW_ERR_PARSE, "(did you mean 'shelf_depth'?)", NULL);
    /* "downward" begins with "down" (distance 4) */
    parse_bad("[seabed]\npositive = downward\n", SW_ERR_PARSE, "(did you mean 'down'?)", NULL);
    /* "grd" -> "grid": one insertion */
    parse_bad("[grd]\n", SW_ERR_PARSE, "unknown section [grd] (did you mean 'grid'?)", NULL);
    /* "sorce" -> "source" with a name kept */
    parse_bad("[sorce main]\n", SW_ERR_PARSE, "(did you mean 'source'?)", NULL);
    /* "velocity" is at distance > 2 from every [run] key and begins none: no suggestion */
    sw_scenario *sc = new_sc();
    sw_error err = { 0 };
    assert_int_equal(sw_scenario_parse("[run]\nvelocity = 3\n", "t.scn", NULL, sc, &err), SW_ERR_PARSE);
    assert_non_null(strstr(err.msg, "t.scn:2: [run] unknown key 'velocity'"));
    assert_null(strstr(err.msg, "did you mean"));
    /* "xyzzy" -> nothing close among the sections */
    assert_int_equal(sw_scenario_parse("[xyzzy]\n", "t.scn", NULL, sc, &err), SW_ERR_PARSE);
    assert_null(strstr(err.msg, "did you mean"));
    del_sc(sc);
}

static void test_origin_calendar(void **state)
{
    (void)state;
    /* Gregorian rule: 2000 divisible by 400 is a leap year; 1900 (century) and 2021 are not */
    sw_scenario *sc = parse_ok("[run]\nduration = 1 h\norigin = 2000-02-29 23:59:59\n[grid]\nnx = 1\nny = 1\ndx = 1\n"
                  "[seabed]\ndeep = 1\n");
    assert_string_equal(sc->origin, "2000-02-29 23:59:59");
    del_sc(sc);
    static const bad_case cases[] = {
        { "[run]\norigin = 2021-02-29 00:00:00\n", SW_ERR_RANGE, "t.scn:2: [run] origin = 2021-02-29 00:00:00: no such "
          "date", NULL },
        { "[run]\norigin = 1900-02-29 00:00:00\n", SW_ERR_RANGE, "no such date", NULL },
        { "[run]\norigin = 2020-13-01 00:00:00\n", SW_ERR_RANGE, "no such date", NULL },
        { "[run]\norigin = 2020-04-31 00:00:00\n", SW_ERR_RANGE, "no such date", NULL },
        { "[run]\norigin = 2020-01-01 24:00:00\n", SW_ERR_RANGE, "no such date", NULL },
        { "[run]\norigin = 0000-01-01 00:00:00\n", SW_ERR_RANGE, "no such date", NULL },
        { "[run]\norigin = 2020-1-01 00:00:00\n", SW_ERR_PARSE, "not a date and time (accepted: YYYY-MM-DD HH:MM:SS", NULL },
        { "[run]\norigin = 2020-01-01T00:00:00\n", SW_ERR_PARSE, "not a date and time", NULL },
        { "[run]\norigin = 2020-01-01\n", SW_ERR_PARSE, "not a date and time", NULL },
    };
    run_cases(cases, sizeof cases / sizeof cases[0]);
}

/* Comments, indentation, CRLF line ends, a byte-order mark, ':' separators, blank lines. */
static void test_text_conventions(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok("\xEF\xBB\xBF; a comment\r\n"
                               "# another\r\n"
                               "  [run]   ; trailing comment\r\n"
                               "\ttitle = Bay; with a semicolon ; and a comment\r\n"
                               "    duration = 3 h\r\n"
                               "    courant_fraction = 0.5\r\n"
                               "\r\n"
                               "[grid]\r\nnx: 4\r\nny=4\r\ndx = 1km\r\n[seabed]\r\ndeep = 1 km");   /* no final newline */
    assert_string_equal(sc->title, "Bay; with a semicolon");
    assert_true(sc->duration_s == 10800.0);        /* indented keys are keys, not continuations */
    assert_true(sc->courant_fraction == 0.5);
    assert_int_equal(sc->courant_line, 6);
    assert_int_equal(sc->grid.nx, 4);
    assert_true(sc->deep_m == 1000.0);
    del_sc(sc);
}

/* Long lines, long names, limits on counts. */
static void test_lengths_and_limits(void **state)
{
    (void)state;
    /* a 63-character gauge name is accepted, 64 is not */
    char text[8192], name[80];
    memset(name, 'g', 63);
    name[63] = '\0';
    snprintf(text, sizeof text, BASE "[gauges]\n%s = 1 km, 1 km\n", name);
    sw_scenario *sc = parse_ok(text);
    assert_string_equal(sc->gauges[0].name, name);
    del_sc(sc);
    snprintf(text, sizeof text, BASE "[gauges]\n%sg = 1 km, 1 km\n", name);
    parse_bad(text, SW_ERR_RANGE, "t.scn:10: [gauges] gauge name", "(accepted: at most 63)");
    /* the same for section names */
    snprintf(text, sizeof text, BASE "[island %s]\nx = 1\ny = 1\nradius = 1\nheight = 1\n", name);
    sc = parse_ok(text);
    assert_string_equal(sc->features[0].name, name);
    del_sc(sc);
    snprintf(text, sizeof text, BASE "[island %sg]\n", name);
    parse_bad(text, SW_ERR_RANGE, "t.scn:9: [island ...]: the name has 64 characters", NULL);

    /* a line of 200 characters is read; 201 is refused */
    char line[256];
    memset(line, 'x', sizeof line);
    snprintf(text, sizeof text, BASE "[gauges]\n%.*s = 1 km, 1 km\n", 50, line);   /* short line: fine */
    del_sc(parse_ok(text));
    snprintf(text, sizeof text, BASE "[run]\n; %.*s\n", 198, line);   /* a 200-character comment */
    parse_bad(text, SW_ERR_PARSE, "t.scn:9: duplicate section [run]", NULL);   /* reached line 9, read line 10 */
    snprintf(text, sizeof text, BASE "[source f]\nshape = file\nfile = %.*s\n", 193, line);   /* 200 characters */
    sc = parse_ok(text);
    assert_int_equal(strlen(sc->sources[0].file), 193);
    del_sc(sc);
    snprintf(text, sizeof text, BASE "file=%.*s\n", 195, line);   /* 200, no blank to spare */
    parse_bad(text, SW_ERR_PARSE, "t.scn:9: the line has 200 characters with no blank around '='", NULL);
    snprintf(text, sizeof text, BASE "; %.*s\n", 199, line);
    parse_bad(text, SW_ERR_PARSE, "t.scn:9: the line has 201 characters (accepted: at most 200)", NULL);

    /* 256 gauges fit, the 257th does not */
    size_t len = (size_t)snprintf(text, sizeof text, "%s", BASE "[gauges]\n");
    char *big = malloc(64 * 1024);
    assert_non_null(big);
    memcpy(big, text, len + 1);
    for (int i = 0; i < SW_MAX_GAUGES; i++)
        len += (size_t)sprintf(big + len, "G%d = %d m, 5 km\n", i, i);
    sc = parse_ok(big);
    assert_int_equal(sc->n_gauges, SW_MAX_GAUGES);
    assert_true(sc->gauges[255].x_m == 255.0);
    del_sc(sc);
    sprintf(big + len, "One more = 1 km, 1 km\n");
    parse_bad(big, SW_ERR_RANGE, "too many gauges", "(accepted: at most 256)");

    /* 64 features fit, the 65th does not */
    len = (size_t)sprintf(big, "%s", BASE);
    for (int i = 0; i < SW_MAX_FEATURES; i++)
        len += (size_t)sprintf(big + len, "[shoal s%d]\nx = 1\ny = 1\nradius = 1\ncrest = 1\n", i);
    sc = parse_ok(big);
    assert_int_equal(sc->n_features, SW_MAX_FEATURES);
    del_sc(sc);
    sprintf(big + len, "[bay extra]\n");
    parse_bad(big, SW_ERR_RANGE, "too many features at [bay extra]", NULL);
    /* 33 sources */
    len = (size_t)sprintf(big, "%s", BASE);
    for (int i = 0; i <= SW_MAX_SOURCES; i++)
        len += (size_t)sprintf(big + len, "[source s%d]\nshape = file\nfile = a.nc\n", i);
    parse_bad(big, SW_ERR_RANGE, "too many sources at [source s32]", NULL);
    free(big);
}

/* Inputs that must be refused cleanly, never crash (run under ASan/UBSan). */
static void test_nasty_inputs(void **state)
{
    (void)state;
    parse_bad("", SW_ERR_PARSE, "t.scn: missing section [run]", NULL);
    parse_bad("\n\n   \n", SW_ERR_PARSE, "missing section [run]", NULL);
    parse_bad("=", SW_ERR_PARSE, "t.scn:1: a key name is missing before '='", NULL);
    parse_bad("[", SW_ERR_PARSE, "t.scn:1: missing ']' at the end of the section header '['", NULL);
    parse_bad("[run\nduration = 1 h\n", SW_ERR_PARSE, "t.scn:1: missing ']'", NULL);
    parse_bad(BASE "just some words\n", SW_ERR_PARSE, "t.scn:9: cannot read 'just some words' (accepted: key = value",
              NULL);
    /* a syntax error before a bad value is the one reported */
    parse_bad("[run]\nnonsense\nduration = -1\n", SW_ERR_PARSE, "t.scn:2: cannot read 'nonsense'", NULL);
    parse_bad("[run]\nduration = 1 h ; [grid]\n]\n", SW_ERR_PARSE, "t.scn:3: cannot read ']'", NULL);
    parse_bad("[run]\nduration = 99999999999999999999999999999999999 d\n", SW_ERR_RANGE, "out of range", NULL);
    parse_bad("[run]\nduration = 1e999999\n", SW_ERR_PARSE, "too large", NULL);
    parse_bad("[run]\nduration = -inf\n", SW_ERR_PARSE, "not a finite number", NULL);
    parse_bad("[run]\nduration = km\n", SW_ERR_PARSE, "no number before 'km'", NULL);
    parse_bad("[run]\nduration = \"1 h\"\n", SW_ERR_PARSE, "'\"1 h\"' is not a number", NULL);
    parse_bad("[run]\nduration = 1 h\ntitle = a\x01 b\n", SW_ERR_PARSE, "t.scn:3: control character 0x01", NULL);
    parse_bad("[run]\r\rduration = 1 h\n", SW_ERR_PARSE, "t.scn:1: control character 0x0d", NULL);

    /* a 10000-character line */
    char *text = malloc(10100);
    assert_non_null(text);
    strcpy(text, "[run]\ntitle = ");
    size_t n = strlen(text);
    memset(text + n, 'y', 10000);
    strcpy(text + n + 10000, "\nduration = 1 h\n");
    parse_bad(text, SW_ERR_PARSE, "t.scn:2: the line has 10008 characters (accepted: at most 200)", NULL);

    /* pseudo-random bytes (a fixed linear congruential sequence, so the test repeats) */
    unsigned seed = 12345u;
    for (int round = 0; round < 50; round++) {
        for (size_t i = 0; i < 10000; i++) {
            seed = seed * 1103515245u + 12345u;
            unsigned char c = (unsigned char)(seed >> 16);
            text[i] = (char)(c ? c : '\n');
        }
        text[10000] = '\0';
        sw_scenario *sc = new_sc();
        sw_error err = { 0 };
        assert_int_not_equal(sw_scenario_parse(text, "noise", NULL, sc, &err), SW_OK);
        assert_int_equal(strncmp(err.msg, "noise", 5), 0);
        del_sc(sc);
    }
    /* printable noise made of the parser's own characters */
    static const char alphabet[] = "[]=:;# \nabcdefgilmnorstuxy0123456789.,-+ekm";
    for (int round = 0; round < 200; round++) {
        for (size_t i = 0; i < 400; i++) {
            seed = seed * 1103515245u + 12345u;
            text[i] = alphabet[(seed >> 16) % (sizeof alphabet - 1)];
        }
        text[400] = '\0';
        sw_scenario *sc = new_sc();
        sw_error err = { 0 };
        if (sw_scenario_parse(text, "noise", NULL, sc, &err) != SW_OK)
            assert_true(err.msg[0] != '\0');
        del_sc(sc);
    }
    free(text);

    /* NULL arguments */
    sw_error err = { 0 };
    sw_scenario *sc = new_sc();
    assert_int_equal(sw_scenario_parse(NULL, "x", NULL, sc, &err), SW_ERR_USAGE);
    assert_int_equal(sw_scenario_parse("[run]", "x", NULL, NULL, &err), SW_ERR_USAGE);
    assert_int_equal(sw_scenario_load(NULL, sc, NULL), SW_ERR_USAGE);
    /* err may be NULL */
    assert_int_equal(sw_scenario_parse("[run]\nduration = 99 d\n", NULL, NULL, sc, NULL), SW_ERR_RANGE);
    del_sc(sc);
}

/* ---- files and paths ----------------------------------------------------------------------- */

static void test_load_file_and_resolve(void **state)
{
    (void)state;
    char path[512];
    tu_tmp_path(path, sizeof path, "test_scenario_bay.scn");
    assert_int_equal(tu_write_file(path, FULL), 0);
    sw_scenario *sc = new_sc();
    sw_error err = { 0 };
    assert_int_equal(sw_scenario_load(path, sc, &err), SW_OK);
    assert_string_equal(sc->path, path);
    assert_string_equal(sc->text, FULL);
    assert_true(sc->duration_s == 7200.0);
    /* dir is the folder of the path */
    char want_dir[512];
    snprintf(want_dir, sizeof want_dir, "%.*s", (int)(strrchr(path, '/') - path), path);
    assert_string_equal(sc->dir, want_dir);

    char out[SW_PATH_MAX];
    assert_int_equal(sw_scenario_resolve(sc, "data/eta0.nc", out, sizeof out, &err), SW_OK);
    char want[1100];
    snprintf(want, sizeof want, "%s/data/eta0.nc", want_dir);
    assert_string_equal(out, want);
    assert_int_equal(sw_scenario_resolve(sc, "/abs/x.nc", out, sizeof out, &err), SW_OK);
    assert_string_equal(out, "/abs/x.nc");
    char tiny[8];
    assert_int_equal(sw_scenario_resolve(sc, "data/eta0.nc", tiny, sizeof tiny, &err), SW_ERR_RANGE);
    assert_non_null(strstr(err.msg, "data/eta0.nc"));
    sw_scenario_free(sc);
    sw_scenario_free(sc);   /* safe twice */
    sw_scenario_free(NULL);

    /* an error in a file names the path and the line */
    assert_int_equal(tu_write_file(path, "[run]\nduration = 1 h\n\ncourant_fraction = 1.9\n"), 0);
    assert_int_equal(sw_scenario_load(path, sc, &err), SW_ERR_RANGE);
    char want_msg[600];
    snprintf(want_msg, sizeof want_msg, "%s:4: [run] courant_fraction = 1.9: out of range", path);
    assert_non_null(strstr(err.msg, want_msg));
    assert_null(sc->text);

    /* a NUL byte in a file */
    FILE *f = fopen(path, "wb");
    assert_non_null(f);
    fwrite("[run]\nduration = 1 h\n\0\n", 1, 23, f);
    fclose(f);
    assert_int_equal(sw_scenario_load(path, sc, &err), SW_ERR_PARSE);
    snprintf(want_msg, sizeof want_msg, "%s:3: contains a NUL byte", path);
    assert_non_null(strstr(err.msg, want_msg));
    remove(path);

    /* a missing file */
    tu_tmp_path(path, sizeof path, "test_scenario_no_such_file.scn");
    remove(path);
    assert_int_equal(sw_scenario_load(path, sc, &err), SW_ERR_IO);
    assert_int_equal(err.code, SW_ERR_IO);
    assert_non_null(strstr(err.msg, path));
    assert_null(sc->text);

    /* a folder is not a scenario */
    tu_tmp_path(path, sizeof path, "");
    assert_int_equal(sw_scenario_load(path, sc, &err), SW_ERR_IO);
    del_sc(sc);
}

/* [storm], [wind] and a level series: the values, the defaults (common practice, docs/storm-surge.md) and
 * the surface term they switch on. */
static void test_forcing_keys(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok(BASE "[edges]\nwest = level\nlevel_series = tide.txt\n[storm]\ntrack = a.txt\n"
                               "inflow_angle = 25\nshift_across = 30 km\n[wind]\ndrag_law = garratt\ndrag_cap = 2.5e-3\n");
    const sw_forcing_spec *f = &sc->forcing;
    assert_int_equal(f->storm, 1);
    assert_int_equal(f->weather, 0);
    assert_string_equal(f->track, "a.txt");
    assert_string_equal(f->level_file, "tide.txt");
    assert_true(f->inflow_deg == 25);
    assert_true(f->shift_across_m == 30e3);
    assert_int_equal(f->drag_law, 2);
    assert_true(f->drag_cap == 2.5e-3);
    assert_true(f->reduction == 0.8);          /* defaults */
    assert_true(f->air_density_kgm3 == 1.15);
    assert_true(f->water_density_kgm3 == 1025);
    assert_true(f->ambient_hpa == 1013);
    assert_true(f->update_s == 600);
    assert_int_equal(sc->terms.surface, 1);
    del_sc(sc);
    sc = parse_ok(BASE);
    assert_int_equal(sc->forcing.storm + sc->forcing.weather, 0);
    assert_int_equal(sc->terms.surface, 0);
    del_sc(sc);
}

static void test_dir_of_paths(void **state)
{
    (void)state;
    sw_scenario *sc = new_sc();
    sw_error err = { 0 };
    /* parse: dir as given, "." without one */
    assert_int_equal(sw_scenario_parse(BASE, NULL, "cases/bay", sc, &err), SW_OK);
    assert_string_equal(sc->path, "<string>");
    assert_string_equal(sc->dir, "cases/bay");
    char out[64];
    assert_int_equal(sw_scenario_resolve(sc, "b.nc", out, sizeof out, &err), SW_OK);
    assert_string_equal(out, "cases/bay/b.nc");
    sw_scenario_free(sc);
    assert_int_equal(sw_scenario_parse(BASE, "<demo>", NULL, sc, &err), SW_OK);
    assert_string_equal(sc->path, "<demo>");
    assert_string_equal(sc->dir, ".");
    assert_int_equal(sw_scenario_resolve(sc, "b.nc", out, sizeof out, &err), SW_OK);
    assert_string_equal(out, "./b.nc");
    sw_scenario_free(sc);

    /* load: the folder of the path (the files need not exist for the folder to be found) */
    char path[512];
    tu_tmp_path(path, sizeof path, "test_scenario_dir.scn");
    assert_int_equal(tu_write_file(path, BASE), 0);
    /* a relative path with no folder */
    char cwd_name[] = "test_scenario_cwd.scn";
    if (tu_write_file(cwd_name, BASE) == 0) {
        assert_int_equal(sw_scenario_load(cwd_name, sc, &err), SW_OK);
        assert_string_equal(sc->dir, ".");
        sw_scenario_free(sc);
        remove(cwd_name);
    }
    /* a doubled slash before the file name */
    char doubled[600];
    const char *slash = strrchr(path, '/');
    snprintf(doubled, sizeof doubled, "%.*s//%s", (int)(slash - path), path, slash + 1);
    assert_int_equal(sw_scenario_load(doubled, sc, &err), SW_OK);
    assert_int_equal(strlen(sc->dir), (size_t)(slash - path));
    sw_scenario_free(sc);
    remove(path);
    del_sc(sc);
}

/* [run] precision picks the state's precision; the default is double (above). */
static void test_precision_key(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok("[run]\nduration = 1 h\nprecision = single\n[grid]\nnx = 10\nny = 20\ndx = 1 km\n"
                               "[seabed]\ndeep = 100 m\n");
    assert_int_equal(sc->precision, SW_SINGLE);
    del_sc(sc);
    sc = parse_ok("[run]\nduration = 1 h\nprecision = double\n[grid]\nnx = 10\nny = 20\ndx = 1 km\n"
                  "[seabed]\ndeep = 100 m\n");
    assert_int_equal(sc->precision, SW_DOUBLE);
    del_sc(sc);
}

/* Rotation and friction keys: values in SI, f0 and beta from the latitude (f = 2 Omega sin(phi),
 * beta = 2 Omega cos(phi) / R with Omega = 7.2921159e-5 s-1 and R = 6371 km, common practice [memory;
 * docs/references.md]: at 45 deg f = 1.03126e-4 s-1, beta = 1.61868e-11 m-1 s-1). */
#define TERMS_BASE "[grid]\nnx = 10\nny = 20\ndx = 1 km\n[seabed]\ndeep = 100 m\n[run]\nduration = 1 h\n"
static void test_terms_keys(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok(TERMS_BASE "rotation = f-plane\ncoriolis = 1e-4 s-1\nfriction = linear\n"
                                          "friction_rate = 2 mm/s\n");
    assert_int_equal(sc->terms.rotation, SW_ROTATION_F_PLANE);
    assert_true(fabs(sc->terms.f0_s - 1e-4) < 1e-18);
    assert_int_equal(sc->terms.friction, SW_FRICTION_LINEAR);
    assert_true(fabs(sc->terms.friction_rate_ms - 2e-3) < 1e-15);
    assert_int_equal(sc->rotation_line, 9);
    del_sc(sc);
    sc = parse_ok(TERMS_BASE "rotation = beta-plane\nlatitude = 45 deg\nreference_y = 10 km\nfriction = manning\n"
                             "manning = 0.025\n");
    print_message("45 deg: f = %.6e s-1, beta = %.6e m-1 s-1\n", sc->terms.f0_s, sc->terms.beta_ms);
    assert_true(fabs(sc->terms.f0_s / 1.03126e-4 - 1) < 1e-5);
    assert_true(fabs(sc->terms.beta_ms / 1.61868e-11 - 1) < 1e-5);
    assert_true(fabs(sc->terms.y_ref_m - 1e4) < 1e-9);
    assert_int_equal(sc->terms.friction, SW_FRICTION_MANNING);
    del_sc(sc);
    sc = parse_ok(TERMS_BASE "rotation = beta-plane\ncoriolis = -5e-5 /s\nbeta = 2e-11\nreference_y = 0\n"
                             "friction = quadratic\ndrag = 0.0025\n");
    assert_true(sc->terms.f0_s == -5e-5 && sc->terms.beta_ms == 2e-11 && sc->terms.drag == 0.0025);
    del_sc(sc);
    sc = parse_ok(TERMS_BASE "[edges]\nwest = periodic\neast = periodic\n");
    assert_int_equal(sc->edges[SW_WEST], SW_EDGE_PERIODIC);
    assert_int_equal(sc->terms.rotation, SW_ROTATION_NONE);
    assert_int_equal(sc->terms.friction, SW_FRICTION_NONE);
    del_sc(sc);
    sc = parse_ok(TERMS_BASE "[edges]\nall = periodic\n");
    assert_int_equal(sc->edges[SW_NORTH], SW_EDGE_PERIODIC);
    del_sc(sc);

    /* bad input: one line with file, line, key and the accepted values */
    static const bad_case cases[] = {
        { TERMS_BASE "coriolis = 1e-4\n", SW_ERR_PARSE, "t.scn:9: [run] coriolis: not used without rotation "
          "(accepted: rotation = f-plane or beta-plane with it)", NULL },
        { TERMS_BASE "rotation = f-plane\n", SW_ERR_PARSE, "t.scn:9: [run] rotation = f-plane needs coriolis (s-1) "
          "or latitude (deg)", NULL },
        { TERMS_BASE "rotation = f-plane\ncoriolis = 1e-4\nlatitude = 40 deg\n", SW_ERR_PARSE,
          "t.scn:11: [run] coriolis (line 10) and latitude (line 11) are both given", NULL },
        { TERMS_BASE "rotation = f-plane\ncoriolis = 2e-3\n", SW_ERR_RANGE, "t.scn:10: [run] coriolis = 2e-3: out of "
          "range (accepted: -1e-3 <= coriolis <= 1e-3 s-1", NULL },
        { TERMS_BASE "rotation = f-plane\ncoriolis = 1e-4 Hz\n", SW_ERR_PARSE, "unknown unit 'Hz' (accepted: s-1, /s, "
          "h-1, /h)", NULL },
        { TERMS_BASE "rotation = f-plane\nlatitude = 90 deg\n", SW_ERR_RANGE, "latitude = 90 deg: out of range", NULL },
        { TERMS_BASE "rotation = f-plane\ncoriolis = 1e-4\nbeta = 1e-11\n", SW_ERR_PARSE,
          "t.scn:11: [run] beta: not used with rotation = f-plane", NULL },
        { TERMS_BASE "rotation = beta-plane\nlatitude = 30 deg\n", SW_ERR_PARSE,
          "t.scn:9: [run] rotation = beta-plane needs reference_y", NULL },
        { TERMS_BASE "rotation = beta-plane\ncoriolis = 1e-4\nreference_y = 0\n", SW_ERR_PARSE,
          "t.scn:9: [run] rotation = beta-plane needs beta (m-1 s-1), or latitude", NULL },
        { TERMS_BASE "rotation = spherical\n", SW_ERR_PARSE, "[run] rotation = spherical: unknown value (accepted: "
          "none, f-plane, beta-plane on a projected grid; sphere", NULL },
        { TERMS_BASE "drag = 0.0025\n", SW_ERR_PARSE, "t.scn:9: [run] drag: not used without friction (accepted: "
          "friction = quadratic with it)", NULL },
        { TERMS_BASE "friction = linear\ndrag = 0.0025\n", SW_ERR_PARSE, "t.scn:10: [run] drag: not used with "
          "friction = linear (accepted: friction = quadratic with it)", NULL },
        { TERMS_BASE "friction = quadratic\n", SW_ERR_PARSE, "t.scn:9: [run] friction = quadratic needs drag "
          "(dimensionless)", NULL },
        { TERMS_BASE "friction = manning\nmanning = 0\n", SW_ERR_RANGE, "[run] manning = 0: out of range (accepted: "
          "0 < manning <= 0.2", NULL },
        { TERMS_BASE "friction = linear\nfriction_rate = 2 m\n", SW_ERR_PARSE, "unknown unit 'm' (accepted: m/s, "
          "cm/s, mm/s)", NULL },
        { TERMS_BASE "friction = linear\nfriction_rate = -1 mm/s\n", SW_ERR_RANGE, "friction_rate = -1 mm/s: out "
          "of range (accepted: 0 < friction_rate <= 0.1 m/s", NULL },
        { TERMS_BASE "friction = turbulent\n", SW_ERR_PARSE, "unknown value (accepted: none, linear, quadratic, "
          "manning)", NULL },
        { TERMS_BASE "[edges]\nwest = periodic\n", SW_ERR_PARSE, "t.scn:10: [edges] west = periodic needs east = "
          "periodic too (a periodic edge joins the opposite one; east is wall)", NULL },
        { TERMS_BASE "[edges]\nall = periodic\nnorth = open\n", SW_ERR_PARSE, "t.scn:10: [edges] south = periodic "
          "needs north = periodic too", NULL },
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        print_message("case %zu\n", i);
        parse_bad(cases[i].text, cases[i].code, cases[i].want1, cases[i].want2);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_terms_keys),
        cmocka_unit_test(test_precision_key),
        cmocka_unit_test(test_full_scenario_in_si),
        cmocka_unit_test(test_defaults),
        cmocka_unit_test(test_edges_all),
        cmocka_unit_test(test_seabed_file_without_grid),
        cmocka_unit_test(test_messages_name_file_line_key),
        cmocka_unit_test(test_values_out_of_range_or_malformed),
        cmocka_unit_test(test_source_shapes),
        cmocka_unit_test(test_suggestions),
        cmocka_unit_test(test_origin_calendar),
        cmocka_unit_test(test_text_conventions),
        cmocka_unit_test(test_lengths_and_limits),
        cmocka_unit_test(test_nasty_inputs),
        cmocka_unit_test(test_load_file_and_resolve),
        cmocka_unit_test(test_forcing_keys),
        cmocka_unit_test(test_dir_of_paths),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
