/* import_session.c: session and all-out CSV -> checked samples, cleaned 1-Hz segments (session.h)
 * and the mean-maximal curve (mmp.h). A bad row rejects the file with file:line:column. */
#include "cpdomain/csvin.h"
#include "cpdomain/import.h"
#include "csvfast.h"
#include "cpdomain/status.h"
#include "cpdomain/units.h"

#include <ctype.h>
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

/* Optional channels: 0 is what a device writes when the sensor sends nothing, so it is allowed. */
static const cpd_range RANGE_HR = {"heart rate", 0.0, 250.0, "beats/min"};
static const cpd_range RANGE_CADENCE = {"cadence", 0.0, 300.0, "rpm"};
static const cpd_range RANGE_DIST = {"distance", 0.0, 1e7, "m"};

/* C_ALT: the fast path reads power_w and speed_m_s both when a file has both */
enum { C_TIME, C_VALUE, C_HR, C_CAD, C_DIST, C_ALT, NCOL };

struct cpd_session_import_ws {
    cpd_session_ws *sw;
    cpd_mmp_ws *mw;
    size_t cap;        /* room in each channel */
    double *ch[NCOL];  /* the file's values, by column */
    char *buf;         /* the file's bytes (cpd_import_session_load), NUL-terminated */
    size_t len, buf_cap;
    char *path;        /* the file they are from, while loaded */
    uint64_t hash;     /* their FNV-1a hash */
};

cpd_session_import_ws *cpd_import_session_alloc(void)
{
    cpd_session_import_ws *w = calloc(1, sizeof *w);
    if (!w)
        return NULL;
    w->sw = cpd_session_alloc(0);
    w->mw = cpd_mmp_alloc(0);
    if (!w->sw || !w->mw) {
        cpd_import_session_free(w);
        return NULL;
    }
    return w;
}

void cpd_import_session_free(cpd_session_import_ws *w)
{
    if (!w)
        return;
    cpd_session_free(w->sw);
    cpd_mmp_free(w->mw);
    for (int k = 0; k < NCOL; k++)
        free(w->ch[k]);
    free(w->buf);
    free(w->path);
    free(w);
}

static int reserve(cpd_session_import_ws *w, size_t n)
{
    if (n <= w->cap)
        return CPD_OK;
    for (int k = 0; k < NCOL; k++) {
        double *p = realloc(w->ch[k], n * sizeof *p);
        if (!p)
            return CPD_ENOMEM;
        w->ch[k] = p;
    }
    w->cap = n;
    return CPD_OK;
}

int cpd_import_file_hash(const char *path, uint64_t *hash, char *msg)
{
    *hash = CPD_SESSION_HASH_INIT;
    FILE *f = fopen(path, "rb");
    if (!f) {
        snprintf(msg, CPD_MSG_MAX, "%s: cannot open: %s", path, strerror(errno));
        return CPD_EIO;
    }
    unsigned char buf[65536];
    size_t got;
    while ((got = fread(buf, 1, sizeof buf, f)) > 0)
        *hash = cpd_session_hash(*hash, buf, got);
    int bad = ferror(f);
    fclose(f);
    if (bad) {
        snprintf(msg, CPD_MSG_MAX, "%s: read error", path);
        return CPD_EIO;
    }
    return CPD_OK;
}

int cpd_import_session_load(cpd_session_import_ws *w, const char *path, uint64_t *hash, char *msg)
{
    free(w->path);
    w->path = NULL;
    *hash = CPD_SESSION_HASH_INIT;
    FILE *f = fopen(path, "rb");
    if (!f) {
        snprintf(msg, CPD_MSG_MAX, "%s: cannot open: %s", path, strerror(errno));
        return CPD_EIO;
    }
    struct stat sb;
    size_t want = fstat(fileno(f), &sb) == 0 && sb.st_size > 0 ? (size_t)sb.st_size + 1 : 65536;
    int rc = CPD_OK;
    w->len = 0;
    for (;;) {
        if (w->len + 1 >= w->buf_cap) {
            size_t nc = w->buf_cap < want ? want : 2 * w->buf_cap;
            char *nb = realloc(w->buf, nc);
            if (!nb) {
                rc = CPD_ENOMEM;
                break;
            }
            w->buf = nb;
            w->buf_cap = nc;
        }
        size_t got = fread(w->buf + w->len, 1, w->buf_cap - 1 - w->len, f);
        w->len += got;
        if (got == 0)
            break;
    }
    if (!rc && ferror(f)) {
        snprintf(msg, CPD_MSG_MAX, "%s: read error", path);
        rc = CPD_EIO;
    }
    fclose(f);
    if (rc)
        return rc;
    w->buf[w->len] = '\0';
    if (!(w->path = strdup(path)))
        return CPD_ENOMEM;
    w->hash = *hash = cpd_session_hash(CPD_SESSION_HASH_INIT, w->buf, w->len);
    return CPD_OK;
}

int cpd_import_date_from_name(const char *path, char *date)
{
    const char *base = strrchr(path, '/');
    base = base ? base + 1 : path;
    size_t L = strlen(base);
    for (size_t i = 0; i + 10 <= L; i++) {
        const char *p = base + i;
        int shape = 1;
        for (int k = 0; k < 10 && shape; k++)
            shape = k == 4 || k == 7 ? p[k] == '-' : isdigit((unsigned char)p[k]) != 0;
        if (!shape || (i > 0 && isdigit((unsigned char)p[-1])) || isdigit((unsigned char)p[10]))
            continue;
        char d[11];
        memcpy(d, p, 10);
        d[10] = '\0';
        int days = 0;
        if (cpd_parse_date(d, &days) == CPD_OK) {
            memcpy(date, d, 11);
            return CPD_OK;
        }
    }
    date[0] = '\0';
    return CPD_ENODATA;
}

/* The message for a cleaning failure, at the line of the sample session.h names. */
static void clean_error(const cpd_csv *c, const cpd_session *s, int speed, double span_s, char *msg)
{
    const char *path = cpd_csv_path(c);
    size_t n = cpd_csv_nrows(c);
    long line = n ? cpd_csv_line(c, s->error_index < n ? s->error_index : n - 1) : 1;
    switch (s->error) {
    case CPD_SESSION_ERR_EMPTY:
        snprintf(msg, CPD_MSG_MAX, "%s:1:1: the file has a header but no samples", path);
        break;
    case CPD_SESSION_ERR_ONE_SAMPLE:
        if (n == 1)
            snprintf(msg, CPD_MSG_MAX, "%s:%ld:1: the file has a single sample, which spans no time: a session needs "
                     "samples at two times or more", path, line);
        else
            snprintf(msg, CPD_MSG_MAX, "%s:%ld:1: column 'time_s': every sample has the same time, so no time passes",
                     path, cpd_csv_line(c, n - 1));
        break;
    case CPD_SESSION_ERR_TOO_LONG:
        snprintf(msg, CPD_MSG_MAX, "%s:%ld:1: column 'time_s': the file spans %.6g s (%.4g days), more than the 7 days "
                 "(604800 s) a session may last", path, line, span_s, span_s / 86400);
        break;
    case CPD_SESSION_ERR_NO_DATA:
        snprintf(msg, CPD_MSG_MAX, "%s: every value is above the spike limit of %g %s: no clean second is left", path,
                 s->spike_limit, speed ? "m/s" : "W");
        break;
    default:
        snprintf(msg, CPD_MSG_MAX, "%s:%ld: %s", path, line, cpd_session_error_text(s->error));
        break;
    }
}

/* Whether the value column is speed_m_s (1) or power_w (0), given the columns found (-1: none). */
static int choose_speed(const cpd_session_import_opts *opts, int pw, int sp)
{
    return opts->want_speed == 1 || (opts->want_speed < 0 && (pw < 0 || (sp >= 0 && opts->prefer_speed)));
}

/* The fast path: a plain numeric file (csvfast.h) straight from the loaded bytes into the
 * channel arrays, every value checked. CPD_OK with out->samples and out->speed set, CPD_ENOMEM,
 * or -1: the file is not plain, or something in it is wrong, and the full parser, which words
 * every error, takes it. */
static int read_fast(cpd_session_import_ws *w, const cpd_session_import_opts *opts, cpd_session_import *out)
{
    static const char *const want[6] = {"time_s", "power_w", "speed_m_s", "hr_bpm", "cadence_rpm", "distance_m"};
    size_t cap = cpd_csvfast_rows_bound(w->buf, w->len);
    if (reserve(w, cap))
        return CPD_ENOMEM;
    int col[6];
    double *const dst[6] = {w->ch[C_TIME], w->ch[C_VALUE], w->ch[C_ALT], w->ch[C_HR], w->ch[C_CAD], w->ch[C_DIST]};
    long got = cpd_csvfast_numbers(w->buf, w->len, 6, want, col, dst, cap);
    if (got <= 0 || col[0] < 0)
        return -1;
    size_t n = (size_t)got;
    int speed = choose_speed(opts, col[1], col[2]);
    const double *t = dst[0], *v = dst[speed ? 2 : 1];
    if (col[speed ? 2 : 1] < 0)
        return -1;
    const cpd_range *range[3] = {&RANGE_HR, &RANGE_CADENCE, &RANGE_DIST};
    for (size_t r = 0; r < n; r++) {
        if ((r > 0 && t[r] < t[r - 1]) || v[r] < 0)
            return -1;
        for (int k = 0; k < 3; k++)
            if (col[3 + k] >= 0 && !cpd_in_range(range[k], dst[3 + k][r]))
                return -1;
    }
    out->speed = speed;
    out->samples.n = n;
    out->samples.time_s = dst[0];
    out->samples.value = dst[speed ? 2 : 1];
    out->samples.hr_bpm = col[3] >= 0 ? dst[3] : NULL;
    out->samples.cadence_rpm = col[4] >= 0 ? dst[4] : NULL;
    out->samples.distance_m = col[5] >= 0 ? dst[5] : NULL;
    return CPD_OK;
}

/* The full path: the file through the CSV parser (csvin.h), every error worded with its
 * file:line:column. On success *cp holds the table (the caller frees it) for the cleaning's
 * messages. */
static int read_full(cpd_session_import_ws *w, const char *path, const cpd_session_import_opts *opts,
                     cpd_session_import *out, cpd_csv **cp, char *msg)
{
    cpd_csv *c = NULL;
    int rc = cpd_csv_parse(path, w->buf, w->len, &c, msg); /* the bytes already loaded: no second read */
    *cp = c;
    if (rc)
        return rc;
    if ((rc = cpd_csv_map(c, opts->map, msg)))
        return rc;
    int col[NCOL];
    col[C_TIME] = cpd_csv_find(c, "time_s");
    int pw = cpd_csv_find(c, "power_w"), sp = cpd_csv_find(c, "speed_m_s");
    col[C_HR] = cpd_csv_find(c, "hr_bpm");
    col[C_CAD] = cpd_csv_find(c, "cadence_rpm");
    col[C_DIST] = cpd_csv_find(c, "distance_m");
    col[C_ALT] = -1;
    if (col[C_TIME] < 0) {
        snprintf(msg, CPD_MSG_MAX, "%s:1:1: missing column 'time_s' (use --map time_s=HEADER for another header)", path);
        return CPD_EDATA;
    }
    int speed = choose_speed(opts, pw, sp);
    col[C_VALUE] = speed ? sp : pw;
    if (col[C_VALUE] < 0) {
        if (opts->want_speed < 0)
            snprintf(msg, CPD_MSG_MAX, "%s:1:1: missing column: one of power_w or speed_m_s is needed (use --map "
                     "power_w=HEADER for another header)", path);
        else
            snprintf(msg, CPD_MSG_MAX, "%s:1:1: missing column '%s'", path, speed ? "speed_m_s" : "power_w");
        return CPD_EDATA;
    }
    size_t n = cpd_csv_nrows(c);
    if ((rc = reserve(w, n ? n : 1)))
        return rc;
    const cpd_range *range[NCOL] = {NULL, NULL, &RANGE_HR, &RANGE_CADENCE, &RANGE_DIST};
    char where[CPD_MSG_MAX / 2], why[CPD_MSG_MAX];
    for (size_t r = 0; r < n; r++) {
        for (int k = 0; k < NCOL; k++) {
            if (col[k] < 0)
                continue;
            const char *v = cpd_csv_get(c, r, (size_t)col[k]);
            double x = 0;
            if (!*v) {
                snprintf(why, sizeof why, "missing value");
                goto bad;
            }
            if (k == C_TIME) {
                if (cpd_parse_duration(v, &x)) {
                    snprintf(why, sizeof why, "'%s' is not a time: use seconds or h:mm:ss", v);
                    goto bad;
                }
                if (r > 0 && x < w->ch[C_TIME][r - 1]) {
                    snprintf(why, sizeof why, "time runs backwards: %g s after %g s on the row before", x,
                             w->ch[C_TIME][r - 1]);
                    goto bad;
                }
            } else {
                if (cpd_parse_number(v, &x)) {
                    snprintf(why, sizeof why, "'%s' is not a number", v);
                    goto bad;
                }
                if (k == C_VALUE && x < 0) {
                    snprintf(why, sizeof why, "%s must be 0 %s or more (got %g)", speed ? "speed" : "power",
                             speed ? "m/s" : "W", x);
                    goto bad;
                }
                if (range[k] && !cpd_in_range(range[k], x)) {
                    cpd_range_msg(range[k], x, why, sizeof why);
                    goto bad;
                }
            }
            w->ch[k][r] = x;
            continue;
        bad:
            cpd_csv_where(c, r, col[k], where, sizeof where);
            snprintf(msg, CPD_MSG_MAX, "%s: %s", where, why);
            return CPD_EDATA;
        }
    }
    out->speed = speed;
    out->samples.n = n;
    out->samples.time_s = w->ch[C_TIME];
    out->samples.value = w->ch[C_VALUE];
    out->samples.hr_bpm = col[C_HR] >= 0 ? w->ch[C_HR] : NULL;
    out->samples.cadence_rpm = col[C_CAD] >= 0 ? w->ch[C_CAD] : NULL;
    out->samples.distance_m = col[C_DIST] >= 0 ? w->ch[C_DIST] : NULL;
    return CPD_OK;
}

/* Cleans the samples read, their mean and maximum, and the curve. c: the parsed table of the full
 * path, for the cleaning's messages; NULL on the fast path, where a cleaning failure returns
 * CPD_EDATA without a message (the full path then words it). */
static int clean_and_curve(cpd_session_import_ws *w, const char *path, const cpd_session_import_opts *opts,
                           const cpd_csv *c, cpd_session_import *out, char *msg)
{
    size_t n = out->samples.n;
    int speed = out->speed;
    cpd_session_opts so;
    cpd_session_opts_init(&so, speed ? CPD_SESSION_SPEED : CPD_SESSION_POWER);
    so.ceiling = opts->spike_limit;
    char why2[CPD_MSG_MAX];
    int rc = cpd_session_clean(w->sw, out->samples.time_s, out->samples.value, n, &so, &out->clean, why2);
    if (rc == CPD_ENOMEM)
        return rc;
    if (rc == CPD_EUSAGE) {
        snprintf(msg, CPD_MSG_MAX, "%s", why2);
        return rc;
    }
    if (rc) {
        if (c)
            clean_error(c, &out->clean, speed, n ? out->samples.time_s[n - 1] - out->samples.time_s[0] : 0, msg);
        return CPD_EDATA;
    }
    const cpd_session *s = &out->clean;
    double sum = 0, hi = 0;
    for (size_t i = 0; i < s->recorded_s; i++) {
        sum += s->value[i];
        hi = s->value[i] > hi ? s->value[i] : hi;
    }
    out->mean_value = sum / (double)s->recorded_s;
    out->max_value = hi;
    if (opts->curve && (rc = cpd_mmp_session(w->mw, s, &out->curve)))
        snprintf(msg, CPD_MSG_MAX, "%s: the mean-maximal curve could not be computed: %s", path, cpd_strerror(rc));
    return rc;
}

int cpd_import_session(cpd_session_import_ws *w, const char *path, const cpd_session_import_opts *opts,
                       cpd_session_import *out, char *msg)
{
    memset(out, 0, sizeof *out);
    uint64_t hash = 0;
    int rc = CPD_OK;
    if (!(w->path && strcmp(w->path, path) == 0) && (rc = cpd_import_session_load(w, path, &hash, msg)))
        return rc;
    hash = w->hash;
    free(w->path); /* the bytes serve this one reading */
    w->path = NULL;
    rc = opts->map ? -1 : read_fast(w, opts, out);
    if (rc == CPD_OK) {
        rc = clean_and_curve(w, path, opts, NULL, out, msg);
        if (rc != CPD_EDATA)
            goto done;
        memset(out, 0, sizeof *out);
    } else if (rc == CPD_ENOMEM) {
        goto done;
    }
    cpd_csv *c = NULL;
    if (!(rc = read_full(w, path, opts, out, &c, msg)))
        rc = clean_and_curve(w, path, opts, c, out, msg);
    cpd_csv_free(c);
done:
    out->hash = hash;
    if (rc) {
        cpd_session_samples z = {0};
        out->samples = z;
    }
    return rc;
}

int cpd_import_session_mem(cpd_session_import_ws *w, const char *name, const char *buf, size_t len,
                           const cpd_session_import_opts *opts, cpd_session_import *out, char *msg)
{
    memset(out, 0, sizeof *out);
    free(w->path);
    w->path = NULL;
    if (len + 1 > w->buf_cap) {
        char *nb = realloc(w->buf, len + 1);
        if (!nb)
            return CPD_ENOMEM;
        w->buf = nb;
        w->buf_cap = len + 1;
    }
    if (len)
        memcpy(w->buf, buf, len);
    w->buf[len] = '\0';
    w->len = len;
    if (!(w->path = strdup(name)))
        return CPD_ENOMEM;
    w->hash = cpd_session_hash(CPD_SESSION_HASH_INIT, w->buf, w->len);
    return cpd_import_session(w, name, opts, out, msg);
}

void cpd_import_session_rec(const cpd_session_import *in, cpd_session_rec *r)
{
    const cpd_session *s = &in->clean;
    r->speed = in->speed;
    r->hash = in->hash;
    r->n_samples = in->samples.n;
    r->spike_limit = s->spike_limit;
    r->elapsed_s = s->elapsed_s;
    r->recorded_s = s->recorded_s;
    r->missing_s = s->missing_s;
    r->longest_s = s->longest_s;
    r->n_segments = s->n_segments;
    r->n_dropouts = s->n_dropouts;
    r->dropout_s = s->dropout_s;
    r->filled_s = s->filled_s;
    r->n_splits = s->n_splits;
    r->n_spikes = s->n_spikes;
    r->spike_max = s->spike_max;
    r->mean_value = in->mean_value;
    r->max_value = in->max_value;
}
