/* crs.h - the coordinate reference system of a NetCDF input variable (its CF grid mapping), read so
 * that the outputs can carry it on unchanged.
 *
 * CF 1.11 section 5.6: a data variable names its grid mapping variable in its `grid_mapping` attribute;
 * that variable's attributes describe the coordinate reference: `grid_mapping_name` (one of the CF
 * names, appendix F) with the projection's parameters, and often the whole system as well-known text
 * (`crs_wkt`; GDAL also writes `spatial_ref`) or an EPSG code. sw_crs keeps every attribute of the
 * mapping variable as it was (names, text or numbers), so a writer can copy them all without knowing
 * what they mean.
 */
#ifndef SW_CRS_H
#define SW_CRS_H

#include <stddef.h>

#include "base/grid.h"
#include "base/status.h"

#define SW_CRS_NAME_MAX 257   /* longest NetCDF name (NC_MAX_NAME, 256) and its NUL */

/* How an attribute's value is held. */
typedef enum {
    SW_CRS_TEXT = 0,    /* text (NC_CHAR, or the first string of an NC_STRING attribute) */
    SW_CRS_NUMBERS = 1  /* one or more numbers of any numeric NetCDF type, held as double */
} sw_crs_att_type;

/* One attribute of the mapping variable. */
typedef struct {
    char name[SW_CRS_NAME_MAX]; /* attribute name, e.g. "grid_mapping_name", "crs_wkt", "false_easting" */
    sw_crs_att_type type;       /* text or numbers */
    char *text;                 /* SW_CRS_TEXT: the value, NUL-terminated (owned); NULL for numbers */
    double *values;             /* SW_CRS_NUMBERS: [count] values (owned; a float's value exactly as
                                 * double, integers as double); NULL for text */
    size_t count;               /* SW_CRS_TEXT: characters before the NUL; SW_CRS_NUMBERS: values (>= 1) */
} sw_crs_att;

/* The grid mapping of one input variable. The zero value (sw_crs c = {0}) is "no CRS". */
typedef struct {
    char variable[SW_CRS_NAME_MAX];     /* the mapping variable's name in the input file; "" = no CRS */
    char mapping_name[SW_CRS_NAME_MAX]; /* its grid_mapping_name (a CF name); "" when the variable gives
                                         * only crs_wkt or spatial_ref */
    size_t n_atts;                      /* attributes kept */
    sw_crs_att *atts;                   /* [n_atts] in the file's order (owned); NULL when n_atts is 0.
                                         * Names starting with '_' (_FillValue and the library's own)
                                         * are left out: they describe storage, not the CRS */
} sw_crs;

/* Reads the grid mapping of variable `variable` in the NetCDF file `path` into *out (which the caller
 * provides; it is overwritten). The variable's `grid_mapping` attribute names the mapping variable; the
 * CF extended form "crs: x y [crs2: lat lon ...]" is accepted and its first mapping taken.
 * No `grid_mapping` attribute: SW_OK with *out empty (out->variable ""). Otherwise the mapping variable
 * must exist and carry a grid_mapping_name that is one of the CF names (sw_crs_cf_names), or, without
 * one, a crs_wkt or spatial_ref text.
 * Returns SW_OK (free *out with sw_crs_free), or on failure, with *out empty and owning nothing:
 *   SW_ERR_IO (the file cannot be opened), SW_ERR_NETCDF (the library failed), SW_ERR_NOMEM,
 *   SW_ERR_INPUT (no such variable, grid_mapping not text, it names no variable of the file, or a
 *   grid_mapping_name that is not a CF one): one line naming the file and the variable, and the
 *   accepted names where they apply; or the isolated reader's SW_ERR_INPUT / SW_ERR_IO /
 *   SW_ERR_INTERRUPTED when the library crashes, hangs or runs out of memory on the file (the first
 *   read of each file and variable runs in a child first: base/isolate.h). */
sw_status sw_crs_read(const char *path, const char *variable, sw_crs *out, sw_error *err);

/* Frees what crs owns and empties it (crs->variable ""). NULL is fine; safe to call twice. */
void sw_crs_free(sw_crs *crs);

/* 1 when crs is not NULL and holds a grid mapping. */
int sw_crs_present(const sw_crs *crs);

/* The attribute called `name` (exact, case-sensitive), or NULL when crs has none. */
const sw_crs_att *sw_crs_find(const sw_crs *crs, const char *name);

/* 1 when name is one of the CF 1.11 grid_mapping_name values (appendix F), else 0. */
int sw_crs_is_cf_mapping(const char *name);

/* The CF grid_mapping_name values, comma-separated, for messages (a static string). */
const char *sw_crs_cf_names(void);

/* Defines, in the open NetCDF file ncid (in define mode), the scalar grid-mapping variable `name` (CF 1.11
 * section 5.6) of a file on grid g: on a geographic grid latitude_longitude on the model's sphere
 * (appendix F: semi_major_axis = g->radius_m, inverse_flattening 0 for a sphere), else a copy of every
 * attribute of crs. The writers of outputs/ncwrite.c and studies/ncsweep.c both call it, so their files
 * describe one coordinate system the same way. *varid receives the variable (-1 when the file gets none:
 * a projected grid without a crs, or a failure). Returns NC_NOERR, or the NetCDF status of the first
 * failure with *what naming what it was doing ("defining variable crs", or the attribute's name). */
int sw_crs_define(int ncid, const char *name, const sw_grid *g, const sw_crs *crs, int *varid, const char **what);

#endif
