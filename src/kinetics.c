/* kinetics.c: VO2 on-kinetics. Every fit goes through nlfit.h; every confidence interval counts the
 * independent breaths behind the points, never the 1-s points manufactured by interpolation. */
#include "cpdomain/kinetics.h"
#include "cpdomain/linfit.h"
#include "cpdomain/nlfit.h"

#include <gsl/gsl_cdf.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

struct cpd_kinetics_ws {
    cpd_nlfit_ws *nl;
    double *ft, *fy; /* fit points inside the window */
    size_t fcap;
    double *rt, *ry; /* raw observations inside the window */
    size_t rcap;
    double *resid; /* residuals of the observations */
    size_t resid_cap;
    double *raw_t, *raw_y; /* prepared: cleaned aligned breaths */
    size_t raw_cap;
    double *grid_t, *grid_y; /* prepared: 1-s ensemble average */
    size_t grid_cap;
    double *pt, *py; /* prepared: bins */
    size_t pcap;
    unsigned char *flag;
    size_t flag_cap;
    cpd_kinetics_data data;
};

cpd_kinetics_ws *cpd_kinetics_alloc(void)
{
    cpd_kinetics_ws *w = calloc(1, sizeof *w);
    if (!w)
        return NULL;
    w->nl = cpd_nlfit_alloc();
    if (!w->nl) {
        free(w);
        return NULL;
    }
    return w;
}

void cpd_kinetics_free(cpd_kinetics_ws *w)
{
    if (!w)
        return;
    cpd_nlfit_free(w->nl);
    free(w->ft);
    free(w->fy);
    free(w->rt);
    free(w->ry);
    free(w->resid);
    free(w->raw_t);
    free(w->raw_y);
    free(w->grid_t);
    free(w->grid_y);
    free(w->pt);
    free(w->py);
    free(w->flag);
    free(w);
}

static size_t grown(size_t cap, size_t need)
{
    size_t c = cap ? cap : 64;
    while (c < need)
        c *= 2;
    return c;
}

static int grow1(double **a, size_t *cap, size_t need)
{
    if (need <= *cap)
        return CPD_OK;
    size_t c = grown(*cap, need);
    double *na = realloc(*a, c * sizeof(double));
    if (!na)
        return CPD_ENOMEM;
    *a = na;
    *cap = c;
    return CPD_OK;
}

/* Grows a pair of arrays that share one capacity. */
static int grow2(double **a, double **b, size_t *cap, size_t need)
{
    if (need <= *cap)
        return CPD_OK;
    size_t c = grown(*cap, need);
    double *na = realloc(*a, c * sizeof(double));
    if (!na)
        return CPD_ENOMEM;
    *a = na;
    double *nb = realloc(*b, c * sizeof(double));
    if (!nb)
        return CPD_ENOMEM;
    *b = nb;
    *cap = c;
    return CPD_OK;
}

const char *cpd_kinetics_domain_name(int domain)
{
    static const char *const names[CPD_KIN_NDOMAIN] = {"undetermined", "moderate", "heavy", "severe"};
    return domain >= 0 && domain < CPD_KIN_NDOMAIN ? names[domain] : "invalid";
}

const char *cpd_kinetics_reason_text(int reason)
{
    static const char *const text[CPD_KIN_R_NREASON] = {
        [CPD_KIN_R_NONE] = "ok",
        [CPD_KIN_R_BAD_ARG] = "argument out of range",
        [CPD_KIN_R_BAD_SAMPLE] = "invalid sample (time or VO2)",
        [CPD_KIN_R_ONSET_OUTSIDE] = "onset outside the data",
        [CPD_KIN_R_END_OUTSIDE] = "end of exercise outside the data",
        [CPD_KIN_R_NO_BASELINE] = "no baseline data",
        [CPD_KIN_R_TOO_SHORT] = "bout too short",
        [CPD_KIN_R_TOO_FEW_POINTS] = "too few points in the fit window",
        [CPD_KIN_R_NO_CONVERGENCE] = "fit did not converge",
        [CPD_KIN_R_START_OUTSIDE] = "start values outside the model's domain",
        [CPD_KIN_R_SINGULAR] = "parameters not identifiable from these data",
        [CPD_KIN_R_NO_RESPONSE] = "no VO2 response to the power step",
        [CPD_KIN_R_NOMEM] = "out of memory",
    };
    if (reason < 0 || reason >= CPD_KIN_R_NREASON)
        return "unknown reason";
    return text[reason];
}

/* ---- models ---- */

static size_t model_npar(int model)
{
    return model == CPD_KIN_BI ? CPD_KIN_NPAR : 4;
}

/* One exponential component A (1 - e^(-(t - td)/tau)) u(t - td); expm1 keeps 1 - e^(-x) exact
 * for small x, which the NIST check at 6 digits needs near x = 0. */
static double component(double a, double td, double tau, double t)
{
    return t >= td ? -a * expm1(-(t - td) / tau) : 0.0;
}

/* d component / d(A, td, tau) into d[0..2]. */
static void component_deriv(double a, double td, double tau, double t, double *d)
{
    if (t >= td) {
        double x = (t - td) / tau, e = exp(-x);
        d[0] = -expm1(-x);
        d[1] = -a * e / tau;
        d[2] = -a * e * x / tau;
    } else {
        d[0] = d[1] = d[2] = 0.0;
    }
}

double cpd_kinetics_eval(int model, const double *b, double t_s)
{
    double v = b[CPD_KIN_BASE] + component(b[CPD_KIN_A1], b[CPD_KIN_TD1], b[CPD_KIN_TAU1], t_s);
    if (model == CPD_KIN_BI)
        v += component(b[CPD_KIN_A2], b[CPD_KIN_TD2], b[CPD_KIN_TAU2], t_s);
    return v;
}

void cpd_kinetics_spec_init(cpd_kinetics_spec *s, int model)
{
    memset(s, 0, sizeof *s);
    s->model = model;
    s->from_s = 0.0;
    s->to_s = 1e9;
}

typedef struct {
    const double *t, *y;
    size_t n;
    int model;
    double full[CPD_KIN_NPAR]; /* fixed values, and the layout the free vector expands into */
    size_t idx[CPD_KIN_NPAR];  /* parameter index of each free parameter */
    size_t p;
    double to_s;
    double tau_max; /* TAU_SPANS times the span of the fitted times */
} fitctx;

/* Beyond this many spans of the data an exponential cannot be told from a straight line. A fit
 * that runs off towards tau -> infinity (A -> infinity, the linear limit) stalls against this
 * wall, where the trust region shrinks until GSL's step test reports convergence; an estimate
 * that ends on the wall is therefore reported as not converged. NIST Misra1a's tau is 2.6 spans
 * and its first start 14 spans. */
#define TAU_SPANS 100.0

/* Full parameter vector from the free one; nonzero outside the model's domain: a time constant
 * must be positive and below the wall, and a slow component delayed beyond the window has no data. */
static int expand(const fitctx *c, const double *b, double *full)
{
    memcpy(full, c->full, sizeof c->full);
    for (size_t j = 0; j < c->p; j++)
        full[c->idx[j]] = b[j];
    if (!(full[CPD_KIN_TAU1] > 0) || !(full[CPD_KIN_TAU1] < c->tau_max))
        return 1;
    if (c->model == CPD_KIN_BI && (!(full[CPD_KIN_TAU2] > 0) || !(full[CPD_KIN_TAU2] < c->tau_max) ||
                                   !(full[CPD_KIN_TD2] < c->to_s)))
        return 1;
    return 0;
}

static int model_f(const double *b, void *vc, double *f)
{
    const fitctx *c = vc;
    double full[CPD_KIN_NPAR];
    if (expand(c, b, full))
        return 1;
    for (size_t i = 0; i < c->n; i++)
        f[i] = cpd_kinetics_eval(c->model, full, c->t[i]) - c->y[i];
    return 0;
}

static int model_df(const double *b, void *vc, double *J)
{
    const fitctx *c = vc;
    double full[CPD_KIN_NPAR], d[CPD_KIN_NPAR];
    if (expand(c, b, full))
        return 1;
    for (size_t i = 0; i < c->n; i++) {
        d[CPD_KIN_BASE] = 1.0;
        component_deriv(full[CPD_KIN_A1], full[CPD_KIN_TD1], full[CPD_KIN_TAU1], c->t[i], d + CPD_KIN_A1);
        if (c->model == CPD_KIN_BI)
            component_deriv(full[CPD_KIN_A2], full[CPD_KIN_TD2], full[CPD_KIN_TAU2], c->t[i], d + CPD_KIN_A2);
        for (size_t j = 0; j < c->p; j++)
            J[i * c->p + j] = d[c->idx[j]];
    }
    return 0;
}

/* ---- fit statistics ---- */

/* Wald-Wolfowitz runs test on the signs of r (zeros skipped), normal approximation (Wald &
 * Wolfowitz 1940 Ann Math Stat 11:147, from memory). */
static void runs_test(const double *r, size_t n, cpd_kinetics_fitres *o)
{
    size_t np = 0, nn = 0, runs = 0;
    int prev = 0;
    for (size_t i = 0; i < n; i++) {
        int s = r[i] > 0 ? 1 : r[i] < 0 ? -1 : 0;
        if (!s)
            continue;
        np += s > 0;
        nn += s < 0;
        if (s != prev)
            runs++;
        prev = s;
    }
    o->runs = runs;
    o->n_pos = np;
    o->n_neg = nn;
    /* the normal approximation is the usual one when both counts reach 10 (common practice) */
    if (np >= 10 && nn >= 10) {
        double n1 = (double)np, n2 = (double)nn, N = n1 + n2;
        double mu = 1.0 + 2.0 * n1 * n2 / N;
        double var = 2.0 * n1 * n2 * (2.0 * n1 * n2 - N) / (N * N * (N - 1.0));
        if (var > 0) {
            o->runs_z = ((double)runs - mu) / sqrt(var);
            o->runs_p = 2.0 * gsl_cdf_ugaussian_Q(fabs(o->runs_z));
            o->runs_valid = 1;
        }
    }
}

/* Residuals (observed - model) of the observations (ot, oy) into r, with their summary. */
static void obs_stats(const cpd_kinetics_fitres *o, const double *ot, const double *oy, size_t m, double *r,
                      double *rss, double *mean, double *maxabs)
{
    double s = 0.0, s2 = 0.0, mx = 0.0;
    for (size_t i = 0; i < m; i++) {
        r[i] = oy[i] - cpd_kinetics_eval(o->model, o->b, ot[i]);
        s += r[i];
        s2 += r[i] * r[i];
        if (fabs(r[i]) > mx)
            mx = fabs(r[i]);
    }
    *rss = s2;
    *mean = m ? s / (double)m : 0.0;
    *maxabs = mx;
}

static int finite_all(const double *x, size_t n)
{
    for (size_t i = 0; i < n; i++)
        if (!isfinite(x[i]))
            return 0;
    return 1;
}

int cpd_kinetics_fit(cpd_kinetics_ws *w, const double *t_s, const double *vo2_ml_min, size_t n,
                     const cpd_kinetics_spec *spec, cpd_kinetics_fitres *out)
{
    if (!out)
        return CPD_EUSAGE;
    memset(out, 0, sizeof *out);
    out->reason = CPD_KIN_R_BAD_ARG;
    if (!w || !spec || (n && (!t_s || !vo2_ml_min)))
        return CPD_EUSAGE;
    if (spec->model != CPD_KIN_MONO && spec->model != CPD_KIN_BI)
        return CPD_EUSAGE;
    size_t np = model_npar(spec->model);
    if (!isfinite(spec->from_s) || !isfinite(spec->to_s) || spec->from_s > spec->to_s ||
        !finite_all(spec->b0, np) || (spec->fixed >> np) != 0 || (spec->raw_n && (!spec->raw_t_s || !spec->raw_vo2_ml_min)) ||
        !isfinite(spec->noise_sd_ml_min) || spec->noise_sd_ml_min < 0)
        return CPD_EUSAGE;
    out->model = spec->model;
    out->fixed = spec->fixed;
    out->from_s = spec->from_s;
    out->to_s = spec->to_s;

    int rc = CPD_OK;
    fitctx c;
    memset(&c, 0, sizeof c);
    c.model = spec->model;
    c.to_s = spec->to_s;
    memcpy(c.full, spec->b0, np * sizeof(double));
    for (size_t k = 0; k < np; k++)
        if (!(spec->fixed & CPD_KIN_BIT(k)))
            c.idx[c.p++] = k;
    if (c.p == 0)
        return CPD_EUSAGE;

    /* gather the points and the raw observations inside the window */
    size_t nw = 0;
    for (size_t i = 0; i < n; i++)
        if (t_s[i] >= spec->from_s && t_s[i] <= spec->to_s)
            nw++;
    size_t nr = 0;
    for (size_t i = 0; i < spec->raw_n; i++)
        if (spec->raw_t_s[i] >= spec->from_s && spec->raw_t_s[i] <= spec->to_s)
            nr++;
    if ((rc = grow2(&w->ft, &w->fy, &w->fcap, nw + 1)) || (rc = grow2(&w->rt, &w->ry, &w->rcap, nr + 1)) ||
        (rc = grow1(&w->resid, &w->resid_cap, (spec->raw_n ? nr : nw) + 1))) {
        out->reason = CPD_KIN_R_NOMEM;
        return rc;
    }
    nw = 0;
    for (size_t i = 0; i < n; i++)
        if (t_s[i] >= spec->from_s && t_s[i] <= spec->to_s) {
            w->ft[nw] = t_s[i];
            w->fy[nw] = vo2_ml_min[i];
            nw++;
        }
    if (!finite_all(w->ft, nw) || !finite_all(w->fy, nw)) {
        out->reason = CPD_KIN_R_BAD_SAMPLE;
        return CPD_EDATA;
    }
    const double *ot = w->ft, *oy = w->fy;
    if (spec->raw_n) {
        nr = 0;
        for (size_t i = 0; i < spec->raw_n; i++)
            if (spec->raw_t_s[i] >= spec->from_s && spec->raw_t_s[i] <= spec->to_s) {
                w->rt[nr] = spec->raw_t_s[i];
                w->ry[nr] = spec->raw_vo2_ml_min[i];
                nr++;
            }
        if (!finite_all(w->rt, nr) || !finite_all(w->ry, nr)) {
            out->reason = CPD_KIN_R_BAD_SAMPLE;
            return CPD_EDATA;
        }
        ot = w->rt;
        oy = w->ry;
    }
    size_t n_eff = spec->raw_n ? nr : nw;
    if (nw <= c.p || n_eff <= c.p) {
        out->reason = CPD_KIN_R_TOO_FEW_POINTS;
        return CPD_ENODATA;
    }
    c.t = w->ft;
    c.y = w->fy;
    c.n = nw;
    double tmin = w->ft[0], tmax = w->ft[0];
    for (size_t i = 1; i < nw; i++) {
        tmin = fmin(tmin, w->ft[i]);
        tmax = fmax(tmax, w->ft[i]);
    }
    c.tau_max = TAU_SPANS * (tmax > tmin ? tmax - tmin : 1.0);
    double b0[CPD_KIN_NPAR], full0[CPD_KIN_NPAR];
    for (size_t j = 0; j < c.p; j++)
        b0[j] = spec->b0[c.idx[j]];
    if (expand(&c, b0, full0)) {
        out->reason = CPD_KIN_R_START_OUTSIDE;
        return CPD_ENODATA;
    }

    cpd_nlfit_problem pr = {nw, c.p, model_f, model_df, &c};
    cpd_nlfit_result res;
    rc = cpd_nlfit_solve(w->nl, &pr, b0, NULL, &res);
    if (rc) {
        out->reason = rc == CPD_ENOMEM    ? CPD_KIN_R_NOMEM
                      : rc == CPD_ENODATA ? CPD_KIN_R_START_OUTSIDE
                      : rc == CPD_EUSAGE  ? CPD_KIN_R_BAD_ARG
                                          : CPD_KIN_R_NO_CONVERGENCE;
        return rc;
    }

    (void)expand(&c, res.b, out->b);
    if (out->b[CPD_KIN_TAU1] > 0.99 * c.tau_max || (c.model == CPD_KIN_BI && out->b[CPD_KIN_TAU2] > 0.99 * c.tau_max)) {
        memset(out->b, 0, sizeof out->b);
        out->reason = CPD_KIN_R_NO_CONVERGENCE;
        return CPD_ENOCONV;
    }
    out->valid = 1;
    out->reason = CPD_KIN_R_NONE;
    out->n = nw;
    out->p = c.p;
    out->n_eff = n_eff;
    out->dof = n_eff - c.p;
    out->rss = res.rss;
    out->iter = res.iter;

    double *r = w->resid;
    double rss_eff = 0.0;
    obs_stats(out, ot, oy, n_eff, r, &rss_eff, &out->resid_mean_ml_min, &out->resid_max_abs_ml_min);
    out->rss_eff = spec->raw_n ? rss_eff : res.rss;
    out->resid_sd_ml_min = sqrt(out->rss_eff / (double)out->dof);
    runs_test(r, n_eff, out);
    if (spec->noise_sd_ml_min > 0) {
        out->chi2_red = out->rss_eff / ((double)out->dof * spec->noise_sd_ml_min * spec->noise_sd_ml_min);
        out->chi2_valid = 1;
    }
    /* AICc for least squares with K = p + 1 (the variance counts): Burnham & Anderson 2002, Model
     * Selection and Multimodel Inference, Springer (from memory) */
    double K = (double)c.p + 1.0, ne = (double)n_eff;
    if (out->rss_eff > 0 && ne - K - 1.0 > 0) {
        out->aicc = ne * log(out->rss_eff / ne) + 2.0 * K + 2.0 * K * (K + 1.0) / (ne - K - 1.0);
        out->aicc_valid = 1;
    }

    for (size_t k = 0; k < np; k++)
        out->ci95_lo[k] = out->ci95_hi[k] = out->b[k];
    if (res.has_se) {
        double var[CPD_KIN_NPAR];
        int ok = 1;
        for (size_t j = 0; j < c.p; j++) {
            double v = res.cov[j * c.p + j];
            if (spec->raw_n) {
                /* averaged points: (J'J)^-1 = cov / s^2, noise variance from the breaths, and
                 * n / n_eff converts the n averaged points into n_eff independent breaths */
                if (!(res.s > 0)) {
                    ok = 0;
                    break;
                }
                v = v / (res.s * res.s) * (out->rss_eff / (double)out->dof) * ((double)nw / ne);
            }
            var[j] = v;
            if (!(v > 0) || !isfinite(v))
                ok = 0;
        }
        if (ok && out->dof > 0) {
            double tq = gsl_cdf_tdist_Pinv(0.975, (double)out->dof);
            /* the scale that turned the diagonal of res.cov into var applies to every element */
            double scale = var[0] / res.cov[0];
            for (size_t j = 0; j < c.p; j++) {
                size_t k = c.idx[j];
                out->se[k] = sqrt(var[j]);
                out->ci95_lo[k] = out->b[k] - tq * out->se[k];
                out->ci95_hi[k] = out->b[k] + tq * out->se[k];
                for (size_t q = 0; q < c.p; q++)
                    out->cov[k * CPD_KIN_NPAR + c.idx[q]] = res.cov[j * c.p + q] * scale;
            }
            out->has_se = 1;
        }
    }
    return CPD_OK;
}

int cpd_kinetics_compare(const cpd_kinetics_fitres *simple, const cpd_kinetics_fitres *full, cpd_kinetics_cmp *out)
{
    if (!out)
        return CPD_EUSAGE;
    memset(out, 0, sizeof *out);
    if (!simple || !full || !simple->valid || !full->valid || full->p <= simple->p ||
        simple->from_s != full->from_s || simple->to_s != full->to_s || simple->n_eff != full->n_eff ||
        full->dof == 0 || !(full->rss_eff > 0))
        return CPD_EUSAGE;
    out->df1 = full->p - simple->p;
    out->df2 = full->dof;
    double gain = simple->rss_eff - full->rss_eff;
    out->f = gain > 0 ? (gain / (double)out->df1) / (full->rss_eff / (double)out->df2) : 0.0;
    out->p_value = gsl_cdf_fdist_Q(out->f, (double)out->df1, (double)out->df2);
    out->valid = 1;
    if (simple->aicc_valid && full->aicc_valid) {
        out->delta_aicc = full->aicc - simple->aicc;
        out->aicc_valid = 1;
    }
    return CPD_OK;
}

int cpd_kinetics_window(cpd_kinetics_ws *w, const double *t_s, const double *vo2_ml_min, size_t n,
                        const cpd_kinetics_spec *spec, double first_end_s, double step_s,
                        cpd_kinetics_window_res *out)
{
    if (!out)
        return CPD_EUSAGE;
    memset(out, 0, sizeof *out);
    out->reason = CPD_KIN_R_BAD_ARG;
    if (!w || !spec || !t_s || !vo2_ml_min || spec->model != CPD_KIN_MONO || !isfinite(first_end_s) ||
        !(first_end_s > spec->from_s) || !isfinite(step_s) || !(step_s > 0))
        return CPD_EUSAGE;
    double t_last = -INFINITY;
    for (size_t i = 0; i < n; i++)
        if (isfinite(t_s[i]) && t_s[i] > t_last)
            t_last = t_s[i];
    if (!(t_last >= first_end_s)) {
        out->reason = CPD_KIN_R_TOO_SHORT;
        return CPD_ENODATA;
    }
    size_t nwin = (size_t)floor((t_last - first_end_s) / step_s + 1e-9) + 1;
    if (nwin > CPD_KIN_WIN_MAX)
        nwin = CPD_KIN_WIN_MAX;

    cpd_kinetics_spec s = *spec;
    cpd_kinetics_fitres f;
    double wsum = 0.0, wtau = 0.0; /* inverse-variance running plateau */
    int first_rc = CPD_OK, first_reason = CPD_KIN_R_NONE;
    for (size_t k = 0; k < nwin; k++) {
        s.to_s = first_end_s + (double)k * step_s;
        int rc = cpd_kinetics_fit(w, t_s, vo2_ml_min, n, &s, &f);
        if (rc == CPD_OK && !f.has_se) {
            rc = CPD_ENODATA;
            f.reason = CPD_KIN_R_SINGULAR;
        }
        if (rc == CPD_ENOMEM)
            return rc;
        if (rc) {
            /* the first, shortest windows may hold too little of the response to fit: skip them */
            if (out->n == 0) {
                if (first_rc == CPD_OK) {
                    first_rc = rc;
                    first_reason = f.reason;
                }
                continue;
            }
            out->stopped = 1;
            break;
        }
        double tau = f.b[CPD_KIN_TAU1], half = f.ci95_hi[CPD_KIN_TAU1] - tau;
        size_t j = out->n;
        out->end_s[j] = s.to_s;
        out->tau_s[j] = tau;
        out->half_s[j] = half;
        out->n = j + 1;
        if (j > 0) {
            /* both conditions: the early, short windows are noisy, so a rise must be clear of the
             * new window's own uncertainty; and a rise within 10 % is not worth a shorter window */
            double plateau = wtau / wsum;
            if (tau - plateau > half && tau - plateau > 0.10 * plateau) {
                out->stopped = 1;
                break;
            }
        }
        out->chosen = j;
        out->fit = f;
        wsum += 1.0 / (half * half);
        wtau += tau / (half * half);
        /* warm start: neighbouring windows share most of their data */
        memcpy(s.b0, f.b, sizeof s.b0);
    }
    if (out->n == 0) {
        out->reason = first_reason;
        return first_rc;
    }
    out->valid = 1;
    out->reason = CPD_KIN_R_NONE;
    return CPD_OK;
}

/* ---- data handling ---- */

void cpd_kinetics_opts_init(cpd_kinetics_opts *o)
{
    memset(o, 0, sizeof *o);
    o->outlier_sd = 4.0;
    o->outlier_half = 5;
    o->phase1_s = 20.0;
    o->baseline_s = 60.0;
    o->primary = CPD_KIN_PRIMARY_AUTO;
    o->primary_end_s = 180.0;
    o->window_first_s = 60.0;
    o->window_step_s = 10.0;
    o->sc_alpha = 0.01;
    o->steady_delta_ml_min = 100.0;
    o->rising_slope_ml_min_per_min = 80.0;
    o->peak_fraction = 0.95;
}

static int opts_ok(const cpd_kinetics_opts *o)
{
    const double v[] = {o->outlier_sd, o->phase1_s, o->baseline_s, o->baseline_ml_min, o->end_s, o->bin_s,
                        o->primary_end_s, o->window_first_s, o->window_step_s, o->sc_alpha, o->power_w,
                        o->baseline_power_w, o->vo2peak_ml_min, o->steady_delta_ml_min,
                        o->rising_slope_ml_min_per_min, o->peak_fraction};
    if (!finite_all(v, sizeof v / sizeof v[0]))
        return 0;
    return o->outlier_sd > 0 && o->outlier_half >= 1 && o->phase1_s >= 0 && o->baseline_s > 0 &&
           o->baseline_ml_min >= 0 && o->end_s >= 0 && (o->bin_s == 0 || (o->bin_s >= 1 && o->bin_s <= 60)) &&
           o->primary >= CPD_KIN_PRIMARY_AUTO && o->primary <= CPD_KIN_PRIMARY_WINDOW &&
           o->primary_end_s > o->phase1_s && o->window_first_s > o->phase1_s && o->window_step_s > 0 &&
           o->sc_alpha > 0 && o->sc_alpha < 1 && o->power_w >= 0 && o->baseline_power_w >= 0 &&
           o->vo2peak_ml_min >= 0 && o->steady_delta_ml_min > 0 && o->rising_slope_ml_min_per_min > 0 &&
           o->peak_fraction > 0 && o->peak_fraction <= 1;
}

#if defined(__GNUC__)
static int fail(cpd_kinetics_data *d, int rc, int reason, const char *fmt, ...) __attribute__((format(printf, 4, 5)));
#endif
static int fail(cpd_kinetics_data *d, int rc, int reason, const char *fmt, ...)
{
    d->reason = reason;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(d->msg, sizeof d->msg, fmt, ap);
    va_end(ap);
    return rc;
}

/* The repeat's series is usable: VO2 present, times finite and non-decreasing, VO2 finite and > 0. */
static int series_ok(const cpd_gx_series *s, size_t *bad)
{
    const double *v = s->ch[CPD_GX_VO2];
    for (size_t i = 0; i < s->n; i++) {
        if (!isfinite(s->t_s[i]) || !isfinite(v[i]) || !(v[i] > 0) || (i > 0 && s->t_s[i] < s->t_s[i - 1])) {
            *bad = i;
            return 0;
        }
    }
    return 1;
}

int cpd_kinetics_prepare(cpd_kinetics_ws *w, const cpd_kinetics_input *rep, size_t m,
                         const cpd_kinetics_opts *opts, cpd_kinetics_data *out)
{
    if (!out)
        return CPD_EUSAGE;
    memset(out, 0, sizeof *out);
    if (!w || !rep || m == 0 || !opts || !opts_ok(opts))
        return fail(out, CPD_EUSAGE, CPD_KIN_R_BAD_ARG, "invalid arguments or options");
    for (size_t r = 0; r < m; r++)
        if (!rep[r].gx || !rep[r].gx->ch[CPD_GX_VO2] || !isfinite(rep[r].onset_s))
            return fail(out, CPD_EUSAGE, CPD_KIN_R_BAD_ARG, "repeat %zu: no VO2 series or no onset", r + 1);

    int rc = CPD_OK;
    cpd_gx_series **clean = calloc(m, sizeof *clean);
    cpd_gx_series **grid = calloc(m, sizeof *grid);
    if (!clean || !grid) {
        rc = fail(out, CPD_ENOMEM, CPD_KIN_R_NOMEM, "out of memory");
        goto done;
    }
    double base_sum = 0.0, base_sum2 = 0.0, end = INFINITY, gstart = 0.0;
    size_t n_base = 0, n_raw = 0;
    for (size_t r = 0; r < m; r++) {
        const cpd_gx_series *s = rep[r].gx;
        size_t bad = 0;
        if (s->n < 2) {
            rc = fail(out, CPD_ENODATA, CPD_KIN_R_TOO_SHORT, "repeat %zu: fewer than 2 samples", r + 1);
            goto done;
        }
        if (!series_ok(s, &bad)) {
            rc = fail(out, CPD_EDATA, CPD_KIN_R_BAD_SAMPLE,
                      "repeat %zu, sample %zu: time not finite or backwards, or VO2 not a positive number", r + 1,
                      bad + 1);
            goto done;
        }
        double onset = rep[r].onset_s;
        if (onset < s->t_s[0] || onset >= s->t_s[s->n - 1]) {
            rc = fail(out, CPD_EDATA, CPD_KIN_R_ONSET_OUTSIDE, "repeat %zu: onset %.1f s outside the data (%.1f to %.1f s)",
                      r + 1, onset, s->t_s[0], s->t_s[s->n - 1]);
            goto done;
        }
        if (s->n > w->flag_cap) {
            unsigned char *nf = realloc(w->flag, s->n);
            if (!nf) {
                rc = fail(out, CPD_ENOMEM, CPD_KIN_R_NOMEM, "out of memory");
                goto done;
            }
            w->flag = nf;
            w->flag_cap = s->n;
        }
        size_t nflag = 0;
        if ((rc = cpd_gx_outliers(s, CPD_GX_VO2, opts->outlier_half, opts->outlier_sd, w->flag, &nflag))) {
            rc = fail(out, rc, CPD_KIN_R_BAD_ARG, "outlier detection refused its arguments");
            goto done;
        }
        out->n_outliers += nflag;
        clean[r] = cpd_gx_filter(s, w->flag);
        if (!clean[r]) {
            rc = fail(out, CPD_ENOMEM, CPD_KIN_R_NOMEM, "out of memory");
            goto done;
        }
        cpd_gx_shift(clean[r], -onset);
        const cpd_gx_series *c = clean[r];
        if (c->n < 2 || !(c->t_s[c->n - 1] > 0)) {
            rc = fail(out, CPD_ENODATA, CPD_KIN_R_TOO_SHORT, "repeat %zu: no breaths after the onset", r + 1);
            goto done;
        }
        for (size_t i = 0; i < c->n; i++)
            if (c->t_s[i] >= -opts->baseline_s && c->t_s[i] < 0) {
                base_sum += c->ch[CPD_GX_VO2][i];
                base_sum2 += c->ch[CPD_GX_VO2][i] * c->ch[CPD_GX_VO2][i];
                n_base++;
            }
        if (c->t_s[c->n - 1] < end)
            end = c->t_s[c->n - 1];
        if ((rc = cpd_gx_interp(c, 1.0, &grid[r]))) {
            rc = fail(out, rc, rc == CPD_ENOMEM ? CPD_KIN_R_NOMEM : CPD_KIN_R_TOO_SHORT,
                      "repeat %zu: cannot interpolate to 1 s", r + 1);
            goto done;
        }
        if (grid[r]->t_s[0] > gstart)
            gstart = grid[r]->t_s[0];
    }
    if (opts->end_s > 0) {
        if (opts->end_s > end + 1e-9) {
            rc = fail(out, CPD_EDATA, CPD_KIN_R_END_OUTSIDE, "end of exercise %.1f s is beyond the data (%.1f s after onset)",
                      opts->end_s, end);
            goto done;
        }
        end = opts->end_s;
    }
    if (!(end >= 1.0)) {
        rc = fail(out, CPD_EDATA, CPD_KIN_R_END_OUTSIDE, "end of exercise %.1f s is not after the onset", end);
        goto done;
    }
    out->end_s = end;
    out->n_repeats = m;
    out->n_baseline = n_base;
    if (opts->baseline_ml_min > 0) {
        out->baseline_given = 1;
        out->baseline_ml_min = opts->baseline_ml_min;
    } else if (n_base < 3) {
        rc = fail(out, CPD_ENODATA, CPD_KIN_R_NO_BASELINE,
                  "no baseline data: %zu breaths in the %.0f s before the onset (3 needed)", n_base, opts->baseline_s);
        goto done;
    } else {
        double mean = base_sum / (double)n_base;
        double var = (base_sum2 - (double)n_base * mean * mean) / (double)(n_base - 1);
        out->baseline_ml_min = mean;
        out->baseline_sd_ml_min = var > 0 ? sqrt(var) : 0.0;
    }

    /* the raw breaths, repeat after repeat, up to the end of exercise */
    for (size_t r = 0; r < m; r++)
        n_raw += clean[r]->n;
    if ((rc = grow2(&w->raw_t, &w->raw_y, &w->raw_cap, n_raw + 1))) {
        rc = fail(out, rc, CPD_KIN_R_NOMEM, "out of memory");
        goto done;
    }
    n_raw = 0;
    for (size_t r = 0; r < m; r++)
        for (size_t i = 0; i < clean[r]->n && clean[r]->t_s[i] <= end; i++) {
            w->raw_t[n_raw] = clean[r]->t_s[i];
            w->raw_y[n_raw] = clean[r]->ch[CPD_GX_VO2][i];
            n_raw++;
        }
    out->n_breaths = n_raw;
    out->n_raw = n_raw;
    out->raw_t_s = w->raw_t;
    out->raw_vo2_ml_min = w->raw_y;

    /* 1-s ensemble average on the whole seconds every repeat covers, from the onset on */
    size_t g0 = (size_t)gstart, g1 = (size_t)floor(end);
    size_t ng = g1 >= g0 ? g1 - g0 + 1 : 0;
    if (ng < 2) {
        rc = fail(out, CPD_ENODATA, CPD_KIN_R_TOO_SHORT, "fewer than 2 s of data after the onset");
        goto done;
    }
    if ((rc = grow2(&w->grid_t, &w->grid_y, &w->grid_cap, ng))) {
        rc = fail(out, rc, CPD_KIN_R_NOMEM, "out of memory");
        goto done;
    }
    for (size_t k = 0; k < ng; k++) {
        double t = (double)(g0 + k), sum = 0.0;
        for (size_t r = 0; r < m; r++) {
            size_t off = (size_t)(t - grid[r]->t_s[0]);
            if (off >= grid[r]->n)
                off = grid[r]->n - 1; /* end_s within 1e-9 s of a repeat's last whole second */
            sum += grid[r]->ch[CPD_GX_VO2][off];
        }
        w->grid_t[k] = t;
        w->grid_y[k] = sum / (double)m;
    }
    out->n_grid = ng;
    out->grid_t_s = w->grid_t;
    out->grid_vo2_ml_min = w->grid_y;

    if (m == 1 && opts->bin_s == 0) {
        out->fit_on_breaths = 1;
        out->n = n_raw;
        out->t_s = w->raw_t;
        out->vo2_ml_min = w->raw_y;
    } else if (opts->bin_s > 0) {
        size_t nb = (size_t)floor(end / opts->bin_s + 1e-9);
        if ((rc = grow2(&w->pt, &w->py, &w->pcap, nb + 1))) {
            rc = fail(out, rc, CPD_KIN_R_NOMEM, "out of memory");
            goto done;
        }
        size_t k = 0, q = 0;
        for (size_t j = 0; j < nb; j++) {
            double lo = (double)j * opts->bin_s, hi = lo + opts->bin_s;
            double st = 0.0, sy = 0.0;
            size_t c = 0;
            while (q < ng && w->grid_t[q] < lo)
                q++;
            for (size_t i = q; i < ng && w->grid_t[i] < hi; i++) {
                st += w->grid_t[i];
                sy += w->grid_y[i];
                c++;
            }
            if (c) {
                w->pt[k] = st / (double)c;
                w->py[k] = sy / (double)c;
                k++;
            }
        }
        out->n = k;
        out->t_s = w->pt;
        out->vo2_ml_min = w->py;
    } else {
        out->n = ng;
        out->t_s = w->grid_t;
        out->vo2_ml_min = w->grid_y;
    }

done:
    if (clean)
        for (size_t r = 0; r < m; r++)
            cpd_gx_free(clean[r]);
    if (grid)
        for (size_t r = 0; r < m; r++)
            cpd_gx_free(grid[r]);
    free(clean);
    free(grid);
    return rc;
}

/* ---- analysis ---- */

/* Mean of the fit points with lo < t <= hi; 0 when there are none. */
static double mean_between(const double *t, const double *y, size_t n, double lo, double hi, size_t *count)
{
    double s = 0.0;
    size_t c = 0;
    for (size_t i = 0; i < n; i++)
        if (t[i] > lo && t[i] <= hi) {
            s += y[i];
            c++;
        }
    *count = c;
    return c ? s / (double)c : 0.0;
}

/* 30-s mean of the 1-s series ending at T s (the points T-29 .. T). */
static double mean30(const cpd_kinetics_data *d, double T)
{
    size_t c;
    return mean_between(d->grid_t_s, d->grid_vo2_ml_min, d->n_grid, T - 30.0, T, &c);
}

/* Mono-exponential from three starts of (TD1, tau1); the lowest residual among converged fits. */
static int fit_mono(cpd_kinetics_ws *w, const cpd_kinetics_data *d, cpd_kinetics_spec *s, cpd_kinetics_fitres *out)
{
    static const double starts[3][2] = {{10.0, 30.0}, {0.0, 20.0}, {15.0, 50.0}};
    size_t c;
    double top = mean_between(d->t_s, d->vo2_ml_min, d->n, s->to_s - 30.0, s->to_s, &c);
    double a0 = top - d->baseline_ml_min;
    s->b0[CPD_KIN_A1] = fabs(a0) > 1.0 ? a0 : 1.0;
    int best_rc = CPD_ENOCONV;
    cpd_kinetics_fitres f;
    memset(out, 0, sizeof *out);
    out->reason = CPD_KIN_R_NO_CONVERGENCE;
    for (int k = 0; k < 3; k++) {
        s->b0[CPD_KIN_TD1] = starts[k][0];
        s->b0[CPD_KIN_TAU1] = starts[k][1];
        int rc = cpd_kinetics_fit(w, d->t_s, d->vo2_ml_min, d->n, s, &f);
        if (rc == CPD_OK && (best_rc != CPD_OK || f.rss < out->rss)) {
            *out = f;
            best_rc = CPD_OK;
        } else if (rc != CPD_OK && best_rc != CPD_OK) {
            *out = f;
            best_rc = rc;
            if (rc == CPD_ENOMEM || rc == CPD_EUSAGE || f.reason == CPD_KIN_R_TOO_FEW_POINTS)
                break;
        }
    }
    return best_rc;
}

/* Bi-exponential from a grid of slow-component starts: delays around Barstow & Mole's 105 +- 46 s
 * and time constants from a quickly levelling to a nearly linear slow component. For each delay
 * the primary starts at a mono-exponential fitted only up to that delay (at least 100 s), since the
 * slow component inflates the amplitude and tau of any longer mono-exponential and then drags the
 * fit to a late delay; each start's A2 puts the start curve through the end-exercise excess. The
 * unit step on discrete breath times makes the residual piecewise smooth in TD2, with local minima
 * a breath apart: hence many starts and the lowest residual. */
static int fit_bi(cpd_kinetics_ws *w, const cpd_kinetics_data *d, const cpd_kinetics_spec *mono_spec,
                  const cpd_kinetics_fitres *prim, double end_vo2, cpd_kinetics_fitres *out)
{
    static const double td2[4] = {60.0, 90.0, 130.0, 170.0}, tau2[3] = {60.0, 200.0, 600.0};
    int best_rc = CPD_ENOCONV;
    cpd_kinetics_fitres f, pm;
    memset(out, 0, sizeof *out);
    out->reason = CPD_KIN_R_NO_CONVERGENCE;
    for (int i = 0; i < 4; i++) {
        if (td2[i] >= d->end_s - 60.0)
            continue;
        cpd_kinetics_spec sm = *mono_spec;
        memcpy(sm.b0, prim->b, sizeof sm.b0);
        sm.to_s = fmax(td2[i], 100.0);
        int rc = cpd_kinetics_fit(w, d->t_s, d->vo2_ml_min, d->n, &sm, &pm);
        if (rc == CPD_ENOMEM)
            return rc;
        const double *pb = rc == CPD_OK ? pm.b : prim->b;
        cpd_kinetics_spec s = *mono_spec;
        s.model = CPD_KIN_BI;
        s.to_s = d->end_s;
        memcpy(s.b0, pb, 4 * sizeof(double));
        double a2 = fmax(end_vo2 - (pb[CPD_KIN_BASE] + pb[CPD_KIN_A1]), fmax(0.05 * fabs(pb[CPD_KIN_A1]), 50.0));
        for (int j = 0; j < 3; j++) {
            s.b0[CPD_KIN_TD2] = td2[i];
            s.b0[CPD_KIN_TAU2] = tau2[j];
            s.b0[CPD_KIN_A2] = a2 / -expm1(-(d->end_s - td2[i]) / tau2[j]);
            rc = cpd_kinetics_fit(w, d->t_s, d->vo2_ml_min, d->n, &s, &f);
            if (rc == CPD_ENOMEM)
                return rc;
            /* prefer fits with standard errors: a slow component without them cannot be tested */
            int better = rc == CPD_OK && (best_rc != CPD_OK || f.has_se > out->has_se ||
                                          (f.has_se == out->has_se && f.rss < out->rss));
            if (better) {
                *out = f;
                best_rc = CPD_OK;
            }
        }
    }
    return best_rc;
}

/* The bout lasts up to the mark, allowing for the last breath falling just before it. */
static int reaches(double end_s, double mark_s)
{
    return end_s >= mark_s - CPD_KIN_END_TOL_S;
}

/* A2' = A2 (1 - e^(-(T - TD2)/tau2)) and its standard error by the delta method. */
static double slow_at(const cpd_kinetics_fitres *bi, double T, double *se)
{
    const double *b = bi->b;
    double g[3];
    component_deriv(b[CPD_KIN_A2], b[CPD_KIN_TD2], b[CPD_KIN_TAU2], T, g);
    double var = 0.0;
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++)
            var += g[i] * g[j] * bi->cov[(CPD_KIN_A2 + i) * CPD_KIN_NPAR + CPD_KIN_A2 + j];
    *se = var > 0 ? sqrt(var) : 0.0;
    return component(b[CPD_KIN_A2], b[CPD_KIN_TD2], b[CPD_KIN_TAU2], T);
}

static int afail(cpd_kinetics_result *o, int rc, int reason, const char *msg)
{
    o->reason = reason;
    snprintf(o->msg, sizeof o->msg, "%s", msg);
    return rc;
}

int cpd_kinetics_analyse(cpd_kinetics_ws *w, const cpd_kinetics_input *rep, size_t m,
                         const cpd_kinetics_opts *opts, cpd_kinetics_result *out)
{
    if (!out)
        return CPD_EUSAGE;
    memset(out, 0, sizeof *out);
    cpd_kinetics_opts def;
    if (!opts) {
        cpd_kinetics_opts_init(&def);
        opts = &def;
    }
    if (!w)
        return afail(out, CPD_EUSAGE, CPD_KIN_R_BAD_ARG, "no workspace");
    cpd_kinetics_data *d = &w->data;
    int rc = cpd_kinetics_prepare(w, rep, m, opts, d);
    out->n_repeats = d->n_repeats;
    out->n_breaths = d->n_breaths;
    out->n_outliers = d->n_outliers;
    out->n_baseline = d->n_baseline;
    out->baseline_ml_min = d->baseline_ml_min;
    out->baseline_sd_ml_min = d->baseline_sd_ml_min;
    out->end_s = d->end_s;
    if (rc)
        return afail(out, rc, d->reason, d->msg);
    if (d->end_s < CPD_KIN_MIN_BOUT_S) {
        snprintf(out->msg, sizeof out->msg, "bout too short: %.0f s of exercise, %.0f s needed", d->end_s,
                 CPD_KIN_MIN_BOUT_S);
        out->reason = CPD_KIN_R_TOO_SHORT;
        return CPD_ENODATA;
    }

    cpd_kinetics_spec s;
    cpd_kinetics_spec_init(&s, CPD_KIN_MONO);
    s.fixed = CPD_KIN_BIT(CPD_KIN_BASE);
    s.b0[CPD_KIN_BASE] = d->baseline_ml_min;
    s.from_s = opts->phase1_s;
    s.to_s = d->end_s;
    if (!d->fit_on_breaths) {
        s.raw_t_s = d->raw_t_s;
        s.raw_vo2_ml_min = d->raw_vo2_ml_min;
        s.raw_n = d->n_raw;
    }
    s.noise_sd_ml_min = d->baseline_sd_ml_min;

    rc = fit_mono(w, d, &s, &out->mono);
    if (rc) {
        char msg[CPD_MSG_MAX];
        snprintf(msg, sizeof msg, "primary mono-exponential fit failed: %s", cpd_kinetics_reason_text(out->mono.reason));
        return afail(out, rc, out->mono.reason, msg);
    }
    if (!out->mono.has_se) {
        memset(&out->mono, 0, sizeof out->mono);
        out->mono.reason = CPD_KIN_R_SINGULAR;
        return afail(out, CPD_ENODATA, CPD_KIN_R_SINGULAR,
                     "primary mono-exponential: parameters not identifiable from these data");
    }
    {
        /* a response must be clear of 0 and larger than one breath-noise SD: with a free delay and
         * tau a flat record is otherwise "fitted" by a step of a few tens of mL/min at some breath,
         * and tau's precision scales with noise / amplitude (Lamarra et al. 1987) */
        double tq = gsl_cdf_tdist_Pinv(0.975, (double)out->mono.dof), a1 = fabs(out->mono.b[CPD_KIN_A1]);
        if (!(a1 > tq * out->mono.se[CPD_KIN_A1]) || !(a1 > d->baseline_sd_ml_min)) {
            char msg[CPD_MSG_MAX];
            snprintf(msg, sizeof msg,
                     "no VO2 response: primary amplitude %.0f +- %.0f mL/min against a breath noise SD of %.0f mL/min",
                     out->mono.b[CPD_KIN_A1], tq * out->mono.se[CPD_KIN_A1], d->baseline_sd_ml_min);
            memset(&out->mono, 0, sizeof out->mono);
            out->mono.reason = CPD_KIN_R_NO_RESPONSE;
            return afail(out, CPD_ENODATA, CPD_KIN_R_NO_RESPONSE, msg);
        }
    }
    if (opts->primary_end_s < d->end_s) {
        cpd_kinetics_spec se = s;
        se.to_s = opts->primary_end_s;
        if (fit_mono(w, d, &se, &out->mono_end) != CPD_OK)
            out->mono_end.valid = 0;
    } else {
        out->mono_end = out->mono;
    }
    out->end_vo2_ml_min = mean30(d, floor(d->end_s));

    if (reaches(d->end_s, CPD_KIN_SC_MIN_S)) {
        const cpd_kinetics_fitres *prim = out->mono_end.valid ? &out->mono_end : &out->mono;
        rc = fit_bi(w, d, &s, prim, out->end_vo2_ml_min, &out->bi);
        if (rc == CPD_ENOMEM)
            return afail(out, rc, CPD_KIN_R_NOMEM, "out of memory");
        if (rc == CPD_OK && out->bi.has_se && cpd_kinetics_compare(&out->mono, &out->bi, &out->sc_test) == CPD_OK) {
            out->sc_tested = 1;
            /* A2 and tau2 trade off when the slow component is still rising (nearly linear), but the
             * amplitude it reaches by the end is well determined: test that one */
            const cpd_kinetics_fitres *b = &out->bi;
            double se = 0.0, a2end = slow_at(b, d->end_s, &se);
            double tq = gsl_cdf_tdist_Pinv(0.975, (double)b->dof);
            out->sc_supported = out->sc_test.p_value < opts->sc_alpha && b->b[CPD_KIN_TD2] > b->b[CPD_KIN_TD1] &&
                                se > 0 && a2end - tq * se > 0;
        }
    } else {
        out->bi.reason = CPD_KIN_R_TOO_SHORT;
    }
    rc = CPD_OK;

    if (d->end_s >= opts->window_first_s) {
        cpd_kinetics_spec sw = s;
        memcpy(sw.b0, out->mono.b, sizeof sw.b0);
        if (cpd_kinetics_window(w, d->t_s, d->vo2_ml_min, d->n, &sw, opts->window_first_s, opts->window_step_s,
                                &out->window) != CPD_OK)
            out->window.valid = 0;
    } else {
        out->window.reason = CPD_KIN_R_TOO_SHORT;
    }

    const cpd_kinetics_fitres *pf = &out->mono;
    out->primary.fit = "mono";
    if (out->sc_supported) {
        pf = &out->bi;
        out->primary.fit = "bi";
        if (opts->primary == CPD_KIN_PRIMARY_MONO_END && out->mono_end.valid && out->mono_end.has_se) {
            pf = &out->mono_end;
            out->primary.fit = "mono_end";
        } else if (opts->primary == CPD_KIN_PRIMARY_WINDOW && out->window.valid) {
            pf = &out->window.fit;
            out->primary.fit = "window";
        }
    }
    double base = pf->b[CPD_KIN_BASE], a1 = pf->b[CPD_KIN_A1];
    out->primary.amplitude_ml_min = a1;
    out->primary.tau_s = pf->b[CPD_KIN_TAU1];
    out->primary.tau_se_s = pf->se[CPD_KIN_TAU1];
    out->primary.tau_ci95_s[0] = pf->ci95_lo[CPD_KIN_TAU1];
    out->primary.tau_ci95_s[1] = pf->ci95_hi[CPD_KIN_TAU1];
    out->primary.delay_s = pf->b[CPD_KIN_TD1];
    out->primary.mrt_s = pf->b[CPD_KIN_TD1] + pf->b[CPD_KIN_TAU1];
    /* the area between the square-wave demand A1 and the delayed exponential is A1 (TD1 + tau1);
     * MRT is in s and A1 in mL/min, hence / 60 */
    out->primary.o2_deficit_ml = a1 * out->primary.mrt_s / 60.0;
    if (opts->power_w > opts->baseline_power_w) {
        out->primary.gain_ml_min_w = a1 / (opts->power_w - opts->baseline_power_w);
        out->primary.gain_valid = 1;
    }
    if (out->sc_supported) {
        const double *b = out->bi.b;
        out->slow.present = 1;
        out->slow.asymptote_ml_min = b[CPD_KIN_A2];
        out->slow.amplitude_ml_min = slow_at(&out->bi, d->end_s, &out->slow.amplitude_se_ml_min);
        out->slow.delay_s = b[CPD_KIN_TD2];
        out->slow.tau_s = b[CPD_KIN_TAU2];
    }

    out->end_minus_primary_ml_min = out->end_vo2_ml_min - (base + a1);
    if (out->end_vo2_ml_min > base) {
        out->end_minus_primary_pct = 100.0 * out->end_minus_primary_ml_min / (out->end_vo2_ml_min - base);
        out->end_minus_primary_pct_valid = 1;
    }
    if (opts->vo2peak_ml_min > 0) {
        out->end_pct_vo2peak = 100.0 * out->end_vo2_ml_min / opts->vo2peak_ml_min;
        out->end_pct_valid = 1;
    }
    if (reaches(d->end_s, 360.0)) {
        out->delta_6_3_ml_min = mean30(d, 360.0) - mean30(d, 180.0);
        out->delta_valid = 1;
    }
    if (reaches(d->end_s, 240.0)) {
        /* the slope of the breaths themselves (every repeat's final 2 min): regressing the 1-s
         * points would overstate its precision */
        size_t cnt = 0;
        if ((rc = grow2(&w->ft, &w->fy, &w->fcap, d->n_raw + 1)))
            return afail(out, rc, CPD_KIN_R_NOMEM, "out of memory");
        double *xt = w->ft, *xy = w->fy;
        for (size_t i = 0; i < d->n_raw; i++)
            if (d->raw_t_s[i] >= d->end_s - 120.0 && d->raw_t_s[i] <= d->end_s) {
                xt[cnt] = d->raw_t_s[i];
                xy[cnt] = d->raw_vo2_ml_min[i];
                cnt++;
            }
        cpd_linfit_result lr;
        if (cnt >= 3 && cpd_linfit_line(xt, xy, cnt, &lr) == CPD_OK && lr.dof > 0) {
            double tq = gsl_cdf_tdist_Pinv(0.975, (double)lr.dof);
            out->end_slope_ml_min_per_min = 60.0 * lr.b[1];
            out->end_slope_ci95[0] = 60.0 * (lr.b[1] - tq * lr.se[1]);
            out->end_slope_ci95[1] = 60.0 * (lr.b[1] + tq * lr.se[1]);
            out->slope_valid = 1;
        }
    }

    if (out->end_pct_valid && out->end_vo2_ml_min >= opts->peak_fraction * opts->vo2peak_ml_min) {
        out->domain = CPD_KIN_SEVERE;
        out->domain_rule = CPD_KIN_RULE_PEAK;
    } else if (!reaches(d->end_s, CPD_KIN_SC_MIN_S)) {
        out->domain = CPD_KIN_UNDETERMINED;
        out->domain_rule = CPD_KIN_RULE_TOO_SHORT;
    } else if (out->slope_valid && out->end_slope_ml_min_per_min > opts->rising_slope_ml_min_per_min) {
        out->domain = CPD_KIN_SEVERE;
        out->domain_rule = CPD_KIN_RULE_RISING;
    } else if (out->sc_supported) {
        out->domain = CPD_KIN_HEAVY;
        out->domain_rule = CPD_KIN_RULE_SLOW;
    } else if (out->delta_valid && out->delta_6_3_ml_min >= opts->steady_delta_ml_min) {
        out->domain = CPD_KIN_HEAVY;
        out->domain_rule = CPD_KIN_RULE_DELTA;
    } else {
        out->domain = CPD_KIN_MODERATE;
        out->domain_rule = CPD_KIN_RULE_STEADY;
    }
    return CPD_OK;
}

/* ---- domain verification ---- */

static void pct_phrase(char *buf, size_t len, double p, double b, const char *name)
{
    double pct = 100.0 * (p - b) / b;
    snprintf(buf, len, "bout at %.1f %% %s %s", fabs(pct), pct < 0 ? "below" : "above", name);
}

int cpd_kinetics_verify_domain(int observed, double power_w, double get_power_w, double cp_w,
                               cpd_kinetics_check *out)
{
    if (!out)
        return CPD_EUSAGE;
    memset(out, 0, sizeof *out);
    out->agreement = -1;
    if (!isfinite(power_w) || !(power_w > 0) || observed < 0 || observed >= CPD_KIN_NDOMAIN ||
        !isfinite(get_power_w) || !isfinite(cp_w)) {
        snprintf(out->message, sizeof out->message, "invalid power or domain");
        return CPD_EUSAGE;
    }
    int has_get = get_power_w > 0, has_cp = cp_w > 0;
    if (!has_get && !has_cp) {
        snprintf(out->message, sizeof out->message, "no GET or CP to verify the bout against");
        return CPD_ENODATA;
    }
    if (has_get && has_cp && get_power_w >= cp_w) {
        snprintf(out->message, sizeof out->message, "GET power (%.0f W) is not below CP (%.0f W)", get_power_w, cp_w);
        return CPD_EDATA;
    }
    const unsigned MOD = 1u << CPD_KIN_MODERATE, HEAVY = 1u << CPD_KIN_HEAVY, SEV = 1u << CPD_KIN_SEVERE;
    /* the boundary the bout lies nearest on the side that decides the prediction */
    char where[128];
    if (has_get && power_w < get_power_w) {
        out->predicted_mask = MOD;
        pct_phrase(where, sizeof where, power_w, get_power_w, "GET");
    } else if (has_cp && power_w >= cp_w) {
        out->predicted_mask = SEV;
        pct_phrase(where, sizeof where, power_w, cp_w, "CP");
    } else if (has_get && has_cp) {
        out->predicted_mask = HEAVY; /* GET <= P < CP */
        pct_phrase(where, sizeof where, power_w,
                   observed == CPD_KIN_MODERATE ? get_power_w : cp_w, observed == CPD_KIN_MODERATE ? "GET" : "CP");
    } else if (has_get) {
        out->predicted_mask = HEAVY | SEV; /* above GET, CP unknown */
        pct_phrase(where, sizeof where, power_w, get_power_w, "GET");
    } else {
        out->predicted_mask = MOD | HEAVY; /* below CP, GET unknown */
        pct_phrase(where, sizeof where, power_w, cp_w, "CP");
    }
    out->predicted = out->predicted_mask == MOD     ? CPD_KIN_MODERATE
                     : out->predicted_mask == HEAVY ? CPD_KIN_HEAVY
                     : out->predicted_mask == SEV   ? CPD_KIN_SEVERE
                                                    : CPD_KIN_UNDETERMINED;
    if (observed == CPD_KIN_UNDETERMINED) {
        snprintf(out->message, sizeof out->message, "%s: the response did not determine the domain, nothing to verify",
                 where);
        return CPD_OK;
    }
    const char *obs = cpd_kinetics_domain_name(observed);
    if (out->predicted_mask & (1u << observed)) {
        out->agreement = 1;
        snprintf(out->message, sizeof out->message, "%s: %s, as the boundaries predict", where, obs);
        return CPD_OK;
    }
    out->agreement = 0;
    const char *what = observed == CPD_KIN_MODERATE ? "showed no slow component"
                       : observed == CPD_KIN_HEAVY  ? (out->predicted_mask & SEV ? "stabilised" : "showed a slow component")
                                                    : "did not stabilise";
    const char *cause;
    if (out->predicted_mask == MOD)
        cause = observed == CPD_KIN_SEVERE && has_cp ? "GET and CP may be overestimated" : "GET may be overestimated";
    else if (out->predicted_mask == SEV)
        cause = observed == CPD_KIN_MODERATE && has_get ? "CP and GET may be underestimated" : "CP may be underestimated";
    else if (observed == CPD_KIN_MODERATE)
        cause = "GET may be underestimated";
    else
        cause = "CP may be overestimated";
    snprintf(out->message, sizeof out->message, "%s %s: %s", where, what, cause);
    return CPD_OK;
}

/* ---- time to reach VO2max (the severe-extreme boundary) ---- */

int cpd_kinetics_time_to_vo2max(const cpd_kinetics_result *r, cpd_kinetics_tvo2max *out)
{
    if (!r || !out)
        return CPD_EUSAGE;
    memset(out, 0, sizeof *out);
    const cpd_kinetics_fitres *f = NULL;
    double factor = 1.0;
    if (r->bi.valid && r->bi.has_se && r->bi.b[CPD_KIN_TD2] > r->bi.b[CPD_KIN_TD1]) {
        /* above CP a slow component is expected; the F-test decides only whether it is reported */
        f = &r->bi;
        out->fit = "bi";
        factor = CPD_KIN_TVO2MAX_BI_SE_FACTOR;
    } else if (r->mono_end.valid && r->mono_end.has_se) {
        f = &r->mono_end;
        out->fit = "mono_end";
    } else if (r->mono.valid && r->mono.has_se) {
        f = &r->mono;
        out->fit = "mono";
    } else
        return CPD_ENODATA;
    const double *c = f->cov;
    double var = c[CPD_KIN_TD1 * CPD_KIN_NPAR + CPD_KIN_TD1] + 16.0 * c[CPD_KIN_TAU1 * CPD_KIN_NPAR + CPD_KIN_TAU1] +
                 8.0 * c[CPD_KIN_TD1 * CPD_KIN_NPAR + CPD_KIN_TAU1];
    out->tau_s = f->b[CPD_KIN_TAU1];
    out->tau_se_s = f->se[CPD_KIN_TAU1] * factor;
    out->delay_s = f->b[CPD_KIN_TD1];
    out->t_s = out->delay_s + 4.0 * out->tau_s;
    out->se_s = var > 0 ? factor * sqrt(var) : 0.0;
    out->dof = f->dof;
    if (!(out->t_s > 0) || !isfinite(out->se_s))
        return CPD_ENODATA;
    out->valid = 1;
    return CPD_OK;
}

int cpd_kinetics_verify_bout(int observed, double end_s, double power_w, double get_power_w, double cp_w,
                             cpd_kinetics_check *out)
{
    int rc = cpd_kinetics_verify_domain(observed, power_w, get_power_w, cp_w, out);
    if (rc != CPD_OK || !(isfinite(end_s) && end_s > 0))
        return rc;
    if (out->agreement == 0 && out->predicted_mask == (1u << CPD_KIN_SEVERE) && observed == CPD_KIN_HEAVY &&
        end_s < CPD_KIN_VERIFY_LEVEL_S) {
        out->agreement = -1;
        snprintf(out->message, sizeof out->message,
                 "bout at %.1f %% above CP levelled off within its %.1f min, but a bout shorter than %.0f min cannot "
                 "tell the heavy domain from the low severe one (just above CP, VO2 can take well over 10 min to "
                 "reach its maximum): nothing to conclude about CP; a bout of at least %.0f min can",
                 100.0 * (power_w - cp_w) / cp_w, end_s / 60.0, CPD_KIN_VERIFY_LEVEL_S / 60.0,
                 CPD_KIN_VERIFY_LEVEL_S / 60.0);
    }
    return CPD_OK;
}
