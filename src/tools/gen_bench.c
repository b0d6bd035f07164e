/*
 * gen_bench.c - writes a large invented campaign for `make bench` and the
 * scale checks: N samples (default 10,000), each with T_POINTS temperatures
 * (default 12), rate and rate_sd, from a seeded GSL generator.
 *
 * Each sample gets an apparent activation energy drawn uniformly from
 * 50-150 kJ/mol and a rate at 250 degC drawn lognormally around
 * 1 umol/(g*s); points are spread over 200-300 degC with 4 % lognormal
 * scatter and rate_sd = 4 % of the rate.  Invented numbers, for timing only.
 * Half the files write temperatures in degC and rates in umol/(g*s), the
 * other half K and mol/(kg*h), so unit conversion is part of the work.
 *
 *   gen_bench DIR [N [T_POINTS]]
 */
#include <errno.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "arrank/fit.h"

#define SEED 7177UL
#define T_REF_K 523.15 /* rates are drawn at 250 degC */

static long parse_count(const char *text, long max)
{
    char *end;
    errno = 0;
    long v = strtol(text, &end, 10);
    if (errno || end == text || *end || v < 1 || v > max)
        return -1;
    return v;
}

int main(int argc, char **argv)
{
    gsl_set_error_handler_off();
    if (argc < 2 || argc > 4) {
        fprintf(stderr, "usage: gen_bench DIR [N [T_POINTS]]\n");
        return 2;
    }
    const char *dir = argv[1];
    long n = argc > 2 ? parse_count(argv[2], 10000000L) : 10000;
    long m = argc > 3 ? parse_count(argv[3], 1000L) : 12;
    if (n < 0 || m < 3) {
        fprintf(stderr, "gen_bench: N must be 1..10000000 and T_POINTS 3..1000\n");
        return 2;
    }
    if (mkdir(dir, 0777) != 0 && errno != EEXIST) {
        perror(dir);
        return 3;
    }
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    if (!rng) {
        fprintf(stderr, "gen_bench: out of memory\n");
        return 3;
    }
    gsl_rng_set(rng, SEED);
    char path[4096];
    snprintf(path, sizeof path, "%s/campaign.ini", dir);
    FILE *f = fopen(path, "w");
    if (!f) {
        perror(path);
        gsl_rng_free(rng);
        return 3;
    }
    fprintf(f, "; Invented benchmark campaign written by gen_bench (%ld samples x %ld points).\n"
               "[campaign]\ntitle = benchmark\noperating_temperature = 250 degC\n"
               "rate_unit = umol/(g*s)\n",
            n, m);
    if (fclose(f) != 0) {
        perror(path);
        gsl_rng_free(rng);
        return 3;
    }
    int width = n > 99999 ? 7 : 5;
    for (long i = 0; i < n; i++) {
        double ea_J_mol = 50e3 + 100e3 * gsl_rng_uniform(rng);
        double ln_r_ref = gsl_ran_gaussian(rng, 1.0);
        int kelvin = (int)(i % 2);
        snprintf(path, sizeof path, "%s/B%0*ld.csv", dir, width, i + 1);
        f = fopen(path, "w");
        if (!f) {
            perror(path);
            gsl_rng_free(rng);
            return 3;
        }
        fprintf(f, "# sample = B%0*ld\n# basis = mass\n", width, i + 1);
        fprintf(f, kelvin ? "T [K],rate [mol/(kg*h)],rate_sd [mol/(kg*h)]\n"
                          : "T [degC],rate [umol/(g*s)],rate_sd [umol/(g*s)]\n");
        for (long k = 0; k < m; k++) {
            double T_C = 200.0 + 100.0 * (double)k / (double)(m - 1);
            double T_K = T_C + 273.15;
            /* Arrhenius law around the reference temperature (fit.h formulas) */
            double ln_r = ln_r_ref - ea_J_mol / ARRANK_R_J_MOL_K * (1.0 / T_K - 1.0 / T_REF_K) +
                          gsl_ran_gaussian(rng, 0.04);
            double r = exp(ln_r); /* umol/(g*s) */
            double scale = kelvin ? 3.6 : 1.0; /* 1 umol/(g*s) = 3.6 mol/(kg*h) */
            fprintf(f, "%.2f,%.6g,%.3g\n", kelvin ? T_K : T_C, r * scale, 0.04 * r * scale);
        }
        if (fclose(f) != 0) {
            perror(path);
            gsl_rng_free(rng);
            return 3;
        }
    }
    gsl_rng_free(rng);
    return 0;
}
