/*
 * plot_rate.c - the rate at the operating temperature, one row per sample
 * drawn, best at the top: the interval as a bar, the estimate as the
 * sample's marker, P(best) and the flags in words at the right (the plot
 * family: see plot.c for the safety rule on user text).
 */
#include <stdio.h>

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/analysis_stats.h"
#include "plot_internal.h"

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
                "lw 2 lc rgb '#555555' front\n"
                "set arrow from graph 1.0, first %.9g to graph 1.015, first %.9g nohead "
                "lw 2 lc rgb '#555555' front\n"
                "set arrow from graph 1.0, first %.9g to graph 1.015, first %.9g nohead "
                "lw 2 lc rgb '#555555' front\n",
                y_bot, y_top, y_top, y_top, y_bot, y_bot);
        drawn++;
    }
    return drawn;
}

/* Tics of a log axis between lo and hi (> 0).  gnuplot labels only whole
   decades, which leaves a narrow range with one label or none; below three
   decades place 1-2-5 (or 1..9 below one decade) mantissas here. */
void arrank_plot_put_log_tics(FILE *f, const char *axis, double lo, double hi)
{
    double span = log10(hi / lo);
    if (!(span > 0) || !isfinite(span)) {
        fprintf(f, "set %stics\nset format %s '%%g'\n", axis, axis);
        return;
    }
    if (span > 3.0) {
        /* whole decades, at most about eight (gnuplot's own tics over a
           hundred decades crashed it: found by the pipeline fuzzer) */
        double every = ceil(span / 8.0);
        fprintf(f, "set %stics (", axis);
        int n = 0;
        for (double d = ceil(log10(lo) / every) * every; d <= floor(log10(hi)); d += every) {
            double v = pow(10.0, d);
            fprintf(f, "%s'%g' %.9g", n ? ", " : "", v, v);
            n++;
        }
        fputs(")\n", f);
        if (n >= 2)
            return;
        fprintf(f, "set %stics autofreq\nset format %s '%%g'\n", axis, axis);
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

/* Samples drawn but without a rate at T_op are named in a caption line,
   not dropped silently: at most five, then a count. */
static void unranked_line(const script *s, char *buf, size_t n)
{
    const arrank_analysis *a = s->a;
    size_t n_out = 0, len = 0;
    buf[0] = '\0';
    for (size_t i = 0; i < a->n_results; i++)
        if (s->shown[i] && !(a->results[i].has_prediction && arrank_plot_fitted(&a->results[i]))) {
            if (n_out < 5 && len < n)
                len += (size_t)snprintf(buf + len, n - len, "%s%s",
                                        n_out ? ", " : "no rate at this temperature (not fitted): ",
                                        arrank_plot_sample_name(&a->results[i]));
            n_out++;
        }
    if (n_out > 5 && len < n)
        snprintf(buf + len, n - len, " and %zu more", n_out - 5);
}

/* The rate figure's log axis never goes beyond these (gnuplot reads and
   prints them; a widened 1e308 would reach it as "inf"); our choice. */
#define RATE_AXIS_MIN 1e-300
#define RATE_AXIS_MAX 1e300

/* Whether the end of the interval on side (0 low, 1 high) lies beyond the
   axis [x_lo, x_hi]: infinite, not positive (low end), or past the edge. */
static int clipped_end(const arrank_prediction *p, int side, double x_lo, double x_hi)
{
    double v = side ? p->rate_hi : p->rate_lo;
    if (side)
        return !(v <= x_hi) || !(p->rate <= x_hi);
    return !(v >= x_lo) || !(p->rate >= x_lo);
}

/* Rate, low and high end of a row, clipped to the axis [x_lo, x_hi].  An end
   that is missing (NaN) is the rate itself, as before; one that is infinite
   or beyond the axis is put at the edge.  Returns whether anything was
   clipped. */
static int row_ends(const arrank_prediction *p, double x_lo, double x_hi, double e[3])
{
    double rate = p->rate;
    double l = isnan(p->rate_lo) ? rate : p->rate_lo;
    double h = isnan(p->rate_hi) ? rate : p->rate_hi;
    const double v[3] = {rate, l, h};
    int clipped = 0;
    for (int j = 0; j < 3; j++) {
        e[j] = v[j];
        if (!(e[j] >= x_lo)) { /* NaN rate, 0, negative or too small */
            e[j] = x_lo;
            clipped = 1;
        } else if (!(e[j] <= x_hi)) {
            e[j] = x_hi;
            clipped = 1;
        }
    }
    return clipped;
}

/* The rate figure's axis: it spans the finite positive rates and interval
   ends, widened by 6 % of the decades on each side, within [RATE_AXIS_MIN,
   RATE_AXIS_MAX]; what lies beyond is clipped to the axis edge and drawn
   open-ended (row_ends). */
static void rate_axis(const arrank_analysis *a, const size_t *rows, size_t n_rows, double *x_lo,
                      double *x_hi)
{
    double lo = INFINITY, hi = -INFINITY;
    for (size_t k = 0; k < n_rows; k++) {
        const arrank_prediction *p = &a->results[rows[k]].at_T;
        const double v[3] = {p->rate, p->rate_lo, p->rate_hi};
        for (int j = 0; j < 3; j++)
            if (isfinite(v[j]) && v[j] > 0) {
                lo = fmin(lo, fmin(fmax(v[j], RATE_AXIS_MIN), RATE_AXIS_MAX));
                hi = fmax(hi, fmin(fmax(v[j], RATE_AXIS_MIN), RATE_AXIS_MAX));
            }
    }
    if (!(lo > 0) || !isfinite(hi)) {
        lo = 1e-3;
        hi = 1.0;
    }
    double span = log10(hi / lo);
    if (span < 0.36) { /* at least a factor 2.3: two labelled tics (put_log_tics) */
        /* in decades: lo * hi under- or overflows near the axis limits */
        double mid = 0.5 * (log10(lo) + log10(hi));
        mid = fmin(fmax(mid, log10(RATE_AXIS_MIN) + 0.25), log10(RATE_AXIS_MAX) - 0.25);
        lo = pow(10.0, mid - 0.18);
        hi = pow(10.0, mid + 0.18);
        span = 0.36;
    }
    double widen = pow(10.0, 0.06 * span);
    *x_lo = lo / widen >= RATE_AXIS_MIN ? lo / widen : RATE_AXIS_MIN;
    *x_hi = hi * widen <= RATE_AXIS_MAX ? hi * widen : RATE_AXIS_MAX;
}


#define NOTE_FRAC 0.72

/* Text at the right of a row: P(best) where it is 0.01 or more, then the
   flags in words. */
static void row_note(const arrank_result *r, char *buf, size_t n)
{
    char flags[400];
    arrank_plot_flag_list(r, flags, sizeof flags);
    double p = r->stats ? r->stats->p_best : NAN;
    if (isfinite(p) && p >= 0.01)
        snprintf(buf, n, "P(best) %.2f%s%s", p, flags[0] ? "; " : "", flags);
    else
        snprintf(buf, n, "%s", flags);
}

/* Rows: the samples drawn that have a rate at T, ranked first in order. */
static size_t rate_rows(const script *s, size_t *rows)
{
    const arrank_analysis *a = s->a;
    size_t n = 0;
    for (size_t k = 0; k < a->n_ranked && a->order; k++) {
        size_t i = a->order[k];
        if (s->shown[i] && a->results[i].has_prediction && arrank_plot_fitted(&a->results[i]))
            rows[n++] = i;
    }
    for (size_t i = 0; i < a->n_results; i++)
        if (s->shown[i] && a->results[i].rank <= 0 && a->results[i].has_prediction &&
            arrank_plot_fitted(&a->results[i]))
            rows[n++] = i;
    return n;
}

#define N_RATE_CAPTIONS 4
#define ROW_PX(s) fmax(1.9 * (s)->fpx, 26.0)

static double rate_head_px(const script *s)
{
    double f = s->fpx;
    return 0.8 * f + 1.38 * f + (s->title && *s->title ? 0.35 * f + 0.96 * f : 0) + 0.4 * f;
}

/* The widest name and the widest row note of the rows, in px. */
static void rate_text_widths(const script *s, double *names_px, double *notes_px)
{
    size_t *rows = malloc((s->a->n_results ? s->a->n_results : 1) * sizeof *rows);
    if (!rows)
        return;
    size_t n = rate_rows(s, rows);
    char buf[600];
    for (size_t k = 0; k < n; k++) {
        const arrank_result *r = &s->a->results[rows[k]];
        *names_px = fmax(*names_px, arrank_plot_text_px(arrank_plot_sample_name(r), s->fpx));
        row_note(r, buf, sizeof buf);
        *notes_px = fmax(*notes_px, arrank_plot_text_px(buf, NOTE_FRAC * s->fpx));
    }
    free(rows);
}

void arrank_plot_size_rate_at_T(script *s, double *w, double *h)
{
    size_t *rows = malloc((s->a->n_results ? s->a->n_results : 1) * sizeof *rows);
    if (!rows)
        return;
    size_t n = rate_rows(s, rows);
    free(rows);
    s->H = *h;
    double need = rate_head_px(s) + 1.2 * s->fpx + (double)(n + 1) * ROW_PX(s) + 4.8 * s->fpx +
                  arrank_plot_caption_px(s, N_RATE_CAPTIONS);
    /* as tall as the rows need, and no less than 55 % of the asked height
       (one or two rows would otherwise be a strip) */
    *h = fmax(0.55 * *h, fmin(need, 6000.0));
    /* names at the left and notes at the right are drawn whole: the canvas
       widens so that the plot keeps 40 % of it (at most three times the
       asked width; beyond, they are cut with an ellipsis) */
    double names_px = 0, notes_px = 0;
    rate_text_widths(s, &names_px, &notes_px);
    double fixed = 1.6 * s->fpx + names_px + 1.2 * s->fpx + notes_px + 1.6 * s->fpx;
    *w = fmin(fmax(*w, fixed / 0.6), 3.0 * *w);
}

void arrank_plot_fig_rate_at_T(script *s)
{
    FILE *f = s->f;
    const arrank_analysis *a = s->a;
    double T_C = a->options.operating_temp_K - ZERO_C_K, fp = s->fpx, pad = 0.8 * fp;
    size_t *rows = malloc((a->n_results ? a->n_results : 1) * sizeof *rows);
    if (!rows)
        return;
    size_t n_rows = rate_rows(s, rows);
    double x_lo, x_hi;
    rate_axis(a, rows, n_rows, &x_lo, &x_hi);
    char name[256], buf[600];
    arrank_plot_style_axes(f, 0);
    arrank_plot_figure_name(a, ARRANK_FIGURE_RATE_AT_T, SIZE_MAX, name, sizeof name);
    double t = arrank_plot_head(s, name) + 0.8 * fp;
    double b = s->H - arrank_plot_caption_px(s, N_RATE_CAPTIONS) - 4.6 * fp;
    /* names at the left in the base font, notes at the right, each at most
       30 % of the width (cut with an ellipsis beyond) */
    double names_px = 0, notes_px = 0;
    rate_text_widths(s, &names_px, &notes_px);
    notes_px = fmin(notes_px, 0.3 * s->W);
    names_px = fmin(names_px, fmax(0.15 * s->W, 0.6 * s->W - 4.4 * fp - notes_px));
    double l = pad + names_px + 1.2 * fp, r = s->W - pad - notes_px - 1.6 * fp;
    arrank_plot_area(s, l, t, r, b);
    fputs("set logscale x\nset grid xtics noytics\nset ytics scale 0\n"
          "set errorbars 0\n", f);
    fprintf(f, "set xrange [%.9g:%.9g]\nset yrange [0.4:%.9g]\n", x_lo, x_hi,
            (double)n_rows + 0.6);
    arrank_plot_put_log_tics(f, "x", x_lo, x_hi);
    snprintf(buf, sizeof buf, "r at %.4g °C / %s (log scale)", T_C, s->unit);
    arrank_plot_text(s, 0.5 * (l + r), b + 3.5 * fp, "center", 0.9, ARRANK_INK, 0, buf);
    /* sample names as tick labels: each one a quoted string, '%' doubled */
    fputs("set ytics (", f);
    for (size_t k = 0; k < n_rows; k++) {
        char nm[256];
        arrank_plot_fit_text(arrank_plot_sample_name(&a->results[rows[k]]), names_px, fp, nm,
                             sizeof nm);
        fputs(k ? ", " : "", f);
        arrank_plot_put_q_tic(f, nm);
        fprintf(f, " %zu", n_rows - k);
    }
    fputs(")\n", f);
    int any_flag = 0, any_clipped = 0;
    double row_px = (b - t) / ((double)n_rows + 0.2);
    for (size_t k = 0; k < n_rows; k++) {
        const arrank_result *res = &a->results[rows[k]];
        arrank_plot_look lk = arrank_plot_look_of(a, rows[k]);
        double e[3];
        any_clipped |= row_ends(&res->at_T, x_lo, x_hi, e);
        /* the box: the interval across, at most 0.52 of a row or 24 px high */
        double half = fmin(0.26, 12.0 / fmax(row_px, 1.0));
        fprintf(f, "$iv%zu << EOD\n%.9g %zu %.9g %.9g %.9g %.9g\nEOD\n$pt%zu << EOD\n%.9g %zu\nEOD\n",
                k, e[0], n_rows - k, e[1], e[2], (double)(n_rows - k) - half,
                (double)(n_rows - k) + half, k, e[0], n_rows - k);
        for (int side = 0; side < 2; side++)
            if (e[1 + side] == (side ? x_hi : x_lo) && clipped_end(&res->at_T, side, x_lo, x_hi))
                fprintf(f, "set arrow from graph %s, first %zu to graph %s, first %zu head "
                           "filled size graph 0.02,20 lw 2 lc rgb '%s' front\n",
                        side ? "0.96" : "0.04", n_rows - k, side ? "1" : "0", n_rows - k,
                        lk.color);
        row_note(res, buf, sizeof buf);
        if (buf[0]) {
            char cut[600];
            arrank_plot_fit_text(buf, notes_px, NOTE_FRAC * fp, cut, sizeof cut);
            arrank_plot_text(s, r + 1.4 * fp, t + (0.6 + (double)k) * row_px, "left", NOTE_FRAC,
                             ARRANK_INK_SOFT, 0, cut);
        }
        any_flag |= res->flags != 0;
    }
    size_t brackets = put_group_brackets(f, a, rows, n_rows);
    char l1[600], l2[600], l3[600];
    snprintf(l1, sizeof l1, "box: %.4g %% interval; open marker: flagged%s",
             100.0 * a->options.confidence,
             brackets ? "; bracket: not told apart from the first of its group (Holm)" : "");
    (void)any_flag;
    snprintf(l2, sizeof l2, "%s",
             any_clipped ? "arrow at the edge: the interval goes beyond the axis" : "");
    unranked_line(s, l3, sizeof l3);
    char hidden[600];
    arrank_plot_hidden_line(s, hidden, sizeof hidden);
    const char *lines[N_RATE_CAPTIONS] = {l1, l2, l3, hidden};
    arrank_plot_captions(s, lines, N_RATE_CAPTIONS);
    int first = 1;
    for (size_t k = 0; k < n_rows; k++) {
        const arrank_result *res = &a->results[rows[k]];
        arrank_plot_look lk = arrank_plot_look_of(a, rows[k]);
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$iv%zu using 1:2:3:4:5:6 with boxxyerror fs transparent solid 0.3 border "
                   "lc rgb '%s' fc rgb '%s' lw 1.2", k, lk.color, lk.color);
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$pt%zu using 1:2 with points pt %d ps 0.9*PS lw 1.5 lc rgb '%s'", k,
                res->flags ? lk.point_hollow : lk.point_filled, lk.color);
    }
    if (first)
        fputs("plot NaN notitle", f);
    fputs("\n", f);
    free(rows);
}
