/*
 * internal.h - helpers shared by the library's modules; not part of the API.
 */
#ifndef ARRANK_INTERNAL_H
#define ARRANK_INTERNAL_H

#include <stddef.h>

#include <jansson.h>

#include "arrank/analysis.h"
#include "util.h"

/* Copy the points marked in res->used into temp_K, rate, rate_sd (each with
   room for the sample's n_points); *have_sd is 1 when every copied rate_sd is
   finite.  Returns the number copied (analysis.c). */
size_t arrank_result_used_points(const arrank_result *res, double *temp_K, double *rate,
                                 double *rate_sd, int *have_sd);

/* Refit a result on the points marked in res->used (analysis.c).  A fit that
   is impossible sets res->error; only ENOMEM is returned as a failure. */
arrank_status arrank_result_refit(arrank_result *res, arrank_error *err);

/* ---- fit.c: the parts of a prediction shared by fit.c and models.c ---- */

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

/* ---- rank.c: ranking statistics and extra models (rank.h, models.h) ---- */

/* 0 (the default): the Monte Carlo counts the pairwise wins of the top a row
   at a time with vector compares; 1: pair by pair in plain C, as before, to
   compare the two (the counts are integers and must be equal).  For tests
   only; not thread-safe. */
void arrank_rank_pairs_reference(int on);

/* 0 (the default): the Monte Carlo steps GSL's taus2 generator in line, from
   the state GSL seeded, when every key is a t; 1: every uniform through GSL's
   calls, as before, to compare the two (the numbers must be equal).  For
   tests only; not thread-safe. */
void arrank_rank_rng_reference(int on);

/* Tests: out[n] gets the first n uniforms of the Monte Carlo's generator
   seeded with seed, stepped in line (in_line 1) or through GSL (0).  Returns
   1 when they were stepped in line (this GSL's state allows it), 0 when they
   came through GSL, -1 when out of memory. */
int arrank_rank_uniforms(unsigned long seed, int in_line, double *out, size_t n);

/* For options.model == EYRING: refuse a campaign whose rates are not
   turnover frequencies (EINVAL) and give the factor from the report unit to
   1/s.  1 otherwise.  EUNIT when the unit cannot be read. */
arrank_status arrank_models_prepare(const arrank_campaign *campaign, const arrank_options *opt,
                                    double *rate_to_per_s, arrank_error *err);

/* Per-sample fit step for --errors absolute (replaces res->fit by the
   rate-space fit) and --model modified|eyring (fills res->stats->model).  A fit
   that fails sets res->error; only ENOMEM is returned as a failure. */
arrank_status arrank_models_apply(arrank_result *res, const arrank_options *opt,
                                  double rate_to_per_s, arrank_error *err);

/* Replace res->at_T by the model's prediction when a model was fitted. */
arrank_status arrank_models_predict(arrank_result *res, const arrank_options *opt,
                                    arrank_error *err);

/* The sample's part of the ranking, done with its fit on the worker that
   fitted it (analysis.c): res->stats (allocated here), its key and its share
   of T_hm.  ENOMEM only.  arrank_rank_compute does it for any ranked result
   that arrives without it. */
arrank_status arrank_rank_prepare(arrank_result *res, const arrank_options *opt,
                                  arrank_error *err);

/* Per-sample JSON parts, to merge into the sample's object (json_object_update):
   "p_best", "group" (null when not grouped), "p_beats" (object keyed by the
   other sample's id; top samples only), "rate_at_T_ci_bootstrap" ([lo, hi],
   report unit) with "bootstrap_resamples", and "model" when one was fitted.
   New reference (an empty object when nothing was computed); NULL on ENOMEM. */
json_t *arrank_sample_stats_json(const arrank_analysis *a, size_t result_index);

/* Campaign-level JSON parts, to merge into the top object: "compensation"
   and "ranking_uncertainty" (draws, seed, distribution, group rule, ...).
   New reference; an empty object when no statistics were computed. */
json_t *arrank_rank_stats_json(const arrank_analysis *a);

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
