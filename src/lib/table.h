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

#endif
