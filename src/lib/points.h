/*
 * points.h - points.csv (points.c), inside libarrank; the public entry is
 * arrank_output_write (arrank/output.h).
 */
#ifndef ARRANK_POINTS_H
#define ARRANK_POINTS_H

#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/error.h"

/* Every point of every sample as a CSV row (README "points.csv").  EIO on a
   write error. */
arrank_status arrank_points_write(const arrank_analysis *analysis, FILE *stream, arrank_error *err);

#endif
