/*
 * sample_testing.h - test switch of the sample reader (sample.c), for
 * tests/test_reader_paths.c only.
 */
#ifndef ARRANK_SAMPLE_TESTING_H
#define ARRANK_SAMPLE_TESTING_H

/* 1 (the default): data lines without a quote character are split directly
   instead of through libcsv, with the same result; 0: every line goes through
   libcsv.  For tests that compare the two readings; not thread-safe. */
void arrank_sample_plain_lines(int on);

#endif
