"""mmp_grid.py: the duration grid of the mean-maximal curve as SPEC.md states it, shared by the
reference scripts: every whole second from 1 s to 3600 s, then every 60 s, up to the longest."""


def grid(longest):
    d = list(range(1, min(longest, 3600) + 1))
    k = 3660
    while k <= longest:
        d.append(k)
        k += 60
    return d
