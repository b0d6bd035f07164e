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

/* ---- between sample.c and sample_text.c ---- */

/* Open-addressing table of run labels -> index in sample->runs, so a file
   with many distinct labels is not searched quadratically. */
typedef struct {
    size_t *slots; /* index + 1; 0 = empty */
    size_t cap;    /* power of two */
} arrank_run_table;

/* Index of label in sample->runs, adding it if new (*runs_cap: room of
   sample->runs); -1 when out of memory. */
long arrank_sample_run_index(arrank_run_table *t, arrank_sample *s, size_t *runs_cap,
                             const char *label);

/*
 * Split a header field s (trimmed; cut in place) into *name and *unit (NULL
 * when none): 'name [unit]', 'name (unit)' (the last bracket pair, which may
 * hold brackets: 'rate (mol/(kg*h))') or 'name / unit' (IUPAC; a slash with a
 * blank on each side).  0; or -1 with *st and the message (msg, n bytes) when
 * brackets do not pair up or text follows ']'.
 */
int arrank_sample_split_header(char *s, char **name, char **unit, arrank_status *st, char *msg,
                               size_t n);

/* A cell that holds no number, as the lenient reader sees it: 1 no value
   ('n.d.', 'nd', '-', ...), 2 below a detection limit ('< 0.01', '<LOD'), 0
   neither. */
int arrank_sample_missing_kind(const char *cell);

/* Metadata numbers written with a decimal comma ('48,5 mg') given a point,
   for a file whose delimiter is not ','; ids and notes untouched. */
void arrank_sample_decimal_commas(arrank_sample *sample);

#endif
