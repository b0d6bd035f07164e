/*
 * fuzz_temperature.c - libFuzzer harness.
 *
 * What it asserts (fuzz_temperature_one in fuzz_targets.h): the text is parsed as an --at
 * temperature; a failure must carry a documented status and a message, a success a finite
 * temperature above 0 K. A broken rule makes the harness fail the input (it traps, and
 * libFuzzer saves it).
 */
#include "harness.h"

FUZZ_HARNESS(temperature)
