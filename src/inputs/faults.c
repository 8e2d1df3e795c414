/* faults.c - a scenario's [fault NAME] sections as one list of rectangular segments, and the sea-surface
 * displacement they make, at once or in time (faults.h; docs/faults.md).
 *
 * Collecting. Each section gives one segment from its keys, or one per row of its segment table (read with
 * table_text.c once the grid is known, positions in m or km on a projected grid and in degrees on a
 * geographic one). Then every segment is moved as its section says, in this order: turned clockwise by the
 * section's `rotation` about the centroid C of the reference points of ALL the scenario's segments as
 * written (strike + rotation; the point on the plane about C: on a geographic grid east distances are
 * x cos(latitude of C)), shifted by `x_offset`, `y_offset`, and its slip and opening multiplied by
 * `slip_factor`. The hypocentre turns and moves with its section. Because every section turns about the
 * same C, a sweep that adds an angle to every section's rotation turns the whole rupture rigidly.
 *
 * Timing. A segment with rupture_speed starts when the front, spreading from the hypocentre at that
 * speed, reaches the centre of its rectangle: start = distance / speed, the distance on the ground
 * (great circle on a geographic grid), in three dimensions when hypocentre_depth is given. Its slip then
 * grows linearly over `rise` (all at once when rise = 0). A segment with start = rise = 0 is INSTANT: it
 * is in the initial elevation and never moves in sw_faults_increment.
 *
 * From the floor to the surface. For the segments selected, with weights w (1, or the share of the slip
 * gained in a time interval), the floor's uplift is Okada's u_z (sw_okada_field), plus, for segments with
 * `horizontal`, u_x dh/dx + u_y dh/dy (Tanioka & Satake 1996, h the still-water depth, positive down: a
 * floor moving towards deeper water brings shallower floor over a point, which rises). The slope is a
 * centred difference over the wet neighbours (one-sided beside land or the grid's edge, 0 without a wet
 * neighbour), in true metres (dx cos(latitude) on a geographic grid). Segments with surface = kajiura
 * have their summed floor uplift filtered by 1 / cosh(k h) (sw_kajiura_filter); the others give the sea
 * surface the floor's uplift. Everything is linear in the slip, so the increments of a rupture in time sum
 * to its full surface.
 *
 * Invariant: the result depends on the set, the grid and the depth alone, never on the thread count
 * (sw_okada_field sums each cell's faults in index order; the loops here are per cell).
 */
#include "inputs/faults.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "inputs/kajiura.h"
#include "inputs/table_text.h"

#define FT_PI 3.14159265358979323846
#define FT_RAD (FT_PI / 180.0)

/* ---- the segment table ------------------------------------------------------------------------------ */

enum { C_X, C_Y, C_DEPTH, C_LENGTH, C_WIDTH, C_STRIKE, C_DIP, C_RAKE, C_SLIP, C_START, C_RISE, C_OPENING, C_N };

static const sw_table_unit U_POS[] = { { "m", 1.0 }, { "km", 1e3 }, { "deg", 1.0 }, { NULL, 0 } };
static const sw_table_unit U_LEN[] = { { "m", 1.0 }, { "km", 1e3 }, { NULL, 0 } };
static const sw_table_unit U_ANG[] = { { "deg", 1.0 }, { NULL, 0 } };
static const sw_table_unit U_SLIP[] = { { "m", 1.0 }, { "cm", 0.01 }, { NULL, 0 } };
static const sw_table_unit U_TIME[] = { { "s", 1.0 }, { "min", 60.0 }, { "h", 3600.0 }, { NULL, 0 } };

static const sw_table_column COLS[C_N] = {
    [C_X] = { "x", U_POS, 1, 0 },         [C_Y] = { "y", U_POS, 1, 0 },
    [C_DEPTH] = { "depth", U_LEN, 1, 0 }, [C_LENGTH] = { "length", U_LEN, 1, 0 },
    [C_WIDTH] = { "width", U_LEN, 1, 0 }, [C_STRIKE] = { "strike", U_ANG, 1, 0 },
    [C_DIP] = { "dip", U_ANG, 1, 0 },     [C_RAKE] = { "rake", U_ANG, 1, 0 },
    [C_SLIP] = { "slip", U_SLIP, 1, 0 },  [C_START] = { "start", U_TIME, 0, 0 },
    [C_RISE] = { "rise", U_TIME, 0, 0 },  [C_OPENING] = { "opening", U_SLIP, 0, 0 },
};

/* The range of a row's value, as the [fault] key of the same name accepts it (scenario.h SW_FAULT_*). */
typedef struct {
    int col;
    int gt;            /* 1: lo excluded */
    double lo, hi;     /* base units */
    const char *accepted;
} row_range;

static const row_range ROW_RANGES[] = {
    { C_DEPTH, 0, 0, SW_FAULT_DEPTH_MAX_M, "0 <= depth <= 100 km, the top edge below the sea floor" },
    { C_LENGTH, 1, 0, SW_FAULT_SIZE_MAX_M, "0 < length <= 2000 km" },
    { C_WIDTH, 1, 0, SW_FAULT_SIZE_MAX_M, "0 < width <= 2000 km" },
    { C_STRIKE, 0, -360, 360, "-360 <= strike <= 360 deg" },
    { C_DIP, 1, 0, 90, "0 < dip <= 90 deg" },
    { C_RAKE, 0, -360, 360, "-360 <= rake <= 360 deg" },
    { C_SLIP, 0, 0, SW_FAULT_SLIP_MAX_M, "0 <= slip <= 200 m" },
    { C_START, 0, 0, SW_FAULT_START_MAX_S, "0 <= start <= 30 d" },
    { C_RISE, 0, 0, SW_FAULT_RISE_MAX_S, "0 <= rise <= 1 d" },
    { C_OPENING, 0, -SW_FAULT_SLIP_MAX_M, SW_FAULT_SLIP_MAX_M, "|opening| <= 200 m" },
};

/* A growing list of segments. */
typedef struct {
    sw_fault_segment *seg;
    size_t n, cap;
} seg_list;

static sw_fault_segment *seg_push(seg_list *l)
{
    if (l->n == l->cap) {
        size_t cap = l->cap ? 2 * l->cap : 16;
        sw_fault_segment *p = realloc(l->seg, cap * sizeof *p);
        if (!p)
            return NULL;
        l->seg = p;
        l->cap = cap;
    }
    sw_fault_segment *s = &l->seg[l->n++];
    memset(s, 0, sizeof *s);
    return s;
}

/* The segment of section f (index i) with everything but its geometry: elastic constants, surface, timing
 * defaults. */
static void seg_defaults(sw_fault_segment *s, const sw_fault_spec *f, int i)
{
    s->f.poisson = f->poisson;
    s->f.opening_m = f->opening_m;
    s->rigidity_pa = f->rigidity_pa;
    s->start_s = f->start_s;
    s->rise_s = f->rise_s;
    s->kajiura = f->kajiura;
    s->horizontal = f->horizontal;
    s->section = i;
    s->line = f->line;
}

/* Whether value v meets range r. */
static int in_range(const row_range *r, double v)
{
    return (r->gt ? v > r->lo : v >= r->lo) && v <= r->hi;
}

/* The column header as written, "dip[deg]", into buf. */
static void col_text(const sw_table *t, int c, char *buf, size_t n)
{
    if (t->col[c].unit[0])
        snprintf(buf, n, "%s[%s]", COLS[c].name, t->col[c].unit);
    else
        snprintf(buf, n, "%s", COLS[c].name);
}

/* The table's columns against the grid's kind and against the section's own keys. */
static sw_status table_header_rules(const sw_scenario *sc, const sw_fault_spec *f, const char *path, const sw_table *t,
                                    sw_error *err)
{
    const int geo = sw_grid_geographic(&sc->grid);
    for (int c = C_X; c <= C_Y; c++) {
        char head[32];
        col_text(t, c, head, sizeof head);
        const int deg = !strcmp(t->col[c].unit, "deg");
        if (geo && !deg)
            return sw_fail(err, SW_ERR_PARSE, "%s:%zu: column %s: a length on a geographic grid (accepted: %s[deg], "
                           "the %s)", path, t->header_line, head, COLS[c].name, c == C_X ? "longitude" : "latitude");
        if (!geo && deg)
            return sw_fail(err, SW_ERR_PARSE, "%s:%zu: column %s: degrees on a projected grid (accepted: %s[m] or "
                           "%s[km]; degrees need [grid] kind = geographic)", path, t->header_line, head, COLS[c].name,
                           COLS[c].name);
    }
    static const struct { int col; const char *key; } BOTH[] = {
        { C_START, "start" }, { C_START, "rupture_speed" }, { C_RISE, "rise" }, { C_OPENING, "opening" },
    };
    for (size_t q = 0; q < sizeof BOTH / sizeof BOTH[0]; q++) {
        const int line = q == 0 ? f->start_line : q == 1 ? f->speed_line : q == 2 ? f->rise_line : f->opening_line;
        if (t->col[BOTH[q].col].present && line)
            return sw_fail(err, SW_ERR_PARSE, "%s:%zu: column '%s' and [fault %s] %s (%s:%d) are both given "
                           "(accepted: one of them)", path, t->header_line, COLS[BOTH[q].col].name, f->name,
                           BOTH[q].key, sc->path, line);
    }
    return SW_OK;
}

/* One row r of table t as a segment of section f (index i): values checked, positions placed. */
static sw_status table_row(const sw_scenario *sc, const sw_fault_spec *f, int i, const char *path, const sw_table *t,
                           size_t r, sw_fault_segment *s, sw_error *err)
{
    const sw_grid *g = &sc->grid;
    const size_t line = t->line[r];
    for (size_t q = 0; q < sizeof ROW_RANGES / sizeof ROW_RANGES[0]; q++) {
        const row_range *rr = &ROW_RANGES[q];
        if (!t->col[rr->col].present)
            continue;
        const double v = sw_table_at(t, r, (size_t)rr->col);
        if (!in_range(rr, v))
            return sw_fail(err, SW_ERR_RANGE, "%s:%zu: %s = %.10g%s%s: out of range (accepted: %s)", path, line,
                           COLS[rr->col].name, v / t->col[rr->col].factor, t->col[rr->col].unit[0] ? " " : "",
                           t->col[rr->col].unit, rr->accepted);
    }
    double x = sw_table_at(t, r, C_X), y = sw_table_at(t, r, C_Y);
    if (sw_grid_geographic(g)) {
        if (!(x >= -180 && x <= 360))
            return sw_fail(err, SW_ERR_RANGE, "%s:%zu: x = %.10g deg: out of range (accepted: the top edge's "
                           "longitude, -180 <= x <= 360 deg)", path, line, x);
        if (!(y >= -90 && y <= 90))
            return sw_fail(err, SW_ERR_RANGE, "%s:%zu: y = %.10g deg: out of range (accepted: the top edge's "
                           "latitude, -90 <= y <= 90 deg)", path, line, y);
        x = sw_scenario_lon_m(g, x);
        y = sw_grid_deg(g, y);
    }
    const double depth = sw_table_at(t, r, C_DEPTH);
    if (depth == 0 && !f->surface_rupture)
        return sw_fail(err, SW_ERR_RANGE, "%s:%zu: depth = 0 %s: the segment's top edge breaks the sea floor "
                       "(accepted: depth > 0, or surface_rupture = accept in [fault %s] at %s:%d)", path, line,
                       t->col[C_DEPTH].unit, f->name, sc->path, f->line);
    seg_defaults(s, f, i);
    s->line = (int)line;
    s->f.x_m = x;
    s->f.y_m = y;
    s->f.depth_m = depth;
    s->f.length_m = sw_table_at(t, r, C_LENGTH);
    s->f.width_m = sw_table_at(t, r, C_WIDTH);
    s->f.strike_deg = sw_table_at(t, r, C_STRIKE);
    s->f.dip_deg = sw_table_at(t, r, C_DIP);
    s->f.rake_deg = sw_table_at(t, r, C_RAKE);
    s->f.slip_m = sw_table_at(t, r, C_SLIP);
    if (t->col[C_OPENING].present)
        s->f.opening_m = sw_table_at(t, r, C_OPENING);
    if (t->col[C_START].present)
        s->start_s = sw_table_at(t, r, C_START);
    if (t->col[C_RISE].present)
        s->rise_s = sw_table_at(t, r, C_RISE);
    return SW_OK;
}

/* Appends the rows of section f's segment table (index i) to l. */
static sw_status read_table(const sw_scenario *sc, const sw_fault_spec *f, int i, seg_list *l, sw_error *err)
{
    char path[SW_PATH_MAX];
    sw_status st = sw_scenario_resolve(sc, f->segments, path, sizeof path, err);
    if (st != SW_OK) {
        sw_error_prefix(err, "%s:%d: [fault %s] segments: ", sc->path, f->segments_line, f->name);
        return st;
    }
    sw_table t;
    st = sw_table_read(path, COLS, C_N, &t, err);
    if (st == SW_ERR_IO)   /* the file itself: say which section wants it */
        sw_error_prefix(err, "%s:%d: [fault %s] segments: ", sc->path, f->segments_line, f->name);
    if (st == SW_OK)
        st = table_header_rules(sc, f, path, &t, err);
    for (size_t r = 0; st == SW_OK && r < t.n_rows; r++) {
        sw_fault_segment *s = seg_push(l);
        if (!s)
            st = sw_fail(err, SW_ERR_NOMEM, "%s:%zu: out of memory for the segments", path, t.line[r]);
        else
            st = table_row(sc, f, i, path, &t, r, s, err);
    }
    sw_table_free(&t);
    return st;
}

/* ---- moving, turning and timing the segments ------------------------------------------------------- */

/* The point (x, y) turned clockwise by rot_deg about (cx, cy) on the plane about it: east distances are
 * (x - cx) cos(latitude of cy) on a geographic grid. */
static void turn_point(const sw_grid *g, double cx, double cy, double rot_deg, double *x, double *y)
{
    const double c = sw_grid_cos_lat(g, cy), ct = cos(rot_deg * FT_RAD), st = sin(rot_deg * FT_RAD);
    const double e = (*x - cx) * c, n = *y - cy;
    /* a bearing b becomes b + rot: (e, n) = r (sin b, cos b) */
    *x = cx + (e * ct + n * st) / c;
    *y = cy + (n * ct - e * st);
}

/* deg into [0, 360) */
static double wrap_360(double a)
{
    if (a >= 0 && a < 360)
        return a;
    a = fmod(a, 360.0);
    return a < 0 ? a + 360.0 : a;
}

/* deg into (-180, 180] */
static double wrap_180(double a)
{
    if (a > -180 && a <= 180)
        return a;
    a = fmod(a, 360.0);
    return a > 180 ? a - 360.0 : a <= -180 ? a + 360.0 : a;
}

/* The distance (m) on the ground between two points of grid g (great circle on a geographic grid,
 * haversine: Sinnott 1984). */
static double ground_distance(const sw_grid *g, double x1, double y1, double x2, double y2)
{
    if (!sw_grid_geographic(g))
        return hypot(x2 - x1, y2 - y1);
    const double R = g->radius_m, p1 = y1 / R, p2 = y2 / R;
    const double sp = sin(0.5 * (p2 - p1)), sl = sin(0.5 * (x2 - x1) / R);
    const double a = fmin(1.0, sp * sp + cos(p1) * cos(p2) * sl * sl);
    return 2.0 * R * asin(sqrt(a));
}

/* The centre of segment s's rectangle: its surface projection (x, y, m) and depth (m). The top edge's
 * centre lies W/2 up dip from it; down dip is the bearing strike + 90 deg. */
static void seg_centre(const sw_grid *g, const sw_okada_fault *f, double *x, double *y, double *depth)
{
    const double half = 0.5 * f->width_m, dip = f->dip_deg * FT_RAD, s = f->strike_deg * FT_RAD;
    const double h = half * cos(dip);       /* horizontal reach */
    const double e = h * cos(s), n = -h * sin(s);   /* (sin, cos) of strike + 90 deg */
    *x = f->x_m + e / sw_grid_cos_lat(g, f->y_m);
    *y = f->y_m + n;
    *depth = f->depth_m + half * sin(dip);
}

/* Rotation, offsets, slip factor and timing of the collected segments (see the top of this file). */
static void place_segments(const sw_scenario *sc, sw_fault_segment *seg, size_t n)
{
    const sw_grid *g = &sc->grid;
    double cx = 0, cy = 0;
    for (size_t k = 0; k < n; k++) {
        cx += seg[k].f.x_m;
        cy += seg[k].f.y_m;
    }
    if (n) {
        cx /= (double)n;
        cy /= (double)n;
    }
    for (size_t k = 0; k < n; k++) {
        sw_fault_segment *s = &seg[k];
        const sw_fault_spec *f = &sc->faults[s->section];
        if (f->rotation_deg != 0) {
            turn_point(g, cx, cy, f->rotation_deg, &s->f.x_m, &s->f.y_m);
            s->f.strike_deg += f->rotation_deg;
        }
        s->f.x_m += f->x_offset_m;
        s->f.y_m += f->y_offset_m;
        s->f.strike_deg = wrap_360(s->f.strike_deg);
        s->f.rake_deg = wrap_180(s->f.rake_deg);
        s->f.slip_m *= f->slip_factor;
        s->f.opening_m *= f->slip_factor;
        if (f->rupture_speed_ms > 0) {
            double hx = f->hypo_x_m, hy = f->hypo_y_m, x, y, depth;
            if (f->rotation_deg != 0)
                turn_point(g, cx, cy, f->rotation_deg, &hx, &hy);
            hx += f->x_offset_m;
            hy += f->y_offset_m;
            seg_centre(g, &s->f, &x, &y, &depth);
            const double d = ground_distance(g, hx, hy, x, y);
            const double dz = f->hypo_depth_given ? depth - f->hypo_depth_m : 0.0;
            s->start_s = hypot(d, dz) / f->rupture_speed_ms;
        }
    }
}

sw_status sw_faults_collect(const sw_scenario *sc, sw_fault_set *out, sw_error *err)
{
    if (out)
        memset(out, 0, sizeof *out);
    if (!sc || !out)
        return sw_fail(err, SW_ERR_USAGE, "sw_faults_collect: no scenario or output");
    if (sc->n_faults && !sc->positions_placed)
        return sw_fail(err, SW_ERR_USAGE, "%s: the faults' positions are not placed on the grid yet "
                       "(sw_scenario_place first)", sc->path);
    seg_list l = { 0 };
    sw_status st = SW_OK;
    double cutoff = 0;
    int everywhere = 0;
    for (size_t i = 0; st == SW_OK && i < sc->n_faults; i++) {
        const sw_fault_spec *f = &sc->faults[i];
        everywhere |= !(f->cutoff > 0);
        cutoff = fmax(cutoff, f->cutoff);
        if (f->segments[0]) {
            st = read_table(sc, f, (int)i, &l, err);
            continue;
        }
        sw_fault_segment *s = seg_push(&l);
        if (!s) {
            st = sw_fail(err, SW_ERR_NOMEM, "%s:%d: [fault %s]: out of memory", sc->path, f->line, f->name);
            break;
        }
        seg_defaults(s, f, (int)i);
        s->f.x_m = f->x_m;
        s->f.y_m = f->y_m;
        s->f.depth_m = f->depth_m;
        s->f.length_m = f->length_m;
        s->f.width_m = f->width_m;
        s->f.strike_deg = f->strike_deg;
        s->f.dip_deg = f->dip_deg;
        s->f.rake_deg = f->rake_deg;
        s->f.slip_m = f->slip_m;
    }
    if (st != SW_OK) {
        free(l.seg);
        return st;
    }
    place_segments(sc, l.seg, l.n);
    out->n = l.n;
    out->seg = l.seg;
    out->cutoff = everywhere ? 0.0 : cutoff;
    return SW_OK;
}

void sw_faults_free(sw_fault_set *s)
{
    if (!s)
        return;
    free(s->seg);
    memset(s, 0, sizeof *s);
}

/* ---- the sea surface --------------------------------------------------------------------------------- */

/* 1 for a segment that moves at t = 0, at once (in the initial elevation). */
static int is_instant(const sw_fault_segment *s)
{
    return s->start_s == 0 && s->rise_s == 0;
}

/* The share of segment s's slip gained by time t (s): 0 before its start, then linear over its rise. */
static double share_at(const sw_fault_segment *s, double t)
{
    if (s->rise_s > 0)
        return fmin(1.0, fmax(0.0, (t - s->start_s) / s->rise_s));
    return t >= s->start_s ? 1.0 : 0.0;
}

/* Adds u_x dh/dx + u_y dh/dy to floor_m at every wet cell of g (slopes over wet neighbours, true metres). */
static void add_slope_term(const sw_grid *g, const double *depth_m, double min_depth_m, const double *ux,
                           const double *uy, double *floor_m)
{
    const size_t nx = g->nx, ny = g->ny;
    for (size_t j = 0; j < ny; j++) {
        const double dx = g->dx_m * sw_grid_cos_lat(g, sw_grid_yc(g, j)), dy = g->dy_m;
        for (size_t i = 0; i < nx; i++) {
            const size_t k = j * nx + i;
            if (!(depth_m[k] >= min_depth_m))
                continue;
            const int w = i > 0 && depth_m[k - 1] >= min_depth_m, e = i + 1 < nx && depth_m[k + 1] >= min_depth_m;
            const int s = j > 0 && depth_m[k - nx] >= min_depth_m, n = j + 1 < ny && depth_m[k + nx] >= min_depth_m;
            const double hw = w ? depth_m[k - 1] : depth_m[k], he = e ? depth_m[k + 1] : depth_m[k];
            const double hs = s ? depth_m[k - nx] : depth_m[k], hn = n ? depth_m[k + nx] : depth_m[k];
            const double dhdx = (w || e) ? (he - hw) / ((double)(w + e) * dx) : 0.0;
            const double dhdy = (s || n) ? (hn - hs) / ((double)(s + n) * dy) : 0.0;
            floor_m[k] += ux[k] * dhdx + uy[k] * dhdy;
        }
    }
}

/* Adds to eta_m the sea surface of the segments of s with weight w[k] != 0, each at w[k] times its slip and
 * opening (see the top of this file). */
static sw_status add_surface(const sw_fault_set *s, const double *w, const sw_grid *g, const double *depth_m,
                             double min_depth_m, double *eta_m, sw_error *err)
{
    const size_t n = sw_grid_cells(g);
    int need_xy = 0, need_depth = 0;
    for (size_t k = 0; k < s->n; k++)
        if (w[k] != 0) {
            need_xy |= s->seg[k].horizontal;
            need_depth |= s->seg[k].horizontal || s->seg[k].kajiura;
        }
    if (need_depth && !depth_m)
        return sw_fail(err, SW_ERR_USAGE, "sw_faults_surface: the Kajiura filter and the horizontal term need the "
                       "depth field");
    sw_okada_fault *list = malloc((s->n ? s->n : 1) * sizeof *list);
    double *floor_m = malloc(n * sizeof *floor_m);
    double *ux = need_xy ? malloc(n * sizeof *ux) : NULL, *uy = need_xy ? malloc(n * sizeof *uy) : NULL;
    sw_status st = SW_OK;
    if (!list || !floor_m || (need_xy && (!ux || !uy)))
        st = sw_fail(err, SW_ERR_NOMEM, "out of memory for the faults' sea-floor displacement on %zu x %zu cells",
                     g->nx, g->ny);
    for (int kaj = 0; st == SW_OK && kaj <= 1; kaj++) {
        int any = 0;
        for (int hor = 0; st == SW_OK && hor <= 1; hor++) {
            size_t m = 0;
            for (size_t k = 0; k < s->n; k++) {
                const sw_fault_segment *sg = &s->seg[k];
                if (w[k] == 0 || sg->kajiura != kaj || sg->horizontal != hor)
                    continue;
                list[m] = sg->f;
                list[m].slip_m *= w[k];
                list[m].opening_m *= w[k];
                m++;
            }
            if (m == 0)
                continue;
            if (!any)
                memset(floor_m, 0, n * sizeof *floor_m);
            any = 1;
            if (hor) {
                memset(ux, 0, n * sizeof *ux);
                memset(uy, 0, n * sizeof *uy);
            }
            st = sw_okada_field(list, m, g, s->cutoff, hor ? ux : NULL, hor ? uy : NULL, floor_m, err);
            if (st == SW_OK && hor)
                add_slope_term(g, depth_m, min_depth_m, ux, uy, floor_m);
        }
        if (st != SW_OK || !any)
            continue;
        if (kaj)
            st = sw_kajiura_filter(g, depth_m, min_depth_m, floor_m, floor_m, err);
        for (size_t k = 0; st == SW_OK && k < n; k++)
            eta_m[k] += floor_m[k];
    }
    if (st != SW_OK && err)
        sw_error_prefix(err, "faults: ");
    free(list);
    free(floor_m);
    free(ux);
    free(uy);
    return st;
}

sw_status sw_faults_surface(const sw_fault_set *s, sw_faults_which which, const sw_grid *g, const double *depth_m,
                            double min_depth_m, double *eta_m, sw_error *err)
{
    if (!s || !g || !eta_m)
        return sw_fail(err, SW_ERR_USAGE, "sw_faults_surface: no fault set, grid or output");
    if (s->n == 0)
        return SW_OK;
    double *w = malloc(s->n * sizeof *w);
    if (!w)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for %zu fault segments", s->n);
    int any = 0;
    for (size_t k = 0; k < s->n; k++) {
        w[k] = which == SW_FAULTS_ALL || is_instant(&s->seg[k]) ? 1.0 : 0.0;
        any |= w[k] != 0;
    }
    sw_status st = any ? add_surface(s, w, g, depth_m, min_depth_m, eta_m, err) : SW_OK;
    free(w);
    return st;
}

sw_status sw_faults_increment(const sw_fault_set *s, double t0_s, double t1_s, const sw_grid *g,
                              const double *depth_m, double min_depth_m, double *inc_m, int *moved, sw_error *err)
{
    if (moved)
        *moved = 0;
    if (!s || !g || !inc_m || !moved)
        return sw_fail(err, SW_ERR_USAGE, "sw_faults_increment: no fault set, grid, output or flag");
    memset(inc_m, 0, sw_grid_cells(g) * sizeof *inc_m);
    if (s->n == 0 || !(t1_s > t0_s) || t0_s >= sw_faults_end(s))
        return SW_OK;
    double *w = malloc(s->n * sizeof *w);
    if (!w)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for %zu fault segments", s->n);
    int any = 0;
    for (size_t k = 0; k < s->n; k++) {
        const sw_fault_segment *sg = &s->seg[k];
        w[k] = is_instant(sg) ? 0.0 : share_at(sg, t1_s) - share_at(sg, t0_s);
        any |= w[k] != 0;
    }
    sw_status st = SW_OK;
    if (any) {
        st = add_surface(s, w, g, depth_m, min_depth_m, inc_m, err);
        *moved = st == SW_OK;
    }
    free(w);
    return st;
}

double sw_faults_end(const sw_fault_set *s)
{
    double end = 0;
    for (size_t k = 0; s && k < s->n; k++)
        if (!is_instant(&s->seg[k]))
            end = fmax(end, s->seg[k].start_s + s->seg[k].rise_s);
    return end;
}

double sw_faults_moment(const sw_fault_set *s)
{
    double m0 = 0;
    for (size_t k = 0; s && k < s->n; k++)
        m0 += sw_okada_moment(&s->seg[k].f, s->seg[k].rigidity_pa);
    return m0;
}
