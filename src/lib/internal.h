/*
 * internal.h - helpers shared by the library's modules; not part of the API.
 */
#ifndef ARRANK_INTERNAL_H
#define ARRANK_INTERNAL_H

#include <stddef.h>
#include <stdio.h>

#include "arrank/analysis.h"

/* strdup that returns NULL for NULL. */
char *arrank_strdup(const char *s);

/* Upper tail probability of the chi-square distribution, P(X > x), dof k. */
double arrank_chi2_upper_p(double x, double k);

/* Refit a result on the points marked in res->used (analysis.c).  A fit that
   is impossible sets res->error; only ENOMEM is returned as a failure. */
arrank_status arrank_result_refit(arrank_result *res, arrank_error *err);

/* Diagnostics of one result as a JSON object (diagnose.c): regime per point
   (file order), excluded points with reasons, curvature, criteria, quality,
   findings and notes.  JSON null when res->diagnosis is NULL; NULL when out
   of memory.  The caller owns the reference. */
struct json_t;
struct json_t *arrank_diagnosis_json(const arrank_result *res);

/* Plain-words account of one result's diagnostics: each problem with its
   evidence, the points left out and why, then the notes (diagnose.c).
   EIO when the stream fails. */
arrank_status arrank_diagnosis_write_text(FILE *stream, const arrank_result *res,
                                          arrank_error *err);

#endif
