/* series.c - a sea-level time series from a text table or a NetCDF file (see series.h).
 *
 * Invariant: a loaded series has n >= 2 finite values at strictly increasing, finite times in seconds
 * since the scenario's time origin; sw_series_at therefore never fails.
 *
 * NetCDF reading: every function that opens the file closes it on every path before it returns, and
 * every message starts with "PATH: " (then, where one is involved, "variable 'NAME'").
 */
#include "forcing/series.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <netcdf.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/civil_time.h"
#include "base/isolate.h"
#include "inputs/ncattr.h"
#include "inputs/table_text.h"

struct sw_series {
    char *path;       /* the file as given, for messages */
    size_t n;         /* values, >= 2 */
    double *t_s;      /* n times, s since the scenario's origin, strictly increasing */
    double *eta_m;    /* n sea levels, m */
};

/* Case-insensitive equality of two ASCII strings. */
static int ser_same_word(const char *a, const char *b)
{
    for (; *a && *b; a++, b++)
        if (tolower((unsigned char)*a) != tolower((unsigned char)*b))
            return 0;
    return *a == *b;
}

/* ---- the series ------------------------------------------------------------------------------- */

void sw_series_free(sw_series *s)
{
    if (!s)
        return;
    free(s->path);
    free(s->t_s);   /* one block holds t_s and eta_m */
    free(s);
}

/* A new series of n values for path, arrays allocated, or NULL when memory runs out. */
static sw_series *ser_new(const char *path, size_t n)
{
    sw_series *s = calloc(1, sizeof *s);
    if (!s)
        return NULL;
    size_t len = strlen(path) + 1;
    s->path = malloc(len);
    s->t_s = n <= SIZE_MAX / (2 * sizeof(double)) ? malloc(2 * n * sizeof(double)) : NULL;
    if (!s->path || !s->t_s) {
        sw_series_free(s);
        return NULL;
    }
    memcpy(s->path, path, len);
    s->eta_m = s->t_s + n;
    s->n = n;
    return s;
}

enum { S_TIME, S_ELEV, S_COUNT };

/* Factors: SI Brochure (BIPM, 9th ed., 2019): min = 60 s, h = 3600 s, d = 86400 s, cm = 1e-2 m. */
static const sw_table_unit S_T_UNITS[] = {{"s", 1.0}, {"min", 60.0}, {"h", 3600.0}, {"d", 86400.0}, {NULL, 0.0}};
static const sw_table_unit S_E_UNITS[] = {{"m", 1.0}, {"cm", 1e-2}, {NULL, 0.0}};
static const sw_table_column SERIES_COLUMNS[S_COUNT] = {
    [S_TIME] = {"time", S_T_UNITS, 1, 0},
    [S_ELEV] = {"elevation", S_E_UNITS, 1, 0},
};

static sw_status ser_load_text(const char *path, sw_series **out, sw_error *err)
{
    sw_table t;
    sw_status st = sw_table_read(path, SERIES_COLUMNS, S_COUNT, &t, err);
    if (st != SW_OK)
        return st;
    if (t.n_rows < 2) {
        st = sw_fail(err, SW_ERR_PARSE, "%s:%zu: the series has 1 value; at least 2 are needed", path, t.line[0]);
        sw_table_free(&t);
        return st;
    }
    sw_series *s = ser_new(path, t.n_rows);
    if (!s) {
        sw_table_free(&t);
        return sw_fail(err, SW_ERR_NOMEM, "%s: out of memory for the series", path);
    }
    const sw_table_colinfo *ct = &t.col[S_TIME];
    for (size_t r = 0; r < t.n_rows; r++) {
        s->t_s[r] = sw_table_at(&t, r, S_TIME);
        s->eta_m[r] = sw_table_at(&t, r, S_ELEV);
        if (r > 0 && !(s->t_s[r] > s->t_s[r - 1])) {
            st = sw_fail(err, SW_ERR_PARSE, "%s:%zu: time %.10g %s is not after the previous value's %.10g %s "
                         "(line %zu): times must increase strictly", path, t.line[r], s->t_s[r] / ct->factor,
                         ct->unit, s->t_s[r - 1] / ct->factor, ct->unit, t.line[r - 1]);
            sw_series_free(s);
            sw_table_free(&t);
            return st;
        }
    }
    sw_table_free(&t);
    *out = s;
    return SW_OK;
}

/* ---- NetCDF ----------------------------------------------------------------------------------- */

/* Records a NetCDF library failure: a system error (rc > 0, e.g. a missing file) is SW_ERR_IO, anything
 * else SW_ERR_NETCDF. */
static sw_status ser_nc_fail(const char *path, int rc, const char *what, sw_error *err)
{
    return sw_fail(err, rc > 0 ? SW_ERR_IO : SW_ERR_NETCDF, "%s: %s: %s", path, what, nc_strerror(rc));
}

/* Finds the variable: by name, or the one with the sea-level standard_name. Returns SW_OK and *varid. */
static sw_status ser_find_var(const char *path, int ncid, const char *name, int *varid, char *found_name,
                              sw_error *err)
{
    char have[512];
    if (name && *name) {
        int rc = nc_inq_varid(ncid, name, varid);
        if (rc == NC_ENOTVAR) {
            sw_nc_list_vars(ncid, 1, have, sizeof have);
            return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' not found in the file (1D variables: %s)", path,
                           name, have[0] ? have : "none");
        }
        if (rc != NC_NOERR)
            return ser_nc_fail(path, rc, "looking up the variable", err);
        snprintf(found_name, NC_MAX_NAME + 1, "%s", name);
        return SW_OK;
    }
    int nvars = 0, rc = nc_inq_nvars(ncid, &nvars);
    if (rc != NC_NOERR)
        return ser_nc_fail(path, rc, "listing its variables", err);
    int count = 0;
    size_t used = 0;
    char matches[512];
    matches[0] = '\0';
    for (int v = 0; v < nvars; v++) {
        char sn[128];
        int found;
        rc = sw_nc_text_att(ncid, v, "standard_name", sn, sizeof sn, &found);
        if (rc != NC_NOERR)
            return ser_nc_fail(path, rc, "reading a standard_name attribute", err);
        if (!found || strcmp(sn, SW_SEA_LEVEL_STANDARD_NAME) != 0)
            continue;
        char vn[NC_MAX_NAME + 1];
        rc = nc_inq_varname(ncid, v, vn);
        if (rc != NC_NOERR)
            return ser_nc_fail(path, rc, "reading a variable name", err);
        if (count++ == 0) {
            *varid = v;
            snprintf(found_name, NC_MAX_NAME + 1, "%s", vn);
        }
        int w = snprintf(matches + used, sizeof matches - used, "%s%s", used ? ", " : "", vn);
        if (w > 0 && (size_t)w < sizeof matches - used)
            used += (size_t)w;
    }
    if (count == 1)
        return SW_OK;
    if (count == 0) {
        sw_nc_list_vars(ncid, 1, have, sizeof have);
        return sw_fail(err, SW_ERR_INPUT, "%s: no variable has standard_name %s: name the variable (1D variables: %s)",
                       path, SW_SEA_LEVEL_STANDARD_NAME, have[0] ? have : "none");
    }
    return sw_fail(err, SW_ERR_INPUT, "%s: %d variables have standard_name %s (%s): name the one to use", path, count,
                   SW_SEA_LEVEL_STANDARD_NAME, matches);
}

/* Reads the 1D variable varid called name (n values) as doubles into v, applying scale_factor /
 * add_offset; a value equal to _FillValue (or the type's default fill) or to a missing_value before
 * unpacking, or not finite after, is an error naming "name[index]". */
static sw_status ser_read_values(const char *path, int ncid, int varid, const char *name, size_t n, double *v,
                                 sw_error *err)
{
    char what[NC_MAX_NAME + 32];
    snprintf(what, sizeof what, "variable '%s'", name);
    nc_type type;
    int rc = nc_inq_vartype(ncid, varid, &type);
    if (rc != NC_NOERR)
        return ser_nc_fail(path, rc, what, err);
    if (type == NC_CHAR || type == NC_STRING)
        return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' holds text, not numbers", path, name);
    rc = nc_get_var_double(ncid, varid, v);
    if (rc != NC_NOERR)
        return ser_nc_fail(path, rc, what, err);

    /* the values that mark a missing point */
    sw_nc_missing miss;
    rc = sw_nc_missing_read(ncid, varid, &miss);
    if (rc != NC_NOERR)
        return ser_nc_fail(path, rc, what, err);
    size_t n_missing_value = miss.count - (miss.fill ? 1 : 0);
    if (n_missing_value > 8) {
        sw_nc_missing_free(&miss);
        return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' has %zu missing_value values (accepted: at most 8)",
                       path, name, n_missing_value);
    }
    double scale = 1.0, offset = 0.0;
    rc = sw_nc_num_att(ncid, varid, "scale_factor", &scale);
    if (rc == NC_NOERR)
        rc = sw_nc_num_att(ncid, varid, "add_offset", &offset);
    if (rc != NC_NOERR) {
        sw_nc_missing_free(&miss);
        return ser_nc_fail(path, rc, what, err);
    }
    for (size_t k = 0; k < n; k++) {
        int bad = !isfinite(v[k]);
        for (size_t m = 0; m < miss.count && !bad; m++)
            bad = v[k] == miss.value[m];
        v[k] = v[k] * scale + offset;
        if (bad || !isfinite(v[k])) {
            sw_nc_missing_free(&miss);
            return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' has a missing or non-finite value at %s[%zu]", path,
                           name, name, k);
        }
    }
    sw_nc_missing_free(&miss);
    return SW_OK;
}

/* Metres per unit of an elevation's units text, 0 if not accepted. */
static double ser_length_unit(const char *u)
{
    static const char *const m[] = {"m", "metre", "metres", "meter", "meters"};
    static const char *const cm[] = {"cm", "centimetre", "centimetres", "centimeter", "centimeters"};
    for (size_t k = 0; k < 5; k++) {
        if (ser_same_word(u, m[k]))
            return 1.0;
        if (ser_same_word(u, cm[k]))
            return 1e-2;
    }
    return 0.0;
}

/* The work of a NetCDF load on the open file ncid. */
static sw_status ser_nc_read(const char *path, int ncid, const char *variable, double origin_s, sw_series **out,
                             sw_error *err)
{
    int varid;
    char name[NC_MAX_NAME + 1];
    sw_status st = ser_find_var(path, ncid, variable, &varid, name, err);
    if (st != SW_OK)
        return st;
    int nd, dimid;
    int rc = nc_inq_varndims(ncid, varid, &nd);
    if (rc != NC_NOERR)
        return ser_nc_fail(path, rc, "reading the variable's dimensions", err);
    if (nd != 1)
        return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' has %d dimensions; it must have exactly 1, time", path,
                       name, nd);
    char dim[NC_MAX_NAME + 1];
    size_t n;
    rc = nc_inq_vardimid(ncid, varid, &dimid);
    if (rc == NC_NOERR)
        rc = nc_inq_dim(ncid, dimid, dim, &n);
    if (rc != NC_NOERR)
        return ser_nc_fail(path, rc, "reading the variable's dimensions", err);
    if (n < 2)
        return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' has %zu value(s); at least 2 are needed", path, name, n);

    /* units of the elevation */
    char units[128];
    int found;
    rc = sw_nc_text_att(ncid, varid, "units", units, sizeof units, &found);
    if (rc != NC_NOERR)
        return ser_nc_fail(path, rc, "reading the variable's units", err);
    if (!found)
        return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' has no units attribute (accepted: m, cm)", path, name);
    double to_m = ser_length_unit(units);
    if (to_m == 0.0)
        return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' has units '%s' (accepted: m, cm)", path, name, units);

    /* the time coordinate */
    int tid;
    rc = nc_inq_varid(ncid, dim, &tid);
    if (rc == NC_ENOTVAR)
        return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': its dimension '%s' has no coordinate variable (a 1D "
                       "variable '%s' with units such as 'hours since 2000-01-01 00:00:00')", path, name, dim, dim);
    if (rc != NC_NOERR)
        return ser_nc_fail(path, rc, "looking up the time coordinate", err);
    int tnd, tdim;
    rc = nc_inq_varndims(ncid, tid, &tnd);
    if (rc == NC_NOERR && tnd == 1)
        rc = nc_inq_vardimid(ncid, tid, &tdim);
    if (rc != NC_NOERR)
        return ser_nc_fail(path, rc, "reading the time coordinate", err);
    if (tnd != 1 || tdim != dimid)
        return sw_fail(err, SW_ERR_INPUT, "%s: coordinate variable '%s' must be 1D along dimension '%s'", path, dim,
                       dim);
    rc = sw_nc_text_att(ncid, tid, "units", units, sizeof units, &found);
    if (rc != NC_NOERR)
        return ser_nc_fail(path, rc, "reading the time units", err);
    if (!found)
        return sw_fail(err, SW_ERR_INPUT, "%s: time coordinate '%s' has no units attribute (accepted: 'UNIT since "
                       "DATE', e.g. 'hours since 2000-01-01 00:00:00')", path, dim);
    double unit_s, file_origin_s;
    sw_civil_time file_origin;
    char why[256];
    if (sw_time_units_parse(units, &unit_s, &file_origin_s, &file_origin, why, sizeof why) != 0)
        return sw_fail(err, SW_ERR_INPUT, "%s: time coordinate '%s': %s", path, dim, why);
    char cal[64];
    rc = sw_nc_text_att(ncid, tid, "calendar", cal, sizeof cal, &found);
    if (rc != NC_NOERR)
        return ser_nc_fail(path, rc, "reading the calendar", err);
    if (found) {
        int proleptic = ser_same_word(cal, "proleptic_gregorian");
        if (!proleptic && !ser_same_word(cal, "standard") && !ser_same_word(cal, "gregorian"))
            return sw_fail(err, SW_ERR_INPUT, "%s: time coordinate '%s' has calendar '%s' (accepted: standard, "
                           "gregorian, proleptic_gregorian)", path, dim, cal);
        /* the mixed Julian/Gregorian calendar agrees with ours from 1582-10-15 on */
        if (!proleptic && sw_days_from_civil(file_origin.year, file_origin.month, file_origin.day) <
                              sw_days_from_civil(1582, 10, 15))
            return sw_fail(err, SW_ERR_INPUT, "%s: time coordinate '%s': an origin before 1582-10-15 in the '%s' "
                           "calendar is not supported (use proleptic_gregorian)", path, dim, cal);
    }

    sw_series *s = ser_new(path, n);
    if (!s)
        return sw_fail(err, SW_ERR_NOMEM, "%s: out of memory for the series", path);
    st = ser_read_values(path, ncid, tid, dim, n, s->t_s, err);
    if (st == SW_OK)
        st = ser_read_values(path, ncid, varid, name, n, s->eta_m, err);
    if (st != SW_OK) {
        sw_series_free(s);
        return st;
    }
    double shift = file_origin_s - origin_s;
    for (size_t k = 0; k < n; k++) {
        s->t_s[k] = s->t_s[k] * unit_s + shift;
        s->eta_m[k] *= to_m;
        if (k > 0 && !(s->t_s[k] > s->t_s[k - 1])) {
            st = sw_fail(err, SW_ERR_INPUT, "%s: time coordinate '%s' is not strictly increasing: %s[%zu] is %.10g s "
                         "after the time origin, %s[%zu] %.10g s", path, dim, dim, k, s->t_s[k], dim, k - 1,
                         s->t_s[k - 1]);
            sw_series_free(s);
            return st;
        }
    }
    *out = s;
    return SW_OK;
}

/* 1 if the first bytes of the file are those of a NetCDF file (classic CDF1/2/5 or HDF5), 0 if not,
 * -1 if the file cannot be opened (recorded in err). */
static int ser_is_netcdf(const char *path, sw_error *err)
{
    FILE *f = fopen(path, "rb");
    if (!f) {
        sw_fail(err, SW_ERR_IO, "%s: cannot open: %s", path, strerror(errno));
        return -1;
    }
    unsigned char b[8] = {0};
    size_t got = fread(b, 1, sizeof b, f);
    fclose(f);
    if (got >= 4 && b[0] == 'C' && b[1] == 'D' && b[2] == 'F' && (b[3] == 1 || b[3] == 2 || b[3] == 5))
        return 1;
    static const unsigned char hdf5[8] = {0x89, 'H', 'D', 'F', '\r', '\n', 0x1a, '\n'};
    return got == 8 && memcmp(b, hdf5, 8) == 0;
}

/* The arguments of sw_series_load probed in an isolated child (base/isolate.h). */
typedef struct {
    const char *path, *variable, *origin;
} ser_probe_args;

/* The child's reader: sw_series_load itself; the series it makes is freed there. */
static sw_status ser_probe(void *ctx, sw_error *err)
{
    const ser_probe_args *a = ctx;
    sw_series *s = NULL;
    sw_status st = sw_series_load(a->path, a->variable, a->origin, &s, err);
    sw_series_free(s);
    return st;
}

sw_status sw_series_load(const char *path, const char *variable_or_null, const char *origin, sw_series **out,
                         sw_error *err)
{
    if (!out)
        return sw_fail(err, SW_ERR_USAGE, "sw_series_load: no output");
    *out = NULL;
    if (!path)
        return sw_fail(err, SW_ERR_USAGE, "sw_series_load: no file given");
    int nc = ser_is_netcdf(path, err);
    if (nc < 0)
        return SW_ERR_IO;
    if (!nc)
        return ser_load_text(path, out, err);

    double origin_s;
    char why[256];
    if (!origin || sw_datetime_parse(origin, &origin_s, why, sizeof why) != 0)
        return sw_fail(err, SW_ERR_USAGE, "%s: the scenario's time origin: %s", path, origin ? why : "none given");
    if (!sw_isolate_in_child()) {
        char key[512];
        snprintf(key, sizeof key, "series '%s'", variable_or_null ? variable_or_null : "");
        ser_probe_args probe = {path, variable_or_null, origin};
        sw_status pst = sw_isolate_file(path, key, ser_probe, &probe, err);
        if (pst != SW_OK)
            return pst;
    }
    int ncid;
    int rc = nc_open(path, NC_NOWRITE, &ncid);
    if (rc != NC_NOERR)
        return ser_nc_fail(path, rc, "cannot open", err);
    sw_status st = ser_nc_read(path, ncid, variable_or_null, origin_s, out, err);
    nc_close(ncid);
    return st;
}

size_t sw_series_count(const sw_series *s) { return s->n; }

double sw_series_t_first(const sw_series *s) { return s->t_s[0]; }

double sw_series_t_last(const sw_series *s) { return s->t_s[s->n - 1]; }

sw_status sw_series_covers(const sw_series *s, double t0_s, double t1_s, sw_error *err)
{
    return sw_table_covers(s->path, "series", "values", sw_series_t_first(s), sw_series_t_last(s), t0_s, t1_s, err);
}

double sw_series_at(const sw_series *s, double t_s)
{
    const double *t = s->t_s;
    size_t n = s->n;
    if (!(t_s > t[0]))   /* before the start, or NaN */
        return s->eta_m[0];
    if (t_s >= t[n - 1])
        return s->eta_m[n - 1];
    size_t lo = 0, hi = n - 1;   /* t[lo] < t_s < t[hi] */
    while (hi - lo > 1) {
        size_t mid = lo + (hi - lo) / 2;
        if (t[mid] <= t_s)
            lo = mid;
        else
            hi = mid;
    }
    double w = (t_s - t[lo]) / (t[hi] - t[lo]);
    return s->eta_m[lo] + w * (s->eta_m[hi] - s->eta_m[lo]);
}
