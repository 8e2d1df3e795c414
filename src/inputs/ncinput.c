/* ncinput.c - reading a 2D field on projected x/y coordinates from a NetCDF file (see ncinput.h).
 *
 * Invariant: a function that opens the file closes it on every path before it returns, and every
 * message starts with "PATH: variable 'VAR'" so the user knows which input is at fault.
 *
 * The file's axes are described by their first cell centre and their (even) spacing, both in
 * metres; values are then looked up by fractional index p = (x - first centre) / spacing, so the
 * file's coordinate arrays are not needed once they have been checked.
 */
#include "inputs/ncinput.h"

#include <ctype.h>
#include <math.h>
#include <netcdf.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "inputs/ncattr.h"
#include "inputs/scenario.h"   /* sw_positive */

#define NCIN_EVEN_TOL 1e-6    /* relative tolerance of the "evenly spaced" check */
#define NCIN_SAME_TOL 1e-9    /* relative tolerance under which two grids coincide (exact copy) */
#define NCIN_EDGE_TOL 1e-6    /* how far outside the centre extent a target may lie, in cells */

/* An open file and the checked description of one 2D variable in it. Axis index 0 is the
 * variable's first dimension (y, rows), 1 its second (x, columns). */
typedef struct {
    const char *path;                   /* file path, for messages */
    const char *var;                    /* variable name, for messages */
    int ncid;                           /* open dataset; -1 when closed */
    int varid;
    nc_type type;                       /* the variable's stored type */
    size_t n[2];                        /* points along y, x */
    double c0_m[2];                     /* first cell-centre coordinate along y, x, m */
    double d_m[2];                      /* spacing along y, x, m (> 0) */
    char dim[2][NC_MAX_NAME + 1];       /* dimension names along y, x */
} ncin_file;

/* Records a NetCDF library failure: a system error (rc > 0, e.g. a missing file) is SW_ERR_IO,
 * anything else SW_ERR_NETCDF. Returns the status. */
static sw_status ncin_lib_fail(const ncin_file *f, int rc, const char *what, sw_error *err)
{
    return sw_fail(err, rc > 0 ? SW_ERR_IO : SW_ERR_NETCDF, "%s: variable '%s': %s: %s", f->path,
                   f->var, what, nc_strerror(rc));
}

static void ncin_close(ncin_file *f)
{
    if (f->ncid >= 0)
        nc_close(f->ncid);
    f->ncid = -1;
}

/* Case-insensitive equality of two ASCII strings (strcasecmp is not in C17). */
static int ncin_same_word(const char *a, const char *b)
{
    for (; *a && *b; a++, b++)
        if (tolower((unsigned char)*a) != tolower((unsigned char)*b))
            return 0;
    return *a == *b;
}

/* Metres per unit of a coordinate's `units` text: 1 for metres, 1000 for kilometres, 0 when the
 * unit is not a length we accept. */
static double ncin_unit_scale(const char *units)
{
    static const char *const metres[] = {"m", "meter", "meters", "metre", "metres"};
    static const char *const kilometres[] = {"km", "kilometer", "kilometers", "kilometre", "kilometres"};
    for (size_t k = 0; k < sizeof metres / sizeof metres[0]; k++)
        if (ncin_same_word(units, metres[k]))
            return 1.0;
    for (size_t k = 0; k < sizeof kilometres / sizeof kilometres[0]; k++)
        if (ncin_same_word(units, kilometres[k]))
            return 1000.0;
    return 0.0;
}

/* Checks the coordinate variable of axis k (dimension dimid) and stores its first centre and
 * spacing in metres. Returns SW_OK or SW_ERR_INPUT / SW_ERR_NETCDF / SW_ERR_NOMEM; the file
 * stays open either way (the caller closes it). */
static sw_status ncin_axis(ncin_file *f, int k, int dimid, sw_error *err)
{
    const char *dn = f->dim[k];
    int rc = nc_inq_dim(f->ncid, dimid, f->dim[k], &f->n[k]);
    if (rc != NC_NOERR)
        return ncin_lib_fail(f, rc, "reading its dimensions", err);
    if (f->n[k] < 2)
        return sw_fail(err, SW_ERR_INPUT,
                       "%s: variable '%s': dimension '%s' has %zu point(s); at least 2 are needed "
                       "to define the grid spacing", f->path, f->var, dn, f->n[k]);

    int cid;
    rc = nc_inq_varid(f->ncid, dn, &cid);
    if (rc == NC_ENOTVAR)
        return sw_fail(err, SW_ERR_INPUT,
                       "%s: variable '%s': dimension '%s' has no coordinate variable (a 1D variable "
                       "named '%s' holding cell-centre coordinates in metres)", f->path, f->var, dn, dn);
    if (rc != NC_NOERR)
        return ncin_lib_fail(f, rc, "looking up its coordinate variables", err);
    int cnd, cdim;
    nc_type ctype;
    rc = nc_inq_varndims(f->ncid, cid, &cnd);
    if (rc == NC_NOERR && cnd == 1)
        rc = nc_inq_vardimid(f->ncid, cid, &cdim);
    if (rc == NC_NOERR)
        rc = nc_inq_vartype(f->ncid, cid, &ctype);
    if (rc != NC_NOERR)
        return ncin_lib_fail(f, rc, "reading its coordinate variables", err);
    if (cnd != 1 || cdim != dimid)
        return sw_fail(err, SW_ERR_INPUT,
                       "%s: variable '%s': coordinate variable '%s' must be 1D along dimension '%s'",
                       f->path, f->var, dn, dn);
    if (ctype == NC_CHAR || ctype == NC_STRING)
        return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': coordinate variable '%s' holds text, "
                       "not numbers", f->path, f->var, dn);

    char units[128];
    int found;
    rc = sw_nc_text_att(f->ncid, cid, "units", units, sizeof units, &found);
    if (rc != NC_NOERR)
        return ncin_lib_fail(f, rc, "reading the units of its coordinates", err);
    double scale = found ? ncin_unit_scale(units) : 1.0;   /* no units: metres */
    if (scale == 0.0) {
        if (strncmp(units, "degree", 6) == 0 || strncmp(units, "Degree", 6) == 0)
            return sw_fail(err, SW_ERR_INPUT,
                           "%s: variable '%s': coordinate '%s' has units '%s': the grid must be "
                           "projected in metres (units m or km), not longitude/latitude",
                           f->path, f->var, dn, units);
        return sw_fail(err, SW_ERR_INPUT,
                       "%s: variable '%s': coordinate '%s' has units '%s' (accepted: m, km)",
                       f->path, f->var, dn, units);
    }

    double *c = malloc(f->n[k] * sizeof *c);
    if (!c)
        return sw_fail(err, SW_ERR_NOMEM, "%s: variable '%s': out of memory reading coordinate '%s'",
                       f->path, f->var, dn);
    rc = nc_get_var_double(f->ncid, cid, c);
    if (rc != NC_NOERR) {
        free(c);
        return ncin_lib_fail(f, rc, "reading its coordinates", err);
    }
    size_t n = f->n[k];
    sw_status st = SW_OK;
    for (size_t m = 0; m < n && st == SW_OK; m++) {
        c[m] *= scale;
        if (!isfinite(c[m]))
            st = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': coordinate '%s' has a missing or "
                         "non-finite value at %s[%zu]", f->path, f->var, dn, dn, m);
    }
    for (size_t m = 0; m + 1 < n && st == SW_OK; m++)
        if (!(c[m + 1] > c[m]))
            st = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': coordinate '%s' is not strictly "
                         "increasing (%s[%zu] = %g m, %s[%zu] = %g m)", f->path, f->var, dn, dn, m,
                         c[m], dn, m + 1, c[m + 1]);
    double d = (c[n - 1] - c[0]) / (double)(n - 1);
    for (size_t m = 0; m + 1 < n && st == SW_OK; m++)
        if (fabs((c[m + 1] - c[m]) - d) > NCIN_EVEN_TOL * d)
            st = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': coordinate '%s' is not evenly "
                         "spaced (step %zu is %g m, the mean step %g m; relative tolerance %g)",
                         f->path, f->var, dn, m, c[m + 1] - c[m], d, NCIN_EVEN_TOL);
    f->c0_m[k] = c[0];
    f->d_m[k] = d;
    free(c);
    return st;
}

/* Opens path and checks variable var: numeric, 2D (y, x), each dimension with an evenly spaced,
 * increasing coordinate variable in metres. On success f describes it and the file is open (close
 * with ncin_close). On failure the file is closed and err names the file and variable. */
static sw_status ncin_open(const char *path, const char *var, ncin_file *f, sw_error *err)
{
    memset(f, 0, sizeof *f);
    f->path = path ? path : "(null)";
    f->var = var ? var : "(null)";
    f->ncid = -1;
    if (!path || !var || !*path || !*var)
        return sw_fail(err, SW_ERR_USAGE, "%s: variable '%s': no file or variable name given",
                       f->path, f->var);

    int rc = nc_open(path, NC_NOWRITE, &f->ncid);
    if (rc != NC_NOERR) {
        f->ncid = -1;
        return ncin_lib_fail(f, rc, "cannot open the file", err);
    }
    sw_status st = SW_OK;
    rc = nc_inq_varid(f->ncid, var, &f->varid);
    if (rc == NC_ENOTVAR) {
        char have[512];
        sw_nc_list_vars(f->ncid, 2, have, sizeof have);
        st = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' not found in the file (2D variables: %s)",
                     path, var, have[0] ? have : "none");
        goto fail;
    }
    int ndims;
    int dimids[NC_MAX_VAR_DIMS];
    if (rc == NC_NOERR)
        rc = nc_inq_var(f->ncid, f->varid, NULL, &f->type, &ndims, dimids, NULL);
    if (rc != NC_NOERR) {
        st = ncin_lib_fail(f, rc, "reading its description", err);
        goto fail;
    }
    if (ndims != 2) {
        st = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' has %d dimension(s); it must have "
                     "exactly 2, (y, x)", path, var, ndims);
        goto fail;
    }
    if (f->type == NC_CHAR || f->type == NC_STRING) {
        st = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' holds text, not numbers", path, var);
        goto fail;
    }
    for (int k = 0; k < 2 && st == SW_OK; k++)
        st = ncin_axis(f, k, dimids[k], err);
    if (st != SW_OK)
        goto fail;
    if (strcmp(f->dim[0], "x") == 0 && strcmp(f->dim[1], "y") == 0) {
        st = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' has dimensions (x, y); they must be "
                     "(y, x), rows running north", path, var);
        goto fail;
    }
    return SW_OK;
fail:
    ncin_close(f);
    return st;
}

sw_status sw_ncin_grid(const char *path, const char *var, sw_grid *out, sw_error *err)
{
    if (!out)
        return sw_fail(err, SW_ERR_USAGE, "sw_ncin_grid: no output grid");
    ncin_file f;
    sw_status st = ncin_open(path, var, &f, err);
    if (st != SW_OK)
        return st;
    ncin_close(&f);
    out->nx = f.n[1];
    out->ny = f.n[0];
    out->dx_m = f.d_m[1];
    out->dy_m = f.d_m[0];
    out->x0_m = f.c0_m[1] - 0.5 * f.d_m[1];
    out->y0_m = f.c0_m[0] - 0.5 * f.d_m[0];
    return SW_OK;
}

/* Reads the whole variable as double into *data (caller frees): missing, NaN and Inf values
 * are an error naming the first bad index in storage order; packed values (scale_factor,
 * add_offset) are unpacked. */
static sw_status ncin_values(const ncin_file *f, double **data, sw_error *err)
{
    *data = NULL;
    size_t rows = f->n[0], cols = f->n[1];
    if (cols > SIZE_MAX / sizeof(double) / rows)
        return sw_fail(err, SW_ERR_NOMEM, "%s: variable '%s' is too large (%zu x %zu)", f->path,
                       f->var, rows, cols);
    size_t total = rows * cols;
    double *v = malloc(total * sizeof *v);
    if (!v)
        return sw_fail(err, SW_ERR_NOMEM, "%s: variable '%s': out of memory for %zu x %zu values",
                       f->path, f->var, rows, cols);
    int rc = nc_get_var_double(f->ncid, f->varid, v);
    if (rc != NC_NOERR) {
        free(v);
        return ncin_lib_fail(f, rc, "reading its values", err);
    }
    sw_nc_missing miss;
    double scale = 1.0, offset = 0.0;
    rc = sw_nc_missing_read(f->ncid, f->varid, &miss);
    if (rc == NC_NOERR)
        rc = sw_nc_num_att(f->ncid, f->varid, "scale_factor", &scale);
    if (rc == NC_NOERR)
        rc = sw_nc_num_att(f->ncid, f->varid, "add_offset", &offset);
    if (rc != NC_NOERR) {
        sw_nc_missing_free(&miss);
        free(v);
        return ncin_lib_fail(f, rc, "reading its _FillValue, missing_value, scale_factor or "
                             "add_offset attribute", err);
    }
    for (size_t k = 0; k < total; k++) {
        int bad = !isfinite(v[k]);
        for (size_t m = 0; m < miss.count && !bad; m++)
            bad = v[k] == miss.value[m];
        if (bad) {
            sw_nc_missing_free(&miss);
            free(v);
            return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' has a missing or non-finite value "
                           "at %s[%zu][%zu]", f->path, f->var, f->var, k / cols, k % cols);
        }
        v[k] = v[k] * scale + offset;
    }
    sw_nc_missing_free(&miss);
    *data = v;
    return SW_OK;
}

/* |a - b| within NCIN_SAME_TOL of `scale` (a positive length, m). */
static int ncin_near(double a, double b, double scale)
{
    return fabs(a - b) <= NCIN_SAME_TOL * scale;
}

/* Bilinear stencil along one axis for n_out target centres c0 + (m + 0.5) d: lower source index
 * idx[m] and weight w[m] of the upper one, or idx[m] = SIZE_MAX when the target lies outside the
 * source's centre extent (beyond NCIN_EDGE_TOL of a cell). src_n >= 2. */
static void ncin_stencil(double c0, double d, size_t n_out, double src_c0, double src_d, size_t src_n,
                         size_t *idx, double *w)
{
    double last = (double)(src_n - 1);
    for (size_t m = 0; m < n_out; m++) {
        double p = (c0 + ((double)m + 0.5) * d - src_c0) / src_d;
        if (!(p >= -NCIN_EDGE_TOL && p <= last + NCIN_EDGE_TOL)) {
            idx[m] = SIZE_MAX;
            w[m] = 0.0;
            continue;
        }
        p = p < 0.0 ? 0.0 : p > last ? last : p;
        size_t i0 = (size_t)floor(p);
        if (i0 > src_n - 2)
            i0 = src_n - 2;
        idx[m] = i0;
        w[m] = p - (double)i0;
    }
}

/* Puts the source values v (rows x cols of f) on grid g into out. */
static sw_status ncin_regrid(const ncin_file *f, const double *v, const sw_grid *g,
                             sw_ncin_outside outside, double *out, sw_error *err)
{
    size_t rows = f->n[0], cols = f->n[1];
    int same = g->nx == cols && g->ny == rows && ncin_near(g->dx_m, f->d_m[1], g->dx_m) &&
               ncin_near(g->dy_m, f->d_m[0], g->dy_m) &&
               ncin_near(sw_grid_xc(g, 0), f->c0_m[1], fmax(g->dx_m, fabs(f->c0_m[1]))) &&
               ncin_near(sw_grid_yc(g, 0), f->c0_m[0], fmax(g->dy_m, fabs(f->c0_m[0])));
    if (same) {
        memcpy(out, v, rows * cols * sizeof *out);
        return SW_OK;
    }

    size_t *ix = malloc(g->nx * sizeof *ix);
    size_t *iy = malloc(g->ny * sizeof *iy);
    double *wx = malloc(g->nx * sizeof *wx);
    double *wy = malloc(g->ny * sizeof *wy);
    sw_status st = SW_OK;
    if (!ix || !iy || !wx || !wy) {
        st = sw_fail(err, SW_ERR_NOMEM, "%s: variable '%s': out of memory interpolating onto the grid",
                     f->path, f->var);
        goto done;
    }
    ncin_stencil(g->x0_m, g->dx_m, g->nx, f->c0_m[1], f->d_m[1], cols, ix, wx);
    ncin_stencil(g->y0_m, g->dy_m, g->ny, f->c0_m[0], f->d_m[0], rows, iy, wy);
    for (size_t j = 0; j < g->ny && st == SW_OK; j++) {
        for (size_t i = 0; i < g->nx; i++) {
            double *o = &out[j * g->nx + i];
            if (ix[i] == SIZE_MAX || iy[j] == SIZE_MAX) {
                if (outside == SW_NCIN_OUTSIDE_ZERO) {
                    *o = 0.0;
                    continue;
                }
                st = sw_fail(err, SW_ERR_INPUT,
                             "%s: variable '%s' does not cover the grid: the centre of cell (i=%zu, "
                             "j=%zu) at x = %g m, y = %g m lies outside the file's cell centres "
                             "(x %g .. %g m, y %g .. %g m)", f->path, f->var, i, j, sw_grid_xc(g, i),
                             sw_grid_yc(g, j), f->c0_m[1], f->c0_m[1] + (double)(cols - 1) * f->d_m[1],
                             f->c0_m[0], f->c0_m[0] + (double)(rows - 1) * f->d_m[0]);
                break;
            }
            const double *s = &v[iy[j] * cols + ix[i]];
            double a = wx[i], b = wy[j];
            *o = (1.0 - b) * ((1.0 - a) * s[0] + a * s[1]) + b * ((1.0 - a) * s[cols] + a * s[cols + 1]);
        }
    }
done:
    free(ix);
    free(iy);
    free(wx);
    free(wy);
    return st;
}

sw_status sw_ncin_read(const char *path, const char *var, const sw_grid *g, sw_ncin_outside outside,
                       double *out, int *positive_attr, sw_error *err)
{
    if (!g || !out || g->nx == 0 || g->ny == 0 || !(g->dx_m > 0.0) || !(g->dy_m > 0.0))
        return sw_fail(err, SW_ERR_USAGE, "%s: variable '%s': no output or an empty grid",
                       path ? path : "(null)", var ? var : "(null)");
    ncin_file f;
    sw_status st = ncin_open(path, var, &f, err);
    if (st != SW_OK)
        return st;

    if (positive_attr) {
        char text[64];
        int found;
        int rc = sw_nc_text_att(f.ncid, f.varid, "positive", text, sizeof text, &found);
        if (rc != NC_NOERR) {
            st = ncin_lib_fail(&f, rc, "reading its 'positive' attribute", err);
            ncin_close(&f);
            return st;
        }
        *positive_attr = !found                      ? SW_POSITIVE_UNSET
                         : ncin_same_word(text, "up")   ? SW_POSITIVE_UP
                         : ncin_same_word(text, "down") ? SW_POSITIVE_DOWN
                                                        : SW_POSITIVE_UNSET;
    }

    double *v = NULL;
    st = ncin_values(&f, &v, err);
    ncin_close(&f);
    if (st != SW_OK)
        return st;
    st = ncin_regrid(&f, v, g, outside, out, err);
    free(v);
    return st;
}
