/*
 * arrank/analysis_stats.h - the ranking statistics an analysis keeps
 * (analysis.h): per sample (arrank_result.stats) and for the campaign
 * (arrank_analysis.rank_stats).  The pipeline computes them with the
 * ranking modules (pbest.h, groups.h, compensation.h, bootstrap.h) and owns
 * them; the writers read them.
 */
#ifndef ARRANK_ANALYSIS_STATS_H
#define ARRANK_ANALYSIS_STATS_H

#include <stddef.h>

#include "arrank/compensation.h"
#include "arrank/contrast.h"
#include "arrank/groups.h"
#include "arrank/models.h"
#include "arrank/pbest.h"

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
    /* Against the reference catalyst of its campaign (options.reference):
       valid when has_reference.  is_reference marks the reference itself
       (ratio 1, no interval).  ratio: ln r_i(T) - ln r_ref(T) (ln of the
       ratio; valid when the sample has a rate at T), ea_diff: Ea_i - Ea_ref
       [J/mol], each with its Welch interval (contrast.h); p_better: P(better
       than the reference) on the ranking key (the rate at T, or lower Ea,
       or higher ln A). */
    int has_reference;
    int is_reference;
    int has_ratio;
    arrank_contrast ratio;
    arrank_contrast ea_diff;
    double p_better;
};

/* The reference catalyst in one campaign of the run. */
typedef struct {
    const char *campaign;   /* its name (borrowed from the campaign) */
    size_t result;          /* the reference's result index; SIZE_MAX when it has none */
    int has_rate;           /* 1 when the reference has a rate at T */
    double ln_rate, ln_rate_se, dof; /* ln r_ref(T) (ln of the report unit) */
    double rate, rate_lo, rate_hi;   /* report unit, the interval at the run's level */
    arrank_contrast to_first;        /* ln r_ref here - ln r_ref in the first campaign */
} arrank_reference_campaign;

/* The reference catalyst of the run (arrank_analysis.reference). */
struct arrank_reference_stats {
    const char *id;                  /* the reference's id in each campaign (borrowed) */
    size_t n_campaigns;
    arrank_reference_campaign *campaigns; /* [n_campaigns] */
    /* several campaigns: Welch's test that the reference's ln r(T) is the same
       in all (contrast.h); has_equal 0 with one campaign or without rates */
    int has_equal;
    arrank_contrast_equal equal;
    int pooled;                      /* 1: the ranking keys are the ratios (several campaigns) */
};

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

/* Free what arrank_analysis_run allocated for them (NULL is fine). */
void arrank_rank_stats_free(struct arrank_rank_stats *stats);
void arrank_sample_stats_free(struct arrank_sample_stats *stats);
void arrank_reference_stats_free(struct arrank_reference_stats *stats);

#endif
