/*
 * fuzz_ini.c - libFuzzer harness.
 *
 * What it asserts (fuzz_ini_one in fuzz_targets.h): campaign.ini is parsed whole; a failure
 * must carry a documented status and a message, a success a title, path and name, an operating
 * temperature above 0 K, a confidence in (0, 1) and no empty rate unit. A broken rule makes
 * the harness fail the input (it traps, and libFuzzer saves it).
 */
#include "harness.h"

FUZZ_HARNESS(ini)
