/*
 * arrank/plan_out.h - a plan (arrank/plan.h) written for the lab: the table
 * on the terminal, the run sheet (plan.csv) and the JSON.  Numbers print
 * the same in any locale of the caller.
 */
#ifndef ARRANK_PLAN_OUT_H
#define ARRANK_PLAN_OUT_H

#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/error.h"
#include "arrank/plan.h"
#include "arrank/textfit.h"

/*
 * The table: what the plan is for and its limits (the stated maximum
 * temperature among them), one row per involved sample (runs, temperatures
 * with repeats, rate-at-T interval now -> expected), the expected
 * probability that the goal is met with its Monte Carlo error beside the
 * naive plan's, and the cautions.  EIO on a write error.
 */
arrank_status arrank_plan_out_table(const arrank_analysis *analysis, const arrank_plan *plan,
                                    FILE *stream, arrank_error *err);

/*
 * The table fitted to a terminal (README "Planning the next runs"): with
 * options NULL or width 0 the table above, byte for byte; else ids whole
 * and wrapped, the temperatures wrapped after their commas, the rates
 * (now -> expected) left out when the rest does not fit, and said so, and
 * the lines above and below reflowed.  EIO, ENOMEM.
 */
arrank_status arrank_plan_out_table_term(const arrank_analysis *analysis, const arrank_plan *plan,
                                         const arrank_table_options *options, FILE *stream,
                                         arrank_error *err);

/*
 * The run sheet, CSV: order,sample,temperature [degC],temperature [K],repeats,
 * one row per planned (sample, temperature), coldest first (one heating
 * ramp), ties in rank order; `order` numbers the rows.  Comment lines
 * (`# ...`) first: the limit and the caution.
 */
arrank_status arrank_plan_out_sheet(const arrank_analysis *analysis, const arrank_plan *plan,
                                    FILE *stream, arrank_error *err);

/*
 * The JSON: goal, budget, operating_temperature_K, max_temperature_K, runs
 * [{sample, temperature_K, repeats}], expected_probability,
 * expected_probability_se, naive_probability, naive_probability_se,
 * naive_runs, samples [{sample, rate_at_T_ci_before, rate_at_T_ci_expected,
 * runs}], simulations, seed, cautions.
 */
arrank_status arrank_plan_out_json(const arrank_analysis *analysis, const arrank_plan *plan,
                                   FILE *stream, arrank_error *err);

#endif
