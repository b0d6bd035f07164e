/*
 * util.c - small helpers shared inside the library (internal.h).
 */
#include <gsl/gsl_cdf.h>
#include <stdlib.h>
#include <string.h>

#include "internal.h"

char *arrank_strdup(const char *s)
{
    if (!s)
        return NULL;
    size_t n = strlen(s) + 1;
    char *d = malloc(n);
    if (d)
        memcpy(d, s, n);
    return d;
}

double arrank_chi2_upper_p(double x, double k)
{
    return gsl_cdf_chisq_Q(x, k);
}
