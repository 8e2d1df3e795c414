/* ncsweep.c - the NetCDF files of a sensitivity sweep (see ncsweep.h).
 *
 * Invariant: like ncwrite.c, each writer works on "<path>.part" through one ncs_file whose first
 * failure is sticky: after it every helper does nothing, and ncs_finish removes the .part and
 * returns that failure. Only a dataset that closed cleanly is renamed to <path>.
 */
#define _POSIX_C_SOURCE 200809L   /* dlopen, dlsym */
#include "studies/ncsweep.h"

#include <dlfcn.h>
#include <math.h>
#include <netcdf.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/atomic_file.h"
#include "model/layout.h"
#include "outputs/ncwrite.h"   /* sw_ncw_history */

#define NCS_NAME_STRLEN 64      /* station, parameter and value text length */
#define NCS_ERROR_STRLEN 512    /* member failure messages are cut to this */
#define NCS_CHUNK_EDGE 256      /* map chunks are at most 256 x 256 cells */

typedef struct {
    int ncid;
    int is_open;
    sw_atomic_file af;   /* the final path and the .part written */
    sw_error *err;
    sw_status rc;
} ncs_file;

/* Records a NetCDF status; returns 1 when fine and nothing failed before. */
static int ncs_ok(ncs_file *f, int rc, const char *what, const char *name)
{
    if (f->rc != SW_OK)
        return 0;
    if (rc == NC_NOERR)
        return 1;
    f->rc = sw_fail(f->err, SW_ERR_NETCDF, "%s: %s%s%s: %s", f->af.path, what, name ? " " : "", name ? name : "",
                    nc_strerror(rc));
    return 0;
}

static sw_status ncs_create(ncs_file *f, const char *path, sw_error *err)
{
    memset(f, 0, sizeof *f);
    f->err = err;
    if ((f->rc = sw_atomic_begin(&f->af, path, err)) != SW_OK)
        return f->rc;
    int rc = nc_create(f->af.part, NC_NETCDF4 | NC_CLOBBER, &f->ncid);
    if (rc != NC_NOERR)
        return f->rc = sw_atomic_create_failed(&f->af, rc > 0 ? SW_ERR_IO : SW_ERR_NETCDF, nc_strerror(rc), err);
    f->is_open = 1;
    return SW_OK;
}

/* Closes; renames the .part to the path when nothing failed, else removes it. */
static sw_status ncs_finish(ncs_file *f)
{
    if (f->is_open) {
        int rc = nc_close(f->ncid);
        f->is_open = 0;
        ncs_ok(f, rc, "closing", NULL);
    }
    if (f->rc == SW_OK)
        f->rc = sw_atomic_commit(&f->af, f->err);
    else
        sw_atomic_discard(&f->af);
    return f->rc;
}

static int ncs_dim(ncs_file *f, const char *name, size_t len)
{
    int id = -1;
    if (f->rc == SW_OK)
        ncs_ok(f, nc_def_dim(f->ncid, name, len, &id), "defining dimension", name);
    return id;
}

/* Defines a variable without a _FillValue attribute, for coordinates (CF 1.11 section 2.5.1: no missing
 * data in coordinate variables) and the station positions, which are never missing; returns its id or -1. */
static int ncs_coord_var(ncs_file *f, const char *name, nc_type type, int ndims, const int *dims)
{
    int id = -1;
    if (f->rc != SW_OK || !ncs_ok(f, nc_def_var(f->ncid, name, type, ndims, dims, &id), "defining variable", name))
        return -1;
    return id;
}

/* Defines a variable (doubles get the default _FillValue); returns its id or -1. */
static int ncs_var(ncs_file *f, const char *name, nc_type type, int ndims, const int *dims)
{
    int id = ncs_coord_var(f, name, type, ndims, dims);
    if (id >= 0 && type == NC_DOUBLE) {
        double fill = NC_FILL_DOUBLE;
        ncs_ok(f, nc_def_var_fill(f->ncid, id, 0, &fill), "setting _FillValue of", name);
    }
    return id;
}

/* Chunks a 2D+ variable whose last two dimensions are (y, x) and compresses it. */
static void ncs_compress(ncs_file *f, int id, int ndims, const size_t *shape)
{
    if (f->rc != SW_OK || id < 0)
        return;
    size_t chunks[4];
    for (int d = 0; d < ndims; d++)
        chunks[d] = d < ndims - 2 ? 1 : (shape[d] < NCS_CHUNK_EDGE ? shape[d] : NCS_CHUNK_EDGE);
    if (ncs_ok(f, nc_def_var_chunking(f->ncid, id, NC_CHUNKED, chunks), "setting chunks of", "a map"))
        ncs_ok(f, nc_def_var_deflate(f->ncid, id, 1, 1, 1), "setting compression of", "a map");
}

static void ncs_text(ncs_file *f, int id, const char *att, const char *text)
{
    if (f->rc == SW_OK && (id >= 0 || id == NC_GLOBAL))
        ncs_ok(f, nc_put_att_text(f->ncid, id, att, strlen(text), text), "writing attribute", att);
}

static void ncs_double(ncs_file *f, int id, const char *att, double v)
{
    if (f->rc == SW_OK && (id >= 0 || id == NC_GLOBAL))
        ncs_ok(f, nc_put_att_double(f->ncid, id, att, NC_DOUBLE, 1, &v), "writing attribute", att);
}

/* Writes n doubles (NaN -> _FillValue through a scratch copy). */
static void ncs_put(ncs_file *f, int id, const char *name, const double *v, size_t n)
{
    if (f->rc != SW_OK || id < 0)
        return;
    double *tmp = malloc((n ? n : 1) * sizeof *tmp);
    if (!tmp) {
        f->rc = sw_fail(f->err, SW_ERR_NOMEM, "%s: out of memory writing %s", f->af.path, name);
        return;
    }
    for (size_t k = 0; k < n; k++)
        tmp[k] = isnan(v[k]) ? NC_FILL_DOUBLE : v[k];
    ncs_ok(f, nc_put_var_double(f->ncid, id, tmp), "writing variable", name);
    free(tmp);
}

/* Writes n strings into a (n, width) character variable, NUL padded and cut to width. */
static void ncs_put_strings(ncs_file *f, int id, const char *name, const char *const *s, size_t n, size_t width)
{
    if (f->rc != SW_OK || id < 0)
        return;
    char *buf = calloc(n ? n : 1, width);
    if (!buf) {
        f->rc = sw_fail(f->err, SW_ERR_NOMEM, "%s: out of memory writing %s", f->af.path, name);
        return;
    }
    for (size_t k = 0; k < n; k++) {
        size_t len = s[k] ? strlen(s[k]) : 0;
        memcpy(buf + k * width, s[k] ? s[k] : "", len < width ? len : width);
    }
    ncs_ok(f, nc_put_var_text(f->ncid, id, buf), "writing variable", name);
    free(buf);
}

static void ncs_common_globals(ncs_file *f, const char *caution)
{
    ncs_text(f, NC_GLOBAL, "Conventions", "CF-1.11");
    ncs_text(f, NC_GLOBAL, "source", "shoreward " SW_VERSION);
    ncs_text(f, NC_GLOBAL, "caution", caution ? caution : "");
}

/* The cell-centre coordinates of the grid on dimensions dim_x, dim_y; their ids into id[0], id[1]:
 * x, y in m, or with geo lon, lat in degrees (CF 1.11 sections 4.1, 4.2). */
static void ncs_def_xy(ncs_file *f, int dim_y, int dim_x, int geo, int id[2])
{
    static const char *const axis[2] = { "X", "Y" };
    static const char *const name[2][2] = { { "x", "y" }, { "lon", "lat" } };
    static const char *const standard_name[2][2] = { { "projection_x_coordinate", "projection_y_coordinate" },
                                                     { "longitude", "latitude" } };
    static const char *const long_name[2][2] = { { "x of the cell centre", "y of the cell centre" },
                                                 { "longitude of the cell centre", "latitude of the cell centre" } };
    static const char *const units[2][2] = { { "m", "m" }, { "degrees_east", "degrees_north" } };
    int dims[2] = { dim_x, dim_y };
    for (int q = 0; q < 2; q++) {
        id[q] = ncs_coord_var(f, name[geo][q], NC_DOUBLE, 1, &dims[q]);
        ncs_text(f, id[q], "standard_name", standard_name[geo][q]);
        ncs_text(f, id[q], "long_name", long_name[geo][q]);
        ncs_text(f, id[q], "units", units[geo][q]);
        ncs_text(f, id[q], "axis", axis[q]);
    }
}

/* A model coordinate (m) as written: degrees with geo, metres otherwise. */
static double ncs_coord(const sw_grid *g, int geo, double m)
{
    return geo ? sw_grid_to_deg(g, m) : m;
}

/* Writes the coordinates ncs_def_xy defined (the same geo). */
static void ncs_put_xy(ncs_file *f, const int id[2], const sw_grid *g, int geo)
{
    size_t n = g->nx > g->ny ? g->nx : g->ny;
    double *c = malloc(n * sizeof *c);
    if (!c) {
        if (f->rc == SW_OK)
            f->rc = sw_fail(f->err, SW_ERR_NOMEM, "%s: out of memory", f->af.path);
        return;
    }
    for (size_t i = 0; i < g->nx; i++)
        c[i] = ncs_coord(g, geo, sw_grid_xc(g, i));
    ncs_put(f, id[0], geo ? "lon" : "x", c, g->nx);
    for (size_t j = 0; j < g->ny; j++)
        c[j] = ncs_coord(g, geo, sw_grid_yc(g, j));
    ncs_put(f, id[1], geo ? "lat" : "y", c, g->ny);
    free(c);
}

/* Defines the scalar grid mapping variable `crs` (CF 1.11 section 5.6) as outputs/ncwrite.c does: on a
 * geographic grid latitude_longitude on the model's sphere, on a projected one with a CRS a copy of its
 * attributes. Returns 1 when defined, 0 when the file has no coordinate reference (or after a failure). */
static int ncs_def_crs(ncs_file *f, const sw_grid *g, const sw_crs *crs)
{
    if (f->rc != SW_OK)
        return 0;
    int id;
    const char *what;
    const int rc = sw_crs_define(f->ncid, "crs", g, crs, &id, &what);
    return ncs_ok(f, rc, "writing the grid mapping", what) && id >= 0;
}

void sw_ncs_quiet_thread(void)
{
    /* herr_t H5Eset_auto2(hid_t estack, H5E_auto2_t func, void *data), with hid_t a 64-bit integer
     * since HDF5 1.10 and H5E_DEFAULT = 0: (0, NULL, NULL) turns printing off for this thread */
    typedef int (*set_auto_fn)(int64_t estack, void *func, void *data);
    void *self = dlopen(NULL, RTLD_LAZY);
    void *sym = self ? dlsym(self, "H5Eset_auto2") : NULL;
    if (sym) {
        set_auto_fn fn;
        memcpy(&fn, &sym, sizeof fn);   /* POSIX: a dlsym result may be used as a function pointer */
        fn(0, NULL, NULL);
    }
    if (self)
        dlclose(self);
}

/* ---- member files ------------------------------------------------------------------------ */

sw_status sw_ncs_member_write(const char *path, const sw_sweep_member_result *r, const double *values,
                              size_t n_params, const sw_grid *g, const char *caution, sw_error *err)
{
    ncs_file f;
    if (ncs_create(&f, path, err) != SW_OK)
        return f.rc;
    int ok = r->status == SW_OK;
    ncs_common_globals(&f, caution);
    ncs_text(&f, NC_GLOBAL, "title", "shoreward sweep member");
    ncs_double(&f, NC_GLOBAL, "member", (double)r->index);
    ncs_text(&f, NC_GLOBAL, "status", ok ? "ok" : sw_status_name(r->status));
    ncs_text(&f, NC_GLOBAL, "error", r->error);
    ncs_double(&f, NC_GLOBAL, "wall_time_s", r->wall_s);
    ncs_double(&f, NC_GLOBAL, "time_step_s", r->dt_s);
    ncs_double(&f, NC_GLOBAL, "steps", (double)r->steps);
    int d_par = ncs_dim(&f, "parameter", n_params);
    int v_par = ncs_var(&f, "parameter_value", NC_DOUBLE, 1, &d_par);
    int v_stat[4] = { -1, -1, -1, -1 }, v_time = -1, v_eta = -1, v_map[3] = { -1, -1, -1 }, v_xy[2] = { -1, -1 };
    static const char *const stat_name[4] = { "arrival_time", "peak", "peak_time", "trough" };
    if (ok) {
        int d_st = r->n_gauges ? ncs_dim(&f, "station", r->n_gauges) : -1;
        int d_t = ncs_dim(&f, "time", r->n_times ? r->n_times : 1);
        int d_y = ncs_dim(&f, "y", g->ny), d_x = ncs_dim(&f, "x", g->nx);
        if (r->n_gauges) {
            for (int q = 0; q < 4; q++)
                v_stat[q] = ncs_var(&f, stat_name[q], NC_DOUBLE, 1, &d_st);
            int dims[2] = { d_st, d_t };
            v_eta = ncs_var(&f, "gauge_eta", NC_DOUBLE, 2, dims);
        }
        v_time = ncs_var(&f, "gauge_time", NC_DOUBLE, 1, &d_t);
        ncs_def_xy(&f, d_y, d_x, 0, v_xy);
        int dims[2] = { d_y, d_x };
        size_t shape[2] = { g->ny, g->nx };
        static const char *const map_name[3] = { "arrival_map", "eta_max_map", "wet" };
        for (int q = 0; q < 3; q++) {
            v_map[q] = ncs_var(&f, map_name[q], q == 2 ? NC_UBYTE : NC_DOUBLE, 2, dims);
            ncs_compress(&f, v_map[q], 2, shape);
        }
    }
    if (f.rc == SW_OK)
        ncs_ok(&f, nc_enddef(f.ncid), "ending definitions", NULL);
    ncs_put(&f, v_par, "parameter_value", values, n_params);
    if (ok) {
        const double *stat[4] = { r->arrival_s, r->peak_m, r->peak_time_s, r->trough_m };
        for (int q = 0; q < 4; q++)
            ncs_put(&f, v_stat[q], stat_name[q], stat[q], r->n_gauges);
        ncs_put(&f, v_time, "gauge_time", r->time_s, r->n_times);
        ncs_put(&f, v_eta, "gauge_eta", r->eta_m, r->n_gauges * r->n_times);
        ncs_put_xy(&f, v_xy, g, 0);
        ncs_put(&f, v_map[0], "arrival_map", r->arrival_map_s, r->n_cells);
        ncs_put(&f, v_map[1], "eta_max_map", r->eta_max_map_m, r->n_cells);
        if (f.rc == SW_OK)
            ncs_ok(&f, nc_put_var_uchar(f.ncid, v_map[2], r->wet), "writing variable", "wet");
    }
    return ncs_finish(&f);
}

/* Reads n doubles of variable `name` (start/count may be NULL for the whole variable), fill -> NaN. */
static sw_status ncs_get(int ncid, const char *path, const char *name, const size_t *start, const size_t *count,
                         double *out, size_t n, sw_error *err)
{
    int id, rc = nc_inq_varid(ncid, name, &id);
    if (rc == NC_NOERR)
        rc = start ? nc_get_vara_double(ncid, id, start, count, out) : nc_get_var_double(ncid, id, out);
    if (rc != NC_NOERR)
        return sw_fail(err, SW_ERR_NETCDF, "%s: reading %s: %s", path, name, nc_strerror(rc));
    for (size_t k = 0; k < n; k++)
        if (out[k] == NC_FILL_DOUBLE)
            out[k] = NAN;
    return SW_OK;
}

static size_t ncs_dim_len(int ncid, const char *name)
{
    int id;
    size_t len = 0;
    if (nc_inq_dimid(ncid, name, &id) != NC_NOERR || nc_inq_dimlen(ncid, id, &len) != NC_NOERR)
        return 0;
    return len;
}

/* A text attribute into buf (size n), "" when absent. */
static void ncs_get_text(int ncid, const char *att, char *buf, size_t n)
{
    size_t len = 0;
    buf[0] = '\0';
    if (nc_inq_attlen(ncid, NC_GLOBAL, att, &len) != NC_NOERR || len + 1 > n)
        return;
    if (nc_get_att_text(ncid, NC_GLOBAL, att, buf) == NC_NOERR)
        buf[len] = '\0';
    else
        buf[0] = '\0';
}

sw_status sw_ncs_member_read(const char *path, size_t n_params, size_t n_gauges, double *values,
                             sw_sweep_member_result *r, sw_error *err)
{
    memset(r, 0, sizeof *r);
    int ncid, rc = nc_open(path, NC_NOWRITE, &ncid);
    if (rc != NC_NOERR)
        return sw_fail(err, SW_ERR_NETCDF, "%s: cannot open: %s", path, nc_strerror(rc));
    sw_status st = SW_OK;
    char status[64];
    ncs_get_text(ncid, "status", status, sizeof status);
    ncs_get_text(ncid, "error", r->error, sizeof r->error);
    double member = -1;
    nc_get_att_double(ncid, NC_GLOBAL, "member", &member);
    nc_get_att_double(ncid, NC_GLOBAL, "wall_time_s", &r->wall_s);
    nc_get_att_double(ncid, NC_GLOBAL, "time_step_s", &r->dt_s);
    double steps = 0;
    nc_get_att_double(ncid, NC_GLOBAL, "steps", &steps);
    r->steps = (long long)steps;
    r->index = member >= 0 ? (size_t)member : 0;
    if (ncs_dim_len(ncid, "parameter") != n_params)
        st = sw_fail(err, SW_ERR_INPUT, "%s: has %zu parameters, the sweep %zu", path, ncs_dim_len(ncid, "parameter"),
                     n_params);
    if (st == SW_OK)
        st = ncs_get(ncid, path, "parameter_value", NULL, NULL, values, n_params, err);
    r->status = SW_ERR_UNSTABLE;
    if (!strcmp(status, "ok"))
        r->status = SW_OK;
    else
        for (int c = SW_ERR_USAGE; c <= SW_ERR_INTERRUPTED; c++)
            if (!strcmp(status, sw_status_name((sw_status)c)))
                r->status = (sw_status)c;
    if (st == SW_OK && r->status == SW_OK) {
        size_t ng = ncs_dim_len(ncid, "station"), nt = ncs_dim_len(ncid, "time");
        if (ng != n_gauges || nt == 0)
            st = sw_fail(err, SW_ERR_INPUT, "%s: has %zu gauges and %zu samples, the sweep %zu gauges", path, ng, nt,
                         n_gauges);
        r->n_gauges = ng;
        r->n_times = nt;
        r->time_s = st == SW_OK ? malloc(nt * sizeof(double)) : NULL;
        r->eta_m = st == SW_OK ? malloc((ng * nt > 0 ? ng * nt : 1) * sizeof(double)) : NULL;
        if (st == SW_OK && (!r->time_s || !r->eta_m))
            st = sw_fail(err, SW_ERR_NOMEM, "%s: out of memory", path);
        if (st == SW_OK)
            st = ncs_get(ncid, path, "gauge_time", NULL, NULL, r->time_s, nt, err);
        if (st == SW_OK && ng) {
            double *stat[4] = { r->arrival_s, r->peak_m, r->peak_time_s, r->trough_m };
            static const char *const name[4] = { "arrival_time", "peak", "peak_time", "trough" };
            for (int q = 0; q < 4 && st == SW_OK; q++)
                st = ncs_get(ncid, path, name[q], NULL, NULL, stat[q], ng, err);
            if (st == SW_OK)
                st = ncs_get(ncid, path, "gauge_eta", NULL, NULL, r->eta_m, ng * nt, err);
        }
    }
    nc_close(ncid);
    if (st != SW_OK)
        sw_sweep_member_result_free(r);
    return st;
}

sw_status sw_ncs_member_read_rows(const char *path, const sw_grid *g, size_t j0, size_t n_rows, double *arrival_s,
                                  double *eta_max_m, unsigned char *wet, sw_error *err)
{
    int ncid, rc = nc_open(path, NC_NOWRITE, &ncid);
    if (rc != NC_NOERR)
        return sw_fail(err, SW_ERR_NETCDF, "%s: cannot open: %s", path, nc_strerror(rc));
    sw_status st = SW_OK;
    if (ncs_dim_len(ncid, "x") != g->nx || ncs_dim_len(ncid, "y") != g->ny)
        st = sw_fail(err, SW_ERR_INPUT, "%s: maps of %zu x %zu cells, the base grid has %zu x %zu", path,
                     ncs_dim_len(ncid, "x"), ncs_dim_len(ncid, "y"), g->nx, g->ny);
    size_t start[2] = { j0, 0 }, count[2] = { n_rows, g->nx }, n = n_rows * g->nx;
    if (st == SW_OK)
        st = ncs_get(ncid, path, "arrival_map", start, count, arrival_s, n, err);
    if (st == SW_OK)
        st = ncs_get(ncid, path, "eta_max_map", start, count, eta_max_m, n, err);
    if (st == SW_OK) {
        int id;
        rc = nc_inq_varid(ncid, "wet", &id);
        if (rc == NC_NOERR)
            rc = nc_get_vara_uchar(ncid, id, start, count, wet);
        if (rc != NC_NOERR)
            st = sw_fail(err, SW_ERR_NETCDF, "%s: reading wet: %s", path, nc_strerror(rc));
    }
    nc_close(ncid);
    return st;
}

/* ---- the sweep file ---------------------------------------------------------------------- */

/* A map variable (y, x) with its attributes; cell_methods skipped when NULL; grid_mapping "crs" when
 * the file has a crs variable (has_crs). */
static int ncs_map(ncs_file *f, const int dims[2], const sw_grid *g, int has_crs, nc_type type, const char *name,
                   const char *standard_name, const char *units, const char *long_name, const char *cell_methods)
{
    size_t shape[2] = { g->ny, g->nx };
    int id = ncs_var(f, name, type, 2, dims);
    ncs_compress(f, id, 2, shape);
    if (standard_name)
        ncs_text(f, id, "standard_name", standard_name);
    ncs_text(f, id, "long_name", long_name);
    if (units)
        ncs_text(f, id, "units", units);
    if (cell_methods)
        ncs_text(f, id, "cell_methods", cell_methods);
    ncs_text(f, id, "coordinates", sw_grid_geographic(g) ? "lat lon" : "y x");
    if (has_crs)
        ncs_text(f, id, "grid_mapping", "crs");
    return id;
}

sw_status sw_ncs_sweep_write(const char *path, const sw_ncs_sweep *d, sw_error *err)
{
    if (!d || !d->grid || d->n_members == 0 || d->n_params == 0 || d->n_times == 0)
        return sw_fail(err, SW_ERR_USAGE, "%s: sweep data missing or empty", path);
    const sw_grid *g = d->grid;
    const int geo = sw_grid_geographic(g);
    if (geo && !(isfinite(g->radius_m) && g->radius_m > 0))
        return sw_fail(err, SW_ERR_USAGE, "%s: geographic grid with radius %g m (accepted: > 0)", path, g->radius_m);
    size_t M = d->n_members, P = d->n_params, G = d->n_gauges, T = d->n_times, n = sw_grid_cells(g);
    ncs_file f;
    if (ncs_create(&f, path, err) != SW_OK)
        return f.rc;
    ncs_common_globals(&f, d->caution);
    ncs_text(&f, NC_GLOBAL, "title", d->title);
    char *history = sw_ncw_history(d->history);
    if (!history && f.rc == SW_OK)
        f.rc = sw_fail(err, SW_ERR_NOMEM, "%s: out of memory writing the history attribute", path);
    if (history)
        ncs_text(&f, NC_GLOBAL, "history", history);
    free(history);
    ncs_text(&f, NC_GLOBAL, "scenario", d->scenario_text);
    ncs_text(&f, NC_GLOBAL, "comment", "Sensitivity sweep of a linear shallow-water model; see the caution "
                                       "attribute. Member dimension: one run per member.");
    ncs_text(&f, NC_GLOBAL, "sweep_design", d->design);
    ncs_double(&f, NC_GLOBAL, "sweep_members", (double)M);
    if (d->has_seed)
        ncs_double(&f, NC_GLOBAL, "sweep_seed", (double)d->seed);
    ncs_text(&f, NC_GLOBAL, "sweep_sensitivity_measure", d->measure);
    ncs_text(&f, NC_GLOBAL, "sweep_map_method", d->map_method);

    int d_m = ncs_dim(&f, "member", M), d_p = ncs_dim(&f, "parameter", P);
    int d_s = G ? ncs_dim(&f, "station", G) : -1;
    int d_t = ncs_dim(&f, "time", T);
    int d_y = ncs_dim(&f, geo ? "lat" : "y", g->ny), d_x = ncs_dim(&f, geo ? "lon" : "x", g->nx);
    int d_str = ncs_dim(&f, "name_strlen", NCS_NAME_STRLEN), d_err = ncs_dim(&f, "error_strlen", NCS_ERROR_STRLEN);

    int v_member = ncs_var(&f, "member", NC_INT, 1, &d_m);
    ncs_text(&f, v_member, "standard_name", "realization");
    ncs_text(&f, v_member, "long_name", "sweep member number (member files members/mNNNNN.nc)");
    int dims2[2] = { d_p, d_str };
    int v_pname = ncs_var(&f, "parameter_name", NC_CHAR, 2, dims2);
    ncs_text(&f, v_pname, "long_name", "varied parameter, as named in the scenario's [sweep] section");
    int v_punit = ncs_var(&f, "parameter_units", NC_CHAR, 2, dims2);
    char units_text[160];   /* layouts are stored as their registry index (A = 0 .. E = 4 today) */
    size_t n_layouts = sw_layout_count();
    snprintf(units_text, sizeof units_text, "units of parameter_value (1: dimensionless; layout: %s = 0 .. %s = %zu)",
             sw_layout_at(0)->name, sw_layout_at(n_layouts - 1)->name, n_layouts - 1);
    ncs_text(&f, v_punit, "long_name", units_text);
    int dims_mp[2] = { d_m, d_p };
    int v_pval = ncs_var(&f, "parameter_value", NC_DOUBLE, 2, dims_mp);
    ncs_text(&f, v_pval, "long_name", "each member's parameter values, in parameter_units");
    int dims_mps[3] = { d_m, d_p, d_str };
    int v_ptext = ncs_var(&f, "parameter_text", NC_CHAR, 3, dims_mps);
    ncs_text(&f, v_ptext, "long_name", "each member's parameter values as text, with units");
    int v_failed = ncs_var(&f, "member_failed", NC_UBYTE, 1, &d_m);
    ncs_text(&f, v_failed, "long_name", "1 when the member failed (see member_error); its results are missing");
    int dims_me[2] = { d_m, d_err };
    int v_error = ncs_var(&f, "member_error", NC_CHAR, 2, dims_me);
    ncs_text(&f, v_error, "long_name", "why the member failed, empty when it ran");

    char time_units[96];
    snprintf(time_units, sizeof time_units, "seconds since %s", d->time_origin);
    int v_sname = -1, v_sx = -1, v_sy = -1, v_stat[4] = { -1, -1, -1, -1 }, v_gt = -1, v_ge = -1, v_sens[2] = { -1, -1 };
    static const char *const stat_name[4] = { "arrival_time", "peak", "peak_time", "trough" };
    if (G) {
        int dims_s[2] = { d_s, d_str };
        v_sname = ncs_var(&f, "station_name", NC_CHAR, 2, dims_s);
        ncs_text(&f, v_sname, "cf_role", "timeseries_id");
        ncs_text(&f, v_sname, "long_name", "gauge name");
        ncs_text(&f, v_sname, "_Encoding", "utf-8");   /* readers (xarray) decode the names to strings */
        ncs_text(&f, NC_GLOBAL, "featureType", "timeSeries");   /* CF 1.11 section 9.5: cf_role needs it */
        v_sx = ncs_coord_var(&f, geo ? "station_lon" : "station_x", NC_DOUBLE, 1, &d_s);
        ncs_text(&f, v_sx, "standard_name", geo ? "longitude" : "projection_x_coordinate");
        ncs_text(&f, v_sx, "long_name", geo ? "gauge longitude" : "gauge x position");
        ncs_text(&f, v_sx, "units", geo ? "degrees_east" : "m");
        v_sy = ncs_coord_var(&f, geo ? "station_lat" : "station_y", NC_DOUBLE, 1, &d_s);
        ncs_text(&f, v_sy, "standard_name", geo ? "latitude" : "projection_y_coordinate");
        ncs_text(&f, v_sy, "long_name", geo ? "gauge latitude" : "gauge y position");
        ncs_text(&f, v_sy, "units", geo ? "degrees_north" : "m");
        int dims_ms[2] = { d_m, d_s };
        static const char *const stat_long[4] = {
            "first arrival at the gauge: first time |eta| reached the member's arrival threshold "
            "(interpolated between steps), seconds after the time origin",
            "highest sea surface elevation at the gauge", "time of the highest elevation at the gauge",
            "lowest sea surface elevation at the gauge" };
        for (int q = 0; q < 4; q++) {
            v_stat[q] = ncs_var(&f, stat_name[q], NC_DOUBLE, 2, dims_ms);
            ncs_text(&f, v_stat[q], "long_name", stat_long[q]);
            ncs_text(&f, v_stat[q], "units", q == 1 || q == 3 ? "m" : "seconds");   /* xarray: timedelta */
            if (q == 1 || q == 3) {
                ncs_text(&f, v_stat[q], "standard_name", "sea_surface_height_above_mean_sea_level");
                ncs_text(&f, v_stat[q], "cell_methods", q == 1 ? "time: maximum" : "time: minimum");
            }
            ncs_text(&f, v_stat[q], "coordinates", "member station_name");
        }
        int dims_mt[2] = { d_m, d_t };
        v_gt = ncs_var(&f, "gauge_time", NC_DOUBLE, 2, dims_mt);
        ncs_text(&f, v_gt, "standard_name", "time");
        ncs_text(&f, v_gt, "long_name", "gauge sample times of each member (members may differ in dt)");
        ncs_text(&f, v_gt, "units", time_units);
        ncs_text(&f, v_gt, "calendar", "standard");
        int dims_mst[3] = { d_m, d_s, d_t };
        v_ge = ncs_var(&f, "gauge_eta", NC_DOUBLE, 3, dims_mst);
        ncs_text(&f, v_ge, "standard_name", "sea_surface_height_above_mean_sea_level");
        ncs_text(&f, v_ge, "long_name", "sea surface elevation at the gauge, each member");
        ncs_text(&f, v_ge, "units", "m");
        ncs_text(&f, v_ge, "coordinates", geo ? "gauge_time member station_name station_lat station_lon"
                                              : "gauge_time member station_name station_y station_x");
        int dims_sp[2] = { d_s, d_p };
        static const char *const sens_name[2] = { "arrival_sensitivity", "peak_sensitivity" };
        const char *sens_units[2] = { d->sens_units_arrival, d->sens_units_peak };
        for (int q = 0; q < 2; q++) {
            v_sens[q] = ncs_var(&f, sens_name[q], NC_DOUBLE, 2, dims_sp);
            ncs_text(&f, v_sens[q], "long_name", q ? "how much each parameter moves the peak at each gauge"
                                                   : "how much each parameter moves the first arrival at each gauge");
            ncs_text(&f, v_sens[q], "units", sens_units[q]);
            ncs_text(&f, v_sens[q], "comment", d->measure);
        }
    }

    int v_xy[2];
    ncs_def_xy(&f, d_y, d_x, geo, v_xy);
    const int has_crs = ncs_def_crs(&f, g, d->crs);
    if (has_crs && G > 0)   /* the gauge series lie on the grid's coordinates too */
        ncs_text(&f, v_ge, "grid_mapping", "crs");
    int dims_yx[2] = { d_y, d_x };
    int v_depth = ncs_map(&f, dims_yx, g, has_crs, NC_DOUBLE, "depth", "sea_floor_depth_below_mean_sea_level", "m",
                          "still-water depth of the base scenario, positive down (land negative)", NULL);
    ncs_text(&f, v_depth, "positive", "down");
    static const struct {
        const char *name, *standard_name, *units, *long_name, *cell_methods;
    } maps[7] = {
        { "arrival_earliest", NULL, "seconds", "earliest first arrival over the members with water here",
          "member: minimum" },
        { "arrival_median", NULL, "seconds", "median first arrival over the members with water here (never "
                                             "reached counts as latest)", "member: median" },
        { "arrival_latest", NULL, "seconds", "latest first arrival over the members with water here; _FillValue "
                                             "when a member never reached the cell", "member: maximum" },
        { "arrival_spread", NULL, "seconds", "arrival_latest minus arrival_earliest", "member: range" },
        { "eta_max_p50", "sea_surface_height_above_mean_sea_level", "m",
          "median over members of the highest elevation reached", "time: maximum member: median" },
        { "eta_max_p90", "sea_surface_height_above_mean_sea_level", "m",
          "90th percentile over members of the highest elevation reached (linear interpolation between order "
          "statistics)", "time: maximum member: point (comment: 90th percentile over the members; CF 1.11 "
          "Appendix E has no percentile method)" },
        { "eta_max_highest", "sea_surface_height_above_mean_sea_level", "m",
          "highest elevation reached in any member", "time: maximum member: maximum" },
    };
    const double *map_data[7] = { d->arrival_earliest_s, d->arrival_median_s, d->arrival_latest_s,
                                  d->arrival_spread_s, d->eta_max_p50_m, d->eta_max_p90_m, d->eta_max_highest_m };
    int v_map[7];
    for (int q = 0; q < 7; q++) {
        v_map[q] = ncs_map(&f, dims_yx, g, has_crs, NC_DOUBLE, maps[q].name, maps[q].standard_name, maps[q].units,
                           maps[q].long_name, maps[q].cell_methods);
        if (q < 3)
            ncs_text(&f, v_map[q], "comment", "seconds after the time origin; arrival is the first time |eta| "
                                              ">= the member's arrival threshold");
    }
    int v_wet = ncs_map(&f, dims_yx, g, has_crs, NC_INT, "members_wet", NULL, NULL,
                        "number of members that ran and have water in this cell", NULL);
    int v_reached = ncs_map(&f, dims_yx, g, has_crs, NC_INT, "members_reached", NULL, NULL,
                            "number of members whose wave reached this cell", NULL);
    if (f.rc == SW_OK)
        ncs_ok(&f, nc_enddef(f.ncid), "ending definitions", NULL);

    int *idx = malloc(M * sizeof *idx);
    if (!idx && f.rc == SW_OK)
        f.rc = sw_fail(err, SW_ERR_NOMEM, "%s: out of memory", path);
    for (size_t m = 0; idx && m < M; m++)
        idx[m] = (int)m;
    if (f.rc == SW_OK)
        ncs_ok(&f, nc_put_var_int(f.ncid, v_member, idx), "writing variable", "member");
    free(idx);
    ncs_put_strings(&f, v_pname, "parameter_name", d->param_name, P, NCS_NAME_STRLEN);
    ncs_put_strings(&f, v_punit, "parameter_units", d->param_units, P, NCS_NAME_STRLEN);
    ncs_put(&f, v_pval, "parameter_value", d->value, M * P);
    ncs_put_strings(&f, v_ptext, "parameter_text", d->value_text, M * P, NCS_NAME_STRLEN);
    if (f.rc == SW_OK)
        ncs_ok(&f, nc_put_var_uchar(f.ncid, v_failed, d->failed), "writing variable", "member_failed");
    ncs_put_strings(&f, v_error, "member_error", d->error, M, NCS_ERROR_STRLEN);
    if (G) {
        ncs_put_strings(&f, v_sname, "station_name", d->gauge_name, G, NCS_NAME_STRLEN);
        if (geo) {
            double *deg = malloc(2 * G * sizeof *deg);
            if (!deg && f.rc == SW_OK)
                f.rc = sw_fail(err, SW_ERR_NOMEM, "%s: out of memory", path);
            for (size_t k = 0; deg && k < G; k++) {
                deg[k] = ncs_coord(g, 1, d->gauge_x[k]);
                deg[G + k] = ncs_coord(g, 1, d->gauge_y[k]);
            }
            if (deg) {
                ncs_put(&f, v_sx, "station_lon", deg, G);
                ncs_put(&f, v_sy, "station_lat", deg + G, G);
            }
            free(deg);
        } else {
            ncs_put(&f, v_sx, "station_x", d->gauge_x, G);
            ncs_put(&f, v_sy, "station_y", d->gauge_y, G);
        }
        const double *stat[4] = { d->arrival_s, d->peak_m, d->peak_time_s, d->trough_m };
        for (int q = 0; q < 4; q++)
            ncs_put(&f, v_stat[q], stat_name[q], stat[q], M * G);
        ncs_put(&f, v_gt, "gauge_time", d->gauge_time_s, M * T);
        ncs_put(&f, v_ge, "gauge_eta", d->gauge_eta_m, M * G * T);
        ncs_put(&f, v_sens[0], "arrival_sensitivity", d->arrival_sens, G * P);
        ncs_put(&f, v_sens[1], "peak_sensitivity", d->peak_sens, G * P);
    }
    ncs_put_xy(&f, v_xy, g, geo);
    ncs_put(&f, v_depth, "depth", d->depth_m, n);
    for (int q = 0; q < 7; q++)
        ncs_put(&f, v_map[q], maps[q].name, map_data[q], n);
    if (f.rc == SW_OK && ncs_ok(&f, nc_put_var_int(f.ncid, v_wet, d->members_wet), "writing variable", "members_wet"))
        ncs_ok(&f, nc_put_var_int(f.ncid, v_reached, d->members_reached), "writing variable", "members_reached");
    return ncs_finish(&f);
}
