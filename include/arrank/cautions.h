/*
 * arrank/cautions.h - the cautions that go wherever results go (the table,
 * the check text, JSON, CSV, the report), in one wording.
 */
#ifndef ARRANK_CAUTIONS_H
#define ARRANK_CAUTIONS_H

#include <stddef.h>

#include "arrank/analysis.h"
#include "arrank/error.h"

/* The caution every output carries, in these words. */
#define ARRANK_CAUTION_APPARENT                                                              \
    "apparent kinetics of these samples in this window; not for reactor design, scale-up " \
    "or safety limits"

/* How far outside a sample's measured range a rate is extrapolated far:
   more than ARRANK_FAR_EXTRAPOLATION_K kelvin or ARRANK_FAR_EXTRAPOLATION_REL
   of the span, whichever is larger (common practice). */
#define ARRANK_FAR_EXTRAPOLATION_K 10.0
#define ARRANK_FAR_EXTRAPOLATION_REL 0.2

/* 1 when the result's rate at the operating temperature is extrapolated far
   (above), else 0. */
int arrank_cautions_far(const arrank_result *res);

/* 1 when the operating temperature lies beyond the campaign's isokinetic
   temperature, seen from the measured temperatures (T_hm), and the
   compensation is judged real: the ranking by rate may reverse there. */
int arrank_cautions_beyond_iso(const arrank_analysis *a);

/*
 * The cautions of an analysis in plain words, one line each, no final
 * period: ARRANK_CAUTION_APPARENT first; then, when some sample's rate is
 * extrapolated far, which ones and how far; then, when
 * arrank_cautions_beyond_iso, that the ranking may reverse beyond T_iso.
 * *lines (free with arrank_cautions_free) and *n on success; ENOMEM.
 */
arrank_status arrank_cautions_list(const arrank_analysis *a, char ***lines, size_t *n,
                                   arrank_error *err);

void arrank_cautions_free(char **lines, size_t n);

#endif
