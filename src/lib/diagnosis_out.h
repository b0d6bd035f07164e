/*
 * diagnosis_out.h - one sample's diagnosis as JSON, for the writers
 * (diagnosis_out.c).  Inside the library.
 */
#ifndef ARRANK_DIAGNOSIS_OUT_INTERNAL_H
#define ARRANK_DIAGNOSIS_OUT_INTERNAL_H

#include <jansson.h>

#include "arrank/analysis.h"

/* Diagnostics of one result as a JSON object: regime per point (file
   order), excluded points with reasons, kinetic window, curvature,
   criteria, quality, findings and diagnosis_notes; output.c merges its keys
   into each sample.  JSON null when res->diagnosis is NULL; NULL when out of
   memory.  The caller owns the reference. */
json_t *arrank_diagnosis_json(const arrank_result *res);

#endif
