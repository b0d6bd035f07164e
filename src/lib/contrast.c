/*
 * contrast.c - differences of independent estimates with Welch's degrees of
 * freedom, and Welch's test of equal means (arrank/contrast.h).  Numbers in,
 * numbers out: the reference catalyst, several campaigns and `compare` all
 * come here for their intervals and p-values.
 */
#include "arrank/contrast.h"

#include <math.h>

#include "stats.h"

double arrank_contrast_welch_dof(double se_a, double dof_a, double se_b, double dof_b)
{
    if (!(se_a >= 0.0) || !(se_b >= 0.0) || !isfinite(se_a) || !isfinite(se_b))
        return NAN;
    const double va = se_a * se_a, vb = se_b * se_b, v = va + vb;
    /* Welch (1947), Satterthwaite (1946): v^2 / sum v_i^2 / dof_i */
    double den = 0.0;
    if (va > 0.0 && isfinite(dof_a))
        den += va * va / dof_a;
    if (vb > 0.0 && isfinite(dof_b))
        den += vb * vb / dof_b;
    if (!(den > 0.0))
        return INFINITY;
    return v * v / den;
}

arrank_contrast arrank_contrast_diff(double a, double se_a, double dof_a, double b, double se_b,
                                     double dof_b, double confidence)
{
    arrank_contrast c = {NAN, NAN, NAN, NAN, NAN, NAN, NAN, NAN};
    if (!isfinite(a) || !isfinite(b) || !(dof_a > 0.0) || !(dof_b > 0.0))
        return c;
    const double dof = arrank_contrast_welch_dof(se_a, dof_a, se_b, dof_b);
    if (isnan(dof))
        return c;
    c.est = a - b;
    c.se = sqrt(se_a * se_a + se_b * se_b);
    c.dof = dof;
    c.t = arrank_t_quantile(confidence, dof);
    c.lo = c.est - c.t * c.se;
    c.hi = c.est + c.t * c.se;
    if (c.se > 0.0) {
        const double t = c.est / c.se;
        c.p = arrank_stats_t_p(t, dof);
        /* P(T < t) from the two-sided tail: 1 - p/2 above 0, p/2 below */
        c.p_greater = t >= 0.0 ? 1.0 - c.p / 2.0 : c.p / 2.0;
    } else {
        c.p = c.est == 0.0 ? 1.0 : 0.0;
        c.p_greater = c.est > 0.0 ? 1.0 : c.est < 0.0 ? 0.0 : 0.5;
    }
    return c;
}

arrank_status arrank_contrast_equal_test(const double *y, const double *se, const double *dof,
                                         size_t k, arrank_contrast_equal *out,
                                         arrank_error *err)
{
    out->F = out->df1 = out->df2 = out->p = NAN;
    if (k < 2)
        return arrank_errorf(err, ARRANK_EINVAL, "a test of equality needs 2 or more "
                                                 "estimates, got %zu", k);
    double W = 0.0, wy = 0.0;
    for (size_t i = 0; i < k; i++) {
        if (!(se[i] > 0.0) || !isfinite(se[i]) || !isfinite(y[i]) || !(dof[i] > 0.0))
            return arrank_errorf(err, ARRANK_EINVAL,
                                 "estimate %zu has no usable standard error", i + 1);
        const double w = 1.0 / (se[i] * se[i]);
        W += w;
        wy += w * y[i];
    }
    const double ybar = wy / W;
    double A = 0.0, L = 0.0;
    for (size_t i = 0; i < k; i++) {
        const double w = 1.0 / (se[i] * se[i]), d = y[i] - ybar, u = 1.0 - w / W;
        A += w * d * d;
        if (isfinite(dof[i]))
            L += u * u / dof[i];
    }
    /* Welch (1951), eqs. as in the header */
    const double kk = (double)k;
    out->df1 = kk - 1.0;
    out->df2 = L > 0.0 ? (kk * kk - 1.0) / (3.0 * L) : INFINITY;
    out->F = (A / (kk - 1.0)) / (1.0 + 2.0 * (kk - 2.0) * L / (kk * kk - 1.0));
    out->p = isfinite(out->df2) ? arrank_stats_f_q(out->F, out->df1, out->df2)
                                : arrank_stats_chi2_q(A, out->df1);
    return ARRANK_OK;
}
