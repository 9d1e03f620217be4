/* cmd_session.c: 'session add|list|show|remove', 'allout add|list|show|remove', 'curve', and the
 * session halves of 'fit --source curve' and 'predict --session'. */
#include "cli_pd.h"
#include "cli_session.h"
#include "commands.h"
#include "cpdomain/plots.h"
#include "cpdomain/allout.h"
#include "cpdomain/import.h"
#include "cpdomain/units.h"
#include "cpdomain/validate.h"

#include <dirent.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sys/stat.h>
#include <sysexits.h>
#include <unistd.h>

static const char HELP_SADD[] =
    "usage: cpdomain session add CODE FILE.csv|FOLDER... [--date D] [--modality power|speed]\n"
    "                            [--spike-limit X] [--map NAME=HEADER,...] [--note TEXT]\n\n"
    "Stores recorded training or race sessions: one or more CSV files, or folders of them (every\n"
    "*.csv inside, in name order). Columns: time_s (s or h:mm:ss) and power_w or speed_m_s;\n"
    "optional hr_bpm, cadence_rpm, distance_m (0 = no signal). With both power_w and speed_m_s the\n"
    "athlete's sport decides unless --modality. The date is --date, else the first YYYY-MM-DD in\n"
    "the file name. Cleaning: gaps of up to 5 s are filled linearly; a longer gap or a pause splits\n"
    "the session and no effort spans it; recorded zeros are real zeros; values above the spike limit\n"
    "(2500 W or 12 m/s unless --spike-limit) are reported and dropped. The file's samples are stored\n"
    "as read (one BLOB per channel) and the session's mean-maximal curve is computed once, now.\n"
    "A file identical to one already stored for the athlete is skipped and counted. One bad file\n"
    "rejects the whole command (file:line:column, exit 65) and nothing is stored.\n\n"
    "examples:\n"
    "  cpdomain session add C02 rides/ride_2026-10-03.csv\n"
    "  cpdomain session add C02 rides/ --note \"autumn block\"\n"
    "  cpdomain session add R02 run.csv --date 2026-10-18 --map speed_m_s=Speed,time_s=Time\n";
static const char HELP_SLIST[] = "usage: cpdomain session list CODE\n\nLists the athlete's stored sessions.\n\n"
                                 "example:\n  cpdomain --json session list C02\n";
static const char HELP_SSHOW[] =
    "usage: cpdomain session show ID\n\n"
    "One stored session: its duration, the clean segments, dropouts and spikes, the mean and highest\n"
    "clean second, and its mean-maximal curve at durations chosen from this tool's own science:\n"
    "2 min, the usual severe-extreme limit and the shortest effort of the CP window; 3 min, the\n"
    "3-minute all-out test; 15 min, the longest effort of the CP window; 30 and 60 min, efforts\n"
    "near and below CP (heavy domain).\n\n"
    "example:\n  cpdomain session show 12\n";
static const char HELP_SREMOVE[] = "usage: cpdomain session remove ID\n\nDeletes a stored session with its samples.\n\n"
                                   "example:\n  cpdomain session remove 12\n";
static const char HELP_AADD[] =
    "usage: cpdomain allout add CODE FILE.csv [--date D] [--start T] [--spike-limit W] [--map ...]\n"
    "                           [--note TEXT]\n\n"
    "Stores a 3-minute all-out cycling test (Burnley, Doust & Vanhatalo 2006; Vanhatalo, Doust &\n"
    "Burnley 2007) recorded as power over time (time_s, power_w; optional hr_bpm, cadence_rpm).\n"
    "--start is where the test began, in seconds after the first sample (default 0); the 180 s from\n"
    "there must be one unbroken segment (gaps of up to 5 s are filled as for sessions). The date is\n"
    "--date, else the first YYYY-MM-DD in the file name. The same file stored twice is skipped.\n\n"
    "example:\n  cpdomain allout add C01 allout_C01.csv --date 2026-11-09\n";
static const char HELP_ALIST[] = "usage: cpdomain allout list CODE\n\nLists the athlete's 3-minute all-out tests.\n\n"
                                 "example:\n  cpdomain allout list C01\n";
static const char HELP_ASHOW[] =
    "usage: cpdomain allout show ID\n\n"
    "End-test power (the mean of the final 30 s: the estimate of CP) and the work done above it over\n"
    "the 180 s (the estimate of W'), with checks that the test was really all-out, each explained\n"
    "in plain words, and the published caution that the W' estimate is weaker than the CP estimate.\n\n"
    "example:\n  cpdomain --json allout show 1\n";
static const char HELP_AREMOVE[] = "usage: cpdomain allout remove ID\n\nDeletes a stored all-out test.\n\n"
                                   "example:\n  cpdomain allout remove 2\n";
static const char HELP_CURVE[] =
    "usage: cpdomain curve CODE [--from D] [--to D] [--modality power|speed] [-o FILE.svg]\n\n"
    "The mean-maximal power (speed) curve over the athlete's stored sessions dated --from/--to: for\n"
    "every duration from 1 s to 60 min (then every minute) the best mean of any session, with the\n"
    "session and date it came from (the earliest session among equal values). No effort spans a\n"
    "gap longer than 5 s. --json lists every point; the table shows standard durations. -o FILE.svg\n"
    "draws the whole curve on a logarithmic time axis.\n\n"
    "examples:\n  cpdomain curve C02\n  cpdomain --json curve C02 --from 2026-11-01\n  cpdomain curve C02 -o c02_curve.svg\n";

typedef struct {
    const char *date, *modality, *spike, *map, *note, *start, *from, *to;
    const char *out; /* curve -o FILE.svg */
} sess_opts;

static int sess_opt(int opt, const char *arg, void *ud)
{
    sess_opts *o = ud;
    switch (opt) {
    case 'd': o->date = arg; break;
    case 'm': o->modality = arg; break;
    case 'k': o->spike = arg; break;
    case 'p': o->map = arg; break;
    case 'n': o->note = arg; break;
    case 's': o->start = arg; break;
    case 'f': o->from = arg; break;
    case 't': o->to = arg; break;
    case 'o': o->out = arg; break;
    default: return EX_USAGE;
    }
    return 0;
}

/* Parses options and checks the count of arguments: exactly want, or at least want when many. */
static int parse(int argc, char **argv, const char *help, sess_opts *o, int want, int many, const char *what, int *first)
{
    static const struct option lo[] = {
        {"date", required_argument, NULL, 'd'},        {"modality", required_argument, NULL, 'm'},
        {"spike-limit", required_argument, NULL, 'k'}, {"map", required_argument, NULL, 'p'},
        {"note", required_argument, NULL, 'n'},        {"start", required_argument, NULL, 's'},
        {"from", required_argument, NULL, 'f'},        {"to", required_argument, NULL, 't'},
        {"help", no_argument, NULL, 'h'},              {"output", required_argument, NULL, 'o'},
        {NULL, 0, NULL, 0},
    };
    int done = 0;
    memset(o, 0, sizeof *o);
    int rc = cli_getopt(argc, argv, "ho:", lo, help, sess_opt, o, first, &done);
    if (rc)
        return rc;
    if (done)
        return -1;
    if (o->out && strcmp(argv[0], "curve") != 0)
        return cli_usage(argv[0], "-o goes with 'curve' (the plot of the mean-maximal curve)");
    if (o->out && (rc = cli_plot_path(argv[0], o->out)))
        return rc;
    if (argc - *first < want)
        return cli_usage(argv[0], "missing argument %s", what);
    if (!many && argc - *first > want)
        return cli_usage(argv[0], "unexpected argument '%s'", argv[*first + want]);
    if (o->modality && strcmp(o->modality, "power") && strcmp(o->modality, "speed"))
        return cli_usage(argv[0], "--modality must be power or speed");
    int d = 0;
    if (o->from && cpd_parse_date(o->from, &d))
        return cli_usage(argv[0], "--from: '%s' is not a date (YYYY-MM-DD)", o->from);
    if (o->to && cpd_parse_date(o->to, &d))
        return cli_usage(argv[0], "--to: '%s' is not a date (YYYY-MM-DD)", o->to);
    if (o->from && o->to && strcmp(o->from, o->to) > 0)
        return cli_usage(argv[0], "--from %s is after --to %s", o->from, o->to);
    return 0;
}


/* The unit words of a modality. */
static const char *vunit(int speed)
{
    return speed ? "m/s" : "W";
}

static const char *vkey(int speed, const char *power_key, const char *speed_key)
{
    return speed ? speed_key : power_key;
}

/* A value for people: W to 0 decimals, or m/s to 2 with the pace per km. */
static const char *fmt_value(double v, int speed, char *buf, size_t n)
{
    char num[32];
    if (!speed)
        snprintf(buf, n, "%s W", cli_num(num, sizeof num, v, 0));
    else {
        char pace[32];
        cpd_format_pace(v, 1000, pace, sizeof pace);
        snprintf(buf, n, "%s m/s (%s/km)", cli_num(num, sizeof num, v, 2), pace);
    }
    return buf;
}

/* The date of a file: --date, else the first YYYY-MM-DD in its name; not in the future. */
static int file_date(cli_ctx *c, const char *cmd, const char *opt_date, const char *path, char *date)
{
    char msg[CPD_MSG_MAX];
    if (opt_date) {
        if (strlen(opt_date) != 10 || cpd_validate_date(opt_date, c->today, msg))
            return cli_usage(cmd, "--date: %s", strlen(opt_date) != 10 ? "use YYYY-MM-DD" : msg);
        snprintf(date, 11, "%s", opt_date);
        return 0;
    }
    if (cpd_import_date_from_name(path, date) != CPD_OK)
        return cli_usage(cmd, "%s: no date: give --date YYYY-MM-DD or name the file with one (ride_2026-10-03.csv)", path);
    if (cpd_validate_date(date, c->today, msg))
        return cli_usage(cmd, "%s: the date in the file name: %s", path, msg);
    return 0;
}

/* ---- the list of files: arguments, folders expanded to their *.csv in name order ---- */
typedef struct {
    char **path;
    size_t n, cap;
} file_list;

static void files_free(file_list *l)
{
    for (size_t i = 0; i < l->n; i++)
        free(l->path[i]);
    free(l->path);
    memset(l, 0, sizeof *l);
}

static int files_push(file_list *l, const char *dir, const char *name)
{
    if (l->n == l->cap) {
        size_t cap = l->cap ? 2 * l->cap : 16;
        char **p = realloc(l->path, cap * sizeof *p);
        if (!p)
            return CPD_ENOMEM;
        l->path = p;
        l->cap = cap;
    }
    size_t L = (dir ? strlen(dir) + 1 : 0) + strlen(name) + 1;
    char *s = malloc(L);
    if (!s)
        return CPD_ENOMEM;
    if (dir)
        snprintf(s, L, "%s%s%s", dir, dir[strlen(dir) - 1] == '/' ? "" : "/", name);
    else
        snprintf(s, L, "%s", name);
    l->path[l->n++] = s;
    return CPD_OK;
}

static int by_name(const void *a, const void *b)
{
    return strcmp(*(char *const *)a, *(char *const *)b);
}

/* Adds path, or every *.csv in it when it is a folder. Returns 0 or an exit code after printing. */
static int files_add(cli_ctx *c, file_list *l, const char *path)
{
    struct stat sb;
    if (stat(path, &sb) != 0 || !S_ISDIR(sb.st_mode))
        return files_push(l, NULL, path) ? cli_fail(c, CPD_ENOMEM, "out of memory") : 0;
    DIR *d = opendir(path);
    if (!d)
        return cli_fail(c, CPD_EIO, "%s: cannot read the folder", path);
    size_t first = l->n;
    struct dirent *e;
    int rc = CPD_OK;
    while (!rc && (e = readdir(d)) != NULL) {
        size_t L = strlen(e->d_name);
        if (e->d_name[0] == '.' || L < 5 || strcasecmp(e->d_name + L - 4, ".csv") != 0)
            continue;
        rc = files_push(l, path, e->d_name);
    }
    closedir(d);
    if (rc)
        return cli_fail(c, rc, "out of memory");
    if (l->n == first)
        return cli_fail(c, CPD_EIO, "%s: the folder has no .csv files", path);
    qsort(l->path + first, l->n - first, sizeof *l->path, by_name);
    return 0;
}

/* The import options of 'session add' and 'allout add'. Returns 0 or an exit code. */
static int import_opts(const char *cmd, const sess_opts *o, const cpd_athlete *a, int allout, cpd_session_import_opts *io)
{
    memset(io, 0, sizeof *io);
    io->map = o->map;
    io->want_speed = allout ? 0 : o->modality ? strcmp(o->modality, "speed") == 0 : -1;
    io->prefer_speed = cli_speed_sport(a);
    io->curve = !allout;
    if (o->spike) {
        int rc = cli_number("--spike-limit", o->spike, &io->spike_limit);
        if (rc)
            return rc;
        if (!(io->spike_limit > 0 && io->spike_limit <= 100000))
            return cli_usage(cmd, "--spike-limit must be above 0 and at most 100000 (W or m/s; got %g)", io->spike_limit);
    }
    return 0;
}

/* Prints why a file was rejected and that nothing was stored; returns the exit code. */
static int reject(cli_ctx *c, const char *cmd, int rc, const char *msg)
{
    int ex = cli_fail(c, rc, "%s", msg);
    fprintf(stderr, "cpdomain: %s: nothing was stored (one bad file rejects the whole command)\n", cmd);
    return ex;
}

/* Seconds on the 1-s grid from the first sample to the last, both included: a 1-Hz file of
 * 5100 rows lasts 5100 s (session.h's grid_s). */
static double grid_duration_s(const cpd_session_rec *r)
{
    return floor(r->elapsed_s + CPD_SESSION_TIME_TOL_S) + 1;
}

static void describe(const cpd_session_rec *r, char *buf, size_t n)
{
    char el[24];
    cpd_format_duration(grid_duration_s(r), el, sizeof el);
    int w = snprintf(buf, n, "%s (%zu samples), %zu segment%s", el, r->n_samples, r->n_segments, r->n_segments == 1 ? "" : "s");
    if (w < 0 || (size_t)w >= n)
        return;
    if (r->n_dropouts)
        w += snprintf(buf + w, n - (size_t)w, "; %zu dropout%s: %zu s filled, %zu split%s", r->n_dropouts,
                      r->n_dropouts == 1 ? "" : "s", r->filled_s, r->n_splits, r->n_splits == 1 ? "" : "s");
    if (w > 0 && (size_t)w < n && r->n_spikes)
        snprintf(buf + w, n - (size_t)w, "; %zu spike%s above %g %s dropped (highest %g)", r->n_spikes,
                 r->n_spikes == 1 ? "" : "s", r->spike_limit, vunit(r->speed), r->spike_max);
}

static int session_add(cli_ctx *c, int argc, char **argv)
{
    sess_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_SADD, &o, 2, 1, "CODE FILE.csv", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if (o.start || o.from || o.to)
        return cli_usage("session add", "--start, --from and --to do not apply here");
    const char *code = argv[first];
    file_list files = {0};
    cpd_session_import_ws *w = NULL;
    cli_json *doc = NULL;
    char *dates = NULL;
    FILE *notes = NULL;
    char *notes_text = NULL;
    size_t notes_len = 0;
    int ex = 0;
    for (int i = first + 1; i < argc && !ex; i++)
        ex = files_add(c, &files, argv[i]);
    if (ex)
        goto done;
    dates = calloc(files.n, 11);
    if (!dates) {
        ex = cli_fail(c, CPD_ENOMEM, "out of memory");
        goto done;
    }
    for (size_t i = 0; i < files.n && !ex; i++)
        ex = file_date(c, "session add", o.date, files.path[i], dates + 11 * i);
    if (ex || (ex = cli_open(c, 0)))
        goto done;
    cpd_athlete a;
    if ((rc = cpd_store_athlete_get(c->store, code, &a))) {
        ex = cli_store_fail(c, rc);
        goto done;
    }
    cpd_session_import_opts io;
    if ((ex = import_opts("session add", &o, &a, 0, &io)))
        goto done;
    w = cpd_import_session_alloc();
    doc = c->json ? cj_obj() : NULL; /* the per-file record is kept only when it will be printed */
    if (!w || (c->json && !doc)) {
        ex = cli_fail(c, CPD_ENOMEM, "out of memory");
        goto done;
    }
    /* what each file became is said only after the commit: a kill or a busy store before it stores
     * nothing, and nothing may have been reported as stored */
    notes = open_memstream(&notes_text, &notes_len);
    if (!notes) {
        ex = cli_fail(c, CPD_ENOMEM, "out of memory");
        goto done;
    }
    cli_json *ids = doc ? cj_add_arr(doc, "ids") : NULL;
    cli_json *added_arr = doc ? cj_add_arr(doc, "sessions") : NULL;
    cli_json *skipped_arr = doc ? cj_add_arr(doc, "skipped") : NULL;
    if ((rc = cpd_store_begin(c->store))) {
        ex = cli_store_fail(c, rc);
        goto done;
    }
    /* many files on a terminal: one progress line instead of a line per file */
    int progress = !c->quiet && files.n >= 10 && isatty(STDERR_FILENO);
    size_t added = 0, skipped = 0, with_spikes = 0, with_splits = 0;
    int64_t first_id = 0;
    char msg[CPD_MSG_MAX];
    for (size_t i = 0; i < files.n; i++) {
        const char *path = files.path[i];
        if (progress)
            fprintf(stderr, "\rsession add: file %zu of %zu", i + 1, files.n);
        uint64_t h = 0;
        if ((rc = cpd_import_session_load(w, path, &h, msg))) {
            ex = reject(c, "session add", rc, msg);
            goto done;
        }
        int64_t dup = 0;
        char other[CPD_CODE_MAX + 1];
        if ((rc = cpd_store_session_find(c->store, a.code, 0, h, &dup, NULL))) {
            ex = cli_store_fail(c, rc);
            goto done;
        }
        if (dup) {
            skipped++;
            if (doc) {
                cli_json *sk = cj_obj();
                cj_str(sk, "file", path);
                cj_int(sk, "duplicate_of", dup);
                cj_push(skipped_arr, sk);
            }
            if (!progress)
                fprintf(notes, "skipped %s: the same file is stored as session %lld\n", path, (long long)dup);
            continue;
        }
        int64_t elsewhere = 0;
        if ((rc = cpd_store_session_find(c->store, NULL, 0, h, &elsewhere, other))) {
            ex = cli_store_fail(c, rc);
            goto done;
        }
        cpd_session_import im;
        if ((rc = cpd_import_session(w, path, &io, &im, msg))) {
            ex = reject(c, "session add", rc, msg);
            goto done;
        }
        cpd_session_rec r;
        memset(&r, 0, sizeof r);
        snprintf(r.athlete, sizeof r.athlete, "%s", a.code);
        memcpy(r.date, dates + 11 * i, 11);
        snprintf(r.note, sizeof r.note, "%s", o.note ? o.note : "");
        snprintf(r.source_file, sizeof r.source_file, "%s", path);
        cpd_import_session_rec(&im, &r);
        int64_t id = 0;
        const char *bad_field = NULL;
        if (cpd_validate_session_rec(&r, c->today, &bad_field, msg)) { /* the record gate every path passes */
            ex = cli_fail(c, CPD_EDATA, "%s: %s: %s", path, bad_field, msg);
            goto done;
        }
        if ((rc = cpd_store_session_add(c->store, &r, &im.samples, &im.curve, &id))) {
            ex = cli_store_fail(c, rc);
            goto done;
        }
        if (!first_id)
            first_id = id;
        added++;
        with_spikes += r.n_spikes > 0;
        with_splits += r.n_splits > 0;
        if (doc) {
            cj_push_num(ids, (double)id);
            cli_json *so = cj_obj();
            cj_int(so, "id", id);
            cj_str(so, "file", path);
            cj_str(so, "date", r.date);
            cj_str(so, "modality", r.speed ? "speed" : "power");
            cj_int(so, "samples", (long long)r.n_samples);
            cj_num(so, "duration_s", grid_duration_s(&r));
            cj_int(so, "recorded_s", (long long)r.recorded_s);
            cj_int(so, "segments", (long long)r.n_segments);
            cj_int(so, "dropouts", (long long)r.n_dropouts);
            cj_int(so, "filled_s", (long long)r.filled_s);
            cj_int(so, "splits", (long long)r.n_splits);
            cj_int(so, "spikes", (long long)r.n_spikes);
            cj_int(so, "curve_points", (long long)im.curve.n);
            cj_push(added_arr, so);
        }
        if (elsewhere)
            fprintf(stderr, "%scpdomain: warning: %s is also stored for athlete %s (session %lld): is the athlete right?\n",
                    progress ? "\n" : "", path, other, (long long)elsewhere);
        if (!progress) {
            char d[256];
            describe(&r, d, sizeof d);
            fprintf(notes, "stored session %lld for %s, %s: %s\n", (long long)id, a.code, r.date, d);
        }
    }
    if ((rc = cpd_store_commit(c->store))) {
        ex = cli_store_fail(c, rc);
        goto done;
    }
    if (fclose(notes) == 0 && notes_len && !c->quiet)
        fputs(notes_text, stderr);
    notes = NULL;
    if (progress)
        fputc('\n', stderr);
    if (added != 1 || skipped)
        cli_note(c, "%s: %zu session%s added (%zu with spikes dropped, %zu split by gaps), %zu duplicate%s skipped",
                 a.code, added, added == 1 ? "" : "s", with_spikes, with_splits, skipped, skipped == 1 ? "" : "s");
    if (c->json) {
        if (first_id)
            cj_int(doc, "id", first_id);
        else
            cj_null(doc, "id");
        cj_str(doc, "athlete", a.code);
        cj_int(doc, "added", (long long)added);
        cj_int(doc, "skipped_duplicates", (long long)skipped);
        ex = cj_print(doc);
        doc = NULL;
    }
done:
    if (notes)
        fclose(notes);
    free(notes_text);
    cj_free(doc);
    cpd_import_session_free(w);
    free(dates);
    files_free(&files);
    return ex;
}

static void rec_json(cli_json *o, const cpd_session_rec *r)
{
    cj_int(o, "id", r->id);
    cj_str(o, "athlete", r->athlete);
    cj_str(o, "date", r->date);
    cj_str(o, "modality", r->speed ? "speed" : "power");
    cj_int(o, "samples", (long long)r->n_samples);
    cj_num(o, "duration_s", grid_duration_s(r));
    cj_num(o, "elapsed_s", r->elapsed_s);
    cj_int(o, "recorded_s", (long long)r->recorded_s);
    cj_int(o, "segments", (long long)r->n_segments);
    cj_int(o, "dropouts", (long long)r->n_dropouts);
    cj_int(o, "splits", (long long)r->n_splits);
    cj_int(o, "spikes", (long long)r->n_spikes);
    cj_num(o, vkey(r->speed, "mean_power_w", "mean_speed_m_s"), r->mean_value);
    cj_num(o, vkey(r->speed, "max_power_w", "max_speed_m_s"), r->max_value);
    if (r->allout) {
        cj_num(o, "end_power_w", r->has_allout ? r->end_value : NAN);
        cj_num(o, "work_above_end_j", r->has_allout ? r->work_above_end : NAN);
    }
    cj_str(o, "note", r->note);
    cj_str(o, "source_file", r->source_file[0] ? r->source_file : NULL);
    char h[17];
    snprintf(h, sizeof h, "%016llx", (unsigned long long)r->hash);
    cj_str(o, "content_hash", h);
}

static int list_run(cli_ctx *c, int argc, char **argv, int allout)
{
    sess_opts o;
    int first = 0;
    int rc = parse(argc, argv, allout ? HELP_ALIST : HELP_SLIST, &o, 1, 0, "CODE", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_athlete a;
    if ((rc = cpd_store_athlete_get(c->store, argv[first], &a)))
        return cli_store_fail(c, rc);
    cpd_session_rec *v = NULL;
    size_t n = 0;
    if ((rc = cpd_store_session_list(c->store, a.code, allout, &v, &n)))
        return cli_store_fail(c, rc);
    if (c->json || c->csv) {
        cli_json *d = cj_obj();
        cli_json *arr = cj_add_arr(d, allout ? "allouts" : "sessions");
        for (size_t i = 0; i < n; i++) {
            cli_json *t = cj_obj();
            rec_json(t, &v[i]);
            cj_push(arr, t);
        }
        free(v);
        return c->csv ? cj_print_csv(d, allout ? "allouts" : "sessions", NULL) : cj_print(d);
    }
    static const char *const sh[] = {"id", "date", "duration", "recorded", "segments", "mean", "max", "dropouts", "spikes", "note"};
    static const char *const ah[] = {"id", "date", "end power", "work above", "peak", "note"};
    cli_table *t = allout ? cli_table_new(6, ah, "rlrrrl") : cli_table_new(10, sh, "rlrrrrrrrl");
    for (size_t i = 0; i < n; i++) {
        const cpd_session_rec *r = &v[i];
        char id[24], du[24], re[24], sg[24], mn[48], mx[48], dr[48], sp[24], num[32];
        snprintf(id, sizeof id, "%lld", (long long)r->id);
        if (allout) {
            char wk[32];
            snprintf(mn, sizeof mn, "%s W", cli_num(num, sizeof num, r->has_allout ? r->end_value : NAN, 1));
            snprintf(wk, sizeof wk, "%s kJ", cli_num(num, sizeof num, r->has_allout ? r->work_above_end / 1000 : NAN, 2));
            snprintf(mx, sizeof mx, "%s W", cli_num(num, sizeof num, r->max_value, 0));
            const char *row[] = {id, r->date, mn, wk, mx, r->note};
            cli_table_row(t, row);
            continue;
        }
        cpd_format_duration(grid_duration_s(r), du, sizeof du);
        cpd_format_duration((double)r->recorded_s, re, sizeof re);
        snprintf(sg, sizeof sg, "%zu", r->n_segments);
        snprintf(mn, sizeof mn, "%s %s", cli_num(num, sizeof num, r->mean_value, r->speed ? 2 : 0), vunit(r->speed));
        snprintf(mx, sizeof mx, "%s %s", cli_num(num, sizeof num, r->max_value, r->speed ? 2 : 0), vunit(r->speed));
        snprintf(dr, sizeof dr, "%zu (%zu s filled)", r->n_dropouts, r->filled_s);
        snprintf(sp, sizeof sp, "%zu", r->n_spikes);
        const char *row[] = {id, r->date, du, re, sg, mn, mx, dr, sp, r->note};
        cli_table_row(t, row);
    }
    cli_table_print(t);
    free(v);
    return 0;
}

static int session_list(cli_ctx *c, int argc, char **argv)
{
    return list_run(c, argc, argv, 0);
}

static int allout_list(cli_ctx *c, int argc, char **argv)
{
    return list_run(c, argc, argv, 1);
}

/* The durations session show reports, from the tool's own science (stated in HELP_SSHOW): the
 * shortest trial of the CP window and usual severe-extreme limit (2 min), the 3-minute all-out test,
 * the longest trial of the CP window (15 min; the 2-15 min window is common practice), and 30 and
 * 60 min, efforts near and below CP. */
static const size_t SHOW_DURATIONS[] = {120, 180, 900, 1800, 3600};
#define N_SHOW (sizeof SHOW_DURATIONS / sizeof SHOW_DURATIONS[0])

static int session_show(cli_ctx *c, int argc, char **argv)
{
    sess_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_SSHOW, &o, 1, 0, "ID", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    long long id = 0;
    if ((rc = cli_id("session show", argv[first], &id)) || (rc = cli_open(c, 0)))
        return rc;
    cpd_session_rec r;
    cpd_session_samples *x = NULL;
    cpd_session_ws *w = NULL;
    cpd_session s;
    if ((rc = cli_session_load_clean(c, id, 0, &r, &x, &w, &s)))
        return rc;
    double *cbuf = NULL;
    cpd_mmp_curve cv;
    int ex = 0;
    if ((rc = cpd_store_session_curve(c->store, id, &cbuf, &cv))) {
        ex = cli_store_fail(c, rc);
        goto done;
    }
    cpd_athlete a;
    if ((rc = cpd_store_athlete_get(c->store, r.athlete, &a))) {
        ex = cli_store_fail(c, rc);
        goto done;
    }
    int spd = r.speed;
    if (c->json) {
        cli_json *d = cj_obj();
        rec_json(d, &r);
        cj_int(d, "missing_s", (long long)s.missing_s);
        cj_int(d, "longest_segment_s", (long long)s.longest_s);
        cli_json *sg = cj_add_arr(d, "segment_list");
        for (size_t i = 0; i < s.n_segments; i++) {
            cli_json *g = cj_obj();
            cj_int(g, "start_s", (long long)s.segments[i].start_s);
            cj_int(g, "length_s", (long long)s.segments[i].length_s);
            cj_push(sg, g);
        }
        cli_json *dr = cj_add_obj(d, "dropout_detail");
        cj_int(dr, "count", (long long)s.n_dropouts);
        cj_int(dr, "seconds", (long long)s.dropout_s);
        cj_int(dr, "filled_s", (long long)s.filled_s);
        cj_int(dr, "splits", (long long)s.n_splits);
        cli_json *sp = cj_add_obj(d, "spike_detail");
        cj_int(sp, "count", (long long)s.n_spikes);
        cj_num(sp, "limit", s.spike_limit);
        cj_num(sp, "max", s.n_spikes ? s.spike_max : NAN);
        cj_num(sp, "first_at_s", s.n_spikes ? s.first_spike_s : NAN);
        cj_int(d, "curve_points", (long long)cv.n);
        cli_json *cu = cj_add_arr(d, "curve");
        for (size_t k = 0; k < N_SHOW; k++) {
            size_t i = cli_mmp_grid_index(SHOW_DURATIONS[k]);
            cli_json *p = cj_obj();
            cj_int(p, "duration_s", (long long)SHOW_DURATIONS[k]);
            cj_num(p, vkey(spd, "power_w", "speed_m_s"), i < cv.n ? cv.value[i] : NAN);
            cj_num(p, "start_s", i < cv.n ? cv.start_s[i] : NAN);
            cj_push(cu, p);
        }
        ex = cj_print(d);
        goto done;
    }
    char t1[24], t2[24], v1[64], v2[64];
    printf("session %lld: %s %s, %s, %s%s%s\n", id, a.code, a.name, r.date, spd ? "speed" : "power",
           r.source_file[0] ? ", file " : "", r.source_file);
    if (r.note[0])
        printf("note       %s\n", r.note);
    cpd_format_duration(grid_duration_s(&r), t1, sizeof t1);
    printf("duration   %s on the 1-s grid from the first to the last sample (%zu samples)\n", t1, r.n_samples);
    cpd_format_duration((double)s.recorded_s, t1, sizeof t1);
    printf("recorded   %s in %zu segment%s", t1, s.n_segments, s.n_segments == 1 ? "" : "s");
    if (s.missing_s)
        printf("; %zu s in gaps no effort spans", s.missing_s);
    printf("\n");
    if (s.n_segments > 1) {
        printf("segments  ");
        for (size_t i = 0; i < s.n_segments && i < 12; i++) {
            cpd_format_duration((double)s.segments[i].start_s, t1, sizeof t1);
            cpd_format_duration((double)(s.segments[i].start_s + s.segments[i].length_s), t2, sizeof t2);
            printf(" %s-%s", t1, t2);
        }
        printf("%s\n", s.n_segments > 12 ? " ..." : "");
    }
    if (s.n_dropouts)
        printf("dropouts   %zu (%zu s missing): %zu s filled across gaps of up to %d s, %zu split%s the session\n",
               s.n_dropouts, s.dropout_s, s.filled_s, CPD_SESSION_MAX_FILL_S, s.n_splits,
               s.n_splits == 1 ? "" : "s");
    else
        printf("dropouts   none\n");
    if (s.n_spikes) {
        cpd_format_duration(s.first_spike_s, t1, sizeof t1);
        printf("spikes     %zu above %g %s dropped (highest %g %s, first at %s)\n", s.n_spikes, s.spike_limit,
               vunit(spd), s.spike_max, vunit(spd), t1);
    } else
        printf("spikes     none above %g %s\n", s.spike_limit, vunit(spd));
    printf("%-10s mean %s, highest second %s (clean seconds; recorded zeros count)\n", spd ? "speed" : "power",
           fmt_value(r.mean_value, spd, v1, sizeof v1), fmt_value(r.max_value, spd, v2, sizeof v2));
    printf("curve     ");
    for (size_t k = 0; k < N_SHOW; k++) {
        size_t i = cli_mmp_grid_index(SHOW_DURATIONS[k]);
        cpd_format_duration((double)SHOW_DURATIONS[k], t1, sizeof t1);
        printf("%s %s %s", k ? "," : "", t1, i < cv.n ? fmt_value(cv.value[i], spd, v1, sizeof v1) : "-");
    }
    printf("\n");
done:
    free(cbuf);
    cpd_session_free(w);
    cpd_store_samples_free(x);
    return ex;
}

static int remove_run(cli_ctx *c, int argc, char **argv, int allout)
{
    sess_opts o;
    int first = 0;
    int rc = parse(argc, argv, allout ? HELP_AREMOVE : HELP_SREMOVE, &o, 1, 0, "ID", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    long long id = 0;
    const char *cmd = allout ? "allout remove" : "session remove";
    if ((rc = cli_id(cmd, argv[first], &id)) || (rc = cli_open(c, 0)))
        return rc;
    if ((rc = cpd_store_session_remove(c->store, id, allout)))
        return cli_store_fail(c, rc);
    cli_note(c, "removed %s %lld", allout ? "all-out test" : "session", id);
    return 0;
}

static int session_remove(cli_ctx *c, int argc, char **argv)
{
    return remove_run(c, argc, argv, 0);
}

static int allout_remove(cli_ctx *c, int argc, char **argv)
{
    return remove_run(c, argc, argv, 1);
}

/* ---- 3-minute all-out tests ---- */

static void flags_json(cli_json *d, unsigned flags)
{
    cli_json *f = cj_add_arr(d, "flags");
    cli_json *t = cj_add_arr(d, "flag_notes");
    for (unsigned b = 0; b < CPD_ALLOUT_NFLAGS; b++)
        if (flags & (1u << b)) {
            cj_push_str(f, cpd_allout_flag_name(1u << b));
            cj_push_str(t, cpd_allout_flag_text(1u << b));
        }
}

static void flags_print(unsigned flags)
{
    for (unsigned b = 0; b < CPD_ALLOUT_NFLAGS; b++)
        if (flags & (1u << b))
            printf("  - %s\n", cpd_allout_flag_text(1u << b));
}

static int allout_add(cli_ctx *c, int argc, char **argv)
{
    sess_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_AADD, &o, 2, 0, "CODE FILE.csv", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if (o.modality || o.from || o.to)
        return cli_usage("allout add", "--modality, --from and --to do not apply here: the test is analysed from power");
    const char *path = argv[first + 1];
    char date[11];
    if ((rc = file_date(c, "allout add", o.date, path, date)))
        return rc;
    double start = 0;
    if (o.start && (rc = cli_duration("--start", o.start, &start)))
        return rc;
    if (start != floor(start))
        return cli_usage("allout add", "--start must be a whole second (got %g)", start);
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_athlete a;
    if ((rc = cpd_store_athlete_get(c->store, argv[first], &a)))
        return cli_store_fail(c, rc);
    cpd_session_import_opts io;
    if ((rc = import_opts("allout add", &o, &a, 1, &io)))
        return rc;
    char msg[CPD_MSG_MAX];
    uint64_t h = 0;
    cpd_session_import_ws *w = cpd_import_session_alloc();
    if (!w)
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    int ex = 0;
    int64_t dup = 0;
    if ((rc = cpd_import_session_load(w, path, &h, msg))) {
        ex = cli_fail(c, rc, "%s", msg);
        goto done;
    }
    if ((rc = cpd_store_session_find(c->store, a.code, 1, h, &dup, NULL))) {
        ex = cli_store_fail(c, rc);
        goto done;
    }
    if (dup) {
        cli_note(c, "skipped %s: the same file is stored as all-out test %lld", path, (long long)dup);
        if (c->json) {
            cli_json *d = cj_obj();
            cj_int(d, "id", dup);
            cj_bool(d, "duplicate", 1);
            ex = cj_print(d);
        }
        goto done;
    }
    cpd_session_import im;
    cpd_allout_result res;
    if ((rc = cpd_import_session(w, path, &io, &im, msg))) {
        ex = cli_fail(c, rc, "%s", msg);
        goto done;
    }
    if ((rc = cpd_allout_session(&im.clean, (size_t)start, &res, msg))) {
        ex = cli_fail(c, rc, "%s: %s", path, msg);
        goto done;
    }
    cpd_session_rec r;
    memset(&r, 0, sizeof r);
    snprintf(r.athlete, sizeof r.athlete, "%s", a.code);
    snprintf(r.date, sizeof r.date, "%s", date);
    r.allout = 1;
    r.test_start_s = start;
    r.has_allout = 1;
    r.end_value = res.end_power_w;
    r.work_above_end = res.work_above_end_j;
    snprintf(r.note, sizeof r.note, "%s", o.note ? o.note : "");
    snprintf(r.source_file, sizeof r.source_file, "%s", path);
    cpd_import_session_rec(&im, &r);
    int64_t id = 0;
    const char *bad_field = NULL;
    if (cpd_validate_session_rec(&r, c->today, &bad_field, msg)) { /* the record gate every path passes */
        ex = cli_fail(c, CPD_EDATA, "%s: %s: %s", path, bad_field, msg);
        goto done;
    }
    if ((rc = cpd_store_begin(c->store)) || (rc = cpd_store_session_add(c->store, &r, &im.samples, NULL, &id)) ||
        (rc = cpd_store_commit(c->store))) {
        ex = cli_store_fail(c, rc);
        goto done;
    }
    if (c->json) {
        cli_json *d = cj_obj();
        cj_int(d, "id", id);
        cj_str(d, "athlete", a.code);
        cj_str(d, "date", date);
        cj_num(d, "end_power_w", res.end_power_w);
        cj_num(d, "work_above_end_j", res.work_above_end_j);
        cj_bool(d, "all_out", res.all_out);
        flags_json(d, res.flags);
        ex = cj_print(d);
    } else {
        cli_note(c, "stored all-out test %lld for %s, %s: end power %.1f W, work above it %.2f kJ%s", (long long)id,
                 a.code, date, res.end_power_w, res.work_above_end_j / 1000,
                 res.all_out ? "" : " (flagged: see 'cpdomain allout show')");
    }
done:
    cpd_import_session_free(w);
    return ex;
}

static int allout_show(cli_ctx *c, int argc, char **argv)
{
    sess_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_ASHOW, &o, 1, 0, "ID", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    long long id = 0;
    if ((rc = cli_id("allout show", argv[first], &id)) || (rc = cli_open(c, 0)))
        return rc;
    cpd_session_rec r;
    cpd_session_samples *x = NULL;
    cpd_session_ws *w = NULL;
    cpd_session s;
    if ((rc = cli_session_load_clean(c, id, 1, &r, &x, &w, &s)))
        return rc;
    int ex = 0;
    cpd_allout_result res;
    char msg[CPD_MSG_MAX] = "";
    cpd_athlete a;
    if ((rc = cpd_allout_session(&s, (size_t)r.test_start_s, &res, msg))) {
        ex = cli_fail(c, rc, "all-out test %lld: %s", id, msg);
        goto done;
    }
    if ((rc = cpd_store_athlete_get(c->store, r.athlete, &a))) {
        ex = cli_store_fail(c, rc);
        goto done;
    }
    if (c->json) {
        cli_json *d = cj_obj();
        cj_int(d, "id", id);
        cj_str(d, "athlete", r.athlete);
        cj_str(d, "date", r.date);
        cj_num(d, "test_start_s", r.test_start_s);
        cj_num(d, "end_power_w", res.end_power_w);
        cj_num(d, "work_above_end_j", res.work_above_end_j);
        cj_num(d, "total_work_j", res.total_work_j);
        cj_num(d, "mean_power_w", res.mean_power_w);
        cj_num(d, "peak_power_w", res.peak_power_w);
        cj_int(d, "peak_at_s", (long long)res.peak_at_s);
        cj_num(d, "first30_mean_w", res.first30_mean_w);
        cj_num(d, "mean_120_150_w", res.mean_120_150_w);
        cj_num(d, "end_slope_w_s", res.end_slope_w_s);
        cj_num(d, "end_drift_w", res.end_drift_w);
        cj_num(d, "end_cv_pct", res.has_end_cv ? res.end_cv_pct : NAN);
        cj_int(d, "zero_s", (long long)res.zero_s);
        cj_pair(d, "end_power_ci95", res.end_power_ci95[0], res.end_power_ci95[1]);
        cj_num(d, "end_power_se_w", res.end_power_se_w);
        cj_pair(d, "work_above_end_ci95", res.work_above_ci95[0], res.work_above_ci95[1]);
        cj_num(d, "work_above_end_se_j", res.work_above_se_j);
        cj_bool(d, "all_out", res.all_out);
        flags_json(d, res.flags);
        cj_str(d, "method", "end_power_w: mean of the final 30 s; work_above_end_j: sum of max(P - end power, 0) "
                            "over the 180 one-second values (Vanhatalo, Doust & Burnley 2007 Med Sci Sports Exerc 39:548)");
        cj_str(d, "caution", cpd_allout_caution());
        ex = cj_print(d);
        goto done;
    }
    char t1[24];
    printf("3-minute all-out test %lld: %s %s, %s%s%s\n\n", id, a.code, a.name, r.date, r.source_file[0] ? ", file " : "",
           r.source_file);
    printf("end power        %.1f W   (95 %% CI %.1f to %.1f W; mean of the final 30 s: the estimate of CP)\n",
           res.end_power_w, res.end_power_ci95[0], res.end_power_ci95[1]);
    printf("work above it    %.2f kJ  (95 %% CI %.2f to %.2f kJ; over the 180 s: the estimate of W')\n",
           res.work_above_end_j / 1000, res.work_above_ci95[0] / 1000, res.work_above_ci95[1] / 1000);
    printf("                 intervals: measurement precision (SE of the 30-s mean), not the test's validity\n");
    cpd_format_duration((double)res.peak_at_s, t1, sizeof t1);
    printf("peak             %.0f W at %s; mean %.1f W; total work %.1f kJ\n", res.peak_power_w, t1, res.mean_power_w,
           res.total_work_j / 1000);
    printf("first 30 s       %.1f W (%.2f x end power); 2:00-2:30 %.1f W\n", res.first30_mean_w,
           res.end_power_w > 0 ? res.first30_mean_w / res.end_power_w : NAN, res.mean_120_150_w);
    printf("final 30 s       drift %+.1f W, coefficient of variation %s %%\n", res.end_drift_w,
           res.has_end_cv ? (snprintf(t1, sizeof t1, "%.1f", res.end_cv_pct), t1) : "-");
    if (res.all_out)
        printf("\nall-out checks   passed: a fast start, a falling curve and a level end\n");
    else {
        printf("\nall-out checks   flagged:\n");
        flags_print(res.flags);
    }
    printf("\n%s\n", cpd_allout_caution());
done:
    cpd_session_free(w);
    cpd_store_samples_free(x);
    return ex;
}

/* ---- the season curve ---- */

/* The season curve as JSON, streamed: thousands of points are written without building a node
 * for each number, in the layout cj_print gives. Returns 0 or 74 when stdout fails. */
static int curve_json(const cpd_athlete *a, int spd, const sess_opts *o, size_t ns, const cpd_mmp_season *se)
{
    FILE *f = stdout;
    fputs("{\n\t\"athlete\":\t", f);
    cj_write_str(f, a->code);
    fprintf(f, ",\n\t\"modality\":\t\"%s\",\n\t\"from\":\t", spd ? "speed" : "power");
    cj_write_str(f, o->from);
    fputs(",\n\t\"to\":\t", f);
    cj_write_str(f, o->to);
    fputs(",\n\t\"sessions\":\t", f);
    cj_write_num(f, (double)ns);
    fputs(",\n\t\"points\":\t[", f);
    char date[11];
    for (size_t i = 0; i < se->n; i++) {
        fputs(i ? "}, {\n\t\t\t\"duration_s\":\t" : "{\n\t\t\t\"duration_s\":\t", f);
        cj_write_num(f, se->duration_s[i]);
        fputs(spd ? ",\n\t\t\t\"speed_m_s\":\t" : ",\n\t\t\t\"power_w\":\t", f);
        cj_write_num(f, se->value[i]);
        fputs(",\n\t\t\t\"session\":\t", f);
        cj_write_num(f, (double)se->session[i]);
        cpd_format_date(se->date_days[i], date);
        fputs(",\n\t\t\t\"date\":\t\"", f);
        fputs(date, f);
        fputs("\",\n\t\t\t\"start_s\":\t", f);
        cj_write_num(f, se->start_s[i]);
        fputs("\n\t\t", f);
    }
    fputs(se->n ? "}]\n}\n" : "]\n}\n", f);
    return ferror(f) ? EX_IOERR : 0;
}

static int cmd_curve_run(cli_ctx *c, int argc, char **argv)
{
    sess_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_CURVE, &o, 1, 0, "CODE", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if (o.date || o.spike || o.map || o.note || o.start)
        return cli_usage("curve", "only --from, --to and --modality apply here");
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_athlete a;
    if ((rc = cpd_store_athlete_get(c->store, argv[first], &a)))
        return cli_store_fail(c, rc);
    int spd = 0;
    size_t ns = 0;
    cpd_mmp_season *se = NULL;
    if ((rc = cli_season_curve(c, &a, o.from, o.to, o.modality, &spd, &se, &ns)))
        return rc;
    if (o.out) { /* -o FILE.svg: the curve on a logarithmic time axis, through the plotting module */
        char title[160], *svg = NULL;
        snprintf(title, sizeof title, "%s: mean-maximal %s over %zu session%s", a.code, spd ? "speed" : "power", ns,
                 ns == 1 ? "" : "s");
        rc = cpd_plot_curve(se->duration_s, se->value, se->n, spd, title, &svg);
        int ex = rc ? cli_fail(c, rc, "-o %s: no plot: %s", o.out, cpd_strerror(rc))
                    : cli_write_file(c, o.out, svg, strlen(svg));
        free(svg);
        if (ex) {
            cpd_mmp_season_free(se);
            return ex;
        }
        cli_note(c, "wrote %s", o.out);
    }
    char date[11];
    if (c->json) { /* streamed: a season holds thousands of points */
        rc = curve_json(&a, spd, &o, ns, se);
        cpd_mmp_season_free(se);
        return rc;
    }
    if (c->csv) {
        const char *key = vkey(spd, "power_w", "speed_m_s");
        cli_json *d = cj_obj();
        cj_str(d, "athlete", a.code);
        cj_str(d, "modality", spd ? "speed" : "power");
        cj_str(d, "from", o.from);
        cj_str(d, "to", o.to);
        cj_int(d, "sessions", (long long)ns);
        cli_json *arr = cj_add_arr(d, "points");
        for (size_t i = 0; i < se->n; i++) {
            cli_json *p = cj_obj();
            cj_num(p, "duration_s", se->duration_s[i]);
            cj_num(p, key, se->value[i]);
            cj_int(p, "session", se->session[i]);
            cpd_format_date(se->date_days[i], date);
            cj_str(p, "date", date);
            cj_num(p, "start_s", se->start_s[i]);
            cj_push(arr, p);
        }
        cpd_mmp_season_free(se);
        return cj_print_csv(d, "points", NULL);
    }
    static const size_t std_d[] = {1,    5,    10,   15,   30,   60,   120,  180,  300,   480,   600,   720,  900,
                                   1200, 1800, 2400, 3600, 5400, 7200, 10800, 14400, 21600, 28800, 43200, 86400};
    printf("%s %s: mean-maximal %s over %zu session%s%s%s%s%s\n\n", a.code, a.name, spd ? "speed" : "power", ns,
           ns == 1 ? "" : "s", o.from ? " from " : "", o.from ? o.from : "", o.to ? " to " : "", o.to ? o.to : "");
    static const char *const head[] = {"duration", "best", "session", "date", "from"};
    cli_table *t = cli_table_new(5, head, "rrrll");
    for (size_t k = 0; k < sizeof std_d / sizeof std_d[0]; k++) {
        size_t i = cli_mmp_grid_index(std_d[k]);
        if (i >= se->n)
            break;
        char du[24], v[64], sid[24], at[24];
        cpd_format_duration((double)std_d[k], du, sizeof du);
        fmt_value(se->value[i], spd, v, sizeof v);
        snprintf(sid, sizeof sid, "%lld", (long long)se->session[i]);
        cpd_format_date(se->date_days[i], date);
        cpd_format_duration(se->start_s[i], at, sizeof at);
        const char *row[] = {du, v, sid, date, at};
        cli_table_row(t, row);
    }
    cli_table_print(t);
    char du[24];
    cpd_format_duration(se->duration_s[se->n - 1], du, sizeof du);
    printf("\nthe curve runs to %s (the longest segment); 'from' is where the effort began in its session\n", du);
    cpd_mmp_season_free(se);
    return 0;
}

/* ---- the command tables ---- */

static const cli_command session_table[] = {
    {"add", session_add, "store recorded sessions (files or folders)", HELP_SADD},
    {"list", session_list, "list an athlete's sessions", HELP_SLIST},
    {"show", session_show, "duration, segments, dropouts, spikes and curve of one session", HELP_SSHOW},
    {"remove", session_remove, "delete a session", HELP_SREMOVE},
};

static const cli_command allout_table[] = {
    {"add", allout_add, "store a 3-minute all-out test", HELP_AADD},
    {"list", allout_list, "list an athlete's all-out tests", HELP_ALIST},
    {"show", allout_show, "end power, work above it and the all-out checks", HELP_ASHOW},
    {"remove", allout_remove, "delete an all-out test", HELP_AREMOVE},
};

int cmd_session(cli_ctx *c, int argc, char **argv)
{
    return cli_dispatch(c, "session", session_table, sizeof session_table / sizeof session_table[0], argc, argv);
}

int cmd_allout(cli_ctx *c, int argc, char **argv)
{
    return cli_dispatch(c, "allout", allout_table, sizeof allout_table / sizeof allout_table[0], argc, argv);
}

int cmd_curve(cli_ctx *c, int argc, char **argv)
{
    return cmd_curve_run(c, argc, argv);
}
