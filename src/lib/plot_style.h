/*
 * plot_style.h - the house style of the figures, in one place (plot_style.c;
 * DEVELOPERS.md "Figures: the house style"): the look of each sample, the
 * canvas sizes and fonts, open axes, the reader's units and flag words, the
 * title and caption lines, and the SVG's own <title>.  Inside libarrank (the
 * plot family and the report).
 */
#ifndef ARRANK_PLOT_STYLE_H
#define ARRANK_PLOT_STYLE_H

#include <stddef.h>
#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/plot.h"

/* One font stack for every figure and the report (SVG and CSS spelling). */
#define ARRANK_FONT_STACK "'DejaVu Sans', 'Liberation Sans', Arial, Helvetica, sans-serif"
/* The plot area's own fill: a white that the layout check (tests/check_layout.py)
   finds each axis frame by; it shows as white. */
#define ARRANK_PLOT_AREA_FILL "#fcfcfd"
/* Text colours: main, secondary (captions, notes). */
#define ARRANK_INK "#1a1a1a"
#define ARRANK_INK_SOFT "#555555"

/* Average advance of a character of the font stack, in em (DejaVu Sans,
   measured over mixed text and digits; a little generous, our choice). */
#define ARRANK_CHAR_EM 0.62

/* Width in px of text of n characters at font size px. */
double arrank_plot_text_px(const char *text, double font_px);
/* Characters of UTF-8 text in terminal columns (arrank_text_columns): a CJK
   character counts two, which with ARRANK_CHAR_EM is about its 1 em or more. */
size_t arrank_plot_chars(const char *text);

/* The flags of r in short words, ", "-separated, into buf ("extrapolated
   12 K" says how far). */
void arrank_plot_flag_list(const arrank_result *r, char *buf, size_t n);

/* A gnuplot dash pattern for the look's dash index. */
const char *arrank_plot_dash(int dash);

/* Write the SVG file at path again with title as its <title> (XML-escaped)
   and the font stack in place of gnuplot's font family.  0 on success. */
int arrank_plot_svg_finish(const char *path, const char *title);

/*
 * The figure name that gnuplot made in the private folder priv, renamed into
 * out_dir (an SVG's <title> set to title first) and, when written is given,
 * added to it as kind, sample and format (written->files has room).  EIO or
 * ENOMEM, the figure left in priv then.  Every command that draws finishes
 * its figures this way.
 */
arrank_status arrank_plot_move_into(const char *priv, const char *out_dir, const char *name,
                                    unsigned format, const char *title, arrank_figure_kind kind,
                                    size_t sample, arrank_plot_files *written, arrank_error *err);

/* Empty the private folder (gnuplot writes only the figures into it, but a
   failed run may leave part of one) and remove it. */
void arrank_plot_remove_private(const char *priv);

/* Open axes: left and bottom (top too when with_top: the degC axis), outward
   ticks, light grid, text colours, and gnuplot's own key and title off. */
void arrank_plot_style_axes(FILE *f, int with_top);

#endif
