/*
 * arrank/pbest.h - how sure is the top of a ranking: P(best) by Monte Carlo
 * and P(i beats j) for the top samples.
 *
 * Each sample's ranking key is linear in its fitted parameters (the rate at
 * the operating temperature, -Ea or ln A), so its fitted distribution gives
 * the key's: key = mean + se T with T a Student t on the fit's dof, or a
 * normal (pbest.c says why).  The Monte Carlo draws every key `draws` times
 * and counts, per sample, the draws it is best in, and per pair of the top,
 * the draws one beats the other in.  Arrays in, arrays out: the keys in rank
 * order (best first), the probabilities in the same order.
 */
#ifndef ARRANK_PBEST_H
#define ARRANK_PBEST_H

#include <stddef.h>

#include "arrank/error.h"
#include "arrank/fit.h"
#include "arrank/models.h"

/* What "best" means in the ranking. */
typedef enum {
    ARRANK_BY_RATE = 0,      /* highest rate at the operating temperature */
    ARRANK_BY_EA = 1,        /* lowest apparent activation energy */
    ARRANK_BY_PREFACTOR = 2, /* highest pre-exponential factor */
    ARRANK_BY_RATIO = 3      /* highest rate at the operating temperature as a ratio to the
                                reference catalyst's (analysis.h options.reference); the
                                same order as the rate within one campaign */
} arrank_rank_by;

/* 1 when ranking by `by` needs an operating temperature (rate, ratio). */
static inline int arrank_by_needs_T(arrank_rank_by by)
{
    return by == ARRANK_BY_RATE || by == ARRANK_BY_RATIO;
}

/* A sample's ranking key as the Monte Carlo draws it: mean + se T, T ~ t
   with dof degrees of freedom (INFINITY: normal).  The key is ln r at the
   operating temperature (ln of the report unit), -Ea [J/mol] or ln A. */
typedef struct {
    double mean;
    double se;
    double dof;
} arrank_pbest_key;

/* The key of a plain Arrhenius fit by `by` (temp_K, in kelvin, is used for
   ARRANK_BY_RATE and ARRANK_BY_RATIO, whose key here is the rate's);
   normal_draws 1: dof INFINITY. */
arrank_pbest_key arrank_pbest_key_arrhenius(const arrank_arrhenius *fit, arrank_rank_by by,
                                            double temp_K, int normal_draws);

/* The rate key ln r(temp_K) of a modified or transition-state fit. */
arrank_pbest_key arrank_pbest_key_model(const arrank_model_fit *fit, double temp_K,
                                        int normal_draws);

/*
 * The Monte Carlo on n keys in rank order (best first): key[n], key_se[n],
 * key_dof[n] as in arrank_pbest_key.  Uses `draws` draws from GSL's taus2 in
 * two streams seeded from `seed` (same numbers on any number of cores).
 * Outputs: p_best[n]; p_beats[n_top * n_top] (may be NULL when n_top is 0):
 * row i, column j is P(sample i beats sample j), NAN on the diagonal; a tie
 * (two exactly known keys) counts for neither side.  EINVAL for draws 0 or
 * n_top > n; ENOMEM.
 */
arrank_status arrank_pbest_run(const double *key, const double *key_se, const double *key_dof,
                               size_t n, size_t draws, unsigned long seed, size_t n_top,
                               double *p_best, double *p_beats, arrank_error *err);

/*
 * arrank_pbest_run on plain Arrhenius fits, for callers and tests.  fits[n]
 * in rank order; the key is ln r(temp_K) for by = RATE (temp_K > 0
 * required), -Ea for EA, ln A for PREFACTOR.  (b0, b1) of each fit follows
 * its fitted distribution: bivariate t with fit->dof degrees of freedom
 * (normal when normal_draws), mean (b0, b1), scale fit->cov; every sample
 * independently.  EINVAL also for a bad temperature.
 */
arrank_status arrank_pbest_fits(const arrank_arrhenius *const *fits, size_t n, arrank_rank_by by,
                                double temp_K, size_t draws, unsigned long seed,
                                int normal_draws, size_t n_top, double *p_best, double *p_beats,
                                arrank_error *err);

#endif
