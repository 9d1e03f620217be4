# twoseg.py: independent two-segment regression with numpy (Debian python3-numpy).
# Input: first line "min_seg", then lines "x y" in any order. The points are sorted by x (stable),
# every split with at least min_seg points per side is tried, each side gets its own OLS line
# (numpy.polyfit), the split with the least pooled RSS wins (the first on ties).
# Output: split s1 b1 s2 b2 x_cross.
import sys
import numpy as np

with open(sys.argv[1]) as f:
    ms = int(f.readline())
    d = np.loadtxt(f, ndmin=2)
o = np.argsort(d[:, 0], kind="stable")
x, y = d[o, 0], d[o, 1]
n = len(x)
best = None
for k in range(ms, n - ms + 1):
    p1 = np.polyfit(x[:k], y[:k], 1)
    p2 = np.polyfit(x[k:], y[k:], 1)
    rss = np.sum((np.polyval(p1, x[:k]) - y[:k]) ** 2) + np.sum((np.polyval(p2, x[k:]) - y[k:]) ** 2)
    if best is None or rss < best[0]:
        best = (rss, k, p1, p2)
rss, k, p1, p2 = best
xc = (p2[1] - p1[1]) / (p1[0] - p2[0])
print("%d %.17g %.17g %.17g %.17g %.17g" % (k, p1[0], p1[1], p2[0], p2[1], xc))
