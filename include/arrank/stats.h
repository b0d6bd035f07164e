/*
 * arrank/stats.h - the public part of the library's distribution functions.
 */
#ifndef ARRANK_STATS_PUBLIC_H
#define ARRANK_STATS_PUBLIC_H

/* Two-sided t quantile t_{(1+confidence)/2, dof} (GSL gsl_cdf_tdist_Pinv; the
   normal quantile for infinite dof); NAN outside 0 < confidence < 1, dof > 0. */
double arrank_t_quantile(double confidence, double dof);

#endif
