/*
 * arrank/error.h - status codes and the error record every fallible call fills.
 *
 * Every fallible function in libarrank returns an arrank_status and takes an
 * `arrank_error *err` as its last argument (NULL allowed).  On failure the
 * record gets the status, the input position (path, line, column; 0 when not
 * known) and a one-line message: lowercase, subject quoted, no final period.
 * On success the record is left untouched.  The library never prints or exits.
 */
#ifndef ARRANK_ERROR_H
#define ARRANK_ERROR_H

#include <stddef.h>

/* Explicit numbers; never renumbered. */
typedef enum {
    ARRANK_OK = 0,
    ARRANK_EINVAL = 1,      /* bad argument or option value */
    ARRANK_EPARSE = 2,      /* malformed input data (CSV, header, number, ini) */
    ARRANK_EUNIT = 3,       /* unknown, missing or incompatible unit */
    ARRANK_EIO = 4,         /* a file or folder could not be read or written */
    ARRANK_ENOMEM = 5,      /* out of memory */
    ARRANK_EFIT = 6,        /* a fit is impossible (too few points, singular) */
    ARRANK_ENOCONV = 7,     /* an iterative fit did not converge */
    ARRANK_ELIMIT = 8,      /* an input exceeds a resource limit */
    ARRANK_EPLOT = 9,       /* gnuplot failed on a figure */
    ARRANK_ENOGNUPLOT = 10, /* gnuplot is not installed */
    ARRANK_EDATA = 11       /* data are readable but unusable (no sample could be fitted) */
} arrank_status;

#define ARRANK_ERROR_PATH_MAX 1024
#define ARRANK_ERROR_MSG_MAX 1024

typedef struct {
    arrank_status status;
    char path[ARRANK_ERROR_PATH_MAX]; /* file the problem is in, "" if none */
    long line;                        /* 1-based physical line, 0 if not known */
    long column;                      /* 1-based field number, 0 if not known */
    char message[ARRANK_ERROR_MSG_MAX];
} arrank_error;

/* Reset a record to "no error". */
void arrank_error_clear(arrank_error *err);

/* Set status and message (printf-style) with no position; returns status. */
arrank_status arrank_errorf(arrank_error *err, arrank_status status, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 3, 4)))
#endif
    ;

/* Set status, position and message; path may be NULL. Returns status. */
arrank_status arrank_error_at(arrank_error *err, arrank_status status, const char *path,
                              long line, long column, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 6, 7)))
#endif
    ;

/* Static, lowercase name of a status ("malformed input", ...). */
const char *arrank_strerror(arrank_status status);

/*
 * Write "PATH:LINE:COLUMN: MESSAGE" (parts that are unknown are left out) into
 * buf (always NUL-terminated when n > 0).  Returns the length it wanted.
 */
size_t arrank_error_format(const arrank_error *err, char *buf, size_t n);

/*
 * Progress of a long step: `stage` is a static lowercase phrase ("reading
 * samples", "fitting samples"), `done` of `total` units finished.  Called
 * often (up to once per sample; the files are read on worker threads), always
 * from the calling thread, with done rising to total; it must be cheap.
 * The library never prints: the program decides whether and when to show it.
 */
typedef void (*arrank_progress_fn)(void *ctx, const char *stage, size_t done, size_t total);

#endif
