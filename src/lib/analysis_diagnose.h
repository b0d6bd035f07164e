/*
 * analysis_diagnose.h - the pipeline's diagnosis step (analysis_diagnose.c,
 * part of the analysis* family).  Inside the library.
 */
#ifndef ARRANK_ANALYSIS_DIAGNOSE_H
#define ARRANK_ANALYSIS_DIAGNOSE_H

#include "arrank/analysis.h"
#include "arrank/diagnose.h"

/* Refit a result on the points marked in res->used (analysis.c).  A fit that
   is impossible sets res->error; only ENOMEM is returned as a failure. */
arrank_status arrank_result_refit(arrank_result *res, arrank_error *err);

/* The diagnosis's options for a campaign under the analysis options opt:
   the campaign-wide basis check done once here, opt->units borrowed (NULL:
   the criteria are skipped with units_why). */
arrank_diagnose_options arrank_analysis_diagnose_options(const arrank_campaign *c,
                                                         const arrank_options *opt,
                                                         const char *units_why);

/*
 * Diagnose one fitted result (res->error == NULL; else nothing is done):
 * the diagnosis proposes, the proposed points are left out of res->used
 * and the result refitted (every point restored and refitted when too
 * little is left), the diagnosis concludes on the final fit, and its
 * verdicts become ARRANK_FLAG_* bits.  res->diagnosis is set.  ENOMEM only.
 */
arrank_status arrank_analysis_diagnose(arrank_result *res, const arrank_diagnose_options *dopt,
                                       arrank_error *err);

#endif
