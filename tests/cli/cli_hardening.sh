# cli_hardening.sh: output files never follow a symbolic link and a failed write keeps the old
# file; every path into the store validates; success is reported only after the commit.
. "$CPDOMAIN_TESTS/cli/lib.sh"
DEMO="$CPDOMAIN_TESTS/../demo/data"   # invented demo data (demo/TRUTH.md)

expect 0 "init" init
expect 0 "a cyclist" athlete add X1 --name "Exact Data" --mass 70
printf 'athlete,date,power_w,duration_s\nX1,2026-09-01,400,133.33\nX1,2026-09-03,350,200\nX1,2026-09-05,310,333.33\nX1,2026-09-07,280,666.67\n' >"$TMP/exact.csv"
expect 0 "import trials" trial import "$TMP/exact.csv"

# ---- safe output files: a link planted at the target is refused, the file it points to untouched ----
printf 'precious\n' >"$TMP/victim"
mkdir "$TMP/sheets"
ln -s "$TMP/victim" "$TMP/sheets/X1.html"
expect 73 "sheet --all -o refuses a symbolic link in the folder" sheet --all -o "$TMP/sheets"
err_has "is a symbolic link: refusing to write through it" "the message says why"
[ "$(cat "$TMP/victim")" = precious ] && pass "sheet --all: the link's target is untouched" || fail "sheet wrote through the link"
ln -s "$TMP/victim" "$TMP/export.json"
expect 73 "export -o refuses a symbolic link" export -o "$TMP/export.json"
err_has "export.json' is a symbolic link" "export names the file"
ln -s "$TMP/victim" "$TMP/trace.csv"
expect 73 "predict --trace refuses a symbolic link" predict X1 --protocol "5min@300W" --trace "$TMP/trace.csv"
[ "$(cat "$TMP/victim")" = precious ] && pass "export and --trace: the link's target is untouched" || fail "written through a link"
ln -s "$TMP/nowhere.json" "$TMP/dangling.json"
expect 73 "a dangling link is refused too" export -o "$TMP/dangling.json"
[ ! -e "$TMP/nowhere.json" ] && pass "the dangling link's target was not created" || fail "created through a dangling link"

# a failed write keeps the old file: a file-size limit of 64 kB (ulimit -f counts 512-byte blocks;
# SIGXFSZ ignored, so write() fails with EFBIG) against a trace of 3 h, about 100 kB
printf 'time_s,power_w,balance_j\n1,1,1\n' >"$TMP/old.csv"
( trap '' XFSZ; ulimit -f 128; "$BIN" --db "$DB" predict X1 --protocol "3h@200W" --trace "$TMP/old.csv" ) >"$TMP/out" 2>"$TMP/err"; RC=$?
[ "$RC" = 73 ] && pass "a write beyond the file-size limit fails (exit 73)" || fail "limited trace: exit $RC" "$(cat "$TMP/err")"
err_has "the existing file is unchanged" "the message says the old file is kept"
[ "$(cat "$TMP/old.csv")" = "$(printf 'time_s,power_w,balance_j\n1,1,1')" ] && pass "the old file is intact" || fail "old file damaged: $(head -c 80 "$TMP/old.csv")"
left=$(find "$TMP" -maxdepth 1 -name '.old.csv.*' | wc -l)
[ "$left" = 0 ] && pass "no temporary file left behind" || fail "$left temporary files left"
expect 0 "the same trace without the limit" predict X1 --protocol "3h@200W" --trace "$TMP/old.csv"
[ "$(wc -l <"$TMP/old.csv")" = 10801 ] && pass "the new trace replaced the old" || fail "old.csv: $(wc -l <"$TMP/old.csv") lines"
printf '{"old": 1}\n' >"$TMP/old.json"
expect 0 "export -o replaces a regular file" export -o "$TMP/old.json"
grep -q '"format": *"cpdomain-store"' "$TMP/old.json" && pass "the new document replaced the old" || fail "old.json: $(head -c 80 "$TMP/old.json")"
expect 0 "-o /dev/null still works (a device is written in place)" export -o /dev/null

# ---- import of an export document passes the same validators as every other path ----
expect 0 "a ramp (sample blobs)" athlete add C01 --name "Ramp Rider" --mass 61
expect 0 "ramp add" ramp add C01 "$DEMO/ramp_C01.csv" --date 2026-09-29 --rate 25 --start 30 --onset 3:00
expect 0 "lactate add" lactate add C01 "$DEMO/lactate_C01.csv" --date 2026-10-01
expect 0 "export" export -o "$TMP/good.json"
# edit NAME PYTHON: a copy of good.json changed by PYTHON (d is the document)
edit() {
    /usr/bin/python3 -c "import json; d = json.load(open('$TMP/good.json')); $2; json.dump(d, open('$TMP/$1', 'w'))"
}
refused() { # refused FILE MESSAGE WHAT
    freshdb NEW new
    "$BIN" --db "$NEW" init >/dev/null 2>&1
    dump "$NEW" >"$TMP/new.before"
    "$BIN" --db "$NEW" import "$TMP/$1" >"$TMP/out" 2>"$TMP/err"; RC=$?
    [ "$RC" = 65 ] && pass "$3 (exit 65)" || fail "$3: exit $RC, wanted 65" "$(cat "$TMP/err")"
    err_has "$2" "$3: located"
    n=$(sql "$NEW" "SELECT (SELECT count(*) FROM athlete) + (SELECT count(*) FROM trial) + (SELECT count(*) FROM gx_test)")
    dump "$NEW" | cmp -s - "$TMP/new.before" && [ "$n" = 0 ] && pass "$3: nothing imported" || fail "$3: rows imported ($n)"
}
code_at() { /usr/bin/python3 -c "import json; d = json.load(open('$TMP/good.json')); print(d['tables']['$1']['columns'].index('$2'))"; }
CODE=$(code_at athlete code); DATE=$(code_at trial date); VAL=$(code_at trial value); RATE=$(code_at gx_test rate_per_min)
LAC=$(code_at lactate_stage lactate_mmol_l); DATA=$(code_at gx_channel data); NOTE=$(code_at athlete notes)
edit code.json "d['tables']['athlete']['rows'][1][$CODE] = '../../evil'"
refused code.json "tables.athlete.rows[1][$CODE]: column 'code': athlete code '../../evil' may hold only" "an athlete code with a path in it"
edit date.json "d['tables']['trial']['rows'][2][$DATE] = '0000-00-00'"
refused date.json "tables.trial.rows[2][$DATE]: column 'date': '0000-00-00' is not a date" "a trial dated 0000-00-00"
edit neg.json "d['tables']['trial']['rows'][0][$VAL] = -300.0"
refused neg.json "tables.trial.rows[0][$VAL]: column 'value': " "a power of -300 W"
edit huge.json "d['tables']['trial']['rows'][3][$VAL] = 1e300"
refused huge.json "tables.trial.rows[3][$VAL]: column 'value': " "a power of 1e300 W"
edit inf.json "d['tables']['trial']['rows'][3][$VAL] = {'real': 'inf'}"
refused inf.json "tables.trial.rows[3][$VAL]: column 'value': inf is not a finite number" "an infinite power"
edit future.json "d['tables']['trial']['rows'][1][$DATE] = '2027-01-01'"
refused future.json "column 'date': date 2027-01-01 is in the future" "a trial dated after today"
edit rate.json "d['tables']['gx_test']['rows'][0][$RATE] = 5000.0"
refused rate.json "tables.gx_test.rows[0][$RATE]: column 'rate_per_min': ramp rate must be between 1 and 200 W/min" "a ramp rate 'ramp add' refuses"
edit lac.json "d['tables']['lactate_stage']['rows'][2][$LAC] = 90.0"
refused lac.json "tables.lactate_stage.rows[2][$LAC]: column 'lactate_mmol_l'" "a lactate of 90 mmol/L"
edit blob.json "d['tables']['gx_channel']['rows'][0][$DATA]['base64'] = 'AAAAAAAAAAA='"
refused blob.json "tables.gx_channel.rows[0][$DATA]: column 'data': 8 bytes, but its record states" "a sample blob of the wrong length"
edit notes.json "d['tables']['athlete']['rows'][0][$NOTE] = 'x' * 1001"
refused notes.json "column 'notes': the text is longer than 1000 bytes" "notes longer than 'athlete add' takes"
# columns in another order: the path counts in the document's own order
edit cols.json "t = d['tables']['athlete']; t['columns'].reverse(); [r.reverse() for r in t['rows']]; t['rows'][1][len(t['columns']) - 1 - $CODE] = 'a b'"
RCODE=$(/usr/bin/python3 -c "import json; print(json.load(open('$TMP/cols.json'))['tables']['athlete']['columns'].index('code'))")
refused cols.json "tables.athlete.rows[1][$RCODE]: column 'code': athlete code 'a b' may hold only" "columns in another order: the path follows the document"
freshdb NEW new; "$BIN" --db "$NEW" init >/dev/null 2>&1
"$BIN" --db "$NEW" import "$TMP/good.json" 2>"$TMP/err" && pass "the untouched document imports" || fail "good.json refused" "$(cat "$TMP/err")"

# ---- success is reported only after the commit ----
# a file-size limit of 64 kB lets the store be read but makes the commit fail (its write-ahead log
# would outgrow the limit): nothing is stored and nothing may be reported as stored
DB0=$DB
newdb DB commit
expect 0 "init a store for sessions" init
expect 0 "a session athlete" athlete add C02 --name "Session Rider" --mass 70
if sqlite_only "a file-size limit makes the SQLite commit fail (on PostgreSQL the server writes)" 3; then
    ( trap '' XFSZ; ulimit -f 128; "$BIN" --db "$DB" session add C02 "$DEMO/session_C02_2026-08-30.csv" ) >"$TMP/out" 2>"$TMP/err"; RC=$?
    [ "$RC" = 74 ] && pass "session add whose commit fails: exit 74" || fail "session add under a file-size limit: exit $RC" "$(cat "$TMP/err")"
    n=$(sqlite3 "$DB" "SELECT count(*) FROM session")
    [ "$n" = 0 ] && pass "no session stored" || fail "$n sessions stored"
    grep -q "stored session" "$TMP/err" && fail "'stored session' printed although the commit failed" "$(cat "$TMP/err")" \
        || pass "no 'stored session' message without a commit"
fi
expect 0 "the same session without the limit" session add C02 "$DEMO/session_C02_2026-08-30.csv"
err_has "stored session 1 for C02" "after the commit, the message names the session"
DB=$DB0

# ---- messages: a huge session span in a few digits; duplicate codes in one athletes file ----
printf 'time_s,power_w\n0,200\n1e300,210\n' >"$TMP/huge_2026-10-20.csv"
expect 65 "a session spanning 1e300 s" session add X1 "$TMP/huge_2026-10-20.csv"
err_has "the file spans 1e+300 s (1.157e+295 days), more than the 7 days" "the span is written in a few digits"
long=$(grep -Eo '[0-9]{30,}' "$TMP/err" | head -c 60)
[ -z "$long" ] && pass "no number of 30 digits or more in the message" || fail "a long number in the message: $long..."
printf 'code,name\nA1,First\nB2,Second\nA1,Again\nC3,Third\nB2,Twice\n' >"$TMP/dups.csv"
snapshot
expect 65 "an athletes file giving a code twice" athlete import "$TMP/dups.csv"
err_has "dups.csv:4:1: column 'code': athlete code 'A1' is given twice in this file, on lines 2 and 4" "both lines are named"
unchanged "duplicate codes in one file"
printf 'code,name\nX1,Already here\nN1,New one\n' >"$TMP/known.csv"
expect 0 "a code already in the store is still skipped, not an error" athlete import "$TMP/known.csv"
err_has "1 athletes added, 1 already in the store" "the store's duplicate is counted as such"
