/*
 * test_stats_sim.c - the level and power of the ranking statistics and of
 * the deactivation test, by seeded simulation (issue 14): the compensation
 * verdict under staggered windows (compensation.h), the studentized
 * bootstrap's coverage (bootstrap.h), and the false-alarm rate of the
 * deactivation flag (runs, repeats and drift, through the pipeline).
 *
 * Every simulation has fixed seeds (splitmix64, helpers.h), so it is
 * deterministic; each states its replicates and its Monte Carlo standard
 * error sqrt(p (1 - p) / N) of a binomial proportion, and its bound is the
 * requirement of the issue, which the figures printed here clear by several
 * standard errors.  The data are simulated from the Arrhenius law with
 * normal errors in ln r (the error model of fit.h); the references are the
 * nominal levels of the tests (5 %, 95 %), i.e. their definitions.
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>

#include "arrank/analysis.h"
#include "arrank/bootstrap.h"
#include "arrank/compensation.h"
#include "arrank/fit.h"
#include "helpers.h"

#define R_GAS ARRANK_R_J_MOL_K

/* Monte Carlo standard error of a proportion p over n replicates. */
static double mc_se(double p, size_t n)
{
    return sqrt(p * (1.0 - p) / (double)n);
}

static size_t uniform_int(uint64_t *s, size_t lo, size_t hi)
{
    return lo + (size_t)(uniform01(s) * (double)(hi - lo + 1));
}

/* ---- compensation under staggered windows --------------------------------- */

/* Campaign shapes of the issue: 8-14 samples, 5-8 points each evenly over a
   window 40-70 K wide whose cold end is 480 K plus a stagger drawn from
   [0, S], S 60-100 K per campaign (S = 0 and one 480-550 K grid of 6 points
   when shared); scatter sd(ln r) 3-8 % per sample. */
enum { COMP_IDENTICAL, COMP_LINE, COMP_ACTIVITY };

typedef struct {
    size_t real_new, real_old, none, n;
} comp_counts;

static void comp_campaign(uint64_t *seed, int kind, int staggered, double T_iso_K,
                          double ea_lo, double ea_hi, comp_counts *cc)
{
    arrank_arrhenius fit[14];
    const arrank_arrhenius *fits[14];
    double T[8], r[8];
    const size_t m = uniform_int(seed, 8, 14);
    const double S = staggered ? 60.0 + 40.0 * uniform01(seed) : 0.0;
    double inv_sum = 0;
    size_t n_T = 0;
    for (size_t s = 0; s < m; s++) {
        size_t n = staggered ? uniform_int(seed, 5, 8) : 6;
        double lo = 480.0 + S * uniform01(seed);
        double W = staggered ? 40.0 + 30.0 * uniform01(seed) : 70.0;
        double sd = 0.03 + 0.05 * uniform01(seed);
        double ea = kind == COMP_IDENTICAL ? 100e3 : ea_lo + (ea_hi - ea_lo) * uniform01(seed);
        double lnA = 5.0 + ea / (R_GAS * T_iso_K);
        if (kind == COMP_ACTIVITY) /* one Ea, activities differing by 30 % (sd of ln A) */
            lnA += 0.3 * gauss(seed);
        for (size_t i = 0; i < n; i++) {
            T[i] = lo + W * (double)i / (double)(n - 1);
            r[i] = exp(lnA - ea / (R_GAS * T[i]) + sd * gauss(seed));
            inv_sum += 1.0 / T[i];
            n_T++;
        }
        assert_int_equal(arrank_fit_arrhenius(T, r, NULL, n, &fit[s], NULL), ARRANK_OK);
        fits[s] = &fit[s];
    }
    arrank_compensation c;
    assert_int_equal(arrank_compensation_run(fits, m, (double)n_T / inv_sum, 0.95, &c, NULL),
                     ARRANK_OK);
    cc->n++;
    cc->real_new += c.verdict == ARRANK_COMP_REAL;
    cc->none += c.verdict == ARRANK_COMP_NONE;
    /* the rule before issue 14: Krug's ln r(T_hm) on Ea at the same gates */
    cc->real_old += c.verdict != ARRANK_COMP_NONE && !c.T_hm_inside && c.hm_p < 0.05;
}

static void comp_report(const char *what, const comp_counts *cc)
{
    double pn = (double)cc->real_new / (double)cc->n, po = (double)cc->real_old / (double)cc->n;
    printf("# %s: %zu campaigns; verdict 'not explained by error correlation' %.2f %% "
           "(MC se %.2f %%), before issue 14 %.2f %% (MC se %.2f %%); no line %.1f %%\n",
           what, cc->n, 100 * pn, 100 * mc_se(pn, cc->n), 100 * po, 100 * mc_se(po, cc->n),
           100.0 * (double)cc->none / (double)cc->n);
}

/* Suite size; the README's figures are from the same seeds at this size. */
#define COMP_CAMPAIGNS 4000

static void test_compensation_staggered_level(void **state)
{
    (void)state;
    /* Identical catalysts (Ea 100 kJ/mol, one ln A): any ln A-Ea line is the
       error correlation's (Krug, Hunter & Grieger 1976).  Nominal level 5 %;
       the issue asks for at most 6 %. */
    comp_counts st = {0}, sh = {0};
    uint64_t seed = 0x5EED0001;
    for (size_t k = 0; k < COMP_CAMPAIGNS; k++)
        comp_campaign(&seed, COMP_IDENTICAL, 1, 750.0, 0, 0, &st);
    seed = 0x5EED0002;
    for (size_t k = 0; k < COMP_CAMPAIGNS; k++)
        comp_campaign(&seed, COMP_IDENTICAL, 0, 750.0, 0, 0, &sh);
    /* one Ea, but the catalysts' activities differ (ln A sd 0.3): still no
       compensation, and the differences stay in the residuals (HC3) */
    comp_counts ac = {0};
    seed = 0x5EED0005;
    for (size_t k = 0; k < COMP_CAMPAIGNS; k++)
        comp_campaign(&seed, COMP_ACTIVITY, 1, 750.0, 0, 0, &ac);
    comp_report("identical catalysts, windows staggered 60-100 K", &st);
    comp_report("identical catalysts, one shared window", &sh);
    comp_report("one Ea, activities differing (sd ln A 0.3), staggered", &ac);
    const double lim = 0.06 * COMP_CAMPAIGNS;
    assert_true((double)st.real_new <= lim);
    assert_true((double)sh.real_new <= lim);
    assert_true((double)ac.real_new <= lim);
    /* the simulation re-creates the defect: the old rule is above 7 % when
       staggered (issue 14 measured 8.5-12.8 %) */
    assert_true((double)st.real_old > 0.07 * COMP_CAMPAIGNS);
}

static void test_compensation_power(void **state)
{
    (void)state;
    /* A real line ln A = 5 + Ea/(R T_iso), T_iso = 750 K, 100-200 K above
       the data; Ea 70-130 kJ/mol, and a narrower 85-115 kJ/mol.  The issue
       asks for power of at least 95 %. */
    comp_counts wide = {0}, narrow = {0};
    uint64_t seed = 0x5EED0003;
    for (size_t k = 0; k < COMP_CAMPAIGNS; k++)
        comp_campaign(&seed, COMP_LINE, 1, 750.0, 70e3, 130e3, &wide);
    seed = 0x5EED0004;
    for (size_t k = 0; k < COMP_CAMPAIGNS; k++)
        comp_campaign(&seed, COMP_LINE, 1, 750.0, 85e3, 115e3, &narrow);
    comp_report("real line, T_iso 750 K, Ea 70-130 kJ/mol, staggered", &wide);
    comp_report("real line, T_iso 750 K, Ea 85-115 kJ/mol, staggered", &narrow);
    assert_true((double)wide.real_new >= 0.95 * COMP_CAMPAIGNS);
    assert_true((double)narrow.real_new >= 0.90 * COMP_CAMPAIGNS); /* reported, not asked */
}

/* ---- bootstrap coverage ------------------------------------------------------ */

/* Coverage of the rate at T_op by the bootstrap interval and by the delta
   method (fit.h), over `reps` simulated samples of n points evenly over
   480-560 K, sd(ln r) 5 %, true Ea 90 kJ/mol; the interval's resamples 999
   (so that the 2.5 % and 97.5 % order statistics exist exactly). */
static void boot_coverage(size_t n, double T_op, size_t reps, uint64_t seed, double *cov_boot,
                          double *cov_delta)
{
    double T[12], r[12];
    const double ea = 90e3, lnA = 22.0;
    const double truth = lnA - ea / (R_GAS * T_op);
    size_t in_b = 0, in_d = 0;
    for (size_t k = 0; k < reps; k++) {
        for (size_t i = 0; i < n; i++) {
            T[i] = 480.0 + 80.0 * (double)i / (double)(n - 1);
            r[i] = exp(lnA - ea / (R_GAS * T[i]) + 0.05 * gauss(&seed));
        }
        arrank_arrhenius fit;
        assert_int_equal(arrank_fit_arrhenius(T, r, NULL, n, &fit, NULL), ARRANK_OK);
        double lo, hi;
        size_t ok;
        assert_int_equal(arrank_bootstrap_rate(T, r, NULL, n, &fit, T_op, 0.95, 999,
                                               (unsigned long)(k + 1), &lo, &hi, &ok, NULL),
                         ARRANK_OK);
        in_b += log(lo) <= truth && truth <= log(hi);
        arrank_prediction p;
        assert_int_equal(arrank_fit_predict(&fit, T_op, 0.95, &p, NULL), ARRANK_OK);
        in_d += log(p.rate_lo) <= truth && truth <= log(p.rate_hi);
    }
    *cov_boot = (double)in_b / (double)reps;
    *cov_delta = (double)in_d / (double)reps;
}

/* Samples per size in the suite; the README gives the same seeds' figures. */
#define BOOT_REPS 2000

static void test_bootstrap_coverage(void **state)
{
    (void)state;
    const size_t sizes[] = {5, 8, 12};
    const double temps[] = {520.0, 600.0}; /* inside the window, and 40 K above it */
    for (size_t a = 0; a < 3; a++)
        for (size_t b = 0; b < 2; b++) {
            double cb, cd;
            boot_coverage(sizes[a], temps[b], BOOT_REPS, 0xB0075EEDull + 31 * a + b, &cb, &cd);
            printf("# bootstrap coverage n = %zu, T = %.0f K: %.2f %% (MC se %.2f %%), delta "
                   "method %.2f %% (MC se %.2f %%), %d samples of 999 resamples\n",
                   sizes[a], temps[b], 100 * cb, 100 * mc_se(cb, BOOT_REPS), 100 * cd,
                   100 * mc_se(cd, BOOT_REPS), BOOT_REPS);
            /* nominal 95 %: within 2.5 points, about 5 Monte Carlo standard errors */
            assert_true(fabs(cb - 0.95) <= 0.025);
        }
}

/* ---- the deactivation flag's false-alarm rate ---------------------------------- */

/* A stable catalyst measured on a heating ramp (run "up", 8 set points
   480-550 K) and back down (run "down"), 0.5 h per point on stream, sd(ln r)
   5 %: both the run comparison and the drift test apply.  Batches of 40
   samples through the pipeline (diagnosis on, no operating temperature). */
#define DEACT_BATCH 40
#define DEACT_POINTS 16

typedef struct {
    arrank_campaign c;
    arrank_sample s[DEACT_BATCH];
    arrank_point p[DEACT_BATCH][DEACT_POINTS];
    char id[DEACT_BATCH][24];
} deact_campaign;

static char *deact_runs[2] = {"up", "down"};

static void deact_batch(deact_campaign *t, uint64_t *seed, double loss_per_h, int design)
{
    memset(t, 0, sizeof *t);
    t->c.path = t->c.name = t->c.title = "stable";
    t->c.rate_unit = "umol/(g*s)";
    t->c.basis = ARRANK_BASIS_MASS;
    t->c.operating_temp_K = NAN;
    t->c.confidence = NAN;
    t->c.samples = t->s;
    t->c.n_samples = DEACT_BATCH;
    for (size_t s = 0; s < DEACT_BATCH; s++) {
        snprintf(t->id[s], sizeof t->id[s], "S%02zu", s + 1);
        arrank_sample *sm = &t->s[s];
        sm->id = sm->path = sm->file = t->id[s];
        sm->basis = ARRANK_BASIS_MASS;
        sm->points = t->p[s];
        sm->n_points = design == 0 ? DEACT_POINTS : 12;
        sm->runs = design == 0 ? deact_runs : NULL;
        sm->n_runs = design == 0 ? 2 : 0;
        for (size_t i = 0; i < sm->n_points; i++) {
            arrank_point *q = &t->p[s][i];
            const size_t step = design == 0 ? (i < 8 ? i : 15 - i) : (i < 8 ? i : (i - 8) % 4);
            q->temp_K = 480.0 + 10.0 * (double)step;
            q->time_on_stream_s = 1800.0 * (double)(i + 1);
            q->rate = exp(20.0 - 90e3 / (R_GAS * q->temp_K) + 0.05 * gauss(seed) -
                          loss_per_h * q->time_on_stream_s / 3600.0);
            q->rate_sd = NAN;
            q->conversion = NAN;
            q->run = design == 0 ? (i < 8 ? 0 : 1) : -1;
            q->line = (long)i + 2;
        }
    }
}

/* Samples in the suite (a multiple of DEACT_BATCH). */
#define DEACT_SAMPLES 2000

static void deact_rates(double loss_per_h, int design, uint64_t seed, double *deact, double *either)
{
    deact_campaign *t = malloc(sizeof *t);
    assert_non_null(t);
    size_t n_deact = 0, n_either = 0;
    arrank_options o = arrank_options_defaults();
    for (size_t b = 0; b < DEACT_SAMPLES / DEACT_BATCH; b++) {
        deact_batch(t, &seed, loss_per_h, design);
        arrank_analysis *a = NULL;
        arrank_error e;
        arrank_error_clear(&e);
        assert_int_equal(arrank_analysis_run(&t->c, &o, &a, &e), ARRANK_OK);
        for (size_t i = 0; i < a->n_results; i++) {
            unsigned f = a->results[i].flags;
            n_deact += (f & ARRANK_FLAG_DEACTIVATION) != 0;
            n_either += (f & (ARRANK_FLAG_DEACTIVATION | ARRANK_FLAG_ACTIVATION)) != 0;
        }
        arrank_analysis_free(a);
    }
    free(t);
    *deact = (double)n_deact / DEACT_SAMPLES;
    *either = (double)n_either / DEACT_SAMPLES;
}

static void test_deactivation_level(void **state)
{
    (void)state;
    static const char *designs[2] = {"runs up and down", "a ramp up and 4 cold set points "
                                                         "repeated"};
    int bad = 0;
    for (int d = 0; d < 2; d++) {
        double pd, pe, qd, qe;
        deact_rates(0.0, d, 0xDEAC0001 + 2 * (uint64_t)d, &pd, &pe);
        printf("# stable catalyst, %s, with time on stream, %d samples: flag deactivation "
               "%.2f %% (MC se %.2f %%), deactivation or activation %.2f %% (MC se %.2f %%)\n",
               designs[d], DEACT_SAMPLES, 100 * pd, 100 * mc_se(pd, DEACT_SAMPLES), 100 * pe,
               100 * mc_se(pe, DEACT_SAMPLES));
        /* a 2 %/h loss (about 20-30 % over the measurements): still seen */
        deact_rates(0.02, d, 0xDEAC0002 + 2 * (uint64_t)d, &qd, &qe);
        printf("# 2 %%/h loss, %s, %d samples: flag deactivation %.2f %% (MC se %.2f %%)\n",
               designs[d], DEACT_SAMPLES, 100 * qd, 100 * mc_se(qd, DEACT_SAMPLES));
        /* nominal 5 % for either flag (a two-sided family, Holm); bound 6 %;
           power asked of the up-and-down design only (the other's few
           repeats see a slow loss less often: reported) */
        bad += !(pe <= 0.06) + (d == 0 && !(qd >= 0.80));
    }
    assert_int_equal(bad, 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_compensation_staggered_level),
        cmocka_unit_test(test_compensation_power),
        cmocka_unit_test(test_bootstrap_coverage),
        cmocka_unit_test(test_deactivation_level),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
