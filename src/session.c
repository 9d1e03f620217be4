/* session.c: raw session samples to clean 1-Hz segments (rules in session.h): spikes dropped,
 * short dropouts filled linearly, long gaps split, non-integer times resampled to whole seconds. */
#include "cpdomain/session.h"
#include "cpdomain/status.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

struct cpd_session_ws {
    size_t cap_samples;       /* room in t, v and segments */
    double *t;                /* kept sample times, s from the first sample */
    double *v;                /* kept sample values */
    cpd_session_segment *segments; /* cap_samples segments */
    size_t cap_values;        /* room in values */
    double *values;           /* the 1-Hz output */
};

void cpd_session_opts_init(cpd_session_opts *o, cpd_session_modality m)
{
    o->modality = m;
    o->ceiling = 0;
}

/* Room for n_samples kept samples and n_values 1-Hz values. Every segment holds at least one kept
 * sample, so n_samples segments always suffice. */
static int reserve(cpd_session_ws *w, size_t n_samples, size_t n_values)
{
    if (n_samples > w->cap_samples) {
        double *t = realloc(w->t, n_samples * sizeof *t);
        if (!t)
            return CPD_ENOMEM;
        w->t = t;
        double *v = realloc(w->v, n_samples * sizeof *v);
        if (!v)
            return CPD_ENOMEM;
        w->v = v;
        cpd_session_segment *g = realloc(w->segments, n_samples * sizeof *g);
        if (!g)
            return CPD_ENOMEM;
        w->segments = g;
        w->cap_samples = n_samples;
    }
    if (n_values > w->cap_values) {
        double *x = realloc(w->values, n_values * sizeof *x);
        if (!x)
            return CPD_ENOMEM;
        w->values = x;
        w->cap_values = n_values;
    }
    return CPD_OK;
}

cpd_session_ws *cpd_session_alloc(size_t n_hint)
{
    cpd_session_ws *w = calloc(1, sizeof *w);
    if (!w)
        return NULL;
    size_t n = n_hint ? n_hint : 1;
    if (reserve(w, n, n)) {
        cpd_session_free(w);
        return NULL;
    }
    return w;
}

void cpd_session_free(cpd_session_ws *w)
{
    if (!w)
        return;
    free(w->t);
    free(w->v);
    free(w->values);
    free(w->segments);
    free(w);
}

const char *cpd_session_error_text(cpd_session_error e)
{
    switch (e) {
    case CPD_SESSION_ERR_NONE: return "cleaned";
    case CPD_SESSION_ERR_EMPTY: return "the session has no samples";
    case CPD_SESSION_ERR_ONE_SAMPLE:
        return "the session has a single sample (or all at one instant), which spans no time";
    case CPD_SESSION_ERR_TIME_NONFINITE: return "a time is not a finite number";
    case CPD_SESSION_ERR_VALUE_NONFINITE: return "a value is not a finite number";
    case CPD_SESSION_ERR_NEGATIVE: return "a value is below zero";
    case CPD_SESSION_ERR_BACKWARDS: return "time runs backwards";
    case CPD_SESSION_ERR_TOO_LONG: return "the session spans more than 7 days";
    case CPD_SESSION_ERR_NO_DATA: return "no whole second is left once spikes are dropped";
    case CPD_SESSION_NERRS: break;
    }
    return "unknown session error";
}

static int fail(cpd_session *s, int rc, cpd_session_error e, size_t idx, char *msg, const char *detail)
{
    s->error = e;
    s->error_index = idx;
    if (msg) {
        if (e == CPD_SESSION_ERR_EMPTY || e == CPD_SESSION_ERR_ONE_SAMPLE || e == CPD_SESSION_ERR_NO_DATA)
            snprintf(msg, CPD_MSG_MAX, "%s", cpd_session_error_text(e));
        else
            snprintf(msg, CPD_MSG_MAX, "sample %zu: %s%s", idx + 1, cpd_session_error_text(e), detail);
    }
    return rc;
}

/* Rule 1 of session.h. */
static int check(const double *time_s, const double *value, size_t n, cpd_session *s, char *msg)
{
    char d[160];
    if (n == 0)
        return fail(s, CPD_ENODATA, CPD_SESSION_ERR_EMPTY, 0, msg, "");
    if (n == 1)
        return fail(s, CPD_ENODATA, CPD_SESSION_ERR_ONE_SAMPLE, 0, msg, "");
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(time_s[i]))
            return fail(s, CPD_EDATA, CPD_SESSION_ERR_TIME_NONFINITE, i, msg, "");
        if (!isfinite(value[i]))
            return fail(s, CPD_EDATA, CPD_SESSION_ERR_VALUE_NONFINITE, i, msg, "");
        if (value[i] < 0) {
            snprintf(d, sizeof d, " (%g)", value[i]);
            return fail(s, CPD_EDATA, CPD_SESSION_ERR_NEGATIVE, i, msg, d);
        }
        if (i > 0 && time_s[i] < time_s[i - 1]) {
            snprintf(d, sizeof d, " (%.6g s after %.6g s)", time_s[i], time_s[i - 1]);
            return fail(s, CPD_EDATA, CPD_SESSION_ERR_BACKWARDS, i, msg, d);
        }
    }
    if (time_s[n - 1] - time_s[0] <= CPD_SESSION_TIME_TOL_S)
        return fail(s, CPD_ENODATA, CPD_SESSION_ERR_ONE_SAMPLE, 0, msg, "");
    if (!(time_s[n - 1] - time_s[0] <= CPD_SESSION_MAX_SPAN_S)) {
        snprintf(d, sizeof d, " (%.6g s)", time_s[n - 1] - time_s[0]); /* %g: a huge span in a few digits */
        return fail(s, CPD_EDATA, CPD_SESSION_ERR_TOO_LONG, n - 1, msg, d);
    }
    return CPD_OK;
}

/* Rules 3 and 4: the kept samples, times from the first sample, into w->t and w->v. */
static size_t keep(cpd_session_ws *w, const double *time_s, const double *value, size_t n, double limit,
                   cpd_session *s)
{
    size_t m = 0, group = 1;
    for (size_t i = 0; i < n; i++) {
        double r = time_s[i] - time_s[0];
        if (value[i] > limit) {
            if (s->n_spikes++ == 0)
                s->first_spike_s = r;
            if (value[i] > s->spike_max)
                s->spike_max = value[i];
            continue;
        }
        if (m > 0 && r - w->t[m - 1] <= CPD_SESSION_TIME_TOL_S) {
            /* running mean keeps the group's first time, so groups do not chain */
            group++;
            w->v[m - 1] += (value[i] - w->v[m - 1]) / (double)group;
            s->n_merged++;
            continue;
        }
        w->t[m] = r;
        w->v[m] = value[i];
        m++;
        group = 1;
    }
    return m;
}

/* Whole seconds strictly inside (a, b), with the same-instant tolerance at both ends. */
static size_t seconds_inside(double a, double b)
{
    double lo = floor(a + CPD_SESSION_TIME_TOL_S) + 1, hi = ceil(b - CPD_SESSION_TIME_TOL_S) - 1;
    return hi >= lo ? (size_t)(hi - lo + 1) : 0;
}

/* Rules 5 and 6 over the kept samples a..b of one run (consecutive gaps all fillable). */
static void emit_run(cpd_session_ws *w, size_t a, size_t b, cpd_session *s, size_t *nv)
{
    const double tol = CPD_SESSION_TIME_TOL_S;
    double klo = ceil(w->t[a] - tol), khi = floor(w->t[b] + tol);
    if (klo > khi) {
        s->n_isolated += b - a + 1;
        return;
    }
    cpd_session_segment *seg = &w->segments[s->n_segments++];
    seg->start_s = (size_t)klo;
    seg->length_s = (size_t)(khi - klo) + 1;
    double *out = w->values + *nv;
    seg->value = out;
    size_t j = a;
    for (size_t i = 0; i < seg->length_s; i++) {
        double k = klo + (double)i;
        while (j < b && w->t[j + 1] <= k + tol)
            j++;
        if (fabs(w->t[j] - k) <= tol) {
            out[i] = w->v[j];
            continue;
        }
        double dt = w->t[j + 1] - w->t[j];
        /* one division last: from whole numbers at whole seconds this is the exact fraction
         * correctly rounded, which the curve scan reads back exactly (mmp.h) */
        out[i] = (w->v[j] * dt + (w->v[j + 1] - w->v[j]) * (k - w->t[j])) / dt;
        if (dt > CPD_SESSION_DROPOUT_S)
            s->filled_s++;
        else
            s->resampled_s++;
    }
    *nv += seg->length_s;
    if (seg->length_s > s->longest_s)
        s->longest_s = seg->length_s;
}

int cpd_session_clean(cpd_session_ws *w, const double *time_s, const double *value, size_t n,
                      const cpd_session_opts *opts, cpd_session *s, char *msg)
{
    cpd_session_opts def;
    if (!opts) {
        cpd_session_opts_init(&def, CPD_SESSION_POWER);
        opts = &def;
    }
    memset(s, 0, sizeof *s);
    if (msg)
        msg[0] = '\0';
    if ((opts->modality != CPD_SESSION_POWER && opts->modality != CPD_SESSION_SPEED) || !isfinite(opts->ceiling) ||
        opts->ceiling < 0) {
        if (msg)
            snprintf(msg, CPD_MSG_MAX,
                     "the spike ceiling must be a finite number >= 0 and the modality power or speed");
        return CPD_EUSAGE;
    }
    if (!w || (n > 0 && (!time_s || !value))) {
        if (msg)
            snprintf(msg, CPD_MSG_MAX, "no workspace or no sample arrays");
        return CPD_EUSAGE;
    }
    int rc = check(time_s, value, n, s, msg);
    if (rc)
        return rc;
    double elapsed = time_s[n - 1] - time_s[0];
    s->elapsed_s = elapsed;
    s->grid_s = (size_t)floor(elapsed + CPD_SESSION_TIME_TOL_S) + 1;
    s->spike_limit = opts->ceiling > 0 ? opts->ceiling
                     : opts->modality == CPD_SESSION_POWER ? CPD_SESSION_SPIKE_POWER_W
                                                           : CPD_SESSION_SPIKE_SPEED_M_S;
    if ((rc = reserve(w, n, s->grid_s)) != CPD_OK) {
        if (msg)
            snprintf(msg, CPD_MSG_MAX, "out of memory for a session of %zu samples", n);
        return rc;
    }
    size_t m = keep(w, time_s, value, n, s->spike_limit, s);
    size_t nv = 0, a = 0;
    for (size_t j = 0; j < m; j++) {
        double gap = j + 1 < m ? w->t[j + 1] - w->t[j] : 0;
        if (gap > CPD_SESSION_DROPOUT_S) {
            s->n_dropouts++;
            s->dropout_s += seconds_inside(w->t[j], w->t[j + 1]);
        }
        if (j + 1 == m || gap > CPD_SESSION_MAX_FILL_S + 1 + CPD_SESSION_TIME_TOL_S) {
            if (j + 1 < m)
                s->n_splits++;
            emit_run(w, a, j, s, &nv);
            a = j + 1;
        }
    }
    s->recorded_s = nv;
    s->missing_s = s->grid_s - nv;
    s->segments = w->segments;
    s->value = w->values;
    if (nv == 0) {
        s->n_segments = 0;
        return fail(s, CPD_ENODATA, CPD_SESSION_ERR_NO_DATA, 0, msg, "");
    }
    return CPD_OK;
}

uint64_t cpd_session_hash(uint64_t h, const void *bytes, size_t n)
{
    const unsigned char *p = bytes;
    for (size_t i = 0; i < n; i++) {
        h ^= p[i];
        h *= 1099511628211ull;
    }
    return h;
}
