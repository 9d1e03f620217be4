/* cli_balance.c: the W' (D') balance report shared by 'predict --protocol', 'predict --session' and
 * 'solve', and 'predict --protocol' itself. */
#include "cli_pd.h"
#include "cpdomain/balance.h"
#include "cpdomain/plots.h"
#include "cpdomain/protocol.h"
#include "cpdomain/units.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

/* The model's parameters with CP moved to the lower (side < 0) or upper end of its 95 % interval
 * and W' moved with it along their joint-normal regression, W' + cov(CP, W')/var(CP) x dCP: the
 * pairs a refit would most likely give. Returns 0 when the fit has no standard errors. */
int cli_param_pair(const cpd_pd_model_fit *m, int side, double *cp, double *w)
{
    if (!m->has_se || !(m->cov[0] > 0))
        return 0;
    *cp = side < 0 ? m->cp_ci95[0] : m->cp_ci95[1];
    *w = m->w_prime + m->cov[1] / m->cov[0] * (*cp - m->cp);
    return *cp > 0 && *w > 0;
}

/* Parses the protocol and checks it against the fit's modality. Returns 0 or an exit code. */
int cli_load_protocol(cli_ctx *c, const cli_pd_fit *f, const char *text, cpd_protocol **p)
{
    char msg[CPD_MSG_MAX];
    int rc = cpd_protocol_parse(text, p, msg);
    if (rc)
        return cli_fail(c, rc == CPD_EDATA ? CPD_EUSAGE : rc, "--protocol: %s", msg);
    cpd_protocol_modality want = f->modality == CPD_PD_SPEED ? CPD_PROTOCOL_SPEED : CPD_PROTOCOL_POWER;
    if ((*p)->modality != CPD_PROTOCOL_UNSPECIFIED && (*p)->modality != want) {
        int ex = cli_fail(c, CPD_EUSAGE, "--protocol is in %s but %s's fit is in %s", cpd_protocol_modality_name((*p)->modality),
                          f->athlete.code, cpd_protocol_modality_name(want));
        cpd_protocol_free(*p);
        *p = NULL;
        return ex;
    }
    return 0;
}

static int write_trace(cli_ctx *c, const char *path, const double *x, const double *trace, size_t n, int spd)
{
    char *text = NULL;
    size_t len = 0;
    FILE *o = open_memstream(&text, &len);
    if (!o)
        return cli_fail(c, CPD_ENOMEM, "--trace: %s", cpd_strerror(CPD_ENOMEM));
    fprintf(o, "time_s,%s,%s\n", spd ? "speed_m_s" : "power_w", spd ? "balance_m" : "balance_j");
    for (size_t i = 0; i < n; i++)
        fprintf(o, "%zu,%.6g,%.6f\n", i + 1, x[i], trace[i]);
    int bad = ferror(o);
    if (fclose(o) != 0 || bad) {
        free(text);
        return cli_fail(c, CPD_ENOMEM, "--trace: %s", cpd_strerror(CPD_ENOMEM));
    }
    int ex = cli_write_file(c, path, text, len);
    free(text);
    return ex;
}

/* The end and lowest balance of one replay and when it failed, in the units' keys ("_j" or "_m"). */
static void balance_keys(cli_json *o, const cpd_balance_result *b, const char *u)
{
    char k[40];
    snprintf(k, sizeof k, "end_balance_%s", u);
    cj_num(o, k, b->end_balance);
    snprintf(k, sizeof k, "min_balance_%s", u);
    cj_num(o, k, b->min_balance);
    if (b->failed)
        cj_int(o, "failure_at_s", (long long)b->failure_at_s);
    else
        cj_null(o, "failure_at_s");
}

int cli_balance_report(cli_ctx *c, const cli_pd_fit *f, const cpd_pd_model_fit *m, cpd_balance_model bm,
                       const cli_balance_input *in)
{
    int spd = f->modality == CPD_PD_SPEED;
    const double *x = in->x;
    double *trace = malloc(in->n * sizeof *trace);
    cpd_balance_result br;
    cpd_balance_params bp = {bm, m->cp, m->w_prime};
    int rc = trace ? cpd_balance_run(&bp, x, in->n, trace, &br) : CPD_ENOMEM;
    if (rc) {
        free(trace);
        return cli_fail(c, rc, "computing the balance: %s", cpd_strerror(rc));
    }
    /* every recovery model side by side: they disagree far more than CP's interval moves them */
    static const cpd_balance_model allm[CLI_NBALANCE] = {CPD_BALANCE_DIFFERENTIAL, CPD_BALANCE_INTEGRAL, CPD_BALANCE_BARTRAM};
    cpd_balance_result ball[CLI_NBALANCE];
    int has_all[CLI_NBALANCE] = {0, 0, 0};
    for (int k = 0; k < CLI_NBALANCE; k++) {
        cpd_balance_params bk = {allm[k], m->cp, m->w_prime};
        has_all[k] = cpd_balance_run(&bk, x, in->n, NULL, &ball[k]) == CPD_OK;
    }
    /* the same intensities with CP at the ends of its interval (W' moving with it) */
    int has_unc[2] = {0, 0};
    cpd_balance_result bu[2];
    for (int side = 0; side < 2; side++) {
        cpd_balance_params bq = bp;
        if (cli_param_pair(m, side ? 1 : -1, &bq.cp, &bq.w_prime) && cpd_balance_run(&bq, x, in->n, NULL, &bu[side]) == CPD_OK)
            has_unc[side] = 1;
    }
    if (in->trace_path && (rc = write_trace(c, in->trace_path, x, trace, in->n, spd))) {
        free(trace);
        return rc;
    }
    if (in->plot_path) { /* -o FILE.svg: the balance over the intensity, through the plotting module */
        char *svg = NULL;
        rc = cpd_plot_balance(x, trace, in->n, spd, m->cp, m->w_prime, &svg);
        if (!rc)
            rc = cli_write_file(c, in->plot_path, svg, strlen(svg)); /* 0 or its exit code, said */
        else
            rc = cli_fail(c, rc, "-o %s: no plot: %s", in->plot_path, cpd_strerror(rc));
        free(svg);
        if (rc) {
            free(trace);
            return cli_exit_code(rc);
        }
        cli_note(c, "wrote %s", in->plot_path);
    }
    const char *u = spd ? "m" : "j";
    char k[40];
    if (c->json) {
        cli_json *d = cj_obj();
        cj_str(d, "athlete", f->athlete.code);
        cj_str(d, "model", cpd_pd_model_name(m->model));
        cj_str(d, "balance_model", cpd_balance_model_name(bm));
        cj_num(d, cli_pd_key(f->modality, "cp", k, sizeof k), m->cp);
        cj_num(d, cli_pd_key(f->modality, "w_prime", k, sizeof k), m->w_prime);
        cj_int(d, "duration_s", (long long)in->n);
        if (in->json_extra)
            in->json_extra(d, in->ud);
        snprintf(k, sizeof k, "min_balance_%s", u);
        cj_num(d, k, br.min_balance);
        cj_int(d, "min_balance_at_s", (long long)br.min_at_s);
        snprintf(k, sizeof k, "end_balance_%s", u);
        cj_num(d, k, br.end_balance);
        if (br.failed)
            cj_int(d, "failure_at_s", (long long)br.failure_at_s);
        else
            cj_null(d, "failure_at_s");
        if (bm == CPD_BALANCE_INTEGRAL && br.has_dcp)
            cj_num(d, "tau_s", br.tau_s);
        cj_str(d, "discretisation", in->discretisation);
        cli_json *un = cj_add_obj(d, "uncertainty");
        cj_str(un, "method", "the same intensities with CP at each end of its 95 % interval and W' moved with it "
                             "along their covariance");
        for (int side = 0; side < 2; side++) {
            if (!has_unc[side]) {
                cj_null(un, side ? "cp_high" : "cp_low");
                continue;
            }
            balance_keys(cj_add_obj(un, side ? "cp_high" : "cp_low"), &bu[side], u);
        }
        cli_json *ms = cj_add_arr(d, "balance_models");
        for (int q = 0; q < CLI_NBALANCE; q++) {
            if (!has_all[q])
                continue;
            cli_json *o2 = cj_obj();
            cj_str(o2, "name", cpd_balance_model_name(allm[q]));
            cj_bool(o2, "chosen", allm[q] == bm);
            cj_bool(o2, "cycling_constants", spd && allm[q] != CPD_BALANCE_DIFFERENTIAL);
            balance_keys(o2, &ball[q], u);
            cj_push(ms, o2);
        }
        cj_bool(d, "completed_session", in->completed);
        cj_str(d, "below_zero_note", in->completed && br.failed ? CLI_COMPLETED_BELOW_ZERO : NULL);
        if (in->trace_path)
            cj_str(d, "trace_file", in->trace_path);
        cj_str(d, "caution", CLI_CAUTION);
        rc = cj_print(d);
    } else {
        char a[32], b[32];
        double sc = spd ? 1.0 : 1e-3;
        const char *un = spd ? "m" : "kJ";
        printf("%s %s: %s balance (%s model, %s = %.*f %s, %s = %.*f %s)\n", f->athlete.code, f->athlete.name,
               spd ? "D'" : "W'", cpd_balance_model_name(bm), spd ? "CS" : "CP", CLI_DEC_INTENSITY(spd), m->cp, cli_pd_unit(f->modality),
               spd ? "D'" : "W'", spd ? 0 : 2, m->w_prime * sc, un);
        printf("%s\n\n", in->heading);
        char lowest[48];
        snprintf(lowest, sizeof lowest, "lowest in %s", in->part_word);
        const char *head[] = {in->part_word, "ends at", "intensity", "balance at end", lowest};
        cli_table *t = cli_table_new(5, head, "rrrrr");
        for (size_t i = 0; i < in->nparts && i < 200; i++) {
            const cli_balance_part *g = &in->parts[i];
            size_t s0 = g->start_s, s1 = g->start_s + g->length_s;
            double lo = trace[s0];
            for (size_t q = s0; q < s1; q++)
                lo = trace[q] < lo ? trace[q] : lo;
            char idx[32], end[32], iv[48], be[32], lw[32], num[32];
            snprintf(idx, sizeof idx, "%s", g->label ? g->label : "");
            if (!g->label)
                snprintf(idx, sizeof idx, "%zu", i + 1);
            cpd_format_duration((double)s1, end, sizeof end);
            snprintf(iv, sizeof iv, "%s %s", cli_num(num, sizeof num, g->intensity, spd ? 2 : 0), cli_pd_unit(f->modality));
            if (spd && g->intensity > 0) { /* runners and swimmers read pace: shown beside the speed */
                const char *lab;
                char pc[32];
                cpd_format_pace(g->intensity, cli_pd_pace_m(&f->athlete, &lab), pc, sizeof pc);
                snprintf(iv + strlen(iv), sizeof iv - strlen(iv), " (%s%s)", pc, lab);
            }
            snprintf(be, sizeof be, "%s %s", cli_num(num, sizeof num, trace[s1 - 1] * sc, spd ? 0 : 2), un);
            snprintf(lw, sizeof lw, "%s %s", cli_num(num, sizeof num, lo * sc, spd ? 0 : 2), un);
            const char *row[] = {idx, end, iv, be, lw};
            cli_table_row(t, row);
        }
        cli_table_print(t);
        if (in->nparts > 200)
            printf("(the first 200 of %zu rows)\n", in->nparts);
        cpd_format_duration((double)br.min_at_s, a, sizeof a);
        if (in->show_min_pct)
            printf("\nlowest balance %.*f %s (%.0f %% of %s) at %s (second %zu); end balance %.*f %s (%.0f %% of %s)\n",
                   spd ? 0 : 2, br.min_balance * sc, un, 100 * br.min_balance / m->w_prime, spd ? "D'" : "W'", a,
                   br.min_at_s, spd ? 0 : 2, br.end_balance * sc, un, 100 * br.end_balance / m->w_prime,
                   spd ? "D'" : "W'");
        else
            printf("\nlowest balance %.*f %s at %s; end balance %.*f %s (%.0f %% of %s)\n", spd ? 0 : 2,
                   br.min_balance * sc, un, a, spd ? 0 : 2, br.end_balance * sc, un, 100 * br.end_balance / m->w_prime,
                   spd ? "D'" : "W'");
        if (br.failed && in->completed) {
            cpd_format_duration((double)br.failure_at_s, b, sizeof b);
            printf("the balance went below zero at %s and reached %.*f %s (%.0f %% of %s) in a session that was "
                   "completed: %s\n", b, spd ? 0 : 2, br.min_balance * sc, un, 100 * br.min_balance / m->w_prime,
                   spd ? "D'" : "W'", CLI_COMPLETED_BELOW_ZERO);
        } else if (br.failed) {
            cpd_format_duration((double)br.failure_at_s, b, sizeof b);
            printf("predicted task failure at %s (second %zu)\n", b, br.failure_at_s);
        } else
            printf("no task failure predicted\n");
        printf("\nunder each recovery model (* the one used%s):\n", spd ? "; c: constants fitted on cycling power, "
                                                                          "used here for speed" : "");
        for (int q = 0; q < CLI_NBALANCE; q++) {
            if (!has_all[q])
                continue;
            char f0[24] = "none";
            if (ball[q].failed)
                cpd_format_duration((double)ball[q].failure_at_s, f0, sizeof f0);
            printf("  %-13s%s%s end %*.*f %s, lowest %*.*f %s, %s %s\n", cpd_balance_model_name(allm[q]),
                   allm[q] == bm ? "*" : " ", spd && allm[q] != CPD_BALANCE_DIFFERENTIAL ? "c" : " ", 7, spd ? 0 : 2,
                   ball[q].end_balance * sc, un, 7, spd ? 0 : 2, ball[q].min_balance * sc, un,
                   in->completed ? "below zero from" : "task failure", f0);
        }
        if (has_unc[0] && has_unc[1]) {
            printf("with %s at the ends of its 95 %% interval (%s moving with it): end balance %.*f to %.*f %s",
                   spd ? "CS" : "CP", spd ? "D'" : "W'", spd ? 0 : 2, bu[0].end_balance * sc, spd ? 0 : 2,
                   bu[1].end_balance * sc, un);
            if (bu[0].failed || bu[1].failed) {
                char f0[24] = "none", f1[24] = "none";
                if (bu[0].failed)
                    cpd_format_duration((double)bu[0].failure_at_s, f0, sizeof f0);
                if (bu[1].failed)
                    cpd_format_duration((double)bu[1].failure_at_s, f1, sizeof f1);
                printf("; %s %s (low %s) / %s (high %s)", in->completed ? "below zero from" : "failure", f0,
                       spd ? "CS" : "CP", f1, spd ? "CS" : "CP");
            }
            printf("\n");
        } else
            printf("no interval: the fit has no standard errors (fewer than 3 trials)\n");
        if (in->trace_path)
            printf("trace written to %s\n", in->trace_path);
        printf("\n%s\n", CLI_CAUTION);
    }
    free(trace);
    return rc;
}

int cli_predict_protocol(cli_ctx *c, const cli_pd_fit *f, const cpd_pd_model_fit *m, const char *text,
                         const char *balance_model, const char *trace_path, const char *plot_path)
{
    cpd_balance_model bm = CPD_BALANCE_DIFFERENTIAL;
    if (balance_model && cpd_balance_model_parse(balance_model, &bm))
        return cli_usage("predict", "--balance-model: '%s' is not differential, integral or bartram", balance_model);
    cpd_protocol *p = NULL;
    int rc = cli_load_protocol(c, f, text, &p);
    if (rc)
        return rc;
    if (p->has_unknown) {
        cpd_protocol_free(p);
        return cli_usage("predict", "--protocol has a '?': 'cpdomain solve' finds the unknown intensity");
    }
    double *x = malloc(p->total_s * sizeof *x);
    cli_balance_part *parts = malloc((p->n ? p->n : 1) * sizeof *parts);
    if (!x || !parts)
        rc = CPD_ENOMEM;
    else
        rc = cpd_protocol_expand(p, m->cp, 0, x, p->total_s);
    if (rc) {
        int ex = cli_fail(c, rc, "computing the balance: %s", cpd_strerror(rc));
        free(x);
        free(parts);
        cpd_protocol_free(p);
        return ex;
    }
    size_t s0 = 0;
    for (size_t i = 0; i < p->n; i++) {
        parts[i] = (cli_balance_part){s0, p->seg[i].duration_s, x[s0], NULL};
        s0 += p->seg[i].duration_s;
    }
    char heading[96], a[32];
    cpd_format_duration((double)p->total_s, a, sizeof a);
    snprintf(heading, sizeof heading, "protocol of %s in %zu segment%s", a, p->n, p->n == 1 ? "" : "s");
    cli_balance_input in = {x, p->total_s, parts, p->n, heading, "segment",
                            "1-s steps, each second at the protocol's intensity; balance at the end of each second",
                            0, NULL, NULL, trace_path, 0, plot_path};
    rc = cli_balance_report(c, f, m, bm, &in);
    free(x);
    free(parts);
    cpd_protocol_free(p);
    return rc;
}

