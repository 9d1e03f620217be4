"""pd_scipy_bench.py: the four power-duration models fitted with scipy for the athletes of
tests/bench_pd.c, the yardstick of its ratio. A plain loop: scipy.optimize.curve_fit for the
hyperbolic (t = W'/(P - CP)) and three-parameter (t = W'/(P - CP) - a, a = W'/(Pmax - CP)) models,
least squares on t, started from the linear-total answer; numpy.polyfit for the two linear models.

Input: one athlete per line, "P1 .. Pn t1 .. tn". Output: the seconds the loop took, then one line
per athlete "CP W' CP3 W'3 Pmax3" (nan for a fit that failed).
"""
import sys
import time
import warnings

import numpy as np
from scipy.optimize import curve_fit


def hyp(P, cp, w):
    return w / (P - cp)


def three(P, cp, w, a):
    return w / (P - cp) - a


def main():
    rows = [list(map(float, l.split())) for l in open(sys.argv[1]) if l.strip()]
    out = []
    warnings.simplefilter("ignore")
    t0 = time.perf_counter()
    for r in rows:
        n = len(r) // 2
        P, t = np.array(r[:n]), np.array(r[n:])
        wk, wp = np.polyfit(t, P * t, 1)  # linear total: W = CP t + W'
        np.polyfit(1 / t, P, 1)  # linear inverse: P = W' / t + CP
        cp0 = min(wk, P.min() - 1)
        try:
            (cp, w), _ = curve_fit(hyp, P, t, p0=(cp0, wp), xtol=1e-14, ftol=1e-14, gtol=1e-14, maxfev=10000)
        except RuntimeError:
            cp, w = float("nan"), float("nan")
        try:
            a0 = w / (3 * (P.max() - cp))
            (c3, w3, a3), _ = curve_fit(three, P, t, p0=(cp, w, a0), xtol=1e-14, ftol=1e-14, gtol=1e-14, maxfev=10000)
            pm = c3 + w3 / a3
        except (RuntimeError, ValueError):
            c3 = w3 = pm = float("nan")
        out.append(f"{cp!r} {w!r} {c3!r} {w3!r} {pm!r}")
    dt = time.perf_counter() - t0
    print(f"{dt:.6f}")
    print("\n".join(out))


main()
