/* cli_domains.c: store -> domains input: the fit, the newest ramp's GET, a lactate LT1, the newest
 * block of trials for the staleness check. */
#include "cli_domains.h"
#include "cli_gx.h"
#include "cpdomain/lactate.h"
#include "cpdomain/units.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>


void cli_domains_free(cli_domains *d)
{
    if (d)
        cli_pd_fit_free(&d->fit);
}

const char *cli_domains_fmt(const cli_domains *d, double v, char *buf, size_t n)
{
    char num[32];
    if (d->fit.modality == CPD_PD_POWER)
        snprintf(buf, n, "%s W", cli_num(num, sizeof num, v, 0));
    else {
        const char *lab;
        double per = cli_pd_pace_m(&d->fit.athlete, &lab);
        char pace[32];
        cpd_format_pace(v, per, pace, sizeof pace);
        snprintf(buf, n, "%s m/s (%s%s)", cli_num(num, sizeof num, v, 2), pace, lab);
    }
    return buf;
}

/* The newest ramp of the fit's modality, analysed; fills the GET inputs. Quiet when none. */
static int add_ramp(cli_ctx *c, cli_domains *d)
{
    cpd_gx_test *v = NULL;
    size_t n = 0;
    int rc = cpd_store_gx_list(c->store, d->fit.athlete.code, CPD_GXT_RAMP, &v, &n);
    if (rc)
        return cli_store_fail(c, rc);
    int want_speed = d->fit.modality == CPD_PD_SPEED;
    long long id = 0;
    for (size_t i = n; i-- > 0;)
        if (v[i].speed == want_speed) {
            id = v[i].id;
            break;
        }
    free(v);
    if (!id)
        return 0;
    cpd_gx_test t;
    cpd_athlete a;
    cpd_ramp_ws *w = NULL;
    cpd_ramp_result *r = calloc(1, sizeof *r);
    if (!r)
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    /* a ramp that cannot be analysed leaves the boundary to LT1; say so */
    if (cli_ramp_analyse(c, id, NULL, NULL, NULL, &t, &a, &w, r)) {
        cli_note(c, "note: ramp %lld could not be analysed; the domains use the other tests", id);
        free(r);
        return 0;
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
        cpd_ramp_opts ro; /* the default window and smoothing, as cli_ramp_analyse without overrides */
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
    cpd_ramp_free(w);
    free(r);
    return 0;
}

static int add_lactate(cli_ctx *c, cli_domains *d)
{
    cpd_lactate_test *v = NULL;
    size_t n = 0;
    int rc = cpd_store_lactate_list(c->store, d->fit.athlete.code, &v, &n);
    if (rc)
        return cli_store_fail(c, rc);
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
    return 0;
}

/* The time to reach VO2max from the newest bout above CP whose response was severe (delay + 4 tau
 * of its primary component, cpd_kinetics_time_to_vo2max). Quiet when none. A supra-maximal bout,
 * above the ramp's peak constant-intensity equivalent (the intensity at VO2peak), is passed over:
 * its primary response runs into VO2max and stops there, so the fitted tau is too short (the demo's
 * 340 W bout of C01, generated with tau 33 s, fits 23 s and moved the boundary by 40 W). */
static void add_tau(cli_ctx *c, cli_domains *d)
{
    cpd_gx_test *v = NULL;
    size_t n = 0;
    if (cpd_store_gx_list(c->store, d->fit.athlete.code, CPD_GXT_BOUT, &v, &n))
        return;
    int want_speed = d->fit.modality == CPD_PD_SPEED;
    cpd_kinetics_result *r = calloc(1, sizeof *r);
    int quiet = c->quiet;
    c->quiet = 1;
    c->mute++;
    for (size_t i = n; r && i-- > 0;) {
        if (v[i].speed != want_speed || !(v[i].intensity > d->in.fit->cp) ||
            (d->in.has_peak && v[i].intensity > d->in.peak))
            continue;
        char id[32];
        snprintf(id, sizeof id, "%lld", (long long)v[i].id);
        /* a bout that cannot be analysed is skipped; its own command says why */
        cpd_kinetics_tvo2max tv;
        if (cli_bout_analyse(c, id, r) == 0 && r->domain == CPD_KIN_SEVERE &&
            cpd_kinetics_time_to_vo2max(r, &tv) == CPD_OK) {
            d->in.has_tau = d->in.has_t_vo2max = 1;
            d->in.tau_s = tv.tau_s;
            d->in.delay_s = tv.delay_s;
            d->in.t_vo2max_s = tv.t_s;
            d->in.t_vo2max_se_s = tv.se_s;
            snprintf(d->in.tau_source, sizeof d->in.tau_source, "bout %s (%.0f %s)", id, v[i].intensity,
                     want_speed ? "m/s" : "W");
            snprintf(d->in.tau_date, sizeof d->in.tau_date, "%s", v[i].date);
            break;
        }
    }
    c->mute--;
    c->quiet = quiet;
    free(r);
    free(v);
}

/* The newest block of trials: those within CLI_PD_BLOCK_DAYS of the newest. When it is a strict subset of
 * at least 3 trials, its CP feeds the staleness check. */
static void add_recent(cli_ctx *c, cli_domains *d, const char *to)
{
    const cli_pd_fit *f = &d->fit;
    char from[11];
    if (!cli_pd_newest_block(f, from))
        return;
    int quiet = c->quiet;
    c->quiet = 1;
    c->mute++;
    cli_pd_fit r;
    if (cli_pd_load_fit(c, f->athlete.code, from, to, CPD_PD_MODEL_BIT(d->model), &r) == 0) {
        const cpd_pd_model_fit *m = &r.res->models[d->model];
        if (m->ok) {
            d->in.has_recent = 1;
            d->in.recent_cp = m->cp;
            snprintf(d->in.recent_from, sizeof d->in.recent_from, "%s", r.trials[0].date);
            snprintf(d->in.recent_to, sizeof d->in.recent_to, "%s", r.trials[r.n - 1].date);
        }
        cli_pd_fit_free(&r);
    }
    c->mute--;
    c->quiet = quiet;
}

int cli_domains_build(cli_ctx *c, const char *code, const char *from, const char *to, const char *model,
                      int stale_days, cli_domains *d)
{
    memset(d, 0, sizeof *d);
    int rc = cli_pd_load_current(c, code, from, to, CPD_PD_ALL_MODELS, &d->fit, &d->older_trials);
    if (rc)
        return rc;
    const cpd_pd_result *r = d->fit.res;
    if (model) {
        if (cpd_pd_model_parse(model, &d->model)) {
            cli_domains_free(d);
            return cli_usage("domains", "--model: '%s' is not a model", model);
        }
    } else if (r->has_best)
        d->model = r->best;
    else {
        cli_domains_free(d);
        return cli_fail(c, CPD_ENODATA, "%s: no power-duration model qualifies as best; name one with --model (see 'cpdomain fit %s')",
                        code, code);
    }
    const cpd_pd_model_fit *m = &r->models[d->model];
    if (!m->ok) {
        int ex = cli_fail(c, CPD_ENODATA, "%s: the %s model did not fit: %s", code, cpd_pd_model_name(d->model),
                          cpd_pd_fail_text(m->fail));
        cli_domains_free(d);
        return ex;
    }
    cpd_domains_input *in = &d->in;
    in->modality = d->fit.modality;
    in->fit = m;
    snprintf(in->fit_date, sizeof in->fit_date, "%s", d->fit.trials[d->fit.n - 1].date);
    in->has_mass = d->fit.athlete.has_mass;
    in->mass_kg = d->fit.athlete.mass_kg;
    in->today = c->today;
    in->stale_days = stale_days;
    if ((rc = add_ramp(c, d)) || (rc = add_lactate(c, d))) {
        cli_domains_free(d);
        return rc;
    }
    add_recent(c, d, to);
    add_tau(c, d);
    if ((rc = cpd_domains_compute(in, &d->res))) {
        cli_domains_free(d);
        return cli_fail(c, rc, "%s: the domains cannot be computed: %s", code, cpd_strerror(rc));
    }
    return 0;
}
