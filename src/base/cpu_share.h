/* cpu_share.h - how many of this process's cores other programs leave free now, and the OpenMP thread count
 * and waiting that fit them, chosen when the program starts and re-checked while a long run goes on.
 *
 * Why. The threads of a run meet at several barriers per step. libgomp's waiting threads spin a while
 * (about 3 ms by default) before they sleep; a thread that shares its core with another program is
 * descheduled for a time slice, and its partners spin meanwhile. On 2 cores with one busy with another
 * program, the demo took 6.2 s on 2 threads against 3.3 s on 1 (2.0 s on a quiet machine); a small,
 * cache-resident grid ran 1000x slower. Passive waiting (OMP_WAIT_POLICY=passive) removes the collapse
 * but costs about 7 % on a quiet machine. So: as many threads as there are free cores, spinning while
 * every thread has a core of its own, passive waiting when not.
 *
 * What is decided when (libgomp of gcc 12; checked by a program that called setenv() in main):
 *  - libgomp reads OMP_NUM_THREADS, OMP_WAIT_POLICY and GOMP_SPINCOUNT in its ELF constructor, before
 *    main() runs: a setenv() in main changes none of them, and no OpenMP call changes the waiting later.
 *  - the thread count can be set at any time before a parallel region (omp_set_num_threads):
 *    sw_cpu_share_apply does it in main, before any command runs.
 *  - passive waiting therefore needs a fresh start: the command line sets OMP_WAIT_POLICY=passive and the
 *    choice itself (sw_cpu_share_export, variable SHOREWARD_CPU_SHARE) and executes the program again with
 *    the same arguments; the new process takes the choice back (sw_cpu_share_import) instead of measuring
 *    again. This happens only when a run would have more threads than free cores (the user asked for
 *    them, or the free share is fractional); the usual choice (threads = free cores) spins and needs no
 *    restart.
 *
 * How the load is measured (sw_cpu_load_measure): the CPUs this process may run on (sched_getaffinity), a
 * cgroup CPU quota (v2 cpu.max, v1 cpu.cfs_quota_us / cpu.cfs_period_us, the tightest along the cgroup's
 * path) as a limit, and the run queue (/proc/loadavg procs_running, less this process). With nothing else
 * runnable the machine counts as free at once (no wait); otherwise two readings of /proc/stat
 * SW_CPU_SHARE_SAMPLE_S apart give each allowed CPU's busy share (everything but idle and iowait), this
 * process's own CPU time over the sample is taken off, and the sum is capped by the run queue seen at
 * either end of the sample. A program that runs only now and then may be missed or counted in part.
 *
 * While a run goes on (sw_cpu_mark, sw_cpu_load_since, sw_cpu_share_retune): when the count was chosen here
 * (SW_THREADS_AUTO), run.c's time loop leaves its parallel region about every SW_CPU_SHARE_RECHECK_S of wall
 * time, reads /proc/stat and this process's CPU time again, and takes the others' busy cores over the whole
 * stretch since the last reading (their share of the CPUs less this process's own): no sleep, no sample of
 * its own. The count for the next stretch follows the rule of the start, with the waiting the process has
 * (it cannot change without a restart: spinning threads never outnumber the free cores), never above the
 * count the run started with (its buffers are sized for that many threads). The run queue is not used as a
 * cap there: over seconds its two moments say nothing of what ran between them, and this process's own
 * threads may still be spinning on it when it is read.
 *
 * What the user says always wins: --threads N and OMP_NUM_THREADS fix the thread count, OMP_WAIT_POLICY
 * and GOMP_SPINCOUNT the waiting; SHOREWARD_THREADS_AUTO=off turns the automatic choice off (the threads
 * are then OpenMP's default, all cores, spinning, as before the choice existed).
 *
 * Nothing here prints or exits. The choice is process-wide, as OpenMP's settings are: sw_cpu_share_apply
 * records it, sw_cpu_share_note gives its reason to the reports.
 */
#ifndef SW_CPU_SHARE_H
#define SW_CPU_SHARE_H

#include <stddef.h>

#include "base/status.h"

#define SW_CPU_SHARE_SAMPLE_S 0.05        /* length of the /proc/stat sample, s (5 clock ticks at 100 Hz) */
#define SW_CPU_SHARE_ENV "SHOREWARD_CPU_SHARE"        /* carries a choice across the restart (internal) */
#define SW_CPU_SHARE_SWITCH "SHOREWARD_THREADS_AUTO"  /* "on" (default) or "off" */
#define SW_CPU_SHARE_MAX_CPUS 1024        /* CPUs read from /proc/stat; a CPU numbered beyond is ignored */
#define SW_CPU_SHARE_SLACK 0.1            /* cores: a free share this close to whole counts as whole (the
                                           * sample's 10 ms ticks, the system's own small work) */
#define SW_CPU_SHARE_PASSIVE_COST 0.07    /* passive waiting's cost on free cores, fraction (measured: the
                                           * demo on 2 quiet cores) */
#define SW_CPU_SHARE_PASSIVE_GAIN 1.1     /* a thread more with passive waiting only for this expected gain */
#define SW_CPU_SHARE_RECHECK_S 2.0        /* a run re-measures the free cores about this often, s of wall time */

/* One CPU's time counters from a /proc/stat "cpuN" line, in clock ticks (USER_HZ, 100 per s). */
typedef struct {
    int cpu;                        /* N of "cpuN" */
    unsigned long long idle;        /* idle + iowait, ticks */
    unsigned long long total;       /* user + nice + system + idle + iowait + irq + softirq + steal, ticks */
} sw_cpu_times;

/* What the machine leaves this process at one moment. */
typedef struct {
    int cores;                      /* CPUs this process may run on (sched_getaffinity, else online CPUs), >= 1 */
    double quota_cores;             /* cgroup CPU quota, cores (quota / period); 0 = no quota */
    double busy_cores;              /* other programs' CPU use on those CPUs over the sample, cores
                                     * (0 .. cores); < 0 = unknown */
    int others_running;             /* other runnable tasks (/proc/loadavg procs_running less this one,
                                     * the larger of the readings); -1 = unknown */
    double sample_s;                /* length of the /proc/stat sample, s; 0 when none was taken */
} sw_cpu_load;

/* Who set the thread count. */
typedef enum {
    SW_THREADS_AUTO,                /* chosen here from the free cores */
    SW_THREADS_OPTION,              /* the command's --threads N */
    SW_THREADS_ENV,                 /* OMP_NUM_THREADS */
    SW_THREADS_DEFAULT              /* automatic choice off: OpenMP's default (all cores) */
} sw_threads_from;

/* How waiting threads wait. */
typedef enum {
    SW_WAIT_SPIN,                   /* libgomp's default: spin about 3 ms, then sleep */
    SW_WAIT_PASSIVE,                /* OMP_WAIT_POLICY=passive, set here (needs the restart) */
    SW_WAIT_USER                    /* the user's OMP_WAIT_POLICY or GOMP_SPINCOUNT, left alone */
} sw_wait;

/* What the user asked for: the inputs of the decision besides the load. NULL strings = not set. */
typedef struct {
    int threads_option;             /* --threads N, 0 = not given */
    const char *omp_num_threads;    /* $OMP_NUM_THREADS */
    const char *omp_wait_policy;    /* $OMP_WAIT_POLICY */
    const char *gomp_spincount;     /* $GOMP_SPINCOUNT */
    const char *auto_switch;        /* $SHOREWARD_THREADS_AUTO: "on" or "off" (NULL or "" = on) */
} sw_cpu_wishes;

/* The choice. */
typedef struct {
    int threads;                    /* threads for the run, >= 1; 0 = OpenMP's own default (the user's
                                     * OMP_NUM_THREADS when it is not one plain number, or auto off) */
    sw_threads_from from;           /* who set threads */
    sw_wait wait;                   /* how threads wait */
    int cores;                      /* cores this process may use (affinity, cut by the quota), >= 1 */
    double free_cores;              /* cores free of other work, cores; < 0 = not measured */
    char note[200];                 /* why, one line without the count: "1 of 2 cores busy with other work" */
} sw_cpu_choice;

/* Parses the text of /proc/stat (`name` for messages) into cpus[0 .. cap-1]: one entry per "cpuN" line
 * in the order found (the aggregate "cpu" line and every other line are skipped; lines past cap are
 * ignored). Needs text, name, cpus, n. Returns SW_OK with *n entries, or SW_ERR_PARSE naming
 * "NAME:LINE" when a cpuN line has fewer than 4 counters or a counter is not a whole number (the
 * accepted form: "cpuN user nice system idle [iowait irq softirq steal ...]"); *n is then 0. */
sw_status sw_cpu_stat_parse(const char *text, const char *name, sw_cpu_times *cpus, size_t cap, size_t *n,
                            sw_error *err);

/* Cores' worth of CPU time other programs used between two /proc/stat readings, over the CPUs marked
 * in allowed[cpu] (cpu < n_allowed): the sum of each CPU's busy share 1 - d(idle) / d(total), less
 * own_cores (this process's CPU time over the sample / its length), clamped to [0, CPUs counted].
 * A CPU missing from either reading, or whose counters did not advance, is not counted. Returns the
 * busy cores, or -1 when no allowed CPU could be counted. Pure: no files read. */
double sw_cpu_busy_cores(const sw_cpu_times *before, size_t n_before, const sw_cpu_times *after, size_t n_after,
                         const unsigned char *allowed, size_t n_allowed, double own_cores);

/* One reading of the machine at a moment, kept until the next: what sw_cpu_busy_between compares. */
typedef struct {
    const sw_cpu_times *cpus;       /* the per-CPU counters of /proc/stat (sw_cpu_stat_parse) */
    size_t n_cpus;                  /* entries in cpus; 0 = /proc/stat could not be read */
    double wall_s;                  /* a monotonic clock at the reading, s */
    double own_cpu_s;               /* this process's CPU time at the reading, all its threads, s */
} sw_cpu_reading;

/* Cores' worth of CPU time other programs used between two readings, over the CPUs marked in
 * allowed[cpu] (cpu < n_allowed): sw_cpu_busy_cores with this process's own use over the interval,
 * (after->own_cpu_s - before->own_cpu_s) / (after->wall_s - before->wall_s), taken off. Returns the busy
 * cores (0 .. CPUs counted), or -1 when the interval is not positive or no allowed CPU could be counted.
 * Pure: no files read. */
double sw_cpu_busy_between(const sw_cpu_reading *before, const sw_cpu_reading *after, const unsigned char *allowed,
                           size_t n_allowed);

/* Parses /proc/loadavg text ("0.52 0.41 0.30 3/412 12345"; `name` for messages): *running the
 * runnable tasks now (the 3, this reader included), *tasks all tasks (the 412). Returns SW_OK, or
 * SW_ERR_PARSE naming the file when the fourth field is not "RUNNING/TASKS" with RUNNING >= 1. */
sw_status sw_loadavg_parse(const char *text, const char *name, int *running, int *tasks, sw_error *err);

/* Parses a cgroup CPU quota: v2 cpu.max "QUOTA PERIOD" or "max PERIOD", or v1 written as the same pair
 * ("-1 100000" from cpu.cfs_quota_us and cpu.cfs_period_us). *cores = QUOTA / PERIOD, or 0 for no quota
 * ("max", a negative quota). Returns SW_OK, or SW_ERR_PARSE naming the file with the accepted forms when
 * the text is neither. */
sw_status sw_cpu_max_parse(const char *text, const char *name, double *cores, sw_error *err);

/* Measures the load now: affinity, quota, run queue, and when anything else is runnable a /proc/stat
 * sample of sample_s seconds (this call then sleeps that long). Needs out. Never fails: what cannot be
 * read is left unknown (cores falls back to the online CPUs, then 1; busy_cores < 0). Uses static
 * buffers: one call at a time (it is made once, at program start). */
void sw_cpu_load_measure(double sample_s, sw_cpu_load *out);

/* A reading of the machine kept between the stretches of a run (opaque): the per-CPU counters of /proc/stat,
 * this process's CPU time and the clock at the last boundary, and the buffers to read them again. */
typedef struct sw_cpu_mark sw_cpu_mark;

/* Takes a reading now. Returns the mark (free it with sw_cpu_mark_free), or NULL when out of memory. What
 * cannot be read is taken as unknown: the first sw_cpu_load_since then gives busy_cores < 0. */
sw_cpu_mark *sw_cpu_mark_new(void);

/* The load between the reading in m and now, without waiting: out->cores and out->quota_cores as
 * sw_cpu_load_measure reads them now, out->busy_cores the others' use over the interval
 * (sw_cpu_busy_between; < 0 when unknown), out->others_running the run queue now less this process's one
 * task (information only: it counts this process's other threads too when they are runnable), out->sample_s
 * the interval. m then holds the present reading, for the next call. Needs m and out; never fails. One
 * thread at a time per mark. */
void sw_cpu_load_since(sw_cpu_mark *m, sw_cpu_load *out);

/* Frees a mark; NULL is accepted. */
void sw_cpu_mark_free(sw_cpu_mark *m);

/* Fills w from the environment (OMP_NUM_THREADS, OMP_WAIT_POLICY, GOMP_SPINCOUNT, SHOREWARD_THREADS_AUTO;
 * the pointers point into the environment, valid until it changes) with threads_option as --threads. */
void sw_cpu_wishes_from_env(sw_cpu_wishes *w, int threads_option);

/* Whether the decision needs the load: 0 when the user fixed both the threads and the waiting, or
 * turned the choice off (then sw_cpu_load_measure need not run), else 1. */
int sw_cpu_share_wants_load(const sw_cpu_wishes *w);

/* The decision. The cores are load->cores cut to the quota rounded up; the free cores are load->cores
 * less load->busy_cores, at most the quota.
 * Threads: --threads, else OMP_NUM_THREADS (when one whole number; otherwise 0, OpenMP's reading), else
 * W = the whole free cores (free + SW_CPU_SHARE_SLACK rounded down, at least 1), or one thread more when
 * a fraction of a core is left over and passive waiting there promises SW_CPU_SHARE_PASSIVE_GAIN times
 * W's rate at its cost (free x (1 - SW_CPU_SHARE_PASSIVE_COST) > 1.1 W; on 2 cores: 2 threads from 1.19
 * free cores; on 64 cores with 60.8 free: 60) and the user did not set the waiting; at most the cores;
 * all cores when the load is unknown, 1 when load is NULL.
 * Waiting: the user's OMP_WAIT_POLICY / GOMP_SPINCOUNT when set; else passive when there is more than
 * one thread and they outnumber the free cores (free < threads - SW_CPU_SHARE_SLACK); else spin.
 * With the switch off: threads from --threads or OMP_NUM_THREADS, else 0 (OpenMP's default), spin or the
 * user's waiting. Needs w and out. Returns SW_OK, or SW_ERR_USAGE when SHOREWARD_THREADS_AUTO is neither
 * "on" nor "off" (out then holds the choice with the switch off). */
sw_status sw_cpu_share_decide(const sw_cpu_load *load, const sw_cpu_wishes *w, sw_cpu_choice *out,
                              sw_error *err);

/* The automatic thread count for free_cores cores free of other work out of `cores` (>= 1): the whole free
 * cores, W = free_cores + SW_CPU_SHARE_SLACK rounded down, at least 1; or, when passive is 1 (the threads
 * may wait passively), one more when a fraction is left over and free_cores x (1 - SW_CPU_SHARE_PASSIVE_COST)
 * > SW_CPU_SHARE_PASSIVE_GAIN x W; at most cores. A negative free_cores (unknown) gives cores. The rule of
 * sw_cpu_share_decide, which uses it. Pure. */
int sw_cpu_share_auto_threads(double free_cores, int cores, int passive);

/* The thread count for the next stretch of a run whose count was chosen automatically, from the load over
 * the stretch just run (sw_cpu_load_since): the free cores as sw_cpu_share_decide takes them (the CPUs less
 * the others' busy cores, within the quota), then sw_cpu_share_auto_threads with passive = (wait ==
 * SW_WAIT_PASSIVE): a process's waiting is fixed from its start, so a spinning one never gets more threads
 * than whole free cores; the result is kept within 1 .. cap (cap: the count the run's buffers were made
 * for, its count at the start). Returns `current` when load is NULL or its busy cores are unknown. Pure. */
int sw_cpu_share_retune(const sw_cpu_load *load, sw_wait wait, int current, int cap);

/* Whether a run that has `threads` threads may change them as the load changes: 1 when the process's
 * recorded choice (sw_cpu_share_apply) is SW_THREADS_AUTO with a count > 0 and `threads` is that count
 * (nothing set another since), with *wait (when wait is not NULL) the process's waiting; else 0, *wait
 * untouched. Not for --threads, OMP_NUM_THREADS, SHOREWARD_THREADS_AUTO=off, nor a process that made no
 * choice (an MPI rank, a command other than run, demo, check, compare and sweep). */
int sw_cpu_share_adapts(int threads, sw_wait *wait);

/* 1 when the choice can only take effect in a fresh process (passive waiting: see the top), else 0. */
int sw_cpu_share_needs_restart(const sw_cpu_choice *c);

/* Prepares the restart: sets OMP_WAIT_POLICY=passive and SHOREWARD_CPU_SHARE to the encoded choice.
 * Returns SW_OK, or SW_ERR_NOMEM when setenv fails (nothing is then left set). The caller then
 * executes the program again; if that fails it calls sw_cpu_share_unexport and goes on spinning. */
sw_status sw_cpu_share_export(const sw_cpu_choice *c, sw_error *err);

/* Undoes sw_cpu_share_export (unsets both variables). */
void sw_cpu_share_unexport(void);

/* Takes back a choice exported before a restart: 1 when SHOREWARD_CPU_SHARE held one (out filled, the
 * variable removed from the environment so that child processes measure for themselves), 0 when it is
 * absent or malformed (out untouched; a malformed value is removed too). */
int sw_cpu_share_import(sw_cpu_choice *out);

/* The encoded form of c as SHOREWARD_CPU_SHARE carries it, into buf (size n); and back. Decode returns 1
 * for a well-formed text, else 0. Exposed for the tests. */
void sw_cpu_share_encode(const sw_cpu_choice *c, char *buf, size_t n);
int sw_cpu_share_decode(const char *text, sw_cpu_choice *out);

/* Puts the choice into effect for this process: omp_set_num_threads(c->threads) when c->threads > 0,
 * and records c as the process's choice (sw_cpu_share_note). Call before the first parallel region. */
void sw_cpu_share_apply(const sw_cpu_choice *c);

/* The recorded choice's reason when a run used `threads` threads and that is the recorded count (or
 * the recorded count is 0), else "" (a caller that set other threads gets no stale reason). Never NULL. */
const char *sw_cpu_share_note(int threads);

/* Bytes of the last-level cache (sysconf: level 3, else level 2), or 32 MiB when the system does not say:
 * what the schedule of several steps per sweep sizes its window of rows against (model.h). */
size_t sw_cpu_cache_bytes(void);

#endif
