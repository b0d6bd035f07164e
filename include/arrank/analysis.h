/*
 * arrank/analysis.h - the whole pipeline for one campaign, and its results.
 *
 * arrank_analysis_run takes a loaded campaign and runs, per sample: screening
 * of points, the Arrhenius fit, diagnostics (when built in), the rate at the
 * operating temperature, then the ranking across samples.  The CLI, the
 * writers, the figures and the report all read the arrank_analysis it makes,
 * so every output tells the same story.
 */
#ifndef ARRANK_ANALYSIS_H
#define ARRANK_ANALYSIS_H

#include <stddef.h>

#include "arrank/analysis_stats.h" /* the ranking statistics in the results */
#include "arrank/campaign.h"
#include "arrank/error.h"
#include "arrank/fit.h"
#include "arrank/pbest.h" /* arrank_rank_by: what "best" means */

struct arrank_diagnosis;
struct arrank_sample_stats;
struct arrank_rank_stats;
struct arrank_reference_stats;

/* Sample flags: a bit each; names and plain words from arrank_flag_name/_words. */
enum {
    ARRANK_FLAG_EXTRAPOLATED = 1u << 0,    /* operating T outside the measured range */
    ARRANK_FLAG_FEW_POINTS = 1u << 1,      /* fewer than 4 points in the fit */
    ARRANK_FLAG_NARROW_RANGE = 1u << 2,    /* temperature span under 30 K */
    ARRANK_FLAG_LOW_EA = 1u << 3,          /* apparent Ea under 20 kJ/mol: suspect film control */
    ARRANK_FLAG_CURVED = 1u << 4,          /* Arrhenius plot bends */
    ARRANK_FLAG_TRANSPORT = 1u << 5,       /* points look transport-limited */
    ARRANK_FLAG_DEACTIVATION = 1u << 6,    /* activity falls over the runs */
    ARRANK_FLAG_ACTIVATION = 1u << 7,      /* activity rises over the runs */
    ARRANK_FLAG_HIGH_CONVERSION = 1u << 8, /* conversion above the differential limit */
    ARRANK_FLAG_OUTLIER = 1u << 9,         /* an influential or outlying point */
    ARRANK_FLAG_MIXED_BASIS = 1u << 10,    /* campaign mixes per-mass/area/site rates */
    ARRANK_FLAG_EXCLUDED = 1u << 11,       /* some points left out of the fit */
    ARRANK_FLAG_POOR_FIT = 1u << 12,       /* chi2/dof far above 1: rate_sd understated */
    ARRANK_FLAG_HEAT = 1u << 13            /* a heat criterion (Mears, Anderson) fails */
};
#define ARRANK_FLAG_COUNT 14

/* JSON name of one flag bit ("extrapolated"), or NULL for an unknown bit. */
const char *arrank_flag_name(unsigned flag);
/* Plain words for one flag bit ("operating temperature outside the measured range"). */
const char *arrank_flag_words(unsigned flag);

/* Error model of the rate data (see fit.h). */
typedef enum {
    ARRANK_ERRORS_RELATIVE = 0, /* constant relative error: linear fit of ln r (default) */
    ARRANK_ERRORS_ABSOLUTE = 1  /* absolute errors: nonlinear fit of r */
} arrank_error_model;

/* Rate law fitted to each sample. */
typedef enum {
    ARRANK_MODEL_ARRHENIUS = 0, /* r = A exp(-Ea/RT) */
    ARRANK_MODEL_MODIFIED = 1,  /* r = A (T/T_ref)^n exp(-E/RT) */
    ARRANK_MODEL_EYRING = 2     /* transition-state form: dH and dS of activation */
} arrank_model;

typedef struct {
    double confidence;        /* two-sided level for every interval, default 0.95 */
    double operating_temp_K;  /* NAN: none (fit only) */
    arrank_rank_by by;
    int rank;                 /* 1 (default): rank the samples; 0: fits only, in file order */
    /* ranking by rate at an operating temperature more than this far (K)
       outside every fitted sample's measured range is refused (EINVAL);
       default 100; INFINITY: no limit */
    double max_extrapolation_K;
    /* diagnostics (diagnose.h) */
    int use_all;              /* 1: fit every point, no kinetic window */
    int drop_outliers;        /* 1: leave flagged outliers out of the fit */
    double conversion_limit;  /* differential-reactor limit, fraction; default 0.10 */
    int diagnose;             /* 1: run the diagnostics (default 1) */
    /* NULL (default): every run of a sample; else only the points of the run
       with this label (arrank_sample.runs), and a sample without such a run
       is listed as not fitted, with that reason */
    const char *run;
    /* NULL (default): the campaign's reference (campaign.ini `reference`), if
       any; else the id of the reference catalyst (borrowed): every sample's
       rate at T as a ratio to it, P(better than it), its Ea difference
       (analysis_stats.h); with several campaigns (arrank/batches.h), each
       sample against its own campaign's reference, the pooled ranking on
       those ratios, and the reference's rate per campaign compared.  A
       reference that is no sample, or cannot be fitted, is EINVAL/EDATA. */
    const char *reference;
    /* ranking statistics (analysis_stats.h) */
    arrank_error_model errors;
    arrank_model model;
    unsigned long seed;       /* Monte Carlo and bootstrap seed, default 1 */
    size_t draws;             /* Monte Carlo draws for P(best), default 10000 */
    size_t pairs;             /* samples in the pairwise matrix, default 20 */
    size_t bootstrap;         /* bootstrap resamples for rate at T; 0 = off */
    int normal_draws;         /* 1: draw from the normal instead of the t distribution */
    /* unit database for metadata quantities (the transport criteria), borrowed;
       NULL (default): the analysis loads its own once when it diagnoses */
    arrank_units *units;
    /* progress of the per-sample fits (campaign.h); NULL (default): none */
    arrank_progress_fn progress;
    void *progress_ctx;
} arrank_options;

/* How far outside every sample's range a rate ranking goes by default (K). */
#define ARRANK_MAX_EXTRAPOLATION_K 100.0

/* Defaults: confidence 0.95, no operating temperature, rank by rate. */
arrank_options arrank_options_defaults(void);

typedef struct {
    const arrank_sample *sample;  /* borrowed from the campaign */
    char *error;                  /* why the sample was not fitted, NULL if it was; for a
                                     file that could not be read (sample->skipped), why */
    long error_line;              /* line the error points at, 0 if none */
    long error_column;            /* column the error points at, 0 if none */
    unsigned char *used;          /* [sample->n_points]: 1 if the point is in the fit */
    size_t n_used;
    /* points the fit was offered: every point of the sample, or with
       options.run those of that run (the others are no part of this fit:
       they raise no flag and the tables count n against these) */
    size_t n_offered;
    arrank_arrhenius fit;         /* valid when error == NULL */
    int has_prediction;           /* 1 when an operating temperature was given */
    arrank_prediction at_T;       /* rate at the operating temperature */
    /* degrees of freedom and two-sided t quantile at options.confidence of the
       model in force, the ones rate_at_T's interval uses: the straight line's
       n - 2, the modified form's n - 3 (--model); valid when error == NULL */
    double interval_dof, interval_t;
    int rank;                     /* 1 = best; 0 = not ranked */
    unsigned flags;               /* ARRANK_FLAG_* bits */
    struct arrank_diagnosis *diagnosis; /* diagnose.h; NULL when not run */
    /* a sample not fitted because every usable point is at one temperature,
       with times on stream: its drift with time (arrank_diagnose_hold,
       verdicts.h); NULL otherwise, and when the diagnostics are off */
    struct arrank_hold *hold;
    struct arrank_sample_stats *stats;  /* analysis_stats.h; NULL when not computed */
    /* Quantiles the outputs need, computed by the pipeline so that no writer
       computes statistics; NAN when they do not apply. */
    double confidence;       /* options.confidence: the level of every interval of this result */
    double t_quantile;       /* two-sided `confidence` t on fit.dof: interval = estimate -/+ t se */
    double region_quantile;  /* 2 F(2, fit.dof; confidence): joint (Ea, ln A) confidence region */
    /* (the --model fit's t quantile is interval_t above: when a model was
       fitted, the model is the one in force) */
} arrank_result;

typedef struct {
    const arrank_campaign *campaign; /* borrowed; must outlive the analysis */
    arrank_options options;
    arrank_result *results;          /* [n_results], same order as campaign->samples */
    size_t n_results;
    size_t *order;                   /* [n_ranked] result indices, best first */
    size_t n_ranked;
    struct arrank_rank_stats *rank_stats; /* analysis_stats.h: P(best), groups, compensation;
                                             may be NULL */
    struct arrank_reference_stats *reference; /* analysis_stats.h: the reference catalyst per
                                                 campaign; NULL without a reference */
} arrank_analysis;

/*
 * Run the pipeline.  options may be NULL (defaults).  On success *out is owned
 * by the caller (arrank_analysis_free).  Samples that cannot be fitted do not
 * fail the call: they get `error` and rank 0.  EDATA (with the first sample's
 * reason and position) when no sample at all could be fitted.  The samples
 * are analysed on worker threads, as many as the machine has CPUs (at most
 * 8; the environment variable ARRANK_THREADS=N sets the number); the results
 * do not depend on it.  The campaign must not change during the call.
 */
arrank_status arrank_analysis_run(const arrank_campaign *campaign, const arrank_options *options,
                                  arrank_analysis **out, arrank_error *err);

void arrank_analysis_free(arrank_analysis *analysis);

/*
 * Why point k of res is no part of its fit because of options.run, in one
 * wording for every output ("run 'cool', not 'heat' (--run)", or "no run
 * label, not 'heat' (--run)"), written into buf (n bytes); NULL when the
 * point belongs to the chosen run or no run was chosen.
 */
const char *arrank_analysis_run_reason(const arrank_analysis *analysis, const arrank_result *res,
                                       size_t k, char *buf, size_t n);

#endif
