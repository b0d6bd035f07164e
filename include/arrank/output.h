/*
 * arrank/output.h - the table for people, JSON and CSV for programs, and
 * points.csv (every point, one row each); README "JSON keys".
 *
 * Writers take the stream to write to; they never open stdout themselves.
 * arrank_output_save writes through a temporary file in the target's folder
 * and renames it into place, so a failure never leaves half a file.
 */
#ifndef ARRANK_OUTPUT_H
#define ARRANK_OUTPUT_H

#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/error.h"
#include "arrank/textfit.h"

typedef enum {
    ARRANK_OUTPUT_TABLE = 0,       /* the table for people */
    ARRANK_OUTPUT_JSON = 1,        /* one record per sample, the diagnosis summarised */
    ARRANK_OUTPUT_CSV = 2,         /* one row per sample */
    ARRANK_OUTPUT_JSON_POINTS = 3, /* JSON with every point and the whole diagnosis */
    ARRANK_OUTPUT_POINTS = 4       /* points.csv: one row per point */
} arrank_output_format;

/* Write the analysis in the given format to stream, streamed (a sample or
   row at a time, never the whole document in memory).  EIO on a write error. */
arrank_status arrank_output_write(const arrank_analysis *analysis, arrank_output_format format,
                                  FILE *stream, arrank_error *err);

/*
 * The table for a terminal (README "The table on a terminal").  The library
 * never looks at the terminal: the caller says how wide it is and whether to
 * colour.  width 0 is no limit; colour 1 marks flags and reasons with ANSI
 * colours.  With width 0 and colour 0 (or options NULL) the table is the one
 * arrank_output_write writes, byte for byte; otherwise, when the whole table
 * does not fit in width columns, columns are left out in a stated order of
 * priority and a line under the rows names them, and ids, flags and reasons
 * wrap onto more lines (widths counted in code points).
 */
/* arrank_table_options: arrank/textfit.h (shared by every writer for a terminal). */

arrank_status arrank_output_table(const arrank_analysis *analysis,
                                  const arrank_table_options *options, FILE *stream,
                                  arrank_error *err);

/*
 * Write to path atomically (temp file + fsync + rename), or to stdout when
 * path is "-".  EIO with the path on failure; nothing is left behind.
 */
arrank_status arrank_output_save(const arrank_analysis *analysis, arrank_output_format format,
                                 const char *path, arrank_error *err);

/*
 * The same atomic save for any writer (figures, report): writer(stream, ctx,
 * err) produces the content.  Parent folders are created.  path "-" is stdout.
 */
arrank_status arrank_output_save_with(const char *path,
                                      arrank_status (*writer)(FILE *stream, void *ctx,
                                                              arrank_error *err),
                                      void *ctx, arrank_error *err);

#endif
