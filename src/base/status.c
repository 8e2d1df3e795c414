/* status.c - status codes and the error record (see status.h). */
#include "base/status.h"

#include <stdarg.h>
#include <stdio.h>
#include <string.h>

sw_status sw_fail(sw_error *err, sw_status code, const char *fmt, ...)
{
    if (err) {
        va_list ap;
        va_start(ap, fmt);
        vsnprintf(err->msg, sizeof err->msg, fmt, ap);
        va_end(ap);
        err->code = code;
    }
    return code;
}

void sw_error_prefix(sw_error *err, const char *fmt, ...)
{
    if (!err || err->code == SW_OK)
        return;
    char head[SW_ERROR_MSG_MAX];
    char tail[SW_ERROR_MSG_MAX];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(head, sizeof head, fmt, ap);
    va_end(ap);
    memcpy(tail, err->msg, sizeof tail);
    size_t nh = strlen(head), nt = strlen(tail);
    if (nh > sizeof err->msg - 1)
        nh = sizeof err->msg - 1;
    if (nt > sizeof err->msg - 1 - nh)
        nt = sizeof err->msg - 1 - nh;   /* keep the prefix; cut the end of the old message */
    memcpy(err->msg, head, nh);
    memcpy(err->msg + nh, tail, nt);
    err->msg[nh + nt] = '\0';
}

void sw_error_clear(sw_error *err)
{
    if (err) {
        err->code = SW_OK;
        err->msg[0] = '\0';
    }
}

const char *sw_status_name(sw_status code)
{
    switch (code) {
    case SW_OK: return "ok";
    case SW_ERR_USAGE: return "usage";
    case SW_ERR_PARSE: return "parse";
    case SW_ERR_RANGE: return "range";
    case SW_ERR_INPUT: return "input";
    case SW_ERR_IO: return "io";
    case SW_ERR_NETCDF: return "netcdf";
    case SW_ERR_NOMEM: return "nomem";
    case SW_ERR_UNSTABLE: return "unstable";
    case SW_ERR_UNSUPPORTED: return "unsupported";
    case SW_ERR_INTERRUPTED: return "interrupted";
    }
    return "unknown";
}
