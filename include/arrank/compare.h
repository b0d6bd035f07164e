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
 * one campaign only are listed as unmatched.
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
    arrank_contrast ea;        /* Ea_B - Ea_A [J/mol] */
    double p_holm, ea_p_holm;  /* Holm-adjusted p-values */
    int changed, ea_changed;   /* 1: the change is significant after Holm */
} arrank_compare_row;

typedef struct {
    const arrank_analysis *a, *b; /* borrowed; must outlive the comparison */
    double temp_K;                /* the operating temperature both were evaluated at */
    double confidence;
    double b_to_a;                /* factor from B's report unit to A's */
    arrank_compare_row *rows;     /* [n_rows] in A's sample order */
    size_t n_rows;
    size_t n_tests;               /* rows compared: the size of each Holm family */
    size_t n_changed, n_ea_changed;
    const char **only_a, **only_b; /* unmatched ids (borrowed), in each campaign's order */
    size_t n_only_a, n_only_b;
} arrank_comparison;

/*
 * Compare b against a.  Both analyses must have the same operating
 * temperature (EINVAL otherwise, or when it is missing) and confidence; their
 * report units must convert (units: the unit database; EDATA for rates of
 * different dimensions).  A campaign with two samples of one id cannot be
 * matched (EDATA).  *out is owned by the caller (arrank_compare_free).
 */
arrank_status arrank_compare_run(const arrank_analysis *a, const arrank_analysis *b,
                                 arrank_units *units, arrank_comparison **out,
                                 arrank_error *err);

void arrank_compare_free(arrank_comparison *comparison);

/* The writers (compare_out.c). */
typedef enum {
    ARRANK_COMPARE_TABLE = 0, /* for people: one row per matched sample, verdicts, unmatched */
    ARRANK_COMPARE_JSON = 1,  /* README "compare JSON" */
    ARRANK_COMPARE_CSV = 2    /* one row per matched sample */
} arrank_compare_format;

arrank_status arrank_compare_write(const arrank_comparison *comparison,
                                   arrank_compare_format format, FILE *stream,
                                   arrank_error *err);

/*
 * The paired figure (plot_compare.c): one line per compared sample from its
 * rate at T in A to its rate in B, on a log rate axis, with both intervals;
 * the changed ones drawn solid, the others dashed.  Written as
 * DIR/compare.EXT for each format (ARRANK_PLOT_* of arrank/plot.h; 0: SVG)
 * through gnuplot (program NULL: ARRANK_GNUPLOT, else PATH).  ENOGNUPLOT,
 * EPLOT, EIO.
 */
arrank_status arrank_compare_plot(const arrank_comparison *comparison, const char *dir,
                                  unsigned formats, const char *program, arrank_error *err);

/* The gnuplot script of that figure, for tests (no gnuplot needed). */
arrank_status arrank_compare_plot_script(const arrank_comparison *comparison, unsigned formats,
                                         FILE *stream, arrank_error *err);

#endif
