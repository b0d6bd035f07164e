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
