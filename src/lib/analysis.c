/*
 * analysis.c - the pipeline for one campaign: screen, fit, diagnose, predict, rank.
 *
 * Each stage reads only what the stage before it produced.  A sample that
 * cannot be fitted keeps its reason in `error` and is listed unranked; it
 * never disappears.  Points left out of a fit are marked in `used` and the
 * diagnostics record why, so no point is dropped silently.
 */
#include "arrank/analysis.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "analysis_diagnose.h"
#include "arrank/diagnose.h"
#include "analysis_internal.h"
#include "analysis_models.h"
#include "analysis_rank.h"
#include "analysis_reference.h"
#include "arrank/screen.h"
#include "util.h"
#include "stats.h"
#include "number.h"

/* Thresholds for the basic flags (README "Flags"). */
#define FEW_POINTS 4            /* fewer points than this: flag (common practice) */
#define NARROW_RANGE_K 30.0     /* temperature span under this: flag (common practice) */
#define LOW_EA_J_MOL 20000.0    /* apparent Ea under this: suspect film control (DOMAIN notes) */
#define POOR_FIT_P 0.001        /* chi-square p-value below this: rate_sd understated */

static const struct {
    unsigned bit;
    const char *name;
    const char *words;
} flag_table[ARRANK_FLAG_COUNT] = {
    {ARRANK_FLAG_EXTRAPOLATED, "extrapolated", "operating temperature outside the measured range"},
    {ARRANK_FLAG_FEW_POINTS, "few_points", "fewer than 4 points in the fit"},
    {ARRANK_FLAG_NARROW_RANGE, "narrow_range", "temperature span under 30 K"},
    {ARRANK_FLAG_LOW_EA, "low_ea", "apparent Ea under 20 kJ/mol: suspect film mass transfer"},
    {ARRANK_FLAG_CURVED, "curved", "Arrhenius plot bends"},
    {ARRANK_FLAG_TRANSPORT, "transport", "points look transport-limited"},
    {ARRANK_FLAG_DEACTIVATION, "deactivation", "activity fell during the runs"},
    {ARRANK_FLAG_ACTIVATION, "activation", "activity rose during the runs"},
    {ARRANK_FLAG_HIGH_CONVERSION, "high_conversion", "conversion above the differential limit"},
    {ARRANK_FLAG_OUTLIER, "outlier", "outlying or influential point"},
    {ARRANK_FLAG_MIXED_BASIS, "mixed_basis", "campaign mixes normalisation bases"},
    {ARRANK_FLAG_EXCLUDED, "excluded", "points left out of the fit"},
    {ARRANK_FLAG_POOR_FIT, "poor_fit", "scatter larger than rate_sd allows"},
    {ARRANK_FLAG_HEAT, "heat",
     "heat transfer may limit: the bed or pellet may be hotter (colder if endothermic) than "
     "measured"},
};

const char *arrank_flag_name(unsigned flag)
{
    for (size_t i = 0; i < ARRANK_FLAG_COUNT; i++)
        if (flag_table[i].bit == flag)
            return flag_table[i].name;
    return NULL;
}

const char *arrank_flag_words(unsigned flag)
{
    for (size_t i = 0; i < ARRANK_FLAG_COUNT; i++)
        if (flag_table[i].bit == flag)
            return flag_table[i].words;
    return NULL;
}

arrank_options arrank_options_defaults(void)
{
    arrank_options o;
    memset(&o, 0, sizeof o);
    o.confidence = 0.95;
    o.operating_temp_K = NAN;
    o.by = ARRANK_BY_RATE;
    o.max_extrapolation_K = ARRANK_MAX_EXTRAPOLATION_K;
    o.conversion_limit = 0.10;
    o.diagnose = 1;
    o.rank = 1;
    o.errors = ARRANK_ERRORS_RELATIVE;
    o.model = ARRANK_MODEL_ARRHENIUS;
    o.seed = 1;
    o.draws = 10000;
    o.pairs = 20;
    return o;
}

/* EINVAL when the operating temperature lies more than max_K outside the
   measured range of every fitted sample (a->order[0..n_fitted-1]). */
static arrank_status check_extrapolation(const arrank_analysis *a, size_t n_fitted, double max_K,
                                         arrank_error *err)
{
    double nearest_K = INFINITY;
    for (size_t k = 0; k < n_fitted; k++) {
        const arrank_result *res = &a->results[a->order[k]];
        if (res->has_prediction && res->at_T.extrapolation_K < nearest_K)
            nearest_K = res->at_T.extrapolation_K;
    }
    if (!(nearest_K > max_K) || !isfinite(nearest_K))
        return ARRANK_OK;
    return arrank_errorf(err, ARRANK_EINVAL,
                         "the operating temperature %.2f K lies %.1f K or more outside the "
                         "measured range of every sample; fitted kinetics say nothing reliable "
                         "there (give --extrapolate to rank anyway)",
                         a->options.operating_temp_K, nearest_K);
}

static void set_result_error(arrank_result *res, const char *msg, long line)
{
    free(res->error);
    res->error = arrank_strdup(msg);
    res->error_line = line;
    res->error_column = 0;
}

size_t arrank_result_used_points(const arrank_result *res, double *temp_K, double *rate,
                                 double *rate_sd, int *have_sd)
{
    const arrank_sample *s = res->sample;
    size_t n = 0;
    *have_sd = 1;
    for (size_t i = 0; i < s->n_points; i++) {
        if (!res->used[i])
            continue;
        temp_K[n] = s->points[i].temp_K;
        rate[n] = s->points[i].rate;
        rate_sd[n] = s->points[i].rate_sd;
        if (!isfinite(rate_sd[n]))
            *have_sd = 0;
        n++;
    }
    return n;
}

arrank_status arrank_result_refit(arrank_result *res, arrank_error *err)
{
    const arrank_sample *s = res->sample;
    double *buf = malloc(3 * (s->n_points ? s->n_points : 1) * sizeof *buf);
    if (!buf)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    double *t = buf, *r = buf + s->n_points, *sd = buf + 2 * s->n_points;
    int have_sd;
    size_t n = arrank_result_used_points(res, t, r, sd, &have_sd);
    res->n_used = n;
    arrank_error fe;
    arrank_error_clear(&fe);
    arrank_status st = arrank_fit_arrhenius(t, r, have_sd ? sd : NULL, n, &res->fit, &fe);
    free(buf);
    if (st == ARRANK_ENOMEM)
        return arrank_errorf(err, st, "out of memory");
    if (st != ARRANK_OK) /* pointed at the header: the columns the fit could not use */
        set_result_error(res, fe.message, s->header_line);
    else {
        free(res->error);
        res->error = NULL;
        res->error_line = 0;
        res->error_column = 0;
    }
    return ARRANK_OK;
}

static void basic_flags(arrank_result *res)
{
    const arrank_arrhenius *f = &res->fit;
    if (f->n < FEW_POINTS)
        res->flags |= ARRANK_FLAG_FEW_POINTS;
    if (f->T_max_K - f->T_min_K < NARROW_RANGE_K)
        res->flags |= ARRANK_FLAG_NARROW_RANGE;
    if (f->ea_J_mol < LOW_EA_J_MOL)
        res->flags |= ARRANK_FLAG_LOW_EA;
    if (f->weighted && f->dof > 0 && isfinite(f->chi2_dof) &&
        arrank_stats_chi2_q(f->chi2_dof * f->dof, f->dof) < POOR_FIT_P)
        res->flags |= ARRANK_FLAG_POOR_FIT;
    if (res->n_used < res->n_offered) /* with --run, the other runs are no part of it */
        res->flags |= ARRANK_FLAG_EXCLUDED;
}

/* Sort key: larger is better. */
static double rank_key(const arrank_result *res, arrank_rank_by by)
{
    switch (by) {
    case ARRANK_BY_EA: return -res->fit.ea_J_mol;
    case ARRANK_BY_PREFACTOR: return res->fit.ln_A;
    case ARRANK_BY_RATE:
    case ARRANK_BY_RATIO: break;
    }
    /* by ratio: the pooled key of several campaigns (analysis_reference.c),
       else the rate's (the same order within one campaign) */
    if (res->stats && res->stats->has_key && by == ARRANK_BY_RATIO)
        return res->stats->key;
    return res->at_T.ln_rate;
}

/* One fitted result in the ranking sort: its key read once, not per comparison. */
typedef struct {
    double key; /* larger is better (rank_key) */
    const char *id;
    size_t index;
} rank_item;

static int compare_rank(const void *a, const void *b)
{
    const rank_item *ra = a, *rb = b;
    if (ra->key > rb->key)
        return -1;
    if (ra->key < rb->key)
        return 1;
    return strcmp(ra->id, rb->id);
}

/* The reader's reasons for the points it left out, as the diagnosis's
   reasons for leaving them out of the fit, so that every list of left-out
   points names them. */
static arrank_status omitted_reasons(arrank_result *res, arrank_error *err)
{
    const arrank_sample *s = res->sample;
    arrank_diagnosis *d = res->diagnosis;
    if (!d || !s->n_omitted)
        return ARRANK_OK;
    for (size_t i = 0; i < s->n_points && i < d->n_points; i++) {
        if (!s->points[i].omitted || d->points[i].reason)
            continue;
        if (!(d->points[i].reason = arrank_strdup(s->points[i].omitted)))
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        d->points[i].excluded = 1;
    }
    return ARRANK_OK;
}

/* Everything that happens to one sample: refit, diagnose, models, flags,
   prediction.  Reads only its own sample and the campaign; writes only its
   own result.  A failure other than the sample's own is returned (ENOMEM). */
/* Index of the run labelled label in s->runs, or -1. */
static int run_index(const arrank_sample *s, const char *label)
{
    for (size_t r = 0; r < s->n_runs; r++)
        if (strcmp(s->runs[r], label) == 0)
            return (int)r;
    return -1;
}

static const char *run_reason(const char *label, const arrank_result *res, size_t k, char *buf,
                              size_t n)
{
    const arrank_sample *s = res->sample;
    if (!label || k >= s->n_points)
        return NULL;
    int run = s->points[k].run;
    if (run >= 0 && (size_t)run < s->n_runs && strcmp(s->runs[run], label) == 0)
        return NULL;
    if (run >= 0 && (size_t)run < s->n_runs)
        snprintf(buf, n, "run '%.200s', not '%.200s' (--run)", s->runs[run], label);
    else
        snprintf(buf, n, "no run label, not '%.200s' (--run)", label);
    return buf;
}

const char *arrank_analysis_run_reason(const arrank_analysis *a, const arrank_result *res,
                                       size_t k, char *buf, size_t n)
{
    return run_reason(a->options.run, res, k, buf, n);
}

/* --run, a sample without the run: why, with the runs it has. */
static void no_such_run(arrank_result *res, const char *label)
{
    const arrank_sample *s = res->sample;
    char msg[600];
    int len = snprintf(msg, sizeof msg, "has no run '%.200s' (--run)", label);
    if (s->n_runs == 0)
        snprintf(msg + len, sizeof msg - (size_t)len, "; its points carry no run label");
    for (size_t r = 0; r < s->n_runs && len > 0 && (size_t)len < sizeof msg - 8; r++) {
        int more = snprintf(msg + len, sizeof msg - (size_t)len, "%s'%.100s'",
                            r == 0 ? "; its runs: " : ", ", s->runs[r]);
        len = more < 0 || (size_t)more >= sizeof msg - (size_t)len ? -1 : len + more;
    }
    set_result_error(res, msg, s->header_line);
}

/* --run: keep only the points of the run labelled `label`; 0 (with the
   result's error set) when the sample has no such run. */
static int keep_run(arrank_result *res, const char *label)
{
    const arrank_sample *s = res->sample;
    int r = run_index(s, label);
    if (r < 0) {
        no_such_run(res, label);
        return 0;
    }
    res->n_used = 0;
    res->n_offered = 0;
    for (size_t i = 0; i < s->n_points; i++) {
        if (s->points[i].run != r)
            res->used[i] = 0;
        else
            res->n_offered++;
        res->n_used += res->used[i];
    }
    return 1;
}

/* --run: the points of the other runs named as such in the diagnosis, so
   that every list of left-out points says why (arrank_analysis_run_reason). */
static arrank_status run_reasons(const char *label, arrank_result *res, arrank_error *err)
{
    arrank_diagnosis *d = res->diagnosis;
    for (size_t i = 0; d && label && i < d->n_points; i++) {
        char buf[512];
        const char *why = run_reason(label, res, i, buf, sizeof buf);
        if (!why || d->points[i].reason)
            continue;
        if (!(d->points[i].reason = arrank_strdup(why)))
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        d->points[i].excluded = 1;
    }
    return ARRANK_OK;
}

static arrank_status analyse_one(arrank_result *res, const arrank_sample *s,
                                 const arrank_options *opt, const arrank_diagnose_options *dopt,
                                 double rate_to_per_s, arrank_error *err)
{
    res->sample = s;
    res->used = malloc(s->n_points ? s->n_points : 1);
    if (!res->used)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    memset(res->used, 1, s->n_points);
    res->n_used = s->n_points;
    res->n_offered = s->n_points;
    /* points the reader left out (arrank_point.omitted) are never fitted */
    for (size_t i = 0; s->n_omitted && i < s->n_points; i++)
        if (s->points[i].omitted) {
            res->used[i] = 0;
            res->n_used--;
        }
    if (s->problem) {
        set_result_error(res, s->problem, s->problem_line);
        res->error_column = s->problem_column;
        /* a stability hold at one temperature: its drift with time */
        if (opt->diagnose && !s->skipped && !opt->run)
            return arrank_diagnose_hold(s, opt->confidence, &res->hold, err);
        return ARRANK_OK;
    }
    res->n_used = arrank_screen_mark(s, res->used);
    if (opt->run && !keep_run(res, opt->run))
        return ARRANK_OK; /* not fitted, with the reason */
    arrank_status st = arrank_result_refit(res, err);
    if (st != ARRANK_OK || res->error)
        return st;
    if (opt->diagnose) {
        st = arrank_analysis_diagnose(res, dopt, err);
        if (st != ARRANK_OK || res->error)
            return st;
        st = omitted_reasons(res, err);
        if (st == ARRANK_OK)
            st = run_reasons(opt->run, res, err);
        if (st != ARRANK_OK)
            return st;
    }
    /* analysis_models.c: --errors absolute refits in rate space; --model adds its fit */
    st = arrank_analysis_models_apply(res, opt, rate_to_per_s, err);
    if (st != ARRANK_OK || res->error)
        return st;
    basic_flags(res);
    if (isfinite(opt->operating_temp_K)) {
        st = arrank_fit_predict(&res->fit, opt->operating_temp_K, opt->confidence, &res->at_T,
                                err);
        if (st == ARRANK_OK) /* the model's prediction when one was fitted */
            st = arrank_analysis_models_predict(res, opt, err);
        if (st != ARRANK_OK)
            return st;
        res->has_prediction = 1;
        if (res->at_T.extrapolated)
            res->flags |= ARRANK_FLAG_EXTRAPOLATED;
    }
    /* the ranking's per-sample part while the sample is in this core's cache */
    if (opt->rank && (isfinite(opt->operating_temp_K) || !arrank_by_needs_T(opt->by)))
        return arrank_analysis_rank_prepare(res, opt, err);
    return ARRANK_OK;
}

/*
 * The samples on the workers (arrank_workers_each, util.c), ANALYSE_CHUNK at
 * a time.  Samples are independent, so the results are the same for any
 * number of workers; a failure (out of memory) reported is the one with the
 * lowest sample index, as a loop in order would report it.
 */
#define ANALYSE_CHUNK 8
#define ANALYSE_MIN_PER_WORKER 32

typedef struct {
    arrank_analysis *a;
    const arrank_options *opt;
    const arrank_diagnose_options *dopt;
    double rate_to_per_s;
} analyse_job;

/* The quantiles every output reads (the result's t_quantile and
   region_quantile; the model's interval_t is set by analysis_models.c), so
   that the writers compute no statistics.  The joint
   region of (Ea, ln A) is 2 F(2, n-2; confidence), the F-based region of a
   linear regression (Draper & Smith, Applied Regression Analysis, 3rd ed.,
   1998, sec. 5.4; from memory). */
static void result_quantiles(arrank_result *res, const arrank_options *opt)
{
    res->confidence = opt->confidence;
    res->t_quantile = res->region_quantile = NAN;
    if (res->error)
        return;
    res->t_quantile = arrank_t_quantile(opt->confidence, res->fit.dof);
    if (res->fit.dof > 0)
        res->region_quantile = 2.0 * arrank_stats_f_lower(opt->confidence, 2.0, res->fit.dof);
}

static arrank_status analyse_item(void *ctx, size_t i, size_t w, arrank_error *err)
{
    (void)w;
    const analyse_job *j = ctx;
    arrank_result *res = &j->a->results[i];
    arrank_status st = analyse_one(res, &j->a->campaign->samples[i], j->opt, j->dopt,
                                   j->rate_to_per_s, err);
    result_quantiles(res, j->opt);
    return st;
}

static arrank_status analyse_all(arrank_analysis *a, const arrank_options *opt,
                                 const arrank_diagnose_options *dopt, double rate_to_per_s,
                                 arrank_error *err)
{
    analyse_job j = {a, opt, dopt, rate_to_per_s};
    return arrank_workers_each(0, a->n_results, ANALYSE_CHUNK,
                               arrank_workers_for(a->n_results, ANALYSE_MIN_PER_WORKER),
                               analyse_item, &j, opt->progress, opt->progress_ctx,
                               "fitting samples", err);
}

/* The fitted results a->order[0..n_fitted) in rank order, their ranks, and
   the ranking statistics (analysis_rank.c: P(best), groups, compensation,
   bootstrap). */
static arrank_status rank_fitted(arrank_analysis *a, const arrank_options *opt, size_t n_fitted,
                                 arrank_error *err)
{
    a->n_ranked = n_fitted;
    rank_item *items = malloc(n_fitted * sizeof *items);
    if (!items)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    for (size_t k = 0; k < n_fitted; k++) {
        const arrank_result *res = &a->results[a->order[k]];
        items[k] = (rank_item){rank_key(res, opt->by), res->sample->id, a->order[k]};
    }
    qsort(items, n_fitted, sizeof *items, compare_rank);
    for (size_t k = 0; k < n_fitted; k++)
        a->order[k] = items[k].index;
    free(items);
    for (size_t k = 0; k < a->n_ranked; k++)
        a->results[a->order[k]].rank = (int)(k + 1);
    /* analysis_rank.c: P(best), groups, compensation, bootstrap */
    if (opt->progress)
        opt->progress(opt->progress_ctx, "ranking samples", 0, 1);
    return arrank_analysis_rank_compute(a, err);
}

static arrank_status analysis_run_in_c(const arrank_campaign *campaign,
                                       const arrank_options *options, arrank_analysis **out,
                                       arrank_error *err)
{
    *out = NULL;
    arrank_options opt = options ? *options : arrank_options_defaults();
    if (!(opt.confidence > 0.0 && opt.confidence < 1.0))
        return arrank_errorf(err, ARRANK_EINVAL,
                             "confidence %g is outside (0, 1); write it as 0.95", opt.confidence);
    int want_T = isfinite(opt.operating_temp_K);

    arrank_analysis *a = calloc(1, sizeof *a);
    if (!a)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    a->campaign = campaign;
    a->options = opt;
    /* The callback serves this call only; the stored options must not point at it. */
    a->options.progress = NULL;
    a->options.units = NULL;
    a->options.progress_ctx = NULL;
    a->n_results = campaign->n_samples;
    a->results = calloc(a->n_results ? a->n_results : 1, sizeof *a->results);
    a->order = calloc(a->n_results ? a->n_results : 1, sizeof *a->order);
    if (!a->results || !a->order) {
        arrank_analysis_free(a);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }

    arrank_status st = ARRANK_OK;
    /* one unit database for every sample's criteria and the eyring factor */
    const int eyring = opt.model == ARRANK_MODEL_EYRING;
    arrank_units *own_units = NULL;
    arrank_error ue;
    arrank_error_clear(&ue);
    if ((opt.diagnose || eyring) && !opt.units) {
        own_units = arrank_units_create(&ue); /* NULL: diagnose notes why per sample */
        opt.units = own_units;
    }
    /* --model eyring needs turnover frequencies and their factor to 1/s */
    double rate_to_per_s = 1.0;
    if (eyring && !opt.units && campaign->basis == ARRANK_BASIS_SITE && ue.status != ARRANK_OK) {
        if (err)
            *err = ue; /* why the database could not be read */
        st = ue.status;
    } else {
        st = arrank_analysis_models_prepare(campaign, &opt, &rate_to_per_s, err);
    }
    /* the diagnosis's options, with the campaign-wide basis check done once */
    arrank_diagnose_options dopt = arrank_diagnose_options_defaults();
    if (st == ARRANK_OK && opt.diagnose)
        dopt = arrank_analysis_diagnose_options(campaign, &opt, ue.message);
    if (st == ARRANK_OK)
        st = analyse_all(a, &opt, &dopt, rate_to_per_s, err);
    arrank_units_free(own_units);
    opt.units = NULL;
    if (st != ARRANK_OK)
        goto fail;

    /* With nothing fitted there is nothing to show: report the first reason. */
    size_t n_fitted = 0;
    for (size_t i = 0; i < a->n_results; i++)
        if (!a->results[i].error)
            a->order[n_fitted++] = i;
    if (n_fitted == 0) {
        const arrank_result *first = a->n_results ? &a->results[0] : NULL;
        if (first && first->error)
            st = arrank_error_at(err, ARRANK_EDATA, first->sample->path, first->error_line,
                                 first->error_column,
                                 "%s", first->error);
        else
            st = arrank_errorf(err, ARRANK_EDATA, "no sample in '%s' could be fitted",
                               campaign->path);
        goto fail;
    }

    /* A rate ranking far outside every sample's measured range is a guess,
       not a measurement: refuse it unless the caller lifted the limit. */
    if (want_T && arrank_by_needs_T(opt.by)) {
        st = check_extrapolation(a, n_fitted, opt.max_extrapolation_K, err);
        if (st != ARRANK_OK)
            goto fail;
    }

    /* analysis_reference.c: every sample against the reference; with several
       campaigns the pooled keys (the references leave the ranking) */
    st = arrank_analysis_reference(a, a->order, &n_fitted, &opt.by, err);
    if (st != ARRANK_OK)
        goto fail;

    /* Rank the fitted samples; ranking by rate needs an operating temperature. */
    if (opt.rank && (want_T || !arrank_by_needs_T(opt.by))) {
        st = rank_fitted(a, &opt, n_fitted, err);
        if (st != ARRANK_OK)
            goto fail;
    }
    *out = a;
    return ARRANK_OK;

fail:
    arrank_analysis_free(a);
    return st;
}

/* The public entry: the work in the C locale, rounding to nearest, whatever the
   host program set (number.h), and then the host's settings back. */
arrank_status arrank_analysis_run(const arrank_campaign *campaign, const arrank_options *options,
                                  arrank_analysis **out, arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = analysis_run_in_c(campaign, options, out, err);
    arrank_numbers_c_leave(&env);
    return st;
}

void arrank_analysis_free(arrank_analysis *a)
{
    if (!a)
        return;
    for (size_t i = 0; i < a->n_results; i++) {
        free(a->results[i].error);
        free(a->results[i].used);
        arrank_diagnosis_free(a->results[i].diagnosis);
        arrank_hold_free(a->results[i].hold);
        arrank_sample_stats_free(a->results[i].stats);
    }
    arrank_rank_stats_free(a->rank_stats);
    arrank_reference_stats_free(a->reference);
    free(a->results);
    free(a->order);
    free(a);
}
