/*
 * test_rank.c - the ranking statistics (pbest.h, groups.h, compensation.h,
 * bootstrap.h, and the pipeline's analysis_rank.c) and the extra rate laws
 * (models.h) against exact results.
 *
 * Sources, beside each check: the exact two-sample probability Phi(D/sigma)
 * for independent normal keys (and the Student-t cdf when one key is known
 * exactly: a linear function of a multivariate t is a univariate t, Kotz &
 * Nadarajah, Multivariate t Distributions, 2004, sec. 1.10); for two or
 * more uncertain t or normal keys, P(best) = integral of f_i prod F_j by GSL
 * quadrature; the engine's t and normal variates against GSL's cdf by a
 * Kolmogorov-Smirnov bound (Dvoretzky-Kiefer-Wolfowitz with Massart's
 * constant, Ann. Probab. 18:1269, 1990); Holm's
 * procedure by its definition (Holm, Scand. J. Statist. 6:65, 1979);
 * synthetic campaigns with stated true parameters for the compensation tests
 * (Krug, Hunter & Grieger, Nature 261:566, 1976); the 2019 SI exact values of
 * k_B and h (BIPM SI Brochure, 9th ed., Table 1).  Monte Carlo checks use a
 * bound of 4 standard errors of a binomial proportion, sqrt(p(1-p)/N), which
 * a correct engine exceeds with probability 6e-5 per check.
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include <cmocka.h>

#include <gsl/gsl_integration.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <jansson.h>

#include "arrank/analysis.h"
#include "arrank/models.h"
#include "arrank/bootstrap.h"
#include "arrank/compensation.h"
#include "arrank/groups.h"
#include "arrank/pbest.h"
#include "../src/lib/rank_out.h"
#include "helpers.h"

#define R_GAS ARRANK_R_J_MOL_K

/* ---- helpers ----------------------------------------------------------- */

/* An Arrhenius fit record with given centred parameters and covariance. */
static arrank_arrhenius make_fit(double T_ref, double b0, double b1, double c00, double c01,
                                 double c11, double dof)
{
    arrank_arrhenius f;
    memset(&f, 0, sizeof f);
    f.n = (size_t)dof + 2;
    f.T_ref_K = T_ref;
    f.T_min_K = T_ref - 30;
    f.T_max_K = T_ref + 30;
    f.b0 = b0;
    f.b1 = b1;
    f.cov[0][0] = c00;
    f.cov[0][1] = f.cov[1][0] = c01;
    f.cov[1][1] = c11;
    f.dof = dof;
    f.ea_J_mol = -R_GAS * b1;
    f.ea_se_J_mol = R_GAS * sqrt(c11);
    f.ln_A = b0 - b1 / T_ref;
    return f;
}

/* Mean and variance of the key of f (pbest.h: ln r(T), -Ea or ln A). */
static void key_moments(const arrank_arrhenius *f, arrank_rank_by by, double T, double *m,
                        double *v)
{
    double g0 = 1, g1 = 1.0 / T - 1.0 / f->T_ref_K;
    if (by == ARRANK_BY_EA) {
        g0 = 0;
        g1 = R_GAS;
    } else if (by == ARRANK_BY_PREFACTOR) {
        g1 = -1.0 / f->T_ref_K;
    }
    *m = g0 * f->b0 + g1 * f->b1;
    *v = g0 * g0 * f->cov[0][0] + g1 * g1 * f->cov[1][1] + 2 * g0 * g1 * f->cov[0][1];
}

/* |p - want| within 4 binomial standard errors. */
static int check_mc(double p, double want, size_t draws, const char *what, const char *source)
{
    const double se = sqrt(want * (1 - want) / (double)draws);
    const double tol = 4 * se > 1e-12 ? 4 * se : 1e-12;
    if (!(fabs(p - want) <= tol)) {
        printf("# %s: got %.6f want %.6f (|diff| %.3g > 4 SE %.3g) [%s]\n", what, p, want,
               fabs(p - want), tol, source);
        return 1;
    }
    return 0;
}

/* ---- P(best) ------------------------------------------------------------- */

typedef struct {
    const char *id;
    arrank_rank_by by;
    double T_op;
    double T_refA, b0A, b1A, c00A, c01A, c11A;
    double T_refB, b0B, b1B, c00B, c01B, c11B;
} two_case;

static const two_case two_cases[] = {
    /* rate at T_op, both with correlated (b0, b1) */
    {"rate, overlapping", ARRANK_BY_RATE, 487.3, 512.4, 0.3171, -10873.0, 2.13e-3, 1.7e-2,
     4.61e2, 509.8, 0.2515, -11904.0, 3.07e-3, -2.2e-2, 6.93e2},
    {"rate, far apart", ARRANK_BY_RATE, 533.9, 512.4, 1.1203, -9817.0, 1.41e-3, 4.1e-3, 3.17e2,
     520.6, 0.6112, -10231.0, 2.29e-3, 9.0e-3, 2.52e2},
    {"rate, B slightly better", ARRANK_BY_RATE, 498.2, 505.1, -0.4231, -12571.0, 4.43e-3, 2.6e-2,
     8.86e2, 507.7, -0.3812, -12044.0, 3.39e-3, -1.9e-2, 7.21e2},
    {"lowest Ea", ARRANK_BY_EA, NAN, 512.4, 0.3171, -10873.0, 2.13e-3, 1.7e-2, 4.61e2, 509.8,
     0.2515, -11904.0, 3.07e-3, -2.2e-2, 1.93e5},
    {"highest ln A", ARRANK_BY_PREFACTOR, NAN, 512.4, 0.3171, -10873.0, 2.13e-3, 1.7e-2, 3.61e4,
     509.8, 0.2515, -10804.0, 3.07e-3, -2.2e-2, 4.93e4},
};

static void test_pbest_two_sample_normal(void **state)
{
    (void)state;
    const size_t draws = 100000;
    int bad = 0;
    for (size_t c = 0; c < sizeof two_cases / sizeof two_cases[0]; c++) {
        const two_case *k = &two_cases[c];
        arrank_arrhenius A = make_fit(k->T_refA, k->b0A, k->b1A, k->c00A, k->c01A, k->c11A, 5);
        arrank_arrhenius B = make_fit(k->T_refB, k->b0B, k->b1B, k->c00B, k->c01B, k->c11B, 7);
        const arrank_arrhenius *fits[2] = {&A, &B};
        double pb[2], pp[4];
        arrank_error e;
        arrank_error_clear(&e);
        assert_int_equal(arrank_pbest_fits(fits, 2, k->by, k->T_op, draws, 20240611, 1, 2, pb,
                                           pp, &e),
                         ARRANK_OK);
        double mA, vA, mB, vB;
        key_moments(&A, k->by, k->T_op, &mA, &vA);
        key_moments(&B, k->by, k->T_op, &mB, &vB);
        /* exact: P(key_A > key_B) = Phi((mA - mB)/sqrt(vA + vB)) for independent normals */
        const double want = gsl_cdf_ugaussian_P((mA - mB) / sqrt(vA + vB));
        printf("# %s: P(A best) %.5f, exact %.5f\n", k->id, pb[0], want);
        bad += check_mc(pb[0], want, draws, k->id, "exact normal Phi(D/sigma)");
        bad += check_rel(pb[0] + pb[1], 1.0, 1e-12, "P(best) sums to 1", "probability");
        /* with two samples "A is best" and "A beats B" are the same event */
        bad += check_rel(pp[1], pb[0], 1e-12, "P(A beats B) = P(A best)", "same event");
        bad += check_rel(pp[2], 1 - pb[0], 1e-12, "P(B beats A)", "complement");
        assert_true(isnan(pp[0]) && isnan(pp[3]));
    }
    assert_int_equal(bad, 0);
}

static void test_pbest_two_sample_t(void **state)
{
    (void)state;
    const size_t draws = 100000;
    int bad = 0;
    /* B known exactly (zero covariance): P(A best) = F_t((mA - mB)/sA; nu_A) */
    const struct {
        double dof, b0A, c00A, c11A, b0B;
    } cases[] = {
        {3, 0.4127, 0.0531, 2.71e3, 0.5013},
        {5, 1.0382, 0.0214, 1.13e3, 0.9417},
        {11, -0.6218, 0.0089, 4.02e2, -0.6011},
    };
    for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
        arrank_arrhenius A = make_fit(515.3, cases[c].b0A, -11377.0, cases[c].c00A, 0.0131,
                                      cases[c].c11A, cases[c].dof);
        arrank_arrhenius B = make_fit(509.2, cases[c].b0B, -11604.0, 0, 0, 0, 4);
        const arrank_arrhenius *fits[2] = {&A, &B};
        const double T = 495.6;
        double pb[2];
        assert_int_equal(arrank_pbest_fits(fits, 2, ARRANK_BY_RATE, T, draws, 77, 0, 0, pb, NULL,
                                           NULL),
                         ARRANK_OK);
        double mA, vA, mB, vB;
        key_moments(&A, ARRANK_BY_RATE, T, &mA, &vA);
        key_moments(&B, ARRANK_BY_RATE, T, &mB, &vB);
        const double want = gsl_cdf_tdist_P((mA - mB) / sqrt(vA), cases[c].dof);
        printf("# t dof %g: P(A best) %.5f, exact t %.5f, normal would be %.5f\n", cases[c].dof,
               pb[0], want, gsl_cdf_ugaussian_P((mA - mB) / sqrt(vA)));
        bad += check_mc(pb[0], want, draws, "t draws, B exact", "Student t cdf (GSL)");
    }
    /* a t with huge dof is the normal: both uncertain, Phi(D/sigma) */
    arrank_arrhenius A = make_fit(512.4, 0.3171, -10873.0, 2.13e-3, 1.7e-2, 4.61e2, 1e7);
    arrank_arrhenius B = make_fit(509.8, 0.2515, -11904.0, 3.07e-3, -2.2e-2, 6.93e2, 1e7);
    const arrank_arrhenius *fits[2] = {&A, &B};
    double pb[2], mA, vA, mB, vB;
    assert_int_equal(arrank_pbest_fits(fits, 2, ARRANK_BY_RATE, 487.3, draws, 5, 0, 0, pb, NULL,
                                       NULL),
                     ARRANK_OK);
    key_moments(&A, ARRANK_BY_RATE, 487.3, &mA, &vA);
    key_moments(&B, ARRANK_BY_RATE, 487.3, &mB, &vB);
    bad += check_mc(pb[0], gsl_cdf_ugaussian_P((mA - mB) / sqrt(vA + vB)), draws,
                    "t with dof 1e7", "normal limit of the t");
    assert_int_equal(bad, 0);
}

/* ---- the engine's variates against exact distributions -------------------- */

static int compare_doubles(const void *a, const void *b)
{
    const double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* A key's distribution: location m, scale s, dof nu (INFINITY: normal). */
typedef struct {
    double m, s, nu;
} key_dist;

static double key_pdf(const key_dist *k, double x)
{
    const double z = (x - k->m) / k->s;
    return (isfinite(k->nu) ? gsl_ran_tdist_pdf(z, k->nu) : gsl_ran_ugaussian_pdf(z)) / k->s;
}

static double key_cdf(const key_dist *k, double x)
{
    const double z = (x - k->m) / k->s;
    return isfinite(k->nu) ? gsl_cdf_tdist_P(z, k->nu) : gsl_cdf_ugaussian_P(z);
}

typedef struct {
    const key_dist *k;
    size_t n, i;
} best_ctx;

static double best_integrand(double x, void *p)
{
    const best_ctx *c = p;
    double v = key_pdf(&c->k[c->i], x);
    for (size_t j = 0; j < c->n && v > 0; j++)
        if (j != c->i)
            v *= key_cdf(&c->k[j], x);
    return v;
}

/* P(key i is the largest of n independent keys) = integral of f_i(x) prod_{j != i} F_j(x) dx
   (the order-statistics identity, from memory), by GSL quadrature: adaptive Gauss-Kronrod
   (QAG, 61 points) between the locations, QAGIL and QAGIU beyond them.  (QAGP's
   extrapolation reports roundoff on these peaked, heavy-tailed integrands.) */
static double p_best_exact(const key_dist *k, size_t n, size_t i)
{
    enum { MAXN = 16 };
    assert_true(n <= MAXN);
    double pts[MAXN + 2];
    double lo = INFINITY, hi = -INFINITY;
    for (size_t j = 0; j < n; j++) {
        lo = fmin(lo, k[j].m - 40 * k[j].s);
        hi = fmax(hi, k[j].m + 40 * k[j].s);
    }
    size_t np = 0;
    pts[np++] = lo;
    for (size_t j = 0; j < n; j++)
        pts[np++] = k[j].m;
    pts[np++] = hi;
    qsort(pts + 1, n, sizeof *pts, compare_doubles);
    best_ctx c = {k, n, i};
    gsl_function fn = {best_integrand, &c};
    gsl_integration_workspace *w = gsl_integration_workspace_alloc(2000);
    assert_non_null(w);
    double sum = 0, part, err;
    assert_int_equal(gsl_integration_qagil(&fn, lo, 1e-11, 1e-8, 2000, w, &part, &err), 0);
    sum += part;
    for (size_t s = 0; s + 1 < np; s++) {
        assert_int_equal(gsl_integration_qag(&fn, pts[s], pts[s + 1], 1e-11, 1e-8, 2000,
                                             GSL_INTEG_GAUSS61, w, &part, &err),
                         0);
        sum += part;
    }
    assert_int_equal(gsl_integration_qagiu(&fn, hi, 1e-11, 1e-8, 2000, w, &part, &err), 0);
    gsl_integration_workspace_free(w);
    return sum + part;
}

/*
 * The engine draws one scalar per sample: a Student t (Bailey's polar method)
 * or a normal.  Sample 0 has key exactly T (b0 = 0, unit variance, at T_ref);
 * samples 1..K are known exactly at the quantiles x_k of the target
 * distribution and all are in the pairwise matrix, so 1 - P(0 beats k) is
 * the empirical cdf of the same N draws of T at x_k.  Its largest distance
 * from the exact cdf (GSL) over the grid is at most the Kolmogorov-Smirnov
 * statistic D_N, and P(D_N > eps) <= 2 exp(-2 N eps^2) for any N (the
 * Dvoretzky-Kiefer-Wolfowitz inequality with Massart's constant, Ann.
 * Probab. 18:1269, 1990); eps is set for a false alarm of at most 0.001 per
 * dof, 0.006 over the six.
 */
static void test_pbest_variates_ks(void **state)
{
    (void)state;
    static const double prob[] = {0.001, 0.01, 0.05, 0.1, 0.15, 0.2, 0.25, 0.3, 0.35, 0.4,
                                  0.45, 0.5, 0.55, 0.6, 0.65, 0.7, 0.75, 0.8, 0.85, 0.9,
                                  0.95, 0.99, 0.999};
    enum { K = sizeof prob / sizeof prob[0], N = K + 1 };
    const double dofs[] = {1, 2, 3, 10, 50, INFINITY};
    const size_t draws = 20000;
    const double eps = sqrt(log(2.0 / 0.001) / (2.0 * (double)draws));
    const double T = 503.7;
    arrank_arrhenius f[N];
    const arrank_arrhenius *fits[N];
    static double pb[N], pp[N * N];
    int bad = 0;
    for (size_t c = 0; c < sizeof dofs / sizeof dofs[0]; c++) {
        const double nu = dofs[c];
        f[0] = make_fit(T, 0.0, -10230.0, 1.0, 0.31, 1.7e4, 7);
        f[0].dof = nu;
        fits[0] = &f[0];
        for (size_t k = 0; k < K; k++) {
            const double x = isfinite(nu) ? gsl_cdf_tdist_Pinv(prob[k], nu)
                                          : gsl_cdf_ugaussian_Pinv(prob[k]);
            f[k + 1] = make_fit(T, x, -10230.0, 0, 0, 0, 7);
            f[k + 1].dof = INFINITY; /* exact anyway; a normal is the cheapest draw */
            fits[k + 1] = &f[k + 1];
        }
        assert_int_equal(arrank_pbest_fits(fits, N, ARRANK_BY_RATE, T, draws, 1847 + c,
                                           !isfinite(nu), N, pb, pp, NULL),
                         ARRANK_OK);
        double D = 0;
        for (size_t k = 0; k < K; k++)
            D = fmax(D, fabs(1.0 - pp[k + 1] - prob[k]));
        printf("# %s dof %g: KS distance on the grid %.4f (bound %.4f, N = %zu)\n",
               isfinite(nu) ? "t" : "normal", nu, D, eps, draws);
        if (!(D <= eps)) {
            printf("# not ok: draws do not follow the %s distribution [GSL cdf, DKW]\n",
                   isfinite(nu) ? "t" : "normal");
            bad++;
        }
    }
    assert_int_equal(bad, 0);
}

/* Both keys uncertain with t distributions: P(A beats B) by quadrature. */
static void test_pbest_two_sample_t_quadrature(void **state)
{
    (void)state;
    const size_t draws = 100000;
    const struct {
        double dofA, dofB, T_op;
    } cases[] = {{2, 5, 487.3}, {1, 3, 498.2}, {4, 4, 533.9}, {3, 30, 505.1}};
    int bad = 0;
    for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
        arrank_arrhenius A = make_fit(512.4, 0.3171, -10873.0, 2.13e-3, 1.7e-2, 4.61e2,
                                      cases[c].dofA);
        arrank_arrhenius B = make_fit(509.8, 0.2515, -11904.0, 3.07e-3, -2.2e-2, 6.93e2,
                                      cases[c].dofB);
        const arrank_arrhenius *fits[2] = {&A, &B};
        double pb[2], pp[4];
        assert_int_equal(arrank_pbest_fits(fits, 2, ARRANK_BY_RATE, cases[c].T_op, draws,
                                           4049 + c, 0, 2, pb, pp, NULL),
                         ARRANK_OK);
        double mA, vA, mB, vB;
        key_moments(&A, ARRANK_BY_RATE, cases[c].T_op, &mA, &vA);
        key_moments(&B, ARRANK_BY_RATE, cases[c].T_op, &mB, &vB);
        const key_dist k[2] = {{mA, sqrt(vA), cases[c].dofA}, {mB, sqrt(vB), cases[c].dofB}};
        const double want = p_best_exact(k, 2, 0);
        printf("# t dof %g and %g: P(A best) %.5f, quadrature %.5f\n", cases[c].dofA,
               cases[c].dofB, pb[0], want);
        bad += check_mc(pb[0], want, draws, "two t keys", "GSL quadrature of f_A F_B");
        bad += check_rel(pp[1], pb[0], 1e-12, "P(A beats B) = P(A best)", "same event");
    }
    assert_int_equal(bad, 0);
}

/*
 * A leader, a close rival and samples far below with heavy tails (t, dof 1
 * to 4) or, with normal draws, a few scales below (two of them wide, so
 * that they still win about 1 % of the draws).  Samples whose
 * mean lies more than about 1.7 scales below the leader's 1 % quantile are
 * drawn by thinning in pbest.c (its w < 1/4; the test counts them with
 * pbest.c's rule so that it knows that path runs); with the pairwise matrix
 * over every sample all are drawn directly.  Either way each P(best)
 * matches quadrature within 4 binomial standard errors.
 */
static void test_pbest_heavy_tails_quadrature(void **state)
{
    (void)state;
    enum { N = 8 };
    const struct {
        const char *id;
        int normal;
        double m[N], s[N], nu[N];
    } cases[] = {
        {"t",
         0,
         {1.000, 0.985, 0.900, 0.930, 0.880, 0.950, 0.800, 0.700},
         {0.010, 0.012, 0.010, 0.008, 0.015, 0.006, 0.020, 0.010},
         {10, 6, 1, 2, 3, 1, 2, 4}},
        /* wide Cauchy-like tails 4 scales below: each wins about 5 % of the draws */
        {"t, wide",
         0,
         {1.000, 0.985, 0.770, 0.760, 0.800, 0.775, 0.700, 0.790},
         {0.010, 0.012, 0.050, 0.050, 0.045, 0.060, 0.070, 0.040},
         {10, 6, 1, 1, 2, 1, 1, 1.5}},
        {"normal",
         1,
         {1.000, 0.990, 0.955, 0.885, 0.940, 0.860, 0.962, 0.930},
         {0.010, 0.012, 0.012, 0.050, 0.015, 0.060, 0.011, 0.020},
         {INFINITY, INFINITY, INFINITY, INFINITY, INFINITY, INFINITY, INFINITY, INFINITY}},
    };
    const size_t draws = 200000;
    const double T = 500.0;
    int bad = 0;
    for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
        arrank_arrhenius f[N];
        const arrank_arrhenius *fits[N];
        key_dist k[N];
        /* pbest.c's thinning level: the highest lower 1 % quantile */
        double level = -INFINITY;
        for (size_t i = 0; i < N; i++) {
            const double q = cases[c].normal ? gsl_cdf_ugaussian_Qinv(0.01)
                                             : gsl_cdf_tdist_Qinv(0.01, cases[c].nu[i]);
            level = fmax(level, cases[c].m[i] - q * cases[c].s[i]);
        }
        size_t thinned = 0;
        for (size_t i = 0; i < N; i++) {
            f[i] = make_fit(T, cases[c].m[i], -9731.0, pow(cases[c].s[i], 2), 0.27, 2.2e4,
                            cases[c].normal ? 7 : cases[c].nu[i]);
            fits[i] = &f[i];
            k[i] = (key_dist){cases[c].m[i], cases[c].s[i], cases[c].nu[i]};
            const double u = (level - k[i].m) / k[i].s, nu = k[i].nu;
            const double w = isfinite(nu) ? pow(1 + u * u / nu, -nu / 2) : exp(-u * u / 2);
            thinned += u > 0 && w < 0.25;
        }
        printf("# %s: %zu of %d samples drawn by thinning\n", cases[c].id, thinned, N);
        assert_true(thinned >= 4);
        for (size_t n_top = 0; n_top <= N; n_top += N) {
            double pb[N], pp[N * N];
            assert_int_equal(arrank_pbest_fits(fits, N, ARRANK_BY_RATE, T, draws, 9127 + c,
                                               cases[c].normal, n_top, pb, n_top ? pp : NULL,
                                               NULL),
                             ARRANK_OK);
            for (size_t i = 0; i < N; i++) {
                const double want = p_best_exact(k, N, i);
                printf("# %s, pairs %zu, sample %zu: P(best) %.5f, quadrature %.5f\n",
                       cases[c].id, n_top, i, pb[i], want);
                bad += check_mc(pb[i], want, draws, cases[c].id, "GSL quadrature");
            }
        }
    }
    assert_int_equal(bad, 0);
}

/* n fits with keys spread around one value, so P(best) is shared. */
static arrank_arrhenius *spread_fits(size_t n, uint64_t seed)
{
    arrank_arrhenius *f = malloc(n * sizeof *f);
    assert_non_null(f);
    for (size_t i = 0; i < n; i++)
        f[i] = make_fit(500 + 40 * uniform01(&seed), 0.04 * gauss(&seed),
                        -11000 - 900 * gauss(&seed), 2.1e-3, 1.3e-2, 5.2e2, 4 + (double)(i % 5));
    return f;
}

static void test_pbest_reproducible_and_pairs_capped(void **state)
{
    (void)state;
    enum { N = 50, TOP = 5 };
    const size_t draws = 4000;
    arrank_arrhenius *f = spread_fits(N, 99);
    const arrank_arrhenius *fits[N];
    for (size_t i = 0; i < N; i++)
        fits[i] = &f[i];
    double pb1[N], pb2[N], pb3[N], pp1[TOP * TOP], pp2[TOP * TOP];
    assert_int_equal(arrank_pbest_fits(fits, N, ARRANK_BY_RATE, 512.0, draws, 31, 0, TOP, pb1,
                                       pp1, NULL),
                     ARRANK_OK);
    assert_int_equal(arrank_pbest_fits(fits, N, ARRANK_BY_RATE, 512.0, draws, 31, 0, TOP, pb2,
                                       pp2, NULL),
                     ARRANK_OK);
    assert_int_equal(arrank_pbest_fits(fits, N, ARRANK_BY_RATE, 512.0, draws, 32, 0, 0, pb3, NULL,
                                       NULL),
                     ARRANK_OK);
    /* same seed: bit for bit; another seed: different counts somewhere */
    assert_memory_equal(pb1, pb2, sizeof pb1);
    assert_memory_equal(pp1, pp2, sizeof pp1);
    assert_true(memcmp(pb1, pb3, sizeof pb1) != 0);
    double sum = 0;
    size_t shared = 0;
    for (size_t i = 0; i < N; i++) {
        sum += pb1[i];
        shared += pb1[i] > 0;
    }
    assert_true(fabs(sum - 1) < 1e-12);
    assert_true(shared > 3); /* the spread makes it a real contest */
    /* only TOP x TOP pairs, complementary off the diagonal */
    for (size_t i = 0; i < TOP; i++)
        for (size_t j = 0; j < TOP; j++) {
            if (i == j)
                assert_true(isnan(pp1[i * TOP + j]));
            else
                assert_true(fabs(pp1[i * TOP + j] + pp1[j * TOP + i] - 1) < 1e-12);
        }
    /* errors: no draws, more pairs than samples, no temperature for a rate ranking */
    arrank_error e;
    arrank_error_clear(&e);
    assert_int_equal(arrank_pbest_fits(fits, N, ARRANK_BY_RATE, 512.0, 0, 1, 0, 0, pb3, NULL, &e),
                     ARRANK_EINVAL);
    assert_string_equal(e.message, "'draws' must be at least 1");
    assert_int_equal(arrank_pbest_fits(fits, 3, ARRANK_BY_RATE, 512.0, 10, 1, 0, 4, pb3, pp1, &e),
                     ARRANK_EINVAL);
    assert_int_equal(arrank_pbest_fits(fits, 3, ARRANK_BY_RATE, NAN, 10, 1, 0, 0, pb3, NULL, &e),
                     ARRANK_EINVAL);
    free(f);
}

/* 10^4 draws x 1,000 samples: the probabilities are a distribution (sum 1,
   each in [0, 1]) and the pairwise table is consistent (P(i beats j) +
   P(j beats i) = 1).  How fast this runs is measured by `make bench`, never
   in a unit test. */
static void test_pbest_large(void **state)
{
    (void)state;
    enum { N = 1000, P = 20 };
    arrank_arrhenius *f = spread_fits(N, 4242);
    const arrank_arrhenius **fits = malloc(N * sizeof *fits);
    double *pb = malloc(N * sizeof *pb), *pp = malloc(P * P * sizeof *pp);
    assert_true(fits && pb && pp);
    for (size_t i = 0; i < N; i++)
        fits[i] = &f[i];
    assert_int_equal(arrank_pbest_fits(fits, N, ARRANK_BY_RATE, 512.0, 10000, 1, 0, P, pb, pp,
                                       NULL),
                     ARRANK_OK);
    double sum = 0.0;
    for (size_t i = 0; i < N; i++) {
        assert_true(pb[i] >= 0.0 && pb[i] <= 1.0);
        sum += pb[i];
    }
    assert_true(fabs(sum - 1.0) < 1e-9);
    for (size_t i = 0; i < P; i++)
        for (size_t j = 0; j < P; j++)
            if (i != j)
                assert_true(fabs(pp[i * P + j] + pp[j * P + i] - 1.0) < 1e-9);
    free(pp);
    free(pb);
    free(fits);
    free(f);
}

/* Exact P(sample i is the largest of k independent normals):
   integral of phi_i(x) prod_{j != i} Phi_j(x) dx (the order-statistics
   identity; any probability text, from memory), by GSL's QAGI. */
typedef struct {
    const double *mu, *sd;
    size_t k, i;
} max_ctx;

static double max_integrand(double x, void *p)
{
    const max_ctx *c = p;
    double v = gsl_ran_gaussian_pdf(x - c->mu[c->i], c->sd[c->i]);
    for (size_t j = 0; j < c->k; j++)
        if (j != c->i)
            v *= gsl_cdf_gaussian_P(x - c->mu[j], c->sd[j]);
    return v;
}

/* Three close contenders and 500 samples far behind: the far ones are never
   best (P(best) 0, and not drawn), and the contenders' P(best) match the
   exact normal result within 4 binomial standard errors. */
static void test_pbest_contenders(void **state)
{
    (void)state;
    enum { K = 3, FAR = 500, N = K + FAR };
    const double mu[K] = {1.213, 1.187, 1.150}, sd[K] = {0.031, 0.024, 0.047};
    arrank_arrhenius *f = calloc(N, sizeof *f);
    const arrank_arrhenius **fits = malloc(N * sizeof *fits);
    double *pb = malloc(N * sizeof *pb);
    assert_true(f && fits && pb);
    for (size_t i = 0; i < N; i++) {
        f[i].T_ref_K = 500.0;
        f[i].dof = 8;
        f[i].b0 = i < K ? mu[i] : 0.2 - 0.001 * (double)i; /* far: 20+ sd below */
        f[i].b1 = -9000.0;
        f[i].cov[0][0] = i < K ? sd[i] * sd[i] : 0.04 * 0.04;
        f[i].cov[1][1] = 1e4;
        fits[i] = &f[i];
    }
    const size_t draws = 40000;
    /* at T = T_ref the key is b0 alone */
    assert_int_equal(arrank_pbest_fits(fits, N, ARRANK_BY_RATE, 500.0, draws, 7, 1, 0, pb, NULL,
                                       NULL),
                     ARRANK_OK);
    gsl_integration_workspace *w = gsl_integration_workspace_alloc(1000);
    for (size_t i = 0; i < K; i++) {
        max_ctx c = {mu, sd, K, i};
        gsl_function fn = {max_integrand, &c};
        double exact, abserr;
        assert_int_equal(gsl_integration_qagi(&fn, 1e-12, 1e-10, 1000, w, &exact, &abserr), 0);
        double se = sqrt(exact * (1 - exact) / (double)draws);
        print_message("# contender %zu: P(best) %.5f, exact %.5f\n", i, pb[i], exact);
        assert_true(fabs(pb[i] - exact) < 4 * se);
    }
    gsl_integration_workspace_free(w);
    for (size_t i = K; i < N; i++)
        assert_true(pb[i] == 0.0);
    free(pb);
    free(fits);
    free(f);
}

/*
 * The Monte Carlo's counts on tables whose size varies, with t and normal
 * draws, with far-tail samples drawn by thinning, and with exact ties:
 * samples with no uncertainty in the key and equal means tie in every draw,
 * and a tie counts for neither side (pbest.h: P(i beats j) + P(j beats i) =
 * 0 there); every other pair sums to 1.
 */
static void test_pbest_counts(void **state)
{
    (void)state;
    const struct {
        size_t n, n_top, far; /* far: extra samples, dof 2, 30 to 60 se below */
        int normal;
        unsigned long seed;
    } cases[] = {
        {30, 1, 0, 0, 5113}, {30, 2, 0, 1, 2718}, {41, 7, 0, 0, 90211}, {64, 13, 0, 1, 4471},
        {200, 20, 0, 0, 77}, {23, 23, 0, 0, 31337}, {9, 5, 0, 1, 8}, {12, 6, 400, 0, 1999},
        {12, 3, 150, 0, 4000000007ul},
    };
    const double T_op = 503.7;
    size_t thinned_cases = 0;
    for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
        const size_t n0 = cases[c].n, n = n0 + cases[c].far, P = cases[c].n_top;
        arrank_arrhenius *f = realloc(spread_fits(n0, 1000 + c), n * sizeof *f);
        const arrank_arrhenius **fits = malloc(n * sizeof *fits);
        double *pb = malloc(n * sizeof *pb), *pp = malloc(P * P * sizeof *pp);
        assert_true(f && fits && pb && pp);
        /* samples 1, 2 (and 4) known exactly at T_op = T_ref: key b0, se 0, equal */
        const size_t tied[3] = {1, 2, 4};
        for (size_t t = 0; t < 3 && tied[t] < n0; t++) {
            f[tied[t]].T_ref_K = T_op;
            f[tied[t]].b0 = 0.0314;
            f[tied[t]].cov[0][0] = f[tied[t]].cov[0][1] = f[tied[t]].cov[1][0] = 0.0;
        }
        /* far samples with heavy tails: candidates, but drawn by thinning */
        uint64_t s = 0xFA5 + c;
        double lowest = INFINITY;
        for (size_t i = 0; i < n0; i++)
            lowest = fmin(lowest, f[i].b0 + f[i].b1 * (1 / T_op - 1 / f[i].T_ref_K));
        for (size_t i = n0; i < n; i++) {
            const double sd = 0.011 + 0.02 * uniform01(&s);
            f[i] = make_fit(T_op, lowest - sd * (30 + 30 * uniform01(&s)), -9100.0, sd * sd, 0,
                            2.3e4, 2);
        }
        for (size_t i = 0; i < n; i++)
            fits[i] = &f[i];
        assert_int_equal(arrank_pbest_fits(fits, n, ARRANK_BY_RATE, T_op, 3001, cases[c].seed,
                                           cases[c].normal, P, pb, pp, NULL),
                         ARRANK_OK);
        size_t contested = 0, ties = 0, far_wins = 0;
        for (size_t i = n0; i < n; i++)
            far_wins += pb[i] > 0;
        thinned_cases += far_wins > 0;
        for (size_t i = 0; i < P; i++)
            for (size_t j = 0; j < P; j++) {
                const double a = pp[i * P + j];
                if (i == j) {
                    assert_true(isnan(a));
                    continue;
                }
                const int both_tied = (i == 1 || i == 2 || i == 4) && (j == 1 || j == 2 || j == 4);
                const double sum = a + pp[j * P + i];
                if (both_tied) {
                    assert_true(sum == 0.0);
                    ties++;
                } else {
                    assert_true(fabs(sum - 1.0) < 1e-12);
                    contested += a > 0.0 && a < 1.0;
                }
            }
        printf("# %zu samples, pairs %zu, %s: %zu contested, %zu tied entries, %zu far winners\n",
               n, P, cases[c].normal ? "normal" : "t", contested, ties, far_wins);
        if (P >= 5)
            assert_int_equal(ties, 6);
        if (P >= 7)
            assert_true(contested > 0);
        free(pb);
        free(pp);
        free(fits);
        free(f);
    }
    /* the thinned far tail must have won somewhere, or it was not exercised */
    assert_true(thinned_cases >= 1);
    /* no key ever above -inf (ln r of a zero rate): every draw goes to the first
       sample in rank order, as a loop over the samples in order would give it */
    arrank_arrhenius z[3];
    const arrank_arrhenius *zf[3] = {&z[0], &z[1], &z[2]};
    for (size_t i = 0; i < 3; i++)
        z[i] = make_fit(T_op, -INFINITY, -8800.0, 0.02 * 0.02, 0, 1.7e4, 5);
    double zb[3], zp[4];
    assert_int_equal(arrank_pbest_fits(zf, 3, ARRANK_BY_RATE, T_op, 1001, 3, 0, 2, zb, zp, NULL),
                     ARRANK_OK);
    assert_true(zb[0] == 1.0 && zb[1] == 0.0 && zb[2] == 0.0);
    assert_true(zp[1] == 0.0 && zp[2] == 0.0); /* -inf against -inf: a tie every time */
}

/* ---- Holm and groups ------------------------------------------------------ */

static void test_holm_by_hand(void **state)
{
    (void)state;
    /*
     * Holm (1979): sort, compare p_(k) with alpha/(m - k + 1), stop at the first
     * failure.  Case 1: sorted 0.005, 0.01, 0.03, 0.04 against 0.05/4, 0.05/3,
     * 0.05/2: the first two are rejected, the third stops the procedure.
     * Adjusted: 4*0.005 = 0.02, 3*0.01 = 0.03, 2*0.03 = 0.06, max(0.06, 0.04) = 0.06.
     */
    const double p1[4] = {0.01, 0.04, 0.03, 0.005};
    const double want1[4] = {0.03, 0.06, 0.06, 0.02};
    /* Case 2: capping at 1 and monotonicity: 3*0.2 = 0.6, min(1, 2*0.5) = 1, max(1, 0.9) = 1 */
    const double p2[3] = {0.5, 0.2, 0.9};
    const double want2[3] = {1.0, 0.6, 1.0};
    double adj[4];
    int bad = 0;
    assert_int_equal(arrank_groups_holm(p1, 4, adj, NULL), ARRANK_OK);
    for (size_t i = 0; i < 4; i++)
        bad += check_rel(adj[i], want1[i], 1e-15, "Holm case 1", "Holm 1979 by hand");
    size_t rejected = 0;
    for (size_t i = 0; i < 4; i++)
        rejected += adj[i] <= 0.05;
    assert_int_equal(rejected, 2);
    assert_int_equal(arrank_groups_holm(p2, 3, adj, NULL), ARRANK_OK);
    for (size_t i = 0; i < 3; i++)
        bad += check_rel(adj[i], want2[i], 1e-15, "Holm case 2", "Holm 1979 by hand");
    assert_int_equal(bad, 0);
    arrank_error e;
    arrank_error_clear(&e);
    const double p3[2] = {0.2, 1.3};
    assert_int_equal(arrank_groups_holm(p3, 2, adj, &e), ARRANK_EINVAL);
    assert_string_equal(e.message, "p-value 2 is '1.3', not in [0, 1]");
}

static void test_groups(void **state)
{
    (void)state;
    const double inf = INFINITY;
    const struct {
        const char *id;
        size_t n;
        double key[5], se[5], dof[5];
        int want[5];
    } cases[] = {
        /* differences of 19 to 40 standard errors: every sample its own group */
        {"clearly separated", 3, {5.03, 3.11, 1.27}, {0.05, 0.07, 0.04}, {inf, inf, inf},
         {1, 2, 3}},
        /* three within 0.4 SE of each other, the fourth 10 SE below */
        {"overlapping", 4, {2.01, 1.98, 1.97, 0.52}, {0.1, 0.12, 0.09, 0.11}, {8, 6, 9, 7},
         {1, 1, 1, 2}},
        /* steps of 1.77 SE (p = 0.077, never significant) but 3.5 SE over two steps
           (p = 4e-4, Holm threshold 0.05/5): the leader rule splits after rank 2 */
        {"leader rule", 4, {3.0, 2.75, 2.5, 2.25}, {0.1, 0.1, 0.1, 0.1}, {inf, inf, inf, inf},
         {1, 1, 2, 2}},
        {"one sample", 1, {1.0}, {0.1}, {4}, {1}},
    };
    for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
        int g[5] = {-1, -1, -1, -1, -1};
        size_t m = 0;
        assert_int_equal(arrank_groups_run(cases[c].key, cases[c].se, cases[c].dof, cases[c].n,
                                            0.05, g, &m, NULL),
                         ARRANK_OK);
        printf("# %s: groups", cases[c].id);
        for (size_t i = 0; i < cases[c].n; i++)
            printf(" %d", g[i]);
        printf("\n");
        assert_int_equal(m, cases[c].n * (cases[c].n - 1) / 2);
        assert_memory_equal(g, cases[c].want, cases[c].n * sizeof(int));
    }
}

static void test_groups_capped(void **state)
{
    (void)state;
    enum { N = ARRANK_GROUP_MAX + 100 };
    double *key = malloc(N * sizeof *key), *se = malloc(N * sizeof *se);
    double *dof = malloc(N * sizeof *dof);
    int *g = malloc(N * sizeof *g);
    assert_true(key && se && dof && g);
    for (size_t i = 0; i < N; i++) {
        key[i] = 3.0 - 0.01 * (double)i;
        se[i] = 0.05;
        dof[i] = 6;
    }
    size_t m = 0;
    assert_int_equal(arrank_groups_run(key, se, dof, N, 0.05, g, &m, NULL), ARRANK_OK);
    assert_int_equal(m, (size_t)ARRANK_GROUP_MAX * (ARRANK_GROUP_MAX - 1) / 2);
    assert_int_equal(g[0], 1);
    assert_true(g[ARRANK_GROUP_MAX - 1] > 1);
    assert_int_equal(g[ARRANK_GROUP_MAX], 0);
    assert_int_equal(g[N - 1], 0);
    for (size_t i = 1; i < ARRANK_GROUP_MAX; i++)
        assert_true(g[i] == g[i - 1] || g[i] == g[i - 1] + 1);
    free(key);
    free(se);
    free(dof);
    free(g);
}

/*
 * arrank_groups_run computes exact p-values only near Holm's boundary (groups.c).
 * Reference: the whole family by the definition in groups.h -- every pair's
 * Welch t p-value (GSL), Holm's adjusted values from arrank_groups_holm (checked
 * by hand above), the leader rule -- on campaigns built so that many pairs sit
 * near the boundary: keys a few standard errors apart, dofs from 2 to 40 and
 * infinite, some zero and some equal standard errors, ties in the keys.
 */
/* Holm-adjusted p of every pair among the first G (row-major upper triangle). */
static double *holm_reference(const double *key, const double *se, const double *dof, size_t n)
{
    const size_t G = n < ARRANK_GROUP_MAX ? n : ARRANK_GROUP_MAX;
    const size_t m = G * (G - 1) / 2;
    double *p = malloc((m ? m : 1) * sizeof *p);
    assert_non_null(p);
    size_t h = 0;
    for (size_t i = 0; i < G; i++)
        for (size_t j = i + 1; j < G; j++, h++) {
            const double v = se[i] * se[i] + se[j] * se[j], d = fabs(key[i] - key[j]);
            if (!(v > 0)) {
                p[h] = d > 0 ? 0.0 : 1.0;
                continue;
            }
            double den = 0;
            if (isfinite(dof[i]))
                den += pow(se[i], 4) / dof[i];
            if (isfinite(dof[j]))
                den += pow(se[j], 4) / dof[j];
            const double zz = d / sqrt(v);
            p[h] = den > 0 ? 2.0 * gsl_cdf_tdist_Q(zz, v * v / den) : 2.0 * gsl_cdf_ugaussian_Q(zz);
        }
    assert_int_equal(arrank_groups_holm(p, m, p, NULL), ARRANK_OK);
    return p;
}

/* The leader rule of groups.h on the adjusted p-values. */
static void groups_reference(const double *p, size_t n, double alpha, int *group)
{
    const size_t G = n < ARRANK_GROUP_MAX ? n : ARRANK_GROUP_MAX;
    for (size_t i = 0; i < n; i++)
        group[i] = 0;
    group[0] = 1;
    size_t leader = 0;
    int g = 1;
    for (size_t k = 1; k < G; k++) {
        const size_t pos = leader * (2 * G - leader - 1) / 2 + (k - leader - 1);
        if (p[pos] <= alpha) {
            g++;
            leader = k;
        }
        group[k] = g;
    }
}

static void test_groups_exact_holm(void **state)
{
    (void)state;
    const struct {
        size_t n;
        double step_se; /* mean key step between neighbours, in standard errors */
        double alpha;
        uint64_t seed; /* 0: a regular ladder, equal steps, se and dof (tied p-values) */
    } cases[] = {
        {40, 0.3, 0.05, 0x51A7E}, {120, 0.8, 0.05, 0xC0FFEE}, {250, 0.15, 0.01, 0x7E57},
        {300, 2.5, 0.10, 0xBADCAB}, {ARRANK_GROUP_MAX + 30, 0.4, 0.05, 0x1234567},
        {ARRANK_GROUP_MAX, 0.05, 0.05, 0xFEED}, {200, 0.7, 0.05, 0}, {90, 1.3, 0.05, 0},
    };
    const double dofs[] = {2, 3, 5, 7, 10, 10, 10, 18, 40, INFINITY};
    size_t groups_seen = 0, boundary_probes = 0;
    for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
        const size_t n = cases[c].n;
        double *key = malloc(n * sizeof *key), *se = malloc(n * sizeof *se);
        double *dof = malloc(n * sizeof *dof);
        int *g = malloc(n * sizeof *g), *want = malloc(n * sizeof *want);
        assert_true(key && se && dof && g && want);
        uint64_t s = cases[c].seed;
        double k = 5.0;
        for (size_t i = 0; i < n; i++) {
            const double u = uniform01(&s);
            se[i] = u < 0.03 ? 0.0 : u < 0.2 ? 0.05 : 0.02 + 0.08 * uniform01(&s);
            dof[i] = dofs[splitmix(&s) % (sizeof dofs / sizeof dofs[0])];
            key[i] = k;
            if (uniform01(&s) > 0.05) /* 5 % ties with the sample above */
                k -= cases[c].step_se * 0.05 * -log(uniform01(&s));
            if (cases[c].seed == 0) {
                se[i] = 0.05;
                dof[i] = 10;
                key[i] = 5.0 - cases[c].step_se * 0.05 * (double)i;
            }
        }
        size_t m = 0;
        assert_int_equal(arrank_groups_run(key, se, dof, n, cases[c].alpha, g, &m, NULL),
                         ARRANK_OK);
        double *adj = holm_reference(key, se, dof, n);
        groups_reference(adj, n, cases[c].alpha, want);
        const size_t G = n < ARRANK_GROUP_MAX ? n : ARRANK_GROUP_MAX;
        assert_int_equal(m, G * (G - 1) / 2);
        printf("# groups, %zu samples, step %.2f SE: %d groups (reference %d)\n", n,
               cases[c].step_se, g[G - 1], want[G - 1]);
        assert_memory_equal(g, want, n * sizeof *g);
        groups_seen += (size_t)want[G - 1];
        /* alpha a hair either side of a leader pair's adjusted p: that decision
           then hangs on Holm's boundary, where groups.c computes p exactly */
        const size_t probe[3] = {1, 2, G / 2};
        for (size_t q = 0; q < 3; q++) {
            const double a = adj[probe[q] - 1]; /* pair (0, probe) */
            if (!(a > 0 && a < 0.5))
                continue;
            for (int side = -1; side <= 1; side += 2) {
                const double alpha = a * (1.0 + side * 1e-9);
                assert_int_equal(arrank_groups_run(key, se, dof, n, alpha, g, NULL, NULL),
                                 ARRANK_OK);
                groups_reference(adj, n, alpha, want);
                assert_memory_equal(g, want, n * sizeof *g);
                if (probe[q] == 1) /* the reference itself flips there */
                    assert_int_equal(want[1] == want[0], side < 0);
                boundary_probes++;
            }
        }
        free(adj);
        free(key);
        free(se);
        free(dof);
        free(g);
        free(want);
    }
    /* the cases must exercise the rule: many groups, and decisions at the boundary */
    printf("# %zu boundary probes\n", boundary_probes);
    assert_true(groups_seen > 50);
    assert_true(boundary_probes >= 8);
}

/*
 * Campaigns of up to ARRANK_GROUP_MAX + 75 samples with mixed dof (normal
 * ones too), exactly known keys and ties, at the case's level and a hair
 * either side of an adjusted p (Holm's boundary): the groups and n_tests
 * must equal the reference by the definition.
 */
static void test_groups_campaigns(void **state)
{
    (void)state;
    const struct {
        size_t n;
        double step_se, alpha;
        uint64_t seed;
    } cases[] = {
        {ARRANK_GROUP_MAX, 0.12, 0.05, 0xA11CE}, {ARRANK_GROUP_MAX + 75, 0.6, 0.01, 0x5EED5},
        {333, 0.25, 0.10, 0xD1CE}, {17, 0.9, 0.05, 0x17}, {2, 3.1, 0.05, 0x2},
    };
    const double dofs[] = {2, 3, 4, 6, 9, 13, 21, 55, INFINITY};
    size_t probes = 0;
    for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
        const size_t n = cases[c].n;
        double *key = malloc(n * sizeof *key), *se = malloc(n * sizeof *se);
        double *dof = malloc(n * sizeof *dof);
        int *g = malloc(n * sizeof *g), *want = malloc(n * sizeof *want);
        assert_true(key && se && dof && g && want);
        uint64_t s = cases[c].seed;
        double k = 2.71;
        for (size_t i = 0; i < n; i++) {
            const double u = uniform01(&s);
            se[i] = u < 0.04 ? 0.0 : 0.015 + 0.07 * uniform01(&s);
            dof[i] = dofs[splitmix(&s) % (sizeof dofs / sizeof dofs[0])];
            key[i] = k;
            if (uniform01(&s) > 0.04) /* 4 % ties with the sample above */
                k -= cases[c].step_se * 0.05 * -log(uniform01(&s));
        }
        double *adj = holm_reference(key, se, dof, n);
        const size_t G = n < ARRANK_GROUP_MAX ? n : ARRANK_GROUP_MAX;
        /* the case's level, then a hair either side of the adjusted p of the
           first pair (0, j) with one in (1e-4, 0.3): that decision then hangs on
           the exact p-values */
        double alphas[3] = {cases[c].alpha, NAN, NAN};
        for (size_t j = 1; j < G; j++)
            if (adj[j - 1] > 1e-4 && adj[j - 1] < 0.3) {
                alphas[1] = adj[j - 1] * (1 - 1e-9);
                alphas[2] = adj[j - 1] * (1 + 1e-9);
                break;
            }
        for (size_t a = 0; a < 3; a++) {
            if (isnan(alphas[a]))
                continue;
            size_t m = 0;
            assert_int_equal(arrank_groups_run(key, se, dof, n, alphas[a], g, &m, NULL),
                             ARRANK_OK);
            groups_reference(adj, n, alphas[a], want);
            assert_int_equal(m, G * (G - 1) / 2);
            assert_memory_equal(g, want, n * sizeof *want);
            printf("# %zu samples, alpha %.6g: %d groups\n", n, alphas[a], want[G - 1]);
            probes += a > 0;
        }
        free(adj);
        free(key);
        free(se);
        free(dof);
        free(want);
        free(g);
    }
    assert_true(probes >= 4);
}

/* ---- compensation ------------------------------------------------------- */

/*
 * A synthetic campaign: n_s samples, temperatures t_lo..t_hi in n_t steps,
 * true ln A and Ea per sample, noise sd in ln r.  Fits every sample and runs
 * the compensation analysis.
 */
static void comp_campaign(size_t n_s, const double *ea, const double *lnA, double t_lo,
                          double t_hi, size_t n_t, double sd, uint64_t seed,
                          arrank_compensation *c)
{
    arrank_arrhenius fit[16];
    const arrank_arrhenius *fits[16];
    double T[16], r[16];
    double inv_sum = 0;
    size_t n_T = 0;
    assert_true(n_s <= 16 && n_t <= 16);
    for (size_t s = 0; s < n_s; s++) {
        for (size_t i = 0; i < n_t; i++) {
            T[i] = t_lo + (t_hi - t_lo) * (double)i / (double)(n_t - 1);
            r[i] = exp(lnA[s] - ea[s] / (R_GAS * T[i]) + sd * gauss(&seed));
            inv_sum += 1.0 / T[i];
            n_T++;
        }
        assert_int_equal(arrank_fit_arrhenius(T, r, NULL, n_t, &fit[s], NULL), ARRANK_OK);
        fits[s] = &fit[s];
    }
    assert_int_equal(arrank_compensation_run(fits, n_s, (double)n_T / inv_sum, 0.95, c, NULL),
                     ARRANK_OK);
    printf("# slope %.4g mol/J, r %.4f, T_iso %.1f K [%.1f, %.1f], T_hm %.1f K, "
           "Ea~ln r(T_hm) p %.3g, Exner T_iso %.1f K\n#   %s\n",
           c->slope_mol_J, c->corr, c->T_iso_K, c->T_iso_lo_K, c->T_iso_hi_K, c->T_hm_K, c->hm_p,
           c->exner_T_iso_K, c->sentence);
}

static void test_compensation_real(void **state)
{
    (void)state;
    /* True lines cross at T_iso = 693 K, far above the 470-545 K window;
       Ea spread 62-141 kJ/mol; ln A = -3.17 + Ea/(R T_iso). */
    const double T_iso = 693.0;
    double ea[10], lnA[10];
    for (size_t s = 0; s < 10; s++) {
        ea[s] = 62.3e3 + 8.77e3 * (double)s;
        lnA[s] = -3.17 + ea[s] / (R_GAS * T_iso);
    }
    arrank_compensation c;
    comp_campaign(10, ea, lnA, 470.0, 545.0, 8, 0.03, 11, &c);
    assert_int_equal(c.verdict, ARRANK_COMP_REAL);
    assert_true(c.T_iso_bounded);
    assert_true(c.T_iso_lo_K <= T_iso && T_iso <= c.T_iso_hi_K);
    assert_false(c.T_hm_inside);
    assert_true(c.hm_p < 0.05);
    /* Exner's line gives the same crossing point within 5 % (common practice: an
       independent route to T_iso) */
    assert_true(fabs(c.exner_T_iso_K / T_iso - 1) < 0.05);
    assert_non_null(strstr(c.sentence, "not explained by error correlation"));
}

static void test_compensation_artifact(void **state)
{
    (void)state;
    /* Every sample has the same true Ea = 87.4 kJ/mol and ln A = 16.21; the
       window is narrow (501-529 K) and sd(ln r) = 0.05, so the ln A-Ea line
       comes from the correlated estimation errors alone (Krug et al. 1976). */
    double ea[12], lnA[12];
    for (size_t s = 0; s < 12; s++) {
        ea[s] = 87.4e3;
        lnA[s] = 16.21;
    }
    arrank_compensation c;
    comp_campaign(12, ea, lnA, 501.0, 529.0, 6, 0.05, 2024, &c);
    assert_true(c.corr > 0.95); /* the tempting, meaningless correlation */
    assert_int_equal(c.verdict, ARRANK_COMP_ARTIFACT);
    assert_true(c.T_hm_inside);
    assert_non_null(strstr(c.sentence, "consistent with a statistical artifact"));

    /* too few samples */
    comp_campaign(3, ea, lnA, 501.0, 529.0, 6, 0.05, 7, &c);
    assert_int_equal(c.verdict, ARRANK_COMP_TOO_FEW);
    assert_string_equal(arrank_compensation_words(c.verdict), "too few samples");
}

/* ---- bootstrap ------------------------------------------------------------ */

static void test_bootstrap_vs_delta(void **state)
{
    (void)state;
    enum { N = 40 };
    double T[N], r[N], w[N];
    uint64_t seed = 314159;
    int bad = 0;
    const struct {
        int weighted;
        double T_op;
    } cases[] = {{0, 531.7}, {1, 512.2}};
    for (size_t c = 0; c < 2; c++) {
        for (size_t i = 0; i < N; i++) {
            T[i] = 483.0 + 77.0 * (double)i / (N - 1);
            const double sd = cases[c].weighted ? 0.02 + 0.04 * (double)(i % 3) : 0.04;
            r[i] = exp(21.7 - 103.9e3 / (R_GAS * T[i]) + sd * gauss(&seed));
            w[i] = 1 / (sd * sd);
        }
        double rsd[N];
        for (size_t i = 0; i < N; i++)
            rsd[i] = r[i] / sqrt(w[i]); /* so that (r/sd)^2 = w */
        arrank_arrhenius fit;
        assert_int_equal(arrank_fit_arrhenius(T, r, cases[c].weighted ? rsd : NULL, N, &fit,
                                              NULL),
                         ARRANK_OK);
        arrank_prediction pr;
        assert_int_equal(arrank_fit_predict(&fit, cases[c].T_op, 0.95, &pr, NULL), ARRANK_OK);
        double lo, hi, lo2, hi2;
        size_t ok = 0;
        assert_int_equal(arrank_bootstrap_rate(T, r, cases[c].weighted ? w : NULL, N, &fit,
                                               cases[c].T_op, 0.95, 4000, 17, &lo, &hi, &ok,
                                               NULL),
                         ARRANK_OK);
        assert_int_equal(ok, 4000);
        const double wd = pr.rate_hi - pr.rate_lo, wb = hi - lo;
        printf("# bootstrap [%.5g, %.5g] width %.4g; delta [%.5g, %.5g] width %.4g\n", lo, hi,
               wb, pr.rate_lo, pr.rate_hi, wd);
        /* brief: interval widths agree within 10 % for well-behaved data */
        bad += check_rel(wb, wd, 0.10, "bootstrap vs delta width", "Davison & Hinkley 1997 ch. 6");
        assert_true(lo < pr.rate && pr.rate < hi);
        /* seeded: the same numbers again */
        assert_int_equal(arrank_bootstrap_rate(T, r, cases[c].weighted ? w : NULL, N, &fit,
                                               cases[c].T_op, 0.95, 4000, 17, &lo2, &hi2, NULL,
                                               NULL),
                         ARRANK_OK);
        assert_true(lo == lo2 && hi == hi2);
    }
    assert_int_equal(bad, 0);
}

/* ---- models --------------------------------------------------------------- */

static void test_eyring_constants(void **state)
{
    (void)state;
    /* BIPM SI Brochure, 9th ed. (2019), Table 1: exact defining constants */
    assert_true(ARRANK_KB_J_K == 1.380649e-23);
    assert_true(ARRANK_H_J_S == 6.62607015e-34);
}

/*
 * "Exact" data carry a relative jitter of 1e-7: at zero residual the
 * engine's stop test (Bates & Watts' relative offset) compares rounding noise
 * with rounding noise and refuses the optimum, so the data are made exact to
 * 7 digits instead.  The tolerances claim 1e-5, far above what the jitter
 * moves (about 1e-7 in ln A, 1e-6 in Ea).
 */
#define JITTER 1e-7

static void test_absolute_exact_equals_linear(void **state)
{
    (void)state;
    const double T[7] = {471.3, 488.9, 502.4, 517.0, 531.6, 546.2, 559.8};
    double r[7], sd[7];
    uint64_t seed = 66;
    for (size_t i = 0; i < 7; i++) {
        r[i] = exp(19.37 - 97.31e3 / (R_GAS * T[i])) * (1 + JITTER * gauss(&seed));
        sd[i] = 0.031 * r[i] + 1e-4;
    }
    int bad = 0;
    for (int weighted = 0; weighted < 2; weighted++) {
        arrank_arrhenius lin, ab;
        assert_int_equal(arrank_fit_arrhenius(T, r, weighted ? sd : NULL, 7, &lin, NULL),
                         ARRANK_OK);
        arrank_error e;
        arrank_error_clear(&e);
        const arrank_status st =
            arrank_fit_arrhenius_absolute(T, r, weighted ? sd : NULL, 7, &ab, &e);
        if (st != ARRANK_OK)
            printf("# absolute fit: %s\n", e.message);
        assert_int_equal(st, ARRANK_OK);
        bad += check_rel(ab.ea_J_mol, lin.ea_J_mol, 1e-5, "Ea", "exact data");
        bad += check_rel(ab.ln_A, lin.ln_A, 1e-5, "ln A", "exact data");
        bad += check_rel(ab.ea_J_mol, 97.31e3, 1e-5, "Ea true", "generated");
        bad += check_rel(ab.ln_A, 19.37, 1e-5, "ln A true", "generated");
        arrank_prediction p1, p2;
        assert_int_equal(arrank_fit_predict(&ab, 523.15, 0.95, &p1, NULL), ARRANK_OK);
        assert_int_equal(arrank_fit_predict(&lin, 523.15, 0.95, &p2, NULL), ARRANK_OK);
        bad += check_rel(p1.rate, p2.rate, 1e-5, "rate at 523.15 K", "exact data");
    }
    assert_int_equal(bad, 0);
}

static void test_absolute_noisy_stationary(void **state)
{
    (void)state;
    /* Absolute noise: the optimum must satisfy the normal equations
       sum w (r - f) df/dp = 0 (least squares, first-order condition). */
    enum { N = 12 };
    double T[N], r[N], sd[N];
    uint64_t seed = 8080;
    for (size_t i = 0; i < N; i++) {
        T[i] = 478.0 + 8.3 * (double)i;
        r[i] = exp(18.03 - 91.7e3 / (R_GAS * T[i])) + 0.0008 * gauss(&seed);
        sd[i] = 0.0008;
    }
    arrank_arrhenius ab, lin;
    assert_int_equal(arrank_fit_arrhenius(T, r, NULL, N, &lin, NULL), ARRANK_OK);
    assert_int_equal(arrank_fit_arrhenius_absolute(T, r, sd, N, &ab, NULL), ARRANK_OK);
    double g0 = 0, g1 = 0, s0 = 0, s1 = 0;
    for (size_t i = 0; i < N; i++) {
        const double x = 1.0 / T[i] - 1.0 / ab.T_ref_K;
        const double f = exp(ab.b0 + ab.b1 * x);
        g0 += (r[i] - f) * f / (sd[i] * sd[i]);
        g1 += (r[i] - f) * f * x / (sd[i] * sd[i]);
        s0 += fabs(r[i] * f) / (sd[i] * sd[i]);
        s1 += fabs(r[i] * f * x) / (sd[i] * sd[i]);
    }
    printf("# absolute fit: Ea %.1f (linear %.1f) J/mol, gradient %.3g %.3g (scale %.3g %.3g)\n",
           ab.ea_J_mol, lin.ea_J_mol, g0, g1, s0, s1);
    assert_true(fabs(g0) < 1e-8 * s0 && fabs(g1) < 1e-8 * s1);
    assert_true(ab.ea_se_J_mol > 0 && ab.dof == N - 2);
    assert_true(ab.ea_J_mol != lin.ea_J_mol); /* the weighting really changed */
}

static void test_modified_recovers(void **state)
{
    (void)state;
    /* r = A (T/T_ref)^n exp(-E/RT) over a wide 400-900 K span */
    const double E = 95.37e3, nT = 1.73, lnA0 = 12.61;
    enum { N = 11 };
    double T[N], r[N];
    int bad = 0;
    for (size_t i = 0; i < N; i++)
        T[i] = 400.0 + 50.0 * (double)i;
    /* T_ref of the fit is the harmonic mean of T (unweighted) */
    double inv = 0;
    for (size_t i = 0; i < N; i++)
        inv += 1.0 / T[i];
    const double T_ref = N / inv;
    uint64_t jseed = 3;
    for (int absolute = 0; absolute < 2; absolute++) {
        /* exact for the linear route; a 1e-6 jitter for the nonlinear one (see
           above; seven decades of rate and three collinear parameters need more
           than JITTER above rounding), which moves E by about 5e-5 */
        for (size_t i = 0; i < N; i++)
            r[i] = exp(lnA0 + nT * log(T[i] / T_ref) - E / (R_GAS * T[i])) *
                   (1 + (absolute ? 1e-6 * gauss(&jseed) : 0));
        const double tol = absolute ? 5e-4 : 1e-8;
        arrank_model_fit m;
        arrank_error e;
        arrank_error_clear(&e);
        const arrank_status st = arrank_model_fit_run(0, absolute, T, r, NULL, N, 1.0, &m, &e);
        if (st != ARRANK_OK)
            printf("# modified fit: %s\n", e.message);
        assert_int_equal(st, ARRANK_OK);
        bad += check_rel(m.E_J_mol, E, tol, "E", "generated");
        bad += check_rel(m.n_T, nT, tol * 10, "n", "generated");
        bad += check_rel(m.ln_A, lnA0, tol, "ln A", "generated");
        bad += check_rel(m.ea_app_J_mol, E + nT * R_GAS * T_ref, tol, "apparent Ea",
                         "IUPAC Gold Book Ea = E + nRT");
        arrank_prediction p;
        assert_int_equal(arrank_model_fit_predict(&m, 633.3, 0.95, &p, NULL), ARRANK_OK);
        bad += check_rel(p.rate, exp(lnA0 + nT * log(633.3 / T_ref) - E / (R_GAS * 633.3)), tol,
                         "rate at 633.3 K", "generated");
    }
    /* a 60 K window: E and n nearly collinear (DOMAIN notes sec. 4) */
    double Tn[6], rn[6];
    uint64_t seed = 5;
    for (size_t i = 0; i < 6; i++) {
        Tn[i] = 500.0 + 12.0 * (double)i;
        rn[i] = exp(lnA0 + nT * log(Tn[i] / 530.0) - E / (R_GAS * Tn[i]) + 0.02 * gauss(&seed));
    }
    arrank_model_fit m;
    assert_int_equal(arrank_model_fit_run(0, 0, Tn, rn, NULL, 6, 1.0, &m, NULL), ARRANK_OK);
    printf("# 60 K window: corr(E, n) = %.5f\n", m.corr_E_n);
    assert_true(m.collinear);
    assert_true(fabs(m.corr_E_n) > ARRANK_COLLINEAR_CORR);
    assert_int_equal(bad, 0);
}

static void test_eyring_recovers(void **state)
{
    (void)state;
    /* TOF = (k_B T/h) exp(dS/R) exp(-dH/RT), in 1/h */
    const double dH = 112.4e3, dS = -37.9;
    enum { N = 8 };
    double T[N], r[N];
    int bad = 0;
    uint64_t jseed = 4;
    for (int absolute = 0; absolute < 2; absolute++) {
        for (size_t i = 0; i < N; i++) {
            T[i] = 480.0 + 11.0 * (double)i;
            const double tof_s = ARRANK_KB_J_K * T[i] / ARRANK_H_J_S * exp(dS / R_GAS) *
                                 exp(-dH / (R_GAS * T[i]));
            r[i] = tof_s * 3600.0 * (1 + (absolute ? JITTER * gauss(&jseed) : 0));
        }
        const double tol = absolute ? 1e-5 : 1e-8;
        arrank_model_fit m;
        assert_int_equal(arrank_model_fit_run(1, absolute, T, r, NULL, N, 1.0 / 3600.0, &m, NULL),
                         ARRANK_OK);
        bad += check_rel(m.dH_J_mol, dH, tol, "dH", "generated, exact k_B and h");
        /* dS is a difference of terms near 30 R: a tenfold looser claim */
        bad += check_rel(m.dS_J_mol_K, dS, 10 * tol, "dS", "generated, exact k_B and h");
        assert_true(m.n_T == 1.0 && m.n_params == 2);
    }
    assert_int_equal(bad, 0);
    arrank_error e;
    arrank_error_clear(&e);
    arrank_model_fit m;
    assert_int_equal(arrank_model_fit_run(1, 0, T, r, NULL, 2, 1.0, &m, &e), ARRANK_EFIT);
    assert_string_equal(e.message,
                        "3 points are needed for the transition-state form; this sample has 2");
}

/* ---- through the pipeline ------------------------------------------------- */

typedef struct {
    arrank_campaign c;
    arrank_sample s[40];
    arrank_point p[40][8];
    char id[40][24]; /* "K" and any size_t */
} toy_campaign;

/* n samples of 6 points, 488-538 K, spread true parameters, noise 0.04. */
static void toy_make(toy_campaign *t, size_t n, arrank_basis basis, const char *unit)
{
    memset(t, 0, sizeof *t);
    uint64_t seed = 123;
    t->c.path = "toy";
    t->c.name = "toy";
    t->c.title = "toy";
    t->c.rate_unit = (char *)unit;
    t->c.basis = basis;
    t->c.operating_temp_K = NAN;
    t->c.confidence = NAN;
    t->c.samples = t->s;
    t->c.n_samples = n;
    for (size_t s = 0; s < n; s++) {
        snprintf(t->id[s], sizeof t->id[s], "K%02zu", s + 1);
        t->s[s].id = t->id[s];
        t->s[s].path = t->id[s];
        t->s[s].file = t->id[s];
        t->s[s].basis = basis;
        t->s[s].points = t->p[s];
        t->s[s].n_points = 6;
        const double ea = 80e3 + 1.9e3 * (double)s, lnA = 14.0 + ea / (R_GAS * 640.0) - 0.05 * s;
        for (size_t i = 0; i < 6; i++) {
            arrank_point *q = &t->p[s][i];
            q->temp_K = 488.0 + 10.0 * (double)i;
            q->rate = exp(lnA - ea / (R_GAS * q->temp_K) + 0.04 * gauss(&seed));
            q->rate_sd = NAN;
            q->conversion = NAN;
            q->time_on_stream_s = NAN;
            q->run = -1;
            q->line = (long)i + 2;
        }
    }
}

static void test_pipeline(void **state)
{
    (void)state;
    toy_campaign *t = malloc(sizeof *t);
    assert_non_null(t);
    toy_make(t, 30, ARRANK_BASIS_MASS, "umol/(g*s)");
    arrank_options o = arrank_options_defaults();
    o.operating_temp_K = 523.15;
    o.pairs = 5;
    o.draws = 3000;
    o.bootstrap = 200;
    o.diagnose = 0;
    arrank_analysis *a = NULL;
    arrank_error e;
    arrank_error_clear(&e);
    assert_int_equal(arrank_analysis_run(&t->c, &o, &a, &e), ARRANK_OK);
    assert_non_null(a->rank_stats);
    assert_int_equal(a->rank_stats->n_top, 5);
    double sum = 0;
    size_t with_beats = 0;
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *res = &a->results[i];
        assert_non_null(res->stats);
        sum += res->stats->p_best;
        assert_true(res->stats->group >= 1);
        assert_true(res->stats->has_bootstrap);
        json_t *j = arrank_sample_stats_json(a, i);
        assert_non_null(j);
        assert_non_null(json_object_get(j, "p_best"));
        assert_non_null(json_object_get(j, "group"));
        assert_non_null(json_object_get(j, "rate_at_T_ci_bootstrap"));
        json_t *pb = json_object_get(j, "p_beats");
        if (pb) {
            with_beats++;
            assert_true(res->rank <= 5);
            assert_int_equal(json_object_size(pb), 4);
        }
        json_decref(j);
    }
    assert_int_equal(with_beats, 5);
    assert_true(fabs(sum - 1) < 1e-12);
    /* group 1 holds the best sample */
    assert_int_equal(a->results[a->order[0]].stats->group, 1);
    json_t *top = arrank_rank_stats_json(a);
    json_t *comp = json_object_get(top, "compensation");
    assert_non_null(comp);
    assert_non_null(json_object_get(comp, "verdict"));
    json_t *u = json_object_get(top, "ranking_uncertainty");
    assert_non_null(u);
    /* one name for the key: the spelling of the JSON's "ranked_by" */
    assert_string_equal(json_string_value(json_object_get(u, "by")), "rate_at_T");
    assert_string_equal(arrank_rank_by_name(ARRANK_BY_RATE), "rate_at_T");
    assert_string_equal(arrank_rank_by_name(ARRANK_BY_EA), "ea");
    assert_string_equal(arrank_rank_by_name(ARRANK_BY_PREFACTOR), "prefactor");
    char *text = json_dumps(top, JSON_COMPACT);
    assert_non_null(text);
    printf("# %.300s...\n", text);
    free(text);
    json_decref(top);
    arrank_analysis_free(a);

    /* --model modified: the prediction and the P(best) come from the 3-parameter fit */
    o.model = ARRANK_MODEL_MODIFIED;
    o.bootstrap = 0;
    assert_int_equal(arrank_analysis_run(&t->c, &o, &a, &e), ARRANK_OK);
    const arrank_result *r0 = &a->results[0];
    assert_true(r0->stats && r0->stats->has_model);
    arrank_prediction p;
    assert_int_equal(arrank_model_fit_predict(&r0->stats->model, 523.15, 0.95, &p, NULL),
                     ARRANK_OK);
    assert_true(r0->at_T.rate == p.rate);
    /* issue 14 item 3: the dof and t the result carries are the model's
       (n - 3), and they are the ones rate_at_T's interval used: exp(ln r -/+
       t se) (fit.h), t from GSL's inverse t cdf (NIST/SEMATECH t table) */
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *ri = &a->results[i];
        assert_true(ri->stats && ri->stats->has_model);
        assert_true(ri->interval_dof == (double)ri->stats->model.n - 3.0);
        assert_true(ri->interval_dof == ri->fit.dof - 1.0);
        assert_true(ri->interval_t == arrank_t_quantile(0.95, ri->interval_dof));
        check_close(ri->at_T.rate_hi,
                    exp(ri->at_T.ln_rate + ri->interval_t * ri->at_T.ln_rate_se), 1e-13,
                    "upper end with the carried t", "fit.h: exp(ln r + t se)");
        check_close(ri->at_T.rate_lo,
                    exp(ri->at_T.ln_rate - ri->interval_t * ri->at_T.ln_rate_se), 1e-13,
                    "lower end with the carried t", "fit.h: exp(ln r - t se)");
    }
    arrank_analysis_free(a);
    /* the straight line: n - 2 */
    o.model = ARRANK_MODEL_ARRHENIUS;
    assert_int_equal(arrank_analysis_run(&t->c, &o, &a, &e), ARRANK_OK);
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *ri = &a->results[i];
        assert_true(ri->interval_dof == (double)ri->fit.n - 2.0);
        assert_true(ri->interval_t == arrank_t_quantile(0.95, ri->interval_dof));
        check_close(ri->at_T.rate_hi,
                    exp(ri->at_T.ln_rate + ri->interval_t * ri->at_T.ln_rate_se), 1e-13,
                    "upper end with the carried t", "fit.h: exp(ln r + t se)");
    }
    arrank_analysis_free(a);
    o.model = ARRANK_MODEL_MODIFIED;

    /* --model eyring on rates per mass is refused */
    o.model = ARRANK_MODEL_EYRING;
    arrank_error_clear(&e);
    assert_int_equal(arrank_analysis_run(&t->c, &o, &a, &e), ARRANK_EINVAL);
    assert_null(a);
    assert_string_equal(e.message, "model 'eyring' needs turnover frequencies (a rate unit of "
                                   "1/time); 'umol/(g*s)' is a rate per mass");

    /* --model eyring on turnover frequencies per minute: the factor to 1/s
       comes from the caller's unit database (options.units), or from the one
       the pipeline loads when none is given; the same fit either way, and
       dS is that of the same numbers per second less R ln 60 (dS = R (b0 +
       ln c - ...), models.h, with c = 1/60) */
    toy_make(t, 8, ARRANK_BASIS_SITE, "1/min");
    o.diagnose = 0;
    double dS[3];
    for (int run = 0; run < 3; run++) {
        t->c.rate_unit = run == 2 ? "1/s" : "1/min";
        o.units = run == 0 ? units : NULL;
        arrank_error_clear(&e);
        assert_int_equal(arrank_analysis_run(&t->c, &o, &a, &e), ARRANK_OK);
        const struct arrank_sample_stats *ss = a->results[0].stats;
        assert_true(ss && ss->has_model && ss->model.eyring);
        dS[run] = ss->model.dS_J_mol_K;
        arrank_analysis_free(a);
    }
    o.units = NULL;
    assert_true(dS[0] == dS[1]);
    assert_true(fabs(dS[2] - R_GAS * log(60.0) - dS[0]) < 1e-9 * fabs(dS[0]) + 1e-9);
    free(t);
}

/*
 * Each ranked sample's key (analysis_stats.h: key, key_se, key_dof, set on the worker
 * that fitted it) against the fit it comes from, computed here the other way:
 * ln r at T from arrank_fit_predict, -Ea and ln A with their standard errors.
 * The order follows the keys, and T_hm is every used temperature's harmonic
 * mean, summed here in long double.
 */
static void test_rank_keys(void **state)
{
    (void)state;
    toy_campaign *t = malloc(sizeof *t);
    assert_non_null(t);
    toy_make(t, 40, ARRANK_BASIS_MASS, "umol/(g*s)");
    const arrank_rank_by bys[] = {ARRANK_BY_RATE, ARRANK_BY_EA, ARRANK_BY_PREFACTOR};
    for (size_t b = 0; b < sizeof bys / sizeof *bys; b++) {
        arrank_options o = arrank_options_defaults();
        o.operating_temp_K = 523.15;
        o.by = bys[b];
        o.draws = 500;
        arrank_analysis *a = NULL;
        arrank_error e;
        arrank_error_clear(&e);
        assert_int_equal(arrank_analysis_run(&t->c, &o, &a, &e), ARRANK_OK);
        assert_int_equal(a->n_ranked, 40);
        long double inv_T = 0;
        size_t n_T = 0;
        for (size_t k = 0; k < a->n_ranked; k++) {
            const arrank_result *res = &a->results[a->order[k]];
            const struct arrank_sample_stats *ss = res->stats;
            assert_non_null(ss);
            assert_true(ss->has_key);
            double want, want_se;
            if (o.by == ARRANK_BY_RATE) {
                arrank_prediction p;
                assert_int_equal(arrank_fit_predict(&res->fit, 523.15, 0.95, &p, NULL),
                                 ARRANK_OK);
                want = p.ln_rate;
                want_se = p.ln_rate_se;
            } else if (o.by == ARRANK_BY_EA) {
                want = -res->fit.ea_J_mol;
                want_se = res->fit.ea_se_J_mol;
            } else {
                want = res->fit.ln_A;
                want_se = res->fit.ln_A_se;
            }
            assert_true(fabs(ss->key - want) <= 1e-12 * fabs(want));
            assert_true(fabs(ss->key_se - want_se) <= 1e-9 * want_se);
            assert_true(ss->key_dof == res->fit.dof);
            if (k > 0)
                assert_true(ss->key <= a->results[a->order[k - 1]].stats->key);
            double sum = 0;
            size_t used = 0;
            for (size_t i = 0; i < res->sample->n_points; i++)
                if (res->used[i]) {
                    inv_T += 1.0L / res->sample->points[i].temp_K;
                    sum += 1.0 / res->sample->points[i].temp_K;
                    used++;
                }
            assert_int_equal(ss->n_T, used);
            assert_true(fabs(ss->inv_T_sum_per_K - sum) <= 1e-15 * sum);
            n_T += used;
        }
        const double T_hm = (double)((long double)n_T / inv_T);
        assert_true(fabs(a->rank_stats->compensation.T_hm_K - T_hm) <= 1e-14 * T_hm);
        arrank_analysis_free(a);
    }
    free(t);
}

/* ---- main ---------------------------------------------------------------- */

int main(void)
{
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_pbest_two_sample_normal),
        cmocka_unit_test(test_pbest_two_sample_t),
        cmocka_unit_test(test_pbest_variates_ks),
        cmocka_unit_test(test_pbest_two_sample_t_quadrature),
        cmocka_unit_test(test_pbest_heavy_tails_quadrature),
        cmocka_unit_test(test_pbest_reproducible_and_pairs_capped),
        cmocka_unit_test(test_pbest_large),
        cmocka_unit_test(test_pbest_contenders),
        cmocka_unit_test(test_pbest_counts),
        cmocka_unit_test(test_holm_by_hand),
        cmocka_unit_test(test_groups),
        cmocka_unit_test(test_groups_capped),
        cmocka_unit_test(test_groups_exact_holm),
        cmocka_unit_test(test_groups_campaigns),
        cmocka_unit_test(test_compensation_real),
        cmocka_unit_test(test_compensation_artifact),
        cmocka_unit_test(test_bootstrap_vs_delta),
        cmocka_unit_test(test_eyring_constants),
        cmocka_unit_test(test_absolute_exact_equals_linear),
        cmocka_unit_test(test_absolute_noisy_stationary),
        cmocka_unit_test(test_modified_recovers),
        cmocka_unit_test(test_eyring_recovers),
        cmocka_unit_test(test_pipeline),
        cmocka_unit_test(test_rank_keys),
    };
    return cmocka_run_group_tests(tests, units_setup, units_teardown);
}
