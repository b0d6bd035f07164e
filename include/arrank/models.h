/*
 * arrank/models.h - rate laws beyond the straight Arrhenius line.
 *
 *  - The Arrhenius form fitted in rate space, for data whose errors are
 *    absolute rather than relative (McCluskey, "Why you might be fitting
 *    Arrhenius data badly", 2023): r = exp(b0 + b1 x), x = 1/T - 1/T_ref,
 *    nonlinear least squares (fit.h engine) started from the linear fit of ln r.
 *  - The modified form r = A (T/T_ref)^n exp(-E/RT) (a k = A T^n e^(-E/RT) law
 *    with T scaled by T_ref so A keeps the rate's unit).  In a 50-100 K window
 *    E and n are nearly collinear: corr_E_n says how much; the apparent
 *    activation energy at T is E + n R T (IUPAC Gold Book, "activation energy").
 *  - The transition-state (Eyring) form for turnover frequencies,
 *    r = (k_B T / h) exp(dS/R) exp(-dH/RT) with transmission coefficient 1
 *    (IUPAC Gold Book, "transition state theory"): the modified form with n
 *    fixed at 1, so ln(r/T) is linear in 1/T with slope -dH/R.
 *
 * All three share one parametrisation: ln r = b0 + n ln(T/T_ref) + b1 x with
 * T_ref the (weighted) harmonic mean of T, E = -R b1.  With relative errors
 * (the default) ln r is fitted by linear least squares, which is exact for
 * that error model; with absolute errors r is fitted by the nonlinear engine
 * (weights 1/sd^2 when rate_sd is given), started from the linear result.
 */
#ifndef ARRANK_MODELS_H
#define ARRANK_MODELS_H

#include <stddef.h>

#include "arrank/error.h"
#include "arrank/fit.h"

/* |corr(E, n)| above this: E and n cannot be told apart (DOMAIN notes, common practice). */
#define ARRANK_COLLINEAR_CORR 0.99

typedef struct {
    int eyring;          /* 1: n fixed at 1 (transition-state form); 0: modified form */
    int absolute;        /* 1: fitted in rate space (absolute errors) */
    size_t n;            /* points */
    size_t n_params;     /* 3 (modified) or 2 (Eyring) */
    double T_ref_K, T_min_K, T_max_K;
    double b0;           /* ln r at T_ref */
    double n_T;          /* temperature exponent n (1 for Eyring) */
    double b1;           /* K: -E/R */
    double cov[3][3];    /* covariance of (b0, n_T, b1); the n_T row and column are 0 for Eyring */
    double dof;          /* points - n_params */
    double rss;          /* weighted residual sum of squares of the fit */
    double E_J_mol, E_se_J_mol;
    double ln_A, ln_A_se; /* A in r = A (T/T_ref)^n exp(-E/RT), report unit */
    double n_T_se;        /* 0 for Eyring */
    double corr_E_n;      /* NAN for Eyring */
    int collinear;        /* |corr_E_n| > ARRANK_COLLINEAR_CORR */
    double ea_app_J_mol;  /* apparent Ea at T_ref: E + n R T_ref */
    /* Eyring only, with c = rate_to_per_s: dH = -R b1,
       dS = R (b0 + ln c - ln(T_ref / 1 K) - b1/T_ref - ln(k_B/h * 1 s K)), J/(mol K) */
    double dH_J_mol, dH_se_J_mol;
    double dS_J_mol_K, dS_se_J_mol_K;
    size_t iterations;    /* nonlinear iterations (0 for the linear fit) */
} arrank_model_fit;

/*
 * Arrhenius in rate space: on success *fit is filled like arrank_fit_arrhenius
 * does (same T_ref, b0, b1, covariance from the Jacobian at the optimum scaled
 * by rss/dof, Ea, ln A and their errors), so arrank_fit_predict applies.
 * resid_sd and r2 are those of ln r about the curve, for comparison with
 * relative fits; chi2_dof is the rate-space rss/dof when weighted.
 * rate_sd may be NULL or all NAN (unweighted; then weights 1).
 * EFIT as arrank_fit_arrhenius, ENOCONV when the solver does not converge.
 */
arrank_status arrank_fit_arrhenius_absolute(const double *temp_K, const double *rate,
                                            const double *rate_sd, size_t n,
                                            arrank_arrhenius *fit, arrank_error *err);

/*
 * Modified (eyring = 0) or transition-state (eyring = 1) fit.  temp_K[n],
 * rate[n] > 0 in the report unit, rate_sd as above.  absolute selects the
 * error model (see the top of this file).  rate_to_per_s converts the rate to
 * 1/s, used for dS with eyring = 1 (pass 1 otherwise).  EFIT for fewer points
 * than n_params + 1 or degenerate temperatures, ENOCONV, ENOMEM.
 */
arrank_status arrank_model_fit_run(int eyring, int absolute, const double *temp_K,
                                   const double *rate, const double *rate_sd, size_t n,
                                   double rate_to_per_s, arrank_model_fit *out,
                                   arrank_error *err);

/*
 * Rate at temp_K from a model fit with its delta-method interval
 * (gradient (1, ln(T/T_ref), 1/T - 1/T_ref), t with the fit's dof).
 */
arrank_status arrank_model_fit_predict(const arrank_model_fit *fit, double temp_K,
                                       double confidence, arrank_prediction *pred,
                                       arrank_error *err);

#endif
