/* fuzz_lactate.c: the lactate step-test CSV reader, from memory; what it accepts passes the
 * record gate. */
#include "fuzz.h"
#include "cpdomain/csvin.h"
#include "cpdomain/import.h"
#include "cpdomain/validate.h"

#include <string.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    char msg[CPD_MSG_MAX];
    cpd_csv *c = NULL;
    if (cpd_csv_parse("fuzz.csv", (const char *)data, size, &c, msg) != CPD_OK)
        return 0;
    static cpd_lactate_test t;
    memset(&t, 0, sizeof t);
    if (cpd_import_lactate_csv(c, NULL, &t, msg) == CPD_OK) {
        snprintf(t.date, sizeof t.date, "2026-10-01");
        const char *field = NULL;
        size_t stage = 0;
        FUZZ_CHECK(cpd_validate_lactate(&t, fuzz_today(), &field, &stage, msg) == CPD_OK);
    }
    return 0;
}
