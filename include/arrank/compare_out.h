/*
 * arrank/compare_out.h - a comparison (arrank/compare.h) as a table for people, JSON and CSV.
 */
#ifndef ARRANK_COMPARE_OUT_H
#define ARRANK_COMPARE_OUT_H

#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/compare.h"
#include "arrank/error.h"
#include "arrank/units.h"

/* The writers (compare_out.c). */

arrank_status arrank_compare_write(const arrank_comparison *comparison,
                                   arrank_compare_format format, FILE *stream,
                                   arrank_error *err);

/* The comparison as a self-contained HTML page (compare.html beside the
   figure): the table, the unmatched ids, the caution, and the SVG at
   svg_path inline (NULL or unreadable: none).  EIO on a write error. */
arrank_status arrank_compare_html_write(const arrank_comparison *comparison,
                                        const char *svg_path, FILE *stream, arrank_error *err);

#endif
