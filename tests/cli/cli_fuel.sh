# cli_fuel.sh: a step test's energy and substrate use per stage and its peak fat oxidation in
# 'ramp show', and the step test's stages in 'energy' and the AOD. Values are recomputed outside
# cpdomain: stage means by numpy from the file (tests/ref/graded_ref.py), energy by Weir 1949
# (J Physiol 109:1) and substrate use by Jeukendrup & Wallis 2005 (Int J Sports Med 26 Suppl 1:S28;
# coefficients as quoted in energy.h, from memory of the published table), the peak fat oxidation
# fit (Achten, Gleeson & Jeukendrup 2002 Med Sci Sports Exerc 34:92) by numpy.polyfit
# (tests/ref/pfo_ref.py). Files are invented (tests/cli/gen_graded.py, demo/data).
. "$CPDOMAIN_TESTS/cli/lib.sh"
PY=/usr/bin/python3
GEN="$CPDOMAIN_TESTS/cli/gen_graded.py"
REF="$CPDOMAIN_TESTS/ref/graded_ref.py"
PFO="$CPDOMAIN_TESTS/ref/pfo_ref.py"
DEMO="$CPDOMAIN_TESTS/../demo/data"

$PY "$GEN" "$TMP/steps.csv" --recovery 120
$PY "$GEN" "$TMP/vo2.csv" --vo2-only --seed 12

expect 0 "init" init
expect 0 "athlete" athlete add S01 --name "Step Tester" --mass 70
expect 0 "step test with VCO2" ramp add S01 "$TMP/steps.csv" --date 2026-10-01
expect 0 "VO2-only step test" ramp add S01 "$TMP/vo2.csv" --date 2026-10-02
expect 0 "the step test cut after 4 full stages" ramp add S01 "$TMP/steps.csv" --date 2026-10-03 --end 800

# ---- (1) substrate use per stage against the published coefficients on numpy's stage means ----
expect 0 "show, JSON" --json ramp show 1
cp "$TMP/out" "$TMP/show.json"
$PY "$REF" "$TMP/steps.csv" 0 none >"$TMP/ref.json"
$PY - "$TMP/show.json" "$TMP/ref.json" <<'EOF' >"$TMP/cmp" 2>&1
import json, sys
c, r = json.load(open(sys.argv[1])), json.load(open(sys.argv[2]))
s, st = c["substrate"], c["stages"]
ok = []
ok.append(("the equation set is named", s["valid"] and s["equations"] == "Jeukendrup & Wallis 2005 (exercise at 50-75 % VO2max)"))
ok.append(("one substrate row per stage", len(s["stages"]) == len(st) == len(r["stages"]) == 10))
good = True
n_valid = n_high = 0
for row, stage, (p, vo2, vco2) in zip(s["stages"], st, r["stages"]):
    V, C = vo2 / 1000.0, vco2 / 1000.0
    rer = vco2 / vo2
    good &= row["power_w"] == p and abs(row["rer"] - rer) < 1e-5
    good &= abs(row["energy_kcal_min"] - (3.941 * V + 1.106 * C)) < 1e-5           # Weir 1949
    good &= abs(row["energy_kj_min"] - 4.184 * (3.941 * V + 1.106 * C)) < 1e-4      # thermochemical calorie
    steady = stage["stable"] is True
    if rer <= 1.0 and steady:
        n_valid += 1
        good &= row["valid"] and abs(row["cho_g_min"] - max(0, 4.210 * C - 2.962 * V)) < 1e-5   # J & W 2005
        good &= abs(row["fat_g_min"] - max(0, 1.695 * V - 1.701 * C)) < 1e-5
    else:
        n_high += rer > 1.0
        good &= not row["valid"] and row["cho_g_min"] is None and row["fat_g_min"] is None and "not valid" in row["note"]
ok.append(("per-stage RER, Weir energy, CHO and fat = the published equations on numpy's final-30-s means", good))
ok.append(("stages below RER 1.00 valid, above it 'not valid' with no number", n_valid >= 5 and n_high >= 3))
for what, g in ok:
    print(("ok " if g else "FAIL ") + what)
EOF
while read -r st what; do [ "$st" = ok ] && pass "$what" || fail "$what" "$(head -c 300 "$TMP/cmp")"; done <"$TMP/cmp"

# ---- (2) peak fat oxidation against numpy.polyfit of the same stages ----
$PY - "$TMP/show.json" "$TMP/ref.json" >"$TMP/pfo_in.txt" <<'EOF'
import json, sys
c, r = json.load(open(sys.argv[1])), json.load(open(sys.argv[2]))
p = c["peak_fat_oxidation"]
print(c["vo2peak_ml_min"], 1.695, 1.701)
for k in p["stages_used"]:
    q = r["stages"][k - 1]
    print(q[0], q[1], q[2])
EOF
ref=$($PY "$PFO" "$TMP/pfo_in.txt")
set -- $ref
json_is "[abs(v) < 1e-4 for v in (d['peak_fat_oxidation']['at_pct_vo2peak'] - $5, d['peak_fat_oxidation']['pfo_g_min'] - $6, \
d['peak_fat_oxidation']['zone_pct_vo2peak'][0] - $7, d['peak_fat_oxidation']['zone_pct_vo2peak'][1] - $8, \
d['peak_fat_oxidation']['at_power_w'] - $9)]" "[True, True, True, True, True]" \
    "PFO, its %VO2peak, the zone within 10 % and its power = numpy.polyfit of the stages used"
json_is "max(abs(a - b) / max(1e-12, abs(b)) for a, b in zip(d['peak_fat_oxidation']['coefficients'], [$1, $2, $3, $4])) < 1e-5" True \
    "the cubic's coefficients = numpy.polyfit's"
json_is 'd["peak_fat_oxidation"]["stages_used"], d["peak_fat_oxidation"]["stages_rer_above_1"]' "([1, 2, 3, 4, 5, 6, 7, 8, 9], 3)" \
    "the complete stages enter (the last, cut short, does not); those above RER 1.00 at 0 g/min"
json_is '(p := d["peak_fat_oxidation"])["pfo_ci95_g_min"][0] <= p["pfo_g_min"] <= p["pfo_ci95_g_min"][1] and p["bootstrap_resamples"] > 900' True \
    "a bootstrap interval over stages around the peak"
json_is '(p := d["peak_fat_oxidation"])["power_ci95_w"][0] <= p["at_power_w"] <= p["power_ci95_w"][1] and p["hr_ci95_bpm"][0] <= p["at_hr_bpm"] <= p["hr_ci95_bpm"][1]' True \
    "where it occurs in W and HR, with intervals"
json_is '(p := d["peak_fat_oxidation"])["zone_w"][0] < p["at_power_w"] < p["zone_w"][1] and "Achten" in p["method"] and "dietitian" in p["caution"]' True \
    "the zone brackets the peak; the method is named; intake advice is deferred"

expect 0 "show, text" ramp show 1
out_has "substrate use per stage (final 30 s of each stage; energy by Weir 1949; CHO and fat by Jeukendrup & Wallis 2005" "text: the substrate table names its window and equations"
out_has "not valid: RER above 1.00" "text: stages above RER 1.00 are not valid"
out_has "peak fat oxidation (Achten, Gleeson & Jeukendrup 2002: third-order fit against %VO2peak, 9 stages)" "text: the PFO block"
pfo=$($PY -c "import json; p = json.load(open('$TMP/show.json'))['peak_fat_oxidation']; print('PFO      %.2f g/min (95 %% CI %.2f to %.2f)' % (p['pfo_g_min'], *p['pfo_ci95_g_min']))")
out_has "$pfo" "text: the PFO line shows the JSON's values"
out_has "zone     within 10 % of the peak:" "text: the range within 10 % of the peak"
if grep -Eiwq 'nan|inf|-0\.00' "$TMP/out"; then fail "text: no NaN, inf or -0.00" "$(grep -Eiw 'nan|inf|-0\.00' "$TMP/out" | head -3)"; else pass "text: no NaN, inf or -0.00"; fi

# ---- a VO2-only step test: substrate use needs VCO2, no number ----
expect 0 "VO2-only: show" --json ramp show 2
json_is 'd["substrate"]["valid"], "needs VCO2" in d["substrate"]["message"] or "need VCO2" in d["substrate"]["message"]' "(False, True)" \
    "VO2-only: the substrate table says it needs VCO2"
json_is 'd["peak_fat_oxidation"]["valid"], "no VCO2" in d["peak_fat_oxidation"]["message"], "pfo_g_min" in d["peak_fat_oxidation"]' \
    "(False, True, False)" "VO2-only: no peak fat oxidation, with the reason and no number"
expect 0 "VO2-only: text" ramp show 2
out_has "no substrate use per stage: the test has no VCO2 column" "VO2-only text: says why"
out_has "PFO        not computed: the test has no VCO2" "VO2-only text: no PFO"
if grep -q " g/min" "$TMP/out"; then fail "VO2-only text: no g/min figure" "$(grep " g/min" "$TMP/out")"; else pass "VO2-only text: no g/min figure"; fi

# ---- too few stages: a clear message, no number ----
expect 0 "4 full stages: show" --json ramp show 3
json_is 'd["peak_fat_oxidation"]["valid"], "needs at least 5" in d["peak_fat_oxidation"]["message"], "pfo_g_min" in d["peak_fat_oxidation"]' \
    "(False, True, False)" "4 complete stages: no PFO, 'needs at least 5'"
json_is 'len(d["substrate"]["stages"]), d["substrate"]["stages"][0]["valid"]' "(5, True)" "the stages still get their substrate rows"

# ---- a ramp has no stage table ----
$PY "$GEN" "$TMP/ramp.csv" --protocol ramp --seed 13
expect 0 "a ramp" ramp add S01 "$TMP/ramp.csv" --date 2026-10-04
expect 0 "ramp: show" --json ramp show 4
json_is '"substrate" in d, "peak_fat_oxidation" in d' "(False, False)" "a ramp has no per-stage substrate or PFO"

# ---- the energy command and the AOD use C01's step test (demo) ----
newdb DB c01
expect 0 "init C01 store" init
expect 0 "athletes" athlete import "$DEMO/athletes.csv"
expect 0 "trials" trial import "$DEMO/trials.csv"
for f in $(awk -F, '$1 == "bout" && $2 == "C01" { print $3 ":" $4 ":" $9 }' "$DEMO/manifest.csv"); do
    file=${f%%:*}; rest=${f#*:}; date=${rest%%:*}; power=${rest#*:}
    expect 0 "bout ($file)" bout add C01 "$DEMO/$file" --date "$date" --power "$power" --baseline 20 --onset 180
done
expect 0 "C01 ramp" ramp add C01 "$DEMO/ramp_C01.csv" --date 2026-09-29 --rate 25 --start 30 --onset 180
expect 0 "C01 session" --json session add C01 "$DEMO/session_C01_2026-11-06.csv"
sid=$(json 'd["id"]')
expect 0 "energy before the step test" --json energy "$sid" --draws 20
json_is '"bout" in d["parameters"]["rer_moderate"]["source"]' True "without a step test the moderate RER comes from the bouts"
expect 0 "C01 step test" --json ramp add C01 "$DEMO/steps_C01.csv" --date 2026-09-22
stid=$(json 'd["id"]')
expect 0 "step test: show" --json ramp show "$stid"
cp "$TMP/out" "$TMP/st.json"
expect 0 "energy with the step test" --json energy "$sid" --draws 20
cp "$TMP/out" "$TMP/en.json"
$PY - "$TMP/st.json" "$TMP/en.json" <<'EOF' >"$TMP/cmp" 2>&1
import json, sys
s, e = json.load(open(sys.argv[1])), json.load(open(sys.argv[2]))
P = e["parameters"]
get, cp = P["get_w"]["value"], P["cp_w"]["value"]
st = [x for x in s["stages"] if x["complete"] and x["stable"] is True]
mod = [x["vco2_ml_min"] / x["vo2_ml_min"] for x in st if x["power_w"] < get]
hvy = [x["vco2_ml_min"] / x["vo2_ml_min"] for x in st if get <= x["power_w"] < cp]
ok = []
ok.append(("moderate RER = mean RER of the stable stages below the GET", len(mod) >= 3 and abs(P["rer_moderate"]["value"] - sum(mod) / len(mod)) < 1e-9))
ok.append(("heavy RER = mean RER of the stable stages from the GET to CP", len(hvy) >= 1 and abs(P["rer_heavy"]["value"] - sum(hvy) / len(hvy)) < 1e-9))
ok.append(("the source names the step test", ("step test %d" % s["id"]) in P["rer_moderate"]["source"] and "below the GET" in P["rer_moderate"]["source"]
           and "GET to CP" in P["rer_heavy"]["source"] and not P["rer_moderate"]["typical"]))
for what, g in ok:
    print(("ok " if g else "FAIL ") + what)
EOF
while read -r st what; do [ "$st" = ok ] && pass "$what" || fail "$what" "$(head -c 400 "$TMP/cmp")"; done <"$TMP/cmp"
expect 0 "energy, text" energy "$sid" --draws 20
out_has "step test $stid (2026-09-22): stable stages at" "energy text states the step test as the RER's source"

bout6=$(awk -F, '$1 == "bout" && $2 == "C01"' "$DEMO/manifest.csv" | wc -l)
expect 0 "supra-maximal bout" --json bout show "$bout6"
cp "$TMP/out" "$TMP/aod.json"
$PY - "$TMP/st.json" "$TMP/aod.json" "$TMP/en.json" <<'EOF' >"$TMP/cmp" 2>&1
import json, sys
import numpy as np
s, a, e = (json.load(open(f)) for f in sys.argv[1:4])
get = e["parameters"]["get_w"]["value"]
st = [x for x in s["stages"] if x["complete"] and x["stable"] is True and x["power_w"] < get]
b, c0 = np.polyfit([x["power_w"] for x in st], [x["vo2_ml_min"] for x in st], 1)
A = a["aod"]
ok = []
ok.append(("AOD line from the step test's stable stages below the GET", ("step test %d" % s["id"]) in A["line_source"]))
ok.append(("its intercept and slope = numpy.polyfit of those stages", abs(A["line_intercept_ml_min"] - c0) < 1e-6 * abs(c0) and abs(A["line_slope_ml_min_w"] - b) < 1e-8 * abs(b)))
for what, g in ok:
    print(("ok " if g else "FAIL ") + what)
EOF
while read -r st what; do [ "$st" = ok ] && pass "$what" || fail "$what" "$(head -c 400 "$TMP/cmp")"; done <"$TMP/cmp"
# the step test chosen by date as the ramp is: the newest on or before the session, a later one only
# when none is that old
expect 0 "a later step test (after the session)" --json ramp add C01 "$DEMO/steps_C01.csv" --date 2026-12-01
later=$(json 'd["id"]')
expect 0 "energy: the step test dated before the session" --json energy "$sid" --draws 20
json_is "'step test $stid (2026-09-22)' in d['parameters']['rer_moderate']['source']" True "the newest step test on or before the session's date"
expect 0 "remove the earlier step test" ramp remove "$stid"
expect 0 "energy: only a later step test" --json energy "$sid" --draws 20
json_is "'step test $later (2026-12-01)' in d['parameters']['rer_moderate']['source']" True "none that old: the later one"

expect 0 "ramp show --help" ramp show --help
out_has "peak fat oxidation (Achten et al. 2002" "ramp show --help names the substrate table and PFO"
expect 0 "energy --help" energy --help
out_has "stable stages of the athlete's step test" "energy --help names the step test as the RER's first source"
echo "# $N checks"
