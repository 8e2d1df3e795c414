/* testutil.h - small helpers shared by the unit tests (temporary paths, test data). */
#ifndef SW_TESTUTIL_H
#define SW_TESTUTIL_H

#include <stddef.h>

/* Writes into out (size n) a path "<SW_TEST_TMP or /tmp>/<name>" for a scratch file. */
void tu_tmp_path(char *out, size_t n, const char *name);

/* Writes text to path (overwriting). Returns 0 on success. */
int tu_write_file(const char *path, const char *text);

#endif
