# cli_history.sh: 'history' on the demo's C02, whose generator raised CP from 268 to 288 W between
# two blocks of trials ten weeks apart (demo/TRUTH.md): two blocks, and a change that excludes zero
# but, with five trials a block (Welch-Satterthwaite dof about 4), not clearly the 4.6 % smallest
# worthwhile change (issue 12); a 2 % SWC makes it meaningful.
. "$CPDOMAIN_TESTS/cli/lib.sh"
DEMO="$CPDOMAIN_TESTS/../demo/data"

expect 0 "init" init
expect 0 "athletes" athlete import "$DEMO/athletes.csv"
expect 0 "trials" trial import "$DEMO/trials.csv"
expect 0 "ramp 1" ramp add C02 "$DEMO/ramp_C02.csv" --date 2026-09-01 --rate 30 --start 50 --onset 180
expect 0 "ramp 2" ramp add C02 "$DEMO/ramp_C02_2.csv" --date 2026-11-12 --rate 30 --start 50 --onset 180
expect 0 "history" --json history C02
json_is 'len(d["blocks"]), [b["trials"] for b in d["blocks"]]' "(2, [5, 5])" "two blocks of five trials"
json_is 'all(k in d["blocks"][0] for k in ("from","to","cp","cp_ci95","w_prime","get_power_w","vo2peak_ml_min","change"))' True "SPEC block keys"
json_is 'd["blocks"][1]["change"]["cp"]["excludes_zero"], d["blocks"][1]["change"]["cp"]["delta"] > 10' "(True, True)" "the CP rise excludes zero"
json_is 'd["swc_pct"], abs(d["blocks"][1]["change"]["cp"]["swc"] - 0.046 * d["blocks"][0]["cp"]) < 5' "(4.6, True)" "the default SWC is stated: 4.6 % of the earlier CP"
json_is 'd["blocks"][1]["change"]["cp"]["model"] == d["blocks"][1]["change"]["w_prime"]["model"] != None' True "one model for both blocks, stated"
expect 0 "history, SWC 2 %" --json history C02 --swc 2
json_is 'd["blocks"][1]["change"]["cp"]["meaningful"]' True "with a 2 % SWC the rise is meaningful"
json_is 'abs(d["blocks"][0]["cp"] - 268) < 10 and abs(d["blocks"][1]["cp"] - 288) < 10' True "each block near the generating CP"
json_is 'd["blocks"][0]["change"]["cp"]' None "the first block has no change"
json_is 'd["blocks"][0]["get_power_w"] is not None and d["blocks"][1]["vo2peak_ml_min"] is not None' True "ramps attached to their blocks"
# the change's interval is +-1.96 combined SE: its half-width equals 1.96 sqrt(se1^2 + se2^2) of the two fits
expect 0 "fit block 1" --json fit C02 --to 2026-09-30 --model hyperbolic
s1=$(json 'd["models"][0]["cp_se"]')
expect 0 "fit block 2" --json fit C02 --from 2026-11-01 --model hyperbolic
s2=$(json 'd["models"][0]["cp_se"]')
expect 0 "history, hyperbolic" --json history C02 --model hyperbolic
# Student's t with the Welch-Satterthwaite dof (Welch 1947), quantile from scipy
df=$(/usr/bin/python3 -c "print(($s1**2 + $s2**2)**2 / ($s1**4 / 3 + $s2**4 / 3))")
q=$(/usr/bin/python3 -c "from scipy.stats import t; print(t.ppf(0.975, $df))")
json_is "abs(d['blocks'][1]['change']['cp']['df'] - $df) < 1e-9" True "Welch-Satterthwaite dof of the block fits"
json_is "abs((d['blocks'][1]['change']['cp']['ci95'][1] - d['blocks'][1]['change']['cp']['delta']) - $q * ($s1 ** 2 + $s2 ** 2) ** 0.5) < 1e-9" True "interval = t(0.975, df) x combined SE of the block fits (scipy)"
expect 0 "one wide window" --json history C02 --window 120
json_is 'len(d["blocks"])' 1 "a 120-day window joins the blocks"
expect 0 "team" --json history --all
json_is 'len(d["athletes"]) >= 8' True "every athlete with trials in the team view"
expect 0 "human" history C02
out_has "not clearly worthwhile" "human output gives the verdict"
out_has "smallest worthwhile change" "and states the SWC"
expect 64 "CODE and --all" history C02 --all
expect 64 "bad window" history C02 --window 0
expect 65 "unknown athlete" history NOBODY
# issue 12: the team summary and the sheet show the same CP (the current block's fit)
expect 0 "team for C02" --json history --all
cur=$(json '[a["current_cp"] for a in d["athletes"] if a["athlete"] == "C02"][0]')
expect 0 "C02's sheet" sheet C02 --format json -o "$TMP/c02.json"
got=$(/usr/bin/python3 -c "import json; print(abs(json.load(open('$TMP/c02.json'))['fit']['cp'] - $cur) < 1e-9)")
[ "$got" = True ] && pass "team summary CP = the sheet's CP" || fail "team summary CP $cur differs from the sheet's"
# fit without dates over two blocks says it pools them and names the current block
expect 0 "fit pooled" --json fit C02
json_is 'd["pooled_blocks"], d["current_block_from"] is not None, "pools" in d["pooled_note"]' "(True, True, True)" "fit without dates says it pools the blocks"
