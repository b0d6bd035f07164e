/*
 * plan.c - planning the next runs: the closed-form update of a sample's
 * line, the greedy allocation and the preposterior simulation
 * (arrank/plan.h says the method and its sources).  Arrays in, arrays out.
 */
#include <gsl/gsl_cdf.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/groups.h"
#include "arrank/plan.h"
#include "arrank/stats.h"

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

/* P(sample best is the largest) for independent normal keys mean[n], se[n]:
   the integral of phi(z) prod_j Phi((m_b + s_b z - m_j) / s_j) over z by
   Simpson's rule on [-8, 8] (the normal mass outside is below 1e-15). */
static double p_best_normal(const double *mean, const double *se, size_t n, size_t best)
{
    const int steps = 320;
    const double h = 16.0 / steps;
    double sum = 0.0;
    for (int k = 0; k <= steps; k++) {
        double z = -8.0 + h * k;
        double v = mean[best] + se[best] * z;
        double prod = exp(-0.5 * z * z) / sqrt(2.0 * PLAN_PI);
        for (size_t j = 0; j < n && prod > 0; j++) {
            if (j == best)
                continue;
            prod *= se[j] > 0 ? gsl_cdf_ugaussian_P((v - mean[j]) / se[j])
                              : (v > mean[j] ? 1.0 : 0.0);
        }
        sum += prod * (k == 0 || k == steps ? 1.0 : k % 2 ? 4.0 : 2.0);
    }
    return sum * h / 3.0;
}

static int cmp_desc(const void *a, const void *b, const double *key)
{
    double ka = key[*(const size_t *)a], kb = key[*(const size_t *)b];
    if (ka != kb)
        return ka > kb ? -1 : 1;
    return *(const size_t *)a < *(const size_t *)b ? -1 : 1;
}

/* qsort has no context: the keys of the sort in progress, per thread. */
static _Thread_local const double *sort_key;
static int cmp_key(const void *a, const void *b)
{
    return cmp_desc(a, b, sort_key);
}

/* separate: the best sample alone in the first Holm group, or its P(best) at
   the target.  1, 0, or -1 out of memory. */
static int separated(const arrank_plan_sample *samples, size_t n, const arrank_plan_target *t)
{
    if (n < 2)
        return 1;
    double *buf = malloc(n * 5 * sizeof *buf);
    size_t *order = malloc(n * sizeof *order);
    int *group = malloc(n * sizeof *group);
    int met = -1;
    if (!buf || !order || !group)
        goto done;
    double *mean = buf, *se = buf + n, *k = buf + 2 * n, *kse = buf + 3 * n, *kdof = buf + 4 * n;
    for (size_t i = 0; i < n; i++) {
        arrank_plan_key(&samples[i], t->temp_K, &mean[i], &se[i]);
        order[i] = i;
    }
    sort_key = mean;
    qsort(order, n, sizeof *order, cmp_key);
    size_t nf = t->n_family < n ? t->n_family : n;
    if (nf < 2)
        nf = 2;
    for (size_t i = 0; i < nf; i++) {
        k[i] = mean[order[i]];
        kse[i] = se[order[i]];
        kdof[i] = samples[order[i]].dof;
    }
    arrank_error e;
    if (arrank_groups_run(k, kse, kdof, nf, t->alpha, group, NULL, &e) != ARRANK_OK)
        goto done;
    met = group[1] != 1;
    if (!met && t->target > 0 && t->target < 1)
        met = p_best_normal(mean, se, n, order[0]) >= t->target;
done:
    free(buf);
    free(order);
    free(group);
    return met;
}

int arrank_plan_goal_met(const arrank_plan_sample *samples, size_t n, const size_t *involved,
                         size_t n_involved, const arrank_plan_target *t)
{
    if (t->goal == ARRANK_GOAL_SEPARATE)
        return separated(samples, n, t);
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

/* The planning score (arrank_plan_allocate) with information m[k] and
   added[k] runs of each involved sample k. */
static double score(const arrank_plan_sample *samples, const size_t *involved, size_t n_inv,
                    const double (*m)[3], const size_t *added, const arrank_plan_target *t)
{
    double var[64], mean[64];
    for (size_t k = 0; k < n_inv; k++) {
        const arrank_plan_sample *s = &samples[involved[k]];
        double mi[3], x = x_at(s, t->temp_K);
        if (inv2(m[k], mi) != 0)
            return -INFINITY;
        var[k] = s->rss / s->dof * quad(mi, x);
        mean[k] = s->b0 + s->b1 * x;
    }
    double sc = 0.0;
    if (t->goal == ARRANK_GOAL_SEPARATE) {
        double nf = (double)(t->n_family > 2 ? t->n_family : 2);
        double z = gsl_cdf_ugaussian_Pinv(1.0 - t->alpha / (nf * (nf - 1.0)));
        for (size_t k = 1; k < n_inv; k++)
            sc += log_phi_cdf(fabs(mean[0] - mean[k]) / sqrt(var[0] + var[k]) - z);
        return sc;
    }
    double lim = log1p(t->width);
    for (size_t k = 0; k < n_inv; k++) {
        double dof = samples[involved[k]].dof + (double)added[k];
        double hw = arrank_t_quantile(1.0 - t->alpha, dof) * sqrt(var[k]);
        sc += (hw < lim ? 0.0 : lim - hw) - 0.001 * hw;
    }
    return sc;
}

arrank_status arrank_plan_allocate(const arrank_plan_sample *samples, size_t n,
                                   const size_t *involved, size_t n_involved,
                                   const arrank_plan_target *t, const size_t *cand_sample,
                                   const double *cand_temp_K, size_t n_cand, size_t budget,
                                   size_t *repeats, arrank_error *err)
{
    if (n_involved == 0 || n_involved > 64)
        return arrank_errorf(err, ARRANK_EINVAL,
                             "a plan takes 1 to 64 samples, not %zu", n_involved);
    if (t->goal == ARRANK_GOAL_CURVATURE)
        return arrank_errorf(err, ARRANK_EINVAL, "the curvature goal is not planned yet");
    double m[64][3];
    size_t added[64] = {0};
    for (size_t k = 0; k < n_involved; k++) {
        if (involved[k] >= n)
            return arrank_errorf(err, ARRANK_EINVAL, "involved sample %zu out of range",
                                 involved[k]);
        memcpy(m[k], samples[involved[k]].info, sizeof m[k]);
    }
    memset(repeats, 0, n_cand * sizeof *repeats);
    for (size_t step = 0; step < budget && n_cand; step++) {
        size_t best = SIZE_MAX;
        double best_sc = -INFINITY;
        for (size_t c = 0; c < n_cand; c++) {
            size_t k = 0;
            while (k < n_involved && involved[k] != cand_sample[c])
                k++;
            if (k == n_involved)
                return arrank_errorf(err, ARRANK_EINVAL, "candidate %zu is of no involved "
                                     "sample", c);
            const arrank_plan_sample *s = &samples[involved[k]];
            double saved[3];
            memcpy(saved, m[k], sizeof saved);
            add_point(m[k], s->weight_new, x_at(s, cand_temp_K[c]));
            added[k]++;
            double sc = score(samples, involved, n_involved, (const double(*)[3])m, added, t);
            added[k]--;
            memcpy(m[k], saved, sizeof saved);
            if (sc > best_sc) {
                best_sc = sc;
                best = c;
            }
        }
        if (best == SIZE_MAX)
            break;
        size_t k = 0;
        while (involved[k] != cand_sample[best])
            k++;
        const arrank_plan_sample *s = &samples[involved[k]];
        add_point(m[k], s->weight_new, x_at(s, cand_temp_K[best]));
        added[k]++;
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
    if (!work || !T || !y || !par || !noise) {
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        goto done;
    }
    /* two streams: the parameters' is the same for any plan (common draws) */
    gsl_rng_set(par, seed);
    gsl_rng_set(noise, seed ^ 0x5bd1e995UL);
    memcpy(work, samples, n * sizeof *work);
    size_t met = 0;
    for (size_t k = 0; k < sims && st == ARRANK_OK; k++) {
        for (size_t j = 0; j < n_involved && st == ARRANK_OK; j++)
            st = simulate_one(&samples[involved[j]], involved[j], runs, n_runs, par, noise, T, y,
                              &work[involved[j]], err);
        if (st != ARRANK_OK)
            break;
        int r = arrank_plan_goal_met(work, n, involved, n_involved, t);
        if (r < 0)
            st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        met += r == 1;
    }
    if (st == ARRANK_OK) {
        *p = (double)met / (double)sims;
        *p_se = sqrt(*p * (1.0 - *p) / (double)sims);
    }
done:
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
