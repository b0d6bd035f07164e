/*
 * pbestcheck.c - a small driver that exposes the planner's P(best)
 * (arrank_plan_p_best, arrank/plan.h) to outside checks.
 *
 * Each line of stdin is one case: "best mean se dof mean se dof ..." (best
 * counts from 0; a dof of "inf" is the normal).  It prints P(best) of that
 * sample with %.17g, one line a case, so that tests/check_scipy_plan.py can
 * compare it with SciPy's adaptive quadrature.  Not installed; a test helper
 * only.
 *
 * Exit status: 0 ok, 1 a bad line, 2 usage.
 */
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include <gsl/gsl_errno.h>

#include "arrank/plan.h"

#define MAX_KEYS 64

int main(int argc, char **argv)
{
    (void)argv;
    gsl_set_error_handler_off();
    if (argc != 1) {
        fprintf(stderr, "usage: pbestcheck < cases\n");
        return 2;
    }
    char line[8192];
    long lineno = 0;
    while (fgets(line, sizeof line, stdin)) {
        lineno++;
        double mean[MAX_KEYS], se[MAX_KEYS], dof[MAX_KEYS];
        char *p = line, *end;
        errno = 0;
        long best = strtol(p, &end, 10);
        size_t n = 0;
        int bad = end == p || errno || best < 0;
        for (p = end; !bad;) {
            double v[3];
            int k = 0;
            for (; k < 3; k++, p = end) {
                v[k] = strtod(p, &end);
                if (end == p)
                    break;
            }
            if (k == 0)
                break;
            if (k < 3 || n == MAX_KEYS) {
                bad = 1;
                break;
            }
            mean[n] = v[0];
            se[n] = v[1];
            dof[n++] = v[2];
        }
        if (bad || (size_t)best >= n) {
            fprintf(stderr, "pbestcheck: line %ld: expected 'best mean se dof ...'\n", lineno);
            return 1;
        }
        printf("%.17g\n", arrank_plan_p_best(mean, se, dof, n, (size_t)best));
    }
    return 0;
}
