/*
 * diagnose.c - curvature, regimes, the kinetic window, transport criteria and
 * data-quality checks for one fitted sample (include/arrank/diagnose.h).
 *
 * The order of work: flag points above the conversion limit; test the
 * as-measured plot for curvature (quadratic term, series-resistance model,
 * local apparent Ea); compare runs and repeats and look for drift with time
 * on stream; find the kinetic window by trimming the hot end while it bends
 * or falls below the line through the colder points; classify every point;
 * look for outliers on the final fit; compute the Weisz-Prater and Mears
 * numbers from the metadata; then write each conclusion in plain words with
 * its evidence.  Thresholds are named below with their sources.
 *
 * All regressions are of y = ln r on x = 1/T with the sample's weights
 * ((r/sd)^2 when every point has rate_sd, else 1), centred on the weighted
 * mean of x and scaled by the weighted spread of x so that the design matrix
 * is well conditioned.
 */
#include "arrank/diagnose.h"

#include <ctype.h>
#include <float.h>
#include <jansson.h>
#include <math.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/fit.h"
#include "arrank/units.h"
#include "internal.h"
#include "number.h"
#include "stats.h"

/* ---- thresholds ----------------------------------------------------------- */

/* Level of the curvature test (two-sided).  2 %: low enough that the
   false-alarm rate stays well under the 5 % the project asks for (of 200
   straight data sets, more than 10 would be flagged with probability about
   0.3 %, binomial), high enough for useful power with 8-10 points (our
   choice; tests/test_diagnose.c measures both).  Power is low with few
   points: a bend that is not detected is not shown to be absent. */
#define CURVE_LEVEL 0.02
/* Once a bend is detected, the kinetic window grows from the cold end while
   each new temperature passes three one-sided tests at this level: where the
   bend starts is a milder question than whether there is one, and a window
   that stops a little early only widens the interval (our choice; the test
   suite measures the coverage of the refit's interval). */
#define TRIM_LEVEL 0.10
/* The quadratic test needs dof >= 2 and four distinct temperatures to mean
   anything (common practice: three parameters plus scatter). */
#define MIN_TEST_POINTS 5
#define MIN_TEST_TEMPS 4
/* Temperatures closer than this are one set point: rigs step by 5-25 K and
   hit a set point within about 1 K (common practice). */
#define SAME_TEMP_K 2.0
/* Exponent of the transport conductance k_t (T/T_ref)^m.  Gas film: k_c ~
   D^(2/3) and D ~ T^1.5-1.75 give m of about 1-1.2 (DOMAIN notes, after
   Adiabatic Fixed-Bed Reactors, sec. 2.6); over a 50-100 K span m cannot be
   fitted beside Ea, so it is fixed. */
#define SERIES_M 1.0
/* Grid for the conductance, ln k_t - max ln r, before the full fit. */
#define SERIES_GRID_LO (-0.5)
#define SERIES_GRID_HI 7.0
#define SERIES_GRID_STEP 0.25
/* Local apparent Ea below this: film-diffusion-like.  Film control gives
   4-12 kJ/mol in gases (Adiabatic Fixed-Bed Reactors, sec. 2.6); 20 kJ/mol
   is the usual "suspect" line (from memory; the issue quotes 10-20). */
#define FILM_EA_J_MOL 20000.0
/* Pore diffusion halves the apparent Ea in the strong limit (Weisz & Prater
   1954); for a first-order sphere E_app/E = 0.73 at phi = 3 and 0.56 at
   phi = 10 (DOMAIN notes, computed).  A local Ea between these fractions of
   the kinetic window's Ea is called pore-diffusion-like; 0.35 leaves room for
   scatter below the strong-limit half (our choice). */
#define PORE_RATIO_LO 0.35
#define PORE_RATIO_HI 0.80
/* A local Ea whose standard error exceeds this fraction of the window's Ea
   is too uncertain to classify (our choice). */
#define THIN_SE_FRAC 0.25
/* The kinetic window keeps at least this many temperatures (the few-points
   flag threshold, common practice). */
#define MIN_WINDOW_TEMPS 4
/* Runs, repeats and drift: two-sided 5 % test and at least a 5 % change
   ("loss > 5-10 % = flag", DOMAIN notes, from memory). */
#define RUN_LEVEL 0.05
#define RUN_MIN_CHANGE 0.05
/* |corr(1/T, time)| above this: drift and temperature cannot be separated. */
#define DRIFT_COLLINEAR 0.95
/* Outliers: externally studentized residual beyond the Bonferroni-corrected
   t quantile at family level 5 %; influence: Cook's distance above 1 (both
   common practice in regression diagnostics, e.g. Cook & Weisberg 1982,
   from memory). */
#define OUTLIER_FAMILY 0.05
#define COOK_LIMIT 1.0
/* Influential means Cook's distance above its limit and also off the line
   beyond the pointwise two-sided 1 % t quantile: in windows of 4-6 points an
   end point alone often has D > 1 (our choice). */
#define INFLUENCE_LEVEL 0.01
/* Weisz-Prater limits (eta >= 0.95) from Weisz & Prater (1954) and Weisz
   (1957) as tabulated by Madon & Boudart, Ind. Eng. Chem. Fundam. 21:438
   (1982): 6 for zero, 0.6 for first, 0.3 for second order.  With no order
   given we use 0.3, the general rule (Vannice, Kinetics of Catalytic
   Reactions, 2005). */
#define WP_LIMIT_ORDER0 6.0
#define WP_LIMIT_ORDER1 0.6
#define WP_LIMIT_ORDER2 0.3
#define WP_LIMIT_GENERAL 0.3
/* Mears criterion for external mass transfer, 5 % rate deviation (Mears 1971;
   the form credited to Hudgins 1972 in Madon & Boudart 1982). */
#define MEARS_LIMIT 0.15

static const double R = ARRANK_R_J_MOL_K;

/* ---- small helpers -------------------------------------------------------- */

const char *arrank_regime_name(arrank_regime regime)
{
    switch (regime) {
    case ARRANK_REGIME_KINETIC: return "kinetic";
    case ARRANK_REGIME_PORE: return "pore_diffusion";
    case ARRANK_REGIME_FILM: return "film_diffusion";
    case ARRANK_REGIME_UNCLASSIFIED: break;
    }
    return "unclassified";
}

const char *arrank_bend_name(arrank_bend bend)
{
    switch (bend) {
    case ARRANK_BEND_DOWN: return "concave-down";
    case ARRANK_BEND_UP: return "concave-up";
    case ARRANK_BEND_NONE: break;
    }
    return "none";
}

/* Working state of one diagnosis. */
typedef struct {
    const arrank_sample *s;
    const arrank_point *pt;
    size_t np;
    double *x, *y, *w; /* [np] 1/T, ln r, weight */
    arrank_diagnosis *d;
    double scatter; /* residual SD of ln r about the line on every point; NAN if weighted */
    int nomem;
    double *lsq; /* [3 np] columns for design_fit */
} work;

static char *vfmt(const char *f, va_list ap)
#if defined(__GNUC__)
    __attribute__((format(printf, 1, 0)))
#endif
    ;

static char *vfmt(const char *f, va_list ap)
{
    /* One formatting pass into a stack buffer covers every message we write;
       a longer one (a long sample name) is formatted again at its length. */
    char small[512];
    va_list ap2;
    va_copy(ap2, ap);
    int n = vsnprintf(small, sizeof small, f, ap2);
    va_end(ap2);
    if (n < 0)
        return NULL;
    char *s = malloc((size_t)n + 1);
    if (!s)
        return NULL;
    if ((size_t)n < sizeof small)
        memcpy(s, small, (size_t)n + 1);
    else
        vsnprintf(s, (size_t)n + 1, f, ap);
    return s;
}

static char *fmt(work *wk, const char *f, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

static char *fmt(work *wk, const char *f, ...)
{
    va_list ap;
    va_start(ap, f);
    char *s = vfmt(f, ap);
    va_end(ap);
    if (!s)
        wk->nomem = 1;
    return s;
}

static void push_str(work *wk, char ***arr, size_t *n, char *s)
{
    if (!s) {
        wk->nomem = 1;
        return;
    }
    char **a = realloc(*arr, (*n + 1) * sizeof *a);
    if (!a) {
        free(s);
        wk->nomem = 1;
        return;
    }
    a[(*n)++] = s;
    *arr = a;
}

static void finding(work *wk, const char *f, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

static void finding(work *wk, const char *f, ...)
{
    va_list ap;
    va_start(ap, f);
    push_str(wk, &wk->d->findings, &wk->d->n_findings, vfmt(f, ap));
    va_end(ap);
}

static void note(work *wk, const char *f, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

static void note(work *wk, const char *f, ...)
{
    va_list ap;
    va_start(ap, f);
    push_str(wk, &wk->d->notes, &wk->d->n_notes, vfmt(f, ap));
    va_end(ap);
}

/* A note made of the k texts joined: the one note every sample gets, built
   without a printf pass. */
static void note_join(work *wk, const char *const *parts, size_t k)
{
    size_t len = 0;
    for (size_t i = 0; i < k; i++)
        len += strlen(parts[i]);
    char *s = malloc(len + 1);
    if (s) {
        size_t o = 0;
        for (size_t i = 0; i < k; i++) {
            size_t m = strlen(parts[i]);
            memcpy(s + o, parts[i], m);
            o += m;
        }
        s[o] = '\0';
    }
    push_str(wk, &wk->d->notes, &wk->d->n_notes, s);
}

/* %zu of v into out (at least 21 bytes). */
static void size_t_text(char *out, size_t v)
{
    char tmp[24];
    size_t k = 0;
    do {
        tmp[k++] = (char)('0' + v % 10);
        v /= 10;
    } while (v);
    for (size_t i = 0; i < k; i++)
        out[i] = tmp[k - 1 - i];
    out[k] = '\0';
}

static void add_cause(work *wk, int supported, char *cause, char *evidence)
{
    arrank_curvature *cv = &wk->d->curvature;
    if (!cause || !evidence) {
        free(cause);
        free(evidence);
        wk->nomem = 1;
        return;
    }
    arrank_cause *a = realloc(cv->causes, (cv->n_causes + 1) * sizeof *a);
    if (!a) {
        free(cause);
        free(evidence);
        wk->nomem = 1;
        return;
    }
    cv->causes = a;
    a[cv->n_causes].cause = cause;
    a[cv->n_causes].evidence = evidence;
    a[cv->n_causes].supported = supported;
    cv->n_causes++;
}

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

static void sort_by_temp(const arrank_point *pts, size_t *idx, size_t n)
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
static size_t group_temps(const arrank_point *pts, const size_t *idx, size_t n, size_t *group)
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

static size_t count_temps(const arrank_point *pts, const size_t *idx, size_t n)
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
        sort_by_temp(pts, tmp, n);
        c = group_temps(pts, tmp, n, g);
    }
    free(tmp);
    free(g);
    return c;
}

/* Most steps the kinetic window takes from the cold end (see there). */
#define WINDOW_MAX_STEPS 256

/* Working arrays of a diagnosis up to this size live on the stack (about 60
   points); larger samples allocate them. */
#define SCRATCH_SMALL_BYTES 6144

/* ---- regressions ------------------------------------------------------------ */

/* Centre and scale of x over a set. */
typedef struct {
    double xm, sx, sxx; /* weighted mean, spread and sum of squares of x */
} xscale;

static int set_scale(const work *wk, const size_t *idx, size_t n, xscale *sc)
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
   (arrank_diagnose_line_reference, for tests). */
static int line_reference = 0;

void arrank_diagnose_line_reference(int on)
{
    line_reference = on;
}

static int design_fit(work *wk, const size_t *idx, size_t n, const xscale *sc, int quad,
                      const double *extra, double *b, double *cov, double *rss)
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

/* Straight line over idx: Ea, its se, slope b1 in K, rss, dof. 0 on success. */
typedef struct {
    xscale sc;
    double b0, b1_K, ea_J_mol, ea_se_J_mol, rss, dof, s2;
    double cov[4];
} line_fit;

/*
 * The straight line in closed form, the two-pass centred formulas (Bjorck,
 * Numerical Methods for Least Squares Problems, 1996, sec. 2.4, from memory),
 * in three passes: the weighted means xm and ybar; Sxx = sum w (x - xm)^2 and
 * Sxy = sum w (x - xm)(y - ybar); the residuals.  Then b1 = Sxy/Sxx per K,
 * b0 = ybar at x = xm, and in design_fit's scaled terms (z = (x - xm)/sx,
 * whose weighted mean is 0 and Szz = W) var b0 = s^2/W, var b1 = s^2/W, no
 * covariance.  Most fits in a diagnosis are lines (local windows, kinetic
 * window, outliers); centred, nothing cancels, and tests/test_diagnose.c
 * compares every number with the general QR path.
 */
static int fit_line_direct(const work *wk, const size_t *idx, size_t n, line_fit *lf)
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

static int fit_line(work *wk, const size_t *idx, size_t n, line_fit *lf)
{
    if (!line_reference)
        return fit_line_direct(wk, idx, n, lf);
    if (set_scale(wk, idx, n, &lf->sc) != 0)
        return -1;
    double b[2], cov[4], rss;
    if (design_fit(wk, idx, n, &lf->sc, 0, NULL, b, cov, &rss) != 2)
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

static double line_at(const line_fit *lf, double x)
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
 * the general QR path (design_fit) takes the set instead, and decides on
 * singularity as before.  Returns 3 as design_fit, 0 where design_fit
 * returns 0 for values that are not finite, -1 to hand the set to
 * design_fit.  tests/test_diagnose.c (test_line_paths) compares every
 * number of the diagnosis with the QR path.
 */
#define QUAD_DIRECT_PIVOT 1e-3

static int quad_fit_direct(work *wk, const size_t *idx, size_t n, const xscale *sc, double b[3],
                           double cov[9], double *rss)
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

/* Quadratic test over idx. */
typedef struct {
    double c_K2, c_se_K2, t, p, dof, ea_cold, ea_hot;
} quad_test;

static int fit_quad(work *wk, const size_t *idx, size_t n, quad_test *q)
{
    xscale sc;
    if (n < MIN_TEST_POINTS || count_temps(wk->pt, idx, n) < MIN_TEST_TEMPS ||
        set_scale(wk, idx, n, &sc) != 0)
        return -1;
    double b[3], cov[9], rss;
    int p = line_reference ? -1 : quad_fit_direct(wk, idx, n, &sc, b, cov, &rss);
    if (p < 0)
        p = design_fit(wk, idx, n, &sc, 1, NULL, b, cov, &rss);
    if (p != 3)
        return -1;
    q->dof = (double)n - 3.0;
    double se = sqrt(cov[8]);
    q->t = se > 0 ? b[2] / se : (b[2] < 0 ? -INFINITY : b[2] > 0 ? INFINITY : 0.0);
    q->p = arrank_stats_t_p(q->t, q->dof);
    q->c_K2 = b[2] / (sc.sx * sc.sx);
    q->c_se_K2 = se / (sc.sx * sc.sx);
    double xmin = INFINITY, xmax = -INFINITY;
    for (size_t k = 0; k < n; k++) {
        xmin = fmin(xmin, wk->x[idx[k]]);
        xmax = fmax(xmax, wk->x[idx[k]]);
    }
    double b1 = b[1] / sc.sx;
    /* E(T) = -R dy/dx = -R (b1 + 2 c (x - xm)) (DOMAIN notes, local slopes) */
    q->ea_cold = -R * (b1 + 2.0 * q->c_K2 * (xmax - sc.xm));
    q->ea_hot = -R * (b1 + 2.0 * q->c_K2 * (xmin - sc.xm));
    return 0;
}

static int bends_down(const quad_test *q)
{
    return q->p < CURVE_LEVEL && q->t < 0;
}

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
 * of the general engine it replaced (arrank_diagnose_series_reference).
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

/* test switches (internal.h) */
static int series_reference = 0; /* 1: the profile with arrank_nlfit_run */
static int series_full_fit = 1;  /* 0: report the profile's best point */

void arrank_diagnose_series_reference(int on)
{
    series_reference = on;
}

void arrank_diagnose_series_full_fit(int on)
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
   replaced (arrank_diagnose_series_reference).  0, or -1 when out of
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
 * those of the general engine to its tolerances (arrank_diagnose_series_reference
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
 * design_fit); singular when a diagonal of R is at most max(n, 3) DBL_EPSILON
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

static void fit_series(work *wk, const size_t *idx, size_t n, const line_fit *lf,
                       arrank_curvature *cv)
{
    cv->series_m = SERIES_M;
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
        lt0[k] = SERIES_M * log(wk->pt[i].temp_K * lf->sc.xm);
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

/* ---- local apparent Ea ------------------------------------------------------ */

/* Windows of three neighbouring temperatures over sorted idx with groups g. */
static void local_windows(work *wk, const size_t *idx, const size_t *g, size_t n, size_t n_groups,
                          arrank_curvature *cv)
{
    if (n_groups < 3)
        return;
    size_t nw = n_groups - 2;
    cv->local = calloc(nw, sizeof *cv->local);
    if (!cv->local) {
        wk->nomem = 1;
        return;
    }
    /* g rises along idx, so window k (groups k..k+2) is the run idx[lo..hi):
       two pointers that only move forward keep this linear in n */
    size_t lo = 0, hi = 0;
    for (size_t k = 0; k < nw; k++) {
        while (lo < n && g[lo] < k)
            lo++;
        if (hi < lo)
            hi = lo;
        while (hi < n && g[hi] <= k + 2)
            hi++;
        const size_t *sel = idx + lo, m = hi - lo;
        arrank_local_ea *le = &cv->local[k];
        line_fit lf;
        le->n_points = m;
        le->temp_lo_K = wk->pt[sel[0]].temp_K;
        le->temp_hi_K = wk->pt[sel[m - 1]].temp_K;
        le->ea_J_mol = le->ea_se_J_mol = le->temp_mid_K = NAN;
        if (fit_line(wk, sel, m, &lf) == 0) {
            le->ea_J_mol = lf.ea_J_mol;
            le->ea_se_J_mol = lf.dof > 0 ? lf.ea_se_J_mol : NAN;
            le->temp_mid_K = 1.0 / lf.sc.xm;
        }
    }
    cv->n_local = nw;
}

/* Local window index for group gi. */
static size_t window_of(size_t gi, size_t n_groups)
{
    size_t k = gi > 0 ? gi - 1 : 0;
    return k + 2 < n_groups ? k : n_groups - 3;
}

/* ---- public pieces ---------------------------------------------------------- */

double arrank_diagnose_weisz_prater(double rate_mol_m3_s, double radius_m, double diff_m2_s,
                                    double conc_mol_m3)
{
    if (!(rate_mol_m3_s > 0 && radius_m > 0 && diff_m2_s > 0 && conc_mol_m3 > 0) ||
        !isfinite(rate_mol_m3_s * radius_m * diff_m2_s * conc_mol_m3))
        return NAN;
    return rate_mol_m3_s * radius_m * radius_m / (diff_m2_s * conc_mol_m3);
}

double arrank_diagnose_mears(double rate_mol_m3_s, double radius_m, double order,
                             double film_m_s, double conc_mol_m3)
{
    if (!(rate_mol_m3_s > 0 && radius_m > 0 && order > 0 && film_m_s > 0 && conc_mol_m3 > 0) ||
        !isfinite(rate_mol_m3_s * radius_m * order * film_m_s * conc_mol_m3))
        return NAN;
    return rate_mol_m3_s * radius_m * order / (film_m_s * conc_mol_m3);
}

/* Declared basis word, normalised: "mass", "metal_mass", "area", "site" or
   the lowercase text itself. */
static void declared_basis(const arrank_sample *s, char *out, size_t n)
{
    const char *v = arrank_sample_meta(s, "basis");
    out[0] = '\0';
    if (!v || n == 0)
        return;
    size_t k = 0;
    for (; v[k] && k + 1 < n; k++)
        out[k] = (char)tolower((unsigned char)v[k]);
    out[k] = '\0';
    /* trim */
    while (k > 0 && isspace((unsigned char)out[k - 1]))
        out[--k] = '\0';
    const char *aliases[][2] = {
        {"catalyst_mass", "mass"}, {"per_mass", "mass"},     {"metal", "metal_mass"},
        {"surface", "area"},       {"bet_area", "area"},     {"per_area", "area"},
        {"tof", "site"},           {"turnover", "site"},     {"per_site", "site"},
    };
    for (size_t i = 0; i < sizeof aliases / sizeof *aliases; i++)
        if (strcmp(out, aliases[i][0]) == 0)
            snprintf(out, n, "%s", aliases[i][1]);
}

static arrank_basis basis_dimension(const char *word)
{
    if (strcmp(word, "mass") == 0 || strcmp(word, "metal_mass") == 0)
        return ARRANK_BASIS_MASS;
    if (strcmp(word, "area") == 0)
        return ARRANK_BASIS_AREA;
    if (strcmp(word, "site") == 0)
        return ARRANK_BASIS_SITE;
    return ARRANK_BASIS_UNKNOWN;
}

/* Declared basis against the sample's own rate unit; 1 with why on a mismatch. */
static int own_basis_mismatch(const arrank_sample *s, char *why, size_t n)
{
    char mine[32];
    declared_basis(s, mine, sizeof mine);
    if (!mine[0])
        return 0;
    arrank_basis dim = basis_dimension(mine);
    if (dim != ARRANK_BASIS_UNKNOWN && s->basis != ARRANK_BASIS_UNKNOWN && dim != s->basis) {
        if (why)
            snprintf(why, n, "declared basis '%s' does not match the rate unit '%s' (%s basis)",
                     mine, s->rate_unit_file ? s->rate_unit_file : "?",
                     arrank_basis_name(s->basis));
        return 1;
    }
    return 0;
}

int arrank_diagnose_campaign_basis(const arrank_campaign *c, char *why, size_t n)
{
    if (why && n)
        why[0] = '\0';
    if (!c || c->n_samples < 2)
        return 0;
    /* one pass: every sample against the first one */
    const arrank_sample *ref = &c->samples[0];
    char mine[32], other[32];
    declared_basis(ref, mine, sizeof mine);
    /* declared_basis is a function of the metadata text alone: a sample that
       declares it in the same words as the first declares the same basis */
    const char *ref_text = arrank_sample_meta(ref, "basis");
    for (size_t i = 1; i < c->n_samples; i++) {
        const arrank_sample *o = &c->samples[i];
        if (o->basis != ARRANK_BASIS_UNKNOWN && ref->basis != ARRANK_BASIS_UNKNOWN &&
            o->basis != ref->basis) {
            if (why)
                snprintf(why, n, "sample '%s' is on a %s basis and '%s' on a %s basis", ref->id,
                         arrank_basis_name(ref->basis), o->id, arrank_basis_name(o->basis));
            return 1;
        }
        const char *text = arrank_sample_meta(o, "basis");
        if (text == ref_text || (text && ref_text && strcmp(text, ref_text) == 0))
            continue;
        declared_basis(o, other, sizeof other);
        if (mine[0] && other[0] && strcmp(mine, other) != 0) {
            if (why)
                snprintf(why, n, "sample '%s' declares basis '%s' and '%s' declares '%s'",
                         ref->id, mine, o->id, other);
            return 1;
        }
    }
    return 0;
}

int arrank_diagnose_basis(const arrank_campaign *c, const arrank_sample *s, char *why, size_t n)
{
    if (why && n)
        why[0] = '\0';
    return own_basis_mismatch(s, why, n) || arrank_diagnose_campaign_basis(c, why, n);
}

/* ---- runs, repeats and drift ---------------------------------------------- */

/* Compare label j's points with label 0's over the base set. */
static void compare_runs(work *wk, const size_t *sorted, const size_t *grp, size_t n,
                         const int *label, int n_labels, char **names, const line_fit *base)
{
    arrank_diagnosis *d = wk->d;
    if (n_labels < 2)
        return;
    d->runs = calloc((size_t)n_labels - 1, sizeof *d->runs);
    size_t n_groups = n ? grp[n - 1] + 1 : 0;
    double *acc = calloc(4 * (n_groups ? n_groups : 1), sizeof *acc);
    double *dif = malloc((n_groups ? n_groups : 1) * sizeof *dif);
    size_t *sel = malloc((n ? n : 1) * sizeof *sel);
    if (!d->runs || !acc || !dif || !sel) {
        wk->nomem = 1;
        goto done;
    }
    for (int j = 1; j < n_labels; j++) {
        arrank_run_shift *rs = &d->runs[d->n_runs++];
        rs->label_ref = arrank_strdup(names[0]);
        rs->label = arrank_strdup(names[j]);
        if (!rs->label_ref || !rs->label)
            wk->nomem = 1;
        rs->shift_ln = rs->shift_ln_se = rs->t = rs->p = rs->dof = rs->change = NAN;
        /* sums per group: n0, y0 - b1 x0, n1, y1 - b1 x1 */
        memset(acc, 0, 4 * n_groups * sizeof *acc);
        for (size_t k = 0; k < n; k++) {
            size_t i = sorted[k];
            double adj = wk->y[i] - base->b1_K * wk->x[i];
            if (label[i] == 0) {
                acc[4 * grp[k]] += 1;
                acc[4 * grp[k] + 1] += adj;
            } else if (label[i] == j) {
                acc[4 * grp[k] + 2] += 1;
                acc[4 * grp[k] + 3] += adj;
            }
        }
        size_t np = 0;
        for (size_t g = 0; g < n_groups; g++)
            if (acc[4 * g] > 0 && acc[4 * g + 2] > 0)
                dif[np++] = acc[4 * g + 3] / acc[4 * g + 2] - acc[4 * g + 1] / acc[4 * g];
        if (np >= 1) {
            /* paired differences at the same set points, corrected to a common
               temperature with the fitted slope: robust to a bent plot */
            rs->method = "paired";
            rs->n_pairs = np;
            double m = 0;
            for (size_t k = 0; k < np; k++)
                m += dif[k];
            m /= (double)np;
            rs->shift_ln = m;
            if (np >= 3) {
                double v = 0;
                for (size_t k = 0; k < np; k++)
                    v += (dif[k] - m) * (dif[k] - m);
                rs->shift_ln_se = sqrt(v / ((double)np - 1.0) / (double)np);
                rs->dof = (double)np - 1.0;
            }
        }
        if (np < 3) {
            /* too few common set points for their own spread: compare the
               run's points with the line through the reference run, whose
               scatter and prediction variance give the standard error */
            rs->method = "reference line";
            size_t m0 = 0, m1 = 0;
            double sx = 0;
            for (size_t k = 0; k < n; k++) {
                size_t i = sorted[k];
                if (label[i] == 0)
                    sel[m0++] = i;
            }
            line_fit lr;
            rs->shift_ln = NAN;
            if (m0 >= 3 && fit_line(wk, sel, m0, &lr) == 0) {
                double sd = 0;
                for (size_t k = 0; k < n; k++) {
                    size_t i = sorted[k];
                    if (label[i] != j)
                        continue;
                    sd += wk->y[i] - line_at(&lr, wk->x[i]);
                    sx += wk->x[i];
                    m1++;
                }
                if (m1 > 0) {
                    double u = (sx / (double)m1 - lr.sc.xm) / lr.sc.sx;
                    double var = lr.cov[0] + 2 * u * lr.cov[1] + u * u * lr.cov[3];
                    double wmean = 0;
                    for (size_t k = 0; k < m0; k++)
                        wmean += wk->w[sel[k]];
                    wmean /= (double)m0;
                    /* unit weight of a point relative to the reference run's mean weight */
                    rs->shift_ln = sd / (double)m1;
                    rs->shift_ln_se = sqrt(var + lr.s2 / (wmean * (double)m1));
                    rs->dof = lr.dof;
                    rs->n_pairs = m1;
                }
            }
        }
        if (isfinite(rs->shift_ln) && rs->dof > 0) {
            rs->t = rs->shift_ln_se > 0 ? rs->shift_ln / rs->shift_ln_se
                                        : (rs->shift_ln < 0 ? -INFINITY : INFINITY);
            rs->p = arrank_stats_t_p(rs->t, rs->dof);
            rs->change = expm1(rs->shift_ln);
            if (rs->p < RUN_LEVEL && fabs(rs->change) >= RUN_MIN_CHANGE)
                rs->verdict = rs->shift_ln < 0 ? -1 : 1;
        }
    }
done:
    free(acc);
    free(dif);
    free(sel);
}

static void test_drift(work *wk, const size_t *base, size_t n)
{
    arrank_drift *dr = &wk->d->drift;
    dr->slope_ln_per_h = dr->slope_se = dr->t = dr->p = dr->dof = dr->span_h = dr->change = NAN;
    size_t *sel = malloc((n ? n : 1) * sizeof *sel);
    double *th = malloc((n ? n : 1) * sizeof *th);
    if (!sel || !th) {
        wk->nomem = 1;
        goto done;
    }
    size_t m = 0;
    for (size_t k = 0; k < n; k++)
        if (isfinite(wk->pt[base[k]].time_on_stream_s)) {
            sel[m] = base[k];
            th[m] = wk->pt[base[k]].time_on_stream_s / 3600.0;
            m++;
        }
    if (m == 0)
        goto done;
    if (m < MIN_TEST_POINTS) {
        dr->note = fmt(wk, "only %zu points have a time on stream: too few to test for drift", m);
        goto done;
    }
    double tmin = INFINITY, tmax = -INFINITY, mx = 0, mt = 0;
    for (size_t k = 0; k < m; k++) {
        tmin = fmin(tmin, th[k]);
        tmax = fmax(tmax, th[k]);
        mx += wk->x[sel[k]];
        mt += th[k];
    }
    mx /= (double)m;
    mt /= (double)m;
    double sxx = 0, stt = 0, sxt = 0;
    for (size_t k = 0; k < m; k++) {
        double a = wk->x[sel[k]] - mx, b = th[k] - mt;
        sxx += a * a;
        stt += b * b;
        sxt += a * b;
    }
    double corr = sxx > 0 && stt > 0 ? sxt / sqrt(sxx * stt) : 1.0;
    dr->span_h = tmax - tmin;
    if (!(stt > 0) || fabs(corr) > DRIFT_COLLINEAR) {
        dr->note = fmt(wk, "time on stream follows temperature (correlation %.2f): drift cannot "
                           "be told apart from the temperature dependence",
                       corr);
        goto done;
    }
    xscale sc;
    double b[3], cov[9], rss;
    if (set_scale(wk, sel, m, &sc) != 0 || design_fit(wk, sel, m, &sc, 0, th, b, cov, &rss) != 3)
        goto done;
    dr->tested = 1;
    dr->slope_ln_per_h = b[2];
    dr->slope_se = sqrt(cov[8]);
    dr->dof = (double)m - 3.0;
    dr->t = dr->slope_se > 0 ? b[2] / dr->slope_se : (b[2] < 0 ? -INFINITY : INFINITY);
    dr->p = arrank_stats_t_p(dr->t, dr->dof);
    dr->change = expm1(b[2] * dr->span_h);
    if (dr->p < RUN_LEVEL && fabs(dr->change) >= RUN_MIN_CHANGE)
        dr->verdict = b[2] < 0 ? -1 : 1;
done:
    free(sel);
    free(th);
}

/* ---- outliers --------------------------------------------------------------- */

/* Externally studentized residuals and Cook's distance about the weighted
   line over idx (Belsley, Kuh & Welsch 1980; Cook 1977; formulas for the
   weighted simple regression with leverage h = w/Sw + w (x - xm)^2 / Sxx). */
/* At most this many points of a sample get an exact leave-one-out refit. */
#define EXACT_REFITS 8

/* RSS of the weighted line over idx[0..n) without idx[skip] (two-pass centred
   sums, as in fit_line_direct). */
static double rss_without(const work *wk, const size_t *idx, size_t n, size_t skip)
{
    double sw = 0, swx = 0, swy = 0;
    for (size_t k = 0; k < n; k++) {
        if (k == skip)
            continue;
        const size_t i = idx[k];
        sw += wk->w[i];
        swx += wk->w[i] * wk->x[i];
        swy += wk->w[i] * wk->y[i];
    }
    const double xbar = swx / sw, ybar = swy / sw;
    double sxx = 0, sxy = 0;
    for (size_t k = 0; k < n; k++) {
        if (k == skip)
            continue;
        const size_t i = idx[k];
        sxx += wk->w[i] * (wk->x[i] - xbar) * (wk->x[i] - xbar);
        sxy += wk->w[i] * (wk->x[i] - xbar) * (wk->y[i] - ybar);
    }
    const double b1 = sxx > 0 ? sxy / sxx : 0.0;
    double rss = 0;
    for (size_t k = 0; k < n; k++) {
        if (k == skip)
            continue;
        const size_t i = idx[k];
        const double e = wk->y[i] - ybar - b1 * (wk->x[i] - xbar);
        rss += wk->w[i] * e * e;
    }
    return rss;
}

static void find_outliers(work *wk, const size_t *idx, size_t n)
{
    size_t exact_used = 0;
    arrank_diagnosis *d = wk->d;
    line_fit lf;
    if (n < 4 || fit_line(wk, idx, n, &lf) != 0)
        return;
    double sw = 0, sxx = 0;
    for (size_t k = 0; k < n; k++)
        sw += wk->w[idx[k]];
    for (size_t k = 0; k < n; k++) {
        double u = wk->x[idx[k]] - lf.sc.xm;
        sxx += wk->w[idx[k]] * u * u;
    }
    double dof_ext = (double)n - 3.0;
    d->outlier_t_limit = arrank_stats_t_upper(OUTLIER_FAMILY / (2.0 * (double)n), dof_ext);
    double t_influence = arrank_stats_t_upper(INFLUENCE_LEVEL / 2.0, dof_ext);
    for (size_t k = 0; k < n; k++) {
        size_t i = idx[k];
        double u = wk->x[i] - lf.sc.xm, wi = wk->w[i];
        double h = wi / sw + wi * u * u / sxx;
        double e = wk->y[i] - line_at(&lf, wk->x[i]);
        double we2 = wi * e * e;
        arrank_point_diag *pd = &d->points[i];
        if (!(h < 1.0))
            continue;
        /* The deletion formula (Belsley, Kuh & Welsch 1980) subtracts nearly equal
           numbers when this point carries most of the RSS; then refit without it. */
        double drop = we2 / (1.0 - h);
        double s2i = (drop > 0.5 * lf.rss && exact_used < EXACT_REFITS
                          ? (exact_used++, rss_without(wk, idx, n, k))
                          : lf.rss - drop) /
                     dof_ext;
        pd->student_resid = s2i > 0 ? e * sqrt(wi) / sqrt(s2i * (1.0 - h))
                                    : (e != 0 ? copysign(INFINITY, e) : 0.0);
        pd->cooks_d = lf.s2 > 0 ? we2 * h / (2.0 * lf.s2 * (1.0 - h) * (1.0 - h)) : NAN;
        if (fabs(pd->student_resid) > d->outlier_t_limit ||
            (isfinite(pd->cooks_d) && pd->cooks_d > COOK_LIMIT &&
             fabs(pd->student_resid) > t_influence)) {
            pd->outlier = 1;
            d->n_outliers++;
        }
    }
}

/* ---- transport criteria ----------------------------------------------------- */

typedef struct {
    double dp_m, rho_p, rho_bed, de, cb, kc, order;
    int have_order;
} criteria_in;

/* Parse one metadata quantity; NAN when absent; a note when unreadable. */
static double meta_quantity(work *wk, arrank_units *u, const char *key, const char *si)
{
    const char *v = arrank_sample_meta(wk->s, key);
    if (!v)
        return NAN;
    double out = NAN;
    arrank_error e;
    arrank_error_clear(&e);
    if (arrank_units_parse_quantity(u, v, si, &out, &e) != ARRANK_OK) {
        note(wk, "metadata '%s = %s' could not be read (%s); criteria that need it are skipped",
             key, v, e.message);
        return NAN;
    }
    return out;
}

static const char *wp_source(double order, int have, double *limit)
{
    if (have && order == 0.0) {
        *limit = WP_LIMIT_ORDER0;
        return "Weisz & Prater 1954 / Weisz 1957 via Madon & Boudart 1982, zero order";
    }
    if (have && order == 1.0) {
        *limit = WP_LIMIT_ORDER1;
        return "Weisz & Prater 1954 / Weisz 1957 via Madon & Boudart 1982, first order";
    }
    if (have && order == 2.0) {
        *limit = WP_LIMIT_ORDER2;
        return "Weisz & Prater 1954 / Weisz 1957 via Madon & Boudart 1982, second order";
    }
    *limit = WP_LIMIT_GENERAL;
    return "general rule, Vannice, Kinetics of Catalytic Reactions (2005)";
}

static void criteria(work *wk, const arrank_campaign *c, arrank_units *shared)
{
    arrank_diagnosis *d = wk->d;
    static const char *keys[] = {"particle_diameter", "particle_radius", "pellet_density",
                                 "bed_density", "effective_diffusivity", "bulk_concentration",
                                 "film_coefficient", "reaction_order"};
    int any = 0;
    for (size_t k = 0; k < sizeof keys / sizeof *keys; k++)
        any |= arrank_sample_meta(wk->s, keys[k]) != NULL;
    d->weisz_prater.value = d->mears.value = NAN;
    d->weisz_prater.threshold = d->mears.threshold = NAN;
    d->weisz_prater.temp_K = d->mears.temp_K = NAN;
    if (!any)
        return;
    arrank_error e;
    arrank_error_clear(&e);
    /* the caller's unit database, or one loaded for this sample */
    arrank_units *u = shared ? shared : arrank_units_create(&e);
    if (!u) {
        note(wk, "transport criteria skipped: %s", e.message);
        return;
    }
    criteria_in in;
    in.dp_m = meta_quantity(wk, u, "particle_diameter", "m");
    double rp = meta_quantity(wk, u, "particle_radius", "m");
    if (!isfinite(in.dp_m) && isfinite(rp))
        in.dp_m = 2.0 * rp;
    in.rho_p = meta_quantity(wk, u, "pellet_density", "kg/m3");
    in.rho_bed = meta_quantity(wk, u, "bed_density", "kg/m3");
    in.de = meta_quantity(wk, u, "effective_diffusivity", "m2/s");
    in.cb = meta_quantity(wk, u, "bulk_concentration", "mol/m3");
    in.kc = meta_quantity(wk, u, "film_coefficient", "m/s");
    in.order = meta_quantity(wk, u, "reaction_order", "1");
    in.have_order = isfinite(in.order);
    if (!in.have_order)
        in.order = 1.0;

    /* the hottest point's observed rate, in SI per mass */
    size_t hot = 0;
    for (size_t i = 1; i < wk->np; i++)
        if (wk->pt[i].temp_K > wk->pt[hot].temp_K)
            hot = i;
    const char *unit = c && c->rate_unit ? c->rate_unit : wk->s->rate_unit_file;
    arrank_basis basis = ARRANK_BASIS_UNKNOWN;
    arrank_conversion to_si = {NAN, 0};
    double r_mass = NAN;
    if (unit && arrank_units_rate(u, unit, &basis, &to_si, &e) == ARRANK_OK &&
        basis == ARRANK_BASIS_MASS)
        r_mass = to_si.scale * wk->pt[hot].rate + to_si.offset;
    if (u != shared)
        arrank_units_free(u);

    double rho = isfinite(in.rho_p) ? in.rho_p : in.rho_bed;
    double r_v = r_mass * rho; /* mol/(m3 s) per particle (or bed) volume */
    double rad = in.dp_m / 2.0;
    const char *why_rate = basis == ARRANK_BASIS_MASS
                               ? NULL
                               : "the rates are not per mass, so no rate per particle volume";

    arrank_criterion *wp = &d->weisz_prater;
    wp->source = wp_source(in.order, in.have_order, &wp->threshold);
    wp->temp_K = wk->pt[hot].temp_K;
    if (why_rate)
        wp->detail = fmt(wk, "not computed: %s", why_rate);
    else if (!isfinite(in.dp_m) || !isfinite(in.rho_p) || !isfinite(in.de) || !isfinite(in.cb))
        wp->detail = fmt(wk, "not computed: needs particle_diameter, pellet_density, "
                             "effective_diffusivity and bulk_concentration");
    else {
        /* surface concentration taken as the bulk one (film resistance
           neglected: common practice for this check) */
        wp->value = arrank_diagnose_weisz_prater(r_mass * in.rho_p, rad, in.de, in.cb);
        wp->computed = isfinite(wp->value);
        wp->passes = wp->computed && wp->value < wp->threshold;
        wp->detail = fmt(wk,
                         "r_v = %.4g mol/(m3 s) at %.1f K, R_p = %.4g m (half the diameter), "
                         "D_e = %.4g m2/s, C_s = C_b = %.4g mol/m3",
                         r_mass * in.rho_p, wp->temp_K, rad, in.de, in.cb);
    }
    arrank_criterion *me = &d->mears;
    me->threshold = MEARS_LIMIT;
    me->source = "Mears 1971 (form of Hudgins 1972) via Madon & Boudart 1982";
    me->temp_K = wk->pt[hot].temp_K;
    if (why_rate)
        me->detail = fmt(wk, "not computed: %s", why_rate);
    else if (!isfinite(in.dp_m) || !isfinite(rho) || !isfinite(in.kc) || !isfinite(in.cb))
        me->detail = fmt(wk, "not computed: needs particle_diameter, pellet_density (or "
                             "bed_density), film_coefficient and bulk_concentration");
    else {
        me->value = arrank_diagnose_mears(r_v, rad, in.order, in.kc, in.cb);
        me->computed = isfinite(me->value);
        me->passes = me->computed && me->value < me->threshold;
        me->detail = fmt(wk,
                         "r_v = %.4g mol/(m3 s) at %.1f K (%s density), R_p = %.4g m, n = %g%s, "
                         "k_c = %.4g m/s, C_b = %.4g mol/m3",
                         r_v, me->temp_K, isfinite(in.rho_p) ? "pellet" : "bed", rad, in.order,
                         in.have_order ? "" : " (assumed)", in.kc, in.cb);
    }
}

/* ---- the diagnosis ------------------------------------------------------------- */

static void set_excluded(work *wk, size_t i, char *reason)
{
    arrank_point_diag *pd = &wk->d->points[i];
    if (!reason) {
        wk->nomem = 1;
        return;
    }
    if (pd->excluded) {
        free(reason);
        return;
    }
    pd->excluded = 1;
    pd->reason = reason;
}

static double kj(double j)
{
    return j / 1000.0;
}

/* Plain words for the causes of a detected bend. */
static void name_causes(work *wk, const size_t *sorted, size_t n, double ea_window,
                        int has_repeats)
{
    arrank_diagnosis *d = wk->d;
    arrank_curvature *cv = &d->curvature;
    int runs_down = 0, runs_up = 0;
    for (size_t j = 0; j < d->n_runs; j++) {
        runs_down |= d->runs[j].verdict < 0;
        runs_up |= d->runs[j].verdict > 0;
    }
    runs_down |= d->drift.verdict < 0;
    runs_up |= d->drift.verdict > 0;
    size_t n_pore = 0, n_film = 0, hot_conv = 0;
    double lo_pore = INFINITY, lo_film = INFINITY, t_pore = NAN, t_film = NAN;
    for (size_t k = 0; k < n; k++) {
        const arrank_point_diag *pd = &d->points[sorted[k]];
        if (pd->regime == ARRANK_REGIME_PORE) {
            n_pore++;
            if (pd->local_ea_J_mol < lo_pore) {
                lo_pore = pd->local_ea_J_mol;
                t_pore = wk->pt[sorted[k]].temp_K;
            }
        } else if (pd->regime == ARRANK_REGIME_FILM) {
            n_film++;
            if (pd->local_ea_J_mol < lo_film) {
                lo_film = pd->local_ea_J_mol;
                t_film = wk->pt[sorted[k]].temp_K;
            }
        }
        if (pd->high_conversion && k >= n / 2)
            hot_conv++;
    }
    char series[256];
    if (isfinite(cv->series_F) && isfinite(cv->aicc_line))
        snprintf(series, sizeof series,
                 "series-resistance model against a straight line: F = %.3g, p = %.2g, "
                 "AICc lower by %.1f",
                 cv->series_F, cv->series_p, cv->aicc_line - cv->aicc_series);
    else if (isfinite(cv->series_F))
        snprintf(series, sizeof series,
                 "series-resistance model against a straight line: F = %.3g, p = %.2g",
                 cv->series_F, cv->series_p);
    else if (!(cv->detected && cv->direction == ARRANK_BEND_DOWN))
        snprintf(series, sizeof series,
                 "series-resistance model not fitted (it is fitted to a detected downward bend)");
    else
        snprintf(series, sizeof series, "series-resistance model not fitted");
    const arrank_criterion *wp = &d->weisz_prater, *me = &d->mears;

    if (cv->direction == ARRANK_BEND_DOWN) {
        if (hot_conv)
            add_cause(wk, 1, fmt(wk, "conversion above the differential limit"),
                      fmt(wk, "%zu point(s) in the hot half are above the %.0f %% limit, so their "
                              "rates understate the differential rate",
                          hot_conv, 100.0 * d->conversion_limit));
        if (runs_down)
            add_cause(wk, 1, fmt(wk, "deactivation during the measurements"),
                      fmt(wk, "later runs or later times show lower activity at the same "
                              "temperature (see the run and drift checks)"));
        if (n_pore)
            add_cause(wk, 1, fmt(wk, "pore diffusion"),
                      fmt(wk, "local apparent Ea falls to %.0f kJ/mol at %.0f K against %.0f "
                              "kJ/mol in the kinetic window (ratio %.2f; strong pore diffusion "
                              "gives about one half); %s%s%s",
                          kj(lo_pore), t_pore, kj(ea_window), lo_pore / ea_window, series,
                          wp->computed ? "; " : "",
                          wp->computed ? (wp->passes ? "but the Weisz-Prater number is below its "
                                                       "limit, which argues against it"
                                                     : "and the Weisz-Prater number is above "
                                                       "its limit")
                                       : ""));
        if (n_film)
            add_cause(wk, 1, fmt(wk, "film (external) mass transfer"),
                      fmt(wk, "local apparent Ea falls to %.0f kJ/mol at %.0f K, below %.0f kJ/mol "
                              "where film control is suspected; %s%s%s",
                          kj(lo_film), t_film, kj(FILM_EA_J_MOL), series,
                          me->computed ? "; " : "",
                          me->computed ? (me->passes ? "but the Mears number is below its limit, "
                                                       "which argues against it"
                                                     : "and the Mears number is above its limit")
                                       : ""));
        if (!n_pore && !n_film)
            add_cause(wk, 0, fmt(wk, "transport limitation (pore or film)"),
                      fmt(wk, "%s; the local slopes do not single out a transport regime", series));
        if (!runs_down && !has_repeats)
            add_cause(wk, 0, fmt(wk, "deactivation on a rising temperature ramp"),
                      fmt(wk, "not testable: no repeat, cooling branch or time on stream; "
                              "repeat a cold point at the end to check"));
        add_cause(wk, 0, fmt(wk, "adsorption-equilibrium shift or change of rate-determining step"),
                  fmt(wk, "bends the plot the same way; not testable from rate against "
                          "temperature alone (vary partial pressures)"));
        add_cause(wk, 0, fmt(wk, "approach to equilibrium"),
                  fmt(wk, "check the equilibrium conversion at the hottest point"));
    } else if (cv->direction == ARRANK_BEND_UP) {
        if (runs_up)
            add_cause(wk, 1, fmt(wk, "activation during the measurements"),
                      fmt(wk, "later runs or later times show higher activity at the same "
                              "temperature (see the run and drift checks)"));
        add_cause(wk, 0, fmt(wk, "a second route with a higher activation energy"),
                  fmt(wk, "the apparent Ea rises from %.0f kJ/mol at the cold end to %.0f kJ/mol "
                          "at the hot end (quadratic fit)",
                      kj(cv->ea_cold_J_mol), kj(cv->ea_hot_J_mol)));
        add_cause(wk, 0, fmt(wk, "blank activity of the reactor or support"),
                  fmt(wk, "not testable from these data: measure an empty or support-only run"));
        add_cause(wk, 0, fmt(wk, "hot spots (bed hotter than the thermocouple)"),
                  fmt(wk, "likely with an exothermic reaction at high conversion: use an in-bed "
                          "thermocouple and dilute the bed"));
    }
}

static void describe(work *wk, const arrank_result *res, const size_t *sorted, size_t n)
{
    arrank_diagnosis *d = wk->d;
    arrank_curvature *cv = &d->curvature;
    const arrank_arrhenius *f = &res->fit;
    if (!cv->tested)
        note(wk, "curvature not detected: %zu points at %zu temperatures are too few to test "
                 "(needs %d points at %d temperatures)",
             cv->n, count_temps(wk->pt, sorted, n), MIN_TEST_POINTS, MIN_TEST_TEMPS);
    else if (!cv->detected) {
        /* every sample that passes gets this note: its numbers go through
           number.c's exact formatters (the same bytes as printf, faster) */
        char t_txt[48], p_txt[48], lv_txt[48], sc_txt[48], n_txt[24];
        const int have_scatter = isfinite(wk->scatter);
        if (have_scatter)
            arrank_format_fixed(sc_txt, sizeof sc_txt, 1, 100.0 * wk->scatter);
        arrank_format_fixed(t_txt, sizeof t_txt, 2, cv->quad_t);
        arrank_format_general(p_txt, sizeof p_txt, 2, cv->quad_p);
        arrank_format_general(lv_txt, sizeof lv_txt, 2, cv->level);
        size_t_text(n_txt, cv->n);
        /* "curvature not detected: quadratic term t = %s, p = %s (level %s)
           with %zu points[ and %s %% scatter]; only bending ... would show" */
        const char *parts[] = {"curvature not detected: quadratic term t = ",
                               t_txt,
                               ", p = ",
                               p_txt,
                               " (level ",
                               lv_txt,
                               ") with ",
                               n_txt,
                               " points",
                               have_scatter ? " and " : "",
                               have_scatter ? sc_txt : "",
                               have_scatter ? " % scatter" : "",
                               "; only bending well beyond the scatter would show"};
        note_join(wk, parts, sizeof parts / sizeof parts[0]);
    }
    else {
        char local[160] = "";
        if (cv->n_local >= 2)
            snprintf(local, sizeof local,
                     "; local apparent Ea %.0f kJ/mol at %.0f-%.0f K and %.0f kJ/mol at "
                     "%.0f-%.0f K",
                     kj(cv->local[0].ea_J_mol), cv->local[0].temp_lo_K, cv->local[0].temp_hi_K,
                     kj(cv->local[cv->n_local - 1].ea_J_mol),
                     cv->local[cv->n_local - 1].temp_lo_K, cv->local[cv->n_local - 1].temp_hi_K);
        finding(wk, "the Arrhenius plot bends %s (%s): quadratic term t = %.2f, p = %.2g at level "
                    "%.2g%s",
                arrank_bend_name(cv->direction),
                cv->direction == ARRANK_BEND_DOWN ? "slope flattens at the hot end"
                                                  : "slope steepens at the hot end",
                cv->quad_t, cv->quad_p, cv->level, local);
        for (size_t k = 0; k < cv->n_causes; k++)
            if (cv->causes[k].supported)
                finding(wk, "likely cause: %s: %s", cv->causes[k].cause, cv->causes[k].evidence);
        for (size_t k = 0; k < cv->n_causes; k++)
            if (!cv->causes[k].supported)
                note(wk, "possible cause: %s: %s", cv->causes[k].cause, cv->causes[k].evidence);
    }
    for (size_t k = 0; k < n; k++) {
        size_t i = sorted[k];
        const arrank_point_diag *pd = &d->points[i];
        if (pd->high_conversion)
            finding(wk, "conversion %.1f %% at %.1f K (line %ld) is above the %.0f %% "
                        "differential limit: the rate there is not a differential rate",
                    100.0 * wk->pt[i].conversion, wk->pt[i].temp_K, wk->pt[i].line,
                    100.0 * d->conversion_limit);
    }
    if (d->window_applied)
        finding(wk, "fitted on the kinetic window %.1f-%.1f K (%zu points): Ea %.1f kJ/mol "
                    "(standard error %.1f), against %.1f kJ/mol (%.1f) on every point",
                d->window_lo_K, d->window_hi_K, d->window_n, kj(f->ea_J_mol),
                kj(f->ea_se_J_mol), kj(d->ea_all_J_mol), kj(d->ea_all_se_J_mol));
    for (size_t j = 0; j < d->n_runs; j++) {
        const arrank_run_shift *rs = &d->runs[j];
        if (!isfinite(rs->shift_ln))
            continue;
        char what[200];
        snprintf(what, sizeof what, "%s '%s' is %.0f %% %s '%s' (%s, %zu %s, t = %.2f, p = %.2g)",
                 strncmp(rs->label, "pass ", 5) == 0 ? "repeat" : "run", rs->label,
                 100.0 * fabs(rs->change), rs->change < 0 ? "below" : "above", rs->label_ref,
                 rs->method, rs->n_pairs,
                 strcmp(rs->method, "paired") == 0 ? "common temperatures" : "points", rs->t,
                 rs->p);
        if (rs->verdict < 0)
            finding(wk, "%s: the catalyst lost activity during the measurements (deactivation)",
                    what);
        else if (rs->verdict > 0)
            finding(wk, "%s: the catalyst gained activity during the measurements (activation)",
                    what);
        else
            note(wk, "%s: no significant shift of at least %.0f %%", what,
                 100.0 * RUN_MIN_CHANGE);
    }
    const arrank_drift *dr = &d->drift;
    if (dr->tested) {
        if (dr->verdict)
            finding(wk, "the rate drifts %s by %.0f %% over %.1f h on stream at fixed temperature "
                        "dependence (t = %.2f, p = %.2g): %s",
                    dr->verdict < 0 ? "down" : "up", 100.0 * fabs(dr->change), dr->span_h, dr->t,
                    dr->p, dr->verdict < 0 ? "deactivation" : "activation");
        else
            note(wk, "no significant drift with time on stream (%.1f %% over %.1f h, p = %.2g)",
                 100.0 * dr->change, dr->span_h, dr->p);
    } else if (dr->note)
        note(wk, "%s", dr->note);
    for (size_t k = 0; k < n; k++) {
        size_t i = sorted[k];
        const arrank_point_diag *pd = &d->points[i];
        if (!pd->outlier)
            continue;
        finding(wk, "point at %.1f K (line %ld) is %s: studentized residual %.2f (limit %.2f), "
                    "Cook's distance %.2f (limit %.0f); %s",
                wk->pt[i].temp_K, wk->pt[i].line,
                fabs(pd->student_resid) > d->outlier_t_limit ? "an outlier" : "influential",
                pd->student_resid, d->outlier_t_limit, pd->cooks_d, COOK_LIMIT,
                pd->excluded ? "left out of the fit as asked"
                             : "kept in the fit (outliers are left out only on request)");
    }
    const arrank_criterion *cr[2] = {&d->weisz_prater, &d->mears};
    const char *crname[2] = {"Weisz-Prater number", "Mears number"};
    const char *crbad[2] = {"internal (pore) diffusion may limit the rate",
                            "external (film) mass transfer may limit the rate"};
    const char *crgood[2] = {"no internal diffusion limitation expected",
                             "no external mass-transfer limitation expected"};
    for (int k = 0; k < 2; k++) {
        if (!cr[k]->detail)
            continue;
        if (!cr[k]->computed)
            note(wk, "%s %s", crname[k], cr[k]->detail);
        else if (cr[k]->passes)
            note(wk, "%s %.3g at %.1f K is below %.3g (%s): %s; %s", crname[k], cr[k]->value,
                 cr[k]->temp_K, cr[k]->threshold, cr[k]->source, crgood[k], cr[k]->detail);
        else
            finding(wk, "%s %.3g at %.1f K is above %.3g (%s): %s; %s", crname[k], cr[k]->value,
                    cr[k]->temp_K, cr[k]->threshold, cr[k]->source, crbad[k], cr[k]->detail);
    }
}

static void regime_of_excluded(work *wk, size_t i, double ea_w)
{
    arrank_point_diag *pd = &wk->d->points[i];
    double le = pd->local_ea_J_mol;
    pd->regime = ARRANK_REGIME_UNCLASSIFIED;
    if (!isfinite(le) || !(ea_w > 0))
        return;
    if (le < FILM_EA_J_MOL)
        pd->regime = ARRANK_REGIME_FILM;
    else if (le >= PORE_RATIO_LO * ea_w && le <= PORE_RATIO_HI * ea_w)
        pd->regime = ARRANK_REGIME_PORE;
}

arrank_status arrank_diagnose_result(arrank_result *res, const arrank_campaign *c,
                                     const arrank_options *opt, arrank_error *err)
{
    return arrank_diagnose_result_basis(res, c, opt, NULL, err);
}

arrank_status arrank_diagnose_result_basis(arrank_result *res, const arrank_campaign *c,
                                           const arrank_options *opt,
                                           const arrank_campaign_basis *opt_basis,
                                           arrank_error *err)
{
    arrank_options defaults = arrank_options_defaults();
    if (!opt)
        opt = &defaults;
    const arrank_sample *s = res->sample;
    arrank_diagnosis_free(res->diagnosis);
    res->diagnosis = NULL;
    if (res->error)
        return ARRANK_OK; /* nothing fitted, nothing to diagnose */
    size_t np = s->n_points;
    work wk = {s, s->points, np, NULL, NULL, NULL, NULL, NAN, 0, NULL};
    arrank_diagnosis *d = calloc(1, sizeof *d);
    size_t cap = np ? np : 1;
    /* The working arrays in one block, on the stack for a usual sample: doubles
       (x, y, w and three lsq columns), then size_t (five index sets), int,
       bytes, each part a multiple of 8 bytes long so the next stays aligned. */
    const size_t scratch_bytes = cap * (6 * sizeof(double) + 5 * sizeof(size_t)) +
                                 ((cap * sizeof(int) + 7) & ~(size_t)7) +
                                 2 * ((cap + 7) & ~(size_t)7);
    _Alignas(max_align_t) unsigned char scratch_small[SCRATCH_SMALL_BYTES];
    unsigned char *scratch = scratch_bytes <= sizeof scratch_small ? scratch_small
                                                                   : malloc(scratch_bytes);
    double *dbl = (double *)(void *)scratch;
    size_t *base = NULL, *grp = NULL, *cand = NULL, *win = NULL, *grp_c = NULL;
    int *label = NULL;
    unsigned char *used0 = NULL, *in_base = NULL;
    int used_saved = 0; /* used0 holds res->used as it came in */
    if (scratch) {
        wk.x = dbl;
        wk.y = dbl + cap;
        wk.w = dbl + 2 * cap;
        wk.lsq = dbl + 3 * cap;
        base = (size_t *)(void *)(dbl + 6 * cap);
        grp = base + cap;
        cand = base + 2 * cap;
        win = base + 3 * cap;
        grp_c = base + 4 * cap;
        label = (int *)(void *)(base + 5 * cap);
        used0 = (unsigned char *)label + ((cap * sizeof(int) + 7) & ~(size_t)7);
        in_base = used0 + ((cap + 7) & ~(size_t)7);
        memset(in_base, 0, cap);
    }
    char **names = NULL;
    int n_labels = 0;
    arrank_status st = ARRANK_OK;
    if (d)
        d->points = calloc(cap, sizeof *d->points);
    wk.d = d;
    if (!d || !d->points || !scratch)
        goto nomem;
    memcpy(used0, res->used, np);
    used_saved = 1;
    d->n_points = np;
    d->conversion_limit = opt->conversion_limit > 0 && opt->conversion_limit < 1
                              ? opt->conversion_limit
                              : defaults.conversion_limit;
    d->ea_all_J_mol = res->fit.ea_J_mol;
    d->ea_all_se_J_mol = res->fit.ea_se_J_mol;
    d->window_lo_K = d->window_hi_K = NAN;
    d->outlier_t_limit = NAN;
    arrank_curvature *cv = &d->curvature;
    cv->level = CURVE_LEVEL;
    cv->quad_c_K2 = cv->quad_c_se_K2 = cv->quad_t = cv->quad_p = cv->quad_dof = NAN;
    cv->ea_cold_J_mol = cv->ea_hot_J_mol = NAN;
    cv->series_F = cv->series_p = cv->aicc_line = cv->aicc_series = NAN;
    cv->series_m = SERIES_M;
    cv->series_T_ref_K = cv->series_ea_J_mol = cv->series_ea_se_J_mol = NAN;
    cv->series_ln_kt = cv->rss_line = cv->rss_series = NAN;

    /* weights as in the fit: (r/sd)^2 when every used point has a usable sd */
    int weighted = 1;
    size_t n = 0;
    for (size_t i = 0; i < np; i++) {
        const arrank_point *p = &s->points[i];
        arrank_point_diag *pd = &d->points[i];
        pd->local_ea_J_mol = pd->student_resid = pd->cooks_d = NAN;
        if (!res->used[i] || !(p->temp_K > 0) || !(p->rate > 0) || !isfinite(p->rate))
            continue;
        base[n++] = i;
        in_base[i] = 1;
        if (!(isfinite(p->rate_sd) && p->rate_sd > 0))
            weighted = 0;
    }
    for (size_t i = 0; i < np; i++) {
        const arrank_point *p = &s->points[i];
        wk.x[i] = 1.0 / p->temp_K;
        wk.y[i] = p->rate > 0 ? log(p->rate) : NAN;
        wk.w[i] = weighted ? (p->rate / p->rate_sd) * (p->rate / p->rate_sd) : 1.0;
    }
    sort_by_temp(s->points, base, n);
    size_t n_groups = group_temps(s->points, base, n, grp);

    /* 1. conversion above the differential limit */
    size_t nc = 0;
    for (size_t k = 0; k < n; k++) {
        size_t i = base[k];
        double X = s->points[i].conversion;
        if (isfinite(X) && X > d->conversion_limit) {
            d->points[i].high_conversion = 1;
            d->n_high_conversion++;
        } else
            cand[nc++] = i;
    }

    /* 2. curvature of the plot as measured */
    line_fit lf_all;
    int have_line = fit_line(&wk, base, n, &lf_all) == 0;
    if (have_line && !weighted && lf_all.dof > 0)
        wk.scatter = sqrt(lf_all.s2);
    cv->n = n;
    quad_test q;
    if (have_line && fit_quad(&wk, base, n, &q) == 0) {
        cv->tested = 1;
        cv->quad_c_K2 = q.c_K2;
        cv->quad_c_se_K2 = q.c_se_K2;
        cv->quad_t = q.t;
        cv->quad_p = q.p;
        cv->quad_dof = q.dof;
        cv->ea_cold_J_mol = q.ea_cold;
        cv->ea_hot_J_mol = q.ea_hot;
        cv->detected = q.p < CURVE_LEVEL;
        if (cv->detected)
            cv->direction = q.t < 0 ? ARRANK_BEND_DOWN : ARRANK_BEND_UP;
        /* The series-resistance model can only bend the plot down, and it
           serves as evidence for the cause of a detected bend; the decision
           itself is the quadratic test's.  Fitting it (a profile over 31
           conductances, then a 3-parameter nonlinear fit) only where a
           downward bend was detected keeps a campaign of thousands of
           straight samples fast and changes no flag. */
        if (cv->detected && cv->direction == ARRANK_BEND_DOWN)
            fit_series(&wk, base, n, &lf_all, cv);
        else
            cv->rss_line = lf_all.rss;
    }
    if (wk.nomem)
        goto nomem;
    local_windows(&wk, base, grp, n, n_groups, cv);
    for (size_t k = 0; k < n && cv->n_local; k++)
        d->points[base[k]].local_ea_J_mol = cv->local[window_of(grp[k], n_groups)].ea_J_mol;

    /* 3. runs and repeats: label each point by run, else by its pass over a
       repeated temperature (file order); labels numbered in order of first
       appearance in the file, names owned here */
    int has_repeats = 0;
    for (size_t i = 0; i < np; i++)
        label[i] = -1;
    if (s->n_runs >= 2) {
        int all = 1;
        for (size_t k = 0; k < n; k++)
            all &= s->points[base[k]].run >= 0;
        int *map = all ? malloc(s->n_runs * sizeof *map) : NULL;
        names = all ? calloc(s->n_runs, sizeof *names) : NULL;
        if (all && (!map || !names)) {
            free(map);
            goto nomem;
        }
        for (size_t r = 0; all && r < s->n_runs; r++)
            map[r] = -1;
        for (size_t i = 0; all && i < np; i++) {
            int r = s->points[i].run;
            if (!in_base[i])
                continue;
            if (map[r] < 0) {
                names[n_labels] = arrank_strdup(s->runs[r]);
                if (!names[n_labels]) {
                    free(map);
                    goto nomem;
                }
                map[r] = n_labels++;
            }
            label[i] = map[r];
        }
        free(map);
    }
    if (n_labels < 2 && n_groups < n) {
        for (int j = 0; j < n_labels; j++)
            free(names[j]);
        free(names);
        names = NULL;
        n_labels = 0;
        size_t *seen = calloc(n_groups, sizeof *seen);
        size_t *gof = malloc(cap * sizeof *gof);
        if (!seen || !gof) {
            free(seen);
            free(gof);
            goto nomem;
        }
        for (size_t k = 0; k < n; k++)
            gof[base[k]] = grp[k];
        size_t max_pass = 0;
        for (size_t i = 0; i < np; i++) {
            label[i] = -1;
            if (!in_base[i])
                continue;
            label[i] = (int)seen[gof[i]]++;
            if (seen[gof[i]] > max_pass)
                max_pass = seen[gof[i]];
        }
        free(seen);
        free(gof);
        if (max_pass >= 2) {
            names = calloc(max_pass, sizeof *names);
            if (!names)
                goto nomem;
            for (size_t j = 0; j < max_pass; j++) {
                names[j] = fmt(&wk, "pass %zu", j + 1);
                n_labels++;
                if (!names[j])
                    goto nomem;
            }
        }
    }
    has_repeats = n_labels >= 2;
    if (have_line && n_labels >= 2)
        compare_runs(&wk, base, grp, n, label, n_labels, names, &lf_all);
    test_drift(&wk, base, n);
    has_repeats |= d->drift.tested;
    if (wk.nomem)
        goto nomem;

    /* 4. kinetic window.  Only when the candidates bend down: grow a window
       from the coldest MIN_WINDOW_TEMPS temperatures one temperature at a
       time, and stop before the first one that (a) pulls the window's Ea
       below the coldest window's, (b) falls below the line through the
       colder points, or (c) makes the window bend down; each one-sided at
       TRIM_LEVEL.  (a) compares nested estimates: the variance of their
       difference is the difference of their variances, R^2 s^2 (1/Sxx_cold -
       1/Sxx) (Hausman, Econometrica 46:1251, 1978). */
    size_t nw = nc;
    memcpy(win, cand, nc * sizeof *win); /* cand is sorted by T already */
    int still_bent = 0;
    quad_test qc;
    int start_bent = 0;
    if (cv->tested && nc == n) { /* cand is base: the test above is this one */
        qc = q;
        start_bent = bends_down(&qc);
    } else if (cv->tested)
        start_bent = fit_quad(&wk, cand, nc, &qc) == 0 && bends_down(&qc);
    size_t ngc = group_temps(s->points, cand, nc, grp_c);
    if (start_bent && ngc <= MIN_WINDOW_TEMPS)
        still_bent = 1;
    else if (start_bent) {
        size_t k = 0;
        while (k < nc && grp_c[k] < MIN_WINDOW_TEMPS)
            k++;
        nw = k;
        line_fit cold, prev;
        if (fit_line(&wk, cand, nw, &cold) != 0)
            nw = nc;
        else {
            prev = cold;
            /* One set point a step; a sample with more than WINDOW_MAX_STEPS
               set points (a logger, not a rig) takes several a step, so that
               the refits stay O(WINDOW_MAX_STEPS n), not O(n^2). */
            const size_t step =
                ngc > WINDOW_MAX_STEPS ? (ngc + WINDOW_MAX_STEPS - 1) / WINDOW_MAX_STEPS : 1;
            for (size_t g = MIN_WINDOW_TEMPS; g < ngc; g += step) {
                size_t k2 = nw;
                while (k2 < nc && grp_c[k2] < g + step)
                    k2++;
                line_fit cur;
                if (fit_line(&wk, cand, k2, &cur) != 0 || !(cur.dof > 0))
                    break;
                double tcrit = arrank_stats_t_upper(TRIM_LEVEL, cur.dof);
                double var_d = R * R * cur.s2 * (1.0 / cold.sc.sxx - 1.0 / cur.sc.sxx);
                int lower = var_d > 0 && (cur.ea_J_mol - cold.ea_J_mol) / sqrt(var_d) < -tcrit;
                /* mean residual of the new temperature against the colder
                   line, with its prediction variance (delta method) */
                double sw = 0, ey = 0, ex = 0;
                for (size_t j = nw; j < k2; j++) {
                    sw += wk.w[cand[j]];
                    ey += wk.w[cand[j]] * wk.y[cand[j]];
                    ex += wk.w[cand[j]] * wk.x[cand[j]];
                }
                ey /= sw;
                ex /= sw;
                double u = (ex - prev.sc.xm) / prev.sc.sx;
                double var = prev.cov[0] + 2 * u * prev.cov[1] + u * u * prev.cov[3] +
                             prev.s2 / sw;
                int below = prev.dof > 0 &&
                            (ey - line_at(&prev, ex)) / sqrt(var) <
                                -arrank_stats_t_upper(TRIM_LEVEL, prev.dof);
                int bent = fit_quad(&wk, cand, k2, &qc) == 0 && qc.t < 0 &&
                           qc.t < -arrank_stats_t_upper(TRIM_LEVEL, qc.dof);
                if (lower || below || bent)
                    break;
                nw = k2;
                prev = cur;
            }
            /* The onset is gradual (for a sphere eta = 1 - phi^2/15 at small
               phi, from Thiele's formula), so the temperature next to the
               detected onset is itself partly affected: leave it out too. */
            if (nw < nc) {
                size_t gl = grp_c[nw - 1];
                size_t k3 = nw;
                while (k3 > 0 && grp_c[k3 - 1] == gl)
                    k3--;
                if (gl >= MIN_WINDOW_TEMPS)
                    nw = k3;
            }
            still_bent = fit_quad(&wk, cand, nw, &qc) == 0 && qc.t < 0 &&
                         qc.t < -arrank_stats_t_upper(TRIM_LEVEL, qc.dof);
        }
        for (size_t j = nw; j < nc; j++)
            d->points[cand[j]].excluded = 2; /* provisional: hotter than the window */
    }

    /* 5. regimes */
    line_fit lw;
    double ea_w = fit_line(&wk, win, nw, &lw) == 0 ? lw.ea_J_mol : NAN;
    int film_all = have_line && lf_all.ea_J_mol < FILM_EA_J_MOL;
    for (size_t k = 0; k < n; k++) {
        size_t i = base[k];
        arrank_point_diag *pd = &d->points[i];
        if (pd->excluded == 2) {
            regime_of_excluded(&wk, i, ea_w);
            pd->excluded = 0;
            if (pd->regime != ARRANK_REGIME_UNCLASSIFIED && cv->n_local &&
                cv->local[window_of(grp[k], n_groups)].ea_se_J_mol > THIN_SE_FRAC * ea_w)
                pd->regime = ARRANK_REGIME_UNCLASSIFIED;
            const char *rname = pd->regime == ARRANK_REGIME_PORE   ? "pore-diffusion-like"
                                : pd->regime == ARRANK_REGIME_FILM ? "film-diffusion-like"
                                                                   : "where the bend begins";
            if (!opt->use_all)
                set_excluded(&wk, i,
                             fmt(&wk, "%s: hotter than the kinetic window, local apparent Ea "
                                      "%.0f kJ/mol against %.0f kJ/mol in the window",
                                 rname, kj(pd->local_ea_J_mol), kj(ea_w)));
        } else if (film_all)
            pd->regime = ARRANK_REGIME_FILM;
        else if (pd->high_conversion)
            pd->regime = ARRANK_REGIME_UNCLASSIFIED;
        else if (cv->tested && cv->direction != ARRANK_BEND_UP)
            pd->regime = ARRANK_REGIME_KINETIC;
        else
            pd->regime = ARRANK_REGIME_UNCLASSIFIED;
        if (pd->high_conversion && !opt->use_all)
            set_excluded(&wk, i,
                         fmt(&wk, "conversion %.1f %% above the %.0f %% differential limit",
                             100.0 * s->points[i].conversion, 100.0 * d->conversion_limit));
    }
    if (still_bent)
        note(&wk, "the hot end was trimmed down to %d temperatures and the rest still bends: the "
                  "window's Ea may still understate the intrinsic value",
             MIN_WINDOW_TEMPS);
    if (film_all)
        finding(&wk, "apparent Ea %.1f kJ/mol on every point is below %.0f kJ/mol: the whole "
                     "sample may be film-controlled (no kinetic window)",
                kj(lf_all.ea_J_mol), kj(FILM_EA_J_MOL));

    /* 6. outliers on the set to be fitted */
    size_t *fitset = opt->use_all ? base : win;
    size_t nfit = opt->use_all ? n : nw;
    find_outliers(&wk, fitset, nfit);
    if (opt->drop_outliers)
        for (size_t k = 0; k < nfit; k++) {
            size_t i = fitset[k];
            const arrank_point_diag *pd = &d->points[i];
            if (pd->outlier)
                set_excluded(&wk, i,
                             fmt(&wk, "outlier: studentized residual %.2f (limit %.2f), Cook's "
                                      "distance %.2f",
                                 pd->student_resid, d->outlier_t_limit, pd->cooks_d));
        }
    if (wk.nomem)
        goto nomem;

    /* 7. refit on what is left */
    int changed = 0;
    for (size_t k = 0; k < n; k++)
        if (d->points[base[k]].excluded) {
            res->used[base[k]] = 0;
            changed = 1;
        }
    if (changed) {
        st = arrank_result_refit(res, err);
        if (st != ARRANK_OK)
            goto fail;
        if (res->error) {
            /* too little left: keep every point and say so */
            note(&wk, "the points left after the exclusions cannot be fitted (%s); every point "
                      "is kept",
                 res->error);
            memcpy(res->used, used0, np);
            for (size_t i = 0; i < np; i++) {
                d->points[i].excluded = 0;
                free(d->points[i].reason);
                d->points[i].reason = NULL;
            }
            st = arrank_result_refit(res, err);
            if (st != ARRANK_OK)
                goto fail;
        } else {
            d->window_applied = nw < nc;
        }
    }
    if (!res->error) {
        d->window_lo_K = res->fit.T_min_K;
        d->window_hi_K = res->fit.T_max_K;
        d->window_n = res->fit.n;
    }

    /* 8. transport criteria, mixed basis */
    criteria(&wk, c, opt->units);
    char why[512];
    int mixed;
    if (opt_basis && opt_basis->known)
        mixed = own_basis_mismatch(s, why, sizeof why) ||
                (opt_basis->mixed && snprintf(why, sizeof why, "%s", opt_basis->why) >= 0);
    else
        mixed = arrank_diagnose_basis(c, s, why, sizeof why);
    if (mixed) {
        d->mixed_basis = 1;
        finding(&wk, "normalisation bases are mixed: %s; rankings across bases can invert", why);
    }

    /* 9. causes and words */
    if (cv->detected)
        name_causes(&wk, base, n, isfinite(ea_w) ? ea_w : d->ea_all_J_mol, has_repeats);
    describe(&wk, res, base, n);
    if (wk.nomem)
        goto nomem;

    /* 10. flags */
    if (cv->detected)
        res->flags |= ARRANK_FLAG_CURVED;
    for (size_t k = 0; k < n; k++) {
        arrank_regime r = d->points[base[k]].regime;
        if (r == ARRANK_REGIME_PORE || r == ARRANK_REGIME_FILM)
            res->flags |= ARRANK_FLAG_TRANSPORT;
    }
    for (size_t j = 0; j < d->n_runs; j++) {
        if (d->runs[j].verdict < 0)
            res->flags |= ARRANK_FLAG_DEACTIVATION;
        if (d->runs[j].verdict > 0)
            res->flags |= ARRANK_FLAG_ACTIVATION;
    }
    if (d->drift.verdict < 0)
        res->flags |= ARRANK_FLAG_DEACTIVATION;
    if (d->drift.verdict > 0)
        res->flags |= ARRANK_FLAG_ACTIVATION;
    if (d->n_high_conversion)
        res->flags |= ARRANK_FLAG_HIGH_CONVERSION;
    if (d->n_outliers)
        res->flags |= ARRANK_FLAG_OUTLIER;
    if (d->mixed_basis)
        res->flags |= ARRANK_FLAG_MIXED_BASIS;
    if (res->n_used < n)
        res->flags |= ARRANK_FLAG_EXCLUDED;

    for (int j = 0; j < n_labels; j++)
        free(names[j]);
    free(names);
    if (scratch != scratch_small)
        free(scratch);
    res->diagnosis = d;
    return ARRANK_OK;

nomem:
    st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
fail:
    for (int j = 0; j < n_labels; j++)
        free(names[j]);
    free(names);
    if (used_saved)
        memcpy(res->used, used0, np);
    if (scratch != scratch_small)
        free(scratch);
    arrank_diagnosis_free(d);
    return st;
}

void arrank_diagnosis_free(arrank_diagnosis *d)
{
    if (!d)
        return;
    if (d->points)
        for (size_t i = 0; i < d->n_points; i++)
            free(d->points[i].reason);
    free(d->points);
    arrank_curvature *cv = &d->curvature;
    free(cv->local);
    for (size_t k = 0; k < cv->n_causes; k++) {
        free(cv->causes[k].cause);
        free(cv->causes[k].evidence);
    }
    free(cv->causes);
    free(d->weisz_prater.detail);
    free(d->mears.detail);
    for (size_t j = 0; j < d->n_runs; j++) {
        free(d->runs[j].label_ref);
        free(d->runs[j].label);
    }
    free(d->runs);
    free(d->drift.note);
    for (size_t k = 0; k < d->n_findings; k++)
        free(d->findings[k]);
    free(d->findings);
    for (size_t k = 0; k < d->n_notes; k++)
        free(d->notes[k]);
    free(d->notes);
    free(d);
}

/* ---- JSON and plain words ------------------------------------------------------ */

static json_t *jnum(double v)
{
    return isfinite(v) ? json_real(v) : json_null();
}

static json_t *jstr(const char *s)
{
    return s ? json_string(s) : json_null();
}

static json_t *jkj(double j)
{
    return jnum(j / 1000.0);
}

static json_t *criterion_json(const arrank_criterion *c)
{
    json_t *o = json_object();
    if (!o)
        return NULL;
    json_object_set_new(o, "computed", json_boolean(c->computed));
    json_object_set_new(o, "value", c->computed ? jnum(c->value) : json_null());
    json_object_set_new(o, "threshold", jnum(c->threshold));
    json_object_set_new(o, "threshold_source", jstr(c->source));
    json_object_set_new(o, "temp_K", jnum(c->temp_K));
    json_object_set_new(o, "verdict",
                        json_string(!c->computed ? "not computed"
                                    : c->passes  ? "below threshold: negligible"
                                                 : "above threshold: may limit the rate"));
    json_object_set_new(o, "detail", jstr(c->detail));
    return o;
}

static json_t *curvature_json(const arrank_curvature *cv)
{
    json_t *o = json_object(), *q = json_object(), *sr = json_object(), *loc = json_array(),
           *causes = json_array();
    if (!o || !q || !sr || !loc || !causes) {
        json_decref(o);
        json_decref(q);
        json_decref(sr);
        json_decref(loc);
        json_decref(causes);
        return NULL;
    }
    json_object_set_new(o, "verdict", json_string(cv->detected ? "detected" : "not detected"));
    json_object_set_new(o, "tested", json_boolean(cv->tested));
    json_object_set_new(o, "direction", json_string(arrank_bend_name(cv->direction)));
    json_object_set_new(o, "level", jnum(cv->level));
    json_object_set_new(o, "n_points", json_integer((json_int_t)cv->n));
    json_object_set_new(q, "c_K2", jnum(cv->quad_c_K2));
    json_object_set_new(q, "c_se_K2", jnum(cv->quad_c_se_K2));
    json_object_set_new(q, "t", jnum(cv->quad_t));
    json_object_set_new(q, "p", jnum(cv->quad_p));
    json_object_set_new(q, "dof", jnum(cv->quad_dof));
    json_object_set_new(q, "ea_cold_kJ_mol", jkj(cv->ea_cold_J_mol));
    json_object_set_new(q, "ea_hot_kJ_mol", jkj(cv->ea_hot_J_mol));
    json_object_set_new(o, "quadratic", q);
    json_object_set_new(sr, "fitted", json_boolean(cv->series_fitted));
    json_object_set_new(sr, "m", jnum(cv->series_m));
    json_object_set_new(sr, "T_ref_K", jnum(cv->series_T_ref_K));
    json_object_set_new(sr, "ea_kJ_mol", jkj(cv->series_ea_J_mol));
    json_object_set_new(sr, "ea_kJ_mol_se", jkj(cv->series_ea_se_J_mol));
    json_object_set_new(sr, "ln_k_t", jnum(cv->series_ln_kt));
    json_object_set_new(sr, "rss_line", jnum(cv->rss_line));
    json_object_set_new(sr, "rss_series", jnum(cv->rss_series));
    json_object_set_new(sr, "F", jnum(cv->series_F));
    json_object_set_new(sr, "p", jnum(cv->series_p));
    json_object_set_new(sr, "aicc_line", jnum(cv->aicc_line));
    json_object_set_new(sr, "aicc_series", jnum(cv->aicc_series));
    json_object_set_new(o, "series_resistance", sr);
    for (size_t k = 0; k < cv->n_local; k++) {
        const arrank_local_ea *le = &cv->local[k];
        json_array_append_new(
            loc, json_pack("{s:o, s:o, s:o, s:I, s:o, s:o}", "temp_lo_K", jnum(le->temp_lo_K),
                           "temp_hi_K", jnum(le->temp_hi_K), "temp_mid_K", jnum(le->temp_mid_K),
                           "n_points", (json_int_t)le->n_points, "ea_kJ_mol",
                           jkj(le->ea_J_mol), "ea_kJ_mol_se", jkj(le->ea_se_J_mol)));
    }
    json_object_set_new(o, "local_ea", loc);
    for (size_t k = 0; k < cv->n_causes; k++)
        json_array_append_new(causes, json_pack("{s:s, s:s, s:b}", "cause", cv->causes[k].cause,
                                                "evidence", cv->causes[k].evidence, "supported",
                                                cv->causes[k].supported));
    json_object_set_new(o, "causes", causes);
    return o;
}

static json_t *strings_json(char **v, size_t n)
{
    json_t *a = json_array();
    for (size_t k = 0; a && k < n; k++)
        json_array_append_new(a, json_string(v[k]));
    return a;
}

static const char *verdict_name(int v)
{
    return v < 0 ? "deactivation" : v > 0 ? "activation" : "none";
}

json_t *arrank_diagnosis_json(const arrank_result *res)
{
    const arrank_diagnosis *d = res->diagnosis;
    if (!d)
        return json_null();
    const arrank_sample *s = res->sample;
    json_t *o = json_object(), *regime = json_array(), *local = json_array(),
           *excluded = json_array(), *crit = json_object(), *qual = json_object(),
           *hc = json_array(), *runs = json_array(), *outl = json_array(), *win = json_object(),
           *drift = json_object();
    json_t *all[] = {o, regime, local, excluded, crit, qual, hc, runs, outl, win, drift};
    for (size_t k = 0; k < sizeof all / sizeof *all; k++)
        if (!all[k]) {
            for (size_t j = 0; j < sizeof all / sizeof *all; j++)
                json_decref(all[j]);
            return NULL;
        }
    for (size_t i = 0; i < d->n_points; i++) {
        const arrank_point_diag *pd = &d->points[i];
        const arrank_point *p = &s->points[i];
        json_array_append_new(regime, json_string(arrank_regime_name(pd->regime)));
        json_array_append_new(local, jkj(pd->local_ea_J_mol));
        if (!res->used[i])
            json_array_append_new(excluded,
                                  json_pack("{s:I, s:o, s:o}", "line", (json_int_t)p->line,
                                            "temp_K", jnum(p->temp_K), "reason",
                                            jstr(pd->reason ? pd->reason
                                                            : "left out before the diagnostics")));
        if (pd->high_conversion)
            json_array_append_new(hc, json_pack("{s:I, s:o, s:o}", "line", (json_int_t)p->line,
                                                "temp_K", jnum(p->temp_K), "conversion",
                                                jnum(p->conversion)));
        if (pd->outlier)
            json_array_append_new(
                outl, json_pack("{s:I, s:o, s:o, s:o, s:b}", "line", (json_int_t)p->line,
                                "temp_K", jnum(p->temp_K), "studentized_residual",
                                jnum(pd->student_resid), "cooks_distance", jnum(pd->cooks_d),
                                "dropped", !res->used[i]));
    }
    json_object_set_new(o, "regime", regime);
    json_object_set_new(o, "local_ea_kJ_mol", local);
    json_object_set_new(o, "excluded", excluded);
    json_object_set_new(win, "applied", json_boolean(d->window_applied));
    json_object_set_new(win, "temp_lo_K", jnum(d->window_lo_K));
    json_object_set_new(win, "temp_hi_K", jnum(d->window_hi_K));
    json_object_set_new(win, "n_points", json_integer((json_int_t)d->window_n));
    json_object_set_new(win, "ea_all_points_kJ_mol", jkj(d->ea_all_J_mol));
    json_object_set_new(win, "ea_all_points_kJ_mol_se", jkj(d->ea_all_se_J_mol));
    json_object_set_new(o, "kinetic_window", win);
    json_object_set_new(o, "curvature", curvature_json(&d->curvature));
    json_object_set_new(crit, "weisz_prater", criterion_json(&d->weisz_prater));
    json_object_set_new(crit, "mears", criterion_json(&d->mears));
    json_object_set_new(o, "criteria", crit);
    json_object_set_new(qual, "conversion_limit", jnum(d->conversion_limit));
    json_object_set_new(qual, "high_conversion", hc);
    for (size_t j = 0; j < d->n_runs; j++) {
        const arrank_run_shift *r = &d->runs[j];
        json_array_append_new(
            runs, json_pack("{s:o, s:o, s:o, s:I, s:o, s:o, s:o, s:o, s:o, s:s}", "reference",
                            jstr(r->label_ref), "run", jstr(r->label), "method", jstr(r->method),
                            "n", (json_int_t)r->n_pairs, "shift_ln_rate", jnum(r->shift_ln),
                            "shift_ln_rate_se", jnum(r->shift_ln_se), "change", jnum(r->change),
                            "t", jnum(r->t), "p", jnum(r->p), "verdict",
                            verdict_name(r->verdict)));
    }
    json_object_set_new(qual, "runs", runs);
    const arrank_drift *dr = &d->drift;
    json_object_set_new(drift, "tested", json_boolean(dr->tested));
    json_object_set_new(drift, "slope_ln_rate_per_h", jnum(dr->slope_ln_per_h));
    json_object_set_new(drift, "slope_se", jnum(dr->slope_se));
    json_object_set_new(drift, "t", jnum(dr->t));
    json_object_set_new(drift, "p", jnum(dr->p));
    json_object_set_new(drift, "span_h", jnum(dr->span_h));
    json_object_set_new(drift, "change", jnum(dr->change));
    json_object_set_new(drift, "verdict", json_string(verdict_name(dr->verdict)));
    json_object_set_new(drift, "note", jstr(dr->note));
    json_object_set_new(qual, "time_on_stream_drift", drift);
    json_object_set_new(qual, "outliers", outl);
    json_object_set_new(qual, "outlier_t_limit", jnum(d->outlier_t_limit));
    json_object_set_new(qual, "cooks_distance_limit", jnum(COOK_LIMIT));
    json_object_set_new(qual, "mixed_basis", json_boolean(d->mixed_basis));
    json_object_set_new(o, "quality", qual);
    json_object_set_new(o, "findings", strings_json(d->findings, d->n_findings));
    json_object_set_new(o, "diagnosis_notes", strings_json(d->notes, d->n_notes));
    return o;
}

/* Problems flagged by the analysis outside the diagnostics, in plain words
   with their evidence; returns how many, writing them when f is not NULL. */
static size_t basic_problems(FILE *f, const arrank_result *res, int *bad)
{
    const arrank_arrhenius *fit = &res->fit;
    size_t k = 0;
    if (res->flags & ARRANK_FLAG_FEW_POINTS) {
        k++;
        if (f)
            *bad |= fprintf(f, "  problem: %s: only %zu points in the fit\n",
                            arrank_flag_words(ARRANK_FLAG_FEW_POINTS), fit->n) < 0;
    }
    if (res->flags & ARRANK_FLAG_NARROW_RANGE) {
        k++;
        if (f)
            *bad |= fprintf(f, "  problem: %s: %.1f-%.1f K\n",
                            arrank_flag_words(ARRANK_FLAG_NARROW_RANGE), fit->T_min_K,
                            fit->T_max_K) < 0;
    }
    if (res->flags & ARRANK_FLAG_LOW_EA) {
        k++;
        if (f)
            *bad |= fprintf(f, "  problem: %s: Ea %.1f kJ/mol\n",
                            arrank_flag_words(ARRANK_FLAG_LOW_EA), fit->ea_J_mol / 1000.0) < 0;
    }
    if (res->flags & ARRANK_FLAG_POOR_FIT) {
        k++;
        if (f)
            *bad |= fprintf(f, "  problem: %s: chi2/dof = %.3g\n",
                            arrank_flag_words(ARRANK_FLAG_POOR_FIT), fit->chi2_dof) < 0;
    }
    if ((res->flags & ARRANK_FLAG_EXTRAPOLATED) && res->has_prediction) {
        k++;
        if (f)
            *bad |= fprintf(f,
                            "  problem: %s: %.1f K against %.1f-%.1f K measured; fitted kinetics "
                            "are not valid outside the tested window\n",
                            arrank_flag_words(ARRANK_FLAG_EXTRAPOLATED), res->at_T.temp_K,
                            fit->T_min_K, fit->T_max_K) < 0;
    }
    return k;
}

arrank_status arrank_diagnosis_write_text(FILE *f, const arrank_result *res, arrank_error *err)
{
    const arrank_sample *s = res->sample;
    const arrank_diagnosis *d = res->diagnosis;
    int bad = 0;
    if (res->error)
        bad |= fprintf(f, "%s (%s): not fitted: %s\n", s->id, s->file, res->error) < 0;
    else if (!d)
        bad |= fprintf(f, "%s (%s): diagnostics not run\n", s->id, s->file) < 0;
    else {
        size_t n_out = 0;
        for (size_t i = 0; i < s->n_points; i++)
            n_out += !res->used[i];
        size_t n_problems = d->n_findings + basic_problems(NULL, res, &bad);
        if (n_problems == 0)
            bad |= fprintf(f,
                           "%s (%s): no problem found; Ea %.1f kJ/mol (standard error %.1f) on "
                           "%zu points\n",
                           s->id, s->file, res->fit.ea_J_mol / 1000.0,
                           res->fit.ea_se_J_mol / 1000.0, res->fit.n) < 0;
        else
            bad |= fprintf(f, "%s (%s): %zu problem%s found\n", s->id, s->file, n_problems,
                           n_problems == 1 ? "" : "s") < 0;
        for (size_t k = 0; k < d->n_findings; k++)
            bad |= fprintf(f, "  problem: %s\n", d->findings[k]) < 0;
        basic_problems(f, res, &bad);
        for (size_t i = 0; i < s->n_points; i++)
            if (!res->used[i])
                bad |= fprintf(f, "  left out: line %ld, %.1f K: %s\n", s->points[i].line,
                               s->points[i].temp_K,
                               d->points[i].reason ? d->points[i].reason
                                                   : "left out before the diagnostics") < 0;
        if (n_out == 0 && n_problems > 0)
            bad |= fprintf(f, "  every point is in the fit\n") < 0;
        for (size_t k = 0; k < d->n_notes; k++)
            bad |= fprintf(f, "  note: %s\n", d->notes[k]) < 0;
    }
    if (bad || ferror(f))
        return arrank_errorf(err, ARRANK_EIO, "cannot write the diagnostics of '%s'", s->id);
    return ARRANK_OK;
}
