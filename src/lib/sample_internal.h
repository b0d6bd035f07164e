/*
 * sample_internal.h - what the campaign reader needs of sample.c beyond the
 * public arrank/sample.h; inside libarrank only.
 */
#ifndef ARRANK_SAMPLE_INTERNAL_H
#define ARRANK_SAMPLE_INTERNAL_H

#include "arrank/sample.h"

/* The unit of rates derived from conversion before they are converted to the
   report unit. */
#define ARRANK_SAMPLE_DERIVED_RATE_UNIT "mol/(kg*s)"

/* arrank_sample_parse, except that a sample whose rates come from conversion
   (rates_derived) is left without them: its metadata may still grow
   (campaign.ini's [sample ID] sections); arrank_sample_derive_rates then
   fills them. */
arrank_status arrank_sample_parse_deferred(const char *name, const char *data, size_t len,
                                           arrank_units *units, const char *report_unit,
                                           const arrank_read_options *opt,
                                           arrank_sample *sample, arrank_error *err);

/* The rates of a rates_derived sample from its conversion column and feed
   metadata, in report_unit (NULL: mol/(kg*s)), with the problem and the note
   that go with them. */
arrank_status arrank_sample_derive_rates(arrank_sample *sample, arrank_units *units,
                                         const char *report_unit, int strict, arrank_error *err);

/* Append a metadata entry (copies of key, value and source; line in source).
   0, or -1 when out of memory (the sample is unchanged). */
int arrank_sample_add_meta(arrank_sample *sample, const char *key, const char *value,
                           const char *source, long line);

/* ---- between sample.c and sample_derive.c ---- */

/* Problems that keep the sample but keep it out of the fit: fewer than 3
   points, one temperature (a rate <= 0 is set while reading).  Sets
   sample->problem unless one is set; -1 when out of memory. */
int arrank_sample_fit_problem(arrank_sample *sample);

/* arrank_sample_derive_rates with the conversion from mol/(kg*s) to the
   report unit given. */
arrank_status arrank_sample_derive_with(arrank_sample *sample, arrank_units *units,
                                        const arrank_conversion *to_report, int strict,
                                        arrank_error *err);

#endif
