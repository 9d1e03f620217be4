/* session.h: a recorded training or race session (power or speed over time) turned into clean 1-Hz
 * segments, the input of the mean-maximal curve and the 3-minute all-out test. Pure: arrays in,
 * a result that points into a caller-owned workspace out.
 *
 * The cleaning rules (SPEC.md "Sessions"), in the order they are applied:
 *  1. Checks: at least 2 samples spanning some time; every time and value finite; values >= 0;
 *     time never runs backwards (equal times are allowed, rule 4); the file spans at most
 *     CPD_SESSION_MAX_SPAN_S. Any failure is an error with a reason and the index of the
 *     offending sample; nothing is cleaned.
 *  2. The grid: whole seconds counted from the first sample, k = 0, 1, 2, ... at file time
 *     time_s[0] + k. A file already at 1 Hz (with any constant offset) lands on the grid exactly.
 *  3. Spikes: a value above the limit (CPD_SESSION_SPIKE_POWER_W or CPD_SESSION_SPIKE_SPEED_M_S,
 *     or the caller's ceiling instead) is counted and dropped, as if that sample had never been
 *     recorded; its second is then a dropout like any other (rule 5). Recorded zeros are real zeros
 *     (coasting, standing) and are kept.
 *  4. Samples within CPD_SESSION_TIME_TOL_S of each other are one instant: their values are averaged.
 *  5. Gaps: between two consecutive kept samples a and b, the second k in between is the linear
 *     interpolation v_a + (v_b - v_a)·(k - t_a)/(t_b - t_a); a sample within the tolerance of k is
 *     taken as it is. When t_b - t_a > 1.5 s the pair is a dropout (at least one 1-Hz sample is
 *     missing). A dropout with t_b - t_a <= CPD_SESSION_MAX_FILL_S + 1 s (at 1 Hz: up to 5 missing
 *     seconds) is filled; a longer one is a split: the seconds in between belong to no segment, and
 *     no effort in the mean-maximal curve spans them. A pause of the recording is such a gap.
 *     Non-integer sample times are resampled by the same interpolation; a file recorded faster than
 *     1 Hz is thereby sampled at whole seconds, not averaged over each second.
 *  6. Segments: maximal runs of covered seconds. A kept sample that covers no whole second (a lone
 *     sample at a fractional time between two splits) is reported as isolated and contributes nothing. */
#ifndef CPDOMAIN_SESSION_H
#define CPDOMAIN_SESSION_H

#include <stddef.h>
#include <stdint.h>

#define CPD_SESSION_SPIKE_POWER_W 2500.0  /* W: above this a 1-s power is a meter spike (common practice) */
/* m/s: above this a speed is a GPS spike (common practice); the fastest sprinters peak near
 * 12.3 m/s (from memory), so a sprint group needs a caller's ceiling */
#define CPD_SESSION_SPIKE_SPEED_M_S 12.0
#define CPD_SESSION_MAX_FILL_S 5          /* s: longest dropout filled by interpolation (SPEC.md) */
#define CPD_SESSION_DROPOUT_S 1.5         /* s: consecutive samples farther apart than this are a dropout */
#define CPD_SESSION_TIME_TOL_S 1e-6       /* s: times closer than this are the same instant */
#define CPD_SESSION_MAX_SPAN_S 604800.0   /* s: 7 days, the longest file accepted */

typedef enum {
    CPD_SESSION_POWER = 0, /* values are power, W */
    CPD_SESSION_SPEED      /* values are speed, m/s */
} cpd_session_modality;

typedef struct {
    cpd_session_modality modality; /* chooses the default spike limit */
    double ceiling;                /* W or m/s: the spike limit in place of the default; 0 = default */
} cpd_session_opts;

/* Why a file could not be cleaned. */
typedef enum {
    CPD_SESSION_ERR_NONE = 0,       /* cleaned */
    CPD_SESSION_ERR_EMPTY,          /* no samples */
    CPD_SESSION_ERR_ONE_SAMPLE,     /* a single sample, or all at one instant: no time spanned */
    CPD_SESSION_ERR_TIME_NONFINITE, /* a time is NaN or infinite */
    CPD_SESSION_ERR_VALUE_NONFINITE,/* a value is NaN or infinite */
    CPD_SESSION_ERR_NEGATIVE,       /* a value is below zero */
    CPD_SESSION_ERR_BACKWARDS,      /* a time is earlier than the one before it */
    CPD_SESSION_ERR_TOO_LONG,       /* the file spans more than CPD_SESSION_MAX_SPAN_S */
    CPD_SESSION_ERR_NO_DATA,        /* no whole second is left after spikes are dropped */
    CPD_SESSION_NERRS
} cpd_session_error;

/* One run of consecutive clean seconds. */
typedef struct {
    size_t start_s;      /* s: grid second of the first value, counted from the first sample */
    size_t length_s;     /* s: number of values (one per second) */
    const double *value; /* W or m/s: length_s values, inside the workspace's 1-Hz array */
} cpd_session_segment;

/* A cleaned session. The pointers lead into the workspace that produced it: they are valid until
 * the next cpd_session_clean with that workspace or its cpd_session_free. */
typedef struct {
    cpd_session_error error;      /* CPD_SESSION_ERR_NONE when cleaned */
    size_t error_index;           /* 0-based sample index the error names (meaningful when error != NONE) */
    size_t n_segments;            /* segments, >= 1 when cleaned */
    const cpd_session_segment *segments; /* n_segments, in time order */
    const double *value;          /* W or m/s: all segments' values back to back (recorded_s of them) */
    double elapsed_s;             /* s: last sample time minus first sample time */
    size_t grid_s;                /* s: whole seconds on the grid from the first to the last sample */
    size_t recorded_s;            /* s: seconds in segments (sum of the lengths) */
    size_t missing_s;             /* s: grid seconds in no segment (split gaps, dropped edges) */
    size_t longest_s;             /* s: length of the longest segment */
    size_t n_dropouts;            /* gaps of more than CPD_SESSION_DROPOUT_S between kept samples */
    size_t dropout_s;             /* s: whole seconds inside those gaps (filled or not) */
    size_t filled_s;              /* s: seconds filled across dropouts of up to CPD_SESSION_MAX_FILL_S */
    size_t resampled_s;           /* s: seconds interpolated between samples <= 1.5 s apart (non-integer times) */
    size_t n_splits;              /* gaps longer than CPD_SESSION_MAX_FILL_S + 1 s */
    size_t n_spikes;              /* samples dropped as spikes */
    double spike_limit;           /* W or m/s: the limit used */
    double spike_max;             /* W or m/s: highest spike value; 0 when n_spikes == 0 */
    double first_spike_s;         /* s from the first sample: time of the first spike; 0 when none */
    size_t n_merged;              /* samples averaged into another at the same instant */
    size_t n_isolated;            /* kept samples that covered no whole second */
} cpd_session;

typedef struct cpd_session_ws cpd_session_ws;

/* Fills o with the defaults for modality m: the default spike limit (ceiling 0). */
void cpd_session_opts_init(cpd_session_opts *o, cpd_session_modality m);

/* Allocates a workspace with room for files of up to n_hint samples (0 is allowed); it grows when
 * a longer file comes, so repeated sessions of similar length allocate nothing. Returns NULL when
 * out of memory. The caller frees it with cpd_session_free (NULL accepted). */
cpd_session_ws *cpd_session_alloc(size_t n_hint);
void cpd_session_free(cpd_session_ws *w);

/* Cleans n samples (time_s: s, any origin; value: W or m/s per opts->modality) into 1-Hz segments
 * by the rules at the top of this file. opts may be NULL (power, default limit). Returns CPD_OK;
 * CPD_ENODATA (s->error EMPTY, ONE_SAMPLE or NO_DATA); CPD_EDATA (s->error and s->error_index name
 * the sample); CPD_EUSAGE for a ceiling that is not finite and >= 0 or a bad modality; CPD_ENOMEM.
 * On an error msg (CPD_MSG_MAX bytes, may be NULL) receives a sentence naming the sample. */
int cpd_session_clean(cpd_session_ws *w, const double *time_s, const double *value, size_t n,
                      const cpd_session_opts *opts, cpd_session *s, char *msg);

/* A short English description of error e; never NULL. */
const char *cpd_session_error_text(cpd_session_error e);

/* 64-bit FNV-1a (Fowler, Noll & Vo; offset basis 14695981039346656037, prime 1099511628211) over
 * n bytes, continuing from h: start with CPD_SESSION_HASH_INIT, feed the raw file bytes in one or
 * more pieces. For duplicate detection of files, not security: among a million distinct files the
 * chance of any collision is about 3e-8 (n²/2^65). */
#define CPD_SESSION_HASH_INIT 14695981039346656037ull
uint64_t cpd_session_hash(uint64_t h, const void *bytes, size_t n);

#endif
