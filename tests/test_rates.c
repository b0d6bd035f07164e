/*
 * test_rates.c - rates from conversion (rates.c) against hand values from
 * r = F y X / W and k_w = (Q/W) ln(1/(1 - X)) (plug-flow design equation;
 * e.g. Fogler, Elements of Chemical Reaction Engineering).
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <string.h>

#include <cmocka.h>

#include "arrank/rates.h"

/*
 * Hand values: F = 2.5e-5 mol/s total feed, y = 0.04, W = 0.2 g = 2e-4 kg.
 * X = 0.05: differential r = 2.5e-5*0.04*0.05/2e-4 = 2.5e-4 mol/(kg s);
 *           integral r = 2.5e-5*0.04*ln(1/0.95)/2e-4 = 5e-3*0.0512932944 =
 *           2.56466472e-4; their ratio X/(-ln(1 - X)) = 0.9748, the 0.975 of
 *           the domain notes (computed).
 * X = 0.20: differential 1.0e-3; integral 5e-3*0.223143551 = 1.115717757e-3.
 */
static void test_derived_rate(void **state)
{
    (void)state;
    const double X[2] = {0.05, 0.20}, F[2] = {2.5e-5, 2.5e-5}, y[2] = {0.04, 0.04},
                 W[2] = {2e-4, 2e-4};
    double r[2];
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_rates_derive(X, F, y, W, 2, 0, r, &err), ARRANK_OK);
    assert_true(fabs(r[0] / 2.5e-4 - 1) < 1e-12);
    assert_true(fabs(r[1] / 1.0e-3 - 1) < 1e-12);
    assert_int_equal(arrank_rates_derive(X, F, y, W, 2, 1, r, &err), ARRANK_OK);
    assert_true(fabs(r[0] / 2.56466472e-4 - 1) < 1e-8);
    assert_true(fabs(r[1] / 1.115717757e-3 - 1) < 1e-9);
    assert_true(fabs(2.5e-4 / r[0] - 0.9748) < 1e-4);

    const double bad[2] = {0.05, 1.0};
    assert_int_equal(arrank_rates_derive(bad, F, y, W, 2, 0, r, &err), ARRANK_EINVAL);
    assert_non_null(strstr(err.message, "point 2"));
    const double badw[2] = {2e-4, 0.0};
    assert_int_equal(arrank_rates_derive(X, F, y, badw, 2, 0, r, &err), ARRANK_EINVAL);
    assert_non_null(strstr(err.message, "catalyst mass"));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_derived_rate),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
