/* test_outdir.c - the output folder's lock, write test, free-space and memory refusals, and the set's commit
 * (run/outdir.h, run/memcheck.h). */
#define _GNU_SOURCE
#include <errno.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cmocka.h>

#include "run/memcheck.h"
#include "run/outdir.h"
#include "testutil.h"

/* A fresh, empty scratch folder named `name` into out (size n). */
static void fresh_dir(char *out, size_t n, const char *name)
{
    tu_tmp_path(out, n, name);
    char cmd[SW_PATH_MAX + 32];
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", out);
    assert_int_equal(system(cmd), 0);
}

static int exists(const char *dir, const char *name)
{
    char p[SW_PATH_MAX + 300];
    snprintf(p, sizeof p, "%s/%s", dir, name);
    struct stat st;
    return stat(p, &st) == 0;
}

static char *read_all(const char *dir, const char *name)
{
    char p[SW_PATH_MAX + 300];
    snprintf(p, sizeof p, "%s/%s", dir, name);
    FILE *f = fopen(p, "r");
    if (!f)
        return NULL;
    char *buf = calloc(1, 65536);
    size_t n = fread(buf, 1, 65535, f);
    buf[n] = '\0';
    fclose(f);
    return buf;
}

static void put(const char *dir, const char *name, const char *text)
{
    char p[SW_PATH_MAX + 300];
    snprintf(p, sizeof p, "%s/%s", dir, name);
    assert_int_equal(tu_write_file(p, text), 0);
}

/* A pid that no longer runs: a child that has exited and been reaped. */
static long gone_pid(void)
{
    pid_t p = fork();
    if (p == 0)
        _exit(0);
    assert_true(p > 0);
    waitpid(p, NULL, 0);
    return (long)p;
}

/* The folder is created with its parents and locked; a second open (another open file description, as
 * another process would have) is refused with this pid; after close the lock file is gone and the
 * folder can be locked again. */
static void test_lock_refuses_second(void **state)
{
    (void)state;
    char dir[SW_PATH_MAX], sub[SW_PATH_MAX + 16];
    fresh_dir(dir, sizeof dir, "sw_outdir_lock");
    snprintf(sub, sizeof sub, "%s/a/b", dir);
    sw_outdir a, b;
    sw_error err = {0};
    assert_int_equal(sw_outdir_open(&a, sub, "shoreward run first.scn", &err), SW_OK);
    assert_true(exists(sub, SW_OUTDIR_LOCK));
    assert_string_equal(a.note, "");
    assert_int_equal(sw_outdir_open(&b, sub, "shoreward run second.scn", &err), SW_ERR_IO);
    char want[64];
    snprintf(want, sizeof want, "locked by another run: pid %ld", (long)getpid());
    assert_non_null(strstr(err.msg, want));
    assert_non_null(strstr(err.msg, "shoreward run first.scn"));
    assert_int_equal(b.lock_fd, -1);
    sw_outdir_close(&a);
    sw_outdir_close(&a);   /* safe twice */
    assert_false(exists(sub, SW_OUTDIR_LOCK));
    assert_int_equal(sw_outdir_open(&b, sub, NULL, &err), SW_OK);
    sw_outdir_close(&b);
}

/* A lock file whose pid is gone (and which nobody flocks) is taken over with a note naming that pid. */
static void test_stale_lock_taken_over(void **state)
{
    (void)state;
    char dir[SW_PATH_MAX], host[256], text[512];
    fresh_dir(dir, sizeof dir, "sw_outdir_stale");
    assert_int_equal(mkdir(dir, 0777), 0);
    gethostname(host, sizeof host);
    host[sizeof host - 1] = '\0';
    long pid = gone_pid();
    snprintf(text, sizeof text, "host=%s\npid=%ld\nstarted=2026-01-01T00:00:00Z\ncommand=old\n", host, pid);
    put(dir, SW_OUTDIR_LOCK, text);
    sw_outdir d;
    sw_error err = {0};
    assert_int_equal(sw_outdir_open(&d, dir, "new", &err), SW_OK);
    char want[SW_PATH_MAX + 128];
    snprintf(want, sizeof want, "stale lock %s/%s of pid %ld", dir, SW_OUTDIR_LOCK, pid);
    assert_non_null(strstr(d.note, want));
    char *now = read_all(dir, SW_OUTDIR_LOCK);
    snprintf(want, sizeof want, "pid=%ld\n", (long)getpid());
    assert_non_null(strstr(now, want));   /* the file names the new holder */
    free(now);
    sw_outdir_close(&d);
}

/* A lock file naming a live process on this host is refused even without a flock (pid 1 always runs). */
static void test_live_pid_refused(void **state)
{
    (void)state;
    char dir[SW_PATH_MAX], host[256], text[512];
    fresh_dir(dir, sizeof dir, "sw_outdir_live");
    assert_int_equal(mkdir(dir, 0777), 0);
    gethostname(host, sizeof host);
    host[sizeof host - 1] = '\0';
    snprintf(text, sizeof text, "host=%s\npid=1\nstarted=2026-01-01T00:00:00Z\ncommand=init\n", host);
    put(dir, SW_OUTDIR_LOCK, text);
    sw_outdir d;
    sw_error err = {0};
    assert_int_equal(sw_outdir_open(&d, dir, "new", &err), SW_ERR_IO);
    assert_non_null(strstr(err.msg, "pid 1 on host"));
    assert_non_null(strstr(err.msg, "remove"));
}

/* The space check: a need beyond any disk is refused with both figures; a small one passes. */
static void test_space(void **state)
{
    (void)state;
    sw_error err = {0};
    assert_int_equal(sw_outdir_check_space(".", 1e3, &err), SW_OK);
    assert_int_equal(sw_outdir_check_space(".", 1e21, &err), SW_ERR_IO);   /* 1000 EB: no disk has that */
    assert_non_null(strstr(err.msg, "no space left for the outputs: they need up to"));
    assert_non_null(strstr(err.msg, "free"));
}

/* The size estimate, by hand [derived] from the formula in outdir.h: 100 x 50 cells, 2 gauges, 11 samples,
 * no atmosphere, no snapshots, no scenario text: gauges 65536 + 8192 + 11 x (8 + 2 x 3 x 8) + 2 x 256,
 * maps 65536 + 8192 + 5000 x 49 + 8 x 150. */
static void test_output_bytes(void **state)
{
    (void)state;
    sw_scenario *sc = calloc(1, sizeof *sc);
    sw_setup *s = calloc(1, sizeof *s);
    sc->n_gauges = 2;
    s->grid.nx = 100;
    s->grid.ny = 50;
    s->n_samples = 11;
    double want = (65536.0 + 8192.0 + 11.0 * (8.0 + 48.0) + 512.0) + (65536.0 + 8192.0 + 5000.0 * 49.0 + 1200.0);
    assert_true(sw_outdir_output_bytes(sc, s) == want);
    s->n_snapshots = 3;   /* + 65536 + 8192 + 3 x (5000 x 4 + 8) + 5000 x 9 */
    want += 65536.0 + 8192.0 + 3.0 * 20008.0 + 45000.0;
    assert_true(sw_outdir_output_bytes(sc, s) == want);
    free(sc);
    free(s);
}

/* The commit: the new set replaces the old, a file of the old set the new one lacks is removed, the
 * manifest lists the files with their sizes, the staging folder is gone; the message rewrite. */
static void test_commit(void **state)
{
    (void)state;
    char dir[SW_PATH_MAX], stage[SW_PATH_MAX + 32];
    fresh_dir(dir, sizeof dir, "sw_outdir_commit");
    assert_int_equal(mkdir(dir, 0777), 0);
    put(dir, "gauges.nc", "old gauges");
    put(dir, "maps.nc", "old maps");
    put(dir, "notes.txt", "the user's own file");
    sw_error err = {0};
    assert_int_equal(sw_outdir_stage(dir, stage, sizeof stage, &err), SW_OK);
    put(stage, "maps.nc", "new maps!");
    put(stage, "snapshots.nc", "new snaps");
    const char *names[] = {"maps.nc", "snapshots.nc"};
    assert_int_equal(sw_outdir_commit(dir, stage, NULL, names, 2, "CAUTION: a test", &err), SW_OK);
    char *m = read_all(dir, "maps.nc");
    assert_string_equal(m, "new maps!");
    free(m);
    assert_false(exists(dir, "gauges.nc"));   /* of the older set: no mixed pair */
    assert_true(exists(dir, "notes.txt"));    /* not an output: kept */
    char *man = read_all(dir, SW_OUTDIR_MANIFEST);
    assert_non_null(strstr(man, "{\"name\": \"maps.nc\", \"bytes\": 9}"));
    assert_non_null(strstr(man, "{\"name\": \"snapshots.nc\", \"bytes\": 9}"));
    assert_non_null(strstr(man, "\"caution\": \"CAUTION: a test\""));
    free(man);
    struct stat st;
    assert_int_not_equal(stat(stage, &st), 0);

    err.code = SW_ERR_IO;
    snprintf(err.msg, sizeof err.msg, "%.900s/maps.nc: closing: NetCDF: HDF error", stage);
    sw_outdir_rename_msg(&err, stage, dir);
    char want[SW_PATH_MAX + 64];
    snprintf(want, sizeof want, "%s/maps.nc: closing: NetCDF: HDF error", dir);
    assert_string_equal(err.msg, want);
}

/* Recovery of dead runs' staging folders: an uncommitted one is removed (the old set stays), a committed
 * one is rolled forward. */
static void test_recover(void **state)
{
    (void)state;
    char dir[SW_PATH_MAX], a[SW_PATH_MAX + 64], b[SW_PATH_MAX + 64], note[SW_OUTDIR_NOTE_MAX];
    fresh_dir(dir, sizeof dir, "sw_outdir_recover");
    assert_int_equal(mkdir(dir, 0777), 0);
    put(dir, "maps.nc", "old maps");
    snprintf(a, sizeof a, "%s/%s%ld", dir, SW_OUTDIR_STAGING, gone_pid());
    assert_int_equal(mkdir(a, 0777), 0);
    put(a, "maps.nc.part", "half");
    sw_error err = {0};
    assert_int_equal(sw_outdir_recover(dir, note, sizeof note, &err), SW_OK);
    assert_non_null(strstr(note, "removed the unfinished outputs"));
    char *m = read_all(dir, "maps.nc");
    assert_string_equal(m, "old maps");
    free(m);
    struct stat st;
    assert_int_not_equal(stat(a, &st), 0);

    snprintf(b, sizeof b, "%s/%s%ld", dir, SW_OUTDIR_STAGING, gone_pid());
    assert_int_equal(mkdir(b, 0777), 0);
    put(b, "maps.nc", "committed maps");
    put(b, SW_OUTDIR_MANIFEST, "{\"files\": [{\"name\": \"maps.nc\", \"bytes\": 14}]}\n");
    assert_int_equal(sw_outdir_recover(dir, note, sizeof note, &err), SW_OK);
    assert_non_null(strstr(note, "finished moving the committed outputs"));
    m = read_all(dir, "maps.nc");
    assert_string_equal(m, "committed maps");
    free(m);
    assert_true(exists(dir, SW_OUTDIR_MANIFEST));
    assert_int_not_equal(stat(b, &st), 0);
}

/* A read-only folder fails the write test. Root ignores permissions, so this part runs only as a user. */
static void test_unwritable(void **state)
{
    (void)state;
    if (geteuid() == 0) {
        print_message("     (root ignores folder permissions: the write test is checked by test_output_safety.py)\n");
        return;
    }
    char dir[SW_PATH_MAX];
    fresh_dir(dir, sizeof dir, "sw_outdir_ro");
    assert_int_equal(mkdir(dir, 0555), 0);
    sw_outdir d;
    sw_error err = {0};
    assert_int_equal(sw_outdir_open(&d, dir, NULL, &err), SW_ERR_IO);
    assert_non_null(strstr(err.msg, "cannot write in the folder"));
    chmod(dir, 0755);
}

/* The memory refusal names the limit and both figures; each limit is checked on its own. */
static void test_memory(void **state)
{
    (void)state;
    sw_memory_limits m = {.available = 8e9, .cgroup_free = 2e9, .cgroup_limit = 2e9, .as_free = -1, .as_limit = -1};
    snprintf(m.cgroup_file, sizeof m.cgroup_file, "/sys/fs/cgroup/test/memory.max");
    sw_error err = {0};
    assert_int_equal(sw_memory_check(1e9, 2, &m, &err), SW_OK);
    assert_int_equal(sw_memory_check(9.5e9, 2, &m, &err), SW_ERR_NOMEM);
    assert_non_null(strstr(err.msg, "needs 9.5 GB of memory, the cgroup allows 2.0 GB more"));
    m.cgroup_free = m.cgroup_limit = -1;
    assert_int_equal(sw_memory_check(9.5e9, 2, &m, &err), SW_ERR_NOMEM);
    assert_non_null(strstr(err.msg, "the machine has 8.0 GB available"));
    m.available = -1;
    m.as_free = m.as_limit = 1e9;
    assert_int_equal(sw_memory_check(0.9e9, 1, &m, &err), SW_ERR_NOMEM);   /* 0.9 x 1.1 + 0.064 > 1.0 */
    assert_non_null(strstr(err.msg, "RLIMIT_AS"));
    assert_int_equal(sw_memory_check(0.8e9, 1, &m, &err), SW_OK);            /* 0.8 x 1.1 + 0.064 < 1.0 */
    sw_memory_limits real;
    sw_memory_limits_read(&real);
    assert_true(real.available > 0);   /* every Linux since 3.14 has MemAvailable */
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_lock_refuses_second), cmocka_unit_test(test_stale_lock_taken_over),
        cmocka_unit_test(test_live_pid_refused),    cmocka_unit_test(test_space),
        cmocka_unit_test(test_output_bytes),        cmocka_unit_test(test_commit),
        cmocka_unit_test(test_recover),             cmocka_unit_test(test_unwritable),
        cmocka_unit_test(test_memory),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
