/*
 * arrank/compare_out.h - a comparison (arrank/compare.h) as a table for people, JSON and CSV.
 */
#ifndef ARRANK_COMPARE_OUT_H
#define ARRANK_COMPARE_OUT_H

#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/compare.h"
#include "arrank/error.h"
#include "arrank/textfit.h"
#include "arrank/units.h"

/* The writers (compare_out.c). */

arrank_status arrank_compare_write(const arrank_comparison *comparison,
                                   arrank_compare_format format, FILE *stream,
                                   arrank_error *err);

/* The table fitted to a terminal (README "Comparing two campaigns"): with
   options NULL or width 0 the table as piped, byte for byte; else ids whole
   and wrapped, columns left out in order of priority (rate B, rate A, the
   change in per cent, Ea's verdict, the Ea change; the id, the ratio and its
   verdict are kept) and said so, the lines around it reflowed; colour 1
   marks "changed" and the reasons of rows not compared.  EIO, ENOMEM. */
arrank_status arrank_compare_write_term(const arrank_comparison *comparison,
                                        const arrank_table_options *options, FILE *stream,
                                        arrank_error *err);

/* The comparison as a self-contained HTML page (compare.html beside the
   figure): the table, the unmatched ids, the caution, and the SVG at
   svg_path inline (NULL or unreadable: none).  EIO on a write error. */
arrank_status arrank_compare_html_write(const arrank_comparison *comparison,
                                        const char *svg_path, FILE *stream, arrank_error *err);

#endif
