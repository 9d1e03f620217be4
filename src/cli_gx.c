/* cli_gx.c: stored ramps and bouts analysed through the library (cpdomain/athlete.h), with the
 * command line's option strings, messages and the kinetics chart. */
#include "cli_gx.h"
#include "cpdomain/plots.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

int cli_ramp_analyse(cli_ctx *c, long long id, const char *window, const char *outlier, const char *mrt,
                     cpd_gx_test *t, cpd_athlete *a, cpd_ramp_ws **w, cpd_ramp_result *r)
{
    *w = NULL;
    cpd_athlete_ramp_over ov = {0};
    int rc;
    if (window && (rc = cli_ranged("--window", window, 5, 120, "s", 1, &ov.window_s)))
        return rc;
    if (outlier && (rc = cli_ranged("--outlier-sd", outlier, 2, 10, "SD", 0, &ov.outlier_k)))
        return rc;
    if (mrt && (rc = cli_ranged("--mrt", mrt, 0, 300, "s", 1, &ov.mrt_s)))
        return rc;
    ov.has_window = window != NULL;
    ov.has_outlier = outlier != NULL;
    ov.has_mrt = mrt != NULL;
    char msg[CPD_MSG_MAX] = "";
    if ((rc = cpd_athlete_ramp_analyse(c->store, id, &ov, t, a, w, r, msg)))
        return cli_athlete_fail(c, rc, msg);
    return 0;
}

int cli_bout_ids(const char *cmd, const char *text, long long *ids, size_t *n)
{
    *n = 0;
    char buf[512];
    if (strlen(text) >= sizeof buf)
        return cli_usage(cmd, "too many ids");
    snprintf(buf, sizeof buf, "%s", text);
    char *p = buf;
    for (;;) {
        char *comma = strchr(p, ',');
        if (comma)
            *comma = '\0';
        if (*n == CPD_ATHLETE_BOUTS_MAX)
            return cli_usage(cmd, "at most %d repeats are averaged at once", CPD_ATHLETE_BOUTS_MAX);
        long long id = 0;
        int rc = cli_id(cmd, p, &id);
        if (rc)
            return rc;
        for (size_t i = 0; i < *n; i++)
            if (ids[i] == id)
                return cli_usage(cmd, "bout %lld is given twice: each repeat counts once in an ensemble", id);
        ids[(*n)++] = id;
        if (!comma)
            break;
        p = comma + 1;
    }
    return 0;
}

int cli_bouts_load(cli_ctx *c, const char *cmd, const long long *ids, size_t n, const cpd_kinetics_opts *ko,
                   cpd_athlete_bouts *b)
{
    char msg[CPD_MSG_MAX] = "";
    int rc = cpd_athlete_bouts_analyse(c->store, ids, n, ko, b, msg);
    cli_athlete_notes(c, &b->notes);
    if (rc == CPD_EUSAGE)
        return cli_usage(cmd, "%s", msg);
    return rc ? cli_athlete_fail(c, rc, msg) : 0;
}

/* Parses ids and analyses them with the default options; b is freed by the caller. */
static int bouts_default(cli_ctx *c, const char *cmd, const char *ids_text, cpd_athlete_bouts *b)
{
    memset(b, 0, sizeof *b);
    long long ids[CPD_ATHLETE_BOUTS_MAX];
    size_t n = 0;
    int rc;
    if ((rc = cli_bout_ids(cmd, ids_text, ids, &n)))
        return rc;
    if (!c->store && (rc = cli_open(c, 0)))
        return rc;
    return cli_bouts_load(c, cmd, ids, n, NULL, b);
}

int cli_bout_analyse(cli_ctx *c, const char *ids, cpd_kinetics_result *res)
{
    cpd_athlete_bouts *b = calloc(1, sizeof *b);
    if (!b)
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    int rc = bouts_default(c, "bout", ids, b);
    if (!rc)
        *res = b->res;
    cpd_athlete_bouts_free(b);
    free(b);
    return rc;
}

int cli_bout_plot_of(cli_ctx *c, const char *ids, const cpd_athlete_bouts *r, char **svg, char *summary, size_t n)
{
    *svg = NULL;
    /* the analysis keeps no pointers into its workspace: prepare again for the points it fitted */
    cpd_kinetics_input in[CPD_ATHLETE_BOUTS_MAX];
    for (size_t i = 0; i < r->n; i++) {
        in[i].gx = r->g[i];
        in[i].onset_s = r->t[i].onset_s;
    }
    cpd_kinetics_data d;
    int rc;
    if ((rc = cpd_kinetics_prepare(r->ws, in, r->n, &r->ko, &d)))
        return cli_fail(c, rc, "bout %s: %s", ids, d.msg);
    char title[300], iv[48], num[32];
    const char *dom = r->res.domain == CPD_KIN_UNDETERMINED ? "domain undetermined" : cpd_kinetics_domain_name(r->res.domain);
    snprintf(iv, sizeof iv, "%s %s", cli_num(num, sizeof num, r->intensity, r->speed ? 2 : 0), r->speed ? "m/s" : "W");
    if (r->n == 1)
        snprintf(title, sizeof title, "Bout %lld: %s, %s, %s (%s)", (long long)r->t[0].id, r->a.code, r->t[0].date, iv, dom);
    else
        snprintf(title, sizeof title, "Bouts %s (ensemble of %zu): %s, %s (%s)", ids, r->n, r->a.code, iv, dom);
    if (summary)
        snprintf(summary, n, "%s: primary tau %.1f s (95 %% CI %.1f to %.1f s), gain %.1f mL/min per %s, %s.", title,
                 r->res.primary.tau_s, r->res.primary.tau_ci95_s[0], r->res.primary.tau_ci95_s[1],
                 r->res.primary.gain_valid ? r->res.primary.gain_ml_min_w : 0.0, r->speed ? "m/s" : "W",
                 r->res.slow.present ? "a slow component is supported" : "no slow component");
    if ((rc = cpd_plot_kinetics(&d, &r->res, title, svg)))
        return cli_fail(c, rc, "bout %s: no plot: %s", ids, cpd_strerror(rc));
    return 0;
}

int cli_bout_plot(cli_ctx *c, const char *ids, char **svg, char *summary, size_t n)
{
    cpd_athlete_bouts *b = calloc(1, sizeof *b);
    if (!b)
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    int rc = bouts_default(c, "bout plot", ids, b);
    if (!rc)
        rc = cli_bout_plot_of(c, ids, b, svg, summary, n);
    cpd_athlete_bouts_free(b);
    free(b);
    return rc;
}
