/*
 * analysis_models.h - the pipeline's model step (analysis_models.c), inside
 * libarrank only: --errors absolute and --model modified|eyring applied to
 * each result with models.c's fits.
 */
#ifndef ARRANK_ANALYSIS_MODELS_H
#define ARRANK_ANALYSIS_MODELS_H

#include "arrank/analysis.h"

/* For options.model == EYRING: refuse a campaign whose rates are not
   turnover frequencies (EINVAL) and give the factor from the report unit to
   1/s, read with opt->units (the pipeline loads one when the caller gave
   none; EUNIT when it is NULL).  1 otherwise.  EUNIT when the unit cannot be
   read. */
arrank_status arrank_analysis_models_prepare(const arrank_campaign *campaign,
                                             const arrank_options *opt, double *rate_to_per_s,
                                             arrank_error *err);

/* Per-sample fit step for --errors absolute (replaces res->fit by the
   rate-space fit) and --model modified|eyring (fills res->stats->model).  A fit
   that fails sets res->error; only ENOMEM is returned as a failure. */
arrank_status arrank_analysis_models_apply(arrank_result *res, const arrank_options *opt,
                                           double rate_to_per_s, arrank_error *err);

/* Replace res->at_T by the model's prediction when a model was fitted. */
arrank_status arrank_analysis_models_predict(arrank_result *res, const arrank_options *opt,
                                             arrank_error *err);

#endif
