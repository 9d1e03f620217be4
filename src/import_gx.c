/* import_gx.c: gas-exchange CSV (ramps, bouts) and lactate step-test CSV -> validated records. */
#include "cpdomain/csvin.h"
#include "cpdomain/import.h"
#include "cpdomain/status.h"
#include "cpdomain/units.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

/* Sample values may be zero where a trial value may not: unloaded pedalling, a standing start. */
static const cpd_range RANGE_POWER_SAMPLE = {"power", 0.0, 3000.0, "W"};
static const cpd_range RANGE_SPEED_SAMPLE = {"speed", 0.0, 15.0, "m/s"};

typedef struct {
    const char *name;      /* SPEC column */
    const char *alt;       /* accepted alternative in L/min, or NULL */
    int chan;              /* cpd_gx channel, or -1 for time */
    const cpd_range *range;
} column;

static const column columns[] = {
    {"time_s", NULL, -1, NULL},
    {"vo2_ml_min", "vo2_l_min", CPD_GX_VO2, &CPD_RANGE_VO2},
    {"vco2_ml_min", "vco2_l_min", CPD_GX_VCO2, &CPD_RANGE_VO2},
    {"ve_l_min", NULL, CPD_GX_VE, &CPD_RANGE_VE},
    {"hr_bpm", NULL, CPD_GX_HR, &CPD_RANGE_HR},
    {"power_w", NULL, CPD_GX_POWER, &RANGE_POWER_SAMPLE},
    {"speed_m_s", NULL, CPD_GX_SPEED, &RANGE_SPEED_SAMPLE},
    {"peto2_mmhg", NULL, CPD_GX_PETO2, &CPD_RANGE_PET},
    {"petco2_mmhg", NULL, CPD_GX_PETCO2, &CPD_RANGE_PET},
};
#define NCOL (sizeof columns / sizeof columns[0])

/* A time in seconds or h:mm:ss, negative before the onset (a baseline recorded before t = 0). */
static int parse_time(const char *v, double *x)
{
    while (*v == ' ' || *v == '\t')
        v++;
    int neg = *v == '-';
    if (cpd_parse_duration(neg ? v + 1 : v, x))
        return CPD_EDATA;
    if (neg)
        *x = -*x;
    return CPD_OK;
}

/* An optional cell carries no value: blank, or a placeholder carts write for a missing value. */
static int is_blank(const char *v)
{
    static const char *const ph[] = {"", "-", "--", "na", "n/a", "nan", "null"};
    while (*v == ' ')
        v++;
    for (size_t k = 0; k < sizeof ph / sizeof ph[0]; k++)
        if (strcasecmp(v, ph[k]) == 0)
            return 1;
    return 0;
}

/* Fills the NaN gaps of an optional channel linearly in time from its valid neighbours (the ends
 * from the nearest valid value). Returns 0 when the channel holds no valid value at all. */
static int bridge_gaps(const double *t, double *v, size_t n)
{
    size_t prev = n;
    for (size_t i = 0; i < n; i++) {
        if (isnan(v[i]))
            continue;
        if (prev == n) {
            for (size_t k = 0; k < i; k++)
                v[k] = v[i];
        } else if (i > prev + 1) {
            double span = t[i] - t[prev];
            for (size_t k = prev + 1; k < i; k++)
                v[k] = span > 0 ? v[prev] + (v[i] - v[prev]) * (t[k] - t[prev]) / span : v[prev];
        }
        prev = i;
    }
    if (prev == n)
        return 0;
    for (size_t k = prev + 1; k < n; k++)
        v[k] = v[prev];
    return 1;
}

int cpd_import_gx(const char *path, const char *map, size_t min_rows, cpd_gx_series **out, char *msg)
{
    return cpd_import_gx_report(path, map, min_rows, out, NULL, msg);
}

int cpd_import_gx_report(const char *path, const char *map, size_t min_rows, cpd_gx_series **out,
                         cpd_gx_import_report *rep, char *msg)
{
    *out = NULL;
    cpd_csv *c = NULL;
    int rc = cpd_csv_read(path, &c, msg);
    return rc ? rc : cpd_import_gx_csv(c, map, min_rows, out, rep, msg);
}

int cpd_import_gx_csv(cpd_csv *c, const char *map, size_t min_rows, cpd_gx_series **out, cpd_gx_import_report *rep,
                      char *msg)
{
    *out = NULL;
    cpd_gx_import_report own;
    if (!rep)
        rep = &own;
    memset(rep, 0, sizeof *rep);
    cpd_gx_series *g = NULL;
    const char *path = cpd_csv_path(c);
    int rc;
    if ((rc = cpd_csv_map(c, map, msg)))
        goto done;
    int col[NCOL];
    double scale[NCOL];
    unsigned mask = 0;
    for (size_t k = 0; k < NCOL; k++) {
        col[k] = cpd_csv_find(c, columns[k].name);
        scale[k] = 1.0;
        int alt = columns[k].alt ? cpd_csv_find(c, columns[k].alt) : -1;
        if (col[k] >= 0 && alt >= 0) {
            snprintf(msg, CPD_MSG_MAX, "%s:1:%d: give %s or %s, not both", path, alt + 1, columns[k].name, columns[k].alt);
            rc = CPD_EDATA;
            goto done;
        }
        if (col[k] < 0 && alt >= 0) {
            col[k] = alt;
            scale[k] = 1000.0; /* L/min -> mL/min */
        }
        if (col[k] >= 0 && columns[k].chan >= 0)
            mask |= CPD_GX_BIT(columns[k].chan);
    }
    for (size_t k = 0; k < 2; k++)
        if (col[k] < 0) {
            const char *h = cpd_csv_header(c, 0);
            int one = cpd_csv_ncols(c) == 1 && (strchr(h, ';') || strchr(h, '\t') || strchr(h, '|'));
            snprintf(msg, CPD_MSG_MAX, "%s:1:1: missing column '%s'%s (use --map %s=HEADER for another header)%s", path,
                     columns[k].name, k == 1 ? " (or vo2_l_min)" : "", columns[k].name,
                     one ? "; the header reads as one column: separate the columns with commas (or semicolons or "
                           "tabs throughout)"
                         : "");
            rc = CPD_EDATA;
            goto done;
        }
    size_t n = cpd_csv_nrows(c);
    g = cpd_gx_alloc(n, mask);
    if (!g) {
        rc = CPD_ENOMEM;
        goto done;
    }
    char where[CPD_MSG_MAX / 2], why[CPD_MSG_MAX];
    for (size_t r = 0; r < n; r++) {
        for (size_t k = 0; k < NCOL; k++) {
            if (col[k] < 0)
                continue;
            const char *v = cpd_csv_get(c, r, (size_t)col[k]);
            double x = 0;
            int chan = columns[k].chan;
            if (chan > CPD_GX_VO2 && is_blank(v)) { /* an optional cell without a value: bridged below */
                g->ch[chan][r] = NAN;
                rep->blank[chan]++;
                rep->blank_total++;
                continue;
            }
            if (!*v) {
                snprintf(why, sizeof why, "missing value");
                goto bad;
            }
            if (chan < 0) {
                if (parse_time(v, &x)) {
                    snprintf(why, sizeof why, "'%s' is not a time: use seconds (negative before the onset) or h:mm:ss", v);
                    goto bad;
                }
                if (r > 0 && x < g->t_s[r - 1]) {
                    snprintf(why, sizeof why, "time runs backwards: %g s after %g s on the row before", x, g->t_s[r - 1]);
                    goto bad;
                }
                g->t_s[r] = x;
                continue;
            }
            if (cpd_parse_number(v, &x)) {
                snprintf(why, sizeof why, "'%s' is not a number%s", v,
                         strchr(v, ',') ? " (a decimal comma? use a point, or separate the columns with semicolons)" : "");
                goto bad;
            }
            x *= scale[k];
            if (chan == CPD_GX_HR && (x < CPD_GX_HR_MIN || x > CPD_GX_HR_MAX)) { /* an artefact, not a heart rate */
                g->ch[chan][r] = NAN;
                rep->hr_dropped++;
                continue;
            }
            if (!cpd_in_range(columns[k].range, x)) {
                cpd_range_msg(columns[k].range, x, why, sizeof why);
                if (scale[k] != 1.0)
                    snprintf(why + strlen(why), sizeof why - strlen(why), " after converting L/min to mL/min");
                else if (columns[k].alt && x > 0 && x < 10)
                    snprintf(why + strlen(why), sizeof why - strlen(why),
                             ": the values look like L/min; name the column %s (or --map %s=%s)", columns[k].alt,
                             columns[k].alt, cpd_csv_header(c, (size_t)col[k]));
                goto bad;
            }
            g->ch[chan][r] = x;
            continue;
        bad:
            cpd_csv_where(c, r, col[k], where, sizeof where);
            snprintf(msg, CPD_MSG_MAX, "%s: %s", where, why);
            rc = CPD_EDATA;
            goto done;
        }
    }
    /* after the rows: a bad value is reported where it stands even in a short file */
    if (n < min_rows) {
        snprintf(msg, CPD_MSG_MAX, "%s:%ld:1: too few samples: %zu row(s), at least %zu are needed", path,
                 n ? cpd_csv_line(c, n - 1) : 1L, n, min_rows);
        rc = CPD_EDATA;
        goto done;
    }
    if (!(g->t_s[n - 1] > g->t_s[0])) {
        snprintf(msg, CPD_MSG_MAX, "%s: every sample has the same time: a test needs time to pass", path);
        rc = CPD_EDATA;
        goto done;
    }
    for (int ch = CPD_GX_VO2 + 1; ch < CPD_GX_NCHAN; ch++)
        if (g->ch[ch] && !bridge_gaps(g->t_s, g->ch[ch], n)) { /* a column with no value at all: absent */
            free(g->ch[ch]);
            g->ch[ch] = NULL;
        }
done:
    cpd_csv_free(c);
    if (rc) {
        cpd_gx_free(g);
        return rc;
    }
    *out = g;
    return CPD_OK;
}

int cpd_import_lactate(const char *path, const char *map, cpd_lactate_test *t, char *msg)
{
    cpd_csv *c = NULL;
    int rc = cpd_csv_read(path, &c, msg);
    return rc ? rc : cpd_import_lactate_csv(c, map, t, msg);
}

int cpd_import_lactate_csv(cpd_csv *c, const char *map, cpd_lactate_test *t, char *msg)
{
    const char *path = cpd_csv_path(c);
    int rc;
    if ((rc = cpd_csv_map(c, map, msg)))
        goto done;
    int lac = cpd_csv_find(c, "lactate_mmol_l"), pw = cpd_csv_find(c, "power_w"), sp = cpd_csv_find(c, "speed_m_s");
    int hr = cpd_csv_find(c, "hr_bpm"), st = cpd_csv_find(c, "stage_s");
    if (lac < 0 || (pw < 0 && sp < 0) || (pw >= 0 && sp >= 0)) {
        snprintf(msg, CPD_MSG_MAX, "%s:1:1: %s", path,
                 lac < 0 ? "missing column 'lactate_mmol_l'"
                         : pw >= 0 && sp >= 0 ? "give power_w or speed_m_s for the stages, not both"
                                              : "missing column: one of power_w or speed_m_s is needed");
        rc = CPD_EDATA;
        goto done;
    }
    size_t n = cpd_csv_nrows(c);
    if (n < 3 || n > CPD_LACTATE_STAGES_MAX) {
        snprintf(msg, CPD_MSG_MAX, "%s: a lactate step test needs 3 to %d stages (the file has %zu)", path,
                 CPD_LACTATE_STAGES_MAX, n);
        rc = CPD_EDATA;
        goto done;
    }
    t->speed = sp >= 0;
    t->n = n;
    t->has_hr = hr >= 0;
    t->has_stage_s = st >= 0;
    snprintf(t->source_file, sizeof t->source_file, "%s", path);
    int icol = t->speed ? sp : pw;
    const cpd_range *ir = t->speed ? &CPD_RANGE_SPEED : &CPD_RANGE_POWER;
    char where[CPD_MSG_MAX / 2], why[CPD_MSG_MAX];
    for (size_t r = 0; r < n; r++) {
        struct {
            int col;
            double *dst;
            const cpd_range *range;
            int duration;
        } f[4] = {{icol, &t->intensity[r], ir, 0}, {lac, &t->lactate[r], &CPD_RANGE_LACTATE, 0},
                  {hr, &t->hr[r], &CPD_RANGE_HR, 0}, {st, &t->stage_s[r], &CPD_RANGE_DURATION, 1}};
        for (int k = 0; k < 4; k++) {
            if (f[k].col < 0)
                continue;
            const char *v = cpd_csv_get(c, r, (size_t)f[k].col);
            int bad = f[k].duration ? cpd_parse_duration(v, f[k].dst) : cpd_parse_number(v, f[k].dst);
            if (bad)
                snprintf(why, sizeof why, "'%s' is not a %s", v, f[k].duration ? "duration" : "number");
            else if (!cpd_in_range(f[k].range, *f[k].dst)) {
                cpd_range_msg(f[k].range, *f[k].dst, why, sizeof why);
                bad = 1;
            } else if (k == 0 && r > 0 && !(*f[k].dst > t->intensity[r - 1])) {
                snprintf(why, sizeof why, "stages must rise in intensity: %g after %g", *f[k].dst, t->intensity[r - 1]);
                bad = 1;
            }
            if (bad) {
                cpd_csv_where(c, r, f[k].col, where, sizeof where);
                snprintf(msg, CPD_MSG_MAX, "%s: %s", where, why);
                rc = CPD_EDATA;
                goto done;
            }
        }
    }
done:
    cpd_csv_free(c);
    return rc;
}
