/*
 * json.h - the results as JSON (json.c), inside libarrank; the public entry
 * is arrank_output_write (arrank/output.h).
 */
#ifndef ARRANK_JSON_H
#define ARRANK_JSON_H

#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/error.h"

/* Write the analysis as JSON to stream, one sample at a time.  detail 0: one
   record per sample with a summary of its diagnosis; 1: also every point and
   the whole diagnosis (README "JSON keys").  EIO on a write error, ENOMEM. */
arrank_status arrank_json_write(const arrank_analysis *analysis, int detail, FILE *stream,
                                arrank_error *err);

#endif
