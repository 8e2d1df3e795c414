/* scenario_sweep.c - the [sweep] section: which settings a sensitivity sweep varies and how the
 * members are chosen (scenario.h: sw_sweep_spec; docs/sweep.md).
 *
 * The reader keeps [sweep]'s lines as text (scn_add_sweep_entry) because a parameter may name any
 * section of the file, also one written after [sweep]; scn_finish_sweep reads them once the whole
 * file is known, after every other rule. A `section.key` parameter is checked against the same key
 * table as the file's own value (scenario_keys.c), so a value a sweep lists is one the key accepts.
 *
 * Invariant: as in the reader, the first problem found is the one reported (scn_fail_at).
 */
#include "inputs/scenario_impl.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#include "model/layout.h"

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
    /* offsets are coordinates: lengths on a projected grid, degrees on a geographic one */
    { .name = "source_x_offset", .kind = K_COORD, RANGE(-1e5 * KM, 1e5 * KM), .first = SW_SWEEP_SOURCE_X_OFFSET,
      .accepted = "|source_x_offset| <= 100000 km", .grid_key = 1, .axis = SCN_AXIS_X, .deg_lo = -360, .deg_hi = 360,
      .deg_accepted = "|source_x_offset| <= 360 deg on a geographic grid" },
    { .name = "source_y_offset", .kind = K_COORD, RANGE(-1e5 * KM, 1e5 * KM), .first = SW_SWEEP_SOURCE_Y_OFFSET,
      .accepted = "|source_y_offset| <= 100000 km", .grid_key = 1, .axis = SCN_AXIS_Y, .deg_lo = -180, .deg_hi = 180,
      .deg_accepted = "|source_y_offset| <= 180 deg on a geographic grid" },
    { .name = "depth_factor", .kind = K_NUMBER, ABOVE(0, 100), .first = SW_SWEEP_DEPTH_FACTOR,
      .accepted = "0 < depth_factor <= 100" },
    { .name = "resolution_factor", .kind = K_NUMBER, ABOVE(0, 64), .first = SW_SWEEP_RESOLUTION_FACTOR,
      .accepted = "0 < resolution_factor <= 64" },
    /* every [fault]: its slip_factor, offsets and rotation (which apply to a segment table too) */
    { .name = "slip_factor", .kind = K_NUMBER, ABOVE(0, 1000), .first = SW_SWEEP_SLIP_FACTOR,
      .accepted = "0 < slip_factor <= 1000" },
    { .name = "fault_x_offset", .kind = K_COORD, RANGE(-1e4 * KM, 1e4 * KM), .first = SW_SWEEP_FAULT_X_OFFSET,
      .accepted = "|fault_x_offset| <= 10000 km", .grid_key = 1, .axis = SCN_AXIS_X, .deg_lo = -360, .deg_hi = 360,
      .deg_accepted = "|fault_x_offset| <= 360 deg on a geographic grid" },
    { .name = "fault_y_offset", .kind = K_COORD, RANGE(-1e4 * KM, 1e4 * KM), .first = SW_SWEEP_FAULT_Y_OFFSET,
      .accepted = "|fault_y_offset| <= 10000 km", .grid_key = 1, .axis = SCN_AXIS_Y, .deg_lo = -180, .deg_hi = 180,
      .deg_accepted = "|fault_y_offset| <= 180 deg on a geographic grid" },
    { .name = "fault_rotation", .kind = K_ANGLE, RANGE(-360, 360), .first = SW_SWEEP_FAULT_ROTATION,
      .accepted = "-360 <= fault_rotation <= 360 deg, clockwise" },
};

/* Short names for [run] keys: `courant_fraction = ...` in [sweep] means `run.courant_fraction = ...`. */
static const char *const SWEEP_ALIASES[] = { "layout", "courant_fraction", "arrival_threshold", NULL };

#define SWEEP_HINT "(accepted: design, members, seed, amplitude_factor, source_x_offset, source_y_offset, " \
                   "depth_factor, resolution_factor, slip_factor, fault_x_offset, fault_y_offset, fault_rotation, " \
                   "layout, courant_fraction, arrival_threshold, or SECTION.KEY such as grid.dx or source main.amplitude)"

/* [sweep] name = value: kept as text; scn_finish_sweep reads it once every section is known. */
int scn_add_sweep_entry(parse_state *ps, const char *name, const char *value)
{
    for (size_t i = 0; i < ps->n_sweep; i++)
        if (strcmp(ps->sweep[i].name, name) == 0)
            return scn_fail_at(ps, SW_ERR_PARSE, ps->line, "[sweep] duplicate key '%s' (first on line %d, again on "
                               "line %d)", name, ps->sweep[i].line, ps->line);
    if (ps->n_sweep >= SWEEP_ENTRIES_MAX)
        return scn_fail_at(ps, SW_ERR_RANGE, ps->line, "[sweep] too many parameters at '%s' (accepted: at most %d)",
                           name, SW_MAX_SWEEP_PARAMS);
    sweep_entry *e = &ps->sweep[ps->n_sweep++];
    snprintf(e->name, sizeof e->name, "%s", name);     /* both fit: a line is at most LINE_MAX_CHARS */
    snprintf(e->value, sizeof e->value, "%s", value);
    e->line = ps->line;
    return 1;
}

/* Reads one value of parameter p (key k) into *v; layouts as their registry index; a coordinate on a grid
 * of kind `kind` (never pending here: sweep_param refuses that) in m or deg, as the file writes it. */
static sw_status sweep_value(const key_def *k, const char *text, int kind, double *v, char *why, size_t n)
{
    if (k->kind == K_COORD) {
        sw_unit_kind unit;
        return scn_parse_coord(k, text, kind, v, &unit, why, n);
    }
    if (k->kind == K_CHOICE) {   /* a named choice: its index among the words */
        char word[LINE_MAX_CHARS + 1];
        snprintf(word, sizeof word, "%s", text);
        scn_trim(word);
        for (size_t q = 0; k->words[q]; q++)
            if (strcasecmp(word, k->words[q]) == 0) {
                *v = (double)q;
                return SW_OK;
            }
        snprintf(why, n, "unknown value (accepted: %s)", k->accepted);
        return SW_ERR_PARSE;
    }
    if (k->kind == K_LAYOUT) {
        if (!scn_layout_index(text, v)) {
            snprintf(why, n, "unknown layout (accepted: %s)", sw_layout_names());
            return SW_ERR_PARSE;
        }
        return SW_OK;
    }
    return scn_parse_number(k, text, v, why, n);
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
            return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s = %s: a layout takes a list, not a range "
                               "(accepted: e.g. A, C)", e->name, e->value);
        if (k->kind == K_CHOICE)
            return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s = %s: a choice takes a list, not a range "
                               "(accepted: a list of %s)", e->name, e->value, k->accepted);
        char lo[LINE_MAX_CHARS + 1], hi[LINE_MAX_CHARS + 1], count[LINE_MAX_CHARS + 1] = "";
        memcpy(lo, text, (size_t)(dots - text));
        lo[dots - text] = '\0';
        snprintf(hi, sizeof hi, "%s", dots + 2);
        char *in = strstr(hi, " in ");
        if (in) {
            snprintf(count, sizeof count, "%s", in + 4);
            *in = '\0';
            scn_trim(count);
        }
        scn_trim(lo);
        scn_trim(hi);
        if (!lo[0] || !hi[0] || (in && !count[0]))
            return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s = %s: expected a range 'LO .. HI' or 'LO .. HI "
                               "in N' (e.g. 0.9 .. 1.1 in 3)", e->name, e->value);
        const char *part[2] = { lo, hi };
        double *into[2] = { &p->lo, &p->hi };
        for (int q = 0; q < 2; q++)
            if ((st = sweep_value(k, part[q], ps->grid_kind, into[q], why, sizeof why)) != SW_OK)
                return scn_fail_at(ps, st, e->line, "[sweep] %s = %s: %s '%s': %s", e->name, e->value, q ? "HI" : "LO",
                                   part[q], why);
        if (!(p->lo < p->hi))
            return scn_fail_at(ps, SW_ERR_RANGE, e->line, "[sweep] %s = %s: LO must be below HI (accepted: LO < HI)",
                               e->name, e->value);
        p->is_range = 1;
        if (!in) {
            if (k->kind == K_INTEGER)
                return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s = %s: a whole-number key needs 'in N' or a "
                                   "list (e.g. %s .. %s in 3)", e->name, e->value, lo, hi);
            p->n_levels = 0;
            return 1;
        }
        char *end = NULL;
        long nv = strtol(count, &end, 10);
        if (end == count || *end || nv < 2 || nv > SW_MAX_SWEEP_LEVELS)
            return scn_fail_at(ps, SW_ERR_RANGE, e->line, "[sweep] %s = %s: 'in %s': out of range (accepted: a whole "
                               "number of values, 2 .. %d)", e->name, e->value, count, SW_MAX_SWEEP_LEVELS);
        p->n_levels = (size_t)nv;
        for (size_t i = 0; i < p->n_levels; i++) {
            double f = (double)i / (double)(p->n_levels - 1);
            p->level[i] = i + 1 == p->n_levels ? p->hi : p->lo + (p->hi - p->lo) * f;
            if (k->kind == K_INTEGER && p->level[i] != floor(p->level[i]))
                return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s = %s: 'in %ld' gives %g, not a whole number "
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
        scn_trim(item);
        if (!item[0])
            return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s = %s: an empty value in the list (accepted: "
                               "values separated by commas, or a range LO .. HI)", e->name, e->value);
        if (p->n_levels >= SW_MAX_SWEEP_LEVELS)
            return scn_fail_at(ps, SW_ERR_RANGE, e->line, "[sweep] %s: too many values (accepted: at most %d)", e->name,
                               SW_MAX_SWEEP_LEVELS);
        double v;
        if ((st = sweep_value(k, item, ps->grid_kind, &v, why, sizeof why)) != SW_OK)
            return scn_fail_at(ps, st, e->line, "[sweep] %s = %s: value '%s': %s", e->name, e->value, item, why);
        for (size_t i = 0; i < p->n_levels; i++)
            if (p->level[i] == v)
                return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s = %s: value '%s' is listed twice", e->name,
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
    if (!scn_split_target(target, kind, name, key))
        return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: expected SECTION.KEY (e.g. grid.dx, source "
                           "main.amplitude)", e->name);
    suggestion near_section = { 0 };
    const section_def *def = scn_find_section_def(kind, &near_section);
    if (!def) {
        char hint[96];
        return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: unknown section '%s'%s", e->name, kind,
                           scn_suggest_text(&near_section, hint, sizeof hint));
    }
    if (def->type == S_GAUGES || def->type == S_SWEEP)
        return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: [%s] entries cannot be varied (accepted: keys of "
                           "[run], [grid], [seabed], [storm], [wind], features, sources and faults)", e->name, kind);
    const section_ctx *sec = find_named_section(ps, def, name);
    if (!sec)
        return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: the file has no section [%s%s%s] to vary",
                           e->name, kind, name[0] ? " " : "", name);
    suggestion s = { 0 };
    const key_def *k = scn_find_key(def, key, &s);
    if (!k) {
        char hint[96];
        const char *renamed = scn_renamed_key(def->name, key);
        return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: %s has no key '%s'%s", e->name, sec->label, key,
                           renamed[0] ? renamed : scn_suggest_text(&s, hint, sizeof hint));
    }
    if (def->type == S_GRID && !ps->sc->has_grid && strcmp(key, "radius"))
        return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: the grid comes from the seabed file (accepted: a "
                           "[grid] section that gives nx, ny and dx)", e->name);
    /* numbers, the layout, and named choices of the storm surge ([wind] drag_law) and of faults (surface,
     * horizontal) */
    const int choice = k->kind == K_CHOICE && (def->type == S_WIND || (def->type == S_FAULT
                                                                       && strcmp(key, "surface_rupture")));
    if (!scn_is_numeric(k->kind) && k->kind != K_LAYOUT && !choice)
        return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: %s %s is not a number (accepted: numeric keys, "
                           "run.layout, wind.drag_law, and a fault's surface and horizontal)", e->name, sec->label,
                           key);
    unsigned active = 1;
    if (def->type == S_SEABED)
        active = ps->sc->bed_file[0] ? BED_FILE : BED_RECIPE;
    else if (def->type == S_SOURCE)
        active = SHAPE(((const sw_source_spec *)sec->item)->shape);
    else if (def->type == S_FAULT)
        active = ((const sw_fault_spec *)sec->item)->segments[0] ? FAULT_TABLE : FAULT_ONE;
    if (k->only && !(k->only & active))
        return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: %s %s is not used by this %s", e->name, sec->label,
                           key, def->type == S_SOURCE ? "source's shape" : def->type == S_FAULT
                           ? "fault: its segment table gives it (accepted: slip_factor, x_offset, y_offset, rotation "
                             "and the other keys of the section)" : "seabed");
    scn_join_target(p->target, sizeof p->target, kind, name, key);
    p->kind = SW_SWEEP_KEY;
    *kout = k;
    return 1;
}

/* A built-in parameter that moves or scales sources needs analytic sources. */
static int sweep_needs_sources(parse_state *ps, const sweep_entry *e)
{
    const sw_scenario *sc = ps->sc;
    if (sc->n_sources == 0)
        return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: the scenario has no [source] to change", e->name);
    for (size_t i = 0; i < sc->n_sources; i++)
        if (sc->sources[i].shape == SW_SOURCE_FILE)
            return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: [source %s] (line %d) is read from a file "
                               "(accepted: hump, ellipse and pair sources; vary a file source with its own keys, e.g. "
                               "source %s.scale, source %s.x_offset)", e->name, sc->sources[i].name,
                               sc->sources[i].line, sc->sources[i].name, sc->sources[i].name);
    return 1;
}

/* A built-in parameter that scales, moves or turns faults needs a [fault]. */
static int sweep_needs_faults(parse_state *ps, const sweep_entry *e)
{
    if (ps->sc->n_faults == 0)
        return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: the scenario has no [fault] to change", e->name);
    return 1;
}

/* One parameter line of [sweep]. */
static int sweep_param(parse_state *ps, const sweep_entry *e)
{
    sw_sweep_spec *sw = &ps->sc->sweep;
    if (sw->n_params >= SW_MAX_SWEEP_PARAMS)
        return scn_fail_at(ps, SW_ERR_RANGE, e->line, "[sweep] too many parameters at '%s' (accepted: at most %d)",
                           e->name, SW_MAX_SWEEP_PARAMS);
    sw_sweep_param *p = &sw->param[sw->n_params];
    memset(p, 0, sizeof *p);
    if (strlen(e->name) >= sizeof p->name)
        return scn_fail_at(ps, SW_ERR_RANGE, e->line, "[sweep] '%.40s...': name too long (accepted: at most %zu "
                           "characters)", e->name, sizeof p->name - 1);
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
        if ((p->kind == SW_SWEEP_SLIP_FACTOR || p->kind == SW_SWEEP_FAULT_X_OFFSET
             || p->kind == SW_SWEEP_FAULT_Y_OFFSET || p->kind == SW_SWEEP_FAULT_ROTATION) && !sweep_needs_faults(ps, e))
            return 0;
        if (p->kind == SW_SWEEP_RESOLUTION_FACTOR && !ps->sc->has_grid)
            return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] resolution_factor: the grid comes from the seabed "
                               "file (accepted: a scenario with a [grid] section)");
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
                scn_suggest_try(&s, e->name, SWEEP_BUILTIN_KEYS[i].name);
            for (size_t i = 0; SWEEP_ALIASES[i]; i++)
                scn_suggest_try(&s, e->name, SWEEP_ALIASES[i]);
            for (size_t i = 0; i < sizeof SWEEP_DESIGN_KEYS / sizeof SWEEP_DESIGN_KEYS[0]; i++)
                scn_suggest_try(&s, e->name, SWEEP_DESIGN_KEYS[i].name);
            char hint[96];
            if (scn_renamed_key("run", e->name)[0])
                return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] unknown key '%s'%s", e->name,
                                   scn_renamed_key("run", e->name));
            if (s.best)
                return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] unknown key '%s'%s", e->name,
                                   scn_suggest_text(&s, hint, sizeof hint));
            return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] unknown key '%s' " SWEEP_HINT, e->name);
        }
        char target[LINE_MAX_CHARS + 1];
        snprintf(target, sizeof target, "run.%.60s", e->name);   /* an alias: a short known word */
        if (!sweep_key_target(ps, e, target, p, &k))
            return 0;
    }
    for (size_t i = 0; i < sw->n_params; i++)
        if (p->kind == SW_SWEEP_KEY && sw->param[i].kind == SW_SWEEP_KEY && strcmp(sw->param[i].target, p->target) == 0)
            return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: varies %s, as '%s' on line %d already does",
                               e->name, p->target, sw->param[i].name, sw->param[i].line);
    if (k->kind == K_COORD && ps->grid_kind == SCN_KIND_PENDING)
        return scn_fail_at(ps, SW_ERR_PARSE, e->line, "[sweep] %s: a coordinate, and the grid's kind comes from the "
                           "seabed file (accepted: with [grid] kind = projected or geographic written)", e->name);
    if (k->kind == K_COORD)
        p->unit = ps->grid_kind == SW_GRID_GEOGRAPHIC ? SW_UNIT_ANGLE : SW_UNIT_LENGTH;
    else
        p->unit = (int)scn_unit_kind(k->kind);
    p->integer = k->kind == K_INTEGER;
    p->layout = k->kind == K_LAYOUT;
    p->words = k->kind == K_CHOICE ? k->words : NULL;
    if (!sweep_values(ps, e, k, p))
        return 0;
    sw->n_params++;
    return 1;
}

/* Reads [sweep]: the design keys, then each parameter (which may name any section of the file),
 * then the rules that tie them together. */
int scn_finish_sweep(parse_state *ps)
{
    const section_ctx *sec = scn_find_section(ps, S_SWEEP);
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
            st = scn_parse_number(k, e->value, &v, why, sizeof why);
            if (st == SW_OK)
                sw->seed = (unsigned long long)v;
            seed_line = e->line;
        } else {
            st = scn_store_value(k, ps->sc, e->value, ps->grid_kind, why, sizeof why);
            *(k->kind == K_CHOICE ? &design_line : &members_line) = e->line;
        }
        if (st != SW_OK)
            return scn_fail_at(ps, st, e->line, "[sweep] %s = %s: %s", e->name, e->value, why);
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
        return scn_fail_at(ps, SW_ERR_PARSE, sw->line, "[sweep] lists no parameter to vary " SWEEP_HINT);
    if (sw->design == SW_SWEEP_LATIN_HYPERCUBE) {
        if (!members_line)
            return scn_fail_at(ps, SW_ERR_PARSE, sw->line, "[sweep] missing key 'members' (needed with design = %s; "
                               "accepted: 2 <= members <= %d)", design, SW_MAX_SWEEP_MEMBERS);
        return 1;
    }
    if (members_line || seed_line)
        return scn_fail_at(ps, SW_ERR_PARSE, members_line ? members_line : seed_line, "[sweep] %s: not used with "
                           "design = %s (only with latin-hypercube)", members_line ? "members" : "seed", design);
    double count = 1;   /* factorial: the product of the counts; one-at-a-time: 1 + their sum (at most) */
    for (size_t i = 0; i < sw->n_params; i++) {
        const sw_sweep_param *p = &sw->param[i];
        if (p->n_levels == 0)
            return scn_fail_at(ps, SW_ERR_PARSE, p->line, "[sweep] %s: a range needs a count with design = %s "
                               "(accepted: LO .. HI in N, or a list of values)", p->name, design);
        count = sw->design == SW_SWEEP_FACTORIAL ? count * (double)p->n_levels : count + (double)p->n_levels;
    }
    if (count > SW_MAX_SWEEP_MEMBERS)
        return scn_fail_at(ps, SW_ERR_RANGE, design_line ? design_line : sw->line, "[sweep] design = %s makes %.0f "
                           "members (accepted: at most %d; use latin-hypercube with fewer members)", design, count,
                           SW_MAX_SWEEP_MEMBERS);
    return 1;
}
