/*
 * compensation.c - the compensation analysis across samples: the line of
 * ln A on Ea, the isokinetic temperature and the artifact tests
 * (arrank/compensation.h).
 */
#include "arrank/compensation.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_fit.h>
#include <gsl/gsl_statistics_double.h>

#include "stats.h"

const char *arrank_compensation_words(arrank_comp_verdict verdict)
{
    switch (verdict) {
    case ARRANK_COMP_TOO_FEW: return "too few samples";
    case ARRANK_COMP_NONE: return "no compensation";
    case ARRANK_COMP_ARTIFACT: return "consistent with a statistical artifact";
    case ARRANK_COMP_REAL: return "not explained by error correlation";
    }
    return "unknown";
}

/* Least-squares line y = c0 + c1 x with the two-sided p of c1 = 0 (t, n - 2 dof). */
static int line_fit(const double *x, const double *y, size_t n, double *c0, double *c1,
                    double *se0, double *se1, double *p1)
{
    double cov00, cov01, cov11, ss;
    int gs = gsl_fit_linear(x, 1, y, 1, n, c0, c1, &cov00, &cov01, &cov11, &ss);
    if (gs != GSL_SUCCESS || !isfinite(*c1))
        return -1;
    /* GSL scales the covariance by the scatter about the line, ss/(n - 2). */
    *se0 = sqrt(cov00 > 0 ? cov00 : 0);
    *se1 = sqrt(cov11 > 0 ? cov11 : 0);
    if (*se1 > 0)
        *p1 = arrank_stats_t_p(*c1 / *se1, (double)n - 2.0);
    else
        *p1 = *c1 != 0 ? 0.0 : 1.0;
    return 0;
}

static double ln_rate_at(const arrank_arrhenius *f, double temp_K)
{
    return f->b0 + f->b1 * (1.0 / temp_K - 1.0 / f->T_ref_K);
}

static void compensation_sentence(arrank_compensation *c)
{
    const int pct = (int)lround(100.0 * c->confidence);
    char iso[160];
    if (c->T_iso_bounded)
        snprintf(iso, sizeof iso, "%.0f K (%d %% interval %.0f to %.0f K)", c->T_iso_K, pct,
                 c->T_iso_lo_K, c->T_iso_hi_K);
    else
        snprintf(iso, sizeof iso, "%.0f K (%d %% interval unbounded)", c->T_iso_K, pct);
    switch (c->verdict) {
    case ARRANK_COMP_TOO_FEW:
        snprintf(c->sentence, sizeof c->sentence,
                 "compensation: %zu ranked samples are too few to test a line of ln A on Ea "
                 "(at least %d are needed)", c->n, ARRANK_COMP_MIN);
        break;
    case ARRANK_COMP_NONE:
        snprintf(c->sentence, sizeof c->sentence,
                 "compensation: ln A does not rise significantly with Ea across the %zu samples "
                 "(p = %.2g), so there is no compensation line to explain", c->n, c->slope_p);
        break;
    case ARRANK_COMP_ARTIFACT: {
        char why[384];
        if (c->T_hm_inside)
            snprintf(why, sizeof why, "the lines would cross at %s, which holds the harmonic "
                     "mean of the measured temperatures, %.0f K", iso, c->T_hm_K);
        else
            snprintf(why, sizeof why, "Ea does not track ln r at the harmonic mean of the "
                     "measured temperatures, %.0f K (p = %.2g)", c->T_hm_K, c->hm_p);
        snprintf(c->sentence, sizeof c->sentence,
                 "compensation: ln A rises with Ea (r = %.3f), but %s: consistent with a "
                 "statistical artifact; correlated errors of Ea and ln A make such a line on "
                 "their own, and it says nothing about the catalysts", c->corr, why);
        break;
    }
    case ARRANK_COMP_REAL:
        snprintf(c->sentence, sizeof c->sentence,
                 "compensation: ln A rises with Ea (r = %.3f) and the lines cross near %s, away "
                 "from the harmonic mean of the measured temperatures, %.0f K, and Ea tracks "
                 "ln r there (p = %.2g): not explained by error correlation; the ranking "
                 "reverses across "
                 "the isokinetic temperature, so do not extrapolate it past that point",
                 c->corr, iso, c->T_hm_K, c->hm_p);
        break;
    }
}

/* The isokinetic temperature of the slope c1 (se se1, n samples) and its
   interval, and whether T_hm lies in it. */
static void isokinetic(arrank_compensation *out, double c1, double se1, size_t n)
{
    const double R = ARRANK_R_J_MOL_K, T_hm_K = out->T_hm_K;
    /* ln A = alpha + Ea/(R T_iso) (Constable 1925): T_iso = 1/(R slope). */
    out->T_iso_K = 1.0 / (R * c1);
    /* Fieller for a reciprocal: T_iso is in the set {1/(R b)} over b in the
       slope's t interval, bounded when that interval excludes 0. */
    const double t = arrank_t_quantile(out->confidence, (double)n - 2.0);
    const double lo = c1 - t * se1, hi = c1 + t * se1;
    if (lo > 0 || hi < 0) {
        out->T_iso_bounded = 1;
        out->T_iso_lo_K = 1.0 / (R * hi);
        out->T_iso_hi_K = 1.0 / (R * lo);
        out->T_hm_inside = T_hm_K >= out->T_iso_lo_K && T_hm_K <= out->T_iso_hi_K;
    } else {
        /* the outside of (1/(R lo), 1/(R hi)): lo_K > hi_K marks it (compensation.h) */
        out->T_iso_bounded = 0;
        out->T_iso_lo_K = hi > 0 ? 1.0 / (R * hi) : INFINITY;
        out->T_iso_hi_K = lo < 0 ? 1.0 / (R * lo) : -INFINITY;
        out->T_hm_inside = T_hm_K >= out->T_iso_lo_K || T_hm_K <= out->T_iso_hi_K;
    }
}

/* Exner (1964): ln r(T2) on ln r(T1) over the common range [t1, t2] (else
   the whole range [tmin, tmax]); l1, l2 are scratch [n]. */
static void exner(arrank_compensation *out, const arrank_arrhenius *const *fits, size_t n,
                  double *l1, double *l2)
{
    double t1 = 0, t2 = INFINITY, tmin = INFINITY, tmax = 0;
    for (size_t i = 0; i < n; i++) {
        t1 = fmax(t1, fits[i]->T_min_K);
        t2 = fmin(t2, fits[i]->T_max_K);
        tmin = fmin(tmin, fits[i]->T_min_K);
        tmax = fmax(tmax, fits[i]->T_max_K);
    }
    if (!(t2 > t1)) {
        t1 = tmin;
        t2 = tmax;
    }
    out->exner_T1_K = t1;
    out->exner_T2_K = t2;
    for (size_t i = 0; i < n; i++) {
        l1[i] = ln_rate_at(fits[i], t1);
        l2[i] = ln_rate_at(fits[i], t2);
    }
    double e0, e1, ese0, ese1, ep;
    if (t2 > t1 && line_fit(l1, l2, n, &e0, &e1, &ese0, &ese1, &ep) == 0) {
        out->exner_slope = e1;
        out->exner_slope_se = ese1;
        /* slope b = (1/T_iso - 1/T2)/(1/T_iso - 1/T1) solved for T_iso */
        const double den = e1 * t2 - t1;
        out->exner_T_iso_K = (e1 != 1.0 && den != 0) ? t1 * t2 * (e1 - 1.0) / den : NAN;
    }
}

arrank_status arrank_compensation_run(const arrank_arrhenius *const *fits, size_t n,
                                      double T_hm_K, double confidence,
                                      arrank_compensation *out, arrank_error *err)
{
    if (!(confidence > 0 && confidence < 1))
        return arrank_errorf(err, ARRANK_EINVAL, "confidence '%g' is not in (0, 1)", confidence);
    memset(out, 0, sizeof *out);
    out->n = n;
    out->confidence = confidence;
    out->T_hm_K = T_hm_K;
    const double nan = NAN;
    out->slope_mol_J = out->slope_se_mol_J = out->intercept = out->intercept_se = nan;
    out->corr = out->slope_p = out->T_iso_K = out->T_iso_lo_K = out->T_iso_hi_K = nan;
    out->hm_slope_mol_J = out->hm_slope_se_mol_J = out->hm_p = nan;
    out->exner_T1_K = out->exner_T2_K = out->exner_slope = out->exner_slope_se = nan;
    out->exner_T_iso_K = nan;
    if (n < ARRANK_COMP_MIN) {
        out->verdict = ARRANK_COMP_TOO_FEW;
        compensation_sentence(out);
        return ARRANK_OK;
    }
    double *buf = malloc(4 * n * sizeof *buf);
    if (!buf)
        return arrank_errorf(err, ARRANK_ENOMEM, "no memory for %zu samples", n);
    double *ea = buf, *lnA = buf + n, *l1 = buf + 2 * n, *l2 = buf + 3 * n;
    for (size_t i = 0; i < n; i++) {
        ea[i] = fits[i]->ea_J_mol;
        lnA[i] = fits[i]->ln_A;
    }
    const double alpha = 1.0 - confidence;
    double c0, c1, se0, se1, p1;
    if (line_fit(ea, lnA, n, &c0, &c1, &se0, &se1, &p1) != 0) {
        /* every Ea equal: no line at all */
        out->verdict = ARRANK_COMP_NONE;
        out->slope_p = 1.0;
        compensation_sentence(out);
        free(buf);
        return ARRANK_OK;
    }
    out->intercept = c0;
    out->intercept_se = se0;
    out->slope_mol_J = c1;
    out->slope_se_mol_J = se1;
    out->slope_p = p1;
    out->corr = gsl_stats_correlation(ea, 1, lnA, 1, n);
    isokinetic(out, c1, se1, n);

    /* Krug, Hunter & Grieger (1976): ln r(T_hm) and Ea have uncorrelated errors. */
    for (size_t i = 0; i < n; i++)
        l1[i] = ln_rate_at(fits[i], T_hm_K);
    double h0, h1, hse0, hse1, hp;
    if (line_fit(ea, l1, n, &h0, &h1, &hse0, &hse1, &hp) == 0) {
        out->hm_slope_mol_J = h1;
        out->hm_slope_se_mol_J = hse1;
        out->hm_p = hp;
    } else {
        out->hm_p = 1.0;
    }
    exner(out, fits, n, l1, l2);
    free(buf);

    if (!(c1 > 0) || !(p1 < alpha))
        out->verdict = ARRANK_COMP_NONE;
    else if (out->T_hm_inside || !(out->hm_p < alpha))
        out->verdict = ARRANK_COMP_ARTIFACT;
    else
        out->verdict = ARRANK_COMP_REAL;
    compensation_sentence(out);
    return ARRANK_OK;
}
