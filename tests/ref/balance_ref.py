# balance_ref.py: reference W' balance, written from the published equations (not from the C code).
# Input: "cp w0", then the number of constant-intensity segments, then one "duration_s intensity"
# line per segment. Output, for each of differential, integral and elite in that order: the
# end-of-second balances, then min, the second of the first minimum, the end balance, and the
# first second with balance <= 0 (or null).
#
# differential: Skiba et al. 2015 Eur J Appl Physiol 115:703. Above CP W'bal falls at P - CP; below
#   CP dW'bal/dt = (W'0 - W'bal) * D_CP / W'0, solved in closed form over each constant segment:
#   W'bal(t) = W'0 - (W'0 - W'bal(start)) * exp(-D_CP * t / W'0).
# elite: the same closed form with tau = 2287.2 * D_CP**-0.688 (Bartram et al. 2018 Int J Sports
#   Physiol Perform 13:724): W'bal(t) = W'0 - (W'0 - W'bal(start)) * exp(-t / tau).
# integral: Skiba et al. 2012 Med Sci Sports Exerc 44:1526, W'bal(t) = W'0 - sum_u W'exp(u) *
#   exp(-(t - u) / tau), tau = 546 * exp(-0.01 * D_CP) + 316, D_CP the mean of CP - P over all
#   sub-CP seconds; the expenditure of second u is counted at its end (SPEC: 1-s steps) and the sum
#   is evaluated directly for every t (O(n^2)), with no decay when there is no sub-CP second.
import math
import sys

import numpy as np


def read(path):
    tok = open(path).read().split()
    cp, w0 = float(tok[0]), float(tok[1])
    nseg = int(tok[2])
    segs = [(int(tok[3 + 2 * i]), float(tok[4 + 2 * i])) for i in range(nseg)]
    return cp, w0, segs


def differential_family(cp, w0, segs, tau_of):
    out = []
    w = w0
    for dur, p in segs:
        start = w
        for t in range(1, dur + 1):
            if p > cp:
                w = start - (p - cp) * t
            elif p < cp:
                w = w0 - (w0 - start) * math.exp(-t / tau_of(cp - p))
            out.append(w)
        w = out[-1]
    return np.array(out)


def integral(cp, w0, segs):
    p = np.concatenate([np.full(d, v) for d, v in segs])
    sub = p < cp
    spent = np.where(p > cp, p - cp, 0.0)
    n = len(p)
    if sub.any():
        tau = 546.0 * math.exp(-0.01 * float(np.mean(cp - p[sub]))) + 316.0
        weight = np.exp(-np.arange(n) / tau)
    else:
        weight = np.ones(n)
    # seconds are numbered from 1; u <= t, weight index t - u
    return np.array([w0 - np.dot(spent[: t + 1], weight[t::-1]) for t in range(n)])


def summary(b):
    k = int(np.argmin(b))
    fail = np.nonzero(b <= 0)[0]
    tail = [repr(float(b[k])), str(k + 1), repr(float(b[-1])), str(int(fail[0]) + 1) if len(fail) else "null"]
    return " ".join(repr(float(v)) for v in b) + " " + " ".join(tail)


def main():
    cp, w0, segs = read(sys.argv[1])
    print(summary(differential_family(cp, w0, segs, lambda d: w0 / d)))
    print(summary(integral(cp, w0, segs)))
    print(summary(differential_family(cp, w0, segs, lambda d: 2287.2 * d ** -0.688)))


main()
