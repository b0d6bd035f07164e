/*
 * arrank/plot_plan.h - the figure of a plan (arrank/plan.h): the planned
 * runs drawn on the Arrhenius plot of the samples involved, with the stated
 * maximum temperature and the operating temperature marked.
 */
#ifndef ARRANK_PLOT_PLAN_H
#define ARRANK_PLOT_PLAN_H

#include "arrank/analysis.h"
#include "arrank/error.h"
#include "arrank/plan.h"
#include "arrank/plot.h"

/*
 * Draw plan.EXT (one per format of options, SVG when none) into out_dir
 * with gnuplot, as arrank_plot_write does (a private folder first, renamed
 * into place when gnuplot has finished).  written (may be NULL) lists the
 * files (free with arrank_plot_files_clear).  ENOGNUPLOT, EPLOT, EIO, ENOMEM.
 */
arrank_status arrank_plot_plan(const arrank_analysis *analysis, const arrank_plan *plan,
                               const char *out_dir, const arrank_plot_options *options,
                               arrank_plot_files *written, arrank_error *err);

/* The gnuplot script of that figure for one format (ARRANK_PLOT_* bit) on
   stream, writing to output_name; for tests and for inspection. */
arrank_status arrank_plot_plan_script(const arrank_analysis *analysis, const arrank_plan *plan,
                                      unsigned format, const char *output_name, FILE *stream,
                                      arrank_error *err);

#endif
