"""session_ref.py: brute-force references for tests/cli/cli_sessions.sh, written from SPEC.md's
session rules and not from the C code.

  best DURATION FILE...          for each file, the best mean value over DURATION whole seconds,
                                 then the best over all files: "file value" lines and "best file value"
  balance CP WPRIME FILE         the differential W' balance (Skiba et al. 2015 Eur J Appl Physiol
                                 115:703) on the file's 1-s grid, gaps longer than 5 s at 0:
                                 "min min_at_s end n"

Gap rules (SPEC.md, Sessions): samples are on whole seconds; a value above the spike limit (2500 W,
or 12 m/s for speed_m_s files) is dropped like a missing sample; between two kept samples up to
6 s apart (at most 5 missing seconds) the missing seconds are filled linearly; a longer gap splits
the session and no effort spans it. Recorded zeros are real zeros.
"""
import sys

import numpy as np


def load(path):
    with open(path) as f:
        head = f.readline().strip().lower().split(",")
    data = np.loadtxt(path, delimiter=",", skiprows=1, ndmin=2)
    t = data[:, head.index("time_s")]
    if "power_w" in head:
        v, limit = data[:, head.index("power_w")], 2500.0
    else:
        v, limit = data[:, head.index("speed_m_s")], 12.0
    keep = v <= limit
    return t[keep], v[keep]


def segments(t, v):
    """Runs of 1-Hz values, each as (start second from the first kept sample, values)."""
    out, start, vals = [], t[0], [v[0]]
    for i in range(1, len(t)):
        gap = t[i] - t[i - 1]
        if gap > 6:
            out.append((start, np.array(vals)))
            start, vals = t[i], [v[i]]
            continue
        for k in range(1, int(round(gap))):
            vals.append(v[i - 1] + (v[i] - v[i - 1]) * k / gap)
        vals.append(v[i])
    out.append((start, np.array(vals)))
    return out


def best(path, d):
    t, v = load(path)
    top = -1.0
    for _, x in segments(t, v):
        if len(x) < d:
            continue
        c = np.concatenate(([0.0], np.cumsum(x)))
        top = max(top, float(np.max(c[d:] - c[:-d]) / d))
    return top


def balance(cp, w0, path):
    t, v = load(path)
    n = int(round(t[-1] - t[0])) + 1
    grid = np.zeros(n)
    for start, x in segments(t, v):
        s = int(round(start - t[0]))
        grid[s:s + len(x)] = x
    b, lo, lo_at = w0, w0, 0
    for k, p in enumerate(grid):
        if p > cp:
            b -= p - cp
        else:
            b = w0 - (w0 - b) * np.exp(-(cp - p) / w0)
        if b < lo:
            lo, lo_at = b, k + 1
    return lo, lo_at, b, n


def main():
    if sys.argv[1] == "best":
        d = int(sys.argv[2])
        top, at = -1.0, None
        for p in sys.argv[3:]:
            x = best(p, d)
            print(p, repr(x))
            if x > top:
                top, at = x, p
        print("best", at, repr(top))
    else:
        lo, lo_at, end, n = balance(float(sys.argv[2]), float(sys.argv[3]), sys.argv[4])
        print("min", repr(lo), lo_at, repr(end), n)


main()
