/* domains.h: the four intensity domains (moderate, heavy, severe, extreme) of one athlete from the
 * tests' results, the training targets in each, and the efforts of the severe domain. Pure: numbers
 * in, boundaries and targets out; the caller gathers the inputs from the store. */
#ifndef CPDOMAIN_DOMAINS_H
#define CPDOMAIN_DOMAINS_H

#include "cpdomain/pd.h"

#define CPD_DOMAINS_TEXT 200     /* bytes of a source, method or note text */
#define CPD_DOMAINS_NEFFORTS 5   /* severe-domain target times to failure: 2, 3, 5, 8, 12 min */
#define CPD_DOMAINS_NDELTA 3     /* 25, 50 and 75 %delta */
#define CPD_DOMAINS_STALE_DAYS 56 /* default: a boundary resting on data older than 8 weeks is stale */
/* Time to reach VO2max used when no VO2 kinetics are known, s: about the shortest times to
 * VO2max reported in runners and active subjects (from memory, about 100 s); an approximation,
 * stated with every use, and without an interval. */
#define CPD_DOMAINS_T_VO2MAX_DEFAULT_S 100.0

typedef enum { CPD_DOM_MODERATE, CPD_DOM_HEAVY, CPD_DOM_SEVERE, CPD_DOM_EXTREME, CPD_DOM_N } cpd_domain;
typedef enum { CPD_BND_MOD_HEAVY, CPD_BND_HEAVY_SEVERE, CPD_BND_SEVERE_EXTREME, CPD_BND_N } cpd_boundary_id;

/* What the boundaries rest on. Dates are YYYY-MM-DD ("" when unknown). Intensities in W, or m/s
 * when modality is speed. */
typedef struct {
    cpd_pd_modality modality;
    const cpd_pd_model_fit *fit;       /* the chosen power-duration model, required and fitted */
    char fit_date[11];                 /* date of the newest trial in the fit */
    int has_recent;                    /* 1 when a fit of only the newest block of trials exists */
    double recent_cp;                  /* its CP (CS) */
    char recent_from[11], recent_to[11];
    int has_get;                       /* 1 when a ramp's GET with a constant-intensity equivalent exists */
    double get;                        /* the GET's constant-intensity equivalent */
    int get_manual;                    /* 1 when a reviewer chose it */
    char get_source[CPD_DOMAINS_TEXT]; /* e.g. "ramp 3" */
    int get_steps;                     /* 1 when the GET comes from a step test (its stage steady states) */
    char get_date[11];
    int has_get_ci;                    /* 1 when the GET equivalent has a 95 % interval (cpd_ramp_ci_compute) */
    double get_ci95[2];
    int has_hr_get, has_hr_rcp;        /* heart rates at the GET and the RCP on the ramp */
    double hr_get, hr_rcp;             /* beats/min */
    int has_rcp;                       /* 1 when the RCP's constant-intensity equivalent is known */
    double rcp;                        /* W or m/s; heart-rate targets are interpolated between GET and RCP */
    int has_peak;                      /* 1 when the ramp's peak constant-intensity equivalent is known */
    double peak;                       /* intensity at VO2peak minus the MRT shift, for %delta */
    int has_lt1;                       /* 1 when a lactate test's LT1 exists (used without a GET) */
    double lt1;
    char lt1_source[CPD_DOMAINS_TEXT];
    char lt1_date[11];
    int has_tau;                       /* 1 when a severe-domain bout's primary time constant is known */
    double tau_s;                      /* s */
    char tau_source[CPD_DOMAINS_TEXT];
    char tau_date[11];
    int has_t_vo2max;                  /* 1 when the bout gives the time to reach VO2max with its SE */
    double delay_s;                    /* the bout's primary delay TD1, s */
    double t_vo2max_s;                 /* TD1 + 4 tau1, s (cpd_kinetics_time_to_vo2max) */
    double t_vo2max_se_s;              /* its standard error, s */
    int has_mass;
    double mass_kg;                    /* kg, for W/kg */
    int today;                         /* days since 1970-01-01 */
    int stale_days;                    /* older data are stale; 0 for the default */
} cpd_domains_input;

typedef struct {
    int valid;                         /* 1 when value holds the boundary */
    double value;                      /* W or m/s */
    int has_ci;                        /* 1 when ci95 holds a 95 % interval */
    double ci95[2];
    int manual;                        /* 1 when it rests on a reviewer's choice */
    char source[CPD_DOMAINS_TEXT];     /* what it rests on */
    char method[CPD_DOMAINS_TEXT];     /* how it was found, with the published basis */
    char date[11];                     /* date of its data */
    int stale;                         /* 1 when its data are old or a newer test disagrees */
    char stale_why[CPD_DOMAINS_TEXT];
    char why[CPD_DOMAINS_TEXT];        /* why it is not valid */
} cpd_boundary;

typedef struct {
    int has_lo, has_hi;                /* open ends: moderate has no lower, extreme no upper bound */
    double lo, hi;                     /* W or m/s */
    double lo_pct_cp, hi_pct_cp;       /* % of CP (CS) */
    int has_mass;
    double lo_w_kg, hi_w_kg;           /* W/kg (power only) */
    int has_hr_lo, has_hr_hi;
    double hr_lo, hr_hi;               /* beats/min from the ramp (drift caution applies) */
} cpd_domain_range;

typedef struct {
    double duration_s;                 /* target time to task failure, s */
    int beyond_severe;                 /* 1: the effort lies above the severe-extreme boundary (not listed) */
    int valid;
    double value;                      /* intensity that can be held for it */
    int has_ci;
    double ci95[2];
} cpd_domain_effort;

enum {
    CPD_DOMAINS_F_NO_GET = 1u << 0,          /* no GET and no LT1: the moderate-heavy boundary is unknown */
    CPD_DOMAINS_F_GET_FROM_LT1 = 1u << 1,    /* the moderate-heavy boundary is a lactate LT1 */
    CPD_DOMAINS_F_GET_ABOVE_CP = 1u << 2,    /* the GET equivalent is at or above CP: inconsistent tests */
    CPD_DOMAINS_F_NO_CP_CI = 1u << 3,        /* CP has no interval: the heavy ceiling is a 5 % margin */
    CPD_DOMAINS_F_TAU_ASSUMED = 1u << 4,     /* no kinetics: the time to VO2max is the default */
    CPD_DOMAINS_F_STALE = 1u << 5,           /* some boundary is stale */
    CPD_DOMAINS_NFLAGS = 6
};

typedef struct {
    cpd_boundary b[CPD_BND_N];
    cpd_domain_range range[CPD_DOM_N];
    int has_uncertain;                 /* 1 when CP has an interval: the band between heavy and severe */
    cpd_domain_range uncertain;        /* CP's 95 % interval: heavy or severe, the data cannot tell */
    double heavy_ceiling;              /* highest intensity advised for heavy-domain work: CP's lower 95 % bound */
    double t_vo2max_s;                 /* time to reach VO2max used for the severe-extreme boundary, s */
    double t_vo2max_se_s;              /* its standard error, s; 0 when assumed or unknown */
    cpd_domain_effort effort[CPD_DOMAINS_NEFFORTS];
    int has_delta;                     /* 1 when GET and peak give the %delta intensities */
    double delta_pct[CPD_DOMAINS_NDELTA];   /* 25, 50, 75 */
    double delta_value[CPD_DOMAINS_NDELTA]; /* W or m/s */
    unsigned flags;                    /* CPD_DOMAINS_F_* */
} cpd_domains_result;

/* Computes the boundaries: moderate-heavy = the GET's constant-intensity equivalent (else LT1);
 * heavy-severe = CP (CS) of the fit with its 95 % interval; severe-extreme = the intensity whose
 * predicted time to task failure equals the time to reach VO2max (the boundary of Hill, Poole &
 * Smith 2002 Med Sci Sports Exerc 34:709), taken as TD1 + 4 tau1 of a severe-domain bout when
 * known, else CPD_DOMAINS_T_VO2MAX_DEFAULT_S. Its 95 % interval combines in quadrature the
 * model's half-width at that time (t quantile, the fit's dof) and 1.96 x W'/T^2 x SE(T) from the
 * kinetics (delta method; the two come from independent tests). The ranges and targets of each
 * domain: heavy up to CP's lower 95 % bound, severe from its upper bound, the band between them
 * "heavy or severe: the data cannot tell"; severe efforts for 2, 3, 5, 8 and 12 min that lie
 * inside the severe domain (those above the severe-extreme boundary are marked beyond_severe and
 * not valid); 25/50/75 %delta between the GET and the VO2peak equivalents (common practice).
 * Staleness against today. Returns CPD_OK,
 * CPD_EUSAGE for missing or unfitted fit or a bad date, CPD_ENODATA when CP or W' is not positive. */
int cpd_domains_compute(const cpd_domains_input *in, cpd_domains_result *out);

/* SPEC names: "moderate-heavy", "heavy-severe", "severe-extreme"; and "moderate" ... "extreme". */
const char *cpd_boundary_name(cpd_boundary_id b);
const char *cpd_domain_name(cpd_domain d);
/* snake_case key and plain sentence for a single CPD_DOMAINS_F_* bit; NULL for others. */
const char *cpd_domains_flag_name(unsigned flag);
const char *cpd_domains_flag_text(unsigned flag);

/* The domain of a constant intensity x against the result's valid boundaries; CPD_DOM_N when a
 * boundary it needs is unknown (e.g. below CP without a GET). */
cpd_domain cpd_domains_classify(const cpd_domains_result *r, double x);

#endif
