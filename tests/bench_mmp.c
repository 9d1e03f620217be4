/* bench_mmp.c: a synthetic season of 400 two-hour 1-Hz rides: time to clean each file and compute
 * its mean-maximal curve, then time to combine the 400 stored curves into the season curve, and
 * peak memory. Printed figures, not a test; the goals are printed beside them. */
#include "cpdomain/mmp.h"
#include "cpdomain/session.h"
#include "cpdomain/status.h"
#include "rng.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <time.h>

#define SESSIONS 400
#define RIDE_S 7200

static double now_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static long maxrss_kb(void)
{
    struct rusage u;
    getrusage(RUSAGE_SELF, &u);
    return u.ru_maxrss;
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* A ride of about two hours (whole watts, as power meters record, or real numbers): endurance power with noise, a few hard intervals, coasting zeros,
 * short dropouts (2-5 s missing), one pause of two minutes after 80 min and a rare meter spike. */
static size_t ride(rng *r, int whole, double *t, double *p)
{
    double base = 170 + 40 * rng_uniform(r);
    size_t n = 0;
    double clock = 0;
    for (size_t k = 0; k < RIDE_S; k++) {
        clock += 1;
        if (k == 2 * RIDE_S / 3)
            clock += 120; /* a coffee stop: the recording pauses */
        double u = rng_uniform(r);
        if (u < 0.004) {
            clock += (double)(1 + (int)(4 * rng_uniform(r))); /* 2-5 s missing */
            continue;
        }
        double w = base + 25 * rng_normal(r);
        size_t phase = k % 900;
        if (phase >= 600 && phase < 600 + 240 * (k / 900 % 2))
            w += 160; /* 4-min intervals every half hour */
        if (phase >= 300 && phase < 300 + (size_t)(10 + k % 7))
            w = 0; /* coasting */
        if (w < 0)
            w = 0;
        if (u > 0.9999)
            w = 3100; /* spike */
        t[n] = clock;
        p[n] = whole ? nearbyint(w) : w;
        n++;
    }
    return n;
}

/* The curve as the store would keep it: three BLOBs of n doubles, written one after another. */
static int save(FILE *f, const cpd_mmp_curve *c)
{
    uint64_t n = c->n;
    return fwrite(&n, sizeof n, 1, f) == 1 && fwrite(c->duration_s, sizeof(double), c->n, f) == c->n &&
           fwrite(c->value, sizeof(double), c->n, f) == c->n && fwrite(c->start_s, sizeof(double), c->n, f) == c->n;
}

int main(void)
{
    int rc = 1;
    double *t = malloc(RIDE_S * sizeof *t), *p = malloc(RIDE_S * sizeof *p);
    double *blob = malloc(3 * CPD_MMP_NMAX * sizeof *blob);
    cpd_session_ws *sw = cpd_session_alloc(RIDE_S);
    cpd_mmp_ws *mw = cpd_mmp_alloc(RIDE_S);
    cpd_mmp_season *season = cpd_mmp_season_alloc();
    FILE *store = tmpfile();
    if (!t || !p || !blob || !sw || !mw || !season || !store) {
        fprintf(stderr, "bench_mmp: out of memory\n");
        goto done;
    }
    rng r = {20250317};
    cpd_session s;
    cpd_mmp_curve c;
    char msg[CPD_MSG_MAX];
    double t_clean = 0, t_curve = 0, per[SESSIONS];
    size_t filled = 0, spikes = 0, splits = 0;
    long rss_40 = 0;
    double t0 = now_s();
    for (int k = 0; k < SESSIONS; k++) {
        size_t n = ride(&r, 1, t, p);
        double a = now_s();
        int e = cpd_session_clean(sw, t, p, n, NULL, &s, msg);
        double b = now_s();
        if (e == CPD_OK)
            e = cpd_mmp_session(mw, &s, &c);
        double d = now_s();
        if (e != CPD_OK || !save(store, &c)) {
            fprintf(stderr, "bench_mmp: session %d: %s %s\n", k, cpd_strerror(e), msg);
            goto done;
        }
        t_clean += b - a;
        t_curve += d - b;
        per[k] = d - b;
        filled += s.filled_s;
        spikes += s.n_spikes;
        splits += s.n_splits;
        if (k == 39)
            rss_40 = maxrss_kb();
    }
    double t_season = now_s() - t0;
    long rss_400 = maxrss_kb();

    rewind(store);
    double t_add = 0;
    t0 = now_s();
    for (int k = 0; k < SESSIONS; k++) {
        uint64_t n;
        if (fread(&n, sizeof n, 1, store) != 1 || n > CPD_MMP_NMAX ||
            fread(blob, sizeof(double), 3 * n, store) != 3 * n) {
            fprintf(stderr, "bench_mmp: reading curve %d back failed\n", k);
            goto done;
        }
        cpd_mmp_curve back = {(size_t)n, blob, blob + n, blob + 2 * n};
        double a = now_s();
        if (cpd_mmp_season_add(season, &back, 1000 + k, 20000 + k) != CPD_OK) {
            fprintf(stderr, "bench_mmp: curve %d refused\n", k);
            goto done;
        }
        t_add += now_s() - a;
    }
    double t_query = now_s() - t0;

    printf("season: %d rides of about 2 h at 1 Hz (%zu s filled, %zu splits, %zu spikes in all)\n", SESSIONS, filled,
           splits, spikes);
    printf("  clean:  %.3f s in all, %.2f ms per ride\n", t_clean, 1e3 * t_clean / SESSIONS);
    qsort(per, SESSIONS, sizeof *per, cmp_double);
    printf("  curves: %.3f s in all, %.2f ms per ride, median %.2f ms (%zu points each), kernel %s   (goal: <= 1.5 ms "
           "with AVX2)\n", t_curve, 1e3 * t_curve / SESSIONS, 1e3 * per[SESSIONS / 2], c.n, cpd_mmp_kernel());
    printf("  clean + curve for the season: %.2f s with generation   (goal: well under 20 s)\n", t_season);
    printf("combine %d stored curves: %.2f ms reading them back one at a time, %.2f ms of that in "
           "cpd_mmp_season_add   (goal: < 50 ms)\n",
           SESSIONS, 1e3 * t_query, 1e3 * t_add);
    printf("  season curve: 1 s %.0f W, 5 min %.1f W, 20 min %.1f W, 60 min %.1f W, %zu points\n", season->value[0],
           season->value[299], season->value[1199], season->value[3599], season->n);
    printf("peak memory (ru_maxrss): %ld kB after 40 rides, %ld kB after %d rides   (goal: the same)\n", rss_40,
           rss_400, SESSIONS);

    /* one 24-h file, the longest SPEC promises: cost of the coarse grid beyond an hour */
    {
        size_t n24 = 86400;
        double *t24 = malloc(n24 * sizeof *t24), *p24 = malloc(n24 * sizeof *p24);
        if (!t24 || !p24) {
            free(t24);
            free(p24);
            fprintf(stderr, "bench_mmp: out of memory\n");
            goto done;
        }
        for (size_t i = 0; i < n24; i++) {
            t24[i] = (double)i;
            p24[i] = 150 + 30 * rng_normal(&r);
            if (p24[i] < 0)
                p24[i] = 0;
        }
        double a = now_s();
        int e = cpd_session_clean(sw, t24, p24, n24, NULL, &s, msg);
        if (e == CPD_OK)
            e = cpd_mmp_session(mw, &s, &c);
        double b = now_s();
        free(t24);
        free(p24);
        if (e != CPD_OK) {
            fprintf(stderr, "bench_mmp: 24-h file: %s %s\n", cpd_strerror(e), msg);
            goto done;
        }
        printf("one 24-h file: clean + curve %.2f s (%zu points); peak memory %ld kB\n", b - a, c.n, maxrss_kb());
    }
    rc = 0;
done:
    if (store)
        fclose(store);
    cpd_mmp_season_free(season);
    cpd_mmp_free(mw);
    cpd_session_free(sw);
    free(blob);
    free(t);
    free(p);
    return rc;
}
