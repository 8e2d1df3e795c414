/* estimate.c - a short calibration run and its cache file (see estimate.h for the format).
 *
 * Invariant: the cache file is only ever replaced whole, by rename() of a complete rates.txt.part
 * made in the same folder; a reader sees the old file or the new one, never half of one.
 */
#define _POSIX_C_SOURCE 200809L
#include "studies/estimate.h"

#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include "base/atomic_file.h"
#include "model/model.h"
#include "base/omp_compat.h"
#include "run/run.h"
#include "observers/tracker.h"

#define PART_STALE_S 60   /* a rates.txt.part older than this was left by a process that died, s */
#define MAX_ENTRIES 10000 /* entries kept from a cache file; the rest is ignored */

double sw_estimate_rate(const sw_layout *layout, sw_precision precision, int threads, double seconds)
{
    enum { N = 512 };
    sw_grid g = {.nx = N, .ny = N, .dx_m = 1000, .dy_m = 1000};
    double *depth = malloc((size_t)N * N * sizeof(double));
    double *eta0 = malloc((size_t)N * N * sizeof(double));
    if (!depth || !eta0) {
        free(depth);
        free(eta0);
        return 0;
    }
    for (size_t j = 0; j < N; j++)
        for (size_t i = 0; i < N; i++) {
            double x = (double)i - N / 2.0, y = (double)j - N / 2.0;
            depth[j * N + i] = 1000;
            eta0[j * N + i] = exp(-(x * x + y * y) / 400.0);
        }
    sw_model_config cfg = {.layout = layout, .grid = g, .depth_m = depth, .eta0_m = eta0, .min_depth_m = 1,
                           .gravity_ms2 = 9.81, .dt_s = 1.0, .precision = precision};
    cfg.dt_s = 0.9 * sw_model_dt_limit(layout, &g, depth, 1, 9.81, 2);
    int before = omp_get_max_threads();
    if (threads > 0)
        omp_set_num_threads(threads);
    sw_model *m = NULL;
    sw_tracker *t = NULL;
    double rate = 0;
    if (sw_model_create(&cfg, &m, NULL) == SW_OK
        && sw_tracker_create(m, 0.01, omp_get_max_threads(), &t, NULL) == SW_OK
        && sw_tracker_attach(t, m, NULL) == SW_OK) {
        sw_model_step(m);   /* warm-up: first touch, caches */
        double t0 = omp_get_wtime(), wall = 0;
        long long steps = 0;
        while (wall < seconds) {
            SW_OMP(parallel)
            for (int n = 0; n < 10; n++) {
                sw_model_step(m);   /* with the tracker attached, as a run has it */
                SW_OMP(single)
                sw_model_tick(m);
            }
            steps += 10;
            wall = omp_get_wtime() - t0;
        }
        rate = wall > 0 ? (double)steps * N * N / wall : 0;
    }
    omp_set_num_threads(before);
    sw_tracker_free(t);
    sw_model_free(m);
    free(depth);
    free(eta0);
    return rate;
}

sw_status sw_estimate_cache_dir(char *dir, size_t n, sw_error *err)
{
    const char *own = getenv("SHOREWARD_CACHE_DIR"), *xdg = getenv("XDG_CACHE_HOME"), *home = getenv("HOME");
    int len;
    if (own && *own)
        len = snprintf(dir, n, "%s", own);
    else if (xdg && xdg[0] == '/')   /* the XDG spec says to ignore a relative value */
        len = snprintf(dir, n, "%s/shoreward", xdg);
    else if (home && *home)
        len = snprintf(dir, n, "%s/.cache/shoreward", home);
    else {
        if (n)
            dir[0] = '\0';
        return sw_fail(err, SW_ERR_USAGE, "no cache folder: none of SHOREWARD_CACHE_DIR, XDG_CACHE_HOME "
                       "(absolute) or HOME is set");
    }
    if (len < 0 || (size_t)len >= n) {
        if (n)
            dir[0] = '\0';
        return sw_fail(err, SW_ERR_RANGE, "cache folder path longer than %zu characters", n ? n - 1 : 0);
    }
    return SW_OK;
}

/* Turns tabs, newlines and other control characters of s into spaces and drops trailing spaces,
 * so that s fits in one field of one line. */
static void clean_field(char *s)
{
    for (char *p = s; *p; p++)
        if ((unsigned char)*p < 0x20 || *p == 0x7f)
            *p = ' ';
    size_t k = strlen(s);
    while (k > 0 && s[k - 1] == ' ')
        s[--k] = '\0';
}

void sw_estimate_cpu_model(char *buf, size_t n)
{
    if (!n)
        return;
    snprintf(buf, n, "unknown");
    FILE *f = fopen("/proc/cpuinfo", "r");
    if (!f)
        return;
    char line[512];
    while (fgets(line, sizeof line, f)) {
        if (strncmp(line, "model name", 10) != 0)
            continue;
        const char *colon = strchr(line, ':');
        if (!colon)
            continue;
        colon++;
        while (*colon == ' ' || *colon == '\t')
            colon++;
        snprintf(buf, n, "%s", colon);
        clean_field(buf);
        if (!*buf)
            snprintf(buf, n, "unknown");
        break;
    }
    fclose(f);
}

/* One line of the cache file. The first five fields are the key. */
typedef struct {
    char version[32];
    char layout[16];
    char precision[16];
    int threads;
    char cpu[256];
    double cells_per_s;       /* > 0 */
    long long when;           /* unix time of the measurement, s */
} rate_entry;

static int same_key(const rate_entry *a, const rate_entry *b)
{
    return !strcmp(a->version, b->version) && !strcmp(a->layout, b->layout)
        && !strcmp(a->precision, b->precision) && a->threads == b->threads && !strcmp(a->cpu, b->cpu);
}

/* Copies field `s` into dst (size n); 0 when it is empty or does not fit. */
static int copy_field(char *dst, size_t n, const char *s)
{
    size_t k = strlen(s);
    if (k == 0 || k >= n)
        return 0;
    memcpy(dst, s, k + 1);
    return 1;
}

/* Parses one line (no newline) into e; 1 on success, 0 when it is not an entry. */
static int parse_entry(char *line, rate_entry *e)
{
    char *field[7];
    int nf = 0;
    for (char *p = line;;) {
        if (nf == 7)
            return 0;   /* too many fields */
        field[nf++] = p;
        char *tab = strchr(p, '\t');
        if (!tab)
            break;
        *tab = '\0';
        p = tab + 1;
    }
    if (nf != 7)
        return 0;
    if (!copy_field(e->version, sizeof e->version, field[0]) || !copy_field(e->layout, sizeof e->layout, field[1])
        || !copy_field(e->precision, sizeof e->precision, field[2]) || !copy_field(e->cpu, sizeof e->cpu, field[4]))
        return 0;
    char *end;
    errno = 0;
    long th = strtol(field[3], &end, 10);
    if (end == field[3] || *end || errno || th < 1 || th > 100000)
        return 0;
    e->threads = (int)th;
    e->cells_per_s = strtod(field[5], &end);
    if (end == field[5] || *end || !isfinite(e->cells_per_s) || e->cells_per_s <= 0)
        return 0;
    errno = 0;
    e->when = strtoll(field[6], &end, 10);
    if (end == field[6] || *end || errno || e->when < 0)
        return 0;
    return 1;
}

/* Reads the entries of the cache file at path into *list (*n of them; free(*list) after), counting
 * lines that do not parse in *bad. A missing file is an empty cache. Returns 0, or -1 when the file
 * exists but cannot be read (errno set; *list holds what was read). */
static int read_cache(const char *path, rate_entry **list, size_t *n, size_t *bad)
{
    *list = NULL;
    *n = 0;
    *bad = 0;
    FILE *f = fopen(path, "r");
    if (!f)
        return errno == ENOENT || errno == ENOTDIR ? 0 : -1;   /* no file, or no folder: empty */
    size_t cap = 0;
    char line[1024];
    int rc = 0;
    while (fgets(line, sizeof line, f)) {
        size_t k = strlen(line);
        int whole = k > 0 && line[k - 1] == '\n';
        if (!whole && !feof(f)) {   /* longer than any entry: skip the rest of it */
            int c;
            while ((c = fgetc(f)) != EOF && c != '\n')
                ;
            ++*bad;
            continue;
        }
        while (k > 0 && (line[k - 1] == '\n' || line[k - 1] == '\r'))
            line[--k] = '\0';
        if (k == 0 || line[0] == '#')
            continue;
        rate_entry e;
        if (!parse_entry(line, &e)) {
            ++*bad;
            continue;
        }
        if (*n == MAX_ENTRIES)
            continue;
        if (*n == cap) {
            size_t grown = cap ? 2 * cap : 16;
            rate_entry *p = realloc(*list, grown * sizeof *p);
            if (!p) {
                errno = ENOMEM;
                rc = -1;
                break;
            }
            *list = p;
            cap = grown;
        }
        (*list)[(*n)++] = e;
    }
    if (ferror(f))
        rc = -1;
    int saved = errno;
    fclose(f);
    errno = saved;
    return rc;
}

static double age_days(const rate_entry *e, long long now) { return (double)(now - e->when) / 86400.0; }

/* Opens dir/rates.txt.part for writing, created new (O_EXCL): a writer that finds one younger than
 * PART_STALE_S leaves it to the process writing it; an older one is left over from a process that
 * died and is removed. Returns the stream, or NULL with the cause in why (SW_ERR_IO). */
static FILE *open_part(const char *part, sw_error *why)
{
    for (int attempt = 0; attempt < 2; attempt++) {
        int fd = open(part, O_WRONLY | O_CREAT | O_EXCL, 0644);
        if (fd >= 0) {
            FILE *f = fdopen(fd, "w");
            if (!f) {
                sw_fail(why, SW_ERR_IO, "%s: %s", part, strerror(errno));
                close(fd);
                unlink(part);
            }
            return f;
        }
        if (errno != EEXIST) {
            sw_fail(why, SW_ERR_IO, "%s: %s", part, strerror(errno));
            return NULL;
        }
        struct stat st;
        if (stat(part, &st) == 0 && difftime(time(NULL), st.st_mtime) <= PART_STALE_S) {
            sw_fail(why, SW_ERR_IO, "%s exists: another shoreward is writing the cache", part);
            return NULL;
        }
        unlink(part);
    }
    sw_fail(why, SW_ERR_IO, "%s: could not replace a left-over file", part);
    return NULL;
}

/* Writes the comment header, the entries of old[0..n) that have another key than add and are not
 * stale, then add, to path via path.part and rename(). Returns SW_OK, or SW_ERR_IO with the cause in
 * why (the .part file is removed). */
static sw_status write_cache(const char *path, const rate_entry *old, size_t n, const rate_entry *add,
                             long long now, sw_error *why)
{
    sw_atomic_file af;
    sw_status st = sw_atomic_begin(&af, path, why);
    if (st != SW_OK)
        return st;
    af.f = open_part(af.part, why);
    if (!af.f)
        return SW_ERR_IO;
    fprintf(af.f, "# shoreward calibration cache: cell updates per second (time step + arrival tracking) measured\n"
                  "# by `shoreward check` on a 512 x 512 basin. Safe to delete; entries older than %g days are\n"
                  "# measured again. One entry per line, tab-separated:\n"
                  "# version\tlayout\tprecision\tthreads\tcpu_model\tcells_per_s\tunix_time\n",
            SW_RATE_MAX_AGE_DAYS);
    for (size_t k = 0; k <= n; k++) {
        const rate_entry *e = k < n ? &old[k] : add;
        if (k < n && (same_key(e, add) || age_days(e, now) > SW_RATE_MAX_AGE_DAYS))
            continue;
        fprintf(af.f, "%s\t%s\t%s\t%d\t%s\t%.17g\t%lld\n", e->version, e->layout, e->precision, e->threads, e->cpu,
                e->cells_per_s, e->when);
    }
    return sw_atomic_close(&af, why);
}

/* Appends "; " (when note is not empty) and the printf-style text to note (size SW_ERROR_MSG_MAX),
 * truncating what does not fit. */
static void add_note(char *note, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
static void add_note(char *note, const char *fmt, ...)
{
    size_t k = strlen(note);
    if (k && k + 2 < SW_ERROR_MSG_MAX) {
        memcpy(note + k, "; ", 3);
        k += 2;
    }
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(note + k, SW_ERROR_MSG_MAX - k, fmt, ap);
    va_end(ap);
}

sw_status sw_estimate_rate_cached(const sw_layout *layout, sw_precision precision, int threads, int recalibrate,
                                  double seconds, sw_rate_info *out, sw_error *err)
{
    if (!layout || !out || threads < 0)
        return sw_fail(err, SW_ERR_USAGE, "sw_estimate_rate_cached needs a layout, an output and threads >= 0");
    memset(out, 0, sizeof *out);
    out->source = "measured";
    if (seconds <= 0)
        seconds = SW_RATE_CALIBRATION_S;

    int before = omp_get_max_threads();
    if (threads > 0)
        omp_set_num_threads(threads);
    out->threads = omp_get_max_threads();
    omp_set_num_threads(before);

    rate_entry key = {.threads = out->threads};
    snprintf(key.version, sizeof key.version, "%s", SW_VERSION);
    snprintf(key.layout, sizeof key.layout, "%s", layout->name);
    snprintf(key.precision, sizeof key.precision, "%s", sw_precision_name(precision));
    sw_estimate_cpu_model(key.cpu, sizeof key.cpu);
    clean_field(key.version);
    clean_field(key.layout);
    long long now = (long long)time(NULL);

    char dir[SW_PATH_MAX];
    sw_error why = {0};
    int have_dir = sw_estimate_cache_dir(dir, sizeof dir, &why) == SW_OK;
    if (have_dir && snprintf(out->path, sizeof out->path, "%s/%s", dir, SW_RATE_CACHE_FILE) >= (int)sizeof out->path) {
        sw_fail(&why, SW_ERR_RANGE, "cache file path longer than %zu characters", sizeof out->path - 1);
        out->path[0] = '\0';
        have_dir = 0;
    }
    if (!have_dir)
        add_note(out->note, "cache not used: %s", why.msg);

    rate_entry *list = NULL;
    size_t n = 0;
    if (have_dir && read_cache(out->path, &list, &n, &out->bad_lines) != 0)
        add_note(out->note, "cache not read: %s: %s", out->path, strerror(errno));
    if (!recalibrate)
        for (size_t k = n; k-- > 0;) {   /* the last entry of a key is the newest */
            if (!same_key(&list[k], &key))
                continue;
            double age = age_days(&list[k], now);
            if (age >= -1.0 / 1440 && age <= SW_RATE_MAX_AGE_DAYS) {   /* a minute of clock skew is fine */
                out->cells_per_s = list[k].cells_per_s;
                out->source = "cache";
                out->age_days = age > 0 ? age : 0;
                free(list);
                return SW_OK;
            }
            break;   /* stale (or from the future): measure again */
        }

    key.cells_per_s = sw_estimate_rate(layout, precision, out->threads, seconds);
    key.when = now;
    if (!(key.cells_per_s > 0)) {
        free(list);
        return sw_fail(err, SW_ERR_NOMEM, "out of memory measuring this machine's rate for layout %s",
                       layout->name);
    }
    out->cells_per_s = key.cells_per_s;
    if (have_dir) {
        sw_error w = {0};
        if (sw_make_dirs(dir, &w) != SW_OK || write_cache(out->path, list, n, &key, now, &w) != SW_OK)
            add_note(out->note, "cache not written: %s", w.msg);
        else
            out->cache_written = 1;
    }
    free(list);
    return SW_OK;
}
