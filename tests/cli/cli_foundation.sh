# test_foundation.sh: init, athletes, trials, CSV import and every bad input of the foundation.
. "$CPDOMAIN_TESTS/cli/lib.sh"
D="$CPDOMAIN_TESTS/data/csv"

# ---- store creation and the missing-store rule (SPEC: missing store exit 66) ----
expect 66 "a command on a missing store" athlete list
# (on PostgreSQL the message names the command as 'cpdomain --db URI init', the URI given before it)
if [ -z "$PGBASE" ]; then err_has "cpdomain --db $DB init" "the message says to run init"
else err_has "cpdomain --db URI init" "the message says to run init"; err_has "$DB" "and names the database"; fi
no_store "$DB" && pass "no store was created by a failed command" || fail "a store appeared"
expect 0 "init creates the store" init
expect 0 "init again is harmless" --json init
json_is 'd["version"] >= 1' True "init reports the store version"
expect 0 "--version" --version
out_has "cpdomain 0." "--version prints the version"
expect 64 "no command" 
expect 64 "unknown command" frobnicate
err_has "unknown command 'frobnicate'" "unknown command is named"
expect 0 "global help" --help
out_has "athlete" "help lists the commands"
for sub in "athlete add" "athlete import" "athlete list" "athlete show" "athlete set" "athlete remove" "trial add" "trial list" \
           "trial import" "trial exclude" "trial include" "trial remove" init; do
    expect 0 "$sub --help" $sub --help
    out_has "example" "$sub --help has an example"
done

# ---- athletes ----
expect 0 "add an athlete" --json athlete add C03 --name "Tomasz Ekberg" --sport cycling --mass 71.4 --notes "left-leg power meter"
json_is 'd["code"], d["mass_kg"]' "('C03', 71.4)" "add returns the athlete as JSON"
expect 65 "duplicate code" athlete add C03 --name "Other"
err_has "already exists" "duplicate code is explained"
expect 64 "mass out of range" athlete add C04 --name "X" --mass 300
err_has "body mass must be between 20 and 250 kg (got 300)" "mass range named"
expect 64 "bad sport" athlete add C04 --name "X" --sport hockey
err_has "sport must be cycling, running, rowing, swimming or other" "sport choices named"
expect 64 "bad code" athlete add "C 04" --name "X"
expect 64 "missing name" athlete add C04
expect 64 "mass not a number" athlete add C04 --name X --mass heavy
err_has "option --mass: 'heavy' is not a number" "non-number option named"
expect 0 "add a runner" athlete add R07 --name "Ines Varga" --sport running --mass 58.2
expect 0 "set mass" athlete set R07 --mass 57.9
expect 0 "show" --json athlete show R07
json_is 'd["mass_kg"], d["sport"], d["name"]' "(57.9, 'running', 'Ines Varga')" "set changed only the mass"
expect 0 "forget mass" athlete set R07 --mass none
expect 0 "list" --json athlete list
json_is '[a["code"] for a in d["athletes"]], d["athletes"][1]["mass_kg"]' "(['C03', 'R07'], None)" "list in code order, mass null"
expect 65 "show unknown" athlete show NOPE
err_has "no athlete with code 'NOPE'" "unknown athlete named"

# ---- trial add ----
expect 0 "trial add power" --json trial add C03 --date 2026-10-14 --power 312 --duration 7:05 --note "ergometer B"
json_is 'd["power_w"], d["duration_s"], d["note"], d["excluded"]' "(312, 425, 'ergometer B', False)" "trial add stores every field"
expect 0 "trial add distance" trial add R07 --date 2026-10-15 --distance 3600 --duration 13:48
expect 64 "future date" trial add C03 --date 2026-12-02 --power 300 --duration 300
err_has "date 2026-12-02 is in the future (today is 2026-12-01)" "future date explained"
expect 64 "impossible date" trial add C03 --date 2026-02-30 --power 300 --duration 300
expect 64 "power out of range" trial add C03 --date 2026-10-14 --power 3500 --duration 300
err_has "power must be between 1 and 3000 W (got 3500)" "power range named"
expect 64 "duration out of range" trial add C03 --date 2026-10-14 --power 300 --duration 25h
err_has "duration must be between 1 and 86400 s" "duration range named"
expect 64 "two intensities" trial add C03 --date 2026-10-14 --power 300 --speed 4 --duration 300
expect 64 "bad duration" trial add C03 --date 2026-10-14 --power 300 --duration 6:75
expect 65 "unknown athlete" trial add ZZ --date 2026-10-14 --power 300 --duration 300
expect 64 "speed too fast for a human" trial add R07 --date 2026-10-14 --distance 400 --duration 10

# ---- trial import: round trip of every field ----
expect 0 "import a clean file" --json trial import "$D/trials_ok.csv"
json_is 'd["added"], d["skipped_duplicates"]' "(5, 0)" "five trials added"
expect 0 "import it again" --json trial import "$D/trials_ok.csv"
json_is 'd["added"], d["skipped_duplicates"]' "(0, 5)" "duplicates skipped and counted"
expect 0 "list after import" --json trial list C03
json_is 'len(d["trials"])' 5 "C03 has 1 + 4 trials"
json_is '[(t["date"], t["power_w"], t["duration_s"], t["note"]) for t in d["trials"]][1:]' \
  "[('2026-10-20', 355, 190, 'ramp-calibrated, \"fresh\"'), ('2026-10-22', 300, 632, ''), ('2026-10-24', 278, 1105.5, 'multi\nline note'), ('2026-10-26', 330, 361, '')]" \
  "imported fields round-trip (quotes, commas, line breaks, h:mm:ss, decimals)"
json_is 'all(t["source_file"].endswith("trials_ok.csv") for t in d["trials"][1:]) and d["trials"][0]["source_file"] is None' True "source file kept"
expect 0 "runner's list" --json trial list R07
json_is '[(t["distance_m"], t["duration_s"]) for t in d["trials"]]' "[(3600, 828), (1200, 222)]" "distance trials stored as distance"

# ---- exclude / include / remove ----
id=$(json 'd["trials"][1]["id"]')
expect 0 "exclude" trial exclude "$id" --reason "wind gusts"
expect 0 "list shows it" --json trial list R07
json_is 'd["trials"][1]["excluded"], d["trials"][1]["exclude_reason"]' "(True, 'wind gusts')" "excluded with reason"
expect 64 "exclude needs a reason" trial exclude "$id"
expect 0 "include" trial include "$id"
expect 0 "list" --json trial list R07
json_is 'd["trials"][1]["excluded"], d["trials"][1]["exclude_reason"]' "(False, None)" "included again"
expect 65 "exclude unknown id" trial exclude 9999 --reason x
expect 64 "bad id" trial remove 12abc
expect 0 "remove" trial remove "$id"
expect 0 "list" --json trial list R07
json_is 'len(d["trials"])' 1 "trial removed"

# ---- every bad CSV: exit 65 with file:line:column, store byte-for-byte unchanged ----
snapshot
bad() { # bad FILE EXPECTED_RC LOCATION WHAT [extra args]
    f=$1; want=$2; loc=$3; what=$4; shift 4
    expect "$want" "$what" trial import "$D/$f" "$@"
    err_has "$loc" "$what: located at $loc"
    unchanged "$what"
}
bad bad_number.csv 65 "bad_number.csv:4:3: column 'power_w': 'abc' is not a number" "a non-number"
bad bad_range.csv 65 "bad_range.csv:3:3: column 'power_w': power must be between 1 and 3000 W (got 3100)" "a value out of range"
bad bad_date.csv 65 "bad_date.csv:5:2: column 'date': '2026-13-01' is not a date" "an invalid date"
bad bad_future.csv 65 "bad_future.csv:2:2: column 'date': date 2027-01-05 is in the future" "a future date"
bad bad_duration.csv 65 "bad_duration.csv:3:4: column 'duration_s': '6:61' is not a duration" "a bad duration"
bad bad_quote.csv 65 "bad_quote.csv:3:" "an unterminated quote (reported where it opened)"
err_has "never closed" "unterminated quote explained"
bad bad_missing_col.csv 65 "bad_missing_col.csv:1:1: missing column 'duration_s'" "a missing required column"
bad bad_no_value.csv 65 "bad_no_value.csv:3:3: column 'power_w': missing value" "a row without intensity"
bad bad_unknown_athlete.csv 65 "bad_unknown_athlete.csv:4:1: column 'athlete': no athlete with code 'Q99'" "an unknown athlete on the last row"
bad bad_extra_field.csv 65 "bad_extra_field.csv:3:5: this row has 5 fields but the header has 4" "a row with too many fields"
bad empty.csv 65 "empty.csv:1:1: the file is empty" "an empty file"
bad header_only.csv 65 "header_only.csv:2:1: the file has a header but no trials" "a header without rows"
bad bad_two_values.csv 65 "bad_two_values.csv:2:4: column 'speed_m_s': give only one" "two intensities in a row"
expect 66 "a file that does not exist" trial import "$TMP/nope.csv"
err_has "cannot open" "missing file explained"
unchanged "missing file"
expect 64 "a bad --map" trial import "$D/trials_mapped.csv" --map athlete
unchanged "bad map"

# ---- --map, BOM, CRLF, case-insensitive headers, --create-athletes ----
expect 65 "unknown athletes without --create-athletes" trial import "$D/trials_mapped.csv" --map athlete=Subject,power_w=Watts,duration_s=Tlim
unchanged "unknown athletes"
expect 0 "mapped headers, BOM, CRLF" --json trial import "$D/trials_mapped.csv" --map athlete=Subject,power_w=Watts,duration_s=Tlim --create-athletes
json_is 'd["added"], d["athletes_created"]' "(3, 2)" "mapped file imported, two athletes created"
expect 0 "new athlete's trials" --json trial list K11
json_is '[(t["power_w"], t["duration_s"]) for t in d["trials"]]' "[(402.5, 151), (318, 480)]" "values from mapped columns"

# ---- athlete remove takes the athlete's data with it, in one transaction ----
expect 64 "remove without --yes" athlete remove C03
expect 0 "remove with --yes" athlete remove C03 --yes
expect 65 "trials gone with the athlete" trial list C03
n=$(sql "$DB" "SELECT count(*) FROM trial t LEFT JOIN athlete a ON a.id = t.athlete_id WHERE a.id IS NULL")
[ "$n" = 0 ] && pass "no orphan trials" || fail "orphan trials: $n"

# ---- store versions: migrating an old store, refusing a newer one ----
if sqlite_only "a version-1 SQLite file is upgraded" 3; then
    OLD="$TMP/old.db"
    sqlite3 "$OLD" < "$CPDOMAIN_TESTS/../db/schema.sql"
    sqlite3 "$OLD" "PRAGMA user_version = 1; INSERT INTO athlete (code, name, sport, mass_kg) VALUES ('V1', 'Old Store', 'rowing', 80.5);
      INSERT INTO trial (athlete_id, date, kind, value, duration_s, imported_at) VALUES (1, '2025-03-04', 'power', 351.25, 243, '2025-03-04T10:00:00Z');"
    "$BIN" --db "$OLD" --json trial list V1 >"$TMP/out" 2>"$TMP/err"; RC=$?
    [ "$RC" = 0 ] && pass "a version-1 store opens with this binary" || fail "old store: exit $RC" "$(cat "$TMP/err")"
    json_is '[(t["power_w"], t["duration_s"], t["date"], t["imported_at"]) for t in d["trials"]]' \
      "[(351.25, 243, '2025-03-04', '2025-03-04T10:00:00Z')]" "its data are intact after the upgrade"
    v=$(sqlite3 "$OLD" "PRAGMA user_version")
    latest=$(sqlite3 "$DB" "PRAGMA user_version")
    [ "$v" = "$latest" ] && pass "the old store was upgraded to version $latest" || fail "old store at version $v, latest $latest"
fi
# a store newer than this binary: SQLite's user_version, or the server's cpd_version table
if [ -z "$PGBASE" ]; then
    sqlite3 "$OLD" "PRAGMA user_version = 999"
else
    newdb OLD newer
    "$BIN" --db "$OLD" --quiet init && sql "$OLD" "UPDATE cpd_version SET version = 999"
fi
"$BIN" --db "$OLD" athlete list >"$TMP/out" 2>"$TMP/err"; RC=$?
[ "$RC" = 74 ] && pass "a newer store is refused (exit 74)" || fail "newer store: exit $RC"
err_has "use a newer cpdomain" "newer store explained"
if sqlite_only "a file that is not a SQLite database" 2; then
    echo "not a database at all, just text" >"$TMP/junk.db"
    "$BIN" --db "$TMP/junk.db" athlete list >"$TMP/out" 2>"$TMP/err"; RC=$?
    [ "$RC" = 74 ] && pass "a file that is not a store is refused (exit 74)" || fail "junk store: exit $RC"
    err_has "is not a cpdomain store" "junk store explained"
fi

# ---- output goes where it should ----
"$BIN" --db "$DB" athlete list >/dev/full 2>"$TMP/err"; RC=$?
[ "$RC" = 74 ] && pass "a full disk on stdout is reported (exit 74)" || fail "stdout to /dev/full: exit $RC"

# ---- an unknown athlete in a mapped file is located at the mapped column ----
printf 'date,Subject,power_w,duration_s\n2026-10-01,NOPE,300,300\n' >"$TMP/mapped_unknown.csv"
expect 65 "unknown athlete in column 2" trial import "$TMP/mapped_unknown.csv" --map athlete=Subject
err_has "mapped_unknown.csv:2:2: column 'athlete': no athlete with code 'NOPE'" "located at its own column"

# ---- athlete import ----
printf 'code,name,sport,mass_kg,notes\nA1,"Berit Lund, jr",rowing,77.25,"coach: ""H"""\nA2,Ola Nnamdi,,,\n' >"$TMP/squad.csv"
expect 0 "athlete import" --json athlete import "$TMP/squad.csv"
json_is 'd["added"], d["skipped_existing"]' "(2, 0)" "two athletes added"
expect 0 "import again" --json athlete import "$TMP/squad.csv"
json_is 'd["added"], d["skipped_existing"]' "(0, 2)" "existing codes skipped"
expect 0 "show" --json athlete show A1
json_is 'd["name"], d["sport"], d["mass_kg"], d["notes"]' "('Berit Lund, jr', 'rowing', 77.25, 'coach: \"H\"')" "fields round-trip"
printf 'code,name,mass_kg\nA3,Ok,70\nA4,Heavy,251\n' >"$TMP/squad_bad.csv"
snapshot
expect 65 "athlete import with a bad mass" athlete import "$TMP/squad_bad.csv"
err_has "squad_bad.csv:3:3: column 'mass_kg': body mass must be between 20 and 250 kg (got 251)" "bad mass located"
unchanged "bad athletes file"
