/*
 * arrank/verdicts.h - the types of one sample's diagnosis: regimes, the
 * curvature tests, transport criteria, run and drift checks, per-point
 * verdicts and the diagnosis that holds them (arrank_diagnosis).
 *
 * Types and constants only: the diagnosis's parts (curvature.c, series.c,
 * quality.c, transport.c), its entry (diagnose.c) and the writers all read
 * and fill these; the functions are in arrank/diagnose.h.
 */
#ifndef ARRANK_VERDICTS_H
#define ARRANK_VERDICTS_H

#include <stddef.h>

/* Influence: Cook's distance above this (common practice in regression
   diagnostics, e.g. Cook & Weisberg 1982, from memory). */
#define ARRANK_COOK_LIMIT 1.0

/* Regime of one point. */
typedef enum {
    ARRANK_REGIME_UNCLASSIFIED = 0, /* evidence too thin to say */
    ARRANK_REGIME_KINETIC = 1,      /* on the kinetic line */
    ARRANK_REGIME_PORE = 2,         /* local apparent Ea near half the kinetic value */
    ARRANK_REGIME_FILM = 3          /* local apparent Ea below the film threshold */
} arrank_regime;

/* Which way the Arrhenius plot (ln r against 1/T) bends. */
typedef enum {
    ARRANK_BEND_NONE = 0, /* no significant bend */
    ARRANK_BEND_DOWN = 1, /* concave-down: slope flattens at the hot end */
    ARRANK_BEND_UP = 2    /* concave-up: slope steepens at the hot end */
} arrank_bend;

/* Apparent Ea fitted over a window of neighbouring temperatures. */
typedef struct {
    double temp_lo_K, temp_hi_K; /* coldest and hottest temperature in the window */
    double temp_mid_K;           /* 1 / mean of 1/T over the window's points */
    size_t n_points;
    double ea_J_mol, ea_se_J_mol;
    /* two-sided interval at the run's confidence, t on the window's n - 2
       degrees of freedom; NAN when the window has no standard error */
    double ea_lo_J_mol, ea_hi_J_mol;
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

/* A dimensionless transport criterion (Weisz-Prater, Mears; the heat
   criteria of Mears and Anderson). */
typedef struct {
    int computed;          /* 0: metadata missing or unusable; see detail */
    double value;          /* the number */
    double threshold;      /* limit below which the transport effect is negligible */
    const char *source;    /* where the threshold comes from (static string) */
    double temp_K;         /* temperature of the observed rate used: the hottest point
                              (Weisz-Prater, Mears), the used point with the largest
                              value (the heat criteria) */
    int passes;            /* 1: value < threshold */
    char *detail;          /* inputs used, or why it was not computed (NULL: no transport
                              or heat metadata given, nothing to say) */
} arrank_criterion;

/* Prater's bound on the temperature difference between a pellet's centre
   and its surface (Prater, Chem. Eng. Sci. 8:284, 1958). */
typedef struct {
    int computed;          /* 0: metadata missing or unusable; see detail */
    double rise_K;         /* (-dH) D_e C_s / lambda_e: centre at most this much hotter
                              (colder when negative: endothermic) than the surface */
    double beta;           /* rise_K / T_s, T_s = temp_K */
    double temp_K;         /* surface temperature taken: the hottest used point */
    const char *source;    /* static string */
    char *detail;          /* inputs used, or what is missing; NULL: nothing to say */
} arrank_prater;

/* An exothermic reaction run above the differential conversion limit. */
typedef struct {
    double enthalpy_J_mol;   /* reaction_enthalpy (negative: exothermic); NAN if not given */
    double conversion_max;   /* highest conversion of a usable point (fraction); NAN if none */
    double temp_K;           /* temperature of that point; NAN if none */
    long line;               /* its line in the file; 0 if none */
    int source;              /* its file (arrank_point.source: a merged sample's) */
    int caution;             /* 1: exothermic and some point above the conversion limit */
    double adiabatic_rise_K; /* (-dH) y_A0 X_max / c_p of the feed; NAN when not computed */
    char *detail;            /* inputs of the adiabatic rise, or the entries it needs;
                                NULL when there is no caution */
} arrank_hot_spot;

/* The heat checks of one sample (transport.c). */
typedef struct {
    arrank_criterion interphase;    /* Mears (1971) interphase heat criterion */
    arrank_criterion intraparticle; /* Anderson (1963) intraparticle heat criterion */
    arrank_prater prater;
    arrank_hot_spot hot_spot;
} arrank_heat_checks;

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
    /* The whole drift fit, ln r = ln_rate_ref + temp_slope_K (1/T - 1/temp_ref_K)
       + slope_ln_per_h t (t in hours on stream), for the figure of rate against
       time on stream (plot_stream.c); NAN when not tested. */
    size_t n_points;          /* points of the test (usable, with a time on stream) */
    double temp_ref_K;        /* 1 / weighted mean of 1/T over those points */
    double temp_slope_K;      /* d ln r / d(1/T) at fixed time (-Ea/R of this fit) */
    double ln_rate_ref;       /* ln r at temp_ref_K and time 0 (report unit) */
    double ln_rate_ref_var;   /* its variance */
    double cov_ref_slope;     /* covariance of ln_rate_ref and slope_ln_per_h */
    double time_min_h, time_max_h; /* the times on stream of the points */
    double t_quantile;        /* two-sided t at the diagnosis's confidence on dof */
} arrank_drift;

/*
 * A sample measured at one temperature with times on stream (a stability
 * hold): no Arrhenius fit is possible, but the drift of its rate with time
 * is, ln r = ln_rate_ref + slope_ln_per_h t (t in hours) over its usable
 * points, weighted as the fits are, the covariance scaled by the scatter.
 * The fit sits in arrank_drift's fields (temp_ref_K the temperature,
 * temp_slope_K 0, dof n - 2), with the same verdict rule as a drift.
 */
typedef struct arrank_hold {
    arrank_drift drift;
    double change_lo, change_hi; /* exp((slope -/+ t se) span) - 1 at the confidence */
    int problem;                 /* 1: the words are a problem (a verdict), 0: a note */
    char *words;                 /* the hold in plain words */
} arrank_hold;

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
    double ea_all_dof; /* degrees of freedom of that fit on every point */
    int window_applied;        /* 1 when points were left out for the kinetic window */
    double window_lo_K, window_hi_K; /* kinetic window; NAN if none */
    size_t window_n;
    arrank_criterion weisz_prater, mears;
    arrank_heat_checks heat;   /* heat criteria, Prater's rise, the hot-spot caution */
    double conversion_limit;
    size_t n_high_conversion;
    arrank_run_shift *runs;    /* [n_runs] each later run against the first */
    size_t n_runs;
    arrank_drift drift;
    size_t n_outliers;
    double outlier_t_limit;    /* Bonferroni critical |t| used */
    int mixed_basis;
    /* what arrank_diagnose_propose leaves for arrank_diagnose_conclude */
    double ea_window_J_mol;    /* Ea of the line through the proposed window; NAN if none */
    double scatter_ln;         /* residual SD of ln r about the line on every point
                                  (unweighted fits); NAN when weighted or unknown */
    int has_repeats;           /* runs, repeat passes or a drift test: deactivation testable */
    int window_proposed;       /* 1 when the proposed window leaves hot points out */
    size_t *order;             /* [n_order] the usable points of the first fit (file
                                  indices), coldest first */
    size_t n_order;
    char **findings;           /* plain-words problems, each with its evidence */
    size_t n_findings;
    char **notes;              /* plain-words statements that are not problems */
    size_t n_notes;
};
typedef struct arrank_diagnosis arrank_diagnosis;

#endif
