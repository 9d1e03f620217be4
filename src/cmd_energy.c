/* cmd_energy.c: 'energy SESSION_ID': the oxygen, energy and fuel cost of a recorded power session from
 * the athlete's own VO2 kinetics (energy.h), beside a fixed-efficiency estimate, with Monte Carlo
 * intervals; typical published values stand in, flagged, for what the athlete's tests do not give. */
#include "cli_energy.h"
#include "cli_session.h"
#include "commands.h"
#include "cpdomain/energy.h"
#include "cpdomain/plots.h"
#include "cpdomain/units.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

static const char HELP[] =
    "usage: cpdomain energy SESSION_ID [--efficiency PCT] [--draws N] [--seed N] [--minutes FILE]\n"
    "                                  [--plot FILE.svg] [--equations jw2005-high|jw2005-low|frayn1983]\n\n"
    "Models the second-by-second VO2 of a recorded power session from the athlete's own parameters:\n"
    "the steady-state gain and baseline (moderate bouts, else the ramp), the primary time constant and\n"
    "delay (moderate bouts), the GET and CP (as 'domains' finds them), the slow component per W above\n"
    "the GET (heavy bouts), all capped at VO2peak (ramp). Energy follows from Weir (1949) with the RER\n"
    "of each domain (the stable stages of the athlete's step test below the GET and from the GET to CP,\n"
    "else steady-state bouts, else typical values), carbohydrate and fat from\n"
    "the stoichiometric equations (Jeukendrup & Wallis 2005 by default). Each total carries a 95 %\n"
    "interval from Monte Carlo draws of the parameters. Beside it: the estimate of a fixed gross\n"
    "efficiency (work / efficiency) and the difference, minute by minute (--minutes, --csv, --json) and in total;\n"
    "the extra cost of work above the GET (the slow component) is shown on its own. Typical published\n"
    "values used where the athlete has no test are flagged 'typical'. The model is checked against\n"
    "each of the athlete's bouts (RMSE between the model driven by the bout's power and its fit).\n"
    "  --efficiency PCT  gross efficiency of the fixed-efficiency estimate, % (10-35; default: the\n"
    "                    athlete's own at the GET, from the VO2-power line and the moderate RER)\n"
    "  --draws N         Monte Carlo draws (default 200; 20-5000)\n"
    "  --seed N          seed of the draws (default 1)\n"
    "  --minutes FILE    write the minute-by-minute table as CSV to FILE (the global --csv prints it)\n"
    "  --plot FILE.svg   draw the modelled VO2 beside the linear rule (base + gain x power) as SVG\n"
    "  --equations SET   carbohydrate and fat equations (default jw2005-high)\n"
    "These are modelled estimates for training analysis, not intake advice: fuelling plans belong to a\n"
    "registered dietitian or sports nutritionist.\n\n"
    "examples:\n  cpdomain energy 14\n  cpdomain --json energy 14 --efficiency 22\n  cpdomain energy 14 --minutes s14.csv\n";


#define CLI_EN_MAX_CELLS 3e7 /* per-minute Monte Carlo values kept at once (240 MB of doubles) */

/* Names, labels and units of the model's parameters (cli_energy.h). */
static const char *const K_NAME[CLI_EN_N] = {"baseline_ml_min", "gain_ml_min_w", "tau_s", "delay_s", "get_w", "cp_w",
                                        "slow_gain_ml_min_w", "slow_tau_s", "slow_delay_s", "vo2peak_ml_min",
                                        "rer_moderate", "rer_heavy", "rer_severe"};
static const char *const K_LABEL[CLI_EN_N] = {"VO2 at 0 W", "gain", "primary tau", "primary delay", "GET", "CP",
                                         "slow component", "slow tau", "slow delay", "VO2peak", "RER moderate",
                                         "RER heavy", "RER severe"};
static const char *const K_UNIT[CLI_EN_N] = {"mL/min", "mL/min/W", "s", "s", "W", "W", "mL/min/W above GET", "s", "s",
                                        "mL/min", "", "", ""};

/* The model driven by each bout's power against the bout's own fit, phase I to the end. */
typedef struct {
    long long id;
    double power_w;
    int domain;
    double rmse, bias;
    size_t n;
} val_row;

static size_t validate(const cli_energy_athlete *A, const cpd_vo2model *m, val_row *out)
{
    size_t k = 0;
    for (size_t i = 0; i < A->nb; i++) {
        const cli_energy_bout *e = &A->b[i];
        const cpd_kinetics_fitres *f = e->res.sc_supported && e->res.bi.valid ? &e->res.bi : &e->res.mono;
        size_t pre = 120, dur = (size_t)floor(e->res.end_s);
        if (!f->valid || dur < 30)
            continue;
        double *p = malloc((pre + dur) * 2 * sizeof *p);
        if (!p)
            continue;
        double *v = p + pre + dur;
        for (size_t j = 0; j < pre + dur; j++)
            p[j] = j < pre ? e->baseline_w : e->power_w;
        if (cpd_vo2model_run(m, p, pre + dur, v) == CPD_OK) {
            double ss = 0, sb = 0;
            size_t n = 0;
            for (size_t j = pre + 19; j < pre + dur; j++) {
                double t = (double)(j + 1 - pre), d = v[j] - cpd_kinetics_eval(f->model, f->b, t);
                ss += d * d;
                sb += d;
                n++;
            }
            out[k] = (val_row){e->id, e->power_w, e->res.domain, sqrt(ss / (double)n), sb / (double)n, n};
            k++;
        }
        free(p);
    }
    return k;
}

typedef struct {
    const char *eff, *draws, *seed, *csv, *eq, *plot;
} en_opts;

static int en_opt(int opt, const char *arg, void *ud)
{
    en_opts *o = ud;
    switch (opt) {
    case 'e': o->eff = arg; break;
    case 'n': o->draws = arg; break;
    case 's': o->seed = arg; break;
    case 'c': o->csv = arg; break;
    case 'q': o->eq = arg; break;
    case 'p': o->plot = arg; break;
    default: return EX_USAGE;
    }
    return 0;
}

static const struct option longopts[] = {
    {"efficiency", required_argument, NULL, 'e'}, {"draws", required_argument, NULL, 'n'},
    {"seed", required_argument, NULL, 's'},       {"minutes", required_argument, NULL, 'c'},
    {"equations", required_argument, NULL, 'q'},  {"plot", required_argument, NULL, 'p'},
    {"help", no_argument, NULL, 'h'},
    {NULL, 0, NULL, 0},
};

/* The minute-by-minute table as RFC 4180 CSV (CRLF line ends, as every --csv table); all fields are numbers. */
static char *minutes_csv(const cpd_energy_session_result *r, size_t *len)
{
    char *s = NULL;
    FILE *f = open_memstream(&s, len);
    if (!f)
        return NULL;
    fprintf(f, "minute,start_s,recorded_s,power_w,work_kj,vo2_ml_min,energy_kj,energy_lo_kj,energy_hi_kj,energy_kcal,"
               "cho_g,cho_lo_g,cho_hi_g,fat_g,fat_lo_g,fat_hi_g,fixed_efficiency_kj,difference_kj,no_slow_component_kj\r\n");
    for (size_t k = 0; k < r->n_min; k++)
        fprintf(f, "%zu,%zu,%.0f,%.1f,%.3f,%.0f,%.3f,%.3f,%.3f,%.3f,%.3f,%.3f,%.3f,%.3f,%.3f,%.3f,%.3f,%.3f,%.3f\r\n", k + 1,
                60 * k, r->rec_s[k], r->power_w[k], r->work_kj[k], r->vo2_ml_min[k], r->ee_kj[k], r->ee_lo[k],
                r->ee_hi[k], r->ee_kj[k] / CPD_ENERGY_KJ_PER_KCAL, r->cho_g[k], r->cho_lo[k], r->cho_hi[k], r->fat_g[k],
                r->fat_lo[k], r->fat_hi[k], r->fixed_kj[k], r->ee_kj[k] - r->fixed_kj[k], r->nosc_kj[k]);
    if (fclose(f)) {
        free(s);
        return NULL;
    }
    return s;
}

#define PLOT_BIN_S 5 /* the plot draws 5-s means */

/* The modelled VO2 (point parameters) beside the linear rule, as SVG into path. Returns 0 or an exit code. */
static int write_plot(cli_ctx *c, const char *path, const cpd_session_rec *sr, const cpd_energy_params *E,
                      const double *p, size_t n)
{
    size_t nb = (n + PLOT_BIN_S - 1) / PLOT_BIN_S;
    double *v = malloc((n + 4 * nb) * sizeof *v);
    if (!v)
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    double *t = v + n, *mv = t + nb, *ml = mv + nb, *mp = ml + nb;
    int rc = cpd_vo2model_run(&E->m, p, n, v);
    for (size_t b = 0; rc == CPD_OK && b < nb; b++) {
        size_t i0 = b * PLOT_BIN_S, i1 = i0 + PLOT_BIN_S < n ? i0 + PLOT_BIN_S : n;
        double sv = 0, sl = 0, sp = 0;
        for (size_t i = i0; i < i1; i++) {
            sv += v[i];
            sl += fmin(E->m.base_ml_min + E->m.gain_ml_min_w * p[i], E->m.vo2peak_ml_min);
            sp += p[i];
        }
        double k = (double)(i1 - i0);
        t[b] = 0.5 * (double)(i0 + i1);
        mv[b] = sv / k;
        ml[b] = sl / k;
        mp[b] = sp / k;
    }
    char title[200], *svg = NULL;
    snprintf(title, sizeof title, "Session %lld: %s, %s: modelled VO2 and the linear rule", (long long)sr->id,
             sr->athlete, sr->date);
    if (rc == CPD_OK)
        rc = cpd_plot_session_vo2(t, mv, ml, mp, nb, E->m.base_ml_min + E->m.gain_ml_min_w * E->m.get_w,
                                  E->m.vo2peak_ml_min, title, &svg);
    free(v);
    if (rc)
        return cli_fail(c, rc, "no plot: %s", cpd_strerror(rc));
    rc = cli_write_file(c, path, svg, strlen(svg));
    free(svg);
    if (!rc)
        cli_note(c, "wrote %s", path);
    return rc;
}

static const char CAUTION[] =
    "Modelled estimates for training analysis, not intake advice: the model extrapolates the athlete's "
    "laboratory responses to the road, and carbohydrate and fat rest on assumed steady-state RERs. Fuelling and "
    "intake plans belong to a registered dietitian or sports nutritionist.";

static int print_json(const cpd_session_rec *sr, const cli_energy_athlete *A, const cli_energy_par *P, int eq, const char *eff_src,
                       const cpd_energy_session_result *r, const val_row *vr, size_t nv)
{
    cli_json *d = cj_obj();
    cj_int(d, "session_id", sr->id);
    cj_str(d, "athlete", A->a.code);
    cj_str(d, "date", sr->date);
    cj_num(d, "recorded_s", r->rec_total_s);
    cj_str(d, "energy_equation", "Weir 1949");
    cj_str(d, "substrate_equations", cpd_energy_eqset_get(eq)->name);
    cj_num(d, "efficiency_pct", 100.0 * r->efficiency);
    cj_str(d, "efficiency_source", eff_src);
    cj_int(d, "draws", (long long)r->draws);
    cli_json *pa = cj_add_obj(d, "parameters");
    for (int k = 0; k < CLI_EN_N; k++) {
        cli_json *o = cj_add_obj(pa, K_NAME[k]);
        cj_num(o, "value", P[k].known ? P[k].v : NAN);
        cj_num(o, "sd", P[k].known ? P[k].sd : NAN);
        cj_bool(o, "typical", P[k].typical);
        cj_str(o, "source", P[k].src);
    }
    cli_json *t = cj_add_obj(d, "totals");
    cj_num(t, "work_kj", r->work_total_kj);
    cj_num(t, "energy_kj", r->ee_total_kj);
    cj_pair(t, "energy_kj_ci95", r->ee_total_ci[0], r->ee_total_ci[1]);
    cj_num(t, "energy_kcal", r->ee_total_kj / CPD_ENERGY_KJ_PER_KCAL);
    cj_pair(t, "energy_kcal_ci95", r->ee_total_ci[0] / CPD_ENERGY_KJ_PER_KCAL, r->ee_total_ci[1] / CPD_ENERGY_KJ_PER_KCAL);
    cj_num(t, "cho_g", r->cho_total_g);
    cj_pair(t, "cho_g_ci95", r->cho_total_ci[0], r->cho_total_ci[1]);
    cj_num(t, "fat_g", r->fat_total_g);
    cj_pair(t, "fat_g_ci95", r->fat_total_ci[0], r->fat_total_ci[1]);
    cj_num(t, "fixed_efficiency_kj", r->fixed_total_kj);
    cj_num(t, "difference_kj", r->diff_total_kj);
    cj_pair(t, "difference_kj_ci95", r->diff_total_ci[0], r->diff_total_ci[1]);
    cj_num(t, "no_slow_component_kj", r->nosc_total_kj);
    cj_num(t, "slow_component_kj", r->ee_total_kj - r->nosc_total_kj);
    cli_json *dm = cj_add_arr(d, "domains");
    static const char *const DN[3] = {"moderate", "heavy", "severe"};
    for (int k = 0; k < 3; k++) {
        cli_json *o = cj_obj();
        cj_str(o, "domain", DN[k]);
        cj_num(o, "seconds", r->dom_s[k]);
        cj_num(o, "energy_kj", r->dom_ee_kj[k]);
        cj_num(o, "fixed_efficiency_kj", r->dom_fixed_kj[k]);
        cj_push(dm, o);
    }
    cli_json *mn = cj_add_arr(d, "minutes");
    for (size_t k = 0; k < r->n_min; k++) {
        cli_json *o = cj_obj();
        cj_int(o, "minute", (long long)k + 1);
        cj_num(o, "recorded_s", r->rec_s[k]);
        cj_num(o, "power_w", r->power_w[k]);
        cj_num(o, "work_kj", r->work_kj[k]);
        cj_num(o, "vo2_ml_min", r->vo2_ml_min[k]);
        cj_num(o, "energy_kj", r->ee_kj[k]);
        cj_pair(o, "energy_kj_ci95", r->ee_lo[k], r->ee_hi[k]);
        cj_num(o, "cho_g", r->cho_g[k]);
        cj_pair(o, "cho_g_ci95", r->cho_lo[k], r->cho_hi[k]);
        cj_num(o, "fat_g", r->fat_g[k]);
        cj_pair(o, "fat_g_ci95", r->fat_lo[k], r->fat_hi[k]);
        cj_num(o, "fixed_efficiency_kj", r->fixed_kj[k]);
        cj_num(o, "difference_kj", r->ee_kj[k] - r->fixed_kj[k]);
        cj_num(o, "no_slow_component_kj", r->nosc_kj[k]);
        cj_push(mn, o);
    }
    cli_json *va = cj_add_arr(d, "validation");
    for (size_t k = 0; k < nv; k++) {
        cli_json *o = cj_obj();
        cj_int(o, "bout_id", vr[k].id);
        cj_num(o, "power_w", vr[k].power_w);
        cj_str(o, "domain", vr[k].domain ? cpd_kinetics_domain_name(vr[k].domain) : NULL);
        cj_num(o, "rmse_ml_min", vr[k].rmse);
        cj_num(o, "bias_ml_min", vr[k].bias);
        cj_int(o, "seconds", (long long)vr[k].n);
        cj_push(va, o);
    }
    cj_str(d, "caution", CAUTION);
    return cj_print(d);
}

static void print_text(const cpd_session_rec *sr, const cli_energy_athlete *A, const cli_energy_par *P, int eq, const char *eff_src,
                       const cpd_energy_session_result *r, const val_row *vr, size_t nv)
{
    char dur[24];
    cpd_format_duration(r->rec_total_s, dur, sizeof dur);
    printf("energy of session %lld: %s %s, %s, %s recorded%s%s\n\n", (long long)sr->id, A->a.code, A->a.name, sr->date,
           dur, sr->note[0] ? ", " : "", sr->note);
    printf("parameters (SD drives the intervals)\n");
    for (int k = 0; k < CLI_EN_N; k++) {
        if (P[k].known)
            printf("  %-15s %8.*f %-19s SD %-6.*f %s%s\n", K_LABEL[k], k >= CLI_EN_RER_M || k == CLI_EN_GAIN ? 2 : 1, P[k].v,
                   K_UNIT[k], k >= CLI_EN_RER_M || k == CLI_EN_GAIN ? 2 : 1, P[k].sd, P[k].typical ? "TYPICAL: " : "", P[k].src);
        else
            printf("  %-15s %8s %-19s %s\n", K_LABEL[k], "-", K_UNIT[k], P[k].src);
    }
    double kc = CPD_ENERGY_KJ_PER_KCAL;
    printf("\ntotals (95 %% intervals from %zu Monte Carlo draws)\n", r->draws);
    printf("  work                         %6.0f kJ\n", r->work_total_kj);
    printf("  energy, VO2 model            %6.0f kJ (%.0f to %.0f) = %.0f kcal (%.0f to %.0f), Weir 1949\n",
           r->ee_total_kj, r->ee_total_ci[0], r->ee_total_ci[1], r->ee_total_kj / kc, r->ee_total_ci[0] / kc,
           r->ee_total_ci[1] / kc);
    printf("  energy, fixed efficiency     %6.0f kJ = %.0f kcal (work / %.3f: %s)\n", r->fixed_total_kj,
           r->fixed_total_kj / kc, r->efficiency, eff_src);
    printf("  model - fixed efficiency     %+6.0f kJ (%+.0f to %+.0f), %+.1f %%\n", r->diff_total_kj, r->diff_total_ci[0],
           r->diff_total_ci[1], 100.0 * r->diff_total_kj / r->fixed_total_kj);
    printf("  of it, the slow component    %+6.0f kJ (model without it: %.0f kJ)\n", r->ee_total_kj - r->nosc_total_kj,
           r->nosc_total_kj);
    printf("  carbohydrate                 %6.0f g (%.0f to %.0f)\n", r->cho_total_g, r->cho_total_ci[0],
           r->cho_total_ci[1]);
    printf("  fat                          %6.0f g (%.0f to %.0f), %s\n", r->fat_total_g, r->fat_total_ci[0],
           r->fat_total_ci[1], cpd_energy_eqset_get(eq)->name);
    static const char *const DN[3] = {"moderate", "heavy", "severe"};
    printf("\nby domain of the modelled VO2\n");
    for (int k = 0; k < 3; k++) {
        cpd_format_duration(r->dom_s[k], dur, sizeof dur);
        printf("  %-9s %8s  model %6.0f kJ, fixed efficiency %6.0f kJ, difference %+5.0f kJ\n", DN[k], dur,
               r->dom_ee_kj[k], r->dom_fixed_kj[k], r->dom_ee_kj[k] - r->dom_fixed_kj[k]);
    }
    printf("\n5-min blocks (minute by minute: --minutes FILE, --csv or --json)\n");
    printf("  %-11s %7s %8s %10s %10s %9s %7s\n", "from", "power", "VO2", "energy kJ", "fixed kJ", "diff kJ", "CHO g");
    for (size_t k0 = 0; k0 < r->n_min; k0 += 5) {
        double rs = 0, pw = 0, vo = 0, ee = 0, fx = 0, ch = 0;
        for (size_t k = k0; k < k0 + 5 && k < r->n_min; k++) {
            rs += r->rec_s[k];
            pw += r->power_w[k] * r->rec_s[k];
            vo += r->vo2_ml_min[k] * r->rec_s[k];
            ee += r->ee_kj[k];
            fx += r->fixed_kj[k];
            ch += r->cho_g[k];
        }
        if (rs == 0)
            continue;
        cpd_format_duration(60.0 * (double)k0, dur, sizeof dur);
        printf("  %-11s %5.0f W %8.0f %10.0f %10.0f %+9.0f %7.0f\n", dur, pw / rs, vo / rs, ee, fx, ee - fx, ch);
    }
    printf("\nmodel check: the model driven by each bout's power against the bout's own fit (phase I excluded)\n");
    if (nv == 0)
        printf("  no bouts on file\n");
    for (size_t k = 0; k < nv; k++)
        printf("  bout %lld (%.0f W, %s): RMSE %.0f mL/min, bias %+.0f mL/min over %zu s\n", vr[k].id, vr[k].power_w,
               cpd_kinetics_domain_name(vr[k].domain), vr[k].rmse, vr[k].bias, vr[k].n);
    if (nv)
        printf("  (in-sample: the parameters come from these bouts)\n");
    printf("\ncaution: %s\n", CAUTION);
}

int cmd_energy(cli_ctx *c, int argc, char **argv)
{
    en_opts o;
    memset(&o, 0, sizeof o);
    int first = 0, done = 0;
    int rc = cli_getopt(argc, argv, "h", longopts, HELP, en_opt, &o, &first, &done);
    if (rc || done)
        return rc;
    if (argc - first != 1)
        return cli_usage("energy", argc - first < 1 ? "missing argument SESSION_ID" : "unexpected argument '%s'",
                         argv[first + 1 < argc ? first + 1 : first]);
    long long id = 0;
    double eff = 0, draws = 200, seed = 1;
    int eq = CPD_ENERGY_EQ_JW_HIGH;
    if ((rc = cli_id("energy", argv[first], &id)))
        return rc;
    if (o.eff && (rc = cli_ranged("--efficiency", o.eff, 10, 35, "%", 0, &eff)))
        return rc;
    if (o.draws && (rc = cli_ranged("--draws", o.draws, 20, 5000, "", 0, &draws)))
        return rc;
    if (o.seed && (rc = cli_ranged("--seed", o.seed, 0, 4294967295.0, "", 0, &seed)))
        return rc;
    if (o.eq && (eq = cpd_energy_eqset_find(o.eq)) < 0)
        return cli_usage("energy", "--equations must be jw2005-high, jw2005-low or frayn1983");
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_session_rec sr;
    cpd_session_samples *x = NULL;
    cpd_session_ws *w = NULL;
    cpd_session s;
    if ((rc = cli_session_load_clean(c, id, 0, &sr, &x, &w, &s)))
        return rc;
    cli_energy_athlete A;
    memset(&A, 0, sizeof A);
    double *p = NULL;
    unsigned char *rec = NULL;
    cpd_energy_session_result r;
    memset(&r, 0, sizeof r);
    val_row *vr = NULL;
    cli_energy_par P[CLI_EN_N];
    if (sr.speed) {
        rc = cli_fail(c, CPD_EDATA, "session %lld is a speed session: energy models power sessions (cycling, "
                      "ergometers) only", id);
        goto done;
    }
    if ((rc = cli_energy_gather(c, sr.athlete, 0, sr.date, &A)) || (rc = cli_energy_params(c, &A, P)))
        goto done;
    size_t n = 0;
    for (size_t i = 0; i < s.n_segments; i++)
        n = s.segments[i].start_s + s.segments[i].length_s > n ? s.segments[i].start_s + s.segments[i].length_s : n;
    p = calloc(n ? n : 1, sizeof *p);
    rec = calloc(n ? n : 1, 1);
    vr = calloc(A.nb ? A.nb : 1, sizeof *vr);
    if (!p || !rec || !vr) {
        rc = cli_fail(c, CPD_ENOMEM, "out of memory");
        goto done;
    }
    for (size_t i = 0; i < s.n_segments; i++)
        for (size_t j = 0; j < s.segments[i].length_s; j++) {
            p[s.segments[i].start_s + j] = s.segments[i].value[j];
            rec[s.segments[i].start_s + j] = 1;
        }
    /* the draws keep every minute's values for the percentiles: bound the memory (3 x minutes x draws) */
    double max_draws = floor(CLI_EN_MAX_CELLS / (3.0 * (double)((n + 59) / 60)));
    if (draws > max_draws) {
        rc = cli_usage("energy", "--draws %.0f is too many for a session of %zu min: at most %.0f", draws, (n + 59) / 60,
                       max_draws);
        goto done;
    }
    cpd_energy_params E;
    cli_energy_to_model(P, &E);
    const char *eff_src = "given (--efficiency)";
    if (!o.eff) { /* the athlete's own gross efficiency at the top of the moderate domain */
        eff = 100.0 * cpd_vo2model_gross_efficiency(&E.m, E.m.get_w, E.rer[0]);
        eff = eff < 10 ? 10 : eff > 35 ? 35 : eff;
        eff_src = "the athlete's gross efficiency at the GET (VO2-power line, moderate RER)";
    }
    int erc = cpd_energy_session(&E, p, rec, n, eq, eff / 100.0, (size_t)draws, (uint64_t)seed, &r);
    if (erc) {
        rc = cli_fail(c, erc == CPD_EUSAGE ? CPD_EDATA : erc, "the athlete's parameters do not make a valid model "
                      "(check the bouts and the ramp): %s", cpd_strerror(erc));
        goto done;
    }
    size_t nv = validate(&A, &E.m, vr);
    if (o.plot && (rc = write_plot(c, o.plot, &sr, &E, p, n)))
        goto done;
    if (o.csv || c->csv) {
        size_t len = 0;
        char *csv = minutes_csv(&r, &len);
        if (!csv) {
            rc = cli_fail(c, CPD_ENOMEM, "out of memory");
            goto done;
        }
        if (c->csv) { /* the table on stdout, as --csv prints every command's table */
            rc = fwrite(csv, 1, len, stdout) == len ? 0 : EX_IOERR;
            free(csv);
            goto done;
        }
        rc = cli_write_file(c, o.csv, csv, len);
        free(csv);
        if (rc)
            goto done;
        cli_note(c, "wrote %s", o.csv);
    }
    if (c->json)
        rc = print_json(&sr, &A, P, eq, eff_src, &r, vr, nv);
    else
        print_text(&sr, &A, P, eq, eff_src, &r, vr, nv);
done:
    cpd_energy_session_free(&r);
    free(vr);
    free(p);
    free(rec);
    cli_energy_free(&A);
    cpd_session_free(w);
    cpd_store_samples_free(x);
    return rc;
}
