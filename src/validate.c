/* validate.c: value checks shared by the CLI and the importers. Messages name the range. */
#include "cpdomain/validate.h"
#include "cpdomain/status.h"
#include "cpdomain/units.h"

#include <ctype.h>
#include <stdio.h>
#include <string.h>

int cpd_validate_code(const char *code, char *msg)
{
    size_t L = code ? strlen(code) : 0;
    if (L == 0 || L > CPD_CODE_MAX) {
        snprintf(msg, CPD_MSG_MAX, "athlete code must have 1 to %d characters", CPD_CODE_MAX);
        return CPD_EDATA;
    }
    for (size_t i = 0; i < L; i++) {
        unsigned char ch = (unsigned char)code[i];
        if (!(isalnum(ch) || ch == '-' || ch == '_' || ch == '.')) {
            snprintf(msg, CPD_MSG_MAX, "athlete code '%s' may hold only letters, digits, '-', '_' and '.'", code);
            return CPD_EDATA;
        }
    }
    return CPD_OK;
}

int cpd_validate_squad(const char *name, char *msg)
{
    size_t L = name ? strlen(name) : 0;
    if (L == 0 || L > CPD_SQUAD_MAX) {
        snprintf(msg, CPD_MSG_MAX, "a squad name has 1 to %d bytes (got %zu)", CPD_SQUAD_MAX, L);
        return CPD_EDATA;
    }
    for (size_t i = 0; i < L; i++)
        if ((unsigned char)name[i] < 0x20 || name[i] == 0x7f) {
            snprintf(msg, CPD_MSG_MAX, "a squad name holds no control characters");
            return CPD_EDATA;
        }
    if (name[0] == ' ' || name[L - 1] == ' ') {
        snprintf(msg, CPD_MSG_MAX, "a squad name neither starts nor ends with a space");
        return CPD_EDATA;
    }
    return CPD_OK;
}

int cpd_validate_sport(const char *sport, char *msg)
{
    static const char *const ok[] = {"cycling", "running", "rowing", "swimming", "other"};
    for (size_t i = 0; i < sizeof ok / sizeof ok[0]; i++)
        if (sport && strcmp(sport, ok[i]) == 0)
            return CPD_OK;
    snprintf(msg, CPD_MSG_MAX, "sport must be cycling, running, rowing, swimming or other (got '%s')",
             sport ? sport : "");
    return CPD_EDATA;
}

int cpd_validate_athlete(const cpd_athlete *a, char *msg)
{
    const char *field = NULL;
    return cpd_validate_athlete_field(a, &field, msg);
}

int cpd_validate_athlete_field(const cpd_athlete *a, const char **field, char *msg)
{
    *field = "code";
    int rc = cpd_validate_code(a->code, msg);
    if (rc)
        return rc;
    *field = "name";
    if (!a->name[0] || strlen(a->name) > CPD_NAME_MAX) {
        snprintf(msg, CPD_MSG_MAX, "name must have 1 to %d bytes", CPD_NAME_MAX);
        return CPD_EDATA;
    }
    *field = "sport";
    if ((rc = cpd_validate_sport(a->sport, msg)))
        return rc;
    *field = "mass_kg";
    if (a->has_mass && !cpd_in_range(&CPD_RANGE_MASS, a->mass_kg)) {
        cpd_range_msg(&CPD_RANGE_MASS, a->mass_kg, msg, CPD_MSG_MAX);
        return CPD_EDATA;
    }
    *field = "notes";
    if (strlen(a->notes) > CPD_NOTE_MAX) {
        snprintf(msg, CPD_MSG_MAX, "notes are longer than %d bytes", CPD_NOTE_MAX);
        return CPD_EDATA;
    }
    *field = NULL;
    return CPD_OK;
}

int cpd_validate_date(const char *date, int today_days, char *msg)
{
    int d = 0;
    if (cpd_parse_date(date, &d) != CPD_OK) {
        snprintf(msg, CPD_MSG_MAX, "'%s' is not a date: use YYYY-MM-DD", date);
        return CPD_EDATA;
    }
    if (d > today_days) {
        char today[11];
        cpd_format_date(today_days, today);
        snprintf(msg, CPD_MSG_MAX, "date %s is in the future (today is %s)", date, today);
        return CPD_EDATA;
    }
    return CPD_OK;
}

int cpd_validate_trial(const cpd_trial *t, int today_days, const char **field, char *msg)
{
    *field = "athlete";
    if (cpd_validate_code(t->athlete, msg))
        return CPD_EDATA;
    *field = "date";
    if (cpd_validate_date(t->date, today_days, msg))
        return CPD_EDATA;
    *field = "duration_s";
    if (!cpd_in_range(&CPD_RANGE_DURATION, t->duration_s)) {
        cpd_range_msg(&CPD_RANGE_DURATION, t->duration_s, msg, CPD_MSG_MAX);
        return CPD_EDATA;
    }
    *field = cpd_trial_kind_name(t->kind);
    const cpd_range *r = t->kind == CPD_TRIAL_POWER   ? &CPD_RANGE_POWER
                         : t->kind == CPD_TRIAL_SPEED ? &CPD_RANGE_SPEED
                                                      : &CPD_RANGE_DISTANCE;
    if (!cpd_in_range(r, t->value)) {
        cpd_range_msg(r, t->value, msg, CPD_MSG_MAX);
        return CPD_EDATA;
    }
    if (t->kind == CPD_TRIAL_DISTANCE && !cpd_in_range(&CPD_RANGE_SPEED, t->value / t->duration_s)) {
        char sub[CPD_MSG_MAX];
        cpd_range_msg(&CPD_RANGE_SPEED, t->value / t->duration_s, sub, sizeof sub);
        snprintf(msg, CPD_MSG_MAX, "mean speed of %g m in %g s: %s", t->value, t->duration_s, sub);
        return CPD_EDATA;
    }
    *field = "note";
    if (strlen(t->note) > CPD_NOTE_MAX) {
        snprintf(msg, CPD_MSG_MAX, "note is longer than %d bytes", CPD_NOTE_MAX);
        return CPD_EDATA;
    }
    *field = NULL;
    return CPD_OK;
}
