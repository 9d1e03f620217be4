# polyfit.py: reference cubic fit with numpy.polynomial (Debian python3-numpy).
# Input: lines "x y". Output: the coefficients b0 b1 b2 b3 (ascending powers).
import sys
import numpy as np
d = np.loadtxt(sys.argv[1], ndmin=2)
c = np.polynomial.polynomial.polyfit(d[:, 0], d[:, 1], 3)
print(" ".join("%.17g" % v for v in c))
