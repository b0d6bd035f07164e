/*
 * plot_figures.c - the campaign's Arrhenius plot (every sample drawn, named
 * at the end of its line) and the compensation figure (Ea against ln r at the
 * harmonic-mean temperature with joint confidence regions), in the house
 * style (plot_style.c; the plot family: see plot.c for the safety rule on
 * user text).
 */
#include <stdio.h>

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/analysis_stats.h"
#include "arrank/diagnose.h"
#include "arrank/fit.h"
#include "plot_internal.h"

#define LABEL_FRAC 0.78

/* Indices of the samples drawn in the campaign figures, in ranking order
   (ranked first, then the rest in campaign order); fitted_only skips
   samples without a fit.  Returns the count; idx has room for n_results. */
static size_t shown_in_order(const script *s, size_t *idx, int fitted_only)
{
    const arrank_analysis *a = s->a;
    size_t n = 0;
    for (size_t k = 0; k < a->n_ranked && a->order; k++) {
        size_t i = a->order[k];
        if (s->shown[i] && (!fitted_only || arrank_plot_fitted(&a->results[i])))
            idx[n++] = i;
    }
    for (size_t i = 0; i < a->n_results; i++)
        if (s->shown[i] && a->results[i].rank <= 0 &&
            (!fitted_only || arrank_plot_fitted(&a->results[i])))
            idx[n++] = i;
    return n;
}

/* ---- Arrhenius plot ------------------------------------------------------ */

typedef struct {
    size_t *idx, n;            /* samples drawn */
    double x_lo, x_hi, y_lo, y_hi;
    double T_op;
    int show_op;
    int below;                 /* legend below instead of labels at line ends */
    size_t legend_rows;
    double head, l, t, r, b;   /* px */
    size_t n_caption;
} arr_layout;

/* The end of sample i's line at the cold side (1000/T and ln r): the fitted
   line at its lowest temperature, else its coldest point.  0 when none. */
static int line_end(const arrank_result *r, double *x, double *y)
{
    if (arrank_plot_fitted(r)) {
        double se;
        *x = X_SCALE / r->fit.T_min_K;
        arrank_plot_line_at(&r->fit, r->fit.T_min_K, y, &se);
        return isfinite(*y);
    }
    int any = 0;
    for (size_t k = 0; k < r->sample->n_points; k++) {
        const arrank_point *p = &r->sample->points[k];
        if (!arrank_plot_usable_point(p) || (any && X_SCALE / p->temp_K <= *x))
            continue;
        *x = X_SCALE / p->temp_K;
        *y = log(p->rate);
        any = 1;
    }
    return any;
}

static void arr_ranges(const script *s, arr_layout *L)
{
    L->x_lo = L->y_lo = INFINITY;
    L->x_hi = L->y_hi = -INFINITY;
    for (size_t k = 0; k < L->n; k++) {
        const arrank_result *r = &s->a->results[L->idx[k]];
        for (size_t j = 0; j < r->sample->n_points; j++) {
            const arrank_point *p = &r->sample->points[j];
            if (!arrank_plot_usable_point(p))
                continue;
            L->x_lo = fmin(L->x_lo, X_SCALE / p->temp_K);
            L->x_hi = fmax(L->x_hi, X_SCALE / p->temp_K);
            L->y_lo = fmin(L->y_lo, log(p->rate));
            L->y_hi = fmax(L->y_hi, log(p->rate));
        }
        if (L->show_op && arrank_plot_fitted(r)) {
            double y, se;
            arrank_plot_line_at(&r->fit, L->T_op, &y, &se);
            if (isfinite(y)) {
                L->y_lo = fmin(L->y_lo, y);
                L->y_hi = fmax(L->y_hi, y);
            }
        }
    }
    if (L->show_op) {
        L->x_lo = fmin(L->x_lo, X_SCALE / L->T_op);
        L->x_hi = fmax(L->x_hi, X_SCALE / L->T_op);
    }
    if (!isfinite(L->x_lo)) {
        L->x_lo = 1.5;
        L->x_hi = 2.5;
        L->y_lo = 0;
        L->y_hi = 1;
    }
    double px = arrank_plot_min_pad(L->x_lo, L->x_hi, 0.04 * (L->x_hi - L->x_lo), L->x_hi);
    double py = arrank_plot_min_pad(L->y_lo, L->y_hi, 0.06 * (L->y_hi - L->y_lo),
                                    fmax(1.0, fabs(L->y_hi)));
    L->x_lo -= px;
    L->x_hi += px;
    L->y_lo -= py;
    L->y_hi += py;
}

/* The layout of the Arrhenius plot on a canvas of s->W x s->H: margins for
   the heading, the degC axis, the tick labels and captions; the names at
   the line ends in a column at the right, or a legend below when they do
   not fit beside the plot (then the canvas grows by its rows). */
static void arr_layout_make(script *s, arr_layout *L)
{
    const arrank_analysis *a = s->a;
    double f = s->fpx, pad = 0.8 * f;
    L->T_op = a->options.operating_temp_K;
    L->show_op = isfinite(L->T_op) && L->T_op > 0;
    arr_ranges(s, L);
    L->n_caption = 2;
    L->head = 0.8 * f + 1.38 * f + (s->title && *s->title ? 0.35 * f + 0.96 * f : 0) + 0.4 * f;
    L->t = L->head + 4.0 * f;
    L->b = s->H - arrank_plot_caption_px(s, L->n_caption) - 4.6 * f;
    size_t ych = arrank_plot_tic_chars(L->y_lo, L->y_hi, fmax(3, (L->b - L->t) / (2.4 * f)));
    L->l = pad + 1.6 * f + (double)ych * ARRANK_CHAR_EM * f + 0.9 * f;
    double widest = 0;
    for (size_t k = 0; k < L->n; k++)
        widest = fmax(widest, arrank_plot_text_px(arrank_plot_sample_name(&a->results[L->idx[k]]),
                                                  LABEL_FRAC * f));
    L->r = s->W - pad - widest - 1.6 * f;
    double row = 1.3 * LABEL_FRAC * f;
    /* names wider than 30 % of the canvas would squeeze the plot: they go
       whole into a legend below instead; so do more names than the plot of
       the asked height has room for (the canvas then grows by the legend) */
    double b_asked = s->base_h - arrank_plot_caption_px(s, L->n_caption) - 4.6 * f;
    L->below = (double)L->n * row > b_asked - L->t || widest > 0.3 * s->W;
    if (L->below) {
        size_t cols;
        L->legend_rows = arrank_plot_legend_rows(s, L->idx, L->n, s->W - 2 * pad, &cols);
        L->r = s->W - pad - 1.0 * f;
        L->b = s->H - arrank_plot_caption_px(s, L->n_caption) - 4.6 * f -
               (double)L->legend_rows * 1.45 * LABEL_FRAC * f - 0.6 * f;
    }
}

void arrank_plot_size_arrhenius(script *s, double *w, double *h)
{
    size_t *idx = malloc((s->a->n_results ? s->a->n_results : 1) * sizeof *idx);
    if (!idx)
        return;
    arr_layout L = {.idx = idx};
    L.n = shown_in_order(s, idx, 0);
    s->W = *w;
    s->H = *h;
    arr_layout_make(s, &L);
    if (L.below)
        *h += (double)L.legend_rows * 1.45 * 0.78 * s->fpx + 1.0 * s->fpx;
    free(idx);
}

/* Names at the line ends, spread so that no two overlap
   (arrank_plot_end_labels), for the lines that have an end to name. */
static void arr_end_labels(script *s, const arr_layout *L)
{
    size_t n = L->n;
    double *ypx = malloc((n ? n : 1) * sizeof *ypx), *xe = malloc((n ? n : 1) * sizeof *xe);
    double *ye = malloc((n ? n : 1) * sizeof *ye);
    size_t *idx = malloc((n ? n : 1) * sizeof *idx);
    size_t m = 0;
    for (size_t k = 0; ypx && xe && ye && idx && k < n; k++) {
        double x = 0, v = 0;
        if (!line_end(&s->a->results[L->idx[k]], &x, &v))
            continue;
        xe[m] = x;
        ye[m] = v;
        ypx[m] = L->t + (L->y_hi - v) / (L->y_hi - L->y_lo) * (L->b - L->t);
        idx[m++] = L->idx[k];
    }
    if (ypx && xe && ye && idx)
        arrank_plot_end_labels(s, idx, xe, ye, ypx, m, L->r + 1.1 * s->fpx);
    free(ypx);
    free(xe);
    free(ye);
    free(idx);
}

/* Axes, heading, captions and labels of the Arrhenius plot. */
static void arr_frame(script *s, const arr_layout *L, int any_excluded, int any_ext)
{
    FILE *f = s->f;
    double fp = s->fpx;
    char name[256], buf[600];
    arrank_plot_style_axes(f, 1);
    arrank_plot_figure_name(s->a, ARRANK_FIGURE_ARRHENIUS, SIZE_MAX, name, sizeof name);
    arrank_plot_head(s, name);
    arrank_plot_area(s, L->l, L->t, L->r, L->b);
    arrank_plot_arrhenius_axes(s, L->x_lo, L->x_hi, L->y_lo, L->y_hi);
    fputs("set mytics 2\n", f);
    if (L->show_op) {
        fprintf(f, "set arrow 1 from first %.9g, graph 0 to first %.9g, graph 1 nohead dt (6,4) "
                   "lw 1 lc rgb '#777777' back\n",
                X_SCALE / L->T_op, X_SCALE / L->T_op);
        char op[64];
        snprintf(op, sizeof op, "operating %.4g °C", L->T_op - ZERO_C_K);
        fputs("set label ", f);
        arrank_plot_put_q(f, op);
        fprintf(f, " at first %.9g, graph 0.03 left rotate by 90 offset -0.6,0 font ',%d' "
                   "tc rgb '" ARRANK_INK_SOFT "' front\n",
                X_SCALE / L->T_op, arrank_plot_font_of(s, 0.7));
    }
    snprintf(buf, sizeof buf, "shaded: %.4g %% band of each fitted line%s%s",
             100.0 * s->a->options.confidence,
             any_excluded ? "; open markers: points left out of the fit" : "",
             any_ext ? "; thin dashes: extrapolated to the operating temperature" : "");
    char hidden[600];
    arrank_plot_hidden_line(s, hidden, sizeof hidden);
    const char *lines[2] = {buf, hidden};
    arrank_plot_captions(s, lines, 2);
    if (L->below)
        arrank_plot_legend(s, L->idx, L->n, 0.8 * fp,
                           L->b + 4.6 * fp - 0.2 * fp, s->W - 0.8 * fp,
                           s->H - arrank_plot_caption_px(s, 2), 1);
    else
        arr_end_labels(s, L);
}

/* The data blocks of sample i; cnt[4] point blocks {in, out} x {sd, no sd}. */
static void arr_blocks(FILE *f, const arrank_result *r, size_t i, const arr_layout *L,
                       size_t cnt[4], int *any_ext)
{
    static const char *const tags[4] = {"pue", "pun", "pxe", "pxn"};
    for (int b = 0; b < 4; b++)
        cnt[b] = arrank_plot_block_points(f, r, i, tags[b], b < 2, b % 2 == 0);
    if (!arrank_plot_fitted(r))
        return;
    double xa = X_SCALE / r->fit.T_max_K, xb = X_SCALE / r->fit.T_min_K;
    arrank_plot_block_line(f, r, "fit", i, xa, xb, 60);
    if (L->show_op && arrank_plot_any_extrapolation(L->T_op, &r->fit)) {
        double xop = X_SCALE / L->T_op;
        arrank_plot_block_line(f, r, "ext", i, xop < xa ? xop : xb, xop < xa ? xa : xop, 30);
        *any_ext = 1;
    }
}

void arrank_plot_fig_arrhenius(script *s)
{
    FILE *f = s->f;
    const arrank_analysis *a = s->a;
    size_t *idx = malloc((a->n_results ? a->n_results : 1) * sizeof *idx);
    size_t *cnt = calloc(a->n_results ? 4 * a->n_results : 1, sizeof *cnt);
    if (!idx || !cnt) {
        free(idx);
        free(cnt);
        return;
    }
    arr_layout L = {.idx = idx};
    L.n = shown_in_order(s, idx, 0);
    arr_layout_make(s, &L);
    int any_excluded = 0, any_ext = 0;
    for (size_t k = 0; k < L.n; k++) {
        size_t i = idx[k];
        arr_blocks(f, &a->results[i], i, &L, cnt + 4 * i, &any_ext);
        any_excluded |= cnt[4 * i + 2] + cnt[4 * i + 3] > 0;
    }
    arr_frame(s, &L, any_excluded, any_ext);

    static const char *const tags[4] = {"pue", "pun", "pxe", "pxn"};
    int first = 1;
    /* bands first (under every line), then lines, then points */
    for (int layer = 0; layer < 3; layer++)
        for (size_t k = L.n; k-- > 0;) {
            size_t i = idx[k];
            const arrank_result *r = &a->results[i];
            arrank_plot_look lk = arrank_plot_look_of(a, i);
            int ext = L.show_op && arrank_plot_fitted(r) &&
                      arrank_plot_any_extrapolation(L.T_op, &r->fit);
            if (layer == 0 && arrank_plot_fitted(r)) {
                arrank_plot_next_elem(f, &first);
                fprintf(f, "$fit%zu using 1:3:4 with filledcurves lc rgb '%s'", i, lk.color);
            } else if (layer == 1 && arrank_plot_fitted(r)) {
                if (ext) {
                    arrank_plot_next_elem(f, &first);
                    fprintf(f, "$ext%zu using 1:2 with lines lw 1 dt (3,4) lc rgb '%s'", i,
                            lk.color);
                }
                arrank_plot_next_elem(f, &first);
                fprintf(f, "$fit%zu using 1:2 with lines ", i);
                arrank_plot_put_line_look(f, a, i, 2.0);
            } else if (layer == 2) {
                for (int b = 0; b < 4; b++) {
                    if (cnt[4 * i + b] == 0)
                        continue;
                    arrank_plot_next_elem(f, &first);
                    fprintf(f, "$%s%zu using 1:2%s with %s pt %d ps 1.1*PS lw 1.2 lc rgb '%s'",
                            tags[b], i, b % 2 == 0 ? ":3" : "",
                            b % 2 == 0 ? "yerrorbars" : "points",
                            b >= 2 ? lk.point_hollow : lk.point_filled, lk.color);
                }
            }
        }
    if (first)
        fputs("plot NaN notitle", f);
    fputs("\n", f);
    free(idx);
    free(cnt);
}

/* ---- compensation -------------------------------------------------------- */

/* One sample in the compensation figure: Ea [kJ/mol], ln r at T_hm, and
   their covariance (delta method on the centred line: ln r(T) = b0 + b1 d,
   d = 1/T - 1/T_ref, Ea = -R b1; README "The numbers"). */
typedef struct {
    double ea, y, c11, c22, c12, q;
    int ellipse;
} comp_point;

static comp_point comp_point_of(const arrank_result *r, double T_hm)
{
    const arrank_arrhenius *fit = &r->fit;
    comp_point p;
    double d = 1.0 / T_hm - 1.0 / fit->T_ref_K;
    double se;
    arrank_plot_line_at(fit, T_hm, &p.y, &se);
    p.ea = fit->ea_J_mol / 1000.0;
    p.c11 = fit->cov[1][1] * ARRANK_R_J_MOL_K * ARRANK_R_J_MOL_K / 1e6;
    p.c22 = se * se;
    p.c12 = -ARRANK_R_J_MOL_K / 1000.0 * (fit->cov[0][1] + d * fit->cov[1][1]);
    p.q = r->region_quantile;
    p.ellipse = p.c11 > 0 && isfinite(p.q) && isfinite(p.c22) && isfinite(p.c12);
    return p;
}

/* The compensation line ln A = alpha + beta Ea of the ranking statistics
   (Constable 1925) in this figure's axes: ln r(T_hm) = alpha + (beta -
   1/(R T_hm)) Ea; its words go to the caption. */
static void comp_caption(script *s, double T_hm, char *line, size_t n, int *first)
{
    /* first == NULL: the caption's words only; else the line only */
    const arrank_analysis *a = s->a;
    line[0] = '\0';
    if (!a->rank_stats)
        return;
    const arrank_compensation *c = &a->rank_stats->compensation;
    if (c->verdict == ARRANK_COMP_TOO_FEW || !isfinite(c->slope_mol_J) ||
        !isfinite(c->intercept))
        return;
    if (first) {
        arrank_plot_next_elem(s->f, first);
        fprintf(s->f, "%.9g + %.9g*x with lines dt (8,5) lw 1.2 lc rgb '#666666'", c->intercept,
                1000.0 * (c->slope_mol_J - 1.0 / (ARRANK_R_J_MOL_K * T_hm)));
        return;
    }
    const char *verdict = c->verdict == ARRANK_COMP_ARTIFACT
                              ? "consistent with correlated errors"
                          : c->verdict == ARRANK_COMP_REAL ? "not explained by correlated errors"
                                                           : "ln A does not rise significantly";
    size_t len = (size_t)snprintf(line, n, "dashed: ln A = %.3g + %.4g·Ea (Ea in kJ mol⁻¹), %s",
                                  c->intercept, 1000.0 * c->slope_mol_J, verdict);
    if (len < n && isfinite(c->T_iso_K) && c->T_iso_K > 0 && c->verdict != ARRANK_COMP_NONE)
        snprintf(line + len, n - len, "; isokinetic temperature %.0f °C", c->T_iso_K - ZERO_C_K);
}

/* Where the compensation figure's legend goes: beside the plot in one
   column when it fits the plot's height and 30 % of the width, else below
   in columns (*rows of them).  Returns 1 for beside. */
static int comp_legend_side(const script *s, const size_t *idx, size_t n, double plot_h,
                            double *col_w, size_t *rows)
{
    double widest_px = 0, fp = s->fpx;
    size_t cols;
    for (size_t k = 0; k < n; k++)
        widest_px = fmax(widest_px, arrank_plot_text_px(
                                        arrank_plot_sample_name(&s->a->results[idx[k]]), 0.78 * fp));
    *col_w = widest_px + 4.2 * fp;
    *rows = arrank_plot_legend_rows(s, idx, n, *col_w, &cols);
    if (cols == 1 && (double)*rows * 1.45 * 0.78 * fp <= plot_h && *col_w <= 0.3 * s->W)
        return 1;
    *rows = arrank_plot_legend_rows(s, idx, n, s->W - 1.6 * fp, &cols);
    return 0;
}

/* The plot's height on the asked canvas: heading, three caption lines and
   the axis labels taken away. */
static double comp_plot_h(const script *s, double H)
{
    double f = s->fpx;
    double head = 0.8 * f + 1.38 * f + (s->title && *s->title ? 0.35 * f + 0.96 * f : 0) + 0.4 * f;
    return H - arrank_plot_caption_px(s, 3) - 4.6 * f - head - 1.0 * f;
}

void arrank_plot_size_ea_lnA(script *s, double *w, double *h)
{
    size_t *idx = malloc((s->a->n_results ? s->a->n_results : 1) * sizeof *idx);
    if (!idx)
        return;
    size_t n = shown_in_order(s, idx, 1), rows;
    double col_w;
    s->W = *w;
    s->H = *h;
    /* a legend below takes its rows from a taller canvas, not from the plot */
    if (!comp_legend_side(s, idx, n, comp_plot_h(s, *h), &col_w, &rows))
        *h += (double)rows * 1.45 * 0.78 * s->fpx + 1.0 * s->fpx;
    free(idx);
}

/* The ranges of the compensation figure over every drawn ellipse. */
static void comp_ranges(const comp_point *pts, size_t n, double r[4])
{
    r[0] = r[2] = INFINITY;
    r[1] = r[3] = -INFINITY;
    for (size_t k = 0; k < n; k++) {
        double wx = pts[k].ellipse ? sqrt(pts[k].q * pts[k].c11) : 0;
        double wy = pts[k].ellipse ? sqrt(pts[k].q * pts[k].c22) : 0;
        if (!isfinite(pts[k].ea) || !isfinite(pts[k].y))
            continue;
        r[0] = fmin(r[0], pts[k].ea - wx);
        r[1] = fmax(r[1], pts[k].ea + wx);
        r[2] = fmin(r[2], pts[k].y - wy);
        r[3] = fmax(r[3], pts[k].y + wy);
    }
    if (!isfinite(r[0])) {
        r[0] = 0;
        r[1] = 1;
        r[2] = 0;
        r[3] = 1;
    }
    double px = arrank_plot_min_pad(r[0], r[1], 0.06 * (r[1] - r[0]), fmax(1, fabs(r[1])));
    double py = arrank_plot_min_pad(r[2], r[3], 0.06 * (r[3] - r[2]), fmax(1, fabs(r[3])));
    r[0] -= px;
    r[1] += px;
    r[2] -= py;
    r[3] += py;
}

void arrank_plot_fig_ea_lnA(script *s)
{
    FILE *f = s->f;
    const arrank_analysis *a = s->a;
    double fp = s->fpx, pad = 0.8 * fp, T_hm = arrank_plot_t_hm(a);
    size_t *idx = malloc((a->n_results ? a->n_results : 1) * sizeof *idx);
    comp_point *pts = malloc((a->n_results ? a->n_results : 1) * sizeof *pts);
    if (!idx || !pts) {
        free(idx);
        free(pts);
        return;
    }
    size_t n = shown_in_order(s, idx, 1);
    for (size_t k = 0; k < n; k++)
        pts[k] = comp_point_of(&a->results[idx[k]], T_hm);
    double rg[4];
    comp_ranges(pts, n, rg);
    char name[256], buf[600], line[600], hidden[600];
    arrank_plot_style_axes(f, 0);
    arrank_plot_figure_name(a, ARRANK_FIGURE_EA_LNA, SIZE_MAX, name, sizeof name);
    double t = arrank_plot_head(s, name) + 1.0 * fp;
    double b = s->H - arrank_plot_caption_px(s, 3) - 4.6 * fp;
    size_t ych = arrank_plot_tic_chars(rg[2], rg[3], fmax(3, (b - t) / (2.4 * fp)));
    double l = pad + 1.6 * fp + (double)ych * ARRANK_CHAR_EM * fp + 0.9 * fp;
    /* the legend at the right when it fits in one column there, else below
       (the canvas grew for it: arrank_plot_size_ea_lnA) */
    size_t rows;
    double col_w;
    int side = comp_legend_side(s, idx, n, comp_plot_h(s, s->base_h), &col_w, &rows);
    double r = s->W - pad - col_w;
    if (!side) {
        r = s->W - pad - fp;
        b -= (double)rows * 1.45 * 0.78 * fp + 1.0 * fp;
    }
    arrank_plot_area(s, l, t, r, b);
    fprintf(f, "set xrange [%.9g:%.9g]\nset yrange [%.9g:%.9g]\n", rg[0], rg[1], rg[2], rg[3]);
    size_t xch = arrank_plot_tic_chars(rg[0], rg[1], 8);
    arrank_plot_linear_tics(f, "x", rg[0], rg[1],
                            fmax(2, (r - l) / (((double)xch * ARRANK_CHAR_EM + 2.5) * fp)));
    arrank_plot_linear_tics(f, "y", rg[2], rg[3], fmax(3, (b - t) / (2.4 * fp)));
    arrank_plot_text(s, 0.5 * (l + r), b + 3.5 * fp, "center", 0.9, ARRANK_INK, 0,
                     "apparent Ea / kJ mol⁻¹");
    snprintf(buf, sizeof buf, "ln (r at %.0f °C / %s)", T_hm - ZERO_C_K, s->unit);
    arrank_plot_text(s, 1.4 * fp, 0.5 * (t + b), "center", 0.9, ARRANK_INK, 1, buf);
    if (side)
        arrank_plot_legend(s, idx, n, r + 0.6 * fp, t, s->W - pad, b, 0);
    else
        arrank_plot_legend(s, idx, n, pad, b + 4.6 * fp, s->W - pad,
                           b + 4.6 * fp + (double)rows * 1.45 * 0.78 * fp, 0);
    for (size_t k = 0; k < n; k++) {
        const comp_point *p = &pts[k];
        fprintf(f, "$ctr%zu << EOD\n%.9g %.9g\nEOD\n", idx[k], p->ea, p->y);
        if (!p->ellipse)
            continue;
        double l11 = sqrt(p->c11), l21 = p->c12 / l11, d = p->c22 - l21 * l21;
        double l22 = d > 0 ? sqrt(d) : 0.0, rq = sqrt(p->q);
        fprintf(f, "$ell%zu << EOD\n", idx[k]);
        for (int j = 0; j <= 120; j++) {
            double th = 2.0 * PI * j / 120.0, u = cos(th), v = sin(th);
            fprintf(f, "%.9g %.9g\n", p->ea + rq * l11 * u, p->y + rq * (l21 * u + l22 * v));
        }
        fputs("EOD\n", f);
    }
    snprintf(buf, sizeof buf, "ellipses: joint %.4g %% regions of Ea and ln r at %.0f °C, the "
                              "harmonic mean of the measured temperatures",
             100.0 * a->options.confidence, T_hm - ZERO_C_K);
    comp_caption(s, T_hm, line, sizeof line, NULL);
    arrank_plot_hidden_line(s, hidden, sizeof hidden);
    const char *lines[3] = {buf, line, hidden};
    arrank_plot_captions(s, lines, 3);
    int first = 1;
    comp_caption(s, T_hm, line, sizeof line, &first);
    for (size_t k = n; k-- > 0;) {
        arrank_plot_look lk = arrank_plot_look_of(a, idx[k]);
        if (pts[k].ellipse) {
            arrank_plot_next_elem(f, &first);
            fprintf(f, "$ell%zu using 1:2 with lines ", idx[k]);
            arrank_plot_put_line_look(f, a, idx[k], 1.4);
        }
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$ctr%zu using 1:2 with points pt %d ps 1.2*PS lc rgb '%s'", idx[k],
                lk.point_filled, lk.color);
    }
    if (first)
        fputs("plot NaN notitle", f);
    fputs("\n", f);
    free(idx);
    free(pts);
}
