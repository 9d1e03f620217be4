# cli_squad.sh: squads on a SQLite store: add, list (text, JSON, CSV), assign, remove, the --squad
# filters of 'athlete list' and 'sheet --all', the unknown-squad message, the upgrade of a store
# made before squads, and the PostgreSQL-only commands refused on a SQLite file.
. "$CPDOMAIN_TESTS/cli/lib.sh"

expect 0 "init" init
for sub in "squad add" "squad list" "squad remove" "squad assign" "squad grant" "squad revoke" "server setup"; do
    expect 0 "$sub --help" $sub --help
    out_has "example" "$sub --help has an example"
done

# ---- a store without squads lists as before: no squad column, "squad": null ----
expect 0 "add an athlete" athlete add K01 --name "Maren Oduya" --mass 62
expect 0 "athlete list" athlete list
[ "$(head -n 1 "$TMP/out")" = "code  name         sport    mass (kg)" ] && pass "no squad column without squads" ||
    fail "header is '$(head -n 1 "$TMP/out")'"
expect 0 "athlete show" athlete show K01
if grep -q '^squad' "$TMP/out"; then fail "show prints a squad line for an athlete in none"; else pass "no squad line in show"; fi
expect 0 "athlete show --json" --json athlete show K01
json_is 'd["squad"]' "None" "show JSON: squad null"

# ---- squad add and its refusals ----
expect 0 "squad add" --json squad add track --note "middle distance"
json_is 'd["name"], d["note"], d["athletes"]' "('track', 'middle distance', 0)" "squad add returns the squad"
track_id=$(json 'd["id"]')
expect 0 "a second squad" squad add "road group"
err_has "added squad road group" "add says what it did"
snapshot
expect 65 "a squad name twice" squad add track
err_has "a squad named 'track' already exists" "the duplicate is named"
expect 64 "an empty squad name" squad add ""
expect 64 "a name with a control character" squad add "$(printf 'a\tb')"
err_has "no control characters" "control characters refused"
expect 64 "a name of 65 bytes" squad add "$(printf '%065d' 0)"
err_has "1 to 64 bytes" "the length rule is named"
expect 64 "a name with a space at the end" squad add "track "
expect 64 "squad add without a name" squad add
expect 64 "--none is not an option of squad add" squad add x --none
unchanged "refused squad adds"

# ---- athlete add --squad ----
expect 0 "athlete add --squad" --json athlete add K02 --name "Ilka Brennan" --squad track
json_is 'd["code"], d["squad"]' "('K02', 'track')" "athlete add JSON names the squad"
snapshot
expect 65 "athlete add with an unknown squad" athlete add K03 --name "Nobody" --squad trakc
err_has "no squad named 'trakc' (did you mean 'track'?)" "did you mean the close squad"
expect 65 "a squad far from any name" athlete add K03 --name "Nobody" --squad "zzzzzzzzzz"
err_has "no squad named 'zzzzzzzzzz' ('cpdomain squad list' shows the names)" "no suggestion: where to look"
expect 64 "--squad on athlete show" athlete show K01 --squad track
err_has "squad assign" "show --squad points to squad assign"
unchanged "a refused athlete add writes nothing"
expect 0 "a third athlete in road group" athlete add K03 --name "Oskar Pell" --squad "road group"
expect 0 "a fourth athlete in track" athlete add K04 --name "Juno Vale" --squad track

# ---- lists ----
expect 0 "athlete list with squads" athlete list
[ "$(head -n 1 "$TMP/out")" = "code  name          sport    mass (kg)  squad" ] && pass "the squad column shows" ||
    fail "header is '$(head -n 1 "$TMP/out")'"
grep -q '^K01 .* -$' "$TMP/out" && pass "an athlete in no squad shows '-'" || fail "K01 row: $(grep K01 "$TMP/out")"
grep -q '^K03 .*road group$' "$TMP/out" && pass "K03 in road group" || fail "K03 row: $(grep K03 "$TMP/out")"
expect 0 "athlete list --squad track" --json athlete list --squad track
json_is '[(a["code"], a["squad"]) for a in d["athletes"]]' "[('K02', 'track'), ('K04', 'track')]" "only track's athletes"
expect 0 "athlete list --squad with CSV" --csv athlete list --squad "road group"
[ "$(head -n 1 "$TMP/out" | tr -d '\r')" = "id,code,name,sport,mass_kg,notes,squad" ] && pass "CSV has a squad column" ||
    fail "CSV header '$(head -n 1 "$TMP/out")'"
[ "$(sed -n 2p "$TMP/out" | tr -d '\r')" = "3,K03,Oskar Pell,cycling,,,road group" ] && pass "CSV row of K03" ||
    fail "CSV row '$(sed -n 2p "$TMP/out")'"
[ "$(wc -l <"$TMP/out")" -eq 2 ] && pass "CSV: one athlete in road group" || fail "CSV has $(wc -l <"$TMP/out") lines"
expect 65 "athlete list --squad unknown" athlete list --squad Track
err_has "no squad named 'Track' (did you mean 'track'?)" "letter case: did you mean"
expect 0 "squad list" squad list
[ "$(cat "$TMP/out")" = "squad       athletes  note
road group         1  -
track              2  middle distance" ] && pass "squad list text with counts" || fail "squad list: $(cat "$TMP/out")"
expect 0 "squad list --json" --json squad list
json_is '[(q["name"], q["athletes"]) for q in d["squads"]]' "[('road group', 1), ('track', 2)]" "JSON counts"
json_is 'd["squads"][1]["id"]' "$track_id" "the id of track is the one add returned"
expect 0 "squad list --csv" --csv squad list
[ "$(tr -d '\r' <"$TMP/out")" = "id,name,note,athletes
2,road group,,1
1,track,middle distance,2" ] && pass "squad list CSV" || fail "squad list CSV: $(cat "$TMP/out")"

# ---- assign and remove ----
snapshot
expect 65 "remove a squad with athletes" squad remove track
err_has "squad 'track' still has 2 athletes: move them first" "the refusal says why and what to do"
unchanged "a refused remove"
expect 65 "remove an unknown squad" squad remove trac
err_has "did you mean 'track'" "remove suggests"
expect 65 "assign an unknown athlete" squad assign K9 track
expect 65 "assign to an unknown squad" squad assign K02 "road grup"
err_has "did you mean 'road group'" "assign suggests the squad"
expect 64 "assign without a squad" squad assign K02
expect 64 "assign with a squad and --none" squad assign K02 track --none
unchanged "refused assigns"
expect 0 "move K02 to road group" squad assign K02 "road group"
err_has "athlete K02 is in squad road group (was in track)" "assign says where the athlete was"
expect 0 "take K04 out" --json squad assign K04 --none
json_is 'd["athlete"], d["squad"], d["was"]' "('K04', None, 'track')" "assign --none JSON"
expect 0 "show K02" athlete show K02
out_has "squad    road group" "show prints the squad"
expect 0 "track is empty now" --json squad list
json_is '[(q["name"], q["athletes"]) for q in d["squads"]]' "[('road group', 2), ('track', 0)]" "counts after the moves"
expect 0 "remove the empty squad" squad remove track
expect 0 "squads left" --json squad list
json_is '[q["name"] for q in d["squads"]]' "['road group']" "track is gone"
expect 0 "remove an athlete in a squad" athlete remove K02 --yes
expect 0 "count after the removal" --json squad list
json_is 'd["squads"][0]["athletes"]' "1" "the removed athlete left the squad"

# ---- PostgreSQL-only commands on a SQLite file: exit 64, nothing written ----
expect 64 "squad grant without a role" squad grant --all
expect 64 "server setup with an argument" server setup now
if sqlite_only "a SQLite file refuses access control (cli_access.sh grants it on PostgreSQL)" 11; then
    snapshot
    for cmd in "squad grant road_group_x coach_a" "squad grant --all cpdomain_lab" "squad revoke --all cpdomain_lab" "server setup"; do
        # shellcheck disable=SC2086
        expect 64 "$cmd on SQLite" $cmd
        err_has "access control needs a PostgreSQL store: a SQLite file is protected by its file's permissions" "$cmd: why"
    done
    expect 64 "squad grant with a squad name" squad grant "road group" coach_a
    err_has "access control needs a PostgreSQL store" "grant on SQLite, whatever the squad"
    unchanged "the PostgreSQL-only commands"
fi

# ---- sheet --all --squad: the sheets of one squad ----
for k in K01 K03 K04; do
    "$BIN" --db "$DB" trial add $k --date 2026-10-01 --power 420 --duration 2:30 >/dev/null 2>&1 &&
    "$BIN" --db "$DB" trial add $k --date 2026-10-03 --power 350 --duration 6:10 >/dev/null 2>&1 &&
    "$BIN" --db "$DB" trial add $k --date 2026-10-05 --power 305 --duration 15:20 >/dev/null 2>&1 ||
        fail "trials of $k"
done
expect 0 "sheets of road group" sheet --all --squad "road group" -o "$TMP/road" --format csv
[ -f "$TMP/road/K03.csv" ] && pass "K03's sheet written" || fail "no K03 sheet: $(ls "$TMP/road")"
if [ -e "$TMP/road/K01.csv" ] || [ -e "$TMP/road/K04.csv" ]; then fail "sheets of athletes outside the squad: $(ls "$TMP/road")"
else pass "no sheet of an athlete outside the squad"; fi
[ "$(ls "$TMP/road" | tr '\n' ' ')" = "K03.csv index.html team.csv " ] && pass "the squad's folder: its sheet, the index, the team table" ||
    fail "folder holds: $(ls "$TMP/road")"
if grep -q K03 "$TMP/road/team.csv" && ! grep -q 'K01\|K04' "$TMP/road/team.csv" "$TMP/road/index.html"; then
    pass "the team table and the index list the squad's athlete only"
else fail "team table: $(cat "$TMP/road/team.csv")"; fi
expect 0 "every sheet" --json sheet --all -o "$TMP/every" --format csv
json_is 'len(d["sheets"])' "3" "without --squad all three athletes have sheets"
expect 65 "sheet --all with an unknown squad" sheet --all --squad "road" -o "$TMP/none"
err_has "no squad named 'road'" "unknown squad in sheet"
[ ! -e "$TMP/none" ] && pass "no folder made for an unknown squad" || fail "a folder appeared"
expect 64 "sheet --squad without --all" sheet K03 --squad "road group"
expect 0 "an empty squad" squad add empty
expect 69 "sheet --all of an empty squad" sheet --all --squad empty -o "$TMP/empty"
err_has "squad 'empty' has no athletes" "an empty squad is explained"

# ---- a store made before squads (version 6) is upgraded ----
if sqlite_only "a version-6 SQLite file upgraded" 4; then
    OLD="$TMP/old.db"
    "$BIN" --db "$OLD" init >/dev/null 2>&1
    latest=$(sqlite3 "$OLD" "PRAGMA user_version")
    rm -f "$OLD"
    # the schema of every migration before db/008, as the previous release made it
    for f in "$CPDOMAIN_TESTS"/../db/schema.sql "$CPDOMAIN_TESTS"/../db/00[0-7]_*.sql; do cat "$f"; done | sqlite3 "$OLD"
    sqlite3 "$OLD" "INSERT INTO athlete (code, name) VALUES ('OLD1', 'Vera Lindqvist'); PRAGMA user_version = $((latest - 1));"
    if "$BIN" --db "$OLD" --json athlete show OLD1 >"$TMP/out" 2>"$TMP/err"; then pass "the old store opens"
    else fail "the old store does not open" "$(cat "$TMP/err")"; fi
    json_is 'd["code"], d["squad"]' "('OLD1', None)" "its athlete is in no squad after the upgrade"
    [ "$(sqlite3 "$OLD" "PRAGMA user_version")" = "$latest" ] && pass "upgraded to version $latest" || fail "not upgraded"
    "$BIN" --db "$OLD" squad add new >/dev/null 2>&1 && "$BIN" --db "$OLD" squad assign OLD1 new >/dev/null 2>&1 &&
        pass "the upgraded store takes squads" || fail "squads on the upgraded store"
fi

# ---- export and import keep the squads; a bad squad name is stopped by the record gate ----
expect 0 "export with squads" export -o "$TMP/sq.json"
/usr/bin/python3 - "$TMP/sq.json" "$TMP/sq_bad.json" <<'PY'
import json, sys
d = json.load(open(sys.argv[1]))
t = d["tables"]["squad"]
t["rows"][0][t["columns"].index("name")] = "bad\tname"
json.dump(d, open(sys.argv[2], "w"))
PY
newdb IMP imp
"$BIN" --db "$IMP" init >/dev/null 2>&1
"$BIN" --db "$IMP" import "$TMP/sq_bad.json" >"$TMP/out" 2>"$TMP/err"; RC=$?
[ "$RC" -eq 65 ] && pass "a document with a bad squad name is refused (exit 65)" || fail "bad squad name: exit $RC"
err_has "tables.squad.rows[0][1]: column 'name': a squad name holds no control characters" "the bad name is located"
"$BIN" --db "$IMP" import "$TMP/sq.json" >"$TMP/out" 2>"$TMP/err" && pass "the export imports" ||
    fail "import of the export" "$(cat "$TMP/err")"
"$BIN" --db "$IMP" --json athlete list --squad "road group" >"$TMP/out" 2>"$TMP/err"
json_is '[a["code"] for a in d["athletes"]]' "['K03']" "the imported store keeps who is in which squad"
