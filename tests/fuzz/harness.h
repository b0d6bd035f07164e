/*
 * harness.h - the libFuzzer entry points every harness shares.
 *
 * FUZZ_HARNESS(name) defines LLVMFuzzerInitialize (units loaded once) and
 * LLVMFuzzerTestOneInput, which runs fuzz_<name>_one (fuzz_targets.h) on each
 * input; a broken rule traps, so libFuzzer saves the input as a crash.
 * Built by `make fuzz` with -fsanitize=fuzzer,address,undefined.
 */
#ifndef ARRANK_FUZZ_HARNESS_H
#define ARRANK_FUZZ_HARNESS_H

#include <gsl/gsl_errno.h>
#include <stdio.h>
#include <stdlib.h>

#include "fuzz_targets.h"

int LLVMFuzzerInitialize(int *argc, char ***argv);
int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

#define FUZZ_HARNESS(name)                                                                 \
    static arrank_units *units;                                                           \
    int LLVMFuzzerInitialize(int *argc, char ***argv)                                     \
    {                                                                                     \
        (void)argc;                                                                       \
        (void)argv;                                                                       \
        gsl_set_error_handler_off();                                                      \
        arrank_error err;                                                                 \
        arrank_error_clear(&err);                                                         \
        units = arrank_units_create(&err);                                                \
        if (!units) {                                                                     \
            fprintf(stderr, "fuzz_" #name ": %s\n", err.message);                         \
            abort();                                                                      \
        }                                                                                 \
        return 0;                                                                         \
    }                                                                                     \
    int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)                          \
    {                                                                                     \
        const char *why = fuzz_##name##_one(units, data, size);                           \
        if (why) {                                                                        \
            fprintf(stderr, "fuzz_" #name ": %s\n", why);                                 \
            __builtin_trap();                                                             \
        }                                                                                 \
        return 0;                                                                         \
    }

#endif
