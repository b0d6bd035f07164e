/*
 * analysis_reference.h - the pipeline's reference step
 * (analysis_reference.c), inside libarrank only.
 */
#ifndef ARRANK_ANALYSIS_REFERENCE_H
#define ARRANK_ANALYSIS_REFERENCE_H

#include <stddef.h>

#include "arrank/analysis.h"

/*
 * After the fits, before the ranking: when the options or the campaign name
 * a reference, a->reference and every fitted result's reference statistics
 * (analysis_stats.h).  order[0..*n_fitted) are the fitted results, the
 * ranking's candidates.  With several campaigns and a rate ranking
 * (*by rate or ratio, an operating temperature), the ranking is pooled:
 * each candidate's key becomes its ln ratio to its campaign's reference,
 * the references leave the candidates (*n_fitted shrinks) and *by becomes
 * ARRANK_BY_RATIO.  EINVAL when the reference is no sample of a campaign,
 * EDATA when it could not be fitted there, ENOMEM.
 */
arrank_status arrank_analysis_reference(arrank_analysis *a, size_t *order, size_t *n_fitted,
                                        arrank_rank_by *by, arrank_error *err);

#endif
