/*
 * plot_internal.h - what the files of the plot family share (plot.c: the
 * script and the entry points; plot_figures.c: the Arrhenius, rate-at-T and
 * Ea-ln A figures; plot_diagnostics.c: the per-sample figure; plot_stream.c:
 * rate against time on stream;
 * plot_gnuplot.c: finding and running gnuplot).  Inside libarrank only.
 */
#ifndef ARRANK_PLOT_INTERNAL_H
#define ARRANK_PLOT_INTERNAL_H

#include <stddef.h>
#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/error.h"
#include "arrank/plot.h"
#include "arrank/verdicts.h"

/* 1000/T axis: the usual scaling of Arrhenius plots (common practice). */
#define X_SCALE 1000.0
#define PI 3.14159265358979323846
#define ZERO_C_K 273.15 /* 0 degC in K, exact by definition of the Celsius scale */
#define INSTALL_HINT "install it (Debian/Ubuntu: apt-get install gnuplot-nox) or name the " \
                     "program in ARRANK_GNUPLOT"

/* One gnuplot script being written. */
typedef struct {
    FILE *f;
    const arrank_analysis *a;
    const char *unit;  /* report unit of rates, user text */
    const char *title; /* campaign title, user text */
    int font_pt;       /* base font size of the current terminal */
} script;

/* r is fitted with at least 3 points (a line to draw). */
int arrank_plot_fitted(const arrank_result *r);
/* p has a finite positive temperature and rate (a point to draw). */
int arrank_plot_usable_point(const arrank_point *p);
/* Point k of r is in the fit (none of an unfitted sample's is). */
int arrank_plot_point_used(const arrank_result *r, size_t k);
/* The sample's id, "" when it has none. */
const char *arrank_plot_sample_name(const arrank_result *r);

/* text as a quoted gnuplot string (arrank_plot_quote) on f. */
void arrank_plot_put_q(FILE *f, const char *text);
/* The same for the label of an explicit tic list, which gnuplot reads as a
   printf format of the tic's value: each '%' doubled, so it shows as itself. */
void arrank_plot_put_q_tic(FILE *f, const char *text);
/* Format (printf) and quote the result: user text passed as a %s argument
   ends up inside the quoted string like everything else. */
void arrank_plot_put_qf(FILE *f, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;
/* Font size as a fraction of the terminal's base size, for secondary text. */
int arrank_plot_font_of(const script *s, double fraction);
/* The sample key: at the right, or below the plot for long names. */
void arrank_plot_put_key(FILE *f, const arrank_analysis *a, int with_unfitted);
/* Element separator inside one plot command ("plot " before the first). */
void arrank_plot_next_elem(FILE *f, int *first);

/* ln r of the fitted line and its standard error at temperature T (delta
   method with the full covariance; README "The numbers"). */
void arrank_plot_line_at(const arrank_arrhenius *fit, double temp_K, double *y, double *se);
/* Data block $<tag><i> of r's points that pass the filter (in the fit or
   not, with or without rate_sd): 1000/T, ln r, sd of ln r.  Returns the count. */
size_t arrank_plot_block_points(FILE *f, const arrank_result *r, size_t i, const char *tag,
                                int used, int with_sd);
/* Data block $<tag><i> of r's fitted line between 1000/T = x0 and x1 with its
   confidence band (the pipeline's t quantile, r->t_quantile). */
void arrank_plot_block_line(FILE *f, const arrank_result *r, const char *tag, size_t i,
                            double x0, double x1, int steps);
/* The operating temperature is outside the fit's range. */
int arrank_plot_any_extrapolation(double T_op, const arrank_arrhenius *fit);
/* pad, or more when [lo - pad, hi + pad] would be narrower than 2e-3 of
   scale: an axis over points a hair apart is never empty to gnuplot. */
double arrank_plot_min_pad(double lo, double hi, double pad, double scale);
/* The smallest step of 1, 2, 2.5 or 5 times a power of ten that puts at most
   max_tics tics on span (common practice for axis labels). */
double arrank_plot_nice_step(double span, double max_tics);
/* degC tics on the top axis of a 1000/T plot from t_lo to t_hi (K). */
void arrank_plot_put_celsius_tics(FILE *f, double t_lo, double t_hi, double max_tics);

/* The figures (plot_figures.c, plot_diagnostics.c). */
void arrank_plot_fig_arrhenius(script *s);
void arrank_plot_fig_rate_at_T(script *s);
void arrank_plot_fig_ea_lnA(script *s);
void arrank_plot_fig_diagnostics(script *s, size_t i);
/* Rate against time on stream with the diagnosis's drift fit (plot_stream.c). */
void arrank_plot_fig_stream(script *s, size_t i);
/* r's file has a time on stream at a usable point (a figure to draw). */
int arrank_plot_has_time_on_stream(const arrank_result *r);
/* ln r of the diagnosis's drift line at t_h hours on stream and its standard
   error (the fit's covariance). */
void arrank_plot_drift_at(const arrank_drift *dr, double t_h, double *y, double *se);

/* Characters of the longest note beside a row of the rate-at-T figure. */
size_t arrank_plot_longest_row_note(const arrank_analysis *a);

/* Run program in dir with the script on its standard input (plot_gnuplot.c):
   ENOGNUPLOT when it cannot be run, EPLOT with gnuplot's message when it
   fails. */
arrank_status arrank_plot_run_gnuplot(const char *program, const char *dir,
                                      const char *script_text, size_t script_len,
                                      arrank_error *err);

#endif
