/* fuzz_gx.c: the gas-exchange CSV reader (ramps and bouts), from memory. */
#include "fuzz.h"
#include "cpdomain/csvin.h"
#include "cpdomain/import.h"

#include <math.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    char msg[CPD_MSG_MAX];
    cpd_csv *c = NULL;
    if (cpd_csv_parse("fuzz.csv", (const char *)data, size, &c, msg) != CPD_OK)
        return 0;
    cpd_gx_series *g = NULL;
    if (cpd_import_gx_csv(c, NULL, 2, &g, NULL, msg) == CPD_OK) {
        FUZZ_CHECK(g->n >= 2);
        for (size_t i = 0; i < g->n; i++) {
            FUZZ_CHECK(isfinite(g->t_s[i]));
            FUZZ_CHECK(i == 0 || g->t_s[i] >= g->t_s[i - 1]);
        }
        cpd_gx_free(g);
    }
    return 0;
}
