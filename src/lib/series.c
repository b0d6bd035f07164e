/*
 * series.c - the series-resistance model of a bent Arrhenius plot
 * (series.h): 1/r = 1/(k_ref exp(-Ea/R (1/T - 1/T_ref))) + 1/(k_t (T/T_ref)^m),
 * fitted by a profile over the conductance ln k_t with a 2x2 damped Newton
 * solver and a full three-parameter fit by a 3x3 one, then compared with the
 * straight line (extra-sum-of-squares F test, AICc).
 */
#include "series.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/error.h"
#include "arrank/fit.h"
#include "series_testing.h"
#include "stats.h"

/* Grid for the conductance, ln k_t - max ln r, before the full fit. */
#define SERIES_GRID_LO (-0.5)
#define SERIES_GRID_HI 7.0
#define SERIES_GRID_STEP 0.25

static const double R = ARRANK_R_J_MOL_K;

/* ---- series-resistance model ------------------------------------------------ */

/* y = -ln(exp(-lk) + exp(-lt)), lk = b0 + b1 z, lt = ln k_t + m ln(T/T_ref). */
typedef struct {
    const double *z, *lt0; /* [n] scaled x and m ln(T/T_ref) */
    double fixed_lkt;      /* used when only 2 parameters are free */
    int n_free;
} series_ctx;

static int series_model(const double *p, size_t i, void *vctx, double *value, double *grad)
{
    const series_ctx *c = vctx;
    double lkt = c->n_free == 3 ? p[2] : c->fixed_lkt;
    double lk = p[0] + p[1] * c->z[i];
    double lt = lkt + c->lt0[i];
    if (!isfinite(lk) || !isfinite(lt))
        return 1;
    /* -logaddexp(-lk, -lt), written to stay finite for any gap */
    double gap = lk - lt;
    double wk; /* share of the total resistance that is kinetic = d y / d lk */
    if (gap > 0) {
        double e = exp(-gap);
        *value = lt - log1p(e);
        wk = e / (1.0 + e);
    } else {
        double e = exp(gap);
        *value = lk - log1p(e);
        wk = 1.0 / (1.0 + e);
    }
    if (grad) {
        grad[0] = wk;
        grad[1] = wk * c->z[i];
        if (c->n_free == 3)
            grad[2] = 1.0 - wk;
    }
    return 0;
}

/* ---- series-resistance profile ---------------------------------------------- */

/*
 * Profile of the series model over ln k_t: at each grid value the two free
 * parameters b0, b1 are fitted with ln k_t held, and the best grid point
 * starts the full three-parameter fit (series_polish below), which gives the
 * reported numbers.  With ln k_t held the problem is small and smooth, so it
 * is solved here on the 2x2 normal equations, in a few passes over the data
 * and without allocation; tests/test_diagnose.c proves it gives the answers
 * of the general engine it replaced (arrank_series_reference).
 *
 * The step solves (M + lambda diag J'WJ) d = J'W (y - f).  M is Newton's
 * matrix, J'WJ plus the residual curvature sum w (y - f) s (1 - s) [1 z;
 * z z^2], where it is positive definite, else J'WJ (Gauss-Newton): from the
 * previous grid point's answer Newton converges quadratically where
 * Gauss-Newton, with residuals of a few per cent, only converges linearly
 * (Nocedal & Wright, Numerical Optimization, 2nd ed., sec. 10.3, from
 * memory).  lambda is Marquardt's damping with his diagonal scaling, which
 * makes the step independent of the units of b0 and b1 (Marquardt, J. SIAM
 * 11:431, 1963): 0 while steps succeed, a step is accepted only when it
 * lowers the weighted residual sum, and each refusal multiplies lambda by 10.
 *
 * Stopping, at least as tight as arrank_nlfit_defaults() with GSL's driver
 * (GSL 2.7, multifit_nlinear/convergence.c): its gradient test, gtol 1e-12,
 * max_k |g_k| max(|b_k|, 1) <= gtol max(rss / 2, 1) (GSL scales by
 * max(b_k, 1), never more than |b_k|); its step test, xtol 1e-12,
 * |d_k| <= xtol (|b_k| + xtol), on the step about to be taken; its
 * iteration limit; and, where GSL shrinks its trust region until the step
 * test passes once the residual sum no longer falls, the Newton decrement
 * g'M^-1 g, the fall in the residual sum the full step promises (Boyd &
 * Vandenberghe, Convex Optimization, 2004, sec. 9.5.1), at or below
 * 4 DBL_EPSILON rss: a fall below the rounding of the sum cannot be seen by
 * any solver.  The decrement over rss / (n - 2) is the squared distance to
 * the minimum in standard errors, so the answer is within 3e-8 sqrt(n - 2)
 * standard errors of it: a relative offset of 2e-8 sqrt(n - 2) against the
 * 1e-3 that arrank_nlfit_run accepts.
 *
 * Acceptance: the checks arrank_nlfit_run makes of its answer, so that a
 * grid point is kept or dropped as before (profile_answer_ok).
 */
#define PROFILE_XTOL 1e-12   /* arrank_nlfit_defaults().xtol */
#define PROFILE_GTOL 1e-12   /* arrank_nlfit_defaults().gtol */
#define PROFILE_MAX_ITER 500 /* arrank_nlfit_defaults().max_iter */
#define PROFILE_DECREMENT_REL (4.0 * DBL_EPSILON)
/* First damping after a refused step, and its factor (Marquardt 1963 used
   0.01 and 10; the start is the previous grid point's answer, usually close,
   so ours starts lower). */
#define PROFILE_LAMBDA0 1e-3
#define PROFILE_LAMBDA_FACTOR 10.0
/* Refusals in a row before giving up on a step: lambda is then 1e57 and the
   step far below xtol, which stops the iteration first. */
#define PROFILE_MAX_REFUSED 60
/* As in fit.c: a residual sum below this share of sum w y^2 is an exact fit,
   and Bates & Watts' tolerance on the relative offset (Nonlinear Regression
   Analysis and Its Applications, 1988, sec. 2.2.3). */
#define PROFILE_EXACT_RSS_REL 1e-24
#define PROFILE_OFFSET_TOL 1e-3

/* test switches (series_testing.h) */
static int series_reference = 0; /* 1: the profile with arrank_nlfit_run */
static int series_full_fit = 1;  /* 0: report the profile's best point */

void arrank_series_reference(int on)
{
    series_reference = on;
}

void arrank_series_full_fit(int on)
{
    series_full_fit = on;
}

/* One sample's profile: n points, z scaled 1/T, lt0 = m ln(T/T_ref). */
typedef struct {
    const double *z, *lt0, *y, *w;
    size_t n;
    double ysq;          /* sum w y^2, for the exact-fit test */
    double *res, *share; /* [n] scratch: residual y - f and kinetic share */
} profile_data;

/* Normal equations at one point: J'WJ {a00, a01, a11}, Newton's matrix h
   (same layout) and g = J'W (y - f). */
typedef struct {
    double a[3], h[3], g[2];
} profile_eq;

/* Weighted residual sum at (b0, b1) with ln k_t = lkt, and the equations
   there (the model's second derivative in lk is -s (1 - s)).  INFINITY when
   the model is not finite at some point (series_model's domain).  The first
   loop calls libm, the second sums without calls, which would each force
   the nine sums out of registers. */
static double profile_pass(const profile_data *pd, double lkt, double b0, double b1,
                           profile_eq *eq)
{
    const size_t n = pd->n;
    double *res = pd->res, *share = pd->share;
    for (size_t k = 0; k < n; k++) {
        const double lk = b0 + b1 * pd->z[k], lt = lkt + pd->lt0[k];
        if (!isfinite(lk) || !isfinite(lt))
            return INFINITY;
        /* series_model's value and kinetic share, in the same arithmetic */
        const double gap = lk - lt;
        const double e = exp(-fabs(gap));
        res[k] = pd->y[k] - ((gap > 0 ? lt : lk) - log1p(e));
        share[k] = gap > 0 ? e / (1.0 + e) : 1.0 / (1.0 + e);
    }
    double rss = 0, a00 = 0, a01 = 0, a11 = 0, c00 = 0, c01 = 0, c11 = 0, g0 = 0, g1 = 0;
    for (size_t k = 0; k < n; k++) {
        const double z = pd->z[k], r = res[k], s = share[k], w = pd->w[k];
        const double ws = w * s, wss = ws * s, wc = ws * (1.0 - s) * r;
        rss += w * r * r;
        a00 += wss;
        a01 += wss * z;
        a11 += wss * z * z;
        c00 += wc;
        c01 += wc * z;
        c11 += wc * z * z;
        g0 += ws * r;
        g1 += ws * r * z;
    }
    eq->a[0] = a00;
    eq->a[1] = a01;
    eq->a[2] = a11;
    eq->h[0] = a00 + c00;
    eq->h[1] = a01 + c01;
    eq->h[2] = a11 + c11;
    eq->g[0] = g0;
    eq->g[1] = g1;
    return isfinite(rss) ? rss : INFINITY;
}

/* Solve (m + lambda diag a) d = g; 0, or -1 when that matrix is not
   positive definite. */
static int profile_step(const double m[3], const double a[3], double lambda, const double g[2],
                        double d[2])
{
    const double m00 = m[0] + lambda * a[0], m11 = m[2] + lambda * a[2];
    const double det = m00 * m11 - m[1] * m[1];
    if (!(m00 > 0) || !(det > 0) || !isfinite(det))
        return -1;
    d[0] = (m11 * g[0] - m[1] * g[1]) / det;
    d[1] = (m00 * g[1] - m[1] * g[0]) / det;
    return 0;
}

/*
 * The checks arrank_nlfit_run makes of its answer, for two parameters.
 * Rank: GSL's covariance (pivoted QR of J with columns scaled by |b_k|, as
 * jacobian_covariance in fit.c) keeps both columns when R11 > eps_rel R00,
 * eps_rel = max(n, 2) DBL_EPSILON; for two columns of squared norms G00, G11
 * at an angle theta, (R11 / R00)^2 = sin^2 theta min(G) / max(G).  Offset:
 * sqrt(g'(J'WJ)^-1 g / 2) / sqrt((rss - g'(J'WJ)^-1 g) / (n - 2)) <= 0.001
 * unless the fit is exact.
 */
static int profile_answer_ok(const profile_data *pd, const double b[2], double rss,
                             const profile_eq *eq)
{
    const double *a = eq->a, *g = eq->g;
    if (!(a[0] > 0) || !(a[2] > 0) || !isfinite(a[0]) || !isfinite(a[2]))
        return 0;
    const double det = a[0] * a[2] - a[1] * a[1];
    if (!(det > 0))
        return 0;
    /* squared column norms after scaling by |b_k|; a column with b_k = 0 is
       scaled to the largest such norm (to 1 when both b are 0) */
    double G0 = a[0] * b[0] * b[0], G1 = a[2] * b[1] * b[1];
    const double gmax = fmax(G0, G1) > 0 ? fmax(G0, G1) : 1.0;
    if (!(G0 > 0))
        G0 = gmax;
    if (!(G1 > 0))
        G1 = gmax;
    const double eps_rel = (double)(pd->n > 2 ? pd->n : 2) * DBL_EPSILON;
    if (!(det / (a[0] * a[2]) * fmin(G0, G1) / fmax(G0, G1) > eps_rel * eps_rel))
        return 0;
    if (!(rss > 0) || rss <= PROFILE_EXACT_RSS_REL * pd->ysq)
        return 1;
    const double proj2 = (a[2] * g[0] * g[0] - 2.0 * a[1] * g[0] * g[1] + a[0] * g[1] * g[1]) / det;
    const double orth2 = fmax(rss - proj2, DBL_MIN);
    const double offset = sqrt(fmax(proj2, 0) / 2.0) / sqrt(orth2 / ((double)pd->n - 2.0));
    return offset <= PROFILE_OFFSET_TOL;
}

static int below_xtol(const double d[2], const double b[2])
{
    return fabs(d[0]) <= PROFILE_XTOL * (fabs(b[0]) + PROFILE_XTOL) &&
           fabs(d[1]) <= PROFILE_XTOL * (fabs(b[1]) + PROFILE_XTOL);
}

/* Fit b0, b1 for ln k_t = lkt from the start in b.  0 with b and *rss_out
   set, or -1 when the answer fails arrank_nlfit_run's checks. */
static int profile_fit(const profile_data *pd, double lkt, double b[2], double *rss_out)
{
    profile_eq eq;
    double rss = profile_pass(pd, lkt, b[0], b[1], &eq);
    if (!isfinite(rss))
        return -1;
    double lambda = 0;
    for (size_t iter = 0; iter < PROFILE_MAX_ITER; iter++) {
        const double *g = eq.g;
        if (fmax(fabs(g[0]) * fmax(fabs(b[0]), 1.0), fabs(g[1]) * fmax(fabs(b[1]), 1.0)) <=
            PROFILE_GTOL * fmax(0.5 * rss, 1.0))
            break;
        double d[2];
        const double *m = eq.h;
        if (profile_step(m, eq.a, 0.0, g, d) != 0) {
            m = eq.a;
            if (profile_step(m, eq.a, 0.0, g, d) != 0)
                d[0] = d[1] = NAN; /* J'WJ singular: only damped steps */
        }
        if (isfinite(d[0]) &&
            (g[0] * d[0] + g[1] * d[1] <= PROFILE_DECREMENT_REL * rss || below_xtol(d, b)))
            break;
        int moved = 0;
        for (int refused = 0; refused < PROFILE_MAX_REFUSED && !moved; refused++) {
            if (lambda > 0 || !isfinite(d[0])) {
                if (!(lambda > 0))
                    lambda = PROFILE_LAMBDA0;
                if (profile_step(m, eq.a, lambda, g, d) != 0) {
                    if (!(eq.a[0] > 0 && eq.a[2] > 0))
                        return -1; /* a column of J is zero: no damping helps */
                    lambda *= PROFILE_LAMBDA_FACTOR;
                    d[0] = d[1] = NAN;
                    continue;
                }
                if (below_xtol(d, b))
                    break; /* no step above xtol lowers the sum */
            }
            profile_eq t;
            const double rt = profile_pass(pd, lkt, b[0] + d[0], b[1] + d[1], &t);
            if (rt < rss) {
                b[0] += d[0];
                b[1] += d[1];
                rss = rt;
                eq = t;
                lambda = lambda > PROFILE_LAMBDA0 ? lambda / PROFILE_LAMBDA_FACTOR : 0.0;
                moved = 1;
            } else
                lambda = lambda > 0 ? lambda * PROFILE_LAMBDA_FACTOR : PROFILE_LAMBDA0;
        }
        if (!moved)
            break;
    }
    if (!profile_answer_ok(pd, b, rss, &eq))
        return -1;
    *rss_out = rss;
    return 0;
}

/* Lowest residual sum of the profile so far, where, and b0, b1 there. */
typedef struct {
    double rss, lkt, p[2];
} profile_best;

static void profile_keep(profile_best *best, double rss, double lkt, const double p[2])
{
    if (rss < best->rss) {
        best->rss = rss;
        best->lkt = lkt;
        best->p[0] = p[0];
        best->p[1] = p[1];
    }
}

/* The profile over the grid from weak to strong transport.  Each fit starts
   from the polynomial through the last three accepted answers (fewer at
   first), evaluated at the new ln k_t: a predictor as in continuation
   methods (Allgower & Georg, Introduction to Numerical Continuation Methods,
   SIAM 2003, ch. 2, from memory), which leaves the corrector one or two
   steps. */
static void profile_grid(const profile_data *pd, double ymax, const double start[2],
                         profile_best *best)
{
    double hist_b[3][2] = {{0}}, hist_lkt[3] = {0};
    size_t n_hist = 0;
    for (double off = SERIES_GRID_HI; off >= SERIES_GRID_LO - 1e-9; off -= SERIES_GRID_STEP) {
        const double lkt = ymax + off;
        double p[2] = {start[0], start[1]}, rss;
        if (n_hist > 0) {
            /* Lagrange's form of the interpolating polynomial */
            p[0] = p[1] = 0;
            for (size_t j = 0; j < n_hist; j++) {
                double l = 1.0;
                for (size_t i = 0; i < n_hist; i++)
                    if (i != j)
                        l *= (lkt - hist_lkt[i]) / (hist_lkt[j] - hist_lkt[i]);
                p[0] += l * hist_b[j][0];
                p[1] += l * hist_b[j][1];
            }
        }
        if (profile_fit(pd, lkt, p, &rss) != 0)
            continue;
        memmove(hist_b[1], hist_b[0], 2 * sizeof hist_b[0]);
        memmove(hist_lkt + 1, hist_lkt, 2 * sizeof hist_lkt[0]);
        hist_b[0][0] = p[0];
        hist_b[0][1] = p[1];
        hist_lkt[0] = lkt;
        n_hist += n_hist < 3;
        profile_keep(best, rss, lkt, p);
    }
}

/* The same profile with arrank_nlfit_run at each grid point, each fit
   starting from the last accepted answer: the reference that profile_fit
   replaced (arrank_series_reference).  0, or -1 when out of
   memory. */
static int profile_grid_reference(const profile_data *pd, double ymax, const double start[2],
                                  profile_best *best)
{
    series_ctx c = {pd->z, pd->lt0, NAN, 2};
    arrank_nlfit_options o = arrank_nlfit_defaults();
    double p[2] = {start[0], start[1]};
    for (double off = SERIES_GRID_HI; off >= SERIES_GRID_LO - 1e-9; off -= SERIES_GRID_STEP) {
        c.fixed_lkt = ymax + off;
        arrank_nlfit f;
        memset(&f, 0, sizeof f);
        arrank_error e;
        arrank_error_clear(&e);
        arrank_status st =
            arrank_nlfit_run(series_model, &c, 2, pd->y, pd->w, pd->n, p, &o, &f, &e);
        if (st == ARRANK_ENOMEM) {
            arrank_nlfit_clear(&f);
            return -1;
        }
        if (st == ARRANK_OK && isfinite(f.rss)) {
            p[0] = f.params[0];
            p[1] = f.params[1];
            profile_keep(best, f.rss, c.fixed_lkt, p);
        }
        arrank_nlfit_clear(&f);
    }
    return 0;
}

/* ---- the full three-parameter fit ------------------------------------------ */

/*
 * From the profile's best point, the full fit of (b0, b1, ln k_t) by the
 * same damped Newton iteration as profile_fit, on 3x3 equations, then the
 * checks and the covariance that arrank_nlfit_run gives (jacobian_covariance
 * and the relative-offset test in fit.c), so that the reported numbers are
 * those of the general engine to its tolerances (arrank_series_reference
 * restores that engine for the test that compares the two).
 *
 * With q = (1, z, -1), the model's Jacobian row is (s, s z, 1 - s) and its
 * Hessian -s (1 - s) q q' (series_model: d s / d lk = -s (1 - s) and
 * d s / d lt = s (1 - s)), so Newton's matrix is J'WJ + sum w r s (1 - s) q q'.
 * Symmetric 3x3 matrices are stored packed: 00, 01, 02, 11, 12, 22.
 */
typedef struct {
    double a[6], h[6], g[3];
} polish_eq;

static double polish_pass(const profile_data *pd, const double b[3], polish_eq *eq)
{
    const size_t n = pd->n;
    double *res = pd->res, *share = pd->share;
    for (size_t k = 0; k < n; k++) {
        const double lk = b[0] + b[1] * pd->z[k], lt = b[2] + pd->lt0[k];
        if (!isfinite(lk) || !isfinite(lt))
            return INFINITY;
        const double gap = lk - lt;
        const double e = exp(-fabs(gap));
        res[k] = pd->y[k] - ((gap > 0 ? lt : lk) - log1p(e));
        share[k] = gap > 0 ? e / (1.0 + e) : 1.0 / (1.0 + e);
    }
    double rss = 0, a[6] = {0}, c[6] = {0}, g[3] = {0};
    for (size_t k = 0; k < n; k++) {
        const double z = pd->z[k], r = res[k], s = share[k], w = pd->w[k];
        const double j[3] = {s, s * z, 1.0 - s};
        const double wc = w * r * s * (1.0 - s);
        rss += w * r * r;
        a[0] += w * j[0] * j[0];
        a[1] += w * j[0] * j[1];
        a[2] += w * j[0] * j[2];
        a[3] += w * j[1] * j[1];
        a[4] += w * j[1] * j[2];
        a[5] += w * j[2] * j[2];
        c[0] += wc;
        c[1] += wc * z;
        c[2] -= wc;
        c[3] += wc * z * z;
        c[4] -= wc * z;
        c[5] += wc;
        g[0] += w * r * j[0];
        g[1] += w * r * j[1];
        g[2] += w * r * j[2];
    }
    for (int i = 0; i < 6; i++) {
        eq->a[i] = a[i];
        eq->h[i] = a[i] + c[i];
    }
    for (int i = 0; i < 3; i++)
        eq->g[i] = g[i];
    return isfinite(rss) ? rss : INFINITY;
}

/* Solve (m + lambda diag a) d = g by Cholesky; 0, or -1 when that matrix is
   not positive definite. */
static int polish_step(const double m[6], const double a[6], double lambda, const double g[3],
                       double d[3])
{
    const double m00 = m[0] + lambda * a[0], m11 = m[3] + lambda * a[3],
                 m22 = m[5] + lambda * a[5];
    if (!(m00 > 0) || !isfinite(m00))
        return -1;
    const double l00 = sqrt(m00), l10 = m[1] / l00, l20 = m[2] / l00;
    const double d1 = m11 - l10 * l10;
    if (!(d1 > 0))
        return -1;
    const double l11 = sqrt(d1), l21 = (m[4] - l20 * l10) / l11;
    const double d2 = m22 - l20 * l20 - l21 * l21;
    if (!(d2 > 0) || !isfinite(d2))
        return -1;
    const double l22 = sqrt(d2);
    /* L u = g, then L' d = u */
    const double u0 = g[0] / l00, u1 = (g[1] - l10 * u0) / l11,
                 u2 = (g[2] - l20 * u0 - l21 * u1) / l22;
    d[2] = u2 / l22;
    d[1] = (u1 - l21 * d[2]) / l11;
    d[0] = (u0 - l10 * d[1] - l20 * d[2]) / l00;
    return isfinite(d[0]) && isfinite(d[1]) && isfinite(d[2]) ? 0 : -1;
}

static int polish_below_xtol(const double d[3], const double b[3])
{
    for (int k = 0; k < 3; k++)
        if (!(fabs(d[k]) <= PROFILE_XTOL * (fabs(b[k]) + PROFILE_XTOL)))
            return 0;
    return 1;
}

/*
 * Covariance (J'WJ)^-1 and the rank test of jacobian_covariance (fit.c) at
 * the answer: the columns of W^1/2 J, each scaled by |b_k| (by the largest
 * scaled norm over its own when b_k = 0), factored by QR with column pivoting
 * (the largest remaining column first, as GSL's QRPT), by modified
 * Gram-Schmidt with each projection taken twice ("twice is enough", as in
 * arrank_regress_design); singular when a diagonal of R is at most max(n, 3) DBL_EPSILON
 * times the first (gsl_multifit_nlinear_covar's test).  cols: 3 n scratch.
 * 0 with cov[9] (unscaled, row-major), or -1.
 */
static int polish_covariance(const profile_data *pd, const double b[3], double *cols,
                             double cov[9])
{
    const size_t n = pd->n;
    double *q[3] = {cols, cols + n, cols + 2 * n};
    double scale[3], norm[3], s_max = 0;
    for (size_t k = 0; k < n; k++) {
        const double sw = sqrt(pd->w[k]), s = pd->share[k];
        q[0][k] = sw * s;
        q[1][k] = sw * s * pd->z[k];
        q[2][k] = sw * (1.0 - s);
    }
    for (int c = 0; c < 3; c++) {
        double ss = 0;
        for (size_t k = 0; k < n; k++)
            ss += q[c][k] * q[c][k];
        norm[c] = sqrt(ss);
        if (!(norm[c] > 0) || !isfinite(norm[c]))
            return -1;
        if (fabs(b[c]) > 0 && norm[c] * fabs(b[c]) > s_max)
            s_max = norm[c] * fabs(b[c]);
    }
    if (!(s_max > 0) || !isfinite(s_max))
        s_max = 1.0;
    for (int c = 0; c < 3; c++) {
        scale[c] = fabs(b[c]) > 0 ? fabs(b[c]) : s_max / norm[c];
        for (size_t k = 0; k < n; k++)
            q[c][k] *= scale[c];
    }
    int perm[3] = {0, 1, 2};
    double Rm[3][3] = {{0}};
    const double epsrel = (double)(n > 3 ? n : 3) * DBL_EPSILON;
    for (int j = 0; j < 3; j++) {
        /* pivot: the remaining column with the largest norm */
        int best = j;
        double best_ss = -1;
        for (int c = j; c < 3; c++) {
            double ss = 0;
            for (size_t k = 0; k < n; k++)
                ss += q[perm[c]][k] * q[perm[c]][k];
            if (ss > best_ss) {
                best_ss = ss;
                best = c;
            }
        }
        int t = perm[j];
        perm[j] = perm[best];
        perm[best] = t;
        for (int r = 0; r < j; r++) { /* R's columns follow the pivots */
            double v = Rm[r][j];
            Rm[r][j] = Rm[r][best];
            Rm[r][best] = v;
        }
        const double rjj = sqrt(best_ss);
        if (!(rjj > 0) || !isfinite(rjj) || (j > 0 && !(rjj > epsrel * Rm[0][0])))
            return -1;
        Rm[j][j] = rjj;
        double *qj = q[perm[j]];
        for (size_t k = 0; k < n; k++)
            qj[k] /= rjj;
        for (int c = j + 1; c < 3; c++) {
            double *v = q[perm[c]];
            for (int pass = 0; pass < 2; pass++) {
                double r = 0;
                for (size_t k = 0; k < n; k++)
                    r += qj[k] * v[k];
                for (size_t k = 0; k < n; k++)
                    v[k] -= r * qj[k];
                Rm[j][c] += r;
            }
        }
    }
    /* (R'R)^-1 = R^-1 R^-T in pivoted order, then back to parameters */
    double Ri[3][3] = {{0}};
    for (int c = 2; c >= 0; c--) {
        Ri[c][c] = 1.0 / Rm[c][c];
        for (int j = c + 1; j < 3; j++) {
            double s = 0;
            for (int m = c + 1; m <= j; m++)
                s += Rm[c][m] * Ri[m][j];
            Ri[c][j] = -s / Rm[c][c];
        }
    }
    for (int r = 0; r < 3; r++)
        for (int c = 0; c < 3; c++) {
            double s = 0;
            for (int m = (r > c ? r : c); m < 3; m++)
                s += Ri[r][m] * Ri[c][m];
            const int pr = perm[r], pc = perm[c];
            cov[pr * 3 + pc] = s * scale[pr] * scale[pc];
            if (!isfinite(cov[pr * 3 + pc]))
                return -1;
        }
    for (int k = 0; k < 3; k++)
        if (!(cov[k * 3 + k] > 0))
            return -1;
    return 0;
}

/* The full fit from b (b0, b1, ln k_t).  0 with b, *rss_out and se[3] set,
   or -1 when it fails arrank_nlfit_run's checks (then the profile's point
   is reported, as when that engine fails).  cols: 3 n scratch. */
static int series_polish(const profile_data *pd, double b[3], double *cols, double *rss_out,
                         double se[3])
{
    polish_eq eq;
    double rss = polish_pass(pd, b, &eq);
    if (!isfinite(rss))
        return -1;
    double lambda = 0;
    for (size_t iter = 0; iter < PROFILE_MAX_ITER; iter++) {
        const double *g = eq.g;
        double gmax = 0;
        for (int k = 0; k < 3; k++)
            gmax = fmax(gmax, fabs(g[k]) * fmax(fabs(b[k]), 1.0));
        if (gmax <= PROFILE_GTOL * fmax(0.5 * rss, 1.0))
            break;
        double d[3];
        const double *m = eq.h;
        if (polish_step(m, eq.a, 0.0, g, d) != 0) {
            m = eq.a;
            if (polish_step(m, eq.a, 0.0, g, d) != 0)
                d[0] = d[1] = d[2] = NAN; /* J'WJ singular: only damped steps */
        }
        if (isfinite(d[0]) && (g[0] * d[0] + g[1] * d[1] + g[2] * d[2] <=
                                   PROFILE_DECREMENT_REL * rss ||
                               polish_below_xtol(d, b)))
            break;
        int moved = 0;
        for (int refused = 0; refused < PROFILE_MAX_REFUSED && !moved; refused++) {
            if (lambda > 0 || !isfinite(d[0])) {
                if (!(lambda > 0))
                    lambda = PROFILE_LAMBDA0;
                if (polish_step(m, eq.a, lambda, g, d) != 0) {
                    if (!(eq.a[0] > 0 && eq.a[3] > 0 && eq.a[5] > 0))
                        return -1; /* a column of J is zero: no damping helps */
                    lambda *= PROFILE_LAMBDA_FACTOR;
                    d[0] = d[1] = d[2] = NAN;
                    continue;
                }
                if (polish_below_xtol(d, b))
                    break;
            }
            polish_eq t;
            const double bt[3] = {b[0] + d[0], b[1] + d[1], b[2] + d[2]};
            const double rt = polish_pass(pd, bt, &t);
            if (rt < rss) {
                memcpy(b, bt, sizeof bt);
                rss = rt;
                eq = t;
                lambda = lambda > PROFILE_LAMBDA0 ? lambda / PROFILE_LAMBDA_FACTOR : 0.0;
                moved = 1;
            } else
                lambda = lambda > 0 ? lambda * PROFILE_LAMBDA_FACTOR : PROFILE_LAMBDA0;
        }
        if (!moved)
            break;
    }
    /* a refused trial may have left its residuals and shares in pd->res and
       pd->share: evaluate once more at the answer */
    if (!isfinite(polish_pass(pd, b, &eq)))
        return -1;
    double cov[9];
    if (polish_covariance(pd, b, cols, cov) != 0)
        return -1;
    /* Bates & Watts' relative offset, as arrank_nlfit_run */
    const double dof = (double)pd->n - 3.0;
    if (rss > 0 && rss > PROFILE_EXACT_RSS_REL * pd->ysq) {
        double proj2 = 0;
        for (int r = 0; r < 3; r++)
            for (int c = 0; c < 3; c++)
                proj2 += eq.g[r] * cov[r * 3 + c] * eq.g[c];
        const double orth2 = fmax(rss - proj2, DBL_MIN);
        const double offset = sqrt(fmax(proj2, 0) / 3.0) / sqrt(orth2 / dof);
        if (!(offset <= PROFILE_OFFSET_TOL))
            return -1;
    }
    const double s2 = rss / dof;
    for (int k = 0; k < 3; k++)
        se[k] = sqrt(s2 * cov[k * 3 + k]);
    *rss_out = rss;
    return 0;
}

void arrank_series_fit(arrank_dwork *wk, const size_t *idx, size_t n, const arrank_line *lf,
                       arrank_curvature *cv)
{
    cv->series_m = ARRANK_SERIES_M;
    cv->series_T_ref_K = 1.0 / lf->sc.xm;
    cv->series_ea_J_mol = cv->series_ea_se_J_mol = cv->series_ln_kt = NAN;
    cv->rss_line = lf->rss;
    cv->rss_series = NAN;
    if (n <= 3)
        return;
    /* one block per sample: z, lt0, y, w, the profile's two scratch rows and
       the full fit's three columns */
    double *z = malloc(9 * n * sizeof *z);
    if (!z) {
        wk->nomem = 1;
        return;
    }
    double *lt0 = z + n, *y = z + 2 * n, *w = z + 3 * n;
    double ymax = -INFINITY, ysq = 0;
    for (size_t k = 0; k < n; k++) {
        size_t i = idx[k];
        z[k] = (wk->x[i] - lf->sc.xm) / lf->sc.sx;
        lt0[k] = ARRANK_SERIES_M * log(wk->pt[i].temp_K * lf->sc.xm);
        y[k] = wk->y[i];
        w[k] = wk->w[i];
        ymax = fmax(ymax, y[k]);
        ysq += w[k] * y[k] * y[k];
    }
    const profile_data pd = {z, lt0, y, w, n, ysq, z + 4 * n, z + 5 * n};
    const double start[2] = {lf->b0, lf->b1_K * lf->sc.sx};
    profile_best best = {lf->rss, INFINITY, {start[0], start[1]}};
    /* the profile over the conductance, then a full fit from its best point */
    if (series_reference) {
        if (profile_grid_reference(&pd, ymax, start, &best) != 0) {
            wk->nomem = 1;
            goto done;
        }
    } else
        profile_grid(&pd, ymax, start, &best);
    cv->rss_series = best.rss;
    if (!isfinite(best.lkt))
        goto done; /* no finite conductance beats the straight line */
    double p3[3] = {best.p[0], best.p[1], best.lkt}, rss3 = NAN, se3[3] = {NAN, NAN, NAN};
    int full_ok = 0;
    if (series_full_fit && !series_reference)
        full_ok = series_polish(&pd, p3, z + 6 * n, &rss3, se3) == 0;
    else if (series_full_fit) {
        /* the general engine, for the test that compares the two */
        series_ctx c = {z, lt0, NAN, 3};
        arrank_nlfit_options o = arrank_nlfit_defaults();
        arrank_nlfit f;
        memset(&f, 0, sizeof f);
        arrank_error e;
        arrank_error_clear(&e);
        arrank_status st = arrank_nlfit_run(series_model, &c, 3, y, w, n, p3, &o, &f, &e);
        if (st == ARRANK_ENOMEM)
            wk->nomem = 1;
        if (st == ARRANK_OK) {
            full_ok = 1;
            memcpy(p3, f.params, sizeof p3);
            memcpy(se3, f.se, sizeof se3);
            rss3 = f.rss;
        }
        arrank_nlfit_clear(&f);
    }
    cv->series_fitted = 1;
    if (full_ok && rss3 <= best.rss * (1.0 + 1e-9) && isfinite(p3[2])) {
        cv->rss_series = rss3;
        cv->series_ea_J_mol = -R * p3[1] / lf->sc.sx;
        cv->series_ea_se_J_mol = R * se3[1] / lf->sc.sx;
        cv->series_ln_kt = p3[2];
    } else {
        cv->series_ea_J_mol = -R * best.p[1] / lf->sc.sx;
        cv->series_ln_kt = best.lkt;
    }
done:
    if (isfinite(cv->rss_series) && n > 3) {
        double rss2 = fmax(cv->rss_series, 0.0);
        double drop = fmax(cv->rss_line - rss2, 0.0);
        /* extra-sum-of-squares F test (DOMAIN notes, "Detecting curvature") */
        cv->series_F = rss2 > 0 ? drop / (rss2 / ((double)n - 3.0)) : INFINITY;
        cv->series_p = isfinite(cv->series_F) ? arrank_stats_f_q(cv->series_F, 1.0, (double)n - 3.0)
                                              : 0.0;
        /* AICc = n ln(RSS/n) + 2K + 2K(K+1)/(n-K-1), K counting the variance
           (Burnham & Anderson, Model Selection, 2002; from memory) */
        double nn = (double)n;
        if (nn - 5.0 > 0 && cv->rss_line > 0 && rss2 > 0) {
            cv->aicc_line = nn * log(cv->rss_line / nn) + 6.0 + 24.0 / (nn - 4.0);
            cv->aicc_series = nn * log(rss2 / nn) + 8.0 + 40.0 / (nn - 5.0);
        }
    }
    free(z);
}
