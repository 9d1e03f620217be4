# pfo_ref.py: reference peak fat oxidation (Achten et al. 2002 method) with numpy (Debian python3-numpy).
# Input: first line "vo2peak fat_vo2 fat_vco2" (fat g/min = fat_vo2 VO2 - fat_vco2 VCO2, L/min);
# then lines "power vo2 vco2" (mL/min). Fat is 0 above RER 1.00 and floored at 0.
# Output: c0 c1 c2 c3 (ascending) peak_pct peak_g_min zone_lo zone_hi peak_power
import sys
import numpy as np
rows = [l.split() for l in open(sys.argv[1]) if l.strip()]
vo2peak, fo, fc = map(float, rows[0])
d = np.array([[float(v) for v in r] for r in rows[1:]])
p, vo2, vco2 = d[:, 0], d[:, 1] / 1000.0, d[:, 2] / 1000.0
rer = vco2 / vo2
fat = np.where(rer > 1.0, 0.0, np.maximum(0.0, fo * vo2 - fc * vco2))
x = 100.0 * vo2 / (vo2peak / 1000.0)
c = np.polyfit(x, fat, 3)  # descending
lo, hi = x.min(), x.max()
cand = [lo, hi] + [r.real for r in np.roots(np.polyder(c)) if abs(r.imag) < 1e-12 and lo <= r.real <= hi]
xp = max(cand, key=lambda v: np.polyval(c, v))
yp = np.polyval(c, xp)
g = np.linspace(lo, hi, 2000001)
inz = np.polyval(c, g) >= 0.9 * yp
# the contiguous run containing the peak
k = int(np.argmin(abs(g - xp)))
a = k
while a > 0 and inz[a - 1]:
    a -= 1
b = k
while b < len(g) - 1 and inz[b + 1]:
    b += 1
lp = np.polyfit(x, p, 1)
print(" ".join("%.17g" % v for v in list(c[::-1]) + [xp, yp, g[a], g[b], np.polyval(lp, xp)]))
