/*
 * stats.c - distribution quantiles and p-values (stats.h), all from GSL.
 */
#include <math.h>

#include <gsl/gsl_cdf.h>

#include "stats.h"

#define MEMO_SIZE 16

enum { T_LOWER, T_UPPER, F_LOWER };

static double compute(int kind, double p, double d1, double d2)
{
    switch (kind) {
    case T_LOWER: return isinf(d1) ? gsl_cdf_ugaussian_Pinv(p) : gsl_cdf_tdist_Pinv(p, d1);
    case T_UPPER: return isinf(d1) ? gsl_cdf_ugaussian_Qinv(p) : gsl_cdf_tdist_Qinv(p, d1);
    default: return gsl_cdf_fdist_Pinv(p, d1, d2);
    }
}

/* The quantile, remembered per thread (so the library stays reentrant) for
   the last MEMO_SIZE keys, replaced round robin. */
static double memo_quantile(int kind, double p, double d1, double d2)
{
    static _Thread_local struct {
        int kind;
        double p, d1, d2, q;
    } memo[MEMO_SIZE];
    static _Thread_local unsigned n_memo, next_memo;
    for (unsigned i = 0; i < n_memo; i++)
        if (memo[i].kind == kind && memo[i].p == p && memo[i].d1 == d1 && memo[i].d2 == d2)
            return memo[i].q;
    const double q = compute(kind, p, d1, d2);
    const unsigned k = n_memo < MEMO_SIZE ? n_memo++ : next_memo++ % MEMO_SIZE;
    memo[k].kind = kind;
    memo[k].p = p;
    memo[k].d1 = d1;
    memo[k].d2 = d2;
    memo[k].q = q;
    return q;
}

double arrank_t_quantile(double confidence, double dof)
{
    if (!(confidence > 0 && confidence < 1) || !(dof > 0))
        return NAN;
    return memo_quantile(T_LOWER, 0.5 * (1.0 + confidence), dof, 0);
}

double arrank_stats_t_upper(double tail, double dof)
{
    if (!(tail > 0 && tail < 1) || !(dof > 0))
        return NAN;
    return memo_quantile(T_UPPER, tail, dof, 0);
}

/*
 * P(T < t) for a whole dof from 1 to T_CDF_SUM_MAX by the finite sums of
 * Abramowitz & Stegun 26.7.3 (odd) and 26.7.4 (even), with theta =
 * atan(t / sqrt(dof)):
 *   odd:  A = (2/pi) (theta + sin cos (1 + 2/3 cos^2 + 2*4/(3*5) cos^4 + ...))
 *   even: A = sin (1 + 1/2 cos^2 + 1*3/(2*4) cos^4 + ...)
 * to the power cos^(dof-2), and P = (1 + A) / 2 (A is odd in t).  GSL's
 * incomplete beta recomputes its prefactor on every call: 150-350 ns a call
 * at 3 to 24 dof against 9-22 ns here (75 against 45 at 48), and the
 * planner's P(best) calls it most (DEVELOPERS.md, "Fast paths").  Absolute error within 1e-14 of GSL's (tests/test_plan.c); the
 * relative error of a lower tail below 1e-14 is large, which the one caller,
 * an integral of products of these, does not see.
 */
#define T_CDF_SUM_MAX 100

static double t_cdf_sum(double t, int dof)
{
    const double r = sqrt((double)dof + t * t);
    const double sin_th = t / r, cos2 = (double)dof / (r * r);
    double a;
    if (dof % 2) {
        double sum = 0.0, term = 1.0;
        for (int k = 1; k <= (dof - 1) / 2; k++) {
            sum += term;
            term *= cos2 * (2.0 * k) / (2.0 * k + 1.0);
        }
        const double theta = atan(t / sqrt((double)dof));
        a = (2.0 / 3.14159265358979323846) * (theta + sin_th * sqrt(cos2) * sum);
    } else {
        double sum = 0.0, term = 1.0;
        for (int k = 1; k <= dof / 2; k++) {
            sum += term;
            term *= cos2 * (2.0 * k - 1.0) / (2.0 * k);
        }
        a = sin_th * sum;
    }
    return 0.5 + 0.5 * a;
}

double arrank_stats_t_cdf(double t, double dof)
{
    if (isinf(dof))
        return gsl_cdf_ugaussian_P(t);
    if (isfinite(t) && dof >= 1 && dof <= T_CDF_SUM_MAX && dof == floor(dof))
        return t_cdf_sum(t, (int)dof);
    return gsl_cdf_tdist_P(t, dof);
}

double arrank_stats_t_p(double t, double dof)
{
    if (isnan(t) || !(dof > 0))
        return NAN;
    if (isinf(t))
        return 0.0;
    return 2.0 * (isinf(dof) ? gsl_cdf_ugaussian_Q(fabs(t)) : gsl_cdf_tdist_Q(fabs(t), dof));
}

double arrank_stats_chi2_q(double x, double k)
{
    return gsl_cdf_chisq_Q(x, k);
}

double arrank_stats_f_q(double x, double d1, double d2)
{
    return gsl_cdf_fdist_Q(x, d1, d2);
}

double arrank_stats_f_lower(double p, double d1, double d2)
{
    if (!(p > 0 && p < 1) || !(d1 > 0) || !(d2 > 0))
        return NAN;
    return memo_quantile(F_LOWER, p, d1, d2);
}
