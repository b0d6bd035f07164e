/*
 * quality.c - the data-quality checks of one sample's diagnosis
 * (quality.h): conversion above the differential limit, shifts between runs
 * and repeated passes (deactivation or activation), drift with time on
 * stream, and outliers and influential points.
 */
#include "quality.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "regress.h"
#include "stats.h"
#include "util.h"

/* Runs, repeats and drift: two-sided 5 % test and at least a 5 % change
   (ARRANK_RUN_MIN_CHANGE) ("loss > 5-10 % = flag", DOMAIN notes, from
   memory). */
#define RUN_LEVEL 0.05
/* |corr(1/T, time)| above this: drift and temperature cannot be separated. */
#define DRIFT_COLLINEAR 0.95
/* The drift fit has three parameters (ln r on 1/T and time): with scatter
   it needs five points, as the quadratic test (common practice). */
#define DRIFT_MIN_POINTS 5
/* Outliers: externally studentized residual beyond the Bonferroni-corrected
   t quantile at family level 5 %; influence: Cook's distance above
   ARRANK_COOK_LIMIT (both common practice in regression diagnostics, e.g.
   Cook & Weisberg 1982, from memory). */
#define OUTLIER_FAMILY 0.05
/* Influential means Cook's distance above its limit and also off the line
   beyond the pointwise two-sided 1 % t quantile: in windows of 4-6 points an
   end point alone often has D > 1 (our choice). */
#define INFLUENCE_LEVEL 0.01

/* ---- conversion ------------------------------------------------------------ */

size_t arrank_quality_conversion(arrank_dwork *wk, const size_t *base, size_t n, size_t *cand)
{
    arrank_diagnosis *d = wk->d;
    size_t nc = 0;
    for (size_t k = 0; k < n; k++) {
        size_t i = base[k];
        double X = wk->pt[i].conversion;
        if (isfinite(X) && X > d->conversion_limit) {
            d->points[i].high_conversion = 1;
            d->n_high_conversion++;
        } else
            cand[nc++] = i;
    }
    return nc;
}

/* ---- runs, repeats and drift ---------------------------------------------- */

/* The run's shift against the reference run: t, p, change and verdict. */
static void run_verdict(arrank_run_shift *rs)
{
    if (!(isfinite(rs->shift_ln) && rs->dof > 0))
        return;
    rs->t = rs->shift_ln_se > 0 ? rs->shift_ln / rs->shift_ln_se
                                : (rs->shift_ln < 0 ? -INFINITY : INFINITY);
    rs->p = arrank_stats_t_p(rs->t, rs->dof);
    rs->change = expm1(rs->shift_ln);
    if (rs->p < RUN_LEVEL && fabs(rs->change) >= ARRANK_RUN_MIN_CHANGE)
        rs->verdict = rs->shift_ln < 0 ? -1 : 1;
}

/* Paired differences at the same set points, corrected to a common
   temperature with the fitted slope (robust to a bent plot): the mean of
   dif[0..np-1], and its standard error from their spread when np >= 3. */
static void run_paired(arrank_run_shift *rs, const double *dif, size_t np)
{
    rs->method = "paired";
    rs->n_pairs = np;
    double m = 0;
    for (size_t k = 0; k < np; k++)
        m += dif[k];
    m /= (double)np;
    rs->shift_ln = m;
    if (np >= 3) {
        double v = 0;
        for (size_t k = 0; k < np; k++)
            v += (dif[k] - m) * (dif[k] - m);
        rs->shift_ln_se = sqrt(v / ((double)np - 1.0) / (double)np);
        rs->dof = (double)np - 1.0;
    }
}

/* The line through the reference run (label 0), fitted once for every
   other run: its prediction variance and scatter give the standard error
   when a run shares too few set points with it. */
typedef struct {
    int ok;
    arrank_line lr;
    double wmean; /* mean weight of the reference run's points */
} ref_line;

/* Compare the run's m1 points (positions ks[] in sorted order) with the
   reference line. */
static void run_against_line(arrank_dwork *wk, arrank_run_shift *rs, const ref_line *rl,
                             const size_t *sorted, const size_t *ks, size_t m1)
{
    rs->method = "reference line";
    rs->shift_ln = NAN;
    if (!rl->ok || m1 == 0)
        return;
    double sd = 0, sx = 0;
    for (size_t q = 0; q < m1; q++) {
        size_t i = sorted[ks[q]];
        sd += wk->y[i] - arrank_regress_line_at(&rl->lr, wk->x[i]);
        sx += wk->x[i];
    }
    double u = (sx / (double)m1 - rl->lr.sc.xm) / rl->lr.sc.sx;
    double var = rl->lr.cov[0] + 2 * u * rl->lr.cov[1] + u * u * rl->lr.cov[3];
    /* unit weight of a point relative to the reference run's mean weight */
    rs->shift_ln = sd / (double)m1;
    rs->shift_ln_se = sqrt(var + rl->lr.s2 / (rl->wmean * (double)m1));
    rs->dof = rl->lr.dof;
    rs->n_pairs = m1;
}

/*
 * Compare each run (label j >= 1) with the reference run (label 0) over the
 * base set, in linear time: the reference run's sums per set point once, the
 * other runs' points bucketed by label (a counting sort that keeps their
 * order, so set points stay ascending within a run), then one walk per run
 * over its own points only.  Every sum adds the same terms in the same order
 * as one pass per run over all points would.
 */
static void compare_runs(arrank_dwork *wk, const size_t *sorted, const size_t *grp, size_t n,
                         const int *label, int n_labels, char **names, const arrank_line *base)
{
    arrank_diagnosis *d = wk->d;
    if (n_labels < 2)
        return;
    const size_t nl = (size_t)n_labels, n_groups = n ? grp[n - 1] + 1 : 0;
    d->runs = calloc(nl - 1, sizeof *d->runs);
    double *n0 = calloc(n_groups ? n_groups : 1, sizeof *n0);
    double *s0 = calloc(n_groups ? n_groups : 1, sizeof *s0);
    double *dif = malloc((n ? n : 1) * sizeof *dif);
    size_t *start = calloc(nl + 1, sizeof *start);
    size_t *ks = malloc((n ? n : 1) * sizeof *ks);
    size_t *sel = malloc((n ? n : 1) * sizeof *sel);
    if (!d->runs || !n0 || !s0 || !dif || !start || !ks || !sel) {
        wk->nomem = 1;
        goto done;
    }
    /* 1. the reference run per set point, and its points for the line */
    size_t m0 = 0;
    for (size_t k = 0; k < n; k++) {
        size_t i = sorted[k];
        if (label[i] != 0)
            continue;
        n0[grp[k]] += 1;
        s0[grp[k]] += wk->y[i] - base->b1_K * wk->x[i];
        sel[m0++] = i;
    }
    ref_line rl = {0};
    if (m0 >= 3 && arrank_regress_line(wk, sel, m0, &rl.lr) == 0) {
        rl.ok = 1;
        for (size_t k = 0; k < m0; k++)
            rl.wmean += wk->w[sel[k]];
        rl.wmean /= (double)m0;
    }
    /* 2. the other runs' positions, bucketed by label in sorted order */
    for (size_t k = 0; k < n; k++)
        if (label[sorted[k]] > 0)
            start[label[sorted[k]] + 1]++;
    for (size_t j = 1; j <= nl; j++)
        start[j] += start[j - 1];
    for (size_t k = 0; k < n; k++) {
        int lab = label[sorted[k]];
        if (lab > 0)
            ks[start[lab]++] = k;
    }
    for (size_t j = nl; j > 0; j--) /* start[j] was advanced to the end of bucket j */
        start[j] = start[j - 1];
    start[0] = 0;
    /* 3. each run: paired differences where set points are shared, else the line */
    for (size_t j = 1; j < nl; j++) {
        arrank_run_shift *rs = &d->runs[d->n_runs++];
        rs->label_ref = arrank_strdup(names[0]);
        rs->label = arrank_strdup(names[j]);
        if (!rs->label_ref || !rs->label)
            wk->nomem = 1;
        rs->shift_ln = rs->shift_ln_se = rs->t = rs->p = rs->dof = rs->change = NAN;
        const size_t *own = ks + start[j], m1 = start[j + 1] - start[j];
        size_t np = 0;
        for (size_t q = 0; q < m1;) {
            const size_t g = grp[own[q]];
            double nj = 0, sj = 0;
            for (; q < m1 && grp[own[q]] == g; q++) {
                size_t i = sorted[own[q]];
                nj += 1;
                sj += wk->y[i] - base->b1_K * wk->x[i];
            }
            if (n0[g] > 0)
                dif[np++] = sj / nj - s0[g] / n0[g];
        }
        if (np >= 1)
            run_paired(rs, dif, np);
        if (np < 3)
            run_against_line(wk, rs, &rl, sorted, own, m1);
        run_verdict(rs);
    }
done:
    free(n0);
    free(s0);
    free(dif);
    free(start);
    free(ks);
    free(sel);
}

/* A drift's verdict: significant at RUN_LEVEL and at least
   ARRANK_RUN_MIN_CHANGE over its span, down (-1) or up (+1); else 0. */
static int drift_verdict(const arrank_drift *dr)
{
    if (!(dr->p < RUN_LEVEL && fabs(dr->change) >= ARRANK_RUN_MIN_CHANGE))
        return 0;
    return dr->slope_ln_per_h < 0 ? -1 : 1;
}

static void test_drift(arrank_dwork *wk, const size_t *base, size_t n)
{
    arrank_drift *dr = &wk->d->drift;
    dr->slope_ln_per_h = dr->slope_se = dr->t = dr->p = dr->dof = dr->span_h = dr->change = NAN;
    dr->temp_ref_K = dr->temp_slope_K = dr->ln_rate_ref = dr->ln_rate_ref_var = NAN;
    dr->cov_ref_slope = dr->time_min_h = dr->time_max_h = dr->t_quantile = NAN;
    size_t *sel = malloc((n ? n : 1) * sizeof *sel);
    double *th = malloc((n ? n : 1) * sizeof *th);
    if (!sel || !th) {
        wk->nomem = 1;
        goto done;
    }
    size_t m = 0;
    for (size_t k = 0; k < n; k++)
        if (isfinite(wk->pt[base[k]].time_on_stream_s)) {
            sel[m] = base[k];
            th[m] = wk->pt[base[k]].time_on_stream_s / 3600.0;
            m++;
        }
    if (m == 0)
        goto done;
    if (m < DRIFT_MIN_POINTS) {
        dr->note = arrank_dwork_fmt(wk, "only %zu points have a time on stream: too few to test for drift", m);
        goto done;
    }
    double tmin = INFINITY, tmax = -INFINITY, mx = 0, mt = 0;
    for (size_t k = 0; k < m; k++) {
        tmin = fmin(tmin, th[k]);
        tmax = fmax(tmax, th[k]);
        mx += wk->x[sel[k]];
        mt += th[k];
    }
    mx /= (double)m;
    mt /= (double)m;
    double sxx = 0, stt = 0, sxt = 0;
    for (size_t k = 0; k < m; k++) {
        double a = wk->x[sel[k]] - mx, b = th[k] - mt;
        sxx += a * a;
        stt += b * b;
        sxt += a * b;
    }
    double corr = sxx > 0 && stt > 0 ? sxt / sqrt(sxx * stt) : 1.0;
    dr->span_h = tmax - tmin;
    if (!(stt > 0) || fabs(corr) > DRIFT_COLLINEAR) {
        dr->note = arrank_dwork_fmt(wk, "time on stream follows temperature (correlation %.2f): drift cannot "
                           "be told apart from the temperature dependence",
                       corr);
        goto done;
    }
    arrank_xscale sc;
    double b[3], cov[9], rss;
    if (arrank_regress_scale(wk, sel, m, &sc) != 0 ||
        arrank_regress_design(wk, sel, m, &sc, 0, th, b, cov, &rss) != 3)
        goto done;
    dr->tested = 1;
    dr->slope_ln_per_h = b[2];
    dr->slope_se = sqrt(cov[8]);
    dr->dof = (double)m - 3.0;
    dr->t = dr->slope_se > 0 ? b[2] / dr->slope_se : (b[2] < 0 ? -INFINITY : INFINITY);
    dr->p = arrank_stats_t_p(dr->t, dr->dof);
    dr->change = expm1(b[2] * dr->span_h);
    /* the fit as a whole, for the figure: z = (x - xm) / sx (regress.h) */
    dr->n_points = m;
    dr->temp_ref_K = 1.0 / sc.xm;
    dr->temp_slope_K = b[1] / sc.sx;
    dr->ln_rate_ref = b[0];
    dr->ln_rate_ref_var = cov[0];
    dr->cov_ref_slope = cov[2];
    dr->time_min_h = tmin;
    dr->time_max_h = tmax;
    dr->verdict = drift_verdict(dr);
done:
    free(sel);
    free(th);
}

static void free_names(char **names, int n_labels)
{
    for (int j = 0; j < n_labels; j++)
        free(names[j]);
    free(names);
}

/* Label each point of base by its run, labels numbered in order of first
   appearance in the file; names[] owned by the caller.  Returns the number
   of labels; -1 when out of memory. */
static int label_runs(const arrank_dwork *wk, const size_t *base, size_t n,
                      const unsigned char *in_base, int *label, char ***names_out)
{
    const arrank_sample *s = wk->s;
    int n_labels = 0;
    int all = 1;
    for (size_t k = 0; k < n; k++)
        all &= s->points[base[k]].run >= 0;
    if (!all)
        return 0;
    int *map = malloc(s->n_runs * sizeof *map);
    char **names = calloc(s->n_runs, sizeof *names);
    if (!map || !names) {
        free(map);
        free(names);
        return -1;
    }
    for (size_t r = 0; r < s->n_runs; r++)
        map[r] = -1;
    for (size_t i = 0; i < wk->np; i++) {
        int r = s->points[i].run;
        if (!in_base[i])
            continue;
        if (map[r] < 0) {
            names[n_labels] = arrank_strdup(s->runs[r]);
            if (!names[n_labels]) {
                free(map);
                free_names(names, n_labels);
                return -1;
            }
            map[r] = n_labels++;
        }
        label[i] = map[r];
    }
    free(map);
    *names_out = names;
    return n_labels;
}

/* Label each point of base by its pass over a repeated set point (file
   order), names "pass 1", "pass 2", ...  Returns the number of labels
   (0 when no set point repeats); -1 when out of memory. */
static int label_passes(arrank_dwork *wk, const size_t *base, const size_t *grp, size_t n,
                        size_t n_groups, const unsigned char *in_base, int *label,
                        char ***names_out)
{
    const size_t np = wk->np;
    size_t *seen = calloc(n_groups ? n_groups : 1, sizeof *seen);
    size_t *gof = malloc((np ? np : 1) * sizeof *gof);
    if (!seen || !gof) {
        free(seen);
        free(gof);
        return -1;
    }
    for (size_t k = 0; k < n; k++)
        gof[base[k]] = grp[k];
    size_t max_pass = 0;
    for (size_t i = 0; i < np; i++) {
        label[i] = -1;
        if (!in_base[i])
            continue;
        label[i] = (int)seen[gof[i]]++;
        if (seen[gof[i]] > max_pass)
            max_pass = seen[gof[i]];
    }
    free(seen);
    free(gof);
    if (max_pass < 2)
        return 0;
    char **names = calloc(max_pass, sizeof *names);
    if (!names)
        return -1;
    for (size_t j = 0; j < max_pass; j++) {
        names[j] = arrank_dwork_fmt(wk, "pass %zu", j + 1);
        if (!names[j]) {
            free_names(names, (int)j);
            return -1;
        }
    }
    *names_out = names;
    return (int)max_pass;
}

/*
 * The deactivation flag is one decision over every run comparison and the
 * drift test: each at 5 % gave 7 % false alarms on a stable catalyst
 * (README "Diagnostics").  Holm's step-down procedure (Holm, Scand. J.
 * Statist. 6:65, 1979) keeps the family at RUN_LEVEL: the k-th smallest of
 * the K p-values must be below RUN_LEVEL / (K - k + 1), and every smaller
 * one rejected.  A verdict that fails it is cleared.
 */
static int cmp_double(const void *a, const void *b)
{
    const double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

static void holm_family(arrank_dwork *wk)
{
    arrank_diagnosis *d = wk->d;
    size_t K = d->drift.tested && isfinite(d->drift.p);
    for (size_t j = 0; j < d->n_runs; j++)
        K += isfinite(d->runs[j].p);
    if (K < 2)
        return;
    double *p = malloc(K * sizeof *p);
    if (!p) {
        wk->nomem = 1;
        return;
    }
    size_t m = 0;
    for (size_t j = 0; j < d->n_runs; j++)
        if (isfinite(d->runs[j].p))
            p[m++] = d->runs[j].p;
    if (d->drift.tested && isfinite(d->drift.p))
        p[m++] = d->drift.p;
    qsort(p, K, sizeof *p, cmp_double);
    /* the smallest p not rejected: every p below it is rejected */
    double cut = INFINITY;
    for (size_t k = 0; k < K; k++)
        if (!(p[k] < RUN_LEVEL / (double)(K - k))) {
            cut = p[k];
            break;
        }
    free(p);
    for (size_t j = 0; j < d->n_runs; j++)
        if (!(d->runs[j].p < cut))
            d->runs[j].verdict = 0;
    if (!(d->drift.p < cut))
        d->drift.verdict = 0;
}

int arrank_quality_runs(arrank_dwork *wk, const size_t *base, const size_t *grp, size_t n,
                        size_t n_groups, const unsigned char *in_base, int *label,
                        const arrank_line *lf_all)
{
    const arrank_sample *s = wk->s;
    char **names = NULL;
    int n_labels = 0;
    for (size_t i = 0; i < wk->np; i++)
        label[i] = -1;
    if (s->n_runs >= 2) {
        n_labels = label_runs(wk, base, n, in_base, label, &names);
        if (n_labels < 0) {
            wk->nomem = 1;
            return 0;
        }
    }
    if (n_labels < 2 && n_groups < n) {
        free_names(names, n_labels);
        names = NULL;
        n_labels = label_passes(wk, base, grp, n, n_groups, in_base, label, &names);
        if (n_labels < 0) {
            wk->nomem = 1;
            return 0;
        }
    }
    int has_repeats = n_labels >= 2;
    if (lf_all && n_labels >= 2)
        compare_runs(wk, base, grp, n, label, n_labels, names, lf_all);
    free_names(names, n_labels);
    test_drift(wk, base, n);
    holm_family(wk);
    return has_repeats | wk->d->drift.tested;
}

/* ---- outliers --------------------------------------------------------------- */

/* Externally studentized residuals and Cook's distance about the weighted
   line over idx (Belsley, Kuh & Welsch 1980; Cook 1977; formulas for the
   weighted simple regression with leverage h = w/Sw + w (x - xm)^2 / Sxx). */
/* At most this many points of a sample get an exact leave-one-out refit. */
#define EXACT_REFITS 8

/* RSS of the weighted line over idx[0..n) without idx[skip] (two-pass centred
   sums, as in fit_line_direct). */
static double rss_without(const arrank_dwork *wk, const size_t *idx, size_t n, size_t skip)
{
    double sw = 0, swx = 0, swy = 0;
    for (size_t k = 0; k < n; k++) {
        if (k == skip)
            continue;
        const size_t i = idx[k];
        sw += wk->w[i];
        swx += wk->w[i] * wk->x[i];
        swy += wk->w[i] * wk->y[i];
    }
    const double xbar = swx / sw, ybar = swy / sw;
    double sxx = 0, sxy = 0;
    for (size_t k = 0; k < n; k++) {
        if (k == skip)
            continue;
        const size_t i = idx[k];
        sxx += wk->w[i] * (wk->x[i] - xbar) * (wk->x[i] - xbar);
        sxy += wk->w[i] * (wk->x[i] - xbar) * (wk->y[i] - ybar);
    }
    const double b1 = sxx > 0 ? sxy / sxx : 0.0;
    double rss = 0;
    for (size_t k = 0; k < n; k++) {
        if (k == skip)
            continue;
        const size_t i = idx[k];
        const double e = wk->y[i] - ybar - b1 * (wk->x[i] - xbar);
        rss += wk->w[i] * e * e;
    }
    return rss;
}

void arrank_quality_outliers(arrank_dwork *wk, const size_t *idx, size_t n)
{
    size_t exact_used = 0;
    arrank_diagnosis *d = wk->d;
    arrank_line lf;
    if (n < 4 || arrank_regress_line(wk, idx, n, &lf) != 0)
        return;
    double sw = 0, sxx = 0;
    for (size_t k = 0; k < n; k++)
        sw += wk->w[idx[k]];
    for (size_t k = 0; k < n; k++) {
        double u = wk->x[idx[k]] - lf.sc.xm;
        sxx += wk->w[idx[k]] * u * u;
    }
    double dof_ext = (double)n - 3.0;
    d->outlier_t_limit = arrank_stats_t_upper(OUTLIER_FAMILY / (2.0 * (double)n), dof_ext);
    double t_influence = arrank_stats_t_upper(INFLUENCE_LEVEL / 2.0, dof_ext);
    for (size_t k = 0; k < n; k++) {
        size_t i = idx[k];
        double u = wk->x[i] - lf.sc.xm, wi = wk->w[i];
        double h = wi / sw + wi * u * u / sxx;
        double e = wk->y[i] - arrank_regress_line_at(&lf, wk->x[i]);
        double we2 = wi * e * e;
        arrank_point_diag *pd = &d->points[i];
        if (!(h < 1.0))
            continue;
        /* The deletion formula (Belsley, Kuh & Welsch 1980) subtracts nearly equal
           numbers when this point carries most of the RSS; then refit without it. */
        double drop = we2 / (1.0 - h);
        double s2i = (drop > 0.5 * lf.rss && exact_used < EXACT_REFITS
                          ? (exact_used++, rss_without(wk, idx, n, k))
                          : lf.rss - drop) /
                     dof_ext;
        pd->student_resid = s2i > 0 ? e * sqrt(wi) / sqrt(s2i * (1.0 - h))
                                    : (e != 0 ? copysign(INFINITY, e) : 0.0);
        pd->cooks_d = lf.s2 > 0 ? we2 * h / (2.0 * lf.s2 * (1.0 - h) * (1.0 - h)) : NAN;
        if (fabs(pd->student_resid) > d->outlier_t_limit ||
            (isfinite(pd->cooks_d) && pd->cooks_d > ARRANK_COOK_LIMIT &&
             fabs(pd->student_resid) > t_influence)) {
            pd->outlier = 1;
            d->n_outliers++;
        }
    }
}

/* ---- the runs and the drift in words ------------------------------------ */

/* A repeat of a temperature measured before ("pass N", arrank_quality_runs), not a run
   label of the file. */
static int is_repeat(const arrank_run_shift *rs)
{
    return strncmp(rs->label, "pass ", 5) == 0;
}

/* Repeats of one verdict said one by one up to this many; more in one line. */
#define REPEAT_LINES_MAX 2

/*
 * The repeats of verdict v (-1 lower, +1 higher, 0 no shift shown) in one
 * line when there are more than REPEAT_LINES_MAX of them against one earlier
 * pass by one method: a temperature measured again between every step, or a
 * hold at one temperature, makes a repeat of every return, and a line for
 * each buries the rest of the report.  The line gives the pass numbers as
 * ranges, how many of the repeats they are, the range of the changes and of
 * the p-values; each repeat stays in the JSON's runs.  1 when said so.
 */
static int say_repeats(arrank_dwork *wk, const arrank_diagnosis *d, int v, const char *family)
{
    const arrank_run_shift *first = NULL;
    size_t n = 0, all = 0;
    double lo = INFINITY, hi = 0, p_lo = INFINITY, p_hi = 0;
    for (size_t j = 0; j < d->n_runs; j++) {
        const arrank_run_shift *rs = &d->runs[j];
        if (!isfinite(rs->shift_ln) || !is_repeat(rs))
            continue;
        all++;
        if (rs->verdict != v)
            continue;
        if (first && (strcmp(rs->label_ref, first->label_ref) != 0 ||
                      strcmp(rs->method, first->method) != 0))
            return 0; /* against different passes: one by one */
        first = first ? first : rs;
        n++;
        lo = fmin(lo, 100.0 * fabs(rs->change));
        hi = fmax(hi, 100.0 * fabs(rs->change));
        p_lo = fmin(p_lo, rs->p);
        p_hi = fmax(p_hi, rs->p);
    }
    if (n <= REPEAT_LINES_MAX)
        return 0;
    /* the pass numbers, runs of consecutive ones as "4-13" */
    char passes[160] = "";
    size_t len = 0;
    long start = -1, prev = -1;
    for (size_t j = 0; j <= d->n_runs; j++) {
        const arrank_run_shift *rs = j < d->n_runs ? &d->runs[j] : NULL;
        long k = rs && isfinite(rs->shift_ln) && is_repeat(rs) && rs->verdict == v
                     ? strtol(rs->label + 5, NULL, 10)
                     : -1;
        if (k >= 0 && start >= 0 && k == prev + 1) {
            prev = k;
            continue;
        }
        if (start >= 0 && len < sizeof passes && prev > start)
            len += (size_t)snprintf(passes + len, sizeof passes - len, "%s%ld-%ld",
                                    len ? ", " : "", start, prev);
        else if (start >= 0 && len < sizeof passes)
            len += (size_t)snprintf(passes + len, sizeof passes - len, "%s%ld", len ? ", " : "",
                                    start);
        start = prev = k;
    }
    char what[400];
    snprintf(what, sizeof what, "repeats of passes %s (%zu of %zu repeats) are %.0f %% to %.0f %% "
             "%s '%s' (%s, p = %.2g to %.2g)", passes, n, all, lo, hi,
             v < 0 ? "below" : v > 0 ? "above" : "off", first->label_ref, first->method, p_lo,
             p_hi);
    if (v < 0)
        arrank_dwork_finding(wk, "%s: the catalyst lost activity during the measurements "
                             "(deactivation)", what);
    else if (v > 0)
        arrank_dwork_finding(wk, "%s: the catalyst gained activity during the measurements "
                             "(activation)", what);
    else
        arrank_dwork_note(wk, "%s: no significant shift of at least %.0f %%%s", what,
                          100.0 * ARRANK_RUN_MIN_CHANGE, family);
    return 1;
}

void arrank_quality_describe_runs(arrank_dwork *wk)
{
    const arrank_diagnosis *d = wk->d;
    /* the run comparisons and the drift test are one family (Holm, above) */
    size_t n_family = d->drift.tested && isfinite(d->drift.p);
    for (size_t j = 0; j < d->n_runs; j++)
        n_family += isfinite(d->runs[j].p);
    char family[96] = "";
    if (n_family >= 2)
        snprintf(family, sizeof family, " (Holm's correction over the %zu run and drift tests)",
                 n_family);
    int grouped[3]; /* repeats said in one line, by verdict + 1 (say_repeats) */
    for (int v = -1; v <= 1; v++)
        grouped[v + 1] = say_repeats(wk, d, v, family);
    for (size_t j = 0; j < d->n_runs; j++) {
        const arrank_run_shift *rs = &d->runs[j];
        if (!isfinite(rs->shift_ln) || (is_repeat(rs) && grouped[rs->verdict + 1]))
            continue;
        char what[200];
        snprintf(what, sizeof what, "%s '%s' is %.0f %% %s '%s' (%s, %zu %s, t = %.2f, p = %.2g)",
                 strncmp(rs->label, "pass ", 5) == 0 ? "repeat" : "run", rs->label,
                 100.0 * fabs(rs->change), rs->change < 0 ? "below" : "above", rs->label_ref,
                 rs->method, rs->n_pairs,
                 strcmp(rs->method, "paired") == 0
                     ? (rs->n_pairs == 1 ? "common temperature" : "common temperatures")
                     : (rs->n_pairs == 1 ? "point" : "points"),
                 rs->t, rs->p);
        if (rs->verdict < 0)
            arrank_dwork_finding(wk, "%s: the catalyst lost activity during the measurements (deactivation)",
                    what);
        else if (rs->verdict > 0)
            arrank_dwork_finding(wk, "%s: the catalyst gained activity during the measurements (activation)",
                    what);
        else
            arrank_dwork_note(wk, "%s: no significant shift of at least %.0f %%%s", what,
                 100.0 * ARRANK_RUN_MIN_CHANGE, family);
    }
    const arrank_drift *dr = &d->drift;
    if (dr->tested) {
        if (dr->verdict)
            arrank_dwork_finding(wk, "the rate drifts %s by %.0f %% over %.1f h on stream at fixed temperature "
                        "dependence (t = %.2f, p = %.2g): %s",
                    dr->verdict < 0 ? "down" : "up", 100.0 * fabs(dr->change), dr->span_h, dr->t,
                    dr->p, dr->verdict < 0 ? "deactivation" : "activation");
        else
            arrank_dwork_note(wk, "no significant drift with time on stream (%.1f %% over %.1f h, p = %.2g)%s",
                 100.0 * dr->change, dr->span_h, dr->p, family);
    } else if (dr->note)
        arrank_dwork_note(wk, "%s", dr->note);
}

/* ---- a stability hold at one temperature ------------------------------------ */

/* The usable points (as screen.c has them) if they all lie at one
   temperature; the ones with a time on stream into idx; their number, 0
   when the temperatures differ. */
static size_t hold_points(const arrank_sample *s, size_t *idx, double *temp_K)
{
    size_t m = 0;
    *temp_K = NAN;
    for (size_t i = 0; i < s->n_points; i++) {
        const arrank_point *p = &s->points[i];
        if (p->omitted || !(p->temp_K > 0) || !isfinite(p->temp_K) || !(p->rate > 0) ||
            !isfinite(p->rate))
            continue;
        if (isnan(*temp_K))
            *temp_K = p->temp_K;
        else if (p->temp_K != *temp_K)
            return 0;
        if (isfinite(p->time_on_stream_s))
            idx[m++] = i;
    }
    return m;
}

/* The weighted line of ln r on t (hours) through the points idx[m] into
   dr; 0, or -1 when the times do not vary. */
static int hold_line(const arrank_sample *s, const size_t *idx, size_t m, arrank_drift *dr)
{
    int weighted = 1;
    for (size_t k = 0; k < m; k++)
        weighted &= s->points[idx[k]].rate_sd > 0 && isfinite(s->points[idx[k]].rate_sd);
    double W = 0, mt = 0, my = 0, tmin = INFINITY, tmax = -INFINITY;
    for (size_t k = 0; k < m; k++) {
        const arrank_point *p = &s->points[idx[k]];
        double w = weighted ? (p->rate / p->rate_sd) * (p->rate / p->rate_sd) : 1.0;
        double t = p->time_on_stream_s / 3600.0;
        W += w;
        mt += w * t;
        my += w * log(p->rate);
        tmin = fmin(tmin, t);
        tmax = fmax(tmax, t);
    }
    mt /= W;
    my /= W;
    double stt = 0, sty = 0;
    for (size_t k = 0; k < m; k++) {
        const arrank_point *p = &s->points[idx[k]];
        double w = weighted ? (p->rate / p->rate_sd) * (p->rate / p->rate_sd) : 1.0;
        double dt = p->time_on_stream_s / 3600.0 - mt;
        stt += w * dt * dt;
        sty += w * dt * (log(p->rate) - my);
    }
    if (!(stt > 0))
        return -1;
    const double b = sty / stt, a = my - b * mt;
    double rss = 0;
    for (size_t k = 0; k < m; k++) {
        const arrank_point *p = &s->points[idx[k]];
        double w = weighted ? (p->rate / p->rate_sd) * (p->rate / p->rate_sd) : 1.0;
        double e = log(p->rate) - a - b * (p->time_on_stream_s / 3600.0);
        rss += w * e * e;
    }
    const double dof = (double)m - 2.0, s2 = rss / dof;
    dr->tested = 1;
    dr->slope_ln_per_h = b;
    dr->slope_se = sqrt(s2 / stt);
    dr->dof = dof;
    dr->t = dr->slope_se > 0 ? b / dr->slope_se : (b < 0 ? -INFINITY : INFINITY);
    dr->p = arrank_stats_t_p(dr->t, dof);
    dr->span_h = tmax - tmin;
    dr->change = expm1(b * dr->span_h);
    dr->n_points = m;
    dr->temp_slope_K = 0.0;
    dr->ln_rate_ref = a;
    dr->ln_rate_ref_var = s2 * (1.0 / W + mt * mt / stt);
    dr->cov_ref_slope = -s2 * mt / stt;
    dr->time_min_h = tmin;
    dr->time_max_h = tmax;
    dr->verdict = drift_verdict(dr);
    return 0;
}

arrank_status arrank_quality_hold(const arrank_sample *s, double confidence, arrank_hold **out,
                                  arrank_error *err)
{
    *out = NULL;
    size_t *idx = malloc((s->n_points ? s->n_points : 1) * sizeof *idx);
    arrank_hold *h = calloc(1, sizeof *h);
    if (!idx || !h) {
        free(idx);
        free(h);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    double temp_K;
    size_t m = hold_points(s, idx, &temp_K);
    arrank_drift *dr = &h->drift;
    if (m < DRIFT_MIN_POINTS || hold_line(s, idx, m, dr) != 0) {
        free(idx);
        free(h);
        return ARRANK_OK; /* not a hold, or too short to tell */
    }
    free(idx);
    dr->temp_ref_K = temp_K;
    dr->t_quantile = arrank_t_quantile(confidence, dr->dof);
    const double q = dr->t_quantile * dr->slope_se;
    h->change_lo = expm1((dr->slope_ln_per_h - q) * dr->span_h);
    h->change_hi = expm1((dr->slope_ln_per_h + q) * dr->span_h);
    char at[120];
    arrank_sample_temp_text(s, temp_K, NAN, 2, at, sizeof at);
    h->problem = dr->verdict != 0;
    if (dr->verdict)
        h->words = arrank_strfmt(
            "held at one temperature, %s: the rate drifts %s by %.0f %% over %.1f h on stream "
            "(the change's %.4g %% interval %+.0f to %+.0f %%; t = %.2f, p = %.2g, %zu "
            "points): %s",
            at, dr->verdict < 0 ? "down" : "up", 100.0 * fabs(dr->change), dr->span_h,
            100.0 * confidence, 100.0 * h->change_lo, 100.0 * h->change_hi, dr->t, dr->p, m,
            dr->verdict < 0 ? "deactivation" : "activation");
    else
        h->words = arrank_strfmt(
            "held at one temperature, %s: no significant drift with time on stream (%.1f %% "
            "over %.1f h, %.4g %% interval %.1f to %.1f %%; p = %.2g, %zu points)",
            at, 100.0 * dr->change, dr->span_h, 100.0 * confidence, 100.0 * h->change_lo,
            100.0 * h->change_hi, dr->p, m);
    if (!h->words) {
        free(h);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    *out = h;
    return ARRANK_OK;
}
