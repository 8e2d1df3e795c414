/* rows.h - result rows of the verification checks: what was compared, with which source, and the verdict.
 *
 * A check appends one row per compared quantity to a vr_table. Each row carries the expected value
 * (from a published formula or an exact discrete answer), the measured one, the error as defined by
 * its kind, the tolerance and pass/fail. The table prints as text for a person or as a JSON array
 * (cJSON) for tools/verification-report.
 */
#ifndef VR_ROWS_H
#define VR_ROWS_H

#include <stddef.h>

/* How a row's error is formed and judged. */
typedef enum {
    VR_RELATIVE,   /* error = |measured - expected| / |expected|; pass when error <= tolerance */
    VR_ABSOLUTE,   /* error = |measured - expected| (in the row's unit); pass when error <= tolerance */
    VR_AT_MOST,    /* error = measured; pass when measured <= tolerance (expected is the ideal value) */
    VR_AT_LEAST    /* error = measured; pass when measured >= tolerance (expected is the ideal value) */
} vr_kind;

typedef struct {
    char check[32];     /* check name, e.g. "seiche_closed" */
    char layout[8];     /* layout name, "A".."E" */
    char item[160];     /* what was compared, e.g. "mode 1 period vs fully discrete" */
    char source[200];   /* the published source or derivation, with [seen]/[memory]/[derived] */
    char unit[16];      /* unit of expected/measured ("s", "m", "1" for dimensionless) */
    double expected;    /* reference value */
    double measured;    /* what the model gave */
    double error;       /* see vr_kind */
    double tolerance;   /* see vr_kind */
    vr_kind kind;
    int pass;           /* 1 pass, 0 fail */
    char note[400];     /* why this tolerance, or extra figures */
} vr_row;

typedef struct {
    vr_row *row;        /* [n], owned */
    size_t n, cap;
    const char *check;  /* copied into each new row */
    const char *layout;
} vr_table;

/* Appends a row and judges it. NaN in measured or expected fails. note is printf-style and may be
 * NULL. Returns the row's pass flag (0 also when out of memory: the row is then lost and
 * vr_failed reports a failure). */
int vr_add(vr_table *t, const char *item, const char *source, const char *unit, vr_kind kind,
           double expected, double measured, double tolerance, const char *note, ...)
    __attribute__((format(printf, 9, 10)));

/* A row that records a failure to run (e.g. the model refused the configuration). */
void vr_broken(vr_table *t, const char *item, const char *why);

/* Number of failed rows (plus one if a row could not be stored). */
size_t vr_failed(const vr_table *t);

/* Prints the rows as aligned text on stdout. */
void vr_print_text(const vr_table *t);

/* Prints the rows as one JSON array on stdout. Returns 0, or -1 when out of memory. */
int vr_print_json(const vr_table *t);

/* Frees the rows (t itself is the caller's). */
void vr_free(vr_table *t);

#endif
