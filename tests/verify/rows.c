/* rows.c - result rows of the verification checks (see rows.h). */
#include "rows.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cjson/cJSON.h>

static int lost_rows;   /* rows dropped for lack of memory: each counts as a failure */

static void copy(char *dst, size_t n, const char *src)
{
    snprintf(dst, n, "%s", src ? src : "");
}

static vr_row *new_row(vr_table *t)
{
    if (t->n == t->cap) {
        size_t cap = t->cap ? 2 * t->cap : 16;
        vr_row *p = realloc(t->row, cap * sizeof *p);
        if (!p) {
            lost_rows++;
            return NULL;
        }
        t->row = p;
        t->cap = cap;
    }
    vr_row *r = &t->row[t->n++];
    memset(r, 0, sizeof *r);
    copy(r->check, sizeof r->check, t->check);
    copy(r->layout, sizeof r->layout, t->layout);
    return r;
}

int vr_add(vr_table *t, const char *item, const char *source, const char *unit, vr_kind kind,
           double expected, double measured, double tolerance, const char *note, ...)
{
    vr_row *r = new_row(t);
    if (!r)
        return 0;
    copy(r->item, sizeof r->item, item);
    copy(r->source, sizeof r->source, source);
    copy(r->unit, sizeof r->unit, unit);
    r->kind = kind;
    r->expected = expected;
    r->measured = measured;
    r->tolerance = tolerance;
    switch (kind) {
    case VR_RELATIVE:
        r->error = fabs(measured - expected) / fabs(expected);
        r->pass = r->error <= tolerance;
        break;
    case VR_ABSOLUTE:
        r->error = fabs(measured - expected);
        r->pass = r->error <= tolerance;
        break;
    case VR_AT_MOST:
        r->error = measured;
        r->pass = measured <= tolerance;
        break;
    case VR_AT_LEAST:
        r->error = measured;
        r->pass = measured >= tolerance;
        break;
    }
    if (isnan(measured) || isnan(r->error))
        r->pass = 0;
    if (note) {
        va_list ap;
        va_start(ap, note);
        vsnprintf(r->note, sizeof r->note, note, ap);
        va_end(ap);
    }
    return r->pass;
}

void vr_broken(vr_table *t, const char *item, const char *why)
{
    vr_row *r = new_row(t);
    if (!r)
        return;
    copy(r->item, sizeof r->item, item);
    copy(r->source, sizeof r->source, "-");
    copy(r->unit, sizeof r->unit, "-");
    r->expected = r->measured = r->error = r->tolerance = NAN;
    r->pass = 0;
    snprintf(r->note, sizeof r->note, "could not run: %s", why);
}

size_t vr_failed(const vr_table *t)
{
    size_t bad = (size_t)lost_rows;
    for (size_t q = 0; q < t->n; q++)
        bad += !t->row[q].pass;
    return bad;
}

static const char *kind_name(vr_kind k)
{
    switch (k) {
    case VR_RELATIVE: return "relative";
    case VR_ABSOLUTE: return "absolute";
    case VR_AT_MOST: return "at most";
    case VR_AT_LEAST: return "at least";
    }
    return "?";
}

void vr_print_text(const vr_table *t)
{
    for (size_t q = 0; q < t->n; q++) {
        const vr_row *r = &t->row[q];
        printf("%s  %-2s %-14s %s\n", r->pass ? "PASS" : "FAIL", r->layout, r->check, r->item);
        if (r->kind == VR_AT_MOST || r->kind == VR_AT_LEAST)
            printf("      measured %.10g %s, ideal %.10g, must be %s %.3g\n", r->measured, r->unit, r->expected,
                   r->kind == VR_AT_MOST ? "<=" : ">=", r->tolerance);
        else
            printf("      measured %.10g %s, expected %.10g, %s error %.3g (tolerance %.3g)\n", r->measured, r->unit,
                   r->expected, kind_name(r->kind), r->error, r->tolerance);
        printf("      source: %s\n", r->source);
        if (r->note[0])
            printf("      note: %s\n", r->note);
    }
}

static void add_number(cJSON *o, const char *key, double v)
{
    if (isfinite(v))
        cJSON_AddNumberToObject(o, key, v);
    else
        cJSON_AddNullToObject(o, key);
}

int vr_print_json(const vr_table *t)
{
    cJSON *arr = cJSON_CreateArray();
    if (!arr)
        return -1;
    for (size_t q = 0; q < t->n; q++) {
        const vr_row *r = &t->row[q];
        cJSON *o = cJSON_CreateObject();
        if (!o) {
            cJSON_Delete(arr);
            return -1;
        }
        cJSON_AddItemToArray(arr, o);
        cJSON_AddStringToObject(o, "check", r->check);
        cJSON_AddStringToObject(o, "layout", r->layout);
        cJSON_AddStringToObject(o, "item", r->item);
        cJSON_AddStringToObject(o, "source", r->source);
        cJSON_AddStringToObject(o, "unit", r->unit);
        add_number(o, "expected", r->expected);
        add_number(o, "measured", r->measured);
        add_number(o, "error", r->error);
        add_number(o, "tolerance", r->tolerance);
        cJSON_AddStringToObject(o, "kind", kind_name(r->kind));
        cJSON_AddBoolToObject(o, "pass", r->pass);
        cJSON_AddStringToObject(o, "note", r->note);
    }
    char *s = cJSON_Print(arr);
    cJSON_Delete(arr);
    if (!s)
        return -1;
    puts(s);
    free(s);
    return 0;
}

void vr_free(vr_table *t)
{
    free(t->row);
    t->row = NULL;
    t->n = t->cap = 0;
}
