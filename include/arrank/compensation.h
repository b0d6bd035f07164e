/*
 * arrank/compensation.h - the compensation analysis across ranked samples:
 * does ln A rise with Ea, where would the lines cross, and is that line an
 * artifact of correlated estimation errors?
 */
#ifndef ARRANK_COMPENSATION_H
#define ARRANK_COMPENSATION_H

#include <stddef.h>

#include "arrank/error.h"
#include "arrank/fit.h"

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
    /* Krug et al.: least squares of ln r(T_hm) on Ea.  Descriptive only: its
       errors are uncorrelated with Ea's only for a sample centred at T_hm, so
       with staggered windows its p is too small (README "Ranking statistics") */
    double hm_slope_mol_J, hm_slope_se_mol_J, hm_p;
    /* The test the verdict uses: each sample's ln r at its own centring
       temperature T_ref (b0, whose error is uncorrelated with Ea's by the
       centring) on (1, 1/T_hm - 1/T_ref, Ea) by least squares; own_slope is
       the coefficient of Ea, d ln r(T_hm)/d Ea along the samples, with a
       heteroscedasticity-consistent (HC3) standard error and a t test with
       own_dof = n - 3 (n - 2 when every T_ref is the same) */
    double own_slope_mol_J, own_slope_se_mol_J, own_p, own_dof;
    /* Exner: ln r(T2) on ln r(T1); T1, T2 span the common measured range */
    double exner_T1_K, exner_T2_K;
    double exner_slope, exner_slope_se;
    double exner_T_iso_K;       /* T1 T2 (b - 1)/(b T2 - T1); NAN if b = 1 */
    double confidence;
    char sentence[768];         /* the verdict in plain words */
} arrank_compensation;

/*
 * The compensation analysis on n samples: Arrhenius fits in any order and
 * T_hm_K, the harmonic mean of the experimental temperatures (computed by the
 * caller from the points in the fits).  confidence for the T_iso interval and
 * the significance tests.  Fills *out (verdict TOO_FEW below ARRANK_COMP_MIN
 * samples).  EINVAL for a confidence outside (0, 1); ENOMEM.
 */
arrank_status arrank_compensation_run(const arrank_arrhenius *const *fits, size_t n,
                                      double T_hm_K, double confidence,
                                      arrank_compensation *out, arrank_error *err);

/* Words of a verdict: "consistent with a statistical artifact", ... */
const char *arrank_compensation_words(arrank_comp_verdict verdict);

#endif
