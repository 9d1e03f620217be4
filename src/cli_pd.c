/* cli_pd.c: the library's power-duration fit of stored trials with its notes, and the fit's JSON
 * and plain-word flags. */
#include "cli_pd.h"
#include "cpdomain/units.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

const char CLI_FIELD_ESTIMATE[] =
    "Field estimate: the points are the best efforts found in training and racing, not tests to "
    "exhaustion. Efforts may have been submaximal, which biases CP (CS) low or W' (D') either way; "
    "confirm with time-to-exhaustion trials before relying on it.";

int cli_pd_load_fit(cli_ctx *c, const char *code, const char *from, const char *to, unsigned mask, cli_pd_fit *f)
{
    char msg[CPD_MSG_MAX] = "";
    int rc = cpd_athlete_fit_load(c->store, code, from, to, mask, f, msg);
    cli_athlete_notes(c, &f->notes);
    return rc ? cli_athlete_fail(c, rc, msg) : 0;
}

int cli_pd_load_current(cli_ctx *c, const char *code, const char *from, const char *to, unsigned mask, cli_pd_fit *f,
                        size_t *older)
{
    char msg[CPD_MSG_MAX] = "";
    int rc = cpd_athlete_fit_current(c->store, code, from, to, mask, f, older, msg);
    cli_athlete_notes(c, &f->notes);
    return rc ? cli_athlete_fail(c, rc, msg) : 0;
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
