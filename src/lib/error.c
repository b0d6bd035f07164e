/*
 * error.c - filling and formatting arrank_error records.
 */
#include "arrank/error.h"

#include <stdarg.h>
#include <stdio.h>
#include <string.h>

void arrank_error_clear(arrank_error *err)
{
    if (!err)
        return;
    /* Not memset: the record is 4.6 kB, cleared for every file and sample,
       and only the strings' first bytes say they are empty. */
    err->status = ARRANK_OK;
    err->path[0] = '\0';
    err->line = 0;
    err->column = 0;
    err->message[0] = '\0';
}

static void set_message(arrank_error *err, const char *fmt, va_list ap)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 0)))
#endif
    ;

static void set_message(arrank_error *err, const char *fmt, va_list ap)
{
    vsnprintf(err->message, sizeof err->message, fmt, ap);
}

arrank_status arrank_errorf(arrank_error *err, arrank_status status, const char *fmt, ...)
{
    if (!err)
        return status;
    err->status = status;
    err->path[0] = '\0';
    err->line = 0;
    err->column = 0;
    va_list ap;
    va_start(ap, fmt);
    set_message(err, fmt, ap);
    va_end(ap);
    return status;
}

arrank_status arrank_error_at(arrank_error *err, arrank_status status, const char *path,
                              long line, long column, const char *fmt, ...)
{
    if (!err)
        return status;
    err->status = status;
    snprintf(err->path, sizeof err->path, "%s", path ? path : "");
    err->line = line;
    err->column = column;
    va_list ap;
    va_start(ap, fmt);
    set_message(err, fmt, ap);
    va_end(ap);
    return status;
}

const char *arrank_strerror(arrank_status status)
{
    switch (status) {
    case ARRANK_OK: return "no error";
    case ARRANK_EINVAL: return "invalid argument";
    case ARRANK_EPARSE: return "malformed input";
    case ARRANK_EUNIT: return "unit problem";
    case ARRANK_EIO: return "input/output error";
    case ARRANK_ENOMEM: return "out of memory";
    case ARRANK_EFIT: return "fit impossible";
    case ARRANK_ENOCONV: return "fit did not converge";
    case ARRANK_ELIMIT: return "input exceeds a limit";
    case ARRANK_EPLOT: return "plotting failed";
    case ARRANK_ENOGNUPLOT: return "gnuplot not found";
    case ARRANK_EDATA: return "no usable data";
    }
    return "unknown error";
}

size_t arrank_error_format(const arrank_error *err, char *buf, size_t n)
{
    if (!err) {
        if (n)
            buf[0] = '\0';
        return 0;
    }
    int len;
    if (err->path[0] && err->line > 0 && err->column > 0)
        len = snprintf(buf, n, "%s:%ld:%ld: %s", err->path, err->line, err->column, err->message);
    else if (err->path[0] && err->line > 0)
        len = snprintf(buf, n, "%s:%ld: %s", err->path, err->line, err->message);
    else if (err->path[0])
        len = snprintf(buf, n, "%s: %s", err->path, err->message);
    else
        len = snprintf(buf, n, "%s", err->message);
    return len < 0 ? 0 : (size_t)len;
}
