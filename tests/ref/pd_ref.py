# pd_ref.py: reference power-duration fits with numpy/scipy (Debian python3-numpy, python3-scipy).
# Input: trial sets separated by lines starting "#", each set lines "intensity duration_s".
# Output per set, one line per model in the order hyperbolic, linear-total, linear-inverse,
# three-parameter:
#   cp w_prime p_max cp_se w_prime_se p_max_se rss
# p_max and p_max_se are "null" for the 2-parameter models; a line of seven "null" means the fit failed.
# Linear models: numpy.linalg.lstsq, Cov = s^2 (X'X)^-1. Nonlinear models: scipy.optimize.curve_fit
# (absolute_sigma=False, i.e. the same s^2 scaling of the covariance), ftol = xtol = gtol = 1e-12,
# analytic Jacobians, method "trf": with "lm" curve_fit takes the covariance from MINPACK's last
# Jacobian, which can lag the final point (seen here as 8e-8 relative in the SEs).
# A three-parameter fit whose Pmax is not above the highest intensity, or beyond 100 times it
# (the optimum drifting to Pmax -> infinity), is reported as failed.
import sys
import warnings
import numpy as np
from scipy.optimize import curve_fit

warnings.simplefilter("ignore")
TOL = dict(method="trf", ftol=1e-12, xtol=1e-12, gtol=1e-12, max_nfev=100000)


def ols(X, y):
    b, *_ = np.linalg.lstsq(X, y, rcond=None)
    r = y - X @ b
    rss = float(r @ r)
    cov = rss / (len(y) - X.shape[1]) * np.linalg.inv(X.T @ X)
    return b, np.sqrt(np.diag(cov)), rss


def hyp(p, cp, w):
    return w / (p - cp)


def three(p, cp, w, pmax):
    return w / (p - cp) - w / (pmax - cp)


# Analytic Jacobians: curve_fit's covariance then comes from the exact J, not from finite
# differences (which cost about 1e-7 relative in the standard errors).
def hyp_jac(p, cp, w):
    return np.column_stack([w / (p - cp) ** 2, 1 / (p - cp)])


def three_jac(p, cp, w, pmax):
    one = np.ones_like(p)
    return np.column_stack([w / (p - cp) ** 2 - w / (pmax - cp) ** 2 * one,
                            1 / (p - cp) - one / (pmax - cp), w / (pmax - cp) ** 2 * one])


def line(vals):
    print(" ".join("null" if v is None else "%.17g" % v for v in vals))


def fit_set(P, t):
    n = len(P)
    bt, set_, rsst = ols(np.column_stack([np.ones(n), t]), P * t)  # W = CP t + W'
    bi, sei, rssi = ols(np.column_stack([np.ones(n), 1 / t]), P)   # P = W'/t + CP
    # hyperbolic start: the linear-total answer, moved below the lowest power if needed
    cp0, w0 = bt[1], bt[0]
    if not (cp0 < P.min() and w0 > 0):
        cp0 = min(cp0, P.min() - 0.1 * (P.max() - P.min()))
        u = 1 / (P - cp0)
        w0 = float(u @ t / (u @ u))
    h = None
    try:
        ph, ch = curve_fit(hyp, P, t, p0=[cp0, w0], jac=hyp_jac, **TOL)
        rh = t - hyp(P, *ph)
        h = (ph, np.sqrt(np.diag(ch)), float(rh @ rh))
    except Exception:
        pass
    line([h[0][0], h[0][1], None, h[1][0], h[1][1], None, h[2]] if h else [None] * 7)
    line([bt[1], bt[0], None, set_[1], set_[0], None, rsst])
    line([bi[0], bi[1], None, sei[0], sei[1], None, rssi])
    th = None
    if h and n >= 4:
        cpa, wa = h[0]
        try:
            p3, c3 = curve_fit(three, P, t, p0=[cpa, wa, cpa + 3 * (P.max() - cpa)], jac=three_jac,
                               **TOL)
            r3 = t - three(P, *p3)
            se3 = np.sqrt(np.diag(c3))
            if np.all(np.isfinite(se3)) and P.max() < p3[2] < 100 * P.max():
                th = (p3, se3, float(r3 @ r3))
        except Exception:
            pass
    line([th[0][0], th[0][1], th[0][2], th[1][0], th[1][1], th[1][2], th[2]] if th else [None] * 7)


sets, cur = [], []
for raw in open(sys.argv[1]):
    raw = raw.strip()
    if raw.startswith("#"):
        if cur:
            sets.append(np.array(cur))
        cur = []
    elif raw:
        cur.append([float(v) for v in raw.split()])
if cur:
    sets.append(np.array(cur))
for d in sets:
    fit_set(d[:, 0], d[:, 1])
