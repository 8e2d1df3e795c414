/* test_atomic_file.c - "<path>.part, then rename": a complete file replaces the old one, and every
 * failure leaves the old file untouched and no .part behind. */
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "base/atomic_file.h"
#include "testutil.h"

static int exists(const char *path)
{
    struct stat st;
    return stat(path, &st) == 0;
}

/* The whole content of a small text file, in buf (size n). */
static const char *contents(const char *path, char *buf, size_t n)
{
    FILE *f = fopen(path, "rb");
    assert_non_null(f);
    size_t got = fread(buf, 1, n - 1, f);
    buf[got] = '\0';
    fclose(f);
    return buf;
}

/* A fresh scratch path (size 1024) and its .part (size 1100), neither present. */
static void scratch(char *path, char *part, const char *name)
{
    tu_tmp_path(path, 1024, name);
    snprintf(part, 1100, "%s.part", path);
    remove(path);
    remove(part);
}

/* A new text replaces the old file whole; no .part is left. */
static void test_write_text_replaces(void **state)
{
    (void)state;
    char path[1024], part[1100], buf[64];
    scratch(path, part, "atomic_text.txt");
    sw_error err = {0};
    assert_int_equal(sw_atomic_write_text(path, "first\n", &err), SW_OK);
    assert_string_equal(contents(path, buf, sizeof buf), "first\n");
    assert_int_equal(sw_atomic_write_text(path, "second\n", &err), SW_OK);
    assert_string_equal(contents(path, buf, sizeof buf), "second\n");
    assert_false(exists(part));
    remove(path);
}

/* A writer that gives up (discard) leaves the old file as it was and no .part. */
static void test_discard_keeps_the_old_file(void **state)
{
    (void)state;
    char path[1024], part[1100], buf[64];
    scratch(path, part, "atomic_discard.txt");
    assert_int_equal(tu_write_file(path, "old\n"), 0);
    sw_atomic_file af;
    sw_error err = {0};
    assert_int_equal(sw_atomic_open(&af, path, &err), SW_OK);
    assert_string_equal(af.part, part);
    fputs("half of the new", af.f);
    assert_true(exists(part));
    sw_atomic_discard(&af);
    assert_null(af.f);
    assert_false(exists(part));
    assert_string_equal(contents(path, buf, sizeof buf), "old\n");
    remove(path);
}

/* The rename fails when <path> is a folder: SW_ERR_IO naming both paths, the .part removed. */
static void test_commit_failure_cleans_up(void **state)
{
    (void)state;
    char path[1024], part[1100];
    scratch(path, part, "atomic_is_a_folder");
    rmdir(path);
    assert_int_equal(mkdir(path, 0700), 0);
    sw_error err = {0};
    assert_int_equal(sw_atomic_write_text(path, "text\n", &err), SW_ERR_IO);
    assert_non_null(strstr(err.msg, path));
    assert_non_null(strstr(err.msg, "cannot rename"));
    assert_non_null(strstr(err.msg, part));
    assert_false(exists(part));
    assert_int_equal(rmdir(path), 0);
}

/* A missing folder is named as such, and nothing is created. */
static void test_missing_folder(void **state)
{
    (void)state;
    char dir[1024], path[1100];
    tu_tmp_path(dir, sizeof dir, "atomic_no_such_folder");
    rmdir(dir);
    snprintf(path, sizeof path, "%s/out.txt", dir);
    sw_atomic_file af;
    sw_error err = {0};
    assert_int_equal(sw_atomic_open(&af, path, &err), SW_ERR_IO);
    assert_null(af.f);
    assert_non_null(strstr(err.msg, path));
    assert_non_null(strstr(err.msg, "does not exist"));
    assert_false(exists(dir));
}

/* A path that leaves no room for ".part" is refused before anything is created. */
static void test_path_too_long(void **state)
{
    (void)state;
    char *path = malloc(SW_ATOMIC_PATH_MAX);
    assert_non_null(path);
    memset(path, 'a', SW_ATOMIC_PATH_MAX - 1);
    path[SW_ATOMIC_PATH_MAX - 1] = '\0';
    sw_atomic_file af;
    sw_error err = {0};
    assert_int_equal(sw_atomic_begin(&af, path, &err), SW_ERR_RANGE);
    assert_string_equal(af.part, "");
    assert_non_null(strstr(err.msg, "at most"));
    free(path);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_write_text_replaces),
        cmocka_unit_test(test_discard_keeps_the_old_file),
        cmocka_unit_test(test_commit_failure_cleans_up),
        cmocka_unit_test(test_missing_folder),
        cmocka_unit_test(test_path_too_long),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
