/*
 * arrank/plot.h - the review figures, drawn by gnuplot through a pipe.
 *
 * One call starts one gnuplot process, feeds it a generated script on its
 * standard input and waits for it.  Data reach gnuplot as inline data blocks
 * that hold numbers only; every string that comes from user data (sample
 * names, campaign title, rate unit) reaches it only as a quoted string made
 * by arrank_plot_quote (in a tic label, with '%' doubled, since gnuplot reads
 * those as formats), so nothing in a campaign can run a command or be read
 * as a format.  Text is drawn noenhanced: "Pt_1" shows its underscore.
 *
 * Figures (file stems; one file per stem and format, in the output folder),
 * in one house style (DEVELOPERS.md "Figures: the house style"):
 *   arrhenius              ln r against 1000 K/T, the samples drawn (options
 *                          .show), fitted lines with confidence bands, each
 *                          named at its end, degC along the top
 *   rate-at-T              rate at the operating temperature, each interval a
 *                          box, best at the top, log axis, P(best) from 0.01
 *                          and flags in words beside (only with an operating T)
 *   ea-lnA                 the compensation figure: Ea against ln r at the
 *                          harmonic-mean temperature with joint confidence
 *                          ellipses; the ln A-Ea line and the isokinetic
 *                          temperature in its caption
 *   diagnostics-NN[-ID]    per fitted sample: its Arrhenius plot, residuals
 *                          and the diagnosis's local apparent Ea stacked on
 *                          one 1000 K/T axis, the kinetic window shaded, each
 *                          point's regime shown by its marker shape.  NN is the
 *                          sample's 1-based position in the campaign; ID is
 *                          the sample id with each run of characters other than
 *                          [A-Za-z0-9._-] made one '_' (at most 40 characters).
 *   time-on-stream-NN[-ID] per sample whose file has a time_on_stream column:
 *                          rate against time on stream, brought to one
 *                          temperature by the diagnosis's drift fit, with that
 *                          fit's drift line and its confidence band (the
 *                          rates as measured, and why, without a drift test)
 * Each sample has one look (arrank_plot_look_of) in every figure, but in
 * its diagnostics the marker shape tells each point's regime.
 */
#ifndef ARRANK_PLOT_H
#define ARRANK_PLOT_H

#include <stddef.h>
#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/error.h"

/* Output formats; OR them together. */
enum {
    ARRANK_PLOT_SVG = 1u << 0, /* .svg, the canvas in px (960 x 720 by default) */
    ARRANK_PLOT_PNG = 1u << 1, /* .png through pngcairo, twice the canvas's pixels */
    ARRANK_PLOT_PDF = 1u << 2  /* .pdf through pdfcairo, 96 canvas px to the inch, vector */
};

typedef enum {
    ARRANK_FIGURE_ARRHENIUS = 0,
    ARRANK_FIGURE_RATE_AT_T = 1,
    ARRANK_FIGURE_EA_LNA = 2,
    ARRANK_FIGURE_DIAGNOSTICS = 3,
    ARRANK_FIGURE_TIME_ON_STREAM = 4
} arrank_figure_kind;

/* Samples drawn in the campaign figures by default: the top of the ranking. */
#define ARRANK_PLOT_SHOW_DEFAULT 12

typedef struct {
    unsigned formats;    /* OR of ARRANK_PLOT_*; 0 means SVG only */
    const char *gnuplot; /* program to run; NULL: the environment variable
                            ARRANK_GNUPLOT if set and not empty, else "gnuplot"
                            searched on PATH.  A name with a '/' is used as is. */
    unsigned kinds;      /* which figures: OR of (1u << arrank_figure_kind);
                            0 (default) means every kind */
    size_t show;         /* samples drawn in the campaign figures (Arrhenius,
                            rate at T, compensation): the first `show` by the
                            ranking key (ranked ones first, then the others in
                            campaign order); SIZE_MAX: all.  Those not drawn are
                            named in a caption line.  Diagnostics: every sample. */
    const char *show_ids; /* instead of show: sample ids separated by commas
                             (NULL: use show); an id not in the campaign is EINVAL */
    int show_flagged;     /* with show: every flagged sample too */
    int width_px, height_px; /* canvas in SVG px (arrank_plot_size); PNG has twice
                                the pixels, PDF is 96 px to the inch */
} arrank_plot_options;

/* Defaults: SVG, gnuplot from ARRANK_GNUPLOT or PATH, the top 12, size "page". */
arrank_plot_options arrank_plot_defaults(void);

/*
 * The canvas for a size word: "slide" 1280 x 720, "page" 960 x 720,
 * "square" 900 x 900, or "WxH" in px (each 320 to 4000).  EINVAL with a
 * one-line message otherwise.  A figure that needs more room (many rows,
 * three stacked panels, a legend below) grows from this size.
 */
arrank_status arrank_plot_size(const char *text, int *width_px, int *height_px,
                               arrank_error *err);

/*
 * The look of a sample: one colour (Okabe-Ito, colour-blind safe), one
 * marker shape and one dash pattern, the same in every figure and in the
 * report.  Sample i (its index in the campaign) has colour i mod 6 and style
 * (shape, dash) i mod 7, so the first 42 samples have 42 different looks.
 * Two samples below 42 differ in colour or in marker.  Black, the star
 * marker and the heavy solid line are kept for a reference catalyst
 * (arrank_plot_sample_look(i, 1) gives that look, whatever i): no sample
 * gets them.
 */
typedef struct {
    const char *color;  /* "#rrggbb" */
    int point_filled;   /* gnuplot point type, filled */
    int point_hollow;   /* the same shape open (points left out of a fit) */
    const char *shape;  /* "circle", "square", "triangle", "triangle-down",
                           "diamond", "pentagon", "cross"; "star" for the
                           reference: for drawing it elsewhere (the report) */
    int dash;           /* index of the dash pattern, 0 solid */
    double line_width;  /* relative line width (1; heavier for the reference) */
} arrank_plot_look;

arrank_plot_look arrank_plot_sample_look(size_t i, int reference);
/* The look of sample i of an analysis: the reference catalyst's when it is
   the reference (arrank/analysis_stats.h is_reference), else sample i's. */
arrank_plot_look arrank_plot_look_of(const arrank_analysis *a, size_t i);

typedef struct {
    arrank_figure_kind kind;
    size_t sample;   /* result index for DIAGNOSTICS and TIME_ON_STREAM; (size_t)-1
                        for the others */
    unsigned format; /* one ARRANK_PLOT_* bit */
    char *name;      /* file name in the output folder, e.g. "arrhenius.svg" */
    char *path;      /* out_dir joined with name */
} arrank_plot_file;

typedef struct {
    arrank_plot_file *files; /* in the order drawn: per figure, per format */
    size_t n;
} arrank_plot_files;

/*
 * Draw every figure of the analysis into the existing folder out_dir.
 * options may be NULL (defaults).  written may be NULL; otherwise on success
 * it lists the files made (free with arrank_plot_files_clear).  gnuplot
 * writes every file into a private folder made by mkdtemp inside out_dir (no
 * file is ever made at a name anyone could guess, so a link planted in out_dir
 * is never followed); the files are renamed into place only when gnuplot has
 * finished without error and no destination is a folder, so a failure leaves
 * no figure, half or whole; the private folder is removed in every case.
 * Returns ENOGNUPLOT when the program cannot be found or run (message says
 * how to install it), EPLOT with gnuplot's own message when gnuplot fails,
 * EIO when out_dir is not a folder, a private folder cannot be made in it, a
 * destination is a folder or a rename fails, EDATA when there is
 * nothing to draw, ENOMEM.
 */
arrank_status arrank_plot_write(const arrank_analysis *analysis, const char *out_dir,
                                const arrank_plot_options *options, arrank_plot_files *written,
                                arrank_error *err);

void arrank_plot_files_clear(arrank_plot_files *files);

/*
 * Write the gnuplot script for every figure to stream, without running it:
 * for tests and for anyone who wants to adjust a figure by hand.  Output file
 * names in the script are the final names, relative to gnuplot's working
 * folder.  formats as in arrank_plot_options.  EIO on a write error.
 */
arrank_status arrank_plot_script(const arrank_analysis *analysis, unsigned formats, FILE *stream,
                                 arrank_error *err);

/*
 * text as a gnuplot string expression that can only ever be a string
 * constant: ("...") with \ and " escaped by a backslash and each backquote
 * written as \140 (gnuplot would run `...` inside double quotes; the escape
 * it never does).  Control characters (C0, DEL, C1) are removed and bytes that
 * are not UTF-8 become U+FFFD.  One pass, linear in the text.  NULL text gives
 * ("").  Returns a new string owned by the caller (free), or NULL when out of
 * memory.
 */
char *arrank_plot_quote(const char *text);

/* Colour of the sample at result index i: arrank_plot_sample_look(i, 0).color. */
const char *arrank_plot_color(size_t i);

/* gnuplot point type of sample i, filled or hollow (hollow marks points left
   out of a fit): from arrank_plot_sample_look(i, 0). */
int arrank_plot_point_type(size_t i, int hollow);

/* The look of sample i of an analysis in every figure: arrank_plot_color
   and arrank_plot_point_type, except the reference catalyst's
   (analysis_stats.h is_reference), drawn black with a pentagon of its own. */
const char *arrank_plot_sample_color(const arrank_analysis *a, size_t i);
int arrank_plot_sample_point_type(const arrank_analysis *a, size_t i, int hollow);

/*
 * A unit as a reader reads it, for figures and the report: a udunits-style
 * product or quotient of symbols with powers ("umol/(g*s)", "mol/(kg*h)",
 * "1/s", "mmol g-1 h-1") becomes numerator then denominator with
 * superscript powers ("µmol g⁻¹ s⁻¹", "mol kg⁻¹ h⁻¹", "s⁻¹"); the micro
 * prefix written 'u' becomes µ and degC °C.  Text of any other form is copied
 * as it is.  out always terminated (cut at n - 1 bytes).
 */
void arrank_plot_unit_text(const char *unit, char *out, size_t n);

/*
 * A flag bit in the few words a figure or a table cell has room for
 * ("high conversion", "bent plot"), never the program's spelling; NULL for a
 * bit that is no flag.  arrank_flag_words has the long sentence.
 */
const char *arrank_plot_flag_short(unsigned flag);

/*
 * Find the gnuplot program that arrank_plot_write would run (see options).
 * On success *path is a new absolute path owned by the caller (free).
 * ENOGNUPLOT with the install hint when it is not found.
 */
arrank_status arrank_plot_find_gnuplot(const char *program, char **path, arrank_error *err);

#endif
