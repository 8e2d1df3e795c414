/* test_estimate.c - the cached calibration behind `check`'s run-time estimate (estimate.h).
 *
 * No outside reference applies: the expectations are the cache's own contract (estimate.h). The
 * cache files these tests write by hand use rates (111, 222, ...) that no real measurement of a
 * 512 x 512 basin gives, so a returned rate tells whether it came from the file or was measured.
 * Measurements run for MEASURE_S each, to keep the whole file well under a few seconds.
 */
#define _POSIX_C_SOURCE 200809L
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>

#include <fcntl.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include "studies/estimate.h"
#include "model/layout.h"
#include "base/omp_compat.h"
#include "run/run.h"
#include "testutil.h"

#define MEASURE_S 0.02   /* wall time of each measurement in these tests, s */
#define DAY_S 86400LL

static const sw_layout *layout_named(const char *name)
{
    const sw_layout *l = sw_layout_find(name);
    if (!l)
        fail_msg("layout %s is not implemented", name);
    return l;
}

/* Makes an empty scratch folder <SW_TEST_TMP>/estimate/<name>, points SHOREWARD_CACHE_DIR at it
 * and writes the cache file's path into path (size n). */
static void fresh_cache(const char *name, char *path, size_t n)
{
    char rel[128], dir[512];
    snprintf(rel, sizeof rel, "estimate/%s", name);
    tu_tmp_path(dir, sizeof dir, rel);
    sw_error err = {0};
    if (sw_make_dirs(dir, &err) != SW_OK)
        fail_msg("%s", err.msg);
    snprintf(path, n, "%s/%s", dir, SW_RATE_CACHE_FILE);
    unlink(path);
    char part[SW_PATH_MAX + 8];
    snprintf(part, sizeof part, "%s.part", path);
    unlink(part);
    setenv("SHOREWARD_CACHE_DIR", dir, 1);
}

/* One cache line for this machine (version, CPU model) with the given key fields. */
static void entry_line(char *buf, size_t n, const char *layout, const char *precision, int threads, double rate,
                       long long when)
{
    char cpu[256];
    sw_estimate_cpu_model(cpu, sizeof cpu);
    snprintf(buf, n, "%s\t%s\t%s\t%d\t%s\t%.17g\t%lld\n", SW_VERSION, layout, precision, threads, cpu, rate, when);
}

/* The whole file at path into buf (size n); "" when missing. */
static void slurp(const char *path, char *buf, size_t n)
{
    buf[0] = '\0';
    FILE *f = fopen(path, "r");
    if (!f)
        return;
    size_t k = fread(buf, 1, n - 1, f);
    buf[k] = '\0';
    fclose(f);
}

/* Lines of text that are entries (not comments, not empty). */
static int entry_count(const char *text)
{
    int count = 0;
    for (const char *p = text; *p;) {
        const char *nl = strchr(p, '\n');
        if (*p != '#' && *p != '\n')
            count++;
        if (!nl)
            break;
        p = nl + 1;
    }
    return count;
}

/* Lines of text that contain both a and b. */
static int lines_with(const char *text, const char *a, const char *b)
{
    int count = 0;
    char line[2048];
    for (const char *p = text; *p;) {
        const char *nl = strchr(p, '\n');
        size_t k = nl ? (size_t)(nl - p) : strlen(p);
        if (k >= sizeof line)
            k = sizeof line - 1;
        memcpy(line, p, k);
        line[k] = '\0';
        if (strstr(line, a) && strstr(line, b))
            count++;
        if (!nl)
            break;
        p = nl + 1;
    }
    return count;
}

static sw_rate_info rate_of(const char *layout, int threads, int recalibrate)
{
    sw_rate_info info;
    sw_error err = {0};
    sw_status st = sw_estimate_rate_cached(layout_named(layout), SW_DOUBLE, threads, recalibrate, MEASURE_S, &info,
                                           &err);
    if (st != SW_OK)
        fail_msg("sw_estimate_rate_cached failed: %s", err.msg);
    assert_true(info.cells_per_s > 0);
    return info;
}

static void test_miss_is_measured_then_cached(void **state)
{
    (void)state;
    char path[SW_PATH_MAX], text[8192];
    fresh_cache("miss", path, sizeof path);
    sw_rate_info a = rate_of("C", 1, 0);
    assert_string_equal(a.source, "measured");
    assert_int_equal(a.cache_written, 1);
    assert_int_equal(a.threads, 1);
    assert_string_equal(a.path, path);
    assert_string_equal(a.note, "");
    assert_true(a.age_days == 0);
    slurp(path, text, sizeof text);
    assert_int_equal(entry_count(text), 1);
    assert_int_equal(lines_with(text, SW_VERSION "\tC\tdouble\t1\t", "\t"), 1);
    assert_true(text[0] == '#');   /* the comment header explains the file */
    struct stat st;
    char part[SW_PATH_MAX + 8];
    snprintf(part, sizeof part, "%s.part", path);
    assert_int_not_equal(stat(part, &st), 0);   /* renamed away, not left behind */

    sw_rate_info b = rate_of("C", 1, 0);
    assert_string_equal(b.source, "cache");
    assert_true(b.cells_per_s == a.cells_per_s);   /* written with 17 digits: the same double */
    assert_true(b.age_days >= 0 && b.age_days < 1.0 / 24);
    assert_int_equal(b.cache_written, 0);
}

static void test_fresh_entry_is_used_stale_is_remeasured(void **state)
{
    (void)state;
    char path[SW_PATH_MAX], text[8192], line[1024], file[2048];
    long long now = (long long)time(NULL);
    fresh_cache("stale", path, sizeof path);
    entry_line(line, sizeof line, "C", "double", 1, 111.0, now - 29 * DAY_S);
    snprintf(file, sizeof file, "# a comment\n%s", line);
    assert_int_equal(tu_write_file(path, file), 0);
    sw_rate_info a = rate_of("C", 1, 0);
    assert_string_equal(a.source, "cache");
    assert_true(a.cells_per_s == 111.0);
    assert_true(a.age_days > 28.99 && a.age_days < 29.01);

    entry_line(line, sizeof line, "C", "double", 1, 111.0, now - 31 * DAY_S);
    assert_int_equal(tu_write_file(path, line), 0);
    sw_rate_info b = rate_of("C", 1, 0);
    assert_string_equal(b.source, "measured");
    assert_true(b.cells_per_s != 111.0);
    assert_int_equal(b.cache_written, 1);
    slurp(path, text, sizeof text);
    assert_int_equal(entry_count(text), 1);   /* replaced, not added beside the stale one */
    assert_null(strstr(text, "\t111\t"));
}

static void test_corrupt_lines_are_skipped_and_dropped(void **state)
{
    (void)state;
    char path[SW_PATH_MAX], text[16384], other[1024], ours_short[256], file[12000];
    long long now = (long long)time(NULL);
    fresh_cache("corrupt", path, sizeof path);
    entry_line(other, sizeof other, "A", "double", 3, 222.0, now - DAY_S);
    snprintf(ours_short, sizeof ours_short, "%s\tC\tdouble\t1\n", SW_VERSION);   /* fields missing */
    char longline[4000];
    memset(longline, 'x', sizeof longline - 2);
    longline[sizeof longline - 2] = '\n';
    longline[sizeof longline - 1] = '\0';
    snprintf(file, sizeof file, "garbage without tabs\n%s%s%s\tC\tdouble\tmany\tcpu\t1e8\t0\n"
             "%s\tC\tdouble\t1\tcpu\t-5\t0\n\x01\x02\xff\n%s",
             ours_short, other, SW_VERSION, SW_VERSION, longline);
    assert_int_equal(tu_write_file(path, file), 0);

    sw_rate_info a = rate_of("C", 1, 0);
    assert_string_equal(a.source, "measured");
    assert_int_equal(a.bad_lines, 6);
    assert_int_equal(a.cache_written, 1);
    assert_string_equal(a.note, "");
    slurp(path, text, sizeof text);
    assert_int_equal(entry_count(text), 2);   /* the other valid entry and ours; the junk is gone */
    assert_int_equal(lines_with(text, "\tA\tdouble\t3\t", "\t222\t"), 1);
    assert_int_equal(lines_with(text, "\tC\tdouble\t1\t", SW_VERSION), 1);
    assert_null(strstr(text, "garbage"));

    sw_rate_info b = rate_of("A", 3, 0);   /* the kept entry still answers */
    assert_string_equal(b.source, "cache");
    assert_true(b.cells_per_s == 222.0);
}

static void test_unwritable_cache_measures_with_a_note(void **state)
{
    (void)state;
    char path[SW_PATH_MAX], blocker[SW_PATH_MAX], dir[SW_PATH_MAX + 16];
    fresh_cache("unwritable", path, sizeof path);
    tu_tmp_path(blocker, sizeof blocker, "estimate/unwritable/plain-file");
    assert_int_equal(tu_write_file(blocker, "not a folder\n"), 0);
    snprintf(dir, sizeof dir, "%s/cache", blocker);   /* under a regular file: even root cannot */
    setenv("SHOREWARD_CACHE_DIR", dir, 1);
    for (int k = 0; k < 2; k++) {   /* and again: nothing was cached */
        sw_rate_info a = rate_of("C", 1, 0);
        assert_string_equal(a.source, "measured");
        assert_int_equal(a.cache_written, 0);
        if (!strstr(a.note, "cache not written") || !strstr(a.note, "Not a directory") || !strstr(a.note, dir))
            fail_msg("note '%s' does not say the cache in %s was not written and why", a.note, dir);
    }
}

static void test_unreadable_cache_measures_with_a_note(void **state)
{
    (void)state;
    char path[SW_PATH_MAX];
    fresh_cache("unreadable", path, sizeof path);
    rmdir(path);
    assert_int_equal(mkdir(path, 0777), 0);   /* rates.txt is a folder: opens, but cannot be read */
    sw_rate_info a = rate_of("C", 1, 0);
    assert_string_equal(a.source, "measured");
    assert_int_equal(a.cache_written, 0);
    if (!strstr(a.note, "cache not read") || !strstr(a.note, "cache not written") || !strstr(a.note, path))
        fail_msg("note '%s' does not say that %s could be neither read nor written", a.note, path);
    assert_int_equal(rmdir(path), 0);
}

static void test_part_file_of_another_writer(void **state)
{
    (void)state;
    char path[SW_PATH_MAX], part[SW_PATH_MAX + 8];
    fresh_cache("part", path, sizeof path);
    snprintf(part, sizeof part, "%s.part", path);
    assert_int_equal(tu_write_file(part, "half a file"), 0);
    sw_rate_info a = rate_of("C", 1, 0);   /* a fresh .part: another process is writing */
    assert_string_equal(a.source, "measured");
    assert_int_equal(a.cache_written, 0);
    if (!strstr(a.note, "another shoreward is writing"))
        fail_msg("note: '%s'", a.note);

    struct timespec old[2] = {{.tv_sec = time(NULL) - 3600}, {.tv_sec = time(NULL) - 3600}};
    assert_int_equal(utimensat(AT_FDCWD, part, old, 0), 0);   /* left over by a process that died */
    sw_rate_info b = rate_of("C", 1, 0);
    assert_int_equal(b.cache_written, 1);
    assert_string_equal(b.note, "");
    struct stat st;
    assert_int_not_equal(stat(part, &st), 0);
    assert_string_equal(rate_of("C", 1, 0).source, "cache");
}

static void test_recalibrate_measures_even_when_cached(void **state)
{
    (void)state;
    char path[SW_PATH_MAX], text[8192], line[1024];
    fresh_cache("recalibrate", path, sizeof path);
    entry_line(line, sizeof line, "C", "double", 1, 111.0, (long long)time(NULL) - 60);
    assert_int_equal(tu_write_file(path, line), 0);
    assert_true(rate_of("C", 1, 0).cells_per_s == 111.0);
    sw_rate_info a = rate_of("C", 1, 1);
    assert_string_equal(a.source, "measured");
    assert_true(a.cells_per_s != 111.0);
    assert_int_equal(a.cache_written, 1);
    slurp(path, text, sizeof text);
    assert_int_equal(entry_count(text), 1);   /* the entry was rewritten */
    assert_null(strstr(text, "\t111\t"));
    sw_rate_info b = rate_of("C", 1, 0);
    assert_string_equal(b.source, "cache");
    assert_true(b.cells_per_s == a.cells_per_s);
}

static void test_each_key_has_its_own_entry(void **state)
{
    (void)state;
    char path[SW_PATH_MAX], text[8192], file[5200], l1[1024], l2[1024], l3[1024], l4[1024], l5[1024];
    long long now = (long long)time(NULL);
    fresh_cache("keys", path, sizeof path);
    entry_line(l1, sizeof l1, "C", "double", 1, 111.0, now - 60);
    entry_line(l2, sizeof l2, "C", "double", 2, 222.0, now - 60);
    entry_line(l3, sizeof l3, "A", "double", 1, 333.0, now - 60);
    entry_line(l4, sizeof l4, "C", "single", 1, 444.0, now - 60);
    snprintf(l5, sizeof l5, "0.0.0-other\tC\tdouble\t1\tIntel(R) Xeon(R) Processor\t555\t%lld\n", now - 60);
    snprintf(file, sizeof file, "%s%s%s%s%s", l1, l2, l3, l4, l5);
    assert_int_equal(tu_write_file(path, file), 0);
    assert_true(rate_of("C", 1, 0).cells_per_s == 111.0);
    assert_true(rate_of("C", 2, 0).cells_per_s == 222.0);
    assert_true(rate_of("A", 1, 0).cells_per_s == 333.0);
    sw_rate_info s;
    sw_error err = {0};
    assert_int_equal(sw_estimate_rate_cached(layout_named("C"), SW_SINGLE, 1, 0, MEASURE_S, &s, &err), SW_OK);
    assert_true(s.cells_per_s == 444.0);

    /* a key with no entry (3 threads) is measured and added; the others stay */
    sw_rate_info m = rate_of("C", 3, 0);
    assert_string_equal(m.source, "measured");
    assert_int_equal(m.threads, 3);
    slurp(path, text, sizeof text);
    assert_int_equal(entry_count(text), 6);
    assert_int_equal(lines_with(text, "\tC\tdouble\t3\t", SW_VERSION), 1);
    assert_true(rate_of("C", 2, 0).cells_per_s == 222.0);

    /* threads = 0 is keyed by the count actually used */
    omp_set_num_threads(2);
    sw_rate_info d = rate_of("C", 0, 0);
    assert_int_equal(d.threads, 2);
    assert_true(d.cells_per_s == 222.0);
    assert_int_equal(omp_get_max_threads(), 2);   /* the setting is left as it was */
}

static void test_cache_folder_choice(void **state)
{
    (void)state;
    char dir[SW_PATH_MAX];
    sw_error err = {0};
    setenv("SHOREWARD_CACHE_DIR", "/own/place", 1);
    setenv("XDG_CACHE_HOME", "/xdg", 1);
    setenv("HOME", "/home/someone", 1);
    assert_int_equal(sw_estimate_cache_dir(dir, sizeof dir, &err), SW_OK);
    assert_string_equal(dir, "/own/place");
    unsetenv("SHOREWARD_CACHE_DIR");
    assert_int_equal(sw_estimate_cache_dir(dir, sizeof dir, &err), SW_OK);
    assert_string_equal(dir, "/xdg/shoreward");
    setenv("XDG_CACHE_HOME", "relative/xdg", 1);   /* ignored, as the XDG spec says */
    assert_int_equal(sw_estimate_cache_dir(dir, sizeof dir, &err), SW_OK);
    assert_string_equal(dir, "/home/someone/.cache/shoreward");
    unsetenv("XDG_CACHE_HOME");
    assert_int_equal(sw_estimate_cache_dir(dir, sizeof dir, &err), SW_OK);
    assert_string_equal(dir, "/home/someone/.cache/shoreward");
    unsetenv("HOME");
    assert_int_equal(sw_estimate_cache_dir(dir, sizeof dir, &err), SW_ERR_USAGE);
    assert_non_null(strstr(err.msg, "SHOREWARD_CACHE_DIR"));

    /* with no folder at all the rate is still measured */
    sw_rate_info a = rate_of("C", 1, 0);
    assert_string_equal(a.source, "measured");
    assert_string_equal(a.path, "");
    assert_non_null(strstr(a.note, "cache not used"));
    setenv("SHOREWARD_CACHE_DIR", "/tmp", 1);
    char small[4];
    assert_int_equal(sw_estimate_cache_dir(small, sizeof small, &err), SW_ERR_RANGE);
}

static void test_bad_arguments(void **state)
{
    (void)state;
    sw_rate_info info;
    sw_error err = {0};
    assert_int_equal(sw_estimate_rate_cached(NULL, SW_DOUBLE, 1, 0, MEASURE_S, &info, &err), SW_ERR_USAGE);
    assert_int_equal(sw_estimate_rate_cached(layout_named("C"), SW_DOUBLE, -1, 0, MEASURE_S, &info, &err),
                     SW_ERR_USAGE);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_miss_is_measured_then_cached),
        cmocka_unit_test(test_fresh_entry_is_used_stale_is_remeasured),
        cmocka_unit_test(test_corrupt_lines_are_skipped_and_dropped),
        cmocka_unit_test(test_unwritable_cache_measures_with_a_note),
        cmocka_unit_test(test_unreadable_cache_measures_with_a_note),
        cmocka_unit_test(test_part_file_of_another_writer),
        cmocka_unit_test(test_recalibrate_measures_even_when_cached),
        cmocka_unit_test(test_each_key_has_its_own_entry),
        cmocka_unit_test(test_cache_folder_choice),
        cmocka_unit_test(test_bad_arguments),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
