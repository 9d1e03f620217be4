# cli_energy.sh: energy, substrate use and the oxygen deficit in 'bout show', and 'energy SESSION_ID',
# through the real binary on C01's demo tests: values recomputed in Python from the published
# coefficients and from the files themselves, and every bad input with its message and exit code.
. "$CPDOMAIN_TESTS/cli/lib.sh"
DEMO="$CPDOMAIN_TESTS/../demo/data"   # invented demo data (demo/TRUTH.md)
PY=/usr/bin/python3

expect 0 "init" init
expect 0 "athletes" athlete import "$DEMO/athletes.csv"
expect 0 "trials" trial import "$DEMO/trials.csv"
# C01's bouts in manifest order (ids 1-5 as in cli_bout.sh, then the supra-maximal bout 6), then the ramp (7)
i=0
for f in $(awk -F, '$1 == "bout" && $2 == "C01" { print $3 ":" $4 ":" $9 }' "$DEMO/manifest.csv"); do
    file=${f%%:*}; rest=${f#*:}; date=${rest%%:*}; power=${rest#*:}
    i=$((i + 1))
    expect 0 "bout $i ($file)" bout add C01 "$DEMO/$file" --date "$date" --power "$power" --baseline 20 --onset 180
done
[ "$i" -eq 6 ] && pass "C01 has six bouts in the manifest" || fail "C01 has $i bouts in the manifest, wanted 6"
expect 0 "C01 ramp" ramp add C01 "$DEMO/ramp_C01.csv" --date 2026-09-29 --rate 25 --start 30 --onset 180

# ---- substrate use at the steady state: Weir 1949 and Jeukendrup & Wallis 2005 recomputed ----
expect 0 "moderate bout" --json bout show 1
json_is 'd["energy"]["valid"], d["energy"]["steady_state"], d["energy"]["substrate_valid"], d["energy"]["equations"]' \
    "(True, True, True, 'Jeukendrup & Wallis 2005 (exercise at 50-75 % VO2max)')" "moderate bout: a valid steady state"
json_is 'abs(d["energy"]["energy_kcal_min"] - (3.941 * d["energy"]["vo2_ml_min"] + 1.106 * d["energy"]["vco2_ml_min"]) / 1000) < 1e-9' \
    True "EE = 3.941 VO2 + 1.106 VCO2 (Weir 1949)"
json_is 'abs(d["energy"]["cho_g_min"] - (4.210 * d["energy"]["vco2_ml_min"] - 2.962 * d["energy"]["vo2_ml_min"]) / 1000) < 1e-9' \
    True "CHO = 4.210 VCO2 - 2.962 VO2 (Jeukendrup & Wallis 2005)"
json_is 'abs(d["energy"]["fat_g_min"] - (1.695 * d["energy"]["vo2_ml_min"] - 1.701 * d["energy"]["vco2_ml_min"]) / 1000) < 1e-9' \
    True "fat = 1.695 VO2 - 1.701 VCO2 (Jeukendrup & Wallis 2005)"
# the last minute's means from the file itself (onset 180 s)
w0=$(json 'd["energy"]["window_s"][0]'); w1=$(json 'd["energy"]["window_s"][1]')
ref=$($PY -c "
import numpy as np
d = np.genfromtxt('$DEMO/bout_C01_1.csv', delimiter=',', names=True)
t = d['time_s'] - 180
m = (t >= $w0) & (t <= $w1)
print(d['vo2_ml_min'][m].mean(), d['vco2_ml_min'][m].mean())")
json_is "abs(d['energy']['vo2_ml_min'] - ${ref% *}) < 1e-9 and abs(d['energy']['vco2_ml_min'] - ${ref#* }) < 1e-9" True \
    "steady-state VO2 and VCO2 are the means of the last minute of the file (numpy)"
json_is 'abs(d["oxygen_deficit"]["deficit_ml"] - d["primary"]["amplitude_ml_min"] * d["primary"]["mrt_s"] / 60) < 1' True \
    "moderate bout: the deficit over 6 min equals amplitude x MRT (closed form of the mono-exponential)"
json_is 'd["aod"]' None "no accumulated deficit for a moderate bout"

# ---- heavy bout: the slow component's excess O2 against its closed form ----
expect 0 "heavy bout" --json bout show 2
json_is "$(cat <<'EOF'
(lambda b, T: abs(d["oxygen_deficit"]["slow_excess_ml"] - b["slow_asymptote_ml_min"] * ((T - b["slow_delay_s"]) - b["slow_tau_s"] * (1 - __import__("math").exp(-(T - b["slow_delay_s"]) / b["slow_tau_s"]))) / 60) < 1e-3)(d["fits"]["bi"], d["exercise_s"])
EOF
)" True "heavy bout: slow-component excess O2 = A2 ((T - TD2) - tau2 (1 - e^-(T-TD2)/tau2)) / 60"
json_is 'd["energy"]["substrate_valid"], d["energy"]["rer"] <= 1.0' "(True, True)" "heavy bout levelling off: rates valid"
expect 0 "heavy bout, human" bout show 2
out_has "slow component:" "human output names the slow component's excess O2"
out_has "Weir 1949" "human output names the energy equation"

# ---- severe bout: no steady state; not supra-maximal ----
expect 0 "severe bout" --json bout show 3
json_is 'd["energy"]["substrate_valid"], d["energy"]["substrate_note"].startswith("not valid"), d["energy"]["cho_g_min"]' \
    "(False, True, None)" "severe bout: rates 'not valid', no number"
json_is 'd["aod"]["valid"], "not supra-maximal" in d["aod"]["message"]' "(False, True)" "a bout near VO2peak is not supra-maximal"

# ---- the supra-maximal bout: accumulated O2 deficit (Medbo et al. 1988) ----
expect 0 "supra-maximal bout" --json bout show 6
json_is 'd["aod"]["valid"], d["aod"]["method"]' "(True, 'accumulated O2 deficit (Medbo et al. 1988)')" "AOD computed"
json_is 'abs(d["aod"]["demand_ml_min"] - (d["aod"]["line_intercept_ml_min"] + 340 * d["aod"]["line_slope_ml_min_w"])) < 1e-6' True \
    "demand extrapolated from the line at 340 W"
json_is 'abs(d["aod"]["aod_l"] - (d["aod"]["demand_l"] - d["aod"]["vo2_accumulated_l"])) < 1e-9' True "AOD = demand - accumulated VO2"
T=$(json 'd["exercise_s"]')
ref=$($PY -c "
import numpy as np
d = np.genfromtxt('$DEMO/bout_C01_6.csv', delimiter=',', names=True)
t, v = d['time_s'], d['vo2_ml_min']
a, b = 180.0, 180.0 + $T
m = (t > a) & (t < b)
tt = np.concatenate(([a], t[m], [b])); vv = np.concatenate(([np.interp(a, t, v)], v[m], [np.interp(b, t, v)]))
print(np.trapz(vv, tt) / 60 / 1000)")
json_is "abs(d['aod']['vo2_accumulated_l'] - $ref) < 1e-9" True "accumulated VO2 = trapezoid of the breaths (numpy.trapz)"
json_is 'abs(d["aod"]["aod_ml_kg"] - 1000 * d["aod"]["aod_l"] / 61.0) < 1e-6' True "AOD per kg with C01's 61.0 kg"
json_is 'd["aod"]["aod_ci95_l"][0] < d["aod"]["aod_l"] < d["aod"]["aod_ci95_l"][1], "Medbo" in d["aod"]["cautions"]' "(True, True)" \
    "an interval from the regression and the method's cautions"
json_is 'd["energy"]["valid"], "too short for a steady state" in d["energy"]["message"]' "(False, True)" \
    "a 2-min bout is too short for a steady state: no energy number"

# ---- bad input: missing VCO2, RER far outside, a bout too short ----
awk -F, 'BEGIN { OFS = "," } { $3 = ""; print }' "$DEMO/bout_C01_1.csv" | sed 's/,,/,/' >"$TMP/novco2.csv"
expect 0 "bout without VCO2" bout add C01 "$TMP/novco2.csv" --date 2026-11-10 --power 150 --baseline 20 --onset 180
expect 0 "bout without VCO2: show" bout show 8
out_has "no VCO2 column" "missing VCO2 explained"
if grep -q "^substrate" "$TMP/out"; then fail "no substrate line without VCO2"; else pass "no substrate line without VCO2"; fi
awk -F, 'BEGIN { OFS = "," } NR > 1 { $3 = sprintf("%.0f", $2 * 1.5) } { print }' "$DEMO/bout_C01_1.csv" >"$TMP/rer.csv"
expect 0 "bout with RER 1.5" bout add C01 "$TMP/rer.csv" --date 2026-11-11 --power 150 --baseline 20 --onset 180
expect 0 "bout with RER 1.5: show" --json bout show 9
json_is 'd["energy"]["valid"], "far outside" in d["energy"]["message"], "energy_kcal_min" in d["energy"]' "(False, True, False)" \
    "RER 1.50 far outside 0.7-1.2: a clear message and no number"
awk -F, 'NR == 1 || $1 <= 330' "$DEMO/bout_C01_1.csv" >"$TMP/short.csv"
expect 0 "a 150-s bout" bout add C01 "$TMP/short.csv" --date 2026-11-12 --power 150 --baseline 20 --onset 180
expect 0 "a 150-s bout: show" bout show 10
out_has "too short for a steady state" "short bout explained"
expect 0 "remove the bad bouts" bout remove 8
expect 0 "remove" bout remove 9
expect 0 "remove" bout remove 10

# ---- energy SESSION_ID on C01's heavy interval ride ----
expect 0 "C01 session" --json session add C01 "$DEMO/session_C01_2026-11-06.csv"
sid=$(json 'd["sessions"][0]["id"]' 2>/dev/null || json 'd["id"]')
expect 0 "energy --json" --json energy "$sid" --minutes "$TMP/min.csv"
json_is 'd["athlete"], d["energy_equation"], d["draws"], len(d["validation"])' "('C01', 'Weir 1949', 200, 6)" "energy: keys"
json_is 'abs(sum(m["energy_kj"] for m in d["minutes"]) - d["totals"]["energy_kj"]) < 1e-6' True "minutes add up to the total"
json_is 'abs(d["totals"]["fixed_efficiency_kj"] - d["totals"]["work_kj"] / (d["efficiency_pct"] / 100)) < 1e-6' True \
    "fixed-efficiency estimate = work / efficiency"
json_is 'd["totals"]["energy_kj_ci95"][0] < d["totals"]["energy_kj"] < d["totals"]["energy_kj_ci95"][1]' True "interval around the energy"
json_is 'd["totals"]["slow_component_kj"] > 0, d["totals"]["difference_kj"] > 0' "(True, True)" \
    "heavy intervals cost more than the fixed-efficiency rule, partly through the slow component"
json_is 'all(p["typical"] is False for k, p in d["parameters"].items() if k not in ("rer_severe",))' True \
    "C01's own parameters (only the severe RER is typical)"
json_is '[v["rmse_ml_min"] < 60 for v in d["validation"] if v["domain"] == "moderate"]' "[True, True, True]" \
    "model check: moderate bouts within 60 mL/min RMSE"
json_is 'abs(d["totals"]["work_kj"] - 0.001 * sum(__import__("numpy").genfromtxt("'"$DEMO"'/session_C01_2026-11-06.csv", delimiter=",", names=True)["power_w"])) < 1e-6' \
    True "work = sum of the 1-Hz power (numpy)"
json_is "abs(sum(float(l.split(',')[6]) for l in open('$TMP/min.csv').readlines()[1:]) - d['totals']['energy_kj']) < 0.05 * len(d['minutes'])" \
    True "the CSV's minutes add up to the JSON total"
expect 0 "energy, human" energy "$sid"
out_has "of it, the slow component" "human: the slow component's cost"
out_has "registered dietitian" "human: the caution defers intake advice"
out_has "model check" "human: the model check against the bouts"
expect 0 "energy --plot" energy "$sid" --plot "$TMP/s.svg" --draws 20
if xmllint --noout "$TMP/s.svg" 2>/dev/null && grep -q "linear rule" "$TMP/s.svg" && grep -q "modelled VO2" "$TMP/s.svg"; then
    pass "the plot is well-formed SVG with the modelled VO2 and the linear rule"
else fail "the plot is not well-formed or lacks its lines"; fi
expect 73 "plot into a missing folder" energy "$sid" --plot "$TMP/nodir/s.svg" --draws 20
expect 0 "energy --efficiency 20 --equations frayn1983" --json energy "$sid" --efficiency 20 --equations frayn1983 --draws 50
json_is 'd["efficiency_pct"], d["substrate_equations"], d["draws"]' "(20, 'Frayn 1983', 50)" "options honoured"

# ---- energy: bad input ----
expect 0 "energy --help" energy --help
out_has "example" "help has an example"
expect 64 "no session" energy
expect 64 "two sessions" energy 1 2
expect 64 "bad id" energy x
expect 65 "unknown session" energy 999
expect 64 "efficiency out of range" energy "$sid" --efficiency 50
expect 64 "unknown equations" energy "$sid" --equations foo
err_has "jw2005-high" "the equation sets are named"
expect 64 "too few draws" energy "$sid" --draws 5
expect 0 "S01 session" --json session add S01 "$DEMO/session_C01_2026-11-06.csv"
sid2=$(json 'd["sessions"][0]["id"]' 2>/dev/null || json 'd["id"]')
expect 69 "an athlete without a ramp" energy "$sid2"
err_has "no power ramp with a VO2peak" "what is missing is named"
expect 0 "R02 run" --json session add R02 "$DEMO/session_R02_2026-09-01.csv"
sid3=$(json 'd["sessions"][0]["id"]' 2>/dev/null || json 'd["id"]')
expect 65 "a speed session" energy "$sid3"
err_has "speed session" "speed sessions refused"
awk 'BEGIN { print "time_s,power_w"; for (i = 0; i < 126000; i++) print i "," 150 + (i % 600 < 300 ? 50 : 0) }' >"$TMP/long_2026-11-20.csv"
expect 0 "a 35-hour ride" --json session add C01 "$TMP/long_2026-11-20.csv"
sid4=$(json 'd["sessions"][0]["id"]' 2>/dev/null || json 'd["id"]')
expect 64 "5000 draws over 35 hours" energy "$sid4" --draws 5000
err_has "too many for a session of 2100 min" "the memory bound is explained"

# ---- fuel on the sheet ----
expect 0 "sheet, text" sheet C01 --format txt
out_has "Energy and carbohydrate at the domains' targets" "the sheet has the fuel section"
out_has "kcal/h" "kcal per hour at the targets"
out_has "registered dietitian" "the fuel section defers intake advice"
expect 0 "sheet, json" --json sheet C01 --format json
json_is '[s["key"] for s in d["sections"] if s["key"] == "fuel"]' "['fuel']" "the fuel section in JSON"
echo "# $N checks"
