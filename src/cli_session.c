/* cli_session.c: stored sessions for more than one command: a session cleaned again ('session',
 * 'allout', 'energy', 'predict --session'), the season's mean-maximal curve ('curve', 'fit --source
 * curve', the sheet) and the W' balance through a recorded session ('predict --session'). */
#include "cli_pd.h"
#include "cli_session.h"
#include "cpdomain/mmp.h"
#include "cpdomain/plots.h"
#include "cpdomain/units.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

int cli_speed_sport(const cpd_athlete *a)
{
    return strcmp(a->sport, "running") == 0 || strcmp(a->sport, "swimming") == 0;
}

/* Loads a stored session or all-out test and cleans its samples again by the rules of session.h
 * with the spike limit used at import. *w holds the clean series; the caller frees *w and *x. */
int cli_session_load_clean(cli_ctx *c, long long id, int allout, cpd_session_rec *r, cpd_session_samples **x,
                           cpd_session_ws **w, cpd_session *s)
{
    *w = NULL;
    int rc = cpd_store_session_get(c->store, id, allout, r, x);
    if (rc)
        return cli_store_fail(c, rc);
    cpd_session_opts so;
    cpd_session_opts_init(&so, r->speed ? CPD_SESSION_SPEED : CPD_SESSION_POWER);
    so.ceiling = r->spike_limit;
    char msg[CPD_MSG_MAX] = "";
    *w = cpd_session_alloc((*x)->n);
    rc = *w ? cpd_session_clean(*w, (*x)->time_s, (*x)->value, (*x)->n, &so, s, msg) : CPD_ENOMEM;
    if (rc) {
        cpd_session_free(*w);
        *w = NULL;
        cpd_store_samples_free(*x);
        *x = NULL;
        /* the samples passed these checks at import: failing now means the store was altered */
        return cli_fail(c, rc == CPD_ENOMEM ? rc : CPD_ESTORE, "%s %lld: its stored samples no longer clean: %s",
                        allout ? "all-out test" : "session", id, msg[0] ? msg : cpd_strerror(rc));
    }
    return 0;
}

/* Grid index of duration d (s) on the grid of mmp.h, or (size_t)-1 when d is not on it. */
size_t cli_mmp_grid_index(size_t d)
{
    if (d >= 1 && d <= CPD_MMP_FINE_S)
        return d - 1;
    if (d > CPD_MMP_FINE_S && (d - CPD_MMP_FINE_S) % CPD_MMP_COARSE_STEP_S == 0)
        return CPD_MMP_FINE_S + (d - CPD_MMP_FINE_S) / CPD_MMP_COARSE_STEP_S - 1;
    return (size_t)-1;
}

/* The modality of the athlete's sessions dated within [from, to]: the only one there is, else
 * --modality, else the athlete's sport. *n_other counts sessions of the other modality. Returns
 * 0 or an exit code (69 without sessions). */
static int curve_modality(cli_ctx *c, const cpd_athlete *a, const char *from, const char *to, const char *modality,
                          int *speed, size_t *n_other)
{
    size_t np = 0, ns = 0;
    int rc = cpd_store_session_count(c->store, a->code, from, to, &np, &ns);
    if (rc)
        return cli_store_fail(c, rc);
    if (modality)
        *speed = strcmp(modality, "speed") == 0;
    else
        *speed = ns > 0 && (np == 0 || cli_speed_sport(a));
    *n_other = *speed ? np : ns;
    if ((*speed ? ns : np) == 0)
        return cli_fail(c, CPD_ENODATA, "%s has no %ssessions%s: store rides or runs with 'cpdomain session add'", a->code,
                        modality ? (*speed ? "speed " : "power ") : "", from || to ? " in the chosen dates" : "");
    if (*n_other)
        cli_note(c, "note: %zu %s session(s) of %s left out: one curve has one modality (--modality chooses)", *n_other,
                 *speed ? "power" : "speed", a->code);
    return 0;
}

/* Builds the season curve; the caller frees *out. Returns 0 or an exit code. */
int cli_season_curve(cli_ctx *c, const cpd_athlete *a, const char *from, const char *to, const char *modality,
                        int *speed, cpd_mmp_season **out, size_t *n_sessions)
{
    size_t other = 0;
    *out = NULL;
    int rc = curve_modality(c, a, from, to, modality, speed, &other);
    if (rc)
        return rc;
    cpd_mmp_season *se = cpd_mmp_season_alloc();
    if (!se)
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    if ((rc = cpd_store_session_season(c->store, a->code, *speed, from, to, se, n_sessions))) {
        cpd_mmp_season_free(se);
        return cli_store_fail(c, rc);
    }
    *out = se;
    return 0;
}

/* ---- fit --source curve ---- */

static int by_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return x < y ? -1 : x > y;
}

/* Parses "3min,5min,12min" into whole-second grid durations, ascending and distinct. */
static int parse_durations(const char *text, double *d, size_t *n, size_t cap)
{
    *n = 0;
    char buf[512];
    if (strlen(text) >= sizeof buf)
        return cli_usage("fit", "--durations: the list is too long");
    snprintf(buf, sizeof buf, "%s", text);
    for (char *save = NULL, *tok = strtok_r(buf, ",;", &save); tok; tok = strtok_r(NULL, ",;", &save)) {
        double v = 0;
        if (cpd_parse_duration(tok, &v) || v != floor(v) || v < 1 || cli_mmp_grid_index((size_t)v) == (size_t)-1)
            return cli_usage("fit", "--durations: '%s' is not a whole-second duration of the curve (1 s to 60 min, "
                                    "then whole minutes)", tok);
        if (*n == cap)
            return cli_usage("fit", "--durations: at most %zu durations", cap);
        d[(*n)++] = v;
    }
    qsort(d, *n, sizeof *d, by_double);
    for (size_t i = 1; i < *n; i++)
        if (d[i] == d[i - 1])
            return cli_usage("fit", "--durations: %g s is given twice", d[i]);
    if (*n < 2)
        return cli_usage("fit", "--durations: a fit needs at least 2 durations");
    return 0;
}

typedef struct {
    cpd_trial t;
    double x, d;
} curve_point;

static int by_date(const void *a, const void *b)
{
    const curve_point *p = a, *q = b;
    int k = strcmp(p->t.date, q->t.date);
    return k ? k : (p->d > q->d) - (p->d < q->d);
}

int cli_pd_load_curve_fit(cli_ctx *c, const char *code, const char *from, const char *to, const char *durations,
                          unsigned mask, cli_pd_fit *f)
{
    memset(f, 0, sizeof *f);
    double dur[32];
    size_t nd = 0;
    int ex = parse_durations(durations ? durations : CLI_CURVE_DURATIONS, dur, &nd, 32);
    if (ex)
        return ex;
    int rc = cpd_store_athlete_get(c->store, code, &f->athlete);
    if (rc)
        return cli_store_fail(c, rc);
    int spd = 0;
    size_t ns = 0;
    cpd_mmp_season *se = NULL;
    if ((ex = cli_season_curve(c, &f->athlete, from, to, NULL, &spd, &se, &ns)))
        return ex;
    curve_point pt[32];
    char a[24], b[24];
    for (size_t k = 0; k < nd && !ex; k++) {
        size_t i = cli_mmp_grid_index((size_t)dur[k]);
        cpd_format_duration(dur[k], a, sizeof a);
        if (i >= se->n) {
            cpd_format_duration(se->n ? se->duration_s[se->n - 1] : 0, b, sizeof b);
            ex = cli_fail(c, CPD_ENODATA, "%s: the curve has no %s point: no segment of the %zu session(s) is that long "
                          "(the curve ends at %s); choose shorter --durations", code, a, ns, b);
            break;
        }
        if (!(se->value[i] > 0)) {
            ex = cli_fail(c, CPD_ENODATA, "%s: the curve's %s point is zero: there is no effort to fit", code, a);
            break;
        }
        if (dur[k] < 120 || dur[k] > 1200)
            cli_note(c, "note: %s lies outside the 2-20 min window where the power-duration relation holds", a);
        memset(&pt[k], 0, sizeof pt[k]);
        pt[k].t.id = se->session[i];
        snprintf(pt[k].t.athlete, sizeof pt[k].t.athlete, "%s", f->athlete.code);
        cpd_format_date(se->date_days[i], pt[k].t.date);
        pt[k].t.kind = spd ? CPD_TRIAL_SPEED : CPD_TRIAL_POWER;
        pt[k].t.value = se->value[i];
        pt[k].t.duration_s = dur[k];
        snprintf(pt[k].t.note, sizeof pt[k].t.note, "mean-maximal curve point");
        pt[k].x = se->value[i];
        pt[k].d = dur[k];
    }
    cpd_mmp_season_free(se);
    if (ex)
        return ex;
    qsort(pt, nd, sizeof *pt, by_date);
    f->modality = spd ? CPD_PD_SPEED : CPD_PD_POWER;
    f->from_curve = 1;
    f->trials = calloc(nd, sizeof *f->trials);
    f->x = calloc(nd, sizeof(double));
    f->t = calloc(nd, sizeof(double));
    f->res = calloc(1, sizeof *f->res);
    if (!f->trials || !f->x || !f->t || !f->res) {
        cli_pd_fit_free(f);
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    }
    for (size_t k = 0; k < nd; k++) {
        f->trials[k] = pt[k].t;
        f->x[k] = pt[k].x;
        f->t[k] = pt[k].d;
    }
    f->n = nd;
    char msg[CPD_MSG_MAX] = "";
    rc = cpd_pd_fit_models(f->modality, f->x, f->t, f->n, mask, f->res, msg);
    if (rc) {
        ex = cli_fail(c, rc, "fitting the curve of %s: %s", code, msg[0] ? msg : cpd_strerror(rc));
        cli_pd_fit_free(f);
        return ex;
    }
    return 0;
}

/* ---- predict --session ---- */

typedef struct {
    long long id;
    const cpd_session_rec *r;
    size_t gap_s, n_gaps;
} session_ud;

static void session_json(cli_json *d, const void *ud)
{
    const session_ud *u = ud;
    cj_int(d, "session", u->id);
    cj_str(d, "date", u->r->date);
    cj_int(d, "recorded_s", (long long)u->r->recorded_s);
    cj_int(d, "gaps", (long long)u->n_gaps);
    cj_int(d, "gap_s", (long long)u->gap_s);
}

int cli_predict_session(cli_ctx *c, const cli_pd_fit *f, const cpd_pd_model_fit *m, long long id,
                        const char *balance_model, const char *trace_path, const char *plot_path)
{
    cpd_balance_model bm = CPD_BALANCE_DIFFERENTIAL;
    if (balance_model && cpd_balance_model_parse(balance_model, &bm))
        return cli_usage("predict", "--balance-model: '%s' is not differential, integral or bartram", balance_model);
    cpd_session_rec r;
    cpd_session_samples *x = NULL;
    cpd_session_ws *w = NULL;
    cpd_session s;
    int rc = cli_session_load_clean(c, id, 0, &r, &x, &w, &s);
    if (rc)
        return rc;
    int ex = 0;
    double *v = NULL;
    cli_balance_part *parts = NULL;
    char (*labels)[24] = NULL;
    if (strcmp(r.athlete, f->athlete.code) != 0) {
        ex = cli_fail(c, CPD_EDATA, "session %lld belongs to %s, not %s", id, r.athlete, f->athlete.code);
        goto done;
    }
    if (r.speed != (f->modality == CPD_PD_SPEED)) {
        ex = cli_fail(c, CPD_EUSAGE, "session %lld is in %s but %s's fit is in %s", id, r.speed ? "speed" : "power",
                      f->athlete.code, f->modality == CPD_PD_SPEED ? "speed" : "power");
        goto done;
    }
    /* the 1-s grid from the first sample; seconds in no segment (split gaps, pauses) stay at 0:
     * rest, so W' recovers through a pause as it would standing still. The table shows each gap
     * and the recorded time in blocks of at most BLOCK_S. */
    enum { BLOCK_S = 600 };
    size_t max_parts = 2 * s.n_segments + 1 + s.grid_s / BLOCK_S;
    v = calloc(s.grid_s, sizeof *v);
    parts = calloc(max_parts, sizeof *parts);
    labels = calloc(max_parts, sizeof *labels);
    if (!v || !parts || !labels) {
        ex = cli_fail(c, CPD_ENOMEM, "out of memory");
        goto done;
    }
    session_ud ud = {id, &r, 0, 0};
    size_t np = 0, pos = 0, block = 0;
    for (size_t k = 0; k <= s.n_segments; k++) {
        size_t start = k < s.n_segments ? s.segments[k].start_s : s.grid_s;
        if (start > pos) {
            parts[np++] = (cli_balance_part){pos, start - pos, 0, "gap"};
            ud.gap_s += start - pos;
            ud.n_gaps++;
        }
        if (k == s.n_segments)
            break;
        const cpd_session_segment *g = &s.segments[k];
        memcpy(v + g->start_s, g->value, g->length_s * sizeof *v);
        for (size_t b = 0; b < g->length_s; b += BLOCK_S) {
            size_t len = g->length_s - b < BLOCK_S ? g->length_s - b : BLOCK_S;
            double sum = 0;
            for (size_t i = 0; i < len; i++)
                sum += g->value[b + i];
            snprintf(labels[np], sizeof labels[np], "%zu", ++block);
            parts[np] = (cli_balance_part){g->start_s + b, len, sum / (double)len, labels[np]};
            np++;
        }
        pos = g->start_s + g->length_s;
    }
    char heading[160], el[24];
    cpd_format_duration((double)s.grid_s, el, sizeof el);
    snprintf(heading, sizeof heading, "session %lld of %s: %s in %zu segment%s%s; blocks of up to 10 min, mean %s",
             id, r.date, el, s.n_segments, s.n_segments == 1 ? "" : "s",
             ud.n_gaps ? ", gaps count as rest at 0" : "", r.speed ? "speed" : "power");
    cli_balance_input in = {v, s.grid_s, parts, np, heading, "block",
                            "1-s steps on the session's cleaned 1-Hz grid from its first sample: gaps of up to 5 s and "
                            "dropped spikes filled linearly; a longer gap (a pause, or a dropout that split the "
                            "session) counts as rest at zero power (speed) for its whole length",
                            1, session_json, &ud, trace_path, 1, plot_path};
    ex = cli_balance_report(c, f, m, bm, &in);
done:
    free(v);
    free(parts);
    free(labels);
    cpd_session_free(w);
    cpd_store_samples_free(x);
    return ex;
}

