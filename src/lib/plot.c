/*
 * plot.c - the review figures: a gnuplot script written from an analysis and
 * fed to one gnuplot child process through a pipe.
 *
 * Safety rule (DESIGN "Plotting"): the script is built from our own fixed text,
 * numbers printed by printf, and user strings passed through put_quoted(),
 * which makes one double-quoted gnuplot string with \ and " escaped and every
 * backquote written as the escape \140 (gnuplot substitutes `command` inside
 * double quotes, but never an escaped one, and expands no macro inside a
 * string); in a tic label, which gnuplot reads as a printf format, '%' is
 * doubled too.  Terminals are noenhanced, so ^ _ @ & { } are drawn as
 * themselves.  Data blocks hold only numbers written by "%.9g", so no line of
 * a block can be "EOD" or anything but numbers, and no sample name ever
 * enters one.
 *
 * Output files are written by gnuplot under their own names into a private
 * folder made by mkdtemp inside the output folder (the child runs with that
 * folder as its working directory, so no path from the command line enters
 * the script either, and no file is ever made at a name anyone could guess)
 * and renamed into place once gnuplot exits with status 0.
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

#include "arrank/diagnose.h"
#include "arrank/analysis_stats.h"
#include "plot_internal.h"
#include "util.h"
#include "number.h"



/* The reference catalyst has the look kept for it (arrank_plot_sample_look
   with reference set: black, a star, a heavier line), which no other sample
   has; every figure and the report take a sample's look from here. */
static int is_reference(const arrank_analysis *a, size_t i)
{
    return a && i < a->n_results && a->results[i].stats && a->results[i].stats->is_reference;
}

arrank_plot_look arrank_plot_look_of(const arrank_analysis *a, size_t i)
{
    return arrank_plot_sample_look(i, is_reference(a, i));
}

const char *arrank_plot_sample_color(const arrank_analysis *a, size_t i)
{
    return arrank_plot_look_of(a, i).color;
}

int arrank_plot_sample_point_type(const arrank_analysis *a, size_t i, int hollow)
{
    arrank_plot_look k = arrank_plot_look_of(a, i);
    return hollow ? k.point_hollow : k.point_filled;
}

arrank_plot_options arrank_plot_defaults(void)
{
    arrank_plot_options o;
    o.formats = ARRANK_PLOT_SVG;
    o.gnuplot = NULL;
    o.kinds = 0;
    o.show = ARRANK_PLOT_SHOW_DEFAULT;
    o.show_ids = NULL;
    o.show_flagged = 0;
    o.width_px = 960; /* "page" (arrank_plot_size) */
    o.height_px = 720;
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

/* text as one double-quoted gnuplot string, written in one pass (linear in
   the text: a name of many quotes once became a chain of concatenations that
   gnuplot took quadratic time to join).  Inside double quotes gnuplot reads
   backslash escapes and substitutes `command` (scanner.c), so \ and " are
   escaped and a backquote is written as the octal escape \140, which the
   scanner never sees as one; '@' macros and '$' are not expanded inside a
   string.  With as_format, each '%' is doubled: gnuplot reads the labels of
   an explicit tic list as printf formats of the tic's value (gprintf). */
static void put_quoted(FILE *f, const char *text, int as_format)
{
    const unsigned char *s = (const unsigned char *)(text ? text : "");
    fputs("(\"", f);
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
        if (cp == '\\' || cp == '"')
            fputc('\\', f);
        if (cp == '`')
            fputs("\\140", f);
        else if (cp == '%' && as_format)
            fputs("%%", f);
        else
            fwrite(s, 1, n, f);
        s += n;
    }
    fputs("\")", f);
}

void arrank_plot_put_q(FILE *f, const char *text)
{
    put_quoted(f, text, 0);
}

void arrank_plot_put_q_tic(FILE *f, const char *text)
{
    put_quoted(f, text, 1);
}

char *arrank_plot_quote(const char *text)
{
    char *buf = NULL;
    size_t len = 0;
    FILE *f = open_memstream(&buf, &len);
    if (!f)
        return NULL;
    arrank_plot_put_q(f, text);
    if (fclose(f) != 0) {
        free(buf);
        return NULL;
    }
    return buf;
}

void arrank_plot_put_qf(FILE *f, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    int n = vsnprintf(NULL, 0, fmt, ap);
    va_end(ap);
    char *buf = n >= 0 ? malloc((size_t)n + 1) : NULL;
    if (!buf) {
        arrank_plot_put_q(f, ""); /* out of memory: an empty label, never unquoted text */
        return;
    }
    va_start(ap, fmt);
    vsnprintf(buf, (size_t)n + 1, fmt, ap);
    va_end(ap);
    arrank_plot_put_q(f, buf);
    free(buf);
}

/* ---- figure list -------------------------------------------------------- */

typedef struct {
    arrank_figure_kind kind;
    size_t sample;
    char stem[112];
    char title[400]; /* the SVG's <title>: the figure's name and the campaign */
} figure;

static const struct {
    unsigned bit;
    const char *ext;
} formats_table[] = {{ARRANK_PLOT_SVG, "svg"}, {ARRANK_PLOT_PNG, "png"}, {ARRANK_PLOT_PDF, "pdf"}};
#define N_FORMATS (sizeof formats_table / sizeof formats_table[0])

int arrank_plot_fitted(const arrank_result *r)
{
    return r->error == NULL && r->fit.n >= 3;
}

int arrank_plot_usable_point(const arrank_point *p)
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

/* Room for the figures of an analysis: three for the campaign, two a sample. */
#define MAX_FIGURES(a) (2 * (a)->n_results + 3)

/* The per-sample figures of one kind, stem "<prefix>-NN[-ID]", for each
   sample that has one; appended at figs + n.  Returns the new count. */
static size_t list_sample_figures(const arrank_analysis *a, arrank_figure_kind kind,
                                  const char *prefix, figure *figs, size_t n)
{
    int width = a->n_results >= 100 ? 3 : 2;
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *r = &a->results[i];
        if (kind == ARRANK_FIGURE_DIAGNOSTICS ? !arrank_plot_fitted(r)
                                              : !arrank_plot_has_time_on_stream(r))
            continue;
        figs[n].kind = kind;
        figs[n].sample = i;
        char id[48];
        id_for_file(r->sample->id, id, sizeof id);
        snprintf(figs[n].stem, sizeof figs[n].stem, "%s-%0*zu%s%s", prefix, width, i + 1,
                 id[0] ? "-" : "", id);
        n++;
    }
    return n;
}

/* The figures an analysis gives, in drawing order, of the kinds asked for
   (a bit (1u << kind) each; 0: all).  Returns the count; figs has room for
   MAX_FIGURES(a). */
static size_t list_figures(const arrank_analysis *a, unsigned kinds, figure *figs)
{
    if (!kinds)
        kinds = ~0u;
    size_t n = 0, n_fit = 0, n_pts = 0, n_pred = 0;
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *r = &a->results[i];
        n_fit += arrank_plot_fitted(r);
        n_pred += arrank_plot_fitted(r) && r->has_prediction;
        for (size_t k = 0; k < r->sample->n_points; k++)
            n_pts += arrank_plot_usable_point(&r->sample->points[k]);
    }
    if (n_pts > 0 && (kinds & 1u << ARRANK_FIGURE_ARRHENIUS)) {
        figs[n] = (figure){ARRANK_FIGURE_ARRHENIUS, (size_t)-1, "arrhenius", ""};
        n++;
    }
    if (n_pred > 0 && (kinds & 1u << ARRANK_FIGURE_RATE_AT_T)) {
        figs[n] = (figure){ARRANK_FIGURE_RATE_AT_T, (size_t)-1, "rate-at-T", ""};
        n++;
    }
    if (n_fit > 0 && (kinds & 1u << ARRANK_FIGURE_EA_LNA)) {
        figs[n] = (figure){ARRANK_FIGURE_EA_LNA, (size_t)-1, "ea-lnA", ""};
        n++;
    }
    if (kinds & 1u << ARRANK_FIGURE_DIAGNOSTICS)
        n = list_sample_figures(a, ARRANK_FIGURE_DIAGNOSTICS, "diagnostics", figs, n);
    if (kinds & 1u << ARRANK_FIGURE_TIME_ON_STREAM)
        n = list_sample_figures(a, ARRANK_FIGURE_TIME_ON_STREAM, "time-on-stream", figs, n);
    for (size_t k = 0; k < n; k++) {
        char name[256];
        arrank_plot_figure_name(a, figs[k].kind, figs[k].sample, name, sizeof name);
        const char *t = a->campaign && a->campaign->title ? a->campaign->title
                        : a->campaign && a->campaign->name ? a->campaign->name
                                                           : "";
        snprintf(figs[k].title, sizeof figs[k].title, "%s%s%.140s", name, *t ? " – " : "", t);
    }
    return n;
}

double arrank_plot_t_hm(const arrank_analysis *a)
{
    if (a->rank_stats && isfinite(a->rank_stats->compensation.T_hm_K) &&
        a->rank_stats->compensation.T_hm_K > 0)
        return a->rank_stats->compensation.T_hm_K;
    /* without the ranking statistics: the harmonic mean of the fitted points'
       temperatures (Krug, Hunter & Grieger 1976), as compensation.c takes it */
    double sum = 0;
    size_t n = 0;
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *r = &a->results[i];
        if (!arrank_plot_fitted(r))
            continue;
        for (size_t k = 0; k < r->sample->n_points; k++)
            if (arrank_plot_point_used(r, k) && arrank_plot_usable_point(&r->sample->points[k])) {
                sum += 1.0 / r->sample->points[k].temp_K;
                n++;
            }
    }
    return n && sum > 0 ? (double)n / sum : NAN;
}

void arrank_plot_figure_name(const arrank_analysis *a, arrank_figure_kind kind, size_t sample,
                             char *buf, size_t n)
{
    double conf = 100.0 * a->options.confidence;
    switch (kind) {
    case ARRANK_FIGURE_ARRHENIUS:
        snprintf(buf, n, "Arrhenius plot with %.4g %% bands", conf);
        break;
    case ARRANK_FIGURE_RATE_AT_T:
        snprintf(buf, n, "Rate at %.4g °C with %.4g %% intervals",
                 a->options.operating_temp_K - ZERO_C_K, conf);
        break;
    case ARRANK_FIGURE_EA_LNA:
        snprintf(buf, n, "Activation energy against rate at %.0f °C (harmonic-mean T), "
                         "joint %.4g %% regions",
                 arrank_plot_t_hm(a) - ZERO_C_K, conf);
        break;
    case ARRANK_FIGURE_DIAGNOSTICS:
        snprintf(buf, n, "Diagnostics of %.160s",
                 sample < a->n_results ? arrank_plot_sample_name(&a->results[sample]) : "");
        break;
    case ARRANK_FIGURE_TIME_ON_STREAM:
        snprintf(buf, n, "Rate against time on stream of %.160s",
                 sample < a->n_results ? arrank_plot_sample_name(&a->results[sample]) : "");
        break;
    }
}

/* ---- script ------------------------------------------------------------- */

/* Font size as a fraction of the terminal's base size, for secondary text. */
int arrank_plot_font_of(const script *s, double fraction)
{
    int pt = (int)lround(s->font_pt * fraction);
    return pt < 6 ? 6 : pt;
}

const char *arrank_plot_sample_name(const arrank_result *r)
{
    return r->sample->id ? r->sample->id : "";
}

/* Figure sizes (plot_figures.c etc. grow them from the asked canvas). */
static void figure_size(script *s, const figure *fig, double *w, double *h)
{
    *w = s->base_w;
    *h = s->base_h;
    switch (fig->kind) {
    case ARRANK_FIGURE_ARRHENIUS: arrank_plot_size_arrhenius(s, w, h); break;
    case ARRANK_FIGURE_RATE_AT_T: arrank_plot_size_rate_at_T(s, w, h); break;
    case ARRANK_FIGURE_EA_LNA: arrank_plot_size_ea_lnA(s, w, h); break;
    case ARRANK_FIGURE_DIAGNOSTICS: arrank_plot_size_diagnostics(s, w, h); break;
    case ARRANK_FIGURE_TIME_ON_STREAM: break; /* the canvas asked for */
    }
}

static void put_terminal(script *s, const figure *fig, unsigned format)
{
    double w, h;
    s->fpx = arrank_plot_base_font_px(s->base_w);
    figure_size(s, fig, &w, &h);
    arrank_plot_terminal(s, format, w, h);
}

/* ln r of the fitted line and its standard error at temperature T (delta
   method with the full covariance; README "The numbers"). */
void arrank_plot_line_at(const arrank_arrhenius *fit, double temp_K, double *y, double *se)
{
    double d = 1.0 / temp_K - 1.0 / fit->T_ref_K;
    *y = fit->b0 + fit->b1 * d;
    double v = fit->cov[0][0] + d * d * fit->cov[1][1] + 2.0 * d * fit->cov[0][1];
    *se = v > 0 ? sqrt(v) : 0.0;
}

/* Element separator inside one plot command. */
void arrank_plot_next_elem(FILE *f, int *first)
{
    if (*first) {
        fputs("plot ", f);
        *first = 0;
    } else
        fputs(", \\\n     ", f);
}

/* Point k of result r is in the fit: an unfitted sample has no fit, so all
   its points count as left out and are drawn hollow. */
int arrank_plot_point_used(const arrank_result *r, size_t k)
{
    if (!arrank_plot_fitted(r))
        return 0;
    return r->used ? r->used[k] != 0 : 1;
}

/* Write the points of sample i that pass the filter as the data block
   $<tag><i>: columns 1000/T [1/K], ln r, sd of ln r (sd/r, delta method).
   Returns the count; writes nothing when it is 0. */
size_t arrank_plot_block_points(FILE *f, const arrank_result *r, size_t i, const char *tag,
                                int used, int with_sd)
{
    size_t n = 0;
    const arrank_sample *smp = r->sample;
    for (size_t k = 0; k < smp->n_points; k++) {
        const arrank_point *p = &smp->points[k];
        int has_sd = isfinite(p->rate_sd) && p->rate_sd > 0;
        if (!arrank_plot_usable_point(p) || arrank_plot_point_used(r, k) != used ||
            has_sd != with_sd)
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
void arrank_plot_block_line(FILE *f, const arrank_result *r, const char *tag, size_t i,
                            double x0, double x1, int steps)
{
    const arrank_arrhenius *fit = &r->fit;
    const double t = r->t_quantile; /* the pipeline's (analysis.c) */
    fprintf(f, "$%s%zu << EOD\n", tag, i);
    for (int k = 0; k <= steps; k++) {
        double x = x0 + (x1 - x0) * k / steps, y, se;
        arrank_plot_line_at(fit, X_SCALE / x, &y, &se);
        double w = isfinite(t) ? t * se : 0.0;
        fprintf(f, "%.9g %.9g %.9g %.9g\n", x, y, y - w, y + w);
    }
    fputs("EOD\n", f);
}

int arrank_plot_any_extrapolation(double T_op, const arrank_arrhenius *fit)
{
    return isfinite(T_op) && (T_op < fit->T_min_K || T_op > fit->T_max_K);
}

/* The pad that keeps an axis over [lo, hi] from being empty to gnuplot: pad,
   or more when [lo - pad, hi + pad] would be narrower than 2e-3 of scale.
   Points a hair apart (a fitted sample at one set point, 1e-7 K apart) would
   otherwise give a range whose ends print alike in "%.9g", which gnuplot
   refuses ("empty x range").  The floor (our choice) shows such points as one
   value with the axis about 0.1 % of scale to each side. */
double arrank_plot_min_pad(double lo, double hi, double pad, double scale)
{
    double min_half = 1e-3 * fabs(scale);
    if (!(min_half > 0))
        min_half = 1e-3;
    double need = min_half - 0.5 * (hi - lo);
    return pad >= need ? pad : need;
}

/* The smallest step of 1, 2, 2.5 or 5 times a power of ten that puts at
   most max_tics tics on span (common practice for axis labels). */
double arrank_plot_nice_step(double span, double max_tics)
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
void arrank_plot_put_celsius_tics(FILE *f, double t_lo, double t_hi, double max_tics)
{
    double span = t_hi - t_lo;
    if (!(span > 0) || !isfinite(span)) {
        fputs("set x2tics out\n", f);
        return;
    }
    double step = arrank_plot_nice_step(span, max_tics);
    fputs("set x2tics out (", f);
    int n = 0;
    for (double t = ceil(t_lo / step) * step; t <= t_hi + 1e-9 * span && n < 20; t += step) {
        double tc = fabs(t) < 1e-9 * step ? 0.0 : t;
        fprintf(f, "%s'%.6g' %.9g", n ? ", " : "", tc, tc);
        n++;
    }
    fputs(")\n", f);
}

static void put_figure(script *s, const figure *fig, unsigned format, const char *outname)
{
    FILE *f = s->f;
    fputs("reset\n", f);
    put_terminal(s, fig, format);
    fputs("set output ", f);
    arrank_plot_put_q(f, outname);
    fputs("\n", f);
    switch (fig->kind) {
    case ARRANK_FIGURE_ARRHENIUS: arrank_plot_fig_arrhenius(s); break;
    case ARRANK_FIGURE_RATE_AT_T: arrank_plot_fig_rate_at_T(s); break;
    case ARRANK_FIGURE_EA_LNA: arrank_plot_fig_ea_lnA(s); break;
    case ARRANK_FIGURE_DIAGNOSTICS: arrank_plot_fig_diagnostics(s, fig->sample); break;
    case ARRANK_FIGURE_TIME_ON_STREAM: arrank_plot_fig_stream(s, fig->sample); break;
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

/* Which samples the campaign figures draw (arrank_plot_options.show,
   .show_ids) into shown[n_results]: the first `show` in ranking order, then
   the unranked in campaign order; or the samples named.  EINVAL for a name
   that is no sample's. */
static arrank_status select_shown(const arrank_analysis *a, const arrank_plot_options *o,
                                  unsigned char *shown, size_t *n_shown, arrank_error *err)
{
    memset(shown, 0, a->n_results ? a->n_results : 1);
    *n_shown = 0;
    if (o->show_ids) {
        const char *p = o->show_ids;
        while (*p) {
            const char *comma = strchr(p, ',');
            size_t len = comma ? (size_t)(comma - p) : strlen(p);
            while (len && *p == ' ') {
                p++;
                len--;
            }
            while (len && p[len - 1] == ' ')
                len--;
            int found = 0;
            for (size_t i = 0; len && i < a->n_results; i++) {
                const char *id = arrank_plot_sample_name(&a->results[i]);
                if (strlen(id) == len && strncmp(id, p, len) == 0) {
                    *n_shown += !shown[i];
                    shown[i] = 1;
                    found = 1;
                }
            }
            if (len && !found)
                return arrank_errorf(err, ARRANK_EINVAL,
                                     "--show: no sample '%.*s' in the campaign", (int)len, p);
            p = comma ? comma + 1 : p + strlen(p);
        }
        return ARRANK_OK;
    }
    size_t want = o->show ? o->show : ARRANK_PLOT_SHOW_DEFAULT;
    for (size_t k = 0; k < a->n_ranked && a->order && *n_shown < want; k++)
        if (!shown[a->order[k]]) {
            shown[a->order[k]] = 1;
            (*n_shown)++;
        }
    for (size_t i = 0; i < a->n_results && *n_shown < want; i++)
        if (!shown[i] && a->results[i].rank <= 0) {
            shown[i] = 1;
            (*n_shown)++;
        }
    for (size_t i = 0; o->show_flagged && i < a->n_results; i++)
        if (!shown[i] && a->results[i].flags) {
            shown[i] = 1;
            (*n_shown)++;
        }
    return ARRANK_OK;
}

void arrank_plot_script_init(script *s, const arrank_analysis *a, FILE *f, int width_px,
                             int height_px)
{
    memset(s, 0, sizeof *s);
    s->f = f;
    s->a = a;
    const arrank_campaign *c = a->campaign;
    arrank_plot_unit_text(c && c->rate_unit ? c->rate_unit : "report unit", s->unit_buf,
                          sizeof s->unit_buf);
    s->unit = s->unit_buf;
    s->title = c && c->title ? c->title : c && c->name ? c->name : "";
    s->base_w = width_px >= 320 ? width_px : 960;
    s->base_h = height_px >= 320 ? height_px : 720;
}

static void write_script(const arrank_analysis *a, const arrank_plot_options *o,
                         const unsigned char *shown, size_t n_shown, const figure *figs,
                         const output *outs, size_t n_outs, char *const *names, FILE *f)
{
    script s;
    arrank_plot_script_init(&s, a, f, o->width_px, o->height_px);
    s.shown = shown;
    s.n_shown = n_shown;
    fputs("# arrank figures.  Text from the data appears only in quoted strings;\n"
          "# data blocks hold numbers only.\n",
          f);
    for (size_t k = 0; k < n_outs; k++) {
        /* A marker on gnuplot's stderr tells which figure an error belongs to. */
        fprintf(f, "print 'arrank-figure: %s'\n", outs[k].name);
        put_figure(&s, &figs[outs[k].fig], outs[k].format, names ? names[k] : outs[k].name);
    }
}

static arrank_status plot_script_in_c(const arrank_analysis *a, unsigned formats, FILE *stream,
                                      arrank_error *err)
{
    figure *figs = malloc(MAX_FIGURES(a) * sizeof *figs);
    output *outs = malloc(MAX_FIGURES(a) * N_FORMATS * sizeof *outs);
    if (!figs || !outs) {
        free(figs);
        free(outs);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    size_t n_figs = list_figures(a, 0, figs);
    size_t n_outs = list_outputs(figs, n_figs, formats, outs);
    arrank_plot_options o = arrank_plot_defaults();
    unsigned char *shown = malloc(a->n_results ? a->n_results : 1);
    size_t n_shown = 0;
    if (shown && select_shown(a, &o, shown, &n_shown, err) == ARRANK_OK)
        write_script(a, &o, shown, n_shown, figs, outs, n_outs, NULL, stream);
    free(shown);
    free(figs);
    free(outs);
    if (fflush(stream) != 0 || ferror(stream))
        return arrank_errorf(err, ARRANK_EIO, "cannot write the gnuplot script: %s",
                             strerror(errno));
    return ARRANK_OK;
}

/* The public entry: the work in the C locale, rounding to nearest, whatever the
   host program set (number.h), and then the host's settings back. */
arrank_status arrank_plot_script(const arrank_analysis *a, unsigned formats, FILE *stream,
                                 arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = plot_script_in_c(a, formats, stream, err);
    arrank_numbers_c_leave(&env);
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

/* Step 3: every finished figure from the private folder priv into out_dir
   under its own name.  A destination that cannot take a file (a folder) is
   found before anything moves, so a figure set goes in whole or not at all. */
static arrank_status move_figures(const figure *figs, const output *outs, size_t n_outs,
                                  const char *priv, const char *out_dir,
                                  arrank_plot_files *written, arrank_error *err)
{
    for (size_t k = 0; k < n_outs; k++) {
        char *to = arrank_join_path(out_dir, outs[k].name);
        if (!to)
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        struct stat st;
        int is_dir = lstat(to, &st) == 0 && S_ISDIR(st.st_mode);
        if (is_dir) {
            arrank_status e = arrank_error_at(err, ARRANK_EIO, to, 0, 0,
                                              "cannot write '%s': %s", to, strerror(EISDIR));
            free(to);
            return e;
        }
        free(to);
    }
    if (written) {
        written->files = calloc(n_outs ? n_outs : 1, sizeof *written->files);
        if (!written->files)
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    for (size_t k = 0; k < n_outs; k++) {
        arrank_status st = arrank_plot_move_into(priv, out_dir, outs[k].name, outs[k].format,
                                                 figs[outs[k].fig].title, figs[outs[k].fig].kind,
                                                 figs[outs[k].fig].sample, written, err);
        if (st != ARRANK_OK)
            return st;
    }
    return ARRANK_OK;
}

/* gnuplot writes every figure under its final name into a private folder
   made by mkdtemp inside out_dir (mode 0700, a name nobody can guess, so a
   link planted in out_dir is never followed); the figures are renamed into
   out_dir only when gnuplot has finished without error, and the folder is
   removed in every case. */
static arrank_status plot_write_in_c(const arrank_analysis *a, const char *out_dir,
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

    figure *figs = malloc(MAX_FIGURES(a) * sizeof *figs);
    output *outs = malloc(MAX_FIGURES(a) * N_FORMATS * sizeof *outs);
    char *priv = arrank_join_path(out_dir, ".arrank-figures.XXXXXX");
    int have_priv = 0;
    char *text = NULL;
    size_t text_len = 0;
    unsigned char *shown = NULL;
    if (!figs || !outs || !priv) {
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        goto done;
    }
    /* Step 1: the figures and the script. */
    shown = malloc(a->n_results ? a->n_results : 1);
    if (!shown) {
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        goto done;
    }
    size_t n_shown = 0;
    st = select_shown(a, &opt, shown, &n_shown, err);
    if (st != ARRANK_OK)
        goto done;
    size_t n_figs = list_figures(a, opt.kinds, figs);
    if (n_figs == 0) {
        st = arrank_errorf(err, ARRANK_EDATA, "nothing to draw: no sample has a positive rate");
        goto done;
    }
    size_t n_outs = list_outputs(figs, n_figs, opt.formats, outs);
    FILE *mem = open_memstream(&text, &text_len);
    if (!mem) {
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        goto done;
    }
    write_script(a, &opt, shown, n_shown, figs, outs, n_outs, NULL, mem);
    fputs("exit\n", mem);
    if (fclose(mem) != 0) {
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        goto done;
    }
    /* Step 2: gnuplot in the private folder. */
    if (!mkdtemp(priv)) {
        st = arrank_error_at(err, ARRANK_EIO, out_dir, 0, 0,
                             "cannot make a private folder in '%s': %s", out_dir,
                             strerror(errno));
        goto done;
    }
    have_priv = 1;
    st = arrank_plot_run_gnuplot(program, priv, text, text_len, err);
    /* Step 3: the figures into place. */
    if (st == ARRANK_OK)
        st = move_figures(figs, outs, n_outs, priv, out_dir, written, err);

done:
    if (have_priv)
        arrank_plot_remove_private(priv);
    if (st != ARRANK_OK && written)
        arrank_plot_files_clear(written);
    free(priv);
    free(text);
    free(shown);
    free(figs);
    free(outs);
    free(program);
    return st;
}

/* The public entry: the work in the C locale, rounding to nearest, whatever the
   host program set (number.h), and then the host's settings back. */
arrank_status arrank_plot_write(const arrank_analysis *a, const char *out_dir,
                                const arrank_plot_options *options, arrank_plot_files *written,
                                arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = plot_write_in_c(a, out_dir, options, written, err);
    arrank_numbers_c_leave(&env);
    return st;
}
