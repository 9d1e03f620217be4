/* status.h: the one status type of the cpdomain library.
 * Every fallible function returns int: CPD_OK (0) or one of the positive codes below. */
#ifndef CPDOMAIN_STATUS_H
#define CPDOMAIN_STATUS_H

enum {
    CPD_OK = 0,
    CPD_EUSAGE,    /* a caller's argument is malformed or out of range (CLI: exit 64) */
    CPD_EDATA,     /* input data are invalid: bad field, out of range, time backwards (exit 65) */
    CPD_ENOENT,    /* a named thing does not exist: athlete, trial id, store (exit 65 or 66) */
    CPD_EIO,       /* a file cannot be opened or read (exit 66) */
    CPD_ENODATA,   /* not enough data for the requested analysis (exit 69) */
    CPD_ENOCONV,   /* an iterative fit or root search did not converge (exit 69) */
    CPD_ENOMEM,    /* memory allocation failed (exit 70) */
    CPD_EINTERNAL, /* an invariant broke; a bug (exit 70) */
    CPD_ECREATE,   /* an output file cannot be created (exit 73) */
    CPD_ESTORE,    /* the store failed or is newer than this binary (exit 74) */
    CPD_EEXIST,    /* a unique thing already exists, e.g. an athlete code (exit 65) */
    CPD_ETEMP,     /* the store's server is unreachable, or concurrent writers kept conflicting:
                    * try again later (exit 75) */
    CPD_ENOPERM,   /* the store's server refused: authentication, privilege or squad access (exit 77) */
    CPD_NSTATUS
};

/* Returns a short static English description of status code rc; never NULL. */
const char *cpd_strerror(int rc);

/* Size of the message buffers that library functions fill with error detail. */
#define CPD_MSG_MAX 512

#endif
