/* import_trials.c: trials CSV -> validated cpd_trial records. */
#include "cpdomain/csvin.h"
#include "cpdomain/import.h"
#include "cpdomain/status.h"
#include "cpdomain/units.h"
#include "cpdomain/validate.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void cpd_trial_batch_free(cpd_trial_batch *b)
{
    if (!b)
        return;
    free(b->trial);
    free(b->line);
    b->trial = NULL;
    b->line = NULL;
    b->n = 0;
}

static void header_list(const cpd_csv *c, char *buf, size_t n)
{
    buf[0] = '\0';
    for (size_t j = 0; j < cpd_csv_ncols(c); j++) {
        size_t L = strlen(buf);
        snprintf(buf + L, n - L, "%s%s", j ? ", " : "", cpd_csv_header(c, j));
    }
}

int cpd_import_trials(const char *path, const char *map, int today_days, cpd_trial_batch *out, char *msg)
{
    memset(out, 0, sizeof *out);
    cpd_csv *c = NULL;
    int rc = cpd_csv_read(path, &c, msg);
    return rc ? rc : cpd_import_trials_csv(c, map, today_days, out, msg);
}

int cpd_import_trials_csv(cpd_csv *c, const char *map, int today_days, cpd_trial_batch *out, char *msg)
{
    memset(out, 0, sizeof *out);
    const char *path = cpd_csv_path(c);
    int rc;
    if ((rc = cpd_csv_map(c, map, msg)))
        goto done;

    static const char *const required[] = {"athlete", "date", "duration_s"};
    int col[3];
    char heads[CPD_MSG_MAX / 2];
    for (int k = 0; k < 3; k++) {
        col[k] = cpd_csv_find(c, required[k]);
        if (col[k] < 0) {
            header_list(c, heads, sizeof heads);
            snprintf(msg, CPD_MSG_MAX, "%s:1:1: missing column '%s' (the header has: %s; use --map %s=HEADER)",
                     path, required[k], heads, required[k]);
            rc = CPD_EDATA;
            goto done;
        }
    }
    static const cpd_trial_kind kinds[3] = {CPD_TRIAL_POWER, CPD_TRIAL_SPEED, CPD_TRIAL_DISTANCE};
    int vcol[3], any = 0;
    for (int k = 0; k < 3; k++) {
        vcol[k] = cpd_csv_find(c, cpd_trial_kind_name(kinds[k]));
        any |= vcol[k] >= 0;
    }
    if (!any) {
        header_list(c, heads, sizeof heads);
        snprintf(msg, CPD_MSG_MAX, "%s:1:1: missing column: one of power_w, speed_m_s or distance_m is needed "
                 "(the header has: %s)", path, heads);
        rc = CPD_EDATA;
        goto done;
    }
    int note_col = cpd_csv_find(c, "note");
    out->athlete_col = col[0] + 1;

    size_t n = cpd_csv_nrows(c);
    if (n == 0) {
        snprintf(msg, CPD_MSG_MAX, "%s:2:1: the file has a header but no trials", path);
        rc = CPD_EDATA;
        goto done;
    }
    out->trial = calloc(n, sizeof *out->trial);
    out->line = calloc(n, sizeof *out->line);
    if (!out->trial || !out->line) {
        rc = CPD_ENOMEM;
        goto done;
    }
    char where[CPD_MSG_MAX / 2], why[CPD_MSG_MAX];
    for (size_t r = 0; r < n; r++) {
        cpd_trial *t = &out->trial[r];
        int bad_col = -1;
        snprintf(t->athlete, sizeof t->athlete, "%s", cpd_csv_get(c, r, (size_t)col[0]));
        if (strlen(cpd_csv_get(c, r, (size_t)col[0])) > CPD_CODE_MAX) {
            bad_col = col[0];
            snprintf(why, sizeof why, "athlete code must have 1 to %d characters", CPD_CODE_MAX);
            goto bad;
        }
        snprintf(t->date, sizeof t->date, "%s", cpd_csv_get(c, r, (size_t)col[1]));
        if (strlen(cpd_csv_get(c, r, (size_t)col[1])) != 10) {
            bad_col = col[1];
            snprintf(why, sizeof why, "'%s' is not a date: use YYYY-MM-DD", cpd_csv_get(c, r, (size_t)col[1]));
            goto bad;
        }
        const char *dur = cpd_csv_get(c, r, (size_t)col[2]);
        if (cpd_parse_duration(dur, &t->duration_s) != CPD_OK) {
            bad_col = col[2];
            snprintf(why, sizeof why, "'%s' is not a duration: use seconds, m:ss or h:mm:ss", dur);
            goto bad;
        }
        int nvals = 0;
        for (int k = 0; k < 3; k++) {
            if (vcol[k] < 0 || !*cpd_csv_get(c, r, (size_t)vcol[k]))
                continue;
            const char *v = cpd_csv_get(c, r, (size_t)vcol[k]);
            if (++nvals > 1) {
                bad_col = vcol[k];
                snprintf(why, sizeof why, "give only one of power_w, speed_m_s and distance_m per trial");
                goto bad;
            }
            t->kind = kinds[k];
            if (cpd_parse_number(v, &t->value) != CPD_OK) {
                bad_col = vcol[k];
                snprintf(why, sizeof why, "'%s' is not a number", v);
                goto bad;
            }
        }
        if (nvals == 0) {
            for (int k = 0; k < 3 && bad_col < 0; k++)
                if (vcol[k] >= 0)
                    bad_col = vcol[k];
            snprintf(why, sizeof why, "missing value: one of power_w, speed_m_s or distance_m is needed");
            goto bad;
        }
        if (note_col >= 0) {
            const char *note = cpd_csv_get(c, r, (size_t)note_col);
            if (strlen(note) > CPD_NOTE_MAX) {
                bad_col = note_col;
                snprintf(why, sizeof why, "note is longer than %d bytes", CPD_NOTE_MAX);
                goto bad;
            }
            snprintf(t->note, sizeof t->note, "%s", note);
        }
        snprintf(t->source_file, sizeof t->source_file, "%s", path);
        out->line[r] = cpd_csv_line(c, r);
        const char *field = NULL;
        if (cpd_validate_trial(t, today_days, &field, why) != CPD_OK) {
            bad_col = cpd_csv_find(c, field);
            goto bad;
        }
        continue;
    bad:
        cpd_csv_where(c, r, bad_col < 0 ? 0 : bad_col, where, sizeof where);
        snprintf(msg, CPD_MSG_MAX, "%s: %s", where, why);
        rc = CPD_EDATA;
        goto done;
    }
    out->n = n;
done:
    cpd_csv_free(c);
    if (rc)
        cpd_trial_batch_free(out);
    return rc;
}
