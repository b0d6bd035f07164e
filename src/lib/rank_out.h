/*
 * rank_out.h - the ranking statistics in the words of the outputs
 * (rank_out.c), inside libarrank only: what the JSON writer merges into
 * each sample and into the top object, and the one name of the ranking key.
 */
#ifndef ARRANK_RANK_OUT_H
#define ARRANK_RANK_OUT_H

#include <stddef.h>

#include <jansson.h>

#include "arrank/analysis.h"

/* The ranking key's name in every output: "rate_at_T", "ea" or "prefactor"
   (JSON "ranked_by" and "ranking_uncertainty.by"). */
const char *arrank_rank_by_name(arrank_rank_by by);

/* Per-sample JSON parts, to merge into the sample's object (json_object_update):
   "p_best", "group" (null when not grouped), "p_beats" (object keyed by the
   other sample's id; top samples only), "rate_at_T_ci_bootstrap" ([lo, hi],
   report unit) with "bootstrap_resamples", and "model" when one was fitted;
   "campaign" with several campaigns; with a reference "is_reference",
   "ratio_to_reference" (and _ci), "p_better_than_reference",
   "ea_minus_reference_kJ_mol" (and _ci).
   New reference (an empty object when nothing was computed); NULL on ENOMEM. */
json_t *arrank_sample_stats_json(const arrank_analysis *a, size_t result_index);

/* Campaign-level JSON parts, to merge into the top object: "reference"
   (with a reference), "compensation" and "ranking_uncertainty" (draws, seed,
   distribution, group rule, ...).
   New reference; an empty object when no statistics were computed. */
json_t *arrank_rank_stats_json(const arrank_analysis *a);

/* The reference's drift in words, campaign k (>= 1) against the first:
   "the reference ran 18 % lower in B than in A; 95 % interval 9-26 %"
   (or "...: no drift shown" when the interval holds no change); "" for k 0
   or without a reference. */
void arrank_reference_drift_words(const arrank_analysis *a, size_t k, char *buf, size_t n);

#endif
