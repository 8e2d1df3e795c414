/* test_wave.c - several steps per sweep over memory (sw_model_steps, the stepper's wavefront) give the
 * bits of one step per sweep.
 *
 * The claim of stepper.h: the wavefront only reorders work whose inputs it does not change, so the state,
 * the tracker's maps (which see every row of every step through the model's observer) and the observer's
 * calls are those of k times sw_model_step then sw_model_tick. Checked on every layout, in both
 * precisions, with walls, open and level edges (a level held away from 0), periodic west-east with open
 * south-north edges, all periodic (which must fall back to single steps and say why), without terms and
 * with rotation and quadratic friction; on 1, 2 and 3 threads (the pipeline); with 2, 3, 5, 8 and 16 steps
 * per sweep (more than the rows the pipeline fills on 3 threads); over 23 steps, which no k above
 * divides. With surface forcing (a fictional storm's two slabs) and level edges, every step of a sweep
 * takes its own slab weight and edge level (sw_model_steps_forced), as single steps with the weight and
 * level set before each do. An observer that counts checks that every row of every step is shown once, with that step's
 * time. The basin, with an island and a hump of water off it, is fictional; the reference is the
 * program's own one-step schedule, which the golden and verification tests hold to published values.
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

#include "base/omp_compat.h"
#include "model/layout.h"
#include "model/model.h"
#include "observers/tracker.h"
#include "testutil.h"

#define G 9.81
#define NX 33
#define NY 120
#define STEPS 23

typedef enum { EDGES_MIXED, EDGES_PERIODIC_X, EDGES_PERIODIC_ALL, N_EDGE_SETS } edge_set;

static sw_model *basin(const sw_layout *lay, sw_precision precision, edge_set es, int terms)
{
    double *depth = malloc(NX * NY * sizeof(double)), *eta = malloc(NX * NY * sizeof(double));
    assert_non_null(depth);
    assert_non_null(eta);
    for (size_t j = 0; j < NY; j++)
        for (size_t i = 0; i < NX; i++) {
            const double ri = (double)i - 22, rj = (double)j - 70;
            depth[j * NX + i] = ri * ri + rj * rj < 12 ? 0 : 60 + 2 * (double)j;   /* an island; deeper north */
            const double x = (double)i - 12, y = (double)j - 50;
            eta[j * NX + i] = 0.6 * exp(-(x * x + y * y) / 30.0);
        }
    sw_grid g = {.nx = NX, .ny = NY, .dx_m = 500, .dy_m = 400};
    sw_model_config cfg = {.layout = lay, .grid = g, .depth_m = depth, .eta0_m = eta, .min_depth_m = 1,
                           .gravity_ms2 = G, .precision = precision, .edge_level_m = 0.05};
    const sw_edge_kind sets[N_EDGE_SETS][4] = {
        [EDGES_MIXED] = {SW_EDGE_OPEN, SW_EDGE_LEVEL, SW_EDGE_WALL, SW_EDGE_OPEN},
        [EDGES_PERIODIC_X] = {SW_EDGE_PERIODIC, SW_EDGE_PERIODIC, SW_EDGE_OPEN, SW_EDGE_LEVEL},
        [EDGES_PERIODIC_ALL] = {SW_EDGE_PERIODIC, SW_EDGE_PERIODIC, SW_EDGE_PERIODIC, SW_EDGE_PERIODIC},
    };
    if (lay->checkerboard && es != EDGES_MIXED)   /* E joins periodic edges across an even count of cells */
        g.nx = cfg.grid.nx = NX - 1;
    memcpy(cfg.edges, sets[es], sizeof cfg.edges);
    if (terms)
        cfg.terms = (sw_terms_config){.rotation = SW_ROTATION_F_PLANE, .f0_s = 1e-3, .friction = SW_FRICTION_QUADRATIC,
                                      .drag = 0.02};
    cfg.dt_s = 0.9 * sw_model_dt_limit(lay, &cfg.grid, depth, 1, G, sw_model_dims(&cfg.grid, cfg.edges));
    if (terms)
        cfg.dt_s *= 0.9;
    sw_model *m = NULL;
    sw_error err = {0};
    if (g.nx != NX) {   /* the same basin one column narrower: depth and eta rows re-packed */
        for (size_t j = 0; j < NY; j++) {
            memmove(depth + j * g.nx, depth + j * NX, g.nx * sizeof(double));
            memmove(eta + j * g.nx, eta + j * NX, g.nx * sizeof(double));
        }
    }
    sw_status rc = sw_model_create(&cfg, &m, &err);
    if (rc != SW_OK)
        fail_msg("%s", err.msg);
    free(depth);
    free(eta);
    return m;
}

/* ---- the counting observer ---------------------------------------------------------------------- */

typedef struct {
    const sw_model *m;
    long long step0;                  /* steps taken before the counted ones */
    unsigned char seen[STEPS][NY];    /* times row j of step n was shown */
    int bad_time;                     /* a call whose time is no step's of the counted ones */
    sw_tracker *tracker;              /* called through as well, when set */
    sw_row_observer track;
} counter;

static void count_row(void *ctx, const sw_model *m, size_t j, double time_s, const sw_row_values *pre)
{
    counter *c = ctx;
    const double dt = sw_model_dt(m);
    const long long n = llround(time_s / dt) - 1 - c->step0;
    if (n < 0 || n >= STEPS || j >= NY || time_s != (double)(n + 1 + c->step0) * dt)
        c->bad_time = 1;
    else
        __atomic_add_fetch(&c->seen[n][j], 1, __ATOMIC_RELAXED);
    (void)pre;
}

/* ---- the comparison ----------------------------------------------------------------------------- */

static void assert_same_state(sw_model *a, sw_model *b, const char *what)
{
    void *pa[SW_MODEL_STATE_PARTS], *pb[SW_MODEL_STATE_PARTS];
    size_t ba[SW_MODEL_STATE_PARTS], bb[SW_MODEL_STATE_PARTS];
    const size_t na = sw_model_state_parts(a, pa, ba), nb = sw_model_state_parts(b, pb, bb);
    assert_int_equal(na, nb);
    for (size_t q = 0; q < na; q++) {
        assert_int_equal(ba[q], bb[q]);
        if (memcmp(pa[q], pb[q], ba[q]) != 0)
            fail_msg("%s: state part %zu differs", what, q);
    }
    assert_true(sw_model_time(a) == sw_model_time(b));
}

static void assert_same_maps(sw_tracker *a, sw_tracker *b, const char *what)
{
    void *pa[SW_TRACKER_STATE_PARTS], *pb[SW_TRACKER_STATE_PARTS];
    size_t ba[SW_TRACKER_STATE_PARTS], bb[SW_TRACKER_STATE_PARTS];
    const size_t na = sw_tracker_state_parts(a, pa, ba), nb = sw_tracker_state_parts(b, pb, bb);
    assert_int_equal(na, nb);
    for (size_t q = 0; q < 6; q++)   /* the five maps and the segments' summaries (not the counts) */
        if (ba[q] != bb[q] || memcmp(pa[q], pb[q], ba[q]) != 0)
            fail_msg("%s: tracker part %zu differs", what, q);
}

/* The state and maps of m (its tracker tm) are ref's (tr's), bit for bit; then all four are freed. */
static void same_and_free(sw_model *ref, sw_model *m, sw_tracker *tr, sw_tracker *tm, const char *what)
{
    assert_same_state(ref, m, what);
    assert_same_maps(tr, tm, what);
    sw_tracker_free(tr);
    sw_tracker_free(tm);
    sw_model_free(ref);
    sw_model_free(m);
}

/* A tracker of threshold thr_m attached to m, for `threads` threads (which it sets as OpenMP's count). */
static sw_tracker *tracked(sw_model *m, double thr_m, int threads)
{
    omp_set_num_threads(threads);
    sw_tracker *t = NULL;
    sw_error err = {0};
    assert_int_equal(sw_tracker_create(m, thr_m, threads, &t, &err), SW_OK);
    assert_int_equal(sw_tracker_attach(t, m, &err), SW_OK);
    return t;
}

/* One case: STEPS single steps against sweeps of k steps, on `threads` threads, with a tracker. */
static void one_case(const sw_layout *lay, sw_precision prec, edge_set es, int terms, int threads, int k)
{
    char what[160];
    snprintf(what, sizeof what, "layout %s, %s, edges %d, terms %d, %d threads, %d steps a sweep", lay->name,
             prec == SW_SINGLE ? "single" : "double", (int)es, terms, threads, k);
    sw_model *ref = basin(lay, prec, es, terms), *m = basin(lay, prec, es, terms);
    const char *why = sw_model_wave_refusal(m);
    assert_true((es == EDGES_PERIODIC_ALL) == (why != NULL));
    sw_tracker *tr = tracked(ref, 0.01, threads), *tm = tracked(m, 0.01, threads);
    SW_OMP(parallel)
    for (int n = 0; n < STEPS; n++) {
        sw_model_step(ref);
        SW_OMP(single)
        sw_model_tick(ref);
    }
    SW_OMP(parallel)
    for (int n = 0; n < STEPS; n += k)
        sw_model_steps(m, n + k <= STEPS ? k : STEPS - n);
    same_and_free(ref, m, tr, tm, what);
}

static void layout_cases(sw_precision prec, int terms)
{
    const int ks[] = {2, 3, 5, 8, 16};
    for (size_t q = 0; q < sw_layout_count(); q++)
        for (int es = 0; es < N_EDGE_SETS; es++)
            for (int threads = 1; threads <= 3; threads++)
                for (size_t kk = 0; kk < sizeof ks / sizeof *ks; kk++)
                    one_case(sw_layout_at(q), prec, (edge_set)es, terms, threads, ks[kk]);
}

static void test_plain_double(void **state) { (void)state; layout_cases(SW_DOUBLE, 0); }
static void test_plain_single(void **state) { (void)state; layout_cases(SW_SINGLE, 0); }
static void test_terms_double(void **state) { (void)state; layout_cases(SW_DOUBLE, 1); }
static void test_terms_single(void **state) { (void)state; layout_cases(SW_SINGLE, 1); }

/* ---- surface forcing: a weight and an edge level of their own for every step ---------------------- */

/* A fictional storm's air pressure head and wind stress, different in the two slabs (slot in ctx). */
static void storm_row(void *ctx, sw_surface_kind kind, ptrdiff_t j, size_t i0, double y_m, double x0_m, double dx_m,
                      size_t n, float *out)
{
    const int slot = *(const int *)ctx;
    (void)j;
    for (size_t i = 0; i < n; i++) {
        const double x = x0_m + (double)(i0 + i) * dx_m - 6000.0 - 3000.0 * slot, y = y_m - 24000.0;
        const double r2 = (x * x + y * y) / 4e7;
        out[i] = (float)(kind == SW_SURFACE_HEAD ? -0.3 * exp(-r2)
                         : kind == SW_SURFACE_STRESS_X ? 2e-3 * (1 + slot) * exp(-r2) : -1e-3 * exp(-r2));
    }
}

/* A basin with surface forcing and level edges, its two slabs built. */
static sw_model *forced_basin(const sw_layout *lay, sw_precision prec)
{
    double *depth = malloc(NX * NY * sizeof(double));
    assert_non_null(depth);
    for (size_t k = 0; k < NX * NY; k++)
        depth[k] = 40 + (double)(k % 7);
    sw_grid g = {.nx = NX - (lay->checkerboard ? 1u : 0u), .ny = NY, .dx_m = 500, .dy_m = 400};
    sw_model_config cfg = {.layout = lay, .grid = g, .depth_m = depth, .min_depth_m = 1, .gravity_ms2 = G,
                           .precision = prec, .terms = {.surface = 1, .rotation = SW_ROTATION_F_PLANE, .f0_s = 1e-4},
                           .edges = {SW_EDGE_LEVEL, SW_EDGE_OPEN, SW_EDGE_WALL, SW_EDGE_LEVEL}};
    cfg.dt_s = 0.8 * sw_model_dt_limit(lay, &cfg.grid, depth, 1, G, 2);
    sw_model *m = NULL;
    sw_error err = {0};
    if (sw_model_create(&cfg, &m, &err) != SW_OK)
        fail_msg("%s", err.msg);
    free(depth);
    for (int slot = 0; slot < 2; slot++)
        sw_model_surface_build(m, slot, storm_row, &slot);
    return m;
}

/* The weight and level of step n (1-based): a ramp over the run, and a tide on the level edges. */
static sw_step_forcing forcing_of(long long n)
{
    return (sw_step_forcing){.surface_w = (double)n / (STEPS + 2.0) - 0.05, .edge_level_m = 0.2 * sin(0.3 * (double)n)};
}

/* Single steps with the weight and level set before each, against sweeps of k that take them per step:
 * the state (which holds the last weight and level) and the maps bit for bit. */
static void test_forced(void **state)
{
    (void)state;
    const int ks[] = {3, 8};
    for (size_t q = 0; q < sw_layout_count(); q++)
        for (int prec = 0; prec < 2; prec++)
            for (int threads = 1; threads <= 2; threads++)
                for (size_t kk = 0; kk < 2; kk++) {
                    const sw_layout *lay = sw_layout_at(q);
                    const sw_precision p = prec ? SW_SINGLE : SW_DOUBLE;
                    sw_model *ref = forced_basin(lay, p), *m = forced_basin(lay, p);
                    sw_tracker *tr = tracked(ref, 0.001, threads), *tm = tracked(m, 0.001, threads);
                    SW_OMP(parallel)
                    for (int n = 0; n < STEPS; n++) {
                        SW_OMP(single)
                        {
                            const sw_step_forcing f = forcing_of(n + 1);
                            sw_model_surface_weight(ref, f.surface_w);
                            sw_model_set_edge_level(ref, f.edge_level_m);
                        }
                        sw_model_step(ref);
                        SW_OMP(single)
                        sw_model_tick(ref);
                    }
                    sw_step_forcing per[SW_WAVE_MAX_STEPS];
                    const int k = ks[kk];
                    for (int n = 0; n < STEPS; n += k) {
                        const int kn = n + k <= STEPS ? k : STEPS - n;
                        for (int s = 0; s < kn; s++)
                            per[s] = forcing_of(n + s + 1);
                        SW_OMP(parallel)
                        sw_model_steps_forced(m, kn, per);
                    }
                    char what[96];
                    snprintf(what, sizeof what, "forced, layout %s, %s, %d threads, %d steps a sweep", lay->name,
                             prec ? "single" : "double", threads, k);
                    same_and_free(ref, m, tr, tm, what);
                }
}

/* Every row of every step is shown once, with its step's time, on every layout (3 threads, 5 steps a
 * sweep: the pipeline and the remainder). */
static void test_observer_calls(void **state)
{
    (void)state;
    for (size_t q = 0; q < sw_layout_count(); q++) {
        sw_model *m = basin(sw_layout_at(q), SW_SINGLE, EDGES_MIXED, 0);
        counter *c = calloc(1, sizeof *c);
        assert_non_null(c);
        sw_model_set_observer(m, count_row, c);
        omp_set_num_threads(3);
        SW_OMP(parallel)
        for (int n = 0; n < STEPS; n += 5)
            sw_model_steps(m, n + 5 <= STEPS ? 5 : STEPS - n);
        assert_false(c->bad_time);
        for (int n = 0; n < STEPS; n++)
            for (size_t j = 0; j < NY; j++)
                if (c->seen[n][j] != 1)
                    fail_msg("layout %s: row %zu of step %d shown %d times", sw_layout_at(q)->name, j, n + 1,
                             c->seen[n][j]);
        assert_int_equal(llround(sw_model_time(m) / sw_model_dt(m)), STEPS);
        free(c);
        sw_model_free(m);
    }
}

/* The automatic choice: one step per sweep when the state fits in half the cache or the model refuses;
 * else a window within half the cache, a multiple of the threads. */
static void test_auto_choice(void **state)
{
    (void)state;
    sw_model *m = basin(sw_layout_find("C"), SW_SINGLE, EDGES_MIXED, 0);
    size_t window;
    assert_int_equal(sw_model_wave_auto(m, 2, 64u << 20, &window), 1);   /* 120 rows fit in 32 MB */
    assert_int_equal(window, 0);
    const int k = sw_model_wave_auto(m, 2, 16u << 10, &window);          /* a 16 kB cache: a few steps */
    assert_true(k == 1 || (k >= 2 && k % 2 == 0 && window <= 8u << 10));
    sw_model *p = basin(sw_layout_find("C"), SW_SINGLE, EDGES_PERIODIC_ALL, 0);
    assert_non_null(strstr(sw_model_wave_refusal(p), "periodic south and north"));
    assert_int_equal(sw_model_wave_auto(p, 2, 16u << 10, &window), 1);
    sw_model_free(m);
    sw_model_free(p);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_observer_calls), cmocka_unit_test(test_auto_choice), cmocka_unit_test(test_forced),
        cmocka_unit_test(test_plain_double), cmocka_unit_test(test_plain_single),
        cmocka_unit_test(test_terms_double), cmocka_unit_test(test_terms_single),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
