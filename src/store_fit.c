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
    cpd_stmt *st = NULL;
    rc = cpd_st_prepare(s,
                        "INSERT INTO fit_run (athlete_id, created_at, source, modality, date_from, date_to, n, best, "
                        "flags, tool_version) VALUES (?1, ?2, ?3, ?4, "
                        "?5, ?6, ?7, ?8, ?9, ?10) RETURNING id",
                        &st);
    if (rc)
        goto done;
    cpd_db_bind_int64(st, 1, aid);
    cpd_st_bind_stamp(st, 2, run->created_at);
    cpd_db_bind_text(st, 3, run->source, (size_t)-1);
    cpd_db_bind_text(st, 4, run->modality, (size_t)-1);
    cpd_db_bind_text(st, 5, run->date_from, (size_t)-1);
    cpd_db_bind_text(st, 6, run->date_to, (size_t)-1);
    cpd_db_bind_int64(st, 7, (int64_t)run->n);
    cpd_st_bind_text(st, 8, run->best, 1);
    cpd_db_bind_text(st, 9, run->flags, (size_t)-1);
    cpd_db_bind_text(st, 10, run->tool_version, (size_t)-1);
    if (cpd_db_step(st) != CPD_DB_ROW) {
        rc = cpd_st_fail(s, "saving a fit");
        goto done;
    }
    run->id = cpd_db_int64(st, 0);
    cpd_db_finalize(st);
    st = NULL;

    if ((rc = cpd_st_prepare(s,
                             "INSERT INTO fit_model (run_id, model, ok, cp, cp_se, w_prime, w_prime_se, p_max, p_max_se, "
                             "detail) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10)",
                             &st)))
        goto done;
    for (size_t i = 0; i < nmodels; i++) {
        const cpd_fit_model_rec *m = &models[i];
        cpd_db_reset(st);
        cpd_db_bind_int64(st, 1, run->id);
        cpd_db_bind_text(st, 2, m->model, (size_t)-1);
        cpd_db_bind_int64(st, 3, m->ok ? 1 : 0);
        cpd_st_bind_opt(st, 4, m->ok, m->cp);
        cpd_st_bind_opt(st, 5, m->ok && m->has_se, m->cp_se);
        cpd_st_bind_opt(st, 6, m->ok, m->w_prime);
        cpd_st_bind_opt(st, 7, m->ok && m->has_se, m->w_prime_se);
        cpd_st_bind_opt(st, 8, m->ok && m->has_p_max, m->p_max);
        cpd_st_bind_opt(st, 9, m->ok && m->has_p_max && m->has_se, m->p_max_se);
        cpd_db_bind_text(st, 10, m->detail ? m->detail : "{}", (size_t)-1);
        if (cpd_db_step(st) != CPD_DB_DONE) {
            rc = cpd_st_fail(s, "saving a fitted model");
            goto done;
        }
    }
    cpd_db_finalize(st);
    st = NULL;
    if ((rc = cpd_st_prepare(s, "INSERT INTO fit_trial (run_id, trial_id) VALUES (?1, ?2) ON CONFLICT DO NOTHING", &st)))
        goto done;
    for (size_t i = 0; i < ntrials; i++) {
        cpd_db_reset(st);
        cpd_db_bind_int64(st, 1, run->id);
        cpd_db_bind_int64(st, 2, trial_ids[i]);
        if (cpd_db_step(st) != CPD_DB_DONE) {
            rc = cpd_st_fail(s, "saving the trials of a fit");
            goto done;
        }
    }
done:
    cpd_db_finalize(st);
    return cpd_st_release(s, rc);
}
