/* cli_energy.c: an athlete's tests gathered for the energy module, and the energy block of
 * 'bout show'. Lookups of other tests are muted: their failures are not this command's errors. */
#include "cli_energy.h"
#include "cli_domains.h"
#include "cli_gx.h"
#include "cpdomain/units.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static void gather_ramp(cli_ctx *c, cli_energy_athlete *A, const char *to_date)
{
    cpd_gx_test *v = NULL;
    size_t n = 0;
    if (cpd_store_gx_list(c->store, A->a.code, CPD_GXT_RAMP, &v, &n))
        return;
    long long id = 0;
    for (size_t i = n; i-- > 0;) /* newest first: the newest power ramp on or before to_date */
        if (!v[i].speed && (!to_date || strcmp(v[i].date, to_date) <= 0)) {
            id = v[i].id;
            break;
        }
    for (size_t i = 0; !id && i < n; i++)
        if (!v[i].speed)
            id = v[i].id;
    free(v);
    cpd_ramp_result *rr = calloc(1, sizeof *rr);
    if (!id || !rr) {
        free(rr);
        return;
    }
    cpd_gx_test t;
    cpd_athlete a;
    cpd_ramp_ws *w = NULL;
    if (cli_ramp_analyse(c, id, NULL, NULL, NULL, &t, &a, &w, rr) == 0) {
        A->has_ramp = 1;
        A->ramp_id = id;
        snprintf(A->ramp_date, sizeof A->ramp_date, "%s", t.date);
        A->vo2peak_ml_min = rr->vo2peak_ml_min;
        if (rr->gain_status == CPD_THR_FOUND && rr->has_baseline && rr->gain > 0) {
            A->has_gain = 1;
            A->gain = rr->gain;
            A->gain_se = rr->gain_se;
            A->ramp_base_vo2 = rr->baseline_vo2_ml_min;
            A->ramp_base_w = rr->baseline_intensity;
        }
        if (rr->get.status != CPD_THR_NOT_FOUND && rr->get.has_equiv) {
            A->has_get = 1;
            A->get_w = rr->get.equiv_intensity;
            A->get_sd_w = 0.05 * A->get_w; /* no CI from one ramp: 5 % [chosen] */
            snprintf(A->get_source, sizeof A->get_source, "ramp %lld (%s)", id, t.date);
        }
    }
    cpd_ramp_free(w);
    free(rr);
}

/* The newest power step test on or before to_date (none that old: the oldest), its stages kept. */
static void gather_steps(cli_ctx *c, cli_energy_athlete *A, const char *to_date)
{
    cpd_gx_test *v = NULL;
    size_t n = 0;
    if (cpd_store_gx_list(c->store, A->a.code, CPD_GXT_RAMP, &v, &n))
        return;
    cpd_ramp_result *rr = calloc(1, sizeof *rr);
    for (int pass = 0; rr && pass < (to_date ? 2 : 1) && !A->has_steps; pass++)
        for (size_t i = n; i-- > 0 && !A->has_steps;) { /* first pass newest first, second oldest first */
            size_t j = pass ? n - 1 - i : i;
            int later = to_date && strcmp(v[j].date, to_date) > 0; /* the second pass tries only these */
            if (v[j].speed || v[j].protocol == 1 || later != pass)
                continue;
            cpd_gx_test t;
            cpd_athlete a;
            cpd_ramp_ws *w = NULL;
            if (cli_ramp_analyse(c, v[j].id, NULL, NULL, NULL, &t, &a, &w, rr) == 0 &&
                rr->protocol == CPD_RAMP_PROTO_STEPS && rr->steps.n > 0) {
                A->has_steps = 1;
                A->steps_id = v[j].id;
                snprintf(A->steps_date, sizeof A->steps_date, "%s", t.date);
                A->ns = rr->steps.n;
                for (size_t k = 0; k < A->ns; k++) {
                    const cpd_steps_stage *st = &rr->steps.stage[k];
                    A->st_w[k] = st->intensity;
                    A->st_vo2[k] = st->vo2_ml_min;
                    A->st_rer[k] = st->has_vco2 ? st->vco2_ml_min / st->vo2_ml_min : 0.0;
                    A->st_steady[k] = st->complete && st->stable == 1;
                }
            }
            cpd_ramp_free(w);
        }
    free(rr);
    free(v);
}

static void gather_domains(cli_ctx *c, cli_energy_athlete *A, const char *to_date)
{
    cli_domains d;
    if (cli_domains_build(c, A->a.code, NULL, to_date, NULL, 0, &d))
        return;
    if (d.fit.modality == CPD_PD_POWER) {
        const cpd_boundary *g = &d.res.b[CPD_BND_MOD_HEAVY], *p = &d.res.b[CPD_BND_HEAVY_SEVERE];
        if (g->valid && !A->has_get) { /* the ramp chosen for the date comes first */
            A->has_get = 1;
            A->get_w = g->value;
            A->get_sd_w = g->has_ci ? (g->ci95[1] - g->ci95[0]) / 3.92 : 0.05 * g->value;
            snprintf(A->get_source, sizeof A->get_source, "%s", g->source);
        }
        if (p->valid) {
            A->has_cp = 1;
            A->cp_w = p->value;
            A->cp_sd_w = p->has_ci ? (p->ci95[1] - p->ci95[0]) / 3.92 : 0.05 * p->value;
            snprintf(A->cp_source, sizeof A->cp_source, "%s", p->source);
        }
    }
    cli_domains_free(&d);
}

/* Mean VO2 and VCO2 of the breaths in [from, to] s after each onset, averaged over the repeats.
 * Returns 0, 1 when a repeat has no VCO2, 2 when a window holds no breath. */
static int window_means(const cpd_gx_series *const *g, const double *onset, size_t m, double from, double to,
                        double *vo2, double *vco2)
{
    double sv = 0, sc = 0;
    for (size_t r = 0; r < m; r++) {
        const double *V = g[r]->ch[CPD_GX_VO2], *C = g[r]->ch[CPD_GX_VCO2];
        if (!C)
            return 1;
        double a = 0, b = 0;
        size_t k = 0;
        for (size_t i = 0; i < g[r]->n; i++) {
            double t = g[r]->t_s[i] - onset[r];
            if (t >= from && t <= to) {
                a += V[i];
                b += C[i];
                k++;
            }
        }
        if (!k)
            return 2;
        sv += a / (double)k;
        sc += b / (double)k;
    }
    *vo2 = sv / (double)m;
    *vco2 = sc / (double)m;
    return 0;
}

/* A steady state by the bout's response: moderate, or heavy with VO2 levelling off (the 80 mL/min
 * per min of kinetics.h), and long enough. */
static int is_steady(const cpd_kinetics_result *k)
{
    return k->end_s >= CLI_ENERGY_STEADY_MIN_S - CPD_KIN_END_TOL_S &&
           (k->domain == CPD_KIN_MODERATE ||
            (k->domain == CPD_KIN_HEAVY && k->slope_valid && k->end_slope_ml_min_per_min <= 80.0));
}

/* The RER of bout e's last minute when it is a steady state. */
static void bout_rer(cli_ctx *c, cli_energy_bout *e)
{
    cpd_gx_test t;
    cpd_gx_series *g = NULL;
    if (!is_steady(&e->res) || cpd_store_gx_get(c->store, e->id, CPD_GXT_BOUT, &t, &g))
        return;
    const cpd_gx_series *gg[1] = {g};
    double vo2, vco2;
    if (window_means(gg, &t.onset_s, 1, e->res.end_s - CLI_ENERGY_STEADY_WIN_S, e->res.end_s, &vo2, &vco2) == 0 &&
        vco2 / vo2 >= CPD_ENERGY_RER_MIN && vco2 / vo2 <= CPD_ENERGY_RER_MAX) {
        e->has_rer = 1;
        e->rer = vco2 / vo2;
    }
    cpd_gx_free(g);
}

int cli_energy_gather(cli_ctx *c, const char *code, long long skip_id, const char *to_date, cli_energy_athlete *A)
{
    memset(A, 0, sizeof *A);
    int rc;
    if (!c->store && (rc = cli_open(c, 0)))
        return rc;
    if ((rc = cpd_store_athlete_get(c->store, code, &A->a)))
        return cli_store_fail(c, rc);
    int quiet = c->quiet;
    c->quiet = 1; /* the other tests' own notes belong to their commands */
    c->mute++;
    cpd_gx_test *v = NULL;
    size_t n = 0;
    if (cpd_store_gx_list(c->store, A->a.code, CPD_GXT_BOUT, &v, &n) == 0 && n > 0) {
        A->b = calloc(n, sizeof *A->b);
        for (size_t i = 0; A->b && i < n; i++) {
            if (v[i].speed || v[i].id == skip_id)
                continue;
            char ids[32];
            snprintf(ids, sizeof ids, "%lld", (long long)v[i].id);
            cli_energy_bout *e = &A->b[A->nb];
            if (cli_bout_analyse(c, ids, &e->res)) {
                A->nb_failed++;
                continue;
            }
            e->id = v[i].id;
            snprintf(e->date, sizeof e->date, "%s", v[i].date);
            e->power_w = v[i].intensity;
            e->baseline_w = v[i].has_baseline ? v[i].baseline : 0.0;
            bout_rer(c, e);
            A->nb++;
        }
    }
    free(v);
    gather_ramp(c, A, to_date);
    gather_steps(c, A, to_date);
    gather_domains(c, A, to_date);
    c->mute--;
    c->quiet = quiet;
    return 0;
}

void cli_energy_free(cli_energy_athlete *A)
{
    if (!A)
        return;
    free(A->b);
    A->b = NULL;
    A->nb = 0;
}

int cli_energy_line(const cli_energy_athlete *A, cpd_energy_line *L, double *max_p, char *src, size_t n)
{
    double p[64], v[64];
    size_t k = 0, nm = 0;
    *max_p = 0;
    for (size_t i = 0; A->has_steps && A->has_get && i < A->ns && k < 64; i++)
        if (A->st_steady[i] && A->st_w[i] < A->get_w) {
            p[k] = A->st_w[i];
            v[k++] = A->st_vo2[i];
            *max_p = fmax(*max_p, A->st_w[i]);
        }
    if (k >= 3 && cpd_energy_line_fit(p, v, k, L) == CPD_OK) {
        snprintf(src, n, "step test %lld (%s): %zu stable stages below the GET (final 30 s)", A->steps_id, A->steps_date,
                 k);
        return 0;
    }
    k = 0;
    *max_p = 0;
    for (size_t i = 0; i < A->nb && k + 2 <= 64; i++) {
        const cli_energy_bout *b = &A->b[i];
        if (b->res.domain != CPD_KIN_MODERATE)
            continue;
        p[k] = b->baseline_w;
        v[k++] = b->res.baseline_ml_min;
        p[k] = b->power_w;
        v[k++] = b->res.end_vo2_ml_min;
        *max_p = fmax(*max_p, b->power_w);
        nm++;
    }
    if (nm > 0 && cpd_energy_line_fit(p, v, k, L) == CPD_OK) {
        snprintf(src, n, "%zu moderate bout%s (baseline and end-exercise VO2)", nm, nm > 1 ? "s" : "");
        return 0;
    }
    if (A->has_gain) {
        memset(L, 0, sizeof *L);
        L->b_ml_min_w = A->gain;
        L->a_ml_min = A->ramp_base_vo2 - A->gain * A->ramp_base_w;
        /* a = v0 - b P0 with v0 taken as exact: var(a) = P0^2 var(b), cov(a, b) = -P0 var(b) */
        double vb = A->gain_se * A->gain_se, p0 = A->ramp_base_w;
        L->cov[0] = p0 * p0 * vb;
        L->cov[1] = L->cov[2] = -p0 * vb;
        L->cov[3] = vb;
        L->n = 2;
        *max_p = A->has_get ? A->get_w : 0.0;
        snprintf(src, n, "ramp %lld (%s): sub-GET gain through the baseline", A->ramp_id, A->ramp_date);
        return 0;
    }
    snprintf(src, n, "no moderate bout and no ramp gain on file");
    return CPD_ENODATA;
}

/* ---- the session model's parameters ---- */


static void set(cli_energy_par *p, double v, double sd, int typical, const char *fmt, const char *arg)
{
    p->v = v;
    p->sd = sd;
    p->typical = typical;
    p->known = 1;
    snprintf(p->src, sizeof p->src, fmt, arg ? arg : "");
}

/* A list "a, b, c" in ids (n bytes) that ends "and N more" rather than cutting an item: the k-th
 * item (from 0) is appended while it fits; *off and *left carry the state (both 0 at the start). */
static void list_add(char *ids, size_t n, size_t *off, size_t *left, size_t k, const char *item)
{
    size_t m = strlen(item) + (k ? 2 : 0);
    if (!*left && *off + m + 16 < n)
        *off += (size_t)snprintf(ids + *off, n - *off, "%s%s", k ? ", " : "", item);
    else
        (*left)++;
}

static void list_end(char *ids, size_t n, size_t off, size_t left)
{
    if (left)
        snprintf(ids + off, n - off, " and %zu more", left);
}

/* The ids of the bouts of domain dom (0: any) into ids; returns how many. */
static size_t bouts_of(const cli_energy_athlete *A, int dom, char *ids, size_t n)
{
    size_t k = 0, off = 0, left = 0;
    ids[0] = '\0';
    for (size_t i = 0; i < A->nb; i++)
        if (!dom || A->b[i].res.domain == dom) {
            char one[24];
            snprintf(one, sizeof one, "%lld", A->b[i].id);
            list_add(ids, n, &off, &left, k++, one);
        }
    list_end(ids, n, off, left);
    return k;
}

int cli_energy_params(cli_ctx *c, const cli_energy_athlete *A, cli_energy_par *P)
{
    memset(P, 0, CLI_EN_N * sizeof *P);
    char ids[200], buf[240];
    if (!A->has_ramp || !(A->vo2peak_ml_min > 0))
        return cli_fail(c, CPD_ENODATA, "%s has no power ramp with a VO2peak: the session model needs VO2peak (add one "
                        "with 'ramp add')", A->a.code);
    snprintf(buf, sizeof buf, "ramp %lld (%s); SD 3 %% [chosen]", A->ramp_id, A->ramp_date);
    set(&P[CLI_EN_PEAK], A->vo2peak_ml_min, 0.03 * A->vo2peak_ml_min, 0, "%s", buf);
    if (!A->has_get)
        return cli_fail(c, CPD_ENODATA, "%s has no GET as a constant power (a ramp with its MRT, or a lactate LT1): the "
                        "session model needs the moderate-heavy boundary", A->a.code);
    set(&P[CLI_EN_GET], A->get_w, A->get_sd_w, 0, "%s", A->get_source);
    if (A->has_cp)
        set(&P[CLI_EN_CP], A->cp_w, A->cp_sd_w, 0, "%s", A->cp_source);
    else
        snprintf(P[CLI_EN_CP].src, sizeof P[CLI_EN_CP].src, "no power-duration fit: no severe domain; work above the GET is costed as heavy");

    /* gain, baseline, primary kinetics: the moderate bouts */
    size_t nm = bouts_of(A, CPD_KIN_MODERATE, ids, sizeof ids);
    double g = 0, gse = 0, b = 0, bse = 0, tau = 0, tse = 0, td = 0;
    for (size_t i = 0; i < A->nb; i++) {
        const cli_energy_bout *e = &A->b[i];
        if (e->res.domain != CPD_KIN_MODERATE)
            continue;
        const cpd_kinetics_fitres *f = &e->res.mono;
        double dp = e->power_w - e->baseline_w;
        g += e->res.primary.gain_ml_min_w;
        gse += f->has_se ? f->se[CPD_KIN_A1] / dp : 0.5;
        b += e->res.baseline_ml_min - e->res.primary.gain_ml_min_w * e->baseline_w;
        bse += e->res.baseline_sd_ml_min / sqrt((double)(e->res.n_baseline ? e->res.n_baseline : 1));
        tau += e->res.primary.tau_s;
        tse += e->res.primary.tau_se_s;
        td += e->res.primary.delay_s;
    }
    if (nm > 0) {
        double m = (double)nm;
        snprintf(buf, sizeof buf, "moderate bout%s %s", nm > 1 ? "s" : "", ids);
        set(&P[CLI_EN_GAIN], g / m, gse / m, 0, "%s", buf);
        set(&P[CLI_EN_BASE], b / m, fmax(bse / m, 20.0), 0, "%s", buf);
        set(&P[CLI_EN_TAU], tau / m, tse / m, 0, "%s", buf);
        set(&P[CLI_EN_DELAY], td / m, 2.0, 0, "%s; SD 2 s [chosen]", buf);
    } else if (A->has_gain) {
        snprintf(buf, sizeof buf, "ramp %lld (%s)", A->ramp_id, A->ramp_date);
        set(&P[CLI_EN_GAIN], A->gain, A->gain_se, 0, "%s", buf);
        set(&P[CLI_EN_BASE], A->ramp_base_vo2 - A->gain * A->ramp_base_w, 50.0, 0, "%s baseline; SD 50 mL/min [chosen]", buf);
    } else
        return cli_fail(c, CPD_ENODATA, "%s has neither a moderate bout nor a ramp gain: the session model needs the "
                        "steady-state VO2-power line", A->a.code);
    if (nm == 0) {
        size_t na = bouts_of(A, 0, ids, sizeof ids);
        if (na > 0) {
            for (size_t i = 0; i < A->nb; i++) {
                tau += A->b[i].res.primary.tau_s;
                tse += A->b[i].res.primary.tau_se_s;
                td += A->b[i].res.primary.delay_s;
            }
            snprintf(buf, sizeof buf, "primary of bout%s %s (no moderate bout)", na > 1 ? "s" : "", ids);
            set(&P[CLI_EN_TAU], tau / (double)na, tse / (double)na, 0, "%s", buf);
            set(&P[CLI_EN_DELAY], td / (double)na, 2.0, 0, "%s", buf);
        } else {
            set(&P[CLI_EN_TAU], 30.0, 8.0, 1, "20-35 s in healthy adults (common practice, from memory)%s", NULL);
            set(&P[CLI_EN_DELAY], 10.0, 4.0, 1, "[chosen]: the fitted delay after phase I%s", NULL);
        }
    }

    /* slow component per W above the GET: the heavy bouts with a supported slow component */
    double sg = 0, sgse = 0, st = 0, sd2 = 0;
    size_t nh = 0, off = 0, left = 0;
    ids[0] = '\0';
    for (size_t i = 0; i < A->nb; i++) {
        const cli_energy_bout *e = &A->b[i];
        double above = e->power_w - A->get_w;
        if (e->res.domain != CPD_KIN_HEAVY || !e->res.slow.present || !(above > 5.0))
            continue;
        /* the excess of the bout's asymptote over the moderate line: the primary gain of a heavy bout
         * differs from the moderate gain, and the session's energy rests on the total */
        const double *bb = e->res.bi.b;
        double total = bb[CPD_KIN_BASE] + bb[CPD_KIN_A1] + bb[CPD_KIN_A2];
        sg += fmax(0.0, total - (P[CLI_EN_BASE].v + P[CLI_EN_GAIN].v * e->power_w)) / above;
        sgse += e->res.bi.has_se ? e->res.bi.se[CPD_KIN_A2] / above : 0.5 * e->res.slow.asymptote_ml_min / above;
        st += e->res.slow.tau_s;
        sd2 += e->res.slow.delay_s;
        char one[24];
        snprintf(one, sizeof one, "%lld", e->id);
        list_add(ids, sizeof ids, &off, &left, nh++, one);
    }
    list_end(ids, sizeof ids, off, left);
    if (nh > 0) {
        double m = (double)nh;
        snprintf(buf, sizeof buf, "heavy bout%s %s", nh > 1 ? "s" : "", ids);
        set(&P[CLI_EN_SCG], sg / m, sgse / m, 0, "%s: asymptote above the steady-state line", buf);
        set(&P[CLI_EN_SCTAU], st / m, 0.25 * st / m, 0, "%s; SD 25 %% [chosen]", buf);
        set(&P[CLI_EN_SCDEL], sd2 / m, 15.0, 0, "%s; SD 15 s [chosen]", buf);
    } else {
        set(&P[CLI_EN_SCG], 7.0, 3.5, 1, "[chosen]: 200-400 mL/min in the middle of the heavy domain (order of "
            "magnitude from memory)%s", NULL);
        set(&P[CLI_EN_SCTAU], 180.0, 60.0, 1, "[chosen], from memory%s", NULL);
        set(&P[CLI_EN_SCDEL], 100.0, 30.0, 1, "105 +- 46 s, from memory of Barstow & Mole 1991 J Appl Physiol 71:2099%s", NULL);
    }

    /* RER of each domain: the step test's steady stages, else the athlete's steady-state bouts, else typical */
    static const double RER_TYP[3] = {0.85, 0.93, 1.00}, RER_TSD[3] = {0.04, 0.03, 0.02};
    for (int d = 0; d < 3; d++) {
        double s = 0;
        size_t k = 0;
        off = left = 0;
        ids[0] = '\0';
        for (size_t i = 0; d < 2 && A->has_steps && i < A->ns; i++) {
            double w = A->st_w[i], r = A->st_rer[i];
            int in = d == 0 ? w < A->get_w : A->has_cp && w >= A->get_w && w < A->cp_w;
            if (in && A->st_steady[i] && r >= CPD_ENERGY_RER_MIN && r <= CPD_ENERGY_RER_MAX) {
                s += r;
                char one[24];
                snprintf(one, sizeof one, "%.0f", w);
                list_add(ids, sizeof ids, &off, &left, k++, one);
            }
        }
        list_end(ids, sizeof ids, off, left);
        if (k) {
            snprintf(buf, sizeof buf, "step test %lld (%s): stable stage%s at %s W (%s); SD 0.02 [chosen]", A->steps_id,
                     A->steps_date, k > 1 ? "s" : "", ids, d == 0 ? "below the GET" : "GET to CP");
            set(&P[CLI_EN_RER_M + d], s / (double)k, 0.02, 0, "%s", buf);
            continue;
        }
        for (size_t i = 0; d < 2 && i < A->nb; i++)
            if (A->b[i].has_rer && A->b[i].res.domain == d + 1) {
                s += A->b[i].rer;
                char one[24];
                snprintf(one, sizeof one, "%lld", A->b[i].id);
                list_add(ids, sizeof ids, &off, &left, k++, one);
            }
        list_end(ids, sizeof ids, off, left);
        if (k) {
            snprintf(buf, sizeof buf, "last minute of bout%s %s; SD 0.02 [chosen]", k > 1 ? "s" : "", ids);
            set(&P[CLI_EN_RER_M + d], s / (double)k, 0.02, 0, "%s", buf);
        } else
            set(&P[CLI_EN_RER_M + d], RER_TYP[d], RER_TSD[d], 1,
                d == 2 ? "at or above 1.00 in the severe domain; substrate taken as all carbohydrate%s"
                       : "[chosen], from memory; steady-state bouts or a step test with VCO2 give the athlete's own%s", NULL);
    }
    return 0;
}

void cli_energy_to_model(const cli_energy_par *P, cpd_energy_params *E)
{
    memset(E, 0, sizeof *E);
    double *mv[10] = {&E->m.base_ml_min, &E->m.gain_ml_min_w, &E->m.tau_s, &E->m.delay_s, &E->m.get_w, &E->m.cp_w,
                      &E->m.sc_gain_ml_min_w, &E->m.sc_tau_s, &E->m.sc_delay_s, &E->m.vo2peak_ml_min};
    double *sv[10] = {&E->sd.base_ml_min, &E->sd.gain_ml_min_w, &E->sd.tau_s, &E->sd.delay_s, &E->sd.get_w, &E->sd.cp_w,
                      &E->sd.sc_gain_ml_min_w, &E->sd.sc_tau_s, &E->sd.sc_delay_s, &E->sd.vo2peak_ml_min};
    for (int k = 0; k < 10; k++) {
        *mv[k] = P[k].known ? P[k].v : 0.0;
        *sv[k] = P[k].known ? P[k].sd : 0.0;
    }
    for (int d = 0; d < 3; d++) {
        E->rer[d] = P[CLI_EN_RER_M + d].v;
        E->rer_sd[d] = P[CLI_EN_RER_M + d].sd;
    }
}

/* ---- fuel on the sheet ---- */

#define FUEL_BOUT_S 1200 /* the rate is the mean of 20 min of work at the target */

int cli_energy_fuel_text(cli_ctx *c, const char *code, const cpd_domains_result *dom, char *text, size_t n)
{
    cli_energy_athlete A;
    cli_energy_par P[CLI_EN_N];
    int quiet = c->quiet, ok = -1;
    c->quiet = 1;
    c->mute++;
    if (cli_energy_gather(c, code, 0, NULL, &A) || cli_energy_params(c, &A, P)) {
        cli_energy_free(&A);
        c->mute--;
        c->quiet = quiet;
        return -1;
    }
    c->mute--;
    c->quiet = quiet;
    cpd_energy_params E;
    cli_energy_to_model(P, &E);
    static const char *const DN[3] = {"moderate", "heavy", "severe"};
    double target[3] = {0, 0, 0};
    const cpd_domain_range *r = dom->range;
    if (r[CPD_DOM_MODERATE].has_hi)
        target[0] = 0.75 * r[CPD_DOM_MODERATE].hi;
    if (r[CPD_DOM_HEAVY].has_lo && r[CPD_DOM_HEAVY].has_hi)
        target[1] = 0.5 * (r[CPD_DOM_HEAVY].lo + r[CPD_DOM_HEAVY].hi);
    /* no hourly rate in the severe domain: work there ends in task failure within minutes, so a rate
     * per hour (or over 20 min) would describe an effort nobody can sustain */
    double p[FUEL_BOUT_S];
    unsigned char rec[FUEL_BOUT_S];
    memset(rec, 1, sizeof rec);
    size_t off = (size_t)snprintf(text, n, "Modelled from the athlete's own VO2 kinetics (as 'energy' does): the mean "
                                  "rate over 20 min of work at each domain's target, per hour, with 95 %% intervals.");
    for (int d = 0; d < 3; d++) {
        if (!(target[d] > 0))
            continue;
        for (size_t i = 0; i < FUEL_BOUT_S; i++)
            p[i] = target[d];
        cpd_energy_session_result s;
        if (cpd_energy_session(&E, p, rec, FUEL_BOUT_S, CPD_ENERGY_EQ_JW_HIGH, 0.2, 200, 1, &s))
            continue;
        double k = 3600.0 / FUEL_BOUT_S / CPD_ENERGY_KJ_PER_KCAL, g = 3600.0 / FUEL_BOUT_S;
        if (off < n)
            off += (size_t)snprintf(text + off, n - off, " %s, %.0f W%s: %.0f kcal/h (%.0f to %.0f), carbohydrate "
                                    "%.0f g/h (%.0f to %.0f);", DN[d], target[d],
                                    d == 0 ? " (75 % of the GET)" : " (middle of the domain)", s.ee_total_kj * k,
                                    s.ee_total_ci[0] * k, s.ee_total_ci[1] * k, s.cho_total_g * g, s.cho_total_ci[0] * g,
                                    s.cho_total_ci[1] * g);
        ok = 0;
        cpd_energy_session_free(&s);
    }
    size_t nt = 0;
    for (int k = 0; k < CLI_EN_N; k++)
        nt += (size_t)P[k].typical;
    if (off < n && ok == 0)
        off += (size_t)snprintf(text + off, n - off, " No hourly rate is given for the severe domain: work there ends "
                                "in task failure within minutes ('energy' costs a recorded session).");
    if (off < n && nt)
        off += (size_t)snprintf(text + off, n - off, " Typical values, not the athlete's, stand in for %zu of the "
                                "model's parameters ('energy' lists them).", nt);
    if (off < n)
        snprintf(text + off, n - off, " Estimates for planning training, not intake advice: fuelling plans belong to "
                 "a registered dietitian or sports nutritionist.");
    cli_energy_free(&A);
    return ok;
}

/* ---- the energy block of 'bout show' ---- */

static void line_out(cli_json *json, const char *key, const char *label, const char *text)
{
    if (json) {
        cli_json *o = cj_add_obj(json, key);
        cj_bool(o, "valid", 0);
        cj_str(o, "message", text);
    } else
        printf("%-10s %s\n", label, text);
}

static void report_substrate(const cpd_gx_series *const *g, const double *onset, size_t m, const cpd_kinetics_result *k,
                             cli_json *json)
{
    char txt[600];
    if (k->end_s < CLI_ENERGY_STEADY_MIN_S - CPD_KIN_END_TOL_S) {
        snprintf(txt, sizeof txt, "no energy or substrate use: the bout lasts %.0f s, too short for a steady state "
                 "(at least %.0f s: four primary time constants and a minute to average)", k->end_s,
                 CLI_ENERGY_STEADY_MIN_S);
        line_out(json, "energy", "energy", txt);
        return;
    }
    double from = k->end_s - CLI_ENERGY_STEADY_WIN_S, to = k->end_s, vo2 = 0, vco2 = 0;
    int w = window_means(g, onset, m, from, to, &vo2, &vco2);
    if (w) {
        snprintf(txt, sizeof txt, "%s", w == 1 ? "no energy or substrate use: the bout file has no VCO2 column "
                 "(vco2_ml_min); add it to the file and store the bout again"
                 : "no energy or substrate use: no breath in the last minute of exercise");
        line_out(json, "energy", "energy", txt);
        return;
    }
    int steady = is_steady(k);
    cpd_energy_substrate s;
    char msg[CPD_MSG_MAX];
    if (cpd_energy_substrate_calc(vo2, vco2, steady, CPD_ENERGY_EQ_JW_HIGH, &s, msg)) {
        snprintf(txt, sizeof txt, "no energy or substrate use: last minute of exercise: %s", msg);
        line_out(json, "energy", "energy", txt);
        return;
    }
    const cpd_energy_eqset *e = cpd_energy_eqset_get(s.eq);
    if (json) {
        cli_json *o = cj_add_obj(json, "energy");
        cj_bool(o, "valid", 1);
        cj_pair(o, "window_s", from, to);
        cj_num(o, "vo2_ml_min", vo2);
        cj_num(o, "vco2_ml_min", vco2);
        cj_num(o, "rer", s.rer);
        cj_bool(o, "steady_state", steady);
        cj_num(o, "energy_kcal_min", s.ee_kcal_min);
        cj_num(o, "energy_kj_min", s.ee_kj_min);
        cj_str(o, "energy_equation", "Weir 1949");
        cj_bool(o, "substrate_valid", s.rates_valid);
        cj_num(o, "cho_g_min", s.rates_valid ? s.cho_g_min : NAN);
        cj_num(o, "fat_g_min", s.rates_valid ? s.fat_g_min : NAN);
        cj_str(o, "substrate_note", s.rates_valid ? NULL : cpd_energy_reason_text(s.reason));
        cj_str(o, "equations", e->name);
        return;
    }
    char a[24], b[24];
    cpd_format_duration(from, a, sizeof a);
    cpd_format_duration(to, b, sizeof b);
    printf("energy     last minute (%s-%s): VO2 %.0f, VCO2 %.0f mL/min, RER %.2f; %.1f kcal/min (%.1f kJ/min, Weir 1949)\n",
           a, b, vo2, vco2, s.rer, s.ee_kcal_min, s.ee_kj_min);
    if (s.rates_valid)
        printf("substrate  carbohydrate %.2f g/min, fat %.2f g/min (%s)\n", s.cho_g_min, s.fat_g_min, e->name);
    else
        printf("substrate  %s\n", cpd_energy_reason_text(s.reason));
}

static void report_deficit(const cpd_kinetics_result *k, double dp, cli_json *json)
{
    const cpd_kinetics_fitres *f = k->sc_supported && k->bi.valid ? &k->bi : &k->mono;
    cpd_energy_deficit d;
    if (!f->valid || cpd_energy_bout_deficit(f->model, f->b, k->end_s, dp, &d)) {
        line_out(json, "oxygen_deficit", "deficit", "not computed: no valid kinetics fit");
        return;
    }
    if (json) {
        cli_json *o = cj_add_obj(json, "oxygen_deficit");
        cj_bool(o, "valid", 1);
        cj_num(o, "deficit_ml", d.deficit_ml);
        cj_num(o, "deficit_amplitude_x_mrt_ml", d.deficit_mrt_ml);
        cj_num(o, "slow_excess_ml", d.has_slow ? d.slow_excess_ml : NAN);
        cj_num(o, "slow_end_ml_min", d.has_slow ? d.slow_end_ml_min : NAN);
        cj_num(o, "slow_extra_ml_min_per_w", d.has_slow && dp > 0 ? d.slow_extra_gain_ml_min_w : NAN);
        return;
    }
    printf("deficit    %.0f mL at the onset (primary demand - VO2 over the bout; amplitude x MRT %.0f mL)\n", d.deficit_ml,
           d.deficit_mrt_ml);
    if (d.has_slow) {
        printf("           slow component: %.2f L of O2 above the primary over the bout", d.slow_excess_ml / 1000.0);
        if (dp > 0)
            printf(", +%.2f mL/min per W by the end", d.slow_extra_gain_ml_min_w);
        putchar('\n');
    }
}

static void report_aod(cli_ctx *c, const char *code, long long id, const cpd_gx_series *g, double onset, double power_w,
                       const cpd_kinetics_result *k, double vo2peak, cli_json *json)
{
    if (k->domain != CPD_KIN_SEVERE) {
        if (json)
            cj_null(json, "aod");
        return;
    }
    cli_energy_athlete A;
    if (cli_energy_gather(c, code, id, NULL, &A))
        return;
    cpd_energy_line L;
    double maxp = 0;
    char src[200], txt[700];
    if (cli_energy_line(&A, &L, &maxp, src, sizeof src)) {
        snprintf(txt, sizeof txt, "not computed: the O2 demand needs a steady-state VO2-power line: %s", src);
        line_out(json, "aod", "AOD", txt);
        cli_energy_free(&A);
        return;
    }
    double demand = L.a_ml_min + L.b_ml_min_w * power_w, peak = vo2peak > 0 ? vo2peak : A.vo2peak_ml_min;
    double acc = 0;
    cpd_energy_aod r;
    if (!(peak > 0) || demand < CLI_ENERGY_SUPRA * peak) {
        if (peak > 0)
            snprintf(txt, sizeof txt, "not computed: the bout is not supra-maximal: its extrapolated demand %.0f mL/min "
                     "is %.0f %% of VO2peak (%.0f mL/min), below %.0f %%", demand, 100.0 * demand / peak, peak,
                     100.0 * CLI_ENERGY_SUPRA);
        else
            snprintf(txt, sizeof txt, "not computed: no VO2peak on file to tell whether the bout is supra-maximal");
        line_out(json, "aod", "AOD", txt);
    } else if (cpd_energy_accumulate(g->t_s, g->ch[CPD_GX_VO2], g->n, onset, onset + k->end_s, &acc) ||
               cpd_energy_aod_calc(&L, power_w, k->end_s, acc, A.a.has_mass ? A.a.mass_kg : 0, maxp, &r)) {
        line_out(json, "aod", "AOD", "not computed: the breaths do not cover the bout");
    } else if (json) {
        cli_json *o = cj_add_obj(json, "aod");
        cj_bool(o, "valid", 1);
        cj_str(o, "method", "accumulated O2 deficit (Medbo et al. 1988)");
        cj_str(o, "line_source", src);
        cj_num(o, "line_intercept_ml_min", L.a_ml_min);
        cj_num(o, "line_slope_ml_min_w", L.b_ml_min_w);
        cj_num(o, "demand_ml_min", r.demand_ml_min);
        cj_num(o, "demand_se_ml_min", r.demand_se_ml_min);
        cj_num(o, "duration_s", k->end_s);
        cj_num(o, "demand_l", r.demand_ml / 1000.0);
        cj_num(o, "vo2_accumulated_l", r.vo2_ml / 1000.0);
        cj_num(o, "aod_l", r.aod_ml / 1000.0);
        cj_pair(o, "aod_ci95_l", r.aod_ci95_ml[0] / 1000.0, r.aod_ci95_ml[1] / 1000.0);
        cj_num(o, "aod_ml_kg", r.has_mass ? r.aod_ml_kg : NAN);
        if (r.has_mass)
            cj_pair(o, "aod_ci95_ml_kg", r.aod_ci95_ml_kg[0], r.aod_ci95_ml_kg[1]);
        else
            cj_null(o, "aod_ci95_ml_kg");
        cj_int(o, "power_pct_of_line_max", r.extrapolation_pct);
        cj_str(o, "cautions", cpd_energy_aod_cautions());
    } else {
        printf("AOD        %.2f L (95 %% CI %.2f to %.2f)", r.aod_ml / 1000.0, r.aod_ci95_ml[0] / 1000.0,
               r.aod_ci95_ml[1] / 1000.0);
        if (r.has_mass)
            printf(", %.1f mL/kg (%.1f to %.1f)", r.aod_ml_kg, r.aod_ci95_ml_kg[0], r.aod_ci95_ml_kg[1]);
        printf(": demand %.0f mL/min (%.0f %% of VO2peak) x %.0f s = %.2f L, VO2 measured %.2f L\n", r.demand_ml_min,
               100.0 * r.demand_ml_min / peak, k->end_s, r.demand_ml / 1000.0, r.vo2_ml / 1000.0);
        printf("           line: %s, VO2 = %.0f + %.2f x W; the bout is taken to end at exhaustion\n", src, L.a_ml_min,
               L.b_ml_min_w);
        printf("           caution: %s\n", cpd_energy_aod_cautions());
    }
    cli_energy_free(&A);
}

void cli_energy_bout_report(cli_ctx *c, const char *code, long long bout_id, const cpd_gx_series *const *g,
                            const double *onset_s, size_t m, int speed, double power_w, double baseline_w,
                            const cpd_kinetics_result *k, double vo2peak_ml_min, cli_json *json)
{
    report_substrate(g, onset_s, m, k, json);
    report_deficit(k, speed ? 0.0 : power_w - baseline_w, json);
    if (m == 1 && !speed)
        report_aod(c, code, bout_id, g[0], onset_s[0], power_w, k, vo2peak_ml_min, json);
    else if (json)
        cj_null(json, "aod");
}

/* ---- a step test's stages ('ramp show') ---- */

static const char STEPS_CAUTION[] = "estimates for sport science, not nutrition advice: fuelling plans belong to a "
                                    "registered dietitian or sports nutritionist";

static void steps_substrate(const cpd_gx_test *t, const cpd_ramp_result *r, int eq, cli_json *json)
{
    const cpd_energy_eqset *e = cpd_energy_eqset_get(eq);
    const char *u = t->speed ? "m/s" : "W";
    int dec = t->speed ? 2 : 0;
    if (!r->steps.n || !r->steps.stage[0].has_vco2) {
        line_out(json, "substrate", "substrate", "no substrate use per stage: the test has no VCO2 column "
                 "(vco2_ml_min); carbohydrate and fat oxidation need VCO2 as well as VO2");
        return;
    }
    cli_json *arr = NULL;
    cli_table *tb = NULL;
    if (json) {
        cli_json *o = cj_add_obj(json, "substrate");
        cj_bool(o, "valid", 1);
        cj_str(o, "equations", e->name);
        cj_str(o, "energy_equation", "Weir 1949");
        cj_str(o, "window", "final 30 s of each stage (its steady state)");
        cj_str(o, "caution", STEPS_CAUTION);
        arr = cj_add_arr(o, "stages");
    } else {
        printf("\nsubstrate use per stage (final 30 s of each stage; energy by Weir 1949; CHO and fat by %s)\n", e->name);
        static const char *const head[] = {"stage", "intensity", "RER", "kcal/min", "kJ/min", "CHO g/min", "fat g/min",
                                           "note"};
        tb = cli_table_new(8, head, "rrrrrrrl");
    }
    for (size_t k = 0; k < r->steps.n; k++) {
        const cpd_steps_stage *st = &r->steps.stage[k];
        cpd_energy_substrate s;
        char msg[CPD_MSG_MAX], n1[32];
        int rc = cpd_energy_stage_substrate(st, eq, &s, msg);
        if (json) {
            cli_json *o = cj_obj();
            cj_int(o, "stage", (long long)k + 1);
            cj_num(o, t->speed ? "speed_m_s" : "power_w", st->intensity);
            cj_num(o, "rer", rc ? NAN : s.rer);
            cj_num(o, "energy_kcal_min", rc ? NAN : s.ee_kcal_min);
            cj_num(o, "energy_kj_min", rc ? NAN : s.ee_kj_min);
            cj_bool(o, "valid", !rc && s.rates_valid);
            cj_num(o, "cho_g_min", !rc && s.rates_valid ? s.cho_g_min : NAN);
            cj_num(o, "fat_g_min", !rc && s.rates_valid ? s.fat_g_min : NAN);
            cj_str(o, "note", rc ? msg : s.rates_valid ? NULL : cpd_energy_reason_text(s.reason));
            cj_push(arr, o);
            continue;
        }
        char sn[8], in[40], rer[16], kc[16], kj[16], cho[24], fat[24], note[200] = "";
        snprintf(sn, sizeof sn, "%zu", k + 1);
        snprintf(in, sizeof in, "%s %s%s", cli_num(n1, sizeof n1, st->intensity, dec), u, st->complete ? "" : "*");
        if (rc) {
            snprintf(rer, sizeof rer, "-");
            snprintf(kc, sizeof kc, "-");
            snprintf(kj, sizeof kj, "-");
            snprintf(cho, sizeof cho, "-");
            snprintf(fat, sizeof fat, "-");
            snprintf(note, sizeof note, "%s", msg);
        } else {
            snprintf(rer, sizeof rer, "%.2f", s.rer);
            snprintf(kc, sizeof kc, "%.1f", s.ee_kcal_min);
            snprintf(kj, sizeof kj, "%.1f", s.ee_kj_min);
            if (s.rates_valid) {
                snprintf(cho, sizeof cho, "%.2f", s.cho_g_min);
                snprintf(fat, sizeof fat, "%.2f", s.fat_g_min);
            } else {
                snprintf(cho, sizeof cho, "-");
                snprintf(fat, sizeof fat, "-");
                snprintf(note, sizeof note, "%s", s.reason == CPD_ENERGY_R_RER_HIGH ? "not valid: RER above 1.00"
                                                  : s.reason == CPD_ENERGY_R_NOT_STEADY ? "not valid: not stable"
                                                                                        : "not valid: RER below 0.70");
            }
        }
        const char *row[] = {sn, in, rer, kc, kj, cho, fat, note};
        cli_table_row(tb, row);
    }
    if (tb) {
        cli_table_print(tb);
        printf("(rates only at a steady state with RER 0.70-1.00: above 1.00 buffering CO2 inflates VCO2; %s)\n",
               STEPS_CAUTION);
    }
}

static void steps_pfo(const cpd_gx_test *t, const cpd_ramp_result *r, int eq, cli_json *json)
{
    cpd_pfo_result p;
    int used[CPD_STEPS_MAX];
    char msg[CPD_MSG_MAX], txt[CPD_MSG_MAX + 64];
    if (cpd_energy_pfo_steps(&r->steps, r->vo2peak_ml_min, eq, CPD_PFO_BOOT_DEFAULT, CLI_ENERGY_PFO_SEED, &p, used, msg)) {
        snprintf(txt, sizeof txt, "not computed: %s", msg);
        line_out(json, "peak_fat_oxidation", "PFO", txt);
        return;
    }
    const char *u = t->speed ? "m/s" : "W";
    int dec = t->speed ? 2 : 0;
    int ci = p.n_boot > 0;
    if (json) {
        cli_json *o = cj_add_obj(json, "peak_fat_oxidation");
        cj_bool(o, "valid", 1);
        cj_str(o, "method", "third-order polynomial of fat oxidation against %VO2peak (Achten, Gleeson & Jeukendrup 2002)");
        cj_str(o, "equations", cpd_energy_eqset_get(eq)->name);
        cli_json *st = cj_add_arr(o, "stages_used");
        for (size_t k = 0; k < r->steps.n; k++)
            if (used[k])
                cj_push_num(st, (double)(k + 1));
        cj_int(o, "stages_rer_above_1", (long long)p.n_rer_above);
        cj_num(o, "vo2peak_ml_min", r->vo2peak_ml_min);
        cj_num(o, "pfo_g_min", p.peak_g_min);
        cj_num(o, "measured_peak_g_min", p.measured_peak_g_min);
        cj_num(o, "at_pct_vo2peak", p.peak_pct);
        cj_num(o, t->speed ? "at_speed_m_s" : "at_power_w", p.peak_power_w);
        cj_num(o, "at_hr_bpm", p.has_hr ? p.peak_hr_bpm : NAN);
        cj_int(o, "bootstrap_resamples", (long long)p.n_boot);
        if (ci) {
            cj_pair(o, "pfo_ci95_g_min", p.peak_ci95[0], p.peak_ci95[1]);
            cj_pair(o, "pct_ci95", p.pct_ci95[0], p.pct_ci95[1]);
            cj_pair(o, t->speed ? "speed_ci95_m_s" : "power_ci95_w", p.power_ci95[0], p.power_ci95[1]);
            if (p.has_hr)
                cj_pair(o, "hr_ci95_bpm", p.hr_ci95[0], p.hr_ci95[1]);
            else
                cj_null(o, "hr_ci95_bpm");
        } else {
            cj_null(o, "pfo_ci95_g_min");
            cj_null(o, "pct_ci95");
            cj_null(o, t->speed ? "speed_ci95_m_s" : "power_ci95_w");
            cj_null(o, "hr_ci95_bpm");
        }
        cj_pair(o, "zone_pct_vo2peak", p.zone_pct[0], p.zone_pct[1]);
        cj_pair(o, t->speed ? "zone_m_s" : "zone_w", p.zone_power_w[0], p.zone_power_w[1]);
        cli_json *cf = cj_add_arr(o, "coefficients");
        for (int k = 0; k < 4; k++)
            cj_push_num(cf, p.coef[k]);
        cj_str(o, "caution", STEPS_CAUTION);
        return;
    }
    char a[32], b[32], c2[32];
    printf("\npeak fat oxidation (Achten, Gleeson & Jeukendrup 2002: third-order fit against %%VO2peak, %zu stages)\n", p.n);
    printf("PFO      %.2f g/min", p.peak_g_min);
    if (ci)
        printf(" (95 %% CI %.2f to %.2f)", p.peak_ci95[0], p.peak_ci95[1]);
    printf("; highest stage %.2f g/min\n", p.measured_peak_g_min);
    printf("at       %.0f %% VO2peak", p.peak_pct);
    if (ci)
        printf(" (%.0f to %.0f)", p.pct_ci95[0], p.pct_ci95[1]);
    printf(", %s %s", cli_num(a, sizeof a, p.peak_power_w, dec), u);
    if (ci)
        printf(" (%s to %s)", cli_num(b, sizeof b, p.power_ci95[0], dec), cli_num(c2, sizeof c2, p.power_ci95[1], dec));
    if (p.has_hr) {
        printf(", HR %.0f", p.peak_hr_bpm);
        if (ci)
            printf(" (%.0f to %.0f)", p.hr_ci95[0], p.hr_ci95[1]);
    }
    putchar('\n');
    printf("zone     within 10 %% of the peak: %.0f-%.0f %% VO2peak, %s-%s %s\n", p.zone_pct[0], p.zone_pct[1],
           cli_num(a, sizeof a, p.zone_power_w[0], dec), cli_num(b, sizeof b, p.zone_power_w[1], dec), u);
    printf("         intervals: percentile bootstrap over stages, %zu resamples; %zu stage%s above RER 1.00 entered at 0 g/min\n",
           p.n_boot, p.n_rer_above, p.n_rer_above == 1 ? "" : "s");
}

void cli_energy_steps_report(const cpd_gx_test *t, const cpd_ramp_result *r, cli_json *json)
{
    if (r->protocol != CPD_RAMP_PROTO_STEPS)
        return;
    int eq = CPD_ENERGY_EQ_JW_HIGH;
    steps_substrate(t, r, eq, json);
    steps_pfo(t, r, eq, json);
}
