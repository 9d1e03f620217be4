# dmax.py: reference Dmax and modified Dmax with numpy (Debian python3-numpy).
# Input: lines "x lactate". Cubic by least squares (numpy.polynomial.polynomial.polyfit); Dmax is the
# x in [first, last] where the cubic lies farthest below the line through the first and last measured
# points (Cheng et al. 1992), found among the real roots of La'(x) - slope (numpy.roots); modified
# Dmax starts the line at the point before the first rise > 0.4 mmol/L (Bishop et al. 1998).
# Output: c0 c1 c2 c3 dmax_x dmod_x (null when absent).
import sys
import numpy as np

d = np.loadtxt(sys.argv[1], ndmin=2)
x, y = d[:, 0], d[:, 1]
c = np.polynomial.polynomial.polyfit(x, y, 3)
cub = np.polynomial.polynomial.Polynomial(c)


def dmax(i0):
    xa, ya, xb, yb = x[i0], y[i0], x[-1], y[-1]
    m = (yb - ya) / (xb - xa)
    best = None
    for r in np.roots([3 * c[3], 2 * c[2], c[1] - m]):
        if abs(r.imag) > 1e-12 or not (xa <= r.real <= xb):
            continue
        dist = ya + m * (r.real - xa) - cub(r.real)
        if dist > 0 and (best is None or dist > best[0]):
            best = (dist, r.real)
    return "null" if best is None else "%.17g" % best[1]


rise = [i for i in range(1, len(y)) if y[i] - y[i - 1] > 0.4]
out = ["%.17g" % v for v in c] + [dmax(0), dmax(rise[0] - 1) if rise else "null"]
print(" ".join(out))
