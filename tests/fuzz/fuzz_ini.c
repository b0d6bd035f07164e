/*
 * fuzz_ini.c - libFuzzer harness: fuzz_ini_one (fuzz_targets.h) on each input.
 */
#include "harness.h"

FUZZ_HARNESS(ini)
