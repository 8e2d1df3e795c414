/* cpu_share.c - the free cores now, and the threads and waiting that fit them (see cpu_share.h).
 *
 * The parsers and the decision are pure (text or numbers in, numbers out) so that the tests feed them
 * invented texts; only sw_cpu_load_measure and the environment functions touch the system. */
#define _GNU_SOURCE
#include "base/cpu_share.h"

#include <errno.h>
#include <limits.h>
#include <math.h>
#include <sched.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#include "base/cgroup.h"
#include "base/omp_compat.h"

/* ---- parsing --------------------------------------------------------------------------------------- */

/* The next whole number at *p (blanks skipped) into *v; advances *p. 0 when there is none. */
static int next_ull(const char **p, unsigned long long *v)
{
    const char *s = *p;
    while (*s == ' ' || *s == '\t')
        s++;
    if (*s < '0' || *s > '9')
        return 0;
    errno = 0;
    char *end = NULL;
    *v = strtoull(s, &end, 10);
    if (errno || end == s)
        return 0;
    *p = end;
    return 1;
}

sw_status sw_cpu_stat_parse(const char *text, const char *name, sw_cpu_times *cpus, size_t cap, size_t *n,
                            sw_error *err)
{
    if (!text || !name || !cpus || !n)
        return sw_fail(err, SW_ERR_USAGE, "sw_cpu_stat_parse needs a text, a name, an array and a count");
    *n = 0;
    size_t line = 1, got = 0;
    for (const char *p = text; *p; line++) {
        const char *eol = strchr(p, '\n');
        size_t len = eol ? (size_t)(eol - p) : strlen(p);
        if (len > 3 && !strncmp(p, "cpu", 3) && p[3] >= '0' && p[3] <= '9') {
            char buf[512];
            snprintf(buf, sizeof buf, "%.*s", (int)(len < sizeof buf - 1 ? len : sizeof buf - 1), p);
            char *end = NULL;
            long cpu = strtol(buf + 3, &end, 10);
            const char *q = end;
            unsigned long long v[8] = {0};
            int k = 0;
            while (k < 8 && next_ull(&q, &v[k]))
                k++;
            while (*q == ' ' || *q == '\t')
                q++;
            int trailing_ok = *q == '\0' || (*q >= '0' && *q <= '9');   /* guest, guest_nice follow */
            if (cpu < 0 || cpu > INT_MAX || (*end != ' ' && *end != '\t') || k < 4 || !trailing_ok)
                return sw_fail(err, SW_ERR_PARSE, "%s:%zu: a cpu line has %d whole numbers%s; expected "
                               "\"cpuN user nice system idle [iowait irq softirq steal ...]\" (at least 4)",
                               name, line, k, trailing_ok ? "" : " and then other text");
            if (got < cap) {
                /* user nice system idle iowait irq softirq steal; guest time is already inside user */
                cpus[got].cpu = (int)cpu;
                cpus[got].idle = v[3] + v[4];
                cpus[got].total = v[0] + v[1] + v[2] + v[3] + v[4] + v[5] + v[6] + v[7];
                got++;
            }
        }
        if (!eol)
            break;
        p = eol + 1;
    }
    *n = got;
    return SW_OK;
}

/* The entry for cpu in t[0 .. n-1], or NULL. */
static const sw_cpu_times *find_cpu(const sw_cpu_times *t, size_t n, int cpu)
{
    for (size_t q = 0; q < n; q++)
        if (t[q].cpu == cpu)
            return &t[q];
    return NULL;
}

double sw_cpu_busy_cores(const sw_cpu_times *before, size_t n_before, const sw_cpu_times *after, size_t n_after,
                         const unsigned char *allowed, size_t n_allowed, double own_cores)
{
    if (!before || !after || !allowed)
        return -1;
    double busy = 0;
    size_t counted = 0;
    for (size_t q = 0; q < n_after; q++) {
        const sw_cpu_times *b = &after[q], *a = find_cpu(before, n_before, b->cpu);
        if (!a || b->cpu < 0 || (size_t)b->cpu >= n_allowed || !allowed[b->cpu])
            continue;
        if (b->total <= a->total || b->idle < a->idle)   /* no tick passed, or counters went back */
            continue;
        double dt = (double)(b->total - a->total), di = (double)(b->idle - a->idle);
        double share = 1.0 - di / dt;
        busy += share < 0 ? 0 : share > 1 ? 1 : share;
        counted++;
    }
    if (!counted)
        return -1;
    busy -= own_cores > 0 ? own_cores : 0;
    return busy < 0 ? 0 : busy > (double)counted ? (double)counted : busy;
}

double sw_cpu_busy_between(const sw_cpu_reading *before, const sw_cpu_reading *after, const unsigned char *allowed,
                           size_t n_allowed)
{
    if (!before || !after || !allowed || !before->cpus || !after->cpus || !before->n_cpus || !after->n_cpus)
        return -1;
    const double wall = after->wall_s - before->wall_s;
    if (!(wall > 0))
        return -1;
    const double own = (after->own_cpu_s - before->own_cpu_s) / wall;
    return sw_cpu_busy_cores(before->cpus, before->n_cpus, after->cpus, after->n_cpus, allowed, n_allowed, own);
}

sw_status sw_loadavg_parse(const char *text, const char *name, int *running, int *tasks, sw_error *err)
{
    if (!text || !name || !running || !tasks)
        return sw_fail(err, SW_ERR_USAGE, "sw_loadavg_parse needs a text, a name and two outputs");
    double l1, l5, l15;
    long r = 0, t = 0;
    int used = 0;
    if (sscanf(text, "%lf %lf %lf %ld/%ld%n", &l1, &l5, &l15, &r, &t, &used) != 5 || r < 1 || t < r ||
        r > INT_MAX || t > INT_MAX)
        return sw_fail(err, SW_ERR_PARSE, "%s: expected \"LOAD1 LOAD5 LOAD15 RUNNING/TASKS LASTPID\" with "
                       "1 <= RUNNING <= TASKS, as in \"0.52 0.41 0.30 3/412 12345\"", name);
    *running = (int)r;
    *tasks = (int)t;
    return SW_OK;
}

sw_status sw_cpu_max_parse(const char *text, const char *name, double *cores, sw_error *err)
{
    if (!text || !name || !cores)
        return sw_fail(err, SW_ERR_USAGE, "sw_cpu_max_parse needs a text, a name and an output");
    char first[32] = "";
    double period = 0;
    int used = 0;
    if (sscanf(text, "%31s %lf%n", first, &period, &used) == 2 && period > 0 && isfinite(period)) {
        const char *rest = text + used;
        while (*rest == ' ' || *rest == '\t' || *rest == '\n')
            rest++;
        if (!*rest) {
            if (!strcmp(first, "max")) {
                *cores = 0;
                return SW_OK;
            }
            char *end = NULL;
            double quota = strtod(first, &end);
            if (end != first && !*end && isfinite(quota) && quota != 0) {
                *cores = quota < 0 ? 0 : quota / period;   /* v1 writes "no quota" as -1 */
                return SW_OK;
            }
        }
    }
    return sw_fail(err, SW_ERR_PARSE, "%s: expected \"QUOTA PERIOD\" (microseconds, QUOTA > 0), \"max PERIOD\" "
                   "or \"-1 PERIOD\"", name);
}

/* ---- measuring ------------------------------------------------------------------------------------- */

/* The whole of a small /proc or /sys file into buf (size n), NUL-terminated. 1 on success. */
static int read_small(const char *path, char *buf, size_t n)
{
    FILE *f = fopen(path, "r");
    if (!f)
        return 0;
    size_t got = fread(buf, 1, n - 1, f);
    int ok = !ferror(f);
    fclose(f);
    buf[got] = '\0';
    return ok && got > 0;
}

/* Other runnable tasks now (procs_running less this reader), or -1. */
static int others_running(void)
{
    char buf[256];
    int running = 0, tasks = 0;
    if (!read_small("/proc/loadavg", buf, sizeof buf) ||
        sw_loadavg_parse(buf, "/proc/loadavg", &running, &tasks, NULL) != SW_OK)
        return -1;
    return running - 1;
}

#define STAT_TEXT_BYTES (1 << 17)   /* /proc/stat of 1024 CPUs fits; only the start (the cpu lines) matters */

/* The per-CPU counters of /proc/stat into t (cap entries), read through buf (STAT_TEXT_BYTES); 0 when
 * unreadable. */
static size_t read_stat(char *buf, sw_cpu_times *t, size_t cap)
{
    size_t n = 0;
    if (!read_small("/proc/stat", buf, STAT_TEXT_BYTES) ||
        sw_cpu_stat_parse(buf, "/proc/stat", t, cap, &n, NULL) != SW_OK)
        return 0;
    return n;
}

/* The CPUs this process may run on, marked in allowed[SW_CPU_SHARE_MAX_CPUS] (sched_getaffinity, else every
 * online CPU); returns their count, >= 1. */
static int allowed_cpus(unsigned char *allowed)
{
    memset(allowed, 0, SW_CPU_SHARE_MAX_CPUS);
    cpu_set_t set;
    CPU_ZERO(&set);
    int cores = 0;
    if (sched_getaffinity(0, sizeof set, &set) == 0) {
        for (int c = 0; c < SW_CPU_SHARE_MAX_CPUS && c < CPU_SETSIZE; c++)
            if (CPU_ISSET(c, &set)) {
                allowed[c] = 1;
                cores++;
            }
    }
    if (cores == 0) {   /* no affinity: every online CPU */
        long online = sysconf(_SC_NPROCESSORS_ONLN);
        cores = online > 0 ? (int)(online < SW_CPU_SHARE_MAX_CPUS ? online : SW_CPU_SHARE_MAX_CPUS) : 1;
        memset(allowed, 1, (size_t)cores);
    }
    return cores;
}

static double seconds(clockid_t clk)
{
    struct timespec ts;
    if (clock_gettime(clk, &ts) != 0)
        return 0;
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* The tightest cgroup CPU quota along this process's cgroup path (v2 cpu.max, else v1 cpu.cfs_quota_us and
 * cpu.cfs_period_us), cores; 0 when none. */
static double cgroup_quota(void)
{
    sw_cgroup cg;
    if (!sw_cgroup_find("cpu", &cg))
        return 0;
    double best = 0;
    do {
        const char *sub = sw_cgroup_sub(&cg);
        char path[1400], text[128] = "", a[64], b[64];
        double cores = 0;
        if (cg.v2) {
            snprintf(path, sizeof path, "/sys/fs/cgroup%s/cpu.max", sub);
            if (read_small(path, text, sizeof text) && sw_cpu_max_parse(text, path, &cores, NULL) != SW_OK)
                cores = 0;
        } else {   /* the v1 folder is named after the controller list as mounted: cpu,cpuacct or cpu */
            static const char *const roots[] = {"/sys/fs/cgroup/cpu,cpuacct", "/sys/fs/cgroup/cpu"};
            for (size_t r = 0; r < 2 && cores == 0; r++) {
                snprintf(path, sizeof path, "%s%s/cpu.cfs_quota_us", roots[r], sub);
                char pp[1400];
                snprintf(pp, sizeof pp, "%s%s/cpu.cfs_period_us", roots[r], sub);
                if (read_small(path, a, sizeof a) && read_small(pp, b, sizeof b)) {
                    a[strcspn(a, "\n")] = b[strcspn(b, "\n")] = '\0';
                    snprintf(text, sizeof text, "%s %s", a, b);
                    if (sw_cpu_max_parse(text, path, &cores, NULL) != SW_OK)
                        cores = 0;
                }
            }
        }
        if (cores > 0 && (best == 0 || cores < best))
            best = cores;
    } while (sw_cgroup_up(&cg));
    return best;
}

void sw_cpu_load_measure(double sample_s, sw_cpu_load *out)
{
    if (!out)
        return;
    memset(out, 0, sizeof *out);
    out->busy_cores = -1;
    out->others_running = -1;

    static unsigned char allowed[SW_CPU_SHARE_MAX_CPUS];
    const int cores = allowed_cpus(allowed);
    out->cores = cores;
    out->quota_cores = cgroup_quota();

    int others = others_running();
    out->others_running = others;
    if (others == 0) {          /* nothing else runnable: free at once, no sample */
        out->busy_cores = 0;
        return;
    }
    if (sample_s <= 0)
        sample_s = SW_CPU_SHARE_SAMPLE_S;
    static sw_cpu_times before[SW_CPU_SHARE_MAX_CPUS], after[SW_CPU_SHARE_MAX_CPUS];
    static char text[STAT_TEXT_BYTES];
    double w0 = seconds(CLOCK_MONOTONIC), c0 = seconds(CLOCK_PROCESS_CPUTIME_ID);
    size_t nb = read_stat(text, before, SW_CPU_SHARE_MAX_CPUS);
    struct timespec nap = {.tv_sec = (time_t)sample_s, .tv_nsec = (long)((sample_s - floor(sample_s)) * 1e9)};
    while (nanosleep(&nap, &nap) != 0 && errno == EINTR) {
    }
    size_t na = read_stat(text, after, SW_CPU_SHARE_MAX_CPUS);
    double w1 = seconds(CLOCK_MONOTONIC), c1 = seconds(CLOCK_PROCESS_CPUTIME_ID);
    out->sample_s = w1 - w0;
    int others_end = others_running();
    if (others_end > others)
        others = others_end;
    out->others_running = others;
    double own = out->sample_s > 0 ? (c1 - c0) / out->sample_s : 0;
    double busy = nb && na ? sw_cpu_busy_cores(before, nb, after, na, allowed, sizeof allowed, own) : -1;
    if (busy >= 0 && others >= 0 && busy > others)
        busy = others;          /* a ticks' rounding never makes more busy cores than runnable tasks */
    if (busy < 0 && others >= 0)
        busy = others < cores ? others : cores;   /* /proc/stat unreadable: the run queue alone */
    out->busy_cores = busy;
}

/* ---- re-measuring while a run goes on ----------------------------------------------------------------- */

/* Invariant: reading[cur] is the last boundary's; the other slot is free for the next. */
struct sw_cpu_mark {
    sw_cpu_times cpus[2][SW_CPU_SHARE_MAX_CPUS];   /* the two readings' per-CPU counters */
    sw_cpu_reading reading[2];                     /* the readings (cpus point into the array above) */
    int cur;                                       /* which reading is the last one, 0 or 1 */
    unsigned char allowed[SW_CPU_SHARE_MAX_CPUS];  /* the CPUs this process may run on, now */
    char text[STAT_TEXT_BYTES];                    /* /proc/stat's text while it is parsed */
};

/* Reads the machine now into m's slot k. */
static void take_reading(sw_cpu_mark *m, int k)
{
    sw_cpu_reading *r = &m->reading[k];
    r->cpus = m->cpus[k];
    r->n_cpus = read_stat(m->text, m->cpus[k], SW_CPU_SHARE_MAX_CPUS);
    r->wall_s = seconds(CLOCK_MONOTONIC);
    r->own_cpu_s = seconds(CLOCK_PROCESS_CPUTIME_ID);
}

sw_cpu_mark *sw_cpu_mark_new(void)
{
    sw_cpu_mark *m = malloc(sizeof *m);
    if (!m)
        return NULL;
    m->cur = 0;
    take_reading(m, 0);
    return m;
}

void sw_cpu_load_since(sw_cpu_mark *m, sw_cpu_load *out)
{
    if (!m || !out)
        return;
    memset(out, 0, sizeof *out);
    const int next = 1 - m->cur;
    take_reading(m, next);
    out->cores = allowed_cpus(m->allowed);
    out->quota_cores = cgroup_quota();
    out->busy_cores = sw_cpu_busy_between(&m->reading[m->cur], &m->reading[next], m->allowed, sizeof m->allowed);
    out->others_running = others_running();
    out->sample_s = m->reading[next].wall_s - m->reading[m->cur].wall_s;
    m->cur = next;
}

void sw_cpu_mark_free(sw_cpu_mark *m)
{
    free(m);
}

/* ---- deciding -------------------------------------------------------------------------------------- */

void sw_cpu_wishes_from_env(sw_cpu_wishes *w, int threads_option)
{
    if (!w)
        return;
    w->threads_option = threads_option > 0 ? threads_option : 0;
    w->omp_num_threads = getenv("OMP_NUM_THREADS");
    w->omp_wait_policy = getenv("OMP_WAIT_POLICY");
    w->gomp_spincount = getenv("GOMP_SPINCOUNT");
    w->auto_switch = getenv(SW_CPU_SHARE_SWITCH);
}

static int is_set(const char *s)
{
    return s && *s;
}

/* OMP_NUM_THREADS as one whole number >= 1 (leading and trailing blanks allowed), else 0. */
static int plain_count(const char *s)
{
    if (!is_set(s))
        return 0;
    char *end = NULL;
    errno = 0;
    long v = strtol(s, &end, 10);
    while (end && (*end == ' ' || *end == '\t'))
        end++;
    return !errno && end != s && !*end && v >= 1 && v <= 1024 ? (int)v : 0;
}

/* 1 = on, 0 = off, -1 = neither. */
static int switch_state(const char *s)
{
    if (!is_set(s) || !strcmp(s, "on"))
        return 1;
    return !strcmp(s, "off") ? 0 : -1;
}

int sw_cpu_share_wants_load(const sw_cpu_wishes *w)
{
    if (!w || switch_state(w->auto_switch) != 1)
        return 0;
    int threads_fixed = w->threads_option > 0 || is_set(w->omp_num_threads);
    int wait_fixed = is_set(w->omp_wait_policy) || is_set(w->gomp_spincount);
    return !(threads_fixed && wait_fixed);
}

/* "1", "0.6": a core count to one decimal, whole when it is. */
static void cores_text(double c, char *buf, size_t n)
{
    double r = round(c * 10) / 10;
    if (fabs(r - round(r)) < 1e-9)
        snprintf(buf, n, "%.0f", r);
    else
        snprintf(buf, n, "%.1f", r);
}

static void add_part(char *note, size_t n, const char *part)
{
    if (!*part)
        return;
    size_t len = strlen(note);
    snprintf(note + len, n - len, "%s%s", len ? "; " : "", part);
}

/* The cores a load leaves to run on: its CPUs cut to the quota rounded up (a quota of 1.5 cores leaves 2
 * to run on, part-time), >= 1; and into *free the CPUs less the others' busy cores, within the quota, >= 0
 * (-1 when the busy cores are unknown or load is NULL). */
static int usable_cores(const sw_cpu_load *load, double *free)
{
    const int aff = load && load->cores > 0 ? load->cores : 1;   /* the CPUs; the busy share is over these */
    int cores = aff;
    const double quota = load && load->quota_cores > 0 ? load->quota_cores : 0;
    if (quota > 0 && ceil(quota - 0.01) < cores)
        cores = (int)fmax(1, ceil(quota - 0.01));
    *free = -1;
    if (load && load->busy_cores >= 0) {
        double fr = (double)aff - load->busy_cores;
        if (quota > 0 && fr > quota)
            fr = quota;
        *free = fr < 0 ? 0 : fr;
    }
    return cores;
}

int sw_cpu_share_auto_threads(double free_cores, int cores, int passive)
{
    if (cores < 1)
        cores = 1;
    int t = cores;
    if (free_cores >= 0) {
        /* spinning on the whole free cores, or one thread more waiting passively when the left-over
         * fraction pays for passive waiting's cost with SW_CPU_SHARE_PASSIVE_GAIN to spare */
        int whole = (int)floor(free_cores + SW_CPU_SHARE_SLACK);
        int part = (int)ceil(free_cores - SW_CPU_SHARE_SLACK);
        whole = whole < 1 ? 1 : whole;
        t = whole;
        if (passive && part > whole &&
            free_cores * (1 - SW_CPU_SHARE_PASSIVE_COST) > SW_CPU_SHARE_PASSIVE_GAIN * whole)
            t = part;
    }
    return t < 1 ? 1 : t > cores ? cores : t;
}

int sw_cpu_share_retune(const sw_cpu_load *load, sw_wait wait, int current, int cap)
{
    if (!load || load->busy_cores < 0)
        return current;
    double fr;
    const int cores = usable_cores(load, &fr);
    const int t = sw_cpu_share_auto_threads(fr, cores, wait == SW_WAIT_PASSIVE);
    return t > cap ? (cap < 1 ? 1 : cap) : t;
}

sw_status sw_cpu_share_decide(const sw_cpu_load *load, const sw_cpu_wishes *w, sw_cpu_choice *out,
                              sw_error *err)
{
    if (!w || !out)
        return sw_fail(err, SW_ERR_USAGE, "sw_cpu_share_decide needs the wishes and an output");
    memset(out, 0, sizeof *out);
    const int aff = load && load->cores > 0 ? load->cores : 1;   /* the CPUs; the busy share is over these */
    const int cores = usable_cores(load, &out->free_cores);
    const double quota = load && load->quota_cores > 0 ? load->quota_cores : 0;
    out->cores = cores;
    const int user_wait = is_set(w->omp_wait_policy) || is_set(w->gomp_spincount);
    out->wait = user_wait ? SW_WAIT_USER : SW_WAIT_SPIN;

    char wait_part[96] = "";
    if (is_set(w->omp_wait_policy))
        snprintf(wait_part, sizeof wait_part, "waiting as OMP_WAIT_POLICY=%.40s", w->omp_wait_policy);
    else if (is_set(w->gomp_spincount))
        snprintf(wait_part, sizeof wait_part, "waiting as GOMP_SPINCOUNT=%.40s", w->gomp_spincount);

    int sw = switch_state(w->auto_switch);
    if (sw != 1) {
        out->free_cores = -1;   /* not the choice's business with the switch off */
        out->from = w->threads_option > 0 ? SW_THREADS_OPTION : is_set(w->omp_num_threads) ? SW_THREADS_ENV
                                                                                           : SW_THREADS_DEFAULT;
        out->threads = w->threads_option > 0 ? w->threads_option : plain_count(w->omp_num_threads);
        add_part(out->note, sizeof out->note, out->from == SW_THREADS_OPTION ? "set by --threads"
                                              : out->from == SW_THREADS_ENV ? "set by OMP_NUM_THREADS" : "");
        add_part(out->note, sizeof out->note, "automatic choice off by " SW_CPU_SHARE_SWITCH "=off");
        add_part(out->note, sizeof out->note, wait_part);
        if (sw < 0)
            return sw_fail(err, SW_ERR_USAGE, "%s = '%.60s': accepted values are on and off (off: all cores, "
                           "spinning waits, as OpenMP's defaults)", SW_CPU_SHARE_SWITCH, w->auto_switch);
        return SW_OK;
    }

    /* the free cores: the CPUs less the others' use, within the quota */
    char load_part[96] = "";
    char a[16], b[16];
    if (load && load->busy_cores >= 0) {
        cores_text(load->busy_cores > aff ? aff : load->busy_cores, a, sizeof a);
        if (load->busy_cores >= 0.05)
            snprintf(load_part, sizeof load_part, "%s of %d core%s busy with other work", a, aff,
                     aff == 1 ? "" : "s");
        else if (aff == 1)
            snprintf(load_part, sizeof load_part, "its 1 core free");
        else
            snprintf(load_part, sizeof load_part, "all %d cores free", aff);
        if (quota > 0) {
            cores_text(quota, b, sizeof b);
            size_t len = strlen(load_part);
            snprintf(load_part + len, sizeof load_part - len, ", a CPU quota of %s cores", b);
        }
    } else if (load) {
        snprintf(load_part, sizeof load_part, "load unknown (/proc/stat and /proc/loadavg unreadable)");
    }

    if (w->threads_option > 0) {
        out->from = SW_THREADS_OPTION;
        out->threads = w->threads_option;
    } else if (is_set(w->omp_num_threads)) {
        out->from = SW_THREADS_ENV;
        out->threads = plain_count(w->omp_num_threads);
    } else {
        out->from = SW_THREADS_AUTO;
        out->threads = sw_cpu_share_auto_threads(out->free_cores, cores, !user_wait);
    }
    /* passive when some thread has no core of its own (SW_CPU_SHARE_SLACK for the sample's ticks) */
    int team = out->threads > 0 ? out->threads : cores;
    if (!user_wait && team > 1 && out->free_cores >= 0 && out->free_cores < (double)team - SW_CPU_SHARE_SLACK)
        out->wait = SW_WAIT_PASSIVE;

    add_part(out->note, sizeof out->note, out->from == SW_THREADS_OPTION ? "set by --threads"
                                          : out->from == SW_THREADS_ENV ? "set by OMP_NUM_THREADS" : "");
    add_part(out->note, sizeof out->note, load_part);
    add_part(out->note, sizeof out->note, out->wait == SW_WAIT_PASSIVE ? "passive waiting" : wait_part);
    return SW_OK;
}

/* ---- the restart ----------------------------------------------------------------------------------- */

int sw_cpu_share_needs_restart(const sw_cpu_choice *c)
{
    return c && c->wait == SW_WAIT_PASSIVE;
}

void sw_cpu_share_encode(const sw_cpu_choice *c, char *buf, size_t n)
{
    if (!buf || !n)
        return;
    if (!c) {
        buf[0] = '\0';
        return;
    }
    snprintf(buf, n, "v1 %d %d %d %d %.4f|%s", c->threads, (int)c->from, (int)c->wait, c->cores, c->free_cores,
             c->note);
}

int sw_cpu_share_decode(const char *text, sw_cpu_choice *out)
{
    if (!text || !out)
        return 0;
    sw_cpu_choice c;
    memset(&c, 0, sizeof c);
    int from = -1, wait = -1, used = 0;
    if (sscanf(text, "v1 %d %d %d %d %lf|%n", &c.threads, &from, &wait, &c.cores, &c.free_cores, &used) != 5 ||
        !used || text[used - 1] != '|')
        return 0;
    if (c.threads < 0 || c.threads > 1024 || from < SW_THREADS_AUTO || from > SW_THREADS_DEFAULT ||
        wait < SW_WAIT_SPIN || wait > SW_WAIT_USER || c.cores < 1 || !isfinite(c.free_cores) ||
        strlen(text + used) >= sizeof c.note || strchr(text + used, '\n'))
        return 0;
    c.from = (sw_threads_from)from;
    c.wait = (sw_wait)wait;
    snprintf(c.note, sizeof c.note, "%s", text + used);
    *out = c;
    return 1;
}

sw_status sw_cpu_share_export(const sw_cpu_choice *c, sw_error *err)
{
    if (!c)
        return sw_fail(err, SW_ERR_USAGE, "sw_cpu_share_export needs a choice");
    char buf[320];
    sw_cpu_share_encode(c, buf, sizeof buf);
    if (setenv("OMP_WAIT_POLICY", "passive", 1) != 0 || setenv(SW_CPU_SHARE_ENV, buf, 1) != 0) {
        sw_cpu_share_unexport();
        return sw_fail(err, SW_ERR_NOMEM, "cannot set OMP_WAIT_POLICY and %s for the restart: %s",
                       SW_CPU_SHARE_ENV, strerror(errno));
    }
    return SW_OK;
}

void sw_cpu_share_unexport(void)
{
    unsetenv("OMP_WAIT_POLICY");
    unsetenv(SW_CPU_SHARE_ENV);
}

int sw_cpu_share_import(sw_cpu_choice *out)
{
    const char *s = getenv(SW_CPU_SHARE_ENV);
    if (!s)
        return 0;
    sw_cpu_choice c;
    int ok = out && sw_cpu_share_decode(s, &c);
    unsetenv(SW_CPU_SHARE_ENV);
    if (ok)
        *out = c;
    return ok;
}

/* ---- the process's choice -------------------------------------------------------------------------- */

static sw_cpu_choice process_choice;
static int process_has_choice;

void sw_cpu_share_apply(const sw_cpu_choice *c)
{
    if (!c)
        return;
    if (c->threads > 0)
        omp_set_num_threads(c->threads);
    process_choice = *c;
    process_has_choice = 1;
}

int sw_cpu_share_adapts(int threads, sw_wait *wait)
{
    if (!process_has_choice || process_choice.from != SW_THREADS_AUTO || process_choice.threads <= 0 ||
        process_choice.threads != threads)
        return 0;
    if (wait)
        *wait = process_choice.wait;
    return 1;
}

const char *sw_cpu_share_note(int threads)
{
    if (!process_has_choice || (process_choice.threads > 0 && process_choice.threads != threads))
        return "";
    return process_choice.note;
}

size_t sw_cpu_cache_bytes(void)
{
    long v = sysconf(_SC_LEVEL3_CACHE_SIZE);
    if (v <= 0)
        v = sysconf(_SC_LEVEL2_CACHE_SIZE);
    return v > 0 ? (size_t)v : (size_t)32 << 20;
}
