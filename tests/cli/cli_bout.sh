# cli_bout.sh: bout commands through the real binary: the 9 demo bouts against the domains their
# generator intended, SPEC keys, the ensemble of repeats, typical tau and gain, the domain check
# against GET and CP, plots, and every bad input with its message and exit code.
. "$CPDOMAIN_TESTS/cli/lib.sh"
DEMO="$CPDOMAIN_TESTS/../demo/data"   # invented demo data (demo/TRUTH.md, demo/data/truth.csv)

# truth FILE KEY: a generating value from demo/data/truth.csv
truth() { awk -F, -v f="$1" -v k="$2" '$1 == f && $2 == k { print $3; exit }' "$DEMO/truth.csv"; }

expect 0 "init" init
expect 0 "athletes" athlete import "$DEMO/athletes.csv"

# the demo bouts with the arguments the manifest gives; ids follow the manifest order (1..9)
files=""
tail -n +2 "$DEMO/manifest.csv" | awk -F, '$1 == "bout" { print $2, $3, $4, $8, $9, $10 }' >"$TMP/bouts.txt"
i=0
while read -r code file date onset power baseline; do
    i=$((i + 1))
    expect 0 "bout add $file" --json bout add "$code" "$DEMO/$file" --date "$date" --power "$power" --baseline "$baseline" --onset "$onset"
    json_is 'd["id"], d["athlete"], d["power_w"], d["samples"] > 100' "($i, '$code', $power, True)" "$file stored as bout $i"
    files="$files $file"
done <"$TMP/bouts.txt"
[ "$i" -eq 9 ] && pass "the manifest lists 9 bouts" || fail "the manifest lists $i bouts, wanted 9"

expect 0 "bout list" --json bout list C01
json_is '[b["id"] for b in d["bouts"]], all(k in d["bouts"][0] for k in ("id","date","power_w","baseline_w","onset_s","samples"))' \
    "([1, 2, 3, 4, 5, 9], True)" "bout list: C01's six bouts with their keys"
expect 0 "bout list, human" bout list C05
out_has "375 W" "human list shows the power"

# ---- without a ramp or trials: the domain is judged from the response alone (SPEC) ----
expect 0 "bout show 1 before any ramp" --json bout show 1
json_is 'all(k in d for k in ("domain","baseline_ml_min","primary","slow","delta_6_3_ml_min","end_vo2_ml_min"))' True "SPEC top-level keys"
json_is 'all(k in d["primary"] for k in ("amplitude_ml_min","tau_s","tau_ci95","delay_s","gain_ml_min_w"))' True "SPEC primary keys"
json_is 'all(k in d for k in ("mrt_s","o2_deficit_ml","end_vo2_pct_vo2peak","slow_component_test","residuals","domain_criteria","verification"))' \
    True "extra keys: MRT, O2 deficit, %VO2peak, slow-component test, residuals, criteria, verification"
json_is 'd["verification"]["basis"], d["verification"]["agrees"], "judged from the response alone" in d["verification"]["message"]' \
    "('response', None, True)" "no boundaries on file: judged from the response alone"
json_is 'd["end_vo2_pct_vo2peak"], d["vo2peak"]' "(None, None)" "no ramp: no %VO2peak"
# the O2 deficit is A1 x MRT (MRT in s, VO2 in mL/min, hence /60): the module's definition, recomputed here
json_is 'abs(d["o2_deficit_ml"] - d["primary"]["amplitude_ml_min"] * d["mrt_s"] / 60) < 1e-6, abs(d["mrt_s"] - d["primary"]["delay_s"] - d["primary"]["tau_s"]) < 1e-9' \
    "(True, True)" "O2 deficit = A1 x MRT / 60 and MRT = delay + tau"
expect 0 "human show" bout show 1
out_has "judged from the response alone" "human output says the domain rests on the response"

# ---- with the ramps: VO2peak decides the severe bouts; every bout gets its generator's domain ----
expect 0 "C01 ramp" ramp add C01 "$DEMO/ramp_C01.csv" --date 2026-09-29 --rate 25 --start 30 --onset 180
expect 0 "C05 ramp" ramp add C05 "$DEMO/ramp_C05.csv" --date 2026-09-24 --rate 35 --start 50 --onset 180
i=0
for file in $files; do
    i=$((i + 1))
    dom=$(truth "$file" domain)
    expect 0 "show bout $i" --json bout show "$i"
    json_is 'd["domain"]' "$dom" "bout $i ($file): domain is the generator's '$dom' (truth.csv)"
    json_is 'd["end_vo2_pct_vo2peak"] is not None and d["vo2peak"]["source"] == "ramp"' True "bout $i: %VO2peak from the ramp"
    case "$dom" in
    moderate)
        # Phase II tau 20-35 s (Burnley, Doust & Jones 2006 JAP 101:1320; Roberts, Wilkerson & Jones 2005
        # Respir Physiol Neurobiol 146:247: moderate cycling 25.7 +- 8.6 s)
        json_is '20 <= d["primary"]["tau_s"] <= 35' True "bout $i: moderate tau within the typical 20-35 s"
        # moderate gain ~10 mL/min/W (Hill, Poole & Smith 2002; common practice), 8-12 as in Keir et al. 2016
        json_is '8 <= d["primary"]["gain_ml_min_w"] <= 12' True "bout $i: moderate gain within 8-12 mL/min/W"
        json_is 'd["slow"], d["delta_6_3_ml_min"] < 100' "(None, True)" "bout $i: no slow component, delta VO2(6-3) below 100" ;;
    heavy)
        json_is 'd["slow"] is not None and d["slow"]["amplitude_ml_min"] > 0 and d["slow_component_test"]["supported"]' True \
            "bout $i: slow component present and supported by the F-test"
        json_is 'd["slow"]["delay_s"] > d["primary"]["delay_s"], d["delta_6_3_ml_min"] >= 100' "(True, True)" \
            "bout $i: slow component after the primary; delta VO2(6-3) at least 100" ;;
    severe)
        json_is 'd["end_vo2_pct_vo2peak"] >= 95, d["domain_rule"]' "(True, 'end_vo2_at_vo2peak')" "bout $i: end VO2 at VO2peak" ;;
    esac
done
# the generating values of bout 1 (truth.csv) inside the 95 % CI of tau, and A1 within 5 %
expect 0 "show bout 1" --json bout show 1
t1=$(truth bout_C01_1.csv primary_tau_s); a1=$(truth bout_C01_1.csv primary_amplitude_ml_min)
json_is "d['primary']['tau_ci95'][0] <= $t1 <= d['primary']['tau_ci95'][1], abs(d['primary']['amplitude_ml_min'] - $a1) / $a1 < 0.05" \
    "(True, True)" "bout 1: the generating tau ($t1 s) inside the 95 % CI, amplitude within 5 % of $a1"
json_is 'all(k in d["residuals"] for k in ("sd_ml_min","runs_z","runs_p","chi2_reduced")), d["residuals"]["runs_p"] > 0.01' \
    "(True, True)" "residual summary: runs test passes for a correct model"
expect 0 "show bout 2" --json bout show 2
json_is 'all(k in d["slow"] for k in ("amplitude_ml_min","delay_s")), d["slow_component_test"]["p"] < 0.01, d["slow_component_test"]["f"] > 0' \
    "(True, True, True)" "heavy bout: SPEC slow keys; F and p of the model comparison"
expect 0 "human show of the heavy bout" bout show 2
out_has "slow component is supported" "human output gives the criteria behind the domain"

# ---- the ensemble of C01's three moderate repeats (bouts 1, 4, 5: 150 W) ----
expect 0 "ensemble 1,4,5" --json bout show 1,4,5
json_is 'd["repeats"], d["ids"], d["id"], d["points"], d["domain"]' "(3, [1, 4, 5], None, '1-s ensemble', 'moderate')" \
    "ensemble of three repeats, 1-s ensemble average, moderate"
json_is '20 <= d["primary"]["tau_s"] <= 35, 8 <= d["primary"]["gain_ml_min_w"] <= 12' "(True, True)" "ensemble tau and gain typical"
# demo/TRUTH.md: the same fit (mono-exponential from 20 s, baseline fixed, 1-s ensemble) gave 27.8 s;
# our outlier removal and baseline differ slightly, so 1 s (about one SE of the ensemble tau)
json_is 'abs(d["primary"]["tau_s"] - 27.8) < 1.0' True "ensemble tau within 1 s of the TRUTH.md check fit (27.8 s)"
json_is "d['primary']['tau_ci95'][0] <= $t1 <= d['primary']['tau_ci95'][1]" True "the generating tau inside the ensemble's 95 % CI"
ens=$(json 'd["primary"]["tau_ci95"][1] - d["primary"]["tau_ci95"][0]')
w1=""
for id in 1 4 5; do
    expect 0 "bout $id alone" --json bout show "$id"
    w=$(json 'd["primary"]["tau_ci95"][1] - d["primary"]["tau_ci95"][0]')
    w1="$w1 $w"
done
# three repeats carry about three times the breaths: the CI narrows (Lamarra et al. 1987: the number of
# transitions needed scales with (noise / amplitude)^2)
python3 -c "import sys; e=$ens; ws=[float(x) for x in '$w1'.split()]; sys.exit(0 if e < min(ws) else 1)" \
    && pass "ensemble CI of tau ($ens s) narrower than every single bout's ($w1)" || fail "ensemble CI $ens not narrower than $w1"
expect 0 "ensemble in 5-s bins" --json bout show 1,4,5 --bin 5
json_is 'd["points"], d["bin_s"], 20 <= d["primary"]["tau_s"] <= 35' "('bins', 5, True)" "bins accepted, tau still typical"
expect 0 "human ensemble" bout show 1,4,5
out_has "ensemble of 3 repeats" "human output names the ensemble"

# ---- domain verification against GET and CP once trials (a fit) and the ramp exist ----
expect 0 "trials" trial import "$DEMO/trials.csv"
i=0
for file in $files; do
    i=$((i + 1))
    dom=$(truth "$file" domain)
    expect 0 "verify bout $i" --json bout show "$i"
    json_is 'd["verification"]["basis"], d["verification"]["predicted"], d["verification"]["agrees"]' "('boundaries', '$dom', True)" \
        "bout $i: the boundaries predict '$dom' and the response agrees"
done
json_is 'd["verification"]["cp_w"] > d["verification"]["get_w"] > 0, d["verification"]["get_source"].startswith("ramp")' "(True, True)" \
    "verification names GET (from the ramp) below CP"
# a heavy response stored at a power below the GET: the boundaries predict moderate, the response disagrees
expect 0 "heavy file at 160 W" --json bout add C01 "$DEMO/bout_C01_2.csv" --date 2026-10-27 --power 160 --baseline 20 --onset 180
dis=$(json 'd["id"]')
expect 0 "show the disagreeing bout" --json bout show "$dis"
json_is 'd["domain"], d["verification"]["predicted"], d["verification"]["agrees"]' "('heavy', 'moderate', False)" "disagreement detected"
json_is '"GET may be overestimated" in d["verification"]["message"], "below GET" in d["verification"]["message"]' "(True, True)" \
    "disagreement message from the kinetics module"
expect 0 "human disagreement" bout show "$dis"
out_has "DISAGREES" "human output flags the disagreement"

# ---- shorter analyses: delta VO2(6-3) null below 6 min; undetermined below 5 min ----
expect 0 "5-min analysis" --json bout show 1 --fit-end 5:00
json_is 'd["delta_6_3_ml_min"], d["domain"], d["exercise_s"]' "(None, 'moderate', 300)" "shorter than 6 min: delta_6_3 null, domain still decided"
expect 0 "2:30 analysis" --json bout show 1 --fit-end 2:30
json_is 'd["domain"], d["domain_note"].startswith("undetermined:"), d["domain_rule"], d["verification"]["agrees"]' \
    "(None, True, 'too_short', None)" "undetermined: domain null with a domain_note; nothing to verify"
json_is 'd["slow_component_test"]["tested"], d["slow_component_test"]["reason"] is not None' "(False, True)" "no slow-component test, with the reason"
expect 0 "phase I option" --json bout show 1 --phase1 25
json_is 'd["phase1_s"], d["fits"]["mono"]["from_s"]' "(25, 25)" "--phase1 moves the start of the fit"
expect 0 "primary option" --json bout show 2 --primary mono-end
json_is 'd["primary"]["fit"], d["fits"]["mono_end"]["to_s"]' "('mono_end', 180)" "--primary mono-end takes the 3-min mono-exponential"
expect 0 "default outlier rule" --json bout show 1
n4=$(json 'd["outliers_removed"]')
expect 0 "outlier option" --json bout show 1 --outlier-sd 3
json_is "d['outliers_removed'] >= $n4 >= 3" True "--outlier-sd 3 removes at least what 4 SD removes, which finds the 3 planted outliers"
expect 0 "VO2peak given" --json bout show 1 --vo2peak 4000
json_is 'd["vo2peak"]["source"], abs(d["end_vo2_pct_vo2peak"] - 100 * d["end_vo2_ml_min"] / 4000) < 1e-9' "('given', True)" "--vo2peak overrides the ramp"

# ---- a treadmill bout: speed keys ----
expect 0 "speed bout" --json bout add R01 "$DEMO/bout_C01_1.csv" --date 2026-10-20 --speed 3.4 --baseline 1.5 --onset 180
sid=$(json 'd["id"]')
json_is 'd["modality"], d["speed_m_s"], d["baseline_m_s"]' "('speed', 3.4, 1.5)" "speed bout stored with its speed"
expect 0 "show the speed bout" --json bout show "$sid"
json_is '"speed_m_s" in d and "gain_ml_min_per_m_s" in d["primary"] and "gain_ml_min_w" not in d["primary"]' True "speed bout: gain per m/s"

# ---- plots ----
expect 0 "plot a bout" bout plot 2 -o "$TMP/b2.svg"
xmllint --noout "$TMP/b2.svg" 2>/dev/null && pass "bout SVG is well-formed XML (xmllint)" || fail "bout SVG not well-formed"
grep -q "Residuals" "$TMP/b2.svg" && grep -q "primary component" "$TMP/b2.svg" && pass "plot has the components and the residual panel" \
    || fail "plot lacks components or residuals"
expect 0 "plot the ensemble in bins" bout plot 1,4,5 --bin 5 -o "$TMP/ens.svg"
xmllint --noout "$TMP/ens.svg" 2>/dev/null && pass "ensemble SVG is well-formed XML" || fail "ensemble SVG not well-formed"
grep -q "bin means" "$TMP/ens.svg" && pass "ensemble plot shows the bin means" || fail "no bin means in the ensemble plot"
expect 64 "plot without -o" bout plot 2
expect 73 "plot to an impossible path" bout plot 2 -o "$TMP/no/dir/b.svg"

# ---- bad input: every rejected add leaves the store unchanged ----
snapshot
head -1 "$DEMO/bout_C01_1.csv" >"$TMP/h.csv"
awk -F, 'NR == 1 { sub(/vo2_ml_min,/, "oxygen,"); print; next } { print }' "$DEMO/bout_C01_1.csv" >"$TMP/nocol.csv"
expect 65 "missing VO2 column" bout add C01 "$TMP/nocol.csv" --date 2026-10-30 --power 150
err_has "nocol.csv:1:1: missing column 'vo2_ml_min'" "missing column named with file:line:column"
awk -F, 'BEGIN { OFS = "," } NR == 30 { $1 = 5 } { print }' "$DEMO/bout_C01_1.csv" >"$TMP/backwards.csv"
expect 65 "time running backwards" bout add C01 "$TMP/backwards.csv" --date 2026-10-30 --power 150 --onset 180
err_has "backwards.csv:30:1: column 'time_s': time runs backwards" "backwards time located"
awk -F, 'BEGIN { OFS = "," } NR == 12 { $2 = "n/a" } { print }' "$DEMO/bout_C01_1.csv" >"$TMP/nan.csv"
expect 65 "a non-number" bout add C01 "$TMP/nan.csv" --date 2026-10-30 --power 150 --onset 180
err_has "nan.csv:12:2: column 'vo2_ml_min': 'n/a' is not a number" "non-number located"
head -12 "$DEMO/bout_C01_1.csv" >"$TMP/few.csv"
expect 65 "too few rows" bout add C01 "$TMP/few.csv" --date 2026-10-30 --power 150
err_has "too few samples" "too few rows explained"
expect 64 "onset outside the data" bout add C01 "$DEMO/bout_C01_1.csv" --date 2026-10-30 --power 150 --onset 2:00:00
err_has "outside the file's times" "onset outside explained"
expect 66 "missing file" bout add C01 "$TMP/none.csv" --date 2026-10-30 --power 150
expect 65 "unknown athlete" bout add ZZ "$DEMO/bout_C01_1.csv" --date 2026-10-30 --power 150
err_has "no athlete with code 'ZZ'" "unknown athlete named"
expect 64 "no intensity" bout add C01 "$DEMO/bout_C01_1.csv" --date 2026-10-30
expect 64 "power and speed" bout add C01 "$DEMO/bout_C01_1.csv" --date 2026-10-30 --power 150 --speed 3
expect 64 "no date" bout add C01 "$DEMO/bout_C01_1.csv" --power 150
expect 64 "date in the future" bout add C01 "$DEMO/bout_C01_1.csv" --date 2027-01-10 --power 150
expect 64 "baseline not below the power" bout add C01 "$DEMO/bout_C01_1.csv" --date 2026-10-30 --power 150 --baseline 150
err_has "must be below the bout's power" "baseline above power explained"
expect 64 "absurd power" bout add C01 "$DEMO/bout_C01_1.csv" --date 2026-10-30 --power 9000
unchanged "every rejected bout add"

# ---- bouts that store but cannot be analysed: exit 69 with the reason ----
# 3 min of baseline and 90 s of exercise
awk -F, 'NR == 1 || $1 <= 270' "$DEMO/bout_C01_1.csv" >"$TMP/short.csv"
expect 0 "a 90-s bout stores" --json bout add C01 "$TMP/short.csv" --date 2026-10-30 --power 150 --baseline 20 --onset 180
short=$(json 'd["id"]')
# the record starts 2 s before the onset: no baseline breaths
awk -F, 'NR == 1 || $1 >= 178' "$DEMO/bout_C01_1.csv" >"$TMP/nobase.csv"
expect 0 "a bout without baseline stores" --json bout add C01 "$TMP/nobase.csv" --date 2026-10-30 --power 150 --onset 180
nobase=$(json 'd["id"]')
# default onset 0 on a record that starts at 1.34 s
expect 0 "onset defaulting to 0" --json bout add C01 "$DEMO/bout_C01_1.csv" --date 2026-10-31 --power 150
zero=$(json 'd["id"]')
# 3 min of baseline relabelled as exercise from 50 s: no VO2 response
awk -F, 'NR == 1 || $1 < 180' "$DEMO/bout_C01_1.csv" >"$TMP/flat.csv"
expect 0 "a flat record stores" --json bout add C01 "$TMP/flat.csv" --date 2026-10-30 --power 150 --onset 50
flat=$(json 'd["id"]')
snapshot
expect 69 "bout too short" bout show "$short"
err_has "bout too short: 90 s of exercise, 120 s needed" "too short explained"
expect 69 "no baseline data" bout show "$nobase"
err_has "no baseline data" "no baseline explained"
expect 69 "onset before the first breath" bout show "$zero"
err_has "no baseline data: the record starts at 1.34 s, after the onset at 0 s" "onset before the record explained"
expect 69 "no response" --json bout show "$flat"
err_has "no VO2 response" "flat record: no response, exit 69"
[ ! -s "$TMP/out" ] && pass "a failed analysis prints no result" || fail "a failed analysis printed a result"
expect 69 "no response, plot" bout plot "$flat" -o "$TMP/flat.svg"
[ ! -e "$TMP/flat.svg" ] && pass "no plot file for a failed analysis" || fail "a plot was written for a failed analysis"
expect 64 "--fit-end beyond the data" bout show 1 --fit-end 9:00
err_has "lies beyond the data" "fit end beyond the data explained"
expect 64 "--phase1 out of range" bout show 1 --phase1 70
expect 64 "--bin out of range" bout show 1 --bin 200
expect 64 "--primary unknown" bout show 1 --primary best
expect 64 "an add option on show" bout show 1 --power 150
unchanged "show never writes"

# ---- bad ensembles and ids ----
expect 64 "mixed athletes" bout show 1,6
err_has "belong to different athletes (C01, C05)" "mixed athletes explained"
expect 64 "powers differ by more than 5 %" bout show 1,2
err_has "differ by 36.7 % in power, more than 5 %" "mixed powers explained"
expect 64 "a power and a speed bout" bout show 1,"$sid"
expect 64 "an id twice" bout show 1,4,1
err_has "bout 1 is given twice" "duplicate explained"
expect 64 "not an id" bout show 1,x
err_has "'x' is not an id" "bad id named"
expect 64 "empty id" bout show 1,
expect 65 "missing bout" bout show 1,77
err_has "no bout with id 77" "missing id named"
expect 65 "a ramp id is not a bout" bout show 10
expect 64 "no id" bout show

# ---- remove ----
expect 0 "remove a bout" bout remove "$flat"
expect 65 "removed bout is gone" bout show "$flat"
expect 65 "remove a missing bout" bout remove 777
expect 0 "bout --help" bout --help
expect 0 "bout show --help" bout show --help
out_has "example" "help has an example"
expect 0 "bout add --help" bout add --help
out_has "--onset" "add help names --onset"
