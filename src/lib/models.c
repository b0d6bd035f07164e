/*
 * models.c - the Arrhenius form in rate space, the modified form and the
 * transition-state form (arrank/models.h).
 *
 * Every model here is ln r = b0 + n ln(T/T_ref) + b1 (1/T - 1/T_ref), with n
 * fixed at 0 (Arrhenius), at 1 (transition-state form) or free (modified).
 * With relative errors that is linear in the parameters and is solved by the
 * linear engine; with absolute errors r itself is fitted by the nonlinear
 * engine of fit.h, started from the linear solution, so the solver only has
 * to move the weights from ln r to r.
 */
#include "arrank/models.h"
#include "fit_internal.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

/*
 * The nonlinear start is the linear solution with ln r at T_ref moved by this
 * much.  It was added because GSL's trust-region driver reports "no progress"
 * when it starts exactly at the minimum; arrank_nlfit_run now accepts such a
 * stop when the point passes its minimum test, so that reason is gone.  It is
 * kept because the solver stops at its step tolerance, not at the last bit,
 * and the stopping point depends on the start: without the offset the
 * --errors absolute results move by up to about 2e-9 relative (Ea, ln A,
 * rate at T; demo campaign and a 10,000-sample generated one) and 2e-8 with
 * --model modified (n, rate at T), so the JSON would change; the tests pass
 * either way.  On exact Arrhenius data (zero scatter) the offset is the worse
 * start for the two-parameter fit: the solver stops short of the minimum and
 * the relative-offset test refuses it, where the unmoved start returns the
 * exact answer.  The tests give such data a 1e-7 jitter (tests/test_rank.c).
 */
#define START_OFFSET_LN_R 1e-4

/* Model context for the nonlinear engine: n free when isnan(fixed_n). */
typedef struct {
    const double *temp_K;
    double T_ref_K;
    double fixed_n;
} rate_model;

/* r = exp(b0 + n ln(T/T_ref) + b1 (1/T - 1/T_ref)); gradient d r / d p = r (1, ln, x). */
static int rate_model_eval(const double *p, size_t i, void *ctx, double *value, double *grad)
{
    const rate_model *m = ctx;
    const double T = m->temp_K[i];
    const double lnT = log(T / m->T_ref_K), x = 1.0 / T - 1.0 / m->T_ref_K;
    const int free_n = isnan(m->fixed_n);
    const double n = free_n ? p[1] : m->fixed_n;
    const double b1 = free_n ? p[2] : p[1];
    const double e = p[0] + n * lnT + b1 * x;
    /* exp overflows past ~709: outside the model's useful domain */
    if (!(e < 700.0))
        return 1;
    const double v = exp(e);
    *value = v;
    if (grad) {
        grad[0] = v;
        if (free_n) {
            grad[1] = v * lnT;
            grad[2] = v * x;
        } else {
            grad[1] = v * x;
        }
    }
    return 0;
}

/* Weights 1/sd^2 for a rate-space fit; NULL (unweighted) when rate_sd is absent. */
static arrank_status absolute_weights(const double *rate_sd, size_t n, double **w,
                                      arrank_error *err)
{
    *w = NULL;
    if (!rate_sd)
        return ARRANK_OK;
    size_t n_nan = 0;
    for (size_t i = 0; i < n; i++)
        if (isnan(rate_sd[i]))
            n_nan++;
    if (n_nan == n)
        return ARRANK_OK;
    *w = malloc(n * sizeof **w);
    if (!*w)
        return arrank_errorf(err, ARRANK_ENOMEM, "no memory for weights of %zu points", n);
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(rate_sd[i]) || rate_sd[i] <= 0) {
            free(*w);
            *w = NULL;
            return arrank_errorf(err, ARRANK_EFIT,
                                 "'rate_sd' at point %zu is %g; it must be finite and positive "
                                 "at every point", i + 1, rate_sd[i]);
        }
        (*w)[i] = 1.0 / (rate_sd[i] * rate_sd[i]);
    }
    return ARRANK_OK;
}

arrank_status arrank_fit_arrhenius_absolute(const double *temp_K, const double *rate,
                                            const double *rate_sd, size_t n,
                                            arrank_arrhenius *fit, arrank_error *err)
{
    arrank_arrhenius lin;
    arrank_status st = arrank_fit_arrhenius(temp_K, rate, rate_sd, n, &lin, err);
    if (st != ARRANK_OK)
        return st;
    double *w = NULL;
    st = absolute_weights(rate_sd, n, &w, err);
    if (st != ARRANK_OK)
        return st;
    rate_model m = {temp_K, lin.T_ref_K, 0.0};
    const double start[2] = {lin.b0 + START_OFFSET_LN_R, lin.b1};
    arrank_nlfit_options o = arrank_nlfit_defaults();
    arrank_nlfit nl;
    memset(&nl, 0, sizeof nl);
    st = arrank_nlfit_run(rate_model_eval, &m, 2, rate, w, n, start, &o, &nl, err);
    free(w);
    if (st != ARRANK_OK)
        return st;

    *fit = lin;
    fit->b0 = nl.params[0];
    fit->b1 = nl.params[1];
    fit->cov[0][0] = nl.cov[0];
    fit->cov[0][1] = fit->cov[1][0] = nl.cov[1];
    fit->cov[1][1] = nl.cov[3];
    fit->dof = nl.dof;
    /* Ea = -R b1, ln A = b0 - b1/T_ref and their covariance: as in fit.c (README "The numbers"). */
    const double R = ARRANK_R_J_MOL_K, u = 1.0 / fit->T_ref_K;
    const double c00 = fit->cov[0][0], c01 = fit->cov[0][1], c11 = fit->cov[1][1];
    fit->ea_J_mol = -R * fit->b1;
    fit->ea_se_J_mol = R * sqrt(c11 > 0 ? c11 : 0);
    fit->ln_A = fit->b0 - fit->b1 * u;
    const double var_lnA = c00 + u * u * c11 - 2.0 * u * c01;
    fit->ln_A_se = sqrt(var_lnA > 0 ? var_lnA : 0);
    fit->cov_ea_lnA_J_mol = -R * c01 + R * u * c11;
    const double sd_prod = fit->ea_se_J_mol * fit->ln_A_se;
    fit->corr_ea_lnA = sd_prod > 0 ? fit->cov_ea_lnA_J_mol / sd_prod : NAN;
    /* Scatter of ln r about the curve, so the number compares with a relative fit. */
    double ss = 0, sy = 0, syy = 0;
    for (size_t i = 0; i < n; i++) {
        const double y = log(rate[i]);
        const double e = y - fit->b0 - fit->b1 * (1.0 / temp_K[i] - u);
        ss += e * e;
        sy += y;
        syy += y * y;
    }
    const double sst = syy - sy * sy / (double)n;
    fit->resid_sd = sqrt(ss / fit->dof);
    fit->r2 = sst > 0 ? 1.0 - ss / sst : NAN;
    fit->chi2_dof = fit->weighted ? nl.rss / nl.dof : NAN;
    arrank_nlfit_clear(&nl);
    return ARRANK_OK;
}

/* Step 4 of arrank_model_fit_run: E, ln A, n and their errors, the apparent
   Ea, and for the transition-state form dH and dS, from out's b0, n_T, b1
   and their covariance. */
static void model_derived(arrank_model_fit *out, int eyring, double T_ref, double rate_to_per_s)
{
    const double R = ARRANK_R_J_MOL_K, u = 1.0 / T_ref;
    const double c00 = out->cov[0][0], c02 = out->cov[0][2], c22 = out->cov[2][2];
    out->E_J_mol = -R * out->b1;
    out->E_se_J_mol = R * sqrt(c22 > 0 ? c22 : 0);
    /* At T = T_ref the (T/T_ref)^n factor is 1, so ln A = b0 + E/(R T_ref) = b0 - b1/T_ref. */
    out->ln_A = out->b0 - out->b1 * u;
    const double var_lnA = c00 + u * u * c22 - 2.0 * u * c02;
    out->ln_A_se = sqrt(var_lnA > 0 ? var_lnA : 0);
    out->n_T_se = eyring ? 0.0 : sqrt(out->cov[1][1] > 0 ? out->cov[1][1] : 0);
    if (eyring) {
        out->corr_E_n = NAN;
    } else {
        /* corr(E, n) = corr(-R b1, n) = -corr(b1, n) */
        const double d = sqrt(out->cov[1][1] * c22);
        out->corr_E_n = d > 0 ? -out->cov[1][2] / d : NAN;
        out->collinear = fabs(out->corr_E_n) > ARRANK_COLLINEAR_CORR;
    }
    /* IUPAC Gold Book: Ea = R T^2 d ln k/dT = E + n R T. */
    out->ea_app_J_mol = out->E_J_mol + out->n_T * R * T_ref;
    if (eyring) {
        /*
         * ln(r_si / T) = ln(k_B/h) + dS/R - dH/(R T) (transition-state form,
         * kappa = 1), compared term by term with
         * ln r_si = ln c + b0 + ln(T/T_ref) + b1 (1/T - 1/T_ref).
         */
        out->dH_J_mol = out->E_J_mol;
        out->dH_se_J_mol = out->E_se_J_mol;
        out->dS_J_mol_K = R * (out->b0 + log(rate_to_per_s) - log(T_ref) - out->b1 * u -
                               log(ARRANK_KB_J_K / ARRANK_H_J_S));
        out->dS_se_J_mol_K = R * out->ln_A_se;
    } else {
        out->dH_J_mol = out->dH_se_J_mol = NAN;
        out->dS_J_mol_K = out->dS_se_J_mol_K = NAN;
    }
}

arrank_status arrank_model_fit_run(int eyring, int absolute, const double *temp_K,
                                   const double *rate, const double *rate_sd, size_t n,
                                   double rate_to_per_s, arrank_model_fit *out,
                                   arrank_error *err)
{
    const size_t p = eyring ? 2 : 3;
    if (!temp_K || !rate || !out)
        return arrank_errorf(err, ARRANK_EINVAL, "'model fit' needs temperatures, rates and a "
                                                 "result record");
    if (!(rate_to_per_s > 0) || !isfinite(rate_to_per_s))
        return arrank_errorf(err, ARRANK_EINVAL, "rate conversion factor '%g' is not positive",
                             rate_to_per_s);
    if (n < p + 1)
        return arrank_errorf(err, ARRANK_EFIT,
                             "%zu points are needed for the %s form; this sample has %zu", p + 1,
                             eyring ? "transition-state" : "modified", n);
    /* The linear Arrhenius fit checks the data and gives T_ref and the ln r weights. */
    arrank_arrhenius lin;
    arrank_status st = arrank_fit_arrhenius(temp_K, rate, rate_sd, n, &lin, err);
    if (st != ARRANK_OK)
        return st;

    double *buf = malloc(n * (p + 2) * sizeof *buf);
    if (!buf)
        return arrank_errorf(err, ARRANK_ENOMEM, "no memory for a model fit of %zu points", n);
    double *X = buf, *y = buf + n * p, *w = buf + n * (p + 1);
    const double T_ref = lin.T_ref_K;
    for (size_t i = 0; i < n; i++) {
        const double lnT = log(temp_K[i] / T_ref), x = 1.0 / temp_K[i] - 1.0 / T_ref;
        /* ln r weights (r/sd)^2 as in fit.h, 1 when unweighted */
        w[i] = lin.weighted ? (rate[i] / rate_sd[i]) * (rate[i] / rate_sd[i]) : 1.0;
        if (eyring) {
            /* n = 1 moves to the left: ln r - ln(T/T_ref) = b0 + b1 x */
            y[i] = log(rate[i]) - lnT;
            X[i * 2] = 1.0;
            X[i * 2 + 1] = x;
        } else {
            y[i] = log(rate[i]);
            X[i * 3] = 1.0;
            X[i * 3 + 1] = lnT;
            X[i * 3 + 2] = x;
        }
    }
    double b[3], cov[9];
    double rss = 0;
    st = arrank_linfit(X, y, w, n, p, b, cov, &rss, err);
    size_t iterations = 0;
    if (st == ARRANK_OK && absolute) {
        double *wa = NULL;
        st = absolute_weights(lin.weighted ? rate_sd : NULL, n, &wa, err);
        if (st == ARRANK_OK) {
            rate_model m = {temp_K, T_ref, eyring ? 1.0 : NAN};
            arrank_nlfit_options o = arrank_nlfit_defaults();
            arrank_nlfit nl;
            memset(&nl, 0, sizeof nl);
            double start[3];
            memcpy(start, b, sizeof start);
            start[0] += START_OFFSET_LN_R;
            st = arrank_nlfit_run(rate_model_eval, &m, p, rate, wa, n, start, &o, &nl, err);
            if (st == ARRANK_OK) {
                memcpy(b, nl.params, p * sizeof *b);
                memcpy(cov, nl.cov, p * p * sizeof *cov);
                rss = nl.rss;
                iterations = nl.iterations;
                arrank_nlfit_clear(&nl);
            }
            free(wa);
        }
    }
    free(buf);
    if (st != ARRANK_OK)
        return st;

    memset(out, 0, sizeof *out);
    out->eyring = eyring;
    out->absolute = absolute;
    out->n = n;
    out->n_params = p;
    out->T_ref_K = T_ref;
    out->T_min_K = lin.T_min_K;
    out->T_max_K = lin.T_max_K;
    out->dof = (double)(n - p);
    out->rss = rss;
    out->iterations = iterations;
    /* Map the parameters onto (b0, n, b1); the fixed n has no variance. */
    const size_t map[3] = {0, eyring ? SIZE_MAX : 1, eyring ? 1 : 2};
    for (size_t k = 0; k < 3; k++)
        for (size_t j = 0; j < 3; j++)
            out->cov[k][j] = (map[k] == SIZE_MAX || map[j] == SIZE_MAX)
                                 ? 0.0
                                 : cov[map[k] * p + map[j]];
    out->b0 = b[0];
    out->n_T = eyring ? 1.0 : b[1];
    out->b1 = eyring ? b[1] : b[2];

    model_derived(out, eyring, T_ref, rate_to_per_s);
    return ARRANK_OK;
}

arrank_status arrank_model_fit_predict(const arrank_model_fit *fit, double temp_K,
                                       double confidence, arrank_prediction *pred,
                                       arrank_error *err)
{
    const arrank_status st = arrank_predict_check(fit != NULL, temp_K, confidence, pred, err);
    if (st != ARRANK_OK)
        return st;
    if (!(fit->dof > 0) || !(fit->T_ref_K > 0))
        return arrank_errorf(err, ARRANK_EINVAL, "'predict' was given an empty model fit");
    const double g[3] = {1.0, log(temp_K / fit->T_ref_K), 1.0 / temp_K - 1.0 / fit->T_ref_K};
    const double ln_r = fit->b0 + fit->n_T * g[1] + fit->b1 * g[2];
    /* Delta method: var = g' C g. */
    double var = 0;
    for (size_t k = 0; k < 3; k++)
        for (size_t j = 0; j < 3; j++)
            var += g[k] * fit->cov[k][j] * g[j];
    arrank_predict_fill(temp_K, confidence, fit->dof, fit->T_min_K, fit->T_max_K, ln_r,
                        sqrt(var > 0 ? var : 0), pred);
    return ARRANK_OK;
}
