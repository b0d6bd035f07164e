/*
 * fuzz_sample.c - libFuzzer harness.
 *
 * What it asserts (fuzz_sample_one in fuzz_targets.h): the file is read, read again into
 * another report unit, and fitted; a failure must carry a documented status and a message, a
 * success sane points (T above 0 K and finite, finite rates, rate_sd >= 0, conversion in 0..1,
 * run indices in range, line numbers). A broken rule makes the harness fail the input (it
 * traps, and libFuzzer saves it).
 */
#include "harness.h"

FUZZ_HARNESS(sample)
