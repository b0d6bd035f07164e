/*
 * fuzz_temperature.c - libFuzzer harness: fuzz_temperature_one (fuzz_targets.h) on each input.
 */
#include "harness.h"

FUZZ_HARNESS(temperature)
