/* history.c: fits over blocks of trials and the verdict on each change (signal or noise). */
#include "cpdomain/history.h"
#include "cpdomain/status.h"

#include <gsl/gsl_cdf.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Two-sided 95 % normal quantile, for changes whose errors are typical errors (no dof). */
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
                for (int q = 0; q < CPD_PD_NMODELS; q++) {
                    const cpd_pd_model_fit *mq = &r->models[q];
                    cpd_history_model *hm = &b->models[q];
                    if ((use_model && q != (int)model) || !mq->ok || !(mq->cp > 0 && mq->w_prime > 0))
                        continue;
                    hm->ok = 1;
                    hm->has_se = mq->has_se && mq->see_valid;
                    hm->cp = mq->cp;
                    hm->w_prime = mq->w_prime;
                    hm->cp_se = hm->has_se ? mq->cp_se : 0;
                    hm->w_prime_se = hm->has_se ? mq->w_prime_se : 0;
                    hm->dof = mq->dof;
                    hm->see_sum = hm->has_se ? mq->see_cp_pct + mq->see_w_prime_pct : 0;
                }
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

/* The change b - a with its interval: half-width q x se (q = 1.96 when df is 0, else Student's t),
 * meaningful beyond +-swc. */
static void change_df(cpd_history_change *c, double a, double b, double se, double df, double swc_pct)
{
    c->valid = 1;
    c->delta = b - a;
    c->df = df;
    double q = df > 0 ? gsl_cdf_tdist_Pinv(0.975, df) : Z95;
    c->ci95[0] = c->delta - q * se;
    c->ci95[1] = c->delta + q * se;
    c->swc = fabs(a) * swc_pct / 100;
    c->excludes_zero = se > 0 && (c->ci95[0] > 0 || c->ci95[1] < 0);
    c->meaningful = se > 0 && (c->ci95[0] > c->swc || c->ci95[1] < -c->swc);
}

static void change(cpd_history_change *c, double a, double b, double se, double swc_pct)
{
    change_df(c, a, b, se, 0, swc_pct);
}

/* The better of the models both blocks support: with SEs in both, the lowest summed %SEE; else
 * any model fitted in both (no interval). -1 when none. */
static int common_model(const cpd_history_block *a, const cpd_history_block *b, int *with_se)
{
    int best = -1;
    *with_se = 0;
    for (int q = 0; q < CPD_PD_NMODELS; q++) {
        const cpd_history_model *x = &a->models[q], *y = &b->models[q];
        if (!x->ok || !y->ok)
            continue;
        int se = x->has_se && y->has_se;
        if (best < 0 || (se && !*with_se) ||
            (se == *with_se && se && x->see_sum + y->see_sum < a->models[best].see_sum + b->models[best].see_sum)) {
            best = q;
            *with_se = se;
        }
    }
    return best;
}

/* Welch-Satterthwaite: the degrees of freedom of s1^2 + s2^2 with df1, df2. */
static double welch_df(double s1, size_t df1, double s2, size_t df2)
{
    double v1 = s1 * s1, v2 = s2 * s2, den = 0;
    if (df1 > 0)
        den += v1 * v1 / (double)df1;
    if (df2 > 0)
        den += v2 * v2 / (double)df2;
    return den > 0 ? (v1 + v2) * (v1 + v2) / den : 0;
}

static void block_change(cpd_history_block *b, const cpd_history_block *p, double swc)
{
    int with_se = 0, q = common_model(p, b, &with_se);
    if (q < 0)
        return;
    const cpd_history_model *x = &p->models[q], *y = &b->models[q];
    /* without SEs (two-trial blocks) the interval is empty: never called meaningful */
    double scp = with_se ? hypot(x->cp_se, y->cp_se) : 0, sw = with_se ? hypot(x->w_prime_se, y->w_prime_se) : 0;
    change_df(&b->d_cp, x->cp, y->cp, scp, with_se ? welch_df(x->cp_se, x->dof, y->cp_se, y->dof) : 0, swc);
    /* the default smallest worthwhile change rests on CP's between-athlete spread: W' gets none */
    change_df(&b->d_w_prime, x->w_prime, y->w_prime, sw,
              with_se ? welch_df(x->w_prime_se, x->dof, y->w_prime_se, y->dof) : 0, 0);
    b->d_cp.model_valid = b->d_w_prime.model_valid = 1;
    b->d_cp.model = b->d_w_prime.model = (cpd_pd_model)q;
}

void cpd_history_changes(cpd_history *h)
{
    const cpd_history_block *prev_fit = NULL, *prev_ramp_get = NULL, *prev_ramp_vo2 = NULL, *prev_tau = NULL;
    double swc = h->swc_pct > 0 ? h->swc_pct : CPD_HISTORY_SWC_PCT;
    for (size_t k = 0; k < h->nblocks; k++) {
        cpd_history_block *b = &h->block[k];
        memset(&b->d_cp, 0, sizeof b->d_cp);
        memset(&b->d_w_prime, 0, sizeof b->d_w_prime);
        memset(&b->d_get, 0, sizeof b->d_get);
        memset(&b->d_vo2peak, 0, sizeof b->d_vo2peak);
        memset(&b->d_tau, 0, sizeof b->d_tau);
        if (b->fitted) {
            if (prev_fit)
                block_change(b, prev_fit, swc);
            prev_fit = b;
        }
        if (b->has_get) {
            if (prev_ramp_get) /* typical error CV x mean, of a difference of two tests: sqrt(2) TE */
                change(&b->d_get, prev_ramp_get->get, b->get,
                       sqrt(2.0) * CPD_HISTORY_CV_GET * 0.5 * (prev_ramp_get->get + b->get), 0);
            prev_ramp_get = b;
        }
        if (b->has_vo2peak) {
            if (prev_ramp_vo2)
                change(&b->d_vo2peak, prev_ramp_vo2->vo2peak_ml_min, b->vo2peak_ml_min,
                       sqrt(2.0) * CPD_HISTORY_CV_VO2PEAK * 0.5 * (prev_ramp_vo2->vo2peak_ml_min + b->vo2peak_ml_min),
                       0);
            prev_ramp_vo2 = b;
        }
        if (b->has_tau) {
            if (prev_tau)
                change(&b->d_tau, prev_tau->tau_s, b->tau_s, hypot(prev_tau->tau_se, b->tau_se), 0);
            prev_tau = b;
        }
    }
}
