/*
 * arrank/plot_compare.h - the paired figure of a comparison (arrank/compare.h).
 */
#ifndef ARRANK_PLOT_COMPARE_H
#define ARRANK_PLOT_COMPARE_H

#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/compare.h"
#include "arrank/error.h"
#include "arrank/plot.h"
#include "arrank/units.h"

/*
 * The paired figure (plot_compare.c): one line per compared sample from its
 * rate at T in A to its rate in B (with a reference: its ratio to its own
 * campaign's reference), on a log axis, with both intervals;
 * the changed ones heavy with filled marks, the others thin and open.  Written as
 * DIR/compare.EXT for each of opt's formats (ARRANK_PLOT_* of arrank/plot.h;
 * 0: SVG) through opt's gnuplot, on opt's canvas (arrank_plot_size; a legend
 * below grows it); of opt, only those three are read, and opt NULL is
 * arrank_plot_defaults().  ENOGNUPLOT, EPLOT, EIO.
 */
arrank_status arrank_compare_plot(const arrank_comparison *comparison, const char *dir,
                                  const arrank_plot_options *opt, arrank_error *err);

/* The gnuplot script of that figure, for tests (no gnuplot needed). */
arrank_status arrank_compare_plot_script(const arrank_comparison *comparison,
                                         const arrank_plot_options *opt, FILE *stream,
                                         arrank_error *err);

#endif
