/* bench_pd.c: fits all four power-duration models for 10,000 synthetic athletes of 5 trials each
 * and prints the throughput, with and without leave-one-out. A printed figure, not a test. */
#include "cpdomain/pd.h"
#include "cpdomain/status.h"
#include "rng.h"

#include <gsl/gsl_errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>
#include <unistd.h>

#define ATHLETES 10000
#define TRIALS 5

static double now_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* Cyclists drawn around CP 260 W, W′ 19 kJ, Pmax 1000 W, trials of about 1.5-14 min, 3 % noise. */
static void athlete(rng *r, double *P, double *t)
{
    static const double t0[TRIALS] = {95, 180, 320, 510, 820};
    double cp = 260 + 40 * rng_normal(r), w = 19000 + 4000 * rng_normal(r), pmax = 1000 + 150 * rng_normal(r);
    if (w < 6000)
        w = 6000;
    if (pmax < cp + 300)
        pmax = cp + 300;
    double a = w / (pmax - cp);
    for (int i = 0; i < TRIALS; i++) {
        P[i] = cp + w / (t0[i] + a);
        t[i] = t0[i] * (1 + 0.03 * rng_normal(r));
    }
}

static int run(cpd_pd_ws *w, int loo, cpd_pd_result *res, double *per_s)
{
    cpd_pd_opts o;
    cpd_pd_opts_init(&o);
    o.loo = loo;
    rng r = {20240611};
    double P[TRIALS], t[TRIALS];
    int ok[CPD_PD_NMODELS] = {0}, best[CPD_PD_NMODELS] = {0};
    double iter[CPD_PD_NMODELS] = {0};
    double t_start = now_s();
    for (int k = 0; k < ATHLETES; k++) {
        athlete(&r, P, t);
        int rc = cpd_pd_fit(w, CPD_PD_POWER, P, t, TRIALS, &o, res, NULL);
        if (rc != CPD_OK) {
            fprintf(stderr, "bench_pd: athlete %d: %s\n", k, cpd_strerror(rc));
            return 1;
        }
        for (int m = 0; m < CPD_PD_NMODELS; m++) {
            ok[m] += res->models[m].ok;
            iter[m] += (double)res->models[m].iter;
        }
        if (res->has_best)
            best[res->best]++;
    }
    double el = now_s() - t_start;
    *per_s = ATHLETES / el;
    printf("%s leave-one-out: %d athletes x %d trials, 4 models: %.3f s, %.0f athlete fits/s (%.0f model fits/s)\n",
           loo ? "with" : "without", ATHLETES, TRIALS, el, ATHLETES / el, 4 * ATHLETES / el);
    printf("  fitted:");
    for (int m = 0; m < CPD_PD_NMODELS; m++)
        printf(" %s %d", cpd_pd_model_name((cpd_pd_model)m), ok[m]);
    printf("\n  best:  ");
    for (int m = 0; m < CPD_PD_NMODELS; m++)
        printf(" %s %d", cpd_pd_model_name((cpd_pd_model)m), best[m]);
    printf("\n  mean iterations: hyperbolic %.1f, three-parameter %.1f\n",
           iter[CPD_PD_HYPERBOLIC] / ok[CPD_PD_HYPERBOLIC], iter[CPD_PD_THREE_PARAMETER] / ok[CPD_PD_THREE_PARAMETER]);
    return 0;
}

#define REF 400 /* athletes fitted by scipy beside the C loop (a Python loop is slow) */

/* The same first REF athletes through tests/pd_scipy_bench.py (scipy's curve_fit), timed there;
 * prints the ratio of athletes per second and the largest relative difference in CP and W′. */
static int beside_scipy(cpd_pd_ws *w, cpd_pd_result *res, double c_per_s)
{
    char path[] = "/tmp/cpd_bench_pd_XXXXXX";
    int fd = mkstemp(path);
    FILE *f = fd >= 0 ? fdopen(fd, "w") : NULL;
    if (!f)
        return 1;
    rng r = {20240611};
    static double P[REF][TRIALS], t[REF][TRIALS];
    for (int k = 0; k < REF; k++) {
        athlete(&r, P[k], t[k]);
        for (int i = 0; i < 2 * TRIALS; i++)
            fprintf(f, "%.17g%c", i < TRIALS ? P[k][i] : t[k][i - TRIALS], i + 1 < 2 * TRIALS ? ' ' : '\n');
    }
    fclose(f);
    char cmd[256];
    snprintf(cmd, sizeof cmd, "/usr/bin/python3 tests/pd_scipy_bench.py %s", path);
    FILE *p = popen(cmd, "r");
    double py_s = 0, worst2 = 0, worst3 = 0;
    int ok = p && fscanf(p, "%lf", &py_s) == 1, compared3 = 0;
    cpd_pd_opts o;
    cpd_pd_opts_init(&o);
    for (int k = 0; ok && k < REF; k++) {
        double ref[5];
        for (int j = 0; j < 5 && ok; j++) {
            char tok[64];
            ok = fscanf(p, "%63s", tok) == 1;
            ref[j] = strtod(tok, NULL); /* "nan" for a fit scipy could not make */
        }
        if (!ok || cpd_pd_fit(w, CPD_PD_POWER, P[k], t[k], TRIALS, &o, res, NULL) != CPD_OK)
            break;
        const cpd_pd_model_fit *h = &res->models[CPD_PD_HYPERBOLIC], *m3 = &res->models[CPD_PD_THREE_PARAMETER];
        if (h->ok && ref[0] == ref[0]) {
            worst2 = fmax(worst2, fabs(h->cp - ref[0]) / fabs(ref[0]));
            worst2 = fmax(worst2, fabs(h->w_prime - ref[1]) / fabs(ref[1]));
        }
        if (m3->ok && ref[2] == ref[2]) {
            worst3 = fmax(worst3, fabs(m3->cp - ref[2]) / fabs(ref[2]));
            worst3 = fmax(worst3, fabs(m3->w_prime - ref[3]) / fabs(ref[3]));
            compared3++;
        }
    }
    if (p)
        pclose(p);
    unlink(path);
    if (!ok || py_s <= 0) {
        fprintf(stderr, "bench_pd: the scipy loop failed (is python3-scipy installed?)\n");
        return 1;
    }
    printf("beside scipy (tests/pd_scipy_bench.py, curve_fit for the nonlinear models) on the first %d athletes:\n"
           "  scipy %.0f athletes/s, this library %.0f athletes/s: %.1fx   (goal: >= 30x)\n"
           "  largest relative difference in CP and W': hyperbolic %.1e, three-parameter %.1e (%d compared)\n",
           REF, REF / py_s, c_per_s, c_per_s / (REF / py_s), worst2, worst3, compared3);
    return 0;
}

int main(void)
{
    gsl_set_error_handler_off();
    cpd_pd_ws *w = cpd_pd_alloc();
    cpd_pd_result *res = malloc(sizeof *res);
    int rc = 1;
    if (!w || !res) {
        fprintf(stderr, "bench_pd: out of memory\n");
        goto done;
    }
    double per_s = 0, per_s_loo = 0;
    rc = run(w, 0, res, &per_s) || run(w, 1, res, &per_s_loo) || beside_scipy(w, res, per_s);
done:
    free(res);
    cpd_pd_free(w);
    return rc;
}
