/*
 * number.h - fast, exact paths for reading and writing plain decimal
 * numbers, inside libarrank only.  See number.c.
 */
#ifndef ARRANK_NUMBER_H
#define ARRANK_NUMBER_H

#include <stddef.h>
#include <stdint.h>

/*
 * If the whole of text is a plain decimal number - [+-]digits[.digits]
 * [(e|E)[+-]digits], at least one digit before the exponent - that can be
 * read exactly by Clinger's fast path (at most 19 significant digits forming
 * an integer m <= 2^53, decimal exponent e with |e| <= 22), store the
 * correctly rounded value (the same double strtod gives) in *value and return
 * 1.  Otherwise return 0 and leave *value alone: the caller uses strtod.
 */
int arrank_decimal_fast(const char *text, double *value);

/*
 * snprintf(buf, n, "%.*f", prec, v) and snprintf(buf, n, "%.*g", prec, v),
 * byte for byte, in the C locale and the default rounding mode, without
 * printf's multi-precision digit generation for the common case (see
 * number.c); anything else is handed to snprintf.  Return what snprintf
 * returns.  The fast path needs n >= 40 (the result is shorter).
 */
int arrank_format_fixed(char *buf, size_t n, int prec, double v);
int arrank_format_general(char *buf, size_t n, int prec, double v);

/*
 * The decimal digits of n, at least width of them (leading zeros), written so
 * that they end just before `end`; returns where they start.  Writes at most
 * max(20, width) bytes before end, no NUL.
 */
char *arrank_digits_before(char *end, uint64_t n, int width);

#endif
