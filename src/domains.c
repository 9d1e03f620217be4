/* domains.c: intensity-domain boundaries and targets from the tests' results. Every number comes
 * from an input or a prediction of the fitted model; a boundary that cannot be found says why. */
#include "cpdomain/domains.h"
#include "cpdomain/status.h"
#include "cpdomain/units.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

static const double effort_s[CPD_DOMAINS_NEFFORTS] = {120, 180, 300, 480, 720};
static const double delta_pct[CPD_DOMAINS_NDELTA] = {25, 50, 75};

const char *cpd_boundary_name(cpd_boundary_id b)
{
    static const char *const n[CPD_BND_N] = {"moderate-heavy", "heavy-severe", "severe-extreme"};
    return (unsigned)b < CPD_BND_N ? n[b] : "unknown";
}

const char *cpd_domain_name(cpd_domain d)
{
    static const char *const n[CPD_DOM_N] = {"moderate", "heavy", "severe", "extreme"};
    return (unsigned)d < CPD_DOM_N ? n[d] : "unknown";
}

const char *cpd_domains_flag_name(unsigned flag)
{
    switch (flag) {
    case CPD_DOMAINS_F_NO_GET: return "no_get";
    case CPD_DOMAINS_F_GET_FROM_LT1: return "get_from_lt1";
    case CPD_DOMAINS_F_GET_ABOVE_CP: return "get_above_cp";
    case CPD_DOMAINS_F_NO_CP_CI: return "no_cp_ci";
    case CPD_DOMAINS_F_TAU_ASSUMED: return "time_to_vo2max_assumed";
    case CPD_DOMAINS_F_STALE: return "stale";
    }
    return NULL;
}

const char *cpd_domains_flag_text(unsigned flag)
{
    switch (flag) {
    case CPD_DOMAINS_F_NO_GET:
        return "No ramp with a gas exchange threshold and no lactate test: the moderate-heavy boundary is unknown. "
               "Add a ramp test (ramp add).";
    case CPD_DOMAINS_F_GET_FROM_LT1:
        return "The moderate-heavy boundary is the lactate LT1 (log-log), used because no ramp GET is available; "
               "LT1 and GET usually lie close but are not the same measurement.";
    case CPD_DOMAINS_F_GET_ABOVE_CP:
        return "The GET's constant-power equivalent is at or above CP: the heavy domain vanishes, which is not "
               "physiological. Check the ramp's MRT, the GET and the trials (they may be from different seasons).";
    case CPD_DOMAINS_F_NO_CP_CI:
        return "CP has no confidence interval (two trials): heavy-domain work is capped at 95 % of CP as a margin "
               "(common practice); add a third trial.";
    case CPD_DOMAINS_F_TAU_ASSUMED:
        return "No severe-domain VO2 kinetics are on file: the time to reach VO2max is taken as 100 s (about the "
               "minimum reported in runners), so the severe-extreme boundary is approximate.";
    case CPD_DOMAINS_F_STALE:
        return "Some boundary rests on old data or disagrees with newer tests: see its note and retest.";
    }
    return NULL;
}

/* Days since 1970 of a YYYY-MM-DD date, or -1 when it is empty or invalid. */
static int day_of(const char *d)
{
    int v = 0;
    return d && d[0] && cpd_parse_date(d, &v) == CPD_OK ? v : -1;
}

static void check_stale(cpd_boundary *b, int today, int limit)
{
    int d = day_of(b->date);
    if (d >= 0 && today - d > limit) {
        b->stale = 1;
        snprintf(b->stale_why, sizeof b->stale_why, "its data are %d days old (more than %d): retest", today - d, limit);
    }
}

static void set_range(cpd_domain_range *r, int has_lo, double lo, int has_hi, double hi, double cp, const cpd_domains_input *in)
{
    memset(r, 0, sizeof *r);
    r->has_lo = has_lo;
    r->has_hi = has_hi;
    r->lo = has_lo ? lo : 0;
    r->hi = has_hi ? hi : 0;
    r->lo_pct_cp = has_lo ? 100 * lo / cp : 0;
    r->hi_pct_cp = has_hi ? 100 * hi / cp : 0;
    r->has_mass = in->has_mass && in->mass_kg > 0 && in->modality == CPD_PD_POWER;
    r->lo_w_kg = r->has_mass && has_lo ? lo / in->mass_kg : 0;
    r->hi_w_kg = r->has_mass && has_hi ? hi / in->mass_kg : 0;
}

int cpd_domains_compute(const cpd_domains_input *in, cpd_domains_result *out)
{
    if (!in || !out || !in->fit || !in->fit->ok)
        return CPD_EUSAGE;
    memset(out, 0, sizeof *out);
    const cpd_pd_model_fit *m = in->fit;
    if (!(m->cp > 0) || !(m->w_prime > 0))
        return CPD_ENODATA;
    int limit = in->stale_days > 0 ? in->stale_days : CPD_DOMAINS_STALE_DAYS;
    const char *cpw = in->modality == CPD_PD_SPEED ? "CS" : "CP";

    /* moderate-heavy: the GET's constant-intensity equivalent, else LT1 */
    cpd_boundary *mh = &out->b[CPD_BND_MOD_HEAVY];
    if (in->has_get) {
        mh->valid = 1;
        mh->value = in->get;
        mh->manual = in->get_manual;
        if (in->has_get_ci && !in->get_manual) {
            mh->has_ci = 1;
            mh->ci95[0] = in->get_ci95[0];
            mh->ci95[1] = in->get_ci95[1];
        }
        snprintf(mh->source, sizeof mh->source, "%s: gas exchange threshold%s", in->get_source,
                 in->get_manual ? " (a reviewer's choice)" : "");
        if (in->get_steps)
            snprintf(mh->method, sizeof mh->method,
                     "V-slope GET (Beaver, Wasserman & Whipp 1986) at the %s whose stage steady state has its VO2",
                     in->modality == CPD_PD_SPEED ? "speed" : "power");
        else
            snprintf(mh->method, sizeof mh->method,
                     "V-slope GET (Beaver, Wasserman & Whipp 1986) at its constant-%s equivalent: ramp %s - rate x MRT",
                     in->modality == CPD_PD_SPEED ? "speed" : "power", in->modality == CPD_PD_SPEED ? "speed" : "power");
        snprintf(mh->date, sizeof mh->date, "%s", in->get_date);
    } else if (in->has_lt1) {
        mh->valid = 1;
        mh->value = in->lt1;
        snprintf(mh->source, sizeof mh->source, "%s: lactate threshold LT1", in->lt1_source);
        snprintf(mh->method, sizeof mh->method, "log-log LT1 (Beaver, Wasserman & Whipp 1985), no ramp available");
        snprintf(mh->date, sizeof mh->date, "%s", in->lt1_date);
        out->flags |= CPD_DOMAINS_F_GET_FROM_LT1;
    } else {
        snprintf(mh->why, sizeof mh->why, "no ramp GET and no lactate LT1 on file");
        out->flags |= CPD_DOMAINS_F_NO_GET;
    }

    /* heavy-severe: CP with its interval */
    cpd_boundary *hs = &out->b[CPD_BND_HEAVY_SEVERE];
    hs->valid = 1;
    hs->value = m->cp;
    hs->has_ci = m->has_se;
    if (m->has_se) {
        hs->ci95[0] = m->cp_ci95[0];
        hs->ci95[1] = m->cp_ci95[1];
    }
    snprintf(hs->source, sizeof hs->source, "%s of the %s model, %zu trials", cpw, cpd_pd_model_name(m->model), m->n);
    snprintf(hs->method, sizeof hs->method, "critical %s, the asymptote of the %s-duration hyperbola",
             in->modality == CPD_PD_SPEED ? "speed" : "power", in->modality == CPD_PD_SPEED ? "speed" : "power");
    snprintf(hs->date, sizeof hs->date, "%s", in->fit_date);
    if (in->has_recent && m->has_se && (in->recent_cp < m->cp_ci95[0] || in->recent_cp > m->cp_ci95[1])) {
        hs->stale = 1;
        snprintf(hs->stale_why, sizeof hs->stale_why,
                 "the newest block of trials (%s to %s) gives %s %.4g, outside this fit's 95 %% interval: "
                 "fit the recent trials alone (--from)",
                 in->recent_from, in->recent_to, cpw, in->recent_cp);
    }

    /* severe-extreme: t_lim equals the time to reach VO2max (Hill, Poole & Smith 2002) */
    cpd_boundary *se = &out->b[CPD_BND_SEVERE_EXTREME];
    double t_se = 0;
    if (in->has_t_vo2max && in->t_vo2max_s > 0) {
        out->t_vo2max_s = in->t_vo2max_s;
        t_se = in->t_vo2max_se_s > 0 ? in->t_vo2max_se_s : 0;
        out->t_vo2max_se_s = t_se;
        snprintf(se->source, sizeof se->source, "%s: primary VO2 tau %.0f s, delay %.0f s", in->tau_source, in->tau_s,
                 in->delay_s);
        snprintf(se->method, sizeof se->method,
                 "intensity whose predicted time to failure equals the time to reach VO2max, delay + 4 tau = %.0f s "
                 "(SE %.0f s) (Hill, Poole & Smith 2002)", out->t_vo2max_s, t_se);
        snprintf(se->date, sizeof se->date, "%s", in->tau_date);
    } else if (in->has_tau && in->tau_s > 0) {
        out->t_vo2max_s = 4 * in->tau_s;
        snprintf(se->source, sizeof se->source, "%s: primary VO2 time constant %.0f s", in->tau_source, in->tau_s);
        snprintf(se->method, sizeof se->method,
                 "intensity whose predicted time to failure is 4 tau = %.0f s, the time to reach VO2max "
                 "(Hill, Poole & Smith 2002)", out->t_vo2max_s);
        snprintf(se->date, sizeof se->date, "%s", in->tau_date);
    } else {
        out->t_vo2max_s = CPD_DOMAINS_T_VO2MAX_DEFAULT_S;
        out->flags |= CPD_DOMAINS_F_TAU_ASSUMED;
        snprintf(se->source, sizeof se->source, "the %s model and an assumed time to VO2max", cpd_pd_model_name(m->model));
        snprintf(se->method, sizeof se->method,
                 "intensity whose predicted time to failure is %.0f s, about the minimum time to reach VO2max "
                 "(Hill, Poole & Smith 2002; approximate without kinetics)", out->t_vo2max_s);
        snprintf(se->date, sizeof se->date, "%s", in->fit_date);
    }
    cpd_pd_pred p;
    if (cpd_pd_predict_intensity(m, out->t_vo2max_s, &p) == CPD_OK && p.valid) {
        se->valid = 1;
        se->value = p.value;
        se->has_ci = p.ci_valid;
        se->ci95[0] = p.ci95[0];
        se->ci95[1] = p.ci95[1];
        if (p.ci_valid && t_se > 0) {
            /* dP/dT = -W'/(T + offset)^2; the kinetics and the trials are independent tests */
            double u = out->t_vo2max_s + m->t_offset_s, hk = 1.96 * m->w_prime / (u * u) * t_se;
            double hp = 0.5 * (p.ci95[1] - p.ci95[0]), h = sqrt(hp * hp + hk * hk);
            se->ci95[0] = p.value - h;
            se->ci95[1] = p.value + h;
        }
    } else
        snprintf(se->why, sizeof se->why, "the model gives no intensity for %.0f s: %s", out->t_vo2max_s,
                 cpd_pd_pred_text(p.status));

    for (int b = 0; b < CPD_BND_N; b++) {
        if (out->b[b].valid && !out->b[b].stale)
            check_stale(&out->b[b], in->today, limit);
        if (out->b[b].stale)
            out->flags |= CPD_DOMAINS_F_STALE;
    }
    if (mh->valid && mh->value >= m->cp)
        out->flags |= CPD_DOMAINS_F_GET_ABOVE_CP;

    /* targets: heavy work stays below the lower bound of CP's interval */
    if (m->has_se)
        out->heavy_ceiling = m->cp_ci95[0];
    else {
        out->heavy_ceiling = 0.95 * m->cp;
        out->flags |= CPD_DOMAINS_F_NO_CP_CI;
    }
    double cp = m->cp;
    set_range(&out->range[CPD_DOM_MODERATE], 0, 0, mh->valid, mh->value, cp, in);
    set_range(&out->range[CPD_DOM_HEAVY], mh->valid, mh->value, 1, out->heavy_ceiling, cp, in);
    /* between CP's bounds the data cannot tell heavy from severe: shown as such, not left out */
    double sev_lo = m->has_se ? m->cp_ci95[1] : cp;
    if (m->has_se) {
        out->has_uncertain = 1;
        set_range(&out->uncertain, 1, m->cp_ci95[0], 1, m->cp_ci95[1], cp, in);
    }
    set_range(&out->range[CPD_DOM_SEVERE], 1, sev_lo, se->valid, se->value, cp, in);
    set_range(&out->range[CPD_DOM_EXTREME], se->valid, se->value, 0, 0, cp, in);
    /* heart-rate targets never reach past their domain's intensities: the heart rate at an
     * intensity is interpolated linearly between the ramp's GET and RCP (common practice), never
     * extrapolated, so the heavy upper bound is the heart rate at the heavy ceiling (or at the RCP
     * when the ceiling lies above it) and the severe lower bound the heart rate at CP, given only
     * when CP lies at or below the RCP */
    if (in->has_hr_get) {
        out->range[CPD_DOM_MODERATE].has_hr_hi = 1;
        out->range[CPD_DOM_MODERATE].hr_hi = in->hr_get;
        out->range[CPD_DOM_HEAVY].has_hr_lo = 1;
        out->range[CPD_DOM_HEAVY].hr_lo = in->hr_get;
    }
    if (in->has_hr_get && in->has_hr_rcp && in->has_rcp && in->has_get && in->rcp > in->get) {
        double slope = (in->hr_rcp - in->hr_get) / (in->rcp - in->get);
        double top = fmin(out->heavy_ceiling, in->rcp);
        if (top > in->get) {
            out->range[CPD_DOM_HEAVY].has_hr_hi = 1;
            out->range[CPD_DOM_HEAVY].hr_hi = in->hr_get + slope * (top - in->get);
        }
        if (cp <= in->rcp && cp >= in->get) {
            out->range[CPD_DOM_SEVERE].has_hr_lo = 1;
            out->range[CPD_DOM_SEVERE].hr_lo = in->hr_get + slope * (cp - in->get);
        }
    }

    for (int k = 0; k < CPD_DOMAINS_NEFFORTS; k++) {
        cpd_domain_effort *e = &out->effort[k];
        e->duration_s = effort_s[k];
        if (cpd_pd_predict_intensity(m, effort_s[k], &p) != CPD_OK || !p.valid)
            continue;
        if (se->valid && p.value > se->value)
            e->beyond_severe = 1; /* listed only inside the severe domain reported above */
        else {
            e->valid = 1;
            e->value = p.value;
            e->has_ci = p.ci_valid;
            e->ci95[0] = p.ci95[0];
            e->ci95[1] = p.ci95[1];
        }
    }
    if (mh->valid && in->has_peak && in->peak > mh->value) {
        out->has_delta = 1;
        for (int k = 0; k < CPD_DOMAINS_NDELTA; k++) {
            out->delta_pct[k] = delta_pct[k];
            out->delta_value[k] = mh->value + delta_pct[k] / 100 * (in->peak - mh->value);
        }
    }
    return CPD_OK;
}

cpd_domain cpd_domains_classify(const cpd_domains_result *r, double x)
{
    const cpd_boundary *mh = &r->b[CPD_BND_MOD_HEAVY], *hs = &r->b[CPD_BND_HEAVY_SEVERE], *se = &r->b[CPD_BND_SEVERE_EXTREME];
    if (hs->valid && x > hs->value) {
        if (se->valid && x > se->value)
            return CPD_DOM_EXTREME;
        return CPD_DOM_SEVERE;
    }
    if (!mh->valid)
        return CPD_DOM_N;
    return x > mh->value ? CPD_DOM_HEAVY : CPD_DOM_MODERATE;
}
