/* ncwrite.c - CF-NetCDF writers for gauge series, maps and eta snapshots (see ncwrite.h).
 *
 * Invariant: every writer works on "<path>.part" through one ncw_file, and the first failure in
 * it is sticky. After a failure every ncw_ helper does nothing, and ncw_finish closes the dataset,
 * removes the .part and returns that first failure. Only a dataset that closed cleanly is renamed
 * to <path>, so <path> is either the previous file or a complete new one.
 *
 * NaN means "no value" in the caller's arrays (land, never reached). NetCDF readers expect the
 * _FillValue instead, so NaN is replaced in a scratch copy before each write; the caller's arrays
 * are never modified.
 *
 * A projected file without a coordinate reference keeps exactly the variables and attributes it
 * always had (tests/py/test_golden.py pins their values); the crs variable, grid_mapping and the
 * lon/lat coordinates appear only with a CRS or on a geographic grid.
 */
#define _GNU_SOURCE   /* RTLD_DEFAULT */
#include "outputs/ncwrite.h"

#include <dlfcn.h>
#include <errno.h>
#include <math.h>
#include <netcdf.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "base/atomic_file.h"

#define NCW_NAME_STRLEN 64                 /* length of the station_name character dimension */
#define NCW_DEFLATE_LEVEL 1                /* zlib level of compressed variables */
#define NCW_MAP_CHUNK_EDGE 256             /* map chunks are at most 256 x 256 cells */
#define NCW_SNAP_CHUNK_CELLS ((size_t)1 << 22) /* snapshot chunk cap: 4 Mi cells = 16 MiB of float */
#define NCW_CRS_VAR "crs"                  /* the grid mapping variable every gridded variable names */

static const char NCW_COMMENT[] = "Linear shallow-water model run; see the caution attribute.";

/* One dataset being written. */
typedef struct {
    int ncid;         /* NetCDF id, valid while is_open */
    int is_open;      /* 1 between a successful nc_create and nc_close */
    sw_atomic_file af; /* the final path (af.path) and the .part actually written (af.part) */
    sw_error *err;    /* where failures are recorded (may be NULL) */
    sw_status rc;     /* first failure, SW_OK until then */
} ncw_file;

/* The cause a failed HDF5 write leaves in errno, worded for the user ("no space left on device"), or NULL
 * when errno names none of the file system's refusals. HDF5 reports all of them as "NetCDF: HDF error". */
static const char *ncw_cause(int e)
{
    switch (e) {
    case ENOSPC: return "no space left on device";
    case EDQUOT: return "disk quota exceeded";
    case EFBIG: return "file too large for the file system";
    case EROFS: return "read-only file system";
    case EACCES: case EPERM: return "permission denied";
    case EIO: return "input/output error";
    default: return NULL;
    }
}

/* Records `rc` (a NetCDF status from the step `what`, about `name` when not NULL) as the file's
 * failure. Returns 1 when rc is NC_NOERR and nothing has failed before, 0 otherwise. */
static int ncw_ok(ncw_file *f, int rc, const char *what, const char *name)
{
    if (f->rc != SW_OK)
        return 0;
    if (rc == NC_NOERR)
        return 1;
    const char *cause = rc == NC_EHDFERR ? ncw_cause(errno) : NULL;
    f->rc = sw_fail(f->err, cause ? SW_ERR_IO : SW_ERR_NETCDF, "%s: %s%s%s: %s%s%s%s", f->af.path, what,
                    name ? " " : "", name ? name : "", nc_strerror(rc), cause ? " (" : "", cause ? cause : "",
                    cause ? ")" : "");
    return 0;
}

/* Records a failure that is not a NetCDF status (usage, memory). Keeps the first one. */
static void ncw_fail(ncw_file *f, sw_status code, const char *what)
{
    if (f->rc == SW_OK)
        f->rc = sw_fail(f->err, code, "%s: %s", f->af.path, what);
}

/* Creates "<path>.part" (NetCDF-4, replacing a stale .part). On failure records it, removes any
 * partial .part and returns the status; f is then not open. */
static sw_status ncw_create(ncw_file *f, const char *path, sw_error *err)
{
    memset(f, 0, sizeof *f);
    f->err = err;
    if ((f->rc = sw_atomic_begin(&f->af, path, err)) != SW_OK)
        return f->rc;
    errno = 0;
    int rc = nc_create(f->af.part, NC_NETCDF4 | NC_CLOBBER, &f->ncid);
    const char *cause = rc != NC_NOERR ? ncw_cause(errno) : NULL;   /* HDF5 words a full disk "Permission denied" */
    if (rc != NC_NOERR)   /* positive codes are errno values */
        return f->rc = sw_atomic_create_failed(&f->af, rc > 0 || cause ? SW_ERR_IO : SW_ERR_NETCDF,
                                               cause ? cause : nc_strerror(rc), err);
    f->is_open = 1;
    return SW_OK;
}

/* Ends the dataset: when nothing failed, closes it and renames the .part to the final path;
 * otherwise (or when closing / renaming fails) closes it and removes the .part. Returns the first
 * failure or SW_OK. */
static sw_status ncw_finish(ncw_file *f)
{
    if (f->is_open) {
        errno = 0;   /* what nc_close leaves in errno names the cause (ncw_ok) */
        int rc = nc_close(f->ncid);
        f->is_open = 0;
        ncw_ok(f, rc, "closing", NULL);
    }
    if (f->rc == SW_OK)
        f->rc = sw_atomic_commit(&f->af, f->err);
    else
        sw_atomic_discard(&f->af);
    return f->rc;
}

void sw_ncw_no_exit_handler(void)
{
    /* HDF5 is netCDF's dependency, not ours: look it up where the dynamic linker put it. A build linked
     * without HDF5 (or statically) finds nothing and keeps the library's default. */
    void *sym = dlsym(RTLD_DEFAULT, "H5dont_atexit");
    int (*dont_atexit)(void) = NULL;
    if (sym) {
        memcpy(&dont_atexit, &sym, sizeof dont_atexit);   /* object to function pointer, without the warning */
        (void)dont_atexit();
    }
}

/* ---- definitions: each does nothing after a failure -------------------------------------- */

static void ncw_dim(ncw_file *f, const char *name, size_t len, int *id)
{
    *id = -1;
    if (f->rc == SW_OK)
        ncw_ok(f, nc_def_dim(f->ncid, name, len, id), "defining dimension", name);
}

/* Defines a variable; returns its id, or -1 after a failure. */
static int ncw_var(ncw_file *f, const char *name, nc_type type, int ndims, const int *dims)
{
    int id = -1;
    if (f->rc == SW_OK && !ncw_ok(f, nc_def_var(f->ncid, name, type, ndims, dims, &id), "defining variable", name))
        id = -1;
    return id;
}

/* Names an attribute "var:att" (or ":att" for a global one) for messages. */
static void ncw_att_label(ncw_file *f, int varid, const char *att, char *out, size_t n)
{
    char var[NC_MAX_NAME + 1] = "";
    if (varid != NC_GLOBAL && nc_inq_varname(f->ncid, varid, var) != NC_NOERR)
        var[0] = '\0';
    snprintf(out, n, "%s:%s", var, att);
}

static void ncw_att_check(ncw_file *f, int rc, int varid, const char *att)
{
    if (rc == NC_NOERR || f->rc != SW_OK)
        return;
    char label[2 * NC_MAX_NAME + 2];
    ncw_att_label(f, varid, att, label, sizeof label);
    ncw_ok(f, rc, "writing attribute", label);
}

static void ncw_text(ncw_file *f, int varid, const char *att, const char *text)
{
    if (f->rc == SW_OK)
        ncw_att_check(f, nc_put_att_text(f->ncid, varid, att, strlen(text), text), varid, att);
}

static void ncw_double(ncw_file *f, int varid, const char *att, double value)
{
    if (f->rc == SW_OK)
        ncw_att_check(f, nc_put_att_double(f->ncid, varid, att, NC_DOUBLE, 1, &value), varid, att);
}

/* The coordinate reference a file gets on grid g (NULL: projected): 1 when it has one, i.e. on a
 * geographic grid or with a CRS given for a projected one. */
static int ncw_has_crs(const sw_grid *g, const sw_crs *crs)
{
    return (g && sw_grid_geographic(g)) || sw_crs_present(crs);
}

/* Defines the scalar grid mapping variable `crs` (CF 1.11 section 5.6) when the file has a coordinate
 * reference (ncw_has_crs): on a geographic grid latitude_longitude on the model's sphere (appendix F:
 * semi_major_axis, inverse_flattening 0 for a sphere), otherwise a copy of every attribute of the
 * input's grid mapping. Returns 1 when it was defined, 0 when the file has none (or after a failure). */
static int ncw_def_crs(ncw_file *f, const sw_grid *g, const sw_crs *crs)
{
    if (!ncw_has_crs(g, crs) || f->rc != SW_OK)
        return 0;
    int id;
    const char *what;
    const int rc = sw_crs_define(f->ncid, NCW_CRS_VAR, g, crs, &id, &what);
    return ncw_ok(f, rc, "writing the grid mapping", what) && id >= 0;
}

/* Sets the _FillValue of a double or float variable (NC_FILL_DOUBLE / NC_FILL_FLOAT). */
static void ncw_fill(ncw_file *f, int varid, nc_type type)
{
    if (f->rc != SW_OK)
        return;
    double fd = NC_FILL_DOUBLE;
    float ff = NC_FILL_FLOAT;
    ncw_att_check(f, nc_def_var_fill(f->ncid, varid, 0, type == NC_FLOAT ? (void *)&ff : (void *)&fd),
                  varid, "_FillValue");
}

/* Chunks a variable with the given chunk edges and compresses it (shuffle + deflate). */
static void ncw_compress(ncw_file *f, int varid, const size_t *chunks)
{
    if (f->rc != SW_OK)
        return;
    char label[2 * NC_MAX_NAME + 2];
    ncw_att_label(f, varid, "(storage)", label, sizeof label);
    if (ncw_ok(f, nc_def_var_chunking(f->ncid, varid, NC_CHUNKED, chunks), "setting chunks of", label))
        ncw_ok(f, nc_def_var_deflate(f->ncid, varid, 1, 1, NCW_DEFLATE_LEVEL), "setting compression of", label);
}

/* The momentum terms in force as global attributes: a line naming them (momentum_terms), the kinds
 * (rotation, bottom_friction) and the coefficients of the kinds in force. */
static void ncw_terms(ncw_file *f, const sw_terms_config *t)
{
    const sw_terms_config none = {0};
    char line[256];
    if (!t)
        t = &none;
    sw_terms_describe(t, line, sizeof line);
    ncw_text(f, NC_GLOBAL, "momentum_terms", line);
    ncw_text(f, NC_GLOBAL, "rotation", sw_rotation_name(t->rotation));
    if (t->rotation != SW_ROTATION_NONE)
        ncw_double(f, NC_GLOBAL, "coriolis_f0_per_s", t->f0_s);
    if (t->rotation == SW_ROTATION_BETA_PLANE) {
        ncw_double(f, NC_GLOBAL, "coriolis_beta_per_m_s", t->beta_ms);
        ncw_double(f, NC_GLOBAL, "coriolis_reference_y_m", t->y_ref_m);
    }
    ncw_text(f, NC_GLOBAL, "bottom_friction", sw_friction_name(t->friction));
    if (t->friction == SW_FRICTION_LINEAR)
        ncw_double(f, NC_GLOBAL, "friction_rate_m_s", t->friction_rate_ms);
    else if (t->friction == SW_FRICTION_QUADRATIC)
        ncw_double(f, NC_GLOBAL, "drag_coefficient", t->drag);
    else if (t->friction == SW_FRICTION_MANNING)
        ncw_double(f, NC_GLOBAL, "manning_n", t->manning_n);
}

char *sw_ncw_history(const char *command)
{
    if (!command)
        command = "";
    time_t now = time(NULL);
    const struct tm *utc = now == (time_t)-1 ? NULL : gmtime(&now);
    char stamp[32];
    if (!utc || strftime(stamp, sizeof stamp, "%Y-%m-%dT%H:%M:%SZ", utc) == 0)
        return NULL;
    size_t n = strlen(stamp) + 2 + strlen(command) + 1;
    char *out = malloc(n);
    if (out)
        snprintf(out, n, "%s: %s", stamp, command);
    return out;
}

/* The global attributes shared by every file. */
static void ncw_globals(ncw_file *f, const sw_run_meta *m)
{
    char source[256];
    snprintf(source, sizeof source, "shoreward %s", m->version);
    ncw_text(f, NC_GLOBAL, "Conventions", "CF-1.11");
    ncw_text(f, NC_GLOBAL, "title", m->title);
    char *history = sw_ncw_history(m->history);
    if (!history && f->rc == SW_OK)
        f->rc = sw_fail(f->err, SW_ERR_NOMEM, "%s: out of memory writing the history attribute", f->af.path);
    ncw_text(f, NC_GLOBAL, "history", history);
    free(history);
    ncw_text(f, NC_GLOBAL, "source", source);
    ncw_text(f, NC_GLOBAL, "layout", m->layout);
    ncw_text(f, NC_GLOBAL, "precision", m->precision);
    ncw_double(f, NC_GLOBAL, "time_step_s", m->dt_s);
    ncw_double(f, NC_GLOBAL, "courant_number", m->courant);
    ncw_double(f, NC_GLOBAL, "courant_limit", m->courant_limit);
    ncw_double(f, NC_GLOBAL, "courant_fraction", m->courant / m->courant_limit);
    ncw_double(f, NC_GLOBAL, "arrival_threshold_m", m->arrival_threshold_m);
    ncw_double(f, NC_GLOBAL, "gravity_m_s2", m->gravity_ms2);
    ncw_terms(f, m->terms);
    ncw_text(f, NC_GLOBAL, "scenario", m->scenario_text);
    ncw_text(f, NC_GLOBAL, "caution", m->caution);
    if (m->forcing)
        ncw_text(f, NC_GLOBAL, "forcing", m->forcing);
    ncw_text(f, NC_GLOBAL, "comment", NCW_COMMENT);
}

/* Defines the time coordinate variable on dimension `dim`; returns its id or -1. */
static int ncw_time_var(ncw_file *f, const sw_run_meta *m, int dim)
{
    char units[128];
    snprintf(units, sizeof units, "seconds since %s", m->time_origin);
    int id = ncw_var(f, "time", NC_DOUBLE, 1, &dim);
    ncw_text(f, id, "standard_name", "time");
    ncw_text(f, id, "long_name", "time");
    ncw_text(f, id, "units", units);
    ncw_text(f, id, "calendar", "standard");
    ncw_text(f, id, "axis", "T");
    return id;
}

/* Ids of the grid variables shared by the map and snapshot files. */
typedef struct {
    int dim_y, dim_x;  /* dimensions y (ny) and x (nx); lat and lon on a geographic grid */
    int x, y;          /* cell-centre coordinates (lon, lat on a geographic grid) */
    int depth;         /* still-water depth */
    int wet;           /* water mask, -1 when not written */
    int has_crs;       /* 1: the variable `crs` exists and gridded variables name it in grid_mapping */
} ncw_grid_ids;

/* Chunk edges of a 2D map variable. */
static void ncw_map_chunks(const sw_grid *g, size_t chunks[2])
{
    chunks[0] = g->ny < NCW_MAP_CHUNK_EDGE ? g->ny : NCW_MAP_CHUNK_EDGE;
    chunks[1] = g->nx < NCW_MAP_CHUNK_EDGE ? g->nx : NCW_MAP_CHUNK_EDGE;
}

/* Defines a compressed double map variable (y, x) with its _FillValue and common attributes;
 * standard_name and cell_methods are skipped when NULL. Returns its id or -1. */
static int ncw_map_var(ncw_file *f, const ncw_grid_ids *ids, const sw_grid *g, const char *name,
                       const char *standard_name, const char *units, const char *long_name,
                       const char *cell_methods)
{
    int dims[2] = {ids->dim_y, ids->dim_x};
    size_t chunks[2];
    ncw_map_chunks(g, chunks);
    int id = ncw_var(f, name, NC_DOUBLE, 2, dims);
    ncw_compress(f, id, chunks);
    ncw_fill(f, id, NC_DOUBLE);
    if (standard_name)
        ncw_text(f, id, "standard_name", standard_name);
    ncw_text(f, id, "long_name", long_name);
    ncw_text(f, id, "units", units);
    if (cell_methods)
        ncw_text(f, id, "cell_methods", cell_methods);
    if (ids->has_crs)
        ncw_text(f, id, "grid_mapping", NCW_CRS_VAR);
    return id;
}

/* Defines the horizontal coordinates: on a projected grid dimensions y, x and the coordinates x(x),
 * y(y) in m; on a geographic grid dimensions lat, lon and the coordinates lon(lon), lat(lat) in
 * degrees (CF 1.11 sections 4.1, 4.2). */
static void ncw_def_coords(ncw_file *f, const sw_grid *g, ncw_grid_ids *ids)
{
    if (sw_grid_geographic(g)) {
        ncw_dim(f, "lat", g->ny, &ids->dim_y);
        ncw_dim(f, "lon", g->nx, &ids->dim_x);
        ids->x = ncw_var(f, "lon", NC_DOUBLE, 1, &ids->dim_x);
        ncw_text(f, ids->x, "standard_name", "longitude");
        ncw_text(f, ids->x, "long_name", "longitude of the cell centre");
        ncw_text(f, ids->x, "units", "degrees_east");
        ncw_text(f, ids->x, "axis", "X");
        ids->y = ncw_var(f, "lat", NC_DOUBLE, 1, &ids->dim_y);
        ncw_text(f, ids->y, "standard_name", "latitude");
        ncw_text(f, ids->y, "long_name", "latitude of the cell centre");
        ncw_text(f, ids->y, "units", "degrees_north");
        ncw_text(f, ids->y, "axis", "Y");
        return;
    }
    ncw_dim(f, "y", g->ny, &ids->dim_y);
    ncw_dim(f, "x", g->nx, &ids->dim_x);

    ids->x = ncw_var(f, "x", NC_DOUBLE, 1, &ids->dim_x);
    ncw_text(f, ids->x, "standard_name", "projection_x_coordinate");
    ncw_text(f, ids->x, "long_name", "x of the cell centre (east)");
    ncw_text(f, ids->x, "units", "m");
    ncw_text(f, ids->x, "axis", "X");
    ids->y = ncw_var(f, "y", NC_DOUBLE, 1, &ids->dim_y);
    ncw_text(f, ids->y, "standard_name", "projection_y_coordinate");
    ncw_text(f, ids->y, "long_name", "y of the cell centre (north)");
    ncw_text(f, ids->y, "units", "m");
    ncw_text(f, ids->y, "axis", "Y");
}

/* Defines the coordinates (ncw_def_coords), the grid mapping variable crs when the file has a
 * coordinate reference (ncw_def_crs), depth(y, x) and, when with_wet, wet(y, x). */
static void ncw_def_grid(ncw_file *f, const sw_grid *g, const sw_crs *crs, int with_wet, ncw_grid_ids *ids)
{
    ncw_def_coords(f, g, ids);
    ids->has_crs = ncw_def_crs(f, g, crs);

    ids->depth = ncw_map_var(f, ids, g, "depth", "sea_floor_depth_below_mean_sea_level", "m",
                             "still-water depth", NULL);
    ncw_text(f, ids->depth, "positive", "down");
    ncw_text(f, ids->depth, "comment", "land is negative (its height above mean sea level)");

    ids->wet = -1;
    if (with_wet) {
        int dims[2] = {ids->dim_y, ids->dim_x};
        size_t chunks[2];
        ncw_map_chunks(g, chunks);
        static const signed char flags[2] = {0, 1};
        ids->wet = ncw_var(f, "wet", NC_BYTE, 2, dims);
        ncw_compress(f, ids->wet, chunks);
        ncw_text(f, ids->wet, "long_name", "cell is water in the model");
        if (f->rc == SW_OK)
            ncw_att_check(f, nc_put_att_schar(f->ncid, ids->wet, "flag_values", NC_BYTE, 2, flags),
                          ids->wet, "flag_values");
        ncw_text(f, ids->wet, "flag_meanings", "land water");
        if (ids->has_crs)
            ncw_text(f, ids->wet, "grid_mapping", NCW_CRS_VAR);
    }
}

/* ---- data ------------------------------------------------------------------------------- */

/* Writes a whole double variable of n values, NaN replaced by NC_FILL_DOUBLE in `scratch` (n). */
static void ncw_put_doubles(ncw_file *f, int varid, const char *name, const double *v, size_t n,
                            double *scratch)
{
    if (f->rc != SW_OK)
        return;
    for (size_t k = 0; k < n; k++)
        scratch[k] = isnan(v[k]) ? NC_FILL_DOUBLE : v[k];
    ncw_ok(f, nc_put_var_double(f->ncid, varid, scratch), "writing variable", name);
}

/* A model coordinate (m) as written: degrees on a geographic grid, metres as given otherwise. */
static double ncw_coord(const sw_grid *g, double m)
{
    return sw_grid_geographic(g) ? sw_grid_to_deg(g, m) : m;
}

/* Writes the coordinates x(x) and y(y) (lon, lat in degrees on a geographic grid), depth and (when
 * defined) wet. scratch holds nx * ny doubles. */
static void ncw_put_grid(ncw_file *f, const ncw_grid_ids *ids, const sw_grid *g, const double *depth_m,
                         const unsigned char *wet, double *scratch)
{
    if (f->rc != SW_OK)
        return;
    const int geo = sw_grid_geographic(g);
    for (size_t i = 0; i < g->nx; i++)
        scratch[i] = ncw_coord(g, sw_grid_xc(g, i));
    if (!ncw_ok(f, nc_put_var_double(f->ncid, ids->x, scratch), "writing variable", geo ? "lon" : "x"))
        return;
    for (size_t j = 0; j < g->ny; j++)
        scratch[j] = ncw_coord(g, sw_grid_yc(g, j));
    if (!ncw_ok(f, nc_put_var_double(f->ncid, ids->y, scratch), "writing variable", geo ? "lat" : "y"))
        return;
    ncw_put_doubles(f, ids->depth, "depth", depth_m, sw_grid_cells(g), scratch);
    if (ids->wet >= 0 && f->rc == SW_OK)
        ncw_ok(f, nc_put_var_uchar(f->ncid, ids->wet, wet), "writing variable", "wet");
}

/* ---- checks of the caller's arguments ---------------------------------------------------- */

static sw_status ncw_check_meta(const char *path, const sw_run_meta *m, sw_error *err)
{
    if (!path || !*path)
        return sw_fail(err, SW_ERR_USAGE, "output file: no path given");
    if (!m || !m->title || !m->history || !m->scenario_text || !m->layout || !m->version ||
        !m->caution || !m->time_origin)
        return sw_fail(err, SW_ERR_USAGE, "%s: run metadata missing or incomplete", path);
    return SW_OK;
}

/* Checks a grid and that nx * ny doubles can be counted in bytes. */
static sw_status ncw_check_grid(const char *path, const sw_grid *g, sw_error *err)
{
    if (!g || g->nx == 0 || g->ny == 0)
        return sw_fail(err, SW_ERR_USAGE, "%s: empty or missing grid", path);
    if (g->nx > SIZE_MAX / sizeof(double) / g->ny)
        return sw_fail(err, SW_ERR_USAGE, "%s: grid %zu x %zu is too large", path, g->nx, g->ny);
    if (sw_grid_geographic(g) && !(isfinite(g->radius_m) && g->radius_m > 0))
        return sw_fail(err, SW_ERR_USAGE, "%s: geographic grid with radius %g m (accepted: > 0)", path, g->radius_m);
    return SW_OK;
}

/* ---- gauge file ------------------------------------------------------------------------- */

/* Writes the gauge file as a CF timeSeries collection (CF 1.11 chapter 9 and appendix H.2,
 * "orthogonal multidimensional array representation": eta(station, time) with one time axis
 * shared by all stations).
 * Needs: every array of gt non-NULL except the air series, n_stations >= 1 and n_times >= 1 (a zero
 * length would make NetCDF treat the dimension as unlimited), names at most 64 characters. The air
 * series (air_pressure_pa, wind_u_ms, wind_v_ms) are all three given or all three NULL; given, they are
 * written as air_pressure, wind_east and wind_north (station, time). The positions are x, y (m), or on
 * a geographic meta->grid lon, lat (degrees, and u, v then have the eastward / northward standard
 * names); with a coordinate reference (ncwrite.h) the series name the variable crs in grid_mapping.
 * Returns SW_OK, or SW_ERR_USAGE / SW_ERR_NOMEM / SW_ERR_IO / SW_ERR_NETCDF with a message naming
 * the path; then no file is left at <path>.part and an existing <path> is untouched. */
sw_status sw_ncw_gauges(const char *path, const sw_run_meta *meta, const sw_gauge_table *gt, sw_error *err)
{
    sw_status st = ncw_check_meta(path, meta, err);
    if (st != SW_OK)
        return st;
    if (!gt || !gt->names || !gt->x_m || !gt->y_m || !gt->depth_m || !gt->time_s || !gt->eta_m ||
        !gt->u_ms || !gt->v_ms)
        return sw_fail(err, SW_ERR_USAGE, "%s: gauge table missing or incomplete", path);
    const int with_air = gt->air_pressure_pa != NULL;
    if (with_air != (gt->wind_u_ms != NULL) || with_air != (gt->wind_v_ms != NULL))
        return sw_fail(err, SW_ERR_USAGE, "%s: gauge table has part of the air pressure and wind (accepted: all "
                       "three series or none)", path);
    if (meta->grid && sw_grid_geographic(meta->grid) && !(isfinite(meta->grid->radius_m) && meta->grid->radius_m > 0))
        return sw_fail(err, SW_ERR_USAGE, "%s: geographic grid with radius %g m (accepted: > 0)", path,
                       meta->grid->radius_m);
    if (gt->n_stations == 0 || gt->n_times == 0)
        return sw_fail(err, SW_ERR_USAGE, "%s: gauge table has %zu stations and %zu times (need >= 1 each)",
                       path, gt->n_stations, gt->n_times);
    if (gt->n_times > SIZE_MAX / sizeof(double) / gt->n_stations ||
        gt->n_stations > SIZE_MAX / NCW_NAME_STRLEN)
        return sw_fail(err, SW_ERR_USAGE, "%s: gauge table too large", path);
    for (size_t s = 0; s < gt->n_stations; s++) {
        if (!gt->names[s] || strlen(gt->names[s]) > NCW_NAME_STRLEN)
            return sw_fail(err, SW_ERR_USAGE, "%s: gauge %zu: name missing or longer than %d characters",
                           path, s + 1, NCW_NAME_STRLEN);
    }

    size_t n_values = gt->n_stations * gt->n_times;
    size_t n_scratch = n_values > gt->n_stations ? n_values : gt->n_stations;
    double *scratch = malloc(n_scratch * sizeof *scratch);
    char *names = calloc(gt->n_stations, NCW_NAME_STRLEN);
    if (!scratch || !names) {
        free(scratch);
        free(names);
        return sw_fail(err, SW_ERR_NOMEM, "%s: out of memory for %zu gauge values", path, n_values);
    }
    for (size_t s = 0; s < gt->n_stations; s++)
        memcpy(names + s * NCW_NAME_STRLEN, gt->names[s], strlen(gt->names[s]));  /* NUL padded */

    ncw_file f;
    if (ncw_create(&f, path, err) != SW_OK) {
        free(scratch);
        free(names);
        return f.rc;
    }

    ncw_globals(&f, meta);
    ncw_text(&f, NC_GLOBAL, "featureType", "timeSeries");

    int d_station, d_time, d_strlen;
    ncw_dim(&f, "station", gt->n_stations, &d_station);
    ncw_dim(&f, "time", gt->n_times, &d_time);
    ncw_dim(&f, "name_strlen", NCW_NAME_STRLEN, &d_strlen);

    int name_dims[2] = {d_station, d_strlen};
    int v_name = ncw_var(&f, "station_name", NC_CHAR, 2, name_dims);
    ncw_text(&f, v_name, "cf_role", "timeseries_id");
    ncw_text(&f, v_name, "long_name", "gauge name");
    ncw_text(&f, v_name, "_Encoding", "utf-8");   /* readers (xarray) decode the names to strings */

    const sw_grid *pg = meta->grid;
    const int geo = pg && sw_grid_geographic(pg);
    int v_x, v_y;
    if (geo) {
        v_x = ncw_var(&f, "station_lon", NC_DOUBLE, 1, &d_station);
        ncw_text(&f, v_x, "standard_name", "longitude");
        ncw_text(&f, v_x, "long_name", "gauge longitude");
        ncw_text(&f, v_x, "units", "degrees_east");
        v_y = ncw_var(&f, "station_lat", NC_DOUBLE, 1, &d_station);
        ncw_text(&f, v_y, "standard_name", "latitude");
        ncw_text(&f, v_y, "long_name", "gauge latitude");
        ncw_text(&f, v_y, "units", "degrees_north");
    } else {
        v_x = ncw_var(&f, "station_x", NC_DOUBLE, 1, &d_station);
        ncw_text(&f, v_x, "standard_name", "projection_x_coordinate");
        ncw_text(&f, v_x, "long_name", "gauge x position");
        ncw_text(&f, v_x, "units", "m");
        v_y = ncw_var(&f, "station_y", NC_DOUBLE, 1, &d_station);
        ncw_text(&f, v_y, "standard_name", "projection_y_coordinate");
        ncw_text(&f, v_y, "long_name", "gauge y position");
        ncw_text(&f, v_y, "units", "m");
    }
    const int has_crs = ncw_def_crs(&f, pg, meta->crs);
    int v_depth = ncw_var(&f, "depth", NC_DOUBLE, 1, &d_station);
    ncw_text(&f, v_depth, "standard_name", "sea_floor_depth_below_mean_sea_level");
    ncw_text(&f, v_depth, "long_name", "still-water depth at the gauge");
    ncw_text(&f, v_depth, "units", "m");
    ncw_text(&f, v_depth, "positive", "down");
    ncw_text(&f, v_depth, "comment", "land is negative (its height above mean sea level)");

    int v_time = ncw_time_var(&f, meta, d_time);

    /* the water's series, then (a run with an atmosphere) the forcing at the gauges */
    static const struct {
        const char *name, *standard_name, *units, *long_name;
    } series[6] = {
        {"eta", "sea_surface_height_above_mean_sea_level", "m", "sea surface elevation at gauge"},
        {"u", "sea_water_x_velocity", "m s-1", "x velocity at gauge"},
        {"v", "sea_water_y_velocity", "m s-1", "y velocity at gauge"},
        {"air_pressure", "air_pressure_at_mean_sea_level", "Pa",
         "air pressure at mean sea level at gauge (the forcing at the gauge, linear in time between forcing slabs)"},
        {"wind_east", "eastward_wind", "m s-1",
         "10 m wind towards the east (x) at gauge (the forcing at the gauge, linear in time between forcing slabs)"},
        {"wind_north", "northward_wind", "m s-1",
         "10 m wind towards the north (y) at gauge (the forcing at the gauge, linear in time between forcing slabs)"},
    };
    const double *series_data[6] = {gt->eta_m, gt->u_ms, gt->v_ms, gt->air_pressure_pa, gt->wind_u_ms, gt->wind_v_ms};
    const int n_series = with_air ? 6 : 3;
    int v_series[6];
    int series_dims[2] = {d_station, d_time};
    for (int k = 0; k < n_series; k++) {
        /* on a sphere x is east and y north everywhere: CF's eastward / northward velocity names */
        const char *standard_name = !geo || k == 0 || k > 2 ? series[k].standard_name
                                  : k == 1 ? "eastward_sea_water_velocity" : "northward_sea_water_velocity";
        v_series[k] = ncw_var(&f, series[k].name, NC_DOUBLE, 2, series_dims);
        ncw_fill(&f, v_series[k], NC_DOUBLE);
        ncw_text(&f, v_series[k], "standard_name", standard_name);
        ncw_text(&f, v_series[k], "long_name", series[k].long_name);
        ncw_text(&f, v_series[k], "units", series[k].units);
        ncw_text(&f, v_series[k], "coordinates", geo ? "time station_lat station_lon station_name"
                                                     : "time station_y station_x station_name");
        if (has_crs)
            ncw_text(&f, v_series[k], "grid_mapping", NCW_CRS_VAR);
    }
    if (f.rc == SW_OK)
        ncw_ok(&f, nc_enddef(f.ncid), "ending definitions", NULL);

    if (f.rc == SW_OK)
        ncw_ok(&f, nc_put_var_text(f.ncid, v_name, names), "writing variable", "station_name");
    if (geo) {   /* positions in degrees, converted in a copy */
        double *deg = malloc(2 * gt->n_stations * sizeof *deg);
        if (!deg)
            ncw_fail(&f, SW_ERR_NOMEM, "out of memory for the gauge positions");
        else {
            for (size_t s = 0; s < gt->n_stations; s++) {
                deg[s] = isnan(gt->x_m[s]) ? NAN : sw_grid_to_deg(pg, gt->x_m[s]);
                deg[gt->n_stations + s] = isnan(gt->y_m[s]) ? NAN : sw_grid_to_deg(pg, gt->y_m[s]);
            }
            ncw_put_doubles(&f, v_x, "station_lon", deg, gt->n_stations, scratch);
            ncw_put_doubles(&f, v_y, "station_lat", deg + gt->n_stations, gt->n_stations, scratch);
            free(deg);
        }
    } else {
        ncw_put_doubles(&f, v_x, "station_x", gt->x_m, gt->n_stations, scratch);
        ncw_put_doubles(&f, v_y, "station_y", gt->y_m, gt->n_stations, scratch);
    }
    ncw_put_doubles(&f, v_depth, "depth", gt->depth_m, gt->n_stations, scratch);
    if (f.rc == SW_OK)
        ncw_ok(&f, nc_put_var_double(f.ncid, v_time, gt->time_s), "writing variable", "time");
    for (int k = 0; k < n_series; k++)
        ncw_put_doubles(&f, v_series[k], series[k].name, series_data[k], n_values, scratch);

    free(scratch);
    free(names);
    return ncw_finish(&f);
}

/* ---- map file --------------------------------------------------------------------------- */

/* What arrival means, for a tsunami and for a surge (one definition, both uses). */
#define NCW_ARRIVAL_LONG_NAME \
    "first time |eta| reaches arrival_threshold (for a tsunami: the first wave's arrival; for a surge: " \
    "the first time the water departs from mean level by the threshold)"

/* Ids of the storm's track variables in the map file. */
typedef struct {
    int time, x, y, p;   /* storm_time, storm_x, storm_y, storm_central_pressure */
} ncw_track_ids;

/* Defines the dimension `track` (n points) and the storm's centre along it: storm_time (seconds since
 * the origin), storm_x, storm_y (m; storm_lon, storm_lat in degrees when geo) and
 * storm_central_pressure (Pa), each with storm_time as its coordinate. Ids into *ids (-1 after a
 * failure). */
static void ncw_def_track(ncw_file *f, const sw_run_meta *m, size_t n, int geo, ncw_track_ids *ids)
{
    int dim;
    char units[128];
    snprintf(units, sizeof units, "seconds since %s", m->time_origin);
    ncw_dim(f, "track", n, &dim);
    ids->time = ncw_var(f, "storm_time", NC_DOUBLE, 1, &dim);
    ncw_text(f, ids->time, "standard_name", "time");
    ncw_text(f, ids->time, "long_name", "time of the storm's centre position");
    ncw_text(f, ids->time, "units", units);
    ncw_text(f, ids->time, "calendar", "standard");
    ncw_text(f, ids->time, "comment", "every forcing slab's time from the start to the end of the run");
    if (geo) {
        ids->x = ncw_var(f, "storm_lon", NC_DOUBLE, 1, &dim);
        ncw_text(f, ids->x, "standard_name", "longitude");
        ncw_text(f, ids->x, "long_name", "longitude of the storm's centre, as the run moved it ([storm] shifts and "
                 "factors applied)");
        ncw_text(f, ids->x, "units", "degrees_east");
        ids->y = ncw_var(f, "storm_lat", NC_DOUBLE, 1, &dim);
        ncw_text(f, ids->y, "standard_name", "latitude");
        ncw_text(f, ids->y, "long_name", "latitude of the storm's centre, as the run moved it ([storm] shifts and "
                 "factors applied)");
        ncw_text(f, ids->y, "units", "degrees_north");
    } else {
        ids->x = ncw_var(f, "storm_x", NC_DOUBLE, 1, &dim);
        ncw_text(f, ids->x, "long_name", "x of the storm's centre (east), as the run moved it ([storm] shifts and "
                 "factors applied)");
        ncw_text(f, ids->x, "units", "m");
        ids->y = ncw_var(f, "storm_y", NC_DOUBLE, 1, &dim);
        ncw_text(f, ids->y, "long_name", "y of the storm's centre (north), as the run moved it ([storm] shifts and "
                 "factors applied)");
        ncw_text(f, ids->y, "units", "m");
    }
    ncw_text(f, ids->x, "coordinates", "storm_time");
    ncw_text(f, ids->y, "coordinates", "storm_time");
    ids->p = ncw_var(f, "storm_central_pressure", NC_DOUBLE, 1, &dim);
    ncw_text(f, ids->p, "standard_name", "air_pressure_at_mean_sea_level");
    ncw_text(f, ids->p, "long_name", "the storm's central pressure");
    ncw_text(f, ids->p, "units", "Pa");
    ncw_text(f, ids->p, "coordinates", "storm_time");
}

/* Writes the map file: x, y, depth, wet and the five maps of the run, all on cell centres; with an
 * atmosphere (maps->wind_max_ms not NULL) also wind_speed_max and air_pressure_min, and with a storm
 * (maps->n_track > 0) the dimension `track` and storm_time, storm_x, storm_y (storm_lon, storm_lat on a
 * geographic grid), storm_central_pressure. Coordinates and crs as ncwrite.h says.
 * Needs every array of the five maps non-NULL, a non-empty grid, wind_max_ms and air_pressure_min_pa
 * both given or both NULL, and the four track arrays given when n_track > 0. Returns SW_OK or a failure
 * as for sw_ncw_gauges (no .part left, an existing <path> untouched). */
sw_status sw_ncw_maps(const char *path, const sw_run_meta *meta, const sw_map_set *maps, sw_error *err)
{
    sw_status st = ncw_check_meta(path, meta, err);
    if (st != SW_OK)
        return st;
    if (!maps || !maps->depth_m || !maps->wet || !maps->eta_max_m || !maps->eta_min_m ||
        !maps->arrival_s || !maps->eta_max_time_s || !maps->speed_max_ms)
        return sw_fail(err, SW_ERR_USAGE, "%s: map set missing or incomplete", path);
    const int with_air = maps->wind_max_ms != NULL;
    if (with_air != (maps->air_pressure_min_pa != NULL))
        return sw_fail(err, SW_ERR_USAGE, "%s: map set has one of the wind and pressure maps (accepted: both or "
                       "none)", path);
    const size_t n_track = maps->n_track;
    if (n_track > 0 && (!maps->track_time_s || !maps->track_x_m || !maps->track_y_m || !maps->track_p_pa))
        return sw_fail(err, SW_ERR_USAGE, "%s: map set has %zu track points but not their times, positions and "
                       "pressures", path, n_track);
    const sw_grid *g = maps->grid;
    if ((st = ncw_check_grid(path, g, err)) != SW_OK)
        return st;
    if (n_track > SIZE_MAX / sizeof(double))
        return sw_fail(err, SW_ERR_USAGE, "%s: %zu track points are too many", path, n_track);

    size_t n = sw_grid_cells(g);
    size_t n_scratch = n > g->nx ? n : g->nx;
    if (g->ny > n_scratch)
        n_scratch = g->ny;
    if (n_track > n_scratch)
        n_scratch = n_track;
    double *scratch = malloc(n_scratch * sizeof *scratch);
    if (!scratch)
        return sw_fail(err, SW_ERR_NOMEM, "%s: out of memory for %zu x %zu maps", path, g->nx, g->ny);

    ncw_file f;
    if (ncw_create(&f, path, err) != SW_OK) {
        free(scratch);
        return f.rc;
    }
    ncw_globals(&f, meta);

    ncw_grid_ids ids;
    ncw_def_grid(&f, g, meta->crs, 1, &ids);

    char origin_note[160];
    snprintf(origin_note, sizeof origin_note, "seconds after the time origin %s", meta->time_origin);

    int v_eta_max = ncw_map_var(&f, &ids, g, "eta_max", "sea_surface_height_above_mean_sea_level", "m",
                                "highest sea surface elevation reached", "time: maximum");
    int v_eta_min = ncw_map_var(&f, &ids, g, "eta_min", "sea_surface_height_above_mean_sea_level", "m",
                                "lowest sea surface elevation reached", "time: minimum");
    /* durations in "seconds" (not "s"): CF and UDUNITS take both, and xarray decodes only the spelled-out
     * unit as a time difference (timedelta64) */
    int v_arrival = ncw_map_var(&f, &ids, g, "arrival_time", NULL, "seconds", NCW_ARRIVAL_LONG_NAME, NULL);
    ncw_text(&f, v_arrival, "comment", origin_note);
    int v_max_time = ncw_map_var(&f, &ids, g, "eta_max_time", NULL, "seconds",
                                 "time at which eta_max was reached", NULL);
    ncw_text(&f, v_max_time, "comment", origin_note);
    int v_speed = ncw_map_var(&f, &ids, g, "speed_max", "sea_water_speed", "m s-1",
                              "highest current speed reached", "time: maximum");
    int v_wind = -1, v_pmin = -1;
    if (with_air) {
        v_wind = ncw_map_var(&f, &ids, g, "wind_speed_max", "wind_speed", "m s-1",
                             "highest 10 m wind speed the water felt", "time: maximum");
        ncw_text(&f, v_wind, "comment", "the forcing at the cell centre, over the forcing slabs within the run "
                 "(linear in time between them, so these are the extremes the water felt)");
        v_pmin = ncw_map_var(&f, &ids, g, "air_pressure_min", "air_pressure_at_mean_sea_level", "Pa",
                             "lowest air pressure at mean sea level the water felt", "time: minimum");
        ncw_text(&f, v_pmin, "comment", "the forcing at the cell centre, over the forcing slabs within the run");
    }
    ncw_track_ids trk = {-1, -1, -1, -1};
    if (n_track > 0)
        ncw_def_track(&f, meta, n_track, sw_grid_geographic(g), &trk);
    if (f.rc == SW_OK)
        ncw_ok(&f, nc_enddef(f.ncid), "ending definitions", NULL);

    ncw_put_grid(&f, &ids, g, maps->depth_m, maps->wet, scratch);
    ncw_put_doubles(&f, v_eta_max, "eta_max", maps->eta_max_m, n, scratch);
    ncw_put_doubles(&f, v_eta_min, "eta_min", maps->eta_min_m, n, scratch);
    ncw_put_doubles(&f, v_arrival, "arrival_time", maps->arrival_s, n, scratch);
    ncw_put_doubles(&f, v_max_time, "eta_max_time", maps->eta_max_time_s, n, scratch);
    ncw_put_doubles(&f, v_speed, "speed_max", maps->speed_max_ms, n, scratch);
    if (with_air) {
        ncw_put_doubles(&f, v_wind, "wind_speed_max", maps->wind_max_ms, n, scratch);
        ncw_put_doubles(&f, v_pmin, "air_pressure_min", maps->air_pressure_min_pa, n, scratch);
    }
    if (n_track > 0) {
        ncw_put_doubles(&f, trk.time, "storm_time", maps->track_time_s, n_track, scratch);
        const int geo = sw_grid_geographic(g);
        double *pos[2] = {NULL, NULL};   /* the positions in degrees on a geographic grid */
        if (geo && f.rc == SW_OK) {
            pos[0] = malloc(2 * n_track * sizeof *pos[0]);
            if (!pos[0])
                ncw_fail(&f, SW_ERR_NOMEM, "out of memory for the storm's track");
            else {
                pos[1] = pos[0] + n_track;
                for (size_t k = 0; k < n_track; k++) {
                    pos[0][k] = ncw_coord(g, maps->track_x_m[k]);
                    pos[1][k] = ncw_coord(g, maps->track_y_m[k]);
                }
            }
        }
        ncw_put_doubles(&f, trk.x, geo ? "storm_lon" : "storm_x", geo ? pos[0] : maps->track_x_m, n_track, scratch);
        ncw_put_doubles(&f, trk.y, geo ? "storm_lat" : "storm_y", geo ? pos[1] : maps->track_y_m, n_track, scratch);
        free(pos[0]);
        ncw_put_doubles(&f, trk.p, "storm_central_pressure", maps->track_p_pa, n_track, scratch);
    }

    free(scratch);
    return ncw_finish(&f);
}

/* ---- snapshot file ---------------------------------------------------------------------- */

struct sw_ncw_snapshots {
    ncw_file f;        /* the open .part; f.rc holds the first failure (sticky) */
    size_t nx, ny;     /* grid size */
    size_t n_written;  /* snapshots appended so far */
    double last_t_s;   /* time of the last snapshot, s since the origin */
    int v_time, v_eta; /* variable ids */
    float *slice;      /* [ny * nx] scratch for one snapshot in float */
};

/* See ncwrite.h. wet may be NULL (then no wet variable is written); depth_m is required.
 * Returns SW_OK, or SW_ERR_USAGE / SW_ERR_NOMEM / SW_ERR_IO / SW_ERR_NETCDF; on failure *out is
 * NULL and no .part is left. */
sw_status sw_ncw_snapshots_open(const char *path, const sw_run_meta *meta, const sw_grid *g,
                                const double *depth_m, const unsigned char *wet,
                                sw_ncw_snapshots **out, sw_error *err)
{
    if (!out)
        return sw_fail(err, SW_ERR_USAGE, "snapshots: no handle to fill");
    *out = NULL;
    sw_status st = ncw_check_meta(path, meta, err);
    if (st != SW_OK)
        return st;
    if ((st = ncw_check_grid(path, g, err)) != SW_OK)
        return st;
    if (!depth_m)
        return sw_fail(err, SW_ERR_USAGE, "%s: no depth given", path);

    size_t n = sw_grid_cells(g);
    size_t n_scratch = n > g->nx ? n : g->nx;
    if (g->ny > n_scratch)
        n_scratch = g->ny;
    sw_ncw_snapshots *s = calloc(1, sizeof *s);
    double *scratch = malloc(n_scratch * sizeof *scratch);
    float *slice = s ? malloc(n * sizeof *slice) : NULL;
    if (!s || !scratch || !slice) {
        free(s);
        free(scratch);
        free(slice);
        return sw_fail(err, SW_ERR_NOMEM, "%s: out of memory for %zu x %zu snapshots", path, g->nx, g->ny);
    }
    s->slice = slice;
    s->nx = g->nx;
    s->ny = g->ny;
    s->last_t_s = -INFINITY;

    ncw_file *f = &s->f;
    if (ncw_create(f, path, err) != SW_OK) {
        st = f->rc;
        free(scratch);
        free(slice);
        free(s);
        return st;
    }
    ncw_globals(f, meta);

    int d_time;
    ncw_dim(f, "time", NC_UNLIMITED, &d_time);
    ncw_grid_ids ids;
    ncw_def_grid(f, g, meta->crs, wet != NULL, &ids);
    s->v_time = ncw_time_var(f, meta, d_time);

    /* one snapshot per chunk; a very large grid is split along y so a chunk stays <= 16 MiB */
    int dims[3] = {d_time, ids.dim_y, ids.dim_x};
    size_t chunks[3] = {1, g->ny, g->nx};
    if (n > NCW_SNAP_CHUNK_CELLS) {
        chunks[2] = g->nx < NCW_SNAP_CHUNK_CELLS ? g->nx : NCW_SNAP_CHUNK_CELLS;
        size_t rows = NCW_SNAP_CHUNK_CELLS / chunks[2];        /* most rows a chunk may hold */
        size_t pieces = (g->ny + rows - 1) / rows;              /* chunks along y */
        chunks[1] = (g->ny + pieces - 1) / pieces;              /* equal pieces, none nearly empty */
    }
    s->v_eta = ncw_var(f, "eta", NC_FLOAT, 3, dims);
    ncw_compress(f, s->v_eta, chunks);
    ncw_fill(f, s->v_eta, NC_FLOAT);
    ncw_text(f, s->v_eta, "standard_name", "sea_surface_height_above_mean_sea_level");
    ncw_text(f, s->v_eta, "long_name", "sea surface elevation");
    ncw_text(f, s->v_eta, "units", "m");
    if (ids.has_crs)
        ncw_text(f, s->v_eta, "grid_mapping", NCW_CRS_VAR);
    if (f->rc == SW_OK)
        ncw_ok(f, nc_enddef(f->ncid), "ending definitions", NULL);
    ncw_put_grid(f, &ids, g, depth_m, wet, scratch);
    free(scratch);

    if (f->rc != SW_OK) {
        st = ncw_finish(f);
        free(s->slice);
        free(s);
        return st;
    }
    *out = s;
    return SW_OK;
}

/* See ncwrite.h. Needs t_s finite and later than the previous snapshot. A failure is recorded in
 * s and returned; the handle must still be released, and a later commit then fails as well. */
sw_status sw_ncw_snapshots_append(sw_ncw_snapshots *s, double t_s, const double *eta_m, sw_error *err)
{
    if (!s || !eta_m)
        return sw_fail(err, SW_ERR_USAGE, "snapshots: no handle or no eta given");
    ncw_file *f = &s->f;
    f->err = err;
    if (f->rc != SW_OK)
        return sw_fail(err, f->rc, "%s: an earlier snapshot failed", f->af.path);
    if (!isfinite(t_s) || !(t_s > s->last_t_s)) {
        ncw_fail(f, SW_ERR_USAGE, "snapshot time is not finite or not after the previous one");
        return f->rc;
    }

    size_t n = s->nx * s->ny;
    for (size_t k = 0; k < n; k++)
        s->slice[k] = isnan(eta_m[k]) ? NC_FILL_FLOAT : (float)eta_m[k];
    size_t start1 = s->n_written, count1 = 1;
    size_t start3[3] = {s->n_written, 0, 0}, count3[3] = {1, s->ny, s->nx};
    if (ncw_ok(f, nc_put_vara_double(f->ncid, s->v_time, &start1, &count1, &t_s), "writing variable", "time") &&
        ncw_ok(f, nc_put_vara_float(f->ncid, s->v_eta, start3, count3, s->slice), "writing variable", "eta")) {
        s->n_written++;
        s->last_t_s = t_s;
    }
    return f->rc;
}

sw_status sw_ncw_snapshots_commit(sw_ncw_snapshots *s, sw_error *err)
{
    if (!s)
        return sw_fail(err, SW_ERR_USAGE, "snapshots: no handle to commit");
    s->f.err = err;
    if (s->f.rc != SW_OK)  /* report the earlier failure again to this caller */
        sw_fail(err, s->f.rc, "%s: not written: an earlier snapshot failed", s->f.af.path);
    sw_status st = ncw_finish(&s->f);
    free(s->slice);
    free(s);
    return st;
}

void sw_ncw_snapshots_abort(sw_ncw_snapshots *s)
{
    if (!s)
        return;
    s->f.err = NULL;
    if (s->f.rc == SW_OK)
        s->f.rc = SW_ERR_INTERRUPTED;  /* any failure code makes ncw_finish remove the .part */
    ncw_finish(&s->f);
    free(s->slice);
    free(s);
}
