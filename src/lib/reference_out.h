/*
 * reference_out.h - the reference catalyst under the terminal table
 * (reference_out.c), inside libarrank only.
 */
#ifndef ARRANK_REFERENCE_OUT_H
#define ARRANK_REFERENCE_OUT_H

#include <stdio.h>

#include "arrank/analysis.h"

/* Nothing without a reference; else the block README "The reference
   catalyst" shows: each fitted sample's ratio to its campaign's reference at
   T with its interval, P(better than the reference) and Ea difference; the
   reference's rate per campaign, its drift in words and the test of
   equality.  EIO on a write error. */
arrank_status arrank_reference_table_write(const arrank_analysis *a, FILE *f,
                                           arrank_error *err);

/* The same block fitted to a terminal width columns wide (width 0: the
   block as piped): ids whole and wrapped, columns left out in order of
   priority (the Ea difference first, then P(better)) and said so, the
   lines about the campaigns reflowed.  EIO, ENOMEM. */
arrank_status arrank_reference_table_write_term(const arrank_analysis *a, size_t width,
                                                int colour, FILE *f, arrank_error *err);

/* The report's section on the reference (report.c puts it first): the same
   numbers as the table's block, in HTML.  Nothing without a reference. */
void arrank_reference_html_write(const arrank_analysis *a, FILE *f);

#endif
