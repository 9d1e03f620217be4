"""gen_graded.py: invented graded exercise tests laid out as metabolic carts export them, for the CLI
tests of step tests and ramps (test-only; no real person's data).

usage: gen_graded.py OUT.csv [--protocol steps|ramp] [--layout negative|shifted] [--vo2-only]
                     [--recovery S] [--hr-artefacts] [--no-baseline] [--seed N] [--step-s S]

Model: VO2 = base + G * P_f(t), P_f the recorded power through a first-order filter (tau 30 s) after a
10-s delay; VCO2 piecewise linear in VO2 (break at the GET); VE linear in VCO2 with a steeper slope
above the RCP. Breaths every 2-3 s; breath noise 40 mL/min. Baseline 180 s at 20 W before the onset
(times negative, or the file starting at 0 with the onset at 180 s: --layout shifted). Steps: 3 min at
100 W, then +25 W every step_s up to exhaustion 40 s into the last stage; ramp: 30 W/min from 60 W.
A recovery at 40 W follows the end when asked. Prints nothing; the truth (onset, GET VO2) is in the
generator's constants below."""
import sys
import numpy as np

args = sys.argv[1:]
out = args[0]


def opt(name, default):
    return args[args.index(name) + 1] if name in args else default


protocol = opt("--protocol", "steps")
layout = opt("--layout", "negative")
recovery = float(opt("--recovery", "0"))
seed = int(opt("--seed", "11"))
step_s = float(opt("--step-s", "180"))
vo2_only = "--vo2-only" in args
hr_art = "--hr-artefacts" in args
no_base = "--no-baseline" in args
rng = np.random.default_rng(seed)

BASE_W, GAIN, VO2_0, TAU, DELAY = 20.0, 10.0, 700.0, 30.0, 10.0
GET_VO2, RCP_VO2 = 2400.0, 3300.0
pre = 0.0 if no_base else 180.0

if protocol == "steps":
    first_w, inc = 100.0, 25.0
    n_full = 9
    exercise = 180.0 + (n_full - 1) * step_s + 40.0  # warm-up stage of 3 min, then step_s stages, 40 s into the last

    def power(u):
        if u < 0 or u > exercise:
            return BASE_W if u < 0 else 40.0
        if u < 180.0:
            return first_w
        return first_w + inc * (1 + int((u - 180.0) // step_s))
else:
    exercise = 660.0

    def power(u):
        if u < 0 or u > exercise:
            return BASE_W if u < 0 else 40.0
        return 60.0 + 30.0 * u / 60.0

# the noise-free response on a fine grid (0.1 s)
dt = 0.1
tt = np.arange(-pre - 5, exercise + recovery + 5, dt)
pf = np.empty_like(tt)
y = BASE_W
for i, u in enumerate(tt):
    y += (1 - np.exp(-dt / TAU)) * (power(u - DELAY) - y)
    pf[i] = y
vo2_true = VO2_0 + GAIN * (pf - BASE_W)

t = []
u = -pre + rng.uniform(0, 2)
while u <= exercise + recovery:
    t.append(u)
    u += rng.uniform(2.0, 3.0)
t = np.array(t)
v = np.interp(t, tt, vo2_true) + 40.0 * rng.standard_normal(len(t))
c = 0.85 * VO2_0 + 0.95 * (v - VO2_0) + np.where(v > GET_VO2, 0.4 * (v - GET_VO2), 0) + 15 * rng.standard_normal(len(t))
ve = 3 + 25 * c / 1000 + np.where(v > RCP_VO2, 20 * (v - RCP_VO2) / 1000, 0) + 0.5 * rng.standard_normal(len(t))
hr = 80 + (0.45 if protocol == "steps" else 0.3) * (np.interp(t - 25, tt, pf) - BASE_W) + rng.standard_normal(len(t))
p = np.array([power(x) for x in t])

shift = 0.0 if layout == "negative" else pre
with open(out, "w") as f:
    f.write("time_s,vo2_ml_min" + ("" if vo2_only else ",vco2_ml_min,ve_l_min") + ",hr_bpm,power_w\n")
    for i in range(len(t)):
        h = "%.0f" % hr[i]
        if hr_art and i in (40, 41, 200, 333):
            h = ["0", "312", "", "28"][[40, 41, 200, 333].index(i)]
        row = ["%.2f" % (t[i] + shift), "%.1f" % v[i]]
        if not vo2_only:
            row += ["%.1f" % c[i], "%.2f" % ve[i]]
        row += [h, "%g" % p[i]]
        f.write(",".join(row) + "\n")
