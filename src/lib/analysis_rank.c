/*
 * analysis_rank.c - the pipeline's ranking statistics (analysis_rank.h): each
 * ranked sample's key, gathered into arrays for P(best) (pbest.c), the
 * groups (groups.c), the compensation analysis (compensation.c) and the
 * bootstrap (bootstrap.c), whose answers go back into the results.
 */
#include <math.h>
#include <stdint.h>
#include <stdlib.h>

#include "arrank/bootstrap.h"
#include "arrank/compensation.h"
#include "arrank/groups.h"
#include "arrank/pbest.h"
#include "analysis_internal.h"
#include "analysis_rank.h"

struct arrank_sample_stats *arrank_analysis_stats_of(arrank_result *res)
{
    if (!res->stats) {
        res->stats = calloc(1, sizeof *res->stats);
        if (res->stats) {
            res->stats->p_best = NAN;
            res->stats->top_index = SIZE_MAX;
            res->stats->rate_lo_boot = res->stats->rate_hi_boot = NAN;
        }
    }
    return res->stats;
}

void arrank_sample_stats_free(struct arrank_sample_stats *stats)
{
    free(stats);
}

void arrank_rank_stats_free(struct arrank_rank_stats *stats)
{
    if (!stats)
        return;
    free(stats->top);
    free(stats->p_beats);
    free(stats);
}

/* The key of a ranked result: the model's prediction when one was fitted. */
static arrank_pbest_key result_key(const arrank_result *res, const arrank_options *opt)
{
    if (arrank_by_needs_T(opt->by) && res->stats && res->stats->has_model)
        return arrank_pbest_key_model(&res->stats->model, opt->operating_temp_K,
                                      opt->normal_draws);
    return arrank_pbest_key_arrhenius(&res->fit, opt->by, opt->operating_temp_K,
                                      opt->normal_draws);
}

arrank_status arrank_analysis_rank_prepare(arrank_result *res, const arrank_options *opt,
                                           arrank_error *err)
{
    struct arrank_sample_stats *ss = arrank_analysis_stats_of(res);
    if (!ss)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    const arrank_pbest_key kd = result_key(res, opt);
    ss->key = kd.mean;
    ss->key_se = kd.se;
    ss->key_dof = kd.dof;
    double sum = 0;
    size_t n_T = 0;
    for (size_t i = 0; i < res->sample->n_points; i++)
        if (res->used[i]) {
            sum += 1.0 / res->sample->points[i].temp_K;
            n_T++;
        }
    ss->inv_T_sum_per_K = sum;
    ss->n_T = n_T;
    ss->has_key = 1;
    return ARRANK_OK;
}

static arrank_status bootstrap_result(arrank_result *res, const arrank_options *opt,
                                      unsigned long seed, arrank_error *err)
{
    const arrank_sample *s = res->sample;
    double *buf = malloc(3 * (s->n_points ? s->n_points : 1) * sizeof *buf);
    if (!buf)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    double *t = buf, *r = buf + s->n_points, *w = buf + 2 * s->n_points;
    int have_sd;
    size_t n = arrank_result_used_points(res, t, r, w, &have_sd);
    /* the fit's own ln r weights (fit.h): (r/sd)^2 */
    for (size_t k = 0; k < n; k++)
        w[k] = res->fit.weighted ? pow(r[k] / w[k], 2) : 1.0;
    struct arrank_sample_stats *ss = res->stats;
    arrank_status st = arrank_bootstrap_rate(t, r, w, n, &res->fit, opt->operating_temp_K,
                                             opt->confidence, opt->bootstrap, seed,
                                             &ss->rate_lo_boot, &ss->rate_hi_boot, &ss->boot_ok,
                                             err);
    ss->has_bootstrap = st == ARRANK_OK;
    free(buf);
    if (st == ARRANK_EFIT) { /* no resample with scatter (bootstrap.h): no interval */
        arrank_error_clear(err);
        ss->rate_lo_boot = ss->rate_hi_boot = NAN;
        return ARRANK_OK;
    }
    return st;
}

/* The ranked samples' keys in rank order, best first, and what the
   statistics need besides: arrays the ranking modules take. */
typedef struct {
    double *p_best, *key, *se, *dof; /* [n] */
    const arrank_arrhenius **fits;   /* [n] */
    int *group;                      /* [n] */
    double T_hm_K;                   /* harmonic mean of every temperature in the fits */
} rank_arrays;

/* Step 1: each ranked result's key (prepared on its worker, or here), the
   top of the pairwise matrix, and T_hm. */
static arrank_status gather(arrank_analysis *a, struct arrank_rank_stats *rs, rank_arrays *ra,
                            arrank_error *err)
{
    double inv_T_sum = 0, inv_T_comp = 0;
    size_t n_T = 0;
    for (size_t k = 0; k < a->n_ranked; k++) {
        arrank_result *res = &a->results[a->order[k]];
        if (!(res->stats && res->stats->has_key)) {
            arrank_status st = arrank_analysis_rank_prepare(res, &a->options, err);
            if (st != ARRANK_OK)
                return st;
        }
        const struct arrank_sample_stats *ss = res->stats;
        ra->key[k] = ss->key;
        ra->se[k] = ss->key_se;
        ra->dof[k] = ss->key_dof;
        ra->fits[k] = &res->fit;
        if (k < rs->n_top) {
            rs->top[k] = a->order[k];
            res->stats->top_index = k;
        }
        /* Neumaier's compensated sum (Z. angew. Math. Mech. 54:39, 1974): a
           campaign has 1e5 and more terms */
        const double t = inv_T_sum + ss->inv_T_sum_per_K;
        inv_T_comp += fabs(inv_T_sum) >= fabs(ss->inv_T_sum_per_K)
                          ? (inv_T_sum - t) + ss->inv_T_sum_per_K
                          : (ss->inv_T_sum_per_K - t) + inv_T_sum;
        inv_T_sum = t;
        n_T += ss->n_T;
    }
    /* Krug et al. (1976): T_hm = harmonic mean of every temperature in the fits. */
    ra->T_hm_K = n_T ? (double)n_T / (inv_T_sum + inv_T_comp) : NAN;
    return ARRANK_OK;
}

/* Step 2: P(best) and the groups, into the results. */
static arrank_status pbest_and_groups(arrank_analysis *a, struct arrank_rank_stats *rs,
                                      const rank_arrays *ra, arrank_error *err)
{
    const arrank_options *opt = &a->options;
    const size_t n = a->n_ranked;
    arrank_status st = arrank_pbest_run(ra->key, ra->se, ra->dof, n, opt->draws, opt->seed,
                                        rs->n_top, ra->p_best, rs->p_beats, err);
    if (st != ARRANK_OK)
        return st;
    st = arrank_groups_run(ra->key, ra->se, ra->dof, n, 1.0 - opt->confidence, ra->group,
                           &rs->n_tests, err);
    if (st != ARRANK_OK)
        return st;
    for (size_t k = 0; k < n; k++) {
        arrank_result *res = &a->results[a->order[k]];
        res->stats->p_best = ra->p_best[k];
        res->stats->group = ra->group[k];
        if (ra->group[k] > 0)
            rs->n_grouped++;
        if (ra->group[k] > rs->n_groups)
            rs->n_groups = ra->group[k];
    }
    return ARRANK_OK;
}

/* Step 4: the bootstrap refits the straight ln r line, so only that model gets one. */
static arrank_status bootstrap_all(arrank_analysis *a, arrank_error *err)
{
    const arrank_options *opt = &a->options;
    if (!(opt->bootstrap > 0 && opt->model == ARRANK_MODEL_ARRHENIUS &&
          opt->errors == ARRANK_ERRORS_RELATIVE && isfinite(opt->operating_temp_K)))
        return ARRANK_OK;
    if (opt->bootstrap < 2)
        return arrank_errorf(err, ARRANK_EINVAL, "'bootstrap' needs at least 2 resamples, "
                                                 "got %zu", opt->bootstrap);
    for (size_t k = 0; k < a->n_ranked; k++) {
        /* one stream per sample, seed + its place in the campaign: reproducible per sample */
        arrank_status st = bootstrap_result(&a->results[a->order[k]], opt,
                                            opt->seed + a->order[k], err);
        if (st != ARRANK_OK)
            return st;
    }
    return ARRANK_OK;
}

arrank_status arrank_analysis_rank_compute(arrank_analysis *a, arrank_error *err)
{
    const arrank_options *opt = &a->options;
    const size_t n = a->n_ranked;
    if (opt->draws == 0)
        return arrank_errorf(err, ARRANK_EINVAL, "'draws' must be at least 1");
    if (n == 0)
        return ARRANK_OK;
    struct arrank_rank_stats *rs = calloc(1, sizeof *rs);
    if (!rs)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    a->rank_stats = rs;
    rs->by = opt->by;
    rs->temp_K = opt->operating_temp_K;
    rs->draws = opt->draws;
    rs->seed = opt->seed;
    rs->normal_draws = opt->normal_draws;
    rs->bootstrap = opt->bootstrap;
    rs->n_top = opt->pairs < n ? opt->pairs : n;
    rs->top = malloc((rs->n_top ? rs->n_top : 1) * sizeof *rs->top);
    rs->p_beats = malloc((rs->n_top ? rs->n_top * rs->n_top : 1) * sizeof *rs->p_beats);
    double *buf = malloc(4 * n * sizeof *buf);
    rank_arrays ra = {.fits = malloc(n * sizeof *ra.fits), .group = malloc(n * sizeof *ra.group)};
    arrank_status st;
    if (!rs->top || !rs->p_beats || !buf || !ra.fits || !ra.group) {
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    } else {
        ra.p_best = buf;
        ra.key = buf + n;
        ra.se = buf + 2 * n;
        ra.dof = buf + 3 * n;
        st = gather(a, rs, &ra, err);
    }
    if (st == ARRANK_OK)
        st = pbest_and_groups(a, rs, &ra, err);
    /* step 3 */
    if (st == ARRANK_OK)
        st = arrank_compensation_run(ra.fits, n, ra.T_hm_K, opt->confidence, &rs->compensation,
                                     err);
    if (st == ARRANK_OK)
        st = bootstrap_all(a, err);
    free(buf);
    free(ra.fits);
    free(ra.group);
    return st;
}
