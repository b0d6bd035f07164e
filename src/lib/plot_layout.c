/*
 * plot_layout.c - placing text, plot areas and legends on a figure's canvas
 * in px (the plot family; house style in plot_style.c).  Every label is
 * placed here, at a position computed from the canvas and the font, so that
 * nothing is left to gnuplot's own guess of text widths.
 */
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/cautions.h"
#include "arrank/text.h"
#include "plot_internal.h"

/* The base font: a 60th of the asked width, 12 to 24 px (our choice: 16 px on
   the 960 px page, which the report shows at its own size). */
double arrank_plot_base_font_px(int width_px)
{
    double f = round(width_px / 60.0);
    return f < 12 ? 12 : f > 24 ? 24 : f;
}

void arrank_plot_terminal(script *s, unsigned format, double w, double h)
{
    s->W = w;
    s->H = h;
    FILE *f = s->f;
    /* SVG in px; PNG twice the pixels, its font sizes in pt (pango renders
       them at 96 dpi: 0.75 pt to the px, so 2 px of the SVG are 1.5 pt; at
       2 pt the text was a third larger than the SVG's and long names ran off
       the right edge); PDF at 96 px to the inch, fonts in pt (0.75 px). */
    switch (format) {
    case ARRANK_PLOT_PNG:
        fprintf(f,
                "set terminal pngcairo size %d,%d font 'DejaVu Sans,%d' noenhanced "
                "linewidth 2.0 background rgb '#ffffff'\n",
                (int)lround(2 * w), (int)lround(2 * h), s->font_pt = (int)lround(1.5 * s->fpx));
        fputs("PS = 2.0\n", f);
        break;
    case ARRANK_PLOT_PDF:
        fprintf(f,
                "set terminal pdfcairo size %.3fin,%.3fin font 'DejaVu Sans,%d' noenhanced "
                "linewidth 1.0 background rgb '#ffffff'\n",
                w / 96.0, h / 96.0, s->font_pt = (int)lround(0.75 * s->fpx));
        fputs("PS = 0.75\n", f);
        break;
    default:
        fprintf(f,
                "set terminal svg size %d,%d fixed font 'sans-serif,%d' noenhanced "
                "linewidth 1.0 background rgb '#ffffff'\n",
                (int)lround(w), (int)lround(h), s->font_pt = (int)lround(s->fpx));
        fputs("PS = 1.0\n", f);
        break;
    }
}

double arrank_plot_sx(const script *s, double x_px)
{
    return x_px / s->W;
}

double arrank_plot_sy(const script *s, double y_px)
{
    return 1.0 - y_px / s->H;
}

void arrank_plot_area(script *s, double l, double t, double r, double b)
{
    s->l = l;
    s->t = t;
    s->r = r;
    s->b = b;
    fprintf(s->f,
            "set lmargin at screen %.6f\nset rmargin at screen %.6f\n"
            "set tmargin at screen %.6f\nset bmargin at screen %.6f\n"
            "set object 90 rect from graph 0, graph 0 to graph 1, graph 1 behind "
            "fc rgb '" ARRANK_PLOT_AREA_FILL "' fs solid 1.0 noborder\n",
            arrank_plot_sx(s, l), arrank_plot_sx(s, r), arrank_plot_sy(s, t),
            arrank_plot_sy(s, b));
}

void arrank_plot_text(script *s, double x_px, double y_px, const char *align, double font_frac,
                      const char *color, int rotate, const char *text)
{
    FILE *f = s->f;
    fputs("set label ", f);
    arrank_plot_put_q(f, text);
    fprintf(f, " at screen %.6f, screen %.6f %s%s font ',%d' tc rgb '%s' front\n",
            arrank_plot_sx(s, x_px), arrank_plot_sy(s, y_px), align,
            rotate ? " rotate by 90" : " norotate", arrank_plot_font_of(s, font_frac),
            color ? color : ARRANK_INK);
}

void arrank_plot_fit_text(const char *text, double max_px, double font_px, char *out, size_t n)
{
    if (!n)
        return;
    const char *t = text ? text : "";
    size_t max_chars = (size_t)fmax(1.0, floor(max_px / (ARRANK_CHAR_EM * font_px)));
    size_t chars = arrank_plot_chars(t);
    if (chars <= max_chars) {
        snprintf(out, n, "%s", t);
        return;
    }
    /* keep what fits in max_chars - 1 character widths, then the ellipsis */
    size_t keep = max_chars - 1, c = 0, k = 0;
    while (t[k]) {
        size_t len = 1;
        while (((unsigned char)t[k + len] & 0xC0) == 0x80)
            len++;
        size_t w = arrank_text_columns(t + k, len);
        if (c + w > keep)
            break;
        c += w;
        k += len;
    }
    snprintf(out, n, "%.*s…", (int)k, t);
}

#define PAD_PX(s) (0.8 * (s)->fpx)
#define HEAD_FRAC 1.15
#define SUB_FRAC 0.8
#define CAPTION_FRAC 0.72

double arrank_plot_head(script *s, const char *name)
{
    double pad = PAD_PX(s), y = pad + 0.6 * HEAD_FRAC * s->fpx;
    char buf[512];
    arrank_plot_fit_text(name, s->W - 2 * pad, HEAD_FRAC * s->fpx, buf, sizeof buf);
    arrank_plot_text(s, pad, y, "left", HEAD_FRAC, ARRANK_INK, 0, buf);
    y += 0.6 * HEAD_FRAC * s->fpx;
    if (s->title && *s->title) {
        y += 0.35 * s->fpx + 0.6 * SUB_FRAC * s->fpx;
        arrank_plot_fit_text(s->title, s->W - 2 * pad, SUB_FRAC * s->fpx, buf, sizeof buf);
        arrank_plot_text(s, pad, y, "left", SUB_FRAC, ARRANK_INK_SOFT, 0, buf);
        y += 0.6 * SUB_FRAC * s->fpx;
    }
    return y + 0.4 * s->fpx;
}

double arrank_plot_caption_px(const script *s, size_t n)
{
    return (double)(n + 1) * 1.4 * CAPTION_FRAC * s->fpx + PAD_PX(s) * 0.6;
}

void arrank_plot_captions(script *s, const char *const *lines, size_t n)
{
    double pad = PAD_PX(s), step = 1.4 * CAPTION_FRAC * s->fpx;
    double y = s->H - pad * 0.6 - 0.7 * step;
    char buf[1024];
    arrank_plot_fit_text(ARRANK_CAUTION_APPARENT, s->W - 2 * pad, CAPTION_FRAC * s->fpx, buf,
                         sizeof buf);
    arrank_plot_text(s, pad, y, "left", CAPTION_FRAC, ARRANK_INK_SOFT, 0, buf);
    for (size_t k = n; k-- > 0;) {
        if (!lines[k] || !lines[k][0])
            continue;
        y -= step;
        arrank_plot_fit_text(lines[k], s->W - 2 * pad, CAPTION_FRAC * s->fpx, buf, sizeof buf);
        arrank_plot_text(s, pad, y, "left", CAPTION_FRAC, ARRANK_INK_SOFT, 0, buf);
    }
}

void arrank_plot_hidden_line(const script *s, char *buf, size_t n)
{
    const arrank_analysis *a = s->a;
    size_t len = 0, hidden = 0, named = 0;
    buf[0] = '\0';
    for (size_t i = 0; i < a->n_results; i++)
        hidden += !s->shown[i];
    if (!hidden)
        return;
    len = (size_t)snprintf(buf, n, "not drawn here (%zu; --show to choose): ", hidden);
    double room = s->W - 2 * PAD_PX(s) - 12 * ARRANK_CHAR_EM * CAPTION_FRAC * s->fpx;
    /* in ranking order, so the first named are the nearest to the top */
    for (size_t pass = 0; pass < 2; pass++)
        for (size_t k = 0; k < a->n_results; k++) {
            size_t i = pass == 0 ? (k < a->n_ranked && a->order ? a->order[k] : SIZE_MAX) : k;
            if (i == SIZE_MAX || (pass == 1 && a->results[i].rank > 0) || s->shown[i])
                continue;
            const char *id = arrank_plot_sample_name(&a->results[i]);
            double need = arrank_plot_text_px(buf, CAPTION_FRAC * s->fpx) +
                          arrank_plot_text_px(id, CAPTION_FRAC * s->fpx);
            if (need > room || len + strlen(id) + 3 >= n)
                continue;
            len += (size_t)snprintf(buf + len, n - len, "%s%s", named ? ", " : "", id);
            named++;
        }
    if (named < hidden && len + 32 < n)
        snprintf(buf + len, n - len, "%s%zu more", named ? " and " : "", hidden - named);
}

static int tic_decimals(double step)
{
    int d = (int)ceil(-log10(step) - 1e-9);
    if (fabs(step * pow(10.0, d) - round(step * pow(10.0, d))) > 1e-6)
        d++; /* 2.5 steps */
    return d < 0 ? 0 : d > 6 ? 6 : d;
}

/* The label of tic value v on an axis [lo, hi] with this step: fixed
   decimals, or, for steps under 1e-4 or values from 1e6 (a rate in mol
   g⁻¹ s⁻¹, say), %g with the significant digits the step needs, so that no
   two tics read alike ("0.000000"). */
static void tic_label(char *lab, size_t n, double v, double lo, double hi, double step)
{
    double big = fmax(fabs(lo), fabs(hi));
    if (step >= 1e-4 && big < 1e6) {
        snprintf(lab, n, "%.*f", tic_decimals(step), v);
        return;
    }
    int sig = (int)ceil(log10(big / step) - 1e-9) + 1;
    snprintf(lab, n, "%.*g", sig < 1 ? 1 : sig > 15 ? 15 : sig, v);
}

size_t arrank_plot_tic_chars(double lo, double hi, double max_tics)
{
    if (!(hi > lo) || !isfinite(hi - lo))
        return 6;
    double step = arrank_plot_nice_step(hi - lo, max_tics);
    char a[64], b[64];
    tic_label(a, sizeof a, ceil(lo / step) * step, lo, hi, step);
    tic_label(b, sizeof b, floor(hi / step) * step, lo, hi, step);
    return strlen(a) > strlen(b) ? strlen(a) : strlen(b);
}

size_t arrank_plot_linear_tics(FILE *f, const char *axis, double lo, double hi, double max_tics)
{
    if (!(hi > lo) || !isfinite(hi - lo)) {
        fprintf(f, "set %stics out\n", axis);
        return 6;
    }
    double step = arrank_plot_nice_step(hi - lo, max_tics);
    fprintf(f, "set %stics out (", axis);
    size_t widest = 0;
    int n = 0;
    for (double v = ceil(lo / step) * step; v <= hi + 1e-9 * (hi - lo) && n < 40; v += step) {
        double vv = fabs(v) < 1e-9 * step ? 0.0 : v;
        char lab[64];
        tic_label(lab, sizeof lab, vv, lo, hi, step);
        widest = strlen(lab) > widest ? strlen(lab) : widest;
        fprintf(f, "%s'%s' %.9g", n ? ", " : "", lab, vv);
        n++;
    }
    fputs(")\n", f);
    return widest;
}

void arrank_plot_put_line_look(FILE *f, const arrank_analysis *a, size_t i, double lw)
{
    arrank_plot_look k = arrank_plot_look_of(a, i);
    fprintf(f, "lc rgb '%s' dt %s lw %.3g", k.color, arrank_plot_dash(k.dash),
            lw * k.line_width);
}

#define LEGEND_FRAC 0.78

size_t arrank_plot_legend_rows(const script *s, const size_t *idx, size_t n, double w_px,
                               size_t *cols)
{
    double widest = 0;
    for (size_t k = 0; k < n; k++)
        widest = fmax(widest, arrank_plot_text_px(arrank_plot_sample_name(&s->a->results[idx[k]]),
                                                  LEGEND_FRAC * s->fpx));
    double col_w = widest + 3.6 * s->fpx;
    size_t c = (size_t)fmax(1.0, floor(w_px / col_w));
    if (c > n)
        c = n ? n : 1;
    *cols = c;
    return (n + c - 1) / c;
}

int arrank_plot_legend(script *s, const size_t *idx, size_t n, double x0, double y0, double x1,
                       double y1, int with_lines)
{
    size_t cols;
    size_t rows = arrank_plot_legend_rows(s, idx, n, x1 - x0, &cols);
    double row_h = 1.45 * LEGEND_FRAC * s->fpx;
    if (n == 0 || (double)rows * row_h > y1 - y0 + 1e-9)
        return 0;
    double col_w = (x1 - x0) / (double)cols;
    FILE *f = s->f;
    for (size_t k = 0; k < n; k++) {
        size_t i = idx[k];
        double x = x0 + (double)(k / rows) * col_w, y = y0 + ((double)(k % rows) + 0.5) * row_h;
        arrank_plot_look lk = arrank_plot_look_of(s->a, i);
        /* gnuplot's SVG terminal joins arrows of one colour and width into one
           path with the first one's dashes: every other entry a thousandth
           wider, so that each line keeps its own dash pattern */
        if (with_lines)
            fprintf(f, "set arrow from screen %.6f, screen %.6f to screen %.6f, screen %.6f "
                       "nohead lc rgb '%s' dt %s lw %.4g front\n",
                    arrank_plot_sx(s, x), arrank_plot_sy(s, y),
                    arrank_plot_sx(s, x + 2.4 * s->fpx), arrank_plot_sy(s, y), lk.color,
                    arrank_plot_dash(lk.dash), 1.5 + 0.001 * (double)(k % 2));
        fprintf(f, "set label '' at screen %.6f, screen %.6f point pt %d ps PS lc rgb '%s' "
                   "front\n",
                arrank_plot_sx(s, x + 1.2 * s->fpx), arrank_plot_sy(s, y), lk.point_filled,
                lk.color);
        char buf[256];
        arrank_plot_fit_text(arrank_plot_sample_name(&s->a->results[i]),
                             col_w - 3.0 * s->fpx, LEGEND_FRAC * s->fpx, buf, sizeof buf);
        arrank_plot_text(s, x + 2.9 * s->fpx, y, "left", LEGEND_FRAC, ARRANK_INK, 0, buf);
    }
    return 1;
}

/* Insertion sort of the order ord[0..m) by y (at most the samples drawn). */
static void sort_by_y(double *y, size_t *ord, size_t m)
{
    for (size_t p = 1; p < m; p++)
        for (size_t q = p; q > 0 && y[q - 1] > y[q]; q--) {
            double t0 = y[q];
            y[q] = y[q - 1];
            y[q - 1] = t0;
            size_t o = ord[q];
            ord[q] = ord[q - 1];
            ord[q - 1] = o;
        }
}

int arrank_plot_end_labels(script *s, const size_t *idx, const double *x_data,
                           const double *y_data, const double *y_px, size_t n, double x_px)
{
    double *y = malloc((n ? n : 1) * sizeof *y);
    size_t *ord = malloc((n ? n : 1) * sizeof *ord);
    if (!y || !ord) {
        free(y);
        free(ord);
        return 0;
    }
    for (size_t k = 0; k < n; k++) {
        y[k] = y_px[k];
        ord[k] = k;
    }
    sort_by_y(y, ord, n);
    /* each pushed down past the one above, then up from the bottom */
    double row = 1.3 * LEGEND_FRAC * s->fpx, top = s->t + 0.5 * row, bot = s->b - 0.5 * row;
    for (size_t p = 0; p < n; p++)
        y[p] = fmax(y[p], p ? y[p - 1] + row : top);
    for (size_t p = n; p-- > 0;)
        y[p] = fmin(y[p], p + 1 < n ? y[p + 1] - row : bot);
    for (size_t p = 0; p < n; p++) {
        size_t k = ord[p], i = idx[k];
        arrank_plot_look lk = arrank_plot_look_of(s->a, i);
        fprintf(s->f, "set arrow from first %.9g, first %.9g to screen %.6f, screen %.6f nohead "
                      "lc rgb '%s' lw 0.8 dt solid front\n",
                x_data[k], y_data[k], arrank_plot_sx(s, x_px - 0.2 * s->fpx),
                arrank_plot_sy(s, y[p]), lk.color);
        char buf[256];
        arrank_plot_fit_text(arrank_plot_sample_name(&s->a->results[i]),
                             s->W - x_px - 0.8 * s->fpx, LEGEND_FRAC * s->fpx, buf, sizeof buf);
        arrank_plot_text(s, x_px, y[p], "left", LEGEND_FRAC, lk.color, 0, buf);
    }
    free(y);
    free(ord);
    return 1;
}

void arrank_plot_arrhenius_axes(script *s, double x_lo, double x_hi, double y_lo, double y_hi)
{
    FILE *f = s->f;
    const double fp = s->fpx, l = s->l, t = s->t, r = s->r, b = s->b;
    char buf[300];
    fprintf(f, "set xrange [%.9g:%.9g]\nset yrange [%.9g:%.9g]\n", x_lo, x_hi, y_lo, y_hi);
    size_t xch = arrank_plot_tic_chars(x_lo, x_hi, 8);
    arrank_plot_linear_tics(f, "x", x_lo, x_hi,
                            fmax(2, (r - l) / (((double)xch * ARRANK_CHAR_EM + 2.5) * fp)));
    arrank_plot_linear_tics(f, "y", y_lo, y_hi, fmax(3, (b - t) / (2.4 * fp)));
    /* The top axis is the same axis in degC: x2 = 1000/x - 273.15. */
    fputs("set link x2 via 1000./x - 273.15 inverse 1000./(x + 273.15)\n", f);
    arrank_plot_put_celsius_tics(f, X_SCALE / x_hi - ZERO_C_K, X_SCALE / x_lo - ZERO_C_K,
                                 fmax(2, (r - l) / (6.0 * fp)));
    fputs("set style fill transparent solid 0.12 noborder\n", f);
    double mid = 0.5 * (l + r);
    arrank_plot_text(s, mid, t - 3.3 * fp, "center", 0.9, ARRANK_INK, 0, "T / °C");
    arrank_plot_text(s, mid, b + 3.5 * fp, "center", 0.9, ARRANK_INK, 0, "1000 K / T");
    snprintf(buf, sizeof buf, "ln (r / %s)", s->unit);
    arrank_plot_text(s, 1.4 * fp, 0.5 * (t + b), "center", 0.9, ARRANK_INK, 1, buf);
}
