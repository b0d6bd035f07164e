/*
 * analysis_rank.h - the pipeline's ranking step (analysis_rank.c), inside
 * libarrank only: the results' ranking statistics (arrank/analysis_stats.h)
 * from the ranking modules (pbest, groups, compensation, bootstrap).
 */
#ifndef ARRANK_ANALYSIS_RANK_H
#define ARRANK_ANALYSIS_RANK_H

#include "arrank/analysis.h"

/* res->stats, allocated on first use (p_best NAN, top_index SIZE_MAX, no
   bootstrap); NULL when out of memory. */
struct arrank_sample_stats *arrank_analysis_stats_of(arrank_result *res);

/* The sample's part of the ranking, done with its fit on the worker that
   fitted it (analysis.c): res->stats (allocated here), its key and its share
   of T_hm.  ENOMEM only.  arrank_analysis_rank_compute does it for any
   ranked result that arrives without it. */
arrank_status arrank_analysis_rank_prepare(arrank_result *res, const arrank_options *opt,
                                           arrank_error *err);

/* Every ranking statistic for an analysis that has been ranked (a->order,
   a->n_ranked): P(best), P(i beats j) of the top, groups, compensation,
   bootstrap.  Allocates a->rank_stats and, per ranked result, res->stats when
   missing; arrank_analysis_free frees them.  EINVAL for options out of range
   (draws 0, bootstrap 1), ENOMEM. */
arrank_status arrank_analysis_rank_compute(arrank_analysis *a, arrank_error *err);

#endif
