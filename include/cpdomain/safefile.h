/* safefile.h: writing an output file so that nobody can redirect the write and a failure never
 * destroys what was there: the bytes go to a new temporary file in the target's folder (opened
 * with O_CREAT|O_EXCL|O_NOFOLLOW), which is flushed to disk and then renamed over the target. */
#ifndef CPDOMAIN_SAFEFILE_H
#define CPDOMAIN_SAFEFILE_H

#include <stddef.h>

/* Writes len bytes of data to path.
 * - A symbolic link at path is refused (it could point anywhere another user chose).
 * - An existing regular file is replaced whole by rename(2) and keeps its permission bits; until the
 *   rename it is left untouched, so a failed write (disk full, file-size limit, I/O error) leaves
 *   the old file intact, and the temporary file is removed.
 * - A character device or a FIFO that exists at path (/dev/null, a named pipe) is written in
 *   place, opened with O_NOFOLLOW; a directory is refused.
 * Returns CPD_OK, or CPD_ECREATE with msg (CPD_MSG_MAX bytes) naming path and the reason;
 * CPD_ENOMEM when memory for the temporary name runs out (a name too long for the folder: CPD_ECREATE). */
int cpd_safe_write(const char *path, const void *data, size_t len, char *msg);

#endif
