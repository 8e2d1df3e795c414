/* ncattr.h - reading the attributes a NetCDF input variable is described by: text attributes (units,
 * standard_name, axis, calendar, ...), single numbers (scale_factor, add_offset) and the raw values
 * that mark a missing point (_FillValue, the library's default fill, missing_value); and the list of
 * a file's variable names that messages offer when a variable is not found.
 *
 * Every function returns a NetCDF status (NC_NOERR on success); the caller turns it into its own
 * message, so that messages keep naming the file and the variable at fault.
 */
#ifndef SW_NCATTR_H
#define SW_NCATTR_H

#include <stddef.h>

/* The raw (packed, before scale_factor / add_offset) values that mark a missing point of a variable. */
typedef struct {
    double *value;       /* [count] values (owned; free with sw_nc_missing_free); NULL when count is 0 */
    size_t count;        /* fill value (if any) first, then every missing_value */
    int fill;            /* 0: no fill value among them; 1: value[0] is the variable's _FillValue;
                            2: value[0] is the NetCDF default fill of its type (no _FillValue attribute) */
    const char *failed;  /* on failure, the attribute being read: "_FillValue" or "missing_value" */
} sw_nc_missing;

/* Copies the text attribute `name` of varid (NC_CHAR, or the first NC_STRING) into buf (size n >= 1,
 * NUL-terminated, truncated to fit) with surrounding blanks removed. *found = 0 when the attribute is
 * absent (buf ""); an attribute of another type is found with buf "(not text)". Returns NC_NOERR on
 * success or absence, else the library's status (NC_ENOMEM when memory runs out). */
int sw_nc_text_att(int ncid, int varid, const char *name, char *buf, size_t n, int *found);

/* Reads the numeric scalar attribute `name` of varid into *out; leaves *out unchanged when absent.
 * Returns NC_NOERR on success or absence, NC_EBADTYPE when it is text or not exactly one value, else
 * the library's status. */
int sw_nc_num_att(int ncid, int varid, const char *name, double *out);

/* The NetCDF default fill value of a numeric type into *fill (the value never-written points hold).
 * Returns 1, or 0 when the type has none used here (bytes, text, strings, user types). */
int sw_nc_default_fill(int type, double *fill);

/* Reads the values that mark a missing point of variable varid: its _FillValue when that is one number
 * (or, otherwise, the default fill of the variable's type, if it has one) and every number of its
 * missing_value attribute (a text missing_value is ignored). On success returns NC_NOERR and fills *out
 * (free with sw_nc_missing_free). On failure returns the library's status (NC_ENOMEM when memory runs
 * out), out->value is NULL, out->count 0 and out->failed names the attribute being read. */
int sw_nc_missing_read(int ncid, int varid, sw_nc_missing *out);

/* Writes the names of the variables of ncid with nd dimensions (any number when nd < 0), comma-separated
 * ("a, b, c"), into buf (size n >= 1); the list is cut at the last name that fits, and is "" when there is
 * none or the library fails (it only serves messages). */
void sw_nc_list_vars(int ncid, int nd, char *buf, size_t n);

/* Frees out->value and empties *out; NULL is fine. */
void sw_nc_missing_free(sw_nc_missing *m);

#endif
