/* store_session.c: recorded sessions and 3-minute all-out tests: the file's samples as one BLOB
 * per channel, the cleaning report as columns, and each session's mean-maximal curve as BLOBs. */
#include "cpdomain/units.h"
#include "store_codec.h"
#include "store_int.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static const char *kind_sql(int allout)
{
    return allout ? "allout" : "session";
}

static void hash_text(uint64_t h, char buf[17])
{
    snprintf(buf, 17, "%016llx", (unsigned long long)h);
}

/* The channels of a session's samples, in storage order; the value channel is named by modality. */
#define NCHAN 5

static const char *channel_name(size_t k, int speed)
{
    static const char *const names[NCHAN] = {"time_s", "power_w", "hr_bpm", "cadence_rpm", "distance_m"};
    return k == 1 && speed ? "speed_m_s" : names[k];
}

static const double *channel_data(const cpd_session_samples *x, size_t k)
{
    const double *const v[NCHAN] = {x->time_s, x->value, x->hr_bpm, x->cadence_rpm, x->distance_m};
    return v[k];
}

static double **channel_slot(cpd_session_samples *x, size_t k)
{
    double **const v[NCHAN] = {&x->time_s, &x->value, &x->hr_bpm, &x->cadence_rpm, &x->distance_m};
    return v[k];
}

/* Encodes n values (weights w or NULL, store_codec.h) into buf (cpd_codec_bound(n) bytes) and
 * binds them as a BLOB at idx. */
static int bind_packed(cpd_store *s, cpd_stmt *st, int idx, const double *v, const double *w, size_t n,
                       unsigned char *buf)
{
    size_t len = 0;
    cpd_codec *z = cpd_st_codec(s);
    int rc = z ? cpd_codec_encode(z, v, w, n, buf, cpd_codec_bound(n), &len) : CPD_ENOMEM;
    if (rc)
        return cpd_st_err(s, rc, "encoding %zu values for the store: %s", n, cpd_strerror(rc));
    cpd_db_bind_blob(st, idx, buf, (int)len);
    return CPD_OK;
}

/* Reads BLOB column col as n values into out: the packed encoding (weights w or NULL) or, from
 * a store written before 007, n binary64 values. */
static int column_series(cpd_store *s, cpd_stmt *st, int col, int packed, const double *w, size_t n, double *out)
{
    const void *blob = cpd_db_blob(st, col);
    size_t bytes = (size_t)cpd_db_bytes(st, col);
    if (!packed) {
        if (bytes != 8 * n)
            return CPD_EDATA;
        if (n)
            cpd_st_decode_f64(blob, n, out);
        return CPD_OK;
    }
    cpd_codec *z = cpd_st_codec(s);
    if (!z)
        return CPD_ENOMEM;
    return n ? cpd_codec_decode(z, blob, bytes, w, n, out) : (bytes == 0 ? CPD_OK : CPD_EDATA);
}

static int season_join(cpd_store *s, int64_t aid, int speed, const cpd_mmp_curve *c, int64_t id, const char *date);

static int put_blob(cpd_store *s, cpd_stmt *st, int64_t id, const char *name, const double *v, size_t n,
                    unsigned char *buf)
{
    cpd_db_reset(st);
    cpd_db_bind_int64(st, 1, id);
    cpd_db_bind_text(st, 2, name, (size_t)-1);
    int rc = bind_packed(s, st, 3, v, NULL, n, buf);
    if (rc)
        return rc;
    if (cpd_db_step(st) != CPD_DB_DONE)
        return cpd_st_fail(s, "storing session samples");
    return CPD_OK;
}

static void bind_opt(cpd_stmt *st, int idx, int valid, double v)
{
    if (valid)
        cpd_db_bind_double(st, idx, v);
    else
        cpd_db_bind_null(st, idx);
}

int cpd_store_session_add(cpd_store *s, const cpd_session_rec *r, const cpd_session_samples *x,
                          const cpd_mmp_curve *curve, int64_t *id)
{
    int64_t aid = 0;
    int rc = cpd_st_athlete_id(s, r->athlete, &aid);
    if (rc)
        return rc;
    /* 50 million samples is 400 MB per channel: far beyond the 7-day limit of session.h at 1 Hz */
    if (x->n < 2 || x->n > 50000000 || !x->time_s || !x->value)
        return cpd_st_err(s, CPD_EUSAGE, "a session needs between 2 and 50 million samples");
    if (curve && curve->n > CPD_MMP_NMAX)
        return cpd_st_err(s, CPD_EUSAGE, "a curve has at most %zu points", (size_t)CPD_MMP_NMAX);
    int64_t dup = 0;
    if ((rc = cpd_store_session_find(s, r->athlete, r->allout, r->hash, &dup, NULL)))
        return rc;
    if (dup)
        return cpd_st_err(s, CPD_EEXIST, "the same file is stored as %s %lld", r->allout ? "all-out test" : "session",
                          (long long)dup);
    size_t most = x->n > (curve ? curve->n : 0) ? x->n : curve->n;
    unsigned char *buf = malloc(cpd_codec_bound(most));
    if (!buf)
        return CPD_ENOMEM;
    cpd_stmt *st = NULL;
    if ((rc = cpd_st_savepoint(s))) {
        free(buf);
        return rc;
    }
    rc = cpd_st_prepare(s,
                        "INSERT INTO session (athlete_id, kind, date, modality, content_hash, n_samples, spike_limit, "
                        "test_start_s, elapsed_s, recorded_s, missing_s, longest_s, n_segments, n_dropouts, dropout_s, "
                        "filled_s, n_splits, n_spikes, spike_max, mean_value, max_value, end_value, work_above_end, "
                        "note, source_file, imported_at) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, "
                        "?13, ?14, ?15, ?16, ?17, ?18, ?19, ?20, ?21, ?22, ?23, ?24, ?25, "
                        "?26) RETURNING id",
                        &st);
    if (rc)
        goto done;
    char h[17];
    hash_text(r->hash, h);
    cpd_db_bind_int64(st, 1, aid);
    cpd_db_bind_text(st, 2, kind_sql(r->allout), (size_t)-1);
    cpd_db_bind_text(st, 3, r->date, (size_t)-1);
    cpd_db_bind_text(st, 4, r->speed ? "speed" : "power", (size_t)-1);
    cpd_db_bind_text(st, 5, h, (size_t)-1);
    cpd_db_bind_int64(st, 6, (int64_t)x->n);
    cpd_db_bind_double(st, 7, r->spike_limit);
    cpd_db_bind_double(st, 8, r->test_start_s);
    cpd_db_bind_double(st, 9, r->elapsed_s);
    const size_t counts[] = {r->recorded_s, r->missing_s, r->longest_s, r->n_segments, r->n_dropouts,
                             r->dropout_s,  r->filled_s,  r->n_splits,  r->n_spikes};
    for (int k = 0; k < 9; k++)
        cpd_db_bind_int64(st, 10 + k, (int64_t)counts[k]);
    cpd_db_bind_double(st, 19, r->spike_max);
    cpd_db_bind_double(st, 20, r->mean_value);
    cpd_db_bind_double(st, 21, r->max_value);
    bind_opt(st, 22, r->has_allout, r->end_value);
    bind_opt(st, 23, r->has_allout, r->work_above_end);
    cpd_db_bind_text(st, 24, r->note, (size_t)-1);
    cpd_st_bind_text(st, 25, r->source_file, 1);
    cpd_st_bind_stamp(st, 26, r->imported_at);
    if (cpd_db_step(st) != CPD_DB_ROW) {
        rc = cpd_st_fail(s, "storing a session");
        goto done;
    }
    *id = cpd_db_int64(st, 0);
    cpd_db_finalize(st);
    st = NULL;
    if ((rc = cpd_st_prepare(s, "INSERT INTO session_channel (session_id, channel, data, packed) VALUES (?1, ?2, ?3, 1)", &st)))
        goto done;
    for (size_t k = 0; k < NCHAN; k++)
        if (channel_data(x, k) && (rc = put_blob(s, st, *id, channel_name(k, r->speed), channel_data(x, k), x->n, buf)))
            goto done;
    cpd_db_finalize(st);
    st = NULL;
    if (!curve || curve->n == 0)
        goto done;
    if ((rc = cpd_st_prepare(s,
                             "INSERT INTO session_curve (session_id, n_points, fine_s, step_s, value, start_s, packed) "
                             "VALUES (?1, ?2, ?3, ?4, ?5, ?6, 1)",
                             &st)))
        goto done;
    cpd_db_bind_int64(st, 1, *id);
    cpd_db_bind_int64(st, 2, (int64_t)curve->n);
    cpd_db_bind_int64(st, 3, CPD_MMP_FINE_S);
    cpd_db_bind_int64(st, 4, CPD_MMP_COARSE_STEP_S);
    unsigned char *sb = malloc(cpd_codec_bound(curve->n));
    if (!sb) {
        rc = CPD_ENOMEM;
        goto done;
    }
    /* the values weighted by their durations: a mean of whole watts is kept as its whole sum */
    if (!(rc = bind_packed(s, st, 5, curve->value, curve->duration_s, curve->n, buf)) &&
        !(rc = bind_packed(s, st, 6, curve->start_s, NULL, curve->n, sb)) && cpd_db_step(st) != CPD_DB_DONE)
        rc = cpd_st_fail(s, "storing a session's curve");
    free(sb);
    if (!rc && !r->allout)
        rc = season_join(s, aid, r->speed, curve, *id, r->date);
done:
    cpd_db_finalize(st);
    free(buf);
    return cpd_st_release(s, rc);
}

int cpd_store_session_find(cpd_store *s, const char *code, int allout, uint64_t hash, int64_t *id, char *found_code)
{
    *id = 0;
    if (found_code)
        found_code[0] = '\0';
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s,
                            "SELECT s.id, a.code FROM session s JOIN athlete a ON a.id = s.athlete_id "
                            "WHERE s.content_hash = ?1 AND s.kind = ?2 AND (CAST(?3 AS TEXT) IS NULL OR a.code = ?3) "
                            "ORDER BY s.id LIMIT 1",
                            &st);
    if (rc)
        return rc;
    char h[17];
    hash_text(hash, h);
    cpd_db_bind_text(st, 1, h, (size_t)-1);
    cpd_db_bind_text(st, 2, kind_sql(allout), (size_t)-1);
    cpd_st_bind_text(st, 3, code, 0);
    int r = cpd_db_step(st);
    if (r == CPD_DB_ROW) {
        *id = cpd_db_int64(st, 0);
        if (found_code)
            cpd_st_text(st, 1, found_code, CPD_CODE_MAX + 1);
    } else if (r != CPD_DB_DONE)
        rc = cpd_st_fail(s, "looking for a stored file");
    cpd_db_finalize(st);
    return rc;
}

#define SESSION_COLS                                                                                             \
    "s.id, a.code, s.kind, s.date, s.modality, s.content_hash, s.n_samples, s.spike_limit, s.test_start_s, "    \
    "s.elapsed_s, s.recorded_s, s.missing_s, s.longest_s, s.n_segments, s.n_dropouts, s.dropout_s, s.filled_s, " \
    "s.n_splits, s.n_spikes, s.spike_max, s.mean_value, s.max_value, s.end_value, s.work_above_end, s.note, "    \
    "s.source_file, s.imported_at"

static void read_rec(cpd_stmt *st, cpd_session_rec *r)
{
    memset(r, 0, sizeof *r);
    r->id = cpd_db_int64(st, 0);
    cpd_st_text(st, 1, r->athlete, sizeof r->athlete);
    const char *k = cpd_db_text(st, 2);
    r->allout = k && strcmp((const char *)k, "allout") == 0;
    cpd_st_text(st, 3, r->date, sizeof r->date);
    const char *m = cpd_db_text(st, 4);
    r->speed = m && strcmp((const char *)m, "speed") == 0;
    const char *h = cpd_db_text(st, 5);
    r->hash = h ? strtoull((const char *)h, NULL, 16) : 0;
    r->n_samples = (size_t)cpd_db_int64(st, 6);
    r->spike_limit = cpd_db_double(st, 7);
    r->test_start_s = cpd_db_double(st, 8);
    r->elapsed_s = cpd_db_double(st, 9);
    size_t *counts[] = {&r->recorded_s, &r->missing_s, &r->longest_s, &r->n_segments, &r->n_dropouts,
                        &r->dropout_s,  &r->filled_s,  &r->n_splits,  &r->n_spikes};
    for (int c = 0; c < 9; c++)
        *counts[c] = (size_t)cpd_db_int64(st, 10 + c);
    r->spike_max = cpd_db_double(st, 19);
    r->mean_value = cpd_db_double(st, 20);
    r->max_value = cpd_db_double(st, 21);
    r->has_allout = cpd_db_type(st, 22) != CPD_DB_NULL;
    r->end_value = r->has_allout ? cpd_db_double(st, 22) : 0;
    r->work_above_end = r->has_allout ? cpd_db_double(st, 23) : 0;
    cpd_st_text(st, 24, r->note, sizeof r->note);
    cpd_st_text(st, 25, r->source_file, sizeof r->source_file);
    cpd_st_text(st, 26, r->imported_at, sizeof r->imported_at);
}

void cpd_store_samples_free(cpd_session_samples *x)
{
    if (!x)
        return;
    free(x->time_s);
    free(x->value);
    free(x->hr_bpm);
    free(x->cadence_rpm);
    free(x->distance_m);
    free(x);
}

static int load_samples(cpd_store *s, const cpd_session_rec *r, cpd_session_samples **out)
{
    *out = NULL;
    cpd_session_samples *x = calloc(1, sizeof *x);
    if (!x)
        return CPD_ENOMEM;
    x->n = r->n_samples;
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT channel, data, packed FROM session_channel WHERE session_id = ?1", &st);
    if (rc)
        goto done;
    cpd_db_bind_int64(st, 1, r->id);
    int q;
    while ((q = cpd_db_step(st)) == CPD_DB_ROW) {
        const char *name = cpd_db_text(st, 0);
        for (size_t k = 0; name && k < NCHAN; k++) {
            if (strcmp(name, channel_name(k, r->speed)) != 0)
                continue;
            double *d = *channel_slot(x, k) ? NULL : malloc(x->n * sizeof *d);
            if (!*channel_slot(x, k) && !d) {
                rc = CPD_ENOMEM;
                goto done;
            }
            if (!d || (rc = column_series(s, st, 1, cpd_db_int(st, 2), NULL, x->n, d))) {
                free(d);
                rc = cpd_st_err(s, rc == CPD_ENOMEM ? rc : CPD_ESTORE, "session %lld: channel %s is damaged: it "
                                "does not hold %zu samples", (long long)r->id, name, x->n);
                goto done;
            }
            *channel_slot(x, k) = d;
        }
    }
    if (q != CPD_DB_DONE) {
        rc = cpd_st_fail(s, "reading session samples");
        goto done;
    }
    if (!x->time_s || !x->value)
        rc = cpd_st_err(s, CPD_ESTORE, "session %lld has no %s channel", (long long)r->id,
                        x->time_s ? channel_name(1, r->speed) : "time_s");
done:
    cpd_db_finalize(st);
    if (rc) {
        cpd_store_samples_free(x);
        return rc;
    }
    *out = x;
    return CPD_OK;
}

int cpd_store_session_get(cpd_store *s, int64_t id, int allout, cpd_session_rec *r, cpd_session_samples **x)
{
    if (x)
        *x = NULL;
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s,
                            "SELECT " SESSION_COLS " FROM session s JOIN athlete a ON a.id = s.athlete_id "
                            "WHERE s.id = ?1 AND s.kind = ?2",
                            &st);
    if (rc)
        return rc;
    cpd_db_bind_int64(st, 1, id);
    cpd_db_bind_text(st, 2, kind_sql(allout), (size_t)-1);
    int q = cpd_db_step(st);
    if (q == CPD_DB_ROW)
        read_rec(st, r);
    else if (q == CPD_DB_DONE)
        rc = cpd_st_err(s, CPD_ENOENT, "no %s with id %lld", allout ? "all-out test" : "session", (long long)id);
    else
        rc = cpd_st_fail(s, "reading a session");
    cpd_db_finalize(st);
    if (!rc && x)
        rc = load_samples(s, r, x);
    return rc;
}

static void read_rec_row(cpd_stmt *st, void *dst)
{
    read_rec(st, dst);
}

int cpd_store_session_list(cpd_store *s, const char *code, int allout, cpd_session_rec **out, size_t *n)
{
    *out = NULL;
    *n = 0;
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s,
                            "SELECT " SESSION_COLS " FROM session s JOIN athlete a ON a.id = s.athlete_id "
                            "WHERE (CAST(?1 AS TEXT) IS NULL OR a.code = ?1) AND s.kind = ?2 ORDER BY a.code, s.date, s.id",
                            &st);
    if (rc)
        return rc;
    cpd_st_bind_text(st, 1, code, 0);
    cpd_db_bind_text(st, 2, kind_sql(allout), (size_t)-1);
    void *v = NULL;
    rc = cpd_st_collect(s, st, sizeof **out, read_rec_row, &v, n, "sessions");
    cpd_db_finalize(st);
    *out = v;
    return rc;
}

int cpd_store_session_count(cpd_store *s, const char *code, const char *from, const char *to, size_t *n_power,
                            size_t *n_speed)
{
    *n_power = *n_speed = 0;
    int64_t aid = 0;
    int rc = cpd_st_athlete_id(s, code, &aid);
    cpd_stmt *st = NULL;
    if (rc || (rc = cpd_st_prepare(s,
                                   "SELECT modality = 'speed', count(*) FROM session WHERE athlete_id = ?1 AND "
                                   "kind = 'session' AND (CAST(?2 AS TEXT) IS NULL OR date >= ?2) AND (CAST(?3 AS TEXT) IS NULL OR date <= ?3) "
                                   "GROUP BY 1",
                                   &st)))
        return rc;
    cpd_db_bind_int64(st, 1, aid);
    cpd_st_bind_text(st, 2, from, 0);
    cpd_st_bind_text(st, 3, to, 0);
    int q;
    while ((q = cpd_db_step(st)) == CPD_DB_ROW)
        *(cpd_db_int(st, 0) ? n_speed : n_power) = (size_t)cpd_db_int64(st, 1);
    if (q != CPD_DB_DONE)
        rc = cpd_st_fail(s, "counting sessions");
    cpd_db_finalize(st);
    return rc;
}

/* Checks one session_curve row (columns from col: n_points, fine_s, step_s, value, start_s,
 * packed) and decodes it into buf (3 × n_points doubles: durations, values, starts). */
static int decode_curve(cpd_store *s, cpd_stmt *st, int col, int64_t id, double *buf, cpd_mmp_curve *c)
{
    int64_t n = cpd_db_int64(st, col);
    int fine = cpd_db_int(st, col + 1), step = cpd_db_int(st, col + 2);
    int packed = cpd_db_int(st, col + 5);
    size_t m = n >= 0 && n <= (int64_t)CPD_MMP_NMAX ? (size_t)n : 0;
    for (size_t i = 0; i < m; i++)
        buf[i] = (double)cpd_mmp_duration_s(i);
    if ((size_t)n != m || fine != CPD_MMP_FINE_S || step != CPD_MMP_COARSE_STEP_S ||
        column_series(s, st, col + 3, packed, buf, m, buf + m) || column_series(s, st, col + 4, packed, NULL, m, buf + 2 * m))
        return cpd_st_err(s, CPD_ESTORE, "session %lld: its stored curve is damaged or on another grid "
                                         "(%lld points, grid %d s/%d s)",
                          (long long)id, (long long)n, fine, step);
    c->n = m;
    c->duration_s = buf;
    c->value = buf + m;
    c->start_s = buf + 2 * m;
    return CPD_OK;
}

int cpd_store_session_curve(cpd_store *s, int64_t id, double **buf, cpd_mmp_curve *c)
{
    *buf = NULL;
    memset(c, 0, sizeof *c);
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT n_points, fine_s, step_s, value, start_s, packed FROM session_curve "
                            "WHERE session_id = ?1",
                            &st);
    if (rc)
        return rc;
    cpd_db_bind_int64(st, 1, id);
    int q = cpd_db_step(st);
    if (q == CPD_DB_ROW) {
        int64_t n = cpd_db_int64(st, 0);
        *buf = malloc(3 * sizeof(double) * (n > 0 && n <= (int64_t)CPD_MMP_NMAX ? (size_t)n : 1));
        rc = *buf ? decode_curve(s, st, 0, id, *buf, c) : CPD_ENOMEM;
        if (rc) {
            free(*buf);
            *buf = NULL;
            memset(c, 0, sizeof *c);
        }
    } else if (q != CPD_DB_DONE)
        rc = cpd_st_fail(s, "reading a session's curve");
    cpd_db_finalize(st);
    return rc;
}

/* The season curve from every stored curve of the athlete (aid) in one modality dated from/to
 * (NULL: open), added in date order. */
static int season_scan(cpd_store *s, int64_t aid, int speed, const char *from, const char *to, cpd_mmp_season *season,
                       size_t *n_sessions)
{
    *n_sessions = 0;
    cpd_mmp_season_reset(season);
    double *buf = malloc(3 * CPD_MMP_NMAX * sizeof *buf);
    if (!buf)
        return CPD_ENOMEM;
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s,
                        "SELECT s.id, s.date, c.n_points, c.fine_s, c.step_s, c.value, c.start_s, c.packed FROM session s "
                        "JOIN session_curve c ON c.session_id = s.id WHERE s.athlete_id = ?1 AND s.kind = 'session' "
                        "AND s.modality = ?2 AND (CAST(?3 AS TEXT) IS NULL OR s.date >= ?3) AND (CAST(?4 AS TEXT) IS NULL OR s.date <= ?4) "
                        "ORDER BY s.date, s.id",
                        &st);
    if (rc)
        goto done;
    cpd_db_bind_int64(st, 1, aid);
    cpd_db_bind_text(st, 2, speed ? "speed" : "power", (size_t)-1);
    cpd_st_bind_text(st, 3, from, 0);
    cpd_st_bind_text(st, 4, to, 0);
    int q;
    while ((q = cpd_db_step(st)) == CPD_DB_ROW) {
        int64_t id = cpd_db_int64(st, 0);
        const char *date = cpd_db_text(st, 1);
        int days = 0;
        if (!date || cpd_parse_date(date, &days)) {
            rc = cpd_st_err(s, CPD_ESTORE, "session %lld has no valid date", (long long)id);
            goto done;
        }
        cpd_mmp_curve c;
        if ((rc = decode_curve(s, st, 2, id, buf, &c)))
            goto done;
        if (cpd_mmp_season_add(season, &c, id, days) != CPD_OK) {
            rc = cpd_st_err(s, CPD_ESTORE, "session %lld: its stored curve holds values that are not finite and >= 0",
                            (long long)id);
            goto done;
        }
        (*n_sessions)++;
    }
    if (q != CPD_DB_DONE)
        rc = cpd_st_fail(s, "reading session curves");
done:
    cpd_db_finalize(st);
    free(buf);
    return rc;
}

/* ---- the season cache (session_season, db/007_compact_samples.sql) ---- */

/* The cached season of the athlete (aid) in one modality into season; *found 0 when there is no
 * row. A damaged row is an error. */
static int season_get(cpd_store *s, int64_t aid, int speed, cpd_mmp_season *season, size_t *n_sessions, int *found)
{
    *found = 0;
    *n_sessions = 0;
    cpd_mmp_season_reset(season);
    cpd_stmt *st = NULL;
    double *tmp = NULL;
    int rc = cpd_st_prepare(s,
                            "SELECT n_sessions, n_points, value, start_s, session, date_days FROM session_season "
                            "WHERE athlete_id = ?1 AND modality = ?2",
                            &st);
    if (rc)
        return rc;
    cpd_db_bind_int64(st, 1, aid);
    cpd_db_bind_text(st, 2, speed ? "speed" : "power", (size_t)-1);
    int q = cpd_db_step(st);
    if (q == CPD_DB_DONE)
        goto done;
    if (q != CPD_DB_ROW) {
        rc = cpd_st_fail(s, "reading the season curve");
        goto done;
    }
    int64_t ns = cpd_db_int64(st, 0), n = cpd_db_int64(st, 1);
    size_t m = n > 0 && n <= (int64_t)CPD_MMP_NMAX ? (size_t)n : 0;
    tmp = malloc(2 * CPD_MMP_NMAX * sizeof *tmp);
    if (!tmp) {
        rc = CPD_ENOMEM;
        goto done;
    }
    for (size_t i = 0; i < m; i++)
        season->duration_s[i] = (double)cpd_mmp_duration_s(i);
    int bad = ns < 1 || m == 0 || column_series(s, st, 2, 1, season->duration_s, m, season->value) ||
              column_series(s, st, 3, 1, NULL, m, season->start_s) || column_series(s, st, 4, 1, NULL, m, tmp) ||
              column_series(s, st, 5, 1, NULL, m, tmp + m);
    for (size_t i = 0; i < m && !bad; i++) {
        bad = !(season->value[i] >= 0 && season->start_s[i] >= 0 && tmp[i] >= 1 && tmp[i] < 9e15 &&
                fabs(tmp[m + i]) < 1e7);
        season->session[i] = (int64_t)tmp[i];
        season->date_days[i] = (int)tmp[m + i];
    }
    if (bad) {
        rc = cpd_st_err(s, CPD_ESTORE, "the stored season curve of athlete %lld is damaged", (long long)aid);
        goto done;
    }
    season->n = m;
    *n_sessions = (size_t)ns;
    *found = 1;
done:
    cpd_db_finalize(st);
    free(tmp);
    if (rc || !*found)
        cpd_mmp_season_reset(season);
    return rc;
}

/* Stores season (over n_sessions sessions) as the athlete's cached season in one modality, or
 * removes the row when there is no session. */
static int season_put(cpd_store *s, int64_t aid, int speed, const cpd_mmp_season *season, size_t n_sessions)
{
    cpd_stmt *st = NULL;
    int rc;
    if (n_sessions == 0 || season->n == 0) {
        if ((rc = cpd_st_prepare(s, "DELETE FROM session_season WHERE athlete_id = ?1 AND modality = ?2", &st)))
            return rc;
        cpd_db_bind_int64(st, 1, aid);
        cpd_db_bind_text(st, 2, speed ? "speed" : "power", (size_t)-1);
        if (cpd_db_step(st) != CPD_DB_DONE)
            rc = cpd_st_fail(s, "clearing the season curve");
        cpd_db_finalize(st);
        return rc;
    }
    size_t m = season->n, cap = cpd_codec_bound(m);
    double *tmp = malloc(2 * m * sizeof *tmp);
    unsigned char *buf = malloc(4 * cap);
    if (!tmp || !buf) {
        rc = CPD_ENOMEM;
        goto done;
    }
    for (size_t i = 0; i < m; i++) {
        tmp[i] = (double)season->session[i];
        tmp[m + i] = season->date_days[i];
    }
    if ((rc = cpd_st_prepare(s,
                             "INSERT INTO session_season (athlete_id, modality, n_sessions, n_points, value, "
                             "start_s, session, date_days) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8) "
                             "ON CONFLICT (athlete_id, modality) DO UPDATE SET n_sessions = excluded.n_sessions, "
                             "n_points = excluded.n_points, value = excluded.value, start_s = excluded.start_s, "
                             "session = excluded.session, date_days = excluded.date_days",
                             &st)))
        goto done;
    cpd_db_bind_int64(st, 1, aid);
    cpd_db_bind_text(st, 2, speed ? "speed" : "power", (size_t)-1);
    cpd_db_bind_int64(st, 3, (int64_t)n_sessions);
    cpd_db_bind_int64(st, 4, (int64_t)m);
    if (!(rc = bind_packed(s, st, 5, season->value, season->duration_s, m, buf)) &&
        !(rc = bind_packed(s, st, 6, season->start_s, NULL, m, buf + cap)) &&
        !(rc = bind_packed(s, st, 7, tmp, NULL, m, buf + 2 * cap)) &&
        !(rc = bind_packed(s, st, 8, tmp + m, NULL, m, buf + 3 * cap)) && cpd_db_step(st) != CPD_DB_DONE)
        rc = cpd_st_fail(s, "storing the season curve");
done:
    cpd_db_finalize(st);
    free(tmp);
    free(buf);
    return rc;
}

/* Recomputes the athlete's cached season in one modality from every stored curve. */
static int season_refresh(cpd_store *s, int64_t aid, int speed)
{
    cpd_mmp_season *se = cpd_mmp_season_alloc();
    if (!se)
        return CPD_ENOMEM;
    size_t ns = 0;
    int rc = season_scan(s, aid, speed, NULL, NULL, se, &ns);
    if (!rc)
        rc = season_put(s, aid, speed, se, ns);
    cpd_mmp_season_free(se);
    return rc;
}

/* A new session's curve joins the athlete's cached season (or the season is computed when there
 * is none yet). */
static int season_join(cpd_store *s, int64_t aid, int speed, const cpd_mmp_curve *c, int64_t id, const char *date)
{
    int days = 0;
    if (cpd_parse_date(date, &days))
        return cpd_st_err(s, CPD_EUSAGE, "'%s' is not a date", date);
    cpd_mmp_season *se = cpd_mmp_season_alloc();
    if (!se)
        return CPD_ENOMEM;
    size_t ns = 0;
    int found = 0, rc = season_get(s, aid, speed, se, &ns, &found);
    if (!rc && !found)
        rc = season_refresh(s, aid, speed);
    else if (!rc && cpd_mmp_season_merge(se, c, id, days) != CPD_OK)
        rc = cpd_st_err(s, CPD_EUSAGE, "a curve holds values that are not finite and >= 0");
    else if (!rc)
        rc = season_put(s, aid, speed, se, ns + 1);
    cpd_mmp_season_free(se);
    return rc;
}

int cpd_store_session_season(cpd_store *s, const char *code, int speed, const char *from, const char *to,
                             cpd_mmp_season *season, size_t *n_sessions)
{
    *n_sessions = 0;
    cpd_mmp_season_reset(season);
    int64_t aid = 0;
    int rc = cpd_st_athlete_id(s, code, &aid);
    if (rc)
        return rc;
    if (!from && !to) {
        int found = 0;
        if ((rc = season_get(s, aid, speed, season, n_sessions, &found)) || found)
            return rc;
    }
    return season_scan(s, aid, speed, from, to, season, n_sessions);
}

int cpd_store_session_remove(cpd_store *s, int64_t id, int allout)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT athlete_id, modality = 'speed' FROM session WHERE id = ?1 AND kind = ?2", &st);
    if (rc)
        return rc;
    cpd_db_bind_int64(st, 1, id);
    cpd_db_bind_text(st, 2, kind_sql(allout), (size_t)-1);
    int q = cpd_db_step(st);
    int64_t aid = q == CPD_DB_ROW ? cpd_db_int64(st, 0) : 0;
    int speed = q == CPD_DB_ROW ? cpd_db_int(st, 1) : 0;
    if (q != CPD_DB_ROW && q != CPD_DB_DONE)
        rc = cpd_st_fail(s, "looking up a session");
    else if (q == CPD_DB_DONE)
        rc = cpd_st_err(s, CPD_ENOENT, "no %s with id %lld", allout ? "all-out test" : "session", (long long)id);
    cpd_db_finalize(st);
    st = NULL;
    if (rc || (rc = cpd_st_savepoint(s)))
        return rc;
    if ((rc = cpd_st_prepare(s, "DELETE FROM session WHERE id = ?1 AND kind = ?2", &st)))
        return cpd_st_release(s, rc);
    cpd_db_bind_int64(st, 1, id);
    cpd_db_bind_text(st, 2, kind_sql(allout), (size_t)-1);
    if (cpd_db_step(st) != CPD_DB_DONE)
        rc = cpd_st_fail(s, "removing a session");
    cpd_db_finalize(st);
    if (!rc && !allout)
        rc = season_refresh(s, aid, speed);
    return cpd_st_release(s, rc);
}

/* ---- the upgrade to 007: the 004 binary64 rows re-encoded in place ---- */

/* Re-encodes every unpacked row of one table: rows are listed first (their keys), then each is
 * read, encoded and rewritten, so no statement reads a table while it is being changed. */
static int pack_rows(cpd_store *s, int curves)
{
    const char *list = curves ? "SELECT session_id, '' FROM session_curve WHERE packed = 0"
                              : "SELECT session_id, channel FROM session_channel WHERE packed = 0";
    const char *get = curves ? "SELECT c.n_points, c.value, c.start_s FROM session_curve c WHERE c.session_id = ?1"
                             : "SELECT s.n_samples, c.data FROM session_channel c JOIN session s ON s.id = c.session_id "
                               "WHERE c.session_id = ?1 AND c.channel = ?2";
    const char *put = curves ? "UPDATE session_curve SET value = ?3, start_s = ?4, packed = 1 WHERE session_id = ?1"
                             : "UPDATE session_channel SET data = ?3, packed = 1 WHERE session_id = ?1 AND channel = ?2";
    cpd_stmt *ls = NULL, *gs = NULL, *ps = NULL;
    double *v = NULL;
    unsigned char *b1 = NULL, *b2 = NULL;
    int rc, q;
    if ((rc = cpd_st_prepare(s, list, &ls)) || (rc = cpd_st_prepare(s, get, &gs)) || (rc = cpd_st_prepare(s, put, &ps)))
        goto done;
    /* keys first: a session id and a channel name of at most 15 bytes each row */
    size_t n_keys = 0, cap = 0;
    struct key { int64_t id; char ch[16]; } *keys = NULL;
    while ((q = cpd_db_step(ls)) == CPD_DB_ROW) {
        if (n_keys == cap) {
            cap = cap ? 2 * cap : 64;
            struct key *k2 = realloc(keys, cap * sizeof *k2);
            if (!k2) {
                free(keys);
                rc = CPD_ENOMEM;
                goto done;
            }
            keys = k2;
        }
        keys[n_keys].id = cpd_db_int64(ls, 0);
        cpd_st_text(ls, 1, keys[n_keys].ch, sizeof keys[n_keys].ch);
        n_keys++;
    }
    if (q != CPD_DB_DONE)
        rc = cpd_st_fail(s, "listing the rows to re-encode");
    for (size_t k = 0; k < n_keys && !rc; k++) {
        cpd_db_reset(gs);
        cpd_db_reset(ps);
        cpd_db_bind_int64(gs, 1, keys[k].id);
        cpd_db_bind_int64(ps, 1, keys[k].id);
        if (!curves) {
            cpd_db_bind_text(gs, 2, keys[k].ch, (size_t)-1);
            cpd_db_bind_text(ps, 2, keys[k].ch, (size_t)-1);
        }
        if (cpd_db_step(gs) != CPD_DB_ROW) {
            rc = cpd_st_fail(s, "reading a row to re-encode");
            break;
        }
        int64_t n = cpd_db_int64(gs, 0);
        int blobs = curves ? 2 : 1;
        if (n < 1 || n > 50000000) {
            rc = cpd_st_err(s, CPD_ESTORE, "session %lld: %lld values cannot be right", (long long)keys[k].id, (long long)n);
            break;
        }
        size_t m = (size_t)n;
        double *v2 = realloc(v, 3 * m * sizeof *v2);
        unsigned char *c1 = realloc(b1, cpd_codec_bound(m)), *c2 = c1 ? realloc(b2, cpd_codec_bound(m)) : NULL;
        if (v2)
            v = v2;
        if (c1)
            b1 = c1;
        if (c2)
            b2 = c2;
        if (!v2 || !c1 || !c2) {
            rc = CPD_ENOMEM;
            break;
        }
        for (size_t i = 0; i < m; i++)
            v[2 * m + i] = (double)cpd_mmp_duration_s(i);
        for (int j = 0; j < blobs && !rc; j++) {
            if (column_series(s, gs, 1 + j, 0, NULL, m, v + j * m)) {
                rc = cpd_st_err(s, CPD_ESTORE, "session %lld: a stored series is damaged (%s)", (long long)keys[k].id,
                                curves ? "curve" : keys[k].ch);
                break;
            }
            rc = bind_packed(s, ps, 3 + j, v + j * m, curves && j == 0 ? v + 2 * m : NULL, m, j ? b2 : b1);
        }
        if (!rc && cpd_db_step(ps) != CPD_DB_DONE)
            rc = cpd_st_fail(s, "rewriting a row in the compact encoding");
    }
    free(keys);
done:
    cpd_db_finalize(ls);
    cpd_db_finalize(gs);
    cpd_db_finalize(ps);
    free(v);
    free(b1);
    free(b2);
    return rc;
}

int cpd_st_session_pack(cpd_store *s)
{
    int rc = pack_rows(s, 0);
    if (!rc)
        rc = pack_rows(s, 1);
    cpd_stmt *st = NULL;
    if (rc || (rc = cpd_st_prepare(s, "SELECT DISTINCT athlete_id, modality = 'speed' FROM session WHERE kind = 'session'",
                                   &st)))
        return rc;
    /* two modalities of a few hundred athletes: the list fits in memory before any write */
    size_t n = 0, cap = 0;
    int64_t *who = NULL;
    int q;
    while ((q = cpd_db_step(st)) == CPD_DB_ROW) {
        if (n == cap) {
            cap = cap ? 2 * cap : 32;
            int64_t *w2 = realloc(who, cap * sizeof *w2);
            if (!w2) {
                rc = CPD_ENOMEM;
                break;
            }
            who = w2;
        }
        who[n++] = 2 * cpd_db_int64(st, 0) + cpd_db_int(st, 1);
    }
    if (!rc && q != CPD_DB_DONE)
        rc = cpd_st_fail(s, "listing the athletes with sessions");
    cpd_db_finalize(st);
    for (size_t k = 0; k < n && !rc; k++)
        rc = season_refresh(s, who[k] / 2, (int)(who[k] % 2));
    free(who);
    return rc;
}

cpd_codec *cpd_st_codec(cpd_store *s)
{
    if (!s->codec)
        s->codec = cpd_codec_alloc();
    return s->codec;
}
