/* cli_retry.c: a command on a PostgreSQL store that the server aborted (another writer won a
 * serialization conflict, a deadlock, a lost connection or a restart) runs again from the start,
 * a bounded number of times. Its output on stdout is held back until the attempt that counts has
 * finished, so a rerun never prints its results twice; messages on stderr go out as they come (a
 * warning of an aborted attempt may show again). On a SQLite store a command runs once, as it
 * always did. */
#include "cli.h"

#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>
#include <time.h>
#include <unistd.h>

/* Reruns after the first attempt unless $CPDOMAIN_RETRIES says otherwise (0 to 100). */
#define DEFAULT_RETRIES 8

typedef struct {
    FILE *tmp; /* what the attempt wrote to stdout */
    int saved; /* the real stdout */
    int on;
} held;

static void hold(held *h)
{
    fflush(stdout);
    h->on = 0;
    h->saved = -1;
    if (!(h->tmp = tmpfile()))
        return; /* no temporary file: the command runs unheld and is not rerun */
    if ((h->saved = dup(STDOUT_FILENO)) < 0 || dup2(fileno(h->tmp), STDOUT_FILENO) < 0) {
        if (h->saved >= 0)
            close(h->saved);
        fclose(h->tmp);
        h->tmp = NULL;
        return;
    }
    h->on = 1;
}

/* Forgets what the failed attempt wrote. */
static void discard(held *h)
{
    fflush(stdout);
    if (ftruncate(STDOUT_FILENO, 0) != 0 || lseek(STDOUT_FILENO, 0, SEEK_SET) < 0)
        h->on = 0; /* cannot start afresh: no more reruns */
}

/* Copies from to to; 0, or the errno of the failed read or write. */
static int copy(int from, int to)
{
    char buf[1 << 14];
    if (lseek(from, 0, SEEK_SET) < 0)
        return errno;
    for (;;) {
        ssize_t n = read(from, buf, sizeof buf);
        if (n < 0 && errno == EINTR)
            continue;
        if (n < 0)
            return errno;
        if (n == 0)
            return 0;
        for (ssize_t w = 0; w < n;) {
            ssize_t r = write(to, buf + w, (size_t)(n - w));
            if (r < 0 && errno == EINTR)
                continue;
            if (r <= 0)
                return r < 0 ? errno : EIO;
            w += r;
        }
    }
}

/* Writes out what the last attempt wrote and puts the real stdout back; 0 or an errno. */
static int release(held *h)
{
    if (!h->tmp)
        return 0;
    int err = fflush(stdout) != 0 ? errno : 0;
    if (!err)
        err = copy(fileno(h->tmp), h->saved);
    dup2(h->saved, STDOUT_FILENO);
    close(h->saved);
    fclose(h->tmp);
    h->tmp = NULL;
    h->on = 0;
    return err;
}

static int retries(void)
{
    const char *e = getenv("CPDOMAIN_RETRIES");
    if (!e || !*e)
        return DEFAULT_RETRIES;
    char *end;
    long v = strtol(e, &end, 10);
    return (*end || v < 0 || v > 100) ? DEFAULT_RETRIES : (int)v;
}

/* Waits 25 ms, 50 ms, ... up to 2 s, each spread by +-50 %, so writers that collided part. */
static void pause_before(int attempt)
{
    double ms = 25.0;
    for (int k = 1; k < attempt && ms < 2000.0; k++)
        ms *= 2.0;
    if (ms > 2000.0)
        ms = 2000.0;
    ms *= 0.5 + (double)rand() / RAND_MAX;
    struct timespec ts = {(time_t)(ms / 1000.0), (long)((ms - 1000.0 * (long)(ms / 1000.0)) * 1e6)};
    while (nanosleep(&ts, &ts) != 0 && errno == EINTR)
        ;
}

int cli_run_retrying(cli_ctx *c, const cli_command *cmd, int argc, char **argv)
{
    if (!cpd_store_is_server(c->db_path)) {
        int rc = cmd->run(c, argc, argv);
        cpd_store_rollback(c->store); /* no-op after a commit; undoes a command that returned early */
        cpd_store_close(c->store);
        c->store = NULL;
        return rc;
    }
    const cli_ctx start = *c;
    char **args = malloc(((size_t)argc + 1) * sizeof *args);
    if (!args)
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    memcpy(args, argv, ((size_t)argc + 1) * sizeof *args);
    held h = {0};
    hold(&h);
    srand((unsigned)time(NULL) ^ (unsigned)getpid() << 8);
    int max = h.on ? retries() : 0, rc = 0, reached = 0;
    for (int attempt = 0;; attempt++) {
        *c = start;
        memcpy(argv, args, ((size_t)argc + 1) * sizeof *args); /* getopt permutes argv */
        optind = 0;                                            /* and keeps its own place */
        rc = cmd->run(c, argc, argv);
        /* a server that went away mid-command may refuse the next connection while it restarts */
        int again = rc == EX_TEMPFAIL && attempt < max && (c->store ? cpd_store_retryable(c->store) : reached);
        reached |= c->store != NULL;
        cpd_store_rollback(c->store);
        cpd_store_close(c->store);
        c->store = NULL;
        if (again)
            discard(&h);
        if (!again || !h.on)
            break;
        if (!c->quiet)
            fprintf(stderr,
                    "cpdomain: the server aborted the command (a concurrent change or a lost connection); "
                    "nothing was kept; running it again (%d of %d)\n",
                    attempt + 1, max);
        pause_before(attempt + 1);
    }
    int err = release(&h);
    free(args);
    if (err && rc == 0) {
        fprintf(stderr, "cpdomain: writing the output: %s\n", strerror(err));
        rc = EX_IOERR;
    }
    return rc;
}
