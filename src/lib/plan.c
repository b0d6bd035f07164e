/*
 * plan.c - planning the next runs: the closed-form update of a sample's
 * line, the greedy allocation and the preposterior simulation
 * (arrank/plan.h says the method and its sources).  Arrays in, arrays out.
 */
#include <gsl/gsl_cdf.h>
#include <gsl/gsl_integration.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>
#include <gsl/gsl_sf_gamma.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/contrast.h"
#include "arrank/plan.h"
#include "arrank/stats.h"
#include "stats.h"

#define PLAN_PI 3.14159265358979323846

/* x of the centred line at T. */
static double x_at(const arrank_plan_sample *s, double temp_K)
{
    return 1.0 / temp_K - 1.0 / s->T_ref_K;
}

/* The inverse of the symmetric 2x2 matrix m = (m0 m1; m1 m2) into inv; 0, or
   -1 when it is singular. */
static int inv2(const double m[3], double inv[3])
{
    double det = m[0] * m[2] - m[1] * m[1];
    double scale = fabs(m[0] * m[2]) + m[1] * m[1];
    if (!(det > 1e-14 * scale) || !isfinite(det))
        return -1;
    inv[0] = m[2] / det;
    inv[1] = -m[1] / det;
    inv[2] = m[0] / det;
    return 0;
}

/* g'A g for g = (1, x). */
static double quad(const double a[3], double x)
{
    return a[0] + 2.0 * x * a[1] + x * x * a[2];
}

/* m += w g g' for g = (1, x). */
static void add_point(double m[3], double w, double x)
{
    m[0] += w;
    m[1] += w * x;
    m[2] += w * x * x;
}

/* ---- the quadratic (curvature) ------------------------------------------ */

static double u_at(const arrank_plan_sample *s, double temp_K)
{
    return ARRANK_PLAN_U_SCALE * x_at(s, temp_K);
}

/* mom += w (1, u, u^2, u^3, u^4). */
static void add_moments(double mom[5], double w, double u)
{
    double p = w;
    for (int k = 0; k < 5; k++, p *= u)
        mom[k] += p;
}

/* [M3^-1]_cc of the moment matrix ((S0 S1 S2) (S1 S2 S3) (S2 S3 S4)): the
   cofactor S0 S2 - S1^2 over the determinant; NAN when singular. */
static double quad_vcc(const double S[5])
{
    double det = S[0] * (S[2] * S[4] - S[3] * S[3]) - S[1] * (S[1] * S[4] - S[3] * S[2]) +
                 S[2] * (S[1] * S[3] - S[2] * S[2]);
    double cof = S[0] * S[2] - S[1] * S[1];
    double scale = fabs(S[0] * S[2] * S[4]) + fabs(S[1] * S[1] * S[4]) + fabs(S[2] * S[2] * S[2]);
    if (!(det > 1e-12 * scale) || !isfinite(det))
        return NAN;
    return cof / det;
}

double arrank_plan_bend_se_factor(const arrank_plan_sample *s, size_t which,
                                  const arrank_plan_run *runs, size_t n_runs)
{
    double mom[5];
    memcpy(mom, s->mom, sizeof mom);
    for (size_t k = 0; k < n_runs; k++)
        if (runs[k].sample == which)
            add_moments(mom, (double)runs[k].repeats * s->weight_new, u_at(s, runs[k].temp_K));
    return sqrt(quad_vcc(mom));
}

double arrank_plan_bend_c(double dEa_J_mol, double temp_lo_K, double temp_hi_K)
{
    double dx = 1.0 / temp_lo_K - 1.0 / temp_hi_K;
    return dEa_J_mol / (2.0 * ARRANK_R_J_MOL_K * dx) / (ARRANK_PLAN_U_SCALE * ARRANK_PLAN_U_SCALE);
}

arrank_status arrank_plan_sample_from_fit(const arrank_arrhenius *fit, double weight_new,
                                          arrank_plan_sample *out, arrank_error *err)
{
    double s2 = fit->resid_sd * fit->resid_sd;
    const double c[3] = {fit->cov[0][0], fit->cov[0][1], fit->cov[1][1]};
    double ci[3];
    if (!(s2 > 0) || !isfinite(s2) || !(fit->dof > 0) || inv2(c, ci) != 0)
        return arrank_errorf(err, ARRANK_EFIT,
                             "a fit without scatter or with a singular covariance cannot be "
                             "planned for");
    if (!(weight_new > 0) || !isfinite(weight_new))
        return arrank_errorf(err, ARRANK_EINVAL, "weight of a new run '%g' is not positive",
                             weight_new);
    out->T_ref_K = fit->T_ref_K;
    out->b0 = fit->b0;
    out->b1 = fit->b1;
    for (int k = 0; k < 3; k++)
        out->info[k] = s2 * ci[k]; /* cov = s^2 M^-1 (fit.h) */
    out->rss = s2 * fit->dof;
    out->dof = fit->dof;
    out->weight_new = weight_new;
    memset(out->mom, 0, sizeof out->mom);
    out->bend_c = 0.0;
    return ARRANK_OK;
}

double arrank_plan_var_factor(const arrank_plan_sample *s, size_t which,
                              const arrank_plan_run *runs, size_t n_runs, double temp_K)
{
    double m[3] = {s->info[0], s->info[1], s->info[2]}, mi[3];
    for (size_t k = 0; k < n_runs; k++)
        if (runs[k].sample == which)
            add_point(m, (double)runs[k].repeats * s->weight_new, x_at(s, runs[k].temp_K));
    if (inv2(m, mi) != 0)
        return NAN;
    return quad(mi, x_at(s, temp_K));
}

arrank_status arrank_plan_refit(const arrank_plan_sample *s, const double *temp_K,
                                const double *ln_rate, size_t n, arrank_plan_sample *out,
                                arrank_error *err)
{
    double m[3] = {s->info[0], s->info[1], s->info[2]}, mi[3];
    /* right-hand side X'Wy = M b of the old points plus the new ones */
    double r0 = m[0] * s->b0 + m[1] * s->b1, r1 = m[1] * s->b0 + m[2] * s->b1;
    double w = s->weight_new;
    for (size_t i = 0; i < n; i++) {
        double x = x_at(s, temp_K[i]);
        add_point(m, w, x);
        r0 += w * ln_rate[i];
        r1 += w * x * ln_rate[i];
    }
    if (inv2(m, mi) != 0)
        return arrank_errorf(err, ARRANK_EFIT, "the refit's design is singular");
    double b0 = mi[0] * r0 + mi[1] * r1, b1 = mi[1] * r0 + mi[2] * r1;
    /* RSS' = RSS + (b - b')'M(b - b') + new residuals (the old points'
       cross term vanishes by their normal equations) */
    double d0 = s->b0 - b0, d1 = s->b1 - b1;
    double rss = s->rss + s->info[0] * d0 * d0 + 2.0 * s->info[1] * d0 * d1 +
                 s->info[2] * d1 * d1;
    for (size_t i = 0; i < n; i++) {
        double e = ln_rate[i] - b0 - b1 * x_at(s, temp_K[i]);
        rss += w * e * e;
    }
    arrank_plan_sample r = *s;
    r.b0 = b0;
    r.b1 = b1;
    memcpy(r.info, m, sizeof r.info);
    r.rss = rss;
    r.dof = s->dof + (double)n;
    *out = r;
    return ARRANK_OK;
}

void arrank_plan_key(const arrank_plan_sample *s, double temp_K, double *mean, double *se)
{
    double x = x_at(s, temp_K), mi[3];
    *mean = s->b0 + s->b1 * x;
    *se = inv2(s->info, mi) == 0 ? sqrt(s->rss / s->dof * quad(mi, x)) : NAN;
}

/* ---- the goal ----------------------------------------------------------- */

/* log Phi(x), also far in the lower tail (Mills' ratio: Phi(x) ~ phi(x)/|x|,
   Abramowitz & Stegun 26.2.12). */
static double log_phi_cdf(double x)
{
    if (x > -30.0)
        return log(gsl_cdf_ugaussian_P(x));
    return -0.5 * x * x - log(-x) - 0.5 * log(2.0 * PLAN_PI);
}

/* The density of Student's t with dof degrees of freedom at z, from its
   normalising constant c = Gamma((dof + 1) / 2) / (Gamma(dof / 2) sqrt(dof pi));
   normal when dof is infinite. */
static double t_density(double z, double dof, double c)
{
    return isfinite(dof) ? c * pow(1.0 + z * z / dof, -0.5 * (dof + 1.0))
                         : c * exp(-0.5 * z * z);
}

static double t_density_constant(double dof)
{
    if (!isfinite(dof))
        return 1.0 / sqrt(2.0 * PLAN_PI);
    return exp(gsl_sf_lngamma(0.5 * (dof + 1.0)) - gsl_sf_lngamma(0.5 * dof)) /
           sqrt(dof * PLAN_PI);
}

/* A tail of t below which P(best) leaves a rival or a factor out. */
#define P_BEST_TAIL 1e-12

/* The integral below by Gauss-Legendre quadrature on `nodes` nodes (GSL's
   fixed-order tables); -1 out of memory (NAN for keys that are not numbers). */
static double p_best_nodes(const double *mean, const double *se, const double *dof,
                           const size_t *cand, const double *q, size_t n_cand, size_t best,
                           size_t nodes)
{
    gsl_integration_glfixed_table *gl = gsl_integration_glfixed_table_alloc(nodes);
    if (!gl)
        return -1.0;
    const double nu = dof[best] >= 1 ? dof[best] : 1.0, cst = t_density_constant(nu);
    double sum = 0.0;
    for (size_t k = 0; k < nodes; k++) {
        double theta, w;
        gsl_integration_glfixed_point(-0.5 * PLAN_PI, 0.5 * PLAN_PI, k, &theta, &w, gl);
        double z = tan(theta), sec = 1.0 / cos(theta);
        double v = mean[best] + se[best] * z;
        double prod = w * t_density(z, nu, cst) * sec * sec;
        for (size_t c = 0; c < n_cand && prod > 0; c++) {
            size_t j = cand[c];
            double u = se[j] > 0    ? (v - mean[j]) / se[j]
                       : se[j] == 0 ? (v > mean[j] ? INFINITY : -INFINITY)
                                    : NAN;
            /* beyond the 1e-12 tails a factor is 0 or 1 to within 1e-12; a
               key that is not a number makes the product NAN */
            if (u <= -q[c])
                prod = 0.0;
            else if (!(u >= q[c]))
                prod *= isnan(u) ? NAN : arrank_stats_t_cdf(u, dof[j]);
        }
        sum += prod;
    }
    gsl_integration_glfixed_table_free(gl);
    return sum;
}

/*
 * P(the leader `best` has the largest key) for independent keys
 * mean + se T, T ~ t_dof (the ranking's model, pbest.c; normal for an
 * infinite dof): the integral over the leader's z of f(z) prod_j
 * F_j((m_b + s_b z - m_j) / s_j), the product over the rivals cand[n_cand]
 * (the others are below the leader by more than both keys' 1e-12 tails: left
 * out).  The t's heavy tails are reached by z = tan(theta) on (-pi/2, pi/2),
 * where f(z) sec^2(theta) is bounded for dof >= 1.  A rival is a step in z at
 * (m_j - m_b) / s_b of width s_j / s_b, sharp when the rival is far more
 * precise than the leader, or far out in a heavy-tailed leader's z: the
 * nodes start at 32 a doubling of s_b / s_j above 1 (at most 512) and double
 * until two answers agree within 1e-10, or, with a target (else NAN), within
 * a thousandth of their distance to it (the side is then sure); at most 2048.
 * Against SciPy's adaptive quadrature (tests/check_scipy_plan.py): within
 * 1e-9.  -1 out of memory; NAN when a key is not a number (a singular
 * refit), which meets no target.
 */
static double p_best_t(const double *mean, const double *se, const double *dof,
                       const size_t *cand, const double *q, size_t n_cand, size_t best,
                       double target)
{
    double ratio = 0.0;
    for (size_t c = 0; c < n_cand; c++)
        ratio = fmax(ratio, se[cand[c]] > 0 ? se[best] / se[cand[c]] : INFINITY);
    size_t nodes = 32;
    while (nodes < 512 && (double)nodes < 32.0 * ratio)
        nodes *= 2;
    double prev = p_best_nodes(mean, se, dof, cand, q, n_cand, best, nodes);
    for (;;) {
        nodes *= 2;
        double p = p_best_nodes(mean, se, dof, cand, q, n_cand, best, nodes);
        double diff = fabs(p - prev);
        if (p < 0 || prev < 0)
            return -1.0;
        if (isnan(p) || diff <= 1e-10 || nodes >= 2048 ||
            (isfinite(target) && diff <= 1e-3 * fabs(p - target)))
            return p;
        prev = p;
    }
}

/* The rivals of `best` that can matter (above), into cand; their number. */
static size_t p_best_rivals(const double *mean, const double *se, const double *dof, size_t n,
                            size_t best, size_t *cand)
{
    double lo = mean[best] - arrank_stats_t_upper(P_BEST_TAIL, dof[best]) * se[best];
    size_t n_cand = 0;
    for (size_t i = 0; i < n; i++)
        if (i != best && !(mean[i] + arrank_stats_t_upper(P_BEST_TAIL, dof[i]) * se[i] < lo))
            cand[n_cand++] = i;
    return n_cand;
}

/* Each rival's 1e-12 tail quantile, q[c] for cand[c]. */
static void p_best_tails(const double *dof, const size_t *cand, size_t n_cand, double *q)
{
    for (size_t c = 0; c < n_cand; c++)
        q[c] = arrank_stats_t_upper(P_BEST_TAIL, dof[cand[c]]);
}

double arrank_plan_p_best(const double *mean, const double *se, const double *dof, size_t n,
                          size_t best)
{
    if (best >= n)
        return NAN;
    size_t *cand = malloc((n ? n : 1) * sizeof *cand);
    double *q = malloc((n ? n : 1) * sizeof *q);
    double p = NAN;
    if (cand && q) {
        size_t n_cand = p_best_rivals(mean, se, dof, n, best, cand);
        p_best_tails(dof, cand, n_cand, q);
        p = p_best_t(mean, se, dof, cand, q, n_cand, best, NAN);
        if (p < 0)
            p = NAN;
    }
    free(cand);
    free(q);
    return p;
}

/* P(rival j beats the leader b) at most: both beyond the point that splits
   their gap in proportion to their se, P(T_j > g) + P(T_b < -g) with
   g = (m_b - m_j) / (s_b + s_j); 1 when j is not below b. */
static double beats_bound(const double *mean, const double *se, const double *dof, size_t b,
                          size_t j)
{
    double gap = mean[b] - mean[j], s = se[b] + se[j];
    if (!(gap > 0))
        return 1.0;
    if (!(s > 0))
        return 0.0;
    double g = gap / s;
    return arrank_stats_t_cdf(-g, dof[j]) + arrank_stats_t_cdf(-g, dof[b]);
}

/* The two-sided p of key_i - key_j with Welch-Satterthwaite dof
   (arrank_contrast_welch_dof), as the groups compute it (groups.c; the plan's
   test holds the two to the same groups). */
static double pair_p(double ki, double si, double di, double kj, double sj, double dj)
{
    const double v = si * si + sj * sj;
    const double d = fabs(ki - kj);
    if (!(v > 0))
        return d > 0 ? 0.0 : 1.0;
    return arrank_stats_t_p(d / sqrt(v), arrank_contrast_welch_dof(si, di, sj, dj));
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return x < y ? -1 : x > y;
}

/* qsort has no context: the keys of the sort in progress, per thread. */
static _Thread_local const double *sort_key;
static int cmp_key(const void *a, const void *b)
{
    double ka = sort_key[*(const size_t *)a], kb = sort_key[*(const size_t *)b];
    if (ka != kb)
        return ka > kb ? -1 : 1;
    return *(const size_t *)a < *(const size_t *)b ? -1 : 1;
}

/*
 * The separate goal's Holm family, set up once for many checks
 * (arrank_plan_simulate): its members, the first t->n_family samples by key
 * at set-up (kept for every check), and the sorted p-values of its pairs
 * that no check changes (neither sample involved).  A check then computes
 * only the pairs of the involved samples: Holm's step-down (Holm, Scand. J.
 * Statist. 6:65, 1979) rejects the pair of the two best, which is what puts
 * the second in a group of its own (groups.h), exactly when every p-value
 * below its own, and its own, passes (m - j + 1) p_(j) <= alpha.
 */
typedef struct {
    size_t n, nf;
    size_t *fam;         /* [nf] sample indices, best first at set-up */
    unsigned char *inv;  /* [n] 1: involved */
    double *fixed;       /* [n_fixed] ascending */
    size_t n_fixed;
    size_t f0;           /* fixed p-values below alpha / m: they pass at any step */
    double *dyn;         /* [nf * involved members] scratch */
    double *mean, *se;   /* [n] scratch: the keys */
    double *dof;         /* [n] scratch: their dof */
    double *threat;      /* [n] scratch: a rival's gap to the leader in se */
    double *tail;        /* [n] scratch: a rival's 1e-12 tail quantile */
    size_t *cand;        /* [n] scratch: P(best)'s contenders */
} holm_ctx;

static void holm_free(holm_ctx *h)
{
    free(h->fam);
    free(h->inv);
    free(h->fixed);
    free(h->dyn);
    free(h->mean);
    free(h->cand);
    memset(h, 0, sizeof *h);
}

static void keys_of(const arrank_plan_sample *s, size_t n, double temp_K, double *mean,
                    double *se)
{
    for (size_t i = 0; i < n; i++)
        arrank_plan_key(&s[i], temp_K, &mean[i], &se[i]);
}

/* 0, or -1 out of memory. */
static int holm_setup(holm_ctx *h, const arrank_plan_sample *s, size_t n, const size_t *involved,
                      size_t n_inv, const arrank_plan_target *t)
{
    memset(h, 0, sizeof *h);
    h->n = n;
    h->nf = t->n_family < n ? t->n_family : n;
    if (h->nf < 2)
        h->nf = n < 2 ? n : 2;
    size_t *order = malloc((n ? n : 1) * sizeof *order);
    h->inv = calloc(n ? n : 1, 1);
    h->mean = malloc((n ? 5 * n : 1) * sizeof *h->mean);
    h->cand = malloc((n ? n : 1) * sizeof *h->cand);
    h->fixed = malloc((h->nf * h->nf / 2 + 1) * sizeof *h->fixed);
    h->dyn = malloc((h->nf * (n_inv < h->nf ? n_inv : h->nf) + 1) * sizeof *h->dyn);
    if (!order || !h->inv || !h->mean || !h->cand || !h->fixed || !h->dyn) {
        free(order);
        holm_free(h);
        return -1;
    }
    h->se = h->mean + n;
    h->dof = h->mean + 2 * n;
    h->threat = h->mean + 3 * n;
    h->tail = h->mean + 4 * n;
    for (size_t k = 0; k < n_inv; k++)
        h->inv[involved[k]] = 1;
    keys_of(s, n, t->temp_K, h->mean, h->se);
    for (size_t i = 0; i < n; i++)
        order[i] = i;
    sort_key = h->mean;
    qsort(order, n, sizeof *order, cmp_key);
    h->fam = order; /* the first nf are the family */
    for (size_t a = 0; a < h->nf; a++)
        for (size_t b = a + 1; b < h->nf; b++) {
            size_t i = order[a], j = order[b];
            if (!h->inv[i] && !h->inv[j])
                h->fixed[h->n_fixed++] = pair_p(h->mean[i], h->se[i], s[i].dof, h->mean[j],
                                                h->se[j], s[j].dof);
        }
    qsort(h->fixed, h->n_fixed, sizeof *h->fixed, cmp_double);
    double m = (double)h->nf * (double)(h->nf - 1) / 2.0;
    while (h->f0 < h->n_fixed && h->fixed[h->f0] < t->alpha / m)
        h->f0++;
    return 0;
}

/* Holm's step-down reaches and rejects the pair of the two best (above). */
static int holm_top_rejected(holm_ctx *h, const arrank_plan_sample *s, double alpha)
{
    size_t t1 = SIZE_MAX, t2 = SIZE_MAX; /* positions in fam */
    for (size_t a = 0; a < h->nf; a++) {
        size_t i = h->fam[a];
        if (t1 == SIZE_MAX || h->mean[i] > h->mean[h->fam[t1]] ||
            (h->mean[i] == h->mean[h->fam[t1]] && i < h->fam[t1])) {
            t2 = t1;
            t1 = a;
        } else if (t2 == SIZE_MAX || h->mean[i] > h->mean[h->fam[t2]] ||
                   (h->mean[i] == h->mean[h->fam[t2]] && i < h->fam[t2]))
            t2 = a;
    }
    size_t i1 = h->fam[t1], i2 = h->fam[t2];
    double pP = pair_p(h->mean[i1], h->se[i1], s[i1].dof, h->mean[i2], h->se[i2], s[i2].dof);
    double m = (double)h->nf * (double)(h->nf - 1) / 2.0, thr = alpha / m;
    if (pP < thr)
        return 1; /* it and every p below it pass at any step */
    /* the involved samples' pairs; a pair whose t exceeds the quantile of
       alpha / m on the smaller of its two dof has p < alpha / m (the Welch dof
       is at least that smaller one): counted, not computed */
    size_t n_dyn = 0, n_tiny = 0;
    for (size_t a = 0; a < h->nf; a++) {
        size_t i = h->fam[a];
        if (!h->inv[i])
            continue;
        for (size_t b = 0; b < h->nf; b++) {
            size_t j = h->fam[b];
            if (b == a || (h->inv[j] && b < a))
                continue;
            double v = h->se[i] * h->se[i] + h->se[j] * h->se[j];
            double dmin = fmin(fmin(s[i].dof, s[j].dof), 1e6);
            if (v > 0 && fabs(h->mean[i] - h->mean[j]) / sqrt(v) >
                             arrank_stats_t_upper(0.5 * thr, dmin) * (1.0 + 1e-9)) {
                n_tiny++;
                continue;
            }
            h->dyn[n_dyn++] = pair_p(h->mean[i], h->se[i], s[i].dof, h->mean[j], h->se[j],
                                     s[j].dof);
        }
    }
    qsort(h->dyn, n_dyn, sizeof *h->dyn, cmp_double);
    /* every p below alpha / m passes at any step: the walk starts after them */
    size_t jf = h->f0, jd = 0;
    while (jd < n_dyn && h->dyn[jd] < thr)
        jd++;
    size_t j = jf + jd + n_tiny + 1;
    for (;; j++) {
        double p;
        if (jf < h->n_fixed && (jd == n_dyn || h->fixed[jf] <= h->dyn[jd]))
            p = h->fixed[jf++];
        else if (jd < n_dyn)
            p = h->dyn[jd++];
        else
            break;
        if (!(p < pP))
            break;
        if (!((m - (double)j + 1.0) * p <= alpha))
            return 0;
    }
    /* ties with pP: the pair's adjusted p is that of the first of them */
    return (m - (double)j + 1.0) * pP <= alpha;
}

/* separate: the best sample alone in the first Holm group, or its P(best) at
   the target. */
static int holm_separated(holm_ctx *h, const arrank_plan_sample *s, const arrank_plan_target *t)
{
    if (h->n < 2)
        return 1;
    keys_of(s, h->n, t->temp_K, h->mean, h->se);
    /* a key without a standard error (a singular design) tells nothing apart:
       Holm's pair test would take its NAN variance for p = 0 */
    for (size_t i = 0; i < h->n; i++)
        if (!isfinite(h->mean[i]) || !(h->se[i] >= 0))
            return 0;
    if (holm_top_rejected(h, s, t->alpha))
        return 1;
    if (!(t->target > 0 && t->target < 1))
        return 0;
    size_t best = 0;
    for (size_t i = 0; i < h->n; i++) {
        h->dof[i] = s[i].dof;
        if (h->mean[i] > h->mean[best])
            best = i;
    }
    /* Each rival only lowers P(best), and by at most its bound above: the
       closest rivals first, P(best) over them alone, then either it is below
       the target (not met), or its excess over the target covers the rest's
       bounds (met), or twice as many rivals are taken.  In a wide tie the
       first three settle it, found in one pass; far behind a clear leader
       the bounds do. */
    size_t n_cand = 0;
    for (size_t i = 0; i < h->n; i++) {
        if (i == best)
            continue;
        h->threat[i] = (h->mean[i] - h->mean[best]) /
                       sqrt(h->se[i] * h->se[i] + h->se[best] * h->se[best]);
        size_t c = n_cand < 3 ? n_cand++ : 3;
        for (; c > 0 && !(h->threat[h->cand[c - 1]] >= h->threat[i]); c--)
            if (c < 3)
                h->cand[c] = h->cand[c - 1];
        if (c < 3)
            h->cand[c] = i;
    }
    p_best_tails(h->dof, h->cand, n_cand, h->tail);
    double p3 = p_best_t(h->mean, h->se, h->dof, h->cand, h->tail, n_cand, best, t->target);
    if (p3 < 0)
        return -1; /* out of memory */
    if (!(p3 >= t->target) || h->n <= 4)
        return p3 >= t->target; /* a NAN key meets nothing */
    n_cand = p_best_rivals(h->mean, h->se, h->dof, h->n, best, h->cand);
    sort_key = h->threat;
    qsort(h->cand, n_cand, sizeof *h->cand, cmp_key);
    p_best_tails(h->dof, h->cand, n_cand, h->tail);
    for (size_t k = n_cand < 3 ? n_cand : 3;; k = 2 * k < n_cand ? 2 * k : n_cand) {
        double p = p_best_t(h->mean, h->se, h->dof, h->cand, h->tail, k, best, t->target);
        if (p < 0)
            return -1;
        if (!(p >= t->target))
            return 0;
        if (k == n_cand)
            return 1;
        double rest = 0.0;
        for (size_t c = k; c < n_cand && p - rest >= t->target; c++)
            rest += beats_bound(h->mean, h->se, h->dof, best, h->cand[c]);
        if (p - rest >= t->target)
            return 1;
    }
}

/* separate, on its own: 1, 0, or -1 out of memory. */
static int separated(const arrank_plan_sample *samples, size_t n, const size_t *involved,
                     size_t n_inv, const arrank_plan_target *t)
{
    holm_ctx h;
    if (holm_setup(&h, samples, n, involved, n_inv, t) != 0)
        return -1;
    int met = holm_separated(&h, samples, t);
    holm_free(&h);
    return met;
}

int arrank_plan_goal_met(const arrank_plan_sample *samples, size_t n, const size_t *involved,
                         size_t n_involved, const arrank_plan_target *t)
{
    if (t->goal == ARRANK_GOAL_SEPARATE)
        return separated(samples, n, involved, n_involved, t);
    if (t->goal == ARRANK_GOAL_CURVATURE)
        return 0;
    double lim = log1p(t->width);
    for (size_t k = 0; k < n_involved; k++) {
        double mean, se;
        arrank_plan_key(&samples[involved[k]], t->temp_K, &mean, &se);
        double q = arrank_t_quantile(1.0 - t->alpha, samples[involved[k]].dof);
        if (!(q * se <= lim))
            return 0;
    }
    return 1;
}

/* ---- the allocation ----------------------------------------------------- */

/* An involved sample's design during the allocation: its line's M, its
   quadratic's moments, the runs added. */
typedef struct {
    double m[3];
    double mom[5];
    size_t added;
} design;

static void design_add(design *d, const arrank_plan_sample *s, double temp_K)
{
    add_point(d->m, s->weight_new, x_at(s, temp_K));
    add_moments(d->mom, s->weight_new, u_at(s, temp_K));
    d->added++;
}

/* The planning score (arrank_plan_allocate) of the designs d[n_inv]. */
static double score(const arrank_plan_sample *samples, const size_t *involved, size_t n_inv,
                    const design *d, const arrank_plan_target *t)
{
    double var[64], mean[64], sc = 0.0;
    if (t->goal == ARRANK_GOAL_CURVATURE) {
        double z = gsl_cdf_ugaussian_Pinv(1.0 - 0.5 * t->level);
        for (size_t k = 0; k < n_inv; k++) {
            const arrank_plan_sample *s = &samples[involved[k]];
            double se = sqrt(s->rss / s->dof * quad_vcc(d[k].mom));
            sc += isfinite(se) ? log_phi_cdf(fabs(s->bend_c) / se - z) : -1e300;
        }
        return sc;
    }
    for (size_t k = 0; k < n_inv; k++) {
        const arrank_plan_sample *s = &samples[involved[k]];
        double mi[3], x = x_at(s, t->temp_K);
        if (inv2(d[k].m, mi) != 0)
            return -INFINITY;
        var[k] = s->rss / s->dof * quad(mi, x);
        mean[k] = s->b0 + s->b1 * x;
    }
    if (t->goal == ARRANK_GOAL_SEPARATE) {
        double nf = (double)(t->n_family > 2 ? t->n_family : 2);
        /* the easier of the goal's two routes: Holm's pairwise tests (at the
           Bonferroni level), or P(best) at the target (each pairwise margin
           d / se past the target's normal quantile) */
        double z = gsl_cdf_ugaussian_Pinv(1.0 - t->alpha / (nf * (nf - 1.0)));
        if (t->target > 0 && t->target < 1)
            z = fmin(z, gsl_cdf_ugaussian_Pinv(t->target));
        for (size_t k = 1; k < n_inv; k++)
            sc += log_phi_cdf(fabs(mean[0] - mean[k]) / sqrt(var[0] + var[k]) - z);
        return sc;
    }
    double lim = log1p(t->width);
    for (size_t k = 0; k < n_inv; k++) {
        double dof = samples[involved[k]].dof + (double)d[k].added;
        double hw = arrank_t_quantile(1.0 - t->alpha, dof) * sqrt(var[k]);
        sc += (hw < lim ? 0.0 : lim - hw) - 0.001 * hw;
    }
    return sc;
}

/* The involved position of candidate c's sample; n_involved when none. */
static size_t position_of(const size_t *involved, size_t n_involved, size_t sample)
{
    size_t k = 0;
    while (k < n_involved && involved[k] != sample)
        k++;
    return k;
}

/* Step 1 of the allocation: the involved samples' designs before any run;
   EINVAL for an index out of range or a candidate of no involved sample. */
static arrank_status designs_init(const arrank_plan_sample *samples, size_t n,
                                  const size_t *involved, size_t n_involved,
                                  const size_t *cand_sample, size_t n_cand, design *d,
                                  arrank_error *err)
{
    if (n_involved == 0 || n_involved > 64)
        return arrank_errorf(err, ARRANK_EINVAL,
                             "a plan takes 1 to 64 samples, not %zu", n_involved);
    for (size_t k = 0; k < n_involved; k++) {
        if (involved[k] >= n)
            return arrank_errorf(err, ARRANK_EINVAL, "involved sample %zu out of range",
                                 involved[k]);
        memcpy(d[k].m, samples[involved[k]].info, sizeof d[k].m);
        memcpy(d[k].mom, samples[involved[k]].mom, sizeof d[k].mom);
        d[k].added = 0;
    }
    for (size_t c = 0; c < n_cand; c++)
        if (position_of(involved, n_involved, cand_sample[c]) == n_involved)
            return arrank_errorf(err, ARRANK_EINVAL, "candidate %zu is of no involved sample", c);
    return ARRANK_OK;
}

double arrank_plan_score(const arrank_plan_sample *samples, size_t n, const size_t *involved,
                         size_t n_involved, const arrank_plan_target *t,
                         const size_t *cand_sample, const double *cand_temp_K, size_t n_cand,
                         const size_t *repeats)
{
    design d[64];
    arrank_error e;
    if (designs_init(samples, n, involved, n_involved, cand_sample, n_cand, d, &e) != ARRANK_OK)
        return NAN;
    for (size_t c = 0; c < n_cand; c++) {
        size_t k = position_of(involved, n_involved, cand_sample[c]);
        for (size_t r = 0; r < repeats[c]; r++)
            design_add(&d[k], &samples[involved[k]], cand_temp_K[c]);
    }
    return score(samples, involved, n_involved, d, t);
}

/* The exact search (arrank_plan_allocate): every multiset of `left` more runs
   from candidates first.. on top of the designs d, the best score and its
   repeats kept (the first found among equals). */
typedef struct {
    const arrank_plan_sample *samples;
    const size_t *involved, *cand_sample;
    const double *cand_T;
    size_t n_inv, n_cand;
    const arrank_plan_target *t;
    size_t *cur, *best;
    double best_sc;
} exact_search;

static void search(exact_search *x, design *d, size_t first, size_t left)
{
    if (left == 0) {
        double sc = score(x->samples, x->involved, x->n_inv, d, x->t);
        if (sc > x->best_sc) {
            x->best_sc = sc;
            memcpy(x->best, x->cur, x->n_cand * sizeof *x->best);
        }
        return;
    }
    for (size_t c = first; c < x->n_cand; c++) {
        size_t k = position_of(x->involved, x->n_inv, x->cand_sample[c]);
        design saved = d[k];
        design_add(&d[k], &x->samples[x->involved[k]], x->cand_T[c]);
        x->cur[c]++;
        search(x, d, c, left - 1);
        x->cur[c]--;
        d[k] = saved;
    }
}

/* Allocations of budget runs over n_cand candidates, C(n_cand + budget - 1,
   budget), or SIZE_MAX past limit. */
static size_t multisets(size_t n_cand, size_t budget, size_t limit)
{
    double count = 1.0;
    for (size_t i = 1; i <= budget; i++) {
        count = count * (double)(n_cand + i - 1) / (double)i;
        if (count > (double)limit)
            return SIZE_MAX;
    }
    return (size_t)(count + 0.5);
}

arrank_status arrank_plan_allocate(const arrank_plan_sample *samples, size_t n,
                                   const size_t *involved, size_t n_involved,
                                   const arrank_plan_target *t, const size_t *cand_sample,
                                   const double *cand_temp_K, size_t n_cand, size_t budget,
                                   size_t *repeats, arrank_error *err)
{
    design d[64];
    arrank_status st = designs_init(samples, n, involved, n_involved, cand_sample, n_cand, d, err);
    if (st != ARRANK_OK)
        return st;
    memset(repeats, 0, n_cand * sizeof *repeats);
    /* (a budget of at most 8: the search recurses once per run) */
    if (n_cand && budget <= 8 && multisets(n_cand, budget, ARRANK_PLAN_EXACT_MAX) != SIZE_MAX) {
        size_t *cur = calloc(n_cand, sizeof *cur);
        if (!cur)
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        exact_search x = {samples, involved, cand_sample, cand_temp_K, n_involved, n_cand, t,
                          cur, repeats, -INFINITY};
        search(&x, d, 0, budget);
        free(cur);
        return ARRANK_OK;
    }
    for (size_t step = 0; step < budget && n_cand; step++) {
        size_t best = SIZE_MAX;
        double best_sc = -INFINITY;
        for (size_t c = 0; c < n_cand; c++) {
            size_t k = position_of(involved, n_involved, cand_sample[c]);
            design saved = d[k];
            design_add(&d[k], &samples[involved[k]], cand_temp_K[c]);
            double sc = score(samples, involved, n_involved, d, t);
            d[k] = saved;
            if (sc > best_sc) {
                best_sc = sc;
                best = c;
            }
        }
        if (best == SIZE_MAX)
            break;
        size_t k = position_of(involved, n_involved, cand_sample[best]);
        design_add(&d[k], &samples[involved[k]], cand_temp_K[best]);
        repeats[best]++;
    }
    return ARRANK_OK;
}

/* ---- the preposterior simulation ---------------------------------------- */

/* Simulation k of sample s: sigma^2 = s^2 dof / chi2_dof, (b0, b1) normal
   around the fit with covariance sigma^2 M^-1 (par stream), the runs of
   sample `which` measured with that scatter (noise stream), then refitted
   into *out. */
static arrank_status simulate_one(const arrank_plan_sample *s, size_t which,
                                  const arrank_plan_run *runs, size_t n_runs, gsl_rng *par,
                                  gsl_rng *noise, double *T, double *y, arrank_plan_sample *out,
                                  arrank_error *err)
{
    double mi[3];
    if (inv2(s->info, mi) != 0)
        return arrank_errorf(err, ARRANK_EFIT, "singular design");
    double sigma2 = s->rss / gsl_ran_chisq(par, s->dof);
    /* Cholesky factor of M^-1: l00 = sqrt(a), l10 = b / l00, l11 = sqrt(c - l10^2) */
    double l00 = sqrt(mi[0]), l10 = mi[1] / l00, l11 = sqrt(fmax(mi[2] - l10 * l10, 0.0));
    double z0 = gsl_ran_gaussian_ziggurat(par, 1.0), z1 = gsl_ran_gaussian_ziggurat(par, 1.0);
    double sd = sqrt(sigma2);
    double b0 = s->b0 + sd * l00 * z0, b1 = s->b1 + sd * (l10 * z0 + l11 * z1);
    double noise_sd = sqrt(sigma2 / s->weight_new);
    size_t m = 0;
    for (size_t k = 0; k < n_runs; k++) {
        if (runs[k].sample != which)
            continue;
        double x = x_at(s, runs[k].temp_K);
        for (size_t r = 0; r < runs[k].repeats; r++) {
            T[m] = runs[k].temp_K;
            y[m++] = b0 + b1 * x + gsl_ran_gaussian_ziggurat(noise, noise_sd);
        }
    }
    return arrank_plan_refit(s, T, y, m, out, err);
}

/* Curvature (arrank_plan_simulate): the simulations that detect every
   involved sample's bend, into *met.  Draws sigma^2 from the par stream, the
   fit's c and RSS from the noise stream. */
static arrank_status simulate_bend(const arrank_plan_sample *samples, const size_t *involved,
                                   size_t n_inv, const arrank_plan_target *t,
                                   const arrank_plan_run *runs, size_t n_runs, size_t sims,
                                   gsl_rng *par, gsl_rng *noise, size_t *met, arrank_error *err)
{
    double v[64], dfq[64], tcrit[64];
    if (n_inv > 64)
        return arrank_errorf(err, ARRANK_EINVAL, "a plan takes 1 to 64 samples, not %zu", n_inv);
    for (size_t j = 0; j < n_inv; j++) {
        const arrank_plan_sample *s = &samples[involved[j]];
        double f = arrank_plan_bend_se_factor(s, involved[j], runs, n_runs);
        size_t added = 0;
        for (size_t k = 0; k < n_runs; k++)
            if (runs[k].sample == involved[j])
                added += runs[k].repeats;
        v[j] = f * f;
        dfq[j] = s->dof + 2.0 + (double)added - 3.0; /* points - 3 */
        tcrit[j] = dfq[j] >= 1 ? arrank_t_quantile(1.0 - t->level, dfq[j]) : INFINITY;
    }
    *met = 0;
    for (size_t k = 0; k < sims; k++) {
        int all = 1;
        for (size_t j = 0; j < n_inv; j++) {
            const arrank_plan_sample *s = &samples[involved[j]];
            double sigma2 = s->rss / gsl_ran_chisq(par, s->dof);
            if (!isfinite(tcrit[j]) || !isfinite(v[j])) {
                all = 0;
                continue;
            }
            double c = s->bend_c + sqrt(sigma2 * v[j]) * gsl_ran_gaussian_ziggurat(noise, 1.0);
            double rss = sigma2 * gsl_ran_chisq(noise, dfq[j]);
            all &= fabs(c) / sqrt(rss / dfq[j] * v[j]) > tcrit[j];
        }
        *met += (size_t)all;
    }
    return ARRANK_OK;
}

arrank_status arrank_plan_simulate(const arrank_plan_sample *samples, size_t n,
                                   const size_t *involved, size_t n_involved,
                                   const arrank_plan_target *t, const arrank_plan_run *runs,
                                   size_t n_runs, size_t sims, unsigned long seed, double *p,
                                   double *p_se, arrank_error *err)
{
    if (sims == 0 || n == 0)
        return arrank_errorf(err, ARRANK_EINVAL, "a simulation needs samples and draws");
    size_t total = 0;
    for (size_t k = 0; k < n_runs; k++)
        total += runs[k].repeats;
    arrank_plan_sample *work = malloc(n * sizeof *work);
    double *T = malloc((total + 1) * sizeof *T), *y = malloc((total + 1) * sizeof *y);
    gsl_rng *par = gsl_rng_alloc(gsl_rng_taus2), *noise = gsl_rng_alloc(gsl_rng_taus2);
    arrank_status st = ARRANK_OK;
    holm_ctx h = {0};
    int sep = t->goal == ARRANK_GOAL_SEPARATE;
    if (!work || !T || !y || !par || !noise ||
        (sep && holm_setup(&h, samples, n, involved, n_involved, t) != 0)) {
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        goto done;
    }
    /* two streams: the parameters' is the same for any plan (common draws) */
    gsl_rng_set(par, seed);
    gsl_rng_set(noise, seed ^ 0x5bd1e995UL);
    memcpy(work, samples, n * sizeof *work);
    size_t met = 0;
    if (t->goal == ARRANK_GOAL_CURVATURE)
        st = simulate_bend(samples, involved, n_involved, t, runs, n_runs, sims, par, noise, &met,
                           err);
    for (size_t k = 0; k < sims && st == ARRANK_OK && t->goal != ARRANK_GOAL_CURVATURE; k++) {
        for (size_t j = 0; j < n_involved && st == ARRANK_OK; j++)
            st = simulate_one(&samples[involved[j]], involved[j], runs, n_runs, par, noise, T, y,
                              &work[involved[j]], err);
        if (st != ARRANK_OK)
            break;
        int r = sep ? holm_separated(&h, work, t)
                    : arrank_plan_goal_met(work, n, involved, n_involved, t);
        if (r < 0)
            st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        met += r == 1;
    }
    if (st == ARRANK_OK) {
        *p = (double)met / (double)sims;
        *p_se = sqrt(*p * (1.0 - *p) / (double)sims);
    }
done:
    holm_free(&h);
    gsl_rng_free(par);
    gsl_rng_free(noise);
    free(work);
    free(T);
    free(y);
    return st;
}

void arrank_plan_free(arrank_plan *plan)
{
    if (!plan)
        return;
    free(plan->entries);
    free(plan->runs);
    free(plan->naive);
    free(plan);
}
