"""mmp_ref.py: brute-force mean-maximal curves for test_mmp, written independently of the C code.

Input: blocks "session ID DATE LIMIT" followed by lines "TIME VALUE" (1-Hz integer times with gaps).
Cleaning as SPEC.md says: values above LIMIT are dropped; gaps of up to 5 missing seconds are filled
by linear interpolation (numpy.interp); a longer gap splits the session. For every grid duration
(1..3600 s, then every 60 s) every window of every segment is summed (cumulative sums in numpy's
80-bit long double) and the largest mean kept, first start on ties, first session on ties.
Output: per session "N" then N lines "duration value start"; then the season: "N" then N lines
"duration value start session date".
"""
import sys

import numpy as np
from mmp_grid import grid


def segments(t, v, limit):
    t0 = t[0]
    keep = v <= limit
    t, v = t[keep] - t0, v[keep]
    out = []
    a = 0
    for j in range(len(t)):
        if j + 1 == len(t) or t[j + 1] - t[j] > 6:
            g = np.arange(t[a], t[j] + 1, dtype=np.float64)
            out.append((int(t[a]), np.interp(g, t[a:j + 1], v[a:j + 1])))
            a = j + 1
    return out


def curve(segs):
    longest = max(len(x) for _, x in segs)
    sums = [(s0, np.concatenate([[0], np.cumsum(x.astype(np.longdouble))])) for s0, x in segs]
    res = []
    for d in grid(longest):
        best, at = None, None
        for s0, c in sums:
            if len(c) - 1 < d:
                continue
            w = c[d:] - c[:-d]
            i = int(np.argmax(w))
            m = w[i] / d
            if best is None or m > best:
                best, at = m, s0 + i
        res.append((d, float(best), at))
    return res


def main():
    blocks = []
    for line in open(sys.argv[1]):
        f = line.split()
        if not f:
            continue
        if f[0] == "session":
            blocks.append((int(f[1]), int(f[2]), float(f[3]), []))
        else:
            blocks[-1][3].append((float(f[0]), float(f[1])))
    season = []
    for sid, date, limit, rows in blocks:
        a = np.array(rows)
        c = curve(segments(a[:, 0], a[:, 1], limit))
        print(len(c))
        for d, m, s in c:
            print(d, repr(m), s)
        for i, (d, m, s) in enumerate(c):
            if i == len(season):
                season.append((d, m, s, sid, date))
            elif m > season[i][1]:
                season[i] = (d, m, s, sid, date)
    print(len(season))
    for d, m, s, sid, date in season:
        print(d, repr(m), s, sid, date)


main()
