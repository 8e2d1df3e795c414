/* atomic_file.h - replacing a file only once its new content is complete ("<path>.part", then rename);
 * and reading a small text file whole (sw_read_text).
 *
 * A writer writes "<path>.part" in the same folder as <path> and renames it to <path> only when every
 * write and the close succeeded; on any failure it removes the .part. rename() within one folder is
 * atomic, so a reader finds at <path> either the previous file, untouched, or the complete new one, and
 * a failed or interrupted writer leaves nothing that looks finished.
 *
 * Two ways to use it. Writers with their own library (NetCDF) take the names from sw_atomic_begin,
 * create af->part themselves, and end with sw_atomic_commit (success) or sw_atomic_discard (failure);
 * sw_atomic_create_failed words a failed creation. Text writers use sw_atomic_open / sw_atomic_close
 * (stdio), or sw_atomic_write_text for a whole string. Messages name the final path first, then the
 * .part and the cause: "out/maps.nc: cannot rename out/maps.nc.part to it: Permission denied".
 */
#ifndef SW_ATOMIC_FILE_H
#define SW_ATOMIC_FILE_H

#include <stdio.h>

#include "base/status.h"

#define SW_ATOMIC_SUFFIX ".part"
#define SW_ATOMIC_PATH_MAX 4096   /* longest path handled, ".part" and the NUL included (Linux PATH_MAX) */

/* One file being replaced. */
typedef struct {
    char path[SW_ATOMIC_PATH_MAX];  /* the final path */
    char part[SW_ATOMIC_PATH_MAX];  /* path + ".part": the file actually written */
    FILE *f;                        /* the open .part for stdio writers (sw_atomic_open; a writer that
                                     * creates the .part its own way, as estimate.c with O_EXCL, sets it
                                     * after sw_atomic_begin), else NULL */
} sw_atomic_file;

/* Fills af's names for path (f = NULL); creates nothing. Returns SW_OK, or SW_ERR_RANGE when
 * "<path>.part" does not fit SW_ATOMIC_PATH_MAX (then af's names are empty). */
sw_status sw_atomic_begin(sw_atomic_file *af, const char *path, sw_error *err);

/* Records that creating af->part failed with `cause` (strerror text or the library's message) as
 * "<path>: cannot create <part>: <cause>" with status code, or, when the folder of path does not exist
 * (HDF5 reports that as "Permission denied"), "<path>: cannot create <part>: folder <dir> does not
 * exist" with SW_ERR_IO. Removes whatever partial .part the library left. Returns the status recorded. */
sw_status sw_atomic_create_failed(sw_atomic_file *af, sw_status code, const char *cause, sw_error *err);

/* Renames the complete, closed af->part to af->path. Returns SW_OK, or SW_ERR_IO ("<path>: cannot
 * rename <part> to it: <cause>") after removing the .part; an existing <path> is then untouched. */
sw_status sw_atomic_commit(sw_atomic_file *af, sw_error *err);

/* Abandons the file: closes af->f when open and removes af->part (a missing one is fine). An existing
 * <path> is untouched. af may be NULL. */
void sw_atomic_discard(sw_atomic_file *af);

/* sw_atomic_begin, then creates af->part for writing with stdio (af->f). Returns SW_OK, or the
 * failure (SW_ERR_RANGE, or SW_ERR_IO through sw_atomic_create_failed) with no file left. */
sw_status sw_atomic_open(sw_atomic_file *af, const char *path, sw_error *err);

/* Flushes and closes af->f, then commits. When a write or the close failed (the stream's error flag),
 * removes the .part and returns SW_ERR_IO ("<path>: cannot write <part>: <cause>"). af->f is closed in
 * every case. */
sw_status sw_atomic_close(sw_atomic_file *af, sw_error *err);

/* Writes the whole NUL-terminated text to path the same way (open, write, close). */
sw_status sw_atomic_write_text(const char *path, const char *text, sw_error *err);

/* The whole content of the (small) file at path as NUL-terminated text, which the caller frees; NULL with
 * errno set when it cannot be opened or read (ENOMEM when out of memory: never a partial text). */
char *sw_read_text(const char *path);

#endif
