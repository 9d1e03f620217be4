/* bench_sessions.c: a synthetic season of 400 two-hour 1-Hz rides written as CSV files and imported
 * through the store, file by file in one transaction, with the library calls 'session add' makes
 * (hash, duplicate check, read + clean + curve, store); then the season-curve query over them, and
 * peak memory after 40 and after 400 files. The same folder is then imported by the real binary
 * ('cpdomain session add', next to this program's folder) and its 'curve' timed. Printed figures,
 * not a test; the goals are printed beside them. */
#include "cpdomain/import.h"
#include "cpdomain/mmp.h"
#include "cpdomain/status.h"
#include "cpdomain/store.h"
#include "rng.h"

#include <dirent.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <sys/stat.h>
#include <sys/utsname.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

#define SESSIONS 400
#define RIDE_S 7200

static double now_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static long maxrss_kb(int who)
{
    struct rusage u;
    getrusage(who, &u);
    return u.ru_maxrss;
}

/* A ride of about two hours written as time_s,power_w,hr_bpm,cadence_rpm: endurance power with
 * noise, 4-min intervals, coasting zeros, short dropouts (2-5 s missing), a two-minute pause of
 * the recording after 80 min and a rare meter spike. Returns 0 or -1 on a write error. */
static int write_ride(rng *r, const char *path)
{
    FILE *f = fopen(path, "w");
    if (!f)
        return -1;
    fputs("time_s,power_w,hr_bpm,cadence_rpm\n", f);
    double base = 170 + 40 * rng_uniform(r), hr = 120;
    long clock = 0;
    for (size_t k = 0; k < RIDE_S; k++) {
        clock += 1;
        if (k == 2 * RIDE_S / 3)
            clock += 120;
        double u = rng_uniform(r);
        if (u < 0.004) {
            clock += 1 + (long)(4 * rng_uniform(r));
            continue;
        }
        double w = base + 25 * rng_normal(r);
        size_t phase = k % 900;
        if (phase >= 600 && phase < 600 + 240 * (k / 900 % 2))
            w += 160;
        if (phase >= 300 && phase < 300 + (size_t)(10 + k % 7))
            w = 0;
        if (w < 0)
            w = 0;
        if (u > 0.9999)
            w = 3100;
        hr += 0.02 * (100 + 0.3 * w - hr);
        fprintf(f, "%ld,%.0f,%.0f,%.0f\n", clock, w, hr, w > 0 ? 85 + 5 * rng_normal(r) : 0.0);
    }
    return fclose(f) == 0 ? 0 : -1;
}

/* Runs the binary with args (NULL-terminated), output to /dev/null. Returns its exit status. */
static int run(const char *const args[])
{
    fflush(NULL); /* or the child would write this program's buffered output a second time */
    pid_t p = fork();
    if (p < 0)
        return -1;
    if (p == 0) {
        if (!freopen("/dev/null", "w", stdout) || !freopen("/dev/null", "w", stderr))
            _exit(127);
        execv(args[0], (char *const *)args); /* execv's prototype predates const; it does not write */
        _exit(127);
    }
    int st = 0;
    if (waitpid(p, &st, 0) < 0)
        return -1;
    return WIFEXITED(st) ? WEXITSTATUS(st) : -1;
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

static double median(double *v, int n)
{
    qsort(v, (size_t)n, sizeof *v, cmp_double);
    return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

/* The first line of /proc/loadavg into buf ("?" when unreadable). */
static const char *loadavg(char *buf, size_t n)
{
    FILE *f = fopen("/proc/loadavg", "r");
    if (!f || !fgets(buf, (int)n, f))
        snprintf(buf, n, "?");
    if (f)
        fclose(f);
    buf[strcspn(buf, "\n")] = '\0';
    return buf;
}

/* CPU seconds (user + system) of the children waited for so far. */
static double children_cpu_s(void)
{
    struct rusage u;
    getrusage(RUSAGE_CHILDREN, &u);
    return (double)u.ru_utime.tv_sec + 1e-6 * (double)u.ru_utime.tv_usec + (double)u.ru_stime.tv_sec +
           1e-6 * (double)u.ru_stime.tv_usec;
}

static long file_size(const char *path)
{
    struct stat sb;
    return stat(path, &sb) == 0 ? (long)sb.st_size : 0;
}

#define REPS 3      /* repetitions of each side-by-side figure: the median is printed */
#define SEASON 40   /* files in the side-by-side season */

/* A fresh store at db with athlete B01 (untimed). Returns 0 or -1. */
static int fresh_store(const char *bin, const char *db)
{
    char path[400];
    static const char *const suffix[] = {"", "-wal", "-shm"};
    for (int k = 0; k < 3; k++) {
        snprintf(path, sizeof path, "%s%s", db, suffix[k]);
        unlink(path);
    }
    const char *init[] = {bin, "--db", db, "init", NULL};
    const char *add_a[] = {bin, "--db", db, "athlete", "add", "B01", "--name", "Bench Rider", NULL};
    return run(init) || run(add_a) ? -1 : 0;
}

/* The season side by side with numpy on the first SEASON files of the folder: the numpy script
 * (tests/season_numpy.py, Debian's numpy), 'session add' of the folder and 'curve', one 'session
 * add' per file and 'curve', the floor of as many bare starts, the stored size per session, and
 * the largest difference between numpy's season curve and the store's. */
static int side_by_side(const char *bin, const char *dir, const char *rides)
{
    char s40[300], db[300], path[400], ref[300], cmd[900];
    snprintf(s40, sizeof s40, "%s/season", dir);
    snprintf(db, sizeof db, "%s/side.db", dir);
    snprintf(ref, sizeof ref, "%s/numpy_season.txt", dir);
    if (mkdir(s40, 0700) != 0)
        return -1;
    char files[SEASON][400];
    for (int k = 0; k < SEASON; k++) {
        int day = k % 28 + 1, month = 1 + k / 28 % 12;
        snprintf(path, sizeof path, "%s/ride_%03d_2025-%02d-%02d.csv", rides, k, month, day);
        snprintf(files[k], sizeof files[k], "%s/ride_%03d_2025-%02d-%02d.csv", s40, k, month, day);
        if (link(path, files[k]) != 0)
            return -1;
    }
    double t_np[REPS], t_np_proc[REPS], t_dir[REPS], t_each[REPS], t_floor[REPS];
    double c_np[REPS], c_dir[REPS], c_each[REPS], c_floor[REPS]; /* CPU seconds */
    const char *curve[] = {bin, "--db", db, "--json", "curve", "B01", NULL};
    const char *add_dir[] = {bin, "--db", db, "--quiet", "session", "add", "B01", s40, NULL};
    const char *bare[] = {bin, "--version", NULL};
    snprintf(cmd, sizeof cmd, "/usr/bin/python3 tests/season_numpy.py '%s' '%s'", s40, ref);
    for (int rep = 0; rep < REPS; rep++) {
        double a = now_s();
        FILE *p = popen(cmd, "r");
        if (!p || fscanf(p, "%lf %lf", &t_np[rep], &c_np[rep]) != 2 || pclose(p) != 0) {
            fprintf(stderr, "bench_sessions: the numpy script failed (is python3-numpy installed?)\n");
            return -1;
        }
        t_np_proc[rep] = now_s() - a;
        if (fresh_store(bin, db))
            return -1;
        a = now_s();
        double c = children_cpu_s();
        if (run(add_dir) || run(curve))
            return -1;
        t_dir[rep] = now_s() - a;
        c_dir[rep] = children_cpu_s() - c;
        if (fresh_store(bin, db))
            return -1;
        a = now_s();
        c = children_cpu_s();
        for (int k = 0; k < SEASON; k++) {
            const char *one[] = {bin, "--db", db, "--quiet", "session", "add", "B01", files[k], NULL};
            if (run(one))
                return -1;
        }
        if (run(curve))
            return -1;
        t_each[rep] = now_s() - a;
        c_each[rep] = children_cpu_s() - c;
        a = now_s();
        c = children_cpu_s();
        for (int k = 0; k < SEASON; k++)
            if (run(bare))
                return -1;
        t_floor[rep] = now_s() - a;
        c_floor[rep] = children_cpu_s() - c;
    }
    /* the same curve: numpy's against the store's, point by point */
    char msg[CPD_MSG_MAX];
    cpd_store *st = NULL;
    cpd_mmp_season *se = cpd_mmp_season_alloc();
    size_t ns = 0, npts = 0;
    double worst = -1;
    FILE *f = fopen(ref, "r");
    if (se && f && cpd_store_open(db, 0, &st, msg) == CPD_OK &&
        cpd_store_session_season(st, "B01", 0, NULL, NULL, se, &ns) == CPD_OK) {
        double d, v;
        worst = 0;
        while (fscanf(f, "%lf %lf", &d, &v) == 2) {
            if (npts >= se->n || se->duration_s[npts] != d) {
                worst = -1;
                break;
            }
            double e = fabs(se->value[npts] - v);
            worst = e > worst ? e : worst;
            npts++;
        }
        if (npts != se->n)
            worst = -1;
    }
    if (f)
        fclose(f);
    cpd_store_close(st);
    cpd_mmp_season_free(se);
    snprintf(cmd, sizeof cmd, "sqlite3 '%s' 'PRAGMA wal_checkpoint(TRUNCATE)' >/dev/null", db);
    long bytes = system(cmd) == 0 ? file_size(db) : 0;
    double np = median(t_np, REPS), npp = median(t_np_proc, REPS), dirt = median(t_dir, REPS);
    double each = median(t_each, REPS), floor40 = median(t_floor, REPS);
    double cnp = median(c_np, REPS), cdir = median(c_dir, REPS), ceach = median(c_each, REPS),
           cfloor = median(c_floor, REPS);
    printf("\nside by side with numpy on the same %d two-hour 1-Hz files (median of %d runs; wall clock, and CPU\n"
           "time, which a shared machine disturbs less; the ratios are the figures):\n", SEASON, REPS);
    printf("  numpy script (tests/season_numpy.py): %.3f s wall (%.3f s CPU) of work; %.3f s as a whole process\n", np,
           cnp, npp);
    printf("  'session add FOLDER' + 'curve':       %.3f s wall (%.3f s CPU) -> %.1fx numpy wall, %.1fx CPU   "
           "(goal: >= 10x)\n", dirt, cdir, np / dirt, cnp / cdir);
    printf("  %d x 'session add FILE' + 'curve':    %.3f s wall (%.3f s CPU) -> %.1fx numpy wall, %.1fx CPU   "
           "(goal: > 1x)\n", SEASON, each, ceach, np / each, cnp / ceach);
    printf("    floor: %d bare starts of the binary (--version) %.3f s wall (%.3f s CPU), %.2f ms each\n", SEASON,
           floor40, cfloor, 1e3 * floor40 / SEASON);
    if (worst >= 0)
        printf("  the same curve: %zu points, largest difference from numpy's %.3g W\n", npts, worst);
    else
        printf("  the curves could not be compared (numpy's has %zu points)\n", npts);
    printf("  stored size: %.1f KB per two-hour four-channel session, WAL checkpointed (%ld bytes for %d)   "
           "(goal: <= 80 KB)\n", (double)bytes / 1024 / SEASON, bytes, SEASON);
    for (int k = 0; k < SEASON; k++)
        unlink(files[k]);
    rmdir(s40);
    unlink(ref);
    static const char *const suffix[] = {"", "-wal", "-shm"};
    for (int k = 0; k < 3; k++) {
        snprintf(path, sizeof path, "%s%s", db, suffix[k]);
        unlink(path);
    }
    return 0;
}

int main(int argc, char **argv)
{
    (void)argc;
    int rc = 1;
    char dir[] = "/tmp/cpd_bench_sessions.XXXXXX";
    if (!mkdtemp(dir)) {
        perror("bench_sessions: mkdtemp");
        return 1;
    }
    char rides[300], db[300], db2[300], path[400], msg[CPD_MSG_MAX];
    snprintf(rides, sizeof rides, "%s/rides", dir);
    snprintf(db, sizeof db, "%s/lib.db", dir);
    snprintf(db2, sizeof db2, "%s/cli.db", dir);
    cpd_store *st = NULL;
    cpd_session_import_ws *w = NULL;
    cpd_mmp_season *season = NULL;
    rng r = {20261017};
    if (mkdir(rides, 0700) != 0) {
        perror("bench_sessions: mkdir");
        goto done;
    }
    double t0 = now_s();
    for (int k = 0; k < SESSIONS; k++) {
        int day = k % 28 + 1, month = 1 + k / 28 % 12;
        snprintf(path, sizeof path, "%s/ride_%03d_2025-%02d-%02d.csv", rides, k, month, day);
        if (write_ride(&r, path)) {
            fprintf(stderr, "bench_sessions: cannot write %s\n", path);
            goto done;
        }
    }
    double t_write = now_s() - t0;

    if (cpd_store_open(db, 1, &st, msg)) {
        fprintf(stderr, "bench_sessions: %s\n", msg);
        goto done;
    }
    cpd_athlete a;
    memset(&a, 0, sizeof a);
    snprintf(a.code, sizeof a.code, "B01");
    snprintf(a.name, sizeof a.name, "Bench Rider");
    snprintf(a.sport, sizeof a.sport, "cycling");
    int64_t aid = 0;
    w = cpd_import_session_alloc();
    if (!w || cpd_store_athlete_add(st, &a, &aid) || cpd_store_begin(st)) {
        fprintf(stderr, "bench_sessions: setting up the store failed: %s\n", cpd_store_errmsg(st));
        goto done;
    }
    cpd_session_import_opts io = {NULL, -1, 0, 0, 1};
    long rss_40 = 0;
    size_t spikes = 0, splits = 0, filled = 0, points = 0;
    t0 = now_s();
    for (int k = 0; k < SESSIONS; k++) {
        int day = k % 28 + 1, month = 1 + k / 28 % 12;
        snprintf(path, sizeof path, "%s/ride_%03d_2025-%02d-%02d.csv", rides, k, month, day);
        uint64_t h = 0;
        int64_t dup = 0, id = 0;
        cpd_session_import im;
        cpd_session_rec rec;
        memset(&rec, 0, sizeof rec);
        int e = cpd_import_session_load(w, path, &h, msg);
        if (!e)
            e = cpd_store_session_find(st, a.code, 0, h, &dup, NULL);
        if (!e)
            e = cpd_import_session(w, path, &io, &im, msg);
        if (!e) {
            snprintf(rec.athlete, sizeof rec.athlete, "%s", a.code);
            cpd_import_date_from_name(path, rec.date);
            snprintf(rec.source_file, sizeof rec.source_file, "%s", path);
            cpd_import_session_rec(&im, &rec);
            e = cpd_store_session_add(st, &rec, &im.samples, &im.curve, &id);
        }
        if (e || dup) {
            fprintf(stderr, "bench_sessions: %s: %s %s %s\n", path, cpd_strerror(e), msg, cpd_store_errmsg(st));
            goto done;
        }
        spikes += rec.n_spikes;
        splits += rec.n_splits;
        filled += rec.filled_s;
        points = im.curve.n;
        if (k == 39)
            rss_40 = maxrss_kb(RUSAGE_SELF);
    }
    if (cpd_store_commit(st)) {
        fprintf(stderr, "bench_sessions: commit: %s\n", cpd_store_errmsg(st));
        goto done;
    }
    double t_import = now_s() - t0;
    long rss_400 = maxrss_kb(RUSAGE_SELF);

    /* the query as a new command would run it: a freshly opened store */
    cpd_store_close(st);
    st = NULL;
    season = cpd_mmp_season_alloc();
    if (!season || cpd_store_open(db, 0, &st, msg)) {
        fprintf(stderr, "bench_sessions: reopening the store: %s\n", msg);
        goto done;
    }
    double t_first = 0, t_best = 1e9;
    size_t ns = 0;
    for (int rep = 0; rep < 5; rep++) {
        double a0 = now_s();
        if (cpd_store_session_season(st, a.code, 0, NULL, NULL, season, &ns) || ns != SESSIONS) {
            fprintf(stderr, "bench_sessions: season query: %s\n", cpd_store_errmsg(st));
            goto done;
        }
        double dt = now_s() - a0;
        if (rep == 0)
            t_first = dt;
        if (dt < t_best)
            t_best = dt;
    }
    double t_half = now_s();
    if (cpd_store_session_season(st, a.code, 0, "2025-03-01", "2025-08-31", season, &ns)) {
        fprintf(stderr, "bench_sessions: season query: %s\n", cpd_store_errmsg(st));
        goto done;
    }
    t_half = now_s() - t_half;

    printf("season: %d rides of about 2 h at 1 Hz as CSV (written in %.1f s; %zu s filled, %zu splits, %zu spikes)\n",
           SESSIONS, t_write, filled, splits, spikes);
    printf("import through the store (hash, duplicate check, read + check + clean + curve, store; one transaction):\n");
    printf("  %.2f s in all, %.1f ms per file, %zu curve points each   (goal: < 20 s)\n", t_import,
           1e3 * t_import / SESSIONS, points);
    printf("season curve over the %d stored curves: first query %.1f ms, best of 5 %.1f ms; "
           "%zu of them by date range %.1f ms   (goal: < 50 ms)\n",
           SESSIONS, 1e3 * t_first, 1e3 * t_best, ns, 1e3 * t_half);
    printf("  1 s %.0f W, 5 min %.1f W, 20 min %.1f W, 60 min %.1f W, %zu points\n", season->value[0], season->value[299],
           season->value[1199], season->value[3599], season->n);
    printf("peak memory (ru_maxrss): %ld kB after 40 files, %ld kB after %d   (goal: the same)\n", rss_40, rss_400,
           SESSIONS);

    /* the same folder through the real command, if the binary is beside the bench folder */
    char bin[400];
    const char *slash = strrchr(argv[0], '/');
    snprintf(bin, sizeof bin, "%.*s/../cpdomain", slash ? (int)(slash - argv[0]) : 1, slash ? argv[0] : ".");
    if (access(bin, X_OK) == 0) {
        const char *init[] = {bin, "--db", db2, "init", NULL};
        const char *add_a[] = {bin, "--db", db2, "athlete", "add", "B01", "--name", "Bench Rider", NULL};
        const char *add[] = {bin, "--db", db2, "--quiet", "session", "add", "B01", rides, NULL};
        const char *curve[] = {bin, "--db", db2, "--json", "curve", "B01", NULL};
        if (run(init) || run(add_a)) {
            fprintf(stderr, "bench_sessions: %s init failed\n", bin);
            goto done;
        }
        double a0 = now_s();
        int e = run(add);
        double t_cli = now_s() - a0;
        long rss_cli = maxrss_kb(RUSAGE_CHILDREN);
        double t_curve[5], c_curve[5];
        int e2 = 0;
        for (int rep = 0; rep < 5 && !e2; rep++) {
            a0 = now_s();
            double c0 = children_cpu_s();
            e2 = run(curve);
            t_curve[rep] = now_s() - a0;
            c_curve[rep] = children_cpu_s() - c0;
        }
        printf("the binary: 'session add B01 FOLDER' with %d files %.2f s (exit %d), peak memory %ld kB;\n"
               "  'curve B01' over the %d stored sessions as a whole process: median of 5 %.1f ms wall, %.1f ms "
               "CPU (exit %d)   (goal: <= 10 ms)\n", SESSIONS, t_cli, e, rss_cli, SESSIONS, 1e3 * median(t_curve, 5),
               1e3 * median(c_curve, 5), e2);
        printf("  curve scan kernel: %s (bench_mmp times it per ride)\n", cpd_mmp_kernel());
        struct utsname un;
        if (uname(&un) == 0)
            printf("  machine: %s %s %s %s, %ld processors online, load average now: %s\n", un.sysname, un.release,
                   un.version, un.machine, sysconf(_SC_NPROCESSORS_ONLN), loadavg(msg, sizeof msg));
        if (side_by_side(bin, dir, rides)) {
            fprintf(stderr, "bench_sessions: the side-by-side run failed\n");
            goto done;
        }
    } else
        printf("the binary %s was not found: the command-line timing is skipped\n", bin);
    rc = 0;
done:
    cpd_mmp_season_free(season);
    cpd_import_session_free(w);
    cpd_store_close(st);
    /* the folder, the stores and their WAL files */
    DIR *d = opendir(rides);
    struct dirent *e;
    while (d && (e = readdir(d)) != NULL)
        if (e->d_name[0] != '.') {
            snprintf(path, sizeof path, "%s/%s", rides, e->d_name);
            unlink(path);
        }
    if (d)
        closedir(d);
    rmdir(rides);
    static const char *const suffix[] = {"", "-wal", "-shm"};
    for (int k = 0; k < 3; k++) {
        snprintf(path, sizeof path, "%s%s", db, suffix[k]);
        unlink(path);
        snprintf(path, sizeof path, "%s%s", db2, suffix[k]);
        unlink(path);
    }
    rmdir(dir);
    return rc;
}
