/* cmd_history.c: 'history (CODE | --all)': every estimate over the season and which changes are
 * larger than the noise. */
#include "cli_history.h"
#include "cli_pd.h"
#include "commands.h"
#include "cpdomain/plots.h"
#include "cpdomain/history.h"
#include "cpdomain/units.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

static const char HELP[] =
    "usage: cpdomain history (CODE | --all) [--window DAYS] [--model NAME] [--swc PCT] [-o FILE.svg]\n\n"
    "The season: the power-duration fit of every block of trials (a block holds the trials within\n"
    "--window days, default 28, of its first trial), the GET and VO2peak of the ramp nearest each\n"
    "block, and each change from one block to the next with its 95 % interval. CP and W' of both\n"
    "blocks come from the same model (the better of those both support: lowest summed %SEE), and the\n"
    "interval is Student's t with the Welch-Satterthwaite degrees of freedom of the two fits. GET and\n"
    "VO2peak changes use typical errors of 6 % and 3 % (common practice, from memory). A change is\n"
    "meaningful when its interval lies wholly beyond the smallest worthwhile change, --swc PCT of the\n"
    "earlier value (default 4.6 %: 0.2 x the between-athlete SD of CP, Hopkins 2004 Sportscience 8:1,\n"
    "with the SD of Johnson et al. 2011 Med Sci Sports Exerc 43: 47 W of 206 W). That default rests on\n"
    "CP's spread alone, so --swc applies to CP (CS); a change of W', GET, VO2peak or tau is meaningful\n"
    "when its interval excludes zero.\n"
    "--all prints the team: the current CP (the fit domains, predict and the sheets use) and the\n"
    "newest change of every athlete. -o FILE.svg draws CP (CS) of every block with its 95 % interval\n"
    "over the season.\n\n"
    "examples:\n  cpdomain history C02\n  cpdomain --json history --all --window 35\n  cpdomain history C02 -o c02_season.svg\n";

typedef struct {
    const char *window, *model, *swc, *out;
    int all;
} hist_opts;

static int hist_opt(int opt, const char *arg, void *ud)
{
    hist_opts *o = ud;
    switch (opt) {
    case 'w': o->window = arg; break;
    case 'm': o->model = arg; break;
    case 'a': o->all = 1; break;
    case 's': o->swc = arg; break;
    case 'o': o->out = arg; break;
    default: return EX_USAGE;
    }
    return 0;
}

static void change_json(cli_json *o, const char *key, const cpd_history_change *ch)
{
    if (!ch->valid) {
        cj_null(o, key);
        return;
    }
    cli_json *x = cj_add_obj(o, key);
    cj_num(x, "delta", ch->delta);
    cj_pair(x, "ci95", ch->ci95[0], ch->ci95[1]);
    cj_bool(x, "meaningful", ch->meaningful);
    cj_num(x, "swc", ch->swc);
    cj_bool(x, "excludes_zero", ch->excludes_zero);
    cj_num(x, "df", ch->df > 0 ? ch->df : NAN);
    cj_str(x, "model", ch->model_valid ? cpd_pd_model_name(ch->model) : NULL);
}

static void block_json(cli_json *o, const cli_history *a, const cpd_history_block *b)
{
    char from[11], to[11], k[40];
    cpd_pd_modality md = a->f.modality;
    cpd_format_date(b->from_day, from);
    cpd_format_date(b->to_day, to);
    cj_str(o, "from", from);
    cj_str(o, "to", to);
    cj_int(o, "trials", (long long)b->n);
    cj_str(o, "model", b->fitted ? cpd_pd_model_name(b->model) : NULL);
    cj_num(o, cli_pd_key(md, "cp", k, sizeof k), b->fitted ? b->cp : NAN);
    cj_pair(o, cli_pd_key(md, "cp_ci95", k, sizeof k), b->fitted && b->has_se ? b->cp_ci95[0] : NAN, b->cp_ci95[1]);
    cj_num(o, cli_pd_key(md, "w_prime", k, sizeof k), b->fitted ? b->w_prime : NAN);
    cj_pair(o, cli_pd_key(md, "w_prime_ci95", k, sizeof k), b->fitted && b->has_se ? b->w_prime_ci95[0] : NAN,
            b->w_prime_ci95[1]);
    cj_num(o, md == CPD_PD_SPEED ? "get_speed_m_s" : "get_power_w", b->has_get ? b->get : NAN);
    cj_num(o, "vo2peak_ml_min", b->has_vo2peak ? b->vo2peak_ml_min : NAN);
    cj_num(o, "tau_s", b->has_tau ? b->tau_s : NAN);
    cli_json *ch = cj_add_obj(o, "change");
    change_json(ch, cli_pd_key(md, "cp", k, sizeof k), &b->d_cp);
    change_json(ch, cli_pd_key(md, "w_prime", k, sizeof k), &b->d_w_prime);
    change_json(ch, md == CPD_PD_SPEED ? "get_speed_m_s" : "get_power_w", &b->d_get);
    change_json(ch, "vo2peak_ml_min", &b->d_vo2peak);
    change_json(ch, "tau_s", &b->d_tau);
}

static const char *verdict(const cpd_history_change *c)
{
    return !c->valid ? "" : c->meaningful ? "meaningful" : c->excludes_zero ? "not clearly worthwhile" : "within noise";
}

static void print_history(const cli_history *a)
{
    int spd = a->f.modality == CPD_PD_SPEED;
    printf("%s %s: %zu block%s of trials within %d days\n\n", a->f.athlete.code, a->f.athlete.name, a->h->nblocks,
           a->h->nblocks == 1 ? "" : "s", a->win);
    const char *head[] = {"block", "trials", spd ? "CS (m/s)" : "CP (W)", "95 % CI", spd ? "D' (m)" : "W' (kJ)",
                          spd ? "GET (m/s)" : "GET (W)", "VO2peak (mL/min)",
                          spd ? "change in CS (m/s)" : "change in CP (W)", "verdict"};
    cli_table *t = cli_table_new(9, head, "lrrrrrrrl");
    for (size_t k = 0; k < a->h->nblocks; k++) {
        const cpd_history_block *b = &a->h->block[k];
        char span[32], from[11], to[11], n[16], cp[32], ci[64], w[32], g[32], vo[32], d[64], x1[32], x2[32];
        cpd_format_date(b->from_day, from);
        cpd_format_date(b->to_day, to);
        snprintf(span, sizeof span, "%s..%s", from, to + 5);
        snprintf(n, sizeof n, "%zu", b->n);
        cli_num(cp, sizeof cp, b->fitted ? b->cp : NAN, CLI_DEC_INTENSITY(spd));
        if (b->fitted && b->has_se)
            snprintf(ci, sizeof ci, "%s-%s", cli_num(x1, sizeof x1, b->cp_ci95[0], CLI_DEC_INTENSITY(spd)),
                     cli_num(x2, sizeof x2, b->cp_ci95[1], CLI_DEC_INTENSITY(spd)));
        else
            snprintf(ci, sizeof ci, "-");
        cli_num(w, sizeof w, b->fitted ? (spd ? b->w_prime : b->w_prime / 1000) : NAN, spd ? 0 : 2);
        cli_num(g, sizeof g, b->has_get ? b->get : NAN, spd ? 2 : 0);
        cli_num(vo, sizeof vo, b->has_vo2peak ? b->vo2peak_ml_min : NAN, 0);
        if (b->d_cp.valid)
            snprintf(d, sizeof d, "%+.*f (%+.*f to %+.*f)", CLI_DEC_INTENSITY(spd), b->d_cp.delta, CLI_DEC_INTENSITY(spd),
                     b->d_cp.ci95[0], CLI_DEC_INTENSITY(spd),
                     b->d_cp.ci95[1]);
        else
            snprintf(d, sizeof d, "-");
        const char *row[] = {span, n, cp, ci, w, g, vo, d, verdict(&b->d_cp)};
        cli_table_row(t, row);
    }
    cli_table_print(t);
    printf("(CP per block from its own best model; each change from the model both blocks support best)\n");
    for (size_t k = 1; k < a->h->nblocks; k++) {
        const cpd_history_block *b = &a->h->block[k];
        printf("block %zu against the one before:", k + 1);
        if (b->d_cp.valid && b->d_cp.model_valid)
            printf(" %s %+.*f %s by the %s model in both%s%.1f);", spd ? "CS" : "CP", spd ? 2 : 1, b->d_cp.delta,
                   spd ? "m/s" : "W", cpd_pd_model_name(b->d_cp.model), b->d_cp.df > 0 ? " (t interval, df " : " (",
                   b->d_cp.df);
        if (b->d_w_prime.valid)
            printf(" %s %+.*f %s (%s);", spd ? "D'" : "W'", spd ? 0 : 2, spd ? b->d_w_prime.delta : b->d_w_prime.delta / 1000,
                   spd ? "m" : "kJ", verdict(&b->d_w_prime));
        if (b->d_get.valid)
            printf(" GET %+.*f %s (%s);", spd ? 2 : 0, b->d_get.delta, spd ? "m/s" : "W", verdict(&b->d_get));
        if (b->d_vo2peak.valid)
            printf(" VO2peak %+.0f mL/min (%s);", b->d_vo2peak.delta, verdict(&b->d_vo2peak));
        if (b->d_tau.valid)
            printf(" tau %+.1f s (%s);", b->d_tau.delta, verdict(&b->d_tau));
        printf("\n");
    }
    printf("\nA change is meaningful when its 95 %% interval lies wholly beyond the smallest worthwhile change of\n"
           "%.1f %% of the earlier value (--swc; default 0.2 x the between-athlete SD, Hopkins 2004); the interval is\n"
           "Student's t with the Welch-Satterthwaite dof of the two fits (typical errors of 6 %% for the GET and\n"
           "3 %% for VO2peak, from memory). \"not clearly worthwhile\": the interval excludes zero, not the SWC.\n",
           a->h->swc_pct > 0 ? a->h->swc_pct : CPD_HISTORY_SWC_PCT);
}

int cmd_history(cli_ctx *c, int argc, char **argv)
{
    static const struct option lo[] = {
        {"window", required_argument, NULL, 'w'}, {"model", required_argument, NULL, 'm'},
        {"all", no_argument, NULL, 'a'},          {"help", no_argument, NULL, 'h'},
        {"swc", required_argument, NULL, 's'},    {"output", required_argument, NULL, 'o'}, {NULL, 0, NULL, 0},
    };
    hist_opts o = {0};
    int first = 0, done = 0;
    int rc = cli_getopt(argc, argv, "ho:", lo, HELP, hist_opt, &o, &first, &done);
    if (rc || done)
        return rc;
    if (o.out && (o.all || (rc = cli_plot_path("history", o.out))))
        return rc ? rc : cli_usage("history", "-o draws one athlete's season: give CODE, not --all");
    if (o.all ? argc - first != 0 : argc - first != 1)
        return cli_usage("history", o.all ? "--all takes no CODE" : "give CODE or --all");
    int win = CPD_HISTORY_WINDOW_DAYS;
    if (o.window) {
        double v = 0;
        if ((rc = cli_number("--window", o.window, &v)))
            return rc;
        if (!(v >= 1 && v <= 365) || v != floor(v))
            return cli_usage("history", "--window must be a whole number of days from 1 to 365");
        win = (int)v;
    }
    cpd_pd_model m;
    if (o.model && cpd_pd_model_parse(o.model, &m))
        return cli_usage("history", "--model: '%s' is not a model", o.model);
    double swc = 0;
    if (o.swc && (rc = cli_ranged("--swc", o.swc, 0.1, 50, "%", 0, &swc)))
        return rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    if (!o.all) {
        cli_history a;
        if ((rc = cli_history_build(c, argv[first], win, o.model, 0, &a)))
            return rc;
        a.h->swc_pct = swc;
        cpd_history_changes(a.h);
        if (o.out) { /* -o FILE.svg: CP (CS) of every block with its interval, as on the sheet */
            char *svg = NULL;
            int prc = cli_history_plot(&a, &svg);
            rc = prc ? cli_fail(c, prc, "-o %s: no plot: %s", o.out, cpd_strerror(prc))
                     : cli_write_file(c, o.out, svg, strlen(svg));
            free(svg);
            if (rc) {
                cli_history_free(&a);
                return rc;
            }
            cli_note(c, "wrote %s", o.out);
        }
        if (c->json || c->csv) {
            cli_json *d = cj_obj();
            cj_str(d, "athlete", a.f.athlete.code);
            cj_str(d, "modality", a.f.modality == CPD_PD_SPEED ? "speed" : "power");
            cj_int(d, "window_days", win);
            cli_json *bs = cj_add_arr(d, "blocks");
            for (size_t k = 0; k < a.h->nblocks; k++) {
                cli_json *b = cj_obj();
                block_json(b, &a, &a.h->block[k]);
                cj_push(bs, b);
            }
            cj_num(d, "swc_pct", swc > 0 ? swc : CPD_HISTORY_SWC_PCT);
            cj_str(d, "rule", "a change of CP (CS) is meaningful when its 95 % interval lies wholly beyond the "
                              "smallest worthwhile change (swc_pct of the earlier value; default 0.2 x the between-"
                              "athlete SD of CP, Hopkins 2004 Sportscience 8:1); of W', GET, VO2peak and tau when it "
                              "excludes zero. CP and W': the same model in both blocks (lowest "
                              "summed %SEE), Student's t with Welch-Satterthwaite dof; GET and VO2peak: +-1.96 x "
                              "sqrt(2) typical errors of 6 % and 3 %");
            rc = c->csv ? cj_print_csv(d, "blocks", a.f.modality == CPD_PD_SPEED ? CLI_CSV_UNITS_SPEED : CLI_CSV_UNITS_POWER)
                        : cj_print(d);
        } else
            print_history(&a);
        cli_history_free(&a);
        return rc;
    }
    cpd_athlete *v = NULL;
    size_t n = 0;
    if ((rc = cpd_store_athlete_list(c->store, &v, &n)))
        return cli_store_fail(c, rc);
    cli_json *doc = c->json ? cj_obj() : NULL;
    cli_json *arr = doc ? cj_add_arr(doc, "athletes") : NULL;
    cli_table *t = NULL;
    if (!doc) {
        static const char *const head[] = {"code", "blocks", "newest block", "current CP (W) or CS (m/s)", "change", "verdict"};
        t = cli_table_new(6, head, "lrlrrl");
    }
    char k2[40];
    for (size_t i = 0; i < n; i++) {
        cli_history a;
        int r2 = cli_history_build(c, v[i].code, win, o.model, 1, &a);
        if (r2) /* too few trials: listed without blocks */
            continue;
        a.h->swc_pct = swc;
        cpd_history_changes(a.h);
        /* the current CP: the fit domains, predict and the sheets use, so that the team table and the
         * sheets agree */
        double cur = NAN;
        cli_pd_fit cf;
        size_t older = 0;
        int q0 = c->quiet;
        c->quiet = 1;
        c->mute++;
        if (cli_pd_load_current(c, v[i].code, NULL, NULL, CPD_PD_ALL_MODELS, &cf, &older) == 0) {
            const cpd_pd_result *cr = cf.res;
            cpd_pd_model cm = cr->best;
            if (o.model)
                cpd_pd_model_parse(o.model, &cm);
            if ((o.model || cr->has_best) && cr->models[cm].ok)
                cur = cr->models[cm].cp;
            cli_pd_fit_free(&cf);
        }
        c->mute--;
        c->quiet = q0;
        const cpd_history_block *b = a.h->nblocks ? &a.h->block[a.h->nblocks - 1] : NULL;
        if (doc) {
            cli_json *x = cj_obj();
            cj_str(x, "athlete", a.f.athlete.code);
            cj_num(x, cli_pd_key(a.f.modality, "current_cp", k2, sizeof k2), cur);
            cli_json *bs = cj_add_arr(x, "blocks");
            for (size_t k = 0; k < a.h->nblocks; k++) {
                cli_json *bj = cj_obj();
                block_json(bj, &a, &a.h->block[k]);
                cj_push(bs, bj);
            }
            cj_push(arr, x);
        } else if (b) {
            char nb[16], span[32], from[11], to[11], cp[32], d[48];
            snprintf(nb, sizeof nb, "%zu", a.h->nblocks);
            cpd_format_date(b->from_day, from);
            cpd_format_date(b->to_day, to);
            snprintf(span, sizeof span, "%s..%s", from, to);
            cli_num(cp, sizeof cp, cur, CLI_DEC_INTENSITY(a.f.modality == CPD_PD_SPEED));
            if (b->d_cp.valid)
                snprintf(d, sizeof d, "%+.*f", CLI_DEC_INTENSITY(a.f.modality == CPD_PD_SPEED), b->d_cp.delta);
            else
                snprintf(d, sizeof d, "-");
            const char *row[] = {a.f.athlete.code, nb, span, cp, d, verdict(&b->d_cp)};
            cli_table_row(t, row);
        }
        cli_history_free(&a);
    }
    free(v);
    if (doc)
        return cj_print(doc);
    cli_table_print(t);
    return 0;
}
