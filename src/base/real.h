/* real.h - the precision of the model state: chosen per run, and the kernels' type for each.
 *
 * The state the time step reads and writes (eta, velocities, the depths the stencils use) is held
 * in double or single precision, chosen per run (scenario key `precision`, flag --precision). The
 * files that touch it (the layouts, layout_*.c) are compiled once per precision by the build, with
 * SW_REAL_BITS set to 64 or 32: there sw_real is that type and SW_NAME(x) gives each copy its own
 * name (x_f64, x_f32). Everything else (inputs, outputs, diagnostics, observers) works in double
 * through the layouts' functions and never sees sw_real.
 */
#ifndef SW_REAL_H
#define SW_REAL_H

#include <stddef.h>
#include <string.h>

typedef enum {
    SW_DOUBLE = 0,   /* 8-byte state: round-off ~1e-16, the reference */
    SW_SINGLE = 1    /* 4-byte state: half the memory and memory traffic, round-off ~6e-8 */
} sw_precision;

#define SW_PRECISIONS 2

/* "double" or "single". */
static inline const char *sw_precision_name(sw_precision p) { return p == SW_SINGLE ? "single" : "double"; }

/* Bytes of one state value. */
static inline size_t sw_precision_bytes(sw_precision p) { return p == SW_SINGLE ? 4 : 8; }

/* Parses "double" / "single" (also "float64" / "float32"); 1 on success, 0 for anything else. */
static inline int sw_precision_parse(const char *s, sw_precision *out)
{
    if (!strcmp(s, "double") || !strcmp(s, "float64")) {
        *out = SW_DOUBLE;
        return 1;
    }
    if (!strcmp(s, "single") || !strcmp(s, "float32")) {
        *out = SW_SINGLE;
        return 1;
    }
    return 0;
}

#if defined(SW_REAL_BITS) && SW_REAL_BITS == 32
typedef float sw_real;
#define SW_NAME(x) x##_f32
#elif defined(SW_REAL_BITS) && SW_REAL_BITS == 64
typedef double sw_real;
#define SW_NAME(x) x##_f64
#elif defined(SW_REAL_BITS)
#error "SW_REAL_BITS must be 32 or 64"
#endif

#endif
