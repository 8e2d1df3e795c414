/* testutil.h - small helpers shared by the unit tests (temporary paths, test data). */
#ifndef SW_TESTUTIL_H
#define SW_TESTUTIL_H

#include <stddef.h>

/* Writes into out (size n) a path "<SW_TEST_TMP or /tmp>/<name>" for a scratch file. */
void tu_tmp_path(char *out, size_t n, const char *name);

/* Writes text to path (overwriting). Returns 0 on success. */
int tu_write_file(const char *path, const char *text);

struct sw_model;

/* Advances the model n steps on `threads` threads, inside one parallel region. */
void tu_advance(struct sw_model *m, long n, int threads);

/* Mean period (s) from the zero crossings of eta in cell (0, 0), stepping for about n_periods of
 * expected_s; linear interpolation between steps. Stores the number of crossings in *crossings
 * (the caller asserts there were at least 3). */
double tu_measure_period(struct sw_model *m, double expected_s, int n_periods, int *crossings);

#endif
