/* memcheck.c - memory need against the machine's available memory, the cgroup and RLIMIT_AS (see memcheck.h). */
#define _GNU_SOURCE
#include "run/memcheck.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>

#include "base/cgroup.h"

/* The value after `key` in a "Key: N kB" file such as /proc/meminfo, bytes; -1 when absent. */
static double kb_field(const char *file, const char *key)
{
    FILE *f = fopen(file, "r");
    if (!f)
        return -1;
    char line[256];
    double v = -1;
    size_t n = strlen(key);
    while (fgets(line, sizeof line, f))
        if (!strncmp(line, key, n) && line[n] == ':') {
            v = strtod(line + n + 1, NULL) * 1024.0;
            break;
        }
    fclose(f);
    return v;
}

/* The number in a one-value file (cgroup memory.max etc.); -1 for "max", absent or unreadable. */
static double number_file(const char *path)
{
    FILE *f = fopen(path, "r");
    if (!f)
        return -1;
    char buf[64] = "";
    double v = -1;
    if (fgets(buf, sizeof buf, f) && buf[0] >= '0' && buf[0] <= '9')
        v = strtod(buf, NULL);
    fclose(f);
    return v;
}

/* Walks the process's memory cgroup (base/cgroup.h) and its ancestors, keeping the tightest limit less use. */
static void read_cgroup(sw_memory_limits *m)
{
    sw_cgroup cg;
    if (!sw_cgroup_find("memory", &cg))
        return;
    const char *root = cg.v2 ? "/sys/fs/cgroup" : "/sys/fs/cgroup/memory";
    const char *lim_name = cg.v2 ? "memory.max" : "memory.limit_in_bytes";
    const char *use_name = cg.v2 ? "memory.current" : "memory.usage_in_bytes";
    do {
        char lim_path[1400], use_path[1400];
        snprintf(lim_path, sizeof lim_path, "%s%s/%s", root, sw_cgroup_sub(&cg), lim_name);
        snprintf(use_path, sizeof use_path, "%s%s/%s", root, sw_cgroup_sub(&cg), use_name);
        double lim = number_file(lim_path);
        if (lim > 0 && lim < 9.0e18) {   /* v1 writes "no limit" as a huge number */
            double use = number_file(use_path);
            double free_b = lim - (use > 0 ? use : 0);
            if (m->cgroup_free < 0 || free_b < m->cgroup_free) {
                m->cgroup_free = free_b < 0 ? 0 : free_b;
                m->cgroup_limit = lim;
                snprintf(m->cgroup_file, sizeof m->cgroup_file, "%.255s", lim_path);
            }
        }
    } while (sw_cgroup_up(&cg));
}

void sw_memory_limits_read(sw_memory_limits *m)
{
    memset(m, 0, sizeof *m);
    m->available = kb_field("/proc/meminfo", "MemAvailable");
    m->cgroup_free = m->cgroup_limit = -1;
    read_cgroup(m);
    m->as_free = m->as_limit = -1;
    struct rlimit rl;
    if (getrlimit(RLIMIT_AS, &rl) == 0 && rl.rlim_cur != RLIM_INFINITY) {
        double used = kb_field("/proc/self/status", "VmSize");
        m->as_limit = (double)rl.rlim_cur;
        m->as_free = m->as_limit - (used > 0 ? used : 0);
        if (m->as_free < 0)
            m->as_free = 0;
    }
}

static const char *gb(double b, char *out, size_t n)
{
    if (b >= 1e9)
        snprintf(out, n, "%.1f GB", b / 1e9);
    else
        snprintf(out, n, "%.0f MB", b / 1e6);
    return out;
}

sw_status sw_memory_check(double need_bytes, int threads, const sw_memory_limits *m, sw_error *err)
{
    char a[32], b[32], c[32], d[32];
    if (threads < 1)
        threads = 1;
    double as_need = need_bytes * 1.1 + 64e6 * (double)threads;
    if (m->as_free >= 0 && as_need > m->as_free)
        return sw_fail(err, SW_ERR_NOMEM, "the run needs %s of memory (%s with the address-space margin), the "
                       "address-space limit (RLIMIT_AS, ulimit -v) allows %s more (limit %s); raise the limit, or use "
                       "a coarser grid or --precision single", gb(need_bytes, a, sizeof a), gb(as_need, c, sizeof c),
                       gb(m->as_free, b, sizeof b), gb(m->as_limit, d, sizeof d));
    if (m->cgroup_free >= 0 && need_bytes > m->cgroup_free)
        return sw_fail(err, SW_ERR_NOMEM, "the run needs %s of memory, the cgroup allows %s more (limit %s in %s); "
                       "raise the limit, or use a coarser grid or --precision single", gb(need_bytes, a, sizeof a),
                       gb(m->cgroup_free, b, sizeof b), gb(m->cgroup_limit, c, sizeof c), m->cgroup_file);
    if (m->available >= 0 && need_bytes > m->available)
        return sw_fail(err, SW_ERR_NOMEM, "the run needs %s of memory, the machine has %s available (MemAvailable "
                       "in /proc/meminfo); close other programs, or use a coarser grid or --precision single",
                       gb(need_bytes, a, sizeof a), gb(m->available, b, sizeof b));
    return SW_OK;
}
