# linefit.py: reference straight line by least squares with numpy.polyfit (Debian python3-numpy).
# Input: lines "x y". Output: slope and intercept.
import sys
import numpy as np
d = np.loadtxt(sys.argv[1], ndmin=2)
s, b = np.polyfit(d[:, 0], d[:, 1], 1)
print("%.17g %.17g" % (s, b))
