/* scenario_override.c - changing keys of a parsed scenario (sw_scenario_override) and reading a key's
 * value back (sw_scenario_value); see scenario.h.
 *
 * An override edits the scenario's text, line by line, and parses the edited text again
 * (scn_parse_text), so an overridden value meets the same key table, range checks and whole-file rules
 * as a file's own. A map from the edited text's lines back to the original lines (or to the override
 * that wrote them) lets a refusal name the line the user wrote or the override given.
 *
 * Invariant: the scenario passed in is never changed; on failure the result owns nothing.
 */
#include "inputs/scenario_impl.h"

#include <limits.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "model/layout.h"

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
    scn_split_section(inner, kind, name);
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
    scn_trim(key);
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
    scn_clean_line(text + L->start, n, L->orig == 1, clean);
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
        if (!scn_split_target(o->target, o->kind, o->name, o->key))
            return sw_fail(err, SW_ERR_USAGE, "%s: override '%s': expected SECTION.KEY (e.g. grid.dx)", sc->path,
                           o->target);
        if (!scn_find_key(scn_find_section_def(o->kind, NULL), o->key, NULL))
            return sw_fail(err, SW_ERR_RANGE, "%s: override '%s': no such key in the scenario tables%s", sc->path,
                           o->target, scn_renamed_key(o->kind, o->key));
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
        int courant = 0, dt = 0;   /* overrides of [run] courant_fraction / dt drop the other's line */
        for (size_t j = 0; j < n; j++)
            if (!strcmp(it[j].kind, "run") && !it[j].name[0]) {
                courant |= !strcmp(it[j].key, "courant_fraction");
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
                                                             || (dt && !courant && !strcmp(key, "courant_fraction"))));
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
        st = scn_parse_text(out, &perr, &line, bare);
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
    if (k->home != IN_ITEM || (def->type != S_SOURCE && def->type != S_FAULT && def->type != S_BAY
                               && def->type != S_ISLAND && def->type != S_SHOAL))
        return NULL;
    if (def->type == S_SOURCE) {
        for (size_t i = 0; i < sc->n_sources; i++)
            if (!strcmp(sc->sources[i].name, name))
                return &sc->sources[i];
        return NULL;
    }
    if (def->type == S_FAULT) {
        for (size_t i = 0; i < sc->n_faults; i++)
            if (!strcmp(sc->faults[i].name, name))
                return &sc->faults[i];
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
    if (!sc || !target || !out || !scn_split_target(target, kind, name, key))
        return sw_fail(err, SW_ERR_RANGE, "'%s': expected SECTION.KEY (e.g. grid.dx)", target ? target : "");
    const section_def *def = scn_find_section_def(kind, NULL);
    const key_def *k = scn_find_key(def, key, NULL);
    const void *home = k ? home_for(sc, def, k, name) : NULL;
    if (!home || (!scn_is_numeric(k->kind) && k->kind != K_LAYOUT && k->kind != K_CHOICE))
        return sw_fail(err, SW_ERR_RANGE, "%s: %s: no such numeric key in this scenario", sc->path, target);
    const char *at = (const char *)home + k->off;
    if (k->kind == K_LAYOUT) {
        if (!scn_layout_index(at, out))
            return sw_fail(err, SW_ERR_RANGE, "%s: %s = %s: not a layout of this build (accepted: %s)", sc->path,
                           target, at, sw_layout_names());
    } else if (k->kind == K_CHOICE) {   /* the index of its word */
        int v;
        memcpy(&v, at, sizeof v);
        *out = (double)(v - k->first);
    } else if (k->kind == K_INTEGER) {
        size_t v;
        memcpy(&v, at, sizeof v);
        *out = (double)v;
    } else {
        memcpy(out, at, sizeof *out);
        /* a coordinate of a geographic grid in degrees, as a file writes it (held in metres once placed) */
        if (k->kind == K_COORD && sw_grid_geographic(&sc->grid) && (k->grid_key || sc->positions_placed))
            *out = sw_grid_to_deg(&sc->grid, *out);
    }
    return SW_OK;
}
