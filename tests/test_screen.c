/*
 * test_screen.c - which points can enter a fit of ln r on 1/T (screen.c):
 * a temperature above absolute zero and a positive rate, both finite, so
 * that 1/T and ln r exist and are finite (arithmetic, no external source).
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <string.h>

#include <cmocka.h>

#include "arrank/screen.h"

static arrank_point point(double temp_K, double rate)
{
    arrank_point p;
    memset(&p, 0, sizeof p);
    p.temp_K = temp_K;
    p.rate = rate;
    p.rate_sd = p.conversion = p.time_on_stream_s = NAN;
    p.run = -1;
    return p;
}

static void test_usable(void **state)
{
    (void)state;
    const struct {
        double temp_K, rate;
        int usable;
    } cases[] = {
        {523.15, 2.5e-3, 1},   {1e-3, 1e-300, 1},       {523.15, 4.9e-324, 1},
        {0.0, 1.0, 0},         {-10.0, 1.0, 0},          {NAN, 1.0, 0},
        {INFINITY, 1.0, 0},    {523.15, 0.0, 0},         {523.15, -1e-6, 0},
        {523.15, NAN, 0},      {523.15, INFINITY, 0},    {-INFINITY, -INFINITY, 0},
    };
    for (size_t k = 0; k < sizeof cases / sizeof *cases; k++) {
        arrank_point p = point(cases[k].temp_K, cases[k].rate);
        if (arrank_screen_usable(&p) != cases[k].usable)
            fail_msg("T = %g K, rate %g: usable %d, expected %d", cases[k].temp_K,
                     cases[k].rate, arrank_screen_usable(&p), cases[k].usable);
    }
}

static void test_mark(void **state)
{
    (void)state;
    arrank_point pts[5] = {point(500.0, 1.0), point(510.0, 0.0), point(520.0, 2.0),
                           point(NAN, 3.0), point(540.0, 4.0)};
    arrank_sample s;
    memset(&s, 0, sizeof s);
    s.points = pts;
    s.n_points = 5;
    unsigned char used[5];
    memset(used, 7, sizeof used);
    assert_int_equal(arrank_screen_mark(&s, used), 3);
    const unsigned char want[5] = {1, 0, 1, 0, 1};
    assert_memory_equal(used, want, 5);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_usable),
        cmocka_unit_test(test_mark),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
