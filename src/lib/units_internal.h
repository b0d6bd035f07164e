/*
 * units_internal.h - helpers of units.c shared inside libarrank only.
 */
#ifndef ARRANK_UNITS_INTERNAL_H
#define ARRANK_UNITS_INTERNAL_H

#include <stddef.h>

/*
 * Write the udunits spelling of a unit as written (trimmed; UTF-8 micro sign,
 * Greek mu, middle dot, degree-sign spellings and superscripts 2 and 3
 * replaced by ASCII) into out (n bytes).  Returns 0, or -1 when it does not fit.
 */
int arrank_units_spelling(const char *unit, char *out, size_t n);

#endif
