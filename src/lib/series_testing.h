/*
 * series_testing.h - the test switches of series.c's fast paths.
 */
#ifndef ARRANK_SERIES_TESTING_H
#define ARRANK_SERIES_TESTING_H

/* 0 (the default): the profile over ln k_t fits b0, b1 at each grid point
   with series.c's own 2x2 solver, and the full fit from its best point
   uses the own 3x3 solver; 1: both with arrank_nlfit_run, as before those
   solvers, to compare the two.  For tests only; not thread-safe. */
void arrank_series_reference(int on);

/* 1 (the default): the profile's best point starts the full three-parameter
   fit, which gives the reported numbers; 0: the fit is skipped and the
   profile's best point is reported, as when that fit fails, so that a test
   sees the profile itself.  For tests only; not thread-safe. */
void arrank_series_full_fit(int on);

#endif
