/* layouts.c - the registry of grid layouts: one line per layout.
 *
 * Everything that names layouts (the scenario parser, setup, sweeps, compare, bench, stability) takes
 * the names from here, so a new layout is its file plus an `extern` line and an entry below. Every
 * layout in the registry is built, so no name is "known but not built": sw_layout_find sets *known
 * to 0 always (the parameter stays for its callers).
 */
#include <ctype.h>
#include <stddef.h>
#include <string.h>

#include "base/omp_compat.h"
#include "model/layout.h"

extern const sw_layout sw_layout_a;
extern const sw_layout sw_layout_b;
extern const sw_layout sw_layout_c;
extern const sw_layout sw_layout_d;
extern const sw_layout sw_layout_e;

static const sw_layout *const registry[] = {
    &sw_layout_a,
    &sw_layout_b,
    &sw_layout_c,
    &sw_layout_d,
    &sw_layout_e,
};

/* 1 when a and b are the same name but for letter case. */
static int same_name(const char *a, const char *b)
{
    for (; *a && *b; a++, b++)
        if (toupper((unsigned char)*a) != toupper((unsigned char)*b))
            return 0;
    return *a == *b;
}

const sw_layout *sw_layout_find(const char *name)
{
    for (size_t q = 0; name && q < sizeof registry / sizeof registry[0]; q++)
        if (same_name(registry[q]->name, name))
            return registry[q];
    return NULL;
}

const char *sw_layout_names(void)
{
    static char names[256];   /* built once; the critical section keeps threads from building it together */
    SW_OMP(critical(sw_layout_names))
    if (!names[0]) {
        size_t n = 0;
        for (size_t q = 0; q < sizeof registry / sizeof registry[0]; q++) {
            size_t len = strlen(registry[q]->name);
            if (n + len + 3 > sizeof names)
                break;
            if (q)
                names[n++] = ',', names[n++] = ' ';
            memcpy(names + n, registry[q]->name, len);
            n += len;
        }
        names[n] = '\0';
    }
    return names;
}

size_t sw_layout_count(void) { return sizeof registry / sizeof registry[0]; }

const sw_layout *sw_layout_at(size_t q) { return q < sw_layout_count() ? registry[q] : NULL; }
