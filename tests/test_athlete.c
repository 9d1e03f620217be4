/* test_athlete.c: the athlete layer (athlete.h) on a real store: the current block of trials and
 * its fit (checked against numpy.polyfit of work on duration, tests/ref/linefit.py: the linear
 * work-time model W = CP t + W', Monod & Scherrer 1965 Ergonomics 8:329), notes instead of
 * printing, status codes with messages, the domains and their JSON, the season's blocks. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include "tmpstore.h"
#include "cpdomain/athlete.h"
#include "cpdomain/units.h"
#include "pyref.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

typedef struct {
    char path[TMPSTORE_MAX];
    cpd_store *s;
} fixture;

/* Two blocks of power trials of one cyclist, about two months apart (CP near 220 W, then 235 W). */
static const struct {
    const char *date;
    double p, t;
} TRIALS[] = {
    {"2026-01-05", 300, 228}, {"2026-01-08", 260, 446}, {"2026-01-12", 240, 905},
    {"2026-03-01", 320, 198}, {"2026-03-04", 280, 378}, {"2026-03-08", 255, 856},
};
#define NTRIALS (sizeof TRIALS / sizeof TRIALS[0])

static void add_trial(cpd_store *s, const char *code, const char *date, cpd_trial_kind k, double v, double t)
{
    cpd_trial x;
    memset(&x, 0, sizeof x);
    snprintf(x.athlete, sizeof x.athlete, "%s", code);
    snprintf(x.date, sizeof x.date, "%s", date);
    x.kind = k;
    x.value = v;
    x.duration_s = t;
    int64_t id = 0;
    assert_int_equal(cpd_store_trial_add(s, &x, &id), CPD_OK);
}

static void add_athlete(cpd_store *s, const char *code, const char *sport)
{
    cpd_athlete a;
    memset(&a, 0, sizeof a);
    snprintf(a.code, sizeof a.code, "%s", code);
    snprintf(a.name, sizeof a.name, "Invented %s", code);
    snprintf(a.sport, sizeof a.sport, "%s", sport);
    a.mass_kg = 70;
    a.has_mass = 1;
    int64_t id = 0;
    assert_int_equal(cpd_store_athlete_add(s, &a, &id), CPD_OK);
}

static int setup(void **state)
{
    fixture *f = calloc(1, sizeof *f);
    if (tmpstore_open(f->path, sizeof f->path, "athlete", &f->s))
        return -1;
    add_athlete(f->s, "A01", "cycling");
    for (size_t i = 0; i < NTRIALS; i++)
        add_trial(f->s, "A01", TRIALS[i].date, CPD_TRIAL_POWER, TRIALS[i].p, TRIALS[i].t);
    add_trial(f->s, "A01", "2026-03-02", CPD_TRIAL_SPEED, 4.5, 600); /* the other modality: a note */
    add_athlete(f->s, "A02", "cycling");
    add_trial(f->s, "A02", "2026-03-02", CPD_TRIAL_POWER, 300, 300);
    *state = f;
    return 0;
}

static int teardown(void **state)
{
    fixture *f = *state;
    tmpstore_close(f->path, f->s);
    free(f);
    return 0;
}

/* numpy.polyfit of work (P t) on t over trials [from, to): slope CP, intercept W'. */
static void reference(size_t from, size_t to, double *cp, double *wp)
{
    char text[512] = "";
    size_t o = 0;
    for (size_t i = from; i < to; i++)
        o += (size_t)snprintf(text + o, sizeof text - o, "%.17g %.17g\n", TRIALS[i].t, TRIALS[i].p * TRIALS[i].t);
    double ref[2];
    assert_int_equal(pyref_run("linefit.py", text, ref, 2, -1), 2);
    *cp = ref[0];
    *wp = ref[1];
}

static void current_block(void **state)
{
    fixture *f = *state;
    cpd_athlete_fit fit;
    size_t older = 99;
    char msg[CPD_MSG_MAX] = "";
    unsigned lt = CPD_PD_MODEL_BIT(CPD_PD_LINEAR_TOTAL);
    assert_int_equal(cpd_athlete_fit_current(f->s, "A01", NULL, NULL, lt, &fit, &older, msg), CPD_OK);
    /* newest 2026-03-08: the block starts 28 days before, so the January trials are left out */
    assert_int_equal(older, 3);
    assert_int_equal(fit.n, 3);
    assert_string_equal(fit.trials[0].date, "2026-03-01");
    assert_int_equal(fit.modality, CPD_PD_POWER);
    assert_int_equal(fit.skipped_other, 1);
    /* nothing printed: the note of the left-out speed trial is in the result */
    assert_int_equal(fit.notes.n, 1);
    assert_int_equal(fit.notes.error[0], 0);
    assert_non_null(strstr(fit.notes.text[0], "1 speed or distance trial(s) of A01 left out"));
    double cp, wp;
    reference(3, 6, &cp, &wp);
    const cpd_pd_model_fit *m = &fit.res->models[CPD_PD_LINEAR_TOTAL];
    assert_true(m->ok);
    assert_true(fabs(m->cp - cp) <= 1e-9 * cp);
    assert_true(fabs(m->w_prime - wp) <= 1e-7 * wp);
    cpd_athlete_fit_free(&fit);
    /* with --from every trial in the dates counts */
    assert_int_equal(cpd_athlete_fit_current(f->s, "A01", "2026-01-01", NULL, lt, &fit, &older, msg), CPD_OK);
    assert_int_equal(older, 0);
    assert_int_equal(fit.n, 6);
    reference(0, 6, &cp, &wp);
    assert_true(fabs(fit.res->models[CPD_PD_LINEAR_TOTAL].cp - cp) <= 1e-9 * cp);
    cpd_athlete_fit_free(&fit);
    cpd_athlete_fit_free(&fit); /* safe twice */
}

static void failures_say_why(void **state)
{
    fixture *f = *state;
    cpd_athlete_fit fit;
    char msg[CPD_MSG_MAX] = "";
    assert_int_equal(cpd_athlete_fit_load(f->s, "NOPE", NULL, NULL, CPD_PD_ALL_MODELS, &fit, msg), CPD_ENOENT);
    assert_true(msg[0] != '\0');
    assert_null(fit.trials);
    assert_int_equal(cpd_athlete_fit_load(f->s, "A02", NULL, NULL, CPD_PD_ALL_MODELS, &fit, msg), CPD_ENODATA);
    assert_non_null(strstr(msg, "A02 has 1 usable trial(s)"));
    assert_null(fit.res);
    /* the notes survive a failure, so the caller can show them before the error */
    assert_int_equal(cpd_athlete_fit_load(f->s, "A01", "2026-03-02", "2026-03-04", CPD_PD_ALL_MODELS, &fit, msg),
                     CPD_ENODATA);
    assert_int_equal(fit.notes.n, 1);
    assert_non_null(strstr(fit.notes.text[0], "left out"));
    cpd_athlete_fit_free(&fit);
    cpd_athlete_bouts b;
    long long ids[] = {999};
    assert_int_equal(cpd_athlete_bouts_analyse(f->s, ids, 0, NULL, &b, msg), CPD_EUSAGE);
    cpd_athlete_bouts_free(&b);
    assert_int_equal(cpd_athlete_bouts_analyse(f->s, ids, 1, NULL, &b, msg), CPD_ENOENT);
    assert_true(msg[0] != '\0');
    cpd_athlete_bouts_free(&b);
    cpd_gx_test t;
    cpd_athlete a;
    cpd_ramp_ws *w = (cpd_ramp_ws *)&a; /* must be reset */
    cpd_ramp_result *r = calloc(1, sizeof *r);
    assert_int_equal(cpd_athlete_ramp_analyse(f->s, 999, NULL, &t, &a, &w, r, msg), CPD_ENOENT);
    assert_null(w);
    free(r);
}

static void domains_and_json(void **state)
{
    fixture *f = *state;
    cpd_athlete_query q = {.today = 0};
    assert_int_equal(cpd_parse_date("2026-03-20", &q.today), CPD_OK);
    cpd_athlete_domains d;
    char msg[CPD_MSG_MAX] = "";
    q.has_model = 1;
    q.model = CPD_PD_LINEAR_TOTAL;
    assert_int_equal(cpd_athlete_domains_build(f->s, "A01", &q, &d, msg), CPD_OK);
    assert_int_equal(d.older_trials, 3);
    assert_int_equal(d.has_ramp, 0);
    assert_null(d.ramp);
    assert_int_equal(d.model, CPD_PD_LINEAR_TOTAL);
    double cp, wp;
    reference(3, 6, &cp, &wp);
    const cpd_boundary *hs = &d.res.b[CPD_BND_HEAVY_SEVERE];
    assert_true(hs->valid);
    assert_true(fabs(hs->value - cp) <= 1e-9 * cp); /* the heavy-severe boundary is CP */
    assert_false(d.res.b[CPD_BND_MOD_HEAVY].valid); /* no ramp, no lactate test: no GET */
    char *json = NULL;
    assert_int_equal(cpd_athlete_domains_json(&d, &json), CPD_OK);
    assert_non_null(strstr(json, "\"athlete\":\t\"A01\""));
    assert_non_null(strstr(json, "\"model\":\t\"linear-total\""));
    assert_non_null(strstr(json, "\"older_trials_left_out\":\t3"));
    assert_non_null(strstr(json, CPD_ATHLETE_CAUTION));
    assert_null(strstr(json, "nan"));
    free(json);
    cpd_athlete_domains_free(&d);
    assert_int_equal(cpd_athlete_domains_build(f->s, "A02", &q, &d, msg), CPD_ENODATA);
    cpd_athlete_domains_free(&d);
}

static void season(void **state)
{
    fixture *f = *state;
    cpd_athlete_history a;
    char msg[CPD_MSG_MAX] = "";
    assert_int_equal(cpd_athlete_history_build(f->s, "A01", 28, 0, CPD_PD_HYPERBOLIC, &a, msg), CPD_OK);
    assert_int_equal(a.f.n, 6);
    assert_int_equal(a.h->nblocks, 2);
    assert_int_equal(a.h->block[0].n, 3);
    assert_int_equal(a.h->block[1].n, 3);
    cpd_athlete_history_free(&a);
    cpd_athlete_history_free(&a);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(current_block, setup, teardown),
        cmocka_unit_test_setup_teardown(failures_say_why, setup, teardown),
        cmocka_unit_test_setup_teardown(domains_and_json, setup, teardown),
        cmocka_unit_test_setup_teardown(season, setup, teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
