/* balance.c: W′ (D′) balance models on 1-s steps and the Brent solver for a protocol's unknown.
 * The discretisation is stated in balance.h; every path is O(n) per simulation. */
#include "cpdomain/balance.h"
#include "cpdomain/status.h"
#include "cpdomain/units.h"

#include <gsl/gsl_errno.h>
#include <gsl/gsl_roots.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#define SOLVE_MAX_ITER 200
#define SOLVE_TOL_FRAC 1e-6 /* accepted |B_end - target| as a fraction of W′0 */

struct cpd_balance_ws {
    size_t max_s;
    double *intensity; /* max_s */
    double *trace;     /* max_s */
};

const char *cpd_balance_model_name(cpd_balance_model m)
{
    switch (m) {
    case CPD_BALANCE_DIFFERENTIAL:
        return "differential";
    case CPD_BALANCE_INTEGRAL:
        return "integral";
    case CPD_BALANCE_BARTRAM:
        return "bartram";
    }
    return NULL;
}

int cpd_balance_model_parse(const char *name, cpd_balance_model *m)
{
    static const cpd_balance_model all[] = {CPD_BALANCE_DIFFERENTIAL, CPD_BALANCE_INTEGRAL, CPD_BALANCE_ELITE};
    if (!name)
        return CPD_EUSAGE;
    if (strcmp(name, "elite") == 0) { /* the former name, named after a judgement rather than its authors */
        *m = CPD_BALANCE_BARTRAM;
        return CPD_OK;
    }
    for (size_t i = 0; i < sizeof all / sizeof all[0]; i++)
        if (strcmp(name, cpd_balance_model_name(all[i])) == 0) {
            *m = all[i];
            return CPD_OK;
        }
    return CPD_EUSAGE;
}

int cpd_balance_tau_integral(double dcp_w, double *tau_s)
{
    if (!(isfinite(dcp_w) && dcp_w > 0))
        return CPD_EUSAGE;
    *tau_s = 546.0 * exp(-0.01 * dcp_w) + 316.0;
    return CPD_OK;
}

int cpd_balance_tau_differential(double w_prime, double dcp, double *tau_s)
{
    if (!(isfinite(w_prime) && w_prime > 0 && isfinite(dcp) && dcp > 0))
        return CPD_EUSAGE;
    *tau_s = w_prime / dcp;
    return CPD_OK;
}

int cpd_balance_tau_elite(double dcp_w, double *tau_s)
{
    if (!(isfinite(dcp_w) && dcp_w > 0))
        return CPD_EUSAGE;
    *tau_s = 2287.2 * pow(dcp_w, -0.688);
    return CPD_OK;
}

/* One second of the differential family; elite differs only in its recovery constant. */
static double step_differential(double b, double p, double cp, double w0, int elite)
{
    if (p > cp)
        return b - (p - cp);
    if (p < cp) {
        double dcp = cp - p;
        double decay;
        if (elite) {
            double tau = 1.0;
            (void)cpd_balance_tau_elite(dcp, &tau); /* cannot fail: dcp > 0 and finite */
            decay = exp(-1.0 / tau);
        } else {
            decay = exp(-dcp / w0);
        }
        return w0 - (w0 - b) * decay;
    }
    return b;
}

int cpd_balance_run(const cpd_balance_params *bp, const double *intensity, size_t n, double *trace,
                    cpd_balance_result *res)
{
    if (!bp || !intensity || !res || n == 0 || !cpd_balance_model_name(bp->model))
        return CPD_EUSAGE;
    const double cp = bp->cp, w0 = bp->w_prime;
    if (!(isfinite(cp) && cp > 0 && isfinite(w0) && w0 > 0))
        return CPD_EUSAGE;
    double dsum = 0.0;
    size_t nsub = 0;
    for (size_t i = 0; i < n; i++) {
        if (!(isfinite(intensity[i]) && intensity[i] >= 0))
            return CPD_EUSAGE;
        if (intensity[i] < cp) {
            dsum += cp - intensity[i];
            nsub++;
        }
    }
    memset(res, 0, sizeof *res);

    double decay = 1.0; /* integral model: per-second decay of earlier expenditure */
    if (bp->model == CPD_BALANCE_INTEGRAL && nsub > 0) {
        res->has_dcp = 1;
        res->dcp_mean = dsum / (double)nsub;
        (void)cpd_balance_tau_integral(res->dcp_mean, &res->tau_s);
        decay = exp(-1.0 / res->tau_s);
    }

    double b = w0, spent = 0.0;
    for (size_t i = 0; i < n; i++) {
        double p = intensity[i];
        if (bp->model == CPD_BALANCE_INTEGRAL) {
            spent = spent * decay + (p > cp ? p - cp : 0.0);
            b = w0 - spent;
        } else {
            b = step_differential(b, p, cp, w0, bp->model == CPD_BALANCE_ELITE);
        }
        if (trace)
            trace[i] = b;
        if (i == 0 || b < res->min_balance) {
            res->min_balance = b;
            res->min_at_s = i + 1;
        }
        if (b <= 0 && !res->failed) {
            res->failed = 1;
            res->failure_at_s = i + 1;
        }
    }
    res->end_balance = b;
    return CPD_OK;
}

cpd_balance_ws *cpd_balance_alloc(size_t max_s)
{
    if (max_s == 0)
        return NULL;
    cpd_balance_ws *w = calloc(1, sizeof *w);
    if (!w)
        return NULL;
    w->max_s = max_s;
    w->intensity = malloc(max_s * sizeof(double));
    w->trace = malloc(max_s * sizeof(double));
    if (!w->intensity || !w->trace) {
        cpd_balance_free(w);
        return NULL;
    }
    return w;
}

void cpd_balance_free(cpd_balance_ws *w)
{
    if (!w)
        return;
    free(w->intensity);
    free(w->trace);
    free(w);
}

typedef struct {
    cpd_balance_ws *w;
    const cpd_balance_params *bp;
    const cpd_protocol *p;
    double target;
    int lowest; /* solve for the lowest balance of the session, not the end balance */
    int rc;     /* first error met inside the GSL callback */
} solve_ctx;

/* One simulation with the unknown at x: the balance solved for (the end balance, or the lowest of
 * the whole session in lowest mode) and the lowest balance before the last second. */
typedef struct {
    double end;
    double min_before; /* w_prime when the protocol is one second long */
} probe;

static int simulate(solve_ctx *c, double x, probe *out)
{
    size_t n = c->p->total_s;
    int rc = cpd_protocol_expand(c->p, c->bp->cp, x, c->w->intensity, n);
    if (rc)
        return rc;
    cpd_balance_result r;
    rc = cpd_balance_run(c->bp, c->w->intensity, n, c->w->trace, &r);
    if (rc)
        return rc;
    double m = c->bp->w_prime;
    for (size_t i = 0; i + 1 < n; i++)
        if (c->w->trace[i] < m)
            m = c->w->trace[i];
    /* lowest mode: the lowest second, last one included; then end - target <= min_before - target,
     * so h below is that lowest balance minus the target */
    out->end = c->lowest && m < r.end_balance ? m : r.end_balance;
    out->min_before = m;
    return CPD_OK;
}

static double h_of(const probe *pr, double target)
{
    double a = pr->end - target;
    return a < pr->min_before ? a : pr->min_before;
}

static double h_gsl(double x, void *params)
{
    solve_ctx *c = params;
    probe pr;
    int rc = simulate(c, x, &pr);
    if (rc) {
        if (!c->rc)
            c->rc = rc;
        return 0.0;
    }
    return h_of(&pr, c->target);
}

static int accepted(const probe *pr, double target, double tol)
{
    return pr->min_before > 0 && fabs(pr->end - target) <= tol;
}

static void take(cpd_balance_solution *sol, double x, const probe *pr)
{
    sol->intensity = x;
    sol->has_end_balance = 1;
    sol->end_balance = pr->end;
}

/* No acceptable answer where h changes sign between safe (h > 0) and other (h <= 0): either the
 * protocol fails before its end on the other side (the target lies beyond failure), or it ends
 * below the target there without failing (the end balance jumps across the target). */
static int refuse(cpd_balance_solution *sol, const probe *safe, const probe *other)
{
    sol->has_end_balance = 1;
    sol->end_balance = safe->end;
    sol->reason = other->min_before <= 0 ? CPD_SOLVE_THROUGH_FAILURE : CPD_SOLVE_UNREACHABLE;
    return CPD_ENODATA;
}

/* Brent on [a, b] with h(a) > 0 >= h(b), h continuous there. */
static int brent(solve_ctx *c, double a, double b, double tol, cpd_balance_solution *sol)
{
    int rc = CPD_OK;
    gsl_root_fsolver *s = gsl_root_fsolver_alloc(gsl_root_fsolver_brent);
    if (!s)
        return CPD_ENOMEM;
    gsl_function F = {.function = h_gsl, .params = c};
    if (gsl_root_fsolver_set(s, &F, a, b) != GSL_SUCCESS || c->rc) {
        rc = c->rc ? c->rc : CPD_EINTERNAL;
        goto done;
    }
    int status = GSL_CONTINUE;
    while (status == GSL_CONTINUE && sol->iter < SOLVE_MAX_ITER) {
        sol->iter++;
        if (gsl_root_fsolver_iterate(s) != GSL_SUCCESS || c->rc) {
            rc = c->rc ? c->rc : CPD_ENOCONV;
            goto done;
        }
        status = gsl_root_test_interval(gsl_root_fsolver_x_lower(s), gsl_root_fsolver_x_upper(s), 0.0, 1e-13);
    }
    if (status != GSL_SUCCESS) {
        rc = CPD_ENOCONV;
        goto done;
    }
    /* The end of the final bracket where h >= 0 neither fails nor ends below the target, so it is
     * preferred; then the root estimate and the other end. */
    const double cand[3] = {gsl_root_fsolver_x_lower(s), gsl_root_fsolver_root(s), gsl_root_fsolver_x_upper(s)};
    probe pr[3];
    for (int i = 0; i < 3; i++) {
        rc = simulate(c, cand[i], &pr[i]);
        if (rc)
            goto done;
    }
    int order[3] = {0, 1, 2};
    if (h_of(&pr[2], c->target) > h_of(&pr[0], c->target)) {
        order[0] = 2;
        order[2] = 0;
    }
    for (int i = 0; i < 3; i++)
        if (accepted(&pr[order[i]], c->target, tol)) {
            take(sol, cand[order[i]], &pr[order[i]]);
            goto done;
        }
    rc = refuse(sol, &pr[order[0]], &pr[order[2]]);
done:
    gsl_root_fsolver_free(s);
    return rc;
}

static int solve(cpd_balance_ws *w, const cpd_balance_params *bp, cpd_protocol_modality modality,
                 const cpd_protocol *p, double finish_pct, int lowest, cpd_balance_solution *sol)
{
    int rc = CPD_OK;
    if (!w || !bp || !p || !sol || !p->has_unknown || p->total_s > w->max_s || p->total_s == 0)
        return CPD_EUSAGE;
    if (!(isfinite(finish_pct) && finish_pct >= 0 && finish_pct < 100))
        return CPD_EUSAGE;
    if (!(isfinite(bp->cp) && bp->cp > 0 && isfinite(bp->w_prime) && bp->w_prime > 0) ||
        !cpd_balance_model_name(bp->model))
        return CPD_EUSAGE;
    if (modality == CPD_PROTOCOL_UNSPECIFIED)
        modality = p->modality;
    if (modality == CPD_PROTOCOL_UNSPECIFIED ||
        (p->modality != CPD_PROTOCOL_UNSPECIFIED && p->modality != modality))
        return CPD_EUSAGE;

    memset(sol, 0, sizeof *sol);
    sol->reason = CPD_SOLVE_OK;
    sol->target_balance = finish_pct / 100.0 * bp->w_prime;
    sol->lowest = modality == CPD_PROTOCOL_SPEED ? CPD_RANGE_SPEED.lo : CPD_RANGE_POWER.lo;
    sol->highest = bp->cp + 2.0 * bp->w_prime;
    const double tol = SOLVE_TOL_FRAC * bp->w_prime, target = sol->target_balance;
    solve_ctx c = {.w = w, .bp = bp, .p = p, .target = target, .lowest = lowest};

    probe lo, hi;
    rc = simulate(&c, sol->lowest, &lo);
    if (rc)
        return rc;
    if (lo.min_before <= 0) {
        sol->reason = CPD_SOLVE_FAILS_AT_LOWEST;
        return CPD_ENODATA;
    }
    if (lo.end < target - tol) {
        sol->reason = CPD_SOLVE_BELOW_AT_LOWEST;
        sol->has_end_balance = 1;
        sol->end_balance = lo.end;
        return CPD_ENODATA;
    }
    if (accepted(&lo, target, tol)) {
        take(sol, sol->lowest, &lo);
        return CPD_OK;
    }
    /* h(lowest) > 0 now; h(highest) <= 0 by the choice of the upper end (balance.h) */
    rc = simulate(&c, sol->highest, &hi);
    if (rc)
        return rc;
    if (h_of(&hi, target) > 0)
        return CPD_EINTERNAL;

    /* h is continuous except at x = CP, where the integral model's D_CP gains or loses the
     * unknown's seconds; so [lowest, CP) and [CP, highest] are searched as separate pieces, the
     * lower one first when it changes sign. */
    double a = sol->lowest, b = sol->highest;
    if (sol->lowest < bp->cp) {
        double below = nextafter(bp->cp, 0.0);
        probe pb, pc;
        rc = simulate(&c, below, &pb);
        if (rc)
            return rc;
        if (h_of(&pb, target) <= 0) {
            b = below;
        } else {
            rc = simulate(&c, bp->cp, &pc);
            if (rc)
                return rc;
            if (h_of(&pc, target) <= 0) {
                if (accepted(&pb, target, tol)) {
                    take(sol, below, &pb);
                    return CPD_OK;
                }
                if (accepted(&pc, target, tol)) {
                    take(sol, bp->cp, &pc);
                    return CPD_OK;
                }
                return refuse(sol, &pb, &pc);
            }
            a = bp->cp;
        }
    }
    return brent(&c, a, b, tol, sol);
}

int cpd_balance_solve(cpd_balance_ws *w, const cpd_balance_params *bp, cpd_protocol_modality modality,
                      const cpd_protocol *p, double finish_pct, cpd_balance_solution *sol)
{
    return solve(w, bp, modality, p, finish_pct, 0, sol);
}

int cpd_balance_solve_lowest(cpd_balance_ws *w, const cpd_balance_params *bp, cpd_protocol_modality modality,
                             const cpd_protocol *p, double lowest_pct, cpd_balance_solution *sol)
{
    if (!(lowest_pct > 0))
        return CPD_EUSAGE;
    return solve(w, bp, modality, p, lowest_pct, 1, sol);
}
