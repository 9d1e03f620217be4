"""mrt_filter.py: reference MRT of a ramp without a baseline, by scipy.optimize.least_squares.
Input: first line p0 (intensity before onset) or "free" (p0 fitted); then lines 't p vo2' (1-s grid
from onset).
Model: VO2 = a + G * Pf(t), Pf the intensity through two first-order stages of time constant tau/2
each (trapezoidal input over each step), both starting at p0. Prints tau and its SE."""
import sys
import numpy as np
from scipy.optimize import least_squares

rows = open(sys.argv[1]).read().split("\n")
free = rows[0].strip() == "free"
p0 = None if free else float(rows[0])
d = np.array([[float(x) for x in r.split()] for r in rows[1:] if r.strip()])
t, p, v = d[:, 0], d[:, 1], d[:, 2]


def filt(tau, q0):
    y = np.empty_like(p)
    y1 = y2 = q0
    y[0] = q0
    for i in range(1, len(p)):
        k = 1 - np.exp(-2 * (t[i] - t[i - 1]) / tau)
        y1n = y1 + k * (0.5 * (p[i] + p[i - 1]) - y1)
        y2 = y2 + k * (0.5 * (y1 + y1n) - y2)
        y1 = y1n
        y[i] = y2
    return y


def res(b):
    return b[0] + b[1] * filt(b[2], b[3] if free else p0) - v


best = None
for tau in np.arange(5, 181, 5):
    A = np.vstack([np.ones_like(t), filt(tau, p[0] if free else p0)]).T
    c, r, *_ = np.linalg.lstsq(A, v, rcond=None)
    rss = float(np.sum((A @ c - v) ** 2))
    if best is None or rss < best[0]:
        best = (rss, c[0], c[1], tau)
b0 = [best[1], best[2], best[3]] + ([p[0]] if free else [])
f = least_squares(res, b0, xtol=1e-14, ftol=1e-14, gtol=1e-14)
J = f.jac
s2 = np.sum(f.fun ** 2) / (len(v) - len(b0))
cov = np.linalg.inv(J.T @ J) * s2
print(f.x[2], np.sqrt(cov[2, 2]))
