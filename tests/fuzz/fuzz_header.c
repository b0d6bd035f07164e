/*
 * fuzz_header.c - libFuzzer harness: fuzz_header_one (fuzz_targets.h) on each input.
 */
#include "harness.h"

FUZZ_HARNESS(header)
