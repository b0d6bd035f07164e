/*
 * arrank/diagnose.h - what is wrong with a sample's data, and which part of it
 * is kinetics.
 *
 * After the first Arrhenius fit of a sample, the diagnostics
 *  - test the Arrhenius plot for curvature three ways (a quadratic term in
 *    1/T, a series-resistance model with a transport conductance, and the
 *    local apparent activation energy over sliding windows), say which way it
 *    bends and name the likely causes with the evidence for each;
 *  - classify each point as kinetic, pore-diffusion-like, film-diffusion-like
 *    or unclassified, find the kinetic window and refit on it (unless
 *    options.use_all), recording every point left out and why;
 *  - compute the Weisz-Prater and Mears numbers when the sample's metadata
 *    give the particle and transport data;
 *  - check data quality: conversion above the differential limit, shifts
 *    between runs and repeats (deactivation or activation), drift with time on
 *    stream, outliers (externally studentized residuals, Cook's distance) and
 *    mixed normalisation bases across the campaign.
 * Every conclusion is also written out as a plain-words finding.
 *
 * Curvature that is not significant is reported as "not detected", never as
 * absent: with few points or much scatter only strong bending can be seen.
 */
#ifndef ARRANK_DIAGNOSE_H
#define ARRANK_DIAGNOSE_H

#include <stddef.h>
#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/campaign.h"
#include "arrank/error.h"

/* Regime of one point. */
typedef enum {
    ARRANK_REGIME_UNCLASSIFIED = 0, /* evidence too thin to say */
    ARRANK_REGIME_KINETIC = 1,      /* on the kinetic line */
    ARRANK_REGIME_PORE = 2,         /* local apparent Ea near half the kinetic value */
    ARRANK_REGIME_FILM = 3          /* local apparent Ea below the film threshold */
} arrank_regime;

/* "unclassified", "kinetic", "pore_diffusion", "film_diffusion". */
const char *arrank_regime_name(arrank_regime regime);

/* Which way the Arrhenius plot (ln r against 1/T) bends. */
typedef enum {
    ARRANK_BEND_NONE = 0, /* no significant bend */
    ARRANK_BEND_DOWN = 1, /* concave-down: slope flattens at the hot end */
    ARRANK_BEND_UP = 2    /* concave-up: slope steepens at the hot end */
} arrank_bend;

/* "none", "concave-down", "concave-up". */
const char *arrank_bend_name(arrank_bend bend);

/* Apparent Ea fitted over a window of neighbouring temperatures. */
typedef struct {
    double temp_lo_K, temp_hi_K; /* coldest and hottest temperature in the window */
    double temp_mid_K;           /* 1 / mean of 1/T over the window's points */
    size_t n_points;
    double ea_J_mol, ea_se_J_mol;
} arrank_local_ea;

/* A possible cause of the bend. */
typedef struct {
    char *cause;    /* plain words, e.g. "pore diffusion" */
    char *evidence; /* plain words: what in the data points to it, or what would test it */
    int supported;  /* 1: the data show it; 0: possible but not testable with these data */
} arrank_cause;

typedef struct {
    int tested;            /* 0: too few points or temperatures to test */
    size_t n;              /* points tested */
    double level;          /* significance level of the tests */
    int detected;          /* 1: the quadratic term is significant at `level` */
    arrank_bend direction; /* NONE unless detected */
    /* ln r = a + b (x - xm) + c (x - xm)^2, x = 1/T, xm = weighted mean of x */
    double quad_c_K2, quad_c_se_K2, quad_t, quad_p, quad_dof;
    double ea_cold_J_mol, ea_hot_J_mol; /* quadratic's -R dln r/dx at the coldest/hottest T */
    /* 1/r = 1/(k_ref exp(-Ea/R (1/T - 1/T_ref))) + 1/(k_t (T/T_ref)^m) */
    int series_fitted;            /* 1 when the nonlinear fit gave a finite conductance */
    double series_m;              /* fixed exponent of the transport conductance */
    double series_T_ref_K;
    double series_ea_J_mol, series_ea_se_J_mol; /* NAN when not fitted */
    double series_ln_kt;          /* ln k_t at T_ref, k_t in the report unit; NAN if none */
    double rss_line, rss_series;  /* weighted residual sums of squares in ln r */
    double series_F, series_p;    /* extra-sum-of-squares F test, F(1, n-3) */
    double aicc_line, aicc_series; /* NAN when n is too small for AICc */
    arrank_local_ea *local;       /* [n_local] cold to hot */
    size_t n_local;
    arrank_cause *causes; /* [n_causes] most supported first */
    size_t n_causes;
} arrank_curvature;

/* A dimensionless transport criterion (Weisz-Prater, Mears). */
typedef struct {
    int computed;          /* 0: metadata missing or unusable; see detail */
    double value;          /* the number */
    double threshold;      /* limit below which the transport effect is negligible */
    const char *source;    /* where the threshold comes from (static string) */
    double temp_K;         /* temperature of the observed rate used (the hottest point) */
    int passes;            /* 1: value < threshold */
    char *detail;          /* inputs used, or why it was not computed */
} arrank_criterion;

/* Comparison of one run (or repeat pass) with the first. */
typedef struct {
    char *label_ref, *label; /* run labels, or "pass 1", "pass 2" for repeats */
    const char *method;      /* "paired" (3 or more common set points) or "reference line"
                                (the run's points against the line through the first run) */
    size_t n_pairs;          /* common set points (paired), else the run's points */
    double shift_ln, shift_ln_se, dof, t, p;
    double change;           /* exp(shift_ln) - 1: relative change of the later run */
    int verdict;             /* -1 deactivation, +1 activation, 0 none */
} arrank_run_shift;

/* Drift of the rate with time on stream at fixed temperature dependence. */
typedef struct {
    int tested;               /* 0: no usable time_on_stream, or time ~ temperature */
    double slope_ln_per_h, slope_se, t, p, dof;
    double span_h;
    double change;            /* exp(slope * span) - 1 */
    int verdict;              /* -1 deactivation, +1 activation, 0 none */
    char *note;               /* why not tested, or NULL */
} arrank_drift;

/* Per point, in file order. */
typedef struct {
    arrank_regime regime;
    double local_ea_J_mol;   /* local Ea of the window centred on the point; NAN if none */
    int excluded;            /* 1: left out of the final fit */
    char *reason;            /* why it was left out, NULL when used */
    int high_conversion;     /* conversion above the limit */
    double student_resid;    /* externally studentized residual; NAN when not in the fit */
    double cooks_d;          /* Cook's distance; NAN when not in the fit */
    int outlier;
} arrank_point_diag;

struct arrank_diagnosis {
    size_t n_points;
    arrank_point_diag *points; /* [n_points], file order */
    arrank_curvature curvature;
    /* fit on every usable point, before the kinetic window */
    double ea_all_J_mol, ea_all_se_J_mol;
    int window_applied;        /* 1 when points were left out for the kinetic window */
    double window_lo_K, window_hi_K; /* kinetic window; NAN if none */
    size_t window_n;
    arrank_criterion weisz_prater, mears;
    double conversion_limit;
    size_t n_high_conversion;
    arrank_run_shift *runs;    /* [n_runs] each later run against the first */
    size_t n_runs;
    arrank_drift drift;
    size_t n_outliers;
    double outlier_t_limit;    /* Bonferroni critical |t| used */
    int mixed_basis;
    char **findings;           /* plain-words problems, each with its evidence */
    size_t n_findings;
    char **notes;              /* plain-words statements that are not problems */
    size_t n_notes;
};
typedef struct arrank_diagnosis arrank_diagnosis;

/*
 * Diagnose one fitted sample.  res must hold a successful first fit of every
 * point (res->error == NULL); c is the campaign the sample belongs to (for
 * the mixed-basis check; may be NULL); opt may be NULL (defaults).
 * Sets res->diagnosis (owned by res; free with arrank_diagnosis_free), adds
 * ARRANK_FLAG_* bits to res->flags and, unless opt->use_all, leaves the
 * kinetic window in res->used and refits on it (high-conversion points and,
 * with opt->drop_outliers, outliers are also left out).  A refit that turns
 * out impossible restores every point.  Only ENOMEM is returned as a failure;
 * everything the data show goes into the diagnosis.
 */
arrank_status arrank_diagnose_result(arrank_result *res, const arrank_campaign *c,
                                     const arrank_options *opt, arrank_error *err);

void arrank_diagnosis_free(arrank_diagnosis *diagnosis);

/*
 * Plain-words account of one result for people: a header line naming the
 * sample and the number of problems, each problem with its evidence (the
 * diagnosis's findings and the analysis's own flags: few points, narrow
 * range, low Ea, poor fit, extrapolation), every point left out of the fit
 * with its reason, then the notes.  An unfitted sample gets one line with
 * its reason.  EIO when the stream fails.
 */
arrank_status arrank_diagnosis_write_text(FILE *stream, const arrank_result *res,
                                          arrank_error *err);

/*
 * Weisz-Prater observable, Phi = r_v R_p^2 / (D_e C_s) (Weisz & Prater,
 * Adv. Catal. 6:143, 1954): r_v rate per particle volume, mol/(m3 s); R_p
 * particle radius, m; D_e effective diffusivity, m2/s; C_s surface
 * concentration, mol/m3.  NAN unless every input is finite and positive.
 */
double arrank_diagnose_weisz_prater(double rate_mol_m3_s, double radius_m, double diff_m2_s,
                                    double conc_mol_m3);

/*
 * Mears number for external mass transfer, r_v R_p n / (k_c C_b) (Mears,
 * Ind. Eng. Chem. Process Des. Dev. 10:541, 1971, as tabulated by Madon &
 * Boudart, Ind. Eng. Chem. Fundam. 21:438, 1982): n reaction order, k_c film
 * coefficient, m/s; C_b bulk concentration, mol/m3.  NAN on bad input.
 */
double arrank_diagnose_mears(double rate_mol_m3_s, double radius_m, double order,
                             double film_m_s, double conc_mol_m3);

/*
 * 1 when sample s (one of c's samples) takes part in a mix of normalisation
 * bases: the campaign's samples differ in rate basis or in their declared
 * `# basis = ...`, or s's declared basis disagrees with its rate unit.  When
 * why is not NULL it receives plain words (NUL-terminated, truncated to n).
 */
int arrank_diagnose_basis(const arrank_campaign *c, const arrank_sample *s, char *why, size_t n);

/*
 * 1 when the campaign's samples differ in rate basis or declared basis, with
 * why naming the first sample and one that differs from it.  One pass over
 * the samples (arrank_diagnose_basis for every sample would be quadratic).
 */
int arrank_diagnose_campaign_basis(const arrank_campaign *c, char *why, size_t n);

#endif
