/*
 * number.h - fast, exact paths for reading and writing plain decimal
 * numbers, inside libarrank only, and the C library's paths made
 * independent of the caller's locale and rounding mode.  See number.c.
 */
#ifndef ARRANK_NUMBER_H
#define ARRANK_NUMBER_H

#include <locale.h>
#include <stddef.h>
#include <stdint.h>

/*
 * The C library's number paths (strtod, printf, and libraries built on them
 * such as udunits2) follow the calling thread's locale and rounding mode.
 * arrank_numbers_c_enter switches this thread to the C locale (uselocale,
 * never the process-wide setlocale) and to rounding to nearest, and saves
 * what was there; arrank_numbers_c_leave puts it back.
 */
typedef struct {
    locale_t locale; /* the thread's locale before; (locale_t)0 if not switched */
    int rounding;    /* the rounding mode before */
} arrank_numbers_env;

void arrank_numbers_c_enter(arrank_numbers_env *saved);
void arrank_numbers_c_leave(const arrank_numbers_env *saved);

/*
 * strtod(text, end) as in the C locale rounding to nearest, whatever the
 * caller's locale and rounding mode (errno as strtod sets it).
 */
double arrank_decimal_prefix(const char *text, char **end);

/*
 * If the whole of text is a plain decimal number - [+-]digits[.digits]
 * [(e|E)[+-]digits], at least one digit before the exponent - that can be
 * read exactly by Clinger's fast path (at most 19 significant digits forming
 * an integer m <= 2^53, decimal exponent e with |e| <= 22), store the
 * correctly rounded value (the same double strtod gives in the C locale,
 * rounding to nearest) in *value and return 1.  Otherwise - and whenever the
 * rounding mode is not to nearest - return 0 and leave *value alone: the
 * caller uses arrank_decimal_read.
 */
int arrank_decimal_fast(const char *text, double *value);

/*
 * The whole of text (no blanks) as a decimal number, the same in any locale
 * and rounding mode of the caller: arrank_decimal_fast, else strtod in the C
 * locale rounding to nearest.  Returns 0 with *value set; 1 not a number
 * (hexadecimal, which strtod would read, included); 2 not finite ("inf",
 * "nan"); 3 out of the range of double.
 */
int arrank_decimal_read(const char *text, double *value);

/*
 * A numeric cell, rewritten in place: blanks (space, tab, CR, LF) around it
 * dropped, a decimal comma read as a point when delim is not ',' (pass '.'
 * for text that has no delimiter).  Returns what arrank_decimal_read
 * returns, and 1 for an empty cell.
 */
int arrank_decimal_cell(char *text, char delim, double *value);

/*
 * snprintf(buf, n, "%.*f", prec, v) and snprintf(buf, n, "%.*g", prec, v),
 * byte for byte as in the C locale rounding to nearest, whatever the
 * caller's locale and rounding mode, without printf's multi-precision digit
 * generation for the common case (see number.c); anything else is handed to
 * snprintf in the C locale, rounding to nearest.  Return what snprintf
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
