"""mrt_filter.py: reference MRT of a ramp without a baseline, by scipy.optimize.least_squares.
Input: first line p0 (intensity before onset); then lines 't p vo2' (1-s grid from onset).
Model: VO2 = a + G * Pf(t), Pf the intensity through a first-order filter of time constant tau
(trapezoidal input over each step), Pf(0) = p0. Prints tau and its SE."""
import sys
import numpy as np
from scipy.optimize import least_squares

rows = open(sys.argv[1]).read().split("\n")
p0 = float(rows[0])
d = np.array([[float(x) for x in r.split()] for r in rows[1:] if r.strip()])
t, p, v = d[:, 0], d[:, 1], d[:, 2]


def filt(tau):
    y = np.empty_like(p)
    y[0] = p0
    for i in range(1, len(p)):
        y[i] = y[i - 1] + (1 - np.exp(-(t[i] - t[i - 1]) / tau)) * (0.5 * (p[i] + p[i - 1]) - y[i - 1])
    return y


def res(b):
    return b[0] + b[1] * filt(b[2]) - v


best = None
for tau in np.arange(5, 181, 5):
    A = np.vstack([np.ones_like(t), filt(tau)]).T
    c, r, *_ = np.linalg.lstsq(A, v, rcond=None)
    rss = float(np.sum((A @ c - v) ** 2))
    if best is None or rss < best[0]:
        best = (rss, c[0], c[1], tau)
f = least_squares(res, [best[1], best[2], best[3]], xtol=1e-14, ftol=1e-14, gtol=1e-14)
J = f.jac
s2 = np.sum(f.fun ** 2) / (len(v) - 3)
cov = np.linalg.inv(J.T @ J) * s2
print(f.x[2], np.sqrt(cov[2, 2]))
