/*
 * quality.h - the data-quality checks of one sample's diagnosis (quality.c):
 * conversion, runs and repeats, drift with time on stream, outliers.
 * Inside the library.
 */
#ifndef ARRANK_QUALITY_H
#define ARRANK_QUALITY_H

#include <stddef.h>

#include "arrank/verdicts.h"
#include "regress.h"
#include "verdict_work.h"

/* A shift between runs, or a drift, counts only from this relative change
   on ("loss > 5-10 % = flag", DOMAIN notes, from memory). */
#define ARRANK_RUN_MIN_CHANGE 0.05

/* Mark the points of base[0..n) whose conversion is above
   d->conversion_limit (high_conversion, n_high_conversion); the others go
   to cand in the same order.  Returns their number. */
size_t arrank_quality_conversion(arrank_dwork *wk, const size_t *base, size_t n, size_t *cand);

/* Runs and repeats, then drift: label each point of base[0..n) (sorted by
   T, set-point groups grp, n_groups of them; in_base[np] marks them) by run,
   else by its pass over a repeated set point (label[np] receives them, -1
   outside base), compare every later label with the first (d->runs; needs
   the line lf_all through base, NULL when there is none) and test for drift
   with time on stream (d->drift).  Returns 1 when deactivation during the
   measurements is testable (two labels or a drift test).  Sets wk->nomem
   when out of memory. */
int arrank_quality_runs(arrank_dwork *wk, const size_t *base, const size_t *grp, size_t n,
                        size_t n_groups, const unsigned char *in_base, int *label,
                        const arrank_line *lf_all);

/* Externally studentized residuals and Cook's distance of idx[0..n) about
   their line (points[].student_resid, cooks_d, outlier; n_outliers,
   outlier_t_limit). */
void arrank_quality_outliers(arrank_dwork *wk, const size_t *idx, size_t n);

/* The run comparisons, repeats and drift in plain words: a finding for each
   shift or drift shown, a note for each not shown (more than two repeats of
   one verdict against one pass in one line), the drift's reason when not
   tested.  Reads wk->d as arrank_quality_runs left it. */
void arrank_quality_describe_runs(arrank_dwork *wk);

/* A stability hold (arrank_diagnose_hold, diagnose.h): its drift and words;
   *out NULL when s is not one.  ENOMEM only. */
arrank_status arrank_quality_hold(const arrank_sample *s, double confidence, arrank_hold **out,
                                  arrank_error *err);

#endif
