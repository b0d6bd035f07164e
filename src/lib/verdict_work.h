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

#include <stddef.h>

#include "arrank/campaign.h"
#include "arrank/verdicts.h"

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

#endif
