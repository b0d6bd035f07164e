/*
 * plot_stream.c - rate against time on stream, one figure per sample whose
 * file has a time_on_stream column (the plot family: see plot.c for the
 * safety rule on user text).
 *
 * The figure draws the diagnosis's own drift fit (quality.c: ln r on 1/T and
 * time, arrank_drift), never a fit of its own: each point's rate is brought
 * to the fit's reference temperature with the fit's own temperature
 * dependence, r exp(-b_T (1/T - 1/T_ref)), so that points measured at
 * different temperatures line up by time alone, and the drift line
 * ln r = ln r_ref + b_t t is drawn with its confidence band (the diagnosis's
 * t quantile, the variance of ln r_ref + b_t t from the fit's covariance).
 * Without a drift test (too few points, time following temperature, no
 * diagnosis) the measured rates are drawn as they are, with the reason.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include "arrank/diagnose.h"
#include "plot_internal.h"

#define LINE_STEPS 60

/* The rate axis's bounds: rates beyond are not drawn (points), and the
   band is cut a decade beyond them, so that gnuplot clips it.  gnuplot 5.4
   crashed (realloc) filling a band on a log axis near 1e-300, and with the
   band's edge lying exactly on the axis's end (both found by the pipeline
   fuzzer); it fails on "inf" beyond the double range.  Our choice. */
#define AXIS_MIN 1e-290
#define AXIS_MAX 1e299

static double on_axis(double v)
{
    return v < AXIS_MIN ? AXIS_MIN / 10.0 : v > AXIS_MAX ? AXIS_MAX * 10.0 : v;
}

int arrank_plot_has_time_on_stream(const arrank_result *r)
{
    const arrank_sample *s = r->sample;
    for (size_t k = 0; k < s->n_points; k++)
        if (isfinite(s->points[k].time_on_stream_s) && arrank_plot_usable_point(&s->points[k]))
            return 1;
    return 0;
}

/* The drift test ran on this sample, with a fit to draw: the diagnosis's,
   or a stability hold's at one temperature (arrank_hold). */
static const arrank_drift *drift_of(const arrank_result *r)
{
    const arrank_drift *dr = r->diagnosis ? &r->diagnosis->drift
                             : r->hold    ? &r->hold->drift
                                          : NULL;
    if (!dr || !dr->tested || !isfinite(dr->ln_rate_ref) || !isfinite(dr->temp_slope_K) ||
        !isfinite(dr->slope_ln_per_h))
        return NULL;
    return dr;
}

/* Which points were the drift test's: the usable points of the first fit
   (the diagnosis's order) with a time on stream; in a stability hold, every
   usable point with one (quality.c).  A new array of n_points flags (free),
   NULL without a diagnosis or hold, or without memory. */
static unsigned char *drift_points(const arrank_result *r)
{
    const arrank_diagnosis *d = r->diagnosis;
    const arrank_sample *s = r->sample;
    unsigned char *in = d || r->hold ? calloc(s->n_points ? s->n_points : 1, 1) : NULL;
    if (in && !d)
        for (size_t k = 0; k < s->n_points; k++)
            in[k] = isfinite(s->points[k].time_on_stream_s) &&
                    arrank_plot_usable_point(&s->points[k]);
    for (size_t j = 0; in && d && j < d->n_order; j++)
        if (d->order[j] < s->n_points && isfinite(s->points[d->order[j]].time_on_stream_s))
            in[d->order[j]] = 1;
    return in;
}

/* ln r of the drift line at time t_h (hours) and its standard error. */
void arrank_plot_drift_at(const arrank_drift *dr, double t_h, double *y, double *se)
{
    *y = dr->ln_rate_ref + dr->slope_ln_per_h * t_h;
    double v = dr->ln_rate_ref_var + t_h * t_h * dr->slope_se * dr->slope_se +
               2.0 * t_h * dr->cov_ref_slope;
    *se = v > 0 ? sqrt(v) : 0.0;
}

/* Data block $<tag><i>: time on stream [h] and rate of the points in the
   drift test (in = 1) or not (in = 0), brought to T_ref; without a drift
   fit (dr NULL), every usable point as measured, as in = 1.  Returns the
   count; *lo and *hi take the range of ln r drawn. */
static size_t block_points(FILE *f, const arrank_result *r, size_t i, const arrank_drift *dr,
                           const unsigned char *tested, int in, const char *tag, double *lo,
                           double *hi)
{
    const arrank_sample *s = r->sample;
    size_t n = 0;
    for (size_t k = 0; k < s->n_points; k++) {
        const arrank_point *p = &s->points[k];
        int member = dr ? tested && tested[k] : 1;
        if (!isfinite(p->time_on_stream_s) || !arrank_plot_usable_point(p) || member != in)
            continue;
        double ln_r = log(p->rate);
        if (dr)
            ln_r -= dr->temp_slope_K * (1.0 / p->temp_K - 1.0 / dr->temp_ref_K);
        if (!isfinite(ln_r) || !(exp(ln_r) >= AXIS_MIN && exp(ln_r) <= AXIS_MAX))
            continue;
        if (n++ == 0)
            fprintf(f, "$%s%zu << EOD\n", tag, i);
        fprintf(f, "%.9g %.9g\n", p->time_on_stream_s / 3600.0, exp(ln_r));
        *lo = fmin(*lo, ln_r);
        *hi = fmax(*hi, ln_r);
    }
    if (n)
        fputs("EOD\n", f);
    return n;
}

/* The drift line over the test's times with its band: t, r, lower, upper. */
static void block_line(FILE *f, const arrank_drift *dr, size_t i, double *lo, double *hi)
{
    const double tq = isfinite(dr->t_quantile) ? dr->t_quantile : 0.0;
    fprintf(f, "$drift%zu << EOD\n", i);
    for (int k = 0; k <= LINE_STEPS; k++) {
        double t = dr->time_min_h + (dr->time_max_h - dr->time_min_h) * k / LINE_STEPS, y, se;
        arrank_plot_drift_at(dr, t, &y, &se);
        fprintf(f, "%.9g %.9g %.9g %.9g\n", t, on_axis(exp(y)), on_axis(exp(y - tq * se)),
                on_axis(exp(y + tq * se)));
        *lo = fmin(*lo, y - tq * se);
        *hi = fmax(*hi, y + tq * se);
    }
    fputs("EOD\n", f);
}

/* The first caption line: the drift per hour with its interval, or why
   there is no drift line (text from a file only as an argument). */
static void drift_words(const arrank_result *r, const arrank_drift *dr, char *buf, size_t n)
{
    if (dr) {
        const double tq = isfinite(dr->t_quantile) ? dr->t_quantile : 0.0;
        const double b = dr->slope_ln_per_h, w = tq * dr->slope_se;
        snprintf(buf, n,
                 "drift %+.2f %%/h (%.0f %% interval %+.2f to %+.2f), p = %.2g, %zu points; "
                 "%s %.1f °C%s",
                 100.0 * expm1(b), 100.0 * r->confidence, 100.0 * expm1(b - w),
                 100.0 * expm1(b + w), dr->p, dr->n_points,
                 r->diagnosis ? "rates brought to" : "held at one temperature,",
                 dr->temp_ref_K - ZERO_C_K, r->diagnosis ? " with the fit's own Ea" : "");
        return;
    }
    const arrank_diagnosis *d = r->diagnosis;
    if (r->error)
        snprintf(buf, n, "rates as measured; no drift line: sample not fitted: %.300s",
                 r->error);
    else
        snprintf(buf, n, "rates as measured; no drift line: %.300s",
                 !d              ? "no diagnosis (--no-diagnose)"
                 : d->drift.note ? d->drift.note
                                 : "the drift test did not run");
}

/* The time axis: the points' times on stream in hours, 4 % to spare. */
static void time_range(const arrank_result *r, double *t0, double *t1)
{
    const arrank_sample *smp = r->sample;
    double lo = INFINITY, hi = -INFINITY;
    for (size_t k = 0; k < smp->n_points; k++) {
        const arrank_point *p = &smp->points[k];
        if (isfinite(p->time_on_stream_s) && arrank_plot_usable_point(p)) {
            lo = fmin(lo, p->time_on_stream_s / 3600.0);
            hi = fmax(hi, p->time_on_stream_s / 3600.0);
        }
    }
    if (!(hi >= lo)) {
        lo = 0.0;
        hi = 1.0;
    }
    double pad = arrank_plot_min_pad(lo, hi, 0.04 * (hi - lo), fmax(1.0, fabs(hi)));
    *t0 = lo - pad;
    *t1 = hi + pad;
}

/* The plot elements: band, line, points in the drift test, the others. */
static void plot_elements(FILE *f, size_t i, const arrank_plot_look *lk, int with_line,
                          size_t n_in, size_t n_out)
{
    int first = 1;
    if (with_line) {
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$drift%zu using 1:3:4 with filledcurves fc rgb '%s' fs transparent solid "
                   "0.18 noborder",
                i, lk->color);
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$drift%zu using 1:2 with lines lw 2 lc rgb '%s'", i, lk->color);
    }
    if (n_in) {
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$tos%zu using 1:2 with points pt %d ps 1.2*PS lc rgb '%s'", i,
                lk->point_filled, lk->color);
    }
    if (n_out) {
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$tox%zu using 1:2 with points pt %d ps 1.2*PS lc rgb '%s'", i,
                lk->point_hollow, lk->color);
    }
    if (first) /* nothing to draw: an empty frame rather than a broken script */
        fputs("plot NaN notitle", f);
    fputs("\n", f);
}

void arrank_plot_fig_stream(script *s, size_t i)
{
    FILE *f = s->f;
    const arrank_analysis *a = s->a;
    const arrank_result *r = &a->results[i];
    const arrank_drift *dr = drift_of(r);
    const arrank_plot_look lk = arrank_plot_look_of(a, i);
    const double fp = s->fpx, pad = 0.8 * fp;
    double lo = INFINITY, hi = -INFINITY;
    unsigned char *tested = drift_points(r);
    size_t n_in = block_points(f, r, i, dr, tested, 1, "tos", &lo, &hi);
    size_t n_out = block_points(f, r, i, dr, tested, 0, "tox", &lo, &hi);
    free(tested);
    if (dr)
        block_line(f, dr, i, &lo, &hi);
    if (!(isfinite(lo) && isfinite(hi))) {
        lo = 0.0;
        hi = 1.0;
    }
    double ypad = arrank_plot_min_pad(lo, hi, 0.08 * (hi - lo), 1.0);
    /* within what gnuplot reads and prints (a wider exp reaches it as "inf";
       the bounds are our choice, as the rate figure's) */
    double y0 = fmin(fmax(exp(lo - ypad), AXIS_MIN), AXIS_MAX / 10.0);
    double y1 = fmax(fmin(exp(hi + ypad), AXIS_MAX), 2.0 * y0), t0, t1;
    lo = log(y0);
    hi = log(y1);
    time_range(r, &t0, &t1);

    char name[256], words[600], key[300], buf[300];
    arrank_plot_style_axes(f, 0);
    arrank_plot_figure_name(a, ARRANK_FIGURE_TIME_ON_STREAM, i, name, sizeof name);
    double t = arrank_plot_head(s, name) + 1.0 * fp;
    double b = s->H - arrank_plot_caption_px(s, 2) - 4.6 * fp;
    /* a log axis over a decade or more; within one, a linear axis keeps its
       tics (a log axis would show one label or none) */
    int logy = hi - lo > log(10.0);
    double max_y_tics = fmax(3, (b - t) / (2.4 * fp));
    size_t ych = logy ? 6 : arrank_plot_tic_chars(y0, y1, max_y_tics);
    double l = pad + 1.6 * fp + (double)ych * ARRANK_CHAR_EM * fp + 0.9 * fp;
    double rt = s->W - pad - fp;
    arrank_plot_area(s, l, t, rt, b);
    fprintf(f, "set xrange [%.9g:%.9g]\nset yrange [%.9g:%.9g]\n", t0, t1, y0, y1);
    size_t xch = arrank_plot_tic_chars(t0, t1, 8);
    arrank_plot_linear_tics(f, "x", t0, t1,
                            fmax(2, (rt - l) / (((double)xch * ARRANK_CHAR_EM + 2.5) * fp)));
    if (logy) {
        fputs("set logscale y\n", f);
        arrank_plot_put_log_tics(f, "y", y0, y1);
    } else {
        arrank_plot_linear_tics(f, "y", y0, y1, max_y_tics);
    }
    arrank_plot_text(s, 0.5 * (l + rt), b + 3.5 * fp, "center", 0.9, ARRANK_INK, 0,
                     "time on stream / h");
    if (dr)
        snprintf(buf, sizeof buf, "rate at %.1f °C / %s", dr->temp_ref_K - ZERO_C_K, s->unit);
    else
        snprintf(buf, sizeof buf, "rate / %s", s->unit);
    arrank_plot_text(s, 1.4 * fp, 0.5 * (t + b), "center", 0.9, ARRANK_INK, 1, buf);
    drift_words(r, dr, words, sizeof words);
    if (dr)
        snprintf(key, sizeof key, "line and band: the drift fit with its %.0f %% interval; "
                                  "filled: points of the drift test; open: not in it",
                 100.0 * r->confidence);
    else
        snprintf(key, sizeof key, "filled: usable points with a time on stream");
    const char *lines[2] = {words, key};
    arrank_plot_captions(s, lines, 2);
    plot_elements(f, i, &lk, dr != NULL, n_in, n_out);
}
