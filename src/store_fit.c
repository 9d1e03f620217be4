/* store_fit.c: saved power-duration fits (fit_run, fit_model, fit_trial). */
#include "store_int.h"

#include <string.h>

int cpd_store_fit_save(cpd_store *s, cpd_fit_run *run, const cpd_fit_model_rec *models, size_t nmodels,
                       const int64_t *trial_ids, size_t ntrials)
{
    int64_t aid = 0;
    int rc = cpd_st_athlete_id(s, run->athlete, &aid);
    if (rc)
        return rc;
    if ((rc = cpd_st_savepoint(s)))
        return rc;
    sqlite3_stmt *st = NULL;
    rc = cpd_st_prepare(s,
                        "INSERT INTO fit_run (athlete_id, created_at, source, modality, date_from, date_to, n, best, "
                        "flags, tool_version) VALUES (?1, COALESCE(?2, strftime('%Y-%m-%dT%H:%M:%SZ', 'now')), ?3, ?4, "
                        "?5, ?6, ?7, ?8, ?9, ?10)",
                        &st);
    if (rc)
        goto done;
    sqlite3_bind_int64(st, 1, aid);
    cpd_st_bind_text(st, 2, run->created_at, 1);
    sqlite3_bind_text(st, 3, run->source, -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st, 4, run->modality, -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st, 5, run->date_from, -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st, 6, run->date_to, -1, SQLITE_TRANSIENT);
    sqlite3_bind_int64(st, 7, (sqlite3_int64)run->n);
    cpd_st_bind_text(st, 8, run->best, 1);
    sqlite3_bind_text(st, 9, run->flags, -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st, 10, run->tool_version, -1, SQLITE_TRANSIENT);
    if (sqlite3_step(st) != SQLITE_DONE) {
        rc = cpd_st_fail(s, "saving a fit");
        goto done;
    }
    run->id = sqlite3_last_insert_rowid(s->db);
    sqlite3_finalize(st);
    st = NULL;

    if ((rc = cpd_st_prepare(s,
                             "INSERT INTO fit_model (run_id, model, ok, cp, cp_se, w_prime, w_prime_se, p_max, p_max_se, "
                             "detail) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10)",
                             &st)))
        goto done;
    for (size_t i = 0; i < nmodels; i++) {
        const cpd_fit_model_rec *m = &models[i];
        sqlite3_reset(st);
        sqlite3_bind_int64(st, 1, run->id);
        sqlite3_bind_text(st, 2, m->model, -1, SQLITE_TRANSIENT);
        sqlite3_bind_int(st, 3, m->ok ? 1 : 0);
        cpd_st_bind_opt(st, 4, m->ok, m->cp);
        cpd_st_bind_opt(st, 5, m->ok && m->has_se, m->cp_se);
        cpd_st_bind_opt(st, 6, m->ok, m->w_prime);
        cpd_st_bind_opt(st, 7, m->ok && m->has_se, m->w_prime_se);
        cpd_st_bind_opt(st, 8, m->ok && m->has_p_max, m->p_max);
        cpd_st_bind_opt(st, 9, m->ok && m->has_p_max && m->has_se, m->p_max_se);
        sqlite3_bind_text(st, 10, m->detail ? m->detail : "{}", -1, SQLITE_TRANSIENT);
        if (sqlite3_step(st) != SQLITE_DONE) {
            rc = cpd_st_fail(s, "saving a fitted model");
            goto done;
        }
    }
    sqlite3_finalize(st);
    st = NULL;
    if ((rc = cpd_st_prepare(s, "INSERT OR IGNORE INTO fit_trial (run_id, trial_id) VALUES (?1, ?2)", &st)))
        goto done;
    for (size_t i = 0; i < ntrials; i++) {
        sqlite3_reset(st);
        sqlite3_bind_int64(st, 1, run->id);
        sqlite3_bind_int64(st, 2, trial_ids[i]);
        if (sqlite3_step(st) != SQLITE_DONE) {
            rc = cpd_st_fail(s, "saving the trials of a fit");
            goto done;
        }
    }
done:
    sqlite3_finalize(st);
    return cpd_st_release(s, rc);
}
