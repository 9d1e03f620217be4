"""mmp_exact.py: exact brute-force mean-maximal curves for test_mmp, written independently of the C code.

Input: blocks "segment START SCALE" followed by one integer count per line (the value is COUNT/SCALE).
For every grid duration (1..3600 s, then every 60 s) every window of every segment is summed in
numpy's int64 (exact), numpy.argmax takes the first start of the largest sum, and the mean is the
exact fraction SUM/(SCALE*d) rounded once by Python's int true division (correctly rounded).
Among segments the earlier keeps an equal mean. Output: "N" then N lines "duration mean start".
"""
import sys

import numpy as np
from mmp_grid import grid


def main():
    segs = []
    for line in open(sys.argv[1]):
        f = line.split()
        if not f:
            continue
        if f[0] == "segment":
            segs.append((int(f[1]), int(f[2]), []))
        else:
            segs[-1][2].append(int(f[0]))
    sums = [(s0, sc, np.concatenate([[0], np.cumsum(np.array(q, dtype=np.int64))])) for s0, sc, q in segs]
    longest = max(len(q) for _, _, q in segs)
    g = grid(longest)
    print(len(g))
    for d in g:
        best, at = None, None
        for s0, sc, c in sums:
            if len(c) - 1 < d:
                continue
            w = c[d:] - c[:-d]
            i = int(np.argmax(w))
            m = int(w[i]) / (sc * d)
            if best is None or m > best:
                best, at = m, s0 + i
        print(d, repr(best), at)


main()
