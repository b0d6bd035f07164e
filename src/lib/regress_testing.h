/*
 * regress_testing.h - the test switch of regress.c's fast path.
 */
#ifndef ARRANK_REGRESS_TESTING_H
#define ARRANK_REGRESS_TESTING_H

/* 0 (the default): the diagnostics fit straight lines and the quadratic
   test in closed form; 1: by the general QR path.  For the test that
   compares the two (tests/test_diagnose.c); not thread-safe. */
void arrank_regress_reference(int on);

#endif
