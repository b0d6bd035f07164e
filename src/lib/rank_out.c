/*
 * rank_out.c - the ranking statistics as JSON parts and the ranking key's
 * name (rank_out.h), for the writers: the one place that spells them.
 */
#include "rank_out.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>

/* A number, or null for NAN and infinities (JSON has neither). */
static json_t *num(double x)
{
    return isfinite(x) ? json_real(x) : json_null();
}

const char *arrank_rank_by_name(arrank_rank_by by)
{
    switch (by) {
    case ARRANK_BY_EA: return "ea";
    case ARRANK_BY_PREFACTOR: return "prefactor";
    case ARRANK_BY_RATIO: return "ratio_to_reference";
    case ARRANK_BY_RATE: break;
    }
    return "rate_at_T";
}

static json_t *model_json(const arrank_model_fit *m)
{
    json_t *o = json_object();
    if (!o)
        return NULL;
    json_object_set_new(o, "form", json_string(m->eyring ? "eyring" : "modified"));
    json_object_set_new(o, "errors", json_string(m->absolute ? "absolute" : "relative"));
    json_object_set_new(o, "T_ref_K", num(m->T_ref_K));
    json_object_set_new(o, "E_J_mol", num(m->E_J_mol));
    json_object_set_new(o, "E_se_J_mol", num(m->E_se_J_mol));
    json_object_set_new(o, "ln_A", num(m->ln_A));
    json_object_set_new(o, "ln_A_se", num(m->ln_A_se));
    json_object_set_new(o, "dof", num(m->dof));
    if (m->eyring) {
        json_object_set_new(o, "dH_J_mol", num(m->dH_J_mol));
        json_object_set_new(o, "dH_se_J_mol", num(m->dH_se_J_mol));
        json_object_set_new(o, "dS_J_mol_K", num(m->dS_J_mol_K));
        json_object_set_new(o, "dS_se_J_mol_K", num(m->dS_se_J_mol_K));
    } else {
        json_object_set_new(o, "n", num(m->n_T));
        json_object_set_new(o, "n_se", num(m->n_T_se));
        json_object_set_new(o, "corr_E_n", num(m->corr_E_n));
        json_object_set_new(o, "E_n_collinear", json_boolean(m->collinear));
        json_object_set_new(o, "ea_apparent_at_T_ref_J_mol", num(m->ea_app_J_mol));
    }
    return o;
}

/* exp of an interval's ends, as [lo, hi]; null when not finite. */
static json_t *exp_pair(double lo, double hi)
{
    if (!isfinite(lo) || !isfinite(hi))
        return json_null();
    json_t *ci = json_array();
    json_array_append_new(ci, num(exp(lo)));
    json_array_append_new(ci, num(exp(hi)));
    return ci;
}

static json_t *pair(double lo, double hi, double scale)
{
    if (!isfinite(lo) || !isfinite(hi))
        return json_null();
    json_t *ci = json_array();
    json_array_append_new(ci, num(lo * scale));
    json_array_append_new(ci, num(hi * scale));
    return ci;
}

/* The sample against its campaign's reference (README "The reference
   catalyst"); the reference itself: ratio 1, no intervals. */
static void reference_keys(json_t *o, const struct arrank_sample_stats *ss)
{
    const int self = ss->is_reference;
    json_object_set_new(o, "is_reference", json_boolean(self));
    json_object_set_new(o, "ratio_to_reference", ss->has_ratio ? num(exp(ss->ratio.est))
                                                               : json_null());
    json_object_set_new(o, "ratio_to_reference_ci",
                        ss->has_ratio && !self ? exp_pair(ss->ratio.lo, ss->ratio.hi)
                                               : json_null());
    json_object_set_new(o, "p_better_than_reference", num(ss->p_better));
    json_object_set_new(o, "ea_minus_reference_kJ_mol", num(ss->ea_diff.est / 1000.0));
    json_object_set_new(o, "ea_minus_reference_kJ_mol_ci",
                        self ? json_null() : pair(ss->ea_diff.lo, ss->ea_diff.hi, 1e-3));
}

json_t *arrank_sample_stats_json(const arrank_analysis *a, size_t index)
{
    const arrank_result *res = &a->results[index];
    const struct arrank_sample_stats *ss = res->stats;
    const struct arrank_rank_stats *rs = a->rank_stats;
    json_t *o = json_object();
    if (!o)
        return NULL;
    if (a->campaign->n_parts) /* several campaigns: where the sample came from */
        json_object_set_new(o, "campaign",
                            json_string(a->campaign->part_names[arrank_campaign_part(
                                a->campaign, index)]));
    if (!ss)
        return o;
    if (ss->has_reference)
        reference_keys(o, ss);
    if (rs && res->rank > 0) {
        json_object_set_new(o, "p_best", num(ss->p_best));
        json_object_set_new(o, "group", ss->group > 0 ? json_integer(ss->group) : json_null());
    }
    if (rs && ss->top_index != SIZE_MAX && ss->top_index < rs->n_top) {
        json_t *pb = json_object();
        for (size_t j = 0; pb && j < rs->n_top; j++) {
            if (j == ss->top_index)
                continue;
            const char *id = a->results[rs->top[j]].sample->id;
            json_object_set_new(pb, id, num(rs->p_beats[ss->top_index * rs->n_top + j]));
        }
        json_object_set_new(o, "p_beats", pb);
    }
    if (ss->has_bootstrap) {
        json_t *ci = json_array();
        json_array_append_new(ci, num(ss->rate_lo_boot));
        json_array_append_new(ci, num(ss->rate_hi_boot));
        json_object_set_new(o, "rate_at_T_ci_bootstrap", ci);
        json_object_set_new(o, "bootstrap_resamples", json_integer((json_int_t)ss->boot_ok));
    }
    if (ss->has_model)
        json_object_set_new(o, "model", model_json(&ss->model));
    return o;
}

void arrank_reference_drift_words(const arrank_analysis *a, size_t k, char *buf, size_t n)
{
    const struct arrank_reference_stats *rs = a->reference;
    buf[0] = '\0';
    if (!rs || k == 0 || k >= rs->n_campaigns)
        return;
    const arrank_reference_campaign *rc = &rs->campaigns[k], *first = &rs->campaigns[0];
    const arrank_contrast *d = &rc->to_first;
    if (!isfinite(d->est) || !isfinite(d->lo) || !isfinite(d->hi)) {
        snprintf(buf, n, "the reference's rate in %s cannot be set against %s's", rc->campaign,
                 first->campaign);
        return;
    }
    /* percent change of the ratio and of its interval's ends */
    const double pc = 100.0 * (exp(d->est) - 1.0), lo = 100.0 * (exp(d->lo) - 1.0),
                 hi = 100.0 * (exp(d->hi) - 1.0), level = 100.0 * a->options.confidence;
    const char *way = pc < 0 ? "lower" : "higher";
    if (lo > 0.0 || hi < 0.0) /* the interval excludes no change */
        snprintf(buf, n, "the reference ran %.0f %% %s in %s than in %s; %g %% interval "
                 "%.0f-%.0f %%",
                 fabs(pc), way, rc->campaign, first->campaign, level,
                 pc < 0 ? fabs(hi) : lo, pc < 0 ? fabs(lo) : hi);
    else
        snprintf(buf, n, "the reference ran %.0f %% %s in %s than in %s; %g %% interval "
                 "%.0f %% lower to %.0f %% higher: no drift shown",
                 fabs(pc), way, rc->campaign, first->campaign, level, fabs(lo), hi);
}

static json_t *reference_json(const arrank_analysis *a)
{
    const struct arrank_reference_stats *rs = a->reference;
    json_t *o = json_object();
    json_object_set_new(o, "id", json_string(rs->id));
    json_t *arr = json_array();
    for (size_t k = 0; k < rs->n_campaigns; k++) {
        const arrank_reference_campaign *rc = &rs->campaigns[k];
        json_t *c = json_object();
        json_object_set_new(c, "campaign", json_string(rc->campaign));
        json_object_set_new(c, "rate_at_T", num(rc->rate));
        json_object_set_new(c, "rate_at_T_ci", pair(rc->rate_lo, rc->rate_hi, 1.0));
        json_object_set_new(c, "ratio_to_first", num(exp(rc->to_first.est)));
        json_object_set_new(c, "ratio_to_first_ci",
                            k ? exp_pair(rc->to_first.lo, rc->to_first.hi) : json_null());
        char words[512];
        arrank_reference_drift_words(a, k, words, sizeof words);
        json_object_set_new(c, "drift", k ? json_string(words) : json_null());
        json_array_append_new(arr, c);
    }
    json_object_set_new(o, "campaigns", arr);
    json_object_set_new(o, "equal_p", rs->has_equal ? num(rs->equal.p) : json_null());
    json_object_set_new(o, "equal_F", rs->has_equal ? num(rs->equal.F) : json_null());
    json_object_set_new(o, "equal_dof", rs->has_equal ? pair(rs->equal.df1, rs->equal.df2, 1.0)
                                                      : json_null());
    json_object_set_new(o, "equal_test",
                        json_string("Welch's test of equal means with unequal variances on the "
                                    "reference's ln r at T in each campaign"));
    json_object_set_new(o, "pooled", json_boolean(rs->pooled));
    return o;
}

json_t *arrank_rank_stats_json(const arrank_analysis *a)
{
    const struct arrank_rank_stats *rs = a->rank_stats;
    json_t *o = json_object();
    if (o && a->reference)
        json_object_set_new(o, "reference", reference_json(a));
    if (!o || !rs)
        return o;
    json_t *u = json_object();
    json_object_set_new(u, "by", json_string(arrank_rank_by_name(rs->by)));
    json_object_set_new(u, "draws", json_integer((json_int_t)rs->draws));
    json_object_set_new(u, "seed", json_integer((json_int_t)rs->seed));
    json_object_set_new(u, "distribution", json_string(rs->normal_draws ? "normal" : "t"));
    json_object_set_new(u, "pairs", json_integer((json_int_t)rs->n_top));
    json_object_set_new(u, "groups", json_integer(rs->n_groups));
    json_object_set_new(u, "grouped_samples", json_integer((json_int_t)rs->n_grouped));
    json_object_set_new(u, "holm_tests", json_integer((json_int_t)rs->n_tests));
    json_object_set_new(u, "group_rule",
                        json_string("a sample joins the group of the best sample above it "
                                    "(the leader) unless it differs from the leader after Holm's "
                                    "correction over all pairs among the top ranks"));
    json_object_set_new(u, "bootstrap", json_integer((json_int_t)rs->bootstrap));
    json_object_set_new(o, "ranking_uncertainty", u);

    const arrank_compensation *c = &rs->compensation;
    json_t *k = json_object();
    json_object_set_new(k, "verdict", json_string(arrank_compensation_words(c->verdict)));
    json_object_set_new(k, "sentence", json_string(c->sentence));
    json_object_set_new(k, "samples", json_integer((json_int_t)c->n));
    json_object_set_new(k, "regression", json_string("unweighted least squares of ln A on Ea"));
    json_object_set_new(k, "slope_mol_J", num(c->slope_mol_J));
    json_object_set_new(k, "slope_se_mol_J", num(c->slope_se_mol_J));
    json_object_set_new(k, "intercept", num(c->intercept));
    json_object_set_new(k, "intercept_se", num(c->intercept_se));
    json_object_set_new(k, "r", num(c->corr));
    json_object_set_new(k, "slope_p", num(c->slope_p));
    json_object_set_new(k, "T_iso_K", num(c->T_iso_K));
    json_object_set_new(k, "T_iso_interval", json_string("Fieller (inverted t interval of the "
                                                        "slope)"));
    json_object_set_new(k, "T_iso_bounded", json_boolean(c->T_iso_bounded));
    json_object_set_new(k, "T_iso_lo_K", c->T_iso_bounded ? num(c->T_iso_lo_K) : json_null());
    json_object_set_new(k, "T_iso_hi_K", c->T_iso_bounded ? num(c->T_iso_hi_K) : json_null());
    json_object_set_new(k, "T_hm_K", num(c->T_hm_K));
    json_object_set_new(k, "T_hm_inside_T_iso_interval", json_boolean(c->T_hm_inside));
    json_object_set_new(k, "ea_vs_ln_rate_at_T_hm_slope_mol_J", num(c->hm_slope_mol_J));
    json_object_set_new(k, "ea_vs_ln_rate_at_T_hm_p", num(c->hm_p));
    json_object_set_new(k, "ea_vs_ln_rate_at_own_T_ref_slope_mol_J", num(c->own_slope_mol_J));
    json_object_set_new(k, "ea_vs_ln_rate_at_own_T_ref_slope_se_mol_J",
                        num(c->own_slope_se_mol_J));
    json_object_set_new(k, "ea_vs_ln_rate_at_own_T_ref_dof", num(c->own_dof));
    json_object_set_new(k, "ea_vs_ln_rate_at_own_T_ref_p", num(c->own_p));
    json_object_set_new(k, "verdict_test",
                        json_string("least squares of each sample's ln r at its own centring "
                                    "temperature on 1/T_hm - 1/T_ref and Ea, HC3 standard "
                                    "error, t test of the Ea coefficient"));
    json_object_set_new(k, "exner_T1_K", num(c->exner_T1_K));
    json_object_set_new(k, "exner_T2_K", num(c->exner_T2_K));
    json_object_set_new(k, "exner_slope", num(c->exner_slope));
    json_object_set_new(k, "exner_slope_se", num(c->exner_slope_se));
    json_object_set_new(k, "exner_T_iso_K", num(c->exner_T_iso_K));
    json_object_set_new(k, "confidence", num(c->confidence));
    json_object_set_new(o, "compensation", k);
    return o;
}
