/* safefile.c: output files written through a temporary file and rename(2) (safefile.h). */
#include "cpdomain/safefile.h"
#include "cpdomain/status.h"

#include <errno.h>
#include <fcntl.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

static int write_all(int fd, const char *p, size_t len)
{
    while (len > 0) {
        ssize_t w = write(fd, p, len);
        if (w < 0) {
            if (errno == EINTR)
                continue;
            return -1;
        }
        p += w;
        len -= (size_t)w;
    }
    return 0;
}

/* A device or FIFO named on purpose (-o /dev/null): written in place, never replaced. */
static int write_special(const char *path, const void *data, size_t len, char *msg)
{
    int fd = open(path, O_WRONLY | O_NOFOLLOW | O_NOCTTY | O_CLOEXEC);
    if (fd < 0) {
        snprintf(msg, CPD_MSG_MAX, "cannot open '%s': %s", path, strerror(errno));
        return CPD_ECREATE;
    }
    int bad = write_all(fd, data, len);
    int err = errno;
    if (close(fd) != 0 && !bad) {
        bad = 1;
        err = errno;
    }
    if (bad) {
        snprintf(msg, CPD_MSG_MAX, "writing '%s' failed: %s", path, strerror(err));
        return CPD_ECREATE;
    }
    return CPD_OK;
}

/* Opens a new file "DIR/.BASE.XXXXXX.tmp" beside path; its name into tmp (size tmp_n). */
static int open_temp(const char *path, char *tmp, size_t tmp_n, mode_t mode)
{
    const char *slash = strrchr(path, '/');
    int dlen = slash ? (int)(slash - path + 1) : 0;
    const char *base = slash ? slash + 1 : path;
    struct timespec ts;
    clock_gettime(CLOCK_REALTIME, &ts);
    uint64_t x = (uint64_t)ts.tv_nsec ^ ((uint64_t)ts.tv_sec << 20) ^ ((uint64_t)getpid() << 40);
    for (int attempt = 0; attempt < 100; attempt++) {
        x = x * 6364136223846793005ULL + 1442695040888963407ULL; /* Knuth's MMIX LCG */
        int w = snprintf(tmp, tmp_n, "%.*s.%s.%06llx.tmp", dlen, path, base,
                         (unsigned long long)(x >> 40) & 0xffffffULL);
        if (w < 0 || (size_t)w >= tmp_n) {
            errno = ENAMETOOLONG;
            return -1;
        }
        int fd = open(tmp, O_WRONLY | O_CREAT | O_EXCL | O_NOFOLLOW | O_CLOEXEC, mode);
        if (fd >= 0 || errno != EEXIST)
            return fd;
    }
    errno = EEXIST;
    return -1;
}

int cpd_safe_write(const char *path, const void *data, size_t len, char *msg)
{
    msg[0] = '\0';
    if (!path || !*path) {
        snprintf(msg, CPD_MSG_MAX, "no output file name given");
        return CPD_ECREATE;
    }
    struct stat st;
    int exists = lstat(path, &st) == 0;
    if (!exists && errno != ENOENT) {
        snprintf(msg, CPD_MSG_MAX, "cannot create '%s': %s", path, strerror(errno));
        return CPD_ECREATE;
    }
    mode_t mode = 0666; /* the umask applies, as for any new file */
    if (exists) {
        if (S_ISLNK(st.st_mode)) {
            snprintf(msg, CPD_MSG_MAX,
                     "'%s' is a symbolic link: refusing to write through it (remove the link or choose another "
                     "file name)",
                     path);
            return CPD_ECREATE;
        }
        if (S_ISCHR(st.st_mode) || S_ISFIFO(st.st_mode))
            return write_special(path, data, len, msg);
        if (!S_ISREG(st.st_mode)) {
            snprintf(msg, CPD_MSG_MAX, "cannot write '%s': it exists and is not a regular file", path);
            return CPD_ECREATE;
        }
        mode = st.st_mode & 07777;
    }
    size_t tmp_n = strlen(path) + 32;
    char *tmp = malloc(tmp_n);
    if (!tmp)
        return CPD_ENOMEM;
    int fd = open_temp(path, tmp, tmp_n, mode);
    if (fd < 0) {
        snprintf(msg, CPD_MSG_MAX, "cannot create '%s': %s", path, strerror(errno));
        free(tmp);
        return CPD_ECREATE;
    }
    const char *step = "writing";
    int bad = write_all(fd, data, len);
    if (!bad && exists && fchmod(fd, mode) != 0)
        bad = 1;
    if (!bad && fsync(fd) != 0)
        bad = 1;
    int err = errno;
    if (close(fd) != 0 && !bad) {
        bad = 1;
        err = errno;
    }
    if (!bad && rename(tmp, path) != 0) {
        bad = 1;
        err = errno;
        step = "replacing";
    }
    if (bad) {
        unlink(tmp);
        snprintf(msg, CPD_MSG_MAX, "%s '%s' failed: %s%s", step, path, strerror(err),
                 exists ? " (the existing file is unchanged)" : "");
        free(tmp);
        return CPD_ECREATE;
    }
    free(tmp);
    return CPD_OK;
}
