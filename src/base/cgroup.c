/* cgroup.c - this process's control group (see cgroup.h). */
#include "base/cgroup.h"

#include <stdio.h>
#include <string.h>

/* 1 when the comma-separated list holds `name` as a whole item ("cpu" in "cpu,cpuacct", not in "cpuset"). */
static int has_item(const char *list, const char *name)
{
    const size_t n = strlen(name);
    for (const char *p = list; *p;) {
        const char *end = strchr(p, ',');
        const size_t len = end ? (size_t)(end - p) : strlen(p);
        if (len == n && !strncmp(p, name, n))
            return 1;
        if (!end)
            break;
        p = end + 1;
    }
    return 0;
}

int sw_cgroup_find(const char *controller, sw_cgroup *cg)
{
    FILE *f = fopen("/proc/self/cgroup", "r");
    if (!f)
        return 0;
    char line[1100];
    int found = 0;
    while (fgets(line, sizeof line, f)) {   /* "ID:CONTROLLERS:/path" */
        line[strcspn(line, "\n")] = '\0';
        char *c1 = strchr(line, ':'), *c2 = c1 ? strchr(c1 + 1, ':') : NULL;
        if (!c2)
            continue;
        *c2 = '\0';
        const char *ctrl = c1 + 1;
        if (!*ctrl && !found) {
            cg->v2 = found = 1;
            snprintf(cg->rel, sizeof cg->rel, "%s", c2 + 1);
        } else if (has_item(ctrl, controller)) {
            cg->v2 = 0;
            found = 1;
            snprintf(cg->rel, sizeof cg->rel, "%s", c2 + 1);
            break;   /* a v1 controller wins over the v2 line of a hybrid set-up */
        }
    }
    fclose(f);
    return found;
}

const char *sw_cgroup_sub(const sw_cgroup *cg)
{
    return strcmp(cg->rel, "/") ? cg->rel : "";
}

int sw_cgroup_up(sw_cgroup *cg)
{
    char *slash = strrchr(cg->rel, '/');
    if (!slash || !strcmp(cg->rel, "/"))
        return 0;
    if (slash == cg->rel)
        snprintf(cg->rel, sizeof cg->rel, "/");
    else
        *slash = '\0';
    return 1;
}
