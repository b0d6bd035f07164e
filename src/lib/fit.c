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
#include "fit_internal.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_blas.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_matrix.h>
#include <gsl/gsl_multifit.h>
#include <gsl/gsl_multifit_nlinear.h>
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

/* ---- 2. nonlinear least squares ----------------------------------------- */

arrank_nlfit_options arrank_nlfit_defaults(void)
{
    arrank_nlfit_options o;
    o.max_iter = 500;
    o.xtol = 1e-12;
    o.gtol = 1e-12;
    o.ftol = 0.0;
    o.geodesic = 1;
    return o;
}

void arrank_nlfit_clear(arrank_nlfit *fit)
{
    if (!fit)
        return;
    free(fit->params);
    free(fit->se);
    free(fit->cov);
    memset(fit, 0, sizeof *fit);
}

/*
 * Residual for a trial point outside the model's domain.  GSL's trust-region
 * iteration returns at once when f fails, and its driver then tests
 * convergence on the stale step (GSL 2.7, multifit_nlinear/trust.c and
 * fdf.c), so instead of an error f reports a residual so large that the trial
 * step is rejected (||f_trial|| >= ||f||) and the trust region shrinks.
 * Finite, so that 0 * it stays 0 and no NaN reaches the step test.
 */
#define OUT_OF_DOMAIN_RESIDUAL 1e100

/* A weighted residual sum below this share of sum w y^2 is an exact fit, at
   rounding level: (1e-12)^2, well above double precision's 1e-32. */
#define EXACT_FIT_RSS_REL 1e-24
/* Bates & Watts' tolerance on the relative offset (see arrank_nlfit_run). */
#define RELATIVE_OFFSET_TOL 1e-3

typedef struct {
    arrank_model_fn model;
    void *ctx;
    const double *y;
    size_t n, p;
    double *par;      /* [p] contiguous copy of the solver's parameters */
    int grad_failed;  /* the gradient failed at an accepted point */
    size_t refused;   /* trial points outside the model's domain */
} nl_problem;

static int load_params(nl_problem *pb, const gsl_vector *x)
{
    int finite = 1;
    for (size_t k = 0; k < pb->p; k++) {
        pb->par[k] = gsl_vector_get(x, k);
        finite &= isfinite(pb->par[k]) != 0;
    }
    return finite;
}

static int nl_f(const gsl_vector *x, void *params, gsl_vector *f)
{
    nl_problem *pb = params;
    int ok = load_params(pb, x);
    for (size_t i = 0; ok && i < pb->n; i++) {
        double v = NAN;
        if (pb->model(pb->par, i, pb->ctx, &v, NULL) != 0 || !isfinite(v - pb->y[i]))
            ok = 0;
        else
            gsl_vector_set(f, i, v - pb->y[i]);
    }
    if (!ok) {
        gsl_vector_set_all(f, OUT_OF_DOMAIN_RESIDUAL);
        pb->refused++;
    }
    return GSL_SUCCESS;
}

static int nl_df(const gsl_vector *x, void *params, gsl_matrix *J)
{
    nl_problem *pb = params;
    int ok = load_params(pb, x);
    for (size_t i = 0; ok && i < pb->n; i++) {
        double v = NAN;
        gsl_vector_view row = gsl_matrix_row(J, i);
        if (pb->model(pb->par, i, pb->ctx, &v, row.vector.data) != 0)
            ok = 0;
        for (size_t k = 0; ok && k < pb->p; k++)
            ok = isfinite(gsl_matrix_get(J, i, k)) != 0;
    }
    if (!ok) {
        /* Same reason as OUT_OF_DOMAIN_RESIDUAL: flag it, report after the driver. */
        pb->grad_failed = 1;
        gsl_matrix_set_zero(J);
    }
    return GSL_SUCCESS;
}

/*
 * Covariance (J'J)^-1 of the weighted Jacobian, with a rank test that sees
 * the model and not the units of the parameters.  Column k is scaled by
 * |b_k| (by the largest scaled norm over ||J_k|| when b_k = 0), so each
 * column is the change of the model for a relative change of its parameter.
 * A column that is then negligible is a parameter with no effect at the
 * solution: the solver has stopped on a flat, saturated region (BoxBOD from
 * NIST start 1 with plain LM ends at b2 ~ 115, where exp(-b2 x) = 0 and the
 * gradient vanishes) and its "minimum" is not one.  Returns 0, or -1 when J
 * is singular in that sense or has a zero or dependent column.
 */
static int jacobian_covariance(const gsl_matrix *J, const gsl_vector *b, gsl_matrix *cov,
                               gsl_vector *scale, gsl_matrix *Js)
{
    const size_t n = J->size1, p = J->size2;
    double s_max = 0;
    for (size_t k = 0; k < p; k++) {
        gsl_vector_const_view c = gsl_matrix_const_column(J, k);
        const double norm = gsl_blas_dnrm2(&c.vector);
        if (!(norm > 0) || !isfinite(norm))
            return -1;
        const double bk = fabs(gsl_vector_get(b, k));
        if (bk > 0 && norm * bk > s_max)
            s_max = norm * bk;
    }
    if (!(s_max > 0) || !isfinite(s_max))
        s_max = 1.0;
    gsl_matrix_memcpy(Js, J);
    for (size_t k = 0; k < p; k++) {
        gsl_vector_view c = gsl_matrix_column(Js, k);
        const double bk = fabs(gsl_vector_get(b, k));
        const double ck = bk > 0 ? bk : s_max / gsl_blas_dnrm2(&c.vector);
        gsl_vector_scale(&c.vector, ck);
        gsl_vector_set(scale, k, ck);
    }
    /* numerical rank criterion max(n, p) eps (Golub & Van Loan, sec. 5.4.1) */
    const double epsrel = (double)(n > p ? n : p) * DBL_EPSILON;
    if (gsl_multifit_nlinear_covar(Js, epsrel, cov) != GSL_SUCCESS)
        return -1;
    for (size_t k = 0; k < p; k++) {
        /* gsl_multifit_nlinear_covar zeroes the rows of dependent columns */
        if (!(gsl_matrix_get(cov, k, k) > 0))
            return -1;
        for (size_t j = 0; j < p; j++) {
            /* (J C)'(J C) = C J'J C, so (J'J)^-1 = C [(JC)'(JC)]^-1 C */
            const double v = gsl_matrix_get(cov, k, j) * gsl_vector_get(scale, k) *
                             gsl_vector_get(scale, j);
            if (!isfinite(v))
                return -1;
            gsl_matrix_set(cov, k, j, v);
        }
    }
    return 0;
}

/* Step 1 of arrank_nlfit_run: the arguments, before anything is allocated
   (no residual degrees of freedom, no fit). */
static arrank_status nlfit_check(size_t n_params, const double *y, const double *w, size_t n,
                                 const double *start, const arrank_nlfit_options *opt,
                                 arrank_error *err)
{
    if (n <= n_params)
        return arrank_errorf(err, ARRANK_EFIT,
                             "%zu points are too few for %zu parameters; at least %zu are needed",
                             n, n_params, n_params + 1);
    if (opt->max_iter == 0 || !(opt->xtol >= 0) || !(opt->gtol >= 0) || !(opt->ftol >= 0))
        return arrank_errorf(err, ARRANK_EINVAL,
                             "'nonlinear fit' options need max_iter > 0 and tolerances >= 0");
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(y[i]))
            return arrank_errorf(err, ARRANK_EFIT, "observation %zu is not finite", i + 1);
        if (w && (!isfinite(w[i]) || w[i] < 0))
            return arrank_errorf(err, ARRANK_EFIT, "weight %zu is not finite and >= 0", i + 1);
    }
    for (size_t k = 0; k < n_params; k++)
        if (!isfinite(start[k]))
            return arrank_errorf(err, ARRANK_EFIT, "starting value %zu is not finite", k + 1);
    return ARRANK_OK;
}

/*
 * Step 3 of arrank_nlfit_run: is the point where the driver stopped a
 * minimum?  Only if the residual is orthogonal to the tangent plane: the
 * relative offset criterion of Bates & Watts (Nonlinear Regression Analysis
 * and Its Applications, 1988, sec. 2.2.3), with their tolerance 0.001.  The
 * driver's step test alone also passes where the trust region has shrunk to
 * nothing against the edge of the domain.  A residual at rounding level
 * (exact data) leaves the offset ratio as noise over noise: then the fit is
 * exact and the test does not apply.
 */
static arrank_status nlfit_minimum(gsl_multifit_nlinear_workspace *work, const gsl_matrix *covm,
                                   const double *y, const double *w, size_t n, size_t p,
                                   double rss, int stalled, int stall_why, size_t refused,
                                   size_t iterations, arrank_error *err)
{
    const double dof = (double)(n - p);
    double ysq = 0.0;
    for (size_t i = 0; i < n; i++)
        ysq += (w ? w[i] : 1.0) * y[i] * y[i];
    const int exact = rss <= EXACT_FIT_RSS_REL * ysq;
    if (!(rss > 0 && !exact))
        return ARRANK_OK; /* exact: a stall there is the answer too */
    gsl_vector *g = gsl_vector_alloc(p), *Cg = gsl_vector_alloc(p);
    if (!g || !Cg) {
        gsl_vector_free(g);
        gsl_vector_free(Cg);
        return arrank_errorf(err, ARRANK_ENOMEM, "no memory for a nonlinear fit of %zu points", n);
    }
    const gsl_vector *f = gsl_multifit_nlinear_residual(work);
    gsl_blas_dgemv(CblasTrans, 1.0, gsl_multifit_nlinear_jac(work), f, 0.0, g);
    gsl_blas_dsymv(CblasUpper, 1.0, covm, g, 0.0, Cg);
    double proj2;
    gsl_blas_ddot(g, Cg, &proj2);
    gsl_vector_free(g);
    gsl_vector_free(Cg);
    const double orth2 = fmax(rss - proj2, DBL_MIN);
    const double offset = sqrt(fmax(proj2, 0) / (double)p) / sqrt(orth2 / dof);
    if (offset <= RELATIVE_OFFSET_TOL)
        return ARRANK_OK;
    if (stalled)
        return arrank_errorf(err, ARRANK_ENOCONV,
                             "the nonlinear fit did not converge after %zu iterations: %s",
                             iterations, gsl_strerror(stall_why));
    return arrank_errorf(err, ARRANK_ENOCONV,
                         "the nonlinear fit stopped away from a minimum after %zu "
                         "iterations (relative offset %.2g > %g; %zu trial points were "
                         "outside the model's domain)",
                         iterations, offset, RELATIVE_OFFSET_TOL, refused);
}

/* Step 2 of arrank_nlfit_run: from a start inside the model's domain, the
   trust-region driver.  A stop without convergence (*stalled, with the
   reason in *stall_why) is still accepted when the point is a minimum by the
   relative-offset test (nlfit_minimum): a start that is already the optimum
   makes no progress, yet is the answer. */
static arrank_status nlfit_drive(nl_problem *pb, const double *start, gsl_vector *x0,
                                 gsl_vector *wv, gsl_multifit_nlinear_workspace *work,
                                 const arrank_nlfit_options *opt, int *stalled, int *stall_why,
                                 size_t *iterations, arrank_error *err)
{
    const size_t n = pb->n, p = pb->p;
    for (size_t i = 0; i < n; i++) {
        double v = NAN;
        if (pb->model(start, i, pb->ctx, &v, NULL) != 0 || !isfinite(v))
            return arrank_errorf(err, ARRANK_EFIT,
                                 "the starting point is outside the model's domain "
                                 "(observation %zu)", i + 1);
    }
    gsl_multifit_nlinear_fdf fdf;
    memset(&fdf, 0, sizeof fdf);
    fdf.f = nl_f;
    fdf.df = nl_df;
    fdf.fvv = NULL; /* geodesic acceleration by finite differences of f */
    fdf.n = n;
    fdf.p = p;
    fdf.params = pb;
    int gs = wv ? gsl_multifit_nlinear_winit(x0, wv, &fdf, work)
                : gsl_multifit_nlinear_init(x0, &fdf, work);
    if (gs != GSL_SUCCESS || pb->grad_failed)
        return arrank_errorf(err, ARRANK_EFIT, "the nonlinear fit could not start: %s",
                             pb->grad_failed ? "the model's gradient is not finite at the start"
                                             : gsl_strerror(gs));
    int info = 0;
    gs = gsl_multifit_nlinear_driver(opt->max_iter, opt->xtol, opt->gtol, opt->ftol, NULL, NULL,
                                     &info, work);
    *iterations = gsl_multifit_nlinear_niter(work);
    if (gs == GSL_EMAXITER || gs == GSL_ENOPROG) {
        /* the driver returns EMAXITER with info ENOPROG when not one step succeeded */
        *stall_why = (gs == GSL_EMAXITER && info == GSL_ENOPROG) ? GSL_ENOPROG : gs;
        *stalled = 1;
        gs = GSL_SUCCESS;
    }
    if (gs != GSL_SUCCESS)
        return arrank_errorf(err, ARRANK_EFIT, "the nonlinear fit failed: %s", gsl_strerror(gs));
    return ARRANK_OK;
}

arrank_status arrank_nlfit_run(arrank_model_fn model, void *ctx, size_t n_params, const double *y,
                               const double *w, size_t n, const double *start,
                               const arrank_nlfit_options *options, arrank_nlfit *out,
                               arrank_error *err)
{
    if (!model || !y || !start || !out || n_params == 0)
        return arrank_errorf(err, ARRANK_EINVAL, "'nonlinear fit' needs a model, data, a "
                                                 "starting point and a result record");
    memset(out, 0, sizeof *out);
    const arrank_nlfit_options opt = options ? *options : arrank_nlfit_defaults();
    arrank_status st = nlfit_check(n_params, y, w, n, start, &opt, err);
    if (st != ARRANK_OK)
        return st;

    const size_t p = n_params;
    nl_problem pb = { model, ctx, y, n, p, NULL, 0, 0 };
    gsl_multifit_nlinear_workspace *work = NULL;
    gsl_vector *x0 = gsl_vector_alloc(p);
    gsl_vector *wv = w ? gsl_vector_alloc(n) : NULL;
    gsl_vector *scale = gsl_vector_alloc(p);
    gsl_matrix *covm = gsl_matrix_alloc(p, p);
    gsl_matrix *Js = gsl_matrix_alloc(n, p);
    pb.par = malloc(p * sizeof *pb.par);
    out->params = malloc(p * sizeof *out->params);
    out->se = malloc(p * sizeof *out->se);
    out->cov = malloc(p * p * sizeof *out->cov);

    gsl_multifit_nlinear_parameters fp = gsl_multifit_nlinear_default_parameters();
    /* LM with geodesic acceleration (Transtrum & Sethna, arXiv:1201.5885, 2012) or plain LM;
     * More's scaling makes the steps invariant to the units of the parameters. */
    fp.trs = opt.geodesic ? gsl_multifit_nlinear_trs_lmaccel : gsl_multifit_nlinear_trs_lm;
    fp.scale = gsl_multifit_nlinear_scale_more;
    fp.solver = gsl_multifit_nlinear_solver_qr;
    if (x0 && (!w || wv) && scale && covm && Js && pb.par && out->params && out->se && out->cov)
        work = gsl_multifit_nlinear_alloc(gsl_multifit_nlinear_trust, &fp, n, p);
    if (!work) {
        st = arrank_errorf(err, ARRANK_ENOMEM, "no memory for a nonlinear fit of %zu points",
                           n);
        goto done;
    }
    for (size_t k = 0; k < p; k++)
        gsl_vector_set(x0, k, start[k]);
    for (size_t i = 0; w && i < n; i++)
        gsl_vector_set(wv, i, w[i]);

    int stalled = 0, stall_why = 0;
    st = nlfit_drive(&pb, start, x0, wv, work, &opt, &stalled, &stall_why, &out->iterations, err);
    if (st != ARRANK_OK)
        goto done;
    if (pb.grad_failed) {
        st = arrank_errorf(err, ARRANK_EFIT, "the model's gradient failed at an accepted point");
        goto done;
    }
    const gsl_vector *x = gsl_multifit_nlinear_position(work);
    const gsl_vector *f = gsl_multifit_nlinear_residual(work);
    double rss;
    gsl_blas_ddot(f, f, &rss);
    if (!isfinite(rss) || rss >= OUT_OF_DOMAIN_RESIDUAL) {
        st = arrank_errorf(err, ARRANK_EFIT, "the nonlinear fit ended outside the model's "
                                             "domain");
        goto done;
    }
    if (jacobian_covariance(gsl_multifit_nlinear_jac(work), x, covm, scale, Js) != 0) {
        st = arrank_errorf(err, ARRANK_EFIT,
                           "the jacobian is singular at the solution; a parameter has no "
                           "effect there or the parameters are not separable from these data");
        goto done;
    }
    st = nlfit_minimum(work, covm, y, w, n, p, rss, stalled, stall_why, pb.refused,
                       out->iterations, err);
    if (st != ARRANK_OK)
        goto done;
    /* covariance s^2 (J'WJ)^-1 with s^2 = rss/dof, for an unknown error scale */
    const double dof = (double)(n - p);
    const double s2 = rss / dof;
    for (size_t k = 0; k < p; k++) {
        out->params[k] = gsl_vector_get(x, k);
        for (size_t j = 0; j < p; j++)
            out->cov[k * p + j] = s2 * gsl_matrix_get(covm, k, j);
        out->se[k] = sqrt(out->cov[k * p + k]);
    }
    out->n_params = p;
    out->rss = rss;
    out->dof = dof;

done:
    if (st != ARRANK_OK) {
        const size_t iterations = out->iterations;
        arrank_nlfit_clear(out);
        out->iterations = iterations;
    }
    gsl_multifit_nlinear_free(work);
    gsl_matrix_free(Js);
    gsl_matrix_free(covm);
    gsl_vector_free(scale);
    gsl_vector_free(wv);
    gsl_vector_free(x0);
    free(pb.par);
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

/* Step 1 of arrank_fit_arrhenius: the points are fit to be fitted; their
   temperature range in *T_min, *T_max. */
static arrank_status arrhenius_check(const double *temp_K, const double *rate, size_t n,
                                     double *T_min_out, double *T_max_out, arrank_error *err)
{
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
    *T_min_out = T_min;
    *T_max_out = T_max;
    return ARRANK_OK;
}

/* Step 3 of arrank_fit_arrhenius: the fit record from the centred line
   y = b0 + b1 (1/T - u_mean) and its covariance [c00 c01; c01 c11]. */
static void arrhenius_store(arrank_arrhenius *fit, size_t n, int weighted, double u_mean,
                            double b0, double b1, double c00, double c01, double c11, double s2)
{
    fit->n = n;
    fit->weighted = weighted;
    fit->T_ref_K = 1.0 / u_mean;
    fit->b0 = b0;
    fit->b1 = b1;
    fit->cov[0][0] = c00;
    fit->cov[1][1] = c11;
    fit->cov[0][1] = fit->cov[1][0] = c01;
    fit->dof = (double)(n - 2);
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
    fit->chi2_dof = weighted ? s2 : NAN;
}

arrank_status arrank_fit_arrhenius(const double *temp_K, const double *rate, const double *rate_sd,
                                   size_t n, arrank_arrhenius *fit, arrank_error *err)
{
    if (!fit || (n > 0 && (!temp_K || !rate)))
        return arrank_errorf(err, ARRANK_EINVAL, "'arrhenius fit' needs temperatures, rates "
                                                 "and a result record");
    double T_min = NAN, T_max = NAN;
    arrank_status st = arrhenius_check(temp_K, rate, n, &T_min, &T_max, err);
    if (st != ARRANK_OK)
        return st;

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
     * Step 2: covariance s^2 (X'WX)^-1 with s^2 = chi2/dof, the convention for an
     * unknown error scale (the weights give relative precision only); the
     * same as SciPy curve_fit with absolute_sigma=False.
     */
    const double s2 = rss / dof;
    const double c00 = s2 * swxx / det, c11 = s2 * sw / det, c01 = -s2 * swx / det;

    memset(fit, 0, sizeof *fit);
    arrhenius_store(fit, n, weighted, u_mean, b0, b1, c00, c01, c11, s2);
    fit->T_min_K = T_min;
    fit->T_max_K = T_max;
    /* swyy is the weighted total sum of squares about the weighted mean. */
    fit->r2 = swyy > 0 ? 1.0 - rss / swyy : NAN;
    free(w);
    return ARRANK_OK;
}

/*
 * A temperature equal to T_min or T_max up to rounding (e.g. a temperature
 * converted from degC and back) is inside the measured range.
 */
#define EXTRAPOLATION_REL_TOL 1e-9

/* The checks both predict functions make (fit_internal.h): this one and models.c's. */
arrank_status arrank_predict_check(int have_fit, double temp_K, double confidence,
                                   const arrank_prediction *pred, arrank_error *err)
{
    if (!have_fit || !pred)
        return arrank_errorf(err, ARRANK_EINVAL, "'predict' needs a fit and a result record");
    if (!isfinite(temp_K) || temp_K <= 0)
        return arrank_errorf(err, ARRANK_EINVAL,
                             "temperature '%g K' is not a positive absolute temperature", temp_K);
    if (!(confidence > 0 && confidence < 1))
        return arrank_errorf(err, ARRANK_EINVAL,
                             "confidence '%g' is not between 0 and 1 (exclusive)", confidence);
    return ARRANK_OK;
}

/* The interval and the range test both predict functions give (fit_internal.h). */
void arrank_predict_fill(double temp_K, double confidence, double dof, double T_min_K,
                         double T_max_K, double ln_r, double se, arrank_prediction *pred)
{
    const double t = arrank_t_quantile(confidence, dof);
    memset(pred, 0, sizeof *pred);
    pred->temp_K = temp_K;
    pred->ln_rate = ln_r;
    pred->ln_rate_se = se;
    pred->rate = exp(ln_r);
    pred->rate_lo = exp(ln_r - t * se);
    pred->rate_hi = exp(ln_r + t * se);
    pred->extrapolated = temp_K < T_min_K * (1.0 - EXTRAPOLATION_REL_TOL) ||
                         temp_K > T_max_K * (1.0 + EXTRAPOLATION_REL_TOL);
    /* how far out, in kelvin and against the span measured */
    const double out_K = temp_K < T_min_K ? T_min_K - temp_K : temp_K > T_max_K ? temp_K - T_max_K : 0.0;
    pred->extrapolation_K = pred->extrapolated ? out_K : 0.0;
    pred->extrapolation_rel =
        pred->extrapolated && T_max_K > T_min_K ? out_K / (T_max_K - T_min_K) : 0.0;
}

arrank_status arrank_fit_predict(const arrank_arrhenius *fit, double temp_K, double confidence,
                                 arrank_prediction *pred, arrank_error *err)
{
    const arrank_status st = arrank_predict_check(fit != NULL, temp_K, confidence, pred, err);
    if (st != ARRANK_OK)
        return st;
    if (!(fit->dof > 0) || !(fit->T_ref_K > 0))
        return arrank_errorf(err, ARRANK_EINVAL, "'predict' was given an empty fit");

    /* Delta method, var = cov00 + x^2 cov11 + 2 x cov01 (fit.h; README "The numbers"). */
    const double x = 1.0 / temp_K - 1.0 / fit->T_ref_K;
    const double ln_r = fit->b0 + fit->b1 * x;
    const double var = fit->cov[0][0] + x * x * fit->cov[1][1] + 2.0 * x * fit->cov[0][1];
    arrank_predict_fill(temp_K, confidence, fit->dof, fit->T_min_K, fit->T_max_K, ln_r,
                        sqrt(var > 0 ? var : 0), pred);
    return ARRANK_OK;
}
