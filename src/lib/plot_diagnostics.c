/*
 * plot_diagnostics.c - one figure per fitted sample: residuals against 1000/T
 * and the local apparent Ea windows against T, the kinetic window shaded,
 * each point's regime shown by its marker (the plot family: see plot.c for
 * the safety rule on user text).
 */
#include <stdio.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/diagnose.h"
#include "arrank/analysis_stats.h"
#include "plot_internal.h"

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
        kinetic |= arrank_plot_point_used(r, k) && d->points[k].regime == ARRANK_REGIME_KINETIC;
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
                if (!arrank_plot_usable_point(p) || arrank_plot_point_used(r, k) == out ||
                    regime_of(r, k) != m)
                    continue;
                if (n == 0) {
                    if (m < 0)
                        fprintf(f, "$rgn%c%zu << EOD\n", out ? 'x' : 'u', i);
                    else
                        fprintf(f, "$rg%d%c%zu << EOD\n", m, out ? 'x' : 'u', i);
                }
                double yf, se;
                arrank_plot_line_at(&r->fit, p->temp_K, &yf, &se);
                fprintf(f, "%.9g %.9g\n", X_SCALE / p->temp_K, log(p->rate) - yf);
                n++;
            }
            if (n)
                fputs("EOD\n", f);
            cnt[2 * (m + 1) + out] = n;
        }
}

/* The diagnosis's local apparent Ea windows as the block $loc<i>: T_mid
   [degC], Ea, and its interval at the run's confidence [kJ/mol] (the value
   itself when not known).  Returns the number of rows; *lo, *hi widen to
   the values (not the intervals), which set the panel's range. */
static size_t block_local_ea(FILE *f, const arrank_result *r, size_t i, double *lo, double *hi)
{
    const arrank_diagnosis *d = r->diagnosis;
    size_t rows = 0;
    for (size_t k = 0; d && k < d->curvature.n_local; k++) {
        const arrank_local_ea *le = &d->curvature.local[k];
        if (!isfinite(le->ea_J_mol) || !isfinite(le->temp_mid_K))
            continue;
        if (rows == 0)
            fprintf(f, "$loc%zu << EOD\n", i);
        const double ea = le->ea_J_mol / 1000.0;
        const double a = isfinite(le->ea_lo_J_mol) ? le->ea_lo_J_mol / 1000.0 : ea;
        const double b = isfinite(le->ea_hi_J_mol) ? le->ea_hi_J_mol / 1000.0 : ea;
        fprintf(f, "%.9g %.9g %.9g %.9g\n", le->temp_mid_K - ZERO_C_K, ea, a, b);
        *lo = fmin(*lo, ea);
        *hi = fmax(*hi, ea);
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
        if (!marked || !arrank_plot_usable_point(p))
            continue;
        if (n == 0)
            fprintf(f, "$%s%zu << EOD\n", which == 0 ? "hcv" : "olr", i);
        double yf, se;
        arrank_plot_line_at(&r->fit, p->temp_K, &yf, &se);
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
            if (smp->points[k].run == (int)j && arrank_plot_usable_point(&smp->points[k]))
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
            arrank_plot_line_at(&r->fit, p->temp_K, &yf, &se);
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

/* What both panels of a sample's diagnostics need. */
typedef struct {
    const arrank_result *r;
    const char *c;                    /* the sample's colour */
    double conf_pc;                   /* the confidence level in percent */
    size_t cnt[2 * (N_REGIMES + 1)];  /* points per regime mark, in the fit and left out */
    size_t nloc, n_runs, n_hcv, n_olr;
    int run_drawn[MAX_RUN_LINES];
    int has_window, any_pore, any_out;
    double win_lo_K, win_hi_K;
    double xa, xb, xp, ca, cb, cp;    /* the panels' spans: 1000/T and degC, with padding */
    double ea;                        /* the fitted Ea, kJ/mol */
    double ea_lo, ea_hi;              /* the right panel's range from the values, kJ/mol */
} diag_panels;

/* Left panel: residuals against 1000/T, degC along the top, with the +-2 s
   lines; marker shape by regime, open when left out of the fit. */
static void diag_left(script *s, size_t i, const diag_panels *dp)
{
    FILE *f = s->f;
    const diag_panels *P = dp;
    const arrank_result *r = P->r;
    const arrank_arrhenius *fit = &r->fit;
    const arrank_diagnosis *d = r->diagnosis;
    const char *c = P->c;
    const size_t *cnt = P->cnt, n_runs = P->n_runs, n_hcv = P->n_hcv, n_olr = P->n_olr;
    const int *run_drawn = P->run_drawn, has_window = P->has_window, any_out = P->any_out;
    const double win_lo_K = P->win_lo_K, win_hi_K = P->win_hi_K;
    const double xa = P->xa, xb = P->xb, xp = P->xp;
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
            DIAG_LEFT_L - 0.06, DIAG_KEY_TOP, arrank_plot_font_of(s, 0.72));
    if (xb > xa) {
        fprintf(f, "set xrange [%.9g:%.9g]\nset xtics %.9g\n", xa - xp, xb + xp,
                arrank_plot_nice_step(xb - xa + 2 * xp, 5.0));
        fputs("set link x2 via 1000./x - 273.15 inverse 1000./(x + 273.15)\n", f);
        arrank_plot_put_celsius_tics(f, X_SCALE / (xb + xp) - ZERO_C_K,
                                     X_SCALE / (xa - xp) - ZERO_C_K, 6.0);
    }
    if (has_window) {
        double pad = 0.012 * (xb - xa + 2 * xp);
        put_window_shade(f, X_SCALE / win_hi_K - pad, X_SCALE / win_lo_K + pad);
    }
    double sd2 = 2.0 * fit->resid_sd;
    int first = 1;
    arrank_plot_next_elem(f, &first);
    fputs("0 with lines lw 1.2 lc rgb '#444444'", f);
    if (isfinite(sd2) && sd2 > 0 && !fit->weighted) {
        arrank_plot_next_elem(f, &first);
        fprintf(f, "%.9g with lines dt 2 lc rgb '#666666' title '±2 s (residual SD)'", sd2);
        arrank_plot_next_elem(f, &first);
        fprintf(f, "%.9g with lines dt 2 lc rgb '#666666'", -sd2);
    }
    for (size_t j = 0; j < n_runs; j++) {
        if (!run_drawn[j])
            continue;
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$run%zu_%zu using 1:2 with lines lw 1 dt %zu lc rgb '%s' title ", j, i,
                j + 1, c);
        arrank_plot_put_qf(f, "run '%s'", r->sample->runs[j]);
    }
    for (int m = -1; m < (int)N_REGIMES; m++)
        for (int out = 0; out < 2; out++) {
            if (!cnt[2 * (m + 1) + out])
                continue;
            int pt = m < 0 ? arrank_plot_point_type(i, out) : regime_marks[m].pt[out];
            arrank_plot_next_elem(f, &first);
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
            arrank_plot_next_elem(f, &first);
            fprintf(f, "keyentry with points pt %d ps 1.3*PS lc rgb '%s' title ",
                    regime_marks[m].pt[0], c);
            arrank_plot_put_qf(f, "%s", regime_marks[m].words);
        }
    if (any_out) {
        arrank_plot_next_elem(f, &first);
        fputs("keyentry with points pt 6 ps 1.3*PS lc rgb '#555555' "
              "title 'open: left out of the fit'", f);
    }
    /* Data-quality marks drawn over the regime marker, in near-black so they
       show on any sample colour. */
    if (n_hcv) {
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$hcv%zu using 1:2 with points pt 2 ps 2.4*PS lw 1.5 lc rgb '#222222' "
                   "title ", i);
        arrank_plot_put_qf(f, "conversion above %.4g %%", 100.0 * d->conversion_limit);
    }
    if (n_olr) {
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$olr%zu using 1:2 with points pt 1 ps 2.4*PS lw 1.5 lc rgb '#222222' "
                   "title 'outlier'", i);
    }
    if (has_window) {
        arrank_plot_next_elem(f, &first);
        fputs("keyentry with filledcurves fc rgb '" WINDOW_FILL "' fs solid 1.0 noborder "
              "title ", f);
        arrank_plot_put_qf(f, "kinetic window %.0f–%.0f °C", win_lo_K - ZERO_C_K,
                           win_hi_K - ZERO_C_K);
    }
    fputs("\n", f);

}

/* Right panel: the diagnosis's local apparent Ea windows against T, with
   the fitted Ea and its interval. */
static void diag_right(script *s, size_t i, const diag_panels *dp)
{
    FILE *f = s->f;
    const diag_panels *P = dp;
    const arrank_diagnosis *d = P->r->diagnosis;
    const char *c = P->c;
    const size_t nloc = P->nloc;
    const int has_window = P->has_window, any_pore = P->any_pore;
    const double win_lo_K = P->win_lo_K, win_hi_K = P->win_hi_K, ea = P->ea, conf_pc = P->conf_pc;
    const double ca = P->ca, cb = P->cb, cp = P->cp;
    int first = 1;
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
            DIAG_RIGHT_L - 0.06, DIAG_KEY_TOP, arrank_plot_font_of(s, 0.72));
    if (cb > ca)
        fprintf(f, "set xrange [%.9g:%.9g]\nset xtics %.9g\n", ca - cp, cb + cp,
                arrank_plot_nice_step(cb - ca + 2 * cp, 6.0));
    if (isfinite(P->ea_lo) && isfinite(P->ea_hi)) {
        const double span = P->ea_hi - P->ea_lo;
        const double pad = arrank_plot_min_pad(P->ea_lo, P->ea_hi, 0.15 * span, P->ea_hi);
        fprintf(f, "set offsets 0, 0, 0, 0\nset yrange [%.9g:%.9g]\n", P->ea_lo - pad,
                P->ea_hi + pad);
    }
    if (has_window) {
        double pad = 0.012 * (cb - ca + 2 * cp);
        put_window_shade(f, win_lo_K - ZERO_C_K - pad, win_hi_K - ZERO_C_K + pad);
    }
    if (!d)
        fprintf(f, "set label 7 'local apparent Ea not shown: diagnostics turned off' at "
                   "graph 0.5, graph 0.93 center font ',%d' tc rgb '#444444' front\n",
                arrank_plot_font_of(s, 0.8));
    arrank_plot_next_elem(f, &first);
    fprintf(f, "$eab%zu using 1:3:4 with filledcurves lc rgb '%s' title ", i, c);
    arrank_plot_put_qf(f, "fitted Ea%s, %.4g %% interval", has_window ? " (kinetic window)" : "",
                       conf_pc);
    arrank_plot_next_elem(f, &first);
    fprintf(f, "$eab%zu using 1:2 with lines lw 2.2 lc rgb '%s'", i, c);
    arrank_plot_next_elem(f, &first);
    fprintf(f, "%.9g with lines lw 1 dt 2 lc rgb '%s'", ea, c);
    if (nloc) {
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$loc%zu using 1:2:3:4 with yerrorlines pt 7 ps 1.3*PS lw 1.5 lc rgb '%s' "
                   "title ",
                i, c);
        arrank_plot_put_qf(f, "local Ea, 3 neighbouring temperatures, %.4g %% interval", conf_pc);
    }
    /* Strong pore diffusion halves the apparent Ea (Weisz & Prater, Adv.
       Catal. 6:143, 1954): the line the hot-end local Ea tends to. */
    if (any_pore) {
        arrank_plot_next_elem(f, &first);
        fprintf(f, "%.9g with lines lw 1.5 dt 3 lc rgb '#444444' "
                   "title 'half the fitted Ea: strong pore-diffusion limit'", ea / 2.0);
    }
    if (has_window) {
        arrank_plot_next_elem(f, &first);
        fputs("keyentry with filledcurves fc rgb '" WINDOW_FILL "' fs solid 1.0 noborder "
              "title 'kinetic window'", f);
    }
    fputs("\nunset multiplot\n", f);
}

void arrank_plot_fig_diagnostics(script *s, size_t i)
{
    FILE *f = s->f;
    const arrank_analysis *a = s->a;
    const arrank_result *r = &a->results[i];
    const arrank_arrhenius *fit = &r->fit;
    const arrank_sample *smp = r->sample;
    diag_panels dp = {.r = r, .c = arrank_plot_sample_color(a, i), .conf_pc = 100.0 * a->options.confidence,
                      .win_lo_K = NAN, .win_hi_K = NAN, .ea_lo = INFINITY, .ea_hi = -INFINITY};
    block_residuals(f, r, i, dp.cnt);
    dp.nloc = block_local_ea(f, r, i, &dp.ea_lo, &dp.ea_hi);
    dp.n_runs = block_runs(f, r, i, dp.run_drawn);
    dp.n_hcv = block_marked(f, r, i, 0);
    dp.n_olr = block_marked(f, r, i, 1);
    dp.has_window = kinetic_window(r, &dp.win_lo_K, &dp.win_hi_K);
    for (size_t m = 0; m <= N_REGIMES; m++)
        dp.any_out |= dp.cnt[2 * m + 1] > 0;
    for (size_t m = 0; m < N_REGIMES; m++)
        if (regime_marks[m].regime == ARRANK_REGIME_PORE)
            dp.any_pore = dp.cnt[2 * (m + 1)] + dp.cnt[2 * (m + 1) + 1] > 0;

    /* Both panels span the sample's points with 5 % to spare. */
    double t_lo = INFINITY, t_hi = -INFINITY;
    for (size_t k = 0; k < smp->n_points; k++)
        if (arrank_plot_usable_point(&smp->points[k])) {
            t_lo = fmin(t_lo, smp->points[k].temp_K);
            t_hi = fmax(t_hi, smp->points[k].temp_K);
        }
    dp.xa = X_SCALE / t_hi;
    dp.xb = X_SCALE / t_lo;
    dp.xp = arrank_plot_min_pad(dp.xa, dp.xb, 0.05 * (dp.xb - dp.xa), dp.xb);
    dp.ca = t_lo - ZERO_C_K;
    dp.cb = t_hi - ZERO_C_K;
    /* degC: the floor relative to the temperature in K (0 degC is no scale) */
    dp.cp = arrank_plot_min_pad(dp.ca, dp.cb, 0.05 * (dp.cb - dp.ca), t_hi);

    /* The fitted Ea and its interval over the fit's range; a thin dashed
       line carries it across the panel for comparison. */
    const double t = r->t_quantile; /* the pipeline's (analysis.c) */
    double ea = fit->ea_J_mol / 1000.0, w = isfinite(t) ? t * fit->ea_se_J_mol / 1000.0 : 0.0;
    dp.ea = ea;
    /* the right panel spans the values and the fit's band, not the local
       intervals: three temperatures give wide ones, which run off the panel */
    dp.ea_lo = fmin(dp.ea_lo, ea - w);
    dp.ea_hi = fmax(dp.ea_hi, ea + w);
    if (dp.any_pore)
        dp.ea_lo = fmin(dp.ea_lo, ea / 2.0);
    fprintf(f, "$eab%zu << EOD\n%.9g %.9g %.9g %.9g\n%.9g %.9g %.9g %.9g\nEOD\n", i,
            fit->T_min_K - ZERO_C_K, ea, ea - w, ea + w, fit->T_max_K - ZERO_C_K, ea, ea - w,
            ea + w);

    fputs("set multiplot title ", f);
    arrank_plot_put_qf(f, "Diagnostics: %s", arrank_plot_sample_name(r));
    fprintf(f, " font ',%d'\n", arrank_plot_font_of(s, 1.1));
    fprintf(f, "set tmargin at screen %.3f\nset bmargin at screen %.3f\n", DIAG_TOP, DIAG_BOTTOM);
    diag_left(s, i, &dp);
    diag_right(s, i, &dp);
}

