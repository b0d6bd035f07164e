/*
 * plot_internal.h - what the files of the plot family share (plot.c: the
 * script and the entry points; plot_figures.c: the Arrhenius, rate-at-T and
 * Ea-ln A figures; plot_diagnostics.c: the per-sample figure; plot_stream.c:
 * rate against time on stream;
 * plot_gnuplot.c: finding and running gnuplot; plot_compare.c and
 * plot_plan.c: the figures of `compare` and `plan`, which set up a script of
 * their own).  Inside libarrank only.
 */
#ifndef ARRANK_PLOT_INTERNAL_H
#define ARRANK_PLOT_INTERNAL_H

#include <stddef.h>
#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/error.h"
#include "arrank/plot.h"
#include "arrank/verdicts.h"
#include "plot_style.h"

/* 1000/T axis: the usual scaling of Arrhenius plots (common practice). */
#define X_SCALE 1000.0
#define PI 3.14159265358979323846
#define ZERO_C_K 273.15 /* 0 degC in K, exact by definition of the Celsius scale */
#define INSTALL_HINT "install it (Debian/Ubuntu: apt-get install gnuplot-nox) or name the " \
                     "program in ARRANK_GNUPLOT"

/* One gnuplot script being written.  Layout is in SVG px of the canvas
   (W x H, text at fpx); gnuplot gets screen fractions, so a PNG (twice the
   pixels, twice the font) or a PDF comes out the same. */
typedef struct {
    FILE *f;
    const arrank_analysis *a;
    const char *unit;  /* report unit of rates, typeset (arrank_plot_unit_text) */
    const char *title; /* campaign title, user text */
    int font_pt;       /* base font size in the current terminal's units */
    double W, H;       /* canvas, px */
    double fpx;        /* base font, px */
    int base_w, base_h; /* the canvas asked for (--size) */
    const unsigned char *shown; /* per result: drawn in the campaign figures */
    size_t n_shown;
    double l, t, r, b; /* the current plot area, px from the left and the top */
    char unit_buf[160];
} script;

/* s made ready for a figure script on f (plot.c): the analysis, the rate
   unit typeset, the campaign's title, the asked canvas (under 320 px: the
   960 x 720 default); everything else zero. */
void arrank_plot_script_init(script *s, const arrank_analysis *a, FILE *f, int width_px,
                             int height_px);

/* ---- layout (plot_layout.c) ---------------------------------------------- */
/* The base font in px for a canvas asked width_px wide. */
double arrank_plot_base_font_px(int width_px);
/* The terminal of one format (ARRANK_PLOT_* bit) for a canvas of w x h px
   at the base font s->fpx: sets s->W, s->H and s->font_pt, and PS. */
void arrank_plot_terminal(script *s, unsigned format, double w, double h);
/* Screen fraction of a px position: x from the left, y from the top. */
double arrank_plot_sx(const script *s, double x_px);
double arrank_plot_sy(const script *s, double y_px);
/* Font size in the terminal's units for a fraction of the base font. */
/* The plot area (px from left and top), its margins and its fill. */
void arrank_plot_area(script *s, double l, double t, double r, double b);
/* A text at (x, y) px, y its middle; align "left", "center" or "right";
   rotate 90 for a vertical axis label.  text is user text or ours: quoted. */
void arrank_plot_text(script *s, double x_px, double y_px, const char *align, double font_frac,
                      const char *color, int rotate, const char *text);
/* text cut to max_px at font_px, "…" at the end when cut, into out. */
void arrank_plot_fit_text(const char *text, double max_px, double font_px, char *out, size_t n);
/* The heading: the figure's name and the campaign's title, top left.
   Returns the px taken from the top. */
double arrank_plot_head(script *s, const char *name);
/* Height in px of n caption lines. */
double arrank_plot_caption_px(const script *s, size_t n);
/* Caption lines at the bottom left, each cut to the width, the caution
   (cautions.h wording) last; n lines of lines[] before it. */
void arrank_plot_captions(script *s, const char *const *lines, size_t n);
/* The caption line naming the samples not drawn ("" when all are). */
void arrank_plot_hidden_line(const script *s, char *buf, size_t n);
/* Tics on an axis ("x", "y", "x2") over [lo, hi] at a round step giving at
   most max_tics; returns the widest label in characters. */
size_t arrank_plot_linear_tics(FILE *f, const char *axis, double lo, double hi, double max_tics);
/* Characters of the widest tic label arrank_plot_linear_tics would write. */
size_t arrank_plot_tic_chars(double lo, double hi, double max_tics);
/* The sample's look as gnuplot line properties: "lc rgb '#..' dt .. lw .." */
void arrank_plot_put_line_look(FILE *f, const arrank_analysis *a, size_t i, double lw);
/* A legend of samples in rows and columns inside the box (px); returns 0
   when it does not fit (nothing written). */
int arrank_plot_legend(script *s, const size_t *idx, size_t n, double x0, double y0,
                       double x1, double y1, int with_lines);
/* Rows needed by a legend of these samples in width w_px (columns of the
   widest name). */
size_t arrank_plot_legend_rows(const script *s, const size_t *idx, size_t n, double w_px,
                               size_t *cols);

/* The axes of an Arrhenius plot in the current plot area (arrank_plot_area):
   ranges, numbered ticks, 1000 K/T below and the same axis in degC on top,
   the axis names (ln r in the report unit), the bands' fill. */
void arrank_plot_arrhenius_axes(script *s, double x_lo, double x_hi, double y_lo, double y_hi);
/* Names at the ends of lines, in a column starting at x_px right of the
   plot area (s->l..s->r), each at its line's end height y_px[k] pushed apart
   so that no two overlap, in the sample's colour, with a thin leader from
   the end (x_data[k], y_data[k] in first coordinates).  idx: result indices
   of s->a.  0 when out of memory (nothing written). */
int arrank_plot_end_labels(script *s, const size_t *idx, const double *x_data,
                           const double *y_data, const double *y_px, size_t n, double x_px);

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

/* The figure's name as its heading and SVG title say it. */
void arrank_plot_figure_name(const arrank_analysis *a, arrank_figure_kind kind, size_t sample,
                             char *buf, size_t n);
/* The temperature of the compensation figure: the ranking statistics'
   harmonic mean of the measured temperatures, else that of the fitted points. */
double arrank_plot_t_hm(const arrank_analysis *a);
/* Canvas of each figure, grown from the asked *w x *h (s->fpx is set). */
void arrank_plot_size_arrhenius(script *s, double *w, double *h);
void arrank_plot_size_rate_at_T(script *s, double *w, double *h);
void arrank_plot_size_ea_lnA(script *s, double *w, double *h);
void arrank_plot_size_diagnostics(script *s, double *w, double *h);
/* The figures (plot_figures.c, plot_rate.c, plot_diagnostics.c). */
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
/* Tics of a log axis between lo and hi (> 0), 1-2-5 mantissas below three
   decades (plot_rate.c). */
void arrank_plot_put_log_tics(FILE *f, const char *axis, double lo, double hi);

/* Run program in dir with the script on its standard input (plot_gnuplot.c):
   ENOGNUPLOT when it cannot be run, EPLOT with gnuplot's message when it
   fails. */
arrank_status arrank_plot_run_gnuplot(const char *program, const char *dir,
                                      const char *script_text, size_t script_len,
                                      arrank_error *err);

#endif
