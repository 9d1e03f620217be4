/* status.c: descriptions of the library's status codes. */
#include "cpdomain/status.h"

const char *cpd_strerror(int rc)
{
    static const char *const text[CPD_NSTATUS] = {
        [CPD_OK] = "ok",
        [CPD_EUSAGE] = "invalid argument",
        [CPD_EDATA] = "invalid input data",
        [CPD_ENOENT] = "not found",
        [CPD_EIO] = "cannot read input",
        [CPD_ENODATA] = "not enough data",
        [CPD_ENOCONV] = "did not converge",
        [CPD_ENOMEM] = "out of memory",
        [CPD_EINTERNAL] = "internal error",
        [CPD_ECREATE] = "cannot create output",
        [CPD_ESTORE] = "store error",
        [CPD_EEXIST] = "already exists",
        [CPD_ETEMP] = "temporary failure",
        [CPD_ENOPERM] = "permission denied",
    };
    if (rc < 0 || rc >= CPD_NSTATUS)
        return "unknown status";
    return text[rc];
}
