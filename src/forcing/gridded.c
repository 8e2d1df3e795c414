/* gridded.c - gridded 10 m wind and sea-level air pressure from a CF NetCDF file (see gridded.h).
 *
 * Invariant: an open sw_weather has passed every check that does not need the values (variables,
 * units, dimensions, axes, times, coverage of the model grid), so sw_weather_read can fail only on the
 * values of the slab it reads (missing values) or on the library, and the interpolation functions
 * cannot fail. Every message starts with the file's path.
 *
 * Memory: the open file keeps its axes (x, y, time: a few doubles per point) and nothing else; a slab
 * is three float arrays of the file's grid, read with one nc_get_vara_float per variable for one time
 * index. The file's chunk layout decides what the library reads underneath: one chunk per time slab
 * (what sw_weather_write makes) reads exactly one slab.
 *
 * Interpolation along a row (sw_weather_row): the points x0 + i dx increase with i, so they fall into
 * the file's x intervals in order. For each interval k the points inside it form one run [a, b), found
 * from the interval's right coordinate by one division and a rounding fix-up; along the run the two
 * file columns k and k+1, already blended in y, are interpolated linearly in x. No search per point.
 */
#include "forcing/gridded.h"

#include <ctype.h>
#include <math.h>
#include <netcdf.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/atomic_file.h"
#include "base/civil_time.h"
#include "base/isolate.h"
#include "base/omp_compat.h"
#include "inputs/ncattr.h"

#define WX_EVEN_TOL 1e-6      /* relative spread of the steps under which an axis counts as evenly spaced */
#define WX_COVER_TOL 1e-6     /* how far (in model cells) a model centre may lie outside the file's extent */
#define WX_CHUNK_CELLS ((size_t)1 << 22) /* writer: at most 4 Mi points (16 MiB of float) per chunk */
#define WX_DEFLATE_LEVEL 1    /* writer: zlib level */
#define WX_MAX_MISSING 8      /* missing_value entries taken into account per variable */
#define WX_TEXT_MAX 256       /* longest attribute text kept (units, standard_name, axis, calendar) */

/* The three variables, in the order of sw_weather.var. */
enum { WX_U = 0, WX_V, WX_P, WX_NVARS };

static const char *const wx_standard_names[WX_NVARS] = {"eastward_wind", "northward_wind",
                                                        "air_pressure_at_mean_sea_level"};
static const char WX_WIND_ACCEPTED[] = "m s-1, m/s, m s**-1, knots, kt, kn";
static const char WX_PRESSURE_ACCEPTED[] = "Pa, hPa, mbar, millibar";
#define WX_TIME_FORM "'UNIT since YYYY-MM-DD[ HH:MM[:SS]]' with UNIT seconds, minutes, hours or days"

/* One spatial axis of the file. */
typedef struct {
    size_t n;         /* points (>= 2) */
    double *c;        /* [n] coordinates, m, strictly increasing */
    double *inv;      /* [n - 1] 1 / (c[k + 1] - c[k]), 1/m */
    int even;         /* 1 when the steps agree within WX_EVEN_TOL: the interval is found by a division */
    double inv_mean;  /* (n - 1) / (c[n - 1] - c[0]), 1/m */
    char name[NC_MAX_NAME + 1]; /* its coordinate variable, for messages */
} wx_axis;

/* One of the three data variables. */
typedef struct {
    int id;                              /* NetCDF variable id */
    char name[NC_MAX_NAME + 1];          /* its name in the file */
    double scale, offset;                /* scale_factor, add_offset (1, 0 when absent) */
    double factor;                       /* SI units per unpacked file unit (m/s or Pa) */
    float miss[WX_MAX_MISSING + 1];      /* raw values that mark a missing point */
    const char *miss_kind[WX_MAX_MISSING + 1]; /* "_FillValue" or "missing_value", for messages */
    size_t nmiss;
} wx_var;

struct sw_weather {
    char *path;           /* file path (owned), for messages */
    int ncid;             /* open dataset */
    wx_var var[WX_NVARS]; /* u, v, p */
    wx_axis x, y;         /* the file's axes, m */
    size_t nt;            /* time slabs (>= 1) */
    double *time_s;       /* [nt] s since the origin, strictly increasing */
    double origin_s;      /* the origin, s since 1970-01-01 00:00:00 (for dates in messages) */
    char time_name[NC_MAX_NAME + 1]; /* the time coordinate variable */
};

/* ---- units -------------------------------------------------------------------------------- */

/* Case-insensitive equality of a and b, where any run of blanks in a equals one blank in b. */
static int wx_same_unit(const char *a, const char *b)
{
    while (*a && *b) {
        if (isspace((unsigned char)*a) && *b == ' ') {
            while (isspace((unsigned char)*a))
                a++;
            b++;
            continue;
        }
        if (tolower((unsigned char)*a) != tolower((unsigned char)*b))
            return 0;
        a++;
        b++;
    }
    return *a == '\0' && *b == '\0';
}

/* A unit name and its size in SI units. */
typedef struct {
    const char *name;
    double si;
} wx_unit;

/* Size of `units` in SI units from table (m entries), or 0 when it is not there. */
static double wx_unit_lookup(const char *units, const wx_unit *table, size_t m)
{
    for (size_t k = 0; k < m; k++)
        if (wx_same_unit(units, table[k].name))
            return table[k].si;
    return 0.0;
}

/* 1 knot = 1852 m per 3600 s (the international nautical mile, 1852 m exactly). */
static const wx_unit wx_speed_units[] = {
    {"m s-1", 1.0}, {"m/s", 1.0}, {"m s**-1", 1.0}, {"m s^-1", 1.0}, {"m.s-1", 1.0}, {"m.s**-1", 1.0},
    {"meter second-1", 1.0}, {"metre second-1", 1.0}, {"meters per second", 1.0}, {"metres per second", 1.0},
    {"knots", 1852.0 / 3600.0}, {"knot", 1852.0 / 3600.0}, {"kt", 1852.0 / 3600.0}, {"kts", 1852.0 / 3600.0},
    {"kn", 1852.0 / 3600.0},
};
/* 1 hPa = 1 mbar = 100 Pa (SI prefixes; 1 bar = 1e5 Pa). */
static const wx_unit wx_pressure_units[] = {
    {"Pa", 1.0}, {"pascal", 1.0}, {"pascals", 1.0},
    {"hPa", 100.0}, {"hectopascal", 100.0}, {"hectopascals", 100.0},
    {"mbar", 100.0}, {"millibar", 100.0}, {"millibars", 100.0},
};
static const wx_unit wx_length_units[] = {
    {"m", 1.0}, {"meter", 1.0}, {"meters", 1.0}, {"metre", 1.0}, {"metres", 1.0},
    {"km", 1000.0}, {"kilometer", 1000.0}, {"kilometers", 1000.0}, {"kilometre", 1000.0}, {"kilometres", 1000.0},
};
#define WX_COUNT(a) (sizeof(a) / sizeof((a)[0]))

/* ---- opening: failures --------------------------------------------------------------------- */

/* Records a NetCDF failure of step `what`: a system error (rc > 0, e.g. a missing file) is SW_ERR_IO,
 * anything else SW_ERR_NETCDF. Returns the status. */
static sw_status wx_lib_fail(const char *path, int rc, const char *what, sw_error *err)
{
    return sw_fail(err, rc > 0 ? SW_ERR_IO : SW_ERR_NETCDF, "%s: %s: %s", path, what, nc_strerror(rc));
}

/* "var 'NAME' (standard_name)" for messages about data variable q. */
static const char *wx_var_label(const sw_weather *w, int q, char *buf, size_t n)
{
    snprintf(buf, n, "variable '%s' (%s)", w->var[q].name, wx_standard_names[q]);
    return buf;
}

/* Writes "(a, b, c)", the names of dimensions dims[0..nd-1], into buf (size n). */
static void wx_dim_list(int ncid, const int *dims, int nd, char *buf, size_t n)
{
    size_t used = 0;
    buf[0] = '\0';
    for (int k = 0; k < nd && used + 1 < n; k++) {
        char name[NC_MAX_NAME + 1] = "?";
        nc_inq_dimname(ncid, dims[k], name);
        int wr = snprintf(buf + used, n - used, "%s%s", k ? ", " : "(", name);
        if (wr < 0 || (size_t)wr >= n - used)
            break;
        used += (size_t)wr;
    }
    if (used + 1 < n)
        snprintf(buf + used, n - used, "%s", nd ? ")" : "()");
}

/* ---- opening: the variables ------------------------------------------------------------------ */

/* Finds the variable whose standard_name is that of q. Returns SW_OK with w->var[q] id and name set,
 * or SW_ERR_INPUT when none or several have it. */
static sw_status wx_find_var(sw_weather *w, int q, sw_error *err)
{
    int nvars = 0;
    int rc = nc_inq_nvars(w->ncid, &nvars);
    if (rc != NC_NOERR)
        return wx_lib_fail(w->path, rc, "listing its variables", err);
    int found = -1;
    for (int v = 0; v < nvars; v++) {
        char sn[WX_TEXT_MAX];
        int has;
        rc = sw_nc_text_att(w->ncid, v, "standard_name", sn, sizeof sn, &has);
        if (rc != NC_NOERR)
            return wx_lib_fail(w->path, rc, "reading the standard_name attributes", err);
        if (!has || strcmp(sn, wx_standard_names[q]) != 0)
            continue;
        if (found >= 0) {
            char a[NC_MAX_NAME + 1] = "?", b[NC_MAX_NAME + 1] = "?";
            nc_inq_varname(w->ncid, found, a);
            nc_inq_varname(w->ncid, v, b);
            return sw_fail(err, SW_ERR_INPUT, "%s: variables '%s' and '%s' both have standard_name '%s'; a "
                           "weather file must have exactly one", w->path, a, b, wx_standard_names[q]);
        }
        found = v;
    }
    if (found < 0) {
        char have[512];
        sw_nc_list_vars(w->ncid, -1, have, sizeof have);
        return sw_fail(err, SW_ERR_INPUT, "%s: no variable has standard_name '%s' (a weather file needs one "
                       "variable with each of the standard_name attributes %s, %s and %s; variables in the "
                       "file: %s)", w->path, wx_standard_names[q], wx_standard_names[WX_U],
                       wx_standard_names[WX_V], wx_standard_names[WX_P], have[0] ? have : "none");
    }
    w->var[q].id = found;
    rc = nc_inq_varname(w->ncid, found, w->var[q].name);
    if (rc != NC_NOERR)
        return wx_lib_fail(w->path, rc, "reading a variable name", err);
    return SW_OK;
}

/* Checks data variable q (numeric, units) and reads its packing and missing-value attributes. */
static sw_status wx_check_var(sw_weather *w, int q, sw_error *err)
{
    wx_var *v = &w->var[q];
    char label[2 * NC_MAX_NAME + 64];
    wx_var_label(w, q, label, sizeof label);
    nc_type type;
    int rc = nc_inq_vartype(w->ncid, v->id, &type);
    if (rc != NC_NOERR)
        return wx_lib_fail(w->path, rc, "reading a variable's type", err);
    if (type == NC_CHAR || type == NC_STRING)
        return sw_fail(err, SW_ERR_INPUT, "%s: %s holds text, not numbers", w->path, label);

    char units[WX_TEXT_MAX];
    int has;
    rc = sw_nc_text_att(w->ncid, v->id, "units", units, sizeof units, &has);
    if (rc != NC_NOERR)
        return wx_lib_fail(w->path, rc, "reading a units attribute", err);
    const char *accepted = q == WX_P ? WX_PRESSURE_ACCEPTED : WX_WIND_ACCEPTED;
    if (!has)
        return sw_fail(err, SW_ERR_INPUT, "%s: %s has no units attribute (accepted: %s)", w->path, label, accepted);
    v->factor = q == WX_P ? wx_unit_lookup(units, wx_pressure_units, WX_COUNT(wx_pressure_units))
                          : wx_unit_lookup(units, wx_speed_units, WX_COUNT(wx_speed_units));
    if (v->factor == 0.0)
        return sw_fail(err, SW_ERR_INPUT, "%s: %s has units '%s' (accepted: %s)", w->path, label, units, accepted);

    v->scale = 1.0;
    v->offset = 0.0;
    rc = sw_nc_num_att(w->ncid, v->id, "scale_factor", &v->scale);
    if (rc == NC_NOERR)
        rc = sw_nc_num_att(w->ncid, v->id, "add_offset", &v->offset);
    if (rc != NC_NOERR)
        return sw_fail(err, SW_ERR_INPUT, "%s: %s: its scale_factor or add_offset is not one number (%s)",
                       w->path, label, nc_strerror(rc));
    if (!isfinite(v->scale) || !isfinite(v->offset) || v->scale == 0.0)
        return sw_fail(err, SW_ERR_INPUT, "%s: %s: scale_factor %g and add_offset %g must be finite, the "
                       "scale non-zero", w->path, label, v->scale, v->offset);

    /* missing points: _FillValue, or without one the library's default fill (never-written points;
     * bytes have none), and the first WX_MAX_MISSING missing_value entries */
    sw_nc_missing m;
    rc = sw_nc_missing_read(w->ncid, v->id, &m);
    if (rc == NC_ENOMEM)
        return sw_fail(err, SW_ERR_NOMEM, "%s: out of memory", w->path);
    if (rc != NC_NOERR)
        return wx_lib_fail(w->path, rc, strcmp(m.failed, "_FillValue") == 0 ? "reading a _FillValue"
                                                                           : "reading a missing_value", err);
    v->nmiss = 0;
    for (size_t k = 0; k < m.count && k < (m.fill ? 1u : 0u) + WX_MAX_MISSING; k++) {
        v->miss_kind[v->nmiss] = k > 0 || !m.fill ? "missing_value"
                                 : m.fill == 1    ? "_FillValue"
                                                  : "_FillValue (the NetCDF default)";
        v->miss[v->nmiss++] = (float)m.value[k];
    }
    sw_nc_missing_free(&m);
    return SW_OK;
}

/* The smallest prime >= n (n small: a hash-table size for the chunk cache). */
static size_t wx_prime_at_least(size_t n)
{
    for (;; n++) {
        int prime = n >= 2;
        for (size_t d = 2; prime && d * d <= n; d++)
            prime = n % d != 0;
        if (prime)
            return n;
    }
}

/* Sizes the library's chunk cache of variable `id` (time, y, x; its chunks cy x cx points and ct times)
 * to the chunks that hold one time slab, ceil(ny / cy) * ceil(nx / cx) of them: enough that a chunk
 * spanning several times is decompressed once, not once per slab, and no more, so that chunks already
 * read do not pile up (the default cache, several MB per variable, would keep every chunk of a long
 * file read slab by slab). Contiguous and netCDF-3 variables have no chunk cache: nothing is done.
 * Best effort: the library's refusal changes memory use only, so it is not an error. */
static void wx_size_chunk_cache(int ncid, int id, size_t ny, size_t nx)
{
    int storage;
    size_t ch[3];
    nc_type type;
    size_t tsize;
    if (nc_inq_var_chunking(ncid, id, &storage, ch) != NC_NOERR || storage != NC_CHUNKED || !ch[0] || !ch[1] || !ch[2])
        return;
    if (nc_inq_vartype(ncid, id, &type) != NC_NOERR || nc_inq_type(ncid, type, NULL, &tsize) != NC_NOERR)
        return;
    size_t per_slab = ((ny + ch[1] - 1) / ch[1]) * ((nx + ch[2] - 1) / ch[2]);
    size_t bytes = ch[0] * ch[1] * ch[2] * tsize * per_slab;
    nc_set_var_chunk_cache(ncid, id, bytes + bytes / 8 + 1024, wx_prime_at_least(4 * per_slab + 3), 1.0f);
}

/* ---- opening: the axes ------------------------------------------------------------------------ */

/* Finds the coordinate variable of dimension dimid: the 1D variable named like the dimension, else a
 * 1D variable along it whose axis attribute is `axis` ("X", "Y", "T"). *cid = -1 when there is none. */
static int wx_coord_var(int ncid, int dimid, const char *axis, int *cid)
{
    *cid = -1;
    char dname[NC_MAX_NAME + 1];
    int rc = nc_inq_dimname(ncid, dimid, dname);
    if (rc != NC_NOERR)
        return rc;
    int id, nd, d;
    rc = nc_inq_varid(ncid, dname, &id);
    if (rc == NC_NOERR) {
        rc = nc_inq_varndims(ncid, id, &nd);
        if (rc == NC_NOERR && nd == 1 && (rc = nc_inq_vardimid(ncid, id, &d)) == NC_NOERR && d == dimid) {
            *cid = id;
            return NC_NOERR;
        }
    } else if (rc != NC_ENOTVAR) {
        return rc;
    }
    int nvars = 0;
    rc = nc_inq_nvars(ncid, &nvars);
    for (int v = 0; rc == NC_NOERR && v < nvars; v++) {
        rc = nc_inq_varndims(ncid, v, &nd);
        if (rc != NC_NOERR || nd != 1 || (rc = nc_inq_vardimid(ncid, v, &d)) != NC_NOERR || d != dimid)
            continue;
        char a[WX_TEXT_MAX];
        int has;
        rc = sw_nc_text_att(ncid, v, "axis", a, sizeof a, &has);
        if (rc == NC_NOERR && has && strcmp(a, axis) == 0) {
            *cid = v;
            return NC_NOERR;
        }
    }
    return rc;
}

/* Reads the 1D numeric coordinate variable cid (n values) as double into a new array *out. */
static sw_status wx_read_coord(const sw_weather *w, int cid, const char *cname, size_t n, double **out,
                               sw_error *err)
{
    *out = NULL;
    nc_type t;
    int rc = nc_inq_vartype(w->ncid, cid, &t);
    if (rc != NC_NOERR)
        return wx_lib_fail(w->path, rc, "reading a coordinate's type", err);
    if (t == NC_CHAR || t == NC_STRING)
        return sw_fail(err, SW_ERR_INPUT, "%s: coordinate variable '%s' holds text, not numbers", w->path, cname);
    double *c = malloc(n * sizeof *c);
    if (!c)
        return sw_fail(err, SW_ERR_NOMEM, "%s: out of memory reading coordinate '%s' (%zu values)", w->path,
                       cname, n);
    rc = nc_get_var_double(w->ncid, cid, c);
    if (rc != NC_NOERR) {
        free(c);
        char what[NC_MAX_NAME + 32];
        snprintf(what, sizeof what, "reading coordinate '%s'", cname);
        return wx_lib_fail(w->path, rc, what, err);
    }
    *out = c;
    return SW_OK;
}

/* Checks the x or y axis (which = "X" or "Y") on dimension dimid of the data variables and fills ax:
 * coordinate variable, units m or km, at least 2 finite strictly increasing values. `where` names
 * the dimension's place for messages ("last", "second-to-last"). */
static sw_status wx_space_axis(sw_weather *w, int dimid, const char *which, const char *where, wx_axis *ax,
                               sw_error *err)
{
    char dname[NC_MAX_NAME + 1] = "?";
    int rc = nc_inq_dim(w->ncid, dimid, dname, &ax->n);
    if (rc != NC_NOERR)
        return wx_lib_fail(w->path, rc, "reading its dimensions", err);
    int cid;
    rc = wx_coord_var(w->ncid, dimid, which, &cid);
    if (rc != NC_NOERR)
        return wx_lib_fail(w->path, rc, "looking up coordinate variables", err);
    if (cid < 0)
        return sw_fail(err, SW_ERR_INPUT, "%s: dimension '%s' (the %s of the variables' dimensions (time, y, x), "
                       "so %s) has no coordinate variable: a 1D variable named '%s', or one with axis = \"%s\"",
                       w->path, dname, where, which[0] == 'X' ? "x" : "y", dname, which);
    rc = nc_inq_varname(w->ncid, cid, ax->name);
    if (rc != NC_NOERR)
        return wx_lib_fail(w->path, rc, "reading a variable name", err);

    char text[WX_TEXT_MAX];
    int has;
    rc = sw_nc_text_att(w->ncid, cid, "axis", text, sizeof text, &has);
    if (rc != NC_NOERR)
        return wx_lib_fail(w->path, rc, "reading an axis attribute", err);
    if (has && strcmp(text, which) != 0)
        return sw_fail(err, SW_ERR_INPUT, "%s: coordinate '%s' of the %s dimension has axis = \"%s\", but the "
                       "variables' dimensions must be (time, y, x): the %s dimension is %s (axis = \"%s\")",
                       w->path, ax->name, where, text, where, which[0] == 'X' ? "x" : "y", which);
    if (ax->n < 2)
        return sw_fail(err, SW_ERR_INPUT, "%s: coordinate '%s' has %zu point(s); at least 2 are needed", w->path,
                       ax->name, ax->n);

    rc = sw_nc_text_att(w->ncid, cid, "units", text, sizeof text, &has);
    if (rc != NC_NOERR)
        return wx_lib_fail(w->path, rc, "reading a units attribute", err);
    if (!has)
        return sw_fail(err, SW_ERR_INPUT, "%s: coordinate '%s' has no units attribute (accepted: m, km)", w->path,
                       ax->name);
    double scale = wx_unit_lookup(text, wx_length_units, WX_COUNT(wx_length_units));
    if (scale == 0.0) {
        if (strncmp(text, "degree", 6) == 0 || strncmp(text, "Degree", 6) == 0)
            return sw_fail(err, SW_ERR_INPUT, "%s: coordinate '%s' has units '%s': the grid must be projected "
                           "in metres (accepted: m, km), not longitude/latitude", w->path, ax->name, text);
        return sw_fail(err, SW_ERR_INPUT, "%s: coordinate '%s' has units '%s' (accepted: m, km)", w->path,
                       ax->name, text);
    }

    sw_status st = wx_read_coord(w, cid, ax->name, ax->n, &ax->c, err);
    if (st != SW_OK)
        return st;
    size_t n = ax->n;
    for (size_t m = 0; m < n; m++) {
        ax->c[m] *= scale;
        if (!isfinite(ax->c[m]) || fabs(ax->c[m]) >= 1e30)
            return sw_fail(err, SW_ERR_INPUT, "%s: coordinate '%s' has a missing or non-finite value at %s[%zu]",
                           w->path, ax->name, ax->name, m);
    }
    for (size_t m = 0; m + 1 < n; m++)
        if (!(ax->c[m + 1] > ax->c[m]))
            return sw_fail(err, SW_ERR_INPUT, "%s: coordinate '%s' is not strictly increasing (%s[%zu] = %g m, "
                           "%s[%zu] = %g m)", w->path, ax->name, ax->name, m, ax->c[m], ax->name, m + 1, ax->c[m + 1]);
    ax->inv = malloc((n - 1) * sizeof *ax->inv);
    if (!ax->inv)
        return sw_fail(err, SW_ERR_NOMEM, "%s: out of memory", w->path);
    double mean = (ax->c[n - 1] - ax->c[0]) / (double)(n - 1);
    ax->even = 1;
    for (size_t m = 0; m + 1 < n; m++) {
        double d = ax->c[m + 1] - ax->c[m];
        ax->inv[m] = 1.0 / d;
        if (fabs(d - mean) > WX_EVEN_TOL * mean)
            ax->even = 0;
    }
    ax->inv_mean = 1.0 / mean;
    return SW_OK;
}

/* Checks the time axis on dimension dimid and fills w->nt, w->time_s (s since the origin). */
static sw_status wx_time_axis(sw_weather *w, int dimid, double origin_s, sw_error *err)
{
    char dname[NC_MAX_NAME + 1] = "?";
    int rc = nc_inq_dim(w->ncid, dimid, dname, &w->nt);
    if (rc != NC_NOERR)
        return wx_lib_fail(w->path, rc, "reading its dimensions", err);
    int cid;
    rc = wx_coord_var(w->ncid, dimid, "T", &cid);
    if (rc != NC_NOERR)
        return wx_lib_fail(w->path, rc, "looking up coordinate variables", err);
    if (cid < 0)
        return sw_fail(err, SW_ERR_INPUT, "%s: dimension '%s' (the first of the variables' dimensions (time, y, x), "
                       "so time) has no coordinate variable: a 1D variable named '%s', or one with axis = \"T\"",
                       w->path, dname, dname);
    rc = nc_inq_varname(w->ncid, cid, w->time_name);
    if (rc != NC_NOERR)
        return wx_lib_fail(w->path, rc, "reading a variable name", err);
    const char *tn = w->time_name;
    if (w->nt == 0)
        return sw_fail(err, SW_ERR_INPUT, "%s: time axis '%s' has no time slabs", w->path, tn);

    char units[WX_TEXT_MAX], cal[WX_TEXT_MAX];
    int has_units, has_cal;
    rc = sw_nc_text_att(w->ncid, cid, "units", units, sizeof units, &has_units);
    if (rc == NC_NOERR)
        rc = sw_nc_text_att(w->ncid, cid, "calendar", cal, sizeof cal, &has_cal);
    if (rc != NC_NOERR)
        return wx_lib_fail(w->path, rc, "reading the time axis' attributes", err);
    double unit_s, ref_s;
    sw_civil_time ref;
    if (!has_units)
        return sw_fail(err, SW_ERR_INPUT, "%s: time axis '%s' has no units attribute (accepted: " WX_TIME_FORM ")",
                       w->path, tn);
    if (sw_time_units_parse(units, &unit_s, &ref_s, &ref, NULL, 0) != 0)
        return sw_fail(err, SW_ERR_INPUT, "%s: time axis '%s' (the first of the variables' dimensions (time, y, x)) "
                       "has units '%s' (accepted: " WX_TIME_FORM ", e.g. 'hours since 2000-01-01 00:00:00')",
                       w->path, tn, units);
    /* the mixed Julian/Gregorian calendar agrees with the proleptic one from 1582-10-15 on */
    int before_1582 = sw_days_from_civil(ref.year, ref.month, ref.day) < sw_days_from_civil(1582, 10, 15);
    if (has_cal) {
        int proleptic = wx_same_unit(cal, "proleptic_gregorian");
        int mixed = wx_same_unit(cal, "standard") || wx_same_unit(cal, "gregorian");
        if (!proleptic && !mixed)
            return sw_fail(err, SW_ERR_INPUT, "%s: time axis '%s' has calendar '%s' (accepted: standard, "
                           "gregorian, proleptic_gregorian)", w->path, tn, cal);
        if (mixed && before_1582)
            return sw_fail(err, SW_ERR_INPUT, "%s: time axis '%s': a reference date before 1582-10-15 in the "
                           "mixed Julian/Gregorian calendar '%s' is not supported (accepted: a later date, or "
                           "calendar = proleptic_gregorian)", w->path, tn, cal);
    } else if (before_1582) {
        return sw_fail(err, SW_ERR_INPUT, "%s: time axis '%s': a reference date before 1582-10-15 in the "
                       "default (mixed Julian/Gregorian) calendar is not supported (accepted: a later date, or "
                       "calendar = proleptic_gregorian)", w->path, tn);
    }

    double *t;
    sw_status st = wx_read_coord(w, cid, tn, w->nt, &t, err);
    if (st != SW_OK)
        return st;
    double fill = NC_FILL_DOUBLE;
    int has_fill = 0;
    nc_type at;
    size_t alen;
    if (nc_inq_att(w->ncid, cid, "_FillValue", &at, &alen) == NC_NOERR && alen == 1 &&
        nc_get_att_double(w->ncid, cid, "_FillValue", &fill) == NC_NOERR)
        has_fill = 1;
    for (size_t k = 0; k < w->nt; k++) {
        if (!isfinite(t[k]) || (has_fill && t[k] == fill) || t[k] == NC_FILL_DOUBLE || fabs(t[k]) > 1e15) {
            st = sw_fail(err, SW_ERR_INPUT, "%s: time axis '%s' has a missing or non-finite value at %s[%zu]",
                         w->path, tn, tn, k);
            break;
        }
        if (k > 0 && !(t[k] > t[k - 1])) {
            st = sw_fail(err, SW_ERR_INPUT, "%s: time axis '%s' is not strictly increasing: %s[%zu] = %.10g is not "
                         "after %s[%zu] = %.10g (units '%s')", w->path, tn, tn, k, t[k], tn, k - 1, t[k - 1], units);
            break;
        }
    }
    if (st != SW_OK) {
        free(t);
        return st;
    }
    for (size_t k = 0; k < w->nt; k++)
        t[k] = t[k] * unit_s + (ref_s - origin_s);
    for (size_t k = 1; k < w->nt && st == SW_OK; k++)   /* the conversion may round two close times together */
        if (!(t[k] > t[k - 1]))
            st = sw_fail(err, SW_ERR_INPUT, "%s: time axis '%s': times %zu and %zu are the same to a double in "
                         "seconds since the origin", w->path, tn, k - 1, k);
    w->time_s = t;
    return st;
}

/* Checks that the three variables have the same three dimensions and reads the axes. */
static sw_status wx_axes(sw_weather *w, double origin_s, sw_error *err)
{
    int dims[WX_NVARS][NC_MAX_VAR_DIMS];
    for (int q = 0; q < WX_NVARS; q++) {
        int nd;
        int rc = nc_inq_varndims(w->ncid, w->var[q].id, &nd);
        if (rc == NC_NOERR)
            rc = nc_inq_vardimid(w->ncid, w->var[q].id, dims[q]);
        if (rc != NC_NOERR)
            return wx_lib_fail(w->path, rc, "reading a variable's dimensions", err);
        if (nd != 3) {
            char label[2 * NC_MAX_NAME + 64], list[4 * NC_MAX_NAME];
            wx_dim_list(w->ncid, dims[q], nd, list, sizeof list);
            return sw_fail(err, SW_ERR_INPUT, "%s: %s has %d dimension(s) %s; it must have 3, (time, y, x)",
                           w->path, wx_var_label(w, q, label, sizeof label), nd, list);
        }
        if (q > 0 && memcmp(dims[q], dims[0], 3 * sizeof(int)) != 0) {
            char l0[2 * NC_MAX_NAME + 64], lq[2 * NC_MAX_NAME + 64], d0[4 * NC_MAX_NAME], dq[4 * NC_MAX_NAME];
            wx_dim_list(w->ncid, dims[0], 3, d0, sizeof d0);
            wx_dim_list(w->ncid, dims[q], 3, dq, sizeof dq);
            return sw_fail(err, SW_ERR_INPUT, "%s: %s has dimensions %s but %s has %s; all three must have the "
                           "same (time, y, x)", w->path, wx_var_label(w, 0, l0, sizeof l0), d0,
                           wx_var_label(w, q, lq, sizeof lq), dq);
        }
    }
    sw_status st = wx_space_axis(w, dims[0][2], "X", "last", &w->x, err);
    if (st == SW_OK)
        st = wx_space_axis(w, dims[0][1], "Y", "second-to-last", &w->y, err);
    if (st == SW_OK)
        st = wx_time_axis(w, dims[0][0], origin_s, err);
    return st;
}

/* Checks that the file's extent contains every cell centre of g. */
static sw_status wx_cover_grid(const sw_weather *w, const sw_grid *g, sw_error *err)
{
    double gx0 = sw_grid_xc(g, 0), gx1 = sw_grid_xc(g, g->nx - 1);
    double gy0 = sw_grid_yc(g, 0), gy1 = sw_grid_yc(g, g->ny - 1);
    double fx0 = w->x.c[0], fx1 = w->x.c[w->x.n - 1], fy0 = w->y.c[0], fy1 = w->y.c[w->y.n - 1];
    double tx = WX_COVER_TOL * g->dx_m, ty = WX_COVER_TOL * g->dy_m;
    if (gx0 < fx0 - tx || gx1 > fx1 + tx || gy0 < fy0 - ty || gy1 > fy1 + ty)
        return sw_fail(err, SW_ERR_INPUT, "%s: the file's grid (x %g .. %g m, y %g .. %g m) does not cover the "
                       "model grid's cell centres (x %g .. %g m, y %g .. %g m)", w->path, fx0, fx1, fy0, fy1, gx0,
                       gx1, gy0, gy1);
    return SW_OK;
}

/* ---- public: open, close, times ----------------------------------------------------------- */

/* The arguments of sw_weather_open probed in an isolated child (base/isolate.h). */
typedef struct {
    const char *path, *origin;
    const sw_grid *model_grid;
} wx_probe_args;

/* The child's reader: opens the file as the parent will, then reads every time slab, as a run may. An
 * error of the open is handed back (the parent would meet the same); an error of a slab is not (a run
 * reads only the slabs it covers and reports its own), only a crash, hang or runaway allocation is. */
static sw_status wx_probe(void *ctx, sw_error *err)
{
    const wx_probe_args *a = ctx;
    sw_weather *w = NULL;
    sw_status st = sw_weather_open(a->path, a->origin, a->model_grid, &w, err);
    if (st != SW_OK)
        return st;
    sw_weather_slab s;
    sw_error ignored;
    if (sw_weather_slab_alloc(w, &s, &ignored) == SW_OK) {
        for (size_t k = 0; k < w->nt; k++)
            sw_weather_read(w, k, &s, &ignored);
        sw_weather_slab_free(&s);
    }
    sw_weather_close(w);
    return SW_OK;
}

sw_status sw_weather_open(const char *path, const char *origin, const sw_grid *model_grid, sw_weather **out,
                          sw_error *err)
{
    if (out)
        *out = NULL;
    const char *p = path ? path : "(null)";
    if (!path || !*path || !origin || !model_grid || !out)
        return sw_fail(err, SW_ERR_USAGE, "%s: sw_weather_open: no file, origin, model grid or output given", p);
    if (model_grid->nx == 0 || model_grid->ny == 0 || !(model_grid->dx_m > 0.0) || !(model_grid->dy_m > 0.0) ||
        !isfinite(model_grid->x0_m) || !isfinite(model_grid->y0_m))
        return sw_fail(err, SW_ERR_USAGE, "%s: sw_weather_open: the model grid is empty or has no positive spacing", p);
    double origin_s;
    if (sw_datetime_parse(origin, &origin_s, NULL, 0) != 0)
        return sw_fail(err, SW_ERR_USAGE, "%s: time origin '%s' is not a date and time (accepted: YYYY-MM-DD "
                       "HH:MM:SS, e.g. 2000-01-01 00:00:00)", p, origin);
    if (!sw_isolate_in_child()) {
        wx_probe_args probe = {path, origin, model_grid};
        sw_status pst = sw_isolate_file(path, "weather", wx_probe, &probe, err);
        if (pst != SW_OK)
            return pst;
    }

    sw_weather *w = calloc(1, sizeof *w);
    size_t plen = strlen(path);
    if (w)
        w->path = malloc(plen + 1);
    if (!w || !w->path) {
        free(w);
        return sw_fail(err, SW_ERR_NOMEM, "%s: out of memory", p);
    }
    memcpy(w->path, path, plen + 1);
    w->origin_s = origin_s;
    w->ncid = -1;
    int rc = nc_open(path, NC_NOWRITE, &w->ncid);
    if (rc != NC_NOERR) {
        w->ncid = -1;
        sw_status st = wx_lib_fail(path, rc, "cannot open the weather file", err);
        sw_weather_close(w);
        return st;
    }
    sw_status st = SW_OK;
    for (int q = 0; q < WX_NVARS && st == SW_OK; q++)
        st = wx_find_var(w, q, err);
    for (int q = 0; q < WX_NVARS && st == SW_OK; q++)
        st = wx_check_var(w, q, err);
    if (st == SW_OK)
        st = wx_axes(w, origin_s, err);
    if (st == SW_OK)
        st = wx_cover_grid(w, model_grid, err);
    for (int q = 0; q < WX_NVARS && st == SW_OK; q++)
        wx_size_chunk_cache(w->ncid, w->var[q].id, w->y.n, w->x.n);
    if (st != SW_OK) {
        sw_weather_close(w);
        return st;
    }
    *out = w;
    return SW_OK;
}

void sw_weather_close(sw_weather *w)
{
    if (!w)
        return;
    if (w->ncid >= 0)
        nc_close(w->ncid);
    free(w->x.c);
    free(w->x.inv);
    free(w->y.c);
    free(w->y.inv);
    free(w->time_s);
    free(w->path);
    free(w);
}

size_t sw_weather_count(const sw_weather *w) { return w->nt; }

double sw_weather_time(const sw_weather *w, size_t k) { return k < w->nt ? w->time_s[k] : NAN; }

void sw_weather_size(const sw_weather *w, size_t *nx, size_t *ny)
{
    if (nx)
        *nx = w->x.n;
    if (ny)
        *ny = w->y.n;
}

const char *sw_weather_path(const sw_weather *w) { return w->path; }

size_t sw_weather_locate(const sw_weather *w, double t_s)
{
    if (w->nt < 2 || !(t_s > w->time_s[0]))
        return 0;
    size_t lo = 0, hi = w->nt - 1;   /* time[lo] < t_s; the answer is in [lo, hi - 1] */
    if (t_s >= w->time_s[hi])
        return hi - 1;
    while (hi - lo > 1) {            /* time[lo] < t_s < time[hi] */
        size_t mid = lo + (hi - lo) / 2;
        if (w->time_s[mid] <= t_s)
            lo = mid;
        else
            hi = mid;
    }
    return lo;
}

sw_status sw_weather_covers(const sw_weather *w, double t0_s, double t1_s, sw_error *err)
{
    double a = w->time_s[0], b = w->time_s[w->nt - 1];
    if (t0_s >= a && t1_s <= b)
        return SW_OK;
    char da[48], db[48], dc[48], dd[48];
    sw_datetime_format(w->origin_s + a, da, sizeof da);
    sw_datetime_format(w->origin_s + b, db, sizeof db);
    sw_datetime_format(w->origin_s + t0_s, dc, sizeof dc);
    sw_datetime_format(w->origin_s + t1_s, dd, sizeof dd);
    return sw_fail(err, SW_ERR_INPUT, "%s: the file covers %.10g .. %.10g s (%s .. %s) but the run needs %.10g .. "
                   "%.10g s (%s .. %s); times are seconds since the scenario's origin", w->path, a, b, da, db,
                   t0_s, t1_s, dc, dd);
}

/* ---- public: slabs ---------------------------------------------------------------------------- */

sw_status sw_weather_slab_alloc(const sw_weather *w, sw_weather_slab *s, sw_error *err)
{
    if (!w || !s)
        return sw_fail(err, SW_ERR_USAGE, "sw_weather_slab_alloc: no file or slab given");
    memset(s, 0, sizeof *s);
    s->index = SIZE_MAX;
    s->time_s = NAN;
    size_t nx = w->x.n, ny = w->y.n;
    if (nx > SIZE_MAX / sizeof(float) / ny)
        return sw_fail(err, SW_ERR_NOMEM, "%s: a slab of %zu x %zu points is too large", w->path, nx, ny);
    size_t bytes = nx * ny * sizeof(float);
    s->u = malloc(bytes);
    s->v = malloc(bytes);
    s->p = malloc(bytes);
    if (!s->u || !s->v || !s->p) {
        sw_weather_slab_free(s);
        return sw_fail(err, SW_ERR_NOMEM, "%s: out of memory for a slab of %zu x %zu points", w->path, nx, ny);
    }
    s->nx = nx;
    s->ny = ny;
    return SW_OK;
}

void sw_weather_slab_free(sw_weather_slab *s)
{
    if (!s)
        return;
    free(s->u);
    free(s->v);
    free(s->p);
    s->u = s->v = s->p = NULL;
}

/* Reads variable q of slab k into buf (nx * ny floats), checks for missing values and converts to SI. */
static sw_status wx_read_var(sw_weather *w, int q, size_t k, float *buf, sw_error *err)
{
    const wx_var *v = &w->var[q];
    size_t nx = w->x.n, ny = w->y.n;
    size_t start[3] = {k, 0, 0}, count[3] = {1, ny, nx};
    char label[2 * NC_MAX_NAME + 64];
    int rc = nc_get_vara_float(w->ncid, v->id, start, count, buf);
    if (rc == NC_ERANGE)
        return sw_fail(err, SW_ERR_INPUT, "%s: %s has values beyond the range of float in time slab %zu (t = %.10g s): "
                       "an undeclared missing-value marker?", w->path, wx_var_label(w, q, label, sizeof label), k,
                       w->time_s[k]);
    if (rc != NC_NOERR) {
        char what[2 * NC_MAX_NAME + 96];
        snprintf(what, sizeof what, "reading time slab %zu of %s", k, wx_var_label(w, q, label, sizeof label));
        return wx_lib_fail(w->path, rc, what, err);
    }
    size_t total = nx * ny;
    for (size_t m = 0; m < total; m++) {
        float r = buf[m];
        int bad = isfinite(r) ? 0 : 1;
        for (size_t e = 0; e < v->nmiss && !bad; e++)
            if (r == v->miss[e])
                bad = 2 + (int)e;
        if (bad) {
            const char *kind = bad == 1 ? (isnan(r) ? "NaN" : "an infinite value") : v->miss_kind[bad - 2];
            return sw_fail(err, SW_ERR_INPUT, "%s: %s has a missing value (%s) at %s[%zu][%zu][%zu]: time slab %zu "
                           "(t = %.10g s since the origin), y index j = %zu, x index i = %zu", w->path,
                           wx_var_label(w, q, label, sizeof label), kind, v->name, k, m / nx, m % nx, k,
                           w->time_s[k], m / nx, m % nx);
        }
    }
    double a = v->scale * v->factor, b = v->offset * v->factor;
    if (a != 1.0 || b != 0.0) {
        for (size_t m = 0; m < total; m++)
            buf[m] = (float)((double)buf[m] * a + b);
    }
    return SW_OK;
}

sw_status sw_weather_read(sw_weather *w, size_t k, sw_weather_slab *s, sw_error *err)
{
    if (!w || !s || !s->u || !s->v || !s->p)
        return sw_fail(err, SW_ERR_USAGE, "sw_weather_read: no file or no allocated slab given");
    s->index = SIZE_MAX;
    s->time_s = NAN;
    if (s->nx != w->x.n || s->ny != w->y.n)
        return sw_fail(err, SW_ERR_USAGE, "%s: the slab was allocated for %zu x %zu points, the file has %zu x %zu",
                       w->path, s->nx, s->ny, w->x.n, w->y.n);
    if (k >= w->nt)
        return sw_fail(err, SW_ERR_USAGE, "%s: time slab %zu asked for; the file has %zu (0 .. %zu)", w->path, k,
                       w->nt, w->nt - 1);
    float *dest[WX_NVARS] = {s->u, s->v, s->p};
    for (int q = 0; q < WX_NVARS; q++) {
        sw_status st = wx_read_var(w, q, k, dest[q], err);
        if (st != SW_OK)
            return st;
    }
    s->index = k;
    s->time_s = w->time_s[k];
    return SW_OK;
}

/* ---- interpolation --------------------------------------------------------------------------- */

/* The interval k (0 .. n-2) of axis ax holding x: c[k] <= x < c[k + 1]; 0 for x below c[0] (or NaN),
 * n - 2 for x at or beyond c[n - 1]. A division on an evenly spaced axis, else a binary search. */
static size_t wx_locate(const wx_axis *ax, double x)
{
    size_t last = ax->n - 2;
    if (!(x > ax->c[0]))
        return 0;
    if (x >= ax->c[last + 1])
        return last;
    if (ax->even) {
        double p = (x - ax->c[0]) * ax->inv_mean;
        size_t k = p < (double)last ? (size_t)p : last;
        while (k > 0 && ax->c[k] > x)          /* rounding of p: at most a step either way */
            k--;
        while (k < last && ax->c[k + 1] <= x)
            k++;
        return k;
    }
    size_t lo = 0, hi = last + 1;   /* c[lo] <= x < c[hi] */
    while (hi - lo > 1) {
        size_t mid = lo + (hi - lo) / 2;
        if (ax->c[mid] <= x)
            lo = mid;
        else
            hi = mid;
    }
    return lo;
}

/* The weight of c[k + 1] for x in interval k, clamped to [0, 1] (0 for NaN). */
static inline double wx_weight(const wx_axis *ax, size_t k, double x)
{
    double w = (x - ax->c[k]) * ax->inv[k];
    return w > 0.0 ? (w < 1.0 ? w : 1.0) : 0.0;
}

void sw_weather_point(const sw_weather *w, const sw_weather_slab *s, double x_m, double y_m, double *p_pa,
                      double *u10_ms, double *v10_ms)
{
    size_t nx = w->x.n;
    size_t i = wx_locate(&w->x, x_m), j = wx_locate(&w->y, y_m);
    double a = wx_weight(&w->x, i, x_m), b = wx_weight(&w->y, j, y_m);
    size_t o = j * nx + i;
    const float *f[WX_NVARS] = {s->u, s->v, s->p};
    double *out[WX_NVARS] = {u10_ms, v10_ms, p_pa};
    for (int q = 0; q < WX_NVARS; q++) {
        if (!out[q])
            continue;
        const float *r = f[q] + o;
        *out[q] = (1.0 - b) * ((1.0 - a) * r[0] + a * r[1]) + b * ((1.0 - a) * r[nx] + a * r[nx + 1]);
    }
}

/* out[i] for i in [a, b): linear from L at xl to L + d at xl + 1 / inv, at x = x0 + i dx, clamped. */
static void wx_lerp_run(float *restrict out, size_t a, size_t b, double x0, double dx, double xl, double inv,
                        double L, double d)
{
    SW_OMP(simd)
    for (size_t i = a; i < b; i++) {
        double t = (x0 + (double)i * dx - xl) * inv;
        t = t > 0.0 ? (t < 1.0 ? t : 1.0) : 0.0;
        out[i] = (float)(L + t * d);
    }
}

/* The three fields at once (the usual call: one weight per point). */
static void wx_lerp_run3(float *restrict p, float *restrict u, float *restrict v, size_t a, size_t b, double x0,
                         double dx, double xl, double inv, const double L[3], const double d[3])
{
    double Lu = L[0], Lv = L[1], Lp = L[2], du = d[0], dv = d[1], dp = d[2];
    SW_OMP(simd)
    for (size_t i = a; i < b; i++) {
        double t = (x0 + (double)i * dx - xl) * inv;
        t = t > 0.0 ? (t < 1.0 ? t : 1.0) : 0.0;
        u[i] = (float)(Lu + t * du);
        v[i] = (float)(Lv + t * dv);
        p[i] = (float)(Lp + t * dp);
    }
}

void sw_weather_row(const sw_weather *w, const sw_weather_slab *s, double y_m, double x0_m, double dx_m, size_t n,
                    float *p_pa, float *u10_ms, float *v10_ms)
{
    if (n == 0)
        return;
    const wx_axis *ax = &w->x;
    size_t nx = ax->n, last = nx - 2;
    if (!(dx_m > 0.0) || !isfinite(dx_m) || !isfinite(x0_m) || !isfinite(x0_m + (double)(n - 1) * dx_m)) {
        for (size_t i = 0; i < n; i++) {   /* not an increasing row: point by point */
            double p, u, v;
            sw_weather_point(w, s, x0_m + (double)i * dx_m, y_m, &p, &u, &v);
            if (p_pa)
                p_pa[i] = (float)p;
            if (u10_ms)
                u10_ms[i] = (float)u;
            if (v10_ms)
                v10_ms[i] = (float)v;
        }
        return;
    }
    /* the row's y weights, once */
    size_t j = wx_locate(&w->y, y_m);
    double b = wx_weight(&w->y, j, y_m), a = 1.0 - b;
    const float *r0[WX_NVARS] = {s->u + j * nx, s->v + j * nx, s->p + j * nx};
    float *out[WX_NVARS] = {u10_ms, v10_ms, p_pa};
    int all = p_pa && u10_ms && v10_ms;

    size_t k = wx_locate(ax, x0_m);
    for (size_t i = 0; i < n;) {
        double xi = x0_m + (double)i * dx_m;
        if (k < last && !(xi < ax->c[k + 1])) {    /* the next interval, or a search when it skips one */
            k++;
            if (k < last && !(xi < ax->c[k + 1]))
                k = wx_locate(ax, xi);
        }
        /* the run [i, end): the points before c[k + 1], or all the rest on the last interval. The
         * estimate can be a rounding off; the two loops make it exact (without them such a point would
         * still get a clamped weight, a rounding error away from its own) */
        size_t end = n;
        if (k < last) {
            double xe = ax->c[k + 1];
            double est = ceil((xe - x0_m) / dx_m);
            if (est < (double)n)
                end = est > (double)(i + 1) ? (size_t)est : i + 1;
            while (end > i + 1 && !(x0_m + (double)(end - 1) * dx_m < xe))
                end--;
            while (end < n && x0_m + (double)end * dx_m < xe)
                end++;
        }
        double L[WX_NVARS], d[WX_NVARS];
        for (int q = 0; q < WX_NVARS; q++) {
            const float *lo = r0[q], *hi = r0[q] + nx;
            L[q] = a * lo[k] + b * hi[k];
            d[q] = (a * lo[k + 1] + b * hi[k + 1]) - L[q];
        }
        if (all) {
            wx_lerp_run3(p_pa, u10_ms, v10_ms, i, end, x0_m, dx_m, ax->c[k], ax->inv[k], L, d);
        } else {
            for (int q = 0; q < WX_NVARS; q++)
                if (out[q])
                    wx_lerp_run(out[q], i, end, x0_m, dx_m, ax->c[k], ax->inv[k], L[q], d[q]);
        }
        i = end;
    }
}

/* ---- the writer ---------------------------------------------------------------------------------- */

/* A file being written: the first failure is kept and every later step does nothing. */
typedef struct {
    sw_atomic_file af;   /* final path and the .part written */
    int ncid;            /* valid while is_open */
    int is_open;
    sw_error *err;
    sw_status rc;        /* first failure, SW_OK until then */
} wx_writer;

/* Records NetCDF status rc of step `what` (about `name` when not NULL). Returns 1 while all is well. */
static int wx_ok(wx_writer *f, int rc, const char *what, const char *name)
{
    if (f->rc != SW_OK)
        return 0;
    if (rc == NC_NOERR)
        return 1;
    f->rc = sw_fail(f->err, rc > 0 ? SW_ERR_IO : SW_ERR_NETCDF, "%s: %s%s%s: %s", f->af.path, what,
                    name ? " " : "", name ? name : "", nc_strerror(rc));
    return 0;
}

static void wx_put_text(wx_writer *f, int varid, const char *att, const char *text)
{
    if (f->rc == SW_OK)
        wx_ok(f, nc_put_att_text(f->ncid, varid, att, strlen(text), text), "writing attribute", att);
}

/* Defines a variable; returns its id (-1 after a failure). */
static int wx_def(wx_writer *f, const char *name, nc_type type, int nd, const int *dims)
{
    int id = -1;
    if (f->rc == SW_OK && !wx_ok(f, nc_def_var(f->ncid, name, type, nd, dims, &id), "defining variable", name))
        id = -1;
    return id;
}

/* Defines one of the three float data variables (time, y, x): one compressed chunk per slab (split
 * along y and x when a slab exceeds WX_CHUNK_CELLS), _FillValue, CF attributes. */
static int wx_def_data(wx_writer *f, const char *name, const int dims[3], const sw_grid *g, const char *sn,
                       const char *long_name, const char *units, int is_wind)
{
    int id = wx_def(f, name, NC_FLOAT, 3, dims);
    size_t chunks[3] = {1, g->ny, g->nx};
    if (g->nx * g->ny > WX_CHUNK_CELLS) {
        chunks[2] = g->nx < WX_CHUNK_CELLS ? g->nx : WX_CHUNK_CELLS;
        size_t rows = WX_CHUNK_CELLS / chunks[2];
        size_t pieces = (g->ny + rows - 1) / rows;
        chunks[1] = (g->ny + pieces - 1) / pieces;
    }
    float fill = NC_FILL_FLOAT;
    if (f->rc == SW_OK && wx_ok(f, nc_def_var_chunking(f->ncid, id, NC_CHUNKED, chunks), "setting chunks of", name))
        wx_ok(f, nc_def_var_deflate(f->ncid, id, 1, 1, WX_DEFLATE_LEVEL), "setting compression of", name);
    if (f->rc == SW_OK)
        wx_ok(f, nc_def_var_fill(f->ncid, id, 0, &fill), "setting the _FillValue of", name);
    if (f->rc == SW_OK)   /* a written chunk leaves the cache at once, so the cache stays at one slab */
        wx_size_chunk_cache(f->ncid, id, g->ny, g->nx);
    wx_put_text(f, id, "standard_name", sn);
    wx_put_text(f, id, "long_name", long_name);
    wx_put_text(f, id, "units", units);
    if (is_wind)
        wx_put_text(f, id, "coordinates", "height");
    return id;
}

/* Checks the writer's arguments. */
static sw_status wx_write_args(const char *path, const sw_grid *g, const double *times_s, size_t n_times,
                               const char *origin, const char *title, sw_weather_fill_fn fill, sw_error *err)
{
    const char *p = path ? path : "(null)";
    if (!path || !*path || !g || !times_s || !origin || !title || !fill)
        return sw_fail(err, SW_ERR_USAGE, "%s: sw_weather_write: no path, grid, times, origin, title or fill given", p);
    if (g->nx < 2 || g->ny < 2 || !(g->dx_m > 0.0) || !(g->dy_m > 0.0) || !isfinite(g->dx_m) ||
        !isfinite(g->dy_m) || !isfinite(g->x0_m) || !isfinite(g->y0_m))
        return sw_fail(err, SW_ERR_USAGE, "%s: the weather grid must have at least 2 x 2 points and a positive, "
                       "finite spacing (it has %zu x %zu, dx %g m, dy %g m)", p, g->nx, g->ny, g->dx_m, g->dy_m);
    if (g->nx > SIZE_MAX / sizeof(float) / g->ny)
        return sw_fail(err, SW_ERR_USAGE, "%s: the weather grid is too large (%zu x %zu)", p, g->nx, g->ny);
    if (n_times == 0)
        return sw_fail(err, SW_ERR_USAGE, "%s: no times given (at least one slab is needed)", p);
    for (size_t k = 0; k < n_times; k++)
        if (!isfinite(times_s[k]) || (k > 0 && !(times_s[k] > times_s[k - 1])))
            return sw_fail(err, SW_ERR_USAGE, "%s: times must be finite and strictly increasing (times_s[%zu] = %g%s)",
                           p, k, times_s[k], k > 0 ? " is not after the one before" : "");
    double o;
    if (sw_datetime_parse(origin, &o, NULL, 0) != 0)
        return sw_fail(err, SW_ERR_USAGE, "%s: time origin '%s' is not a date and time (accepted: YYYY-MM-DD "
                       "HH:MM:SS)", p, origin);
    return SW_OK;
}

sw_status sw_weather_write(const char *path, const sw_grid *file_grid, const double *times_s, size_t n_times,
                           const char *origin, const char *title, const char *caution, sw_weather_fill_fn fill,
                           void *ctx, sw_error *err)
{
    sw_status st = wx_write_args(path, file_grid, times_s, n_times, origin, title, fill, err);
    if (st != SW_OK)
        return st;
    const sw_grid *g = file_grid;
    size_t nx = g->nx, ny = g->ny, cells = nx * ny;

    wx_writer f;
    memset(&f, 0, sizeof f);
    f.err = err;
    if ((st = sw_atomic_begin(&f.af, path, err)) != SW_OK)
        return st;
    int rc = nc_create(f.af.part, NC_NETCDF4 | NC_CLOBBER, &f.ncid);
    if (rc != NC_NOERR)
        return sw_atomic_create_failed(&f.af, rc > 0 ? SW_ERR_IO : SW_ERR_NETCDF, nc_strerror(rc), err);
    f.is_open = 1;

    int d_t = -1, d_y = -1, d_x = -1;
    if (wx_ok(&f, nc_def_dim(f.ncid, "time", n_times, &d_t), "defining dimension", "time") &&
        wx_ok(&f, nc_def_dim(f.ncid, "y", ny, &d_y), "defining dimension", "y"))
        wx_ok(&f, nc_def_dim(f.ncid, "x", nx, &d_x), "defining dimension", "x");
    char units[96];
    snprintf(units, sizeof units, "seconds since %s", origin);
    int v_t = wx_def(&f, "time", NC_DOUBLE, 1, &d_t);
    wx_put_text(&f, v_t, "standard_name", "time");
    wx_put_text(&f, v_t, "long_name", "time");
    wx_put_text(&f, v_t, "units", units);
    wx_put_text(&f, v_t, "calendar", "proleptic_gregorian");
    wx_put_text(&f, v_t, "axis", "T");
    int v_y = wx_def(&f, "y", NC_DOUBLE, 1, &d_y);
    wx_put_text(&f, v_y, "standard_name", "projection_y_coordinate");
    wx_put_text(&f, v_y, "long_name", "y of the point (north)");
    wx_put_text(&f, v_y, "units", "m");
    wx_put_text(&f, v_y, "axis", "Y");
    int v_x = wx_def(&f, "x", NC_DOUBLE, 1, &d_x);
    wx_put_text(&f, v_x, "standard_name", "projection_x_coordinate");
    wx_put_text(&f, v_x, "long_name", "x of the point (east)");
    wx_put_text(&f, v_x, "units", "m");
    wx_put_text(&f, v_x, "axis", "X");
    int v_h = wx_def(&f, "height", NC_DOUBLE, 0, NULL);
    wx_put_text(&f, v_h, "standard_name", "height");
    wx_put_text(&f, v_h, "long_name", "height of the wind above the surface");
    wx_put_text(&f, v_h, "units", "m");
    wx_put_text(&f, v_h, "positive", "up");
    wx_put_text(&f, v_h, "axis", "Z");
    int dims[3] = {d_t, d_y, d_x};
    int v_var[WX_NVARS];
    v_var[WX_U] = wx_def_data(&f, "eastward_wind_10m", dims, g, wx_standard_names[WX_U],
                              "eastward wind 10 m above the surface", "m s-1", 1);
    v_var[WX_V] = wx_def_data(&f, "northward_wind_10m", dims, g, wx_standard_names[WX_V],
                              "northward wind 10 m above the surface", "m s-1", 1);
    v_var[WX_P] = wx_def_data(&f, "air_pressure_msl", dims, g, wx_standard_names[WX_P],
                              "air pressure at mean sea level", "Pa", 0);
    char source[64];
    snprintf(source, sizeof source, "shoreward %s", SW_VERSION);
    wx_put_text(&f, NC_GLOBAL, "Conventions", "CF-1.11");
    wx_put_text(&f, NC_GLOBAL, "title", title);
    wx_put_text(&f, NC_GLOBAL, "source", source);
    if (caution)
        wx_put_text(&f, NC_GLOBAL, "caution", caution);
    if (f.rc == SW_OK)
        wx_ok(&f, nc_enddef(f.ncid), "ending definitions", NULL);

    /* axes; then slab by slab */
    double *axis = malloc((nx > ny ? nx : ny) * sizeof *axis);
    float *buf = malloc(3 * cells * sizeof *buf);
    if ((!axis || !buf) && f.rc == SW_OK)
        f.rc = sw_fail(err, SW_ERR_NOMEM, "%s: out of memory for a slab of %zu x %zu points", f.af.path, nx, ny);
    if (f.rc == SW_OK) {
        for (size_t i = 0; i < nx; i++)
            axis[i] = sw_grid_xc(g, i);
        if (wx_ok(&f, nc_put_var_double(f.ncid, v_x, axis), "writing variable", "x")) {
            for (size_t j = 0; j < ny; j++)
                axis[j] = sw_grid_yc(g, j);
            wx_ok(&f, nc_put_var_double(f.ncid, v_y, axis), "writing variable", "y");
        }
        double h = 10.0;
        if (f.rc == SW_OK && wx_ok(&f, nc_put_var_double(f.ncid, v_h, &h), "writing variable", "height"))
            wx_ok(&f, nc_put_var_double(f.ncid, v_t, times_s), "writing variable", "time");
    }
    float *slab[WX_NVARS] = {buf, buf ? buf + cells : NULL, buf ? buf + 2 * cells : NULL};
    static const char *const what[WX_NVARS] = {"eastward wind", "northward wind", "air pressure"};
    for (size_t k = 0; k < n_times && f.rc == SW_OK; k++) {
        sw_status fs = fill(ctx, k, times_s[k], g, slab[WX_P], slab[WX_U], slab[WX_V], err);
        if (fs != SW_OK) {
            f.rc = fs;
            if (err && err->code == SW_OK)
                sw_fail(err, fs, "%s: the fill function failed on slab %zu", f.af.path, k);
            break;
        }
        for (int q = 0; q < WX_NVARS && f.rc == SW_OK; q++)
            for (size_t m = 0; m < cells; m++)
                if (!isfinite(slab[q][m])) {
                    f.rc = sw_fail(err, SW_ERR_RANGE, "%s: the %s of slab %zu (t = %g s) is not finite at [%zu][%zu] "
                                   "(j, i)", f.af.path, what[q], k, times_s[k], m / nx, m % nx);
                    break;
                }
        size_t start[3] = {k, 0, 0}, count[3] = {1, ny, nx};
        for (int q = 0; q < WX_NVARS && f.rc == SW_OK; q++)
            wx_ok(&f, nc_put_vara_float(f.ncid, v_var[q], start, count, slab[q]), "writing a slab of",
                  q == WX_U ? "eastward_wind_10m" : q == WX_V ? "northward_wind_10m" : "air_pressure_msl");
    }
    free(axis);
    free(buf);

    rc = nc_close(f.ncid);
    f.is_open = 0;
    wx_ok(&f, rc, "closing", NULL);
    if (f.rc == SW_OK)
        return sw_atomic_commit(&f.af, err);
    sw_atomic_discard(&f.af);
    return f.rc;
}
