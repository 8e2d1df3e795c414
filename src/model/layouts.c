/* layouts.c - the registry of grid layouts: one line per layout. */
#include <ctype.h>
#include <string.h>
#include <stddef.h>

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

static const char *const all_names = "ABCDE";   /* the Arakawa family: names a build may lack */

const sw_layout *sw_layout_find(const char *name, int *known)
{
    if (known)
        *known = 0;
    if (!name || !name[0] || name[1])
        return NULL;
    char c = (char)toupper((unsigned char)name[0]);
    for (size_t q = 0; q < sizeof registry / sizeof registry[0]; q++)
        if (registry[q]->name[0] == c)
            return registry[q];
    for (const char *p = all_names; *p; p++)
        if (*p == c && known)
            *known = 1;
    return NULL;
}

const char *sw_layout_names(void)
{
    static char names[64];
    if (!names[0]) {
        size_t n = 0;
        for (size_t q = 0; q < sizeof registry / sizeof registry[0] && n + 4 < sizeof names; q++) {
            if (q)
                names[n++] = ',', names[n++] = ' ';
            names[n++] = registry[q]->name[0];
        }
        names[n] = '\0';
    }
    return names;
}

size_t sw_layout_count(void) { return sizeof registry / sizeof registry[0]; }

const sw_layout *sw_layout_at(size_t q) { return q < sw_layout_count() ? registry[q] : NULL; }
