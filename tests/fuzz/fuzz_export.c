/* fuzz_export.c: the export-document parser against the schema of a new store, then the record
 * gate; a document it accepts renders and parses back to the same rows. */
#include "fuzz.h"
#include "cpdomain/export.h"
#include "cpdomain/store_dump.h"
#include "cpdomain/validate_dump.h"

#include <string.h>

static cpd_dump *schema(void)
{
    static cpd_dump *sch;
    if (sch)
        return sch;
    char msg[CPD_MSG_MAX];
    cpd_store *s = NULL;
    if (cpd_store_open(":memory:", 1, &s, msg) || cpd_store_dump_schema(s, &sch))
        abort();
    cpd_store_close(s);
    return sch;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    char msg[CPD_MSG_MAX];
    cpd_dump *d = NULL;
    if (cpd_export_parse((const char *)data, size, schema(), &d, msg) != CPD_OK) {
        FUZZ_CHECK(msg[0] != '\0');
        return 0;
    }
    cpd_dump *checked = NULL; /* the record gate, as import runs it, must agree with cpd_validate_dump */
    cpd_dump_at at;
    int gate = cpd_validate_dump(d, fuzz_today(), &at, msg);
    FUZZ_CHECK(cpd_export_parse_checked((const char *)data, size, schema(), fuzz_today(), &checked, msg) == gate);
    cpd_dump_free(checked);
    char *text = NULL;
    size_t len = 0;
    if (cpd_export_render(d, "fuzz", &text, &len, msg) == CPD_OK) {
        cpd_dump *back = NULL;
        FUZZ_CHECK(cpd_export_parse(text, len, schema(), &back, msg) == CPD_OK);
        for (size_t k = 0; k < d->ntables; k++)
            FUZZ_CHECK(back->table[k].nrows == d->table[k].nrows);
        char *again = NULL;
        size_t len2 = 0;
        FUZZ_CHECK(cpd_export_render(back, "fuzz", &again, &len2, msg) == CPD_OK);
        FUZZ_CHECK(len2 == len && memcmp(again, text, len) == 0);
        free(again);
        cpd_dump_free(back);
        free(text);
    }
    cpd_dump_free(d);
    return 0;
}
