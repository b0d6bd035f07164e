/*
 * number.c - reading and printing plain decimal numbers without strtod's and
 * printf's general machinery, and those library calls made independent of
 * the calling program's locale and rounding mode.
 *
 * A campaign of 10,000 samples holds some 400,000 numbers, and glibc's strtod
 * takes several hundred instructions for each, because it handles any length
 * of digits with multi-precision arithmetic.  Nearly every number in a lab
 * file is short: a few significant digits and a small exponent.  For those,
 * Clinger's fast path is exact: when the significand m is an integer of at
 * most 53 bits and |e| <= 22, both m and 10^|e| are exactly representable
 * doubles, so m * 10^e (or m / 10^-e) is one correctly rounded IEEE operation
 * and equals the correctly rounded value of the decimal - which is what strtod
 * returns (W. D. Clinger, "How to read floating point numbers accurately",
 * PLDI 1990, section 3).  Anything else is left to strtod.  test_robust.c
 * checks the two agree bit for bit on a million random decimals.
 *
 * The library is embedded in programs that may have set a locale with a
 * decimal comma (setlocale(LC_NUMERIC, "de_DE.UTF-8")) or another rounding
 * mode (fesetround).  strtod and snprintf follow both; a file must read, and
 * a number print, the same in any of them.  So every call of theirs here runs
 * in the C locale (uselocale, which is per thread, never setlocale, which is
 * per process) and rounding to nearest (saved and restored around the call).
 * Clinger's one operation rounds in the current mode, so the fast reader
 * answers only when that mode is to nearest; the fast printer's rounding
 * decision does not depend on the mode (see scaled_round).
 */
#include "number.h"

#include <errno.h>
#include <fenv.h>
#include <locale.h>
#include <math.h>
#include <pthread.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* ---- the C library's paths, in the C locale and rounding to nearest ---- */

static locale_t c_locale; /* (locale_t)0 when newlocale failed */
static pthread_once_t c_locale_once = PTHREAD_ONCE_INIT;

static void make_c_locale(void)
{
    c_locale = newlocale(LC_ALL_MASK, "C", (locale_t)0);
}

void arrank_numbers_c_enter(arrank_numbers_env *saved)
{
    pthread_once(&c_locale_once, make_c_locale);
    saved->locale = c_locale ? uselocale(c_locale) : (locale_t)0;
    saved->rounding = fegetround();
    if (saved->rounding != FE_TONEAREST)
        fesetround(FE_TONEAREST);
}

void arrank_numbers_c_leave(const arrank_numbers_env *saved)
{
    if (saved->rounding != FE_TONEAREST)
        fesetround(saved->rounding);
    if (saved->locale)
        uselocale(saved->locale);
}

/* The decimal point of the thread's locale when the switch to C failed
   (newlocale out of memory); NULL when it is "." already. */
static const char *foreign_point(void)
{
    if (c_locale)
        return NULL;
    const char *dp = localeconv()->decimal_point;
    return dp && strcmp(dp, ".") != 0 ? dp : NULL;
}

double arrank_decimal_prefix(const char *text, char **end)
{
    arrank_numbers_env saved;
    arrank_numbers_c_enter(&saved);
    const char *dp = foreign_point();
    double v;
    if (!dp) {
        v = strtod(text, end);
    } else { /* the same text with the locale's decimal point in place of '.' */
        size_t n = strlen(text), k = strlen(dp);
        const char *point = strchr(text, '.');
        char *alt = point ? malloc(n + k) : NULL;
        if (!alt) {
            v = strtod(text, end);
        } else {
            size_t at = (size_t)(point - text);
            memcpy(alt, text, at);
            memcpy(alt + at, dp, k);
            memcpy(alt + at + k, point + 1, n - at);
            char *alt_end;
            v = strtod(alt, &alt_end);
            size_t used = (size_t)(alt_end - alt);
            *end = (char *)text + (used > at ? used - (k - 1) : used);
            free(alt);
        }
    }
    int e = errno;
    arrank_numbers_c_leave(&saved);
    errno = e;
    return v;
}

/* snprintf "%.*f" (general 0) or "%.*g" (general 1) in the C locale, rounding to nearest. */
static int snprintf_c(char *buf, size_t n, int general, int prec, double v)
{
    arrank_numbers_env saved;
    arrank_numbers_c_enter(&saved);
    int r = general ? snprintf(buf, n, "%.*g", prec, v) : snprintf(buf, n, "%.*f", prec, v);
    const char *dp = foreign_point();
    char *at = dp && r >= 0 ? strstr(buf, dp) : NULL;
    if (at) { /* the locale's point back to '.' */
        size_t k = strlen(dp);
        *at = '.';
        memmove(at + 1, at + k, strlen(at + k) + 1);
        r -= (int)(k - 1);
    }
    arrank_numbers_c_leave(&saved);
    return r;
}

/* 10^0 .. 10^22: all exact in binary64 (5^22 < 2^53). */
static const double powers_of_ten[] = {
    1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,  1e8,  1e9,  1e10, 1e11,
    1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
};

#define MAX_EXACT_SIGNIFICAND (UINT64_C(1) << 53)

int arrank_decimal_fast(const char *text, double *value)
{
    if (fegetround() != FE_TONEAREST)
        return 0; /* the one operation below would round another way than strtod in C */
    const char *s = text;
    int negative = 0;
    if (*s == '+' || *s == '-')
        negative = *s++ == '-';
    uint64_t m = 0;
    int digits = 0;      /* significant digits taken into m */
    int any = 0;         /* any digit before the exponent */
    long exp10 = 0;
    for (; *s >= '0' && *s <= '9'; s++) {
        any = 1;
        if (m == 0 && *s == '0')
            continue;
        if (++digits > 19)
            return 0;
        m = m * 10 + (uint64_t)(*s - '0');
    }
    if (*s == '.') {
        for (s++; *s >= '0' && *s <= '9'; s++) {
            any = 1;
            exp10--;
            if (m == 0 && *s == '0')
                continue;
            if (++digits > 19)
                return 0;
            m = m * 10 + (uint64_t)(*s - '0');
        }
    }
    if (!any)
        return 0;
    if (*s == 'e' || *s == 'E') {
        s++;
        int eneg = 0;
        if (*s == '+' || *s == '-')
            eneg = *s++ == '-';
        if (!(*s >= '0' && *s <= '9'))
            return 0; /* strtod would stop before the 'e': not a whole number */
        long e = 0;
        for (; *s >= '0' && *s <= '9'; s++) {
            if (e > 9999)
                return 0;
            e = e * 10 + (*s - '0');
        }
        exp10 += eneg ? -e : e;
    }
    if (*s != '\0' || m > MAX_EXACT_SIGNIFICAND)
        return 0;
    double v = (double)m;
    if (m == 0)
        exp10 = 0;
    if (exp10 < -22 || exp10 > 22)
        return 0;
    v = exp10 < 0 ? v / powers_of_ten[-exp10] : v * powers_of_ten[exp10];
    *value = negative ? -v : v;
    return 1;
}

int arrank_decimal_read(const char *text, double *value)
{
    double v;
    if (arrank_decimal_fast(text, &v)) {
        *value = v;
        return 0;
    }
    for (const char *p = text; *p; p++)
        if (*p == 'x' || *p == 'X') /* strtod reads hexadecimal; a lab file does not */
            return 1;
    char *end;
    errno = 0;
    v = arrank_decimal_prefix(text, &end);
    if (end == text || *end != '\0')
        return 1;
    if (isnan(v) || (isinf(v) && errno != ERANGE))
        return 2;
    if (errno == ERANGE)
        return 3;
    *value = v;
    return 0;
}

static int is_cell_blank(char c)
{
    return c == ' ' || c == '\t' || c == '\r' || c == '\n';
}

int arrank_decimal_cell(char *text, char delim, double *value)
{
    char *s = text;
    while (is_cell_blank(*s))
        s++;
    size_t n = strlen(s);
    while (n > 0 && is_cell_blank(s[n - 1]))
        s[--n] = '\0';
    if (*s == '\0')
        return 1;
    if (delim != ',')
        for (char *p = s; *p; p++)
            if (*p == ',')
                *p = '.';
    return arrank_decimal_read(s, value);
}

/*
 * Writing numbers.  A table of 10,000 samples prints some 120,000 numbers
 * with %.1f, %.2f or %.3g, and glibc's printf spends about 1,500 instructions
 * on each, working out the digits of the exact binary value.  With at most 17
 * digits in all, the same digits come from one multiplication: for x = |v| *
 * 10^p (10^p exact for p <= 22), fma gives the exact error e = |v| * 10^p - x
 * of the rounded product (the error of a product is a double unless it
 * underflows: Ogita, Rump and Oishi, "Accurate sum and dot product", SIAM J.
 * Sci. Comput. 26, 2005, TwoProduct).  With x < 2^52, the fraction f = x -
 * floor(x) is exact and, like 0.5, a multiple of ulp(x), while |e| <=
 * ulp(x)/2; so the exact value rounds up when f > 0.5, down when f < 0.5, and
 * when f == 0.5 by the sign of e - a true tie (e == 0) going to the even
 * neighbour, as glibc does in the default rounding mode.  Division by 10^p
 * (for %g of large values) uses the exact remainder the same way.  Zero is
 * "0" or "-0" in %g at any precision.  Values out of that range, and
 * non-finite ones, go to snprintf.  test_robust.c compares
 * the two on millions of values, ties and near-ties among them.
 */
#define TWO_POW_52 4503599627370496.0 /* 2^52 */
#define TINY 1e-250                   /* far above the underflow of an fma error */

/* Round the exact |v| * 10^p (p >= 0) or |v| / 10^-p (p < 0) to an integer;
   0 when out of the exact range. */
static int scaled_round(double a, int p, uint64_t *out)
{
    if (p > 22 || p < -22 || a < TINY)
        return 0;
    double x;
    if (p >= 0)
        x = a * powers_of_ten[p];
    else
        x = a / powers_of_ten[-p];
    if (!(x < TWO_POW_52))
        return 0;
    /* 0 <= x < 2^52: the conversion truncates, which is floor, and x - n is exact */
    uint64_t n = (uint64_t)x;
    double f = x - (double)n;
    if (f == 0.5) {
        /* only here does the error of the rounded x decide (see above) */
        double e = p >= 0 ? fma(a, powers_of_ten[p], -x)      /* exact: a * 10^p - x */
                          : -fma(x, powers_of_ten[-p], -a);   /* exact a - x d: sign of a/d - x */
        if (e > 0.0 || (e == 0.0 && (n & 1)))
            n++;
    } else if (f > 0.5) {
        n++;
    }
    *out = n;
    return 1;
}

/* "00" "01" .. "99": two digits per division by 100 (common practice). */
static const char digit_pairs[] = "00010203040506070809101112131415161718192021222324252627282930"
                                  "31323334353637383940414243444546474849505152535455565758596061"
                                  "62636465666768697071727374757677787980818283848586878889909192"
                                  "93949596979899";

char *arrank_digits_before(char *end, uint64_t n, int width)
{
    char *p = end;
    while (n >= 100) {
        unsigned r = (unsigned)(n % 100);
        n /= 100;
        p -= 2;
        p[0] = digit_pairs[2 * r];
        p[1] = digit_pairs[2 * r + 1];
    }
    if (n >= 10) {
        p -= 2;
        p[0] = digit_pairs[2 * n];
        p[1] = digit_pairs[2 * n + 1];
    } else {
        *--p = (char)('0' + n);
    }
    while (end - p < width)
        *--p = '0';
    return p;
}

int arrank_format_fixed(char *buf, size_t n, int prec, double v)
{
    uint64_t m;
    if (n < 40 || prec < 0 || prec > 17 || !isfinite(v) ||
        !(v == 0.0 || scaled_round(fabs(v), prec, &m)))
        return snprintf_c(buf, n, 0, prec, v);
    if (v == 0.0)
        m = 0;
    /* the digits of m with at least one before the point; the last prec are the fraction */
    char tmp[40], *end = tmp + sizeof tmp;
    const char *d = arrank_digits_before(end, m, prec + 1);
    const char *point = end - prec;
    char *s = buf;
    if (signbit(v))
        *s++ = '-'; /* printf keeps the sign of a value that rounds to zero */
    while (d < point)
        *s++ = *d++;
    if (prec > 0) {
        *s++ = '.';
        while (d < end)
            *s++ = *d++;
    }
    *s = '\0';
    return (int)(s - buf);
}

/*
 * Decimal exponents of doubles without log10.  For a = f 2^b with 1 <= f < 2,
 * floor(log10 a) is floor(b log10 2) or one more; it is one more when a
 * reaches the next power of ten.  The comparison is made with the double
 * nearest 10^k and is strict, so it never says "one more" wrongly: above the
 * nearest double lies above 10^k itself.  Where 10^k is not a double it may
 * say "not yet" for the few values within half an ulp above 10^k, and the
 * caller's check of the digit count moves up by one then.
 */
static const double nearest_powers_of_ten[] = {
    1e-22, 1e-21, 1e-20, 1e-19, 1e-18, 1e-17, 1e-16, 1e-15, 1e-14, 1e-13, 1e-12, 1e-11,
    1e-10, 1e-9,  1e-8,  1e-7,  1e-6,  1e-5,  1e-4,  1e-3,  1e-2,  1e-1,  1e0,   1e1,
    1e2,   1e3,   1e4,   1e5,   1e6,   1e7,   1e8,   1e9,   1e10,  1e11,  1e12,  1e13,
    1e14,  1e15,  1e16,  1e17,  1e18,  1e19,  1e20,  1e21,  1e22,
};

/* floor(log10 a), or one less, for a normal positive double a. */
static int decimal_exponent(double a)
{
    uint64_t bits;
    memcpy(&bits, &a, sizeof bits);
    int b = (int)((bits >> 52) & 0x7FF) - 1023; /* floor(log2 a): IEEE 754 binary64 */
    /* floor(b log10 2) as floor(b 78913 / 2^18), 78913 / 2^18 = 0.301029968...: the
       two agree for |b| <= 1100, beyond the +-831 that reach here (the fast range
       1e-250 .. 1e250); test_robust checks 2^b for every b in it (common practice) */
    int k = b >= 0 ? (int)(((unsigned)b * 78913u) >> 18)
                   : -(int)((((unsigned)-b * 78913u) >> 18) + 1);
    if (k + 1 >= -22 && k + 1 <= 22 && a > nearest_powers_of_ten[k + 1 + 22])
        k++;
    return k;
}

int arrank_format_general(char *buf, size_t n, int prec, double v)
{
    if (prec == 0)
        prec = 1; /* C11 7.21.6.1: a precision of zero is taken as 1 */
    if (v == 0.0 && n >= 3) /* %g writes zero as 0, keeping the sign; no digits to find */
        return (int)(stpcpy(buf, signbit(v) ? "-0" : "0") - buf);
    double a = fabs(v);
    /* prec <= 15 keeps 10^(prec + 3), the unit of the smallest %f-style value, in 64 bits */
    if (n < 40 || prec < 1 || prec > 15 || !isfinite(v) || v == 0.0 || a < TINY || a > 1e250)
        return snprintf_c(buf, n, 1, prec, v);
    /* X: decimal exponent of v rounded to prec digits; m: those digits. */
    int x = decimal_exponent(a);
    uint64_t m = 0, lo = (uint64_t)powers_of_ten[prec - 1], hi = lo * 10;
    for (int tries = 0;; tries++) {
        if (tries == 3 || !scaled_round(a, prec - 1 - x, &m))
            return snprintf_c(buf, n, 1, prec, v);
        if (m < lo)
            x--; /* not reached with decimal_exponent, which is never above */
        else if (m > hi)
            x++; /* decimal_exponent was one below */
        else
            break;
    }
    if (m == hi) { /* rounded up to the next power of ten */
        m = lo;
        x++;
    }
    char *s = buf;
    if (v < 0.0)
        *s++ = '-';
    if (x < -4 || x >= prec) { /* %e style: d.ddd then e+XX */
        char digits[24], *dend = digits + sizeof digits;
        const char *d = arrank_digits_before(dend, m, prec), *last = dend;
        while (last > d + 1 && last[-1] == '0')
            last--; /* %g drops trailing zeros of the fraction, and a point left alone */
        *s++ = *d++;
        if (d < last) {
            *s++ = '.';
            while (d < last)
                *s++ = *d++;
        }
        *s++ = 'e';
        *s++ = x < 0 ? '-' : '+';
        char ex[8], *eend = ex + sizeof ex;
        const char *e = arrank_digits_before(eend, (uint64_t)(x < 0 ? -x : x), 2);
        while (e < eend)
            *s++ = *e++;
    } else { /* %f style with prec - 1 - x decimals */
        int decimals = prec - 1 - x;
        char digits[24], *dend = digits + sizeof digits;
        const char *d = arrank_digits_before(dend, m, decimals + 1);
        const char *point = dend - decimals;
        while (d < point)
            *s++ = *d++;
        if (decimals > 0) {
            /* the fraction without its trailing zeros; no point when none is left */
            const char *last = dend;
            while (last > point && last[-1] == '0')
                last--;
            if (last > point) {
                *s++ = '.';
                while (d < last)
                    *s++ = *d++;
            }
        }
    }
    *s = '\0';
    return (int)(s - buf);
}
