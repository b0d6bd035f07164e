/*
 * plot_figures.c - the campaign's figures: the Arrhenius plot of every
 * sample, the rates at the operating temperature, and Ea against ln A with
 * joint confidence regions (the plot family: see plot.c for the safety rule
 * on user text).
 */
#include <stdio.h>

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/diagnose.h"
#include "arrank/analysis_stats.h"
#include "plot_internal.h"

/* The Arrhenius plot's axes (1000/T below, degC above), labels, key and the
   operating temperature's mark. */
static void arrhenius_axes(script *s, double T_op, int show_op)
{
    FILE *f = s->f;
    const arrank_analysis *a = s->a;
    double x_lo = INFINITY, x_hi = -INFINITY;
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_sample *smp = a->results[i].sample;
        for (size_t k = 0; k < smp->n_points; k++)
            if (arrank_plot_usable_point(&smp->points[k])) {
                double x = X_SCALE / smp->points[k].temp_K;
                x_lo = fmin(x_lo, x);
                x_hi = fmax(x_hi, x);
            }
    }
    if (show_op) {
        x_lo = fmin(x_lo, X_SCALE / T_op);
        x_hi = fmax(x_hi, X_SCALE / T_op);
    }
    double pad = 0.04 * (x_hi - x_lo);
    if (!(pad > 0))
        pad = 0.01 * x_hi;
    pad = arrank_plot_min_pad(x_lo, x_hi, pad, x_hi);

    fputs("set title ", f);
    fputs("'Arrhenius plot' . \"\\n\" . ", f);
    arrank_plot_put_q(f, s->title);
    fputs("\nset xlabel '1000 / T  [K⁻¹]'\nset ylabel ", f);
    arrank_plot_put_qf(f, "ln( r / (%s) )", s->unit);
    fputs("\nset x2label 'T  [°C]'\n", f);
    fprintf(f, "set xrange [%.9g:%.9g]\n", x_lo - pad, x_hi + pad);
    /* The top axis is the same axis in degC: x2 = 1000/x - 273.15.  gnuplot's
       own tics on a linked nonlinear axis come out sparse, so place round
       degC values here. */
    fputs("set link x2 via 1000./x - 273.15 inverse 1000./(x + 273.15)\n"
          "set xtics nomirror\n",
          f);
    arrank_plot_put_celsius_tics(f, X_SCALE / (x_hi + pad) - ZERO_C_K,
                                 X_SCALE / (x_lo - pad) - ZERO_C_K, 8.0);
    fputs("set mytics 2\n"
          "set style fill transparent solid 0.14 noborder\n",
          f);
    arrank_plot_put_key(f, a, 1);
    if (show_op) {
        fprintf(f,
                "set arrow 1 from first %.9g, graph 0 to first %.9g, graph 1 nohead dt 2 "
                "lw 1.2 lc rgb '#555555' back\n",
                X_SCALE / T_op, X_SCALE / T_op);
        fprintf(f, "set label 1 'T_op = %.4g °C' at first %.9g, graph 0.03 left offset 0.4,0 "
                   "tc rgb '#444444' front\n",
                T_op - ZERO_C_K, X_SCALE / T_op);
    }
}

void arrank_plot_fig_arrhenius(script *s)
{
    FILE *f = s->f;
    const arrank_analysis *a = s->a;
    double T_op = a->options.operating_temp_K;
    int show_op = isfinite(T_op) && T_op > 0;
    arrhenius_axes(s, T_op, show_op);

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
            cnt[4 * i + b] = arrank_plot_block_points(f, r, i, tags[b], b < 2, b % 2 == 0);
        any_excluded |= cnt[4 * i + 2] + cnt[4 * i + 3] > 0;
        if (!arrank_plot_fitted(r))
            continue;
        const arrank_arrhenius *fit = &r->fit;
        double xa = X_SCALE / fit->T_max_K, xb = X_SCALE / fit->T_min_K;
        arrank_plot_block_line(f, r, "fit", i, xa, xb, 60);
        any_band = 1;
        if (show_op && arrank_plot_any_extrapolation(T_op, fit)) {
            double xop = X_SCALE / T_op;
            arrank_plot_block_line(f, r, "ext", i, xop < xa ? xop : xb, xop < xa ? xa : xop,
                                   30);
            any_ext = 1;
        }
    }

    int first = 1;
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *r = &a->results[i];
        const char *c = arrank_plot_sample_color(a, i);
        if (arrank_plot_fitted(r)) {
            arrank_plot_next_elem(f, &first);
            fprintf(f, "$fit%zu using 1:3:4 with filledcurves lc rgb '%s'", i, c);
            if (show_op && arrank_plot_any_extrapolation(T_op, &r->fit)) {
                arrank_plot_next_elem(f, &first);
                fprintf(f, "$ext%zu using 1:3:4 with filledcurves lc rgb '%s' "
                           "fs transparent solid 0.06 noborder", i, c);
                arrank_plot_next_elem(f, &first);
                fprintf(f, "$ext%zu using 1:2 with lines lw 1.5 dt 2 lc rgb '%s'", i, c);
            }
            arrank_plot_next_elem(f, &first);
            fprintf(f, "$fit%zu using 1:2 with lines lw 2.2 lc rgb '%s'", i, c);
        }
        int titled = 0;
        for (int b = 0; b < 4; b++) {
            if (cnt[4 * i + b] == 0)
                continue;
            int hollow = b >= 2, with_sd = b % 2 == 0;
            arrank_plot_next_elem(f, &first);
            fprintf(f, "$%s%zu using 1:2%s with %s pt %d ps 1.8*PS lw 1.5 lc rgb '%s'", tags[b], i,
                    with_sd ? ":3" : "", with_sd ? "yerrorbars" : "points",
                    arrank_plot_sample_point_type(a, i, hollow), c);
            if (!titled) {
                fputs(" title ", f);
                arrank_plot_put_qf(f, "%s%s", arrank_plot_sample_name(r),
                                   arrank_plot_fitted(r) ? "" : " (not fitted)");
                titled = 1;
            }
        }
    }
    if (any_band) {
        arrank_plot_next_elem(f, &first);
        fputs("keyentry with filledcurves lc rgb '#888888' fs solid 0.35 noborder title ", f);
        arrank_plot_put_qf(f, "%.4g %% confidence band", 100.0 * a->options.confidence);
    }
    if (any_ext) {
        arrank_plot_next_elem(f, &first);
        fputs("keyentry with lines dt 2 lw 1.5 lc rgb '#555555' title 'extrapolated to T_op'", f);
    }
    if (any_excluded) {
        arrank_plot_next_elem(f, &first);
        fputs("keyentry with points pt 6 ps 1.5*PS lc rgb '#555555' "
              "title 'left out of the fit'", f);
    }
    if (first)
        fputs("plot 0 with lines lc rgb '#ffffff'", f);
    fputs("\n", f);
    free(cnt);
}

/* Short names of the result's flags, comma-separated, into buf; the
   extrapolation says how far, as the table does ("extrapolated 12 K"). */
static void flag_list(const arrank_result *r, char *buf, size_t n)
{
    buf[0] = '\0';
    size_t len = 0;
    for (unsigned b = 0; b < ARRANK_FLAG_COUNT; b++) {
        if (!(r->flags & (1u << b)))
            continue;
        const char *name = arrank_flag_name(1u << b);
        if (!name)
            continue;
        char far[48];
        const double out_K = r->has_prediction ? r->at_T.extrapolation_K : 0.0;
        if ((1u << b) == ARRANK_FLAG_EXTRAPOLATED && out_K > 0 && out_K < 1e9) {
            snprintf(far, sizeof far, "extrapolated %.*f K", out_K < 9.95 ? 1 : 0, out_K);
            name = far;
        }
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
    flag_list(r, flags, sizeof flags);
    double p = r->stats ? r->stats->p_best : NAN;
    if (isfinite(p) && p < 0.005)
        snprintf(buf, n, "P(best) < 0.01%s%s", flags[0] ? "; " : "", flags);
    else if (isfinite(p))
        snprintf(buf, n, "P(best) %.2f%s%s", p, flags[0] ? "; " : "", flags);
    else
        snprintf(buf, n, "%s", flags);
}

/* Length of the longest row note of the rate figure, in bytes. */
size_t arrank_plot_longest_row_note(const arrank_analysis *a)
{
    size_t longest = 0;
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *r = &a->results[i];
        if (!(r->has_prediction && arrank_plot_fitted(r)))
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

/* Samples without a rate at T_op are named under the figure, not dropped
   silently: at most five, then a count. */
static void put_unranked_note(script *s)
{
    FILE *f = s->f;
    const arrank_analysis *a = s->a;
    size_t n_out = 0;
    for (size_t i = 0; i < a->n_results; i++)
        if (!(a->results[i].has_prediction && arrank_plot_fitted(&a->results[i]))) {
            if (n_out == 0)
                fputs("set label 3 'not fitted: '", f);
            if (n_out < 5) {
                fputs(n_out ? " . ', ' . " : " . ", f);
                arrank_plot_put_q(f, arrank_plot_sample_name(&a->results[i]));
            }
            n_out++;
        }
    if (n_out > 5)
        fprintf(f, " . ' (and %zu more)'", n_out - 5);
    if (n_out)
        fprintf(f, " at character 0.6, character 0.6 left font ',%d' tc rgb '#444444'\n",
                arrank_plot_font_of(s, 0.7));
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
    double widen = pow(10.0, 0.06 * (span > 0.2 ? span : 0.2));
    *x_lo = lo / widen >= RATE_AXIS_MIN ? lo / widen : RATE_AXIS_MIN;
    *x_hi = hi * widen <= RATE_AXIS_MAX ? hi * widen : RATE_AXIS_MAX;
}

void arrank_plot_fig_rate_at_T(script *s)
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
            if (a->results[a->order[k]].has_prediction &&
                arrank_plot_fitted(&a->results[a->order[k]]))
                rows[n_rows++] = a->order[k];
    } else {
        for (size_t i = 0; i < a->n_results; i++)
            if (a->results[i].has_prediction && arrank_plot_fitted(&a->results[i]))
                rows[n_rows++] = i;
    }
    double x_lo, x_hi;
    rate_axis(a, rows, n_rows, &x_lo, &x_hi);

    fputs("set title ", f);
    arrank_plot_put_qf(f, "Rate at %.4g °C with %.4g %% interval", T_C,
                       100.0 * a->options.confidence);
    fputs(" . \"\\n\" . ", f);
    arrank_plot_put_q(f, s->title);
    fputs("\nset xlabel ", f);
    arrank_plot_put_qf(f, "r at %.4g °C  [%s]  (log scale)", T_C, s->unit);
    fputs("\nset logscale x\n"
          "set grid xtics ytics\n"
          "set ytics nomirror scale 0\n"
          "set xtics mirror\n"
          "set key off\n",
          f);
    fprintf(f, "set xrange [%.9g:%.9g]\n", x_lo, x_hi);
    put_log_tics(f, "x", x_lo, x_hi);
    /* Room at the right for the flag names (in characters of the base font;
       they are drawn at 0.7 of it). */
    size_t flag_chars = arrank_plot_longest_row_note(a);
    if (flag_chars)
        fprintf(f, "set rmargin %.3g\n", 0.62 * (double)flag_chars + 3.0);
    fprintf(f, "set yrange [0.4:%.9g]\n", (double)n_rows + 0.6);
    /* Sample names as tick labels: each one a quoted string expression. */
    fputs("set ytics (", f);
    for (size_t k = 0; k < n_rows; k++) {
        if (k)
            fputs(", ", f);
        arrank_plot_put_q_tic(f, arrank_plot_sample_name(&a->results[rows[k]]));
        fprintf(f, " %zu", n_rows - k);
    }
    fputs(")\n", f);
    int any_flag = 0, any_clipped = 0;
    for (size_t k = 0; k < n_rows; k++) {
        const arrank_result *r = &a->results[rows[k]];
        double e[3];
        any_clipped |= row_ends(&r->at_T, x_lo, x_hi, e);
        fprintf(f, "$rate%zu << EOD\n%.9g %zu %.9g %.9g\nEOD\n", k, e[0], n_rows - k, e[1],
                e[2]);
        for (int side = 0; side < 2; side++)
            if (e[1 + side] == (side ? x_hi : x_lo) && clipped_end(&r->at_T, side, x_lo, x_hi))
                fprintf(f, "set arrow from graph %s, first %zu to graph %s, first %zu head "
                           "filled size graph 0.02,20 lw 2 lc rgb '%s' front\n",
                        side ? "0.96" : "0.04", n_rows - k, side ? "1" : "0", n_rows - k,
                        arrank_plot_sample_color(a, rows[k]));
        char buf[512];
        row_note(r, buf, sizeof buf);
        if (buf[0]) {
            fprintf(f, "set label %zu ", k + 10);
            arrank_plot_put_q(f, buf);
            fprintf(f, " at graph 1.03, first %zu left font ',%d' tc rgb '#444444'\n",
                    n_rows - k, arrank_plot_font_of(s, 0.7));
        }
        any_flag |= r->flags != 0;
    }
    /* Notes go under the axis label, one row each, with room kept for them. */
    /* (a row more for the clipping note) */
    fputs(any_clipped ? "set bmargin 7.6\n" : "set bmargin 6.6\n", f);
    if (put_group_brackets(f, a, rows, n_rows) > 0)
        fprintf(f, "set label 4 'bracket at right: not told apart from the first of its group "
                   "(Holm, %.4g %%)' at character 0.6, character 2.4 left font ',%d' "
                   "tc rgb '#444444'\n",
                100.0 * a->options.confidence, arrank_plot_font_of(s, 0.7));
    put_unranked_note(s);
    if (any_clipped)
        fprintf(f, "set label 6 'arrow at the edge: the interval (or rate) goes beyond "
                   "the axis, clipped' at character 0.6, character 3.3 left font ',%d' "
                   "tc rgb '#444444'\n",
                arrank_plot_font_of(s, 0.7));
    if (any_flag)
        fprintf(f, "set label 2 'open marker: flagged (flags at right)' at character 0.6, "
                   "character 1.5 left font ',%d' tc rgb '#444444'\n",
                arrank_plot_font_of(s, 0.7));
    int first = 1;
    for (size_t k = 0; k < n_rows; k++) {
        const arrank_result *r = &a->results[rows[k]];
        size_t i = rows[k];
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$rate%zu using 1:2:3:4 with xerrorbars pt %d ps 1.3*PS lw 2 lc rgb '%s'", k,
                arrank_plot_sample_point_type(a, i, r->flags != 0),
                arrank_plot_sample_color(a, i));
    }
    if (first)
        fputs("plot 1 with lines lc rgb '#ffffff'", f);
    fputs("\n", f);
    free(rows);
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
    arrank_plot_next_elem(f, first);
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
    arrank_plot_put_q(f, verdict);
    fprintf(f, " at graph 0.02, graph 0.91 left font ',%d' tc rgb '#444444' front\n", font_pt);
    if (isfinite(c->T_iso_K) && c->T_iso_K > 0 && c->verdict != ARRANK_COMP_NONE) {
        fputs("set label 6 ", f);
        arrank_plot_put_qf(f, "T_iso = %.0f K (%.0f °C); T_hm = %.0f K", c->T_iso_K,
                           c->T_iso_K - ZERO_C_K, c->T_hm_K);
        fprintf(f, " at graph 0.02, graph 0.86 left font ',%d' tc rgb '#444444' front\n",
                font_pt);
    }
}

void arrank_plot_fig_ea_lnA(script *s)
{
    FILE *f = s->f;
    const arrank_analysis *a = s->a;
    fputs("set title ", f);
    arrank_plot_put_qf(f, "Ea against ln A with joint %.4g %% confidence regions",
           100.0 * a->options.confidence);
    fputs(" . \"\\n\" . ", f);
    arrank_plot_put_q(f, s->title);
    fputs("\nset xlabel 'apparent Ea  [kJ/mol]'\nset ylabel ", f);
    arrank_plot_put_qf(f, "ln( A / (%s) )", s->unit);
    fputs("\nset mxtics 2\nset mytics 2\n", f);
    arrank_plot_put_key(f, a, 0);
    /* Notes at the top left, which a compensation plot (rising to the right)
       leaves empty. */
    fprintf(f, "set label 2 'ellipses: joint %.4g %% regions, 2·F(2, n−2) quantile' "
               "at graph 0.02, graph 0.96 left font ',%d' "
               "tc rgb '#444444' front\n",
            100.0 * a->options.confidence, arrank_plot_font_of(s, 0.7));
    put_compensation_note(f, a, arrank_plot_font_of(s, 0.7));
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *r = &a->results[i];
        if (!arrank_plot_fitted(r))
            continue;
        const arrank_arrhenius *fit = &r->fit;
        double ea = fit->ea_J_mol / 1000.0;
        /* Covariance of (Ea [kJ/mol], ln A); Cholesky factor L of the 2x2. */
        double c11 = fit->ea_se_J_mol * fit->ea_se_J_mol / 1e6;
        double c22 = fit->ln_A_se * fit->ln_A_se;
        double c12 = fit->cov_ea_lnA_J_mol / 1000.0;
        /* q = 2 F(2, n-2; confidence): the points with (theta - est)' C^-1
           (theta - est) <= q, C scaled by s^2, form the joint region
           (the pipeline's region_quantile, analysis.c) */
        double q = r->region_quantile;
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
        if (!arrank_plot_fitted(r))
            continue;
        const arrank_arrhenius *fit = &r->fit;
        int ell = fit->ea_se_J_mol > 0 && isfinite(r->region_quantile);
        if (ell) {
            arrank_plot_next_elem(f, &first);
            fprintf(f, "$ell%zu using 1:2 with lines lw 1.8 lc rgb '%s'", i,
                    arrank_plot_sample_color(a, i));
        }
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$ctr%zu using 1:2 with points pt %d ps 1.5*PS lc rgb '%s' title ", i,
                arrank_plot_sample_point_type(a, i, 0), arrank_plot_sample_color(a, i));
        arrank_plot_put_q(f, arrank_plot_sample_name(r));
    }
    if (first)
        fputs("plot 0 with lines lc rgb '#ffffff'", f);
    fputs("\n", f);
}

