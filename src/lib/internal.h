/*
 * internal.h - helpers shared by the library's modules; not part of the API.
 */
#ifndef ARRANK_INTERNAL_H
#define ARRANK_INTERNAL_H

#include <stddef.h>

#include <jansson.h>

#include "arrank/analysis.h"
#include "util.h"

/* Refit a result on the points marked in res->used (analysis.c).  A fit that
   is impossible sets res->error; only ENOMEM is returned as a failure. */
arrank_status arrank_result_refit(arrank_result *res, arrank_error *err);


/* Diagnostics of one result as a JSON object (diagnose.c): regime per point
   (file order), excluded points with reasons, kinetic window, curvature,
   criteria, quality, findings and diagnosis_notes; output.c merges its keys
   into each sample.  JSON null when res->diagnosis is NULL; NULL when out of
   memory.  The caller owns the reference. */
json_t *arrank_diagnosis_json(const arrank_result *res);

/* ---- diagnose.c: the campaign's basis verdict, computed once per analysis ---- */
typedef struct {
    int known; /* 1 when mixed and why are filled */
    int mixed;
    char why[256];
} arrank_campaign_basis;

/* arrank_diagnose_result with the campaign-wide basis check done once by the
   caller (opt_basis NULL: checked here, one pass over the campaign). */
arrank_status arrank_diagnose_result_basis(arrank_result *res, const arrank_campaign *c,
                                           const arrank_options *opt,
                                           const arrank_campaign_basis *opt_basis,
                                           arrank_error *err);

/* ---- diagnose.c: test switches for the series-resistance model ---- */

/* 0 (the default): the profile over ln k_t fits b0, b1 at each grid point
   with diagnose.c's own 2x2 solver, and the full fit from its best point
   uses the own 3x3 solver; 1: both with arrank_nlfit_run, as before those
   solvers, to compare the two.  For tests only; not thread-safe. */
void arrank_diagnose_series_reference(int on);

/* 1 (the default): the profile's best point starts the full three-parameter
   fit, which gives the reported numbers; 0: the fit is skipped and the
   profile's best point is reported, as when that fit fails, so that a test
   sees the profile itself.  For tests only; not thread-safe. */
void arrank_diagnose_series_full_fit(int on);

/* Two-sided p-value of Student's t, P(|T| > |t|) with dof degrees of
   freedom, as the diagnostics compute it: closed forms for integer dof up to
   200 where they keep full precision, 2 gsl_cdf_tdist_Q(|t|, dof) elsewhere;
   0 for infinite t, NAN for NAN.  Exposed so that tests/test_diagnose.c can
   hold it against GSL. */
double arrank_diagnose_t_p(double t, double dof);

/* 0 (the default): the diagnostics fit straight lines and the quadratic
   test in closed form; 1: by the general QR path.  For the test that
   compares the two (tests/test_diagnose.c); not thread-safe. */
void arrank_diagnose_line_reference(int on);

#endif
