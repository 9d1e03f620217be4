/* allout.c: the 3-minute all-out test: end power, work above it and the all-out checks (allout.h). */
#include "cpdomain/allout.h"
#include "cpdomain/status.h"

#include <gsl/gsl_cdf.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

static double mean_of(const double *p, size_t from, size_t to)
{
    double s = 0;
    for (size_t i = from; i < to; i++)
        s += p[i];
    return s / (double)(to - from);
}

int cpd_allout_analyse(const double *power_w, size_t n, size_t start_s, cpd_allout_result *r, char *msg)
{
    memset(r, 0, sizeof *r);
    if (msg)
        msg[0] = '\0';
    if (!power_w) {
        if (msg)
            snprintf(msg, CPD_MSG_MAX, "no power values");
        return CPD_EUSAGE;
    }
    if (start_s > n || n - start_s < CPD_ALLOUT_TEST_S) {
        if (msg)
            snprintf(msg, CPD_MSG_MAX, "a 3-minute all-out test needs %d s of power from its start; %zu s follow %zu s",
                     CPD_ALLOUT_TEST_S, start_s < n ? n - start_s : 0, start_s);
        return CPD_ENODATA;
    }
    const double *p = power_w + start_s;
    for (size_t i = 0; i < CPD_ALLOUT_TEST_S; i++)
        if (!isfinite(p[i]) || p[i] < 0) {
            if (msg)
                snprintf(msg, CPD_MSG_MAX, "second %zu of the test: power must be a finite number >= 0", i);
            return CPD_EDATA;
        }

    const size_t T = CPD_ALLOUT_TEST_S, E = T - CPD_ALLOUT_END_S;
    double ep = mean_of(p, E, T);
    r->end_power_w = ep;
    r->peak_power_w = p[0];
    for (size_t i = 0; i < T; i++) {
        r->total_work_j += p[i];
        if (p[i] > ep)
            r->work_above_end_j += p[i] - ep;
        if (p[i] > r->peak_power_w) {
            r->peak_power_w = p[i];
            r->peak_at_s = i;
        }
        if (p[i] == 0)
            r->zero_s++;
    }
    r->mean_power_w = r->total_work_j / (double)T;
    r->first30_mean_w = mean_of(p, 0, 30);
    r->mean_120_150_w = mean_of(p, 120, 150);

    /* least-squares line through (i, p_i), i = 150 .. 179, centred on the middle second */
    double xm = (double)(E + T - 1) / 2, sxy = 0, sxx = 0, ss = 0;
    for (size_t i = E; i < T; i++) {
        double x = (double)i - xm;
        sxy += x * (p[i] - ep);
        sxx += x * x;
        ss += (p[i] - ep) * (p[i] - ep);
    }
    r->end_slope_w_s = sxy / sxx;
    r->end_drift_w = r->end_slope_w_s * CPD_ALLOUT_END_S;
    if (ep > 0) {
        r->has_end_cv = 1;
        r->end_cv_pct = 100 * sqrt(ss / CPD_ALLOUT_END_S) / ep;
    }

    {
        double se = sqrt(ss / (CPD_ALLOUT_END_S - 1)) / sqrt((double)CPD_ALLOUT_END_S);
        double q = gsl_cdf_tdist_Pinv(0.975, CPD_ALLOUT_END_S - 1);
        size_t above = 0;
        for (size_t i = 0; i < T; i++)
            above += p[i] > ep;
        r->end_power_se_w = se;
        r->end_power_ci95[0] = ep - q * se;
        r->end_power_ci95[1] = ep + q * se;
        r->work_above_se_j = (double)above * se;
        r->work_above_ci95[0] = r->work_above_end_j - q * r->work_above_se_j;
        r->work_above_ci95[1] = r->work_above_end_j + q * r->work_above_se_j;
    }
    if (r->peak_at_s >= CPD_ALLOUT_PEAK_BY_S)
        r->flags |= CPD_ALLOUT_FLAG_LATE_PEAK;
    if (!(r->first30_mean_w > CPD_ALLOUT_PACED_RATIO * ep))
        r->flags |= CPD_ALLOUT_FLAG_PACED;
    if (ep > (1 + CPD_ALLOUT_END_RISE_PCT / 100) * r->mean_120_150_w)
        r->flags |= CPD_ALLOUT_FLAG_END_RISE;
    if (fabs(r->end_drift_w) > CPD_ALLOUT_END_DRIFT_PCT / 100 * ep)
        r->flags |= CPD_ALLOUT_FLAG_NO_PLATEAU;
    if (r->has_end_cv && r->end_cv_pct > CPD_ALLOUT_END_CV_PCT)
        r->flags |= CPD_ALLOUT_FLAG_UNEVEN_END;
    if (r->zero_s > 0)
        r->flags |= CPD_ALLOUT_FLAG_STOPPED;
    r->all_out = r->flags == 0;
    return CPD_OK;
}

int cpd_allout_session(const cpd_session *s, size_t start_s, cpd_allout_result *r, char *msg)
{
    memset(r, 0, sizeof *r);
    if (msg)
        msg[0] = '\0';
    if (!s || (s->n_segments > 0 && !s->segments)) {
        if (msg)
            snprintf(msg, CPD_MSG_MAX, "no session");
        return CPD_EUSAGE;
    }
    for (size_t k = 0; k < s->n_segments; k++) {
        const cpd_session_segment *g = &s->segments[k];
        if (start_s < g->start_s || start_s >= g->start_s + g->length_s)
            continue;
        size_t left = g->start_s + g->length_s - start_s;
        if (left < CPD_ALLOUT_TEST_S) {
            if (msg)
                snprintf(msg, CPD_MSG_MAX,
                         "a 3-minute all-out test needs %d s of unbroken power from %zu s; the data %s after %zu s",
                         CPD_ALLOUT_TEST_S, start_s, k + 1 < s->n_segments ? "break off in a gap" : "end", left);
            return CPD_ENODATA;
        }
        return cpd_allout_analyse(g->value, g->length_s, start_s - g->start_s, r, msg);
    }
    if (msg)
        snprintf(msg, CPD_MSG_MAX, "no power was recorded at %zu s, where the test should start", start_s);
    return CPD_ENODATA;
}

const char *cpd_allout_flag_name(unsigned flag)
{
    switch (flag) {
    case CPD_ALLOUT_FLAG_LATE_PEAK: return "late_peak";
    case CPD_ALLOUT_FLAG_PACED: return "paced";
    case CPD_ALLOUT_FLAG_END_RISE: return "end_rise";
    case CPD_ALLOUT_FLAG_NO_PLATEAU: return "no_plateau";
    case CPD_ALLOUT_FLAG_UNEVEN_END: return "uneven_end";
    case CPD_ALLOUT_FLAG_STOPPED: return "stopped";
    default: return NULL;
    }
}

const char *cpd_allout_flag_text(unsigned flag)
{
    switch (flag) {
    case CPD_ALLOUT_FLAG_LATE_PEAK:
        return "Peak power came after the first 15 s: the start was not all-out, so W′ was not spent at once and "
               "end power may overestimate critical power.";
    case CPD_ALLOUT_FLAG_PACED:
        return "The first 30 s were less than 1.5 times end power: the test looks paced rather than all-out, and "
               "end power then overestimates critical power.";
    case CPD_ALLOUT_FLAG_END_RISE:
        return "The final 30 s were more than 5 % above the 30 s before them: effort was held back and released at "
               "the end, so W′ was not used up and end power is not a plateau.";
    case CPD_ALLOUT_FLAG_NO_PLATEAU:
        return "Power was still changing over the final 30 s (more than 5 % of end power): it had not settled on a "
               "plateau, so end power is a poor estimate of critical power.";
    case CPD_ALLOUT_FLAG_UNEVEN_END:
        return "Power varied by more than 10 % (coefficient of variation) over the final 30 s: end power rests on "
               "an uneven effort.";
    case CPD_ALLOUT_FLAG_STOPPED:
        return "Power was zero for at least one second: pedalling stopped or the power meter dropped out during "
               "the test.";
    default: return NULL;
    }
}

const char *cpd_allout_caution(void)
{
    return "End-test power is a fair estimate of critical power, but the work done above it is a weak estimate "
           "of W′. Wright, Bruce-Low & Jobson (2017, Int J Sports Med 38:462) found end-test power valid for "
           "critical power in the isokinetic mode but not in the linear mode, and neither mode gave a valid W′; "
           "Johnson et al. (2011, Med Sci Sports Exerc 43) found a test-retest coefficient of variation of 28 % "
           "for W′ against 7 % for critical power. Treat this W′ as approximate and confirm it with "
           "time-to-exhaustion trials.";
}
