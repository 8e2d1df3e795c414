/* scenario_impl.h - what the files of the scenario parser share; private to src/inputs/scenario_*.c.
 *
 * The parser is four files of one concern each: scenario_keys.c (the key tables and the values they
 * accept), scenario_read.c (the reader, the whole-file rules and the entry points), scenario_sweep.c
 * (the [sweep] section) and scenario_override.c (overrides and reading a value back). The public API is
 * scenario.h; nothing outside these files includes this header. Functions shared between the files
 * carry the tag scn_.
 */
#ifndef SW_SCENARIO_IMPL_H
#define SW_SCENARIO_IMPL_H

#include <stddef.h>

#include "base/status.h"
#include "base/units.h"
#include "inputs/scenario.h"

#define LINE_MAX_CHARS 200              /* longest line accepted, without its line break */
#define KEYS_MAX 32                     /* most keys in one section's table */
#define LABEL_MAX (SW_NAME_MAX + 16)    /* "[island <name>]" */
#define SECTIONS_MAX (13 + SW_MAX_FEATURES + SW_MAX_SOURCES + SW_MAX_FAULTS)
#define SWEEP_ENTRIES_MAX (SW_MAX_SWEEP_PARAMS + 3)   /* parameters + design, members, seed */

#define KM 1e3                       /* m */
#define DAY 86400.0                  /* s */
#define FIELD_SIZE(type, field) sizeof(((type *)0)->field)

/* ---- key tables (scenario_keys.c) ---------------------------------------------------------- */

typedef enum {
    K_NUMBER,    /* double, no unit */
    K_INTEGER,   /* size_t, a whole number, no unit */
    K_LENGTH,    /* double, m */
    K_TIME,      /* double, s */
    K_ANGLE,     /* double, deg */
    K_RATE,      /* double, s-1 */
    K_SPEED,     /* double, m/s */
    K_TEXT,      /* char[size], not empty */
    K_CHOICE,    /* int (an enum): index in `words` plus `first` */
    K_LAYOUT,    /* char[size]: a name of the layout registry (layout.h, any case), stored as it spells it */
    K_ORIGIN,    /* char[32]: "YYYY-MM-DD HH:MM:SS" */
    K_COORD,     /* double: a position or a [grid] coordinate: m on a projected grid, deg on a geographic one
                  * (see "coordinates" below) */
    K_PRESSURE   /* double, Pa: Pa, kPa, MPa, GPa (a bare number is Pa); elastic moduli of [fault] */
} key_kind;

typedef enum {
    IN_SCENARIO,  /* offset into sw_scenario */
    IN_ITEM,      /* offset into the section's sw_feature, sw_source_spec or sw_fault_spec */
    IN_PARSER     /* offset into parse_state (values settled in `finish`) */
} key_home;

/* `only` groups: keys of [seabed] that belong to the file or to the recipe; keys of [source]
 * that belong to some shapes (bit 1 << sw_source_shape); keys of [fault] that belong to one fault given by
 * its keys or to a segment table. */
enum { BED_FILE = 1u, BED_RECIPE = 2u };
enum { FAULT_ONE = 1u, FAULT_TABLE = 2u };
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
    const char *accepted;      /* for messages (K_COORD: on a projected grid) */
    /* K_COORD only: */
    int axis;                  /* SCN_AXIS_X (east; a longitude), SCN_AXIS_Y (north; a latitude), or
                                * SCN_AXIS_EITHER ([seabed] shoreline: the coast decides) */
    int grid_key;              /* 1: [grid] x0, y0, dx, dy (converted with the grid; never moved by 360 deg) */
    size_t unit_off;           /* a position (grid_key 0): where the sw_unit_kind it was written in is
                                * stored, in the same home */
    double deg_lo, deg_hi;     /* its range on a geographic grid, deg (gt: lo excluded) */
    const char *deg_accepted;  /* the accepted values there, for messages */
} key_def;

enum { SCN_AXIS_X = 0, SCN_AXIS_Y = 1, SCN_AXIS_EITHER = 2 };

#define SC(f) .home = IN_SCENARIO, .off = offsetof(sw_scenario, f)
#define SC_UNIT(f) .unit_off = offsetof(sw_scenario, f)
#define FE_UNIT(f) .unit_off = offsetof(sw_feature, f)
#define SO_UNIT(f) .unit_off = offsetof(sw_source_spec, f)
#define FE(f) .home = IN_ITEM, .off = offsetof(sw_feature, f)
#define SO(f) .home = IN_ITEM, .off = offsetof(sw_source_spec, f)
#define FA(f) .home = IN_ITEM, .off = offsetof(sw_fault_spec, f)
#define FA_UNIT(f) .unit_off = offsetof(sw_fault_spec, f)
#define TEXT_SC(f) .kind = K_TEXT, SC(f), .size = FIELD_SIZE(sw_scenario, f)
#define TEXT_SO(f) .kind = K_TEXT, SO(f), .size = FIELD_SIZE(sw_source_spec, f)
#define RANGE(l, h) .ranged = 1, .lo = (l), .hi = (h)          /* l <= v <= h */
#define ABOVE(l, h) .ranged = 1, .gt = 1, .lo = (l), .hi = (h) /* l <  v <= h */

typedef enum { S_RUN, S_GRID, S_EDGES, S_SEABED, S_GAUGES, S_BAY, S_ISLAND, S_SHOAL, S_SOURCE, S_SWEEP, S_STORM,
               S_WEATHER, S_WIND, S_FAULT } section_type;

typedef struct {
    const char *name;       /* first word of the header */
    section_type type;
    int named;              /* 1: [kind NAME], one section per name; 0: [kind], at most once */
    const key_def *keys;    /* NULL for [gauges] (every key is a gauge name) and [sweep] (see scn_finish_sweep) */
    size_t n_keys;
} section_def;

extern const section_def scn_sections[];   /* every section kind, in the order messages list them */
extern const size_t scn_n_sections;
extern const char *const scn_coast_words[]; /* sw_coast_side names, NULL-terminated */
extern const char *const scn_shape_words[]; /* sw_source_shape names, NULL-terminated */
#define SCN_SECTION_LIST "run, grid, edges, seabed, gauges, bay NAME, island NAME, shoal NAME, source NAME, " \
                         "fault NAME, storm, weather, wind, sweep"   /* every section kind, for messages */


/* The unit kind of a numeric key kind (SW_UNIT_NONE for the others). */
sw_unit_kind scn_unit_kind(key_kind k);

/* 1 for the kinds stored as a number (double or size_t). */
int scn_is_numeric(key_kind k);

/* The registry position of the layout called `name` (any case) into *index; 0 when none has it. */
int scn_layout_index(const char *name, double *index);

/* Parses `value` as a number of numeric key k (unit, whole number, range) into *v. Returns SW_OK, or
 * SW_ERR_PARSE / SW_ERR_RANGE with the cause in why (size n). */
sw_status scn_parse_number(const key_def *k, const char *value, double *v, char *why, size_t n);

/* Parses `value` as key k and stores it at k->off in home; `kind` is the grid's kind as far as it is
 * known (SW_GRID_PROJECTED, SW_GRID_GEOGRAPHIC or SCN_KIND_PENDING), which K_COORD keys need
 * (scn_parse_coord). Returns SW_OK, or SW_ERR_PARSE / SW_ERR_RANGE with the cause in why (size n);
 * nothing is stored on failure. */
sw_status scn_store_value(const key_def *k, void *home, const char *value, int kind, char *why, size_t n);

/* ---- coordinates (scenario_keys.c) ---------------------------------------------------------- *
 * A K_COORD value is read knowing the grid's kind when the file says it ([grid] kind, or a [grid] with a
 * size and no kind: projected; the reader looks for both before it reads any key): on a projected grid
 * a length (m, km; a bare number is m), checked against the key's range, stored in m; on a geographic
 * grid an angle (deg; a bare number is deg), checked against deg_lo .. deg_hi, stored in deg until the
 * grid is known (the reader places positions once the whole file is read, scenario_read.c). With the
 * kind pending (the grid and its kind come from the seabed file) the number is stored as written with
 * its unit, and checked and placed by sw_scenario_place once the file has given the grid. */

enum { SCN_KIND_PENDING = -1 };   /* the grid's kind is known only once the seabed file is read */

/* Parses `value` as a K_COORD of key k on a grid of kind `kind` into *v (m on a projected grid, deg on
 * a geographic one, as written when pending) and *unit (the sw_unit_kind written). Returns SW_OK, or
 * SW_ERR_PARSE (no number, a wrong unit: "give degrees on a geographic grid") / SW_ERR_RANGE with the
 * cause and the accepted form in why (size n). */
sw_status scn_parse_coord(const key_def *k, const char *value, int kind, double *v, sw_unit_kind *unit, char *why,
                          size_t n);

/* Checks a coordinate written with `unit` (value v as written: m for lengths, deg for angles, bare as
 * written) against a grid of known kind `kind` for key k (NULL: a gauge, axis `axis`; points accept
 * -180 .. 360 deg of longitude and -90 .. 90 deg of latitude). Returns SW_OK, or as scn_parse_coord. */
sw_status scn_check_coord(const key_def *k, int axis, double v, sw_unit_kind unit, int kind, char *why, size_t n);

/* A point's coordinate v (deg) along `axis` as model metres on geographic grid g: a longitude is first
 * moved by -360, 0 or +360 deg to the value nearest to the grid's longitudes (inside them when one is;
 * 0 on a tie). */
double scn_coord_to_m(const sw_grid *g, int axis, double v_deg);

/* The K_COORD definition of a point's x (SCN_AXIS_X) or y (SCN_AXIS_Y) that is not a table key (a
 * gauge's), with the ranges every point has. */
const key_def *scn_point_key(int axis);

/* Suggestions for a mistyped word: scn_suggest_try each candidate, then scn_suggest_text gives
 * " (did you mean 'x'?)" or "" in out (size n) and returns out. */
typedef struct {
    const char *best;   /* the closest candidate so far, NULL when none is close */
    size_t dist;        /* its edit distance */
} suggestion;
void scn_suggest_try(suggestion *s, const char *typed, const char *candidate);
const char *scn_suggest_text(const suggestion *s, char *out, size_t n);

/* The table of section kind `name` ("run", "source"), or NULL. When s is not NULL, the other kinds
 * are offered to it as suggestions (scn_suggest_try). */
const section_def *scn_find_section_def(const char *name, suggestion *s);

/* The key called `name` in def's table, or NULL (also for def NULL). When s is not NULL, the other
 * keys are offered to it as suggestions (scn_suggest_try). */
const key_def *scn_find_key(const section_def *def, const char *name, suggestion *s);

/* When `key` is a key of section kind `section` ("run", "source") that an earlier version accepted under
 * that name, the text " (renamed: write NEW = ...; why)" for an error message; otherwise "". Never NULL. */
const char *scn_renamed_key(const char *section, const char *key);

/* Removes leading and trailing blanks of t in place. */
void scn_trim(char *t);

/* Splits a section's header text "kind words" (blanks around it ignored; at most LINE_MAX_CHARS)
 * into its kind, the first word, and its name, the rest trimmed (each of size LINE_MAX_CHARS + 1). */
void scn_split_section(const char *text, char *kind, char *name);

/* Splits a target "section words.key" at the last '.' into kind, name and key (each of size
 * LINE_MAX_CHARS + 1). Returns 0 when a part is missing or too long. */
int scn_split_target(const char *target, char *kind, char *name, char *key);

/* The canonical target "kind name.key" / "kind.key" into out (size n). */
void scn_join_target(char *out, size_t n, const char *kind, const char *name, const char *key);

/* ---- the reader's state (scenario_read.c) -------------------------------------------------- */

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
    char label[LABEL_MAX];   /* "[run]", "[island Pellquin Rock]": how messages name it */
    char name[SW_NAME_MAX];  /* named sections: the name */
    int line;                /* line of the header */
    void *item;              /* S_BAY..S_SOURCE, S_FAULT: the sw_feature / sw_source_spec / sw_fault_spec being
                              * filled */
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
    int grid_kind;           /* the grid's kind as the file gives it before any key is read (see
                              * "coordinates" above): SW_GRID_PROJECTED, SW_GRID_GEOGRAPHIC or
                              * SCN_KIND_PENDING */
    int failed;              /* a problem was recorded in err */
    int fail_line;           /* its line (INT_MAX when it has none) */
    sw_error err;
    char bare[SW_ERROR_MSG_MAX]; /* err.msg without its "NAME:LINE: " prefix (for overrides) */
    sweep_entry sweep[SWEEP_ENTRIES_MAX]; /* [sweep] lines as written, settled in scn_finish_sweep */
    size_t n_sweep;
};

/* Records "NAME:LINE: message" (or "NAME: message" when line <= 0) unless a problem is already
 * recorded. Returns 0, the value inih's handler returns on error. */
int scn_fail_at(parse_state *ps, sw_status code, int line, const char *fmt, ...)
    __attribute__((format(printf, 4, 5)));

/* The first section of the file of that type, or NULL. */
const section_ctx *scn_find_section(const parse_state *ps, section_type type);

/* Copies the raw line raw[0..n) into out (size > n) cleaned as inih reads it: no BOM on the first
 * line, no blanks around it, no comment. Returns the length. */
size_t scn_clean_line(const char *raw, size_t n, int first_line, char *out);

/* Parses sc->text (sc->path and sc->dir set) into sc. On failure fills err (the caller frees sc) and,
 * when not NULL, *fail_line (INT_MAX: none) and bare (size SW_ERROR_MSG_MAX, the message without its
 * "NAME:LINE: " prefix). */
sw_status scn_parse_text(sw_scenario *sc, sw_error *err, int *fail_line, char *bare);

/* ---- [sweep] (scenario_sweep.c) ------------------------------------------------------------ */

/* Keeps one `name = value` line of [sweep] as text. Returns 1, or 0 after recording a problem. */
int scn_add_sweep_entry(parse_state *ps, const char *name, const char *value);

/* Reads the kept [sweep] lines into ps->sc->sweep once every section is known. Returns 1, or 0
 * after recording a problem. */
int scn_finish_sweep(parse_state *ps);

#endif
