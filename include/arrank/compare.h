/*
 * arrank/compare.h - two campaigns sample by sample: fresh against aged,
 * before against after regeneration, rig A against rig B (README "Comparing
 * two campaigns").
 *
 * arrank_compare_run matches the samples of two analyses by id.  Per matched
 * sample: the ratio of the rates at the operating temperature, B over A, and
 * the change in Ea, B minus A, each with its interval at the run's
 * confidence (independent fits: contrast.h, Welch degrees of freedom) and a
 * two-sided test of no change; the verdicts `changed` (the rate) and
 * `ea_changed` are taken after Holm's correction across the compared
 * samples (each quantity its own family), at 1 - confidence.  Ids found in
 * one campaign only are listed as unmatched.  When both analyses were run
 * with one reference catalyst, the rates are first taken relative to each
 * campaign's reference (the rig's drift corrected).
 */
#ifndef ARRANK_COMPARE_H
#define ARRANK_COMPARE_H

#include <stddef.h>
#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/contrast.h"
#include "arrank/error.h"
#include "arrank/units.h"

/* One sample found in both campaigns. */
typedef struct {
    const char *id;            /* borrowed from campaign A */
    size_t result_a, result_b; /* its result in each analysis */
    /* 1 when both were fitted with a rate at T; else why_not says which was
       not (owned) and the numbers below are NAN */
    int compared;
    char *why_not;
    double rate_a, rate_b;     /* rates at T in A's report unit */
    arrank_contrast ln_ratio;  /* ln r_B(T) - ln r_A(T) */
    double ratio, ratio_lo, ratio_hi; /* exp of the above */
    double ratio_measured;     /* r_B(T) / r_A(T) as measured (= ratio without a reference) */
    arrank_contrast ea;        /* Ea_B - Ea_A [J/mol] */
    double p_holm, ea_p_holm;  /* Holm-adjusted p-values */
    int changed, ea_changed;   /* 1: the change is significant after Holm */
} arrank_compare_row;

typedef struct {
    const arrank_analysis *a, *b; /* borrowed; must outlive the comparison */
    double temp_K;                /* the operating temperature both were evaluated at */
    double confidence;
    double b_to_a;                /* factor from B's report unit to A's */
    /* the reference catalyst both analyses were run with (the same id), or
       NULL: the rates compared as measured.  With it, each rate is first
       taken relative to its own campaign's reference, and the ratio B/A is
       (r_B/ref_B) / (r_A/ref_A), its variance the sum of the four (Welch
       over four terms); the reference itself is not compared. */
    const char *reference;
    arrank_compare_row *rows;     /* [n_rows] in A's sample order */
    size_t n_rows;
    size_t n_tests;               /* rows compared: the size of each Holm family */
    size_t n_changed, n_ea_changed;
    const char **only_a, **only_b; /* unmatched ids (borrowed), in each campaign's order */
    size_t n_only_a, n_only_b;
} arrank_comparison;

typedef enum {
    ARRANK_COMPARE_TABLE = 0, /* for people: one row per matched sample, verdicts, unmatched */
    ARRANK_COMPARE_JSON = 1,  /* README "compare JSON" */
    ARRANK_COMPARE_CSV = 2    /* one row per matched sample */
} arrank_compare_format;

/* The functions: arrank/analysis_compare.h (the comparison),
   arrank/compare_out.h (table, JSON, CSV), arrank/plot_compare.h (the
   paired figure).  This header holds the types only. */

#endif
