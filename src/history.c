/* history.c: fits over blocks of trials and the verdict on each change (signal or noise). */
#include "cpdomain/history.h"
#include "cpdomain/status.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Two-sided 95 % normal quantile; the changes use the large-sample interval on purpose, since the
 * combined standard error mixes two fits with different degrees of freedom. */
#define Z95 1.959963984540054

int cpd_history_build(cpd_pd_ws *w, cpd_pd_modality modality, const int *day, const double *intensity,
                      const double *duration_s, size_t n, int window_days, int use_model, cpd_pd_model model,
                      cpd_history *h)
{
    if (!w || !day || !intensity || !duration_s || !h || (use_model && (unsigned)model >= CPD_PD_NMODELS))
        return CPD_EUSAGE;
    memset(h, 0, sizeof *h);
    int win = window_days > 0 ? window_days : CPD_HISTORY_WINDOW_DAYS;
    for (size_t i = 1; i < n; i++)
        if (day[i] < day[i - 1])
            return CPD_EUSAGE;
    cpd_pd_result *r = malloc(sizeof *r);
    if (!r)
        return CPD_ENOMEM;
    int rc = CPD_OK;
    for (size_t i = 0; i < n && h->nblocks < CPD_HISTORY_MAX_BLOCKS;) {
        size_t j = i;
        while (j < n && day[j] - day[i] <= win)
            j++;
        cpd_history_block *b = &h->block[h->nblocks++];
        b->first = i;
        b->n = j - i;
        b->from_day = day[i];
        b->to_day = day[j - 1];
        if (b->n >= 2 && b->n <= CPD_PD_NMAX) {
            cpd_pd_opts o;
            cpd_pd_opts_init(&o);
            o.loo = 0;
            int frc = cpd_pd_fit(w, modality, intensity + i, duration_s + i, b->n, &o, r, NULL);
            if (frc == CPD_ENOMEM) {
                rc = frc;
                break;
            }
            if (frc == CPD_OK && (use_model || r->has_best)) {
                const cpd_pd_model_fit *m = &r->models[use_model ? model : r->best];
                if (m->ok && m->cp > 0 && m->w_prime > 0) {
                    b->fitted = 1;
                    b->model = m->model;
                    b->cp = m->cp;
                    b->w_prime = m->w_prime;
                    b->has_se = m->has_se;
                    b->cp_se = m->has_se ? m->cp_se : 0;
                    b->w_prime_se = m->has_se ? m->w_prime_se : 0;
                    memcpy(b->cp_ci95, m->cp_ci95, sizeof b->cp_ci95);
                    memcpy(b->w_prime_ci95, m->w_prime_ci95, sizeof b->w_prime_ci95);
                    b->flags = r->flags;
                }
            }
        }
        i = j;
    }
    free(r);
    if (!rc)
        cpd_history_changes(h);
    return rc;
}

/* The block nearest to test_day within win days of its span, or NULL. */
static cpd_history_block *nearest(cpd_history *h, int test_day, int win)
{
    cpd_history_block *best = NULL;
    int bestd = 0;
    for (size_t k = 0; k < h->nblocks; k++) {
        cpd_history_block *b = &h->block[k];
        int d = test_day < b->from_day ? b->from_day - test_day : test_day > b->to_day ? test_day - b->to_day : 0;
        if (d <= win && (!best || d < bestd)) {
            best = b;
            bestd = d;
        }
    }
    return best;
}

void cpd_history_attach_ramp(cpd_history *h, int test_day, int has_get, double get, int has_vo2peak, double vo2peak,
                             int window_days)
{
    cpd_history_block *b = nearest(h, test_day, window_days > 0 ? window_days : CPD_HISTORY_WINDOW_DAYS);
    if (!b)
        return;
    b->test_day = test_day;
    b->has_get = has_get && get > 0;
    b->get = b->has_get ? get : 0;
    b->has_vo2peak = has_vo2peak && vo2peak > 0;
    b->vo2peak_ml_min = b->has_vo2peak ? vo2peak : 0;
}

void cpd_history_attach_tau(cpd_history *h, int test_day, double tau_s, double tau_se, int window_days)
{
    cpd_history_block *b = nearest(h, test_day, window_days > 0 ? window_days : CPD_HISTORY_WINDOW_DAYS);
    if (!b || !(tau_s > 0))
        return;
    b->has_tau = 1;
    b->tau_s = tau_s;
    b->tau_se = tau_se > 0 ? tau_se : 0;
}

static void change(cpd_history_change *c, double a, double b, double se)
{
    c->valid = 1;
    c->delta = b - a;
    c->ci95[0] = c->delta - Z95 * se;
    c->ci95[1] = c->delta + Z95 * se;
    c->meaningful = se > 0 && (c->ci95[0] > 0 || c->ci95[1] < 0);
}

void cpd_history_changes(cpd_history *h)
{
    const cpd_history_block *prev_fit = NULL, *prev_ramp_get = NULL, *prev_ramp_vo2 = NULL, *prev_tau = NULL;
    for (size_t k = 0; k < h->nblocks; k++) {
        cpd_history_block *b = &h->block[k];
        memset(&b->d_cp, 0, sizeof b->d_cp);
        memset(&b->d_w_prime, 0, sizeof b->d_w_prime);
        memset(&b->d_get, 0, sizeof b->d_get);
        memset(&b->d_vo2peak, 0, sizeof b->d_vo2peak);
        memset(&b->d_tau, 0, sizeof b->d_tau);
        if (b->fitted) {
            if (prev_fit) {
                /* without SEs (two-trial blocks) the interval is empty: never called meaningful */
                double se_cp = prev_fit->has_se && b->has_se ? hypot(prev_fit->cp_se, b->cp_se) : 0;
                double se_w = prev_fit->has_se && b->has_se ? hypot(prev_fit->w_prime_se, b->w_prime_se) : 0;
                change(&b->d_cp, prev_fit->cp, b->cp, se_cp);
                change(&b->d_w_prime, prev_fit->w_prime, b->w_prime, se_w);
            }
            prev_fit = b;
        }
        if (b->has_get) {
            if (prev_ramp_get) /* typical error CV x mean, of a difference of two tests: sqrt(2) TE */
                change(&b->d_get, prev_ramp_get->get, b->get,
                       sqrt(2.0) * CPD_HISTORY_CV_GET * 0.5 * (prev_ramp_get->get + b->get));
            prev_ramp_get = b;
        }
        if (b->has_vo2peak) {
            if (prev_ramp_vo2)
                change(&b->d_vo2peak, prev_ramp_vo2->vo2peak_ml_min, b->vo2peak_ml_min,
                       sqrt(2.0) * CPD_HISTORY_CV_VO2PEAK * 0.5 * (prev_ramp_vo2->vo2peak_ml_min + b->vo2peak_ml_min));
            prev_ramp_vo2 = b;
        }
        if (b->has_tau) {
            if (prev_tau)
                change(&b->d_tau, prev_tau->tau_s, b->tau_s, hypot(prev_tau->tau_se, b->tau_se));
            prev_tau = b;
        }
    }
}
