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
