/* estimate.h - how fast this machine steps a layout, measured briefly and kept in a per-user cache.
 *
 * `shoreward check` turns a rate in cell updates per second (one time step plus the arrival
 * tracking, per cell) into a run-time estimate: cells x steps / rate. The rate comes from a short
 * calibration run on a 512 x 512 flat basin; sw_estimate_rate_cached keeps each measurement in a
 * small text file so that later checks on the same machine reuse it instead of measuring again.
 *
 * The cache file is <dir>/rates.txt, dir being $SHOREWARD_CACHE_DIR when set, else
 * $XDG_CACHE_HOME/shoreward (when that is an absolute path), else $HOME/.cache/shoreward. Format:
 * lines starting with '#' are comments; every other line is one entry of seven tab-separated fields
 *     version  layout  precision  threads  cpu_model  cells_per_s  unix_time
 * (shoreward version, layout name, "double"/"single", OpenMP threads used, the first "model name"
 * of /proc/cpuinfo or "unknown", the rate, and when it was measured in seconds since 1970 UTC).
 * The first five fields are the key. Lines that do not parse are skipped (and dropped on the next
 * write). An entry older than SW_RATE_MAX_AGE_DAYS is stale: it is measured again and replaced.
 *
 * Invariant: a missing, corrupt, unreadable or unwritable cache never makes the call fail; it then
 * measures, and sw_rate_info.note says what went wrong with the cache.
 */
#ifndef SW_ESTIMATE_H
#define SW_ESTIMATE_H

#include <stddef.h>

#include "model/layout.h"
#include "base/real.h"
#include "inputs/scenario.h"
#include "base/status.h"

#define SW_RATE_MAX_AGE_DAYS 30.0   /* days after which a cached rate is measured again */
#define SW_RATE_CALIBRATION_S 0.2   /* wall time of one calibration run for `check`, s */
#define SW_RATE_CACHE_FILE "rates.txt"

/* A rate and where it came from. */
typedef struct {
    double cells_per_s;       /* cell updates per second, step + arrival tracking; > 0 on success */
    const char *source;       /* "cache" (read from the cache file) or "measured" (just now); static */
    double age_days;          /* days since the measurement was made, 0 when measured now */
    int threads;              /* OpenMP threads the rate holds for (omp_get_max_threads() after setting) */
    int cache_written;        /* 1 when a new measurement was saved in the cache file, else 0 */
    size_t bad_lines;         /* lines of the cache file that did not parse and were skipped */
    char path[SW_PATH_MAX];   /* the cache file; "" when no cache folder could be named */
    char note[SW_ERROR_MSG_MAX]; /* one line on what went wrong with the cache ("cache not written:
                                  * /dir/rates.txt.part: Permission denied"); "" when nothing did */
} sw_rate_info;

/* Measures cell updates per second (step + arrival tracking) for `layout` in `precision` with
 * `threads` threads (0 = OpenMP default) on a 512 x 512 flat basin, for about `seconds` of wall
 * time after a warm-up step. The OpenMP thread setting is restored before returning. Returns 0 if
 * the measurement could not be made (out of memory). */
double sw_estimate_rate(const sw_layout *layout, sw_precision precision, int threads, double seconds);

/* Writes the cache folder (see the top of this file, without the file name) into dir (size n).
 * Returns SW_ERR_USAGE when none of SHOREWARD_CACHE_DIR, an absolute XDG_CACHE_HOME or HOME is set,
 * SW_ERR_RANGE when the path does not fit in n; err says which. Creates nothing. */
sw_status sw_estimate_cache_dir(char *dir, size_t n, sw_error *err);

/* The first "model name" of /proc/cpuinfo (tabs and control characters turned into spaces), or
 * "unknown", into buf (size n). */
void sw_estimate_cpu_model(char *buf, size_t n);

/* The rate for `layout` in `precision` on `threads` threads (0 = OpenMP default) on this machine:
 * from the cache when it holds a fresh entry for this key and recalibrate is 0; otherwise measured
 * for `seconds` (<= 0: SW_RATE_CALIBRATION_S) and saved in the cache (folder created if missing;
 * written to rates.txt.part and renamed over rates.txt, keeping the other fresh entries).
 * Fills *out (OUT). Cache problems do not fail the call: they are described in out->note.
 * The OpenMP thread setting is restored before returning. Returns SW_ERR_USAGE for a NULL layout
 * or out or negative threads, SW_ERR_NOMEM when the measurement cannot be made; out->cells_per_s is
 * then 0. */
sw_status sw_estimate_rate_cached(const sw_layout *layout, sw_precision precision, int threads, int recalibrate,
                                  double seconds, sw_rate_info *out, sw_error *err);

#endif
