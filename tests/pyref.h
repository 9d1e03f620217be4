/* pyref.h: test-only bridge to reference computations in Debian's numpy/scipy.
 * Runs /usr/bin/python3 tests/ref/SCRIPT with an input file and reads the numbers it prints. */
#ifndef CPD_TEST_PYREF_H
#define CPD_TEST_PYREF_H

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

/* Writes text to a temporary file, runs the script on it and reads up to max whitespace-separated
 * numbers from its stdout into out. Returns the count read, or -1 when the script failed. The
 * literal word "null" is read as the value of 'nullv'. */
static int pyref_run(const char *script, const char *text, double *out, int max, double nullv)
{
    char in[] = "/tmp/cpd_pyref_XXXXXX";
    int fd = mkstemp(in);
    if (fd < 0)
        return -1;
    size_t L = strlen(text);
    if (write(fd, text, L) != (ssize_t)L) {
        close(fd);
        unlink(in);
        return -1;
    }
    close(fd);
    char cmd[1024];
    snprintf(cmd, sizeof cmd, "/usr/bin/python3 tests/ref/%s %s", script, in);
    FILE *p = popen(cmd, "r");
    if (!p) {
        unlink(in);
        return -1;
    }
    int k = 0;
    char tok[128];
    while (k < max && fscanf(p, "%127s", tok) == 1) {
        if (strcmp(tok, "null") == 0)
            out[k++] = nullv;
        else {
            char *e;
            double v = strtod(tok, &e);
            if (*e)
                break;
            out[k++] = v;
        }
    }
    int st = pclose(p);
    unlink(in);
    return st == 0 ? k : -1;
}

#endif
