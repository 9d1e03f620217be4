/* cli_pd.c: stored trials -> power-duration fit, and the fit's JSON and plain-word flags. */
#include "cli_pd.h"
#include "cpdomain/units.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

const char CLI_CAUTION[] =
    "Caution: these are model estimates with the uncertainty shown, not guarantees. Maximal and "
    "severe-domain efforts need pre-participation screening, appropriate supervision and agreed stop "
    "criteria; follow local rules and defer to licensed practitioners.";

const char CLI_FIELD_ESTIMATE[] =
    "Field estimate: the points are the best efforts found in training and racing, not tests to "
    "exhaustion. Efforts may have been submaximal, which biases CP (CS) low or W' (D') either way; "
    "confirm with time-to-exhaustion trials before relying on it.";

void cli_pd_fit_free(cli_pd_fit *f)
{
    if (!f)
        return;
    free(f->trials);
    free(f->x);
    free(f->t);
    free(f->res);
    memset(f, 0, sizeof *f);
}

int cli_pd_load_fit(cli_ctx *c, const char *code, const char *from, const char *to, unsigned mask, cli_pd_fit *f)
{
    memset(f, 0, sizeof *f);
    int rc = cpd_store_athlete_get(c->store, code, &f->athlete);
    if (rc)
        return cli_store_fail(c, rc);
    cpd_trial *all = NULL;
    size_t na = 0;
    if ((rc = cpd_store_trial_list(c->store, f->athlete.code, &all, &na)))
        return cli_store_fail(c, rc);
    size_t np = 0, ns = 0;
    for (size_t i = 0; i < na; i++) {
        const cpd_trial *t = &all[i];
        if (t->excluded || (from && strcmp(t->date, from) < 0) || (to && strcmp(t->date, to) > 0))
            continue;
        if (t->kind == CPD_TRIAL_POWER)
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
        cli_pd_fit_free(f);
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    }
    for (size_t i = 0; i < na; i++) {
        const cpd_trial *t = &all[i];
        if (t->excluded || (from && strcmp(t->date, from) < 0) || (to && strcmp(t->date, to) > 0))
            continue;
        if ((t->kind == CPD_TRIAL_POWER) != (f->modality == CPD_PD_POWER))
            continue;
        f->trials[f->n] = *t;
        /* SPEC: a distance trial is its mean speed v = D/t */
        f->x[f->n] = t->kind == CPD_TRIAL_DISTANCE ? t->value / t->duration_s : t->value;
        f->t[f->n] = t->duration_s;
        f->n++;
    }
    free(all);
    if (f->skipped_other)
        cli_note(c, "note: %zu %s trial(s) of %s left out: one fit uses one modality", f->skipped_other,
                 f->modality == CPD_PD_SPEED ? "power" : "speed or distance", code);
    if (f->n < 2) {
        int ex = cli_fail(c, CPD_ENODATA,
                          "%s has %zu usable trial(s)%s%s: a power-duration fit needs at least 2, and 3-5 trials of "
                          "about 2-15 min on separate days give an estimate with uncertainty",
                          code, f->n, from || to ? " in the chosen dates" : "", f->n ? "" : " (excluded trials do not count)");
        cli_pd_fit_free(f);
        return ex;
    }
    if (f->n > CPD_PD_NMAX) {
        int ex = cli_fail(c, CPD_EUSAGE, "%s has %zu trials in the chosen dates; at most %d fit at once: use --from/--to",
                          code, f->n, CPD_PD_NMAX);
        cli_pd_fit_free(f);
        return ex;
    }
    cpd_pd_opts o;
    cpd_pd_opts_init(&o);
    o.models = mask;
    cpd_pd_ws *w = cpd_pd_alloc();
    char msg[CPD_MSG_MAX] = "";
    rc = w ? cpd_pd_fit(w, f->modality, f->x, f->t, f->n, &o, f->res, msg) : CPD_ENOMEM;
    cpd_pd_free(w);
    /* time trials over set distances: the distance-time model has the right error structure */
    size_t nd = 0;
    for (size_t i = 0; i < f->n; i++)
        nd += f->trials[i].kind == CPD_TRIAL_DISTANCE;
    if (!rc && f->modality == CPD_PD_SPEED && nd == f->n && (mask & CPD_PD_MODEL_BIT(CPD_PD_LINEAR_TOTAL)))
        f->time_trials = cpd_pd_best_for_time_trials(f->res) == CPD_OK;
    if (rc) {
        int ex = cli_fail(c, rc, "fitting %s: %s", code, msg[0] ? msg : cpd_strerror(rc));
        cli_pd_fit_free(f);
        return ex;
    }
    return 0;
}

size_t cli_pd_newest_block(const cli_pd_fit *f, char start[11])
{
    int newest = 0;
    if (f->n == 0 || cpd_parse_date(f->trials[f->n - 1].date, &newest) != CPD_OK)
        return 0;
    cpd_format_date(newest - CLI_PD_BLOCK_DAYS, start);
    size_t k = 0;
    for (size_t i = 0; i < f->n; i++)
        k += strcmp(f->trials[i].date, start) >= 0;
    return k >= 3 && k < f->n ? k : 0;
}

int cli_pd_load_current(cli_ctx *c, const char *code, const char *from, const char *to, unsigned mask, cli_pd_fit *f,
                        size_t *older)
{
    *older = 0;
    int rc = cli_pd_load_fit(c, code, from, to, mask, f);
    if (rc || from)
        return rc;
    char start[11];
    size_t k = cli_pd_newest_block(f, start);
    if (!k)
        return 0;
    cli_pd_fit g;
    int quiet = c->quiet;
    c->quiet = 1; /* the notes were given by the first load */
    c->mute++;
    rc = cli_pd_load_fit(c, code, start, to, mask, &g);
    c->mute--;
    c->quiet = quiet;
    if (rc)
        return 0; /* keep the fit of all trials */
    /* the block must give an answer: its best model, or the one model asked for */
    int single = mask && !(mask & (mask - 1)), usable = single ? 0 : g.res->has_best;
    for (int m = 0; single && m < CPD_PD_NMODELS; m++)
        if (mask == CPD_PD_MODEL_BIT(m))
            usable = g.res->models[m].ok;
    if (!usable) {
        cli_note(c, "note: the newest block of trials (from %s) gives no usable fit; all %zu trials are used", start, f->n);
        cli_pd_fit_free(&g);
        return 0;
    }
    *older = f->n - k;
    cli_pd_fit_free(f);
    *f = g;
    return 0;
}

const char *cli_pd_key(cpd_pd_modality m, const char *power_key, char *buf, size_t n)
{
    /* SPEC: for speed every cp becomes cs, w_prime d_prime and p_max v_max, wherever the word
     * stands in the key (see_cp_pct -> see_cs_pct, loo_delta_w_prime -> loo_delta_d_prime) */
    static const struct {
        const char *p, *s;
    } map[] = {{"w_prime", "d_prime"}, {"p_max", "v_max"}, {"cp", "cs"}};
    size_t o = 0;
    const char *k = power_key;
    while (*k && o + 1 < n) {
        int done = 0;
        if (m == CPD_PD_SPEED && (k == power_key || k[-1] == '_'))
            for (size_t i = 0; i < sizeof map / sizeof map[0] && !done; i++) {
                size_t L = strlen(map[i].p);
                if (strncmp(k, map[i].p, L) == 0 && (k[L] == '\0' || k[L] == '_')) {
                    size_t S = strlen(map[i].s);
                    if (o + S >= n)
                        break;
                    memcpy(buf + o, map[i].s, S);
                    o += S;
                    k += L;
                    done = 1;
                }
            }
        if (!done)
            buf[o++] = *k++;
    }
    buf[o] = '\0';
    return buf;
}

void cli_pd_flags_json(cli_json *a, unsigned flags, cpd_pd_modality m)
{
    for (unsigned b = 0; b < CPD_PD_NFLAGS; b++)
        if (flags & (1u << b))
            cj_push_str(a, cpd_pd_flag_name(1u << b, m));
}

void cli_pd_flags_print(unsigned flags, cpd_pd_modality m)
{
    for (unsigned b = 0; b < CPD_PD_NFLAGS; b++)
        if (flags & (1u << b))
            printf("  - %s\n", cpd_pd_flag_text(1u << b, m));
}

const char *cli_pd_unit(cpd_pd_modality m)
{
    return m == CPD_PD_SPEED ? "m/s" : "W";
}

double cli_pd_pace_m(const cpd_athlete *a, const char **label)
{
    int swim = strcmp(a->sport, "swimming") == 0;
    if (label)
        *label = swim ? "/100m" : "/km";
    return swim ? 100.0 : 1000.0;
}

void cli_pd_model_json(cli_json *o, const cli_pd_fit *f, const cpd_pd_model_fit *m)
{
    char k[40];
    cpd_pd_modality md = f->modality;
    cj_str(o, "model", cpd_pd_model_name(m->model));
    cj_bool(o, "ok", m->ok);
    cj_str(o, "failure", m->ok ? NULL : cpd_pd_fail_text(m->fail));
    cj_int(o, "n", (long long)m->n);
    if (m->ok) {
        cj_num(o, cli_pd_key(md, "cp", k, sizeof k), m->cp);
        cj_num(o, cli_pd_key(md, "w_prime", k, sizeof k), m->w_prime);
    } else {
        cj_null(o, cli_pd_key(md, "cp", k, sizeof k));
        cj_null(o, cli_pd_key(md, "w_prime", k, sizeof k));
    }
    int se = m->ok && m->has_se;
    if (se) {
        cj_num(o, cli_pd_key(md, "cp_se", k, sizeof k), m->cp_se);
        cj_pair(o, cli_pd_key(md, "cp_ci95", k, sizeof k), m->cp_ci95[0], m->cp_ci95[1]);
        cj_num(o, cli_pd_key(md, "w_prime_se", k, sizeof k), m->w_prime_se);
        cj_pair(o, cli_pd_key(md, "w_prime_ci95", k, sizeof k), m->w_prime_ci95[0], m->w_prime_ci95[1]);
    } else {
        cj_null(o, cli_pd_key(md, "cp_se", k, sizeof k));
        cj_null(o, cli_pd_key(md, "cp_ci95", k, sizeof k));
        cj_null(o, cli_pd_key(md, "w_prime_se", k, sizeof k));
        cj_null(o, cli_pd_key(md, "w_prime_ci95", k, sizeof k));
    }
    if (m->model == CPD_PD_THREE_PARAMETER) {
        if (m->ok && m->has_p_max)
            cj_num(o, cli_pd_key(md, "p_max", k, sizeof k), m->p_max);
        else
            cj_null(o, cli_pd_key(md, "p_max", k, sizeof k));
        if (m->ok && m->has_p_max && se) {
            cj_num(o, cli_pd_key(md, "p_max_se", k, sizeof k), m->p_max_se);
            cj_pair(o, cli_pd_key(md, "p_max_ci95", k, sizeof k), m->p_max_ci95[0], m->p_max_ci95[1]);
        } else {
            cj_null(o, cli_pd_key(md, "p_max_se", k, sizeof k));
            cj_null(o, cli_pd_key(md, "p_max_ci95", k, sizeof k));
        }
    }
    if (m->ok && m->see_valid) {
        cj_num(o, cli_pd_key(md, "see_cp_pct", k, sizeof k), m->see_cp_pct);
        cj_num(o, cli_pd_key(md, "see_w_prime_pct", k, sizeof k), m->see_w_prime_pct);
    } else {
        cj_null(o, cli_pd_key(md, "see_cp_pct", k, sizeof k));
        cj_null(o, cli_pd_key(md, "see_w_prime_pct", k, sizeof k));
    }
    static const char *const yvar[] = {"duration_s", "work_j", "intensity"};
    if (m->ok) {
        cj_num(o, "rss", m->rss);
        cj_str(o, "rss_variable",
               md == CPD_PD_SPEED && m->rss_var == CPD_PD_Y_WORK        ? "distance_m"
               : md == CPD_PD_SPEED && m->rss_var == CPD_PD_Y_INTENSITY ? "speed_m_s"
               : md == CPD_PD_POWER && m->rss_var == CPD_PD_Y_INTENSITY ? "power_w"
                                                                        : yvar[m->rss_var]);
        cj_num(o, "r2", m->r2);
    } else {
        cj_null(o, "rss");
        cj_null(o, "rss_variable");
        cj_null(o, "r2");
    }
    if (m->ok && m->aicc_valid)
        cj_num(o, "aicc", m->aicc);
    else
        cj_null(o, "aicc");
    cli_pd_flags_json(cj_add_arr(o, "flags"), m->flags, md);
    if (m->ok) {
        cli_json *tr = cj_add_arr(o, "trials");
        for (size_t i = 0; i < f->n && i < m->n; i++) {
            cli_json *t = cj_obj();
            if (f->from_curve) { /* a curve point: its session, not a trial */
                cj_null(t, "id");
                cj_int(t, "session", f->trials[i].id);
            } else
                cj_int(t, "id", f->trials[i].id);
            cj_str(t, "date", f->trials[i].date);
            cj_num(t, md == CPD_PD_SPEED ? "speed_m_s" : "power_w", f->x[i]);
            cj_num(t, "duration_s", f->t[i]);
            if (m->resid_valid[i]) {
                cj_num(t, "residual_s", m->resid_s[i]);
                cj_num(t, "residual_pct", m->resid_pct[i]);
            } else {
                cj_null(t, "residual_s");
                cj_null(t, "residual_pct");
            }
            if (m->has_loo && m->loo_valid[i]) {
                cj_num(t, cli_pd_key(md, "loo_delta_cp", k, sizeof k), m->loo_d_cp[i]);
                cj_num(t, cli_pd_key(md, "loo_delta_w_prime", k, sizeof k), m->loo_d_w_prime[i]);
            } else {
                cj_null(t, cli_pd_key(md, "loo_delta_cp", k, sizeof k));
                cj_null(t, cli_pd_key(md, "loo_delta_w_prime", k, sizeof k));
            }
            cj_push(tr, t);
        }
    }
}
