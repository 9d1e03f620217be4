# cli_sheet.sh: 'sheet' through the real binary on the demo store (built by demo/run.sh into a
# temporary folder): every athlete's sheet in all four formats, the HTML parsed by libxml2 and by a
# strict html.parser check, every inline SVG valid XML, hostile text escaped, the same numbers in
# CSV and JSON, 'sheet --all' with working links, no NaN or infinity, and a headless-browser render.
. "$CPDOMAIN_TESTS/cli/lib.sh"
PY=/usr/bin/python3
CHECK="$CPDOMAIN_TESTS/cli/sheet_check.py"
# the demo's own "today", so its staleness notes are those of the demo
export CPDOMAIN_TODAY=2026-11-30

# the demo store and sheets, built as 'make demo' builds them, in a temporary folder
DEMODB="$TMP/demo/demo.db"; [ -n "$PGBASE" ] && newdb DEMODB demo
if CPDOMAIN_DEMO_DB=$DEMODB sh "$CPDOMAIN_TESTS/../demo/run.sh" "$BIN" "$TMP/demo" >"$TMP/demo.log" 2>&1; then
    pass "demo/run.sh builds the store and the sheets in a temporary folder"
else
    fail "demo/run.sh failed" "$(tail -5 "$TMP/demo.log")"
fi
if [ "$(tail -n 1 "$TMP/demo.log")" = "$TMP/demo/out/index.html" ]; then pass "the demo ends by printing the index path"
else fail "the demo's last line is '$(tail -n 1 "$TMP/demo.log")'"; fi
if [ -z "$PGBASE" ]; then cp "$DEMODB" "$DB"; else dbcopy "$DEMODB" DB sheet; fi
codes=$("$BIN" --db "$DB" athlete list | awk 'NR > 1 { print $1 }')
ncodes=$(echo "$codes" | wc -w)
[ "$ncodes" -ge 9 ] && pass "the demo has $ncodes athletes" || fail "the demo has $ncodes athletes"

# the examples in solve's help run on the demo store (their CODEs are the demo's)
"$BIN" solve --help | grep -E '^  cpdomain( --json)? solve ' >"$TMP/solve_examples"
n_ex=0
while IFS= read -r line; do
    n_ex=$((n_ex + 1))
    eval "set -- ${line#  cpdomain }"
    if "$BIN" --db "$DB" "$@" >/dev/null 2>"$TMP/err"; then pass "solve --help example runs on the demo: ${line#  }"
    else fail "solve --help example fails on the demo: ${line#  }" "$(head -c 300 "$TMP/err")"; fi
done <"$TMP/solve_examples"
[ "$n_ex" -ge 2 ] && pass "solve --help has $n_ex examples" || fail "solve --help has $n_ex examples"

# usage and errors
expect 0 "help" sheet --help
out_has "cpdomain sheet --all -o" "help has an example"
expect 64 "no CODE" sheet
expect 64 "--all without -o" sheet --all
expect 64 "--all with a CODE" sheet --all C01 -o "$TMP/x"
expect 64 "bad format" sheet C01 --format pdf
expect 64 "bad model" sheet C01 --model cubic
expect 64 "bad date" sheet C01 --from 2026-13-01
expect 64 "--json with a non-JSON format to stdout" --json sheet C01 --format txt
expect 65 "unknown athlete" sheet Z99
err_has "Z99" "the message names the athlete"
expect 73 "unwritable output" sheet C01 -o "$TMP/no/such/dir/c01.html"
newdb MISSING missing
"$BIN" --db "$MISSING" sheet C01 >/dev/null 2>&1
[ $? -eq 66 ] && pass "missing store (exit 66)" || fail "missing store: not exit 66"
snapshot


# every athlete, every format
mkdir -p "$TMP/s"
for code in $codes; do
    for f in html csv json txt; do
        cpd sheet "$code" --format "$f" -o "$TMP/s/$code.$f"
        [ "$RC" -eq 0 ] || fail "$code $f sheet: exit $RC" "$(head -c 300 "$TMP/err")"
    done
done
n=$(ls "$TMP/s" | wc -l)
[ "$n" -eq $((ncodes * 4)) ] && pass "$n sheets written (4 formats x $ncodes athletes)" || fail "$n sheets written"
unchanged "rendering sheets"

# runners and swimmers: distance segments, pace beside speed, %CS, paces in %delta; heart-rate
# targets inside their domain's intensities
expect 0 "a distance protocol" --json predict R02 --protocol "10min@3.2m/s; 2x(400m@5.2m/s, 90s@2m/s)"
json_is 'd["duration_s"]' "$((600 + 2 * (77 + 90)))" "400m@5.2m/s lasts 77 s (400/5.2 rounded)"
expect 0 "a distance protocol, human" predict R02 --protocol "10min@3.2m/s; 2x(400m@5.2m/s, 90s@2m/s)"
out_has "5.20 m/s (3:12/km)" "the balance table shows pace beside speed"
expect 0 "a swimmer's distance protocol" predict S01 --protocol "4x(100m@1:20/100m, 30s@0.8m/s)"
out_has "1.25 m/s (1:20/100m)" "swimmers read pace per 100 m"
expect 64 "a distance at %CS" predict R02 --protocol "400m@105%CS"
err_has "a distance is held at a speed" "a distance needs a speed"
grep -q '10min@60%CS; 5x(3min@[0-9.]*m/s, 3min@50%CS)' "$TMP/s/R02.html" && pass "a runner's sheet writes %CS" ||
    fail "the runner's suggested session is not in %CS"
grep -q '25 %: [0-9.]* m/s ([0-9]:[0-9][0-9]/km)' "$TMP/s/R02.html" && pass "the runner's %delta list shows paces" ||
    fail "the %delta list lacks paces" "$(grep -o '%delta[^<]*' "$TMP/s/R02.html")"
expect 0 "domains with heart rates" --json domains C01
json_is 'd["targets"]["heavy"]["hr_bpm"][1] <= d["targets"]["severe"]["hr_bpm"][0] and d["targets"]["moderate"]["hr_bpm"][1] == d["targets"]["heavy"]["hr_bpm"][0]' \
    True "heart-rate targets follow the domains without overlap"

# text tables stay within 100 columns: a long last column wraps, indented to its column
expect 0 "a table with long notes" trial list C04
long=$(awk '{ if (length($0) > 100) n++ } END { print n + 0 }' "$TMP/out")
[ "$long" = 0 ] && grep -q '^ \{40,\}[a-z]' "$TMP/out" && pass "trial list wraps its notes within 100 columns" ||
    fail "trial list: $long lines over 100 columns" "$(head -c 400 "$TMP/out")"
expect 0 "fit with a failed model" fit C01
grep -q '^three-parameter .*failed: the trials show *$' "$TMP/out" && pass "fit wraps a long failure reason" ||
    fail "fit's failure reason is not wrapped" "$(grep three-parameter "$TMP/out")"

# -o FILE.svg: plots from fit, curve (logarithmic time), predict --protocol/--session and history,
# all through the one plotting module; every one parses, none nests, no label is cut off
mkdir -p "$TMP/plots"
sid=$("$BIN" --db "$DB" --json session list C02 | $PY -c "import json,sys; print(json.load(sys.stdin)['sessions'][-1]['id'])")
bid=$("$BIN" --db "$DB" --json bout list C01 | $PY -c "import json,sys; print(json.load(sys.stdin)['bouts'][0]['id'])")
for spec in "fit|fit C01 -o $TMP/plots/fit.svg" "curve|curve C02 -o $TMP/plots/curve.svg" \
    "predict --protocol|predict C01 --protocol 10min@150W;4x(3min@300W,3min@120W) -o $TMP/plots/protocol.svg" \
    "predict --session|predict C02 --session $sid -o $TMP/plots/session.svg" "history|history C02 -o $TMP/plots/history.svg" \
    "ramp plot|ramp plot 2 -o $TMP/plots/ramp.svg" "bout plot|bout plot $bid -o $TMP/plots/bout.svg" \
    "ramp plot --kind veq|ramp plot 2 --kind veq -o $TMP/plots/veq.svg" "lactate plot|lactate plot 1 -o $TMP/plots/lactate.svg"; do
    what=${spec%%|*}
    # shellcheck disable=SC2086
    expect 0 "$what -o FILE.svg" --quiet ${spec#*|}
done
n=$(ls "$TMP/plots" | wc -l)
[ "$n" -eq 9 ] && pass "9 plots written" || fail "$n plots written"
res=$($PY "$CHECK" svgs "$TMP"/plots/*.svg)
[ "$res" = "svgs 9" ] && pass "every -o plot parses as XML, none nested, no label cut off" || fail "plot problems" "$res"
grep -q '>0:01<' "$TMP/plots/curve.svg" && grep -q '>1:00:00<' "$TMP/plots/curve.svg" &&
    pass "curve: a logarithmic time axis from 1 s to an hour" || fail "curve axis ticks"
grep -q "balance of the session" "$TMP/plots/protocol.svg" && pass "predict -o draws the balance" || fail "no balance plot"
grep -q 'Critical power over the season' "$TMP/plots/history.svg" && pass "history -o draws the season" || fail "no season plot"
expect 64 "-o needs .svg" fit C01 -o "$TMP/plots/fit.png"
err_has "plots are written as SVG" "a non-SVG name is refused before anything runs"
expect 64 "predict -o without a session" predict C01 --power 300 -o "$TMP/plots/x.svg"
expect 64 "history --all -o" history --all -o "$TMP/plots/x.svg"
expect 64 "-o on session list" session list C02 -o "$TMP/plots/x.svg"
expect 73 "-o into a missing folder" fit C01 -o "$TMP/no/such/dir/fit.svg"

# --csv: every table as CSV that a spreadsheet opens as it is: parsed by Python's csv module, one
# row per JSON item, the same numbers, units in the headers, formula-like text neutralised
csv_vs_json() { # WHAT KEY ARGS...: --csv and --json of the same command agree
    what=$1 key=$2; shift 2
    "$BIN" --db "$DB" --csv "$@" >"$TMP/t.csv" 2>"$TMP/err"; r1=$?
    "$BIN" --db "$DB" --json "$@" >"$TMP/t.json" 2>>"$TMP/err"; r2=$?
    res=$($PY - "$TMP/t.csv" "$TMP/t.json" "$key" <<'PYEOF'
import csv, json, math, sys
rows = list(csv.reader(open(sys.argv[1], newline="", encoding="utf-8")))
d = json.load(open(sys.argv[2]))[sys.argv[3]]
items = list(d.values()) if isinstance(d, dict) else d
head, body = rows[0], rows[1:]
bad = [r for r in body if len(r) != len(head)]
checked = 0
for r, j in zip(body, items):
    for h, v in zip(head, r):
        k = h.split(" (")[0]
        want = j.get(k)
        if want is None and k[-3:] in ("_lo", "_hi") and isinstance(j.get(k[:-3]), list):
            want = j[k[:-3]][k.endswith("_hi")]
        if isinstance(want, (int, float)) and not isinstance(want, bool):
            if not math.isclose(float(v), want, rel_tol=1e-9):
                print("%s: CSV %s, JSON %r" % (h, v, want))
            checked += 1
print("rows %d items %d ragged %d checked %d" % (len(body), len(items), len(bad), checked))
PYEOF
)
    case "$res" in
    *"rows "*) set -- $res
        if [ "$r1" -eq 0 ] && [ "$r2" -eq 0 ] && [ "$2" = "$4" ] && [ "$6" = 0 ] && [ "$8" -gt 0 ] && [ "$(echo "$res" | wc -l)" -eq 1 ]; then
            pass "--csv $what: $2 rows, the JSON's numbers ($8 cells compared)"
        else fail "--csv $what: $res (exit $r1/$r2)" "$(head -c 300 "$TMP/err")"; fi ;;
    *) fail "--csv $what: $res" ;;
    esac
}
csv_vs_json "athlete list" athletes athlete list
csv_vs_json "trial list" trials trial list C02
csv_vs_json "ramp list" ramps ramp list C02
csv_vs_json "bout list" bouts bout list C01
csv_vs_json "lactate list" lactates lactate list C01
csv_vs_json "session list" sessions session list C02
csv_vs_json "allout list" allouts allout list C01
csv_vs_json "curve" points curve C02
csv_vs_json "fit" models fit C01
csv_vs_json "history" blocks history C02
csv_vs_json "domains" targets domains C01
"$BIN" --db "$DB" --csv fit C01 | head -n 1 | grep -q 'cp (W),w_prime (J),' && pass "--csv fit: CP in W and W' in J, said in the header" ||
    fail "--csv fit header lacks units"
"$BIN" --db "$DB" --csv fit R02 | head -n 1 | grep -q 'cs (m/s),d_prime (m),' && pass "--csv fit of a runner: CS in m/s, D' in m" ||
    fail "--csv fit (speed) header lacks units"
expect 64 "--csv on a command without a table" --csv predict C01 --power 300
err_has "prints no table; use --json" "--csv refused where there is no table"
expect 64 "--csv with --json" --csv --json fit C01
# sheet --all --format csv: the team table, one row per athlete with a sheet
expect 0 "sheet --all --format csv" --quiet sheet --all --format csv -o "$TMP/team"
res=$(CODES="$codes" $PY -c "
import csv, os; r = list(csv.reader(open('$TMP/team/team.csv', newline='', encoding='utf-8')))
print(len(r) - 1, len({len(x) for x in r}), r[0][:2], sorted(x[0] for x in r[1:]) == sorted(os.environ['CODES'].split()))")
[ "$res" = "$ncodes 1 ['code', 'name'] True" ] && pass "team.csv: one row per athlete, rectangular ($res)" || fail "team.csv: $res"
grep -q '^C01,.*,power,W,J,' "$TMP/team/team.csv" && pass "team.csv says each row's units" || fail "team.csv units"
# formula-like text is neutralised, numbers stay numbers
"$BIN" --db "$DB" --quiet athlete add ZZ9 --name "=HYPERLINK(\"http://x\",\"y\")" --notes "-2+3" >/dev/null 2>&1
"$BIN" --db "$DB" --csv athlete list >"$TMP/a.csv"
grep -qF '"'"'"'=HYPERLINK(""http://x"",""y"")"' "$TMP/a.csv" && grep -qF ",\"'-2+3\"" "$TMP/a.csv" &&
    pass "--csv: a formula-like name or note gets an apostrophe" || fail "formula not neutralised" "$(grep ZZ9 "$TMP/a.csv")"
"$BIN" --db "$DB" --csv history C02 | grep -Eq ',-[0-9]+\.[0-9]' && pass "--csv: a negative number stays a number" ||
    fail "negative numbers guarded as text"
"$BIN" --db "$DB" --quiet athlete remove ZZ9 --yes >/dev/null 2>&1

# the default format follows -o's extension; stdout gets HTML, or JSON with --json
expect 0 "to stdout" sheet C01
head -c 15 "$TMP/out" | grep -q '<!DOCTYPE html>' && pass "stdout: HTML by default" || fail "stdout is not HTML"
expect 0 "json to stdout" --json sheet C01
json_is 'd["athlete"]["code"], d["modality"], len(d["power_for_time"])' "('C01', 'power', 6)" "--json prints the sheet as JSON"
expect 0 "extension decides" --quiet sheet R01 -o "$TMP/r01.csv"
head -n 1 "$TMP/r01.csv" | grep -q '^section,item,key,value,unit' && pass "-o FILE.csv writes CSV" || fail "-o FILE.csv is not CSV"
expect 0 "txt" sheet C01 --format txt
out_has "domains and targets:" "text sheet for the terminal"
out_has "Caution:" "text sheet carries the caution"

# HTML: libxml2's parser (HTML 4: it knows no SVG element names, so only those may be reported), the
# page without its SVGs with no complaint at all, each SVG as XML, and the strict tag-balance check
html_checks() { # html_checks FILE LABEL
    f=$1; what=$2
    other=$(xmllint --html --noout "$f" 2>&1 | grep -E 'error|warning' |
        grep -vE 'Tag (svg|g|path|rect|circle|text|line|polyline|polygon|title|desc|defs|clipPath|tspan) invalid')
    [ -z "$other" ] && pass "$what: libxml2 HTML parser reports only SVG element names" || fail "$what: xmllint" "$other"
    d=$(mktemp -d "$TMP/split.XXXXXX")
    nsvg=$($PY "$CHECK" split "$f" "$d")
    page=$(xmllint --html --noout "$d/page.html" 2>&1)
    [ -z "$page" ] && pass "$what: the page without SVG parses cleanly" || fail "$what: page" "$(echo "$page" | head -3)"
    bad=""
    for s in "$d"/*.svg; do
        [ -f "$s" ] || continue
        xmllint --noout "$s" 2>>"$TMP/svgerr" || bad="$bad $(basename "$s")"
    done
    [ -z "$bad" ] && pass "$what: its $nsvg SVG plots are well-formed XML" || fail "$what: bad SVG$bad" "$(head -3 "$TMP/svgerr")"
    strict=$($PY "$CHECK" html "$f")
    [ -z "$strict" ] && pass "$what: strict check (tags balance, no script or external resource)" ||
        fail "$what: strict check" "$(echo "$strict" | head -5)"
}
for code in $codes; do
    html_checks "$TMP/s/$code.html" "$code.html"
done
c01svg=$($PY "$CHECK" split "$TMP/s/C01.html" "$(mktemp -d "$TMP/c.XXXXXX")")
[ "$c01svg" -eq 4 ] && pass "C01's sheet has its four plots (power-duration, W' balance, V-slope, VO2 kinetics)" || fail "C01 has $c01svg plots"
grep -q "VO2 kinetics of the newest bout" "$TMP/s/C01.html" && pass "C01's sheet shows the kinetics of its newest bout" || fail "no kinetics section"
c02svg=$($PY "$CHECK" split "$TMP/s/C02.html" "$(mktemp -d "$TMP/c.XXXXXX")")
[ "$c02svg" -eq 4 ] && pass "C02's sheet has its four plots (with the season trend)" || fail "C02 has $c02svg plots"
grep -q "The season" "$TMP/s/C02.html" && grep -q "not clearly worthwhile" "$TMP/s/C02.html" && grep -q "smallest worthwhile change" "$TMP/s/C02.html" && pass "C02's sheet shows the season and its verdict against the smallest worthwhile change" || fail "no season section on C02"
grep -q "Field estimate from the best efforts" "$TMP/s/C02.html" && grep -q "The lab estimate from the trials" "$TMP/s/C02.html" \
    && pass "C02's sheet shows the field estimate from sessions beside the lab estimate" || fail "no field estimate on C02"
grep -q "Field estimate from the best efforts" "$TMP/s/C05.html" && fail "C05 has no sessions but shows a field estimate" \
    || pass "no field estimate without sessions"
# the domains wear one set of colours: the page's swatches are the power-duration plot's bands
for code in $codes; do
    dc=$($PY "$CHECK" domaincolours "$TMP/s/$code.html")
    css=$(echo "$dc" | sed -n 1p); bands=$(echo "$dc" | sed -n 2p)
    case " $css " in
    *" $bands "*) [ -n "$bands" ] && pass "$code: the plot's domain bands wear the sheet's domain colours" ||
        fail "$code: no domain bands in the plot" ;;
    *) fail "$code: plot bands '$bands' are not the sheet's colours '$css'" ;;
    esac
done
s01svg=$($PY "$CHECK" split "$TMP/s/S01.html" "$(mktemp -d "$TMP/c.XXXXXX")")
[ "$s01svg" -eq 2 ] && pass "S01 (no ramp) has two plots" || fail "S01 has $s01svg plots"

# CSV and JSON carry the same numbers (CP, W' and the three boundaries)
for code in $codes; do
    res=$($PY "$CHECK" compare "$TMP/s/$code.csv" "$TMP/s/$code.json")
    if [ "$res" = "compared 5" ]; then pass "$code: CSV and JSON agree on CP, W' and the boundaries"
    else fail "$code: CSV and JSON differ" "$res"; fi
done
# the JSON's numbers are those of 'fit' and 'domains'
cpd --json fit C01
fitcp=$(json 'd["models"][[m["model"] for m in d["models"]].index(d["best"])]["cp"]')
sheetcp=$($PY -c "import json; print(json.load(open('$TMP/s/C01.json'))['fit']['cp'])")
[ "$fitcp" = "$sheetcp" ] && pass "the sheet's CP is the best fit's ($sheetcp W)" || fail "sheet CP $sheetcp, fit CP $fitcp"
cpd --json domains C01
$PY -c "import json; print(json.dumps(json.load(open('$TMP/s/C01.json'))['domains'], sort_keys=True))" >"$TMP/a.json"
$PY -c "import json; print(json.dumps(json.load(open('$TMP/out')), sort_keys=True))" >"$TMP/b.json"
cmp -s "$TMP/a.json" "$TMP/b.json" && pass "the sheet's domains JSON is 'domains --json'" || fail "domains JSON differs"

# no NaN or infinity anywhere
nf=$($PY "$CHECK" nonfinite "$TMP"/s/*)
[ -z "$nf" ] && pass "no nan or inf in any of the $n sheets" || fail "nan or inf found" "$(echo "$nf" | head -3)"

# hostile text: a name and a note that try to inject markup, quotes and ampersands
cpd athlete add X1 --name "<script>alert(1)</script> & \"Q\" 'R'" --sport cycling --mass 70 \
    --notes "</p><img src=x onerror=alert(2)> & more"
[ "$RC" -eq 0 ] && pass "hostile athlete added" || fail "hostile athlete: exit $RC" "$(cat "$TMP/err")"
for t in "390:330" "560:300" "900:280"; do
    cpd trial add X1 --date 2026-11-02 --duration "${t%%:*}" --power "${t##*:}" --note "<b>bold & \"quoted\"</b>"
done
expect 0 "hostile sheet" sheet X1 -o "$TMP/x1.html"
if grep -q '<script' "$TMP/x1.html" || grep -q '<img' "$TMP/x1.html"; then fail "hostile markup reached the page"
else pass "no <script> or <img> in the page"; fi
grep -qF '&lt;script&gt;alert(1)&lt;/script&gt; &amp; &quot;Q&quot; &#39;R&#39;' "$TMP/x1.html" &&
    pass "the name is escaped (& < > \" ')" || fail "the escaped name is missing"
grep -qF '&lt;/p&gt;&lt;img src=x onerror=alert(2)&gt; &amp; more' "$TMP/x1.html" && pass "the note is escaped" ||
    fail "the escaped note is missing"
html_checks "$TMP/x1.html" "hostile sheet"
expect 0 "hostile csv" sheet X1 --format csv -o "$TMP/x1.csv"
expect 0 "hostile json" sheet X1 --format json -o "$TMP/x1.json"
res=$($PY "$CHECK" compare "$TMP/x1.csv" "$TMP/x1.json")
[ "$res" = "compared 5" ] && pass "hostile sheet: CSV and JSON agree" || fail "hostile sheet: CSV and JSON differ" "$res"
$PY -c "
import csv, json, sys
rows = {(r[0], r[2]): r[3] for r in csv.reader(open('$TMP/x1.csv', newline=''))}
name = json.load(open('$TMP/x1.json'))['athlete']['name']
sys.exit(0 if rows[('athlete', 'name')] == name == '<script>alert(1)</script> & \"Q\" \\'R\\'' else 1)
" && pass "CSV and JSON keep the name verbatim (RFC 4180 quoting)" || fail "the name did not survive CSV or JSON"

# sheet --all: the index and one file per athlete, with links that resolve
expect 0 "sheet --all" --json sheet --all -o "$TMP/all"
json_is 'len(d["sheets"]), d["index"].endswith("/index.html")' "($((ncodes + 1)), True)" "--all reports every sheet and the index"
[ -f "$TMP/all/index.html" ] && pass "index.html written" || fail "no index.html"
links=$($PY "$CHECK" links "$TMP/all/index.html")
nl=$(echo "$links" | grep -c .)
[ "$nl" -eq $((ncodes + 1)) ] && pass "the index links $nl sheets" || fail "the index links $nl sheets"
missing=""
for l in $links; do [ -f "$TMP/all/$l" ] || missing="$missing $l"; done
[ -z "$missing" ] && pass "every link resolves to a file beside the index" || fail "broken links:$missing"
nfiles=$(ls "$TMP/all" | grep -c '\.html$')
[ "$nfiles" -eq $((ncodes + 2)) ] && pass "index.html plus one CODE.html per athlete" || fail "$nfiles HTML files"
html_checks "$TMP/all/index.html" "index.html"
grep -qF '&lt;script&gt;alert(1)' "$TMP/all/index.html" && ! grep -q '<script' "$TMP/all/index.html" &&
    pass "the index escapes the hostile name" || fail "the index does not escape the name"
expect 0 "sheet --all --format csv" sheet --all --format csv -o "$TMP/allcsv"
linkscsv=$($PY "$CHECK" links "$TMP/allcsv/index.html")
echo "$linkscsv" | grep -qv '\.csv$' && fail "CSV index links a non-CSV file" || pass "the CSV index links CODE.csv files"
missing=""
for l in $linkscsv; do [ -f "$TMP/allcsv/$l" ] || missing="$missing $l"; done
[ -z "$missing" ] && pass "every CSV link resolves" || fail "broken CSV links:$missing"
# an athlete without enough trials is listed without a link, and the rest still get their sheets
cpd athlete add Y1 --name "Only One Trial" --sport cycling
cpd trial add Y1 --date 2026-11-02 --duration 300 --power 300
expect 0 "sheet --all with an athlete lacking data" sheet --all -o "$TMP/all2"
grep -q 'no sheet: not enough data' "$TMP/all2/index.html" && pass "the index says why Y1 has no sheet" || fail "no reason for Y1"
[ ! -f "$TMP/all2/Y1.html" ] && [ -f "$TMP/all2/X1.html" ] && pass "Y1 gets no file, the others do" || fail "Y1 files wrong"
expect 69 "Y1 alone" sheet Y1

# every SVG the demo and these stores produce parses as XML when cut out as a simple consumer cuts it
# (the first </svg> ends it, so no <svg> may nest), and no label runs outside its picture
res=$($PY "$CHECK" svgs "$TMP"/demo/out/*.html "$TMP"/demo/out/details/*.svg "$TMP"/s/*.html "$TMP"/all2/*.html)
case "$res" in
"svgs "*) pass "every SVG of the demo's and the test's sheets parses, none nested, no label cut off (${res#svgs })" ;;
*) fail "SVG problems" "$(echo "$res" | head -5)" ;;
esac
# the demo shows the new outputs: fit, curve, race balance and season plots, CSV tables, the team table
for f in details/C01_fit.svg details/C02_curve.svg details/C02_season.svg details/C01.domains.csv csv/team.csv; do
    [ -s "$TMP/demo/out/$f" ] || fail "the demo did not write $f"
done
[ -s "$TMP/demo/out/csv/team.csv" ] && [ "$(ls "$TMP"/demo/out/details/*_race_balance.svg 2>/dev/null | wc -l)" -ge 1 ] &&
    pass "the demo writes the plots, the CSV tables and the team table" || fail "demo outputs missing"
# the case that once broke it: an athlete with a ramp and a heavy bout (a two-panel kinetics chart)
DEMO="$CPDOMAIN_TESTS/../demo/data"
newdb HB heavy
"$BIN" --db "$HB" --quiet init && "$BIN" --db "$HB" --quiet athlete import "$DEMO/athletes.csv" &&
    "$BIN" --db "$HB" --quiet trial import "$DEMO/trials.csv" &&
    "$BIN" --db "$HB" --quiet ramp add C01 "$DEMO/ramp_C01.csv" --date 2026-09-29 --rate 25 --start 30 --onset 180 &&
    "$BIN" --db "$HB" --quiet bout add C01 "$DEMO/bout_C01_2.csv" --date 2026-10-26 --power 205 --baseline 20 --onset 180 &&
    "$BIN" --db "$HB" --quiet sheet C01 -o "$TMP/heavy.html"
res=$($PY "$CHECK" svgs "$TMP/heavy.html")
[ "$res" = "svgs 4" ] && pass "a ramp and a heavy bout: the sheet's 4 SVGs parse one by one" || fail "heavy-bout sheet" "$res"

# a real browser: the sheet renders to a page that is not blank (CHROMIUM names another binary)
CHROMIUM=${CHROMIUM:-/usr/bin/chromium}
if [ -x "$CHROMIUM" ]; then
    prof=$(mktemp -d "$TMP/chrome.XXXXXX")
    timeout 120 "$CHROMIUM" --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
        --disable-background-networking --disable-component-update --disable-sync --user-data-dir="$prof" \
        --screenshot="$TMP/c01.png" --window-size=1000,2000 "file://$TMP/s/C01.html" >"$TMP/chrome.log" 2>&1
    info=$($PY "$CHECK" png "$TMP/c01.png" 2>&1)
    set -- $info
    if [ "${1:-0}" = 1000 ] && [ "${2:-0}" = 2000 ] && [ "${3:-0}" -ge 200 ]; then
        pass "headless Chromium renders C01's sheet: ${1}x${2} PNG with $3 distinct colours"
    else
        fail "Chromium screenshot looks blank or missing: '$info'" "$(tail -3 "$TMP/chrome.log")"
    fi
    # one page for the coach: the summary alone prints on one A4 and one Letter page, the whole
    # sheet on more (details after a page break); headless Chromium's own PDF
    for code in $codes; do
        for size in A4 letter; do
            $PY "$CHECK" summary "$TMP/s/$code.html" "$TMP/s/sum_$code.html" "$size"
            timeout 120 "$CHROMIUM" --headless --no-sandbox --disable-gpu --no-first-run --user-data-dir="$prof" \
                --no-pdf-header-footer --print-to-pdf="$TMP/sum_${code}_$size.pdf" "file://$TMP/s/sum_$code.html" >/dev/null 2>&1
            pages=$($PY "$CHECK" pdfpages "$TMP/sum_${code}_$size.pdf" 2>&1)
            [ "$pages" = 1 ] && pass "$code: the summary prints on one $size page" || fail "$code: the summary takes '$pages' $size pages"
        done
    done
    timeout 120 "$CHROMIUM" --headless --no-sandbox --disable-gpu --no-first-run --user-data-dir="$prof" \
        --no-pdf-header-footer --print-to-pdf="$TMP/full.pdf" "file://$TMP/s/C01.html" >/dev/null 2>&1
    pages=$($PY "$CHECK" pdfpages "$TMP/full.pdf" 2>&1)
    [ "$pages" -ge 2 ] 2>/dev/null && pass "C01's whole sheet: the details follow on $((pages - 1)) more page(s)" || fail "whole sheet: '$pages' pages"
    # a phone: 390 px wide, no element reaches past the width, so nothing scrolls sideways; and a
    # screenshot at that width for a person to look at ($TMP/phone_CODE.png while the test runs)
    for code in C01 R02 S01; do
        $PY "$CHECK" phone "$TMP/s/$code.html" "$TMP/s/phone_$code.html"
        title=$(timeout 120 "$CHROMIUM" --headless --no-sandbox --disable-gpu --no-first-run --allow-file-access-from-files \
            --user-data-dir="$prof" --window-size=600,2400 --virtual-time-budget=5000 --dump-dom "file://$TMP/s/phone_$code.html" \
            2>/dev/null | sed -n 's:.*<title>\(overflow[^<]*\)</title>.*:\1:p')
        case "$title" in
        "overflow 0 scroll 0 ") pass "$code on a 390 px phone: nothing reaches past the width" ;;
        *) fail "$code on a phone: '$title'" ;;
        esac
        timeout 120 "$CHROMIUM" --headless --no-sandbox --disable-gpu --no-first-run --allow-file-access-from-files \
            --user-data-dir="$prof" --window-size=390,2400 --virtual-time-budget=5000 --screenshot="$TMP/phone_$code.png" \
            "file://$TMP/s/phone_$code.html" >/dev/null 2>&1
        info=$($PY "$CHECK" png "$TMP/phone_$code.png" 2>&1)
        set -- $info
        [ "${1:-0}" = 390 ] && [ "${3:-0}" -ge 100 ] && pass "$code: a screenshot at phone width (${1}x${2}, $3 colours)" ||
            fail "$code phone screenshot: '$info'"
    done
else
    N=$((N + 1))
    echo "ok $N - # SKIP chromium not installed ($CHROMIUM): no browser render test"
fi
