"""season_numpy.py: the season's mean-maximal power curve of a folder of session CSV files in plain
numpy, the benchmark's yardstick (make bench, tests/bench_sessions.c). Written independently of the
C code from the rules of SPEC.md "Sessions": values above 2500 W are spikes and dropped; on the
1-s grid from the first sample a gap of up to 5 missing seconds is filled by linear interpolation,
a longer one splits the session; every window of every segment for every grid duration (each
second to 3600 s, then every 60 s), the best mean kept, and the season takes the best per duration.

Usage: season_numpy.py FOLDER [OUT]   prints the seconds the work took, wall clock then CPU; OUT
receives "duration value" lines.
"""
import os
import sys
import time

import numpy as np
sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "ref"))
from mmp_grid import grid  # noqa: E402 (the grid of SPEC.md, shared by the references)


def segments(t, v, limit=2500.0):
    keep = v <= limit
    t, v = t[keep] - t[0], v[keep]
    cut = np.flatnonzero(np.diff(t) > 6) + 1
    out = []
    for a, b in zip(np.r_[0, cut], np.r_[cut, len(t)]):
        g = np.arange(t[a], t[b - 1] + 1)
        out.append(np.interp(g, t[a:b], v[a:b]))
    return out


def curve(segs):
    longest = max(len(x) for x in segs)
    best = np.zeros(len(grid(longest)))
    for x in segs:
        c = np.concatenate([[0.0], np.cumsum(x)])
        for i, d in enumerate(grid(len(x))):
            m = (c[d:] - c[:-d]).max() / d
            if m > best[i]:
                best[i] = m
    return best


def main():
    t0, c0 = time.perf_counter(), time.process_time()
    folder = sys.argv[1]
    season = np.zeros(0)
    for name in sorted(os.listdir(folder)):
        if not name.endswith(".csv"):
            continue
        a = np.loadtxt(os.path.join(folder, name), delimiter=",", skiprows=1, usecols=(0, 1))
        c = curve(segments(a[:, 0], a[:, 1]))
        if len(c) > len(season):
            season = np.concatenate([season, np.zeros(len(c) - len(season))])
        season[: len(c)] = np.maximum(season[: len(c)], c)
    dt, dc = time.perf_counter() - t0, time.process_time() - c0
    if len(sys.argv) > 2:
        with open(sys.argv[2], "w") as f:
            for d, v in zip(grid(10 ** 9)[: len(season)], season):
                f.write(f"{d} {v!r}\n")
    print(f"{dt:.6f} {dc:.6f}")


main()
