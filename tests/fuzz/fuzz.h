/*
 * fuzz.h - what the libFuzzer targets in tests/fuzz share.
 *
 * Each target feeds arbitrary bytes to one decoder, and where the decoder
 * accepts them checks a property that must hold for every accepted input
 * (decode after encode gives the same text, the plan's promises). A broken
 * property aborts through LC_FUZZ_CHECK, which libFuzzer reports as a crash
 * with the input saved. Every target frees all it allocated per input:
 * LeakSanitizer runs at exit and after every input that grew the heap.
 */
#ifndef LC_FUZZ_H
#define LC_FUZZ_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

#define LC_FUZZ_CHECK(cond, ...)                                          \
    do {                                                                  \
        if (!(cond)) {                                                    \
            fprintf(stderr, "%s:%d: check failed: %s: ", __FILE__,        \
                    __LINE__, #cond);                                     \
            fprintf(stderr, __VA_ARGS__);                                 \
            fputc('\n', stderr);                                          \
            abort();                                                      \
        }                                                                 \
    } while (0)

#endif
