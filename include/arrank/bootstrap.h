/*
 * arrank/bootstrap.h - a studentized bootstrap interval for the rate at the operating
 * temperature.
 */
#ifndef ARRANK_BOOTSTRAP_H
#define ARRANK_BOOTSTRAP_H

#include <stddef.h>

#include "arrank/error.h"
#include "arrank/fit.h"

/*
 * Residual bootstrap of a weighted straight-line fit of ln r on x = 1/T - 1/T_ref
 * (Davison & Hinkley, Bootstrap Methods and their Application, 1997,
 * Algorithm 6.1, with leverage-adjusted residuals, eq. 6.9): temp_K[n], rate[n],
 * weights w[n] (NULL: all 1, else (r/sd)^2 as in fit.h), the original fit
 * `fit`.  `resamples` refits from GSL taus2 seeded with seed; studentized
 * (percentile-t) interval of exp(ln r(temp_op_K)) at `confidence` (Davison &
 * Hinkley sec. 5.2.1): each resample's t* = (ln r* - ln r) / se*, se* from
 * its own scatter.  *n_ok gets the resamples used (a resample with no
 * scatter has no t*).  EINVAL for resamples < 2 or n < 3; EFIT when fewer
 * than 2 resamples have scatter; ENOMEM.
 */
arrank_status arrank_bootstrap_rate(const double *temp_K, const double *rate, const double *w,
                                    size_t n, const arrank_arrhenius *fit, double temp_op_K,
                                    double confidence, size_t resamples, unsigned long seed,
                                    double *rate_lo, double *rate_hi, size_t *n_ok,
                                    arrank_error *err);

#endif
