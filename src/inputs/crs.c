/* crs.c - the CF grid mapping of a NetCDF input variable (see crs.h).
 *
 * Invariant: sw_crs_read opens the file and closes it on every path before it returns, and on any
 * failure leaves *out empty and owning nothing. Messages start with "PATH: variable 'VAR'".
 */
#include "inputs/crs.h"

#include <ctype.h>
#include <netcdf.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/isolate.h"
#include "inputs/ncattr.h"

/* CF Conventions 1.11, appendix F "Grid Mappings": every grid_mapping_name it defines. */
static const char *const CRS_CF_NAMES[] = {
    "albers_conical_equal_area", "azimuthal_equidistant", "geostationary", "lambert_azimuthal_equal_area",
    "lambert_conformal_conic", "lambert_cylindrical_equal_area", "latitude_longitude", "mercator",
    "oblique_mercator", "orthographic", "polar_stereographic", "rotated_latitude_longitude", "sinusoidal",
    "stereographic", "transverse_mercator", "vertical_perspective",
};
#define CRS_N_CF_NAMES (sizeof CRS_CF_NAMES / sizeof CRS_CF_NAMES[0])

/* The same list as one line for messages (kept equal to CRS_CF_NAMES; test_ncwrite checks each). */
static const char CRS_CF_LIST[] =
    "albers_conical_equal_area, azimuthal_equidistant, geostationary, lambert_azimuthal_equal_area, "
    "lambert_conformal_conic, lambert_cylindrical_equal_area, latitude_longitude, mercator, oblique_mercator, "
    "orthographic, polar_stereographic, rotated_latitude_longitude, sinusoidal, stereographic, "
    "transverse_mercator, vertical_perspective";

int sw_crs_is_cf_mapping(const char *name)
{
    if (!name)
        return 0;
    for (size_t k = 0; k < CRS_N_CF_NAMES; k++)
        if (strcmp(name, CRS_CF_NAMES[k]) == 0)
            return 1;
    return 0;
}

const char *sw_crs_cf_names(void)
{
    return CRS_CF_LIST;
}

int sw_crs_present(const sw_crs *crs)
{
    return crs && crs->variable[0] != '\0';
}

const sw_crs_att *sw_crs_find(const sw_crs *crs, const char *name)
{
    if (!crs || !name)
        return NULL;
    for (size_t k = 0; k < crs->n_atts; k++)
        if (strcmp(crs->atts[k].name, name) == 0)
            return &crs->atts[k];
    return NULL;
}

void sw_crs_free(sw_crs *crs)
{
    if (!crs)
        return;
    for (size_t k = 0; k < crs->n_atts; k++) {
        free(crs->atts[k].text);
        free(crs->atts[k].values);
    }
    free(crs->atts);
    memset(crs, 0, sizeof *crs);
}

/* A library failure as a status: a system error (rc > 0, e.g. a missing file) is SW_ERR_IO, anything
 * else SW_ERR_NETCDF. */
static sw_status crs_lib_fail(const char *path, const char *var, int rc, const char *what, sw_error *err)
{
    return sw_fail(err, rc > 0 ? SW_ERR_IO : SW_ERR_NETCDF, "%s: variable '%s': %s: %s", path, var, what,
                   nc_strerror(rc));
}

/* Reads attribute number k of varid into *a. Returns NC_NOERR, NC_ENOMEM, or the library's status;
 * *a owns what it holds even on failure (the caller frees it). Types other than text and numbers
 * (user-defined) are NC_EBADTYPE. */
static int crs_read_att(int ncid, int varid, int k, sw_crs_att *a)
{
    int rc = nc_inq_attname(ncid, varid, k, a->name);
    nc_type type;
    size_t len;
    if (rc == NC_NOERR)
        rc = nc_inq_att(ncid, varid, a->name, &type, &len);
    if (rc != NC_NOERR)
        return rc;
    if (type == NC_CHAR || type == NC_STRING) {
        /* NC_CHAR as written (trailing NULs some writers count are dropped); NC_STRING: its first string */
        a->type = SW_CRS_TEXT;
        if (type == NC_CHAR) {
            a->text = malloc(len + 1);
            if (!a->text)
                return NC_ENOMEM;
            if (len > 0 && (rc = nc_get_att_text(ncid, varid, a->name, a->text)) != NC_NOERR)
                return rc;
            a->text[len] = '\0';
        } else {
            char **strs = calloc(len ? len : 1, sizeof *strs);
            if (!strs)
                return NC_ENOMEM;
            rc = len ? nc_get_att_string(ncid, varid, a->name, strs) : NC_NOERR;
            if (rc == NC_NOERR) {
                const char *s = len && strs[0] ? strs[0] : "";
                a->text = malloc(strlen(s) + 1);
                if (a->text)
                    memcpy(a->text, s, strlen(s) + 1);
                else
                    rc = NC_ENOMEM;
                if (len)
                    nc_free_string(len, strs);
            }
            free(strs);
            if (rc != NC_NOERR)
                return rc;
        }
        a->count = strlen(a->text);
        return NC_NOERR;
    }
    if (type < NC_BYTE || type > NC_UINT64 || len == 0)
        return NC_EBADTYPE;
    a->type = SW_CRS_NUMBERS;
    a->values = malloc(len * sizeof *a->values);
    if (!a->values)
        return NC_ENOMEM;
    a->count = len;
    return nc_get_att_double(ncid, varid, a->name, a->values);   /* the library converts every numeric type */
}

/* Reads every attribute of the mapping variable mvar (id mid) into out (n_atts, atts; names starting
 * with '_' left out). On failure returns the status with err filled; out->atts may hold a part,
 * which the caller frees. */
static sw_status crs_read_atts(const char *path, int ncid, int mid, const char *mvar, sw_crs *out, sw_error *err)
{
    int natts = 0;
    int rc = nc_inq_varnatts(ncid, mid, &natts);
    if (rc != NC_NOERR)
        return crs_lib_fail(path, mvar, rc, "listing attributes", err);
    if (natts <= 0)
        return SW_OK;
    out->atts = calloc((size_t)natts, sizeof *out->atts);
    if (!out->atts)
        return sw_fail(err, SW_ERR_NOMEM, "%s: variable '%s': out of memory for %d attributes", path, mvar, natts);
    for (int k = 0; k < natts; k++) {
        sw_crs_att *a = &out->atts[out->n_atts];
        out->n_atts++;   /* counted first, so that a failure frees what it holds */
        rc = crs_read_att(ncid, mid, k, a);
        if (rc == NC_EBADTYPE)
            return sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': attribute '%s' is neither text nor numbers "
                           "(accepted: CF grid mapping attributes, text or numbers)", path, mvar, a->name);
        if (rc == NC_ENOMEM)
            return sw_fail(err, SW_ERR_NOMEM, "%s: variable '%s': out of memory reading attribute '%s'", path,
                           mvar, a->name);
        if (rc != NC_NOERR)
            return crs_lib_fail(path, mvar, rc, "reading an attribute", err);
        if (a->name[0] == '_') {   /* storage, not the CRS: forget it */
            free(a->text);
            free(a->values);
            memset(a, 0, sizeof *a);
            out->n_atts--;
        }
    }
    return SW_OK;
}

/* Takes the first mapping variable's name out of a grid_mapping attribute: the whole text in the
 * simple form ("crs"), the word before the first ':' in the extended form ("crs: x y ..."). Writes
 * "" when there is none. */
static void crs_first_mapping(const char *att, char *out, size_t n)
{
    while (*att && isspace((unsigned char)*att))
        att++;
    size_t len = 0;
    while (att[len] && !isspace((unsigned char)att[len]) && att[len] != ':')
        len++;
    if (len >= n)
        len = n - 1;
    memcpy(out, att, len);
    out[len] = '\0';
}

/* The arguments of sw_crs_read probed in an isolated child (base/isolate.h). */
typedef struct {
    const char *path, *variable;
    sw_crs *out;
} crs_probe_args;

/* The child's reader: sw_crs_read itself, its output in the child's copy (freed there). */
static sw_status crs_probe(void *ctx, sw_error *err)
{
    const crs_probe_args *a = ctx;
    sw_status st = sw_crs_read(a->path, a->variable, a->out, err);
    if (st == SW_OK)
        sw_crs_free(a->out);
    return st;
}

sw_status sw_crs_read(const char *path, const char *variable, sw_crs *out, sw_error *err)
{
    if (!out)
        return sw_fail(err, SW_ERR_USAGE, "crs: nowhere to put the result");
    memset(out, 0, sizeof *out);
    if (!path || !*path || !variable || !*variable)
        return sw_fail(err, SW_ERR_USAGE, "crs: no file or variable given");
    if (!sw_isolate_in_child()) {
        char key[512];
        snprintf(key, sizeof key, "crs '%s'", variable);
        crs_probe_args probe = {path, variable, out};
        sw_status pst = sw_isolate_file(path, key, crs_probe, &probe, err);
        if (pst != SW_OK)
            return pst;
    }

    int ncid, rc = nc_open(path, NC_NOWRITE, &ncid);
    if (rc != NC_NOERR)
        return crs_lib_fail(path, variable, rc, "cannot open the file", err);

    sw_status st = SW_OK;
    char list[512];
    int vid, mid = -1;
    char gm[1024];
    int found = 0;
    if ((rc = nc_inq_varid(ncid, variable, &vid)) != NC_NOERR) {
        sw_nc_list_vars(ncid, -1, list, sizeof list);
        st = rc == NC_ENOTVAR
            ? sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' not found (variables: %s)", path, variable, list)
            : crs_lib_fail(path, variable, rc, "looking it up", err);
    } else if ((rc = sw_nc_text_att(ncid, vid, "grid_mapping", gm, sizeof gm, &found)) != NC_NOERR) {
        st = rc == NC_ENOMEM ? sw_fail(err, SW_ERR_NOMEM, "%s: variable '%s': out of memory", path, variable)
                             : crs_lib_fail(path, variable, rc, "reading grid_mapping", err);
    } else if (!found) {
        nc_close(ncid);
        return SW_OK;   /* no grid mapping: no CRS */
    } else if (strcmp(gm, "(not text)") == 0) {
        st = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': grid_mapping is not text (accepted: the name of the "
                     "grid mapping variable, CF 1.11 section 5.6)", path, variable);
    } else {
        crs_first_mapping(gm, out->variable, sizeof out->variable);
        if (!out->variable[0] || (rc = nc_inq_varid(ncid, out->variable, &mid)) == NC_ENOTVAR) {
            sw_nc_list_vars(ncid, 0, list, sizeof list);
            st = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s': grid_mapping '%s' names no variable of the file "
                         "(accepted: the name of a grid mapping variable; scalar variables: %s)", path, variable,
                         gm, list[0] ? list : "none");
        } else if (rc != NC_NOERR) {
            st = crs_lib_fail(path, out->variable, rc, "looking up the grid mapping variable", err);
        }
    }
    if (st == SW_OK)
        st = crs_read_atts(path, ncid, mid, out->variable, out, err);
    nc_close(ncid);

    if (st == SW_OK) {
        const sw_crs_att *name = sw_crs_find(out, "grid_mapping_name");
        const sw_crs_att *wkt = sw_crs_find(out, "crs_wkt");
        const sw_crs_att *sref = sw_crs_find(out, "spatial_ref");
        int has_wkt = (wkt && wkt->type == SW_CRS_TEXT && wkt->count > 0) ||
                      (sref && sref->type == SW_CRS_TEXT && sref->count > 0);
        if (name && name->type != SW_CRS_TEXT)
            st = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' (the grid_mapping of '%s'): grid_mapping_name is not "
                         "text (accepted: %s)", path, out->variable, variable, CRS_CF_LIST);
        else if (name && !sw_crs_is_cf_mapping(name->text))
            st = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' (the grid_mapping of '%s'): grid_mapping_name '%.200s' "
                         "is not a CF grid mapping (accepted: %s)", path, out->variable, variable, name->text,
                         CRS_CF_LIST);
        else if (!name && !has_wkt)
            st = sw_fail(err, SW_ERR_INPUT, "%s: variable '%s' (the grid_mapping of '%s') has no grid_mapping_name "
                         "(accepted: %s; or a crs_wkt or spatial_ref text)", path, out->variable, variable,
                         CRS_CF_LIST);
        else if (name)
            snprintf(out->mapping_name, sizeof out->mapping_name, "%s", name->text);
    }
    if (st != SW_OK)
        sw_crs_free(out);
    return st;
}

int sw_crs_define(int ncid, const char *name, const sw_grid *g, const sw_crs *crs, int *varid, const char **what)
{
    *varid = -1;
    *what = "defining variable crs";
    const int geo = g && sw_grid_geographic(g);
    if (!geo && !sw_crs_present(crs))
        return NC_NOERR;
    int id, rc = nc_def_var(ncid, name, NC_INT, 0, NULL, &id);
    if (rc != NC_NOERR)
        return rc;
    if (geo) {
        static const char long_name[] = "longitude and latitude on the model's sphere (radius semi_major_axis, m)";
        const double zero = 0.0;
        if ((rc = nc_put_att_text(ncid, id, *what = "grid_mapping_name", 18, "latitude_longitude")) != NC_NOERR
            || (rc = nc_put_att_double(ncid, id, *what = "semi_major_axis", NC_DOUBLE, 1, &g->radius_m)) != NC_NOERR
            || (rc = nc_put_att_double(ncid, id, *what = "inverse_flattening", NC_DOUBLE, 1, &zero)) != NC_NOERR
            || (rc = nc_put_att_double(ncid, id, *what = "longitude_of_prime_meridian", NC_DOUBLE, 1, &zero)) != NC_NOERR
            || (rc = nc_put_att_text(ncid, id, *what = "long_name", sizeof long_name - 1, long_name)) != NC_NOERR)
            return rc;
    } else {
        for (size_t k = 0; k < crs->n_atts; k++) {
            const sw_crs_att *a = &crs->atts[k];
            *what = a->name;
            rc = a->type == SW_CRS_TEXT ? nc_put_att_text(ncid, id, a->name, strlen(a->text), a->text)
                                        : nc_put_att_double(ncid, id, a->name, NC_DOUBLE, a->count, a->values);
            if (rc != NC_NOERR)
                return rc;
        }
    }
    *varid = id;
    return NC_NOERR;
}
