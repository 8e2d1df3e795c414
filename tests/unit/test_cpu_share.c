/* test_cpu_share.c - the free-core measurement's parsers and the thread and waiting choice (base/cpu_share.h).
 *
 * Sources of the formats (texts below are invented samples of them):
 *  - /proc/stat "cpuN user nice system idle iowait irq softirq steal guest guest_nice", clock ticks, guest
 *    already counted in user; /proc/loadavg "L1 L5 L15 RUNNING/TASKS LASTPID": proc(5), Linux man-pages
 *    [memory].
 *  - cgroup v2 cpu.max "QUOTA PERIOD" or "max PERIOD", microseconds; v1 cpu.cfs_quota_us (-1 = none) and
 *    cpu.cfs_period_us: Documentation/admin-guide/cgroup-v2.rst and scheduler/sched-bwc.rst of the Linux
 *    kernel [memory].
 *  - libgomp reads OMP_WAIT_POLICY / GOMP_SPINCOUNT / OMP_NUM_THREADS once, at load: libgomp manual,
 *    "Environment variables" [memory]; checked on this project's gcc 12 with a setenv() in main (no effect).
 * Every expected number is [derived] from the sample texts by hand; the decision table is this project's
 * rule (cpu_share.h), not a published one.
 */
#define _POSIX_C_SOURCE 200809L
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include <cmocka.h>

#include "base/cpu_share.h"
#include "base/omp_compat.h"
#include "testutil.h"

#define assert_near(got, want, tol) near_check((got), (want), (tol), __FILE__, __LINE__)
static void near_check(double got, double want, double tol, const char *file, int line)
{
    if (!(fabs(got - want) <= tol)) {
        print_error("%.17g != %.17g (tolerance %g)\n", got, want, tol);
        _fail(file, line);
    }
}

/* An invented /proc/stat of a 2-CPU machine, in the modern 10-counter form. */
static const char *const STAT_A =
    "cpu  2000 10 600 90000 400 0 50 0 0 0\n"
    "cpu0 1000 5 300 45000 200 0 25 0 0 0\n"
    "cpu1 1000 5 300 45000 200 0 25 7 0 0\n"
    "intr 123456 0 0\n"
    "ctxt 987654\n"
    "btime 1700000000\n"
    "processes 4242\n"
    "procs_running 2\n"
    "procs_blocked 0\n"
    "softirq 1 2 3\n";

static void test_stat_parse(void **state)
{
    (void)state;
    sw_cpu_times t[4];
    size_t n = 99;
    sw_error err = {0};
    assert_int_equal(sw_cpu_stat_parse(STAT_A, "stat", t, 4, &n, &err), SW_OK);
    assert_int_equal(n, 2);   /* the aggregate "cpu" line is not a CPU */
    assert_int_equal(t[0].cpu, 0);
    assert_int_equal(t[1].cpu, 1);
    assert_true(t[0].idle == 45200ULL);                                       /* idle + iowait [derived] */
    assert_true(t[0].total == 1000ULL + 5 + 300 + 45000 + 200 + 0 + 25 + 0);  /* guest not added twice */
    assert_true(t[1].total == 1000ULL + 5 + 300 + 45000 + 200 + 0 + 25 + 7);  /* steal counts as taken */

    /* an old kernel's four counters; CPUs numbered with gaps (offline CPU 1); a cap of 1 keeps the first */
    const char *old = "cpu 1 2 3 4\ncpu0 10 0 5 100\ncpu2 20 0 5 50\n";
    assert_int_equal(sw_cpu_stat_parse(old, "stat", t, 4, &n, &err), SW_OK);
    assert_int_equal(n, 2);
    assert_int_equal(t[1].cpu, 2);
    assert_true(t[1].idle == 50ULL && t[1].total == 75ULL);
    assert_int_equal(sw_cpu_stat_parse(old, "stat", t, 1, &n, &err), SW_OK);
    assert_int_equal(n, 1);
    assert_int_equal(sw_cpu_stat_parse("", "stat", t, 4, &n, &err), SW_OK);
    assert_int_equal(n, 0);

    /* damaged: too few counters, text among them; the message names file and line */
    assert_int_equal(sw_cpu_stat_parse("cpu 1 2 3 4\ncpu0 1 2 3\n", "proc-stat", t, 4, &n, &err), SW_ERR_PARSE);
    assert_non_null(strstr(err.msg, "proc-stat:2:"));
    assert_non_null(strstr(err.msg, "at least 4"));
    assert_int_equal(n, 0);
    assert_int_equal(sw_cpu_stat_parse("cpu0 1 2 x 4 5\n", "proc-stat", t, 4, &n, &err), SW_ERR_PARSE);
    assert_non_null(strstr(err.msg, "proc-stat:1:"));
    assert_int_equal(sw_cpu_stat_parse("cpu0 1 2 3 4 five\n", "proc-stat", t, 4, &n, &err), SW_ERR_PARSE);
    assert_non_null(strstr(err.msg, "other text"));
    assert_int_equal(sw_cpu_stat_parse(NULL, "x", t, 4, &n, &err), SW_ERR_USAGE);
}

static void test_busy_cores(void **state)
{
    (void)state;
    /* cpu0: 5 ticks, all busy; cpu1: 5 ticks, all idle; cpu2: 10 ticks, 4 idle; cpu3 stands still */
    const sw_cpu_times a[] = {{0, 100, 1000}, {1, 500, 1000}, {2, 10, 100}, {3, 7, 70}};
    const sw_cpu_times b[] = {{0, 100, 1005}, {1, 505, 1005}, {2, 14, 110}, {3, 7, 70}};
    const unsigned char all[4] = {1, 1, 1, 1}, only1[4] = {0, 1, 0, 0}, only02[3] = {1, 0, 1};
    assert_near(sw_cpu_busy_cores(a, 4, b, 4, all, 4, 0), 1.0 + 0.0 + 0.6, 1e-12);   /* [derived] */
    assert_near(sw_cpu_busy_cores(a, 4, b, 4, only1, 4, 0), 0.0, 1e-12);
    assert_near(sw_cpu_busy_cores(a, 4, b, 4, only02, 3, 0), 1.6, 1e-12);
    /* this process's own CPU time is not other work */
    assert_near(sw_cpu_busy_cores(a, 4, b, 4, only02, 3, 0.5), 1.1, 1e-12);
    assert_near(sw_cpu_busy_cores(a, 4, b, 4, only02, 3, 5.0), 0.0, 1e-12);
    /* a CPU missing from one reading is not counted; none counted: -1 */
    assert_near(sw_cpu_busy_cores(a, 1, b, 4, all, 4, 0), 1.0, 1e-12);
    assert_near(sw_cpu_busy_cores(a + 3, 1, b + 3, 1, all, 4, 0), -1.0, 0);   /* no tick passed */
    assert_near(sw_cpu_busy_cores(a, 4, b, 4, only1, 1, 0), -1.0, 0);         /* cpu1 beyond the mask */
    /* counters that went back (a CPU taken offline and on again) are skipped */
    const sw_cpu_times back[] = {{0, 90, 900}};
    assert_near(sw_cpu_busy_cores(a, 1, back, 1, all, 4, 0), -1.0, 0);
}

static void test_loadavg_parse(void **state)
{
    (void)state;
    int running = 0, tasks = 0;
    sw_error err = {0};
    assert_int_equal(sw_loadavg_parse("0.52 0.41 0.30 3/412 12345\n", "la", &running, &tasks, &err), SW_OK);
    assert_int_equal(running, 3);
    assert_int_equal(tasks, 412);
    assert_int_equal(sw_loadavg_parse("1.00 1.00 1.00 1/90 7", "la", &running, &tasks, &err), SW_OK);
    assert_int_equal(running, 1);
    static const char *const bad[] = {"", "0.5 0.4 0.3", "0.5 0.4 0.3 0/10 1", "0.5 0.4 0.3 5/4 1",
                                      "a b c 1/2 3", "0.5 0.4 0.3 2 1"};
    for (size_t q = 0; q < sizeof bad / sizeof bad[0]; q++) {
        assert_int_equal(sw_loadavg_parse(bad[q], "loadavg-text", &running, &tasks, &err), SW_ERR_PARSE);
        assert_non_null(strstr(err.msg, "loadavg-text:"));
        assert_non_null(strstr(err.msg, "RUNNING/TASKS"));
    }
}

static void test_cpu_max_parse(void **state)
{
    (void)state;
    double cores = -1;
    sw_error err = {0};
    assert_int_equal(sw_cpu_max_parse("max 100000\n", "cpu.max", &cores, &err), SW_OK);
    assert_near(cores, 0, 0);
    assert_int_equal(sw_cpu_max_parse("150000 100000\n", "cpu.max", &cores, &err), SW_OK);
    assert_near(cores, 1.5, 1e-12);   /* 150 ms per 100 ms period [derived] */
    assert_int_equal(sw_cpu_max_parse("50000 100000", "cpu.max", &cores, &err), SW_OK);
    assert_near(cores, 0.5, 1e-12);
    assert_int_equal(sw_cpu_max_parse("-1 100000", "cfs", &cores, &err), SW_OK);   /* v1: no quota */
    assert_near(cores, 0, 0);
    static const char *const bad[] = {"", "max", "100000", "abc 100000", "100000 0", "0 100000",
                                      "1000 100000 extra", "1e400 100000"};
    for (size_t q = 0; q < sizeof bad / sizeof bad[0]; q++) {
        assert_int_equal(sw_cpu_max_parse(bad[q], "cg/cpu.max", &cores, &err), SW_ERR_PARSE);
        assert_non_null(strstr(err.msg, "cg/cpu.max:"));
        assert_non_null(strstr(err.msg, "max PERIOD"));
    }
}

/* ---- the decision table ----------------------------------------------------------------------------- */

enum { Q_QUIET, Q_ONE_BUSY, Q_PART_BUSY, Q_ALL_BUSY, Q_UNKNOWN, Q_QUOTA, Q_FOUR_TWO, Q_NONE };

/* The loads of the table: 2 cores quiet, one busy, 0.4 of one busy, both busy, unknown, a quota of 1.5
 * cores on a quiet machine, 4 cores with 2 busy; Q_NONE = not measured (NULL). */
static const sw_cpu_load *load_of(int q)
{
    static const sw_cpu_load loads[] = {
        {.cores = 2, .busy_cores = 0.0, .others_running = 0},
        {.cores = 2, .busy_cores = 1.0, .others_running = 1, .sample_s = 0.05},
        {.cores = 2, .busy_cores = 0.4, .others_running = 1, .sample_s = 0.05},
        {.cores = 2, .busy_cores = 2.0, .others_running = 3, .sample_s = 0.05},
        {.cores = 2, .busy_cores = -1, .others_running = -1},
        {.cores = 2, .quota_cores = 1.5, .busy_cores = 0.0, .others_running = 0},
        {.cores = 4, .busy_cores = 2.0, .others_running = 2, .sample_s = 0.05},
    };
    return q == Q_NONE ? NULL : &loads[q];
}

typedef struct {
    int load;                   /* Q_... */
    int option;                 /* --threads */
    const char *num, *wait, *spin, *sw;   /* OMP_NUM_THREADS, OMP_WAIT_POLICY, GOMP_SPINCOUNT, the switch */
    int threads;                /* expected */
    sw_threads_from from;
    sw_wait how;
    const char *note;           /* a part the reason must hold */
} row;

static const row TABLE[] = {
    /* automatic: threads = free cores; spin while each has a core */
    {Q_QUIET, 0, NULL, NULL, NULL, NULL, 2, SW_THREADS_AUTO, SW_WAIT_SPIN, "all 2 cores free"},
    {Q_ONE_BUSY, 0, NULL, NULL, NULL, NULL, 1, SW_THREADS_AUTO, SW_WAIT_SPIN, "1 of 2 cores busy with other work"},
    {Q_PART_BUSY, 0, NULL, NULL, NULL, NULL, 2, SW_THREADS_AUTO, SW_WAIT_PASSIVE, "0.4 of 2 cores busy"},
    {Q_ALL_BUSY, 0, NULL, NULL, NULL, NULL, 1, SW_THREADS_AUTO, SW_WAIT_SPIN, "2 of 2 cores busy"},
    {Q_UNKNOWN, 0, NULL, NULL, NULL, NULL, 2, SW_THREADS_AUTO, SW_WAIT_SPIN, "load unknown"},
    {Q_QUOTA, 0, NULL, NULL, NULL, NULL, 2, SW_THREADS_AUTO, SW_WAIT_PASSIVE, "a CPU quota of 1.5 cores"},
    {Q_FOUR_TWO, 0, NULL, NULL, NULL, "on", 2, SW_THREADS_AUTO, SW_WAIT_SPIN, "2 of 4 cores busy"},
    {Q_NONE, 0, NULL, NULL, NULL, "", 1, SW_THREADS_AUTO, SW_WAIT_SPIN, ""},
    /* --threads wins over the load; the waiting follows the load unless the user set it */
    {Q_ONE_BUSY, 2, NULL, NULL, NULL, NULL, 2, SW_THREADS_OPTION, SW_WAIT_PASSIVE, "set by --threads"},
    {Q_ONE_BUSY, 1, NULL, NULL, NULL, NULL, 1, SW_THREADS_OPTION, SW_WAIT_SPIN, "set by --threads"},
    {Q_QUIET, 2, NULL, NULL, NULL, NULL, 2, SW_THREADS_OPTION, SW_WAIT_SPIN, "all 2 cores free"},
    {Q_QUIET, 4, NULL, NULL, NULL, NULL, 4, SW_THREADS_OPTION, SW_WAIT_PASSIVE, "passive waiting"},
    {Q_ONE_BUSY, 2, "1", NULL, NULL, NULL, 2, SW_THREADS_OPTION, SW_WAIT_PASSIVE, "set by --threads"},
    /* OMP_NUM_THREADS wins; a list or a bad value leaves the count to OpenMP (0) */
    {Q_ONE_BUSY, 0, "2", NULL, NULL, NULL, 2, SW_THREADS_ENV, SW_WAIT_PASSIVE, "set by OMP_NUM_THREADS"},
    {Q_QUIET, 0, " 1 ", NULL, NULL, NULL, 1, SW_THREADS_ENV, SW_WAIT_SPIN, "set by OMP_NUM_THREADS"},
    {Q_QUIET, 0, "2,1", NULL, NULL, NULL, 0, SW_THREADS_ENV, SW_WAIT_SPIN, "set by OMP_NUM_THREADS"},
    {Q_ONE_BUSY, 0, "lots", NULL, NULL, NULL, 0, SW_THREADS_ENV, SW_WAIT_PASSIVE, "passive waiting"},
    /* the user's waiting wins, and the threads are still chosen (on whole free cores only) */
    {Q_ONE_BUSY, 2, NULL, "active", NULL, NULL, 2, SW_THREADS_OPTION, SW_WAIT_USER, "OMP_WAIT_POLICY=active"},
    {Q_PART_BUSY, 0, NULL, "ACTIVE", NULL, NULL, 1, SW_THREADS_AUTO, SW_WAIT_USER, "OMP_WAIT_POLICY=ACTIVE"},
    {Q_ONE_BUSY, 0, NULL, NULL, "1000", NULL, 1, SW_THREADS_AUTO, SW_WAIT_USER, "GOMP_SPINCOUNT=1000"},
    {Q_ONE_BUSY, 0, NULL, "passive", "1000", NULL, 1, SW_THREADS_AUTO, SW_WAIT_USER, "OMP_WAIT_POLICY=passive"},
    /* the switch off: OpenMP's defaults, or what the user set */
    {Q_ONE_BUSY, 0, NULL, NULL, NULL, "off", 0, SW_THREADS_DEFAULT, SW_WAIT_SPIN, "automatic choice off"},
    {Q_NONE, 2, NULL, NULL, NULL, "off", 2, SW_THREADS_OPTION, SW_WAIT_SPIN, "set by --threads"},
    {Q_NONE, 0, "3", "passive", NULL, "off", 3, SW_THREADS_ENV, SW_WAIT_USER, "OMP_WAIT_POLICY=passive"},
};

static void test_decide_table(void **state)
{
    (void)state;
    for (size_t q = 0; q < sizeof TABLE / sizeof TABLE[0]; q++) {
        const row *r = &TABLE[q];
        sw_cpu_wishes w = {r->option, r->num, r->wait, r->spin, r->sw};
        sw_cpu_choice c;
        sw_error err = {0};
        print_message("row %zu: load %d --threads %d OMP_NUM_THREADS %s OMP_WAIT_POLICY %s GOMP_SPINCOUNT %s "
                      "switch %s\n", q, r->load, r->option, r->num ? r->num : "-", r->wait ? r->wait : "-",
                      r->spin ? r->spin : "-", r->sw ? r->sw : "-");
        assert_int_equal(sw_cpu_share_decide(load_of(r->load), &w, &c, &err), SW_OK);
        print_message("    -> %d threads, from %d, wait %d: %s\n", c.threads, (int)c.from, (int)c.wait, c.note);
        assert_int_equal(c.threads, r->threads);
        assert_int_equal(c.from, r->from);
        assert_int_equal(c.wait, r->how);
        assert_non_null(strstr(c.note, r->note));
        assert_int_equal(sw_cpu_share_needs_restart(&c), r->how == SW_WAIT_PASSIVE);
        assert_true(c.cores >= 1);
    }
}

static void test_decide_edges(void **state)
{
    (void)state;
    sw_cpu_wishes w = {0};
    sw_cpu_choice c;
    sw_error err = {0};
    /* 2 cores: 1.15 free -> 1 thread; 1.25 free -> 2 passive (1.25 x 0.93 > 1.1 x 1), 1.95 -> 2 spinning */
    sw_cpu_load l = {.cores = 2, .busy_cores = 0.85};
    assert_int_equal(sw_cpu_share_decide(&l, &w, &c, &err), SW_OK);
    assert_int_equal(c.threads, 1);
    assert_near(c.free_cores, 1.15, 1e-12);
    l.busy_cores = 0.75;
    assert_int_equal(sw_cpu_share_decide(&l, &w, &c, &err), SW_OK);
    assert_int_equal(c.threads, 2);
    assert_int_equal(c.wait, SW_WAIT_PASSIVE);
    /* the same load with the user's waiting: only whole cores (the user's waiting may spin) */
    w.omp_wait_policy = "active";
    assert_int_equal(sw_cpu_share_decide(&l, &w, &c, &err), SW_OK);
    assert_int_equal(c.threads, 1);
    assert_int_equal(c.wait, SW_WAIT_USER);
    w.omp_wait_policy = NULL;
    /* 64 cores, 3.2 busy: 60 threads spinning rather than 61 waiting passively (60.8 x 0.93 < 1.1 x 60) */
    sw_cpu_load big = {.cores = 64, .busy_cores = 3.2};
    assert_int_equal(sw_cpu_share_decide(&big, &w, &c, &err), SW_OK);
    assert_int_equal(c.threads, 60);
    assert_int_equal(c.wait, SW_WAIT_SPIN);
    /* 4 cores, 1.5 busy: 3 threads waiting passively (2.5 x 0.93 > 1.1 x 2) */
    sw_cpu_load four = {.cores = 4, .busy_cores = 1.5};
    assert_int_equal(sw_cpu_share_decide(&four, &w, &c, &err), SW_OK);
    assert_int_equal(c.threads, 3);
    assert_int_equal(c.wait, SW_WAIT_PASSIVE);
    l.busy_cores = 0.05;
    assert_int_equal(sw_cpu_share_decide(&l, &w, &c, &err), SW_OK);
    assert_int_equal(c.threads, 2);
    assert_int_equal(c.wait, SW_WAIT_SPIN);   /* within the 0.1 core of slack for the ticks */
    /* a busy share beyond the cores (ticks' rounding) still leaves one thread */
    l.busy_cores = 2.6;
    assert_int_equal(sw_cpu_share_decide(&l, &w, &c, &err), SW_OK);
    assert_int_equal(c.threads, 1);
    assert_near(c.free_cores, 0, 0);
    /* one core only */
    sw_cpu_load one = {.cores = 1, .busy_cores = 0};
    assert_int_equal(sw_cpu_share_decide(&one, &w, &c, &err), SW_OK);
    assert_int_equal(c.threads, 1);
    assert_non_null(strstr(c.note, "its 1 core free"));
    /* a quota below one core leaves one core; the quota caps the free share */
    sw_cpu_load quota = {.cores = 8, .quota_cores = 0.5, .busy_cores = 0};
    assert_int_equal(sw_cpu_share_decide(&quota, &w, &c, &err), SW_OK);
    assert_int_equal(c.cores, 1);
    assert_int_equal(c.threads, 1);
    assert_near(c.free_cores, 0.5, 1e-12);
    quota.busy_cores = 3;   /* others on the machine's 8 CPUs leave the quota whole */
    assert_int_equal(sw_cpu_share_decide(&quota, &w, &c, &err), SW_OK);
    assert_near(c.free_cores, 0.5, 1e-12);
    assert_non_null(strstr(c.note, "3 of 8 cores busy with other work, a CPU quota of 0.5 cores"));
    /* a bad switch value is refused with the accepted values, and leaves the switch off */
    w.auto_switch = "maybe";
    assert_int_equal(sw_cpu_share_decide(&l, &w, &c, &err), SW_ERR_USAGE);
    assert_non_null(strstr(err.msg, "SHOREWARD_THREADS_AUTO = 'maybe'"));
    assert_non_null(strstr(err.msg, "on and off"));
    assert_int_equal(c.from, SW_THREADS_DEFAULT);
    assert_int_equal(sw_cpu_share_decide(&l, NULL, &c, &err), SW_ERR_USAGE);
}

static void test_wants_load(void **state)
{
    (void)state;
    sw_cpu_wishes w = {0};
    assert_true(sw_cpu_share_wants_load(&w));
    w.threads_option = 2;
    assert_true(sw_cpu_share_wants_load(&w));   /* the waiting still depends on the load */
    w.omp_wait_policy = "active";
    assert_false(sw_cpu_share_wants_load(&w));  /* the user fixed both */
    w.threads_option = 0;
    assert_true(sw_cpu_share_wants_load(&w));
    w.omp_num_threads = "2";
    assert_false(sw_cpu_share_wants_load(&w));
    sw_cpu_wishes off = {.auto_switch = "off"};
    assert_false(sw_cpu_share_wants_load(&off));
    assert_false(sw_cpu_share_wants_load(NULL));
}

/* ---- the restart and the process's choice ----------------------------------------------------------- */

/* Saves an environment variable's value (NULL when unset) and restores it. */
typedef struct {
    const char *name;
    char value[256];
    int set;
} saved_env;
static void env_save(saved_env *s, const char *name)
{
    s->name = name;
    const char *v = getenv(name);
    s->set = v != NULL;
    snprintf(s->value, sizeof s->value, "%s", v ? v : "");
}
static void env_restore(const saved_env *s)
{
    if (s->set)
        setenv(s->name, s->value, 1);
    else
        unsetenv(s->name);
}

static void test_encode_decode(void **state)
{
    (void)state;
    sw_cpu_choice c = {.threads = 2, .from = SW_THREADS_OPTION, .wait = SW_WAIT_PASSIVE, .cores = 2,
                       .free_cores = 1.0};
    snprintf(c.note, sizeof c.note, "set by --threads; 1 of 2 cores busy with other work; passive waiting");
    char buf[320];
    sw_cpu_share_encode(&c, buf, sizeof buf);
    sw_cpu_choice d;
    assert_int_equal(sw_cpu_share_decode(buf, &d), 1);
    assert_int_equal(d.threads, 2);
    assert_int_equal(d.from, SW_THREADS_OPTION);
    assert_int_equal(d.wait, SW_WAIT_PASSIVE);
    assert_int_equal(d.cores, 2);
    assert_near(d.free_cores, 1.0, 1e-4);
    assert_string_equal(d.note, c.note);
    static const char *const bad[] = {"", "v1", "v2 2 1 1 2 1.0|x", "v1 2 1 1 2 1.0 x", "v1 2 9 1 2 1.0|x",
                                      "v1 2 1 7 2 1.0|x", "v1 -1 1 1 2 1.0|x", "v1 2 1 1 0 1.0|x",
                                      "v1 2 1 1 2 nan|x", "v1 2 1 1 2 1.0|two\nlines"};
    for (size_t q = 0; q < sizeof bad / sizeof bad[0]; q++)
        assert_int_equal(sw_cpu_share_decode(bad[q], &d), 0);
}

static void test_export_import(void **state)
{
    (void)state;
    saved_env wp, cs;
    env_save(&wp, "OMP_WAIT_POLICY");
    env_save(&cs, SW_CPU_SHARE_ENV);
    sw_cpu_choice c = {.threads = 3, .from = SW_THREADS_AUTO, .wait = SW_WAIT_PASSIVE, .cores = 4,
                       .free_cores = 2.6};
    snprintf(c.note, sizeof c.note, "1.4 of 4 cores busy with other work; passive waiting");
    sw_error err = {0};
    assert_int_equal(sw_cpu_share_export(&c, &err), SW_OK);
    assert_string_equal(getenv("OMP_WAIT_POLICY"), "passive");
    assert_non_null(getenv(SW_CPU_SHARE_ENV));
    sw_cpu_choice d;
    assert_int_equal(sw_cpu_share_import(&d), 1);
    assert_null(getenv(SW_CPU_SHARE_ENV));   /* children measure for themselves */
    assert_int_equal(d.threads, 3);
    assert_string_equal(d.note, c.note);
    assert_int_equal(sw_cpu_share_import(&d), 0);   /* taken once */
    setenv(SW_CPU_SHARE_ENV, "garbage", 1);
    assert_int_equal(sw_cpu_share_import(&d), 0);
    assert_null(getenv(SW_CPU_SHARE_ENV));   /* a malformed value is dropped too */
    sw_cpu_share_unexport();
    assert_null(getenv("OMP_WAIT_POLICY"));
    env_restore(&wp);
    env_restore(&cs);
}

static void test_apply_and_note(void **state)
{
    (void)state;
    const int before = omp_get_max_threads();
    sw_cpu_choice c = {.threads = 1, .from = SW_THREADS_AUTO, .wait = SW_WAIT_SPIN, .cores = 2, .free_cores = 1};
    snprintf(c.note, sizeof c.note, "1 of 2 cores busy with other work");
    sw_cpu_share_apply(&c);
    assert_int_equal(omp_get_max_threads(), 1);
    assert_string_equal(sw_cpu_share_note(1), "1 of 2 cores busy with other work");
    assert_string_equal(sw_cpu_share_note(2), "");   /* a run that set other threads gets no stale reason */
    c.threads = 0;                                   /* OpenMP's default: any count is the recorded one */
    snprintf(c.note, sizeof c.note, "automatic choice off by SHOREWARD_THREADS_AUTO=off");
    sw_cpu_share_apply(&c);
    assert_int_equal(omp_get_max_threads(), 1);      /* 0 changes nothing */
    assert_non_null(strstr(sw_cpu_share_note(7), "choice off"));
    omp_set_num_threads(before);
}

/* ---- a run following the load: readings at the stretches' ends, and the count for the next ------------ */

/* Invented /proc/stat readings of a 2-CPU machine, 2 s apart at 100 ticks per s (200 ticks per CPU), for a
 * run whose stretch ended at B_*: the counters of each CPU are "user nice system idle iowait irq softirq
 * steal guest guest_nice". */
static const char *const STAT_T0 =
    "cpu  20000 0 4000 100000 200 0 0 0 0 0\n"
    "cpu0 10000 0 2000 50000 100 0 0 0 0 0\n"
    "cpu1 10000 0 2000 50000 100 0 0 0 0 0\n"
    "intr 1 2 3\n";
/* both CPUs busy all 200 ticks (user 190 + system 10 each) */
static const char *const STAT_BOTH_BUSY =
    "cpu  20380 0 4020 100000 200 0 0 0 0 0\n"
    "cpu0 10190 0 2010 50000 100 0 0 0 0 0\n"
    "cpu1 10190 0 2010 50000 100 0 0 0 0 0\n";
/* cpu0 busy all 200 ticks; cpu1 busy 4 ticks, idle 195, iowait 1 */
static const char *const STAT_ONE_BUSY =
    "cpu  20194 0 4010 100195 201 0 0 0 0 0\n"
    "cpu0 10190 0 2010 50000 100 0 0 0 0 0\n"
    "cpu1 10004 0 2000 50195 101 0 0 0 0 0\n";

/* The reading of `text` (parsed into t[4]) at wall_s with this process's CPU time own_s. */
static sw_cpu_reading reading_of(const char *text, sw_cpu_times *t, double wall_s, double own_s)
{
    size_t n = 0;
    assert_int_equal(sw_cpu_stat_parse(text, "stat", t, 4, &n, NULL), SW_OK);
    return (sw_cpu_reading){.cpus = t, .n_cpus = n, .wall_s = wall_s, .own_cpu_s = own_s};
}

static void test_busy_between(void **state)
{
    (void)state;
    sw_cpu_times t0[4], t1[4];
    const unsigned char both[2] = {1, 1}, only1[2] = {0, 1};
    const sw_cpu_reading a = reading_of(STAT_T0, t0, 100.0, 50.0);
    /* quiet, 2 threads spinning: both CPUs busy, all of it this process's (4 s of CPU in 2 s) [derived] */
    sw_cpu_reading b = reading_of(STAT_BOTH_BUSY, t1, 102.0, 54.0);
    assert_near(sw_cpu_busy_between(&a, &b, both, 2), 0.0, 1e-12);
    /* a busy loop on cpu1 shares it with one of the 2 threads: 3 s of CPU ours, 1 s (0.5 core) theirs */
    b.own_cpu_s = 53.0;
    assert_near(sw_cpu_busy_between(&a, &b, both, 2), 0.5, 1e-12);
    /* 1 thread and the loop holding cpu1: 2 s ours, 1 core theirs */
    b.own_cpu_s = 52.0;
    assert_near(sw_cpu_busy_between(&a, &b, both, 2), 1.0, 1e-12);
    /* only cpu1 allowed (taskset): its 200 busy ticks less our 2 s / 2 s [derived] */
    assert_near(sw_cpu_busy_between(&a, &b, only1, 2), 0.0, 1e-12);
    /* 1 thread on a quiet machine: cpu1 busy 4 of 200 ticks, 0.02 core that is not ours */
    b = reading_of(STAT_ONE_BUSY, t1, 102.0, 52.0);
    assert_near(sw_cpu_busy_between(&a, &b, both, 2), 0.02, 1e-12);
    /* our CPU time a little beyond the ticks (the ticks are sampled): clamped at 0 */
    b.own_cpu_s = 52.1;
    assert_near(sw_cpu_busy_between(&a, &b, both, 2), 0.0, 1e-12);
    /* no interval, or /proc/stat unreadable at either end: unknown */
    b.wall_s = a.wall_s;
    assert_near(sw_cpu_busy_between(&a, &b, both, 2), -1.0, 0);
    b.wall_s = 102.0;
    b.n_cpus = 0;
    assert_near(sw_cpu_busy_between(&a, &b, both, 2), -1.0, 0);
    assert_near(sw_cpu_busy_between(NULL, &a, both, 2), -1.0, 0);
}

static void test_auto_threads(void **state)
{
    (void)state;
    /* whole free cores with SW_CPU_SHARE_SLACK; one more only with passive waiting and enough gain [derived
     * from the rule in cpu_share.h] */
    assert_int_equal(sw_cpu_share_auto_threads(2.0, 2, 0), 2);
    assert_int_equal(sw_cpu_share_auto_threads(1.95, 2, 0), 2);   /* 1.95 + 0.1 -> 2 */
    assert_int_equal(sw_cpu_share_auto_threads(1.85, 2, 0), 1);
    assert_int_equal(sw_cpu_share_auto_threads(1.85, 2, 1), 2);   /* 1.85 x 0.93 = 1.72 > 1.1 x 1 */
    assert_int_equal(sw_cpu_share_auto_threads(1.15, 2, 1), 1);   /* 1.15 x 0.93 = 1.07 < 1.1 */
    assert_int_equal(sw_cpu_share_auto_threads(0.0, 2, 1), 1);    /* at least one */
    assert_int_equal(sw_cpu_share_auto_threads(60.8, 64, 1), 60); /* 60.8 x 0.93 < 1.1 x 60 */
    assert_int_equal(sw_cpu_share_auto_threads(2.5, 4, 1), 3);    /* 2.5 x 0.93 = 2.33 > 2.2 */
    assert_int_equal(sw_cpu_share_auto_threads(9.0, 4, 0), 4);    /* at most the cores */
    assert_int_equal(sw_cpu_share_auto_threads(-1, 3, 0), 3);     /* unknown: all cores */
    assert_int_equal(sw_cpu_share_auto_threads(-1, 0, 0), 1);
}

/* The count for the next stretch from the readings above: the chain run.c's time_loop makes. */
static int retune_from(const char *after_text, double own_s, sw_wait wait, int current, int cap)
{
    sw_cpu_times t0[4], t1[4];
    const unsigned char both[2] = {1, 1};
    const sw_cpu_reading a = reading_of(STAT_T0, t0, 100.0, 50.0), b = reading_of(after_text, t1, 102.0, own_s);
    const sw_cpu_load load = {.cores = 2, .busy_cores = sw_cpu_busy_between(&a, &b, both, 2), .others_running = 1,
                              .sample_s = 2.0};
    return sw_cpu_share_retune(&load, wait, current, cap);
}

static void test_retune(void **state)
{
    (void)state;
    /* quiet, 2 spinning threads: stay at 2 */
    assert_int_equal(retune_from(STAT_BOTH_BUSY, 54.0, SW_WAIT_SPIN, 2, 2), 2);
    /* another program took half of cpu1 from a spinning pair: 1.5 free cores, spinning -> 1 thread */
    assert_int_equal(retune_from(STAT_BOTH_BUSY, 53.0, SW_WAIT_SPIN, 2, 2), 1);
    /* ... the same in a process that waits passively (it restarted for it): 2 (1.5 x 0.93 > 1.1) */
    assert_int_equal(retune_from(STAT_BOTH_BUSY, 53.0, SW_WAIT_PASSIVE, 2, 2), 2);
    /* ... and with the user's waiting: whole cores only, as at the start */
    assert_int_equal(retune_from(STAT_BOTH_BUSY, 53.0, SW_WAIT_USER, 2, 2), 1);
    /* 1 thread, the other program still holding a core: stay at 1 */
    assert_int_equal(retune_from(STAT_BOTH_BUSY, 52.0, SW_WAIT_SPIN, 1, 2), 1);
    assert_int_equal(retune_from(STAT_BOTH_BUSY, 52.0, SW_WAIT_PASSIVE, 1, 2), 1);
    /* 1 thread, the core freed (0.02 core of others): back to 2, never beyond the start's count */
    assert_int_equal(retune_from(STAT_ONE_BUSY, 52.0, SW_WAIT_SPIN, 1, 2), 2);
    assert_int_equal(retune_from(STAT_ONE_BUSY, 52.0, SW_WAIT_SPIN, 1, 1), 1);
    /* unknown load: the count stays */
    const sw_cpu_load unknown = {.cores = 2, .busy_cores = -1};
    assert_int_equal(sw_cpu_share_retune(&unknown, SW_WAIT_SPIN, 2, 2), 2);
    assert_int_equal(sw_cpu_share_retune(NULL, SW_WAIT_SPIN, 1, 2), 1);
    /* 8 CPUs, 4 busy, a quota of 3 cores: 3 threads within the 4 the run started with */
    const sw_cpu_load quota = {.cores = 8, .quota_cores = 3.0, .busy_cores = 4.0};
    assert_int_equal(sw_cpu_share_retune(&quota, SW_WAIT_SPIN, 4, 4), 3);
    assert_int_equal(sw_cpu_share_retune(&quota, SW_WAIT_SPIN, 2, 2), 2);
}

static void test_adapts(void **state)
{
    (void)state;
    const int before = omp_get_max_threads();
    sw_wait wait = SW_WAIT_USER;
    sw_cpu_choice c = {.threads = 2, .from = SW_THREADS_AUTO, .wait = SW_WAIT_SPIN, .cores = 2, .free_cores = 2};
    sw_cpu_share_apply(&c);
    assert_int_equal(sw_cpu_share_adapts(2, &wait), 1);
    assert_int_equal(wait, SW_WAIT_SPIN);
    assert_int_equal(sw_cpu_share_adapts(3, NULL), 0);   /* something set another count since */
    c.wait = SW_WAIT_PASSIVE;
    sw_cpu_share_apply(&c);
    assert_int_equal(sw_cpu_share_adapts(2, &wait), 1);
    assert_int_equal(wait, SW_WAIT_PASSIVE);
    static const sw_threads_from fixed[] = {SW_THREADS_OPTION, SW_THREADS_ENV, SW_THREADS_DEFAULT};
    for (size_t q = 0; q < sizeof fixed / sizeof fixed[0]; q++) {   /* the user's count stays the user's */
        c.from = fixed[q];
        sw_cpu_share_apply(&c);
        wait = SW_WAIT_USER;
        assert_int_equal(sw_cpu_share_adapts(2, &wait), 0);
        assert_int_equal(wait, SW_WAIT_USER);   /* untouched */
    }
    c.from = SW_THREADS_AUTO;   /* a count of 0 (OpenMP's) is no automatic choice */
    c.threads = 0;
    sw_cpu_share_apply(&c);
    assert_int_equal(sw_cpu_share_adapts(2, NULL), 0);
    omp_set_num_threads(before);
}

/* The re-measuring on this machine, without sleeping: only its shape can be checked. */
static void test_mark_here(void **state)
{
    (void)state;
    sw_cpu_mark *m = sw_cpu_mark_new();
    assert_non_null(m);
    volatile double x = 0;   /* some CPU time of our own between the readings, about 20 ms */
    const clock_t end = clock() + CLOCKS_PER_SEC / 50;
    while (clock() < end)
        x += 1e-9;
    sw_cpu_load l;
    sw_cpu_load_since(m, &l);
    print_message("here, since the mark: %d cores, quota %.2f, busy %.2f over %.3f s, others running %d\n",
                  l.cores, l.quota_cores, l.busy_cores, l.sample_s, l.others_running);
    assert_true(l.cores >= 1);
    assert_true(l.quota_cores >= 0);
    assert_true(l.sample_s > 0 && l.sample_s < 5);
    assert_true(l.busy_cores <= l.cores);
    sw_cpu_load_since(m, &l);   /* at once again: a short interval, counted or not */
    assert_true(l.sample_s >= 0 && l.busy_cores <= l.cores);
    const int t = sw_cpu_share_retune(&l, SW_WAIT_SPIN, 1, 64);
    assert_true(t >= 1 && t <= l.cores);
    sw_cpu_mark_free(m);
    sw_cpu_mark_free(NULL);
}

/* The measurement on this machine: only its shape can be checked (the load is whatever it is). */
static void test_measure_here(void **state)
{
    (void)state;
    sw_cpu_load l;
    sw_cpu_load_measure(0.02, &l);
    print_message("here: %d cores, quota %.2f, busy %.2f, others running %d, sample %.3f s\n", l.cores,
                  l.quota_cores, l.busy_cores, l.others_running, l.sample_s);
    assert_true(l.cores >= 1);
    assert_true(l.quota_cores >= 0);
    assert_true(l.busy_cores <= l.cores);
    assert_true(l.sample_s >= 0 && l.sample_s < 5);
    sw_cpu_wishes w = {0};
    sw_cpu_choice c;
    assert_int_equal(sw_cpu_share_decide(&l, &w, &c, NULL), SW_OK);
    assert_true(c.threads >= 1 && c.threads <= l.cores);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_stat_parse),
        cmocka_unit_test(test_busy_cores),
        cmocka_unit_test(test_loadavg_parse),
        cmocka_unit_test(test_cpu_max_parse),
        cmocka_unit_test(test_decide_table),
        cmocka_unit_test(test_decide_edges),
        cmocka_unit_test(test_wants_load),
        cmocka_unit_test(test_encode_decode),
        cmocka_unit_test(test_export_import),
        cmocka_unit_test(test_apply_and_note),
        cmocka_unit_test(test_measure_here),
        cmocka_unit_test(test_busy_between),
        cmocka_unit_test(test_auto_threads),
        cmocka_unit_test(test_retune),
        cmocka_unit_test(test_adapts),
        cmocka_unit_test(test_mark_here),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
