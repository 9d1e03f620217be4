/* store.h: the store of athletes and their tests, on one of two engines: a SQLite file (the
 * default) or a PostgreSQL server (a libpq connection URI, postgresql://...). Every function below
 * behaves alike on both. The store module alone speaks SQL: prepared statements with bound
 * parameters; migrations embedded from db/ at build time. */
#ifndef CPDOMAIN_STORE_H
#define CPDOMAIN_STORE_H

#include "cpdomain/gx.h"

#include <stddef.h>
#include <stdint.h>

typedef struct cpd_store cpd_store;

#define CPD_CODE_MAX 32    /* longest athlete code, bytes */
#define CPD_NAME_MAX 200   /* longest athlete name, bytes */
#define CPD_NOTE_MAX 1000  /* longest note or reason, bytes */
#define CPD_PATH_MAX 1024  /* longest source-file path kept, bytes */

/* Opens the store at path, applying pending migrations in one transaction. With create == 0 a
 * missing file is CPD_ENOENT; with create != 0 it is created.
 * A path that starts with postgresql:// or postgres:// is a libpq connection URI: the database
 * must exist; create != 0 makes the schema in it (a database without one is CPD_ENOENT otherwise).
 * A malformed URI is CPD_EUSAGE, an unreachable server CPD_ETEMP, a refused login CPD_ENOPERM; the
 * message never shows a password. On PostgreSQL each transaction is SERIALIZABLE, so writers
 * behave as SQLite's one-writer-at-a-time; a transaction the server aborts for a conflict or a
 * lost connection fails with CPD_ETEMP and cpd_store_retryable() true: run the command again. Foreign keys on, WAL journal,
 * synchronous=NORMAL (durable across crashes of the program; the last commits may be lost on
 * power failure, a fair trade for a desktop store), busy timeout CPD_STORE_BUSY_MS. A store whose version is
 * newer than this binary is refused with CPD_ESTORE. msg (CPD_MSG_MAX bytes) receives the reason.
 * The caller closes *out with cpd_store_close. */
int cpd_store_open(const char *path, int create, cpd_store **out, char *msg);
/* cpd_store_open with busy_ms: how long this handle waits, in milliseconds, for another process
 * that holds the store's write lock (0: no wait; negative counts as 0). A store still held after
 * that wait fails with CPD_ESTORE and a message that says another process holds the store. */
#define CPD_STORE_BUSY_MS 5000
int cpd_store_open_wait(const char *path, int create, int busy_ms, cpd_store **out, char *msg);
void cpd_store_close(cpd_store *s);

/* Which engine an open store is on. */
enum { CPD_ENGINE_SQLITE = 1, CPD_ENGINE_PG = 2 };
int cpd_store_engine(const cpd_store *s);
/* The store as it may be shown: its file, or its URI with any password as ***. */
const char *cpd_store_where(const cpd_store *s);
/* Nonzero when path names a server (a PostgreSQL URI) rather than a file. */
int cpd_store_is_server(const char *path);
/* Nonzero when the last failure on s may pass if the whole transaction runs again (PostgreSQL:
 * serialization failure, deadlock, lost connection). s may be NULL. */
int cpd_store_retryable(const cpd_store *s);

/* The detail of the last failure on s ("" when none). */
const char *cpd_store_errmsg(const cpd_store *s);

/* Schema version of the open store, and the newest version this binary knows. */
int cpd_store_version(const cpd_store *s);
int cpd_store_latest_version(void);

/* One transaction per command: begin, then commit or rollback. Public write functions run
 * inside it (or, outside one, each in its own). */
int cpd_store_begin(cpd_store *s);
int cpd_store_commit(cpd_store *s);
void cpd_store_rollback(cpd_store *s);

/* ---- athletes ---- */
typedef struct {
    int64_t id;                   /* store id */
    char code[CPD_CODE_MAX + 1];  /* unique short code */
    char name[CPD_NAME_MAX + 1];  /* display name */
    char sport[16];               /* cycling, running, rowing, swimming or other */
    double mass_kg;               /* body mass, kg; valid when has_mass */
    int has_mass;                 /* 1 when the body mass is known */
    char notes[CPD_NOTE_MAX + 1]; /* free text */
} cpd_athlete;

/* Adds an athlete; *id receives its id. CPD_EEXIST when the code is taken. */
int cpd_store_athlete_add(cpd_store *s, const cpd_athlete *a, int64_t *id);
/* Reads the athlete with this code; CPD_ENOENT when there is none. */
int cpd_store_athlete_get(cpd_store *s, const char *code, cpd_athlete *a);
/* Replaces name, sport, mass and notes of the athlete a->code. CPD_ENOENT when absent. */
int cpd_store_athlete_update(cpd_store *s, const cpd_athlete *a);
/* Removes the athlete and, by cascade, all of the athlete's data. CPD_ENOENT when absent. */
int cpd_store_athlete_remove(cpd_store *s, const char *code);
/* All athletes ordered by code; the caller frees *out with free(). */
int cpd_store_athlete_list(cpd_store *s, cpd_athlete **out, size_t *n);

/* ---- trials (time to exhaustion, or time trials) ---- */
typedef enum { CPD_TRIAL_POWER, CPD_TRIAL_SPEED, CPD_TRIAL_DISTANCE } cpd_trial_kind;

typedef struct {
    int64_t id;                          /* store id */
    char athlete[CPD_CODE_MAX + 1];      /* athlete code */
    char date[11];                       /* YYYY-MM-DD */
    cpd_trial_kind kind;                 /* what value holds */
    double value;                        /* W, m/s or m according to kind */
    double duration_s;                   /* s */
    int excluded;                        /* 1 when left out of fits */
    char exclude_reason[CPD_NOTE_MAX + 1];
    char note[CPD_NOTE_MAX + 1];
    char source_file[CPD_PATH_MAX + 1];  /* file imported from; "" when typed */
    char imported_at[21];                /* UTC time stored, YYYY-MM-DDTHH:MM:SSZ; "" lets the store set it */
} cpd_trial;

/* Name of a trial kind as in the CSV and JSON ("power_w", "speed_m_s", "distance_m"). */
const char *cpd_trial_kind_name(cpd_trial_kind k);

/* Adds a trial for t->athlete; *id receives its id. CPD_ENOENT when the athlete is unknown. */
int cpd_store_trial_add(cpd_store *s, const cpd_trial *t, int64_t *id);
/* *found = 1 when a trial with the same athlete, date, kind, value and duration is stored. */
int cpd_store_trial_exists(cpd_store *s, const cpd_trial *t, int *found);
/* Reads trial id; CPD_ENOENT when there is none. */
int cpd_store_trial_get(cpd_store *s, int64_t id, cpd_trial *t);
/* The athlete's trials ordered by date and id (code NULL: every athlete's). The caller frees *out. */
int cpd_store_trial_list(cpd_store *s, const char *code, cpd_trial **out, size_t *n);
/* Excludes (excluded = 1, with a reason) or includes (0) a trial. CPD_ENOENT when absent. */
int cpd_store_trial_set_excluded(cpd_store *s, int64_t id, int excluded, const char *reason);
/* Removes trial id. CPD_ENOENT when absent. */
int cpd_store_trial_remove(cpd_store *s, int64_t id);


/* ---- saved power-duration fits ---- */
typedef struct {
    const char *model;  /* SPEC model name */
    int ok;             /* 1 when fitted */
    double cp, cp_se, w_prime, w_prime_se, p_max, p_max_se; /* W or m/s, J or m */
    int has_se, has_p_max;
    const char *detail; /* the model's JSON output */
} cpd_fit_model_rec;

typedef struct {
    int64_t id;                    /* store id (set by cpd_store_fit_save) */
    char athlete[CPD_CODE_MAX + 1];
    char created_at[21];           /* UTC; "" lets the store set it */
    char source[8];                /* "trials" or "curve" */
    char modality[8];              /* "power" or "speed" */
    char date_from[11], date_to[11];
    size_t n;                      /* data points used */
    char best[24];                 /* best model name, "" when none */
    char flags[512];               /* comma-separated flag names */
    char tool_version[16];
} cpd_fit_run;

/* Saves a fit run with its models and the ids of the trials it used, atomically; run->id receives
 * the id. CPD_ENOENT when the athlete is unknown. */
int cpd_store_fit_save(cpd_store *s, cpd_fit_run *run, const cpd_fit_model_rec *models, size_t nmodels,
                       const int64_t *trial_ids, size_t ntrials);


/* ---- gas-exchange tests: ramps and constant-power bouts ---- */
typedef enum { CPD_GXT_RAMP, CPD_GXT_BOUT } cpd_gxt_kind;

typedef struct {
    int64_t id;                     /* store id */
    char athlete[CPD_CODE_MAX + 1]; /* athlete code */
    cpd_gxt_kind kind;              /* ramp or bout */
    char date[11];                  /* YYYY-MM-DD */
    int speed;                      /* 1: intensities in m/s (treadmill), 0: W */
    double rate_per_min;            /* ramp: W/min or (m/s)/min */
    double start;                   /* ramp: intensity at onset */
    double intensity;               /* bout: constant intensity */
    int has_baseline;               /* 1 when baseline is known */
    double baseline;                /* intensity before onset */
    double onset_s;                 /* file time at which the exercise began, s */
    int has_mrt;                    /* ramp: 1 when the user gave the MRT */
    double mrt_s;                   /* s */
    int has_get_manual;             /* ramp: 1 when a reviewer set the GET */
    double get_vo2_manual;          /* mL/min */
    int has_rcp_manual;             /* ramp: 1 when a reviewer set the RCP */
    double rcp_vo2_manual;          /* mL/min */
    size_t n_samples;               /* samples stored */
    char note[CPD_NOTE_MAX + 1];
    char source_file[CPD_PATH_MAX + 1];
    char imported_at[21];           /* "" lets the store set it */
    /* db/005_gx_protocol.sql */
    int has_rate;                   /* ramp: 1 when the nominal rate was given (also when rate_per_min > 0) */
    int has_start;                  /* ramp: 1 when the nominal start was given (also when start > 0) */
    int protocol;                   /* ramp: 0 read from the recorded intensity, 1 ramp, 2 steps */
    int has_end;                    /* 1 when end_s was given */
    double end_s;                   /* file time at which the exercise ended, s */
    int has_get_intensity;          /* ramp: 1 when a reviewer set the GET as an intensity */
    double get_intensity_manual;    /* W or m/s */
    int has_rcp_intensity;          /* ramp: 1 when a reviewer set the RCP as an intensity */
    double rcp_intensity_manual;    /* W or m/s */
    size_t hr_dropped;              /* heart rates dropped on import as artefacts */
    size_t blank_cells;             /* blank optional cells dropped on import */
} cpd_gx_test;

/* Stores a test and its samples (every channel of series) atomically; *id receives its id. */
int cpd_store_gx_add(cpd_store *s, const cpd_gx_test *t, const cpd_gx_series *series, int64_t *id);
/* Reads test id of the given kind; with series != NULL also its samples (the caller frees *series
 * with cpd_gx_free). CPD_ENOENT when there is no such test. */
int cpd_store_gx_get(cpd_store *s, int64_t id, cpd_gxt_kind kind, cpd_gx_test *t, cpd_gx_series **series);
/* The athlete's tests of a kind, oldest first (code NULL: everyone's). The caller frees *out. */
int cpd_store_gx_list(cpd_store *s, const char *code, cpd_gxt_kind kind, cpd_gx_test **out, size_t *n);
/* Sets (has = 1) or clears a ramp's manual GET (which = 0) or RCP (which = 1) VO2; which 2 (GET)
 * and 3 (RCP) set the threshold as an intensity (W or m/s) instead. Setting one form of a threshold
 * clears the other; clearing clears both. */
int cpd_store_gx_set_manual(cpd_store *s, int64_t id, int which, int has, double vo2_ml_min);
/* Removes a test of the given kind with its samples. CPD_ENOENT when absent. */
int cpd_store_gx_remove(cpd_store *s, int64_t id, cpd_gxt_kind kind);

/* ---- blood-lactate step tests ---- */
#define CPD_LACTATE_STAGES_MAX 64

typedef struct {
    int64_t id;
    char athlete[CPD_CODE_MAX + 1];
    char date[11];
    int speed;                                  /* 1: stages in m/s, 0: W */
    size_t n;                                   /* stages */
    double intensity[CPD_LACTATE_STAGES_MAX];   /* W or m/s, increasing */
    double lactate[CPD_LACTATE_STAGES_MAX];     /* mmol/L */
    double hr[CPD_LACTATE_STAGES_MAX];          /* beats/min; valid when has_hr */
    double stage_s[CPD_LACTATE_STAGES_MAX];     /* s; valid when has_stage_s */
    int has_hr, has_stage_s;
    char note[CPD_NOTE_MAX + 1];
    char source_file[CPD_PATH_MAX + 1];
    char imported_at[21];
} cpd_lactate_test;

int cpd_store_lactate_add(cpd_store *s, const cpd_lactate_test *t, int64_t *id);
int cpd_store_lactate_get(cpd_store *s, int64_t id, cpd_lactate_test *t);
/* The athlete's lactate tests, oldest first, with their stages. The caller frees *out. */
int cpd_store_lactate_list(cpd_store *s, const char *code, cpd_lactate_test **out, size_t *n);

/* ---- recorded sessions and 3-minute all-out tests (db/004_sessions.sql) ---- */
#include "cpdomain/mmp.h"

typedef struct {
    int64_t id;                          /* store id */
    char athlete[CPD_CODE_MAX + 1];      /* athlete code */
    int allout;                          /* 1: a 3-minute all-out test, 0: a session */
    char date[11];                       /* YYYY-MM-DD */
    int speed;                           /* 1: values in m/s, 0: W */
    uint64_t hash;                       /* FNV-1a of the file's bytes (cpd_session_hash) */
    size_t n_samples;                    /* rows of the file */
    double spike_limit;                  /* W or m/s: samples above it are spikes */
    double test_start_s;                 /* allout: s after the first sample where the test began */
    double elapsed_s;                    /* s: last sample time minus first */
    size_t recorded_s, missing_s, longest_s; /* s: the cleaning report of session.h */
    size_t n_segments, n_dropouts, dropout_s, filled_s, n_splits, n_spikes; /* counts and s */
    double spike_max;                    /* W or m/s; 0 without spikes */
    double mean_value, max_value;        /* W or m/s over the recorded seconds */
    int has_allout;                      /* 1 when end_value and work_above_end are set */
    double end_value;                    /* allout: end power, W */
    double work_above_end;               /* allout: work above end power, J */
    char note[CPD_NOTE_MAX + 1];
    char source_file[CPD_PATH_MAX + 1];
    char imported_at[21];                /* "" lets the store set it */
} cpd_session_rec;

/* A session's samples as read from its file. */
typedef struct {
    size_t n;                                 /* samples */
    double *time_s;                           /* s, n values */
    double *value;                            /* W or m/s, n values */
    double *hr_bpm, *cadence_rpm, *distance_m; /* n values each, or NULL when the file had none */
} cpd_session_samples;

/* Stores a session or all-out test r with its samples (one BLOB per channel) and, when curve is
 * not NULL and has points, its mean-maximal curve, atomically; *id receives the id. CPD_ENOENT
 * for an unknown athlete; CPD_EEXIST when the same file (r->hash) is stored for the athlete. */
int cpd_store_session_add(cpd_store *s, const cpd_session_rec *r, const cpd_session_samples *x,
                          const cpd_mmp_curve *curve, int64_t *id);
/* The id of the athlete's session (allout = 0) or all-out test (1) whose file hashed to hash, or
 * 0 in *id when there is none. code NULL: any athlete's, the code in found_code (may be NULL). */
int cpd_store_session_find(cpd_store *s, const char *code, int allout, uint64_t hash, int64_t *id,
                           char *found_code);
/* Reads session (allout = 0) or all-out test (1) id; with x != NULL also its samples (the caller
 * frees *x with cpd_store_samples_free). CPD_ENOENT when there is no such record. */
int cpd_store_session_get(cpd_store *s, int64_t id, int allout, cpd_session_rec *r, cpd_session_samples **x);
void cpd_store_samples_free(cpd_session_samples *x);
/* The athlete's sessions or all-out tests, oldest first (code NULL: everyone's). The caller frees *out. */
int cpd_store_session_list(cpd_store *s, const char *code, int allout, cpd_session_rec **out, size_t *n);
/* The number of the athlete's sessions (not all-out tests) dated from/to (NULL: open) of each
 * modality. CPD_ENOENT for an unknown athlete. */
int cpd_store_session_count(cpd_store *s, const char *code, const char *from, const char *to, size_t *n_power,
                            size_t *n_speed);
/* The stored curve of session id into *c, whose arrays live in *buf (the caller frees it);
 * c->n is 0 when the session has no curve. CPD_ESTORE for a damaged curve. */
int cpd_store_session_curve(cpd_store *s, int64_t id, double **buf, cpd_mmp_curve *c);
/* The season curve of the athlete's sessions of one modality (speed 0 or 1) dated within
 * [from, to] (either NULL: open): season is reset, then every stored curve is added with
 * cpd_mmp_season_add in date order (then id), so among equal values the earliest session keeps
 * the point. Reads one curve at a time. *n_sessions receives the number combined. CPD_ENOENT for
 * an unknown athlete; CPD_ESTORE for a damaged curve. */
int cpd_store_session_season(cpd_store *s, const char *code, int speed, const char *from, const char *to,
                             cpd_mmp_season *season, size_t *n_sessions);
/* Removes a session or all-out test with its samples and curve. CPD_ENOENT when absent. */
int cpd_store_session_remove(cpd_store *s, int64_t id, int allout);

/* ---- squads (db/008_squads.sql; store_squad.c) ---- */
#define CPD_SQUAD_MAX 64   /* longest squad name, bytes */

typedef struct {
    int64_t id;                   /* store id */
    char name[CPD_SQUAD_MAX + 1]; /* unique name */
    char note[CPD_NOTE_MAX + 1];  /* free text */
    size_t athletes;              /* athletes in the squad (on PostgreSQL: those this user may see) */
} cpd_squad;

/* An athlete's code with the name of the athlete's squad ("" when in none). */
typedef struct {
    char code[CPD_CODE_MAX + 1];
    char squad[CPD_SQUAD_MAX + 1];
} cpd_athlete_squad;

/* Adds a squad; *id receives its id. CPD_EEXIST when the name is taken. */
int cpd_store_squad_add(cpd_store *s, const char *name, const char *note, int64_t *id);
/* Reads the squad with this name (exact); CPD_ENOENT with a "did you mean" when there is none. */
int cpd_store_squad_get(cpd_store *s, const char *name, cpd_squad *q);
/* Every squad ordered by name, with its athlete count. The caller frees *out with free(). */
int cpd_store_squad_list(cpd_store *s, cpd_squad **out, size_t *n);
/* Removes an empty squad. CPD_ENOENT when absent; CPD_EDATA while athletes are in it. */
int cpd_store_squad_remove(cpd_store *s, const char *name);
/* Puts athlete code into squad (NULL: takes the athlete out of any squad). CPD_ENOENT for an
 * unknown athlete or squad. */
int cpd_store_squad_assign(cpd_store *s, const char *code, const char *squad);
/* cpd_store_athlete_add with the athlete placed in squad at once (NULL: in none), in the one
 * INSERT: on PostgreSQL the row-level policy checks the row as written. CPD_ENOENT for an unknown
 * squad, CPD_EEXIST when the code is taken. TODO(lead): cpd_store_athlete_add may become
 * cpd_store_athlete_add_to(s, a, NULL, id). */
int cpd_store_athlete_add_to(cpd_store *s, const cpd_athlete *a, const char *squad, int64_t *id);
/* The squad of athlete code into squad ("" when in none). CPD_ENOENT for an unknown athlete. */
int cpd_store_athlete_squad(cpd_store *s, const char *code, char squad[CPD_SQUAD_MAX + 1]);
/* Each athlete's squad, ordered by code; squad != NULL keeps that squad's athletes only (the
 * squad must exist: CPD_ENOENT with a "did you mean"). The caller frees *out with free(). */
int cpd_store_athlete_squads(cpd_store *s, const char *squad, cpd_athlete_squad **out, size_t *n);

/* ---- access control: PostgreSQL stores only (db/pg/008_squads_access.sql) ----
 * On a SQLite store each of these fails with CPD_EUSAGE: "access control needs a PostgreSQL store:
 * a SQLite file is protected by its file's permissions". A role name is 1 to 63 of [a-z0-9_],
 * not starting with a digit (CPD_EUSAGE otherwise). */
/* Lets members of role see and change the athletes of squad (NULL: of every squad, and those in
 * none) and all their data. Granting twice is no error. CPD_ENOENT for an unknown squad or role. */
int cpd_store_squad_grant(cpd_store *s, const char *squad, const char *role);
/* Takes such a grant back. CPD_ENOENT when there is no such grant. */
int cpd_store_squad_revoke(cpd_store *s, const char *squad, const char *role);
/* Run by the database owner (who needs CREATEROLE): creates the NOLOGIN group roles lab_role and
 * coach_role when missing and grants them their rights, again on every run (so it is also the
 * step after an upgrade): lab_role reads every table and holds a grant on all squads; coach_role
 * reads every table and writes the athlete tables (those under row-level security), its rows
 * limited to its squad grants. *created receives how many of the two roles were made. */
int cpd_store_server_setup(cpd_store *s, const char *lab_role, const char *coach_role, int *created);

#endif
