/*
 * fuzz_sample.c - libFuzzer harness: fuzz_sample_one (fuzz_targets.h) on each input.
 * Built by `make fuzz` with -fsanitize=fuzzer,address,undefined; a broken
 * rule traps, so libFuzzer saves the input as a crash.
 */
#include <gsl/gsl_errno.h>
#include <stdio.h>

#include "fuzz_targets.h"

static arrank_units *units;

int LLVMFuzzerInitialize(int *argc, char ***argv);
int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerInitialize(int *argc, char ***argv)
{
    (void)argc;
    (void)argv;
    gsl_set_error_handler_off();
    arrank_error err;
    arrank_error_clear(&err);
    units = arrank_units_create(&err);
    if (!units) {
        fprintf(stderr, "fuzz_sample: %s\n", err.message);
        abort();
    }
    return 0;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *why = fuzz_sample_one(units, data, size);
    if (why) {
        fprintf(stderr, "fuzz_sample: %s\n", why);
        __builtin_trap();
    }
    return 0;
}
