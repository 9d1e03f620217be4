"""graded_ref.py: numpy reference values of a graded test file (step test or ramp), computed
independently of cpdomain for the CLI tests.
usage: graded_ref.py FILE.csv ONSET_S GET_VO2|none
Prints JSON: vo2peak (highest trailing 30-s mean of VO2 interpolated to 1 s over the exercise, the
last stage included), peak_power (highest recorded power of the exercise), end (last sample at the
highest power), stages [[power, mean VO2 of the final 30 s, mean VCO2 or null]], gain and its basis
(least squares of stage VO2 on power: stages below the GET, else stages at or below 80 % of peak).
Breath outliers: 4 SD from the mean of +-10 neighbours (Lamarra et al. 1987 convention), VO2, VCO2
and VE, up to three passes, as documented in gx.h/ramp.h."""
import json
import sys
import numpy as np

path, onset, get = sys.argv[1], float(sys.argv[2]), sys.argv[3]
raw = np.genfromtxt(path, delimiter=",", names=True, dtype=float, missing_values="", filling_values=np.nan)
cols = raw.dtype.names
d = {c: np.array(raw[c], dtype=float) for c in cols}


def outliers(x, half=10, k=4.0):
    n = len(x)
    flag = np.zeros(n, bool)
    for i in range(n):
        lo, hi = max(0, i - half), min(n - 1, i + half)
        nb = np.concatenate([x[lo:i], x[i + 1:hi + 1]])
        if len(nb) < 3:
            continue
        sd = nb.std(ddof=1)
        if sd > 0 and abs(x[i] - nb.mean()) > k * sd:
            flag[i] = True
    return flag


keep = np.ones(len(d["time_s"]), bool)
for p in range(3):
    cur = {c: v[keep] for c, v in d.items()}
    drop = np.zeros(keep.sum(), bool)
    for c in ("vo2_ml_min", "vco2_ml_min", "ve_l_min"):
        if c in cur:
            drop |= outliers(cur[c])
    if not drop.any():
        break
    idx = np.flatnonzero(keep)
    keep[idx[drop]] = False
s = {c: v[keep] for c, v in d.items()}
t = s["time_s"] - onset
pw = s["power_w"]
ex = t >= 0
pmax = pw[ex].max()
end = t[ex & (pw == pmax)].max()
g = np.arange(np.ceil(t[0]), t[-1] + 1e-9, 1.0)
v = np.interp(g, t, s["vo2_ml_min"])
vc = np.interp(g, t, s["vco2_ml_min"]) if "vco2_ml_min" in s else None
i0 = int(np.argmax(g >= 0))
i1 = int(np.flatnonzero(g <= end)[-1])
peak = max(v[i - 29:i + 1].mean() for i in range(i0 + 29, i1 + 1))
stages = []
for p in sorted(set(pw[ex & (t <= end)])):
    ts = t[ex & (t <= end) & (pw == p)]
    lo_t, hi_t = ts.min(), ts.max()
    if hi_t - lo_t < 15:
        continue
    w = (g > max(hi_t - 30, lo_t)) & (g <= hi_t)
    stages.append([float(p), float(v[w].mean()), None if vc is None else float(vc[w].mean())])
gain, basis, n_gain = None, None, 0
if len(stages) >= 3:
    st = np.array([[a, b] for a, b, _ in stages])
    sel = None
    if get != "none":
        sel = st[:, 1] < float(get)
        basis = "below the GET"
    if sel is None or sel.sum() < 3:
        sel = st[:, 0] <= 0.8 * pmax
        basis = "below 80 % of peak (no GET)"
    gain = float(np.polyfit(st[sel, 0], st[sel, 1], 1)[0])
    n_gain = int(sel.sum())
print(json.dumps({"vo2peak": float(peak), "peak_power": float(pmax), "end": float(end), "stages": stages,
                  "gain": gain, "basis": basis, "n_gain": n_gain}))
