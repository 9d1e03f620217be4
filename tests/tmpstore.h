/* tmpstore.h: removes a temporary test store with its WAL and shared-memory files. */
#ifndef CPDOMAIN_TESTS_TMPSTORE_H
#define CPDOMAIN_TESTS_TMPSTORE_H

#include <stdio.h>
#include <unistd.h>

static inline void tmpstore_remove(const char *path)
{
    char p[128];
    unlink(path);
    snprintf(p, sizeof p, "%s-wal", path);
    unlink(p);
    snprintf(p, sizeof p, "%s-shm", path);
    unlink(p);
}

#endif
