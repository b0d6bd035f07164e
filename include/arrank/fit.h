/*
 * arrank/fit.h - least-squares engines and the Arrhenius fit.
 *
 * Three layers:
 *  1. a general weighted linear least-squares engine (GSL multifit, QR/SVD),
 *     checked against NIST StRD Norris and Pontius;
 *  2. a general nonlinear least-squares engine (GSL multifit_nlinear, trust
 *     region), checked against NIST StRD nonlinear sets;
 *  3. the Arrhenius fit of ln r on 1/T, centred on T_ref, with covariance,
 *     and the rate at a temperature with its delta-method interval.
 *
 * Formulas (README "The numbers"): y = ln r, x = 1/T - 1/T_ref with 1/T_ref the
 * weighted mean of 1/T, model y = b0 + b1 x; Ea = -R b1; ln A = b0 - b1/T_ref.
 * Centring on the weighted mean of 1/T makes b0 and b1 uncorrelated
 * (Schwaab & Pinto, Chem. Eng. Sci. 62:2750, 2007).
 */
#ifndef ARRANK_FIT_H
#define ARRANK_FIT_H

#include <stddef.h>

#include "arrank/error.h"
#include "arrank/stats.h" /* arrank_t_quantile */

/* Molar gas constant, J/(mol K): exact in the 2019 SI (N_A k; CODATA 2018). */
#define ARRANK_R_J_MOL_K 8.31446261815324
/* Boltzmann constant, J/K, and Planck constant, J s: exact in the 2019 SI. */
#define ARRANK_KB_J_K 1.380649e-23
#define ARRANK_H_J_S 6.62607015e-34

/* ---- 1. weighted linear least squares ---------------------------------- */

/*
 * Fit y = X b by weighted least squares.  X is n x p, row-major; w may be NULL
 * (all ones).  Outputs: b[p], cov[p*p] (scaled by the residual variance
 * s^2 = chi2/(n-p), as for unknown error scale), rss (weighted sum of squared
 * residuals).  Any output pointer except b may be NULL.  EFIT when n <= p or
 * the design is singular.
 */
arrank_status arrank_linfit(const double *X, const double *y, const double *w, size_t n,
                            size_t p, double *b, double *cov, double *rss, arrank_error *err);

/* ---- 2. nonlinear least squares ----------------------------------------- */

/*
 * Model callback: value of the model at observation i for parameters p, and
 * (when grad is not NULL) its gradient d value / d p[k], k < n_params.
 * Return 0, or non-zero when p is outside the model's domain.
 */
typedef int (*arrank_model_fn)(const double *p, size_t i, void *ctx, double *value,
                               double *grad);

typedef struct {
    size_t max_iter;  /* iteration limit (default 500) */
    double xtol;      /* step tolerance (default 1e-12) */
    double gtol;      /* gradient tolerance (default 1e-12) */
    double ftol;      /* cost tolerance (default 0) */
    int geodesic;     /* 1: trust region with geodesic acceleration (default), 0: plain LM */
} arrank_nlfit_options;

/* Options with the documented defaults above. */
arrank_nlfit_options arrank_nlfit_defaults(void);

typedef struct {
    size_t n_params;
    double *params; /* [n_params] best estimate */
    double *se;     /* [n_params] standard errors from the Jacobian, scaled by s^2 */
    double *cov;    /* [n_params^2] covariance, row-major */
    double rss;     /* weighted residual sum of squares */
    double dof;     /* n - n_params */
    size_t iterations;
} arrank_nlfit;

/*
 * Minimise sum_i w_i (model_i(p) - y_i)^2 from start[n_params].  w may be NULL.
 * On success out is filled (free its arrays with arrank_nlfit_clear).
 * ENOCONV when the solver stops without meeting the tolerances (its GSL
 * reason in the message), EFIT when n <= n_params or the Jacobian is singular.
 * Also ENOCONV when the stop is not a minimum (Bates & Watts relative offset
 * above 0.001, e.g. stuck at the edge of the model's domain), EFIT when the
 * start is outside the domain.  Trial points where the model returns non-zero
 * are rejected steps, not errors.  out is zeroed on entry and left empty on
 * failure, so arrank_nlfit_clear is always safe.
 */
arrank_status arrank_nlfit_run(arrank_model_fn model, void *ctx, size_t n_params, const double *y,
                               const double *w, size_t n, const double *start,
                               const arrank_nlfit_options *options, arrank_nlfit *out,
                               arrank_error *err);

void arrank_nlfit_clear(arrank_nlfit *fit);

/* ---- 3. Arrhenius ------------------------------------------------------- */

typedef struct {
    size_t n;            /* points used */
    int weighted;        /* 1 when rate_sd gave weights (r/sd)^2 */
    double T_ref_K;      /* 1 / weighted mean of 1/T */
    double T_min_K, T_max_K;
    double b0;           /* ln r at T_ref (r in the report unit) */
    double b1;           /* d ln r / d(1/T), K */
    double cov[2][2];    /* covariance of (b0, b1), scaled by s^2 */
    double dof;          /* n - 2 */
    double ea_J_mol, ea_se_J_mol;
    double ln_A, ln_A_se;     /* ln of A in the report unit */
    double cov_ea_lnA_J_mol;  /* covariance of Ea (J/mol) and ln A */
    double corr_ea_lnA;
    double resid_sd;     /* s = sqrt(rss/dof), in ln r (weighted when weighted) */
    double r2;           /* coefficient of determination, weighted */
    double chi2_dof;     /* rss/dof when weighted (rate_sd given), NAN otherwise */
} arrank_arrhenius;

/*
 * Fit ln r = b0 + b1 (1/T - 1/T_ref).  temp_K[n], rate[n] > 0; rate_sd may be
 * NULL, or have NAN entries only if all are NAN (then unweighted).  EFIT with a
 * message for n < 3, a single temperature, or a rate <= 0 or not finite.
 * Weights are (r/sd)^2; the covariance is always scaled by s^2 = chi2/dof
 * (weights taken as relative, as SciPy curve_fit with absolute_sigma=False), so
 * chi2_dof tells how far the stated rate_sd is from the scatter seen.
 */
arrank_status arrank_fit_arrhenius(const double *temp_K, const double *rate, const double *rate_sd,
                                   size_t n, arrank_arrhenius *fit, arrank_error *err);

typedef struct {
    double temp_K;
    double ln_rate, ln_rate_se;
    double rate;                /* exp(ln_rate): the median estimate, report unit */
    double rate_lo, rate_hi;    /* exp(ln_rate -/+ t se), t with dof of the fit */
    int extrapolated;           /* temp_K outside [T_min_K, T_max_K] */
    double extrapolation_K;     /* how far outside [T_min_K, T_max_K], in K; 0 inside */
    double extrapolation_rel;   /* extrapolation_K / (T_max_K - T_min_K); 0 inside */
} arrank_prediction;

/*
 * Rate at temp_K with a two-sided `confidence` interval (0 < confidence < 1),
 * delta method with the full covariance: var = cov00 + x^2 cov11 + 2 x cov01,
 * x = 1/T - 1/T_ref.
 */
arrank_status arrank_fit_predict(const arrank_arrhenius *fit, double temp_K, double confidence,
                                 arrank_prediction *pred, arrank_error *err);


#endif
