/* cmd_domains.c: 'domains CODE': the intensity-domain boundaries, what they rest on, and the
 * training targets in each domain. */
#include "cli_domains_json.h"
#include "commands.h"
#include "cpdomain/units.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

static const char HELP[] =
    "usage: cpdomain domains CODE [--model NAME] [--from D] [--to D] [--stale-days N]\n\n"
    "The athlete's four intensity domains and what each boundary rests on:\n"
    "  moderate-heavy  the gas exchange threshold of the newest ramp at its constant-power\n"
    "                  equivalent (ramp power - rate x MRT), or the lactate LT1 without a ramp\n"
    "  heavy-severe    critical power (speed) of the best fit, with its 95 % interval\n"
    "  severe-extreme  the power whose predicted time to failure equals the time to reach VO2max\n"
    "                  (delay + 4 tau of the newest severe bout, else about 100 s; Hill, Poole &\n"
    "                  Smith 2002), its interval carrying both CP's and tau's uncertainty\n"
    "Between CP's 95 % bounds the data cannot tell heavy from severe: that band is shown as such,\n"
    "and the severe targets start at CP's upper bound; severe efforts are listed only inside the\n"
    "severe domain.\n"
    "Then targets per domain (W, % of CP, W/kg, pace, heart rate from the ramp), heavy work kept below\n"
    "the lower 95 % bound of CP, severe efforts for 2-12 min with intervals, and 25/50/75 %delta.\n"
    "A boundary whose data are older than --stale-days (default 56) or that a newer block of\n"
    "trials contradicts is marked stale.\n\n"
    "examples:\n  cpdomain domains C03\n  cpdomain --json domains R01 --stale-days 42\n";

typedef struct {
    const char *model, *from, *to, *stale;
} dom_opts;

static int dom_opt(int opt, const char *arg, void *ud)
{
    dom_opts *o = ud;
    switch (opt) {
    case 'm': o->model = arg; break;
    case 'f': o->from = arg; break;
    case 't': o->to = arg; break;
    case 's': o->stale = arg; break;
    default: return EX_USAGE;
    }
    return 0;
}

static void print_range(const cli_domains *d, const char *name, const cpd_domain_range *r)
{
    char lo[64] = "", hi[64] = "", pct[48], wkg[48] = "", hr[48] = "";
    if (r->has_lo)
        cli_domains_fmt(d, r->lo, lo, sizeof lo);
    if (r->has_hi)
        cli_domains_fmt(d, r->hi, hi, sizeof hi);
    char span[160];
    if (r->has_lo && r->has_hi)
        snprintf(span, sizeof span, "%s to %s", lo, hi);
    else if (r->has_hi)
        snprintf(span, sizeof span, "below %s", hi);
    else if (r->has_lo)
        snprintf(span, sizeof span, "above %s", lo);
    else
        snprintf(span, sizeof span, "unknown (a boundary is missing)");
    if (r->has_lo && r->has_hi)
        snprintf(pct, sizeof pct, "%.0f-%.0f %%", r->lo_pct_cp, r->hi_pct_cp);
    else if (r->has_hi)
        snprintf(pct, sizeof pct, "< %.0f %%", r->hi_pct_cp);
    else if (r->has_lo)
        snprintf(pct, sizeof pct, "> %.0f %%", r->lo_pct_cp);
    else
        snprintf(pct, sizeof pct, "-");
    if (r->has_mass && r->has_lo && r->has_hi)
        snprintf(wkg, sizeof wkg, "%.2f-%.2f W/kg", r->lo_w_kg, r->hi_w_kg);
    else if (r->has_mass && r->has_hi)
        snprintf(wkg, sizeof wkg, "< %.2f W/kg", r->hi_w_kg);
    else if (r->has_mass && r->has_lo)
        snprintf(wkg, sizeof wkg, "> %.2f W/kg", r->lo_w_kg);
    if (r->has_hr_lo && r->has_hr_hi)
        snprintf(hr, sizeof hr, "HR %.0f-%.0f bpm", r->hr_lo, r->hr_hi);
    else if (r->has_hr_hi)
        snprintf(hr, sizeof hr, "HR < %.0f bpm", r->hr_hi);
    else if (r->has_hr_lo)
        snprintf(hr, sizeof hr, "HR > %.0f bpm", r->hr_lo);
    if (strlen(name) > 9) /* the uncertain band: its label on a line of its own */
        printf("  %s (%s's 95 %% interval):\n  %-9s", name, d->fit.modality == CPD_PD_SPEED ? "CS" : "CP", "");
    else
        printf("  %-9s", name);
    printf(" %-40s %-11s %-17s %s\n", span, pct, wkg, hr);
}

int cmd_domains(cli_ctx *c, int argc, char **argv)
{
    static const struct option lo[] = {
        {"model", required_argument, NULL, 'm'}, {"from", required_argument, NULL, 'f'},
        {"to", required_argument, NULL, 't'},    {"stale-days", required_argument, NULL, 's'},
        {"help", no_argument, NULL, 'h'},        {NULL, 0, NULL, 0},
    };
    dom_opts o = {0};
    int first = 0, done = 0;
    int rc = cli_getopt(argc, argv, "h", lo, HELP, dom_opt, &o, &first, &done);
    if (rc || done)
        return rc;
    if (argc - first != 1)
        return cli_usage("domains", argc - first < 1 ? "missing argument CODE" : "unexpected argument '%s'", argv[first + 1]);
    int stale = 0;
    if (o.stale) {
        double v = 0;
        if ((rc = cli_number("--stale-days", o.stale, &v)))
            return rc;
        if (!(v >= 1 && v <= 3650) || v != floor(v))
            return cli_usage("domains", "--stale-days must be a whole number of days from 1 to 3650");
        stale = (int)v;
    }
    int dd = 0;
    if ((o.from && cpd_parse_date(o.from, &dd)) || (o.to && cpd_parse_date(o.to, &dd)))
        return cli_usage("domains", "--from/--to: use YYYY-MM-DD");
    if ((rc = cli_open(c, 0)))
        return rc;
    cli_domains d;
    if ((rc = cli_domains_build(c, argv[first], o.from, o.to, o.model, stale, &d)))
        return rc;
    const cpd_domains_result *r = &d.res;
    int spd = d.fit.modality == CPD_PD_SPEED;
    if (c->json || c->csv) {
        cli_json *doc = cj_obj();
        cli_domains_json(doc, &d);
        rc = c->csv ? cj_print_csv(doc, "targets", NULL) : cj_print(doc);
    } else {
        char a[64], b[64], v[64];
        printf("%s %s: intensity domains (%s model, %zu trials %s to %s)\n", d.fit.athlete.code, d.fit.athlete.name,
               cpd_pd_model_name(d.model), d.fit.n, d.fit.trials[0].date, d.fit.trials[d.fit.n - 1].date);
        if (d.older_trials)
            printf("the newest block of trials only: %zu older trial(s) are left out (see 'cpdomain history %s'; "
                   "--from includes them)\n", d.older_trials, d.fit.athlete.code);
        printf("\nboundaries:\n");
        for (int k = 0; k < CPD_BND_N; k++) {
            const cpd_boundary *x = &r->b[k];
            if (!x->valid) {
                printf("  %-15s unknown: %s\n", cpd_boundary_name((cpd_boundary_id)k), x->why);
                continue;
            }
            printf("  %-15s %s", cpd_boundary_name((cpd_boundary_id)k), cli_domains_fmt(&d, x->value, v, sizeof v));
            if (x->has_ci)
                printf(" (95 %% CI %s to %s)", cli_domains_fmt(&d, x->ci95[0], a, sizeof a), cli_domains_fmt(&d, x->ci95[1], b, sizeof b));
            printf("\n  %-15s %s, %s%s\n", "", x->source, x->date, x->stale ? "  [STALE]" : "");
            printf("  %-15s %s\n", "", x->method);
            if (x->stale)
                printf("  %-15s stale: %s\n", "", x->stale_why);
        }
        printf("\ntargets (%% of %s%s):\n", spd ? "CS" : "CP", d.fit.athlete.has_mass && !spd ? ", W/kg" : "");
        for (int k = 0; k < CPD_DOM_N; k++) {
            print_range(&d, cpd_domain_name((cpd_domain)k), &r->range[k]);
            if (k == CPD_DOM_HEAVY && r->has_uncertain)
                print_range(&d, "heavy or severe: the data cannot tell", &r->uncertain);
        }
        printf("  heavy-domain work is capped at %s, the lower 95 %% bound of %s\n", cli_domains_fmt(&d, r->heavy_ceiling, v, sizeof v),
               spd ? "CS" : "CP");
        printf("\nsevere efforts (held to task failure):\n");
        for (int k = 0; k < CPD_DOMAINS_NEFFORTS; k++) {
            const cpd_domain_effort *e = &r->effort[k];
            char t[16];
            cpd_format_duration(e->duration_s, t, sizeof t);
            if (e->beyond_severe) {
                printf("  %5s  -  (beyond the severe-extreme boundary: extreme domain)\n", t);
                continue;
            }
            if (!e->valid) {
                printf("  %5s  -\n", t);
                continue;
            }
            printf("  %5s  %s", t, cli_domains_fmt(&d, e->value, v, sizeof v));
            if (e->has_ci)
                printf("  (95 %% CI %s to %s)", cli_domains_fmt(&d, e->ci95[0], a, sizeof a), cli_domains_fmt(&d, e->ci95[1], b, sizeof b));
            printf("\n");
        }
        if (r->has_delta) {
            printf("\n%%delta between the GET and VO2peak equivalents:");
            for (int k = 0; k < CPD_DOMAINS_NDELTA; k++)
                printf("  %.0f%%: %s", r->delta_pct[k], cli_domains_fmt(&d, r->delta_value[k], v, sizeof v));
            printf("\n");
        }
        if (r->flags || d.fit.res->flags) {
            printf("\nflags:\n");
            for (unsigned k = 0; k < CPD_DOMAINS_NFLAGS; k++)
                if (r->flags & (1u << k))
                    printf("  - %s\n", cpd_domains_flag_text(1u << k));
            cli_pd_flags_print(d.fit.res->flags, d.fit.modality);
        }
        if (d.ramp_mrt_missing)
            printf("  - %s\n", CLI_MRT_MISSING_NOTE);
        if (d.ramp_no_vco2)
            printf("  - %s\n", CLI_NO_VCO2_NOTE);
        printf("\n%s\n%s\n", CLI_HR_CAUTION, CLI_CAUTION);
    }
    cli_domains_free(&d);
    return rc;
}
