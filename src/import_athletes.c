/* import_athletes.c: athletes CSV -> validated cpd_athlete records (onboarding a squad at once). */
#include "cpdomain/csvin.h"
#include "cpdomain/import.h"
#include "cpdomain/status.h"
#include "cpdomain/units.h"
#include "cpdomain/validate.h"

#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void cpd_athlete_batch_free(cpd_athlete_batch *b)
{
    if (!b)
        return;
    free(b->athlete);
    free(b->line);
    b->athlete = NULL;
    b->line = NULL;
    b->n = 0;
}

/* A row's code and index, sorted by code then row to find codes given twice. */
typedef struct {
    const char *code;
    size_t row;
} code_row;

static int by_code(const void *a, const void *b)
{
    const code_row *x = a, *y = b;
    int k = strcmp(x->code, y->code);
    return k ? k : (x->row > y->row) - (x->row < y->row);
}

/* The earliest row whose code an earlier row already has: CPD_EDATA with both lines in msg. */
static int duplicate_codes(const cpd_csv *c, const cpd_athlete_batch *b, size_t n, int code_col, char *msg)
{
    code_row *ix = malloc((n ? n : 1) * sizeof *ix);
    if (!ix)
        return CPD_ENOMEM;
    for (size_t r = 0; r < n; r++)
        ix[r] = (code_row){b->athlete[r].code, r};
    qsort(ix, n, sizeof *ix, by_code);
    size_t first = 0, second = SIZE_MAX, k0 = 0;
    for (size_t k = 1; k < n; k++) {
        if (strcmp(ix[k].code, ix[k0].code) != 0)
            k0 = k; /* ix[k0] is the first row of the run of equal codes */
        else if (ix[k].row < second) {
            first = ix[k0].row;
            second = ix[k].row;
        }
    }
    free(ix);
    if (second == SIZE_MAX)
        return CPD_OK;
    char where[CPD_MSG_MAX / 2];
    cpd_csv_where(c, second, code_col, where, sizeof where);
    snprintf(msg, CPD_MSG_MAX, "%s: athlete code '%s' is given twice in this file, on lines %ld and %ld: give each athlete one row",
             where, b->athlete[second].code, b->line[first], b->line[second]);
    return CPD_EDATA;
}

int cpd_import_athletes(const char *path, const char *map, cpd_athlete_batch *out, char *msg)
{
    memset(out, 0, sizeof *out);
    cpd_csv *c = NULL;
    int rc = cpd_csv_read(path, &c, msg);
    return rc ? rc : cpd_import_athletes_csv(c, map, out, msg);
}

int cpd_import_athletes_csv(cpd_csv *c, const char *map, cpd_athlete_batch *out, char *msg)
{
    memset(out, 0, sizeof *out);
    const char *path = cpd_csv_path(c);
    int rc;
    if ((rc = cpd_csv_map(c, map, msg)))
        goto done;
    int code = cpd_csv_find(c, "code"), name = cpd_csv_find(c, "name");
    int sport = cpd_csv_find(c, "sport"), mass = cpd_csv_find(c, "mass_kg"), notes = cpd_csv_find(c, "notes");
    if (code < 0 || name < 0) {
        snprintf(msg, CPD_MSG_MAX, "%s:1:1: missing column '%s' (an athletes file needs code and name)", path,
                 code < 0 ? "code" : "name");
        rc = CPD_EDATA;
        goto done;
    }
    size_t n = cpd_csv_nrows(c);
    out->athlete = calloc(n ? n : 1, sizeof *out->athlete);
    out->line = calloc(n ? n : 1, sizeof *out->line);
    if (!out->athlete || !out->line) {
        rc = CPD_ENOMEM;
        goto done;
    }
    char where[CPD_MSG_MAX / 2], why[CPD_MSG_MAX];
    for (size_t r = 0; r < n; r++) {
        cpd_athlete *a = &out->athlete[r];
        int bad = code;
        const char *v = cpd_csv_get(c, r, (size_t)code);
        if (cpd_validate_code(v, why))
            goto bad;
        snprintf(a->code, sizeof a->code, "%s", v);
        bad = name;
        v = cpd_csv_get(c, r, (size_t)name);
        if (!*v || strlen(v) > CPD_NAME_MAX) {
            snprintf(why, sizeof why, "name must have 1 to %d bytes", CPD_NAME_MAX);
            goto bad;
        }
        snprintf(a->name, sizeof a->name, "%s", v);
        bad = sport;
        v = sport >= 0 ? cpd_csv_get(c, r, (size_t)sport) : "";
        snprintf(a->sport, sizeof a->sport, "%.15s", *v ? v : "cycling");
        if (cpd_validate_sport(*v ? v : "cycling", why))
            goto bad;
        bad = mass;
        v = mass >= 0 ? cpd_csv_get(c, r, (size_t)mass) : "";
        if (*v) {
            if (cpd_parse_number(v, &a->mass_kg)) {
                snprintf(why, sizeof why, "'%s' is not a number", v);
                goto bad;
            }
            a->has_mass = 1;
            if (!cpd_in_range(&CPD_RANGE_MASS, a->mass_kg)) {
                cpd_range_msg(&CPD_RANGE_MASS, a->mass_kg, why, sizeof why);
                goto bad;
            }
        }
        bad = notes;
        v = notes >= 0 ? cpd_csv_get(c, r, (size_t)notes) : "";
        if (strlen(v) > CPD_NOTE_MAX) {
            snprintf(why, sizeof why, "notes are longer than %d bytes", CPD_NOTE_MAX);
            goto bad;
        }
        snprintf(a->notes, sizeof a->notes, "%s", v);
        out->line[r] = cpd_csv_line(c, r);
        continue;
    bad:
        cpd_csv_where(c, r, bad < 0 ? 0 : bad, where, sizeof where);
        snprintf(msg, CPD_MSG_MAX, "%s: %s", where, why);
        rc = CPD_EDATA;
        goto done;
    }
    if ((rc = duplicate_codes(c, out, n, code, msg)))
        goto done;
    out->n = n;
done:
    cpd_csv_free(c);
    if (rc)
        cpd_athlete_batch_free(out);
    return rc;
}
