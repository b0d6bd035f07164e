/*
 * arrank/rank.h - a ranking that respects uncertainty.
 *
 * After the pipeline has ordered the samples (analysis.h), this module says
 * how sure that order is:
 *  - P(best): Monte Carlo over each sample's fitted parameter distribution
 *    (multivariate t with the fit's degrees of freedom, or normal), the
 *    probability that the sample has the best key (highest rate at the
 *    operating temperature, lowest Ea, or highest ln A), and P(i beats j) for
 *    the top samples only;
 *  - groups of samples that cannot be told apart (pairwise tests with Holm's
 *    correction);
 *  - the compensation analysis across the ranked samples (ln A against Ea,
 *    isokinetic temperature, and the tests of whether the line is an artifact
 *    of correlated estimation errors);
 *  - bootstrap intervals for the rate at the operating temperature.
 *
 * Group rule (arrank_rank_groups): the samples are taken in rank order, best
 * first.  Rank 1 leads group 1.  Walking down the ranks, a sample joins the
 * current group when its difference from the group's leader (the group's best
 * member) is not significant after Holm's correction; otherwise it starts and
 * leads a new group.  So every member of a group is indistinguishable from its
 * leader at the stated confidence, and each leader is significantly worse
 * than the leader before it.  Two members of one group may still differ from
 * each other.  Holm's family is every pair among the first
 * ARRANK_GROUP_MAX ranked samples (at most 124,750 tests); samples ranked
 * below that are not grouped (group 0), so a 10,000-sample campaign does not
 * build 5e7 p-values.
 */
#ifndef ARRANK_RANK_H
#define ARRANK_RANK_H

#include <stddef.h>

#include "arrank/analysis.h"
#include "arrank/error.h"
#include "arrank/fit.h"
#include "arrank/models.h"

/* Ranked samples that take part in the groups (see the rule above). */
#define ARRANK_GROUP_MAX 500

/* Per-sample statistics; arrank_result.stats points at one (owned by the analysis). */
struct arrank_sample_stats {
    double p_best;            /* probability of being best; NAN when not computed */
    int group;                /* 1-based group number; 0 when not grouped */
    size_t top_index;         /* row in arrank_rank_stats.p_beats; SIZE_MAX when not in the top */
    /* bootstrap percentile interval of the rate at the operating temperature */
    int has_bootstrap;
    double rate_lo_boot, rate_hi_boot; /* report unit */
    size_t boot_ok;           /* resamples that gave a fit */
    /* modified or transition-state fit (options.model); valid when has_model */
    int has_model;
    arrank_model_fit model;
    /* The sample's ranking key as P(best) draws it (key = mean + se T, T ~ t
       with key_dof, INFINITY: normal): ln r at the operating temperature
       (ln of the report unit), -Ea [J/mol] or ln A, by options.by.  Set with
       the sample's fit, valid when has_key. */
    int has_key;
    double key, key_se, key_dof;
    /* sum of 1/T [1/K] over the fitted points and their number: this
       sample's share of the compensation's harmonic-mean temperature */
    double inv_T_sum_per_K;
    size_t n_T;
};

typedef enum {
    ARRANK_COMP_TOO_FEW = 0,  /* fewer than ARRANK_COMP_MIN samples */
    ARRANK_COMP_NONE = 1,     /* ln A does not rise significantly with Ea: no line to explain */
    ARRANK_COMP_ARTIFACT = 2, /* consistent with a statistical artifact */
    ARRANK_COMP_REAL = 3      /* not explained by error correlation */
} arrank_comp_verdict;

/* Samples the compensation analysis needs at least (a line and its scatter). */
#define ARRANK_COMP_MIN 4

/*
 * The compensation analysis across the ranked samples.  Sources: Constable,
 * Proc. R. Soc. A 108:355 (1925) for the line ln A = alpha + Ea/(R T_iso);
 * Krug, Hunter & Grieger, Nature 261:566 (1976) and J. Phys. Chem. 80:2335
 * (1976) for T_hm and the artifact tests; Exner, Nature 201:488 (1964) for
 * ln r(T2) against ln r(T1).
 */
typedef struct {
    arrank_comp_verdict verdict;
    size_t n;                   /* samples in the analysis */
    /* unweighted least squares of ln A on Ea (the regression usually drawn) */
    double slope_mol_J;         /* d ln A / d Ea, mol/J */
    double slope_se_mol_J;
    double intercept;           /* alpha, ln A at Ea = 0 */
    double intercept_se;
    double corr;                /* Pearson r of ln A and Ea */
    double slope_p;             /* two-sided p of slope = 0, t with n - 2 dof */
    /* isokinetic temperature 1/(R slope); interval by inverting the slope's t
       interval (Fieller's method for a reciprocal), +-INFINITY when unbounded,
       and then lo > hi means the interval is the outside (-inf, hi] U [lo, inf) */
    double T_iso_K, T_iso_lo_K, T_iso_hi_K;
    int T_iso_bounded;          /* 1 when the slope's interval excludes 0 */
    double T_hm_K;              /* harmonic mean of every temperature in the fits */
    int T_hm_inside;            /* 1 when T_hm lies in the interval of T_iso */
    /* Krug et al.: Ea against ln r(T_hm), estimates with uncorrelated errors;
       least squares of ln r(T_hm) on Ea */
    double hm_slope_mol_J, hm_slope_se_mol_J, hm_p;
    /* Exner: ln r(T2) on ln r(T1); T1, T2 span the common measured range */
    double exner_T1_K, exner_T2_K;
    double exner_slope, exner_slope_se;
    double exner_T_iso_K;       /* T1 T2 (b - 1)/(b T2 - T1); NAN if b = 1 */
    double confidence;
    char sentence[768];         /* the verdict in plain words */
} arrank_compensation;

/* Campaign-level statistics; arrank_analysis.rank_stats points at one. */
struct arrank_rank_stats {
    arrank_rank_by by;
    double temp_K;               /* operating temperature (NAN for by != rate without one) */
    size_t draws;
    unsigned long seed;
    int normal_draws;
    size_t n_top;                /* samples in the pairwise matrix */
    size_t *top;                 /* [n_top] result indices, best first */
    double *p_beats;             /* [n_top * n_top]: P(top[i] beats top[j]), NAN on the diagonal */
    size_t n_grouped;            /* ranked samples that got a group */
    int n_groups;
    size_t n_tests;              /* p-values in Holm's family */
    size_t bootstrap;            /* resamples per sample; 0 when not asked */
    arrank_compensation compensation;
};

/*
 * Compute every statistic above for an analysis that has been ranked
 * (a->order, a->n_ranked).  Allocates a->rank_stats and, per ranked result,
 * res->stats when missing.  Freed by arrank_analysis_free (through
 * arrank_rank_stats_free and arrank_sample_stats_free).  EINVAL for options
 * out of range (draws 0), ENOMEM.
 */
arrank_status arrank_rank_compute(arrank_analysis *a, arrank_error *err);

void arrank_rank_stats_free(struct arrank_rank_stats *stats);
void arrank_sample_stats_free(struct arrank_sample_stats *stats);

/*
 * The P(best) engine on plain Arrhenius fits, for callers and tests.
 * fits[n] in rank order (best first); the key is ln r(temp_K) for by = RATE
 * (temp_K > 0 required), -Ea for EA, ln A for PREFACTOR.  (b0, b1) of each fit
 * follows its fitted distribution: bivariate t with fit->dof degrees of
 * freedom (normal when normal_draws), mean (b0, b1), scale fit->cov; every
 * sample independently.  The key is linear in (b0, b1), so it is drawn
 * directly as mean + se T with T a Student t (or normal) variate, which has
 * the same distribution (rank.c).  Uses `draws` draws from GSL's taus2 in
 * two streams seeded from `seed` (same numbers on any number of cores).
 * Outputs: p_best[n]; p_beats[n_top * n_top] (may be NULL when n_top is 0):
 * row i, column j is P(fits[i] beats fits[j]), NAN on the diagonal.
 * EINVAL for draws 0, n_top > n or a bad temperature; ENOMEM.
 */
arrank_status arrank_rank_pbest(const arrank_arrhenius *const *fits, size_t n, arrank_rank_by by,
                                double temp_K, size_t draws, unsigned long seed,
                                int normal_draws, size_t n_top, double *p_best, double *p_beats,
                                arrank_error *err);

/*
 * Holm's step-down adjusted p-values (Holm, Scand. J. Statist. 6:65, 1979):
 * with p sorted ascending p_(1) <= ... <= p_(m),
 * adj_(k) = max_{j <= k} min(1, (m - j + 1) p_(j)); hypothesis k is rejected at
 * level alpha when adj_(k) <= alpha, which is Holm's procedure.  p[m] in any
 * order, adj[m] in the same order (may alias p).  EINVAL for a p outside
 * [0, 1]; ENOMEM.
 */
arrank_status arrank_rank_holm(const double *p, size_t m, double *adj, arrank_error *err);

/*
 * Groups by the rule at the top of this header.  key[n], key_se[n] and dof[n]
 * (INFINITY for a z test) in rank order, best (largest key) first.  The test
 * of i against j: d = key_i - key_j, se = sqrt(se_i^2 + se_j^2) (independent
 * samples), two-sided p from t with the Welch-Satterthwaite degrees of freedom
 * (Welch, Biometrika 34:28, 1947), or from the normal when both dof are
 * infinite.  alpha = 1 - confidence.  Output group[n] (0 beyond
 * ARRANK_GROUP_MAX); *n_tests (may be NULL) the size of Holm's family.
 */
arrank_status arrank_rank_groups(const double *key, const double *key_se, const double *dof,
                                 size_t n, double alpha, int *group, size_t *n_tests,
                                 arrank_error *err);

/*
 * The compensation analysis on n samples: Arrhenius fits in any order and
 * T_hm_K, the harmonic mean of the experimental temperatures (computed by the
 * caller from the points in the fits).  confidence for the T_iso interval and
 * the significance tests.  Fills *out (verdict TOO_FEW below ARRANK_COMP_MIN
 * samples).  ENOMEM.
 */
arrank_status arrank_rank_compensation(const arrank_arrhenius *const *fits, size_t n,
                                       double T_hm_K, double confidence,
                                       arrank_compensation *out, arrank_error *err);

/*
 * Residual bootstrap of a weighted straight-line fit of ln r on x = 1/T - 1/T_ref
 * (Davison & Hinkley, Bootstrap Methods and their Application, 1997,
 * Algorithm 6.1, with leverage-adjusted residuals, eq. 6.9): temp_K[n], rate[n],
 * weights w[n] (NULL: all 1, else (r/sd)^2 as in fit.h), the original fit
 * `fit`.  `resamples` refits from GSL taus2 seeded with seed; percentile
 * interval of exp(ln r(temp_op_K)) at `confidence`.  *n_ok gets the resamples
 * used.  EINVAL for resamples < 2 or n < 3; ENOMEM.
 */
arrank_status arrank_rank_bootstrap(const double *temp_K, const double *rate, const double *w,
                                    size_t n, const arrank_arrhenius *fit, double temp_op_K,
                                    double confidence, size_t resamples, unsigned long seed,
                                    double *rate_lo, double *rate_hi, size_t *n_ok,
                                    arrank_error *err);

/* Words of a verdict: "consistent with a statistical artifact", ... */
const char *arrank_comp_verdict_words(arrank_comp_verdict verdict);

#endif
