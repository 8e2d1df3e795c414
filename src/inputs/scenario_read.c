/* scenario_read.c - reading a scenario text into sw_scenario: the reader, the whole-file rules and
 * the entry points of scenario.h (load, parse, free, resolve).
 *
 * How it works. inih splits the text into `key = value` pairs. It reads through our own line
 * reader (read_line), which counts lines, refuses over-long lines, strips blanks and comments,
 * and sees every [section] header: the reader opens the section itself (inih cuts section names
 * at 49 characters and says nothing about a section without keys). The key handler (on_key) looks
 * the key up in the open section's table (scenario_keys.c) and stores the value in SI units. After
 * the last line, `finish` applies the rules that involve several keys or sections, [sweep] last
 * (scenario_sweep.c).
 *
 * Invariant: the first problem found is the one reported. Once `ps->failed` is set, the reader
 * ends the input and the handler refuses every further key.
 */
#include "inputs/scenario_impl.h"

#include <ctype.h>
#include <errno.h>
#include <limits.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <ini.h>

#define FILE_MAX_BYTES (16u << 20)      /* a scenario is small; refuse anything above 16 MiB */

/* ---- messages ------------------------------------------------------------------------------ */

/* Records "NAME:LINE: message" (or "NAME: message" when line <= 0) unless a problem is already
 * recorded. Returns 0, the value inih's handler returns on error. */
int scn_fail_at(parse_state *ps, sw_status code, int line, const char *fmt, ...)
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

/* ---- sections ------------------------------------------------------------------------------ */

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
            (void)scn_store_value(k, home_of(ps, sec, k), k->dflt, ps->grid_kind, why, sizeof why);
    }
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
        return scn_fail_at(ps, SW_ERR_PARSE, ps->line, "empty section header [] (accepted: " SCN_SECTION_LIST ")");
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

    suggestion near = { 0 };
    const section_def *def = scn_find_section_def(kind, &near);
    if (!def) {
        char hint[96];
        if (near.best)
            return scn_fail_at(ps, SW_ERR_PARSE, ps->line, "unknown section [%.*s]%s", (int)n, inner,
                               scn_suggest_text(&near, hint, sizeof hint));
        return scn_fail_at(ps, SW_ERR_PARSE, ps->line, "unknown section [%.*s] (accepted: " SCN_SECTION_LIST ")",
                           (int)n, inner);
    }
    if (def->named && nn == 0)
        return scn_fail_at(ps, SW_ERR_PARSE, ps->line, "section [%s] needs a name, e.g. [%s %s]", kind, kind,
                           def->type == S_SOURCE || def->type == S_FAULT ? "main" : "Pellquin Rock");
    if (!def->named && nn > 0)
        return scn_fail_at(ps, SW_ERR_PARSE, ps->line, "section [%s] takes no name, found [%.*s] (accepted: [%s])",
                           kind, (int)n, inner, kind);
    if (nn >= SW_NAME_MAX)
        return scn_fail_at(ps, SW_ERR_RANGE, ps->line, "[%s ...]: the name has %zu characters (accepted: at most %d)",
                           kind, nn, SW_NAME_MAX - 1);

    for (size_t i = 0; i < ps->n_sections; i++) {
        const section_ctx *o = &ps->sections[i];
        if (o->def == def && strlen(o->name) == nn && strncmp(o->name, name, nn) == 0)
            return scn_fail_at(ps, SW_ERR_PARSE, ps->line, "duplicate section %s (first on line %d)",
                               o->label, o->line);
    }

    sw_scenario *sc = ps->sc;
    void *item = NULL;
    if (def->type == S_BAY || def->type == S_ISLAND || def->type == S_SHOAL) {
        if (sc->n_features >= SW_MAX_FEATURES)
            return scn_fail_at(ps, SW_ERR_RANGE, ps->line, "too many features at [%.*s] (accepted: at most %d bays, "
                               "islands and shoals)", (int)n, inner, SW_MAX_FEATURES);
        sw_feature *f = &sc->features[sc->n_features++];
        f->kind = def->type == S_BAY ? SW_FEATURE_BAY : def->type == S_ISLAND ? SW_FEATURE_ISLAND : SW_FEATURE_SHOAL;
        memcpy(f->name, name, nn);
        f->name[nn] = '\0';
        f->line = ps->line;
        item = f;
    } else if (def->type == S_SOURCE) {
        if (sc->n_sources >= SW_MAX_SOURCES)
            return scn_fail_at(ps, SW_ERR_RANGE, ps->line, "too many sources at [%.*s] (accepted: at most %d)", (int)n,
                               inner, SW_MAX_SOURCES);
        sw_source_spec *s = &sc->sources[sc->n_sources++];
        memcpy(s->name, name, nn);
        s->name[nn] = '\0';
        s->line = ps->line;
        item = s;
    } else if (def->type == S_FAULT) {
        if (sc->n_faults >= SW_MAX_FAULTS)
            return scn_fail_at(ps, SW_ERR_RANGE, ps->line, "too many faults at [%.*s] (accepted: at most %d [fault] "
                               "sections; a segment table holds many segments)", (int)n, inner, SW_MAX_FAULTS);
        sw_fault_spec *f = &sc->faults[sc->n_faults++];
        memcpy(f->name, name, nn);
        f->name[nn] = '\0';
        f->line = ps->line;
        item = f;
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

const section_ctx *scn_find_section(const parse_state *ps, section_type type)
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
size_t scn_clean_line(const char *raw, size_t n, int first_line, char *out)
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
        scn_fail_at(ps, SW_ERR_PARSE, ps->line, "the line has %zu characters (accepted: at most %d)",
                    n, LINE_MAX_CHARS);
        return NULL;
    }
    for (size_t i = 0; i < n; i++) {
        unsigned char c = (unsigned char)s[i];
        if ((c < 0x20 && c != '\t') || c == 0x7f) {
            scn_fail_at(ps, SW_ERR_PARSE, ps->line, "control character 0x%02x in column %zu (accepted: plain text; is "
                        "this a scenario file?)", c, i + 1);
            return NULL;
        }
    }
    char clean[LINE_MAX_CHARS + 1];
    size_t len = scn_clean_line(s, n, ps->line == 1, clean);
    if (clean[0] == '[') {
        const char *close = strchr(clean, ']');
        if (close) {   /* without ']' inih reports the line as a syntax error */
            if (close[1] != '\0') {
                scn_fail_at(ps, SW_ERR_PARSE, ps->line, "unexpected '%s' after the section header %.*s", close + 1,
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
        scn_fail_at(ps, SW_ERR_PARSE, ps->line, "the line has %zu characters with no blank around '=' (accepted: at "
                    "most %d then; write 'key = value')", len, size - 1);
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
    size_t len = scn_clean_line(raw, n > LINE_MAX_CHARS ? LINE_MAX_CHARS : n, line == 1, clean);
    ps->failed = 0;
    if (len > 0 && clean[0] == '[')
        scn_fail_at(ps, SW_ERR_PARSE, line, "missing ']' at the end of the section header '%s'", clean);
    else
        scn_fail_at(ps, SW_ERR_PARSE, line, "cannot read '%.60s%s' (accepted: key = value, a [section] header, or a "
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
        return scn_fail_at(ps, SW_ERR_PARSE, ps->line, "%s a gauge needs a name before '=' (e.g. Port Vantrebel = 42 km, "
                           "18.5 km)", label);
    size_t nl = strlen(name);
    if (nl >= SW_NAME_MAX)
        return scn_fail_at(ps, SW_ERR_RANGE, ps->line, "%s gauge name '%.20s...' has %zu characters (accepted: at most "
                           "%d)", label, name, nl, SW_NAME_MAX - 1);
    for (size_t i = 0; i < sc->n_gauges; i++)
        if (strcmp(sc->gauges[i].name, name) == 0)
            return scn_fail_at(ps, SW_ERR_PARSE, ps->line, "%s duplicate gauge '%s' (first on line %d, again on line "
                               "%d)", label, name, sc->gauges[i].line, ps->line);
    if (sc->n_gauges >= SW_MAX_GAUGES)
        return scn_fail_at(ps, SW_ERR_RANGE, ps->line, "%s too many gauges at '%s' (accepted: at most %d)", label, name,
                           SW_MAX_GAUGES);
    const char *comma = strchr(value, ',');
    const char *example = ps->grid_kind == SW_GRID_GEOGRAPHIC ? "172.5 deg, -41.25 deg" : "42 km, 18.5 km";
    if (!comma || strchr(comma + 1, ','))
        return scn_fail_at(ps, SW_ERR_PARSE, ps->line, "%s %s = %s: expected two %s 'x, y' (e.g. %s)", label, name,
                           value, ps->grid_kind == SW_GRID_GEOGRAPHIC ? "angles" : "lengths", example);
    char xs[LINE_MAX_CHARS + 1];
    size_t xn = (size_t)(comma - value);
    memcpy(xs, value, xn);
    xs[xn] = '\0';
    double xy[2];
    sw_unit_kind unit[2];
    const char *part[2] = { xs, comma + 1 };
    for (int i = 0; i < 2; i++) {
        char why[512];
        sw_status st = scn_parse_coord(scn_point_key(i), part[i], ps->grid_kind, &xy[i], &unit[i], why, sizeof why);
        if (st != SW_OK)
            return scn_fail_at(ps, st, ps->line, "%s %s = %s: %s: %s", label, name, value, i ? "y" : "x", why);
    }
    sw_gauge_spec *g = &sc->gauges[sc->n_gauges++];
    memcpy(g->name, name, nl + 1);
    g->line = ps->line;
    g->x_m = xy[0];
    g->y_m = xy[1];
    g->x_unit = unit[0];
    g->y_unit = unit[1];
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
        return scn_fail_at(ps, SW_ERR_PARSE, ps->line, "%s%sa key name is missing before '='", sec ? sec->label : "",
                           sec ? " " : "");
    if (!sec)
        return scn_fail_at(ps, SW_ERR_PARSE, ps->line, "key '%s' comes before any [section] header (put it under "
                           "[run], [grid], ...)", name);
    if (sec->def->type == S_GAUGES)
        return add_gauge(ps, name, value);
    if (sec->def->type == S_SWEEP)
        return scn_add_sweep_entry(ps, name, value);

    const section_def *def = sec->def;
    suggestion s = { 0 };
    const key_def *k = scn_find_key(def, name, &s);
    if (!k) {
        char hint[96];
        const char *renamed = scn_renamed_key(def->name, name);
        return scn_fail_at(ps, SW_ERR_PARSE, ps->line, "%s unknown key '%s'%s", sec->label, name,
                           renamed[0] ? renamed : scn_suggest_text(&s, hint, sizeof hint));
    }
    size_t ki = (size_t)(k - def->keys);
    if (sec->key_line[ki])
        return scn_fail_at(ps, SW_ERR_PARSE, ps->line, "%s duplicate key '%s' (first on line %d, again on line %d)",
                           sec->label, name, sec->key_line[ki], ps->line);
    sec->key_line[ki] = ps->line;

    char why[512];
    sw_status st = scn_store_value(k, home_of(ps, sec, k), value, ps->grid_kind, why, sizeof why);
    if (st != SW_OK)
        return scn_fail_at(ps, st, ps->line, "%s %s = %s: %s", sec->label, name, value, why);
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
            return scn_fail_at(ps, SW_ERR_PARSE, sec->key_line[i], "%s %s: not used %s",
                               sec->label, k->name, group_text);
        if (!sec->key_line[i] && applies && k->required)
            return scn_fail_at(ps, SW_ERR_PARSE, sec->line, "%s missing key '%s' (accepted: %s)", sec->label, k->name,
                               k->accepted);
    }
    return 1;
}

/* Earth's constants for `latitude`, common practice: the sidereal rotation rate Omega = 7.2921159e-5 s-1
 * and the mean radius 6371.0 km (IUGG) [memory; docs/references.md]. */
#define EARTH_OMEGA 7.2921159e-5
#define EARTH_RADIUS_M 6.371e6

/* Rotation: which keys go with which kind, and f0 and beta from the latitude. */
static int finish_rotation(parse_state *ps, const section_ctx *run)
{
    sw_scenario *sc = ps->sc;
    sw_terms_config *t = &sc->terms;
    const int kind = key_line(run, "rotation"), f = key_line(run, "coriolis"), lat = key_line(run, "latitude");
    const int beta = key_line(run, "beta"), yref = key_line(run, "reference_y");
    const char *name = sw_rotation_name(t->rotation);
    sc->rotation_line = kind ? kind : run->line;
    sc->rotation_written = kind != 0;
    const int geo = ps->grid_kind == SW_GRID_GEOGRAPHIC;
    if (geo || t->rotation == SW_ROTATION_SPHERE) {
        if (ps->grid_kind == SW_GRID_PROJECTED)
            return scn_fail_at(ps, SW_ERR_PARSE, kind, "[run] rotation = sphere: only on a geographic grid (accepted: "
                               "none, f-plane, beta-plane on a projected grid; sphere with [grid] kind = geographic)");
        if (t->rotation == SW_ROTATION_F_PLANE || t->rotation == SW_ROTATION_BETA_PLANE)
            return scn_fail_at(ps, SW_ERR_PARSE, kind, "[run] rotation = %s: on a geographic grid the sphere gives f "
                               "(accepted: sphere, the default there, or none)", name);
        const int given[4] = {f, lat, beta, yref};
        static const char *const keys[4] = {"coriolis", "latitude", "beta", "reference_y"};
        int first = 0;
        for (int q = 1; q < 4; q++)
            if (given[q] && (!given[first] || given[q] < given[first]))
                first = q;
        if (given[first])
            return scn_fail_at(ps, SW_ERR_PARSE, given[first], "[run] %s: not used %s: the sphere gives f = 2 Omega "
                               "sin(latitude) row by row (accepted: leave it out)", keys[first],
                               geo ? "on a geographic grid" : "with rotation = sphere");
        if (geo && !kind)
            t->rotation = SW_ROTATION_SPHERE;
        return 1;
    }
    if (t->rotation == SW_ROTATION_NONE) {
        const int given[4] = {f, lat, beta, yref};
        static const char *const keys[4] = {"coriolis", "latitude", "beta", "reference_y"};
        for (int q = 0; q < 4; q++)
            if (given[q])
                return scn_fail_at(ps, SW_ERR_PARSE, given[q], "[run] %s: not used without rotation (accepted: "
                                   "rotation = f-plane or beta-plane with it)", keys[q]);
        return 1;
    }
    if (f && lat)
        return scn_fail_at(ps, SW_ERR_PARSE, f > lat ? f : lat, "[run] coriolis (line %d) and latitude (line %d) "
                           "are both given (accepted: one of them; latitude gives f = 2 Omega sin(latitude))", f, lat);
    if (!f && !lat)
        return scn_fail_at(ps, SW_ERR_PARSE, sc->rotation_line, "[run] rotation = %s needs coriolis (s-1) or "
                           "latitude (deg)", name);
    if (lat) {
        const double phi = sc->latitude_deg * 3.14159265358979323846 / 180;
        t->f0_s = 2 * EARTH_OMEGA * sin(phi);
        if (!beta)
            t->beta_ms = 2 * EARTH_OMEGA * cos(phi) / EARTH_RADIUS_M;
    }
    if (t->rotation == SW_ROTATION_F_PLANE) {
        if (beta || yref)
            return scn_fail_at(ps, SW_ERR_PARSE, beta ? beta : yref, "[run] %s: not used with rotation = f-plane "
                               "(accepted: rotation = beta-plane with it)", beta ? "beta" : "reference_y");
        t->beta_ms = 0;
        return 1;
    }
    if (!yref)
        return scn_fail_at(ps, SW_ERR_PARSE, sc->rotation_line, "[run] rotation = beta-plane needs reference_y, the y "
                           "where f is %s (accepted: a length, e.g. reference_y = 200 km)",
                           lat ? "that of the latitude" : "coriolis");
    if (!beta && !lat)
        return scn_fail_at(ps, SW_ERR_PARSE, sc->rotation_line, "[run] rotation = beta-plane needs beta (m-1 s-1), or "
                           "latitude instead of coriolis to derive both");
    return 1;
}

/* Friction: the coefficient its kind needs, and no other. */
static int finish_friction(parse_state *ps, const section_ctx *run)
{
    sw_scenario *sc = ps->sc;
    static const char *const keys[4] = {NULL, "friction_rate", "drag", "manning"};   /* by sw_friction_kind */
    static const char *const units[4] = {NULL, "m/s", "dimensionless", "s m-1/3"};
    const int kind = key_line(run, "friction");
    const sw_friction_kind k = sc->terms.friction;
    sc->friction_line = kind ? kind : run->line;
    for (int q = 1; q < 4; q++) {
        const int line = key_line(run, keys[q]);
        if (line && q != (int)k)
            return scn_fail_at(ps, SW_ERR_PARSE, line, "[run] %s: not used %s%s (accepted: friction = %s with it)",
                               keys[q], k == SW_FRICTION_NONE ? "without friction" : "with friction = ",
                               k == SW_FRICTION_NONE ? "" : sw_friction_name(k), sw_friction_name((sw_friction_kind)q));
    }
    if (k != SW_FRICTION_NONE && !key_line(run, keys[k]))
        return scn_fail_at(ps, SW_ERR_PARSE, sc->friction_line, "[run] friction = %s needs %s (%s)",
                           sw_friction_name(k), keys[k], units[k]);
    return 1;
}

static int finish_run(parse_state *ps, const section_ctx *run)
{
    sw_scenario *sc = ps->sc;
    if (!run)
        return scn_fail_at(ps, SW_ERR_PARSE, 0, "missing section [run] (it needs at least 'duration')");
    if (!check_keys(ps, run, 1, ""))
        return 0;
    int dt = key_line(run, "dt"), courant = key_line(run, "courant_fraction");
    if (dt && courant)
        return scn_fail_at(ps, SW_ERR_PARSE, dt > courant ? dt : courant, "[run] dt (line %d) and courant_fraction "
                           "(line %d) are both given (accepted: one of them; dt fixes the step, courant_fraction "
                           "derives it)",
                           dt, courant);
    /* lines for later messages: the key's, or the [run] header's when defaulted */
    sc->layout_line = key_line(run, "layout") ? key_line(run, "layout") : run->line;
    sc->courant_line = courant ? courant : run->line;
    sc->dt_line = dt ? dt : run->line;
    return finish_rotation(ps, run) && finish_friction(ps, run);
}

/* The [grid] keys that give the grid's size and place (the others, kind and radius, may stand alone). */
static const char *const GRID_SIZE_KEYS[] = { "nx", "ny", "dx", "dy", "x0", "y0" };

/* A geographic grid: its degrees (as read) into arc metres (grid.h), at most once around, and its halo
 * rows within SW_GRID_POLE_LIMIT_DEG of the equator, tested as the model tests them (model.c). */
static int place_geographic_grid(parse_state *ps, const section_ctx *grid)
{
    sw_grid *g = &ps->sc->grid;
    const double x0 = g->x0_m, y0 = g->y0_m, dx = g->dx_m, dy = g->dy_m;   /* deg */
    const double around = (double)g->nx * dx;
    if (around > 360.0 * (1 + 1e-12)) {
        int line = key_line(grid, "nx") > key_line(grid, "dx") ? key_line(grid, "nx") : key_line(grid, "dx");
        return scn_fail_at(ps, SW_ERR_RANGE, line, "[grid] nx * dx = %zu * %g deg = %g deg: more than once around the "
                           "sphere (accepted: nx * dx <= 360 deg)", g->nx, dx, around);
    }
    g->x0_m = sw_grid_deg(g, x0);
    g->y0_m = sw_grid_deg(g, y0);
    g->dx_m = sw_grid_deg(g, dx);
    g->dy_m = sw_grid_deg(g, dy);
    const double lim = SW_GRID_POLE_LIMIT_DEG * 3.14159265358979323846 / 180.0;
    if (!(fabs(g->y0_m - g->dy_m) / g->radius_m <= lim
          && fabs(g->y0_m + (double)(g->ny + 1) * g->dy_m) / g->radius_m <= lim)) {
        int line = key_line(grid, "y0") ? key_line(grid, "y0") : key_line(grid, "ny");
        const double south = y0 - dy, north = y0 + (double)(g->ny + 1) * dy;
        return scn_fail_at(ps, SW_ERR_RANGE, line, "[grid] y0 = %g deg, ny = %zu, dy = %g deg: the halo rows reach "
                           "latitude %g deg, beyond +-%g deg (accepted: y0 - dy >= -%g deg and y0 + (ny + 1) dy <= %g "
                           "deg: towards a pole cos(latitude) goes to 0, cells collapse to slivers and the time step "
                           "with them)", y0, g->ny, dy, fabs(south) > fabs(north) ? south : north,
                           SW_GRID_POLE_LIMIT_DEG, SW_GRID_POLE_LIMIT_DEG, SW_GRID_POLE_LIMIT_DEG);
    }
    return 1;
}

static int finish_grid(parse_state *ps, const section_ctx *grid)
{
    sw_scenario *sc = ps->sc;
    sc->grid_kind_line = key_line(grid, "kind");
    const int radius = key_line(grid, "radius");
    if (!radius)
        sc->grid.radius_m = SW_EARTH_RADIUS_M;
    else if (sc->grid.kind != SW_GRID_GEOGRAPHIC)
        return scn_fail_at(ps, SW_ERR_PARSE, radius, "[grid] radius: only on a geographic grid (accepted: kind = "
                           "geographic with it, or leave it out)");
    int sized = 0;
    for (size_t q = 0; q < sizeof GRID_SIZE_KEYS / sizeof GRID_SIZE_KEYS[0]; q++)
        sized |= key_line(grid, GRID_SIZE_KEYS[q]) != 0;
    if (!sized) {
        if (!sc->bed_file[0]) {
            if (!grid)
                return scn_fail_at(ps, SW_ERR_PARSE, 0, "missing section [grid] with nx, ny and dx (it may be left out "
                                   "only when [seabed] file gives the grid)");
            const key_def *k = scn_find_key(grid->def, "nx", NULL);
            return scn_fail_at(ps, SW_ERR_PARSE, grid->line, "[grid] missing key 'nx' (accepted: %s; only [seabed] "
                               "file can give the grid's size)", k->accepted);
        }
        const sw_grid_kind kind = sc->grid.kind;   /* the seabed file gives the rest (and the kind when not written) */
        const double r = sc->grid.radius_m;
        memset(&sc->grid, 0, sizeof sc->grid);
        sc->grid.kind = kind;
        sc->grid.radius_m = r;
        sc->has_grid = 0;
        return 1;
    }
    static const char *const needed[] = { "nx", "ny", "dx" };
    for (size_t q = 0; q < 3; q++)
        if (!key_line(grid, needed[q]))
            return scn_fail_at(ps, SW_ERR_PARSE, grid->line, "[grid] missing key '%s' (accepted: %s)", needed[q],
                               scn_find_key(grid->def, needed[q], NULL)->accepted);
    sc->has_grid = 1;
    if (!key_line(grid, "dy"))
        sc->grid.dy_m = sc->grid.dx_m;
    double cells = (double)sc->grid.nx * (double)sc->grid.ny;
    if (cells > 4e8) {
        int line = key_line(grid, "nx") > key_line(grid, "ny") ? key_line(grid, "nx") : key_line(grid, "ny");
        return scn_fail_at(ps, SW_ERR_RANGE, line, "[grid] nx * ny = %zu * %zu = %.0f cells: out of range (accepted: "
                           "nx * ny <= 400000000)", sc->grid.nx, sc->grid.ny, cells);
    }
    return sc->grid.kind != SW_GRID_GEOGRAPHIC || place_geographic_grid(ps, grid);
}

/* `all`, then periodic edges in pairs. */
static int finish_edges(parse_state *ps, const section_ctx *edges)
{
    static const char *const side[4] = { "west", "east", "south", "north" };   /* SW_WEST.. SW_NORTH */
    sw_edge_kind *e = ps->sc->edges;
    if (ps->edges_all >= 0)
        for (int i = 0; i < 4; i++)
            if (!key_line(edges, side[i]))
                e[i] = (sw_edge_kind)ps->edges_all;
    for (int a = 0; a < 4; a += 2)
        if ((e[a] == SW_EDGE_PERIODIC) != (e[a + 1] == SW_EDGE_PERIODIC)) {
            const int p = e[a] == SW_EDGE_PERIODIC ? a : a + 1, o = p == a ? a + 1 : a;
            const int line = key_line(edges, side[p]) ? key_line(edges, side[p]) : key_line(edges, "all");
            return scn_fail_at(ps, SW_ERR_PARSE, line, "[edges] %s = periodic needs %s = periodic too (a periodic "
                               "edge joins the opposite one; %s is %s)", side[p], side[o], side[o], sw_edge_name(e[o]));
        }
    return 1;
}

static int finish_seabed(parse_state *ps, const section_ctx *bed)
{
    sw_scenario *sc = ps->sc;
    if (!bed)
        return scn_fail_at(ps, SW_ERR_PARSE, 0, "missing section [seabed] (it needs 'deep', or 'file' for a NetCDF "
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
                return scn_fail_at(ps, SW_ERR_PARSE, bed->line, "[seabed] missing key '%s' (needed with coast = %s)",
                                   needed[i], scn_coast_words[sc->coast]);
    }
    sc->shoreline_line = key_line(bed, "shoreline");
    if (sc->shoreline_line && ps->grid_kind == SW_GRID_GEOGRAPHIC && (sc->coast == SW_COAST_SOUTH
        || sc->coast == SW_COAST_NORTH) && !(fabs(sc->shoreline_m) <= 90))
        return scn_fail_at(ps, SW_ERR_RANGE, sc->shoreline_line, "[seabed] shoreline = %g deg: out of range (accepted: "
                           "with coast = %s the shoreline's latitude, -90 <= shoreline <= 90 deg)", sc->shoreline_m,
                           scn_coast_words[sc->coast]);
    int shelf = key_line(bed, "shelf_depth");
    if (!shelf)
        sc->shelf_depth_m = sc->deep_m;
    else if (sc->shelf_depth_m > sc->deep_m)
        return scn_fail_at(ps, SW_ERR_RANGE, shelf, "[seabed] shelf_depth = %g m: out of range (accepted: 0 < "
                           "shelf_depth <= deep = %g m)", sc->shelf_depth_m, sc->deep_m);
    return 1;
}

static int finish_source(parse_state *ps, const section_ctx *sec)
{
    sw_source_spec *s = sec->item;
    if (!key_line(sec, "shape"))
        return check_keys(ps, sec, 0, "");   /* reports the missing shape */
    char group[64];
    snprintf(group, sizeof group, "by shape '%s'", scn_shape_words[s->shape]);
    if (!check_keys(ps, sec, SHAPE(s->shape), group))
        return 0;
    if (s->shape == SW_SOURCE_PAIR) {
        if (!(s->amplitude_m > 0))
            return scn_fail_at(ps, SW_ERR_RANGE, key_line(sec, "amplitude"), "%s amplitude = %g m: out of range "
                               "(accepted: 0 < amplitude <= 100 m for a pair, the uplift crest)",
                               sec->label, s->amplitude_m);
        if (!key_line(sec, "subsidence"))
            s->trough_m = s->amplitude_m;
    }
    if (s->shape == SW_SOURCE_FILE && s->scale == 0)
        return scn_fail_at(ps, SW_ERR_RANGE, key_line(sec, "scale"), "%s scale = 0: out of range (accepted: 0 < "
                           "|scale| <= 1000; leave the source out to switch it off)", sec->label);
    return 1;
}

/* [fault NAME]: one fault from its keys or a segment table; the elastic constants; a top edge at the sea floor;
 * the rupture's timing (start, or rupture_speed from a hypocentre). The table itself is read once the grid is
 * known (faults.c). */
static int finish_fault(parse_state *ps, const section_ctx *sec)
{
    sw_fault_spec *f = sec->item;
    const int table = key_line(sec, "segments");
    f->segments_line = table;
    if (!check_keys(ps, sec, table ? FAULT_TABLE : FAULT_ONE, table ? "with 'segments' (the table gives each "
                    "segment's value)" : "without 'segments'"))
        return 0;
    const int poisson = key_line(sec, "poisson"), lambda = key_line(sec, "lambda");
    if (poisson && lambda)
        return scn_fail_at(ps, SW_ERR_PARSE, poisson > lambda ? poisson : lambda, "%s poisson (line %d) and "
                           "lambda (line %d) are both given (accepted: one of them; with lambda, poisson = lambda / (2 "
                           "(lambda + rigidity)))", sec->label, poisson, lambda);
    if (lambda)
        f->poisson = f->lambda_pa / (2.0 * (f->lambda_pa + f->rigidity_pa));
    else if (!(f->poisson < 0.5))
        return scn_fail_at(ps, SW_ERR_RANGE, poisson, "%s poisson = %g: out of range (accepted: 0 < poisson < 0.5; "
                           "0.5 is an incompressible solid)", sec->label, f->poisson);
    f->rupture_line = key_line(sec, "surface_rupture");
    if (!table && f->depth_m == 0 && !f->surface_rupture)
        return scn_fail_at(ps, SW_ERR_RANGE, key_line(sec, "depth"), "%s depth = 0 m: the fault's top edge breaks the "
                           "sea floor (accepted: depth > 0, or surface_rupture = accept for a rupture that reaches the "
                           "sea floor)", sec->label);
    f->start_line = key_line(sec, "start");
    f->rise_line = key_line(sec, "rise");
    f->opening_line = key_line(sec, "opening");
    f->speed_line = key_line(sec, "rupture_speed");
    const int hx = key_line(sec, "hypocentre_x"), hy = key_line(sec, "hypocentre_y");
    const int hz = key_line(sec, "hypocentre_depth");
    f->hypo_depth_given = hz != 0;
    if (f->speed_line && f->start_line)
        return scn_fail_at(ps, SW_ERR_PARSE, f->speed_line > f->start_line ? f->speed_line : f->start_line, "%s start "
                           "(line %d) and rupture_speed (line %d) are both given (accepted: one of them; rupture_speed "
                           "starts each segment when the rupture front reaches it)", sec->label, f->start_line,
                           f->speed_line);
    if (f->speed_line && (!hx || !hy))
        return scn_fail_at(ps, SW_ERR_PARSE, f->speed_line, "%s rupture_speed needs hypocentre_x and hypocentre_y "
                           "(accepted: the point the rupture starts from; hypocentre_depth optional)", sec->label);
    static const char *const hypo[3] = { "hypocentre_x", "hypocentre_y", "hypocentre_depth" };
    const int given[3] = { hx, hy, hz };
    for (int q = 0; q < 3 && !f->speed_line; q++)
        if (given[q])
            return scn_fail_at(ps, SW_ERR_PARSE, given[q], "%s %s: not used without rupture_speed (accepted: "
                               "rupture_speed with it)", sec->label, hypo[q]);
    return 1;
}

/* [storm], [weather] and [wind]: what is present, required keys, one atmosphere at most, and a level
 * series only with a level edge. */
static int finish_forcing(parse_state *ps)
{
    sw_forcing_spec *f = &ps->sc->forcing;
    const section_ctx *storm = scn_find_section(ps, S_STORM), *weather = scn_find_section(ps, S_WEATHER);
    const section_ctx *wind = scn_find_section(ps, S_WIND), *edges = scn_find_section(ps, S_EDGES);
    f->storm = storm != NULL;
    f->weather = weather != NULL;
    f->storm_line = storm ? storm->line : 0;
    f->weather_line = weather ? weather->line : 0;
    if (ps->grid_kind == SW_GRID_GEOGRAPHIC && (storm || weather))
        return scn_fail_at(ps, SW_ERR_PARSE, (storm ? storm : weather)->line, "%s: not yet available on geographic "
                           "grids; use a projected grid", storm ? "[storm]" : "[weather]");
    if ((storm && !check_keys(ps, storm, 1, "")) || (weather && !check_keys(ps, weather, 1, ""))
        || (wind && !check_keys(ps, wind, 1, "")))
        return 0;
    const int hemi = storm ? key_line(storm, "hemisphere") : 0;
    if (hemi && ps->sc->terms.rotation != SW_ROTATION_NONE)
        return scn_fail_at(ps, SW_ERR_PARSE, hemi, "[storm] hemisphere: not used with [run] rotation (accepted: "
                           "leave it out; the sign of the Coriolis parameter sets the storm's turning)");
    if (storm && weather)
        return scn_fail_at(ps, SW_ERR_PARSE, storm->line > weather->line ? storm->line : weather->line,
                           "[storm] (line %d) and [weather] (line %d) are both given (accepted: one of them)",
                           storm->line, weather->line);
    if (wind && !storm && !weather)
        return scn_fail_at(ps, SW_ERR_PARSE, wind->line, "[wind] without [storm] or [weather]: nothing blows "
                           "(accepted: [wind] beside one of them)");
    f->level_line = edges ? key_line(edges, "level_series") : 0;
    const int lv = edges ? key_line(edges, "level_variable") : 0;
    if (lv && !f->level_line)
        return scn_fail_at(ps, SW_ERR_PARSE, lv, "[edges] level_variable: not used without level_series");
    if (f->level_line) {
        int any = 0;
        for (int e = 0; e < 4; e++)
            any |= ps->sc->edges[e] == SW_EDGE_LEVEL;
        if (!any)
            return scn_fail_at(ps, SW_ERR_PARSE, f->level_line, "[edges] level_series: no edge is `level` "
                               "(accepted: with at least one edge = level)");
    }
    if (storm || weather)
        ps->sc->terms.surface = 1;
    return 1;
}

/* ---- positions: from the numbers as written to model metres (scenario.h) -------------------- */

/* A problem found while placing positions: the reader reports it through scn_fail_at, sw_scenario_place
 * through sw_fail, both with its line. */
typedef struct {
    sw_status code;
    int line;
    char msg[SW_ERROR_MSG_MAX];
} place_problem;

static int place_fail(place_problem *p, sw_status code, int line, const char *fmt, ...)
    __attribute__((format(printf, 4, 5)));
static int place_fail(place_problem *p, sw_status code, int line, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(p->msg, sizeof p->msg, fmt, ap);
    va_end(ap);
    p->code = code;
    p->line = line;
    return 0;
}

/* A coordinate as it was written: "12 km", "170.5 deg", "3". */
static void format_coord(char *out, size_t n, double v, sw_unit_kind unit)
{
    if (unit == SW_UNIT_LENGTH)
        format_length(out, n, v);
    else
        snprintf(out, n, unit == SW_UNIT_ANGLE ? "%g deg" : "%g", v);
}

/* One coordinate *v written with `unit` along `axis`, of key k (NULL: a point's, scn_point_key): checked
 * against the grid's kind, and with commit set turned into model metres: a position moved onto the grid's
 * longitudes (scn_coord_to_m), an offset (a file source's, a fault's: `offset` set) without the move by
 * 360 deg. `what` names it in a message ("[source main] x"). */
static int place_value(const sw_grid *g, const key_def *k, int axis, double *v, sw_unit_kind unit, const char *what,
                       int line, int commit, int offset, place_problem *p)
{
    char why[512], txt[64];
    sw_status st = scn_check_coord(k, axis, *v, unit, (int)g->kind, why, sizeof why);
    if (st != SW_OK) {
        format_coord(txt, sizeof txt, *v, unit);
        return place_fail(p, st, line, "%s = %s: %s", what, txt, why);
    }
    if (commit && sw_grid_geographic(g))
        *v = offset ? sw_grid_deg(g, *v) : scn_coord_to_m(g, axis, *v);
    return 1;
}

static int place_coord(const sw_grid *g, const key_def *k, int axis, double *v, sw_unit_kind unit, const char *what,
                       int line, int commit, place_problem *p)
{
    return place_value(g, k, axis, v, unit, what, line, commit, 0, p);
}

static int place_offset(const sw_grid *g, const key_def *k, int axis, double *v, sw_unit_kind unit, const char *what,
                        int line, int commit, place_problem *p)
{
    return place_value(g, k, axis, v, unit, what, line, commit, 1, p);
}

/* Every position of sc: checked against sc->grid's kind (commit 0), or converted (commit 1). */
static int place_positions(sw_scenario *sc, int commit, place_problem *p)
{
    const sw_grid *g = &sc->grid;
    char what[LABEL_MAX + 96];
    const section_def *src = scn_find_section_def("source", NULL);
    for (size_t i = 0; i < sc->n_sources; i++) {
        sw_source_spec *s = &sc->sources[i];
        if (s->shape == SW_SOURCE_FILE) {   /* its offsets, converted without the longitude's move by 360 deg */
            snprintf(what, sizeof what, "[source %s] x_offset", s->name);
            if (!place_offset(g, scn_find_key(src, "x_offset", NULL), SCN_AXIS_X, &s->x_offset_m, s->x_offset_unit,
                              what, s->line, commit, p))
                return 0;
            snprintf(what, sizeof what, "[source %s] y_offset", s->name);
            if (!place_offset(g, scn_find_key(src, "y_offset", NULL), SCN_AXIS_Y, &s->y_offset_m, s->y_offset_unit,
                              what, s->line, commit, p))
                return 0;
            continue;
        }
        snprintf(what, sizeof what, "[source %s] x", s->name);
        if (!place_coord(g, scn_find_key(src, "x", NULL), SCN_AXIS_X, &s->x_m, s->x_unit, what, s->line, commit, p))
            return 0;
        snprintf(what, sizeof what, "[source %s] y", s->name);
        if (!place_coord(g, scn_find_key(src, "y", NULL), SCN_AXIS_Y, &s->y_m, s->y_unit, what, s->line, commit, p))
            return 0;
    }
    const section_def *fdef = scn_find_section_def("fault", NULL);
    for (size_t i = 0; i < sc->n_faults; i++) {
        sw_fault_spec *f = &sc->faults[i];
        struct { const char *key; double *v; sw_unit_kind unit; int axis, use, offset; } c[6] = {
            { "x", &f->x_m, f->x_unit, SCN_AXIS_X, !f->segments[0], 0 },
            { "y", &f->y_m, f->y_unit, SCN_AXIS_Y, !f->segments[0], 0 },
            { "hypocentre_x", &f->hypo_x_m, f->hypo_x_unit, SCN_AXIS_X, f->rupture_speed_ms > 0, 0 },
            { "hypocentre_y", &f->hypo_y_m, f->hypo_y_unit, SCN_AXIS_Y, f->rupture_speed_ms > 0, 0 },
            { "x_offset", &f->x_offset_m, f->x_offset_unit, SCN_AXIS_X, 1, 1 },
            { "y_offset", &f->y_offset_m, f->y_offset_unit, SCN_AXIS_Y, 1, 1 },
        };
        for (int q = 0; q < 6; q++) {
            if (!c[q].use)
                continue;
            snprintf(what, sizeof what, "[fault %s] %s", f->name, c[q].key);
            const key_def *k = scn_find_key(fdef, c[q].key, NULL);
            if (!(c[q].offset ? place_offset : place_coord)(g, k, c[q].axis, c[q].v, c[q].unit, what, f->line, commit,
                                                             p))
                return 0;
        }
    }
    static const char *const feature_kind[] = { "bay", "island", "shoal" };   /* by sw_feature_kind */
    for (size_t i = 0; i < sc->n_features; i++) {
        sw_feature *f = &sc->features[i];
        const section_def *def = scn_find_section_def(feature_kind[f->kind], NULL);
        snprintf(what, sizeof what, "[%s %s] x", feature_kind[f->kind], f->name);
        if (!place_coord(g, scn_find_key(def, "x", NULL), SCN_AXIS_X, &f->x_m, f->x_unit, what, f->line, commit, p))
            return 0;
        snprintf(what, sizeof what, "[%s %s] y", feature_kind[f->kind], f->name);
        if (!place_coord(g, scn_find_key(def, "y", NULL), SCN_AXIS_Y, &f->y_m, f->y_unit, what, f->line, commit, p))
            return 0;
    }
    if (!sc->bed_file[0] && sc->coast != SW_COAST_NONE && sc->shoreline_line) {
        const int axis = sc->coast == SW_COAST_WEST || sc->coast == SW_COAST_EAST ? SCN_AXIS_X : SCN_AXIS_Y;
        if (!place_coord(g, axis == SCN_AXIS_X ? scn_find_key(scn_find_section_def("seabed", NULL), "shoreline", NULL)
                         : scn_point_key(SCN_AXIS_Y), axis, &sc->shoreline_m, sc->shoreline_unit, "[seabed] shoreline",
                         sc->shoreline_line, commit, p))
            return 0;
    }
    for (size_t i = 0; i < sc->n_gauges; i++) {
        sw_gauge_spec *gs = &sc->gauges[i];
        char tx[64], ty[64];
        format_coord(tx, sizeof tx, gs->x_m, gs->x_unit);
        format_coord(ty, sizeof ty, gs->y_m, gs->y_unit);
        for (int a = 0; a < 2; a++) {
            char why[512];
            double *v = a ? &gs->y_m : &gs->x_m;
            sw_unit_kind u = a ? gs->y_unit : gs->x_unit;
            sw_status st = scn_check_coord(NULL, a, *v, u, (int)g->kind, why, sizeof why);
            if (st != SW_OK)
                return place_fail(p, st, gs->line, "[gauges] %s = %s, %s: %s: %s", gs->name, tx, ty, a ? "y" : "x", why);
        }
        if (commit && sw_grid_geographic(g)) {
            gs->x_m = scn_coord_to_m(g, SCN_AXIS_X, gs->x_m);
            gs->y_m = scn_coord_to_m(g, SCN_AXIS_Y, gs->y_m);
        }
    }
    return 1;
}

/* The rules the reader applies when [grid] gives the kind, for a kind that came from the seabed file:
 * rotation and the atmosphere. Changes nothing (the rotation's default is set by the caller). */
static int place_rules(const sw_scenario *sc, place_problem *p)
{
    const int geo = sw_grid_geographic(&sc->grid);
    const sw_rotation_kind r = sc->terms.rotation;
    if (geo && (r == SW_ROTATION_F_PLANE || r == SW_ROTATION_BETA_PLANE))
        return place_fail(p, SW_ERR_PARSE, sc->rotation_line, "[run] rotation = %s: the grid is geographic (from "
                          "[seabed] file), where the sphere gives f (accepted: sphere, the default there, or none)",
                          sw_rotation_name(r));
    if (!geo && r == SW_ROTATION_SPHERE)
        return place_fail(p, SW_ERR_PARSE, sc->rotation_line, "[run] rotation = sphere: only on a geographic grid, and "
                          "the grid is projected (accepted: none, f-plane, beta-plane)");
    if (geo && (sc->forcing.storm || sc->forcing.weather))
        return place_fail(p, SW_ERR_PARSE, sc->forcing.storm ? sc->forcing.storm_line : sc->forcing.weather_line,
                          "%s: not yet available on geographic grids (the grid from [seabed] file is one); use a "
                          "projected grid", sc->forcing.storm ? "[storm]" : "[weather]");
    return 1;
}

/* Whether (x, y) (m) lies on grid g, its edges included; on a geographic grid within a micrometre, for
 * the round-off of degrees turned into metres. */
static int on_grid(const sw_grid *g, double x, double y)
{
    const double eps = sw_grid_geographic(g) ? 1e-6 : 0.0;
    const double x1 = g->x0_m + (double)g->nx * g->dx_m, y1 = g->y0_m + (double)g->ny * g->dy_m;
    return x >= g->x0_m - eps && x <= x1 + eps && y >= g->y0_m - eps && y <= y1 + eps;
}

sw_status sw_scenario_place(sw_scenario *sc, sw_error *err)
{
    if (!sc)
        return sw_fail(err, SW_ERR_USAGE, "sw_scenario_place: no scenario");
    if (sc->positions_placed)
        return SW_OK;
    place_problem p = { 0 };
    if (!place_rules(sc, &p) || !place_positions(sc, 0, &p))
        return sw_fail(err, p.code, "%s:%d: %s", sc->path, p.line, p.msg);
    (void)place_positions(sc, 1, &p);   /* checked above: converts */
    if (sw_grid_geographic(&sc->grid) && !sc->rotation_written && sc->terms.rotation == SW_ROTATION_NONE)
        sc->terms.rotation = SW_ROTATION_SPHERE;
    sc->positions_placed = 1;
    return SW_OK;
}

/* With the grid known (from [grid]), the positions in model metres. */
static int finish_positions(parse_state *ps)
{
    sw_scenario *sc = ps->sc;
    if (!sc->has_grid)
        return 1;   /* the grid comes from the seabed file: sw_scenario_place, once it is read */
    place_problem p = { 0 };
    if (!place_positions(sc, 0, &p))
        return scn_fail_at(ps, p.code, p.line, "%s", p.msg);
    (void)place_positions(sc, 1, &p);
    sc->positions_placed = 1;
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
        if (on_grid(g, gs->x_m, gs->y_m))
            continue;
        if (sw_grid_geographic(g))
            return scn_fail_at(ps, SW_ERR_RANGE, gs->line, "[gauges] %s = %.10g deg, %.10g deg: outside the domain "
                               "(accepted: %.10g <= longitude <= %.10g deg, %.10g <= latitude <= %.10g deg)", gs->name,
                               sw_grid_to_deg(g, gs->x_m), sw_grid_to_deg(g, gs->y_m), sw_grid_to_deg(g, g->x0_m),
                               sw_grid_to_deg(g, x1), sw_grid_to_deg(g, g->y0_m), sw_grid_to_deg(g, y1));
        char a[4][32], px[32], py[32];
        format_length(a[0], sizeof a[0], g->x0_m);
        format_length(a[1], sizeof a[1], x1);
        format_length(a[2], sizeof a[2], g->y0_m);
        format_length(a[3], sizeof a[3], y1);
        format_length(px, sizeof px, gs->x_m);
        format_length(py, sizeof py, gs->y_m);
        return scn_fail_at(ps, SW_ERR_RANGE, gs->line, "[gauges] %s = %s, %s: outside the domain (accepted: %s <= "
                           "x <= %s, %s <= y <= %s)", gs->name, px, py, a[0], a[1], a[2], a[3]);
    }
    return 1;
}

/* The rules that need the whole file, section by section in a fixed order. */
static int finish(parse_state *ps)
{
    if (!finish_run(ps, scn_find_section(ps, S_RUN)) || !finish_seabed(ps, scn_find_section(ps, S_SEABED))
        || !finish_grid(ps, scn_find_section(ps, S_GRID)))
        return 0;
    if (!finish_edges(ps, scn_find_section(ps, S_EDGES)))
        return 0;
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
        case S_FAULT:
            if (!finish_fault(ps, sec))
                return 0;
            break;
        default:
            break;
        }
    }
    return finish_forcing(ps) && finish_positions(ps) && finish_gauges(ps) && scn_finish_sweep(ps);
}

/* ---- the grid's kind, before any key ------------------------------------------------------- */

/* Sets ps->grid_kind before any key is read, so that every coordinate is read knowing what it means
 * (scenario_impl.h, "coordinates"): the [grid] kind written; else projected when [grid] gives a size
 * (nx, ny, dx, dy, x0 or y0); else pending (the seabed file decides). A kind word the reader will refuse
 * counts as pending, so the refusal is the first problem reported. Only the first [grid] counts (the
 * reader refuses a second). Lines the reader refuses are skipped here. */
static void prescan_grid_kind(parse_state *ps)
{
    int in_grid = 0, seen = 0, kind = SCN_KIND_PENDING, bad_kind = 0, sized = 0;
    const char *s = ps->text, *end = ps->text + ps->len;
    for (int line = 1; s < end; line++) {
        const char *nl = memchr(s, '\n', (size_t)(end - s));
        const size_t n = nl ? (size_t)(nl - s) : (size_t)(end - s);
        const char *raw = s;
        s = nl ? nl + 1 : end;
        if (n > LINE_MAX_CHARS)
            continue;
        char clean[LINE_MAX_CHARS + 1], key[LINE_MAX_CHARS + 1], name[LINE_MAX_CHARS + 1];
        scn_clean_line(raw, n, line == 1, clean);
        if (clean[0] == '[') {
            char *close = strchr(clean, ']');
            if (close)
                *close = '\0';
            scn_split_section(clean + 1, key, name);
            in_grid = close && !seen && !strcmp(key, "grid") && !name[0];
            seen |= in_grid;
            continue;
        }
        const char *sep = strpbrk(clean, "=:");
        if (!in_grid || !sep)
            continue;
        memcpy(key, clean, (size_t)(sep - clean));
        key[sep - clean] = '\0';
        scn_trim(key);
        snprintf(name, sizeof name, "%s", sep + 1);
        scn_trim(name);
        if (!strcmp(key, "kind")) {
            kind = !strcmp(name, "projected") ? SW_GRID_PROJECTED : !strcmp(name, "geographic") ? SW_GRID_GEOGRAPHIC
                 : SCN_KIND_PENDING;
            bad_kind = kind == SCN_KIND_PENDING;
        }
        for (size_t q = 0; q < sizeof GRID_SIZE_KEYS / sizeof GRID_SIZE_KEYS[0]; q++)
            sized |= !strcmp(key, GRID_SIZE_KEYS[q]);
    }
    ps->grid_kind = bad_kind ? SCN_KIND_PENDING : kind != SCN_KIND_PENDING ? kind
                  : sized ? SW_GRID_PROJECTED : SCN_KIND_PENDING;
}

/* ---- entry points -------------------------------------------------------------------------- */

/* The first byte of text that is not part of well-formed UTF-8 (RFC 3629: no overlong forms, no
 * surrogates, nothing above U+10FFFF): its line (1-based), its byte within the line (1-based) in *col
 * and its value in *byte; 0 when the whole text is UTF-8. Titles, names and the text itself go into JSON
 * and NetCDF, which need it. */
static int utf8_first_bad(const char *text, size_t *col, unsigned *byte)
{
    const unsigned char *p = (const unsigned char *)text, *line_start = p;
    int line = 1;
    while (*p) {
        unsigned c = *p;
        size_t more = c < 0x80 ? 0 : (c & 0xE0) == 0xC0 ? 1 : (c & 0xF0) == 0xE0 ? 2 : (c & 0xF8) == 0xF0 ? 3 : 4;
        unsigned lo = 0x80, hi = 0xBF;   /* the range of the second byte */
        if (c == 0xE0)
            lo = 0xA0;                    /* overlong three-byte form */
        else if (c == 0xED)
            hi = 0x9F;                    /* surrogates */
        else if (c == 0xF0)
            lo = 0x90;                    /* overlong four-byte form */
        else if (c == 0xF4)
            hi = 0x8F;                    /* above U+10FFFF */
        int ok = more < 4 && c != 0xC0 && c != 0xC1 && c < 0xF5;
        for (size_t k = 1; ok && k <= more; k++)
            ok = k == 1 ? p[1] >= lo && p[1] <= hi : p[k] >= 0x80 && p[k] <= 0xBF;
        if (!ok) {
            *col = (size_t)(p - line_start) + 1;
            *byte = c;
            return line;
        }
        if (c == '\n') {
            line++;
            line_start = p + 1;
        }
        p += more + 1;
    }
    return 0;
}

/* Parses sc->text; sc->path and sc->dir are set. On failure fills err; the caller frees. When
 * fail_line / bare are not NULL they receive the failing line (INT_MAX: none) and the message
 * without its "NAME:LINE: " prefix (size SW_ERROR_MSG_MAX). */
sw_status scn_parse_text(sw_scenario *sc, sw_error *err, int *fail_line, char *bare)
{
    parse_state *ps = calloc(1, sizeof *ps);
    if (!ps)
        return sw_fail(err, SW_ERR_NOMEM, "%s: out of memory while parsing", sc->path);
    ps->sc = sc;
    ps->name = sc->path;
    ps->text = sc->text;
    ps->len = strlen(sc->text);
    ps->edges_all = -1;
    size_t bad_col = 0;
    unsigned bad_byte = 0;
    const int bad_line = utf8_first_bad(sc->text, &bad_col, &bad_byte);
    if (bad_line > 0)
        scn_fail_at(ps, SW_ERR_PARSE, bad_line, "byte %zu of the line (0x%02X) is not UTF-8 (accepted: a UTF-8 "
                    "text file; titles and names are copied into JSON and NetCDF)", bad_col, bad_byte);
    prescan_grid_kind(ps);
    for (size_t i = 0; i < scn_n_sections; i++)
        apply_defaults(ps, NULL, &scn_sections[i], IN_SCENARIO);

    int rc = ini_parse_stream(read_line, ps, on_key, ps);
    if (rc > 0 && (!ps->failed || rc < ps->fail_line))
        syntax_error(ps, rc);
    else if (rc < 0 && !ps->failed)
        scn_fail_at(ps, SW_ERR_NOMEM, 0, "the INI reader could not allocate its line buffer");
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

static sw_status parse_text(sw_scenario *sc, sw_error *err) { return scn_parse_text(sc, err, NULL, NULL); }

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
