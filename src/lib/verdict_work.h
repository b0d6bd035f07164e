/*
 * verdict_work.h - the working state of one sample's diagnosis, shared by
 * its parts (regress.c, curvature.c, series.c, quality.c, transport.c) and
 * its entry (diagnose.c).  A type only: no module owns it (DEVELOPERS.md,
 * the `headers:` line of the layer table).
 *
 * All regressions are of y = ln r on x = 1/T with the sample's weights
 * ((r/sd)^2 when every point has rate_sd, else 1).
 */
#ifndef ARRANK_VERDICT_WORK_H
#define ARRANK_VERDICT_WORK_H

#include <stdarg.h>
#include <stddef.h>
#include <stdio.h>

#include "arrank/campaign.h"
#include "arrank/verdicts.h"
#include "util.h"

typedef struct {
    const arrank_sample *s;
    const arrank_point *pt;
    size_t np;
    double *x, *y, *w;  /* [np] 1/T, ln r, weight */
    arrank_diagnosis *d;
    double scatter;     /* residual SD of ln r about the line on every point; NAN if weighted */
    int nomem;          /* set by any step that ran out of memory */
    double *lsq;        /* [3 np] columns for the general least-squares path */
} arrank_dwork;

/* printf into a new string for the diagnosis's texts; NULL (and wk->nomem
   set) when out of memory.  Shared by the diagnosis parts. */
static inline char *arrank_dwork_fmt(arrank_dwork *wk, const char *f, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

static inline char *arrank_dwork_fmt(arrank_dwork *wk, const char *f, ...)
{
    va_list ap;
    va_start(ap, f);
    char *s = arrank_vstrfmt(f, ap);
    va_end(ap);
    if (!s)
        wk->nomem = 1;
    return s;
}

/* Where line `line` of file `source` is, as the words say it: "line 12", or
   "line 12 of kite-b.csv" in a sample read from several files (sample.h). */
static inline const char *arrank_dwork_where(const arrank_dwork *wk, long line, int source,
                                             char *buf, size_t n)
{
    const arrank_sample *s = wk->s;
    if (s->n_sources > 1 && source >= 0 && (size_t)source < s->n_sources)
        snprintf(buf, n, "line %ld of %.200s", line, s->source_files[source]);
    else
        snprintf(buf, n, "line %ld", line);
    return buf;
}

/* A note, and a finding, of the diagnosis (printf into a new string that
   joins wk->d's list); out of memory sets wk->nomem. */
static inline void arrank_dwork_note(arrank_dwork *wk, const char *f, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

static inline void arrank_dwork_note(arrank_dwork *wk, const char *f, ...)
{
    va_list ap;
    va_start(ap, f);
    char *s = arrank_vstrfmt(f, ap);
    va_end(ap);
    if (arrank_strings_push(&wk->d->notes, &wk->d->n_notes, s) != 0)
        wk->nomem = 1;
}

static inline void arrank_dwork_finding(arrank_dwork *wk, const char *f, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

static inline void arrank_dwork_finding(arrank_dwork *wk, const char *f, ...)
{
    va_list ap;
    va_start(ap, f);
    char *s = arrank_vstrfmt(f, ap);
    va_end(ap);
    if (arrank_strings_push(&wk->d->findings, &wk->d->n_findings, s) != 0)
        wk->nomem = 1;
}

#endif
