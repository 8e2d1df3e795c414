/* ncinput.c - reading a 2D field on projected or longitude/latitude coordinates from a NetCDF file
 * (see ncinput.h).
 *
 * Invariant: a function that opens the file closes it on every path before it returns, and every
 * message starts with "PATH: variable 'VAR'" so the user knows which input is at fault.
 *
 * The file's axes are described by their first cell centre and their (even) spacing, in metres or
 * degrees, after three normalisations that make every equivalent file the same description: a
 * decreasing axis is reversed (its smallest centre comes first), a longitude axis drops a repeated
 * seam column (first + 360), and a longitude axis whose spacing divides 360 is snapped to exactly
 * 360 / k with its centres on multiples of half that. Values are then looked up by fractional index
 * p = (position - first centre) / spacing, so the coordinate arrays are not needed once checked.
 *
 * Longitudes are matched modulo 360: a target longitude is moved by whole turns into the turn centred on
 * the middle of the file's canonical span, which starts at lon0 in [0, 360), the canonical first centre;
 * an axis going round the sphere is also rotated so that its canonical first column (the one nearest
 * east of 0 degrees) comes first, and its columns wrap. Two files holding the same data in 0 .. 360 and
 * in -180 .. 180 therefore reach the model as the same numbers.
 *
 * On a geographic grid a fractional index within 1e-9 of a whole number is taken as that number: the
 * target's centre went through arc metres and back to degrees, and a centre that coincides with a file
 * centre must copy its value exactly. Projected reads keep their arithmetic unchanged.
 */
#include "inputs/ncinput.h"

#include <ctype.h>
#include <float.h>
#include <math.h>
#include <netcdf.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "base/isolate.h"
#include "inputs/ncattr.h"
#include "inputs/scenario.h"   /* sw_positive */

#define NCIN_EVEN_TOL 1e-6    /* relative tolerance of the "evenly spaced" check (plus float rounding) */
#define NCIN_SAME_TOL 1e-9    /* relative tolerance under which two projected grids coincide (exact copy) */
#define NCIN_EDGE_TOL 1e-6    /* how far outside the centre (or cell) extent a target may lie, in cells */
#define NCIN_SNAP_TOL 1e-9    /* geographic: a fractional index this near a whole number is that number */
#define NCIN_PI 3.14159265358979323846

/* What an axis measures. */
typedef enum { NCIN_METRES = 0, NCIN_LON, NCIN_LAT } ncin_kind;

/* An open file and the checked description of one 2D variable in it. Axis index 0 is the variable's
 * first dimension (y, rows), 1 its second (x, columns). */
typedef struct {
    const char *path;                   /* file path, for messages */
    const char *var;                    /* variable name, for messages */
    int ncid;                           /* open dataset; -1 when closed */
    int varid;
    int dimid[2];                       /* the variable's dimensions along y, x */
    nc_type type;                       /* the variable's stored type */
    size_t n_stored[2];                 /* points along y, x as stored */
    size_t n[2];                        /* points used along y, x (x: a repeated seam column dropped) */
    int flip[2];                        /* 1: stored decreasing, reversed on read */
    ncin_kind kind[2];                  /* metres, or latitude (y) and longitude (x) */
    double c0[2];                       /* first (smallest) cell centre along y, x: m, or degrees as the
                                         * file writes them */
    double d[2];                        /* spacing along y, x, m or degrees (> 0) */
    double lon0;                        /* longitude axis: canonical first centre, degrees in [0, 360) */
    size_t shift;                       /* longitude axis: canonical column c is column (c + shift) % n */
    int periodic;                       /* longitude axis: the columns go round the sphere (n d = 360) */
    char dim[2][NC_MAX_NAME + 1];       /* dimension names along y, x */
} ncin_file;

static int ncin_geographic(const ncin_file *f) { return f->kind[1] == NCIN_LON; }

/* The unit positions are written in, for messages. */
static const char *ncin_unit(const ncin_file *f) { return ncin_geographic(f) ? "deg" : "m"; }

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

/* 1 when `word` is one of the NULL-terminated list (case-insensitive). */
static int ncin_word_in(const char *word, const char *const *list)
{
    for (size_t k = 0; list[k]; k++)
        if (ncin_same_word(word, list[k]))
            return 1;
    return 0;
}

/* Metres per unit of a coordinate's `units` text: 1 for metres, 1000 for kilometres, 0 when the
 * unit is not a length we accept. */
static double ncin_unit_scale(const char *units)
{
    static const char *const metres[] = {"m", "meter", "meters", "metre", "metres", NULL};
    static const char *const kilometres[] = {"km", "kilometer", "kilometers", "kilometre", "kilometres", NULL};
    if (ncin_word_in(units, metres))
        return 1.0;
    if (ncin_word_in(units, kilometres))
        return 1000.0;
    return 0.0;
}

/* What a coordinate variable measures, from its units and standard_name (CF-1.11 sec. 4.1, 4.2):
 * NCIN_LON / NCIN_LAT, NCIN_METRES with *scale its metres per unit, or -1 when the units are not
 * accepted (the caller explains). */
static int ncin_coord_kind(const char *units, int has_units, const char *std_name, double *scale)
{
    static const char *const east[] = {"degrees_east", "degree_east", "degrees_E", "degree_E", "degreesE",
                                       "degreeE", NULL};
    static const char *const north[] = {"degrees_north", "degree_north", "degrees_N", "degree_N", "degreesN",
                                        "degreeN", NULL};
    static const char *const plain[] = {"degrees", "degree", NULL};
    *scale = 1.0;
    if (has_units && ncin_word_in(units, east))
        return NCIN_LON;
    if (has_units && ncin_word_in(units, north))
        return NCIN_LAT;
    if (!has_units || ncin_word_in(units, plain)) {
        if (ncin_same_word(std_name, "longitude"))
            return NCIN_LON;
        if (ncin_same_word(std_name, "latitude"))
            return NCIN_LAT;
    }
    if (!has_units)
        return NCIN_METRES;   /* no units and no standard name: metres */
    *scale = ncin_unit_scale(units);
    return *scale > 0.0 ? NCIN_METRES : -1;
}

/* Finds the coordinate variable of axis k's dimension and checks its shape and type. */
static sw_status ncin_coord_var(ncin_file *f, int k, int *cid, nc_type *ctype, sw_error *err)
{
    const char *dn = f->dim[k];
    int rc = nc_inq_varid(f->ncid, dn, cid);
    if (rc == NC_ENOTVAR)
        return sw_fail(err, SW_ERR_INPUT,
                       "%s: variable '%s': dimension '%s' has no coordinate variable (a 1D variable named "
                       "'%s' holding cell-centre coordinates in metres, or in degrees_east / degrees_north)",
                       f->path, f->var, dn, dn);
    if (rc != NC_NOERR)
        return ncin_lib_fail(f, rc, "looking up its coordinate variables", err);
    int cnd, cdim = -1;
    rc = nc_inq_varndims(f->ncid, *cid, &cnd);
    if (rc == NC_NOERR && cnd == 1)
        rc = nc_inq_vardimid(f->ncid, *cid, &cdim);
    if (rc == NC_NOERR)
        rc = nc_inq_vartype(f->ncid, *cid, ctype);
    if (rc != NC_NOERR)
        return ncin_lib_fail(f, rc, "reading its coordinate variables", err);
    if (cnd != 1 || cdim != f->dimid[k])
        return sw_fail(err, SW_ERR_INPUT,
                       "%s: variable '%s': coordinate variable '%s' must be 1D along dimension '%s'",
                       f->path, f->var, dn, dn);
    if (*ctype == NC_CHAR || *ctype == NC_STRING)
        return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': coordinate variable '%s' holds text, "
                       "not numbers", f->path, f->var, dn);
    return SW_OK;
}

/* Reads axis k's units and standard_name into f->kind[k] and *scale. */
static sw_status ncin_axis_kind(ncin_file *f, int k, int cid, double *scale, sw_error *err)
{
    const char *dn = f->dim[k];
    char units[128], std[128];
    int has_units, has_std;
    int rc = sw_nc_text_att(f->ncid, cid, "units", units, sizeof units, &has_units);
    if (rc == NC_NOERR)
        rc = sw_nc_text_att(f->ncid, cid, "standard_name", std, sizeof std, &has_std);
    if (rc != NC_NOERR)
        return ncin_lib_fail(f, rc, "reading the units of its coordinates", err);
    int kind = ncin_coord_kind(units, has_units, std, scale);
    if (kind >= 0) {
        f->kind[k] = (ncin_kind)kind;
        return SW_OK;
    }
    if (strncmp(units, "degree", 6) == 0 || strncmp(units, "Degree", 6) == 0)
        return sw_fail(err, SW_ERR_INPUT,
                       "%s: variable '%s': coordinate '%s' has units '%s' without saying east or north "
                       "(accepted: degrees_east or degrees_north, or units degrees with standard_name "
                       "longitude or latitude; or m, km)", f->path, f->var, dn, units);
    return sw_fail(err, SW_ERR_INPUT,
                   "%s: variable '%s': coordinate '%s' has units '%s' (accepted: m, km, degrees_east, "
                   "degrees_north)", f->path, f->var, dn, units);
}

/* Checks the values c[0 .. n-1] of axis k (already in metres or degrees): finite, monotonic (reversed
 * in place when decreasing, f->flip[k]) and evenly spaced within tol_abs + NCIN_EVEN_TOL * spacing,
 * where tol_abs allows for the coordinates' own rounding (float storage). Sets f->c0[k], f->d[k]. */
static sw_status ncin_axis_values(ncin_file *f, int k, double *c, double tol_abs, sw_error *err)
{
    const char *dn = f->dim[k], *u = f->kind[k] == NCIN_METRES ? "m" : "deg";
    size_t n = f->n_stored[k];
    for (size_t m = 0; m < n; m++)
        if (!isfinite(c[m]))
            return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': coordinate '%s' has a missing or "
                           "non-finite value at %s[%zu]", f->path, f->var, dn, dn, m);
    int up = c[1] > c[0];
    for (size_t m = 0; m + 1 < n; m++)
        if (!(up ? c[m + 1] > c[m] : c[m + 1] < c[m]))
            return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': coordinate '%s' is neither strictly "
                           "increasing nor strictly decreasing (%s[%zu] = %g %s, %s[%zu] = %g %s, %s[%zu] = "
                           "%g %s; accepted: evenly spaced cell centres, increasing or decreasing)", f->path,
                           f->var, dn, dn, (size_t)0, c[0], u, dn, m, c[m], u, dn, m + 1, c[m + 1], u);
    if (!up) {
        f->flip[k] = 1;
        for (size_t a = 0, b = n - 1; a < b; a++, b--) {
            double t = c[a];
            c[a] = c[b];
            c[b] = t;
        }
    }
    double d = (c[n - 1] - c[0]) / (double)(n - 1);
    for (size_t m = 0; m + 1 < n; m++)
        if (fabs((c[m + 1] - c[m]) - d) > NCIN_EVEN_TOL * d + tol_abs)
            return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': coordinate '%s' is not evenly spaced "
                           "(step %zu is %g %s, the mean step %g %s; relative tolerance %g; accepted: evenly "
                           "spaced cell centres, increasing or decreasing)", f->path, f->var, dn, m,
                           c[m + 1] - c[m], u, d, u, NCIN_EVEN_TOL);
    f->c0[k] = c[0];
    f->d[k] = d;
    return SW_OK;
}

/* Longitude axis (k = 1, values c ascending, degrees): range, the repeated seam column, the snapped
 * spacing and the canonical first centre and rotation (see the top of the file). tol is the coordinates'
 * tolerance in degrees. */
static sw_status ncin_lon_axis(ncin_file *f, const double *c, double tol, sw_error *err)
{
    const char *dn = f->dim[1];
    size_t n = f->n_stored[1];
    double d = f->d[1];
    if (c[0] < -180.0 - tol || c[n - 1] > 360.0 + tol)
        return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': longitude '%s' runs from %g to %g degrees_east "
                       "(accepted: within -180 .. 180 or 0 .. 360)", f->path, f->var, dn, c[0], c[n - 1]);
    if (n >= 3 && fabs((c[n - 1] - c[0]) - 360.0) <= tol)
        n--;   /* the first column repeated at +360: the sphere once round */
    if ((double)n * d > 360.0 + tol)
        return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': longitude '%s' spans %g degrees in %zu columns "
                       "of %g (accepted: at most 360 degrees; a last column repeating the first at +360 is "
                       "dropped)", f->path, f->var, dn, (double)n * d, n, d);
    f->n[1] = n;

    double turns = floor(c[0] / 360.0);
    double red = c[0] - 360.0 * turns;   /* the first centre in [0, 360) */
    if (red >= 360.0) {
        red -= 360.0;
        turns += 1.0;
    }
    f->c0[1] = c[0];
    f->lon0 = red;   /* unless snapped below: the same data in another convention may differ in round-off */
    const double kk = nearbyint(360.0 / d);
    /* snap when the spacing 360 / k moves the last centre by no more than the tolerance, and the first
     * centre lies on the half-cell lattice of that spacing */
    if (!(kk >= 1.0 && kk <= 1e9 && (double)(f->n_stored[1] - 1) * fabs(d - 360.0 / kk) <= tol))
        return SW_OK;
    const double ds = 360.0 / kk;
    double qr = nearbyint(red / (0.5 * ds));   /* the first centre in half-cells */
    if (!(fabs(red - qr * 0.5 * ds) <= tol))
        return SW_OK;
    const long long k = (long long)kk;
    if (qr >= 2.0 * kk) {
        qr -= 2.0 * kk;
        turns += 1.0;
    }
    const long long q = (long long)qr;
    f->d[1] = ds;
    f->c0[1] = (double)q * 180.0 / kk + 360.0 * turns;
    f->lon0 = (double)q * 180.0 / kk;
    f->periodic = (long long)n == k;
    if (f->periodic) {   /* rotate: the canonical first column is the one nearest east of 0 */
        f->shift = (size_t)((k - ((q - q % 2) / 2) % k) % k);
        f->lon0 = (double)(q % 2) * 180.0 / kk;
    }
    return SW_OK;
}

/* The longest axis a file may have: ten times the grid's own limit ([grid] nx, ny <= 100000). */
#define NCIN_AXIS_MAX 1000000

/* Refuses a variable of a classic-format file (CDF-1, -2, -5: stored uncompressed) whose `count` values
 * of `type_bytes` each cannot fit in the file's bytes: a damaged header claims sizes that no data back,
 * and reading them would first allocate all of it. NetCDF-4 files may be compressed and pass. */
static sw_status ncin_fits(const ncin_file *f, const char *name, size_t count, size_t type_bytes, sw_error *err)
{
    int format = 0;
    struct stat st;
    if (nc_inq_format(f->ncid, &format) != NC_NOERR || format == NC_FORMAT_NETCDF4
        || format == NC_FORMAT_NETCDF4_CLASSIC || stat(f->path, &st) != 0)
        return SW_OK;
    if (count <= (size_t)st.st_size / type_bytes)
        return SW_OK;
    return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' claims %zu values, more than the file's %lld bytes can "
                   "hold (a damaged file?)", f->path, name, count, (long long)st.st_size);
}

/* Checks the coordinate variable of axis k (dimension f->dimid[k]) and describes it in f. Returns SW_OK
 * or SW_ERR_INPUT / SW_ERR_NETCDF / SW_ERR_NOMEM; the file stays open either way (the caller closes it). */
static sw_status ncin_axis(ncin_file *f, int k, sw_error *err)
{
    const char *dn = f->dim[k];
    int rc = nc_inq_dim(f->ncid, f->dimid[k], f->dim[k], &f->n_stored[k]);
    if (rc != NC_NOERR)
        return ncin_lib_fail(f, rc, "reading its dimensions", err);
    f->n[k] = f->n_stored[k];
    if (f->n[k] > NCIN_AXIS_MAX)
        return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': dimension '%s' has %zu points (accepted: at most %d)",
                       f->path, f->var, dn, f->n[k], NCIN_AXIS_MAX);
    if (f->n[k] < 2)
        return sw_fail(err, SW_ERR_INPUT,
                       "%s: variable '%s': dimension '%s' has %zu point(s); at least 2 are needed "
                       "to define the grid spacing", f->path, f->var, dn, f->n[k]);
    int cid;
    nc_type ctype;
    double scale;
    sw_status st = ncin_coord_var(f, k, &cid, &ctype, err);
    if (st == SW_OK)
        st = ncin_axis_kind(f, k, cid, &scale, err);
    if (st != SW_OK)
        return st;

    size_t n = f->n[k];
    st = ncin_fits(f, dn, n, 1, err);   /* a coordinate takes at least a byte a value */
    if (st != SW_OK)
        return st;
    double *c = malloc(n * sizeof *c);
    if (!c)
        return sw_fail(err, SW_ERR_NOMEM, "%s: variable '%s': out of memory reading coordinate '%s'",
                       f->path, f->var, dn);
    rc = nc_get_var_double(f->ncid, cid, c);
    if (rc != NC_NOERR) {
        free(c);
        return ncin_lib_fail(f, rc, "reading its coordinates", err);
    }
    double cmax = 0.0;
    for (size_t m = 0; m < n; m++) {
        c[m] *= scale;
        if (isfinite(c[m]))
            cmax = fmax(cmax, fabs(c[m]));
    }
    /* coordinates stored as float carry their own rounding, a few of their ulps */
    double tol_abs = ctype == NC_FLOAT ? 4.0 * FLT_EPSILON * cmax : 0.0;
    st = ncin_axis_values(f, k, c, tol_abs, err);
    double tol = NCIN_EVEN_TOL * f->d[k] + tol_abs;
    if (st == SW_OK && f->kind[k] == NCIN_LAT && (c[0] < -90.0 - tol || c[n - 1] > 90.0 + tol))
        st = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': latitude '%s' runs from %g to %g degrees_north "
                     "(accepted: within -90 .. 90)", f->path, f->var, dn, c[0], c[n - 1]);
    if (st == SW_OK && f->kind[k] == NCIN_LON && k == 1)   /* longitude first: ncin_open refuses the order */
        st = ncin_lon_axis(f, c, tol, err);
    free(c);
    return st;
}

/* Opens path and checks variable var: numeric, 2D (y, x), each dimension with an evenly spaced,
 * monotonic coordinate variable, both in metres or latitude then longitude. On success f describes it
 * and the file is open (close with ncin_close). On failure the file is closed and err names the file
 * and variable. */
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
                     "exactly 2, (y, x) or (latitude, longitude)", path, var, ndims);
        goto fail;
    }
    if (f->type == NC_CHAR || f->type == NC_STRING) {
        st = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' holds text, not numbers", path, var);
        goto fail;
    }
    f->dimid[0] = dimids[0];
    f->dimid[1] = dimids[1];
    for (int k = 0; k < 2 && st == SW_OK; k++)
        st = ncin_axis(f, k, err);
    if (st != SW_OK)
        goto fail;
    if ((strcmp(f->dim[0], "x") == 0 && strcmp(f->dim[1], "y") == 0)
        || (f->kind[0] == NCIN_LON && f->kind[1] == NCIN_LAT)) {
        st = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' has dimensions (%s, %s); they must be (%s, %s), "
                     "rows running north", path, var, f->dim[0], f->dim[1], f->dim[1], f->dim[0]);
        goto fail;
    }
    if (f->kind[0] != (f->kind[1] == NCIN_LON ? NCIN_LAT : f->kind[1])
        || f->kind[1] == NCIN_LAT) {
        static const char *const what[] = {"metres", "degrees_east (longitude)", "degrees_north (latitude)"};
        st = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': coordinate '%s' is in %s but '%s' in %s (accepted: "
                     "both in m or km, or latitude then longitude in degrees_north, degrees_east)", path, var,
                     f->dim[0], what[f->kind[0]], f->dim[1], what[f->kind[1]]);
        goto fail;
    }
    return SW_OK;
fail:
    ncin_close(f);
    return st;
}

/* The arguments of a reader probed in an isolated child (base/isolate.h): the child calls the same
 * public function with them, its output going to its own copy-on-write pages. */
typedef struct {
    const char *path, *var;
    double radius_m;
    sw_grid *grid_out;
    const sw_grid *g;
    const sw_ncin_options *opt;
    double *out;
} ncin_probe_args;

static sw_status ncin_probe_grid(void *ctx, sw_error *err)
{
    const ncin_probe_args *a = ctx;
    return sw_ncin_grid(a->path, a->var, a->radius_m, a->grid_out, err);
}

static sw_status ncin_probe_read(void *ctx, sw_error *err)
{
    const ncin_probe_args *a = ctx;
    return sw_ncin_read_with(a->path, a->var, a->g, a->opt, a->out, err);
}

/* Probes path once in an isolated child with `fn` (base/isolate.h); `what` and var (and mask) name the
 * reader for the cache of probes. */
static sw_status ncin_probe(const char *what, sw_isolate_fn fn, ncin_probe_args *a, const char *mask, sw_error *err)
{
    if (!a->path || !a->var || sw_isolate_in_child())
        return SW_OK;
    char key[512];
    snprintf(key, sizeof key, "ncinput %s '%s' mask '%s'", what, a->var, mask ? mask : "");
    return sw_isolate_file(a->path, key, fn, a, err);
}

sw_status sw_ncin_grid(const char *path, const char *var, double radius_m, sw_grid *out, sw_error *err)
{
    if (!out)
        return sw_fail(err, SW_ERR_USAGE, "sw_ncin_grid: no output grid");
    ncin_probe_args probe = {.path = path, .var = var, .radius_m = radius_m, .grid_out = out};
    sw_status st = ncin_probe("grid", ncin_probe_grid, &probe, NULL, err);
    if (st != SW_OK)
        return st;
    ncin_file f;
    st = ncin_open(path, var, &f, err);
    if (st != SW_OK)
        return st;
    ncin_close(&f);
    sw_grid g = {.nx = f.n[1], .ny = f.n[0]};
    if (ncin_geographic(&f)) {
        g.kind = SW_GRID_GEOGRAPHIC;
        g.radius_m = radius_m > 0.0 ? radius_m : SW_EARTH_RADIUS_M;
        const double m = sw_grid_m_per_deg(&g);
        g.dx_m = f.d[1] * m;
        g.dy_m = f.d[0] * m;
        g.x0_m = (f.c0[1] - 0.5 * f.d[1]) * m;
        g.y0_m = (f.c0[0] - 0.5 * f.d[0]) * m;
    } else {
        g.dx_m = f.d[1];
        g.dy_m = f.d[0];
        g.x0_m = f.c0[1] - 0.5 * f.d[1];
        g.y0_m = f.c0[0] - 0.5 * f.d[0];
    }
    *out = g;
    return SW_OK;
}

/* Reads the whole variable as double into *data (caller frees), unpacked (scale_factor, add_offset), in
 * storage order. A missing value (fill, missing_value, NaN) is an error naming the first bad index in
 * storage order (followed by "(hint)" when hint is not NULL), or, when land is not NULL, sets
 * land[k] = SW_NCIN_LAND_MISSING and the value 0; Inf is always an error. */
static sw_status ncin_values(const ncin_file *f, int varid, const char *name, double **data, unsigned char *land,
                             const char *hint, sw_error *err)
{
    *data = NULL;
    size_t rows = f->n_stored[0], cols = f->n_stored[1];
    if (cols > SIZE_MAX / sizeof(double) / rows)
        return sw_fail(err, SW_ERR_NOMEM, "%s: variable '%s' is too large (%zu x %zu)", f->path,
                       name, rows, cols);
    size_t total = rows * cols;
    sw_status fits = ncin_fits(f, name, total, 1, err);   /* a stored value takes at least a byte */
    if (fits != SW_OK)
        return fits;
    double *v = malloc(total * sizeof *v);
    if (!v)
        return sw_fail(err, SW_ERR_NOMEM, "%s: variable '%s': out of memory for %zu x %zu values",
                       f->path, name, rows, cols);
    int rc = nc_get_var_double(f->ncid, varid, v);
    if (rc != NC_NOERR) {
        free(v);
        return sw_fail(err, rc > 0 ? SW_ERR_IO : SW_ERR_NETCDF, "%s: variable '%s': reading its values: %s",
                       f->path, name, nc_strerror(rc));
    }
    sw_nc_missing miss;
    double scale = 1.0, offset = 0.0;
    rc = sw_nc_missing_read(f->ncid, varid, &miss);
    if (rc == NC_NOERR)
        rc = sw_nc_num_att(f->ncid, varid, "scale_factor", &scale);
    if (rc == NC_NOERR)
        rc = sw_nc_num_att(f->ncid, varid, "add_offset", &offset);
    if (rc != NC_NOERR) {
        sw_nc_missing_free(&miss);
        free(v);
        return sw_fail(err, rc > 0 ? SW_ERR_IO : SW_ERR_NETCDF, "%s: variable '%s': reading its _FillValue, "
                       "missing_value, scale_factor or add_offset attribute: %s", f->path, name, nc_strerror(rc));
    }
    for (size_t k = 0; k < total; k++) {
        int bad = isnan(v[k]);
        for (size_t m = 0; m < miss.count && !bad; m++)
            bad = v[k] == miss.value[m];
        if ((bad && !land) || isinf(v[k])) {
            const int say = hint && !land && !isinf(v[k]);   /* the hint is about missing values */
            sw_nc_missing_free(&miss);
            free(v);
            return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' has a missing or non-finite value "
                           "at %s[%zu][%zu]%s%s%s", f->path, name, name, k / cols, k % cols, say ? " (" : "",
                           say ? hint : "", say ? ")" : "");
        }
        if (bad) {
            land[k] = SW_NCIN_LAND_MISSING;
            v[k] = 0.0;
        } else {
            const double packed = v[k];
            v[k] = packed * scale + offset;
            if (!isfinite(v[k])) {   /* an unpacking overflow: the stored value was finite */
                sw_nc_missing_free(&miss);
                free(v);
                return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': unpacking %s[%zu][%zu] = %g with scale_factor "
                               "%g and add_offset %g overflows (accepted: packed values whose unpacked value is a "
                               "finite double)", f->path, name, name, k / cols, k % cols, packed, scale, offset);
            }
            if (land)
                land[k] = 0;
        }
    }
    sw_nc_missing_free(&miss);
    *data = v;
    return SW_OK;
}

/* The file's coordinate of stored index s along axis a (0 y, 1 x): m, or degrees as the file writes them. */
static double ncin_stored_coord(const ncin_file *f, int a, size_t s)
{
    const size_t along = f->flip[a] ? f->n_stored[a] - 1 - s : s;
    return f->c0[a] + (double)along * f->d[a];
}

/* opt's range (sw_ncin_options.range_accepted): the first unpacked value that is not land and lies outside
 * [range_lo, range_hi], in storage order, is an error naming the file, the variable, its index and the
 * coordinates there, and the accepted range. v and land (may be NULL) as ncin_values left them. */
static sw_status ncin_range(const ncin_file *f, const double *v, const unsigned char *land, const sw_ncin_options *opt,
                            sw_error *err)
{
    if (!opt->range_accepted)
        return SW_OK;
    const size_t rows = f->n_stored[0], cols = f->n_stored[1];
    for (size_t k = 0; k < rows * cols; k++) {
        if ((land && land[k]) || (v[k] >= opt->range_lo && v[k] <= opt->range_hi))
            continue;
        const size_t j = k / cols, i = k % cols;
        return sw_fail(err, SW_ERR_RANGE, "%s: variable '%s': %s[%zu][%zu] = %g (at %s = %g %s, %s = %g %s) is "
                       "outside %g .. %g (accepted: %s)", f->path, f->var, f->var, j, i, v[k], f->dim[0],
                       ncin_stored_coord(f, 0, j), ncin_unit(f), f->dim[1], ncin_stored_coord(f, 1, i), ncin_unit(f),
                       opt->range_lo, opt->range_hi, opt->range_accepted);
    }
    return SW_OK;
}

/* Which values of a land mask mean land (ncinput.h, sw_ncin_options.land_mask). */
typedef struct {
    int rule;        /* 0: nonzero; 1: equal to value; 2: zero (sea_binary_mask) */
    double value;    /* rule 1: the flag value meaning land */
} ncin_mask_rule;

/* Reads the rule of mask variable mid from its flag_values / flag_meanings (CF-1.11 sec. 3.5) or its
 * standard_name (CF standard names land_binary_mask, sea_binary_mask). */
static sw_status ncin_mask_rule_read(const ncin_file *f, int mid, const char *mask, ncin_mask_rule *r,
                                     sw_error *err)
{
    r->rule = 0;
    r->value = 0.0;
    char std[128], meanings[512];
    int has_std, has_meanings;
    int rc = sw_nc_text_att(f->ncid, mid, "standard_name", std, sizeof std, &has_std);
    if (rc == NC_NOERR)
        rc = sw_nc_text_att(f->ncid, mid, "flag_meanings", meanings, sizeof meanings, &has_meanings);
    nc_type t;
    size_t nflags = 0;
    if (rc == NC_NOERR) {
        rc = nc_inq_att(f->ncid, mid, "flag_values", &t, &nflags);
        if (rc == NC_ENOTATT) {
            rc = NC_NOERR;
            nflags = 0;
        }
    }
    if (rc != NC_NOERR)
        return sw_fail(err, rc > 0 ? SW_ERR_IO : SW_ERR_NETCDF, "%s: land mask '%s': reading its standard_name, "
                       "flag_values or flag_meanings: %s", f->path, mask, nc_strerror(rc));
    if (has_meanings && nflags > 0 && t != NC_CHAR && t != NC_STRING) {
        double *fv = malloc(nflags * sizeof *fv);
        if (!fv)
            return sw_fail(err, SW_ERR_NOMEM, "%s: land mask '%s': out of memory", f->path, mask);
        rc = nc_get_att_double(f->ncid, mid, "flag_values", fv);
        if (rc != NC_NOERR) {
            free(fv);
            return sw_fail(err, SW_ERR_NETCDF, "%s: land mask '%s': reading flag_values: %s", f->path, mask,
                           nc_strerror(rc));
        }
        size_t w = 0;
        for (char *tok = strtok(meanings, " \t"); tok; tok = strtok(NULL, " \t"), w++)
            if (ncin_same_word(tok, "land") && w < nflags) {
                r->rule = 1;
                r->value = fv[w];
                break;
            }
        free(fv);
        if (r->rule == 1)
            return SW_OK;
        return sw_fail(err, SW_ERR_INPUT, "%s: land mask '%s' has flag_meanings without the word 'land' (accepted: "
                       "a flag meaning 'land', or nonzero = land without flags)", f->path, mask);
    }
    if (has_std && ncin_same_word(std, "sea_binary_mask"))
        r->rule = 2;
    return SW_OK;
}

/* Marks land from the mask variable `mask` (same dimensions as the field) in land[] (storage order, the
 * SW_NCIN_LAND_MASK bit). A missing value in the mask is an error naming it. */
static sw_status ncin_mask(const ncin_file *f, const char *mask, unsigned char *land, sw_error *err)
{
    int mid, nd = 0, dims[NC_MAX_VAR_DIMS];
    nc_type t;
    int rc = nc_inq_varid(f->ncid, mask, &mid);
    if (rc == NC_ENOTVAR) {
        char have[512];
        sw_nc_list_vars(f->ncid, 2, have, sizeof have);
        return sw_fail(err, SW_ERR_INPUT, "%s: land mask '%s' not found in the file (2D variables: %s)", f->path,
                       mask, have[0] ? have : "none");
    }
    if (rc == NC_NOERR)
        rc = nc_inq_var(f->ncid, mid, NULL, &t, &nd, dims, NULL);
    if (rc != NC_NOERR)
        return sw_fail(err, rc > 0 ? SW_ERR_IO : SW_ERR_NETCDF, "%s: land mask '%s': %s", f->path, mask,
                       nc_strerror(rc));
    if (nd != 2 || dims[0] != f->dimid[0] || dims[1] != f->dimid[1] || t == NC_CHAR || t == NC_STRING)
        return sw_fail(err, SW_ERR_INPUT, "%s: land mask '%s' must be numbers on the dimensions (%s, %s) of "
                       "variable '%s'", f->path, mask, f->dim[0], f->dim[1], f->var);
    ncin_mask_rule r;
    sw_status st = ncin_mask_rule_read(f, mid, mask, &r, err);
    double *m = NULL;
    if (st == SW_OK)
        st = ncin_values(f, mid, mask, &m, NULL, NULL, err);
    if (st != SW_OK)
        return st;
    size_t total = f->n_stored[0] * f->n_stored[1];
    for (size_t k = 0; k < total; k++) {
        int is_land = r.rule == 0 ? m[k] != 0.0 : r.rule == 1 ? m[k] == r.value : m[k] == 0.0;
        if (is_land)
            land[k] |= SW_NCIN_LAND_MASK;
    }
    free(m);
    return SW_OK;
}

/* Without missing_land: a missing value the mask does not cover is an error naming the first in storage
 * order (as ncin_values's); under the mask only the mask's flag stays. */
static sw_status ncin_unmasked_missing(const ncin_file *f, unsigned char *land, const char *hint, sw_error *err)
{
    const size_t total = f->n_stored[0] * f->n_stored[1], cols = f->n_stored[1];
    for (size_t k = 0; k < total; k++) {
        if (land[k] == SW_NCIN_LAND_MISSING)
            return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' has a missing or non-finite value at %s[%zu][%zu]%s%s%s",
                           f->path, f->var, f->var, k / cols, k % cols, hint ? " (" : "", hint ? hint : "",
                           hint ? ")" : "");
        land[k] &= (unsigned char)~SW_NCIN_LAND_MISSING;
    }
    return SW_OK;
}

/* Puts the stored values (and land flags) into canonical order: axes reversed where stored decreasing,
 * a repeated seam column dropped, a round-the-sphere longitude axis rotated by f->shift. *v and *land
 * (which may be NULL) are replaced by new arrays of f->n[0] x f->n[1] when anything moves. */
static sw_status ncin_canonical(const ncin_file *f, double **v, unsigned char **land, sw_error *err)
{
    const size_t rows = f->n[0], cols = f->n[1], scols = f->n_stored[1];
    if (!f->flip[0] && !f->flip[1] && f->shift == 0 && cols == scols)
        return SW_OK;
    double *nv = malloc(rows * cols * sizeof *nv);
    unsigned char *nl = *land ? malloc(rows * cols) : NULL;
    if (!nv || (*land && !nl)) {
        free(nv);
        free(nl);
        return sw_fail(err, SW_ERR_NOMEM, "%s: variable '%s': out of memory reordering %zu x %zu values",
                       f->path, f->var, rows, cols);
    }
    for (size_t j = 0; j < rows; j++) {
        const size_t sj = f->flip[0] ? rows - 1 - j : j;
        for (size_t i = 0; i < cols; i++) {
            const size_t c = (i + f->shift) % cols;             /* ascending column */
            const size_t si = f->flip[1] ? scols - 1 - c : c;   /* stored column */
            nv[j * cols + i] = (*v)[sj * scols + si];
            if (nl)
                nl[j * cols + i] = (*land)[sj * scols + si];
        }
    }
    free(*v);
    *v = nv;
    if (nl) {
        free(*land);
        *land = nl;
    }
    return SW_OK;
}

/* One target position along one axis: value = (1 - w) src[lo] + w src[hi]; lo == SIZE_MAX outside. */
typedef struct {
    size_t lo, hi;
    double w;
} ncin_tap;

/* The taps of the n_out targets along axis k (1: x, columns; 0: y, rows) of grid g. `margin`: targets up
 * to half a cell beyond the outer centres take the edge value (else only NCIN_EDGE_TOL of a cell). */
static void ncin_taps(const ncin_file *f, int k, const sw_grid *g, int margin, ncin_tap *taps)
{
    const size_t n_out = k ? g->nx : g->ny, n = f->n[k];
    const double last = (double)(n - 1), reach = margin ? 0.5 + NCIN_EDGE_TOL : NCIN_EDGE_TOL;
    const int geo = ncin_geographic(f);
    const double r = g->radius_m > 0.0 ? g->radius_m : SW_EARTH_RADIUS_M;
    const double m_per_deg = r * (NCIN_PI / 180.0);
    const int lon = geo && k == 1;
    const double c0 = lon ? f->lon0 : f->c0[k], d = f->d[k];
    const double turn0 = c0 + 0.5 * last * d - 180.0;   /* longitudes: the turn centred on the file's middle */
    for (size_t m = 0; m < n_out; m++) {
        ncin_tap *t = &taps[m];
        double pos = k ? sw_grid_xc(g, m) : sw_grid_yc(g, m);
        if (geo)
            pos /= m_per_deg;
        if (lon)   /* the same longitude within the turn [turn0, turn0 + 360) */
            pos -= 360.0 * floor((pos - turn0) / 360.0);
        double p = (pos - c0) / d;
        if (geo && fabs(p - nearbyint(p)) <= NCIN_SNAP_TOL)
            p = nearbyint(p);
        if (lon && f->periodic) {
            double fl = floor(p);
            long long i0 = (long long)fl % (long long)n;
            if (i0 < 0)
                i0 += (long long)n;
            t->lo = (size_t)i0;
            t->hi = (t->lo + 1) % n;
            t->w = p - fl;
            continue;
        }
        if (!(p >= -reach && p <= last + reach)) {
            t->lo = t->hi = SIZE_MAX;
            t->w = 0.0;
            continue;
        }
        p = p < 0.0 ? 0.0 : p > last ? last : p;
        size_t i0 = (size_t)floor(p);
        if (i0 > n - 2)
            i0 = n - 2;
        t->lo = i0;
        t->hi = i0 + 1;
        t->w = p - (double)i0;
    }
}

/* |a - b| within NCIN_SAME_TOL of `scale` (a positive length, m). */
static int ncin_near(double a, double b, double scale)
{
    return fabs(a - b) <= NCIN_SAME_TOL * scale;
}

/* The outside-the-file error for target cell (i, j). */
static sw_status ncin_outside_fail(const ncin_file *f, const sw_grid *g, size_t i, size_t j, int margin,
                                   sw_error *err)
{
    const double rows = (double)f->n[0], cols = (double)f->n[1];
    const double h = margin ? 0.5 : 0.0;
    double x = sw_grid_xc(g, i), y = sw_grid_yc(g, j);
    if (ncin_geographic(f)) {
        const double r = g->radius_m > 0.0 ? g->radius_m : SW_EARTH_RADIUS_M;
        x /= r * (NCIN_PI / 180.0);
        y /= r * (NCIN_PI / 180.0);
    }
    const char *u = ncin_unit(f);
    return sw_fail(err, SW_ERR_INPUT,
                   "%s: variable '%s' does not cover the grid: the centre of cell (i=%zu, j=%zu) at x = %.10g %s, "
                   "y = %.10g %s lies outside the file's %s (x %.10g .. %.10g %s, y %.10g .. %.10g %s)", f->path,
                   f->var, i, j, x, u, y, u, margin ? "cells" : "cell centres", f->c0[1] - h * f->d[1],
                   f->c0[1] + (cols - 1.0 + h) * f->d[1], u, f->c0[0] - h * f->d[0],
                   f->c0[0] + (rows - 1.0 + h) * f->d[0], u);
}

/* The value at a target whose four file points include land: 0 and the nearest point's land flags when
 * that point is land; else the bilinear weights of the water points, renormalised. */
static double ncin_coast_value(const double *v, const unsigned char *land, const size_t idx[4], double a, double b,
                               unsigned char *flag)
{
    const size_t near = idx[(b > 0.5 ? 2 : 0) + (a > 0.5 ? 1 : 0)];
    if (land[near]) {
        *flag = land[near];
        return 0.0;
    }
    const double w[4] = {(1.0 - b) * (1.0 - a), (1.0 - b) * a, b * (1.0 - a), b * a};
    double sum = 0.0, wsum = 0.0;
    for (int q = 0; q < 4; q++)
        if (!land[idx[q]]) {
            sum += w[q] * v[idx[q]];
            wsum += w[q];
        }
    *flag = 0;
    return sum / wsum;   /* wsum >= 1/4: the nearest point is water */
}

/* Puts the canonical values v (and land flags, may be NULL) of f on grid g: out, and out_land when land. */
static sw_status ncin_regrid(const ncin_file *f, const double *v, const unsigned char *land, const sw_grid *g,
                             sw_ncin_outside outside, double *out, unsigned char *out_land, sw_error *err)
{
    size_t rows = f->n[0], cols = f->n[1];
    int same = !ncin_geographic(f) && g->nx == cols && g->ny == rows && ncin_near(g->dx_m, f->d[1], g->dx_m) &&
               ncin_near(g->dy_m, f->d[0], g->dy_m) &&
               ncin_near(sw_grid_xc(g, 0), f->c0[1], fmax(g->dx_m, fabs(f->c0[1]))) &&
               ncin_near(sw_grid_yc(g, 0), f->c0[0], fmax(g->dy_m, fabs(f->c0[0])));
    if (same) {
        memcpy(out, v, rows * cols * sizeof *out);
        if (land) {
            memcpy(out_land, land, rows * cols);
            for (size_t k = 0; k < rows * cols; k++)
                if (land[k])
                    out[k] = 0.0;
        }
        return SW_OK;
    }

    const int margin = outside == SW_NCIN_OUTSIDE_ERROR;
    ncin_tap *tx = malloc(g->nx * sizeof *tx), *ty = malloc(g->ny * sizeof *ty);
    sw_status st = SW_OK;
    if (!tx || !ty) {
        st = sw_fail(err, SW_ERR_NOMEM, "%s: variable '%s': out of memory interpolating onto the grid",
                     f->path, f->var);
        goto done;
    }
    ncin_taps(f, 1, g, margin, tx);
    ncin_taps(f, 0, g, margin, ty);
    for (size_t j = 0; j < g->ny && st == SW_OK; j++) {
        for (size_t i = 0; i < g->nx; i++) {
            const size_t k = j * g->nx + i;
            double *o = &out[k];
            if (land)
                out_land[k] = 0;
            if (tx[i].lo == SIZE_MAX || ty[j].lo == SIZE_MAX) {
                if (outside == SW_NCIN_OUTSIDE_ZERO) {
                    *o = 0.0;
                    continue;
                }
                st = ncin_outside_fail(f, g, i, j, margin, err);
                break;
            }
            const size_t idx[4] = {ty[j].lo * cols + tx[i].lo, ty[j].lo * cols + tx[i].hi,
                                   ty[j].hi * cols + tx[i].lo, ty[j].hi * cols + tx[i].hi};
            double a = tx[i].w, b = ty[j].w;
            if (land && (land[idx[0]] | land[idx[1]] | land[idx[2]] | land[idx[3]])) {
                *o = ncin_coast_value(v, land, idx, a, b, &out_land[k]);
                continue;
            }
            *o = (1.0 - b) * ((1.0 - a) * v[idx[0]] + a * v[idx[1]]) + b * ((1.0 - a) * v[idx[2]] + a * v[idx[3]]);
        }
    }
done:
    free(tx);
    free(ty);
    return st;
}

/* The `positive` attribute of f's variable into *out (an sw_positive). */
static sw_status ncin_positive(const ncin_file *f, int *out, sw_error *err)
{
    char text[64];
    int found;
    int rc = sw_nc_text_att(f->ncid, f->varid, "positive", text, sizeof text, &found);
    if (rc != NC_NOERR)
        return ncin_lib_fail(f, rc, "reading its 'positive' attribute", err);
    *out = !found                         ? SW_POSITIVE_UNSET
           : ncin_same_word(text, "up")   ? SW_POSITIVE_UP
           : ncin_same_word(text, "down") ? SW_POSITIVE_DOWN
                                          : SW_POSITIVE_UNSET;
    return SW_OK;
}

sw_status sw_ncin_read_with(const char *path, const char *var, const sw_grid *g, const sw_ncin_options *opt,
                            double *out, sw_error *err)
{
    static const sw_ncin_options none = {0};
    if (!opt)
        opt = &none;
    const int has_mask = opt->land_mask && opt->land_mask[0];
    if (!g || !out || g->nx == 0 || g->ny == 0 || !(g->dx_m > 0.0) || !(g->dy_m > 0.0)
        || ((opt->missing_land || has_mask) && !opt->land))
        return sw_fail(err, SW_ERR_USAGE, "%s: variable '%s': no output, an empty grid or no land array",
                       path ? path : "(null)", var ? var : "(null)");
    ncin_probe_args probe = {.path = path, .var = var, .g = g, .opt = opt, .out = out};
    sw_status st = ncin_probe("read", ncin_probe_read, &probe, has_mask ? opt->land_mask : NULL, err);
    if (st != SW_OK)
        return st;
    ncin_file f;
    st = ncin_open(path, var, &f, err);
    if (st != SW_OK)
        return st;
    if (ncin_geographic(&f) != sw_grid_geographic(g)) {
        st = ncin_geographic(&f)
             ? sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': its coordinates '%s', '%s' are latitude and longitude "
                       "in degrees, but the grid is projected (accepted on a projected grid: x and y in m or "
                       "km; a longitude/latitude file needs a geographic grid: [grid] kind = geographic)", f.path, f.var, f.dim[0], f.dim[1])
             : sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': its coordinates '%s', '%s' are in metres, but the grid "
                       "is geographic (accepted on a geographic grid: latitude and longitude in degrees_north "
                       "and degrees_east)", f.path, f.var, f.dim[0], f.dim[1]);
        ncin_close(&f);
        return st;
    }
    if (opt->positive_attr)
        st = ncin_positive(&f, opt->positive_attr, err);

    const int want_land = opt->missing_land || has_mask;
    unsigned char *land = NULL;
    double *v = NULL;
    if (st == SW_OK && want_land && !(land = malloc(f.n_stored[0] * f.n_stored[1])))
        st = sw_fail(err, SW_ERR_NOMEM, "%s: variable '%s': out of memory for the land flags", f.path, f.var);
    /* with a mask, missing values are noted first: under the mask they are land whatever missing_land says */
    if (st == SW_OK)
        st = ncin_values(&f, f.varid, f.var, &v, land, opt->missing_hint, err);
    if (st == SW_OK && has_mask)
        st = ncin_mask(&f, opt->land_mask, land, err);
    if (st == SW_OK && land && !opt->missing_land)
        st = ncin_unmasked_missing(&f, land, opt->missing_hint, err);
    if (st == SW_OK)
        st = ncin_range(&f, v, land, opt, err);
    ncin_close(&f);
    if (st == SW_OK)
        st = ncin_canonical(&f, &v, &land, err);
    if (st == SW_OK)
        st = ncin_regrid(&f, v, land, g, opt->outside, out, opt->land, err);
    if (st == SW_OK && opt->land && !land)
        memset(opt->land, 0, g->nx * g->ny);
    free(v);
    free(land);
    return st;
}

sw_status sw_ncin_read(const char *path, const char *var, const sw_grid *g, sw_ncin_outside outside,
                       double *out, int *positive_attr, sw_error *err)
{
    const sw_ncin_options opt = {.outside = outside, .positive_attr = positive_attr};
    return sw_ncin_read_with(path, var, g, &opt, out, err);
}
