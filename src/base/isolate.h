/* isolate.h - running a reader of an untrusted file once in a forked child, under a time and memory
 * limit, so that a crash, a hang or a runaway allocation inside a library becomes an error message.
 *
 * Why a child process. A damaged NetCDF file can make the NetCDF or HDF5 library dereference a wild
 * pointer (SIGSEGV), abort on an internal assertion, loop for minutes on a corrupt header, or ask for
 * several GB. None of this can be caught inside the process: a signal handler cannot resume a library
 * whose state is corrupt, and neither library has a time or memory budget. A forked child can be
 * killed, limited (setrlimit RLIMIT_AS) and observed (waitpid) without touching the parent, and fork()
 * shares the parent's pages copy-on-write, so the child can call the very reader the parent is about to
 * call, with the parent's own arguments and output arrays (its writes go to its own copies and are
 * discarded): every code path that could crash on that file runs first in the child. A thread or a
 * signal handler gives none of this; a helper executable would need the arguments serialised and a
 * second binary installed.
 *
 * The child: resets SIGINT/SIGTERM/SIGPIPE (so Ctrl-C ends it) and the crash signals (SEGV, BUS, FPE,
 * ILL, ABRT: a crash ends it whatever handler the parent installed) to their defaults, writes no core file,
 * sends its stdout and stderr to /dev/null (HDF5 prints error stacks on damaged files), limits its
 * address space to what it inherited plus an allowance, calls the reader, writes its status and message
 * into a pipe and leaves with _exit() (no atexit handlers, no stdio flush, no HDF5 or OpenMP shutdown).
 * It never starts OpenMP: the NetCDF readers run serially. The NetCDF/HDF5 state it inherited is used
 * only by this one thread (the callers hold every NetCDF call in one critical section, so no other
 * thread was inside the library at fork) and dies with it.
 *
 * The parent: waits on the pipe with poll() until the child's message and exit, or the time limit; on
 * expiry it kills the child (SIGKILL) and reaps it. A child killed by a signal, ended without a message
 * (e.g. a sanitizer's report) or out of memory under the limit becomes SW_ERR_INPUT naming the file;
 * an ordinary error of the reader is handed back unchanged, so the user sees the same message as
 * without isolation. Only a success is remembered (per file identity and reader), so each file is read
 * once more than without isolation, not once per call.
 *
 * Switch: the environment variable SHOREWARD_ISOLATE=off reads every file in the process, as before
 * (for a debugger or a sanitizer report from inside the library). When fork() fails (no processes or
 * memory left) the call is an SW_ERR_IO error that names the switch: silently reading an untrusted file
 * unprotected would make a safety feature depend on the machine's load, and the library has no channel
 * for a warning.
 *
 * Limits of the protection: a sanitizer build does not limit the address space (the sanitizers reserve
 * terabytes of it); the child shares the parent's open file descriptors; a file that changes between
 * the probe and the read is not probed again.
 */
#ifndef SW_ISOLATE_H
#define SW_ISOLATE_H

#include <stddef.h>

#include "base/status.h"

/* The limits of one isolated call. */
typedef struct {
    double time_s;          /* wall-clock time the child may take, s; <= 0: no limit */
    size_t memory_bytes;    /* address space the child may add to what it inherited from the parent,
                             * bytes; 0: no limit */
} sw_isolate_limits;

/* A reader run in the child: returns SW_OK or a status with err filled, like any library call. */
typedef sw_status (*sw_isolate_fn)(void *ctx, sw_error *err);

/* 1 when isolation is on: the environment variable SHOREWARD_ISOLATE is unset or anything but "off",
 * "0", "no" or "false" (read once per call, so tests can switch it). */
int sw_isolate_enabled(void);

/* 1 inside an isolated child (a reader that probes its own file calls itself there without probing). */
int sw_isolate_in_child(void);

/* The limits for reading a file of `file_bytes` bytes: memory 1 GiB + 16 x the file's size (a damaged
 * header asks for several GB; an intact file, even fully compressed, needs a few copies of its
 * variable), time 20 s + 1 s per 20 MB (slow disks, decompression). Needs out. */
void sw_isolate_file_limits(size_t file_bytes, sw_isolate_limits *out);

/* Runs fn(ctx, err) in a forked child under lim (NULL: no limits) and reports how it ended. `label`
 * (e.g. the file's path) begins every message. Needs label and fn. Returns what fn returned, with its
 * message, when the child ended normally; SW_ERR_INPUT "LABEL: the NetCDF library crashed (signal N)
 * while reading it; the file is damaged?", "... did not finish reading it within T s ...", "... needed
 * more than N MB ..." when the child was killed by a signal, exceeded the time limit or ran out of
 * memory under the limit; SW_ERR_INTERRUPTED when it was ended by SIGINT or SIGTERM; SW_ERR_IO when no
 * child could be started. Nothing is left behind: the child is always reaped, the pipe closed. */
sw_status sw_isolate_call(const char *label, sw_isolate_fn fn, void *ctx, const sw_isolate_limits *lim,
                          sw_error *err);

/* Probes a file once: unless isolation is off, or this is an isolated child, or the same file (same
 * device, inode, size and modification time) was already probed successfully with the same `what`
 * (a short text naming the reader and what it reads, e.g. "grid depth"), runs fn(ctx, err) through
 * sw_isolate_call with sw_isolate_file_limits of the file's size, and remembers a success. Needs path,
 * what and fn. Returns SW_OK (the caller then reads the file itself), or sw_isolate_call's failure;
 * a file that cannot be stat()ed returns SW_OK without a probe (the caller's open then reports it).
 * Thread-safe (the cache has a lock). */
sw_status sw_isolate_file(const char *path, const char *what, sw_isolate_fn fn, void *ctx, sw_error *err);

/* Forgets every remembered probe (tests). */
void sw_isolate_forget(void);

#endif
