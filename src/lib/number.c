/*
 * number.c - reading plain decimal numbers without strtod's general machinery.
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
 */
#include "number.h"

#include <stdint.h>

/* 10^0 .. 10^22: all exact in binary64 (5^22 < 2^53). */
static const double powers_of_ten[] = {
    1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,  1e8,  1e9,  1e10, 1e11,
    1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
};

#define MAX_EXACT_SIGNIFICAND (UINT64_C(1) << 53)

int arrank_decimal_fast(const char *text, double *value)
{
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
 * (for %g of large values) uses the exact remainder the same way.  Values out
 * of that range, and non-finite ones, go to snprintf.  test_robust.c compares
 * the two on millions of values, ties and near-ties among them.
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#define TWO_POW_52 4503599627370496.0 /* 2^52 */
#define TINY 1e-250                   /* far above the underflow of an fma error */

/* Round the exact |v| * 10^p (p >= 0) or |v| / 10^-p (p < 0) to an integer;
   0 when out of the exact range. */
static int scaled_round(double a, int p, uint64_t *out)
{
    if (p > 22 || p < -22 || a < TINY)
        return 0;
    double x, e;
    if (p >= 0) {
        x = a * powers_of_ten[p];
        if (!(x < TWO_POW_52))
            return 0;
        e = fma(a, powers_of_ten[p], -x); /* exact: a * 10^p - x */
    } else {
        double d = powers_of_ten[-p];
        x = a / d;
        if (!(x < TWO_POW_52))
            return 0;
        e = -fma(x, d, -a); /* exact remainder a - x d: its sign is that of a/d - x */
    }
    double r = floor(x), f = x - r;
    uint64_t n = (uint64_t)r;
    if (f > 0.5 || (f == 0.5 && (e > 0.0 || (e == 0.0 && (n & 1)))))
        n++;
    *out = n;
    return 1;
}

/* Decimal digits of n, at least width of them (leading zeros); returns the count. */
static int put_digits(char *buf, uint64_t n, int width)
{
    char tmp[24];
    int k = 0;
    do {
        tmp[k++] = (char)('0' + n % 10);
        n /= 10;
    } while (n);
    while (k < width)
        tmp[k++] = '0';
    for (int i = 0; i < k; i++)
        buf[i] = tmp[k - 1 - i];
    return k;
}

int arrank_format_fixed(char *buf, size_t n, int prec, double v)
{
    uint64_t m;
    if (n < 40 || prec < 0 || prec > 17 || !isfinite(v) ||
        !(v == 0.0 || scaled_round(fabs(v), prec, &m)))
        return snprintf(buf, n, "%.*f", prec, v);
    if (v == 0.0)
        m = 0;
    char *s = buf;
    if (signbit(v))
        *s++ = '-'; /* printf keeps the sign of a value that rounds to zero */
    uint64_t unit = (uint64_t)powers_of_ten[prec];
    s += put_digits(s, m / unit, 1);
    if (prec > 0) {
        *s++ = '.';
        s += put_digits(s, m % unit, prec);
    }
    *s = '\0';
    return (int)(s - buf);
}

/* Drop trailing zeros of a fraction, and the point when nothing is left (%g). */
static char *strip_zeros(char *start, char *end)
{
    char *dot = memchr(start, '.', (size_t)(end - start));
    if (!dot)
        return end;
    while (end > dot + 1 && end[-1] == '0')
        end--;
    if (end == dot + 1)
        end--;
    return end;
}

int arrank_format_general(char *buf, size_t n, int prec, double v)
{
    if (prec == 0)
        prec = 1; /* C11 7.21.6.1: a precision of zero is taken as 1 */
    double a = fabs(v);
    /* prec <= 15 keeps 10^(prec + 3), the unit of the smallest %f-style value, in 64 bits */
    if (n < 40 || prec < 1 || prec > 15 || !isfinite(v) || v == 0.0 || a < TINY || a > 1e250)
        return snprintf(buf, n, "%.*g", prec, v);
    /* X: decimal exponent of v rounded to prec digits; m: those digits. */
    int x = (int)floor(log10(a));
    uint64_t m = 0, lo = (uint64_t)powers_of_ten[prec - 1], hi = lo * 10;
    for (int tries = 0;; tries++) {
        if (tries == 3 || !scaled_round(a, prec - 1 - x, &m))
            return snprintf(buf, n, "%.*g", prec, v);
        if (m < lo)
            x--; /* log10 rounded up past a power of ten */
        else if (m > hi)
            x++;
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
    char *start = s;
    if (x < -4 || x >= prec) { /* %e style: d.ddd then e+XX */
        char digits[24];
        int k = put_digits(digits, m, prec);
        *s++ = digits[0];
        if (k > 1) {
            *s++ = '.';
            memcpy(s, digits + 1, (size_t)(k - 1));
            s += k - 1;
        }
        s = strip_zeros(start, s);
        *s++ = 'e';
        *s++ = x < 0 ? '-' : '+';
        s += put_digits(s, (uint64_t)(x < 0 ? -x : x), 2);
    } else { /* %f style with prec - 1 - x decimals */
        int decimals = prec - 1 - x;
        uint64_t unit = (uint64_t)powers_of_ten[decimals];
        s += put_digits(s, m / unit, 1);
        if (decimals > 0) {
            *s++ = '.';
            s += put_digits(s, m % unit, decimals);
        }
        s = strip_zeros(start, s);
    }
    *s = '\0';
    return (int)(s - buf);
}
