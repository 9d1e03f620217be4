/* export_domains.c: an athlete's domains as JSON (the keys of 'cpdomain --json domains', SPEC),
 * for the command line's domains and sheet and for programs that link the library. */
#include "cpdomain/athlete.h"

#include <cJSON.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

const char CPD_ATHLETE_CAUTION[] =
    "Caution: these are model estimates with the uncertainty shown, not guarantees. Maximal and "
    "severe-domain efforts need pre-participation screening, appropriate supervision and agreed stop "
    "criteria; follow local rules and defer to licensed practitioners.";

const char CPD_ATHLETE_HR_CAUTION[] =
    "Heart rate drifts upward during long efforts and with heat, dehydration and fatigue: use it to "
    "check, not to set, intensity in the heavy and severe domains.";

/* The rules of the command line's JSON: a value that is not finite, or a NULL text, is null; an
 * interval with a bound that is not finite is null. */
static void num(cJSON *o, const char *k, double v)
{
    if (isfinite(v))
        cJSON_AddNumberToObject(o, k, v);
    else
        cJSON_AddNullToObject(o, k);
}
static void str(cJSON *o, const char *k, const char *v)
{
    if (v)
        cJSON_AddStringToObject(o, k, v);
    else
        cJSON_AddNullToObject(o, k);
}
static void pair(cJSON *o, const char *k, double lo, double hi)
{
    if (!isfinite(lo) || !isfinite(hi)) {
        cJSON_AddNullToObject(o, k);
        return;
    }
    cJSON *a = cJSON_AddArrayToObject(o, k);
    cJSON_AddItemToArray(a, cJSON_CreateNumber(lo));
    cJSON_AddItemToArray(a, cJSON_CreateNumber(hi));
}
static void push_num(cJSON *a, double v)
{
    cJSON_AddItemToArray(a, isfinite(v) ? cJSON_CreateNumber(v) : cJSON_CreateNull());
}
static void push2(cJSON *o, const char *k, int has_lo, double lo, int has_hi, double hi)
{
    cJSON *a = cJSON_AddArrayToObject(o, k);
    push_num(a, has_lo ? lo : NAN);
    push_num(a, has_hi ? hi : NAN);
}

static void range_json(cJSON *o, const cpd_athlete_domains *d, const cpd_domain_range *r)
{
    int spd = d->fit.modality == CPD_PD_SPEED;
    push2(o, spd ? "speed_m_s" : "power_w", r->has_lo, r->lo, r->has_hi, r->hi);
    push2(o, spd ? "pct_cs" : "pct_cp", r->has_lo, r->lo_pct_cp, r->has_hi, r->hi_pct_cp);
    if (r->has_mass)
        push2(o, "w_kg", r->has_lo, r->lo_w_kg, r->has_hi, r->hi_w_kg);
    if (r->has_hr_lo || r->has_hr_hi)
        push2(o, "hr_bpm", r->has_hr_lo, r->hr_lo, r->has_hr_hi, r->hr_hi);
}

int cpd_athlete_domains_json_add(cJSON *doc, const cpd_athlete_domains *d)
{
    const cpd_domains_result *r = &d->res;
    int spd = d->fit.modality == CPD_PD_SPEED;
    const char *ikey = spd ? "speed_m_s" : "power_w";
    str(doc, "athlete", d->fit.athlete.code);
    str(doc, "modality", spd ? "speed" : "power");
    str(doc, "model", cpd_pd_model_name(d->model));
    str(doc, "trials_from", d->fit.trials[0].date);
    str(doc, "trials_to", d->fit.trials[d->fit.n - 1].date);
    cJSON_AddNumberToObject(doc, "older_trials_left_out", (double)d->older_trials);
    cJSON *bs = cJSON_AddArrayToObject(doc, "boundaries");
    cJSON *st = cJSON_CreateArray();
    for (int b = 0; b < CPD_BND_N; b++) {
        const cpd_boundary *x = &r->b[b];
        cJSON *o2 = cJSON_CreateObject();
        str(o2, "name", cpd_boundary_name((cpd_boundary_id)b));
        num(o2, ikey, x->valid ? x->value : NAN);
        pair(o2, "ci95", x->valid && x->has_ci ? x->ci95[0] : NAN, x->ci95[1]);
        str(o2, "source", x->valid ? x->source : NULL);
        str(o2, "method", x->valid ? x->method : NULL);
        str(o2, "date", x->valid && x->date[0] ? x->date : NULL);
        cJSON_AddBoolToObject(o2, "manual", x->manual ? 1 : 0);
        cJSON_AddBoolToObject(o2, "stale", x->stale ? 1 : 0);
        str(o2, "reason", x->valid ? NULL : x->why);
        cJSON_AddItemToArray(bs, o2);
        if (x->stale) {
            cJSON *s2 = cJSON_CreateObject();
            str(s2, "boundary", cpd_boundary_name((cpd_boundary_id)b));
            str(s2, "why", x->stale_why);
            cJSON_AddItemToArray(st, s2);
        }
    }
    cJSON_AddItemToObject(doc, "stale", st);
    cJSON *t = cJSON_AddObjectToObject(doc, "targets");
    for (int k = 0; k < CPD_DOM_N; k++)
        range_json(cJSON_AddObjectToObject(t, cpd_domain_name((cpd_domain)k)), d, &r->range[k]);
    if (r->has_uncertain) /* CP's 95 % interval: heavy or severe, the data cannot tell */
        range_json(cJSON_AddObjectToObject(t, "heavy_or_severe"), d, &r->uncertain);
    num(doc, spd ? "heavy_ceiling_m_s" : "heavy_ceiling_w", r->heavy_ceiling);
    num(doc, "time_to_vo2max_s", r->t_vo2max_s);
    num(doc, "time_to_vo2max_se_s", r->t_vo2max_se_s > 0 ? r->t_vo2max_se_s : NAN);
    cJSON *ef = cJSON_AddArrayToObject(doc, "severe_efforts");
    for (int k = 0; k < CPD_DOMAINS_NEFFORTS; k++) {
        const cpd_domain_effort *e = &r->effort[k];
        cJSON *o2 = cJSON_CreateObject();
        num(o2, "time_to_failure_s", e->duration_s);
        cJSON_AddBoolToObject(o2, "beyond_severe", e->beyond_severe ? 1 : 0);
        num(o2, ikey, e->valid ? e->value : NAN);
        pair(o2, "ci95", e->valid && e->has_ci ? e->ci95[0] : NAN, e->ci95[1]);
        cJSON_AddItemToArray(ef, o2);
    }
    cJSON *dl = cJSON_AddArrayToObject(doc, "delta");
    for (int k = 0; r->has_delta && k < CPD_DOMAINS_NDELTA; k++) {
        cJSON *o2 = cJSON_CreateObject();
        num(o2, "pct", r->delta_pct[k]);
        num(o2, ikey, r->delta_value[k]);
        cJSON_AddItemToArray(dl, o2);
    }
    cJSON *fl = cJSON_AddArrayToObject(doc, "flags");
    for (unsigned b = 0; b < CPD_DOMAINS_NFLAGS; b++)
        if (r->flags & (1u << b))
            cJSON_AddItemToArray(fl, cJSON_CreateString(cpd_domains_flag_name(1u << b)));
    cJSON *ff = cJSON_AddArrayToObject(doc, "fit_flags");
    for (unsigned b = 0; b < CPD_PD_NFLAGS; b++)
        if (d->fit.res->flags & (1u << b))
            cJSON_AddItemToArray(ff, cJSON_CreateString(cpd_pd_flag_name(1u << b, d->fit.modality)));
    str(doc, "hr_caution", CPD_ATHLETE_HR_CAUTION);
    str(doc, "caution", CPD_ATHLETE_CAUTION);
    return CPD_OK;
}

int cpd_athlete_domains_json(const cpd_athlete_domains *d, char **text)
{
    *text = NULL;
    cJSON *doc = cJSON_CreateObject();
    if (!doc)
        return CPD_ENOMEM;
    cpd_athlete_domains_json_add(doc, d);
    *text = cJSON_Print(doc);
    cJSON_Delete(doc);
    return *text ? CPD_OK : CPD_ENOMEM;
}
