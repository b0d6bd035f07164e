/*
 * analysis_reference.c - the reference catalyst in the pipeline
 * (analysis_reference.h): found in each campaign of the run, every fitted
 * sample set against its own campaign's reference with the intervals of
 * contrast.c, the reference's own rate compared across campaigns, and, with
 * several campaigns, the pooled ranking keys.
 */
#include "analysis_reference.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "analysis_rank.h"
#include "arrank/analysis_stats.h"
#include "arrank/contrast.h"

void arrank_reference_stats_free(struct arrank_reference_stats *stats)
{
    if (!stats)
        return;
    free(stats->campaigns);
    free(stats);
}

/* Step 1: the reference's result in each campaign. */
static arrank_status find_references(const arrank_analysis *a, struct arrank_reference_stats *rs,
                                     arrank_error *err)
{
    const arrank_campaign *c = a->campaign;
    for (size_t k = 0; k < rs->n_campaigns; k++) {
        rs->campaigns[k].campaign = c->part_names ? c->part_names[k] : c->name;
        rs->campaigns[k].result = SIZE_MAX;
    }
    for (size_t i = 0; i < a->n_results; i++)
        if (strcmp(arrank_campaign_own_id(c, i), rs->id) == 0) {
            size_t k = arrank_campaign_part(c, i);
            if (k < rs->n_campaigns && rs->campaigns[k].result == SIZE_MAX)
                rs->campaigns[k].result = i;
        }
    for (size_t k = 0; k < rs->n_campaigns; k++) {
        arrank_reference_campaign *rc = &rs->campaigns[k];
        if (rc->result == SIZE_MAX)
            return arrank_errorf(err, ARRANK_EINVAL,
                                 "the reference '%s' is no sample of campaign '%s'", rs->id,
                                 rc->campaign);
        const arrank_result *res = &a->results[rc->result];
        if (res->error)
            return arrank_errorf(err, ARRANK_EDATA,
                                 "the reference '%s' of campaign '%s' could not be fitted: %s",
                                 rs->id, rc->campaign, res->error);
        rc->has_rate = res->has_prediction;
        rc->ln_rate = res->has_prediction ? res->at_T.ln_rate : NAN;
        rc->ln_rate_se = res->has_prediction ? res->at_T.ln_rate_se : NAN;
        rc->dof = res->interval_dof;
        rc->rate = res->has_prediction ? res->at_T.rate : NAN;
        rc->rate_lo = res->has_prediction ? res->at_T.rate_lo : NAN;
        rc->rate_hi = res->has_prediction ? res->at_T.rate_hi : NAN;
    }
    return ARRANK_OK;
}

/* Step 2: the reference's rate in each campaign against the first's, and
   Welch's test that it is the same in all. */
static arrank_status compare_campaigns(struct arrank_reference_stats *rs, double confidence,
                                       arrank_error *err)
{
    const arrank_reference_campaign *first = &rs->campaigns[0];
    int all = 1;
    for (size_t k = 0; k < rs->n_campaigns; k++) {
        arrank_reference_campaign *rc = &rs->campaigns[k];
        all &= rc->has_rate;
        if (k == 0 && rc->has_rate) /* against itself: exactly 1 */
            rc->to_first = (arrank_contrast){0, 0, INFINITY, NAN, 0, 0, NAN, NAN};
        else if (k == 0 || !rc->has_rate || !first->has_rate)
            rc->to_first = (arrank_contrast){NAN, NAN, NAN, NAN, NAN, NAN, NAN, NAN};
        else
            rc->to_first = arrank_contrast_diff(rc->ln_rate, rc->ln_rate_se, rc->dof,
                                                first->ln_rate, first->ln_rate_se, first->dof,
                                                confidence);
    }
    if (rs->n_campaigns < 2 || !all)
        return ARRANK_OK;
    double *buf = malloc(3 * rs->n_campaigns * sizeof *buf);
    if (!buf)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    double *y = buf, *se = buf + rs->n_campaigns, *dof = buf + 2 * rs->n_campaigns;
    for (size_t k = 0; k < rs->n_campaigns; k++) {
        y[k] = rs->campaigns[k].ln_rate;
        se[k] = rs->campaigns[k].ln_rate_se;
        dof[k] = rs->campaigns[k].dof;
    }
    arrank_error te;
    arrank_error_clear(&te);
    /* a reference known exactly (se 0) has no test: has_equal stays 0 */
    rs->has_equal = arrank_contrast_equal_test(y, se, dof, rs->n_campaigns, &rs->equal, &te) ==
                    ARRANK_OK;
    free(buf);
    return ARRANK_OK;
}

/* Step 3: one fitted sample against its campaign's reference. */
static arrank_status against_reference(arrank_analysis *a, size_t i,
                                       const struct arrank_reference_stats *rs,
                                       arrank_rank_by by, arrank_error *err)
{
    arrank_result *res = &a->results[i];
    struct arrank_sample_stats *ss = arrank_analysis_stats_of(res);
    if (!ss)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    const arrank_reference_campaign *rc =
        &rs->campaigns[arrank_campaign_part(a->campaign, i)];
    const arrank_result *ref = &a->results[rc->result];
    const double conf = a->options.confidence;
    const arrank_contrast none = {NAN, NAN, NAN, NAN, NAN, NAN, NAN, NAN};
    ss->has_reference = 1;
    ss->is_reference = i == rc->result;
    ss->p_better = NAN;
    if (ss->is_reference) {
        ss->has_ratio = rc->has_rate;
        ss->ratio = (arrank_contrast){0, 0, INFINITY, NAN, 0, 0, NAN, NAN};
        ss->ea_diff = ss->ratio;
        if (!rc->has_rate)
            ss->ratio = none;
        return ARRANK_OK;
    }
    ss->has_ratio = res->has_prediction && rc->has_rate;
    ss->ratio = ss->has_ratio ? arrank_contrast_diff(res->at_T.ln_rate, res->at_T.ln_rate_se,
                                                     res->interval_dof, rc->ln_rate,
                                                     rc->ln_rate_se, rc->dof, conf)
                              : none;
    const arrank_arrhenius *f = &res->fit, *g = &ref->fit;
    ss->ea_diff = arrank_contrast_diff(f->ea_J_mol, f->ea_se_J_mol, f->dof, g->ea_J_mol,
                                       g->ea_se_J_mol, g->dof, conf);
    /* better on the ranking key: the rate at T, a lower Ea, a higher ln A */
    if (by == ARRANK_BY_EA)
        ss->p_better = 1.0 - ss->ea_diff.p_greater;
    else if (by == ARRANK_BY_PREFACTOR)
        ss->p_better = arrank_contrast_diff(f->ln_A, f->ln_A_se, f->dof, g->ln_A, g->ln_A_se,
                                            g->dof, conf)
                           .p_greater;
    else
        ss->p_better = ss->ratio.p_greater;
    return ARRANK_OK;
}

/* Step 4: several campaigns ranked by rate: the ratios are the keys, and the
   references (ratio 1 by construction) leave the ranking. */
static arrank_status pool(arrank_analysis *a, size_t *order, size_t *n_fitted,
                          arrank_error *err)
{
    size_t kept = 0;
    for (size_t k = 0; k < *n_fitted; k++) {
        arrank_result *res = &a->results[order[k]];
        struct arrank_sample_stats *ss = res->stats;
        if (ss->is_reference || !ss->has_ratio)
            continue;
        if (!ss->has_key) {
            arrank_status st = arrank_analysis_rank_prepare(res, &a->options, err);
            if (st != ARRANK_OK)
                return st;
        }
        ss->key = ss->ratio.est;
        ss->key_se = ss->ratio.se;
        ss->key_dof = a->options.normal_draws ? INFINITY : ss->ratio.dof;
        order[kept++] = order[k];
    }
    *n_fitted = kept;
    return ARRANK_OK;
}

arrank_status arrank_analysis_reference(arrank_analysis *a, size_t *order, size_t *n_fitted,
                                        arrank_rank_by *by, arrank_error *err)
{
    const char *id = a->options.reference ? a->options.reference : a->campaign->reference;
    if (!id)
        return *by == ARRANK_BY_RATIO
                   ? arrank_errorf(err, ARRANK_EINVAL,
                                   "ranking by ratio needs a reference: give --reference ID or "
                                   "set reference in campaign.ini")
                   : ARRANK_OK;
    struct arrank_reference_stats *rs = calloc(1, sizeof *rs);
    if (!rs)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    a->reference = rs;
    rs->id = id;
    rs->n_campaigns = a->campaign->n_parts ? a->campaign->n_parts : 1;
    rs->campaigns = calloc(rs->n_campaigns, sizeof *rs->campaigns);
    if (!rs->campaigns)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    arrank_status st = find_references(a, rs, err);
    if (st == ARRANK_OK)
        st = compare_campaigns(rs, a->options.confidence, err);
    for (size_t k = 0; k < *n_fitted && st == ARRANK_OK; k++)
        st = against_reference(a, order[k], rs, *by, err);
    if (st != ARRANK_OK)
        return st;
    if (rs->n_campaigns > 1 && arrank_by_needs_T(*by) &&
        isfinite(a->options.operating_temp_K) && a->options.rank) {
        rs->pooled = 1;
        *by = ARRANK_BY_RATIO;
        a->options.by = ARRANK_BY_RATIO;
        return pool(a, order, n_fitted, err);
    }
    return ARRANK_OK;
}
