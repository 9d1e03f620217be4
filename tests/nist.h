/* nist.h: test-only reader for NIST StRD .dat files (certified values and data). */
#ifndef CPD_TEST_NIST_H
#define CPD_TEST_NIST_H

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define NIST_PMAX 12
#define NIST_NMAX 300

typedef struct {
    int p;                                            /* parameters */
    int n;                                            /* observations */
    double start1[NIST_PMAX], start2[NIST_PMAX];      /* NLS starting values */
    double cert[NIST_PMAX], cert_sd[NIST_PMAX];       /* certified estimates and standard deviations */
    double rss, resid_sd;                             /* certified RSS (NLS) and residual SD */
    double y[NIST_NMAX], x[NIST_NMAX];                /* data: response first column, x second */
} nist_set;

/* Reads an NLS (nls = 1) or LLS (nls = 0) file; returns 0 on success. */
static int nist_read(const char *path, int nls, nist_set *s)
{
    FILE *f = fopen(path, "rb");
    if (!f)
        return -1;
    memset(s, 0, sizeof *s);
    char line[512];
    int lineno = 0;
    while (fgets(line, sizeof line, f)) {
        lineno++;
        line[strcspn(line, "\r\n")] = '\0';
        char *p = line;
        while (*p == ' ')
            p++;
        if (lineno >= 61) {
            double a, b;
            if (sscanf(p, "%lf %lf", &a, &b) == 2 && s->n < NIST_NMAX) {
                s->y[s->n] = a;
                s->x[s->n] = b;
                s->n++;
            }
            continue;
        }
        int k;
        double v1, v2, v3, v4;
        if (nls && sscanf(p, "b%d = %lf %lf %lf %lf", &k, &v1, &v2, &v3, &v4) == 5 && k >= 1 && k <= NIST_PMAX) {
            s->start1[k - 1] = v1;
            s->start2[k - 1] = v2;
            s->cert[k - 1] = v3;
            s->cert_sd[k - 1] = v4;
            if (k > s->p)
                s->p = k;
        } else if (!nls && sscanf(p, "B%d %lf %lf", &k, &v1, &v2) == 3 && k >= 0 && k < NIST_PMAX) {
            s->cert[k] = v1;
            s->cert_sd[k] = v2;
            if (k + 1 > s->p)
                s->p = k + 1;
        } else if (sscanf(p, "Residual Sum of Squares: %lf", &v1) == 1) {
            s->rss = v1;
        } else if (sscanf(p, "Residual Standard Deviation: %lf", &v1) == 1) {
            s->resid_sd = v1;
        } else if (!nls && sscanf(p, "Standard Deviation %lf", &v1) == 1) {
            s->resid_sd = v1; /* LLS files split "Residual / Standard Deviation" over two lines */
        }
    }
    fclose(f);
    return s->n > 0 && s->p > 0 ? 0 : -1;
}

#endif
