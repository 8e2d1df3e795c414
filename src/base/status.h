/* status.h - status codes and the error record every library call fills on failure.
 *
 * A library function that can fail returns an sw_status (SW_OK == 0) and, on failure, writes a
 * one-line, human-readable cause into the caller's sw_error. Nothing in the library prints, exits
 * or aborts; the command-line layer decides what to show.
 */
#ifndef SW_STATUS_H
#define SW_STATUS_H

#include <stddef.h>

typedef enum {
    SW_OK = 0,
    SW_ERR_USAGE,     /* a caller passed arguments that make no sense (programming or CLI error) */
    SW_ERR_PARSE,     /* scenario text could not be read as INI, or a value has the wrong form */
    SW_ERR_RANGE,     /* a value has the right form but lies outside what is accepted */
    SW_ERR_INPUT,     /* an input grid is unusable (NaN/Inf, wrong shape, missing coordinates) */
    SW_ERR_IO,        /* a file could not be opened, written or renamed */
    SW_ERR_NETCDF,    /* the NetCDF library reported an error */
    SW_ERR_NOMEM,     /* an allocation failed */
    SW_ERR_UNSTABLE,  /* the time step exceeds the layout's stability limit, or the run blew up */
    SW_ERR_UNSUPPORTED, /* a valid request this build cannot serve */
    SW_ERR_INTERRUPTED  /* the run was stopped by a signal */
} sw_status;

#define SW_ERROR_MSG_MAX 1024

typedef struct {
    sw_status code;                 /* SW_OK until a failure is recorded */
    char msg[SW_ERROR_MSG_MAX];     /* one line, no trailing newline; "" when code == SW_OK */
} sw_error;

/* Records a failure: sets err->code and formats err->msg (truncated to fit).
 * err may be NULL (then only the code is returned). Returns code, so callers write
 * `return sw_fail(err, SW_ERR_RANGE, "...", ...);`. */
sw_status sw_fail(sw_error *err, sw_status code, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));

/* Puts `prefix` (printf-style) in front of an already recorded message, e.g. the file name.
 * Does nothing when err is NULL or holds no failure. */
void sw_error_prefix(sw_error *err, const char *fmt, ...) __attribute__((format(printf, 2, 3)));

/* Resets err to SW_OK with an empty message. err may be NULL. */
void sw_error_clear(sw_error *err);

/* Short stable name of a status code ("parse", "range", ...), for JSON output and tests. */
const char *sw_status_name(sw_status code);

#endif
