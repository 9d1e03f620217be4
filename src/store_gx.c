/* store_gx.c: gas-exchange tests (ramps, bouts) with their samples as one BLOB per channel, and
 * lactate step tests with one row per stage. */
#include "store_int.h"

#include <stdlib.h>
#include <string.h>

static const char *kind_sql(cpd_gxt_kind k)
{
    return k == CPD_GXT_BOUT ? "bout" : "ramp";
}

static int add_channel(cpd_store *s, cpd_stmt *st, int64_t id, const char *name, const double *v, size_t n,
                       unsigned char *buf)
{
    cpd_st_encode_f64(v, n, buf);
    cpd_db_reset(st);
    cpd_db_bind_int64(st, 1, id);
    cpd_db_bind_text(st, 2, name, (size_t)-1);
    cpd_db_bind_blob(st, 3, buf, (int)(8 * n));
    if (cpd_db_step(st) != CPD_DB_DONE)
        return cpd_st_fail(s, "storing samples");
    return CPD_OK;
}

/* The columns of db/005_gx_protocol.sql for the test just inserted. */
static int add_protocol(cpd_store *s, const cpd_gx_test *t, int64_t id)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s,
                            "UPDATE gx_test SET protocol = ?2, end_s = ?3, get_intensity_manual = ?4, "
                            "rcp_intensity_manual = ?5, hr_dropped = ?6, blank_cells = ?7 WHERE id = ?1",
                            &st);
    if (rc)
        return rc;
    int ramp = t->kind == CPD_GXT_RAMP;
    cpd_db_bind_int64(st, 1, id);
    if (ramp && t->protocol)
        cpd_db_bind_text(st, 2, t->protocol == 2 ? "steps" : "ramp", (size_t)-1);
    else
        cpd_db_bind_null(st, 2);
    cpd_st_bind_opt(st, 3, t->has_end, t->end_s);
    cpd_st_bind_opt(st, 4, ramp && t->has_get_intensity, t->get_intensity_manual);
    cpd_st_bind_opt(st, 5, ramp && t->has_rcp_intensity, t->rcp_intensity_manual);
    cpd_db_bind_int64(st, 6, (int64_t)t->hr_dropped);
    cpd_db_bind_int64(st, 7, (int64_t)t->blank_cells);
    if (cpd_db_step(st) != CPD_DB_DONE)
        rc = cpd_st_fail(s, "storing a test");
    cpd_db_finalize(st);
    return rc;
}

int cpd_store_gx_add(cpd_store *s, const cpd_gx_test *t, const cpd_gx_series *series, int64_t *id)
{
    int64_t aid = 0;
    int rc = cpd_st_athlete_id(s, t->athlete, &aid);
    if (rc)
        return rc;
    if (series->n == 0 || series->n > 50000000)
        return cpd_st_err(s, CPD_EUSAGE, "a test needs between 1 and 50 million samples");
    unsigned char *buf = malloc(8 * series->n);
    if (!buf)
        return CPD_ENOMEM;
    cpd_stmt *st = NULL;
    if ((rc = cpd_st_savepoint(s))) {
        free(buf);
        return rc;
    }
    rc = cpd_st_prepare(s,
                        "INSERT INTO gx_test (athlete_id, kind, date, modality, rate_per_min, start, intensity, baseline, "
                        "onset_s, mrt_s, get_vo2_manual, rcp_vo2_manual, n_samples, note, source_file, imported_at) "
                        "VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15, "
                        "?16) RETURNING id",
                        &st);
    if (rc)
        goto done;
    int ramp = t->kind == CPD_GXT_RAMP;
    cpd_db_bind_int64(st, 1, aid);
    cpd_db_bind_text(st, 2, kind_sql(t->kind), (size_t)-1);
    cpd_db_bind_text(st, 3, t->date, (size_t)-1);
    cpd_db_bind_text(st, 4, t->speed ? "speed" : "power", (size_t)-1);
    cpd_st_bind_opt(st, 5, ramp && (t->has_rate || t->rate_per_min > 0), t->rate_per_min);
    cpd_st_bind_opt(st, 6, ramp && (t->has_start || t->start > 0), t->start);
    cpd_st_bind_opt(st, 7, !ramp, t->intensity);
    cpd_st_bind_opt(st, 8, t->has_baseline, t->baseline);
    cpd_db_bind_double(st, 9, t->onset_s);
    cpd_st_bind_opt(st, 10, ramp && t->has_mrt, t->mrt_s);
    cpd_st_bind_opt(st, 11, ramp && t->has_get_manual, t->get_vo2_manual);
    cpd_st_bind_opt(st, 12, ramp && t->has_rcp_manual, t->rcp_vo2_manual);
    cpd_db_bind_int64(st, 13, (int64_t)series->n);
    cpd_db_bind_text(st, 14, t->note, (size_t)-1);
    cpd_st_bind_text(st, 15, t->source_file, 1);
    cpd_st_bind_stamp(st, 16, t->imported_at);
    if (cpd_db_step(st) != CPD_DB_ROW) {
        rc = cpd_st_fail(s, "storing a test");
        goto done;
    }
    *id = cpd_db_int64(st, 0);
    cpd_db_finalize(st);
    st = NULL;
    if ((rc = add_protocol(s, t, *id)))
        goto done;
    if ((rc = cpd_st_prepare(s, "INSERT INTO gx_channel (test_id, channel, data) VALUES (?1, ?2, ?3)", &st)))
        goto done;
    if ((rc = add_channel(s, st, *id, "time_s", series->t_s, series->n, buf)))
        goto done;
    for (int c = 0; c < CPD_GX_NCHAN; c++)
        if (series->ch[c] && (rc = add_channel(s, st, *id, cpd_gx_channel_name(c), series->ch[c], series->n, buf)))
            goto done;
done:
    cpd_db_finalize(st);
    free(buf);
    return cpd_st_release(s, rc);
}

#define GX_COLS                                                                                                \
    "t.id, a.code, t.kind, t.date, t.modality, t.rate_per_min, t.start, t.intensity, t.baseline, t.onset_s, " \
    "t.mrt_s, t.get_vo2_manual, t.rcp_vo2_manual, t.n_samples, t.note, t.source_file, t.imported_at, "    \
    "t.protocol, t.end_s, t.get_intensity_manual, t.rcp_intensity_manual, t.hr_dropped, t.blank_cells"

static void read_test(cpd_stmt *st, cpd_gx_test *t)
{
    memset(t, 0, sizeof *t);
    t->id = cpd_db_int64(st, 0);
    cpd_st_text(st, 1, t->athlete, sizeof t->athlete);
    const char *k = cpd_db_text(st, 2);
    t->kind = k && strcmp((const char *)k, "bout") == 0 ? CPD_GXT_BOUT : CPD_GXT_RAMP;
    cpd_st_text(st, 3, t->date, sizeof t->date);
    const char *m = cpd_db_text(st, 4);
    t->speed = m && strcmp((const char *)m, "speed") == 0;
    t->rate_per_min = cpd_st_opt(st, 5, &t->has_rate);
    t->start = cpd_st_opt(st, 6, &t->has_start);
    t->intensity = cpd_st_opt(st, 7, NULL);
    t->baseline = cpd_st_opt(st, 8, &t->has_baseline);
    t->onset_s = cpd_db_double(st, 9);
    t->mrt_s = cpd_st_opt(st, 10, &t->has_mrt);
    t->get_vo2_manual = cpd_st_opt(st, 11, &t->has_get_manual);
    t->rcp_vo2_manual = cpd_st_opt(st, 12, &t->has_rcp_manual);
    t->n_samples = (size_t)cpd_db_int64(st, 13);
    cpd_st_text(st, 14, t->note, sizeof t->note);
    cpd_st_text(st, 15, t->source_file, sizeof t->source_file);
    cpd_st_text(st, 16, t->imported_at, sizeof t->imported_at);
    const char *p = cpd_db_text(st, 17);
    t->protocol = !p ? 0 : strcmp((const char *)p, "steps") == 0 ? 2 : 1;
    t->end_s = cpd_st_opt(st, 18, &t->has_end);
    t->get_intensity_manual = cpd_st_opt(st, 19, &t->has_get_intensity);
    t->rcp_intensity_manual = cpd_st_opt(st, 20, &t->has_rcp_intensity);
    t->hr_dropped = (size_t)cpd_db_int64(st, 21);
    t->blank_cells = (size_t)cpd_db_int64(st, 22);
}

static int load_series(cpd_store *s, const cpd_gx_test *t, cpd_gx_series **out)
{
    *out = NULL;
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT channel, data FROM gx_channel WHERE test_id = ?1", &st);
    if (rc)
        return rc;
    cpd_db_bind_int64(st, 1, t->id);
    /* first pass: which channels are there */
    unsigned mask = 0;
    int r, has_time = 0;
    while ((r = cpd_db_step(st)) == CPD_DB_ROW) {
        const char *name = cpd_db_text(st, 0);
        if (name && strcmp(name, "time_s") == 0)
            has_time = 1;
        for (int c = 0; c < CPD_GX_NCHAN; c++)
            if (name && strcmp(name, cpd_gx_channel_name(c)) == 0)
                mask |= CPD_GX_BIT(c);
    }
    if (r != CPD_DB_DONE || !has_time) {
        rc = r != CPD_DB_DONE ? cpd_st_fail(s, "reading samples") : cpd_st_err(s, CPD_ESTORE, "test %lld has no time channel", (long long)t->id);
        goto done;
    }
    cpd_gx_series *g = cpd_gx_alloc(t->n_samples, mask);
    if (!g) {
        rc = CPD_ENOMEM;
        goto done;
    }
    cpd_db_reset(st);
    while ((r = cpd_db_step(st)) == CPD_DB_ROW) {
        const char *name = cpd_db_text(st, 0);
        const void *blob = cpd_db_blob(st, 1);
        size_t bytes = (size_t)cpd_db_bytes(st, 1);
        if (bytes != 8 * t->n_samples) {
            rc = cpd_st_err(s, CPD_ESTORE, "test %lld: channel %s has %zu bytes, expected %zu", (long long)t->id,
                            name ? name : "?", bytes, 8 * t->n_samples);
            cpd_gx_free(g);
            goto done;
        }
        double *dst = NULL;
        if (strcmp(name, "time_s") == 0)
            dst = g->t_s;
        for (int c = 0; c < CPD_GX_NCHAN && !dst; c++)
            if (strcmp(name, cpd_gx_channel_name(c)) == 0)
                dst = g->ch[c];
        if (dst && bytes)
            cpd_st_decode_f64(blob, t->n_samples, dst);
    }
    if (r != CPD_DB_DONE) {
        rc = cpd_st_fail(s, "reading samples");
        cpd_gx_free(g);
        goto done;
    }
    *out = g;
done:
    cpd_db_finalize(st);
    return rc;
}

int cpd_store_gx_get(cpd_store *s, int64_t id, cpd_gxt_kind kind, cpd_gx_test *t, cpd_gx_series **series)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT " GX_COLS " FROM gx_test t JOIN athlete a ON a.id = t.athlete_id WHERE t.id = ?1 AND t.kind = ?2", &st);
    if (rc)
        return rc;
    cpd_db_bind_int64(st, 1, id);
    cpd_db_bind_text(st, 2, kind_sql(kind), (size_t)-1);
    int r = cpd_db_step(st);
    if (r == CPD_DB_ROW)
        read_test(st, t);
    else if (r == CPD_DB_DONE)
        rc = cpd_st_err(s, CPD_ENOENT, "no %s with id %lld", kind_sql(kind), (long long)id);
    else
        rc = cpd_st_fail(s, "reading a test");
    cpd_db_finalize(st);
    if (!rc && series)
        rc = load_series(s, t, series);
    return rc;
}

static void read_test_row(cpd_stmt *st, void *dst)
{
    read_test(st, dst);
}

int cpd_store_gx_list(cpd_store *s, const char *code, cpd_gxt_kind kind, cpd_gx_test **out, size_t *n)
{
    *out = NULL;
    *n = 0;
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s,
                            "SELECT " GX_COLS " FROM gx_test t JOIN athlete a ON a.id = t.athlete_id "
                            "WHERE (CAST(?1 AS TEXT) IS NULL OR a.code = ?1) AND t.kind = ?2 ORDER BY a.code, t.date, t.id",
                            &st);
    if (rc)
        return rc;
    cpd_st_bind_text(st, 1, code, 0);
    cpd_db_bind_text(st, 2, kind_sql(kind), (size_t)-1);
    void *v = NULL;
    rc = cpd_st_collect(s, st, sizeof **out, read_test_row, &v, n, "tests");
    cpd_db_finalize(st);
    *out = v;
    return rc;
}

int cpd_store_gx_set_manual(cpd_store *s, int64_t id, int which, int has, double vo2_ml_min)
{
    cpd_stmt *st = NULL;
    static const char *const sql[4] = {
        "UPDATE gx_test SET get_vo2_manual = ?2, get_intensity_manual = NULL WHERE id = ?1 AND kind = 'ramp'",
        "UPDATE gx_test SET rcp_vo2_manual = ?2, rcp_intensity_manual = NULL WHERE id = ?1 AND kind = 'ramp'",
        "UPDATE gx_test SET get_intensity_manual = ?2, get_vo2_manual = NULL WHERE id = ?1 AND kind = 'ramp'",
        "UPDATE gx_test SET rcp_intensity_manual = ?2, rcp_vo2_manual = NULL WHERE id = ?1 AND kind = 'ramp'",
    };
    if (which < 0 || which > 3)
        return CPD_EUSAGE;
    int rc = cpd_st_prepare(s, sql[which], &st);
    if (rc)
        return rc;
    cpd_db_bind_int64(st, 1, id);
    cpd_st_bind_opt(st, 2, has, vo2_ml_min);
    if (cpd_db_step(st) != CPD_DB_DONE)
        rc = cpd_st_fail(s, "updating a ramp");
    else if (s->changes == 0)
        rc = cpd_st_err(s, CPD_ENOENT, "no ramp with id %lld", (long long)id);
    cpd_db_finalize(st);
    return rc;
}

int cpd_store_gx_remove(cpd_store *s, int64_t id, cpd_gxt_kind kind)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "DELETE FROM gx_test WHERE id = ?1 AND kind = ?2", &st);
    if (rc)
        return rc;
    cpd_db_bind_int64(st, 1, id);
    cpd_db_bind_text(st, 2, kind_sql(kind), (size_t)-1);
    if (cpd_db_step(st) != CPD_DB_DONE)
        rc = cpd_st_fail(s, "removing a test");
    else if (s->changes == 0)
        rc = cpd_st_err(s, CPD_ENOENT, "no %s with id %lld", kind_sql(kind), (long long)id);
    cpd_db_finalize(st);
    return rc;
}

/* ---- lactate ---- */

int cpd_store_lactate_add(cpd_store *s, const cpd_lactate_test *t, int64_t *id)
{
    int64_t aid = 0;
    int rc = cpd_st_athlete_id(s, t->athlete, &aid);
    if (rc)
        return rc;
    if ((rc = cpd_st_savepoint(s)))
        return rc;
    cpd_stmt *st = NULL;
    rc = cpd_st_prepare(s,
                        "INSERT INTO lactate_test (athlete_id, date, modality, note, source_file, imported_at) VALUES "
                        "(?1, ?2, ?3, ?4, ?5, ?6) RETURNING id",
                        &st);
    if (rc)
        goto done;
    cpd_db_bind_int64(st, 1, aid);
    cpd_db_bind_text(st, 2, t->date, (size_t)-1);
    cpd_db_bind_text(st, 3, t->speed ? "speed" : "power", (size_t)-1);
    cpd_db_bind_text(st, 4, t->note, (size_t)-1);
    cpd_st_bind_text(st, 5, t->source_file, 1);
    cpd_st_bind_stamp(st, 6, t->imported_at);
    if (cpd_db_step(st) != CPD_DB_ROW) {
        rc = cpd_st_fail(s, "storing a lactate test");
        goto done;
    }
    *id = cpd_db_int64(st, 0);
    cpd_db_finalize(st);
    st = NULL;
    if ((rc = cpd_st_prepare(s,
                             "INSERT INTO lactate_stage (test_id, stage, intensity, lactate_mmol_l, hr_bpm, stage_s) "
                             "VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
                             &st)))
        goto done;
    for (size_t i = 0; i < t->n; i++) {
        cpd_db_reset(st);
        cpd_db_bind_int64(st, 1, *id);
        cpd_db_bind_int64(st, 2, (int64_t)(i + 1));
        cpd_db_bind_double(st, 3, t->intensity[i]);
        cpd_db_bind_double(st, 4, t->lactate[i]);
        cpd_st_bind_opt(st, 5, t->has_hr, t->hr[i]);
        cpd_st_bind_opt(st, 6, t->has_stage_s, t->stage_s[i]);
        if (cpd_db_step(st) != CPD_DB_DONE) {
            rc = cpd_st_fail(s, "storing a lactate stage");
            goto done;
        }
    }
done:
    cpd_db_finalize(st);
    return cpd_st_release(s, rc);
}

static int load_stages(cpd_store *s, cpd_lactate_test *t)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s,
                            "SELECT intensity, lactate_mmol_l, hr_bpm, stage_s FROM lactate_stage WHERE test_id = ?1 "
                            "ORDER BY stage",
                            &st);
    if (rc)
        return rc;
    cpd_db_bind_int64(st, 1, t->id);
    t->n = 0;
    t->has_hr = t->has_stage_s = 1;
    int r;
    while ((r = cpd_db_step(st)) == CPD_DB_ROW && t->n < CPD_LACTATE_STAGES_MAX) {
        int h = 0, g = 0;
        t->intensity[t->n] = cpd_db_double(st, 0);
        t->lactate[t->n] = cpd_db_double(st, 1);
        t->hr[t->n] = cpd_st_opt(st, 2, &h);
        t->stage_s[t->n] = cpd_st_opt(st, 3, &g);
        t->has_hr &= h;
        t->has_stage_s &= g;
        t->n++;
    }
    if (r != CPD_DB_DONE && r != CPD_DB_ROW)
        rc = cpd_st_fail(s, "reading lactate stages");
    if (t->n == 0)
        t->has_hr = t->has_stage_s = 0;
    cpd_db_finalize(st);
    return rc;
}

#define LAC_COLS "t.id, a.code, t.date, t.modality, t.note, t.source_file, t.imported_at"

static void read_lactate(cpd_stmt *st, cpd_lactate_test *t)
{
    memset(t, 0, sizeof *t);
    t->id = cpd_db_int64(st, 0);
    cpd_st_text(st, 1, t->athlete, sizeof t->athlete);
    cpd_st_text(st, 2, t->date, sizeof t->date);
    const char *m = cpd_db_text(st, 3);
    t->speed = m && strcmp((const char *)m, "speed") == 0;
    cpd_st_text(st, 4, t->note, sizeof t->note);
    cpd_st_text(st, 5, t->source_file, sizeof t->source_file);
    cpd_st_text(st, 6, t->imported_at, sizeof t->imported_at);
}

int cpd_store_lactate_get(cpd_store *s, int64_t id, cpd_lactate_test *t)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT " LAC_COLS " FROM lactate_test t JOIN athlete a ON a.id = t.athlete_id WHERE t.id = ?1", &st);
    if (rc)
        return rc;
    cpd_db_bind_int64(st, 1, id);
    int r = cpd_db_step(st);
    if (r == CPD_DB_ROW)
        read_lactate(st, t);
    else if (r == CPD_DB_DONE)
        rc = cpd_st_err(s, CPD_ENOENT, "no lactate test with id %lld", (long long)id);
    else
        rc = cpd_st_fail(s, "reading a lactate test");
    cpd_db_finalize(st);
    if (!rc)
        rc = load_stages(s, t);
    return rc;
}

static void read_lactate_row(cpd_stmt *st, void *dst)
{
    read_lactate(st, dst);
}

int cpd_store_lactate_list(cpd_store *s, const char *code, cpd_lactate_test **out, size_t *n)
{
    *out = NULL;
    *n = 0;
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s,
                            "SELECT " LAC_COLS " FROM lactate_test t JOIN athlete a ON a.id = t.athlete_id "
                            "WHERE CAST(?1 AS TEXT) IS NULL OR a.code = ?1 ORDER BY a.code, t.date, t.id",
                            &st);
    if (rc)
        return rc;
    cpd_st_bind_text(st, 1, code, 0);
    void *v = NULL;
    rc = cpd_st_collect(s, st, sizeof **out, read_lactate_row, &v, n, "lactate tests");
    cpd_db_finalize(st);
    cpd_lactate_test *t = v;
    for (size_t i = 0; !rc && i < *n; i++)
        rc = load_stages(s, &t[i]);
    if (rc) {
        free(t);
        *n = 0;
        return rc;
    }
    *out = t;
    return CPD_OK;
}
