/* athlete_domains.c: an athlete's intensity domains from the store (the current fit, the newest
 * ramp's GET, a lactate LT1, the newest block's CP for staleness, tau of a severe bout) and the
 * season's history. No printing (athlete.h). */
#include "athlete_int.h"
#include "cpdomain/lactate.h"
#include "cpdomain/units.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void cpd_athlete_domains_free(cpd_athlete_domains *d)
{
    if (!d)
        return;
    cpd_athlete_fit_free(&d->fit);
    cpd_ramp_free(d->ramp_ws);
    free(d->ramp);
    d->ramp_ws = NULL;
    d->ramp = NULL;
}

/* The newest ramp of the fit's modality, analysed; fills the GET inputs. Nothing when none. */
static int add_ramp(cpd_store *s, cpd_athlete_domains *d, char *msg)
{
    long long id = 0;
    cpd_gx_test t;
    cpd_ramp_ws *w = NULL;
    cpd_ramp_result *r = NULL;
    char rm[CPD_MSG_MAX] = "";
    int rc = cpd_athlete_newest_ramp(s, d->fit.athlete.code, d->fit.modality == CPD_PD_SPEED, &id, &t, &w, &r, rm, msg);
    if (rc || !id)
        return rc;
    /* a ramp that cannot be analysed leaves the boundary to LT1; say so */
    if (!r) {
        cpd_athlete_note(&d->notes, 1, "%s", rm);
        cpd_athlete_note(&d->notes, 0, "note: ramp %lld could not be analysed; the domains use the other tests", id);
        return CPD_OK;
    }
    d->has_ramp = 1;
    d->ramp_id = id;
    snprintf(d->ramp_date, sizeof d->ramp_date, "%s", t.date);
    cpd_domains_input *in = &d->in;
    const cpd_ramp_threshold *g = &r->get;
    if (g->status != CPD_THR_NOT_FOUND && g->has_equiv) {
        in->has_get = 1;
        in->get = g->equiv_intensity;
        in->get_manual = g->status == CPD_THR_MANUAL;
        snprintf(in->get_source, sizeof in->get_source, "ramp %lld%s", id,
                 r->protocol == CPD_RAMP_PROTO_STEPS ? " (a step test)" : "");
        in->get_steps = r->protocol == CPD_RAMP_PROTO_STEPS;
        snprintf(in->get_date, sizeof in->get_date, "%s", t.date);
        in->has_hr_get = g->has_hr;
        in->hr_get = g->hr_bpm;
        cpd_ramp_ci ci;
        cpd_ramp_opts ro; /* the default window and smoothing, as cpd_athlete_ramp_analyse without overrides */
        cpd_ramp_opts_init(&ro);
        if (g->status == CPD_THR_FOUND &&
            cpd_ramp_ci_compute(w, r, &ro, CPD_RAMP_CI_BOOT, CPD_RAMP_CI_SEED, &ci) == CPD_OK &&
            ci.get.valid && ci.get.has_equiv) {
            in->has_get_ci = 1;
            in->get_ci95[0] = ci.get.equiv_ci95[0];
            in->get_ci95[1] = ci.get.equiv_ci95[1];
        }
    } else if (g->status != CPD_THR_NOT_FOUND)
        d->ramp_mrt_missing = 1;
    else if (g->reason == CPD_RAMP_R_NO_VCO2)
        d->ramp_no_vco2 = 1;
    if (r->rcp.status != CPD_THR_NOT_FOUND && r->rcp.has_hr) {
        in->has_hr_rcp = 1;
        in->hr_rcp = r->rcp.hr_bpm;
    }
    if (r->rcp.status != CPD_THR_NOT_FOUND && r->rcp.has_equiv) {
        in->has_rcp = 1;
        in->rcp = r->rcp.equiv_intensity;
    }
    if (r->protocol == CPD_RAMP_PROTO_STEPS) { /* a held stage needs no lag correction */
        in->has_peak = 1;
        in->peak = r->peak_intensity;
    } else if (r->mrt_status != CPD_THR_NOT_FOUND) {
        in->has_peak = 1;
        in->peak = r->peak_intensity - r->rate_used * r->mrt_s / 60;
    }
    d->ramp_test = t;
    d->ramp = r;
    d->ramp_ws = w;
    return CPD_OK;
}

/* LT1 of the newest lactate test of the fit's modality. */
static int add_lactate(cpd_store *s, cpd_athlete_domains *d, char *msg)
{
    cpd_lactate_test *v = NULL;
    size_t n = 0;
    int rc = cpd_store_lactate_list(s, d->fit.athlete.code, &v, &n);
    if (rc)
        return cpd_athlete_say(msg, rc, "%s", cpd_store_errmsg(s));
    int want_speed = d->fit.modality == CPD_PD_SPEED;
    for (size_t i = n; i-- > 0;) {
        if (v[i].speed != want_speed)
            continue;
        cpd_lactate_result *r = calloc(1, sizeof *r);
        if (r && cpd_lactate_analyse(v[i].intensity, v[i].lactate, v[i].has_hr ? v[i].hr : NULL, v[i].n, r, NULL) == CPD_OK &&
            r->lt1.status == CPD_LACTATE_FOUND) {
            d->in.has_lt1 = 1;
            d->in.lt1 = r->lt1.intensity;
            snprintf(d->in.lt1_source, sizeof d->in.lt1_source, "lactate test %lld", (long long)v[i].id);
            snprintf(d->in.lt1_date, sizeof d->in.lt1_date, "%s", v[i].date);
        }
        free(r);
        break;
    }
    free(v);
    return CPD_OK;
}

/* The time to reach VO2max from the newest bout above CP whose response was severe (delay + 4 tau
 * of its primary component, cpd_kinetics_time_to_vo2max). A bout that cannot be analysed is
 * skipped silently: its own analysis says why. A supra-maximal bout, above the ramp's peak
 * constant-intensity equivalent (the intensity at VO2peak), is passed over: its primary response
 * runs into VO2max and stops there, so the fitted tau is too short (the demo's 340 W bout of C01,
 * generated with tau 33 s, fits 23 s and moved the boundary by 40 W). */
static void add_tau(cpd_store *s, cpd_athlete_domains *d)
{
    cpd_gx_test *v = NULL;
    size_t n = 0;
    if (cpd_store_gx_list(s, d->fit.athlete.code, CPD_GXT_BOUT, &v, &n))
        return;
    int want_speed = d->fit.modality == CPD_PD_SPEED;
    for (size_t i = n; i-- > 0;) {
        if (v[i].speed != want_speed || !(v[i].intensity > d->in.fit->cp) ||
            (d->in.has_peak && v[i].intensity > d->in.peak))
            continue;
        long long id = v[i].id;
        cpd_athlete_bouts *b = calloc(1, sizeof *b);
        if (!b)
            break;
        cpd_kinetics_tvo2max tv;
        int found = cpd_athlete_bouts_analyse(s, &id, 1, NULL, b, NULL) == CPD_OK && b->res.domain == CPD_KIN_SEVERE &&
                    cpd_kinetics_time_to_vo2max(&b->res, &tv) == CPD_OK;
        cpd_athlete_bouts_free(b);
        free(b);
        if (found) {
            d->in.has_tau = d->in.has_t_vo2max = 1;
            d->in.tau_s = tv.tau_s;
            d->in.delay_s = tv.delay_s;
            d->in.t_vo2max_s = tv.t_s;
            d->in.t_vo2max_se_s = tv.se_s;
            snprintf(d->in.tau_source, sizeof d->in.tau_source, "bout %lld (%.0f %s)", id, v[i].intensity,
                     want_speed ? "m/s" : "W");
            snprintf(d->in.tau_date, sizeof d->in.tau_date, "%s", v[i].date);
            break;
        }
    }
    free(v);
}

/* The newest block of trials: those within CPD_ATHLETE_BLOCK_DAYS of the newest. When it is a strict
 * subset of at least 3 trials, its CP feeds the staleness check. */
static void add_recent(cpd_store *s, cpd_athlete_domains *d, const char *to)
{
    const cpd_athlete_fit *f = &d->fit;
    char from[11];
    if (!cpd_athlete_newest_block(f, from))
        return;
    cpd_athlete_fit r;
    if (cpd_athlete_fit_load(s, f->athlete.code, from, to, CPD_PD_MODEL_BIT(d->model), &r, NULL) == CPD_OK) {
        const cpd_pd_model_fit *m = &r.res->models[d->model];
        if (m->ok) {
            d->in.has_recent = 1;
            d->in.recent_cp = m->cp;
            snprintf(d->in.recent_from, sizeof d->in.recent_from, "%s", r.trials[0].date);
            snprintf(d->in.recent_to, sizeof d->in.recent_to, "%s", r.trials[r.n - 1].date);
        }
        cpd_athlete_fit_free(&r);
    }
}

int cpd_athlete_domains_build(cpd_store *s, const char *code, const cpd_athlete_query *q, cpd_athlete_domains *d,
                              char *msg)
{
    memset(d, 0, sizeof *d);
    int rc = cpd_athlete_fit_current(s, code, q->from, q->to, CPD_PD_ALL_MODELS, &d->fit, &d->older_trials, msg);
    d->notes = d->fit.notes;
    if (rc)
        return rc;
    const cpd_pd_result *r = d->fit.res;
    if (q->has_model)
        d->model = q->model;
    else if (r->has_best)
        d->model = r->best;
    else {
        cpd_athlete_domains_free(d);
        return cpd_athlete_say(msg, CPD_ENODATA,
                    "%s: no power-duration model qualifies as best; name one with --model (see 'cpdomain fit %s')", code,
                    code);
    }
    const cpd_pd_model_fit *m = &r->models[d->model];
    if (!m->ok) {
        cpd_athlete_say(msg, CPD_ENODATA, "%s: the %s model did not fit: %s", code, cpd_pd_model_name(d->model),
             cpd_pd_fail_text(m->fail));
        cpd_athlete_domains_free(d);
        return CPD_ENODATA;
    }
    cpd_domains_input *in = &d->in;
    in->modality = d->fit.modality;
    in->fit = m;
    snprintf(in->fit_date, sizeof in->fit_date, "%s", d->fit.trials[d->fit.n - 1].date);
    in->has_mass = d->fit.athlete.has_mass;
    in->mass_kg = d->fit.athlete.mass_kg;
    in->today = q->today;
    in->stale_days = q->stale_days;
    if ((rc = add_ramp(s, d, msg)) || (rc = add_lactate(s, d, msg))) {
        cpd_athlete_domains_free(d);
        return rc;
    }
    add_recent(s, d, q->to);
    add_tau(s, d);
    if ((rc = cpd_domains_compute(in, &d->res))) {
        cpd_athlete_domains_free(d);
        return cpd_athlete_say(msg, rc, "%s: the domains cannot be computed: %s", code, cpd_strerror(rc));
    }
    return CPD_OK;
}

/* ---- a bout's domain against the boundaries ---- */

/* The athlete's trials usable for a power-duration fit in modality speed. */
static size_t usable_trials(cpd_store *s, const char *code, int speed)
{
    cpd_trial *v = NULL;
    size_t n = 0, k = 0;
    if (cpd_store_trial_list(s, code, &v, &n))
        return 0;
    for (size_t i = 0; i < n; i++)
        k += !v[i].excluded && (v[i].kind == CPD_TRIAL_POWER) == !speed;
    free(v);
    return k;
}

void cpd_athlete_bouts_check(cpd_store *s, const cpd_athlete_bouts *b, int today, cpd_athlete_bout_check *k)
{
    memset(k, 0, sizeof *k);
    if (usable_trials(s, b->a.code, b->speed) >= 2) {
        /* the fit's own notes belong to the fit and the domains: not repeated here */
        cpd_athlete_domains *d = calloc(1, sizeof *d);
        cpd_athlete_query q = {.today = today};
        if (d && cpd_athlete_domains_build(s, b->a.code, &q, d, NULL) == CPD_OK) {
            if ((d->fit.modality == CPD_PD_SPEED) == (b->speed != 0)) {
                const cpd_boundary *g = &d->res.b[CPD_BND_MOD_HEAVY], *p = &d->res.b[CPD_BND_HEAVY_SEVERE];
                if (g->valid) {
                    k->get = g->value;
                    snprintf(k->get_source, sizeof k->get_source, "%s", g->source);
                }
                if (p->valid) {
                    k->cp = p->value;
                    snprintf(k->cp_source, sizeof k->cp_source, "%s", p->source);
                }
            }
        } else
            cpd_athlete_note(&k->notes, 0, "note: the athlete's %s is not available: the domain is checked against the GET alone",
                             b->speed ? "CS" : "CP");
        cpd_athlete_domains_free(d);
        free(d);
    }
    if (!(k->get > 0) && b->has_ramp_get) {
        k->get = b->ramp_get;
        snprintf(k->get_source, sizeof k->get_source, "ramp %lld (%s)", b->ramp_id, b->ramp_date);
    }
    if (!(k->get > 0) && !(k->cp > 0)) {
        snprintf(k->why_unchecked, sizeof k->why_unchecked,
                 "no GET equivalent (a ramp with its MRT, or a lactate LT1) and no power-duration fit on file: the "
                 "domain is judged from the response alone");
        return;
    }
    k->checked = 1;
    k->check_rc = cpd_kinetics_verify_bout(b->res.domain, b->res.end_s, b->intensity, k->get, k->cp, &k->chk);
}

/* ---- the season ---- */

void cpd_athlete_history_free(cpd_athlete_history *a)
{
    if (!a)
        return;
    cpd_athlete_fit_free(&a->f);
    free(a->h);
    a->h = NULL;
}

int cpd_athlete_history_build(cpd_store *s, const char *code, int win, int has_model, cpd_pd_model model,
                              cpd_athlete_history *a, char *msg)
{
    memset(a, 0, sizeof *a);
    a->win = win;
    int rc = cpd_athlete_fit_load(s, code, NULL, NULL, CPD_PD_MODEL_BIT(CPD_PD_LINEAR_TOTAL), &a->f, msg);
    if (rc)
        return rc;
    a->h = calloc(1, sizeof *a->h);
    int *day = calloc(a->f.n, sizeof *day);
    cpd_pd_ws *w = cpd_pd_alloc();
    if (!a->h || !day || !w) {
        free(day);
        cpd_pd_free(w);
        cpd_athlete_history_free(a);
        return cpd_athlete_say(msg, CPD_ENOMEM, "out of memory");
    }
    for (size_t i = 0; i < a->f.n; i++)
        cpd_parse_date(a->f.trials[i].date, &day[i]);
    rc = cpd_history_build(w, a->f.modality, day, a->f.x, a->f.t, a->f.n, win, has_model, model, a->h);
    free(day);
    cpd_pd_free(w);
    if (rc) {
        cpd_athlete_history_free(a);
        return cpd_athlete_say(msg, rc, "%s: history: %s", code, cpd_strerror(rc));
    }
    /* ramps of the same modality: GET equivalent and VO2peak */
    cpd_gx_test *v = NULL;
    size_t n = 0;
    if ((rc = cpd_store_gx_list(s, a->f.athlete.code, CPD_GXT_RAMP, &v, &n))) {
        cpd_athlete_say(msg, rc, "%s", cpd_store_errmsg(s));
        cpd_athlete_history_free(a);
        return rc;
    }
    for (size_t i = 0; i < n; i++) {
        if (v[i].speed != (a->f.modality == CPD_PD_SPEED))
            continue;
        cpd_gx_test t;
        cpd_athlete ath;
        cpd_ramp_ws *rw = NULL;
        cpd_ramp_result *rr = calloc(1, sizeof *rr);
        if (rr && cpd_athlete_ramp_analyse(s, v[i].id, NULL, &t, &ath, &rw, rr, NULL) == CPD_OK) {
            int d = 0;
            cpd_parse_date(t.date, &d);
            int has_get = rr->get.status != CPD_THR_NOT_FOUND && rr->get.has_equiv;
            cpd_history_attach_ramp(a->h, d, has_get, has_get ? rr->get.equiv_intensity : 0, 1, rr->vo2peak_ml_min, win);
        }
        cpd_ramp_free(rw);
        free(rr);
    }
    free(v);
    cpd_history_changes(a->h);
    return CPD_OK;
}
