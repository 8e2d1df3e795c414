/* ncattr.c - text, number and missing-value attributes of NetCDF variables, and variable lists (see ncattr.h). */
#include "inputs/ncattr.h"

#include <ctype.h>
#include <netcdf.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

int sw_nc_text_att(int ncid, int varid, const char *name, char *buf, size_t n, int *found)
{
    nc_type type;
    size_t len;
    *found = 0;
    buf[0] = '\0';
    int rc = nc_inq_att(ncid, varid, name, &type, &len);
    if (rc == NC_ENOTATT)
        return NC_NOERR;
    if (rc != NC_NOERR)
        return rc;
    *found = 1;
    if (type == NC_CHAR) {
        char *tmp = malloc(len + 1);
        if (!tmp)
            return NC_ENOMEM;
        rc = nc_get_att_text(ncid, varid, name, tmp);
        if (rc == NC_NOERR) {
            tmp[len] = '\0';
            snprintf(buf, n, "%s", tmp);
        }
        free(tmp);
    } else if (type == NC_STRING && len >= 1) {
        char **strs = calloc(len, sizeof *strs);
        if (!strs)
            return NC_ENOMEM;
        rc = nc_get_att_string(ncid, varid, name, strs);
        if (rc == NC_NOERR) {
            snprintf(buf, n, "%s", strs[0] ? strs[0] : "");
            nc_free_string(len, strs);
        }
        free(strs);
    } else {
        snprintf(buf, n, "(not text)");
    }
    if (rc != NC_NOERR)
        return rc;
    /* trim blanks (and trailing NULs some writers include in the length) */
    size_t end = strlen(buf), start = 0;
    while (end > 0 && isspace((unsigned char)buf[end - 1]))
        buf[--end] = '\0';
    while (buf[start] && isspace((unsigned char)buf[start]))
        start++;
    memmove(buf, buf + start, end - start + 1);
    return NC_NOERR;
}

int sw_nc_num_att(int ncid, int varid, const char *name, double *out)
{
    nc_type t;
    size_t len;
    int rc = nc_inq_att(ncid, varid, name, &t, &len);
    if (rc == NC_ENOTATT)
        return NC_NOERR;
    if (rc != NC_NOERR)
        return rc;
    if (len != 1 || t == NC_CHAR || t == NC_STRING)
        return NC_EBADTYPE;
    return nc_get_att_double(ncid, varid, name, out);
}

int sw_nc_default_fill(int type, double *fill)
{
    switch (type) {
    case NC_SHORT: *fill = NC_FILL_SHORT; return 1;
    case NC_USHORT: *fill = NC_FILL_USHORT; return 1;
    case NC_INT: *fill = NC_FILL_INT; return 1;
    case NC_UINT: *fill = NC_FILL_UINT; return 1;
    case NC_INT64: *fill = (double)NC_FILL_INT64; return 1;
    case NC_UINT64: *fill = (double)NC_FILL_UINT64; return 1;
    case NC_FLOAT: *fill = NC_FILL_FLOAT; return 1;
    case NC_DOUBLE: *fill = NC_FILL_DOUBLE; return 1;
    default: return 0;
    }
}

void sw_nc_missing_free(sw_nc_missing *m)
{
    if (!m)
        return;
    free(m->value);
    m->value = NULL;
    m->count = 0;
    m->fill = 0;
}

/* Empties *out after a failure while reading attribute `att`; returns rc. */
static int ncattr_missing_fail(sw_nc_missing *out, const char *att, int rc)
{
    sw_nc_missing_free(out);
    out->failed = att;
    return rc;
}

int sw_nc_missing_read(int ncid, int varid, sw_nc_missing *out)
{
    out->value = NULL;
    out->count = 0;
    out->fill = 0;
    out->failed = NULL;
    nc_type vtype, t;
    size_t nmiss = 0, len;
    int rc = nc_inq_vartype(ncid, varid, &vtype);
    if (rc != NC_NOERR)
        return ncattr_missing_fail(out, "_FillValue", rc);
    rc = nc_inq_att(ncid, varid, "missing_value", &t, &nmiss);
    if (rc == NC_ENOTATT || (rc == NC_NOERR && (t == NC_CHAR || t == NC_STRING)))
        nmiss = 0;
    else if (rc != NC_NOERR)
        return ncattr_missing_fail(out, "missing_value", rc);
    double *v = malloc((nmiss + 1) * sizeof *v);
    if (!v)
        return ncattr_missing_fail(out, nmiss ? "missing_value" : "_FillValue", NC_ENOMEM);
    out->value = v;

    rc = nc_inq_att(ncid, varid, "_FillValue", &t, &len);
    if (rc == NC_NOERR && len == 1 && t != NC_CHAR && t != NC_STRING) {
        rc = nc_get_att_double(ncid, varid, "_FillValue", &v[0]);
        if (rc != NC_NOERR)
            return ncattr_missing_fail(out, "_FillValue", rc);
        out->fill = 1;
        out->count = 1;
    } else if (rc == NC_ENOTATT || rc == NC_NOERR) {
        if (sw_nc_default_fill(vtype, &v[0])) {   /* the library's default fill, for never-written points */
            out->fill = 2;
            out->count = 1;
        }
    } else {
        return ncattr_missing_fail(out, "_FillValue", rc);
    }
    if (nmiss > 0) {
        rc = nc_get_att_double(ncid, varid, "missing_value", v + out->count);
        if (rc != NC_NOERR)
            return ncattr_missing_fail(out, "missing_value", rc);
        out->count += nmiss;
    }
    return NC_NOERR;
}

void sw_nc_list_vars(int ncid, int nd, char *buf, size_t n)
{
    buf[0] = '\0';
    int nvars = 0;
    if (nc_inq_nvars(ncid, &nvars) != NC_NOERR)
        return;
    size_t used = 0;
    for (int v = 0; v < nvars; v++) {
        int vnd = 0;
        char name[NC_MAX_NAME + 1];
        if ((nd >= 0 && (nc_inq_varndims(ncid, v, &vnd) != NC_NOERR || vnd != nd)) ||
            nc_inq_varname(ncid, v, name) != NC_NOERR)
            continue;
        int w = snprintf(buf + used, n - used, "%s%s", used ? ", " : "", name);
        if (w < 0 || (size_t)w >= n - used)
            break;   /* the list is cut at the last name that fits */
        used += (size_t)w;
    }
    buf[used] = '\0';
}
