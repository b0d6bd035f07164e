/*
 * curvature.h - the quadratic test for a bend of the Arrhenius plot and the
 * local apparent Ea (curvature.c).  Inside the library.
 */
#ifndef ARRANK_CURVATURE_H
#define ARRANK_CURVATURE_H

#include <stddef.h>

#include "arrank/verdicts.h"
#include "verdict_work.h"

/* Level of the curvature test (two-sided).  2 %: low enough that the
   false-alarm rate stays well under the 5 % the project asks for (of 200
   straight data sets, more than 10 would be flagged with probability about
   0.3 %, binomial), high enough for useful power with 8-10 points (our
   choice; tests/test_diagnose.c measures both).  Power is low with few
   points: a bend that is not detected is not shown to be absent. */
#define ARRANK_CURVE_LEVEL 0.02
/* The quadratic test needs dof >= 2 and four distinct temperatures to mean
   anything (common practice: three parameters plus scatter). */
#define ARRANK_CURVE_MIN_POINTS 5
#define ARRANK_CURVE_MIN_TEMPS 4

/* The quadratic test over a set: ln r = a + b (x - xm) + c (x - xm)^2. */
typedef struct {
    double c_K2, c_se_K2, t, p, dof, ea_cold, ea_hot;
} arrank_quad_test;

/* The test over idx[0..n) (sorted by T).  0, or -1 when the set is too
   small (fewer than ARRANK_CURVE_MIN_POINTS points or ARRANK_CURVE_MIN_TEMPS
   set points) or the fit impossible. */
int arrank_curvature_quad(const arrank_dwork *wk, const size_t *idx, size_t n,
                          arrank_quad_test *q);

/* 1 when the test finds a downward bend at ARRANK_CURVE_LEVEL. */
int arrank_curvature_bends_down(const arrank_quad_test *q);

/* cv->local: the apparent Ea over each window of three neighbouring set
   points of idx[0..n) (sorted by T, groups g, n_groups of them).  Sets
   wk->nomem when out of memory. */
void arrank_curvature_local(arrank_dwork *wk, const size_t *idx, const size_t *g, size_t n,
                            size_t n_groups, arrank_curvature *cv);

/* The local window that belongs to set point gi. */
size_t arrank_curvature_window_of(size_t gi, size_t n_groups);

#endif
