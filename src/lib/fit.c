/*
 * fit.c - the least-squares engines behind every number arrank reports.
 *
 * Three layers, as declared in arrank/fit.h: a weighted linear least-squares
 * engine on a general design matrix (GSL's truncated SVD, so that a singular
 * design is detected by its numerical rank instead of yielding garbage); a
 * nonlinear engine on GSL's trust-region solver; and the Arrhenius fit of
 * ln r on centred 1/T with its delta-method prediction.  The Arrhenius fit is
 * solved in closed form on centred data: with x centred on its weighted mean
 * the normal equations are nearly diagonal, so the solution loses no digits to
 * the large mean of 1/T (the reason for centring: Schwaab & Pinto, Chem. Eng.
 * Sci. 62:2750, 2007).
 */
#include "arrank/fit.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_blas.h>
#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_matrix.h>
#include <gsl/gsl_multifit.h>
#include <gsl/gsl_vector.h>

/* ---- 1. weighted linear least squares ---------------------------------- */

arrank_status arrank_linfit(const double *X, const double *y, const double *w, size_t n,
                            size_t p, double *b, double *cov, double *rss, arrank_error *err)
{
    if (!X || !y || !b || p == 0)
        return arrank_errorf(err, ARRANK_EINVAL, "'linfit' needs a design matrix, data and "
                                                 "room for at least one coefficient");
    /* Refuse before allocating anything: no residual degrees of freedom, no fit. */
    if (n <= p)
        return arrank_errorf(err, ARRANK_EFIT,
                             "%zu points are too few for %zu coefficients; at least %zu are "
                             "needed", n, p, p + 1);
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(y[i]))
            return arrank_errorf(err, ARRANK_EFIT, "observation %zu is not finite", i + 1);
        if (w && (!isfinite(w[i]) || w[i] < 0))
            return arrank_errorf(err, ARRANK_EFIT, "weight %zu is not finite and >= 0", i + 1);
        for (size_t k = 0; k < p; k++)
            if (!isfinite(X[i * p + k]))
                return arrank_errorf(err, ARRANK_EFIT,
                                     "design matrix entry (%zu, %zu) is not finite", i + 1,
                                     k + 1);
    }

    arrank_status st = ARRANK_OK;
    gsl_matrix *Xm = gsl_matrix_alloc(n, p);
    gsl_vector *yv = gsl_vector_alloc(n);
    gsl_vector *wv = gsl_vector_alloc(n);
    gsl_vector *bv = gsl_vector_alloc(p);
    gsl_matrix *cv = gsl_matrix_alloc(p, p);
    gsl_multifit_linear_workspace *work = gsl_multifit_linear_alloc(n, p);
    if (!Xm || !yv || !wv || !bv || !cv || !work) {
        st = arrank_errorf(err, ARRANK_ENOMEM, "no memory for a %zu x %zu linear fit", n, p);
        goto done;
    }
    for (size_t i = 0; i < n; i++) {
        gsl_vector_set(yv, i, y[i]);
        gsl_vector_set(wv, i, w ? w[i] : 1.0);
        for (size_t k = 0; k < p; k++)
            gsl_matrix_set(Xm, i, k, X[i * p + k]);
    }

    /*
     * Numerical rank by the usual criterion: singular values below
     * max(n, p) * eps * s_max are noise (Golub & Van Loan, Matrix Computations,
     * 4th ed., sec. 5.4.1).  GSL balances the columns first, so a badly scaled
     * but regular design (Pontius: x^2 ~ 1e13) keeps its full rank.
     */
    const double rank_tol = (double)(n > p ? n : p) * DBL_EPSILON;
    double chisq = 0.0;
    size_t rank = 0;
    int gs = gsl_multifit_wlinear_tsvd(Xm, wv, yv, rank_tol, bv, cv, &chisq, &rank, work);
    if (gs != GSL_SUCCESS) {
        st = arrank_errorf(err, ARRANK_EFIT, "linear least squares failed: %s",
                           gsl_strerror(gs));
        goto done;
    }
    if (rank < p) {
        st = arrank_errorf(err, ARRANK_EFIT,
                           "the design matrix is singular (rank %zu of %zu coefficients)", rank,
                           p);
        goto done;
    }
    /* GSL's weighted covariance is (X'WX)^-1; scale by s^2 for an unknown error scale. */
    const double s2 = chisq / (double)(n - p);
    for (size_t k = 0; k < p; k++) {
        b[k] = gsl_vector_get(bv, k);
        if (cov)
            for (size_t j = 0; j < p; j++)
                cov[k * p + j] = s2 * gsl_matrix_get(cv, k, j);
    }
    if (rss)
        *rss = chisq;

done:
    gsl_multifit_linear_free(work);
    gsl_matrix_free(cv);
    gsl_vector_free(bv);
    gsl_vector_free(wv);
    gsl_vector_free(yv);
    gsl_matrix_free(Xm);
    return st;
}

/* ---- 3. Arrhenius ------------------------------------------------------- */

/*
 * Weights from rate_sd: the delta method gives sd(ln r) = sd(r)/r, so
 * w = (r/sd)^2 (e.g. Bevington & Robinson, Data Reduction and Error Analysis,
 * 3rd ed., eq. 3.23 for the propagation).  Returns 1 when weighted, 0 when
 * unweighted, -1 (error set) for a mixture or a bad entry.
 */
static int arrhenius_weights(const double *rate, const double *rate_sd, size_t n, double *w,
                             arrank_error *err)
{
    size_t n_nan = 0;
    if (rate_sd)
        for (size_t i = 0; i < n; i++)
            if (isnan(rate_sd[i]))
                n_nan++;
    if (!rate_sd || n_nan == n) {
        for (size_t i = 0; i < n; i++)
            w[i] = 1.0;
        return 0;
    }
    for (size_t i = 0; i < n; i++) {
        if (isnan(rate_sd[i])) {
            arrank_errorf(err, ARRANK_EFIT,
                          "'rate_sd' is missing at point %zu but given at others; give it "
                          "for every point or for none", i + 1);
            return -1;
        }
        if (!isfinite(rate_sd[i]) || rate_sd[i] <= 0) {
            arrank_errorf(err, ARRANK_EFIT,
                          "'rate_sd' at point %zu is %g; it must be finite and positive", i + 1,
                          rate_sd[i]);
            return -1;
        }
        const double rel = rate_sd[i] / rate[i];
        w[i] = 1.0 / (rel * rel);
        if (!isfinite(w[i]) || w[i] <= 0) {
            arrank_errorf(err, ARRANK_EFIT,
                          "'rate_sd' at point %zu gives a weight out of range (rate %g, sd %g)",
                          i + 1, rate[i], rate_sd[i]);
            return -1;
        }
    }
    return 1;
}

arrank_status arrank_fit_arrhenius(const double *temp_K, const double *rate, const double *rate_sd,
                                   size_t n, arrank_arrhenius *fit, arrank_error *err)
{
    if (!fit || (n > 0 && (!temp_K || !rate)))
        return arrank_errorf(err, ARRANK_EINVAL, "'arrhenius fit' needs temperatures, rates "
                                                 "and a result record");
    if (n < 3)
        return arrank_errorf(err, ARRANK_EFIT,
                             "3 points are needed for a fit with an interval; this sample has %zu",
                             n);
    double T_min = INFINITY, T_max = -INFINITY;
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(temp_K[i]) || temp_K[i] <= 0)
            return arrank_errorf(err, ARRANK_EFIT,
                                 "temperature '%g K' at point %zu is not a positive absolute "
                                 "temperature", temp_K[i], i + 1);
        if (!isfinite(rate[i]) || rate[i] <= 0)
            return arrank_errorf(err, ARRANK_EFIT,
                                 "rate '%g' at point %zu is not positive and finite; ln r needs "
                                 "r > 0", rate[i], i + 1);
        if (temp_K[i] < T_min)
            T_min = temp_K[i];
        if (temp_K[i] > T_max)
            T_max = temp_K[i];
    }
    if (T_min == T_max)
        return arrank_errorf(err, ARRANK_EFIT,
                             "all %zu points are at one temperature (%g K); a slope needs two",
                             n, T_min);

    double *w = malloc(3 * n * sizeof *w);
    if (!w)
        return arrank_errorf(err, ARRANK_ENOMEM, "no memory for an arrhenius fit of %zu points",
                             n);
    double *x = w + n, *yv = w + 2 * n;
    const int weighted = arrhenius_weights(rate, rate_sd, n, w, err);
    if (weighted < 0) {
        free(w);
        return err ? err->status : ARRANK_EFIT;
    }

    /*
     * Weighted means of u = 1/T and y = ln r; a second pass corrects the mean
     * by the (rounding-level) mean of the first-pass deviations, so that x is
     * centred to the last bit and b0, b1 are uncorrelated.
     */
    double sw = 0, su = 0, sy = 0;
    for (size_t i = 0; i < n; i++) {
        yv[i] = log(rate[i]);
        sw += w[i];
        su += w[i] / temp_K[i];
        sy += w[i] * yv[i];
    }
    double u_mean = su / sw, y_mean = sy / sw;
    double dx = 0, dy = 0;
    for (size_t i = 0; i < n; i++) {
        dx += w[i] * (1.0 / temp_K[i] - u_mean);
        dy += w[i] * (yv[i] - y_mean);
    }
    u_mean += dx / sw;
    y_mean += dy / sw;

    /* Centred sums for the 2x2 normal equations of y - y_mean = c0 + b1 x. */
    double swx = 0, swxx = 0, swy = 0, swxy = 0, swyy = 0;
    for (size_t i = 0; i < n; i++) {
        x[i] = 1.0 / temp_K[i] - u_mean;
        const double yc = yv[i] - y_mean;
        swx += w[i] * x[i];
        swxx += w[i] * x[i] * x[i];
        swy += w[i] * yc;
        swxy += w[i] * x[i] * yc;
        swyy += w[i] * yc * yc;
    }
    const double det = sw * swxx - swx * swx;
    if (!(det > 0) || !(swxx > 0)) {
        free(w);
        return arrank_errorf(err, ARRANK_EFIT,
                             "the temperatures %g K to %g K are too close for a slope", T_min,
                             T_max);
    }
    /* Normal equations [sw swx; swx swxx] (c0, b1) = (swy, swxy), solved by Cramer's rule. */
    const double c0 = (swxx * swy - swx * swxy) / det;
    const double b1 = (sw * swxy - swx * swy) / det;
    const double b0 = y_mean + c0;

    double rss = 0;
    for (size_t i = 0; i < n; i++) {
        const double e = yv[i] - b0 - b1 * x[i];
        rss += w[i] * e * e;
    }
    const double dof = (double)(n - 2);
    /*
     * Covariance s^2 (X'WX)^-1 with s^2 = chi2/dof, the convention for an
     * unknown error scale (the weights give relative precision only); the
     * same as SciPy curve_fit with absolute_sigma=False.
     */
    const double s2 = rss / dof;
    const double c00 = s2 * swxx / det, c11 = s2 * sw / det, c01 = -s2 * swx / det;

    memset(fit, 0, sizeof *fit);
    fit->n = n;
    fit->weighted = weighted;
    fit->T_ref_K = 1.0 / u_mean;
    fit->T_min_K = T_min;
    fit->T_max_K = T_max;
    fit->b0 = b0;
    fit->b1 = b1;
    fit->cov[0][0] = c00;
    fit->cov[1][1] = c11;
    fit->cov[0][1] = fit->cov[1][0] = c01;
    fit->dof = dof;
    /* Ea = -R b1 and ln A = b0 - b1 / T_ref: README "The numbers". */
    const double R = ARRANK_R_J_MOL_K;
    fit->ea_J_mol = -R * b1;
    fit->ea_se_J_mol = R * sqrt(c11);
    fit->ln_A = b0 - b1 * u_mean;
    const double var_lnA = c00 + u_mean * u_mean * c11 - 2.0 * u_mean * c01;
    fit->ln_A_se = sqrt(var_lnA > 0 ? var_lnA : 0);
    /* cov(-R b1, b0 - u b1) = -R cov01 + R u cov11 */
    fit->cov_ea_lnA_J_mol = -R * c01 + R * u_mean * c11;
    const double sd_prod = fit->ea_se_J_mol * fit->ln_A_se;
    fit->corr_ea_lnA = sd_prod > 0 ? fit->cov_ea_lnA_J_mol / sd_prod : NAN;
    fit->resid_sd = sqrt(s2);
    /* swyy is the weighted total sum of squares about the weighted mean. */
    fit->r2 = swyy > 0 ? 1.0 - rss / swyy : NAN;
    fit->chi2_dof = weighted ? s2 : NAN;
    free(w);
    return ARRANK_OK;
}

/*
 * A campaign asks for the same few (confidence, dof) pairs thousands of times
 * (one per sample and per table row), and gsl_cdf_tdist_Pinv costs some
 * 10 us: remember the last answers, per thread so the library stays
 * reentrant.  Exact-key lookup, so the value is the one GSL gives.
 */
#define T_MEMO_SIZE 8

double arrank_t_quantile(double confidence, double dof)
{
    if (!(confidence > 0 && confidence < 1) || !(dof > 0))
        return NAN;
    static _Thread_local struct {
        double confidence, dof, t;
    } memo[T_MEMO_SIZE];
    static _Thread_local unsigned n_memo, next_memo;
    for (unsigned i = 0; i < n_memo; i++)
        if (memo[i].confidence == confidence && memo[i].dof == dof)
            return memo[i].t;
    const double P = 0.5 * (1.0 + confidence);
    const double t = isinf(dof) ? gsl_cdf_ugaussian_Pinv(P) : gsl_cdf_tdist_Pinv(P, dof);
    unsigned k = n_memo < T_MEMO_SIZE ? n_memo++ : next_memo++ % T_MEMO_SIZE;
    memo[k].confidence = confidence;
    memo[k].dof = dof;
    memo[k].t = t;
    return t;
}

/*
 * A temperature equal to T_min or T_max up to rounding (e.g. a temperature
 * converted from degC and back) is inside the measured range.
 */
#define EXTRAPOLATION_REL_TOL 1e-9

arrank_status arrank_fit_predict(const arrank_arrhenius *fit, double temp_K, double confidence,
                                 arrank_prediction *pred, arrank_error *err)
{
    if (!fit || !pred)
        return arrank_errorf(err, ARRANK_EINVAL, "'predict' needs a fit and a result record");
    if (!isfinite(temp_K) || temp_K <= 0)
        return arrank_errorf(err, ARRANK_EINVAL,
                             "temperature '%g K' is not a positive absolute temperature", temp_K);
    if (!(confidence > 0 && confidence < 1))
        return arrank_errorf(err, ARRANK_EINVAL,
                             "confidence '%g' is not between 0 and 1 (exclusive)", confidence);
    if (!(fit->dof > 0) || !(fit->T_ref_K > 0))
        return arrank_errorf(err, ARRANK_EINVAL, "'predict' was given an empty fit");

    /* Delta method, var = cov00 + x^2 cov11 + 2 x cov01 (fit.h; README "The numbers"). */
    const double x = 1.0 / temp_K - 1.0 / fit->T_ref_K;
    const double ln_r = fit->b0 + fit->b1 * x;
    const double var = fit->cov[0][0] + x * x * fit->cov[1][1] + 2.0 * x * fit->cov[0][1];
    const double se = sqrt(var > 0 ? var : 0);
    const double t = arrank_t_quantile(confidence, fit->dof);

    memset(pred, 0, sizeof *pred);
    pred->temp_K = temp_K;
    pred->ln_rate = ln_r;
    pred->ln_rate_se = se;
    pred->rate = exp(ln_r);
    pred->rate_lo = exp(ln_r - t * se);
    pred->rate_hi = exp(ln_r + t * se);
    pred->extrapolated = temp_K < fit->T_min_K * (1.0 - EXTRAPOLATION_REL_TOL) ||
                         temp_K > fit->T_max_K * (1.0 + EXTRAPOLATION_REL_TOL);
    return ARRANK_OK;
}
