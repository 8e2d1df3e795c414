/* scenario.c - a scenario file parsed into sw_scenario (see scenario.h and docs/scenario.md).
 *
 * How it works. inih splits the text into `key = value` pairs. It reads through our own line
 * reader (read_line), which counts lines, refuses over-long lines, strips blanks and comments,
 * and sees every [section] header: the reader opens the section itself (inih cuts section names
 * at 49 characters and says nothing about a section without keys). The key handler (on_key) looks
 * the key up in the open section's table and stores the value in SI units. After the last line,
 * `finish` applies the rules that involve several keys or sections.
 *
 * Each section is a table of keys (name, kind, range, where it is stored, default, accepted
 * text): adding a key is one table row. Defaults are written as they would be in a file and go
 * through the same code as the file's values.
 *
 * Invariant: the first problem found is the one reported. Once `ps->failed` is set, the reader
 * ends the input and the handler refuses every further key.
 */
#include "inputs/scenario.h"

#include <ctype.h>
#include <errno.h>
#include <limits.h>
#include <math.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <ini.h>

#include "base/units.h"
#include "model/layout.h"

#define LINE_MAX_CHARS 200              /* longest line accepted, without its line break */
#define FILE_MAX_BYTES (16u << 20)      /* a scenario is small; refuse anything above 16 MiB */
#define KEYS_MAX 16                     /* most keys in one section's table */
#define LABEL_MAX (SW_NAME_MAX + 16)    /* "[island <name>]" */
#define SECTIONS_MAX (6 + SW_MAX_FEATURES + SW_MAX_SOURCES)
#define SWEEP_ENTRIES_MAX (SW_MAX_SWEEP_PARAMS + 3)   /* parameters + design, members, seed */

#define KM 1e3
#define DAY 86400.0
#define FIELD_SIZE(type, field) sizeof(((type *)0)->field)

/* ---- key tables ---------------------------------------------------------------------------- */

typedef enum {
    K_NUMBER,    /* double, no unit */
    K_INTEGER,   /* size_t, a whole number, no unit */
    K_LENGTH,    /* double, m */
    K_TIME,      /* double, s */
    K_ANGLE,     /* double, deg */
    K_TEXT,      /* char[size], not empty */
    K_CHOICE,    /* int (an enum): index in `words` plus `first` */
    K_LAYOUT,    /* char[size]: a name of the layout registry (layout.h, any case), stored as it spells it */
    K_ORIGIN     /* char[32]: "YYYY-MM-DD HH:MM:SS" */
} key_kind;

typedef enum {
    IN_SCENARIO,  /* offset into sw_scenario */
    IN_ITEM,      /* offset into the section's sw_feature or sw_source_spec */
    IN_PARSER     /* offset into parse_state (values settled in `finish`) */
} key_home;

/* `only` groups: keys of [seabed] that belong to the file or to the recipe; keys of [source]
 * that belong to some shapes (bit 1 << sw_source_shape). */
enum { BED_FILE = 1u, BED_RECIPE = 2u };
#define SHAPE(s) (1u << (s))
#define SHAPES_XY (SHAPE(SW_SOURCE_HUMP) | SHAPE(SW_SOURCE_ELLIPSE) | SHAPE(SW_SOURCE_PAIR))
#define SHAPES_AXES (SHAPE(SW_SOURCE_ELLIPSE) | SHAPE(SW_SOURCE_PAIR))

typedef struct {
    const char *name;
    key_kind kind;
    key_home home;
    size_t off;                /* where the value is stored in its home */
    size_t size;               /* K_TEXT: size of the char array */
    int ranged;                /* numbers: check lo (<, or <= with gt == 0) value <= hi */
    int gt;
    double lo, hi;             /* in base units */
    const char *const *words;  /* K_CHOICE: accepted words, NULL-terminated */
    int first;                 /* K_CHOICE: value stored for words[0] */
    const char *dflt;          /* default as written in a file; NULL: none, or derived in finish */
    int required;              /* must be given (when its `only` group applies) */
    unsigned only;             /* 0: always applies; else BED_* or SHAPE() bits */
    const char *accepted;      /* for messages */
} key_def;

#define SC(f) .home = IN_SCENARIO, .off = offsetof(sw_scenario, f)
#define FE(f) .home = IN_ITEM, .off = offsetof(sw_feature, f)
#define SO(f) .home = IN_ITEM, .off = offsetof(sw_source_spec, f)
#define TEXT_SC(f) .kind = K_TEXT, SC(f), .size = FIELD_SIZE(sw_scenario, f)
#define TEXT_SO(f) .kind = K_TEXT, SO(f), .size = FIELD_SIZE(sw_source_spec, f)
#define RANGE(l, h) .ranged = 1, .lo = (l), .hi = (h)          /* l <= v <= h */
#define ABOVE(l, h) .ranged = 1, .gt = 1, .lo = (l), .hi = (h) /* l <  v <= h */

static const char *const EDGE_WORDS[] = { "wall", "open", "level", NULL };                   /* sw_edge_kind */
static const char *const COAST_WORDS[] = { "none", "west", "east", "south", "north", NULL }; /* sw_coast_side */
static const char *const POSITIVE_WORDS[] = { "down", "up", NULL };                 /* from SW_POSITIVE_DOWN */
static const char *const SHAPE_WORDS[] = { "hump", "ellipse", "pair", "file", NULL }; /* sw_source_shape */
static const char *const PRECISION_WORDS[] = { "double", "single", NULL };                 /* sw_precision */

static const key_def RUN_KEYS[] = {
    { .name = "title", TEXT_SC(title), .dflt = "untitled scenario", .accepted = "up to 255 characters" },
    { .name = "duration", .kind = K_TIME, SC(duration_s), ABOVE(0, 30 * DAY), .required = 1,
      .accepted = "0 < duration <= 30 d" },
    { .name = "layout", .kind = K_LAYOUT, SC(layout), .size = FIELD_SIZE(sw_scenario, layout), .dflt = "C",
      .accepted = "the registry's names, sw_layout_names() (any case)" },
    { .name = "precision", .kind = K_CHOICE, SC(precision), .words = PRECISION_WORDS, .first = SW_DOUBLE,
      .dflt = "double", .accepted = "double, single" },
    { .name = "courant", .kind = K_NUMBER, SC(courant_fraction), ABOVE(0, 1), .dflt = "0.9",
      .accepted = "0 < courant <= 1, a fraction of the layout's limit" },
    { .name = "dt", .kind = K_TIME, SC(dt_s), ABOVE(0, DAY), .accepted = "0 < dt <= 1 d, not together with courant" },
    { .name = "gauge_interval", .kind = K_TIME, SC(gauge_interval_s), ABOVE(0, DAY), .dflt = "30 s",
      .accepted = "0 < gauge_interval <= 1 d" },
    { .name = "snapshot_interval", .kind = K_TIME, SC(snapshot_interval_s), RANGE(0, 30 * DAY), .dflt = "0",
      .accepted = "0 <= snapshot_interval <= 30 d; 0 writes none" },
    { .name = "arrival_threshold", .kind = K_LENGTH, SC(arrival_threshold_m), ABOVE(0, 100), .dflt = "0.01 m",
      .accepted = "0 < arrival_threshold <= 100 m" },
    { .name = "gravity", .kind = K_NUMBER, SC(gravity_ms2), RANGE(1, 30), .dflt = "9.81",
      .accepted = "1 <= gravity <= 30, in m s-2" },
    { .name = "origin", .kind = K_ORIGIN, SC(origin), .dflt = "2000-01-01 00:00:00",
      .accepted = "YYYY-MM-DD HH:MM:SS" },
};

static const key_def GRID_KEYS[] = {
    { .name = "nx", .kind = K_INTEGER, SC(grid.nx), RANGE(1, 100000), .required = 1,
      .accepted = "a whole number, 1 <= nx <= 100000, nx * ny <= 400000000" },
    { .name = "ny", .kind = K_INTEGER, SC(grid.ny), RANGE(1, 100000), .required = 1,
      .accepted = "a whole number, 1 <= ny <= 100000, nx * ny <= 400000000" },
    { .name = "dx", .kind = K_LENGTH, SC(grid.dx_m), RANGE(1, 1000 * KM), .required = 1,
      .accepted = "1 m <= dx <= 1000 km" },
    { .name = "dy", .kind = K_LENGTH, SC(grid.dy_m), RANGE(1, 1000 * KM), .accepted = "1 m <= dy <= 1000 km" },
    { .name = "x0", .kind = K_LENGTH, SC(grid.x0_m), RANGE(-1e5 * KM, 1e5 * KM), .dflt = "0",
      .accepted = "|x0| <= 100000 km" },
    { .name = "y0", .kind = K_LENGTH, SC(grid.y0_m), RANGE(-1e5 * KM, 1e5 * KM), .dflt = "0",
      .accepted = "|y0| <= 100000 km" },
};

static const key_def EDGES_KEYS[] = {
    { .name = "west", .kind = K_CHOICE, SC(edges[SW_WEST]),
      .words = EDGE_WORDS, .dflt = "wall", .accepted = "wall, open, level" },
    { .name = "east", .kind = K_CHOICE, SC(edges[SW_EAST]),
      .words = EDGE_WORDS, .dflt = "wall", .accepted = "wall, open, level" },
    { .name = "south", .kind = K_CHOICE, SC(edges[SW_SOUTH]),
      .words = EDGE_WORDS, .dflt = "wall", .accepted = "wall, open, level" },
    { .name = "north", .kind = K_CHOICE, SC(edges[SW_NORTH]),
      .words = EDGE_WORDS, .dflt = "wall", .accepted = "wall, open, level" },
    { .name = "all", .kind = K_CHOICE, .home = IN_PARSER, .off = 0 /* home_of: parse_state.edges_all */,
      .words = EDGE_WORDS, .accepted = "wall, open, level" },
};

static const key_def SEABED_KEYS[] = {
    { .name = "min_depth", .kind = K_LENGTH, SC(min_depth_m), ABOVE(0, 100), .dflt = "1 m",
      .accepted = "0 < min_depth <= 100 m" },
    { .name = "file", TEXT_SC(bed_file), .accepted = "a NetCDF path, relative to the scenario's folder" },
    { .name = "variable", TEXT_SC(bed_variable), .dflt = "depth", .only = BED_FILE, .accepted = "a variable name" },
    { .name = "positive", .kind = K_CHOICE, SC(bed_positive), .words = POSITIVE_WORDS, .first = SW_POSITIVE_DOWN,
      .only = BED_FILE, .accepted = "down (depth), up (elevation)" },
    { .name = "deep", .kind = K_LENGTH, SC(deep_m), ABOVE(0, 12 * KM), .required = 1, .only = BED_RECIPE,
      .accepted = "0 < deep <= 12 km" },
    { .name = "coast", .kind = K_CHOICE, SC(coast), .words = COAST_WORDS, .dflt = "none", .only = BED_RECIPE,
      .accepted = "none, west, east, south, north" },
    { .name = "shoreline", .kind = K_LENGTH, SC(shoreline_m), .only = BED_RECIPE,
      .accepted = "x (coast west/east) or y (coast south/north) of the mean shoreline" },
    { .name = "coast_wiggle", .kind = K_LENGTH, SC(coast_wiggle_m), RANGE(-1000 * KM, 1000 * KM), .dflt = "0",
      .only = BED_RECIPE, .accepted = "|coast_wiggle| <= 1000 km" },
    { .name = "coast_wavelength", .kind = K_LENGTH, SC(coast_wavelength_m), ABOVE(0, HUGE_VAL), .dflt = "50 km",
      .only = BED_RECIPE, .accepted = "coast_wavelength > 0" },
    { .name = "shelf_depth", .kind = K_LENGTH, SC(shelf_depth_m), ABOVE(0, 12 * KM), .only = BED_RECIPE,
      .accepted = "0 < shelf_depth <= deep" },
    { .name = "shelf_width", .kind = K_LENGTH, SC(shelf_width_m), ABOVE(0, HUGE_VAL), .only = BED_RECIPE,
      .accepted = "shelf_width > 0" },
    { .name = "slope_width", .kind = K_LENGTH, SC(slope_width_m), RANGE(0, HUGE_VAL), .dflt = "0",
      .only = BED_RECIPE, .accepted = "slope_width >= 0" },
    { .name = "land_height", .kind = K_LENGTH, SC(land_height_m), ABOVE(0, 9 * KM), .dflt = "10 m",
      .only = BED_RECIPE, .accepted = "0 < land_height <= 9 km" },
};

static const key_def BAY_KEYS[] = {
    { .name = "x", .kind = K_LENGTH, FE(x_m), .required = 1, .accepted = "x of the centre" },
    { .name = "y", .kind = K_LENGTH, FE(y_m), .required = 1, .accepted = "y of the centre" },
    { .name = "radius_x", .kind = K_LENGTH, FE(radius_x_m), ABOVE(0, HUGE_VAL),
      .required = 1, .accepted = "radius_x > 0" },
    { .name = "radius_y", .kind = K_LENGTH, FE(radius_y_m), ABOVE(0, HUGE_VAL),
      .required = 1, .accepted = "radius_y > 0" },
    { .name = "depth", .kind = K_LENGTH, FE(depth_m), ABOVE(0, HUGE_VAL), .required = 1,
      .accepted = "depth > 0, the floor depth at the centre" },
};

static const key_def ISLAND_KEYS[] = {
    { .name = "x", .kind = K_LENGTH, FE(x_m), .required = 1, .accepted = "x of the centre" },
    { .name = "y", .kind = K_LENGTH, FE(y_m), .required = 1, .accepted = "y of the centre" },
    { .name = "radius", .kind = K_LENGTH, FE(radius_x_m), ABOVE(0, HUGE_VAL), .required = 1,
      .accepted = "radius > 0, the e-folding radius" },
    { .name = "height", .kind = K_LENGTH, FE(height_m), ABOVE(0, HUGE_VAL), .required = 1,
      .accepted = "height > 0, the summit above sea level" },
};

static const key_def SHOAL_KEYS[] = {
    { .name = "x", .kind = K_LENGTH, FE(x_m), .required = 1, .accepted = "x of the centre" },
    { .name = "y", .kind = K_LENGTH, FE(y_m), .required = 1, .accepted = "y of the centre" },
    { .name = "radius", .kind = K_LENGTH, FE(radius_x_m), ABOVE(0, HUGE_VAL), .required = 1,
      .accepted = "radius > 0, the e-folding radius" },
    { .name = "crest", .kind = K_LENGTH, FE(crest_m), ABOVE(0, HUGE_VAL), .required = 1,
      .accepted = "crest > 0, the water depth over the crest" },
};

static const key_def SOURCE_KEYS[] = {
    { .name = "shape", .kind = K_CHOICE, SO(shape), .words = SHAPE_WORDS, .required = 1,
      .accepted = "hump, ellipse, pair, file" },
    { .name = "x", .kind = K_LENGTH, SO(x_m), .required = 1, .only = SHAPES_XY, .accepted = "x of the centre" },
    { .name = "y", .kind = K_LENGTH, SO(y_m), .required = 1, .only = SHAPES_XY, .accepted = "y of the centre" },
    { .name = "amplitude", .kind = K_LENGTH, SO(amplitude_m), RANGE(-100, 100), .required = 1, .only = SHAPES_XY,
      .accepted = "|amplitude| <= 100 m; > 0 for a pair" },
    { .name = "trough", .kind = K_LENGTH, SO(trough_m), ABOVE(0, 100), .only = SHAPE(SW_SOURCE_PAIR),
      .accepted = "0 < trough <= 100 m (default: amplitude)" },
    { .name = "radius", .kind = K_LENGTH, SO(radius_m), ABOVE(0, HUGE_VAL), .required = 1,
      .only = SHAPE(SW_SOURCE_HUMP), .accepted = "radius > 0" },
    { .name = "length", .kind = K_LENGTH, SO(length_m), ABOVE(0, HUGE_VAL), .required = 1, .only = SHAPES_AXES,
      .accepted = "length > 0" },
    { .name = "width", .kind = K_LENGTH, SO(width_m), ABOVE(0, HUGE_VAL), .required = 1, .only = SHAPES_AXES,
      .accepted = "width > 0" },
    { .name = "angle", .kind = K_ANGLE, SO(angle_deg), .required = 1, .only = SHAPES_AXES,
      .accepted = "degrees counter-clockwise from east" },
    { .name = "separation", .kind = K_LENGTH, SO(separation_m), ABOVE(0, HUGE_VAL), .required = 1,
      .only = SHAPE(SW_SOURCE_PAIR), .accepted = "separation > 0" },
    { .name = "file", TEXT_SO(file), .required = 1, .only = SHAPE(SW_SOURCE_FILE),
      .accepted = "a NetCDF path, relative to the scenario's folder" },
    { .name = "variable", TEXT_SO(variable), .dflt = "eta", .only = SHAPE(SW_SOURCE_FILE),
      .accepted = "a variable name" },
};

typedef enum { S_RUN, S_GRID, S_EDGES, S_SEABED, S_GAUGES, S_BAY, S_ISLAND, S_SHOAL, S_SOURCE, S_SWEEP } section_type;

typedef struct {
    const char *name;       /* first word of the header */
    section_type type;
    int named;              /* 1: [kind NAME], one section per name; 0: [kind], at most once */
    const key_def *keys;    /* NULL for [gauges] (every key is a gauge name) and [sweep] (see finish_sweep) */
    size_t n_keys;
} section_def;

#define TABLE(t) t, sizeof t / sizeof t[0]
static const section_def SECTIONS[] = {
    { "run", S_RUN, 0, TABLE(RUN_KEYS) },          { "grid", S_GRID, 0, TABLE(GRID_KEYS) },
    { "edges", S_EDGES, 0, TABLE(EDGES_KEYS) },    { "seabed", S_SEABED, 0, TABLE(SEABED_KEYS) },
    { "gauges", S_GAUGES, 0, NULL, 0 },            { "bay", S_BAY, 1, TABLE(BAY_KEYS) },
    { "island", S_ISLAND, 1, TABLE(ISLAND_KEYS) }, { "shoal", S_SHOAL, 1, TABLE(SHOAL_KEYS) },
    { "source", S_SOURCE, 1, TABLE(SOURCE_KEYS) }, { "sweep", S_SWEEP, 0, NULL, 0 },
};
#define N_SECTIONS (sizeof SECTIONS / sizeof SECTIONS[0])

_Static_assert(sizeof RUN_KEYS / sizeof RUN_KEYS[0] <= KEYS_MAX, "raise KEYS_MAX");
_Static_assert(sizeof SEABED_KEYS / sizeof SEABED_KEYS[0] <= KEYS_MAX, "raise KEYS_MAX");
_Static_assert(sizeof SOURCE_KEYS / sizeof SOURCE_KEYS[0] <= KEYS_MAX, "raise KEYS_MAX");
_Static_assert(sizeof(sw_edge_kind) == sizeof(int) && sizeof(sw_coast_side) == sizeof(int)
               && sizeof(sw_positive) == sizeof(int) && sizeof(sw_source_shape) == sizeof(int)
               && sizeof(sw_precision) == sizeof(int),
               "K_CHOICE stores an int");

/* ---- parser state -------------------------------------------------------------------------- */

typedef struct parse_state parse_state;

/* One `name = value` line of [sweep], kept as text until the whole file is known. */
typedef struct {
    char name[LINE_MAX_CHARS + 1];
    char value[LINE_MAX_CHARS + 1];
    int line;
} sweep_entry;

/* One section as it appeared in the file. */
typedef struct {
    const section_def *def;
    char label[LABEL_MAX];   /* "[run]", "[island Gull Rock]": how messages name it */
    char name[SW_NAME_MAX];  /* named sections: the name */
    int line;                /* line of the header */
    void *item;              /* S_BAY..S_SOURCE: the sw_feature / sw_source_spec being filled */
    int key_line[KEYS_MAX];  /* line of each key of def->keys, 0 = not given */
} section_ctx;

struct parse_state {
    sw_scenario *sc;
    const char *name;        /* file name for messages */
    const char *text;        /* the scenario text (sc->text) */
    size_t len, pos;         /* its length and the reader's position */
    int line;                /* number of the line last handed to inih */
    section_ctx sections[SECTIONS_MAX];
    size_t n_sections;
    section_ctx *cur;        /* section the following keys belong to; NULL before the first header */
    int edges_all;           /* [edges] all: -1 unset, else sw_edge_kind */
    int failed;              /* a problem was recorded in err */
    int fail_line;           /* its line (INT_MAX when it has none) */
    sw_error err;
    char bare[SW_ERROR_MSG_MAX]; /* err.msg without its "NAME:LINE: " prefix (for overrides) */
    sweep_entry sweep[SWEEP_ENTRIES_MAX]; /* [sweep] lines as written, settled in finish_sweep */
    size_t n_sweep;
};

/* ---- messages ------------------------------------------------------------------------------ */

/* Records "NAME:LINE: message" (or "NAME: message" when line <= 0) unless a problem is already
 * recorded. Returns 0, the value inih's handler returns on error. */
static int fail_at(parse_state *ps, sw_status code, int line, const char *fmt, ...)
    __attribute__((format(printf, 4, 5)));
static int fail_at(parse_state *ps, sw_status code, int line, const char *fmt, ...)
{
    if (ps->failed)
        return 0;
    char msg[SW_ERROR_MSG_MAX];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(msg, sizeof msg, fmt, ap);
    va_end(ap);
    memcpy(ps->bare, msg, sizeof ps->bare);
    if (line > 0)
        sw_fail(&ps->err, code, "%s:%d: %s", ps->name, line, msg);
    else
        sw_fail(&ps->err, code, "%s: %s", ps->name, msg);
    ps->failed = 1;
    ps->fail_line = line > 0 ? line : INT_MAX;
    return 0;
}

/* Levenshtein distance between a and b (insertions, deletions, substitutions), SIZE_MAX when
 * either is longer than 64 characters (then they are not close anyway). */
static size_t edit_distance(const char *a, const char *b)
{
    size_t la = strlen(a), lb = strlen(b);
    if (la > 64 || lb > 64)
        return SIZE_MAX;
    size_t row[65];
    for (size_t j = 0; j <= lb; j++)
        row[j] = j;
    for (size_t i = 1; i <= la; i++) {
        size_t diag = row[0];   /* distance(a[:i-1], b[:j-1]) */
        row[0] = i;
        for (size_t j = 1; j <= lb; j++) {
            size_t up = row[j];
            size_t best = diag + (a[i - 1] != b[j - 1]);
            if (up + 1 < best)
                best = up + 1;
            if (row[j - 1] + 1 < best)
                best = row[j - 1] + 1;
            row[j] = best;
            diag = up;
        }
    }
    return row[lb];
}

/* Keeps the closest candidate to `typed`: within edit distance 2, or one that `typed` begins (or
 * that begins `typed`, for candidates of 3 characters or more). */
typedef struct {
    const char *best;
    size_t dist;
} suggestion;

static void suggest_try(suggestion *s, const char *typed, const char *candidate)
{
    size_t d = edit_distance(typed, candidate);
    size_t lt = strlen(typed), lc = strlen(candidate);
    if (d > 2 && ((lt > 0 && strncmp(candidate, typed, lt) == 0) || (lc >= 3 && strncmp(typed, candidate, lc) == 0)))
        d = 2;   /* "dur" for "duration", "downward" for "down": close too */
    if (d <= 2 && (!s->best || d < s->dist)) {
        s->best = candidate;
        s->dist = d;
    }
}

/* Writes " (did you mean 'x'?)" or "" into out. */
static const char *suggest_text(const suggestion *s, char *out, size_t n)
{
    if (s->best)
        snprintf(out, n, " (did you mean '%s'?)", s->best);
    else if (n)
        out[0] = '\0';
    return out;
}

/* ---- values -------------------------------------------------------------------------------- */

static sw_unit_kind unit_kind(key_kind k)
{
    switch (k) {
    case K_LENGTH: return SW_UNIT_LENGTH;
    case K_TIME: return SW_UNIT_TIME;
    case K_ANGLE: return SW_UNIT_ANGLE;
    default: return SW_UNIT_NONE;
    }
}

static int is_leap(int y) { return (y % 4 == 0 && y % 100 != 0) || y % 400 == 0; }

/* Checks "YYYY-MM-DD HH:MM:SS" with a real calendar date (proleptic Gregorian). */
static sw_status check_origin(const char *v, char *why, size_t n)
{
    static const char pattern[] = "dddd-dd-dd dd:dd:dd";
    size_t len = strlen(v);
    int ok = len == sizeof pattern - 1;
    for (size_t i = 0; ok && i < len; i++)
        ok = pattern[i] == 'd' ? isdigit((unsigned char)v[i]) != 0 : v[i] == pattern[i];
    if (!ok) {
        snprintf(why, n, "not a date and time (accepted: YYYY-MM-DD HH:MM:SS, e.g. 2000-01-01 00:00:00)");
        return SW_ERR_PARSE;
    }
    int y = atoi(v), mo = atoi(v + 5), d = atoi(v + 8), h = atoi(v + 11), mi = atoi(v + 14), s = atoi(v + 17);
    static const int days[12] = { 31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31 };
    int dim = mo >= 1 && mo <= 12 ? days[mo - 1] + (mo == 2 && is_leap(y)) : 0;
    if (y < 1 || mo < 1 || mo > 12 || d < 1 || d > dim || h > 23 || mi > 59 || s > 59) {
        snprintf(why, n, "no such date or time (accepted: year 0001..9999, month 01..12, a day of that month, "
                         "HH 00..23, MM and SS 00..59)");
        return SW_ERR_RANGE;
    }
    return SW_OK;
}

static int is_numeric(key_kind k)
{
    return k == K_NUMBER || k == K_INTEGER || k == K_LENGTH || k == K_TIME || k == K_ANGLE;
}

/* The registry position (sw_layout_at) of the layout called `name` (any case) into *index, as a sweep
 * stores a layout value. Returns 0 when no layout has that name. */
static int layout_index(const char *name, double *index)
{
    const sw_layout *lay = sw_layout_find(name, NULL);
    for (size_t q = 0; lay && q < sw_layout_count(); q++)
        if (sw_layout_at(q) == lay) {
            *index = (double)q;
            return 1;
        }
    return 0;
}

/* Parses `value` as a number of numeric key k (unit, whole number, range) into *v. Returns SW_OK,
 * or SW_ERR_PARSE / SW_ERR_RANGE with the cause in why. */
static sw_status parse_number(const key_def *k, const char *value, double *v, char *why, size_t n)
{
    if (sw_units_parse(value, unit_kind(k->kind), v, why, (unsigned)n) != 0)
        return SW_ERR_PARSE;
    if (k->kind == K_INTEGER && *v != floor(*v)) {
        snprintf(why, n, "not a whole number (accepted: %s)", k->accepted);
        return SW_ERR_PARSE;
    }
    if (k->ranged && ((k->gt ? !(*v > k->lo) : !(*v >= k->lo)) || !(*v <= k->hi))) {
        snprintf(why, n, "out of range (accepted: %s)", k->accepted);
        return SW_ERR_RANGE;
    }
    return SW_OK;
}

/* Parses `value` as key k and stores it into home. Returns SW_OK, or SW_ERR_PARSE / SW_ERR_RANGE
 * with the cause in why. Nothing is stored on failure. */
static sw_status store_value(const key_def *k, void *home, const char *value, char *why, size_t n)
{
    char *at = (char *)home + k->off;
    switch (k->kind) {
    case K_NUMBER:
    case K_INTEGER:
    case K_LENGTH:
    case K_TIME:
    case K_ANGLE: {
        double v;
        sw_status st = parse_number(k, value, &v, why, n);
        if (st != SW_OK)
            return st;
        if (k->kind == K_INTEGER) {
            size_t iv = (size_t)v;   /* ranged: 1 .. 100000 */
            memcpy(at, &iv, sizeof iv);
        } else {
            memcpy(at, &v, sizeof v);
        }
        return SW_OK;
    }
    case K_TEXT: {
        size_t len = strlen(value);
        if (len == 0) {
            snprintf(why, n, "empty (accepted: %s)", k->accepted);
            return SW_ERR_PARSE;
        }
        if (len >= k->size) {
            snprintf(why, n, "too long: %zu characters (accepted: at most %zu)", len, k->size - 1);
            return SW_ERR_RANGE;
        }
        memcpy(at, value, len + 1);
        return SW_OK;
    }
    case K_CHOICE: {
        suggestion s = { 0 };
        for (int i = 0; k->words[i]; i++) {
            if (strcmp(value, k->words[i]) == 0) {
                int v = k->first + i;
                memcpy(at, &v, sizeof v);
                return SW_OK;
            }
            suggest_try(&s, value, k->words[i]);
        }
        char hint[96];
        snprintf(why, n, "unknown value%s (accepted: %s)", suggest_text(&s, hint, sizeof hint), k->accepted);
        return SW_ERR_PARSE;
    }
    case K_LAYOUT: {
        const sw_layout *lay = sw_layout_find(value, NULL);
        if (!lay) {
            snprintf(why, n, "unknown layout (accepted: %s (any case))", sw_layout_names());
            return SW_ERR_PARSE;
        }
        size_t len = strlen(lay->name);
        if (len >= k->size) {
            snprintf(why, n, "internal: the layout name %s is longer than %zu characters", lay->name, k->size - 1);
            return SW_ERR_RANGE;
        }
        memcpy(at, lay->name, len + 1);
        return SW_OK;
    }
    case K_ORIGIN: {
        sw_status st = check_origin(value, why, n);
        if (st == SW_OK)
            memcpy(at, value, strlen(value) + 1);   /* 19 characters into char[32] */
        return st;
    }
    }
    snprintf(why, n, "internal: unknown key kind");
    return SW_ERR_PARSE;
}

/* Where values of key k live for the open section. */
static void *home_of(parse_state *ps, const section_ctx *sec, const key_def *k)
{
    switch (k->home) {
    case IN_SCENARIO: return ps->sc;
    case IN_ITEM: return sec->item;
    case IN_PARSER: return &ps->edges_all;   /* the only IN_PARSER key: [edges] all */
    }
    return NULL;
}

/* Stores the defaults of a section's keys into their homes (defaults are known-good text). */
static void apply_defaults(parse_state *ps, const section_ctx *sec, const section_def *def, key_home which)
{
    char why[256];
    for (size_t i = 0; i < def->n_keys; i++) {
        const key_def *k = &def->keys[i];
        if (k->dflt && k->home == which)
            (void)store_value(k, home_of(ps, sec, k), k->dflt, why, sizeof why);
    }
}

/* ---- sections ------------------------------------------------------------------------------ */

static const section_def *find_section_def(const char *name)
{
    for (size_t i = 0; i < N_SECTIONS; i++)
        if (strcmp(SECTIONS[i].name, name) == 0)
            return &SECTIONS[i];
    return NULL;
}

/* Opens the section whose header text (between '[' and ']') is inner[0..n). Returns 0 after
 * recording a problem. */
static int begin_section(parse_state *ps, const char *inner, size_t n)
{
    while (n > 0 && isspace((unsigned char)*inner)) {
        inner++;
        n--;
    }
    while (n > 0 && isspace((unsigned char)inner[n - 1]))
        n--;
    if (n == 0)
        return fail_at(ps, SW_ERR_PARSE, ps->line, "empty section header [] (accepted: run, grid, edges, "
                                                   "seabed, gauges, bay NAME, island NAME, shoal NAME, source NAME, "
                                                   "sweep)");
    char kind[LINE_MAX_CHARS + 1];
    size_t kn = 0;
    while (kn < n && !isspace((unsigned char)inner[kn]))
        kn++;
    memcpy(kind, inner, kn);
    kind[kn] = '\0';
    const char *name = inner + kn;
    size_t nn = n - kn;
    while (nn > 0 && isspace((unsigned char)*name)) {
        name++;
        nn--;
    }

    const section_def *def = find_section_def(kind);
    if (!def) {
        suggestion s = { 0 };
        for (size_t i = 0; i < N_SECTIONS; i++)
            suggest_try(&s, kind, SECTIONS[i].name);
        char hint[96];
        if (s.best)
            return fail_at(ps, SW_ERR_PARSE, ps->line, "unknown section [%.*s]%s", (int)n, inner,
                           suggest_text(&s, hint, sizeof hint));
        return fail_at(ps, SW_ERR_PARSE, ps->line, "unknown section [%.*s] (accepted: run, grid, edges, seabed, "
                       "gauges, bay NAME, island NAME, shoal NAME, source NAME, sweep)", (int)n, inner);
    }
    if (def->named && nn == 0)
        return fail_at(ps, SW_ERR_PARSE, ps->line, "section [%s] needs a name, e.g. [%s %s]", kind, kind,
                       def->type == S_SOURCE ? "main" : "Gull Rock");
    if (!def->named && nn > 0)
        return fail_at(ps, SW_ERR_PARSE, ps->line, "section [%s] takes no name, found [%.*s] (accepted: [%s])", kind,
                       (int)n, inner, kind);
    if (nn >= SW_NAME_MAX)
        return fail_at(ps, SW_ERR_RANGE, ps->line, "[%s ...]: the name has %zu characters (accepted: at most %d)",
                       kind, nn, SW_NAME_MAX - 1);

    for (size_t i = 0; i < ps->n_sections; i++) {
        const section_ctx *o = &ps->sections[i];
        if (o->def == def && strlen(o->name) == nn && strncmp(o->name, name, nn) == 0)
            return fail_at(ps, SW_ERR_PARSE, ps->line, "duplicate section %s (first on line %d)", o->label, o->line);
    }

    sw_scenario *sc = ps->sc;
    void *item = NULL;
    if (def->type == S_BAY || def->type == S_ISLAND || def->type == S_SHOAL) {
        if (sc->n_features >= SW_MAX_FEATURES)
            return fail_at(ps, SW_ERR_RANGE, ps->line, "too many features at [%.*s] (accepted: at most %d bays, "
                           "islands and shoals)", (int)n, inner, SW_MAX_FEATURES);
        sw_feature *f = &sc->features[sc->n_features++];
        f->kind = def->type == S_BAY ? SW_FEATURE_BAY : def->type == S_ISLAND ? SW_FEATURE_ISLAND : SW_FEATURE_SHOAL;
        memcpy(f->name, name, nn);
        f->name[nn] = '\0';
        f->line = ps->line;
        item = f;
    } else if (def->type == S_SOURCE) {
        if (sc->n_sources >= SW_MAX_SOURCES)
            return fail_at(ps, SW_ERR_RANGE, ps->line, "too many sources at [%.*s] (accepted: at most %d)", (int)n,
                           inner, SW_MAX_SOURCES);
        sw_source_spec *s = &sc->sources[sc->n_sources++];
        memcpy(s->name, name, nn);
        s->name[nn] = '\0';
        s->line = ps->line;
        item = s;
    }

    section_ctx *sec = &ps->sections[ps->n_sections++];   /* SECTIONS_MAX covers every kind's limit */
    memset(sec, 0, sizeof *sec);
    sec->def = def;
    sec->line = ps->line;
    sec->item = item;
    memcpy(sec->name, name, nn);
    sec->name[nn] = '\0';
    if (nn)
        snprintf(sec->label, sizeof sec->label, "[%s %.*s]", def->name, (int)nn, name);
    else
        snprintf(sec->label, sizeof sec->label, "[%s]", def->name);
    if (item)
        apply_defaults(ps, sec, def, IN_ITEM);
    ps->cur = sec;
    return 1;
}

static const section_ctx *find_section(const parse_state *ps, section_type type)
{
    for (size_t i = 0; i < ps->n_sections; i++)
        if (ps->sections[i].def->type == type)
            return &ps->sections[i];
    return NULL;
}

/* Index of key `name` in sec's table (the name must be in it). */
static size_t key_index(const section_def *def, const char *name)
{
    for (size_t i = 0; i < def->n_keys; i++)
        if (strcmp(def->keys[i].name, name) == 0)
            return i;
    return 0;
}

/* Line where key `name` was given in sec, 0 if it was not (or sec is NULL). */
static int key_line(const section_ctx *sec, const char *name)
{
    return sec ? sec->key_line[key_index(sec->def, name)] : 0;
}

/* ---- reading lines ------------------------------------------------------------------------- */

/* Copies the raw line raw[0..n) into out (size > n) without the BOM (first line), leading and
 * trailing blanks and comments: a line starting with ';' or '#' becomes empty, and " ;..." after
 * text is dropped (the same rule inih applies, so inih sees the same content). Returns the length. */
static size_t clean_line(const char *raw, size_t n, int first_line, char *out)
{
    if (first_line && n >= 3 && memcmp(raw, "\xEF\xBB\xBF", 3) == 0) {
        raw += 3;
        n -= 3;
    }
    while (n > 0 && isspace((unsigned char)*raw)) {
        raw++;
        n--;
    }
    if (n > 0 && (*raw == ';' || *raw == '#'))
        n = 0;
    for (size_t i = 1; i < n; i++)
        if (raw[i] == ';' && isspace((unsigned char)raw[i - 1])) {
            n = i;
            break;
        }
    while (n > 0 && isspace((unsigned char)raw[n - 1]))
        n--;
    memcpy(out, raw, n);
    out[n] = '\0';
    return n;
}

/* Drops the blanks around the first '=' or ':' of a key line (inih strips them anyway), so that a
 * 200-character line fits inih's buffer. Returns the new length. */
static size_t squeeze_separator(char *line, size_t len)
{
    char *sep = strpbrk(line, "=:");
    if (!sep)
        return len;
    char *a = sep, *b = sep + 1;
    while (a > line && isspace((unsigned char)a[-1]))
        a--;
    while (isspace((unsigned char)*b))
        b++;
    *a++ = *sep;
    memmove(a, b, strlen(b) + 1);
    return strlen(line);
}

/* Finds line `number` (1-based) of the text: sets *start and *n (without the line break). */
static void find_line(const parse_state *ps, int number, const char **start, size_t *n)
{
    const char *s = ps->text, *end = ps->text + ps->len;
    for (int l = 1; l < number && s < end; l++) {
        const char *nl = memchr(s, '\n', (size_t)(end - s));
        s = nl ? nl + 1 : end;
    }
    const char *nl = memchr(s, '\n', (size_t)(end - s));
    *start = s;
    *n = nl ? (size_t)(nl - s) : (size_t)(end - s);
}

/* The ini_reader: hands inih the next line, cleaned (fgets-like: returns buf, or NULL at the end
 * of the text or once a problem is recorded). Opens sections as their headers go by. */
static char *read_line(char *buf, int size, void *stream)
{
    parse_state *ps = stream;
    if (ps->failed || ps->pos >= ps->len || size <= 1)
        return NULL;
    const char *s = ps->text + ps->pos;
    const char *nl = memchr(s, '\n', ps->len - ps->pos);
    size_t n = nl ? (size_t)(nl - s) : ps->len - ps->pos;
    ps->pos += n + (nl != NULL);
    ps->line++;
    if (n > 0 && s[n - 1] == '\r')
        n--;
    if (n > LINE_MAX_CHARS) {
        fail_at(ps, SW_ERR_PARSE, ps->line, "the line has %zu characters (accepted: at most %d)", n, LINE_MAX_CHARS);
        return NULL;
    }
    for (size_t i = 0; i < n; i++) {
        unsigned char c = (unsigned char)s[i];
        if ((c < 0x20 && c != '\t') || c == 0x7f) {
            fail_at(ps, SW_ERR_PARSE, ps->line, "control character 0x%02x in column %zu (accepted: plain text; is this "
                    "a scenario file?)", c, i + 1);
            return NULL;
        }
    }
    char clean[LINE_MAX_CHARS + 1];
    size_t len = clean_line(s, n, ps->line == 1, clean);
    if (clean[0] == '[') {
        const char *close = strchr(clean, ']');
        if (close) {   /* without ']' inih reports the line as a syntax error */
            if (close[1] != '\0') {
                fail_at(ps, SW_ERR_PARSE, ps->line, "unexpected '%s' after the section header %.*s", close + 1,
                        (int)(close - clean + 1), clean);
                return NULL;
            }
            if (!begin_section(ps, clean + 1, (size_t)(close - clean - 1)))
                return NULL;   /* names that long are refused here, so headers always fit below */
        }
    } else if (len >= (size_t)size) {
        len = squeeze_separator(clean, len);
    }
    if (len >= (size_t)size) {   /* inih's buffer holds one character less than our limit */
        fail_at(ps, SW_ERR_PARSE, ps->line, "the line has %zu characters with no blank around '=' (accepted: at most "
                "%d then; write 'key = value')", len, size - 1);
        return NULL;
    }
    memcpy(buf, clean, len + 1);
    return buf;
}

/* Replaces any recorded problem by inih's syntax error at `line`, with its likely cause. */
static void syntax_error(parse_state *ps, int line)
{
    const char *raw;
    size_t n;
    find_line(ps, line, &raw, &n);
    char clean[LINE_MAX_CHARS + 1];
    size_t len = clean_line(raw, n > LINE_MAX_CHARS ? LINE_MAX_CHARS : n, line == 1, clean);
    ps->failed = 0;
    if (len > 0 && clean[0] == '[')
        fail_at(ps, SW_ERR_PARSE, line, "missing ']' at the end of the section header '%s'", clean);
    else
        fail_at(ps, SW_ERR_PARSE, line, "cannot read '%.60s%s' (accepted: key = value, a [section] header, or a "
                "comment starting with ; or #)", clean, len > 60 ? "..." : "");
}

/* ---- keys ---------------------------------------------------------------------------------- */

static void format_length(char *out, size_t n, double v_m)
{
    if (fabs(v_m) >= 1000.0)
        snprintf(out, n, "%g km", v_m / 1000.0);
    else
        snprintf(out, n, "%g m", v_m);
}

/* [gauges] Name = x, y */
static int add_gauge(parse_state *ps, const char *name, const char *value)
{
    sw_scenario *sc = ps->sc;
    const char *label = ps->cur->label;
    if (!name[0])
        return fail_at(ps, SW_ERR_PARSE, ps->line, "%s a gauge needs a name before '=' (e.g. Port Harrow = 42 km, "
                       "18.5 km)", label);
    size_t nl = strlen(name);
    if (nl >= SW_NAME_MAX)
        return fail_at(ps, SW_ERR_RANGE, ps->line, "%s gauge name '%.20s...' has %zu characters (accepted: at most %d)",
                       label, name, nl, SW_NAME_MAX - 1);
    for (size_t i = 0; i < sc->n_gauges; i++)
        if (strcmp(sc->gauges[i].name, name) == 0)
            return fail_at(ps, SW_ERR_PARSE, ps->line, "%s duplicate gauge '%s' (first on line %d, again on line %d)",
                           label, name, sc->gauges[i].line, ps->line);
    if (sc->n_gauges >= SW_MAX_GAUGES)
        return fail_at(ps, SW_ERR_RANGE, ps->line, "%s too many gauges at '%s' (accepted: at most %d)", label, name,
                       SW_MAX_GAUGES);
    const char *comma = strchr(value, ',');
    if (!comma || strchr(comma + 1, ','))
        return fail_at(ps, SW_ERR_PARSE, ps->line, "%s %s = %s: expected two lengths 'x, y' (e.g. 42 km, 18.5 km)",
                       label, name, value);
    char xs[LINE_MAX_CHARS + 1];
    size_t xn = (size_t)(comma - value);
    memcpy(xs, value, xn);
    xs[xn] = '\0';
    double xy[2];
    const char *part[2] = { xs, comma + 1 };
    for (int i = 0; i < 2; i++) {
        char why[256];
        if (sw_units_parse(part[i], SW_UNIT_LENGTH, &xy[i], why, sizeof why) != 0)
            return fail_at(ps, SW_ERR_PARSE, ps->line, "%s %s = %s: %s: %s", label, name, value, i ? "y" : "x", why);
    }
    sw_gauge_spec *g = &sc->gauges[sc->n_gauges++];
    memcpy(g->name, name, nl + 1);
    g->line = ps->line;
    g->x_m = xy[0];
    g->y_m = xy[1];
    return 1;
}

/* [sweep] name = value: kept as text; finish_sweep reads it once every section is known. */
static int add_sweep_entry(parse_state *ps, const char *name, const char *value)
{
    for (size_t i = 0; i < ps->n_sweep; i++)
        if (strcmp(ps->sweep[i].name, name) == 0)
            return fail_at(ps, SW_ERR_PARSE, ps->line, "[sweep] duplicate key '%s' (first on line %d, again on line %d)",
                           name, ps->sweep[i].line, ps->line);
    if (ps->n_sweep >= SWEEP_ENTRIES_MAX)
        return fail_at(ps, SW_ERR_RANGE, ps->line, "[sweep] too many parameters at '%s' (accepted: at most %d)", name,
                       SW_MAX_SWEEP_PARAMS);
    sweep_entry *e = &ps->sweep[ps->n_sweep++];
    snprintf(e->name, sizeof e->name, "%s", name);     /* both fit: a line is at most LINE_MAX_CHARS */
    snprintf(e->value, sizeof e->value, "%s", value);
    e->line = ps->line;
    return 1;
}

/* The ini_handler: one `name = value` of the open section. `section` is ignored: the reader
 * opened the section already (and inih truncates long names). Returns 1, or 0 after recording a
 * problem. */
static int on_key(void *user, const char *section, const char *name, const char *value)
{
    parse_state *ps = user;
    (void)section;
    if (ps->failed)
        return 0;
    section_ctx *sec = ps->cur;
    if (!name[0])
        return fail_at(ps, SW_ERR_PARSE, ps->line, "%s%sa key name is missing before '='", sec ? sec->label : "",
                       sec ? " " : "");
    if (!sec)
        return fail_at(ps, SW_ERR_PARSE, ps->line, "key '%s' comes before any [section] header (put it under "
                       "[run], [grid], ...)", name);
    if (sec->def->type == S_GAUGES)
        return add_gauge(ps, name, value);
    if (sec->def->type == S_SWEEP)
        return add_sweep_entry(ps, name, value);

    const section_def *def = sec->def;
    const key_def *k = NULL;
    suggestion s = { 0 };
    for (size_t i = 0; i < def->n_keys && !k; i++) {
        if (strcmp(def->keys[i].name, name) == 0)
            k = &def->keys[i];
        else
            suggest_try(&s, name, def->keys[i].name);
    }
    if (!k) {
        char hint[96];
        return fail_at(ps, SW_ERR_PARSE, ps->line, "%s unknown key '%s'%s", sec->label, name,
                       suggest_text(&s, hint, sizeof hint));
    }
    size_t ki = (size_t)(k - def->keys);
    if (sec->key_line[ki])
        return fail_at(ps, SW_ERR_PARSE, ps->line, "%s duplicate key '%s' (first on line %d, again on line %d)",
                       sec->label, name, sec->key_line[ki], ps->line);
    sec->key_line[ki] = ps->line;

    char why[512];
    sw_status st = store_value(k, home_of(ps, sec, k), value, why, sizeof why);
    if (st != SW_OK)
        return fail_at(ps, st, ps->line, "%s %s = %s: %s", sec->label, name, value, why);
    return 1;
}

/* ---- rules over the whole file ------------------------------------------------------------- */

/* Missing required keys and keys outside their group; `active` is the group bit in force. */
static int check_keys(parse_state *ps, const section_ctx *sec, unsigned active, const char *group_text)
{
    const section_def *def = sec->def;
    for (size_t i = 0; i < def->n_keys; i++) {
        const key_def *k = &def->keys[i];
        int applies = k->only == 0 || (k->only & active) != 0;
        if (sec->key_line[i] && !applies)
            return fail_at(ps, SW_ERR_PARSE, sec->key_line[i], "%s %s: not used %s", sec->label, k->name, group_text);
        if (!sec->key_line[i] && applies && k->required)
            return fail_at(ps, SW_ERR_PARSE, sec->line, "%s missing key '%s' (accepted: %s)", sec->label, k->name,
                           k->accepted);
    }
    return 1;
}

static int finish_run(parse_state *ps, const section_ctx *run)
{
    sw_scenario *sc = ps->sc;
    if (!run)
        return fail_at(ps, SW_ERR_PARSE, 0, "missing section [run] (it needs at least 'duration')");
    if (!check_keys(ps, run, 1, ""))
        return 0;
    int dt = key_line(run, "dt"), courant = key_line(run, "courant");
    if (dt && courant)
        return fail_at(ps, SW_ERR_PARSE, dt > courant ? dt : courant, "[run] dt (line %d) and courant (line %d) are "
                       "both given (accepted: one of them; dt fixes the step, courant derives it)", dt, courant);
    /* lines for later messages: the key's, or the [run] header's when defaulted */
    sc->layout_line = key_line(run, "layout") ? key_line(run, "layout") : run->line;
    sc->courant_line = courant ? courant : run->line;
    sc->dt_line = dt ? dt : run->line;
    return 1;
}

static int finish_grid(parse_state *ps, const section_ctx *grid)
{
    sw_scenario *sc = ps->sc;
    if (!grid) {
        if (!sc->bed_file[0])
            return fail_at(ps, SW_ERR_PARSE, 0, "missing section [grid] with nx, ny and dx (it may be left out only "
                           "when [seabed] file gives the grid)");
        memset(&sc->grid, 0, sizeof sc->grid);
        sc->has_grid = 0;
        return 1;
    }
    if (!check_keys(ps, grid, 1, ""))
        return 0;
    sc->has_grid = 1;
    if (!key_line(grid, "dy"))
        sc->grid.dy_m = sc->grid.dx_m;
    double cells = (double)sc->grid.nx * (double)sc->grid.ny;
    if (cells > 4e8) {
        int line = key_line(grid, "nx") > key_line(grid, "ny") ? key_line(grid, "nx") : key_line(grid, "ny");
        return fail_at(ps, SW_ERR_RANGE, line, "[grid] nx * ny = %zu * %zu = %.0f cells: out of range (accepted: "
                       "nx * ny <= 400000000)", sc->grid.nx, sc->grid.ny, cells);
    }
    return 1;
}

static void finish_edges(parse_state *ps, const section_ctx *edges)
{
    static const char *const side[4] = { "west", "east", "south", "north" };   /* SW_WEST.. SW_NORTH */
    if (ps->edges_all < 0)
        return;
    for (int i = 0; i < 4; i++)
        if (!key_line(edges, side[i]))
            ps->sc->edges[i] = (sw_edge_kind)ps->edges_all;
}

static int finish_seabed(parse_state *ps, const section_ctx *bed)
{
    sw_scenario *sc = ps->sc;
    if (!bed)
        return fail_at(ps, SW_ERR_PARSE, 0, "missing section [seabed] (it needs 'deep', or 'file' for a NetCDF "
                       "depth grid)");
    int file = key_line(bed, "file");
    sc->bed_line = file ? file : bed->line;
    if (!check_keys(ps, bed, file ? BED_FILE : BED_RECIPE,
                    file ? "with 'file' (the depth comes from the file)" : "without 'file' (it describes the file)"))
        return 0;
    if (file)
        return 1;
    if (sc->coast != SW_COAST_NONE) {
        static const char *const needed[] = { "shoreline", "shelf_width" };
        for (int i = 0; i < 2; i++)
            if (!key_line(bed, needed[i]))
                return fail_at(ps, SW_ERR_PARSE, bed->line, "[seabed] missing key '%s' (needed with coast = %s)",
                               needed[i], COAST_WORDS[sc->coast]);
    }
    int shelf = key_line(bed, "shelf_depth");
    if (!shelf)
        sc->shelf_depth_m = sc->deep_m;
    else if (sc->shelf_depth_m > sc->deep_m)
        return fail_at(ps, SW_ERR_RANGE, shelf, "[seabed] shelf_depth = %g m: out of range (accepted: 0 < shelf_depth "
                       "<= deep = %g m)", sc->shelf_depth_m, sc->deep_m);
    return 1;
}

static int finish_source(parse_state *ps, const section_ctx *sec)
{
    sw_source_spec *s = sec->item;
    if (!key_line(sec, "shape"))
        return check_keys(ps, sec, 0, "");   /* reports the missing shape */
    char group[64];
    snprintf(group, sizeof group, "by shape '%s'", SHAPE_WORDS[s->shape]);
    if (!check_keys(ps, sec, SHAPE(s->shape), group))
        return 0;
    if (s->shape == SW_SOURCE_PAIR) {
        if (!(s->amplitude_m > 0))
            return fail_at(ps, SW_ERR_RANGE, key_line(sec, "amplitude"), "%s amplitude = %g m: out of range (accepted: "
                           "0 < amplitude <= 100 m for a pair, the uplift crest)", sec->label, s->amplitude_m);
        if (!key_line(sec, "trough"))
            s->trough_m = s->amplitude_m;
    }
    return 1;
}

static int finish_gauges(parse_state *ps)
{
    const sw_scenario *sc = ps->sc;
    if (!sc->has_grid)
        return 1;   /* the grid comes from the seabed file: checked once it is read */
    const sw_grid *g = &sc->grid;
    double x1 = g->x0_m + (double)g->nx * g->dx_m, y1 = g->y0_m + (double)g->ny * g->dy_m;
    for (size_t i = 0; i < sc->n_gauges; i++) {
        const sw_gauge_spec *gs = &sc->gauges[i];
        if (gs->x_m < g->x0_m || gs->x_m > x1 || gs->y_m < g->y0_m || gs->y_m > y1) {
            char a[4][32], px[32], py[32];
            format_length(a[0], sizeof a[0], g->x0_m);
            format_length(a[1], sizeof a[1], x1);
            format_length(a[2], sizeof a[2], g->y0_m);
            format_length(a[3], sizeof a[3], y1);
            format_length(px, sizeof px, gs->x_m);
            format_length(py, sizeof py, gs->y_m);
            return fail_at(ps, SW_ERR_RANGE, gs->line, "[gauges] %s = %s, %s: outside the domain (accepted: %s <= x <= "
                           "%s, %s <= y <= %s)", gs->name, px, py, a[0], a[1], a[2], a[3]);
        }
    }
    return 1;
}

/* ---- [sweep] ------------------------------------------------------------------------------- */

static const char *const DESIGN_WORDS[] = { "one-at-a-time", "factorial", "latin-hypercube", NULL }; /* sw_sweep_design */

/* The keys of [sweep] that describe the design; every other key is a parameter. */
static const key_def SWEEP_DESIGN_KEYS[] = {
    { .name = "design", .kind = K_CHOICE, SC(sweep.design), .words = DESIGN_WORDS,
      .accepted = "one-at-a-time, factorial, latin-hypercube" },
    { .name = "members", .kind = K_INTEGER, SC(sweep.members), RANGE(2, SW_MAX_SWEEP_MEMBERS),
      .accepted = "a whole number, 2 <= members <= 10000" },
    { .name = "seed", .kind = K_INTEGER, .home = IN_PARSER, RANGE(0, 9007199254740991.0),
      .accepted = "a whole number, 0 <= seed <= 9007199254740991" },
};

/* Parameters with their own meaning (sw_sweep_kind); .off is unused. */
static const key_def SWEEP_BUILTIN_KEYS[] = {
    { .name = "amplitude_factor", .kind = K_NUMBER, ABOVE(0, 1000), .first = SW_SWEEP_AMPLITUDE_FACTOR,
      .accepted = "0 < amplitude_factor <= 1000" },
    { .name = "source_x_offset", .kind = K_LENGTH, RANGE(-1e5 * KM, 1e5 * KM), .first = SW_SWEEP_SOURCE_X_OFFSET,
      .accepted = "|source_x_offset| <= 100000 km" },
    { .name = "source_y_offset", .kind = K_LENGTH, RANGE(-1e5 * KM, 1e5 * KM), .first = SW_SWEEP_SOURCE_Y_OFFSET,
      .accepted = "|source_y_offset| <= 100000 km" },
    { .name = "depth_factor", .kind = K_NUMBER, ABOVE(0, 100), .first = SW_SWEEP_DEPTH_FACTOR,
      .accepted = "0 < depth_factor <= 100" },
    { .name = "resolution_factor", .kind = K_NUMBER, ABOVE(0, 64), .first = SW_SWEEP_RESOLUTION_FACTOR,
      .accepted = "0 < resolution_factor <= 64" },
};

/* Short names for [run] keys: `courant = ...` in [sweep] means `run.courant = ...`. */
static const char *const SWEEP_ALIASES[] = { "layout", "courant", "arrival_threshold", NULL };

#define SWEEP_HINT "(accepted: design, members, seed, amplitude_factor, source_x_offset, source_y_offset, " \
                   "depth_factor, resolution_factor, layout, courant, arrival_threshold, or SECTION.KEY such as " \
                   "grid.dx or source main.amplitude)"

static void trim(char *t)
{
    size_t n = strlen(t), a = 0;
    while (a < n && isspace((unsigned char)t[a]))
        a++;
    while (n > a && isspace((unsigned char)t[n - 1]))
        n--;
    memmove(t, t + a, n - a);
    t[n - a] = '\0';
}

/* Splits "section words.key" at the last '.' into the section's kind (first word), its name (the
 * rest, trimmed) and the key. Returns 0 when a part is missing or too long. */
static int split_target(const char *target, char *kind, char *name, char *key)
{
    const char *dot = strrchr(target, '.');
    if (!dot || strlen(target) > LINE_MAX_CHARS)
        return 0;
    char sect[LINE_MAX_CHARS + 1];
    memcpy(sect, target, (size_t)(dot - target));
    sect[dot - target] = '\0';
    trim(sect);
    snprintf(key, LINE_MAX_CHARS + 1, "%s", dot + 1);
    trim(key);
    size_t kn = 0;
    while (sect[kn] && !isspace((unsigned char)sect[kn]))
        kn++;
    memcpy(kind, sect, kn);
    kind[kn] = '\0';
    snprintf(name, LINE_MAX_CHARS + 1, "%s", sect + kn);
    trim(name);
    return kind[0] && key[0] && strlen(name) < SW_NAME_MAX;
}

/* Canonical "kind name.key" / "kind.key". */
static void join_target(char *out, size_t n, const char *kind, const char *name, const char *key)
{
    /* kinds and keys are short table words; names are below SW_NAME_MAX (split_target) */
    snprintf(out, n, "%.16s%s%.63s.%.24s", kind, name[0] ? " " : "", name, key);
}

/* Reads one value of parameter p (key k) into *v; layouts as their registry index. */
static sw_status sweep_value(const key_def *k, const char *text, double *v, char *why, size_t n)
{
    if (k->kind == K_LAYOUT) {
        if (!layout_index(text, v)) {
            snprintf(why, n, "unknown layout (accepted: %s)", sw_layout_names());
            return SW_ERR_PARSE;
        }
        return SW_OK;
    }
    return parse_number(k, text, v, why, n);
}

/* Parses the values of parameter e (key k): `v1, v2, ...` or `LO .. HI` with an optional `in N`. */
static int sweep_values(parse_state *ps, const sweep_entry *e, const key_def *k, sw_sweep_param *p)
{
    char text[LINE_MAX_CHARS + 1], why[512];
    snprintf(text, sizeof text, "%s", e->value);
    const char *dots = strstr(text, "..");
    sw_status st;
    if (dots) {
        if (k->kind == K_LAYOUT)
            return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s = %s: a layout takes a list, not a range (accepted: "
                           "e.g. A, C)", e->name, e->value);
        char lo[LINE_MAX_CHARS + 1], hi[LINE_MAX_CHARS + 1], count[LINE_MAX_CHARS + 1] = "";
        memcpy(lo, text, (size_t)(dots - text));
        lo[dots - text] = '\0';
        snprintf(hi, sizeof hi, "%s", dots + 2);
        char *in = strstr(hi, " in ");
        if (in) {
            snprintf(count, sizeof count, "%s", in + 4);
            *in = '\0';
            trim(count);
        }
        trim(lo);
        trim(hi);
        if (!lo[0] || !hi[0] || (in && !count[0]))
            return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s = %s: expected a range 'LO .. HI' or 'LO .. HI in N' "
                           "(e.g. 0.9 .. 1.1 in 3)", e->name, e->value);
        const char *part[2] = { lo, hi };
        double *into[2] = { &p->lo, &p->hi };
        for (int q = 0; q < 2; q++)
            if ((st = sweep_value(k, part[q], into[q], why, sizeof why)) != SW_OK)
                return fail_at(ps, st, e->line, "[sweep] %s = %s: %s '%s': %s", e->name, e->value, q ? "HI" : "LO",
                               part[q], why);
        if (!(p->lo < p->hi))
            return fail_at(ps, SW_ERR_RANGE, e->line, "[sweep] %s = %s: LO must be below HI (accepted: LO < HI)",
                           e->name, e->value);
        p->is_range = 1;
        if (!in) {
            if (k->kind == K_INTEGER)
                return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s = %s: a whole-number key needs 'in N' or a list "
                               "(e.g. %s .. %s in 3)", e->name, e->value, lo, hi);
            p->n_levels = 0;
            return 1;
        }
        char *end = NULL;
        long nv = strtol(count, &end, 10);
        if (end == count || *end || nv < 2 || nv > SW_MAX_SWEEP_LEVELS)
            return fail_at(ps, SW_ERR_RANGE, e->line, "[sweep] %s = %s: 'in %s': out of range (accepted: a whole "
                           "number of values, 2 .. %d)", e->name, e->value, count, SW_MAX_SWEEP_LEVELS);
        p->n_levels = (size_t)nv;
        for (size_t i = 0; i < p->n_levels; i++) {
            double f = (double)i / (double)(p->n_levels - 1);
            p->level[i] = i + 1 == p->n_levels ? p->hi : p->lo + (p->hi - p->lo) * f;
            if (k->kind == K_INTEGER && p->level[i] != floor(p->level[i]))
                return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s = %s: 'in %ld' gives %g, not a whole number "
                               "(accepted: a count that keeps the values whole, or a list)", e->name, e->value, nv,
                               p->level[i]);
        }
        return 1;
    }
    p->n_levels = 0;
    for (char *item = text;; ) {
        char *comma = strchr(item, ',');
        if (comma)
            *comma = '\0';
        trim(item);
        if (!item[0])
            return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s = %s: an empty value in the list (accepted: values "
                           "separated by commas, or a range LO .. HI)", e->name, e->value);
        if (p->n_levels >= SW_MAX_SWEEP_LEVELS)
            return fail_at(ps, SW_ERR_RANGE, e->line, "[sweep] %s: too many values (accepted: at most %d)", e->name,
                           SW_MAX_SWEEP_LEVELS);
        double v;
        if ((st = sweep_value(k, item, &v, why, sizeof why)) != SW_OK)
            return fail_at(ps, st, e->line, "[sweep] %s = %s: value '%s': %s", e->name, e->value, item, why);
        for (size_t i = 0; i < p->n_levels; i++)
            if (p->level[i] == v)
                return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s = %s: value '%s' is listed twice", e->name,
                               e->value, item);
        p->level[p->n_levels++] = v;
        if (!comma)
            break;
        item = comma + 1;
    }
    return 1;
}

/* Finds the section [kind name] of the file, or NULL. */
static const section_ctx *find_named_section(const parse_state *ps, const section_def *def, const char *name)
{
    for (size_t i = 0; i < ps->n_sections; i++)
        if (ps->sections[i].def == def && strcmp(ps->sections[i].name, name) == 0)
            return &ps->sections[i];
    return NULL;
}

/* Resolves a `section.key` parameter: the section must be in the file, the key numeric (or the
 * layout) and in use there. Fills p->target and *kout. */
static int sweep_key_target(parse_state *ps, const sweep_entry *e, const char *target, sw_sweep_param *p,
                            const key_def **kout)
{
    char kind[LINE_MAX_CHARS + 1], name[LINE_MAX_CHARS + 1], key[LINE_MAX_CHARS + 1];
    if (!split_target(target, kind, name, key))
        return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: expected SECTION.KEY (e.g. grid.dx, source main.amplitude)",
                       e->name);
    const section_def *def = find_section_def(kind);
    if (!def) {
        suggestion s = { 0 };
        for (size_t i = 0; i < N_SECTIONS; i++)
            suggest_try(&s, kind, SECTIONS[i].name);
        char hint[96];
        return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: unknown section '%s'%s", e->name, kind,
                       suggest_text(&s, hint, sizeof hint));
    }
    if (def->type == S_GAUGES || def->type == S_SWEEP)
        return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: [%s] entries cannot be varied (accepted: keys of [run], "
                       "[grid], [seabed], features and sources)", e->name, kind);
    const section_ctx *sec = find_named_section(ps, def, name);
    if (!sec)
        return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: the file has no section [%s%s%s] to vary", e->name, kind,
                       name[0] ? " " : "", name);
    const key_def *k = NULL;
    suggestion s = { 0 };
    for (size_t i = 0; i < def->n_keys && !k; i++) {
        if (strcmp(def->keys[i].name, key) == 0)
            k = &def->keys[i];
        else
            suggest_try(&s, key, def->keys[i].name);
    }
    if (!k) {
        char hint[96];
        return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: %s has no key '%s'%s", e->name, sec->label, key,
                       suggest_text(&s, hint, sizeof hint));
    }
    if (!is_numeric(k->kind) && k->kind != K_LAYOUT)
        return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: %s %s is not a number (accepted: numeric keys, and "
                       "run.layout)", e->name, sec->label, key);
    unsigned active = 1;
    if (def->type == S_SEABED)
        active = ps->sc->bed_file[0] ? BED_FILE : BED_RECIPE;
    else if (def->type == S_SOURCE)
        active = SHAPE(((const sw_source_spec *)sec->item)->shape);
    if (k->only && !(k->only & active))
        return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: %s %s is not used by this %s", e->name, sec->label, key,
                       def->type == S_SOURCE ? "source's shape" : "seabed");
    join_target(p->target, sizeof p->target, kind, name, key);
    p->kind = SW_SWEEP_KEY;
    *kout = k;
    return 1;
}

/* A built-in parameter that moves or scales sources needs analytic sources. */
static int sweep_needs_sources(parse_state *ps, const sweep_entry *e)
{
    const sw_scenario *sc = ps->sc;
    if (sc->n_sources == 0)
        return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: the scenario has no [source] to change", e->name);
    for (size_t i = 0; i < sc->n_sources; i++)
        if (sc->sources[i].shape == SW_SOURCE_FILE)
            return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: [source %s] (line %d) is read from a file (accepted: "
                           "hump, ellipse and pair sources; vary a file source with its own keys)", e->name,
                           sc->sources[i].name, sc->sources[i].line);
    return 1;
}

/* One parameter line of [sweep]. */
static int sweep_param(parse_state *ps, const sweep_entry *e)
{
    sw_sweep_spec *sw = &ps->sc->sweep;
    if (sw->n_params >= SW_MAX_SWEEP_PARAMS)
        return fail_at(ps, SW_ERR_RANGE, e->line, "[sweep] too many parameters at '%s' (accepted: at most %d)", e->name,
                       SW_MAX_SWEEP_PARAMS);
    sw_sweep_param *p = &sw->param[sw->n_params];
    memset(p, 0, sizeof *p);
    if (strlen(e->name) >= sizeof p->name)
        return fail_at(ps, SW_ERR_RANGE, e->line, "[sweep] '%.40s...': name too long (accepted: at most %zu characters)",
                       e->name, sizeof p->name - 1);
    memcpy(p->name, e->name, strlen(e->name) + 1);   /* fits: checked above */
    p->line = e->line;
    const key_def *k = NULL;
    for (size_t i = 0; i < sizeof SWEEP_BUILTIN_KEYS / sizeof SWEEP_BUILTIN_KEYS[0]; i++)
        if (strcmp(e->name, SWEEP_BUILTIN_KEYS[i].name) == 0)
            k = &SWEEP_BUILTIN_KEYS[i];
    if (k) {
        p->kind = (sw_sweep_kind)k->first;
        if ((p->kind == SW_SWEEP_AMPLITUDE_FACTOR || p->kind == SW_SWEEP_SOURCE_X_OFFSET
             || p->kind == SW_SWEEP_SOURCE_Y_OFFSET) && !sweep_needs_sources(ps, e))
            return 0;
        if (p->kind == SW_SWEEP_RESOLUTION_FACTOR && !find_section(ps, S_GRID))
            return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] resolution_factor: the grid comes from the seabed file "
                           "(accepted: a scenario with a [grid] section)");
    } else if (strchr(e->name, '.')) {
        if (!sweep_key_target(ps, e, e->name, p, &k))
            return 0;
    } else {
        int alias = 0;
        for (size_t i = 0; SWEEP_ALIASES[i]; i++)
            alias |= strcmp(e->name, SWEEP_ALIASES[i]) == 0;
        if (!alias) {
            suggestion s = { 0 };
            for (size_t i = 0; i < sizeof SWEEP_BUILTIN_KEYS / sizeof SWEEP_BUILTIN_KEYS[0]; i++)
                suggest_try(&s, e->name, SWEEP_BUILTIN_KEYS[i].name);
            for (size_t i = 0; SWEEP_ALIASES[i]; i++)
                suggest_try(&s, e->name, SWEEP_ALIASES[i]);
            for (size_t i = 0; i < sizeof SWEEP_DESIGN_KEYS / sizeof SWEEP_DESIGN_KEYS[0]; i++)
                suggest_try(&s, e->name, SWEEP_DESIGN_KEYS[i].name);
            char hint[96];
            if (s.best)
                return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] unknown key '%s'%s", e->name,
                               suggest_text(&s, hint, sizeof hint));
            return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] unknown key '%s' " SWEEP_HINT, e->name);
        }
        char target[LINE_MAX_CHARS + 1];
        snprintf(target, sizeof target, "run.%.60s", e->name);   /* an alias: a short known word */
        if (!sweep_key_target(ps, e, target, p, &k))
            return 0;
    }
    for (size_t i = 0; i < sw->n_params; i++)
        if (p->kind == SW_SWEEP_KEY && sw->param[i].kind == SW_SWEEP_KEY && strcmp(sw->param[i].target, p->target) == 0)
            return fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: varies %s, as '%s' on line %d already does", e->name, p->target,
                           sw->param[i].name, sw->param[i].line);
    p->unit = (int)unit_kind(k->kind);
    p->integer = k->kind == K_INTEGER;
    p->layout = k->kind == K_LAYOUT;
    if (!sweep_values(ps, e, k, p))
        return 0;
    sw->n_params++;
    return 1;
}

/* Reads [sweep]: the design keys, then each parameter (which may name any section of the file),
 * then the rules that tie them together. */
static int finish_sweep(parse_state *ps)
{
    const section_ctx *sec = find_section(ps, S_SWEEP);
    sw_sweep_spec *sw = &ps->sc->sweep;
    memset(sw, 0, sizeof *sw);
    if (!sec)
        return 1;
    sw->present = 1;
    sw->line = sec->line;
    sw->seed = 1;
    int design_line = 0, members_line = 0, seed_line = 0;
    char why[512];
    for (size_t i = 0; i < ps->n_sweep; i++) {
        const sweep_entry *e = &ps->sweep[i];
        const key_def *k = NULL;
        for (size_t q = 0; q < sizeof SWEEP_DESIGN_KEYS / sizeof SWEEP_DESIGN_KEYS[0]; q++)
            if (strcmp(e->name, SWEEP_DESIGN_KEYS[q].name) == 0)
                k = &SWEEP_DESIGN_KEYS[q];
        if (!k)
            continue;
        sw_status st;
        if (k->home == IN_PARSER) {   /* seed: an unsigned 64-bit number */
            double v;
            st = parse_number(k, e->value, &v, why, sizeof why);
            if (st == SW_OK)
                sw->seed = (unsigned long long)v;
            seed_line = e->line;
        } else {
            st = store_value(k, ps->sc, e->value, why, sizeof why);
            *(k->kind == K_CHOICE ? &design_line : &members_line) = e->line;
        }
        if (st != SW_OK)
            return fail_at(ps, st, e->line, "[sweep] %s = %s: %s", e->name, e->value, why);
    }
    for (size_t i = 0; i < ps->n_sweep; i++) {
        const sweep_entry *e = &ps->sweep[i];
        if (e->line == design_line || e->line == members_line || e->line == seed_line)
            continue;
        if (!sweep_param(ps, e))
            return 0;
    }
    const char *design = DESIGN_WORDS[sw->design];
    if (sw->n_params == 0)
        return fail_at(ps, SW_ERR_PARSE, sw->line, "[sweep] lists no parameter to vary " SWEEP_HINT);
    if (sw->design == SW_SWEEP_LATIN_HYPERCUBE) {
        if (!members_line)
            return fail_at(ps, SW_ERR_PARSE, sw->line, "[sweep] missing key 'members' (needed with design = %s; "
                           "accepted: 2 <= members <= %d)", design, SW_MAX_SWEEP_MEMBERS);
        return 1;
    }
    if (members_line || seed_line)
        return fail_at(ps, SW_ERR_PARSE, members_line ? members_line : seed_line, "[sweep] %s: not used with design = "
                       "%s (only with latin-hypercube)", members_line ? "members" : "seed", design);
    double count = 1;   /* factorial: the product of the counts; one-at-a-time: 1 + their sum (at most) */
    for (size_t i = 0; i < sw->n_params; i++) {
        const sw_sweep_param *p = &sw->param[i];
        if (p->n_levels == 0)
            return fail_at(ps, SW_ERR_PARSE, p->line, "[sweep] %s: a range needs a count with design = %s (accepted: "
                           "LO .. HI in N, or a list of values)", p->name, design);
        count = sw->design == SW_SWEEP_FACTORIAL ? count * (double)p->n_levels : count + (double)p->n_levels;
    }
    if (count > SW_MAX_SWEEP_MEMBERS)
        return fail_at(ps, SW_ERR_RANGE, design_line ? design_line : sw->line, "[sweep] design = %s makes %.0f members "
                       "(accepted: at most %d; use latin-hypercube with fewer members)", design, count,
                       SW_MAX_SWEEP_MEMBERS);
    return 1;
}

/* The rules that need the whole file, section by section in a fixed order. */
static int finish(parse_state *ps)
{
    if (!finish_run(ps, find_section(ps, S_RUN)) || !finish_seabed(ps, find_section(ps, S_SEABED))
        || !finish_grid(ps, find_section(ps, S_GRID)))
        return 0;
    finish_edges(ps, find_section(ps, S_EDGES));
    for (size_t i = 0; i < ps->n_sections; i++) {
        section_ctx *sec = &ps->sections[i];
        switch (sec->def->type) {
        case S_BAY:
        case S_ISLAND:
        case S_SHOAL: {
            if (!check_keys(ps, sec, 1, ""))
                return 0;
            sw_feature *f = sec->item;
            if (f->kind != SW_FEATURE_BAY)
                f->radius_y_m = f->radius_x_m;
            break;
        }
        case S_SOURCE:
            if (!finish_source(ps, sec))
                return 0;
            break;
        default:
            break;
        }
    }
    return finish_gauges(ps) && finish_sweep(ps);
}

/* ---- entry points -------------------------------------------------------------------------- */

/* Parses sc->text; sc->path and sc->dir are set. On failure fills err; the caller frees. When
 * fail_line / bare are not NULL they receive the failing line (INT_MAX: none) and the message
 * without its "NAME:LINE: " prefix (size SW_ERROR_MSG_MAX). */
static sw_status parse_text_ex(sw_scenario *sc, sw_error *err, int *fail_line, char *bare)
{
    parse_state *ps = calloc(1, sizeof *ps);
    if (!ps)
        return sw_fail(err, SW_ERR_NOMEM, "%s: out of memory while parsing", sc->path);
    ps->sc = sc;
    ps->name = sc->path;
    ps->text = sc->text;
    ps->len = strlen(sc->text);
    ps->edges_all = -1;
    for (size_t i = 0; i < N_SECTIONS; i++)
        apply_defaults(ps, NULL, &SECTIONS[i], IN_SCENARIO);

    int rc = ini_parse_stream(read_line, ps, on_key, ps);
    if (rc > 0 && (!ps->failed || rc < ps->fail_line))
        syntax_error(ps, rc);
    else if (rc < 0 && !ps->failed)
        fail_at(ps, SW_ERR_NOMEM, 0, "the INI reader could not allocate its line buffer");
    if (!ps->failed)
        finish(ps);

    sw_status st = ps->failed ? ps->err.code : SW_OK;
    if (st != SW_OK && err)
        *err = ps->err;
    if (st != SW_OK && fail_line)
        *fail_line = ps->fail_line;
    if (st != SW_OK && bare)
        memcpy(bare, ps->bare, SW_ERROR_MSG_MAX);
    free(ps);
    return st;
}

static sw_status parse_text(sw_scenario *sc, sw_error *err) { return parse_text_ex(sc, err, NULL, NULL); }

/* Copies src into dst (size n); SW_ERR_RANGE if it does not fit. */
static sw_status copy_text(char *dst, size_t n, const char *src, const char *what, sw_error *err)
{
    size_t len = strlen(src);
    if (len >= n)
        return sw_fail(err, SW_ERR_RANGE, "%s '%.40s...' has %zu characters (accepted: at most %zu)", what, src, len,
                       n - 1);
    memcpy(dst, src, len + 1);
    return SW_OK;
}

/* Reads the whole file into a NUL-terminated buffer *out (caller frees). */
static sw_status read_file(const char *path, char **out, sw_error *err)
{
    FILE *f = fopen(path, "rb");
    if (!f)
        return sw_fail(err, SW_ERR_IO, "%s: cannot open the scenario: %s", path, strerror(errno));
    size_t cap = 4096, len = 0;
    char *buf = malloc(cap);
    sw_status st = buf ? SW_OK : sw_fail(err, SW_ERR_NOMEM, "%s: out of memory", path);
    while (st == SW_OK) {
        if (len + 1 >= cap) {
            if (cap >= FILE_MAX_BYTES) {
                st = sw_fail(err, SW_ERR_PARSE, "%s: larger than %u MiB; is this a scenario file?", path,
                             FILE_MAX_BYTES >> 20);
                break;
            }
            char *bigger = realloc(buf, cap * 2);
            if (!bigger) {
                st = sw_fail(err, SW_ERR_NOMEM, "%s: out of memory", path);
                break;
            }
            buf = bigger;
            cap *= 2;
        }
        size_t got = fread(buf + len, 1, cap - 1 - len, f);
        len += got;
        if (got == 0) {
            if (ferror(f))
                st = sw_fail(err, SW_ERR_IO, "%s: cannot read the scenario: %s", path, strerror(errno));
            break;
        }
    }
    fclose(f);
    if (st != SW_OK) {
        free(buf);
        return st;
    }
    buf[len] = '\0';
    const char *nul = memchr(buf, '\0', len);
    if (nul) {
        int line = 1;
        for (const char *p = buf; p < nul; p++)
            line += *p == '\n';
        free(buf);
        return sw_fail(err, SW_ERR_PARSE, "%s:%d: contains a NUL byte (accepted: a plain text file)", path, line);
    }
    *out = buf;
    return SW_OK;
}

sw_status sw_scenario_load(const char *path, sw_scenario *sc, sw_error *err)
{
    if (!path || !sc)
        return sw_fail(err, SW_ERR_USAGE, "sw_scenario_load: path and sc are required");
    memset(sc, 0, sizeof *sc);
    sw_status st = copy_text(sc->path, sizeof sc->path, path, "the scenario path", err);
    if (st != SW_OK)
        return st;
    /* the folder: everything before the last '/', "/" for a file at the root, "." without one */
    const char *slash = strrchr(path, '/');
    if (!slash) {
        strcpy(sc->dir, ".");
    } else {
        size_t n = (size_t)(slash - path);
        while (n > 0 && path[n - 1] == '/')
            n--;
        if (n == 0)
            n = 1;   /* keep the root's '/' */
        memcpy(sc->dir, path, n);   /* n < strlen(path) < SW_PATH_MAX */
        sc->dir[n] = '\0';
    }
    st = read_file(path, &sc->text, err);
    if (st == SW_OK)
        st = parse_text(sc, err);
    if (st != SW_OK)
        sw_scenario_free(sc);
    return st;
}

sw_status sw_scenario_parse(const char *text, const char *name, const char *dir, sw_scenario *sc,
                            sw_error *err)
{
    if (!text || !sc)
        return sw_fail(err, SW_ERR_USAGE, "sw_scenario_parse: text and sc are required");
    memset(sc, 0, sizeof *sc);
    sw_status st = copy_text(sc->path, sizeof sc->path, name ? name : "<string>", "the scenario name", err);
    if (st == SW_OK)
        st = copy_text(sc->dir, sizeof sc->dir, dir && dir[0] ? dir : ".", "the scenario folder", err);
    if (st != SW_OK) {
        sw_scenario_free(sc);
        return st;
    }
    size_t len = strlen(text);
    sc->text = malloc(len + 1);
    if (!sc->text) {
        st = sw_fail(err, SW_ERR_NOMEM, "%s: out of memory", sc->path);
        sw_scenario_free(sc);
        return st;
    }
    memcpy(sc->text, text, len + 1);
    st = parse_text(sc, err);
    if (st != SW_OK)
        sw_scenario_free(sc);
    return st;
}

void sw_scenario_free(sw_scenario *sc)
{
    if (!sc)
        return;
    free(sc->text);
    memset(sc, 0, sizeof *sc);
}

sw_status sw_scenario_resolve(const sw_scenario *sc, const char *rel, char *out, size_t out_size,
                              sw_error *err)
{
    if (!sc || !rel || !out || out_size == 0)
        return sw_fail(err, SW_ERR_USAGE, "sw_scenario_resolve: sc, rel and out are required");
    int n;
    if (rel[0] == '/' || !sc->dir[0])
        n = snprintf(out, out_size, "%s", rel);
    else
        n = snprintf(out, out_size, "%s%s%s", sc->dir, sc->dir[strlen(sc->dir) - 1] == '/' ? "" : "/", rel);
    if (n < 0 || (size_t)n >= out_size) {
        out[0] = '\0';
        return sw_fail(err, SW_ERR_RANGE, "%s: the path '%s' joined to '%s' has %d characters (accepted: at most %zu)",
                       sc->path, rel, sc->dir, n, out_size - 1);
    }
    return SW_OK;
}

/* ---- overrides ----------------------------------------------------------------------------- */

/* If the cleaned line is a section header "[kind name]", fills kind and name (trimmed) and
 * returns 1. */
static int header_of(const char *clean, char *kind, char *name)
{
    if (clean[0] != '[')
        return 0;
    const char *close = strchr(clean, ']');
    if (!close)
        return 0;
    char inner[LINE_MAX_CHARS + 1];
    memcpy(inner, clean + 1, (size_t)(close - clean - 1));
    inner[close - clean - 1] = '\0';
    trim(inner);
    size_t kn = 0;
    while (inner[kn] && !isspace((unsigned char)inner[kn]))
        kn++;
    memcpy(kind, inner, kn);
    kind[kn] = '\0';
    snprintf(name, LINE_MAX_CHARS + 1, "%s", inner + kn);
    trim(name);
    return 1;
}

/* The key of a cleaned `key = value` line (text before the first '=' or ':', as inih reads it),
 * or "" when the line holds none. */
static void key_of(const char *clean, char *key)
{
    const char *sep = strpbrk(clean, "=:");
    size_t n = sep ? (size_t)(sep - clean) : 0;
    memcpy(key, clean, n);
    key[n] = '\0';
    trim(key);
}

/* One override, split and checked against the key tables. */
typedef struct {
    char kind[LINE_MAX_CHARS + 1], name[LINE_MAX_CHARS + 1], key[LINE_MAX_CHARS + 1];
    const char *target, *value;
    long header;   /* index of its section's header line, -1 until found */
    long line;     /* index of the key's line in that section, -1 when not written */
} ov_item;

/* A line of the edited text: where it came from. */
typedef struct {
    size_t start, len;   /* in the original text; len includes no line break */
    int orig;            /* original line number (1-based) */
} text_line;

/* Splits text into lines. *out is malloc'ed (caller frees). */
static sw_status split_lines(const char *text, text_line **out, size_t *n_out, sw_error *err)
{
    size_t len = strlen(text), n = 1;
    for (size_t i = 0; i < len; i++)
        n += text[i] == '\n';
    text_line *lines = malloc(n * sizeof *lines);
    if (!lines)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory editing the scenario");
    size_t k = 0, pos = 0;
    while (pos <= len && k < n) {
        const char *nl = memchr(text + pos, '\n', len - pos);
        size_t l = nl ? (size_t)(nl - (text + pos)) : len - pos;
        lines[k] = (text_line){ .start = pos, .len = l, .orig = (int)k + 1 };
        k++;
        pos += l + 1;
    }
    *out = lines;
    *n_out = k;
    return SW_OK;
}

/* Cleans line L of text into clean (size LINE_MAX_CHARS + 1). */
static void clean_of(const char *text, const text_line *L, char *clean)
{
    size_t n = L->len > LINE_MAX_CHARS ? LINE_MAX_CHARS : L->len;
    if (n > 0 && text[L->start + n - 1] == '\r')
        n--;
    clean_line(text + L->start, n, L->orig == 1, clean);
}

/* Checks each override's form and key, then finds its section and line in the text. */
static sw_status locate_overrides(const sw_scenario *sc, const text_line *lines, size_t n_lines, ov_item *it,
                                  const sw_override *ov, size_t n, sw_error *err)
{
    for (size_t j = 0; j < n; j++) {
        ov_item *o = &it[j];
        o->target = ov[j].target ? ov[j].target : "";
        o->value = ov[j].value ? ov[j].value : "";
        o->header = o->line = -1;
        if (!split_target(o->target, o->kind, o->name, o->key))
            return sw_fail(err, SW_ERR_USAGE, "%s: override '%s': expected SECTION.KEY (e.g. grid.dx)", sc->path,
                           o->target);
        const section_def *def = find_section_def(o->kind);
        const key_def *k = NULL;
        for (size_t i = 0; def && i < def->n_keys && !k; i++)
            if (strcmp(def->keys[i].name, o->key) == 0)
                k = &def->keys[i];
        if (!k)
            return sw_fail(err, SW_ERR_RANGE, "%s: override '%s': no such key in the scenario tables", sc->path,
                           o->target);
        if (!o->value[0] || strlen(o->value) > LINE_MAX_CHARS - strlen(o->key) - 3 || strchr(o->value, ';'))
            return sw_fail(err, SW_ERR_PARSE, "%s: override %s = '%.60s': empty, too long or holding ';'", sc->path,
                           o->target, o->value);
        for (const char *c = o->value; *c; c++)
            if ((unsigned char)*c < 0x20 || *c == 0x7f)
                return sw_fail(err, SW_ERR_PARSE, "%s: override %s: control character in the value", sc->path,
                               o->target);
        for (size_t q = 0; q < j; q++)
            if (!strcmp(it[q].kind, o->kind) && !strcmp(it[q].name, o->name) && !strcmp(it[q].key, o->key))
                return sw_fail(err, SW_ERR_USAGE, "%s: override %s given twice", sc->path, o->target);
    }
    char kind[LINE_MAX_CHARS + 1] = "", name[LINE_MAX_CHARS + 1] = "", clean[LINE_MAX_CHARS + 1], key[LINE_MAX_CHARS + 1];
    long header = -1;
    for (size_t L = 0; L < n_lines; L++) {
        clean_of(sc->text, &lines[L], clean);
        if (header_of(clean, kind, name)) {
            header = (long)L;
            for (size_t j = 0; j < n; j++)
                if (it[j].header < 0 && !strcmp(it[j].kind, kind) && !strcmp(it[j].name, name))
                    it[j].header = header;
            continue;
        }
        key_of(clean, key);
        for (size_t j = 0; key[0] && j < n; j++)
            if (it[j].header == header && header >= 0 && !strcmp(it[j].key, key))
                it[j].line = (long)L;
    }
    for (size_t j = 0; j < n; j++)
        if (it[j].header < 0)
            return sw_fail(err, SW_ERR_RANGE, "%s: override %s: the scenario has no section [%s%s%s]", sc->path,
                           it[j].target, it[j].kind, it[j].name[0] ? " " : "", it[j].name);
    return SW_OK;
}

/* Appends n bytes to a growing buffer. */
typedef struct {
    char *p;
    size_t len, cap;
    int nomem;
} text_buf;

static void buf_add(text_buf *b, const char *s, size_t n)
{
    if (b->nomem)
        return;
    if (b->len + n + 1 > b->cap) {
        size_t cap = (b->cap ? b->cap : 256);
        while (b->len + n + 1 > cap)
            cap *= 2;
        char *q = realloc(b->p, cap);
        if (!q) {
            b->nomem = 1;
            return;
        }
        b->p = q;
        b->cap = cap;
    }
    memcpy(b->p + b->len, s, n);
    b->len += n;
    b->p[b->len] = '\0';
}

sw_status sw_scenario_override(const sw_scenario *sc, const sw_override *ov, size_t n, sw_scenario *out,
                               sw_error *err)
{
    if (!sc || !sc->text || !out || (n && !ov))
        return sw_fail(err, SW_ERR_USAGE, "sw_scenario_override: a parsed scenario and out are required");
    memset(out, 0, sizeof *out);
    text_line *lines = NULL;
    size_t n_lines = 0;
    ov_item *it = n ? calloc(n, sizeof *it) : NULL;
    if (n && !it)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory editing the scenario");
    sw_status st = split_lines(sc->text, &lines, &n_lines, err);
    if (st == SW_OK)
        st = locate_overrides(sc, lines, n_lines, it, ov, n, err);
    /* which override fills each line of the new text: map[k] = -(j + 1), or the original line */
    int *map = st == SW_OK ? malloc((n_lines + n + 1) * sizeof *map) : NULL;
    if (st == SW_OK && !map)
        st = sw_fail(err, SW_ERR_NOMEM, "out of memory editing the scenario");
    text_buf b = { 0 };
    size_t n_out = 0;
    if (st == SW_OK) {
        int courant = 0, dt = 0;   /* overrides of [run] courant / dt drop the other's line */
        for (size_t j = 0; j < n; j++)
            if (!strcmp(it[j].kind, "run") && !it[j].name[0]) {
                courant |= !strcmp(it[j].key, "courant");
                dt |= !strcmp(it[j].key, "dt");
            }
        char kind[LINE_MAX_CHARS + 1] = "", name[LINE_MAX_CHARS + 1] = "", clean[LINE_MAX_CHARS + 1];
        char key[LINE_MAX_CHARS + 1];
        int in_sweep = 0, in_run = 0;
        for (size_t L = 0; L < n_lines; L++) {
            clean_of(sc->text, &lines[L], clean);
            int is_header = header_of(clean, kind, name);
            if (is_header) {
                in_sweep = !strcmp(kind, "sweep");
                in_run = !strcmp(kind, "run") && !name[0];
            }
            key_of(clean, key);
            long who = -1;
            for (size_t j = 0; j < n; j++)
                if (it[j].line == (long)L)
                    who = (long)j;
            int drop = in_sweep || (in_run && !is_header && ((courant && !dt && !strcmp(key, "dt"))
                                                             || (dt && !courant && !strcmp(key, "courant"))));
            if (who >= 0) {
                buf_add(&b, it[who].key, strlen(it[who].key));
                buf_add(&b, " = ", 3);
                buf_add(&b, it[who].value, strlen(it[who].value));
                map[n_out++] = -(int)(who + 1);
            } else {
                if (!drop)
                    buf_add(&b, sc->text + lines[L].start, lines[L].len);
                map[n_out++] = lines[L].orig;
            }
            if (L + 1 < n_lines)
                buf_add(&b, "\n", 1);
            for (size_t j = 0; is_header && j < n; j++)
                if (it[j].header == (long)L && it[j].line < 0) {
                    buf_add(&b, it[j].key, strlen(it[j].key));
                    buf_add(&b, " = ", 3);
                    buf_add(&b, it[j].value, strlen(it[j].value));
                    buf_add(&b, "\n", 1);
                    map[n_out++] = -(int)(j + 1);
                }
        }
        if (b.nomem || !b.p)
            st = sw_fail(err, SW_ERR_NOMEM, "out of memory editing the scenario");
    }
    if (st == SW_OK) {
        memcpy(out->path, sc->path, sizeof out->path);
        memcpy(out->dir, sc->dir, sizeof out->dir);
        out->text = b.p;
        b.p = NULL;
        int line = INT_MAX;
        char bare[SW_ERROR_MSG_MAX];
        sw_error perr = { 0 };
        st = parse_text_ex(out, &perr, &line, bare);
        if (st != SW_OK) {
            int at = line >= 1 && (size_t)line <= n_out ? map[line - 1] : 0;
            if (at < 0)
                sw_fail(err, st, "%s: override %s = %s: %s", sc->path, it[-at - 1].target, it[-at - 1].value, bare);
            else if (at > 0)
                sw_fail(err, st, "%s:%d: %s", sc->path, at, bare);
            else
                sw_fail(err, st, "%s: %s", sc->path, bare);
            sw_scenario_free(out);
        }
    }
    free(b.p);
    free(map);
    free(lines);
    free(it);
    return st;
}

/* The struct a value of section [kind name] lives in: the scenario, or its feature / source. */
static const void *home_for(const sw_scenario *sc, const section_def *def, const key_def *k, const char *name)
{
    if (k->home == IN_SCENARIO)
        return sc;
    if (k->home != IN_ITEM)
        return NULL;
    if (def->type == S_SOURCE) {
        for (size_t i = 0; i < sc->n_sources; i++)
            if (!strcmp(sc->sources[i].name, name))
                return &sc->sources[i];
        return NULL;
    }
    sw_feature_kind fk = def->type == S_BAY ? SW_FEATURE_BAY : def->type == S_ISLAND ? SW_FEATURE_ISLAND : SW_FEATURE_SHOAL;
    for (size_t i = 0; i < sc->n_features; i++)
        if (sc->features[i].kind == fk && !strcmp(sc->features[i].name, name))
            return &sc->features[i];
    return NULL;
}

sw_status sw_scenario_value(const sw_scenario *sc, const char *target, double *out, sw_error *err)
{
    char kind[LINE_MAX_CHARS + 1], name[LINE_MAX_CHARS + 1], key[LINE_MAX_CHARS + 1];
    if (!sc || !target || !out || !split_target(target, kind, name, key))
        return sw_fail(err, SW_ERR_RANGE, "'%s': expected SECTION.KEY (e.g. grid.dx)", target ? target : "");
    const section_def *def = find_section_def(kind);
    const key_def *k = NULL;
    for (size_t i = 0; def && i < def->n_keys && !k; i++)
        if (strcmp(def->keys[i].name, key) == 0)
            k = &def->keys[i];
    const void *home = k ? home_for(sc, def, k, name) : NULL;
    if (!home || (!is_numeric(k->kind) && k->kind != K_LAYOUT))
        return sw_fail(err, SW_ERR_RANGE, "%s: %s: no such numeric key in this scenario", sc->path, target);
    const char *at = (const char *)home + k->off;
    if (k->kind == K_LAYOUT) {
        if (!layout_index(at, out))
            return sw_fail(err, SW_ERR_RANGE, "%s: %s = %s: not a layout of this build (accepted: %s)", sc->path,
                           target, at, sw_layout_names());
    } else if (k->kind == K_INTEGER) {
        size_t v;
        memcpy(&v, at, sizeof v);
        *out = (double)v;
    } else {
        memcpy(out, at, sizeof *out);
    }
    return SW_OK;
}
