/* atomic_file.c - "<path>.part", then rename (see atomic_file.h).
 *
 * Invariant: nothing here writes to af->path; only rename() of a complete .part reaches it, and
 * every failure path removes the .part.
 */
#include "base/atomic_file.h"

#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

sw_status sw_atomic_begin(sw_atomic_file *af, const char *path, sw_error *err)
{
    af->f = NULL;
    af->path[0] = af->part[0] = '\0';
    size_t n = strlen(path);
    if (n + sizeof SW_ATOMIC_SUFFIX > sizeof af->part)
        return sw_fail(err, SW_ERR_RANGE, "%.200s...: the path has %zu characters (accepted: at most %zu)", path, n,
                       sizeof af->part - sizeof SW_ATOMIC_SUFFIX);
    memcpy(af->path, path, n + 1);
    memcpy(af->part, path, n);
    memcpy(af->part + n, SW_ATOMIC_SUFFIX, sizeof SW_ATOMIC_SUFFIX);
    return SW_OK;
}

/* Returns 1 when the folder part of path (up to its last '/', or "." without one) does not
 * exist, and copies that folder into out (size n). */
static int missing_folder(const char *path, char *out, size_t n)
{
    const char *slash = strrchr(path, '/');
    size_t len = slash ? (size_t)(slash - path) : 1;
    if (slash == path)
        len = 1;  /* "/name": the root */
    if (len + 1 > n)
        return 0;
    memcpy(out, slash ? path : ".", len);
    out[len] = '\0';
    struct stat st;
    return stat(out, &st) != 0 && errno == ENOENT;
}

sw_status sw_atomic_create_failed(sw_atomic_file *af, sw_status code, const char *cause, sw_error *err)
{
    char folder[SW_ATOMIC_PATH_MAX];
    sw_status st;
    if (missing_folder(af->path, folder, sizeof folder))
        st = sw_fail(err, SW_ERR_IO, "%s: cannot create %s: folder %s does not exist", af->path, af->part, folder);
    else
        st = sw_fail(err, code, "%s: cannot create %s: %s", af->path, af->part, cause);
    sw_atomic_discard(af);   /* a library may have left a partial file */
    return st;
}

sw_status sw_atomic_commit(sw_atomic_file *af, sw_error *err)
{
    if (rename(af->part, af->path) == 0)
        return SW_OK;
    int e = errno;
    remove(af->part);
    return sw_fail(err, SW_ERR_IO, "%s: cannot rename %s to it: %s", af->path, af->part, strerror(e));
}

void sw_atomic_discard(sw_atomic_file *af)
{
    if (!af)
        return;
    if (af->f)
        fclose(af->f);
    af->f = NULL;
    if (af->part[0])
        remove(af->part);
}

sw_status sw_atomic_open(sw_atomic_file *af, const char *path, sw_error *err)
{
    sw_status st = sw_atomic_begin(af, path, err);
    if (st != SW_OK)
        return st;
    af->f = fopen(af->part, "w");
    return af->f ? SW_OK : sw_atomic_create_failed(af, SW_ERR_IO, strerror(errno), err);
}

sw_status sw_atomic_close(sw_atomic_file *af, sw_error *err)
{
    int bad = fflush(af->f) != 0 || ferror(af->f);
    int e = bad ? errno : 0;
    if (fclose(af->f) != 0 && !bad) {
        bad = 1;
        e = errno;
    }
    af->f = NULL;
    if (bad) {
        remove(af->part);
        return sw_fail(err, SW_ERR_IO, "%s: cannot write %s: %s", af->path, af->part, strerror(e ? e : EIO));
    }
    return sw_atomic_commit(af, err);
}

sw_status sw_atomic_write_text(const char *path, const char *text, sw_error *err)
{
    sw_atomic_file af;
    sw_status st = sw_atomic_open(&af, path, err);
    if (st != SW_OK)
        return st;
    fputs(text, af.f);   /* a failed write sets the stream's error flag, which sw_atomic_close reports */
    return sw_atomic_close(&af, err);
}

char *sw_read_text(const char *path)
{
    FILE *f = fopen(path, "rb");
    if (!f)
        return NULL;
    char *buf = NULL;
    size_t len = 0, cap = 0;
    for (;;) {
        if (len + 4096 + 1 > cap) {
            cap = (cap + 4096) * 2;
            char *nb = realloc(buf, cap);
            if (!nb) {   /* out of memory: no partial text, which would list too few files */
                free(buf);
                fclose(f);
                errno = ENOMEM;
                return NULL;
            }
            buf = nb;
        }
        size_t got = fread(buf + len, 1, cap - len - 1, f);
        len += got;
        if (got == 0)
            break;
    }
    fclose(f);
    if (buf)
        buf[len] = '\0';
    return buf;
}
