/* cmd_fit.c: 'fit' (the power-duration models, saved with the trials they used) and 'predict'
 * (time to task failure, or the intensity for a duration or a distance). */
#include "cli_domains.h"
#include "cli_pd.h"
#include "commands.h"
#include "cpdomain/plots.h"
#include "cpdomain/units.h"
#include "cpdomain/version.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sysexits.h>

static const char HELP_FIT[] =
    "usage: cpdomain fit CODE [--model NAME|all] [--from D] [--to D] [--source trials|curve]\n"
    "                         [--durations LIST] [-o FILE.svg]\n\n"
    "Fits the power-duration (speed-duration) models to the athlete's trials that are not excluded:\n"
    "  hyperbolic       t = W'/(P - CP), least squares on the measured duration\n"
    "  linear-total     W = CP*t + W' (distance D = CS*t + D')\n"
    "  linear-inverse   P = W'*(1/t) + CP\n"
    "  three-parameter  t = W'/(P - CP) - W'/(Pmax - CP), needs 4 trials\n"
    "Each model is shown with standard errors, 95 % confidence intervals (t distribution), %SEE,\n"
    "residuals and leave-one-out influence; the best model is named by a stated rule and the fit\n"
    "is saved in the store with the trials it used. Distance trials count as their mean speed.\n"
    "--model picks one model (default all); --from/--to restrict the trial dates (YYYY-MM-DD).\n"
    "--source curve fits the same models to points of the mean-maximal curve of the recorded\n"
    "sessions dated --from/--to instead (a field estimate: efforts may be submaximal), at the\n"
    "durations of --durations (default 3min,5min,12min,20min: inside the 2-20 min window where the\n"
    "power-duration relation holds); the fit is saved with source 'curve'.\n"
    "-o FILE.svg draws the best model (or the one --model names) with its 95 % band and the trials.\n\n"
    "examples:\n  cpdomain fit C03\n  cpdomain --json fit R01 --model all --from 2026-09-01\n"
    "  cpdomain fit C02 --source curve --from 2026-11-01 --durations 3min,5min,12min\n"
    "  cpdomain fit C01 -o c01_fit.svg\n";

static const char HELP_PREDICT[] =
    "usage: cpdomain predict CODE (--power W | --speed M_S | --duration T | --distance M |\n"
    "                              --protocol SPEC | --session ID) [--balance-model NAME] [--trace FILE.csv]\n"
    "                              [--model NAME] [--from D] [--to D] [-o FILE.svg]\n\n"
    "From the athlete's current fit (the best model unless --model):\n"
    "  --power W / --speed M_S   time to task failure t = W'/(P - CP) with its 95 % interval;\n"
    "                            at or below CP (CS) no W'-limited failure is predicted\n"
    "  --duration T              the power (speed) that can be held for T, with its 95 % interval\n"
    "  --distance M              runners and swimmers: the predicted time for the distance\n"
    "  --protocol SPEC           the W' (D') balance through a session, second by second: its lowest\n"
    "                            point, the end balance and the predicted failure time, if any;\n"
    "                            --balance-model differential (default), integral or bartram;\n"
    "                            --trace writes time_s,intensity,balance per second to a CSV file;\n"
    "                            -o FILE.svg draws the balance over the session's intensity\n"
    "                            SPEC: DURATION@INTENSITY segments separated by ';' or ',', Nx(...)\n"
    "                            repeats; intensities 350W, 105%CP, 4.6m/s, 3:35/km, 1:20/100m\n"
    "  --session ID              the same balance through a stored session ('session list'), replayed\n"
    "                            second by second; a gap of more than 5 s (a pause, or a dropout that\n"
    "                            split the session) counts as rest at 0 W (0 m/s) for its whole length\n\n"
    "examples:\n  cpdomain predict C03 --power 350\n  cpdomain --json predict R01 --distance 5000\n"
    "  cpdomain predict C03 --protocol \"10min@150W; 5x(3min@340W, 3min@140W)\" --trace c03.csv\n"
    "  cpdomain predict C03 --duration 8min --model linear-total\n"
    "  cpdomain --json predict C02 --session 16 --balance-model integral\n"
    "  cpdomain predict C01 --protocol \"10min@150W; 4x(3min@300W, 3min@120W)\" -o c01_session.svg\n";

typedef struct {
    const char *model, *from, *to, *power, *speed, *duration, *distance, *protocol, *bmodel, *trace;
    const char *source, *durations, *session; /* fit --source curve --durations; predict --session */
    const char *out;                          /* -o FILE.svg */
} fit_opts;

static int fit_opt(int opt, const char *arg, void *ud)
{
    fit_opts *o = ud;
    switch (opt) {
    case 'm': o->model = arg; break;
    case 'f': o->from = arg; break;
    case 't': o->to = arg; break;
    case 'p': o->power = arg; break;
    case 's': o->speed = arg; break;
    case 'd': o->duration = arg; break;
    case 'D': o->distance = arg; break;
    case 'P': o->protocol = arg; break;
    case 'b': o->bmodel = arg; break;
    case 'T': o->trace = arg; break;
    case 'S': o->source = arg; break;
    case 'U': o->durations = arg; break;
    case 'I': o->session = arg; break;
    case 'o': o->out = arg; break;
    default: return EX_USAGE;
    }
    return 0;
}

static const struct option fit_longopts[] = {
    {"model", required_argument, NULL, 'm'},    {"from", required_argument, NULL, 'f'},
    {"to", required_argument, NULL, 't'},       {"power", required_argument, NULL, 'p'},
    {"speed", required_argument, NULL, 's'},    {"duration", required_argument, NULL, 'd'},
    {"distance", required_argument, NULL, 'D'}, {"help", no_argument, NULL, 'h'},
    {"protocol", required_argument, NULL, 'P'}, {"balance-model", required_argument, NULL, 'b'},
    {"trace", required_argument, NULL, 'T'},
    {"source", required_argument, NULL, 'S'},   {"durations", required_argument, NULL, 'U'},
    {"session", required_argument, NULL, 'I'},
    {"output", required_argument, NULL, 'o'},
    {NULL, 0, NULL, 0},
};

/* Parses the common options: exactly one CODE; dates valid; model known. -1 after --help. */
static int parse(int argc, char **argv, const char *help, fit_opts *o, int *first, unsigned *mask)
{
    int done = 0;
    memset(o, 0, sizeof *o);
    int rc = cli_getopt(argc, argv, "ho:", fit_longopts, help, fit_opt, o, first, &done);
    if (rc)
        return rc;
    if (done)
        return -1;
    if (argc - *first < 1)
        return cli_usage(argv[0], "missing argument CODE");
    if (argc - *first > 1)
        return cli_usage(argv[0], "unexpected argument '%s'", argv[*first + 1]);
    int d = 0;
    if (o->from && cpd_parse_date(o->from, &d))
        return cli_usage(argv[0], "--from: '%s' is not a date (YYYY-MM-DD)", o->from);
    if (o->to && cpd_parse_date(o->to, &d))
        return cli_usage(argv[0], "--to: '%s' is not a date (YYYY-MM-DD)", o->to);
    if (o->from && o->to && strcmp(o->from, o->to) > 0)
        return cli_usage(argv[0], "--from %s is after --to %s", o->from, o->to);
    *mask = CPD_PD_ALL_MODELS;
    if (o->model && strcmp(o->model, "all") != 0) {
        cpd_pd_model m;
        if (cpd_pd_model_parse(o->model, &m))
            return cli_usage(argv[0], "--model: '%s' is not a model (hyperbolic, linear-total, linear-inverse, "
                             "three-parameter%s)", o->model, strcmp(argv[0], "fit") == 0 ? " or all" : "");
        *mask = CPD_PD_MODEL_BIT(m);
    }
    return 0;
}

/* Formats an intensity for people: W as integer-ish, speed as m/s with pace. */
static const char *fmt_intensity(const cli_pd_fit *f, double v, char *buf, size_t n)
{
    char num[32];
    if (f->modality == CPD_PD_POWER)
        snprintf(buf, n, "%s W", cli_num(num, sizeof num, v, CLI_DEC_INTENSITY(0)));
    else {
        const char *lab;
        double per = cli_pd_pace_m(&f->athlete, &lab);
        char pace[32];
        cpd_format_pace(v, per, pace, sizeof pace);
        snprintf(buf, n, "%s m/s (%s%s)", cli_num(num, sizeof num, v, CLI_DEC_INTENSITY(1)), pace, lab);
    }
    return buf;
}

static void print_fit(const cli_pd_fit *f, unsigned mask)
{
    const cpd_pd_result *r = f->res;
    int spd = f->modality == CPD_PD_SPEED;
    printf("%s %s: %s-duration fit of %zu %s, %s to %s\n\n", f->athlete.code, f->athlete.name,
           spd ? "speed" : "power", f->n, f->from_curve ? "mean-maximal curve points (a field estimate)" : "trials",
           f->trials[0].date, f->trials[f->n - 1].date);
    const char *head[] = {"model", spd ? "CS (m/s)" : "CP (W)", "95 % CI", spd ? "D' (m)" : "W' (kJ)", "95 % CI",
                          spd ? "vmax (m/s)" : "Pmax (W)", "%SEE CP", "%SEE W'", "R2", "status"};
    if (spd) {
        head[6] = "%SEE CS";
        head[7] = "%SEE D'";
    }
    cli_table *t = cli_table_new(10, head, "lrrrrrrrrl");
    double wsc = spd ? 1.0 : 1e-3; /* W' shown in kJ */
    int cpd_dec = CLI_DEC_INTENSITY(spd), wd = spd ? 0 : 2;
    for (int k = 0; k < CPD_PD_NMODELS; k++) {
        if (!(mask & CPD_PD_MODEL_BIT(k)))
            continue;
        const cpd_pd_model_fit *m = &r->models[k];
        char name[40], cp[32], cpci[64], w[32], wci[64], pm[32], s1[16], s2[16], r2[16], st[160];
        char a[32], b[32];
        snprintf(name, sizeof name, "%s%s", cpd_pd_model_name((cpd_pd_model)k), r->has_best && r->best == (cpd_pd_model)k ? " *" : "");
        if (m->ok) {
            cli_num(cp, sizeof cp, m->cp, cpd_dec);
            cli_num(w, sizeof w, m->w_prime * wsc, wd);
            if (m->has_se) {
                /* "a-b" reads badly when a is negative: then "a to b" */
                snprintf(cpci, sizeof cpci, "%s%s%s", cli_num(a, sizeof a, m->cp_ci95[0], cpd_dec),
                         m->cp_ci95[0] < 0 ? " to " : "-", cli_num(b, sizeof b, m->cp_ci95[1], cpd_dec));
                snprintf(wci, sizeof wci, "%s%s%s", cli_num(a, sizeof a, m->w_prime_ci95[0] * wsc, wd),
                         m->w_prime_ci95[0] < 0 ? " to " : "-", cli_num(b, sizeof b, m->w_prime_ci95[1] * wsc, wd));
            } else {
                snprintf(cpci, sizeof cpci, "-");
                snprintf(wci, sizeof wci, "-");
            }
            if (m->has_p_max)
                cli_num(pm, sizeof pm, m->p_max, spd ? 2 : 0);
            else
                snprintf(pm, sizeof pm, "-");
            cli_num(s1, sizeof s1, m->see_valid ? m->see_cp_pct : NAN, 1);
            cli_num(s2, sizeof s2, m->see_valid ? m->see_w_prime_pct : NAN, 1);
            cli_num(r2, sizeof r2, m->r2, 4);
            snprintf(st, sizeof st, "%s", m->flags & ~(CPD_PD_FLAG_FEW_TRIALS | CPD_PD_FLAG_TWO_TRIALS_EXACT) ? "flagged" : "ok");
        } else {
            snprintf(cp, sizeof cp, "-");
            snprintf(cpci, sizeof cpci, "-");
            snprintf(w, sizeof w, "-");
            snprintf(wci, sizeof wci, "-");
            snprintf(pm, sizeof pm, "-");
            snprintf(s1, sizeof s1, "-");
            snprintf(s2, sizeof s2, "-");
            snprintf(r2, sizeof r2, "-");
            snprintf(st, sizeof st, "failed: %s", cpd_pd_fail_text(m->fail));
        }
        const char *row[] = {name, cp, cpci, w, wci, pm, s1, s2, r2, st};
        cli_table_row(t, row);
    }
    cli_table_print(t);
    if (r->has_best) {
        const cpd_pd_model_fit *m = &r->models[r->best];
        char buf[64];
        printf("\n* best: %s  %s = %s", cpd_pd_model_name(r->best), spd ? "CS" : "CP", fmt_intensity(f, m->cp, buf, sizeof buf));
        if (spd)
            printf(", D' = %.0f m\n", m->w_prime);
        else
            printf(", W' = %.2f kJ\n", m->w_prime / 1000);
        if (f->time_trials)
            printf("  (%s)\n", CLI_TIME_TRIAL_RULE);
        else
            printf("  (lowest combined %%SEE among valid fits; the rule in full: cpdomain --json fit %s, key best_rule)\n",
                   f->athlete.code);

        printf("\n%s, %s model:\n", f->from_curve ? "curve points" : "trials", cpd_pd_model_name(r->best));
        const char *th[] = {f->from_curve ? "session" : "id", "date", spd ? "speed" : "power", "duration", "residual", "resid %",
                            spd ? "dCS if dropped" : "dCP if dropped", spd ? "dD' if dropped" : "dW' if dropped"};
        cli_table *tt = cli_table_new(8, th, "rlrrrrrr");
        for (size_t i = 0; i < f->n; i++) {
            char id[24], x[64], du[24], rs[24], rp[24], lc[24], lw[24];
            snprintf(id, sizeof id, "%lld", (long long)f->trials[i].id);
            fmt_intensity(f, f->x[i], x, sizeof x);
            cpd_format_duration(f->t[i], du, sizeof du);
            if (m->resid_valid[i]) {
                snprintf(rs, sizeof rs, "%+.1f s", m->resid_s[i]);
                snprintf(rp, sizeof rp, "%+.1f", m->resid_pct[i]);
            } else {
                snprintf(rs, sizeof rs, "-");
                snprintf(rp, sizeof rp, "-");
            }
            if (m->has_loo && m->loo_valid[i]) {
                snprintf(lc, sizeof lc, "%+.*f", spd ? 3 : 1, m->loo_d_cp[i]);
                snprintf(lw, sizeof lw, spd ? "%+.0f m" : "%+.2f kJ", m->loo_d_w_prime[i] * wsc);
            } else {
                snprintf(lc, sizeof lc, "-");
                snprintf(lw, sizeof lw, "-");
            }
            const char *row[] = {id, f->trials[i].date, x, du, rs, rp, lc, lw};
            cli_table_row(tt, row);
        }
        cli_table_print(tt);
    } else {
        printf("\nno model qualifies as best: read the flags below before using any estimate\n");
    }
    if (r->flags) {
        printf("\nflags:\n");
        cli_pd_flags_print(r->flags, f->modality);
    }
    for (int k = 0; k < CPD_PD_NMODELS; k++) {
        const cpd_pd_model_fit *m = &r->models[k];
        if (!(mask & CPD_PD_MODEL_BIT(k)) || (r->has_best && r->best == (cpd_pd_model)k))
            continue;
        unsigned extra = m->flags & ~r->flags;
        if (extra) {
            printf("%s model:\n", cpd_pd_model_name((cpd_pd_model)k));
            cli_pd_flags_print(extra, f->modality);
        }
    }
}

/* fit -o FILE.svg: the best model (or the only one asked for) over the trials, with its band. */
static int fit_plot(cli_ctx *c, const cli_pd_fit *f, unsigned mask, const char *path)
{
    const cpd_pd_result *r = f->res;
    int k = mask == CPD_PD_ALL_MODELS && r->has_best ? (int)r->best : -1;
    for (int j = 0; k < 0 && j < CPD_PD_NMODELS; j++)
        if ((mask & CPD_PD_MODEL_BIT(j)) && r->models[j].ok)
            k = j;
    if (k < 0)
        return cli_fail(c, CPD_ENODATA, "-o %s: no model fitted, so there is nothing to draw", path);
    char *svg = NULL;
    int rc = cpd_plot_pd(&r->models[k], f->x, f->t, f->n, NULL, &svg);
    if (rc)
        return cli_fail(c, rc, "-o %s: no plot: %s", path, cpd_strerror(rc));
    rc = cli_write_file(c, path, svg, strlen(svg));
    free(svg);
    if (!rc)
        cli_note(c, "wrote %s", path);
    return rc;
}

static int cmd_fit_run(cli_ctx *c, int argc, char **argv)
{
    fit_opts o;
    int first = 0;
    unsigned mask = 0;
    int rc = parse(argc, argv, HELP_FIT, &o, &first, &mask);
    if (rc)
        return rc < 0 ? 0 : rc;
    if (o.power || o.speed || o.duration || o.distance || o.protocol || o.bmodel || o.trace || o.session)
        return cli_usage("fit", "--power, --speed, --duration, --distance, --protocol and --session belong to 'predict'");
    int curve = o.source && strcmp(o.source, "curve") == 0;
    if (o.source && !curve && strcmp(o.source, "trials") != 0)
        return cli_usage("fit", "--source must be trials or curve");
    if (o.durations && !curve)
        return cli_usage("fit", "--durations goes with --source curve");
    if (o.out && (rc = cli_plot_path("fit", o.out)))
        return rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    cli_pd_fit f;
    if ((rc = curve ? cli_pd_load_curve_fit(c, argv[first], o.from, o.to, o.durations, mask, &f)
                    : cli_pd_load_fit(c, argv[first], o.from, o.to, mask, &f)))
        return rc;
    const cpd_pd_result *r = f.res;
    /* without dates over several blocks the fit pools them: say so, and name the current block that
     * domains, predict, solve and the sheets use */
    char cur_from[11] = "", pooled[320] = "";
    size_t cur_n = !curve && !o.from && !o.to ? cli_pd_newest_block(&f, cur_from) : 0;
    if (cur_n)
        snprintf(pooled, sizeof pooled,
                 "these %zu trials from %s to %s span more than one block (trials within %d days): this fit pools "
                 "them. domains, predict, solve and the sheets use the current block, the %zu trials from %s: "
                 "cpdomain fit %s --from %s; cpdomain history %s shows every block",
                 f.n, f.trials[0].date, f.trials[f.n - 1].date, CLI_PD_BLOCK_DAYS, cur_n, cur_from, f.athlete.code,
                 cur_from, f.athlete.code);

    /* one JSON document per model: printed, and saved as the model's detail */
    cli_json *doc = cj_obj();
    cj_str(doc, "athlete", f.athlete.code);
    cj_str(doc, "modality", f.modality == CPD_PD_SPEED ? "speed" : "power");
    cj_str(doc, "best", r->has_best ? cpd_pd_model_name(r->best) : NULL);
    cj_str(doc, "best_rule", f.time_trials ? CLI_TIME_TRIAL_RULE : cpd_pd_best_rule());
    cj_bool(doc, "time_trials", f.time_trials);
    cj_str(doc, "from", f.trials[0].date);
    cj_str(doc, "to", f.trials[f.n - 1].date);
    cj_str(doc, "source", curve ? "curve" : "trials");
    cj_bool(doc, "pooled_blocks", cur_n > 0);
    cj_str(doc, "current_block_from", cur_n ? cur_from : NULL);
    cj_str(doc, "pooled_note", cur_n ? pooled : NULL);
    if (curve)
        cj_bool(doc, "field_estimate", 1);
    cli_json *models = cj_add_arr(doc, "models");
    cpd_fit_model_rec rec[CPD_PD_NMODELS];
    char *detail[CPD_PD_NMODELS] = {0};
    size_t nrec = 0;
    for (int k = 0; k < CPD_PD_NMODELS; k++) {
        if (!(mask & CPD_PD_MODEL_BIT(k)))
            continue;
        const cpd_pd_model_fit *m = &r->models[k];
        cli_json *mo = cj_obj();
        cli_pd_model_json(mo, &f, m);
        detail[nrec] = cj_render(mo);
        rec[nrec] = (cpd_fit_model_rec){cpd_pd_model_name((cpd_pd_model)k), m->ok, m->cp, m->cp_se, m->w_prime,
                                        m->w_prime_se, m->p_max, m->p_max_se, m->has_se, m->has_p_max, detail[nrec]};
        nrec++;
        cj_push(models, mo);
    }
    cli_json *fl = cj_add_arr(doc, "flags");
    cli_pd_flags_json(fl, r->flags, f.modality);
    cli_json *notes = cj_add_arr(doc, "flag_notes");
    for (unsigned b = 0; b < CPD_PD_NFLAGS; b++)
        if (r->flags & (1u << b))
            cj_push_str(notes, cpd_pd_flag_text(1u << b, f.modality));
    if (curve) { /* not a pd.h flag: it says where the data came from, not how they fit */
        cj_push_str(fl, "field_estimate");
        cj_push_str(notes, CLI_FIELD_ESTIMATE);
    }

    cpd_fit_run run;
    memset(&run, 0, sizeof run);
    snprintf(run.athlete, sizeof run.athlete, "%s", f.athlete.code);
    snprintf(run.source, sizeof run.source, "%s", curve ? "curve" : "trials");
    snprintf(run.modality, sizeof run.modality, "%s", f.modality == CPD_PD_SPEED ? "speed" : "power");
    snprintf(run.date_from, sizeof run.date_from, "%s", f.trials[0].date);
    snprintf(run.date_to, sizeof run.date_to, "%s", f.trials[f.n - 1].date);
    run.n = f.n;
    snprintf(run.best, sizeof run.best, "%s", r->has_best ? cpd_pd_model_name(r->best) : "");
    for (unsigned b = 0; b < CPD_PD_NFLAGS; b++)
        if (r->flags & (1u << b)) {
            size_t L = strlen(run.flags);
            snprintf(run.flags + L, sizeof run.flags - L, "%s%s", L ? "," : "", cpd_pd_flag_name(1u << b, f.modality));
        }
    if (curve) {
        size_t L = strlen(run.flags);
        snprintf(run.flags + L, sizeof run.flags - L, "%sfield_estimate", L ? "," : "");
    }
    snprintf(run.tool_version, sizeof run.tool_version, "%s", CPDOMAIN_VERSION);
    /* a curve fit keeps no trial ids: each model's detail JSON names the session of every point */
    int64_t *ids = calloc(f.n, sizeof *ids);
    for (size_t i = 0; ids && i < f.n; i++)
        ids[i] = f.trials[i].id;
    rc = ids ? CPD_OK : CPD_ENOMEM;
    if (!rc)
        rc = cpd_store_begin(c->store);
    if (!rc)
        rc = cpd_store_fit_save(c->store, &run, rec, nrec, ids, curve ? 0 : f.n);
    if (!rc)
        rc = cpd_store_commit(c->store);
    free(ids);
    for (size_t i = 0; i < nrec; i++)
        cj_render_free(detail[i]);
    if (rc) {
        cj_free(doc);
        cli_pd_fit_free(&f);
        return cli_store_fail(c, rc);
    }
    cj_int(doc, "fit_id", run.id);
    if (c->csv) {
        rc = cj_print_csv(doc, "models", f.modality == CPD_PD_SPEED ? CLI_CSV_UNITS_SPEED : CLI_CSV_UNITS_POWER);
    } else if (c->json) {
        rc = cj_print(doc);
    } else {
        cj_free(doc);
        print_fit(&f, mask);
        if (cur_n)
            printf("\nnote: %s\n", pooled);
        if (curve)
            printf("\n%s\n", CLI_FIELD_ESTIMATE);
        printf("\nsaved as fit %lld\n", (long long)run.id);
    }
    if (o.out && !rc)
        rc = fit_plot(c, &f, mask, o.out);
    cli_pd_fit_free(&f);
    return rc;
}

/* The domain of a constant intensity against the athlete's boundaries (domains module, same
 * model and dates); without a GET on file, below CP is "moderate-or-heavy". */
#define CLI_CANNOT_TELL "heavy or severe: the data cannot tell"
#define CLI_NEAR_CP_NOTE                                                                                      \
    "the intensity lies inside the 95 % interval of the critical intensity: it may be sustainable for a long "  \
    "time (heavy domain) or lead to task failure (severe); the lower bound takes the critical intensity at its " \
    "lower 95 % bound. Do not plan on the point estimate"
#define CLI_RUN_LONG_S 1800.0 /* running predictions beyond about 30 min carry the long-event caution */
#define CLI_RUN_LONG_CAUTION                                                                                   \
    "in running events longer than about 30 min the sustainable speed falls below CS (recreational "          \
    "marathoners ran their marathon below their CS: Smyth & Muniz-Pumares 2020 Med Sci Sports Exerc "     \
    "52:2637); the CS model does not predict such events"

static const char *domain_of(cli_ctx *c, const cli_pd_fit *f, cpd_pd_model which, const char *from, const char *to,
                             const cpd_pd_model_fit *m, double x)
{
    cli_domains d;
    int quiet = c->quiet;
    c->quiet = 1;
    c->mute++;
    int rc = cli_domains_build(c, f->athlete.code, from, to, cpd_pd_model_name(which), 0, &d);
    c->mute--;
    c->quiet = quiet;
    if (rc)
        return x > m->cp ? "severe" : "moderate-or-heavy";
    cpd_domain k = cpd_domains_classify(&d.res, x);
    int band = d.res.has_uncertain && x >= d.res.uncertain.lo && x <= d.res.uncertain.hi;
    cli_domains_free(&d);
    if (band)
        return CLI_CANNOT_TELL;
    return k == CPD_DOM_N ? "moderate-or-heavy" : cpd_domain_name(k);
}

static int cmd_predict_run(cli_ctx *c, int argc, char **argv)
{
    fit_opts o;
    int first = 0;
    unsigned mask = 0;
    int rc = parse(argc, argv, HELP_PREDICT, &o, &first, &mask);
    if (rc)
        return rc < 0 ? 0 : rc;
    int nq = (o.power != NULL) + (o.speed != NULL) + (o.duration != NULL) + (o.distance != NULL) + (o.protocol != NULL) +
             (o.session != NULL);
    if (nq != 1)
        return cli_usage("predict", "give exactly one of --power, --speed, --duration, --distance, --protocol and --session");
    if ((o.bmodel || o.trace || o.out) && !o.protocol && !o.session)
        return cli_usage("predict", "--balance-model, --trace and -o go with --protocol or --session");
    if (o.out && (rc = cli_plot_path("predict", o.out)))
        return rc;
    if (o.source || o.durations)
        return cli_usage("predict", "--source and --durations belong to 'fit'");
    long long session_id = 0;
    if (o.session && (rc = cli_id("--session", o.session, &session_id)))
        return rc;
    double q = 0;
    if (o.protocol || o.session)
        rc = 0;
    else if (o.duration)
        rc = cli_duration("--duration", o.duration, &q);
    else
        rc = cli_quantity(o.power ? "--power" : o.speed ? "--speed" : "--distance",
                          o.power ? o.power : o.speed ? o.speed : o.distance, o.power ? "W" : o.speed ? "m/s" : "m", &q);
    if (rc)
        return rc;
    const cpd_range *rg = o.power ? &CPD_RANGE_POWER : o.speed ? &CPD_RANGE_SPEED : o.distance ? &CPD_RANGE_DISTANCE
                                                                                          : &CPD_RANGE_DURATION;
    if (!o.protocol && !o.session && !cpd_in_range(rg, q)) {
        char m[CPD_MSG_MAX];
        cpd_range_msg(rg, q, m, sizeof m);
        return cli_usage("predict", "%s", m);
    }
    if ((rc = cli_open(c, 0)))
        return rc;
    /* a recorded session is replayed against the fit current on its day: trials up to its date */
    const char *to = o.to;
    cpd_session_rec srec;
    if (o.session && !o.from && !o.to) {
        if ((rc = cpd_store_session_get(c->store, session_id, 0, &srec, NULL)))
            return cli_store_fail(c, rc);
        if (strcasecmp(srec.athlete, argv[first]) != 0)
            return cli_fail(c, CPD_EDATA, "session %lld belongs to %s, not to %s", session_id, srec.athlete, argv[first]);
        to = srec.date;
    }
    cli_pd_fit f;
    size_t older = 0;
    if ((rc = cli_pd_load_current(c, argv[first], o.from, to, o.model ? mask : CPD_PD_ALL_MODELS, &f, &older)))
        return rc;
    if (older)
        cli_note(c, "note: the newest block of trials (%s to %s) is used; %zu older trial(s) are left out (--from "
                    "includes them)", f.trials[0].date, f.trials[f.n - 1].date, older);
    const cpd_pd_result *r = f.res;
    int spd = f.modality == CPD_PD_SPEED;
    if ((o.power && spd) || (o.speed && !spd) || (o.distance && !spd)) {
        int ex = cli_usage("predict", "%s's fit is in %s: use %s", f.athlete.code, spd ? "speed" : "power",
                           spd ? "--speed, --distance or --duration" : "--power or --duration");
        cli_pd_fit_free(&f);
        return ex;
    }
    cpd_pd_model which;
    if (o.model)
        cpd_pd_model_parse(o.model, &which);
    else if (r->has_best)
        which = r->best;
    else {
        int ex = cli_fail(c, CPD_ENODATA, "%s: no model qualifies as best; name one with --model (see 'cpdomain fit %s')",
                          f.athlete.code, f.athlete.code);
        cli_pd_fit_free(&f);
        return ex;
    }
    const cpd_pd_model_fit *m = &r->models[which];
    if (o.protocol || o.session) {
        if (!m->ok) {
            rc = cli_fail(c, CPD_ENODATA, "%s: the %s model did not fit: %s", f.athlete.code, cpd_pd_model_name(which),
                          cpd_pd_fail_text(m->fail));
        } else if (o.session)
            rc = cli_predict_session(c, &f, m, session_id, o.bmodel, o.trace, o.out);
        else
            rc = cli_predict_protocol(c, &f, m, o.protocol, o.bmodel, o.trace, o.out);
        cli_pd_fit_free(&f);
        return rc;
    }
    cpd_pd_pred p;
    if (o.power || o.speed)
        rc = cpd_pd_predict_time(m, q, &p);
    else if (o.duration)
        rc = cpd_pd_predict_intensity(m, q, &p);
    else
        rc = cpd_pd_predict_distance_time(m, q, &p);
    if (rc) {
        int ex = cli_fail(c, rc, "%s model for %s: %s", cpd_pd_model_name(which), f.athlete.code, cpd_pd_pred_text(p.status));
        cli_pd_fit_free(&f);
        return ex;
    }
    /* inside CP's 95 % interval the time has a lower bound and no upper one */
    int near_cp = 0;
    double t_lo = 0;
    if ((o.power || o.speed) && cpd_pd_time_near_cp(m, q, &near_cp, &t_lo) == CPD_OK && near_cp) {
        p.valid = 0;
        p.ci_valid = 0;
    }
    /* running beyond about 30 min: the sustainable speed falls below CS in long events, so a time
     * from CS + D' (or a speed for a long duration) is optimistic: no such time is printed as a prediction */
    int run_long = 0;
    if (spd && strcmp(f.athlete.sport, "running") == 0 && !near_cp) {
        double tt = o.duration ? q : p.valid ? p.value : NAN;
        if (isfinite(tt) && tt > CLI_RUN_LONG_S)
            run_long = 1;
    }
    double run_bound = o.distance && run_long ? p.value : NAN;
    if (o.distance && run_long)
        p.valid = p.ci_valid = 0;
    /* a prediction whose duration lies outside the trials is an extrapolation: say so */
    char extrap[200] = "";
    double tq = o.duration ? q : p.valid ? p.value : NAN;
    if (isfinite(tq)) {
        double tlo = f.t[0], thi = f.t[0];
        for (size_t i = 1; i < f.n; i++) {
            tlo = fmin(tlo, f.t[i]);
            thi = fmax(thi, f.t[i]);
        }
        if (tq < tlo || tq > thi) {
            char a[24], b[24], t0[24];
            cpd_format_duration(tq, t0, sizeof t0);
            cpd_format_duration(tlo, a, sizeof a);
            cpd_format_duration(thi, b, sizeof b);
            snprintf(extrap, sizeof extrap,
                     "extrapolated: %s lies outside the trials (%s to %s); the model holds for about 2 to 15 min", t0, a, b);
        }
    }
    const char *ikey = spd ? "speed_m_s" : "power_w";
    if (c->json) {
        cli_json *d = cj_obj();
        cj_str(d, "athlete", f.athlete.code);
        cj_str(d, "model", cpd_pd_model_name(which));
        char k[32];
        cj_num(d, cli_pd_key(f.modality, "cp", k, sizeof k), m->cp);
        cj_num(d, cli_pd_key(f.modality, "w_prime", k, sizeof k), m->w_prime);
        if (o.power || o.speed) {
            cj_num(d, ikey, q);
            cj_num(d, "time_to_failure_s", p.valid ? p.value : NAN);
            cj_pair(d, "time_to_failure_ci95", p.valid && p.ci_valid ? p.ci95[0] : NAN, p.ci95[1]);
            cj_num(d, "time_to_failure_at_least_s", near_cp && t_lo > 0 ? t_lo : NAN);
            cj_str(d, "domain", near_cp ? CLI_CANNOT_TELL : domain_of(c, &f, which, o.from, o.to, m, q));
        } else if (o.duration) {
            char ck[32];
            snprintf(ck, sizeof ck, "%s_ci95", ikey);
            cj_num(d, "duration_s", q);
            cj_num(d, ikey, p.valid ? p.value : NAN);
            cj_pair(d, ck, p.valid && p.ci_valid ? p.ci95[0] : NAN, p.ci95[1]);
        } else {
            cj_num(d, "distance_m", q);
            cj_num(d, "time_s", p.valid ? p.value : NAN);
            cj_pair(d, "time_ci95", p.valid && p.ci_valid ? p.ci95[0] : NAN, p.ci95[1]);
            cj_num(d, "time_at_least_s", run_bound);
        }
        cj_bool(d, "extrapolated", extrap[0] != 0);
        cj_str(d, "long_run_caution", run_long ? CLI_RUN_LONG_CAUTION : NULL);
        cj_str(d, "note", near_cp ? CLI_NEAR_CP_NOTE
                          : p.valid || run_long ? (extrap[0] ? extrap : NULL) : cpd_pd_pred_text(p.status));
        cli_pd_flags_json(cj_add_arr(d, "flags"), r->flags | m->flags, f.modality);
        cj_str(d, "caution", CLI_CAUTION);
        rc = cj_print(d);
    } else {
        char a[64], b[64], v[64];
        printf("%s %s, %s model (%s = %s, %s = %s)\n", f.athlete.code, f.athlete.name, cpd_pd_model_name(which),
               spd ? "CS" : "CP", fmt_intensity(&f, m->cp, v, sizeof v), spd ? "D'" : "W'",
               spd ? (snprintf(a, sizeof a, "%.0f m", m->w_prime), a) : (snprintf(a, sizeof a, "%.2f kJ", m->w_prime / 1000), a));
        if (o.power || o.speed) {
            fmt_intensity(&f, q, v, sizeof v);
            if (p.valid) {
                cpd_format_duration(p.value, a, sizeof a);
                printf("at %s: time to task failure %s", v, a);
                if (p.ci_valid) {
                    cpd_format_duration(p.ci95[0], a, sizeof a);
                    cpd_format_duration(p.ci95[1], b, sizeof b);
                    printf(" (95 %% CI %s to %s)", a, b);
                }
                printf(", %s domain\n", domain_of(c, &f, which, o.from, o.to, m, q));
            } else if (near_cp) {
                printf("at %s: %s (inside %s's 95 %% CI %s to %s)\n", v, CLI_CANNOT_TELL, spd ? "CS" : "CP",
                       fmt_intensity(&f, m->cp_ci95[0], a, sizeof a), fmt_intensity(&f, m->cp_ci95[1], b, sizeof b));
                if (t_lo >= 120) /* whole minutes, rounded down: a bound, not an estimate */
                    printf("time to task failure: at least about %.0f min, no upper bound\n", floor(t_lo / 60));
                else if (t_lo > 0) {
                    cpd_format_duration(t_lo, a, sizeof a);
                    printf("time to task failure: at least about %s, no upper bound\n", a);
                } else
                    printf("time to task failure: no bound can be given\n");
                printf("note: %s\n", CLI_NEAR_CP_NOTE);
            } else
                printf("at %s: %s\n", v, cpd_pd_pred_text(p.status));
        } else if (o.duration) {
            /* under a minute as plain seconds: a bare '--duration 8' reads back as "8 s", not "0:08" */
            cli_duration_text(q, a, sizeof a);
            if (p.valid) {
                printf("for %s: %s", a, fmt_intensity(&f, p.value, v, sizeof v));
                if (p.ci_valid)
                    printf(" (95 %% CI %s to %s)", fmt_intensity(&f, p.ci95[0], a, sizeof a),
                           fmt_intensity(&f, p.ci95[1], b, sizeof b));
                printf("\n");
            } else
                printf("for %s: %s\n", a, cpd_pd_pred_text(p.status));
        } else {
            if (p.valid) {
                cpd_format_duration(p.value, a, sizeof a);
                printf("%.0f m: predicted time %s", q, a);
                if (p.ci_valid) {
                    cpd_format_duration(p.ci95[0], a, sizeof a);
                    cpd_format_duration(p.ci95[1], b, sizeof b);
                    printf(" (95 %% CI %s to %s)", a, b);
                }
                printf("\n");
            } else if (run_long) {
                cpd_format_duration(run_bound, a, sizeof a);
                printf("%.0f m: no time is predicted (it would take more than 30 min); running at CS the whole way "
                       "would take %s, and the real time is longer\n", q, a);
            } else
                printf("%.0f m: %s\n", q, cpd_pd_pred_text(p.status));
        }
        if (run_long)
            printf("caution: %s\n", CLI_RUN_LONG_CAUTION);
        if (extrap[0])
            printf("note: %s\n", extrap);
        if (r->flags | m->flags) {
            printf("flags:\n");
            cli_pd_flags_print(r->flags | m->flags, f.modality);
        }
        printf("\n%s\n", CLI_CAUTION);
    }
    cli_pd_fit_free(&f);
    return rc;
}

int cmd_fit(cli_ctx *c, int argc, char **argv)
{
    return cmd_fit_run(c, argc, argv);
}

int cmd_predict(cli_ctx *c, int argc, char **argv)
{
    return cmd_predict_run(c, argc, argv);
}
