/* isolate.c - a reader of an untrusted file run once in a forked child (see isolate.h for the design).
 *
 * Invariant: sw_isolate_call reaps every child it forks and closes both ends of its pipe on every path;
 * the child never returns from it (it leaves by _exit).
 */
#define _GNU_SOURCE   /* pipe2 */
#include "base/isolate.h"

#include <ctype.h>
#include <errno.h>
#include <fcntl.h>
#include <poll.h>
#include <pthread.h>
#include <signal.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <sys/stat.h>
#include <sys/types.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

#define ISO_FLOOR_BYTES ((size_t)1 << 30)   /* memory allowance of every file, bytes */
#define ISO_PER_FILE_BYTE 16                /* and this many bytes per byte of the file */
#define ISO_FLOOR_S 20.0                    /* time allowance of every file, s */
#define ISO_BYTES_PER_S 20e6                /* and 1 s per this many bytes of the file */
#define ISO_CACHE_MAX 256                   /* remembered probes; beyond that the oldest is forgotten */
#define ISO_KEY_MAX 512                     /* reader text remembered per probe, chars */

#if defined(__SANITIZE_ADDRESS__)
#define ISO_SANITIZED 1
#elif defined(__has_feature)
#if __has_feature(address_sanitizer)
#define ISO_SANITIZED 1
#endif
#endif
#ifndef ISO_SANITIZED
#define ISO_SANITIZED 0
#endif

/* What the child writes into the pipe. */
typedef struct {
    int status;                 /* the reader's sw_status */
    int out_of_memory;          /* 1: the reader failed for want of memory under the limit */
    char msg[SW_ERROR_MSG_MAX]; /* its message */
} iso_report;

static volatile sig_atomic_t iso_child = 0;

int sw_isolate_in_child(void) { return iso_child != 0; }

int sw_isolate_enabled(void)
{
    const char *v = getenv("SHOREWARD_ISOLATE");
    if (!v)
        return 1;
    static const char *const off[] = {"off", "0", "no", "false"};
    for (size_t k = 0; k < sizeof off / sizeof off[0]; k++) {
        const char *a = v, *b = off[k];
        while (*a && *b && tolower((unsigned char)*a) == *b)
            a++, b++;
        if (!*a && !*b)
            return 0;
    }
    return 1;
}

void sw_isolate_file_limits(size_t file_bytes, sw_isolate_limits *out)
{
    size_t extra = file_bytes > (SIZE_MAX - ISO_FLOOR_BYTES) / ISO_PER_FILE_BYTE
                   ? SIZE_MAX - ISO_FLOOR_BYTES : file_bytes * ISO_PER_FILE_BYTE;
    out->memory_bytes = ISO_FLOOR_BYTES + extra;
    out->time_s = ISO_FLOOR_S + (double)file_bytes / ISO_BYTES_PER_S;
}

/* Case-insensitive "needle occurs in hay". */
static int iso_contains(const char *hay, const char *needle)
{
    size_t n = strlen(needle);
    for (; *hay; hay++) {
        size_t k = 0;
        while (k < n && hay[k] && tolower((unsigned char)hay[k]) == tolower((unsigned char)needle[k]))
            k++;
        if (k == n)
            return 1;
    }
    return 0;
}

/* The address space this process has mapped, bytes (the first field of /proc/self/statm, in pages);
 * 0 when unknown. Uses no stdio (the child calls it). */
static size_t iso_mapped_bytes(void)
{
    int fd = open("/proc/self/statm", O_RDONLY | O_CLOEXEC);
    if (fd < 0)
        return 0;
    char buf[128];
    ssize_t got = read(fd, buf, sizeof buf - 1);
    close(fd);
    if (got <= 0)
        return 0;
    buf[got] = '\0';
    size_t pages = 0;
    for (const char *p = buf; *p >= '0' && *p <= '9'; p++)
        pages = pages * 10 + (size_t)(*p - '0');
    long page = sysconf(_SC_PAGESIZE);
    return page > 0 ? pages * (size_t)page : 0;
}

/* Writes all of buf to fd, retrying on EINTR and short writes. Returns 0, or -1. */
static int iso_write_all(int fd, const void *buf, size_t n)
{
    const char *p = buf;
    while (n > 0) {
        ssize_t w = write(fd, p, n);
        if (w < 0 && errno == EINTR)
            continue;
        if (w <= 0)
            return -1;
        p += w;
        n -= (size_t)w;
    }
    return 0;
}

/* The child's side: limits, the reader, the report, _exit. Never returns. */
static void iso_child_run(int wfd, sw_isolate_fn fn, void *ctx, const sw_isolate_limits *lim)
{
    iso_child = 1;
    signal(SIGINT, SIG_DFL);
    signal(SIGTERM, SIG_DFL);
    signal(SIGPIPE, SIG_DFL);
    /* a crash ends the child with its signal, whatever handler the parent installed (a test harness's,
     * a sanitizer's): the parent reads the signal from waitpid */
    static const int crash[] = {SIGSEGV, SIGBUS, SIGFPE, SIGILL, SIGABRT};
    for (size_t k = 0; k < sizeof crash / sizeof crash[0]; k++)
        signal(crash[k], SIG_DFL);
    struct rlimit core = {0, 0};
    setrlimit(RLIMIT_CORE, &core);
    int devnull = open("/dev/null", O_WRONLY);
    if (devnull >= 0) {
        dup2(devnull, STDOUT_FILENO);
        dup2(devnull, STDERR_FILENO);
        close(devnull);
    }
    if (lim && lim->memory_bytes > 0 && !ISO_SANITIZED) {
        size_t have = iso_mapped_bytes();
        if (have > 0 && have < SIZE_MAX - lim->memory_bytes) {
            struct rlimit as = {(rlim_t)(have + lim->memory_bytes), (rlim_t)(have + lim->memory_bytes)};
            setrlimit(RLIMIT_AS, &as);
        }
    }
    static iso_report rep;   /* static: no large frame on a stack the reader may need */
    sw_error e;
    sw_error_clear(&e);
    sw_status st = fn(ctx, &e);
    rep.status = (int)st;
    if (st != SW_OK) {
        memcpy(rep.msg, e.msg, sizeof rep.msg);
        rep.msg[sizeof rep.msg - 1] = '\0';
        rep.out_of_memory = lim && lim->memory_bytes > 0 && !ISO_SANITIZED
                            && (st == SW_ERR_NOMEM || iso_contains(e.msg, "out of memory")
                                || iso_contains(e.msg, "memory allocation"));
    }
    _exit(iso_write_all(wfd, &rep, sizeof rep) == 0 ? 0 : 3);
}

/* Seconds on the monotonic clock. */
static double iso_now_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* Waits for pid with waitpid, retrying on EINTR. Returns 0 with *wstatus, or -1. */
static int iso_reap(pid_t pid, int *wstatus, int options)
{
    for (;;) {
        pid_t r = waitpid(pid, wstatus, options);
        if (r == pid)
            return 0;
        if (r == 0)
            return 1;   /* WNOHANG: still running */
        if (errno != EINTR)
            return -1;
    }
}

sw_status sw_isolate_call(const char *label, sw_isolate_fn fn, void *ctx, const sw_isolate_limits *lim,
                          sw_error *err)
{
    if (!label || !fn)
        return sw_fail(err, SW_ERR_USAGE, "sw_isolate_call: no label or reader given");
    int fds[2];
    if (pipe2(fds, O_CLOEXEC) != 0)
        return sw_fail(err, SW_ERR_IO, "%s: could not start the isolated reader (pipe: %s); set "
                       "SHOREWARD_ISOLATE=off to read it in this process", label, strerror(errno));
    pid_t pid = fork();
    if (pid < 0) {
        int e = errno;
        close(fds[0]);
        close(fds[1]);
        return sw_fail(err, SW_ERR_IO, "%s: could not start the isolated reader (fork: %s); set "
                       "SHOREWARD_ISOLATE=off to read it in this process", label, strerror(e));
    }
    if (pid == 0) {
        close(fds[0]);
        iso_child_run(fds[1], fn, ctx, lim);
    }
    close(fds[1]);

    /* read the report until EOF (the child's exit) or the deadline */
    const double limit_s = lim && lim->time_s > 0.0 ? lim->time_s : -1.0;
    const double t_end = iso_now_s() + limit_s;
    iso_report rep;
    size_t got = 0;
    int timed_out = 0, eof = 0;
    while (!eof) {
        int wait_ms = -1;
        if (limit_s > 0.0) {
            double left = t_end - iso_now_s();
            if (left <= 0.0) {
                timed_out = 1;
                break;
            }
            wait_ms = left > 3600.0 ? 3600000 : (int)(left * 1000.0) + 1;
        }
        struct pollfd p = {.fd = fds[0], .events = POLLIN};
        int r = poll(&p, 1, wait_ms);
        if (r < 0 && errno == EINTR)
            continue;
        if (r < 0)
            break;
        if (r == 0)
            continue;   /* the deadline is checked above */
        char buf[4096];
        ssize_t n = read(fds[0], buf, sizeof buf);
        if (n < 0 && errno == EINTR)
            continue;
        if (n <= 0) {
            eof = 1;
            break;
        }
        size_t take = (size_t)n;
        if (got < sizeof rep) {
            size_t room = sizeof rep - got;
            memcpy((char *)&rep + got, buf, take < room ? take : room);
        }
        got += take;
    }
    close(fds[0]);

    /* the child closed the pipe (or never will): reap it, killing it at the deadline */
    int ws = 0, reaped = -1;
    if (!timed_out) {
        for (;;) {
            reaped = iso_reap(pid, &ws, WNOHANG);
            if (reaped != 1)
                break;
            if (limit_s > 0.0 && iso_now_s() >= t_end) {
                timed_out = 1;
                break;
            }
            struct timespec nap = {0, 1000000};   /* 1 ms: the child is past its write, leaving */
            nanosleep(&nap, NULL);
        }
    }
    if (timed_out) {
        kill(pid, SIGKILL);
        iso_reap(pid, &ws, 0);
        return sw_fail(err, SW_ERR_INPUT, "%s: the NetCDF library did not finish reading it within %.0f s; the "
                       "file is damaged? (a slow disk: set SHOREWARD_ISOLATE=off)", label, limit_s);
    }
    if (reaped != 0)
        return sw_fail(err, SW_ERR_IO, "%s: lost the isolated reader (waitpid: %s)", label, strerror(errno));
    if (WIFSIGNALED(ws)) {
        int sig = WTERMSIG(ws);
        if (sig == SIGINT || sig == SIGTERM)
            return sw_fail(err, SW_ERR_INTERRUPTED, "%s: reading it was interrupted (signal %d)", label, sig);
        return sw_fail(err, SW_ERR_INPUT, "%s: the NetCDF library crashed (signal %d) while reading it; the file "
                       "is damaged?", label, sig);
    }
    if (!WIFEXITED(ws) || WEXITSTATUS(ws) != 0 || got != sizeof rep)
        return sw_fail(err, SW_ERR_INPUT, "%s: the NetCDF library crashed (exit status %d, no result) while "
                       "reading it; the file is damaged?", label, WIFEXITED(ws) ? WEXITSTATUS(ws) : -1);
    if (rep.status == SW_OK)
        return SW_OK;
    rep.msg[sizeof rep.msg - 1] = '\0';
    if (rep.out_of_memory)
        return sw_fail(err, SW_ERR_INPUT, "%s: the NetCDF library needed more than %zu MB while reading it; the "
                       "file is damaged? (an intact file this large: set SHOREWARD_ISOLATE=off)", label,
                       lim->memory_bytes >> 20);
    sw_status st = (sw_status)rep.status;
    if (st < SW_OK || st > SW_ERR_INTERRUPTED)
        st = SW_ERR_INPUT;
    return sw_fail(err, st, "%s", rep.msg);
}

/* ---- the cache of successful probes ------------------------------------------------------- */

typedef struct {
    dev_t dev;
    ino_t ino;
    off_t size;
    long long mtime_ns;
    char what[ISO_KEY_MAX];
} iso_key;

static pthread_mutex_t iso_lock = PTHREAD_MUTEX_INITIALIZER;
static iso_key iso_cache[ISO_CACHE_MAX];
static size_t iso_cached = 0, iso_next = 0;

static int iso_same(const iso_key *a, const iso_key *b)
{
    return a->dev == b->dev && a->ino == b->ino && a->size == b->size && a->mtime_ns == b->mtime_ns
           && strcmp(a->what, b->what) == 0;
}

void sw_isolate_forget(void)
{
    pthread_mutex_lock(&iso_lock);
    iso_cached = iso_next = 0;
    pthread_mutex_unlock(&iso_lock);
}

sw_status sw_isolate_file(const char *path, const char *what, sw_isolate_fn fn, void *ctx, sw_error *err)
{
    if (!path || !what || !fn)
        return sw_fail(err, SW_ERR_USAGE, "sw_isolate_file: no file, reader text or reader given");
    if (iso_child || !sw_isolate_enabled())
        return SW_OK;
    struct stat sb;
    if (stat(path, &sb) != 0)
        return SW_OK;   /* the caller's own open reports it */
    iso_key key = {.dev = sb.st_dev, .ino = sb.st_ino, .size = sb.st_size,
                   .mtime_ns = (long long)sb.st_mtim.tv_sec * 1000000000LL + sb.st_mtim.tv_nsec};
    snprintf(key.what, sizeof key.what, "%s", what);

    /* the lock is held across the probe: two threads asking for the same file probe it once */
    pthread_mutex_lock(&iso_lock);
    for (size_t k = 0; k < iso_cached; k++)
        if (iso_same(&iso_cache[k], &key)) {
            pthread_mutex_unlock(&iso_lock);
            return SW_OK;
        }
    sw_isolate_limits lim;
    sw_isolate_file_limits(sb.st_size > 0 ? (size_t)sb.st_size : 0, &lim);
    sw_status st = sw_isolate_call(path, fn, ctx, &lim, err);
    if (st == SW_OK) {
        iso_cache[iso_next] = key;
        iso_next = (iso_next + 1) % ISO_CACHE_MAX;
        if (iso_cached < ISO_CACHE_MAX)
            iso_cached++;
    }
    pthread_mutex_unlock(&iso_lock);
    return st;
}
