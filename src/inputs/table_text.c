/* table_text.c - reading a whitespace-separated numeric table with a header (see table_text.h).
 *
 * How it works: the file is read line by line (own reader: any length up to TT_LINE_MAX, CR LF
 * accepted, a '#' ends the useful part of a line). The first useful line is the header; it is matched
 * against the caller's columns once, giving each file column its caller index and unit factor. Every
 * later useful line is split into fields and converted, row by row, into a growing array.
 *
 * Invariant: the first problem found is the one reported; on any failure everything allocated is
 * freed and *out is left empty.
 */
#include "inputs/table_text.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define TT_LINE_MAX (1u << 16)   /* longest accepted line, characters */
#define TT_SHOW 40               /* characters of an offending field quoted in a message */

/* The open file and the line being read. */
typedef struct {
    const char *path;   /* as given, for messages */
    FILE *fp;
    char *buf;          /* the current line, NUL-terminated, comment and line end removed */
    size_t cap;         /* bytes allocated for buf */
    size_t line;        /* number of the current line, 1-based */
} tt_reader;

/* Reads the next line into r->buf (comment and trailing CR/LF cut). Returns 1 for a line, 0 at the end
 * of the file, -1 on failure (recorded in err). */
static int tt_next_line(tt_reader *r, sw_error *err)
{
    size_t n = 0;
    int c = fgetc(r->fp);
    if (c == EOF) {
        if (ferror(r->fp)) {
            sw_fail(err, SW_ERR_IO, "%s: cannot read: %s", r->path, strerror(errno));
            return -1;
        }
        return 0;
    }
    r->line++;
    int in_comment = 0;
    for (; c != EOF && c != '\n'; c = fgetc(r->fp)) {
        if (c == '#')
            in_comment = 1;
        if (in_comment)
            continue;
        if (n + 1 >= r->cap) {
            if (r->cap >= TT_LINE_MAX) {
                sw_fail(err, SW_ERR_PARSE, "%s:%zu: the line is longer than %u characters", r->path, r->line,
                        TT_LINE_MAX - 1);
                return -1;
            }
            size_t cap = r->cap ? 2 * r->cap : 256;
            char *b = realloc(r->buf, cap);
            if (!b) {
                sw_fail(err, SW_ERR_NOMEM, "%s:%zu: out of memory reading the line", r->path, r->line);
                return -1;
            }
            r->buf = b;
            r->cap = cap;
        }
        r->buf[n++] = (char)c;
    }
    if (c == EOF && ferror(r->fp)) {
        sw_fail(err, SW_ERR_IO, "%s: cannot read: %s", r->path, strerror(errno));
        return -1;
    }
    if (!r->buf) {   /* an empty first line: make room for the terminator */
        r->buf = malloc(256);
        if (!r->buf) {
            sw_fail(err, SW_ERR_NOMEM, "%s:%zu: out of memory reading the line", r->path, r->line);
            return -1;
        }
        r->cap = 256;
    }
    r->buf[n] = '\0';
    return 1;
}

static int tt_blank(int c)
{
    return c == ' ' || c == '\t' || c == '\r' || c == '\v' || c == '\f';
}

/* Splits s in place into fields separated by blanks. Stores up to max field pointers in f and returns
 * the number of fields found (which may exceed max; the extra ones are counted, not stored). */
static size_t tt_split(char *s, char **f, size_t max)
{
    size_t n = 0;
    for (;;) {
        while (tt_blank((unsigned char)*s))
            s++;
        if (!*s)
            return n;
        if (n < max)
            f[n] = s;
        n++;
        while (*s && !tt_blank((unsigned char)*s))
            s++;
        if (*s)
            *s++ = '\0';
    }
}

/* Parses the whole of s as a plain decimal number (sign, digits, fraction, exponent; no hexadecimal,
 * inf or nan). Returns 1 and *v on success, 0 if s is not such a number. */
static int tt_number(const char *s, double *v)
{
    for (const char *p = s; *p; p++)
        if (!(isdigit((unsigned char)*p) || *p == '+' || *p == '-' || *p == '.' || *p == 'e' || *p == 'E'))
            return 0;
    if (!isdigit((unsigned char)s[0]) && !(s[0] == '.' && isdigit((unsigned char)s[1])) &&
        !((s[0] == '+' || s[0] == '-') && (isdigit((unsigned char)s[1]) || (s[1] == '.' && isdigit((unsigned char)s[2])))))
        return 0;
    char *end;
    *v = strtod(s, &end);   /* an overflow gives +-HUGE_VAL, refused by the caller's finiteness check */
    return *end == '\0';
}

/* Appends text to buf (size n, used *len), cutting at the end of buf. */
static void tt_append(char *buf, size_t n, size_t *len, const char *text)
{
    if (*len + 1 >= n)
        return;
    int w = snprintf(buf + *len, n - *len, "%s", text);
    if (w < 0)
        return;
    *len = (size_t)w >= n - *len ? n - 1 : *len + (size_t)w;
}

/* The accepted units of column c as a list ("m, km"), or "no unit" for a dimensionless column. */
static void tt_units_list(const sw_table_column *c, char *buf, size_t n)
{
    size_t len = 0;
    buf[0] = '\0';
    if (!c->units) {
        tt_append(buf, n, &len, "no unit");
        return;
    }
    int bare = 0;
    for (const sw_table_unit *u = c->units; u->name; u++) {
        if (!u->name[0]) {
            bare = 1;
            continue;
        }
        if (len)
            tt_append(buf, n, &len, ", ");
        tt_append(buf, n, &len, u->name);
    }
    if (bare)
        tt_append(buf, n, &len, len ? ", or none" : "no unit");
}

/* The names of the caller's columns as a list ("time, x, y"). */
static void tt_names_list(const sw_table_column *cols, size_t n_cols, char *buf, size_t n)
{
    size_t len = 0;
    buf[0] = '\0';
    for (size_t c = 0; c < n_cols; c++) {
        if (len)
            tt_append(buf, n, &len, ", ");
        tt_append(buf, n, &len, cols[c].name);
    }
}

/* The required columns as a list: plain names, and "a or b" for a required group (at its first member). */
static void tt_required_list(const sw_table_column *cols, size_t n_cols, char *buf, size_t n)
{
    size_t len = 0;
    buf[0] = '\0';
    for (size_t c = 0; c < n_cols; c++) {
        if (cols[c].group == 0) {
            if (!cols[c].required)
                continue;
            if (len)
                tt_append(buf, n, &len, ", ");
            tt_append(buf, n, &len, cols[c].name);
            continue;
        }
        size_t first = c;
        int req = 0;
        for (size_t k = 0; k < n_cols; k++)
            if (cols[k].group == cols[c].group) {
                if (k < first)
                    first = k;
                req |= cols[k].required;
            }
        if (first != c || !req)
            continue;
        if (len)
            tt_append(buf, n, &len, ", ");
        int m = 0;
        for (size_t k = c; k < n_cols; k++)
            if (cols[k].group == cols[c].group) {
                if (m++)
                    tt_append(buf, n, &len, " or ");
                tt_append(buf, n, &len, cols[k].name);
            }
    }
}

/* Matches the header fields f[0..nf) against the caller's columns: fills out->col and map[j] (the
 * caller index of file column j). Returns SW_OK or SW_ERR_PARSE with "PATH:LINE: cause". */
static sw_status tt_header(const tt_reader *r, char **f, size_t nf, const sw_table_column *cols, size_t n_cols,
                           sw_table *out, size_t *map, sw_error *err)
{
    char list[512];
    if (nf > SW_TABLE_MAX_FILE_COLS)
        return sw_fail(err, SW_ERR_PARSE, "%s:%zu: the header names %zu columns (accepted: at most %d)", r->path,
                       r->line, nf, SW_TABLE_MAX_FILE_COLS);
    for (size_t j = 0; j < nf; j++) {
        char *name = f[j];
        char *unit = NULL;
        char *open = strchr(name, '[');
        if (open) {
            char *close = strchr(open, ']');
            if (!close || close[1] != '\0' || strchr(open + 1, '['))
                return sw_fail(err, SW_ERR_PARSE, "%s:%zu: column header '%.*s' is not name or name[unit] "
                               "(no blanks inside the brackets)", r->path, r->line, TT_SHOW, name);
            *open = '\0';
            *close = '\0';
            unit = open + 1;
            if (!*unit)
                return sw_fail(err, SW_ERR_PARSE, "%s:%zu: column '%s' has empty brackets: write its unit "
                               "between them, or leave them out", r->path, r->line, name);
        } else if (strchr(name, ']')) {
            return sw_fail(err, SW_ERR_PARSE, "%s:%zu: column header '%.*s' is not name or name[unit]", r->path,
                           r->line, TT_SHOW, name);
        }
        double dummy;
        if (j == 0 && !unit && tt_number(name, &dummy)) {
            tt_names_list(cols, n_cols, list, sizeof list);
            return sw_fail(err, SW_ERR_PARSE, "%s:%zu: the first line that is not a comment must name the "
                           "columns (found the number '%.*s'; accepted columns: %s)", r->path, r->line, TT_SHOW,
                           name, list);
        }
        size_t c = 0;
        while (c < n_cols && strcmp(cols[c].name, name) != 0)
            c++;
        if (c == n_cols) {
            tt_names_list(cols, n_cols, list, sizeof list);
            return sw_fail(err, SW_ERR_PARSE, "%s:%zu: unknown column '%.*s' (accepted: %s)", r->path, r->line,
                           TT_SHOW, name, list);
        }
        sw_table_colinfo *ci = &out->col[c];
        if (ci->present)
            return sw_fail(err, SW_ERR_PARSE, "%s:%zu: column '%s' appears twice (columns %zu and %zu)", r->path,
                           r->line, name, ci->file_col, j + 1);
        const sw_table_column *def = &cols[c];
        const sw_table_unit *u = NULL;
        if (def->units)
            for (u = def->units; u->name; u++)
                if (strcmp(u->name, unit ? unit : "") == 0)
                    break;
        if (!def->units || !u->name) {
            tt_units_list(def, list, sizeof list);
            if (unit)
                return sw_fail(err, SW_ERR_PARSE, "%s:%zu: unknown unit '%.*s' for %s (accepted: %s)", r->path,
                               r->line, TT_SHOW, unit, name, list);
            if (def->units)
                return sw_fail(err, SW_ERR_PARSE, "%s:%zu: column '%s' needs a unit in brackets, e.g. %s[%s] "
                               "(accepted: %s)", r->path, r->line, name, name,
                               def->units[0].name ? def->units[0].name : "?", list);
        }
        ci->present = 1;
        ci->file_col = j + 1;
        ci->factor = u && u->name ? u->factor : 1.0;
        ci->unit = u && u->name ? u->name : "";
        map[j] = c;
    }

    /* groups: at most one member each; required ones exactly one */
    for (size_t c = 0; c < n_cols; c++) {
        if (cols[c].group == 0 || !out->col[c].present)
            continue;
        for (size_t k = c + 1; k < n_cols; k++)
            if (cols[k].group == cols[c].group && out->col[k].present)
                return sw_fail(err, SW_ERR_PARSE, "%s:%zu: columns '%s' and '%s' exclude each other (give one)",
                               r->path, r->line, cols[c].name, cols[k].name);
    }
    for (size_t c = 0; c < n_cols; c++) {
        if (!cols[c].required || out->col[c].present)
            continue;
        int have = 0;
        if (cols[c].group != 0)
            for (size_t k = 0; k < n_cols; k++)
                have |= cols[k].group == cols[c].group && out->col[k].present;
        if (have)
            continue;
        tt_required_list(cols, n_cols, list, sizeof list);
        if (cols[c].group == 0)
            return sw_fail(err, SW_ERR_PARSE, "%s:%zu: missing column '%s' (required: %s)", r->path, r->line,
                           cols[c].name, list);
        char alts[256];
        size_t len = 0;
        alts[0] = '\0';
        for (size_t k = 0; k < n_cols; k++)
            if (cols[k].group == cols[c].group) {
                if (len)
                    tt_append(alts, sizeof alts, &len, "' or '");
                tt_append(alts, sizeof alts, &len, cols[k].name);
            }
        return sw_fail(err, SW_ERR_PARSE, "%s:%zu: missing column '%s' (required: %s)", r->path, r->line, alts,
                       list);
    }
    return SW_OK;
}

void sw_table_free(sw_table *t)
{
    if (!t)
        return;
    free(t->values);
    free(t->line);
    free(t->col);
    memset(t, 0, sizeof *t);
}

/* Makes room for one more row. Returns 0, or -1 when memory runs out. */
static int tt_grow(sw_table *t, size_t *cap)
{
    if (t->n_rows < *cap)
        return 0;
    size_t n = *cap ? 2 * *cap : 64;
    double *v = realloc(t->values, n * t->n_cols * sizeof *v);
    if (!v)
        return -1;
    t->values = v;
    size_t *l = realloc(t->line, n * sizeof *l);
    if (!l)
        return -1;
    t->line = l;
    *cap = n;
    return 0;
}

sw_status sw_table_read(const char *path, const sw_table_column *cols, size_t n_cols, sw_table *out,
                        sw_error *err)
{
    if (out)
        memset(out, 0, sizeof *out);
    if (!path || !cols || n_cols == 0 || !out)
        return sw_fail(err, SW_ERR_USAGE, "sw_table_read: no file, columns or output given");

    tt_reader r = {.path = path};
    r.fp = fopen(path, "rb");
    if (!r.fp)
        return sw_fail(err, SW_ERR_IO, "%s: cannot open: %s", path, strerror(errno));

    sw_status st = SW_OK;
    size_t cap = 0;
    char *f[SW_TABLE_MAX_FILE_COLS];
    size_t map[SW_TABLE_MAX_FILE_COLS];
    size_t nf = 0;   /* columns in the file */
    out->n_cols = n_cols;
    out->col = calloc(n_cols, sizeof *out->col);
    if (!out->col) {
        st = sw_fail(err, SW_ERR_NOMEM, "%s: out of memory", path);
        goto done;
    }
    for (size_t c = 0; c < n_cols; c++) {
        out->col[c].factor = 1.0;
        out->col[c].unit = "";
    }

    int got;
    while ((got = tt_next_line(&r, err)) == 1) {
        size_t n = tt_split(r.buf, f, SW_TABLE_MAX_FILE_COLS);
        if (n == 0)
            continue;
        if (out->header_line == 0) {
            out->header_line = r.line;
            nf = n;
            st = tt_header(&r, f, n, cols, n_cols, out, map, err);
            if (st != SW_OK)
                goto done;
            continue;
        }
        if (n != nf) {
            st = sw_fail(err, SW_ERR_PARSE, "%s:%zu: %zu value%s, the header names %zu", path, r.line, n,
                         n == 1 ? "" : "s", nf);
            goto done;
        }
        if (tt_grow(out, &cap) != 0) {
            st = sw_fail(err, SW_ERR_NOMEM, "%s:%zu: out of memory", path, r.line);
            goto done;
        }
        double *row = out->values + out->n_rows * n_cols;
        for (size_t c = 0; c < n_cols; c++)
            row[c] = NAN;
        for (size_t j = 0; j < nf; j++) {
            double v;
            if (!tt_number(f[j], &v)) {
                st = sw_fail(err, SW_ERR_PARSE, "%s:%zu: column %zu '%.*s' is not a number", path, r.line, j + 1,
                             TT_SHOW, f[j]);
                goto done;
            }
            v *= out->col[map[j]].factor;
            if (!isfinite(v)) {
                st = sw_fail(err, SW_ERR_PARSE, "%s:%zu: column %zu '%.*s' is not a finite number", path, r.line,
                             j + 1, TT_SHOW, f[j]);
                goto done;
            }
            row[map[j]] = v + 0.0;   /* + 0.0 turns -0 into +0 */
        }
        out->line[out->n_rows++] = r.line;
    }
    if (got < 0) {
        st = err ? err->code : SW_ERR_IO;
        goto done;
    }
    if (out->header_line == 0) {
        char list[512];
        tt_names_list(cols, n_cols, list, sizeof list);
        st = sw_fail(err, SW_ERR_PARSE, "%s: no header: the first line that is not blank or a comment must name "
                     "the columns (accepted: %s)", path, list);
    } else if (out->n_rows == 0) {
        st = sw_fail(err, SW_ERR_PARSE, "%s:%zu: no data rows after the header", path, out->header_line);
    }
done:
    fclose(r.fp);
    free(r.buf);
    if (st != SW_OK)
        sw_table_free(out);
    return st;
}

sw_status sw_table_covers(const char *path, const char *what, const char *items, double a_s, double b_s, double t0_s,
                          double t1_s, sw_error *err)
{
    const int early = !(a_s <= t0_s), late = !(b_s >= t1_s);
    if (!early && !late)
        return SW_OK;
    char need[200];
    if (early && late)
        snprintf(need, sizeof need, "add %s from %.10g s or earlier and up to at least %.10g s", items, t0_s, t1_s);
    else if (early)
        snprintf(need, sizeof need, "add %s from %.10g s or earlier", items, t0_s);
    else
        snprintf(need, sizeof need, "add %s up to at least %.10g s", items, t1_s);
    return sw_fail(err, SW_ERR_RANGE, "%s: the %s covers %.10g .. %.10g s but the run needs %.10g .. %.10g s (%s)", path,
                   what, a_s, b_s, t0_s, t1_s, need);
}
