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

int arrank_plot_has_time_on_stream(const arrank_result *r)
{
    const arrank_sample *s = r->sample;
    for (size_t k = 0; k < s->n_points; k++)
        if (isfinite(s->points[k].time_on_stream_s) && arrank_plot_usable_point(&s->points[k]))
            return 1;
    return 0;
}

/* The drift test ran on this sample, with a fit to draw. */
static const arrank_drift *drift_of(const arrank_result *r)
{
    const arrank_diagnosis *d = r->diagnosis;
    if (!d || !d->drift.tested || !isfinite(d->drift.ln_rate_ref) ||
        !isfinite(d->drift.temp_slope_K) || !isfinite(d->drift.slope_ln_per_h))
        return NULL;
    return &d->drift;
}

/* Which points were the drift test's: the usable points of the first fit
   (the diagnosis's order) with a time on stream.  A new array of
   n_points flags (free), NULL without a diagnosis or memory. */
static unsigned char *drift_points(const arrank_result *r)
{
    const arrank_diagnosis *d = r->diagnosis;
    const arrank_sample *s = r->sample;
    unsigned char *in = d ? calloc(s->n_points ? s->n_points : 1, 1) : NULL;
    for (size_t j = 0; in && j < d->n_order; j++)
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
        if (!isfinite(ln_r))
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
        fprintf(f, "%.9g %.9g %.9g %.9g\n", t, exp(y), exp(y - tq * se), exp(y + tq * se));
        *lo = fmin(*lo, y - tq * se);
        *hi = fmax(*hi, y + tq * se);
    }
    fputs("EOD\n", f);
}

/* The line under the title: the drift per hour with its interval, or why
   there is no drift line. */
static void put_subtitle(script *s, const arrank_result *r, const arrank_drift *dr)
{
    FILE *f = s->f;
    fputs("set label 2 ", f);
    if (dr) {
        const double tq = isfinite(dr->t_quantile) ? dr->t_quantile : 0.0;
        const double b = dr->slope_ln_per_h, w = tq * dr->slope_se;
        arrank_plot_put_qf(f,
                           "drift %+.2f %%/h (%.0f %% interval %+.2f to %+.2f), p = %.2g, "
                           "%zu points; rates brought to %.1f K (%.1f degC) with this "
                           "fit's own temperature dependence",
                           100.0 * expm1(b), 100.0 * r->confidence, 100.0 * expm1(b - w),
                           100.0 * expm1(b + w), dr->p, dr->n_points, dr->temp_ref_K,
                           dr->temp_ref_K - ZERO_C_K);
    } else {
        const arrank_diagnosis *d = r->diagnosis;
        if (r->error) /* text from a file reaches gnuplot quoted, as all of it */
            arrank_plot_put_qf(f, "rates as measured; no drift line: sample not fitted: %s",
                               r->error);
        else
            arrank_plot_put_qf(f, "rates as measured; no drift line: %s",
                               !d              ? "no diagnosis (--no-diagnose)"
                               : d->drift.note ? d->drift.note
                                               : "the drift test did not run");
    }
    fprintf(f, " at screen 0.5, screen 0.885 center font \",%d\" noenhanced\n",
            arrank_plot_font_of(s, 0.62));
}

void arrank_plot_fig_stream(script *s, size_t i)
{
    FILE *f = s->f;
    const arrank_result *r = &s->a->results[i];
    const arrank_drift *dr = drift_of(r);
    const char *c = arrank_plot_color(i);
    double lo = INFINITY, hi = -INFINITY;
    unsigned char *tested = drift_points(r);
    size_t n_in = block_points(f, r, i, dr, tested, 1, "tos", &lo, &hi);
    size_t n_out = block_points(f, r, i, dr, tested, 0, "tox", &lo, &hi);
    free(tested);
    if (dr)
        block_line(f, dr, i, &lo, &hi);
    /* the title, and under it the drift in words, above the plot */
    fputs("set label 1 ", f);
    arrank_plot_put_qf(f, "%s: rate against time on stream", arrank_plot_sample_name(r));
    fprintf(f, " at screen 0.5, screen 0.935 center font \",%d\"\nset tmargin 6.5\n",
            arrank_plot_font_of(s, 1.1));
    put_subtitle(s, r, dr);
    fputs("set xlabel 'time on stream [h]'\nset ylabel ", f);
    if (dr)
        arrank_plot_put_qf(f, "rate at %.1f K [%s]", dr->temp_ref_K, s->unit);
    else
        arrank_plot_put_qf(f, "rate [%s]", s->unit);
    /* a log axis over a decade or more; within one, a linear axis keeps its
       tics (a log axis would show one label or none) */
    if (isfinite(lo) && isfinite(hi) && hi - lo > log(10.0))
        fputs("\nset logscale y\nset format y '%g'\n", f);
    else
        fputs("\nset format y '%g'\n", f);
    if (isfinite(lo) && isfinite(hi)) {
        double pad = arrank_plot_min_pad(lo, hi, 0.08 * (hi - lo), 1.0);
        fprintf(f, "set yrange [%.9g:%.9g]\n", exp(lo - pad), exp(hi + pad));
    }
    fputs("set autoscale xfix\nset offsets graph 0.04, graph 0.04, 0, 0\n"
          "set key top right Left reverse samplen 1.5 spacing 1.15 opaque\n",
          f);
    int first = 1;
    if (dr) {
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$drift%zu using 1:3:4 with filledcurves fc rgb '%s' fs transparent solid "
                   "0.18 noborder title ",
                i, c);
        arrank_plot_put_qf(f, "%.0f %% interval of the drift line", 100.0 * r->confidence);
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$drift%zu using 1:2 with lines lw 2 lc rgb '%s' title 'drift fit'", i, c);
    }
    if (n_in) {
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$tos%zu using 1:2 with points pt %d ps 1.6*PS lc rgb '%s' title ", i,
                arrank_plot_point_type(i, 0), c);
        arrank_plot_put_q(f, dr ? "points of the drift test" : "usable points");
    }
    if (n_out) {
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$tox%zu using 1:2 with points pt %d ps 1.6*PS lc rgb '%s' title ", i,
                arrank_plot_point_type(i, 1), c);
        arrank_plot_put_q(f, dr ? "not in the drift test" : "other points");
    }
    if (first) /* nothing to draw: an empty frame rather than a broken script */
        fputs("plot 1/0 notitle", f);
    fputs("\n", f);
}
