/* fuzz.h: what the libFuzzer harnesses share (tests/fuzz/README.md). Each harness defines
 * LLVMFuzzerTestOneInput; a parser that returns an error is fine, a crash, a leak, undefined
 * behaviour or a broken invariant (abort) is a finding. */
#ifndef CPDOMAIN_FUZZ_H
#define CPDOMAIN_FUZZ_H

#include "cpdomain/status.h"
#include "cpdomain/units.h"

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* The fixed "today" of every harness (the CLI tests' 2026-12-01). */
static inline int fuzz_today(void)
{
    int d = 0;
    cpd_parse_date("2026-12-01", &d);
    return d;
}

/* An invariant broke: say which and abort, so libFuzzer keeps the input. */
#define FUZZ_CHECK(cond)                                                                                               \
    do {                                                                                                               \
        if (!(cond)) {                                                                                                 \
            fprintf(stderr, "fuzz invariant failed: %s (%s:%d)\n", #cond, __FILE__, __LINE__);                         \
            abort();                                                                                                   \
        }                                                                                                              \
    } while (0)

#endif
