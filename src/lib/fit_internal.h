/*
 * fit_internal.h - the parts of a prediction shared by fit.c and models.c,
 * inside libarrank only (fit.c).
 */
#ifndef ARRANK_FIT_INTERNAL_H
#define ARRANK_FIT_INTERNAL_H

#include "arrank/fit.h"

/* The argument checks of arrank_fit_predict and arrank_model_fit_predict:
   have_fit is 0 when the caller was given no fit; temp_K in kelvin.  ARRANK_OK,
   or EINVAL with the message in *err.  Each caller then checks its own fit. */
arrank_status arrank_predict_check(int have_fit, double temp_K, double confidence,
                                   const arrank_prediction *pred, arrank_error *err);

/* Fill *pred at temp_K from ln r and its standard error se: the two-sided
   `confidence` interval exp(ln r -/+ t se) with t on dof degrees of freedom,
   and extrapolated when temp_K is outside [T_min_K, T_max_K] beyond rounding. */
void arrank_predict_fill(double temp_K, double confidence, double dof, double T_min_K,
                         double T_max_K, double ln_r, double se, arrank_prediction *pred);

#endif
