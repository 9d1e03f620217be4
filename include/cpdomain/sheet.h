/* sheet.h: the per-athlete domain sheet: its prediction tables and suggested session (computed from
 * a power-duration fit), and its renderers to HTML, CSV and plain text, plus the team's index page.
 * Pure: structs in, strings out; every user text is escaped by the renderer that writes it. */
#ifndef CPDOMAIN_SHEET_H
#define CPDOMAIN_SHEET_H

#include "cpdomain/balance.h"
#include "cpdomain/domains.h"
#include "cpdomain/pd.h"

#include <stddef.h>

#define CPD_SHEET_NTIMES 6       /* target times to task failure: 2, 3, 5, 8, 12, 20 min */
#define CPD_SHEET_NAT_MAX 24     /* most rows of the time-to-failure table at round intensities */
#define CPD_SHEET_MAX_TESTS 8    /* most tests listed in the header */
#define CPD_SHEET_MAX_NOTES 8    /* most extra quality notes */
#define CPD_SHEET_MAX_EXTRA 4    /* most optional sections */
#define CPD_SHEET_PROTOCOL_MAX 160 /* bytes of the suggested session in protocol syntax */
#define CPD_SHEET_SESSION_S 2400 /* length of the suggested session, s (10 min + 5 x 6 min) */
/* The round-intensity table starts where the predicted time to failure is at most this long: beyond
 * about 30 min a time-to-exhaustion prediction extrapolates the 2-15 min range that the hyperbola
 * fits best (Drake et al. 2024 Eur J Appl Physiol 124:507); for a typical W' it is about CP + 10 W. */
#define CPD_SHEET_AT_LONGEST_S 1800.0

typedef struct {
    double duration_s;           /* target time to task failure, s */
    cpd_pd_pred pred;            /* the intensity (W or m/s) that can be held for it, with its 95 % interval */
} cpd_sheet_for_time;

typedef struct {
    double intensity;            /* W or m/s, a round value */
    cpd_pd_pred pred;            /* predicted time to task failure, s, with its 95 % interval */
    int near_cp;                 /* 1: inside CP's 95 % interval: heavy or severe, the data cannot tell
                                  * (pred then not valid; cpd_pd_time_near_cp) */
    double at_least_s;           /* then: the lower bound of the time to task failure, s (0: none) */
} cpd_sheet_at_intensity;
#define CPD_SHEET_CANNOT_TELL "heavy or severe: the data cannot tell"

typedef struct {
    cpd_sheet_for_time for_time[CPD_SHEET_NTIMES];  /* 2, 3, 5, 8, 12, 20 min */
    size_t n_at;                                     /* rows of at[] */
    double step;                                     /* spacing of the round intensities, W or m/s */
    cpd_sheet_at_intensity at[CPD_SHEET_NAT_MAX];    /* ascending intensity */
} cpd_sheet_tables;

/* Fills the prediction tables of model fit m (fitted, CP and W' > 0): the intensity for each target
 * time with cpd_pd_predict_intensity, and the time to failure (cpd_pd_predict_time) at round
 * intensities from the first multiple of the step above CP + W'/CPD_SHEET_AT_LONGEST_S up to the
 * severe-extreme boundary of d (d NULL or that boundary invalid: the 2-min intensity). The step is
 * 25 W or 0.1 m/s, made finer (10, 5 W; 0.05, 0.02, 0.01 m/s) below 5 rows and coarser (50, 100 W;
 * 0.2, 0.5 m/s) above 20 rows. Returns CPD_OK, CPD_EUSAGE for NULL pointers, CPD_ENODATA when m
 * has no valid result. */
int cpd_sheet_tables_compute(const cpd_pd_model_fit *m, const cpd_domains_result *d, cpd_sheet_tables *out);

/* The suggested interval session: 10 min warm-up at 60 % CP, then 5 x (3 min at CP + 90 % of the
 * way from CP to the 5-min intensity, 3 min at 50 % CP), 40 min in all (common practice for a
 * severe-domain interval session; our choice). The interval intensity is rounded down to a whole W
 * (0.01 m/s); each interval then spends about 54 % of W'. The W' balance runs with the differential
 * model (Skiba et al. 2015 Eur J Appl Physiol 115:703) through balance.h, from the protocol text so
 * that 'cpdomain predict CODE --protocol TEXT' gives the same numbers. */
typedef struct {
    char protocol[CPD_SHEET_PROTOCOL_MAX]; /* the session in the protocol syntax of SPEC.md */
    double warmup;               /* W or m/s */
    double interval;             /* W or m/s */
    double recovery;             /* W or m/s */
    double interval_pct_cp;      /* interval as % of CP (CS) */
    double interval_spend_pct;   /* share of W' (D') one interval spends from a full balance, % */
    size_t n;                    /* seconds: CPD_SHEET_SESSION_S */
    double intensity[CPD_SHEET_SESSION_S]; /* W or m/s of each second */
    double balance[CPD_SHEET_SESSION_S];   /* W' (J) or D' (m) balance at the end of each second */
    cpd_balance_result res;      /* lowest and end balance, failure */
} cpd_sheet_session;

/* Builds the suggested session of model fit m. Returns CPD_OK, CPD_EUSAGE for NULL pointers,
 * CPD_ENODATA when m has no valid result or no 5-min intensity, or the status of the protocol
 * parser or balance run. */
int cpd_sheet_session_build(const cpd_pd_model_fit *m, cpd_sheet_session *out);

/* A test the sheet rests on, for the header. */
typedef struct {
    const char *what;            /* e.g. "ramp 1 (gas exchange)" (user-visible text, escaped) */
    const char *date;            /* "2026-09-29" or "2026-10-05 to 2026-10-19" */
} cpd_sheet_test;

/* An optional section (e.g. VO2 kinetics, season trend) placed after the ramp. */
typedef struct {
    const char *key;             /* stable snake_case name, used as the CSV item, e.g. "kinetics" */
    const char *title;           /* heading (escaped) */
    const char *text;            /* a paragraph of plain text (escaped), NULL for none */
    const char *svg;             /* one <svg> from plots.h (trusted markup, inlined as is), NULL for none */
} cpd_sheet_section;

/* Everything a sheet shows. Strings are borrowed (the caller keeps them alive while rendering);
 * NULL for an optional string leaves it out. Intensities in W, or m/s when modality is speed. */
typedef struct {
    const char *code, *name;     /* athlete (required) */
    const char *sport, *notes;   /* athlete's sport and free-text notes */
    int has_mass;
    double mass_kg;              /* kg */
    const char *date;            /* the sheet's date, YYYY-MM-DD (required) */
    size_t ntests;
    cpd_sheet_test tests[CPD_SHEET_MAX_TESTS];
    cpd_pd_modality modality;
    double pace_m;               /* speed: pace per this many metres (1000, or 100 for swimmers) */
    const char *pace_label;      /* speed: "/km" or "/100m" */
    const cpd_pd_result *fit;    /* all models (required) */
    cpd_pd_model model;          /* the model the domains use; fitted */
    const cpd_domains_result *dom;     /* boundaries and targets (required) */
    const cpd_sheet_tables *tables;    /* prediction tables (required) */
    const cpd_sheet_session *session;  /* suggested session; NULL leaves the section out */
    int has_vo2peak;
    double vo2peak_ml_min;       /* mL/min, from the ramp */
    int has_vo2peak_rel;
    double vo2peak_ml_kg_min;    /* mL/kg/min */
    int has_vo2peak_ci;          /* 1 when vo2peak_ci95 holds VO2peak's 95 % interval (cpd_ramp_ci_compute) */
    double vo2peak_ci95[2];      /* mL/min */
    const char *ramp_label;      /* e.g. "ramp 1, 2026-09-29"; NULL without a ramp */
    const char *svg_pd;          /* power-duration plot (cpd_plot_pd), trusted markup */
    const char *svg_balance;     /* W' balance of the session (cpd_plot_balance) */
    const char *svg_vslope;      /* the ramp's V-slope plot (cpd_plot_vslope) */
    /* Optional sections: the place for the VO2 kinetics plot and the season trend. */
    size_t nextra;
    cpd_sheet_section extra[CPD_SHEET_MAX_EXTRA];
    size_t nnotes;
    const char *notes_more[CPD_SHEET_MAX_NOTES]; /* quality notes beyond the fit and domains flags */
    const char *hr_caution;      /* the heart-rate drift caution */
    const char *caution;         /* the safety caution */
    const char *generator;       /* e.g. "cpdomain 0.1.0" */
} cpd_sheet;

typedef enum { CPD_SHEET_HTML, CPD_SHEET_CSV, CPD_SHEET_TXT } cpd_sheet_format;

/* Renders sheet s in format f into a new NUL-terminated string *out (free with free()).
 * HTML: one self-contained page (inline CSS and SVG, no scripts, no external resources), responsive
 * and printable. CSV: RFC 4180 rows "section,item,key,value,unit" under that header (layout in
 * README.md), numbers with 10 significant digits, a missing value as an empty field, text cells that
 * a spreadsheet would run as a formula (leading = + - @) prefixed with an apostrophe. TXT: for the
 * terminal. No output ever holds NaN or infinity: a value that is not finite is "-" or empty.
 * Returns CPD_OK, CPD_EUSAGE for a NULL or incomplete sheet or a bad format, CPD_ENOMEM. */
int cpd_sheet_render(const cpd_sheet *s, cpd_sheet_format f, char **out);

/* One athlete on the team's index page. */
typedef struct {
    const char *code, *name, *sport; /* user text, escaped */
    const char *href;            /* relative link to the athlete's sheet; NULL: no sheet */
    const char *why;             /* why there is no sheet (with href NULL) */
    cpd_pd_modality modality;
    double pace_m;               /* as in cpd_sheet */
    const char *pace_label;
    int has_fit;
    double cp, w_prime;          /* W and J, or m/s and m */
    int has_cp_ci;
    double cp_ci95[2];
    int has_w_prime_ci;
    double w_prime_ci95[2];
    int has_get;
    double get;                  /* moderate-heavy boundary, W or m/s */
    int has_vo2peak;
    double vo2peak_ml_min;       /* mL/min */
    const char *fit_dates;       /* dates of the trials, e.g. "2026-10-05 to 2026-10-19" */
    const char *ramp_date;       /* date of the ramp, NULL without one */
    int stale;                   /* 1 when a boundary is stale */
} cpd_sheet_index_row;

/* The team's index page (HTML like the sheets): a table of the n athletes with CP/CS, W'/D', the
 * GET equivalent, VO2peak, the tests' dates and links, then the caution (NULL: none) and the note
 * on uncertainty. title and date (YYYY-MM-DD) are required. Same ownership and return codes as
 * cpd_sheet_render. */
int cpd_sheet_index_html(const char *title, const char *date, const cpd_sheet_index_row *rows, size_t n,
                         const char *caution, const char *generator, char **out);

/* The note on uncertainty that every sheet carries (static text). */
const char *cpd_sheet_uncertainty(void);

/* HTML-escapes text (& < > " ' become entities) into a new string *out (free with free()); NULL
 * text gives "". Returns CPD_OK, CPD_EUSAGE for a NULL out, CPD_ENOMEM. */
int cpd_sheet_escape_html(const char *text, char **out);

#endif
