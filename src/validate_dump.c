/* validate_dump.c: an export document's rows through the same validators as every other path
 * into the store (validate_dump.h). Rows are turned into the records the add commands build,
 * then checked by the functions of validate.h. */
#include "cpdomain/validate_dump.h"
#include "cpdomain/status.h"
#include "cpdomain/validate.h"
#include "store_codec.h"

/* The most values one stored series may hold: a week at 1 Hz with room to spare. */
#define CPD_DUMP_MAX_SAMPLES 1e8

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

typedef struct {
    const cpd_dump_table *t;
    size_t row;
    cpd_dump_at *at;
    size_t table;
    char *msg;
} rowctx;

static const cpd_value *val(const rowctx *r, const char *col)
{
    long j = cpd_dump_find_column(r->t, col);
    return j < 0 ? NULL : &r->t->val[r->row * r->t->ncols + (size_t)j];
}

/* Records the position of column col (or the row when col is unknown) and returns CPD_EDATA;
 * msg already holds the reason. */
static int bad(const rowctx *r, const char *col)
{
    long j = col ? cpd_dump_find_column(r->t, col) : -1;
    r->at->table = r->table;
    r->at->row = r->row;
    r->at->col = j < 0 ? 0 : (size_t)j;
    char why[CPD_MSG_MAX];
    snprintf(why, sizeof why, "%s", r->msg);
    snprintf(r->msg, CPD_MSG_MAX, "column '%s': %s", col ? col : "?", why);
    return CPD_EDATA;
}

/* The text of column col ("" for NULL or a missing column). */
static const char *text(const rowctx *r, const char *col)
{
    const cpd_value *v = val(r, col);
    return v && v->type == CPD_VAL_TEXT ? (const char *)v->p : "";
}

/* Copies column col's text into dst (size bytes); CPD_EDATA (positioned) when it does not fit. */
static int copy(const rowctx *r, const char *col, char *dst, size_t size)
{
    const char *s = text(r, col);
    size_t n = strlen(s);
    if (n >= size) {
        snprintf(r->msg, CPD_MSG_MAX, "the text is longer than %zu bytes", size - 1);
        return bad(r, col);
    }
    memcpy(dst, s, n + 1);
    return CPD_OK;
}

/* The date and note columns every dated record has. */
static int date_and_note(const rowctx *r, char *date, size_t date_n, char *note, size_t note_n)
{
    int rc = copy(r, "date", date, date_n);
    return rc ? rc : copy(r, "note", note, note_n);
}

/* Column col as a number: 1 with *x set, 0 for NULL (or a missing column). */
static int num(const rowctx *r, const char *col, double *x)
{
    const cpd_value *v = val(r, col);
    *x = 0;
    if (!v || v->type == CPD_VAL_NULL)
        return 0;
    *x = v->type == CPD_VAL_INTEGER ? (double)v->i : v->type == CPD_VAL_REAL ? v->r : NAN;
    return 1;
}

/* The row of table name whose column "id" equals id, or -1. */
static long find_id(const cpd_dump *d, const char *name, double id, const cpd_dump_table **out)
{
    long k = cpd_dump_find_table(d, name);
    *out = k < 0 ? NULL : &d->table[k];
    long j = k < 0 ? -1 : cpd_dump_find_column(*out, "id");
    if (j < 0)
        return -1;
    for (size_t i = 0; i < (*out)->nrows; i++) {
        const cpd_value *v = &(*out)->val[i * (*out)->ncols + (size_t)j];
        if (v->type == CPD_VAL_INTEGER && (double)v->i == id)
            return (long)i;
    }
    return -1;
}

static int check_date(const rowctx *r, const char *col, int today)
{
    return cpd_validate_date(text(r, col), today, r->msg) ? bad(r, col) : CPD_OK;
}

static int athlete_row(const rowctx *r)
{
    cpd_athlete a;
    memset(&a, 0, sizeof a);
    int rc;
    if ((rc = copy(r, "code", a.code, sizeof a.code)) || (rc = copy(r, "name", a.name, sizeof a.name)) ||
        (rc = copy(r, "sport", a.sport, sizeof a.sport)) || (rc = copy(r, "notes", a.notes, sizeof a.notes)))
        return rc;
    a.has_mass = num(r, "mass_kg", &a.mass_kg);
    const char *field = NULL;
    return cpd_validate_athlete_field(&a, &field, r->msg) ? bad(r, field) : CPD_OK;
}

static int squad_row(const rowctx *r)
{
    char name[CPD_SQUAD_MAX + 1], note[CPD_NOTE_MAX + 1];
    int rc;
    if ((rc = copy(r, "name", name, sizeof name)) || (rc = copy(r, "note", note, sizeof note)))
        return rc;
    return cpd_validate_squad(name, r->msg) ? bad(r, "name") : CPD_OK;
}

static int trial_row(const cpd_dump *d, const rowctx *r, int today)
{
    cpd_trial t;
    memset(&t, 0, sizeof t);
    double aid = 0;
    num(r, "athlete_id", &aid);
    const cpd_dump_table *at = NULL;
    long ar = find_id(d, "athlete", aid, &at);
    /* an unknown athlete is the foreign-key check's to report; the code is checked with its athlete */
    snprintf(t.athlete, sizeof t.athlete, "%s", "X");
    if (ar >= 0) {
        long cj = cpd_dump_find_column(at, "code");
        const cpd_value *cv = cj < 0 ? NULL : &at->val[(size_t)ar * at->ncols + (size_t)cj];
        if (cv && cv->type == CPD_VAL_TEXT && cv->n < sizeof t.athlete)
            memcpy(t.athlete, cv->p, cv->n + 1);
    }
    int rc;
    if ((rc = copy(r, "date", t.date, sizeof t.date)) || (rc = copy(r, "note", t.note, sizeof t.note)) ||
        (rc = copy(r, "exclude_reason", t.exclude_reason, sizeof t.exclude_reason)))
        return rc;
    const char *kind = text(r, "kind");
    t.kind = strcmp(kind, "speed") == 0 ? CPD_TRIAL_SPEED : strcmp(kind, "distance") == 0 ? CPD_TRIAL_DISTANCE : CPD_TRIAL_POWER;
    num(r, "value", &t.value);
    num(r, "duration_s", &t.duration_s);
    const char *field = NULL;
    if (!cpd_validate_trial(&t, today, &field, r->msg))
        return CPD_OK;
    if (strcmp(field, "athlete") == 0)
        field = "athlete_id";
    else if (strcmp(field, "power_w") == 0 || strcmp(field, "speed_m_s") == 0 || strcmp(field, "distance_m") == 0)
        field = "value";
    return bad(r, field);
}

static int gx_test_row(const rowctx *r, int today)
{
    cpd_gx_test t;
    memset(&t, 0, sizeof t);
    int rc = date_and_note(r, t.date, sizeof t.date, t.note, sizeof t.note);
    if (rc)
        return rc;
    t.kind = strcmp(text(r, "kind"), "bout") == 0 ? CPD_GXT_BOUT : CPD_GXT_RAMP;
    t.speed = strcmp(text(r, "modality"), "speed") == 0;
    double n = 0;
    t.has_rate = num(r, "rate_per_min", &t.rate_per_min);
    t.has_start = num(r, "start", &t.start);
    t.has_end = num(r, "end_s", &t.end_s);
    t.has_get_intensity = num(r, "get_intensity_manual", &t.get_intensity_manual);
    t.has_rcp_intensity = num(r, "rcp_intensity_manual", &t.rcp_intensity_manual);
    num(r, "intensity", &t.intensity);
    num(r, "onset_s", &t.onset_s);
    num(r, "n_samples", &n);
    t.n_samples = n >= 0 && n < 1e12 ? (size_t)n : 0;
    t.has_baseline = num(r, "baseline", &t.baseline);
    t.has_mrt = num(r, "mrt_s", &t.mrt_s);
    t.has_get_manual = num(r, "get_vo2_manual", &t.get_vo2_manual);
    t.has_rcp_manual = num(r, "rcp_vo2_manual", &t.rcp_vo2_manual);
    const char *field = NULL;
    return cpd_validate_gx_test(&t, today, &field, r->msg) ? bad(r, field) : CPD_OK;
}

/* A packed BLOB (store_codec.h, db/007): it must decode to exactly want values, all finite. The
 * weights some series were packed with change the values, not whether they decode, so none are
 * given here. */
static int packed_blob(const rowctx *r, const char *col, const cpd_value *v, double want)
{
    if (!(want >= 1 && want <= CPD_DUMP_MAX_SAMPLES)) {
        snprintf(r->msg, CPD_MSG_MAX, "its record states %.0f values (1 to %.0f)", want, (double)CPD_DUMP_MAX_SAMPLES);
        return bad(r, col);
    }
    size_t n = (size_t)want;
    double *x = malloc(n * sizeof *x);
    cpd_codec *z = cpd_codec_alloc();
    int rc = x && z ? cpd_codec_decode(z, v->p, v->n, NULL, n, x) : CPD_ENOMEM;
    size_t i = 0;
    while (rc == CPD_OK && i < n && isfinite(x[i]))
        i++;
    free(x);
    cpd_codec_free(z);
    if (rc == CPD_ENOMEM) {
        snprintf(r->msg, CPD_MSG_MAX, "out of memory");
        return CPD_ENOMEM;
    }
    if (rc == CPD_OK && i == n)
        return CPD_OK;
    if (rc)
        snprintf(r->msg, CPD_MSG_MAX, "%zu bytes that are not a packed series of %zu values", v->n, n);
    else
        snprintf(r->msg, CPD_MSG_MAX, "value %zu is not a finite number", i);
    return bad(r, col);
}

/* A BLOB of samples: exactly want binary64 values, all finite, or (packed = 1) their packed form. */
static int samples_blob(const rowctx *r, const char *col, double want)
{
    const cpd_value *v = val(r, col);
    if (!v || v->type != CPD_VAL_BLOB)
        return CPD_OK; /* the parser has already required a blob where the column is NOT NULL */
    double packed = 0;
    if (num(r, "packed", &packed) && packed == 1)
        return packed_blob(r, col, v, want);
    if ((double)v->n != want * 8) {
        snprintf(r->msg, CPD_MSG_MAX, "%zu bytes, but its record states %.0f values of 8 bytes", v->n, want);
        return bad(r, col);
    }
    for (size_t i = 0; i < v->n / 8; i++) {
        unsigned char b[8];
        memcpy(b, v->p + 8 * i, 8);
        uint64_t u = 0;
        for (int k = 7; k >= 0; k--)
            u = u << 8 | b[k]; /* little-endian, as the store writes them */
        double x;
        memcpy(&x, &u, sizeof x);
        if (!isfinite(x)) {
            snprintf(r->msg, CPD_MSG_MAX, "value %zu is not a finite number", i);
            return bad(r, col);
        }
    }
    return CPD_OK;
}

/* The n_samples of the record that table name's row with this id holds, or -1. */
static double parent_samples(const cpd_dump *d, const char *name, const char *count_col, double id)
{
    const cpd_dump_table *t = NULL;
    long i = find_id(d, name, id, &t);
    if (i < 0)
        return -1;
    rowctx p = {t, (size_t)i, NULL, 0, NULL};
    double n = -1;
    return num(&p, count_col, &n) ? n : -1;
}

static int channel_row(const cpd_dump *d, const rowctx *r, const char *parent, const char *fk)
{
    double id = 0;
    num(r, fk, &id);
    double n = parent_samples(d, parent, "n_samples", id);
    return n < 0 ? CPD_OK : samples_blob(r, "data", n);
}

static int lactate_stage_row(const cpd_dump *d, const rowctx *r)
{
    double id = 0, intensity = 0, lactate = 0, hr = 0, st = 0;
    num(r, "test_id", &id);
    const cpd_dump_table *lt = NULL;
    long i = find_id(d, "lactate_test", id, &lt);
    int speed = 0;
    if (i >= 0) {
        rowctx p = {lt, (size_t)i, NULL, 0, NULL};
        speed = strcmp(text(&p, "modality"), "speed") == 0;
    }
    num(r, "intensity", &intensity);
    num(r, "lactate_mmol_l", &lactate);
    int has_hr = num(r, "hr_bpm", &hr), has_st = num(r, "stage_s", &st);
    const char *field = NULL;
    return cpd_validate_lactate_stage(speed, intensity, lactate, has_hr, hr, has_st, st, &field, r->msg) ? bad(r, field)
                                                                                                         : CPD_OK;
}

static int session_row(const rowctx *r, int today)
{
    cpd_session_rec s;
    memset(&s, 0, sizeof s);
    int rc = date_and_note(r, s.date, sizeof s.date, s.note, sizeof s.note);
    if (rc)
        return rc;
    s.speed = strcmp(text(r, "modality"), "speed") == 0;
    double n = 0;
    num(r, "n_samples", &n);
    s.n_samples = n >= 0 && n < 1e12 ? (size_t)n : 0;
    num(r, "spike_limit", &s.spike_limit);
    num(r, "test_start_s", &s.test_start_s);
    num(r, "elapsed_s", &s.elapsed_s);
    num(r, "spike_max", &s.spike_max);
    num(r, "mean_value", &s.mean_value);
    num(r, "max_value", &s.max_value);
    s.has_allout = num(r, "end_value", &s.end_value);
    num(r, "work_above_end", &s.work_above_end);
    const char *field = NULL;
    return cpd_validate_session_rec(&s, today, &field, r->msg) ? bad(r, field) : CPD_OK;
}

static int curve_row(const rowctx *r)
{
    double n = 0;
    num(r, "n_points", &n);
    int rc = samples_blob(r, "value", n);
    return rc ? rc : samples_blob(r, "start_s", n);
}

/* The season curve (db/007): four packed series of n_points values. */
static int season_row(const rowctx *r)
{
    double n = 0;
    num(r, "n_points", &n);
    static const char *const col[] = {"value", "start_s", "session", "date_days"};
    for (size_t k = 0; k < sizeof col / sizeof col[0]; k++) {
        const cpd_value *v = val(r, col[k]);
        int rc = v && v->type == CPD_VAL_BLOB ? packed_blob(r, col[k], v, n) : CPD_OK;
        if (rc)
            return rc;
    }
    return CPD_OK;
}

static int any_row(const cpd_dump *d, const rowctx *r, int today)
{
    const char *name = r->t->name;
    for (size_t j = 0; j < r->t->ncols; j++) {
        const cpd_value *v = &r->t->val[r->row * r->t->ncols + j];
        if (v->type == CPD_VAL_REAL && !isfinite(v->r)) {
            snprintf(r->msg, CPD_MSG_MAX, "%g is not a finite number", v->r);
            return bad(r, r->t->col[j].name);
        }
    }
    if (strcmp(name, "athlete") == 0)
        return athlete_row(r);
    if (strcmp(name, "squad") == 0)
        return squad_row(r);
    if (strcmp(name, "trial") == 0)
        return trial_row(d, r, today);
    if (strcmp(name, "fit_run") == 0) {
        int rc = check_date(r, "date_from", today);
        return rc ? rc : check_date(r, "date_to", today);
    }
    if (strcmp(name, "gx_test") == 0)
        return gx_test_row(r, today);
    if (strcmp(name, "gx_channel") == 0)
        return channel_row(d, r, "gx_test", "test_id");
    if (strcmp(name, "lactate_test") == 0) {
        char date[11], note[CPD_NOTE_MAX + 1];
        int rc = date_and_note(r, date, sizeof date, note, sizeof note);
        return rc ? rc : check_date(r, "date", today);
    }
    if (strcmp(name, "lactate_stage") == 0)
        return lactate_stage_row(d, r);
    if (strcmp(name, "session") == 0)
        return session_row(r, today);
    if (strcmp(name, "session_channel") == 0)
        return channel_row(d, r, "session", "session_id");
    if (strcmp(name, "session_curve") == 0)
        return curve_row(r);
    if (strcmp(name, "session_season") == 0)
        return season_row(r);
    return CPD_OK;
}

int cpd_validate_dump(const cpd_dump *d, int today_days, cpd_dump_at *at, char *msg)
{
    msg[0] = '\0';
    for (size_t k = 0; k < d->ntables; k++)
        for (size_t i = 0; i < d->table[k].nrows; i++) {
            rowctx r = {&d->table[k], i, at, k, msg};
            if (any_row(d, &r, today_days))
                return CPD_EDATA;
        }
    return CPD_OK;
}
