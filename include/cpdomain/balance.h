/* balance.h: W′ balance (D′ balance for speed) second by second through a protocol or a recorded
 * session, and the solver for the one unknown intensity of a protocol. Pure: arrays in, results out.
 *
 * Discretisation (SPEC.md): 1-s steps; second k (counted from 1) is held at intensity[k-1], and
 * the balance is reported at the end of each second, starting rested (balance = W′0 at t = 0).
 *  - differential (Skiba et al. 2015 Eur J Appl Physiol 115:703): P > CP: B <- B - (P - CP)·1 s;
 *    P < CP: the exact solution over the second of dB/dt = (W′0 - B)·D_CP/W′0 with D_CP = CP - P,
 *    B <- W′0 - (W′0 - B)·exp(-D_CP/W′0); P = CP: unchanged.
 *  - bartram (Bartram et al. 2018 Int J Sports Physiol Perform 13:724, fitted on trained track
 *    cyclists): as differential with the recovery time constant tau = 2287.2·D_CP^-0.688 s:
 *    B <- W′0 - (W′0 - B)·exp(-1 s/tau). Named after its authors; "elite" is still read as an alias.
 *  - integral (Skiba et al. 2012 Med Sci Sports Exerc 44:1526): the expenditure of second k,
 *    e_k = max(P_k - CP, 0)·1 s, is placed at the end of that second, and
 *    B(t) = W′0 - sum_{k<=t} e_k·exp(-(t - k)/tau), tau = 546·exp(-0.01·D_CP) + 316 s with D_CP
 *    the mean of CP - P over every sub-CP second of the whole input; with no sub-CP second there
 *    is no recovery (exp(...) = 1). Computed in O(n) as S_t = S_{t-1}·exp(-1/tau) + e_t,
 *    B(t) = W′0 - S_t. Against the continuous integral over piecewise-constant power each e_k
 *    lacks the factor tau·(1 - exp(-1/tau)), below 0.16 % for every tau >= 316 s.
 * The balance is not clamped: it goes below zero after failure and the computation continues.
 * For speed the same arithmetic runs with CS (m/s) and D′ (m). The integral and bartram constants
 * were fitted on cycling power in W; with m/s they are used as they are and mean little (the
 * reports mark them). */
#ifndef CPDOMAIN_BALANCE_H
#define CPDOMAIN_BALANCE_H

#include "cpdomain/protocol.h"

#include <stddef.h>

typedef enum {
    CPD_BALANCE_DIFFERENTIAL, /* Skiba et al. 2015 (the default) */
    CPD_BALANCE_INTEGRAL,     /* Skiba et al. 2012 */
    CPD_BALANCE_BARTRAM       /* differential form, Bartram et al. 2018 tau (trained cyclists) */
} cpd_balance_model;
#define CPD_BALANCE_ELITE CPD_BALANCE_BARTRAM /* the former name */

typedef struct {
    cpd_balance_model model;
    double cp;      /* critical power, W (critical speed CS, m/s, for speed) */
    double w_prime; /* W′ at the rested start, J (D′, m, for speed) */
} cpd_balance_params;

typedef struct {
    double min_balance;  /* lowest end-of-second balance, J (m) */
    size_t min_at_s;     /* first second (from 1) at whose end min_balance is reached */
    double end_balance;  /* balance at the end of the last second, J (m) */
    int failed;          /* 1 when the balance is <= 0 at the end of some second */
    size_t failure_at_s; /* first such second (from 1); 0 and meaningless when !failed */
    int has_dcp;         /* integral model: 1 when some second is below CP (so tau_s is valid) */
    double dcp_mean;     /* integral: mean CP - P over the sub-CP seconds, W (m/s); valid when has_dcp */
    double tau_s;        /* integral: the recovery time constant used, s; valid when has_dcp */
} cpd_balance_result;

/* "differential", "integral", "bartram"; NULL for an invalid model. */
const char *cpd_balance_model_name(cpd_balance_model m);

/* Looks up a model by the name above ("elite" is read as "bartram", its former name). Returns
 * CPD_OK or CPD_EUSAGE for an unknown name. */
int cpd_balance_model_parse(const char *name, cpd_balance_model *m);

/* Recovery time constant of the integral model, tau = 546·exp(-0.01·D_CP) + 316 s (Skiba et al.
 * 2012 Med Sci Sports Exerc 44:1526), D_CP = CP - P in W. Returns CPD_OK, or CPD_EUSAGE unless
 * D_CP is finite and > 0. */
int cpd_balance_tau_integral(double dcp_w, double *tau_s);

/* Recovery time constant of the differential model, tau = W′0/D_CP s (Skiba et al. 2015 Eur J
 * Appl Physiol 115:703), W′0 in J, D_CP in W (or m and m/s). Returns CPD_OK, or CPD_EUSAGE unless
 * both are finite and > 0. */
int cpd_balance_tau_differential(double w_prime, double dcp, double *tau_s);

/* Recovery time constant for elite cyclists, tau = 2287.2·D_CP^-0.688 s (Bartram et al. 2018 Int J
 * Sports Physiol Perform 13:724), D_CP in W. Returns CPD_OK, or CPD_EUSAGE unless D_CP is finite
 * and > 0. */
int cpd_balance_tau_elite(double dcp_w, double *tau_s);

/* Runs the model over intensity[0 .. n-1] (W or m/s, one value per second, finite and >= 0) with
 * the discretisation above. trace, when not NULL, receives the n end-of-second balances (J or m).
 * Returns CPD_OK, or CPD_EUSAGE for n == 0, a bad intensity, cp or w_prime not finite and > 0,
 * or an invalid model. */
int cpd_balance_run(const cpd_balance_params *bp, const double *intensity, size_t n, double *trace,
                    cpd_balance_result *res);

/* Why a solve has no answer. */
typedef enum {
    CPD_SOLVE_OK,                /* the answer is in 'intensity' */
    CPD_SOLVE_FAILS_AT_LOWEST,   /* the protocol fails even with the unknown at the lowest intensity */
    CPD_SOLVE_BELOW_AT_LOWEST,   /* even the lowest intensity ends below the target */
    CPD_SOLVE_THROUGH_FAILURE,   /* the target is reachable only by passing through failure */
    CPD_SOLVE_UNREACHABLE        /* the end balance jumps over the target (integral model, at x = CP) */
} cpd_solve_reason;

typedef struct {
    cpd_solve_reason reason; /* CPD_SOLVE_OK exactly when intensity is valid */
    double intensity;        /* the unknown, W (m/s); valid when reason == CPD_SOLVE_OK */
    double target_balance;   /* finish_pct/100 · W′0, J (m) */
    int has_end_balance;     /* 1 when end_balance is valid */
    double end_balance;      /* J (m): at the answer; else the end balance nearest the target that
                                does not pass through failure, when one exists (for
                                cpd_balance_solve_lowest: the session's lowest balance instead) */
    double lowest;           /* lower end of the bracket searched, W (m/s) */
    double highest;          /* upper end of the bracket searched, W (m/s) */
    size_t iter;             /* Brent iterations */
} cpd_balance_solution;

/* Scratch space for cpd_balance_solve: room for protocols of up to max_s seconds. Returns NULL when
 * out of memory or max_s == 0. The caller frees it with cpd_balance_free (NULL accepted). */
typedef struct cpd_balance_ws cpd_balance_ws;
cpd_balance_ws *cpd_balance_alloc(size_t max_s);
void cpd_balance_free(cpd_balance_ws *w);

/* Finds the one unknown '?' of protocol p so that it ends with finish_pct % of W′0 left
 * (0 <= finish_pct < 100), by Brent's method (GSL gsl_root_fsolver_brent) on
 * h(x) = min(B_end(x) - target, min_{k < n} B_k(x)), which is > 0 exactly when the protocol ends
 * above the target without failing before its last second. Bracket: from the lowest intensity
 * (1 W, or 0.1 m/s: the lower bounds of CPD_RANGE_POWER/SPEED) to CP + 2·W′0 (numerically, W + J),
 * where the first unknown second alone empties W′ so h <= 0. h is continuous except at x = CP
 * (the integral model's D_CP gains or loses the unknown's seconds there), so [lowest, CP) is
 * searched when h changes sign on it, else [CP, highest]. The answer is re-simulated and accepted
 * only when it does not fail before the last second and |B_end - target| <= 1e-6·W′0.
 * modality is the athlete's (that of bp->cp); it must agree with p->modality unless that is
 * unspecified; %CP segments use bp->cp. Returns CPD_OK; CPD_ENODATA with sol->reason for an
 * impossible request; CPD_ENOCONV when Brent does not converge in 200 iterations; CPD_EUSAGE for
 * bad arguments (no '?', protocol longer than the workspace, modality mismatch, finish_pct out of
 * range); CPD_EINTERNAL if the bracket's upper end does not fail (a bug). */
int cpd_balance_solve(cpd_balance_ws *w, const cpd_balance_params *bp, cpd_protocol_modality modality,
                      const cpd_protocol *p, double finish_pct, cpd_balance_solution *sol);

/* As cpd_balance_solve, but for the LOWEST balance of the whole session (every second, the last
 * included) instead of the end balance: a session that ends in recovery has its hardest moment
 * before the end, so an end balance may be unreachable while a lowest balance is not. The lowest
 * balance falls as the unknown rises (Skiba's models), so the same bracket and Brent search apply;
 * sol->end_balance holds the lowest balance. lowest_pct must be in (0, 100): 0 is task failure.
 * Same return codes. */
int cpd_balance_solve_lowest(cpd_balance_ws *w, const cpd_balance_params *bp, cpd_protocol_modality modality,
                             const cpd_protocol *p, double lowest_pct, cpd_balance_solution *sol);

#endif
