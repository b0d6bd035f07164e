/*
 * test_coverage.c - are the intervals honest?  Over many seeded data sets
 * drawn from a known Arrhenius law with lognormal scatter, the 95 % intervals
 * of Ea, ln A and the rate at T must contain the truth about 95 % of the time.
 *
 * With N = 2000 sets the binomial standard error of a 95 % coverage is
 * sqrt(0.95 * 0.05 / 2000) = 0.0049; the tests accept 0.95 +- 0.015 (about
 * 3 standard errors).  This is the textbook property of t intervals for a
 * correctly specified linear model (any regression text, e.g. Draper & Smith,
 * Applied Regression Analysis, ch. 3 - from memory); the test checks that the
 * implementation has it, including the covariance term in the prediction.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>
#include <math.h>

#include "arrank/fit.h"

#define N_SETS 2000
#define TOLERANCE 0.015

typedef struct {
    const char *what;
    int n;
    double t_lo_K, t_hi_K, sigma, T_op_K;
    int weighted;
} coverage_case;

static void run_case(const coverage_case *c, unsigned long seed)
{
    const double ea = 83500.0, ln_A = 17.3; /* true values, arbitrary */
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, seed);
    int hit_ea = 0, hit_lnA = 0, hit_rate = 0;
    double T[32], r[32], sd[32];
    for (int k = 0; k < N_SETS; k++) {
        for (int i = 0; i < c->n; i++) {
            T[i] = c->t_lo_K + (c->t_hi_K - c->t_lo_K) * i / (c->n - 1);
            /* with weights, the scatter differs point to point and sd says by how much */
            double s = c->weighted ? c->sigma * (0.5 + 1.5 * i / (c->n - 1)) : c->sigma;
            r[i] = exp(ln_A - ea / (ARRANK_R_J_MOL_K * T[i]) + gsl_ran_gaussian(rng, s));
            sd[i] = r[i] * s;
        }
        arrank_arrhenius fit;
        arrank_error err;
        assert_int_equal(arrank_fit_arrhenius(T, r, c->weighted ? sd : NULL, (size_t)c->n, &fit,
                                              &err),
                         ARRANK_OK);
        double t = arrank_t_quantile(0.95, fit.dof);
        hit_ea += fabs(fit.ea_J_mol - ea) <= t * fit.ea_se_J_mol;
        hit_lnA += fabs(fit.ln_A - ln_A) <= t * fit.ln_A_se;
        arrank_prediction p;
        assert_int_equal(arrank_fit_predict(&fit, c->T_op_K, 0.95, &p, &err), ARRANK_OK);
        double truth = exp(ln_A - ea / (ARRANK_R_J_MOL_K * c->T_op_K));
        hit_rate += p.rate_lo <= truth && truth <= p.rate_hi;
    }
    gsl_rng_free(rng);
    double cov[3] = {(double)hit_ea / N_SETS, (double)hit_lnA / N_SETS,
                     (double)hit_rate / N_SETS};
    const char *names[3] = {"Ea", "ln A", "rate at T"};
    for (int i = 0; i < 3; i++) {
        if (fabs(cov[i] - 0.95) > TOLERANCE)
            fail_msg("%s: coverage of the 95%% interval of %s is %.4f", c->what, names[i], cov[i]);
    }
}

static void test_coverage_unweighted(void **state)
{
    (void)state;
    coverage_case c = {"8 points, 480-560 K, 5 % scatter, T_op inside", 8, 480, 560, 0.05, 530,
                       0};
    run_case(&c, 11);
}

static void test_coverage_few_points_extrapolated(void **state)
{
    (void)state;
    /* 4 points (2 dof, t = 4.30) and T_op 40 K beyond the range: the covariance
       term of the prediction matters most here */
    coverage_case c = {"4 points, 500-540 K, 8 % scatter, T_op 580 K", 4, 500, 540, 0.08, 580,
                       0};
    run_case(&c, 12);
}

static void test_coverage_weighted(void **state)
{
    (void)state;
    coverage_case c = {"10 points with rate_sd, scatter 2-8 %", 10, 450, 570, 0.04, 470, 1};
    run_case(&c, 13);
}

int main(void)
{
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_coverage_unweighted),
        cmocka_unit_test(test_coverage_few_points_extrapolated),
        cmocka_unit_test(test_coverage_weighted),
    };
    return cmocka_run_group_tests_name("coverage", tests, NULL, NULL);
}
