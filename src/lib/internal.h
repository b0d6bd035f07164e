/*
 * internal.h - helpers shared by the library's modules; not part of the API.
 */
#ifndef ARRANK_INTERNAL_H
#define ARRANK_INTERNAL_H

#include <stddef.h>

#include "arrank/analysis.h"

/* strdup that returns NULL for NULL. */
char *arrank_strdup(const char *s);

/* Upper tail probability of the chi-square distribution, P(X > x), dof k. */
double arrank_chi2_upper_p(double x, double k);

/* Refit a result on the points marked in res->used (analysis.c).  A fit that
   is impossible sets res->error; only ENOMEM is returned as a failure. */
arrank_status arrank_result_refit(arrank_result *res, arrank_error *err);

/* Diagnostics of one result as a JSON object (diagnose.c): regime per point
   (file order), excluded points with reasons, kinetic window, curvature,
   criteria, quality, findings and diagnosis_notes; output.c merges its keys
   into each sample.  JSON null when res->diagnosis is NULL; NULL when out of
   memory.  The caller owns the reference. */
struct json_t;
struct json_t *arrank_diagnosis_json(const arrank_result *res);

#endif
