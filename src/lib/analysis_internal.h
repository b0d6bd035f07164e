/*
 * analysis_internal.h - what the files of the pipeline (analysis.c,
 * analysis_*.c) share, inside libarrank only.
 */
#ifndef ARRANK_ANALYSIS_INTERNAL_H
#define ARRANK_ANALYSIS_INTERNAL_H

#include <stddef.h>

#include "arrank/analysis.h"

/* Copy the points marked in res->used into temp_K, rate, rate_sd (each with
   room for the sample's n_points); *have_sd is 1 when every copied rate_sd is
   finite.  Returns the number copied (analysis.c). */
size_t arrank_result_used_points(const arrank_result *res, double *temp_K, double *rate,
                                 double *rate_sd, int *have_sd);

#endif
