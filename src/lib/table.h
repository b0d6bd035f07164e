/*
 * table.h - the table for people (table.c), inside libarrank; the public
 * entry is arrank_output_write (arrank/output.h).
 */
#ifndef ARRANK_TABLE_H
#define ARRANK_TABLE_H

#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/error.h"

/* Write the table of the analysis to stream.  EIO on a write error, ENOMEM. */
arrank_status arrank_table_write(const arrank_analysis *analysis, FILE *stream, arrank_error *err);

/* The table fitted to a terminal width columns wide (table_term.c; width 0:
   no limit), with colour when colour is 1.  EIO, ENOMEM. */
arrank_status arrank_table_write_term(const arrank_analysis *analysis, size_t width, int colour,
                                      FILE *stream, arrank_error *err);

#endif
