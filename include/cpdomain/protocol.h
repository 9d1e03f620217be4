/* protocol.h: the exercise protocols users type for predict and solve ("10min@150W; 5x(4min@?,
 * 3min@120W)"), parsed into a flat list of segments and expanded onto a 1-s intensity grid.
 * Pure: no I/O, no globals; a syntax error names its 1-based character position. */
#ifndef CPDOMAIN_PROTOCOL_H
#define CPDOMAIN_PROTOCOL_H

#include <stddef.h>

/* Limits that keep a typed protocol bounded once its repeats are expanded. */
#define CPD_PROTOCOL_MAX_S 86400 /* longest expanded protocol, s (24 h) */
#define CPD_PROTOCOL_MAX_DEPTH 8 /* deepest nesting of Nx( ... ) groups */

/* What a protocol's absolute intensities are. */
typedef enum {
    CPD_PROTOCOL_UNSPECIFIED, /* only %CP segments and a bare '?': the athlete's fit decides */
    CPD_PROTOCOL_POWER,       /* W; the critical intensity is CP (W) and the capacity W′ (J) */
    CPD_PROTOCOL_SPEED        /* m/s; the critical intensity is CS (m/s) and the capacity D′ (m) */
} cpd_protocol_modality;

/* How a segment's intensity is given. */
typedef enum {
    CPD_PROTOCOL_ABS_POWER, /* value in W */
    CPD_PROTOCOL_ABS_SPEED, /* value in m/s (typed as m/s, km/h or a pace) */
    CPD_PROTOCOL_PCT_CP,    /* value in % of CP (or CS); typed %CP (either modality) or %CS (speed) */
    CPD_PROTOCOL_UNKNOWN    /* the '?' of solve; value unused (0) */
} cpd_protocol_kind;

/* The unit an intensity was typed in; for '?' the optional unit written after it ("?W", "?/km"),
 * which only fixes the modality and tells a caller how to show the answer. */
typedef enum {
    CPD_PROTOCOL_UNIT_NONE, /* a bare '?' */
    CPD_PROTOCOL_UNIT_W,
    CPD_PROTOCOL_UNIT_PCT_CP,
    CPD_PROTOCOL_UNIT_PCT_CS,
    CPD_PROTOCOL_UNIT_M_S,
    CPD_PROTOCOL_UNIT_KM_H,
    CPD_PROTOCOL_UNIT_PACE_KM,  /* m:ss per km */
    CPD_PROTOCOL_UNIT_PACE_100M /* m:ss per 100 m */
} cpd_protocol_unit;

typedef struct {
    size_t duration_s;      /* whole seconds, >= 1 (a distance segment: distance / speed, rounded) */
    double distance_m;      /* m for a distance segment ("400m@5.2m/s"), else 0 */
    cpd_protocol_kind kind; /* how value is to be read */
    cpd_protocol_unit unit; /* as typed */
    double value;           /* W, m/s or % of CP/CS, per kind; 0 for the unknown */
    size_t pos;             /* 1-based character position of the segment in the text */
} cpd_protocol_segment;

typedef struct {
    size_t n;                      /* segments, every repeat expanded, in order */
    cpd_protocol_segment *seg;     /* n segments */
    size_t total_s;                /* sum of the durations, s (<= CPD_PROTOCOL_MAX_S) */
    cpd_protocol_modality modality; /* from the absolute intensities and unit hints */
    int has_pct;                   /* 1 when a %CP segment needs the critical intensity */
    int has_unknown;               /* 1 when '?' appears (one unknown, maybe in several segments) */
    cpd_protocol_unit unknown_unit; /* the unit written after '?' (NONE when bare everywhere) */
    size_t unknown_s;              /* seconds spent at the unknown intensity */
} cpd_protocol;

/* Parses text in the syntax of SPEC.md: segments DURATION@INTENSITY separated by ';' or ',',
 * groups Nx( ... ) (also N×( ... )) nested up to CPD_PROTOCOL_MAX_DEPTH; blanks are allowed around
 * every token. DURATION is any form of cpd_parse_duration ("390", "390s", "6:30", "6min",
 * "1:02:00", "1.5h") and must be a whole number of seconds, at least 1; or, for runners and swimmers,
 * a DISTANCE in metres or kilometres ("400m", "1.5km": "m" is metres, minutes are "min") held at an
 * absolute speed (m/s, km/h or a pace), lasting distance/speed rounded to the nearest second (at
 * least 1 s); a distance at %CS or '?' is refused, as its length in time is not known before the
 * fit or the answer. INTENSITY is 350W, 105%CP,
 * 105%CS, 4.6m/s, 16.5km/h, 3:35/km, 1:20/100m, or ? (optionally ?W, ?m/s, ?/km ... : all '?'
 * are the same unknown and the written units must agree). Power 0-3000 W, speed 0-15 m/s,
 * 0-500 % of CP; W and speed units may not be mixed. One trailing separator is accepted (at the
 * end or before ')'); an empty segment (";;", a leading ';', "3x()") is an error.
 * Returns CPD_OK with *out owned by the caller (free with cpd_protocol_free), CPD_EDATA with
 * "position P: expected ..." in msg (CPD_MSG_MAX bytes; P counts UTF-8 characters from 1), or
 * CPD_ENOMEM. */
int cpd_protocol_parse(const char *text, cpd_protocol **out, char *msg);

/* Frees a parsed protocol; NULL is accepted. */
void cpd_protocol_free(cpd_protocol *p);

/* Writes the intensity of each of the p->total_s seconds into intensity[0 .. total_s-1]
 * (n >= total_s): W or m/s as the modality, %CP segments as pct/100 * cp, and '?' as
 * unknown (same unit). cp is CP in W or CS in m/s, needed (> 0) only when p->has_pct; unknown
 * must be finite and >= 0 when p->has_unknown. Returns CPD_OK or CPD_EUSAGE. */
int cpd_protocol_expand(const cpd_protocol *p, double cp, double unknown, double *intensity, size_t n);

/* "power", "speed" or "unspecified". */
const char *cpd_protocol_modality_name(cpd_protocol_modality m);

#endif
