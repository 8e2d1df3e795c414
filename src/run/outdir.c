/* outdir.c - the output folder: probe, lock, free space, staging and the set's commit (see outdir.h).
 *
 * Invariant: before the commit point (the rename of <stage>/run.json.part to <stage>/run.json) nothing
 * in the output folder itself is changed but the lock file; after it, every step of moving the set into
 * place can be repeated (roll_forward), so a run killed half-way is finished by the next one.
 */
#define _GNU_SOURCE
#include "run/outdir.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <sys/statvfs.h>
#include <time.h>
#include <unistd.h>

#include "base/atomic_file.h"
#include "run/run.h"

/* The output files a set may hold (run.c writes them); an older set's copy of one the new set lacks is
 * removed at the commit, so a folder never pairs files of two runs. */
static const char *const set_files[] = {"gauges.nc", "maps.nc", "snapshots.nc"};

/* ---- helpers ------------------------------------------------------------------------------------ */

/* Formats bytes as "1.2 GB", "35.0 MB" or "512 bytes" into out (size n) and returns out. */
static const char *fmt_bytes(double b, char *out, size_t n)
{
    if (b >= 1e9)
        snprintf(out, n, "%.1f GB", b / 1e9);
    else if (b >= 1e6)
        snprintf(out, n, "%.1f MB", b / 1e6);
    else if (b >= 1e3)
        snprintf(out, n, "%.1f kB", b / 1e3);
    else
        snprintf(out, n, "%.0f bytes", b);
    return out;
}

/* 1 when a process with this pid runs on this machine (kill(pid, 0) succeeds or is refused for
 * permission), 0 when it is gone or pid is not a valid one. */
static int pid_alive(long pid)
{
    if (pid <= 0 || pid > 0x3fffffffL)
        return 0;
    return kill((pid_t)pid, 0) == 0 || errno == EPERM;
}

static void host_name(char *out, size_t n)
{
    if (gethostname(out, n) != 0)
        snprintf(out, n, "unknown");
    out[n - 1] = '\0';
}

/* Removes folder path and the files in it (one level: staging folders hold no folders). */
static void remove_tree(const char *path)
{
    DIR *dir = opendir(path);
    if (dir) {
        struct dirent *e;
        char p[SW_PATH_MAX + 300];
        while ((e = readdir(dir)) != NULL) {
            if (!strcmp(e->d_name, ".") || !strcmp(e->d_name, ".."))
                continue;
            snprintf(p, sizeof p, "%s/%s", path, e->d_name);
            remove(p);
        }
        closedir(dir);
    }
    rmdir(path);
}

/* ---- the lock ----------------------------------------------------------------------------------- */

/* The holder recorded in a lock file's text: pid, host, start time and command ("" when absent). */
typedef struct {
    long pid;
    char host[256], started[64], command[256];
} lock_info;

static void read_lock(int fd, lock_info *li)
{
    memset(li, 0, sizeof *li);
    char buf[2048];
    ssize_t n = pread(fd, buf, sizeof buf - 1, 0);
    buf[n > 0 ? n : 0] = '\0';
    for (char *line = strtok(buf, "\n"); line; line = strtok(NULL, "\n")) {
        if (!strncmp(line, "pid=", 4))
            li->pid = strtol(line + 4, NULL, 10);
        else if (!strncmp(line, "host=", 5))
            snprintf(li->host, sizeof li->host, "%s", line + 5);
        else if (!strncmp(line, "started=", 8))
            snprintf(li->started, sizeof li->started, "%s", line + 8);
        else if (!strncmp(line, "command=", 8))
            snprintf(li->command, sizeof li->command, "%s", line + 8);
    }
}

/* Writes this process as the holder into the (flocked) lock file fd. Returns 0 or an errno value. */
static int write_lock(int fd, const char *command)
{
    char host[256], when[64], text[2048];
    host_name(host, sizeof host);
    time_t now = time(NULL);
    struct tm tm;
    if (!gmtime_r(&now, &tm) || !strftime(when, sizeof when, "%Y-%m-%dT%H:%M:%SZ", &tm))
        snprintf(when, sizeof when, "unknown");
    int len = snprintf(text, sizeof text, "shoreward output folder lock: a run is writing here\nhost=%s\npid=%ld\n"
                       "started=%s\ncommand=%.1000s\n", host, (long)getpid(), when, command ? command : "");
    for (char *c = text; *c; c++)   /* one command line, even when the command held a newline */
        if (*c == '\r')
            *c = ' ';
    if (len < 0 || (size_t)len >= sizeof text)
        len = (int)strlen(text);
    if (ftruncate(fd, 0) != 0 || pwrite(fd, text, (size_t)len, 0) != (ssize_t)len)
        return errno ? errno : EIO;
    return 0;
}

/* One attempt at the lock. Returns 1 when held (fd stays open in d), 0 to try again (the file changed
 * under us), -1 with err filled. */
static int try_lock(sw_outdir *d, const char *command, sw_error *err)
{
    int fd = open(d->lock_path, O_RDWR | O_CREAT | O_CLOEXEC, 0644);
    if (fd < 0)
        return sw_fail(err, SW_ERR_IO, "%s: cannot create the lock file %s: %s", d->path, d->lock_path,
                       strerror(errno)), -1;
    if (flock(fd, LOCK_EX | LOCK_NB) != 0) {
        int e = errno;
        lock_info li;
        read_lock(fd, &li);
        close(fd);
        if (e != EWOULDBLOCK)
            return sw_fail(err, SW_ERR_IO, "%s: cannot lock %s: %s", d->path, d->lock_path, strerror(e)), -1;
        return sw_fail(err, SW_ERR_IO, "%s: locked by another run: pid %ld on host %s since %s (%s); wait for "
                       "it to finish or choose another folder", d->path, li.pid, li.host[0] ? li.host : "unknown",
                       li.started[0] ? li.started : "an unknown time", li.command[0] ? li.command : "no command"),
               -1;
    }
    /* the flock is ours; is it still on the file at the path (a holder may have removed it meanwhile)? */
    struct stat a, b;
    if (fstat(fd, &a) != 0 || stat(d->lock_path, &b) != 0 || a.st_ino != b.st_ino || a.st_dev != b.st_dev) {
        close(fd);
        return 0;
    }
    lock_info li;
    read_lock(fd, &li);
    char host[256];
    host_name(host, sizeof host);
    if (li.pid > 0) {
        int same_host = !li.host[0] || !strcmp(li.host, host);
        if (same_host && li.pid != (long)getpid() && pid_alive(li.pid)) {
            close(fd);
            return sw_fail(err, SW_ERR_IO, "%s: locked by another run: pid %ld on host %s since %s (%s); it holds "
                           "no lock on the file: if pid %ld is no shoreward run, remove %s", d->path, li.pid, host,
                           li.started[0] ? li.started : "an unknown time", li.command[0] ? li.command : "no command",
                           li.pid, d->lock_path), -1;
        }
        snprintf(d->note, sizeof d->note, "took over the stale lock %.300s of pid %ld on host %.100s since %.40s "
                 "(that run is gone)", d->lock_path, li.pid, li.host[0] ? li.host : "unknown",
                 li.started[0] ? li.started : "an unknown time");
    }
    int e = write_lock(fd, command);
    if (e) {
        close(fd);
        return sw_fail(err, SW_ERR_IO, "%s: cannot write the lock file %s: %s", d->path, d->lock_path, strerror(e)),
               -1;
    }
    d->lock_fd = fd;
    return 1;
}

/* Creates, writes and removes a probe file in the folder: the write test. */
static sw_status probe(const char *path, sw_error *err)
{
    char p[SW_PATH_MAX + 64];
    snprintf(p, sizeof p, "%s/.shoreward-probe-%ld", path, (long)getpid());
    int fd = open(p, O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0644);
    if (fd < 0)
        return sw_fail(err, SW_ERR_IO, "%s: cannot write in the folder: %s", path, strerror(errno));
    int bad = write(fd, "probe\n", 6) != 6;
    int e = bad ? (errno ? errno : EIO) : 0;
    if (close(fd) != 0 && !bad) {
        bad = 1;
        e = errno;
    }
    unlink(p);
    return bad ? sw_fail(err, SW_ERR_IO, "%s: cannot write in the folder: %s", path, strerror(e)) : SW_OK;
}

sw_status sw_outdir_open(sw_outdir *d, const char *path, const char *command, sw_error *err)
{
    memset(d, 0, sizeof *d);
    d->lock_fd = -1;
    if (snprintf(d->path, sizeof d->path, "%s", path) >= (int)sizeof d->path ||
        snprintf(d->lock_path, sizeof d->lock_path, "%s/%s", path, SW_OUTDIR_LOCK) >= (int)sizeof d->lock_path)
        return sw_fail(err, SW_ERR_RANGE, "%.200s...: output folder path too long (accepted: at most %d characters)",
                       path, SW_PATH_MAX - 20);
    sw_status st = sw_make_dirs(path, err);
    if (st == SW_OK)
        st = probe(path, err);
    if (st != SW_OK)
        return st;
    for (int attempt = 0; attempt < 100; attempt++) {
        int r = try_lock(d, command, err);
        if (r == 1)
            return SW_OK;
        if (r < 0)
            return err ? err->code : SW_ERR_IO;
    }
    return sw_fail(err, SW_ERR_IO, "%s: cannot take the lock %s: it keeps changing", path, d->lock_path);
}

void sw_outdir_close(sw_outdir *d)
{
    if (!d || d->lock_fd < 0)
        return;
    unlink(d->lock_path);   /* while still holding the flock: a waiting run then finds the file gone */
    close(d->lock_fd);
    d->lock_fd = -1;
}

/* ---- free space --------------------------------------------------------------------------------- */

double sw_outdir_output_bytes(const sw_scenario *sc, const sw_setup *s)
{
    const double header = 65536.0 + (sc->text ? (double)strlen(sc->text) : 0.0) + 8192.0;
    const double cells = (double)sw_grid_cells(&s->grid);
    const int air = s->forcing_bytes > 0;
    double gauges = 0;
    if (sc->n_gauges > 0)
        gauges = header + (double)s->n_samples * (8.0 + (double)sc->n_gauges * (air ? 6.0 : 3.0) * 8.0) +
                 (double)sc->n_gauges * 256.0;
    double maps = header + cells * (8.0 * (air ? 8.0 : 6.0) + 1.0) + 8.0 * (double)(s->grid.nx + s->grid.ny);
    if (air)
        maps += 40.0 * (double)s->n_samples;   /* the storm track, at most a point a sample */
    double snaps = 0;
    if (s->n_snapshots > 0)
        snaps = header + (double)s->n_snapshots * (cells * 4.0 + 8.0) + cells * 9.0;
    /* a checkpoint (run/checkpoint.c) holds the model state, the tracker's maps and the gauges' series, and
     * checkpoint.frames the snapshots so far in double; the .part of the next one sits beside the last */
    double ckpt = 0;
    if (sc->checkpoint_interval_s > 0)
        ckpt = 2.0 * ((double)s->model_bytes + maps + gauges) + (double)s->n_snapshots * cells * 8.0;
    return gauges + maps + snaps + ckpt;
}

sw_status sw_outdir_check_space(const char *path, double need_bytes, sw_error *err)
{
    struct statvfs vfs;
    if (statvfs(path, &vfs) != 0)
        return SW_OK;
    double have = (double)vfs.f_bavail * (double)vfs.f_frsize;
    double want = need_bytes * 1.05 + 1048576.0;
    if (want <= have)
        return SW_OK;
    char a[32], b[32];
    return sw_fail(err, SW_ERR_IO, "%s: no space left for the outputs: they need up to %s, the file system has %s "
                   "free (free some space or choose another folder)", path, fmt_bytes(want, a, sizeof a),
                   fmt_bytes(have, b, sizeof b));
}

/* ---- staging and the commit --------------------------------------------------------------------- */

/* Whether manifest text lists file `name` ("name": "<name>"). */
static int manifest_lists(const char *text, const char *name)
{
    char key[320];
    snprintf(key, sizeof key, "\"name\": \"%s\"", name);
    return strstr(text, key) != NULL;
}

/* Moves a committed staging folder's set into out_dir (see the invariant above); repeatable. `manifest`
 * is the manifest's name (prefix + run.json). Returns SW_OK or SW_ERR_IO naming the file and cause. */
static sw_status roll_forward(const char *out_dir, const char *stage, const char *prefix, const char *manifest,
                              sw_error *err)
{
    char from[SW_PATH_MAX + 300], to[SW_PATH_MAX + 300];
    snprintf(from, sizeof from, "%s/%s", stage, manifest);
    char *text = sw_read_text(from);
    if (!text)
        return sw_fail(err, SW_ERR_IO, "%s: cannot read the staged manifest: %s", from, strerror(errno));
    snprintf(to, sizeof to, "%s/%s", out_dir, manifest);
    if (unlink(to) != 0 && errno != ENOENT) {   /* from here a reader sees the set being replaced */
        free(text);
        return sw_fail(err, SW_ERR_IO, "%s: cannot remove the old manifest: %s", to, strerror(errno));
    }
    sw_status st = SW_OK;
    DIR *dir = opendir(stage);
    struct dirent *e;
    while (st == SW_OK && dir && (e = readdir(dir)) != NULL) {
        if (e->d_name[0] == '.' || !strcmp(e->d_name, manifest) || !manifest_lists(text, e->d_name))
            continue;
        snprintf(from, sizeof from, "%s/%s", stage, e->d_name);
        snprintf(to, sizeof to, "%s/%s", out_dir, e->d_name);
        if (rename(from, to) != 0)
            st = sw_fail(err, SW_ERR_IO, "%s: cannot move %s into place: %s", to, from, strerror(errno));
    }
    if (dir)
        closedir(dir);
    for (size_t k = 0; st == SW_OK && k < sizeof set_files / sizeof set_files[0]; k++) {
        char name[300];
        snprintf(name, sizeof name, "%s%s", prefix ? prefix : "", set_files[k]);
        snprintf(to, sizeof to, "%s/%s", out_dir, name);
        if (!manifest_lists(text, name) && unlink(to) != 0 && errno != ENOENT)
            st = sw_fail(err, SW_ERR_IO, "%s: cannot remove this file of an older set: %s", to, strerror(errno));
    }
    free(text);
    if (st != SW_OK)
        return st;
    snprintf(from, sizeof from, "%s/%s", stage, manifest);
    snprintf(to, sizeof to, "%s/%s", out_dir, manifest);
    if (rename(from, to) != 0)
        return sw_fail(err, SW_ERR_IO, "%s: cannot move %s into place: %s", to, from, strerror(errno));
    remove_tree(stage);
    return SW_OK;
}

sw_status sw_outdir_recover(const char *out_dir, char *note, size_t n, sw_error *err)
{
    if (n)
        note[0] = '\0';
    DIR *dir = opendir(out_dir);
    if (!dir)
        return SW_OK;
    sw_status st = SW_OK;
    struct dirent *e;
    const size_t pre = strlen(SW_OUTDIR_STAGING);
    while (st == SW_OK && (e = readdir(dir)) != NULL) {
        if (strncmp(e->d_name, SW_OUTDIR_STAGING, pre) != 0)
            continue;
        char *end = NULL;
        long pid = strtol(e->d_name + pre, &end, 10);
        if (!end || *end || pid == (long)getpid() || pid_alive(pid))
            continue;
        char stage[SW_PATH_MAX + 300], man[SW_PATH_MAX + 320];
        snprintf(stage, sizeof stage, "%s/%s", out_dir, e->d_name);
        snprintf(man, sizeof man, "%s/%s", stage, SW_OUTDIR_MANIFEST);
        struct stat sb;
        if (stat(man, &sb) == 0) {
            st = roll_forward(out_dir, stage, "", SW_OUTDIR_MANIFEST, err);
            if (st == SW_OK && n)
                snprintf(note, n, "finished moving the committed outputs of an interrupted run (pid %ld) into %.300s",
                         pid, out_dir);
        } else {
            remove_tree(stage);
            if (n)
                snprintf(note, n, "removed the unfinished outputs of an interrupted run (pid %ld) from %.300s", pid,
                         out_dir);
        }
    }
    closedir(dir);
    return st;
}

sw_status sw_outdir_stage(const char *out_dir, char *stage, size_t n, sw_error *err)
{
    char note[SW_OUTDIR_NOTE_MAX];
    sw_status st = sw_outdir_recover(out_dir, note, sizeof note, err);
    if (st != SW_OK)
        return st;
    if (snprintf(stage, n, "%s/%s%ld", out_dir, SW_OUTDIR_STAGING, (long)getpid()) >= (int)n)
        return sw_fail(err, SW_ERR_RANGE, "%.200s...: output folder path too long for its staging folder", out_dir);
    remove_tree(stage);   /* a left-over of an earlier run with this pid */
    if (mkdir(stage, 0777) != 0)
        return sw_fail(err, SW_ERR_IO, "%s: cannot create the staging folder %s: %s", out_dir, stage, strerror(errno));
    return SW_OK;
}

/* Appends s to the JSON buffer as a string literal (quotes, backslashes and control characters escaped). */
static void json_string(FILE *f, const char *s)
{
    fputc('"', f);
    for (; *s; s++) {
        unsigned char c = (unsigned char)*s;
        if (c == '"' || c == '\\')
            fprintf(f, "\\%c", c);
        else if (c < 0x20)
            fprintf(f, "\\u%04x", c);
        else
            fputc(c, f);
    }
    fputc('"', f);
}

sw_status sw_outdir_commit(const char *out_dir, const char *stage, const char *prefix, const char *const *names,
                           size_t n_names, const char *caution, sw_error *err)
{
    char manifest[300], path[SW_PATH_MAX + 320];
    snprintf(manifest, sizeof manifest, "%s%s", prefix ? prefix : "", SW_OUTDIR_MANIFEST);
    snprintf(path, sizeof path, "%s/%s", stage, manifest);
    sw_atomic_file af;
    sw_status st = sw_atomic_open(&af, path, err);
    if (st != SW_OK)
        return st;
    FILE *f = af.f;
    fputs("{\n  \"format\": \"shoreward output set 1\",\n  \"caution\": ", f);
    json_string(f, caution ? caution : "");
    fprintf(f, ",\n  \"pid\": %ld,\n  \"files\": [", (long)getpid());
    for (size_t k = 0; k < n_names; k++) {
        char p[SW_PATH_MAX + 320];
        snprintf(p, sizeof p, "%s/%s", stage, names[k]);
        struct stat sb;
        if (stat(p, &sb) != 0) {
            int e = errno;
            sw_atomic_discard(&af);
            return sw_fail(err, SW_ERR_IO, "%s: the staged file is missing: %s", p, strerror(e));
        }
        fprintf(f, "%s\n    {\"name\": ", k ? "," : "");
        json_string(f, names[k]);
        fprintf(f, ", \"bytes\": %lld}", (long long)sb.st_size);
    }
    fputs("\n  ]\n}\n", f);
    st = sw_atomic_close(&af, err);   /* the commit point: <stage>/run.json exists */
    if (st != SW_OK)
        return st;
    return roll_forward(out_dir, stage, prefix, manifest, err);
}

void sw_outdir_unstage(const char *stage)
{
    if (stage && stage[0])
        remove_tree(stage);
}

void sw_outdir_rename_msg(sw_error *err, const char *stage, const char *out_dir)
{
    if (!err || err->code == SW_OK || !stage || !stage[0])
        return;
    char from[SW_PATH_MAX + 2], out[SW_ERROR_MSG_MAX];
    snprintf(from, sizeof from, "%s/", stage);
    size_t nf = strlen(from), no = strlen(out_dir), k = 0;
    const char *s = err->msg;
    while (*s && k + 1 < sizeof out) {
        if (!strncmp(s, from, nf) && k + no + 2 < sizeof out) {
            memcpy(out + k, out_dir, no);
            k += no;
            out[k++] = '/';
            s += nf;
        } else {
            out[k++] = *s++;
        }
    }
    out[k] = '\0';
    memcpy(err->msg, out, k + 1);
}
