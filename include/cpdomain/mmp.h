/* mmp.h: the mean-maximal curve (best mean power or speed for each duration) of a cleaned session,
 * and the season curve: the pointwise best over many sessions, with which session and date gave
 * each point. Pure: segments in, arrays out; a workspace makes repeated sessions allocation-free.
 *
 * The duration grid is fixed, so curves of different sessions line up point by point: index i
 * (from 0) is i + 1 s for i < CPD_MMP_FINE_S (every whole second from 1 s to 3600 s, SPEC.md), then
 * CPD_MMP_FINE_S + CPD_MMP_COARSE_STEP_S·(i - CPD_MMP_FINE_S + 1) s (every 60 s from 3660 s). A
 * session's curve stops at the last grid duration not longer than its longest segment.
 *
 * Every point is exact: the best mean over every start of every segment (an effort never spans a
 * split). Per segment of L s and duration d all L - d + 1 windows are scanned with prefix sums,
 * O(L·D) for D grid durations: a 2-h ride is about 19 million window comparisons.
 *  - Values recorded at a resolution (whole watts, 0.01 m/s, and the sixtieths the linear fill of
 *    a short gap makes of whole numbers): each value is read as the integer count q of 1/scale
 *    for the first scale of 1, 60, 10, 100, 1000, 600, 6000, 60000, 10000 at which q / scale
 *    equals the value to the last bit. Window sums of counts are exact integers (32-bit when they
 *    fit, else doubles below 2^53), so the maximum and its first start are exact, and the value
 *    is the exact mean correctly rounded (one division). Values are >= 0, so a block of starts
 *    whose span (first start to last end) sums to no more than the best window already found
 *    cannot hold a better one and is skipped: exact pruning, not an approximation.
 *  - Other values: prefix sums of the values minus the segment mean find every window within the
 *    scan's rounding bound of the largest; those are compared by compensated (double-double,
 *    Knuth's TwoSum) prefix sums, so the value reported is the window's mean to about 1e-15
 *    relative.
 * Ties: the earliest start (within a segment, then the earlier segment). */
#ifndef CPDOMAIN_MMP_H
#define CPDOMAIN_MMP_H

#include "cpdomain/session.h"

#include <stddef.h>
#include <stdint.h>

#define CPD_MMP_FINE_S 3600        /* s: every whole second up to this duration */
#define CPD_MMP_COARSE_STEP_S 60   /* s: grid step beyond CPD_MMP_FINE_S */
/* Points in the grid up to CPD_SESSION_MAX_SPAN_S: the most any curve has. */
#define CPD_MMP_NMAX (CPD_MMP_FINE_S + ((size_t)CPD_SESSION_MAX_SPAN_S - CPD_MMP_FINE_S) / CPD_MMP_COARSE_STEP_S)

/* A curve: n points on the grid, as three plain arrays (store-friendly: each array can be saved
 * as a BLOB of n doubles and pointed at again after loading). */
typedef struct {
    size_t n;                 /* points */
    const double *duration_s; /* s: grid durations, cpd_mmp_duration_s(0 .. n-1) */
    const double *value;      /* W or m/s: best mean over the duration */
    const double *start_s;    /* s: grid second where that best effort began, from the session's first sample */
} cpd_mmp_curve;

/* Duration of grid point i, s (i < CPD_MMP_NMAX). */
size_t cpd_mmp_duration_s(size_t i);

/* The name of the scan kernel this processor runs (the widest vector clone it supports, e.g.
 * "avx2"); a static string. For benchmarks and bug reports. */
const char *cpd_mmp_kernel(void);

/* Number of grid points with duration <= longest_s (0 for longest_s == 0), at most CPD_MMP_NMAX. */
size_t cpd_mmp_points(size_t longest_s);

typedef struct cpd_mmp_ws cpd_mmp_ws;

/* Allocates a workspace with room for segments of up to longest_hint_s seconds (0 allowed); it
 * grows when a longer segment comes, so repeated sessions allocate nothing once it has seen the
 * longest. Returns NULL when out of memory. The caller frees it with cpd_mmp_free (NULL accepted). */
cpd_mmp_ws *cpd_mmp_alloc(size_t longest_hint_s);
void cpd_mmp_free(cpd_mmp_ws *w);

/* The mean-maximal curve over n_seg segments (each a run of 1-Hz values, W or m/s, finite and >= 0;
 * start_s places it in the session). *out receives the curve; its arrays live in the workspace and
 * are valid until the next call with w or cpd_mmp_free. Returns CPD_OK; CPD_ENODATA when there is
 * no value at all; CPD_EUSAGE for a non-finite or negative value, overlapping or unordered
 * segments, or a segment longer than CPD_SESSION_MAX_SPAN_S; CPD_ENOMEM. */
int cpd_mmp_segments(cpd_mmp_ws *w, const cpd_session_segment *seg, size_t n_seg, cpd_mmp_curve *out);

/* The mean-maximal curve of a session cleaned by cpd_session_clean: cpd_mmp_segments over its
 * segments. Same returns and ownership. */
int cpd_mmp_session(cpd_mmp_ws *w, const cpd_session *s, cpd_mmp_curve *out);

/* The season curve: for each grid point the best value over the sessions added, with the effort's
 * start, the caller's session id and date. Allocated with room for the whole grid. */
typedef struct {
    size_t n;           /* points: the longest curve added so far */
    double *duration_s; /* s: grid durations */
    double *value;      /* W or m/s: best mean over the sessions added */
    double *start_s;    /* s: where that effort began in its session */
    int64_t *session;   /* the caller's id of the session that gave the point */
    int *date_days;     /* the caller's date of that session, days since 1970-01-01 */
} cpd_mmp_season;

/* Allocates an empty season curve (CPD_MMP_NMAX points of room). Returns NULL when out of memory.
 * The caller frees it with cpd_mmp_season_free (NULL accepted). */
cpd_mmp_season *cpd_mmp_season_alloc(void);
void cpd_mmp_season_free(cpd_mmp_season *s);

/* Empties s for reuse. */
void cpd_mmp_season_reset(cpd_mmp_season *s);

/* Adds curve c of session 'session' dated date_days to s: each point replaces the season's when
 * strictly higher, so among equal values the session added first keeps the point (add in date
 * order to credit the earliest). c is checked first (c->n <= CPD_MMP_NMAX, durations on the grid,
 * values and starts finite and >= 0), so a damaged stored curve is refused and s is left as it
 * was. Returns CPD_OK or CPD_EUSAGE. Allocates nothing. */
int cpd_mmp_season_add(cpd_mmp_season *s, const cpd_mmp_curve *c, int64_t session, int date_days);

/* Merges curve c of session 'session' dated date_days into s in any order: a point is taken when
 * strictly higher, or equal and from an earlier date (then a lower session id), so merging the
 * sessions one by one in any order gives the season cpd_mmp_season_add gives in date order.
 * Same checks, returns and allocation as cpd_mmp_season_add. */
int cpd_mmp_season_merge(cpd_mmp_season *s, const cpd_mmp_curve *c, int64_t session, int date_days);

#endif
