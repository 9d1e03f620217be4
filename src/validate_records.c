/* validate_records.c: the record gate (validate.h): the checks a ramp, bout, lactate test or
 * session passes before storage, whichever path brought it (a command, a CSV, an export
 * document). The ranges are those the add commands take. */
#include "cpdomain/session.h"
#include "cpdomain/status.h"
#include "cpdomain/units.h"
#include "cpdomain/validate.h"

#include <float.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

/* v finite and within [lo, hi] unit, else msg "NAME must be between lo and hi unit (got v)". */
static int ranged(double v, double lo, double hi, const char *name, const char *unit, char *msg)
{
    if (isfinite(v) && v >= lo && v <= hi)
        return CPD_OK;
    snprintf(msg, CPD_MSG_MAX, "%s must be between %g and %g %s (got %g)", name, lo, hi, unit, v);
    return CPD_EDATA;
}

static int in_range(const cpd_range *r, double v, char *msg)
{
    if (cpd_in_range(r, v))
        return CPD_OK;
    cpd_range_msg(r, v, msg, CPD_MSG_MAX);
    return CPD_EDATA;
}

static int note_ok(const char *note, char *msg)
{
    if (strlen(note) <= CPD_NOTE_MAX)
        return CPD_OK;
    snprintf(msg, CPD_MSG_MAX, "note is longer than %d bytes", CPD_NOTE_MAX);
    return CPD_EDATA;
}

int cpd_validate_gx_test(const cpd_gx_test *t, int today_days, const char **field, char *msg)
{
    const char *u = t->speed ? "m/s" : "W";
    double maxi = t->speed ? CPD_RANGE_SPEED.hi : CPD_RANGE_POWER.hi;
    const cpd_range *rg = t->speed ? &CPD_RANGE_SPEED : &CPD_RANGE_POWER;
    if ((*field = "date", cpd_validate_date(t->date, today_days, msg)))
        return CPD_EDATA;
    if (t->kind == CPD_GXT_RAMP) {
        /* the nominal rate and start are optional when the file records the intensity (issue 11) */
        int rate_given = t->has_rate || t->rate_per_min != 0, start_given = t->has_start || t->start != 0;
        if ((*field = "rate_per_min", rate_given && ranged(t->rate_per_min, t->speed ? 0.005 : 1, t->speed ? 2 : 200,
                                                           "ramp rate", t->speed ? "(m/s)/min" : "W/min", msg)) ||
            (*field = "start", start_given && ranged(t->start, 0, maxi, "ramp start", u, msg)) ||
            (*field = "get_intensity_manual", t->has_get_intensity && ranged(t->get_intensity_manual, 0, maxi,
                                                                             "GET intensity", u, msg)) ||
            (*field = "rcp_intensity_manual", t->has_rcp_intensity && ranged(t->rcp_intensity_manual, 0, maxi,
                                                                             "RCP intensity", u, msg)) ||
            (*field = "mrt_s", t->has_mrt && ranged(t->mrt_s, 0, 300, "MRT", "s", msg)) ||
            (*field = "get_vo2_manual", t->has_get_manual && in_range(&CPD_RANGE_VO2, t->get_vo2_manual, msg)) ||
            (*field = "rcp_vo2_manual", t->has_rcp_manual && in_range(&CPD_RANGE_VO2, t->rcp_vo2_manual, msg)) ||
            (*field = "baseline", t->has_baseline && ranged(t->baseline, 0, maxi, "baseline", u, msg)))
            return CPD_EDATA;
    } else {
        if ((*field = "intensity", in_range(rg, t->intensity, msg)) ||
            (*field = "baseline", t->has_baseline && ranged(t->baseline, 0, rg->hi, "baseline", u, msg)))
            return CPD_EDATA;
        if (t->has_baseline && !(t->baseline < t->intensity)) {
            snprintf(msg, CPD_MSG_MAX, "the baseline (%g %s) must be below the bout's intensity (%g %s)", t->baseline, u,
                     t->intensity, u);
            return CPD_EDATA;
        }
    }
    if ((*field = "onset_s", ranged(t->onset_s, 0, 7200, "onset", "s", msg)) ||
        (*field = "end_s", t->has_end && ranged(t->end_s, -7200, 86400, "end of exercise", "s", msg)))
        return CPD_EDATA;
    *field = "n_samples";
    if (t->n_samples < 2) {
        snprintf(msg, CPD_MSG_MAX, "a test needs at least 2 samples (got %zu)", t->n_samples);
        return CPD_EDATA;
    }
    if ((*field = "note", note_ok(t->note, msg)))
        return CPD_EDATA;
    *field = NULL;
    return CPD_OK;
}

int cpd_validate_lactate_stage(int speed, double intensity, double lactate, int has_hr, double hr, int has_stage_s,
                               double stage_s, const char **field, char *msg)
{
    if ((*field = "intensity", in_range(speed ? &CPD_RANGE_SPEED : &CPD_RANGE_POWER, intensity, msg)) ||
        (*field = "lactate_mmol_l", in_range(&CPD_RANGE_LACTATE, lactate, msg)) ||
        (*field = "hr_bpm", has_hr && in_range(&CPD_RANGE_HR, hr, msg)) ||
        (*field = "stage_s", has_stage_s && in_range(&CPD_RANGE_DURATION, stage_s, msg)))
        return CPD_EDATA;
    *field = NULL;
    return CPD_OK;
}

int cpd_validate_lactate(const cpd_lactate_test *t, int today_days, const char **field, size_t *stage, char *msg)
{
    *stage = 0;
    if ((*field = "date", cpd_validate_date(t->date, today_days, msg)) || (*field = "note", note_ok(t->note, msg)))
        return CPD_EDATA;
    *field = "stage";
    if (t->n < 3 || t->n > CPD_LACTATE_STAGES_MAX) {
        snprintf(msg, CPD_MSG_MAX, "a lactate step test needs 3 to %d stages (got %zu)", CPD_LACTATE_STAGES_MAX, t->n);
        return CPD_EDATA;
    }
    for (size_t i = 0; i < t->n; i++) {
        *stage = i;
        if (cpd_validate_lactate_stage(t->speed, t->intensity[i], t->lactate[i], t->has_hr, t->hr[i], t->has_stage_s,
                                       t->stage_s[i], field, msg))
            return CPD_EDATA;
        if (i > 0 && !(t->intensity[i] > t->intensity[i - 1])) {
            *field = "intensity";
            snprintf(msg, CPD_MSG_MAX, "stages must rise in intensity: %g after %g", t->intensity[i], t->intensity[i - 1]);
            return CPD_EDATA;
        }
    }
    *field = NULL;
    return CPD_OK;
}

int cpd_validate_session_rec(const cpd_session_rec *r, int today_days, const char **field, char *msg)
{
    const double hi = 100000; /* W or m/s: the highest --spike-limit 'session add' takes */
    const char *u = r->speed ? "m/s" : "W";
    if ((*field = "date", cpd_validate_date(r->date, today_days, msg)))
        return CPD_EDATA;
    *field = "n_samples";
    if (r->n_samples < 2) {
        snprintf(msg, CPD_MSG_MAX, "a session needs at least 2 samples (got %zu)", r->n_samples);
        return CPD_EDATA;
    }
    if ((*field = "elapsed_s", ranged(r->elapsed_s, 0, CPD_SESSION_MAX_SPAN_S, "the span", "s", msg)) ||
        (*field = "spike_limit", ranged(r->spike_limit, 1e-6, hi, "the spike limit", u, msg)) ||
        (*field = "test_start_s", ranged(r->test_start_s, 0, CPD_SESSION_MAX_SPAN_S, "the test start", "s", msg)) ||
        (*field = "mean_value", ranged(r->mean_value, 0, hi, "the mean", u, msg)) ||
        (*field = "max_value", ranged(r->max_value, 0, hi, "the maximum", u, msg)) ||
        (*field = "spike_max", ranged(r->spike_max, 0, DBL_MAX, "the highest spike", u, msg)) ||
        (*field = "end_value", r->has_allout && ranged(r->end_value, 0, hi, "the end value", u, msg)) ||
        (*field = "work_above_end", r->has_allout && ranged(r->work_above_end, -DBL_MAX, DBL_MAX, "the work above the end value",
                                                            r->speed ? "m" : "J", msg)) ||
        (*field = "note", note_ok(r->note, msg)))
        return CPD_EDATA;
    *field = NULL;
    return CPD_OK;
}
