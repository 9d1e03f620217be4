/* lactate.c: blood-lactate thresholds from a step test. Stage counts are small, so everything lives
 * on the stack; the cubic and the two-segment fits come from linfit and the ramp module. */
#include "cpdomain/lactate.h"
#include "cpdomain/linfit.h"
#include "cpdomain/status.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

const char *cpd_lactate_reason_text(int reason)
{
    static const char *const text[CPD_LACTATE_NREASONS] = {
        [CPD_LACTATE_R_NONE] = "available",
        [CPD_LACTATE_R_FEW_STAGES] = "too few stages",
        [CPD_LACTATE_R_NO_BREAK] = "no breakpoint",
        [CPD_LACTATE_R_OUTSIDE] = "outside the measured range",
        [CPD_LACTATE_R_NO_RISE] = "no rise above 0.4 mmol/L between stages",
        [CPD_LACTATE_R_NOT_REACHED] = "4 mmol/L not reached",
        [CPD_LACTATE_R_ABOVE_AT_START] = "first stage already at or above 4 mmol/L",
        [CPD_LACTATE_R_NOT_CONVEX] = "the curve does not bend below the line",
        [CPD_LACTATE_R_FIT_FAILED] = "regression failed",
    };
    if (reason < 0 || reason >= CPD_LACTATE_NREASONS)
        return "unknown reason";
    return text[reason];
}

static void say(char *buf, size_t len, const char *fmt, ...)
{
    if (!buf)
        return;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(buf, len, fmt, ap);
    va_end(ap);
}

static void missing(cpd_lactate_value *v, int reason, const char *fmt, ...)
{
    memset(v, 0, sizeof *v);
    v->status = CPD_LACTATE_NOT_FOUND;
    v->reason = reason;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(v->why, sizeof v->why, fmt, ap);
    va_end(ap);
}

/* Marks v found at x with lactate la; HR linear between the stages that bracket x. */
static void found(cpd_lactate_value *v, double x, double la, const double *xs, const double *hr, size_t n)
{
    memset(v, 0, sizeof *v);
    v->status = CPD_LACTATE_FOUND;
    v->intensity = x;
    v->lactate_mmol_l = la;
    if (!hr)
        return;
    v->has_hr = 1;
    v->hr_bpm = cpd_lactate_stage_interp(xs, hr, n, x);
}

double cpd_lactate_stage_interp(const double *xs, const double *ys, size_t n, double x)
{
    if (n == 0)
        return 0;
    if (n == 1)
        return ys[0];
    size_t i = 0;
    while (i + 2 < n && xs[i + 1] < x)
        i++;
    double f = (x - xs[i]) / (xs[i + 1] - xs[i]);
    return ys[i] + f * (ys[i + 1] - ys[i]);
}

static double cubic_at(const double *c, double x)
{
    return c[0] + x * (c[1] + x * (c[2] + x * c[3]));
}

/* The x in [xa, xb] where the cubic lies farthest below the line through (xa, ya) and (xb, yb):
 * a root of La'(x) = m, i.e. 3 c3 x^2 + 2 c2 x + (c1 - m) = 0 (Cheng et al. 1992; the perpendicular
 * distance is the vertical one times a constant because the line is straight). */
static void dmax_on(cpd_lactate_value *v, double *line, const double *c, double xa, double ya, double xb,
                    double yb, const double *xs, const double *hr, size_t n)
{
    double m = (yb - ya) / (xb - xa);
    line[0] = ya - m * xa;
    line[1] = m;
    double A = 3 * c[3], B = 2 * c[2], C = c[1] - m;
    double X = fabs(xa) > fabs(xb) ? fabs(xa) : fabs(xb);
    double r[2];
    int nr = 0;
    if (fabs(A) * X * X <= 1e-12 * (fabs(B) * X + fabs(C))) {
        if (B != 0)
            r[nr++] = -C / B;
    } else {
        double disc = B * B - 4 * A * C;
        if (disc >= 0) {
            double q = -0.5 * (B + copysign(sqrt(disc), B));
            r[nr++] = q / A;
            if (q != 0)
                r[nr++] = C / q;
        }
    }
    int best = -1;
    double dbest = 0;
    for (int k = 0; k < nr; k++) {
        if (!(r[k] >= xa && r[k] <= xb))
            continue;
        double d = line[0] + m * r[k] - cubic_at(c, r[k]);
        if (best < 0 || d > dbest) {
            best = k;
            dbest = d;
        }
    }
    if (best < 0) {
        missing(v, CPD_LACTATE_R_OUTSIDE, "no stationary distance between %.4g and %.4g", xa, xb);
        return;
    }
    if (!(dbest > 0)) {
        missing(v, CPD_LACTATE_R_NOT_CONVEX, "the cubic does not lie below the line (%.3g mmol/L)", dbest);
        return;
    }
    found(v, r[best], cubic_at(c, r[best]), xs, hr, n);
}

static int check(const double *x, const double *la, const double *hr, size_t n, char *msg)
{
    if (n > CPD_LACTATE_NMAX) {
        say(msg, CPD_MSG_MAX, "%zu stages; at most %d", n, CPD_LACTATE_NMAX);
        return CPD_EDATA;
    }
    if (n < CPD_LACTATE_MIN_STAGES) {
        say(msg, CPD_MSG_MAX, "%zu stages; need at least %d", n, CPD_LACTATE_MIN_STAGES);
        return CPD_ENODATA;
    }
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(x[i]) || !(x[i] > 0)) {
            say(msg, CPD_MSG_MAX, "stage %zu: intensity %g must be positive", i + 1, x[i]);
            return CPD_EDATA;
        }
        if (i > 0 && !(x[i] > x[i - 1])) {
            say(msg, CPD_MSG_MAX, "stage %zu: intensity %g does not increase (previous %g)", i + 1, x[i], x[i - 1]);
            return CPD_EDATA;
        }
        if (!isfinite(la[i]) || !(la[i] > 0) || la[i] > CPD_LACTATE_MAX_MMOL_L) {
            say(msg, CPD_MSG_MAX, "stage %zu: lactate %g outside 0..%.0f mmol/L", i + 1, la[i], CPD_LACTATE_MAX_MMOL_L);
            return CPD_EDATA;
        }
        if (hr && (!isfinite(hr[i]) || hr[i] < 20 || hr[i] > 250)) {
            say(msg, CPD_MSG_MAX, "stage %zu: HR %g outside 20..250 beats/min", i + 1, hr[i]);
            return CPD_EDATA;
        }
    }
    return CPD_OK;
}

static void loglog(cpd_lactate_result *r, const double *x, const double *la, const double *hr, size_t n)
{
    double lx[CPD_LACTATE_NMAX], ly[CPD_LACTATE_NMAX];
    size_t ms = n >= 6 ? 3 : 2;
    if (n < 2 * ms) {
        missing(&r->lt1, CPD_LACTATE_R_FEW_STAGES, "log-log needs at least 4 stages, has %zu", n);
        return;
    }
    for (size_t i = 0; i < n; i++) {
        lx[i] = log(x[i]);
        ly[i] = log(la[i]);
    }
    if (cpd_linfit_twoseg_fit(lx, ly, n, ms, &r->loglog) != CPD_OK) {
        missing(&r->lt1, CPD_LACTATE_R_FIT_FAILED, "no two-segment fit of log lactate on log intensity");
        return;
    }
    r->has_loglog = 1;
    const cpd_linfit_twoseg *f = &r->loglog;
    if (!(f->s2 > f->s1)) {
        missing(&r->lt1, CPD_LACTATE_R_NO_BREAK, "log-log: upper slope %.3g not above lower %.3g", f->s2, f->s1);
        return;
    }
    if (!f->has_cross || f->x_cross < f->x_lo || f->x_cross > f->x_hi) {
        missing(&r->lt1, CPD_LACTATE_R_OUTSIDE, "log-log: the lines cross outside the stages");
        return;
    }
    found(&r->lt1, exp(f->x_cross), exp(f->y_cross), x, hr, n);
}

static void obla(cpd_lactate_result *r, const double *x, const double *la, const double *hr, size_t n)
{
    const double lvl = CPD_LACTATE_OBLA_MMOL_L;
    size_t i = 0;
    while (i < n && la[i] < lvl)
        i++;
    if (i == n) {
        missing(&r->obla, CPD_LACTATE_R_NOT_REACHED, "highest lactate below %.0f mmol/L", lvl);
        return;
    }
    if (i == 0) {
        missing(&r->obla, CPD_LACTATE_R_ABOVE_AT_START, "first stage at %.2f mmol/L", la[0]);
        return;
    }
    double f = (lvl - la[i - 1]) / (la[i] - la[i - 1]);
    found(&r->obla, x[i - 1] + f * (x[i] - x[i - 1]), lvl, x, hr, n);
}

int cpd_lactate_analyse(const double *intensity, const double *lactate, const double *hr, size_t n,
                        cpd_lactate_result *res, char *msg)
{
    if (msg)
        msg[0] = '\0';
    if (!intensity || !lactate || !res) {
        say(msg, CPD_MSG_MAX, "missing argument");
        return CPD_EUSAGE;
    }
    memset(res, 0, sizeof *res);
    int rc = check(intensity, lactate, hr, n, msg);
    if (rc)
        return rc;
    const double *x = intensity, *la = lactate;
    res->n = n;
    loglog(res, x, la, hr, n);
    obla(res, x, la, hr, n);

    cpd_linfit_result cf;
    if (n < 4) {
        missing(&res->dmax, CPD_LACTATE_R_FEW_STAGES, "Dmax needs at least 4 stages for the cubic, has %zu", n);
        res->dmax_mod = res->dmax;
        return CPD_OK;
    }
    if (cpd_linfit_poly(x, la, n, 3, &cf) != CPD_OK) {
        missing(&res->dmax, CPD_LACTATE_R_FIT_FAILED, "the cubic cannot be fitted");
        res->dmax_mod = res->dmax;
        return CPD_OK;
    }
    res->has_cubic = 1;
    memcpy(res->cubic, cf.b, sizeof res->cubic);
    dmax_on(&res->dmax, res->dmax_line, res->cubic, x[0], la[0], x[n - 1], la[n - 1], x, hr, n);

    size_t i = 1;
    while (i < n && !(la[i] - la[i - 1] > CPD_LACTATE_RISE_MMOL_L))
        i++;
    if (i == n) {
        missing(&res->dmax_mod, CPD_LACTATE_R_NO_RISE, "no rise above %.1f mmol/L between consecutive stages",
                CPD_LACTATE_RISE_MMOL_L);
        return CPD_OK;
    }
    res->mod_start = i - 1;
    dmax_on(&res->dmax_mod, res->dmax_mod_line, res->cubic, x[i - 1], la[i - 1], x[n - 1], la[n - 1], x, hr, n);
    return CPD_OK;
}
