/*
 * series.h - the series-resistance model of a bent Arrhenius plot
 * (series.c).  Inside the library.
 */
#ifndef ARRANK_SERIES_H
#define ARRANK_SERIES_H

#include <stddef.h>

#include "arrank/verdicts.h"
#include "regress.h"
#include "verdict_work.h"

/* Exponent of the transport conductance k_t (T/T_ref)^m.  Gas film: k_c ~
   D^(2/3) and D ~ T^1.5-1.75 give m of about 1-1.2 (DOMAIN notes, after
   Adiabatic Fixed-Bed Reactors, sec. 2.6); over a 50-100 K span m cannot be
   fitted beside Ea, so it is fixed. */
#define ARRANK_SERIES_M 1.0

/* Fit the model over idx[0..n) against the straight line lf through the
   same points and fill cv's series_* fields, rss_line, rss_series, the F
   test and AICc.  Sets wk->nomem when out of memory. */
void arrank_series_fit(arrank_dwork *wk, const size_t *idx, size_t n, const arrank_line *lf,
                       arrank_curvature *cv);

#endif
