# test_fit.sh: 'fit' and 'predict' through the real binary: SPEC keys, saved fits, exact-data
# identities, speed renaming, predictions and their bad inputs.
. "$CPDOMAIN_TESTS/cli/lib.sh"

expect 0 "init" init
expect 0 "a cyclist" athlete add X1 --name "Exact Data" --mass 70
# the 2-parameter identity (derived) (derived identity, not published data): CP 250 W, W' 20 000 J,
# P = 400, 350, 310, 280 W -> t = 133.333, 200, 333.333, 666.667 s
printf 'athlete,date,power_w,duration_s\nX1,2026-09-01,400,133.33333333333334\nX1,2026-09-03,350,200\nX1,2026-09-05,310,333.3333333333333\nX1,2026-09-07,280,666.6666666666666\n' >"$TMP/exact.csv"
expect 0 "import exact trials" trial import "$TMP/exact.csv"
expect 0 "fit all models" --json fit X1 --model all
json_is 'd["athlete"], d["modality"], len(d["models"])' "('X1', 'power', 4)" "fit names athlete, modality and four models"
json_is 'all({"model","cp","cp_se","cp_ci95","w_prime","w_prime_se","w_prime_ci95","see_cp_pct","see_w_prime_pct","rss","n","aicc","flags"} <= set(m) for m in d["models"])' True "every model carries the SPEC keys"
json_is '"p_max" in d["models"][3] and "p_max_se" in d["models"][3] and "p_max" not in d["models"][0]' True "p_max only for three-parameter"
json_is '[abs(m["cp"] - 250) < 1e-6 for m in d["models"][:3]]' "[True, True, True]" "exact data: every 2-parameter model returns CP 250 W"
json_is '[abs(m["w_prime"] - 20000) < 1e-3 for m in d["models"][:3]]' "[True, True, True]" "exact data: W' 20000 J"
json_is 'd["models"][3]["ok"] is False or "p_max_unidentifiable" in d["models"][3]["flags"]' True "three-parameter degenerate case reported, not a result"
json_is 'isinstance(d["fit_id"], int) and "best_rule" in d' True "fit id and rule reported"
n=$(sql "$DB" "SELECT count(*) FROM fit_run r JOIN fit_trial t ON t.run_id = r.id WHERE r.id = (SELECT max(id) FROM fit_run)")
[ "$n" = 4 ] && pass "the saved fit lists the four trials it used" || fail "saved fit has $n trials"
m=$(sql "$DB" "SELECT count(*) FROM fit_model WHERE run_id = (SELECT max(id) FROM fit_run) AND detail LIKE '{%'")
[ "$m" = 4 ] && pass "all four models saved with their JSON detail" || fail "saved models: $m"
v=$(sql "$DB" "SELECT tool_version FROM fit_run ORDER BY id DESC LIMIT 1")
case "$v" in 0.*) pass "tool version saved";; *) fail "tool version '$v'";; esac

expect 0 "human fit" fit X1
out_has "hyperbolic" "human table lists the models"
out_has "best:" "human output names the best model"

# the 2-parameter identity (derived): CP 250 W, W' 20 kJ, P 400 W -> 133.3 s
expect 0 "predict at 400 W" --json predict X1 --power 400
json_is 'round(d["time_to_failure_s"], 3), d["domain"]' "(133.333, 'severe')" "t = W'/(P - CP) = 133.3 s at 400 W"
json_is '"caution" in d and "screening" in d["caution"]' True "prediction carries the caution"
expect 0 "predict below CP" --json predict X1 --power 240
json_is 'd["time_to_failure_s"], d["time_to_failure_ci95"]' "(None, None)" "below CP: no W'-limited failure (null, never negative)"
expect 0 "predict power for 5 min" --json predict X1 --duration 5min
json_is 'round(d["power_w"], 6)' 316.666667 "P = CP + W'/t = 316.67 W for 300 s"
expect 64 "predict needs one question" predict X1
expect 64 "predict with two questions" predict X1 --power 300 --duration 300
expect 64 "predict a distance for a cyclist" predict X1 --distance 5000
expect 64 "predict power out of range" predict X1 --power 5000
expect 64 "bad model name" fit X1 --model quadratic
err_has "'quadratic' is not a model" "bad model named"
expect 64 "bad --from" fit X1 --from 2026-13-01
expect 65 "fit an unknown athlete" fit NOBODY

# not enough data: exit 69, nothing saved
expect 0 "an athlete with one trial" athlete add X2 --name "One Trial"
expect 0 "one trial" trial add X2 --date 2026-10-01 --power 300 --duration 300
snapshot
expect 69 "fit with one trial" fit X2
err_has "needs at least 2" "too few trials explained"
unchanged "a fit that could not be made"

# two trials: exact solution, flagged, no uncertainty
expect 0 "a second trial" trial add X2 --date 2026-10-03 --power 260 --duration 900
expect 0 "fit two trials" --json fit X2
json_is '"two_trials_exact" in d["flags"] and d["models"][0]["cp_se"] is None' True "two trials: exact, flagged, no SE"

# speed: keys renamed, pace shown, distance prediction
expect 0 "a runner" athlete add R1 --name "Speed Keys" --sport running
# CS 4.5 m/s, D' 200 m: D = CS t + D' -> t = (D - D')/CS
printf 'athlete,date,distance_m,duration_s\nR1,2026-09-01,1200,222.22222222222223\nR1,2026-09-04,2400,488.8888888888889\nR1,2026-09-08,3600,755.5555555555555\n' >"$TMP/run.csv"
expect 0 "import distance trials" trial import "$TMP/run.csv"
expect 0 "fit a runner" --json fit R1
json_is 'd["modality"], "cs" in d["models"][0], "d_prime_ci95" in d["models"][0], "cp" in d["models"][0]' "('speed', True, True, False)" "speed keys renamed (cs, d_prime)"
json_is 'round(d["models"][1]["cs"], 9), round(d["models"][1]["d_prime"], 6)' "(4.5, 200.0)" "linear-total on exact distance data: CS 4.5 m/s, D' 200 m"
expect 0 "predict 5000 m" --json predict R1 --distance 5000 --model linear-total
json_is 'round(d["time_s"], 6)' 1066.666667 "t = (5000 - 200)/4.5 = 1066.7 s"
expect 0 "human fit shows pace" fit R1
out_has "/km" "pace per km shown for a runner"

# ---- W' balance through a protocol, and solve ----
# X1 is exact: CP 250 W, W' 20000 J. Constant 400 W from rest fails at W'/(P - CP) = 133.3 s,
# i.e. in second 134 (the 2-parameter identity (derived): the balance reaches zero at W'/(P - CP)).
expect 0 "balance at constant power" --json predict X1 --protocol "3min@400W" --model linear-total
json_is 'd["failure_at_s"], d["balance_model"], round(d["min_balance_j"], 6)' "(134, 'differential', -7000.0)" "failure in second 134; min = 20000 - 180*150"
expect 0 "below CP no failure" --json predict X1 --protocol "20min@240W" --model linear-total
json_is 'd["failure_at_s"], round(d["end_balance_j"], 6)' "(None, 20000.0)" "below CP from rest: no failure, full balance"
expect 0 "percent of CP" --json predict X1 --protocol "2x(1min@160%CP, 2min@50%CP)" --model linear-total --balance-model elite --trace "$TMP/trace.csv"
json_is 'd["balance_model"], d["duration_s"]' "('bartram', 360)" "the former name 'elite' reads as the bartram model over a %CP protocol"
json_is '[(m["name"], m["chosen"]) for m in d["balance_models"]]' "[('differential', False), ('integral', False), ('bartram', True)]" "every recovery model side by side, the chosen one marked"
lines=$(wc -l <"$TMP/trace.csv")
[ "$lines" = 361 ] && pass "trace has a header and 360 seconds" || fail "trace lines: $lines"
head -1 "$TMP/trace.csv" | grep -q '^time_s,power_w,balance_j$' && pass "trace header" || fail "trace header: $(head -1 "$TMP/trace.csv")"
# the first minute at 400 W spends 150 J/s: 20000 - 60*150 = 11000 J at second 60
v=$(sed -n 61p "$TMP/trace.csv" | cut -d, -f3)
[ "$(printf '%.3f' "$v")" = "11000.000" ] && pass "trace value at 60 s = 11000 J" || fail "trace at 60 s: $v"
expect 64 "protocol syntax error" predict X1 --protocol "5min@300W; 3x(2min@350W"
err_has "position" "syntax error names its character position"
expect 64 "unknown balance model" predict X1 --protocol "5min@300W" --balance-model quick
expect 64 "speed protocol for a cyclist" predict X1 --protocol "5min@4.5m/s"
expect 64 "a '?' in predict" predict X1 --protocol "5min@?"
expect 73 "trace to a folder that does not exist" predict X1 --protocol "5min@300W" --trace "$TMP/no/such/dir/t.csv"

# solve: a single constant bout to 0 % ends exactly at W'/(P - CP): for 600 s, P = 250 + 20000/600
expect 0 "solve a single bout" --json solve X1 --protocol "10min@?" --finish 0 --model linear-total
json_is 'abs(d["power_w"] - (250 + 20000/600)) < 0.05, d["target_balance_j"] == 0' "(True, True)" "solve: P = CP + W'/t for one bout (within 0.05 W, the 1-s grid)"
expect 0 "solve intervals" --json solve X1 --protocol "10min@150W; 4x(3min@?, 2min@125W); 3min@?" --finish 15 --model linear-total
p=$(json 'd["power_w"]')
expect 0 "re-simulate the answer" --json predict X1 --model linear-total --protocol "10min@150W; 4x(3min@${p}W, 2min@125W); 3min@${p}W"
json_is 'abs(d["end_balance_j"] - 3000) < 1 and d["failure_at_s"] is None' True "the solved protocol ends at 15 % of W' without failing"
expect 69 "an impossible request" --json solve X1 --protocol "10min@?; 20min@100W" --finish 5 --model linear-total
json_is 'd["power_w"]' None "impossible: power_w null"
err_has "reachable only by passing through task failure" "impossible request explained"
err_has "solve for its hardest moment instead: --lowest 5" "the refusal of a session ending in recovery suggests --lowest"
# --lowest: the same session solved for its lowest balance, the last second of the unknown:
# 20000 - 600 (P - 250) = 1000 J, so P = 250 + 19000/600 (linear-total is exact here)
expect 0 "solve for the lowest balance" --json solve X1 --protocol "10min@?; 20min@100W" --lowest 5 --model linear-total
json_is 'abs(d["power_w"] - (250 + 19000/600)) < 0.05, d["solved_for"], d["lowest_pct"], abs(d["lowest_balance_j"] - 1000) < 1, d["lowest_at_s"], d["end_balance_j"] > 5000' \
    "(True, 'lowest_balance', 5, True, 600, True)" "--lowest: P = CP + (W' - 5 %)/600 s, lowest at 10:00, ending in recovery"
json_is '[abs(m["power_w"] - d["power_w"]) < 1e-9 for m in d["balance_models"] if m["chosen"]], all(m["power_w"] is not None for m in d["balance_models"])' \
    "([True], True)" "--lowest: every recovery model is solved for the lowest balance too, the chosen one as the answer"
p=$(json 'd["power_w"]')
expect 0 "re-simulate the lowest answer" --json predict X1 --model linear-total --protocol "10min@${p}W; 20min@100W"
json_is 'abs(d["min_balance_j"] - 1000) < 1 and d["failure_at_s"] is None' True "predict agrees: the lowest balance is 5 % of W'"
expect 0 "lowest, human" solve X1 --protocol "10min@?; 20min@100W" --lowest 5 --model linear-total
out_has "falls lowest to 1.00 kJ of W' at 10:00 (target 5 %)" "the human answer says when the lowest balance comes"
expect 64 "--finish and --lowest together" solve X1 --protocol "10min@?" --finish 5 --lowest 5
expect 64 "--lowest 0 is task failure" solve X1 --protocol "10min@?" --lowest 0
err_has "above 0 (0 is task failure)" "--lowest 0 explained"
expect 64 "solve without ?" solve X1 --protocol "10min@300W" --finish 5
expect 64 "finish out of range" solve X1 --protocol "10min@?" --finish 120

# Regression: two exact trials started the hyperbolic fit at its own solution, and GSL's driver
# answered "no progress on the first iteration" (EMAXITER with info ENOPROG), once reported as a
# failed fit. The demo's C03 (360 W for 184 s, 275 W for 800 s) showed it.
expect 0 "athlete with two trials" athlete add X3 --name "Two Exact"
expect 0 "trial 1" trial add X3 --date 2026-10-13 --power 360 --duration 184
expect 0 "trial 2" trial add X3 --date 2026-10-20 --power 275 --duration 800
expect 0 "fit" --json fit X3
json_is 'd["best"], d["models"][0]["ok"], round(d["models"][0]["cp"], 6), round(d["models"][0]["w_prime"], 4)' \
  "('hyperbolic', True, 249.61039, 20311.6883)" "two exact trials: the hyperbolic fit succeeds (CP = 153760/616 W)"

# Regression: a newest block of trials that gives no usable fit (three trials at one power) must
# not replace the fit of all trials in predict and domains.
expect 0 "athlete" athlete add ZB --name "Flat Block"
for x in "2026-06-01 400 3:00" "2026-06-04 330 6:00" "2026-06-08 300 10:00" "2026-11-01 300 5:00" "2026-11-04 300 6:00" "2026-11-08 300 7:00"; do
    set -- $x; "$BIN" --db "$DB" --quiet trial add ZB --date "$1" --power "$2" --duration "$3"
done
expect 0 "predict falls back to all trials" --json predict ZB --power 350
json_is 'd["time_to_failure_s"] is not None' True "a prediction from all six trials"
err_has "gives no usable fit; all 6 trials are used" "the fallback is said"

# an answer beyond any human power is refused, not prescribed; far extrapolation is said
expect 69 "solve beyond the physiological range" --json solve X1 --protocol "1s@?" --finish 50 --model linear-total
json_is 'd["power_w"]' None "no power for an impossible prescription"
err_has "beyond the physiological range" "the reason is given"
expect 0 "predict for one second" --json predict X1 --duration 1s --model linear-total
json_is 'd["note"].startswith("extrapolated")' True "a duration outside the trials is marked as extrapolated"
