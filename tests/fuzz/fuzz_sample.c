/*
 * fuzz_sample.c - libFuzzer harness: fuzz_sample_one (fuzz_targets.h) on each input.
 */
#include "harness.h"

FUZZ_HARNESS(sample)
