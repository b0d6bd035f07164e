/*
 * analysis_plan.c - the pipeline's part of a plan (arrank/analysis_plan.h):
 * the ranked samples as the planner sees them, the involved samples, their
 * candidate temperatures, the greedy plan and the naive one, both checked
 * by the preposterior simulation (plan.c).
 */
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/analysis_plan.h"
#include "arrank/groups.h"
#include "arrank/verdicts.h"
#include "analysis_internal.h"
#include "curvature.h" /* ARRANK_CURVE_LEVEL: the test the plan aims at */

arrank_plan_options arrank_analysis_plan_defaults(void)
{
    arrank_plan_options o;
    memset(&o, 0, sizeof o);
    o.goal = ARRANK_GOAL_SEPARATE;
    o.budget = 12;
    o.max_temp_K = NAN;
    o.step_K = 5.0;
    o.reach_K = 10.0;
    o.target = 0.95;
    o.width = 0.05;
    o.sims = 2000;
    o.bend_J_mol = NAN;
    return o;
}

/* The work of one plan. */
typedef struct {
    const arrank_analysis *a;
    const arrank_plan_options *o;
    arrank_plan *plan;
    arrank_plan_sample *samples; /* [n_ranked], rank order */
    size_t *involved;            /* [n_inv] rank positions */
    size_t n_inv;
    size_t *cand_sample;         /* [n_cand] rank positions */
    double *cand_T;
    size_t n_cand, cap_cand;
} plan_work;

static const arrank_result *ranked(const plan_work *w, size_t pos)
{
    return &w->a->results[w->a->order[pos]];
}

/* Weight of one new run: 1 for an unweighted fit; else the median of the
   used points' weights (r / sd)^2 (fit.h), a typical run of the sample. */
static double new_weight(const arrank_result *r)
{
    if (!r->fit.weighted)
        return 1.0;
    const arrank_sample *s = r->sample;
    double *w = malloc((s->n_points ? s->n_points : 1) * sizeof *w);
    if (!w)
        return NAN;
    size_t n = 0;
    for (size_t i = 0; i < s->n_points; i++)
        if (r->used[i] && isfinite(s->points[i].rate_sd) && s->points[i].rate_sd > 0) {
            double q = s->points[i].rate / s->points[i].rate_sd;
            /* insertion keeps w sorted (samples hold few points) */
            size_t k = n++;
            while (k > 0 && w[k - 1] > q * q) {
                w[k] = w[k - 1];
                k--;
            }
            w[k] = q * q;
        }
    double med = n == 0 ? NAN : n % 2 ? w[n / 2] : 0.5 * (w[n / 2 - 1] + w[n / 2]);
    free(w);
    return med;
}

/* Step 1: every ranked sample as the planner sees it. */
static arrank_status gather_samples(plan_work *w, arrank_error *err)
{
    const arrank_analysis *a = w->a;
    w->samples = malloc((a->n_ranked ? a->n_ranked : 1) * sizeof *w->samples);
    if (!w->samples)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    for (size_t k = 0; k < a->n_ranked; k++) {
        const arrank_result *r = ranked(w, k);
        arrank_error e;
        if (arrank_plan_sample_from_fit(&r->fit, new_weight(r), &w->samples[k], &e) !=
            ARRANK_OK) {
            /* a line without scatter: its key is exact (se 0) for the others'
               tests; it cannot take part itself (pick_involved) */
            arrank_plan_sample *ps = &w->samples[k];
            memset(ps, 0, sizeof *ps);
            ps->T_ref_K = r->fit.T_ref_K;
            ps->b0 = r->fit.b0;
            ps->b1 = r->fit.b1;
            ps->info[0] = ps->info[2] = 1.0;
            ps->dof = r->fit.dof > 0 ? r->fit.dof : 1.0;
            ps->weight_new = NAN; /* the mark */
            continue;
        }
        /* the quadratic's moments of the used points, in the fit's weights */
        const arrank_sample *smp = r->sample;
        double *mom = w->samples[k].mom;
        for (size_t i = 0; i < smp->n_points; i++) {
            if (!r->used[i])
                continue;
            const arrank_point *pt = &smp->points[i];
            double wt = r->fit.weighted ? (pt->rate / pt->rate_sd) * (pt->rate / pt->rate_sd) : 1.0;
            double u = ARRANK_PLAN_U_SCALE * (1.0 / pt->temp_K - 1.0 / r->fit.T_ref_K), q = wt;
            for (int j = 0; j < 5; j++, q *= u)
                mom[j] += q;
        }
    }
    return ARRANK_OK;
}

/* Step 2: the involved samples, in rank order. */
static arrank_status pick_involved(plan_work *w, arrank_error *err)
{
    const arrank_analysis *a = w->a;
    w->involved = malloc((a->n_ranked ? a->n_ranked : 1) * sizeof *w->involved);
    if (!w->involved)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    const arrank_plan_options *o = w->o;
    if (o->goal != ARRANK_GOAL_SEPARATE && o->n_samples) {
        for (size_t j = 0; j < o->n_samples; j++) {
            size_t k = 0;
            while (k < a->n_ranked && strcmp(ranked(w, k)->sample->id, o->samples[j]) != 0)
                k++;
            if (k == a->n_ranked)
                return arrank_errorf(err, ARRANK_EINVAL, "sample '%s' is not a ranked sample "
                                     "of the campaign", o->samples[j]);
            size_t i = 0;
            while (i < w->n_inv && w->involved[i] != k)
                i++;
            if (i == w->n_inv)
                w->involved[w->n_inv++] = k;
        }
        /* rank order */
        for (size_t i = 1; i < w->n_inv; i++)
            for (size_t j = i; j > 0 && w->involved[j - 1] > w->involved[j]; j--) {
                size_t t = w->involved[j];
                w->involved[j] = w->involved[j - 1];
                w->involved[j - 1] = t;
            }
    } else {
        for (size_t k = 0; k < a->n_ranked; k++) {
            const arrank_result *r = ranked(w, k);
            if (k == 0 || (r->stats && r->stats->group == 1))
                w->involved[w->n_inv++] = k;
        }
    }
    if (w->n_inv > 64)
        return arrank_errorf(err, ARRANK_EINVAL, "%zu samples take part; a plan takes at most 64",
                             w->n_inv);
    for (size_t j = 0; j < w->n_inv; j++)
        if (isnan(w->samples[w->involved[j]].weight_new)) {
            const arrank_sample *smp = ranked(w, w->involved[j])->sample;
            return arrank_error_at(err, ARRANK_EDATA, smp->path, 0, 0,
                                   "sample '%s' cannot be planned for: its line has no scatter "
                                   "(or a singular covariance)", smp->id);
        }
    return ARRANK_OK;
}

/* The coldest point of r that the diagnosis calls transport-limited (pore or
   film regime), or leaves out of the fit hotter than its kinetic window
   (where the bend begins, or conversion above the limit); INFINITY when
   none. */
static double transport_onset_K(const arrank_result *r)
{
    double lo = INFINITY;
    const arrank_diagnosis *d = r->diagnosis;
    if (!d)
        return lo;
    for (size_t i = 0; i < d->n_points && i < r->sample->n_points; i++) {
        double T = r->sample->points[i].temp_K;
        int limited = d->points[i].regime == ARRANK_REGIME_PORE ||
                      d->points[i].regime == ARRANK_REGIME_FILM;
        int hot_out = d->points[i].excluded && isfinite(d->window_hi_K) && T > d->window_hi_K;
        if ((limited || hot_out) && T < lo)
            lo = T;
    }
    return lo;
}

static int add_candidate(plan_work *w, size_t pos, double T)
{
    if (w->n_cand == w->cap_cand) {
        size_t cap = w->cap_cand ? 2 * w->cap_cand : 64;
        size_t *s = realloc(w->cand_sample, cap * sizeof *s);
        if (s)
            w->cand_sample = s;
        double *t = s ? realloc(w->cand_T, cap * sizeof *t) : NULL;
        if (!t)
            return -1;
        w->cand_T = t;
        w->cap_cand = cap;
    }
    w->cand_sample[w->n_cand] = pos;
    w->cand_T[w->n_cand++] = T;
    return 0;
}

/* Step 3: each involved sample's candidates, T_op + k step in its allowed
   window (arrank_analysis_plan). */
static arrank_status candidates(plan_work *w, arrank_error *err)
{
    const arrank_plan_options *o = w->o;
    double T_op = w->plan->temp_K;
    for (size_t j = 0; j < w->n_inv; j++) {
        const arrank_result *r = ranked(w, w->involved[j]);
        arrank_plan_entry *e = &w->plan->entries[j];
        const arrank_diagnosis *d = r->diagnosis;
        int win = d && isfinite(d->window_lo_K) && isfinite(d->window_hi_K);
        double lo = (win ? d->window_lo_K : r->fit.T_min_K) - o->reach_K;
        double hi = (win ? d->window_hi_K : r->fit.T_max_K) + o->reach_K;
        if (hi > o->max_temp_K)
            hi = o->max_temp_K;
        double onset = transport_onset_K(r);
        double k0 = ceil((lo - T_op) / o->step_K - 1e-9), k1 = floor((hi - T_op) / o->step_K + 1e-9);
        e->allowed_lo_K = lo;
        e->allowed_hi_K = hi;
        /* the stated bend across the allowed window (the fitted range when
           none is allowed) */
        w->samples[w->involved[j]].bend_c =
            lo < hi ? arrank_plan_bend_c(o->bend_J_mol, lo, hi)
                    : arrank_plan_bend_c(o->bend_J_mol, r->fit.T_min_K, r->fit.T_max_K);
        for (double k = k0; k <= k1; k++) {
            double T = T_op + k * o->step_K;
            if (!(T > 0) || T >= onset || T > o->max_temp_K)
                continue;
            if (add_candidate(w, w->involved[j], T) != 0)
                return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            e->n_candidates++;
        }
        if (lo > hi)
            e->allowed_lo_K = e->allowed_hi_K = NAN;
    }
    return ARRANK_OK;
}

/* Step 4: the greedy plan into plan->runs (rank positions for now). */
static arrank_status allocate(plan_work *w, const arrank_plan_target *t, arrank_error *err)
{
    arrank_plan *p = w->plan;
    size_t *rep = calloc(w->n_cand ? w->n_cand : 1, sizeof *rep);
    p->runs = calloc(w->n_cand ? w->n_cand : 1, sizeof *p->runs);
    if (!rep || !p->runs) {
        free(rep);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    arrank_status st = ARRANK_OK;
    if (!p->met_now && w->n_cand)
        st = arrank_plan_allocate(w->samples, w->a->n_ranked, w->involved, w->n_inv, t,
                                  w->cand_sample, w->cand_T, w->n_cand, p->budget, rep, err);
    for (size_t c = 0; st == ARRANK_OK && c < w->n_cand; c++)
        if (rep[c]) {
            p->runs[p->n_runs].sample = w->cand_sample[c];
            p->runs[p->n_runs].temp_K = w->cand_T[c];
            p->runs[p->n_runs++].repeats = rep[c];
        }
    free(rep);
    return st;
}

/* Step 5: the naive plan, the budget spread evenly over the involved
   samples (in turn) and over each one's used temperatures (coldest first,
   in turn), leaving out those above the limit or transport-limited. */
static arrank_status naive_plan(plan_work *w, arrank_error *err)
{
    arrank_plan *p = w->plan;
    p->naive = calloc(p->budget ? p->budget : 1, sizeof *p->naive);
    size_t *next = calloc(w->n_inv, sizeof *next);
    if (!p->naive || !next) {
        free(next);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    for (size_t placed = 0, turn = 0, miss = 0; placed < p->budget && miss < w->n_inv;
         turn++) {
        size_t j = turn % w->n_inv;
        const arrank_result *r = ranked(w, w->involved[j]);
        double onset = transport_onset_K(r);
        const arrank_diagnosis *d = r->diagnosis;
        /* the used points coldest first (the diagnosis's order), else file order */
        size_t n = d && d->n_order ? d->n_order : r->sample->n_points;
        double T = NAN;
        for (size_t tries = 0; tries < n && !isfinite(T); tries++) {
            size_t i = d && d->n_order ? d->order[next[j] % n] : next[j] % n;
            next[j]++;
            double ti = r->sample->points[i].temp_K;
            if (r->used[i] && ti <= w->o->max_temp_K && ti < onset)
                T = ti;
        }
        if (!isfinite(T)) {
            miss++;
            continue;
        }
        miss = 0;
        placed++;
        size_t k = 0;
        while (k < p->n_naive &&
               !(p->naive[k].sample == w->involved[j] && p->naive[k].temp_K == T))
            k++;
        if (k == p->n_naive)
            p->naive[p->n_naive++] = (arrank_plan_run){w->involved[j], T, 0};
        p->naive[k].repeats++;
    }
    free(next);
    return ARRANK_OK;
}

/* Step 6: the intervals before and expected after, per involved sample. */
static void intervals(plan_work *w)
{
    arrank_plan *p = w->plan;
    for (size_t j = 0; j < w->n_inv; j++) {
        const arrank_plan_sample *s = &w->samples[w->involved[j]];
        const arrank_result *r = ranked(w, w->involved[j]);
        arrank_plan_entry *e = &p->entries[j];
        e->rate_ci_before[0] = r->at_T.rate_lo;
        e->rate_ci_before[1] = r->at_T.rate_hi;
        size_t n_new = 0;
        for (size_t k = 0; k < p->n_runs; k++)
            if (p->runs[k].sample == w->involved[j])
                n_new += p->runs[k].repeats;
        e->runs = n_new;
        double f = arrank_plan_var_factor(s, w->involved[j], p->runs, p->n_runs, p->temp_K);
        double mean, se;
        arrank_plan_key(s, p->temp_K, &mean, &se);
        double hw = arrank_t_quantile(p->confidence, s->dof + (double)n_new) *
                    sqrt(s->rss / s->dof * f);
        e->rate_ci_expected[0] = exp(mean - hw);
        e->rate_ci_expected[1] = exp(mean + hw);
    }
}

static arrank_status check_options(const arrank_analysis *a, const arrank_plan_options *o,
                                   arrank_error *err)
{
    if (a->options.by != ARRANK_BY_RATE || !isfinite(a->options.operating_temp_K) || !a->n_ranked)
        return arrank_errorf(err, ARRANK_EINVAL,
                             "a plan needs samples ranked by rate at an operating temperature");
    if (!(o->max_temp_K > 0) || !isfinite(o->max_temp_K))
        return arrank_errorf(err, ARRANK_EINVAL,
                             "no maximum temperature: a plan needs the reactor's or the safety "
                             "limit (max_temperature in campaign.ini or --max-temperature)");
    if (o->goal == ARRANK_GOAL_CURVATURE && (!(o->bend_J_mol > 0) || !isfinite(o->bend_J_mol)))
        return arrank_errorf(err, ARRANK_EINVAL, "the curvature goal needs the size of the bend "
                             "to detect (a fall of the apparent Ea across the window, e.g. "
                             "--bend 20kJ/mol)");
    if (o->budget < 1 || o->budget > 10000 || !(o->step_K > 0) || !(o->reach_K >= 0) ||
        !(o->target > 0 && o->target < 1) || !(o->width > 0) || o->sims < 100)
        return arrank_errorf(err, ARRANK_EINVAL, "plan options out of range (budget 1 to 10000, "
                             "step > 0, reach >= 0, target in (0, 1), width > 0, "
                             "simulations >= 100)");
    return ARRANK_OK;
}

/*
 * Whether the goal is met by the campaign as it is.  For the separate goal,
 * the P(best) route takes the leader's P(best) that rank shows (its
 * Student-t draws, analysis_rank.c), the number the user sees; the
 * simulations score future campaigns with the same model by quadrature
 * (arrank_plan_p_best), which agrees with it to rank's Monte Carlo error
 * (tests/test_plan.c).  1, 0, or -1 out of memory.
 */
static int met_now(const plan_work *w, const arrank_plan_target *t)
{
    const arrank_analysis *a = w->a;
    if (t->goal != ARRANK_GOAL_SEPARATE)
        return arrank_plan_goal_met(w->samples, a->n_ranked, w->involved, w->n_inv, t);
    arrank_plan_target holm_only = *t;
    holm_only.target = 0.0; /* the Holm route alone */
    int met = arrank_plan_goal_met(w->samples, a->n_ranked, w->involved, w->n_inv, &holm_only);
    if (met != 0)
        return met;
    const struct arrank_sample_stats *ss = a->results[a->order[0]].stats;
    return ss && isfinite(ss->p_best) && t->target > 0 && t->target < 1 &&
           ss->p_best >= t->target;
}

/* Steps 1 to 6, then the two simulations. */
static arrank_status plan_in(plan_work *w, arrank_error *err)
{
    const arrank_analysis *a = w->a;
    arrank_plan *p = w->plan;
    arrank_status st = gather_samples(w, err);
    if (st == ARRANK_OK)
        st = pick_involved(w, err);
    if (st != ARRANK_OK)
        return st;
    p->entries = calloc(w->n_inv, sizeof *p->entries);
    if (!p->entries)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    p->n_entries = w->n_inv;
    for (size_t j = 0; j < w->n_inv; j++)
        p->entries[j].result = a->order[w->involved[j]];
    arrank_plan_target t = {p->goal, p->temp_K, 1.0 - p->confidence, p->target, p->width,
                            a->n_ranked < ARRANK_GROUP_MAX ? a->n_ranked : ARRANK_GROUP_MAX,
                            ARRANK_CURVE_LEVEL};
    int now = met_now(w, &t);
    if (now < 0)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    p->met_now = now;
    st = candidates(w, err);
    if (st == ARRANK_OK)
        st = allocate(w, &t, err);
    if (st == ARRANK_OK)
        st = naive_plan(w, err);
    if (st != ARRANK_OK)
        return st;
    intervals(w);
    if (p->met_now) {
        /* nothing to run: the ranking stays as it is, and the goal met */
        p->expected_probability = p->naive_probability = 1.0;
        p->expected_probability_se = p->naive_probability_se = 0.0;
        p->n_naive = 0;
        return ARRANK_OK;
    }
    st = arrank_plan_simulate(w->samples, a->n_ranked, w->involved, w->n_inv, &t, p->runs,
                              p->n_runs, p->sims, p->seed, &p->expected_probability,
                              &p->expected_probability_se, err);
    if (st == ARRANK_OK)
        st = arrank_plan_simulate(w->samples, a->n_ranked, w->involved, w->n_inv, &t, p->naive,
                                  p->n_naive, p->sims, p->seed, &p->naive_probability,
                                  &p->naive_probability_se, err);
    /* the runs name results from here on */
    for (size_t k = 0; k < p->n_runs; k++)
        p->runs[k].sample = a->order[p->runs[k].sample];
    for (size_t k = 0; k < p->n_naive; k++)
        p->naive[k].sample = a->order[p->naive[k].sample];
    return st;
}

arrank_status arrank_analysis_plan(const arrank_analysis *a, const arrank_plan_options *options,
                                   arrank_plan **out, arrank_error *err)
{
    *out = NULL;
    arrank_plan_options o = options ? *options : arrank_analysis_plan_defaults();
    arrank_status st = check_options(a, &o, err);
    if (st != ARRANK_OK)
        return st;
    plan_work w;
    memset(&w, 0, sizeof w);
    w.a = a;
    w.o = &o;
    w.plan = calloc(1, sizeof *w.plan);
    if (!w.plan)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    arrank_plan *p = w.plan;
    p->goal = o.goal;
    p->budget = o.budget;
    p->temp_K = a->options.operating_temp_K;
    p->max_temp_K = o.max_temp_K;
    p->step_K = o.step_K;
    p->reach_K = o.reach_K;
    p->confidence = a->options.confidence;
    p->target = o.target;
    p->width = o.width;
    p->bend_J_mol = o.goal == ARRANK_GOAL_CURVATURE ? o.bend_J_mol : NAN;
    p->level = ARRANK_CURVE_LEVEL;
    p->seed = a->options.seed;
    p->sims = o.sims;
    st = plan_in(&w, err);
    free(w.samples);
    free(w.involved);
    free(w.cand_sample);
    free(w.cand_T);
    if (st != ARRANK_OK) {
        arrank_plan_free(p);
        return st;
    }
    *out = p;
    return ARRANK_OK;
}
