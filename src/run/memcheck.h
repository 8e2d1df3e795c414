/* memcheck.h - a run's memory need against what this machine and its limits allow, before the first step.
 *
 * Three limits are read: the memory the kernel says is available (MemAvailable, /proc/meminfo), the
 * control group's limit less its use (cgroup v2 memory.max - memory.current, or v1
 * memory.limit_in_bytes - memory.usage_in_bytes, the smallest over the process's group and its
 * ancestors), and the address-space limit (RLIMIT_AS, less the address space already mapped, VmSize in
 * /proc/self/status). A run whose need exceeds any of them is refused with both figures and the limit's
 * name, instead of being killed part-way or failing an allocation with a message about something else.
 */
#ifndef SW_MEMCHECK_H
#define SW_MEMCHECK_H

#include "base/status.h"

/* What this process may still allocate, bytes; a negative value means "no limit, or unknown". */
typedef struct {
    double available;       /* MemAvailable of /proc/meminfo */
    double cgroup_free;     /* the cgroup's limit less its current use */
    double cgroup_limit;    /* the cgroup's limit itself */
    char cgroup_file[256];  /* the file the limit came from ("" when none) */
    double as_free;         /* RLIMIT_AS (soft) less VmSize */
    double as_limit;        /* RLIMIT_AS itself */
} sw_memory_limits;

/* Reads the limits of this process now into *m (fields < 0 when absent or unreadable). Never fails. */
void sw_memory_limits_read(sw_memory_limits *m);

/* Refuses need_bytes (the run's memory still to allocate, e.g. sw_setup.total_bytes less what the setup
 * already holds) when it exceeds a limit of m: "the run needs 9.5 GB of memory, the cgroup allows 2.0 GB
 * (limit 2.0 GB in /sys/fs/cgroup/.../memory.max)". The address-space check keeps a margin of 10 % +
 * 64 MB per thread (thread stacks and malloc arenas reserve address space); the others compare exactly.
 * threads is the run's thread count (>= 1). Returns SW_OK, or SW_ERR_NOMEM with err naming the limit. */
sw_status sw_memory_check(double need_bytes, int threads, const sw_memory_limits *m, sw_error *err);

#endif
