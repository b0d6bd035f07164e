/*
 * number.h - a fast, exact path for reading plain decimal numbers, inside
 * libarrank only.  See number.c.
 */
#ifndef ARRANK_NUMBER_H
#define ARRANK_NUMBER_H

/*
 * If the whole of text is a plain decimal number - [+-]digits[.digits]
 * [(e|E)[+-]digits], at least one digit before the exponent - that can be
 * read exactly by Clinger's fast path (at most 19 significant digits forming
 * an integer m <= 2^53, decimal exponent e with |e| <= 22), store the
 * correctly rounded value (the same double strtod gives) in *value and return
 * 1.  Otherwise return 0 and leave *value alone: the caller uses strtod.
 */
int arrank_decimal_fast(const char *text, double *value);

#endif
