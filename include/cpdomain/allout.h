/* allout.h: the 3-minute all-out cycling test (Burnley, Doust & Vanhatalo 2006 Med Sci Sports Exerc
 * 38:1995; Vanhatalo, Doust & Burnley 2007 Med Sci Sports Exerc 39:548): end-test power (the
 * estimate of CP) and the work done above it (the estimate of W′), with checks that the effort was
 * really all-out. Pure: 1-Hz power in, a result struct out.
 *
 * Arithmetic (SPEC.md): the test is the 180 one-second values from the start offset; second i
 * (0-based) holds power p_i for one second. end_power_w = mean of p_150 .. p_179 (the final 30 s);
 * work_above_end_j = sum over the 180 s of max(p_i - end_power_w, 0)·1 s.
 *
 * The checks (each raises a flag with a plain-English text, cpd_allout_flag_text). The published
 * test asks for an all-out start and an exhausted plateau; the cut-offs below are this module's
 * choices, not published criteria:
 *  - late peak: the highest 1-s power comes at second CPD_ALLOUT_PEAK_BY_S or later;
 *  - paced: the mean of the first 30 s is not above CPD_ALLOUT_PACED_RATIO × end power;
 *  - end rise: the final 30 s mean exceeds the 120-150 s mean by more than CPD_ALLOUT_END_RISE_PCT %;
 *  - no plateau: the least-squares line over the final 30 s changes by more than
 *    CPD_ALLOUT_END_DRIFT_PCT % of end power across those 30 s (still falling, or rising);
 *  - uneven end: the coefficient of variation of the final 30 s exceeds CPD_ALLOUT_END_CV_PCT %;
 *  - stopped: some second of the test has zero power. */
#ifndef CPDOMAIN_ALLOUT_H
#define CPDOMAIN_ALLOUT_H

#include "cpdomain/session.h"

#include <stddef.h>

#define CPD_ALLOUT_TEST_S 180           /* s: length of the test */
#define CPD_ALLOUT_END_S 30             /* s: the final part whose mean is end power */
#define CPD_ALLOUT_PEAK_BY_S 15         /* s: the peak must come within the first 15 s */
#define CPD_ALLOUT_PACED_RATIO 1.5      /* first-30-s mean over end power below this: paced */
#define CPD_ALLOUT_END_RISE_PCT 5.0     /* %: final 30 s above the 120-150 s mean by more: end rise */
#define CPD_ALLOUT_END_DRIFT_PCT 5.0    /* %: change of the final-30-s line, of end power: no plateau */
#define CPD_ALLOUT_END_CV_PCT 10.0      /* %: coefficient of variation of the final 30 s: uneven end */

enum {
    CPD_ALLOUT_FLAG_LATE_PEAK = 1u << 0,
    CPD_ALLOUT_FLAG_PACED = 1u << 1,
    CPD_ALLOUT_FLAG_END_RISE = 1u << 2,
    CPD_ALLOUT_FLAG_NO_PLATEAU = 1u << 3,
    CPD_ALLOUT_FLAG_UNEVEN_END = 1u << 4,
    CPD_ALLOUT_FLAG_STOPPED = 1u << 5
};
#define CPD_ALLOUT_NFLAGS 6

typedef struct {
    double end_power_w;      /* W: mean of the final 30 s (the CP estimate) */
    double work_above_end_j; /* J: work above end power over the 180 s (the W′ estimate) */
    double total_work_j;     /* J: all work over the 180 s */
    double mean_power_w;     /* W: mean over the 180 s */
    double peak_power_w;     /* W: highest 1-s power */
    size_t peak_at_s;        /* s: its second from the test start, 0-based (the first of equal peaks) */
    double first30_mean_w;   /* W: mean of seconds 0-29 */
    double mean_120_150_w;   /* W: mean of seconds 120-149 */
    double end_slope_w_s;    /* W/s: least-squares slope over the final 30 s */
    double end_drift_w;      /* W: that line's change across the final 30 s (slope × 30 s) */
    int has_end_cv;          /* 1 when end_cv_pct is valid (end power > 0) */
    double end_cv_pct;       /* %: SD / mean of the final 30 s (population SD); 0 when !has_end_cv */
    size_t zero_s;           /* s: seconds of the test with zero power */
    unsigned flags;          /* CPD_ALLOUT_FLAG_* */
    int all_out;             /* 1 when no flag is raised */
    /* Measurement precision (issue 12): the SE of a 30-s mean, SD (n - 1) / sqrt(30), and a t
     * interval with 29 dof; the work above end power moves by -1 J per W of end power for every
     * second above it, so its SE is that count x SE(end power). They say how precisely this test
     * measured its end power, not how well end power estimates CP (see cpd_allout_caution). */
    double end_power_se_w;   /* W */
    double end_power_ci95[2];/* W */
    double work_above_se_j;  /* J */
    double work_above_ci95[2]; /* J */
} cpd_allout_result;

/* Analyses the test in power_w[start_s .. start_s + 179] (1-Hz power, W, finite and >= 0 there)
 * by the arithmetic and checks above. Returns CPD_OK; CPD_ENODATA when fewer than 180 s follow
 * start_s; CPD_EDATA for a non-finite or negative power in the test; CPD_EUSAGE for a NULL array.
 * On an error msg (CPD_MSG_MAX bytes, may be NULL) says why. */
int cpd_allout_analyse(const double *power_w, size_t n, size_t start_s, cpd_allout_result *r, char *msg);

/* The same on a session cleaned by cpd_session_clean (power), the test starting start_s seconds
 * after its first sample. The 180 s must lie inside one segment: CPD_ENODATA when start_s is in no
 * segment or a split or the end of the file comes first. Other returns as cpd_allout_analyse. */
int cpd_allout_session(const cpd_session *s, size_t start_s, cpd_allout_result *r, char *msg);

/* Short key of a single flag bit for machine output ("late_peak", "paced", "end_rise",
 * "no_plateau", "uneven_end", "stopped"); NULL for anything else. */
const char *cpd_allout_flag_name(unsigned flag);

/* A plain-English sentence for a single flag bit: what it means for the result; NULL for anything else. */
const char *cpd_allout_flag_text(unsigned flag);

/* The published caution that the test's W′ estimate is weaker than its CP estimate; static, never NULL. */
const char *cpd_allout_caution(void);

#endif
