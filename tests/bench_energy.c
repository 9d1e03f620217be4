/* bench_energy.c: costs a 4-hour ride of heavy intervals with the session VO2 model and 200 Monte
 * Carlo draws, and prints the time and the modelled seconds per second. A printed figure, not a test. */
#include "cpdomain/energy.h"
#include "cpdomain/status.h"

#include <gsl/gsl_errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#define RIDE_S (4 * 3600)
#define DRAWS 200

static double now_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

int main(void)
{
    gsl_set_error_handler_off();
    double *p = malloc(RIDE_S * sizeof *p);
    unsigned char *rec = malloc(RIDE_S);
    if (!p || !rec)
        return 70;
    for (int i = 0; i < RIDE_S; i++) { /* 8 min at 205 W, 3 min at 100 W, over and over */
        p[i] = i % 660 < 480 ? 205.0 : 100.0;
        rec[i] = 1;
    }
    cpd_energy_params par = {
        .m = {521, 10.0, 28, 14, 173, 234, 7.4, 183, 107, 3281},
        .sd = {20, 0.05, 1.6, 2, 8.7, 7, 3.2, 46, 15, 98},
        .rer = {0.92, 0.99, 1.0},
        .rer_sd = {0.02, 0.02, 0.02},
    };
    cpd_energy_session_result r;
    double t0 = now_s();
    int rc = cpd_energy_session(&par, p, rec, RIDE_S, CPD_ENERGY_EQ_JW_HIGH, 0.22, DRAWS, 1, &r);
    double el = now_s() - t0;
    if (rc) {
        fprintf(stderr, "bench_energy: %s\n", cpd_strerror(rc));
        return 1;
    }
    printf("energy: a %d-s ride, %d draws: %.3f s, %.2e modelled seconds/s; %.0f kJ (%.0f to %.0f)\n", RIDE_S, DRAWS,
           el, (double)RIDE_S * (DRAWS + 2) / el, r.ee_total_kj, r.ee_total_ci[0], r.ee_total_ci[1]);
    cpd_energy_session_free(&r);
    free(p);
    free(rec);
    return 0;
}
