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
 *    or unclassified, find the kinetic window and propose leaving the rest
 *    out (unless use_all), with the reason for every point;
 *  - compute the Weisz-Prater and Mears numbers when the sample's metadata
 *    give the particle and transport data;
 *  - check data quality: conversion above the differential limit, shifts
 *    between runs and repeats (deactivation or activation), drift with time on
 *    stream, outliers (externally studentized residuals, Cook's distance) and
 *    mixed normalisation bases across the campaign.
 * Every conclusion is also written out as a plain-words finding.  The
 * diagnosis reads the sample and its fit and returns verdicts; the pipeline
 * (analysis.c) applies its proposed exclusions, refits and sets the flags,
 * and the writers (diagnosis_out.h) turn it into JSON and text.
 *
 * Curvature that is not significant is reported as "not detected", never as
 * absent: with few points or much scatter only strong bending can be seen.
 */
#ifndef ARRANK_DIAGNOSE_H
#define ARRANK_DIAGNOSE_H

#include <stddef.h>

#include "arrank/campaign.h"
#include "arrank/error.h"
#include "arrank/fit.h"
#include "arrank/units.h"
#include "arrank/verdicts.h"

/* "unclassified", "kinetic", "pore_diffusion", "film_diffusion". */
const char *arrank_regime_name(arrank_regime regime);

/* "none", "concave-down", "concave-up". */
const char *arrank_bend_name(arrank_bend bend);

/* The campaign's basis verdict, computed once per campaign by the caller
   (arrank_diagnose_campaign_basis). */
typedef struct {
    int known; /* 1 when mixed and why are filled */
    int mixed;
    char why[256];
} arrank_campaign_basis;

/* What the diagnosis needs to know beyond the sample and its fit. */
typedef struct {
    int use_all;              /* 1: propose no kinetic window and no conversion exclusions */
    int drop_outliers;        /* 1: propose flagged outliers for exclusion */
    double conversion_limit;  /* differential-reactor limit, fraction; outside (0, 1): 0.10 */
    arrank_units *units;      /* unit database for metadata quantities, borrowed; NULL: the
                                 transport criteria are skipped with units_why */
    const char *units_why;    /* why units is NULL (plain words); NULL: "no unit database" */
    const char *rate_unit;    /* unit of the sample's rates (the campaign's report unit);
                                 NULL: the sample's own */
    arrank_campaign_basis basis; /* the campaign's verdict; known 0: the sample's own check only */
    double confidence;        /* two-sided level of the intervals it gives (default 0.95) */
} arrank_diagnose_options;

/* Defaults: every option off, conversion limit 0.10, no units, basis unknown. */
arrank_diagnose_options arrank_diagnose_options_defaults(void);

/* One sample and its first fit. */
typedef struct {
    const arrank_sample *sample;
    const arrank_arrhenius *fit; /* the fit on the points marked in used */
    const unsigned char *used;   /* [sample->n_points]: 1 for each point in that fit */
} arrank_diagnose_input;

/*
 * The diagnosis in two calls around the caller's refit (the pipeline,
 * analysis_diagnose.c, drives it):
 *  1. arrank_diagnose_propose: conversion, curvature (quadratic test,
 *     series-resistance model, local apparent Ea), runs and repeats, drift,
 *     the kinetic window, regimes and outliers.  *out (free with
 *     arrank_diagnosis_free) holds the verdicts and, in points[i].excluded
 *     and points[i].reason, the points it proposes to leave out and why
 *     (hotter than the window and above the conversion limit unless
 *     opt->use_all, outliers with opt->drop_outliers).
 *  2. the caller leaves those points out and refits; when that refit is
 *     impossible it calls arrank_diagnose_withdraw and refits on every point.
 *  3. arrank_diagnose_conclude with the final fit: the window's bounds,
 *     transport criteria, the mixed-basis check, causes of a bend, and every
 *     conclusion in plain words (findings and notes).
 * None of them refits, sets flags or writes anything.  Only ENOMEM is
 * returned as a failure; everything the data show goes into the diagnosis.
 */
arrank_status arrank_diagnose_propose(const arrank_diagnose_input *in,
                                      const arrank_diagnose_options *opt,
                                      arrank_diagnosis **out, arrank_error *err);

/* The refit without the proposed points was impossible (fit_error says
   why): every proposal is withdrawn, with a note.  ENOMEM only. */
arrank_status arrank_diagnose_withdraw(arrank_diagnosis *d, const char *fit_error,
                                       arrank_error *err);

/* Step 3.  in is the input of arrank_diagnose_propose; final_fit the fit on
   the points left (NULL when there is none); window_applied 1 when the
   proposed window was applied by that fit.  ENOMEM only. */
arrank_status arrank_diagnose_conclude(arrank_diagnosis *d, const arrank_diagnose_input *in,
                                       const arrank_arrhenius *final_fit, int window_applied,
                                       const arrank_diagnose_options *opt, arrank_error *err);

void arrank_diagnosis_free(arrank_diagnosis *diagnosis);

/*
 * A sample whose usable points all lie at one temperature, with a time on
 * stream on at least five of them (a stability hold): the drift of its rate
 * with time and its words (arrank_hold, verdicts.h), intervals at
 * `confidence`.  *out is NULL for any other sample.  ENOMEM only.
 */
arrank_status arrank_diagnose_hold(const arrank_sample *s, double confidence, arrank_hold **out,
                                   arrank_error *err);
void arrank_hold_free(arrank_hold *hold);

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
