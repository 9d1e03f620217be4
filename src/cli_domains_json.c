/* cli_domains_json.c: the JSON of an athlete's domains (SPEC keys), for 'domains' and 'sheet'. */
#include "cli_domains_json.h"

#include <math.h>

const char CLI_HR_CAUTION[] =
    "Heart rate drifts upward during long efforts and with heat, dehydration and fatigue: use it to "
    "check, not to set, intensity in the heavy and severe domains.";

const char CLI_MRT_MISSING_NOTE[] =
    "The newest ramp has a GET but no MRT: give 'ramp add --mrt' for its constant-power equivalent.";
const char CLI_NO_VCO2_NOTE[] =
    "The newest ramp has VO2 only (no VCO2): its GET cannot be computed; a reviewer's GET can be given as "
    "power with 'ramp set ID --get-power W'.";

static void range_json(cli_json *o, const cli_domains *d, const cpd_domain_range *r)
{
    const char *k = d->fit.modality == CPD_PD_SPEED ? "speed_m_s" : "power_w";
    cli_json *a = cj_add_arr(o, k);
    cj_push_num(a, r->has_lo ? r->lo : NAN);
    cj_push_num(a, r->has_hi ? r->hi : NAN);
    a = cj_add_arr(o, d->fit.modality == CPD_PD_SPEED ? "pct_cs" : "pct_cp");
    cj_push_num(a, r->has_lo ? r->lo_pct_cp : NAN);
    cj_push_num(a, r->has_hi ? r->hi_pct_cp : NAN);
    if (r->has_mass) {
        a = cj_add_arr(o, "w_kg");
        cj_push_num(a, r->has_lo ? r->lo_w_kg : NAN);
        cj_push_num(a, r->has_hi ? r->hi_w_kg : NAN);
    }
    if (r->has_hr_lo || r->has_hr_hi) {
        a = cj_add_arr(o, "hr_bpm");
        cj_push_num(a, r->has_hr_lo ? r->hr_lo : NAN);
        cj_push_num(a, r->has_hr_hi ? r->hr_hi : NAN);
    }
}

void cli_domains_json(cli_json *doc, const cli_domains *d)
{
    const cpd_domains_result *r = &d->res;
    int spd = d->fit.modality == CPD_PD_SPEED;
    const char *ikey = spd ? "speed_m_s" : "power_w";
    cj_str(doc, "athlete", d->fit.athlete.code);
    cj_str(doc, "modality", spd ? "speed" : "power");
    cj_str(doc, "model", cpd_pd_model_name(d->model));
    cj_str(doc, "trials_from", d->fit.trials[0].date);
    cj_str(doc, "trials_to", d->fit.trials[d->fit.n - 1].date);
    cj_int(doc, "older_trials_left_out", (long long)d->older_trials);
    cli_json *bs = cj_add_arr(doc, "boundaries");
    cli_json *st = cj_arr();
    for (int b = 0; b < CPD_BND_N; b++) {
        const cpd_boundary *x = &r->b[b];
        cli_json *o2 = cj_obj();
        cj_str(o2, "name", cpd_boundary_name((cpd_boundary_id)b));
        cj_num(o2, ikey, x->valid ? x->value : NAN);
        cj_pair(o2, "ci95", x->valid && x->has_ci ? x->ci95[0] : NAN, x->ci95[1]);
        cj_str(o2, "source", x->valid ? x->source : NULL);
        cj_str(o2, "method", x->valid ? x->method : NULL);
        cj_str(o2, "date", x->valid && x->date[0] ? x->date : NULL);
        cj_bool(o2, "manual", x->manual);
        cj_bool(o2, "stale", x->stale);
        cj_str(o2, "reason", x->valid ? NULL : x->why);
        cj_push(bs, o2);
        if (x->stale) {
            cli_json *s2 = cj_obj();
            cj_str(s2, "boundary", cpd_boundary_name((cpd_boundary_id)b));
            cj_str(s2, "why", x->stale_why);
            cj_push(st, s2);
        }
    }
    cj_set(doc, "stale", st);
    cli_json *t = cj_add_obj(doc, "targets");
    for (int k = 0; k < CPD_DOM_N; k++)
        range_json(cj_add_obj(t, cpd_domain_name((cpd_domain)k)), d, &r->range[k]);
    if (r->has_uncertain) /* CP's 95 % interval: heavy or severe, the data cannot tell */
        range_json(cj_add_obj(t, "heavy_or_severe"), d, &r->uncertain);
    cj_num(doc, spd ? "heavy_ceiling_m_s" : "heavy_ceiling_w", r->heavy_ceiling);
    cj_num(doc, "time_to_vo2max_s", r->t_vo2max_s);
    cj_num(doc, "time_to_vo2max_se_s", r->t_vo2max_se_s > 0 ? r->t_vo2max_se_s : NAN);
    cli_json *ef = cj_add_arr(doc, "severe_efforts");
    for (int k = 0; k < CPD_DOMAINS_NEFFORTS; k++) {
        const cpd_domain_effort *e = &r->effort[k];
        cli_json *o2 = cj_obj();
        cj_num(o2, "time_to_failure_s", e->duration_s);
        cj_bool(o2, "beyond_severe", e->beyond_severe);
        cj_num(o2, ikey, e->valid ? e->value : NAN);
        cj_pair(o2, "ci95", e->valid && e->has_ci ? e->ci95[0] : NAN, e->ci95[1]);
        cj_push(ef, o2);
    }
    cli_json *dl = cj_add_arr(doc, "delta");
    for (int k = 0; r->has_delta && k < CPD_DOMAINS_NDELTA; k++) {
        cli_json *o2 = cj_obj();
        cj_num(o2, "pct", r->delta_pct[k]);
        cj_num(o2, ikey, r->delta_value[k]);
        cj_push(dl, o2);
    }
    cli_json *fl = cj_add_arr(doc, "flags");
    for (unsigned b = 0; b < CPD_DOMAINS_NFLAGS; b++)
        if (r->flags & (1u << b))
            cj_push_str(fl, cpd_domains_flag_name(1u << b));
    cli_pd_flags_json(cj_add_arr(doc, "fit_flags"), d->fit.res->flags, d->fit.modality);
    cj_str(doc, "hr_caution", CLI_HR_CAUTION);
    cj_str(doc, "caution", CLI_CAUTION);
}
