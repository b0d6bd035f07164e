/*
 * plot.c - the review figures: a gnuplot script written from an analysis and
 * fed to one gnuplot child process through a pipe.
 *
 * Safety rule (DESIGN "Plotting"): the script is built from our own fixed text,
 * numbers printed by printf, and user strings passed through quote(), which
 * makes a single-quoted gnuplot string with every ' spliced in by
 * concatenation.  gnuplot expands backquotes and macros in double-quoted
 * strings and in bare command text, never inside single quotes.  Data blocks
 * hold only numbers written by "%.9g", so no line of a block can be "EOD" or
 * anything but numbers, and no sample name ever enters one.
 *
 * Output files are written by gnuplot under temporary names in the output
 * folder (the child runs with that folder as its working directory, so no
 * path from the command line enters the script either) and renamed into place
 * once gnuplot exits with status 0.
 */
/* realpath is an XSI function. */
#define _XOPEN_SOURCE 700

#include "arrank/plot.h"

#include <errno.h>
#include <fcntl.h>
#include <limits.h>
#include <math.h>
#include <signal.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/types.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

#include <gsl/gsl_cdf.h>

#include "arrank/diagnose.h"
#include "arrank/analysis_stats.h"
#include "util.h"

#define INSTALL_HINT "install it (Debian/Ubuntu: apt-get install gnuplot-nox) or name the " \
                     "program in ARRANK_GNUPLOT"

/* 1000/T axis: the usual scaling of Arrhenius plots (common practice). */
#define X_SCALE 1000.0
#define PI 3.14159265358979323846
#define ZERO_C_K 273.15 /* 0 degC in K, exact by definition of the Celsius scale */

/* Okabe & Ito, "Color Universal Design" (2002/2008), as reprinted by B. Wong,
   Nature Methods 8:441 (2011): eight colours told apart under the common colour
   vision deficiencies.  Its yellow (#F0E442) is left out because thin lines and
   small markers in it vanish on white; the other seven are used in this order. */
static const char *const palette[] = {"#0072B2", "#D55E00", "#009E73", "#CC79A7",
                                      "#E69F00", "#56B4E9", "#000000"};
#define N_COLORS (sizeof palette / sizeof palette[0])

/* gnuplot point types as {filled, hollow} pairs: circle, square, triangle up,
   diamond, triangle down.  Five shapes against seven colours: the pair
   (colour, shape) repeats only after 35 samples. */
static const int shapes[][2] = {{7, 6}, {5, 4}, {9, 8}, {13, 12}, {11, 10}};
#define N_SHAPES (sizeof shapes / sizeof shapes[0])

const char *arrank_plot_color(size_t i)
{
    return palette[i % N_COLORS];
}

int arrank_plot_point_type(size_t i, int hollow)
{
    return shapes[i % N_SHAPES][hollow ? 1 : 0];
}

arrank_plot_options arrank_plot_defaults(void)
{
    arrank_plot_options o;
    o.formats = ARRANK_PLOT_SVG;
    o.gnuplot = NULL;
    return o;
}

/* ---- quoting ------------------------------------------------------------ */

/* Length of the valid UTF-8 sequence at s (1..4), 0 if the bytes are not one
   (RFC 3629 section 4: no overlongs, no surrogates, nothing above U+10FFFF).
   *cp receives the code point. */
static size_t utf8_seq(const unsigned char *s, unsigned long *cp)
{
    unsigned c = s[0];
    size_t n;
    unsigned long v;
    unsigned lo = 0x80, hi = 0xBF;
    if (c < 0x80) {
        *cp = c;
        return 1;
    } else if (c >= 0xC2 && c <= 0xDF) {
        n = 2;
        v = c & 0x1F;
    } else if (c >= 0xE0 && c <= 0xEF) {
        n = 3;
        v = c & 0x0F;
        if (c == 0xE0)
            lo = 0xA0;
        if (c == 0xED)
            hi = 0x9F;
    } else if (c >= 0xF0 && c <= 0xF4) {
        n = 4;
        v = c & 0x07;
        if (c == 0xF0)
            lo = 0x90;
        if (c == 0xF4)
            hi = 0x8F;
    } else
        return 0;
    for (size_t k = 1; k < n; k++) {
        unsigned b = s[k];
        if (b < lo || b > hi)
            return 0;
        lo = 0x80;
        hi = 0xBF;
        v = (v << 6) | (b & 0x3F);
    }
    *cp = v;
    return n;
}

static void put_q(FILE *f, const char *text)
{
    const unsigned char *s = (const unsigned char *)(text ? text : "");
    fputs("('", f);
    while (*s) {
        unsigned long cp;
        size_t n = utf8_seq(s, &cp);
        if (n == 0) {
            fputs("\xEF\xBF\xBD", f); /* U+FFFD for a byte that is not UTF-8 */
            s++;
            continue;
        }
        if (cp < 0x20 || cp == 0x7F || (cp >= 0x80 && cp <= 0x9F)) {
            s += n;
            continue;
        }
        if (cp == '\'')
            fputs("' . \"'\" . '", f);
        else
            fwrite(s, 1, n, f);
        s += n;
    }
    fputs("')", f);
}

char *arrank_plot_quote(const char *text)
{
    char *buf = NULL;
    size_t len = 0;
    FILE *f = open_memstream(&buf, &len);
    if (!f)
        return NULL;
    put_q(f, text);
    if (fclose(f) != 0) {
        free(buf);
        return NULL;
    }
    return buf;
}

/* Format (printf) and quote the result: user text passed as a %s argument
   ends up inside the single-quoted string like everything else. */
static void put_qf(FILE *f, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

static void put_qf(FILE *f, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    int n = vsnprintf(NULL, 0, fmt, ap);
    va_end(ap);
    char *buf = n >= 0 ? malloc((size_t)n + 1) : NULL;
    if (!buf) {
        put_q(f, ""); /* out of memory: an empty label, never unquoted text */
        return;
    }
    va_start(ap, fmt);
    vsnprintf(buf, (size_t)n + 1, fmt, ap);
    va_end(ap);
    put_q(f, buf);
    free(buf);
}

/* ---- figure list -------------------------------------------------------- */

typedef struct {
    arrank_figure_kind kind;
    size_t sample;
    char stem[112];
} figure;

static const struct {
    unsigned bit;
    const char *ext;
} formats_table[] = {{ARRANK_PLOT_SVG, "svg"}, {ARRANK_PLOT_PNG, "png"}, {ARRANK_PLOT_PDF, "pdf"}};
#define N_FORMATS (sizeof formats_table / sizeof formats_table[0])

static int fitted(const arrank_result *r)
{
    return r->error == NULL && r->fit.n >= 3;
}

static int usable_point(const arrank_point *p)
{
    return isfinite(p->temp_K) && p->temp_K > 0 && isfinite(p->rate) && p->rate > 0;
}

/* The sample id made fit for a file name: every run of characters other than
   [A-Za-z0-9._-] becomes one '_', at most 40 characters, no leading '.'. */
static void id_for_file(const char *id, char *out, size_t n)
{
    size_t len = 0;
    int gap = 0;
    for (const char *p = id ? id : ""; *p && len + 2 < n && len < 40; p++) {
        int ok = (*p >= 'A' && *p <= 'Z') || (*p >= 'a' && *p <= 'z') ||
                 (*p >= '0' && *p <= '9') || *p == '_' || *p == '-' || (*p == '.' && len > 0);
        if (ok) {
            if (gap && len > 0)
                out[len++] = '_';
            out[len++] = *p;
            gap = 0;
        } else
            gap = 1;
    }
    out[len] = '\0';
}

/* The figures an analysis gives, in drawing order.  Returns the count; figs
   has room for n_results + 3. */
static size_t list_figures(const arrank_analysis *a, figure *figs)
{
    size_t n = 0, n_fit = 0, n_pts = 0, n_pred = 0;
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *r = &a->results[i];
        n_fit += fitted(r);
        n_pred += fitted(r) && r->has_prediction;
        for (size_t k = 0; k < r->sample->n_points; k++)
            n_pts += usable_point(&r->sample->points[k]);
    }
    if (n_pts > 0) {
        figs[n] = (figure){ARRANK_FIGURE_ARRHENIUS, (size_t)-1, "arrhenius"};
        n++;
    }
    if (n_pred > 0) {
        figs[n] = (figure){ARRANK_FIGURE_RATE_AT_T, (size_t)-1, "rate-at-T"};
        n++;
    }
    if (n_fit > 0) {
        figs[n] = (figure){ARRANK_FIGURE_EA_LNA, (size_t)-1, "ea-lnA"};
        n++;
    }
    int width = a->n_results >= 100 ? 3 : 2;
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *r = &a->results[i];
        if (!fitted(r))
            continue;
        figs[n].kind = ARRANK_FIGURE_DIAGNOSTICS;
        figs[n].sample = i;
        char id[48];
        id_for_file(r->sample->id, id, sizeof id);
        snprintf(figs[n].stem, sizeof figs[n].stem, "diagnostics-%0*zu%s%s", width, i + 1,
                 id[0] ? "-" : "", id);
        n++;
    }
    return n;
}

/* ---- script ------------------------------------------------------------- */

typedef struct {
    FILE *f;
    const arrank_analysis *a;
    const char *unit;  /* report unit of rates, user text */
    const char *title; /* campaign title, user text */
    int font_pt;       /* base font size of the current terminal */
} script;

/* Font size as a fraction of the terminal's base size, for secondary text. */
static int font_of(const script *s, double fraction)
{
    int pt = (int)lround(s->font_pt * fraction);
    return pt < 6 ? 6 : pt;
}

static const char *sample_name(const arrank_result *r)
{
    return r->sample->id ? r->sample->id : "";
}

/* Base size of a figure in SVG pixels. */
/* Where the sample key goes.  Names up to KEY_SIDE_CHARS characters fit a
   column at the right; longer ones would squeeze the plot to nothing (gnuplot
   then drops entries), so the key moves below the plot in one or two columns
   and the figure grows by its rows. */
#define KEY_SIDE_CHARS 22
#define KEY_ROW_PX 40

typedef struct {
    int below;
    size_t cols, rows;
} key_layout;

static size_t text_chars(const char *t)
{
    size_t n = 0;
    for (const unsigned char *p = (const unsigned char *)(t ? t : ""); *p; p++)
        n += (*p & 0xC0) != 0x80;
    return n;
}

static key_layout sample_key(const arrank_analysis *a, int with_unfitted)
{
    key_layout k = {0, 1, 0};
    size_t longest = 0, entries = 3; /* band, extrapolation, left-out entries */
    for (size_t i = 0; i < a->n_results; i++) {
        if (!with_unfitted && !fitted(&a->results[i]))
            continue;
        size_t n = text_chars(a->results[i].sample->id) + (a->results[i].error ? 13 : 0);
        longest = n > longest ? n : longest;
        entries++;
    }
    if (longest > KEY_SIDE_CHARS) {
        k.below = 1;
        k.cols = longest > 2 * KEY_SIDE_CHARS ? 1 : 2;
        k.rows = (entries + k.cols - 1) / k.cols;
    }
    return k;
}

static void put_key(FILE *f, const arrank_analysis *a, int with_unfitted)
{
    key_layout k = sample_key(a, with_unfitted);
    if (k.below)
        fprintf(f, "set key below Left reverse samplen 1.5 spacing 1.15 maxcols %zu\n", k.cols);
    else
        fputs("set key outside right top vertical Left reverse samplen 1.5 spacing 1.15\n", f);
}

static size_t longest_row_note(const arrank_analysis *a);

/* Width in SVG pixels of one character of the base font, about 0.55 em of a
   sans-serif at 22 px (a measured average, our choice). */
#define CHAR_PX 12.0

static void figure_size(const script *s, const figure *fig, int *w, int *h)
{
    *w = 1080;
    *h = 720;
    if (fig->kind == ARRANK_FIGURE_ARRHENIUS || fig->kind == ARRANK_FIGURE_EA_LNA) {
        key_layout k = sample_key(s->a, fig->kind == ARRANK_FIGURE_ARRHENIUS);
        if (k.below) {
            size_t extra = k.rows * KEY_ROW_PX;
            *h += extra > 3000 ? 3000 : (int)extra;
        }
    } else if (fig->kind == ARRANK_FIGURE_DIAGNOSTICS) {
        *w = 1200;
        *h = 720;
    } else if (fig->kind == ARRANK_FIGURE_RATE_AT_T) {
        size_t n = s->a->n_ranked ? s->a->n_ranked : s->a->n_results;
        double hh = 200.0 + 44.0 * (double)n;
        *h = hh < 420 ? 420 : hh > 4000 ? 4000 : (int)hh;
        /* The notes at the right take their own room: the plot keeps the
           width it has with a margin of about 12 characters. */
        double extra = (0.62 * (double)longest_row_note(s->a) + 3.0 - 12.0) * CHAR_PX;
        *w += extra > 0 ? (extra > 2000 ? 2000 : (int)extra) : 0;
    }
}

static void put_terminal(script *s, const figure *fig, unsigned format)
{
    int w, h;
    figure_size(s, fig, &w, &h);
    FILE *f = s->f;
    /* Sizes: SVG at slide scale (about 1000 px wide, 20 px text); PNG 2.5 times
       that in pixels, i.e. 300 dpi for a 9 in wide figure; PDF 120 px per inch.
       pngcairo takes font sizes in points at 72 dpi on its pixel canvas. */
    switch (format) {
    case ARRANK_PLOT_PNG:
        fprintf(f,
                "set terminal pngcairo size %d,%d font 'Sans,%d' noenhanced linewidth 3.0 "
                "background rgb '#ffffff'\n",
                w * 5 / 2, h * 5 / 2, s->font_pt = 40);
        fputs("PS = 3.0\n", f);
        break;
    case ARRANK_PLOT_PDF:
        fprintf(f,
                "set terminal pdfcairo size %.2fin,%.2fin font 'Sans,%d' noenhanced "
                "linewidth 1.5 background rgb '#ffffff'\n",
                w / 120.0, h / 120.0, s->font_pt = 12);
        fputs("PS = 0.8\n", f);
        break;
    default:
        fprintf(f,
                "set terminal svg size %d,%d fixed font 'sans-serif,%d' noenhanced "
                "linewidth 1.5 background rgb '#ffffff'\n",
                w, h, s->font_pt = 22);
        fputs("PS = 0.7\n", f);
        break;
    }
}

static void common_style(FILE *f)
{
    fputs("set encoding utf8\n"
          "set termoption noenhanced\n"
          "set border lw 1.2\n"
          "set tics out\n"
          "set grid back lc rgb '#e3e3e3' lw 1 dt 1\n"
          "set key noautotitle\n",
          f);
}

/* ln r of the fitted line and its standard error at temperature T (delta
   method with the full covariance; README "The numbers"). */
static void line_at(const arrank_arrhenius *fit, double temp_K, double *y, double *se)
{
    double d = 1.0 / temp_K - 1.0 / fit->T_ref_K;
    *y = fit->b0 + fit->b1 * d;
    double v = fit->cov[0][0] + d * d * fit->cov[1][1] + 2.0 * d * fit->cov[0][1];
    *se = v > 0 ? sqrt(v) : 0.0;
}

/* Element separator inside one plot command. */
static void next_elem(FILE *f, int *first)
{
    if (*first) {
        fputs("plot ", f);
        *first = 0;
    } else
        fputs(", \\\n     ", f);
}

/* Point k of result r is in the fit: an unfitted sample has no fit, so all
   its points count as left out and are drawn hollow. */
static int point_used(const arrank_result *r, size_t k)
{
    if (!fitted(r))
        return 0;
    return r->used ? r->used[k] != 0 : 1;
}

/* Write the points of sample i that pass the filter as the data block
   $<tag><i>: columns 1000/T [1/K], ln r, sd of ln r (sd/r, delta method).
   Returns the count; writes nothing when it is 0. */
static size_t block_points(FILE *f, const arrank_result *r, size_t i, const char *tag, int used,
                           int with_sd)
{
    size_t n = 0;
    const arrank_sample *smp = r->sample;
    for (size_t k = 0; k < smp->n_points; k++) {
        const arrank_point *p = &smp->points[k];
        int has_sd = isfinite(p->rate_sd) && p->rate_sd > 0;
        if (!usable_point(p) || point_used(r, k) != used || has_sd != with_sd)
            continue;
        if (n == 0)
            fprintf(f, "$%s%zu << EOD\n", tag, i);
        fprintf(f, "%.9g %.9g %.9g\n", X_SCALE / p->temp_K, log(p->rate),
                has_sd ? p->rate_sd / p->rate : 0.0);
        n++;
    }
    if (n)
        fputs("EOD\n", f);
    return n;
}

/* Data block $<tag><i> of the fitted line between 1000/T = x0 and x1:
   columns x, ln r, lower and upper confidence limit of the line. */
static void block_line(FILE *f, const arrank_analysis *a, const arrank_arrhenius *fit,
                       const char *tag, size_t i, double x0, double x1, int steps)
{
    double t = arrank_t_quantile(a->options.confidence, fit->dof);
    fprintf(f, "$%s%zu << EOD\n", tag, i);
    for (int k = 0; k <= steps; k++) {
        double x = x0 + (x1 - x0) * k / steps, y, se;
        line_at(fit, X_SCALE / x, &y, &se);
        double w = isfinite(t) ? t * se : 0.0;
        fprintf(f, "%.9g %.9g %.9g %.9g\n", x, y, y - w, y + w);
    }
    fputs("EOD\n", f);
}

static int any_extrapolation(double T_op, const arrank_arrhenius *fit)
{
    return isfinite(T_op) && (T_op < fit->T_min_K || T_op > fit->T_max_K);
}

/* The smallest step of 1, 2, 2.5 or 5 times a power of ten that puts at
   most max_tics tics on span (common practice for axis labels). */
static double nice_step(double span, double max_tics)
{
    static const double mult[] = {1.0, 2.0, 2.5, 5.0};
    double p10 = pow(10.0, floor(log10(span / max_tics)));
    for (int e = 0; e < 3; e++, p10 *= 10)
        for (int m = 0; m < 4; m++)
            if (span / (mult[m] * p10) <= max_tics)
                return mult[m] * p10;
    return p10;
}

/* Top-axis tics at round degC values between t_lo and t_hi, at most
   max_tics of them (degC; the linked x2 axis takes its positions in degC). */
static void put_celsius_tics(FILE *f, double t_lo, double t_hi, double max_tics)
{
    double span = t_hi - t_lo;
    if (!(span > 0) || !isfinite(span)) {
        fputs("set x2tics out\n", f);
        return;
    }
    double step = nice_step(span, max_tics);
    fputs("set x2tics out (", f);
    int n = 0;
    for (double t = ceil(t_lo / step) * step; t <= t_hi + 1e-9 * span && n < 20; t += step) {
        double tc = fabs(t) < 1e-9 * step ? 0.0 : t;
        fprintf(f, "%s'%.6g' %.9g", n ? ", " : "", tc, tc);
        n++;
    }
    fputs(")\n", f);
}

static void fig_arrhenius(script *s)
{
    FILE *f = s->f;
    const arrank_analysis *a = s->a;
    double x_lo = INFINITY, x_hi = -INFINITY;
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_sample *smp = a->results[i].sample;
        for (size_t k = 0; k < smp->n_points; k++)
            if (usable_point(&smp->points[k])) {
                double x = X_SCALE / smp->points[k].temp_K;
                x_lo = fmin(x_lo, x);
                x_hi = fmax(x_hi, x);
            }
    }
    double T_op = a->options.operating_temp_K;
    int show_op = isfinite(T_op) && T_op > 0;
    if (show_op) {
        x_lo = fmin(x_lo, X_SCALE / T_op);
        x_hi = fmax(x_hi, X_SCALE / T_op);
    }
    double pad = 0.04 * (x_hi - x_lo);
    if (!(pad > 0))
        pad = 0.01 * x_hi;

    fputs("set title ", f);
    fputs("'Arrhenius plot' . \"\\n\" . ", f);
    put_q(f, s->title);
    fputs("\nset xlabel '1000 / T  [K⁻¹]'\nset ylabel ", f);
    put_qf(f, "ln( r / (%s) )", s->unit);
    fputs("\nset x2label 'T  [°C]'\n", f);
    fprintf(f, "set xrange [%.9g:%.9g]\n", x_lo - pad, x_hi + pad);
    /* The top axis is the same axis in degC: x2 = 1000/x - 273.15.  gnuplot's
       own tics on a linked nonlinear axis come out sparse, so place round
       degC values here. */
    fputs("set link x2 via 1000./x - 273.15 inverse 1000./(x + 273.15)\n"
          "set xtics nomirror\n",
          f);
    put_celsius_tics(f, X_SCALE / (x_hi + pad) - ZERO_C_K, X_SCALE / (x_lo - pad) - ZERO_C_K,
                     8.0);
    fputs("set mytics 2\n"
          "set style fill transparent solid 0.14 noborder\n",
          f);
    put_key(f, a, 1);
    if (show_op) {
        fprintf(f,
                "set arrow 1 from first %.9g, graph 0 to first %.9g, graph 1 nohead dt 2 "
                "lw 1.2 lc rgb '#555555' back\n",
                X_SCALE / T_op, X_SCALE / T_op);
        fprintf(f, "set label 1 'T_op = %.4g °C' at first %.9g, graph 0.03 left offset 0.4,0 "
                   "tc rgb '#444444' front\n",
                T_op - ZERO_C_K, X_SCALE / T_op);
    }

    /* Data blocks first: gnuplot needs them defined before the plot command.
       Four point blocks per sample: {in the fit, left out} x {with sd, without}. */
    static const char *const tags[4] = {"pue", "pun", "pxe", "pxn"};
    int any_excluded = 0, any_band = 0, any_ext = 0;
    size_t *cnt = calloc(a->n_results ? 4 * a->n_results : 1, sizeof *cnt);
    if (!cnt)
        return;
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *r = &a->results[i];
        for (int b = 0; b < 4; b++)
            cnt[4 * i + b] = block_points(f, r, i, tags[b], b < 2, b % 2 == 0);
        any_excluded |= cnt[4 * i + 2] + cnt[4 * i + 3] > 0;
        if (!fitted(r))
            continue;
        const arrank_arrhenius *fit = &r->fit;
        double xa = X_SCALE / fit->T_max_K, xb = X_SCALE / fit->T_min_K;
        block_line(f, a, fit, "fit", i, xa, xb, 60);
        any_band = 1;
        if (show_op && any_extrapolation(T_op, fit)) {
            double xop = X_SCALE / T_op;
            block_line(f, a, fit, "ext", i, xop < xa ? xop : xb, xop < xa ? xa : xop, 30);
            any_ext = 1;
        }
    }

    int first = 1;
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *r = &a->results[i];
        const char *c = arrank_plot_color(i);
        if (fitted(r)) {
            next_elem(f, &first);
            fprintf(f, "$fit%zu using 1:3:4 with filledcurves lc rgb '%s'", i, c);
            if (show_op && any_extrapolation(T_op, &r->fit)) {
                next_elem(f, &first);
                fprintf(f, "$ext%zu using 1:3:4 with filledcurves lc rgb '%s' "
                           "fs transparent solid 0.06 noborder", i, c);
                next_elem(f, &first);
                fprintf(f, "$ext%zu using 1:2 with lines lw 1.5 dt 2 lc rgb '%s'", i, c);
            }
            next_elem(f, &first);
            fprintf(f, "$fit%zu using 1:2 with lines lw 2.2 lc rgb '%s'", i, c);
        }
        int titled = 0;
        for (int b = 0; b < 4; b++) {
            if (cnt[4 * i + b] == 0)
                continue;
            int hollow = b >= 2, with_sd = b % 2 == 0;
            next_elem(f, &first);
            fprintf(f, "$%s%zu using 1:2%s with %s pt %d ps 1.8*PS lw 1.5 lc rgb '%s'", tags[b], i,
                    with_sd ? ":3" : "", with_sd ? "yerrorbars" : "points",
                    arrank_plot_point_type(i, hollow), c);
            if (!titled) {
                fputs(" title ", f);
                put_qf(f, "%s%s", sample_name(r), fitted(r) ? "" : " (not fitted)");
                titled = 1;
            }
        }
    }
    if (any_band) {
        next_elem(f, &first);
        fputs("keyentry with filledcurves lc rgb '#888888' fs solid 0.35 noborder title ", f);
        put_qf(f, "%.4g %% confidence band", 100.0 * a->options.confidence);
    }
    if (any_ext) {
        next_elem(f, &first);
        fputs("keyentry with lines dt 2 lw 1.5 lc rgb '#555555' title 'extrapolated to T_op'", f);
    }
    if (any_excluded) {
        next_elem(f, &first);
        fputs("keyentry with points pt 6 ps 1.5*PS lc rgb '#555555' "
              "title 'left out of the fit'", f);
    }
    if (first)
        fputs("plot 0 with lines lc rgb '#ffffff'", f);
    fputs("\n", f);
    free(cnt);
}

/* Short names of the flags set in mask, comma-separated, into buf. */
static void flag_list(unsigned mask, char *buf, size_t n)
{
    buf[0] = '\0';
    size_t len = 0;
    for (unsigned b = 0; b < ARRANK_FLAG_COUNT; b++) {
        if (!(mask & (1u << b)))
            continue;
        const char *name = arrank_flag_name(1u << b);
        if (!name)
            continue;
        int w = snprintf(buf + len, n - len, "%s%s", len ? ", " : "", name);
        if (w < 0 || (size_t)w >= n - len)
            break;
        len += (size_t)w;
    }
}

/* Text at the right of a row of the rate figure: P(best) when the ranking
   statistics have it, then the flag names. */
static void row_note(const arrank_result *r, char *buf, size_t n)
{
    char flags[400];
    flag_list(r->flags, flags, sizeof flags);
    double p = r->stats ? r->stats->p_best : NAN;
    if (isfinite(p) && p < 0.005)
        snprintf(buf, n, "P(best) < 0.01%s%s", flags[0] ? "; " : "", flags);
    else if (isfinite(p))
        snprintf(buf, n, "P(best) %.2f%s%s", p, flags[0] ? "; " : "", flags);
    else
        snprintf(buf, n, "%s", flags);
}

/* Length of the longest row note of the rate figure, in bytes. */
static size_t longest_row_note(const arrank_analysis *a)
{
    size_t longest = 0;
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *r = &a->results[i];
        if (!(r->has_prediction && fitted(r)))
            continue;
        char buf[512];
        row_note(r, buf, sizeof buf);
        longest = strlen(buf) > longest ? strlen(buf) : longest;
    }
    return longest;
}

/* Brackets at the right edge of the rate figure around each group of two or
   more samples the ranking statistics cannot tell apart (rank.h).  Returns
   the number of brackets drawn; nothing without ranking statistics. */
static size_t put_group_brackets(FILE *f, const arrank_analysis *a, const size_t *rows,
                                 size_t n_rows)
{
    if (!a->rank_stats)
        return 0;
    size_t drawn = 0;
    for (int g = 1; g <= a->rank_stats->n_groups; g++) {
        size_t first = SIZE_MAX, last = 0, members = 0;
        for (size_t k = 0; k < n_rows; k++) {
            const struct arrank_sample_stats *st = a->results[rows[k]].stats;
            if (st && st->group == g) {
                first = k < first ? k : first;
                last = k;
                members++;
            }
        }
        if (members < 2)
            continue;
        double y_top = (double)(n_rows - first) + 0.3, y_bot = (double)(n_rows - last) - 0.3;
        fprintf(f,
                "set arrow from graph 1.015, first %.9g to graph 1.015, first %.9g nohead "
                "lw 2.5 lc rgb '#555555' front\n"
                "set arrow from graph 1.0, first %.9g to graph 1.015, first %.9g nohead "
                "lw 2.5 lc rgb '#555555' front\n"
                "set arrow from graph 1.0, first %.9g to graph 1.015, first %.9g nohead "
                "lw 2.5 lc rgb '#555555' front\n",
                y_bot, y_top, y_top, y_top, y_bot, y_bot);
        drawn++;
    }
    return drawn;
}

/* Tics of a log axis between lo and hi (> 0).  gnuplot labels only whole
   decades, which leaves a narrow range with one label or none; below three
   decades place 1-2-5 (or 1..9 below one decade) mantissas here. */
static void put_log_tics(FILE *f, const char *axis, double lo, double hi)
{
    double span = log10(hi / lo);
    if (!(span > 0) || !isfinite(span) || span > 3.0) {
        fprintf(f, "set %stics\nset format %s '%%g'\n", axis, axis);
        return;
    }
    static const double fine[] = {1, 1.5, 2, 3, 4, 5, 6, 7, 8, 9};
    static const double coarse[] = {1, 2, 5};
    const double *m = span < 1.0 ? fine : coarse;
    size_t nm = span < 1.0 ? sizeof fine / sizeof *fine : sizeof coarse / sizeof *coarse;
    fprintf(f, "set %stics (", axis);
    int n = 0;
    for (double d = floor(log10(lo)); d <= ceil(log10(hi)); d++)
        for (size_t k = 0; k < nm; k++) {
            double v = m[k] * pow(10.0, d);
            if (v < lo || v > hi)
                continue;
            fprintf(f, "%s'%.3g' %.9g", n ? ", " : "", v, v);
            n++;
        }
    fputs(")\n", f);
    if (n < 2) /* very narrow: fall back to gnuplot's own */
        fprintf(f, "set %stics autofreq\nset format %s '%%.3g'\n", axis, axis);
}

static void fig_rate_at_T(script *s)
{
    FILE *f = s->f;
    const arrank_analysis *a = s->a;
    double T_op = a->options.operating_temp_K;
    double T_C = T_op - ZERO_C_K;
    /* Rows: ranked samples, best at the top. */
    size_t n_rows = 0;
    size_t *rows = malloc((a->n_results ? a->n_results : 1) * sizeof *rows);
    if (!rows)
        return;
    if (a->n_ranked > 0 && a->order) {
        for (size_t k = 0; k < a->n_ranked; k++)
            if (a->results[a->order[k]].has_prediction && fitted(&a->results[a->order[k]]))
                rows[n_rows++] = a->order[k];
    } else {
        for (size_t i = 0; i < a->n_results; i++)
            if (a->results[i].has_prediction && fitted(&a->results[i]))
                rows[n_rows++] = i;
    }
    double lo = INFINITY, hi = -INFINITY;
    for (size_t k = 0; k < n_rows; k++) {
        const arrank_prediction *p = &a->results[rows[k]].at_T;
        double l = isfinite(p->rate_lo) && p->rate_lo > 0 ? p->rate_lo : p->rate;
        double h = isfinite(p->rate_hi) ? p->rate_hi : p->rate;
        lo = fmin(lo, l);
        hi = fmax(hi, h);
    }
    if (!(lo > 0) || !isfinite(hi)) {
        lo = 1e-3;
        hi = 1.0;
    }
    double span = log10(hi / lo);
    double widen = pow(10.0, 0.06 * (span > 0.2 ? span : 0.2));

    fputs("set title ", f);
    put_qf(f, "Rate at %.4g °C with %.4g %% interval", T_C, 100.0 * a->options.confidence);
    fputs(" . \"\\n\" . ", f);
    put_q(f, s->title);
    fputs("\nset xlabel ", f);
    put_qf(f, "r at %.4g °C  [%s]  (log scale)", T_C, s->unit);
    fputs("\nset logscale x\n"
          "set grid xtics ytics\n"
          "set ytics nomirror scale 0\n"
          "set xtics mirror\n"
          "set key off\n",
          f);
    fprintf(f, "set xrange [%.9g:%.9g]\n", lo / widen, hi * widen);
    put_log_tics(f, "x", lo / widen, hi * widen);
    /* Room at the right for the flag names (in characters of the base font;
       they are drawn at 0.7 of it). */
    size_t flag_chars = longest_row_note(a);
    if (flag_chars)
        fprintf(f, "set rmargin %.3g\n", 0.62 * (double)flag_chars + 3.0);
    fprintf(f, "set yrange [0.4:%.9g]\n", (double)n_rows + 0.6);
    /* Sample names as tick labels: each one a quoted string expression. */
    fputs("set ytics (", f);
    for (size_t k = 0; k < n_rows; k++) {
        if (k)
            fputs(", ", f);
        put_q(f, sample_name(&a->results[rows[k]]));
        fprintf(f, " %zu", n_rows - k);
    }
    fputs(")\n", f);
    int any_flag = 0;
    for (size_t k = 0; k < n_rows; k++) {
        const arrank_result *r = &a->results[rows[k]];
        const arrank_prediction *p = &r->at_T;
        fprintf(f, "$rate%zu << EOD\n%.9g %zu %.9g %.9g\nEOD\n", k, p->rate, n_rows - k,
                isfinite(p->rate_lo) && p->rate_lo > 0 ? p->rate_lo : p->rate,
                isfinite(p->rate_hi) ? p->rate_hi : p->rate);
        char buf[512];
        row_note(r, buf, sizeof buf);
        if (buf[0]) {
            fprintf(f, "set label %zu ", k + 10);
            put_q(f, buf);
            fprintf(f, " at graph 1.03, first %zu left font ',%d' tc rgb '#444444'\n",
                    n_rows - k, font_of(s, 0.7));
        }
        any_flag |= r->flags != 0;
    }
    /* Notes go under the axis label, one row each, with room kept for them. */
    fputs("set bmargin 6.6\n", f);
    if (put_group_brackets(f, a, rows, n_rows) > 0)
        fprintf(f, "set label 4 'bracket at right: not told apart from the first of its group "
                   "(Holm, %.4g %%)' at character 0.6, character 2.4 left font ',%d' "
                   "tc rgb '#444444'\n",
                100.0 * a->options.confidence, font_of(s, 0.7));
    /* Samples without a rate at T_op are named under the figure, not dropped
       silently: at most five, then a count. */
    size_t n_out = 0;
    for (size_t i = 0; i < a->n_results; i++)
        if (!(a->results[i].has_prediction && fitted(&a->results[i]))) {
            if (n_out == 0)
                fputs("set label 3 'not fitted: '", f);
            if (n_out < 5) {
                fputs(n_out ? " . ', ' . " : " . ", f);
                put_q(f, sample_name(&a->results[i]));
            }
            n_out++;
        }
    if (n_out > 5)
        fprintf(f, " . ' (and %zu more)'", n_out - 5);
    if (n_out)
        fprintf(f, " at character 0.6, character 0.6 left font ',%d' tc rgb '#444444'\n",
                font_of(s, 0.7));
    if (any_flag)
        fprintf(f, "set label 2 'open marker: flagged (flags at right)' at character 0.6, "
                   "character 1.5 left font ',%d' tc rgb '#444444'\n",
                font_of(s, 0.7));
    int first = 1;
    for (size_t k = 0; k < n_rows; k++) {
        const arrank_result *r = &a->results[rows[k]];
        size_t i = rows[k];
        next_elem(f, &first);
        fprintf(f, "$rate%zu using 1:2:3:4 with xerrorbars pt %d ps 1.3*PS lw 2 lc rgb '%s'", k,
                arrank_plot_point_type(i, r->flags != 0), arrank_plot_color(i));
    }
    if (first)
        fputs("plot 1 with lines lc rgb '#ffffff'", f);
    fputs("\n", f);
    free(rows);
}

/* Quantile q of the joint confidence region of (Ea, ln A): the points with
   (theta - est)' C^-1 (theta - est) <= q.  C is the covariance scaled by the
   residual variance s^2, so q = 2 F(2, n-2; confidence), the F-based joint
   region of a linear regression (Draper & Smith, Applied Regression Analysis,
   3rd ed., 1998, sec. 5.4; from memory).  Not the chi-square 2-dof quantile,
   which would hold only for a known error variance. */
static double region_quantile(double confidence, double dof)
{
    if (!(dof > 0))
        return NAN;
    return 2.0 * gsl_cdf_fdist_Pinv(confidence, 2.0, dof);
}

/* The compensation line ln A = alpha + slope Ea of the ranking statistics
   (rank.h; Constable 1925) with its isokinetic temperature and verdict in the
   key, as a function of x = Ea in kJ/mol.  Nothing without ranking
   statistics or with too few samples. */
static void put_compensation_line(FILE *f, const arrank_analysis *a, int *first)
{
    if (!a->rank_stats)
        return;
    const arrank_compensation *c = &a->rank_stats->compensation;
    if (c->verdict == ARRANK_COMP_TOO_FEW || !isfinite(c->slope_mol_J) ||
        !isfinite(c->intercept))
        return;
    next_elem(f, first);
    fprintf(f, "%.9g + %.9g*x with lines dt 3 lw 1.8 lc rgb '#555555' title ", c->intercept,
            c->slope_mol_J * 1000.0);
    fputs("'compensation line'", f);
}

/* The verdict on the compensation line in words, under the ellipse note. */
static void put_compensation_note(FILE *f, const arrank_analysis *a, int font_pt)
{
    if (!a->rank_stats)
        return;
    const arrank_compensation *c = &a->rank_stats->compensation;
    if (c->verdict == ARRANK_COMP_TOO_FEW || !isfinite(c->slope_mol_J))
        return;
    const char *verdict = c->verdict == ARRANK_COMP_ARTIFACT
                              ? "compensation line: consistent with correlated errors"
                          : c->verdict == ARRANK_COMP_REAL
                              ? "compensation line: not explained by correlated errors"
                              : "compensation: ln A does not rise significantly with Ea";
    fputs("set label 5 ", f);
    put_q(f, verdict);
    fprintf(f, " at graph 0.02, graph 0.91 left font ',%d' tc rgb '#444444' front\n", font_pt);
    if (isfinite(c->T_iso_K) && c->T_iso_K > 0 && c->verdict != ARRANK_COMP_NONE) {
        fputs("set label 6 ", f);
        put_qf(f, "T_iso = %.0f K (%.0f °C); T_hm = %.0f K", c->T_iso_K, c->T_iso_K - ZERO_C_K,
               c->T_hm_K);
        fprintf(f, " at graph 0.02, graph 0.86 left font ',%d' tc rgb '#444444' front\n",
                font_pt);
    }
}

static void fig_ea_lnA(script *s)
{
    FILE *f = s->f;
    const arrank_analysis *a = s->a;
    fputs("set title ", f);
    put_qf(f, "Ea against ln A with joint %.4g %% confidence regions",
           100.0 * a->options.confidence);
    fputs(" . \"\\n\" . ", f);
    put_q(f, s->title);
    fputs("\nset xlabel 'apparent Ea  [kJ/mol]'\nset ylabel ", f);
    put_qf(f, "ln( A / (%s) )", s->unit);
    fputs("\nset mxtics 2\nset mytics 2\n", f);
    put_key(f, a, 0);
    /* Notes at the top left, which a compensation plot (rising to the right)
       leaves empty. */
    fprintf(f, "set label 2 'ellipses: joint %.4g %% regions, 2·F(2, n−2) quantile' "
               "at graph 0.02, graph 0.96 left font ',%d' "
               "tc rgb '#444444' front\n",
            100.0 * a->options.confidence, font_of(s, 0.7));
    put_compensation_note(f, a, font_of(s, 0.7));
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *r = &a->results[i];
        if (!fitted(r))
            continue;
        const arrank_arrhenius *fit = &r->fit;
        double ea = fit->ea_J_mol / 1000.0;
        /* Covariance of (Ea [kJ/mol], ln A); Cholesky factor L of the 2x2. */
        double c11 = fit->ea_se_J_mol * fit->ea_se_J_mol / 1e6;
        double c22 = fit->ln_A_se * fit->ln_A_se;
        double c12 = fit->cov_ea_lnA_J_mol / 1000.0;
        double q = region_quantile(a->options.confidence, fit->dof);
        fprintf(f, "$ctr%zu << EOD\n%.9g %.9g\nEOD\n", i, ea, fit->ln_A);
        if (!(c11 > 0) || !isfinite(q) || !isfinite(c22) || !isfinite(c12))
            continue;
        double l11 = sqrt(c11), l21 = c12 / l11, d = c22 - l21 * l21;
        double l22 = d > 0 ? sqrt(d) : 0.0; /* |corr| -> 1: a line segment */
        double rq = sqrt(q);
        fprintf(f, "$ell%zu << EOD\n", i);
        for (int k = 0; k <= 120; k++) {
            double th = 2.0 * PI * k / 120.0, u = cos(th), v = sin(th);
            fprintf(f, "%.9g %.9g\n", ea + rq * l11 * u, fit->ln_A + rq * (l21 * u + l22 * v));
        }
        fputs("EOD\n", f);
    }
    int first = 1;
    put_compensation_line(f, a, &first);
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *r = &a->results[i];
        if (!fitted(r))
            continue;
        const arrank_arrhenius *fit = &r->fit;
        int ell = fit->ea_se_J_mol > 0 && isfinite(region_quantile(a->options.confidence,
                                                                   fit->dof));
        if (ell) {
            next_elem(f, &first);
            fprintf(f, "$ell%zu using 1:2 with lines lw 1.8 lc rgb '%s'", i, arrank_plot_color(i));
        }
        next_elem(f, &first);
        fprintf(f, "$ctr%zu using 1:2 with points pt %d ps 1.5*PS lc rgb '%s' title ", i,
                arrank_plot_point_type(i, 0), arrank_plot_color(i));
        put_q(f, sample_name(r));
    }
    if (first)
        fputs("plot 0 with lines lc rgb '#ffffff'", f);
    fputs("\n", f);
}

/* ---- per-sample diagnostics --------------------------------------------- */

/* Marker of each point regime of diagnose.h, in key order: gnuplot point
   types {filled, hollow} (circle, triangle down, diamond, square) and the
   words of the key.  In the diagnostics figure the shape tells the regime and
   the fill whether the point is in the fit; the colour stays the sample's. */
static const struct {
    arrank_regime regime;
    const char *words;
    int pt[2];
} regime_marks[] = {
    {ARRANK_REGIME_KINETIC, "kinetic", {7, 6}},
    {ARRANK_REGIME_PORE, "pore-diffusion-like", {11, 10}},
    {ARRANK_REGIME_FILM, "film-diffusion-like", {13, 12}},
    {ARRANK_REGIME_UNCLASSIFIED, "unclassified", {5, 4}},
};
#define N_REGIMES (sizeof regime_marks / sizeof regime_marks[0])

/* The kinetic window is a neutral grey behind everything, so that it cannot
   be mistaken for a sample's colour or its confidence band. */
#define WINDOW_FILL "#e4e4e4"
#define WINDOW_EDGE "#8c8c8c"

/* Index into regime_marks of point k of r; -1 without a diagnosis. */
static int regime_of(const arrank_result *r, size_t k)
{
    const arrank_diagnosis *d = r->diagnosis;
    if (!d || k >= d->n_points)
        return -1;
    for (size_t m = 0; m < N_REGIMES; m++)
        if (regime_marks[m].regime == d->points[k].regime)
            return (int)m;
    return (int)N_REGIMES - 1;
}

/* The diagnosis's kinetic window, when there is one to show: finite bounds
   and at least one point of the fit classed kinetic (a sample that looks
   film-controlled throughout has a fit range but no kinetic window). */
static int kinetic_window(const arrank_result *r, double *lo_K, double *hi_K)
{
    const arrank_diagnosis *d = r->diagnosis;
    if (!d || !isfinite(d->window_lo_K) || !isfinite(d->window_hi_K) ||
        !(d->window_hi_K >= d->window_lo_K))
        return 0;
    int kinetic = 0;
    for (size_t k = 0; k < d->n_points && k < r->sample->n_points; k++)
        kinetic |= point_used(r, k) && d->points[k].regime == ARRANK_REGIME_KINETIC;
    *lo_K = d->window_lo_K;
    *hi_K = d->window_hi_K;
    return kinetic;
}

/* Shade [a, b] in first-axis x units on the current panel, with dashed
   edges, behind the grid and the data. */
static void put_window_shade(FILE *f, double a, double b)
{
    fprintf(f,
            "set object 1 rect from first %.9g, graph 0 to first %.9g, graph 1 behind "
            "fc rgb '" WINDOW_FILL "' fs solid 1.0 noborder\n"
            "set arrow 1 from first %.9g, graph 0 to first %.9g, graph 1 nohead dt 2 lw 1 "
            "lc rgb '" WINDOW_EDGE "' back\n"
            "set arrow 2 from first %.9g, graph 0 to first %.9g, graph 1 nohead dt 2 lw 1 "
            "lc rgb '" WINDOW_EDGE "' back\n",
            a, b, a, a, b, b);
}

/* Residuals ln r - fitted ln r of sample i, one data block per (regime,
   in the fit or not): $rg<m><u|x><i>, m the regime_marks index or 'n' when
   there is no diagnosis.  cnt[2 * (m + 1) + left_out] receives the counts. */
static void block_residuals(FILE *f, const arrank_result *r, size_t i,
                            size_t cnt[2 * (N_REGIMES + 1)])
{
    const arrank_sample *smp = r->sample;
    for (int m = -1; m < (int)N_REGIMES; m++)
        for (int out = 0; out < 2; out++) {
            size_t n = 0;
            for (size_t k = 0; k < smp->n_points; k++) {
                const arrank_point *p = &smp->points[k];
                if (!usable_point(p) || point_used(r, k) == out || regime_of(r, k) != m)
                    continue;
                if (n == 0) {
                    if (m < 0)
                        fprintf(f, "$rgn%c%zu << EOD\n", out ? 'x' : 'u', i);
                    else
                        fprintf(f, "$rg%d%c%zu << EOD\n", m, out ? 'x' : 'u', i);
                }
                double yf, se;
                line_at(&r->fit, p->temp_K, &yf, &se);
                fprintf(f, "%.9g %.9g\n", X_SCALE / p->temp_K, log(p->rate) - yf);
                n++;
            }
            if (n)
                fputs("EOD\n", f);
            cnt[2 * (m + 1) + out] = n;
        }
}

/* The diagnosis's local apparent Ea windows as the block $loc<i>: T_mid
   [degC], Ea [kJ/mol], standard error [kJ/mol] (0 when not known).  Returns
   the number of rows. */
static size_t block_local_ea(FILE *f, const arrank_result *r, size_t i)
{
    const arrank_diagnosis *d = r->diagnosis;
    size_t rows = 0;
    for (size_t k = 0; d && k < d->curvature.n_local; k++) {
        const arrank_local_ea *le = &d->curvature.local[k];
        if (!isfinite(le->ea_J_mol) || !isfinite(le->temp_mid_K))
            continue;
        if (rows == 0)
            fprintf(f, "$loc%zu << EOD\n", i);
        double se = isfinite(le->ea_se_J_mol) ? le->ea_se_J_mol / 1000.0 : 0.0;
        fprintf(f, "%.9g %.9g %.9g\n", le->temp_mid_K - ZERO_C_K, le->ea_J_mol / 1000.0, se);
        rows++;
    }
    if (rows)
        fputs("EOD\n", f);
    return rows;
}

/* Points the diagnosis marks for data quality, as the block $<tag><i> of
   residuals: which = 0 conversion above the differential limit, 1 outliers.
   Returns the count. */
static size_t block_marked(FILE *f, const arrank_result *r, size_t i, int which)
{
    const arrank_diagnosis *d = r->diagnosis;
    const arrank_sample *smp = r->sample;
    size_t n = 0;
    for (size_t k = 0; d && k < d->n_points && k < smp->n_points; k++) {
        const arrank_point *p = &smp->points[k];
        int marked = which == 0 ? d->points[k].high_conversion : d->points[k].outlier;
        if (!marked || !usable_point(p))
            continue;
        if (n == 0)
            fprintf(f, "$%s%zu << EOD\n", which == 0 ? "hcv" : "olr", i);
        double yf, se;
        line_at(&r->fit, p->temp_K, &yf, &se);
        fprintf(f, "%.9g %.9g\n", X_SCALE / p->temp_K, log(p->rate) - yf);
        n++;
    }
    if (n)
        fputs("EOD\n", f);
    return n;
}

/* Runs of one sample (heating and cooling branches, repeats) are told apart
   in the residual panel by a thin line through each run's points in order of
   1000/T, dash type by run: a run that sits apart from the others is what
   deactivation or activation between runs looks like.  Writes $run<j>_<i>
   for each run j with two or more usable points; returns how many runs. */
#define MAX_RUN_LINES 5
static size_t block_runs(FILE *f, const arrank_result *r, size_t i, int *drawn)
{
    const arrank_sample *smp = r->sample;
    size_t n_runs = smp->n_runs < MAX_RUN_LINES ? smp->n_runs : MAX_RUN_LINES;
    if (smp->n_runs < 2)
        return 0;
    size_t *idx = malloc((smp->n_points ? smp->n_points : 1) * sizeof *idx);
    if (!idx)
        return 0;
    for (size_t j = 0; j < n_runs; j++) {
        size_t m = 0;
        for (size_t k = 0; k < smp->n_points; k++)
            if (smp->points[k].run == (int)j && usable_point(&smp->points[k]))
                idx[m++] = k;
        drawn[j] = m >= 2;
        if (m < 2)
            continue;
        for (size_t a = 1; a < m; a++) /* insertion sort by temperature */
            for (size_t b = a; b > 0 && smp->points[idx[b - 1]].temp_K <
                                         smp->points[idx[b]].temp_K; b--) {
                size_t tmp = idx[b];
                idx[b] = idx[b - 1];
                idx[b - 1] = tmp;
            }
        fprintf(f, "$run%zu_%zu << EOD\n", j, i);
        for (size_t a = 0; a < m; a++) {
            const arrank_point *p = &smp->points[idx[a]];
            double yf, se;
            line_at(&r->fit, p->temp_K, &yf, &se);
            fprintf(f, "%.9g %.9g\n", X_SCALE / p->temp_K, log(p->rate) - yf);
        }
        fputs("EOD\n", f);
    }
    free(idx);
    return n_runs;
}

/* Panels and keys of the diagnostics figure in screen fractions: the keys sit
   under the panels, outside every data area, so no key can cover a point. */
#define DIAG_TOP 0.74
#define DIAG_BOTTOM 0.34
#define DIAG_KEY_TOP 0.19
#define DIAG_HEAD 0.885
#define DIAG_LEFT_L 0.105
#define DIAG_LEFT_R 0.465
#define DIAG_RIGHT_L 0.615
#define DIAG_RIGHT_R 0.975

static void fig_diagnostics(script *s, size_t i)
{
    FILE *f = s->f;
    const arrank_analysis *a = s->a;
    const arrank_result *r = &a->results[i];
    const arrank_arrhenius *fit = &r->fit;
    const arrank_sample *smp = r->sample;
    const arrank_diagnosis *d = r->diagnosis;
    const char *c = arrank_plot_color(i);
    double conf_pc = 100.0 * a->options.confidence;

    size_t cnt[2 * (N_REGIMES + 1)];
    block_residuals(f, r, i, cnt);
    size_t nloc = block_local_ea(f, r, i);
    int run_drawn[MAX_RUN_LINES] = {0};
    size_t n_runs = block_runs(f, r, i, run_drawn);
    size_t n_hcv = block_marked(f, r, i, 0), n_olr = block_marked(f, r, i, 1);
    double win_lo_K = NAN, win_hi_K = NAN;
    int has_window = kinetic_window(r, &win_lo_K, &win_hi_K);
    int any_pore = 0, any_out = 0;
    for (size_t m = 0; m <= N_REGIMES; m++)
        any_out |= cnt[2 * m + 1] > 0;
    for (size_t m = 0; m < N_REGIMES; m++)
        if (regime_marks[m].regime == ARRANK_REGIME_PORE)
            any_pore = cnt[2 * (m + 1)] + cnt[2 * (m + 1) + 1] > 0;

    /* Both panels span the sample's points with 5 % to spare. */
    double t_lo = INFINITY, t_hi = -INFINITY;
    for (size_t k = 0; k < smp->n_points; k++)
        if (usable_point(&smp->points[k])) {
            t_lo = fmin(t_lo, smp->points[k].temp_K);
            t_hi = fmax(t_hi, smp->points[k].temp_K);
        }
    double xa = X_SCALE / t_hi, xb = X_SCALE / t_lo, xp = 0.05 * (xb - xa);
    double ca = t_lo - ZERO_C_K, cb = t_hi - ZERO_C_K, cp = 0.05 * (cb - ca);

    /* The fitted Ea and its interval over the fit's range; a thin dashed
       line carries it across the panel for comparison. */
    double t = arrank_t_quantile(a->options.confidence, fit->dof);
    double ea = fit->ea_J_mol / 1000.0, w = isfinite(t) ? t * fit->ea_se_J_mol / 1000.0 : 0.0;
    fprintf(f, "$eab%zu << EOD\n%.9g %.9g %.9g %.9g\n%.9g %.9g %.9g %.9g\nEOD\n", i,
            fit->T_min_K - ZERO_C_K, ea, ea - w, ea + w, fit->T_max_K - ZERO_C_K, ea, ea - w,
            ea + w);

    fputs("set multiplot title ", f);
    put_qf(f, "Diagnostics: %s", sample_name(r));
    fprintf(f, " font ',%d'\n", font_of(s, 1.1));
    fprintf(f, "set tmargin at screen %.3f\nset bmargin at screen %.3f\n", DIAG_TOP, DIAG_BOTTOM);

    /* Left: residuals against 1000/T, degC along the top, with the +-2 s
       lines; marker shape by regime, open when left out of the fit. */
    fprintf(f, "set lmargin at screen %.3f\nset rmargin at screen %.3f\n", DIAG_LEFT_L,
            DIAG_LEFT_R);
    /* Panel headings at one height over both panels (a title would sit
       higher over the panel with the top axis). */
    fprintf(f, "set label 8 'residuals of the fit' at screen %.3f, screen %.3f center front\n"
               "set label 9 'local apparent Ea' at screen %.3f, screen %.3f center front\n",
            (DIAG_LEFT_L + DIAG_LEFT_R) / 2, DIAG_HEAD, (DIAG_RIGHT_L + DIAG_RIGHT_R) / 2,
            DIAG_HEAD);
    fputs("set xlabel '1000 / T  [K⁻¹]'\n"
          "set ylabel 'ln r − fitted ln r'\n"
          "set x2label 'T  [°C]' offset 0,-0.4\n"

          "set offsets 0, 0, graph 0.12, graph 0.12\n"
          "set xtics nomirror\n",
          f);
    fprintf(f, "set key at screen %.3f, screen %.3f left top Left reverse vertical maxrows 5 "
               "samplen 1.2 spacing 1.1 width 1 font ',%d'\n",
            DIAG_LEFT_L - 0.06, DIAG_KEY_TOP, font_of(s, 0.72));
    if (xb > xa) {
        fprintf(f, "set xrange [%.9g:%.9g]\nset xtics %.9g\n", xa - xp, xb + xp,
                nice_step(xb - xa + 2 * xp, 5.0));
        fputs("set link x2 via 1000./x - 273.15 inverse 1000./(x + 273.15)\n", f);
        put_celsius_tics(f, X_SCALE / (xb + xp) - ZERO_C_K, X_SCALE / (xa - xp) - ZERO_C_K,
                         6.0);
    }
    if (has_window) {
        double pad = 0.012 * (xb - xa + 2 * xp);
        put_window_shade(f, X_SCALE / win_hi_K - pad, X_SCALE / win_lo_K + pad);
    }
    double sd2 = 2.0 * fit->resid_sd;
    int first = 1;
    next_elem(f, &first);
    fputs("0 with lines lw 1.2 lc rgb '#444444'", f);
    if (isfinite(sd2) && sd2 > 0 && !fit->weighted) {
        next_elem(f, &first);
        fprintf(f, "%.9g with lines dt 2 lc rgb '#666666' title '±2 s (residual SD)'", sd2);
        next_elem(f, &first);
        fprintf(f, "%.9g with lines dt 2 lc rgb '#666666'", -sd2);
    }
    for (size_t j = 0; j < n_runs; j++) {
        if (!run_drawn[j])
            continue;
        next_elem(f, &first);
        fprintf(f, "$run%zu_%zu using 1:2 with lines lw 1 dt %zu lc rgb '%s' title ", j, i,
                j + 1, c);
        put_qf(f, "run '%s'", r->sample->runs[j]);
    }
    for (int m = -1; m < (int)N_REGIMES; m++)
        for (int out = 0; out < 2; out++) {
            if (!cnt[2 * (m + 1) + out])
                continue;
            int pt = m < 0 ? arrank_plot_point_type(i, out) : regime_marks[m].pt[out];
            next_elem(f, &first);
            if (m < 0)
                fprintf(f, "$rgn%c%zu", out ? 'x' : 'u', i);
            else
                fprintf(f, "$rg%d%c%zu", m, out ? 'x' : 'u', i);
            fprintf(f, " using 1:2 with points pt %d ps 1.6*PS lw 1.5 lc rgb '%s'", pt, c);
            if (m < 0)
                fputs(out ? " title 'left out of the fit'" : " title 'in the fit'", f);
        }
    /* The key names each regime present once, filled, whatever the fill of
       its points: the fill is explained by its own entry. */
    for (int m = 0; m < (int)N_REGIMES; m++)
        if (cnt[2 * (m + 1)] + cnt[2 * (m + 1) + 1]) {
            next_elem(f, &first);
            fprintf(f, "keyentry with points pt %d ps 1.3*PS lc rgb '%s' title ",
                    regime_marks[m].pt[0], c);
            put_qf(f, "%s", regime_marks[m].words);
        }
    if (any_out) {
        next_elem(f, &first);
        fputs("keyentry with points pt 6 ps 1.3*PS lc rgb '#555555' "
              "title 'open: left out of the fit'", f);
    }
    /* Data-quality marks drawn over the regime marker, in near-black so they
       show on any sample colour. */
    if (n_hcv) {
        next_elem(f, &first);
        fprintf(f, "$hcv%zu using 1:2 with points pt 2 ps 2.4*PS lw 1.5 lc rgb '#222222' "
                   "title ", i);
        put_qf(f, "conversion above %.4g %%", 100.0 * d->conversion_limit);
    }
    if (n_olr) {
        next_elem(f, &first);
        fprintf(f, "$olr%zu using 1:2 with points pt 1 ps 2.4*PS lw 1.5 lc rgb '#222222' "
                   "title 'outlier'", i);
    }
    if (has_window) {
        next_elem(f, &first);
        fputs("keyentry with filledcurves fc rgb '" WINDOW_FILL "' fs solid 1.0 noborder "
              "title ", f);
        put_qf(f, "kinetic window %.0f–%.0f °C", win_lo_K - ZERO_C_K, win_hi_K - ZERO_C_K);
    }
    fputs("\n", f);

    /* Right: the diagnosis's local apparent Ea windows against T, with the
       fitted Ea and its interval. */
    fputs("unset object 1\nunset arrow\nunset link x2\nunset x2tics\nunset x2label\n"
          "set xtics mirror\n",
          f);
    fprintf(f, "set lmargin at screen %.3f\nset rmargin at screen %.3f\n", DIAG_RIGHT_L,
            DIAG_RIGHT_R);
    fputs("unset label 8\nunset label 9\n"
          "set xlabel 'T  [°C]'\n"
          "set ylabel 'apparent Ea  [kJ/mol]'\n"
          "set style fill transparent solid 0.22 noborder\n"
          "set offsets 0, 0, graph 0.12, graph 0.12\n",
          f);
    fprintf(f, "set key at screen %.3f, screen %.3f left top Left reverse vertical "
               "samplen 1.2 spacing 1.1 font ',%d'\n",
            DIAG_RIGHT_L - 0.06, DIAG_KEY_TOP, font_of(s, 0.72));
    if (cb > ca)
        fprintf(f, "set xrange [%.9g:%.9g]\nset xtics %.9g\n", ca - cp, cb + cp,
                nice_step(cb - ca + 2 * cp, 6.0));
    if (has_window) {
        double pad = 0.012 * (cb - ca + 2 * cp);
        put_window_shade(f, win_lo_K - ZERO_C_K - pad, win_hi_K - ZERO_C_K + pad);
    }
    if (!d)
        fprintf(f, "set label 7 'local apparent Ea not shown: diagnostics turned off' at "
                   "graph 0.5, graph 0.93 center font ',%d' tc rgb '#444444' front\n",
                font_of(s, 0.8));
    first = 1;
    next_elem(f, &first);
    fprintf(f, "$eab%zu using 1:3:4 with filledcurves lc rgb '%s' title ", i, c);
    put_qf(f, "fitted Ea%s, %.4g %% interval", has_window ? " (kinetic window)" : "", conf_pc);
    next_elem(f, &first);
    fprintf(f, "$eab%zu using 1:2 with lines lw 2.2 lc rgb '%s'", i, c);
    next_elem(f, &first);
    fprintf(f, "%.9g with lines lw 1 dt 2 lc rgb '%s'", ea, c);
    if (nloc) {
        next_elem(f, &first);
        fprintf(f, "$loc%zu using 1:2:3 with yerrorlines pt 7 ps 1.3*PS lw 1.5 lc rgb '%s' "
                   "title 'local Ea, 3 neighbouring temperatures, ±1 SE'", i, c);
    }
    /* Strong pore diffusion halves the apparent Ea (Weisz & Prater, Adv.
       Catal. 6:143, 1954): the line the hot-end local Ea tends to. */
    if (any_pore) {
        next_elem(f, &first);
        fprintf(f, "%.9g with lines lw 1.5 dt 3 lc rgb '#444444' "
                   "title 'half the fitted Ea: strong pore-diffusion limit'", ea / 2.0);
    }
    if (has_window) {
        next_elem(f, &first);
        fputs("keyentry with filledcurves fc rgb '" WINDOW_FILL "' fs solid 1.0 noborder "
              "title 'kinetic window'", f);
    }
    fputs("\nunset multiplot\n", f);
}

static void put_figure(script *s, const figure *fig, unsigned format, const char *outname)
{
    FILE *f = s->f;
    fputs("reset\n", f);
    put_terminal(s, fig, format);
    fputs("set output ", f);
    put_q(f, outname);
    fputs("\n", f);
    common_style(f);
    switch (fig->kind) {
    case ARRANK_FIGURE_ARRHENIUS: fig_arrhenius(s); break;
    case ARRANK_FIGURE_RATE_AT_T: fig_rate_at_T(s); break;
    case ARRANK_FIGURE_EA_LNA: fig_ea_lnA(s); break;
    case ARRANK_FIGURE_DIAGNOSTICS: fig_diagnostics(s, fig->sample); break;
    }
    fputs("unset output\n", f);
}

/* One output: figure index, format and name. */
typedef struct {
    size_t fig;
    unsigned format;
    char name[128];
} output;

static size_t list_outputs(const figure *figs, size_t n_figs, unsigned formats, output *outs)
{
    size_t n = 0;
    if (!formats)
        formats = ARRANK_PLOT_SVG;
    for (size_t k = 0; k < n_figs; k++)
        for (size_t j = 0; j < N_FORMATS; j++)
            if (formats & formats_table[j].bit) {
                outs[n].fig = k;
                outs[n].format = formats_table[j].bit;
                snprintf(outs[n].name, sizeof outs[n].name, "%s.%s", figs[k].stem,
                         formats_table[j].ext);
                n++;
            }
    return n;
}

static void write_script(const arrank_analysis *a, const figure *figs, const output *outs,
                         size_t n_outs, char *const *names, FILE *f)
{
    script s;
    s.f = f;
    s.a = a;
    s.unit = a->campaign && a->campaign->rate_unit ? a->campaign->rate_unit : "report unit";
    s.title = a->campaign && a->campaign->title ? a->campaign->title
              : a->campaign && a->campaign->name ? a->campaign->name
                                                 : "";
    fputs("# arrank figures.  Text from the data appears only in single-quoted strings;\n"
          "# data blocks hold numbers only.\n",
          f);
    for (size_t k = 0; k < n_outs; k++) {
        /* A marker on gnuplot's stderr tells which figure an error belongs to. */
        fprintf(f, "print 'arrank-figure: %s'\n", outs[k].name);
        put_figure(&s, &figs[outs[k].fig], outs[k].format, names ? names[k] : outs[k].name);
    }
}

arrank_status arrank_plot_script(const arrank_analysis *a, unsigned formats, FILE *stream,
                                 arrank_error *err)
{
    figure *figs = malloc((a->n_results + 3) * sizeof *figs);
    output *outs = malloc((a->n_results + 3) * N_FORMATS * sizeof *outs);
    if (!figs || !outs) {
        free(figs);
        free(outs);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    size_t n_figs = list_figures(a, figs);
    size_t n_outs = list_outputs(figs, n_figs, formats, outs);
    write_script(a, figs, outs, n_outs, NULL, stream);
    free(figs);
    free(outs);
    if (fflush(stream) != 0 || ferror(stream))
        return arrank_errorf(err, ARRANK_EIO, "cannot write the gnuplot script: %s",
                             strerror(errno));
    return ARRANK_OK;
}

/* ---- running gnuplot ---------------------------------------------------- */

static int is_executable_file(const char *path)
{
    struct stat st;
    return stat(path, &st) == 0 && S_ISREG(st.st_mode) && access(path, X_OK) == 0;
}

static arrank_status not_found(arrank_error *err, const char *program, int from_env)
{
    if (from_env)
        return arrank_errorf(err, ARRANK_ENOGNUPLOT,
                             "gnuplot program '%s' (from ARRANK_GNUPLOT) not found; " INSTALL_HINT,
                             program);
    if (strchr(program, '/') || strcmp(program, "gnuplot") != 0)
        return arrank_errorf(err, ARRANK_ENOGNUPLOT,
                             "gnuplot program '%s' not found; " INSTALL_HINT, program);
    return arrank_errorf(err, ARRANK_ENOGNUPLOT,
                         "'gnuplot' not found on PATH; the figures need it: " INSTALL_HINT);
}

arrank_status arrank_plot_find_gnuplot(const char *program, char **path, arrank_error *err)
{
    *path = NULL;
    int from_env = 0;
    if (!program) {
        const char *env = getenv("ARRANK_GNUPLOT");
        if (env && *env) {
            program = env;
            from_env = 1;
        } else
            program = "gnuplot";
    }
    if (strchr(program, '/')) {
        if (!is_executable_file(program))
            return not_found(err, program, from_env);
        char *real = realpath(program, NULL);
        if (!real)
            return not_found(err, program, from_env);
        *path = real;
        return ARRANK_OK;
    }
    const char *env_path = getenv("PATH");
    if (!env_path || !*env_path)
        env_path = "/usr/bin:/bin";
    const char *p = env_path;
    while (1) {
        const char *colon = strchr(p, ':');
        size_t dlen = colon ? (size_t)(colon - p) : strlen(p);
        size_t n = dlen + strlen(program) + 2;
        char *cand = malloc(n);
        if (!cand)
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        /* An empty PATH entry means the current folder (POSIX XBD 8.3). */
        if (dlen == 0)
            snprintf(cand, n, "./%s", program);
        else
            snprintf(cand, n, "%.*s/%s", (int)dlen, p, program);
        if (is_executable_file(cand)) {
            char *real = realpath(cand, NULL);
            free(cand);
            if (!real)
                return not_found(err, program, from_env);
            *path = real;
            return ARRANK_OK;
        }
        free(cand);
        if (!colon)
            break;
        p = colon + 1;
    }
    return not_found(err, program, from_env);
}

/* Write all of buf to fd; EPIPE when the reader is gone.  The caller has
   SIGPIPE blocked. */
static int write_all(int fd, const char *buf, size_t len)
{
    while (len > 0) {
        ssize_t w = write(fd, buf, len);
        if (w < 0) {
            if (errno == EINTR)
                continue;
            return errno;
        }
        buf += w;
        len -= (size_t)w;
    }
    return 0;
}

/* gnuplot's stderr as one line: the figure it was drawing (from our
   "arrank-figure:" markers) and its error lines, joined with "; ".  Echoed
   command lines ("gnuplot> ...") and caret lines are left out. */
static void gnuplot_message(FILE *log, char *msg, size_t n)
{
    char line[1024], figure_name[160] = "", text[ARRANK_ERROR_MSG_MAX] = "";
    size_t len = 0;
    int found = 0;
    rewind(log);
    while (fgets(line, sizeof line, log)) {
        line[strcspn(line, "\r\n")] = '\0';
        for (char *c = line; *c; c++)
            if ((unsigned char)*c < 0x20 || *c == 0x7f)
                *c = ' ';
        char *l = line;
        while (*l == ' ')
            l++;
        if (!*l || *l == '^' || strncmp(l, "gnuplot>", 8) == 0)
            continue;
        if (strncmp(l, "arrank-figure: ", 15) == 0) {
            if (!found)
                snprintf(figure_name, sizeof figure_name, "%s", l + 15);
            continue;
        }
        found = 1;
        int w = snprintf(text + len, sizeof text - len, "%s%s", len ? "; " : "", l);
        if (w < 0 || (size_t)w >= sizeof text - len)
            break;
        len += (size_t)w;
    }
    if (!found)
        snprintf(text, sizeof text, "no message on its error output");
    if (figure_name[0])
        snprintf(msg, n, "gnuplot failed on '%s': %s", figure_name, text);
    else
        snprintf(msg, n, "gnuplot failed: %s", text);
}

/* Run program in folder dir with script on its standard input.  OK when it
   exits with status 0. */
static arrank_status run_gnuplot(const char *program, const char *dir, const char *script_text,
                                 size_t script_len, arrank_error *err)
{
    FILE *log = tmpfile();
    if (!log)
        return arrank_errorf(err, ARRANK_EIO, "cannot make a temporary file for gnuplot: %s",
                             strerror(errno));
    int in[2], st_pipe[2];
    if (pipe(in) != 0) {
        fclose(log);
        return arrank_errorf(err, ARRANK_EIO, "cannot make a pipe: %s", strerror(errno));
    }
    if (pipe(st_pipe) != 0) {
        close(in[0]);
        close(in[1]);
        fclose(log);
        return arrank_errorf(err, ARRANK_EIO, "cannot make a pipe: %s", strerror(errno));
    }
    /* The status pipe closes on exec; if exec fails the child sends errno. */
    fcntl(st_pipe[1], F_SETFD, FD_CLOEXEC);
    fcntl(in[1], F_SETFD, FD_CLOEXEC);
    fflush(NULL);
    pid_t pid = fork();
    if (pid < 0) {
        int e = errno;
        close(in[0]);
        close(in[1]);
        close(st_pipe[0]);
        close(st_pipe[1]);
        fclose(log);
        return arrank_errorf(err, ARRANK_EIO, "cannot start gnuplot: %s", strerror(e));
    }
    if (pid == 0) {
        /* Child: only async-signal-safe calls from here to exec. */
        int lf = fileno(log);
        close(st_pipe[0]);
        if (dup2(in[0], 0) < 0 || dup2(lf, 1) < 0 || dup2(lf, 2) < 0)
            goto child_fail;
        close(in[0]);
        if (chdir(dir) != 0)
            goto child_fail;
        execl(program, program, (char *)NULL);
    child_fail:;
        int e = errno;
        ssize_t ignored = write(st_pipe[1], &e, sizeof e);
        (void)ignored;
        _exit(127);
    }
    close(in[0]);
    close(st_pipe[1]);

    /* A gnuplot that dies early must not kill us with SIGPIPE: block it while
       writing, then take any pending one before restoring the mask. */
    sigset_t block, old;
    sigemptyset(&block);
    sigaddset(&block, SIGPIPE);
    sigprocmask(SIG_BLOCK, &block, &old);
    int werr = write_all(in[1], script_text, script_len);
    close(in[1]);
    sigset_t pending;
    sigpending(&pending);
    if (sigismember(&pending, SIGPIPE) && !sigismember(&old, SIGPIPE)) {
        struct timespec zero = {0, 0};
        sigtimedwait(&block, NULL, &zero);
    }
    sigprocmask(SIG_SETMASK, &old, NULL);

    int child_errno = 0;
    ssize_t got;
    do
        got = read(st_pipe[0], &child_errno, sizeof child_errno);
    while (got < 0 && errno == EINTR);
    close(st_pipe[0]);
    int status = 0;
    while (waitpid(pid, &status, 0) < 0)
        if (errno != EINTR) {
            fclose(log);
            return arrank_errorf(err, ARRANK_EPLOT, "cannot wait for gnuplot: %s",
                                 strerror(errno));
        }

    arrank_status st = ARRANK_OK;
    if (got == (ssize_t)sizeof child_errno) {
        if (child_errno == ENOENT || child_errno == EACCES || child_errno == ENOEXEC)
            st = arrank_errorf(err, ARRANK_ENOGNUPLOT, "cannot run gnuplot program '%s': %s; "
                               INSTALL_HINT, program, strerror(child_errno));
        else
            st = arrank_errorf(err, ARRANK_EPLOT, "cannot run gnuplot in '%s': %s", dir,
                               strerror(child_errno));
    } else if (!WIFEXITED(status) || WEXITSTATUS(status) != 0 || (werr && werr != EPIPE)) {
        char msg[ARRANK_ERROR_MSG_MAX];
        gnuplot_message(log, msg, sizeof msg);
        if (WIFSIGNALED(status))
            st = arrank_errorf(err, ARRANK_EPLOT, "%s (killed by signal %d)", msg,
                               WTERMSIG(status));
        else
            st = arrank_errorf(err, ARRANK_EPLOT, "%s", msg);
    } else if (werr) {
        char msg[ARRANK_ERROR_MSG_MAX];
        gnuplot_message(log, msg, sizeof msg);
        st = arrank_errorf(err, ARRANK_EPLOT, "gnuplot stopped reading its script: %s", msg);
    }
    fclose(log);
    return st;
}

void arrank_plot_files_clear(arrank_plot_files *files)
{
    if (!files)
        return;
    for (size_t k = 0; k < files->n; k++) {
        free(files->files[k].name);
        free(files->files[k].path);
    }
    free(files->files);
    files->files = NULL;
    files->n = 0;
}

static char *join_path(const char *dir, const char *name)
{
    size_t n = strlen(dir) + strlen(name) + 2;
    char *p = malloc(n);
    if (p)
        snprintf(p, n, "%s/%s", dir, name);
    return p;
}

arrank_status arrank_plot_write(const arrank_analysis *a, const char *out_dir,
                                const arrank_plot_options *options, arrank_plot_files *written,
                                arrank_error *err)
{
    arrank_plot_options opt = options ? *options : arrank_plot_defaults();
    if (written) {
        written->files = NULL;
        written->n = 0;
    }
    struct stat st_dir;
    if (stat(out_dir, &st_dir) != 0 || !S_ISDIR(st_dir.st_mode))
        return arrank_error_at(err, ARRANK_EIO, out_dir, 0, 0, "'%s' is not a folder", out_dir);

    char *program = NULL;
    arrank_status st = arrank_plot_find_gnuplot(opt.gnuplot, &program, err);
    if (st != ARRANK_OK)
        return st;

    figure *figs = malloc((a->n_results + 3) * sizeof *figs);
    output *outs = malloc((a->n_results + 3) * N_FORMATS * sizeof *outs);
    char **tmp = calloc((a->n_results + 3) * N_FORMATS, sizeof *tmp);
    char *text = NULL;
    size_t text_len = 0;
    size_t n_outs = 0;
    if (!figs || !outs || !tmp) {
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        goto done;
    }
    size_t n_figs = list_figures(a, figs);
    if (n_figs == 0) {
        st = arrank_errorf(err, ARRANK_EDATA, "nothing to draw: no sample has a positive rate");
        goto done;
    }
    n_outs = list_outputs(figs, n_figs, opt.formats, outs);
    for (size_t k = 0; k < n_outs; k++) {
        size_t n = strlen(outs[k].name) + 40;
        tmp[k] = malloc(n);
        if (!tmp[k]) {
            st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            goto done;
        }
        snprintf(tmp[k], n, ".%s.%ld.tmp", outs[k].name, (long)getpid());
    }
    FILE *mem = open_memstream(&text, &text_len);
    if (!mem) {
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        goto done;
    }
    write_script(a, figs, outs, n_outs, tmp, mem);
    fputs("exit\n", mem);
    if (fclose(mem) != 0) {
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        goto done;
    }
    st = run_gnuplot(program, out_dir, text, text_len, err);
    if (st != ARRANK_OK)
        goto done;
    if (written) {
        written->files = calloc(n_outs, sizeof *written->files);
        if (!written->files) {
            st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            goto done;
        }
    }
    for (size_t k = 0; k < n_outs; k++) {
        char *from = join_path(out_dir, tmp[k]);
        char *to = join_path(out_dir, outs[k].name);
        if (!from || !to) {
            free(from);
            free(to);
            st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            goto done;
        }
        if (rename(from, to) != 0) {
            st = arrank_error_at(err, ARRANK_EIO, to, 0, 0, "cannot write '%s': %s", to,
                                 strerror(errno));
            free(from);
            free(to);
            goto done;
        }
        free(from);
        if (written) {
            arrank_plot_file *pf = &written->files[written->n++];
            pf->kind = figs[outs[k].fig].kind;
            pf->sample = figs[outs[k].fig].sample;
            pf->format = outs[k].format;
            pf->name = arrank_strdup(outs[k].name);
            pf->path = to;
            if (!pf->name) {
                st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
                goto done;
            }
        } else
            free(to);
    }

done:
    /* Whatever is left under a temporary name is a failed or partial figure. */
    for (size_t k = 0; tmp && k < n_outs; k++) {
        if (!tmp[k])
            continue;
        char *from = join_path(out_dir, tmp[k]);
        if (from)
            unlink(from);
        free(from);
        free(tmp[k]);
    }
    if (st != ARRANK_OK && written)
        arrank_plot_files_clear(written);
    free(tmp);
    free(text);
    free(figs);
    free(outs);
    free(program);
    return st;
}
