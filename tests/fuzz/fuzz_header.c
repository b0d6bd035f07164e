/*
 * fuzz_header.c - libFuzzer harness.
 *
 * What it asserts (fuzz_header_one in fuzz_targets.h): the first line is read as a temperature
 * unit, then as a rate unit, and converted to the second line's unit, then as a header field of a
 * sample file (beside a rate, then as the rate; read leniently and strictly); a failure must carry a
 * documented status and a message, a success a finite non-zero conversion and, for a rate, a
 * basis. A broken rule makes the harness fail the input (it traps, and libFuzzer saves it).
 */
#include "harness.h"

FUZZ_HARNESS(header)
