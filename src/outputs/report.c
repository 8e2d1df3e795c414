/* report.c - plans and summaries for people and for scripts (see report.h). */
#include "outputs/report.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>

#include "base/cpu_share.h"
#include "base/omp_compat.h"
#include "forcing/drag.h"
#include "observers/gauges.h"

void sw_format_duration(double s, char *buf, size_t n)
{
    if (!isfinite(s)) {
        snprintf(buf, n, "-");
        return;
    }
    if (s < 60) {
        snprintf(buf, n, "%.1f s", s);
        return;
    }
    long long t = llround(s);
    long long h = t / 3600, mi = (t % 3600) / 60, se = t % 60;
    if (h > 0)
        snprintf(buf, n, "%lld h %02lld min %02lld s", h, mi, se);
    else
        snprintf(buf, n, "%lld min %02lld s", mi, se);
}

static double bytes_mb(size_t b) { return (double)b / (1024.0 * 1024.0); }

/* "just now", "5 min ago", "3 h ago" or "2 days ago" for an age in days, into buf. */
static void format_age(double days, char *buf, size_t n)
{
    double min = days * 1440;
    if (min < 1)
        snprintf(buf, n, "just now");
    else if (min < 60)
        snprintf(buf, n, "%.0f min ago", floor(min));
    else if (min < 48 * 60)
        snprintf(buf, n, "%.0f h ago", floor(min / 60));
    else
        snprintf(buf, n, "%.0f days ago", floor(days));
}

/* Water cells shallower than depth_m. */
static size_t cells_shallower(const sw_scenario *sc, const sw_setup *s, double depth_m)
{
    size_t n = 0;
    for (size_t k = 0; k < sw_grid_cells(&s->grid); k++)
        n += s->depth_m[k] >= sc->min_depth_m && s->depth_m[k] < depth_m;
    return n;
}

/* The plan's line about rotation and friction, with a warning where friction is stiff. */
static void print_terms(FILE *f, const sw_scenario *sc, const sw_setup *s)
{
    char line[256];
    sw_terms_describe(&sc->terms, line, sizeof line);
    fprintf(f, "Terms      %s\n", line);
    const double stiff = sw_terms_stiff_depth(&sc->terms, s->dt_s, sc->gravity_ms2);
    const size_t n = stiff > 0 ? cells_shallower(sc, s, stiff) : 0;
    if (n)
        fprintf(f, "           warning: friction is stiff in %zu water cells shallower than %.3g m%s: their "
                "velocities alternate in sign from step to step (docs/terms.md); a smaller dt or a larger "
                "min_depth avoids it\n", n, stiff, sc->terms.friction == SW_FRICTION_LINEAR ? "" : " (for a 1 m/s current)");
}

/* ---- the forcing: what the plan, the summary and their JSON say about it ---------------------------- */

/* The [storm], [weather], [wind] and [edges] level_series defaults, to name only what a scenario changes
 * (scenario_keys.c holds the same values as the keys' defaults). */
#define DFLT_AMBIENT_HPA 1013.0
#define DFLT_REDUCTION 0.8
#define DFLT_INFLOW_DEG 20.0
#define DFLT_TRANSLATION 0.5
#define DFLT_AIR_DENSITY 1.15
#define DFLT_WATER_DENSITY 1025.0

/* Appends printf-style text to the NUL-terminated buf of size n (truncating). */
static void append(char *buf, size_t n, const char *fmt, ...) __attribute__((format(printf, 3, 4)));
static void append(char *buf, size_t n, const char *fmt, ...)
{
    size_t used = strlen(buf);
    if (used + 1 >= n)
        return;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(buf + used, n - used, fmt, ap);
    va_end(ap);
}

static int has_forcing(const sw_scenario *sc)
{
    const sw_forcing_spec *fs = &sc->forcing;
    return fs->storm || fs->weather || fs->level_file[0];
}

/* One line naming the scenario's forcing, e.g. "storm track.txt (Holland 1980), slabs every 300 s,
 * shifted 20 km across; drag large-pond capped at 0.0025; level series tide.txt": the track or weather
 * file, the storm's update interval, every [storm] and [wind] setting that differs from its default,
 * and the level series. "none" without forcing. */
static void forcing_line(const sw_scenario *sc, char *buf, size_t n)
{
    const sw_forcing_spec *fs = &sc->forcing;
    buf[0] = '\0';
    if (!has_forcing(sc)) {
        append(buf, n, "none");
        return;
    }
    if (fs->storm) {
        append(buf, n, "storm %s (Holland 1980), slabs every %g s", fs->track, fs->update_s);
        if (fs->shift_across_m != 0 || fs->shift_along_m != 0) {
            append(buf, n, ", shifted");
            if (fs->shift_across_m != 0)
                append(buf, n, " %g km across", fs->shift_across_m / 1000);
            if (fs->shift_across_m != 0 && fs->shift_along_m != 0)
                append(buf, n, " and");
            if (fs->shift_along_m != 0)
                append(buf, n, " %g km along", fs->shift_along_m / 1000);
        }
        if (fs->dp_factor != 1)
            append(buf, n, ", pressure drop x %g", fs->dp_factor);
        if (fs->rmax_factor != 1)
            append(buf, n, ", rmax x %g", fs->rmax_factor);
        if (fs->speed_factor != 1)
            append(buf, n, ", speed x %g", fs->speed_factor);
        if (fs->ambient_hpa != DFLT_AMBIENT_HPA)
            append(buf, n, ", ambient %g hPa", fs->ambient_hpa);
        if (fs->reduction != DFLT_REDUCTION)
            append(buf, n, ", reduction %g", fs->reduction);
        if (fs->inflow_deg != DFLT_INFLOW_DEG)
            append(buf, n, ", inflow %g deg", fs->inflow_deg);
        if (fs->translation_fraction != DFLT_TRANSLATION)
            append(buf, n, ", translation fraction %g", fs->translation_fraction);
        if (fs->south)
            append(buf, n, ", southern hemisphere");
    } else if (fs->weather) {
        append(buf, n, "weather %s", fs->weather_file);
    }
    if (fs->storm || fs->weather) {
        const char *law = sw_drag_law_name((sw_drag_law)fs->drag_law);
        append(buf, n, "; drag %s", law ? law : "?");
        if (fs->drag_cap > 0)
            append(buf, n, " capped at %g", fs->drag_cap);
        if (fs->air_density_kgm3 != DFLT_AIR_DENSITY)
            append(buf, n, ", air %g kg/m3", fs->air_density_kgm3);
        if (fs->water_density_kgm3 != DFLT_WATER_DENSITY)
            append(buf, n, ", water %g kg/m3", fs->water_density_kgm3);
    }
    if (fs->level_file[0]) {
        append(buf, n, "%slevel series %s", fs->storm || fs->weather ? "; " : "", fs->level_file);
        if (fs->level_variable[0])
            append(buf, n, " (%s)", fs->level_variable);
    }
}

/* The plan's warning about a storm that never enters the domain into buf ("" when none). */
static void storm_warning(const sw_setup *s, char *buf, size_t n)
{
    buf[0] = '\0';
    const sw_storm_pass *p = &s->storm;
    if (!p->present || !p->outside)
        return;
    const double km = p->closest_m / 1000;
    snprintf(buf, n, "[storm] the track stays outside the domain for the whole run (closest approach %.*f km at "
             "%g h): the water will feel only the storm's outer winds", km < 10 ? 1 : 0, km,
             round(p->closest_time_s / 360) / 10);
}

/* The plan's Forcing line and its warning; nothing without forcing. */
static void print_forcing(FILE *f, const sw_scenario *sc, const sw_setup *s)
{
    if (!has_forcing(sc))
        return;
    char line[3 * SW_PATH_MAX + 512], warn[512];
    forcing_line(sc, line, sizeof line);
    fprintf(f, "Forcing    %s\n", line);
    storm_warning(s, warn, sizeof warn);
    if (warn[0])
        fprintf(f, "           warning: %s\n", warn);
}

/* ---- the faults: what the plan and its JSON say about them ------------------------------------------ */

/* The plan's Faults lines; nothing without [fault]. */
static void print_faults(FILE *f, const sw_setup *s)
{
    const sw_fault_summary *fs = &s->fault;
    if (!fs->sections)
        return;
    fprintf(f, "Faults     %zu section%s, %zu segment%s", fs->sections, fs->sections == 1 ? "" : "s", fs->segments,
            fs->segments == 1 ? "" : "s");
    if (fs->kajiura || fs->horizontal) {
        fprintf(f, " (");
        if (fs->kajiura)
            fprintf(f, "%zu with the Kajiura filter", fs->kajiura);
        if (fs->kajiura && fs->horizontal)
            fprintf(f, ", ");
        if (fs->horizontal)
            fprintf(f, "%zu with the horizontal term", fs->horizontal);
        fprintf(f, ")");
    }
    fprintf(f, ": M0 = %.3g N m, Mw %.2f (Hanks & Kanamori 1979)\n", fs->moment_nm, fs->magnitude);
    if (fs->whole_rupture) {
        char end[48];
        sw_format_duration(fs->end_s, end, sizeof end);
        fprintf(f, "           rupture in time: the last segment stops moving at %s; the whole rupture's sea surface "
                "over water: uplift up to %.3g m, subsidence down to %.3g m\n", end, fs->uplift_m, fs->subsidence_m);
    } else {
        fprintf(f, "           every segment moves at once at t = 0; the initial sea surface over water: uplift up "
                "to %.3g m, subsidence down to %.3g m\n", fs->uplift_m, fs->subsidence_m);
    }
}

/* "faults": null without [fault], else the plan's figures. */
static void add_faults(cJSON *o, const sw_setup *s)
{
    const sw_fault_summary *fs = &s->fault;
    if (!fs->sections) {
        cJSON_AddNullToObject(o, "faults");
        return;
    }
    cJSON *e = cJSON_AddObjectToObject(o, "faults");
    cJSON_AddNumberToObject(e, "sections", (double)fs->sections);
    cJSON_AddNumberToObject(e, "segments", (double)fs->segments);
    cJSON_AddNumberToObject(e, "kajiura_segments", (double)fs->kajiura);
    cJSON_AddNumberToObject(e, "horizontal_segments", (double)fs->horizontal);
    cJSON_AddNumberToObject(e, "moment_nm", fs->moment_nm);
    cJSON_AddNumberToObject(e, "magnitude_mw", fs->magnitude);
    cJSON_AddNumberToObject(e, "rupture_end_s", fs->end_s);
    cJSON_AddStringToObject(e, "peaks_of", fs->whole_rupture ? "whole rupture" : "initial surface");
    cJSON_AddNumberToObject(e, "uplift_max_m", fs->uplift_m);
    cJSON_AddNumberToObject(e, "subsidence_max_m", fs->subsidence_m);
    cJSON_AddNumberToObject(e, "memory_bytes", (double)fs->run_bytes);
}

/* ---- the source: what the plan and its JSON say about the initial sea surface ------------------------ */

/* A position (x, y) in metres as text: "lon 141.2 deg, lat 38.1 deg" on a geographic grid, "x 10 km, y 12 km"
 * otherwise. */
static void place_text(const sw_grid *g, double x, double y, char *buf, size_t n)
{
    if (sw_grid_geographic(g))
        snprintf(buf, n, "lon %.5g deg, lat %.5g deg", sw_grid_to_deg(g, x), sw_grid_to_deg(g, y));
    else
        snprintf(buf, n, "x %.4g km, y %.4g km", x / 1000, y / 1000);
}

/* What the initial surface is, in words: of t = 0, or of the final static surface of a rupture in time; "no
 * initial displacement" when nothing moves at t = 0. */
static const char *source_of(const sw_scenario *sc, const sw_setup *s)
{
    const sw_source_summary *o = &s->source;
    if (!o->any)
        return has_forcing(sc) ? "no initial displacement (the forcing drives the run)" : "no initial displacement";
    return o->final_surface ? "final static surface (every fault segment at its full slip)" : "initial surface";
}

/* The warning for budget b into buf ("" when it keeps all but SW_SOURCE_WARN_LOST of its volume): the share
 * lost and where it goes, on land (before the model zeroes land cells) or outside the grid. */
static void budget_warning(const sw_source_budget *b, char *buf, size_t n)
{
    buf[0] = '\0';
    const double lost = sw_source_lost_fraction(b);
    if (!(lost > SW_SOURCE_WARN_LOST))
        return;
    const double land = fmax(0.0, b->grid_m3 - b->water_m3), off = fmax(0.0, b->asked_m3 - b->grid_m3);
    char who[SW_NAME_MAX + 16];
    if (b->line > 0)
        snprintf(who, sizeof who, "source '%s'", b->name);
    else
        snprintf(who, sizeof who, "the faults");
    if (off <= 0.01 * land)
        snprintf(buf, n, "%s: %.0f %% of its displaced volume falls on land (%.2g of %.2g m^3)", who, 100 * lost,
                 land, b->asked_m3);
    else if (land <= 0.01 * off)
        snprintf(buf, n, "%s: %.0f %% of its displaced volume falls outside the grid (%.2g of %.2g m^3)", who,
                 100 * lost, off, b->asked_m3);
    else
        snprintf(buf, n, "%s: %.0f %% of its displaced volume is lost: %.2g m^3 on land and %.2g m^3 outside the "
                 "grid, of %.2g m^3", who, 100 * lost, land, off, b->asked_m3);
}

/* The plan's Source lines: the peaks and where, the extent, the displaced volume, and a warning per source
 * that loses more than SW_SOURCE_WARN_LOST of its volume. */
static void print_source(FILE *f, const sw_scenario *sc, const sw_setup *s)
{
    const sw_source_summary *o = &s->source;
    const sw_grid *g = &s->grid;
    if (!o->any) {
        fprintf(f, "Source     %s\n", source_of(sc, s));
        return;
    }
    char up[80], down[80], box[128];
    place_text(g, o->uplift_x_m, o->uplift_y_m, up, sizeof up);
    place_text(g, o->subsidence_x_m, o->subsidence_y_m, down, sizeof down);
    if (sw_grid_geographic(g))
        snprintf(box, sizeof box, "lon %.5g to %.5g deg, lat %.5g to %.5g deg", sw_grid_to_deg(g, o->x0_m),
                 sw_grid_to_deg(g, o->x1_m), sw_grid_to_deg(g, o->y0_m), sw_grid_to_deg(g, o->y1_m));
    else
        snprintf(box, sizeof box, "x %.4g to %.4g km, y %.4g to %.4g km", o->x0_m / 1000, o->x1_m / 1000,
                 o->y0_m / 1000, o->y1_m / 1000);
    fprintf(f, "Source     %s over water: uplift %.3g m", source_of(sc, s), o->uplift_m);
    if (o->uplift_m > 0)
        fprintf(f, " at %s", up);
    fprintf(f, ", subsidence %.3g m", o->subsidence_m);
    if (o->subsidence_m < 0)
        fprintf(f, " at %s", down);
    fprintf(f, "\n           extent: %.3g km^2 of cells with |eta| above %.2g m (%g %% of the peak), in %s\n",
            o->area_m2 / 1e6, o->threshold_m, 100 * SW_SOURCE_EXTENT_SHARE, box);
    fprintf(f, "           displaced volume %.3g m^3 (raised %.3g m^3, lowered %.3g m^3)\n", o->volume_m3,
            o->positive_m3, o->negative_m3);
    for (size_t q = 0; q < o->n_budgets; q++) {
        char w[SW_NAME_MAX + 200];
        budget_warning(&o->budget[q], w, sizeof w);
        if (w[0])
            fprintf(f, "           warning: %s\n", w);
    }
}

/* "source": the plan's figures on the initial surface and each source's volume asked against kept. */
static void add_source(cJSON *o, const sw_scenario *sc, const sw_setup *s)
{
    const sw_source_summary *so = &s->source;
    const sw_grid *g = &s->grid;
    const int geo = sw_grid_geographic(g);
    cJSON *e = cJSON_AddObjectToObject(o, "source");
    cJSON_AddStringToObject(e, "surface", source_of(sc, s));
    cJSON_AddBoolToObject(e, "displaced", so->any);
    cJSON_AddBoolToObject(e, "final_surface", so->final_surface);
    cJSON_AddNumberToObject(e, "uplift_max_m", so->uplift_m);
    cJSON_AddNumberToObject(e, "subsidence_max_m", so->subsidence_m);
    struct { const char *key; double x, y; int on; } at[] = {
        { "uplift_at", so->uplift_x_m, so->uplift_y_m, so->uplift_m > 0 },
        { "subsidence_at", so->subsidence_x_m, so->subsidence_y_m, so->subsidence_m < 0 },
    };
    for (size_t q = 0; q < 2; q++) {
        if (!at[q].on) {
            cJSON_AddNullToObject(e, at[q].key);
            continue;
        }
        cJSON *p = cJSON_AddObjectToObject(e, at[q].key);
        cJSON_AddNumberToObject(p, "x_m", at[q].x);
        cJSON_AddNumberToObject(p, "y_m", at[q].y);
        if (geo) {
            cJSON_AddNumberToObject(p, "lon_deg", sw_grid_to_deg(g, at[q].x));
            cJSON_AddNumberToObject(p, "lat_deg", sw_grid_to_deg(g, at[q].y));
        }
    }
    cJSON_AddNumberToObject(e, "extent_threshold_m", so->threshold_m);
    cJSON_AddNumberToObject(e, "extent_area_m2", so->area_m2);
    if (so->any) {
        cJSON *b = cJSON_AddObjectToObject(e, "extent_box");
        cJSON_AddNumberToObject(b, "x0_m", so->x0_m);
        cJSON_AddNumberToObject(b, "x1_m", so->x1_m);
        cJSON_AddNumberToObject(b, "y0_m", so->y0_m);
        cJSON_AddNumberToObject(b, "y1_m", so->y1_m);
        if (geo) {
            cJSON_AddNumberToObject(b, "lon_west_deg", sw_grid_to_deg(g, so->x0_m));
            cJSON_AddNumberToObject(b, "lon_east_deg", sw_grid_to_deg(g, so->x1_m));
            cJSON_AddNumberToObject(b, "lat_south_deg", sw_grid_to_deg(g, so->y0_m));
            cJSON_AddNumberToObject(b, "lat_north_deg", sw_grid_to_deg(g, so->y1_m));
        }
    } else {
        cJSON_AddNullToObject(e, "extent_box");
    }
    cJSON_AddNumberToObject(e, "volume_m3", so->volume_m3);
    cJSON_AddNumberToObject(e, "volume_raised_m3", so->positive_m3);
    cJSON_AddNumberToObject(e, "volume_lowered_m3", so->negative_m3);
    cJSON *bs = cJSON_AddArrayToObject(e, "sources");
    cJSON *ws = cJSON_AddArrayToObject(e, "warnings");
    for (size_t q = 0; q < so->n_budgets; q++) {
        const sw_source_budget *bu = &so->budget[q];
        cJSON *b = cJSON_CreateObject();
        if (!b)
            break;
        cJSON_AddStringToObject(b, "name", bu->name);
        cJSON_AddBoolToObject(b, "asked_over_plane", bu->asked_known);
        cJSON_AddNumberToObject(b, "asked_m3", bu->asked_m3);
        cJSON_AddNumberToObject(b, "on_grid_m3", bu->grid_m3);
        cJSON_AddNumberToObject(b, "in_water_m3", bu->water_m3);
        cJSON_AddNumberToObject(b, "lost_fraction", sw_source_lost_fraction(bu));
        cJSON_AddItemToArray(bs, b);
        char w[SW_NAME_MAX + 200];
        budget_warning(bu, w, sizeof w);
        if (w[0])
            cJSON_AddItemToArray(ws, cJSON_CreateString(w));
    }
}

/* The plan's Grid line: the kind, the cells and their size, the extent (in degrees on a geographic grid)
 * and the water. */
static void print_grid(FILE *f, const sw_setup *s)
{
    const sw_grid *g = &s->grid;
    const double water = 100.0 * (double)s->wet_cells / (double)sw_grid_cells(g);
    if (!sw_grid_geographic(g)) {
        fprintf(f, "Grid       projected, %zu x %zu cells of %g m x %g m, %.1f km x %.1f km, %zu water cells (%.0f %%)\n",
                g->nx, g->ny, g->dx_m, g->dy_m, (double)g->nx * g->dx_m / 1000, (double)g->ny * g->dy_m / 1000,
                s->wet_cells, water);
        return;
    }
    const double x1 = g->x0_m + (double)g->nx * g->dx_m, y1 = g->y0_m + (double)g->ny * g->dy_m;
    fprintf(f, "Grid       geographic (sphere of radius %g km), %zu x %zu cells of %.6g deg x %.6g deg, longitude "
            "%.6g to %.6g deg, latitude %.6g to %.6g deg, %zu water cells (%.0f %%)\n", g->radius_m / 1000, g->nx,
            g->ny, sw_grid_to_deg(g, g->dx_m), sw_grid_to_deg(g, g->dy_m), sw_grid_to_deg(g, g->x0_m),
            sw_grid_to_deg(g, x1), sw_grid_to_deg(g, g->y0_m), sw_grid_to_deg(g, y1), s->wet_cells, water);
}

/* The plan's line on the land the seabed file marked by missing values or a mask; nothing when the
 * scenario asks for neither. */
static void print_land(FILE *f, const sw_scenario *sc, const sw_setup *s)
{
    if (!sc->bed_file[0] || (!sc->bed_missing_land && !sc->bed_land_mask[0]))
        return;
    fprintf(f, "Land       from %s:", sc->bed_file);
    if (sc->bed_missing_land)
        fprintf(f, " %zu cells by missing values%s", s->land_missing, sc->bed_land_mask[0] ? "," : "");
    if (sc->bed_land_mask[0])
        fprintf(f, " %zu cells by the land mask '%s'", s->land_mask, sc->bed_land_mask);
    fprintf(f, "\n");
}

/* The plan's scenario-wide warnings into w[0 .. 1] ("" when none): nothing moves the water (no source,
 * fault, storm, weather file or level series: the run would only show a still sea), and no gauges (the
 * run writes maps only). Returns how many there are. */
static int scenario_warnings(const sw_scenario *sc, const sw_setup *s, char w[2][160])
{
    int n = 0;
    w[0][0] = w[1][0] = '\0';
    const int moves = sc->n_sources > 0 || s->faults.n > 0 || sc->forcing.storm || sc->forcing.weather
                      || sc->forcing.level_file[0];
    if (!moves)
        snprintf(w[n++], 160, "nothing moves the water: the scenario has no [source], [fault], [storm], [weather] "
                 "or [edges] level_series, so the run shows a still sea");
    if (sc->n_gauges == 0)
        snprintf(w[n++], 160, "no [gauges]: the run writes maps only, no time series");
    return n;
}

void sw_report_plan(FILE *f, const sw_scenario *sc, const sw_setup *s, const sw_rate_info *rate)
{
    const sw_grid *g = &s->grid;
    const int geo = sw_grid_geographic(g);
    char buf[64];
    fprintf(f, "Scenario   %s  (%s)\n", sc->title, sc->path);
    print_grid(f, s);
    print_land(f, sc, s);
    fprintf(f, "Edges      west %s, east %s, south %s, north %s\n", sw_edge_name(sc->edges[SW_WEST]),
            sw_edge_name(sc->edges[SW_EAST]), sw_edge_name(sc->edges[SW_SOUTH]), sw_edge_name(sc->edges[SW_NORTH]));
    fprintf(f, "Layout     %s (%s)\n", s->layout->name, s->layout->summary);
    fprintf(f, "Precision  %s (%zu-byte state values)\n", sw_precision_name(sc->precision),
            sw_precision_bytes(sc->precision));
    fprintf(f, "Depth      deepest water %g m (wave speed %.1f m/s)\n", s->h_max_m, sqrt(sc->gravity_ms2 * s->h_max_m));
    fprintf(f, "Time step  dt = %.4g s: Courant number %.4g, %s-layout %dD limit %.4g (%.0f %% of it)\n", s->dt_s,
            s->courant, s->layout->name, s->dims, s->courant_limit, 100 * s->courant / s->courant_limit);
    if (geo)
        fprintf(f, "           the limit is reached on row %zu, latitude %.4g deg, where the narrowest cell is %.4g km "
                "wide (dx cos(latitude))\n", s->dt_row, s->dt_row_lat_deg, s->dt_row_width_m / 1000);
    print_terms(f, sc, s);
    print_forcing(f, sc, s);
    print_faults(f, s);
    print_source(f, sc, s);
    sw_format_duration(sc->duration_s, buf, sizeof buf);
    fprintf(f, "Run        %s simulated in %lld steps; %zu gauge samples each; %zu snapshots\n", buf, s->n_steps,
            s->n_samples, s->n_snapshots);
    if (sc->checkpoint_interval_s > 0) {
        sw_format_duration(sc->checkpoint_interval_s, buf, sizeof buf);
        fprintf(f, "           a checkpoint every %s of simulated time and at Ctrl-C (run --resume continues)\n", buf);
    }
    if (s->forcing_bytes)
        fprintf(f, "Memory     %.1f MB (model state %.1f MB; of the total, the forcing takes %.1f MB)\n",
                bytes_mb(s->total_bytes), bytes_mb(s->model_bytes), bytes_mb(s->forcing_bytes));
    else if (s->fault.run_bytes)
        fprintf(f, "Memory     %.1f MB (model state %.1f MB; of the total, the rupture in time takes %.1f MB)\n",
                bytes_mb(s->total_bytes), bytes_mb(s->model_bytes), bytes_mb(s->fault.run_bytes));
    else
        fprintf(f, "Memory     %.1f MB (model state %.1f MB)\n", bytes_mb(s->total_bytes), bytes_mb(s->model_bytes));
    if (rate && rate->cells_per_s > 0) {
        char how[64];
        sw_format_duration((double)s->n_steps * (double)sw_grid_cells(g) / rate->cells_per_s, buf, sizeof buf);
        fprintf(f, "Estimate   about %s at %.3g cell-updates/s ", buf, rate->cells_per_s);
        if (!strcmp(rate->source, "cache")) {
            format_age(rate->age_days, how, sizeof how);
            fprintf(f, "(cached %s, %d thread%s; --recalibrate to re-measure)\n", how, rate->threads,
                    rate->threads == 1 ? "" : "s");
        } else {
            fprintf(f, "(measured now, %d thread%s; ", rate->threads, rate->threads == 1 ? "" : "s");
            if (rate->cache_written && !rate->note[0])
                fprintf(f, "cached in %s)\n", rate->path);
            else if (rate->cache_written)
                fprintf(f, "cached in %s; %s)\n", rate->path, rate->note);
            else
                fprintf(f, "%s)\n", rate->note[0] ? rate->note : "cache not written");
        }
    }
    if (sc->n_gauges) {
        fprintf(f, "\n%-24s %12s %12s %10s\n", "Gauge", geo ? "lon (deg)" : "x (km)", geo ? "lat (deg)" : "y (km)",
                "depth (m)");
        for (size_t q = 0; q < sc->n_gauges; q++) {
            const sw_gauge_spec *gp = &sc->gauges[q];
            double d = sw_gauges_depth_at(g, s->depth_m, gp->x_m, gp->y_m);
            fprintf(f, "%-24s %12.*f %12.*f %10.1f%s\n", gp->name, geo ? 5 : 3,
                    geo ? sw_grid_to_deg(g, gp->x_m) : gp->x_m / 1000, geo ? 5 : 3,
                    geo ? sw_grid_to_deg(g, gp->y_m) : gp->y_m / 1000, d,
                    d < sc->min_depth_m ? "   warning: on land or shallower than min_depth" : "");
        }
    }
    char w[2][160];
    const int nw = scenario_warnings(sc, s, w);
    for (int q = 0; q < nw; q++)
        fprintf(f, "%swarning: %s\n", q ? "" : "\n", w[q]);
}

static void add_number_or_null(cJSON *o, const char *key, double v)
{
    if (isfinite(v))
        cJSON_AddNumberToObject(o, key, v);
    else
        cJSON_AddNullToObject(o, key);
}

/* "terms": the rotation and friction in force, as the NetCDF globals name them. */
static void add_terms(cJSON *o, const sw_scenario *sc, const sw_setup *s)
{
    const sw_terms_config *t = &sc->terms;
    char line[256];
    sw_terms_describe(t, line, sizeof line);
    cJSON *e = cJSON_AddObjectToObject(o, "terms");
    cJSON_AddStringToObject(e, "description", line);
    cJSON_AddStringToObject(e, "rotation", sw_rotation_name(t->rotation));
    if (t->rotation == SW_ROTATION_F_PLANE || t->rotation == SW_ROTATION_BETA_PLANE)   /* the sphere's f is per row */
        cJSON_AddNumberToObject(e, "coriolis_f0_per_s", t->f0_s);
    if (t->rotation == SW_ROTATION_BETA_PLANE) {
        cJSON_AddNumberToObject(e, "coriolis_beta_per_m_s", t->beta_ms);
        cJSON_AddNumberToObject(e, "coriolis_reference_y_m", t->y_ref_m);
    }
    cJSON_AddStringToObject(e, "bottom_friction", sw_friction_name(t->friction));
    if (t->friction == SW_FRICTION_LINEAR)
        cJSON_AddNumberToObject(e, "friction_rate_m_s", t->friction_rate_ms);
    else if (t->friction == SW_FRICTION_QUADRATIC)
        cJSON_AddNumberToObject(e, "drag_coefficient", t->drag);
    else if (t->friction == SW_FRICTION_MANNING)
        cJSON_AddNumberToObject(e, "manning_n", t->manning_n);
    const double stiff = sw_terms_stiff_depth(t, s->dt_s, sc->gravity_ms2);
    cJSON_AddNumberToObject(e, "stiff_friction_cells", stiff > 0 ? (double)cells_shallower(sc, s, stiff) : 0);
}

/* "forcing": null without forcing, else what drives the water (the plan's line, the storm's settings and
 * its pass over the domain, the weather file, the drag, the level series) and the plan's warnings. */
static void add_forcing(cJSON *o, const sw_scenario *sc, const sw_setup *s)
{
    if (!has_forcing(sc)) {
        cJSON_AddNullToObject(o, "forcing");
        return;
    }
    const sw_forcing_spec *fs = &sc->forcing;
    char line[3 * SW_PATH_MAX + 512], warn[512];
    forcing_line(sc, line, sizeof line);
    cJSON *e = cJSON_AddObjectToObject(o, "forcing");
    cJSON_AddStringToObject(e, "description", line);
    if (fs->storm) {
        const sw_storm_pass *p = &s->storm;
        cJSON *st = cJSON_AddObjectToObject(e, "storm");
        cJSON_AddStringToObject(st, "track", fs->track);
        cJSON_AddNumberToObject(st, "update_s", fs->update_s);
        cJSON_AddNumberToObject(st, "shift_across_m", fs->shift_across_m);
        cJSON_AddNumberToObject(st, "shift_along_m", fs->shift_along_m);
        cJSON_AddNumberToObject(st, "pressure_drop_factor", fs->dp_factor);
        cJSON_AddNumberToObject(st, "rmax_factor", fs->rmax_factor);
        cJSON_AddNumberToObject(st, "speed_factor", fs->speed_factor);
        cJSON_AddNumberToObject(st, "ambient_pressure_hpa", fs->ambient_hpa);
        cJSON_AddNumberToObject(st, "reduction", fs->reduction);
        cJSON_AddNumberToObject(st, "inflow_angle_deg", fs->inflow_deg);
        cJSON_AddNumberToObject(st, "translation_fraction", fs->translation_fraction);
        cJSON_AddStringToObject(st, "hemisphere", fs->south ? "south" : "north");
        if (p->present) {
            cJSON_AddBoolToObject(st, "outside_domain", p->outside);
            cJSON_AddNumberToObject(st, "closest_approach_m", p->closest_m);
            cJSON_AddNumberToObject(st, "closest_approach_s", p->closest_time_s);
        }
    } else
        cJSON_AddNullToObject(e, "storm");
    if (fs->weather)
        cJSON_AddStringToObject(e, "weather_file", fs->weather_file);
    else
        cJSON_AddNullToObject(e, "weather_file");
    if (fs->storm || fs->weather) {
        const char *law = sw_drag_law_name((sw_drag_law)fs->drag_law);
        cJSON_AddStringToObject(e, "drag_law", law ? law : "?");
        cJSON_AddNumberToObject(e, "drag_cap", fs->drag_cap);
        cJSON_AddNumberToObject(e, "air_density_kgm3", fs->air_density_kgm3);
        cJSON_AddNumberToObject(e, "water_density_kgm3", fs->water_density_kgm3);
    }
    if (fs->level_file[0])
        cJSON_AddStringToObject(e, "level_series", fs->level_file);
    else
        cJSON_AddNullToObject(e, "level_series");
    cJSON_AddNumberToObject(e, "memory_bytes", (double)s->forcing_bytes);
    cJSON *ws = cJSON_AddArrayToObject(e, "warnings");
    storm_warning(s, warn, sizeof warn);
    if (warn[0])
        cJSON_AddItemToArray(ws, cJSON_CreateString(warn));
}

static cJSON *plan_object(const sw_scenario *sc, const sw_setup *s, const sw_rate_info *rate)
{
    cJSON *o = cJSON_CreateObject();
    if (!o)
        return NULL;
    const sw_grid *g = &s->grid;
    cJSON_AddStringToObject(o, "scenario", sc->path);
    cJSON_AddStringToObject(o, "title", sc->title);
    cJSON *grid = cJSON_AddObjectToObject(o, "grid");
    cJSON_AddNumberToObject(grid, "nx", (double)g->nx);
    cJSON_AddNumberToObject(grid, "ny", (double)g->ny);
    cJSON_AddNumberToObject(grid, "dx_m", g->dx_m);
    cJSON_AddNumberToObject(grid, "dy_m", g->dy_m);
    cJSON_AddNumberToObject(grid, "x0_m", g->x0_m);
    cJSON_AddNumberToObject(grid, "y0_m", g->y0_m);
    cJSON_AddNumberToObject(grid, "water_cells", (double)s->wet_cells);
    const int geo = sw_grid_geographic(g);
    cJSON_AddStringToObject(grid, "kind", geo ? "geographic" : "projected");
    if (geo) {
        cJSON_AddNumberToObject(grid, "radius_m", g->radius_m);
        cJSON_AddNumberToObject(grid, "dx_deg", sw_grid_to_deg(g, g->dx_m));
        cJSON_AddNumberToObject(grid, "dy_deg", sw_grid_to_deg(g, g->dy_m));
        cJSON_AddNumberToObject(grid, "lon_west_deg", sw_grid_to_deg(g, g->x0_m));
        cJSON_AddNumberToObject(grid, "lon_east_deg", sw_grid_to_deg(g, g->x0_m + (double)g->nx * g->dx_m));
        cJSON_AddNumberToObject(grid, "lat_south_deg", sw_grid_to_deg(g, g->y0_m));
        cJSON_AddNumberToObject(grid, "lat_north_deg", sw_grid_to_deg(g, g->y0_m + (double)g->ny * g->dy_m));
    }
    if (sc->bed_file[0] && (sc->bed_missing_land || sc->bed_land_mask[0])) {
        cJSON *land = cJSON_AddObjectToObject(o, "land_from_file");
        cJSON_AddNumberToObject(land, "missing_cells", (double)s->land_missing);
        cJSON_AddNumberToObject(land, "mask_cells", (double)s->land_mask);
    } else {
        cJSON_AddNullToObject(o, "land_from_file");
    }
    cJSON_AddStringToObject(o, "layout", s->layout->name);
    cJSON_AddStringToObject(o, "precision", sw_precision_name(sc->precision));
    cJSON_AddNumberToObject(o, "depth_max_m", s->h_max_m);
    add_terms(o, sc, s);
    add_forcing(o, sc, s);
    add_faults(o, s);
    add_source(o, sc, s);
    cJSON *ws = cJSON_AddArrayToObject(o, "warnings");   /* the scenario-wide ones (scenario_warnings) */
    char w[2][160];
    const int nw = scenario_warnings(sc, s, w);
    for (int q = 0; q < nw; q++)
        cJSON_AddItemToArray(ws, cJSON_CreateString(w[q]));
    cJSON_AddNumberToObject(o, "dt_s", s->dt_s);
    cJSON_AddNumberToObject(o, "courant_number", s->courant);
    cJSON_AddNumberToObject(o, "courant_limit", s->courant_limit);
    cJSON_AddNumberToObject(o, "courant_fraction", s->courant / s->courant_limit);
    cJSON *lim = cJSON_AddObjectToObject(o, "dt_limit");
    cJSON_AddNumberToObject(lim, "dt_s", s->dt_limit_s);
    cJSON_AddNumberToObject(lim, "row", (double)s->dt_row);
    if (geo)
        cJSON_AddNumberToObject(lim, "latitude_deg", s->dt_row_lat_deg);
    else
        cJSON_AddNullToObject(lim, "latitude_deg");
    cJSON_AddNumberToObject(lim, "cell_width_m", s->dt_row_width_m);
    cJSON_AddNumberToObject(o, "dims", s->dims);
    cJSON_AddNumberToObject(o, "steps", (double)s->n_steps);
    cJSON_AddNumberToObject(o, "gauge_samples", (double)s->n_samples);
    cJSON_AddNumberToObject(o, "snapshots", (double)s->n_snapshots);
    cJSON_AddNumberToObject(o, "checkpoint_interval_s", sc->checkpoint_interval_s);
    cJSON_AddNumberToObject(o, "duration_s", sc->duration_s);
    cJSON_AddNumberToObject(o, "memory_bytes", (double)s->total_bytes);
    char why[200];   /* the schedule the run would choose on this machine's threads (run.h) */
    cJSON_AddNumberToObject(o, "steps_per_sweep", sw_run_schedule(sc, s, omp_get_max_threads(), 0, 0, why, sizeof why));
    cJSON_AddStringToObject(o, "schedule", why);
    if (rate && rate->cells_per_s > 0) {
        cJSON_AddNumberToObject(o, "estimated_seconds",
                                (double)s->n_steps * (double)sw_grid_cells(g) / rate->cells_per_s);
        cJSON_AddNumberToObject(o, "rate_cells_per_s", rate->cells_per_s);
        cJSON_AddStringToObject(o, "rate_source", rate->source);
        cJSON_AddNumberToObject(o, "rate_age_days", rate->age_days);
        cJSON_AddNumberToObject(o, "rate_threads", rate->threads);
        if (rate->cache_written || !strcmp(rate->source, "cache"))
            cJSON_AddStringToObject(o, "rate_cache_file", rate->path);
        else
            cJSON_AddNullToObject(o, "rate_cache_file");
        if (rate->note[0])
            cJSON_AddStringToObject(o, "rate_note", rate->note);
        else
            cJSON_AddNullToObject(o, "rate_note");
    }
    cJSON *gs = cJSON_AddArrayToObject(o, "gauges");
    for (size_t q = 0; q < sc->n_gauges; q++) {
        cJSON *e = cJSON_CreateObject();
        double d = sw_gauges_depth_at(g, s->depth_m, sc->gauges[q].x_m, sc->gauges[q].y_m);
        cJSON_AddStringToObject(e, "name", sc->gauges[q].name);
        cJSON_AddNumberToObject(e, "x_m", sc->gauges[q].x_m);
        cJSON_AddNumberToObject(e, "y_m", sc->gauges[q].y_m);
        if (geo) {
            cJSON_AddNumberToObject(e, "lon_deg", sw_grid_to_deg(g, sc->gauges[q].x_m));
            cJSON_AddNumberToObject(e, "lat_deg", sw_grid_to_deg(g, sc->gauges[q].y_m));
        }
        cJSON_AddNumberToObject(e, "depth_m", d);
        cJSON_AddBoolToObject(e, "on_land", d < sc->min_depth_m);
        cJSON_AddItemToArray(gs, e);
    }
    return o;
}

char *sw_report_plan_json(const sw_scenario *sc, const sw_setup *s, const sw_rate_info *rate)
{
    cJSON *o = plan_object(sc, s, rate);
    if (o)
        cJSON_AddStringToObject(o, "caution", sw_caution_for(sc));
    char *txt = o ? cJSON_Print(o) : NULL;
    cJSON_Delete(o);
    return txt;
}

void sw_report_run(FILE *f, const sw_scenario *sc, const sw_setup *s, const sw_run_result *r)
{
    char a[48], pt[48], wall[48];
    sw_format_duration(r->wall_s, wall, sizeof wall);
    char terms[256];
    sw_terms_describe(&sc->terms, terms, sizeof terms);
    fprintf(f, "\n%s: layout %s in %s precision, %lld steps of %.4g s, %s wall time with %d thread%s "
            "(%.3g cell-updates/s)\n", sc->title, s->layout->name, sw_precision_name(sc->precision), r->steps, s->dt_s, wall, r->threads, r->threads == 1 ? "" : "s",
            r->cell_updates_per_s);
    if (r->threads_changes > 0) {   /* the count followed other programs (base/cpu_share.h, run.c time_loop) */
        const char *why = sw_cpu_share_note(r->threads);
        fprintf(f, "Threads: %d%s%s%s", r->threads, *why ? " (" : "", why, *why ? ")" : "");
        const int shown = r->threads_changes < 4 ? r->threads_changes : 4;
        for (int q = 0, was = r->threads; q < shown; was = r->threads_change_to[q++]) {
            const int to = r->threads_change_to[q], d = to > was ? to - was : was - to;
            char t[48], cause[48];
            sw_format_duration(r->threads_change_t_s[q], t, sizeof t);
            if (to < was)
                snprintf(cause, sizeof cause, d == 1 ? "another program took a core" : "other programs took %d cores", d);
            else
                snprintf(cause, sizeof cause, d == 1 ? "a core came free" : "%d cores came free", d);
            fprintf(f, "%s %d from t = %s (%s)", q ? "," : ", then", to, t, cause);
        }
        if (r->threads_changes > shown)
            fprintf(f, ", ... (%d changes in all, between %d and %d threads)", r->threads_changes, r->threads_min,
                    r->threads_max);
        fprintf(f, "\n");
    } else if (*sw_cpu_share_note(r->threads))   /* why that many threads (base/cpu_share.h) */
        fprintf(f, "Threads: %s\n", sw_cpu_share_note(r->threads));
    if (r->ranks > 1)
        fprintf(f, "Ranks: %d (MPI), bands of about %zu rows with %zu halo rows on each side; %.3g s of the time "
                "loop in halo exchanges and %.3g kB sent per step (the most of any rank)\n", r->ranks,
                s->grid.ny / (size_t)r->ranks, r->halo_rows, r->exchange_s, r->halo_bytes_per_step / 1e3);
    if (strcmp(terms, "none"))
        fprintf(f, "Terms: %s\n", terms);
    if (r->forcing[0])
        fprintf(f, "Forcing: %s\n", r->forcing);
    if (isfinite(r->wind_max_ms) || isfinite(r->air_pressure_min_pa))
        fprintf(f, "Air over the water: highest 10 m wind %.1f m/s, lowest air pressure %.1f hPa\n", r->wind_max_ms,
                r->air_pressure_min_pa / 100);
    if (r->n_gauges) {
        fprintf(f, "\n%-24s %9s %16s %10s %16s %10s\n", "Gauge", "depth m", "first arrival", "peak m",
                "peak at", "trough m");
        for (size_t q = 0; q < r->n_gauges; q++) {
            const sw_gauge_result *g = &r->gauge[q];
            if (g->dry) {
                fprintf(f, "%-24s %9.1f %16s\n", g->name, g->depth_m, "(on land: no water cell)");
                continue;
            }
            sw_format_duration(g->arrival_s, a, sizeof a);
            sw_format_duration(g->peak_time_s, pt, sizeof pt);
            fprintf(f, "%-24s %9.1f %16s %10.3f %16s %10.3f\n", g->name, g->depth_m,
                    isnan(g->arrival_s) ? "not reached" : a, g->peak_m, pt, g->trough_m);
        }
        if (has_forcing(sc))
            fprintf(f, "(arrival: first time |eta| >= %g m, the water departing from mean level by that much; "
                    "times after the start)\n", sc->arrival_threshold_m);
        else
            fprintf(f, "(arrival: first time |eta| >= %g m; times after the source)\n", sc->arrival_threshold_m);
    }
    fprintf(f, "\nWritten:\n");
    if (r->gauges_path[0])
        fprintf(f, "  %s\n", r->gauges_path);
    fprintf(f, "  %s\n", r->maps_path);
    if (r->snapshots_path[0])
        fprintf(f, "  %s\n", r->snapshots_path);
    fprintf(f, "\n%s\n", sw_caution_for(sc));
}

char *sw_report_run_json(const sw_scenario *sc, const sw_setup *s, const sw_run_result *r)
{
    cJSON *o = plan_object(sc, s, 0);
    if (!o)
        return NULL;
    cJSON_DeleteItemFromObject(o, "gauges");
    cJSON *run = cJSON_AddObjectToObject(o, "run");
    cJSON_AddNumberToObject(run, "steps", (double)r->steps);
    cJSON_AddNumberToObject(run, "end_time_s", r->end_time_s);
    cJSON_AddNumberToObject(run, "wall_s", r->wall_s);
    cJSON_AddNumberToObject(run, "threads", r->threads);
    cJSON_AddStringToObject(run, "threads_reason", sw_cpu_share_note(r->threads));   /* "" when none */
    cJSON_AddNumberToObject(run, "threads_changes", r->threads_changes);   /* the count following the load */
    cJSON_AddNumberToObject(run, "threads_min", r->threads_min);
    cJSON_AddNumberToObject(run, "threads_max", r->threads_max);
    cJSON *changes = cJSON_AddArrayToObject(run, "threads_changed");   /* the first 4 changes */
    for (int q = 0; q < r->threads_changes && q < 4; q++) {
        cJSON *e = cJSON_CreateObject();
        cJSON_AddNumberToObject(e, "time_s", r->threads_change_t_s[q]);
        cJSON_AddNumberToObject(e, "wall_s", r->threads_change_wall_s[q]);
        cJSON_AddNumberToObject(e, "threads", r->threads_change_to[q]);
        cJSON_AddItemToArray(changes, e);
    }
    cJSON_AddNumberToObject(run, "cell_updates_per_s", r->cell_updates_per_s);
    cJSON_AddNumberToObject(run, "steps_per_sweep", r->steps_per_sweep);
    cJSON_AddStringToObject(run, "schedule", r->schedule);
    cJSON_AddNumberToObject(run, "ranks", r->ranks);
    if (r->ranks > 1) {
        cJSON_AddNumberToObject(run, "halo_rows", (double)r->halo_rows);
        cJSON_AddNumberToObject(run, "sweep_halo_rows", (double)r->sweep_halo_rows);
        cJSON_AddNumberToObject(run, "exchange_s", r->exchange_s);
        cJSON_AddNumberToObject(run, "halo_bytes_per_step", r->halo_bytes_per_step);
        cJSON_AddNumberToObject(run, "exchanges_per_step", r->exchanges_per_step);
    }
    cJSON_AddNumberToObject(run, "volume_start_m3", r->volume_start_m3);
    cJSON_AddNumberToObject(run, "volume_end_m3", r->volume_end_m3);
    cJSON_AddNumberToObject(run, "arrival_threshold_m", sc->arrival_threshold_m);
    if (r->forcing[0])
        cJSON_AddStringToObject(run, "forcing", r->forcing);
    else
        cJSON_AddNullToObject(run, "forcing");
    add_number_or_null(run, "wind_max_ms", r->wind_max_ms);
    add_number_or_null(run, "air_pressure_min_pa", r->air_pressure_min_pa);
    add_number_or_null(run, "air_pressure_min_hpa", r->air_pressure_min_pa / 100);
    cJSON *gs = cJSON_AddArrayToObject(o, "gauges");
    for (size_t q = 0; q < r->n_gauges; q++) {
        const sw_gauge_result *g = &r->gauge[q];
        cJSON *e = cJSON_CreateObject();
        cJSON_AddStringToObject(e, "name", g->name);
        cJSON_AddNumberToObject(e, "x_m", g->x_m);
        cJSON_AddNumberToObject(e, "y_m", g->y_m);
        cJSON_AddNumberToObject(e, "depth_m", g->depth_m);
        cJSON_AddBoolToObject(e, "on_land", g->dry);
        add_number_or_null(e, "arrival_s", g->arrival_s);
        add_number_or_null(e, "peak_m", g->peak_m);
        add_number_or_null(e, "peak_time_s", g->peak_time_s);
        add_number_or_null(e, "trough_m", g->trough_m);
        add_number_or_null(e, "trough_time_s", g->trough_time_s);
        cJSON_AddItemToArray(gs, e);
    }
    cJSON *files = cJSON_AddObjectToObject(o, "files");
    if (r->gauges_path[0])
        cJSON_AddStringToObject(files, "gauges", r->gauges_path);
    cJSON_AddStringToObject(files, "maps", r->maps_path);
    if (r->snapshots_path[0])
        cJSON_AddStringToObject(files, "snapshots", r->snapshots_path);
    cJSON_AddStringToObject(o, "caution", sw_caution_for(sc));
    char *txt = cJSON_Print(o);
    cJSON_Delete(o);
    return txt;
}
