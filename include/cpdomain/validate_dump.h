/* validate_dump.h: the record gate for a whole dump (an export document read back): every row of
 * every table passes the checks its records pass on any other path into the store (validate.h),
 * so a document cannot bring in what 'athlete add', 'trial import' or 'ramp add' would refuse. */
#ifndef CPDOMAIN_VALIDATE_DUMP_H
#define CPDOMAIN_VALIDATE_DUMP_H

#include "cpdomain/store_dump.h"

#include <stddef.h>

/* Where a dump was refused: table, row and column indexes into d (column in d's column order,
 * which is the store's and the order export writes). */
typedef struct {
    size_t table, row, col;
} cpd_dump_at;

/* Checks every row of d in table order, stopping at the first bad value: athletes by
 * cpd_validate_athlete_field; trials by cpd_validate_trial (dates not after today_days); fit runs'
 * dates; ramps and bouts by cpd_validate_gx_test; lactate tests and stages by
 * cpd_validate_lactate_stage; sessions by cpd_validate_session_rec; sample and curve BLOBs of the
 * length their record states, holding finite numbers; and no infinite REAL anywhere (the store
 * never holds one). Tables this function does not know pass (a later migration's). Returns CPD_OK,
 * or CPD_EDATA with *at and msg (CPD_MSG_MAX bytes, "column 'code': ..."). */
int cpd_validate_dump(const cpd_dump *d, int today_days, cpd_dump_at *at, char *msg);

#endif
