/*
 * analysis_diagnose.c - the pipeline's diagnosis step (analysis_diagnose.h):
 * diagnose, leave the proposed points out, refit, let the diagnosis
 * conclude on the final fit, set the flags.  The diagnosis (diagnose.c)
 * only proposes and explains; the refits and the flags are the pipeline's.
 */
#include "analysis_diagnose.h"

#include <stdlib.h>
#include <string.h>


arrank_diagnose_options arrank_analysis_diagnose_options(const arrank_campaign *c,
                                                         const arrank_options *opt,
                                                         const char *units_why)
{
    arrank_diagnose_options d = arrank_diagnose_options_defaults();
    d.use_all = opt->use_all;
    d.drop_outliers = opt->drop_outliers;
    if (opt->conversion_limit > 0 && opt->conversion_limit < 1)
        d.conversion_limit = opt->conversion_limit;
    d.units = opt->units;
    d.units_why = units_why;
    d.rate_unit = c ? c->rate_unit : NULL;
    d.confidence = opt->confidence;
    /* one pass for the campaign-wide basis check, not one per sample */
    d.basis.known = 1;
    d.basis.mixed = arrank_diagnose_campaign_basis(c, d.basis.why, sizeof d.basis.why);
    return d;
}

/* The flags the diagnosis's verdicts raise; n_base is the number of usable
   points the first fit had. */
static void diagnosis_flags(arrank_result *res, size_t n_base)
{
    const arrank_diagnosis *d = res->diagnosis;
    if (d->curvature.detected)
        res->flags |= ARRANK_FLAG_CURVED;
    for (size_t i = 0; i < d->n_points; i++) {
        arrank_regime r = d->points[i].regime;
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
    const arrank_heat_checks *h = &d->heat;
    if ((h->interphase.computed && !h->interphase.passes) ||
        (h->intraparticle.computed && !h->intraparticle.passes))
        res->flags |= ARRANK_FLAG_HEAT;
    if (res->n_used < n_base)
        res->flags |= ARRANK_FLAG_EXCLUDED;
}

/* Leave the proposed points out and refit; when that refit is impossible,
   withdraw the proposals and refit on every point as it came in (used0).
   *applied: 1 when the proposals were applied. */
static arrank_status apply_proposals(arrank_result *res, arrank_diagnosis *d,
                                     const unsigned char *used0, int *applied, arrank_error *err)
{
    const size_t np = res->sample->n_points;
    int changed = 0;
    *applied = 0;
    for (size_t i = 0; i < np; i++)
        if (d->points[i].excluded && res->used[i]) {
            res->used[i] = 0;
            changed = 1;
        }
    if (!changed)
        return ARRANK_OK;
    arrank_status st = arrank_result_refit(res, err);
    if (st != ARRANK_OK || !res->error) {
        *applied = st == ARRANK_OK;
        return st;
    }
    st = arrank_diagnose_withdraw(d, res->error, err);
    if (st != ARRANK_OK)
        return st;
    memcpy(res->used, used0, np);
    return arrank_result_refit(res, err);
}

arrank_status arrank_analysis_diagnose(arrank_result *res, const arrank_diagnose_options *dopt,
                                       arrank_error *err)
{
    const arrank_sample *s = res->sample;
    arrank_diagnosis_free(res->diagnosis);
    res->diagnosis = NULL;
    if (res->error)
        return ARRANK_OK; /* nothing fitted, nothing to diagnose */
    const size_t np = s->n_points;
    unsigned char small[256];
    unsigned char *used0 = np <= sizeof small ? small : malloc(np);
    if (!used0)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    memcpy(used0, res->used, np);
    const arrank_arrhenius first = res->fit;
    const arrank_diagnose_input in = {s, &first, used0};
    arrank_diagnosis *d = NULL;
    arrank_status st = arrank_diagnose_propose(&in, dopt, &d, err);
    int applied = 0;
    if (st == ARRANK_OK)
        st = apply_proposals(res, d, used0, &applied, err);
    if (st == ARRANK_OK)
        st = arrank_diagnose_conclude(d, &in, res->error ? NULL : &res->fit,
                                      applied && d->window_proposed, dopt, err);
    if (st != ARRANK_OK) {
        memcpy(res->used, used0, np);
        arrank_diagnosis_free(d);
    } else {
        res->diagnosis = d;
        diagnosis_flags(res, d->n_order);
    }
    if (used0 != small)
        free(used0);
    return st;
}
