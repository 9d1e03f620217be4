# test_ramp.sh: ramp and lactate commands through the real binary: SPEC keys, the SPEC identity of
# the constant-power equivalent, manual overrides, plots, and every bad gas-exchange input.
. "$CPDOMAIN_TESTS/cli/lib.sh"
DEMO="$CPDOMAIN_TESTS/../demo/data"   # invented demo data (demo/TRUTH.md), used here as round-trip input

expect 0 "init" init
expect 0 "athlete" athlete add C01 --name "Ramp Rider" --mass 61
expect 0 "ramp add" --json ramp add C01 "$DEMO/ramp_C01.csv" --date 2026-09-29 --rate 25 --start 30 --onset 3:00
json_is 'd["id"], d["samples"] > 300' "(1, True)" "ramp stored with its samples"
expect 0 "ramp show" --json ramp show 1
json_is 'all(k in d for k in ("vo2peak_ml_min","peak_power_w","gain_ml_min_w","mrt_s","get","rcp"))' True "SPEC top-level keys"
json_is 'all(k in d["get"] for k in ("vo2_ml_min","pct_vo2peak","time_s","ramp_power_w","power_w","method"))' True "SPEC threshold keys"
# SPEC convention: power_w = ramp_power_w - rate x MRT (rate per minute, MRT in s)
json_is 'abs(d["get"]["power_w"] - (d["get"]["ramp_power_w"] - d["intensity"]["rate_w_per_min"] * d["mrt_s"] / 60)) < 1e-9, round(d["intensity"]["rate_w_per_min"])' "(True, 25)" "constant-power equivalent = ramp power - rate x MRT (the recorded ramp's rate)"
# the demo generator's true GET is 2250 mL/min (demo/data/truth.csv); the V-slope finds it within 3 %
json_is 'abs(d["get"]["vo2_ml_min"] - 2250) / 2250 < 0.03, d["get"]["status"]' "(True, 'found')" "GET within 3 % of the generating value"
# moderate-domain gain about 10 mL/min/W (common practice; Ozyener et al. 2011 J Sports Sci Med 10:584: 10.3 +- 0.7)
json_is '8 <= d["gain_ml_min_w"] <= 12, d["gain_in_typical_range"]' "(True, True)" "gain in 8-12 mL/min/W"
json_is 'd["rcp"]["vo2_ml_min"] > d["get"]["vo2_ml_min"] and d["vo2peak_ml_min"] > d["rcp"]["vo2_ml_min"]' True "GET < RCP < VO2peak"
json_is 'd["vo2peak_ml_kg_min"] == d["vo2peak_ml_min"] / 61' True "relative VO2peak from the body mass"
json_is 'd["ventilatory_check"]["agrees_with_vslope"]' True "ventilatory equivalents agree with the V-slope"
expect 0 "ramp show, human" ramp show 1
out_has "constant-power equivalent" "human output gives the constant-power equivalent"
expect 0 "window 15 s" --json ramp show 1 --window 15
json_is 'd["vo2peak_ml_min"] > 0' True "window option accepted"
expect 64 "window out of range" ramp show 1 --window 500

# manual choice: kept beside the automatic value and marked
expect 0 "ramp set" ramp set 1 --get-vo2 2400
expect 0 "show after set" --json ramp show 1
json_is 'd["get"]["status"], d["get"]["vo2_ml_min"], d["get"]["automatic"]["status"]' "('manual', 2400, 'found')" "manual GET used, automatic kept"
expect 0 "list marks it" ramp list C01
out_has "GET" "list shows the manual mark"
expect 0 "clear it" ramp set 1 --clear-get
expect 0 "show" --json ramp show 1
json_is 'd["get"]["status"]' found "automatic again after --clear-get"
expect 64 "set nothing" ramp set 1
expect 65 "set on a missing ramp" ramp set 99 --get-vo2 2400

# plots
expect 0 "V-slope plot" ramp plot 1 --kind vslope -o "$TMP/vs.svg"
xmllint --noout "$TMP/vs.svg" 2>/dev/null && pass "V-slope SVG is well-formed XML (xmllint)" || fail "V-slope SVG not well-formed"
expect 0 "ventilatory-equivalent plot" ramp plot 1 --kind veq -o "$TMP/veq.svg"
xmllint --noout "$TMP/veq.svg" 2>/dev/null && pass "ventilatory SVG is well-formed XML" || fail "veq SVG not well-formed"
expect 73 "plot to an impossible path" ramp plot 1 -o "$TMP/no/dir/x.svg"

# L/min columns are converted; a file without VE still gives VO2peak and says why there is no RCP
awk -F, 'NR == 1 { print "time_s,vo2_l_min,vco2_l_min,hr_bpm"; next } { printf "%s,%.4f,%.4f,%s\n", $1, $2 / 1000, $3 / 1000, $5 }' \
    "$DEMO/ramp_C01.csv" >"$TMP/litres.csv"
expect 0 "L/min file" --json ramp add C01 "$TMP/litres.csv" --date 2026-09-30 --rate 25 --start 30 --onset 180
expect 0 "show it" --json ramp show 2
json_is 'abs(d["vo2peak_ml_min"] - 3281) < 60, d["rcp"]["status"], d["rcp"]["reason"] is not None' "(True, 'not found', True)" "L/min converted; no VE: RCP not found, with a reason"

# every bad gas-exchange input: exit 65 with file:line:column, nothing stored
snapshot
head -1 "$DEMO/ramp_C01.csv" >"$TMP/h.csv"
{ cat "$TMP/h.csv"; sed -n 2,40p "$DEMO/ramp_C01.csv"; } >"$TMP/base.csv"
awk -F, 'NR == 1 { sub(/vo2_ml_min,/, "oxygen,"); print; next } { print }' "$TMP/base.csv" >"$TMP/nocol.csv"
expect 65 "missing VO2 column" ramp add C01 "$TMP/nocol.csv" --date 2026-09-30 --rate 25
err_has "nocol.csv:1:1: missing column 'vo2_ml_min'" "missing column named"
unchanged "missing column"
awk -F, 'BEGIN { OFS = "," } NR == 20 { $1 = 5 } { print }' "$TMP/base.csv" >"$TMP/backwards.csv"
expect 65 "time running backwards" ramp add C01 "$TMP/backwards.csv" --date 2026-09-30 --rate 25
err_has "backwards.csv:20:1: column 'time_s': time runs backwards" "backwards time located"
unchanged "backwards time"
awk -F, 'BEGIN { OFS = "," } NR == 12 { $2 = 25000 } { print }' "$TMP/base.csv" >"$TMP/absurd.csv"
expect 65 "absurd VO2" ramp add C01 "$TMP/absurd.csv" --date 2026-09-30 --rate 25
err_has "absurd.csv:12:2: column 'vo2_ml_min': VO2 must be between 50 and 10000 mL/min (got 25000)" "absurd VO2 located"
awk -F, 'BEGIN { OFS = "," } NR == 7 { $2 = -300 } { print }' "$TMP/base.csv" >"$TMP/negative.csv"
expect 65 "negative VO2" ramp add C01 "$TMP/negative.csv" --date 2026-09-30 --rate 25
err_has "negative.csv:7:2:" "negative VO2 located"
awk -F, 'BEGIN { OFS = "," } NR == 9 { $3 = "x7" } { print }' "$TMP/base.csv" >"$TMP/nan.csv"
expect 65 "a non-number" ramp add C01 "$TMP/nan.csv" --date 2026-09-30 --rate 25
err_has "nan.csv:9:3: column 'vco2_ml_min': 'x7' is not a number" "non-number located"
head -12 "$TMP/base.csv" >"$TMP/few.csv"
expect 65 "too few breaths" ramp add C01 "$TMP/few.csv" --date 2026-09-30 --rate 25
err_has "too few samples: 11 row(s), at least 30 are needed" "too few breaths explained"
unchanged "every rejected gas-exchange file"
expect 64 "onset outside the data" ramp add C01 "$TMP/base.csv" --date 2026-09-30 --rate 25 --onset 2:00:00
err_has "outside the file's times" "onset outside explained"
cut -d, -f1-5 "$TMP/base.csv" >"$TMP/nopower.csv"
expect 64 "rate missing (no power column)" ramp add C01 "$TMP/nopower.csv" --date 2026-09-30
expect 64 "rate out of range" ramp add C01 "$TMP/base.csv" --date 2026-09-30 --rate 900
expect 65 "unknown athlete" ramp add ZZ "$TMP/base.csv" --date 2026-09-30 --rate 25
expect 66 "missing file" ramp add C01 "$TMP/none.csv" --date 2026-09-30 --rate 25
unchanged "rejected options"
# a short file stores but cannot be analysed: exit 69 with the reason
expect 0 "a 39-breath file stores" ramp add C01 "$TMP/base.csv" --date 2026-09-30 --rate 25
expect 69 "too short to analyse" ramp show 3
expect 65 "show a missing ramp" ramp show 77

# ---- lactate ----
expect 0 "lactate add" --json lactate add C01 "$DEMO/lactate_C01.csv" --date 2026-10-01
expect 0 "lactate show" --json lactate show 1
json_is 'all(k in d for k in ("lt1_w","dmax_w","dmax_mod_w","obla_w"))' True "SPEC lactate keys"
json_is 'd["lt1_w"] < d["dmax_w"] < d["dmax_mod_w"] < d["obla_w"]' True "LT1 < Dmax < modified Dmax < 4 mmol/L on a typical curve"
json_is 'abs(d["obla_mmol_l"] - 4) < 1e-9 and d["obla_hr_bpm"] is not None' True "OBLA at 4 mmol/L with its heart rate"
expect 0 "lactate plot" lactate plot 1 -o "$TMP/la.svg"
xmllint --noout "$TMP/la.svg" 2>/dev/null && pass "lactate SVG well-formed" || fail "lactate SVG not well-formed"
printf 'power_w,lactate_mmol_l\n100,1.1\n150,1.3\n140,2.2\n200,4.5\n' >"$TMP/lac_bad.csv"
snapshot
expect 65 "stages not rising" lactate add C01 "$TMP/lac_bad.csv" --date 2026-10-02
err_has "lac_bad.csv:4:1: column 'power_w': stages must rise in intensity" "falling stage located"
printf 'power_w,lactate_mmol_l\n100,1.1\n150,1.3\n' >"$TMP/lac_few.csv"
expect 65 "two stages" lactate add C01 "$TMP/lac_few.csv" --date 2026-10-02
printf 'power_w,lactate_mmol_l\n100,1.1\n150,1.3\n200,60\n' >"$TMP/lac_abs.csv"
expect 65 "absurd lactate" lactate add C01 "$TMP/lac_abs.csv" --date 2026-10-02
err_has "lactate must be between 0.1 and 35 mmol/L (got 60)" "lactate range named"
unchanged "rejected lactate files"

# a reviewer's choice must lie within the ramp: stored choices the ramp never reaches would be unused
snapshot
expect 65 "GET above VO2peak" ramp set 1 --get-vo2 5000
err_has "a threshold must lie between" "the ramp's range named"
expect 65 "GET below the baseline" ramp set 1 --get-vo2 300
expect 65 "RCP below the GET" ramp set 1 --rcp-vo2 2000
err_has "is not above the GET" "RCP order explained"
unchanged "rejected reviewer's choices"
# a bad value in a short file is reported where it stands, before the count of rows
printf 'time_s,vo2_ml_min\n0,abc\n' >"$TMP/short_bad.csv"
expect 65 "a non-number in a two-line file" ramp add C01 "$TMP/short_bad.csv" --date 2026-09-30 --rate 25
err_has "short_bad.csv:2:2: column 'vo2_ml_min': 'abc' is not a number" "located at its field, not as too few rows"
