/* test_sweep.c - sensitivity sweeps: the [sweep] parser and its messages, scenario overrides, the
 * three designs, the statistics, member files, and what the physics says about members.
 *
 * External references used by the checks:
 *  - Linearity of the linear shallow-water equations [derived]: eta, u, v scale with the initial
 *    displacement, so doubling every source amplitude doubles every gauge's elevation; doubling is
 *    exact in binary floating point, so the check is tight.
 *  - Phase speed c = sqrt(g h): Lamb (1932) Hydrodynamics, ch. VIII [memory]. Scaling the depth by s
 *    scales travel times by 1/sqrt(s). For the discrete scheme it is exact [derived]: with the
 *    Courant fraction fixed, dt scales by 1/sqrt(s), and with u' = u / sqrt(s) every forward-backward
 *    step of the scaled problem is the step of the original one, so arrival (interpolated between
 *    steps) scales by exactly dt'/dt, up to round-off.
 *  - Latin hypercube sampling: McKay, Beckman & Conover (1979), Technometrics 21(2), 239-245
 *    [memory]: each parameter's range is cut into M equal strata and each stratum holds exactly one
 *    of the M members.
 *  - Percentiles: Hyndman & Fan (1996), The American Statistician 50(4), definition 7 (linear
 *    interpolation between order statistics, numpy's default) [memory]; values worked by hand.
 *  - Spearman (1904) rank correlation [memory]: Pearson's correlation of the ranks, ties given their
 *    mean rank; the tied example is worked by hand from that definition.
 *  - docs/sweep.md and docs/scenario.md: message formats "FILE:LINE: [sweep] ..." a user is promised.
 */
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "studies/ncsweep.h"
#include "inputs/scenario.h"
#include "studies/sweep.h"
#include "testutil.h"

/* A valid scenario: [sweep] text is appended at line 29. */
#define BASE                                                                                                 \
    "[run]\n"                          /*  1 */                                                              \
    "duration = 10 min\n"              /*  2 */                                                              \
    "dt = 2 s\n"                       /*  3 */                                                              \
    "[grid]\n"                         /*  4 */                                                              \
    "nx = 40\n"                        /*  5 */                                                              \
    "ny = 30\n"                        /*  6 */                                                              \
    "dx = 1 km\n"                      /*  7 */                                                              \
    "[seabed]\n"                       /*  8 */                                                              \
    "deep = 100 m\n"                   /*  9 */                                                              \
    "[bay Lonquessa Bay]\n"                 /* 10 */                                                              \
    "x = 30 km\n"                      /* 11 */                                                              \
    "y = 15 km\n"                      /* 12 */                                                              \
    "radius_x = 4 km\n"                /* 13 */                                                              \
    "radius_y = 3 km\n"                /* 14 */                                                              \
    "depth = 20 m\n"                   /* 15 */                                                              \
    "[source main]\n"                  /* 16 */                                                              \
    "shape = hump\n"                   /* 17 */                                                              \
    "x = 10 km\n"                      /* 18 */                                                              \
    "y = 15 km\n"                      /* 19 */                                                              \
    "amplitude = 1 m\n"                /* 20 */                                                              \
    "radius = 2 km\n"                  /* 21 */                                                              \
    "[source pair]\n"                  /* 22 */                                                              \
    "shape = pair\n"                   /* 23 */                                                              \
    "x = 20 km\n"                      /* 24 */                                                              \
    "y = 10 km\n"                      /* 25 */                                                              \
    "amplitude = 0.5 m\n"              /* 26 */                                                              \
    "length = 5 km\n"                  /* 27 */                                                              \
    "width = 2 km\n"                   /* 28 */                                                              \
    "angle = 0\n"                      /* 29 */                                                              \
    "separation = 4 km\n"              /* 30 */                                                              \
    "[gauges]\n"                       /* 31 */                                                              \
    "Harbour = 35 km, 15 km\n"         /* 32 */                                                              \
    "[sweep]\n"                        /* 33 */
/* the first line after BASE is line 34 */

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

static sw_scenario *parse_ok(const char *text)
{
    sw_scenario *sc = new_sc();
    sw_error err = { 0 };
    if (sw_scenario_parse(text, "t.scn", NULL, sc, &err) != SW_OK)
        fail_msg("refused: %s\n--- text ---\n%s", err.msg, text);
    return sc;
}

/* Must fail with `code` and a message containing want1 and want2 (may be NULL). */
static void parse_bad(const char *text, sw_status code, const char *want1, const char *want2)
{
    sw_scenario *sc = new_sc();
    sw_error err = { 0 };
    sw_status st = sw_scenario_parse(text, "t.scn", NULL, sc, &err);
    if (st == SW_OK)
        fail_msg("accepted, expected '%s'\n--- text ---\n%s", want1 ? want1 : "", text);
    if (st != code)
        fail_msg("status %s, expected %s: %s", sw_status_name(st), sw_status_name(code), err.msg);
    if ((want1 && !strstr(err.msg, want1)) || (want2 && !strstr(err.msg, want2)))
        fail_msg("message '%s' lacks '%s' / '%s'", err.msg, want1 ? want1 : "", want2 ? want2 : "");
    print_message("  refused as expected: %s\n", err.msg);
    del_sc(sc);
}

/* ---- parsing ------------------------------------------------------------------------------ */

static void test_sweep_values(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok(BASE
                               "design = factorial\n"                     /* 34 */
                               "amplitude_factor = 0.5, 2\n"              /* 35 */
                               "source_y_offset = -30 km, 0, 30 km\n"     /* 36 */
                               "depth_factor = 0.9 .. 1.1 in 3\n"         /* 37 */
                               "courant_fraction = 0.5, 0.9\n"            /* 38 */
                               "layout = a, C\n"                          /* 39 */
                               "source main.amplitude = 1 m, 2 m\n"       /* 40 */
                               "bay Lonquessa Bay.depth = 10 m, 30 m\n"        /* 41 */
                               "grid.nx = 20 .. 40 in 3\n");              /* 42 */
    const sw_sweep_spec *sw = &sc->sweep;
    assert_int_equal(sw->present, 1);
    assert_int_equal(sw->line, 33);
    assert_int_equal(sw->design, SW_SWEEP_FACTORIAL);
    assert_int_equal(sw->n_params, 8);
    const sw_sweep_param *p = sw->param;
    assert_int_equal(p[0].kind, SW_SWEEP_AMPLITUDE_FACTOR);
    assert_int_equal(p[0].n_levels, 2);
    assert_true(p[0].level[0] == 0.5 && p[0].level[1] == 2.0);
    /* SI Brochure: km = 1e3 m */
    assert_int_equal(p[1].kind, SW_SWEEP_SOURCE_Y_OFFSET);
    assert_true(p[1].level[0] == -30000.0 && p[1].level[1] == 0.0 && p[1].level[2] == 30000.0);
    assert_int_equal(p[1].line, 36);
    assert_int_equal(p[2].kind, SW_SWEEP_DEPTH_FACTOR);
    assert_int_equal(p[2].n_levels, 3);
    assert_true(p[2].is_range && p[2].lo == 0.9 && p[2].hi == 1.1);
    assert_true(fabs(p[2].level[1] - 1.0) < 1e-15 && p[2].level[2] == 1.1);
    assert_int_equal(p[3].kind, SW_SWEEP_KEY);
    assert_string_equal(p[3].target, "run.courant_fraction");   /* the alias */
    assert_string_equal(p[4].target, "run.layout");
    assert_int_equal(p[4].layout, 1);
    assert_true(p[4].level[0] == 0.0 && p[4].level[1] == 2.0);   /* A = 0, C = 2 */
    assert_string_equal(p[5].target, "source main.amplitude");
    assert_string_equal(p[6].target, "bay Lonquessa Bay.depth");
    assert_true(p[6].level[1] == 30.0);
    assert_int_equal(p[7].integer, 1);
    assert_true(p[7].level[0] == 20 && p[7].level[1] == 30 && p[7].level[2] == 40);
    del_sc(sc);

    sc = parse_ok(BASE "design = latin-hypercube\nmembers = 12\nseed = 7\ndepth_factor = 0.8 .. 1.2\n");
    assert_int_equal(sc->sweep.design, SW_SWEEP_LATIN_HYPERCUBE);
    assert_int_equal(sc->sweep.members, 12);
    assert_true(sc->sweep.seed == 7);
    assert_int_equal(sc->sweep.param[0].n_levels, 0);   /* a continuous range */
    del_sc(sc);

    sc = parse_ok("[run]\nduration = 1 h\n[grid]\nnx = 4\nny = 4\ndx = 1 km\n[seabed]\ndeep = 10 m\n");
    assert_int_equal(sc->sweep.present, 0);   /* no [sweep]: nothing to sweep */
    del_sc(sc);
}

static void test_sweep_errors(void **state)
{
    (void)state;
    /* each message names the file, the line, [sweep] and what is accepted */
    parse_bad(BASE "depth_factr = 1, 2\n", SW_ERR_PARSE, "t.scn:34: [sweep] unknown key 'depth_factr'",
              "did you mean 'depth_factor'?");
    parse_bad(BASE "wobble = 1\n", SW_ERR_PARSE, "t.scn:34: [sweep] unknown key 'wobble'", "SECTION.KEY");
    parse_bad(BASE "depth_factor = 0, 1\n", SW_ERR_RANGE, "t.scn:34: [sweep] depth_factor = 0, 1: value '0': out of "
              "range", "0 < depth_factor <= 100");
    parse_bad(BASE "source_x_offset = 3 kg\n", SW_ERR_PARSE, "t.scn:34: [sweep] source_x_offset = 3 kg: value '3 kg'",
              "m, km");
    parse_bad(BASE "depth_factor = 0.9 .. 1.1\n", SW_ERR_PARSE, "t.scn:34: [sweep] depth_factor: a range needs a "
              "count with design = one-at-a-time", "LO .. HI in N");
    parse_bad(BASE "depth_factor = 1.1 .. 0.9 in 3\n", SW_ERR_RANGE, "t.scn:34:", "LO must be below HI");
    parse_bad(BASE "depth_factor = 0.9 .. 1.1 in 1\n", SW_ERR_RANGE, "t.scn:34:", "'in 1': out of range");
    parse_bad(BASE "depth_factor = 1, , 2\n", SW_ERR_PARSE, "t.scn:34:", "an empty value");
    parse_bad(BASE "depth_factor = 1, 2, 1\n", SW_ERR_PARSE, "t.scn:34:", "value '1' is listed twice");
    parse_bad(BASE "layout = A .. C\n", SW_ERR_PARSE, "t.scn:34:", "a layout takes a list");
    parse_bad(BASE "layout = A, Q\n", SW_ERR_PARSE, "t.scn:34:", "unknown layout");
    parse_bad(BASE "design = random\n", SW_ERR_PARSE, "t.scn:34: [sweep] design = random",
              "one-at-a-time, factorial, latin-hypercube");
    parse_bad(BASE "design = latin-hypercube\ndepth_factor = 0.9 .. 1.1\n", SW_ERR_PARSE, "t.scn:33: [sweep] missing "
              "key 'members'", NULL);
    parse_bad(BASE "members = 5\ndepth_factor = 1, 2\n", SW_ERR_PARSE, "t.scn:34: [sweep] members: not used with "
              "design = one-at-a-time", NULL);
    parse_bad(BASE "design = latin-hypercube\nmembers = 1\ndepth_factor = 1, 2\n", SW_ERR_RANGE, "t.scn:35:",
              "2 <= members <= 10000");
    parse_bad(BASE "design = latin-hypercube\nmembers = 5\ngrid.nx = 10 .. 20\n", SW_ERR_PARSE, "t.scn:36:",
              "needs 'in N' or a list");
    parse_bad(BASE, SW_ERR_PARSE, "t.scn:33: [sweep] lists no parameter", NULL);
    parse_bad(BASE "grdi.dx = 1 km, 2 km\n", SW_ERR_PARSE, "t.scn:34: [sweep] grdi.dx: unknown section 'grdi'",
              "did you mean 'grid'?");
    parse_bad(BASE "source other.x = 1 km, 2 km\n", SW_ERR_PARSE, "t.scn:34:", "the file has no section [source other]");
    parse_bad(BASE "grid.dz = 1 km, 2 km\n", SW_ERR_PARSE, "t.scn:34: [sweep] grid.dz: [grid] has no key 'dz'",
              "did you mean");
    parse_bad(BASE "run.title = a, b\n", SW_ERR_PARSE, "t.scn:34:", "is not a number");
    parse_bad(BASE "source main.length = 1 km, 2 km\n", SW_ERR_PARSE, "t.scn:34:", "not used by this source's shape");
    parse_bad(BASE "gauges.Harbour = 1 km, 2 km\n", SW_ERR_PARSE, "t.scn:34:", "cannot be varied");
    /* the old names of renamed keys are refused with the new ones, as a short name and as SECTION.KEY */
    parse_bad(BASE "courant = 0.5, 0.7\n", SW_ERR_PARSE, "t.scn:34: [sweep] unknown key 'courant' (renamed: write "
              "courant_fraction = F", NULL);
    parse_bad(BASE "run.courant = 0.5, 0.7\n", SW_ERR_PARSE, "t.scn:34: [sweep] run.courant: [run] has no key "
              "'courant' (renamed: write courant_fraction", NULL);
    parse_bad(BASE "run.courant_fraction = 0.5, 1.5\n", SW_ERR_RANGE, "t.scn:34: [sweep] run.courant_fraction = 0.5, 1.5: value '1.5': "
              "out of range", "0 < courant_fraction <= 1");
    parse_bad(BASE "courant_fraction = 0.5, 0.7\nrun.courant_fraction = 0.6, 0.8\n", SW_ERR_PARSE, "t.scn:35:",
              "varies run.courant_fraction, as 'courant_fraction' on line 34 already does");
    parse_bad(BASE "depth_factor = 1, 2\ndepth_factor = 3, 4\n", SW_ERR_PARSE, "t.scn:35: [sweep] duplicate key",
              NULL);
    parse_bad(BASE "design = factorial\na.x = 1\n" , SW_ERR_PARSE, "t.scn:35:", "unknown section 'a'");
    /* 4 parameters of 20 values: 160000 members */
    parse_bad(BASE "design = factorial\namplitude_factor = 1 .. 20 in 20\ndepth_factor = 1 .. 20 in 20\n"
                   "resolution_factor = 1 .. 20 in 20\ncourant_fraction = 0.05 .. 1 in 20\n", SW_ERR_RANGE,
              "t.scn:34: [sweep] design = factorial makes 160000 members", "at most 10000");
    /* amplitude_factor and offsets need analytic sources */
    parse_bad("[run]\nduration = 1 h\n[grid]\nnx = 10\nny = 10\ndx = 1 km\n[seabed]\ndeep = 100 m\n"
              "[source f]\nshape = file\nfile = eta0.nc\n[sweep]\namplitude_factor = 1, 2\n", SW_ERR_PARSE,
              "t.scn:13: [sweep] amplitude_factor: [source f] (line 9) is read from a file", NULL);
    parse_bad("[run]\nduration = 1 h\n[seabed]\nfile = bed.nc\n[sweep]\nresolution_factor = 1, 2\n", SW_ERR_PARSE,
              "t.scn:6: [sweep] resolution_factor: the grid comes from the seabed file", NULL);
    parse_bad("[run]\nduration = 1 h\n[grid]\nnx = 10\nny = 10\ndx = 1 km\n[seabed]\ndeep = 100 m\n"
              "[sweep]\nsource_x_offset = 1 km\n", SW_ERR_PARSE, "t.scn:10:", "has no [source]");
    parse_bad(BASE "[sweep]\n", SW_ERR_PARSE, "t.scn:34: duplicate section [sweep] (first on line 33)", NULL);
}

/* ---- overrides ---------------------------------------------------------------------------- */

static void override_ok(const sw_scenario *sc, const sw_override *ov, size_t n, sw_scenario *out)
{
    sw_error err = { 0 };
    if (sw_scenario_override(sc, ov, n, out, &err) != SW_OK)
        fail_msg("override refused: %s", err.msg);
}

/* A storm surge's parameters: [storm] keys and the [wind] drag law, a choice swept by its words. */
static void test_storm_sweep(void **state)
{
    (void)state;
    const char *text = "[run]\nduration = 1 h\n[grid]\nnx = 10\nny = 10\ndx = 1 km\n[seabed]\ndeep = 50 m\n"
                       "[storm]\ntrack = t.txt\n[wind]\ndrag_law = wu\n[sweep]\nstorm.shift_across = -20 km, 20 km\n"
                       "storm.pressure_drop_factor = 0.8, 1.2\nwind.drag_law = large-pond, Garratt\n";
    sw_scenario *sc = parse_ok(text);
    const sw_sweep_spec *sw = &sc->sweep;
    assert_int_equal(sw->n_params, 3);
    assert_string_equal(sw->param[0].target, "storm.shift_across");
    assert_true(sw->param[0].level[1] == 20e3);
    assert_null(sw->param[0].words);
    const sw_sweep_param *law = &sw->param[2];
    assert_non_null(law->words);
    assert_int_equal(law->n_levels, 2);
    assert_true(law->level[0] == 0 && law->level[1] == 2);   /* large-pond, garratt */
    char buf[64];
    sw_sweep_format_value(law, 2, buf, sizeof buf);
    assert_string_equal(buf, "garratt");
    double v;
    sw_error err = {0};
    assert_int_equal(sw_scenario_value(sc, "wind.drag_law", &v, &err), SW_OK);   /* the base: wu */
    assert_true(v == 1);
    /* the override a member gets is the word, read back through the key table */
    sw_override ov = {.target = "wind.drag_law", .value = "garratt"};
    sw_scenario out = {0};
    assert_int_equal(sw_scenario_override(sc, &ov, 1, &out, &err), SW_OK);
    assert_int_equal(out.forcing.drag_law, 2);
    sw_scenario_free(&out);
    del_sc(sc);
    parse_bad("[run]\nduration = 1 h\n[grid]\nnx = 10\nny = 10\ndx = 1 km\n[seabed]\ndeep = 50 m\n[storm]\n"
              "track = t.txt\n[wind]\n[sweep]\nwind.drag_law = wu .. garratt\n", SW_ERR_PARSE,
              "t.scn:13: [sweep] wind.drag_law = wu .. garratt: a choice takes a list", NULL);
    parse_bad("[run]\nduration = 1 h\n[grid]\nnx = 10\nny = 10\ndx = 1 km\n[seabed]\ndeep = 50 m\n[storm]\n"
              "track = t.txt\n[wind]\n[sweep]\nwind.drag_law = wu, smith\n", SW_ERR_PARSE, "t.scn:13:",
              "unknown value (accepted: large-pond, wu, garratt)");
}

static void test_override(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok(BASE "depth_factor = 1, 2\n");
    sw_scenario *o = new_sc();
    sw_error err = { 0 };

    /* courant_fraction replaces dt (they exclude each other), the [sweep] section goes, lines stay */
    sw_override a[] = { { "run.courant_fraction", "0.5" }, { "grid.dx", "1.5 km" }, { "source pair.amplitude", "2 m" },
                        { "bay Lonquessa Bay.depth", "25 m" }, { "seabed.min_depth", "3 m" } };
    override_ok(sc, a, 5, o);
    assert_true(o->courant_fraction == 0.5 && o->dt_s == 0.0);
    assert_true(o->grid.dx_m == 1500.0 && o->grid.dy_m == 1500.0);   /* dy follows dx when the file gives none */
    assert_true(o->sources[1].amplitude_m == 2.0 && o->sources[1].trough_m == 2.0);   /* trough follows amplitude */
    assert_true(o->features[0].depth_m == 25.0);
    assert_true(o->min_depth_m == 3.0);
    assert_int_equal(o->sweep.present, 0);
    assert_non_null(strstr(o->text, "courant_fraction = 0.5"));
    assert_null(strstr(o->text, "dt = 2 s"));
    assert_null(strstr(o->text, "[sweep]"));
    assert_int_equal(o->gauges[0].line, 34);   /* two lines inserted (courant_fraction, min_depth), the dt line blanked */
    double v = 0;
    assert_int_equal(sw_scenario_value(o, "grid.dx", &v, &err), SW_OK);
    assert_true(v == 1500.0);
    assert_int_equal(sw_scenario_value(o, "run.layout", &v, &err), SW_OK);
    assert_true(v == 2.0);   /* C */
    assert_int_equal(sw_scenario_value(o, "grid.nx", &v, &err), SW_OK);
    assert_true(v == 40.0);
    assert_int_equal(sw_scenario_value(o, "source nope.x", &v, &err), SW_ERR_RANGE);
    assert_int_equal(sw_scenario_value(o, "run.title", &v, &err), SW_ERR_RANGE);
    sw_scenario_free(o);

    /* no override: a copy without [sweep] */
    override_ok(sc, NULL, 0, o);
    assert_int_equal(o->sweep.present, 0);
    assert_true(o->dt_s == 2.0 && o->grid.nx == 40);
    sw_scenario_free(o);

    /* refusals quote the override, or the original line for a rule it breaks elsewhere */
    sw_override renamed = { "run.courant", "0.5" };
    assert_int_equal(sw_scenario_override(sc, &renamed, 1, o, &err), SW_ERR_RANGE);
    assert_non_null(strstr(err.msg, "override 'run.courant': no such key in the scenario tables (renamed: write "
                                    "courant_fraction = F"));
    assert_null(o->text);
    sw_override bad1 = { "run.courant_fraction", "1.5" };
    assert_int_equal(sw_scenario_override(sc, &bad1, 1, o, &err), SW_ERR_RANGE);
    print_message("  %s\n", err.msg);
    assert_non_null(strstr(err.msg, "t.scn: override run.courant_fraction = 1.5: [run] courant_fraction = 1.5: out of range (accepted: "
                                    "0 < courant_fraction <= 1"));
    assert_null(o->text);
    sw_override bad2 = { "grid.dx", "100 m" };   /* the domain shrinks to 4 km: the gauge at 35 km is outside */
    assert_int_equal(sw_scenario_override(sc, &bad2, 1, o, &err), SW_ERR_RANGE);
    print_message("  %s\n", err.msg);
    assert_non_null(strstr(err.msg, "t.scn:32: [gauges] Harbour"));
    sw_override bad3 = { "grid.wobble", "1" };
    assert_int_equal(sw_scenario_override(sc, &bad3, 1, o, &err), SW_ERR_RANGE);
    assert_non_null(strstr(err.msg, "no such key"));
    sw_override bad4 = { "edges.west", "open" };   /* [edges] is not in the file */
    assert_int_equal(sw_scenario_override(sc, &bad4, 1, o, &err), SW_ERR_RANGE);
    assert_non_null(strstr(err.msg, "has no section [edges]"));
    sw_override bad5 = { "run.title", "a ; b" };
    assert_int_equal(sw_scenario_override(sc, &bad5, 1, o, &err), SW_ERR_PARSE);
    sw_override twice[] = { { "grid.dx", "1 km" }, { "grid.dx", "2 km" } };
    assert_int_equal(sw_scenario_override(sc, twice, 2, o, &err), SW_ERR_USAGE);
    del_sc(o);
    del_sc(sc);
}

/* ---- designs ------------------------------------------------------------------------------ */

static sw_sweep_plan design_of(const sw_scenario *sc)
{
    sw_sweep_plan plan;
    sw_error err = { 0 };
    if (sw_sweep_make_design(sc, &plan, &err) != SW_OK)
        fail_msg("design refused: %s", err.msg);
    return plan;
}

static void test_designs(void **state)
{
    (void)state;
    /* one-at-a-time: the base, then each value that differs from the base (1 for factors) */
    sw_scenario *sc = parse_ok(BASE "amplitude_factor = 0.5, 1, 2\nsource_y_offset = -3 km, 3 km\n"
                                    "courant_fraction = 0.9, 0.5\n");
    sw_sweep_plan p = design_of(sc);
    assert_int_equal(p.n_members, 1 + 2 + 2 + 1);   /* 1 and run.courant_fraction = 0.9 (the default) are the base */
    assert_true(p.member[0].varied == -1 && p.member[0].value[0] == 1.0 && p.member[0].value[1] == 0.0);
    assert_true(p.member[1].varied == 0 && p.member[1].value[0] == 0.5 && p.member[1].value[1] == 0.0);
    assert_true(p.member[2].varied == 0 && p.member[2].value[0] == 2.0);
    assert_true(p.member[3].varied == 1 && p.member[3].value[1] == -3000.0 && p.member[3].value[0] == 1.0);
    assert_true(p.member[5].varied == 2 && p.member[5].value[2] == 0.5);
    assert_true(p.member[5].value[0] == 1.0 && p.member[5].value[1] == 0.0);
    sw_sweep_plan_free(&p);
    del_sc(sc);

    /* factorial: every combination exactly once, the last parameter fastest */
    sc = parse_ok(BASE "design = factorial\namplitude_factor = 0.5, 1, 2\nlayout = A, C\n"
                       "depth_factor = 0.8 .. 1.2 in 3\n");
    p = design_of(sc);
    assert_int_equal(p.n_members, 18);
    for (size_t a = 0; a < 18; a++)
        for (size_t b = a + 1; b < 18; b++)
            assert_false(memcmp(p.member[a].value, p.member[b].value, 3 * sizeof(double)) == 0);
    assert_true(p.member[1].value[2] == 1.0 && p.member[3].value[1] == 2.0 && p.member[6].value[0] == 1.0);
    sw_sweep_plan_free(&p);
    del_sc(sc);

    /* Latin hypercube: one member per stratum of each parameter (McKay et al. 1979) */
    const char *lhs = BASE "design = latin-hypercube\nmembers = 50\nseed = %d\ndepth_factor = 0.5 .. 1.5\n"
                           "source_x_offset = -10 km .. 10 km\namplitude_factor = 0.5, 1, 2, 4, 8\n";
    char text[4096];
    snprintf(text, sizeof text, lhs, 42);
    sc = parse_ok(text);
    p = design_of(sc);
    assert_int_equal(p.n_members, 50);
    for (size_t q = 0; q < 2; q++) {
        int hit[50] = { 0 };
        double lo = q ? -10000.0 : 0.5, hi = q ? 10000.0 : 1.5;
        for (size_t k = 0; k < 50; k++) {
            double u = (p.member[k].value[q] - lo) / (hi - lo);
            assert_true(u >= 0 && u < 1);
            hit[(int)(u * 50)]++;
        }
        for (int s = 0; s < 50; s++)
            assert_int_equal(hit[s], 1);
    }
    int per_level[5] = { 0 };   /* listed values: 50 strata over 5 values, 10 each */
    for (size_t k = 0; k < 50; k++)
        per_level[(int)round(log2(p.member[k].value[2])) + 1]++;
    for (int l = 0; l < 5; l++)
        assert_int_equal(per_level[l], 10);
    sw_scenario *same = parse_ok(text);
    sw_sweep_plan p2 = design_of(same);
    assert_memory_equal(p.values, p2.values, 50 * 3 * sizeof(double));   /* same seed, same design */
    sw_sweep_plan_free(&p2);
    del_sc(same);
    snprintf(text, sizeof text, lhs, 43);
    same = parse_ok(text);
    p2 = design_of(same);
    assert_true(memcmp(p.values, p2.values, 50 * 3 * sizeof(double)) != 0);   /* another seed, another */
    sw_sweep_plan_free(&p2);
    del_sc(same);
    sw_sweep_plan_free(&p);
    del_sc(sc);
}

/* ---- statistics --------------------------------------------------------------------------- */

static void test_statistics(void **state)
{
    (void)state;
    /* Hyndman & Fan definition 7, by hand: h = (n - 1) q / 100, x[floor h] + frac(h) (x[ceil h] - x[floor h]) */
    double a[] = { 4, 1, 3, 2 };
    assert_true(fabs(sw_sweep_percentile(a, 4, 50) - 2.5) < 1e-15);   /* h = 1.5 */
    assert_true(fabs(sw_sweep_percentile(a, 4, 90) - 3.7) < 1e-15);   /* h = 2.7 */
    assert_true(sw_sweep_percentile(a, 4, 0) == 1 && sw_sweep_percentile(a, 4, 100) == 4);
    double b[] = { 10, INFINITY, 20 };
    assert_true(sw_sweep_percentile(b, 3, 50) == 20);
    assert_true(isinf(sw_sweep_percentile(b, 3, 90)));   /* h = 1.8 between 20 and +Inf */
    assert_true(isnan(sw_sweep_percentile(b, 0, 50)));
    double one[] = { 7 };
    assert_true(sw_sweep_percentile(one, 1, 90) == 7);

    /* Spearman: monotone +1 / -1; with ties (mean ranks) 4.5 / sqrt(4.5 * 5), worked by hand */
    double x[] = { 1, 2, 3, 4, 5 }, y[] = { 1, 4, 9, 16, 25 }, z[] = { 5, 4, 3, 2, 1 };
    assert_true(fabs(sw_sweep_spearman(x, y, 5) - 1) < 1e-15);
    assert_true(fabs(sw_sweep_spearman(x, z, 5) + 1) < 1e-15);
    double tx[] = { 1, 2, 2, 3 }, ty[] = { 1, 3, 2, 4 };
    double rho = sw_sweep_spearman(tx, ty, 4);
    print_message("  Spearman with a tie: %.15f (by hand 0.948683298050514)\n", rho);
    assert_true(fabs(rho - 4.5 / sqrt(4.5 * 5)) < 1e-14);
    double c[] = { 2, 2, 2, 2 };
    assert_true(isnan(sw_sweep_spearman(c, ty, 4)));
    assert_true(isnan(sw_sweep_spearman(x, y, 2)));
}

/* ---- members ------------------------------------------------------------------------------ */

/* A flat basin with walls, one hump and two gauges; [sweep] appended. */
#define FLAT                                                                                                 \
    "[run]\nduration = 10 min\ncourant_fraction = 0.8\ngauge_interval = 10 s\narrival_threshold = 0.002 m\n"           \
    "[grid]\nnx = 60\nny = 40\ndx = 500 m\n"                                                                 \
    "[seabed]\ndeep = 50 m\n"                                                                                \
    "[source main]\nshape = hump\nx = 10 km\ny = 10 km\namplitude = 0.5 m\nradius = 1.5 km\n"                \
    "[gauges]\nnear = 16 km, 10 km\nfar = 20 km, 13 km\n"                                                   \
    "[sweep]\n"

static void run_member(const sw_sweep_plan *p, size_t k, sw_sweep_member_result *r)
{
    sw_error err = { 0 };
    assert_int_equal(sw_sweep_member_run(p, k, 2, NULL, NULL, NULL, r, &err), SW_OK);
    if (r->status != SW_OK)
        fail_msg("member %zu failed: %s", k, r->error);
}

static void test_linearity(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok(FLAT "amplitude_factor = 2\n");
    sw_sweep_plan p;
    sw_error err = { 0 };
    assert_int_equal(sw_sweep_plan_build(sc, NULL, &p, &err), SW_OK);
    assert_int_equal(p.n_members, 2);
    sw_sweep_member_result r0, r1;
    run_member(&p, 0, &r0);
    run_member(&p, 1, &r1);
    assert_int_equal(r0.n_times, r1.n_times);
    double worst = 0, biggest = 0;
    for (size_t i = 0; i < r0.n_gauges * r0.n_times; i++) {
        worst = fmax(worst, fabs(r1.eta_m[i] - 2 * r0.eta_m[i]));
        biggest = fmax(biggest, fabs(r0.eta_m[i]));
    }
    print_message("  linearity: max |eta(2a) - 2 eta(a)| = %.3g m over %zu samples (largest |eta| %.3g m)\n", worst,
                  r0.n_gauges * r0.n_times, biggest);
    assert_true(biggest > 0.01);
    assert_true(worst <= 1e-14 * biggest);   /* linear equations; doubling is exact in floating point */
    for (size_t q = 0; q < 2; q++)
        assert_true(fabs(r1.peak_m[q] - 2 * r0.peak_m[q]) <= 1e-14 * r0.peak_m[q]);
    /* the maps count elevations below 1 micrometre as 0 (tracker.c): linear above 2 micrometres */
    size_t compared = 0;
    for (size_t c = 0; c < r0.n_cells; c++)
        if (r0.wet[c] && fabs(r0.eta_max_map_m[c]) >= 2e-6) {
            assert_true(fabs(r1.eta_max_map_m[c] - 2 * r0.eta_max_map_m[c]) <= 1e-6 * fabs(r0.eta_max_map_m[c]) + 1e-12);
            compared++;
        }
    assert_true(compared > r0.n_cells / 4);
    sw_sweep_member_result_free(&r0);
    sw_sweep_member_result_free(&r1);
    sw_sweep_plan_free(&p);
    del_sc(sc);
}

static void test_depth_factor_arrival(void **state)
{
    (void)state;
    /* (1) Courant fraction fixed: exact for the discrete scheme; (2) dt fixed: the continuum's 1/sqrt(s) */
    for (int fixed_dt = 0; fixed_dt < 2; fixed_dt++) {
        char text[4096];
        snprintf(text, sizeof text, "%s%s", FLAT "depth_factor = 0.81, 1.21\n", "");
        if (fixed_dt) {
            char *at = strstr(text, "courant_fraction = 0.8");
            memcpy(at, "dt = 2.5 s            ", 22);   /* same length; 2.5 s is stable at 1.21 x 50 m */
        }
        sw_scenario *sc = parse_ok(text);
        sw_sweep_plan p;
        sw_error err = { 0 };
        assert_int_equal(sw_sweep_plan_build(sc, NULL, &p, &err), SW_OK);
        assert_int_equal(p.n_members, 3);
        sw_sweep_member_result r[3];
        for (size_t k = 0; k < 3; k++)
            run_member(&p, k, &r[k]);
        for (size_t k = 1; k < 3; k++) {
            double s = p.member[k].value[0];
            for (size_t q = 0; q < 2; q++) {
                double ratio = r[k].arrival_s[q] / r[0].arrival_s[q], want = 1 / sqrt(s);
                print_message("  %s, depth x %.2f, gauge %zu: arrival %.2f s vs %.2f s, ratio %.12f, 1/sqrt(s) = "
                              "%.12f\n", fixed_dt ? "dt fixed" : "Courant fixed", s, q, r[k].arrival_s[q],
                              r[0].arrival_s[q], ratio, want);
                /* Lamb (1932) [memory]: c = sqrt(g h); exact for the scheme with the Courant fraction fixed
                 * [derived]; with dt fixed within one step of the gauge's arrival (dt / arrival < 2 %) */
                assert_true(fabs(ratio - want) < (fixed_dt ? 0.02 : 1e-9));
            }
        }
        for (size_t k = 0; k < 3; k++)
            sw_sweep_member_result_free(&r[k]);
        sw_sweep_plan_free(&p);
        del_sc(sc);
    }
}

static void test_failed_member(void **state)
{
    (void)state;
    /* the C layout's 2D limit on 50 m, 500 m cells: dt <= 500 / (sqrt(2) sqrt(9.81 * 50)) = 15.97 s */
    sw_scenario *sc = parse_ok(FLAT "run.dt = 5 s, 30 s\n");
    sw_sweep_plan p;
    sw_error err = { 0 };
    assert_int_equal(sw_sweep_plan_build(sc, NULL, &p, &err), SW_OK);
    assert_int_equal(p.n_members, 3);
    assert_int_equal(p.member[1].status, SW_OK);
    assert_int_equal(p.member[2].status, SW_ERR_UNSTABLE);
    print_message("  planned failure: %s\n", p.member[2].error);
    assert_non_null(strstr(p.member[2].error, "exceeds the C-layout limit"));
    sw_sweep_member_result r;
    assert_int_equal(sw_sweep_member_run(&p, 2, 1, NULL, NULL, NULL, &r, &err), SW_OK);
    assert_int_equal(r.status, SW_ERR_UNSTABLE);
    assert_null(r.arrival_map_s);
    sw_sweep_member_result_free(&r);
    run_member(&p, 1, &r);   /* the others are not affected */
    assert_true(r.arrival_s[0] > 0);
    sw_sweep_member_result_free(&r);
    sw_sweep_plan_free(&p);
    del_sc(sc);

    /* depth_factor that makes the explicit dt unstable is caught after the depth is scaled */
    sc = parse_ok("[run]\nduration = 6 min\ndt = 12 s\n[grid]\nnx = 60\nny = 40\ndx = 500 m\n[seabed]\ndeep = 50 m\n"
                  "[source main]\nshape = hump\nx = 10 km\ny = 10 km\namplitude = 0.5 m\nradius = 1.5 km\n"
                  "[sweep]\ndepth_factor = 5\n");
    assert_int_equal(sw_sweep_plan_build(sc, NULL, &p, &err), SW_OK);
    assert_int_equal(p.member[0].status, SW_OK);
    assert_int_equal(p.member[1].status, SW_ERR_UNSTABLE);
    print_message("  planned failure: %s\n", p.member[1].error);
    assert_non_null(strstr(p.member[1].error, "depth_factor = 5"));
    sw_sweep_plan_free(&p);
    del_sc(sc);
}

static void test_resolution_and_maps(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok(FLAT "resolution_factor = 2\n");
    sw_sweep_plan p;
    sw_error err = { 0 };
    assert_int_equal(sw_sweep_plan_build(sc, NULL, &p, &err), SW_OK);
    assert_int_equal(p.member[1].grid.nx, 120);
    assert_int_equal(p.member[1].grid.ny, 80);
    assert_true(p.member[1].grid.dx_m == 250.0 && p.member[1].grid.dy_m == 250.0);
    sw_sweep_member_result r0, r1;
    run_member(&p, 0, &r0);
    run_member(&p, 1, &r1);
    assert_int_equal(r1.n_cells, 60 * 40);   /* on the base grid */
    /* nearest: base cell (i, j) centre lies in fine cell (2i, 2j)... (2i+1, 2j+1) boundary: floor picks 2i+1 */
    size_t reached = 0;
    double worst = 0;
    for (size_t c = 0; c < r0.n_cells; c++)
        if (!isnan(r0.arrival_map_s[c]) && !isnan(r1.arrival_map_s[c])) {
            reached++;
            worst = fmax(worst, fabs(r1.arrival_map_s[c] - r0.arrival_map_s[c]));
        }
    print_message("  resolution x2: %zu cells reached in both; largest arrival difference %.1f s\n", reached, worst);
    assert_true(reached > 100);
    assert_true(worst < 60);   /* the same wave, a finer grid: the fronts agree within a minute here */
    sw_sweep_member_result_free(&r0);
    sw_sweep_member_result_free(&r1);
    sw_sweep_plan_free(&p);
    del_sc(sc);
}

static void test_member_file_roundtrip(void **state)
{
    (void)state;
    sw_scenario *sc = parse_ok(FLAT "source_x_offset = 2 km\n");
    sw_sweep_plan p;
    sw_error err = { 0 };
    assert_int_equal(sw_sweep_plan_build(sc, NULL, &p, &err), SW_OK);
    sw_sweep_member_result r, back;
    run_member(&p, 1, &r);
    char path[1024];
    tu_tmp_path(path, sizeof path, "sweep_member.nc");
    assert_int_equal(sw_ncs_member_write(path, &r, p.member[1].value, 1, &p.base_grid, "caution", &err), SW_OK);
    double v = 0;
    assert_int_equal(sw_ncs_member_read(path, 1, 2, &v, &back, &err), SW_OK);
    assert_true(v == 2000.0);
    assert_int_equal(back.status, SW_OK);
    assert_int_equal(back.n_times, r.n_times);
    assert_memory_equal(back.time_s, r.time_s, r.n_times * sizeof(double));
    assert_memory_equal(back.eta_m, r.eta_m, 2 * r.n_times * sizeof(double));
    assert_memory_equal(back.peak_m, r.peak_m, 2 * sizeof(double));
    size_t n = r.n_cells;
    double *arr = malloc(n * sizeof *arr), *emx = malloc(n * sizeof *emx);
    unsigned char *wet = malloc(n);
    assert_int_equal(sw_ncs_member_read_rows(path, &p.base_grid, 0, p.base_grid.ny, arr, emx, wet, &err), SW_OK);
    for (size_t c = 0; c < n; c++) {
        assert_true(arr[c] == r.arrival_map_s[c] || (isnan(arr[c]) && isnan(r.arrival_map_s[c])));
        assert_true(emx[c] == r.eta_max_map_m[c] || (isnan(emx[c]) && isnan(r.eta_max_map_m[c])));
    }
    assert_memory_equal(wet, r.wet, n);
    /* a failed member keeps its cause */
    sw_sweep_member_result bad = { .index = 3, .status = SW_ERR_UNSTABLE };
    snprintf(bad.error, sizeof bad.error, "dt too large");
    assert_int_equal(sw_ncs_member_write(path, &bad, &v, 1, &p.base_grid, "caution", &err), SW_OK);
    sw_sweep_member_result_free(&back);
    assert_int_equal(sw_ncs_member_read(path, 1, 2, &v, &back, &err), SW_OK);
    assert_int_equal(back.status, SW_ERR_UNSTABLE);
    assert_string_equal(back.error, "dt too large");
    free(arr);
    free(emx);
    free(wet);
    sw_sweep_member_result_free(&r);
    sw_sweep_member_result_free(&back);
    sw_sweep_plan_free(&p);
    del_sc(sc);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_sweep_values),
        cmocka_unit_test(test_sweep_errors),
        cmocka_unit_test(test_storm_sweep),
        cmocka_unit_test(test_override),
        cmocka_unit_test(test_designs),
        cmocka_unit_test(test_statistics),
        cmocka_unit_test(test_linearity),
        cmocka_unit_test(test_depth_factor_arrival),
        cmocka_unit_test(test_failed_member),
        cmocka_unit_test(test_resolution_and_maps),
        cmocka_unit_test(test_member_file_roundtrip),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
