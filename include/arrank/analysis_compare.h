/*
 * arrank/analysis_compare.h - two analysed campaigns sample by sample (types and method: arrank/compare.h).
 */
#ifndef ARRANK_ANALYSIS_COMPARE_H
#define ARRANK_ANALYSIS_COMPARE_H

#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/compare.h"
#include "arrank/error.h"
#include "arrank/units.h"

/*
 * Compare b against a.  Both analyses must have the same operating
 * temperature (EINVAL otherwise, or when it is missing) and confidence; their
 * report units must convert (units: the unit database; EDATA for rates of
 * different dimensions).  A campaign with two samples of one id cannot be
 * matched (EDATA).  *out is owned by the caller (arrank_compare_free).
 */
arrank_status arrank_compare_run(const arrank_analysis *a, const arrank_analysis *b,
                                 arrank_units *units, arrank_comparison **out,
                                 arrank_error *err);

void arrank_compare_free(arrank_comparison *comparison);

#endif
