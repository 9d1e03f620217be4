/* cli_retry.c: a command on a PostgreSQL store that the server aborted (another writer won a
 * serialization conflict, a deadlock, a lost connection or a restart) runs again from the start,
 * a bounded number of times. Its output is held back until the attempt that counts has finished,
 * so a rerun never prints twice. On a SQLite store a command runs once, as it always did. */
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
    FILE *tmp[2]; /* what the attempt wrote to stdout and stderr */
    int saved[2]; /* the real stdout and stderr */
    int on;
} held;

static void hold(held *h)
{
    fflush(stdout);
    fflush(stderr);
    h->on = 0;
    for (int k = 0; k < 2; k++) {
        h->tmp[k] = tmpfile();
        h->saved[k] = h->tmp[k] ? dup(k + 1) : -1;
        if (!h->tmp[k] || h->saved[k] < 0 || dup2(fileno(h->tmp[k]), k + 1) < 0) {
            /* no temporary file: the command runs unheld and is not rerun */
            for (int j = 0; j <= k; j++) {
                if (h->saved[j] >= 0) {
                    dup2(h->saved[j], j + 1);
                    close(h->saved[j]);
                }
                if (h->tmp[j])
                    fclose(h->tmp[j]);
            }
            return;
        }
    }
    h->on = 1;
}

/* Forgets what the failed attempt wrote. */
static void discard(held *h)
{
    fflush(stdout);
    fflush(stderr);
    for (int k = 1; k <= 2; k++)
        if (ftruncate(k, 0) != 0 || lseek(k, 0, SEEK_SET) < 0)
            h->on = h->on; /* a temporary file that cannot be emptied keeps its bytes: nothing to do */
}

static void copy(int from, int to)
{
    char buf[1 << 14];
    ssize_t n;
    lseek(from, 0, SEEK_SET);
    while ((n = read(from, buf, sizeof buf)) > 0 || (n < 0 && errno == EINTR))
        for (ssize_t w = 0, r; n > 0 && w < n; w += r)
            if ((r = write(to, buf + w, (size_t)(n - w))) <= 0) {
                if (r < 0 && errno == EINTR) {
                    r = 0;
                    continue;
                }
                return;
            }
}

/* Writes out what the last attempt wrote and puts the real stdout and stderr back. */
static void release(held *h)
{
    if (!h->on)
        return;
    fflush(stdout);
    fflush(stderr);
    for (int k = 0; k < 2; k++) {
        copy(fileno(h->tmp[k]), h->saved[k]);
        dup2(h->saved[k], k + 1);
        close(h->saved[k]);
        fclose(h->tmp[k]);
    }
    h->on = 0;
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
    held h;
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
        if (!again)
            break;
        discard(&h);
        if (!c->quiet)
            dprintf(h.saved[1], "cpdomain: the server aborted the command (a concurrent change or a lost "
                                "connection); nothing was kept; running it again (%d of %d)\n",
                    attempt + 1, max);
        pause_before(attempt + 1);
    }
    release(&h);
    free(args);
    return rc;
}
