/*
 * csv.h - the results as CSV (csv.c), inside libarrank; the public entry is
 * arrank_output_write (arrank/output.h).  (Included as "csv.h"; libcsv's
 * header is <csv.h>, found on the system path only.)
 */
#ifndef ARRANK_CSV_H
#define ARRANK_CSV_H

#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/error.h"

/* One row per sample, ranked first; EIO on a write error. */
arrank_status arrank_csv_write(const arrank_analysis *analysis, FILE *stream, arrank_error *err);

#endif
