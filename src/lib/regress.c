/*
 * regress.c - the diagnosis's regressions of y = ln r on x = 1/T over a
 * subset of one sample's points (regress.h): weighted straight lines and the
 * quadratic in closed form, the small QR path that checks them and takes
 * ill-conditioned sets, and the points in temperature order and set-point
 * groups.
 *
 * Every regression uses the sample's weights ((r/sd)^2 when every point has
 * rate_sd, else 1), centred on the weighted mean of x and scaled by the
 * weighted spread of x so that the design matrix is well conditioned.
 */
#include "regress.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/fit.h"
#include "regress_testing.h"

/* Temperatures closer than this are one set point: rigs step by 5-25 K and
   hit a set point within about 1 K (common practice). */
#define SAME_TEMP_K 2.0

static const double R = ARRANK_R_J_MOL_K;

/* Sort indices by temperature, ties by file order.  The points are per
   thread: samples are diagnosed on several threads (analysis.c). */
static _Thread_local const arrank_point *sort_pts;

static int by_temp(const void *a, const void *b)
{
    size_t i = *(const size_t *)a, j = *(const size_t *)b;
    double ti = sort_pts[i].temp_K, tj = sort_pts[j].temp_K;
    if (ti < tj)
        return -1;
    if (ti > tj)
        return 1;
    return (i > j) - (i < j);
}

/* Below this many points an insertion sort beats qsort's set-up. */
#define SMALL_SORT 24

void arrank_regress_sort(const arrank_point *pts, size_t *idx, size_t n)
{
    if (n > SMALL_SORT) {
        sort_pts = pts;
        qsort(idx, n, sizeof *idx, by_temp);
        return;
    }
    /* Same order as by_temp: strictly lower T moves left; equal T keeps index order. */
    for (size_t k = 1; k < n; k++) {
        size_t v = idx[k], j = k;
        while (j > 0 && (pts[idx[j - 1]].temp_K > pts[v].temp_K ||
                         (pts[idx[j - 1]].temp_K == pts[v].temp_K && idx[j - 1] > v))) {
            idx[j] = idx[j - 1];
            j--;
        }
        idx[j] = v;
    }
}

/* Group ids of idx[0..n) (sorted by T): a new group when T moves on by more
   than SAME_TEMP_K from the group's first point.  Returns the group count. */
size_t arrank_regress_groups(const arrank_point *pts, const size_t *idx, size_t n, size_t *group)
{
    size_t g = 0;
    double start = NAN;
    for (size_t k = 0; k < n; k++) {
        double t = pts[idx[k]].temp_K;
        if (k == 0)
            start = t;
        else if (t - start > SAME_TEMP_K) {
            g++;
            start = t;
        }
        group[k] = g;
    }
    return n ? g + 1 : 0;
}

size_t arrank_regress_count_temps(const arrank_point *pts, const size_t *idx, size_t n)
{
    /* Every caller passes a set sorted by temperature: count in one pass. */
    int sorted = 1;
    for (size_t k = 1; k < n && sorted; k++)
        sorted = !(pts[idx[k]].temp_K < pts[idx[k - 1]].temp_K);
    if (sorted) {
        size_t c = 0;
        double start = NAN;
        for (size_t k = 0; k < n; k++) {
            double t = pts[idx[k]].temp_K;
            if (k == 0 || t - start > SAME_TEMP_K) {
                c++;
                start = t;
            }
        }
        return c;
    }
    size_t *tmp = malloc((n ? n : 1) * sizeof *tmp);
    size_t *g = malloc((n ? n : 1) * sizeof *g);
    size_t c = 0;
    if (tmp && g) {
        memcpy(tmp, idx, n * sizeof *tmp);
        arrank_regress_sort(pts, tmp, n);
        c = arrank_regress_groups(pts, tmp, n, g);
    }
    free(tmp);
    free(g);
    return c;
}

int arrank_regress_scale(const arrank_dwork *wk, const size_t *idx, size_t n, arrank_xscale *sc)
{
    double sw = 0, swx = 0;
    for (size_t k = 0; k < n; k++) {
        sw += wk->w[idx[k]];
        swx += wk->w[idx[k]] * wk->x[idx[k]];
    }
    if (!(sw > 0))
        return -1;
    sc->xm = swx / sw;
    double ss = 0;
    for (size_t k = 0; k < n; k++) {
        double u = wk->x[idx[k]] - sc->xm;
        ss += wk->w[idx[k]] * u * u;
    }
    sc->sx = sqrt(ss / sw);
    sc->sxx = ss;
    return sc->sx > 0 ? 0 : -1;
}

/*
 * Weighted fit of y on [1, z, z^2 (quad), extra] over idx, z = (x - xm)/sx.
 * extra (may be NULL) is one more column, indexed like idx.  b[p], cov[p*p]
 * (scaled by s^2 = rss/(n - p)), *rss.  Returns p, or 0 when the fit is
 * impossible (n <= p, a value not finite, or a singular design).
 *
 * At most three columns, so the fit is solved here without allocation or a
 * general engine: a QR factorisation A = Q R in the weighted inner product
 * (Q'WQ = I) by modified Gram-Schmidt, each column orthogonalised twice
 * against the ones before ("twice is enough": Giraud, Langou & Rozloznik,
 * Comput. Math. Appl. 50:1069, 2005, from memory), then b = R^-1 Q'W y by back
 * substitution and cov = s^2 R^-1 R^-T (Bjorck, Numerical Methods for Least
 * Squares Problems, SIAM 1996, sec. 2.4, from memory).  With the columns
 * centred and scaled as here, this is as accurate as the SVD that
 * arrank_linfit uses.  A column whose part orthogonal to the ones before has
 * a weighted norm below max(n, p) eps times its own norm makes the design
 * singular, the counterpart of arrank_linfit's numerical-rank test.  The
 * columns go to wk->lsq, 3 np doubles owned by the diagnosis.
 */
#define LSQ_MAXP 3

/* 0 (the default): straight lines by fit_line_direct and the quadratic test
   by quad_fit_direct; 1: both by the general Gram-Schmidt path below
   (arrank_regress_reference, regress_testing.h). */
static int line_reference = 0;

void arrank_regress_reference(int on)
{
    line_reference = on;
}

int arrank_regress_design(const arrank_dwork *wk, const size_t *idx, size_t n,
                          const arrank_xscale *sc, int quad, const double *extra, double *b,
                          double *cov, double *rss)
{
    const size_t p = 2 + (quad ? 1 : 0) + (extra ? 1 : 0);
    if (n <= p || p > LSQ_MAXP)
        return 0;
    double *q[LSQ_MAXP] = {wk->lsq, wk->lsq + n, wk->lsq + 2 * n};
    for (size_t k = 0; k < n; k++) {
        const size_t i = idx[k];
        const double z = (wk->x[i] - sc->xm) / sc->sx;
        q[0][k] = 1.0;
        q[1][k] = z;
        if (p == 3)
            q[2][k] = quad ? z * z : extra[k];
        if (!isfinite(wk->y[i]) || !isfinite(wk->w[i]) || wk->w[i] < 0 || !isfinite(z) ||
            (p == 3 && !isfinite(q[2][k])))
            return 0;
    }
    const double tol = (double)(n > p ? n : p) * DBL_EPSILON;
    double Rq[LSQ_MAXP][LSQ_MAXP] = {{0}};
    for (size_t c = 0; c < p; c++) {
        double norm0 = 0;
        for (size_t k = 0; k < n; k++)
            norm0 += wk->w[idx[k]] * q[c][k] * q[c][k];
        norm0 = sqrt(norm0);
        for (int pass = 0; pass < 2; pass++)
            for (size_t j = 0; j < c; j++) {
                double r = 0;
                for (size_t k = 0; k < n; k++)
                    r += wk->w[idx[k]] * q[j][k] * q[c][k];
                for (size_t k = 0; k < n; k++)
                    q[c][k] -= r * q[j][k];
                Rq[j][c] += r;
            }
        double norm = 0;
        for (size_t k = 0; k < n; k++)
            norm += wk->w[idx[k]] * q[c][k] * q[c][k];
        norm = sqrt(norm);
        if (!(norm > tol * norm0))
            return 0;
        Rq[c][c] = norm;
        for (size_t k = 0; k < n; k++)
            q[c][k] /= norm;
    }
    /* Q'W y: Q is orthonormal to working precision after the second pass */
    double qy[LSQ_MAXP];
    for (size_t c = 0; c < p; c++) {
        double r = 0;
        for (size_t k = 0; k < n; k++)
            r += wk->w[idx[k]] * q[c][k] * wk->y[idx[k]];
        qy[c] = r;
    }
    /* R^-1, upper triangular, and b = R^-1 Q'W y */
    double Ri[LSQ_MAXP][LSQ_MAXP] = {{0}};
    for (size_t c = p; c-- > 0;) {
        Ri[c][c] = 1.0 / Rq[c][c];
        for (size_t j = c + 1; j < p; j++) {
            double s = 0;
            for (size_t m = c + 1; m <= j; m++)
                s += Rq[c][m] * Ri[m][j];
            Ri[c][j] = -s / Rq[c][c];
        }
    }
    for (size_t c = 0; c < p; c++) {
        double s = 0;
        for (size_t j = c; j < p; j++)
            s += Ri[c][j] * qy[j];
        b[c] = s;
    }
    /* residuals from the original columns */
    double chi2 = 0;
    for (size_t k = 0; k < n; k++) {
        const size_t i = idx[k];
        const double z = (wk->x[i] - sc->xm) / sc->sx;
        double f = b[0] + b[1] * z;
        if (p == 3)
            f += b[2] * (quad ? z * z : extra[k]);
        const double e = wk->y[i] - f;
        chi2 += wk->w[i] * e * e;
    }
    const double s2 = chi2 / (double)(n - p);
    for (size_t r = 0; r < p; r++)
        for (size_t c = 0; c < p; c++) {
            double s = 0;
            for (size_t m = (r > c ? r : c); m < p; m++)
                s += Ri[r][m] * Ri[c][m];
            cov[r * p + c] = s2 * s;
        }
    *rss = chi2;
    return (int)p;
}

/*
 * The straight line in closed form, the two-pass centred formulas (Bjorck,
 * Numerical Methods for Least Squares Problems, 1996, sec. 2.4, from memory),
 * in three passes: the weighted means xm and ybar; Sxx = sum w (x - xm)^2 and
 * Sxy = sum w (x - xm)(y - ybar); the residuals.  Then b1 = Sxy/Sxx per K,
 * b0 = ybar at x = xm, and in arrank_regress_design's scaled terms (z = (x - xm)/sx,
 * whose weighted mean is 0 and Szz = W) var b0 = s^2/W, var b1 = s^2/W, no
 * covariance.  Most fits in a diagnosis are lines (local windows, kinetic
 * window, outliers); centred, nothing cancels, and tests/test_diagnose.c
 * compares every number with the general QR path.
 */
static int fit_line_direct(const arrank_dwork *wk, const size_t *idx, size_t n, arrank_line *lf)
{
    if (n <= 2)
        return -1;
    double sw = 0, swx = 0, swy = 0;
    int negative = 0;
    for (size_t k = 0; k < n; k++) {
        const size_t i = idx[k];
        const double w = wk->w[i];
        negative |= !(w >= 0);
        sw += w;
        swx += w * wk->x[i];
        swy += w * wk->y[i];
    }
    /* An x, y or w that is not finite makes its sum not finite (w x is NaN
       or infinite, 0 times infinity too, and infinities or NaN do not cancel
       back to a finite sum), so the three sums are checked instead of every
       point: the same sets are refused. */
    if (negative || !isfinite(sw) || !isfinite(swx) || !isfinite(swy) || !(sw > 0))
        return -1;
    const double xm = swx / sw, ybar = swy / sw;
    double sxx = 0, sxy = 0;
    for (size_t k = 0; k < n; k++) {
        const size_t i = idx[k];
        const double u = wk->x[i] - xm;
        sxx += wk->w[i] * u * u;
        sxy += wk->w[i] * u * (wk->y[i] - ybar);
    }
    const double sx = sqrt(sxx / sw);
    if (!(sx > 0) || !isfinite(sxx))
        return -1;
    const double b1 = sxy / sxx;
    double chi2 = 0;
    for (size_t k = 0; k < n; k++) {
        const size_t i = idx[k];
        const double e = wk->y[i] - ybar - b1 * (wk->x[i] - xm);
        chi2 += wk->w[i] * e * e;
    }
    lf->sc.xm = xm;
    lf->sc.sx = sx;
    lf->sc.sxx = sxx;
    lf->b0 = ybar;
    lf->b1_K = b1;
    lf->ea_J_mol = -R * b1;
    lf->rss = chi2;
    lf->dof = (double)n - 2.0;
    lf->s2 = chi2 / lf->dof;
    lf->ea_se_J_mol = R * sqrt(lf->s2 / sxx);
    lf->cov[0] = lf->cov[3] = lf->s2 / sw;
    lf->cov[1] = lf->cov[2] = 0.0;
    return 0;
}

int arrank_regress_line(const arrank_dwork *wk, const size_t *idx, size_t n, arrank_line *lf)
{
    if (!line_reference)
        return fit_line_direct(wk, idx, n, lf);
    if (arrank_regress_scale(wk, idx, n, &lf->sc) != 0)
        return -1;
    double b[2], cov[4], rss;
    if (arrank_regress_design(wk, idx, n, &lf->sc, 0, NULL, b, cov, &rss) != 2)
        return -1;
    lf->b0 = b[0];
    lf->b1_K = b[1] / lf->sc.sx;
    lf->ea_J_mol = -R * lf->b1_K;
    lf->ea_se_J_mol = R * sqrt(cov[3]) / lf->sc.sx;
    lf->rss = rss;
    lf->dof = (double)n - 2.0;
    lf->s2 = rss / lf->dof;
    memcpy(lf->cov, cov, sizeof lf->cov);
    return 0;
}

double arrank_regress_line_at(const arrank_line *lf, double x)
{
    return lf->b0 + lf->b1_K * (x - lf->sc.xm);
}

/*
 * The quadratic test's fit of y on [1, z, z^2] in closed form: the weighted
 * moments of z and of y - ybar in two passes, the 3x3 normal equations by
 * Cholesky, the residuals in a third pass, cov = s^2 G^-1 with G the Gram
 * matrix (Bjorck 1996, sec. 2.1, from memory).  Normal equations square the
 * condition number of the design, so they are used only where it is small:
 * with z centred and scaled, G is within a factor of a few of diagonal unless
 * the temperatures sit in two clusters; when a pivot of the Cholesky falls
 * below QUAD_DIRECT_PIVOT of its diagonal (condition of G above about 1e3),
 * the general QR path (arrank_regress_design) takes the set instead, and decides on
 * singularity as before.  Returns 3 as arrank_regress_design, 0 where arrank_regress_design
 * returns 0 for values that are not finite, -1 to hand the set to
 * arrank_regress_design.  tests/test_diagnose.c (test_line_paths) compares every
 * number of the diagnosis with the QR path.
 */
#define QUAD_DIRECT_PIVOT 1e-3

static int quad_fit_direct(const arrank_dwork *wk, const size_t *idx, size_t n,
                           const arrank_xscale *sc, double b[3], double cov[9], double *rss)
{
    if (n <= 3)
        return 0;
    double *zs = wk->lsq; /* z per point, for the later passes */
    double sw = 0, swy = 0, s1 = 0, s2 = 0, s3 = 0, s4 = 0;
    for (size_t k = 0; k < n; k++) {
        const size_t i = idx[k];
        const double w = wk->w[i], y = wk->y[i];
        const double z = (wk->x[i] - sc->xm) / sc->sx, z2 = z * z;
        if (!isfinite(y) || !isfinite(w) || w < 0 || !isfinite(z) || !isfinite(z2))
            return 0;
        zs[k] = z;
        sw += w;
        swy += w * y;
        s1 += w * z;
        s2 += w * z2;
        s3 += w * z2 * z;
        s4 += w * z2 * z2;
    }
    if (!(sw > 0) || !isfinite(s4))
        return -1;
    const double ybar = swy / sw;
    double t0 = 0, t1 = 0, t2 = 0;
    for (size_t k = 0; k < n; k++) {
        const size_t i = idx[k];
        const double z = zs[k], wu = wk->w[i] * (wk->y[i] - ybar);
        t0 += wu;
        t1 += wu * z;
        t2 += wu * z * z;
    }
    /* G = L L' */
    const double l00 = sqrt(sw), l10 = s1 / l00, l20 = s2 / l00;
    const double d1 = s2 - l10 * l10;
    if (!(d1 > QUAD_DIRECT_PIVOT * s2))
        return -1;
    const double l11 = sqrt(d1), l21 = (s3 - l20 * l10) / l11;
    const double d2 = s4 - l20 * l20 - l21 * l21;
    if (!(d2 > QUAD_DIRECT_PIVOT * s4))
        return -1;
    const double l22 = sqrt(d2);
    /* L^-1 (lower), then b' = L^-T L^-1 t for y - ybar */
    const double m00 = 1.0 / l00, m11 = 1.0 / l11, m22 = 1.0 / l22;
    const double m10 = -l10 * m00 * m11, m21 = -l21 * m11 * m22;
    const double m20 = -(l20 * m00 + l21 * m10) * m22;
    const double u0 = m00 * t0, u1 = m10 * t0 + m11 * t1, u2 = m20 * t0 + m21 * t1 + m22 * t2;
    const double c2 = m22 * u2, c1 = m11 * u1 + m21 * u2, c0 = m00 * u0 + m10 * u1 + m20 * u2;
    double chi2 = 0;
    for (size_t k = 0; k < n; k++) {
        const size_t i = idx[k];
        const double z = zs[k];
        const double e = (wk->y[i] - ybar) - (c0 + c1 * z + c2 * z * z);
        chi2 += wk->w[i] * e * e;
    }
    b[0] = ybar + c0;
    b[1] = c1;
    b[2] = c2;
    const double s2r = chi2 / (double)(n - 3);
    const double m[3][3] = {{m00, 0, 0}, {m10, m11, 0}, {m20, m21, m22}};
    for (int r = 0; r < 3; r++)
        for (int c = 0; c < 3; c++) {
            double s = 0;
            for (int k = (r > c ? r : c); k < 3; k++)
                s += m[k][r] * m[k][c];
            cov[r * 3 + c] = s2r * s;
        }
    *rss = chi2;
    return 3;
}

int arrank_regress_quad(const arrank_dwork *wk, const size_t *idx, size_t n,
                        const arrank_xscale *sc, double b[3], double cov[9], double *rss)
{
    int p = line_reference ? -1 : quad_fit_direct(wk, idx, n, sc, b, cov, rss);
    if (p < 0)
        p = arrank_regress_design(wk, idx, n, sc, 1, NULL, b, cov, rss);
    return p;
}
