/*
 * arrank/plan.h - planning the next runs: the statistics, on arrays.
 *
 * Each sample is seen through the sufficient statistics of its weighted
 * line ln r = b0 + b1 x, x = 1/T - 1/T_ref (fit.h): the information matrix
 * M = X'WX of its points, (b0, b1), the weighted residual sum of squares and
 * the degrees of freedom.  Adding runs changes them in closed form:
 * M' = M + sum w g g' (g = (1, x) of each new run), b' = M'^-1 (M b + sum w g y),
 * RSS' = RSS + (b - b')' M (b - b') + sum w (y - g'b')^2, dof' = dof + runs,
 * which is the weighted least-squares refit on the old and new points
 * together (the normal equations; Seber & Lee, Linear Regression Analysis,
 * 2nd ed., sec. 10.1, updating formulas).  The expected variance of ln r(T)
 * after the runs is s^2 g'M'^-1 g with the sample's current residual variance
 * s^2.
 *
 * The allocation (arrank_plan_allocate) adds one run at a time where the
 * goal's planning score gains most (greedy), or searches every allocation
 * of a small budget; the check
 * (arrank_plan_simulate) is a preposterior simulation: parameters and
 * scatter drawn from each fit's distribution (the normal-inverse-chi-square
 * posterior of a linear model under the usual noninformative prior: sigma^2
 * = s^2 dof / chi2_dof, (b0, b1) normal around the fit with covariance
 * sigma^2 M^-1; Gelman et al., Bayesian Data Analysis, 3rd ed., sec. 14.2),
 * the planned runs measured with that scatter, the samples refitted and
 * re-ranked, and the share of simulations in which the goal is met.
 *
 * The plan (arrank_plan, made by arrank_analysis_plan in
 * arrank/analysis_plan.h) is what the writers (plan_out.h, plot_plan.h) read.
 */
#ifndef ARRANK_PLAN_H
#define ARRANK_PLAN_H

#include <stddef.h>

#include "arrank/error.h"
#include "arrank/fit.h"

/* What the new runs are for. */
typedef enum {
    ARRANK_GOAL_SEPARATE = 0,  /* tell the leader apart from the rest of its group */
    ARRANK_GOAL_PRECISION = 1, /* rate-at-T intervals under a stated relative half width */
    ARRANK_GOAL_CURVATURE = 2  /* make a bend of a stated size detectable by the quadratic test */
} arrank_plan_goal;

/* One sample as the planner sees it (see the top of this header). */
typedef struct {
    double T_ref_K;    /* centring temperature of x */
    double b0, b1;     /* ln r at T_ref (report unit), d ln r / d(1/T) in K */
    double info[3];    /* M = X'WX: sum w, sum w x, sum w x^2 (x in 1/K) */
    double rss;        /* weighted residual sum of squares */
    double dof;        /* points - 2 */
    double weight_new; /* weight of one new run: 1 for an unweighted fit */
    /* curvature: sum w u^k, k = 0..4, over the used points, u = 1e4 (1/T -
       1/T_ref) in K^-1 (scaled so the quadratic's moments stay near 1); and
       the stated bend as the quadratic coefficient of ln r in u (0: none) */
    double mom[5];
    double bend_c;
} arrank_plan_sample;

/* u of the curvature moments: 1e4 (1/T - 1/T_ref). */
#define ARRANK_PLAN_U_SCALE 1e4

/* A planned run: `repeats` measurements of sample `sample` at temp_K. */
typedef struct {
    size_t sample;
    double temp_K;
    size_t repeats;
} arrank_plan_run;

/* The goal as the statistics use it. */
typedef struct {
    arrank_plan_goal goal;
    double temp_K;     /* operating temperature: the rates at T compared */
    double alpha;      /* 1 - the run's confidence (Holm's level, interval level) */
    double target;     /* separate: P(best) of the leader that also settles it (0.95) */
    double width;      /* precision: relative half width, 0.05 for +-5 % */
    size_t n_family;   /* separate: samples in Holm's family (the ranked ones, at most
                          ARRANK_GROUP_MAX) */
    double level;      /* curvature: two-sided level of the quadratic test (the
                          diagnosis's, 0.02) */
} arrank_plan_target;

/*
 * Curvature: the standard error factor sqrt([M3'^-1]_cc) of the quadratic
 * coefficient c of ln r = a + b u + c u^2 (u as for mom) after the runs of
 * sample `which` are added, M3 the 3x3 moment matrix; the expected standard
 * error of c is s times it.  NAN when M3' is singular.
 */
double arrank_plan_bend_se_factor(const arrank_plan_sample *s, size_t which,
                                  const arrank_plan_run *runs, size_t n_runs);

/* The stated bend as c (per u^2): a fall dEa_J_mol of the apparent Ea from
   temp_lo_K to temp_hi_K is c = dEa / (2 R (x_lo - x_hi)) / 1e8 with x = 1/T
   (Ea = -R d ln r / dx). */
double arrank_plan_bend_c(double dEa_J_mol, double temp_lo_K, double temp_hi_K);

/*
 * The planner's view of an Arrhenius fit (fit.h): M = s^2 cov^-1 with
 * s = fit->resid_sd, RSS = s^2 dof.  weight_new: the weight of one new run
 * in the fit's own weights (1 when unweighted).  EFIT when the fit has no
 * scatter (s = 0) or its covariance is singular.
 */
arrank_status arrank_plan_sample_from_fit(const arrank_arrhenius *fit, double weight_new,
                                          arrank_plan_sample *out, arrank_error *err);

/*
 * g'M'^-1 g at temp_K after the runs of `runs` that belong to sample
 * `which` are added to s (M' as at the top); the expected variance of
 * ln r(temp_K) is s^2 times it.  NAN when M' is singular.
 */
double arrank_plan_var_factor(const arrank_plan_sample *s, size_t which,
                              const arrank_plan_run *runs, size_t n_runs, double temp_K);

/*
 * The closed-form refit: s with n new points (temp_K[i], ln_rate[i]), each of
 * weight s->weight_new, added.  out may alias s.  EFIT when M' is singular.
 */
arrank_status arrank_plan_refit(const arrank_plan_sample *s, const double *temp_K,
                                const double *ln_rate, size_t n, arrank_plan_sample *out,
                                arrank_error *err);

/* ln r at temp_K of s and its standard error sqrt(RSS/dof g'M^-1 g). */
void arrank_plan_key(const arrank_plan_sample *s, double temp_K, double *mean, double *se);

/*
 * P(sample `best` has the largest key) for n independent keys mean + se T,
 * T ~ Student's t with dof degrees of freedom (INFINITY: normal): the
 * ranking's model of P(best) (arrank/pbest.h), by quadrature instead of
 * draws, within 1e-9 (tests/check_scipy_plan.py).  NAN when best >= n or
 * out of memory.
 */
double arrank_plan_p_best(const double *mean, const double *se, const double *dof, size_t n,
                          size_t best);

/*
 * 1 when the goal is met by n samples (keys at t->temp_K, any order) with
 * the involved ones (indices involved[n_involved]; for separate, involved[0]
 * is the current leader and the rest its group): separate, when the best
 * key's sample differs from every other sample after Holm's correction at
 * t->alpha over the first t->n_family in key order (the groups of
 * arrank/groups.h), or its P(best) reaches t->target (Student-t keys,
 * arrank_plan_p_best); precision, when every involved sample's interval
 * exp(+-t se) lies within 1 +- width.  0 when not; -1 out of memory.
 * (Curvature is judged on the quadratic fit inside arrank_plan_simulate: 0.)
 */
int arrank_plan_goal_met(const arrank_plan_sample *samples, size_t n, const size_t *involved,
                         size_t n_involved, const arrank_plan_target *t);

/* Allocations searched exhaustively: at most this many (below). */
#define ARRANK_PLAN_EXACT_MAX 20000

/*
 * Allocation of `budget` runs over n_cand candidates (cand_sample[k],
 * cand_temp_K[k]) by the planning score: exactly, over every allocation,
 * when there are at most ARRANK_PLAN_EXACT_MAX of them (C(n_cand + budget -
 * 1, budget)) and the budget is at most 8, the first best in the order of
 * the search;
 * otherwise greedily, each run where the score gains most, ties to the lower
 * candidate.  Planning score: separate, the
 * sum over the leader's group of log Phi(|d_j| / se_j - z) with the
 * expected standard errors after the runs, z the smaller of the normal
 * quantiles of the Bonferroni level alpha / (n_family (n_family - 1) / 2)
 * and of the P(best) target (the easier of the goal's two routes); precision, the
 * sum over the involved samples of min(0, ln(1 + width) - t se), t on the
 * new dof, less 0.001 of the summed half widths (the ties once all are met);
 * curvature, the sum over the involved samples of log Phi(|bend_c| / se_c -
 * z), z the two-sided normal quantile at t->level.
 * Output: repeats[n_cand] (zeroed first).  EINVAL for bad arguments.
 */
arrank_status arrank_plan_allocate(const arrank_plan_sample *samples, size_t n,
                                   const size_t *involved, size_t n_involved,
                                   const arrank_plan_target *t, const size_t *cand_sample,
                                   const double *cand_temp_K, size_t n_cand, size_t budget,
                                   size_t *repeats, arrank_error *err);

/* The planning score of an allocation (repeats[n_cand] of the candidates);
   NAN for bad arguments. */
double arrank_plan_score(const arrank_plan_sample *samples, size_t n, const size_t *involved,
                         size_t n_involved, const arrank_plan_target *t,
                         const size_t *cand_sample, const double *cand_temp_K, size_t n_cand,
                         const size_t *repeats);

/*
 * Preposterior probability that the goal is met after the runs: `sims`
 * simulations as at the top, seeded; the parameters of simulation k are the
 * same for any runs (their own random stream), so two plans are compared on
 * common draws.  *p the share of simulations that meet the goal, *p_se its
 * Monte Carlo standard error sqrt(p (1 - p) / sims).  Curvature: in each
 * simulation and involved sample, sigma^2 drawn as above, the quadratic
 * fit's c ~ N(bend_c, sigma^2 [M3'^-1]_cc) and its RSS ~ sigma^2
 * chi2(n' - 3), independent (normal errors; Seber & Lee sec. 3.5), the
 * test t = c / se(c) two-sided at t->level on n' - 3 dof: the goal is met
 * when every involved sample's bend is detected.  EINVAL, ENOMEM.
 */
arrank_status arrank_plan_simulate(const arrank_plan_sample *samples, size_t n,
                                   const size_t *involved, size_t n_involved,
                                   const arrank_plan_target *t, const arrank_plan_run *runs,
                                   size_t n_runs, size_t sims, unsigned long seed, double *p,
                                   double *p_se, arrank_error *err);

/* ---- the plan of a campaign (arrank_analysis_plan makes it) ------------- */

/* One involved sample. */
typedef struct {
    size_t result;            /* index into arrank_analysis.results */
    double rate_ci_before[2]; /* rate at T, report unit, at the run's confidence */
    double rate_ci_expected[2]; /* the same after the planned runs, expected (current
                                   estimate, expected interval half width) */
    double allowed_lo_K, allowed_hi_K; /* candidate temperatures lie in here; NAN: none */
    size_t n_candidates;
    size_t runs;              /* planned runs of this sample */
} arrank_plan_entry;

typedef struct {
    arrank_plan_goal goal;
    size_t budget;
    double temp_K;            /* operating temperature */
    double max_temp_K;        /* the stated limit: no candidate above it */
    double step_K, reach_K;
    double confidence, target, width;
    double bend_J_mol;        /* curvature: the stated fall of the apparent Ea */
    double level;             /* curvature: the quadratic test's level */
    unsigned long seed;
    size_t sims;
    int met_now;              /* 1 when the goal is met before any new run */
    arrank_plan_entry *entries; /* [n_entries], rank order */
    size_t n_entries;
    arrank_plan_run *runs;    /* [n_runs] sample = result index, rank order then temperature */
    size_t n_runs;
    arrank_plan_run *naive;   /* [n_naive] the budget spread evenly at the current temperatures */
    size_t n_naive;
    double expected_probability, expected_probability_se;
    double naive_probability, naive_probability_se;
} arrank_plan;

void arrank_plan_free(arrank_plan *plan);

#endif
