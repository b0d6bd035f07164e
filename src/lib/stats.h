/*
 * stats.h - distribution quantiles and p-values for the whole library, inside
 * libarrank only (arrank_t_quantile is public: arrank/stats.h).
 *
 * One place for GSL's distribution functions.  Quantiles are remembered per
 * thread for the last few (kind, probability, dof) triples: a campaign asks
 * for the same few thousands of times, and each inversion costs as much as a
 * small fit.  Exact-key lookup, so every value is GSL's, unchanged.  An
 * infinite dof means the normal distribution.
 */
#ifndef ARRANK_STATS_H
#define ARRANK_STATS_H

#include "arrank/stats.h"

/* Upper-tail t quantile: t with P(T > t) = tail (gsl_cdf_tdist_Qinv), cached. */
double arrank_stats_t_upper(double tail, double dof);

/* Lower tail of Student's t, P(T < t) (gsl_cdf_tdist_P; normal for an
   infinite dof). */
double arrank_stats_t_cdf(double t, double dof);

/* Two-sided p-value of Student's t, P(|T| > |t|) = 2 gsl_cdf_tdist_Q(|t|, dof);
   0 for infinite t, NAN for NAN. */
double arrank_stats_t_p(double t, double dof);

/* Upper tail of the chi-square distribution, P(X > x), dof k. */
double arrank_stats_chi2_q(double x, double k);

/* Upper tail of the F distribution, P(F > x), dof d1 and d2. */
double arrank_stats_f_q(double x, double d1, double d2);

/* Lower-tail F quantile: x with P(F < x) = p (gsl_cdf_fdist_Pinv), cached. */
double arrank_stats_f_lower(double p, double d1, double d2);

#endif
