# cli_sessions.sh: sessions, the season curve, fits to the curve, 3-minute all-out tests and the
# W' balance of a recorded session, through the real binary on the demo files (demo/TRUTH.md) and
# hand-made ones; every bad file with its exit code and message, and the store left unchanged.
. "$CPDOMAIN_TESTS/cli/lib.sh"
DEMO="$CPDOMAIN_TESTS/../demo/data"   # invented demo data (demo/TRUTH.md)
REF="/usr/bin/python3 $CPDOMAIN_TESTS/ref/session_ref.py"
# py EXPR: evaluates a Python expression with json, math available; prints it
py() { /usr/bin/python3 -c "import json, math; print($1)"; }

expect 0 "init" init
expect 0 "demo athletes" athlete import "$DEMO/athletes.csv"
expect 0 "demo trials" trial import "$DEMO/trials.csv"

# ---- the demo sessions of C02 (files listed in the manifest), dates from the file names ----
C02_FILES=$(awk -F, '$1 == "session" && $2 == "C02" { print d "/" $3 }' d="$DEMO" "$DEMO/manifest.csv")
C02_DATES=$(awk -F, '$1 == "session" && $2 == "C02" { printf "%s%s", s, $4; s = "," }' "$DEMO/manifest.csv")
# shellcheck disable=SC2086
expect 0 "session add: the 27 C02 rides at once" --json session add C02 $C02_FILES
json_is 'd["added"], d["skipped_duplicates"], len(d["ids"]), d["id"] == d["ids"][0]' "(27, 0, 27, True)" "27 sessions added, ids listed"
json_is '",".join(s["date"] for s in d["sessions"])' "$C02_DATES" "every date read from its file name matches the manifest"
# TRUTH: 2 Sep has dropouts of 3 s and 2 s (filled) and 40 s (a split)
json_is '[(s["dropouts"], s["filled_s"], s["splits"], s["segments"]) for s in d["sessions"] if s["date"] == "2026-09-02"]' \
    "[(3, 5, 1, 2)]" "2 Sep: 3 dropouts, 5 s filled, the 40-s gap splits it in two"
# TRUTH: the cafe stops of 13 Sep and 24 Oct (about 20 min, the recording paused) split the ride
json_is '[s["splits"] for s in d["sessions"] if s["date"] in ("2026-09-13", "2026-10-24")]' "[1, 1]" "cafe stops split the rides"
json_is 'sum(s["spikes"] for s in d["sessions"]), {s["curve_points"] for s in d["sessions"] if s["date"] == "2026-10-04"}' \
    "(0, {3660})" "no spikes in the demo; a 2-h ride has the 3600 one-second points and 60 one-minute ones"
ID_0902=$(json '[s["id"] for s in d["sessions"] if s["date"] == "2026-09-02"][0]')
ID_0913=$(json '[s["id"] for s in d["sessions"] if s["date"] == "2026-09-13"][0]')
ID_RACE=$(json '[s["id"] for s in d["sessions"] if s["date"] == "2026-10-17"][0]')

# R02 from a folder: every *.csv inside in name order, other files ignored
mkdir "$TMP/r02"
cp "$DEMO"/session_R02_*.csv "$TMP/r02/"
echo "not a session" >"$TMP/r02/notes.txt"
expect 0 "session add: R02's 24 runs from a folder" --json session add R02 "$TMP/r02"
json_is 'd["added"], {s["modality"] for s in d["sessions"]}' "(24, {'speed'})" "24 speed sessions from the folder"
# TRUTH: auto-pauses of 12-50 s on 1 Sep, 6 Sep, 4 Oct, 25 Oct and 8 Nov; dropouts of 3, 2 and 25 s on 23 Sep and 11 Oct
json_is 'sorted(s["date"] for s in d["sessions"] if s["splits"])' \
    "['2026-09-01', '2026-09-06', '2026-09-23', '2026-10-04', '2026-10-11', '2026-10-25', '2026-11-08']" \
    "R02: the paused runs and the 25-s dropouts split"
ID_R02_RACE=$(json '[s["id"] for s in d["sessions"] if s["date"] == "2026-10-18"][0]')

# ---- duplicates: an identical file is skipped and counted, also twice in one command ----
snapshot
expect 0 "the same file again" --json session add C02 "$DEMO/session_C02_2026-09-02.csv"
json_is 'd["added"], d["skipped_duplicates"], d["skipped"][0]["duplicate_of"], d["id"]' "(0, 1, $ID_0902, None)" "duplicate skipped, the stored copy named"
err_has "skipped" "the skip is reported"
unchanged "a duplicate"
cp "$DEMO/session_C02_2026-09-05.csv" "$TMP/copy_2026-09-05.csv"
expect 0 "a copy under another name" --json session add C02 "$TMP/copy_2026-09-05.csv"
json_is 'd["added"], d["skipped_duplicates"]' "(0, 1)" "the duplicate check is by content, not by name"
expect 0 "an athlete without sessions" athlete add D1 --name "Duplicate Check" --sport cycling
expect 0 "one new file given twice" --json session add D1 "$DEMO/session_C02_2026-09-05.csv" "$DEMO/session_C02_2026-09-05.csv"
json_is 'd["added"], d["skipped_duplicates"], d["skipped"][0]["duplicate_of"] == d["ids"][0]' "(1, 1, True)" "the second copy in one command is skipped"
err_has "also stored for athlete C02" "a file stored for another athlete is pointed out"

# ---- list and show ----
expect 0 "session list" --json session list C02
json_is 'len(d["sessions"]), all(k in s for s in d["sessions"] for k in ("id", "date", "duration_s", "segments"))' "(27, True)" "list: 27 sessions with the SPEC keys"
json_is '[s["duration_s"] for s in d["sessions"] if s["date"] == "2026-09-05"]' "[5100]" "a 5100-row 1-Hz file lasts 5100 s"
expect 0 "session list, human" session list C02
out_has "2026-11-28" "the human list shows the last ride"
expect 0 "session show" --json session show "$ID_0902"
# the split falls where the file's time jumps by more than 6 s (awk on the CSV)
gap=$(awk -F, 'NR > 2 && $1 - prev > 6 { print prev + 1 "," $1 } { prev = $1 }' "$DEMO/session_C02_2026-09-02.csv")
json_is 'd["segments"], d["segment_list"][0]["start_s"] + d["segment_list"][0]["length_s"], d["segment_list"][1]["start_s"], d["dropout_detail"]["filled_s"], d["spike_detail"]["count"]' \
    "(2, ${gap%,*}, ${gap#*,}, 5, 0)" "2 Sep: two segments, split exactly at the 40-s gap"
json_is '[p["duration_s"] for p in d["curve"]]' "[120, 180, 900, 1800, 3600]" "show gives the curve at 2, 3, 15, 30 and 60 min (the tool's own durations)"
json_is 'd["curve"][4]["power_w"], d["max_power_w"]' "(None, 674)" "no 60-min point in a ride whose longest segment is 53 min"
# mean of the clean seconds: the file's rows plus the 5 filled seconds (numpy on the same CSV)
want=$(/usr/bin/python3 -c "
import numpy as np
t, p = np.loadtxt('$DEMO/session_C02_2026-09-02.csv', delimiter=',', skiprows=1, usecols=(0, 1), unpack=True)
x = list(p[:1])
for i in range(1, len(t)):
    g = t[i] - t[i - 1]
    if g <= 6:
        x += [p[i - 1] + (p[i] - p[i - 1]) * k / g for k in range(1, int(g))]
    x.append(p[i])
print(abs(np.mean(x) - $(json 'd["mean_power_w"]')) < 1e-9)")
[ "$want" = True ] && pass "mean power over the clean seconds matches numpy" || fail "mean power differs from numpy"
expect 0 "session show, human" session show "$ID_0902"
out_has "5 s filled across gaps of up to 5 s, 1 split" "the human show explains the dropouts"

# ---- the season curve: keys, and points against a brute-force computation ----
expect 0 "curve" --json curve C02
json_is 'd["modality"], d["sessions"], len(d["points"]), all(set(p) >= {"duration_s", "power_w", "session", "date"} for p in d["points"])' \
    "('power', 27, 3660, True)" "SPEC keys on every point; 3600 + 60 points"
json_is '[p["duration_s"] for p in d["points"][:3]], d["points"][3599]["duration_s"], d["points"][3600]["duration_s"]' \
    "([1, 2, 3], 3600, 3660)" "every second to 60 min, then every minute"
# numpy brute force (tests/ref/session_ref.py) over the same 27 CSVs: the best 300-s mean and its file
# shellcheck disable=SC2086
$REF best 300 $C02_FILES >"$TMP/best300"
bestv=$(awk '$1 == "best" { print $3 }' "$TMP/best300")
bestf=$(awk '$1 == "best" { n = split($2, a, "_"); print substr(a[n], 1, 10) }' "$TMP/best300")
json_is "abs(d['points'][299]['power_w'] - $bestv) <= 1e-9 * $bestv, d['points'][299]['date']" "(True, '$bestf')" \
    "the 5-min point equals numpy's best 300-s mean, from the same ride"
# the same for every standard duration against the session that gave it
for dur in 60 720 1200; do
    sid=$(json "d['points'][$dur - 1]['session']")
    v=$(json "d['points'][$dur - 1]['power_w']")
    f=$(sql "$DB" "SELECT source_file FROM session WHERE id = $sid")
    r=$($REF best "$dur" "$f" | awk '$1 == "best" { print $3 }')
    [ "$(py "abs($v - $r) <= 1e-9 * $r")" = True ] && pass "the ${dur}-s point equals numpy's on its session" || fail "${dur}-s point $v, numpy $r"
done
# TRUTH: the field tests' efforts (truth.csv effort_*_mean) are the season's best at 3 and 12 min before 27 Sep
expect 0 "curve, first block" --json curve C02 --to 2026-09-27
json_is 'd["sessions"], round(d["points"][179]["power_w"], 3), round(d["points"][719]["power_w"], 3), d["points"][179]["date"]' \
    "(8, 370.706, 290.676, '2026-09-05')" "the 3-min and 12-min bests are the written field-test efforts (truth.csv)"
expect 0 "curve, human" curve C02
out_has "20:00" "the human table lists standard durations"
expect 0 "curve of a runner" --json curve R02
json_is '"speed_m_s" in d["points"][0] and "power_w" not in d["points"][0]' True "speed curve keyed speed_m_s"

# the gap rules on a hand-made ride: 100 W, two 150-s blocks at 400 W around an 11-s gap (a split:
# no 5-min effort may span it), and 300 s at 350 W with 3 missing samples (filled)
awk 'BEGIN { print "time_s,power_w"
    for (t = 0; t < 2000; t++) {
        if (t >= 650 && t < 660) continue
        if (t >= 1300 && t < 1303) continue
        p = 100
        if ((t >= 500 && t < 650) || (t >= 660 && t < 810)) p = 400
        if (t >= 1200 && t < 1500) p = 350
        print t "," p } }' >"$TMP/gaps_2026-10-05.csv"
expect 0 "a hand-made ride with gaps" athlete add G1 --name "Gap Rules"
expect 0 "store it" --json session add G1 "$TMP/gaps_2026-10-05.csv"
expect 0 "its curve" --json curve G1
r=$($REF best 300 "$TMP/gaps_2026-10-05.csv" | awk '$1 == "best" { print $3 }')
json_is "d['points'][299]['power_w'] == 350 == $r" True "5 min: 350 W across the filled gap, not 400 W across the split (numpy agrees)"
json_is "d['points'][149]['power_w'], round(d['points'][150]['power_w'], 9) == round((150 * 400 + 100) / 151, 9)" "(400, True)" \
    "150 s at 400 W; the best 151 s take one second at 100 W, never the other block across the split"

# ---- fit --source curve: a field estimate close to the demo's truth ----
expect 0 "fit to the curve, first block" --json fit C02 --source curve --to 2026-09-27
json_is 'd["source"], d["field_estimate"], "field_estimate" in d["flags"], len(d["models"])' "('curve', True, True, 4)" "flagged as a field estimate"
# TRUTH: P = W'/t + CP on the 3, 5, 12, 20-min points of the rides before 27 Sep: 264.0 W, 19.2 kJ
json_is '[round(m["cp"], 1) for m in d["models"] if m["model"] == "linear-inverse"], [round(m["w_prime"] / 1000, 1) for m in d["models"] if m["model"] == "linear-inverse"]' \
    "([264.0], [19.2])" "linear-inverse CP 264.0 W, W' 19.2 kJ as in demo/TRUTH.md"
json_is 'abs(d["models"][0]["cp"] - 264) < 1, [t["duration_s"] for t in d["models"][2]["trials"]]' "(True, [180, 720, 300, 1200])" \
    "every model near 264 W; the points are 3, 5, 12 and 20 min, oldest first"
json_is '{t["id"] for t in d["models"][2]["trials"]}, len({t["session"] for t in d["models"][2]["trials"]})' "({None}, 2)" \
    "each point names its session (two field tests), not a trial"
fid=$(json 'd["fit_id"]')
v=$(sql "$DB" "SELECT source || ' ' || n || ' ' || (SELECT count(*) FROM fit_trial WHERE run_id = $fid) || ' ' || (CASE WHEN flags LIKE '%field_estimate%' THEN 1 ELSE 0 END) FROM fit_run WHERE id = $fid")
[ "$v" = "curve 4 0 1" ] && pass "saved with source 'curve', 4 points, no trial ids, flagged" || fail "saved fit: '$v'"
v=$(sql "$DB" "SELECT count(*) FROM fit_model WHERE run_id = $fid AND detail LIKE '%\"session\":%'")
[ "$v" = 4 ] && pass "each saved model's detail names the sessions of its points" || fail "details with sessions: $v"
expect 0 "fit to the curve, second block" --json fit C02 --source curve --from 2026-11-01
# TRUTH: rides from 1 Nov: 283.6 W, 18.5 kJ
json_is '[(round(m["cp"], 1), round(m["w_prime"] / 1000, 1)) for m in d["models"] if m["model"] == "linear-inverse"]' \
    "[(283.6, 18.5)]" "second block: 283.6 W, 18.5 kJ as in demo/TRUTH.md"
expect 0 "fit to the runner's curve" --json fit R02 --source curve
# TRUTH: R02 4.72 m/s, 150 m (rounded there to 2 decimals and to 5 m here: the generator's check)
json_is '[(round(m["cs"], 2), 5 * round(m["d_prime"] / 5)) for m in d["models"] if m["model"] == "linear-inverse"]' \
    "[(4.72, 150)]" "R02: CS 4.72 m/s, D' 150 m as in demo/TRUTH.md"
expect 0 "fit to the curve, human" fit C02 --source curve --durations 3min,5min,12min
out_has "field estimate" "the human fit says field estimate"
out_has "session" "the human table names sessions"
expect 0 "three durations" --json fit C02 --source curve --durations 180,5:00,12min
json_is 'd["models"][0]["n"], "long_trial" in d["flags"]' "(3, False)" "--durations picks the points (no 20-min point, no long flag)"
snapshot
expect 64 "--durations without --source curve" fit C02 --durations 3min,5min
expect 64 "an unknown source" fit C02 --source sessions
expect 64 "one duration" fit C02 --source curve --durations 5min
err_has "at least 2 durations" "too few durations explained"
expect 64 "a duration off the grid" fit C02 --source curve --durations 3min,61:30
err_has "'61:30' is not a whole-second duration of the curve" "off-grid duration named"
expect 69 "a duration longer than the curve" fit C02 --source curve --durations 5min,3h
err_has "the curve has no 3:00:00 point" "too long explained"
expect 69 "an athlete without sessions" fit C01 --source curve
err_has "C01 has no sessions" "no sessions explained"
expect 69 "no sessions in the dates" fit C02 --source curve --from 2026-12-01
unchanged "rejected curve fits"

# ---- the 3-minute all-out test ----
expect 0 "allout add, C01" --json allout add C01 "$DEMO/allout_C01.csv" --date 2026-11-09
AO1=$(json 'd["id"]')
expect 0 "allout show" --json allout show "$AO1"
# TRUTH: mean of the final 30 s 237.3 W, sum of max(P - EP, 0) 15 719 J
json_is 'round(d["end_power_w"], 1), round(d["work_above_end_j"])' "(237.3, 15719)" "C01: 237.3 W and 15 719 J as in demo/TRUTH.md"
json_is 'd["all_out"], d["flags"], "W′" in d["caution"] and "critical power" in d["caution"]' "(True, [], True)" "all-out; the caution about W' is given"
# the arithmetic by numpy on the file itself (SPEC: final-30-s mean; integral of max(P - EP, 0))
want=$(/usr/bin/python3 -c "
import numpy as np
p = np.loadtxt('$DEMO/allout_C01.csv', delimiter=',', skiprows=1, usecols=1)
ep = p[150:].mean(); print(repr(ep), repr(np.maximum(p - ep, 0).sum()))")
json_is "abs(d['end_power_w'] - ${want% *}) < 1e-9, abs(d['work_above_end_j'] - ${want#* }) < 1e-6" "(True, True)" "end power and work above it equal numpy's"
expect 0 "allout add, C05" allout add C05 "$DEMO/allout_C05.csv" --date 2026-10-22
AO5=$(sql "$DB" "SELECT max(id) FROM session WHERE kind = 'allout'")
expect 0 "allout show C05" --json allout show "$AO5"
json_is 'round(d["end_power_w"], 1), round(d["work_above_end_j"])' "(310.0, 23039)" "C05: 310.0 W and 23 039 J as in demo/TRUTH.md"
expect 0 "allout show, human" allout show "$AO1"
out_has "end power        237.3 W" "human: end power"
out_has "Treat this W′ as approximate" "human: the published caution"
expect 0 "allout list" --json allout list C01
json_is 'len(d["allouts"]), round(d["allouts"][0]["end_power_w"], 1)' "(1, 237.3)" "allout list"
expect 0 "sessions and all-out tests are apart" --json session list C01
json_is 'd["sessions"]' "[]" "an all-out test is not a session"
snapshot
expect 0 "the same all-out file again" --json allout add C01 "$DEMO/allout_C01.csv" --date 2026-11-09
json_is 'd["id"], d["duplicate"]' "($AO1, True)" "a duplicate all-out test is skipped"
unchanged "a duplicate all-out test"
# hand-made: 20 s at 700 W, 130 s at 400 W, 30 s at 300 W; EP = 300 W; work above = 20*400 + 130*100 J
awk 'BEGIN { print "time_s,power_w"; for (t = 1; t <= 180; t++) print t "," (t <= 20 ? 700 : t <= 150 ? 400 : 300) }' >"$TMP/ao_hand.csv"
expect 0 "a hand-made all-out file" --json allout add G1 "$TMP/ao_hand.csv" --date 2026-10-06
json_is 'd["end_power_w"], d["work_above_end_j"], d["all_out"]' "(300, 21000, True)" "hand-made: 300 W and 21 000 J exactly"
# a paced test that also stops: flagged in plain words
awk 'BEGIN { print "time_s,power_w"; for (t = 1; t <= 180; t++) print t "," (t == 90 ? 0 : 320) }' >"$TMP/ao_paced.csv"
expect 0 "a paced all-out file" --json allout add G1 "$TMP/ao_paced.csv" --date 2026-10-07
json_is 'd["all_out"], d["flags"]' "(False, ['paced', 'stopped'])" "paced and stopped: flagged"
expect 0 "show the paced test" allout show "$(json 'd["id"]')"
out_has "looks paced rather than all-out" "the paced flag in plain English"
# with a warm-up before the test: --start
awk 'BEGIN { print "time_s,power_w"; for (t = 0; t < 300; t++) print t "," (t < 120 ? 150 : t < 140 ? 700 : t < 270 ? 400 : 300) }' >"$TMP/ao_warm.csv"
expect 0 "an all-out test after a warm-up" --json allout add G1 "$TMP/ao_warm.csv" --date 2026-10-08 --start 2:00
json_is 'd["end_power_w"], d["work_above_end_j"]' "(300, 21000)" "--start: the test from 2:00"
snapshot
head -101 "$TMP/ao_hand.csv" >"$TMP/ao_short.csv"
expect 69 "an all-out file of 100 s" allout add G1 "$TMP/ao_short.csv" --date 2026-10-09
err_has "needs 180 s" "too short explained"
awk 'BEGIN { print "time_s,power_w"; for (t = 1; t <= 180; t++) if (t < 60 || t > 75) print t "," 400 }' >"$TMP/ao_gap.csv"
expect 69 "an all-out file with a 16-s gap" allout add G1 "$TMP/ao_gap.csv" --date 2026-10-09
err_has "break off in a gap" "a gap in the test explained"
awk -F, 'BEGIN { OFS = "," } NR == 1 { $2 = "speed_m_s" } { print }' "$TMP/ao_hand.csv" >"$TMP/ao_speed.csv"
expect 65 "an all-out file of speed" allout add G1 "$TMP/ao_speed.csv" --date 2026-10-09
err_has "ao_speed.csv:1:1: missing column 'power_w'" "the all-out test needs power"
expect 64 "allout add without a date" allout add G1 "$TMP/ao_short.csv"
expect 65 "show a session as an all-out test" allout show "$ID_0902"
unchanged "rejected all-out files"

# ---- predict --session: the W' balance of a recorded ride ----
# An athlete with exact trials on C02's race-day hyperbola (truth.csv: CP 277.524 W, W' 19 166.7 J,
# interpolated 20/42 of the way from 27 Sep to 8 Nov): P = CP + W'/t for t = 3, 6 and 12 min
cp=$(py "268 + 20 * 20 / 42"); wp=$(py "19500 - 700 * 20 / 42")
printf 'athlete,date,power_w,duration_s\n' >"$TMP/race_trials.csv"
for t in 180 360 720; do
    printf 'X1,2026-10-1%s,%s,%s\n' "$((t / 180))" "$(py "repr($cp + $wp / $t)")" "$t" >>"$TMP/race_trials.csv"
done
expect 0 "the race-day rider" athlete add X1 --name "Race Day"
expect 0 "exact trials" trial import "$TMP/race_trials.csv"
expect 0 "the race file for X1" session add X1 "$DEMO/session_C02_2026-10-17.csv"
XR=$(sql "$DB" "SELECT max(id) FROM session WHERE kind = 'session'")
expect 0 "predict --session, the race" --json predict X1 --session "$XR" --model linear-total
json_is 'all(k in d for k in ("balance_model", "min_balance_j", "min_balance_at_s", "end_balance_j", "failure_at_s"))' True "the SPEC keys of --protocol"
# TRUTH: the differential balance on the written powers has its minimum of 1151 J (6 %) at second 5485
json_is 'd["min_balance_at_s"], abs(d["min_balance_j"] - 1150.72) < 1, round(100 * d["min_balance_j"] / d["w_prime"]), d["failure_at_s"]' \
    "(5485, True, 6, None)" "race: lowest 1151 J (6 % of W') at second 5485, as in demo/TRUTH.md"
# the same race against C02's own fit current on race day: the trials up to 2026-10-17, the first
# block (demo/TRUTH.md: CP 268 W); its W' comes out low (17.7 kJ against 19.5 true), so the replay
# dips below zero near the finish although the rider finished: the lowest point is the same second
expect 0 "predict --session on C02's own race" --json predict C02 --session "$ID_RACE"
json_is 'd["session"], d["date"], abs(d["cp"] - 268) < 10, d["min_balance_at_s"]' "($ID_RACE, '2026-10-17', True, 5485)" \
    "C02's race replayed against the fit current on race day (first block), lowest at second 5485"
json_is 'd["uncertainty"]["cp_low"] is not None and d["uncertainty"]["cp_high"] is not None' True "the replay carries the fit's uncertainty"
r=$($REF balance "$(json 'd["cp"]')" "$(json 'd["w_prime"]')" "$DEMO/session_C02_2026-10-17.csv")
set -- $r
json_is "abs(d['min_balance_j'] - $2) < 1e-6 * d['w_prime'], d['min_balance_at_s'] == $3, abs(d['end_balance_j'] - $4) < 1e-6 * d['w_prime'], d['duration_s'] == $5" \
    "(True, True, True, True)" "the replay equals an independent numpy balance on the same CSV"
# a ride with a 20-min cafe stop: the pause counts as rest at 0 W (numpy with the gap at zero agrees)
expect 0 "predict --session across a pause" --json predict C02 --session "$ID_0913" --trace "$TMP/trace.csv"
set -- $($REF balance "$(json 'd["cp"]')" "$(json 'd["w_prime"]')" "$DEMO/session_C02_2026-09-13.csv")
json_is "abs(d['min_balance_j'] - $2) < 1e-6 * d['w_prime'], d['min_balance_at_s'] == $3, abs(d['end_balance_j'] - $4) < 1e-6 * d['w_prime'], d['gaps'], d['gap_s']" \
    "(True, True, True, 1, 1254)" "a pause is a gap at 0 W: numpy agrees; the 1254-s gap is reported"
rows=$(($(wc -l <"$TMP/trace.csv") - 1))
[ "$rows" = "$(json 'd["duration_s"]')" ] && [ "$(head -1 "$TMP/trace.csv")" = "time_s,power_w,balance_j" ] &&
    pass "the trace has one row per second" || fail "trace: $rows rows"
# the runner's race: TRUTH CS 4.75 m/s, D' 150 m: lowest 10.3 m (6.9 %) at second 3246, the finish
printf 'athlete,date,speed_m_s,duration_s\nX2,2026-10-10,%s,180\nX2,2026-10-12,%s,600\nX2,2026-10-14,%s,1200\n' \
    "$(py 'repr(4.75 + 150 / 180)')" "$(py 'repr(4.75 + 150 / 600)')" "$(py 'repr(4.75 + 150 / 1200)')" >"$TMP/run_trials.csv"
expect 0 "the race-day runner" athlete add X2 --name "Race Day Runner" --sport running
expect 0 "exact runner trials" trial import "$TMP/run_trials.csv"
expect 0 "the 10 km race for X2" session add X2 "$DEMO/session_R02_2026-10-18.csv"
XR2=$(sql "$DB" "SELECT max(id) FROM session WHERE kind = 'session'")
expect 0 "predict --session, the 10 km" --json predict X2 --session "$XR2" --model linear-total
json_is 'd["min_balance_at_s"], round(d["min_balance_m"], 1), "min_balance_j" in d' "(3246, 10.3, False)" "10 km: lowest 10.3 m of D' at second 3246 (demo/TRUTH.md)"
expect 0 "predict --session, human" predict X1 --session "$XR" --model linear-total
out_has "lowest balance 1.15 kJ (6 % of W') at 1:31:25 (second 5485)" "human: the lowest point as a share of W'"
out_has "lowest in block" "human: the session in 10-min blocks"
expect 0 "predict --session, integral model" --json predict X1 --session "$XR" --model linear-total --balance-model integral
json_is 'd["balance_model"], d["tau_s"] > 316' "('integral', True)" "the integral model gives its recovery time constant"
expect 0 "R02's own race" predict R02 --session "$ID_R02_RACE"
head -61 "$DEMO/session_C02_2026-09-05.csv" >"$TMP/bike_2026-10-02.csv"
expect 0 "a power session for the runner" session add R02 "$TMP/bike_2026-10-02.csv"
RBIKE=$(sql "$DB" "SELECT max(id) FROM session WHERE kind = 'session'")
snapshot
expect 65 "a session of another athlete" predict X1 --session "$ID_0902"
err_has "belongs to C02" "the owner named"
expect 64 "a power session for a speed fit" predict R02 --session "$RBIKE"
err_has "is in power but R02's fit is in speed" "the modality mismatch explained"
expect 65 "a session that does not exist" predict C02 --session 9999
expect 64 "--session with --protocol" predict C02 --session "$ID_0902" --protocol "10min@200W"
expect 64 "a bad session id" predict C02 --session two
expect 64 "--source belongs to fit" predict C02 --session "$ID_0902" --source curve
unchanged "rejected predictions"

# ---- every bad file: exit code, file:line:column message, store unchanged ----
snapshot
base="$TMP/base_2026-10-20.csv"
head -61 "$DEMO/session_C02_2026-09-05.csv" >"$base"
awk -F, 'BEGIN { OFS = "," } NR == 30 { $1 = 5 } { print }' "$base" >"$TMP/backwards_2026-10-20.csv"
expect 65 "time running backwards" session add C02 "$TMP/backwards_2026-10-20.csv"
err_has "backwards_2026-10-20.csv:30:1: column 'time_s': time runs backwards: 5 s after 27 s on the row before" "backwards time located"
err_has "nothing was stored" "the command says nothing was stored"
awk -F, 'BEGIN { OFS = "," } NR == 12 { $2 = "n/a" } { print }' "$base" >"$TMP/nan_2026-10-20.csv"
expect 65 "a non-number" session add C02 "$TMP/nan_2026-10-20.csv"
err_has "nan_2026-10-20.csv:12:2: column 'power_w': 'n/a' is not a number" "non-number located"
awk -F, 'BEGIN { OFS = "," } NR == 9 { $2 = -40 } { print }' "$base" >"$TMP/neg_2026-10-20.csv"
expect 65 "a negative power" session add C02 "$TMP/neg_2026-10-20.csv"
err_has "neg_2026-10-20.csv:9:2: column 'power_w': power must be 0 W or more (got -40)" "negative power located"
awk -F, 'BEGIN { OFS = "," } NR == 7 { $3 = 320 } { print }' "$base" >"$TMP/hr_2026-10-20.csv"
expect 65 "a heart rate of 320" session add C02 "$TMP/hr_2026-10-20.csv"
err_has "hr_2026-10-20.csv:7:3: column 'hr_bpm': heart rate must be between 0 and 250 beats/min (got 320)" "heart rate out of range located"
awk -F, 'BEGIN { OFS = "," } NR == 5 { $4 = "" } { print }' "$base" >"$TMP/blank_2026-10-20.csv"
expect 65 "a blank cadence" session add C02 "$TMP/blank_2026-10-20.csv"
err_has "blank_2026-10-20.csv:5:4: column 'cadence_rpm': missing value" "blank cell located"
: >"$TMP/empty_2026-10-20.csv"
expect 65 "an empty file" session add C02 "$TMP/empty_2026-10-20.csv"
err_has "empty_2026-10-20.csv:1:1: the file is empty" "empty file explained"
head -1 "$base" >"$TMP/header_2026-10-20.csv"
expect 65 "a header and no rows" session add C02 "$TMP/header_2026-10-20.csv"
err_has "header_2026-10-20.csv:1:1: the file has a header but no samples" "no samples explained"
head -2 "$base" >"$TMP/one_2026-10-20.csv"
expect 65 "a single row" session add C02 "$TMP/one_2026-10-20.csv"
err_has "one_2026-10-20.csv:2:1: the file has a single sample, which spans no time" "one row explained"
printf 'time_s,power_w\n5,200\n5,210\n5,190\n' >"$TMP/instant_2026-10-20.csv"
expect 65 "every row at one time" session add C02 "$TMP/instant_2026-10-20.csv"
err_has "instant_2026-10-20.csv:4:1: column 'time_s': every sample has the same time" "one instant explained"
awk -F, 'BEGIN { OFS = "," } NR == 1 { $2 = "watts" } { print }' "$base" >"$TMP/nocol_2026-10-20.csv"
expect 65 "no power or speed column" session add C02 "$TMP/nocol_2026-10-20.csv"
err_has "nocol_2026-10-20.csv:1:1: missing column: one of power_w or speed_m_s is needed" "missing column named"
expect 0 "--map reads another header" --json session add D1 "$TMP/nocol_2026-10-20.csv" --map power_w=watts
json_is 'd["added"]' 1 "--map power_w=watts"
snapshot
expect 64 "--map names a header the file lacks" session add C02 "$base" --map power_w=Leistung
printf 'time_s,power_w\n0,3000\n1,2900\n2,4100\n' >"$TMP/spikes_2026-10-20.csv"
expect 65 "nothing but spikes" session add C02 "$TMP/spikes_2026-10-20.csv"
err_has "every value is above the spike limit of 2500 W" "all spikes explained"
printf 'time_s,power_w\n0,200\n700000,210\n' >"$TMP/week_2026-10-20.csv"
expect 65 "a file longer than 7 days" session add C02 "$TMP/week_2026-10-20.csv"
err_has "week_2026-10-20.csv:3:1: column 'time_s': the file spans 700000 s (8.102 days), more than the 7 days" "too long explained"
printf 'time_s,power_w\n0,200\n1:00,abc\n' >"$TMP/hms_2026-10-20.csv"
expect 65 "h:mm:ss times, then a bad value" session add C02 "$TMP/hms_2026-10-20.csv"
err_has "hms_2026-10-20.csv:3:2:" "the bad value after an m:ss time located"
printf 'time_s,power_w\n0,200\nlater,210\n' >"$TMP/time_2026-10-20.csv"
expect 65 "a time that is not a time" session add C02 "$TMP/time_2026-10-20.csv"
err_has "time_2026-10-20.csv:3:1: column 'time_s': 'later' is not a time" "bad time located"
printf 'time_s,power_w\n0,200\n1,"210\n' >"$TMP/quote_2026-10-20.csv"
expect 65 "an unclosed quote" session add C02 "$TMP/quote_2026-10-20.csv"
err_has "quote_2026-10-20.csv:3:2: malformed CSV" "malformed CSV located"
# one bad file among good ones rejects them all
cp "$DEMO/session_C02_2026-09-05.csv" "$TMP/good1_2026-10-21.csv"
printf 'time_s,power_w\n0,150\n1,151\n2,152\n' >"$TMP/good2_2026-10-22.csv"
expect 65 "two good files and a bad one" session add D1 "$TMP/good2_2026-10-22.csv" "$TMP/backwards_2026-10-20.csv" "$TMP/good1_2026-10-21.csv"
err_has "backwards_2026-10-20.csv:30:1:" "the bad file is named"
expect 66 "a missing file" session add C02 "$TMP/none_2026-10-20.csv"
mkdir "$TMP/nocsv"
expect 66 "a folder without CSV files" session add C02 "$TMP/nocsv"
err_has "has no .csv files" "empty folder explained"
cp "$base" "$TMP/nodate.csv"
expect 64 "no date anywhere" session add C02 "$TMP/nodate.csv"
err_has "nodate.csv: no date: give --date" "no date explained"
expect 64 "a date in the future" session add C02 "$TMP/nodate.csv" --date 2027-01-01
cp "$base" "$TMP/ride_2027-05-01.csv"
expect 64 "a future date in the name" session add C02 "$TMP/ride_2027-05-01.csv"
expect 65 "an unknown athlete" session add NOBODY "$base"
expect 64 "--spike-limit 0" session add C02 "$base" --spike-limit 0
expect 64 "a bad modality" session add C02 "$base" --modality heart
expect 65 "speed asked of a power file" session add C02 "$base" --modality speed
err_has "missing column 'speed_m_s'" "the missing speed column named"
expect 64 "session add without a file" session add C02
expect 65 "session show of a missing id" session show 9999
expect 64 "session show of a bad id" session show x
unchanged "every rejected session file"

# ---- spikes are reported and dropped; a 24-h file works ----
awk 'BEGIN { print "time_s,power_w"; for (t = 0; t < 600; t++) print t "," (t == 100 || t == 101 ? 3100 : t == 400 ? 2800 : 200 + (t % 7)) }' >"$TMP/spiky_2026-10-23.csv"
expect 0 "a file with spikes" --json session add G1 "$TMP/spiky_2026-10-23.csv"
json_is 'd["sessions"][0]["spikes"], d["sessions"][0]["segments"]' "(3, 1)" "3 spikes dropped, their seconds filled"
expect 0 "show the spikes" --json session show "$(json 'd["id"]')"
json_is 'd["spike_detail"]["count"], d["spike_detail"]["max"], d["spike_detail"]["first_at_s"], d["max_power_w"]' "(3, 3100, 100, 206)" "spike count, highest and first; the highest clean second is 206 W"
expect 0 "spikes with a higher limit" --json session add D1 "$TMP/spiky_2026-10-23.csv" --spike-limit 3000
json_is 'd["sessions"][0]["spikes"]' 2 "--spike-limit 3000 keeps the 2800-W second"
awk 'BEGIN { print "time_s,power_w,hr_bpm"; for (t = 0; t < 86400; t++) print t "," 120 + (t * 7919) % 61 "," 110 }' >"$TMP/day_2026-10-24.csv"
expect 0 "a 24-h file" --json session add G1 "$TMP/day_2026-10-24.csv"
json_is 'd["sessions"][0]["duration_s"], d["sessions"][0]["curve_points"]' "(86400, 4980)" "24 h: 86 400 s, 3600 + 1380 curve points"
expect 0 "show the 24-h file" --json session show "$(json 'd["id"]')"
r=$($REF best 3600 "$TMP/day_2026-10-24.csv" | awk '$1 == "best" { print $3 }')
json_is "abs(d['curve'][4]['power_w'] - $r) < 1e-9 * $r" True "its 60-min point equals numpy's"

# ---- many files: a summary, no progress line when stderr is not a terminal ----
mkdir "$TMP/many"
for k in 01 02 03 04 05 06 07 08 09 10 11 12; do
    awk -v k="$k" 'BEGIN { print "time_s,power_w"; for (t = 0; t < 120; t++) print t "," 150 + k + t % 5 }' >"$TMP/many/r_2026-09-$k.csv"
done
expect 0 "twelve files" session add G1 "$TMP/many"
err_has "G1: 12 sessions added" "a summary of the batch"
if grep -q "$(printf '\r')" "$TMP/err"; then fail "a progress line although stderr is a file"; else pass "no progress line when stderr is not a terminal"; fi
# on a terminal (a pseudo-terminal from util-linux script(1)) one progress line counts the files
if command -v script >/dev/null 2>&1; then
    script -qc "'$BIN' --db '$DB' session add G1 '$TMP/many' >/dev/null" /dev/null >"$TMP/tty" 2>&1
    if grep -q "$(printf '\r')session add: file 12 of 12" "$TMP/tty" && grep -q "12 duplicates skipped" "$TMP/tty"; then
        pass "a progress line on a terminal, then the summary"
    else fail "no progress line on a terminal" "$(head -c 300 "$TMP/tty")"; fi
fi

# ---- remove ----
expect 0 "session remove" session remove "$ID_0902"
expect 65 "removed" session show "$ID_0902"
v=$(sql "$DB" "SELECT count(*) FROM session_channel WHERE session_id = $ID_0902")
[ "$v" = 0 ] && pass "its samples went with it" || fail "$v channels left"
expect 0 "allout remove" allout remove "$AO5"
expect 65 "allout remove of a session id" allout remove "$ID_0913"

# ---- help ----
for c in "session add" "session list" "session show" "allout add" "allout show" "curve"; do
    # shellcheck disable=SC2086
    expect 0 "$c --help" $c --help
    out_has "example" "$c --help has an example"
done
expect 0 "session show --help" session show --help
out_has "3-minute all-out test; 15 min, the longest effort of the CP window" "session show's help states where its durations come from"

# ---- a version-3 store (before sessions) is upgraded and takes sessions ----
if sqlite_only "a version-3 SQLite file is upgraded" 2; then
    OLD="$TMP/v3.db"
    sqlite3 "$OLD" <"$CPDOMAIN_TESTS/../db/schema.sql"
    sqlite3 "$OLD" <"$CPDOMAIN_TESTS/../db/002_fits.sql"
    sqlite3 "$OLD" <"$CPDOMAIN_TESTS/../db/003_gas_exchange.sql"
    sqlite3 "$OLD" "PRAGMA user_version = 3; INSERT INTO athlete (code, name) VALUES ('V3', 'Version Three');"
    ${VALGRIND:-} "$BIN" --db "$OLD" --json session add V3 "$DEMO/session_C02_2026-09-05.csv" >"$TMP/out" 2>"$TMP/err"
    RC=$?
    [ "$RC" = 0 ] && pass "a version-3 store takes a session" || fail "v3 store: exit $RC" "$(cat "$TMP/err")"
    v=$(sqlite3 "$OLD" "PRAGMA user_version")
    [ "$v" -ge 4 ] && pass "the store was upgraded to version $v" || fail "store at version $v"
fi
