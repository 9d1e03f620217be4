/* fuzz_trials.c: the trials CSV reader and, on the same bytes, the athletes CSV reader, from
 * memory (cpd_csv_parse, cpd_import_*_csv). */
#include "fuzz.h"
#include "cpdomain/csvin.h"
#include "cpdomain/import.h"
#include "cpdomain/validate.h"

#include <string.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    char msg[CPD_MSG_MAX];
    cpd_csv *c = NULL;
    if (cpd_csv_parse("fuzz.csv", (const char *)data, size, &c, msg) == CPD_OK) {
        cpd_trial_batch b;
        if (cpd_import_trials_csv(c, NULL, fuzz_today(), &b, msg) == CPD_OK) {
            /* every trial handed on must pass the validator again */
            for (size_t i = 0; i < b.n; i++) {
                const char *field = NULL;
                FUZZ_CHECK(cpd_validate_trial(&b.trial[i], fuzz_today(), &field, msg) == CPD_OK);
            }
            cpd_trial_batch_free(&b);
        } else
            FUZZ_CHECK(msg[0] != '\0');
    }
    if (cpd_csv_parse("fuzz.csv", (const char *)data, size, &c, msg) == CPD_OK) {
        cpd_athlete_batch a;
        if (cpd_import_athletes_csv(c, NULL, &a, msg) == CPD_OK) {
            for (size_t i = 0; i < a.n; i++) {
                FUZZ_CHECK(cpd_validate_athlete(&a.athlete[i], msg) == CPD_OK);
                for (size_t j = 0; j < i; j++)
                    FUZZ_CHECK(strcmp(a.athlete[i].code, a.athlete[j].code) != 0);
            }
            cpd_athlete_batch_free(&a);
        }
    }
    return 0;
}
