/* bench_pd.c: fits all four power-duration models for 10,000 synthetic athletes of 5 trials each
 * and prints the throughput, with and without leave-one-out. A printed figure, not a test. */
#include "cpdomain/pd.h"
#include "cpdomain/status.h"
#include "rng.h"

#include <gsl/gsl_errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

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

static int run(cpd_pd_ws *w, int loo, cpd_pd_result *res)
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
    rc = run(w, 0, res) || run(w, 1, res);
done:
    free(res);
    cpd_pd_free(w);
    return rc;
}
