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
            "set object 95 rect from first %.9g, graph 0 to first %.9g, graph 1 behind "
            "fc rgb '" WINDOW_FILL "' fs solid 1.0 noborder\n"
            "set arrow 91 from first %.9g, graph 0 to first %.9g, graph 1 nohead dt 2 lw 1 "
            "lc rgb '" WINDOW_EDGE "' back\n"
            "set arrow 92 from first %.9g, graph 0 to first %.9g, graph 1 nohead dt 2 lw 1 "
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
                fprintf(f, "%.9g %.9g %.9g\n", X_SCALE / p->temp_K, log(p->rate) - yf,
                        log(p->rate));
                n++;
            }
            if (n)
                fputs("EOD\n", f);
            cnt[2 * (m + 1) + out] = n;
        }
}

/* The diagnosis's local apparent Ea windows as the block $loc<i>: 1000/T_mid
   [1/K], Ea, and its interval at the run's confidence [kJ/mol] (the value
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
        fprintf(f, "%.9g %.9g %.9g %.9g\n", X_SCALE / le->temp_mid_K, ea, a, b);
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

/* ---- layout: three panels stacked on one 1000/T axis ---------------------- */

/* What the panels of a sample's diagnostics need. */
typedef struct {
    const arrank_result *r;
    size_t i;
    const char *c;                    /* the sample's colour */
    double conf_pc;                   /* the confidence level in percent */
    size_t cnt[2 * (N_REGIMES + 1)];  /* points per regime mark, in the fit and left out */
    size_t nloc, n_runs, n_hcv, n_olr;
    int run_drawn[MAX_RUN_LINES];
    int has_window, any_pore, any_out;
    double win_lo_K, win_hi_K;
    double x_lo, x_hi;                /* the shared 1000/T axis */
    double ea, ea_w;                  /* the fitted Ea and its half interval, kJ/mol */
    double ea_lo, ea_hi;              /* the Ea panel's range from the values, kJ/mol */
    double y_lo, y_hi;                /* ln r over the points and the line */
    double l, r_px, legend_x;         /* px */
    double top[3], bot[3];            /* each panel's top and bottom, px */
} diag_panels;

void arrank_plot_size_diagnostics(script *s, double *w, double *h)
{
    (void)s;
    *h = fmax(*h, 1.05 * *w); /* three stacked panels */
}

/* One entry of the legend column: a marker (pt >= 0) or a line (dt), then
   words.  Returns the next entry's y. */
static double legend_entry(script *s, double x, double y, int pt, const char *dt,
                           const char *color, const char *words)
{
    FILE *f = s->f;
    if (pt >= 0)
        fprintf(f, "set label '' at screen %.6f, screen %.6f point pt %d ps PS lc rgb '%s' "
                   "front\n",
                arrank_plot_sx(s, x + 1.0 * s->fpx), arrank_plot_sy(s, y), pt, color);
    else
        fprintf(f, "set arrow from screen %.6f, screen %.6f to screen %.6f, screen %.6f nohead "
                   "lc rgb '%s' dt %s lw 1.5 front\n",
                arrank_plot_sx(s, x), arrank_plot_sy(s, y), arrank_plot_sx(s, x + 2.0 * s->fpx),
                arrank_plot_sy(s, y), color, dt);
    char buf[300];
    arrank_plot_fit_text(words, s->W - x - 3.4 * s->fpx, 0.72 * s->fpx, buf, sizeof buf);
    arrank_plot_text(s, x + 2.6 * s->fpx, y, "left", 0.72, ARRANK_INK, 0, buf);
    return y + 1.45 * 0.72 * s->fpx;
}

static void diag_legend(script *s, const diag_panels *P)
{
    double x = P->legend_x, y = P->top[0] + 0.5 * s->fpx;
    char buf[200];
    for (int m = 0; m < (int)N_REGIMES; m++)
        if (P->cnt[2 * (m + 1)] + P->cnt[2 * (m + 1) + 1])
            y = legend_entry(s, x, y, regime_marks[m].pt[0], NULL, P->c, regime_marks[m].words);
    if (P->cnt[0] + P->cnt[1])
        y = legend_entry(s, x, y, arrank_plot_sample_point_type(s->a, P->i, 0), NULL, P->c, "in the fit");
    if (P->any_out)
        y = legend_entry(s, x, y, 6, NULL, "#555555", "open: left out of the fit");
    for (size_t j = 0; j < P->n_runs; j++)
        if (P->run_drawn[j]) {
            snprintf(buf, sizeof buf, "run %.60s", P->r->sample->runs[j]);
            char dt[24];
            snprintf(dt, sizeof dt, "%zu", j + 1);
            y = legend_entry(s, x, y, -1, dt, P->c, buf);
        }
    if (P->n_hcv) {
        snprintf(buf, sizeof buf, "conversion above %.4g %%",
                 100.0 * P->r->diagnosis->conversion_limit);
        y = legend_entry(s, x, y, 2, NULL, "#222222", buf);
    }
    if (P->n_olr)
        y = legend_entry(s, x, y, 1, NULL, "#222222", "outlier");
    y += 0.6 * s->fpx;
    snprintf(buf, sizeof buf, "fitted line, %.4g %% band", P->conf_pc);
    y = legend_entry(s, x, y, -1, arrank_plot_dash(arrank_plot_look_of(s->a, P->i).dash), P->c,
                     buf);
    if (isfinite(P->r->fit.resid_sd) && P->r->fit.resid_sd > 0 && !P->r->fit.weighted) {
        snprintf(buf, sizeof buf, "±t·s: %.4g %% of the scatter", P->conf_pc);
        y = legend_entry(s, x, y, -1, "(6,4)", "#666666", buf);
    }
    if (P->nloc) {
        snprintf(buf, sizeof buf, "local Ea, 3 temperatures, %.4g %% interval", P->conf_pc);
        y = legend_entry(s, x, y, 7, NULL, P->c, buf);
    }
    snprintf(buf, sizeof buf, "fitted Ea, %.4g %% interval", P->conf_pc);
    y = legend_entry(s, x, y, -1, "(10,5)", P->c, buf);
    if (P->any_pore)
        y = legend_entry(s, x, y, -1, "(2,4)", "#444444", "half Ea: strong pore diffusion");
    if (P->has_window) {
        snprintf(buf, sizeof buf, "grey: kinetic window %.0f–%.0f °C", P->win_lo_K - ZERO_C_K,
                 P->win_hi_K - ZERO_C_K);
        legend_entry(s, x, y, 5, NULL, WINDOW_FILL, buf);
    }
}

/* The panel's frame: area, the shared x axis, the window, y range and tics,
   its y label.  k is the panel (0 top). */
static void diag_frame(script *s, const diag_panels *P, int k, double y_lo, double y_hi,
                       const char *ylabel)
{
    FILE *f = s->f;
    double fp = s->fpx;
    if (k > 0)
        fputs("unset label\nunset arrow\nunset object\nunset link x2\nunset x2tics\n", f);
    arrank_plot_style_axes(f, k == 0);
    arrank_plot_area(s, P->l, P->top[k], P->r_px, P->bot[k]);
    fprintf(f, "set xrange [%.9g:%.9g]\nset yrange [%.9g:%.9g]\n", P->x_lo, P->x_hi, y_lo, y_hi);
    size_t xch = arrank_plot_tic_chars(P->x_lo, P->x_hi, 8);
    arrank_plot_linear_tics(f, "x", P->x_lo, P->x_hi,
                            fmax(2, (P->r_px - P->l) / (((double)xch * ARRANK_CHAR_EM + 2.5) * fp)));
    arrank_plot_linear_tics(f, "y", y_lo, y_hi, fmax(2, (P->bot[k] - P->top[k]) / (2.2 * fp)));
    if (k == 0) {
        fputs("set link x2 via 1000./x - 273.15 inverse 1000./(x + 273.15)\n", f);
        arrank_plot_put_celsius_tics(f, X_SCALE / P->x_hi - ZERO_C_K,
                                     X_SCALE / P->x_lo - ZERO_C_K,
                                     fmax(2, (P->r_px - P->l) / (6.0 * fp)));
        arrank_plot_text(s, 0.5 * (P->l + P->r_px), P->top[0] - 3.3 * fp, "center", 0.9,
                         ARRANK_INK, 0, "T / °C");
    }
    if (k == 2)
        arrank_plot_text(s, 0.5 * (P->l + P->r_px), P->bot[2] + 3.5 * fp, "center", 0.9,
                         ARRANK_INK, 0, "1000 K / T");
    arrank_plot_text(s, 1.4 * fp, 0.5 * (P->top[k] + P->bot[k]), "center", 0.8, ARRANK_INK, 1,
                     ylabel);
    if (P->has_window) {
        double pad = 0.012 * (P->x_hi - P->x_lo);
        put_window_shade(f, X_SCALE / P->win_hi_K - pad, X_SCALE / P->win_lo_K + pad);
    }
}

/* The points by regime, in the fit (filled) or left out (open), plotting
   column col of their blocks (3: ln r, 2: the residual). */
static void put_regime_points(script *s, const diag_panels *P, int col, int *first)
{
    FILE *f = s->f;
    for (int m = -1; m < (int)N_REGIMES; m++)
        for (int out = 0; out < 2; out++) {
            if (!P->cnt[2 * (m + 1) + out])
                continue;
            int pt = m < 0 ? arrank_plot_sample_point_type(s->a, P->i, out)
                           : regime_marks[m].pt[out];
            arrank_plot_next_elem(f, first);
            if (m < 0)
                fprintf(f, "$rgn%c%zu", out ? 'x' : 'u', P->i);
            else
                fprintf(f, "$rg%d%c%zu", m, out ? 'x' : 'u', P->i);
            fprintf(f, " using 1:%d with points pt %d ps 1.2*PS lw 1.2 lc rgb '%s'", col, pt,
                    P->c);
        }
}

/* Panel 1: the sample's Arrhenius plot, points marked by regime. */
static void diag_arrhenius(script *s, const diag_panels *P)
{
    FILE *f = s->f;
    char buf[300];
    snprintf(buf, sizeof buf, "ln (r / %s)", s->unit);
    diag_frame(s, P, 0, P->y_lo, P->y_hi, buf);
    fputs("set style fill transparent solid 0.16 noborder\n", f);
    int first = 1;
    arrank_plot_next_elem(f, &first);
    fprintf(f, "$dfit%zu using 1:3:4 with filledcurves lc rgb '%s'", P->i, P->c);
    arrank_plot_next_elem(f, &first);
    fprintf(f, "$dfit%zu using 1:2 with lines ", P->i);
    arrank_plot_put_line_look(f, s->a, P->i, 2.0);
    put_regime_points(s, P, 3, &first);
    fputs("\n", f);
}

/* Panel 2: residuals with +-t s lines (the run's level, like every interval). */
static void diag_residuals(script *s, const diag_panels *P, double lo, double hi)
{
    FILE *f = s->f;
    diag_frame(s, P, 1, lo, hi, "residual of ln r");
    const arrank_arrhenius *fit = &P->r->fit;
    double ts = isfinite(P->r->t_quantile) ? P->r->t_quantile * fit->resid_sd : NAN;
    int first = 1;
    arrank_plot_next_elem(f, &first);
    fputs("0 with lines lw 1 lc rgb '#444444'", f);
    if (isfinite(ts) && ts > 0 && !fit->weighted) {
        arrank_plot_next_elem(f, &first);
        fprintf(f, "%.9g with lines dt (6,4) lc rgb '#666666', %.9g with lines dt (6,4) "
                   "lc rgb '#666666'", ts, -ts);
    }
    for (size_t j = 0; j < P->n_runs; j++)
        if (P->run_drawn[j]) {
            arrank_plot_next_elem(f, &first);
            fprintf(f, "$run%zu_%zu using 1:2 with lines lw 1 dt %zu lc rgb '%s'", j, P->i, j + 1,
                    P->c);
        }
    put_regime_points(s, P, 2, &first);
    if (P->n_hcv) {
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$hcv%zu using 1:2 with points pt 2 ps 1.9*PS lw 1.5 lc rgb '#222222'", P->i);
    }
    if (P->n_olr) {
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$olr%zu using 1:2 with points pt 1 ps 1.9*PS lw 1.5 lc rgb '#222222'", P->i);
    }
    fputs("\n", f);
}

/* Panel 3: the local apparent Ea with its intervals, the fitted Ea's. */
static void diag_local_ea(script *s, const diag_panels *P)
{
    FILE *f = s->f;
    double span = P->ea_hi - P->ea_lo;
    double pad = arrank_plot_min_pad(P->ea_lo, P->ea_hi, 0.15 * span, fmax(1, fabs(P->ea_hi)));
    diag_frame(s, P, 2, P->ea_lo - pad, P->ea_hi + pad, "Ea / kJ mol⁻¹");
    if (!P->r->diagnosis)
        arrank_plot_text(s, 0.5 * (P->l + P->r_px), P->top[2] + 1.2 * s->fpx, "center", 0.75,
                         ARRANK_INK_SOFT, 0, "local apparent Ea not shown: diagnostics turned off");
    fputs("set style fill transparent solid 0.2 noborder\n", f);
    int first = 1;
    arrank_plot_next_elem(f, &first);
    fprintf(f, "$eab%zu using 1:3:4 with filledcurves lc rgb '%s'", P->i, P->c);
    arrank_plot_next_elem(f, &first);
    fprintf(f, "$eab%zu using 1:2 with lines lw 2 dt (10,5) lc rgb '%s'", P->i, P->c);
    if (P->nloc) {
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$loc%zu using 1:2:3:4 with yerrorlines pt 7 ps 1.1*PS lw 1.3 lc rgb '%s'",
                P->i, P->c);
    }
    /* Strong pore diffusion halves the apparent Ea (Weisz & Prater, Adv.
       Catal. 6:143, 1954): the line the hot-end local Ea tends to. */
    if (P->any_pore) {
        arrank_plot_next_elem(f, &first);
        fprintf(f, "%.9g with lines lw 1.3 dt (2,4) lc rgb '#444444'", P->ea / 2.0);
    }
    fputs("\n", f);
}

/* The data of the panels and their ranges. */
static void diag_data(script *s, diag_panels *P, double *res_lo, double *res_hi)
{
    FILE *f = s->f;
    const arrank_result *r = P->r;
    const arrank_arrhenius *fit = &r->fit;
    const arrank_sample *smp = r->sample;
    size_t i = P->i;
    block_residuals(f, r, i, P->cnt);
    P->nloc = block_local_ea(f, r, i, &P->ea_lo, &P->ea_hi);
    P->n_runs = block_runs(f, r, i, P->run_drawn);
    P->n_hcv = block_marked(f, r, i, 0);
    P->n_olr = block_marked(f, r, i, 1);
    P->has_window = kinetic_window(r, &P->win_lo_K, &P->win_hi_K);
    for (size_t m = 0; m <= N_REGIMES; m++)
        P->any_out |= P->cnt[2 * m + 1] > 0;
    for (size_t m = 0; m < N_REGIMES; m++)
        if (regime_marks[m].regime == ARRANK_REGIME_PORE)
            P->any_pore = P->cnt[2 * (m + 1)] + P->cnt[2 * (m + 1) + 1] > 0;
    double t_lo = INFINITY, t_hi = -INFINITY;
    P->y_lo = *res_lo = INFINITY;
    P->y_hi = *res_hi = -INFINITY;
    for (size_t k = 0; k < smp->n_points; k++)
        if (arrank_plot_usable_point(&smp->points[k])) {
            const arrank_point *p = &smp->points[k];
            double yf, se;
            arrank_plot_line_at(fit, p->temp_K, &yf, &se);
            t_lo = fmin(t_lo, p->temp_K);
            t_hi = fmax(t_hi, p->temp_K);
            P->y_lo = fmin(P->y_lo, log(p->rate));
            P->y_hi = fmax(P->y_hi, log(p->rate));
            *res_lo = fmin(*res_lo, log(p->rate) - yf);
            *res_hi = fmax(*res_hi, log(p->rate) - yf);
        }
    double xa = X_SCALE / t_hi, xb = X_SCALE / t_lo;
    double xp = arrank_plot_min_pad(xa, xb, 0.05 * (xb - xa), xb);
    P->x_lo = xa - xp;
    P->x_hi = xb + xp;
    double py = arrank_plot_min_pad(P->y_lo, P->y_hi, 0.08 * (P->y_hi - P->y_lo),
                                    fmax(1, fabs(P->y_hi)));
    P->y_lo -= py;
    P->y_hi += py;
    double ts = isfinite(r->t_quantile) ? r->t_quantile * fit->resid_sd : 0;
    double rm = fmax(fmax(fabs(*res_lo), fabs(*res_hi)), isfinite(ts) ? ts : 0);
    rm = rm > 0 ? 1.15 * rm : 0.01;
    *res_lo = -rm;
    *res_hi = rm;
    /* the fitted line with its band (the pipeline's t), and the fitted Ea
       with its interval over the fit's range */
    arrank_plot_block_line(f, r, "dfit", i, X_SCALE / fit->T_max_K, X_SCALE / fit->T_min_K, 40);
    const double t = r->t_quantile;
    P->ea = fit->ea_J_mol / 1000.0;
    P->ea_w = isfinite(t) ? t * fit->ea_se_J_mol / 1000.0 : 0.0;
    P->ea_lo = fmin(P->ea_lo, P->ea - P->ea_w);
    P->ea_hi = fmax(P->ea_hi, P->ea + P->ea_w);
    if (P->any_pore)
        P->ea_lo = fmin(P->ea_lo, P->ea / 2.0);
    fprintf(f, "$eab%zu << EOD\n%.9g %.9g %.9g %.9g\n%.9g %.9g %.9g %.9g\nEOD\n", i,
            X_SCALE / fit->T_max_K, P->ea, P->ea - P->ea_w, P->ea + P->ea_w,
            X_SCALE / fit->T_min_K, P->ea, P->ea - P->ea_w, P->ea + P->ea_w);
}

void arrank_plot_fig_diagnostics(script *s, size_t i)
{
    FILE *f = s->f;
    const arrank_analysis *a = s->a;
    double fp = s->fpx, pad = 0.8 * fp;
    diag_panels P = {.r = &a->results[i], .i = i, .c = arrank_plot_sample_color(a, i),
                     .conf_pc = 100.0 * a->options.confidence, .win_lo_K = NAN,
                     .win_hi_K = NAN, .ea_lo = INFINITY, .ea_hi = -INFINITY};
    double res_lo, res_hi;
    diag_data(s, &P, &res_lo, &res_hi);
    /* the residual blocks carry ln r as their third column, for panel 1 */
    char name[256];
    arrank_plot_figure_name(a, ARRANK_FIGURE_DIAGNOSTICS, i, name, sizeof name);
    fputs("set multiplot\n", f);
    arrank_plot_style_axes(f, 1);
    double t = arrank_plot_head(s, name) + 4.0 * fp;
    double b = s->H - arrank_plot_caption_px(s, 1) - 4.6 * fp;
    size_t ych = 7;
    P.l = pad + 1.6 * fp + (double)ych * ARRANK_CHAR_EM * fp + 0.6 * fp;
    P.legend_x = s->W - pad - 0.34 * s->W;
    P.r_px = P.legend_x - 1.2 * fp;
    double gap = 3.0 * fp, avail = b - t - 2 * gap;
    P.top[0] = t;
    P.bot[0] = t + 0.4 * avail;
    P.top[1] = P.bot[0] + gap;
    P.bot[1] = P.top[1] + 0.3 * avail;
    P.top[2] = P.bot[1] + gap;
    P.bot[2] = b;
    diag_legend(s, &P);
    char line[400];
    snprintf(line, sizeof line, "every interval and band at %.4g %%; marker shape: the "
                                "point's regime",
             P.conf_pc);
    const char *lines[1] = {line};
    arrank_plot_captions(s, lines, 1);
    diag_arrhenius(s, &P);
    diag_residuals(s, &P, res_lo, res_hi);
    diag_local_ea(s, &P);
    fputs("unset multiplot\n", f);
}
