/* fuzz_restore.c: an export document through the parser and the record gate into an empty
 * in-memory store (cpd_store_restore), rolled back after each input; the store must stay sound. */
#include "fuzz.h"
#include "cpdomain/export.h"
#include "cpdomain/store_dump.h"
#include "cpdomain/validate_dump.h"

static cpd_store *store;
static cpd_dump *sch;

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    char msg[CPD_MSG_MAX];
    if (!store && (cpd_store_open(":memory:", 1, &store, msg) || cpd_store_dump_schema(store, &sch)))
        abort();
    cpd_dump *d = NULL;
    if (cpd_export_parse_checked((const char *)data, size, sch, fuzz_today(), &d, msg) == CPD_OK) {
        size_t bt = 0, br = 0;
        FUZZ_CHECK(cpd_store_begin(store) == CPD_OK);
        int rc = cpd_store_restore(store, d, &bt, &br);
        FUZZ_CHECK(rc == CPD_OK || rc == CPD_EDATA);
        if (rc == CPD_OK) { /* what was restored dumps back with the same row counts */
            cpd_dump *back = NULL;
            FUZZ_CHECK(cpd_store_dump(store, &back) == CPD_OK);
            for (size_t k = 0; k < d->ntables; k++)
                FUZZ_CHECK(back->table[k].nrows == d->table[k].nrows);
            cpd_dump_free(back);
        }
        cpd_store_rollback(store);
        FUZZ_CHECK(cpd_store_check_empty(store) == CPD_OK);
        cpd_dump_free(d);
    }
    return 0;
}
