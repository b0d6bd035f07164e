/*
 * arrank/contrast.h - differences of independent estimates: two fits of two
 * samples, a sample against the reference catalyst, one sample in two
 * campaigns.  Pure statistics on numbers and arrays (no samples, no fits).
 *
 * Each estimate comes with its standard error and the degrees of freedom of
 * that error (INFINITY: known variance, a normal).  The two are independent
 * (separate fits of separate data), so the variance of a difference is the
 * sum of the variances, and its degrees of freedom follow Welch and
 * Satterthwaite (Welch, Biometrika 34:28, 1947; Satterthwaite, Biometrics
 * Bull. 2:110, 1946):
 *
 *     se^2 = se_a^2 + se_b^2,
 *     dof  = se^4 / (se_a^4 / dof_a + se_b^4 / dof_b).
 *
 * On ln r this gives the ratio of two rates: ratio = exp(d), interval
 * exp(d -/+ t se).
 */
#ifndef ARRANK_CONTRAST_H
#define ARRANK_CONTRAST_H

#include <stddef.h>

#include "arrank/error.h"

/* The difference a - b of two independent estimates. */
typedef struct {
    double est;       /* a - b */
    double se;        /* sqrt(se_a^2 + se_b^2) */
    double dof;       /* Welch-Satterthwaite; INFINITY when both are normal */
    double t;         /* two-sided t quantile at the confidence on dof */
    double lo, hi;    /* est -/+ t se */
    double p;         /* two-sided p-value of est = 0: P(|T| > |est/se|) */
    double p_greater; /* P(A > B) when A and B follow their fitted distributions,
                         by the Welch approximation: F_t(est/se; dof) */
} arrank_contrast;

/* Welch-Satterthwaite degrees of freedom of se_a^2 + se_b^2 (formula above);
   a term with infinite dof or zero se adds nothing; INFINITY when nothing is
   left; NAN for a negative or non-finite se. */
double arrank_contrast_welch_dof(double se_a, double dof_a, double se_b, double dof_b);

/* a - b with its interval at `confidence` (0 < confidence < 1) and its
   p-values.  Every field NAN when an input is not finite (an se of 0 on both
   sides gives se 0, an interval [est, est], p 0 or 1). */
arrank_contrast arrank_contrast_diff(double a, double se_a, double dof_a, double b, double se_b,
                                     double dof_b, double confidence);

/* Welch's test that k means with unequal variances are equal. */
typedef struct {
    double F;        /* the statistic */
    double df1, df2; /* its degrees of freedom: k - 1 and the Welch denominator */
    double p;        /* P(F(df1, df2) > F) */
} arrank_contrast_equal;

/*
 * Welch's heteroscedastic one-way test (Welch, Biometrika 38:330, 1951) on
 * k estimates y[k] with standard errors se[k] (each > 0) on dof[k] degrees
 * of freedom: w_i = 1/se_i^2, W = sum w_i, ybar = sum w_i y_i / W,
 * L = sum (1 - w_i/W)^2 / dof_i,
 *     F = [sum w_i (y_i - ybar)^2 / (k - 1)] / [1 + 2 (k - 2) L / (k^2 - 1)],
 *     df1 = k - 1, df2 = (k^2 - 1) / (3 L).
 * For k = 2 it is the square of Welch's t (same p).  EINVAL for k < 2 or an
 * se not > 0.
 */
arrank_status arrank_contrast_equal_test(const double *y, const double *se, const double *dof,
                                         size_t k, arrank_contrast_equal *out,
                                         arrank_error *err);

#endif
