# cli_graded.sh: graded tests laid out as metabolic carts export them (invented files from
# tests/cli/gen_graded.py): baselines at negative times and the same test shifted to start at 0,
# step tests read from the recorded power, VO2-only files, a recovery after the end, heart-rate
# artefacts and blank cells. Values are checked against numpy at test time (tests/ref/graded_ref.py:
# VO2peak as the highest 30-s mean, stage means of the final 30 s, gain by least squares on the
# stage means, peak power from the record).
. "$CPDOMAIN_TESTS/cli/lib.sh"
PY=/usr/bin/python3
GEN="$CPDOMAIN_TESTS/cli/gen_graded.py"
REF="$CPDOMAIN_TESTS/ref/graded_ref.py"

$PY "$GEN" "$TMP/steps.csv" --recovery 120 --hr-artefacts
$PY "$GEN" "$TMP/steps0.csv" --recovery 120 --hr-artefacts --layout shifted
$PY "$GEN" "$TMP/vo2.csv" --vo2-only --seed 12
$PY "$GEN" "$TMP/ramp.csv" --protocol ramp --recovery 60 --seed 13
$PY "$GEN" "$TMP/ramp0.csv" --protocol ramp --recovery 60 --seed 13 --layout shifted
$PY "$GEN" "$TMP/nobase.csv" --protocol ramp --no-baseline --seed 14

expect 0 "init" init
expect 0 "athlete" athlete add S01 --name "Step Tester" --mass 70

# (1) negative times are a baseline, never an error; both layouts give the same analysis
expect 0 "step test with a baseline at negative times, no --rate" --json ramp add S01 "$TMP/steps.csv" --date 2026-10-01
json_is 'd["id"], d["hr_dropped"], d["blank_cells_dropped"]' "(1, 3, 1)" "HR artefacts (0, 312, 28 beats/min) and a blank cell dropped and counted"
expect 0 "the same test starting at 0, --onset 180" ramp add S01 "$TMP/steps0.csv" --date 2026-10-01 --onset 180
expect 0 "show negative layout" --json ramp show 1
cp "$TMP/out" "$TMP/a.json"
expect 0 "show shifted layout" --json ramp show 2
$PY - "$TMP/a.json" "$TMP/out" <<'EOF' && pass "both layouts: the same analysis (every value within 1e-9)" || fail "layouts differ"
import json, sys
a, b = json.load(open(sys.argv[1])), json.load(open(sys.argv[2]))
def same(x, y):
    if isinstance(x, dict):
        return x.keys() == y.keys() and all(same(x[k], y[k]) for k in x)
    if isinstance(x, list):
        return len(x) == len(y) and all(same(p, q) for p, q in zip(x, y))
    if isinstance(x, float) or isinstance(y, float):
        return x is not None and y is not None and abs(x - y) <= 1e-9 * max(1, abs(x))
    return x == y
sys.exit(0 if all(same(a[k], b[k]) for k in a if k != "id") else 1)
EOF

# (3) a step test: protocol read from the record, stages, VO2peak over the whole exercise (last stage included)
expect 0 "show" --json ramp show 1
json_is 'd["protocol"], d["protocol_source"], d["steps"]["step_s"] > 170, d["steps"]["increment_w"]' "('steps', 'recorded intensity', True, 25)" "protocol and step size read from the record"
get=$(json 'd["get"]["vo2_ml_min"]')
$PY "$REF" "$TMP/steps.csv" 0 "$get" >"$TMP/ref.json"
cp "$TMP/out" "$TMP/c.json"
$PY - "$TMP/c.json" "$TMP/ref.json" <<'EOF' >"$TMP/cmp" 2>&1
import json, sys
c, r = json.load(open(sys.argv[1])), json.load(open(sys.argv[2]))
ok = []
ok.append(("VO2peak = numpy's highest 30-s mean", abs(c["vo2peak_ml_min"] - r["vo2peak"]) < 1e-6 * r["vo2peak"]))
ok.append(("peak power = highest recorded power (325 W, the last stage)", c["peak_power_w"] == r["peak_power"] == 325))
ok.append(("end of exercise from the record, the recovery not analysed", abs(c["exercise_s"] - r["end"]) < 1e-9))
ok.append(("10 stages, the last cut short", len(c["stages"]) == len(r["stages"]) == 10 and not c["stages"][-1]["complete"]))
ok.append(("stage VO2 = numpy's mean of the final 30 s", all(abs(s["vo2_ml_min"] - q[1]) < 1e-6 * q[1] for s, q in zip(c["stages"], r["stages"]))))
ok.append(("stage VCO2 means for an energy module", all(abs(s["vco2_ml_min"] - q[2]) < 1e-6 * q[2] for s, q in zip(c["stages"], r["stages"]))))
ok.append(("gain = numpy least squares on the stages below the GET", abs(c["gain_ml_min_w"] - r["gain"]) < 1e-6 and c["gain_basis"] == r["basis"]))
ok.append(("stages in the gain flagged", sum(s["in_gain"] for s in c["stages"]) == r["n_gain"]))
ok.append(("VO2peak within 1 % of the last stage's steady state (not cut at its first sample)", c["vo2peak_ml_min"] >= 0.99 * c["stages"][-1]["vo2_ml_min"]))
ok.append(("no MRT for a step test, with the reason", c["mrt_s"] is None and "step test" in c["mrt_reason"]))
ok.append(("GET's constant-power equivalent from the stage steady states", c["get"]["power_w"] is not None and 175 < c["get"]["power_w"] < 200))
for what, good in ok:
    print(("ok " if good else "FAIL ") + what)
EOF
while read -r st what; do [ "$st" = ok ] && pass "$what" || fail "$what" "$(cat "$TMP/ref.json" | head -c 300)"; done <"$TMP/cmp"
expect 0 "human show" ramp show 1
out_has "step test: 25 W every 3:00 from 100 W" "human output names the protocol"
out_has "stages (steady state: mean of the final 30 s)" "human output has the stage table"
out_has "3 heart-rate samples as artefacts" "human output counts the dropped heart rates"

# (2) recorded intensity first: --rate is checked, with both values in the JSON and a warning
expect 0 "ramp with --rate and --start beside the record" ramp add S01 "$TMP/ramp.csv" --date 2026-10-02 --rate 30 --start 60
expect 0 "show" --json ramp show 3
json_is 'd["protocol"], d["intensity_source"], round(d["intensity"]["recorded_rate_w_per_min"], 3), d["intensity"]["nominal_disagrees"]' "('ramp', 'recorded', 30.0, False)" "record used; nominal agrees"
$PY "$REF" "$TMP/ramp.csv" 0 none >"$TMP/ref.json"
json_is "d['peak_power_w'] == $($PY -c "import json; print(json.load(open('$TMP/ref.json'))['peak_power'])")" True "ramp peak power from the record (numpy)"
json_is "abs(d['vo2peak_ml_min'] - $($PY -c "import json; print(json.load(open('$TMP/ref.json'))['vo2peak'])")) < 1e-6 * d['vo2peak_ml_min']" True "ramp VO2peak = numpy's 30-s mean up to the end found in the record"
expect 0 "ramp with a wrong --rate" ramp add S01 "$TMP/ramp.csv" --date 2026-10-02 --rate 20 --start 60
expect 0 "show it" --json ramp show 4
json_is 'd["intensity"]["nominal_disagrees"], d["intensity"]["nominal_rate_w_per_min"], round(d["intensity"]["recorded_rate_w_per_min"])' "(True, 20, 30)" "disagreement flagged with both values"
err_has "disagrees with the recorded intensity" "a warning on stderr"
expect 0 "the shifted ramp, --onset 180" ramp add S01 "$TMP/ramp0.csv" --date 2026-10-02 --onset 3:00
expect 0 "show" --json ramp show 5
json_is 'd["intensity"]["nominal_rate_w_per_min"], round(d["vo2peak_ml_min"], 6) == round('"$(json 'd["vo2peak_ml_min"]')"', 6)' "(None, True)" "ramp without --rate"

# (4) --end overrides the end found in the record
expect 0 "--end" ramp add S01 "$TMP/ramp.csv" --date 2026-10-03 --end 500
expect 0 "show" --json ramp show 6
json_is 'd["exercise_s"], d["end_source"], 305 < d["peak_power_w"] <= 310' "(500, 'given', True)" "analysis ends at --end; peak from the record before it (60 + 30 x 500/60 = 310 W at most)"
expect 64 "--end beyond the data" ramp add S01 "$TMP/ramp.csv" --date 2026-10-03 --end 5000

# (5) VO2-only file: VO2peak, peak power, gain computed; GET/RCP not computable with the reason
expect 0 "VO2-only step test" ramp add S01 "$TMP/vo2.csv" --date 2026-10-04
expect 0 "show" --json ramp show 7
$PY "$REF" "$TMP/vo2.csv" 0 none >"$TMP/ref.json"
json_is "abs(d['vo2peak_ml_min'] - $($PY -c "import json; print(json.load(open('$TMP/ref.json'))['vo2peak'])")) < 1e-6 * d['vo2peak_ml_min'], abs(d['gain_ml_min_w'] - $($PY -c "import json; print(json.load(open('$TMP/ref.json'))['gain'])")) < 1e-6" "(True, True)" "VO2-only: VO2peak and gain (below 80 % of peak) = numpy"
json_is 'd["gain_basis"], d["get"]["status"], d["get"]["reason"]' "('below 80 % of peak (no GET)', 'not found', 'V-slope needs VCO2')" "GET not computable, with the reason"
expect 0 "VO2-only plot is skipped, not an error" ramp plot 7 -o "$TMP/x.svg"
err_has "plot skipped" "the skip is said"
[ ! -e "$TMP/x.svg" ] && pass "no file written for a skipped plot" || fail "a skipped plot wrote a file"
expect 0 "reviewer's GET as power" ramp set 7 --get-power 180
expect 0 "show" --json ramp show 7
json_is 'd["get"]["status"], d["get"]["ramp_power_w"], 2260 < d["get"]["vo2_ml_min"] < 2500' "('manual', 180, True)" "GET given as power; its VO2 from the stage steady states"
expect 65 "--get-power beyond the test" ramp set 7 --get-power 900
expect 64 "VO2 and power together" ramp set 7 --get-power 180 --get-vo2 2000

# (7) a ramp whose file starts at the onset: MRT from the recorded intensity, GET equivalent follows
expect 0 "ramp without a baseline (20 W before the onset)" ramp add S01 "$TMP/nobase.csv" --date 2026-10-05 --baseline 20
expect 0 "show" --json ramp show 8
json_is 'd["mrt_source"], 25 < d["mrt_s"] < 55, d["get"]["power_w"] is not None' "('estimated (lagged-linear)', True, True)" "MRT estimated without a baseline (generator: tau 30 s + delay 10 s)"
json_is 'd["mrt_method"]' "first-order fit to the recorded intensity (no baseline)" "MRT method said"
expect 0 "the same without the intensity before onset" ramp add S01 "$TMP/nobase.csv" --date 2026-10-05
expect 0 "show" --json ramp show 9
json_is 'd["mrt_s"] is None or 20 < d["mrt_s"] < 60, d["mrt_s"] is not None or "as the baseline" in d["mrt_reason"]' "(True, True)" "MRT identified, or not identifiable with the reason and what to do"

# (8) messages: L/min in an mL/min column; a semicolon-separated file is read
awk -F, 'NR == 1 { print; next } { $2 = sprintf("%.3f", $2 / 1000); print }' OFS=, "$TMP/vo2.csv" >"$TMP/litres.csv"
expect 65 "L/min values under vo2_ml_min" ramp add S01 "$TMP/litres.csv" --date 2026-10-06
err_has "look like L/min; name the column vo2_l_min (or --map vo2_l_min=vo2_ml_min)" "the message says what to do"
tr ',' ';' <"$TMP/vo2.csv" >"$TMP/semi.csv"
expect 0 "semicolon-separated file" --json ramp add S01 "$TMP/semi.csv" --date 2026-10-06
tr ',' '\t' <"$TMP/vo2.csv" >"$TMP/tabs.csv"
expect 0 "tab-separated file" --json ramp add S01 "$TMP/tabs.csv" --date 2026-10-06
echo "time_s|vo2_ml_min" >"$TMP/pipe.csv"; echo "1|2000" >>"$TMP/pipe.csv"
expect 65 "an unknown separator" ramp add S01 "$TMP/pipe.csv" --date 2026-10-06
err_has "the header reads as one column" "the message says how to convert it"

# --rate stays required without an intensity column
cut -d, -f1-4 "$TMP/steps.csv" >"$TMP/nopower.csv"
expect 64 "no power column, no --rate" ramp add S01 "$TMP/nopower.csv" --date 2026-10-07
err_has "--rate and --start are required" "the message names --rate and --start"
expect 64 "--protocol steps without a record" ramp add S01 "$TMP/nopower.csv" --date 2026-10-07 --rate 8 --start 100 --protocol steps
err_has "a step test is read from the recorded intensity" "steps need the record"

# (5) sheets for an athlete whose only gas-exchange test is VO2-only
expect 0 "athlete" athlete add V01 --name "Vo Only"
printf 'athlete,date,duration_s,power_w\nV01,2026-09-01,180,360\nV01,2026-09-03,420,310\nV01,2026-09-05,720,285\n' >"$TMP/tr.csv"
expect 0 "trials" trial import "$TMP/tr.csv"
expect 0 "VO2-only ramp" ramp add V01 "$TMP/vo2.csv" --date 2026-10-02
expect 0 "sheet" sheet V01 -o "$TMP/v.html"
grep -Eq "VO2peak [0-9.]+ L/min" "$TMP/v.html" && pass "the sheet shows the VO2peak of the VO2-only test" || fail "no VO2peak on the sheet"
grep -q "VO2 only (no VCO2)" "$TMP/v.html" && pass "the sheet says why there is no GET" || fail "no VO2-only note on the sheet"
vid=$(sql "$DB" "SELECT max(id) FROM gx_test")
expect 0 "a reviewer's GET as power" ramp set "$vid" --get-power 175
expect 0 "domains" --json domains V01
json_is 'd["boundaries"][0]["name"], d["boundaries"][0]["power_w"], d["boundaries"][0]["manual"]' "('moderate-heavy', 175, True)" "the reviewer's GET (a step test: the power itself) reaches the domains"
json_is '"step test" in d["boundaries"][0]["source"], "stage steady state" in d["boundaries"][0]["method"]' "(True, True)" "the domains say the GET comes from a step test's stage steady states"

# (1, 6) constant-power bouts: a baseline at negative times gives the same kinetics as --onset; HR artefacts counted
DEMO="$CPDOMAIN_TESTS/../demo/data"
awk -F, 'BEGIN { OFS = "," } NR == 1 { print; next } { $1 = sprintf("%.2f", $1 - 180); if (NR == 30) $5 = "0"; if (NR == 31) $5 = ""; print }' \
    "$DEMO/bout_C01_1.csv" >"$TMP/bout_neg.csv"
expect 0 "bout with negative times" --json bout add S01 "$TMP/bout_neg.csv" --date 2026-10-22 --power 150 --baseline 20
json_is 'd["hr_dropped"], d["blank_cells_dropped"]' "(1, 1)" "bout: a 0 heart rate and a blank cell dropped and counted"
b1=$(json 'd["id"]')
expect 0 "the same bout with --onset 180" --json bout add S01 "$DEMO/bout_C01_1.csv" --date 2026-10-22 --power 150 --baseline 20 --onset 180
b2=$(json 'd["id"]')
expect 0 "show the negative layout" --json bout show "$b1"
tau1=$(json 'd["fits"]["mono"]["tau_s"]')
expect 0 "show the shifted layout" --json bout show "$b2"
json_is "abs(d['fits']['mono']['tau_s'] - $tau1) < 1e-6 * $tau1" True "both layouts: the same time constant"
expect 0 "human bout show" bout show "$b1"
out_has "1 heart-rate sample as artefacts, 1 blank cell" "bout show counts the dropped samples"

# (9) CSV and command-line details
expect 0 "global options after the command" trial list V01 --json
json_is 'len(d["trials"])' 3 "trial list V01 --json gives JSON"
"$BIN" trial list V01 --db "$DB" --quiet --json >"$TMP/out" 2>"$TMP/err"; RC=$?
[ "$RC" -eq 0 ] && json_is 'len(d["trials"])' 3 "--db, --quiet and --json after the command" || fail "--db after the command: exit $RC"
expect 64 "an unknown option" trial list V01 --bogus
err_has "cpdomain trial list: unknown option '--bogus'" "the message names the real command"
printf 'ID;name;mass_kg\nA1;"Ann  Lee";60\n' >"$TMP/ath.csv"
expect 0 "athlete import --map code=ID (semicolons)" athlete import "$TMP/ath.csv" --map code=ID
expect 0 "athlete show" --json athlete show A1
json_is 'd["name"]' "Ann  Lee" "the quoted name kept exactly (two spaces)"
expect 0 "trial add" trial add V01 --date 2026-09-07 --duration 5:00 --power 320
expect 0 "the same trial again" --json trial add V01 --date 2026-09-07 --duration 5:00 --power 320
json_is 'd["skipped_duplicate"]' True "an exact duplicate is skipped, as trial import does"
expect 0 "count" --json trial list V01
json_is 'len(d["trials"])' 4 "stored once"
expect 0 "ramp add says what it read" ramp add S01 "$TMP/steps.csv" --date 2026-10-08
err_has "read as a step test: 10 stages of 3:00, +25 W each" "the protocol is said at import"
expect 0 "a disagreeing --rate is warned about at import" ramp add S01 "$TMP/ramp.csv" --date 2026-10-08 --rate 20
err_has "warning: the nominal rate 20 W/min disagrees with the recorded intensity" "the warning at import"
awk -F, 'BEGIN { OFS = "," } NR == 1 { print; next } { $6 = 0; print }' "$TMP/steps.csv" >"$TMP/flat.csv"
snapshot
expect 64 "a power column of zeros and no --rate" ramp add S01 "$TMP/flat.csv" --date 2026-10-09
err_has "the column does not vary): give the ramp rate and start" "the message says what to do"
unchanged "nothing stored"
expect 0 "with --rate and --start it is a ramp from the nominal line" --json ramp add S01 "$TMP/flat.csv" --date 2026-10-09 --rate 8 --start 90

# ---- a version-4 store (before db/005_gx_protocol.sql) keeps its ramp and takes a step test ----
if sqlite_only "a version-4 SQLite file is upgraded" 4; then
    OLD="$TMP/v4.db"
    for f in schema.sql 002_fits.sql 003_gas_exchange.sql 004_sessions.sql; do sqlite3 "$OLD" <"$CPDOMAIN_TESTS/../db/$f"; done
    sqlite3 "$OLD" "PRAGMA user_version = 4; INSERT INTO athlete (code, name) VALUES ('V4', 'Version Four');"
    "$BIN" --db "$OLD" ramp add V4 "$DEMO/ramp_C01.csv" --date 2026-09-29 --rate 25 --start 30 --onset 180 >/dev/null 2>&1 \
        && pass "a version-4 store takes a ramp" || fail "v4 store refused a ramp"
    v=$(sqlite3 "$OLD" "PRAGMA user_version")
    [ "$v" -ge 5 ] && pass "the store was upgraded to version $v" || fail "store at version $v"
    sqlite3 "$OLD" "UPDATE gx_test SET protocol = NULL, end_s = NULL, hr_dropped = 0 WHERE id = 1" \
        && pass "the new columns exist" || fail "no new columns"
    "$BIN" --db "$OLD" --json ramp add V4 "$TMP/steps.csv" --date 2026-10-01 >"$TMP/out" 2>/dev/null && json_is 'd["hr_dropped"]' 3 "and a step test" \
        || fail "v4 store refused a step test"
fi
echo "# $N checks"
