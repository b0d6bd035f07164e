/*
 * fitcheck.c - a small driver that exposes the Arrhenius fit to outside checks.
 *
 * It reads "T_K rate [rate_sd]" lines from stdin ('#' lines and blank lines
 * are skipped), fits them with arrank_fit_arrhenius, predicts the rate at the
 * temperature given on the command line, and prints every result as
 * "key value" with %.17g, so that tests/check_scipy_fit.py can compare it with
 * an independent SciPy computation.  Not installed; a test helper only.
 *
 * Usage: fitcheck TEMP_K [CONFIDENCE]   (CONFIDENCE defaults to 0.95)
 * Exit status: 0 ok, 1 fit or data problem, 2 usage.
 */
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>

#include "arrank/fit.h"

#define MAX_POINTS 100000

/* strtod with the end pointer, errno and isfinite checked; 0 on success. */
static int parse_double(const char *s, double *out, char **end)
{
    errno = 0;
    const double v = strtod(s, end);
    if (*end == s || errno || !isfinite(v))
        return -1;
    *out = v;
    return 0;
}

static int parse_arg(const char *s, double *out)
{
    char *end;
    if (parse_double(s, out, &end))
        return -1;
    while (*end == ' ')
        end++;
    return *end ? -1 : 0;
}

int main(int argc, char **argv)
{
    gsl_set_error_handler_off();
    double temp_K, confidence = 0.95;
    if (argc < 2 || argc > 3 || parse_arg(argv[1], &temp_K) ||
        (argc == 3 && parse_arg(argv[2], &confidence))) {
        fprintf(stderr, "usage: fitcheck TEMP_K [CONFIDENCE] < points\n");
        return 2;
    }

    static double T[MAX_POINTS], r[MAX_POINTS], sd[MAX_POINTS];
    size_t n = 0, n_sd = 0;
    long lineno = 0;
    char line[1024];
    while (fgets(line, sizeof line, stdin)) {
        lineno++;
        char *s = line;
        while (*s == ' ' || *s == '\t')
            s++;
        if (*s == '#' || *s == '\n' || *s == '\r' || *s == '\0')
            continue;
        if (n == MAX_POINTS) {
            fprintf(stderr, "fitcheck: <stdin>:%ld: more than %d points\n", lineno, MAX_POINTS);
            return 1;
        }
        double v[3];
        int k = 0;
        char *end;
        while (k < 3) {
            while (*s == ' ' || *s == '\t')
                s++;
            if (*s == '\n' || *s == '\r' || *s == '\0')
                break;
            if (parse_double(s, &v[k], &end)) {
                fprintf(stderr, "fitcheck: <stdin>:%ld:%d: '%.*s' is not a number\n", lineno,
                        k + 1, (int)strcspn(s, " \t\r\n"), s);
                return 1;
            }
            s = end;
            k++;
        }
        while (*s == ' ' || *s == '\t' || *s == '\r' || *s == '\n')
            s++;
        if (k < 2 || *s) {
            fprintf(stderr, "fitcheck: <stdin>:%ld: want 'T_K rate [rate_sd]'\n", lineno);
            return 1;
        }
        T[n] = v[0];
        r[n] = v[1];
        sd[n] = k == 3 ? v[2] : NAN;
        n_sd += k == 3;
        n++;
    }

    arrank_error err;
    arrank_error_clear(&err);
    arrank_arrhenius fit;
    if (arrank_fit_arrhenius(T, r, n_sd ? sd : NULL, n, &fit, &err) != ARRANK_OK) {
        fprintf(stderr, "fitcheck: %s\n", err.message);
        return 1;
    }
    arrank_prediction pred;
    if (arrank_fit_predict(&fit, temp_K, confidence, &pred, &err) != ARRANK_OK) {
        fprintf(stderr, "fitcheck: %s\n", err.message);
        return 1;
    }
    printf("n %zu\n", fit.n);
    printf("weighted %d\n", fit.weighted);
    printf("dof %.17g\n", fit.dof);
    printf("T_ref_K %.17g\n", fit.T_ref_K);
    printf("ea_J_mol %.17g\n", fit.ea_J_mol);
    printf("ea_se_J_mol %.17g\n", fit.ea_se_J_mol);
    printf("ln_A %.17g\n", fit.ln_A);
    printf("ln_A_se %.17g\n", fit.ln_A_se);
    printf("cov_ea_lnA_J_mol %.17g\n", fit.cov_ea_lnA_J_mol);
    printf("corr_ea_lnA %.17g\n", fit.corr_ea_lnA);
    printf("resid_sd %.17g\n", fit.resid_sd);
    printf("r2 %.17g\n", fit.r2);
    printf("chi2_dof %.17g\n", fit.chi2_dof);
    printf("pred_temp_K %.17g\n", pred.temp_K);
    printf("pred_ln_rate %.17g\n", pred.ln_rate);
    printf("pred_ln_rate_se %.17g\n", pred.ln_rate_se);
    printf("pred_rate %.17g\n", pred.rate);
    printf("pred_rate_lo %.17g\n", pred.rate_lo);
    printf("pred_rate_hi %.17g\n", pred.rate_hi);
    printf("pred_extrapolated %d\n", pred.extrapolated);
    if (fflush(stdout) != 0 || ferror(stdout)) {
        fprintf(stderr, "fitcheck: cannot write the results: %s\n", strerror(errno));
        return 1;
    }
    return 0;
}
