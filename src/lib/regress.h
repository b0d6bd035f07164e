/*
 * regress.h - the diagnosis's regressions of y = ln r on x = 1/T over a
 * subset idx[0..n) of one sample's points (the arrays of arrank_dwork), and
 * the points' temperature order and set-point groups.  Inside the library.
 */
#ifndef ARRANK_REGRESS_H
#define ARRANK_REGRESS_H

#include <stddef.h>

#include "arrank/campaign.h"
#include "verdict_work.h"

/* Centre and scale of x over a set. */
typedef struct {
    double xm, sx, sxx; /* weighted mean, spread and sum of squares of x */
} arrank_xscale;

/* Straight line over idx: Ea, its se, slope b1 in K, rss, dof; cov of the
   intercept and slope in the scaled terms z = (x - xm) / sx. */
typedef struct {
    arrank_xscale sc;
    double b0, b1_K, ea_J_mol, ea_se_J_mol, rss, dof, s2;
    double cov[4];
} arrank_line;

/* Sort idx[0..n) by temperature, ties by file order. */
void arrank_regress_sort(const arrank_point *pts, size_t *idx, size_t n);

/* Group ids of idx[0..n) (sorted by T): a new group when T moves on by more
   than 2 K from the group's first point.  Returns the group count. */
size_t arrank_regress_groups(const arrank_point *pts, const size_t *idx, size_t n, size_t *group);

/* Number of set points (groups) in idx[0..n), sorted or not. */
size_t arrank_regress_count_temps(const arrank_point *pts, const size_t *idx, size_t n);

/* Weighted centre and spread of x over idx; 0, or -1 when there is none. */
int arrank_regress_scale(const arrank_dwork *wk, const size_t *idx, size_t n, arrank_xscale *sc);

/* Weighted fit of y on [1, z, z^2 (quad), extra] by QR, z = (x - xm)/sx;
   extra (may be NULL) is one more column, indexed like idx.  b[p], cov[p*p]
   (scaled by rss/(n - p)), *rss.  Returns p, or 0 when impossible. */
int arrank_regress_design(const arrank_dwork *wk, const size_t *idx, size_t n,
                          const arrank_xscale *sc, int quad, const double *extra, double *b,
                          double *cov, double *rss);

/* The straight line over idx (closed form; QR under arrank_regress_reference).
   0, or -1 when it cannot be fitted. */
int arrank_regress_line(const arrank_dwork *wk, const size_t *idx, size_t n, arrank_line *lf);

/* The line's ln r at x = 1/T. */
double arrank_regress_line_at(const arrank_line *lf, double x);

/* The quadratic y on [1, z, z^2] over idx with scale sc (closed form, QR for
   ill-conditioned sets and under arrank_regress_reference).  3, or 0 when
   impossible. */
int arrank_regress_quad(const arrank_dwork *wk, const size_t *idx, size_t n,
                        const arrank_xscale *sc, double b[3], double cov[9], double *rss);

#endif
