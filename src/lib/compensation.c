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
                     "measured temperatures, %.0f K, once each sample's own centring "
                     "temperature is allowed for (p = %.2g)", c->T_hm_K, c->own_p);
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
                 "ln r there once each sample's own centring temperature is allowed for "
                 "(p = %.2g): not explained by error correlation; the ranking reverses across "
                 "the isokinetic temperature, so do not extrapolate it past that point",
                 c->corr, iso, c->T_hm_K, c->own_p);
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

/*
 * The verdict's test: does Ea track the rate at T_hm beyond what correlated
 * errors make?  Sample i's fitted line, centred on its own T_ref_i, gives
 * b0_i = ln r(T_ref_i), whose error is uncorrelated with that of Ea_i (the
 * centring; Schwaab & Pinto 2007), and under normal errors independent of it.
 * With d_i = 1/T_hm - 1/T_ref_i, a compensation line ln A = alpha +
 * Ea/(R T_iso) gives ln r_i(T_hm) = alpha + g Ea_i, g = (1/T_iso - 1/T_hm)/R,
 * so b0_i = ln r_i(T_hm) - b1_i d_i = alpha + g Ea_i + d_i Ea_i / R: for
 * samples that share one Ea (identical catalysts, whatever their windows)
 * b0_i is linear in d_i with no Ea term, and the coefficient of Ea in the
 * least squares of b0 on (1, d, Ea) is 0 with errors independent of the
 * regressors, so its t test holds its level however the windows are
 * staggered.  ln r(T_hm) on Ea, by contrast, carries the error -d_i b1_i,
 * correlated with Ea_i's (README "Ranking statistics": 13 % false
 * "real" at a nominal 5 %).  The samples' errors differ (scatter, points,
 * window), so the standard error is HC3 (MacKinnon & White, J. Econometrics
 * 29:305, 1985; recommended for small samples by Long & Ervin, Am. Stat.
 * 54:217, 2000), which also keeps real differences between catalysts in
 * the residuals.  When every T_ref is the same, d is dropped (n - 2 dof).
 */
static void own_centre_test(arrank_compensation *out, const arrank_arrhenius *const *fits,
                            size_t n, const double *ea, double *b0)
{
    const double m = (double)n, T_hm_K = out->T_hm_K;
    double dm = 0, em = 0, ym = 0;
    for (size_t i = 0; i < n; i++) {
        dm += (1.0 / T_hm_K - 1.0 / fits[i]->T_ref_K) / m;
        em += ea[i] / m;
        b0[i] = fits[i]->b0;
        ym += b0[i] / m;
    }
    double sdd = 0, see = 0, sde = 0, sdy = 0, sey = 0;
    for (size_t i = 0; i < n; i++) {
        const double dc = 1.0 / T_hm_K - 1.0 / fits[i]->T_ref_K - dm, ec = ea[i] - em;
        sdd += dc * dc;
        see += ec * ec;
        sde += dc * ec;
        sdy += dc * (b0[i] - ym);
        sey += ec * (b0[i] - ym);
    }
    out->own_p = 1.0;
    if (!(see > 0))
        return;
    /* d is left out when the centring temperatures agree to 1e-10 relative, or
       when it is collinear with Ea (then the two cannot be told apart) */
    const double tiny = 1e-10 / T_hm_K;
    double det = sdd * see - sde * sde;
    const int use_d = sdd > m * tiny * tiny && det > 1e-10 * sdd * see;
    double i00, i01, i11; /* inverse of the centred cross-products (d, Ea) */
    if (use_d) {
        i00 = see / det;
        i01 = -sde / det;
        i11 = sdd / det;
    } else {
        i00 = i01 = 0;
        i11 = 1.0 / see;
    }
    const double gd = i00 * sdy + i01 * sey, ge = i01 * sdy + i11 * sey;
    const double dof = m - (use_d ? 3.0 : 2.0);
    double v = 0;
    for (size_t i = 0; i < n; i++) {
        const double dc = use_d ? 1.0 / T_hm_K - 1.0 / fits[i]->T_ref_K - dm : 0.0;
        const double ec = ea[i] - em;
        const double a = i01 * dc + i11 * ec;               /* Ea coefficient's weight */
        const double h = 1.0 / m + dc * (i00 * dc + i01 * ec) + ec * a; /* leverage */
        const double e = b0[i] - ym - gd * dc - ge * ec;
        if (1.0 - h > 1e-10)
            v += a * a * e * e / ((1.0 - h) * (1.0 - h));
    }
    out->own_slope_mol_J = ge;
    out->own_slope_se_mol_J = sqrt(v);
    out->own_dof = dof;
    if (!(dof > 0))
        return;
    if (v > 0)
        out->own_p = arrank_stats_t_p(ge / sqrt(v), dof);
    else
        out->own_p = ge != 0 ? 0.0 : 1.0;
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
    out->own_slope_mol_J = out->own_slope_se_mol_J = out->own_p = out->own_dof = nan;
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
    own_centre_test(out, fits, n, ea, l1);
    free(buf);

    if (!(c1 > 0) || !(p1 < alpha))
        out->verdict = ARRANK_COMP_NONE;
    else if (out->T_hm_inside || !(out->own_p < alpha))
        out->verdict = ARRANK_COMP_ARTIFACT;
    else
        out->verdict = ARRANK_COMP_REAL;
    compensation_sentence(out);
    return ARRANK_OK;
}
