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
