/*
 * arrank/analysis_plan.h - the plan of a campaign's next runs, from its
 * analysis (analysis.h): which samples, at which temperatures, how many
 * repeats.  The statistics are in arrank/plan.h; this is the pipeline's
 * part: which samples take part, the candidate temperatures, the naive plan
 * to compare with, and the plan's numbers.
 */
#ifndef ARRANK_ANALYSIS_PLAN_H
#define ARRANK_ANALYSIS_PLAN_H

#include <stddef.h>

#include "arrank/analysis.h"
#include "arrank/error.h"
#include "arrank/plan.h"

typedef struct {
    arrank_plan_goal goal;  /* default separate */
    size_t budget;          /* new runs to spend, default 12 */
    double max_temp_K;      /* the reactor's or the safety limit; required (NAN: refused) */
    double step_K;          /* candidate grid step, default 5 K, anchored at the operating T */
    double reach_K;         /* how far past a sample's kinetic window, default 10 K */
    double target;          /* separate: P(best) of the leader that also settles it, 0.95 */
    double width;           /* precision: relative half width, default 0.05 (+-5 %) */
    size_t sims;            /* preposterior simulations, default 2000 */
    /* curvature: the bend to make detectable, as the fall of the apparent Ea
       (J/mol) across each sample's allowed window; required (NAN: refused) */
    double bend_J_mol;
    /* precision, curvature: the ids of the samples to plan for; NULL: the
       leader's group */
    const char *const *samples;
    size_t n_samples;
} arrank_plan_options;

/* The defaults above. */
arrank_plan_options arrank_analysis_plan_defaults(void);

/*
 * Plan the next runs of an analysis ranked by rate at an operating
 * temperature.  Involved samples: for separate, the leader's group (group 1);
 * for precision and curvature, the named samples or that group.  Curvature:
 * each sample's bend is bend_J_mol across its allowed window (below), tested
 * as the diagnosis tests it (the quadratic term at level 0.02).  Candidates per involved
 * sample: temperatures T_op + k step inside its kinetic window (the
 * diagnosis's, else its fitted range) widened by reach on each side, never
 * above max_temp_K and never at or above its coldest point flagged
 * transport-limited (pore or film regime) or left out of the fit hotter
 * than the window (where the bend begins, conversion above the limit).  The seed is the analysis's
 * (options.seed).  On success *out is owned by the caller (arrank_plan_free).
 * EINVAL for a bad option, an analysis not ranked by rate, no limit, an
 * unknown sample id; EDATA when an involved sample cannot be planned for.
 */
arrank_status arrank_analysis_plan(const arrank_analysis *analysis,
                                   const arrank_plan_options *options, arrank_plan **out,
                                   arrank_error *err);

#endif
