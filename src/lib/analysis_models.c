/*
 * analysis_models.c - the pipeline's model step (analysis_models.h): which
 * rate law each sample gets (--errors, --model), fitted by models.c, and the
 * model's prediction at the operating temperature.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include "arrank/models.h"
#include "arrank/units.h"
#include "analysis_internal.h"
#include "analysis_models.h"
#include "analysis_rank.h"
#include "util.h"

arrank_status arrank_analysis_models_prepare(const arrank_campaign *campaign,
                                             const arrank_options *opt, double *rate_to_per_s,
                                             arrank_error *err)
{
    *rate_to_per_s = 1.0;
    if (opt->model != ARRANK_MODEL_EYRING)
        return ARRANK_OK;
    if (campaign->basis != ARRANK_BASIS_SITE)
        return arrank_errorf(err, ARRANK_EINVAL,
                             "model 'eyring' needs turnover frequencies (a rate unit of 1/time); "
                             "'%s' is a rate per %s",
                             campaign->rate_unit ? campaign->rate_unit : "",
                             arrank_basis_name(campaign->basis));
    if (!opt->units) /* the pipeline loads one when none is given */
        return arrank_errorf(err, ARRANK_EUNIT, "no unit database to convert '%s' to 1/s",
                             campaign->rate_unit ? campaign->rate_unit : "");
    arrank_basis basis;
    arrank_conversion conv;
    arrank_status st = arrank_units_rate(opt->units, campaign->rate_unit, &basis, &conv, err);
    if (st != ARRANK_OK)
        return st;
    *rate_to_per_s = conv.scale;
    return ARRANK_OK;
}

arrank_status arrank_analysis_models_apply(arrank_result *res, const arrank_options *opt,
                                           double rate_to_per_s, arrank_error *err)
{
    const int absolute = opt->errors == ARRANK_ERRORS_ABSOLUTE;
    res->interval_dof = res->fit.dof;
    res->interval_t = arrank_t_quantile(opt->confidence, res->fit.dof);
    if (!absolute && opt->model == ARRANK_MODEL_ARRHENIUS)
        return ARRANK_OK;
    const arrank_sample *s = res->sample;
    double *buf = malloc(3 * (s->n_points ? s->n_points : 1) * sizeof *buf);
    if (!buf)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    double *t = buf, *r = buf + s->n_points, *sd = buf + 2 * s->n_points;
    int have_sd;
    size_t n = arrank_result_used_points(res, t, r, sd, &have_sd);
    arrank_error fe;
    arrank_error_clear(&fe);
    arrank_status st;
    const char *what;
    if (opt->model == ARRANK_MODEL_ARRHENIUS) {
        what = "absolute-error fit";
        st = arrank_fit_arrhenius_absolute(t, r, have_sd ? sd : NULL, n, &res->fit, &fe);
    } else {
        struct arrank_sample_stats *ss = arrank_analysis_stats_of(res);
        if (!ss) {
            free(buf);
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        }
        const int eyring = opt->model == ARRANK_MODEL_EYRING;
        what = eyring ? "transition-state fit" : "modified fit";
        st = arrank_model_fit_run(eyring, absolute, t, r, have_sd ? sd : NULL, n, rate_to_per_s,
                                  &ss->model, &fe);
        ss->has_model = st == ARRANK_OK;
    }
    free(buf);
    if (st == ARRANK_OK && res->stats && res->stats->has_model) {
        /* the model's prediction is the one in force (arrank_analysis_models_predict) */
        res->interval_dof = res->stats->model.dof;
        res->interval_t = arrank_t_quantile(opt->confidence, res->stats->model.dof);
    } else if (st == ARRANK_OK) { /* the absolute-error refit changed the fit */
        res->interval_dof = res->fit.dof;
        res->interval_t = arrank_t_quantile(opt->confidence, res->fit.dof);
    }
    if (st == ARRANK_ENOMEM)
        return arrank_errorf(err, st, "out of memory");
    if (st != ARRANK_OK) {
        char msg[ARRANK_ERROR_MSG_MAX + 64];
        snprintf(msg, sizeof msg, "%s: %s", what, fe.message);
        free(res->error);
        res->error = arrank_strdup(msg);
        res->error_line = 0;
        if (!res->error)
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    return ARRANK_OK;
}

arrank_status arrank_analysis_models_predict(arrank_result *res, const arrank_options *opt,
                                             arrank_error *err)
{
    if (!res->stats || !res->stats->has_model || !isfinite(opt->operating_temp_K))
        return ARRANK_OK;
    return arrank_model_fit_predict(&res->stats->model, opt->operating_temp_K, opt->confidence,
                                    &res->at_T, err);
}
