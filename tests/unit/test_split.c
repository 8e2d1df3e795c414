/* test_split.c - one run split over ranks (run/split.h) gives the files of the unsplit run bit for bit,
 * without MPI: the ranks are threads of this process and the split's operations (sw_split_ops) copy
 * between their models through shared memory, meeting at a barrier, as MPI messages would deliver.
 *
 * This is the claim of split.h and of the stepper's process halos (DEVELOPERS.md): every value is computed
 * from the same inputs whichever rank computes it. Checked on every layout with two sets of edges (wall,
 * open and level; periodic south-north with open and level west-east), rotation and quadratic friction
 * on, 2 and 3 ranks, and 2 ranks of 2 threads; gauges sit across the bands' boundaries (rows 19/20 and
 * 12/13 of 40) and the land along the south edge fills the first band's rows with 3 ranks. The bands,
 * the halo's size and the refusal of too many ranks are checked too. The tests/mpi tests check the same
 * over MPI itself; this one also runs in every build and under the sanitizers. The basin is fictional.
 */
#define _POSIX_C_SOURCE 200809L
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <netcdf.h>
#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "model/model.h"
#include "run/run.h"
#include "run/setup.h"
#include "run/split.h"
#include "testutil.h"

#define MAX_RANKS 4

static const char *const BASIN =
    "[run]\n"
    "title = Tiravesk basin (fictional) - split test\n"
    "duration = 5 min\nlayout = %s\ncourant_fraction = 0.9\ngauge_interval = 20 s\n"
    "snapshot_interval = 1 min\narrival_threshold = 0.01 m\n"
    "rotation = f-plane\ncoriolis = 1e-4 /s\nfriction = quadratic\ndrag = 0.0025\n"
    "[grid]\nnx = 36\nny = 40\ndx = 1 km\n"
    "[edges]\n%s\n"
    "[seabed]\ndeep = 800 m\ncoast = south\nshoreline = 14 km\nshelf_depth = 40 m\nshelf_width = 4 km\n"
    "slope_width = 4 km\nmin_depth = 2 m\n"
    "[source Tiravesk rise]\nshape = hump\nx = 18 km\ny = 20 km\namplitude = 1 m\nradius = 4 km\n"
    "[gauges]\nacross 19-20 = 12 km, 20 km\nacross 12-13 = 26 km, 13 km\nacross 26-27 = 20 km, 27 km\n";

/* ---- ranks as threads -------------------------------------------------------------------------- */

typedef struct {
    int n;
    pthread_barrier_t bar;
    sw_model *model[MAX_RANKS];
    long long slot[MAX_RANKS][4];
    void *ptr[MAX_RANKS];
    /* the exchange in parts (fake_start, fake_finish): each rank's lowest and highest rows as sent, by the
     * exchange's parity (a rank is at most one exchange ahead of the neighbour still reading them) */
    char *sent[MAX_RANKS][2][2];   /* [rank][parity][0 lowest rows, 1 highest], eta, u, v one after the other */
    int parity[MAX_RANKS];         /* of the rank's next exchange in parts */
    int pending[MAX_RANKS];        /* 1 from fake_start to fake_finish */
    size_t depth[MAX_RANKS];       /* rows of the pending exchange (the model's halo depth at its start) */
    int changed_in_flight[MAX_RANKS]; /* 1 when a rank's highest rows changed between fake_start and fake_finish */
    int out_of_order[MAX_RANKS];   /* 1 when a rank started an exchange before finishing one, or the reverse */
    long long parts[MAX_RANKS];    /* exchanges in parts completed by each rank */
} fake_job;

typedef struct {
    sw_split sp;
    fake_job *job;
    const char *text, *out;
    int threads;
    long long stop_after;   /* sw_run_options.stop_after_steps */
    int resume;             /* sw_run_options.resume */
    int steps_per_sweep;    /* sw_run_options.steps_per_sweep */
    sw_status rc;
    sw_error err;
} fake_rank;

static void meet(fake_job *j) { pthread_barrier_wait(&j->bar); }

/* The rows of rank nb's band nearest to this rank's, copied into the same rows of m. */
static void copy_rows(sw_split *sp, sw_model *m, int nb, int from_top)
{
    fake_job *j = ((fake_rank *)sp->job)->job;
    size_t a, b;
    const size_t h = sw_model_halo_depth(m);   /* a step's halo, or a sweep's deeper one */
    sw_split_rows(sp->ny, sp->size, nb, &a, &b);
    assert_true(h <= b - a);   /* a neighbour sends rows of its own band only */
    const size_t first = from_top ? b - h + 1 : a + 1;   /* padded rows */
    for (int k = 0; k < 3; k++) {
        size_t rb;
        char *dst = sw_model_field_rows(m, k, first, &rb);
        const char *src = sw_model_field_rows(j->model[nb], k, first, &rb);
        memcpy(dst, src, h * rb);
    }
}

static void fake_halo(void *ctx, sw_model *m)
{
    sw_split *sp = ctx;
    fake_job *j = ((fake_rank *)sp->job)->job;
    const int r = sp->rank, n = sp->size;
    j->model[r] = m;
    meet(j);   /* every band is as the step left it */
    const int south = r > 0 ? r - 1 : sp->ring ? n - 1 : -1, north = r < n - 1 ? r + 1 : sp->ring ? 0 : -1;
    if (south >= 0)
        copy_rows(sp, m, south, 1);
    if (north >= 0)
        copy_rows(sp, m, north, 0);
    meet(j);   /* nobody changes a band while another still copies from it */
    sw_model_wrap_rows(m);
    sp->exchanges++;
}

/* The exchange in parts (split.h halo_start, halo_finish), as MPI does it: every rank hands over copies of its
 * lowest and highest rows (the sends), takes its south neighbour's highest rows at once and its north
 * neighbour's lowest only in fake_finish. Until then the rows above the band hold NaN, so that a sweep
 * reading them before finishing the exchange cannot give the unsplit run's bits; and fake_finish checks
 * that the band's highest rows, still being sent, were not changed meanwhile. */
static void fake_start(void *ctx, sw_model *m)
{
    sw_split *sp = ctx;
    fake_job *j = ((fake_rank *)sp->job)->job;
    const int r = sp->rank, n = sp->size, p = j->parity[r];
    const size_t h = sw_model_halo_depth(m);
    size_t a, b, rb;
    sw_split_rows(sp->ny, n, r, &a, &b);
    assert_true(h <= b - a);
    j->out_of_order[r] |= j->pending[r];
    sw_model_field_rows(m, 0, 0, &rb);
    for (int side = 0; side < 2; side++) {
        free(j->sent[r][p][side]);
        j->sent[r][p][side] = malloc(3 * h * rb);
        for (int k = 0; k < 3; k++)
            memcpy(j->sent[r][p][side] + (size_t)k * h * rb, sw_model_field_rows(m, k, side ? b - h + 1 : a + 1, &rb), h * rb);
    }
    meet(j);   /* every rank's rows are sent */
    if (r > 0) {   /* the south neighbour's highest rows, into the same padded rows here */
        size_t sa, sb;
        sw_split_rows(sp->ny, n, r - 1, &sa, &sb);
        for (int k = 0; k < 3; k++)
            memcpy(sw_model_field_rows(m, k, sb - h + 1, &rb), j->sent[r - 1][p][1] + (size_t)k * h * rb, h * rb);
    }
    if (r < n - 1)   /* still on their way */
        for (int k = 0; k < 3; k++)
            memset(sw_model_field_rows(m, k, b + 1, &rb), 0xff, h * rb);   /* all bits set: NaN, float or double */
    j->pending[r] = 1;
    j->depth[r] = h;
}

static void fake_finish(void *ctx, sw_model *m)
{
    sw_split *sp = ctx;
    fake_job *j = ((fake_rank *)sp->job)->job;
    const int r = sp->rank, n = sp->size, p = j->parity[r];
    const size_t h = j->depth[r];
    size_t a, b, rb;
    sw_split_rows(sp->ny, n, r, &a, &b);
    sw_model_field_rows(m, 0, 0, &rb);
    for (int k = 0; r < n - 1 && k < 3; k++) {
        /* MPI forbids changing rows being sent until the exchange is complete: the highest rows are as sent */
        if (memcmp(sw_model_field_rows(m, k, b - h + 1, &rb), j->sent[r][p][1] + (size_t)k * h * rb, h * rb))
            j->changed_in_flight[r] = 1;   /* checked by run_split_ops (no cmocka assertion off the main thread) */
        /* the north neighbour's lowest rows, into the same padded rows here */
        memcpy(sw_model_field_rows(m, k, b + 1, &rb), j->sent[r + 1][p][0] + (size_t)k * h * rb, h * rb);
    }
    j->out_of_order[r] |= !j->pending[r];
    j->pending[r] = 0;
    j->parity[r] ^= 1;
    j->parts[r]++;
    sw_model_wrap_rows(m);
    sp->exchanges++;
}

static void reduce(sw_split *sp, long long *v, int n, int sum)
{
    fake_job *j = ((fake_rank *)sp->job)->job;
    memcpy(j->slot[sp->rank], v, (size_t)n * sizeof *v);
    meet(j);
    for (int q = 0; q < n; q++) {
        long long x = j->slot[0][q];
        for (int r = 1; r < sp->size; r++)
            x = sum ? x + j->slot[r][q] : (j->slot[r][q] > x ? j->slot[r][q] : x);
        v[q] = x;
    }
    meet(j);
}

static void fake_max(sw_split *sp, long long *v, int n) { reduce(sp, v, n, 0); }
static void fake_sum(sw_split *sp, long long *v, int n) { reduce(sp, v, n, 1); }

static void fake_bcast(sw_split *sp, int from, void *p, size_t bytes)
{
    fake_job *j = ((fake_rank *)sp->job)->job;
    j->ptr[sp->rank] = p;
    meet(j);
    if (sp->rank != from)
        memcpy(p, j->ptr[from], bytes);
    meet(j);
}

static void fake_to_root(sw_split *sp, int from, void *p, size_t bytes)
{
    fake_job *j = ((fake_rank *)sp->job)->job;
    j->ptr[sp->rank] = p;
    meet(j);
    if (sp->rank == 0 && from != 0)
        memcpy(p, j->ptr[from], bytes);
    meet(j);
}

static void fake_gather_rows(sw_split *sp, void *base, size_t row_bytes)
{
    fake_job *j = ((fake_rank *)sp->job)->job;
    j->ptr[sp->rank] = base;
    meet(j);
    for (int r = 1; sp->rank == 0 && r < sp->size; r++) {
        size_t a, b;
        sw_split_rows(sp->ny, sp->size, r, &a, &b);
        memcpy((char *)base + a * row_bytes, (char *)j->ptr[r] + a * row_bytes, (b - a) * row_bytes);
    }
    meet(j);
}

static const sw_split_ops fake_ops = {
    .halo = fake_halo, .max_ll = fake_max, .sum_ll = fake_sum, .bcast = fake_bcast, .to_root = fake_to_root,
    .gather_rows = fake_gather_rows,
};

/* The same with the sweeps' exchange in parts (split.h halo_start, halo_finish; no poll: copies need none). */
static const sw_split_ops fake_ops_parts = {
    .halo = fake_halo, .halo_start = fake_start, .halo_finish = fake_finish, .max_ll = fake_max, .sum_ll = fake_sum,
    .bcast = fake_bcast, .to_root = fake_to_root, .gather_rows = fake_gather_rows,
};

/* ---- runs ---------------------------------------------------------------------------------------- */

/* Runs the scenario text into folder out as one rank (split NULL: unsplit), stopped after stop_after steps
 * when > 0, or resumed from the folder's checkpoint. */
static sw_status run_text_k(const char *text, const char *out, int threads, long long stop_after, int resume,
                            int steps_per_sweep, sw_split *split, sw_error *err)
{
    char dir[1024];
    tu_tmp_path(dir, sizeof dir, "");
    sw_scenario sc;
    sw_status rc = sw_scenario_parse(text, "split.scn", dir, &sc, err);
    if (rc != SW_OK)
        return rc;
    sw_setup setup;
    rc = sw_setup_build(&sc, &setup, err);
    if (rc == SW_OK) {
        sw_run_options opt = {.out_dir = out, .threads = threads, .split = split, .stop_after_steps = stop_after,
                              .resume = resume, .steps_per_sweep = steps_per_sweep};
        sw_run_result *res = calloc(1, sizeof *res);
        rc = res ? sw_run(&sc, &setup, &opt, res, err) : SW_ERR_NOMEM;
        free(res);
        sw_setup_free(&setup);
    }
    sw_scenario_free(&sc);
    return rc;
}

static sw_status run_text(const char *text, const char *out, int threads, long long stop_after, int resume,
                          sw_split *split, sw_error *err)
{
    return run_text_k(text, out, threads, stop_after, resume, 0, split, err);
}

static void *rank_main(void *arg)
{
    fake_rank *fr = arg;
    fr->rc = run_text_k(fr->text, fr->out, fr->threads, fr->stop_after, fr->resume, fr->steps_per_sweep, &fr->sp,
                        &fr->err);
    return NULL;
}

/* Runs text on n ranks (threads of this process) into out, as run_text, with the split operations ops;
 * returns rank 0's status, and when parts is not NULL the exchanges in parts rank 0 completed. */
static sw_status run_split_ops(const char *text, const char *out, int n, int threads, long long stop_after,
                               int resume, int steps_per_sweep, const sw_split_ops *ops, long long *parts,
                               sw_error *err)
{
    fake_job job = {.n = n};
    pthread_barrier_init(&job.bar, NULL, (unsigned)n);
    fake_rank fr[MAX_RANKS];
    pthread_t th[MAX_RANKS];
    for (int r = 0; r < n; r++) {
        fr[r] = (fake_rank){.job = &job, .text = text, .out = out, .threads = threads, .stop_after = stop_after,
                            .resume = resume, .steps_per_sweep = steps_per_sweep};
        fr[r].sp = (sw_split){.rank = r, .size = n, .ops = ops, .job = &fr[r]};
        assert_int_equal(pthread_create(&th[r], NULL, rank_main, &fr[r]), 0);
    }
    for (int r = 0; r < n; r++)
        pthread_join(th[r], NULL);
    pthread_barrier_destroy(&job.bar);
    for (int r = 1; r < n; r++)   /* every rank ends with the job's outcome */
        assert_int_equal(fr[r].rc, fr[0].rc);
    for (int r = 0; r < n; r++) {
        assert_false(job.pending[r]);   /* every exchange begun was finished, */
        assert_false(job.out_of_order[r]);   /* in turn, */
        assert_false(job.changed_in_flight[r]);   /* and no rank changed rows it was still sending */
        for (int q = 0; q < 4; q++)
            free(job.sent[r][q / 2][q % 2]);
    }
    if (parts)
        *parts = job.parts[0];
    *err = fr[0].err;
    return fr[0].rc;
}

static sw_status run_split_k(const char *text, const char *out, int n, int threads, long long stop_after, int resume,
                             int steps_per_sweep, sw_error *err)
{
    return run_split_ops(text, out, n, threads, stop_after, resume, steps_per_sweep, &fake_ops, NULL, err);
}

static sw_status run_split(const char *text, const char *out, int n, int threads, long long stop_after, int resume,
                           sw_error *err)
{
    return run_split_k(text, out, n, threads, stop_after, resume, 0, err);
}

/* Every value of variable `var` of file `name` in both folders, as bytes; 1 when the same. */
static int same_var(const char *a, const char *b, const char *name, const char *var)
{
    char pa[1300], pb[1300];
    snprintf(pa, sizeof pa, "%s/%s", a, name);
    snprintf(pb, sizeof pb, "%s/%s", b, name);
    int fa, fb, va, vb, same = 0;
    if (nc_open(pa, NC_NOWRITE, &fa) != NC_NOERR)
        return 0;
    if (nc_open(pb, NC_NOWRITE, &fb) != NC_NOERR) {
        nc_close(fa);
        return 0;
    }
    if (nc_inq_varid(fa, var, &va) == NC_NOERR && nc_inq_varid(fb, var, &vb) == NC_NOERR) {
        int nd, dims[NC_MAX_VAR_DIMS];
        size_t n = 1;
        nc_inq_varndims(fa, va, &nd);
        nc_inq_vardimid(fa, va, dims);
        for (int d = 0; d < nd; d++) {
            size_t len;
            nc_inq_dimlen(fa, dims[d], &len);
            n *= len;
        }
        double *x = malloc(n * sizeof *x), *y = malloc(n * sizeof *y);
        if (x && y && nc_get_var_double(fa, va, x) == NC_NOERR && nc_get_var_double(fb, vb, y) == NC_NOERR)
            same = memcmp(x, y, n * sizeof *x) == 0;
        free(x);
        free(y);
    }
    nc_close(fa);
    nc_close(fb);
    return same;
}

static void check_same(const char *ref, const char *out, const char *what)
{
    static const char *const vars[][2] = {
        {"gauges.nc", "eta"}, {"gauges.nc", "u"}, {"gauges.nc", "v"}, {"maps.nc", "eta_max"},
        {"maps.nc", "eta_min"}, {"maps.nc", "arrival_time"}, {"maps.nc", "eta_max_time"},
        {"maps.nc", "speed_max"}, {"snapshots.nc", "eta"},
    };
    for (size_t q = 0; q < sizeof vars / sizeof vars[0]; q++)
        if (!same_var(ref, out, vars[q][0], vars[q][1]))
            fail_msg("%s: %s %s differs from the unsplit run", what, vars[q][0], vars[q][1]);
}

static void test_split_equals_unsplit(void **state)
{
    (void)state;
    static const char *const edges[][2] = {
        {"wall-open-level", "west = wall\neast = open\nsouth = level\nnorth = open"},
        {"periodic-ns", "south = periodic\nnorth = periodic\nwest = open\neast = level"},
    };
    char dir[1024];
    tu_tmp_path(dir, sizeof dir, "");
    for (const char *layout = "ABCDE"; *layout; layout++)
        for (size_t e = 0; e < 2; e++) {
            char text[4096], name[8] = {*layout, 0}, ref[1200], out[1200], what[128];
            snprintf(text, sizeof text, BASIN, name, edges[e][1]);
            snprintf(ref, sizeof ref, "%s/split-%s-%s-ref", dir, name, edges[e][0]);
            mkdir(ref, 0777);
            sw_error err = {0};
            if (run_text(text, ref, 1, 0, 0, NULL, &err) != SW_OK)
                fail_msg("%s", err.msg);
            const int cases[][2] = {{2, 1}, {3, 1}, {2, 2}};
            for (size_t c = 0; c < 3; c++) {
                if (cases[c][1] == 2 && e == 0)
                    continue;   /* threads inside ranks: once per layout */
                snprintf(out, sizeof out, "%s/split-%s-%s-%dx%d", dir, name, edges[e][0], cases[c][0], cases[c][1]);
                mkdir(out, 0777);
                if (run_split(text, out, cases[c][0], cases[c][1], 0, 0, &err) != SW_OK)
                    fail_msg("%s", err.msg);
                snprintf(what, sizeof what, "%s %s on %d ranks x %d threads", name, edges[e][0], cases[c][0],
                         cases[c][1]);
                check_same(ref, out, what);
                print_message("  %s: every value the same bits\n", what);
            }
        }
}

/* Sweeps of several steps over memory on split ranks (stepper.c: each rank computes its band and the halo
 * of the sweep's k steps, after one exchange of that deeper halo) give the unsplit run's bits: every layout
 * with wall, open and level edges, 2 ranks with 5 steps a sweep (1 and 2 threads), 3 ranks with 3, and 2
 * ranks asking 16, which the 20-row bands cut to what their halo allows; and with the sweep's exchange in
 * parts (the north side's rows NaN until the sweep finishes it, fake_start), on 2, 3 and 4 ranks. */
static void test_split_sweeps(void **state)
{
    (void)state;
    char dir[1024];
    tu_tmp_path(dir, sizeof dir, "");
    for (const char *layout = "ABCDE"; *layout; layout++) {
        char text[4096], name[8] = {*layout, 0}, ref[1200], out[1200], what[128];
        snprintf(text, sizeof text, BASIN, name, "west = wall\neast = open\nsouth = level\nnorth = open");
        snprintf(ref, sizeof ref, "%s/sweeps-%s-ref", dir, name);
        mkdir(ref, 0777);
        sw_error err = {0};
        if (run_text_k(text, ref, 1, 0, 0, 1, NULL, &err) != SW_OK)
            fail_msg("%s", err.msg);
        /* ranks, threads, steps a sweep, the sweep's exchange in parts (its north side finished in the sweep) */
        const int cases[][4] = {{2, 1, 5, 0}, {2, 2, 5, 0}, {3, 1, 3, 0}, {2, 1, 16, 0}, {2, 1, 5, 1}, {3, 2, 3, 1},
                                {4, 1, 2, 1}};
        for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
            snprintf(out, sizeof out, "%s/sweeps-%s-%dx%d-k%d%s", dir, name, cases[c][0], cases[c][1], cases[c][2],
                     cases[c][3] ? "-parts" : "");
            mkdir(out, 0777);
            long long parts = 0;
            if (run_split_ops(text, out, cases[c][0], cases[c][1], 0, 0, cases[c][2],
                              cases[c][3] ? &fake_ops_parts : &fake_ops, &parts, &err) != SW_OK)
                fail_msg("%s", err.msg);
            if (cases[c][3])   /* the sweeps did take their exchange in parts */
                assert_true(parts > 0);
            snprintf(what, sizeof what, "%s on %d ranks x %d threads, %d steps a sweep%s", name, cases[c][0],
                     cases[c][1], cases[c][2], cases[c][3] ? ", exchange in parts" : "");
            check_same(ref, out, what);
            print_message("  %s: every value the same bits\n", what);
        }
    }
}

static void test_bands_and_refusal(void **state)
{
    (void)state;
    size_t a, b, covered = 0;
    for (int r = 0; r < 3; r++) {   /* bands tile the rows in order, sizes within one */
        sw_split_rows(40, 3, r, &a, &b);
        assert_int_equal(a, covered);
        assert_true(b - a == 13 || b - a == 14);
        covered = b;
    }
    assert_int_equal(covered, 40);
    char text[4096];
    snprintf(text, sizeof text, BASIN, "C", "all = wall");
    char dir[1024], out[1200];
    tu_tmp_path(dir, sizeof dir, "");
    snprintf(out, sizeof out, "%s/split-too-many", dir);
    mkdir(out, 0777);
    sw_error err = {0};   /* 4 bands of 40 rows are fine; a 6-row grid on 4 ranks is not */
    char thin[4096];
    snprintf(thin, sizeof thin, "%s", text);
    char *ny = strstr(thin, "ny = 40");
    memcpy(ny, "ny = 06", 7);
    char *g = strstr(thin, "[gauges]");
    *g = '\0';
    char *y = strstr(thin, "y = 20 km");
    memcpy(y, "y = 03 km", 9);
    char *shore = strstr(thin, "shoreline = 14 km");
    memcpy(shore, "shoreline = 01 km", 17);
    assert_int_equal(run_split(thin, out, 4, 1, 0, 0, &err), SW_ERR_USAGE);
    print_message("  %s\n", err.msg);
    assert_non_null(strstr(err.msg, "4 ranks are too many for a grid of 6 rows"));
    assert_non_null(strstr(err.msg, "at most 3 ranks"));
    char p[1300];
    snprintf(p, sizeof p, "%s/maps.nc", out);
    struct stat st;
    assert_true(stat(p, &st) != 0);   /* nothing written */
}

/* A split run stopped half-way writes one checkpoint (rank 0, from every band); resumed on another number
 * of ranks, or on one process, it ends with the files of a run never stopped (run/checkpoint.h). */
static void test_checkpoint_across_ranks(void **state)
{
    (void)state;
    char dir[1024], ref[1200], text[4096];
    tu_tmp_path(dir, sizeof dir, "");
    snprintf(text, sizeof text, BASIN, "D", "south = periodic\nnorth = periodic\nwest = open\neast = level");
    static const char every[] = "checkpoint_interval = 1 min\n";   /* the end of [run] */
    char *run = strstr(text, "[grid]");
    memmove(run + strlen(every), run, strlen(run) + 1);
    memcpy(run, every, strlen(every));
    snprintf(ref, sizeof ref, "%s/split-ckpt-ref", dir);
    mkdir(ref, 0777);
    sw_error err = {0};
    if (run_text(text, ref, 1, 0, 0, NULL, &err) != SW_OK)
        fail_msg("%s", err.msg);
    const int stopped_on[] = {3, 2, 1}, resumed_on[] = {2, 1, 3};
    for (int c = 0; c < 3; c++) {
        char out[1200];
        snprintf(out, sizeof out, "%s/split-ckpt-%d-%d", dir, stopped_on[c], resumed_on[c]);
        mkdir(out, 0777);
        sw_status rc = stopped_on[c] > 1 ? run_split(text, out, stopped_on[c], 1, 10, 0, &err)
                                         : run_text(text, out, 1, 10, 0, NULL, &err);
        print_message("  stopped on %d: %s\n", stopped_on[c], err.msg);
        assert_int_equal(rc, SW_ERR_INTERRUPTED);
        assert_non_null(strstr(err.msg, "checkpoint written"));
        rc = resumed_on[c] > 1 ? run_split(text, out, resumed_on[c], 1, 0, 1, &err)
                               : run_text(text, out, 1, 0, 1, NULL, &err);
        if (rc != SW_OK)
            fail_msg("%s", err.msg);
        char what[128];
        snprintf(what, sizeof what, "stopped on %d rank(s), resumed on %d", stopped_on[c], resumed_on[c]);
        check_same(ref, out, what);
        print_message("  %s: every value the same bits as the run never stopped\n", what);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_checkpoint_across_ranks),
        cmocka_unit_test(test_bands_and_refusal),
        cmocka_unit_test(test_split_equals_unsplit), cmocka_unit_test(test_split_sweeps),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
