# biexp.py: reference bi-exponential VO2 fit with independent delays (Barstow & Mole 1991) by
# scipy.optimize.curve_fit (Debian python3-scipy), baseline held fixed.
# Input: line 1 the fixed baseline; line 2 the start A1 TD1 tau1 A2 TD2 tau2; then lines "t vo2".
# Output: the six estimates, then their standard errors from s^2 (J'J)^-1 with J evaluated at the
# optimum (curve_fit's own pcov comes from MINPACK's last factorisation, which may belong to the
# previous iterate and then differs at ~1e-6).
import sys
import numpy as np
from scipy.optimize import curve_fit

with open(sys.argv[1]) as f:
    base = float(f.readline())
    p0 = [float(v) for v in f.readline().split()]
    d = np.loadtxt(f, ndmin=2)
t, y = d[:, 0], d[:, 1]


def comp(a, td, tau):
    on = t >= td
    x = np.where(on, (t - td) / tau, 0.0)
    return np.where(on, -a * np.expm1(-x), 0.0), on, x


def model(_, a1, td1, tau1, a2, td2, tau2):
    return base + comp(a1, td1, tau1)[0] + comp(a2, td2, tau2)[0]


def jac(_, a1, td1, tau1, a2, td2, tau2):
    cols = []
    for a, td, tau in ((a1, td1, tau1), (a2, td2, tau2)):
        _, on, x = comp(a, td, tau)
        e = np.exp(-x)
        cols += [np.where(on, -np.expm1(-x), 0.0), np.where(on, -a * e / tau, 0.0),
                 np.where(on, -a * e * x / tau, 0.0)]
    return np.column_stack(cols)


popt, _ = curve_fit(model, t, y, p0=p0, jac=jac, ftol=1e-12, xtol=1e-12, gtol=1e-12, maxfev=100000)
J = jac(t, *popt)
r = y - model(t, *popt)
s2 = r @ r / (len(t) - len(popt))
cov = s2 * np.linalg.inv(J.T @ J)
print(" ".join("%.17g" % v for v in popt))
print(" ".join("%.17g" % v for v in np.sqrt(np.diag(cov))))
