/* fuzz_session.c: the session CSV reader with its cleaning and mean-maximal curve, from memory
 * (cpd_import_session_mem); what it accepts passes the record gate. */
#include "fuzz.h"
#include "cpdomain/import.h"
#include "cpdomain/validate.h"

#include <string.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    static cpd_session_import_ws *w;
    if (!w && !(w = cpd_import_session_alloc()))
        abort();
    char msg[CPD_MSG_MAX];
    /* the first byte picks the options: modality wanted, preference, curve on or off */
    int sel = size ? data[0] : 0;
    cpd_session_import_opts o = {NULL, (sel & 3) == 3 ? -1 : (sel & 3) % 2, (sel >> 2) & 1, 0, (sel >> 3) & 1};
    if (size && (sel & 3) == 2)
        o.want_speed = -1;
    cpd_session_import im;
    const char *text = size ? (const char *)data + 1 : "";
    if (cpd_import_session_mem(w, "fuzz_2026-10-01.csv", text, size ? size - 1 : 0, &o, &im, msg) == CPD_OK) {
        cpd_session_rec r;
        memset(&r, 0, sizeof r);
        snprintf(r.athlete, sizeof r.athlete, "F1");
        snprintf(r.date, sizeof r.date, "2026-10-01");
        cpd_import_session_rec(&im, &r);
        const char *field = NULL;
        if (cpd_validate_session_rec(&r, fuzz_today(), &field, msg) != CPD_OK) {
            fprintf(stderr, "accepted session refused by the gate: %s: %s\n", field, msg);
            abort();
        }
    }
    return 0;
}
