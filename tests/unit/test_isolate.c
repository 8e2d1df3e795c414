/* test_isolate.c - a reader run in a forked child (base/isolate.h): a child that succeeds, one that
 * returns an error message, one that segfaults, one that loops, one that allocates too much, one that
 * leaves without a result, one interrupted; and the per-file cache of probes and its switch. */
#define _POSIX_C_SOURCE 200809L   /* setenv, unsetenv */
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>

#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include "base/isolate.h"
#include "testutil.h"

#if defined(__SANITIZE_ADDRESS__)
#define T_SANITIZED 1
#elif defined(__has_feature)
#if __has_feature(address_sanitizer)
#define T_SANITIZED 1
#endif
#endif
#ifndef T_SANITIZED
#define T_SANITIZED 0
#endif

static double now_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* ---- readers ---------------------------------------------------------------------------------- */

static sw_status r_ok(void *ctx, sw_error *err)
{
    (void)err;
    *(int *)ctx = 42;   /* the child's copy: the parent's stays as it was */
    return sw_isolate_in_child() ? SW_OK : SW_ERR_USAGE;
}

static sw_status r_error(void *ctx, sw_error *err)
{
    (void)ctx;
    return sw_fail(err, SW_ERR_RANGE, "bed.nc:3: depth 1e6 m (accepted: 0 .. 12000 m)");
}

static sw_status r_segv(void *ctx, sw_error *err)
{
    (void)ctx;
    (void)err;
    raise(SIGSEGV);
    return SW_OK;
}

static sw_status r_loop(void *ctx, sw_error *err)
{
    (void)ctx;
    (void)err;
    for (;;)
        pause();
    return SW_OK;
}

static sw_status r_spin(void *ctx, sw_error *err)
{
    (void)err;
    volatile unsigned long *k = ctx;
    for (;;)
        (*k)++;
    return SW_OK;
}

static sw_status r_hog(void *ctx, sw_error *err)
{
    (void)ctx;
    size_t n = (size_t)1 << 30;   /* 1 GiB, far beyond a 64 MB limit */
    char *p = malloc(n);
    if (!p)
        return sw_fail(err, SW_ERR_NOMEM, "hog.nc: out of memory for %zu bytes", n);
    memset(p, 1, n);
    free(p);
    return SW_OK;
}

static sw_status r_exit(void *ctx, sw_error *err)
{
    (void)ctx;
    (void)err;
    _exit(1);   /* as a sanitizer does after its report: no result */
}

static sw_status r_sigint(void *ctx, sw_error *err)
{
    (void)ctx;
    (void)err;
    raise(SIGINT);
    return SW_OK;
}

/* Appends one byte to the file named by ctx: how many times a probe ran, seen from the parent. */
static sw_status r_count(void *ctx, sw_error *err)
{
    FILE *f = fopen((const char *)ctx, "ab");
    if (!f)
        return sw_fail(err, SW_ERR_IO, "cannot append");
    fputc('x', f);
    fclose(f);
    return SW_OK;
}

static long file_size(const char *path)
{
    struct stat sb;
    return stat(path, &sb) == 0 ? (long)sb.st_size : -1;
}

/* ---- tests ------------------------------------------------------------------------------------ */

static void test_success(void **state)
{
    (void)state;
    int seen = 7;
    sw_error err;
    sw_error_clear(&err);
    const sw_isolate_limits lim = {.time_s = 10.0, .memory_bytes = (size_t)256 << 20};
    assert_int_equal(sw_isolate_call("good.nc", r_ok, &seen, &lim, &err), SW_OK);
    assert_int_equal(seen, 7);   /* fork: the child's writes are its own */
    assert_false(sw_isolate_in_child());
}

static void test_error_passed_back(void **state)
{
    (void)state;
    sw_error err;
    const sw_isolate_limits lim = {.time_s = 10.0, .memory_bytes = (size_t)256 << 20};
    assert_int_equal(sw_isolate_call("bed.nc", r_error, NULL, &lim, &err), SW_ERR_RANGE);
    assert_string_equal(err.msg, "bed.nc:3: depth 1e6 m (accepted: 0 .. 12000 m)");
}

static void test_segfault(void **state)
{
    (void)state;
    sw_error err;
    const sw_isolate_limits lim = {.time_s = 10.0, .memory_bytes = 0};
    assert_int_equal(sw_isolate_call("seabed.nc", r_segv, NULL, &lim, &err), SW_ERR_INPUT);
    assert_string_equal(err.msg, "seabed.nc: the NetCDF library crashed (signal 11) while reading it; the file is "
                                 "damaged?");
}

static void test_time_limit(void **state)
{
    (void)state;
    sw_error err;
    const sw_isolate_limits lim = {.time_s = 0.3, .memory_bytes = 0};
    sw_isolate_fn readers[2] = {r_loop, r_spin};
    unsigned long spins = 0;
    for (int k = 0; k < 2; k++) {
        double t0 = now_s();
        assert_int_equal(sw_isolate_call("slow.nc", readers[k], &spins, &lim, &err), SW_ERR_INPUT);
        double took = now_s() - t0;
        assert_non_null(strstr(err.msg, "slow.nc: the NetCDF library did not finish reading it within 0 s"));
        assert_true(took >= 0.29 && took < 5.0);   /* killed at the limit, not left running */
    }
}

static void test_memory_limit(void **state)
{
    (void)state;
    if (T_SANITIZED) {
        skip();   /* the sanitizers reserve terabytes of address space: no RLIMIT_AS there (isolate.h) */
    }
    sw_error err;
    const sw_isolate_limits lim = {.time_s = 20.0, .memory_bytes = (size_t)64 << 20};
    assert_int_equal(sw_isolate_call("hog.nc", r_hog, NULL, &lim, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "hog.nc: the NetCDF library needed more than 64 MB while reading it"));
}

static void test_no_result_and_interrupt(void **state)
{
    (void)state;
    sw_error err;
    const sw_isolate_limits lim = {.time_s = 10.0, .memory_bytes = 0};
    assert_int_equal(sw_isolate_call("gone.nc", r_exit, NULL, &lim, &err), SW_ERR_INPUT);
    assert_non_null(strstr(err.msg, "gone.nc: the NetCDF library crashed (exit status 1, no result)"));
    assert_int_equal(sw_isolate_call("stop.nc", r_sigint, NULL, &lim, &err), SW_ERR_INTERRUPTED);
    assert_non_null(strstr(err.msg, "stop.nc: reading it was interrupted"));
}

/* sw_isolate_file probes a file once per reader, again when the file changes, never when switched off. */
static void test_file_cache(void **state)
{
    (void)state;
    char data[1024], counter[1024];
    tu_tmp_path(data, sizeof data, "isolate_data.bin");
    tu_tmp_path(counter, sizeof counter, "isolate_count.txt");
    remove(counter);
    assert_int_equal(tu_write_file(data, "abc"), 0);
    unsetenv("SHOREWARD_ISOLATE");
    sw_isolate_forget();
    sw_error err;
    assert_int_equal(sw_isolate_file(data, "grid depth", r_count, counter, &err), SW_OK);
    assert_int_equal(sw_isolate_file(data, "grid depth", r_count, counter, &err), SW_OK);
    assert_int_equal(file_size(counter), 1);
    assert_int_equal(sw_isolate_file(data, "read depth", r_count, counter, &err), SW_OK);
    assert_int_equal(file_size(counter), 2);
    assert_int_equal(tu_write_file(data, "abcdef"), 0);   /* another size: another file */
    assert_int_equal(sw_isolate_file(data, "grid depth", r_count, counter, &err), SW_OK);
    assert_int_equal(file_size(counter), 3);
    /* a failure is not remembered */
    assert_int_equal(sw_isolate_file(data, "bad", r_error, NULL, &err), SW_ERR_RANGE);
    assert_int_equal(sw_isolate_file(data, "bad", r_error, NULL, &err), SW_ERR_RANGE);
    /* the switch */
    setenv("SHOREWARD_ISOLATE", "off", 1);
    assert_false(sw_isolate_enabled());
    assert_int_equal(sw_isolate_file(data, "other", r_count, counter, &err), SW_OK);
    assert_int_equal(file_size(counter), 3);
    setenv("SHOREWARD_ISOLATE", "on", 1);
    assert_true(sw_isolate_enabled());
    unsetenv("SHOREWARD_ISOLATE");
    /* a missing file is left to the caller's open */
    assert_int_equal(sw_isolate_file("no-such-file.nc", "grid", r_segv, NULL, &err), SW_OK);
    remove(data);
    remove(counter);
}

/* The limits grow with the file: 1 GiB + 16 x size, 20 s + size / 20 MB/s. */
static void test_limits(void **state)
{
    (void)state;
    sw_isolate_limits lim;
    sw_isolate_file_limits(0, &lim);
    assert_int_equal(lim.memory_bytes, (size_t)1 << 30);
    assert_true(lim.time_s == 20.0);
    sw_isolate_file_limits((size_t)100000000, &lim);
    assert_int_equal(lim.memory_bytes, ((size_t)1 << 30) + (size_t)1600000000);
    assert_true(lim.time_s == 25.0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_success),
        cmocka_unit_test(test_error_passed_back),
        cmocka_unit_test(test_segfault),
        cmocka_unit_test(test_time_limit),
        cmocka_unit_test(test_memory_limit),
        cmocka_unit_test(test_no_result_and_interrupt),
        cmocka_unit_test(test_file_cache),
        cmocka_unit_test(test_limits),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
