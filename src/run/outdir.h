/* outdir.h - a run's output folder: created, write-tested and locked before the first step, checked for
 * free space, and filled as one set (staging folder, manifest written last, renames).
 *
 * The lock. OUT/.shoreward.lock names its holder (host, pid, start time, command) and is held with
 * flock() for as long as the run lives: the kernel drops the flock when the process ends, however it
 * ends (SIGKILL included), so a lock file nobody holds is stale. A stale lock is taken over with a note,
 * unless the pid it names is alive on this host (then it is refused as held, and the message says how to
 * remove the file). A second run into a locked folder is refused with the holder's pid and start time.
 *
 * The set. A run writes its files into OUT/.staging-PID/ (each as "<name>.part" renamed inside the
 * staging folder, atomic_file.h). When every file is complete it writes the manifest, OUT/.staging-PID/
 * run.json (the files and their sizes in bytes, the caution); that rename is the commit point. Then it
 * removes OUT/run.json, renames each file over its old copy in OUT, removes the output files of an older
 * set that the new one lacks (gauges.nc, maps.nc, snapshots.nc), and renames the manifest into OUT last.
 * A reader (tools/plot) trusts a folder whose run.json lists files that exist with those sizes; while
 * run.json is absent the set is being replaced. A failure or kill before the commit point leaves OUT as
 * it was (the staging folder is removed, or by the next run into OUT once its pid is gone); a kill after
 * it is finished by the next run into OUT (roll forward: the committed manifest says what belongs).
 */
#ifndef SW_OUTDIR_H
#define SW_OUTDIR_H

#include <stddef.h>

#include "base/status.h"
#include "inputs/scenario.h"
#include "run/setup.h"

#define SW_OUTDIR_LOCK ".shoreward.lock"     /* the lock file's name inside the output folder */
#define SW_OUTDIR_STAGING ".staging-"        /* prefix of a staging folder's name (then the pid) */
#define SW_OUTDIR_MANIFEST "run.json"        /* the manifest's name (after the run's file prefix) */
#define SW_OUTDIR_NOTE_MAX 600               /* longest note, NUL included */

/* A locked output folder. */
typedef struct {
    char path[SW_PATH_MAX];          /* the output folder as given */
    char lock_path[SW_PATH_MAX];     /* path + "/.shoreward.lock" */
    int lock_fd;                     /* the open lock file holding the flock; -1 when not held */
    char note[SW_OUTDIR_NOTE_MAX];   /* "" or one line for the user: a stale lock taken over */
} sw_outdir;

/* Creates folder `path` and its parents, tests that a file can be created, written and removed in it
 * (a probe ".shoreward-probe-PID"), and takes its lock for `command` (the command line; NULL = "").
 * Needs d and path. Returns SW_OK with d holding the lock (release it with sw_outdir_close), or SW_ERR_IO
 * with err naming the folder and the cause: "OUT: cannot write in the folder: Read-only file system",
 * "OUT: locked by another run: pid 123 on host h since 2026-12-05T12:00:00Z (shoreward run x.scn)"; then
 * nothing is held and d->lock_fd is -1. */
sw_status sw_outdir_open(sw_outdir *d, const char *path, const char *command, sw_error *err);

/* Releases the lock: removes the lock file, then closes it. d may be NULL or not held; safe twice. */
void sw_outdir_close(sw_outdir *d);

/* The bytes a run of sc on setup s writes at most (uncompressed: the files are deflated, so the real
 * sizes are smaller): gauges.nc (gauges x samples x 3 or 6 series x 8 + the time axis), maps.nc (cells x
 * 8 for each of 6 or 8 double maps, a byte for the wet mask, the storm track), snapshots.nc (snapshots x
 * cells x 4 + depth and wet), each with 64 KiB of header and the scenario text in its attributes; with
 * checkpoints on, twice the model state, maps and series (the checkpoint and its next .part) and the
 * snapshot frames in double. */
double sw_outdir_output_bytes(const sw_scenario *sc, const sw_setup *s);

/* Refuses a run whose outputs (need_bytes, sw_outdir_output_bytes) may not fit in the free space of the
 * file system holding folder `path` (statvfs f_bavail, as an unprivileged writer sees it), with a margin
 * of 5 % + 1 MiB. Returns SW_OK, or SW_ERR_IO: "OUT: no space left for the outputs: they need up to
 * 1.2 GB, the file system has 0.3 GB free". A folder that cannot be examined passes (nothing to compare). */
sw_status sw_outdir_check_space(const char *path, double need_bytes, sw_error *err);

/* Creates the staging folder <out_dir>/.staging-PID (removing a left-over one of that name) into stage
 * (size n), after cleaning up the staging folders of runs whose pid is gone (sw_outdir_recover).
 * Needs out_dir to exist. Returns SW_OK, or SW_ERR_IO / SW_ERR_RANGE naming the folder and cause. */
sw_status sw_outdir_stage(const char *out_dir, char *stage, size_t n, sw_error *err);

/* Finishes the left-overs of dead runs in out_dir: a staging folder holding a committed manifest is
 * rolled forward (its files moved into place, as sw_outdir_commit does), one without is removed. A
 * staging folder of a live pid on this host is left alone. Writes what it did into note (size n; "" when
 * nothing), returns SW_OK or the first failure. */
sw_status sw_outdir_recover(const char *out_dir, char *note, size_t n, sw_error *err);

/* Commits the staged set: writes <stage>/<prefix>run.json listing names[0..n_names) with their sizes
 * and `caution` (the commit point), then moves everything into out_dir as the header describes and
 * removes the staging folder. names are file names inside stage (no '/'); prefix may be NULL. Returns
 * SW_OK, or SW_ERR_IO naming the file and the cause; before the commit point out_dir is untouched. */
sw_status sw_outdir_commit(const char *out_dir, const char *stage, const char *prefix, const char *const *names,
                           size_t n_names, const char *caution, sw_error *err);

/* Removes the staging folder and everything in it (a failed run). stage may be "" (nothing to do). */
void sw_outdir_unstage(const char *stage);

/* Rewrites a message about a file in the staging folder to name the file's final place: every
 * "<stage>/" in err->msg becomes "<out_dir>/". Does nothing when err is NULL or holds no failure. */
void sw_outdir_rename_msg(sw_error *err, const char *stage, const char *out_dir);

#endif
