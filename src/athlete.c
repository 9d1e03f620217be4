/* athlete.c: an athlete's stored tests gathered and analysed: the power-duration fit of the trials
 * (the current block), a ramp with its stored options, bouts of one transition. No printing: the
 * side notes go into the result (athlete.h). */
#include "athlete_int.h"
#include "cpdomain/units.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

int cpd_athlete_say(char *msg, int rc, const char *fmt, ...)
{
    if (msg) {
        va_list ap;
        va_start(ap, fmt);
        vsnprintf(msg, CPD_MSG_MAX, fmt, ap);
        va_end(ap);
    }
    return rc;
}

/* A store failure: its status with the store's message. */
static int store_fail(cpd_store *s, int rc, char *msg)
{
    return cpd_athlete_say(msg, rc, "%s", cpd_store_errmsg(s));
}

void cpd_athlete_note(cpd_athlete_notes *n, int error, const char *fmt, ...)
{
    if (n->n >= CPD_ATHLETE_NOTES_MAX)
        return;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(n->text[n->n], sizeof n->text[n->n], fmt, ap);
    va_end(ap);
    n->error[n->n++] = error;
}

void cpd_athlete_fit_free(cpd_athlete_fit *f)
{
    if (!f)
        return;
    free(f->trials);
    free(f->x);
    free(f->t);
    free(f->res);
    memset(f, 0, sizeof *f);
}

/* Frees f after a failure, keeping its notes for the caller to show. */
static void drop(cpd_athlete_fit *f)
{
    cpd_athlete_notes keep = f->notes;
    cpd_athlete_fit_free(f);
    f->notes = keep;
}

static int in_dates(const cpd_trial *t, const char *from, const char *to)
{
    return !t->excluded && !(from && strcmp(t->date, from) < 0) && !(to && strcmp(t->date, to) > 0);
}

int cpd_athlete_fit_load(cpd_store *s, const char *code, const char *from, const char *to, unsigned mask,
                         cpd_athlete_fit *f, char *msg)
{
    memset(f, 0, sizeof *f);
    int rc = cpd_store_athlete_get(s, code, &f->athlete);
    if (rc)
        return store_fail(s, rc, msg);
    cpd_trial *all = NULL;
    size_t na = 0;
    if ((rc = cpd_store_trial_list(s, f->athlete.code, &all, &na)))
        return store_fail(s, rc, msg);
    size_t np = 0, ns = 0;
    for (size_t i = 0; i < na; i++)
        if (in_dates(&all[i], from, to)) {
            if (all[i].kind == CPD_TRIAL_POWER)
                np++;
            else
                ns++;
        }
    int speed_sport = strcmp(f->athlete.sport, "running") == 0 || strcmp(f->athlete.sport, "swimming") == 0;
    f->modality = (ns > np || (ns == np && speed_sport)) ? CPD_PD_SPEED : CPD_PD_POWER;
    f->skipped_other = f->modality == CPD_PD_SPEED ? np : ns;
    size_t want = f->modality == CPD_PD_SPEED ? ns : np;
    f->trials = calloc(want ? want : 1, sizeof *f->trials);
    f->x = calloc(want ? want : 1, sizeof(double));
    f->t = calloc(want ? want : 1, sizeof(double));
    f->res = calloc(1, sizeof *f->res);
    if (!f->trials || !f->x || !f->t || !f->res) {
        free(all);
        cpd_athlete_fit_free(f);
        return cpd_athlete_say(msg, CPD_ENOMEM, "out of memory");
    }
    for (size_t i = 0; i < na; i++) {
        const cpd_trial *t = &all[i];
        if (!in_dates(t, from, to) || (t->kind == CPD_TRIAL_POWER) != (f->modality == CPD_PD_POWER))
            continue;
        f->trials[f->n] = *t;
        /* SPEC: a distance trial is its mean speed v = D/t */
        f->x[f->n] = t->kind == CPD_TRIAL_DISTANCE ? t->value / t->duration_s : t->value;
        f->t[f->n] = t->duration_s;
        f->n++;
    }
    free(all);
    if (f->skipped_other)
        cpd_athlete_note(&f->notes, 0, "note: %zu %s trial(s) of %s left out: one fit uses one modality", f->skipped_other,
                         f->modality == CPD_PD_SPEED ? "power" : "speed or distance", code);
    if (f->n < 2) {
        cpd_athlete_say(msg, CPD_ENODATA,
            "%s has %zu usable trial(s)%s%s: a power-duration fit needs at least 2, and 3-5 trials of "
            "about 2-15 min on separate days give an estimate with uncertainty",
            code, f->n, from || to ? " in the chosen dates" : "", f->n ? "" : " (excluded trials do not count)");
        drop(f);
        return CPD_ENODATA;
    }
    if (f->n > CPD_PD_NMAX) {
        cpd_athlete_say(msg, CPD_EUSAGE, "%s has %zu trials in the chosen dates; at most %d fit at once: use --from/--to", code, f->n,
            CPD_PD_NMAX);
        drop(f);
        return CPD_EUSAGE;
    }
    char fm[CPD_MSG_MAX] = "";
    rc = cpd_pd_fit_models(f->modality, f->x, f->t, f->n, mask, f->res, fm);
    /* time trials over set distances: the distance-time model has the right error structure */
    size_t nd = 0;
    for (size_t i = 0; i < f->n; i++)
        nd += f->trials[i].kind == CPD_TRIAL_DISTANCE;
    if (!rc && f->modality == CPD_PD_SPEED && nd == f->n && (mask & CPD_PD_MODEL_BIT(CPD_PD_LINEAR_TOTAL)))
        f->time_trials = cpd_pd_best_for_time_trials(f->res) == CPD_OK;
    if (rc) {
        cpd_athlete_say(msg, rc, "fitting %s: %s", code, fm[0] ? fm : cpd_strerror(rc));
        drop(f);
        return rc;
    }
    return CPD_OK;
}

size_t cpd_athlete_newest_block(const cpd_athlete_fit *f, char start[11])
{
    int newest = 0;
    if (f->n == 0 || cpd_parse_date(f->trials[f->n - 1].date, &newest) != CPD_OK)
        return 0;
    cpd_format_date(newest - CPD_ATHLETE_BLOCK_DAYS, start);
    size_t k = 0;
    for (size_t i = 0; i < f->n; i++)
        k += strcmp(f->trials[i].date, start) >= 0;
    return k >= 3 && k < f->n ? k : 0;
}

int cpd_athlete_fit_current(cpd_store *s, const char *code, const char *from, const char *to, unsigned mask,
                            cpd_athlete_fit *f, size_t *older, char *msg)
{
    *older = 0;
    int rc = cpd_athlete_fit_load(s, code, from, to, mask, f, msg);
    if (rc || from)
        return rc;
    char start[11];
    size_t k = cpd_athlete_newest_block(f, start);
    if (!k)
        return CPD_OK;
    cpd_athlete_fit g;
    if (cpd_athlete_fit_load(s, code, start, to, mask, &g, NULL))
        return CPD_OK; /* keep the fit of all trials */
    /* the block must give an answer: its best model, or the one model asked for */
    int single = mask && !(mask & (mask - 1)), usable = single ? 0 : g.res->has_best;
    for (int m = 0; single && m < CPD_PD_NMODELS; m++)
        if (mask == CPD_PD_MODEL_BIT(m))
            usable = g.res->models[m].ok;
    if (!usable) {
        cpd_athlete_note(&f->notes, 0, "note: the newest block of trials (from %s) gives no usable fit; all %zu trials are used",
                         start, f->n);
        cpd_athlete_fit_free(&g);
        return CPD_OK;
    }
    *older = f->n - k;
    g.notes = f->notes; /* the notes of the first load; the block's own repeat them */
    cpd_athlete_fit_free(f);
    *f = g;
    return CPD_OK;
}

void cpd_athlete_ramp_opts(const cpd_gx_test *t, const cpd_athlete *a, cpd_ramp_opts *ro)
{
    ro->modality = t->speed ? CPD_RAMP_SPEED : CPD_RAMP_POWER;
    ro->rate_per_min = t->has_rate ? t->rate_per_min : 0;
    ro->start = t->start;
    ro->start_given = t->has_start;
    ro->onset_s = t->onset_s;
    ro->protocol = t->protocol;
    ro->end_given = t->has_end;
    ro->end_s = t->end_s;
    ro->baseline_given = t->has_baseline;
    ro->baseline_intensity = t->baseline;
    ro->mrt_given = t->has_mrt;
    ro->mrt_s = t->mrt_s;
    ro->mass_kg = a->has_mass ? a->mass_kg : 0;
    ro->manual_get_vo2_ml_min = t->has_get_manual ? t->get_vo2_manual : 0;
    ro->manual_rcp_vo2_ml_min = t->has_rcp_manual ? t->rcp_vo2_manual : 0;
    ro->manual_get_intensity = t->has_get_intensity ? t->get_intensity_manual : 0;
    ro->manual_rcp_intensity = t->has_rcp_intensity ? t->rcp_intensity_manual : 0;
}

int cpd_athlete_ramp_analyse(cpd_store *s, long long id, const cpd_athlete_ramp_over *ov, cpd_gx_test *t,
                             cpd_athlete *a, cpd_ramp_ws **w, cpd_ramp_result *r, char *msg)
{
    *w = NULL;
    cpd_ramp_opts ro;
    cpd_ramp_opts_init(&ro);
    if (ov && ov->has_window)
        ro.peak_window_s = ov->window_s;
    if (ov && ov->has_outlier)
        ro.outlier_k = ov->outlier_k;
    cpd_gx_series *g = NULL;
    int rc;
    if ((rc = cpd_store_gx_get(s, id, CPD_GXT_RAMP, t, &g)))
        return store_fail(s, rc, msg);
    if ((rc = cpd_store_athlete_get(s, t->athlete, a))) {
        cpd_gx_free(g);
        return store_fail(s, rc, msg);
    }
    cpd_athlete_ramp_opts(t, a, &ro);
    if (ov && ov->has_mrt) {
        ro.mrt_given = 1;
        ro.mrt_s = ov->mrt_s;
    }
    *w = cpd_ramp_alloc();
    char rm[CPD_MSG_MAX] = "";
    rc = *w ? cpd_ramp_analyse(*w, g, &ro, r, rm) : CPD_ENOMEM;
    cpd_gx_free(g);
    if (rc) {
        cpd_ramp_free(*w);
        *w = NULL;
        return cpd_athlete_say(msg, rc, "ramp %lld: %s", id, rm[0] ? rm : cpd_strerror(rc));
    }
    return CPD_OK;
}

int cpd_athlete_newest_ramp(cpd_store *s, const char *code, int speed, long long *id, cpd_gx_test *t,
                            cpd_ramp_ws **w, cpd_ramp_result **r, char *rm, char *msg)
{
    *id = 0;
    *w = NULL;
    *r = NULL;
    cpd_gx_test *v = NULL;
    size_t n = 0;
    int rc = cpd_store_gx_list(s, code, CPD_GXT_RAMP, &v, &n);
    if (rc)
        return store_fail(s, rc, msg);
    for (size_t i = n; i-- > 0;)
        if (v[i].speed == speed) {
            *id = v[i].id;
            break;
        }
    free(v);
    if (!*id)
        return CPD_OK;
    cpd_athlete a;
    if (!(*r = calloc(1, sizeof **r)))
        return cpd_athlete_say(msg, CPD_ENOMEM, "out of memory");
    if (cpd_athlete_ramp_analyse(s, *id, NULL, t, &a, w, *r, rm)) {
        free(*r);
        *r = NULL;
    }
    return CPD_OK;
}

/* ---- bouts ---- */

void cpd_athlete_bouts_free(cpd_athlete_bouts *b)
{
    if (!b)
        return;
    for (size_t i = 0; i < b->n; i++)
        cpd_gx_free(b->g[i]);
    cpd_kinetics_free(b->ws);
    memset(b, 0, sizeof *b);
}

/* The repeats must be one transition: one athlete, one modality, intensities and baselines within
 * CPD_ATHLETE_SAME_PCT of the bout intensity. Returns CPD_OK or CPD_EUSAGE with why. */
static int check_repeats(cpd_athlete_bouts *r, char *msg)
{
    const cpd_gx_test *t0 = &r->t[0];
    double lo = t0->intensity, hi = t0->intensity, blo = INFINITY, bhi = -INFINITY, sum = 0, bsum = 0;
    size_t ilo = 0, ihi = 0;
    r->baseline_given = 1;
    for (size_t i = 0; i < r->n; i++) {
        const cpd_gx_test *t = &r->t[i];
        if (strcmp(t->athlete, t0->athlete))
            return cpd_athlete_say(msg, CPD_EUSAGE, "bouts %lld and %lld belong to different athletes (%s, %s): an ensemble averages "
                       "repeats of one athlete's transition", (long long)t0->id, (long long)t->id, t0->athlete, t->athlete);
        if (t->speed != t0->speed)
            return cpd_athlete_say(msg, CPD_EUSAGE, "bouts %lld and %lld mix a power and a speed bout: not repeats of one transition",
                       (long long)t0->id, (long long)t->id);
        if (t->intensity < lo) {
            lo = t->intensity;
            ilo = i;
        }
        if (t->intensity > hi) {
            hi = t->intensity;
            ihi = i;
        }
        double b = t->has_baseline ? t->baseline : 0.0;
        blo = fmin(blo, b);
        bhi = fmax(bhi, b);
        r->baseline_given &= t->has_baseline;
        sum += t->intensity;
        bsum += b;
    }
    const char *u = t0->speed ? "m/s" : "W";
    if (100.0 * (hi - lo) / lo > CPD_ATHLETE_SAME_PCT)
        return cpd_athlete_say(msg, CPD_EUSAGE, "bout %lld (%g %s) and bout %lld (%g %s) differ by %.1f %% in %s, more than %.0f %%: "
                   "only repeats of the same transition are averaged", (long long)r->t[ilo].id, lo, u,
                   (long long)r->t[ihi].id, hi, u, 100.0 * (hi - lo) / lo, t0->speed ? "speed" : "power",
                   CPD_ATHLETE_SAME_PCT);
    if (100.0 * (bhi - blo) / lo > CPD_ATHLETE_SAME_PCT)
        return cpd_athlete_say(msg, CPD_EUSAGE, "the baselines differ (%g to %g %s; a missing --baseline counts as 0): only repeats of "
                   "the same transition are averaged", blo, bhi, u);
    r->speed = t0->speed;
    r->intensity = sum / (double)r->n;
    r->baseline = bsum / (double)r->n;
    return CPD_OK;
}

/* VO2peak and the GET equivalent of the athlete's newest ramp of the bouts' modality; nothing when
 * there is none, notes when it cannot be analysed. */
static int bouts_ramp(cpd_store *s, cpd_athlete_bouts *r, char *msg)
{
    long long id = 0;
    cpd_gx_test t;
    cpd_ramp_ws *w = NULL;
    cpd_ramp_result *rr = NULL;
    char rm[CPD_MSG_MAX] = "";
    int rc = cpd_athlete_newest_ramp(s, r->a.code, r->speed, &id, &t, &w, &rr, rm, msg);
    if (rc || !id)
        return rc;
    if (!rr) {
        cpd_athlete_note(&r->notes, 1, "%s", rm);
        cpd_athlete_note(&r->notes, 0, "note: ramp %lld could not be analysed: no VO2peak for the bout", id);
        return CPD_OK;
    }
    r->ramp_id = id;
    snprintf(r->ramp_date, sizeof r->ramp_date, "%s", t.date);
    if (!r->vo2peak_src) {
        r->vo2peak_src = 1;
        r->ko.vo2peak_ml_min = rr->vo2peak_ml_min;
    }
    if (rr->get.status != CPD_THR_NOT_FOUND && rr->get.has_equiv) {
        r->has_ramp_get = 1;
        r->ramp_get = rr->get.equiv_intensity;
    }
    cpd_ramp_free(w);
    free(rr);
    return CPD_OK;
}

int cpd_athlete_bouts_analyse(cpd_store *s, const long long *ids, size_t n, const cpd_kinetics_opts *ko,
                              cpd_athlete_bouts *r, char *msg)
{
    memset(r, 0, sizeof *r);
    if (n == 0 || n > CPD_ATHLETE_BOUTS_MAX)
        return cpd_athlete_say(msg, CPD_EUSAGE, "give 1 to %d bouts", CPD_ATHLETE_BOUTS_MAX);
    if (ko)
        r->ko = *ko;
    else
        cpd_kinetics_opts_init(&r->ko);
    if (r->ko.vo2peak_ml_min > 0)
        r->vo2peak_src = 2;
    int rc;
    for (size_t i = 0; i < n; i++) {
        if ((rc = cpd_store_gx_get(s, ids[i], CPD_GXT_BOUT, &r->t[i], &r->g[i])))
            return store_fail(s, rc, msg);
        r->n++;
    }
    if ((rc = check_repeats(r, msg)))
        return rc;
    if ((rc = cpd_store_athlete_get(s, r->t[0].athlete, &r->a)))
        return store_fail(s, rc, msg);
    double end = INFINITY;
    for (size_t i = 0; i < r->n; i++) {
        const cpd_gx_series *g = r->g[i];
        if (r->t[i].onset_s < g->t_s[0])
            return cpd_athlete_say(msg, CPD_ENODATA,
                       "bout %lld: no baseline data: the record starts at %g s, after the onset at %g s; the kinetics "
                       "need the breaths before and from the onset (record a baseline, or correct --onset)",
                       (long long)r->t[i].id, g->t_s[0], r->t[i].onset_s);
        end = fmin(end, g->t_s[g->n - 1] - r->t[i].onset_s);
    }
    if (r->ko.end_s > 0 && r->ko.end_s > end + 1e-9)
        return cpd_athlete_say(msg, CPD_EUSAGE, "--fit-end %g s lies beyond the data: %s %.0f s after the onset", r->ko.end_s,
                   r->n > 1 ? "the shortest repeat ends" : "the bout ends", end);
    if ((rc = bouts_ramp(s, r, msg)))
        return rc;
    r->ko.power_w = r->intensity;
    r->ko.baseline_power_w = r->baseline;
    r->ws = cpd_kinetics_alloc();
    if (!r->ws)
        return cpd_athlete_say(msg, CPD_ENOMEM, "out of memory");
    cpd_kinetics_input in[CPD_ATHLETE_BOUTS_MAX];
    for (size_t i = 0; i < r->n; i++) {
        in[i].gx = r->g[i];
        in[i].onset_s = r->t[i].onset_s;
    }
    rc = cpd_kinetics_analyse(r->ws, in, r->n, &r->ko, &r->res);
    if (rc) {
        char ids_text[CPD_MSG_MAX / 2] = "";
        size_t o = 0;
        for (size_t i = 0; i < r->n && o + 24 < sizeof ids_text; i++)
            o += (size_t)snprintf(ids_text + o, sizeof ids_text - o, "%s%lld", i ? "," : "", (long long)ids[i]);
        return cpd_athlete_say(msg, rc, "%s %s: %s", r->n > 1 ? "bouts" : "bout", ids_text,
                   r->res.msg[0] ? r->res.msg : cpd_kinetics_reason_text(r->res.reason));
    }
    return CPD_OK;
}
