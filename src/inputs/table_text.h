/* table_text.h - reading a small whitespace-separated numeric table with a header of named, unit-tagged
 * columns (a storm track, a sea-level series) into base units, keeping each row's source line.
 *
 * The format (our own):
 *
 *     # comment lines start with '#'; blank lines are ignored; a '#' after values starts a comment too
 *     time[h]   x[km]   y[km]   pressure_drop[hPa]   rmax[km]   B
 *     0         -120    340     35                   40         1.3
 *     6         -60     300     42                   35         1.4
 *
 * - Fields are separated by blanks or tabs; a line may end in CR LF.
 * - The first line that is neither blank nor a comment is the header. Each of its fields names a column
 *   as `name` or `name[unit]` (no blanks inside; names and units are case-sensitive). Every column of
 *   the file must be one the caller accepts, at most once.
 * - Every later non-blank, non-comment line is a row: exactly one value per header column, each a plain
 *   decimal number (optional sign, digits, optional fraction and exponent: `-1.5e3`); no hexadecimal,
 *   no `inf` or `nan`, and the value in base units must be finite.
 *
 * The caller describes the columns it accepts (sw_table_column): their accepted units with a factor to
 * the base unit, whether a column is required, and groups of columns of which at most one may be given
 * (and, if the group is required, exactly one). Values are returned in base units.
 *
 * Errors are one line naming the file as given and, where there is one, the line:
 *   track.txt:7: column 4 'abc' is not a number
 *   track.txt:7: 5 values, the header names 6
 *   track.txt:1: unknown column 'presure' (accepted: time, x, y, ...)
 *   track.txt:1: unknown unit 'kts' for rmax (accepted: m, km)
 */
#ifndef SW_TABLE_TEXT_H
#define SW_TABLE_TEXT_H

#include <stddef.h>

#include "base/status.h"

/* One accepted unit of a column. */
typedef struct {
    const char *name;   /* as written between the brackets, e.g. "km"; "" means the bare column name
                           (no brackets) is accepted and takes this factor; NULL ends a list */
    double factor;      /* base units per one of this unit (km: 1000 for a base of m) */
} sw_table_unit;

/* One column the caller accepts. */
typedef struct {
    const char *name;             /* column name, e.g. "rmax" */
    const sw_table_unit *units;   /* accepted units, ended by an entry with name NULL; NULL: the column
                                     takes no unit (bare name only, values as written) */
    int required;                 /* 1: the file must have this column (for a group: one of the group) */
    int group;                    /* 0: none; columns sharing a non-zero group exclude each other (at most
                                     one in a file; exactly one if any member is required) */
} sw_table_column;

/* What the header said about one of the caller's columns. */
typedef struct {
    int present;        /* 1 if the header names the column */
    size_t file_col;    /* its position in the file's header, 1-based; 0 when absent */
    double factor;      /* base units per file unit (1 when absent or without unit) */
    const char *unit;   /* the unit as written in the header (points into the caller's unit table,
                           static storage); "" for a bare name or when absent */
} sw_table_colinfo;

/* A table read from a file, in the caller's column order and base units. */
typedef struct {
    size_t n_rows;             /* data rows (>= 1 after a successful read) */
    size_t n_cols;             /* the caller's n_cols */
    double *values;            /* n_rows x n_cols, row-major: values[r * n_cols + c] in base units;
                                  NaN in columns the file does not have */
    size_t *line;              /* line number (1-based) of each row in the file, for messages */
    sw_table_colinfo *col;     /* n_cols: presence, file position and unit of each caller column */
    size_t header_line;        /* line number of the header */
} sw_table;

/* Largest number of columns a file may have (a header with more is refused). */
#define SW_TABLE_MAX_FILE_COLS 64

/* Reads the table in `path` against the caller's `cols` (n_cols >= 1, names distinct). On success
 * returns SW_OK and fills *out (free it with sw_table_free). On failure returns SW_ERR_IO (the file
 * cannot be opened or read: the message ends with strerror), SW_ERR_PARSE (a malformed header or row, an
 * unknown column or unit, a missing required column, two columns of one group, no data rows) or
 * SW_ERR_NOMEM, with a one-line message "PATH:LINE: cause" (or "PATH: cause" when no line applies), and
 * leaves *out empty (safe to free). Needs path, cols and out non-NULL. */
sw_status sw_table_read(const char *path, const sw_table_column *cols, size_t n_cols, sw_table *out,
                        sw_error *err);

/* The value of caller column c in row r, base units (NaN if the file has no such column). */
static inline double sw_table_at(const sw_table *t, size_t r, size_t c)
{
    return t->values[r * t->n_cols + c];
}

/* Frees what sw_table_read allocated and empties *t. t may be NULL or already empty. */
void sw_table_free(sw_table *t);

/* Whether data over times a_s .. b_s (s) covers a run's t0_s .. t1_s: SW_OK, or SW_ERR_RANGE with
 * "PATH: the WHAT covers A .. B s but the run needs T0 .. T1 s (add ITEMS from T0 s or earlier and up to
 * at least T1 s)", naming only the missing end(s). what: "track", "series"; items: "track points",
 * "values". For the storm's track and the level series, whose messages must read alike. */
sw_status sw_table_covers(const char *path, const char *what, const char *items, double a_s, double b_s, double t0_s,
                          double t1_s, sw_error *err);

#endif
