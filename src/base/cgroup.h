/* cgroup.h - this process's control group (Linux cgroup v1 or v2): the folders along its path, from its
 * own up to the root, where a controller's limits are read (memory: run/memcheck.c; cpu: base/cpu_share.c). */
#ifndef SW_CGROUP_H
#define SW_CGROUP_H

typedef struct {
    int v2;              /* 1: the unified hierarchy (files under /sys/fs/cgroup); 0: a v1 controller's own */
    char rel[1024];      /* the folder below the hierarchy's root, "/" for the root itself */
} sw_cgroup;

/* Finds in /proc/self/cgroup this process's group for `controller` ("memory", "cpu"): a v1 line whose
 * controller list holds that name (a v1 controller wins over the v2 line of a hybrid set-up), else the v2
 * line ("0::/path"). Returns 1 and fills *cg, or 0 when there is none (no cgroups, unreadable). */
int sw_cgroup_find(const char *controller, sw_cgroup *cg);

/* The folder of cg below the hierarchy's root, to put after a root path: "" for the root, else "/a/b". */
const char *sw_cgroup_sub(const sw_cgroup *cg);

/* Moves cg to its parent folder. Returns 0 when it was the root already (cg unchanged), else 1. */
int sw_cgroup_up(sw_cgroup *cg);

#endif
