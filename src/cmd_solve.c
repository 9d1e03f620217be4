/* cmd_solve.c: W' (D') balance through a typed protocol ('predict --protocol') and the one unknown
 * intensity of a protocol ('solve'). */
#include "cli_pd.h"
#include "commands.h"
#include "cpdomain/balance.h"
#include "cpdomain/plots.h"
#include "cpdomain/protocol.h"
#include "cpdomain/units.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

/* The protocol text with every '?' replaced by value, written in the unit the '?' carried. */
static void subst_unknown(const char *text, cpd_protocol_unit unit, double v, double cp, char *buf, size_t n)
{
    size_t o = 0;
    for (const char *t = text; *t && o + 32 < n; t++) {
        if (*t != '?') {
            buf[o++] = *t;
            continue;
        }
        char r[32];
        switch (unit) {
        case CPD_PROTOCOL_UNIT_NONE:
            /* as printed in the answer (0.1 W), so that the check reproduces it: rounding 291.5 W up
             * to 292 W would end below the target */
            snprintf(r, sizeof r, v >= 20 ? "%.1fW" : "%.3fm/s", v); /* bare '?': W for power, m/s for speed */
            break;
        case CPD_PROTOCOL_UNIT_W:
            snprintf(r, sizeof r, "%.1f", v);
            break;
        case CPD_PROTOCOL_UNIT_PCT_CP:
        case CPD_PROTOCOL_UNIT_PCT_CS:
            snprintf(r, sizeof r, "%.2f", 100 * v / cp);
            break;
        case CPD_PROTOCOL_UNIT_M_S:
            snprintf(r, sizeof r, "%.3f", v);
            break;
        case CPD_PROTOCOL_UNIT_KM_H:
            snprintf(r, sizeof r, "%.2f", 3.6 * v);
            break;
        case CPD_PROTOCOL_UNIT_PACE_KM:
            cpd_format_pace(v, 1000, r, sizeof r);
            break;
        case CPD_PROTOCOL_UNIT_PACE_100M:
            cpd_format_pace(v, 100, r, sizeof r);
            break;
        }
        size_t L = strlen(r);
        memcpy(buf + o, r, L);
        o += L;
    }
    buf[o] = '\0';
}

static const char HELP_SOLVE[] =
    "usage: cpdomain solve CODE --protocol SPEC (--finish PCT | --lowest PCT) [--model NAME]\n"
    "                           [--balance-model NAME] [--from D] [--to D]\n\n"
    "Finds the one unknown intensity '?' of a protocol so that it ends with PCT % of W' (D') left\n"
    "(--finish), or so that its lowest balance at any second is PCT % (--lowest: for a session that\n"
    "ends in recovery, whose hardest moment comes before the end), without passing through task\n"
    "failure on the way (bracketed root finding, GSL's Brent method).\n"
    "Protocol: segments DURATION@INTENSITY separated by ';' or ','; Nx( ... ) repeats a group;\n"
    "intensities 350W, 105%CP, 4.6m/s, 3:35/km, 1:20/100m or ?. Balance models: differential\n"
    "(default; Skiba et al. 2015), integral (Skiba et al. 2012), bartram (Bartram et al. 2018,\n"
    "trained cyclists; 'elite' is read as its former name). The answer under every model is shown.\n"
    "An impossible request exits 69 and says why.\n\n"
    "examples:\n"
    "  cpdomain solve C03 --protocol \"15min@150W; 5x(3min@?, 3min@140W)\" --lowest 20\n"
    "  cpdomain solve C03 --protocol \"15min@150W; 4x(3min@140W, 3min@?)\" --finish 25\n"
    "  cpdomain --json solve R02 --protocol \"10min@3.2m/s; 6x(3min@?, 2min@2.5m/s)\" --lowest 10\n";

typedef struct {
    const char *protocol, *finish, *lowest, *model, *bmodel, *from, *to;
} solve_opts;

static int solve_opt(int opt, const char *arg, void *ud)
{
    solve_opts *o = ud;
    switch (opt) {
    case 'p': o->protocol = arg; break;
    case 'F': o->finish = arg; break;
    case 'L': o->lowest = arg; break;
    case 'm': o->model = arg; break;
    case 'b': o->bmodel = arg; break;
    case 'f': o->from = arg; break;
    case 't': o->to = arg; break;
    default: return EX_USAGE;
    }
    return 0;
}

/* A solver of balance.h: for the end balance (cpd_balance_solve) or the lowest (cpd_balance_solve_lowest). */
typedef int (*solve_fn)(cpd_balance_ws *, const cpd_balance_params *, cpd_protocol_modality, const cpd_protocol *,
                        double, cpd_balance_solution *);

/* The protocol's unknown solved once with parameters bq into *x; 1 when there is an answer. */
static int solve_once(solve_fn solver, const cpd_balance_params *bq, int spd, const cpd_protocol *p, double pct,
                      double *x)
{
    cpd_balance_ws *wq = cpd_balance_alloc(p->total_s);
    cpd_balance_solution sq;
    int ok = wq && solver(wq, bq, spd ? CPD_PROTOCOL_SPEED : CPD_PROTOCOL_POWER, p, pct, &sq) == CPD_OK &&
             sq.reason == CPD_SOLVE_OK;
    cpd_balance_free(wq);
    if (ok)
        *x = sq.intensity;
    return ok;
}

int cmd_solve(cli_ctx *c, int argc, char **argv)
{
    static const struct option lo[] = {
        {"protocol", required_argument, NULL, 'p'}, {"finish", required_argument, NULL, 'F'},
        {"lowest", required_argument, NULL, 'L'},
        {"model", required_argument, NULL, 'm'},    {"balance-model", required_argument, NULL, 'b'},
        {"from", required_argument, NULL, 'f'},     {"to", required_argument, NULL, 't'},
        {"help", no_argument, NULL, 'h'},           {NULL, 0, NULL, 0},
    };
    solve_opts o = {0};
    int first = 0, done = 0;
    int rc = cli_getopt(argc, argv, "h", lo, HELP_SOLVE, solve_opt, &o, &first, &done);
    if (rc || done)
        return rc;
    if (argc - first != 1)
        return cli_usage("solve", argc - first < 1 ? "missing argument CODE" : "unexpected argument '%s'", argv[first + 1]);
    if (!o.protocol || (!o.finish && !o.lowest))
        return cli_usage("solve", "--protocol and one of --finish or --lowest are required");
    if (o.finish && o.lowest)
        return cli_usage("solve", "--finish and --lowest ask different questions: give one");
    int lowest = o.lowest != NULL;
    const char *popt = lowest ? "--lowest" : "--finish";
    double pct = 0;
    if ((rc = cli_number(popt, lowest ? o.lowest : o.finish, &pct)))
        return rc;
    if (pct < 0 || pct >= 100 || (lowest && pct == 0))
        return cli_usage("solve", "%s must be a percentage of W' from %s to below 100 (got %g)", popt,
                         lowest ? "above 0 (0 is task failure)" : "0", pct);
    cpd_balance_model bm = CPD_BALANCE_DIFFERENTIAL;
    if (o.bmodel && cpd_balance_model_parse(o.bmodel, &bm))
        return cli_usage("solve", "--balance-model: '%s' is not differential, integral or bartram", o.bmodel);
    unsigned mask = CPD_PD_ALL_MODELS;
    cpd_pd_model which = CPD_PD_HYPERBOLIC;
    if (o.model) {
        if (cpd_pd_model_parse(o.model, &which))
            return cli_usage("solve", "--model: '%s' is not a model", o.model);
        mask = CPD_PD_MODEL_BIT(which);
    }
    int dd = 0;
    if ((o.from && cpd_parse_date(o.from, &dd)) || (o.to && cpd_parse_date(o.to, &dd)))
        return cli_usage("solve", "--from/--to: use YYYY-MM-DD");
    if ((rc = cli_open(c, 0)))
        return rc;
    cli_pd_fit f;
    size_t older = 0;
    if ((rc = cli_pd_load_current(c, argv[first], o.from, o.to, mask, &f, &older)))
        return rc;
    if (older)
        cli_note(c, "note: the newest block of trials (from %s) is used; %zu older trial(s) are left out (--from "
                    "includes them)", f.trials[0].date, older);
    if (!o.model) {
        if (!f.res->has_best) {
            rc = cli_fail(c, CPD_ENODATA, "%s: no model qualifies as best; name one with --model", f.athlete.code);
            cli_pd_fit_free(&f);
            return rc;
        }
        which = f.res->best;
    }
    const cpd_pd_model_fit *m = &f.res->models[which];
    if (!m->ok) {
        rc = cli_fail(c, CPD_ENODATA, "%s: the %s model did not fit: %s", f.athlete.code, cpd_pd_model_name(which),
                      cpd_pd_fail_text(m->fail));
        cli_pd_fit_free(&f);
        return rc;
    }
    cpd_protocol *p = NULL;
    if ((rc = cli_load_protocol(c, &f, o.protocol, &p))) {
        cli_pd_fit_free(&f);
        return rc;
    }
    if (!p->has_unknown) {
        cpd_protocol_free(p);
        cli_pd_fit_free(&f);
        return cli_usage("solve", "--protocol has no '?': mark the one intensity to find with '?'");
    }
    int spd = f.modality == CPD_PD_SPEED;
    cpd_balance_params bp = {bm, m->cp, m->w_prime};
    cpd_balance_ws *w = cpd_balance_alloc(p->total_s);
    cpd_balance_solution sol;
    memset(&sol, 0, sizeof sol);
    solve_fn solver = lowest ? cpd_balance_solve_lowest : cpd_balance_solve;
    rc = w ? solver(w, &bp, spd ? CPD_PROTOCOL_SPEED : CPD_PROTOCOL_POWER, p, pct, &sol) : CPD_ENOMEM;
    cpd_balance_free(w);
    static const char *const why_end[] = {
        "solved",
        "the protocol fails even with the unknown at the lowest intensity",
        "even the lowest intensity ends below the requested balance",
        "the requested balance is reachable only by passing through task failure first",
        "the end balance jumps over the requested value (integral model, at CP): no intensity gives it",
    };
    static const char *const why_low[] = {
        "solved",
        "the protocol fails even with the unknown at the lowest intensity",
        "even the lowest intensity dips below the requested lowest balance",
        "the requested lowest balance is reachable only by passing through task failure first",
        "the lowest balance jumps over the requested value (integral model, at CP): no intensity gives it",
    };
    const char *const *why = lowest ? why_low : why_end;
    /* the answer again with CP at the ends of its interval (W' moving with it) */
    int has_range[2] = {0, 0};
    double range[2] = {0, 0};
    for (int side = 0; side < 2 && rc == CPD_OK && sol.reason == CPD_SOLVE_OK; side++) {
        cpd_balance_params bq = bp;
        if (!cli_param_pair(m, side ? 1 : -1, &bq.cp, &bq.w_prime))
            continue;
        has_range[side] = solve_once(solver, &bq, spd, p, pct, &range[side]);
    }
    /* the answer under every recovery model, side by side (they disagree more than CP's interval) */
    static const cpd_balance_model allm[CLI_NBALANCE] = {CPD_BALANCE_DIFFERENTIAL, CPD_BALANCE_INTEGRAL, CPD_BALANCE_BARTRAM};
    int has_m[CLI_NBALANCE] = {0, 0, 0};
    double ans_m[CLI_NBALANCE] = {0, 0, 0};
    for (int q = 0; q < CLI_NBALANCE && rc == CPD_OK; q++) {
        cpd_balance_params bq = {allm[q], m->cp, m->w_prime};
        has_m[q] = solve_once(solver, &bq, spd, p, pct, &ans_m[q]);
    }
    const char *ikey = spd ? "speed_m_s" : "power_w";
    const char *u = spd ? "m" : "j";
    char k[40];
    int has_reason = rc == CPD_OK || rc == CPD_ENODATA; /* ENODATA: refused, sol.reason says why */
    int ok = rc == CPD_OK && sol.reason == CPD_SOLVE_OK;
    /* an answer beyond any human intensity is not a prescription (the bracket reaches CP + 2 W') */
    const cpd_range *hr = spd ? &CPD_RANGE_SPEED : &CPD_RANGE_POWER;
    char beyond[160] = "";
    if (ok && !(sol.intensity <= hr->hi)) {
        ok = 0;
        has_reason = 0;
        snprintf(beyond, sizeof beyond, "the answer (%.4g %s) lies beyond the physiological range (up to %g %s): no "
                 "realistic intensity gives that end balance", sol.intensity, hr->unit, hr->hi, hr->unit);
    }
    int ex = ok ? 0 : rc == CPD_OK || rc == CPD_ENODATA ? EX_UNAVAILABLE : cli_exit_code(rc);
    /* the session at the answer: its end balance and its lowest second, whichever was solved for */
    cpd_balance_result at;
    memset(&at, 0, sizeof at);
    int has_at = 0;
    if (ok) {
        double *xs = malloc(p->total_s * sizeof *xs);
        has_at = xs && cpd_protocol_expand(p, m->cp, sol.intensity, xs, p->total_s) == CPD_OK &&
                 cpd_balance_run(&bp, xs, p->total_s, NULL, &at) == CPD_OK;
        free(xs);
    }
    if (c->json) {
        cli_json *d = cj_obj();
        cj_str(d, "athlete", f.athlete.code);
        cj_str(d, "model", cpd_pd_model_name(which));
        cj_str(d, "balance_model", cpd_balance_model_name(bm));
        cj_num(d, cli_pd_key(f.modality, "cp", k, sizeof k), m->cp);
        cj_num(d, cli_pd_key(f.modality, "w_prime", k, sizeof k), m->w_prime);
        cj_num(d, ikey, ok ? sol.intensity : NAN);
        snprintf(k, sizeof k, "end_balance_%s", u);
        cj_num(d, k, has_at ? at.end_balance : !lowest && sol.has_end_balance ? sol.end_balance : NAN);
        snprintf(k, sizeof k, "lowest_balance_%s", u);
        cj_num(d, k, has_at ? at.min_balance : lowest && sol.has_end_balance ? sol.end_balance : NAN);
        cj_num(d, "lowest_at_s", has_at ? (double)at.min_at_s : NAN);
        snprintf(k, sizeof k, "target_balance_%s", u);
        cj_num(d, k, sol.target_balance);
        cj_str(d, "solved_for", lowest ? "lowest_balance" : "end_balance");
        cj_num(d, lowest ? "lowest_pct" : "finish_pct", pct);
        snprintf(k, sizeof k, "%s_range", ikey);
        cj_pair(d, k, has_range[0] && has_range[1] ? fmin(range[0], range[1]) : NAN, fmax(range[0], range[1]));
        cj_str(d, "range_method", "solved again with CP at each end of its 95 % interval, W' moved with it along "
                                  "their covariance");
        cli_json *ms = cj_add_arr(d, "balance_models");
        for (int q = 0; q < CLI_NBALANCE; q++) {
            cli_json *o2 = cj_obj();
            cj_str(o2, "name", cpd_balance_model_name(allm[q]));
            cj_bool(o2, "chosen", allm[q] == bm);
            cj_bool(o2, "cycling_constants", spd && allm[q] != CPD_BALANCE_DIFFERENTIAL);
            cj_num(o2, ikey, has_m[q] ? ans_m[q] : NAN);
            cj_push(ms, o2);
        }
        cj_str(d, "result", beyond[0] ? beyond : has_reason ? why[sol.reason] : cpd_strerror(rc));
        if (ok && spd) {
            const char *lab;
            char pace[32];
            cpd_format_pace(sol.intensity, cli_pd_pace_m(&f.athlete, &lab), pace, sizeof pace);
            snprintf(k, sizeof k, "pace%s", strcmp(lab, "/km") == 0 ? "_per_km" : "_per_100m");
            cj_str(d, k, pace);
        }
        cj_str(d, "caution", CLI_CAUTION);
        int prc = cj_print(d);
        if (!ex)
            ex = prc;
        if (!ok)
            fprintf(stderr, "cpdomain: solve: %s\n", beyond[0] ? beyond : has_reason ? why[sol.reason] : cpd_strerror(rc));
    } else if (ok) {
        char v[48], num[32];
        snprintf(v, sizeof v, "%s %s", cli_num(num, sizeof num, sol.intensity, CLI_DEC_INTENSITY(spd)), cli_pd_unit(f.modality));
        printf("%s %s: '?' = %s", f.athlete.code, f.athlete.name, v);
        if (spd) {
            const char *lab;
            char pace[32];
            cpd_format_pace(sol.intensity, cli_pd_pace_m(&f.athlete, &lab), pace, sizeof pace);
            printf(" (%s%s)", pace, lab);
        } else
            printf(" (%.0f %% of CP)", 100 * sol.intensity / m->cp);
        double sc = spd ? 1 : 1e-3;
        const char *bu = spd ? "m" : "kJ", *wn = spd ? "D'" : "W'";
        if (lowest) {
            char when[24];
            cpd_format_duration((double)at.min_at_s, when, sizeof when);
            printf("\nthe balance then falls lowest to %.*f %s of %s at %s (target %.0f %%) and ends at %.*f %s, %s "
                   "model, %s balance\n", spd ? 0 : 2, at.min_balance * sc, bu, wn, when, pct, spd ? 0 : 2,
                   at.end_balance * sc, bu, cpd_pd_model_name(which), cpd_balance_model_name(bm));
        } else
            printf("\nthe protocol then ends with %.*f %s of %s left (target %.0f %%), %s model, %s balance\n", spd ? 0 : 2,
                   sol.end_balance * sc, bu, wn, pct, cpd_pd_model_name(which), cpd_balance_model_name(bm));
        if (has_range[0] && has_range[1]) {
            char n0[32], n1[32];
            printf("with %s at the ends of its 95 %% interval (%s moving with it) the answer is %s to %s %s\n",
                   spd ? "CS" : "CP", spd ? "D'" : "W'", cli_num(n0, sizeof n0, fmin(range[0], range[1]), CLI_DEC_INTENSITY(spd)),
                   cli_num(n1, sizeof n1, fmax(range[0], range[1]), CLI_DEC_INTENSITY(spd)), cli_pd_unit(f.modality));
        }
        printf("under each recovery model (* the one used%s):", spd ? "; c: constants fitted on cycling power" : "");
        for (int q = 0; q < CLI_NBALANCE; q++) {
            char nq[32];
            printf("%s %s%s%s %s", q ? "," : "", cpd_balance_model_name(allm[q]), allm[q] == bm ? "*" : "",
                   spd && allm[q] != CPD_BALANCE_DIFFERENTIAL ? " (c)" : "",
                   has_m[q] ? cli_num(nq, sizeof nq, ans_m[q], spd ? 3 : 1) : "none");
            if (has_m[q])
                printf(" %s", cli_pd_unit(f.modality));
        }
        printf("\n");
        char check[1024];
        subst_unknown(o.protocol, p->unknown_unit, sol.intensity, m->cp, check, sizeof check);
        printf("check it: cpdomain predict %s --protocol \"%s\"\n", f.athlete.code, check);
        printf("\n%s\n", CLI_CAUTION);
    } else {
        fprintf(stderr, "cpdomain: solve: %s", beyond[0] ? beyond : has_reason ? why[sol.reason] : cpd_strerror(rc));
        if (has_reason && sol.has_end_balance)
            fprintf(stderr, " (the closest %s balance without failure is %.0f %% of %s)", lowest ? "lowest" : "end",
                    100 * sol.end_balance / m->w_prime, spd ? "D'" : "W'");
        fputc('\n', stderr);
    }
    /* a session that ends in recovery refills W' after its hardest moment: its end balance may be
     * out of reach while its lowest balance is not */
    if (!ok && has_reason && !lowest && (sol.reason == CPD_SOLVE_THROUGH_FAILURE || sol.reason == CPD_SOLVE_BELOW_AT_LOWEST))
        fprintf(stderr, "cpdomain: solve: if the session ends in recovery, solve for its hardest moment instead: "
                        "--lowest %g\n", pct > 0 ? pct : 10.0);
    cpd_protocol_free(p);
    cli_pd_fit_free(&f);
    return ex;
}
